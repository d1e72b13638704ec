//! Missing values: the missing-data patterns in every report, and
//! weighting for a missing outcome by the inverse probability of its being
//! observed (`--missing weight`), checked against Hernán & Robins, *Causal
//! Inference: What If*, 2020, section 12.6 on NHEFS (reproduced with
//! statsmodels, the standard error by stacked estimating equations in numpy:
//! tests/scripts/make_ipcw_fixtures.py), and by a seeded coverage simulation.

use crate::estimate_nhefs::{COVARIATES, nhefs, nhefs_spec};
use crate::estimate_sim::{dataset, normal, rng};
use crate::helpers::{data, fixture, method_row as row, rel_close as close, run_in};
use causeway::estimate::{Missing, Problem, Spec, method};
use serde_json::Value;

fn reference() -> Value {
    serde_json::from_str(&std::fs::read_to_string(fixture("ipcw_reference.json")).unwrap()).unwrap()
}

fn num(v: &Value) -> f64 {
    v.as_f64().expect("a number")
}

fn weighted_nhefs() -> Problem {
    let spec = Spec {
        missing: Missing::Weight,
        ..nhefs_spec(&COVARIATES, &[])
    };
    Problem::build(&nhefs(), &spec).unwrap()
}

// What If, section 12.6: IPW with stabilized exposure and observation weights,
// ATE 3.4965 on 1566 observed of 1629 rows (book: "3.5 (95% CI: 2.5, 4.5)");
// the point to 1e-6 relative of the statsmodels reproduction; the standard
// error to 1e-5 relative of the numpy stacked-equations one (the book's robust
// 0.5256 treats the weights as known, ours is a little smaller); the
// observation weights' range against statsmodels' fitted probabilities.
#[test]
fn ipw_with_observation_weights_matches_what_if_12_6() {
    let r = reference();
    let p = weighted_nhefs();
    assert_eq!((p.sample.rows, p.sample.used, p.sample.dropped), (1629, 1629, 0));
    assert_eq!(p.sample.missing.handling, "weight");
    assert_eq!(p.sample.missing.outcome_missing, Some(63));
    let e = method("ipw").unwrap().estimate(&p).unwrap();
    assert!(close(e.estimate, num(&r["book"]["ate"]), 1e-6), "{}", e.estimate);
    assert!(
        close(e.std_error, num(&r["stacked"]["std_error"]), 1e-5),
        "{}",
        e.std_error
    );
    assert!(e.std_error < num(&r["book"]["robust_se"]));
    let fits = method("ipw").unwrap().fits(&p);
    let o = fits.observed().unwrap().expect("observation models");
    let s = o.summary(&p);
    assert!(close(s.mean, num(&r["book"]["swc_mean"]), 1e-6), "{s:?}");
    assert!(close(s.min, num(&r["book"]["swc_min"]), 1e-6), "{s:?}");
    assert!(close(s.max, num(&r["book"]["swc_max"]), 1e-6), "{s:?}");
    // The same estimate with a resample's point function (bootstrap path).
    let point = method("ipw").unwrap().point(&p, None, None).unwrap();
    assert!((point - e.estimate).abs() < 1e-9);
}

#[test]
fn complete_cases_report_the_missing_pattern_in_every_format() {
    let dir = tempfile::tempdir().unwrap();
    let g = data("nhefs.graph");
    let d = data("nhefs.csv");
    let base = [
        "estimate",
        "--graph",
        g.to_str().unwrap(),
        "--data",
        d.to_str().unwrap(),
        "--exposure",
        "qsmk",
        "--outcome",
        "wt82_71",
        "--categorical",
        "education,exercise,active",
        "--quiet",
    ];
    let run = |extra: &[&str]| {
        let mut a = base.to_vec();
        a.extend_from_slice(extra);
        run_in(dir.path(), &a)
    };
    let j = run(&["--format", "json"]);
    assert_eq!(j.code, 0, "{}", j.stderr);
    let v: Value = serde_json::from_str(&j.stdout).unwrap();
    let m = &v["sample"]["missing"];
    assert_eq!(m["handling"], "complete");
    assert!(m["imputations"].is_null());
    assert_eq!(
        m["patterns"],
        serde_json::json!([{"columns": ["wt82_71"], "rows": 63}])
    );
    assert_eq!(v["sample"]["dropped"], 63);
    for (f, shown) in [
        ("text", "wt82_71 (63)"),
        ("markdown", "wt82_71 (63)"),
        ("latex", "wt82\\_71 (63)"),
    ] {
        let t = run(&["--format", f]);
        assert_eq!(t.code, 0, "{f}: {}", t.stderr);
        assert!(t.stdout.contains(shown), "{f}: {}", t.stdout);
    }
    // The bundle's tidy table of patterns.
    let out = dir.path().join("bundle");
    let b = run(&["--out", out.to_str().unwrap()]);
    assert_eq!(b.code, 0, "{}", b.stderr);
    let csv = std::fs::read_to_string(out.join("missing.csv")).unwrap();
    assert!(csv.contains(",complete,wt82_71,63"), "{csv}");
    // Weighting: JSON and text name the handling and the weights' range.
    let w = run(&["--format", "json", "--missing", "weight", "--shape", "quadratic"]);
    assert_eq!(w.code, 0, "{}", w.stderr);
    let v: Value = serde_json::from_str(&w.stdout).unwrap();
    assert_eq!(v["sample"]["missing"]["handling"], "weight");
    assert_eq!(v["sample"]["missing"]["outcome_missing"], 63);
    assert_eq!(v["sample"]["used"], 1629);
    let ow = &v["sample"]["missing"]["observation_weights"];
    assert!(close(num(&ow["max"]), num(&reference()["book"]["swc_max"]), 1e-6));
    assert!(close(num(&row(&v, "ipw")["estimate"]), 3.4964933279, 1e-6));
    let t = run(&["--missing", "weight"]);
    assert!(
        t.stdout.contains("The 63 rows missing only wt82_71 are kept"),
        "{}",
        t.stdout
    );
    assert!(
        t.stdout.contains("Stabilized weights of being observed"),
        "{}",
        t.stdout
    );
}

