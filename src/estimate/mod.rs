//! The estimators, one axis of estimation: each turns an identifying
//! formula into [`Targets`], mean outcomes with per-row influence
//! functions, from the nuisance models in a [`Fits`]. Contrasts between
//! targets (difference, ratio, odds ratio) are formed in one place,
//! [`contrast`], and so are the JSON rows ([`rows`]).
//!
//! Each estimator declares once what it is, in its [`About`]: its name,
//! label, source, the strategies and exposure kinds it serves, the
//! estimands it forms and the nuisance models it needs. The pipeline, the
//! reports and the help read that declaration; nothing lists the
//! estimators a second time.
//!
//! Estimators: [`Regression`] (standardization, the parametric g-formula),
//! [`Ipw`] (Hajek or Horvitz-Thompson weighting; a marginal structural
//! model for a dose), [`Aipw`] (doubly robust), [`FrontDoor`] (Pearl's
//! front-door formula). [`diagnostics()`] and [`sensitivity_inputs`] serve
//! the report.
//!
//! Every estimate is only as valid as the declared graph and the usual
//! assumptions: no unmeasured confounding beyond the graph, positivity,
//! consistency, and correctly specified models.

mod aipw;
pub mod contrast;
mod diagnostics;
mod frontdoor;
mod heterogeneity;
mod ipw;
mod km;
mod regression;
mod result;
mod sensitivity;
mod targets;

pub use aipw::Aipw;
pub use contrast::{ContrastLabel, ContrastSpec, Horizon};
pub use diagnostics::{
    Balance, Diagnostics, DoseDiagnostics, LevelDiagnostics, PropensityDiagnostics, Range, Summary,
    WeightDiagnostics, diagnostics, dose_diagnostics, level_diagnostics,
};
pub use frontdoor::FrontDoor;
pub use heterogeneity::{Heterogeneity, heterogeneity};
pub use ipw::Ipw;
pub use km::Km;
pub use regression::Regression;
pub use result::{Estimate, Means, SubgroupLevel, z_value};
pub use sensitivity::{SensitivityInputs, TermStat, level_coefficients, sample_sd, sensitivity_inputs};
pub use targets::{ExposureKind, Points, Serves, Target, Targets};

pub use crate::problem::{Estimand, Missing, Problem, Scale, Spec};

use crate::identify::Strategy;
use crate::learn::{Fits, Needs};
use crate::{Error, Result, Setting};

/// What an estimator is, declared once.
#[derive(Debug, Clone, Copy)]
pub struct About {
    /// Its name in output and in the method list (`regression`, `ipw`, ...).
    pub name: &'static str,
    /// Its label in reports ("regression (standardization)").
    pub label: &'static str,
    /// The identification strategies it serves.
    pub strategies: &'static [Strategy],
    /// The exposure kinds it serves.
    pub serves: &'static [Serves],
    /// The exposure kinds for which it takes row weights: sampling
    /// weights, and the inverse probability weights of an observed outcome
    /// (rows whose outcome is missing).
    pub weighted: &'static [Serves],
    /// The estimands it forms.
    pub estimands: &'static [Estimand],
    /// The nuisance models it needs.
    pub needs: Needs,
    /// Run by default when it applies.
    pub default: bool,
    /// Whether it takes a time-to-event outcome.
    pub time_to_event: TimeToEvent,
}

/// Whether an estimator takes a time-to-event outcome.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeToEvent {
    /// Only other outcomes.
    No,
    /// Both kinds.
    Also,
    /// Only time-to-event outcomes.
    Only,
    /// Only time-to-event outcomes, without censoring weights (its weights
    /// are fixed in time).
    OnlyFixedWeights,
}

impl TimeToEvent {
    /// Does it take the outcome of `p`?
    pub fn takes(self, p: &Problem) -> bool {
        match self {
            TimeToEvent::No => p.survival.is_none(),
            TimeToEvent::Also => true,
            TimeToEvent::Only => p.survival.is_some(),
            TimeToEvent::OnlyFixedWeights => p.survival.as_ref().is_some_and(|s| !s.censoring_weights),
        }
    }
}

