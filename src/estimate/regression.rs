//! Standardization (the parametric g-formula; Robins 1986, Math Modelling
//! 7:1393-1512; Hernán & Robins, *What If*, 2020, ch. 13): fit the outcome
//! model, predict every row with the exposure set to each value, and average
//! the predictions over the estimand's population (everyone, the exposed
//! or the unexposed). The standard error stacks the outcome model's score
//! equations with the two averages (M-estimation; Stefanski & Boos, Am Stat
//! 2002;56:29-38), so it accounts for both the fitted coefficients and the
//! averaging over covariates.

use super::contrast::{Arms, effect, interval};
use super::outcome::OutcomeModel;
use super::{Estimate, Means, Method, Problem, Warm};
use crate::data::Setting;
use crate::{Error, Result};

/// Standardization over the outcome model.
pub struct Regression;

/// Weighted mean of `m` over `u` (`u` = frequency x group).
fn mean(m: &[f64], u: &[f64]) -> f64 {
    let (s, t) = m
        .iter()
        .zip(u)
        .fold((0.0, 0.0), |(s, t), (m, u)| (s + m * u, t + u));
    s / t
}

/// Frequency weight times estimand-group membership for every row.
pub(crate) fn group_weights(p: &Problem, freq: Option<&[f64]>) -> Vec<f64> {
    (0..p.n())
        .map(|i| freq.map_or(1.0, |f| f[i]) * p.group(i))
        .collect()
}

impl Regression {
    fn fit<'a>(&self, p: &'a Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<OutcomeModel<'a>> {
        OutcomeModel::fit(p, freq, warm)
    }
}

impl Method for Regression {
    fn name(&self) -> &'static str {
        "regression"
    }

    fn point(&self, p: &Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<f64> {
        let m = self.fit(p, freq, warm)?;
        let u = group_weights(p, freq);
        let (s1, s0) = p.settings();
        effect(
            p.spec.scale,
            mean(&m.predict(p, s1), &u),
            mean(&m.predict(p, s0), &u),
        )
    }

    fn estimate(&self, p: &Problem) -> Result<Estimate> {
        let m = self.fit(p, None, None)?;
        let u = group_weights(p, None);
        let total: f64 = u.iter().sum();
        if total <= 0.0 {
            return Err(Error::input(format!(
                "no row belongs to the {} population",
                p.spec.estimand
            )));
        }
        let observed = m.predict(p, Setting::Observed);
        let (s1, s0) = p.settings();
        let arm = |s: Setting| {
            let pred = m.predict(p, s);
            let mu = mean(&pred, &u);
            let scaled: Vec<f64> = u.iter().map(|g| g / total).collect();
            let k = m.gradient(p, s, &pred, &scaled);
            let infl = m.influence(p, &k, &observed);
            let phi: Vec<f64> = (0..p.n())
                .map(|i| u[i] * (pred[i] - mu) / total + infl[i])
                .collect();
            (mu, phi)
        };
        let (mu1, phi1) = arm(s1);
        let (mu0, phi0) = arm(s0);
        let arms = Arms { mu1, mu0, phi1, phi0 };
        let (estimate, std_error, ci) = interval(p.spec.scale, &arms, p.spec.level)?;
        let mut warnings = Vec::new();
        if let Some(s) = &m.separation {
            warnings.push(format!(
                "outcome model shows {s}; predictions near 0 or 1 are unstable"
            ));
        }
        let model = if m.binary {
            "logistic regression"
        } else {
            "least squares"
        };
        let products: Vec<String> = m
            .design
            .terms()
            .iter()
            .filter(|t| t.factors.len() > 1 && t.uses(p.exposure))
            .map(|t| t.name.clone())
            .collect();
        let mut notes = vec![format!(
            "outcome model: {model} on the exposure and the adjustment terms{}",
            if products.is_empty() {
                String::new()
            } else {
                format!(", with products {}", products.join(", "))
            }
        )];
        if !p.binary_exposure() {
            notes.push(match p.spec.contrast {
                Some((a, b)) => format!("effect of setting the exposure to {b} rather than {a}"),
                None => "effect of raising the exposure by one unit from its observed values".into(),
            });
        }
        Ok(Estimate {
            method: self.name().into(),
            estimand: p.spec.estimand,
            scale: p.spec.scale,
            estimate,
            std_error,
            ci,
            ci_method: "sandwich".into(),
            level: p.spec.level,
            means: Some(Means {
                exposed: arms.mu1,
                unexposed: arms.mu0,
            }),
            notes,
            warnings,
            warm: Warm {
                propensity: None,
                outcome: Some(m.coef.clone()),
                ..Warm::default()
            },
        })
    }
}
