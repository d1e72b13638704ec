//! An estimation problem, prepared once: the complete-case frame, the coded
//! exposure and outcome, the three designs (propensity `A ~ L`, outcome
//! `Y ~ A + L [+ A x L_j]`, and the no-product `Y ~ A + L` for sensitivity
//! analysis) with their rows kept in memory when they fit, the targets an
//! estimator forms and the contrasts asked of them. Aliased adjustment
//! terms are dropped here, once, with a warning naming them. A problem is
//! read by every later stage and changed by none; it holds no fits.

use crate::data::{
    Dataset, Design, DesignRows, ExposureChoice, ExposureCoding, Frame, Kind, Role, Sample, Setting, Shape,
    Store,
};
use crate::error::Setting as Opt;
use crate::estimate::{ContrastLabel, ContrastSpec, ExposureKind, Target};
use crate::model::{ALIAS_TOL, Chol, accumulate};
use crate::{Error, Result};
use nalgebra::DMatrix;
use serde::Serialize;

/// The population an effect averages over.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
pub enum Estimand {
    /// Average treatment effect, over everyone.
    #[default]
    #[serde(rename = "ATE")]
    Ate,
    /// Average treatment effect on the treated (exposed).
    #[serde(rename = "ATT")]
    Att,
    /// Average treatment effect on the controls (unexposed).
    #[serde(rename = "ATC")]
    Atc,
}

impl std::fmt::Display for Estimand {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Estimand::Ate => "ATE",
            Estimand::Att => "ATT",
            Estimand::Atc => "ATC",
        })
    }
}

/// The scale of a contrast between the two mean outcomes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Scale {
    /// mu1 - mu0.
    #[default]
    Difference,
    /// mu1 / mu0 (binary outcome).
    Ratio,
    /// [mu1 / (1 - mu1)] / [mu0 / (1 - mu0)] (binary outcome).
    Odds,
}

impl std::fmt::Display for Scale {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Scale::Difference => "difference",
            Scale::Ratio => "ratio",
            Scale::Odds => "odds",
        })
    }
}

/// How rows with missing values in the used columns are handled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum Missing {
    /// Complete cases: a row missing any used column is dropped.
    #[default]
    Complete,
    /// Rows missing only the outcome are kept, and the rows with an
    /// observed outcome are weighted by the inverse probability of being
    /// observed (Hernán & Robins, *What If*, 2020, section 12.6).
    Weight,
    /// Multiple imputation by chained equations, pooled by Rubin's rules
    /// (see [`crate::impute`]).
    Impute,
}

impl Missing {
    /// The word of the JSON `sample.missing.handling`.
    pub fn word(self) -> &'static str {
        match self {
            Missing::Complete => "complete",
            Missing::Weight => "weight",
            Missing::Impute => "impute",
        }
    }
}

/// What to estimate, from the analysis plan.
#[derive(Debug, Clone)]
pub struct Spec {
    /// Exposure column.
    pub exposure: String,
    /// Outcome column.
    pub outcome: String,
    /// Adjustment set (backdoor strategy).
    pub covariates: Vec<String>,
    /// Front-door mediator set (front-door strategy).
    pub mediators: Vec<String>,
    /// Columns to treat as categorical.
    pub categorical: Vec<String>,
    /// How continuous covariates enter both models.
    pub shape: Shape,
    /// Covariates whose product with the exposure enters the outcome model.
    pub interact: Vec<String>,
    /// ATE, ATT or ATC.
    pub estimand: Estimand,
    /// Scale for a binary outcome.
    pub scale: Scale,
    /// Clip propensity scores to `[trim, 1 - trim]`.
    pub trim: Option<f64>,
    /// Confidence level.
    pub level: f64,
    /// For a continuous exposure: compare setting it to `.1` with `.0`.
    /// `None`: the effect of a one-unit increase from the observed values.
    pub contrast: Option<(f64, f64)>,
    /// For a continuous exposure: the doses of the dose-response curve.
    /// `None`: [`CURVE_POINTS`] doses evenly from the 5th to the 95th
    /// percentile.
    pub at: Option<Vec<f64>>,
    /// The value of a two-valued exposure that counts as exposed (see
    /// [`Frame::push_exposure`]); `None`: the default rule.
    pub exposed: Option<String>,
    /// The reference level of a categorical exposure; `None`: the lowest.
    pub reference: Option<String>,
    /// The column whose values group rows into clusters (`None`: rows are
    /// independent).
    pub cluster: Option<String>,
    /// The column of sampling (survey or design) weights (`None`: rows are
    /// equally weighted).
    pub weights: Option<String>,
    /// How rows missing a used column are handled.
    pub missing: Missing,
    /// With [`Missing::Impute`]: the number of imputed datasets.
    pub imputations: usize,
    /// The column whose levels define subgroups (`None`: no subgroups).
    pub subgroup: Option<String>,
    /// A time-to-event outcome: the follow-up time column (`None`: the
    /// outcome is not time-to-event). The outcome is then the event
    /// indicator.
    pub time: Option<String>,
    /// The outcome value that marks an event (`None`: 1, with 0 censored).
    pub event: Option<String>,
    /// The times at which risks are compared (`None`: the default, see
    /// [`crate::survival`]).
    pub horizon: Option<Vec<f64>>,
    /// The period width of the discrete-time hazard models (`None`: the
    /// default, see [`crate::survival`]).
    pub period: Option<f64>,
    /// Weight by the inverse probability of remaining uncensored.
    pub censoring_weights: bool,
}

/// The default number of imputed datasets (van Buuren 2018, *Flexible
/// Imputation of Missing Data*, 2nd ed., sec. 2.8: 20 is a common choice
/// when the fraction of missing information is moderate).
pub const DEFAULT_IMPUTATIONS: usize = 20;

/// The sampling weights of the used rows (the JSON `design.weights` names
/// the column; the effective sample size goes with it).
#[derive(Debug, Clone)]
pub struct Weights {
    /// The column.
    pub variable: String,
    /// Each used row's weight, scaled to mean 1 over the used rows (every
    /// estimate, standard error and effective sample size is unchanged by
    /// the scale; a model's residual degrees of freedom, sum w - K, then
    /// count rows).
    pub values: Vec<f64>,
    /// Kish's effective sample size `(sum w)^2 / sum w^2` (Kish, Survey
    /// Sampling, 1965).
    pub effective_n: f64,
}

