//! The report bundle for a paper: `report.md` (with figures), `results.json`,
//! `table.tex` (a booktabs table in a document that compiles as is) and
//! `figures/*.svg`. This module only assembles the files; the command writes
//! them.

use super::doc::{Block, Doc, Exporter};
use super::estimate_doc::{self, figure_paths};
use super::graph_figure::{self, Marks};
use super::sensitivity_figure::{self, benchmark_yardsticks};
use super::{balance_figure, latex::Latex, markdown::Markdown};
use crate::Result;
use crate::analysis::Analysis;
use crate::plan::Plan;

/// One file of a bundle: a path relative to the bundle folder, and bytes.
#[derive(Debug, Clone)]
pub struct File {
    /// Relative path, with `/` separators.
    pub path: String,
    /// Contents.
    pub bytes: Vec<u8>,
}

fn file(path: &str, text: String) -> File {
    File {
        path: path.to_string(),
        bytes: text.into_bytes(),
    }
}

/// The marks of the graph figure for a plan: exposure, outcome, and the set used.
pub fn marks(plan: &Plan) -> Marks {
    let g = &plan.roles.graph;
    let set = plan
        .adjustment_set
        .iter()
        .chain(plan.frontdoor_set.iter())
        .flatten();
    Marks {
        exposure: Some(plan.roles.exposure),
        outcome: Some(plan.roles.outcome),
        adjust: set.filter_map(|n| g.node(n)).collect(),
    }
}

/// The figures of one analysis, named with `prefix` (see
/// [`estimate_doc::figure_paths`]); figures that do not apply are left out.
pub fn figures(plan: &Plan, a: Option<&Analysis>, prefix: &str) -> Result<Vec<File>> {
    let [graph, balance, tipping] = figure_paths(prefix);
    let mut out = vec![file(&graph, graph_figure::svg(&plan.roles.graph, &marks(plan)))];
    let Some(a) = a else { return Ok(out) };
    if let Some(d) = &a.diagnostics
        && !d.balance.is_empty()
    {
        out.push(file(&balance, balance_figure::svg(&d.balance)));
    }
    let s = &a.sensitivity;
    let r2 = s.robustness_value.as_ref().map(|rv| {
        let rows = s.benchmarks.as_ref().map(benchmark_yardsticks);
        (rv, rows.unwrap_or_default())
    });
    if s.evalue.is_some() || r2.is_some() {
        out.push(file(&tipping, sensitivity_figure::figure(s.evalue.as_ref(), r2)?));
    }
    Ok(out)
}

/// A LaTeX document holding only `table` (and the stamp and cautions).
pub fn table_tex(doc: &Doc, table: super::Table) -> String {
    Latex.render(&Doc {
        title: doc.title.clone(),
        blocks: vec![Block::Table(table)],
        stamp: doc.stamp.clone(),
    })
}

/// The bundle of `estimate`.
pub fn estimate_bundle(plan: &Plan, a: &Analysis, doc: &Doc, json: &str) -> Result<Vec<File>> {
    let report = Doc {
        title: doc.title.clone(),
        blocks: estimate_doc::analysis_blocks(a, Some("figures/")),
        stamp: doc.stamp.clone(),
    };
    let mut files = vec![
        file("report.md", Markdown.render(&report)),
        file("results.json", json.to_string()),
        file("table.tex", table_tex(doc, estimate_doc::estimates_table(a))),
    ];
    files.extend(figures(plan, Some(a), "figures/")?);
    Ok(files)
}
