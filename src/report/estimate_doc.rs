//! Lays out an [`Analysis`] as document blocks: the question, the
//! identification, the sample, the estimates table, diagnostics with the
//! balance table, sensitivity, warnings and notes. `estimate`, `compare`
//! and `demo` share these pieces.

use super::doc::{Align, Block, Table};
use super::sensitivity_text::sig;
use crate::analysis::Analysis;
use crate::estimate::Scale;
use crate::graph::{self, Names};
use crate::identify::Strategy;
use crate::sensitivity::evalue::EValue;

/// A number for a table: 4 significant digits, at least 2 decimals below 100.
pub fn num(v: f64) -> String {
    if !v.is_finite() {
        return "-".into();
    }
    if v.abs() >= 1e15 {
        return sig(v, 4);
    }
    if v.abs() >= 100.0 {
        return format!("{v:.1}");
    }
    let s = sig(v, 4);
    if s.contains('.') || v == 0.0 {
        s
    } else {
        format!("{v:.2}")
    }
}

/// A data value as written ([`crate::data::value_text`]).
pub fn value(v: f64) -> String {
    crate::data::value_text(v)
}

/// `[lo, hi]` as "lo to hi".
pub fn interval(ci: [f64; 2]) -> String {
    format!("{} to {}", num(ci[0]), num(ci[1]))
}

/// A set in an estimate report: [`graph::set_text`] with the empty set as
/// `{} (none needed)`.
pub fn set_text(set: &[String]) -> String {
    graph::set_text(set, Names::Plain, "{} (none needed)")
}

/// The strategy and set in a few words.
pub fn strategy_text(a: &Analysis) -> String {
    let id = &a.identification;
    match id.strategy {
        Strategy::Backdoor => format!(
            "backdoor, adjusting for {}",
            set_text(id.adjustment_set.as_deref().unwrap_or(&[]))
        ),
        Strategy::Frontdoor => format!(
            "front-door through {}",
            set_text(id.frontdoor_set.as_deref().unwrap_or(&[]))
        ),
        Strategy::None => "not identified".into(),
    }
}

/// The E-value cell: "point (interval limit)".
pub fn evalue_cell(e: Option<&EValue>) -> String {
    match e {
        Some(e) => match e.ci_limit {
            Some(l) => format!("{} ({})", sig(e.point, 3), sig(l, 3)),
            None => sig(e.point, 3),
        },
        None => "-".into(),
    }
}

/// A method's label, as its estimator declares it.
pub fn method_label(m: &str) -> &str {
    crate::estimate::by_name(m).map_or(m, |e| e.about().label)
}

fn bootstrap_label(kind: &str) -> &str {
    match kind {
        "bca" => "BCa",
        other => other,
    }
}

fn bootstrap_long(kind: &str) -> &str {
    match kind {
        "bca" => "bias-corrected and accelerated (BCa)",
        "normal" => "normal-approximation",
        other => other,
    }
}

/// The scale of an estimate in words: "risk difference (percentage
/// points)", "risk ratio" or "odds ratio" for a binary outcome; "mean
/// difference" for a continuous one.
pub fn scale_label(a: &Analysis, scale: Scale) -> &'static str {
    match (a.binary_outcome, scale) {
        (true, Scale::Difference) => "risk difference (percentage points)",
        (false, Scale::Difference) => "mean difference",
        (_, Scale::Ratio) => "risk ratio",
        (_, Scale::Odds) => "odds ratio",
    }
}

/// A value on `scale` as shown in reading text: a risk difference in
/// percentage points (times 100), anything else as estimated. Data formats
/// (JSON, CSV) keep the estimate as a difference of proportions.
pub fn shown(a: &Analysis, scale: Scale, v: f64) -> f64 {
    if a.binary_outcome && scale == Scale::Difference {
        100.0 * v
    } else {
        v
    }
}

/// The scale label of an estimate row: a time-to-event row's measure and
/// scale ("restricted mean difference"), else [`scale_label`].
pub fn row_label(a: &Analysis, e: &crate::estimate::Estimate) -> String {
    match e.measure {
        Some(crate::survival::Measure::RestrictedMean) => "restricted mean difference".into(),
        _ => scale_label(a, e.scale).into(),
    }
}

