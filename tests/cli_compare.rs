//! `causeway compare` and `causeway demo` through the binary: snapshots of
//! every format for a fixed small case, the bundle, and the demo study's
//! construction (the backdoor estimate under `main` is biased by the
//! unmeasured motivation; the front-door interval covers the truth).

use crate::helpers::{repo, run_in};
use serde_json::Value;
use std::path::Path;

/// Balanced braces and environments; compiled with pdflatex when one is
/// installed (skipped with a message otherwise).
pub fn assert_tex_compiles(tex: &str, dir: &Path) {
    let mut depth: i64 = 0;
    for c in tex.replace("\\{", "").replace("\\}", "").chars() {
        match c {
            '{' => depth += 1,
            '}' => depth -= 1,
            _ => {}
        }
        assert!(depth >= 0, "a '}}' closes nothing");
    }
    assert_eq!(depth, 0, "unbalanced braces");
    for env in ["document", "table", "tabular"] {
        assert_eq!(
            tex.matches(&format!("\\begin{{{env}}}")).count(),
            tex.matches(&format!("\\end{{{env}}}")).count(),
            "unbalanced {env}"
        );
    }
    assert!(tex.contains("\\toprule") && tex.contains("\\midrule") && tex.contains("\\bottomrule"));
    let engine = ["pdflatex", "lualatex", "xelatex"].into_iter().find(|e| {
        std::process::Command::new(e)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    });
    match engine {
        Some(e) => {
            std::fs::write(dir.join("t.tex"), tex).unwrap();
            let out = std::process::Command::new(e)
                .args(["-interaction=nonstopmode", "-halt-on-error", "t.tex"])
                .current_dir(dir)
                .output()
                .unwrap();
            assert!(
                out.status.success(),
                "{e} failed: {}",
                String::from_utf8_lossy(&out.stdout)
            );
        }
        None => eprintln!("note: no TeX engine installed; table.tex checked for balance only"),
    }
}

const SMALL: [&str; 11] = [
    "compare",
    "--graph",
    "tests/data/small-a.graph",
    "--graph",
    "tests/data/small-b.graph",
    "--data",
    "tests/data/small.csv",
    "--exposure",
    "x",
    "--outcome",
    "y",
];

/// Compares output with tests/snapshots/NAME, or rewrites the snapshot when
/// UPDATE_SNAPSHOTS is set.
fn snapshot(name: &str, got: &str) {
    let path = repo("tests/snapshots").join(name);
    if std::env::var_os("UPDATE_SNAPSHOTS").is_some() {
        std::fs::write(&path, got).unwrap();
        return;
    }
    let want = std::fs::read_to_string(&path).unwrap_or_else(|_| panic!("missing snapshot {name}"));
    assert_eq!(
        got, want,
        "output differs from tests/snapshots/{name} (rerun with UPDATE_SNAPSHOTS=1 to accept)"
    );
}

#[test]
fn every_format_matches_its_snapshot() {
    for (format, ext) in [
        ("text", "txt"),
        ("json", "json"),
        ("csv", "csv"),
        ("markdown", "md"),
        ("latex", "tex"),
    ] {
        let mut args = SMALL.to_vec();
        args.extend(["--format", format, "--quiet"]);
        let r = run_in(&repo(""), &args);
        assert_eq!(r.code, 0, "{format}: {}", r.stderr);
        snapshot(&format!("compare.{ext}"), &r.stdout);
        // Every format carries the stamp.
        assert!(
            r.stdout.contains(env!("CARGO_PKG_VERSION")),
            "{format} lacks the version"
        );
        assert!(
            r.stdout.contains("469f9830bcaa4580"),
            "{format} lacks the data's SHA-256"
        );
        assert!(
            r.stdout.contains("causeway compare --graph"),
            "{format} lacks the command line"
        );
    }
}

#[test]
fn compare_json_keeps_a_row_per_graph_and_the_differences() {
    let mut args = SMALL.to_vec();
    args.extend(["--format", "json", "--quiet"]);
    let v: Value = serde_json::from_str(&run_in(&repo(""), &args).stdout).unwrap();
    let runs = v["runs"].as_array().unwrap();
    assert_eq!(runs.len(), 2);
    assert_eq!(runs[0]["graph"], "tests/data/small-a.graph");
    assert_eq!(runs[0]["identification"]["strategy"], "backdoor");
    assert_eq!(runs[1]["identification"]["strategy"], "frontdoor");
    assert_eq!(v["differences"][0]["made_latent"][0], "z");
}

