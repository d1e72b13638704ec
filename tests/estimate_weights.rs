//! Sampling weights (`--weights COLUMN`): weighted fits, averages and
//! sandwich standard errors checked against statsmodels and numpy on
//! invented survey data, a seeded coverage simulation, the bootstrap with
//! weights, the JSON `design.weights` key and the refusals.

use crate::designs::surveyed as sample;
use crate::helpers::{fixture, repo, run_in};
use causeway::estimate::{Problem, Spec, method};
use causeway::learn::{Fits, Needs};
use serde_json::Value;

fn weighted(dir: &std::path::Path, data: &str, extra: &[&str]) -> crate::helpers::Run {
    let graph = repo("tests/data/weighted.graph");
    let mut args = vec![
        "estimate",
        "--graph",
        graph.to_str().unwrap(),
        "--data",
        data,
        "--exposure",
        "treated",
        "--outcome",
        "y",
        "--format",
        "json",
        "--quiet",
    ];
    args.extend_from_slice(extra);
    run_in(dir, &args)
}

fn json(extra: &[&str]) -> Value {
    let r = weighted(&repo(""), "tests/data/weighted.csv", extra);
    assert_eq!(r.code, 0, "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

use crate::helpers::{method_row as row, rel_close as close};

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

// Source: tests/fixtures/weights_reference.json, made by
// tests/scripts/make_weights_fixtures.py (statsmodels 0.15.0 WLS with
// cov_type='HC0' and GLM Binomial with freq_weights; numpy 2.4.6 stacked
// weighted influence functions of the Hajek IPW difference) on the invented
// data tests/data/weighted.csv. Tolerance 1e-6 relative.
#[test]
fn weighted_estimates_and_standard_errors_match_statsmodels_and_numpy() {
    let f: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("weights_reference.json")).unwrap()).unwrap();
    let v = json(&["--weights", "w", "--method", "regression,ipw"]);
    assert_eq!(v["design"]["weights"], "w");
    assert!(v["design"]["cluster"].is_null());
    assert!(close(
        num(&v["design"]["effective_sample_size"]),
        num(&f["effective_sample_size"]),
        1e-9
    ));
    let reg = row(&v, "regression");
    assert!(close(num(&reg["estimate"]), num(&f["wls"]["coefficient"]), 1e-6));
    assert!(
        close(num(&reg["std_error"]), num(&f["wls"]["hc0_se"]), 1e-6),
        "{reg}"
    );
    let ipw = row(&v, "ipw");
    assert!(close(num(&ipw["estimate"]), num(&f["ipw"]["difference"]), 1e-6));
    assert!(close(num(&ipw["std_error"]), num(&f["ipw"]["se"]), 1e-6), "{ipw}");
    // The weighted propensity coefficients (statsmodels GLM freq_weights).
    let bytes = std::fs::read(repo("tests/data/weighted.csv")).unwrap();
    let d = causeway::data::Dataset::read(
        &bytes[..],
        "weighted.csv",
        &causeway::data::ReadOptions::default(),
    )
    .unwrap();
    let spec = Spec {
        exposure: "treated".into(),
        outcome: "y".into(),
        covariates: vec!["age".into(), "female".into()],
        weights: Some("w".into()),
        ..Spec::default()
    };
    let p = Problem::build(&d, &spec).unwrap();
    let needs = Needs {
        outcome: false,
        exposure: true,
    };
    let fits = Fits::fit(&p, p.sampling(), None, needs);
    // causeway fits on scaled terms, so the coefficients are compared
    // through the scores they give every row.
    let e = &fits.propensity().unwrap().e;
    let r = &f["propensity"];
    let (b0, b1, b2) = (num(&r["intercept"]), num(&r["age"]), num(&r["female"]));
    let (age, female) = (d.column("age").unwrap(), d.column("female").unwrap());
    for (i, ei) in e.iter().enumerate() {
        let eta = b0 + b1 * age.values[i] + b2 * female.values[i];
        let want = 1.0 / (1.0 + (-eta).exp());
        assert!(close(*ei, want, 1e-6), "row {i}: {ei} vs {want}");
    }
    // Unweighted, the estimates move (selection leans on the outcome).
    let plain = json(&["--method", "regression,ipw"]);
    assert!(plain.get("design").is_none());
    assert!((num(&row(&plain, "ipw")["estimate"]) - num(&ipw["estimate"])).abs() > 0.05);
}

/// One sample of `n` rows from a population in which x confounds and
/// modifies the effect (population ATE 2) and rows with larger x are more
/// likely to be sampled; `w` = 1 / selection probability.

