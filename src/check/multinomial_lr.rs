//! The likelihood-ratio test between nested multinomial logistic
//! regressions, for two categorical variables with more than two levels:
//! one is regressed (baseline-category logit, [`Multinomial`]) on the
//! conditioning set's design terms with and without the other's dummies, and
//! the deviance drop is compared with the chi-square distribution with
//! `(K - 1) q` degrees of freedom, `K` the response's levels and `q` the
//! added dummies (Wilks 1938; Agresti, *Categorical Data Analysis*, 3rd ed.,
//! 2013, sec. 8.1).

use super::logistic_lr::likelihood_ratio;
use super::pair::{Outcome, conditioning_design, extended_design};
use crate::Result;
use crate::data::{Frame, Kind, Setting};
use crate::model::{LogitOptions, Multinomial};
use nalgebra::DMatrix;

/// The most coefficients a test's larger model may have: the fit's work
/// grows with the square of their number for every row, so a pair of
/// categorical variables of many levels would run for minutes; such a test
/// is not made, and says why.
pub const MAX_COEFFICIENTS: usize = 400;

/// The test's name in output.
pub const NAME: &str = "likelihood ratio (multinomial logistic)";

/// Tests the categorical frame column `response` for independence of the
/// categorical column `other` given the columns `given`.
pub fn multinomial_lr(frame: &Frame, response: usize, other: usize, given: &[usize]) -> Result<Outcome> {
    let levels = match frame.kind(response) {
        Kind::Categorical { levels } => levels.len(),
        _ => 2,
    };
    let d0 = conditioning_design(frame, given);
    let d1 = extended_design(frame, given, other);
    let coefficients = (levels - 1) * d1.ncols();
    if coefficients > MAX_COEFFICIENTS {
        return Ok(Outcome::NotTested(format!(
            "the multinomial model of '{}' would have {coefficients} coefficients ({} levels less one, \
             times {} terms), more than the {MAX_COEFFICIENTS} a test fits; group the levels of '{}' or \
             '{}' into fewer to test it",
            frame.name(response),
            levels,
            d1.ncols(),
            frame.name(response),
            frame.name(other)
        )));
    }
    let y: Vec<usize> = frame.col(response).iter().map(|&c| c as usize).collect();
    let opts = LogitOptions::default();
    let m0 = Multinomial::fit(&d0.rows(frame, Setting::Observed), &y, levels, None, None, opts)?;
    let mut warm = DMatrix::zeros(d1.ncols(), levels - 1);
    warm.view_mut((0, 0), (d0.ncols(), levels - 1))
        .copy_from(&m0.coef);
    let m1 = Multinomial::fit(
        &d1.rows(frame, Setting::Observed),
        &y,
        levels,
        None,
        Some(&warm),
        opts,
    )?;
    let df = m1.rank().saturating_sub(m0.rank());
    let deviances = (m0.deviance, m1.deviance);
    Ok(likelihood_ratio(
        NAME,
        frame,
        response,
        other,
        df,
        deviances,
        [&m0.separation, &m1.separation],
        "dummies",
    ))
}
