//! Clustered rows (`--cluster COLUMN`): cluster-robust sandwich standard
//! errors checked against statsmodels and numpy on invented clustered data,
//! a seeded coverage simulation, the cluster bootstrap, the JSON
//! `design.cluster` block and the refusals.

use crate::designs::{clustered as simulate, dataset, normal, rng};
use crate::helpers::{fixture, repo, run_in};
use causeway::estimate::{Problem, Spec, method};
use causeway::infer::bootstrap::{BootOpts, Units, run_units};
use serde_json::Value;

fn clustered(extra: &[&str]) -> crate::helpers::Run {
    let mut args = vec![
        "estimate",
        "--graph",
        "tests/data/clustered.graph",
        "--data",
        "tests/data/clustered.csv",
        "--exposure",
        "treated",
        "--outcome",
        "y",
        "--format",
        "json",
        "--quiet",
    ];
    args.extend_from_slice(extra);
    run_in(&repo(""), &args)
}

fn json(extra: &[&str]) -> Value {
    let r = clustered(extra);
    assert_eq!(r.code, 0, "{}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap()
}

use crate::helpers::{method_row as row, rel_close as close};

// Source: tests/fixtures/cluster_reference.json, made by
// tests/scripts/make_cluster_fixtures.py (statsmodels 0.15.0 OLS with
// cov_type='cluster' and its default use_correction=True, factor
// G/(G-1) x (N-1)/(N-K); numpy 2.4.6 stacked influence functions of the
// Hajek IPW difference with factor G/(G-1)) on the invented data
// tests/data/clustered.csv. Tolerance 1e-6 relative: both sides solve the
// same equations to convergence (Newton for the logistic model).
#[test]
fn cluster_robust_standard_errors_match_statsmodels_and_numpy() {
    let f: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("cluster_reference.json")).unwrap()).unwrap();
    let v = json(&["--cluster", "site", "--method", "regression,ipw"]);
    let c = &v["design"]["cluster"];
    assert_eq!(c["variable"], "site");
    assert_eq!(c["count"], f["clusters"]);
    assert_eq!(c["min_size"], f["min_size"]);
    assert_eq!(c["max_size"], f["max_size"]);
    assert!(v["design"]["weights"].is_null());
    // Rows missing the cluster column are dropped and counted.
    assert_eq!(v["sample"]["used"], f["used"]);
    assert_eq!(v["sample"]["dropped_by_column"]["site"], 5);
    let reg = row(&v, "regression");
    let ols = &f["ols"];
    assert!(close(
        reg["estimate"].as_f64().unwrap(),
        ols["coefficient"].as_f64().unwrap(),
        1e-6
    ));
    assert!(
        close(
            reg["std_error"].as_f64().unwrap(),
            ols["cluster_se"].as_f64().unwrap(),
            1e-6
        ),
        "{reg} vs {ols}"
    );
    let ipw = row(&v, "ipw");
    let r = &f["ipw"];
    assert!(close(
        ipw["estimate"].as_f64().unwrap(),
        r["difference"].as_f64().unwrap(),
        1e-6
    ));
    assert!(
        close(
            ipw["std_error"].as_f64().unwrap(),
            r["cluster_se"].as_f64().unwrap(),
            1e-6
        ),
        "{ipw} vs {r}"
    );
    // Without --cluster (the 5 rows without a site kept): no design block,
    // and the row-level sandwich is far smaller (fixture, same rows as the
    // clustered run: 0.121 against 0.271).
    let plain = json(&["--method", "ipw"]);
    assert!(plain.get("design").is_none());
    let p = row(&plain, "ipw")["std_error"].as_f64().unwrap();
    assert!(p < 0.6 * ipw["std_error"].as_f64().unwrap(), "{p}");
}

// Seeded coverage simulation (200 repetitions, 50 clusters of 12 rows, true
// effect 2): cluster-robust intervals cover near 95% (within three binomial
// standard errors, 0.95 +- 0.046), while the row-level sandwich, which
// treats the rows as independent, under-covers.
#[test]
fn cluster_robust_intervals_cover_and_row_level_ones_do_not() {
    let reps = 200;
    let (mut clustered, mut rows) = (0usize, 0usize);
    for rep in 0..reps {
        let d = simulate(9000 + rep as u64, 50, 12);
        let base = Spec {
            exposure: "a".into(),
            outcome: "y".into(),
            covariates: vec!["x".into()],
            ..Spec::default()
        };
        let with = Spec {
            cluster: Some("site".into()),
            ..base.clone()
        };
        let covers = |s: &Spec| {
            let p = Problem::build(&d, s).unwrap();
            let e = method("regression").unwrap().estimate(&p).unwrap();
            e.ci[0] <= 2.0 && 2.0 <= e.ci[1]
        };
        clustered += covers(&with) as usize;
        rows += covers(&base) as usize;
    }
    let (c, r) = (clustered as f64 / reps as f64, rows as f64 / reps as f64);
    eprintln!("coverage: cluster-robust {c}, row-level {r}");
    assert!((0.95 - c).abs() <= 0.046, "cluster-robust coverage {c}");
    assert!(r < 0.85, "row-level coverage {r}");
}

