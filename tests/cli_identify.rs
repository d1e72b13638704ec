//! `causeway identify`: the JSON keys of the command-line contract, the exit
//! code 3 when nothing identifies the effect, --adjust, and --data.

use crate::helpers::{repo, run, write};
use serde_json::Value;

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

// The key sets are those of the `identify` JSON in the command-line contract.
#[test]
fn json_keys_match_the_contract() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "C -> X\nC -> Y\nX -> Y\n");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(
        keys(&v),
        sorted(&[
            "exposure",
            "outcome",
            "observed",
            "latent",
            "strategy",
            "backdoor",
            "frontdoor",
            "directed_path"
        ])
    );
    assert_eq!(
        keys(&v["backdoor"]),
        sorted(&[
            "identified",
            "minimal_sets",
            "optimal_set",
            "open_paths",
            "open_path_edges",
            "minimal_sets_total",
            "minimal_sets_complete",
            "open_paths_total",
            "open_paths_complete"
        ])
    );
    assert_eq!(
        keys(&v["frontdoor"]),
        sorted(&["identified", "sets", "sets_total", "sets_complete"])
    );
    assert_eq!(v["strategy"], "backdoor");
    assert_eq!(v["backdoor"]["minimal_sets"], serde_json::json!([["C"]]));
    assert_eq!(v["backdoor"]["optimal_set"], serde_json::json!(["C"]));
    assert_eq!(v["backdoor"]["open_paths"], serde_json::json!([["X", "C", "Y"]]));
    // The same path as directed edges, each as drawn: C -> X, C -> Y.
    assert_eq!(
        v["backdoor"]["open_path_edges"],
        serde_json::json!([[["C", "X"], ["C", "Y"]]])
    );

    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--format",
        "json",
        "--adjust",
        "C",
    ]);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(
        keys(&v["given_set"]),
        sorted(&[
            "set",
            "valid",
            "open_paths",
            "open_path_edges",
            "open_paths_total",
            "open_paths_complete"
        ])
    );
    assert_eq!(v["given_set"]["valid"], true);
}

// Pearl (1995): with X <-> Y and M <-> Y as well as X -> M -> Y, neither
// criterion applies; the report is printed and the exit code is 3.
#[test]
fn not_identified_exits_3_after_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "X -> M -> Y\nX <-> Y\nM <-> Y\n");
    let (r, _d) = run(&["identify", "--graph", &g, "--exposure", "X", "--outcome", "Y"]);
    assert_eq!(r.code, 3, "{}", r.stderr);
    assert!(r.stdout.contains("not identified"));
    assert!(r.stdout.contains("Caution"));
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 3);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(v["strategy"], "none");
    assert_eq!(v["backdoor"]["optimal_set"], Value::Null);
}

// An invalid --adjust set: the open backdoor path is reported (M-structure,
// common practice: adjusting for the collider alone opens the path).
#[test]
fn adjust_with_invalid_set_reports_the_open_path() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "A -> X\nA -> M\nB -> M\nB -> Y\nX -> Y\n");
    let args = [
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--adjust",
        "M",
    ];
    let (r, _d) = run(&args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(
        r.stdout.contains("does NOT meet the backdoor criterion"),
        "{}",
        r.stdout
    );
    assert!(r.stdout.contains("X <- A -> M <- B -> Y"), "{}", r.stdout);
    let mut json = args.to_vec();
    json.extend(["--format", "json"]);
    let (r, _d) = run(&json);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(v["given_set"]["valid"], false);
    assert_eq!(
        v["given_set"]["open_paths"],
        serde_json::json!([["X", "A", "M", "B", "Y"]])
    );
    // X <- A -> M <- B -> Y as edges in the graph's directions.
    assert_eq!(
        v["given_set"]["open_path_edges"],
        serde_json::json!([[["A", "X"], ["A", "M"], ["B", "M"], ["B", "Y"]]])
    );
    // A descendant of the exposure is named as such.
    let g2 = write(dir.path(), "g2.graph", "C -> X\nC -> Y\nX -> D -> Y\n");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g2,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--adjust",
        "C,D",
    ]);
    assert!(r.stdout.contains("descendants of X"), "{}", r.stdout);
}

