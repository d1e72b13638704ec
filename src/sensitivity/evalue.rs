//! The E-value of VanderWeele and Ding (Ann Intern Med 2017;167:268-274):
//! the minimum strength of association, on the risk-ratio scale, that an
//! unmeasured confounder would need with both the exposure and the outcome,
//! conditional on the measured covariates, to fully explain away an observed
//! association.
//!
//! For a risk ratio RR (inverted first when below 1) the E-value is
//! `RR + sqrt(RR (RR - 1))`. For a confidence interval it is computed from
//! the limit nearest the null, and it is 1 when the interval includes the
//! null.
//!
//! Other scales are first turned into an approximate risk ratio:
//! - odds ratio, rare outcome: used as a risk ratio directly;
//! - odds ratio, common outcome: RR ≈ sqrt(OR) (VanderWeele, Epidemiology
//!   2017;28:e58-e60);
//! - hazard ratio, rare outcome: used as a risk ratio directly;
//! - hazard ratio, common outcome: RR ≈ (1 - 0.5^sqrt(HR)) / (1 - 0.5^sqrt(1/HR))
//!   (VanderWeele and Ding 2017, appendix);
//! - standardized mean difference d: RR ≈ exp(0.91 d), interval
//!   exp(0.91 d ∓ 0.91 z se) (the paper's 1.78 is 0.91 × 1.96 rounded; here
//!   z is the normal critical value for the requested level);
//! - a coefficient of a continuous outcome: d = estimate / SD(outcome),
//!   se(d) = se / SD(outcome), then as for d.

use crate::dist::normal_critical;
use crate::error::Setting;
use crate::problem::short_number;
use crate::{Error, Result};
use serde::Serialize;

/// Scale label: a risk ratio given as such.
pub const SCALE_RR: &str = "risk ratio";
/// Scale label: an odds ratio for a rare outcome, read as a risk ratio.
pub const SCALE_OR_RARE: &str = "odds ratio (rare outcome)";
/// Scale label: an odds ratio for a common outcome, square-rooted.
pub const SCALE_OR_COMMON: &str = "odds ratio -> risk ratio by square root (common outcome)";
/// Scale label: a hazard ratio for a rare outcome, read as a risk ratio.
pub const SCALE_HR_RARE: &str = "hazard ratio (rare outcome)";
/// Scale label: a hazard ratio for a common outcome, converted.
pub const SCALE_HR_COMMON: &str =
    "hazard ratio -> risk ratio by (1 - 0.5^sqrt(HR)) / (1 - 0.5^sqrt(1/HR)) (common outcome)";
/// Scale label: a standardized mean difference, converted approximately.
pub const SCALE_SMD: &str = "approximate from standardized difference";

/// An E-value for a point estimate and (when given) its confidence interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EValue {
    /// Which conversion to the risk-ratio scale was used.
    pub scale: String,
    /// The E-value of the point estimate (at least 1).
    pub point: f64,
    /// The E-value of the confidence limit nearest the null; 1 when the
    /// interval includes the null; `None` when no interval was given.
    pub ci_limit: Option<f64>,
    /// The point estimate on the risk-ratio scale, as converted (not
    /// inverted).
    #[serde(skip)]
    pub rr: f64,
    /// The interval on the risk-ratio scale, as converted.
    #[serde(skip)]
    pub rr_ci: Option<(f64, f64)>,
}

/// The E-value of a risk ratio `rr` > 0: `RR + sqrt(RR (RR - 1))` after
/// inverting a risk ratio below 1. The E-value of 1 is 1.
///
/// Written so that no intermediate overflows or cancels: `RR + sqrt(RR)
/// sqrt(RR - 1)` for RR >= 1 and `(1 + sqrt(1 - RR)) / RR` below 1 (RR - 1
/// and 1 - RR are exact near 1), so every E-value that is a finite
/// double-precision number is found to rounding; one beyond that range (a
/// ratio above about 9e307 or below about 1.1e-308) is refused with a
/// message rather than printed as infinite.
pub fn evalue_of(rr: f64) -> Result<f64> {
    check_ratio(rr)?;
    let e = if rr >= 1.0 {
        rr + rr.sqrt() * (rr - 1.0).sqrt()
    } else {
        (1.0 + (1.0 - rr).sqrt()) / rr
    };
    representable(e, &format!("a risk ratio of {}", short_number(rr)))
}

