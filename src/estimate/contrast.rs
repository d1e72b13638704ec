//! Contrasts, in one place: from two targets (mean outcomes) and their
//! influence functions to an effect on the asked scale, with a
//! delta-method standard error and a normal interval (difference on its
//! own scale; ratio and odds on the log scale).

use super::targets::{Points, Target, Targets};
use super::{Problem, Scale, z_value};
use crate::problem::Clusters;
use crate::{Error, Result};
use serde::Serialize;

/// Mean outcomes under the two settings and their influence functions,
/// scaled so that `mu_hat - mu ~ sum_i w_i phi_i` (hence
/// `Var = sum_i w_i phi_i^2`).
pub(crate) struct Arms<'a> {
    pub mu1: f64,
    pub mu0: f64,
    pub phi1: &'a [f64],
    pub phi0: &'a [f64],
}

/// The two values a contrast compares, as the JSON names them: level
/// labels for a categorical exposure, doses for a continuous one.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum ContrastLabel {
    /// Levels of a categorical exposure.
    Levels {
        /// The level compared.
        level: String,
        /// The reference level.
        reference: String,
    },
    /// Two doses of a continuous exposure.
    Doses {
        /// The dose compared (the second of the contrast).
        level: f64,
        /// The reference dose (the first).
        reference: f64,
    },
}

impl ContrastLabel {
    /// "medium vs none", "20 vs 0".
    pub fn words(&self) -> String {
        match self {
            ContrastLabel::Levels { level, reference } => format!("{level} vs {reference}"),
            ContrastLabel::Doses { level, reference } => format!("{level} vs {reference}"),
        }
    }

    /// The two values as text, (level, reference).
    pub fn values(&self) -> [String; 2] {
        match self {
            ContrastLabel::Levels { level, reference } => [level.clone(), reference.clone()],
            ContrastLabel::Doses { level, reference } => [format!("{level}"), format!("{reference}")],
        }
    }
}

/// One contrast asked for: `level` against `reference`.
#[derive(Debug, Clone, PartialEq)]
pub struct ContrastSpec {
    /// The target compared.
    pub level: Target,
    /// The target compared against.
    pub reference: Target,
    /// How the JSON names it (`None`: a binary exposure or a one-unit
    /// shift, whose rows carry no `contrast`).
    pub label: Option<ContrastLabel>,
    /// Time to event: what is compared, when and on which scale (`None`:
    /// mean outcomes on the problem's scale).
    pub horizon: Option<Horizon>,
}

/// What a time-to-event contrast compares.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Horizon {
    /// The time.
    pub time: f64,
    /// Risk, survival or restricted mean.
    pub measure: crate::survival::Measure,
    /// Difference or ratio.
    pub scale: Scale,
}

impl ContrastSpec {
    /// The contrast's scale: its own for a time-to-event contrast, else
    /// `default` (the problem's).
    pub fn scale(&self, default: Scale) -> Scale {
        self.horizon.map_or(default, |h| h.scale)
    }

    /// Has no label (a binary exposure or a one-unit shift).
    pub fn unlabelled(&self) -> bool {
        self.label.is_none()
    }
}

/// A contrast formed from full-sample targets.
#[derive(Debug, Clone)]
pub struct Formed {
    /// Estimate on the scale.
    pub estimate: f64,
    /// Standard error (on the ratio scale for ratio and odds).
    pub std_error: f64,
    /// Normal interval.
    pub ci: [f64; 2],
    /// The two means, (level, reference).
    pub means: (f64, f64),
}

/// How influence values become a standard error.
///
/// - Independent rows: `sqrt(sum_i phi_i^2)`.
/// - Clustered rows: the influence values are summed within each cluster
///   first, `sqrt(c * sum_g (sum_{i in g} phi_i)^2)`, with the small-sample
///   factor `c = G/(G-1) x (N-1)/(N-K)` when the targets come from a linear
///   outcome model with K coefficients (regression standardization of a
///   continuous outcome; the factor general-purpose statistics libraries
///   apply to least squares by default), and `c = G/(G-1)` otherwise
///   (common practice; no single source).
#[derive(Debug, Clone, Copy)]
pub struct Variance<'a> {
    clusters: Option<&'a Clusters>,
    factor: f64,
}

