//! Effects within subgroups (`--subgroup COLUMN`): What If section 12.5 on
//! NHEFS and the stacked estimating equations behind the test of equal
//! effects, a categorical exposure, a seeded coverage simulation, the
//! bootstrap, every report format, and the refusals.

use crate::estimate_sim::{dataset, normal, rng};
use crate::helpers::{fixture, rel_close as close, repo, run_in, write};
use causeway::estimate::{self, Problem, Spec};
use causeway::learn::{Fits, Needs};
use rand::RngExt;
use serde_json::Value;

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

const NHEFS: [&str; 14] = [
    "estimate",
    "--graph",
    "tests/data/nhefs.graph",
    "--data",
    "tests/data/nhefs.csv",
    "--exposure",
    "qsmk",
    "--outcome",
    "wt82_71",
    "--categorical",
    "education,exercise,active",
    "--shape",
    "quadratic",
    "--quiet",
];

fn nhefs_json(extra: &[&str]) -> Value {
    let mut args = NHEFS.to_vec();
    args.extend(["--subgroup", "sex", "--format", "json"]);
    args.extend_from_slice(extra);
    let r = run_in(&repo(""), &args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

/// The row of `method` within level `level` of the subgroup column.
fn within<'a>(v: &'a Value, method: &str, level: &str) -> &'a Value {
    v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["method"] == method && e["subgroup"]["level"] == level)
        .unwrap_or_else(|| panic!("no {method} row for level {level}"))
}

fn test_of<'a>(v: &'a Value, method: &str) -> &'a Value {
    v["heterogeneity"]
        .as_array()
        .unwrap()
        .iter()
        .find(|h| h["method"] == method)
        .unwrap_or_else(|| panic!("no test for {method}"))
}

// Source: Hernán & Robins, What If (2020), section 12.5: the marginal
// structural model with qsmk x sex and stabilised weights P(A|sex)/P(A|L)
// gives b1 = 3.5220 (men, sex = 0) and b3 = -0.1595 (women: 3.3625),
// reproduced with statsmodels 0.15.0 GEE and, with numpy 2.4.6, the
// within-sex Hajek differences and regression standardisation with their
// stacked-estimating-equation standard errors and Wald statistic
// (tests/fixtures/subgroup_reference.json, made by
// tests/scripts/make_subgroup_fixtures.py). Tolerance 1e-6 relative.
#[test]
fn nhefs_effects_by_sex_match_what_if_12_5_and_the_stacked_equations() {
    let f: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("subgroup_reference.json")).unwrap()).unwrap();
    let v = nhefs_json(&[]);
    let msm = &f["msm"];
    let (b1, b3) = (num(&msm["coef"]["qsmk"]), num(&msm["coef"]["qsmk:sex"]));
    assert!(
        (b1 - 3.5220).abs() < 5e-5 && (b3 + 0.1595).abs() < 5e-5,
        "{b1} {b3}"
    );
    let ipw0 = num(&within(&v, "ipw", "0")["estimate"]);
    let ipw1 = num(&within(&v, "ipw", "1")["estimate"]);
    assert!(close(ipw0, b1, 1e-6), "{ipw0} vs {b1}");
    assert!(close(ipw1, b1 + b3, 1e-6), "{ipw1} vs {}", b1 + b3);
    for method in ["ipw", "regression"] {
        let r = &f[method];
        for (level, key) in [("0", "sex0"), ("1", "sex1")] {
            let row = within(&v, method, level);
            assert!(
                close(num(&row["estimate"]), num(&r[key]["difference"]), 1e-6),
                "{method} {row}"
            );
            assert!(
                close(num(&row["std_error"]), num(&r[key]["std_error"]), 1e-6),
                "{method} {row}"
            );
            assert_eq!(row["subgroup"]["variable"], "sex");
        }
        let h = test_of(&v, method);
        assert!(
            close(num(&h["statistic"]), num(&r["heterogeneity"]["statistic"]), 1e-6),
            "{h}"
        );
        assert!(
            close(num(&h["p_value"]), num(&r["heterogeneity"]["p_value"]), 1e-6),
            "{h}"
        );
        assert_eq!(h["df"], 1);
        assert_eq!(h["variable"], "sex");
    }
    // The overall rows stay, without a subgroup; the sizes are reported.
    let overall: Vec<&Value> = v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|e| e.get("subgroup").is_none())
        .collect();
    assert_eq!(overall.len(), 3);
    assert!((num(&overall[1]["estimate"]) - 3.4405).abs() < 1e-3);
    assert_eq!(v["subgroups"]["levels"][0]["rows"], 762);
    assert_eq!(v["subgroups"]["levels"][1]["rows"], 804);
    // Each subgroup row carries its own E-value.
    assert!(num(&within(&v, "ipw", "1")["evalue"]["point"]) > 1.0);
}

