//! IP-weighted Kaplan-Meier survival curves for a time-to-event outcome:
//! each exposure level's Kaplan-Meier curve over the exact follow-up
//! times, every row weighted by the inverse of its propensity for the
//! level it had (Xie & Liu, Stat Med 2005;24:3089-3110, from memory; the
//! computations are in [`crate::survival::methods::km`]).

use super::{About, Estimator, ExposureKind, Points, Serves, Targets, TimeToEvent};
use crate::Result;
use crate::identify::Strategy;
use crate::learn::{Fits, Needs};
use crate::problem::{Estimand, Problem};
use crate::survival::methods;

/// The IP-weighted Kaplan-Meier estimator.
pub struct Km;

static ABOUT: About = About {
    name: "km",
    label: "IP-weighted Kaplan-Meier",
    strategies: &[Strategy::Backdoor],
    serves: &[Serves::Binary, Serves::Levels],
    weighted: &[Serves::Binary, Serves::Levels],
    estimands: &[Estimand::Ate],
    needs: Needs {
        outcome: false,
        exposure: true,
    },
    default: true,
    time_to_event: TimeToEvent::OnlyFixedWeights,
};

impl Estimator for Km {
    fn about(&self) -> &'static About {
        &ABOUT
    }

    fn methods_sentence(&self, _kind: &ExposureKind) -> String {
        methods::sentence("km")
    }

    fn point(&self, p: &Problem, fits: &Fits, freq: Option<&[f64]>) -> Result<Points> {
        let w = methods::weights(p, fits, freq)?;
        let t = methods::km(p, &w, false)?;
        Ok(Points {
            targets: t.targets,
            values: t.values,
        })
    }

    fn targets(&self, p: &Problem, fits: &Fits) -> Result<Targets> {
        let w = methods::weights(p, fits, p.sampling())?;
        let mut t = methods::km(p, &w, true)?;
        t.notes.push(
            "the standard errors take the IP weights as known (the usual sandwich of the weighted \
             Kaplan-Meier curve); a bootstrap interval also counts their estimation"
                .into(),
        );
        Ok(t)
    }
}