#[test]
fn cluster_bootstrap_draws_whole_clusters_and_leaves_them_out() {
    let of: Vec<u32> = (0..60).map(|i| (i % 7) as u32).collect();
    let opts = BootOpts {
        replicates: 40,
        seed: 3,
        threads: 2,
        ..BootOpts::default()
    };
    let draws = run_units(Units::Clusters { of: &of, count: 7 }, &opts, |w| {
        // Every row of a cluster carries its cluster's draw count, and the
        // counts are whole numbers summing to the number of clusters
        // (replicates) or to the clusters kept (jackknife).
        let mut per = [f64::NAN; 7];
        for (&g, &x) in of.iter().zip(w) {
            let c = &mut per[g as usize];
            assert!(c.is_nan() || *c == x, "weights differ within a cluster");
            *c = x;
        }
        let total: f64 = per.iter().sum();
        assert!(per.iter().all(|c| c.fract() == 0.0));
        assert!(total == 7.0 || total == 6.0, "{total}");
        Ok(vec![w.iter().sum::<f64>()])
    })
    .unwrap();
    assert_eq!(draws.jackknife.groups, 7);
    assert_eq!(draws.estimate, vec![60.0]);
}

#[test]
fn cluster_bootstrap_is_the_same_for_any_thread_count() {
    let run = |threads: &str| {
        json(&[
            "--cluster",
            "site",
            "--method",
            "regression",
            "--bootstrap",
            "60",
            "--threads",
            threads,
        ])
    };
    let (one, two) = (run("1"), run("2"));
    let (a, b) = (row(&one, "regression"), row(&two, "regression"));
    assert_eq!(a["ci"], b["ci"]);
    assert_eq!(a["bootstrap"], b["bootstrap"]);
    assert_eq!(a["ci_method"], "bootstrap-percentile");
    // The cluster bootstrap's interval is near the cluster-robust one, far
    // wider than the row-level one (fixture: cluster SE 0.272, HC0 0.121).
    let ci = a["ci"].as_array().unwrap();
    let width = ci[1].as_f64().unwrap() - ci[0].as_f64().unwrap();
    assert!(width > 2.0 * 1.96 * 0.2, "{width}");
}

#[test]
fn fewer_than_thirty_clusters_are_warned_of() {
    let r = run_in(
        &repo(""),
        &[
            "estimate",
            "--graph",
            "demo-data/main.graph",
            "--data",
            "demo-data/study.csv",
            "--exposure",
            "enrolled",
            "--outcome",
            "pain_days",
            "--categorical",
            "role",
            "--cluster",
            "role",
            "--format",
            "json",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["design"]["cluster"]["count"], 3);
    let warned = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|w| w.as_str().unwrap().contains("only 3 clusters in 'role'"));
    assert!(warned, "{}", v["warnings"]);
    let text = run_in(
        &repo(""),
        &[
            "estimate",
            "--graph",
            "demo-data/main.graph",
            "--data",
            "demo-data/study.csv",
            "--exposure",
            "enrolled",
            "--outcome",
            "pain_days",
            "--categorical",
            "role",
            "--cluster",
            "role",
            "--quiet",
        ],
    );
    let flat = text.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains("The rows form 3 clusters by role (611 to 1470 rows each)"),
        "{flat}"
    );
    assert!(flat.contains("intervals are cluster-robust"), "{flat}");
    // 48 clusters: no such warning.
    let v = json(&["--cluster", "site", "--method", "regression"]);
    assert!(!v["warnings"].to_string().contains("clusters in"));
}

#[test]
fn a_single_cluster_or_an_unknown_column_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("one.csv");
    let mut s = String::from("site,age,female,treated,y\n");
    let mut r = rng(5);
    for i in 0..80 {
        let a = (i % 2) as f64;
        s.push_str(&format!(
            "north,{},{},{a},{}\n",
            40 + i % 20,
            i % 3 == 0,
            2.0 * a + normal(&mut r)
        ));
    }
    std::fs::write(&csv, s.replace("true", "1").replace("false", "0")).unwrap();
    let graph = repo("tests/data/clustered.graph");
    let one = run_in(
        dir.path(),
        &[
            "estimate",
            "--graph",
            graph.to_str().unwrap(),
            "--data",
            "one.csv",
            "--exposure",
            "treated",
            "--outcome",
            "y",
            "--cluster",
            "site",
        ],
    );
    assert_eq!(one.code, 2, "{}", one.stderr);
    assert!(one.stderr.contains("--cluster"), "{}", one.stderr);
    assert!(
        one.stderr.contains("'site' takes a single value"),
        "{}",
        one.stderr
    );
    let unknown = clustered(&["--cluster", "sites"]);
    assert_eq!(unknown.code, 2, "{}", unknown.stderr);
    assert!(unknown.stderr.contains("'sites'"), "{}", unknown.stderr);
    assert!(unknown.stderr.contains("did you mean"), "{}", unknown.stderr);
}

