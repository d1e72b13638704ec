//! The F test between nested least-squares regressions, for a continuous
//! variable against a categorical one with more than two levels: the
//! continuous one is regressed on the conditioning set's design terms with
//! and without the categorical one's dummies, and
//! `F = ((RSS0 - RSS1) / q) / (RSS1 / (n - p1))`, with `q` the number of
//! added (non-aliased) dummies and `p1` the rank of the larger model, is
//! compared with the F(q, n - p1) distribution (the general linear
//! hypothesis test; Seber & Lee, *Linear Regression Analysis*, 2nd ed.,
//! 2003, sec. 4.3). The test is exact for Gaussian errors.

use super::pair::{CiTest, Outcome, conditioning_design, extended_design};
use crate::Result;
use crate::data::{Frame, Setting};
use crate::dist::f_sf;
use crate::model::Ols;

/// The test's name in output.
pub const NAME: &str = "F test (nested least squares)";

/// Tests the continuous frame column `response` for independence of the
/// categorical column `other` given the columns `given`.
pub fn nested_f(frame: &Frame, response: usize, other: usize, given: &[usize]) -> Result<Outcome> {
    let n = frame.nrows();
    let y = frame.col(response);
    let d0 = conditioning_design(frame, given);
    let d1 = extended_design(frame, given, other);
    let m0 = Ols::fit(&d0.rows(frame, Setting::Observed), y, None)?;
    let m1 = Ols::fit(&d1.rows(frame, Setting::Observed), y, None)?;
    let (r0, r1) = (m0.chol().rank(), m1.chol().rank());
    let q = r1.saturating_sub(r0);
    if q == 0 {
        return Ok(Outcome::NotTested(format!(
            "the dummies of '{}' are collinear with the conditioning set over the {n} complete rows",
            frame.name(other)
        )));
    }
    if n <= r1 {
        return Ok(Outcome::NotTested(format!(
            "too few complete rows ({n}) for a model with {r1} terms"
        )));
    }
    let df2 = n - r1;
    if m1.rss <= 1e-24 * m0.rss.max(f64::MIN_POSITIVE) || m1.rss <= 0.0 {
        return Ok(Outcome::NotTested(format!(
            "'{}' is fitted exactly by the larger model",
            frame.name(response)
        )));
    }
    let f = (((m0.rss - m1.rss) / q as f64) / (m1.rss / df2 as f64)).max(0.0);
    Ok(Outcome::Tested(CiTest {
        test: NAME,
        statistic: f,
        p_value: f_sf(f, q as f64, df2 as f64),
        df: Some(q),
        df_denominator: Some(df2),
        response: Some(frame.name(response).to_string()),
        partial_correlation: None,
        note: None,
    }))
}
