//! Time-to-event outcomes: follow-up times with an event indicator, people
//! censored when their follow-up ends.
//!
//! - [`Survival`]: the follow-up set up once with the problem: the time
//!   column checked (positive, no missing cell), the event indicator coded
//!   0/1, the horizons at which risks are compared, the period width of the
//!   discrete-time hazard models, the curve's times and the numbers at risk.
//! - [`km`]: the Kaplan-Meier estimator under known weights (IP weights)
//!   over the exact times, with its influence function.
//! - [`hazard`]: pooled logistic hazard models over periods (person-periods
//!   formed on the fly, never copied), the survival curves they imply
//!   (IP-weighted, or standardised over the adjustment set: the parametric
//!   g-formula), with influence functions.
//!
//! Every survival estimate is a vector of targets ([`Target::Survival`],
//! [`Target::Risk`], [`Target::Rmst`]) per exposure level, and the rows are
//! contrasts of them, formed by [`crate::estimate::contrast`] like any
//! other. An estimate is only as valid as the declared graph and the usual
//! assumptions, here also independent censoring given what the censoring
//! weights (if any) condition on.

pub mod hazard;
pub mod km;
pub mod methods;

use crate::data::{Dataset, Sample, value_text};
use crate::error::{Advice, Remedy, Setting};
use crate::estimate::Target;
use crate::problem::{Spec, short_number};
use crate::{Error, Result};
use serde::Serialize;

/// Fewest periods the default period width gives.
pub const MIN_PERIODS: usize = 10;
/// Most periods the default period width gives.
pub const MAX_PERIODS: usize = 100;
/// Most periods a given width may make (each is a row per person at risk).
pub const MAX_GIVEN_PERIODS: usize = 1000;
/// Largest share of the events one period of the default width may hold
/// (a choice, no source: with a smooth function of time in the hazard
/// model the estimates change little once periods are this fine).
pub const MAX_EVENT_SHARE: f64 = 0.05;
/// Steps of a survival curve from time 0 to the last horizon (the horizons
/// are added).
pub const CURVE_STEPS: usize = 40;
/// Most horizons (each adds rows and curve statistics).
pub const MAX_HORIZONS: usize = 20;
/// Times at which the numbers at risk are counted, besides time 0.
pub const AT_RISK_TICKS: usize = 5;
/// Relative slack when a time is put into a period (so that 120 / 1 is 120
/// whole periods despite rounding).
const SLACK: f64 = 1e-9;

/// What a time-to-event row compares.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Measure {
    /// 1 - survival at the horizon.
    #[serde(rename = "risk")]
    Risk,
    /// Survival at the horizon.
    #[serde(rename = "survival")]
    Survival,
    /// The area under the survival curve up to the horizon.
    #[serde(rename = "restricted mean")]
    RestrictedMean,
}

impl Measure {
    /// The measure in words.
    pub fn words(self) -> &'static str {
        match self {
            Measure::Risk => "risk",
            Measure::Survival => "survival",
            Measure::RestrictedMean => "restricted mean survival time",
        }
    }
}

/// The numbers at risk in one exposure group.
#[derive(Debug, Clone, Serialize)]
pub struct AtRisk {
    /// The exposure level (`exposed`/`unexposed` for a binary exposure).
    pub level: String,
    /// People still followed (time at least the tick) at each tick.
    pub counts: Vec<usize>,
}

/// The follow-up of a time-to-event outcome (the JSON `survival` block).
#[derive(Debug, Clone, Serialize)]
pub struct Survival {
    /// The follow-up time column.
    pub time: String,
    /// The outcome value that marks an event.
    pub event: String,
    /// The outcome value that marks censoring.
    pub censored: String,
    /// Rows with an event.
    pub events: usize,
    /// Rows censored.
    pub censored_rows: usize,
    /// The longest follow-up time.
    pub end_of_follow_up: f64,
    /// The times at which risks are compared.
    pub horizons: Vec<f64>,
    /// How the horizons were chosen (`given` or the default rule).
    pub horizons_rule: &'static str,
    /// The width of the periods of the pooled logistic hazard models.
    pub period: f64,
    /// Periods up to the last horizon.
    pub periods: usize,
    /// How the width was chosen.
    pub period_rule: &'static str,
    /// Inverse probability of censoring weights are used.
    pub censoring_weights: bool,
    /// The times at which people at risk are counted.
    pub at_risk_times: Vec<f64>,
    /// The numbers at risk per exposure group.
    pub at_risk: Vec<AtRisk>,
    /// Each used row's follow-up time.
    #[serde(skip)]
    pub times: Vec<f64>,
    /// The times of the survival curves (0, steps to the last horizon, and
    /// the horizons).
    #[serde(skip)]
    pub grid: Vec<f64>,
}

