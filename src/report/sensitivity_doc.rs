//! The sensitivity part of an analysis report: the E-value, robustness
//! values and benchmark bounds as document blocks. `estimate`, `compare`
//! and `demo` share it through [`super::estimate_doc::analysis_blocks`].

use super::doc::{Block, Table};
use super::estimate_doc::{interval, num};
use super::sensitivity_text::{LIMITS, Names, evalue_reading, multiple_label, pct, robustness_reading};
use crate::analysis::Analysis;
use crate::sensitivity::robustness::BenchmarkTable;

/// Sensitivity: the E-value and, for a linear outcome, robustness values
/// with benchmark bounds.
pub fn sensitivity_blocks(a: &Analysis) -> Vec<Block> {
    let mut b = Vec::new();
    let names = Names {
        exposure: &a.exposure,
        outcome: &a.outcome,
    };
    let by = &a.sensitivity.by_contrast;
    if let (Some(e), Some(m)) = (&a.sensitivity.evalue, &a.details.evalue_method) {
        let which = match by.first() {
            Some(c) => format!("the {m} estimate of {}", c.contrast.words()),
            None => format!("the {m} estimate"),
        };
        b.push(Block::Para(format!(
            "Risk-ratio scale (E-value, VanderWeele & Ding 2017; {which}, {}). {}",
            e.scale,
            evalue_reading(e, names)
        )));
    }
    if !by.is_empty() {
        let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
        let mut t = Table::new(
            &format!("Each contrast's sensitivity ({} estimates)", by[0].method),
            &[
                "contrast",
                "E-value (for the interval)",
                "robustness value",
                &format!("robustness value for the {:.0}% interval", 100.0 * level),
            ],
        )
        .align(0, super::doc::Align::Left);
        for c in by {
            let ev = c.evalue.as_ref().map_or("-".into(), |e| match e.ci_limit {
                Some(l) => format!("{} ({})", num(e.point), num(l)),
                None => num(e.point),
            });
            let (rv, rva) = c
                .robustness_value
                .as_ref()
                .map_or(("-".into(), "-".into()), |r| (pct(r.rv), pct(r.rv_alpha)));
            t.row(vec![c.contrast.words(), ev, rv, rva]);
        }
        t.notes.push(
            "E-values: the risk ratio by which a missing confounder would have to be tied to both the exposure \
             level and the outcome; robustness values: the share of the residual variance of both it would \
             have to explain (linear outcome model, the level's coefficient against the reference)."
                .into(),
        );
        b.push(Block::Table(t));
    }
    if let (Some(rv), Some(c)) = (&a.sensitivity.robustness_value, &a.details.coefficient) {
        b.push(Block::Para(format!(
            "Partial R\u{b2} scale (robustness value, Cinelli & Hazlett 2020; the exposure coefficient {} with \
             s.e. {} in the linear outcome model without products). {}",
            num(c.estimate),
            num(c.se),
            robustness_reading(rv, names)
        )));
    }
    if let (Some(t), Some(rv), Some(c)) = (
        &a.sensitivity.benchmarks,
        &a.sensitivity.robustness_value,
        &a.details.coefficient,
    ) {
        b.extend(benchmark_blocks(t, rv.alpha, c.estimate));
    }
    for n in &a.details.notes {
        b.push(Block::Para(format!("Sensitivity: {n}.")));
    }
    b.push(Block::Para(LIMITS.into()));
    b
}

/// The benchmark table: one row per measured covariate (model term), one
/// column per multiple, each cell the corrected estimate and interval.
/// `estimate` is the uncorrected coefficient, whose sign a corrected
/// estimate may reverse.
pub fn benchmark_blocks(t: &BenchmarkTable, alpha: f64, estimate: f64) -> Vec<Block> {
    let level = format!("{:.0}%", 100.0 * (1.0 - alpha));
    let mut head = vec![
        "measured covariate".to_string(),
        "its shares (exposure, outcome)".to_string(),
    ];
    head.extend(t.multiples.iter().map(|&k| multiple_label(k)));
    let head: Vec<&str> = head.iter().map(String::as_str).collect();
    let mut tab = Table::new(
        "Where the estimate would move if a hidden confounder were as strong as a measured covariate, or a multiple of it",
        &head,
    );
    for cov in &t.measured {
        let mut row = vec![
            cov.name.clone(),
            format!("{}, {}", pct(cov.r2_exposure), pct(cov.r2_outcome)),
        ];
        for &k in &t.multiples {
            row.push(match t.row(&cov.name, k) {
                Some(r) => format!("{} ({})", num(r.estimate), interval(r.ci)),
                None => "cannot exist".into(),
            });
        }
        tab.row(row);
    }
    tab.notes.push(format!(
        "Each cell: the estimate corrected for a hidden confounder that explains that multiple of what the covariate \
         explains of both the exposure and the outcome, beyond the other covariates, with its {level} interval. Shares \
         are partial R\u{b2}."
    ));
    tab.notes.push(if t.selection == "named" {
        "Covariates as named by the analyst.".to_string()
    } else {
        format!(
            "Covariates: the {} adjustment terms whose own strength would bias the estimate most; others can be named.",
            t.measured.len()
        )
    });
    for s in &t.skipped {
        tab.notes.push(match s.multiple {
            Some(k) => format!("{}, {}: {}.", s.covariate, multiple_label(k), s.reason),
            None => format!("{}.", s.reason),
        });
    }
    let mut out = Vec::new();
    if !tab.rows.is_empty() {
        let crossing = t.rows.iter().filter(|r| r.ci[0] <= 0.0 && r.ci[1] >= 0.0).count();
        let flipped = t.rows.iter().filter(|r| r.estimate * estimate < 0.0).count();
        let total = t.rows.len();
        out.push(Block::Para(format!(
            "Measured covariates as yardsticks: of {total} hidden confounders built from them, {} would bring the \
             {level} interval to include zero, and {} would reverse the sign of the estimate.",
            count(crossing),
            count(flipped)
        )));
        out.push(Block::Table(tab));
    } else {
        out.extend(tab.notes.into_iter().skip(2).map(Block::Para));
    }
    out
}

fn count(k: usize) -> String {
    match k {
        0 => "none".into(),
        k => k.to_string(),
    }
}
