//! The crate's error type. Each variant decides the exit code the binary
//! returns: a failure caused by the input (data, graph or settings) 2, not
//! identified 3, an internal error (a bug) 1.

use std::path::PathBuf;

/// Everything that can stop an analysis.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A malformed graph file, with its place.
    #[error(transparent)]
    Graph(#[from] crate::graph::ParseError),
    /// Bad input or usage: the message names the file, line, column or flag.
    #[error("{0}")]
    Input(String),
    /// The effect is not identified by the criteria the tool knows.
    #[error("{0}")]
    NotIdentified(String),
    /// The data leave no overlap between the exposure groups (separation of
    /// the propensity model, a positivity violation): bad input, like
    /// [`Error::Input`].
    #[error("{0}")]
    Separation(String),
    /// The data leave a computation without a meaningful result (a model
    /// that does not converge, an empty exposure arm, an effect that is not
    /// finite): caused by the input, like [`Error::Input`].
    #[error("{0}")]
    Numerical(String),
    /// An internal error: a broken invariant of the program itself, never
    /// something the input can cause. The only variant with exit code 1.
    #[error("internal error (please report it): {0}")]
    Internal(String),
    /// A bad value of an analysis setting. The library names the setting in
    /// neutral words; the command line prints its flag instead.
    #[error("{}", self.text(&Words))]
    Option {
        /// Which setting.
        setting: Setting,
        /// What is wrong, following the setting's name (for example
        /// `'magic': expected one of ...`).
        message: String,
    },
    /// A problem the user can fix through a setting: the problem, then
    /// what to do about it (see [`Advice`]).
    #[error("{}", self.text(&Words))]
    Advised {
        /// The problem.
        error: Box<Error>,
        /// What to do about it.
        advice: Advice,
    },
    /// A file that could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
}

/// An analysis setting, named in an [`Error::Option`]. The library writes
/// it in words ([`Setting::words`]); a front end may name its own control
/// for it instead.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Setting {
    /// The estimation methods to run.
    Method,
    /// The estimand (ATE, ATT, ATC).
    Estimand,
    /// The scale of a binary outcome's contrast.
    Scale,
    /// The bootstrap interval kind.
    Interval,
    /// The number of bootstrap replicates.
    Bootstrap,
    /// The interval level.
    Level,
    /// The bound for clipping propensity scores.
    Trim,
    /// The covariates multiplied by the exposure in the outcome model.
    Interact,
    /// The significance level of a test or interval.
    Alpha,
    /// The share of the estimate a confounder would remove (robustness value).
    Q,
    /// A coefficient given as a summary number.
    Estimate,
    /// A standard error given as a summary number.
    Se,
    /// Residual degrees of freedom given as a summary number.
    Df,
    /// A hypothesized confounder's partial R² with the exposure.
    R2Exposure,
    /// A hypothesized confounder's partial R² with the outcome.
    R2Outcome,
    /// The confidence interval of a ratio given as summary numbers.
    Ci,
    /// A standardized mean difference given as a summary number.
    Smd,
    /// The exposure.
    Exposure,
    /// The outcome.
    Outcome,
    /// Columns treated as unobserved.
    Latent,
    /// The adjustment set.
    Adjust,
    /// Columns treated as categorical.
    Categorical,
    /// The value of a two-valued exposure that counts as exposed.
    Exposed,
    /// The reference level of a categorical exposure.
    Reference,
    /// The doses at which a dose-response curve is evaluated.
    At,
    /// The two doses compared.
    Contrast,
    /// How continuous terms enter the models.
    Shape,
    /// Using an adjustment set that fails the backdoor criterion anyway.
    ForceAdjust,
    /// The separator of the data file's fields.
    Delimiter,
    /// The coefficient a simulation gives an edge written without one.
    DefaultCoef,
    /// Reading an odds or hazard ratio of a common outcome.
    CommonOutcome,
    /// The number of worker threads.
    Threads,
    /// The number of rows to simulate.
    Rows,
    /// The number of Monte Carlo draws.
    Draws,
    /// The column whose values group rows into clusters.
    Cluster,
    /// The column of sampling weights.
    Weights,
    /// How rows with missing values are handled.
    Missing,
    /// The number of imputed datasets.
    Imputations,
    /// The column whose levels define subgroups (an effect modifier).
    Subgroup,
    /// The follow-up time column of a time-to-event outcome.
    Time,
    /// The outcome value that marks an event.
    Event,
    /// The times at which risks are compared.
    Horizon,
    /// The width of the periods of the discrete-time hazard models.
    Period,
    /// Inverse probability of censoring weights.
    CensoringWeights,
}