#[test]
fn compare_bundle_has_figures_for_each_graph() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("b");
    let mut args = SMALL.to_vec();
    args.extend(["--quiet", "--out", out.to_str().unwrap()]);
    let r = run_in(&repo(""), &args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    for f in [
        "report.md",
        "results.json",
        "table.tex",
        "figures/graph1-graph.svg",
        "figures/graph2-graph.svg",
    ] {
        assert!(out.join(f).is_file(), "missing {f}");
    }
    for entry in std::fs::read_dir(out.join("figures")).unwrap() {
        let svg = std::fs::read_to_string(entry.unwrap().path()).unwrap();
        roxmltree::Document::parse(&svg).expect("SVG parses as XML");
    }
    assert_tex_compiles(
        &std::fs::read_to_string(out.join("table.tex")).unwrap(),
        dir.path(),
    );
}

// The demo data were simulated (demo-data/study.graph) with a true effect of
// -2 days acting only through standing_hours, and an unmeasured motivation
// that raises enrolment and lowers pain: the `main` backdoor estimate must be
// pushed below the truth, and the front-door interval must cover it.
#[test]
fn demo_estimates_differ_as_the_construction_implies() {
    let dir = tempfile::tempdir().unwrap();
    let r = run_in(dir.path(), &["demo", "--format", "json", "--quiet"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let runs = v["runs"].as_array().unwrap();
    let est = |i: usize, m: &str| -> (f64, f64, f64) {
        let e = runs[i]["estimates"]
            .as_array()
            .unwrap()
            .iter()
            .find(|e| e["method"] == m)
            .unwrap()
            .clone();
        let ci = e["ci"].as_array().unwrap().clone();
        (
            e["estimate"].as_f64().unwrap(),
            ci[0].as_f64().unwrap(),
            ci[1].as_f64().unwrap(),
        )
    };
    let truth = -2.0;
    let (main, _, main_hi) = est(0, "regression");
    assert!(
        main_hi < truth,
        "main estimate {main} should be biased below the truth"
    );
    let (fd, lo, hi) = est(1, "frontdoor");
    assert!(
        lo <= truth && truth <= hi,
        "front-door {fd} ({lo}, {hi}) should cover {truth}"
    );
    assert_eq!(runs[2]["identification"]["strategy"], "none");
    let text = run_in(dir.path(), &["demo", "--quiet"]).stdout;
    let text = text.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(text.contains("invented"));
    assert!(text.contains("true effect of enrolled on pain_days is -2.000 days"));
}

// tests/data/small.csv was drawn by `causeway simulate` from
// tests/data/small-model.graph (seed 7), where the effect of x on y is
// 1.0 x 0.7 = 0.7 by the path rule (Wright 1934). Under both identified
// graphs every method's 95% interval covers it.
#[test]
fn estimates_on_simulated_data_cover_the_path_rule_truth() {
    let dir = tempfile::tempdir().unwrap();
    let model = repo("tests/data/small-model.graph");
    let truth_file = dir.path().join("truth.json");
    let r = run_in(
        dir.path(),
        &[
            "simulate",
            "--graph",
            model.to_str().unwrap(),
            "--rows",
            "200",
            "--seed",
            "7",
            "--exposure",
            "x",
            "--outcome",
            "y",
            "--truth",
            truth_file.to_str().unwrap(),
            "--output",
            "again.csv",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    // The committed data are exactly what the command draws.
    assert_eq!(
        std::fs::read(dir.path().join("again.csv")).unwrap(),
        std::fs::read(repo("tests/data/small.csv")).unwrap()
    );
    let truth: Value = serde_json::from_str(&std::fs::read_to_string(&truth_file).unwrap()).unwrap();
    let effect = truth["effect"].as_f64().unwrap();
    assert!((effect - 0.7).abs() < 1e-12);
    let mut args = SMALL.to_vec();
    args.extend(["--format", "json", "--quiet"]);
    let v: Value = serde_json::from_str(&run_in(&repo(""), &args).stdout).unwrap();
    for run in v["runs"].as_array().unwrap() {
        for e in run["estimates"].as_array().unwrap() {
            let ci = e["ci"].as_array().unwrap();
            let (lo, hi) = (ci[0].as_f64().unwrap(), ci[1].as_f64().unwrap());
            assert!(
                lo <= effect && effect <= hi,
                "{} under {}: ({lo}, {hi})",
                e["method"],
                run["graph"]
            );
        }
    }
}
