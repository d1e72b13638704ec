//! The three survival estimators' computations, read by the estimators of
//! [`crate::estimate`] (which dispatch here for a time-to-event problem):
//!
//! - IP-weighted Kaplan-Meier (`km`): each level's Kaplan-Meier curve over
//!   the exact times, every row weighted by the inverse of its propensity
//!   for the level it had;
//! - IP-weighted pooled logistic hazard (`ipw`): a hazard model with the
//!   exposure, time and their products, fitted to the IP-weighted person
//!   periods (as counts per level and period);
//! - standardised survival (`regression`, the parametric g-formula): the
//!   hazard model with the adjustment set added, predicted for everyone at
//!   each level and averaged.
//!
//! The influence functions treat the IP weights as known (the weighted
//! Kaplan-Meier's, as usual for it; the IP-weighted hazard model's, its
//! robust sandwich, as for a marginal structural model); the standardised
//! one counts the hazard model's estimation. Censoring weights, when asked
//! for, multiply the IP weights period by period.

use super::hazard::{CurveInput, Hazard, People, PeriodRows, curve_targets, layout};
use super::km::Km;
use crate::data::Rows;
use crate::estimate::{ExposureKind, Target, Targets};
use crate::learn::{ExposureModel, Fits};
use crate::problem::Problem;
use crate::{Error, Result};

/// The survival set-up of a problem, or an internal error.
fn setup(p: &Problem) -> Result<&super::Survival> {
    p.survival
        .as_ref()
        .ok_or_else(|| Error::Internal("not a time-to-event problem".into()))
}

/// Exposure levels of the problem (2 for a binary exposure).
pub fn levels(p: &Problem) -> usize {
    match &p.kind {
        ExposureKind::Levels(l) => l.len(),
        _ => 2,
    }
}

/// Each row's exposure level code.
fn codes(p: &Problem) -> Vec<usize> {
    p.a().iter().map(|&a| a as usize).collect()
}

/// Each row's weight times the inverse of its propensity for the level it
/// had (the ATE weights; `fw` the fit weights, `None` all ones).
pub fn ip_weights(p: &Problem, fits: &Fits, fw: Option<&[f64]>) -> Result<Vec<f64>> {
    let a = p.a();
    let w = |i: usize| fw.map_or(1.0, |f| f[i]);
    Ok(match fits.exposure()? {
        ExposureModel::Binary(ps) => (0..p.n())
            .map(|i| {
                w(i) * if a[i] == 1.0 {
                    1.0 / ps.e[i]
                } else {
                    1.0 / (1.0 - ps.e[i])
                }
            })
            .collect(),
        ExposureModel::Levels(lp) => (0..p.n()).map(|i| w(i) / lp.prob[a[i] as usize][i]).collect(),
        ExposureModel::Dose(_) => {
            return Err(Error::Internal("survival weights for a dose".into()));
        }
    })
}

/// The weights of the IP-weighted methods: each row's fit weight times the
/// inverse of its propensity for the level it had.
pub fn weights(p: &Problem, fits: &Fits, fw: Option<&[f64]>) -> Result<Vec<f64>> {
    ip_weights(p, fits, fw)
}

/// How a survival method was carried out, one sentence for a methods
/// paragraph.
pub fn sentence(method: &str) -> String {
    match method {
        "km" => "Survival curves under each exposure level were estimated by Kaplan-Meier over the exact \
                 follow-up times with inverse probability of treatment weights from the propensity model \
                 (Xie & Liu 2005)."
            .into(),
        "ipw" => {
            "IP-weighted survival curves came from a pooled logistic model of the hazard in each period \
                  with the exposure, time, time squared and their products, fitted with inverse probability \
                  of treatment weights (Hernán & Robins 2020, ch. 17)."
                .into()
        }
        _ => "Standardised survival curves (the parametric g-formula) came from a pooled logistic model of \
              the hazard in each period with the exposure, time, time squared, their products and the \
              adjustment terms, predicted for everyone under each exposure level and averaged (Hernán & \
              Robins 2020, ch. 17)."
            .into(),
    }
}