/// The event indicator of `spec.outcome` over `sample`'s rows as 0/1, with
/// the labels (event, censored): 1/0 numbers, or two values of which
/// `spec.event` marks the event.
pub fn event_indicator(data: &Dataset, sample: &Sample, spec: &Spec) -> Result<(Vec<f64>, String, String)> {
    let name = &spec.outcome;
    let col = data.require(name)?;
    let src = data.source();
    let label = |i: usize| -> String {
        match col.codes() {
            Some((codes, levels)) => levels[codes[i] as usize].clone(),
            None => value_text(col.values[i]),
        }
    };
    match &spec.event {
        Some(ev) => {
            let mut seen: Vec<String> = Vec::new();
            for &i in &sample.keep {
                let l = label(i);
                if !seen.contains(&l) {
                    seen.push(l);
                }
            }
            let same = |l: &String| {
                l == ev || matches!((l.parse::<f64>(), ev.parse::<f64>()), (Ok(a), Ok(b)) if a == b)
            };
            if !seen.iter().any(same) {
                return Err(Error::option(
                    Setting::Event,
                    format!(
                        "'{ev}' does not occur in the event indicator '{name}' (its values: {})",
                        seen.iter().take(5).cloned().collect::<Vec<_>>().join(", ")
                    ),
                ));
            }
            if seen.len() > 2 {
                seen.sort();
                return Err(Error::input(format!(
                    "{src}: the event indicator '{name}' takes {} values ({}{}): it needs two, the event \
                     value '{ev}' and one for censoring",
                    seen.len(),
                    seen.iter().take(5).cloned().collect::<Vec<_>>().join(", "),
                    if seen.len() > 5 { ", ..." } else { "" }
                )));
            }
            let other = seen.iter().find(|l| !same(l)).cloned().unwrap_or_default();
            let v: Vec<f64> = sample
                .keep
                .iter()
                .map(|&i| f64::from(u8::from(same(&label(i)))))
                .collect();
            Ok((v, ev.clone(), other))
        }
        None => {
            for (r, &i) in sample.keep.iter().enumerate() {
                let ok = col.codes().is_none() && (col.values[i] == 0.0 || col.values[i] == 1.0);
                if !ok {
                    let _ = r;
                    return Err(Error::input(format!(
                        "{src}: the event indicator '{name}' is '{}' in data row {} (counting rows after \
                         the header): 1 marks an event and 0 censoring",
                        label(i),
                        i + 1
                    ))
                    .advised(Advice::one(
                        Remedy::Give(Setting::Event),
                        "to name the value that marks an event when the codes are others",
                    )));
                }
            }
            let v: Vec<f64> = sample.keep.iter().map(|&i| col.values[i]).collect();
            Ok((v, "1".into(), "0".into()))
        }
    }
}

/// The follow-up times of column `name` over `sample`'s rows: every cell
/// of the file must be a positive number (a row is never dropped for a
/// missing time).
pub fn follow_up(data: &Dataset, sample: &Sample, name: &str) -> Result<Vec<f64>> {
    let col = data.require(name)?;
    let src = data.source();
    let v = col.numeric(src, name, "follow-up time")?;
    if let Some((line, c)) = col.first_missing {
        return Err(Error::input(format!(
            "{src}:{line}:{c}: the follow-up time in column '{name}' is missing; every row needs its time \
             (the last time the person was seen, with or without the event)"
        )));
    }
    if let Some(c) = &col.first_nonpositive {
        return Err(Error::input(format!(
            "{src}:{}:{}: the follow-up time in column '{name}' is '{}'; times must be positive (an event \
             at the very start of follow-up is given a small positive time, in the column's unit)",
            c.line, c.column, c.text
        )));
    }
    Ok(sample.keep.iter().map(|&i| v[i]).collect())
}

/// Quantile `q` of sorted `v` by linear interpolation between order
/// statistics (common practice).
fn quantile(v: &[f64], q: f64) -> f64 {
    let h = q * (v.len() - 1) as f64;
    let (lo, hi) = (h.floor() as usize, h.ceil() as usize);
    v[lo] + (h - lo as f64) * (v[hi] - v[lo])
}

/// Whole periods of width `w` completed by time `t`.
pub fn completed(t: f64, w: f64) -> usize {
    (t / w * (1.0 + SLACK)).floor().max(0.0) as usize
}

