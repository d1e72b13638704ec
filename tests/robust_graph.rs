//! Robustness against bad graph files and roles, through `identify` and
//! `estimate` (the parser's own messages are checked in graph_parse.rs):
//! exit code 2 with file:line:column where there is one, exit code 3 with
//! the reason when the effect is not identified, never a panic.

use crate::helpers::{repo, write};
use crate::robust_data::{CONFOUNDED, cw, expect};

fn identify(graph: &[u8], extra: &[&str]) -> crate::helpers::Run {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("g.graph"), graph).unwrap();
    let mut args = vec!["identify", "--graph", "g.graph"];
    args.extend_from_slice(extra);
    cw(dir.path(), &args)
}

fn estimate(graph: &[u8], csv: &str, extra: &[&str]) -> crate::helpers::Run {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("g.graph"), graph).unwrap();
    write(dir.path(), "d.csv", csv);
    let mut args = vec!["estimate", "--graph", "g.graph", "--data", "d.csv"];
    args.extend_from_slice(extra);
    cw(dir.path(), &args)
}

const XY: [&str; 4] = ["--exposure", "x", "--outcome", "y"];

const DATA: &str = "z,x,y\n0.1,0,1.0\n-0.5,1,2.5\n1.2,0,0.7\n0.3,1,3.1\n-1.0,1,2.2\n0.4,0,1.1\n";

#[test]
fn binary_junk_is_not_a_graph() {
    // Valid text up to line 2, column 5, then bytes that are not UTF-8.
    let mut junk = b"a -> b\nc -> ".to_vec();
    junk.extend_from_slice(&[0xff, 0xfe, 0x00, 0x9f, 0x92, 0x96, 0xc3]);
    for r in [identify(&junk, &XY), estimate(&junk, DATA, &XY)] {
        expect(&r, 2, &["g.graph:2:6:", "not text (invalid UTF-8)"]);
        assert!(r.stdout.is_empty());
    }
    // Valid UTF-8 that holds control characters.
    let r = identify(b"z -> x\n\x01\x02 -> y\n", &XY);
    expect(&r, 2, &["g.graph:2:1:", "control character U+0001"]);
}

#[test]
fn a_one_megabyte_line() {
    let name = "n".repeat(1_000_000);
    // A bad token after a 1 MB name: the place is found, and the message
    // shows the name cut short instead of a megabyte of it.
    let text = format!("{CONFOUNDED}{name} => y\n");
    let r = identify(text.as_bytes(), &XY);
    expect(
        &r,
        2,
        &["g.graph:4:1000002:", "unexpected '='", "(1000000 characters)"],
    );
    assert!(r.stderr.len() < 1000, "message of {} bytes", r.stderr.len());
    // A valid 1 MB name parses and takes part in the analysis.
    let text = format!("{CONFOUNDED}{name} -> x\n");
    let r = identify(text.as_bytes(), &XY);
    assert_eq!(r.code, 0, "{}", r.stderr);
}

#[test]
fn exposure_or_outcome_not_in_the_graph() {
    let r = identify(CONFOUNDED.as_bytes(), &["--exposure", "q", "--outcome", "y"]);
    expect(&r, 2, &["--exposure 'q' is not a node of the graph"]);
    let r = estimate(
        CONFOUNDED.as_bytes(),
        DATA,
        &["--exposure", "x", "--outcome", "Y"],
    );
    expect(
        &r,
        2,
        &["--outcome 'Y' is not a node of the graph", "case-sensitive"],
    );
}

#[test]
fn unobserved_exposure_or_outcome() {
    // Not a column of the data.
    let r = estimate(CONFOUNDED.as_bytes(), "z,y\n1,2\n3,4\n", &XY);
    expect(
        &r,
        2,
        &["--exposure 'x' is unobserved", "it is not a column of d.csv"],
    );
    // Marked unobserved by --latent.
    let mut args = XY.to_vec();
    args.extend_from_slice(&["--latent", "y"]);
    let r = identify(CONFOUNDED.as_bytes(), &args);
    expect(
        &r,
        2,
        &["--latent lists 'y', the outcome; the outcome must be observed"],
    );
    // Marked latent in the graph file.
    let text = format!("{CONFOUNDED}y : latent\n");
    let r = estimate(text.as_bytes(), DATA, &XY);
    expect(&r, 2, &["--outcome 'y' is unobserved"]);
}

#[test]
fn exposure_and_outcome_the_same_node() {
    let r = identify(CONFOUNDED.as_bytes(), &["--exposure", "x", "--outcome", "x"]);
    expect(&r, 2, &["--outcome is the same node 'x' as the exposure"]);
    let r = estimate(
        CONFOUNDED.as_bytes(),
        DATA,
        &["--exposure", "y", "--outcome", "y"],
    );
    expect(&r, 2, &["the same node 'y'"]);
}

#[test]
fn graph_file_missing_or_a_folder() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "d.csv", DATA);
    let mut args = vec!["estimate", "--graph", "none.graph", "--data", "d.csv"];
    args.extend_from_slice(&XY);
    expect(&cw(dir.path(), &args), 2, &["none.graph"]);
    args[2] = ".";
    expect(&cw(dir.path(), &args), 2, &["."]);
}

#[test]
fn parse_error_through_estimate_names_the_place() {
    let r = estimate(b"z -> x\nz -> y\nx -> y -> \n", DATA, &XY);
    expect(&r, 2, &["g.graph:3:8:", "dangling arrow"]);
    assert!(r.stdout.is_empty());
}

/// demo-data/motivation-moves-standing.graph: an unmeasured motivation acts
/// on enrolment, standing time and pain, so neither criterion holds.
#[test]
fn not_identified_exits_3_with_the_reason() {
    let dir = repo("");
    let args = [
        "estimate",
        "--graph",
        "demo-data/motivation-moves-standing.graph",
        "--data",
        "demo-data/study.csv",
        "--exposure",
        "enrolled",
        "--outcome",
        "pain_days",
        "--categorical",
        "role",
    ];
    let r = cw(&dir, &args);
    expect(
        &r,
        3,
        &[
            "not identified",
            "the effect of enrolled on pain_days is not identified under this graph",
            "backdoor criterion",
            "front-door",
        ],
    );
    assert!(r.stdout.is_empty(), "no estimate: {}", r.stdout);
    let mut id = vec!["identify"];
    id.extend_from_slice(&args[1..9]);
    id.extend_from_slice(&["--format", "json"]);
    let r = cw(&dir, &id);
    assert_eq!(r.code, 3, "{}", r.stderr);
    let v: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["strategy"], "none");
    assert_eq!(v["latent"], serde_json::json!(["motivation"]));
}
