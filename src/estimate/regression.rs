//! Standardization (the parametric g-formula; Robins 1986, Math Modelling
//! 7:1393-1512; Hernán & Robins, *What If*, 2020, ch. 13): fit the outcome
//! model, predict every row with the exposure set to each value, and average
//! the predictions over the estimand's population (everyone, the exposed
//! or the unexposed). The standard error stacks the outcome model's score
//! equations with the two averages (M-estimation; Stefanski & Boos, Am Stat
//! 2002;56:29-38), so it accounts for both the fitted coefficients and the
//! averaging over covariates.

use super::{About, Estimator, ExposureKind, Points, Serves, Target, Targets, TimeToEvent};
use crate::data::Setting;
use crate::identify::Strategy;
use crate::learn::{Fits, Needs, Observed, OutcomeFit};
use crate::problem::{Estimand, Problem};
use crate::{Error, Result};

/// Standardization over the outcome model.
pub struct Regression;

static ABOUT: About = About {
    name: "regression",
    label: "regression (standardization)",
    strategies: &[Strategy::Backdoor],
    serves: &[Serves::Binary, Serves::Levels, Serves::Dose],
    weighted: &[Serves::Binary, Serves::Levels, Serves::Dose],
    estimands: &[Estimand::Ate, Estimand::Att, Estimand::Atc],
    needs: Needs {
        outcome: true,
        exposure: false,
    },
    default: true,
    time_to_event: TimeToEvent::Also,
};

/// Weighted mean of `m` over `u` (`u` = frequency x group).
fn mean(m: &[f64], u: &[f64]) -> f64 {
    let (s, t) = m
        .iter()
        .zip(u)
        .fold((0.0, 0.0), |(s, t), (m, u)| (s + m * u, t + u));
    s / t
}

/// Frequency weight times estimand-group membership for every row.
fn group_weights(p: &Problem, freq: Option<&[f64]>) -> Vec<f64> {
    (0..p.n())
        .map(|i| freq.map_or(1.0, |f| f[i]) * p.group(i))
        .collect()
}

impl Estimator for Regression {
    fn about(&self) -> &'static About {
        &ABOUT
    }

    fn methods_sentence(&self, kind: &ExposureKind) -> String {
        let form = match kind {
            ExposureKind::Dose => " at each dose of the curve",
            ExposureKind::Levels(_) => " at each exposure level",
            ExposureKind::Binary => "",
        };
        format!(
            "The outcome model was standardized over the sample{form} (the parametric g-formula; Robins 1986)."
        )
    }

    fn point(&self, p: &Problem, fits: &Fits, freq: Option<&[f64]>) -> Result<Points> {
        if p.survival.is_some() {
            let t = crate::survival::methods::standardised(p, fits.hazard()?, freq, false)?;
            return Ok(Points {
                targets: t.targets,
                values: t.values,
            });
        }
        let m = fits.outcome()?;
        let u = group_weights(p, freq);
        let targets = p.targets();
        let values = targets.iter().map(|&t| mean(&m.at(p, t), &u)).collect();
        Ok(Points { targets, values })
    }

    fn targets(&self, p: &Problem, fits: &Fits) -> Result<Targets> {
        if let Some(s) = &p.survival {
            let mut t = crate::survival::methods::standardised(p, fits.hazard()?, p.sampling(), true)?;
            if s.censoring_weights {
                t.notes.push(
                    "the standardised curves take no censoring weights: their hazard model conditions on the \
                     adjustment set, which covers censoring that depends on it"
                        .into(),
                );
            }
            return Ok(t);
        }
        let m = fits.outcome()?;
        // Under sampling weights the averaging is weighted and so is the
        // outcome model's score (see `OutcomeFit::influence`).
        let u = group_weights(p, p.sampling());
        let total: f64 = u.iter().sum();
        if total <= 0.0 {
            return Err(Error::input(format!(
                "no row belongs to the {} population",
                p.spec.estimand
            )));
        }
        let observed = m.predict(p, Setting::Observed);
        let obs = fits.observed()?;
        let mut out = Targets::default();
        for t in p.targets() {
            let (mu, phi) = arm(p, m, obs, t, &u, total, &observed);
            out.push(t, mu, phi);
        }
        if let Some(s) = &m.separation {
            out.warnings.push(format!(
                "outcome model shows {s}; predictions near 0 or 1 are unstable"
            ));
        }
        if !m.binary {
            out.linear_terms = Some(m.coef.len());
        }
        let model = if m.binary {
            "logistic regression"
        } else {
            "least squares"
        };
        let products: Vec<String> = p
            .outcome_design
            .terms()
            .iter()
            .filter(|t| t.factors.len() > 1 && t.uses(p.exposure))
            .map(|t| t.name.clone())
            .collect();
        out.notes.push(format!(
            "outcome model: {model} on the exposure and the adjustment terms{}",
            if products.is_empty() {
                String::new()
            } else {
                format!(", with products {}", products.join(", "))
            }
        ));
        if p.kind == ExposureKind::Dose {
            out.notes.push(match p.spec.contrast {
                Some((a, b)) => format!("effect of setting the exposure to {b} rather than {a}"),
                None => "effect of raising the exposure by one unit from its observed values".into(),
            });
        }
        Ok(out)
    }
}

/// The mean under target `t` and its influence: the averaging over the
/// estimand's population stacked with the outcome model's score equations.
fn arm(
    p: &Problem,
    m: &OutcomeFit,
    obs: Option<&Observed>,
    t: Target,
    u: &[f64],
    total: f64,
    observed: &[f64],
) -> (f64, Vec<f64>) {
    let s = t.setting();
    let pred = m.at(p, t);
    let mu = mean(&pred, u);
    let scaled: Vec<f64> = u.iter().map(|g| g / total).collect();
    let k = m.gradient(p, s, &pred, &scaled);
    let infl = m.influence(p, &k, observed, obs);
    let phi: Vec<f64> = (0..p.n())
        .map(|i| u[i] * (pred[i] - mu) / total + infl[i])
        .collect();
    (mu, phi)
}
