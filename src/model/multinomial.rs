//! Multinomial (baseline-category) logistic regression for a response with
//! `K` levels and frequency weights, by Newton-Raphson with step-halving, in
//! the style of [`Logit`](super::Logit) and built on the same pieces
//! ([`accumulate`], [`linear_predictor`], [`Chol`], [`LogitOptions`],
//! [`Separation`]).
//!
//! Level 0 is the reference: `P(y = k | x) = exp(x'b_k) / (1 + sum_l
//! exp(x'b_l))` for `k = 1..K-1` (McCullagh & Nelder, *Generalized Linear
//! Models*, 2nd ed., 1989, sec. 6.4; Agresti, *Categorical Data Analysis*,
//! 3rd ed., 2013, sec. 8.1). The parameters are stacked class by class,
//! `theta[(k-1) p + j] = b_k[j]`. The information is the block matrix with
//! blocks `sum_i w_i mu_ik (delta_kl - mu_il) x_i x_i'`; each block is one
//! [`accumulate`] pass (off-diagonal blocks with the sign moved outside,
//! since `accumulate` takes non-negative row weights).

use super::{ALIAS_TOL, Chol, LogitOptions, Separation, accumulate, linear_predictor};
use crate::data::Rows;
use crate::{Error, Result};
use nalgebra::{DMatrix, DVector};

/// A fitted multinomial logistic regression.
#[derive(Debug, Clone)]
pub struct Multinomial {
    /// Coefficients, `p x (K-1)`: column `k-1` holds the log-odds
    /// coefficients of level `k` against level 0 (0 for aliased entries).
    pub coef: DMatrix<f64>,
    /// Inverse information over the stacked parameters, the classic
    /// covariance.
    pub cov: DMatrix<f64>,
    /// Deviance, -2 log-likelihood.
    pub deviance: f64,
    /// Newton steps taken.
    pub iterations: usize,
    /// Set when some rows are fitted to their level with probability
    /// numerically 1 (complete or quasi-complete separation).
    pub separation: Option<Separation>,
    /// Aliased stacked parameters.
    pub aliased: Vec<usize>,
    chol: Chol,
}

/// A row whose own level is fitted within this of probability 1 counts as
/// separated.
const EXTREME: f64 = 1e-10;

/// Class probabilities and the log-probability of the observed level, from
/// the K-1 linear predictors of a row (level 0 has predictor 0).
fn softmax(eta: &[f64], level: usize, mu: &mut [f64]) -> f64 {
    let m = eta.iter().fold(0.0f64, |m, &e| m.max(e));
    let total = (-m).exp() + eta.iter().map(|&e| (e - m).exp()).sum::<f64>();
    let lse = m + total.ln();
    for (u, &e) in mu.iter_mut().zip(eta) {
        *u = (e - lse).exp();
    }
    if level == 0 { -lse } else { eta[level - 1] - lse }
}

/// What one Newton iterate needs from a pass over the rows.
struct State {
    /// `mu[k][i]`: fitted probability of level k+1 for row i.
    mu: Vec<Vec<f64>>,
    deviance: f64,
    extreme: usize,
}

fn state<R: Rows + ?Sized>(rows: &R, y: &[usize], w: Option<&[f64]>, beta: &DMatrix<f64>) -> State {
    let km1 = beta.ncols();
    let n = rows.nrows();
    let etas: Vec<Vec<f64>> = (0..km1)
        .map(|k| linear_predictor(rows, &beta.column(k).into_owned()))
        .collect();
    let mut mu = vec![vec![0.0; n]; km1];
    let (mut deviance, mut extreme) = (0.0, 0usize);
    let mut eta = vec![0.0; km1];
    let mut m = vec![0.0; km1];
    for i in 0..n {
        for k in 0..km1 {
            eta[k] = etas[k][i];
        }
        let wi = w.map_or(1.0, |w| w[i]);
        let logp = softmax(&eta, y[i], &mut m);
        deviance -= 2.0 * wi * logp;
        if wi > 0.0 && logp.exp() > 1.0 - EXTREME {
            extreme += 1;
        }
        for k in 0..km1 {
            mu[k][i] = m[k];
        }
    }
    State {
        mu,
        deviance,
        extreme,
    }
}