impl Weights {
    /// The weights of the rows `sample` keeps, from column `name`. Every
    /// row of the file must carry a finite positive number: a missing,
    /// zero, negative, infinite or text cell is refused naming its line
    /// (a row is never dropped for its weight alone).
    pub fn of(data: &Dataset, sample: &Sample, name: &str) -> Result<Weights> {
        let column = data.require(name)?;
        let source = data.source();
        let values = column.numeric(source, name, "sampling weights")?;
        if let Some((line, col)) = column.first_missing {
            return Err(Error::input(format!(
                "{source}:{line}:{col}: the sampling weight in column '{name}' is missing; every row needs \
                 a positive weight (rows are not dropped for a missing weight: give the row its weight, or \
                 remove it from the file if it is not part of the sample)"
            )));
        }
        if let Some(c) = &column.first_nonpositive {
            return Err(Error::input(format!(
                "{source}:{}:{}: the sampling weight in column '{name}' is '{}'; weights must be positive \
                 (a row that does not represent anyone is removed from the file, not given weight 0)",
                c.line, c.column, c.text
            )));
        }
        let mut values: Vec<f64> = sample.keep.iter().map(|&i| values[i]).collect();
        let mean = values.iter().sum::<f64>() / values.len().max(1) as f64;
        values.iter_mut().for_each(|w| *w /= mean);
        let (s, s2) = values.iter().fold((0.0, 0.0), |(s, s2), w| (s + w, s2 + w * w));
        Ok(Weights {
            variable: name.to_string(),
            effective_n: s * s / s2,
            values,
        })
    }
}

/// Below this many clusters a warning says that cluster-robust intervals
/// may be too narrow (common practice, no single source: the sandwich
/// summed by cluster rests on the number of clusters growing).
pub const FEW_CLUSTERS: usize = 30;

/// The used rows grouped into clusters by a column's values (the JSON
/// `design.cluster` block).
#[derive(Debug, Clone, Serialize)]
pub struct Clusters {
    /// The column.
    pub variable: String,
    /// Number of clusters among the used rows.
    pub count: usize,
    /// Rows in the smallest cluster.
    pub min_size: usize,
    /// Rows in the largest cluster.
    pub max_size: usize,
    /// Each used row's cluster, numbered from 0 in order of first
    /// appearance.
    #[serde(skip)]
    pub of: Vec<u32>,
}

impl Clusters {
    /// The clusters of the rows `sample` keeps, by the values of column
    /// `name` (text or numbers, each distinct value a cluster); refused
    /// when they form a single cluster.
    pub fn of(data: &Dataset, sample: &Sample, name: &str) -> Result<Clusters> {
        let column = data.require(name)?;
        let mut index: std::collections::HashMap<u64, u32> = std::collections::HashMap::new();
        let mut of = Vec::with_capacity(sample.keep.len());
        let mut sizes: Vec<usize> = Vec::new();
        for &i in &sample.keep {
            let key = match column.codes() {
                Some((codes, _)) => u64::from(codes[i]),
                // -0 and 0 are the same cluster.
                None => (column.values[i] + 0.0).to_bits(),
            };
            let next = sizes.len() as u32;
            let c = *index.entry(key).or_insert(next);
            if c == next {
                sizes.push(0);
            }
            sizes[c as usize] += 1;
            of.push(c);
        }
        if sizes.len() < 2 {
            return Err(Error::option(
                Opt::Cluster,
                format!(
                    "'{name}' takes a single value in the {} rows used: cluster-robust standard errors \
                     need at least two clusters",
                    sample.used
                ),
            ));
        }
        Ok(Clusters {
            variable: name.to_string(),
            count: sizes.len(),
            min_size: sizes.iter().copied().min().unwrap_or(0),
            max_size: sizes.iter().copied().max().unwrap_or(0),
            of,
        })
    }

    /// The warning that there are fewer than [`FEW_CLUSTERS`] clusters.
    pub fn few_warning(&self) -> Option<String> {
        (self.count < FEW_CLUSTERS).then(|| {
            format!(
                "only {} clusters in '{}': with fewer than {FEW_CLUSTERS} clusters, cluster-robust \
                 standard errors tend to be too small and intervals too narrow; read them with caution",
                self.count, self.variable
            )
        })
    }
}

/// The rows used when a missing outcome is weighted for
/// ([`Missing::Weight`]): complete in every used column but the outcome.
/// Refused when no outcome is observed; when every outcome is observed a
/// warning says the analysis is that of the complete cases.
fn observed_sample(data: &Dataset, used: &[&str], spec: &Spec, warnings: &mut Vec<String>) -> Result<Sample> {
    let mut sample = data.cases_keeping(used, Some(&spec.outcome))?;
    let y = &spec.outcome;
    let missing = sample.present.iter().filter(|&&o| !o).count();
    if sample.used > 0 && missing == sample.used {
        return Err(Error::input(format!(
            "{}: the outcome '{y}' is missing in every one of the {} rows otherwise complete: there is no \
             observed outcome to weight",
            data.source(),
            sample.used
        )));
    }
    if missing == 0 {
        warnings.push(format!(
            "weighting for a missing outcome was asked for, but no used row misses the outcome '{y}': the \
             analysis is that of the complete cases"
        ));
    } else if sample.dropped > 0 {
        warnings.push(format!(
            "weighting for a missing outcome keeps the {missing} rows missing only '{y}'; the {} rows missing \
             the exposure or a covariate are still dropped (complete cases for those columns)",
            sample.dropped
        ));
    }
    sample.missing.handling = Missing::Weight.word();
    sample.missing.outcome_missing = Some(missing);
    Ok(sample)
}

/// Most levels a subgroup column may have: each level is a stratum with
/// its own rows, contrasts and exposure-by-level products in the outcome
/// model (the cap of a categorical exposure, for the same reason).
pub const MAX_SUBGROUP_LEVELS: usize = crate::data::MAX_EXPOSURE_LEVELS;

/// The levels of an effect modifier over the used rows: the JSON rows'
/// `subgroup` and the heterogeneity test come from these strata.
#[derive(Debug, Clone)]
pub struct Subgroup {
    /// The column.
    pub variable: String,
    /// Level labels in code order.
    pub levels: Vec<String>,
    /// Each used row's level code.
    pub of: Vec<u32>,
    /// Rows per level.
    pub sizes: Vec<usize>,
    /// The frame column whose indicators enter both models.
    pub column: usize,
}

