//! Plain-text sections for sensitivity results: E-values (VanderWeele and
//! Ding 2017), robustness values and bias-adjusted estimates (Cinelli and
//! Hazlett 2020), each with a reading in words, and the caution that goes
//! with them. Nothing here computes a statistic.

use crate::error::{Advice, Phrasing, Remedy, Setting};
use crate::sensitivity::evalue::{EValue, SCALE_HR_RARE, SCALE_OR_RARE, SCALE_RR};
use crate::sensitivity::robustness::{Adjusted, Coefficient, RobustnessValue};
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
    if !(-6..15).contains(&mag) {
        return format!("{v:.prec$e}", prec = digits.saturating_sub(1));
    }
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

/// How a sentence names the exposure and the outcome: "the exposure" and
/// "the outcome" for summary numbers, the column names in a report.
#[derive(Debug, Clone, Copy)]
pub struct Names<'a> {
    /// The exposure, as the sentence should call it.
    pub exposure: &'a str,
    /// The outcome, as the sentence should call it.
    pub outcome: &'a str,
}

impl Default for Names<'_> {
    fn default() -> Self {
        Names {
            exposure: "the exposure",
            outcome: "the outcome",
        }
    }
}

/// The E-value in words: what strength a hidden confounder needs to account
/// for the whole risk ratio, and for the interval to reach 1.
pub fn evalue_reading(e: &EValue, n: Names) -> String {
    if e.rr == 1.0 {
        return "The risk ratio is 1: there is no association for a hidden confounder to account for.".into();
    }
    let mut s = format!(
        "To account for all of the risk ratio of {}, a confounder missing from the analysis would have to be \
         tied to {} and to {} by risk ratios of at least {:.2} each, over and above the measured covariates; \
         if either tie is weaker, the other must be stronger still.",
        sig(e.rr, 3),
        n.exposure,
        n.outcome,
        e.point
    );
    match e.ci_limit {
        Some(l) if l > 1.0 => {
            let _ = write!(s, " Ties of {l:.2} each are enough for the interval to reach 1.");
        }
        Some(_) => s.push_str(" The interval reaches 1 even with no hidden confounder."),
        None => {}
    }
    s
}