/// An estimator.
pub trait Estimator: Sync {
    /// What it is.
    fn about(&self) -> &'static About;
    /// How it was carried out and its source, one sentence for a paper's
    /// methods paragraph, for this exposure kind.
    fn methods_sentence(&self, kind: &ExposureKind) -> String;
    /// The problem's targets under frequency weights `freq` (`None`: all
    /// ones), from fits made under the same weights; no influence
    /// functions (what a bootstrap replicate needs).
    fn point(&self, p: &Problem, fits: &Fits, freq: Option<&[f64]>) -> Result<Points>;
    /// The full-sample targets with their influence functions, from the
    /// full-sample fits.
    fn targets(&self, p: &Problem, fits: &Fits) -> Result<Targets>;
}

/// Every estimator, in the order of the method list.
pub const ESTIMATORS: [&dyn Estimator; 6] = [
    &Regression,
    &Ipw {
        horvitz_thompson: false,
    },
    &Ipw {
        horvitz_thompson: true,
    },
    &Aipw,
    &FrontDoor,
    &Km,
];

/// Every method name [`by_name`] accepts.
pub fn names() -> Vec<&'static str> {
    ESTIMATORS.iter().map(|e| e.about().name).collect()
}

/// The estimator called `name`.
pub fn by_name(name: &str) -> Result<&'static dyn Estimator> {
    ESTIMATORS
        .iter()
        .copied()
        .find(|e| e.about().name == name)
        .ok_or_else(|| {
            Error::option(
                Setting::Method,
                format!("'{name}': expected one of {}", names().join(", ")),
            )
        })
}

/// Why `e` does not apply to `p` under `strategy`, if it does not.
pub fn refusal(e: &dyn Estimator, p: &Problem, strategy: Strategy) -> Option<Error> {
    let a = e.about();
    let fits_strategy = |x: &About| x.strategies.contains(&strategy);
    let serves = |x: &About| x.serves.iter().any(|s| s.covers(&p.kind));
    // The estimators that pass `keep`, named for the message.
    let others = |keep: &dyn Fn(&About) -> bool| -> String {
        let names: Vec<&str> = ESTIMATORS
            .iter()
            .map(|x| x.about())
            .filter(|x| keep(x))
            .map(|x| x.name)
            .collect();
        names.join(", ")
    };
    let takes = |x: &About| x.time_to_event.takes(p);
    let message = if !takes(a) {
        if p.survival.as_ref().is_some_and(|s| s.censoring_weights) && a.time_to_event != TimeToEvent::No {
            format!(
                "'{}' weights each row the same at every time, so it does not take censoring weights (with \
                 them: {})",
                a.name,
                others(&|x| takes(x) && fits_strategy(x))
            )
        } else if p.survival.is_some() {
            format!(
                "'{}' does not take a time-to-event outcome (for one: {})",
                a.name,
                others(&|x| takes(x) && fits_strategy(x))
            )
        } else {
            format!(
                "'{}' needs a time-to-event outcome: a follow-up time column with the outcome as the event \
                 indicator",
                a.name
            )
        }
    } else if !fits_strategy(a) {
        format!(
            "'{}' does not fit the {} strategy of this graph (it takes: {})",
            a.name,
            strategy.name(),
            others(&fits_strategy)
        )
    } else if !serves(a) {
        format!(
            "'{}' does not serve a {} exposure such as '{}' (for it: {})",
            a.name,
            p.kind.words(),
            p.spec.exposure,
            others(&|x| takes(x) && fits_strategy(x) && serves(x))
        )
    } else if p.weights.is_some() && !a.weighted.iter().any(|s| s.covers(&p.kind)) {
        format!(
            "'{}' does not take sampling weights for a {} exposure such as '{}' (with sampling weights: {})",
            a.name,
            p.kind.words(),
            p.spec.exposure,
            others(&|x| takes(x) && fits_strategy(x) && x.weighted.iter().any(|s| s.covers(&p.kind)))
        )
    } else if p.observed.is_some() && !a.weighted.iter().any(|s| s.covers(&p.kind)) {
        format!(
            "'{}' does not weight for a missing outcome with a {} exposure such as '{}' (when weighting for \
             it: {})",
            a.name,
            p.kind.words(),
            p.spec.exposure,
            others(&|x| fits_strategy(x) && x.weighted.iter().any(|s| s.covers(&p.kind)))
        )
    } else if !a.estimands.contains(&p.spec.estimand) {
        let forms: Vec<String> = a.estimands.iter().map(|e| e.to_string()).collect();
        format!(
            "'{}' estimates the {} only; for the {}: {}",
            a.name,
            forms.join(" and "),
            p.spec.estimand,
            others(&|x| takes(x) && fits_strategy(x) && serves(x) && x.estimands.contains(&p.spec.estimand))
        )
    } else {
        return None;
    };
    Some(Error::option(Setting::Method, message))
}

