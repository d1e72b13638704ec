//! Units: an estimate must not depend on the units of a covariate, the
//! exposure or the outcome. Rescaling a used column by a power of ten up to
//! 10^±150 leaves every estimate (in the outcome's units) and standard
//! error unchanged to 1e-8 relative, for every method, a binary outcome and
//! a dose; the graph's tests keep their p-values. No result is ever a
//! non-finite number; doses far outside the data are refused, near ones
//! warned about; sensitivity numbers at extreme inputs match mpmath.
//!
//! The tolerance 1e-8 is the one asked of the design (the fits scale every
//! column by a power of two, so the agreement is in fact to rounding).

use crate::estimate_sim::{normal, rng};
use crate::helpers::{fixture, write};
use causeway::data::Dataset;
use causeway::error::Setting;
use causeway::estimate::{Problem, Spec, method};
use causeway::sensitivity::evalue;
use causeway::sensitivity::robustness::{Coefficient, robustness_value};
use causeway::{Error, check};
use proptest::prelude::*;
use serde_json::Value;
use std::path::Path;
use std::time::Duration;

const ROWS: usize = 160;
const TOL: f64 = 1e-8;

/// A small invented dataset: confounders `z` (about unit scale) and `age`
/// (tens), a binary exposure `x`, a dose `d`, a mediator `m`, a continuous
/// outcome `y` and a binary outcome `yb`.
fn columns() -> Vec<(String, Vec<f64>)> {
    let mut r = rng(20261203);
    let mut cols: Vec<Vec<f64>> = vec![Vec::new(); 7];
    for _ in 0..ROWS {
        let z = normal(&mut r);
        let age = 50.0 + 12.0 * normal(&mut r);
        let px = 1.0 / (1.0 + (-(0.6 * z + 0.02 * (age - 50.0))).exp());
        let x = f64::from(u8::from(rand::RngExt::random::<f64>(&mut r) < px));
        let d = 2.0 + 0.7 * z + 0.03 * (age - 50.0) + normal(&mut r);
        let m = 0.8 * x + normal(&mut r);
        let y = 1.0 + 0.5 * x + 0.4 * d + 0.6 * z + 0.7 * m + 0.02 * age + normal(&mut r);
        let pyb = 1.0 / (1.0 + (-(-0.3 + 0.8 * x + 0.5 * z)).exp());
        let yb = f64::from(u8::from(rand::RngExt::random::<f64>(&mut r) < pyb));
        for (c, v) in cols.iter_mut().zip([z, age, x, d, m, y, yb]) {
            c.push(v);
        }
    }
    ["z", "age", "x", "d", "m", "y", "yb"]
        .iter()
        .map(|s| s.to_string())
        .zip(cols)
        .collect()
}

/// The data with column `col` multiplied by 10^k.
fn rescaled(col: &str, k: i32) -> Dataset {
    let f = 10f64.powi(k);
    let cols = columns()
        .into_iter()
        .map(|(n, v)| {
            let v = if n == col {
                v.iter().map(|x| x * f).collect()
            } else {
                v
            };
            (n, v)
        })
        .collect();
    Dataset::from_columns("invented", cols).unwrap()
}

/// One analysis: a spec, its methods, and the columns it uses.
struct Case {
    spec: Spec,
    methods: &'static [&'static str],
    used: &'static [&'static str],
    /// A dose exposure: its doses (contrast, curve) in the data's units.
    doses: Option<((f64, f64), Vec<f64>)>,
}