/// A value of an estimate row as shown in reading text: a restricted mean
/// in the time's unit, others by [`shown`].
pub fn row_shown(a: &Analysis, e: &crate::estimate::Estimate, v: f64) -> f64 {
    match e.measure {
        Some(crate::survival::Measure::RestrictedMean) => v,
        _ => shown(a, e.scale, v),
    }
}

/// An interval of an estimate row as shown in reading text.
pub fn row_interval(a: &Analysis, e: &crate::estimate::Estimate, ci: [f64; 2]) -> String {
    interval([row_shown(a, e, ci[0]), row_shown(a, e, ci[1])])
}

/// An interval on `scale` as shown in reading text (see [`shown`]).
pub fn shown_interval(a: &Analysis, scale: Scale, ci: [f64; 2]) -> String {
    interval([shown(a, scale, ci[0]), shown(a, scale, ci[1])])
}

/// The estimates table of one analysis. The analytic interval (from the
/// sandwich standard error) always has its own column; when the bootstrap
/// ran, its interval stands beside it in a column named for its kind.
pub fn estimates_table(a: &Analysis) -> Table {
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let pct = format!("{:.0}%", 100.0 * level);
    let boot = a.estimates.iter().find_map(|e| e.bootstrap.as_ref());
    let imputed = a.sample.missing.imputed.as_ref();
    let analytic_head = match imputed {
        Some(_) => format!("{pct} interval (pooled)"),
        None => format!("{pct} interval (analytic)"),
    };
    let boot_head = boot.map(|b| format!("{pct} interval (bootstrap {})", bootstrap_label(&b.interval)));
    let contrasts = a.estimates.iter().any(|e| e.estimate.contrast().is_some());
    let horizons = a.survival.is_some();
    let mut heads = vec!["method"];
    if contrasts {
        heads.push("contrast");
    }
    if horizons {
        heads.push("time");
    }
    heads.extend([
        "estimand",
        "scale",
        "estimate",
        if imputed.is_some() {
            "std. error (pooled)"
        } else {
            "std. error (analytic)"
        },
        &analytic_head,
    ]);
    heads.extend(boot_head.as_deref());
    if imputed.is_some() {
        heads.extend(["df", "missing information"]);
    }
    let mut t = Table::new(&format!("Effect of {} on {}", a.exposure, a.outcome), &heads)
        .align(1, Align::Left)
        .align(2, Align::Left);
    if contrasts {
        t = t.align(3, Align::Left);
    }
    for it in a.estimates.iter().filter(|e| e.estimate.subgroup.is_none()) {
        let e = &it.estimate;
        let sh = |v: f64| num(row_shown(a, e, v));
        let mut row = vec![method_label(&e.method).into()];
        if contrasts {
            row.push(e.contrast().map_or("-".into(), |c| c.words()));
        }
        if horizons {
            row.push(e.horizon.map_or("-".into(), value));
        }
        row.extend([
            e.estimand.to_string(),
            row_label(a, e),
            sh(e.estimate),
            sh(e.std_error),
            row_interval(a, e, it.analytic_ci),
        ]);
        if boot.is_some() {
            row.push(match &it.bootstrap {
                Some(b) => row_interval(a, e, b.ci),
                None => "-".into(),
            });
        }
        if imputed.is_some() {
            row.push(e.df.map_or("-".into(), |d| format!("{d:.1}")));
            row.push(
                e.fraction_missing_information
                    .map_or("-".into(), |f| format!("{:.1}%", 100.0 * f)),
            );
        }
        t.row(row);
    }
    if imputed.is_some() {
        t.notes.push(format!(
            "Pooled over {} imputed datasets by Rubin's rules: each dataset's sandwich standard error \
             within, the spread of the estimates between; intervals from the t distribution with the \
             Barnard-Rubin degrees of freedom (df); missing information is the share of the estimate's \
             variance due to the missing values.",
            a.sample.missing.imputations.unwrap_or(0)
        ));
    }
    if let Some(w) = a.design.as_ref().and_then(|d| d.weights.as_ref()) {
        t.notes.push(format!(
            "Estimates and standard errors use the sampling weights in {w}."
        ));
    }
    if let Some(c) = a.design.as_ref().and_then(|d| d.cluster.as_ref()) {
        t.notes.push(format!(
            "Standard errors and intervals are cluster-robust ({} clusters by {}).",
            c.count, c.variable
        ));
    }
    t.notes.push(
        if a.estimates.iter().any(|e| e.estimate.scale != Scale::Difference) {
            "Analytic intervals use the sandwich (M-estimation) standard error, on the log scale for ratios."
                .into()
        } else {
            "Analytic intervals use the sandwich (M-estimation) standard error.".into()
        },
    );
    if let Some(s) = &a.survival {
        t.notes.push(format!(
            "Time to event: risks by each time (in the unit of {}) and the restricted mean survival time up \
             to the last, under each exposure level compared.",
            s.time
        ));
    }
    if a.binary_outcome && a.estimates.iter().any(|e| e.estimate.scale == Scale::Difference) {
        t.notes.push(
            "Risk differences are in percentage points (100 times the difference in risk); the results file \
             keeps them as differences of proportions."
                .into(),
        );
    }
    if let Some(b) = boot {
        let failed: Vec<String> = a
            .estimates
            .iter()
            .filter_map(|it| it.bootstrap.as_ref().filter(|b| b.failed > 0).map(|b| (it, b)))
            .map(|(it, b)| format!("{} {}", it.estimate.method, b.failed))
            .collect();
        let failed = if failed.is_empty() {
            String::new()
        } else {
            format!(" (failed: {})", failed.join(", "))
        };
        t.notes.push(format!(
            "Bootstrap intervals: nonparametric {} intervals from {} replicates that refit every model{failed}; \
             the results file gives the bootstrap interval as the recommended one.",
            bootstrap_long(&b.interval),
            b.replicates
        ));
    }
    t
}

