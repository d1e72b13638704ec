//! The inner loops of every pass over a block of design rows: the block
//! times a vector, its transpose times a vector, a scaled copy of some of
//! its rows, and the logistic function of a vector (element by element
//! [`crate::maths::expit`], inlined: a short polynomial exponential, so the
//! loop vectorises).
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

/// `c . u` in eight lanes, each lane summed in order, the lanes then
/// summed pairwise in a fixed order, then the rows past the last multiple
/// of eight.
#[inline(always)]
fn lanes_sum(lanes: &[f64; 8], tail: f64) -> f64 {
    let pairs = [
        lanes[0] + lanes[4],
        lanes[1] + lanes[5],
        lanes[2] + lanes[6],
        lanes[3] + lanes[7],
    ];
    (pairs[0] + pairs[2]) + (pairs[1] + pairs[3]) + tail
}

/// The rows past the last multiple of eight of `c . u`, in order.
#[inline(always)]
fn tail_dot(c: &[f64], u: &[f64]) -> f64 {
    let r = c.len() / 8 * 8;
    c[r..].iter().zip(&u[r..]).map(|(x, y)| x * y).sum()
}

with_avx2! {
    /// `acc += X'u` for the column-major `n x p` block `x` (`u.len() == n`,
    /// `acc.len() == p`); each dot product runs in eight lanes summed in a
    /// fixed order ([`lanes_sum`]), four columns at a time sharing the
    /// loads of `u`.
    fn times_tr_add / times_tr_add_plain(x: &[f64], u: &[f64], acc: &mut [f64]) {
        let n = u.len();
        let p = acc.len();
        assert!(x.len() == n * p, "block product sizes");
        let col = |j: usize| &x[j * n..(j + 1) * n];
        let mut j = 0;
        while j + 4 <= p {
            let (c0, c1, c2, c3) = (col(j), col(j + 1), col(j + 2), col(j + 3));
            let mut l = [[0.0; 8]; 4];
            let chunks = c0
                .chunks_exact(8)
                .zip(c1.chunks_exact(8))
                .zip(c2.chunks_exact(8))
                .zip(c3.chunks_exact(8))
                .zip(u.chunks_exact(8));
            for ((((x0, x1), x2), x3), y) in chunks {
                for k in 0..8 {
                    l[0][k] += x0[k] * y[k];
                    l[1][k] += x1[k] * y[k];
                    l[2][k] += x2[k] * y[k];
                    l[3][k] += x3[k] * y[k];
                }
            }
            for (q, c) in [c0, c1, c2, c3].into_iter().enumerate() {
                acc[j + q] += lanes_sum(&l[q], tail_dot(c, u));
            }
            j += 4;
        }
        for (j, a) in acc.iter_mut().enumerate().skip(j) {
            let c = col(j);
            let mut lanes = [0.0; 8];
            for (x, y) in c.chunks_exact(8).zip(u.chunks_exact(8)) {
                for k in 0..8 {
                    lanes[k] += x[k] * y[k];
                }
            }
            *a += lanes_sum(&lanes, tail_dot(c, u));
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

/// `a . b` in four lanes (rows `4i + l` in lane `l`), each summed in order,
/// the lanes then summed in a fixed order, then the rows past the last
/// multiple of four in order.
#[inline(always)]
fn dot4(a: &[f64], b: &[f64]) -> f64 {
    let mut l = [0.0; 4];
    for (x, y) in a.chunks_exact(4).zip(b.chunks_exact(4)) {
        for k in 0..4 {
            l[k] += x[k] * y[k];
        }
    }
    let r = a.len() / 4 * 4;
    let tail: f64 = a[r..].iter().zip(&b[r..]).map(|(x, y)| x * y).sum();
    (l[0] + l[2]) + (l[1] + l[3]) + tail
}

with_avx2! {
    /// Adds the lower triangle of `Z'Z` (entries `(j, k)` with `k <= j`)
    /// into the column-major `p x p` matrix `acc`, for the column-major
    /// `m x p` block `z`; the upper triangle is left as it is. Each entry is
    /// [`dot4`]'s sum; columns are taken in tiles of 4 x 2 so that each
    /// load of a row serves several entries.
    fn gram_lower_add / gram_lower_add_plain(z: &[f64], m: usize, p: usize, acc: &mut [f64]) {
        assert!(z.len() == m * p && acc.len() == p * p, "gram sizes");
        let col = |j: usize| &z[j * m..(j + 1) * m];
        let m4 = m / 4 * 4;
        let p4 = p / 4 * 4;
        for j0 in (0..p4).step_by(4) {
            for k0 in (0..=j0 + 2).step_by(2) {
                let a = [col(j0), col(j0 + 1), col(j0 + 2), col(j0 + 3)];
                let b = [col(k0), col(k0 + 1)];
                let mut l = [[[0.0; 4]; 2]; 4];
                let rows = a[0][..m4]
                    .chunks_exact(4)
                    .zip(a[1][..m4].chunks_exact(4))
                    .zip(a[2][..m4].chunks_exact(4))
                    .zip(a[3][..m4].chunks_exact(4))
                    .zip(b[0][..m4].chunks_exact(4))
                    .zip(b[1][..m4].chunks_exact(4));
                for (((((x0, x1), x2), x3), y0), y1) in rows {
                    let xs = [x0, x1, x2, x3];
                    let ys = [y0, y1];
                    for q in 0..4 {
                        for r in 0..2 {
                            for k in 0..4 {
                                l[q][r][k] += xs[q][k] * ys[r][k];
                            }
                        }
                    }
                }
                for q in 0..4 {
                    for r in 0..2 {
                        let (j, k) = (j0 + q, k0 + r);
                        if k <= j {
                            let v = &l[q][r];
                            let tail: f64 = a[q][m4..].iter().zip(&b[r][m4..]).map(|(x, y)| x * y).sum();
                            acc[k * p + j] += (v[0] + v[2]) + (v[1] + v[3]) + tail;
                        }
                    }
                }
            }
        }
        for j in p4..p {
            for k in 0..=j {
                acc[k * p + j] += dot4(col(j), col(k));
            }
        }
    }
}

with_avx2! {
    /// `out[i] = 1 / (1 + e^-x[i])` (`out.len() == x.len()`); NaN stays NaN.
    fn expit_into / expit_into_plain(x: &[f64], out: &mut [f64]) {
        assert_eq!(x.len(), out.len(), "expit sizes");
        for (o, &v) in out.iter_mut().zip(x) {
            *o = crate::maths::expit(v);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn expit_builds_agree() {
        // The plain and AVX2 builds give identical bits, and both are within
        // 4 units in the last place (2^-52 = 2.2e-16) of the scalar logistic
        // function over the standard library's exp.
        let zs: Vec<f64> = (0..100_001)
            .map(|i| -50.0 + i as f64 * 0.001)
            .chain([0.0, -0.0, 800.0, -800.0, f64::NAN])
            .collect();
        let mut fast = vec![0.0; zs.len()];
        let mut plain = vec![0.0; zs.len()];
        expit_into(&zs, &mut fast);
        expit_into_plain(&zs, &mut plain);
        for ((&z, &f), &p) in zs.iter().zip(&fast).zip(&plain) {
            assert_eq!(f.to_bits(), p.to_bits(), "{z}");
            if z.is_nan() {
                assert!(f.is_nan());
                continue;
            }
            let want = crate::maths::expit_std(z);
            assert!(
                (f - want).abs() <= 4.0 * f64::EPSILON * want,
                "expit({z}): {f} vs {want}"
            );
        }
    }

    fn block(n: usize, p: usize) -> Vec<f64> {
        (0..n * p)
            .map(|k| ((k * 7919) % 1000) as f64 / 37.0 - 13.0)
            .collect()
    }

    #[test]
    fn gram_matches_direct_sums_and_tiles_match_single_dots() {
        // Lower triangle of Z'Z against direct sums (1e-12 relative), for
        // widths with and without a partial tile and lengths with and
        // without a partial lane; the tiled sums equal dot4's bit for bit;
        // the upper triangle is untouched; plain and AVX2 builds agree.
        for (m, p) in [(1303, 32), (17, 7), (8, 4), (3, 1), (0, 2), (40, 9)] {
            let z = block(m, p);
            let mut acc = vec![0.5; p * p];
            gram_lower_add(&z, m, p, &mut acc);
            let mut plain = vec![0.5; p * p];
            gram_lower_add_plain(&z, m, p, &mut plain);
            assert!(acc.iter().zip(&plain).all(|(a, c)| a.to_bits() == c.to_bits()));
            for j in 0..p {
                for k in 0..p {
                    let v = acc[k * p + j];
                    if k > j {
                        assert_eq!(v, 0.5);
                        continue;
                    }
                    let (cj, ck) = (&z[j * m..(j + 1) * m], &z[k * m..(k + 1) * m]);
                    let d: f64 = 0.5 + cj.iter().zip(ck).map(|(a, b)| a * b).sum::<f64>();
                    assert!(
                        (v - d).abs() <= 1e-12 * d.abs().max(1.0),
                        "({j}, {k}): {v} vs {d}"
                    );
                    assert_eq!(v.to_bits(), (0.5 + dot4(cj, ck)).to_bits(), "({j}, {k})");
                }
            }
        }
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
