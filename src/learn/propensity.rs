//! The propensity model of a binary exposure, shared by IPW, AIPW and the
//! diagnostics: a logistic regression of the exposure on the adjustment
//! terms, scores clipped to `[trim, 1 - trim]` when asked, and each row's
//! influence on a linear functional of its coefficients.

use super::Nuisance;
use crate::data::{Kind, value_text};
use crate::maths::expit_std as expit;
use crate::model::{Logit, LogitOptions, linear_predictor};
use crate::problem::Problem;
use crate::{Error, Result};
use nalgebra::DVector;

/// A fitted propensity model.
#[derive(Debug, Clone)]
pub struct Propensity {
    /// Coefficients.
    pub coef: DVector<f64>,
    /// The fit with its information matrix (full-sample fits only).
    fit: Option<Logit>,
    /// Scores after clipping.
    pub e: Vec<f64>,
    /// Scores before clipping, when clipping changed any.
    raw: Option<Vec<f64>>,
}

impl Nuisance for Propensity {
    /// Fits with frequency weights `w`; a resample starts from `full`,
    /// reusing its information matrix. Refuses (an error) when the
    /// exposure is separated, since the weights would be unbounded.
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&Propensity>) -> Result<Propensity> {
        let rows = p.propensity_rows();
        let opts = LogitOptions::default();
        let full = full.and_then(|c| c.fit.as_ref());
        let (coef, separation, fit, eta) = match (w, full) {
            (Some(w), Some(full)) => {
                let r = full.refit(&rows, p.a(), w, opts)?;
                (r.coef, r.separation, None, Some(r.eta))
            }
            _ => {
                let start = p.propensity.logit_start(p.a(), w);
                let f = Logit::fit(&rows, p.a(), w, Some(&start), opts)?;
                (f.coef.clone(), f.separation.clone(), Some(f), None)
            }
        };
        if let Some(s) = &separation {
            let x = &p.spec.exposure;
            // On the full sample this is a property of the data (bad input,
            // explained by the covariates behind it); in a resample it is a
            // failed replicate.
            return Err(match full {
                None => Error::Separation(format!(
                    "the exposure '{x}' is predicted perfectly by {} ({s} in its propensity model): those \
                     units had no chance of the other exposure level (a positivity violation), so weighting \
                     (ipw, aipw) cannot be used, and clipping the scores would only hide it; \
                     coarsen or leave out the covariates named, or restrict the data to units that could \
                     have been either exposed or unexposed",
                    separating_terms(p, &coef)
                )),
                Some(_) => Error::Numerical(format!(
                    "propensity model for '{x}': {s}; weighting cannot be used on this resample"
                )),
            });
        }
        let mut e = eta.unwrap_or_else(|| linear_predictor(&rows, &coef));
        e.iter_mut().for_each(|x| *x = expit(*x));
        let raw = match p.spec.trim {
            Some(t) if t > 0.0 && e.iter().any(|&x| x < t || x > 1.0 - t) => {
                let raw = e.clone();
                e.iter_mut().for_each(|x| *x = x.clamp(t, 1.0 - t));
                Some(raw)
            }
            _ => None,
        };
        Ok(Propensity { coef, fit, e, raw })
    }
}

impl Propensity {
    /// Row i's score before clipping.
    pub fn raw(&self, i: usize) -> f64 {
        self.raw.as_ref().map_or(self.e[i], |r| r[i])
    }

    /// d e_i / d (linear predictor): e (1 - e), or 0 where the score was
    /// clipped.
    pub fn slope(&self, i: usize) -> f64 {
        if self.clipped(i) {
            0.0
        } else {
            self.e[i] * (1.0 - self.e[i])
        }
    }

    /// Was row i's score clipped (its derivative in the coefficients is 0)?
    pub fn clipped(&self, i: usize) -> bool {
        self.raw.as_ref().is_some_and(|r| r[i] != self.e[i])
    }

    /// Row i's influence on `k' (gamma_hat - gamma)`: `z_i' I^-1 k (A_i - e_i)`.
    pub fn influence(&self, p: &Problem, k: &DVector<f64>) -> Vec<f64> {
        let fit = self.fit.as_ref().expect("influence of a full-sample fit");
        let c = fit.bread_solve(k);
        let mut d = linear_predictor(&p.propensity_rows(), &c);
        // Under sampling weights the score of row i is w_i z_i (A_i - e_i)
        // and the information is weighted alike.
        for (i, (d, a)) in d.iter_mut().zip(p.a()).enumerate() {
            *d *= p.weight(i) * (a - self.raw(i));
        }
        d
    }
}

/// Which adjustment covariates separate the exposure, in words: each one
/// that alone predicts it perfectly (a level or value whose rows are all
/// exposed or all unexposed, or a number whose exposed and unexposed ranges
/// do not overlap); when none does alone, the model terms whose
/// coefficients (times the term's standard deviation) grew largest as the
/// fit diverged.
pub fn separating_terms(p: &Problem, coef: &DVector<f64>) -> String {
    let a = p.a();
    let mut alone = Vec::new();
    for &c in &p.covariates {
        let (name, col) = (p.frame.name(c), p.frame.col(c));
        let labels: Vec<String> = match p.frame.kind(c) {
            Kind::Categorical { levels } => levels.clone(),
            Kind::Binary { low, high } => vec![low.clone(), high.clone()],
            Kind::Numeric => {
                let range = |arm: f64| {
                    col.iter()
                        .zip(a)
                        .filter(|(_, g)| **g == arm)
                        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), (&v, _)| {
                            (lo.min(v), hi.max(v))
                        })
                };
                let (e, u) = (range(1.0), range(0.0));
                if e.0 >= u.1 {
                    alone.push(format!(
                        "'{name}' is at least {} in every exposed row and at most {} in every unexposed row",
                        value_text(e.0),
                        value_text(u.1)
                    ));
                } else if u.0 >= e.1 {
                    alone.push(format!(
                        "'{name}' is at most {} in every exposed row and at least {} in every unexposed row",
                        value_text(e.1),
                        value_text(u.0)
                    ));
                }
                continue;
            }
        };
        // Codes 0, 1, ... name the levels; a level seen in one exposure
        // group only separates.
        for (k, label) in labels.iter().enumerate() {
            let (n, exposed) = col
                .iter()
                .zip(a)
                .filter(|(v, _)| **v == k as f64)
                .fold((0usize, 0usize), |(n, e), (_, &g)| {
                    (n + 1, e + usize::from(g == 1.0))
                });
            let which = match exposed {
                _ if n == 0 => continue,
                e if e == n => "exposed",
                0 => "unexposed",
                _ => continue,
            };
            alone.push(format!("all {n} rows with {name} = {label} are {which}"));
        }
    }
    if !alone.is_empty() {
        return format!("its adjustment covariates: {}", alone.join("; "));
    }
    let rows = p.propensity_rows();
    let terms = p.propensity.terms();
    let mut size: Vec<(f64, usize)> = (0..terms.len())
        .filter(|&j| !terms[j].is_intercept())
        .map(|j| {
            let col = rows.column(j);
            let n = col.len().max(1) as f64;
            let mean = col.iter().sum::<f64>() / n;
            let sd = (col.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / n).sqrt();
            ((coef[j] * sd).abs(), j)
        })
        .collect();
    size.sort_by(|a, b| b.0.total_cmp(&a.0));
    let top: Vec<String> = size
        .iter()
        .take(3)
        .map(|&(_, j)| format!("'{}'", terms[j].name))
        .collect();
    format!(
        "a combination of its adjustment covariates (the terms whose coefficients diverged most: {})",
        top.join(", ")
    )
}