fn check_ratio(rr: f64) -> Result<()> {
    if rr > 0.0 && rr.is_finite() {
        Ok(())
    } else {
        Err(Error::input(format!(
            "an E-value needs a positive, finite risk ratio (got {rr})"
        )))
    }
}

/// The E-value of the risk ratio `exp(x)`, from its logarithm `x` (so that a
/// ratio beyond the range of doubles, as from a large standardized
/// difference, still has one when the E-value itself is in range):
/// `e^|x| + sqrt(e^|x| expm1(|x|))`.
fn evalue_of_log(x: f64, what: &str) -> Result<f64> {
    let a = x.abs();
    let r = a.exp();
    representable(r + r.sqrt() * a.exp_m1().sqrt(), what)
}

/// `e` when it is a finite number; else a message that the E-value of
/// `what` lies beyond the range of double-precision numbers.
fn representable(e: f64, what: &str) -> Result<f64> {
    if e.is_finite() {
        Ok(e)
    } else {
        Err(Error::input(format!(
            "the E-value of {what} is beyond the largest number a double-precision value holds (about \
             1.8e308): no confounder of any plausible strength explains such an association away; check \
             that the number was entered as intended"
        )))
    }
}

/// The E-value of the confidence limit nearest the null for a risk ratio
/// `rr` with interval `(lo, hi)`; 1 when the interval includes 1.
pub fn evalue_of_limit(rr: f64, lo: f64, hi: f64) -> Result<f64> {
    check_ratio_ci(rr, lo, hi)?;
    if lo <= 1.0 && hi >= 1.0 {
        return Ok(1.0);
    }
    if rr > 1.0 { evalue_of(lo) } else { evalue_of(hi) }
}

fn check_ratio_ci(est: f64, lo: f64, hi: f64) -> Result<()> {
    for v in [est, lo, hi] {
        if !(v > 0.0 && v.is_finite()) {
            return Err(Error::option(
                Setting::Ci,
                format!("and its estimate must be positive and finite ratios (got {v})"),
            ));
        }
    }
    if !(lo <= est && est <= hi) {
        return Err(Error::option(
            Setting::Ci,
            format!("{lo},{hi} must satisfy lower <= estimate ({est}) <= upper"),
        ));
    }
    Ok(())
}

fn from_rr(scale: &str, rr: f64, ci: Option<(f64, f64)>) -> Result<EValue> {
    let point = evalue_of(rr)?;
    let ci_limit = match ci {
        Some((lo, hi)) => Some(evalue_of_limit(rr, lo, hi)?),
        None => None,
    };
    Ok(EValue {
        scale: scale.to_string(),
        point,
        ci_limit,
        rr,
        rr_ci: ci,
    })
}

/// E-value for a risk ratio with an optional confidence interval.
pub fn risk_ratio(rr: f64, ci: Option<(f64, f64)>) -> Result<EValue> {
    if let Some((lo, hi)) = ci {
        check_ratio_ci(rr, lo, hi)?;
    }
    from_rr(SCALE_RR, rr, ci)
}

/// E-value for an odds ratio. With `common_outcome` (outcome prevalence
/// above about 15%) the odds ratio is square-rooted first; otherwise it is
/// read as a risk ratio.
pub fn odds_ratio(or: f64, ci: Option<(f64, f64)>, common_outcome: bool) -> Result<EValue> {
    if let Some((lo, hi)) = ci {
        check_ratio_ci(or, lo, hi)?;
    } else {
        check_ratio(or)?;
    }
    if common_outcome {
        let ci = ci.map(|(lo, hi)| (lo.sqrt(), hi.sqrt()));
        from_rr(SCALE_OR_COMMON, or.sqrt(), ci)
    } else {
        from_rr(SCALE_OR_RARE, or, ci)
    }
}

