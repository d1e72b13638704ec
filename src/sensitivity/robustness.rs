//! Sensitivity of a linear-regression coefficient to an omitted confounder,
//! in terms of partial R², after Cinelli and Hazlett (JRSS-B 2020;82:39-67).
//!
//! Let the coefficient of the exposure D be estimated as `b` with standard
//! error `se` and residual degrees of freedom `df`, so t = b / se. An omitted
//! confounder Z is described by two numbers: `R2_dz`, its partial R² with the
//! exposure given the covariates, and `R2_yz`, its partial R² with the outcome
//! given the exposure and the covariates. Then:
//!
//! - partial R² of the exposure with the outcome: t² / (t² + df);
//! - bias: |bias| = se · sqrt(df · R2_yz · R2_dz / (1 - R2_dz));
//! - adjusted standard error: se · sqrt((1 - R2_yz) / (1 - R2_dz) · df / (df - 1));
//!   the adjusted interval uses Student's t with df - 1;
//! - robustness value RV_q, the equal strength R2_dz = R2_yz that would
//!   reduce |b| by 100·q%: with f_q = q |t| / sqrt(df),
//!   RV_q = (sqrt(f_q⁴ + 4 f_q²) - f_q²) / 2;
//! - RV_{q,α}, the equal strength that would make the adjusted interval reach
//!   the reduced value: the same with f_q - f*, f* = |t*_{α/2, df-1}| / sqrt(df - 1);
//!   it is 0 when f_q ≤ f*, and (f_q² - f*²) / (1 + f_q²) when f_q > 1 / f*
//!   (where the worst confounder no longer has equal strengths).
//!
//! Benchmarks (their section 6): a confounder k_D times as strong as an
//! observed covariate X_j in explaining the exposure and k_Y times as strong
//! in explaining the outcome, and orthogonal to X_j given the other
//! covariates, has at most
//!
//! - R2_dz = k_D · R2_{D~Xj|X-j} / (1 - R2_{D~Xj|X-j}),
//! - R2_yz ≤ η² · R2_{Y~Xj|X-j,D} / (1 - R2_{Y~Xj|X-j,D}), with
//!   η = (sqrt(k_Y) + sqrt(r)) / sqrt(1 - r) and
//!   r = R2_{Z~Xj|X-j,D} = k_D · R2_{D~Xj|X-j}² / ((1 - k_D · R2_{D~Xj|X-j}) (1 - R2_{D~Xj|X-j})).
//!
//! These bounds are written from memory and re-derived here: work in the
//! residuals on X-j, where Z and X_j are uncorrelated. Then the partial
//! correlation of D and Z given X_j is r_DZ / sqrt(1 - r_DXj²), which gives
//! R2_dz. Given D as well, Z and X_j have partial correlation
//! -r_ZD r_XjD / sqrt((1 - r_ZD²)(1 - r_XjD²)), whose square is r above; the
//! partial correlation of Y and Z given X_j (all given D) is
//! (r_YZ - r_YXj r_ZXj) / sqrt((1 - r_YXj²)(1 - r_ZXj²)), bounded in size by
//! |r_YXj| (sqrt(k_Y) + |r_ZXj|) / sqrt((1 - r_YXj²)(1 - r_ZXj²)), which gives
//! the R2_yz bound.

use crate::dist::t_critical;
use crate::error::Setting;
use crate::problem::short_number;
use crate::{Error, Result};
use serde::Serialize;

/// A regression coefficient of the exposure, as reported.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Coefficient {
    /// The estimate.
    pub estimate: f64,
    /// Its standard error (positive).
    pub se: f64,
    /// Residual degrees of freedom of the regression (above 1).
    pub df: f64,
}

impl Coefficient {
    /// A checked coefficient: finite estimate, positive standard error,
    /// df above 1. Errors name the setting ([`Setting`]) at fault.
    pub fn new(estimate: f64, se: f64, df: f64) -> Result<Self> {
        if !estimate.is_finite() {
            return Err(Error::option(
                Setting::Estimate,
                format!("must be a finite number (got {estimate})"),
            ));
        }
        if !(se > 0.0 && se.is_finite()) {
            return Err(Error::option(
                Setting::Se,
                format!("must be positive and finite (got {se})"),
            ));
        }
        if !(df > 1.0 && df.is_finite()) {
            return Err(Error::option(
                Setting::Df,
                format!("must be above 1: the adjusted interval uses df - 1 (got {df})"),
            ));
        }
        Ok(Coefficient { estimate, se, df })
    }