impl Subgroup {
    /// The modifier's column of `frame` (binary or categorical), checked:
    /// at least two levels, at most [`MAX_SUBGROUP_LEVELS`], and in every
    /// level at least two rows in each exposure group (binary or
    /// categorical exposure) and more rows than the outcome model has
    /// terms.
    fn of(frame: &Frame, spec: &Spec, column: usize, exposure: usize, terms: usize) -> Result<Subgroup> {
        let name = spec.subgroup.clone().unwrap_or_default();
        let levels: Vec<String> = match frame.kind(column) {
            Kind::Binary { low, high } => vec![low.clone(), high.clone()],
            Kind::Categorical { levels } => levels.clone(),
            Kind::Numeric => {
                // A single value is coded numeric.
                let v = frame.col(column);
                vec![short_number(v.first().copied().unwrap_or(0.0))]
            }
        };
        let n = frame.nrows();
        if levels.len() < 2 || frame.kind(column) == &Kind::Numeric {
            return Err(Error::option(
                Opt::Subgroup,
                format!(
                    "'{name}' takes a single value ('{}') in the {n} complete rows: subgroups need at least two levels",
                    levels[0]
                ),
            ));
        }
        if levels.len() > MAX_SUBGROUP_LEVELS {
            return Err(Error::option(
                Opt::Subgroup,
                format!(
                    "'{name}' has {} levels in the {n} complete rows; a subgroup column may have at most {MAX_SUBGROUP_LEVELS} (each level is a stratum with its own contrasts and model products): group its values into fewer levels",
                    levels.len()
                ),
            ));
        }
        let of: Vec<u32> = frame.col(column).iter().map(|&v| v as u32).collect();
        let mut sizes = vec![0usize; levels.len()];
        for &s in &of {
            sizes[s as usize] += 1;
        }
        let groups: Vec<String> = match frame.kind(exposure) {
            Kind::Binary { .. } => vec!["unexposed rows".into(), "exposed rows".into()],
            Kind::Categorical { levels } => levels
                .iter()
                .map(|l| format!("rows at exposure level '{l}'"))
                .collect(),
            Kind::Numeric => Vec::new(),
        };
        for (s, level) in levels.iter().enumerate() {
            let rows = sizes[s];
            if !groups.is_empty() {
                let mut count = vec![0usize; groups.len()];
                for (i, &a) in frame.col(exposure).iter().enumerate() {
                    if of[i] as usize == s {
                        count[a as usize] += 1;
                    }
                }
                for (k, group) in count.iter().zip(&groups).rev() {
                    if *k < 2 {
                        return Err(Error::option(
                            Opt::Subgroup,
                            format!(
                                "level '{level}' of '{name}' has {k} {group} among its {rows} complete rows: each subgroup needs at least 2 rows in every exposure group for an effect with a standard error; merge this level with another or leave the subgroups out"
                            ),
                        ));
                    }
                }
            }
            if rows <= terms {
                return Err(Error::option(
                    Opt::Subgroup,
                    format!(
                        "level '{level}' of '{name}' has only {rows} complete rows for the {terms} terms of the outcome model: too few for an effect within it; merge this level with another or leave the subgroups out"
                    ),
                ));
            }
        }
        Ok(Subgroup {
            variable: name,
            levels,
            of,
            sizes,
            column,
        })
    }
}

/// Doses on the default dose-response grid (common practice, no source).
pub const CURVE_POINTS: usize = 9;

/// Most doses a curve may be asked for: each keeps a per-row influence
/// function (and, in a bootstrap, a column of replicates), so the count
/// bounds memory at this many times the rows.
pub const MAX_CURVE_POINTS: usize = 100;

impl Default for Spec {
    fn default() -> Self {
        Spec {
            exposure: String::new(),
            outcome: String::new(),
            covariates: Vec::new(),
            mediators: Vec::new(),
            categorical: Vec::new(),
            shape: Shape::Linear,
            interact: Vec::new(),
            estimand: Estimand::Ate,
            scale: Scale::Difference,
            trim: None,
            level: 0.95,
            contrast: None,
            at: None,
            exposed: None,
            reference: None,
            cluster: None,
            weights: None,
            missing: Missing::Complete,
            imputations: DEFAULT_IMPUTATIONS,
            subgroup: None,
            time: None,
            event: None,
            horizon: None,
            period: None,
            censoring_weights: false,
        }
    }
}

/// A prepared problem; every method reads it, none changes it.
#[derive(Debug, Clone)]
pub struct Problem {
    /// The specification.
    pub spec: Spec,
    /// Rows used and dropped.
    pub sample: Sample,
    /// Analysis columns over the used rows.
    pub frame: Frame,
    /// Frame column of the outcome (0/1 when binary).
    pub outcome: usize,
    /// Frame column of the exposure (0/1 when binary).
    pub exposure: usize,
    /// Which value of a two-valued exposure is coded 1, and why.
    pub exposure_coding: Option<ExposureCoding>,
    /// Binary, categorical (levels) or continuous.
    pub kind: ExposureKind,
    /// The doses of the dose-response curve (continuous exposure only).
    pub curve: Vec<f64>,
    /// Frame columns of the adjustment set.
    pub covariates: Vec<usize>,
    /// Frame columns of the front-door mediators.
    pub mediators: Vec<usize>,
    /// Propensity design: intercept and adjustment terms.
    pub propensity: Design,
    /// Outcome design: intercept, exposure, adjustment terms, products.
    pub outcome_design: Design,
    /// Outcome design without the products (for sensitivity analysis).
    pub adjusted: Design,
    /// Warnings raised while preparing (dropped rows, aliased terms).
    pub warnings: Vec<String>,
    /// The clusters of the used rows (`None`: rows are independent).
    pub clusters: Option<Clusters>,
    /// The sampling weights of the used rows (`None`: equal weights).
    pub weights: Option<Weights>,
    /// Under [`Missing::Weight`] with some outcomes missing: 1 where the
    /// used row's outcome is observed, 0 where it is missing (its outcome
    /// value is then a placeholder, 0, that a zero weight keeps out of
    /// every sum); `None`: every used row's outcome is observed.
    pub observed: Option<Vec<f64>>,
    /// The levels of the effect modifier (`None`: no subgroups).
    pub subgroup: Option<Subgroup>,
    /// The stratum every average is restricted to (a level code of
    /// `subgroup`; `None`: every used row). Set by [`Problem::within`]
    /// only; the models are always those of the whole sample.
    pub stratum: Option<usize>,
    /// The follow-up of a time-to-event outcome (`None`: not one).
    pub survival: Option<crate::survival::Survival>,
    /// The propensity design's rows, kept when they fit in memory.
    propensity_store: Option<Store>,
    /// The outcome design's rows (exposure as observed), likewise.
    outcome_store: Option<Store>,
}

