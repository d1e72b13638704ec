//! Diagnostics of the propensity model and the weights: the range of the
//! scores by arm and how many units of one arm fall outside the other arm's
//! range (common support); weight mean, minimum and maximum; Kish's
//! effective sample size per arm, (sum w)^2 / sum w^2 (Kish, *Survey
//! Sampling*, 1965); standardized mean differences of every adjustment
//! term before and after weighting, with weighted means and variances in the
//! weighted one (Austin & Stuart, Stat Med 2015;34:3661-3679, from memory);
//! and warnings for extreme weights and scores near 0 or 1. The thresholds
//! (scores below 0.01 or above 0.99; a unit carrying more than 5% of its
//! arm's weight; a weight above 10 times the mean; |SMD| above 0.1 after
//! weighting) are common practice, no source.

use super::ipw::arm_weights;
use crate::learn::{DoseDensity, LevelPropensity, Propensity};
use crate::problem::{Estimand, Problem};
use serde::Serialize;

/// Smallest and largest value.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Range {
    /// Minimum.
    pub min: f64,
    /// Maximum.
    pub max: f64,
}

/// Mean, minimum and maximum.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Summary {
    /// Mean.
    pub mean: f64,
    /// Minimum.
    pub min: f64,
    /// Maximum.
    pub max: f64,
}

/// Propensity-score block.
#[derive(Debug, Clone, Serialize)]
pub struct PropensityDiagnostics {
    /// Smallest score (before clipping).
    pub min: f64,
    /// Largest score (before clipping).
    pub max: f64,
    /// Exposed units whose score lies outside the unexposed units' range.
    pub treated_outside_control_range: usize,
    /// Unexposed units whose score lies outside the exposed units' range.
    pub control_outside_treated_range: usize,
    /// Score range among the exposed.
    pub treated: Range,
    /// Score range among the unexposed.
    pub control: Range,
    /// Units with a score below 0.01 or above 0.99.
    pub near_zero_or_one: usize,
    /// Units whose score was clipped by `--trim`.
    pub clipped: usize,
}

/// Weight block: the estimand's unnormalized weights.
#[derive(Debug, Clone, Serialize)]
pub struct WeightDiagnostics {
    /// Mean weight over all units.
    pub mean: f64,
    /// Smallest weight.
    pub min: f64,
    /// Largest weight.
    pub max: f64,
    /// Kish effective sample size of the exposed arm.
    pub ess_treated: f64,
    /// Kish effective sample size of the unexposed arm.
    pub ess_control: f64,
    /// Largest share of its arm's total weight carried by one exposed unit.
    pub max_share_treated: f64,
    /// Largest share ... by one unexposed unit.
    pub max_share_control: f64,
    /// Stabilized weights P(A=a) / P(A=a | L) (ATE only).
    pub stabilized: Option<Summary>,
}

/// Balance of one adjustment term.
#[derive(Debug, Clone, Serialize)]
pub struct Balance {
    /// Term name.
    pub covariate: String,
    /// Standardized mean difference, exposed minus unexposed, unweighted.
    pub smd_raw: f64,
    /// The same after weighting.
    pub smd_weighted: f64,
}

/// The `diagnostics` block.
#[derive(Debug, Clone, Serialize)]
pub struct Diagnostics {
    /// Propensity scores.
    pub propensity: PropensityDiagnostics,
    /// Weights.
    pub weights: WeightDiagnostics,
    /// Covariate balance.
    pub balance: Vec<Balance>,
    /// Warnings for the report.
    #[serde(skip)]
    pub warnings: Vec<String>,
}

fn range(v: impl Iterator<Item = f64>) -> Range {
    v.fold(
        Range {
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
        },
        |r, x| Range {
            min: r.min.min(x),
            max: r.max.max(x),
        },
    )
}

/// Weighted mean and variance of `x` over `w`.
fn moments(x: &[f64], w: &[f64]) -> (f64, f64) {
    let sw: f64 = w.iter().sum();
    let m = x.iter().zip(w).map(|(x, w)| x * w).sum::<f64>() / sw;
    let v = x.iter().zip(w).map(|(x, w)| w * (x - m) * (x - m)).sum::<f64>() / sw;
    (m, v)
}

