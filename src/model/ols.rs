//! Least squares with frequency (case) weights: a row of weight w counts as
//! w copies of itself. Classic covariance `s^2 (X'WX)^-1` with
//! `s^2 = sum w e^2 / (sum w - rank)`; HC0 (White 1980)
//! `(X'WX)^-1 (sum w e^2 x x') (X'WX)^-1`.

use super::{ALIAS_TOL, Chol, accumulate};
use crate::data::Rows;
use crate::{Error, Result};
use nalgebra::{DMatrix, DVector};

/// A fitted least-squares model.
#[derive(Debug, Clone)]
pub struct Ols {
    /// Coefficients (0 for aliased columns).
    pub coef: DVector<f64>,
    /// Classic covariance of the coefficients.
    pub cov: DMatrix<f64>,
    /// HC0 heteroskedasticity-robust covariance.
    pub cov_hc0: DMatrix<f64>,
    /// Residual degrees of freedom, sum of weights minus rank.
    pub df: f64,
    /// Weighted residual sum of squares.
    pub rss: f64,
    /// Sum of weights.
    pub sum_w: f64,
    /// Aliased columns (coefficient fixed at 0).
    pub aliased: Vec<usize>,
    chol: Chol,
}

fn weight(w: Option<&[f64]>, i: usize) -> f64 {
    w.map_or(1.0, |w| w[i])
}

impl Ols {
    /// Coefficients only (one pass), with the factor of `X'WX`.
    pub fn coefficients<R: Rows + ?Sized>(
        rows: &R,
        y: &[f64],
        w: Option<&[f64]>,
    ) -> Result<(DVector<f64>, Chol)> {
        let c = accumulate(rows, None, |i, _| {
            let wi = weight(w, i);
            (wi, wi * y[i], wi, 0.0)
        });
        if !c.xtu.iter().all(|v| v.is_finite()) {
            // Every design column lies within [-1, 1] (see `data::Design`),
            // so only a response near the largest double overflows here.
            return Err(Error::input(
                "least squares: the sums of the modelled values exceed the range of double-precision \
                 numbers (values near 1.8e308): rescale the column (for example to other units)",
            ));
        }
        let chol = Chol::new(&c.xtx, ALIAS_TOL);
        if chol.rank() == 0 {
            return Err(Error::Numerical("least squares: no usable column".into()));
        }
        Ok((chol.solve(&c.xtu), chol))
    }

    /// Fits and computes both covariances (two passes over the rows).
    pub fn fit<R: Rows + ?Sized>(rows: &R, y: &[f64], w: Option<&[f64]>) -> Result<Ols> {
        let (coef, chol) = Ols::coefficients(rows, y, w)?;
        let m = accumulate(rows, Some(&coef), |i, eta| {
            let wi = weight(w, i);
            let e = y[i] - eta;
            (wi * e * e, 0.0, wi * e * e, wi)
        });
        let (rss, sum_w) = (m.s[0], m.s[1]);
        let df = sum_w - chol.rank() as f64;
        let inv = chol.inverse();
        let cov = &inv * (rss / df);
        let cov_hc0 = &inv * &m.xtx * &inv;
        Ok(Ols {
            aliased: chol.aliased(),
            coef,
            cov,
            cov_hc0,
            df,
            rss,
            sum_w,
            chol,
        })
    }

    /// Classic standard errors.
    pub fn se(&self) -> DVector<f64> {
        self.cov.diagonal().map(f64::sqrt)
    }

    /// HC0 standard errors.
    pub fn se_hc0(&self) -> DVector<f64> {
        self.cov_hc0.diagonal().map(f64::sqrt)
    }

    /// Classic t statistics (NaN for aliased columns).
    pub fn t(&self) -> DVector<f64> {
        let se = self.se();
        DVector::from_fn(self.coef.len(), |j, _| {
            if self.aliased.contains(&j) {
                f64::NAN
            } else {
                self.coef[j] / se[j]
            }
        })
    }

    /// `(X'WX)^-1 k`: with it, `x_i' (X'WX)^-1 k * e_i` is row i's share of
    /// `k' (b - beta)` (the coefficients' influence function).
    pub fn bread_solve(&self, k: &DVector<f64>) -> DVector<f64> {
        self.chol.solve(k)
    }

    /// The factor of the bread matrix (`X'WX`, or the information).
    pub fn chol(&self) -> &Chol {
        &self.chol
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::DenseRows;

    #[test]
    fn simple_regression_closed_form() {
        // y on (1, x): slope = Sxy / Sxx, se = sqrt(s^2 / Sxx) (closed form,
        // 1e-12); HC0 = sqrt(sum (x - xbar)^2 e^2) / Sxx.
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.0, 3.0, 2.0, 5.0, 4.0];
        let rows = DenseRows(DMatrix::from_fn(5, 2, |i, j| if j == 0 { 1.0 } else { x[i] }));
        let f = Ols::fit(&rows, &y, None).unwrap();
        let (sxx, sxy) = (10.0, 8.0);
        let slope = sxy / sxx;
        assert!((f.coef[1] - slope).abs() < 1e-12);
        assert!((f.coef[0] - (3.0 - slope * 3.0)).abs() < 1e-12);
        let e: Vec<f64> = (0..5).map(|i| y[i] - f.coef[0] - slope * x[i]).collect();
        let rss: f64 = e.iter().map(|v| v * v).sum();
        assert!((f.rss - rss).abs() < 1e-12 && f.df == 3.0);
        assert!((f.se()[1] - (rss / 3.0 / sxx).sqrt()).abs() < 1e-12);
        let hc0 = (0..5).map(|i| ((x[i] - 3.0) * e[i]).powi(2)).sum::<f64>().sqrt() / sxx;
        assert!((f.se_hc0()[1] - hc0).abs() < 1e-12);
    }
}
