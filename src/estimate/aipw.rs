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
    ps: std::borrow::Cow<'a, Propensity>,
    m1: Vec<f64>,
    m0: Vec<f64>,
}

impl Aipw {
    fn fits<'a>(&self, p: &'a Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<Fits<'a>> {
        p.require_binary_exposure(self.name())?;
        if p.spec.estimand != Estimand::Ate {
            return Err(Error::option(
                crate::error::Setting::Method,
                format!(
                    "aipw estimates the ATE only; use regression or ipw for the {}",
                    p.spec.estimand
                ),
            ));
        }
        let ps = Propensity::fit(p, freq, warm)?;
        let om = OutcomeModel::fit(p, freq, warm)?;
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
        let (s1, s0) = (0..n).fold((0.0, 0.0), |(s1, s0), i| {
            let (t1, t0) = Aipw::terms(p, &f, i);
            (s1 + t1, s0 + t0)
        });
        let (mu1, mu0) = (s1 / nf, s0 / nf);
        let observed = f.om.predict(p, Setting::Observed);
        let (a, y, e) = (p.a(), p.y(), &f.ps.e);
        let de = |i: usize| if f.ps.clipped(i) { 0.0 } else { e[i] * (1.0 - e[i]) };
        let prop_rows = p.propensity_rows();
        // Influence of arm `arm` (1 or 0), given the augmented terms `t`:
        // d/d beta = (1 - R/q) dm, d/d e = -/+ R (Y - m) / q^2 with
        // R = 1{A = arm} and q = P(A = arm | L).
        let arm = |arm: usize, mu: f64| -> Vec<f64> {
            let (m, setting) = if arm == 1 {
                (&f.m1, Setting::Fixed(1.0))
            } else {
                (&f.m0, Setting::Fixed(0.0))
            };
            let r = |i: usize| if arm == 1 { a[i] } else { 1.0 - a[i] };
            let q = |i: usize| if arm == 1 { e[i] } else { 1.0 - e[i] };
            let sign = if arm == 1 { -1.0 } else { 1.0 };
            let u: Vec<f64> = (0..n).map(|i| (1.0 - r(i) / q(i)) / nf).collect();
            let kb = f.om.gradient(p, setting, m, &u);
            drop(u);
            let g: Vec<f64> = (0..n)
                .map(|i| sign * r(i) * (y[i] - m[i]) / (q(i) * q(i)) * de(i) / nf)
                .collect();
            let kg = weighted_sum(&prop_rows, &g);
            drop(g);
            let mut phi = f.om.influence(p, &kb, &observed);
            let ig = f.ps.influence(p, &kg);
            for (i, v) in phi.iter_mut().enumerate() {
                let t = m[i] + r(i) * (y[i] - m[i]) / q(i);
                *v += (t - mu) / nf + ig[i];
            }
            phi
        };
        let arms = Arms {
            mu1,
            mu0,
            phi1: arm(1, mu1),
            phi0: arm(0, mu0),
        };
        let (estimate, std_error, ci) = interval(p.spec.scale, &arms, p.spec.level)?;
        let mut warnings = Vec::new();
        if let Some(s) = &f.om.separation {
            warnings.push(format!("outcome model shows {s}"));
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
                propensity: Some(f.ps.coef.clone()),
                outcome: Some(f.om.coef.clone()),
                ..Warm::default()
            },
        })
    }
}