    /// The t statistic estimate / se.
    pub fn t(&self) -> f64 {
        self.estimate / self.se
    }

    /// The partial R² of the exposure with the outcome, t² / (t² + df).
    pub fn partial_r2(&self) -> f64 {
        partial_r2(self.t(), self.df)
    }
}

/// The partial R² of a regressor whose t statistic is `t`, in a regression
/// with `df` residual degrees of freedom: t² / (t² + df).
///
/// When t² or t² + df overflows it is written as `1 / (1 + (sqrt(df) /
/// t)²)` (a t of 1e200, or an infinite one from an estimate over a tiny
/// standard error, gives 1 to rounding); and when t² underflows as
/// `f² / (1 + f²)` with f = t / sqrt(df).
pub fn partial_r2(t: f64, df: f64) -> f64 {
    let t2 = t * t;
    if t2.is_finite() && (t2 + df).is_finite() && (t2 > 0.0 || t == 0.0) {
        return t2 / (t2 + df);
    }
    let (t, s) = (t.abs(), df.sqrt());
    if t > s {
        let u = s / t;
        1.0 / (1.0 + u * u)
    } else {
        let f = t / s;
        f * f / (1.0 + f * f)
    }
}

/// Robustness values of a coefficient.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RobustnessValue {
    /// The proportional reduction of the estimate considered (1: to zero).
    pub q: f64,
    /// The significance level for `rv_alpha`.
    pub alpha: f64,
    /// RV_q: equal partial R² with exposure and outcome that reduces |b| by 100·q%.
    pub rv: f64,
    /// RV_{q,α}: the smallest strength (the larger of the two partial R²)
    /// that makes the adjusted 1-α interval reach the reduced value.
    pub rv_alpha: f64,
    /// Partial R² of the exposure with the outcome.
    pub partial_r2_exposure: f64,
}

/// RV = (sqrt(f⁴ + 4 f²) - f²) / 2, written as 2 f / (f + sqrt(f² + 4))
/// (the same number, multiplied above and below by the conjugate) so that
/// nothing overflows or cancels: a tiny f gives f, a huge (or infinite)
/// one 1 - 1/f², that is 1.
fn rv_of_f(f: f64) -> f64 {
    if f > 1e8 {
        return 1.0 - (1.0 / f) * (1.0 / f);
    }
    2.0 * f / (f + f.hypot(2.0))
}

/// f* = |t*_{α/2, df-1}| / sqrt(df - 1).
pub fn f_star(alpha: f64, df: f64) -> Result<f64> {
    check_alpha(alpha)?;
    Ok(t_critical(1.0 - alpha, df - 1.0)?.abs() / (df - 1.0).sqrt())
}

fn check_alpha(alpha: f64) -> Result<()> {
    if alpha > 0.0 && alpha < 1.0 {
        Ok(())
    } else {
        Err(Error::option(
            Setting::Alpha,
            format!("must be in (0, 1) (got {alpha})"),
        ))
    }
}

fn check_q(q: f64) -> Result<()> {
    if q > 0.0 && q.is_finite() {
        Ok(())
    } else {
        Err(Error::option(
            Setting::Q,
            format!("must be a positive proportion of the estimate (got {q})"),
        ))
    }
}