fn cases() -> Vec<Case> {
    let names = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    vec![
        // Binary exposure, continuous outcome, splines and a product term.
        Case {
            spec: Spec {
                exposure: "x".into(),
                outcome: "y".into(),
                covariates: names(&["z", "age"]),
                shape: causeway::data::Shape::Spline,
                interact: names(&["age"]),
                ..Spec::default()
            },
            methods: &["regression", "ipw", "ipw-ht", "aipw"],
            used: &["z", "age", "y"],
            doses: None,
        },
        // Binary outcome.
        Case {
            spec: Spec {
                exposure: "x".into(),
                outcome: "yb".into(),
                covariates: names(&["z", "age"]),
                shape: causeway::data::Shape::Quadratic,
                ..Spec::default()
            },
            methods: &["regression", "ipw", "aipw"],
            used: &["z", "age"],
            doses: None,
        },
        // A dose, its contrast and curve given in the data's units.
        Case {
            spec: Spec {
                exposure: "d".into(),
                outcome: "y".into(),
                covariates: names(&["z", "age"]),
                shape: causeway::data::Shape::Spline,
                ..Spec::default()
            },
            methods: &["regression", "ipw"],
            used: &["z", "age", "d", "y"],
            doses: Some(((1.0, 3.0), vec![0.5, 2.0, 3.5])),
        },
        // The front-door formula through a continuous mediator.
        Case {
            spec: Spec {
                exposure: "x".into(),
                outcome: "y".into(),
                mediators: names(&["m"]),
                ..Spec::default()
            },
            methods: &["frontdoor"],
            used: &["m", "y"],
            doses: None,
        },
    ]
}

/// (estimate, standard error) of each method, the outcome's factor
/// divided out.
fn estimates(case: &Case, col: &str, k: i32) -> Vec<(f64, f64)> {
    let f = 10f64.powi(k);
    let mut spec = case.spec.clone();
    if let Some(((a, b), at)) = &case.doses {
        let g = if col == spec.exposure { f } else { 1.0 };
        spec.contrast = Some((a * g, b * g));
        spec.at = Some(at.iter().map(|v| v * g).collect());
    }
    let back = if col == spec.outcome { f } else { 1.0 };
    let p = Problem::build(&rescaled(col, k), &spec).unwrap();
    case.methods
        .iter()
        .map(|m| {
            let e = method(m)
                .unwrap()
                .estimate(&p)
                .unwrap_or_else(|e| panic!("{m}: {e}"));
            assert!(e.estimate.is_finite() && e.std_error.is_finite(), "{m}: {e:?}");
            (e.estimate / back, e.std_error / back)
        })
        .collect()
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= TOL * a.abs().max(b.abs())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 40, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn rescaling_a_used_column_leaves_every_estimate(which in 0usize..4, pick in 0usize..4, k in -150i32..=150) {
        let all = cases();
        let case = &all[which];
        let col = case.used[pick % case.used.len()];
        let base = estimates(case, col, 0);
        let scaled = estimates(case, col, k);
        for (m, (a, b)) in case.methods.iter().zip(base.iter().zip(&scaled)) {
            prop_assert!(close(a.0, b.0), "{m} estimate, {col} x 1e{k}: {} vs {}", a.0, b.0);
            prop_assert!(close(a.1, b.1), "{m} std. error, {col} x 1e{k}: {} vs {}", a.1, b.1);
        }
    }

    #[test]
    fn rescaling_a_column_leaves_the_graph_tests(pick in 0usize..4, k in -150i32..=150) {
        let col = ["z", "age", "d", "y"][pick];
        let graph = causeway::graph::parse(
            "z -> x\nage -> x\nz -> d\nage -> d\nx -> y\nd -> y\nz -> y\n",
            "units.graph",
        )
        .unwrap()
        .graph;
        let run = |k: i32| {
            let r = check::run(&graph, &rescaled(col, k), &check::CheckOptions::default()).unwrap();
            r.implications.iter().map(|t| (t.statistic, t.p_value)).collect::<Vec<_>>()
        };
        let (base, scaled) = (run(0), run(k));
        prop_assert_eq!(base.len(), scaled.len());
        prop_assert!(!base.is_empty());
        for (a, b) in base.iter().zip(&scaled) {
            prop_assert!(close(a.0, b.0) && close(a.1, b.1), "{col} x 1e{k}: {a:?} vs {b:?}");
        }
    }
}

#[test]
fn a_one_unit_shift_scales_with_the_exposure_units() {
    // A linear dose model: the effect of one unit of d x 10^k is the effect
    // of one unit of d over 10^k (closed form of a linear model).
    let spec = Spec {
        exposure: "d".into(),
        outcome: "y".into(),
        covariates: vec!["z".into(), "age".into()],
        ..Spec::default()
    };
    let at = |k: i32| {
        let p = Problem::build(&rescaled("d", k), &spec).unwrap();
        method("regression").unwrap().estimate(&p).unwrap().estimate
    };
    let base = at(0);
    for k in [-150, -40, 5] {
        assert!(close(at(k) * 10f64.powi(k), base), "k = {k}");
    }
    // Above the precision of the values, a one-unit increase is refused by
    // name instead of ending as zero.
    match Problem::build(&rescaled("d", 40), &spec) {
        Err(Error::Option {
            setting: Setting::Contrast,
            message,
        }) => assert!(message.contains("precision"), "{message}"),
        other => panic!("{other:?}"),
    }
}