/// The default estimators for `p` under `strategy`: every one marked
/// default that applies.
pub fn applicable(p: &Problem, strategy: Strategy) -> Vec<&'static dyn Estimator> {
    ESTIMATORS
        .iter()
        .copied()
        .filter(|e| e.about().default && refusal(*e, p, strategy).is_none())
        .collect()
}

/// The nuisance models `estimators` need together.
pub fn needs(estimators: &[&dyn Estimator]) -> Needs {
    estimators
        .iter()
        .fold(Needs::default(), |n, e| n.union(e.about().needs))
}

/// The estimate rows of `e` on `p`: one per contrast of the problem that
/// the estimator's targets form, with the sandwich interval; and the
/// targets themselves (for curves).
pub fn rows(e: &dyn Estimator, p: &Problem, fits: &Fits) -> Result<(Vec<Estimate>, Targets)> {
    let mut t = e.targets(p, fits)?;
    let variance = contrast::Variance::of(p, &t);
    let subgroup = p.subgroup_level();
    let mut out = Vec::new();
    for c in p.contrasts() {
        let scale = c.scale(p.spec.scale);
        let Some(formed) = contrast::form(&t, &c, scale, p.spec.level, &variance) else {
            continue;
        };
        // A time-to-event ratio with no events by its horizon in an arm is
        // left out with a warning; the other rows stand.
        let f = match (formed, c.horizon) {
            (Err(err), Some(h)) => {
                t.warnings.push(format!(
                    "no {} {} at time {}: {err}",
                    h.measure.words(),
                    h.scale,
                    crate::problem::short_number(h.time)
                ));
                continue;
            }
            (f, _) => f?,
        };
        let within = subgroup
            .as_ref()
            .map_or(String::new(), |s| format!(" in {} = {}", s.variable, s.level));
        finite_result(
            &[f.estimate, f.std_error, f.ci[0], f.ci[1]],
            &match &c.label {
                Some(l) => format!("the {} estimate ({}){within}", e.about().name, l.words()),
                None => format!("the {} estimate{within}", e.about().name),
            },
        )?;
        out.push(Estimate {
            method: e.about().name.into(),
            estimand: p.spec.estimand,
            scale,
            horizon: c.horizon.map(|h| h.time),
            measure: c.horizon.map(|h| h.measure),
            estimate: f.estimate,
            std_error: f.std_error,
            ci: f.ci,
            // Cluster-robust when the problem has clusters (the JSON's
            // `design.cluster` says so; the contract keeps the name).
            ci_method: "sandwich".into(),
            fraction_missing_information: None,
            df: None,
            level: p.spec.level,
            means: (!t.means_hidden).then(|| Means {
                exposed: f.means.0,
                unexposed: f.means.1,
                labels: c.label.as_ref().map(ContrastLabel::values),
            }),
            notes: t.notes.clone(),
            warnings: t.warnings.clone(),
            spec: c,
            subgroup: subgroup.clone(),
        });
    }
    Ok((out, t))
}

