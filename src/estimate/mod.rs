//! The estimate stage: each method behind one small trait, [`Method`].
//!
//! A [`Problem`] is prepared once from the data and a [`Spec`]; every
//! method reads it. [`Method::point`] gives the point estimate under
//! frequency weights (the bootstrap calls it in parallel, warm-started from
//! the full-sample fit; a replicate whose model fails returns an error, to
//! be counted); [`Method::estimate`] gives the full-sample estimate with an
//! analytic (sandwich) standard error and interval.
//!
//! Methods: [`Regression`] (standardization, the parametric g-formula),
//! [`Ipw`] (Hajek or Horvitz-Thompson weighting), [`Aipw`] (doubly robust),
//! [`FrontDoor`] (Pearl's front-door formula). Weighting methods need a
//! binary exposure; a continuous exposure is estimated by regression only.
//! [`diagnostics()`] and [`sensitivity_inputs`] serve the report.
//!
//! Every estimate is only as valid as the declared graph and the usual
//! assumptions: no unmeasured confounding beyond the graph, positivity,
//! consistency, and correctly specified models.

mod aipw;
mod contrast;
mod diagnostics;
mod frontdoor;
mod ipw;
mod outcome;
mod problem;
mod propensity;
mod regression;
mod result;
mod sensitivity;

pub use aipw::Aipw;
pub use diagnostics::{
    Balance, Diagnostics, PropensityDiagnostics, Range, Summary, WeightDiagnostics, diagnostics,
};
pub use frontdoor::FrontDoor;
pub use ipw::Ipw;
pub use problem::{Problem, Spec};
pub use regression::Regression;
pub use result::{Estimand, Estimate, Means, Scale, Warm, z_value};
pub use sensitivity::{SensitivityInputs, TermStat, sensitivity_inputs};

use crate::{Error, Result, Setting};

/// An estimation method.
pub trait Method: Sync {
    /// The method's name in output (`regression`, `ipw`, ...).
    fn name(&self) -> &'static str;
    /// Point estimate under frequency weights (`None` = all ones),
    /// warm-started from `warm`.
    fn point(&self, p: &Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<f64>;
    /// Full-sample estimate with analytic standard error, interval and
    /// method-specific notes.
    fn estimate(&self, p: &Problem) -> Result<Estimate>;
}

/// Every method name [`method`] accepts.
pub const METHODS: [&str; 5] = ["regression", "ipw", "ipw-ht", "aipw", "frontdoor"];

/// The method called `name`.
pub fn method(name: &str) -> Result<Box<dyn Method>> {
    Ok(match name {
        "regression" => Box::new(Regression),
        "ipw" => Box::new(Ipw {
            horvitz_thompson: false,
        }),
        "ipw-ht" => Box::new(Ipw {
            horvitz_thompson: true,
        }),
        "aipw" => Box::new(Aipw),
        "frontdoor" => Box::new(FrontDoor),
        _ => {
            return Err(Error::option(
                Setting::Method,
                format!("'{name}': expected one of {}", METHODS.join(", ")),
            ));
        }
    })
}

/// The default methods for a problem: `frontdoor` when it has mediators;
/// otherwise `regression`, plus `ipw` and (for the ATE) `aipw` when the
/// exposure is binary.
pub fn applicable(p: &Problem) -> Vec<&'static str> {
    if !p.mediators.is_empty() {
        return vec!["frontdoor"];
    }
    let mut m = vec!["regression"];
    if p.binary_exposure() {
        m.push("ipw");
        if p.spec.estimand == Estimand::Ate {
            m.push("aipw");
        }
    }
    m
}
