//! Augmented inverse probability weighting, doubly robust (Robins, Rotnitzky
//! & Zhao, JASA 1994;89:846-866; the form of Lunceford & Davidian 2004,
//! eq. 9), for the ATE, one mean per exposure level (two for a binary
//! exposure, with a logistic propensity model; K for a categorical one,
//! with a multinomial model):
//! mu_a = mean[ m_a(L) + 1{A=a} (Y - m_a(L)) / P(A=a|L) ].
//! The outcome model is the regression method's: one model on all rows with
//! the exposure term (and any products asked for), not one model per arm.
//! The standard error is the sandwich of the stacked equations (outcome
//! model, propensity model, the two means), which stays valid when one of
//! the two working models is wrong.

use super::{About, Estimator, ExposureKind, Points, Serves, Target, Targets, TimeToEvent};
use crate::Result;
use crate::data::Setting;
use crate::identify::Strategy;
use crate::learn::{Fits, Needs, Observed, OutcomeFit};
use crate::model::weighted_sum;
use crate::problem::{Estimand, Problem};

/// Augmented IPW.
pub struct Aipw;

static ABOUT: About = About {
    name: "aipw",
    label: "AIPW (doubly robust)",
    strategies: &[Strategy::Backdoor],
    serves: &[Serves::Binary, Serves::Levels],
    weighted: &[Serves::Binary, Serves::Levels],
    estimands: &[Estimand::Ate],
    needs: Needs {
        outcome: true,
        exposure: true,
    },
    default: true,
    time_to_event: TimeToEvent::No,
};

/// P(A = k | L) for every row and level: the logistic score of a binary
/// exposure (clipped when asked) or the multinomial probabilities.
enum Scores<'a> {
    Binary(&'a [f64]),
    Levels(&'a [Vec<f64>]),
}

impl Scores<'_> {
    fn of<'a>(p: &Problem, fits: &'a Fits) -> Result<Scores<'a>> {
        Ok(match p.kind {
            ExposureKind::Binary => Scores::Binary(&fits.propensity()?.e),
            _ => Scores::Levels(&fits.levels()?.prob),
        })
    }

    /// P(A = k | L_i).
    fn q(&self, k: usize, i: usize) -> f64 {
        match self {
            Scores::Binary(e) if k == 1 => e[i],
            Scores::Binary(e) => 1.0 - e[i],
            Scores::Levels(prob) => prob[k][i],
        }
    }
}

/// Row i's augmented term at level `k`: m + c 1{A=k} (Y - m) / q (no
/// branch on the exposure: the indicator multiplies), `c` the row's plain
/// inverse probability of an observed outcome (1 when every outcome is
/// observed). The plain weight `R / P(R = 1 | A, L)`, not the stabilised
/// one, keeps the augmentation unbiased when the outcome model is wrong
/// (its conditional mean given A and L is 1); a stabilised weight would
/// scale the correction by P(R = 1 | A).
#[inline]
fn term(a: f64, k: usize, y: f64, m: f64, q: f64, c: f64) -> f64 {
    let r = f64::from(u8::from(a as usize == k));
    m + c * r * (y - m) / q
}

/// Row i's plain observation weight (1 when every outcome is observed).
fn plain(obs: Option<&Observed>, i: usize) -> f64 {
    obs.map_or(1.0, |o| o.plain[i])
}

/// `sum_i f_i term_i` at level `k`, with `q(i)` = P(A = k | L_i).
#[inline]
fn weighted_terms(
    p: &Problem,
    k: usize,
    m: &[f64],
    freq: Option<&[f64]>,
    obs: Option<&Observed>,
    q: impl Fn(usize) -> f64,
) -> f64 {
    let (a, y) = (p.a(), p.y());
    match freq {
        Some(f) => (0..p.n())
            .map(|i| f[i] * p.member(i) * term(a[i], k, y[i], m[i], q(i), plain(obs, i)))
            .sum(),
        None => (0..p.n())
            .map(|i| p.member(i) * term(a[i], k, y[i], m[i], q(i), plain(obs, i)))
            .sum(),
    }
}