/// The E-value section: the numbers, the conversion used and a reading;
/// `phrasing` words the advice on a common outcome.
pub fn evalue_section(e: &EValue, phrasing: &dyn Phrasing) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "Risk-ratio scale (E-value; {})", e.scale);
    let ci = e
        .rr_ci
        .map(|(lo, hi)| format!(", interval {} to {}", sig(lo, 3), sig(hi, 3)))
        .unwrap_or_default();
    let rows = [
        (
            "the association, as a risk ratio",
            format!("{}{ci}", sig(e.rr, 3)),
        ),
        (
            "needed to account for all of it",
            format!("{:.2} with the exposure and with the outcome", e.point),
        ),
        (
            "needed for the interval to reach 1",
            match e.ci_limit {
                Some(l) if l > 1.0 => format!("{l:.2} with each"),
                Some(_) => "none: it reaches 1 already".into(),
                None => "(no interval given)".into(),
            },
        ),
    ];
    for (label, value) in rows {
        let _ = writeln!(s, "  {label:<36}  {value}");
    }
    s.push('\n');
    s.push_str(&wrap(&evalue_reading(e, Names::default()), 78, ""));
    if e.scale == SCALE_OR_RARE || e.scale == SCALE_HR_RARE {
        let advice = Advice::one(Remedy::TurnOn(Setting::CommonOutcome), "otherwise");
        s.push_str(&wrap(
            &format!(
                "Note: the ratio is read as a risk ratio, which assumes the outcome is rare \
                 (under about 15% by the end of follow-up); {}.",
                advice.text(phrasing)
            ),
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

/// The robustness value in words: the equal share of leftover variance a
/// hidden confounder needs to account for the estimate (or 100·q% of it)
/// and for the interval to reach that value, and, for q = 1, the least
/// share of the exposure's leftover variance that can do it at all.
pub fn robustness_reading(rv: &RobustnessValue, n: Names) -> String {
    let level = format!("{:.0}%", 100.0 * (1.0 - rv.alpha));
    let whole = (rv.q - 1.0).abs() < 1e-12;
    let (part, value) = if whole {
        ("all of the estimate".to_string(), "zero".to_string())
    } else {
        (
            format!("{:.0}% of the estimate", 100.0 * rv.q),
            format!("{} times the estimate", sig(1.0 - rv.q, 3)),
        )
    };
    let mut s = format!(
        "To account for {part}, a confounder missing from the analysis would have to explain at least {} of the \
         leftover variance of {} and of {} (what the measured covariates leave unexplained); with both shares \
         below that it cannot.",
        pct(rv.rv),
        n.exposure,
        n.outcome
    );
    if rv.rv_alpha > 0.0 {
        let _ = write!(
            s,
            " For the {level} interval to reach {value}, both shares must reach {}.",
            pct(rv.rv_alpha)
        );
    } else {
        let _ = write!(
            s,
            " The {level} interval reaches {value} even with no hidden confounder."
        );
    }
    if whole {
        let _ = write!(
            s,
            " A floor on the exposure side: {exposure} itself accounts for {share} of the leftover variance of \
             {outcome}, and a hidden confounder tied to {exposure} by less than that share cannot erase the \
             estimate, whatever its tie to {outcome}.",
            exposure = n.exposure,
            outcome = n.outcome,
            share = pct(rv.partial_r2_exposure),
        );
    }
    s
}

/// The robustness-value section for a regression coefficient.
pub fn robustness_section(c: &Coefficient, rv: &RobustnessValue) -> String {
    let mut s = String::new();
    let level = format!("{:.0}%", 100.0 * (1.0 - rv.alpha));
    let _ = writeln!(
        s,
        "Partial R\u{b2} scale (robustness value; linear-regression coefficient)"
    );
    let df = if c.df.fract() == 0.0 && c.df < 1e15 {
        format!("{:.0}", c.df)
    } else {
        sig(c.df, 4)
    };
    let whole = (rv.q - 1.0).abs() < 1e-12;
    let target = if whole {
        "all of it".to_string()
    } else {
        format!("{:.0}% of it", 100.0 * rv.q)
    };
    let reach = if whole {
        "zero".to_string()
    } else {
        format!("{} of it", sig(1.0 - rv.q, 3))
    };
    let rows = [
        (
            "the coefficient".to_string(),
            format!(
                "{}, standard error {}, {}, {} residual df",
                sig(c.estimate, 3),
                sig(c.se, 3),
                if c.t().is_finite() {
                    format!("t = {:.2}", c.t())
                } else {
                    "|t| above 1.8e308".to_string()
                },
                df
            ),
        ),
        (
            format!("needed to account for {target}"),
            format!("{} of each", pct(rv.rv)),
        ),
        (
            format!("needed for the {level} interval to reach {reach}"),
            format!("{} of each", pct(rv.rv_alpha)),
        ),
        (
            "what the exposure explains of the outcome".to_string(),
            pct(rv.partial_r2_exposure),
        ),
    ];
    let width = rows.iter().map(|(l, _)| l.chars().count()).max().unwrap_or(0);
    for (label, value) in rows {
        let _ = writeln!(s, "  {label:<width$}  {value}");
    }
    s.push_str(&wrap(
        "(shares of the leftover variance of the exposure and of the outcome, that is, of what the \
         measured covariates leave unexplained)",
        78,
        "  ",
    ));
    s.push('\n');
    s.push_str(&wrap(&robustness_reading(rv, Names::default()), 78, ""));
    s
}

/// A table of bias-adjusted estimates for hypothesized strengths.
pub fn adjusted_section(rows: &[Adjusted], alpha: f64) -> String {
    let mut s = String::new();
    let level = format!("{:.0}%", 100.0 * (1.0 - alpha));
    let _ = writeln!(s, "The estimate corrected for a hypothesized hidden confounder");
    let _ = writeln!(
        s,
        "  {:>16}  {:>16}  {:>12}  {level} interval",
        "share, exposure", "share, outcome", "corrected"
    );
    for r in rows {
        let _ = writeln!(
            s,
            "  {:>16}  {:>16}  {:>12}  {} to {}",
            pct(r.r2_exposure),
            pct(r.r2_outcome),
            sig(r.estimate, 4),
            sig(r.ci[0], 4),
            sig(r.ci[1], 4)
        );
    }
    s.push_str(&wrap(
        "Each row moves the estimate towards zero by the most such a confounder could bias it, and \
         recomputes the interval with the standard error it implies.",
        78,
        "",
    ));
    s
}

/// A benchmark multiple in words, for a column heading: "half as strong",
/// "as strong", "twice as strong", "3 times as strong".
pub fn multiple_label(k: f64) -> String {
    if k == 0.5 {
        "half as strong".into()
    } else if k == 1.0 {
        "as strong".into()
    } else if k == 2.0 {
        "twice as strong".into()
    } else {
        format!("{} times as strong", sig(k, 2).trim_end_matches(".0"))
    }
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
    fn adjusted_table_and_multiples_read_plainly() {
        use crate::sensitivity::robustness::adjust;
        let c = Coefficient::new(-3.101, 0.1145, 2988.0).unwrap();
        let rows = [adjust(&c, 0.01, 0.05, 0.1).unwrap()];
        let text = adjusted_section(&rows, 0.1);
        assert!(text.contains("90% interval") && text.contains("1.00%") && text.contains("5.00%"));
        assert_eq!(multiple_label(0.5), "half as strong");
        assert_eq!(multiple_label(1.0), "as strong");
        assert_eq!(multiple_label(2.0), "twice as strong");
        assert_eq!(multiple_label(3.0), "3.0 times as strong".replace(".0", ""));
        assert_eq!(multiple_label(1.5), "1.5 times as strong");
    }

    #[test]
    fn wrap_keeps_lines_short() {
        let w = wrap(LIMITS, 78, "");
        assert!(w.lines().all(|l| l.len() <= 78));
        assert!(w.contains("none."));
    }
}