/// The IP-weighted Kaplan-Meier targets under row weights `w` (IP weights
/// times fit weights), with influence functions when `influence`.
pub fn km(p: &Problem, w: &[f64], influence: bool) -> Result<Targets> {
    let s = setup(p)?;
    let (time, event, a) = (&s.times, p.y(), codes(p));
    let mut out = Targets::default();
    for level in 0..levels(p) {
        let wl: Vec<f64> = (0..p.n())
            .map(|i| if a[i] == level { w[i] } else { 0.0 })
            .collect();
        if wl.iter().all(|&x| x == 0.0) {
            return Err(Error::Numerical(format!(
                "km: exposure level {level} has no weight in this sample"
            )));
        }
        let curve = Km::new(time, event, &wl);
        for t in s.targets(level) {
            let value = match t {
                Target::Survival(_, x) => curve.survival(x),
                Target::Risk(_, x) => 1.0 - curve.survival(x),
                Target::Rmst(_, x) => curve.restricted_mean(x),
                _ => return Err(Error::Internal("not a survival target".into())),
            };
            let phi = if influence {
                (0..p.n())
                    .map(|i| match t {
                        Target::Survival(_, x) => curve.influence(x, time[i], event[i], wl[i]),
                        Target::Risk(_, x) => -curve.influence(x, time[i], event[i], wl[i]),
                        _ => curve.influence_restricted(s.last(), time[i], event[i], wl[i]),
                    })
                    .collect()
            } else {
                Vec::new()
            };
            out.push(t, value, phi);
        }
    }
    Ok(out)
}

/// The IP-weighted pooled logistic hazard targets under fit weights `fw`
/// (IP weights from `fits`, times censoring weights when asked for).
pub fn ipw_hazard(p: &Problem, fits: &Fits, fw: Option<&[f64]>, influence: bool) -> Result<Targets> {
    let w = &weights(p, fits, fw)?;
    let s = setup(p)?;
    let l = levels(p);
    let (m, ev) = s.person_periods(p.y());
    let a = codes(p);
    let kmax = s.periods;
    // Censoring weights, row-major per person and period, under the same
    // frequency weights (the row's weight over its IP weight).
    let cens = if s.censoring_weights {
        Some(censoring_weights(p, fw)?)
    } else {
        None
    };
    let wk = |i: usize, k: usize| w[i] * cens.as_ref().map_or(1.0, |c| c[i * kmax + k]);
    // Weighted people at risk and events per (level, period).
    let mut at_risk = vec![vec![0.0; kmax]; l];
    let mut events = vec![vec![0.0; kmax]; l];
    for i in 0..p.n() {
        if w[i] == 0.0 {
            continue;
        }
        for (k, r) in at_risk[a[i]].iter_mut().take(m[i]).enumerate() {
            *r += wk(i, k);
        }
        if ev[i] {
            events[a[i]][m[i] - 1] += wk(i, m[i] - 1);
        }
    }
    // Two pseudo-units per level: the events (y = 1) and the rest (y = 0).
    let lay = layout(1, l, kmax);
    let level: Vec<usize> = (0..l).flat_map(|a| [a, a]).collect();
    let offsets: Vec<usize> = (0..=2 * l).map(|u| u * kmax).collect();
    let mut y = Vec::with_capacity(2 * l * kmax);
    let mut cw = Vec::with_capacity(2 * l * kmax);
    for lev in 0..l {
        y.extend(std::iter::repeat_n(1.0, kmax));
        cw.extend(events[lev].iter().copied());
        y.extend(std::iter::repeat_n(0.0, kmax));
        cw.extend(
            at_risk[lev]
                .iter()
                .zip(&events[lev])
                .map(|(r, e)| (r - e).max(0.0)),
        );
    }
    let one = [1.0];
    let rows = PeriodRows {
        cov: &one,
        cov_rows: 1,
        level: &level,
        offsets: &offsets,
        layout: lay,
    };
    let model = Hazard::fit(&rows, &y, &cw, None, "IP-weighted")?;
    let input = CurveInput {
        model: &model,
        cov: &one,
        cov_rows: 1,
        avg: &[1.0],
        surv: s,
    };
    let people = People {
        weight: &wk,
        level: &a,
        at_risk: &m,
        event: &ev,
    };
    targets_of(p, &input, influence.then_some((&people, false)))
}

