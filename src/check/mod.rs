//! Checking a graph against data: the conditional independencies the graph
//! implies among observed variables ([`implications`]), each tested on the
//! data, with a multiplicity adjustment over the family ([`adjust`]).
//!
//! Tests, one file each, chosen by the kinds of the two variables
//! ([`pair`]): partial correlation with Fisher's z (Fisher 1924), the
//! likelihood ratio between nested logistic regressions, the F test between
//! nested least-squares regressions, and the likelihood ratio between nested
//! multinomial logistic regressions. Each test uses the rows complete for its
//! own columns and reports how many. Holm's step-down adjustment (Holm 1979)
//! is the default; Benjamini-Hochberg (1995) on request.
//!
//! A graph that passes is not thereby right: a test may lack power, and
//! graphs that imply the same independencies cannot be told apart this way.

pub mod adjust;
pub mod bearing;
pub mod fisher_z;
pub mod implications;
pub mod logistic_lr;
pub mod multinomial_lr;
pub mod nested_f;
pub mod pair;

pub use adjust::{Correction, adjust};
pub use bearing::{Adjustment, Bearing, judge};
pub use implications::{Implication, implications};
pub use pair::{CiTest, Outcome, PairResult, ci_test};

use crate::data::{Dataset, Frame, Role};
use crate::error::Setting;
use crate::graph::{Graph, Names, set_text};
use crate::{Error, Result};
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;

/// Settings of a check.
#[derive(Debug, Clone)]
pub struct CheckOptions {
    /// Level at which an adjusted p-value rejects.
    pub alpha: f64,
    /// The multiplicity adjustment.
    pub correction: Correction,
    /// Columns to treat as categorical (text columns always are).
    pub categorical: Vec<String>,
    /// Nodes to treat as unobserved although they are columns.
    pub latent: Vec<String>,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            alpha: 0.05,
            correction: Correction::Holm,
            categorical: Vec::new(),
            latent: Vec::new(),
        }
    }
}

/// One tested implication (a row of the JSON `implications`).
#[derive(Debug, Clone, Serialize)]
pub struct TestedImplication {
    /// The earlier variable (topological order).
    pub a: String,
    /// The later variable.
    pub b: String,
    /// The separating set, sorted by name.
    pub given: Vec<String>,
    /// The test's name.
    pub test: String,
    /// The test statistic (z, chi-square or F).
    pub statistic: f64,
    /// The unadjusted p-value.
    pub p_value: f64,
    /// The p-value after the multiplicity adjustment.
    pub p_adjusted: f64,
    /// `p_adjusted <= alpha`.
    pub rejected: bool,
    /// Complete rows the test used.
    pub n: usize,
    /// Chi-square or F numerator degrees of freedom (`null` for Fisher's z).
    pub df: Option<usize>,
    /// F denominator degrees of freedom (F test only).
    pub df_denominator: Option<usize>,
    /// The variable modelled as the response (regression tests).
    pub response: Option<String>,
    /// The partial correlation (Fisher's z only).
    pub partial_correlation: Option<f64>,
    /// A caveat about this test (also among the report's warnings).
    pub note: Option<String>,
    /// Whether the claim bears on the adjustment or front-door set chosen
    /// for the exposure and outcome (`null` when none were named; see
    /// [`bearing`]).
    pub bears_on_adjustment: Option<bool>,
    /// Why it does or does not (`null` when no exposure and outcome were named).
    pub bearing: Option<String>,
}

/// A pair of variables (untestable pairs).
#[derive(Debug, Clone, Serialize, PartialEq, Eq)]
pub struct Pair {
    /// The earlier variable.
    pub a: String,
    /// The later variable.
    pub b: String,
}

/// An implication the data could not test.
#[derive(Debug, Clone, Serialize)]
pub struct NotTested {
    /// The earlier variable.
    pub a: String,
    /// The later variable.
    pub b: String,
    /// The separating set.
    pub given: Vec<String>,
    /// Complete rows available.
    pub n: usize,
    /// Why no test was made.
    pub reason: String,
}

/// The result of a check (the JSON of `causeway check`).
#[derive(Debug, Clone, Serialize)]
pub struct CheckReport {
    /// The level of the tests.
    pub alpha: f64,
    /// The multiplicity adjustment.
    pub correction: Correction,
    /// Number of implications tested.
    pub tested: usize,
    /// Number rejected after adjustment.
    pub rejected: usize,
    /// Every tested implication, in the graph's topological order of pairs.
    pub implications: Vec<TestedImplication>,
    /// Non-adjacent pairs of observed variables that no observed set
    /// separates.
    pub untestable: Vec<Pair>,
    /// Implications the data could not test, with the reason.
    pub not_tested: Vec<NotTested>,
    /// Data rows in the file.
    pub rows: usize,
    /// For each variable used with missing values, the rows missing it;
    /// each test leaves out the rows missing any of its own variables.
    pub missing_by_column: BTreeMap<String, usize>,
    /// Observed variables of the graph.
    pub observed: Vec<String>,
    /// Unobserved nodes of the graph (latent nodes made by `<->` excluded).
    pub latent: Vec<String>,
    /// Caveats about single tests.
    pub warnings: Vec<String>,
    /// The exposure, outcome and set the claims were judged against
    /// (`null` when none were named; see [`judge`]).
    pub adjustment: Option<Adjustment>,
}

