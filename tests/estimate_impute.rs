//! Multiple imputation (`--missing impute`): a seeded coverage simulation
//! on data missing at random, the same output for any thread count, the
//! JSON, text and CSV fields, and refusals. The pooling formulas are
//! checked against a numpy/scipy reproduction in `src/infer/pool.rs`.

use crate::helpers::{repo, run_bounded, write};
use causeway::analysis::{self, Options};
use causeway::estimate::Spec;
use causeway::plan::{AdjustChoice, Plan, Roles};
use causeway::problem::Missing;
use serde_json::Value;
use std::time::Duration;

const LIMIT: Duration = Duration::from_secs(120);

fn plan(columns: &[&str]) -> Plan {
    let g = causeway::graph::parse("l -> a\nl -> y\na -> y\n", "sim.graph")
        .unwrap()
        .graph;
    let cols: Vec<String> = columns.iter().map(|c| c.to_string()).collect();
    let roles = Roles::resolve(g, Some(&cols), Some("sim"), &[], "a", "y").unwrap();
    Plan::new(roles, &AdjustChoice::Optimal, false).unwrap()
}

// Seeded coverage simulation (120 repetitions of 600 rows, 10 imputations):
// the complete cases' regression estimate is biased (selection on the
// outcome through the covariate's missingness) and its intervals rarely
// cover the true effect 2; after imputation the regression and IPW
// estimates are nearly unbiased and their intervals cover 2 near 95%
// (within three binomial standard errors, 0.95 +- 0.06).
#[test]
fn imputation_removes_the_complete_case_bias_with_near_nominal_coverage() {
    use crate::designs::missing_at_random as sample;
    let reps = 120;
    let p = plan(&["l", "a", "y"]);
    let opts = |missing| Options {
        model: Spec {
            missing,
            imputations: 10,
            ..Spec::default()
        },
        threads: 1,
        ..Options::default()
    };
    let (complete, imputed) = (opts(Missing::Complete), opts(Missing::Impute));
    let mut cover = [0usize; 3];
    let mut bias = [0.0; 3];
    for rep in 0..reps {
        let d = sample(9100 + rep as u64, 600);
        let cc = analysis::run(&p, &d, &complete).unwrap();
        let mi = analysis::run(&p, &d, &imputed).unwrap();
        let row = |a: &analysis::Analysis, m: &str| {
            a.estimates
                .iter()
                .find(|e| e.estimate.method == m)
                .unwrap()
                .estimate
                .clone()
        };
        for (k, e) in [row(&cc, "regression"), row(&mi, "regression"), row(&mi, "ipw")]
            .iter()
            .enumerate()
        {
            cover[k] += usize::from(e.ci[0] <= 2.0 && 2.0 <= e.ci[1]);
            bias[k] += (e.estimate - 2.0) / reps as f64;
        }
        let fmi = row(&mi, "regression").fraction_missing_information.unwrap();
        assert!(fmi > 0.0 && fmi < 1.0, "{fmi}");
    }
    let c = cover.map(|k| k as f64 / reps as f64);
    eprintln!(
        "coverage: complete cases {}, imputed regression {}, imputed ipw {}; bias {bias:?}",
        c[0], c[1], c[2]
    );
    assert!(bias[0].abs() > 0.15, "complete-case bias {}", bias[0]);
    assert!(c[0] < 0.6, "complete-case coverage {}", c[0]);
    for k in 1..3 {
        assert!(bias[k].abs() < 0.05, "imputed bias {}", bias[k]);
        assert!((0.95 - c[k]).abs() <= 0.06, "imputed coverage {}", c[k]);
    }
}

