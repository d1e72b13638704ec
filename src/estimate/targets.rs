//! What an estimator produces: targets, a vector of named mean outcomes
//! (one per exposure level, per dose of a curve, or under a shift of the
//! exposure), each with its per-row influence function. Every contrast and
//! every interval is made from these (see [`super::contrast`]).

use crate::data::Setting;

/// The exposure as the estimators see it.
#[derive(Debug, Clone, PartialEq)]
pub enum ExposureKind {
    /// Two values coded 0 (unexposed) and 1 (exposed).
    Binary,
    /// Three or more levels coded 0, 1, ...; code 0 is the reference.
    Levels(Vec<String>),
    /// A number (a dose).
    Dose,
}

impl ExposureKind {
    /// The kind's name in words (`binary`, `categorical`, `continuous`).
    pub fn words(&self) -> &'static str {
        match self {
            ExposureKind::Binary => "binary",
            ExposureKind::Levels(_) => "categorical",
            ExposureKind::Dose => "continuous",
        }
    }
}

/// The exposure kinds an estimator serves.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Serves {
    /// A binary exposure.
    Binary,
    /// A categorical exposure of three or more levels.
    Levels,
    /// A continuous exposure.
    Dose,
}

impl Serves {
    /// Does `kind` belong here?
    pub fn covers(self, kind: &ExposureKind) -> bool {
        matches!(
            (self, kind),
            (Serves::Binary, ExposureKind::Binary)
                | (Serves::Levels, ExposureKind::Levels(_))
                | (Serves::Dose, ExposureKind::Dose)
        )
    }
}

/// One target: the mean outcome had the exposure been set so.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Target {
    /// Everyone at level code `k` (binary: 1 exposed, 0 unexposed).
    Level(usize),
    /// Everyone at this dose.
    Dose(f64),
    /// Everyone's exposure raised by one unit from its observed value.
    Shifted,
    /// The exposure as observed.
    Observed,
    /// Time to event: survival at level code `.0` at time `.1`.
    Survival(usize, f64),
    /// Time to event: the risk (1 - survival) at level `.0` by time `.1`.
    Risk(usize, f64),
    /// Time to event: the restricted mean survival time at level `.0` up
    /// to time `.1`.
    Rmst(usize, f64),
}

impl Target {
    /// How the exposure column is filled for this target.
    pub fn setting(self) -> Setting {
        match self {
            Target::Level(k) | Target::Survival(k, _) | Target::Risk(k, _) | Target::Rmst(k, _) => {
                Setting::Fixed(k as f64)
            }
            Target::Dose(x) => Setting::Fixed(x),
            Target::Shifted => Setting::Shift(1.0),
            Target::Observed => Setting::Observed,
        }
    }
}

/// An estimator's targets on the full sample.
#[derive(Debug, Clone, Default)]
pub struct Targets {
    /// What each value is.
    pub targets: Vec<Target>,
    /// The estimated means.
    pub values: Vec<f64>,
    /// Per target, each row's influence, scaled so that
    /// `value - truth ~ sum_i influence_i` (hence `Var = sum_i influence_i^2`).
    pub influence: Vec<Vec<f64>>,
    /// The coefficients of the linear outcome model the targets come from,
    /// when they come from one alone (regression standardization of a
    /// continuous outcome): the small-sample factor of a clustered
    /// variance uses it.
    pub linear_terms: Option<usize>,
    /// The means are not reported as such (the front-door product of
    /// coefficients forms a one-unit effect, not two means).
    pub means_hidden: bool,
    /// Plain statements of how the targets were made.
    pub notes: Vec<String>,
    /// Warnings for the report.
    pub warnings: Vec<String>,
}

impl Targets {
    /// The position of `t`, if the estimator formed it.
    pub fn position(&self, t: Target) -> Option<usize> {
        self.targets.iter().position(|&u| u == t)
    }

    /// Adds one target.
    pub fn push(&mut self, t: Target, value: f64, influence: Vec<f64>) {
        self.targets.push(t);
        self.values.push(value);
        self.influence.push(influence);
    }
}

/// Targets under frequency weights, without influence functions (what a
/// bootstrap replicate needs).
#[derive(Debug, Clone, Default)]
pub struct Points {
    /// What each value is.
    pub targets: Vec<Target>,
    /// The estimated means.
    pub values: Vec<f64>,
}

impl Points {
    /// The value of `t`, if formed.
    pub fn get(&self, t: Target) -> Option<f64> {
        self.targets.iter().position(|&u| u == t).map(|k| self.values[k])
    }
}
