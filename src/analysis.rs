//! The estimation pipeline that `estimate`, `compare` and `demo` share:
//! from a [`Plan`] and a [`Dataset`] to every applicable method's estimate
//! with analytic and (on request) bootstrap intervals, the propensity and
//! balance diagnostics, and the sensitivity to unmeasured confounding.
//!
//! The result, [`Analysis`], serialises as the body of the `estimate` JSON
//! of the command-line contract (the stamp is added by the caller).

use crate::check::{self, CheckOptions, Correction};
use crate::data::{Dataset, ExposureCoding};
use crate::estimate::{
    self, ContrastSpec, Diagnostics, DoseDiagnostics, Estimand, Estimate, Estimator, ExposureKind,
    LevelDiagnostics, Problem, Scale, SensitivityInputs, Spec, Target, Targets,
};
use crate::graph::{Names, set_text};
use crate::identify::Strategy;
use crate::infer::bootstrap::{self, BootOpts, BootstrapBlock, IntervalKind};
use crate::learn::{Fits, Needs};
use crate::plan::Plan;
use crate::problem::Missing;
use crate::progress::Reporter;
use crate::sensitivity::evalue::{self, EValue};
use crate::sensitivity::robustness::{
    self, BenchmarkChoice, BenchmarkTable, Coefficient, Covariate, DEFAULT_BENCHMARKS, RobustnessValue,
};
use crate::sensitivity::{ContrastSensitivity, SensitivityBlock};
use crate::{Error, Result, Setting};
use serde::Serialize;
use std::collections::BTreeMap;
use std::sync::Mutex;

mod imputed;

/// Settings of an analysis, from the estimation flags.
#[derive(Debug, Clone)]
pub struct Options {
    /// Methods to run; `None`: every method that fits the strategy.
    pub methods: Option<Vec<String>>,
    /// Model settings (categorical columns, shape, interactions, estimand,
    /// scale, trimming, level, contrast); the exposure, outcome and sets are
    /// filled in from the plan.
    pub model: Spec,
    /// Bootstrap replicates (0: none).
    pub bootstrap: usize,
    /// Which bootstrap interval goes into `ci`.
    pub interval: IntervalKind,
    /// Seed of the bootstrap streams.
    pub seed: u64,
    /// Worker threads (0: all cores).
    pub threads: usize,
    /// Where the progress of long work (the bootstrap) is reported.
    pub progress: Reporter,
    /// Also test the graph's implications against the data (`--check`).
    pub check: Option<CheckOptions>,
    /// Benchmark covariates and multiples for the robustness value.
    pub benchmarks: BenchmarkChoice,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            methods: None,
            model: Spec::default(),
            bootstrap: 0,
            interval: IntervalKind::Percentile,
            seed: 1,
            threads: 0,
            progress: Reporter::none(),
            check: None,
            benchmarks: BenchmarkChoice::default(),
        }
    }
}

/// The `identification` block of the JSON.
#[derive(Debug, Clone, Serialize)]
pub struct Identified {
    /// backdoor, frontdoor or none.
    pub strategy: Strategy,
    /// The adjustment set used (backdoor).
    pub adjustment_set: Option<Vec<String>>,
    /// The front-door set used (frontdoor).
    pub frontdoor_set: Option<Vec<String>>,
    /// The graph has a directed path from the exposure to the outcome (when
    /// it has none, the graph implies that the effect is zero).
    pub directed_path: bool,
    /// Why this set, in words.
    #[serde(skip)]
    pub reason: String,
}

/// One item of the `estimates` list.
#[derive(Debug, Clone, Serialize)]
pub struct Item {
    /// The method's estimate; `ci` and `ci_method` are the recommended
    /// interval (the bootstrap one when it ran).
    #[serde(flatten)]
    pub estimate: Estimate,
    /// The bootstrap summary, when it ran.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bootstrap: Option<BootstrapBlock>,
    /// The analytic (sandwich) interval, kept when the bootstrap replaced it.
    #[serde(skip)]
    pub analytic_ci: [f64; 2],
    /// The E-value of a subgroup's row (the whole sample's is in the
    /// `sensitivity` block).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub evalue: Option<EValue>,
}

/// The JSON `subgroups` block: the modifier's levels and their rows.
#[derive(Debug, Clone, Serialize)]
pub struct Subgroups {
    /// The subgroup column.
    pub variable: String,
    /// Each level and its rows.
    pub levels: Vec<SubgroupRows>,
    /// Why a method's test of equal effects is missing.
    #[serde(skip)]
    pub notes: Vec<String>,
}

/// One level of the subgroup column.
#[derive(Debug, Clone, Serialize)]
pub struct SubgroupRows {
    /// Its label.
    pub level: String,
    /// Used rows at this level.
    pub rows: usize,
}

/// The JSON `design` block: how the rows were sampled.
#[derive(Debug, Clone, Serialize)]
pub struct StudyDesign {
    /// The sampling-weight column (`None`: rows are equally weighted).
    pub weights: Option<String>,
    /// Kish's effective sample size of the sampling weights,
    /// `(sum w)^2 / sum w^2` over the used rows.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub effective_sample_size: Option<f64>,
    /// The clusters rows are grouped into, when given.
    pub cluster: Option<crate::problem::Clusters>,
}

