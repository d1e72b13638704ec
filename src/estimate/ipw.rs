//! Inverse probability weighting. The normalized (Hajek) form, method
//! `ipw`, takes each arm's weighted mean outcome; the Horvitz-Thompson form,
//! `ipw-ht`, divides the weighted sum by the population size instead. The
//! standard error is the M-estimation sandwich that stacks the propensity
//! model's score equations with the weighted means, so it accounts for the
//! estimated scores (Lunceford & Davidian, Stat Med 2004;23:2937-2960).

use super::contrast::{Arms, effect, interval};
use super::propensity::{Propensity, arm_weights};
use super::{Estimand, Estimate, Means, Method, Problem, Warm};
use crate::model::weighted_sum;
use crate::{Error, Result};

/// Inverse probability weighting.
pub struct Ipw {
    /// Horvitz-Thompson (unnormalized) rather than Hajek (normalized).
    pub horvitz_thompson: bool,
}

/// The row's weight in the population total of the Horvitz-Thompson form.
fn population(estimand: Estimand, a: f64) -> f64 {
    match estimand {
        Estimand::Ate => 1.0,
        Estimand::Att => a,
        Estimand::Atc => 1.0 - a,
    }
}

impl Ipw {
    /// The two weighted means.
    fn means(&self, p: &Problem, ps: &Propensity, freq: Option<&[f64]>) -> Result<(f64, f64)> {
        let (a, y, est) = (p.a(), p.y(), p.spec.estimand);
        let mut s = [0.0; 5];
        for i in 0..p.n() {
            let f = freq.map_or(1.0, |f| f[i]);
            let (h1, h0, _, _) = arm_weights(est, a[i], ps.e[i]);
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
}

impl Method for Ipw {
    fn name(&self) -> &'static str {
        if self.horvitz_thompson { "ipw-ht" } else { "ipw" }
    }

    fn point(&self, p: &Problem, freq: Option<&[f64]>, warm: Option<&Warm>) -> Result<f64> {
        p.require_binary_exposure(self.name())?;
        let ps = Propensity::fit(p, freq, warm)?;
        let (mu1, mu0) = self.means(p, &ps, freq)?;
        effect(p.spec.scale, mu1, mu0)
    }

    fn estimate(&self, p: &Problem) -> Result<Estimate> {
        p.require_binary_exposure(self.name())?;
        let ps = Propensity::fit(p, None, None)?;
        let (mu1, mu0) = self.means(p, &ps, None)?;
        let (a, y, est, n) = (p.a(), p.y(), p.spec.estimand, p.n());
        let ht = self.horvitz_thompson;
        let pop: f64 = (0..n).map(|i| population(est, a[i])).sum();
        let arm = |arm: usize, mu: f64| -> Vec<f64> {
            // Row i's weight in this arm and its derivative in the score.
            let h = |i: usize| {
                let (h1, h0, d1, d0) = arm_weights(est, a[i], ps.e[i]);
                if arm == 1 { (h1, d1) } else { (h0, d0) }
            };
            let s = if ht { pop } else { (0..n).map(|i| h(i).0).sum() };
            // Derivative of the estimating function in the coefficients.
            let k_rows: Vec<f64> = (0..n)
                .map(|i| {
                    let de = if ps.clipped(i) {
                        0.0
                    } else {
                        ps.e[i] * (1.0 - ps.e[i])
                    };
                    let r = if ht { y[i] } else { y[i] - mu };
                    h(i).1 * de * r
                })
                .collect();
            let k = weighted_sum(&p.propensity_rows(), &k_rows);
            drop(k_rows);
            let mut phi = ps.influence(p, &k);
            for (i, f) in phi.iter_mut().enumerate() {
                let u = if ht {
                    h(i).0 * y[i] - population(est, a[i]) * mu
                } else {
                    h(i).0 * (y[i] - mu)
                };
                *f = (u + *f) / s;
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
        let form = if self.horvitz_thompson {
            "Horvitz-Thompson"
        } else {
            "normalized (Hajek)"
        };
        let notes = vec![format!(
            "{form} inverse probability weights from a logistic propensity model{}",
            p.spec.trim.map_or(String::new(), |t| format!(
                ", scores clipped to [{t}, {}]",
                1.0 - t
            ))
        )];
        Ok(Estimate {
            method: self.name().into(),
            estimand: est,
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
            notes,
            warnings: Vec::new(),
            warm: Warm {
                propensity: Some(ps.coef.clone()),
                outcome: None,
                ..Warm::default()
            },
        })
    }
}
