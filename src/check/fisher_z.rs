//! The partial correlation test for two continuous variables (Fisher 1924,
//! "The distribution of the partial correlation coefficient", Metron
//! 3:329-332): `r` is the correlation of the residuals of the least-squares
//! regressions of each variable on the conditioning set's design terms
//! (categorical conditioning variables enter as dummies), and
//! `z = atanh(r) sqrt(n - k - 3)`, with `k` the number of conditioning design
//! columns besides the intercept (their rank, when some are aliased), is
//! compared with the standard normal distribution, two-sided.

use super::pair::{CiTest, Outcome, conditioning_design};
use crate::Result;
use crate::data::{Frame, Setting};
use crate::infer::dist::normal_cdf;
use crate::model::{Ols, linear_predictor};

/// The test's name in output.
pub const NAME: &str = "partial correlation (Fisher z)";

/// Residuals of `y` on `rows`, and the rank of the fit.
fn residuals<R: crate::data::Rows + ?Sized>(rows: &R, y: &[f64]) -> Result<(Vec<f64>, usize)> {
    let (beta, chol) = Ols::coefficients(rows, y, None)?;
    let fit = linear_predictor(rows, &beta);
    Ok((y.iter().zip(&fit).map(|(v, f)| v - f).collect(), chol.rank()))
}

/// Tests frame columns `a` and `b` (both continuous) for zero partial
/// correlation given the columns `given`.
pub fn fisher_z(frame: &Frame, a: usize, b: usize, given: &[usize]) -> Result<Outcome> {
    let n = frame.nrows();
    let design = conditioning_design(frame, given);
    let rows = design.rows(frame, Setting::Observed);
    let (ea, rank) = residuals(&rows, frame.col(a))?;
    let (eb, _) = residuals(&rows, frame.col(b))?;
    let k = rank.saturating_sub(1);
    let ss = |e: &[f64]| e.iter().map(|v| v * v).sum::<f64>();
    let centred = |j: usize| {
        let v = frame.col(j);
        let m = v.iter().sum::<f64>() / n as f64;
        v.iter().map(|x| (x - m) * (x - m)).sum::<f64>()
    };
    let (saa, sbb) = (ss(&ea), ss(&eb));
    for (s, j) in [(saa, a), (sbb, b)] {
        if s <= 1e-12 * centred(j) {
            return Ok(Outcome::NotTested(format!(
                "'{}' is a linear function of the conditioning set over the {n} complete rows",
                frame.name(j)
            )));
        }
    }
    let dof = n as f64 - k as f64 - 3.0;
    if dof < 1.0 {
        return Ok(Outcome::NotTested(format!(
            "too few complete rows ({n}) for {k} conditioning terms: Fisher's z needs n - k - 3 >= 1"
        )));
    }
    let sab: f64 = ea.iter().zip(&eb).map(|(x, y)| x * y).sum();
    let r = (sab / (saa * sbb).sqrt()).clamp(-1.0, 1.0);
    let z = r.atanh() * dof.sqrt();
    let p = (2.0 * normal_cdf(-z.abs())).min(1.0);
    Ok(Outcome::Tested(CiTest {
        test: NAME,
        statistic: z,
        p_value: p,
        df: None,
        df_denominator: None,
        response: None,
        partial_correlation: Some(r),
        note: None,
    }))
}
