//! The outcome model shared by regression (standardisation) and AIPW: least
//! squares for a continuous outcome, logistic regression for a binary one,
//! with the exposure term and any exposure products; predictions with the
//! exposure set to a value; and the coefficients' influence on a linear
//! functional.

use super::{Problem, Warm};
use crate::data::{Design, Setting};
use crate::model::{Chol, Logit, LogitOptions, Ols, Separation, expit, linear_predictor, weighted_sum};
use crate::{Error, Result};
use nalgebra::DVector;

/// The coefficients of a fitted outcome model and the factor of its bread.
#[derive(Debug, Clone)]
pub(crate) struct OutcomeFit {
    coef: DVector<f64>,
    chol: Chol,
    separation: Option<Separation>,
}

/// A fitted outcome model.
pub(crate) struct OutcomeModel<'a> {
    pub design: &'a Design,
    pub coef: DVector<f64>,
    pub binary: bool,
    pub chol: Chol,
    pub separation: Option<Separation>,
}

impl<'a> OutcomeModel<'a> {
    /// Fits the problem's outcome design with frequency weights `w`; the
    /// full-sample fit (`w` = None) is made once per problem and shared.
    pub fn fit(p: &'a Problem, w: Option<&[f64]>, warm: Option<&Warm>) -> Result<OutcomeModel<'a>> {
        let shared = warm.and_then(|x| x.shared.as_deref());
        let warm = warm.and_then(|x| x.outcome.as_ref());
        let f = match (w, p.cache.outcome.get()) {
            (Some(_), _) if shared.is_some_and(|c| c.outcome.get().is_some()) => shared
                .and_then(|c| c.outcome.get())
                .cloned()
                .expect("checked above"),
            (Some(_), _) if shared.is_some() => {
                let f = OutcomeModel::compute(p, w, warm)?;
                let _ = shared.map(|c| c.outcome.set(f.clone()));
                f
            }
            (None, Some(f)) => f.clone(),
            (None, None) => {
                let f = OutcomeModel::compute(p, None, warm)?;
                let _ = p.cache.outcome.set(f.clone());
                f
            }
            (Some(_), _) => OutcomeModel::compute(p, w, warm)?,
        };
        Ok(OutcomeModel {
            design: &p.outcome_design,
            coef: f.coef,
            binary: p.binary_outcome(),
            chol: f.chol,
            separation: f.separation,
        })
    }

    fn compute(p: &Problem, w: Option<&[f64]>, warm: Option<&DVector<f64>>) -> Result<OutcomeFit> {
        let design = &p.outcome_design;
        let rows = design.rows(&p.frame, Setting::Observed);
        let (coef, chol, separation) = if p.binary_outcome() {
            let start = warm.cloned().unwrap_or_else(|| design.logit_start(p.y(), w));
            let f = Logit::fit(&rows, p.y(), w, Some(&start), LogitOptions::default())?;
            let c = f.chol().clone();
            (f.coef, c, f.separation)
        } else {
            let (coef, chol) = Ols::coefficients(&rows, p.y(), w)?;
            (coef, chol, None)
        };
        // Under separation the information matrix is near singular and a
        // column may look aliased there while its coefficient is simply not
        // updated; otherwise an aliased exposure (e.g. a replicate with no
        // exposed rows) makes the fit meaningless. The factorization takes
        // the exposure before the covariates, so an exposure that the
        // covariates explain (a replicate where it copies one of them) shows
        // as an aliased covariate instead, its effect absorbed by the
        // exposure coefficient: when a column is aliased (terms aliased in
        // the full data are already dropped, so this is rare), decide again
        // with the covariates first, as for the full data.
        let exposure = design.exposure_term().unwrap_or(usize::MAX);
        let exposure_aliased = match chol.aliased() {
            a if a.is_empty() => false,
            a if a.contains(&exposure) => true,
            _ => super::problem::aliased(design, &p.frame, w).contains(&exposure),
        };
        if exposure_aliased && separation.is_none() {
            return Err(Error::Numerical(
                "the exposure term is aliased in the outcome model".into(),
            ));
        }
        Ok(OutcomeFit {
            coef,
            chol,
            separation,
        })
    }

    /// Mean outcome of every row with the exposure set by `setting`.
    pub fn predict(&self, p: &Problem, setting: Setting) -> Vec<f64> {
        let mut m = linear_predictor(&self.design.rows(&p.frame, setting), &self.coef);
        if self.binary {
            m.iter_mut().for_each(|x| *x = expit(*x));
        }
        m
    }

    /// d mean / d linear predictor at mean `mu`.
    pub fn slope(&self, mu: f64) -> f64 {
        if self.binary { mu * (1.0 - mu) } else { 1.0 }
    }

    /// `sum_i u_i slope(mu_i) x_i(setting)`: the gradient of `sum u_i mu_i`
    /// in the coefficients.
    pub fn gradient(&self, p: &Problem, setting: Setting, mu: &[f64], u: &[f64]) -> DVector<f64> {
        let v: Vec<f64> = u.iter().zip(mu).map(|(a, &m)| a * self.slope(m)).collect();
        weighted_sum(&self.design.rows(&p.frame, setting), &v)
    }

    /// Row i's influence on `k' (b - beta)`: `x_i' B^-1 k (y_i - mu_i)`.
    pub fn influence(&self, p: &Problem, k: &DVector<f64>, mu_observed: &[f64]) -> Vec<f64> {
        let c = self.chol.solve(k);
        let mut d = linear_predictor(&self.design.rows(&p.frame, Setting::Observed), &c);
        for ((d, y), m) in d.iter_mut().zip(p.y()).zip(mu_observed) {
            *d *= y - m;
        }
        d
    }
}
