//! The sensitivity part of an analysis report: the E-value, robustness
//! values and benchmark bounds as document blocks. `estimate`, `compare`
//! and `demo` share it through [`super::estimate_doc::analysis_blocks`].

use super::doc::{Block, Table};
use super::estimate_doc::{interval, num};
use super::sensitivity_text::{LIMITS, pct, sig};
use crate::analysis::Analysis;

/// Sensitivity: the E-value and, for a linear outcome, robustness values
/// with benchmark bounds.
pub fn sensitivity_blocks(a: &Analysis) -> Vec<Block> {
    let mut b = Vec::new();
    if let (Some(e), Some(m)) = (&a.sensitivity.evalue, &a.details.evalue_method) {
        let limit = match e.ci_limit {
            Some(l) if l <= 1.0 => {
                " The interval already includes the null, so its E-value is 1.".to_string()
            }
            Some(l) => format!(
                " To move the interval to include the null, {} each would suffice.",
                sig(l, 3)
            ),
            None => String::new(),
        };
        b.push(Block::Para(format!(
            "E-value ({}, from the {m} estimate; scale: {}): an unmeasured confounder associated with both {} and {} \
             by a risk ratio of {} each, beyond the adjustment, could explain the estimate away; weaker confounding \
             could not.{limit}",
            "VanderWeele & Ding 2017",
            e.scale,
            a.exposure,
            a.outcome,
            sig(e.point, 3)
        )));
    }
    if let (Some(rv), Some(c)) = (&a.sensitivity.robustness_value, &a.details.coefficient) {
        b.push(Block::Para(format!(
            "Robustness value (Cinelli & Hazlett 2020), for the exposure coefficient {} (s.e. {}) of the linear \
             outcome model without products: the exposure explains {} of the outcome's residual variance; a \
             confounder explaining {} of the residual variance of both exposure and outcome would bring the \
             estimate to zero, and one explaining {} of both would make the {:.0}% interval reach zero.",
            num(c.estimate),
            num(c.se),
            pct(rv.partial_r2_exposure),
            pct(rv.rv),
            pct(rv.rv_alpha),
            100.0 * (1.0 - rv.alpha)
        )));
    }
    if let Some(t) = &a.details.benchmarks {
        let mut tab = Table::new(
            "Bounds on a confounder k times as strong as an observed covariate",
            &[
                "covariate",
                "k",
                "R² with exposure",
                "R² with outcome",
                "adjusted estimate",
                "adjusted interval",
            ],
        );
        for r in &t.rows {
            tab.row(vec![
                r.covariate.clone(),
                sig(r.k, 2),
                pct(r.r2_exposure),
                pct(r.r2_outcome),
                num(r.estimate),
                interval(r.ci),
            ]);
        }
        for s in &t.skipped {
            tab.notes.push(s.clone());
        }
        if !tab.rows.is_empty() {
            b.push(Block::Table(tab));
        }
    }
    for n in &a.details.notes {
        b.push(Block::Para(format!("Sensitivity: {n}.")));
    }
    b.push(Block::Para(LIMITS.into()));
    b
}
