//! What sensitivity analysis needs from a linear outcome (Cinelli & Hazlett,
//! JRSS-B 2020;82:39-67, sec. 4 and 6): the exposure coefficient of the
//! least-squares fit `Y ~ A + L` with its classic standard error, t and
//! residual degrees of freedom, the outcome's standard deviation, and for
//! each adjustment term its t statistic in `Y ~ A + L` and in the
//! least-squares fit `A ~ L`, from which partial R2 = t^2 / (t^2 + df) for
//! benchmarking follows.

use crate::data::Setting;
use crate::model::Ols;
use crate::problem::Problem;
use crate::{Error, Result};
use serde::Serialize;

/// One adjustment term's t statistics.
#[derive(Debug, Clone, Serialize)]
pub struct TermStat {
    /// Term name.
    pub term: String,
    /// The data column the term is made from.
    pub column: String,
    /// t in the outcome fit `Y ~ A + L`.
    pub t_outcome: f64,
    /// t in the exposure fit `A ~ L`.
    pub t_exposure: f64,
}

/// Inputs to the robustness value and bounds.
#[derive(Debug, Clone, Serialize)]
pub struct SensitivityInputs {
    /// Exposure coefficient in `Y ~ A + L`.
    pub estimate: f64,
    /// Its classic standard error.
    pub std_error: f64,
    /// Its t statistic.
    pub t: f64,
    /// Residual degrees of freedom of `Y ~ A + L`.
    pub df: f64,
    /// Residual degrees of freedom of `A ~ L`.
    pub df_exposure: f64,
    /// Standard deviation of the outcome (n - 1 denominator).
    pub outcome_sd: f64,
    /// Per adjustment term.
    pub terms: Vec<TermStat>,
}

/// The inputs, or `None` when the outcome is binary (no linear model) or
/// the exposure enters the outcome model by more than one term (levels,
/// or a dose with a curved shape: no single coefficient is the effect).
pub fn sensitivity_inputs(p: &Problem) -> Result<Option<SensitivityInputs>> {
    if p.binary_outcome() || p.adjusted.exposure_terms().len() != 1 {
        return Ok(None);
    }
    let out = Ols::fit(
        &p.adjusted.rows(&p.frame, Setting::Observed),
        p.y(),
        p.outcome_weights().as_deref(),
    )?;
    let exp = Ols::fit(&p.propensity_rows(), p.a(), p.sampling())?;
    let ja = p
        .adjusted
        .exposure_term()
        .ok_or_else(|| Error::Internal("no exposure term".into()))?;
    let (to, te) = (out.t(), exp.t());
    let terms = p
        .propensity
        .terms()
        .iter()
        .enumerate()
        .filter(|(_, t)| !t.is_intercept())
        .map(|(j, t)| TermStat {
            term: t.name.clone(),
            column: t
                .factors
                .first()
                .map_or_else(|| t.name.clone(), |f| p.frame.name(f.col).to_string()),
            t_outcome: p.adjusted.position(&t.name).map_or(f64::NAN, |k| to[k]),
            t_exposure: te[j],
        })
        .collect();
    let sd = sample_sd(&p.observed_y());
    // On the raw values (the design works in scaled units).
    let g = p.adjusted.term_scale(ja);
    Ok(Some(SensitivityInputs {
        estimate: out.coef[ja] * g,
        std_error: out.se()[ja] * g,
        t: to[ja],
        df: out.df,
        df_exposure: exp.df,
        outcome_sd: sd,
        terms,
    }))
}

/// For a categorical exposure and a linear outcome: each non-reference
/// level's coefficient in `Y ~ A + L` (its contrast with the reference) as
/// (estimate, classic standard error, residual df), in level order.
pub fn level_coefficients(p: &Problem) -> Result<Vec<(f64, f64, f64)>> {
    if p.binary_outcome() {
        return Ok(Vec::new());
    }
    let out = Ols::fit(
        &p.adjusted.rows(&p.frame, Setting::Observed),
        p.y(),
        p.outcome_weights().as_deref(),
    )?;
    let se = out.se();
    Ok(p.adjusted
        .exposure_terms()
        .into_iter()
        .map(|j| {
            let g = p.adjusted.term_scale(j);
            (out.coef[j] * g, se[j] * g, out.df)
        })
        .collect())
}

/// The sample standard deviation (n - 1 divisor), its squares rescaled
/// when they would overflow or underflow (an outcome in units of 1e160).
pub fn sample_sd(y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let m = y.iter().sum::<f64>() / n;
    super::contrast::root_sum_squares(y.iter().map(|v| v - m)) / (n - 1.0).sqrt()
}
