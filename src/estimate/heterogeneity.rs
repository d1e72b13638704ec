//! Does the effect differ across subgroups? A Wald test that every
//! contrast is the same in every level of the subgroup column: the
//! differences of each level's contrasts from the first level's, with
//! their covariance from the influence functions of the stratum
//! contrasts (which share the whole-sample models, so the strata are not
//! independent), compared with a chi-square distribution on as many
//! degrees of freedom as differences (Wald 1943; the stacked
//! estimating-equation covariance as in Stefanski & Boos, Am Stat
//! 2002;56:29-38). Ratios and odds ratios are compared on the log scale,
//! as their intervals are.

use super::contrast::{Variance, linearised};
use super::{Problem, Targets};
use crate::model::Chol;
use crate::{Error, Result};
use nalgebra::{DMatrix, DVector};
use serde::Serialize;

/// One method's test of equal effects across the subgroups (the JSON
/// `heterogeneity` item).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Heterogeneity {
    /// The method.
    pub method: String,
    /// The subgroup column.
    pub variable: String,
    /// The Wald statistic.
    pub statistic: f64,
    /// Its degrees of freedom: (levels - 1) x contrasts.
    pub df: usize,
    /// The chi-square upper tail probability.
    pub p_value: f64,
}

/// The test for `method` from its targets in each stratum (`strata[s]`
/// for level code `s`), with covariances by `variance`.
pub fn heterogeneity(
    p: &Problem,
    method: &str,
    strata: &[Targets],
    variance: &Variance<'_>,
) -> Result<Heterogeneity> {
    let variable = p
        .subgroup
        .as_ref()
        .map_or_else(String::new, |g| g.variable.clone());
    let mut diffs: Vec<(f64, Vec<f64>)> = Vec::new();
    for c in p.contrasts() {
        let mut by: Vec<(f64, Vec<f64>)> = Vec::new();
        for t in strata {
            if let Some(v) = linearised(t, &c, p.spec.scale) {
                by.push(v?);
            }
        }
        let Some((first, rest)) = by.split_first() else {
            continue;
        };
        for (v, phi) in rest {
            let d: Vec<f64> = phi.iter().zip(&first.1).map(|(a, b)| a - b).collect();
            diffs.push((v - first.0, d));
        }
    }
    let m = diffs.len();
    if m == 0 {
        return Err(Error::Numerical(format!(
            "{method}: no contrast is formed in two subgroups, so none can be compared"
        )));
    }
    let cov = DMatrix::from_fn(m, m, |i, j| variance.covariance(&diffs[i].1, &diffs[j].1));
    let d = DVector::from_iterator(m, diffs.iter().map(|x| x.0));
    let chol = Chol::new(&cov, crate::model::ALIAS_TOL);
    if !chol.aliased().is_empty() {
        return Err(Error::Numerical(format!(
            "{method}: the covariance of the subgroup contrasts is singular, so the test of equal effects \
             cannot be formed"
        )));
    }
    let statistic = d.dot(&chol.solve(&d));
    if !statistic.is_finite() {
        return Err(Error::Numerical(format!(
            "{method}: the test of equal effects across subgroups is not a finite number"
        )));
    }
    Ok(Heterogeneity {
        method: method.to_string(),
        variable,
        statistic,
        df: m,
        p_value: crate::dist::chi_square_sf(statistic, m as f64),
    })
}
