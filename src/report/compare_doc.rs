//! Lays out a comparison of the same analysis under several graphs: what
//! differs between the graphs, then one table with a row per graph and
//! method; graphs under which the effect is not identified keep their row
//! with the reason.

use super::doc::{Align, Block, Table};
use super::estimate_doc::{evalue_cell, num, row_interval, row_label, row_shown, set_text, value};
use crate::analysis::{Analysis, CheckSummary};
use crate::graph::GraphDiff;
use crate::identify::Strategy;
use serde::Serialize;
use std::collections::HashSet;

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

/// The blocks with each text said once: a paragraph, list, warning or
/// table note that repeats an earlier one is left out (the cautions and
/// methods common to every graph of a comparison), and so is a heading left
/// with nothing under it.
pub fn said_once(blocks: Vec<Block>) -> Vec<Block> {
    let mut seen: HashSet<String> = HashSet::new();
    let mut kept: Vec<Block> = Vec::new();
    for b in blocks {
        let key = match &b {
            Block::Para(p) => Some(p.clone()),
            Block::Warning(w) => Some(format!("! {w}")),
            Block::List(items) => Some(items.join("\n")),
            _ => None,
        };
        match (b, key) {
            (_, Some(k)) if !seen.insert(k.clone()) => {}
            (Block::Table(mut t), _) => {
                t.notes.retain(|n| seen.insert(n.clone()));
                kept.push(Block::Table(t));
            }
            (b, _) => kept.push(b),
        }
    }
    let rank = |b: &Block| match b {
        Block::Heading(_) => Some(1),
        Block::Subheading(_) => Some(2),
        _ => None,
    };
    let mut out: Vec<Block> = Vec::new();
    for b in kept.into_iter().rev() {
        if let Some(r) = rank(&b) {
            let next = out.iter().rev().find(|n| !matches!(n, Block::Data(_)));
            if next.is_none_or(|n| rank(n).is_some_and(|nr| nr <= r)) {
                continue;
            }
        }
        out.push(b);
    }
    out.reverse();
    out
}

/// The comparison table: one row per graph and method. The interval is the
/// one each analysis recommends (bootstrap when it ran), named in the
/// heading.
pub fn comparison_table(runs: &[Run], level: f64) -> Table {
    let boot = runs.iter().find_map(|r| match &r.result {
        RunResult::Done(a) => a.estimates.iter().find_map(|e| e.bootstrap.as_ref()),
        RunResult::Stopped { .. } => None,
    });
    let kind = match boot {
        Some(b) if b.interval == "bca" => "bootstrap BCa".to_string(),
        Some(b) => format!("bootstrap {}", b.interval),
        None => "analytic".to_string(),
    };
    let ci_head = format!("{:.0}% interval ({kind})", 100.0 * level);
    let mut t = Table::new(
        "The same analysis under each graph",
        &[
            "graph",
            "strategy",
            "set used",
            "method",
            "scale",
            "estimate",
            &ci_head,
            "E-value (interval)",
        ],
    )
    .align(1, Align::Left)
    .align(2, Align::Left)
    .align(3, Align::Left)
    .align(4, Align::Left);
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
                        format!(
                            "{}{}",
                            match e.contrast() {
                                Some(c) => format!("{} ({})", e.method, c.words()),
                                None => e.method.clone(),
                            },
                            e.subgroup.as_ref().map_or(String::new(), |s| format!(
                                " in {}",
                                super::subgroup_doc::level_words(&s.variable, &s.level)
                            ))
                        ),
                        match e.horizon {
                            Some(h) => format!("{} at {}", row_label(a, e), value(h)),
                            None => row_label(a, e),
                        },
                        num(row_shown(a, e, e.estimate)),
                        row_interval(a, e, e.ci),
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
                let mut row = vec![r.graph.clone(), s.into()];
                row.resize(8, "-".into());
                t.row(row);
                t.notes.push(format!("{}: {reason}.", r.graph));
            }
        }
    }
    for r in runs {
        if let RunResult::Done(a) = &r.result
            && !a.identification.directed_path
        {
            let w = crate::identify::no_directed_path_warning(&a.exposure, &a.outcome);
            t.notes.push(format!("{}: {w}.", r.graph));
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
    for r in runs {
        if let RunResult::Done(a) = &r.result
            && let Some(d) = &a.design
            && let (Some(w), Some(ess)) = (&d.weights, d.effective_sample_size)
        {
            let note = format!(
                "Estimates and standard errors use the sampling weights in {w} (effective sample size {ess:.1})."
            );
            if !t.notes.contains(&note) {
                t.notes.push(note);
            }
        }
        if let RunResult::Done(a) = &r.result
            && let Some(c) = a.design.as_ref().and_then(|d| d.cluster.as_ref())
        {
            let note = format!(
                "Standard errors and intervals are cluster-robust ({} clusters by {}, {} to {} rows each).",
                c.count, c.variable, c.min_size, c.max_size
            );
            if !t.notes.contains(&note) {
                t.notes.push(note);
            }
        }
    }
    t.notes
        .push("The E-value is given for the first method of each graph.".into());
    t
}