fn smd(x: &[f64], w1: &[f64], w0: &[f64]) -> f64 {
    let (m1, v1) = moments(x, w1);
    let (m0, v0) = moments(x, w0);
    let s = ((v1 + v0) / 2.0).sqrt();
    if s > 0.0 { (m1 - m0) / s } else { 0.0 }
}

/// The diagnostics of a binary exposure's full-sample propensity model.
pub fn diagnostics(p: &Problem, ps: &Propensity) -> Diagnostics {
    let (a, n) = (p.a(), p.n());
    let treated = range((0..n).filter(|&i| a[i] == 1.0).map(|i| ps.raw(i)));
    let control = range((0..n).filter(|&i| a[i] == 0.0).map(|i| ps.raw(i)));
    let outside = |arm: f64, r: Range| {
        (0..n)
            .filter(|&i| a[i] == arm && (ps.raw(i) < r.min || ps.raw(i) > r.max))
            .count()
    };
    let near = (0..n).filter(|&i| !(0.01..=0.99).contains(&ps.raw(i))).count();
    let clipped = (0..n).filter(|&i| ps.clipped(i)).count();
    let propensity = PropensityDiagnostics {
        min: treated.min.min(control.min),
        max: treated.max.max(control.max),
        treated_outside_control_range: outside(1.0, control),
        control_outside_treated_range: outside(0.0, treated),
        treated,
        control,
        near_zero_or_one: near,
        clipped,
    };
    let h: Vec<(f64, f64)> = (0..n)
        .map(|i| {
            // Under sampling weights each row's weight is its sampling weight
            // times its inverse probability weight.
            let (h1, h0, _, _) = arm_weights(p.spec.estimand, a[i], ps.e[i]);
            (p.weight(i) * h1, p.weight(i) * h0)
        })
        .collect();
    let h1: Vec<f64> = h.iter().map(|x| x.0).collect();
    let h0: Vec<f64> = h.iter().map(|x| x.1).collect();
    let w: Vec<f64> = h.iter().map(|x| x.0 + x.1).collect();
    let wr = range(w.iter().copied());
    let total: f64 = (0..n).map(|i| p.weight(i)).sum();
    let mean = w.iter().sum::<f64>() / total;
    let ess = |h: &[f64]| h.iter().sum::<f64>().powi(2) / h.iter().map(|x| x * x).sum::<f64>();
    let share = |h: &[f64]| h.iter().fold(0.0f64, |m, &x| m.max(x)) / h.iter().sum::<f64>();
    let stabilized = (p.spec.estimand == Estimand::Ate).then(|| {
        let pa = (0..n).map(|i| p.weight(i) * a[i]).sum::<f64>() / total;
        let s: Vec<f64> = (0..n)
            .map(|i| {
                if a[i] == 1.0 {
                    pa / ps.e[i]
                } else {
                    (1.0 - pa) / (1.0 - ps.e[i])
                }
            })
            .collect();
        let r = range(s.iter().copied());
        Summary {
            mean: (0..n).map(|i| p.weight(i) * s[i]).sum::<f64>() / total,
            min: r.min,
            max: r.max,
        }
    });
    let weights = WeightDiagnostics {
        mean,
        min: wr.min,
        max: wr.max,
        ess_treated: ess(&h1),
        ess_control: ess(&h0),
        max_share_treated: share(&h1),
        max_share_control: share(&h0),
        stabilized,
    };
    let r1: Vec<f64> = (0..n).map(|i| p.weight(i) * a[i]).collect();
    let r0: Vec<f64> = (0..n).map(|i| p.weight(i) * (1.0 - a[i])).collect();
    let balance = balance(&term_columns(p), (&r1, &r0), (&h1, &h0));
    let mut warnings = Vec::new();
    if propensity.treated_outside_control_range + propensity.control_outside_treated_range > 0 {
        warnings.push(format!(
            "common support: {} exposed units have propensity scores outside the unexposed units' \
             range and {} unexposed units outside the exposed units' range",
            propensity.treated_outside_control_range, propensity.control_outside_treated_range
        ));
    }
    if near > 0 {
        warnings.push(format!(
            "{near} units have propensity scores below 0.01 or above 0.99 (positivity is in doubt)"
        ));
    }
    let top = weights.max_share_treated.max(weights.max_share_control);
    if top > 0.05 || weights.max > 10.0 * mean {
        warnings.push(format!(
            "extreme weights: the largest is {:.2} ({:.1}x the mean) and one unit carries {:.1}% of its \
             arm's total weight",
            weights.max,
            weights.max / mean,
            100.0 * top
        ));
    }
    if let Some(poor) = poorly_balanced(&balance) {
        warnings.push(format!(
            "after weighting, standardized mean differences above 0.1 remain for: {poor}"
        ));
    }
    Diagnostics {
        propensity,
        weights,
        balance,
        warnings,
    }
}