/// Stabilised inverse probability of censoring weights, row-major per row
/// and period: `prod_{j<k} P(uncensored in j | A, t) / P(uncensored in j |
/// A, t, L)`, both from pooled logistic models of being censored at the end
/// of a period (after the chance of the event in it) over the periods each
/// row is followed without the event: the denominator with the exposure,
/// time, their products and the adjustment terms, the numerator without
/// the adjustment terms. Both are fitted under the fit weights `fw`
/// (`None`: all ones).
pub fn censoring_weights(p: &Problem, fw: Option<&[f64]>) -> Result<Vec<f64>> {
    let s = setup(p)?;
    let (m, ev) = s.person_periods(p.y());
    let a = codes(p);
    let kmax = s.periods;
    let (x, q) = covariates(p);
    // Rows: periods at risk of censoring (the event's own period excluded).
    let risk: Vec<usize> = m
        .iter()
        .zip(&ev)
        .map(|(&mi, &e)| if e { mi - 1 } else { mi })
        .collect();
    let offsets = row_offsets(&risk);
    let total = *offsets.last().unwrap_or(&0);
    let mut y = vec![0.0; total];
    let mut rw = vec![0.0; total];
    for i in 0..p.n() {
        rw[offsets[i]..offsets[i + 1]].fill(fw.map_or(1.0, |f| f[i]));
        // Censored within the periods modelled (not at their end).
        if !ev[i] && risk[i] > 0 && m[i] < kmax {
            y[offsets[i + 1] - 1] = 1.0;
        }
    }
    if y.iter().all(|&v| v == 0.0) {
        return Ok(vec![1.0; p.n() * kmax]);
    }
    let one = [1.0];
    let models = [(x.as_slice(), p.n(), q), (&one[..], 1, 1)];
    let mut fitted = Vec::new();
    for (cov, cov_rows, q) in models {
        let rows = PeriodRows {
            cov,
            cov_rows,
            level: &a,
            offsets: &offsets,
            layout: layout(q, levels(p), kmax),
        };
        fitted.push(Hazard::fit(&rows, &y, &rw, None, "censoring")?);
    }
    let mut out = vec![1.0; p.n() * kmax];
    for i in 0..p.n() {
        let row: Vec<f64> = (0..q).map(|j| x[j * p.n() + i]).collect();
        let mut prod = 1.0;
        for k in 0..kmax {
            out[i * kmax + k] = prod;
            let den = fitted[0].hazard_at(&row, a[i], k);
            let num = fitted[1].hazard_at(&[1.0], a[i], k);
            prod *= (1.0 - num) / (1.0 - den);
        }
    }
    Ok(out)
}

/// Where each person's person-period rows start, from their row counts
/// (the last entry is the total).
fn row_offsets(counts: &[usize]) -> Vec<usize> {
    let mut offsets = Vec::with_capacity(counts.len() + 1);
    offsets.push(0);
    for &c in counts {
        offsets.push(offsets.last().copied().unwrap_or(0) + c);
    }
    offsets
}

/// The covariate rows of the standardised model: the propensity design's
/// rows (intercept and adjustment terms), column-major.
fn covariates(p: &Problem) -> (Vec<f64>, usize) {
    let rows = p.propensity_rows();
    let q = rows.ncols();
    let mut x = vec![0.0; p.n() * q];
    rows.fill(0, p.n(), &mut x);
    (x, q)
}

/// The standardised (g-formula) hazard model under fit weights `w`
/// (`None`: all ones), from `full` when given.
pub fn standardising_model(p: &Problem, w: Option<&[f64]>, full: Option<&Hazard>) -> Result<Hazard> {
    let s = setup(p)?;
    let (m, ev) = s.person_periods(p.y());
    let a = codes(p);
    let (x, q) = covariates(p);
    let offsets = row_offsets(&m);
    let total = *offsets.last().unwrap_or(&0);
    let mut y = vec![0.0; total];
    let mut rw = vec![0.0; total];
    for i in 0..p.n() {
        let wi = w.map_or(1.0, |w| w[i]);
        rw[offsets[i]..offsets[i + 1]].fill(wi);
        if ev[i] {
            y[offsets[i + 1] - 1] = 1.0;
        }
    }
    let rows = PeriodRows {
        cov: &x,
        cov_rows: p.n(),
        level: &a,
        offsets: &offsets,
        layout: layout(q, levels(p), s.periods),
    };
    Hazard::fit(&rows, &y, &rw, full, "standardised")
}

/// The standardised survival targets from `model`, averaged under fit
/// weights `w`.
pub fn standardised(p: &Problem, model: &Hazard, w: Option<&[f64]>, influence: bool) -> Result<Targets> {
    let s = setup(p)?;
    let (x, _) = covariates(p);
    let avg: Vec<f64> = (0..p.n()).map(|i| w.map_or(1.0, |w| w[i])).collect();
    let (m, ev) = s.person_periods(p.y());
    let a = codes(p);
    let input = CurveInput {
        model,
        cov: &x,
        cov_rows: p.n(),
        avg: &avg,
        surv: s,
    };
    let weight = |i: usize, _k: usize| avg[i];
    let people = People {
        weight: &weight,
        level: &a,
        at_risk: &m,
        event: &ev,
    };
    targets_of(p, &input, influence.then_some((&people, true)))
}

/// Every level's targets from a hazard model's curves.
fn targets_of(p: &Problem, input: &CurveInput, people: Option<(&People, bool)>) -> Result<Targets> {
    let s = setup(p)?;
    let all: Vec<Target> = (0..levels(p)).flat_map(|l| s.targets(l)).collect();
    let (values, influence) = curve_targets(input, &all, people)?;
    Ok(Targets {
        targets: all,
        values,
        influence,
        ..Targets::default()
    })
}