// Seeded coverage simulation (200 repetitions of 800 sampled rows; the
// population ATE is 2, the sampled rows' own effect near 2.4): weighted IPW
// intervals cover the population ATE near 95% (within three binomial
// standard errors, 0.95 +- 0.046), the unweighted ones are biased and
// rarely cover it.
#[test]
fn weighted_intervals_cover_the_population_effect_and_unweighted_ones_do_not() {
    let reps = 200;
    let (mut with, mut without, mut bias) = (0usize, 0usize, 0.0);
    for rep in 0..reps {
        let d = sample(7000 + rep as u64, 800);
        let base = Spec {
            exposure: "a".into(),
            outcome: "y".into(),
            covariates: vec!["x".into()],
            ..Spec::default()
        };
        let ws = Spec {
            weights: Some("w".into()),
            ..base.clone()
        };
        let est = |s: &Spec| {
            method("ipw")
                .unwrap()
                .estimate(&Problem::build(&d, s).unwrap())
                .unwrap()
        };
        let (e, u) = (est(&ws), est(&base));
        with += (e.ci[0] <= 2.0 && 2.0 <= e.ci[1]) as usize;
        without += (u.ci[0] <= 2.0 && 2.0 <= u.ci[1]) as usize;
        bias += (u.estimate - 2.0) / reps as f64;
    }
    let (c, u) = (with as f64 / reps as f64, without as f64 / reps as f64);
    eprintln!("coverage: weighted {c}, unweighted {u}; unweighted bias {bias}");
    assert!((0.95 - c).abs() <= 0.046, "weighted coverage {c}");
    assert!(u < 0.5, "unweighted coverage {u}");
    assert!(bias > 0.3, "unweighted bias {bias}");
}

#[test]
fn bootstrap_with_weights_is_the_same_for_any_thread_count() {
    let run = |threads: &str| {
        json(&[
            "--weights",
            "w",
            "--method",
            "ipw",
            "--bootstrap",
            "60",
            "--threads",
            threads,
        ])
    };
    let (one, two) = (run("1"), run("2"));
    let (a, b) = (row(&one, "ipw"), row(&two, "ipw"));
    assert_eq!(a["ci"], b["ci"]);
    assert_eq!(a["bootstrap"], b["bootstrap"]);
    assert_eq!(a["ci_method"], "bootstrap-percentile");
    // The replicates carry the sampling weights: the interval is centred
    // near the weighted estimate, not the unweighted one.
    let ci = a["ci"].as_array().unwrap();
    let mid = (num(&ci[0]) + num(&ci[1])) / 2.0;
    assert!((mid - num(&a["estimate"])).abs() < 0.1, "{a}");
}

#[test]
fn constant_weights_change_nothing_for_any_method() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("tests/data/weighted.csv")).unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        out.push_str(line);
        out.push_str(if i == 0 { ",c\n" } else { ",3.5\n" });
    }
    let csv = dir.path().join("c.csv");
    std::fs::write(&csv, out).unwrap();
    let get = |extra: &[&str]| -> Value {
        let r = weighted(dir.path(), csv.to_str().unwrap(), extra);
        assert_eq!(r.code, 0, "{}", r.stderr);
        serde_json::from_str(&r.stdout).unwrap()
    };
    let all = "regression,ipw,ipw-ht,aipw";
    let (w, p) = (get(&["--weights", "c", "--method", all]), get(&["--method", all]));
    assert!(close(num(&w["design"]["effective_sample_size"]), 900.0, 1e-12));
    for m in all.split(',') {
        let (a, b) = (row(&w, m), row(&p, m));
        assert!(close(num(&a["estimate"]), num(&b["estimate"]), 1e-9), "{m}");
        assert!(close(num(&a["std_error"]), num(&b["std_error"]), 1e-9), "{m}");
    }
    let (dw, dp) = (&w["diagnostics"], &p["diagnostics"]);
    assert_eq!(dw["balance"], dp["balance"]);
}

#[test]
fn bad_weights_are_refused_naming_the_line() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("tests/data/weighted.csv")).unwrap();
    let cases = [
        ("0", "is '0'"),
        ("-1.5", "is '-1.5'"),
        ("NA", "is missing"),
        ("heavy", "'heavy'"),
    ];
    for (cell, said) in cases {
        let mut lines: Vec<String> = text.lines().map(String::from).collect();
        // Line 5 of the file (the 4th data row): its last cell is the weight.
        let l = &mut lines[4];
        let cut = l.rfind(',').unwrap();
        l.truncate(cut + 1);
        l.push_str(cell);
        let csv = dir.path().join("bad.csv");
        std::fs::write(&csv, lines.join("\n") + "\n").unwrap();
        let r = weighted(dir.path(), csv.to_str().unwrap(), &["--weights", "w"]);
        assert_eq!(r.code, 2, "{cell}: {}", r.stderr);
        assert!(r.stderr.contains("bad.csv:5:"), "{cell}: {}", r.stderr);
        assert!(r.stderr.contains("'w'"), "{cell}: {}", r.stderr);
        assert!(r.stderr.contains(said), "{cell}: {}", r.stderr);
    }
    // An unknown column is named.
    let r = weighted(&repo(""), "tests/data/weighted.csv", &["--weights", "wt"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("'wt'"), "{}", r.stderr);
}