/// Sensitivity details the text and figures need beyond the JSON block.
#[derive(Debug, Clone, Default)]
pub struct SensitivityDetails {
    /// The method whose estimate the E-value describes.
    pub evalue_method: Option<String>,
    /// The linear-outcome coefficient behind the robustness value.
    pub coefficient: Option<Coefficient>,
    /// Why a part of the sensitivity analysis is missing.
    pub notes: Vec<String>,
}

/// The result of one analysis under one graph.
#[derive(Debug, Clone, Serialize)]
pub struct Analysis {
    /// Exposure column.
    pub exposure: String,
    /// Outcome column.
    pub outcome: String,
    /// ATE, ATT or ATC.
    pub estimand: Estimand,
    /// Strategy and set used.
    pub identification: Identified,
    /// Rows used and dropped.
    pub sample: crate::data::Sample,
    /// How the rows were sampled: clusters (absent when the rows are
    /// independent).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub design: Option<StudyDesign>,
    /// One item per method.
    pub estimates: Vec<Item>,
    /// Propensity, weight and balance diagnostics (binary exposure with an
    /// adjustment set).
    pub diagnostics: Option<Diagnostics>,
    /// Per-level diagnostics of a categorical exposure.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub level_diagnostics: Option<Vec<LevelDiagnostics>>,
    /// Weight diagnostics of a continuous exposure.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dose_diagnostics: Option<DoseDiagnostics>,
    /// E-value and robustness value.
    pub sensitivity: SensitivityBlock,
    /// Everything the reader should know.
    pub warnings: Vec<String>,
    /// Details for the text report and figures.
    #[serde(skip)]
    pub details: SensitivityDetails,
    /// Which value of a two-valued exposure is exposed (coded 1), and why.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exposure_coding: Option<ExposureCoding>,
    /// The outcome is binary.
    #[serde(skip)]
    pub binary_outcome: bool,
    /// Binary, categorical or continuous exposure.
    #[serde(skip)]
    pub kind: ExposureKind,
    /// How each method was carried out, in words.
    #[serde(skip)]
    pub notes: Vec<String>,
    /// The graph's implications tested on the data (with `--check`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub check: Option<CheckSummary>,
    /// Dose-response curves (continuous exposure), one per method (and,
    /// with subgroups, per method and level).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub curves: Vec<Curve>,
    /// The subgroup column's levels (with `subgroup`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub subgroups: Option<Subgroups>,
    /// Per method, the test that the effect is the same in every
    /// subgroup.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub heterogeneity: Vec<estimate::Heterogeneity>,
    /// How each method was described for a methods paragraph, in order.
    #[serde(skip)]
    pub methods_sentences: Vec<String>,
    /// Terms of the outcome model (the complete-data degrees of freedom of
    /// multiple imputation are the used rows minus these).
    #[serde(skip)]
    pub model_terms: usize,
    /// The follow-up of a time-to-event outcome.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub survival: Option<crate::survival::Survival>,
}

/// One method's dose-response curve.
#[derive(Debug, Clone, Serialize)]
pub struct Curve {
    /// The method.
    pub method: String,
    /// `dose-response` or `survival`.
    pub kind: &'static str,
    /// The exposure level (survival curves only; null here).
    pub level: Option<String>,
    /// The subgroup (null: everyone).
    pub subgroup: Option<estimate::SubgroupLevel>,
    /// The points, in dose order.
    pub points: Vec<CurvePoint>,
}

/// One point of a curve.
#[derive(Debug, Clone, Serialize)]
pub struct CurvePoint {
    /// The dose, or the time of a survival curve.
    pub x: f64,
    /// The target behind the point (what a bootstrap replicate forms).
    #[serde(skip)]
    pub target: Target,
    /// The mean outcome had everyone received it.
    pub estimate: f64,
    /// Standard error (sandwich).
    pub std_error: f64,
    /// Interval (the bootstrap one when it ran).
    pub ci: [f64; 2],
}

/// How many of the graph's testable implications the data reject.
#[derive(Debug, Clone, Serialize)]
pub struct CheckSummary {
    /// Level of the tests.
    pub alpha: f64,
    /// Multiplicity adjustment.
    pub correction: Correction,
    /// Implications tested.
    pub tested: usize,
    /// Implications rejected after adjustment.
    pub rejected: usize,
    /// The rejected claims, in words.
    pub rejected_claims: Vec<String>,
}

impl CheckSummary {
    /// One sentence for reports.
    pub fn sentence(&self) -> String {
        let mut s = format!(
            "the data reject {} of the graph's {} testable implications (alpha {}, {} adjustment)",
            self.rejected,
            self.tested,
            self.alpha,
            self.correction.label()
        );
        if !self.rejected_claims.is_empty() {
            s.push_str(&format!(": {}", self.rejected_claims.join("; ")));
        }
        s
    }
}