/// The terms still out of balance after weighting (|SMD| above 0.1), listed.
fn poorly_balanced(balance: &[Balance]) -> Option<String> {
    let poor: Vec<&str> = balance
        .iter()
        .filter(|b| b.smd_weighted.abs() > 0.1)
        .map(|b| b.covariate.as_str())
        .collect();
    (!poor.is_empty()).then(|| poor.join(", "))
}

/// Every adjustment term's name and column.
fn term_columns(p: &Problem) -> Vec<(String, Vec<f64>)> {
    let rows = p.propensity_rows();
    p.propensity
        .terms()
        .iter()
        .enumerate()
        .filter(|(_, t)| !t.is_intercept())
        .map(|(j, t)| (t.name.clone(), rows.column(j)))
        .collect()
}

/// Each term's standardized difference between two groups, given by
/// their row indicators (`raw`) and by their weights (`weighted`).
fn balance(
    columns: &[(String, Vec<f64>)],
    raw: (&[f64], &[f64]),
    weighted: (&[f64], &[f64]),
) -> Vec<Balance> {
    columns
        .iter()
        .map(|(name, col)| Balance {
            covariate: name.clone(),
            smd_raw: smd(col, raw.0, raw.1),
            smd_weighted: smd(col, weighted.0, weighted.1),
        })
        .collect()
}

/// The diagnostics of one level of a categorical exposure.
#[derive(Debug, Clone, Serialize)]
pub struct LevelDiagnostics {
    /// The level.
    pub level: String,
    /// Rows at this level.
    pub rows: usize,
    /// Range of P(A = level | L) among the rows at this level.
    pub propensity: Range,
    /// Rows at this level whose probability of it lies outside the range
    /// of the same probability among the rows at the other levels.
    pub outside_others_range: usize,
    /// The weights 1 / P(A = level | L) of the rows at this level.
    pub weights: Summary,
    /// Kish effective sample size of those weights.
    pub ess: f64,
    /// Balance of each adjustment term against the reference level, before
    /// and after weighting (absent for the reference level itself).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub balance: Vec<Balance>,
}

/// Per-level diagnostics of a categorical exposure, and warnings.
pub fn level_diagnostics(p: &Problem, lp: &LevelPropensity) -> (Vec<LevelDiagnostics>, Vec<String>) {
    let (a, n) = (p.a(), p.n());
    let levels = p.levels();
    let at = |i: usize, k: usize| a[i] as usize == k;
    let weight = |k: usize| -> Vec<f64> {
        (0..n)
            .map(|i| {
                if at(i, k) {
                    p.weight(i) / lp.prob[k][i]
                } else {
                    0.0
                }
            })
            .collect()
    };
    let reference = weight(0);
    let columns = term_columns(p);
    let ref_raw: Vec<f64> = (0..n)
        .map(|i| p.weight(i) * f64::from(u8::from(at(i, 0))))
        .collect();
    let mut out = Vec::new();
    let mut warnings = Vec::new();
    for (k, label) in levels.iter().enumerate() {
        let own = range((0..n).filter(|&i| at(i, k)).map(|i| lp.prob[k][i]));
        let others = range((0..n).filter(|&i| !at(i, k)).map(|i| lp.prob[k][i]));
        let outside = (0..n)
            .filter(|&i| at(i, k) && (lp.prob[k][i] < others.min || lp.prob[k][i] > others.max))
            .count();
        let h = weight(k);
        let hk: Vec<f64> = h.iter().copied().filter(|&x| x > 0.0).collect();
        let wr = range(hk.iter().copied());
        let ess = hk.iter().sum::<f64>().powi(2) / hk.iter().map(|x| x * x).sum::<f64>();
        let raw: Vec<f64> = (0..n)
            .map(|i| p.weight(i) * f64::from(u8::from(at(i, k))))
            .collect();
        let balance = if k == 0 {
            Vec::new()
        } else {
            balance(&columns, (&raw, &ref_raw), (&h, &reference))
        };
        let near = (0..n).filter(|&i| at(i, k) && lp.prob[k][i] < 0.01).count();
        if near > 0 {
            warnings.push(format!(
                "{near} rows at level {label} had a probability below 0.01 of that level (positivity is in doubt)"
            ));
        }
        if let Some(poor) = poorly_balanced(&balance) {
            warnings.push(format!(
                "after weighting, level {label} against {}: standardized mean differences above 0.1 remain for: {poor}",
                levels[0]
            ));
        }
        out.push(LevelDiagnostics {
            level: label.clone(),
            rows: hk.len(),
            propensity: own,
            outside_others_range: outside,
            weights: Summary {
                mean: hk.iter().sum::<f64>() / hk.len().max(1) as f64,
                min: wr.min,
                max: wr.max,
            },
            ess,
            balance,
        });
    }
    (out, warnings)
}

