//! The model of a row remaining observed (its outcome not missing), for
//! inverse probability of observation weights (Hernán & Robins, *What If*,
//! 2020, section 12.6): a logistic regression of the observation indicator
//! on the exposure terms and the adjustment terms (the propensity model's
//! terms and shapes, plus the exposure), and a numerator model on the
//! exposure terms alone, fitted on every used row. A row's stabilised
//! weight is `R P(R = 1 | A) / P(R = 1 | A, L)`, its plain one
//! `R / P(R = 1 | A, L)`.
//!
//! Nothing here is about outcomes as such: it models any indicator of
//! "remains observed" (the problem's [`Problem::observed`]), so the same
//! machinery serves censoring weights.
//!
//! The weights enter estimating equations of the form
//! `sum_i c_i g_i(theta) = 0`; [`Observed::influence`] gives each row's
//! influence, through both models' coefficients, of such a sum, so that
//! intervals account for their estimation (M-estimation: the two models'
//! score equations stacked with the estimator's).

use super::Nuisance;
use crate::data::{Design, Setting};
use crate::maths::expit_std as expit;
use crate::model::{Logit, LogitOptions, linear_predictor, weighted_sum};
use crate::problem::Problem;
use crate::{Error, Result};
use nalgebra::DVector;

/// One logistic model of the observation indicator.
#[derive(Debug, Clone)]
struct Part {
    /// Its design.
    design: Design,
    /// The full-sample fit (its information matrix), `None` in a resample.
    fit: Option<Logit>,
    /// P(R = 1 | terms) for every row.
    prob: Vec<f64>,
}

impl Part {
    fn fit(p: &Problem, r: &[f64], design: Design, w: Option<&[f64]>, full: Option<&Part>) -> Result<Part> {
        let rows = design.rows(&p.frame, Setting::Observed);
        let opts = LogitOptions::default();
        let (coef, separation, fit, eta) = match (w, full.and_then(|f| f.fit.as_ref())) {
            (Some(w), Some(full)) => {
                let f = full.refit(&rows, r, w, opts)?;
                (f.coef, f.separation, None, Some(f.eta))
            }
            _ => {
                let start = design.logit_start(r, w);
                let f = Logit::fit(&rows, r, w, Some(&start), opts)?;
                (f.coef.clone(), f.separation.clone(), Some(f), None)
            }
        };
        if let Some(s) = separation {
            let y = &p.spec.outcome;
            return Err(match full {
                None => Error::Separation(format!(
                    "whether the outcome '{y}' is observed is predicted perfectly by the exposure and \
                     covariates ({s} in the model of being observed): some rows had no chance of an observed \
                     outcome, so weighting for the missing outcome cannot be used; use complete cases, or \
                     restrict the data to rows that could have been observed"
                )),
                Some(_) => Error::Numerical(format!(
                    "model of the outcome '{y}' being observed: {s}; weighting cannot be used on this resample"
                )),
            });
        }
        let mut prob = eta.unwrap_or_else(|| linear_predictor(&rows, &coef));
        prob.iter_mut().for_each(|x| *x = expit(*x));
        Ok(Part { design, fit, prob })
    }

    /// Row i's influence on `k' (gamma_hat - gamma)`:
    /// `x_i' I^-1 k w_i (R_i - p_i)`, `w_i` the sampling weight.
    fn influence(&self, p: &Problem, r: &[f64], k: &DVector<f64>) -> Vec<f64> {
        let fit = self.fit.as_ref().expect("influence of a full-sample fit");
        let c = fit.bread_solve(k);
        let mut d = linear_predictor(&self.design.rows(&p.frame, Setting::Observed), &c);
        for (i, d) in d.iter_mut().enumerate() {
            *d *= p.weight(i) * (r[i] - self.prob[i]);
        }
        d
    }

    /// `sum_i u_i p_i (1 - p_i) x_i`: the gradient of `sum_i u_i p_i`.
    fn gradient(&self, p: &Problem, u: &[f64]) -> DVector<f64> {
        let v: Vec<f64> = (0..u.len())
            .map(|i| u[i] * self.prob[i] * (1.0 - self.prob[i]))
            .collect();
        weighted_sum(&self.design.rows(&p.frame, Setting::Observed), &v)
    }
}