/// Tests the graph's implications (see [`crate::check`]) and summarises them.
pub fn check_summary(plan: &Plan, data: &Dataset, opts: &CheckOptions) -> Result<CheckSummary> {
    let r = check::run(&plan.roles.graph, data, opts)?;
    let rejected_claims = r
        .implications
        .iter()
        .filter(|i| i.rejected)
        .map(|i| {
            let given = if i.given.is_empty() {
                "nothing".to_string()
            } else {
                i.given.join(", ")
            };
            format!(
                "{} independent of {} given {given} (adjusted p {:.3})",
                i.a, i.b, i.p_adjusted
            )
        })
        .collect();
    Ok(CheckSummary {
        alpha: r.alpha,
        correction: r.correction,
        tested: r.tested,
        rejected: r.rejected,
        rejected_claims,
    })
}

/// The estimation spec for a plan.
pub fn spec(plan: &Plan, opts: &Options) -> Spec {
    let g = &plan.roles.graph;
    Spec {
        exposure: g.name(plan.roles.exposure).to_string(),
        outcome: g.name(plan.roles.outcome).to_string(),
        covariates: plan.adjustment_set.clone().unwrap_or_default(),
        mediators: plan.frontdoor_set.clone().unwrap_or_default(),
        ..opts.model.clone()
    }
}

/// The columns an analysis under `plan` reads (with `--check`, every
/// observed node of the graph).
pub fn columns(plan: &Plan, opts: &Options) -> Vec<String> {
    let g = &plan.roles.graph;
    let mut c = vec![
        g.name(plan.roles.exposure).to_string(),
        g.name(plan.roles.outcome).to_string(),
    ];
    c.extend(plan.adjustment_set.iter().flatten().cloned());
    c.extend(plan.frontdoor_set.iter().flatten().cloned());
    for k in [
        &opts.model.cluster,
        &opts.model.weights,
        &opts.model.subgroup,
        &opts.model.time,
    ]
    .into_iter()
    .flatten()
    {
        if !c.contains(k) {
            c.push(k.clone());
        }
    }
    if opts.check.is_some() {
        for v in g.observed() {
            if !c.iter().any(|n| n == g.name(v)) {
                c.push(g.name(v).to_string());
            }
        }
    }
    c
}

