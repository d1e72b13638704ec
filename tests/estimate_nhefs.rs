//! Estimates on NHEFS against Hernán MA, Robins JM. *Causal Inference: What
//! If*, 2020, chapters 12-13 (values confirmed from the book's text; the
//! 4-decimal values were reproduced with a general-purpose statistics
//! library on the same data, see tests/data/README.md).

use crate::helpers::data;
use causeway::data::{Dataset, ReadOptions, Shape};
use causeway::estimate::{self, Problem, Spec, diagnostics, method, sensitivity_inputs};

/// The nine covariates of tests/data/nhefs.graph.
pub const COVARIATES: [&str; 9] = [
    "sex",
    "race",
    "age",
    "education",
    "smokeintensity",
    "smokeyrs",
    "exercise",
    "active",
    "wt71",
];

pub fn nhefs() -> Dataset {
    Dataset::open(&data("nhefs.csv"), &ReadOptions::default()).expect("nhefs.csv reads")
}

pub fn nhefs_spec(covariates: &[&str], interact: &[&str]) -> Spec {
    Spec {
        exposure: "qsmk".into(),
        outcome: "wt82_71".into(),
        covariates: covariates.iter().map(|s| s.to_string()).collect(),
        categorical: vec!["education".into(), "exercise".into(), "active".into()],
        shape: Shape::Quadratic,
        interact: interact.iter().map(|s| s.to_string()).collect(),
        ..Spec::default()
    }
}

#[test]
fn sample_reports_63_rows_dropped_for_missing_outcome() {
    // What If, ch. 12: 1629 individuals, 63 with missing wt82_71 (confirmed).
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &[])).unwrap();
    assert_eq!((p.sample.rows, p.sample.used, p.sample.dropped), (1629, 1566, 63));
    assert_eq!(p.sample.dropped_by_column.get("wt82_71"), Some(&63));
    assert_eq!(p.sample.dropped_by_column.len(), 1);
    assert!(p.warnings.iter().any(|w| w.contains("63 of 1629 rows dropped")));
    let c = p.exposure_coding.as_ref().expect("qsmk is two-valued");
    assert_eq!((c.unexposed.as_str(), c.exposed.as_str()), ("0", "1"));
}

#[test]
fn ipw_ate_matches_program_12_2() {
    // What If, Program 12.2: 3.4 kg, 95% CI 2.4 to 4.5; 3.4405 (2.4106,
    // 4.4705) to 4 decimals. Point: the same weighted means, 1e-3 for the
    // 4-decimal rounding. Interval: ours is the M-estimation sandwich, a
    // little narrower than the book's weights-as-known interval; each end
    // within 0.15.
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &[])).unwrap();
    let e = method("ipw").unwrap().estimate(&p).unwrap();
    assert!((e.estimate - 3.4405).abs() < 1e-3, "{}", e.estimate);
    assert!((e.ci[0] - 2.4106).abs() < 0.15, "{:?}", e.ci);
    assert!((e.ci[1] - 4.4705).abs() < 0.15, "{:?}", e.ci);
    assert!(
        e.ci[1] - e.ci[0] <= 4.4705 - 2.4106 + 1e-9,
        "sandwich not wider: {:?}",
        e.ci
    );
    let point = method("ipw").unwrap().point(&p, None, None).unwrap();
    assert!((point - e.estimate).abs() < 1e-12);
}

#[test]
fn weights_match_programs_12_2_and_12_3() {
    // What If, Programs 12.2-12.3: nonstabilized mean 2.00, range 1.05 to
    // 16.7; stabilized mean 1.00, range 0.33 to 4.30. 4-decimal values
    // 1.9963, 1.0537, 16.7001 and 0.9988, 0.3312, 4.2977 (tolerance 1e-4:
    // rounding to 4 decimals).
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &[])).unwrap();
    let d = diagnostics(&p, method("ipw").unwrap().fits(&p).propensity().unwrap());
    let w = &d.weights;
    for (got, want) in [(w.mean, 1.9963), (w.min, 1.0537), (w.max, 16.7001)] {
        assert!((got - want).abs() < 1e-4, "{got} vs {want}");
    }
    let s = w.stabilized.unwrap();
    for (got, want) in [(s.mean, 0.9988), (s.min, 0.3312), (s.max, 4.2977)] {
        assert!((got - want).abs() < 1e-4, "{got} vs {want}");
    }
    assert_eq!(d.balance.len(), 18);
    assert!(
        d.balance.iter().all(|b| b.smd_weighted.abs() < 0.1),
        "{:?}",
        d.balance
    );
    assert!(d.balance.iter().any(|b| b.smd_raw.abs() > 0.1));
    assert!(w.ess_treated > 100.0 && w.ess_treated < 403.0);
}

#[test]
fn standardization_with_product_term_matches_chapter_13() {
    // What If, ch. 13: 3.5 kg (bootstrap 95% CI 2.6 to 4.5); 3.5174
    // averaged over the 1566 complete cases (tolerance 1e-4 for rounding).
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &["smokeintensity"])).unwrap();
    assert!(p.outcome_design.position("qsmk:smokeintensity").is_some());
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!((e.estimate - 3.5174).abs() < 1e-4, "{}", e.estimate);
    // Analytic interval against the book's bootstrap interval: within 0.15.
    assert!(
        (e.ci[0] - 2.6).abs() < 0.15 && (e.ci[1] - 4.5).abs() < 0.15,
        "{:?}",
        e.ci
    );
}