// The test uses the covariance of the two stratum contrasts, which share
// the fitted models; treating them as independent gives a different
// statistic (here the IF covariance is not zero).
#[test]
fn the_test_uses_the_covariance_of_the_strata() {
    let v = nhefs_json(&["--method", "regression"]);
    let (a, b) = (within(&v, "regression", "0"), within(&v, "regression", "1"));
    let d = num(&a["estimate"]) - num(&b["estimate"]);
    let independent = d * d / (num(&a["std_error"]).powi(2) + num(&b["std_error"]).powi(2));
    let h = num(&test_of(&v, "regression")["statistic"]);
    assert!((h - independent).abs() > 1e-4 * independent, "{h} {independent}");
}

// A categorical exposure: every level's contrast within every subgroup;
// the test has (levels of the modifier - 1) x contrasts degrees of
// freedom. Invented data tests/data/multilevel.csv.
#[test]
fn categorical_exposure_contrasts_within_subgroups() {
    let r = run_in(
        &repo(""),
        &[
            "estimate",
            "--graph",
            "tests/data/multilevel.graph",
            "--data",
            "tests/data/multilevel.csv",
            "--exposure",
            "dose_group",
            "--outcome",
            "y",
            "--subgroup",
            "female",
            "--format",
            "json",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let rows = v["estimates"].as_array().unwrap();
    let within: Vec<&Value> = rows.iter().filter(|e| e.get("subgroup").is_some()).collect();
    // 3 methods x 2 levels x 3 contrasts.
    assert_eq!(within.len(), 18);
    for h in v["heterogeneity"].as_array().unwrap() {
        assert_eq!(h["df"], 3, "{h}");
        assert!(num(&h["p_value"]) > 0.0 && num(&h["p_value"]) <= 1.0);
    }
    // Each level's averages use its own rows: the two levels' means differ.
    let mean = |lvl: &str| {
        within
            .iter()
            .find(|e| e["method"] == "regression" && e["subgroup"]["level"] == lvl)
            .map(|e| num(&e["means"]["high"]))
            .unwrap()
    };
    assert!((mean("0") - mean("1")).abs() > 1e-3);
}

/// Two strata (g = 0, 1) with effects 1 and 3; x confounds.
fn two_strata(seed: u64, n: usize) -> causeway::data::Dataset {
    let mut r = rng(seed);
    let (mut x, mut g, mut a, mut y) = (vec![], vec![], vec![], vec![]);
    for _ in 0..n {
        let xi = normal(&mut r);
        let gi = if r.random::<f64>() < 0.4 { 1.0 } else { 0.0 };
        let p = 1.0 / (1.0 + (-(0.6 * xi + 0.5 * gi - 0.2)).exp());
        let ai = if r.random::<f64>() < p { 1.0 } else { 0.0 };
        let yi = 0.5 + xi + 0.8 * gi + ai * (1.0 + 2.0 * gi) + normal(&mut r);
        x.push(xi);
        g.push(gi);
        a.push(ai);
        y.push(yi);
    }
    dataset(vec![("x", x), ("g", g), ("a", a), ("y", y)])
}

// Seeded coverage simulation (200 repetitions of 600 rows): the stratum
// intervals of regression, IPW and AIPW cover their stratum's true effect
// (1 and 3) near 95% (within three binomial standard errors, 0.95 +-
// 0.046), and the modifier need not be in the adjustment set.
#[test]
fn stratum_intervals_cover_their_own_effects() {
    let reps = 200;
    let methods = ["regression", "ipw", "aipw"];
    let mut cover = vec![[0usize; 2]; methods.len()];
    for rep in 0..reps {
        let d = two_strata(9100 + rep as u64, 600);
        let spec = Spec {
            exposure: "a".into(),
            outcome: "y".into(),
            covariates: vec!["x".into()],
            subgroup: Some("g".into()),
            ..Spec::default()
        };
        let p = Problem::build(&d, &spec).unwrap();
        let fits = Fits::fit(
            &p,
            None,
            None,
            Needs {
                outcome: true,
                exposure: true,
            },
        );
        for (k, m) in methods.iter().enumerate() {
            for (s, truth) in [(0usize, 1.0), (1, 3.0)] {
                let (rows, _) = estimate::rows(estimate::by_name(m).unwrap(), &p.within(s), &fits).unwrap();
                let e = &rows[0];
                cover[k][s] += (e.ci[0] <= truth && truth <= e.ci[1]) as usize;
            }
        }
    }
    for (k, m) in methods.iter().enumerate() {
        for (s, hits) in cover[k].iter().enumerate() {
            let c = *hits as f64 / reps as f64;
            eprintln!("{m} stratum {s}: coverage {c}");
            assert!((0.95 - c).abs() <= 0.046, "{m} stratum {s}: coverage {c}");
        }
    }
}

// The bootstrap refits every model and gives each subgroup row its own
// interval, the same for any thread count.
#[test]
fn bootstrap_gives_each_subgroup_its_interval() {
    let run = |threads: &str| nhefs_json(&["--method", "ipw", "--bootstrap", "40", "--threads", threads]);
    let (one, two) = (run("1"), run("2"));
    for level in ["0", "1"] {
        let (a, b) = (within(&one, "ipw", level), within(&two, "ipw", level));
        assert_eq!(a["ci"], b["ci"]);
        assert_eq!(a["ci_method"], "bootstrap-percentile");
        let ci = a["ci"].as_array().unwrap();
        let mid = (num(&ci[0]) + num(&ci[1])) / 2.0;
        assert!((mid - num(&a["estimate"])).abs() < 0.6, "{a}");
        assert!(num(&ci[1]) - num(&ci[0]) > 1.0, "{a}");
    }
}

// Every format shows the subgroup table and says the modifier must come
// before the exposure; the bundle holds the forest plot and the tidy test.
#[test]
fn every_format_reports_the_subgroups() {
    for format in ["text", "markdown", "latex", "csv"] {
        let mut args = NHEFS.to_vec();
        args.extend(["--subgroup", "sex", "--format", format]);
        let r = run_in(&repo(""), &args);
        assert_eq!(r.code, 0, "{format}: {}", r.stderr);
        if format == "csv" {
            assert!(r.stdout.contains("subgroup_level"), "{format}");
        } else {
            // Words as read, whatever the line breaks.
            let words = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
            assert!(words.contains("within levels of sex"), "{format}");
            assert!(words.contains("before the exposure"), "{format}");
        }
    }
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("b");
    let mut args = NHEFS.to_vec();
    args.extend(["--subgroup", "sex", "--out", out.to_str().unwrap()]);
    let r = run_in(&repo(""), &args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let svg = std::fs::read_to_string(out.join("figures/nhefs-subgroups.svg")).unwrap();
    assert!(svg.contains("sex = 1") && svg.contains("overall"));
    let h = std::fs::read_to_string(out.join("heterogeneity.csv")).unwrap();
    assert!(h.starts_with("graph,method,variable,statistic,df,p_value"));
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    assert!(md.contains("figures/nhefs-subgroups.svg"));
}

/// Runs an estimate on `csv` with the weights graph (treated, y, age,
/// female) plus `extra` nodes.
fn on(csv: &str, graph_extra: &str, extra: &[&str]) -> crate::helpers::Run {
    let dir = tempfile::tempdir().unwrap();
    let data = write(dir.path(), "d.csv", csv);
    let graph = write(
        dir.path(),
        "g.graph",
        &format!("age -> treated\nage -> y\nfemale -> treated\nfemale -> y\ntreated -> y\n{graph_extra}"),
    );
    let mut args = vec![
        "estimate",
        "--graph",
        &graph,
        "--data",
        &data,
        "--exposure",
        "treated",
        "--outcome",
        "y",
        "--quiet",
    ];
    args.extend_from_slice(extra);
    run_in(dir.path(), &args)
}

/// tests/data/weighted.csv with a column `g` from `f(row index, treated)`.
fn with_column(f: impl Fn(usize, &str) -> String) -> String {
    let text = std::fs::read_to_string(repo("tests/data/weighted.csv")).unwrap();
    let mut out = String::new();
    for (i, line) in text.lines().enumerate() {
        if i == 0 {
            out.push_str(&format!("{line},g\n"));
        } else {
            let treated = line.split(',').nth(2).unwrap();
            out.push_str(&format!("{line},{}\n", f(i, treated)));
        }
    }
    out
}

#[test]
fn bad_subgroup_columns_are_refused_naming_them() {
    // One level.
    let r = on(&with_column(|_, _| "x".into()), "", &["--subgroup", "g"]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("--subgroup") && r.stderr.contains("'g' takes a single value"),
        "{}",
        r.stderr
    );
    // A level with no exposed rows: the level and the arm are named.
    let r = on(
        &with_column(|i, t| {
            if i % 7 == 0 && t == "0" {
                "rare".into()
            } else {
                "common".into()
            }
        }),
        "",
        &["--subgroup", "g"],
    );
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("level 'rare' of 'g' has 0 exposed rows"),
        "{}",
        r.stderr
    );
    // A level too small for the outcome model.
    let r = on(
        &with_column(|i, _| if i <= 4 { "tiny".into() } else { "big".into() }),
        "",
        &["--subgroup", "g"],
    );
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("'tiny' of 'g'"), "{}", r.stderr);
    // Too many levels.
    let r = on(
        &with_column(|i, _| format!("{}", i % 30)),
        "",
        &["--subgroup", "g"],
    );
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("'g' has 30 levels"), "{}", r.stderr);
    // A descendant of the exposure.
    let r = on(
        &with_column(|i, _| format!("{}", i % 2)),
        "treated -> g\n",
        &["--subgroup", "g"],
    );
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("descendant of the exposure"), "{}", r.stderr);
    // Missing values: dropped as incomplete rows and counted.
    let r = on(
        &with_column(|i, _| {
            if i % 10 == 0 {
                String::new()
            } else {
                format!("{}", i % 2)
            }
        }),
        "",
        &["--subgroup", "g", "--format", "json"],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["sample"]["dropped_by_column"]["g"], 90);
    assert_eq!(v["sample"]["used"], 810);
}