/// Runs every requested method under `plan` on `data`.
pub fn run(plan: &Plan, data: &Dataset, opts: &Options) -> Result<Analysis> {
    if plan.strategy == Strategy::None {
        return Err(Error::NotIdentified(plan.not_identified_reason()));
    }
    if opts.model.time.is_some() {
        if opts.model.subgroup.is_some() {
            return Err(Error::option(
                Setting::Subgroup,
                "with a time-to-event outcome: effects within subgroups are not formed yet; leave the subgroups out",
            ));
        }
        if opts.model.missing != Missing::Complete {
            return Err(Error::option(
                Setting::Missing,
                format!(
                    "{} with a time-to-event outcome: only complete cases are analysed for now (censoring \
                     weights handle incomplete follow-up); leave it at complete",
                    opts.model.missing.word()
                ),
            ));
        }
    }
    match opts.model.missing {
        Missing::Complete | Missing::Weight => {}
        Missing::Impute => return imputed::run(plan, data, opts),
    }
    for name in &opts.model.interact {
        if !plan.adjustment_set.iter().flatten().any(|c| c == name) {
            return Err(Error::option(
                Setting::Interact,
                format!(
                    "'{name}' is not in the adjustment set used ({}); products with the exposure \
                 are formed with adjustment covariates only{}",
                    plan.adjustment_set
                        .as_ref()
                        .map_or("none".to_string(), |s| set_text(s, Names::Plain, "{}")),
                    crate::error::nearest_names(
                        name,
                        plan.adjustment_set.iter().flatten().map(String::as_str)
                    )
                ),
            ));
        }
    }
    if let Some(s) = &opts.model.subgroup {
        check_subgroup(plan, s)?;
    }
    if opts.model.time.is_some() && plan.strategy == Strategy::Frontdoor {
        return Err(Error::NotIdentified(
            "a time-to-event outcome is not estimated by the front-door formula here: with censoring, the \
             formula's chain of conditional means does not carry over to survival curves, so this graph \
             leaves the effect on survival without an estimator in causeway"
                .into(),
        ));
    }
    let problem = Problem::build(data, &spec(plan, opts))?;
    let methods: Vec<&'static dyn Estimator> = match &opts.methods {
        Some(m) => {
            let chosen: Vec<&'static dyn Estimator> =
                m.iter().map(|n| estimate::by_name(n)).collect::<Result<_>>()?;
            if let Some(e) = chosen
                .iter()
                .find_map(|e| estimate::refusal(*e, &problem, plan.strategy))
            {
                return Err(e);
            }
            chosen
        }
        None => estimate::applicable(&problem, plan.strategy),
    };
    if methods.is_empty() {
        return Err(Error::input(format!(
            "no estimation method serves a {} exposure such as '{}' under the {} strategy",
            problem.kind.words(),
            problem.spec.exposure,
            plan.strategy.name()
        )));
    }
    let mut needs = estimate::needs(&methods);
    if plan.strategy == Strategy::Backdoor {
        needs = needs.union(Needs {
            outcome: false,
            exposure: true,
        });
    }
    let fits = Fits::fit(&problem, problem.sampling(), None, needs);
    let mut warnings = plan.warnings.clone();
    warnings.extend(problem.warnings.iter().cloned());
    let mut notes: Vec<String> = problem
        .exposure_coding
        .iter()
        .map(|c| c.sentence(&problem.spec.exposure))
        .collect();
    let mut estimates = Vec::new();
    let mut curves = Vec::new();
    let mut targets: Vec<Targets> = Vec::new();
    for m in &methods {
        let (rows, t) = estimate::rows(*m, &problem, &fits)?;
        let name = m.about().name;
        warnings.extend(t.warnings.iter().map(|w| format!("{name}: {w}")));
        notes.extend(t.notes.iter().map(|n| format!("{name}: {n}")));
        estimates.extend(rows.into_iter().map(Item::of));
        for c in curve(&problem, name, &t)
            .into_iter()
            .chain(survival_curves(&problem, name, &t))
        {
            let values: Vec<f64> = c
                .points
                .iter()
                .flat_map(|q| [q.x, q.estimate, q.std_error, q.ci[0], q.ci[1]])
                .collect();
            estimate::finite_result(&values, &format!("a point of the {name} {} curve", c.kind))?;
            curves.push(c);
        }
        targets.push(t);
    }
    // The same methods within each level of the subgroup column, from the
    // same fits.
    let strata: Vec<Problem> = match &problem.subgroup {
        Some(g) => (0..g.levels.len()).map(|s| problem.within(s)).collect(),
        None => Vec::new(),
    };
    let mut strata_targets: Vec<Vec<Targets>> = Vec::new();
    let mut heterogeneity = Vec::new();
    let mut subgroup_notes = Vec::new();
    for (m, overall) in methods.iter().zip(&targets) {
        let name = m.about().name;
        let mut by = Vec::new();
        for ps in &strata {
            let (rows, t) = estimate::rows(*m, ps, &fits)?;
            estimates.extend(rows.into_iter().map(Item::of));
            curves.extend(curve(ps, name, &t));
            by.push(t);
        }
        if !strata.is_empty() {
            let variance = estimate::contrast::Variance::of(&problem, overall);
            match estimate::heterogeneity(&problem, name, &by, &variance) {
                Ok(h) => heterogeneity.push(h),
                Err(e @ Error::Numerical(_)) => subgroup_notes.push(format!("no test of equal effects: {e}")),
                Err(e) => return Err(e),
            }
        }
        strata_targets.push(by);
    }
    if opts.bootstrap > 0 {
        warnings.extend(run_bootstrap(
            &problem,
            &strata,
            &methods,
            &fits,
            needs,
            &mut estimates,
            &mut curves,
            opts,
        )?);
    }
    let (mut diagnostics, mut level_diagnostics, mut dose_diagnostics) = (None, None, None);
    if plan.strategy == Strategy::Backdoor {
        match fits.exposure() {
            Ok(crate::learn::ExposureModel::Binary(ps)) => {
                let d = estimate::diagnostics(&problem, ps);
                warnings.extend(d.warnings.iter().cloned());
                diagnostics = Some(d);
            }
            Ok(crate::learn::ExposureModel::Levels(lp)) => {
                let (d, w) = estimate::level_diagnostics(&problem, lp);
                warnings.extend(w);
                level_diagnostics = Some(d);
            }
            Ok(crate::learn::ExposureModel::Dose(dd)) => {
                let (d, w) = estimate::dose_diagnostics(&problem, dd);
                warnings.extend(w);
                dose_diagnostics = Some(d);
            }
            // A separated propensity model leaves no weights to diagnose;
            // the estimates that do not need them stand, with the reason.
            Err(e @ (Error::Numerical(_) | Error::Separation(_))) => {
                warnings.push(format!("no propensity diagnostics: {e}"));
            }
            Err(e) => return Err(e),
        }
    }
    let (sensitivity, details) = sensitivity(&problem, &targets, &estimates, opts)?;
    // Each subgroup row's E-value, from its own targets.
    if !strata.is_empty() {
        let inputs = if !problem.binary_outcome() {
            estimate::sensitivity_inputs(&problem)?
        } else {
            None
        };
        for item in estimates.iter_mut() {
            let Some(s) = stratum_of(&problem, &item.estimate) else {
                continue;
            };
            let Some(k) = methods
                .iter()
                .position(|m| m.about().name == item.estimate.method)
            else {
                continue;
            };
            item.evalue = evalue_for(&strata[s], &strata_targets[k][s], item, inputs.as_ref(), opts).ok();
        }
    }
    let subgroups = problem.subgroup.as_ref().map(|g| Subgroups {
        variable: g.variable.clone(),
        levels: g
            .levels
            .iter()
            .zip(&g.sizes)
            .map(|(l, &rows)| SubgroupRows {
                level: l.clone(),
                rows,
            })
            .collect(),
        notes: subgroup_notes,
    });
    let methods_sentences = methods
        .iter()
        .map(|m| match &problem.survival {
            Some(_) => crate::survival::methods::sentence(m.about().name),
            None => m.methods_sentence(&problem.kind),
        })
        .collect();
    if let Some(s) = &problem.survival {
        notes.push(s.sentence());
    }
    let check = match &opts.check {
        Some(c) => {
            let sum = check_summary(plan, data, c)?;
            if sum.rejected > 0 {
                warnings.push(format!("graph check: {}", sum.sentence()));
            }
            Some(sum)
        }
        None => None,
    };
    Ok(Analysis {
        exposure: problem.spec.exposure.clone(),
        outcome: problem.spec.outcome.clone(),
        estimand: opts.model.estimand,
        identification: Identified {
            strategy: plan.strategy,
            adjustment_set: plan.adjustment_set.clone(),
            frontdoor_set: plan.frontdoor_set.clone(),
            directed_path: plan.identification.exposure_is_ancestor,
            reason: plan.reason.clone(),
        },
        sample: {
            let mut s = problem.sample.clone();
            s.missing.observation_weights = fits.observed().ok().flatten().map(|o| o.summary(&problem));
            s
        },
        design: (problem.clusters.is_some() || problem.weights.is_some()).then(|| StudyDesign {
            weights: problem.weights.as_ref().map(|w| w.variable.clone()),
            effective_sample_size: problem.weights.as_ref().map(|w| w.effective_n),
            cluster: problem.clusters.clone(),
        }),
        estimates,
        diagnostics,
        level_diagnostics,
        dose_diagnostics,
        sensitivity,
        warnings,
        details,
        exposure_coding: problem.exposure_coding.clone(),
        binary_outcome: problem.binary_outcome(),
        kind: problem.kind.clone(),
        notes,
        check,
        curves,
        subgroups,
        heterogeneity,
        methods_sentences,
        model_terms: problem.outcome_design.ncols(),
        survival: problem.survival.clone(),
    })
}

