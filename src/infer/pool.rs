//! Rubin's rules: one estimate from the analyses of M imputed datasets
//! (Rubin, *Multiple Imputation for Nonresponse in Surveys*, 1987, ch. 3),
//! with the small-sample degrees of freedom of Barnard & Rubin (1999,
//! Biometrika 86:948-955).
//!
//! With estimates `q_m` and squared standard errors `u_m`:
//! `Q = mean q_m`, within `W = mean u_m`, between
//! `B = sum (q_m - Q)^2 / (M - 1)`, total `T = W + (1 + 1/M) B`. With
//! `lambda = (1 + 1/M) B / T`, `nu_old = (M - 1) / lambda^2`,
//! `nu_obs = (nu_com + 1) / (nu_com + 3) nu_com (1 - lambda)` and
//! `nu = nu_old nu_obs / (nu_old + nu_obs)` (`nu_obs` alone when B is 0).
//! The fraction of missing information is
//! `gamma = (r + 2 / (nu + 3)) / (r + 1)` with `r = (1 + 1/M) B / W`, the
//! relative increase in variance, and the Barnard-Rubin `nu` (the form
//! van Buuren 2018, *Flexible Imputation of Missing Data*, 2nd ed., eq.
//! 2.24 writes with that `nu`).

use crate::{Error, Result};

/// The pooled estimate of one quantity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pooled {
    /// The mean of the estimates, `Q`.
    pub estimate: f64,
    /// Within-imputation variance `W`.
    pub within: f64,
    /// Between-imputation variance `B`.
    pub between: f64,
    /// Total variance `T`.
    pub total: f64,
    /// Barnard-Rubin degrees of freedom.
    pub df: f64,
    /// Relative increase in variance due to nonresponse, `r`.
    pub riv: f64,
    /// Fraction of missing information, `gamma`.
    pub fmi: f64,
}

impl Pooled {
    /// The standard error, `sqrt(T)`.
    pub fn std_error(&self) -> f64 {
        self.total.sqrt()
    }

    /// The interval `Q -/+ t(nu) sqrt(T)` at `level`.
    pub fn ci(&self, level: f64) -> Result<[f64; 2]> {
        let t = crate::dist::t_critical(level, self.df)?;
        let h = t * self.std_error();
        Ok([self.estimate - h, self.estimate + h])
    }
}

/// Pools the estimates `q` with squared standard errors `u` (one each per
/// imputed dataset, at least two) given the complete-data degrees of
/// freedom `nu_com`.
pub fn rubin(q: &[f64], u: &[f64], nu_com: f64) -> Result<Pooled> {
    let m = q.len();
    if m < 2 || u.len() != m {
        return Err(Error::Internal(format!(
            "Rubin's rules need at least two estimates with a variance each ({m} estimates, {} variances)",
            u.len()
        )));
    }
    if q.iter().chain(u).any(|v| !v.is_finite())
        || u.iter().any(|&v| v < 0.0)
        || nu_com.is_nan()
        || nu_com <= 0.0
    {
        return Err(Error::Numerical(
            "an imputed dataset's estimate or variance is not finite, so they cannot be pooled".into(),
        ));
    }
    let mf = m as f64;
    let estimate = q.iter().sum::<f64>() / mf;
    let within = u.iter().sum::<f64>() / mf;
    let between = q.iter().map(|x| (x - estimate).powi(2)).sum::<f64>() / (mf - 1.0);
    let inflated = (1.0 + 1.0 / mf) * between;
    let total = within + inflated;
    if total <= 0.0 {
        return Err(Error::Numerical(
            "the pooled variance is zero: every imputed dataset gave the same estimate with no uncertainty"
                .into(),
        ));
    }
    let lambda = inflated / total;
    let nu_obs = (nu_com + 1.0) / (nu_com + 3.0) * nu_com * (1.0 - lambda);
    let df = if lambda > 0.0 {
        let nu_old = (mf - 1.0) / (lambda * lambda);
        nu_old * nu_obs / (nu_old + nu_obs)
    } else {
        nu_obs
    };
    let riv = if within > 0.0 {
        inflated / within
    } else {
        f64::INFINITY
    };
    let fmi = if riv.is_finite() {
        (riv + 2.0 / (df + 3.0)) / (riv + 1.0)
    } else {
        1.0
    };
    Ok(Pooled {
        estimate,
        within,
        between,
        total,
        df,
        riv,
        fmi,
    })
}

#[cfg(test)]
mod tests {
    use super::rubin;

    #[test]
    fn no_between_variance_gives_the_complete_data_df() {
        let p = rubin(&[1.0, 1.0, 1.0], &[0.04, 0.04, 0.04], 100.0).unwrap();
        assert_eq!(p.between, 0.0);
        assert!((p.total - 0.04).abs() < 1e-15);
        assert!((p.df - 101.0 / 103.0 * 100.0).abs() < 1e-9);
        assert!(rubin(&[1.0], &[0.1], 10.0).is_err());
    }

    /// Source: tests/scripts/make_pool_fixtures.py (numpy 2.4.6, scipy
    /// 1.17.1: the same formulas, the interval from scipy.stats.t.ppf),
    /// confirmed by running it. Tolerance 1e-10 relative for the closed
    /// forms; 1e-8 relative for the interval (t quantile by series and
    /// Newton steps here, scipy's own inversion there).
    #[test]
    fn pooling_matches_a_numpy_reproduction() {
        let fixture: serde_json::Value =
            serde_json::from_str(include_str!("../../tests/fixtures/pool_reference.json")).unwrap();
        let level = fixture["level"].as_f64().unwrap();
        let cases = fixture["cases"].as_array().unwrap();
        assert_eq!(cases.len(), 5);
        let close = |a: f64, b: f64, tol: f64| (a - b).abs() <= tol * b.abs().max(1.0);
        for c in cases {
            let v = |k: &str| -> Vec<f64> {
                c[k].as_array()
                    .unwrap()
                    .iter()
                    .map(|x| x.as_f64().unwrap())
                    .collect()
            };
            let f = |k: &str| c[k].as_f64().unwrap();
            let p = rubin(&v("q"), &v("u"), f("nu_com")).unwrap();
            for (got, key) in [
                (p.estimate, "estimate"),
                (p.within, "within"),
                (p.between, "between"),
                (p.total, "total"),
                (p.df, "df"),
                (p.riv, "riv"),
                (p.fmi, "fmi"),
            ] {
                assert!(close(got, f(key), 1e-10), "{key}: {got} vs {}", f(key));
            }
            let ci = p.ci(level).unwrap();
            let want = v("ci");
            assert!(
                close(ci[0], want[0], 1e-8) && close(ci[1], want[1], 1e-8),
                "{ci:?} vs {want:?}"
            );
        }
    }
}
