//! Block-wise accumulation of weighted cross-products.

use crate::data::{Rows, reduce};
use nalgebra::{DMatrix, DVector, Dyn, MatrixView};

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

/// Accumulates over every row `i`, with `eta_i = x_i'beta` (0 when `beta`
/// is `None`) and `(v, u, s0, s1) = f(i, eta_i)`: `X'VX`, `X'u`, and the
/// sums of `s0` and `s1`. Every `v` must be >= 0.
pub fn accumulate<R, F>(rows: &R, beta: Option<&DVector<f64>>, f: F) -> Cross
where
    R: Rows + ?Sized,
    F: Fn(usize, f64) -> (f64, f64, f64, f64) + Sync,
{
    let p = rows.ncols();
    reduce(
        rows,
        || Cross::zeros(p),
        |acc, b| {
            let len = b.len;
            let eta: Vec<f64> = match beta {
                Some(beta) => (MatrixView::<f64, Dyn, Dyn>::from_slice(b.x, len, p) * beta)
                    .data
                    .into(),
                None => vec![0.0; len],
            };
            let mut v = vec![0.0; len];
            let mut u = vec![0.0; len];
            for (k, e) in eta.iter().enumerate() {
                let (vi, ui, s0, s1) = f(b.start + k, *e);
                v[k] = vi.sqrt();
                u[k] = ui;
                acc.s[0] += s0;
                acc.s[1] += s1;
            }
            let x = MatrixView::<f64, Dyn, Dyn>::from_slice(b.x, len, p);
            acc.xtu.gemv_tr(1.0, &x, &DVector::from_vec(u), 1.0);
            for j in 0..p {
                b.x[j * len..(j + 1) * len]
                    .iter_mut()
                    .zip(&v)
                    .for_each(|(x, s)| *x *= s);
            }
            if p > 5 && len > 5 {
                // nalgebra hands this product to matrixmultiply, which takes
                // the transposed view's strides as they are.
                let x = MatrixView::<f64, Dyn, Dyn>::from_slice(b.x, len, p);
                let xt = MatrixView::<f64, Dyn, Dyn, Dyn, Dyn>::from_slice_with_strides_generic(
                    b.x,
                    Dyn(p),
                    Dyn(len),
                    Dyn(len),
                    Dyn(1),
                );
                acc.xtx.gemm(1.0, &xt, &x, 1.0);
            } else {
                for j in 0..p {
                    for k in 0..=j {
                        let d: f64 = b.col(j).iter().zip(b.col(k)).map(|(a, c)| a * c).sum();
                        acc.xtx[(j, k)] += d;
                        if k != j {
                            acc.xtx[(k, j)] += d;
                        }
                    }
                }
            }
        },
        |a, b| a.add(b),
    )
}
