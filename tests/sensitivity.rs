//! Sensitivity to unmeasured confounding: the library against statsmodels
//! and scipy fixtures (tests/scripts/make_sensitivity_fixtures.py, which
//! records the library versions), and the `causeway sensitivity` command.

use crate::helpers::{fixture, run};
use causeway::infer::dist::{normal_cdf, normal_quantile, t_quantile};
use causeway::report::tipping_figure::{self, R2Panel, Reference, ReferenceKind, RrPanel};
use causeway::sensitivity::evalue;
use causeway::sensitivity::frontier::{r2_axis_max, r2_frontiers, rr_frontiers};
use causeway::sensitivity::robustness::{
    Coefficient, Covariate, adjust, benchmark_bounds, benchmark_table, robustness_value,
};
use serde_json::Value;

fn reference() -> Value {
    serde_json::from_str(&std::fs::read_to_string(fixture("sensitivity_reference.json")).unwrap()).unwrap()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

/// Student t and normal quantiles against scipy.stats. The t quantile is
/// polished by Newton steps on the distribution function, so 1e-12
/// relative; statrs approximates erf to about 1e-11, hence 1e-9 for the
/// normal values.
#[test]
fn quantiles_match_scipy() {
    let r = reference();
    for row in r["quantiles"]["t_quantile"].as_array().unwrap() {
        let (p, df, want) = (f(&row[0]), f(&row[1]), f(&row[2]));
        let got = t_quantile(p, df).unwrap();
        assert!(
            (got - want).abs() < 1e-9 * want.abs().max(1.0),
            "t({p}, {df}): {got} vs {want}"
        );
    }
    for row in r["quantiles"]["normal_quantile"].as_array().unwrap() {
        let (p, want) = (f(&row[0]), f(&row[1]));
        let got = normal_quantile(p).unwrap();
        assert!((got - want).abs() < 1e-9 * want.abs().max(1.0), "z({p})");
    }
    for row in r["quantiles"]["normal_cdf"].as_array().unwrap() {
        let (x, want) = (f(&row[0]), f(&row[1]));
        assert!((normal_cdf(x) - want).abs() < 1e-9, "Phi({x})");
    }
}

/// OLS omitted-variable algebra checked with statsmodels: at the omitted
/// covariate's own partial R² values, the bias-adjusted estimate, standard
/// error and 95% interval of the restricted fit are the full fit's
/// (Cinelli and Hazlett 2020, section 4). Closed forms computed from
/// statsmodels' t statistics: 1e-9 relative.
#[test]
fn bias_adjustment_reproduces_the_full_regression() {
    let r = reference();
    let ov = &r["omitted_variable"];
    let res = &ov["restricted"];
    let c = Coefficient::new(f(&res["estimate"]), f(&res["se"]), f(&res["df"])).unwrap();
    let a = adjust(&c, f(&ov["r2_exposure"]), f(&ov["r2_outcome"]), 0.05).unwrap();
    let full = &ov["full"];
    let close = |got: f64, want: f64, what: &str| {
        assert!(
            (got - want).abs() < 1e-9 * want.abs(),
            "{what}: {got} vs statsmodels {want}"
        );
    };
    close(a.estimate, f(&full["estimate"]), "estimate");
    close(a.std_error, f(&full["se"]), "standard error");
    close(a.ci[0], f(&full["ci"][0]), "lower limit");
    close(a.ci[1], f(&full["ci"][1]), "upper limit");
}

/// Benchmark bounds on data where the confounder is orthogonal to the
/// covariates in sample (statsmodels fits): with its actual strengths
/// relative to covariate x1 (k_D, k_Y), the R2_dz formula is exact and the
/// R2_yz bound is not exceeded (1e-9: closed forms).
#[test]
fn benchmark_bounds_hold_on_constructed_data() {
    let r = reference();
    let b = &r["benchmark"];
    let cov = Covariate {
        name: "x1".into(),
        r2_exposure: f(&b["covariate"]["r2_exposure"]),
        r2_outcome: f(&b["covariate"]["r2_outcome"]),
    };
    let (d, y) = benchmark_bounds(&cov, f(&b["k_d"]), f(&b["k_y"])).unwrap();
    let want_d = f(&b["r2_dz"]);
    assert!((d - want_d).abs() < 1e-9 * want_d, "{d} vs {want_d}");
    assert!(
        y >= f(&b["r2_yz"]) - 1e-9,
        "bound {y} below actual {}",
        b["r2_yz"]
    );
}

#[test]
fn json_for_a_risk_ratio() {
    let (r, _d) = run(&[
        "sensitivity",
        "--rr",
        "3.9",
        "--ci",
        "1.8,8.7",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["evalue"]["scale"], "risk ratio");
    // VanderWeele & Ding 2017 worked example (from memory): 7.26 and 3.00.
    assert!((f(&v["evalue"]["point"]) - 7.26).abs() < 0.005);
    assert!((f(&v["evalue"]["ci_limit"]) - 3.00).abs() < 0.005);
    assert!(v["robustness_value"].is_null());
    assert!(v["adjusted"].is_null());
    let keys: Vec<&String> = v.as_object().unwrap().keys().collect();
    assert_eq!(keys.len(), 3);
}

#[test]
fn json_for_odds_hazard_and_standardized_inputs() {
    let (r, _d) = run(&[
        "sensitivity",
        "--or",
        "2.25",
        "--ci",
        "1.21,4",
        "--common-outcome",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(
        v["evalue"]["scale"],
        "odds ratio -> risk ratio by square root (common outcome)"
    );
    assert!((f(&v["evalue"]["point"]) - evalue::evalue_of(1.5).unwrap()).abs() < 1e-12);

    let (r, _d) = run(&["sensitivity", "--hr", "2", "--common-outcome", "--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let want = evalue::evalue_of(evalue::hazard_to_risk_ratio(2.0)).unwrap();
    assert!((f(&v["evalue"]["point"]) - want).abs() < 1e-12);
    assert!(v["evalue"]["ci_limit"].is_null());

    let (r, _d) = run(&["sensitivity", "--smd", "-0.4", "--se", "0.1", "--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["evalue"]["scale"], "approximate from standardized difference");
    let want = evalue::evalue_of((0.91f64 * -0.4).exp()).unwrap();
    assert!((f(&v["evalue"]["point"]) - want).abs() < 1e-12);
}

/// Cinelli & Hazlett 2020 running example through the command (from
/// memory: partial R² 2.19%, RV 13.9%, RV_0.05 7.6% with the unrounded t;
/// see the unit test for the tolerance).
#[test]
fn json_for_a_regression_coefficient() {
    let (r, _d) = run(&[
        "sensitivity",
        "--estimate",
        "4.18",
        "--se",
        "1",
        "--df",
        "783",
        "--r2-exposure",
        "0.01,0.05",
        "--r2-outcome",
        "0.05,0.1",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert!(v["evalue"].is_null());
    let rv = &v["robustness_value"];
    for key in ["q", "alpha", "rv", "rv_alpha", "partial_r2_exposure"] {
        assert!(rv.get(key).is_some(), "{key}");
    }
    assert!((f(&rv["rv"]) - 0.139).abs() < 0.0008);
    assert!((f(&rv["rv_alpha"]) - 0.076).abs() < 0.0008);
    let adj = v["adjusted"].as_array().unwrap();
    assert_eq!(adj.len(), 2);
    for row in adj {
        for key in ["r2_exposure", "r2_outcome", "estimate", "ci"] {
            assert!(row.get(key).is_some(), "{key}");
        }
        assert_eq!(row["ci"].as_array().unwrap().len(), 2);
    }
    assert!(f(&adj[1]["estimate"]) < f(&adj[0]["estimate"]));
}

#[test]
fn text_reads_plainly_and_cautions() {
    let (r, _d) = run(&["sensitivity", "--rr", "0.5", "--ci", "0.3,0.8"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let flat = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
    let out = flat(&r.stdout);
    assert!(out.contains("risk ratio of 3.41 each"), "{out}");
    assert!(out.contains("cannot show that there is none"));
    assert!(out.contains("clinical judgement"));
    let (r, _d) = run(&["sensitivity", "--or", "1.2", "--ci", "0.9,1.6"]);
    assert_eq!(r.code, 0);
    let out = flat(&r.stdout);
    assert!(out.contains("already includes 1"));
    assert!(out.contains("--common-outcome"));
}

#[test]
fn bad_flags_are_refused_by_name() {
    let cases: &[(&[&str], &str)] = &[
        (&["--rr", "3.9", "--ci", "8.7,1.8"], "--ci"),
        (&["--rr", "3.9", "--ci", "4,8.7"], "--ci"),
        (&["--rr", "3.9", "--ci", "1.8"], "--ci"),
        (&["--rr", "-2"], "--rr"),
        (&["--rr", "0"], "--rr"),
        (&["--rr", "2", "--common-outcome"], "--common-outcome"),
        (&["--rr", "2", "--q", "0.5"], "--q"),
        (&["--smd", "0.3"], "--se"),
        (&["--smd", "0.3", "--se", "0.1", "--level", "1.2"], "--level"),
        (&["--estimate", "1", "--se", "0.2"], "--df"),
        (&["--estimate", "1", "--se", "0.2", "--df", "1"], "--df"),
        (&["--estimate", "1", "--se", "0", "--df", "30"], "--se"),
        (
            &["--estimate", "1", "--se", "0.2", "--df", "30", "--alpha", "1.5"],
            "--alpha",
        ),
        (
            &[
                "--estimate",
                "1",
                "--se",
                "0.2",
                "--df",
                "30",
                "--r2-exposure",
                "1",
                "--r2-outcome",
                "0.1",
            ],
            "--r2-exposure",
        ),
        (
            &[
                "--estimate",
                "1",
                "--se",
                "0.2",
                "--df",
                "30",
                "--r2-exposure",
                "0.1,0.2",
                "--r2-outcome",
                "0.1",
            ],
            "--r2-outcome",
        ),
        (
            &[
                "--estimate",
                "1",
                "--se",
                "0.2",
                "--df",
                "30",
                "--r2-exposure",
                "0.1",
            ],
            "--r2-outcome",
        ),
        (&["--rr", "2", "--or", "2"], "--or"),
        (&[], "--rr"),
    ];
    for (args, flag) in cases {
        let mut all = vec!["sensitivity"];
        all.extend_from_slice(args);
        let (r, _d) = run(&all);
        assert_eq!(r.code, 2, "{args:?}: {}", r.stderr);
        assert!(r.stderr.contains(flag), "{args:?}: {}", r.stderr);
    }
}

fn texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("SVG is well-formed XML");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text().map(String::from))
        .collect()
}

#[test]
fn figure_files_parse_and_are_labelled() {
    let (r, d) = run(&[
        "sensitivity",
        "--rr",
        "3.9",
        "--ci",
        "1.8,8.7",
        "--figure",
        "t.svg",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let svg = std::fs::read_to_string(d.path().join("t.svg")).unwrap();
    let t = texts(&svg);
    assert!(t.iter().any(|s| s == "E-value 7.26"), "{t:?}");
    assert!(t.iter().any(|s| s == "E-value, interval 3.00"));
    assert!(
        t.iter()
            .any(|s| s.contains("confounder-exposure association (risk ratio)"))
    );
    assert!(svg.contains("stroke-dasharray=\"8 5\""));

    let (r, d) = run(&[
        "sensitivity",
        "--estimate",
        "0.097",
        "--se",
        "0.0232",
        "--df",
        "783",
        "--r2-exposure",
        "0.02",
        "--r2-outcome",
        "0.05",
        "--figure",
        "r2.svg",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let svg = std::fs::read_to_string(d.path().join("r2.svg")).unwrap();
    let t = texts(&svg);
    assert!(t.iter().any(|s| s == "RV 13.9%"), "{t:?}");
    assert!(t.iter().any(|s| s == "hypothesised confounder"));
    assert!(t.iter().any(|s| s.contains("partial R\u{b2}")));
}

/// Both panels at once, as the estimate report draws them, with benchmark
/// rows as reference points.
#[test]
fn two_panel_figure_from_the_library() {
    let c = Coefficient::new(0.097, 0.0232, 783.0).unwrap();
    let rv = robustness_value(&c, 1.0, 0.05).unwrap();
    let covs = [Covariate {
        name: "female".into(),
        r2_exposure: 0.009,
        r2_outcome: 0.125,
    }];
    let table = benchmark_table(&c, &covs, &[1.0, 2.0, 3.0], 0.05).unwrap();
    let refs: Vec<Reference> = table
        .rows
        .iter()
        .map(|b| Reference {
            label: format!("{}x {}", b.k, b.covariate),
            x: b.r2_exposure,
            y: b.r2_outcome,
            kind: ReferenceKind::Benchmark,
        })
        .collect();
    let pts: Vec<(f64, f64)> = refs.iter().map(|p| (p.x, p.y)).collect();
    let r2 = R2Panel {
        frontiers: r2_frontiers(&c, 1.0, 0.05, r2_axis_max(rv.rv, &pts), 200).unwrap(),
        robustness: rv,
        references: refs,
    };
    let e = evalue::continuous(0.097, 0.0232, 0.4, 0.95).unwrap();
    let rr = RrPanel {
        frontiers: rr_frontiers(&e, &[(1.5, 1.3)], 200).unwrap(),
        references: vec![Reference {
            label: "smoking".into(),
            x: 1.5,
            y: 1.3,
            kind: ReferenceKind::Observed,
        }],
    };
    let svg = tipping_figure::svg(Some(&rr), Some(&r2)).unwrap();
    if let Ok(path) = std::env::var("CAUSEWAY_KEEP_FIGURE") {
        std::fs::write(path, &svg).unwrap();
    }
    let t = texts(&svg);
    assert!(t.iter().any(|s| s == "1x female"), "{t:?}");
    assert!(t.iter().any(|s| s == "smoking"));
    assert!(t.iter().any(|s| s.starts_with("Risk-ratio scale")));
    assert!(t.iter().any(|s| s == "Partial R\u{b2} scale"));
    assert!(t.iter().any(|s| s.contains("observed covariate")));
}

/// Student t quantiles at 9.9e4 to 1e300 degrees of freedom against
/// scipy.stats.t.ppf (tests/scripts/make_t_large_df_fixture.py). Above 1e5
/// the expansion around the normal quantile is used; its accuracy is that of
/// the normal quantile (statrs, about 1e-11), hence 1e-9 relative. Before
/// the expansion, t_quantile did not return for df of about 1e8 and more.
#[test]
fn quantiles_at_large_df_match_scipy() {
    let text = std::fs::read_to_string(crate::helpers::fixture("t_quantile_large_df.json")).unwrap();
    let r: serde_json::Value = serde_json::from_str(&text).unwrap();
    for row in r["t_quantile"].as_array().unwrap() {
        let (p, df, want) = (f(&row[0]), f(&row[1]), f(&row[2]));
        let got = t_quantile(p, df).unwrap();
        assert!(
            (got - want).abs() < 1e-9 * want.abs().max(1.0),
            "t({p}, {df}): {got} vs {want}"
        );
    }
}
