//! Lays out a comparison of the same analysis under several graphs: what
//! differs between the graphs, then one table with a row per graph and
//! method; graphs under which the effect is not identified keep their row
//! with the reason.

use super::doc::{Align, Block, Table};
use super::estimate_doc::{evalue_cell, interval, num, set_text};
use crate::analysis::{Analysis, CheckSummary};
use crate::graph::GraphDiff;
use crate::identify::Strategy;
use serde::Serialize;

/// The outcome of one graph's run.
#[derive(Debug, Clone)]
pub enum RunResult {
    /// The analysis ran.
    Done(Box<Analysis>),
    /// It did not: the strategy found (none when not identified) and why.
    Stopped {
        /// The strategy, if identification got that far.
        strategy: Strategy,
        /// The reason, in words.
        reason: String,
        /// The graph's implications tested on the data (with `--check`).
        check: Option<CheckSummary>,
    },
}

/// One graph of a comparison.
#[derive(Debug, Clone)]
pub struct Run {
    /// The graph's label (its path, or its name in the demo).
    pub graph: String,
    /// What happened.
    pub result: RunResult,
}

/// How a graph differs from the first graph of the comparison.
#[derive(Debug, Clone, Serialize)]
pub struct Difference {
    /// The graph.
    pub graph: String,
    /// The graph it is compared with (the first one).
    pub against: String,
    /// The differences.
    #[serde(flatten)]
    pub diff: GraphDiff,
}

/// The "what differs" block.
pub fn differences_blocks(diffs: &[Difference]) -> Vec<Block> {
    let mut items = Vec::new();
    for d in diffs {
        let s = d.diff.sentences();
        if s.is_empty() {
            items.push(format!("{} is the same graph as {}", d.graph, d.against));
        } else {
            items.push(format!("{} (against {}): {}", d.graph, d.against, s.join("; ")));
        }
    }
    if items.is_empty() {
        Vec::new()
    } else {
        vec![Block::List(items)]
    }
}

/// The comparison table: one row per graph and method.
pub fn comparison_table(runs: &[Run], level: f64) -> Table {
    let ci_head = format!("{:.0}% interval", 100.0 * level);
    let mut t = Table::new(
        "The same analysis under each graph",
        &[
            "graph",
            "strategy",
            "set used",
            "method",
            "estimate",
            &ci_head,
            "E-value (interval)",
        ],
    )
    .align(1, Align::Left)
    .align(2, Align::Left)
    .align(3, Align::Left);
    for r in runs {
        match &r.result {
            RunResult::Done(a) => {
                let id = &a.identification;
                let (strategy, set) = match id.strategy {
                    Strategy::Backdoor => ("backdoor", id.adjustment_set.clone().unwrap_or_default()),
                    Strategy::Frontdoor => ("front-door", id.frontdoor_set.clone().unwrap_or_default()),
                    Strategy::None => ("none", Vec::new()),
                };
                for (i, it) in a.estimates.iter().enumerate() {
                    let e = &it.estimate;
                    let ev = if i == 0 {
                        evalue_cell(a.sensitivity.evalue.as_ref())
                    } else {
                        String::new()
                    };
                    t.row(vec![
                        r.graph.clone(),
                        strategy.into(),
                        set_text(&set),
                        e.method.clone(),
                        num(e.estimate),
                        interval(e.ci),
                        ev,
                    ]);
                }
            }
            RunResult::Stopped { strategy, reason, .. } => {
                let s = if *strategy == Strategy::None {
                    "none"
                } else {
                    "stopped"
                };
                t.row(vec![
                    r.graph.clone(),
                    s.into(),
                    "-".into(),
                    "-".into(),
                    "-".into(),
                    "-".into(),
                    "-".into(),
                ]);
                t.notes.push(format!("{}: {reason}.", r.graph));
            }
        }
    }
    for r in runs {
        let check = match &r.result {
            RunResult::Done(a) => a.check.as_ref(),
            RunResult::Stopped { check, .. } => check.as_ref(),
        };
        if let Some(c) = check {
            t.notes.push(format!("{}: {}.", r.graph, c.sentence()));
        }
    }
    t.notes
        .push("The E-value is given for the first method of each graph.".into());
    t
}