/// The question in one sentence.
pub fn question(a: &Analysis) -> String {
    let coding = match &a.exposure_coding {
        Some(c) => format!(
            " ({} = {} against {} = {})",
            a.exposure, c.exposed, a.exposure, c.unexposed
        ),
        None => match &a.kind {
            crate::estimate::ExposureKind::Levels(l) => format!(
                " (a categorical exposure: levels {}, each against {})",
                l[1..].join(", "),
                l[0]
            ),
            _ => " (a continuous exposure)".into(),
        },
    };
    let kind = if a.binary_outcome {
        "binary outcome"
    } else {
        "continuous outcome"
    };
    format!(
        "What is the average effect ({}) of {}{coding} on {} ({kind})?",
        a.estimand, a.exposure, a.outcome
    )
}

/// The sample in one sentence.
pub fn sample_text(a: &Analysis) -> String {
    let s = &a.sample;
    let mut t = format!("{} rows read, {} used", s.rows, s.used);
    if s.dropped > 0 {
        let by: Vec<String> = s
            .dropped_by_column
            .iter()
            .map(|(k, v)| format!("{k}: {v}"))
            .collect();
        t.push_str(&format!(
            ", {} dropped for missing values (missing by column: {})",
            s.dropped,
            by.join(", ")
        ));
    } else {
        t.push_str(", none dropped");
    }
    t.push('.');
    t.push_str(&missing_text(&s.missing, &a.outcome));
    if let Some(d) = &a.design
        && let (Some(w), Some(ess)) = (&d.weights, d.effective_sample_size)
    {
        t.push_str(&format!(
            " Rows are weighted by the sampling weights in {w} (effective sample size {ess:.1}); \
             every model fit, average and diagnostic uses them."
        ));
    }
    if let Some(c) = a.design.as_ref().and_then(|d| d.cluster.as_ref()) {
        t.push_str(&format!(
            " The rows form {} clusters by {} ({} to {} rows each); standard errors and intervals are \
             cluster-robust.",
            c.count, c.variable, c.min_size, c.max_size
        ));
    }
    t
}