/// The graph with every node that is not a column of `data`, and each of
/// `latent`, marked unobserved.
fn observed_graph(g: &Graph, data: &Dataset, latent: &[String]) -> Result<Graph> {
    let mut g = g.clone();
    for v in 0..g.len() {
        if !data.has_column(g.name(v)) {
            g.set_latent(v, true);
        }
    }
    for name in latent {
        let v = crate::plan::node(&g, name, Setting::Latent)?;
        g.set_latent(v, true);
    }
    Ok(g)
}

/// Codes every variable the implications use once, over its own complete
/// rows, before any test: a column the tests could not use (numbers with
/// stray cells, a categorical column with too many levels) is refused here,
/// the first in graph order, whatever the order the tests would run in.
/// Returns the note on the missing-value tokens met, if any.
fn code_up_front(
    g: &Graph,
    data: &Dataset,
    imps: &[Implication],
    categorical: &[String],
) -> Result<Vec<String>> {
    let mut used = vec![false; g.len()];
    for i in imps {
        used[i.a] = true;
        used[i.b] = true;
        for &v in &i.given {
            used[v] = true;
        }
    }
    let mut tokens = BTreeMap::new();
    for v in (0..g.len()).filter(|&v| used[v]) {
        let name = g.name(v);
        let sample = data.complete_cases(&[name])?;
        tokens.extend(sample.tokens_by_column.clone());
        if sample.used > 0 {
            let role = Role::Covariate {
                categorical: categorical.iter().any(|c| c == name),
            };
            Frame::new(sample.used).push_from(data, &sample, name, role)?;
        }
    }
    Ok(crate::data::tokens_note(&tokens).into_iter().collect())
}

/// Lists the graph's implications among observed variables and tests each
/// on `data`. Nodes that are not columns of `data` are unobserved, as are
/// those in `opts.latent`.
pub fn run(g: &Graph, data: &Dataset, opts: &CheckOptions) -> Result<CheckReport> {
    if !(opts.alpha > 0.0 && opts.alpha < 1.0) {
        return Err(Error::option(
            Setting::Alpha,
            format!("must be between 0 and 1 (got {})", opts.alpha),
        ));
    }
    for name in &opts.categorical {
        crate::plan::node(g, name, Setting::Categorical)?;
        if !data.has_column(name) {
            return Err(Error::option(
                Setting::Categorical,
                format!(
                    "'{name}' is not a column of {}{}",
                    data.source(),
                    crate::error::nearest_names(name, data.names().iter().map(String::as_str))
                ),
            ));
        }
    }
    let g = observed_graph(g, data, &opts.latent)?;
    let (imps, untestable) = implications(&g);
    let mut warnings = code_up_front(&g, data, &imps, &opts.categorical)?;
    let named = |i: &Implication| {
        let mut given = g.names_of(&i.given);
        given.sort();
        (g.name(i.a).to_string(), g.name(i.b).to_string(), given)
    };
    let results: Vec<PairResult> = imps
        .par_iter()
        .map(|i| {
            let (a, b, given) = named(i);
            let given: Vec<&str> = given.iter().map(String::as_str).collect();
            ci_test(data, &a, &b, &given, &opts.categorical)
        })
        .collect::<Result<_>>()?;
    let mut tested = Vec::new();
    let mut not_tested = Vec::new();
    let mut missing = BTreeMap::new();
    for (i, r) in imps.iter().zip(results) {
        let (a, b, given) = named(i);
        missing.extend(r.missing_by_column);
        match r.outcome {
            Outcome::Tested(t) => {
                if let Some(note) = &t.note {
                    warnings.push(format!(
                        "{a} and {b} given {}: {note}",
                        set_text(&given, Names::Plain, "{}")
                    ));
                }
                tested.push(TestedImplication {
                    a,
                    b,
                    given,
                    test: t.test.to_string(),
                    statistic: t.statistic,
                    p_value: t.p_value,
                    p_adjusted: f64::NAN,
                    rejected: false,
                    n: r.n,
                    df: t.df,
                    df_denominator: t.df_denominator,
                    response: t.response,
                    partial_correlation: t.partial_correlation,
                    note: t.note,
                    bears_on_adjustment: None,
                    bearing: None,
                });
            }
            Outcome::NotTested(reason) => not_tested.push(NotTested {
                a,
                b,
                given,
                n: r.n,
                reason,
            }),
        }
    }
    let p: Vec<f64> = tested.iter().map(|t| t.p_value).collect();
    for (t, q) in tested.iter_mut().zip(adjust(&p, opts.correction)) {
        t.p_adjusted = q;
        t.rejected = q <= opts.alpha;
    }
    let names = |v: Vec<usize>| g.names_of(&v);
    Ok(CheckReport {
        alpha: opts.alpha,
        correction: opts.correction,
        tested: tested.len(),
        rejected: tested.iter().filter(|t| t.rejected).count(),
        implications: tested,
        untestable: untestable
            .iter()
            .map(|&(a, b)| Pair {
                a: g.name(a).to_string(),
                b: g.name(b).to_string(),
            })
            .collect(),
        not_tested,
        rows: data.nrows(),
        missing_by_column: missing,
        observed: names(g.observed()),
        latent: names(
            g.latent_nodes()
                .into_iter()
                .filter(|&v| g.bidirected_pair(v).is_none())
                .collect(),
        ),
        warnings,
        adjustment: None,
    })
}