/// The one guard between the numbers an estimator forms and a result
/// that is printed: every value of `what` (an estimate, its standard
/// error and interval, a curve point, a sensitivity number) must be a
/// finite number, else an error that says so instead of "NaN" or "inf" in
/// any format. Within the range of the data every fit is scale-free (see
/// [`crate::data::Design`]), so a value that is not finite comes from the
/// data themselves (values near the largest a double holds) or from
/// settings far from them.
pub fn finite_result(values: &[f64], what: &str) -> Result<()> {
    if values.iter().all(|v| v.is_finite()) {
        return Ok(());
    }
    Err(Error::input(format!(
        "{what} is not a finite number (its computation exceeds the range of double-precision values): \
         check the units of the outcome and of the exposure, and that the doses or levels compared lie \
         within the data"
    )))
}

/// A replicate's contrast values, in the order of [`rows`] for the same
/// estimator, then its curve points: NaN where one cannot be formed.
pub fn replicate(points: &Points, p: &Problem, row_contrasts: &[ContrastSpec], curve: &[Target]) -> Vec<f64> {
    let mut v: Vec<f64> = row_contrasts
        .iter()
        .map(|c| contrast::point(points, c, c.scale(p.spec.scale)))
        .collect();
    v.extend(curve.iter().map(|&t| points.get(t).unwrap_or(f64::NAN)));
    v
}

/// One estimator used on its own, for library users: it fits the
/// nuisance models it needs itself and reports the problem's first
/// contrast (the only one for a binary exposure).
#[derive(Clone, Copy)]
pub struct Method(pub &'static dyn Estimator);

/// The estimator called `name`, to use on its own.
pub fn method(name: &str) -> Result<Method> {
    by_name(name).map(Method)
}

impl Method {
    /// The problem's strategy as far as an estimator can tell: front-door
    /// when the problem has mediators.
    fn strategy(p: &Problem) -> Strategy {
        if p.mediators.is_empty() {
            Strategy::Backdoor
        } else {
            Strategy::Frontdoor
        }
    }

    /// The full-sample fits this estimator needs.
    pub fn fits(&self, p: &Problem) -> Fits {
        Fits::fit(p, p.sampling(), None, self.0.about().needs)
    }

    /// The full-sample estimate of the first contrast.
    pub fn estimate(&self, p: &Problem) -> Result<Estimate> {
        if let Some(e) = refusal(self.0, p, Self::strategy(p)) {
            return Err(e);
        }
        let (rows, _) = rows(self.0, p, &self.fits(p))?;
        rows.into_iter()
            .next()
            .ok_or_else(|| Error::Internal(format!("{} forms no contrast here", self.0.about().name)))
    }

    /// The first contrast under frequency weights `freq`, its models
    /// started from the full-sample `full` when given.
    pub fn point(&self, p: &Problem, freq: Option<&[f64]>, full: Option<&Fits>) -> Result<f64> {
        if let Some(e) = refusal(self.0, p, Self::strategy(p)) {
            return Err(e);
        }
        let w = p.fit_weights(freq);
        let fits = Fits::fit(p, w.as_deref(), full, self.0.about().needs);
        let points = self.0.point(p, &fits, w.as_deref())?;
        let c = p
            .contrasts()
            .into_iter()
            .next()
            .ok_or_else(|| Error::Internal("no contrast".into()))?;
        let scale = c.scale(p.spec.scale);
        let v = contrast::point(&points, &c, scale);
        if v.is_finite() {
            Ok(v)
        } else {
            // Say why, as the full-sample estimate would.
            contrast::effect(
                scale,
                points.get(c.level).unwrap_or(f64::NAN),
                points.get(c.reference).unwrap_or(f64::NAN),
            )
        }
    }
}