/// The diagnostics of the stabilized weights of a continuous exposure.
#[derive(Debug, Clone, Serialize)]
pub struct DoseDiagnostics {
    /// Mean, smallest and largest stabilized weight.
    pub weights: Summary,
    /// Kish effective sample size of the weights.
    pub ess: f64,
    /// Residual standard deviation of the exposure's linear model.
    pub residual_sd: f64,
    /// Skewness of its standardized residuals.
    pub residual_skewness: f64,
    /// Excess kurtosis of its standardized residuals.
    pub residual_excess_kurtosis: f64,
}

/// Largest absolute skewness, and excess kurtosis, of the exposure model's
/// residuals before a warning says the normal density fits poorly (rules
/// of thumb, common practice, no source).
const SKEW_LIMIT: f64 = 1.0;
const KURTOSIS_LIMIT: f64 = 2.0;

/// Weight diagnostics of a continuous exposure, and warnings.
/// Under sampling weights every row's weight is its sampling weight times
/// its density-ratio weight, and the residual moments are weighted.
pub fn dose_diagnostics(p: &Problem, dd: &DoseDensity) -> (DoseDiagnostics, Vec<String>) {
    let w: Vec<f64> = dd
        .weights
        .iter()
        .enumerate()
        .map(|(i, x)| p.weight(i) * x)
        .collect();
    let n: f64 = (0..w.len()).map(|i| p.weight(i)).sum();
    let r = range(w.iter().copied());
    let mean = w.iter().sum::<f64>() / n;
    let ess = w.iter().sum::<f64>().powi(2) / w.iter().map(|x| x * x).sum::<f64>();
    let moment = |f: &dyn Fn(f64) -> f64| {
        dd.z.iter()
            .enumerate()
            .map(|(i, &z)| p.weight(i) * f(z))
            .sum::<f64>()
            / n
    };
    let zm = moment(&|z| z);
    let m2 = moment(&|z| (z - zm).powi(2));
    let m3 = moment(&|z| (z - zm).powi(3));
    let m4 = moment(&|z| (z - zm).powi(4));
    let skew = m3 / m2.powf(1.5);
    let kurt = m4 / (m2 * m2) - 3.0;
    let mut warnings = Vec::new();
    if skew.abs() > SKEW_LIMIT || kurt > KURTOSIS_LIMIT {
        warnings.push(format!(
            "the normal model of the exposure fits poorly (residual skewness {skew:.2}, excess kurtosis \
             {kurt:.2}): the density-ratio weights may be unreliable; consider transforming the exposure"
        ));
    }
    if r.max > 10.0 * mean {
        warnings.push(format!(
            "extreme stabilized weights: the largest is {:.2} ({:.1}x the mean), effective sample size {:.0} of \
             {n} rows; with weights this uneven the weighted dose-response model's intervals can be too narrow: \
             compare standardization and a bootstrap interval",
            r.max,
            r.max / mean,
            ess
        ));
    }
    (
        DoseDiagnostics {
            weights: Summary {
                mean,
                min: r.min,
                max: r.max,
            },
            ess,
            residual_sd: dd.sigma,
            residual_skewness: skew,
            residual_excess_kurtosis: kurt,
        },
        warnings,
    )
}
