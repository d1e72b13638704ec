//! Inverse probability weighting.
//!
//! - Binary exposure: the normalized (Hajek) form, method `ipw`, takes each
//!   arm's weighted mean outcome; the Horvitz-Thompson form, `ipw-ht`,
//!   divides the weighted sum by the population size instead. The ATE
//!   weights follow Hernán & Robins, *Causal Inference: What If*, 2020,
//!   ch. 12; the ATT and ATC forms are common practice, no source. The
//!   standard error is the M-estimation sandwich that stacks the propensity
//!   model's score equations with the weighted means, so it accounts for
//!   the estimated scores (Lunceford & Davidian, Stat Med
//!   2004;23:2937-2960).
//! - Categorical exposure: the same with weights 1 / P(A = k | L) from a
//!   multinomial propensity model, one mean per level (the generalized
//!   propensity score; Imbens, Biometrika 2000;87:706-710, from memory), the sandwich
//!   stacking the multinomial score equations likewise.
//! - Continuous exposure: a marginal structural model (Robins, Hernán &
//!   Brumback, Epidemiology 2000;11:550-560; *What If*, section 12.4): the
//!   outcome regressed by weighted least squares on the exposure alone
//!   (its shape by the term shape), with stabilised density-ratio weights
//!   ([`crate::learn::DoseDensity`]); the curve E[Y^a] is the model's
//!   prediction at each dose. Its standard error is the model's robust
//!   sandwich with the weights taken as known, as in the book and that
//!   paper (which argue it is conservative when the weight models are
//!   right). With heavy-tailed weights it can be too narrow; stacking the
//!   density models' estimating equations did not help in simulation (it
//!   was slightly narrower), so the diagnostics warn of such weights
//!   instead.

use super::{About, Estimator, ExposureKind, Points, Serves, Target, Targets, TimeToEvent};
use crate::data::{Design, Rows, Setting};
use crate::identify::Strategy;
use crate::learn::{Fits, Needs, Observed, Propensity};
use crate::model::{Ols, linear_predictor, weighted_sum};
use crate::problem::{Estimand, Problem};
use crate::{Error, Result};
use nalgebra::DVector;

/// Inverse probability weighting.
pub struct Ipw {
    /// Horvitz-Thompson (unnormalized) rather than Hajek (normalized).
    pub horvitz_thompson: bool,
}

static HAJEK: About = About {
    name: "ipw",
    label: "IPW (normalized weights)",
    strategies: &[Strategy::Backdoor],
    serves: &[Serves::Binary, Serves::Levels, Serves::Dose],
    weighted: &[Serves::Binary, Serves::Levels],
    estimands: &[Estimand::Ate, Estimand::Att, Estimand::Atc],
    needs: Needs {
        outcome: false,
        exposure: true,
    },
    default: true,
    time_to_event: TimeToEvent::Also,
};

static HORVITZ_THOMPSON: About = About {
    name: "ipw-ht",
    label: "IPW (Horvitz-Thompson)",
    strategies: &[Strategy::Backdoor],
    serves: &[Serves::Binary, Serves::Levels],
    weighted: &[Serves::Binary, Serves::Levels],
    estimands: &[Estimand::Ate, Estimand::Att, Estimand::Atc],
    needs: Needs {
        outcome: false,
        exposure: true,
    },
    default: false,
    time_to_event: TimeToEvent::No,
};

/// The weight of a row in each arm for `estimand`, and its derivative in the
/// score: `(h1, h0, dh1/de, dh0/de)`.
pub(crate) fn arm_weights(estimand: Estimand, a: f64, e: f64) -> (f64, f64, f64, f64) {
    let b = 1.0 - a;
    match estimand {
        Estimand::Ate => (a / e, b / (1.0 - e), -a / (e * e), b / ((1.0 - e) * (1.0 - e))),
        Estimand::Att => (a, b * e / (1.0 - e), 0.0, b / ((1.0 - e) * (1.0 - e))),
        Estimand::Atc => (a * (1.0 - e) / e, b, -a / (e * e), 0.0),
    }
}

impl Ipw {
    /// Row i's observation weight (1 when every outcome is observed): the
    /// stabilised one for the normalized form, where its numerator, a
    /// function of the exposure, cancels within each arm; the plain one
    /// for the Horvitz-Thompson form, whose total is not normalized (the
    /// stabilised weight averages P(R = 1 | A), not 1, given A and L).
    fn observation(&self, obs: Option<&Observed>, i: usize) -> f64 {
        obs.map_or(1.0, |o| {
            if self.horvitz_thompson {
                o.plain[i]
            } else {
                o.stabilised[i]
            }
        })
    }
}

/// The row's weight in the population total of the Horvitz-Thompson form.
fn population(estimand: Estimand, a: f64) -> f64 {
    match estimand {
        Estimand::Ate => 1.0,
        Estimand::Att => a,
        Estimand::Atc => 1.0 - a,
    }
}