#[test]
fn unadjusted_difference_matches_chapter_12() {
    // What If, sec. 12.1: 2.5 kg (95% CI 1.7 to 3.4); 2.5406 to 4 decimals.
    let p = Problem::build(&nhefs(), &nhefs_spec(&[], &[])).unwrap();
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!((e.estimate - 2.5406).abs() < 1e-4, "{}", e.estimate);
    // The published CI (to 1 decimal) is the equal-variance one; ours is
    // the sandwich, wider here because the arms' variances differ: each end
    // within 0.15.
    assert!(
        (e.ci[0] - 1.7).abs() < 0.15 && (e.ci[1] - 3.4).abs() < 0.15,
        "{:?}",
        e.ci
    );
    // With no covariates and no products the stacked-equation SE of the
    // standardized difference is exactly the HC0 SE of the exposure
    // coefficient (White 1980; closed form, 1e-10 relative).
    let rows = p.outcome_design.rows(&p.frame, causeway::data::Setting::Observed);
    let f = causeway::model::Ols::fit(&rows, p.y(), None).unwrap();
    let j = p.outcome_design.exposure_term().unwrap();
    assert!((f.se_hc0()[j] - e.std_error).abs() < 1e-10 * e.std_error);
    assert!((f.coef[j] - e.estimate).abs() < 1e-10);
}

#[test]
fn aipw_agrees_with_the_other_two_on_nhefs() {
    // No published AIPW value: doubly robust estimate lies between 3.3 and
    // 3.6 when both IPW (3.44) and standardization (3.52) agree (common
    // practice, no source); its sandwich SE is near theirs.
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &["smokeintensity"])).unwrap();
    let e = method("aipw").unwrap().estimate(&p).unwrap();
    assert!(e.estimate > 3.3 && e.estimate < 3.6, "{}", e.estimate);
    assert!(e.std_error > 0.35 && e.std_error < 0.7, "{}", e.std_error);
    let m = method("aipw").unwrap();
    let full = m.fits(&p);
    let again = m.point(&p, None, Some(&full)).unwrap();
    assert!((again - e.estimate).abs() < 1e-8);
}

#[test]
fn sensitivity_inputs_match_statsmodels() {
    // Reference: statsmodels OLS (tests/fixtures/nhefs_models.json, made by
    // tests/scripts/make_model_fixtures.py); 1e-6 for accumulated rounding.
    let fx: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(crate::helpers::fixture("nhefs_models.json")).unwrap())
            .unwrap();
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &["smokeintensity"])).unwrap();
    let s = sensitivity_inputs(&p).unwrap().unwrap();
    let so = &fx["sensitivity_outcome_ols"];
    let se = &fx["sensitivity_exposure_ols"];
    let at = |f: &serde_json::Value, key: &str, name: &str| -> f64 {
        let i = f["names"]
            .as_array()
            .unwrap()
            .iter()
            .position(|n| n == name)
            .unwrap();
        f[key][i].as_f64().unwrap()
    };
    assert!((s.estimate - at(so, "coef", "qsmk")).abs() < 1e-6);
    assert!((s.std_error - at(so, "se", "qsmk")).abs() < 1e-6);
    assert!((s.t - at(so, "t", "qsmk")).abs() < 1e-6);
    assert_eq!(s.df, so["df_resid"].as_f64().unwrap());
    assert_eq!(s.df_exposure, se["df_resid"].as_f64().unwrap());
    assert_eq!(s.terms.len(), 18);
    for t in &s.terms {
        assert!((t.t_outcome - at(so, "t", &t.term)).abs() < 1e-6, "{}", t.term);
        assert!((t.t_exposure - at(se, "t", &t.term)).abs() < 1e-6, "{}", t.term);
    }
    let _ = estimate::applicable(&p, causeway::identify::Strategy::Backdoor);
}

#[test]
fn bootstrap_weights_reproduce_the_sandwich_standard_errors() {
    // Point estimates under multinomial bootstrap frequency weights (Efron
    // & Tibshirani 1993, ch. 6), warm-started from the full-sample fit: the
    // SD over 200 replicates is near each sandwich SE. Monte Carlo
    // tolerance 20% (an SD from 200 replicates has a relative SD near 5%).
    use rand::{RngExt, SeedableRng};
    let p = Problem::build(&nhefs(), &nhefs_spec(&COVARIATES, &["smokeintensity"])).unwrap();
    let mut r = rand_chacha::ChaCha8Rng::seed_from_u64(12);
    let n = p.n();
    let reps: Vec<Vec<f64>> = (0..200)
        .map(|_| {
            let mut w = vec![0.0; n];
            for _ in 0..n {
                w[r.random_range(0..n)] += 1.0;
            }
            w
        })
        .collect();
    for name in ["regression", "ipw", "aipw"] {
        let m = method(name).unwrap();
        let full = m.fits(&p);
        let se = m.estimate(&p).unwrap().std_error;
        let est: Vec<f64> = reps
            .iter()
            .map(|w| m.point(&p, Some(w), Some(&full)).unwrap())
            .collect();
        let mean = est.iter().sum::<f64>() / est.len() as f64;
        let sd = (est.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (est.len() - 1) as f64).sqrt();
        assert!(
            (sd / se - 1.0).abs() < 0.2,
            "{name}: bootstrap sd {sd} vs se {}",
            se
        );
    }
}