/// The robustness values RV_q and RV_{q,α} of a coefficient.
pub fn robustness_value(c: &Coefficient, q: f64, alpha: f64) -> Result<RobustnessValue> {
    check_q(q)?;
    let fs = f_star(alpha, c.df)?;
    let fq = q * c.t().abs() / c.df.sqrt();
    let rv = rv_of_f(fq);
    let rv_alpha = if fq <= fs {
        0.0
    } else if fq > 1.0 / fs {
        // (fq² - fs²) / (1 + fq²) over fq², so that a huge fq does not overflow.
        let (r, u) = (fs / fq, 1.0 / fq);
        (1.0 - r * r) / (1.0 + u * u)
    } else {
        rv_of_f(fq - fs)
    };
    let partial_r2_exposure = c.partial_r2();
    if !(rv.is_finite() && rv_alpha.is_finite() && partial_r2_exposure.is_finite()) {
        return Err(Error::input(format!(
            "no robustness value for the estimate {}, standard error {} and {} degrees of freedom: \
             its computation leaves the range of double-precision values",
            short_number(c.estimate),
            short_number(c.se),
            short_number(c.df)
        )));
    }
    Ok(RobustnessValue {
        q,
        alpha,
        rv,
        rv_alpha,
        partial_r2_exposure,
    })
}

/// A bias-adjusted estimate and interval for a confounder of given strength.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Adjusted {
    /// Partial R² of the confounder with the exposure.
    pub r2_exposure: f64,
    /// Partial R² of the confounder with the outcome.
    pub r2_outcome: f64,
    /// The estimate moved towards zero by the largest bias.
    pub estimate: f64,
    /// The adjusted 1-α interval.
    pub ci: [f64; 2],
    /// The adjusted standard error.
    #[serde(skip)]
    pub std_error: f64,
    /// The size of the bias.
    #[serde(skip)]
    pub bias: f64,
}

fn check_r2(r: f64, setting: Setting) -> Result<()> {
    if (0.0..1.0).contains(&r) {
        Ok(())
    } else {
        Err(Error::option(setting, format!("must be in [0, 1) (got {r})")))
    }
}

/// The bias-adjusted estimate and 1-α interval of `c` for a confounder with
/// partial R² `r2_exposure` with the exposure and `r2_outcome` with the
/// outcome. The estimate is moved towards zero (its size reduced), the
/// direction in which a confounder would have inflated it.
pub fn adjust(c: &Coefficient, r2_exposure: f64, r2_outcome: f64, alpha: f64) -> Result<Adjusted> {
    check_r2(r2_exposure, Setting::R2Exposure)?;
    check_r2(r2_outcome, Setting::R2Outcome)?;
    check_alpha(alpha)?;
    let (rdz, ryz, df) = (r2_exposure, r2_outcome, c.df);
    // Square roots taken apart, so that se · sqrt(df) is formed only when
    // the bias itself is in range.
    let bias = c.se * df.sqrt() * (ryz * rdz / (1.0 - rdz)).sqrt();
    let se = c.se * ((1.0 - ryz) / (1.0 - rdz)).sqrt() * (df / (df - 1.0)).sqrt();
    let sign = if c.estimate < 0.0 { -1.0 } else { 1.0 };
    let estimate = c.estimate - sign * bias;
    let t = t_critical(1.0 - alpha, df - 1.0)?;
    let ci = [estimate - t * se, estimate + t * se];
    if !(estimate.is_finite() && ci.iter().all(|v| v.is_finite())) {
        return Err(Error::input(format!(
            "the bias-adjusted estimate or interval for partial R² {rdz} (exposure) and {ryz} (outcome) \
             is beyond the largest number a double-precision value holds (about 1.8e308): the estimate \
             {}, its standard error {} and {} degrees of freedom are too extreme for this adjustment",
            short_number(c.estimate),
            short_number(c.se),
            short_number(df)
        )));
    }
    Ok(Adjusted {
        r2_exposure,
        r2_outcome,
        estimate,
        ci,
        std_error: se,
        bias,
    })
}

/// An observed covariate's strength, used as a benchmark.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Covariate {
    /// Its name (a model term: `age`, `age^2`, `role=office`).
    #[serde(rename = "covariate")]
    pub name: String,
    /// Partial R² with the exposure given the other covariates,
    /// R2_{D~Xj|X-j} (from its t statistic in the exposure model:
    /// [`partial_r2`]).
    pub r2_exposure: f64,
    /// Partial R² with the outcome given the exposure and the other
    /// covariates, R2_{Y~Xj|X-j,D} (from its t statistic in the outcome
    /// model).
    pub r2_outcome: f64,
}

