//! OLS and logistic fits on NHEFS against statsmodels 0.15.0 (fixtures
//! made by tests/scripts/make_model_fixtures.py, versions recorded in
//! tests/fixtures/nhefs_models.json). Agreement to 1e-6, relative to
//! max(1, |value|): both sides converge far tighter, the margin covers
//! summation order.

use crate::estimate_nhefs::{COVARIATES, nhefs, nhefs_spec};
use causeway::data::Setting;
use causeway::estimate::Problem;
use causeway::model::{Logit, LogitOptions, Ols};
use nalgebra::DVector;
use serde_json::Value;

fn fixtures() -> Value {
    serde_json::from_str(&std::fs::read_to_string(crate::helpers::fixture("nhefs_models.json")).unwrap())
        .unwrap()
}

fn close(got: f64, want: f64, what: &str) {
    assert!(
        (got - want).abs() <= 1e-6 * want.abs().max(1.0),
        "{what}: {got} vs statsmodels {want}"
    );
}

/// Compares coefficients (uncentred) and standard errors by term name.
fn compare(f: &Value, names: &[String], coef: &DVector<f64>, se: &[(&str, DVector<f64>)]) {
    let fnames: Vec<&str> = f["names"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    assert_eq!(fnames.len(), names.len(), "{names:?}");
    for (j, n) in names.iter().enumerate() {
        let k = fnames
            .iter()
            .position(|x| x == n)
            .unwrap_or_else(|| panic!("term {n}"));
        close(coef[j], f["coef"][k].as_f64().unwrap(), &format!("coef {n}"));
        for (key, s) in se {
            close(s[j], f[*key][k].as_f64().unwrap(), &format!("{key} {n}"));
        }
    }
}

fn freq(n: usize) -> Vec<f64> {
    (0..n).map(|i| 1.0 + (i % 3) as f64).collect()
}

#[test]
fn propensity_logit_matches_statsmodels_glm() {
    let fx = fixtures();
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &[])).unwrap();
    let rows = p.propensity.rows(&p.frame, Setting::Observed);
    for (key, w) in [
        ("propensity_logit", None),
        ("propensity_logit_freq", Some(freq(p.n()))),
    ] {
        let f = Logit::fit(&rows, p.a(), w.as_deref(), None, LogitOptions::default()).unwrap();
        assert!(f.separation.is_none());
        let (b, v) = p.propensity.uncenter(&f.coef, &f.cov);
        let se = v.diagonal().map(f64::sqrt);
        compare(&fx[key], &p.propensity.names(), &b, &[("se", se)]);
        close(f.deviance, fx[key]["deviance"].as_f64().unwrap(), "deviance");
        // A warm start from the solution converges at once (same answer).
        let g = Logit::fit(&rows, p.a(), w.as_deref(), Some(&f.coef), LogitOptions::default()).unwrap();
        assert!(g.iterations <= 1, "{}", g.iterations);
        assert!((g.coef - &f.coef).amax() < 1e-9);
    }
}

#[test]
fn outcome_ols_matches_statsmodels_classic_and_hc0() {
    let fx = fixtures();
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &["smokeintensity"])).unwrap();
    let rows = p.outcome_design.rows(&p.frame, Setting::Observed);
    // Frequency weights against statsmodels on rows repeated w times.
    for (key, w) in [("outcome_ols", None), ("outcome_ols_freq", Some(freq(p.n())))] {
        let f = Ols::fit(&rows, p.y(), w.as_deref()).unwrap();
        let (b, v) = p.outcome_design.uncenter(&f.coef, &f.cov);
        let (_, vh) = p.outcome_design.uncenter(&f.coef, &f.cov_hc0);
        let se = v.diagonal().map(f64::sqrt);
        let seh = vh.diagonal().map(f64::sqrt);
        compare(
            &fx[key],
            &p.outcome_design.names(),
            &b,
            &[("se", se), ("se_hc0", seh)],
        );
        assert_eq!(f.df, fx[key]["df_resid"].as_f64().unwrap());
    }
}
