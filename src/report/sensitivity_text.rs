//! Plain-text sections for sensitivity results: E-values (VanderWeele and
//! Ding 2017), robustness values and bias-adjusted estimates (Cinelli and
//! Hazlett 2020), each with a reading in words, and the caution that goes
//! with them. Nothing here computes a statistic.

use crate::sensitivity::evalue::{EValue, SCALE_HR_RARE, SCALE_OR_RARE, SCALE_RR};
use crate::sensitivity::robustness::{Adjusted, BenchmarkTable, Coefficient, RobustnessValue};
use std::fmt::Write;

/// What a sensitivity analysis can and cannot say; printed before the
/// general caution ([`super::doc::CAUTION`]).
pub const LIMITS: &str = "These numbers say how strong confounding left out of the analysis would \
have to be to change the conclusion; they cannot show that there is none.";

/// `v` with `digits` significant digits, without an exponent for the
/// magnitudes met in practice.
pub fn sig(v: f64, digits: usize) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    let mag = v.abs().log10().floor() as i32;
    let decimals = (digits as i32 - 1 - mag).clamp(0, 12) as usize;
    format!("{v:.decimals$}")
}

/// A percentage: two decimals below 10%, one above.
pub fn pct(v: f64) -> String {
    let p = 100.0 * v;
    if p.abs() < 10.0 {
        format!("{p:.2}%")
    } else {
        format!("{p:.1}%")
    }
}

/// Wraps `text` to lines of at most `width` characters, each starting with
/// `indent` (the text exporter's wrapping, argument order kept for callers).
pub fn wrap(text: &str, width: usize, indent: &str) -> String {
    super::text::wrap(text, indent, width)
}

/// The E-value section: the numbers, the conversion used and a reading.
pub fn evalue_section(e: &EValue) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "E-value ({})", e.scale);
    let _ = writeln!(s, "  for the estimate      {:.2}", e.point);
    match e.ci_limit {
        Some(l) => {
            let _ = writeln!(s, "  for the interval      {l:.2}");
        }
        None => {
            let _ = writeln!(s, "  for the interval      (no interval given)");
        }
    }
    if e.scale != SCALE_RR {
        let ci = e
            .rr_ci
            .map(|(lo, hi)| format!(" (interval {} to {})", sig(lo, 3), sig(hi, 3)))
            .unwrap_or_default();
        let _ = writeln!(s, "  as a risk ratio       {}{ci}", sig(e.rr, 3));
    }
    s.push('\n');
    let mut reading = format!(
        "Reading: an unmeasured confounder associated with both the exposure and the \
         outcome by a risk ratio of {:.2} each, over and above the measured covariates, \
         could explain away the observed risk ratio of {}; weaker confounding could not.",
        e.point,
        sig(e.rr, 3)
    );
    match e.ci_limit {
        Some(l) if l > 1.0 => {
            let _ = write!(
                reading,
                " A risk ratio of {l:.2} each could move the interval to include 1."
            );
        }
        Some(_) => {
            reading.push_str(" The interval already includes 1, so no confounding is needed for that.")
        }
        None => {}
    }
    if e.rr == 1.0 {
        reading = "Reading: the risk ratio is 1; there is no association to explain away.".to_string();
    }
    s.push_str(&wrap(&reading, 78, ""));
    if e.scale == SCALE_OR_RARE || e.scale == SCALE_HR_RARE {
        s.push_str(&wrap(
            "Note: the ratio is read as a risk ratio, which assumes the outcome is rare \
             (under about 15% by the end of follow-up); use --common-outcome otherwise.",
            78,
            "",
        ));
    } else if e.scale != SCALE_RR {
        s.push_str(&wrap(
            "Note: the E-value is for an approximate risk ratio obtained by the \
             conversion named above.",
            78,
            "",
        ));
    }
    s
}

/// The robustness-value section for a regression coefficient.
pub fn robustness_section(c: &Coefficient, rv: &RobustnessValue) -> String {
    let mut s = String::new();
    let level = format!("{:.0}%", 100.0 * (1.0 - rv.alpha));
    let _ = writeln!(s, "Robustness value (linear-regression coefficient)");
    let df = if c.df.fract() == 0.0 {
        format!("{:.0}", c.df)
    } else {
        sig(c.df, 4)
    };
    let rows = [
        (
            "coefficient".to_string(),
            format!(
                "{} (standard error {}, t = {:.2}, {df} residual df)",
                sig(c.estimate, 3),
                sig(c.se, 3),
                c.t()
            ),
        ),
        (
            "partial R2 of the exposure".to_string(),
            pct(rv.partial_r2_exposure),
        ),
        (format!("RV, q = {}", rv.q), pct(rv.rv)),
        (
            format!("RV, q = {}, alpha = {}", rv.q, rv.alpha),
            pct(rv.rv_alpha),
        ),
    ];
    for (label, value) in rows {
        let _ = writeln!(s, "  {label:<28}  {value}");
    }
    s.push('\n');
    let whole = (rv.q - 1.0).abs() < 1e-12;
    let (target, value) = if whole {
        ("bring the estimate to zero".to_string(), "zero")
    } else {
        (
            format!("reduce the estimate by {:.0}%", 100.0 * rv.q),
            "the reduced value",
        )
    };
    let mut reading = format!(
        "Reading: an unmeasured confounder explaining {} of the residual variance of both \
         the exposure and the outcome would {target}.",
        pct(rv.rv)
    );
    if rv.rv_alpha > 0.0 {
        let _ = write!(
            reading,
            " One explaining {} of each (or, if unequal, at most that much of either) would \
             make the {level} interval reach {value}.",
            pct(rv.rv_alpha)
        );
    } else {
        let _ = write!(
            reading,
            " The {level} interval already includes {value} without any confounding."
        );
    }
    if whole {
        let _ = write!(
            reading,
            " Even a confounder explaining all the residual variance of the outcome would \
             have to explain {} of the exposure's to bring the estimate to zero.",
            pct(rv.partial_r2_exposure)
        );
    }
    s.push_str(&wrap(&reading, 78, ""));
    s
}