/// The largest partial R² with the exposure and with the outcome of a
/// confounder `kd` times as strong as `cov` in explaining the exposure and
/// `ky` times as strong in explaining the outcome (see the module notes).
/// An error when such a confounder cannot exist (an implied R² of 1 or more).
pub fn benchmark_bounds(cov: &Covariate, kd: f64, ky: f64) -> Result<(f64, f64)> {
    let name = &cov.name;
    if !(kd > 0.0 && ky > 0.0 && kd.is_finite() && ky.is_finite()) {
        return Err(Error::input(format!(
            "benchmark '{name}': the multiples must be positive (got {kd}, {ky})"
        )));
    }
    for (r, what) in [(cov.r2_exposure, "exposure"), (cov.r2_outcome, "outcome")] {
        if !(0.0..1.0).contains(&r) {
            return Err(Error::input(format!(
                "benchmark '{name}': partial R2 with the {what} must be in [0, 1) (got {r})"
            )));
        }
    }
    let (rd, ry) = (cov.r2_exposure, cov.r2_outcome);
    let impossible = |what: &str| {
        Error::input(format!(
            "no confounder can be {} as strong as '{name}' with the exposure and {} with the \
             outcome: {what} would reach 1",
            times(kd),
            times(ky)
        ))
    };
    if kd * rd >= 1.0 {
        return Err(impossible("its R2 with the exposure"));
    }
    let r2dz = kd * rd / (1.0 - rd);
    if r2dz >= 1.0 {
        return Err(impossible("its partial R2 with the exposure"));
    }
    let r = kd * rd * rd / ((1.0 - kd * rd) * (1.0 - rd));
    if r >= 1.0 {
        return Err(impossible("its partial R2 with the covariate"));
    }
    let eta = (ky.sqrt() + r.sqrt()) / (1.0 - r).sqrt();
    let r2yz = eta * eta * ry / (1.0 - ry);
    if r2yz >= 1.0 {
        return Err(impossible("its partial R2 with the outcome"));
    }
    Ok((r2dz, r2yz))
}

/// A multiple in words: "half", "1 times", "2 times".
fn times(k: f64) -> String {
    if k == 0.5 {
        "half".to_string()
    } else {
        format!("{k} times")
    }
}

/// The multiples used when the analyst names none: half as strong, as
/// strong and twice as strong as the covariate.
pub const DEFAULT_MULTIPLES: [f64; 3] = [0.5, 1.0, 2.0];

/// How many covariates serve as benchmarks when the analyst names none.
pub const DEFAULT_BENCHMARKS: usize = 3;

/// Which covariates serve as benchmarks, and at which multiples.
#[derive(Debug, Clone, PartialEq)]
pub struct BenchmarkChoice {
    /// Covariate (column) names; every model term made from a named column
    /// is benchmarked on its own. `None`: the [`DEFAULT_BENCHMARKS`]
    /// strongest terms (see [`strongest`]).
    pub covariates: Option<Vec<String>>,
    /// Multiples of the covariate's strength, positive, in the order given.
    pub multiples: Vec<f64>,
}

impl Default for BenchmarkChoice {
    fn default() -> Self {
        BenchmarkChoice {
            covariates: None,
            multiples: DEFAULT_MULTIPLES.to_vec(),
        }
    }
}

/// Checks a list of multiples: at least one, each positive and finite,
/// no repeats. The message says what is wrong without naming an option.
pub fn check_multiples(ks: &[f64]) -> std::result::Result<(), String> {
    if ks.is_empty() {
        return Err("expected at least one multiple".into());
    }
    for (i, &k) in ks.iter().enumerate() {
        if !(k > 0.0 && k.is_finite()) {
            return Err(format!("{k} is not a positive multiple"));
        }
        if ks[..i].contains(&k) {
            return Err(format!("{k} is given twice"));
        }
    }
    Ok(())
}

/// The size of the bias that a confounder as strong as `cov` (multiple 1
/// on both sides) would cause in `c`; infinite when no such confounder can
/// exist (stronger than any that can).
pub fn bias_at_one(c: &Coefficient, cov: &Covariate) -> f64 {
    match benchmark_bounds(cov, 1.0, 1.0) {
        Ok((d, y)) => c.se * (c.df * y * d / (1.0 - d)).sqrt(),
        Err(_) => f64::INFINITY,
    }
}

