//! From two mean outcomes and their influence functions to an effect on the
//! asked scale, with a delta-method standard error and a normal interval
//! (difference on its own scale; ratio and odds on the log scale).

use super::{Scale, z_value};
use crate::{Error, Result};

/// Mean outcomes under the two settings and their influence functions,
/// scaled so that `mu_hat - mu ~ sum_i w_i phi_i` (hence
/// `Var = sum_i w_i phi_i^2`).
pub(crate) struct Arms {
    pub mu1: f64,
    pub mu0: f64,
    pub phi1: Vec<f64>,
    pub phi0: Vec<f64>,
}

/// The effect on `scale` from the two means.
pub(crate) fn effect(scale: Scale, mu1: f64, mu0: f64) -> Result<f64> {
    let e = match scale {
        Scale::Difference => mu1 - mu0,
        Scale::Ratio => {
            check_risk(mu1, mu0, false)?;
            mu1 / mu0
        }
        Scale::Odds => {
            check_risk(mu1, mu0, true)?;
            (mu1 / (1.0 - mu1)) / (mu0 / (1.0 - mu0))
        }
    };
    if e.is_finite() {
        Ok(e)
    } else {
        Err(Error::Numerical("the effect is not finite".into()))
    }
}

fn check_risk(mu1: f64, mu0: f64, odds: bool) -> Result<()> {
    let ok = |m: f64| m > 0.0 && (!odds || m < 1.0);
    if ok(mu1) && ok(mu0) {
        Ok(())
    } else {
        Err(Error::Numerical(format!(
            "mean outcomes {mu1} and {mu0} do not allow a {} scale",
            if odds { "odds-ratio" } else { "ratio" }
        )))
    }
}

/// Estimate, standard error and interval.
pub(crate) fn interval(scale: Scale, arms: &Arms, level: f64) -> Result<(f64, f64, [f64; 2])> {
    let est = effect(scale, arms.mu1, arms.mu0)?;
    let (d1, d0) = match scale {
        Scale::Difference => (1.0, 1.0),
        Scale::Ratio => (1.0 / arms.mu1, 1.0 / arms.mu0),
        Scale::Odds => (
            1.0 / (arms.mu1 * (1.0 - arms.mu1)),
            1.0 / (arms.mu0 * (1.0 - arms.mu0)),
        ),
    };
    let var: f64 = arms
        .phi1
        .iter()
        .zip(&arms.phi0)
        .map(|(a, b)| (d1 * a - d0 * b).powi(2))
        .sum();
    let se = var.sqrt();
    if !se.is_finite() {
        return Err(Error::Numerical("the standard error is not finite".into()));
    }
    let z = z_value(level);
    Ok(match scale {
        Scale::Difference => (est, se, [est - z * se, est + z * se]),
        _ => {
            let l = est.ln();
            (est, est * se, [(l - z * se).exp(), (l + z * se).exp()])
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_scale_interval_for_ratios() {
        // Closed form: phi gives var(log RR) = (0.1/0.5)^2 + (0.1/0.25)^2.
        let arms = Arms {
            mu1: 0.5,
            mu0: 0.25,
            phi1: vec![0.1, 0.0],
            phi0: vec![0.0, -0.1],
        };
        let (e, se, ci) = interval(Scale::Ratio, &arms, 0.95).unwrap();
        let sl = (0.04f64 + 0.16).sqrt();
        assert!((e - 2.0).abs() < 1e-12);
        assert!((se - 2.0 * sl).abs() < 1e-12);
        assert!((ci[0] - (2f64.ln() - 1.959963984540054 * sl).exp()).abs() < 1e-9);
        assert!(effect(Scale::Odds, 1.0, 0.5).is_err());
    }
}