impl Estimator for Aipw {
    fn about(&self) -> &'static About {
        &ABOUT
    }

    fn methods_sentence(&self, kind: &ExposureKind) -> String {
        let ps = match kind {
            ExposureKind::Levels(_) => " with a multinomial propensity model",
            _ => "",
        };
        format!(
            "The augmented inverse probability weighted (doubly robust) estimator combined both models{ps} \
             (Robins, Rotnitzky & Zhao 1994)."
        )
    }

    fn point(&self, p: &Problem, fits: &Fits, freq: Option<&[f64]>) -> Result<Points> {
        // The propensity model first: its failure is the reason reported.
        let q = Scores::of(p, fits)?;
        let om = fits.outcome()?;
        let obs = fits.observed()?;
        let mut out = Points::default();
        let sw: f64 = match freq {
            Some(f) => f.iter().enumerate().map(|(i, f)| f * p.member(i)).sum(),
            None => (0..p.n()).map(|i| p.member(i)).sum(),
        };
        for t in p.targets() {
            let Target::Level(k) = t else { continue };
            let m = om.at(p, t);
            let s = match &q {
                Scores::Binary(e) if k == 1 => weighted_terms(p, k, &m, freq, obs, |i| e[i]),
                Scores::Binary(e) => weighted_terms(p, k, &m, freq, obs, |i| 1.0 - e[i]),
                Scores::Levels(prob) => weighted_terms(p, k, &m, freq, obs, |i| prob[k][i]),
            };
            out.targets.push(t);
            out.values.push(s / sw);
        }
        Ok(out)
    }

    fn targets(&self, p: &Problem, fits: &Fits) -> Result<Targets> {
        // The propensity model first: its failure is the reason reported.
        let q = Scores::of(p, fits)?;
        let om = fits.outcome()?;
        let obs = fits.observed()?;
        let c = |i: usize| plain(obs, i);
        // Under sampling weights w_i the mean is sum_i w_i term_i / sum_i w_i,
        // and each row's part of every estimating equation carries w_i
        // (the models' own scores take it inside their influence).
        let n = p.n();
        // Within a subgroup the mean is over its rows alone.
        let w = |i: usize| p.average_weight(i);
        let nf: f64 = (0..n).map(w).sum();
        let observed = om.predict(p, Setting::Observed);
        let (a, y) = (p.a(), p.y());
        let prop_rows = p.propensity_rows();
        let mut out = Targets::default();
        for t in p.targets() {
            let Target::Level(k) = t else { continue };
            let m = om.at(p, t);
            let mu = (0..n)
                .map(|i| w(i) * term(a[i], k, y[i], m[i], q.q(k, i), c(i)))
                .sum::<f64>()
                / nf;
            let r = |i: usize| f64::from(u8::from(a[i] as usize == k));
            // d/d beta = (1 - c R/q) dm.
            let u: Vec<f64> = (0..n)
                .map(|i| w(i) * (1.0 - c(i) * r(i) / q.q(k, i)) / nf)
                .collect();
            let kb = om.gradient(p, t.setting(), &m, &u);
            drop(u);
            let mut phi = om.influence(p, &kb, &observed, obs);
            // d/d q = -c R (Y - m) / q^2, through the propensity model.
            let dq: Vec<f64> = (0..n)
                .map(|i| -w(i) * c(i) * r(i) * (y[i] - m[i]) / (q.q(k, i) * q.q(k, i)) / nf)
                .collect();
            let ig = propensity_influence(p, fits, k, &dq, &prop_rows)?;
            // d/d c = R (Y - m) / q, through the models of being observed.
            if let Some(o) = obs {
                let g: Vec<f64> = (0..n)
                    .map(|i| w(i) * r(i) * (y[i] - m[i]) / q.q(k, i) / nf)
                    .collect();
                let io = o.influence(p, &g, false);
                phi.iter_mut().zip(io).for_each(|(v, x)| *v += x);
            }
            for (i, v) in phi.iter_mut().enumerate() {
                *v += w(i) * (term(a[i], k, y[i], m[i], q.q(k, i), c(i)) - mu) / nf + ig[i];
            }
            out.push(t, mu, phi);
        }
        if let Some(s) = &om.separation {
            out.warnings.push(format!("outcome model shows {s}"));
        }
        out.notes.push(format!(
            "outcome model: {} on all rows with the exposure term (as the regression method); \
             propensity model: {}",
            model_words(om),
            match p.kind {
                ExposureKind::Binary => "logistic regression",
                _ => "multinomial logistic regression",
            }
        ));
        Ok(out)
    }
}

fn model_words(om: &OutcomeFit) -> &'static str {
    if om.binary {
        "logistic regression"
    } else {
        "least squares"
    }
}

/// Each row's influence, through the propensity model's coefficients, of
/// `sum_i dq_i * (d q_ik / d gamma)` where `q_ik` = P(A = k | L_i).
fn propensity_influence(
    p: &Problem,
    fits: &Fits,
    k: usize,
    dq: &[f64],
    rows: &crate::data::DesignRows<'_>,
) -> Result<Vec<f64>> {
    let n = p.n();
    Ok(match p.kind {
        ExposureKind::Binary => {
            // q_1 = e, q_0 = 1 - e; de/d gamma = e (1 - e) x (0 when clipped).
            let ps = fits.propensity()?;
            let sign = if k == 1 { 1.0 } else { -1.0 };
            let g: Vec<f64> = (0..n).map(|i| sign * dq[i] * ps.slope(i)).collect();
            ps.influence(p, &weighted_sum(rows, &g))
        }
        _ => {
            // d p_k / d gamma_j = p_k (1{k = j} - p_j) x.
            let lp = fits.levels()?;
            lp.influence(p, &lp.gradient(p, k, dq))
        }
    })
}