/// Aliased terms of `design` under frequency weights `w` (`None`: all
/// ones), taken in the order intercept, adjustment terms, exposure,
/// exposure products: the exposure counts as aliased when the adjustment
/// terms explain it, and a product when the terms before it do.
pub(crate) fn aliased(design: &Design, frame: &Frame, w: Option<&[f64]>) -> Vec<usize> {
    let c = accumulate(&design.rows(frame, Setting::Observed), None, |i, _| {
        (w.map_or(1.0, |w| w[i]), 0.0, 0.0, 0.0)
    });
    let terms = design.terms();
    let a = design.exposure_col();
    let rank = |j: usize| {
        let t = &terms[j];
        match (t.is_intercept(), a.is_some_and(|a| t.uses(a)), t.factors.len()) {
            (true, _, _) => 0,
            (_, false, _) => 1,
            (_, true, 1) => 2,
            _ => 3,
        }
    };
    let mut order: Vec<usize> = (0..terms.len()).collect();
    order.sort_by_key(|&j| rank(j));
    let permuted = DMatrix::from_fn(order.len(), order.len(), |i, k| c.xtx[(order[i], order[k])]);
    let mut out: Vec<usize> = Chol::new(&permuted, ALIAS_TOL)
        .aliased()
        .iter()
        .map(|&i| order[i])
        .collect();
    out.sort_unstable();
    out
}

impl Problem {
    /// Prepares `spec` on `data`: checks names and roles, takes complete
    /// cases, codes the columns and builds the designs.
    pub fn build(data: &Dataset, spec: &Spec) -> Result<Problem> {
        check_spec(spec)?;
        let mut used: Vec<&str> = vec![&spec.outcome, &spec.exposure];
        used.extend(spec.covariates.iter().map(String::as_str));
        used.extend(spec.mediators.iter().map(String::as_str));
        for c in [&spec.cluster, &spec.weights, &spec.subgroup, &spec.time]
            .into_iter()
            .flatten()
        {
            if !used.contains(&c.as_str()) {
                used.push(c);
            }
        }
        // A missing or non-positive time is refused, never dropped.
        if let Some(t) = &spec.time {
            crate::survival::follow_up(data, &data.complete_cases(&[t.as_str()])?, t)?;
        }
        let mut warnings = Vec::new();
        let sample = match spec.missing {
            Missing::Complete => data.complete_cases(&used)?,
            Missing::Weight => observed_sample(data, &used, spec, &mut warnings)?,
            Missing::Impute => {
                return Err(Error::option(
                    Opt::Missing,
                    "impute: one problem is not imputed on its own; multiple imputation runs through the \
                     whole analysis, which imputes the data and builds a problem per imputed dataset",
                ));
            }
        };
        if sample.used == 0 {
            let empty: Vec<String> = used
                .iter()
                .filter(|c| sample.dropped_by_column.get(**c) == Some(&sample.rows))
                .map(|c| format!("'{c}'"))
                .collect();
            let why = if empty.is_empty() {
                String::new()
            } else {
                format!(
                    "; missing (empty, NA, NaN or .) in every row: {}",
                    empty.join(", ")
                )
            };
            return Err(Error::input(format!(
                "{}: no row is complete for the columns used ({}){why}",
                data.source(),
                used.join(", ")
            )));
        }
        warnings.extend(sample.dropped_warning());
        let clusters = match &spec.cluster {
            Some(name) => Some(Clusters::of(data, &sample, name)?),
            None => None,
        };
        warnings.extend(clusters.as_ref().and_then(Clusters::few_warning));
        let weights = match &spec.weights {
            Some(name) => Some(Weights::of(data, &sample, name)?),
            None => None,
        };
        let mut frame = Frame::new(sample.used);
        let (outcome, event_labels) = match &spec.time {
            Some(_) => {
                let (v, event, censored) = crate::survival::event_indicator(data, &sample, spec)?;
                let kind = Kind::Binary {
                    low: censored.clone(),
                    high: event.clone(),
                };
                (frame.push(&spec.outcome, kind, v), Some((event, censored)))
            }
            None => (frame.push_from(data, &sample, &spec.outcome, Role::Number)?, None),
        };
        let observed = (!sample.present.is_empty()).then(|| {
            frame.fill_missing(outcome, 0.0);
            sample
                .present
                .iter()
                .map(|&o| f64::from(u8::from(o)))
                .collect::<Vec<f64>>()
        });
        let choice = ExposureChoice {
            exposed: spec.exposed.clone(),
            reference: spec.reference.clone(),
            categorical: spec.categorical.contains(&spec.exposure),
        };
        let (exposure, exposure_coding) = frame.push_exposure(data, &sample, &spec.exposure, &choice)?;
        let kind = match frame.kind(exposure) {
            Kind::Binary { .. } => ExposureKind::Binary,
            Kind::Categorical { levels } => ExposureKind::Levels(levels.clone()),
            Kind::Numeric => ExposureKind::Dose,
        };
        let role = |n: &String| Role::Covariate {
            categorical: spec.categorical.contains(n),
        };
        let mut covariates = Vec::new();
        for c in &spec.covariates {
            covariates.push(frame.push_from(data, &sample, c, role(c))?);
        }
        let mut mediators = Vec::new();
        for m in &spec.mediators {
            mediators.push(frame.push_from(data, &sample, m, role(m))?);
        }
        check_kinds(&frame, spec, outcome, exposure, observed.as_deref())?;
        check_groups(&frame, spec, exposure)?;
        warnings.extend(few_valued_exposure(&frame, spec, exposure));
        warnings.extend(doses_outside(&frame, spec, exposure)?);
        let mut interact: Vec<usize> = spec
            .interact
            .iter()
            .map(|n| covariates[spec.covariates.iter().position(|c| c == n).unwrap_or(0)])
            .collect();
        // The modifier enters both models (among the propensity terms, and
        // by its indicators times the exposure in the outcome model): an
        // adjustment covariate that is already binary or categorical is
        // reused, anything else is coded by its levels and added.
        let modifier = match &spec.subgroup {
            Some(name) => {
                let known = spec
                    .covariates
                    .iter()
                    .position(|c| c == name)
                    .map(|k| covariates[k]);
                let column = match known {
                    Some(c) if frame.kind(c) != &Kind::Numeric => c,
                    _ => {
                        let c =
                            frame.push_from(data, &sample, name, Role::Covariate { categorical: true })?;
                        covariates.push(c);
                        c
                    }
                };
                if !interact.contains(&column) {
                    interact.push(column);
                }
                Some(column)
            }
            None => None,
        };
        // One design, centred and checked once; the others are its subsets.
        let full = Design::build(&frame, Some(exposure), &covariates, spec.shape, &interact);
        let drop = aliased(&full, &frame, None);
        if drop.iter().any(|j| full.exposure_terms().contains(j)) {
            let few = if sample.used <= full.ncols() {
                format!(
                    " (there are only {} complete rows for {} model terms)",
                    sample.used,
                    full.ncols()
                )
            } else {
                String::new()
            };
            return Err(Error::input(format!(
                "the exposure '{}' is constant or a linear combination of the adjustment terms in the \
                 complete rows{few}: its effect cannot be separated from theirs",
                spec.exposure
            )));
        }
        let names = |pick: &dyn Fn(&crate::data::Term) -> bool| -> Vec<String> {
            drop.iter()
                .map(|&j| &full.terms()[j])
                .filter(|t| pick(t))
                .map(|t| t.name.clone())
                .collect()
        };
        let covs = names(&|t| !t.uses(exposure));
        if !covs.is_empty() {
            warnings.push(format!(
                "adjustment terms dropped as constant or collinear with others: {}",
                covs.join(", ")
            ));
        }
        let prods = names(&|t| t.uses(exposure));
        if !prods.is_empty() {
            warnings.push(format!(
                "outcome-model terms dropped as collinear with others: {}",
                prods.join(", ")
            ));
        }
        let outcome_design = full.without(&drop);
        let propensity = outcome_design.without_exposure();
        let adjusted = outcome_design.without_products();
        let terms = outcome_design.ncols();
        let subgroup = match modifier {
            Some(c) => Some(Subgroup::of(&frame, spec, c, exposure, terms)?),
            None => None,
        };
        if sample.used <= terms {
            return Err(Error::input(format!(
                "only {} complete rows for the {terms} terms of the outcome model ({}): at least {} \
                 are needed for an estimate with a standard error",
                sample.used,
                outcome_design.names().join(", "),
                terms + 1
            )));
        }
        warnings.extend(small_sample(
            &frame,
            exposure,
            outcome,
            &propensity,
            &outcome_design,
            observed.as_deref(),
        ));
        let curve = match &kind {
            ExposureKind::Dose => match &spec.at {
                Some(at) => at.clone(),
                None => default_curve(frame.col(exposure)),
            },
            _ => Vec::new(),
        };
        let survival = match (&spec.time, event_labels) {
            (Some(t), Some(labels)) => {
                let names: Vec<String> = match &kind {
                    ExposureKind::Levels(l) => l.clone(),
                    _ => vec!["unexposed".into(), "exposed".into()],
                };
                let times = crate::survival::follow_up(data, &sample, t)?;
                Some(crate::survival::Survival::new(
                    spec,
                    times,
                    frame.col(outcome),
                    labels,
                    (frame.col(exposure), names),
                )?)
            }
            _ => None,
        };
        let propensity_store = Store::of(&propensity.rows(&frame, Setting::Observed));
        let outcome_store = Store::of(&outcome_design.rows(&frame, Setting::Observed));
        Ok(Problem {
            spec: spec.clone(),
            sample,
            frame,
            outcome,
            exposure,
            exposure_coding,
            kind,
            curve,
            covariates,
            mediators,
            propensity,
            outcome_design,
            adjusted,
            warnings,
            clusters,
            weights,
            observed,
            subgroup,
            stratum: None,
            survival,
            propensity_store,
            outcome_store,
        })
    }

