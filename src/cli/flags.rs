//! The estimation flags that `estimate`, `compare` and `demo` share, and
//! the steps they share: reading the data, planning under a graph, running
//! the analysis and stamping the output.

use super::common::{DelimiterArg, load_graph};
use causeway::analysis::Options;
use causeway::check::CheckOptions;
use causeway::data::{Dataset, Delimiter, ReadOptions, Shape};
use causeway::error::Setting;
use causeway::estimate::{Estimand, Missing, Scale, Spec};
use causeway::graph::Graph;
use causeway::infer::bootstrap::IntervalKind;
use causeway::plan::{AdjustChoice, Plan, Roles, split_list};
use causeway::report::doc::{FileStamp, Stamp, ToolInfo};
use causeway::sensitivity::robustness::{BenchmarkChoice, check_multiples};
use causeway::{Error, Result};
use std::path::{Path, PathBuf};

/// Flags of an analysis (the estimation flags of the command-line contract).
#[derive(clap::Args, Debug, Clone)]
pub struct EstimateFlags {
    /// The exposure (treatment) column.
    #[arg(long, value_name = "NAME")]
    pub exposure: String,
    /// The outcome column.
    #[arg(long, value_name = "NAME")]
    pub outcome: String,
    /// Which value of a two-valued exposure counts as exposed, e.g. quit
    /// or 1. Default: the larger of two numbers; of two text levels, the
    /// one that sorts last. Reports always say which was taken.
    #[arg(long, value_name = "VALUE")]
    pub exposed: Option<String>,
    /// The reference level of a categorical exposure (text with three or
    /// more levels, or a number named in --categorical); every other level
    /// is compared with it. Default: the lowest level.
    #[arg(long, value_name = "LEVEL")]
    pub reference: Option<String>,
    /// Methods, comma-separated: regression, ipw, ipw-ht, aipw, frontdoor,
    /// and km (IP-weighted Kaplan-Meier, with --time).
    /// Default: every method that fits the strategy and the exposure.
    #[arg(long, value_name = "LIST")]
    pub method: Option<String>,
    /// ate, att or atc.
    #[arg(
        long,
        value_enum,
        ignore_case = true,
        default_value = "ate",
        value_name = "WHICH"
    )]
    pub estimand: EstimandArg,
    /// optimal, minimal, or a comma-separated set to adjust for.
    #[arg(long, default_value = "optimal", value_name = "SET")]
    pub adjust: String,
    /// Estimate with an --adjust set that fails the backdoor criterion
    /// (with a warning).
    #[arg(long)]
    pub force_adjust: bool,
    /// Columns to treat as categorical (dummies; the lowest level is the reference).
    #[arg(long, value_name = "A,B")]
    pub categorical: Option<String>,
    /// How continuous covariates (and a continuous exposure, in the outcome
    /// model and the weighted dose-response model) enter: linear, quadratic
    /// or spline.
    #[arg(long, value_enum, default_value = "linear", value_name = "SHAPE")]
    pub shape: ShapeArg,
    /// Covariates whose product with the exposure enters the outcome model.
    #[arg(long, value_name = "A,B")]
    pub interact: Option<String>,
    /// Scale for a binary outcome: difference, ratio or odds.
    #[arg(
        long,
        value_enum,
        ignore_case = true,
        default_value = "difference",
        value_name = "SCALE"
    )]
    pub scale: ScaleArg,
    /// Bootstrap replicates (0: analytic intervals only).
    #[arg(long, allow_negative_numbers = true, default_value_t = 0, value_name = "N")]
    pub bootstrap: usize,
    /// Bootstrap interval put in `ci`: percentile, bca or normal.
    #[arg(long, value_enum, default_value = "percentile", value_name = "KIND")]
    pub interval: IntervalArg,
    /// Confidence level, in (0, 1).
    #[arg(
        long,
        allow_negative_numbers = true,
        default_value_t = 0.95,
        value_name = "LEVEL"
    )]
    pub level: f64,
    /// Clip propensity scores to [EPS, 1-EPS]; EPS in [0, 0.5).
    #[arg(long, allow_negative_numbers = true, value_name = "EPS")]
    pub trim: Option<f64>,
    /// For a continuous exposure: compare the dose B with the dose A.
    #[arg(long, value_name = "A,B")]
    pub contrast: Option<String>,
    /// For a continuous exposure: the doses at which the dose-response
    /// curve is evaluated. Default: 9 doses from its 5th to its 95th
    /// percentile.
    #[arg(long, value_name = "A,B,...", allow_negative_numbers = true)]
    pub at: Option<String>,
    /// Columns to treat as unobserved, comma-separated.
    #[arg(long, value_name = "A,B")]
    pub latent: Option<String>,
    /// A column grouping rows into clusters (a hospital, school or region;
    /// text or numeric codes; need not be a graph node): standard errors
    /// and intervals become cluster-robust, and --bootstrap resamples whole
    /// clusters.
    #[arg(long, value_name = "COLUMN")]
    pub cluster: Option<String>,
    /// A column of sampling (survey or design) weights, one positive number
    /// per row (need not be a graph node): every model fit, average and
    /// diagnostic is weighted, intervals treat the weights as known, and
    /// the effective sample size is reported.
    #[arg(long, value_name = "COLUMN")]
    pub weights: Option<String>,
    /// Missing values: complete (rows missing a used column are dropped),
    /// weight (rows missing only the outcome are kept and the observed
    /// rows weighted by the inverse probability of being observed), or
    /// impute.
    #[arg(long, value_enum, default_value = "complete", value_name = "HOW")]
    pub missing: MissingArg,
    /// With --missing impute: the number of imputed datasets, each analysed
    /// in full [default: 20].
    #[arg(long, value_name = "M")]
    pub imputations: Option<usize>,
    /// A binary or categorical column (a few numeric values count as
    /// levels; need not be a graph node, but must not be affected by the
    /// exposure): the effect within each of its levels, a test that they
    /// differ, and a forest plot in the bundle.
    #[arg(long, value_name = "COLUMN")]
    pub subgroup: Option<String>,
    /// A time-to-event outcome: the column of follow-up times (positive, in
    /// any unit; need not be a graph node). --outcome is then the event
    /// indicator: 1 for an event, 0 for censored (or see --event). Reports
    /// adjusted survival curves and, at each --horizon, the risk under each
    /// exposure level, risk differences and ratios, and the restricted
    /// mean survival time up to the last horizon.
    #[arg(long, value_name = "COLUMN")]
    pub time: Option<String>,
    /// With --time: the outcome value that marks an event when the
    /// indicator is not 1/0 (the other value is censored), e.g. died.
    #[arg(long, value_name = "VALUE")]
    pub event: Option<String>,
    /// With --time: the times at which risks are compared, in the unit of
    /// the time column. Default: the quartiles of the event times and the
    /// end of follow-up.
    #[arg(long, value_name = "T1,T2,...", allow_negative_numbers = true)]
    pub horizon: Option<String>,
    /// With --time: the width of the periods of the pooled logistic hazard
    /// models, in the unit of the time column. Default: the last horizon
    /// cut into the fewest periods (10 to 100) that hold at most 5% of the
    /// events each; reported.
    #[arg(long, value_name = "WIDTH", allow_negative_numbers = true)]
    pub period: Option<f64>,
    /// With --time: weight by the inverse probability of remaining
    /// uncensored, from a pooled logistic model of censoring given the
    /// exposure, time and the adjustment set (stabilised), for censoring
    /// that depends on them.
    #[arg(long)]
    pub censoring_weights: bool,
    /// Seed of the bootstrap's random streams.
    #[arg(long, allow_negative_numbers = true, default_value_t = 1, value_name = "N")]
    pub seed: u64,
    /// Worker threads for the bootstrap (0: all cores; at most 4 per core
    /// are used). Results do not depend on it.
    #[arg(long, allow_negative_numbers = true, default_value_t = 0, value_name = "N")]
    pub threads: usize,
    /// Also test the graph's implications against the data and report how
    /// many the data reject.
    #[arg(long)]
    pub check: bool,
    /// Level of the implication tests of --check, in (0, 1).
    #[arg(
        long,
        allow_negative_numbers = true,
        default_value_t = 0.05,
        value_name = "ALPHA"
    )]
    pub alpha: f64,
    /// Benchmarks for the robustness value (linear outcome): adjustment
    /// covariates, comma-separated. A categorical covariate gives one
    /// benchmark per level (or name one level, e.g. role=office), a
    /// quadratic or spline covariate one per term. Default: the 3 terms
    /// whose own strength would bias the estimate most.
    #[arg(long, value_name = "COV[,COV]")]
    pub benchmark: Option<String>,
    /// How many times as strong as each benchmark the hidden confounder is
    /// taken to be, comma-separated positive numbers.
    #[arg(long, value_name = "K[,K]", default_value = "0.5,1,2")]
    pub benchmark_multiples: String,
    /// Print no progress bar and no warnings on stderr.
    #[arg(long)]
    pub quiet: bool,
}