impl Estimator for Ipw {
    fn about(&self) -> &'static About {
        if self.horvitz_thompson {
            &HORVITZ_THOMPSON
        } else {
            &HAJEK
        }
    }

    fn methods_sentence(&self, kind: &ExposureKind) -> String {
        let form = if self.horvitz_thompson {
            "Horvitz-Thompson inverse probability weighting"
        } else {
            "Inverse probability weighting with normalized (Hajek) weights"
        };
        match kind {
            ExposureKind::Binary => format!(
                "{form} used a logistic propensity model, whose estimation the standard error accounts for \
                 (Lunceford & Davidian 2004)."
            ),
            ExposureKind::Levels(_) => format!(
                "{form} used a multinomial propensity model for the exposure levels, whose estimation the \
                 standard error accounts for (Imbens 2000)."
            ),
            ExposureKind::Dose => "The dose-response curve was fitted as a marginal structural model by \
                 weighted least squares, with stabilized weights from normal densities of the exposure \
                 (Robins, Hernán & Brumback 2000); its robust standard error takes the weights as known."
                .into(),
        }
    }

    fn point(&self, p: &Problem, fits: &Fits, freq: Option<&[f64]>) -> Result<Points> {
        if p.survival.is_some() {
            let t = crate::survival::methods::ipw_hazard(p, fits, freq, false)?;
            return Ok(Points {
                targets: t.targets,
                values: t.values,
            });
        }
        match &p.kind {
            ExposureKind::Binary => {
                let ps = fits.propensity()?;
                let (mu1, mu0) = self.means(p, ps, fits.observed()?, freq)?;
                Ok(Points {
                    targets: vec![Target::Level(1), Target::Level(0)],
                    values: vec![mu1, mu0],
                })
            }
            ExposureKind::Levels(_) => {
                let prob = &fits.levels()?.prob;
                let mut targets = Vec::new();
                let mut values = Vec::new();
                for (k, pk) in prob.iter().enumerate() {
                    targets.push(Target::Level(k));
                    values.push(self.level_mean(p, pk, k, fits.observed()?, freq)?);
                }
                Ok(Points { targets, values })
            }
            ExposureKind::Dose => {
                let msm = Msm::fit(p, &fits.dose()?.weights, freq)?;
                let targets = msm_targets(p);
                let values = targets.iter().map(|&t| msm.at(p, t)).collect();
                Ok(Points { targets, values })
            }
        }
    }

    fn targets(&self, p: &Problem, fits: &Fits) -> Result<Targets> {
        if p.survival.is_some() {
            let mut t = crate::survival::methods::ipw_hazard(p, fits, p.sampling(), true)?;
            t.notes.push(
                "the standard errors are the hazard model's robust sandwich with the IP weights (and any \
                 censoring weights) taken as known, as for a marginal structural model; a bootstrap interval \
                 also counts their estimation"
                    .into(),
            );
            return Ok(t);
        }
        match &p.kind {
            ExposureKind::Binary => self.binary_targets(p, fits.propensity()?, fits.observed()?),
            ExposureKind::Levels(_) => self.level_targets(p, fits),
            ExposureKind::Dose => dose_targets(p, fits),
        }
    }
}

impl Ipw {
    /// The two weighted means of a binary exposure; with some outcomes
    /// missing, each row's weight times its stabilised observation weight
    /// (What If, section 12.6), the population total over every row.
    fn means(
        &self,
        p: &Problem,
        ps: &Propensity,
        obs: Option<&Observed>,
        freq: Option<&[f64]>,
    ) -> Result<(f64, f64)> {
        let (a, y, est) = (p.a(), p.y(), p.spec.estimand);
        let mut s = [0.0; 5];
        for i in 0..p.n() {
            let f = freq.map_or(1.0, |f| f[i]) * p.member(i);
            let (h1, h0, _, _) = arm_weights(est, a[i], ps.e[i]);
            let (h1, h0) = (h1 * self.observation(obs, i), h0 * self.observation(obs, i));
            s[0] += f * h1 * y[i];
            s[1] += f * h1;
            s[2] += f * h0 * y[i];
            s[3] += f * h0;
            s[4] += f * population(est, a[i]);
        }
        if s[1] <= 0.0 || s[3] <= 0.0 {
            return Err(Error::Numerical(
                "ipw: an arm has no weight (no exposed or no unexposed rows)".into(),
            ));
        }
        Ok(if self.horvitz_thompson {
            (s[0] / s[4], s[2] / s[4])
        } else {
            (s[0] / s[1], s[2] / s[3])
        })
    }