    /// The same problem with every average restricted to the rows at
    /// level code `s` of the subgroup column (the models, their fits and
    /// their influence stay those of the whole sample).
    pub fn within(&self, s: usize) -> Problem {
        Problem {
            stratum: Some(s),
            ..self.clone()
        }
    }

    /// The stratum averaged over, as the rows name it (`None`: everyone).
    pub fn subgroup_level(&self) -> Option<crate::estimate::SubgroupLevel> {
        let (s, g) = (self.stratum?, self.subgroup.as_ref()?);
        Some(crate::estimate::SubgroupLevel {
            variable: g.variable.clone(),
            level: g.levels[s].clone(),
        })
    }

    /// Row `i`'s membership of the stratum averaged over (1 or 0; 1
    /// without a stratum).
    pub fn member(&self, i: usize) -> f64 {
        match (self.stratum, &self.subgroup) {
            (Some(s), Some(g)) => f64::from(u8::from(g.of[i] as usize == s)),
            _ => 1.0,
        }
    }

    /// Row `i`'s weight in an estimator's averages: its sampling weight
    /// times its membership of the stratum (the models' own estimating
    /// equations take [`Problem::weight`] alone).
    pub fn average_weight(&self, i: usize) -> f64 {
        self.weight(i) * self.member(i)
    }