impl Multinomial {
    /// Fits the level codes `y` (0..`levels`-1) on `rows`, from `warm` (or
    /// zeros). Fails with [`Error::Numerical`] when the iterations do not
    /// converge and the data show no separation; with separation the fit is
    /// returned with [`Multinomial::separation`] set.
    pub fn fit<R: Rows + ?Sized>(
        rows: &R,
        y: &[usize],
        levels: usize,
        w: Option<&[f64]>,
        warm: Option<&DMatrix<f64>>,
        opts: LogitOptions,
    ) -> Result<Multinomial> {
        let p = rows.ncols();
        if levels < 2 {
            return Err(Error::Numerical(
                "multinomial logistic regression: the response has fewer than two levels".into(),
            ));
        }
        if y.iter().any(|&c| c >= levels) || y.len() != rows.nrows() {
            return Err(Error::Numerical(
                "multinomial logistic regression: a level code is out of range".into(),
            ));
        }
        let km1 = levels - 1;
        let mut beta = match warm {
            Some(b) if b.shape() == (p, km1) => b.clone(),
            _ => DMatrix::zeros(p, km1),
        };
        let mut prev: Option<(DMatrix<f64>, f64)> = None;
        let mut halvings = 0;
        let mut iterations = 0;
        loop {
            let s = state(rows, y, w, &beta);
            let dev = s.deviance;
            if let Some((b0, d0)) = &prev {
                if !dev.is_finite() || dev > d0 + 1e-9 * (d0.abs() + 1.0) {
                    halvings += 1;
                    if halvings > 30 {
                        return Err(Error::Numerical(
                            "multinomial logistic regression: step-halving failed to lower the deviance"
                                .into(),
                        ));
                    }
                    beta = (b0 + &beta) * 0.5;
                    continue;
                }
            } else if !dev.is_finite() {
                return Err(Error::Numerical(
                    "multinomial logistic regression: non-finite deviance".into(),
                ));
            }
            halvings = 0;
            let (info, score) = information(rows, y, w, &s.mu, p);
            let chol = Chol::new(&info, ALIAS_TOL);
            let delta = chol.solve(&score);
            let decrement = score.dot(&delta);
            let done = decrement < opts.tol * (dev.abs() + 1.0);
            if done || iterations >= opts.max_iter {
                let nrows_pos = (0..rows.nrows())
                    .filter(|&i| w.is_none_or(|w| w[i] > 0.0))
                    .count();
                let separation = (s.extreme > 0).then_some(Separation {
                    extreme_rows: s.extreme,
                    complete: s.extreme == nrows_pos,
                });
                if !done && separation.is_none() {
                    return Err(Error::Numerical(format!(
                        "multinomial logistic regression did not converge in {} iterations",
                        opts.max_iter
                    )));
                }
                if done {
                    beta += DMatrix::from_column_slice(p, km1, delta.as_slice());
                }
                return Ok(Multinomial {
                    coef: beta,
                    cov: chol.inverse(),
                    deviance: dev,
                    iterations,
                    separation,
                    aliased: chol.aliased(),
                    chol,
                });
            }
            prev = Some((beta.clone(), dev));
            beta += DMatrix::from_column_slice(p, km1, delta.as_slice());
            iterations += 1;
        }
    }

    /// Number of levels of the response.
    pub fn levels(&self) -> usize {
        self.coef.ncols() + 1
    }

    /// Rank of the information matrix (parameters not aliased).
    pub fn rank(&self) -> usize {
        self.chol.rank()
    }

    /// Standard errors of the stacked parameters.
    pub fn se(&self) -> DVector<f64> {
        self.cov.diagonal().map(f64::sqrt)
    }

    /// Fitted probabilities of every level for every row of `rows`,
    /// `[level][row]` (level 0 included).
    pub fn probabilities<R: Rows + ?Sized>(&self, rows: &R) -> Vec<Vec<f64>> {
        let km1 = self.coef.ncols();
        let eta: Vec<Vec<f64>> = (0..km1)
            .map(|k| linear_predictor(rows, &self.coef.column(k).into_owned()))
            .collect();
        let n = rows.nrows();
        let mut out = vec![vec![0.0; n]; km1 + 1];
        let mut e = vec![0.0; km1];
        let mut mu = vec![0.0; km1];
        for i in 0..n {
            for k in 0..km1 {
                e[k] = eta[k][i];
            }
            out[0][i] = softmax(&e, 0, &mut mu).exp();
            for k in 0..km1 {
                out[k + 1][i] = mu[k];
            }
        }
        out
    }
}

