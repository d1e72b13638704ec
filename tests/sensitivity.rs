//! Sensitivity to unmeasured confounding: the library against statsmodels
//! and scipy fixtures (tests/scripts/make_sensitivity_fixtures.py, which
//! records the library versions), and the `causeway sensitivity` command.

use crate::helpers::{DEMO_QUESTION, fixture, repo, run, run_in};
use causeway::dist::{normal_cdf, normal_quantile, t_quantile};
use causeway::report::sensitivity_figure::{self, Mark, benchmark_yardsticks};
use causeway::sensitivity::evalue;
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

/// Sentences of an earlier wording that must not come back (they echoed
/// other programs' output).
const OLD_WORDING: [&str; 9] = [
    "could explain the estimate away",
    "weaker confounding could not",
    "RV, q = 1",
    "partial R2 of the exposure",
    "of the residual variance of both exposure and outcome would bring the estimate to zero",
    "Even a confounder explaining all the residual variance of the outcome",
    "k times as strong",
    "However much of",
    "RV, q = 1, alpha = 0.05",
];

fn flat(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn assert_new_wording_only(out: &str) {
    for old in OLD_WORDING {
        assert!(!out.contains(old), "old wording '{old}' in: {out}");
    }
}

#[test]
fn text_reads_plainly_and_cautions() {
    let (r, _d) = run(&["sensitivity", "--rr", "0.5", "--ci", "0.3,0.8"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let out = flat(&r.stdout);
    // E-value of 1/0.5 = 2: 2 + sqrt(2) = 3.41; of 1/0.8 = 1.25: 1.81.
    assert!(out.contains("by risk ratios of at least 3.41 each"), "{out}");
    assert!(
        out.contains("needed to account for all of it 3.41 with the exposure and with the outcome"),
        "{out}"
    );
    assert!(
        out.contains("Ties of 1.81 each are enough for the interval to reach 1"),
        "{out}"
    );
    assert!(out.contains("if either tie is weaker, the other must be stronger still"));
    assert!(out.contains("cannot show that there is none"));
    assert!(out.contains("clinical judgement"));
    assert_new_wording_only(&out);
    let (r, _d) = run(&["sensitivity", "--or", "1.2", "--ci", "0.9,1.6"]);
    assert_eq!(r.code, 0);
    let out = flat(&r.stdout);
    assert!(
        out.contains("The interval reaches 1 even with no hidden confounder"),
        "{out}"
    );
    assert!(out.contains("--common-outcome"));
    assert_new_wording_only(&out);
}

/// The robustness-value text with the Cinelli & Hazlett (2020) running
/// example (t = 4.18 with 783 df; from memory: partial R² 2.19%, RV 13.9%,
/// RV_0.05 7.6%, from the unrounded t): the new labels and reading, none of
/// the old. With the rounded t the printed values are 7.61% and 2.18%,
/// within the paper's rounding (see the unit test in robustness.rs).
#[test]
fn robustness_text_reads_plainly() {
    let (r, _d) = run(&["sensitivity", "--estimate", "4.18", "--se", "1", "--df", "783"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let out = flat(&r.stdout);
    assert!(
        out.contains("needed to account for all of it 13.9% of each"),
        "{out}"
    );
    assert!(
        out.contains("needed for the 95% interval to reach zero 7.61% of each"),
        "{out}"
    );
    assert!(
        out.contains("what the exposure explains of the outcome 2.18%"),
        "{out}"
    );
    assert!(out.contains(
        "would have to explain at least 13.9% of the leftover variance of the exposure and of the outcome"
    ));
    assert!(out.contains(
        "a hidden confounder tied to the exposure by less than that share cannot erase the estimate"
    ));
    assert!(out.contains("the exposure itself accounts for 2.18% of the leftover variance of the outcome"));
    assert_new_wording_only(&out);
    let (r, _d) = run(&[
        "sensitivity",
        "--estimate",
        "4.18",
        "--se",
        "1",
        "--df",
        "783",
        "--q",
        "0.5",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let out = flat(&r.stdout);
    assert!(out.contains("needed to account for 50% of it"), "{out}");
    assert!(out.contains("to reach 0.500 of it"), "{out}");
    assert_new_wording_only(&out);
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

/// The figure's texts; the SVG must be well-formed XML.
fn texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("SVG is well-formed XML");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text().map(String::from))
        .collect()
}

/// The figure of `sensitivity --figure`, with the worked examples of
/// VanderWeele & Ding 2017 (RR 3.9, interval 1.8 to 8.7: E-values 7.26 and
/// 3.00) and Cinelli & Hazlett 2020 (estimate 0.097, s.e. 0.0232, df 783:
/// RV 13.9%) as check values.
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
    assert!(t.iter().any(|s| s == "accounts for all of it: 7.26"), "{t:?}");
    assert!(t.iter().any(|s| s == "interval reaches 1: 3.00"), "{t:?}");
    assert!(t.iter().any(|s| s == "observed risk ratio"), "{t:?}");
    assert!(svg.contains("stroke-dasharray=\"7 4\""));

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
    assert!(t.iter().any(|s| s == "accounts for all of it: 13.9%"), "{t:?}");
    assert!(t.iter().any(|s| s == "hypothesized: 2.00%, 5.00%"), "{t:?}");
    assert!(t.iter().any(|s| s == "hypothesized confounder"));
    assert!(t.iter().any(|s| s.starts_with("Partial R\u{b2} scale")));
}

/// Both strips at once, as the estimate report draws them, with benchmark
/// rows: one row per covariate, one marker per multiple, and the multiple
/// that cannot exist named in a note.
#[test]
fn figure_from_the_library() {
    let c = Coefficient::new(0.097, 0.0232, 783.0).unwrap();
    let rv = robustness_value(&c, 1.0, 0.05).unwrap();
    let covs = [Covariate {
        name: "female".into(),
        r2_exposure: 0.009,
        r2_outcome: 0.125,
    }];
    let table = benchmark_table(&c, &covs, &[0.5, 1.0, 200.0], 0.05, "named").unwrap();
    let rows = benchmark_yardsticks(&table);
    assert_eq!(rows.len(), 1);
    assert_eq!(rows[0].points.len(), 2);
    assert!(matches!(rows[0].points[1].0, Mark::Multiple(k) if k == 1.0));
    let e = evalue::continuous(0.097, 0.0232, 0.4, 0.95).unwrap();
    let svg = sensitivity_figure::figure(Some(&e), Some((&rv, rows))).unwrap();
    if let Ok(path) = std::env::var("CAUSEWAY_KEEP_FIGURE") {
        std::fs::write(path, &svg).unwrap();
    }
    let t = texts(&svg);
    assert!(t.iter().any(|s| s == "female"), "{t:?}");
    assert!(
        t.iter().any(|s| s == "female, 200 times as strong: cannot exist"),
        "{t:?}"
    );
    assert!(t.iter().any(|s| s.starts_with("Risk-ratio scale")));
    assert!(
        t.iter()
            .any(|s| s == "hidden confounder half as strong as the covariate")
    );
}

fn demo_args<'a>(extra: &[&'a str]) -> Vec<&'a str> {
    let mut a = vec![
        "estimate",
        "--graph",
        "demo-data/main.graph",
        "--data",
        "demo-data/study.csv",
    ];
    a.extend(DEMO_QUESTION);
    a.extend_from_slice(extra);
    a
}

/// The benchmark table in the estimate JSON on the demo data: by default
/// the three terms whose own strength would bias the estimate most, at
/// multiples 0.5, 1 and 2; each row equals the library's bound and
/// corrected estimate for the measured strengths it lists (closed forms:
/// 1e-12 relative).
#[test]
fn estimate_json_carries_the_benchmark_table() {
    let r = run_in(&repo(""), &demo_args(&["--format", "json"]));
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let s = &v["sensitivity"];
    let b = &s["benchmarks"];
    assert_eq!(b["selection"], "strongest");
    let ks: Vec<f64> = b["multiples"].as_array().unwrap().iter().map(f).collect();
    assert_eq!(ks, [0.5, 1.0, 2.0]);
    let measured = b["measured"].as_array().unwrap();
    assert_eq!(measured.len(), 3);
    let names: Vec<&str> = measured
        .iter()
        .map(|m| m["covariate"].as_str().unwrap())
        .collect();
    assert_eq!(names[0], "baseline_pain", "{names:?}");
    let rows = b["rows"].as_array().unwrap();
    assert_eq!(rows.len() + b["skipped"].as_array().unwrap().len(), 9);
    for row in rows {
        let m = measured
            .iter()
            .find(|m| m["covariate"] == row["covariate"])
            .unwrap();
        let cov = Covariate {
            name: m["covariate"].as_str().unwrap().into(),
            r2_exposure: f(&m["r2_exposure"]),
            r2_outcome: f(&m["r2_outcome"]),
        };
        let k = f(&row["multiple"]);
        let (d, y) = benchmark_bounds(&cov, k, k).unwrap();
        assert!((d - f(&row["r2_exposure"])).abs() < 1e-12 * d.max(1e-3));
        assert!((y - f(&row["r2_outcome"])).abs() < 1e-12 * y.max(1e-3));
        let ci: Vec<f64> = row["ci"].as_array().unwrap().iter().map(f).collect();
        assert!(ci[0] < f(&row["estimate"]) && f(&row["estimate"]) < ci[1]);
    }
    // Stronger confounders move the (negative) estimate further towards
    // zero; a confounder as strong as baseline_pain gives -2.338, as in the
    // table of earlier releases (k = 1 row, printed to 4 digits).
    for w in rows.windows(2).filter(|w| w[0]["covariate"] == w[1]["covariate"]) {
        assert!(f(&w[1]["estimate"]) > f(&w[0]["estimate"]), "{w:?}");
    }
    let base = rows
        .iter()
        .find(|r| r["covariate"] == "baseline_pain" && f(&r["multiple"]) == 1.0)
        .unwrap();
    assert!((f(&base["estimate"]) + 2.338).abs() < 0.0005, "{base}");
}

/// Named benchmarks: a categorical covariate gives one row per level;
/// the text report shows the new layout and wording, none of the old.
#[test]
fn named_benchmarks_and_report_wording() {
    let r = run_in(
        &repo(""),
        &demo_args(&[
            "--benchmark",
            "role,age",
            "--benchmark-multiples",
            "1,3",
            "--format",
            "json",
        ]),
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let b = &v["sensitivity"]["benchmarks"];
    assert_eq!(b["selection"], "named");
    let names: Vec<&str> = b["measured"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["covariate"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["role=office", "role=warehouse", "age"]);
    assert_eq!(b["rows"].as_array().unwrap().len(), 6);

    let r = run_in(&repo(""), &demo_args(&[]));
    assert_eq!(r.code, 0, "{}", r.stderr);
    let out = flat(&r.stdout);
    for want in [
        "Risk-ratio scale (E-value",
        "tied to enrolled and to pain_days by risk ratios of at least 3.32 each",
        "Partial R² scale (robustness value",
        "would have to explain at least 38.7% of the leftover variance of enrolled and of pain_days",
        "For the 95% interval to reach zero, both shares must reach 36.6%",
        "measured covariate its shares (exposure, outcome) half as strong as strong twice as strong",
        "baseline_pain 3.10%, 29.7% -2.723 (-2.922 to -2.523) -2.338 (-2.507 to -2.169) -1.548 (-1.621 to -1.474)",
    ] {
        assert!(out.contains(want), "'{want}' missing from: {out}");
    }
    assert_new_wording_only(&out);
}

/// Benchmark options are checked before any fitting: exit 2 with the
/// option named and, for a misspelt covariate, the nearest names.
#[test]
fn benchmark_options_are_checked() {
    let cases: &[(&[&str], &[&str])] = &[
        (
            &["--benchmark", "agee"],
            &["--benchmark", "'agee'", "did you mean 'age'"],
        ),
        (
            &["--benchmark", "standing_hours"],
            &["--benchmark", "not an adjustment covariate"],
        ),
        (&["--benchmark", ","], &["--benchmark"]),
        (
            &["--benchmark-multiples", "0,1"],
            &["--benchmark-multiples", "0 is not a positive multiple"],
        ),
        (
            &["--benchmark-multiples", "1,x"],
            &["--benchmark-multiples", "'x' is not a number"],
        ),
        (
            &["--benchmark-multiples", "1,1"],
            &["--benchmark-multiples", "given twice"],
        ),
        (&["--benchmark-multiples", ""], &["--benchmark-multiples"]),
    ];
    for (extra, wants) in cases {
        let r = run_in(&repo(""), &demo_args(extra));
        assert_eq!(r.code, 2, "{extra:?}: {}", r.stderr);
        for w in *wants {
            assert!(r.stderr.contains(w), "{extra:?}: '{w}' not in {}", r.stderr);
        }
    }
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