// Graph nodes that are not CSV columns are unobserved; the header may start
// with a UTF-8 byte-order mark and may come from standard input.
#[test]
fn data_header_marks_latent() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "C -> X\nC -> Y\nX -> Y\n");
    let csv = write(dir.path(), "d.csv", "\u{feff}X,Y\n1,2\n");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--data",
        &csv,
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 3, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).expect("JSON output");
    assert_eq!(v["latent"], serde_json::json!(["C"]));
    assert_eq!(v["observed"], serde_json::json!(["X", "Y"]));
    // --latent marks a column as unobserved too; an exposure that is not a
    // column is an input error naming the flag.
    let csv2 = write(dir.path(), "d2.csv", "X,C,Y\n");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--data",
        &csv2,
        "--latent",
        "C",
    ]);
    assert_eq!(r.code, 3);
    let csv3 = write(dir.path(), "d3.csv", "C,Y\n");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        &g,
        "--exposure",
        "X",
        "--outcome",
        "Y",
        "--data",
        &csv3,
    ]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("--exposure") && r.stderr.contains("not a column"),
        "{}",
        r.stderr
    );
}

// Reading the header from standard input with `--data -`.
#[test]
fn data_from_stdin() {
    use std::io::Write;
    use std::process::{Command, Stdio};
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "C -> X\nC -> Y\nX -> Y\n");
    let mut child = Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args([
            "identify",
            "--graph",
            &g,
            "--exposure",
            "X",
            "--outcome",
            "Y",
            "--data",
            "-",
            "--format",
            "json",
        ])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("binary runs");
    child.stdin.take().unwrap().write_all(b"X,Y,C\n1,2,3\n").unwrap();
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["latent"], serde_json::json!([]));
}

// Input errors: exit 2, naming the flag.
#[test]
fn input_errors_name_the_flag() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.graph", "C -> X\nC -> Y\nX -> Y\nX <-> C\n");
    for (args, flag) in [
        (vec!["--exposure", "X", "--outcome", "X"], "same node"),
        (vec!["--exposure", "Z", "--outcome", "Y"], "--exposure"),
        (
            vec!["--exposure", "X", "--outcome", "Y", "--latent", "Q"],
            "--latent",
        ),
        (
            vec!["--exposure", "X", "--outcome", "Y", "--latent", "Y"],
            "--latent lists 'Y', the outcome",
        ),
        (
            vec!["--exposure", "X", "--outcome", "Y", "--adjust", "X"],
            "--adjust",
        ),
        (
            vec![
                "--exposure",
                "X",
                "--outcome",
                "Y",
                "--adjust",
                "C",
                "--latent",
                "C",
            ],
            "--adjust",
        ),
    ] {
        let mut full = vec!["identify", "--graph", &g];
        full.extend(args);
        let (r, _d) = run(&full);
        assert_eq!(r.code, 2, "{full:?}: {}", r.stderr);
        assert!(r.stderr.contains(flag), "{full:?}: {}", r.stderr);
    }
}

// The example graph shipped with the tool: adjustment fails (enrolled <->
// pain_days), the front-door set is standing_hours (Pearl 1995).
#[test]
fn example_graph_is_frontdoor() {
    let g = repo("examples/graphs/confounding.graph");
    let (r, _d) = run(&[
        "identify",
        "--graph",
        g.to_str().unwrap(),
        "--exposure",
        "enrolled",
        "--outcome",
        "pain_days",
        "--format",
        "json",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["strategy"], "frontdoor");
    assert_eq!(v["frontdoor"]["sets"], serde_json::json!([["standing_hours"]]));
}