    /// The rows of the propensity design, read from memory when kept.
    pub fn propensity_rows(&self) -> DesignRows<'_> {
        (self.propensity.rows(&self.frame, Setting::Observed)).with_store(self.propensity_store.as_ref())
    }

    /// The rows of the outcome design with the exposure as observed, read
    /// from memory when kept.
    pub fn outcome_rows(&self) -> DesignRows<'_> {
        (self.outcome_design.rows(&self.frame, Setting::Observed)).with_store(self.outcome_store.as_ref())
    }

    /// Outcome values (0/1 when binary).
    pub fn y(&self) -> &[f64] {
        self.frame.col(self.outcome)
    }

    /// Exposure values (0/1 when binary).
    pub fn a(&self) -> &[f64] {
        self.frame.col(self.exposure)
    }

    /// Number of rows used.
    pub fn n(&self) -> usize {
        self.frame.nrows()
    }

    /// The sampling weights of the used rows, if given.
    pub fn sampling(&self) -> Option<&[f64]> {
        self.weights.as_ref().map(|w| w.values.as_slice())
    }

    /// Row `i`'s sampling weight (1 when none are given).
    pub fn weight(&self, i: usize) -> f64 {
        self.weights.as_ref().map_or(1.0, |w| w.values[i])
    }

    /// The weights of a fit of the outcome on the rows where it is
    /// observed, without observation weights (the sensitivity analysis's
    /// plain regressions): the sampling weights times the observation
    /// indicator; `None` when both are absent.
    pub fn outcome_weights(&self) -> Option<std::borrow::Cow<'_, [f64]>> {
        use std::borrow::Cow;
        match (&self.observed, self.sampling()) {
            (None, w) => w.map(Cow::Borrowed),
            (Some(r), None) => Some(Cow::Borrowed(r)),
            (Some(r), Some(w)) => Some(Cow::Owned(r.iter().zip(w).map(|(a, b)| a * b).collect())),
        }
    }

    /// The observed outcome values (all of them when none is missing).
    pub fn observed_y(&self) -> std::borrow::Cow<'_, [f64]> {
        use std::borrow::Cow;
        match &self.observed {
            None => Cow::Borrowed(self.y()),
            Some(r) => Cow::Owned(
                self.y()
                    .iter()
                    .zip(r)
                    .filter(|(_, r)| **r == 1.0)
                    .map(|(y, _)| *y)
                    .collect(),
            ),
        }
    }

    /// The weights every fit and average is made under: the sampling
    /// weights times the bootstrap frequency weights `freq` (a replicate
    /// draws rows, and each drawn row keeps its sampling weight); `None`
    /// when both are absent (all ones). The one place where the two meet.
    pub fn fit_weights<'a>(&'a self, freq: Option<&'a [f64]>) -> Option<std::borrow::Cow<'a, [f64]>> {
        use std::borrow::Cow;
        match (self.sampling(), freq) {
            (None, None) => None,
            (Some(w), None) => Some(Cow::Borrowed(w)),
            (None, Some(f)) => Some(Cow::Borrowed(f)),
            (Some(w), Some(f)) => Some(Cow::Owned(w.iter().zip(f).map(|(a, b)| a * b).collect())),
        }
    }

    /// Is the exposure binary?
    pub fn binary_exposure(&self) -> bool {
        self.kind == ExposureKind::Binary
    }

    /// The levels of a categorical exposure, reference first (empty for
    /// other kinds).
    pub fn levels(&self) -> &[String] {
        match &self.kind {
            ExposureKind::Levels(l) => l,
            _ => &[],
        }
    }

    /// Is the outcome binary (fitted by logistic regression)?
    pub fn binary_outcome(&self) -> bool {
        matches!(self.frame.kind(self.outcome), Kind::Binary { .. })
    }

    /// The targets every estimator is asked for: both levels of a binary
    /// exposure (exposed first); every level of a categorical one; for a
    /// dose, the curve's doses, then the two doses of the contrast or the
    /// one-unit shift and the observed exposure.
    pub fn targets(&self) -> Vec<Target> {
        if let Some(s) = &self.survival {
            let levels: Vec<usize> = match &self.kind {
                ExposureKind::Levels(l) => (0..l.len()).collect(),
                _ => vec![1, 0],
            };
            return levels.into_iter().flat_map(|k| s.targets(k)).collect();
        }
        match &self.kind {
            ExposureKind::Binary => vec![Target::Level(1), Target::Level(0)],
            ExposureKind::Levels(l) => (0..l.len()).map(Target::Level).collect(),
            ExposureKind::Dose => {
                let mut t: Vec<Target> = self.curve.iter().map(|&x| Target::Dose(x)).collect();
                let extra = match self.spec.contrast {
                    Some((a, b)) => [Target::Dose(b), Target::Dose(a)],
                    None => [Target::Shifted, Target::Observed],
                };
                for e in extra {
                    if !t.contains(&e) {
                        t.push(e);
                    }
                }
                t
            }
        }
    }

    /// The contrasts reported: exposed vs unexposed; every level vs the
    /// reference; the second dose of the contrast vs the first, or the
    /// one-unit shift vs the observed exposure.
    pub fn contrasts(&self) -> Vec<ContrastSpec> {
        if let Some(s) = &self.survival {
            return self.survival_contrasts(s);
        }
        let plain = |level, reference| ContrastSpec {
            level,
            reference,
            label: None,
            horizon: None,
        };
        match &self.kind {
            ExposureKind::Binary => vec![plain(Target::Level(1), Target::Level(0))],
            ExposureKind::Levels(l) => (1..l.len())
                .map(|k| ContrastSpec {
                    level: Target::Level(k),
                    reference: Target::Level(0),
                    label: Some(ContrastLabel::Levels {
                        level: l[k].clone(),
                        reference: l[0].clone(),
                    }),
                    horizon: None,
                })
                .collect(),
            ExposureKind::Dose => match self.spec.contrast {
                Some((a, b)) => vec![ContrastSpec {
                    level: Target::Dose(b),
                    reference: Target::Dose(a),
                    label: Some(ContrastLabel::Doses {
                        level: b,
                        reference: a,
                    }),
                    horizon: None,
                }],
                None => vec![plain(Target::Shifted, Target::Observed)],
            },
        }
    }

    /// Time to event: for each level against the reference (exposed
    /// against unexposed), the risk difference and ratio at each horizon,
    /// then the difference in restricted mean survival time to the last.
    fn survival_contrasts(&self, s: &crate::survival::Survival) -> Vec<ContrastSpec> {
        use crate::estimate::Horizon;
        use crate::survival::Measure;
        let pairs: Vec<(usize, Option<ContrastLabel>)> = match &self.kind {
            ExposureKind::Levels(l) => (1..l.len())
                .map(|k| {
                    let label = ContrastLabel::Levels {
                        level: l[k].clone(),
                        reference: l[0].clone(),
                    };
                    (k, Some(label))
                })
                .collect(),
            _ => vec![(1, None)],
        };
        let mut out = Vec::new();
        for (k, label) in pairs {
            let spec = |level, reference, time, measure, scale| ContrastSpec {
                level,
                reference,
                label: label.clone(),
                horizon: Some(Horizon { time, measure, scale }),
            };
            for &h in &s.horizons {
                for scale in [Scale::Difference, Scale::Ratio] {
                    out.push(spec(
                        Target::Risk(k, h),
                        Target::Risk(0, h),
                        h,
                        Measure::Risk,
                        scale,
                    ));
                }
            }
            let tau = s.last();
            out.push(spec(
                Target::Rmst(k, tau),
                Target::Rmst(0, tau),
                tau,
                Measure::RestrictedMean,
                Scale::Difference,
            ));
        }
        out
    }

    /// Row `i`'s membership of the estimand's population within the
    /// stratum averaged over (1 or 0).
    pub fn group(&self, i: usize) -> f64 {
        self.member(i)
            * match self.spec.estimand {
                Estimand::Ate => 1.0,
                Estimand::Att => self.a()[i],
                Estimand::Atc => 1.0 - self.a()[i],
            }
    }
}

/// [`CURVE_POINTS`] doses evenly spaced from the 5th to the 95th
/// percentile of `x` (percentiles by linear interpolation between order
/// statistics, common practice).
fn default_curve(x: &[f64]) -> Vec<f64> {
    let mut v = x.to_vec();
    v.sort_by(f64::total_cmp);
    let q = |p: f64| {
        let h = p * (v.len() - 1) as f64;
        let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
        v[lo] + (h - lo as f64) * (v[hi] - v[lo])
    };
    let (a, b) = (q(0.05), q(0.95));
    (0..CURVE_POINTS)
        .map(|k| a + (b - a) * k as f64 / (CURVE_POINTS - 1) as f64)
        .collect()
}