/// The fitted models of being observed and the weights they give.
#[derive(Debug, Clone)]
pub struct Observed {
    /// P(R = 1 | A, L).
    den: Part,
    /// P(R = 1 | A).
    num: Part,
    /// Every row's stabilised weight `R P(R = 1 | A) / P(R = 1 | A, L)`
    /// (0 where unobserved).
    pub stabilised: Vec<f64>,
    /// Every row's plain weight `R / P(R = 1 | A, L)`.
    pub plain: Vec<f64>,
}

impl Nuisance for Observed {
    /// Fits both models on every used row under weights `w` (sampling
    /// times frequency); a resample starts from `full`.
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&Observed>) -> Result<Observed> {
        let r = p
            .observed
            .as_deref()
            .ok_or_else(|| Error::Internal("no observation indicator to model".into()))?;
        // The exposure and the adjustment terms, without products (the
        // propensity model's terms and shapes, with the exposure's).
        let den_design = p.adjusted.clone();
        let covariate_terms: Vec<usize> = (0..den_design.ncols())
            .filter(|&j| {
                let t = &den_design.terms()[j];
                !t.is_intercept() && !t.uses(p.exposure)
            })
            .collect();
        let num_design = den_design.without(&covariate_terms);
        let den = Part::fit(p, r, den_design, w, full.map(|f| &f.den))?;
        let num = Part::fit(p, r, num_design, w, full.map(|f| &f.num))?;
        let plain: Vec<f64> = (0..r.len()).map(|i| r[i] / den.prob[i]).collect();
        let stabilised = (0..r.len()).map(|i| plain[i] * num.prob[i]).collect();
        Ok(Observed {
            den,
            num,
            stabilised,
            plain,
        })
    }
}

impl Observed {
    /// Each row's influence, through both models' coefficients, of
    /// `sum_i c_i g_i` with `c_i` the stabilised weight (`stabilised`) or
    /// the plain one: `dc_i = c_i [(1 - n_i) dn-terms - (1 - d_i)
    /// dd-terms]`, so the gradient in each model's coefficients is
    /// `sum_i g_i c_i (1 - p_i) x_i` up to sign, solved against that
    /// model's information and carried by each row's score.
    pub fn influence(&self, p: &Problem, g: &[f64], stabilised: bool) -> Vec<f64> {
        let r = p.observed.as_deref().unwrap_or(&[]);
        let c = if stabilised { &self.stabilised } else { &self.plain };
        // d c / d eta_d = -c (1 - d); as gradient(u) multiplies u by
        // d (1 - d), u = -g c / d.
        let u: Vec<f64> = (0..g.len()).map(|i| -g[i] * c[i] / self.den.prob[i]).collect();
        let mut phi = self.den.influence(p, r, &self.den.gradient(p, &u));
        if stabilised {
            // d c / d eta_n = c (1 - n); u = g c / n.
            let u: Vec<f64> = (0..g.len()).map(|i| g[i] * c[i] / self.num.prob[i]).collect();
            let more = self.num.influence(p, r, &self.num.gradient(p, &u));
            phi.iter_mut().zip(more).for_each(|(a, b)| *a += b);
        }
        phi
    }

    /// Mean, smallest and largest stabilised weight over the observed rows
    /// (under sampling weights, the mean is weighted).
    pub fn summary(&self, p: &Problem) -> crate::data::WeightRange {
        let r = p.observed.as_deref().unwrap_or(&[]);
        let (mut s, mut sw, mut lo, mut hi) = (0.0, 0.0, f64::INFINITY, f64::NEG_INFINITY);
        for (i, &c) in self.stabilised.iter().enumerate() {
            if r[i] == 1.0 {
                let w = p.weight(i);
                s += w * c;
                sw += w;
                lo = lo.min(c);
                hi = hi.max(c);
            }
        }
        crate::data::WeightRange {
            mean: s / sw,
            min: lo,
            max: hi,
        }
    }
}
