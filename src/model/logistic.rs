//! Logistic regression for a 0/1 outcome with frequency weights, by
//! Newton-Raphson (equivalently IRLS for the canonical logit link), with
//! step-halving when the deviance rises, warm starts, and a check for
//! separation (fitted probabilities numerically 0 or 1).

use super::{ALIAS_TOL, Chol, accumulate, linear_predictor, score};
use crate::data::{Rows, expit_into};
use crate::maths::expit_std as expit;
use crate::{Error, Result};
use nalgebra::{DMatrix, DVector};

/// Iteration controls.
#[derive(Debug, Clone, Copy)]
pub struct LogitOptions {
    /// Most Newton steps.
    pub max_iter: usize,
    /// Stop when the Newton decrement `g' H^-1 g` (about the deviance still
    /// to gain) falls below `tol * (|deviance| + 1)`.
    pub tol: f64,
}

impl Default for LogitOptions {
    fn default() -> Self {
        LogitOptions {
            max_iter: 50,
            tol: 1e-14,
        }
    }
}

/// Complete or quasi-complete separation: some fitted probabilities are
/// numerically 0 or 1 and their coefficients diverge (Albert & Anderson 1984).
#[derive(Debug, Clone, PartialEq)]
pub struct Separation {
    /// Rows with a fitted probability within 1e-8 of 0 or 1.
    pub extreme_rows: usize,
    /// Every row is fitted at 0 or 1 (complete separation).
    pub complete: bool,
}

impl std::fmt::Display for Separation {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let kind = if self.complete {
            "complete"
        } else {
            "quasi-complete"
        };
        write!(
            f,
            "{kind} separation: {} rows have fitted probabilities of 0 or 1 and some coefficients diverge",
            self.extreme_rows
        )
    }
}

/// A fitted logistic regression.
#[derive(Debug, Clone)]
pub struct Logit {
    /// Coefficients (0 for aliased columns).
    pub coef: DVector<f64>,
    /// Inverse Fisher information, the classic covariance.
    pub cov: DMatrix<f64>,
    /// Deviance, -2 log-likelihood.
    pub deviance: f64,
    /// Newton steps taken.
    pub iterations: usize,
    /// Set when the data separate the outcome.
    pub separation: Option<Separation>,
    /// Aliased columns.
    pub aliased: Vec<usize>,
    /// Sum of the weights.
    pub sum_w: f64,
    chol: Chol,
}

/// The BFGS update of an inverse Hessian `inv` after a step `s` that
/// changed the gradient of the objective by `y` (Nocedal & Wright,
/// *Numerical Optimization*, 2nd ed., 2006, ch. 6; the equation number,
/// 6.17, from memory):
/// `(I - r s y') inv (I - r y s') + r s s'` with `r = 1 / y's`; skipped
/// when `y's <= 0`, where it would lose positive definiteness.
fn bfgs_update(inv: &mut DMatrix<f64>, s: &DVector<f64>, y: &DVector<f64>) {
    let sy = s.dot(y);
    if sy.is_nan() || sy <= 0.0 {
        return;
    }
    let r = 1.0 / sy;
    let hy = &*inv * y;
    let c = r * r * y.dot(&hy) + r;
    *inv -= (s * hy.transpose() + &hy * s.transpose()) * r;
    *inv += s * s.transpose() * c;
}

/// The result of [`Logit::refit`].
#[derive(Debug, Clone)]
pub struct Refit {
    /// Coefficients.
    pub coef: DVector<f64>,
    /// Set when the new weights separate the outcome.
    pub separation: Option<Separation>,
    /// The linear predictor of every row at `coef`.
    pub eta: Vec<f64>,
}

/// Most quasi-Newton steps of [`Logit::refit`] before it falls back to
/// Newton-Raphson.
const REFIT_MAX_STEPS: usize = 40;

/// [`Logit::refit`] falls back to Newton-Raphson when a step shrinks the
/// decrement by less than this factor (Newton would then take fewer passes).
const REFIT_MIN_CONTRACTION: f64 = 0.25;

/// log(1 + exp(x)) without overflow.
fn softplus(x: f64) -> f64 {
    x.max(0.0) + (-x.abs()).exp().ln_1p()
}

const EXTREME: f64 = 1e-8;

