//! The estimate record the JSON `estimates` items are made from.

use super::contrast::{ContrastLabel, ContrastSpec};
use crate::problem::{Estimand, Scale};
use serde::ser::SerializeMap;
use serde::{Serialize, Serializer};

/// The mean outcome under each of the two exposure settings compared.
/// Serialised with the keys `exposed` and `unexposed`, or, for a contrast
/// of levels or doses, with the two values as keys.
#[derive(Debug, Clone, PartialEq)]
pub struct Means {
    /// Mean outcome had everyone in the estimand's population been exposed
    /// (a categorical exposure: at the level compared; a continuous one:
    /// at the second dose of the contrast, or one unit above the observed).
    pub exposed: f64,
    /// ... had they been unexposed (the reference level; the first dose).
    pub unexposed: f64,
    /// The keys, (level, reference), for a contrast of levels or doses.
    pub labels: Option<[String; 2]>,
}

fn serialize_label<S: Serializer>(spec: &ContrastSpec, s: S) -> std::result::Result<S::Ok, S::Error> {
    spec.label.serialize(s)
}

impl Estimate {
    /// The two levels or doses compared, when the contrast is labelled.
    pub fn contrast(&self) -> Option<&ContrastLabel> {
        self.spec.label.as_ref()
    }
}

impl Serialize for Means {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(2))?;
        match &self.labels {
            Some([a, b]) => {
                m.serialize_entry(a, &self.exposed)?;
                m.serialize_entry(b, &self.unexposed)?;
            }
            None => {
                m.serialize_entry("exposed", &self.exposed)?;
                m.serialize_entry("unexposed", &self.unexposed)?;
            }
        }
        m.end()
    }
}

/// The level of the subgroup column an estimate is within (the JSON
/// rows' and curves' `subgroup`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct SubgroupLevel {
    /// The subgroup column.
    pub variable: String,
    /// The level's label.
    pub level: String,
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
    /// The contrast reported; the JSON shows its label as `contrast`
    /// (the two levels or doses compared), absent when it has none.
    #[serde(
        rename = "contrast",
        skip_serializing_if = "ContrastSpec::unlabelled",
        serialize_with = "serialize_label"
    )]
    pub spec: ContrastSpec,
    /// The subgroup the effect is within (absent: everyone).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub subgroup: Option<SubgroupLevel>,
    /// Time to event: the time at which the arms are compared.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub horizon: Option<f64>,
    /// Time to event: what is compared (risk, survival, restricted mean).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub measure: Option<crate::survival::Measure>,
    /// Point estimate on `scale`.
    pub estimate: f64,
    /// Standard error on `scale` (delta method; for ratio and odds the
    /// interval is formed on the log scale).
    pub std_error: f64,
    /// Confidence interval.
    pub ci: [f64; 2],
    /// How the interval was made (`sandwich`).
    pub ci_method: String,
    /// With multiple imputation: the fraction of missing information
    /// (see [`crate::infer::pool`]).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fraction_missing_information: Option<f64>,
    /// With multiple imputation: the Barnard-Rubin degrees of freedom of
    /// the pooled interval.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub df: Option<f64>,
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
}

/// The two-sided normal quantile for `level` (e.g. 1.96 for 0.95), from
/// [`crate::dist::normal_critical`]; NaN for a level outside (0, 1), which
/// the options refuse before any estimation.
pub fn z_value(level: f64) -> f64 {
    crate::dist::normal_critical(level).unwrap_or(f64::NAN)
}
