//! The report bundle for a paper: `report.md` (with figures), `results.json`,
//! `table.tex` (booktabs tables to `\input` in a manuscript) with
//! `table-standalone.tex` (a document that compiles them alone), one tidy
//! CSV file per kind of table (`estimates.csv`, `diagnostics.csv`,
//! `balance.csv`, `sensitivity.csv`, `benchmarks.csv`, `check.csv`) and
//! `figures/*.svg`, named after the graph. This module only assembles the
//! files; the command writes them.

use super::doc::{Block, DataTable, Doc, Exporter, Table};
use super::estimate_doc::{self, figure_paths};
use super::graph_figure::{self, Marks};
use super::sensitivity_figure::{self, benchmark_yardsticks};
use super::{balance_figure, curve_figure, forest_figure, markdown::Markdown, survival_figure};
use super::{csv, latex};
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
    let [graph, balance, tipping, curve, forest] = figure_paths(prefix);
    let mut out = vec![file(&graph, graph_figure::svg(&plan.roles.graph, &marks(plan)))];
    let Some(a) = a else { return Ok(out) };
    if let Some(d) = &a.diagnostics
        && !d.balance.is_empty()
    {
        out.push(file(&balance, balance_figure::svg(&d.balance)));
    }
    if let Some(plot) = survival_plot(a) {
        out.push(file(&curve, survival_figure::survival_svg(&plot)));
    } else if !a.curves.is_empty() {
        out.push(file(&curve, curve_figure::curve_svg(&curve_plot(a))));
    }
    if let Some(plot) = forest_plot(a) {
        out.push(file(&forest, forest_figure::forest_svg(&plot)));
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

/// The survival figure's content from an analysis with a time-to-event
/// outcome: the first method's curves.
fn survival_plot(a: &Analysis) -> Option<survival_figure::SurvivalPlot> {
    let s = a.survival.as_ref()?;
    let first = a.curves.first()?;
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let series = a
        .curves
        .iter()
        .filter(|c| c.method == first.method)
        .map(|c| {
            let label = c.level.clone().unwrap_or_default();
            let at_risk = s
                .at_risk
                .iter()
                .find(|r| r.level == label)
                .map(|r| r.counts.clone())
                .unwrap_or_default();
            survival_figure::SurvivalSeries {
                label,
                points: c
                    .points
                    .iter()
                    .map(|q| (q.x, q.estimate, q.ci[0], q.ci[1]))
                    .collect(),
                at_risk,
            }
        })
        .collect();
    Some(survival_figure::SurvivalPlot {
        title: format!(
            "Survival (no {}) had everyone had each level of {} ({})",
            a.outcome,
            a.exposure,
            estimate_doc::method_label(&first.method)
        ),
        x_label: format!("time ({})", s.time),
        level,
        horizons: s.horizons.clone(),
        at_risk_times: s.at_risk_times.clone(),
        series,
    })
}

/// The dose-response figure's content from an analysis.
fn curve_plot(a: &Analysis) -> curve_figure::CurvePlot {
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let marks = a
        .estimates
        .iter()
        .find_map(|e| match e.estimate.contrast() {
            Some(crate::estimate::ContrastLabel::Doses { level, reference }) => Some([*reference, *level]),
            _ => None,
        })
        .map(|d| {
            d.iter()
                .map(|&x| curve_figure::MarkedDose {
                    x,
                    label: format!("dose {}", estimate_doc::value(x)),
                })
                .collect()
        })
        .unwrap_or_default();
    curve_figure::CurvePlot {
        title: format!(
            "Mean {} had everyone received each dose of {}",
            a.outcome, a.exposure
        ),
        x_label: format!("{} (dose)", a.exposure),
        y_label: format!("mean {}", a.outcome),
        level,
        series: a
            .curves
            .iter()
            .map(|c| curve_figure::CurveSeries {
                label: estimate_doc::method_label(&c.method).to_string(),
                points: c
                    .points
                    .iter()
                    .map(|q| curve_figure::CurvePoint {
                        x: q.x,
                        estimate: q.estimate,
                        lower: q.ci[0],
                        upper: q.ci[1],
                    })
                    .collect(),
            })
            .collect(),
        marks,
    }
}

/// The subgroup figure's content: a band per method and contrast with
/// the overall row and each level's row (`None` without subgroups).
fn forest_plot(a: &Analysis) -> Option<forest_figure::ForestPlot> {
    let g = a.subgroups.as_ref()?;
    let first = a.estimates.first()?;
    let scale = first.estimate.scale;
    let level = first.estimate.level;
    let mut groups: Vec<forest_figure::ForestGroup> = Vec::new();
    for it in &a.estimates {
        let e = &it.estimate;
        let title = match e.contrast() {
            Some(c) => format!("{} ({})", estimate_doc::method_label(&e.method), c.words()),
            None => estimate_doc::method_label(&e.method).to_string(),
        };
        let row = forest_figure::ForestRow {
            label: e.subgroup.as_ref().map_or("overall".into(), |s| {
                super::subgroup_doc::level_words(&s.variable, &s.level)
            }),
            estimate: estimate_doc::shown(a, e.scale, e.estimate),
            lower: estimate_doc::shown(a, e.scale, e.ci[0]),
            upper: estimate_doc::shown(a, e.scale, e.ci[1]),
            overall: e.subgroup.is_none(),
        };
        match groups.iter_mut().find(|x| x.title == title) {
            Some(x) => x.rows.push(row),
            None => {
                let note = a.heterogeneity.iter().find(|h| h.method == e.method).map(|h| {
                    format!(
                        "equal effects across levels: chi-square {} on {} df, p = {:.3}",
                        estimate_doc::num(h.statistic),
                        h.df,
                        h.p_value
                    )
                });
                groups.push(forest_figure::ForestGroup {
                    title,
                    note,
                    rows: vec![row],
                });
            }
        }
    }
    let ratio = scale != crate::estimate::Scale::Difference;
    Some(forest_figure::ForestPlot {
        title: format!(
            "Effect of {} on {} overall and within levels of {}",
            a.exposure, a.outcome, g.variable
        ),
        x_label: format!(
            "{} with {:.0}% interval{}",
            estimate_doc::scale_label(a, scale),
            100.0 * level,
            if ratio { " (log axis)" } else { "" }
        ),
        null: if ratio { 1.0 } else { 0.0 },
        log: ratio,
        groups,
    })
}

/// The tables of a document's blocks, in order.
pub fn tables_of(blocks: &[Block]) -> Vec<Table> {
    blocks
        .iter()
        .filter_map(|b| match b {
            Block::Table(t) => Some(t.clone()),
            _ => None,
        })
        .collect()
}

/// The files every bundle has: report.md, results.json, table.tex with
/// its standalone wrapper, and one CSV file per tidy table.
pub fn report_files(report: &Doc, json: &str, tables: &[Table], data: &[DataTable]) -> Vec<File> {
    let mut files = vec![
        file("report.md", Markdown.render(report)),
        file("results.json", json.to_string()),
        file("table.tex", latex::fragment(tables, report.stamp.as_ref())),
        file("table-standalone.tex", latex::standalone("table.tex")),
    ];
    files.extend(
        data.iter()
            .map(|t| file(&format!("{}.csv", t.name), csv::data_table(t))),
    );
    files
}

/// The bundle of `estimate`; `graph` is the graph's path as given, which
/// names the figures and fills the `graph` column of the CSV files.
pub fn estimate_bundle(plan: &Plan, a: &Analysis, doc: &Doc, json: &str, graph: &str) -> Result<Vec<File>> {
    let prefix = estimate_doc::figure_prefix(graph, &[]);
    let report = Doc {
        title: doc.title.clone(),
        blocks: estimate_doc::analysis_blocks(a, Some(&prefix)),
        stamp: doc.stamp.clone(),
    };
    let tables = tables_of(&report.blocks);
    let mut files = report_files(
        &report,
        json,
        &tables,
        &csv::stack(csv::analysis_tables(graph, a)),
    );
    files.extend(figures(plan, Some(a), &prefix)?);
    Ok(files)
}
