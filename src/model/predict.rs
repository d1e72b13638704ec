//! Row-wise products with a coefficient vector, shared by every prediction.

use crate::data::{Rows, map_rows, reduce};
use nalgebra::DVector;

/// `x_i' beta` for every row.
pub fn linear_predictor<R: Rows + ?Sized>(rows: &R, beta: &DVector<f64>) -> Vec<f64> {
    let mut out = vec![0.0; rows.nrows()];
    map_rows(rows, &mut out, |b, o| b.times(beta.as_slice(), o));
    out
}

/// `sum_i u_i x_i`.
pub fn weighted_sum<R: Rows + ?Sized>(rows: &R, u: &[f64]) -> DVector<f64> {
    let p = rows.ncols();
    reduce(
        rows,
        || DVector::zeros(p),
        |acc, b| b.times_tr_add(&u[b.range()], acc.as_mut_slice()),
        |a, b| *a += b,
    )
}