// Closed form, every method and exposure kind: with every row its own
// cluster, summing within clusters changes nothing but the small-sample
// factor, so the clustered standard error is the row-level one times
// sqrt(N/(N-1)), and times sqrt((N-1)/(N-K)) besides for regression
// standardization of a continuous outcome (K outcome-model coefficients).
// Tolerance 1e-10 relative (the same sums in another order).
#[test]
fn one_row_clusters_give_the_row_level_sandwich_times_the_factor() {
    use causeway::estimate::{ESTIMATORS, applicable, rows};
    use causeway::identify::Strategy;
    use causeway::learn::Fits;
    let n = 400;
    let mut r = rng(77);
    let (mut id, mut x, mut dose, mut level, mut y) = (vec![], vec![], vec![], vec![], vec![]);
    for i in 0..n {
        let xi = normal(&mut r);
        let d = 2.0 + 0.5 * xi + normal(&mut r);
        let l = ((xi + normal(&mut r)).clamp(-1.4, 1.4) + 1.5).floor();
        id.push(i as f64);
        x.push(xi);
        dose.push(d);
        level.push(l);
        y.push(1.0 + d + l + xi + normal(&mut r));
    }
    let d = dataset(vec![
        ("id", id),
        ("x", x),
        ("dose", dose),
        ("level", level),
        ("y", y),
    ]);
    let cases = [
        Spec {
            exposure: "level".into(),
            categorical: vec!["level".into()],
            ..Spec::default()
        },
        Spec {
            exposure: "dose".into(),
            contrast: Some((1.0, 3.0)),
            ..Spec::default()
        },
    ];
    let mut checked = 0;
    for case in cases {
        let base = Spec {
            outcome: "y".into(),
            covariates: vec!["x".into()],
            ..case
        };
        let with = Spec {
            cluster: Some("id".into()),
            ..base.clone()
        };
        let (p0, p1) = (
            Problem::build(&d, &base).unwrap(),
            Problem::build(&d, &with).unwrap(),
        );
        assert_eq!(p1.clusters.as_ref().unwrap().count, n);
        let fits = Fits::fit(&p0, None, None, causeway::estimate::needs(&ESTIMATORS));
        for e in applicable(&p0, Strategy::Backdoor) {
            let (a, _) = rows(e, &p0, &fits).unwrap();
            let (b, _) = rows(e, &p1, &fits).unwrap();
            assert_eq!(a.len(), b.len());
            let nf = n as f64;
            let mut factor = nf / (nf - 1.0);
            if e.about().name == "regression" {
                let k = p0.outcome_design.ncols() as f64;
                factor *= (nf - 1.0) / (nf - k);
            }
            for (ra, rb) in a.iter().zip(&b) {
                let want = ra.std_error * factor.sqrt();
                assert!(
                    close(rb.std_error, want, 1e-10),
                    "{} {}: {} vs {want}",
                    e.about().name,
                    base.exposure,
                    rb.std_error
                );
                checked += 1;
            }
        }
    }
    assert!(checked >= 6, "{checked}");
}

#[test]
fn compare_and_demo_take_the_cluster_column() {
    let demo = run_in(
        &repo(""),
        &["demo", "--cluster", "role", "--format", "json", "--quiet"],
    );
    assert_eq!(demo.code, 0, "{}", demo.stderr);
    let v: Value = serde_json::from_str(&demo.stdout).unwrap();
    let runs = v["runs"].as_array().unwrap();
    let done: Vec<&Value> = runs.iter().filter(|r| r.get("sample").is_some()).collect();
    assert!(!done.is_empty());
    for r in done {
        assert_eq!(r["design"]["cluster"]["variable"], "role", "{r}");
        assert_eq!(r["design"]["cluster"]["count"], 3);
    }
    let compare = run_in(
        &repo(""),
        &[
            "compare",
            "--graph",
            "demo-data/main.graph",
            "--graph",
            "demo-data/hidden-motivation.graph",
            "--data",
            "demo-data/study.csv",
            "--exposure",
            "enrolled",
            "--outcome",
            "pain_days",
            "--categorical",
            "role",
            "--cluster",
            "role",
            "--quiet",
        ],
    );
    assert_eq!(compare.code, 0, "{}", compare.stderr);
    let flat = compare.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        flat.contains("cluster-robust (3 clusters by role, 611 to 1470 rows each)"),
        "{}",
        compare.stdout
    );
}