/// Periods of width `w` a follow-up time `t` reaches into: the period
/// holding `t` is `reached(t) - 1` (period k covers (k w, (k+1) w]).
pub fn reached(t: f64, w: f64) -> usize {
    (t / w * (1.0 - SLACK)).ceil().max(1.0) as usize
}

impl Survival {
    /// Sets up the follow-up: `times` and `events` (0/1) of the used rows,
    /// `groups` each row's exposure code with the group labels.
    pub fn new(
        spec: &Spec,
        times: Vec<f64>,
        events: &[f64],
        labels: (String, String),
        groups: (&[f64], Vec<String>),
    ) -> Result<Survival> {
        let name = spec.time.clone().unwrap_or_default();
        let end = times.iter().fold(0.0f64, |m, &t| m.max(t));
        let mut event_times: Vec<f64> = times
            .iter()
            .zip(events)
            .filter(|(_, e)| **e == 1.0)
            .map(|(t, _)| *t)
            .collect();
        if event_times.is_empty() {
            return Err(Error::input(format!(
                "the event indicator '{}' marks no event among the {} rows used: there is no risk to estimate",
                spec.outcome,
                times.len()
            )));
        }
        event_times.sort_by(f64::total_cmp);
        let (mut horizons, horizons_rule) = match &spec.horizon {
            Some(h) => {
                for &t in h {
                    if !(t.is_finite() && t > 0.0) {
                        return Err(Error::option(
                            Setting::Horizon,
                            format!("{}: horizons must be positive times", short_number(t)),
                        ));
                    }
                    if t > end {
                        return Err(Error::option(
                            Setting::Horizon,
                            format!(
                                "{}: beyond the end of follow-up (the longest time in '{name}' is {}); a risk \
                                 there would rest on no one observed",
                                short_number(t),
                                short_number(end)
                            ),
                        ));
                    }
                }
                (h.clone(), "given")
            }
            None => (
                vec![
                    quantile(&event_times, 0.25),
                    quantile(&event_times, 0.5),
                    quantile(&event_times, 0.75),
                    end,
                ],
                "the quartiles of the event times and the end of follow-up",
            ),
        };
        horizons.sort_by(f64::total_cmp);
        horizons.dedup();
        if horizons.len() > MAX_HORIZONS {
            return Err(Error::option(
                Setting::Horizon,
                format!(
                    "{} horizons: at most {MAX_HORIZONS} (each adds rows to every table)",
                    horizons.len()
                ),
            ));
        }
        let last = *horizons.last().unwrap_or(&end);
        let (period, periods, period_rule) = match spec.period {
            Some(w) => {
                if !(w.is_finite() && w > 0.0) {
                    return Err(Error::option(
                        Setting::Period,
                        format!("{}: the width must be a positive time", short_number(w)),
                    ));
                }
                let k = reached(last, w);
                if k > MAX_GIVEN_PERIODS {
                    return Err(Error::option(
                        Setting::Period,
                        format!(
                            "{}: it cuts the follow-up to {} into {k} periods; at most {MAX_GIVEN_PERIODS} \
                             (each is a row per person at risk): choose a wider period",
                            short_number(w),
                            short_number(last)
                        ),
                    ));
                }
                (w, k, "given")
            }
            None => {
                let (w, k) = default_period(&event_times, last);
                (
                    w,
                    k,
                    "the fewest periods (10 to 100) holding at most 5% of the events each",
                )
            }
        };
        let mut grid: Vec<f64> = (0..=CURVE_STEPS.min(periods.max(1)))
            .map(|g| last * g as f64 / CURVE_STEPS.min(periods.max(1)) as f64)
            .collect();
        grid.extend(horizons.iter().copied());
        grid.sort_by(f64::total_cmp);
        grid.dedup_by(|a, b| (*a - *b).abs() <= SLACK * last);
        let at_risk_times: Vec<f64> = (0..=AT_RISK_TICKS)
            .map(|g| last * g as f64 / AT_RISK_TICKS as f64)
            .collect();
        let (codes, names) = groups;
        let at_risk = names
            .iter()
            .enumerate()
            .map(|(k, level)| AtRisk {
                level: level.clone(),
                counts: at_risk_times
                    .iter()
                    .map(|&t| {
                        times
                            .iter()
                            .zip(codes)
                            .filter(|&(&ti, &a)| a as usize == k && ti >= t)
                            .count()
                    })
                    .collect(),
            })
            .collect();
        let n_events = event_times.len();
        Ok(Survival {
            time: name,
            event: labels.0,
            censored: labels.1,
            events: n_events,
            censored_rows: times.len() - n_events,
            end_of_follow_up: end,
            horizons,
            horizons_rule,
            period,
            periods,
            period_rule,
            censoring_weights: spec.censoring_weights,
            at_risk_times,
            at_risk,
            times,
            grid,
        })
    }

