//! The propensity model shared by IPW, AIPW and the diagnostics: a logistic
//! regression of the exposure on the adjustment terms, scores clipped to
//! `[trim, 1 - trim]` when asked, and the inverse-probability weights of
//! each estimand (ATE: 1/e and 1/(1-e); ATT: 1 and e/(1-e); ATC: (1-e)/e
//! and 1). The ATE weights follow Hernán & Robins, *Causal Inference: What
//! If*, 2020, ch. 12; the ATT and ATC forms are common practice, no source.

use super::{Estimand, Problem};
use crate::data::Setting;
use crate::model::{Logit, LogitOptions, linear_predictor};
use crate::{Error, Result};
use nalgebra::DVector;

/// A fitted propensity model.
pub(crate) struct Propensity {
    pub fit: Logit,
    /// Scores after clipping.
    pub e: Vec<f64>,
    /// Scores before clipping.
    pub raw: Vec<f64>,
}

impl Propensity {
    /// Fits; refuses (an error) when the exposure is separated, since the
    /// weights would be unbounded.
    pub fn fit(p: &Problem, w: Option<&[f64]>, warm: Option<&DVector<f64>>) -> Result<Propensity> {
        let rows = p.propensity.rows(&p.frame, Setting::Observed);
        let fit = Logit::fit(&rows, p.a(), w, warm, LogitOptions::default())?;
        if let Some(s) = &fit.separation {
            return Err(Error::Numerical(format!(
                "propensity model for '{}': {s}; some units have no chance of the other exposure \
                 (a positivity violation), so weighting cannot be used; consider fewer or coarser \
                 adjustment terms, --trim, or --method regression",
                p.spec.exposure
            )));
        }
        let raw: Vec<f64> = linear_predictor(&rows, &fit.coef)
            .into_iter()
            .map(crate::model::expit)
            .collect();
        let e = match p.spec.trim {
            Some(t) if t > 0.0 => raw.iter().map(|&x| x.clamp(t, 1.0 - t)).collect(),
            _ => raw.clone(),
        };
        Ok(Propensity { fit, e, raw })
    }

    /// Was row i's score clipped (its derivative in the coefficients is 0)?
    pub fn clipped(&self, i: usize) -> bool {
        self.e[i] != self.raw[i]
    }

    /// Row i's influence on `k' (gamma_hat - gamma)`: `z_i' I^-1 k (A_i - e_i)`.
    pub fn influence(&self, p: &Problem, k: &DVector<f64>) -> Vec<f64> {
        let c = self.fit.bread_solve(k);
        let mut d = linear_predictor(&p.propensity.rows(&p.frame, Setting::Observed), &c);
        for ((d, a), e) in d.iter_mut().zip(p.a()).zip(&self.raw) {
            *d *= a - e;
        }
        d
    }
}

/// The weight of a row in each arm for `estimand`, and its derivative in the
/// score: `(h1, h0, dh1/de, dh0/de)`.
pub(crate) fn arm_weights(estimand: Estimand, a: f64, e: f64) -> (f64, f64, f64, f64) {
    let b = 1.0 - a;
    match estimand {
        Estimand::Ate => (a / e, b / (1.0 - e), -a / (e * e), b / ((1.0 - e) * (1.0 - e))),
        Estimand::Att => (a, b * e / (1.0 - e), 0.0, b / ((1.0 - e) * (1.0 - e))),
        Estimand::Atc => (a * (1.0 - e) / e, b, -a / (e * e), 0.0),
    }
}
