//! Sensitivity of an estimate to unmeasured confounding.
//!
//! - [`evalue`]: the E-value of VanderWeele and Ding (2017), on the
//!   risk-ratio scale, with the usual conversions from odds ratios, hazard
//!   ratios and standardized differences.
//! - [`robustness`]: robustness values, bias-adjusted estimates and
//!   benchmark bounds in terms of partial R², after Cinelli and Hazlett
//!   (2020), for a linear-regression coefficient.
//!
//! These numbers describe how strong a confounder left out of the graph
//! would have to be; they do not show that there is none.

pub mod evalue;
pub mod robustness;

use serde::Serialize;

/// The `sensitivity` block of the JSON contract for an estimate: the
/// E-value and, for a linear-outcome regression estimate, the robustness
/// value; `null` where it does not apply.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SensitivityBlock {
    /// The E-value, when the estimate has a risk-ratio reading.
    pub evalue: Option<evalue::EValue>,
    /// Robustness values, for a linear-regression coefficient.
    pub robustness_value: Option<robustness::RobustnessValue>,
    /// Benchmark bounds from observed covariates (with the robustness
    /// value of an analysis); absent where they do not apply.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub benchmarks: Option<robustness::BenchmarkTable>,
    /// With several contrasts (a categorical exposure): each contrast's
    /// E-value and robustness value.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub by_contrast: Vec<ContrastSensitivity>,
    /// Time to event: the E-value of each risk ratio of the first method,
    /// per horizon (and contrast of levels).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub by_horizon: Vec<HorizonSensitivity>,
}

/// The E-value of a time-to-event risk ratio at one horizon.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HorizonSensitivity {
    /// The method whose estimate is read.
    pub method: String,
    /// The horizon.
    pub horizon: f64,
    /// The two levels compared (categorical exposure).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub contrast: Option<crate::estimate::ContrastLabel>,
    /// The risk ratio.
    pub risk_ratio: f64,
    /// Its E-value (a risk ratio needs no conversion, whatever the risk).
    pub evalue: evalue::EValue,
}

/// The sensitivity of one contrast.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ContrastSensitivity {
    /// The two levels compared.
    pub contrast: crate::estimate::ContrastLabel,
    /// The method whose estimate is read.
    pub method: String,
    /// Its E-value.
    pub evalue: Option<evalue::EValue>,
    /// The robustness value of its outcome-model coefficient (linear
    /// outcome).
    pub robustness_value: Option<robustness::RobustnessValue>,
}