/// Defines a flag's value enum and its conversion to the library's type.
macro_rules! value_enum {
    ($(#[$doc:meta])* $name:ident => $target:ty { $($(#[$vdoc:meta])* $variant:ident => $value:expr),+ $(,)? }) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
        pub enum $name {
            $($(#[$vdoc])* $variant),+
        }

        impl From<$name> for $target {
            fn from(v: $name) -> Self {
                match v {
                    $($name::$variant => $value),+
                }
            }
        }
    };
}

value_enum!(
    /// The `--estimand` flag's values.
    EstimandArg => Estimand {
        /// Average effect over everyone.
        Ate => Estimand::Ate,
        /// Average effect over the exposed.
        Att => Estimand::Att,
        /// Average effect over the unexposed.
        Atc => Estimand::Atc,
    }
);

value_enum!(
    /// The `--scale` flag's values.
    ScaleArg => Scale {
        /// Difference of the two means.
        Difference => Scale::Difference,
        /// Ratio of the two risks.
        Ratio => Scale::Ratio,
        /// Ratio of the two odds.
        Odds => Scale::Odds,
    }
);

value_enum!(
    /// The `--shape` flag's values.
    ShapeArg => Shape {
        /// As is.
        Linear => Shape::Linear,
        /// With its square.
        Quadratic => Shape::Quadratic,
        /// A restricted cubic spline with 4 knots.
        Spline => Shape::Spline,
    }
);

value_enum!(
    /// The `--missing` flag's values.
    MissingArg => Missing {
        /// Drop rows missing a used column.
        Complete => Missing::Complete,
        /// Weight observed outcomes by the inverse probability of being observed.
        Weight => Missing::Weight,
        /// Multiple imputation by chained equations.
        Impute => Missing::Impute,
    }
);

value_enum!(
    /// The `--interval` flag's values.
    IntervalArg => IntervalKind {
        /// Quantiles of the replicates.
        Percentile => IntervalKind::Percentile,
        /// Bias-corrected and accelerated.
        Bca => IntervalKind::Bca,
        /// Estimate plus or minus z times the bootstrap standard error.
        Normal => IntervalKind::Normal,
    }
);

/// Comma-separated finite numbers; `None` when any part is not one.
fn numbers(s: &str) -> Option<Vec<f64>> {
    split_list(s)
        .iter()
        .map(|x| x.parse::<f64>().ok().filter(|v| v.is_finite()))
        .collect()
}

fn list(s: &Option<String>) -> Vec<String> {
    s.as_deref().map(split_list).unwrap_or_default()
}

impl EstimateFlags {
    /// Checks the flags and turns them into analysis options.
    pub fn options(&self) -> Result<Options> {
        if !(self.level > 0.0 && self.level < 1.0) {
            return Err(Error::input(format!(
                "--level {}: expected a number strictly between 0 and 1",
                self.level
            )));
        }
        if !(self.alpha > 0.0 && self.alpha < 1.0) {
            return Err(Error::input(format!(
                "--alpha {}: expected a number strictly between 0 and 1",
                self.alpha
            )));
        }
        if let Some(t) = self.trim
            && !(0.0..0.5).contains(&t)
        {
            return Err(Error::input(format!(
                "--trim {t}: expected a number at least 0 and below 0.5"
            )));
        }
        let contrast = match &self.contrast {
            None => None,
            Some(c) => match numbers(c).as_deref() {
                Some(&[a, b]) if a != b => Some((a, b)),
                _ => {
                    return Err(Error::input(format!(
                        "--contrast '{c}': expected two different numbers, A,B"
                    )));
                }
            },
        };
        let at = match &self.at {
            None => None,
            Some(c) => match numbers(c) {
                Some(v) if !v.is_empty() => Some(v),
                _ => {
                    return Err(Error::input(format!(
                        "--at '{c}': expected one or more numbers, comma-separated"
                    )));
                }
            },
        };
        if self.imputations.is_some() && !matches!(self.missing, MissingArg::Impute) {
            return Err(Error::input(
                "--imputations applies only with --missing impute; add it, or leave --imputations out",
            ));
        }
        let horizon = match &self.horizon {
            None => None,
            Some(c) => match numbers(c) {
                Some(v) if !v.is_empty() => Some(v),
                _ => {
                    return Err(Error::input(format!(
                        "--horizon '{c}': expected one or more times, comma-separated"
                    )));
                }
            },
        };
        if self.time.is_none() {
            let needs_time = [
                (self.event.is_some(), "--event"),
                (self.horizon.is_some(), "--horizon"),
                (self.period.is_some(), "--period"),
                (self.censoring_weights, "--censoring-weights"),
            ];
            if let Some((_, f)) = needs_time.iter().find(|(given, _)| *given) {
                return Err(Error::input(format!(
                    "{f} applies to a time-to-event outcome: give the follow-up time column with --time"
                )));
            }
        }
        let threads = super::common::threads(self.threads, self.quiet);
        let methods = self.method.as_ref().map(|m| split_list(m));
        if let Some(ms) = &methods {
            if ms.is_empty() {
                return Err(Error::input("--method: expected at least one method name"));
            }
            for m in ms {
                causeway::estimate::by_name(m)?;
            }
        }
        Ok(Options {
            methods,
            model: Spec {
                categorical: list(&self.categorical),
                shape: self.shape.into(),
                interact: list(&self.interact),
                estimand: self.estimand.into(),
                scale: self.scale.into(),
                trim: self.trim.filter(|&t| t > 0.0),
                level: self.level,
                contrast,
                at,
                exposed: self.exposed.clone(),
                reference: self.reference.clone(),
                cluster: self.cluster.clone(),
                weights: self.weights.clone(),
                missing: self.missing.into(),
                imputations: self.imputations.unwrap_or(causeway::problem::DEFAULT_IMPUTATIONS),
                subgroup: self.subgroup.clone(),
                time: self.time.clone(),
                event: self.event.clone(),
                horizon,
                period: self.period,
                censoring_weights: self.censoring_weights,
                ..Spec::default()
            },
            bootstrap: self.bootstrap,
            interval: self.interval.into(),
            seed: self.seed,
            threads,
            progress: super::bar::reporter(self.quiet),
            benchmarks: self.benchmarks()?,
            check: self.check.then(|| CheckOptions {
                alpha: self.alpha,
                categorical: list(&self.categorical),
                latent: list(&self.latent),
                ..CheckOptions::default()
            }),
        })
    }

    /// The benchmark choice of `--benchmark` and `--benchmark-multiples`.
    fn benchmarks(&self) -> Result<BenchmarkChoice> {
        let flag = "--benchmark-multiples";
        let raw = &self.benchmark_multiples;
        let multiples = split_list(raw)
            .iter()
            .map(|x| {
                x.parse::<f64>()
                    .map_err(|_| Error::input(format!("{flag} '{raw}': '{x}' is not a number")))
            })
            .collect::<Result<Vec<f64>>>()?;
        check_multiples(&multiples).map_err(|e| {
            Error::input(format!(
                "{flag} '{raw}': {e}; give positive numbers such as 0.5,1,2"
            ))
        })?;
        let covariates = match &self.benchmark {
            None => None,
            Some(b) => {
                let names = split_list(b);
                if names.is_empty() {
                    return Err(Error::input("--benchmark: expected at least one covariate name"));
                }
                Some(names)
            }
        };
        Ok(BenchmarkChoice {
            covariates,
            multiples,
        })
    }

    /// Refuses a `--benchmark` name that is not an adjustment covariate of
    /// any of `plans` (nor a term of one, such as `role=office` or
    /// `age^2`), suggesting the nearest.
    pub fn check_benchmarks<'a>(&self, plans: impl IntoIterator<Item = &'a Plan>) -> Result<()> {
        let Some(b) = &self.benchmark else {
            return Ok(());
        };
        let mut known: Vec<String> = Vec::new();
        for p in plans {
            for c in p.adjustment_set.iter().flatten() {
                if !known.contains(c) {
                    known.push(c.clone());
                }
            }
        }
        for name in split_list(b) {
            let column = name.split(['=', '^']).next().unwrap_or(&name);
            if known.iter().any(|k| k == &name || k == column) {
                continue;
            }
            let hint = match causeway::error::nearest_names(&name, known.iter().map(String::as_str)) {
                n if !n.is_empty() => n,
                _ if known.is_empty() => {
                    "; the analysis adjusts for nothing, so there is no covariate to compare with".to_string()
                }
                _ => format!("; the adjustment covariates are {}", known.join(", ")),
            };
            return Err(Error::input(format!(
                "--benchmark '{name}': not an adjustment covariate{hint}"
            )));
        }
        Ok(())
    }

    /// The plan under one graph, given the data's column names.
    pub fn plan(&self, graph: Graph, columns: &[String], data: &str) -> Result<Plan> {
        let roles = Roles::resolve(
            graph,
            Some(columns),
            Some(data),
            &list(&self.latent),
            &self.exposure,
            &self.outcome,
        )?;
        for (names, setting) in [
            (&self.categorical, Setting::Categorical),
            (&self.interact, Setting::Interact),
        ] {
            for name in list(names) {
                causeway::plan::node(&roles.graph, &name, setting)?;
            }
        }
        Plan::phrased(
            roles,
            &AdjustChoice::parse(&self.adjust),
            self.force_adjust,
            &super::Flags,
        )
    }
}

/// A data file (or standard input) and what the stamp needs of it.
pub struct DataSource {
    /// The path as given (`-` for standard input).
    pub path: PathBuf,
    /// The name used in messages.
    pub shown: String,
    /// Standard input, or a file that can be read only once (a pipe, a
    /// device), read once and kept.
    stdin: Option<Vec<u8>>,
    /// The field separator; `None`: detected from the header line.
    delimiter: Option<Delimiter>,
}

impl DataSource {
    /// Opens `path`; `-` reads all of standard input now, as does a path
    /// that is not a regular file (a pipe); the path is checked by
    /// [`super::common::open_input`]. The separator is
    /// `delimiter` (from `--delimiter`), else tab for a `.tsv` name, else
    /// detected from the header line.
    pub fn open(path: &Path, delimiter: Option<DelimiterArg>) -> Result<DataSource> {
        let shown = path.display().to_string();
        let delimiter = delimiter
            .map(Delimiter::from)
            .or_else(|| Delimiter::from_path(path));
        if shown == "-" {
            let mut bytes = Vec::new();
            std::io::Read::read_to_end(&mut std::io::stdin().lock(), &mut bytes)
                .map_err(|e| Error::io("<stdin>", e))?;
            return Ok(DataSource {
                path: path.to_path_buf(),
                shown: "<stdin>".into(),
                stdin: Some(bytes),
                delimiter,
            });
        }
        let stdin = match super::common::open_input(path, "--data", "data file", true)? {
            super::common::Input::File => None,
            super::common::Input::Bytes(b) => Some(b),
        };
        Ok(DataSource {
            path: path.to_path_buf(),
            shown,
            stdin,
            delimiter,
        })
    }

    /// An in-memory data file (the embedded demo).
    pub fn from_bytes(name: &str, bytes: &[u8]) -> DataSource {
        DataSource {
            path: PathBuf::from(name),
            shown: name.to_string(),
            stdin: Some(bytes.to_vec()),
            delimiter: None,
        }
    }

    /// The column names of the header line.
    pub fn header(&self) -> Result<Vec<String>> {
        match &self.stdin {
            Some(b) => Dataset::read_header(&b[..], &self.shown, self.delimiter),
            None => Dataset::open_header(&self.path, self.delimiter),
        }
    }

    /// Reads the columns in `keep`.
    pub fn load(&self, keep: Vec<String>) -> Result<Dataset> {
        let opts = ReadOptions {
            keep: Some(keep),
            delimiter: self.delimiter,
        };
        match &self.stdin {
            Some(b) => Dataset::read(&b[..], &self.shown, &opts),
            None => Dataset::open(&self.path, &opts),
        }
    }

    /// The SHA-256 stamp of the bytes.
    pub fn stamp(&self) -> Result<FileStamp> {
        match &self.stdin {
            Some(b) => Ok(FileStamp::of(&self.shown, b)),
            None => file_stamp(&self.path),
        }
    }
}

/// The SHA-256 stamp of a file.
pub fn file_stamp(path: &Path) -> Result<FileStamp> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    Ok(FileStamp::of(&path.display().to_string(), &bytes))
}

/// The reproducibility stamp of a run.
pub fn stamp(seed: u64, files: Vec<FileStamp>) -> Stamp {
    Stamp {
        tool: ToolInfo::default(),
        command: super::common::command_line(),
        seed,
        files,
    }
}

/// A graph with its parse warnings printed.
pub fn graph(path: &Path, quiet: bool) -> Result<Graph> {
    load_graph(path, quiet)
}