/// 1 for a row of positive weight fitted within [`EXTREME`] of 0 or 1 (or
/// not a number), else 0: summed, the count behind a separation check.
fn extreme(w: f64, mu: f64) -> f64 {
    f64::from(u8::from(w > 0.0 && !(EXTREME..=1.0 - EXTREME).contains(&mu)))
}

/// Below this share of X'X's curvature in some direction, the information
/// counts as singular there (separation). At convergence under separation
/// the separated rows' weights are below about 1e-13; at a finite MLE the
/// share is that of the bulk of the rows, rarely below 1e-3 (common practice
/// of reading a near-singular information as separation, no source).
const SEPARATION_CURVATURE: f64 = 1e-8;

/// The smallest ratio `d'Hd / d'Gd` over directions `d` in the span of the
/// columns `g` does not alias (the smallest generalized eigenvalue of the
/// pair). 0 when `h` is singular there or not finite.
fn relative_curvature(h: &DMatrix<f64>, g: &DMatrix<f64>) -> f64 {
    let aliased = Chol::new(g, ALIAS_TOL).aliased();
    let keep: Vec<usize> = (0..g.nrows()).filter(|j| !aliased.contains(j)).collect();
    if keep.is_empty() {
        return 1.0;
    }
    let sub = |m: &DMatrix<f64>| DMatrix::from_fn(keep.len(), keep.len(), |i, j| m[(keep[i], keep[j])]);
    let Some(chol) = nalgebra::Cholesky::new(sub(g)) else {
        return 1.0;
    };
    let l = chol.l();
    let Some(a) = l.solve_lower_triangular(&sub(h)) else {
        return 0.0;
    };
    let Some(m) = l.solve_lower_triangular(&a.transpose()) else {
        return 0.0;
    };
    let m = (&m + m.transpose()) * 0.5;
    if m.iter().any(|v| !v.is_finite()) {
        return 0.0;
    }
    m.symmetric_eigenvalues().min()
}

