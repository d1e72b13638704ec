//! CSV output. A document that carries machine-readable tables
//! ([`Block::Data`]) is written as its first one alone: a header line and
//! one line per row, numbers in full precision, an empty cell for a
//! missing value; no comment lines, so any CSV reader loads it with its
//! default settings. Documents without such tables (commands that print
//! only reading tables) are written table after table, after `#` lines
//! with the stamp.
//!
//! The tidy tables of an analysis are made here: `estimates` (one row per
//! estimate), `diagnostics`, `balance`, `sensitivity`, `benchmarks` and
//! `check`; the report bundle writes each as its own file.

use super::doc::{Block, Cell, DataTable, Doc, Exporter};
use crate::analysis::{Analysis, CheckSummary};
use crate::identify::{Strategy, no_directed_path_warning};

/// Renders documents as CSV.
pub struct Csv;

fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) || s.starts_with(' ') || s.ends_with(' ') {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn line(cells: impl Iterator<Item = String>) -> String {
    let mut l = cells.map(|c| field(&c)).collect::<Vec<_>>().join(",");
    l.push('\n');
    l
}

/// One tidy table as CSV text.
pub fn data_table(t: &DataTable) -> String {
    let mut out = line(t.headers.iter().cloned());
    for r in &t.rows {
        out.push_str(&line(r.iter().map(Cell::plain)));
    }
    out
}

impl Exporter for Csv {
    fn render(&self, doc: &Doc) -> String {
        if let Some(t) = doc.blocks.iter().find_map(|b| match b {
            Block::Data(t) => Some(t),
            _ => None,
        }) {
            return data_table(t);
        }
        let mut out = String::new();
        if let Some(s) = &doc.stamp {
            for l in s.lines() {
                out.push_str(&format!("# {}\n", l.replace(['\n', '\r'], " ")));
            }
        }
        let mut first = true;
        for b in &doc.blocks {
            if let Block::Table(t) = b {
                if !first {
                    out.push('\n');
                }
                first = false;
                out.push_str(&line(t.headers.iter().cloned()));
                for r in &t.rows {
                    out.push_str(&line(r.iter().cloned()));
                }
            }
        }
        out
    }
}

fn text(s: impl Into<String>) -> Cell {
    Cell::Text(s.into())
}

/// The columns of `estimates`, in order.
pub const ESTIMATE_COLUMNS: [&str; 27] = [
    "graph",
    "exposure",
    "outcome",
    "strategy",
    "set",
    "method",
    "estimand",
    "scale",
    "estimate",
    "std_error",
    "ci_lower",
    "ci_upper",
    "ci_method",
    "level",
    "analytic_ci_lower",
    "analytic_ci_upper",
    "bootstrap_replicates",
    "bootstrap_failed",
    "bootstrap_ci_lower",
    "bootstrap_ci_upper",
    "mean_exposed",
    "mean_unexposed",
    "evalue_scale",
    "evalue_point",
    "evalue_ci_limit",
    "rows_used",
    "note",
];

fn strategy_cells(a: &Analysis) -> [Cell; 2] {
    let id = &a.identification;
    let (s, set) = match id.strategy {
        Strategy::Backdoor => ("backdoor", id.adjustment_set.as_deref()),
        Strategy::Frontdoor => ("frontdoor", id.frontdoor_set.as_deref()),
        Strategy::None => ("none", None),
    };
    [text(s), text(set.unwrap_or(&[]).join(";"))]
}

/// One row per estimate of `a`. The E-value columns are filled on the row
/// of the estimate the E-value describes; the `ci_*` columns hold the
/// interval the report recommends (bootstrap when it ran), the `analytic_*`
/// and `bootstrap_*` columns each kind separately.
///
/// With a categorical exposure or a contrast of two doses, two columns
/// after `scale`, `contrast_level` and `contrast_reference`, name the two
/// values compared, and each row's E-value is its own contrast's.
pub fn estimates(graph: &str, a: &Analysis) -> DataTable {
    let contrasts = a.estimates.iter().any(|e| e.estimate.contrast().is_some());
    let mut columns = ESTIMATE_COLUMNS.to_vec();
    if contrasts {
        columns.splice(8..8, ["contrast_level", "contrast_reference"]);
    }
    let weights = a
        .design
        .as_ref()
        .and_then(|d| d.weights.as_ref().zip(d.effective_sample_size));
    if weights.is_some() {
        columns.extend(["weights_variable", "effective_sample_size"]);
    }
    let cluster = a.design.as_ref().and_then(|d| d.cluster.as_ref());
    if cluster.is_some() {
        columns.extend([
            "cluster_variable",
            "clusters",
            "cluster_min_size",
            "cluster_max_size",
        ]);
    }
    let imputed = a.sample.missing.imputed.as_ref();
    if imputed.is_some() {
        columns.extend(["imputations", "fraction_missing_information", "df"]);
    }
    let subgroups = a.subgroups.is_some();
    if subgroups {
        columns.extend(["subgroup_variable", "subgroup_level"]);
    }
    if a.survival.is_some() {
        columns.extend(["horizon", "measure"]);
    }
    let mut t = DataTable::new("estimates", &columns);
    let [strategy, set] = strategy_cells(a);
    let note = if a.identification.directed_path {
        Cell::Empty
    } else {
        text(no_directed_path_warning(&a.exposure, &a.outcome))
    };
    for it in &a.estimates {
        let e = &it.estimate;
        let own = a
            .sensitivity
            .by_contrast
            .iter()
            .find(|c| Some(&c.contrast) == e.contrast() && c.method == e.method)
            .and_then(|c| c.evalue.as_ref());
        // Time to event: each risk ratio's own E-value, none elsewhere.
        let timed = a.survival.as_ref().map(|_| {
            a.sensitivity
                .by_horizon
                .iter()
                .find(|h| {
                    h.method == e.method
                        && Some(h.horizon) == e.horizon
                        && h.contrast.as_ref() == e.contrast()
                        && e.scale == crate::problem::Scale::Ratio
                })
                .map(|h| &h.evalue)
        });
        let ev = timed.unwrap_or_else(|| {
            own.or_else(|| {
                a.sensitivity
                    .evalue
                    .as_ref()
                    .filter(|_| a.details.evalue_method.as_deref() == Some(e.method.as_str()))
                    .filter(|_| a.sensitivity.by_contrast.is_empty())
            })
        });
        // A subgroup row's E-value is its own.
        let ev = if e.subgroup.is_some() {
            it.evalue.as_ref()
        } else {
            ev
        };
        let b = it.bootstrap.as_ref();
        let mut row = vec![
            text(graph),
            text(&a.exposure),
            text(&a.outcome),
            strategy.clone(),
            set.clone(),
            text(&e.method),
            text(e.estimand.to_string()),
            text(e.scale.to_string()),
            Cell::Num(e.estimate),
            Cell::Num(e.std_error),
            Cell::Num(e.ci[0]),
            Cell::Num(e.ci[1]),
            text(&e.ci_method),
            Cell::Num(e.level),
            Cell::Num(it.analytic_ci[0]),
            Cell::Num(it.analytic_ci[1]),
            b.map_or(Cell::Empty, |b| Cell::Count(b.replicates)),
            b.map_or(Cell::Empty, |b| Cell::Count(b.failed)),
            Cell::opt(b.map(|b| b.ci[0])),
            Cell::opt(b.map(|b| b.ci[1])),
            Cell::opt(e.means.as_ref().map(|m| m.exposed)),
            Cell::opt(e.means.as_ref().map(|m| m.unexposed)),
            ev.map_or(Cell::Empty, |v| text(&v.scale)),
            Cell::opt(ev.map(|v| v.point)),
            Cell::opt(ev.and_then(|v| v.ci_limit)),
            Cell::Count(a.sample.used),
            note.clone(),
        ];
        if contrasts {
            let [l, r] = e
                .contrast()
                .map_or([String::new(), String::new()], |c| c.values());
            row.splice(8..8, [text(l), text(r)]);
        }
        if let Some((w, ess)) = weights {
            row.extend([text(w), Cell::Num(ess)]);
        }
        if let Some(c) = cluster {
            row.extend([
                text(&c.variable),
                Cell::Count(c.count),
                Cell::Count(c.min_size),
                Cell::Count(c.max_size),
            ]);
        }
        if imputed.is_some() {
            row.extend([
                Cell::Count(a.sample.missing.imputations.unwrap_or(0)),
                Cell::opt(e.fraction_missing_information),
                Cell::opt(e.df),
            ]);
        }
        if subgroups {
            let s = e.subgroup.as_ref();
            row.extend([
                s.map_or(Cell::Empty, |s| text(&s.variable)),
                s.map_or(Cell::Empty, |s| text(&s.level)),
            ]);
        }
        if a.survival.is_some() {
            row.extend([
                Cell::opt(e.horizon),
                e.measure.map_or(Cell::Empty, |m| text(m.words())),
            ]);
        }
        t.row(row);
    }
    t
}

/// The `estimates` row of a graph under which nothing was estimated: its
/// strategy and, in `note`, why.
pub fn stopped(graph: &str, exposure: &str, outcome: &str, strategy: Strategy, reason: &str) -> DataTable {
    let mut t = DataTable::new("estimates", &ESTIMATE_COLUMNS);
    let s = match strategy {
        Strategy::Backdoor => "backdoor",
        Strategy::Frontdoor => "frontdoor",
        Strategy::None => "none",
    };
    let mut row = vec![text(graph), text(exposure), text(outcome), text(s)];
    row.resize(ESTIMATE_COLUMNS.len() - 1, Cell::Empty);
    row.push(text(reason));
    t.row(row);
    t
}

/// Propensity and weight diagnostics: one row per analysis.
pub fn diagnostics(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new(
        "diagnostics",
        &[
            "graph",
            "propensity_min",
            "propensity_max",
            "propensity_exposed_min",
            "propensity_exposed_max",
            "propensity_unexposed_min",
            "propensity_unexposed_max",
            "exposed_outside_unexposed_range",
            "unexposed_outside_exposed_range",
            "near_zero_or_one",
            "clipped",
            "weight_mean",
            "weight_min",
            "weight_max",
            "ess_exposed",
            "ess_unexposed",
            "max_weight_share_exposed",
            "max_weight_share_unexposed",
            "stabilized_weight_mean",
            "stabilized_weight_min",
            "stabilized_weight_max",
        ],
    );
    if let Some(d) = &a.diagnostics {
        let (p, w) = (&d.propensity, &d.weights);
        let s = w.stabilized.as_ref();
        t.row(vec![
            text(graph),
            Cell::Num(p.min),
            Cell::Num(p.max),
            Cell::Num(p.treated.min),
            Cell::Num(p.treated.max),
            Cell::Num(p.control.min),
            Cell::Num(p.control.max),
            Cell::Count(p.treated_outside_control_range),
            Cell::Count(p.control_outside_treated_range),
            Cell::Count(p.near_zero_or_one),
            Cell::Count(p.clipped),
            Cell::Num(w.mean),
            Cell::Num(w.min),
            Cell::Num(w.max),
            Cell::Num(w.ess_treated),
            Cell::Num(w.ess_control),
            Cell::Num(w.max_share_treated),
            Cell::Num(w.max_share_control),
            Cell::opt(s.map(|s| s.mean)),
            Cell::opt(s.map(|s| s.min)),
            Cell::opt(s.map(|s| s.max)),
        ]);
    }
    t
}

/// Missing-data patterns: one row per combination of used columns missing
/// together (columns joined by `;`), with the handling.
pub fn missing(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new("missing", &["graph", "handling", "columns", "rows"]);
    for p in &a.sample.missing.patterns {
        t.row(vec![
            text(graph),
            text(a.sample.missing.handling),
            text(p.columns.join(";")),
            Cell::Count(p.rows),
        ]);
    }
    t
}

/// Covariate balance: one row per model term.
pub fn balance(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new("balance", &["graph", "term", "smd_before", "smd_after"]);
    for r in a.diagnostics.iter().flat_map(|d| &d.balance) {
        t.row(vec![
            text(graph),
            text(&r.covariate),
            Cell::Num(r.smd_raw),
            Cell::Num(r.smd_weighted),
        ]);
    }
    t
}

/// The E-value and robustness value: one row per analysis that has either.
pub fn sensitivity(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new(
        "sensitivity",
        &[
            "graph",
            "evalue_method",
            "evalue_scale",
            "evalue_point",
            "evalue_ci_limit",
            "coefficient",
            "coefficient_std_error",
            "residual_df",
            "q",
            "alpha",
            "robustness_value",
            "robustness_value_alpha",
            "partial_r2_exposure",
        ],
    );
    let (ev, rv, c) = (
        a.sensitivity.evalue.as_ref(),
        a.sensitivity.robustness_value.as_ref(),
        a.details.coefficient.as_ref(),
    );
    if ev.is_none() && rv.is_none() {
        return t;
    }
    t.row(vec![
        text(graph),
        a.details
            .evalue_method
            .as_ref()
            .filter(|_| ev.is_some())
            .map_or(Cell::Empty, text),
        ev.map_or(Cell::Empty, |e| text(&e.scale)),
        Cell::opt(ev.map(|e| e.point)),
        Cell::opt(ev.and_then(|e| e.ci_limit)),
        Cell::opt(c.map(|c| c.estimate)),
        Cell::opt(c.map(|c| c.se)),
        Cell::opt(c.map(|c| c.df)),
        Cell::opt(rv.map(|r| r.q)),
        Cell::opt(rv.map(|r| crate::report::json::setting(r.alpha))),
        Cell::opt(rv.map(|r| r.rv)),
        Cell::opt(rv.map(|r| r.rv_alpha)),
        Cell::opt(rv.map(|r| r.partial_r2_exposure)),
    ]);
    t
}

/// Benchmark bounds: one row per covariate and multiple.
pub fn benchmarks(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new(
        "benchmarks",
        &[
            "graph",
            "covariate",
            "multiple",
            "r2_exposure",
            "r2_outcome",
            "adjusted_estimate",
            "adjusted_ci_lower",
            "adjusted_ci_upper",
        ],
    );
    for r in a.sensitivity.benchmarks.iter().flat_map(|b| &b.rows) {
        t.row(vec![
            text(graph),
            text(&r.covariate),
            Cell::Num(r.multiple),
            Cell::Num(r.r2_exposure),
            Cell::Num(r.r2_outcome),
            Cell::Num(r.estimate),
            Cell::Num(r.ci[0]),
            Cell::Num(r.ci[1]),
        ]);
    }
    t
}

/// The graph check: one row per graph tested.
pub fn check(graph: &str, c: &CheckSummary) -> DataTable {
    let mut t = DataTable::new(
        "check",
        &[
            "graph",
            "alpha",
            "correction",
            "tested",
            "rejected",
            "rejected_claims",
        ],
    );
    t.row(vec![
        text(graph),
        Cell::Num(c.alpha),
        text(c.correction.label()),
        Cell::Count(c.tested),
        Cell::Count(c.rejected),
        text(c.rejected_claims.join("; ")),
    ]);
    t
}

/// Every tidy table of one analysis, `estimates` first.
pub fn analysis_tables(graph: &str, a: &Analysis) -> Vec<DataTable> {
    let mut v = vec![
        estimates(graph, a),
        diagnostics(graph, a),
        balance(graph, a),
        missing(graph, a),
        sensitivity(graph, a),
        benchmarks(graph, a),
    ];
    if !a.heterogeneity.is_empty() {
        v.push(heterogeneity(graph, a));
    }
    if let Some(c) = &a.check {
        v.push(check(graph, c));
    }
    v
}

/// The tests that the effect is the same in every subgroup: one row per
/// method.
pub fn heterogeneity(graph: &str, a: &Analysis) -> DataTable {
    let mut t = DataTable::new(
        "heterogeneity",
        &["graph", "method", "variable", "statistic", "df", "p_value"],
    );
    for h in &a.heterogeneity {
        t.row(vec![
            text(graph),
            text(&h.method),
            text(&h.variable),
            Cell::Num(h.statistic),
            Cell::Count(h.df),
            Cell::Num(h.p_value),
        ]);
    }
    t
}

/// Tables of the same name stacked into one (in first-seen order); tables
/// left without rows are dropped, except `estimates`.
pub fn stack(tables: impl IntoIterator<Item = DataTable>) -> Vec<DataTable> {
    let mut out: Vec<DataTable> = Vec::new();
    for t in tables {
        match out.iter_mut().find(|o| o.name == t.name) {
            Some(o) => o.extend(t),
            None => out.push(t),
        }
    }
    out.retain(|t| !t.rows.is_empty() || t.name == "estimates");
    out
}
