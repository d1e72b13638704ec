//! The outcome model shared by regression (standardization) and AIPW: least
//! squares for a continuous outcome, logistic regression for a binary one,
//! with the exposure term and any exposure products; predictions with the
//! exposure set to a value; and the coefficients' influence on a linear
//! functional.

use super::{Nuisance, Observed};
use crate::data::Setting;
use crate::estimate::{ExposureKind, Target};
use crate::maths::expit_std as expit;
use crate::model::{Chol, Logit, LogitOptions, Ols, Separation, linear_predictor, weighted_sum};
use crate::problem::{Problem, aliased};
use crate::{Error, Result};
use nalgebra::DVector;

/// A fitted outcome model: its coefficients and the factor of its bread.
#[derive(Debug, Clone)]
pub struct OutcomeFit {
    /// Coefficients of the problem's outcome design.
    pub coef: DVector<f64>,
    /// Factor of the bread (the information matrix, or X'WX).
    pub chol: Chol,
    /// Signs of separation of a logistic fit.
    pub separation: Option<Separation>,
    /// A logistic model (binary outcome), else least squares.
    pub binary: bool,
    /// The linear predictor of every row, exposure as observed.
    eta: Vec<f64>,
    /// A full-sample logistic fit, to start resamples from.
    logit: Option<Logit>,
    /// Every row's mean outcome under each exposure level, made with the
    /// fit (regression and AIPW both read them); empty for a dose.
    at: Vec<(Target, Vec<f64>)>,
}

impl Nuisance for OutcomeFit {
    /// Fits the problem's outcome design with frequency weights `w`; a
    /// resample of a binary outcome starts from `full`, reusing its
    /// information matrix.
    fn fit(p: &Problem, w: Option<&[f64]>, full: Option<&OutcomeFit>) -> Result<OutcomeFit> {
        let design = &p.outcome_design;
        let rows = p.outcome_rows();
        let opts = LogitOptions::default();
        let full = full.and_then(|c| c.logit.as_ref());
        let exposure = design.exposure_terms();
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
        let hits = |a: &[usize]| a.iter().any(|j| exposure.contains(j));
        let aliased_in = |chol: &Chol| match chol.aliased() {
            a if a.is_empty() => false,
            a if hits(&a) => true,
            _ => hits(&aliased(design, &p.frame, w)),
        };
        let binary = p.binary_outcome();
        let (mut fit, exposure_aliased) = match (binary, w, full) {
            (true, Some(w), Some(full)) => {
                let r = full.refit(&rows, p.y(), w, opts)?;
                // The refit factors no new information matrix, so aliasing
                // is decided directly; the factor kept is the full sample's
                // (a resample's influence is never asked for).
                let aliased = hits(&aliased(design, &p.frame, Some(w)));
                let fit = OutcomeFit {
                    coef: r.coef,
                    chol: full.chol().clone(),
                    separation: r.separation,
                    binary,
                    eta: r.eta,
                    logit: None,
                    at: Vec::new(),
                };
                (fit, aliased)
            }
            (true, _, _) => {
                let start = design.logit_start(p.y(), w);
                let f = Logit::fit(&rows, p.y(), w, Some(&start), opts)?;
                let fit = OutcomeFit {
                    eta: linear_predictor(&rows, &f.coef),
                    coef: f.coef.clone(),
                    chol: f.chol().clone(),
                    separation: f.separation.clone(),
                    binary,
                    logit: Some(f),
                    at: Vec::new(),
                };
                let aliased = aliased_in(&fit.chol);
                (fit, aliased)
            }
            (false, _, _) => {
                let (coef, chol) = Ols::coefficients(&rows, p.y(), w)?;
                let fit = OutcomeFit {
                    eta: linear_predictor(&rows, &coef),
                    coef,
                    chol,
                    separation: None,
                    binary,
                    logit: None,
                    at: Vec::new(),
                };
                let aliased = aliased_in(&fit.chol);
                (fit, aliased)
            }
        };
        if exposure_aliased && fit.separation.is_none() {
            return Err(Error::Numerical(
                "the exposure term is aliased in the outcome model".into(),
            ));
        }
        // Kept for exposure levels, which regression and AIPW both read; a
        // dose's curve points are predicted when asked.
        if p.kind != ExposureKind::Dose {
            fit.at = p
                .targets()
                .into_iter()
                .map(|t| (t, fit.predict(p, t.setting())))
                .collect();
        }
        Ok(fit)
    }
}