/// How missing values were handled and their patterns, as sentences
/// (empty when no used cell is missing).
pub fn missing_text(m: &crate::data::MissingData, outcome: &str) -> String {
    if m.patterns.is_empty() {
        return String::new();
    }
    let total = m.patterns.len();
    let shown: Vec<String> = m
        .patterns
        .iter()
        .take(crate::data::PATTERNS_SHOWN)
        .map(|p| format!("{} ({})", p.columns.join(" and "), p.rows))
        .collect();
    let mut t = format!(
        " Columns missing together, with the rows that miss exactly them ({}): {}.",
        super::doc::shown_of(shown.len(), total, true),
        shown.join("; ")
    );
    if let Some(imp) = &m.imputed {
        let cols: Vec<String> = imp
            .columns
            .iter()
            .map(|c| format!("{} {} ({})", c.column, c.missing, c.model))
            .collect();
        t.push_str(&format!(
            " Missing cells were imputed by chained equations, {} imputations of {} rounds each \
             (imputed cells by column: {}); the largest change of an imputed column's mean or level \
             share between the last two rounds was {:.3}.",
            m.imputations.unwrap_or(0),
            imp.iterations,
            if cols.is_empty() {
                "none".to_string()
            } else {
                cols.join(", ")
            },
            imp.largest_change
        ));
        return t;
    }
    match m.outcome_missing {
        Some(k) if k > 0 => t.push_str(&format!(
            " The {k} rows missing only {outcome} are kept: the models of the exposure and of being observed \
             use them, and the rows with {outcome} observed are weighted by the inverse probability of being \
             observed given the exposure and the adjustment set (Hernán & Robins 2020, section 12.6); this \
             assumes that, given those, whether {outcome} is missing does not depend on its value."
        )),
        _ => t.push_str(" Rows with a missing value in a used column were left out (complete cases)."),
    }
    t
}

/// The dose-response curves as one table: a row per dose, a column per
/// method (estimate and interval).
pub fn curves_table(a: &Analysis) -> Option<Table> {
    if a.survival.is_some() {
        return survival_table(a);
    }
    let first = a.curves.first()?;
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let heads: Vec<String> = std::iter::once(format!("dose of {}", a.exposure))
        .chain(a.curves.iter().map(|c| match &c.subgroup {
            Some(s) => format!(
                "{}, {}",
                method_label(&c.method),
                super::subgroup_doc::level_words(&s.variable, &s.level)
            ),
            None => method_label(&c.method).to_string(),
        }))
        .collect();
    let heads: Vec<&str> = heads.iter().map(String::as_str).collect();
    let mut t = Table::new(
        &format!("Mean {} had everyone received each dose", a.outcome),
        &heads,
    );
    for (k, q) in first.points.iter().enumerate() {
        let mut row = vec![num(q.x)];
        for c in &a.curves {
            row.push(c.points.get(k).map_or("-".into(), |p| {
                format!("{} ({})", num(p.estimate), interval(p.ci))
            }));
        }
        t.row(row);
    }
    t.notes.push(format!(
        "Each cell: the estimated mean with its pointwise {:.0}% interval.",
        100.0 * level
    ));
    Some(t)
}

/// The survival curves at the horizons: a row per time, a column per
/// method and exposure level (estimate and interval).
fn survival_table(a: &Analysis) -> Option<Table> {
    let s = a.survival.as_ref()?;
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let heads: Vec<String> = std::iter::once(format!("time ({})", s.time))
        .chain(a.curves.iter().map(|c| {
            format!(
                "{}, {}",
                method_label(&c.method),
                c.level.as_deref().unwrap_or("-")
            )
        }))
        .collect();
    let heads: Vec<&str> = heads.iter().map(String::as_str).collect();
    let mut t = Table::new(
        &format!(
            "Survival (no {}) had everyone had each level of {}",
            a.outcome, a.exposure
        ),
        &heads,
    );
    for &h in &s.horizons {
        let mut row = vec![value(h)];
        for c in &a.curves {
            row.push(c.points.iter().find(|p| p.x == h).map_or("-".into(), |p| {
                format!("{} ({})", num(p.estimate), interval(p.ci))
            }));
        }
        t.row(row);
    }
    t.notes.push(format!(
        "Each cell: the survival probability with its pointwise {:.0}% interval; the whole curves are in \
         the results file and the figure.",
        100.0 * level
    ));
    t.notes.push(format!(
        "Numbers at risk at {}: {}.",
        s.at_risk_times
            .iter()
            .map(|&x| value(x))
            .collect::<Vec<_>>()
            .join(", "),
        s.at_risk
            .iter()
            .map(|r| format!(
                "{} {}",
                r.level,
                r.counts
                    .iter()
                    .map(|c| c.to_string())
                    .collect::<Vec<_>>()
                    .join(", ")
            ))
            .collect::<Vec<_>>()
            .join("; ")
    ));
    Some(t)
}

