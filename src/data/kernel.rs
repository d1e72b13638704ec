//! The inner loops of every pass over a block of design rows: the block
//! times a vector, its transpose times a vector, and a scaled copy of some
//! of its rows.
//!
//! Each is written once, in plain Rust, and compiled twice: as is, and with
//! AVX2 enabled, the second chosen at run time on CPUs that have it. The
//! arithmetic is the same plain multiplications and additions in the same
//! order either way (no fused multiply-add: Rust does not contract `a * b +
//! c`, and the sums run in explicit lanes), so results are identical bit
//! for bit on every x86-64 CPU and any other target.

/// Defines `pub fn $name` from a plain body, with the AVX2 build of the same
/// body chosen at run time, and `$plain`, the body as is (for tests).
macro_rules! with_avx2 {
    ($(#[$m:meta])* fn $name:ident / $plain:ident ($($arg:ident: $ty:ty),* $(,)?) $body:block) => {
        $(#[$m])*
        pub fn $name($($arg: $ty),*) {
            #[cfg(target_arch = "x86_64")]
            {
                #[target_feature(enable = "avx2")]
                fn wide($($arg: $ty),*) {
                    $plain($($arg),*)
                }
                if std::arch::is_x86_feature_detected!("avx2") {
                    // SAFETY: `wide` needs AVX2, which the running CPU has
                    // (checked on the line above).
                    return unsafe { wide($($arg),*) };
                }
            }
            $plain($($arg),*)
        }

        /// The same, compiled for the target's baseline features only.
        #[inline(always)]
        pub(crate) fn $plain($($arg: $ty),*) $body
    };
}

with_avx2! {
    /// `out = X b` for the column-major `n x p` block `x` (`b.len() == p`,
    /// `out.len() == n`), four columns per sweep over `out`.
    fn times / times_plain(x: &[f64], n: usize, b: &[f64], out: &mut [f64]) {
        let p = b.len();
        assert!(x.len() == n * p && out.len() == n, "block product sizes");
        out.fill(0.0);
        let col = |j: usize| &x[j * n..(j + 1) * n];
        let mut j = 0;
        while j + 4 <= p {
            let (c0, c1, c2, c3) = (col(j), col(j + 1), col(j + 2), col(j + 3));
            let (b0, b1, b2, b3) = (b[j], b[j + 1], b[j + 2], b[j + 3]);
            for i in 0..n {
                out[i] += c0[i] * b0 + c1[i] * b1 + c2[i] * b2 + c3[i] * b3;
            }
            j += 4;
        }
        for (j, &bj) in b.iter().enumerate().skip(j) {
            out.iter_mut().zip(col(j)).for_each(|(o, x)| *o += x * bj);
        }
    }
}

with_avx2! {
    /// `acc += X'u` for the column-major `n x p` block `x` (`u.len() == n`,
    /// `acc.len() == p`); each dot product runs in eight lanes summed in a
    /// fixed order.
    fn times_tr_add / times_tr_add_plain(x: &[f64], u: &[f64], acc: &mut [f64]) {
        let n = u.len();
        assert!(x.len() == n * acc.len(), "block product sizes");
        for (j, a) in acc.iter_mut().enumerate() {
            let c = &x[j * n..(j + 1) * n];
            let mut lanes = [0.0; 8];
            let (cc, uc) = (c.chunks_exact(8), u.chunks_exact(8));
            let tail: f64 = cc.remainder().iter().zip(uc.remainder()).map(|(x, y)| x * y).sum();
            for (x, y) in cc.zip(uc) {
                for k in 0..8 {
                    lanes[k] += x[k] * y[k];
                }
            }
            let pairs = [lanes[0] + lanes[4], lanes[1] + lanes[5], lanes[2] + lanes[6], lanes[3] + lanes[7]];
            *a += (pairs[0] + pairs[2]) + (pairs[1] + pairs[3]) + tail;
        }
    }
}

with_avx2! {
    /// Rows `keep[k].0` of the column-major block `x` (`n` rows), scaled by
    /// `keep[k].1`, into the column-major `out` with `keep.len()` rows.
    fn gather_scaled / gather_scaled_plain(x: &[f64], n: usize, keep: &[(usize, f64)], out: &mut [f64]) {
        let m = keep.len();
        let p = x.len().checked_div(n).unwrap_or(0);
        assert!(out.len() == m * p, "gather sizes");
        for j in 0..p {
            let src = &x[j * n..(j + 1) * n];
            for (o, &(k, r)) in out[j * m..(j + 1) * m].iter_mut().zip(keep) {
                *o = src[k] * r;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn block(n: usize, p: usize) -> Vec<f64> {
        (0..n * p)
            .map(|k| ((k * 7919) % 1000) as f64 / 37.0 - 13.0)
            .collect()
    }

    #[test]
    fn kernels_match_direct_sums_and_their_plain_builds_bit_for_bit() {
        for (n, p) in [(13, 1), (2048, 31), (1001, 6), (0, 3)] {
            let x = block(n, p);
            let b: Vec<f64> = (0..p).map(|j| 0.5 - j as f64 * 0.25).collect();
            let u: Vec<f64> = (0..n).map(|i| (i as f64 * 0.1).sin()).collect();
            // X b against the direct sum (1e-12 relative).
            let mut out = vec![0.0; n];
            times(&x, n, &b, &mut out);
            for i in 0..n {
                let d: f64 = (0..p).map(|j| x[j * n + i] * b[j]).sum();
                assert!((out[i] - d).abs() <= 1e-12 * d.abs().max(1.0));
            }
            let mut plain = vec![0.0; n];
            times_plain(&x, n, &b, &mut plain);
            assert!(out.iter().zip(&plain).all(|(a, c)| a.to_bits() == c.to_bits()));
            // X'u likewise.
            let mut acc = vec![1.0; p];
            times_tr_add(&x, &u, &mut acc);
            for j in 0..p {
                let d: f64 = 1.0 + (0..n).map(|i| x[j * n + i] * u[i]).sum::<f64>();
                assert!((acc[j] - d).abs() <= 1e-11 * d.abs().max(1.0));
            }
            let mut plain = vec![1.0; p];
            times_tr_add_plain(&x, &u, &mut plain);
            assert!(acc.iter().zip(&plain).all(|(a, c)| a.to_bits() == c.to_bits()));
            // The scaled gather.
            let keep: Vec<(usize, f64)> = (0..n).filter(|i| i % 3 != 1).map(|i| (i, 2.0)).collect();
            let mut g = vec![0.0; keep.len() * p];
            gather_scaled(&x, n, &keep, &mut g);
            for j in 0..p {
                for (k, &(i, r)) in keep.iter().enumerate() {
                    assert_eq!(g[j * keep.len() + k], x[j * n + i] * r);
                }
            }
        }
    }
}