impl Logit {
    /// Fits `y` (0/1) on `rows`, from `warm` (or zeros). Fails with
    /// [`Error::Numerical`] when the iterations do not converge and the data
    /// show no separation; with separation the fit is returned with
    /// [`Logit::separation`] set, for the caller to refuse or warn.
    pub fn fit<R: Rows + ?Sized>(
        rows: &R,
        y: &[f64],
        w: Option<&[f64]>,
        warm: Option<&DVector<f64>>,
        opts: LogitOptions,
    ) -> Result<Logit> {
        let p = rows.ncols();
        let mut beta = warm.cloned().unwrap_or_else(|| DVector::zeros(p));
        if beta.len() != p {
            beta = DVector::zeros(p);
        }
        let mut prev: Option<(DVector<f64>, f64)> = None;
        let mut halvings = 0;
        let mut iterations = 0;
        loop {
            let c = accumulate(rows, Some(&beta), |i, eta| {
                let wi = w.map_or(1.0, |w| w[i]);
                let mu = expit(eta);
                let dev = 2.0 * wi * if y[i] > 0.5 { softplus(-eta) } else { softplus(eta) };
                (wi * mu * (1.0 - mu), wi * (y[i] - mu), dev, extreme(wi, mu))
            });
            let (dev, extreme) = (c.s[0], c.s[1] as usize);
            if let Some((b0, d0)) = &prev {
                if !dev.is_finite() || dev > d0 + 1e-9 * (d0.abs() + 1.0) {
                    halvings += 1;
                    if halvings > 30 {
                        return Err(Error::Numerical(
                            "logistic regression: step-halving failed to lower the deviance".into(),
                        ));
                    }
                    beta = (b0 + &beta) * 0.5;
                    continue;
                }
            } else if !dev.is_finite() {
                return Err(Error::Numerical(
                    "logistic regression: non-finite deviance".into(),
                ));
            }
            halvings = 0;
            let chol = Chol::new(&c.xtx, ALIAS_TOL);
            let delta = chol.solve(&c.xtu);
            let decrement = c.xtu.dot(&delta);
            let done = decrement < opts.tol * (dev.abs() + 1.0);
            if done || iterations >= opts.max_iter {
                let nrows_pos = (0..rows.nrows())
                    .filter(|&i| w.is_none_or(|w| w[i] > 0.0))
                    .count();
                // Fitted probabilities near 0 or 1 alone do not mean
                // separation: a finite MLE can have them (a strong
                // predictor, an outlying row). Under separation the weights
                // mu (1 - mu) vanish along the separating direction, so the
                // information is singular there relative to X'X.
                let separated = extreme > 0 && {
                    let g = accumulate(rows, None, |i, _| (w.map_or(1.0, |w| w[i]), 0.0, 0.0, 0.0));
                    relative_curvature(&c.xtx, &g.xtx) < SEPARATION_CURVATURE
                };
                let separation = separated.then_some(Separation {
                    extreme_rows: extreme,
                    complete: extreme == nrows_pos,
                });
                if !done && separation.is_none() {
                    return Err(Error::Numerical(format!(
                        "logistic regression did not converge in {} iterations",
                        opts.max_iter
                    )));
                }
                if done {
                    beta += &delta;
                }
                let sum_w = w.map_or(rows.nrows() as f64, |w| w.iter().sum());
                return Ok(Logit {
                    sum_w,
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
            beta += &delta;
            iterations += 1;
        }
    }

    /// The coefficients under new frequency weights `w` (a bootstrap
    /// resample of the same rows), starting from this converged fit, with
    /// the separation found if any and the linear predictor of every row
    /// at the coefficients returned.
    ///
    /// The steps are quasi-Newton: they start from this fit's inverse
    /// information, scaled by the ratio of the weight totals, in place of
    /// the new one, and improve it by the BFGS update after each step, so
    /// each pass over the rows takes two products with vectors instead of
    /// forming `X'WX`. The error then shrinks by a large factor per step
    /// when the new information is close to the old (as for a resample of
    /// many rows: about 1000 per step for 20,000 rows, measured), where
    /// Newton's shrinks quadratically. The stopping rule is
    /// [`Logit::fit`]'s, with this fit's deviance (rescaled to the new total
    /// weight) as its scale; the coefficients returned are those at which
    /// it held (no last step, so that their linear predictor is the one just
    /// computed). When a step shrinks the decrement by less than a factor
    /// of 4, or some
    /// fitted probability is numerically 0 or 1, the fit falls back to
    /// [`Logit::fit`] from the current coefficients, which also detects
    /// separation.
    pub fn refit<R: Rows + ?Sized>(
        &self,
        rows: &R,
        y: &[f64],
        w: &[f64],
        opts: LogitOptions,
    ) -> Result<Refit> {
        let total: f64 = w.iter().sum();
        let ratio = self.sum_w / total;
        let tol = opts.tol * (self.deviance.abs() / ratio + 1.0);
        let mut beta = self.coef.clone();
        let mut last = f64::INFINITY;
        let mut eta = vec![0.0; rows.nrows()];
        // The inverse information, updated by BFGS after each step.
        let mut inv = &self.cov * ratio;
        let mut prev: Option<(DVector<f64>, DVector<f64>)> = None;
        for _ in 0..REFIT_MAX_STEPS {
            let (g, extremes) = score(rows, &beta, &mut eta, |start, eta, u| {
                expit_into(eta, u);
                let (w, y) = (&w[start..start + u.len()], &y[start..start + u.len()]);
                let mut count = 0.0;
                for ((u, &wi), &yi) in u.iter_mut().zip(w).zip(y) {
                    count += extreme(wi, *u);
                    *u = wi * (yi - *u);
                }
                count
            });
            if extremes > 0.0 {
                break;
            }
            if let Some((step, g0)) = prev.take() {
                bfgs_update(&mut inv, &step, &(g0 - &g));
            }
            let delta = &inv * &g;
            let decrement = g.dot(&delta);
            if decrement < tol {
                return Ok(Refit {
                    coef: beta,
                    separation: None,
                    eta,
                });
            }
            if decrement.is_nan() || decrement > REFIT_MIN_CONTRACTION * last {
                break;
            }
            beta += &delta;
            last = decrement;
            prev = Some((delta, g));
        }
        let f = Logit::fit(rows, y, Some(w), Some(&beta), opts)?;
        Ok(Refit {
            eta: linear_predictor(rows, &f.coef),
            coef: f.coef,
            separation: f.separation,
        })
    }

    /// Standard errors from the inverse information.
    pub fn se(&self) -> DVector<f64> {
        self.cov.diagonal().map(f64::sqrt)
    }

    /// `H^-1 k` with `H = sum w mu (1 - mu) x x'`: `x_i' H^-1 k (y_i - mu_i)`
    /// is row i's share of `k' (b - beta)`.
    pub fn bread_solve(&self, k: &DVector<f64>) -> DVector<f64> {
        self.chol.solve(k)
    }

    /// The factor of the bread matrix (`X'WX`, or the information).
    pub fn chol(&self) -> &Chol {
        &self.chol
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::DenseRows;

    fn design(x: &[f64]) -> DenseRows {
        DenseRows(DMatrix::from_fn(
            x.len(),
            2,
            |i, j| if j == 0 { 1.0 } else { x[i] },
        ))
    }

    #[test]
    fn binary_covariate_gives_the_group_log_odds() {
        // Saturated model: the MLE reproduces each group's log odds (closed
        // form; 1e-10 for the iterations' tolerance).
        let x = [0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0, 1.0, 1.0];
        let y = [1.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0, 0.0, 0.0];
        let f = Logit::fit(&design(&x), &y, None, None, LogitOptions::default()).unwrap();
        let logit = |p: f64| (p / (1.0 - p)).ln();
        assert!((f.coef[0] - logit(0.25)).abs() < 1e-10);
        assert!((f.coef[1] - (logit(0.6) - logit(0.25))).abs() < 1e-10);
        assert!(f.separation.is_none());
        // Var of a group log odds is 1/(n p (1-p)) (closed form).
        assert!((f.cov[(0, 0)] - 1.0 / (4.0 * 0.25 * 0.75)).abs() < 1e-9);
        // Frequency weights equal repeated rows.
        let w = [2.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0];
        let g = Logit::fit(&design(&x), &y, Some(&w), None, LogitOptions::default()).unwrap();
        assert!((g.coef[0] - logit(0.4)).abs() < 1e-10);
    }

    /// Rows (1, x1, x2) and a 0/1 outcome from a logistic model, from a
    /// fixed linear congruential stream.
    fn simulated(n: usize) -> (DenseRows, Vec<f64>) {
        let mut state = 12345u64;
        let mut unif = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((state >> 11) as f64 + 0.5) / (1u64 << 53) as f64
        };
        let mut x = DMatrix::zeros(n, 3);
        let mut y = vec![0.0; n];
        for i in 0..n {
            let (a, b) = (unif() - 0.5, unif() - 0.5);
            x[(i, 0)] = 1.0;
            x[(i, 1)] = a;
            x[(i, 2)] = b;
            y[i] = f64::from(u8::from(unif() < expit(0.3 + 1.5 * a - 2.0 * b)));
        }
        (DenseRows(x), y)
    }

    #[test]
    fn refit_from_a_converged_fit_agrees_with_newton() {
        // Resample weights (counts of a draw with replacement): the
        // quasi-Newton refit reaches the maximum-likelihood fit that
        // Newton-Raphson finds from scratch.
        let (rows, y) = simulated(3000);
        let full = Logit::fit(&rows, &y, None, None, LogitOptions::default()).unwrap();
        assert_eq!(full.sum_w, 3000.0);
        let mut w = vec![0.0; 3000];
        let mut state = 99u64;
        for _ in 0..3000 {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1);
            w[((state >> 33) % 3000) as usize] += 1.0;
        }
        let r = full.refit(&rows, &y, &w, LogitOptions::default()).unwrap();
        let (coef, sep) = (r.coef, r.separation);
        let newton = Logit::fit(&rows, &y, Some(&w), None, LogitOptions::default()).unwrap();
        assert!(sep.is_none());
        // Within 1e-4 standard errors: the stopping rule bounds the
        // remaining error of either fit at about sqrt(1e-14 x deviance)
        // standard errors.
        let close = |a: &DVector<f64>, b: &Logit| (0..3).all(|j| (a[j] - b.coef[j]).abs() < 1e-4 * b.se()[j]);
        assert!(close(&coef, &newton), "{coef} {}", newton.coef);
        let eta = crate::model::linear_predictor(&rows, &coef);
        assert!(eta.iter().zip(&r.eta).all(|(a, b)| (a - b).abs() < 1e-12));
        assert!((&coef - &full.coef).amax() > 1e-3, "the resample moved the fit");
        // Weights on half the rows only (total 1500): same agreement.
        let half: Vec<f64> = (0..3000usize)
            .map(|i| f64::from(u8::from(i.is_multiple_of(2))))
            .collect();
        let coef = full
            .refit(&rows, &y, &half, LogitOptions::default())
            .unwrap()
            .coef;
        let newton = Logit::fit(&rows, &y, Some(&half), None, LogitOptions::default()).unwrap();
        assert!(close(&coef, &newton), "{coef} {}", newton.coef);
    }

    #[test]
    fn refit_falls_back_to_newton_and_finds_separation() {
        // Weights that keep only rows whose outcome agrees with the sign of
        // x: complete separation in the resample (Albert & Anderson 1984),
        // which the refit must report as Logit::fit does.
        let x = [-2.0, -1.0, -0.5, 0.5, 1.0, 2.0, -1.5, 1.5];
        let y = [0.0, 0.0, 1.0, 0.0, 1.0, 1.0, 1.0, 0.0];
        let rows = design(&x);
        let full = Logit::fit(&rows, &y, None, None, LogitOptions::default()).unwrap();
        assert!(full.separation.is_none());
        let w = [1.0, 1.0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0];
        let sep = full
            .refit(&rows, &y, &w, LogitOptions::default())
            .unwrap()
            .separation;
        let newton = Logit::fit(&rows, &y, Some(&w), None, LogitOptions::default()).unwrap();
        assert_eq!(sep, newton.separation);
        assert!(sep.expect("separation").complete);
    }

    #[test]
    fn separation_is_reported_as_a_condition() {
        // y = 1 exactly when x > 2.5: complete separation (Albert & Anderson 1984).
        let x = [1.0, 2.0, 3.0, 4.0, 2.2, 2.7];
        let y = [0.0, 0.0, 1.0, 1.0, 0.0, 1.0];
        let f = Logit::fit(&design(&x), &y, None, None, LogitOptions::default()).unwrap();
        let s = f.separation.expect("separation");
        assert!(s.complete, "{s:?}");
        // Quasi-complete: one x value holds both outcomes.
        let x = [1.0, 2.0, 3.0, 3.0, 4.0, 5.0];
        let y = [0.0, 0.0, 0.0, 1.0, 1.0, 1.0];
        let f = Logit::fit(&design(&x), &y, None, None, LogitOptions::default()).unwrap();
        let s = f.separation.expect("separation");
        assert!(!s.complete && s.extreme_rows == 4, "{s:?}");
    }

    #[test]
    fn extreme_fitted_probabilities_without_separation_are_not_separation() {
        // The classes overlap (x = 0.5 and 1 hold both outcomes), so the
        // MLE is finite (Albert & Anderson 1984), yet the rows at the ends
        // lie far enough out to be fitted within 1e-8 of 0 or 1.
        let x = [
            -9.0, -8.5, -8.0, 0.0, 0.5, 0.5, 1.0, 1.0, 1.5, 2.0, 9.0, 9.5, 10.0,
        ];
        let y = [0.0, 0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 0.0, 1.0, 1.0, 1.0, 1.0, 1.0];
        let f = Logit::fit(&design(&x), &y, None, None, LogitOptions::default()).unwrap();
        assert!(f.separation.is_none(), "{:?}", f.separation);
        let mu = |xi: f64| expit(f.coef[0] + f.coef[1] * xi);
        assert!(mu(-9.0) < 1e-8 && mu(10.0) > 1.0 - 1e-8, "{:?}", f.coef);
        // A finite MLE solves the score equations sum (y - mu) x = 0
        // (closed form; 1e-8 for the Newton tolerance).
        let (g0, g1) = x.iter().zip(&y).fold((0.0, 0.0), |(a, b), (&xi, &yi)| {
            (a + yi - mu(xi), b + (yi - mu(xi)) * xi)
        });
        assert!(g0.abs() < 1e-8 && g1.abs() < 1e-8, "{g0} {g1}");
        assert!(f.coef.iter().all(|c| c.abs() < 10.0), "{:?}", f.coef);
    }
}