/// Diagnostics of a categorical exposure's levels, or of a continuous
/// exposure's weights.
fn other_diagnostics(a: &Analysis) -> Vec<Block> {
    let mut b = Vec::new();
    if let Some(levels) = &a.level_diagnostics {
        let mut t = Table::new(
            "Propensity and weights by exposure level",
            &[
                "level",
                "rows",
                "P(own level) range",
                "outside the others' range",
                "weights mean (max)",
                "effective size",
            ],
        )
        .align(0, Align::Left);
        for l in levels {
            t.row(vec![
                l.level.clone(),
                l.rows.to_string(),
                format!("{} to {}", num(l.propensity.min), num(l.propensity.max)),
                l.outside_others_range.to_string(),
                format!("{} ({})", num(l.weights.mean), num(l.weights.max)),
                sig(l.ess, 5),
            ]);
        }
        b.push(Block::Table(t));
        let reference = levels.first().map_or("", |l| l.level.as_str());
        let mut t = Table::new(
            &format!("Covariate balance against {reference} (standardized mean differences, before / after weighting)"),
            &std::iter::once("term")
                .chain(levels.iter().skip(1).map(|l| l.level.as_str()))
                .collect::<Vec<_>>(),
        )
        .align(0, Align::Left);
        if let Some(l1) = levels.get(1) {
            for (j, r) in l1.balance.iter().enumerate() {
                let mut row = vec![r.covariate.clone()];
                for l in levels.iter().skip(1) {
                    row.push(l.balance.get(j).map_or("-".into(), |x| {
                        format!("{} / {}", num(x.smd_raw), num(x.smd_weighted))
                    }));
                }
                t.row(row);
            }
            t.notes.push(
                "Absolute differences below 0.1 are commonly read as adequate balance (common practice)."
                    .into(),
            );
            b.push(Block::Table(t));
        }
    }
    if let Some(d) = &a.dose_diagnostics {
        b.push(Block::Para(format!(
            "Stabilized density-ratio weights: mean {}, min {}, max {}; effective sample size {}. The normal \
             model of the exposure has residual standard deviation {}, residual skewness {} and excess \
             kurtosis {}.",
            num(d.weights.mean),
            num(d.weights.min),
            num(d.weights.max),
            sig(d.ess, 5),
            num(d.residual_sd),
            num(d.residual_skewness),
            num(d.residual_excess_kurtosis)
        )));
    }
    b
}

/// Diagnostics: propensity ranges, weights and the balance table.
pub fn diagnostics_blocks(a: &Analysis) -> Vec<Block> {
    let observation = a.sample.missing.observation_weights.map(|w| {
        Block::Para(format!(
            "Stabilized weights of being observed (rows with {} observed): mean {}, min {}, max {}.",
            a.outcome,
            num(w.mean),
            num(w.min),
            num(w.max)
        ))
    });
    let mut b = diagnostics_without_observation(a);
    b.extend(observation);
    b
}

fn diagnostics_without_observation(a: &Analysis) -> Vec<Block> {
    let Some(d) = &a.diagnostics else {
        return other_diagnostics(a);
    };
    let p = &d.propensity;
    let w = &d.weights;
    let mut b = vec![Block::Para(format!(
        "Propensity scores range from {} to {} (exposed {} to {}; unexposed {} to {}); {} exposed units lie \
         outside the unexposed range and {} unexposed units outside the exposed range; {} are within 0.01 of 0 or 1.",
        num(p.min),
        num(p.max),
        num(p.treated.min),
        num(p.treated.max),
        num(p.control.min),
        num(p.control.max),
        p.treated_outside_control_range,
        p.control_outside_treated_range,
        p.near_zero_or_one
    ))];
    let mut text = format!(
        "Inverse probability weights: mean {}, min {}, max {}; effective sample size {} exposed, {} unexposed.",
        num(w.mean),
        num(w.min),
        num(w.max),
        sig(w.ess_treated, 5),
        sig(w.ess_control, 5)
    );
    if let Some(s) = &w.stabilized {
        text.push_str(&format!(
            " Stabilized weights: mean {}, min {}, max {}.",
            num(s.mean),
            num(s.min),
            num(s.max)
        ));
    }
    b.push(Block::Para(text));
    if !d.balance.is_empty() {
        let mut t = Table::new(
            "Covariate balance (standardized mean differences)",
            &["term", "before weighting", "after weighting"],
        );
        for r in &d.balance {
            t.row(vec![r.covariate.clone(), num(r.smd_raw), num(r.smd_weighted)]);
        }
        t.notes.push(
            "Absolute differences below 0.1 are commonly read as adequate balance (common practice).".into(),
        );
        b.push(Block::Table(t));
    }
    b
}