    fn binary_targets(&self, p: &Problem, ps: &Propensity, obs: Option<&Observed>) -> Result<Targets> {
        // Under sampling weights w_i every row's weight and its derivative
        // carry w_i (the weighted estimating equations
        // sum_i w_i h_i (Y_i - mu) = 0 stacked with the weighted propensity
        // score equations), and so does its population share.
        let (mu1, mu0) = self.means(p, ps, obs, p.sampling())?;
        let (a, y, est, n) = (p.a(), p.y(), p.spec.estimand, p.n());
        let ht = self.horvitz_thompson;
        // Within a subgroup every average is over its rows
        // (`Problem::average_weight`); the propensity model's own score
        // stays that of the whole sample.
        let share = |i: usize| p.average_weight(i) * population(est, a[i]);
        let pop: f64 = (0..n).map(share).sum();
        let arm = |arm: usize, mu: f64| -> Vec<f64> {
            // Row i's weight in this arm and its derivative in the score,
            // before the observation weight (`h`) and with it (`hc`).
            let h = |i: usize| {
                let (h1, h0, d1, d0) = arm_weights(est, a[i], ps.e[i]);
                let w = p.average_weight(i);
                if arm == 1 {
                    (w * h1, w * d1)
                } else {
                    (w * h0, w * d0)
                }
            };
            let hc = |i: usize| {
                let (v, d) = h(i);
                let c = self.observation(obs, i);
                (v * c, d * c)
            };
            let s = if ht { pop } else { (0..n).map(|i| hc(i).0).sum() };
            let r = |i: usize| if ht { y[i] } else { y[i] - mu };
            // Derivative of the estimating function in the coefficients.
            let k_rows: Vec<f64> = (0..n).map(|i| hc(i).1 * ps.slope(i) * r(i)).collect();
            let k = weighted_sum(&p.propensity_rows(), &k_rows);
            drop(k_rows);
            let mut phi = ps.influence(p, &k);
            // And in the models of being observed, through c_i.
            if let Some(o) = obs {
                let g: Vec<f64> = (0..n).map(|i| h(i).0 * r(i)).collect();
                let io = o.influence(p, &g, !ht);
                phi.iter_mut().zip(io).for_each(|(f, x)| *f += x);
            }
            for (i, f) in phi.iter_mut().enumerate() {
                let u = if ht {
                    hc(i).0 * y[i] - share(i) * mu
                } else {
                    hc(i).0 * (y[i] - mu)
                };
                *f = (u + *f) / s;
            }
            phi
        };
        let mut t = Targets::default();
        t.push(Target::Level(1), mu1, arm(1, mu1));
        t.push(Target::Level(0), mu0, arm(0, mu0));
        t.notes.push(format!(
            "{} inverse probability weights from a logistic propensity model{}",
            self.form(),
            p.spec.trim.map_or(String::new(), |t| format!(
                ", scores clipped to [{t}, {}]",
                1.0 - t
            ))
        ));
        Ok(t)
    }

    fn form(&self) -> &'static str {
        if self.horvitz_thompson {
            "Horvitz-Thompson"
        } else {
            "normalized (Hajek)"
        }
    }

    /// The weighted mean outcome at level `k`, from its probabilities `pk`
    /// (and each row's stabilised observation weight, when some outcomes
    /// are missing).
    fn level_mean(
        &self,
        p: &Problem,
        pk: &[f64],
        k: usize,
        obs: Option<&Observed>,
        freq: Option<&[f64]>,
    ) -> Result<f64> {
        let (a, y) = (p.a(), p.y());
        let mut s = [0.0; 3];
        for i in 0..p.n() {
            let f = freq.map_or(1.0, |f| f[i]) * p.member(i);
            s[2] += f;
            if a[i] as usize == k {
                let c = self.observation(obs, i);
                s[0] += f * c * y[i] / pk[i];
                s[1] += f * c / pk[i];
            }
        }
        if s[1] <= 0.0 {
            return Err(Error::Numerical(format!(
                "ipw: exposure level {} has no weight (no rows at that level)",
                p.levels()[k]
            )));
        }
        Ok(if self.horvitz_thompson {
            s[0] / s[2]
        } else {
            s[0] / s[1]
        })
    }

    fn level_targets(&self, p: &Problem, fits: &Fits) -> Result<Targets> {
        let lp = fits.levels()?;
        let obs = fits.observed()?;
        let (a, y, n) = (p.a(), p.y(), p.n());
        let ht = self.horvitz_thompson;
        let levels = lp.prob.len();
        let total: f64 = (0..n).map(|i| p.average_weight(i)).sum();
        let mut t = Targets::default();
        for k in 0..levels {
            let pk = &lp.prob[k];
            let mu = self.level_mean(p, pk, k, obs, p.sampling())?;
            // Each row's weight, its sampling weight w_i included, before
            // the observation weight c_i (`h0`) and with it (`h`).
            let h0: Vec<f64> = (0..n)
                .map(|i| {
                    if a[i] as usize == k {
                        p.average_weight(i) / pk[i]
                    } else {
                        0.0
                    }
                })
                .collect();
            let h: Vec<f64> = (0..n).map(|i| h0[i] * self.observation(obs, i)).collect();
            let s = if ht { total } else { h.iter().sum() };
            let r = |i: usize| if ht { y[i] } else { y[i] - mu };
            // h_i = 1{A_i = k} / p_ik, so d h_i = -(h_i / p_ik) d p_ik.
            let g: Vec<f64> = (0..n).map(|i| -h[i] / pk[i] * r(i)).collect();
            let mut phi = lp.influence(p, &lp.gradient(p, k, &g));
            if let Some(o) = obs {
                let g: Vec<f64> = (0..n).map(|i| h0[i] * r(i)).collect();
                let io = o.influence(p, &g, !ht);
                phi.iter_mut().zip(io).for_each(|(f, x)| *f += x);
            }
            for (i, f) in phi.iter_mut().enumerate() {
                let u = if ht {
                    h[i] * y[i] - p.average_weight(i) * mu
                } else {
                    h[i] * (y[i] - mu)
                };
                *f = (u + *f) / s;
            }
            t.push(Target::Level(k), mu, phi);
        }
        t.notes.push(format!(
            "{} inverse probability weights from a multinomial propensity model of the {levels} exposure levels",
            self.form()
        ));
        Ok(t)
    }
}