/// `estimate` of y on the continuous exposure age in the weighted data.
fn on_age(extra: &[&str]) -> crate::helpers::Run {
    let mut args = vec![
        "estimate",
        "--graph",
        "tests/data/weighted.graph",
        "--data",
        "tests/data/weighted.csv",
        "--exposure",
        "age",
        "--outcome",
        "y",
        "--weights",
        "w",
        "--format",
        "json",
        "--quiet",
    ];
    args.extend_from_slice(extra);
    run_in(&repo(""), &args)
}

#[test]
fn methods_without_weighted_equations_are_refused_and_regression_serves_a_dose() {
    // IPW's density-ratio weights for a continuous exposure take no
    // sampling weights yet: refused by name; regression serves it.
    let r = on_age(&["--method", "ipw"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("does not take sampling weights"),
        "{}",
        r.stderr
    );
    assert!(
        r.stderr.contains("(with sampling weights: regression)"),
        "{}",
        r.stderr
    );
    let r = on_age(&[]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let methods: Vec<&str> = v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["method"].as_str().unwrap())
        .collect();
    assert_eq!(methods, ["regression"]);
    assert_eq!(v["design"]["weights"], "w");
}

// Weights with clusters: one-row clusters give the weighted row-level
// sandwich times sqrt(G/(G-1)) for IPW (closed form, G = 900 rows).
#[test]
fn weights_combine_with_one_row_clusters_as_the_closed_form_says() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("tests/data/weighted.csv")).unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        out.push_str(line);
        out.push_str(&if i == 0 {
            ",id\n".to_string()
        } else {
            format!(",r{i}\n")
        });
    }
    let csv = dir.path().join("ids.csv");
    std::fs::write(&csv, out).unwrap();
    let get = |extra: &[&str]| -> Value {
        let r = weighted(dir.path(), csv.to_str().unwrap(), extra);
        assert_eq!(r.code, 0, "{}", r.stderr);
        serde_json::from_str(&r.stdout).unwrap()
    };
    let both = get(&["--weights", "w", "--cluster", "id", "--method", "ipw"]);
    let only = get(&["--weights", "w", "--method", "ipw"]);
    assert_eq!(both["design"]["weights"], "w");
    assert_eq!(both["design"]["cluster"]["count"], 900);
    let g = 900.0f64;
    let (a, b) = (row(&both, "ipw"), row(&only, "ipw"));
    assert!(close(num(&a["estimate"]), num(&b["estimate"]), 1e-12));
    assert!(close(
        num(&a["std_error"]),
        num(&b["std_error"]) * (g / (g - 1.0)).sqrt(),
        1e-9
    ));
}

#[test]
fn compare_takes_the_weight_column() {
    let r = run_in(
        &repo(""),
        &[
            "compare",
            "--graph",
            "tests/data/weighted.graph",
            "--graph",
            "tests/data/weighted.graph",
            "--data",
            "tests/data/weighted.csv",
            "--exposure",
            "treated",
            "--outcome",
            "y",
            "--weights",
            "w",
            "--method",
            "regression",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("sampling weights in w"), "{}", r.stdout);
    // The weighted estimate (fixture: WLS coefficient 2.026).
    assert!(r.stdout.contains("2.026"), "{}", r.stdout);
}

// A categorical exposure (tests/data/multilevel.csv, invented): constant
// weights leave every method's estimates and standard errors unchanged,
// for each contrast against the reference level.
#[test]
fn constant_weights_change_nothing_for_a_categorical_exposure() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("tests/data/multilevel.csv")).unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        out.push_str(line);
        out.push_str(if i == 0 { ",c\n" } else { ",0.25\n" });
    }
    let csv = dir.path().join("m.csv");
    std::fs::write(&csv, out).unwrap();
    let graph = repo("tests/data/multilevel.graph");
    let get = |extra: &[&str]| -> Value {
        let mut args = vec![
            "estimate",
            "--graph",
            graph.to_str().unwrap(),
            "--data",
            csv.to_str().unwrap(),
            "--exposure",
            "dose_group",
            "--outcome",
            "y",
            "--method",
            "regression,ipw,ipw-ht,aipw",
            "--format",
            "json",
            "--quiet",
        ];
        args.extend_from_slice(extra);
        let r = run_in(dir.path(), &args);
        assert_eq!(r.code, 0, "{}", r.stderr);
        serde_json::from_str(&r.stdout).unwrap()
    };
    let (w, p) = (get(&["--weights", "c"]), get(&[]));
    let (ew, ep) = (
        w["estimates"].as_array().unwrap(),
        p["estimates"].as_array().unwrap(),
    );
    assert_eq!(ew.len(), ep.len());
    assert!(ew.len() >= 8);
    for (a, b) in ew.iter().zip(ep) {
        assert_eq!(a["method"], b["method"]);
        assert!(close(num(&a["estimate"]), num(&b["estimate"]), 1e-9), "{a} {b}");
        assert!(close(num(&a["std_error"]), num(&b["std_error"]), 1e-9), "{a} {b}");
    }
}