impl<'a> Variance<'a> {
    /// The variance for targets `t` of problem `p`: clustered when the
    /// problem has clusters.
    pub fn of(p: &'a Problem, t: &Targets) -> Variance<'a> {
        let Some(c) = &p.clusters else {
            return Variance {
                clusters: None,
                factor: 1.0,
            };
        };
        let g = c.count as f64;
        let n = p.n() as f64;
        let linear = match t.linear_terms {
            Some(k) if (k as f64) < n => (n - 1.0) / (n - k as f64),
            _ => 1.0,
        };
        Variance {
            clusters: Some(c),
            factor: g / (g - 1.0) * linear,
        }
    }

    /// Rows taken as independent.
    pub fn rows() -> Variance<'static> {
        Variance {
            clusters: None,
            factor: 1.0,
        }
    }

    /// The standard error from per-row influence values `phi`.
    pub fn std_error(&self, phi: impl Iterator<Item = f64> + Clone) -> f64 {
        match self.clusters {
            None => root_sum_squares(phi),
            Some(c) => {
                let mut sums = vec![0.0; c.count];
                for (&g, v) in c.of.iter().zip(phi) {
                    sums[g as usize] += v;
                }
                self.factor.sqrt() * root_sum_squares(sums.into_iter())
            }
        }
    }

    /// The covariance of two estimates from their per-row influence
    /// values `a` and `b` (summed within clusters first, with the same
    /// factor as [`Variance::std_error`]).
    pub fn covariance(&self, a: &[f64], b: &[f64]) -> f64 {
        match self.clusters {
            None => a.iter().zip(b).map(|(x, y)| x * y).sum(),
            Some(c) => {
                let (mut sa, mut sb) = (vec![0.0; c.count], vec![0.0; c.count]);
                for ((&g, x), y) in c.of.iter().zip(a).zip(b) {
                    sa[g as usize] += x;
                    sb[g as usize] += y;
                }
                self.factor * sa.iter().zip(&sb).map(|(x, y)| x * y).sum::<f64>()
            }
        }
    }

    /// Cluster-robust (summed within clusters)?
    pub fn clustered(&self) -> bool {
        self.clusters.is_some()
    }
}

/// The contrast `c` of `t` on `scale`, its standard error by `variance`;
/// `None` when the estimator did not form one of its two targets.
pub fn form(
    t: &Targets,
    c: &ContrastSpec,
    scale: Scale,
    level: f64,
    variance: &Variance<'_>,
) -> Option<Result<Formed>> {
    let (i1, i0) = (t.position(c.level)?, t.position(c.reference)?);
    let arms = Arms {
        mu1: t.values[i1],
        mu0: t.values[i0],
        phi1: &t.influence[i1],
        phi0: &t.influence[i0],
    };
    Some(
        interval(scale, &arms, level, variance).map(|(estimate, std_error, ci)| Formed {
            estimate,
            std_error,
            ci,
            means: (arms.mu1, arms.mu0),
        }),
    )
}

/// The point value of contrast `c` from a replicate's targets; NaN when
/// it cannot be formed.
pub fn point(p: &Points, c: &ContrastSpec, scale: Scale) -> f64 {
    match (p.get(c.level), p.get(c.reference)) {
        (Some(a), Some(b)) => effect(scale, a, b).unwrap_or(f64::NAN),
        _ => f64::NAN,
    }
}

/// A single target's normal interval (a point of a curve), rows taken as
/// independent.
pub fn target_interval(t: &Targets, k: usize, level: f64) -> (f64, [f64; 2]) {
    target_interval_by(t, k, level, &Variance::rows())
}

/// A single target's normal interval, its standard error by `variance`.
pub fn target_interval_by(t: &Targets, k: usize, level: f64, variance: &Variance<'_>) -> (f64, [f64; 2]) {
    let se = variance.std_error(t.influence[k].iter().copied());
    let z = z_value(level);
    let v = t.values[k];
    (se, [v - z * se, v + z * se])
}

/// The effect on `scale` from the two means.
pub fn effect(scale: Scale, mu1: f64, mu0: f64) -> Result<f64> {
    let e = match scale {
        Scale::Difference => mu1 - mu0,
        Scale::Ratio => {
            check_risk(mu1, mu0, false)?;
            mu1 / mu0
        }
        Scale::Odds => {
            check_risk(mu1, mu0, true)?;
            (mu1 / (1.0 - mu1)) / (mu0 / (1.0 - mu0))
        }
    };
    if e.is_finite() {
        Ok(e)
    } else {
        Err(Error::Numerical("the effect is not finite".into()))
    }
}

