//! The subgroup section of an estimate report: each method's effect
//! within every level of the subgroup column, their E-values, the test
//! that the effects are equal, and the reminder that a modifier must be
//! measured before the exposure.

use super::doc::{Align, Block, Table};
use super::estimate_doc::{evalue_cell, method_label, num, scale_label, shown, shown_interval};
use crate::analysis::{Analysis, Item};

/// The words of a subgroup, "sex = 1".
pub fn level_words(variable: &str, level: &str) -> String {
    format!("{variable} = {level}")
}

/// The rows of `a` within subgroups, in the order formed (by method,
/// then level).
pub fn subgroup_rows(a: &Analysis) -> impl Iterator<Item = &Item> {
    a.estimates.iter().filter(|e| e.estimate.subgroup.is_some())
}

/// The reminder every report with subgroups repeats.
pub fn timing_sentence(variable: &str) -> String {
    format!(
        "Effects within levels of {variable} are meaningful only if {variable} was fixed or measured \
         before the exposure: a variable that the exposure can change does not describe who people \
         were, and splitting by it can bias the comparison. Each subgroup estimate rests on the same \
         declared graph and assumptions as the overall one, with fewer rows."
    )
}

/// The subgroup table: one row per method, contrast and level.
pub fn subgroup_table(a: &Analysis) -> Option<Table> {
    let g = a.subgroups.as_ref()?;
    let level = a.estimates.first().map_or(0.95, |e| e.estimate.level);
    let contrasts = subgroup_rows(a).any(|e| e.estimate.contrast().is_some());
    let boot = subgroup_rows(a).any(|e| e.bootstrap.is_some());
    let pct = format!("{:.0}% interval", 100.0 * level);
    let mut heads = vec!["method"];
    if contrasts {
        heads.push("contrast");
    }
    heads.extend([
        g.variable.as_str(),
        "rows",
        "scale",
        "estimate",
        "std. error",
        &pct,
        "E-value (limit)",
    ]);
    let c = usize::from(contrasts);
    let mut t = Table::new(
        &format!(
            "Effect of {} on {} within levels of {}",
            a.exposure, a.outcome, g.variable
        ),
        &heads,
    )
    .align(1, Align::Left)
    .align(1 + c, Align::Left)
    .align(3 + c, Align::Left);
    for it in subgroup_rows(a) {
        let e = &it.estimate;
        let s = e.subgroup.as_ref()?;
        let rows = g.levels.iter().find(|l| l.level == s.level).map_or(0, |l| l.rows);
        let mut row = vec![method_label(&e.method).to_string()];
        if contrasts {
            row.push(e.contrast().map_or("-".into(), |c| c.words()));
        }
        row.extend([
            s.level.clone(),
            rows.to_string(),
            scale_label(a, e.scale).into(),
            num(shown(a, e.scale, e.estimate)),
            num(shown(a, e.scale, e.std_error)),
            shown_interval(a, e.scale, e.ci),
            evalue_cell(it.evalue.as_ref()),
        ]);
        t.row(row);
    }
    t.notes.push(format!(
        "Every level's effect comes from the models of the whole sample ({} among the propensity terms, and \
         its levels times the exposure in the outcome model), averaged over that level's rows; standard errors \
         account for every fitted model.",
        g.variable
    ));
    if boot {
        t.notes
            .push("Intervals are the bootstrap ones where the bootstrap ran.".into());
    }
    Some(t)
}

/// The heterogeneity table: one row per method.
pub fn heterogeneity_table(a: &Analysis) -> Option<Table> {
    let g = a.subgroups.as_ref()?;
    if a.heterogeneity.is_empty() {
        return None;
    }
    let mut t = Table::new(
        &format!("Does the effect differ across levels of {}?", g.variable),
        &["method", "Wald chi-square", "df", "p-value"],
    );
    for h in &a.heterogeneity {
        t.row(vec![
            method_label(&h.method).to_string(),
            num(h.statistic),
            h.df.to_string(),
            p_text(h.p_value),
        ]);
    }
    t.notes.push(
        "The test compares every level's contrasts with the first level's, with their covariance from the \
         influence functions (the levels share the fitted models, so they are not independent); ratios are \
         compared on the log scale. A large p-value is not evidence that the effects are equal: subgroup \
         comparisons usually have little power."
            .into(),
    );
    Some(t)
}

/// A p-value as printed.
fn p_text(p: f64) -> String {
    if p < 0.0001 {
        "< 0.0001".into()
    } else {
        format!("{p:.4}")
    }
}

/// The section's blocks, with the forest plot at `figure` (a bundle's
/// file path) when given.
pub fn subgroup_blocks(a: &Analysis, figure: Option<String>) -> Vec<Block> {
    let Some(g) = &a.subgroups else {
        return Vec::new();
    };
    let mut b = vec![
        Block::Heading(format!("Subgroups by {}", g.variable)),
        Block::Para(timing_sentence(&g.variable)),
    ];
    b.extend(subgroup_table(a).map(Block::Table));
    b.extend(heterogeneity_table(a).map(Block::Table));
    b.extend(g.notes.iter().map(|n| Block::Warning(n.clone())));
    if let Some(path) = figure {
        b.push(Block::Figure {
            path,
            caption: format!(
                "Each method's effect overall and within every level of {}, with its interval",
                g.variable
            ),
        });
    }
    b
}
