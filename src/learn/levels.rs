//! The propensity model of a categorical exposure: a multinomial
//! (baseline-category) logistic regression of the level on the adjustment
//! terms ([`Multinomial`]), the probability of every level for every row,
//! and each row's influence on a linear functional of its coefficients.

use super::Nuisance;
use crate::model::{LogitOptions, Multinomial, linear_predictor, weighted_sum};
use crate::problem::Problem;
use crate::{Error, Result};
use nalgebra::{DMatrix, DVector};

/// A fitted multinomial propensity model.
#[derive(Debug, Clone)]
pub struct LevelPropensity {
    /// The fit.
    pub model: Multinomial,
    /// `prob[k][i]`: P(A = level k | L) for row i.
    pub prob: Vec<Vec<f64>>,
}

impl Nuisance for LevelPropensity {
    /// Fits with frequency weights `w`, starting a resample from `full`'s
    /// coefficients. Refuses when a level is separated (unbounded weights).
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&LevelPropensity>) -> Result<LevelPropensity> {
        let rows = p.propensity_rows();
        let codes: Vec<usize> = p.a().iter().map(|&a| a as usize).collect();
        let k = p.levels().len();
        let start: Option<&DMatrix<f64>> = full.map(|f| &f.model.coef);
        let model = Multinomial::fit(&rows, &codes, k, w, start, LogitOptions::default())?;
        if let Some(s) = &model.separation {
            let x = &p.spec.exposure;
            return Err(match full {
                None => Error::Separation(format!(
                    "the levels of the exposure '{x}' are predicted perfectly by its adjustment covariates \
                     ({s} in its multinomial propensity model): some units had no chance of some levels (a \
                     positivity violation), so weighting (ipw, aipw) cannot be used; coarsen or leave out \
                     covariates, merge levels, or restrict the data to units that could have taken every level"
                )),
                Some(_) => Error::Numerical(format!(
                    "multinomial propensity model for '{x}': {s}; weighting cannot be used on this resample"
                )),
            });
        }
        let prob = model.probabilities(&rows);
        Ok(LevelPropensity { model, prob })
    }
}

impl LevelPropensity {
    /// `sum_i g_i d p_ik / d gamma`, stacked as the parameters (levels
    /// 1..K-1), where `d p_ik / d gamma_j = p_ik (1{k = j} - p_ij) x_i`.
    pub fn gradient(&self, p: &Problem, k: usize, g: &[f64]) -> DVector<f64> {
        let rows = p.propensity_rows();
        let q = p.propensity.ncols();
        let levels = self.prob.len();
        let mut out = DVector::zeros(q * (levels - 1));
        for j in 1..levels {
            let v: Vec<f64> = (0..p.n())
                .map(|i| g[i] * self.prob[k][i] * (f64::from(u8::from(k == j)) - self.prob[j][i]))
                .collect();
            out.rows_mut((j - 1) * q, q).copy_from(&weighted_sum(&rows, &v));
        }
        out
    }

    /// Row i's influence on `k' (gamma_hat - gamma)`, with `k` stacked as
    /// the parameters (level by level, levels 1..K-1): `s_i' I^-1 k` where
    /// the score's block for level j is `(1{A_i = j} - p_ij) x_i`, times
    /// the row's sampling weight when given.
    pub fn influence(&self, p: &Problem, k: &DVector<f64>) -> Vec<f64> {
        let c = &self.model.cov * k;
        let rows = p.propensity_rows();
        let q = p.propensity.ncols();
        let a = p.a();
        let mut d = vec![0.0; p.n()];
        for j in 1..self.prob.len() {
            let cj = DVector::from_column_slice(&c.as_slice()[(j - 1) * q..j * q]);
            let lin = linear_predictor(&rows, &cj);
            for (i, v) in d.iter_mut().enumerate() {
                let r = f64::from(u8::from(a[i] as usize == j)) - self.prob[j][i];
                *v += p.weight(i) * r * lin[i];
            }
        }
        d
    }
}