fn check_risk(mu1: f64, mu0: f64, odds: bool) -> Result<()> {
    let ok = |m: f64| m > 0.0 && (!odds || m < 1.0);
    if ok(mu1) && ok(mu0) {
        Ok(())
    } else {
        Err(Error::Numerical(format!(
            "mean outcomes {mu1} and {mu0} do not allow a {} scale",
            if odds { "odds-ratio" } else { "ratio" }
        )))
    }
}

/// Estimate, standard error and interval.
/// sqrt(sum x²), the standard error from influence values: the plain sum
/// when its squares neither overflow nor underflow, else the same sum over
/// values divided by the largest magnitude (so that influence values of an
/// outcome measured in units of 1e160 or 1e-160 still give a finite,
/// nonzero standard error).
pub fn root_sum_squares(x: impl Iterator<Item = f64> + Clone) -> f64 {
    let plain = x.clone().map(|v| v * v).sum::<f64>().sqrt();
    if plain.is_finite() && plain > 1e-150 {
        return plain;
    }
    let m = x.clone().fold(0.0f64, |m, v| m.max(v.abs()));
    if !(m > 0.0 && m.is_finite()) {
        return plain;
    }
    m * x.map(|v| (v / m) * (v / m)).sum::<f64>().sqrt()
}

/// The derivatives of the contrast on its interval's scale (the
/// difference; the log ratio; the log odds ratio) in the two means.
fn derivatives(scale: Scale, mu1: f64, mu0: f64) -> (f64, f64) {
    match scale {
        Scale::Difference => (1.0, 1.0),
        Scale::Ratio => (1.0 / mu1, 1.0 / mu0),
        Scale::Odds => (1.0 / (mu1 * (1.0 - mu1)), 1.0 / (mu0 * (1.0 - mu0))),
    }
}

/// The contrast `c` of `t` on its interval's scale (the difference, the
/// log ratio or the log odds ratio) and its per-row influence values;
/// `None` when the estimator did not form one of its targets.
pub fn linearised(t: &Targets, c: &ContrastSpec, scale: Scale) -> Option<Result<(f64, Vec<f64>)>> {
    let (i1, i0) = (t.position(c.level)?, t.position(c.reference)?);
    let (mu1, mu0) = (t.values[i1], t.values[i0]);
    Some(effect(scale, mu1, mu0).map(|e| {
        let (d1, d0) = derivatives(scale, mu1, mu0);
        let phi = t.influence[i1]
            .iter()
            .zip(&t.influence[i0])
            .map(|(a, b)| d1 * a - d0 * b)
            .collect();
        let value = if scale == Scale::Difference { e } else { e.ln() };
        (value, phi)
    }))
}

pub(crate) fn interval(
    scale: Scale,
    arms: &Arms<'_>,
    level: f64,
    variance: &Variance<'_>,
) -> Result<(f64, f64, [f64; 2])> {
    let est = effect(scale, arms.mu1, arms.mu0)?;
    let (d1, d0) = derivatives(scale, arms.mu1, arms.mu0);
    let se = variance.std_error(arms.phi1.iter().zip(arms.phi0).map(|(a, b)| d1 * a - d0 * b));
    if !se.is_finite() {
        return Err(Error::Numerical("the standard error is not finite".into()));
    }
    let z = z_value(level);
    Ok(match scale {
        Scale::Difference => (est, se, [est - z * se, est + z * se]),
        _ => {
            let l = est.ln();
            (est, est * se, [(l - z * se).exp(), (l + z * se).exp()])
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_scale_interval_for_ratios() {
        // Closed form: phi gives var(log RR) = (0.1/0.5)^2 + (0.1/0.25)^2.
        let arms = Arms {
            mu1: 0.5,
            mu0: 0.25,
            phi1: &[0.1, 0.0],
            phi0: &[0.0, -0.1],
        };
        let (e, se, ci) = interval(Scale::Ratio, &arms, 0.95, &Variance::rows()).unwrap();
        let sl = (0.04f64 + 0.16).sqrt();
        assert!((e - 2.0).abs() < 1e-12);
        assert!((se - 2.0 * sl).abs() < 1e-12);
        assert!((ci[0] - (2f64.ln() - 1.959963984540054 * sl).exp()).abs() < 1e-9);
        assert!(effect(Scale::Odds, 1.0, 0.5).is_err());
    }
}
