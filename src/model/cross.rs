//! Block-wise accumulation of weighted cross-products.

use crate::data::{Rows, gram_lower_add, reduce, reduce_into, with_buffer};
use nalgebra::{DMatrix, DVector};

/// Sums over the rows of a design: `X'VX`, `X'u` and two scalars.
#[derive(Debug, Clone)]
pub struct Cross {
    /// Sum of v_i x_i x_i'.
    pub xtx: DMatrix<f64>,
    /// Sum of u_i x_i.
    pub xtu: DVector<f64>,
    /// The two scalar sums returned by the row function.
    pub s: [f64; 2],
}

impl Cross {
    fn zeros(p: usize) -> Cross {
        Cross {
            xtx: DMatrix::zeros(p, p),
            xtu: DVector::zeros(p),
            s: [0.0; 2],
        }
    }

    fn add(&mut self, o: Cross) {
        self.xtx += o.xtx;
        self.xtu += o.xtu;
        self.s[0] += o.s[0];
        self.s[1] += o.s[1];
    }
}

/// `X'u` and a sum, with `eta = X beta` written to `eta` (one value per
/// row): for each block, `f(start, eta_b, u_b)` fills the block's `u` from
/// its `eta` (rows `start..`) and returns its share of the sum. Two products
/// of the rows with vectors per block, no cross-product matrix.
pub fn score<R, F>(rows: &R, beta: &DVector<f64>, eta: &mut [f64], f: F) -> (DVector<f64>, f64)
where
    R: Rows + ?Sized,
    F: Fn(usize, &[f64], &mut [f64]) -> f64 + Sync,
{
    let p = rows.ncols();
    reduce_into(
        rows,
        eta,
        || (DVector::zeros(p), 0.0),
        |(g, s), b, eta| {
            b.times(beta.as_slice(), eta);
            let mut u = vec![0.0; b.len];
            *s += f(b.start, eta, &mut u);
            b.times_tr_add(&u, g.as_mut_slice());
        },
        |(g, s), (h, t)| {
            *g += h;
            *s += t;
        },
    )
}

/// Accumulates over every row `i`, with `eta_i = x_i'beta` (0 when `beta`
/// is `None`) and `(v, u, s0, s1) = f(i, eta_i)`: `X'VX`, `X'u`, and the
/// sums of `s0` and `s1`. Every `v` must be >= 0; rows with `v = 0` (rows a
/// bootstrap resample did not draw) are left out of `X'VX`.
pub fn accumulate<R, F>(rows: &R, beta: Option<&DVector<f64>>, f: F) -> Cross
where
    R: Rows + ?Sized,
    F: Fn(usize, f64) -> (f64, f64, f64, f64) + Sync,
{
    let p = rows.ncols();
    let mut c = reduce(
        rows,
        || Cross::zeros(p),
        |acc, b| {
            let len = b.len;
            let mut eta = vec![0.0; len];
            if let Some(beta) = beta {
                b.times(beta.as_slice(), &mut eta);
            }
            // Rows kept in X'VX and the square roots of their v.
            let mut keep = Vec::with_capacity(len);
            let mut u = vec![0.0; len];
            for (k, e) in eta.iter().enumerate() {
                let (vi, ui, s0, s1) = f(b.start + k, *e);
                // NaN stays in, to reach the factorization.
                if vi != 0.0 {
                    keep.push((k, vi.sqrt()));
                }
                u[k] = ui;
                acc.s[0] += s0;
                acc.s[1] += s1;
            }
            b.times_tr_add(&u, acc.xtu.as_mut_slice());
            let m = keep.len();
            if m == 0 {
                return;
            }
            with_buffer(|buf| {
                // The kept rows scaled by sqrt(v), column-major, m rows.
                buf.resize(m * p, 0.0);
                let z = &mut buf[..m * p];
                b.gather_scaled(&keep, z);
                gram_lower_add(z, m, p, acc.xtx.as_mut_slice());
            });
        },
        |a, b| a.add(b),
    );
    // The blocks added the lower triangle only.
    for j in 0..p {
        for k in j + 1..p {
            c.xtx[(j, k)] = c.xtx[(k, j)];
        }
    }
    c
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::{BLOCK, DenseRows};
    use nalgebra::DMatrix;

    #[test]
    fn rows_of_zero_weight_are_left_out_exactly() {
        // X'VX and X'u over rows with some v = 0 equal the sums over the
        // other rows only (direct sums; 1e-9 relative), for a wide design
        // (the matrix-product path) and a narrow one, across blocks.
        for p in [3, 8] {
            let n = BLOCK + 300;
            let x = DMatrix::from_fn(n, p, |i, j| ((i * (j + 3)) as f64 * 0.013).sin() + j as f64 * 0.1);
            let v = |i: usize| {
                if i.is_multiple_of(3) {
                    0.0
                } else {
                    1.0 + (i % 5) as f64
                }
            };
            let c = accumulate(&DenseRows(x.clone()), None, |i, _| (v(i), v(i) * 2.0, 1.0, 0.0));
            let mut xtx = DMatrix::<f64>::zeros(p, p);
            for i in 0..n {
                let r = x.row(i);
                xtx += r.transpose() * r * v(i);
            }
            let rel = (&c.xtx - &xtx).amax() / xtx.amax();
            assert!(rel < 1e-9, "p = {p}: {rel}");
            let xtu: DVector<f64> = (0..n).map(|i| x.row(i).transpose() * (v(i) * 2.0)).sum();
            assert!((&c.xtu - &xtu).amax() / xtu.amax() < 1e-9);
            assert_eq!(c.s[0], n as f64);
        }
    }
}
