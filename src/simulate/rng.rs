//! Random draws whose bytes do not depend on the platform or on the version
//! of a distribution library.
//!
//! The bit stream is [`crate::random::stream_rng`]; independent streams of
//! the same seed serve the data and each Monte Carlo chunk. Uniforms take the top 53 bits of a 64-bit word.
//! Standard normals come from the polar method of Marsaglia & Bray (1964, SIAM
//! Review 6:260-264), which needs only a square root (exact under IEEE-754)
//! and a logarithm (computed in [`crate::maths`]).

use rand_chacha::ChaCha8Rng;
use rand_chacha::rand_core::Rng;

/// One stream of random numbers.
pub struct Stream(ChaCha8Rng);

impl Stream {
    /// Stream number `stream` of the generator keyed by `seed`.
    pub fn new(seed: u64, stream: u64) -> Self {
        Stream(crate::random::stream_rng(seed, stream))
    }

    /// A uniform number in [0, 1), a multiple of 2^-53.
    pub fn uniform(&mut self) -> f64 {
        (self.0.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A standard normal number (polar method; the second number of each
    /// accepted pair is discarded, so each call is self-contained).
    pub fn normal(&mut self) -> f64 {
        loop {
            let a = 2.0 * self.uniform() - 1.0;
            let b = 2.0 * self.uniform() - 1.0;
            let s = a * a + b * b;
            if s > 0.0 && s < 1.0 {
                return a * (-2.0 * crate::maths::ln(s) / s).sqrt();
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn streams_are_reproducible_and_distinct() {
        let a: Vec<f64> = {
            let mut s = Stream::new(7, 0);
            (0..5).map(|_| s.uniform()).collect()
        };
        let mut s = Stream::new(7, 0);
        let b: Vec<f64> = (0..5).map(|_| s.uniform()).collect();
        assert_eq!(a, b);
        let mut t = Stream::new(7, 1);
        assert_ne!(a[0], t.uniform());
        let mut u = Stream::new(8, 0);
        assert_ne!(a[0], u.uniform());
    }

    #[test]
    fn normals_have_unit_moments() {
        // Mean 0 and variance 1 within sampling error: with n = 200000 the
        // SE of the mean is 0.0022 and of the variance 0.0032; 5 SE allowed.
        let mut s = Stream::new(1, 0);
        let n = 200_000;
        let z: Vec<f64> = (0..n).map(|_| s.normal()).collect();
        let m = z.iter().sum::<f64>() / n as f64;
        let v = z.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n - 1) as f64;
        assert!(m.abs() < 5.0 * 0.0023, "mean {m}");
        assert!((v - 1.0).abs() < 5.0 * 0.0032, "variance {v}");
        // P(Z < -1.959964) = 0.025 (normal table); binomial SE 0.00035.
        let tail = z.iter().filter(|&&x| x < -1.959_964).count() as f64 / n as f64;
        assert!((tail - 0.025).abs() < 5.0 * 0.00035, "tail {tail}");
    }
}