    /// The last horizon (the end of the restricted mean).
    pub fn last(&self) -> f64 {
        *self.horizons.last().unwrap_or(&self.end_of_follow_up)
    }

    /// The targets of one exposure level: survival along the curve's
    /// times, the risk at each horizon and the restricted mean survival
    /// time to the last horizon.
    pub fn targets(&self, level: usize) -> Vec<Target> {
        let mut t: Vec<Target> = self.grid.iter().map(|&x| Target::Survival(level, x)).collect();
        t.extend(self.horizons.iter().map(|&x| Target::Risk(level, x)));
        t.push(Target::Rmst(level, self.last()));
        t
    }

    /// The period index each row's follow-up reaches (capped at the
    /// periods modelled) and whether its event falls in the last of them.
    pub fn person_periods(&self, events: &[f64]) -> (Vec<usize>, Vec<bool>) {
        let mut m = Vec::with_capacity(self.times.len());
        let mut ev = Vec::with_capacity(self.times.len());
        for (&t, &e) in self.times.iter().zip(events) {
            let r = reached(t, self.period);
            m.push(r.min(self.periods));
            ev.push(e == 1.0 && r <= self.periods);
        }
        (m, ev)
    }

    /// The report's sentence on how follow-up was treated.
    pub fn sentence(&self) -> String {
        let h: Vec<String> = self.horizons.iter().map(|&t| short_number(t)).collect();
        format!(
            "Time to event: follow-up time '{}', {} events ('{}') and {} censored ('{}'), longest follow-up {}; \
             risks are compared at {} ({}); the pooled logistic hazard models use {} periods of width {} ({}), \
             and survival at a horizon from them is that after the last whole period ending by it{}. Like \
             every estimate here, these rest on the declared graph and the usual assumptions, and also on \
             censoring that is independent of the event given the exposure and the adjustment set.",
            self.time,
            self.events,
            self.event,
            self.censored_rows,
            self.censored,
            short_number(self.end_of_follow_up),
            h.join(", "),
            self.horizons_rule,
            self.periods,
            four_digits(self.period),
            self.period_rule,
            if self.censoring_weights {
                "; inverse probability of censoring weights are applied"
            } else {
                ""
            }
        )
    }
}

/// A number with at most four significant digits, for reading text.
fn four_digits(v: f64) -> String {
    let s = format!("{v:.4e}");
    s.parse::<f64>().map_or(s, short_number)
}

/// The default period width: `last` cut into the fewest periods, from
/// [`MIN_PERIODS`] to [`MAX_PERIODS`], none holding more than
/// [`MAX_EVENT_SHARE`] of the events up to `last`; [`MAX_PERIODS`] when
/// none does.
fn default_period(event_times: &[f64], last: f64) -> (f64, usize) {
    let within: Vec<f64> = event_times.iter().copied().filter(|&t| t <= last).collect();
    let limit = (MAX_EVENT_SHARE * within.len() as f64).max(1.0);
    for k in MIN_PERIODS..=MAX_PERIODS {
        let w = last / k as f64;
        let mut count = vec![0usize; k];
        for &t in &within {
            count[reached(t, w).min(k) - 1] += 1;
        }
        if count.iter().all(|&c| c as f64 <= limit) {
            return (w, k);
        }
    }
    (last / MAX_PERIODS as f64, MAX_PERIODS)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn periods_count_whole_widths_despite_rounding() {
        assert_eq!(completed(120.0, 1.2), 100);
        assert_eq!(reached(120.0, 1.2), 100);
        assert_eq!(reached(0.5, 1.0), 1);
        assert_eq!(reached(1.0, 1.0), 1);
        assert_eq!(reached(1.01, 1.0), 2);
        assert_eq!(completed(0.99, 1.0), 0);
    }

    #[test]
    fn default_period_spreads_events() {
        let t: Vec<f64> = (1..=200).map(|i| i as f64 / 2.0).collect();
        let (w, k) = default_period(&t, 100.0);
        assert_eq!(k, 20);
        assert!((w - 5.0).abs() < 1e-12);
    }
}