/// File names of the figures of one analysis in a report bundle, all
/// starting with `prefix` (e.g. `figures/main-`, see [`figure_prefix`]):
/// the graph, the balance plot, the sensitivity figure, the dose-response
/// curves and the subgroup figure.
pub fn figure_paths(prefix: &str) -> [String; 5] {
    [
        format!("{prefix}graph.svg"),
        format!("{prefix}balance.svg"),
        format!("{prefix}sensitivity.svg"),
        format!("{prefix}curve.svg"),
        format!("{prefix}subgroups.svg"),
    ]
}

/// The figure-name prefix for a graph labelled `label` (a path or a
/// name): `figures/` and the file stem, made safe for a file name, then
/// `-` (`figures/main-` for `demo-data/main.graph`). `taken` holds the
/// prefixes already in use; a repeated stem gets a number.
pub fn figure_prefix(label: &str, taken: &[String]) -> String {
    let base = std::path::Path::new(label)
        .file_stem()
        .map(|s| s.to_string_lossy().to_string())
        .unwrap_or_default();
    let mut stem: String = base
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '-'
            }
        })
        .collect();
    if stem.trim_matches('-').is_empty() {
        stem = "graph".into();
    }
    let mut prefix = format!("figures/{stem}-");
    let mut i = 2;
    while taken.contains(&prefix) {
        prefix = format!("figures/{stem}{i}-");
        i += 1;
    }
    prefix
}

/// A methods text an author can adapt, citing the methods used, in three
/// paragraphs: identification and estimators; standard errors and
/// intervals; sensitivity. (A comparison says a paragraph shared by its
/// graphs once.)
pub fn methods_paragraphs(a: &Analysis) -> Vec<String> {
    let id = &a.identification;
    let mut s = match id.strategy {
        Strategy::Backdoor => format!(
            "Under the declared causal graph, the effect of {} on {} was identified by the backdoor criterion (Pearl 2009, Def. 3.3.1), adjusting for {} ({}).",
            a.exposure,
            a.outcome,
            set_text(id.adjustment_set.as_deref().unwrap_or(&[])),
            id.reason
        ),
        Strategy::Frontdoor => format!(
            "Under the declared causal graph, no measured set satisfied the backdoor criterion; the effect of {} on {} was identified by the front-door criterion through {} (Pearl 1995).",
            a.exposure,
            a.outcome,
            set_text(id.frontdoor_set.as_deref().unwrap_or(&[]))
        ),
        Strategy::None => "The effect was not identified under the declared graph.".into(),
    };
    for sentence in &a.methods_sentences {
        s.push(' ');
        s.push_str(sentence);
    }
    let mut paras = vec![s];
    let mut s = String::new();
    if !a.estimates.is_empty() {
        s.push_str(
            "Analytic standard errors are sandwich (M-estimation) standard errors from the stacked estimating \
             equations of every fitted model, carried to the effect by the delta method (Stefanski & Boos 2002).",
        );
        if let Some(w) = a.design.as_ref().and_then(|d| d.weights.as_ref()) {
            s.push_str(&format!(
                " Every model was fitted, and every average taken, with the sampling weights in {w}; the \
                 sandwich treats the weights as known (each row's influence carries its weight, \
                 w_i times its estimating-function value over the weighted bread)."
            ));
        }
        if let Some(c) = a.design.as_ref().and_then(|d| d.cluster.as_ref()) {
            s.push_str(&format!(
                " They are cluster-robust: influence values were summed within each of the {} clusters \
                 defined by {} before squaring (Liang & Zeger 1986), with the small-sample factor G/(G-1) \
                 ((N-1)/(N-K) besides for a least-squares outcome model with K coefficients).",
                c.count, c.variable
            ));
        }
        if a.estimates.iter().any(|e| e.estimate.scale != Scale::Difference) {
            s.push_str(" Intervals for ratios are formed on the log scale.");
        }
    }
    if let Some(b) = a.estimates.iter().find_map(|e| e.bootstrap.as_ref()) {
        let cite = match b.interval.as_str() {
            "bca" => "Efron 1987",
            _ => "Efron & Tibshirani 1993",
        };
        s.push_str(&format!(
            " Alongside them, nonparametric bootstrap {} intervals from {} replicates refitting every model \
             are reported ({cite}){}.",
            bootstrap_long(&b.interval),
            b.replicates,
            if a.design.as_ref().is_some_and(|d| d.cluster.is_some()) {
                ", each replicate drawing whole clusters with replacement"
            } else {
                ""
            }
        ));
    }
    paras.push(s);
    let mut s = String::new();
    if a.sensitivity.evalue.is_some() {
        s.push_str(
            "Sensitivity to unmeasured confounding is summarized by the E-value (VanderWeele & Ding 2017)",
        );
        s.push_str(if a.sensitivity.robustness_value.is_some() {
            " and by robustness values with benchmark bounds (Cinelli & Hazlett 2020)."
        } else {
            "."
        });
    }
    s.push_str(" Analyses used causeway.");
    paras.push(s.trim_start().to_string());
    paras.retain(|p| !p.is_empty());
    paras
}