// A continuous exposure: each level gets its own one-unit effect and its
// own dose-response curves (`curves[].subgroup`). Simulated (seed 31):
// effects 1 (g = 0) and 2 (g = 1) per unit.
#[test]
fn continuous_exposure_gets_an_effect_and_curves_per_level() {
    let mut r = rng(31);
    let (mut rows, n) = (String::from("x,g,a,y\n"), 800);
    for _ in 0..n {
        let x = normal(&mut r);
        let g = if r.random::<f64>() < 0.5 { 1.0 } else { 0.0 };
        let a = 1.0 + 0.5 * x + normal(&mut r);
        let y = a * (1.0 + g) + x + normal(&mut r);
        rows.push_str(&format!("{x},{g},{a},{y}\n"));
    }
    let dir = tempfile::tempdir().unwrap();
    let data = write(dir.path(), "d.csv", &rows);
    let graph = write(dir.path(), "g.graph", "x -> a\nx -> y\na -> y\n");
    let r = run_in(
        dir.path(),
        &[
            "estimate",
            "--graph",
            &graph,
            "--data",
            &data,
            "--exposure",
            "a",
            "--outcome",
            "y",
            "--subgroup",
            "g",
            "--format",
            "json",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    for (level, truth) in [("0", 1.0), ("1", 2.0)] {
        let e = within(&v, "regression", level);
        let ci = e["ci"].as_array().unwrap();
        assert!(num(&ci[0]) < truth && truth < num(&ci[1]), "{e}");
    }
    let curves = v["curves"].as_array().unwrap();
    assert_eq!(curves.len(), 6, "two methods, overall and two levels");
    assert!(
        curves
            .iter()
            .any(|c| c["method"] == "ipw" && c["subgroup"]["level"] == "1")
    );
    assert_eq!(test_of(&v, "regression")["df"], 1);
}
