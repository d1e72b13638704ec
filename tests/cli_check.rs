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
// observed, latent, warnings, adjustment at the top; note,
// bears_on_adjustment and bearing per claim).
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
            "warnings",
            "adjustment"
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
            "partial_correlation",
            "note",
            "bears_on_adjustment",
            "bearing"
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

/// The graph that simulates the data: three covariates, each a cause of the
/// exposure x and the outcome y, caused in a chain (c1 -> c2 -> c3) so that
/// they are correlated; w causes both x and y.
const TRUE_GRAPH: &str = "c1 -> c2 (0.9)\nc2 -> c3 (0.9)\n\
c1 -> x (0.4)\nc2 -> x (0.4)\nc3 -> x (0.4)\nw -> x (0.6)\n\
c1 -> y (0.5)\nc2 -> y (0.5)\nc3 -> y (0.5)\nw -> y (0.5)\nx -> y (1)\n";

/// The declared graph leaves out the covariates' chain (common in practice:
/// covariates drawn with no edges among them) and the edge w -> x.
const DECLARED: &str = "c1 -> x\nc2 -> x\nc3 -> x\nc1 -> y\nc2 -> y\nc3 -> y\nw -> y\nx -> y\n";

fn covariate_case(extra: &[&str]) -> crate::helpers::Run {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "truth.graph", TRUE_GRAPH);
    let declared = write(dir.path(), "declared.graph", DECLARED);
    let csv = dir.path().join("sim.csv").display().to_string();
    let (r, _) = run(&[
        "simulate", "--graph", &truth, "--rows", "2000", "--seed", "11", "--output", &csv, "--quiet",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let mut args = vec!["check", "--graph", declared.as_str(), "--data", csv.as_str()];
    args.extend_from_slice(extra);
    let (r, _) = run(&args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    r
}

// Rejected claims among covariates do not bear on the adjustment set {c1,
// c2, c3, w}: linking any two of them leaves it valid and chosen. The
// rejected claim that w and x are independent involves the exposure, so it
// bears; the text leads with it.
#[test]
fn rejected_covariate_claims_do_not_bear_on_the_set() {
    let r = covariate_case(&["--exposure", "x", "--outcome", "y", "--format", "json"]);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let adj = &v["adjustment"];
    assert_eq!(adj["strategy"], "backdoor");
    assert_eq!(adj["adjustment_set"], serde_json::json!(["c1", "c2", "c3", "w"]));
    let imps = v["implications"].as_array().unwrap();
    let find = |a: &str, b: &str| {
        imps.iter()
            .find(|i| (i["a"] == a && i["b"] == b) || (i["a"] == b && i["b"] == a))
            .unwrap_or_else(|| panic!("a claim for {a} and {b}"))
    };
    for (a, b) in [("c1", "c2"), ("c2", "c3"), ("c1", "c3")] {
        let c = find(a, b);
        assert_eq!(c["rejected"], true, "{c}");
        assert_eq!(c["bears_on_adjustment"], false, "{c}");
        assert!(c["bearing"].as_str().unwrap().contains("would stay valid"), "{c}");
    }
    let c = find("w", "x");
    assert_eq!(c["rejected"], true, "{c}");
    assert_eq!(c["bears_on_adjustment"], true, "{c}");
    assert_eq!(c["bearing"], "it involves the exposure");
    assert_eq!(adj["rejected_bearing"], 1);

    let r = covariate_case(&["--exposure", "x", "--outcome", "y"]);
    let text = &r.stdout;
    let lead = text.find("REJECTED CLAIMS THAT BEAR ON THE SET").expect(text);
    let rest = text
        .find("REJECTED CLAIMS THAT LEAVE THE SET AS IT IS")
        .expect(text);
    assert!(lead < rest, "{text}");
    let first_rows: Vec<&str> = text
        .lines()
        .skip_while(|l| !l.trim_start().starts_with("independent"))
        .skip(2)
        .take(1)
        .collect();
    assert!(first_rows[0].trim_start().starts_with("w, x"), "{text}");
    assert!(
        first_rows[0].contains("REJECTED") && first_rows[0].contains("yes"),
        "{text}"
    );
    let words = text.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        words.contains(
            "estimated with the adjustment set {c1, c2, c3, w}: 1 of the 4 rejected claims bear on it."
        ),
        "{words}"
    );
}

// Without an exposure and an outcome the claims are not judged: null in
// the JSON, and the text says so.
#[test]
fn without_exposure_and_outcome_relevance_is_not_judged() {
    let r = covariate_case(&["--format", "json"]);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert!(v["adjustment"].is_null());
    for i in v["implications"].as_array().unwrap() {
        assert!(
            i["bears_on_adjustment"].is_null() && i["bearing"].is_null(),
            "{i}"
        );
    }
    let r = covariate_case(&[]);
    let words = r.stdout.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        words.contains("bears on the adjustment set cannot be judged here"),
        "{words}"
    );
    assert!(!words.contains("bears on set"), "{words}");
    // One of the pair alone is a usage error naming the other flag.
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", DECLARED);
    let (r, _) = run(&["check", "--graph", &g, "--data", "x.csv", "--exposure", "x"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("--outcome"), "{}", r.stderr);
}