fn dose_spec(contrast: Option<(f64, f64)>, at: Option<Vec<f64>>) -> Spec {
    Spec {
        exposure: "d".into(),
        outcome: "y".into(),
        covariates: vec!["z".into()],
        contrast,
        at,
        ..Spec::default()
    }
}

#[test]
fn doses_far_outside_the_data_are_refused_naming_the_range() {
    let data = rescaled("d", 0);
    let d = &columns()[3].1;
    let (lo, hi) = d.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
        (l.min(v), h.max(v))
    });
    let w = hi - lo;
    for (spec, want) in [
        (dose_spec(Some((lo, hi + 1.5 * w)), None), Setting::Contrast),
        (dose_spec(Some((1e12, 2.0)), None), Setting::Contrast),
        (
            dose_spec(Some((1.0, 2.0)), Some(vec![lo - 3.0 * w, 2.0])),
            Setting::At,
        ),
    ] {
        match Problem::build(&data, &spec) {
            Err(Error::Option { setting, message }) => {
                assert_eq!(setting, want, "{message}");
                assert!(message.contains("observed range"), "{message}");
                assert_eq!(Error::option(setting, message).exit_code(), 2);
            }
            other => panic!("{other:?}"),
        }
    }
    // Outside but within one width: estimated, with a warning naming the range.
    let p = Problem::build(
        &data,
        &dose_spec(Some((lo, hi + 0.5 * w)), Some(vec![lo - 0.2 * w])),
    )
    .unwrap();
    let outside: Vec<&String> = p
        .warnings
        .iter()
        .filter(|w| w.contains("observed range"))
        .collect();
    assert_eq!(outside.len(), 2, "{:?}", p.warnings);
    let e = method("regression").unwrap().estimate(&p).unwrap();
    assert!(e.estimate.is_finite());
    // Inside: no such warning.
    let p = Problem::build(&data, &dose_spec(Some((lo, hi)), Some(vec![lo, hi]))).unwrap();
    assert!(
        p.warnings.iter().all(|w| !w.contains("observed range")),
        "{:?}",
        p.warnings
    );
}

/// Runs the binary with a time limit (the harness kills it and fails).
fn run_bounded(dir: &Path, args: &[&str]) -> (i32, String, String) {
    let r = crate::helpers::run_bounded(dir, args, Duration::from_secs(60));
    (r.code, r.stdout, r.stderr)
}

fn no_non_finite(text: &str) {
    let lower = text.to_lowercase();
    for bad in [
        "nan",
        "inf ",
        "inf,",
        "inf\n",
        "infinity",
        "null,\n      \"std_error\"",
    ] {
        assert!(!lower.contains(bad), "'{bad}' printed:\n{text}");
    }
}

fn csv(cols: &[(String, Vec<f64>)]) -> String {
    let mut s = cols.iter().map(|c| c.0.clone()).collect::<Vec<_>>().join(",") + "\n";
    for i in 0..cols[0].1.len() {
        let row: Vec<String> = cols.iter().map(|c| format!("{:e}", c.1[i])).collect();
        s += &(row.join(",") + "\n");
    }
    s
}