/// The targets a marginal structural model forms: the curve's doses and
/// the doses of a contrast (not a shift from the observed exposure, which
/// the model of the exposure alone does not describe).
fn msm_targets(p: &Problem) -> Vec<Target> {
    p.targets()
        .into_iter()
        .filter(|t| matches!(t, Target::Dose(_)))
        .collect()
}

/// A marginal structural model: weighted least squares of the outcome on
/// the exposure's terms alone.
struct Msm {
    design: Design,
    coef: DVector<f64>,
    chol: crate::model::Chol,
    /// Frequency weight times stabilised weight, per row.
    w: Vec<f64>,
}

impl Msm {
    fn fit(p: &Problem, sw: &[f64], freq: Option<&[f64]>) -> Result<Msm> {
        let design = Design::build(&p.frame, Some(p.exposure), &[], p.spec.shape, &[]);
        let w: Vec<f64> = (0..p.n())
            .map(|i| freq.map_or(1.0, |f| f[i]) * p.member(i) * sw[i])
            .collect();
        let (coef, chol) = Ols::coefficients(&design.rows(&p.frame, Setting::Observed), p.y(), Some(&w))?;
        Ok(Msm {
            design,
            coef,
            chol,
            w,
        })
    }

    /// The design row at target `t`'s dose (the model holds the
    /// exposure's terms only, so every row is the same: the first).
    fn basis(&self, p: &Problem, t: Target) -> DVector<f64> {
        let rows = self.design.rows(&p.frame, t.setting());
        let mut out = vec![0.0; rows.ncols()];
        rows.fill(0, 1, &mut out);
        DVector::from_vec(out)
    }

    fn at(&self, p: &Problem, t: Target) -> f64 {
        self.basis(p, t).dot(&self.coef)
    }
}

fn dose_targets(p: &Problem, fits: &Fits) -> Result<Targets> {
    let dd = fits.dose()?;
    let msm = Msm::fit(p, &dd.weights, None)?;
    let fitted = linear_predictor(&msm.design.rows(&p.frame, Setting::Observed), &msm.coef);
    let resid: Vec<f64> = p.y().iter().zip(&fitted).map(|(y, f)| y - f).collect();
    let rows = msm.design.rows(&p.frame, Setting::Observed);
    let mut t = Targets::default();
    for target in msm_targets(p) {
        let b = msm.basis(p, target);
        let c = msm.chol.solve(&b);
        let lin = linear_predictor(&rows, &c);
        let phi: Vec<f64> = (0..p.n()).map(|i| msm.w[i] * resid[i] * lin[i]).collect();
        t.push(target, b.dot(&msm.coef), phi);
    }
    let terms: Vec<String> = msm.design.names().into_iter().skip(1).collect();
    t.notes.push(format!(
        "marginal structural model: weighted least squares of the outcome on {} with stabilized weights \
         (numerator: normal density of the exposure, mean {:.4}, sd {:.4}; denominator: normal linear model \
         of the exposure on the adjustment terms, residual sd {:.4}); robust standard errors with the \
         weights taken as known",
        terms.join(", "),
        dd.mean,
        dd.sd,
        dd.sigma
    ));
    if p.spec.contrast.is_none() {
        t.notes.push(
            "no effect of a one-unit shift from the observed exposure: the weighted model describes fixed \
             doses only; see the dose-response curve, or compare two doses"
                .into(),
        );
    }
    Ok(t)
}