/// The demo study with cells blanked (about 8% of age, role, enrolled and
/// pain_days, by a fixed rule on the line number), written into `dir`.
fn demo_with_gaps(dir: &std::path::Path) -> String {
    let text = std::fs::read_to_string(repo("demo-data/study.csv")).unwrap();
    let mut out = String::new();
    for (k, line) in text.lines().enumerate() {
        let mut cells: Vec<&str> = line.split(',').collect();
        if k > 0 {
            for (j, col) in [(0usize, 3usize), (1, 5), (5, 7), (7, 11)] {
                if (k * 7 + col) % 13 == 0 {
                    cells[j] = "";
                }
            }
        }
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    write(dir, "gaps.csv", &out)
}

fn estimate(dir: &std::path::Path, data: &str, extra: &[&str]) -> crate::helpers::Run {
    let mut args = vec![
        "estimate",
        "--graph",
        "demo-data/main.graph",
        "--data",
        data,
        "--exposure",
        "enrolled",
        "--outcome",
        "pain_days",
        "--categorical",
        "role",
        "--quiet",
    ];
    args.extend(extra);
    let _ = dir;
    run_bounded(&repo(""), &args, LIMIT)
}

#[test]
fn imputed_results_are_the_same_for_any_thread_count_and_carry_the_pooled_fields() {
    let dir = tempfile::tempdir().unwrap();
    let data = demo_with_gaps(dir.path());
    let base = [
        "--missing",
        "impute",
        "--imputations",
        "5",
        "--format",
        "json",
        "--seed",
        "3",
    ];
    let one = estimate(dir.path(), &data, &[&base[..], &["--threads", "1"]].concat());
    let two = estimate(dir.path(), &data, &[&base[..], &["--threads", "2"]].concat());
    assert_eq!(one.code, 0, "{}", one.stderr);
    let (a, b): (Value, Value) = (
        serde_json::from_str(&one.stdout).unwrap(),
        serde_json::from_str(&two.stdout).unwrap(),
    );
    assert_eq!(a["estimates"], b["estimates"]);
    assert_eq!(a["sample"], b["sample"]);
    let m = &a["sample"]["missing"];
    assert_eq!(m["handling"], "impute");
    assert_eq!(m["imputations"], 5);
    assert_eq!(m["iterations"], 10);
    let cols: Vec<&str> = m["columns"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["column"].as_str().unwrap())
        .collect();
    assert_eq!(cols, ["enrolled", "pain_days", "age", "role"]);
    assert_eq!(a["sample"]["used"], 3000);
    for e in a["estimates"].as_array().unwrap() {
        assert_eq!(e["ci_method"], "rubin");
        let fmi = e["fraction_missing_information"].as_f64().unwrap();
        let df = e["df"].as_f64().unwrap();
        assert!(fmi > 0.0 && fmi < 1.0 && df > 4.0, "{e}");
        // Near the complete-case answer of the demo study (about -3.1).
        let est = e["estimate"].as_f64().unwrap();
        assert!((-3.6..-2.6).contains(&est), "{e}");
    }
    // Another seed gives other imputations.
    let other = estimate(
        dir.path(),
        &data,
        &[
            "--missing",
            "impute",
            "--imputations",
            "5",
            "--format",
            "json",
            "--seed",
            "4",
        ],
    );
    let c: Value = serde_json::from_str(&other.stdout).unwrap();
    assert_ne!(a["estimates"][0]["estimate"], c["estimates"][0]["estimate"]);
    // Text and CSV show the pooled columns.
    let text = estimate(dir.path(), &data, &["--missing", "impute", "--imputations", "3"]);
    assert_eq!(text.code, 0, "{}", text.stderr);
    assert!(text.stdout.contains("missing information"), "{}", text.stdout);
    assert!(
        text.stdout.contains("3 imputations of 10 rounds"),
        "{}",
        text.stdout
    );
    let csv = estimate(
        dir.path(),
        &data,
        &["--missing", "impute", "--imputations", "3", "--format", "csv"],
    );
    let header = csv.stdout.lines().next().unwrap();
    assert!(
        header.ends_with("imputations,fraction_missing_information,df"),
        "{header}"
    );
    // Without missing cells nothing is imputed and the intervals are the
    // complete-data ones (no spread between imputations, df near n - k).
    let full = estimate(
        dir.path(),
        "demo-data/study.csv",
        &["--missing", "impute", "--imputations", "2", "--format", "json"],
    );
    let plain = estimate(dir.path(), "demo-data/study.csv", &["--format", "json"]);
    let (f, p): (Value, Value) = (
        serde_json::from_str(&full.stdout).unwrap(),
        serde_json::from_str(&plain.stdout).unwrap(),
    );
    assert_eq!(f["sample"]["missing"]["columns"].as_array().unwrap().len(), 0);
    for (x, y) in f["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .zip(p["estimates"].as_array().unwrap())
    {
        let (a, b) = (x["estimate"].as_f64().unwrap(), y["estimate"].as_f64().unwrap());
        assert!((a - b).abs() < 1e-12, "{a} vs {b}");
        let fmi = x["fraction_missing_information"].as_f64().unwrap();
        assert!(fmi < 0.01, "{x}");
    }
}

#[test]
fn bad_imputation_input_is_refused_naming_the_column_or_option() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(repo("demo-data/study.csv")).unwrap();
    // age (first column) missing everywhere, or observed once.
    for (keep, said) in [(0usize, "missing in every row"), (1, "single observed value")] {
        let mut out = String::new();
        for (k, line) in text.lines().enumerate() {
            let mut cells: Vec<&str> = line.split(',').collect();
            if k > keep {
                cells[0] = "";
            }
            out.push_str(&cells.join(","));
            out.push('\n');
        }
        let data = write(dir.path(), "bad.csv", &out);
        let r = estimate(dir.path(), &data, &["--missing", "impute", "--imputations", "2"]);
        assert_eq!(r.code, 2, "{}", r.stderr);
        assert!(
            r.stderr.contains("'age'") && r.stderr.contains(said),
            "{}",
            r.stderr
        );
    }
    let data = demo_with_gaps(dir.path());
    for (extra, said) in [
        (vec!["--missing", "impute", "--imputations", "1"], "--imputations"),
        (vec!["--missing", "impute", "--imputations", "0"], "--imputations"),
        (
            vec!["--missing", "impute", "--imputations", "100000000"],
            "--imputations",
        ),
        (vec!["--missing", "impute", "--bootstrap", "20"], "--bootstrap"),
        // A count of imputations without imputation is refused, not ignored.
        (vec!["--imputations", "5"], "--missing impute"),
    ] {
        let r = estimate(dir.path(), &data, &extra);
        assert_eq!(r.code, 2, "{extra:?}: {}", r.stderr);
        assert!(r.stderr.contains(said), "{extra:?}: {}", r.stderr);
    }
}

#[test]
fn compare_and_demo_take_the_missing_flags() {
    let r = run_bounded(
        &repo(""),
        &[
            "demo",
            "--missing",
            "impute",
            "--imputations",
            "2",
            "--format",
            "json",
            "--quiet",
        ],
        LIMIT,
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stdout.contains("\"handling\": \"impute\""),
        "{}",
        &r.stdout[..2000.min(r.stdout.len())]
    );
    let dir = tempfile::tempdir().unwrap();
    let data = demo_with_gaps(dir.path());
    let r = run_bounded(
        &repo(""),
        &[
            "compare",
            "--graph",
            "demo-data/main.graph",
            "--graph",
            "demo-data/hidden-motivation.graph",
            "--data",
            &data,
            "--exposure",
            "enrolled",
            "--outcome",
            "pain_days",
            "--categorical",
            "role",
            "--missing",
            "impute",
            "--imputations",
            "2",
            "--quiet",
        ],
        LIMIT,
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stdout.contains("pooled") || r.stdout.contains("imput"),
        "{}",
        r.stdout
    );
}