fn check_spec(spec: &Spec) -> Result<()> {
    if !(spec.level > 0.0 && spec.level < 1.0) {
        return Err(Error::option(
            Opt::Level,
            format!("{}: must lie between 0 and 1", spec.level),
        ));
    }
    if let Some(t) = spec.trim
        && !(0.0..0.5).contains(&t)
    {
        return Err(Error::option(
            Opt::Trim,
            format!("{t}: must be at least 0 and below 0.5"),
        ));
    }
    if spec.exposure == spec.outcome {
        return Err(Error::input("the exposure and the outcome are the same column"));
    }
    if let Some(s) = &spec.subgroup
        && (s == &spec.exposure || s == &spec.outcome || spec.mediators.contains(s))
    {
        return Err(Error::option(
            Opt::Subgroup,
            format!(
                "'{s}' is the exposure, the outcome or a mediator; a subgroup column must be measured before the exposure"
            ),
        ));
    }
    for i in &spec.interact {
        if !spec.covariates.contains(i) {
            return Err(Error::option(
                Opt::Interact,
                format!(
                    "'{i}' is not in the adjustment set ({})",
                    spec.covariates.join(", ")
                ),
            ));
        }
    }
    let mut all: Vec<&String> = spec.covariates.iter().chain(&spec.mediators).collect();
    all.push(&spec.exposure);
    all.push(&spec.outcome);
    all.extend(spec.time.iter());
    for (k, a) in all.iter().enumerate() {
        if all[..k].contains(a) {
            return Err(Error::input(format!("column '{a}' is named in two roles")));
        }
    }
    Ok(())
}

/// Rows per model term below which a warning says the sample is small: the
/// events-per-variable rule of thumb for logistic regression (Peduzzi et al.,
/// J Clin Epidemiol 1996;49:1373-1379, from memory), applied to the smaller
/// exposure group for the propensity model, to the rarer outcome value for a
/// logistic outcome model and to all rows for a linear one (common practice,
/// no source).
pub const ROWS_PER_TERM: usize = 10;

/// Each group of a binary exposure, and each level of a categorical one,
/// needs two rows: with one, its outcome variance, and so any standard
/// error, is not defined.
fn check_groups(frame: &Frame, spec: &Spec, exposure: usize) -> Result<()> {
    let labels: Vec<String> = match frame.kind(exposure) {
        Kind::Binary { .. } => vec!["unexposed".into(), "exposed".into()],
        Kind::Categorical { levels } => levels.iter().map(|l| format!("'{l}'")).collect(),
        Kind::Numeric => return Ok(()),
    };
    let count = group_sizes(frame, exposure);
    for (k, group) in count.iter().zip(&labels).rev() {
        if *k < 2 {
            let what = if labels.len() == 2 {
                format!("{group} row")
            } else {
                format!("row at level {group}")
            };
            return Err(Error::input(format!(
                "the exposure '{}' has only {k} {what} among the {} complete rows: each exposure \
                 group needs at least 2 rows for an estimate with a standard error",
                spec.exposure,
                frame.nrows()
            )));
        }
    }
    Ok(())
}

/// Rows per exposure code (binary or categorical); empty for a dose.
fn group_sizes(frame: &Frame, exposure: usize) -> Vec<usize> {
    let groups = match frame.kind(exposure) {
        Kind::Binary { .. } => 2,
        Kind::Categorical { levels } => levels.len(),
        Kind::Numeric => return Vec::new(),
    };
    let mut count = vec![0usize; groups];
    for &a in frame.col(exposure) {
        count[a as usize] += 1;
    }
    count
}

/// Most distinct values of an exposure that is still flagged as perhaps
/// meant to be categorical or binary (common practice, no source).
const FEW_VALUES: usize = 5;

/// A warning when a numeric exposure takes only a few values: it is
/// treated as continuous (a one-unit increase, regression only), which the
/// analyst may not have intended.
fn few_valued_exposure(frame: &Frame, spec: &Spec, exposure: usize) -> Option<String> {
    if frame.kind(exposure) != &Kind::Numeric {
        return None;
    }
    let mut values: Vec<f64> = Vec::new();
    for &v in frame.col(exposure) {
        if !values.contains(&v) {
            values.push(v);
            if values.len() > FEW_VALUES {
                return None;
            }
        }
    }
    values.sort_by(f64::total_cmp);
    let shown: Vec<String> = values.iter().map(|v| format!("{v}")).collect();
    Some(format!(
        "the exposure '{}' takes {} values ({}): it is treated as continuous (a dose), so the effect is \
         that of a one-unit increase or of two chosen doses, along a fitted dose-response curve; to \
         compare its values as levels instead, name it categorical",
        spec.exposure,
        values.len(),
        shown.join(", ")
    ))
}

/// A number for a message: as written for ordinary magnitudes, in
/// exponent form (1e300, 2.5e-200) for the very large and very small.
pub fn short_number(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 || !a.is_finite() || (1e-5..1e15).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// How far outside the observed range of a dose a dose asked for may lie,
/// in widths of that range, before it is refused rather than warned
/// about: beyond that, an estimate there comes from the models' shapes
/// alone, not from the data (a choice, no source).
pub const FAR_OUTSIDE: f64 = 1.0;

/// Least magnitude of a one-unit shift, relative to the largest magnitude
/// of the exposure, that still changes the exposure's values by more
/// than rounding (2^-26: at least half the digits of a double survive the
/// difference of the two predictions).
const SHIFT_RESOLUTION: f64 = 1.0 / (1u64 << 26) as f64;

/// The doses asked of a continuous exposure (the curve's and the
/// contrast's) against its observed range: one beyond the range by more
/// than [`FAR_OUTSIDE`] times its width is refused, naming the setting
/// and the range; one outside but nearer gives a warning (extrapolation).
/// The default contrast, a one-unit increase, is refused when one unit is
/// below the precision of the exposure's values, and warned about when it
/// is wider than their whole range.
fn doses_outside(frame: &Frame, spec: &Spec, exposure: usize) -> Result<Vec<String>> {
    if frame.kind(exposure) != &Kind::Numeric {
        return Ok(Vec::new());
    }
    let x = frame.col(exposure);
    let (lo, hi) = x.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
        (l.min(v), h.max(v))
    });
    let width = hi - lo;
    let range = format!(
        "the observed range of '{}' is {} to {}",
        spec.exposure,
        short_number(lo),
        short_number(hi)
    );
    let beyond = |v: f64| (lo - v).max(v - hi).max(0.0);
    let mut warnings = Vec::new();
    let asked: [(Opt, &str, Vec<f64>); 2] = [
        (
            Opt::At,
            "dose-response curve",
            spec.at.clone().unwrap_or_default(),
        ),
        (
            Opt::Contrast,
            "contrast",
            spec.contrast.map_or_else(Vec::new, |(a, b)| vec![a, b]),
        ),
    ];
    for (setting, what, doses) in asked {
        let outside: Vec<f64> = doses.iter().copied().filter(|&v| beyond(v) > 0.0).collect();
        if outside.is_empty() {
            continue;
        }
        let list = outside
            .iter()
            .map(|&v| short_number(v))
            .collect::<Vec<_>>()
            .join(", ");
        if outside.iter().any(|&v| beyond(v) > FAR_OUTSIDE * width) {
            return Err(Error::option(
                setting,
                format!(
                    "{list}: far outside the data ({range}, width {}; a dose may lie at most one width \
                     beyond it): an estimate there would come from the models' shapes alone; choose doses \
                     within or near the observed range",
                    short_number(width)
                ),
            ));
        }
        warnings.push(format!(
            "the {what} asks for doses outside the observed range ({list}; {range}): the estimates there \
             are extrapolations that rest on the models' shapes"
        ));
    }
    if spec.contrast.is_none() {
        let largest = x.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if 1.0 < SHIFT_RESOLUTION * largest {
            return Err(Error::option(
                Opt::Contrast,
                format!(
                    "is needed here: the default, a one-unit increase, is below the precision of the values \
                     of '{}' (largest magnitude {}); give two doses to compare",
                    spec.exposure,
                    short_number(largest)
                ),
            ));
        }
        if 1.0 > width {
            warnings.push(format!(
                "the default contrast, a one-unit increase, is wider than the whole observed range ({range}): \
                 it is an extrapolation that rests on the models' shapes; compare two doses within the range \
                 instead"
            ));
        }
    }
    Ok(warnings)
}