#[test]
fn the_command_line_refuses_far_doses_and_prints_no_non_finite_number() {
    let dir = tempfile::tempdir().unwrap();
    let graph = write(dir.path(), "g.graph", "z -> d\nz -> y\nd -> y\nz -> x\nx -> y\n");
    let mut cols = columns();
    let data = write(dir.path(), "d.csv", &csv(&cols));
    let base = ["estimate", "--graph", &graph, "--data", &data, "--outcome", "y"];
    let with =
        |extra: &[&'static str]| -> Vec<String> { base.iter().chain(extra).map(|s| s.to_string()).collect() };
    // Far outside: exit 2, the option and the observed range named.
    let (code, _, err) = run_bounded(
        dir.path(),
        &with(&["--exposure", "d", "--contrast", "1,1e9"])
            .iter()
            .map(String::as_str)
            .collect::<Vec<_>>(),
    );
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("--contrast") && err.contains("observed range"),
        "{err}"
    );
    let (code, _, err) = run_bounded(
        dir.path(),
        &with(&["--exposure", "d", "--at=-1e9,1"])
            .iter()
            .map(String::as_str)
            .collect::<Vec<_>>(),
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("--at") && err.contains("observed range"), "{err}");
    // Near (a fifth of the range's width below it): a warning, in every format.
    let d = &cols[3].1;
    let (lo, hi) = d.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
        (l.min(v), h.max(v))
    });
    let near_at = format!("--at={},2", lo - 0.2 * (hi - lo));
    for format in ["text", "json", "markdown"] {
        let args = with(&["--exposure", "d", "--contrast", "1,3", "--format"]);
        let mut args: Vec<&str> = args.iter().map(String::as_str).collect();
        args.extend([format, &near_at]);
        let (code, out, err) = run_bounded(dir.path(), &args);
        assert_eq!(code, 0, "{err}");
        let flat = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
        let said = flat(&out).contains("outside the observed range")
            || flat(&err).contains("outside the observed range");
        assert!(said, "{format}:\n{out}\n{err}");
        no_non_finite(&out);
    }
    // A binary exposure on outcomes of 1e150 and covariates of 1e-150,
    // with splines and the bootstrap: finite numbers only.
    for (name, f) in [("y", 1e150), ("z", 1e-150)] {
        for c in cols.iter_mut().filter(|c| c.0 == name) {
            c.1.iter_mut().for_each(|v| *v *= f);
        }
    }
    let data = write(dir.path(), "e.csv", &csv(&cols));
    let args = [
        "estimate",
        "--graph",
        &graph,
        "--data",
        &data,
        "--exposure",
        "x",
        "--outcome",
        "y",
        "--shape",
        "spline",
        "--bootstrap",
        "30",
        "--format",
        "json",
    ];
    let (code, out, err) = run_bounded(dir.path(), &args);
    assert_eq!(code, 0, "{err}");
    no_non_finite(&out);
    // An outcome near the largest double: an honest message, exit 2.
    for c in cols.iter_mut().filter(|c| c.0 == "y") {
        c.1.iter_mut().for_each(|v| *v *= 1e156);
    }
    let data = write(dir.path(), "f.csv", &csv(&cols));
    let args = [
        "estimate",
        "--graph",
        &graph,
        "--data",
        &data,
        "--exposure",
        "x",
        "--outcome",
        "y",
    ];
    let (code, out, err) = run_bounded(dir.path(), &args);
    no_non_finite(&out);
    no_non_finite(&err);
    if code != 0 {
        assert_eq!(code, 2, "{err}");
        assert!(
            err.contains("not a finite number") || err.contains("range of double-precision"),
            "{err}"
        );
    }
}