/// The `n` covariates that, as confounders of their own strength, would
/// cause the largest bias in `c` (ties keep the given order).
pub fn strongest(c: &Coefficient, covariates: &[Covariate], n: usize) -> Vec<Covariate> {
    let mut ranked: Vec<(f64, &Covariate)> =
        covariates.iter().map(|cov| (bias_at_one(c, cov), cov)).collect();
    ranked.sort_by(|a, b| b.0.total_cmp(&a.0));
    ranked.into_iter().take(n).map(|(_, cov)| cov.clone()).collect()
}

/// The equal strength s (the same partial R² with the exposure and the
/// outcome) whose bias equals that of a confounder with partial R²
/// `r2_exposure` and `r2_outcome`: s²/(1 - s) = r2_outcome · r2_exposure /
/// (1 - r2_exposure). It places any confounder on the scale of the
/// robustness value: the bias erases the estimate exactly when s ≥ RV_1.
pub fn equal_strength(r2_exposure: f64, r2_outcome: f64) -> f64 {
    let b = r2_outcome * r2_exposure / (1.0 - r2_exposure);
    rv_of_f(b.sqrt())
}

/// One row of a benchmark table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BenchmarkRow {
    /// The observed covariate (model term) used as a yardstick.
    pub covariate: String,
    /// How many times as strong as the covariate the confounder is (on
    /// both the exposure and the outcome side).
    pub multiple: f64,
    /// The bound on the confounder's partial R² with the exposure.
    pub r2_exposure: f64,
    /// The bound on its partial R² with the outcome.
    pub r2_outcome: f64,
    /// The bias-adjusted estimate.
    pub estimate: f64,
    /// The bias-adjusted 1-α interval.
    pub ci: [f64; 2],
}

/// A (covariate, multiple) pair with no row, and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Skipped {
    /// The covariate (model term).
    pub covariate: String,
    /// The multiple (`None`: the covariate gave no row at all).
    pub multiple: Option<f64>,
    /// Why there is no row.
    pub reason: String,
}

/// A benchmark table and the pairs that could not be formed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BenchmarkTable {
    /// `strongest` (chosen by [`strongest`]) or `named` (by the analyst).
    pub selection: String,
    /// The multiples, in the order used.
    pub multiples: Vec<f64>,
    /// The benchmark covariates' own strengths, in table order.
    pub measured: Vec<Covariate>,
    /// Rows in the order of covariates, then multiples.
    pub rows: Vec<BenchmarkRow>,
    /// Why a (covariate, multiple) pair has no row.
    pub skipped: Vec<Skipped>,
}

impl BenchmarkTable {
    /// The row of `covariate` at `multiple`, if it could be formed.
    pub fn row(&self, covariate: &str, multiple: f64) -> Option<&BenchmarkRow> {
        self.rows
            .iter()
            .find(|r| r.covariate == covariate && r.multiple == multiple)
    }

    /// Why `covariate` at `multiple` has no row, if it has none.
    pub fn skipped(&self, covariate: &str, multiple: f64) -> Option<&Skipped> {
        self.skipped
            .iter()
            .find(|r| r.covariate == covariate && r.multiple == Some(multiple))
    }
}

/// The benchmark row for a confounder `k` times as strong as `cov`.
pub fn benchmark(c: &Coefficient, cov: &Covariate, k: f64, alpha: f64) -> Result<BenchmarkRow> {
    let (r2dz, r2yz) = benchmark_bounds(cov, k, k)?;
    let a = adjust(c, r2dz, r2yz, alpha)?;
    Ok(BenchmarkRow {
        covariate: cov.name.clone(),
        multiple: k,
        r2_exposure: r2dz,
        r2_outcome: r2yz,
        estimate: a.estimate,
        ci: a.ci,
    })
}

