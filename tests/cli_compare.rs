//! `causeway compare` and `causeway demo` through the binary: snapshots of
//! every format for a fixed small case, the bundle, and the demo study's
//! construction (the backdoor estimate under `main` is biased by the
//! unmeasured motivation; the front-door interval covers the truth).

use crate::helpers::{repo, run_in};
use serde_json::Value;
use std::path::Path;

/// Balanced braces, balanced environments and booktabs rules; used for
/// both the `--format latex` article and the bundle's fragment.
pub fn assert_tex_balanced(tex: &str) {
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
    for env in ["document", "table", "tabular", "itemize", "flushleft"] {
        assert_eq!(
            tex.matches(&format!("\\begin{{{env}}}")).count(),
            tex.matches(&format!("\\end{{{env}}}")).count(),
            "unbalanced {env}"
        );
    }
    let tables = tex.matches("\\begin{tabular}").count();
    assert!(tables > 0, "no table");
    for rule in ["\\toprule", "\\midrule", "\\bottomrule"] {
        assert_eq!(tex.matches(rule).count(), tables, "one {rule} per table");
    }
}

/// The bundle's table.tex is a fragment for `\input` (no preamble, no
/// document environment) and table-standalone.tex inputs it. The wrapper
/// is compiled with pdflatex when one is installed; with
/// CAUSEWAY_REQUIRE_TEX=1 (set by .ci/run) a missing pdflatex fails the test.
pub fn assert_tex_bundle(dir: &Path) {
    let fragment = std::fs::read_to_string(dir.join("table.tex")).unwrap();
    assert_tex_balanced(&fragment);
    let code: String = fragment
        .lines()
        .filter(|l| !l.starts_with('%'))
        .collect::<Vec<_>>()
        .join("\n");
    for preamble in [
        "\\documentclass",
        "\\begin{document}",
        "\\usepackage",
        "\\end{document}",
    ] {
        assert!(!code.contains(preamble), "table.tex has {preamble}");
    }
    let wrapper = std::fs::read_to_string(dir.join("table-standalone.tex")).unwrap();
    assert!(wrapper.contains("\\documentclass{article}") && wrapper.contains("\\usepackage{booktabs}"));
    assert!(wrapper.contains("\\input{table}"));
    let required = std::env::var("CAUSEWAY_REQUIRE_TEX").is_ok_and(|v| v == "1");
    let found = std::process::Command::new("pdflatex")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if !found {
        assert!(!required, "CAUSEWAY_REQUIRE_TEX=1 but pdflatex is not installed");
        eprintln!("note: pdflatex not installed; table.tex checked for structure only");
        return;
    }
    let out = std::process::Command::new("pdflatex")
        .args([
            "-interaction=nonstopmode",
            "-halt-on-error",
            "table-standalone.tex",
        ])
        .current_dir(dir)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "pdflatex failed: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    assert!(dir.join("table-standalone.pdf").is_file());
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
        if format == "csv" {
            // A data table only: the stamp is in the JSON and the bundle.
            assert!(!r.stdout.lines().any(|l| l.starts_with('#')), "{}", r.stdout);
            continue;
        }
        if format == "latex" {
            assert_tex_balanced(&r.stdout);
        }
        // Every other format carries the stamp.
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
        "table-standalone.tex",
        "estimates.csv",
        "figures/small-a-graph.svg",
        "figures/small-b-graph.svg",
    ] {
        assert!(out.join(f).is_file(), "missing {f}");
    }
    for entry in std::fs::read_dir(out.join("figures")).unwrap() {
        let svg = std::fs::read_to_string(entry.unwrap().path()).unwrap();
        roxmltree::Document::parse(&svg).expect("SVG parses as XML");
    }
    assert_tex_bundle(&out);
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

/// Parses CSV text with the `csv` crate's default reader (header row,
/// comma-separated), as a notebook would; returns the header and rows.
fn read_csv(text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let header = r.headers().unwrap().iter().map(String::from).collect();
    let rows = r
        .records()
        .map(|rec| rec.unwrap().iter().map(String::from).collect())
        .collect();
    (header, rows)
}

/// Every cell of the named columns is empty or parses as f64.
fn assert_numeric(header: &[String], rows: &[Vec<String>], columns: &[&str]) {
    for c in columns {
        let i = header
            .iter()
            .position(|h| h == c)
            .unwrap_or_else(|| panic!("no column {c}"));
        for r in rows {
            assert!(
                r[i].is_empty() || r[i].parse::<f64>().is_ok(),
                "{c}: '{}' is not a number",
                r[i]
            );
        }
    }
}

