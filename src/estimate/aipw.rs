//! Augmented inverse probability weighting, doubly robust (Robins, Rotnitzky
//! & Zhao, JASA 1994;89:846-866; the form of Lunceford & Davidian 2004,
//! eq. 9), for the ATE:
//! mu_a = mean[ m_a(L) + 1{A=a} (Y - m_a(L)) / P(A=a|L) ].
//! The outcome model is the regression method's: one model on all rows with
//! the exposure term (and any products asked for), not one model per arm.
//! The standard error is the sandwich of the stacked equations (outcome
//! model, propensity model, the two means), which stays valid when one of
//! the two working models is wrong.

use super::contrast::{Arms, effect, interval};
use super::outcome::OutcomeModel;
use super::propensity::Propensity;
use super::{Estimand, Estimate, Means, Method, Problem, Warm};
use crate::data::Setting;
use crate::model::weighted_sum;
use crate::{Error, Result};

/// Augmented IPW.
pub struct Aipw;

struct Fits<'a> {
    om: OutcomeModel<'a>,
    ps: Propensity,
    m1: Vec<f64>,
    m0: Vec<f64>,
}

impl Aipw {
    fn fits<'a>(&self, p: &'a Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<Fits<'a>> {
        p.require_binary_exposure(self.name())?;
        if p.spec.estimand != Estimand::Ate {
            return Err(Error::input(format!(
                "--method aipw estimates the ATE only; use regression or ipw for the {}",
                p.spec.estimand
            )));
        }
        let ps = Propensity::fit(p, freq, warm.and_then(|w| w.propensity.as_ref()))?;
        let om = OutcomeModel::fit(p, freq, warm.and_then(|w| w.outcome.as_ref()))?;
        let m1 = om.predict(p, Setting::Fixed(1.0));
        let m0 = om.predict(p, Setting::Fixed(0.0));
        Ok(Fits { om, ps, m1, m0 })
    }

    /// Row i's augmented terms for the two arms.
    fn terms(p: &Problem, f: &Fits, i: usize) -> (f64, f64) {
        let (a, y, e) = (p.a()[i], p.y()[i], f.ps.e[i]);
        (
            f.m1[i] + a * (y - f.m1[i]) / e,
            f.m0[i] + (1.0 - a) * (y - f.m0[i]) / (1.0 - e),
        )
    }
}

impl Method for Aipw {
    fn name(&self) -> &'static str {
        "aipw"
    }

    fn point(&self, p: &Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<f64> {
        let f = self.fits(p, freq, warm)?;
        let (mut s1, mut s0, mut sw) = (0.0, 0.0, 0.0);
        for i in 0..p.n() {
            let w = freq.map_or(1.0, |f| f[i]);
            let (t1, t0) = Aipw::terms(p, &f, i);
            s1 += w * t1;
            s0 += w * t0;
            sw += w;
        }
        effect(p.spec.scale, s1 / sw, s0 / sw)
    }

    fn estimate(&self, p: &Problem) -> Result<Estimate> {
        let f = self.fits(p, None, None)?;
        let n = p.n();
        let nf = n as f64;
        let t: Vec<(f64, f64)> = (0..n).map(|i| Aipw::terms(p, &f, i)).collect();
        let mu1 = t.iter().map(|x| x.0).sum::<f64>() / nf;
        let mu0 = t.iter().map(|x| x.1).sum::<f64>() / nf;
        let observed = f.om.predict(p, Setting::Observed);
        let (a, y, e) = (p.a(), p.y(), &f.ps.e);
        let de = |i: usize| if f.ps.clipped(i) { 0.0 } else { e[i] * (1.0 - e[i]) };
        let prop_rows = p.propensity.rows(&p.frame, Setting::Observed);
        // Arm 1: d/d beta = (1 - A/e) dm1; d/d e = -A (Y - m1) / e^2.
        let u1: Vec<f64> = (0..n).map(|i| (1.0 - a[i] / e[i]) / nf).collect();
        let kb1 = f.om.gradient(p, Setting::Fixed(1.0), &f.m1, &u1);
        let g1: Vec<f64> = (0..n)
            .map(|i| -a[i] * (y[i] - f.m1[i]) / (e[i] * e[i]) * de(i) / nf)
            .collect();
        let kg1 = weighted_sum(&prop_rows, &g1);
        // Arm 0: d/d beta = (1 - (1-A)/(1-e)) dm0; d/d e = (1-A)(Y - m0)/(1-e)^2.
        let u0: Vec<f64> = (0..n).map(|i| (1.0 - (1.0 - a[i]) / (1.0 - e[i])) / nf).collect();
        let kb0 = f.om.gradient(p, Setting::Fixed(0.0), &f.m0, &u0);
        let g0: Vec<f64> = (0..n)
            .map(|i| (1.0 - a[i]) * (y[i] - f.m0[i]) / ((1.0 - e[i]) * (1.0 - e[i])) * de(i) / nf)
            .collect();
        let kg0 = weighted_sum(&prop_rows, &g0);
        let (ib1, ig1) = (f.om.influence(p, &kb1, &observed), f.ps.influence(p, &kg1));
        let (ib0, ig0) = (f.om.influence(p, &kb0, &observed), f.ps.influence(p, &kg0));
        let arms = Arms {
            mu1,
            mu0,
            phi1: (0..n).map(|i| (t[i].0 - mu1) / nf + ib1[i] + ig1[i]).collect(),
            phi0: (0..n).map(|i| (t[i].1 - mu0) / nf + ib0[i] + ig0[i]).collect(),
        };
        let (estimate, std_error, ci) = interval(p.spec.scale, &arms, p.spec.level)?;
        let mut warnings = Vec::new();
        if let Some(s) = &f.om.separation {
            warnings.push(format!("aipw: outcome model shows {s}"));
        }
        let model = if f.om.binary {
            "logistic regression"
        } else {
            "least squares"
        };
        Ok(Estimate {
            method: self.name().into(),
            estimand: Estimand::Ate,
            scale: p.spec.scale,
            estimate,
            std_error,
            ci,
            ci_method: "sandwich".into(),
            level: p.spec.level,
            means: Some(Means {
                exposed: mu1,
                unexposed: mu0,
            }),
            notes: vec![format!(
                "outcome model: {model} on all rows with the exposure term (as the regression method); \
                 propensity model: logistic regression"
            )],
            warnings,
            warm: Warm {
                propensity: Some(f.ps.fit.coef.clone()),
                outcome: Some(f.om.coef.clone()),
            },
        })
    }
}