/// Benchmark rows for every covariate and every multiple in `ks`; pairs
/// that describe an impossible confounder are listed in `skipped` with the
/// reason, never dropped silently. `selection` is recorded as given.
pub fn benchmark_table(
    c: &Coefficient,
    covariates: &[Covariate],
    ks: &[f64],
    alpha: f64,
    selection: &str,
) -> Result<BenchmarkTable> {
    check_alpha(alpha)?;
    check_multiples(ks).map_err(|e| Error::input(format!("benchmark multiples: {e}")))?;
    let mut rows = Vec::new();
    let mut skipped = Vec::new();
    for cov in covariates {
        for &k in ks {
            match benchmark(c, cov, k, alpha) {
                Ok(row) => rows.push(row),
                Err(Error::Input(reason)) => skipped.push(Skipped {
                    covariate: cov.name.clone(),
                    multiple: Some(k),
                    reason,
                }),
                Err(e) => return Err(e),
            }
        }
    }
    Ok(BenchmarkTable {
        selection: selection.to_string(),
        multiples: ks.to_vec(),
        measured: covariates.to_vec(),
        rows,
        skipped,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Cinelli & Hazlett 2020, running example (Darfur): t = 4.18, df = 783
    /// gives partial R² 2.19%, RV 13.9% and RV_{α=0.05} 7.6% (from memory;
    /// consistent with the formulas). The published t is rounded to 4.18;
    /// the paper's partial R² is computed from the unrounded t (4.184), so
    /// the check allows the change that rounding of t makes (±0.005 in t
    /// moves the partial R² by ±0.00005) plus the published rounding.
    #[test]
    fn cinelli_hazlett_running_example() {
        let c = Coefficient::new(4.18, 1.0, 783.0).unwrap();
        let r = robustness_value(&c, 1.0, 0.05).unwrap();
        assert!((r.partial_r2_exposure - 0.0219).abs() < 0.00005 + 0.00005);
        assert!((r.rv - 0.139).abs() < 0.0005 + 0.0003, "{}", r.rv);
        assert!((r.rv_alpha - 0.076).abs() < 0.0005 + 0.0003, "{}", r.rv_alpha);
    }

    /// At R2_dz = R2_yz = RV_1 the adjusted estimate is zero; at RV_{1,α}
    /// the adjusted interval touches zero (closed forms: 1e-10 relative).
    #[test]
    fn adjusted_estimate_reaches_zero_at_rv() {
        for (b, se, df) in [(0.097, 0.0232, 783.0), (-2.5, 0.8, 40.0), (1.0, 0.25, 30.0)] {
            let c = Coefficient::new(b, se, df).unwrap();
            let r = robustness_value(&c, 1.0, 0.05).unwrap();
            let a = adjust(&c, r.rv, r.rv, 0.05).unwrap();
            assert!(a.estimate.abs() < 1e-10 * b.abs(), "{a:?}");
            let a = adjust(&c, r.rv_alpha, r.rv_alpha, 0.05).unwrap();
            let near = if b > 0.0 { a.ci[0] } else { a.ci[1] };
            assert!(near.abs() < 1e-10 * b.abs(), "{a:?}");
        }
    }

    /// With q = 0.5 the adjusted estimate is halved at RV_0.5.
    #[test]
    fn partial_reduction() {
        let c = Coefficient::new(2.0, 0.5, 100.0).unwrap();
        let r = robustness_value(&c, 0.5, 0.05).unwrap();
        let a = adjust(&c, r.rv, r.rv, 0.05).unwrap();
        assert!((a.estimate - 1.0).abs() < 1e-10);
        let a = adjust(&c, r.rv_alpha, r.rv_alpha, 0.05).unwrap();
        assert!((a.ci[0] - 1.0).abs() < 1e-10);
    }

    /// When f_q > 1/f* the extreme confounder has R2_yz below R2_dz:
    /// RV_{q,α} = (f_q² - f*²)/(1 + f_q²) is the R2_dz at which the interval
    /// touches zero with R2_yz = R2_dz/(R2_dz + f*²) (the maximizing outcome
    /// strength), and equal strengths at RV_{q,α} leave the interval clear
    /// of zero.
    #[test]
    fn corner_case_of_rv_alpha() {
        // Few degrees of freedom and a huge t put f_q beyond 1/f*.
        let c = Coefficient::new(30.0, 1.0, 12.0).unwrap();
        let fs = f_star(0.05, 12.0).unwrap();
        let fq = 30.0 / 12f64.sqrt();
        assert!(fq > 1.0 / fs);
        let r = robustness_value(&c, 1.0, 0.05).unwrap();
        let ryz = r.rv_alpha / (r.rv_alpha + fs * fs);
        assert!(ryz < r.rv_alpha);
        let a = adjust(&c, r.rv_alpha, ryz, 0.05).unwrap();
        assert!(a.ci[0].abs() < 1e-9, "{a:?}");
        let diag = adjust(&c, r.rv_alpha, r.rv_alpha, 0.05).unwrap();
        assert!(diag.ci[0] > 0.0);
    }

    #[test]
    fn not_significant_gives_zero_rv_alpha() {
        let c = Coefficient::new(1.0, 1.0, 50.0).unwrap();
        assert_eq!(robustness_value(&c, 1.0, 0.05).unwrap().rv_alpha, 0.0);
    }

    /// A benchmark with k = 1 for a covariate that is uncorrelated with the
    /// exposure (R2_{D~Xj} = 0) gives R2_dz = 0 and R2_yz = R2_{Y~Xj}/(1-R2_{Y~Xj})
    /// exactly; larger k gives larger bounds.
    #[test]
    fn benchmark_bounds_behave() {
        let cov = Covariate {
            name: "age".into(),
            r2_exposure: 0.0,
            r2_outcome: 0.1,
        };
        let (d, y) = benchmark_bounds(&cov, 1.0, 1.0).unwrap();
        assert_eq!(d, 0.0);
        assert!((y - 0.1 / 0.9).abs() < 1e-12);
        let cov = Covariate {
            name: "age".into(),
            r2_exposure: 0.05,
            r2_outcome: 0.03,
        };
        let (d1, y1) = benchmark_bounds(&cov, 1.0, 1.0).unwrap();
        let (d2, y2) = benchmark_bounds(&cov, 2.0, 2.0).unwrap();
        assert!((d1 - 0.05 / 0.95).abs() < 1e-12);
        assert!(d2 > d1 && y2 > y1);
        assert!(benchmark_bounds(&cov, 25.0, 1.0).is_err());
    }

    /// The R2_yz bound is attained: build residualized vectors with Z ⊥ Xj
    /// exactly and the worst-case sign, and compute the partial correlation
    /// of Y and Z given Xj and D numerically.
    #[test]
    fn benchmark_bound_matches_a_constructed_example() {
        // Correlations among (D, Xj, Z, Y) after residualizing on X-j.
        let r_dx: f64 = 0.3;
        let kd: f64 = 2.0;
        let r_dz = (kd * r_dx * r_dx).sqrt();
        // Y's partial correlations with Xj and with Z, given D.
        let r_yx_d: f64 = 0.2;
        let ky: f64 = 1.5;
        let r_yz_d = ky.sqrt() * r_yx_d;
        // Given D, Z and Xj have correlation -r_dz r_dx / sqrt((1-r_dz²)(1-r_dx²)).
        let r_zx_d = -r_dz * r_dx / ((1.0 - r_dz * r_dz) * (1.0 - r_dx * r_dx)).sqrt();
        // Worst sign: r_yz_d and -r_yx_d r_zx_d have the same sign.
        let partial = (r_yz_d - r_yx_d * r_zx_d) / ((1.0 - r_yx_d * r_yx_d) * (1.0 - r_zx_d * r_zx_d)).sqrt();
        let cov = Covariate {
            name: "x".into(),
            r2_exposure: r_dx * r_dx,
            r2_outcome: r_yx_d * r_yx_d,
        };
        let (d, y) = benchmark_bounds(&cov, kd, ky).unwrap();
        let want_d = r_dz * r_dz / (1.0 - r_dx * r_dx);
        assert!((d - want_d).abs() < 1e-12);
        assert!(
            (y - partial * partial).abs() < 1e-12,
            "{y} vs {}",
            partial * partial
        );
    }

    #[test]
    fn table_lists_skipped_pairs() {
        let c = Coefficient::new(0.097, 0.0232, 783.0).unwrap();
        let covs = vec![Covariate {
            name: "female".into(),
            r2_exposure: 0.009,
            r2_outcome: 0.125,
        }];
        let t = benchmark_table(&c, &covs, &[1.0, 2.0, 3.0, 200.0], 0.05, "named").unwrap();
        assert_eq!(t.rows.len() + t.skipped.len(), 4);
        assert!(!t.skipped.is_empty());
        assert!(t.rows[0].estimate < 0.097 && t.rows[0].estimate > t.rows[1].estimate);
    }

    /// The equal strength of a confounder erases the estimate exactly when
    /// it reaches RV_1: at (x, y) on the estimate's frontier it equals RV_1
    /// (closed forms: 1e-12), and equal strengths map to themselves.
    #[test]
    fn equal_strength_is_on_the_robustness_value_scale() {
        let c = Coefficient::new(-3.101, 0.1145, 2992.0).unwrap();
        let rv = robustness_value(&c, 1.0, 0.05).unwrap().rv;
        for x in [0.2, 0.39, 0.6] {
            // On the frontier y = f² (1 - x) / x the adjusted estimate is zero.
            let f2 = c.t().powi(2) / c.df;
            let y = f2 * (1.0 - x) / x;
            if y < 1.0 {
                assert!((equal_strength(x, y) - rv).abs() < 1e-12);
                assert!(adjust(&c, x, y, 0.05).unwrap().estimate.abs() < 1e-9);
            }
        }
        assert!((equal_strength(0.3, 0.3) - 0.3).abs() < 1e-12);
        assert_eq!(equal_strength(0.0, 0.5), 0.0);
    }

    /// The default choice ranks covariates by the bias a confounder of
    /// their own strength would cause; an impossible one ranks first.
    #[test]
    fn strongest_ranks_by_bias_at_multiple_one() {
        let c = Coefficient::new(1.0, 0.2, 500.0).unwrap();
        let cov = |n: &str, d: f64, y: f64| Covariate {
            name: n.into(),
            r2_exposure: d,
            r2_outcome: y,
        };
        let all = [
            cov("weak", 0.001, 0.001),
            cov("outcome only", 0.0, 0.4),
            cov("both", 0.05, 0.05),
            cov("huge", 0.6, 0.9),
            cov("middle", 0.01, 0.02),
        ];
        let names: Vec<String> = strongest(&c, &all, 3).into_iter().map(|c| c.name).collect();
        assert_eq!(names, ["huge", "both", "middle"]);
        assert!(bias_at_one(&c, &all[1]) == 0.0);
        assert!(check_multiples(&[0.5, 1.0, 2.0]).is_ok());
        assert!(check_multiples(&[]).is_err());
        assert!(check_multiples(&[1.0, 0.0]).unwrap_err().contains("0 is not"));
        assert!(check_multiples(&[1.0, 1.0]).unwrap_err().contains("twice"));
        assert!(check_multiples(&[f64::NAN]).is_err());
    }

    #[test]
    fn bad_inputs_name_the_setting() {
        let setting = |r: Result<Coefficient>| match r {
            Err(Error::Option { setting, .. }) => Some(setting),
            _ => None,
        };
        assert_eq!(setting(Coefficient::new(1.0, 1.0, 1.0)), Some(Setting::Df));
        assert_eq!(
            setting(Coefficient::new(f64::NAN, 1.0, 9.0)),
            Some(Setting::Estimate)
        );
        assert_eq!(setting(Coefficient::new(1.0, 0.0, 9.0)), Some(Setting::Se));
        let e = Coefficient::new(1.0, 1.0, 1.0).unwrap_err().to_string();
        assert!(
            e.starts_with("the residual degrees of freedom must be above 1"),
            "{e}"
        );
        let c = Coefficient::new(1.0, 0.2, 30.0).unwrap();
        let of = |e: Error| match e {
            Error::Option { setting, .. } => Some(setting),
            _ => None,
        };
        assert_eq!(
            of(adjust(&c, 1.0, 0.1, 0.05).unwrap_err()),
            Some(Setting::R2Exposure)
        );
        assert_eq!(
            of(adjust(&c, 0.1, -0.1, 0.05).unwrap_err()),
            Some(Setting::R2Outcome)
        );
        assert_eq!(
            of(robustness_value(&c, 1.0, 1.0).unwrap_err()),
            Some(Setting::Alpha)
        );
        assert_eq!(of(robustness_value(&c, 0.0, 0.05).unwrap_err()), Some(Setting::Q));
    }
}
