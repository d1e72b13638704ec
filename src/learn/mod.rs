//! The nuisance models, one axis of estimation: each fits on the problem's
//! rows under frequency weights, optionally starting from a full-sample
//! fit, and predicts what the estimators need.
//!
//! - [`OutcomeFit`]: least squares or logistic regression of the outcome on
//!   the exposure terms and the adjustment terms; predictions with the
//!   exposure set to a value.
//! - [`Propensity`]: logistic regression of a binary exposure on the
//!   adjustment terms (scores clipped when asked).
//! - [`LevelPropensity`]: multinomial (baseline-category) logistic
//!   regression of a categorical exposure; one probability per level.
//! - [`DoseDensity`]: a normal linear model of a continuous exposure (the
//!   conditional density) and its marginal normal density.
//!
//! - [`Observed`]: logistic models of a row remaining observed (its
//!   outcome not missing), for inverse probability of observation weights.
//!
//! [`Fits`] holds the models one weight vector (the full sample or one
//! bootstrap resample) needs, fitted once and passed to every estimator
//! evaluated on it: nothing is cached anywhere else. A model that failed
//! is kept as its error, so that only the estimators that need it fail.

mod dose;
mod levels;
mod observed;
mod outcome;
mod propensity;

pub use dose::DoseDensity;
pub use levels::LevelPropensity;
pub use observed::Observed;
pub use outcome::OutcomeFit;
pub use propensity::{Propensity, separating_terms};

use crate::estimate::ExposureKind;
use crate::problem::Problem;
use crate::survival::hazard::Hazard;
use crate::{Error, Result};

/// A nuisance model: fitted on the problem's rows under frequency weights
/// `w` (`None`: all ones), starting from `full`, the full-sample fit, when
/// given (a bootstrap resample).
pub trait Nuisance: Sized {
    /// Fits the model.
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&Self>) -> Result<Self>;
}

/// Which nuisance models an estimator needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Needs {
    /// The outcome model.
    pub outcome: bool,
    /// The exposure model (propensity or dose density, by exposure kind).
    pub exposure: bool,
}

impl Needs {
    /// Both sets of needs.
    pub fn union(self, other: Needs) -> Needs {
        Needs {
            outcome: self.outcome || other.outcome,
            exposure: self.exposure || other.exposure,
        }
    }
}

/// The exposure model of the problem's exposure kind.
#[derive(Debug, Clone)]
pub enum ExposureModel {
    /// Binary exposure: a logistic propensity model.
    Binary(Propensity),
    /// Categorical exposure: a multinomial propensity model.
    Levels(LevelPropensity),
    /// Continuous exposure: a normal conditional density.
    Dose(DoseDensity),
}

impl Nuisance for ExposureModel {
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&Self>) -> Result<Self> {
        Ok(match &p.kind {
            ExposureKind::Binary => {
                let start = match full {
                    Some(ExposureModel::Binary(f)) => Some(f),
                    _ => None,
                };
                ExposureModel::Binary(Propensity::fit(p, w, start)?)
            }
            ExposureKind::Levels(_) => {
                let start = match full {
                    Some(ExposureModel::Levels(f)) => Some(f),
                    _ => None,
                };
                ExposureModel::Levels(LevelPropensity::fit(p, w, start)?)
            }
            ExposureKind::Dose => ExposureModel::Dose(DoseDensity::fit(p, w, None)?),
        })
    }
}

/// The nuisance models fitted under one weight vector.
#[derive(Debug)]
pub struct Fits {
    outcome: Option<Result<OutcomeFit>>,
    exposure: Option<Result<ExposureModel>>,
    observed: Option<Result<Observed>>,
    /// A time-to-event outcome's model: the pooled logistic hazard model
    /// with the adjustment set (in place of the outcome model).
    hazard: Option<Result<Hazard>>,
}

