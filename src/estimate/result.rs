//! Result types: estimand, scale, and the estimate record the JSON
//! `estimates` items are made from.

use crate::{Error, Result, Setting};
use nalgebra::DVector;
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

impl std::str::FromStr for Estimand {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s.to_ascii_lowercase().as_str() {
            "ate" => Ok(Estimand::Ate),
            "att" => Ok(Estimand::Att),
            "atc" => Ok(Estimand::Atc),
            _ => Err(Error::option(
                Setting::Estimand,
                format!("'{s}': expected ate, att or atc"),
            )),
        }
    }
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

impl std::str::FromStr for Scale {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s.to_ascii_lowercase().as_str() {
            "difference" => Ok(Scale::Difference),
            "ratio" => Ok(Scale::Ratio),
            "odds" => Ok(Scale::Odds),
            _ => Err(Error::option(
                Setting::Scale,
                format!("'{s}': expected difference, ratio or odds"),
            )),
        }
    }
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

/// Model coefficients from a full-sample fit, to start the fits of
/// bootstrap replicates from.
///
/// A warm start made by [`Warm::for_one_resample`] also keeps the models
/// fitted under the weights of the calls it is used in, so that the methods
/// evaluated on one resample fit each model once; use it for one weight
/// vector only. Any other warm start (and every clone) keeps nothing.
#[derive(Debug, Default)]
pub struct Warm {
    /// Propensity-model coefficients.
    pub propensity: Option<DVector<f64>>,
    /// Outcome-model coefficients.
    pub outcome: Option<DVector<f64>>,
    /// Fits under the current resample's weights, when shared.
    pub(crate) shared: Option<Box<super::problem::Cache>>,
}

impl Clone for Warm {
    fn clone(&self) -> Self {
        Warm {
            propensity: self.propensity.clone(),
            outcome: self.outcome.clone(),
            shared: None,
        }
    }
}

impl Warm {
    /// A warm start for one resample, starting from these coefficients (or,
    /// where missing, from `other`'s), whose fits are shared by every method
    /// called with it.
    pub fn for_one_resample(starts: &[Warm]) -> Warm {
        Warm {
            propensity: starts.iter().find_map(|w| w.propensity.clone()),
            outcome: starts.iter().find_map(|w| w.outcome.clone()),
            shared: Some(Box::default()),
        }
    }
}

/// The mean outcome under each of the two exposure settings compared.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Means {
    /// Mean outcome had everyone in the estimand's population been exposed
    /// (for a continuous exposure: under the second value of the contrast).
    pub exposed: f64,
    /// ... had they been unexposed (the first value of the contrast).
    pub unexposed: f64,
}

/// One method's estimate, with its analytic interval.
#[derive(Debug, Clone, Serialize)]
pub struct Estimate {
    /// `regression`, `ipw`, `ipw-ht`, `aipw` or `frontdoor`.
    pub method: String,
    /// The estimand.
    pub estimand: Estimand,
    /// The scale.
    pub scale: Scale,
    /// Point estimate on `scale`.
    pub estimate: f64,
    /// Standard error on `scale` (delta method; for ratio and odds the
    /// interval is formed on the log scale).
    pub std_error: f64,
    /// Confidence interval.
    pub ci: [f64; 2],
    /// How the interval was made (`sandwich`).
    pub ci_method: String,
    /// Confidence level.
    pub level: f64,
    /// Mean outcome under each setting, when the method forms them.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub means: Option<Means>,
    /// Plain statements of how the estimate was made (model forms).
    #[serde(skip)]
    pub notes: Vec<String>,
    /// Warnings for the report's `warnings` list.
    #[serde(skip)]
    pub warnings: Vec<String>,
    /// Full-sample coefficients for warm starts.
    #[serde(skip)]
    pub warm: Warm,
}

/// The two-sided normal quantile for `level` (e.g. 1.96 for 0.95), from
/// [`crate::dist::normal_critical`]; NaN for a level outside (0, 1), which
/// the options refuse before any estimation.
pub fn z_value(level: f64) -> f64 {
    crate::dist::normal_critical(level).unwrap_or(f64::NAN)
}
