//! The likelihood-ratio test between nested logistic regressions, for a
//! binary variable: the binary one is regressed on the conditioning set's
//! design terms with and without the other variable's terms (its linear
//! term, its 0/1 indicator, or its dummies), and the deviance drop is
//! compared with the chi-square distribution whose degrees of freedom are
//! the number of added terms (Wilks 1938, Ann Math Statist 9:60-62;
//! McCullagh & Nelder 1989, sec. 4.4).

use super::pair::{CiTest, Outcome, conditioning_design, extended_design, separation_note};
use crate::Result;
use crate::data::{Frame, Setting};
use crate::dist::chi_square_sf;
use crate::model::{Logit, LogitOptions};
use nalgebra::DVector;

/// The test's name in output.
pub const NAME: &str = "likelihood ratio (logistic)";

/// Tests the 0/1 frame column `response` for independence of column
/// `other` given the columns `given`.
pub fn logistic_lr(frame: &Frame, response: usize, other: usize, given: &[usize]) -> Result<Outcome> {
    let y = frame.col(response);
    let d0 = conditioning_design(frame, given);
    let d1 = extended_design(frame, given, other);
    let opts = LogitOptions::default();
    let m0 = Logit::fit(&d0.rows(frame, Setting::Observed), y, None, None, opts)?;
    let mut warm = DVector::zeros(d1.ncols());
    warm.rows_mut(0, d0.ncols()).copy_from(&m0.coef);
    let m1 = Logit::fit(&d1.rows(frame, Setting::Observed), y, None, Some(&warm), opts)?;
    let df = m1.chol().rank().saturating_sub(m0.chol().rank());
    let deviances = (m0.deviance, m1.deviance);
    Ok(likelihood_ratio(
        NAME,
        frame,
        response,
        other,
        df,
        deviances,
        [&m0.separation, &m1.separation],
        "terms",
    ))
}

/// The outcome of a likelihood-ratio test from the deviances of the nested
/// fits (without, with the other variable) and the number of added
/// parameters `df`; not tested when `df` is 0. `what` names the added
/// terms in the message.
#[allow(clippy::too_many_arguments)]
pub(super) fn likelihood_ratio(
    test: &'static str,
    frame: &Frame,
    response: usize,
    other: usize,
    df: usize,
    deviances: (f64, f64),
    separations: [&Option<crate::model::Separation>; 2],
    what: &str,
) -> Outcome {
    if df == 0 {
        return Outcome::NotTested(format!(
            "the {what} of '{}' are collinear with the conditioning set over the {} complete rows",
            frame.name(other),
            frame.nrows()
        ));
    }
    let lr = (deviances.0 - deviances.1).max(0.0);
    let note = separation_note(frame.name(response), separations);
    Outcome::Tested(CiTest {
        test,
        statistic: lr,
        p_value: chi_square_sf(lr, df as f64),
        df: Some(df),
        df_denominator: None,
        response: Some(frame.name(response).to_string()),
        partial_correlation: None,
        note,
    })
}