impl Fits {
    /// Fits what `needs` asks for under frequency weights `w`, each model
    /// starting from its fit in `full` when given.
    ///
    /// When some outcomes are missing and weighted for, the models of being
    /// observed are fitted first, on every row, and the outcome model on
    /// the observed rows under `w` times their stabilised weights.
    pub fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&Fits>, needs: Needs) -> Fits {
        let observed = p
            .observed
            .is_some()
            .then(|| Observed::fit(p, w, full.and_then(|f| f.observed().ok().flatten())));
        let outcome = |w: Option<&[f64]>| OutcomeFit::fit(p, w, full.and_then(|f| f.outcome().ok()));
        let survival = p.survival.is_some();
        Fits {
            outcome: (needs.outcome && !survival).then(|| match &observed {
                None => outcome(w),
                Some(Err(_)) => available(&observed, "observation").map(|_| unreachable_fit()),
                Some(Ok(o)) => {
                    let cw: Vec<f64> = (0..p.n())
                        .map(|i| w.map_or(1.0, |w| w[i]) * o.stabilised[i])
                        .collect();
                    outcome(Some(&cw))
                }
            }),
            hazard: (needs.outcome && survival).then(|| {
                crate::survival::methods::standardising_model(p, w, full.and_then(|f| f.hazard().ok()))
            }),
            exposure: needs
                .exposure
                .then(|| ExposureModel::fit(p, w, full.and_then(|f| f.exposure().ok()))),
            observed,
        }
    }

    /// The models of being observed (`None`: every outcome is observed),
    /// or why they failed.
    pub fn observed(&self) -> Result<Option<&Observed>> {
        match &self.observed {
            None => Ok(None),
            some => available(some, "observation").map(Some),
        }
    }

    /// The outcome model, or why it is missing.
    pub fn outcome(&self) -> Result<&OutcomeFit> {
        available(&self.outcome, "outcome")
    }

    /// The hazard model of a time-to-event outcome, or why it is missing.
    pub fn hazard(&self) -> Result<&Hazard> {
        available(&self.hazard, "hazard")
    }

    /// The exposure model, or why it is missing.
    pub fn exposure(&self) -> Result<&ExposureModel> {
        available(&self.exposure, "exposure")
    }

    /// The logistic propensity model of a binary exposure.
    pub fn propensity(&self) -> Result<&Propensity> {
        match self.exposure()? {
            ExposureModel::Binary(m) => Ok(m),
            _ => Err(Error::Internal("no binary propensity model".into())),
        }
    }

    /// The multinomial propensity model of a categorical exposure.
    pub fn levels(&self) -> Result<&LevelPropensity> {
        match self.exposure()? {
            ExposureModel::Levels(m) => Ok(m),
            _ => Err(Error::Internal("no multinomial propensity model".into())),
        }
    }

    /// The density model of a continuous exposure.
    pub fn dose(&self) -> Result<&DoseDensity> {
        match self.exposure()? {
            ExposureModel::Dose(m) => Ok(m),
            _ => Err(Error::Internal("no exposure density model".into())),
        }
    }
}

/// Never called: [`available`] of a failed slot is an error.
fn unreachable_fit() -> OutcomeFit {
    unreachable!("a failed model gives its error")
}

/// The fitted model, or its error told again (every estimator that needs
/// a failed model reports the same reason, with the same exit code).
fn available<'a, T>(slot: &'a Option<Result<T>>, what: &str) -> Result<&'a T> {
    match slot {
        Some(Ok(m)) => Ok(m),
        Some(Err(e)) => Err(match e {
            Error::Separation(m) => Error::Separation(m.clone()),
            Error::Numerical(m) => Error::Numerical(m.clone()),
            Error::Internal(m) => Error::Internal(m.clone()),
            Error::Option { setting, message } => Error::Option {
                setting: *setting,
                message: message.clone(),
            },
            other => Error::Input(other.to_string()),
        }),
        None => Err(Error::Internal(format!("the {what} model was not fitted"))),
    }
}