/// The information matrix and the score over the stacked parameters.
fn information<R: Rows + ?Sized>(
    rows: &R,
    y: &[usize],
    w: Option<&[f64]>,
    mu: &[Vec<f64>],
    p: usize,
) -> (DMatrix<f64>, DVector<f64>) {
    let km1 = mu.len();
    let weight = |i: usize| w.map_or(1.0, |w| w[i]);
    let mut info = DMatrix::zeros(p * km1, p * km1);
    let mut score = DVector::zeros(p * km1);
    for k in 0..km1 {
        let mk = &mu[k];
        let c = accumulate(rows, None, |i, _| {
            let wi = weight(i);
            let yk = f64::from(u8::from(y[i] == k + 1));
            (wi * mk[i] * (1.0 - mk[i]), wi * (yk - mk[i]), 0.0, 0.0)
        });
        info.view_mut((k * p, k * p), (p, p)).copy_from(&c.xtx);
        score.rows_mut(k * p, p).copy_from(&c.xtu);
        for (l, ml) in mu.iter().enumerate().take(k) {
            let c = accumulate(rows, None, |i, _| (weight(i) * mk[i] * ml[i], 0.0, 0.0, 0.0));
            let block = -c.xtx;
            info.view_mut((k * p, l * p), (p, p)).copy_from(&block);
            info.view_mut((l * p, k * p), (p, p))
                .copy_from(&block.transpose());
        }
    }
    (info, score)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::DenseRows;
    use crate::model::Logit;

    // With two levels the model is logistic regression: same deviance and
    // coefficients as Logit (both converged to a Newton decrement of 1e-14
    // relative, so they agree to about 1e-9).
    #[test]
    fn two_levels_match_logistic_regression() {
        let n = 60;
        let x = DMatrix::from_fn(n, 3, |i, j| match j {
            0 => 1.0,
            1 => (i as f64 * 0.37).sin() * 2.0,
            _ => ((i * 7 % 11) as f64) / 5.0,
        });
        let y: Vec<usize> = (0..n)
            .map(|i| usize::from((i as f64 * 0.37).sin() + (i * 3 % 5) as f64 * 0.3 > 0.4))
            .collect();
        let yf: Vec<f64> = y.iter().map(|&v| v as f64).collect();
        let rows = DenseRows(x);
        let m = Multinomial::fit(&rows, &y, 2, None, None, LogitOptions::default()).unwrap();
        let l = Logit::fit(&rows, &yf, None, None, LogitOptions::default()).unwrap();
        assert!((m.deviance - l.deviance).abs() < 1e-9 * l.deviance);
        for j in 0..3 {
            assert!((m.coef[(j, 0)] - l.coef[j]).abs() < 1e-7, "{j}");
        }
        assert!(m.separation.is_none());
        assert_eq!(m.rank(), 3);
    }

    // An intercept-only fit reproduces the observed level shares exactly
    // (the maximum likelihood estimate in closed form: b_k = log(n_k / n_0)).
    #[test]
    fn intercept_only_matches_level_shares() {
        let y: Vec<usize> = [0, 1, 2, 2, 1, 2, 0, 2, 2, 1].to_vec();
        let rows = DenseRows(DMatrix::from_element(10, 1, 1.0));
        let m = Multinomial::fit(&rows, &y, 3, None, None, LogitOptions::default()).unwrap();
        assert!((m.coef[(0, 0)] - (3.0f64 / 2.0).ln()).abs() < 1e-10);
        assert!((m.coef[(0, 1)] - (5.0f64 / 2.0).ln()).abs() < 1e-10);
        let want = -2.0 * (2.0 * 0.2f64.ln() + 3.0 * 0.3f64.ln() + 5.0 * 0.5f64.ln());
        assert!((m.deviance - want).abs() < 1e-10);
    }

    #[test]
    fn bad_codes_are_errors() {
        let rows = DenseRows(DMatrix::from_element(3, 1, 1.0));
        assert!(Multinomial::fit(&rows, &[0, 1, 3], 3, None, None, LogitOptions::default()).is_err());
        assert!(Multinomial::fit(&rows, &[0, 0, 0], 1, None, None, LogitOptions::default()).is_err());
    }
}