/// The approximate risk ratio for a hazard ratio of a common outcome:
/// `(1 - 0.5^sqrt(HR)) / (1 - 0.5^sqrt(1/HR))`, computed as
/// `expm1(-ln 2 sqrt(HR)) / expm1(-ln 2 / sqrt(HR))` so that neither
/// difference from 1 cancels (a hazard ratio of 1e300 gives about 1.4e150,
/// not infinity).
pub fn hazard_to_risk_ratio(hr: f64) -> f64 {
    if hr == 1.0 {
        return 1.0;
    }
    let s = hr.sqrt();
    let ln2 = std::f64::consts::LN_2;
    (-ln2 * s).exp_m1() / (-ln2 / s).exp_m1()
}

/// E-value for a hazard ratio. With `common_outcome` (outcome common by
/// the end of follow-up, above about 15%) the hazard ratio is converted by
/// [`hazard_to_risk_ratio`]; otherwise it is read as a risk ratio.
pub fn hazard_ratio(hr: f64, ci: Option<(f64, f64)>, common_outcome: bool) -> Result<EValue> {
    if let Some((lo, hi)) = ci {
        check_ratio_ci(hr, lo, hi)?;
    } else {
        check_ratio(hr)?;
    }
    if common_outcome {
        let ci = ci.map(|(lo, hi)| (hazard_to_risk_ratio(lo), hazard_to_risk_ratio(hi)));
        from_rr(SCALE_HR_COMMON, hazard_to_risk_ratio(hr), ci)
    } else {
        from_rr(SCALE_HR_RARE, hr, ci)
    }
}

/// E-value for a standardized mean difference `d` with standard error `se`:
/// RR ≈ exp(0.91 d) and, for the `level` interval, exp(0.91 (d ∓ z se)).
pub fn standardized_difference(d: f64, se: f64, level: f64) -> Result<EValue> {
    if !d.is_finite() {
        return Err(Error::option(Setting::Smd, format!("must be finite (got {d})")));
    }
    if !(se > 0.0 && se.is_finite()) {
        return Err(Error::option(
            Setting::Se,
            format!("must be positive and finite (got {se})"),
        ));
    }
    let z = normal_critical(level)?;
    // On the log scale: exp(0.91 d) overflows long before its E-value does.
    let (x, lo, hi) = (0.91 * d, 0.91 * (d - z * se), 0.91 * (d + z * se));
    let what = |v: f64| format!("a standardized difference of {}", short_number(v / 0.91));
    let point = evalue_of_log(x, &what(x))?;
    let ci_limit = if lo <= 0.0 && hi >= 0.0 {
        1.0
    } else {
        let near = if x > 0.0 { lo } else { hi };
        evalue_of_log(near, &what(near))?
    };
    Ok(EValue {
        scale: SCALE_SMD.to_string(),
        point,
        ci_limit: Some(ci_limit),
        rr: x.exp(),
        // The interval on the risk-ratio scale, when its limits are
        // numbers (a huge standard error sends them to 0 and infinity).
        rr_ci: Some((lo.exp(), hi.exp())).filter(|(a, b)| *a > 0.0 && b.is_finite()),
    })
}