// Seeded coverage simulation (200 repetitions of 1000 rows, the outcome
// missing at random given x, which also modifies the effect): complete cases
// are biased (the complete rows have smaller x, so a smaller effect) and rarely
// cover the ATE 2; weighting covers it near 95% (within three binomial
// standard errors, 0.95 +- 0.046) with IPW, regression and AIPW.
#[test]
fn weighting_a_missing_outcome_removes_the_complete_case_bias() {
    use crate::designs::outcome_missing as sample;
    let reps = 200;
    let methods = ["ipw", "regression", "aipw"];
    let mut cover = [0usize; 3];
    let mut cc_cover = [0usize; 3];
    let mut cc_bias = [0.0; 3];
    let mut bias = [0.0; 3];
    for rep in 0..reps {
        let d = sample(9100 + rep as u64, 1000);
        let base = Spec {
            exposure: "a".into(),
            outcome: "y".into(),
            covariates: vec!["x".into()],
            interact: vec!["x".into()],
            ..Spec::default()
        };
        let ws = Spec {
            missing: Missing::Weight,
            ..base.clone()
        };
        let (pc, pw) = (
            Problem::build(&d, &base).unwrap(),
            Problem::build(&d, &ws).unwrap(),
        );
        for (k, m) in methods.iter().enumerate() {
            let e = method(m).unwrap().estimate(&pw).unwrap();
            let c = method(m).unwrap().estimate(&pc).unwrap();
            cover[k] += usize::from(e.ci[0] <= 2.0 && 2.0 <= e.ci[1]);
            cc_cover[k] += usize::from(c.ci[0] <= 2.0 && 2.0 <= c.ci[1]);
            bias[k] += (e.estimate - 2.0) / reps as f64;
            cc_bias[k] += (c.estimate - 2.0) / reps as f64;
        }
    }
    for (k, m) in methods.iter().enumerate() {
        let (c, u) = (cover[k] as f64 / reps as f64, cc_cover[k] as f64 / reps as f64);
        eprintln!(
            "{m}: weighted coverage {c} bias {}; complete cases coverage {u} bias {}",
            bias[k], cc_bias[k]
        );
        assert!((0.95 - c).abs() <= 0.046, "{m}: weighted coverage {c}");
        assert!(bias[k].abs() < 0.03, "{m}: weighted bias {}", bias[k]);
        assert!(u < 0.5, "{m}: complete-case coverage {u}");
        assert!(cc_bias[k] < -0.2, "{m}: complete-case bias {}", cc_bias[k]);
    }
}

#[test]
fn weighting_refuses_what_it_does_not_cover_and_bad_input() {
    let n = 200;
    let mut r = rng(5);
    let x: Vec<f64> = (0..n).map(|_| normal(&mut r)).collect();
    let a: Vec<f64> = x
        .iter()
        .map(|v| f64::from(u8::from(*v + normal(&mut r) > 0.0)))
        .collect();
    let y: Vec<f64> = (0..n).map(|i| a[i] + x[i] + normal(&mut r)).collect();
    let spec = Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        covariates: vec!["x".into()],
        missing: Missing::Weight,
        ..Spec::default()
    };
    // None missing: a warning, and the complete-case analysis.
    let full = dataset(vec![("x", x.clone()), ("a", a.clone()), ("y", y.clone())]);
    let p = Problem::build(&full, &spec).unwrap();
    assert!(p.observed.is_none());
    assert!(
        p.warnings
            .iter()
            .any(|w| w.contains("no used row misses the outcome 'y'"))
    );
    let plain = Problem::build(
        &full,
        &Spec {
            missing: Missing::Complete,
            ..spec.clone()
        },
    )
    .unwrap();
    let (e, f) = (
        method("aipw").unwrap().estimate(&p).unwrap(),
        method("aipw").unwrap().estimate(&plain).unwrap(),
    );
    assert_eq!(e.estimate, f.estimate);
    // Every outcome missing: refused, saying so.
    let none = dataset(vec![("x", x.clone()), ("a", a.clone()), ("y", vec![f64::NAN; n])]);
    let err = Problem::build(&none, &spec).unwrap_err().to_string();
    assert!(err.contains("missing in every one of the 200 rows"), "{err}");
    // A continuous exposure's weighted model of the dose: refused by name.
    let mut yy = y.clone();
    yy[3] = f64::NAN;
    let dose = dataset(vec![("x", x.clone()), ("a", y.clone()), ("y", yy)]);
    let p = Problem::build(
        &dose,
        &Spec {
            exposure: "a".into(),
            ..spec.clone()
        },
    )
    .unwrap();
    let err = method("ipw").unwrap().estimate(&p).unwrap_err().to_string();
    assert!(err.contains("does not weight for a missing outcome"), "{err}");
    assert!(method("regression").unwrap().estimate(&p).is_ok());
    // Imputation runs through the whole analysis, not on one problem.
    let err = Problem::build(
        &full,
        &Spec {
            missing: Missing::Impute,
            ..spec
        },
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("runs through the whole analysis"), "{err}");
}