impl OutcomeFit {
    /// Every row's mean outcome under target `t` of the problem the model
    /// was fitted for.
    pub fn at(&self, p: &Problem, t: Target) -> std::borrow::Cow<'_, [f64]> {
        match self.at.iter().find(|(u, _)| *u == t) {
            Some((_, m)) => std::borrow::Cow::Borrowed(m),
            None => std::borrow::Cow::Owned(self.predict(p, t.setting())),
        }
    }

    /// Mean outcome of every row with the exposure set by `setting`: the
    /// observed linear predictor, changed in the terms that involve the
    /// exposure only.
    pub fn predict(&self, p: &Problem, setting: Setting) -> Vec<f64> {
        let mut m = self.eta.clone();
        if setting != Setting::Observed {
            let a = p.exposure;
            let design = &p.outcome_design;
            let terms = design.terms();
            let (own, other): (Vec<usize>, Vec<usize>) = (0..terms.len()).partition(|&j| terms[j].uses(a));
            let part = design.without(&other);
            let b = DVector::from_iterator(own.len(), own.iter().map(|&j| self.coef[j]));
            let new = linear_predictor(&part.rows(&p.frame, setting), &b);
            let old = linear_predictor(&part.rows(&p.frame, Setting::Observed), &b);
            for ((m, n), o) in m.iter_mut().zip(new).zip(old) {
                *m += n - o;
            }
        }
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
        weighted_sum(&p.outcome_design.rows(&p.frame, setting), &v)
    }

    /// Row i's influence on `k' (b - beta)`: `x_i' B^-1 k w_i (y_i - mu_i)`,
    /// `w_i` the row's sampling weight (1 when none are given; the bread
    /// `B` is then the weighted `X'WX` or information of the weighted fit).
    /// When the model was fitted on the observed rows under observation
    /// weights `c_i` (`observed`), each score carries `c_i` too, and the
    /// influence of the weights' own estimation is added (the models of
    /// being observed stacked with the outcome model).
    pub fn influence(
        &self,
        p: &Problem,
        k: &DVector<f64>,
        mu_observed: &[f64],
        observed: Option<&Observed>,
    ) -> Vec<f64> {
        let c = self.chol.solve(k);
        let mut d = linear_predictor(&p.outcome_rows(), &c);
        for (i, ((d, y), m)) in d.iter_mut().zip(p.y()).zip(mu_observed).enumerate() {
            *d *= p.weight(i) * (y - m);
        }
        if let Some(o) = observed {
            let more = o.influence(p, &d, true);
            for ((d, c), m) in d.iter_mut().zip(&o.stabilised).zip(more) {
                *d = *d * c + m;
            }
        }
        d
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::{Dataset, Shape};
    use crate::problem::Spec;

    fn problem(binary_exposure: bool) -> Problem {
        problem_of(binary_exposure, 400)
    }

    fn problem_of(binary_exposure: bool, n: usize) -> Problem {
        let wave = |k: f64| (0..n).map(|i| (i as f64 * k).sin()).collect::<Vec<f64>>();
        let (l, m) = (wave(0.37), wave(1.13));
        let a: Vec<f64> = (0..n)
            .map(|i| {
                if binary_exposure {
                    f64::from(u8::from(l[i] + 0.5 * m[i] > 0.1))
                } else {
                    1.0 + l[i] + (i as f64 * 0.71).cos()
                }
            })
            .collect();
        let y: Vec<f64> = (0..n)
            .map(|i| a[i] * (1.0 + l[i]) + m[i] * m[i] + (i as f64 * 2.9).sin())
            .collect();
        let data = Dataset::from_columns(
            "t.csv",
            vec![("a".into(), a), ("y".into(), y), ("l".into(), l), ("m".into(), m)],
        )
        .unwrap();
        let spec = Spec {
            exposure: "a".into(),
            outcome: "y".into(),
            covariates: vec!["l".into(), "m".into()],
            interact: vec!["l".into()],
            shape: Shape::Quadratic,
            ..Spec::default()
        };
        Problem::build(&data, &spec).unwrap()
    }

    #[test]
    fn predictions_change_only_the_exposure_terms() {
        // The observed linear predictor corrected in the exposure terms
        // equals the linear predictor of the design filled under the
        // setting (an identity of the centred design; 1e-12).
        for (binary, settings) in [
            (
                true,
                vec![Setting::Fixed(1.0), Setting::Fixed(0.0), Setting::Observed],
            ),
            (
                false,
                vec![Setting::Shift(1.0), Setting::Fixed(2.5), Setting::Observed],
            ),
        ] {
            let p = problem(binary);
            let m = OutcomeFit::fit(&p, None, None).unwrap();
            assert!(p.outcome_design.terms().iter().any(|t| t.factors.len() > 1));
            for s in settings {
                let direct = linear_predictor(&p.outcome_design.rows(&p.frame, s), &m.coef);
                let got = m.predict(&p, s);
                let worst = direct
                    .iter()
                    .zip(&got)
                    .map(|(a, b)| (a - b).abs())
                    .fold(0.0, f64::max);
                assert!(worst < 1e-12, "{s:?}: {worst}");
            }
        }
    }

    #[test]
    fn a_design_column_equals_the_filled_block_column() {
        // Over several blocks, stored (the propensity design) and streamed
        // (the outcome design under a fixed exposure), bit for bit.
        use crate::data::{BLOCK, Rows};
        let p = problem_of(true, 2 * BLOCK + 77);
        let check = |rows: &crate::data::DesignRows| {
            let (n, k) = (rows.nrows(), rows.ncols());
            let mut all = vec![0.0; n * k];
            rows.fill(0, n, &mut all);
            for j in 0..k {
                assert_eq!(rows.column(j), all[j * n..(j + 1) * n].to_vec(), "column {j}");
            }
        };
        check(&p.propensity_rows());
        check(&p.outcome_design.rows(&p.frame, Setting::Fixed(1.0)));
    }
}
