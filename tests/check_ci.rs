//! The conditional independence tests of `causeway check` against
//! general-purpose libraries: numpy least squares and scipy.stats (Fisher's
//! z), statsmodels Logit and MNLogit log-likelihoods (likelihood ratios),
//! statsmodels OLS `compare_f_test` (nested F) and `multipletests` (Holm,
//! Benjamini-Hochberg), on tests/data/ci_tests.csv. Fixture and data made by
//! tests/scripts/make_ci_test_fixtures.py, which records the library versions.

use crate::helpers::{data, fixture};
use causeway::check::{Correction, Outcome, adjust, ci_test};
use causeway::data::{Dataset, ReadOptions};
use serde_json::Value;

fn load() -> Value {
    let text = std::fs::read_to_string(fixture("ci_tests_reference.json")).expect("fixture present");
    serde_json::from_str(&text).expect("fixture is JSON")
}

/// Relative agreement to 1e-8: the fits on both sides are iterative
/// (Newton, converged far below 1e-10 in the deviance) or solve normal
/// equations / least squares in floating point; 1e-8 leaves room for that
/// and for the tail functions, and still catches any wrong statistic.
fn close(got: f64, want: f64, what: &str) -> f64 {
    let tol = 1e-8 * want.abs().max(1e-300);
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got:e}, reference {want:e}, difference {:e}",
        got - want
    );
    (got - want).abs() / want.abs().max(1e-300)
}

// Source: numpy/scipy/statsmodels (versions in the fixture).
#[test]
fn tests_agree_with_reference_libraries() {
    let doc = load();
    assert!(doc["statsmodels"].as_str().is_some());
    let ds = Dataset::open(&data("ci_tests.csv"), &ReadOptions::default()).unwrap();
    let cases = doc["cases"].as_array().unwrap();
    let mut kinds = std::collections::BTreeSet::new();
    let mut worst = 0.0f64;
    for c in cases {
        let (a, b) = (c["a"].as_str().unwrap(), c["b"].as_str().unwrap());
        let given: Vec<&str> = c["given"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_str().unwrap())
            .collect();
        let label = format!("{a} _||_ {b} | {given:?}");
        let r = ci_test(&ds, a, b, &given, &[]).unwrap();
        assert_eq!(r.n as u64, c["n"].as_u64().unwrap(), "{label}: complete rows");
        let t = match r.outcome {
            Outcome::Tested(t) => t,
            Outcome::NotTested(why) => panic!("{label}: not tested: {why}"),
        };
        assert_eq!(t.test, c["test"].as_str().unwrap(), "{label}");
        kinds.insert(t.test);
        worst = worst.max(close(
            t.statistic,
            c["statistic"].as_f64().unwrap(),
            &format!("{label} statistic"),
        ));
        worst = worst.max(close(
            t.p_value,
            c["p_value"].as_f64().unwrap(),
            &format!("{label} p-value"),
        ));
        assert_eq!(t.df.map(|d| d as u64), c["df"].as_u64(), "{label} df");
        if let Some(d2) = c.get("df_denominator") {
            assert_eq!(t.df_denominator.map(|d| d as u64), d2.as_u64(), "{label} df2");
        }
        assert_eq!(t.response.as_deref(), c["response"].as_str(), "{label} response");
        if let Some(r) = c.get("partial_correlation") {
            close(
                t.partial_correlation.unwrap(),
                r.as_f64().unwrap(),
                &format!("{label} r"),
            );
        }
    }
    assert_eq!(kinds.len(), 4, "all four tests are exercised");
    println!("largest relative difference from the reference: {worst:e}");
}

// Source: statsmodels.stats.multitest.multipletests, methods 'holm' and
// 'fdr_bh' (closed forms; 1e-12 allows one rounding per step).
#[test]
fn adjustments_agree_with_multipletests() {
    let doc = load();
    let adj = &doc["adjust"];
    let p: Vec<f64> = adj["p"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    for (c, key) in [(Correction::Holm, "holm"), (Correction::Bh, "bh")] {
        let got = adjust(&p, c);
        for (g, w) in got.iter().zip(adj[key].as_array().unwrap()) {
            let w = w.as_f64().unwrap();
            assert!((g - w).abs() <= 1e-12 * w.max(1e-300), "{key}: {g} vs {w}");
        }
        let mut pairs: Vec<(f64, f64)> = p.iter().copied().zip(got.iter().copied()).collect();
        pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
        assert!(pairs.windows(2).all(|w| w[0].1 <= w[1].1), "{key}: monotone");
        assert!(got.iter().all(|&q| q <= 1.0), "{key}: capped at 1");
    }
}

// Source: scipy.stats.f.sf and scipy.stats.chi2.sf (version in the
// fixture), over the degrees of freedom a check meets, up to 10^6 rows.
// 1e-8 relative: the incomplete beta prefactor subtracts log-gamma values of
// size df2 log df2, so at df2 = 10^6 about 2e-9 is lost (seen); below
// 10^5 rows the difference stays under 2e-10.
#[test]
fn tail_probabilities_agree_with_scipy() {
    use causeway::dist::{chi_square_sf, f_sf};
    let doc = load();
    let mut worst = 0.0f64;
    for t in doc["tails"].as_array().unwrap() {
        let x = t["x"].as_f64().unwrap();
        let df1 = t["df1"].as_f64().unwrap();
        let want = t["sf"].as_f64().unwrap();
        let got = match t["dist"].as_str().unwrap() {
            "f" => f_sf(x, df1, t["df2"].as_f64().unwrap()),
            _ => chi_square_sf(x, df1),
        };
        if want < 1e-300 {
            assert!(got < 1e-290, "{t}: {got:e}");
            continue;
        }
        let rel = (got - want).abs() / want;
        worst = worst.max(rel);
        assert!(rel < 1e-8, "{t}: got {got:e}, relative difference {rel:e}");
    }
    println!("largest relative difference from scipy: {worst:e}");
}
