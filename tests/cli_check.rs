//! `causeway check`: the JSON keys of the command-line contract (and the
//! additions), a rejection marked in the text, the other formats, missing
//! values reported, standard input, and bad input with exit code 2 naming the
//! flag or file.

use crate::helpers::{data, run, write};
use serde_json::Value;
use std::io::Write;
use std::process::{Command, Stdio};

fn keys(v: &Value) -> Vec<String> {
    let mut k: Vec<String> = v.as_object().expect("an object").keys().cloned().collect();
    k.sort();
    k
}

fn sorted(list: &[&str]) -> Vec<String> {
    let mut k: Vec<String> = list.iter().map(|s| s.to_string()).collect();
    k.sort();
    k
}

/// A graph over tests/data/ci_tests.csv that leaves out z1 -> y (in the data
/// y depends on z1 by 0.4, so "z1 independent of y given x" is false), and
/// names a node that is not a column (u, latent) linking bin1 and bin2.
const GRAPH: &str = "z1 -> x -> y\nz2 -> x\nu -> bin1\nu -> bin2\nz1 -> bin1\n";

fn check(args: &[&str]) -> (crate::helpers::Run, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", GRAPH);
    let d = data("ci_tests.csv").display().to_string();
    let mut all = vec!["check", "--graph", g.as_str(), "--data", d.as_str()];
    all.extend_from_slice(args);
    let (r, _) = run(&all);
    (r, dir)
}

// The key sets are those of the `check` JSON in the command-line contract,
// plus the additions this command makes (n, df, df_denominator, response,
// partial_correlation per claim; not_tested, rows, missing_by_column,
// observed, latent, warnings at the top).
#[test]
fn json_keys_match_the_contract() {
    let (r, _d) = check(&["--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(
        keys(&v),
        sorted(&[
            "alpha",
            "correction",
            "tested",
            "rejected",
            "implications",
            "untestable",
            "not_tested",
            "rows",
            "missing_by_column",
            "observed",
            "latent",
            "warnings"
        ])
    );
    assert_eq!(v["alpha"], 0.05);
    assert_eq!(v["correction"], "holm");
    let imps = v["implications"].as_array().unwrap();
    assert_eq!(v["tested"].as_u64().unwrap() as usize, imps.len());
    assert_eq!(
        keys(&imps[0]),
        sorted(&[
            "a",
            "b",
            "given",
            "test",
            "statistic",
            "p_value",
            "p_adjusted",
            "rejected",
            "n",
            "df",
            "df_denominator",
            "response",
            "partial_correlation"
        ])
    );
    let rejected = imps.iter().filter(|i| i["rejected"] == true).count();
    assert_eq!(v["rejected"].as_u64().unwrap() as usize, rejected);
    // The broken claim is there and rejected.
    let broken = imps
        .iter()
        .find(|i| i["a"] == "z1" && i["b"] == "y")
        .expect("z1 and y are a claim");
    assert_eq!(broken["given"], serde_json::json!(["x"]));
    assert_eq!(broken["rejected"], true);
    // u is not a column, so bin1 and bin2 share an unobserved cause.
    let u = v["untestable"].as_array().unwrap();
    assert_eq!(u.len(), 1, "{u:?}");
    let mut pair = [u[0]["a"].as_str().unwrap(), u[0]["b"].as_str().unwrap()];
    pair.sort();
    assert_eq!(pair, ["bin1", "bin2"]);
    assert_eq!(v["latent"], serde_json::json!(["u"]));
    // y misses 15 rows and z2 6 (the data file's README); tests that use
    // them say so through n.
    assert_eq!(v["rows"], 400);
    assert_eq!(v["missing_by_column"]["y"], 15);
    assert!(imps.iter().any(|i| i["n"].as_u64().unwrap() < 400));
}

#[test]
fn text_marks_the_rejection_and_gives_a_verdict() {
    let (r, _d) = check(&[]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let line = r
        .stdout
        .lines()
        .find(|l| l.trim_start().starts_with("z1, y"))
        .expect("a row for z1 and y");
    assert!(line.contains("REJECTED"), "{line}");
    let words = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        words.contains("testable claims at alpha 0.05 after Holm adjustment"),
        "{words}"
    );
    assert!(
        words.contains("bin1 and bin2: no set of observed variables separates them")
            || words.contains("bin2 and bin1: no set of observed variables separates them"),
        "{words}"
    );
    assert!(words.contains("Missing values:"));
    assert!(r.stdout.contains("CAUTION"));
    let (r, _d) = check(&["--correction", "bh", "--alpha", "0.01"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let words = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        words.contains("at alpha 0.01 after Benjamini-Hochberg adjustment"),
        "{words}"
    );
}

#[test]
fn other_formats_render() {
    let (md, _d) = check(&["--format", "markdown"]);
    assert_eq!(md.code, 0, "{}", md.stderr);
    assert!(
        md.stdout.contains("| z1, y | Fisher z |") && md.stdout.contains("REJECTED"),
        "{}",
        md.stdout
    );
    let (csv, _d) = check(&["--format", "csv"]);
    assert_eq!(csv.code, 0);
    assert!(
        csv.stdout
            .contains("independent,test,n,statistic,p,adjusted p,verdict,given")
    );
    let (tex, _d) = check(&["--format", "latex"]);
    assert_eq!(tex.code, 0);
    assert!(tex.stdout.contains("\\begin{document}") || tex.stdout.contains("tabular"));
}

#[test]
fn data_from_standard_input() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", GRAPH);
    let mut child = Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(["check", "--graph", &g, "--data", "-", "--format", "json"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let bytes = std::fs::read(data("ci_tests.csv")).unwrap();
    child.stdin.take().unwrap().write_all(&bytes).unwrap();
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["tested"].as_u64().unwrap() > 5);
}

#[test]
fn bad_input_exits_2_naming_the_flag_or_file() {
    let cases: [(&[&str], &str); 5] = [
        (&["--alpha", "1.5"], "--alpha"),
        (&["--latent", "nope"], "--latent 'nope'"),
        (&["--categorical", "nope"], "--categorical 'nope'"),
        (&["--correction", "bonferroni"], "--correction"),
        (&["--format", "yaml"], "--format"),
    ];
    for (args, want) in cases {
        let (r, _d) = check(args);
        assert_eq!(r.code, 2, "{args:?}: {}", r.stderr);
        assert!(r.stderr.contains(want), "{args:?}: {}", r.stderr);
    }
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", GRAPH);
    let (r, _) = run(&["check", "--graph", &g, "--data", "no-such.csv"]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("no-such.csv"), "{}", r.stderr);
    let bad = write(dir.path(), "bad.graph", "a -> -> b\n");
    let d = data("ci_tests.csv").display().to_string();
    let (r, _) = run(&["check", "--graph", &bad, "--data", &d]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("bad.graph:1:"), "{}", r.stderr);
}

// --latent hides a column: x becomes unobserved, so z1 and y (linked only
// through x) can no longer be separated by an observed set.
#[test]
fn latent_flag_hides_a_column() {
    let (r, _d) = check(&["--latent", "x", "--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let untestable = v["untestable"].as_array().unwrap();
    assert!(
        untestable.iter().any(|p| p["a"] == "z1" && p["b"] == "y"),
        "{untestable:?}"
    );
    assert!(v["latent"].as_array().unwrap().iter().any(|n| n == "x"));
}
