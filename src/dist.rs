//! Quantiles and distribution functions of the standard normal and Student t
//! distributions, with their arguments checked so that a bad probability is
//! an error instead of a panic, and the upper tail probabilities of the
//! chi-square and F distributions used by tests. They wrap the `statrs`
//! implementations. This is the one place any stage takes a quantile from.

use crate::{Error, Result};
use statrs::distribution::{Continuous, ContinuousCDF, Normal, StudentsT};

fn check_p(p: f64, what: &str) -> Result<()> {
    if p > 0.0 && p < 1.0 {
        Ok(())
    } else {
        Err(Error::Numerical(format!(
            "{what}: probability {p} is outside (0, 1)"
        )))
    }
}

/// The standard normal quantile Φ⁻¹(p), for p in (0, 1).
pub fn normal_quantile(p: f64) -> Result<f64> {
    check_p(p, "normal quantile")?;
    Ok(Normal::standard().inverse_cdf(p))
}

/// The standard normal distribution function Φ(x).
pub fn normal_cdf(x: f64) -> f64 {
    Normal::standard().cdf(x)
}

/// The quantile of Student's t distribution with `df` degrees of freedom,
/// for p in (0, 1) and df > 0. The value from inverting the regularized
/// incomplete beta function loses a few digits for large df (about 1e-8
/// relative at df = 5000), so it is polished by Newton steps on the
/// distribution function.
pub fn t_quantile(p: f64, df: f64) -> Result<f64> {
    check_p(p, "t quantile")?;
    if !(df > 0.0 && df.is_finite()) {
        return Err(Error::Numerical(format!(
            "t quantile: degrees of freedom {df} must be positive and finite"
        )));
    }
    if df > LARGE_DF {
        return Ok(t_quantile_large_df(normal_quantile(p)?, df));
    }
    let t = StudentsT::new(0.0, 1.0, df)
        .map_err(|e| Error::Numerical(format!("t distribution with df {df}: {e}")))?;
    let mut x = t.inverse_cdf(p);
    for _ in 0..3 {
        let density = t.pdf(x);
        if !(density > 0.0 && x.is_finite()) {
            break;
        }
        let step = (t.cdf(x) - p) / density;
        if !step.is_finite() {
            break;
        }
        x -= step;
        if step.abs() <= 1e-15 * x.abs().max(1.0) {
            break;
        }
    }
    Ok(x)
}

/// Above this many degrees of freedom the t quantile comes from its
/// expansion around the normal quantile: statrs's inversion does not return
/// for df of about 1e8 and more, and its distribution function loses
/// accuracy there.
pub const LARGE_DF: f64 = 1e5;

/// The Cornish-Fisher expansion of the t quantile in powers of 1/df, from
/// the normal quantile `z` (Abramowitz & Stegun, Handbook of Mathematical
/// Functions, 1964, 26.7.5, from memory; checked against scipy in
/// tests/sensitivity.rs). Above [`LARGE_DF`] the first omitted term is below
/// 1e-20.
fn t_quantile_large_df(z: f64, df: f64) -> f64 {
    let z2 = z * z;
    let g1 = z * (z2 + 1.0) / 4.0;
    let g2 = z * ((5.0 * z2 + 16.0) * z2 + 3.0) / 96.0;
    let g3 = z * (((3.0 * z2 + 19.0) * z2 + 17.0) * z2 - 15.0) / 384.0;
    let g4 = z * ((((79.0 * z2 + 776.0) * z2 + 1482.0) * z2 - 1920.0) * z2 - 945.0) / 92160.0;
    z + (g1 + (g2 + (g3 + g4 / df) / df) / df) / df
}

/// The two-sided critical value for a `level` interval: the normal quantile
/// at (1 + level) / 2.
pub fn normal_critical(level: f64) -> Result<f64> {
    check_p(level, "interval level")?;
    normal_quantile(0.5 + level / 2.0)
}

/// The two-sided critical value for a `level` interval from Student's t with
/// `df` degrees of freedom.
pub fn t_critical(level: f64, df: f64) -> Result<f64> {
    check_p(level, "interval level")?;
    t_quantile(0.5 + level / 2.0, df)
}

/// The upper tail probability P(X > x) of the chi-square distribution with
/// `df` degrees of freedom (the regularized upper incomplete gamma function
/// Q(df/2, x/2)); 1 for x <= 0, NaN for a bad `df`.
pub fn chi_square_sf(x: f64, df: f64) -> f64 {
    if !(df > 0.0 && df.is_finite()) || x.is_nan() {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 1.0;
    }
    if x.is_infinite() {
        return 0.0;
    }
    statrs::function::gamma::gamma_ur(df / 2.0, x / 2.0)
}

/// The upper tail probability P(F > x) of the F distribution with `df1` and
/// `df2` degrees of freedom, as the regularized incomplete beta function
/// I_{df2/(df2 + df1 x)}(df2/2, df1/2) (Abramowitz & Stegun 26.6.2), written
/// so that small tail probabilities keep their relative precision; 1 for
/// x <= 0, NaN for bad degrees of freedom.
pub fn f_sf(x: f64, df1: f64, df2: f64) -> f64 {
    if !(df1 > 0.0 && df1.is_finite() && df2 > 0.0 && df2.is_finite()) || x.is_nan() {
        return f64::NAN;
    }
    if x <= 0.0 {
        return 1.0;
    }
    if x.is_infinite() {
        return 0.0;
    }
    statrs::function::beta::beta_reg(df2 / 2.0, df1 / 2.0, df2 / (df2 + df1 * x))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Textbook values (common practice, no source): z_0.975 = 1.959963984540054.
    #[test]
    fn normal_values() {
        assert!((normal_quantile(0.975).unwrap() - 1.959963984540054).abs() < 1e-9);
        // statrs computes erf by rational approximations good to about 1e-11.
        assert!((normal_cdf(1.959963984540054) - 0.975).abs() < 1e-10);
        assert!(normal_quantile(1.0).is_err());
        assert!(normal_quantile(f64::NAN).is_err());
    }

    #[test]
    fn bad_df_is_an_error() {
        assert!(t_quantile(0.5, 0.0).is_err());
        assert!(t_quantile(0.5, f64::INFINITY).is_err());
    }

    // Closed forms (common practice, no source): chi-square with 2 df has
    // P(X > x) = exp(-x/2); F(2, d) has P(F > x) = (1 + 2x/d)^(-d/2).
    // statrs's incomplete gamma and beta functions are good to about 1e-14.
    #[test]
    fn tail_probabilities_match_closed_forms() {
        for x in [0.1f64, 1.0, 5.0, 30.0, 200.0] {
            let want = (-x / 2.0).exp();
            assert!((chi_square_sf(x, 2.0) / want - 1.0).abs() < 1e-12, "{x}");
            for d in [3.0, 10.0, 250.0] {
                let want = (1.0 + 2.0 * x / d).powf(-d / 2.0);
                assert!((f_sf(x, 2.0, d) / want - 1.0).abs() < 1e-12, "{x} {d}");
            }
        }
        assert_eq!(chi_square_sf(0.0, 3.0), 1.0);
        assert_eq!(f_sf(-1.0, 2.0, 3.0), 1.0);
        assert!(chi_square_sf(1.0, 0.0).is_nan());
        assert!(f_sf(1.0, 2.0, f64::INFINITY).is_nan());
    }
}