impl Setting {
    /// The setting in neutral words.
    pub fn words(self) -> &'static str {
        match self {
            Setting::Method => "the method list",
            Setting::Estimand => "the estimand",
            Setting::Scale => "the effect scale",
            Setting::Interval => "the bootstrap interval kind",
            Setting::Bootstrap => "the number of bootstrap replicates",
            Setting::Level => "the interval level",
            Setting::Trim => "the propensity trimming bound",
            Setting::Interact => "the exposure-product list",
            Setting::Alpha => "the significance level",
            Setting::Q => "the share of the estimate",
            Setting::Estimate => "the coefficient",
            Setting::Se => "the standard error",
            Setting::Df => "the residual degrees of freedom",
            Setting::R2Exposure => "the partial R² with the exposure",
            Setting::R2Outcome => "the partial R² with the outcome",
            Setting::Ci => "the interval",
            Setting::Smd => "the standardized difference",
            Setting::Exposure => "the exposure",
            Setting::Outcome => "the outcome",
            Setting::Latent => "the unobserved list",
            Setting::Adjust => "the adjustment set",
            Setting::Categorical => "the categorical list",
            Setting::Exposed => "the exposed value",
            Setting::Reference => "the reference level",
            Setting::At => "the dose list",
            Setting::Contrast => "the dose contrast",
            Setting::Shape => "the term shape",
            Setting::ForceAdjust => "the override for an invalid adjustment set",
            Setting::Delimiter => "the column separator",
            Setting::DefaultCoef => "the default edge coefficient",
            Setting::CommonOutcome => "the common-outcome conversion",
            Setting::Threads => "the number of worker threads",
            Setting::Rows => "the number of rows to simulate",
            Setting::Draws => "the number of Monte Carlo draws",
            Setting::Cluster => "the cluster column",
            Setting::Weights => "the sampling-weight column",
            Setting::Missing => "the handling of missing values",
            Setting::Imputations => "the number of imputations",
            Setting::Subgroup => "the subgroup column",
            Setting::Time => "the follow-up time column",
            Setting::Event => "the event value",
            Setting::Horizon => "the horizon list",
            Setting::Period => "the period width",
            Setting::CensoringWeights => "the censoring weights",
        }
    }
}

/// One thing a user can do through a setting.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Remedy {
    /// Give the setting one of these values.
    Choose(Setting, Vec<String>),
    /// Turn the setting (a switch) on.
    TurnOn(Setting),
    /// Give the setting a value of one's own.
    Give(Setting),
    /// Take these values out of the setting (a list).
    Omit(Setting, Vec<String>),
}

/// Advice carried by an error or a note: remedies, any one of which helps,
/// and what they achieve ("to estimate with it anyway"; may be empty).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Advice {
    /// The alternatives, in the order they are offered.
    pub remedies: Vec<Remedy>,
    /// Words that follow the remedies, or nothing.
    pub purpose: &'static str,
}

impl Advice {
    /// Advice of a single remedy.
    pub fn one(remedy: Remedy, purpose: &'static str) -> Advice {
        Advice {
            remedies: vec![remedy],
            purpose,
        }
    }

    /// The advice as a clause, in `phrasing`: the remedies joined by
    /// ", or ", then the purpose.
    pub fn text(&self, phrasing: &dyn Phrasing) -> String {
        let mut s = self
            .remedies
            .iter()
            .map(|r| phrasing.remedy(r))
            .collect::<Vec<_>>()
            .join(", or ");
        if !self.purpose.is_empty() {
            s.push(' ');
            s.push_str(self.purpose);
        }
        s
    }
}

/// How messages name a [`Setting`] and word a [`Remedy`]. The library's own
/// is [`Words`]; a front end gives its own (the command line names its
/// flags), so the library's text never depends on one front end.
pub trait Phrasing {
    /// The name of `setting`, as the subject of a message.
    fn setting(&self, setting: Setting) -> &'static str;
    /// One remedy as a clause starting with a verb.
    fn remedy(&self, remedy: &Remedy) -> String;
}

/// The library's neutral phrasing: settings by [`Setting::words`].
#[derive(Clone, Copy, Debug, Default)]
pub struct Words;

impl Phrasing for Words {
    fn setting(&self, setting: Setting) -> &'static str {
        setting.words()
    }

    fn remedy(&self, remedy: &Remedy) -> String {
        match remedy {
            Remedy::Choose(s, values) => format!("set {} to {}", s.words(), values.join(" or ")),
            Remedy::TurnOn(s) => format!("turn on {}", s.words()),
            Remedy::Give(s) => format!("give {}", s.words()),
            Remedy::Omit(s, values) => format!("take {} out of {}", values.join(", "), s.words()),
        }
    }
}