/// A table of bias-adjusted estimates for hypothesised strengths.
pub fn adjusted_section(rows: &[Adjusted], alpha: f64) -> String {
    let mut s = String::new();
    let level = format!("{:.0}%", 100.0 * (1.0 - alpha));
    let _ = writeln!(s, "Bias-adjusted for a hypothesised confounder");
    let _ = writeln!(
        s,
        "  {:>13}  {:>12}  {:>12}  {level} interval",
        "R2, exposure", "R2, outcome", "estimate"
    );
    for r in rows {
        let _ = writeln!(
            s,
            "  {:>13}  {:>12}  {:>12}  {} to {}",
            pct(r.r2_exposure),
            pct(r.r2_outcome),
            sig(r.estimate, 4),
            sig(r.ci[0], 4),
            sig(r.ci[1], 4)
        );
    }
    s.push_str(&wrap(
        "The estimate is moved towards zero by the largest bias such a confounder could \
         cause; the interval widens or narrows with the standard error it implies.",
        78,
        "",
    ));
    s
}

/// A table of benchmark bounds: confounders k times as strong as an
/// observed covariate.
pub fn benchmark_section(t: &BenchmarkTable, alpha: f64) -> String {
    let mut s = String::new();
    let level = format!("{:.0}%", 100.0 * (1.0 - alpha));
    let _ = writeln!(
        s,
        "Confounders as strong as observed covariates (k times as strong, both ways)"
    );
    let width = t
        .rows
        .iter()
        .map(|r| r.covariate.chars().count())
        .max()
        .unwrap_or(9)
        .max(9);
    let _ = writeln!(
        s,
        "  {:<width$}  {:>4}  {:>12}  {:>11}  {:>12}  {level} interval",
        "covariate", "k", "R2, exposure", "R2, outcome", "estimate"
    );
    for r in &t.rows {
        let _ = writeln!(
            s,
            "  {:<width$}  {:>4}  {:>12}  {:>11}  {:>12}  {} to {}",
            r.covariate,
            sig(r.k, 2),
            pct(r.r2_exposure),
            pct(r.r2_outcome),
            sig(r.estimate, 4),
            sig(r.ci[0], 4),
            sig(r.ci[1], 4)
        );
    }
    for why in &t.skipped {
        s.push_str(&wrap(why, 78, "  (skipped) "));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_formatted_plainly() {
        assert_eq!(sig(0.09731, 3), "0.0973");
        assert_eq!(sig(3.9, 3), "3.90");
        assert_eq!(sig(1234.4, 3), "1234");
        assert_eq!(sig(-2.0, 2), "-2.0");
        assert_eq!(pct(0.1386), "13.9%");
        assert_eq!(pct(0.02184), "2.18%");
    }

    #[test]
    fn tables_list_every_row_and_skipped_pair() {
        use crate::sensitivity::robustness::{Covariate, adjust, benchmark_table};
        let c = Coefficient::new(0.097, 0.0232, 783.0).unwrap();
        let covs = [Covariate {
            name: "female".into(),
            r2_exposure: 0.009,
            r2_outcome: 0.125,
        }];
        let t = benchmark_table(&c, &covs, &[1.0, 200.0], 0.05).unwrap();
        let text = benchmark_section(&t, 0.05);
        assert!(text.contains("female"));
        assert!(text.contains("(skipped)"));
        assert!(text.contains("95% interval"));
        let rows = [adjust(&c, 0.01, 0.05, 0.05).unwrap()];
        let text = adjusted_section(&rows, 0.1);
        assert!(text.contains("90% interval") && text.contains("1.00%") && text.contains("5.00%"));
    }

    #[test]
    fn wrap_keeps_lines_short() {
        let w = wrap(LIMITS, 78, "");
        assert!(w.lines().all(|l| l.len() <= 78));
        assert!(w.contains("none."));
    }
}