#[test]
fn csv_is_one_tidy_table_with_numeric_columns() {
    let mut args = SMALL.to_vec();
    args.extend(["--format", "csv", "--quiet"]);
    let r = run_in(&repo(""), &args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(!r.stdout.contains('%'), "no percent signs");
    assert!(!r.stdout.contains(" to "), "no intervals as text");
    let (header, rows) = read_csv(&r.stdout);
    for c in [
        "graph",
        "method",
        "estimand",
        "scale",
        "ci_method",
        "estimate",
        "std_error",
    ] {
        assert!(header.iter().any(|h| h == c), "no column {c}");
    }
    assert_numeric(
        &header,
        &rows,
        &[
            "estimate",
            "std_error",
            "ci_lower",
            "ci_upper",
            "level",
            "analytic_ci_lower",
            "analytic_ci_upper",
            "evalue_point",
            "evalue_ci_limit",
            "rows_used",
        ],
    );
    // One row per estimate, with the JSON's numbers in full precision.
    args.pop();
    args.pop();
    args.pop();
    args.extend(["--format", "json", "--quiet"]);
    let v: Value = serde_json::from_str(&run_in(&repo(""), &args).stdout).unwrap();
    let json_rows: Vec<&Value> = v["runs"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|run| run["estimates"].as_array().unwrap())
        .collect();
    assert_eq!(rows.len(), json_rows.len());
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    for (row, e) in rows.iter().zip(json_rows) {
        assert_eq!(row[col("method")], e["method"].as_str().unwrap());
        assert_eq!(
            row[col("estimate")].parse::<f64>().unwrap(),
            e["estimate"].as_f64().unwrap()
        );
        assert_eq!(
            row[col("ci_lower")].parse::<f64>().unwrap(),
            e["ci"][0].as_f64().unwrap()
        );
        assert_eq!(row[col("level")], "0.95");
    }
    // The E-value sits on the row of the estimate it describes, only there.
    let with_evalue = rows.iter().filter(|r| !r[col("evalue_point")].is_empty()).count();
    assert_eq!(with_evalue, 2);
}

// The demo bundle, with the bootstrap: every CSV file loads, numeric
// columns are numbers, and the interval columns keep both kinds.
#[test]
fn bundle_csv_files_are_tidy_and_the_report_has_one_section_per_graph() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("demo");
    let r = run_in(
        dir.path(),
        &[
            "demo",
            "--bootstrap",
            "30",
            "--quiet",
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let numeric: [(&str, &[&str]); 5] = [
        (
            "estimates.csv",
            &[
                "estimate",
                "std_error",
                "ci_lower",
                "ci_upper",
                "bootstrap_ci_lower",
                "bootstrap_replicates",
            ],
        ),
        (
            "diagnostics.csv",
            &["propensity_min", "weight_max", "ess_exposed"],
        ),
        ("balance.csv", &["smd_before", "smd_after"]),
        ("sensitivity.csv", &["evalue_point", "alpha", "robustness_value"]),
        (
            "benchmarks.csv",
            &["multiple", "r2_exposure", "adjusted_ci_upper"],
        ),
    ];
    for (file, cols) in numeric {
        let text = std::fs::read_to_string(out.join(file)).unwrap_or_else(|_| panic!("no {file}"));
        assert!(!text.starts_with('#'), "{file}");
        let (header, rows) = read_csv(&text);
        assert!(!rows.is_empty(), "{file} has no rows");
        assert_eq!(header[0], "graph", "{file}");
        assert_numeric(&header, &rows, cols);
    }
    let (header, rows) = read_csv(&std::fs::read_to_string(out.join("estimates.csv")).unwrap());
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    // Three graphs: the one not identified keeps a row, with the reason.
    let stopped = rows
        .iter()
        .find(|r| r[col("graph")] == "motivation-moves-standing")
        .unwrap();
    assert_eq!(stopped[col("strategy")], "none");
    assert!(stopped[col("estimate")].is_empty());
    assert!(stopped[col("note")].contains("not identified"));
    let main = rows.iter().find(|r| r[col("method")] == "regression").unwrap();
    assert_eq!(main[col("ci_method")], "bootstrap-percentile");
    assert_eq!(main[col("ci_lower")], main[col("bootstrap_ci_lower")]);
    assert_ne!(main[col("ci_lower")], main[col("analytic_ci_lower")]);

    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    assert_heading_hierarchy(&md, &["main", "hidden-motivation", "motivation-moves-standing"]);
    // Figures are named after the graph.
    for f in [
        "main-graph.svg",
        "main-balance.svg",
        "main-sensitivity.svg",
        "hidden-motivation-graph.svg",
    ] {
        assert!(md.contains(&format!("(figures/{f})")), "report.md lacks {f}");
        assert!(out.join("figures").join(f).is_file(), "no {f}");
    }
    // Each interval is labelled and its method cited.
    assert!(md.contains("95% interval (analytic)"));
    assert!(md.contains("95% interval (bootstrap percentile)"));
    assert!(md.contains("Stefanski & Boos 2002"));
    assert!(md.contains(
        "percentile intervals from 30 replicates refitting every model are reported (Efron & Tibshirani 1993)"
    ));
    assert!(!md.contains("interval from |") && !md.contains("tipping-point"));
    assert_tex_bundle(&out);
}

/// One `#` title; every graph has a `##` section; `###` appear only inside
/// a `##` section; no heading without text under it; no paragraph twice.
fn assert_heading_hierarchy(md: &str, graphs: &[&str]) {
    let lines: Vec<&str> = md.lines().collect();
    assert_eq!(
        lines.iter().filter(|l| l.starts_with("# ")).count(),
        1,
        "one title"
    );
    assert!(lines[0].starts_with("# "));
    for g in graphs {
        let h = format!("## Graph {g}");
        assert_eq!(lines.iter().filter(|l| **l == h).count(), 1, "{h}");
    }
    let mut level = 1;
    let mut last_heading: Option<&str> = None;
    for l in &lines {
        let hashes = l.chars().take_while(|c| *c == '#').count();
        if hashes > 0 && l.chars().nth(hashes) == Some(' ') {
            assert!(hashes <= level + 1, "heading level jumps at '{l}'");
            if let Some(prev) = last_heading {
                let prev_level = prev.chars().take_while(|c| *c == '#').count();
                assert!(hashes > prev_level, "'{prev}' has nothing under it");
            }
            level = hashes;
            last_heading = Some(l);
        } else if !l.trim().is_empty() {
            last_heading = None;
        }
    }
    let mut seen = std::collections::HashSet::new();
    for para in md.split("\n\n").map(str::trim) {
        let text = !para.is_empty() && !para.starts_with(['#', '|', '!', '*', '<', '-']);
        if text {
            assert!(seen.insert(para), "said twice: {para}");
        }
    }
    for once in [
        "These numbers say how strong confounding",
        "Analytic intervals use the sandwich",
        "The E-value is given for the first method",
    ] {
        assert!(md.matches(once).count() <= 1, "'{once}' repeated");
    }
}

#[test]
fn compare_report_has_a_section_per_graph() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("b");
    let mut args = SMALL.to_vec();
    args.extend(["--quiet", "--out", out.to_str().unwrap()]);
    assert_eq!(run_in(&repo(""), &args).code, 0);
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    assert_heading_hierarchy(&md, &["tests/data/small-a.graph", "tests/data/small-b.graph"]);
    assert!(md.contains("### Estimates") && !md.contains("## Estimates (tests/"));
}

// A setting derived as 1 - level is written as typed: alpha 0.05, not
// 0.050000000000000044.
#[test]
fn json_settings_have_no_float_noise() {
    let mut args = SMALL.to_vec();
    args.extend(["--format", "json", "--quiet"]);
    let text = run_in(&repo(""), &args).stdout;
    assert!(!text.contains("0.050000000000000044"), "float noise in the JSON");
    let v: Value = serde_json::from_str(&text).unwrap();
    let rv = &v["runs"][0]["sensitivity"]["robustness_value"];
    assert_eq!(rv["alpha"].to_string(), "0.05");
    assert_eq!(v["runs"][0]["estimates"][0]["level"].to_string(), "0.95");
    let mut args = SMALL.to_vec();
    args.extend(["--format", "json", "--quiet", "--level", "0.9"]);
    let v: Value = serde_json::from_str(&run_in(&repo(""), &args).stdout).unwrap();
    assert_eq!(
        v["runs"][0]["sensitivity"]["robustness_value"]["alpha"].to_string(),
        "0.1"
    );
}

// A binary outcome (NHEFS death, qsmk): the risk difference is shown in
// percentage points in the text and kept as a proportion in the JSON; the
// odds scale is labelled "odds ratio".
#[test]
fn binary_outcome_text_uses_percentage_points_and_odds_ratio() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("g.graph"),
        "sex -> qsmk\nsex -> death\nage -> qsmk\nage -> death\nqsmk -> death\n",
    )
    .unwrap();
    let nhefs = repo("tests/data/nhefs.csv");
    let base = |scale: &str, format: &str| {
        let args = [
            "estimate",
            "--graph",
            "g.graph",
            "--data",
            nhefs.to_str().unwrap(),
            "--exposure",
            "qsmk",
            "--outcome",
            "death",
            "--method",
            "regression",
            "--scale",
            scale,
            "--format",
            format,
            "--quiet",
        ];
        let r = run_in(dir.path(), &args);
        assert_eq!(r.code, 0, "{}", r.stderr);
        r.stdout
    };
    let text = base("difference", "text");
    assert!(text.contains("risk difference (percentage points)"), "{text}");
    assert!(
        text.contains("Risk differences are in percentage points"),
        "{text}"
    );
    let v: Value = serde_json::from_str(&base("difference", "json")).unwrap();
    let e = &v["estimates"][0];
    assert_eq!(e["scale"], "difference");
    let pp = 100.0 * e["estimate"].as_f64().unwrap();
    assert!(
        text.contains(&causeway::report::estimate_doc::num(pp)),
        "{pp} not shown in percentage points: {text}"
    );
    let text = base("odds", "text");
    assert!(text.contains("odds ratio"), "{text}");
    let v: Value = serde_json::from_str(&base("odds", "json")).unwrap();
    assert_eq!(
        v["estimates"][0]["scale"], "odds",
        "the JSON value stays as the contract says"
    );
    let table_scale: Vec<&str> = text
        .lines()
        .filter(|l| l.contains("regression (standardization)"))
        .collect();
    assert!(table_scale.iter().all(|l| l.contains("odds ratio")), "{text}");
}