/// Every section of one analysis, in reading order; with `figures` (a file
/// name prefix) the report's figures are placed beside their sections.
pub fn analysis_blocks(a: &Analysis, figures: Option<&str>) -> Vec<Block> {
    let figs = figures.map(figure_paths);
    let fig = |i: usize, caption: &str| {
        figs.as_ref().map(|f| Block::Figure {
            path: f[i].clone(),
            caption: caption.to_string(),
        })
    };
    let mut b = vec![
        Block::Heading("Question".into()),
        Block::Para(question(a)),
        Block::Heading("Identification".into()),
    ];
    b.extend(fig(
        0,
        "The declared causal graph, with the exposure, outcome, the set used and unobserved nodes marked",
    ));
    b.extend([
        Block::Para(format!(
            "Strategy: {}. Chosen because it is {}.",
            strategy_text(a),
            a.identification.reason
        )),
        Block::Heading("Sample".into()),
        Block::Para(sample_text(a)),
        Block::Heading("Estimates".into()),
        Block::Table(estimates_table(a)),
    ]);
    if let Some(t) = curves_table(a) {
        b.push(Block::Table(t));
        b.extend(fig(
            3,
            if a.survival.is_some() {
                "The first method's survival curves under each exposure level, with pointwise intervals and the numbers at risk"
            } else {
                "The dose-response curve of each method, with its pointwise interval"
            },
        ));
    }
    b.extend(super::subgroup_doc::subgroup_blocks(
        a,
        figs.as_ref().map(|f| f[4].clone()),
    ));
    let diag = diagnostics_blocks(a);
    if !diag.is_empty() {
        b.push(Block::Heading("Diagnostics".into()));
        b.extend(diag);
        if a.diagnostics.is_some() {
            b.extend(fig(
                1,
                "Covariate balance: absolute standardized mean differences before and after weighting",
            ));
        }
    }
    b.push(Block::Heading("Sensitivity to unmeasured confounding".into()));
    b.extend(super::sensitivity_doc::sensitivity_blocks(a));
    if a.sensitivity.evalue.is_some() || a.sensitivity.robustness_value.is_some() {
        b.extend(fig(
            2,
            "How strong a hidden confounder would have to be, set against measured covariates as yardsticks",
        ));
    }
    if let Some(c) = &a.check {
        b.push(Block::Heading("Graph check".into()));
        let mut p = c.sentence();
        p[..1].make_ascii_uppercase();
        b.push(Block::Para(format!(
            "{p}. A rejected implication means the data disagree with the graph about that pair; revisit the graph \
             before trusting the estimate (`causeway check` lists every claim)."
        )));
    }
    if !a.warnings.is_empty() {
        b.push(Block::Heading("Warnings".into()));
        b.extend(a.warnings.iter().map(|w| Block::Warning(w.clone())));
    }
    if !a.notes.is_empty() {
        b.push(Block::Heading("How the estimates were made".into()));
        b.push(Block::List(a.notes.clone()));
    }
    if figures.is_some() {
        b.push(Block::Heading("Methods paragraph (adapt as needed)".into()));
        b.extend(methods_paragraphs(a).into_iter().map(Block::Para));
    }
    b
}