impl Item {
    /// An estimate row before any bootstrap.
    fn of(e: Estimate) -> Item {
        Item {
            analytic_ci: e.ci,
            estimate: e,
            bootstrap: None,
            evalue: None,
        }
    }
}

/// The level code of the stratum an estimate row is within, if any.
fn stratum_of(p: &Problem, e: &Estimate) -> Option<usize> {
    let (s, g) = (e.subgroup.as_ref()?, p.subgroup.as_ref()?);
    g.levels.iter().position(|l| *l == s.level)
}

/// A subgroup column must not be affected by the exposure (a descendant
/// of it in the graph), and subgroups are formed under the backdoor
/// strategy only.
fn check_subgroup(plan: &Plan, name: &str) -> Result<()> {
    let g = &plan.roles.graph;
    if plan.strategy != Strategy::Backdoor {
        return Err(Error::option(
            Setting::Subgroup,
            format!(
                "'{name}': effects within subgroups are formed under the backdoor strategy only (this graph \
                 uses the {} strategy)",
                plan.strategy.name()
            ),
        ));
    }
    if let Some(v) = g.node(name)
        && v != plan.roles.exposure
        && g.is_ancestor(plan.roles.exposure, v)
    {
        return Err(Error::option(
            Setting::Subgroup,
            format!(
                "'{name}' is a descendant of the exposure '{}' in the graph: the exposure can change it, so \
                 it does not define subgroups of people as they were before exposure; choose a variable \
                 measured before the exposure",
                g.name(plan.roles.exposure)
            ),
        ));
    }
    Ok(())
}

/// The survival curves of a method's targets, one per exposure level,
/// with sandwich intervals.
fn survival_curves(p: &Problem, method: &str, t: &Targets) -> Vec<Curve> {
    let Some(s) = &p.survival else {
        return Vec::new();
    };
    let labels: Vec<String> = match &p.kind {
        ExposureKind::Levels(l) => l.clone(),
        _ => vec!["unexposed".into(), "exposed".into()],
    };
    let variance = estimate::contrast::Variance::of(p, t);
    let order: Vec<usize> = match &p.kind {
        ExposureKind::Levels(l) => (0..l.len()).collect(),
        _ => vec![1, 0],
    };
    order
        .into_iter()
        .map(|a| Curve {
            method: method.to_string(),
            kind: "survival",
            level: Some(labels[a].clone()),
            subgroup: None,
            points: s
                .grid
                .iter()
                .filter_map(|&x| {
                    let target = Target::Survival(a, x);
                    let k = t.position(target)?;
                    let (std_error, ci) =
                        estimate::contrast::target_interval_by(t, k, p.spec.level, &variance);
                    Some(CurvePoint {
                        x,
                        target,
                        estimate: t.values[k],
                        std_error,
                        ci,
                    })
                })
                .collect(),
        })
        .filter(|c| !c.points.is_empty())
        .collect()
}

/// The dose-response curve of a method's targets (continuous exposure,
/// means reported), with sandwich intervals.
fn curve(p: &Problem, method: &str, t: &Targets) -> Option<Curve> {
    if p.kind != ExposureKind::Dose || t.means_hidden {
        return None;
    }
    let points: Vec<CurvePoint> = p
        .curve
        .iter()
        .filter_map(|&x| {
            let k = t.position(Target::Dose(x))?;
            let variance = estimate::contrast::Variance::of(p, t);
            let (std_error, ci) = estimate::contrast::target_interval_by(t, k, p.spec.level, &variance);
            Some(CurvePoint {
                x,
                target: Target::Dose(x),
                estimate: t.values[k],
                std_error,
                ci,
            })
        })
        .collect();
    (!points.is_empty()).then(|| Curve {
        method: method.to_string(),
        kind: "dose-response",
        level: None,
        subgroup: p.subgroup_level(),
        points,
    })
}