fn reference() -> Value {
    serde_json::from_str(&std::fs::read_to_string(fixture("sensitivity_extremes.json")).unwrap()).unwrap()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

/// Relative agreement; exact zeros must match exactly (the reference is
/// the correctly rounded value of the defining formula, mpmath at 400
/// digits; 1e-12 covers the few roundings of the double-precision forms).
fn agrees(got: f64, want: f64) -> bool {
    (got - want).abs() <= 1e-12 * want.abs()
}

/// As [`agrees`] for an E-value, whose condition number near 1 is about
/// 1 / (2 (E - 1)): a conversion (square root, hazard-ratio formula)
/// rounded to 1.1e-16 moves it by up to that times 2.2e-16.
fn agrees_evalue(got: f64, want: f64) -> bool {
    let cond = 1.0 / (2.0 * (want - 1.0).max(1e-300));
    (got - want).abs() <= (1e-12 + 2.2e-16 * cond) * want.abs()
}

// Reference: tests/fixtures/sensitivity_extremes.json, made by
// tests/scripts/make_extreme_sensitivity_fixtures.py (mpmath 1.3.0, scipy
// 1.17.1; versions in the file).
#[test]
fn extreme_sensitivity_inputs_match_mpmath() {
    let r = reference();
    for c in r["evalue"].as_array().unwrap() {
        let x = f(&c["input"]);
        let e = match c["kind"].as_str().unwrap() {
            "rr" => evalue::risk_ratio(x, None).unwrap(),
            "or_common" => evalue::odds_ratio(x, None, true).unwrap(),
            "hr_common" => evalue::hazard_ratio(x, None, true).unwrap(),
            "smd" => {
                let e = evalue::standardized_difference(x, f(&c["se"]), f(&c["level"])).unwrap();
                let ci = e.ci_limit.unwrap();
                assert!(agrees_evalue(ci, f(&c["ci_limit"])), "{c}: limit {ci}");
                e
            }
            k => panic!("{k}"),
        };
        assert!(agrees_evalue(e.point, f(&c["point"])), "{c}: {}", e.point);
    }
    for c in r["robustness"].as_array().unwrap() {
        let coef = Coefficient::new(f(&c["estimate"]), f(&c["se"]), f(&c["df"])).unwrap();
        let rv = robustness_value(&coef, 1.0, 0.05).unwrap();
        assert!(agrees(rv.rv, f(&c["rv"])), "{c}: rv {}", rv.rv);
        // RV_alpha goes through the t quantile (scipy in the reference):
        // 1e-9 covers the quantile's own accuracy.
        let want = f(&c["rv_alpha"]);
        assert!(
            (rv.rv_alpha - want).abs() <= 1e-9 * want.abs(),
            "{c}: rv_alpha {}",
            rv.rv_alpha
        );
        assert!(
            agrees(rv.partial_r2_exposure, f(&c["partial_r2"])),
            "{c}: r2 {}",
            rv.partial_r2_exposure
        );
    }
}

#[test]
fn e_values_beyond_the_doubles_are_refused_with_a_message() {
    for rr in [1.7e308, 1e-308 / 4.0] {
        let e = evalue::risk_ratio(rr, None).unwrap_err();
        assert_eq!(e.exit_code(), 2);
        assert!(e.to_string().contains("beyond the largest number"), "{e}");
    }
    let e = evalue::standardized_difference(1e300, 1.0, 0.95).unwrap_err();
    assert!(e.to_string().contains("beyond the largest number"), "{e}");
}

#[test]
fn sensitivity_command_at_extremes() {
    let dir = tempfile::tempdir().unwrap();
    let finite = [
        vec!["--rr", "1e300", "--ci", "1e299,1e301"],
        vec!["--rr", "1e-300"],
        vec!["--rr", "1.000000000000001"],
        vec!["--or", "1e300", "--common-outcome"],
        vec!["--hr", "1e-300", "--common-outcome"],
        vec!["--smd", "700", "--se", "1"],
        vec!["--smd", "1", "--se", "1e300"],
        vec!["--estimate", "1e300", "--se", "1e-300", "--df", "1e300"],
        vec![
            "--estimate",
            "1",
            "--se",
            "1",
            "--df",
            "1e300",
            "--r2-exposure",
            "0.1",
            "--r2-outcome",
            "0.2",
        ],
        vec!["--estimate=-1e-300", "--se", "1e300", "--df", "10"],
    ];
    for args in finite {
        for format in ["text", "json"] {
            let all = [&["sensitivity"][..], &args, &["--format", format]].concat();
            let (code, out, err) = run_bounded(dir.path(), &all);
            assert_eq!(code, 0, "{args:?}: {err}");
            no_non_finite(&out);
            for key in ["point", "rv", "rv_alpha", "partial_r2_exposure", "estimate"] {
                assert!(!out.contains(&format!("\"{key}\": null")), "{args:?}:\n{out}");
            }
        }
    }
    let refused = [
        vec!["--rr", "1.7e308"],
        vec!["--smd", "1e300", "--se", "1"],
        vec![
            "--estimate",
            "1e300",
            "--se",
            "1e300",
            "--df",
            "1e300",
            "--r2-exposure",
            "0.1",
            "--r2-outcome",
            "0.1",
        ],
    ];
    for args in refused {
        let all = [&["sensitivity"][..], &args].concat();
        let (code, out, err) = run_bounded(dir.path(), &all);
        assert_eq!(code, 2, "{args:?}: {out}{err}");
        assert!(err.contains("beyond the largest number"), "{err}");
        no_non_finite(&err);
    }
}