/// E-value for a difference in means of a continuous outcome (for example a
/// regression coefficient of a binary exposure), standardized by the
/// outcome's standard deviation `sd_outcome`: d = estimate / SD and
/// se(d) = se / SD.
pub fn continuous(estimate: f64, se: f64, sd_outcome: f64, level: f64) -> Result<EValue> {
    if !(sd_outcome > 0.0 && sd_outcome.is_finite()) {
        return Err(Error::Numerical(format!(
            "the outcome's standard deviation must be positive to standardize an estimate (got {sd_outcome})"
        )));
    }
    standardized_difference(estimate / sd_outcome, se / sd_outcome, level)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Closed forms: tolerance 1e-10 unless a published rounding is checked.

    /// VanderWeele & Ding 2017, worked example: RR 3.9 (95% CI 1.8 to 8.7)
    /// gives E-values 7.26 and 3.00 (from memory; the arithmetic is exact).
    #[test]
    fn vanderweele_ding_worked_example() {
        let e = risk_ratio(3.9, Some((1.8, 8.7))).unwrap();
        assert!((e.point - (3.9 + (3.9f64 * 2.9).sqrt())).abs() < 1e-12);
        assert!((e.point - 7.26).abs() < 0.005, "{}", e.point);
        assert!((e.ci_limit.unwrap() - 3.0).abs() < 0.005);
        assert_eq!(e.scale, SCALE_RR);
    }

    /// A protective risk ratio is inverted first; the limit nearest the null
    /// is the upper one.
    #[test]
    fn protective_ratio() {
        let e = risk_ratio(0.5, Some((0.3, 0.8))).unwrap();
        assert!((e.point - (2.0 + 2f64.sqrt())).abs() < 1e-12);
        let r: f64 = 1.0 / 0.8;
        assert!((e.ci_limit.unwrap() - (r + (r * (r - 1.0)).sqrt())).abs() < 1e-12);
    }

    #[test]
    fn interval_including_null_gives_one() {
        let e = risk_ratio(1.3, Some((0.9, 1.8))).unwrap();
        assert_eq!(e.ci_limit, Some(1.0));
        assert_eq!(evalue_of(1.0).unwrap(), 1.0);
    }

    #[test]
    fn odds_ratio_conversions() {
        let rare = odds_ratio(2.25, Some((1.21, 4.0)), false).unwrap();
        assert_eq!(rare.scale, SCALE_OR_RARE);
        assert!((rare.point - evalue_of(2.25).unwrap()).abs() < 1e-12);
        let common = odds_ratio(2.25, Some((1.21, 4.0)), true).unwrap();
        assert_eq!(common.scale, SCALE_OR_COMMON);
        assert!((common.rr - 1.5).abs() < 1e-12);
        assert!((common.ci_limit.unwrap() - evalue_of(1.1).unwrap()).abs() < 1e-12);
    }

    /// HR 2 for a common outcome gives RR 1.6125 (published-checks.md; the
    /// formula is from VanderWeele & Ding 2017, from memory).
    #[test]
    fn hazard_ratio_conversion() {
        let rr = hazard_to_risk_ratio(2.0);
        assert!((rr - 1.6125).abs() < 5e-5, "{rr}");
        // The conversion is symmetric on the log scale.
        assert!((hazard_to_risk_ratio(0.5) - 1.0 / rr).abs() < 1e-12);
        let e = hazard_ratio(2.0, Some((1.5, 2.7)), true).unwrap();
        assert_eq!(e.scale, SCALE_HR_COMMON);
        assert!((e.point - evalue_of(rr).unwrap()).abs() < 1e-12);
        let rare = hazard_ratio(2.0, None, false).unwrap();
        assert_eq!(rare.scale, SCALE_HR_RARE);
        assert!((rare.point - evalue_of(2.0).unwrap()).abs() < 1e-12);
        assert_eq!(rare.ci_limit, None);
    }

    /// SMD d to RR by exp(0.91 d), interval exp(0.91 d -/+ 1.78 se)
    /// (VanderWeele & Ding 2017, from memory). The exact multiplier used
    /// here is 0.91 * 1.95996 = 1.78356, so the published 1.78 is matched to
    /// its rounding.
    #[test]
    fn standardized_difference_conversion() {
        let (d, se) = (0.5, 0.1);
        let e = standardized_difference(d, se, 0.95).unwrap();
        assert_eq!(e.scale, SCALE_SMD);
        assert!((e.rr - (0.91f64 * 0.5).exp()).abs() < 1e-12);
        let lo = e.rr_ci.unwrap().0;
        assert!((lo.ln() - (0.91 * d - 1.78 * se)).abs() < 0.0036 * se + 1e-12);
        assert!((e.ci_limit.unwrap() - evalue_of(lo).unwrap()).abs() < 1e-12);
        let c = continuous(2.0, 0.4, 4.0, 0.95).unwrap();
        assert!((c.point - e.point).abs() < 1e-12);
    }

    #[test]
    fn bad_inputs_are_errors() {
        assert!(risk_ratio(-1.0, None).is_err());
        assert!(risk_ratio(2.0, Some((2.5, 3.0))).is_err());
        assert!(odds_ratio(0.0, None, true).is_err());
        assert!(standardized_difference(0.3, 0.0, 0.95).is_err());
        assert!(standardized_difference(0.3, 0.1, 1.5).is_err());
        assert!(continuous(1.0, 0.1, 0.0, 0.95).is_err());
    }
}