/// Warnings for a sample small for its models (see [`ROWS_PER_TERM`]).
fn small_sample(
    frame: &Frame,
    exposure: usize,
    outcome: usize,
    propensity: &Design,
    outcome_design: &Design,
    observed: Option<&[f64]>,
) -> Vec<String> {
    let mut out = Vec::new();
    // The outcome model sees the rows whose outcome is observed (the
    // placeholder of the others is 0, so the count of ones is theirs).
    let n = observed.map_or(frame.nrows(), |o| o.iter().filter(|&&r| r == 1.0).count());
    let ones = |j: usize| frame.col(j).iter().filter(|&&v| v == 1.0).count();
    let mut check = |what: &str, rows: usize, model: &str, terms: usize| {
        if rows >= ROWS_PER_TERM * terms.max(1) {
            return;
        }
        let per = if terms == 0 {
            format!("fewer than {ROWS_PER_TERM}")
        } else {
            format!("for {terms} terms besides the intercept, fewer than {ROWS_PER_TERM} per term")
        };
        out.push(format!(
            "small sample: {what} has {rows} rows ({per}, in the {model}); the fitted models and the \
             large-sample intervals may be unreliable: read the estimates with caution and compare a \
             bootstrap interval"
        ));
    };
    let count = group_sizes(frame, exposure);
    if !count.is_empty() {
        check(
            if count.len() == 2 {
                "the smaller exposure group"
            } else {
                "the smallest exposure group"
            },
            count.iter().copied().min().unwrap_or(0),
            "propensity model",
            propensity.ncols().saturating_sub(1),
        );
    }
    let k = outcome_design.ncols().saturating_sub(1);
    if matches!(frame.kind(outcome), Kind::Binary { .. }) {
        let m = ones(outcome).min(n - ones(outcome));
        check("the rarer outcome value", m, "outcome model", k);
    } else {
        check("the sample", n, "outcome model", k);
    }
    out
}

fn check_kinds(
    frame: &Frame,
    spec: &Spec,
    outcome: usize,
    exposure: usize,
    observed: Option<&[f64]>,
) -> Result<()> {
    let binary = |j: usize| matches!(frame.kind(j), Kind::Binary { .. });
    let constant = |j: usize| {
        // The outcome's placeholders (unobserved rows) are not values.
        let seen = |i: usize| j != outcome || observed.is_none_or(|o| o[i] == 1.0);
        let v = frame.col(j);
        let mut values = (0..v.len()).filter(|&i| seen(i)).map(|i| v[i]);
        let first = values.next();
        values.all(|x| Some(x) == first)
    };
    if constant(exposure) {
        return Err(Error::input(format!(
            "the exposure '{}' takes a single value in the complete rows",
            spec.exposure
        )));
    }
    // A time-to-event outcome may have no censoring (every row an event).
    if constant(outcome) && spec.time.is_none() {
        return Err(Error::input(format!(
            "the outcome '{}' takes a single value in the complete rows",
            spec.outcome
        )));
    }
    if spec.time.is_some() {
        if frame.kind(exposure) == &Kind::Numeric {
            return Err(Error::option(
                Opt::Time,
                format!(
                    "a time-to-event outcome is analysed for a binary or categorical exposure; '{}' is \
                     continuous (a dose), for which survival curves are not estimated: compare groups of \
                     doses named as levels instead",
                    spec.exposure
                ),
            ));
        }
        if spec.estimand != Estimand::Ate {
            return Err(Error::option(
                Opt::Estimand,
                "time-to-event outcomes are estimated for the ATE (everyone) only",
            ));
        }
        if spec.scale != Scale::Difference {
            return Err(Error::option(
                Opt::Scale,
                "does not apply to a time-to-event outcome: its rows give the risk difference and the \
                 risk ratio at each horizon",
            ));
        }
    }
    if spec.scale != Scale::Difference && !binary(outcome) {
        return Err(Error::option(
            Opt::Scale,
            format!(
                "{} needs a binary outcome; '{}' takes more than two values",
                spec.scale, spec.outcome
            ),
        ));
    }
    if spec.estimand != Estimand::Ate && !binary(exposure) {
        return Err(Error::option(
            Opt::Estimand,
            format!(
                "{} needs a binary exposure; '{}' takes more than two values",
                spec.estimand.to_string().to_lowercase(),
                spec.exposure
            ),
        ));
    }
    let dose = frame.kind(exposure) == &Kind::Numeric;
    if spec.contrast.is_some() && !dose {
        return Err(Error::option(
            Opt::Contrast,
            "applies to a continuous exposure only (for levels, every level is compared with the reference)",
        ));
    }
    if spec.trim.is_some() && !binary(exposure) {
        return Err(Error::option(
            Opt::Trim,
            "applies to the propensity scores of a binary exposure only",
        ));
    }
    if spec.at.is_some() && !dose {
        return Err(Error::option(Opt::At, "applies to a continuous exposure only"));
    }
    if let Some((a, b)) = spec.contrast
        && !(a.is_finite() && b.is_finite() && a != b)
    {
        return Err(Error::option(
            Opt::Contrast,
            format!("{a},{b}: two different finite doses are needed"),
        ));
    }
    if let Some(at) = &spec.at
        && (at.is_empty() || at.iter().any(|x| !x.is_finite()))
    {
        return Err(Error::option(Opt::At, "needs one or more finite doses"));
    }
    if let Some(at) = &spec.at
        && at.len() > MAX_CURVE_POINTS
    {
        return Err(Error::option(
            Opt::At,
            format!(
                "{} doses: at most {MAX_CURVE_POINTS} (each keeps a value per row)",
                at.len()
            ),
        ));
    }
    Ok(())
}