/// Refits every method in each bootstrap replicate and puts the chosen
/// interval into `ci` of every row and curve point; returns warnings.
#[allow(clippy::too_many_arguments)]
fn run_bootstrap(
    p: &Problem,
    strata: &[Problem],
    methods: &[&'static dyn Estimator],
    full: &Fits,
    needs: Needs,
    estimates: &mut [Item],
    curves: &mut [Curve],
    opts: &Options,
) -> Result<Vec<String>> {
    let boot = BootOpts {
        replicates: opts.bootstrap,
        seed: opts.seed,
        threads: opts.threads,
        level: opts.model.level,
        progress: opts.progress.clone(),
        bca: opts.interval == IntervalKind::Bca,
    };
    // The statistics of each method: its rows' contrasts, then its curves'
    // doses, each for the whole sample (view 0) and then each subgroup
    // (view s + 1), in the order they were formed.
    let views: Vec<&Problem> = std::iter::once(p).chain(strata).collect();
    let view = |s: Option<&estimate::SubgroupLevel>| {
        s.and_then(|s| p.subgroup.as_ref()?.levels.iter().position(|l| *l == s.level))
            .map_or(0, |k| k + 1)
    };
    type Layout = (Vec<Vec<ContrastSpec>>, Vec<Vec<Target>>);
    let layout: Vec<Layout> = methods
        .iter()
        .map(|m| {
            let name = m.about().name;
            let mut rows = vec![Vec::new(); views.len()];
            for e in estimates.iter().filter(|e| e.estimate.method == name) {
                rows[view(e.estimate.subgroup.as_ref())].push(e.estimate.spec.clone());
            }
            let mut doses = vec![Vec::new(); views.len()];
            for c in curves.iter().filter(|c| c.method == name) {
                doses[view(c.subgroup.as_ref())].extend(c.points.iter().map(|q| q.target));
            }
            (rows, doses)
        })
        .collect();
    // A method that fails in a replicate gives NaN there: it is counted as
    // failed for that method only, and its reason is tallied (a count per
    // message, the same for any order the threads finish in). The methods
    // of one replicate share its model fits, made once.
    let reasons: Vec<Mutex<BTreeMap<String, usize>>> = methods.iter().map(|_| Mutex::default()).collect();
    // Whole clusters are resampled when the rows are clustered.
    let units = match &p.clusters {
        Some(c) => bootstrap::Units::Clusters {
            of: &c.of,
            count: c.count,
        },
        None => bootstrap::Units::Rows(p.n()),
    };
    let draws = bootstrap::run_units(units, &boot, |w| {
        let w = p.fit_weights(Some(w));
        let w = w.as_deref();
        let fits = Fits::fit(p, w, Some(full), needs);
        let mut out = Vec::new();
        for ((m, (rows, doses)), tally) in methods.iter().zip(&layout).zip(&reasons) {
            let mut curve_part = Vec::new();
            for ((v, rows), doses) in views.iter().zip(rows).zip(doses) {
                match m.point(v, &fits, w) {
                    Ok(points) => {
                        out.extend(estimate::replicate(&points, v, rows, &[]));
                        curve_part.extend(estimate::replicate(&points, v, &[], doses));
                    }
                    Err(e) => {
                        let mut t = tally.lock().unwrap_or_else(|poisoned| poisoned.into_inner());
                        *t.entry(e.to_string()).or_default() += 1;
                        out.extend(std::iter::repeat_n(f64::NAN, rows.len()));
                        curve_part.extend(std::iter::repeat_n(f64::NAN, doses.len()));
                    }
                }
            }
            out.extend(curve_part);
        }
        Ok(out)
    })?;
    let mut warnings = Vec::new();
    let mut j = 0;
    for (k, m) in methods.iter().enumerate() {
        let name = m.about().name;
        let tally = reasons[k].lock().unwrap_or_else(|poisoned| poisoned.into_inner());
        let mut why = failure_reasons(&tally);
        for item in estimates.iter_mut().filter(|e| e.estimate.method == name) {
            let s = draws.summary_at(j, opts.model.level)?;
            j += 1;
            let label = match item.estimate.contrast() {
                Some(c) => format!("{name} ({})", c.words()),
                None => name.to_string(),
            };
            warnings.extend(s.warnings.iter().map(|w| format!("{label} bootstrap: {w}")));
            if let Some(why) = why.take() {
                warnings.push(format!("{name} bootstrap: {why}"));
            }
            match s.block(opts.interval) {
                Ok(block) => {
                    item.estimate.ci = block.ci;
                    item.estimate.ci_method = opts.interval.ci_method().to_string();
                    item.bootstrap = Some(block);
                }
                // The chosen interval cannot be formed (e.g. the jackknife behind
                // BCa failed): the analytic interval stays, with the reason.
                Err(e) => warnings.push(format!(
                    "{label}: no {} interval ({}); the sandwich interval is kept",
                    interval_label(opts.interval),
                    e
                )),
            }
        }
        if let Some(why) = why {
            warnings.push(format!("{name} bootstrap: {why}"));
        }
        for c in curves.iter_mut().filter(|c| c.method == name) {
            for q in c.points.iter_mut() {
                let s = draws.summary_at(j, opts.model.level)?;
                j += 1;
                if let Ok(ci) = s.interval(opts.interval) {
                    q.ci = ci;
                }
            }
        }
    }
    Ok(warnings)
}

/// The E-value of the first estimate and, for a linear outcome under the
/// backdoor strategy, the robustness value with benchmark bounds; with
/// several contrasts (a categorical exposure), also the E-value and
/// robustness value of each contrast of the first method.
fn sensitivity(
    p: &Problem,
    targets: &[Targets],
    estimates: &[Item],
    opts: &Options,
) -> Result<(SensitivityBlock, SensitivityDetails)> {
    let mut details = SensitivityDetails::default();
    let Some(first) = estimates.first() else {
        return Ok((
            SensitivityBlock {
                evalue: None,
                robustness_value: None,
                benchmarks: None,
                by_contrast: Vec::new(),
                by_horizon: Vec::new(),
            },
            details,
        ));
    };
    let linear = !p.binary_outcome() && p.mediators.is_empty();
    let inputs = if linear {
        estimate::sensitivity_inputs(p)?
    } else {
        None
    };
    let levels = if linear && matches!(p.kind, ExposureKind::Levels(_)) {
        estimate::level_coefficients(p)?
    } else {
        Vec::new()
    };
    let t0 = &targets[0];
    let ev = match evalue_for(p, t0, first, inputs.as_ref(), opts) {
        Ok(e) => {
            details.evalue_method = Some(first.estimate.method.clone());
            Some(e)
        }
        Err(e) => {
            details.notes.push(format!("no E-value: {e}"));
            None
        }
    };
    let alpha = 1.0 - opts.model.level;
    let level_rv = |k: usize| -> Option<RobustnessValue> {
        let (e, se, df) = *levels.get(k)?;
        let c = Coefficient::new(e, se, df).ok()?;
        robustness::robustness_value(&c, 1.0, alpha).ok()
    };
    let (rv, benchmarks) = match &inputs {
        Some(s) => match robustness_for(s, opts, &mut details) {
            Ok((rv, table)) => (Some(rv), Some(table)),
            Err(e) => {
                details.notes.push(format!("no robustness value: {e}"));
                (None, None)
            }
        },
        None if !levels.is_empty() => (level_rv(0), None),
        None => {
            if linear {
                details.notes.push(
                    "no robustness value: no single outcome-model coefficient carries the effect".into(),
                );
            }
            (None, None)
        }
    };
    if rv.is_some()
        && let Some(c) = &p.clusters
    {
        details.notes.push(format!(
            "the robustness value and its benchmarks come from the least-squares t statistic of the \
             outcome model, which treats the rows as independent; the {} clusters by {} are not \
             accounted for there (the E-value's interval limit is cluster-robust)",
            c.count, c.variable
        ));
    }
    if rv.is_some()
        && let Some(w) = &p.weights
    {
        details.notes.push(format!(
            "the robustness value and its benchmarks come from the least-squares t statistic of the \
             outcome model fitted with the sampling weights in {} and the usual (not sandwich) \
             standard error; read them as approximate",
            w.variable
        ));
    }
    let mut by_contrast = Vec::new();
    let rows: Vec<&Item> = estimates
        .iter()
        .filter(|e| e.estimate.method == first.estimate.method && e.estimate.subgroup.is_none())
        .collect();
    if rows.len() > 1 && p.survival.is_none() {
        for (k, item) in rows.iter().enumerate() {
            let Some(contrast) = item.estimate.contrast().cloned() else {
                continue;
            };
            by_contrast.push(ContrastSensitivity {
                contrast,
                method: item.estimate.method.clone(),
                evalue: evalue_for(p, t0, item, inputs.as_ref(), opts).ok(),
                robustness_value: level_rv(k),
            });
        }
    }
    let by_horizon = estimates
        .iter()
        .filter(|e| e.estimate.method == first.estimate.method && e.estimate.scale == Scale::Ratio)
        .filter_map(|item| {
            let e = &item.estimate;
            let horizon = e.horizon?;
            match evalue::risk_ratio(e.estimate, Some((e.ci[0], e.ci[1]))) {
                Ok(ev) => Some(crate::sensitivity::HorizonSensitivity {
                    method: e.method.clone(),
                    horizon,
                    contrast: e.contrast().cloned(),
                    risk_ratio: e.estimate,
                    evalue: ev,
                }),
                Err(err) => {
                    details
                        .notes
                        .push(format!("no E-value at horizon {horizon}: {err}"));
                    None
                }
            }
        })
        .collect();
    Ok((
        SensitivityBlock {
            evalue: ev,
            robustness_value: rv,
            benchmarks,
            by_contrast,
            by_horizon,
        },
        details,
    ))
}

fn evalue_for(
    p: &Problem,
    targets: &Targets,
    item: &Item,
    inputs: Option<&SensitivityInputs>,
    opts: &Options,
) -> Result<EValue> {
    let e = &item.estimate;
    let ci = (e.ci[0], e.ci[1]);
    if p.binary_outcome() {
        if e.scale == Scale::Ratio {
            return evalue::risk_ratio(e.estimate, Some(ci));
        }
        // The risk ratio from the same targets, with its own interval.
        let variance = estimate::contrast::Variance::of(p, targets);
        let rr = estimate::contrast::form(targets, &e.spec, Scale::Ratio, p.spec.level, &variance)
            .ok_or_else(|| Error::Internal("the method forms no risk ratio".into()))??;
        return evalue::risk_ratio(rr.estimate, Some((rr.ci[0], rr.ci[1])));
    }
    let sd = match inputs {
        Some(s) => s.outcome_sd,
        None => estimate::sample_sd(&p.observed_y()),
    };
    evalue::continuous(e.estimate, e.std_error, sd, opts.model.level)
}

/// An error's message without a flag name that belongs to another command.
/// The most frequent reasons in a tally of failed fits (message -> count),
/// for a warning. A message is cut at its first `; ` (what follows is
/// advice, given in full when the full-sample fit fails) and messages that
/// differ only in their numbers count as one reason, shown by the first of
/// them in sorted order.
fn failure_reasons(tally: &BTreeMap<String, usize>) -> Option<String> {
    const SHOWN: usize = 2;
    let total: usize = tally.values().sum();
    if total == 0 {
        return None;
    }
    let mut groups: BTreeMap<String, (usize, &str)> = BTreeMap::new();
    for (msg, &k) in tally {
        let clause = msg.split("; ").next().unwrap_or(msg);
        let mut key = String::with_capacity(clause.len());
        for c in clause.chars() {
            if !c.is_ascii_digit() {
                key.push(c);
            } else if !key.ends_with('#') {
                key.push('#');
            }
        }
        let g = groups.entry(key).or_insert((0, clause));
        g.0 += k;
        g.1 = g.1.min(clause);
    }
    let mut by_count: Vec<(usize, &str)> = groups.into_values().collect();
    by_count.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(b.1)));
    let shown: Vec<String> = by_count
        .iter()
        .take(SHOWN)
        .map(|(k, m)| format!("{m} ({k} {})", if *k == 1 { "time" } else { "times" }))
        .collect();
    let rest = by_count.len().saturating_sub(SHOWN);
    let more = match rest {
        0 => String::new(),
        1 => "; and 1 other reason".to_string(),
        r => format!("; and {r} other reasons"),
    };
    Some(format!(
        "why fits failed (bootstrap replicates and jackknife samples): {}{more}",
        shown.join("; ")
    ))
}