impl Error {
    /// The process exit code for this error (see the command-line contract).
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Graph(_)
            | Error::Input(_)
            | Error::Option { .. }
            | Error::Separation(_)
            | Error::Numerical(_)
            | Error::Io { .. } => 2,
            Error::NotIdentified(_) => 3,
            Error::Internal(_) => 1,
            Error::Advised { error, .. } => error.exit_code(),
        }
    }

    /// The message in `phrasing`: as [`Display`](std::fmt::Display) gives
    /// it, with settings and advice worded by `phrasing` instead of
    /// [`Words`].
    pub fn text(&self, phrasing: &dyn Phrasing) -> String {
        match self {
            Error::Option { setting, message } => {
                format!("{} {message}", phrasing.setting(*setting))
            }
            Error::Advised { error, advice } => {
                format!("{}; {}", error.text(phrasing), advice.text(phrasing))
            }
            other => other.to_string(),
        }
    }

    /// The problem itself, without any advice.
    pub fn problem(&self) -> &Error {
        match self {
            Error::Advised { error, .. } => error.problem(),
            other => other,
        }
    }

    /// This error with `advice` on what to do about it.
    pub fn advised(self, advice: Advice) -> Self {
        Error::Advised {
            error: Box::new(self),
            advice,
        }
    }

    /// Shorthand for an input error.
    pub fn input(msg: impl Into<String>) -> Self {
        Error::Input(msg.into())
    }

    /// A bad value of `setting`.
    pub fn option(setting: Setting, message: impl Into<String>) -> Self {
        Error::Option {
            setting,
            message: message.into(),
        }
    }

    /// An I/O error on `path`.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            source,
        }
    }
}

/// Result with the crate's error.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// The names among `candidates` nearest to `name`, for a "not found"
/// message: those equal to it ignoring case first, then those within a
/// small edit distance (Levenshtein, on lower-cased text; at most a third of
/// the name's length, and at least 1), closest first, at most three.
/// Returns the text to append to the message, `; did you mean 'a'?` or
/// `; did you mean one of 'a', 'b'?`, or
/// nothing when no candidate is near.
pub fn nearest_names<'a>(name: &str, candidates: impl IntoIterator<Item = &'a str>) -> String {
    let want = name.to_lowercase();
    let limit = (want.chars().count() / 3).max(1);
    let mut near: Vec<(usize, &str)> = candidates
        .into_iter()
        .filter(|c| *c != name)
        .filter_map(|c| {
            let d = edit_distance(&want, &c.to_lowercase());
            // A case-only difference ranks before any edit.
            (d <= limit).then_some((if d == 0 { 0 } else { d + 1 }, c))
        })
        .collect();
    near.sort_by(|a, b| a.0.cmp(&b.0).then_with(|| a.1.cmp(b.1)));
    near.dedup_by(|a, b| a.1 == b.1);
    if near.is_empty() {
        return String::new();
    }
    let shown: Vec<String> = near.iter().take(3).map(|(_, c)| format!("'{c}'")).collect();
    let word = if shown.len() == 1 { "" } else { "one of " };
    format!("; did you mean {word}{}?", shown.join(", "))
}

/// Levenshtein distance between two strings, counted in characters.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn advice_is_worded_without_flags() {
        let e = Error::option(Setting::Adjust, "{z} does not meet the backdoor criterion").advised(Advice {
            remedies: vec![
                Remedy::Choose(Setting::Adjust, vec!["optimal".into(), "minimal".into()]),
                Remedy::TurnOn(Setting::ForceAdjust),
            ],
            purpose: "to estimate with it anyway",
        });
        assert_eq!(
            e.to_string(),
            "the adjustment set {z} does not meet the backdoor criterion; set the adjustment set to \
             optimal or minimal, or turn on the override for an invalid adjustment set to estimate with it anyway"
        );
        assert_eq!(e.exit_code(), 2);
        assert!(matches!(
            e.problem(),
            Error::Option {
                setting: Setting::Adjust,
                ..
            }
        ));
        let give = Advice::one(Remedy::Give(Setting::DefaultCoef), "");
        assert_eq!(give.text(&Words), "give the default edge coefficient");
        let e = Error::NotIdentified("no set".into()).advised(give);
        assert_eq!(e.exit_code(), 3);
        assert_eq!(e.to_string(), "no set; give the default edge coefficient");
    }

    #[test]
    fn edit_distances() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("qsmk", "qsmk"), 0);
    }

    #[test]
    fn nearest_names_puts_case_first_and_keeps_three() {
        let cols = ["qsmk", "QSMKK", "sex", "age", "qsmx", "qsm"];
        assert_eq!(
            nearest_names("qsmkk", cols),
            "; did you mean one of 'QSMKK', 'qsmk'?"
        );
        let cols = ["wt71", "wt712", "WT711", "wt7111", "wt82"];
        assert_eq!(
            nearest_names("wt711", cols),
            "; did you mean one of 'WT711', 'wt71', 'wt7111'?"
        );
        assert_eq!(nearest_names("Age", ["age", "race"]), "; did you mean 'age'?");
        assert_eq!(nearest_names("weight", ["age", "race"]), "");
    }
}