fn interval_label(k: IntervalKind) -> &'static str {
    match k {
        IntervalKind::Bca => "BCa",
        IntervalKind::Percentile => "percentile",
        IntervalKind::Normal => "normal",
    }
}

fn robustness_for(
    s: &SensitivityInputs,
    opts: &Options,
    details: &mut SensitivityDetails,
) -> Result<(RobustnessValue, BenchmarkTable)> {
    let alpha = 1.0 - opts.model.level;
    let c = Coefficient::new(s.estimate, s.std_error, s.df)?;
    let rv = robustness::robustness_value(&c, 1.0, alpha)?;
    let measured = |t: &estimate::TermStat| Covariate {
        name: t.term.clone(),
        r2_exposure: robustness::partial_r2(t.t_exposure, s.df_exposure),
        r2_outcome: robustness::partial_r2(t.t_outcome, s.df),
    };
    let choice = &opts.benchmarks;
    let mut missing = Vec::new();
    let (chosen, selection) = match &choice.covariates {
        None => {
            let all: Vec<Covariate> = s.terms.iter().map(measured).collect();
            (robustness::strongest(&c, &all, DEFAULT_BENCHMARKS), "strongest")
        }
        Some(names) => {
            let mut chosen: Vec<Covariate> = Vec::new();
            for name in names {
                let terms: Vec<Covariate> = s
                    .terms
                    .iter()
                    .filter(|t| &t.column == name || &t.term == name)
                    .map(measured)
                    .filter(|cov| !chosen.iter().any(|d| d.name == cov.name))
                    .collect();
                if terms.is_empty() && !chosen.iter().any(|d| &d.name == name) {
                    missing.push(name.clone());
                }
                chosen.extend(terms);
            }
            (chosen, "named")
        }
    };
    let mut table = robustness::benchmark_table(&c, &chosen, &choice.multiples, alpha, selection)?;
    table
        .skipped
        .extend(missing.into_iter().map(|name| robustness::Skipped {
            reason: format!("'{name}' matches no adjustment term of this analysis"),
            covariate: name,
            multiple: None,
        }));
    details.coefficient = Some(c);
    Ok((rv, table))
}

#[cfg(test)]
mod tests {
    use super::failure_reasons;
    use std::collections::BTreeMap;

    #[test]
    fn failure_reasons_group_messages_that_differ_in_numbers() {
        let tally: BTreeMap<String, usize> = [
            ("model: 11 rows at 0 or 1; advice", 2),
            ("model: 9 rows at 0 or 1; advice", 3),
            ("exposure aliased", 4),
            ("other", 1),
        ]
        .into_iter()
        .map(|(m, k)| (m.to_string(), k))
        .collect();
        assert_eq!(
            failure_reasons(&tally).unwrap(),
            "why fits failed (bootstrap replicates and jackknife samples): \
             model: 11 rows at 0 or 1 (5 times); exposure aliased (4 times); and 1 other reason"
        );
        assert_eq!(failure_reasons(&BTreeMap::new()), None);
    }
}
