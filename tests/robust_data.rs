//! Robustness of `causeway estimate` against bad data files and numerical
//! trouble: each class of problem gives exit code 2 with the reason (file,
//! line, column and value where there is one), exit code 1 for a numerical
//! failure that makes every estimate meaningless, or a result with a warning
//! in both the text report and the JSON `warnings`. No run may panic (exit
//! 101). The rules are causeway's own (common practice, no source) unless a
//! source is named.

use crate::estimate_sim::{normal, rng};
use crate::helpers::{Run, run_in, write};
use rand::RngExt;
use serde_json::Value;
use std::path::Path;

/// Runs the binary in `dir` and checks that it did not panic: never exit
/// 101, never the internal-error message of a caught panic.
pub fn cw(dir: &Path, args: &[&str]) -> Run {
    let r = run_in(dir, args);
    assert_ne!(r.code, 101, "panic for {args:?}: {}", r.stderr);
    assert!(
        !r.stderr.contains("internal error") && !r.stderr.contains("panicked"),
        "panic for {args:?}: {}",
        r.stderr
    );
    r
}

/// Asserts exit code `code` and that stderr holds every one of `words`.
pub fn expect(r: &Run, code: i32, words: &[&str]) {
    assert_eq!(r.code, code, "stderr: {}\nstdout: {}", r.stderr, r.stdout);
    for w in words {
        assert!(r.stderr.contains(w), "stderr lacks {w:?}: {}", r.stderr);
    }
}

/// The graph z -> x, z -> y, x -> y: z confounds exposure x and outcome y.
pub const CONFOUNDED: &str = "z -> x\nz -> y\nx -> y\n";

/// CSV text with header `z,x,y` from rows.
pub fn csv(rows: &[(f64, f64, f64)]) -> String {
    let mut s = String::from("z,x,y\n");
    for (z, x, y) in rows {
        s.push_str(&format!("{z},{x},{y}\n"));
    }
    s
}

/// `n` rows: z standard normal, x = 1 with probability expit(slope z),
/// y = 1 + x + z + noise (seeded, so every run sees the same data).
pub fn rows(n: usize, slope: f64, seed: u64) -> Vec<(f64, f64, f64)> {
    let mut r = rng(seed);
    (0..n)
        .map(|_| {
            let z = normal(&mut r);
            let x = f64::from(u8::from(r.random::<f64>() < 1.0 / (1.0 + (-slope * z).exp())));
            (z, x, 1.0 + x + z + normal(&mut r))
        })
        .collect()
}

/// A temp folder holding the confounded graph as `g.graph` and `text` as `d.csv`.
fn setup(text: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "g.graph", CONFOUNDED);
    write(dir.path(), "d.csv", text);
    dir
}

const BASE: [&str; 8] = [
    "estimate",
    "--graph",
    "g.graph",
    "--data",
    "d.csv",
    "--exposure",
    "x",
    "--outcome",
];

/// `causeway estimate` on `text` with the confounded graph and `extra` flags.
fn estimate(text: &str, extra: &[&str]) -> Run {
    let dir = setup(text);
    let mut args: Vec<&str> = BASE.to_vec();
    args.push("y");
    args.extend_from_slice(extra);
    cw(dir.path(), &args)
}

/// The JSON of a successful run, and its text report from a second run.
fn json_and_text(text: &str, extra: &[&str]) -> (Value, String) {
    let mut j = extra.to_vec();
    j.extend_from_slice(&["--format", "json", "--quiet"]);
    let r = estimate(text, &j);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).expect("valid JSON");
    let t = estimate(text, extra);
    assert_eq!(t.code, 0, "{}", t.stderr);
    (v, t.stdout)
}

/// The JSON `warnings` as strings.
fn warnings(v: &Value) -> Vec<String> {
    v["warnings"]
        .as_array()
        .expect("a warnings list")
        .iter()
        .map(|w| w.as_str().unwrap().to_string())
        .collect()
}

/// A warning holding `words` is in the JSON list and in the text report.
/// The text report wraps lines, so it is compared with whitespace collapsed.
fn warned(v: &Value, text: &str, words: &str) {
    assert!(
        warnings(v).iter().any(|w| w.contains(words)),
        "no JSON warning with {words:?}: {:?}",
        warnings(v)
    );
    let flat = text.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(flat.contains("WARNINGS"), "{text}");
    assert!(flat.contains(words), "text lacks {words:?}:\n{text}");
}

fn methods(v: &Value) -> Vec<String> {
    v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["method"].as_str().unwrap().to_string())
        .collect()
}

// ---------------------------------------------------------------- data files

#[test]
fn missing_data_file() {
    let dir = setup("");
    let mut args: Vec<&str> = BASE.to_vec();
    args[4] = "nope.csv";
    args.push("y");
    let r = cw(dir.path(), &args);
    expect(&r, 2, &["--data nope.csv", "no such file"]);
    assert!(r.stdout.is_empty());
}

#[test]
fn empty_data_file() {
    expect(&estimate("", &[]), 2, &["d.csv", "empty"]);
}

#[test]
fn header_only() {
    expect(
        &estimate("z,x,y\n", &[]),
        2,
        &["d.csv:2:", "header but no data rows"],
    );
}

#[test]
fn ragged_rows_name_line_and_column() {
    let mut text = csv(&rows(20, 1.0, 1));
    text.push_str("0.5,1\n");
    expect(
        &estimate(&text, &[]),
        2,
        &["d.csv:22:3:", "this row has 2 fields but the header has 3"],
    );
    // The same with CRLF line ends and a blank line: the line is still
    // counted right (the CSV reader's own count is one short after CRLF).
    let crlf = text.replacen('\n', "\n\n", 1).replace('\n', "\r\n");
    expect(
        &estimate(&crlf, &[]),
        2,
        &["d.csv:23:3:", "this row has 2 fields but the header has 3"],
    );
}

#[test]
fn duplicate_headers() {
    expect(
        &estimate("z,x,y,x\n1,0,2,1\n", &[]),
        2,
        &["d.csv:1:4:", "duplicate column name 'x' (also column 2)"],
    );
}

#[test]
fn text_where_a_number_is_needed_names_line_column_and_value() {
    let mut rs: Vec<String> = csv(&rows(30, 1.0, 2)).lines().map(String::from).collect();
    // Line 6 of the file (data row 5): the outcome, column 3, holds text.
    let cells: Vec<&str> = rs[5].split(',').collect();
    rs[5] = format!("{},{},heavy", cells[0], cells[1]);
    let text = rs.join("\n") + "\n";
    expect(
        &estimate(&text, &[]),
        2,
        &["d.csv:6:3:", "column 'y'", "except in 1 cell", "line 6 'heavy'"],
    );
}

#[test]
fn exposure_with_more_than_two_values_and_ipw() {
    let three: Vec<(f64, f64, f64)> = rows(60, 1.0, 3)
        .into_iter()
        .enumerate()
        .map(|(i, (z, _, y))| (z, (i % 3) as f64, y))
        .collect();
    let text = csv(&three);
    // With the weighting method asked for, a continuous exposure gets the
    // weighted dose-response curve (no one-unit shift row).
    let (v, _) = json_and_text(&text, &["--method", "ipw"]);
    assert!(v["estimates"].as_array().unwrap().is_empty(), "{v}");
    assert_eq!(v["curves"][0]["method"], "ipw");
    // Without --method: regression's shift effect and both curves, with a
    // warning that says the exposure is taken as a dose.
    let (v, t) = json_and_text(&text, &[]);
    assert_eq!(methods(&v), ["regression"]);
    assert_eq!(v["curves"].as_array().unwrap().len(), 2);
    warned(
        &v,
        &t,
        "the exposure 'x' takes 3 values (0, 1, 2): it is treated as continuous (a dose)",
    );
}

#[test]
fn every_row_exposed_or_none() {
    for x in [1.0, 0.0] {
        let all: Vec<(f64, f64, f64)> = rows(40, 1.0, 4).into_iter().map(|(z, _, y)| (z, x, y)).collect();
        expect(
            &estimate(&csv(&all), &[]),
            2,
            &["the exposure 'x' takes a single value in the complete rows"],
        );
    }
}

#[test]
fn outcome_missing_everywhere() {
    let mut text = String::from("z,x,y\n");
    for (z, x, _) in rows(30, 1.0, 5) {
        text.push_str(&format!("{z},{x},NA\n"));
    }
    expect(
        &estimate(&text, &[]),
        2,
        &[
            "no row is complete",
            "missing (empty, NA, NaN or .) in every row: 'y'",
        ],
    );
}

#[test]
fn infinite_values_name_the_cell() {
    let mut rs: Vec<String> = csv(&rows(30, 1.0, 6)).lines().map(String::from).collect();
    let cells: Vec<&str> = rs[9].split(',').collect();
    rs[9] = format!("-inf,{},{}", cells[1], cells[2]);
    let text = rs.join("\n") + "\n";
    expect(
        &estimate(&text, &[]),
        2,
        &["d.csv:10:1:", "column 'z' holds the infinite value '-inf'"],
    );
}

#[test]
fn accepted_variants_load_bom_crlf_quotes_missing_tokens() {
    let mut text = String::from("\u{feff}\"z\",x,\"y\"\r\n");
    for (i, (z, x, y)) in rows(80, 1.0, 7).into_iter().enumerate() {
        let y = if i % 10 == 0 {
            "NA".to_string()
        } else {
            format!("\"{y}\"")
        };
        text.push_str(&format!("{z},{x},{y}\r\n"));
    }
    let (v, _) = json_and_text(&text, &["--method", "regression"]);
    assert_eq!(v["sample"]["rows"], 80);
    assert_eq!(v["sample"]["used"], 72);
    assert_eq!(v["sample"]["dropped_by_column"]["y"], 8);
}

#[test]
fn data_on_standard_input_that_is_empty() {
    use std::io::Write;
    use std::process::{Command, Stdio};
    let dir = setup("");
    let mut args: Vec<&str> = BASE.to_vec();
    args[4] = "-";
    args.push("y");
    let mut child = Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(&args)
        .current_dir(dir.path())
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(b"").unwrap();
    let r: Run = child.wait_with_output().unwrap().into();
    expect(&r, 2, &["<stdin>", "empty"]);
}

// ------------------------------------------------------ numerical trouble

/// x = 1 exactly when z > 0: complete separation of the propensity model
/// (Albert & Anderson, Biometrika 1984;71:1-10).
fn separated() -> String {
    let rs: Vec<(f64, f64, f64)> = rows(150, 1.0, 8)
        .into_iter()
        .map(|(z, _, y)| (z, f64::from(u8::from(z > 0.0)), y))
        .collect();
    csv(&rs)
}

#[test]
fn complete_separation_refuses_weighting_and_names_it() {
    let r = estimate(&separated(), &["--format", "json"]);
    // Bad input (exit 2): the message names the exposure and the covariate
    // whose ranges do not overlap between the groups.
    expect(
        &r,
        2,
        &[
            "the exposure 'x' is predicted perfectly",
            "'z' is at least",
            "in every exposed row",
            "complete separation",
            "positivity violation",
        ],
    );
    assert!(r.stdout.is_empty(), "no estimate is printed: {}", r.stdout);
    // --trim cannot rescue it: the scores it would clip are 0 and 1.
    expect(
        &estimate(&separated(), &["--trim", "0.05"]),
        2,
        &["complete separation"],
    );
}

/// The lead's analysis runs the propensity diagnostics even when only the
/// regression method is asked for, so a separated exposure stops it.
#[test]

fn complete_separation_with_regression_only_gives_a_warned_estimate() {
    let (v, t) = json_and_text(&separated(), &["--method", "regression"]);
    assert_eq!(methods(&v), ["regression"]);
    warned(&v, &t, "separation");
}

#[test]
fn quasi_complete_separation_is_named() {
    // z takes integer values; x = 1 when z > 0 and in half of the rows at
    // z = 0: the groups overlap only at z = 0 (quasi-complete separation).
    let mut half = false;
    let rs: Vec<(f64, f64, f64)> = rows(200, 1.0, 9)
        .into_iter()
        .map(|(z, _, y)| {
            let z = z.round();
            let x = if z == 0.0 {
                half = !half;
                f64::from(u8::from(half))
            } else {
                f64::from(u8::from(z > 0.0))
            };
            (z, x, y)
        })
        .collect();
    expect(
        &estimate(&csv(&rs), &[]),
        2,
        &[
            "the exposure 'x'",
            "'z' is at least 0 in every exposed row and at most 0 in every unexposed row",
            "quasi-complete separation",
            "positivity",
        ],
    );
}

/// Propensity scores at 0 or 1 in all but name: a very strong confounder.
fn near_separated() -> String {
    let mut rs = rows(200, 1.0, 10);
    let mut order: Vec<usize> = (0..rs.len()).collect();
    order.sort_by(|&a, &b| rs[a].0.total_cmp(&rs[b].0));
    for (rank, &i) in order.iter().enumerate() {
        // Exposed above the median, except two rows in the far tails.
        let above = rank >= 100;
        let flip = rank == 5 || rank == 194;
        rs[i].1 = f64::from(u8::from(above != flip));
    }
    csv(&rs)
}

#[test]
fn propensities_near_zero_or_one_are_reported() {
    let (v, t) = json_and_text(&near_separated(), &[]);
    let p = &v["diagnostics"]["propensity"];
    assert!(
        p["min"].as_f64().unwrap() < 1e-3 && p["max"].as_f64().unwrap() > 1.0 - 1e-3,
        "{p}"
    );
    assert!(p["near_zero_or_one"].as_u64().unwrap() > 0);
    warned(
        &v,
        &t,
        "propensity scores below 0.01 or above 0.99 (positivity is in doubt)",
    );
    warned(&v, &t, "extreme weights");
    // --trim clips them and says so.
    let (v, _) = json_and_text(&near_separated(), &["--trim", "0.02"]);
    assert!(v["diagnostics"]["propensity"]["clipped"].as_u64().unwrap() > 0);
}

#[test]
fn constant_and_collinear_covariates_are_dropped_by_name() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "g.graph",
        "z -> x\nz -> y\nw -> x\nw -> y\nk -> x\nk -> y\nx -> y\n",
    );
    let mut text = String::from("z,w,k,x,y\n");
    for (z, x, y) in rows(120, 1.0, 11) {
        text.push_str(&format!("{z},{},{},{x},{y}\n", 2.0 * z - 1.0, 7));
    }
    write(dir.path(), "d.csv", &text);
    let mut args: Vec<&str> = BASE.to_vec();
    args.push("y");
    let t = cw(dir.path(), &args);
    args.extend_from_slice(&["--format", "json"]);
    let r = cw(dir.path(), &args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    let w = warnings(&v);
    let dropped = w
        .iter()
        .find(|w| w.contains("dropped as constant or collinear"))
        .expect("a warning");
    assert!(dropped.contains('w') && dropped.contains('k'), "{dropped}");
    assert!(t.stdout.contains("dropped as constant or collinear"));
    // An exposure that copies a covariate cannot be told apart from it.
    let mut text = String::from("z,w,k,x,y\n");
    for (z, x, y) in rows(60, 1.0, 12) {
        text.push_str(&format!("{z},{x},1,{x},{y}\n"));
    }
    write(dir.path(), "d.csv", &text);
    let r = cw(dir.path(), &args);
    expect(
        &r,
        2,
        &["the exposure 'x' is constant or a linear combination of the adjustment terms"],
    );
}

/// Five rows: the estimate is made, with warnings that the sample is small.
const FIVE: &str = "z,x,y\n0.1,0,1.0\n-0.5,1,2.5\n1.2,0,0.7\n0.3,1,3.1\n-1.0,1,2.2\n";

#[test]
fn tiny_samples_warn_or_refuse() {
    let (v, t) = json_and_text(FIVE, &[]);
    assert_eq!(v["sample"]["used"], 5);
    warned(&v, &t, "small sample: the smaller exposure group has 2 rows");
    warned(&v, &t, "small sample: the sample has 5 rows");
    // Three rows, one of them exposed: no standard error exists.
    let three = "z,x,y\n0.1,0,1.0\n-0.5,1,2.5\n1.2,0,0.7\n";
    let r = estimate(three, &[]);
    expect(&r, 2, &["only 1 exposed row among the 3 complete rows"]);
    assert!(r.stdout.is_empty());
    // As many rows as outcome-model terms: the fit is exact.
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "g.graph", "a -> x\nb -> x\na -> y\nb -> y\nx -> y\n");
    write(
        dir.path(),
        "d.csv",
        "a,b,x,y\n1,2,0,1\n2,1,1,2\n0,5,0,3\n3,3,1,0\n",
    );
    let r = cw(
        dir.path(),
        &[
            "estimate",
            "--graph",
            "g.graph",
            "--data",
            "d.csv",
            "--exposure",
            "x",
            "--outcome",
            "y",
        ],
    );
    expect(
        &r,
        2,
        &["only 4 complete rows for the 4 terms of the outcome model"],
    );
}

/// Four rows, two per group, one covariate: one residual degree of freedom.
/// The robustness value needs two; the analysis stops with an error about a
/// flag (--df) of another command instead of leaving that part out.
#[test]

fn one_residual_degree_of_freedom_leaves_the_robustness_value_out() {
    let four = "z,x,y\n0.1,0,1.0\n-0.5,1,2.5\n1.2,0,0.7\n0.3,1,3.1\n";
    let r = estimate(four, &["--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(!r.stderr.contains("--df"));
}

#[test]
fn failing_bootstrap_replicates_are_counted_and_warned() {
    // With five rows many resamples hold a single exposure group.
    let (v, t) = json_and_text(FIVE, &["--bootstrap", "60", "--seed", "3"]);
    for e in v["estimates"].as_array().unwrap() {
        let b = &e["bootstrap"];
        assert_eq!(b["replicates"], 60);
        assert!(b["failed"].as_u64().unwrap() > 0, "{e}");
    }
    warned(&v, &t, "bootstrap replicates failed");
    // The BCa interval was not asked for: no note about it.
    assert!(
        !warnings(&v).iter().any(|w| w.contains("BCa")),
        "{:?}",
        warnings(&v)
    );
}

/// Asking for a BCa interval that cannot be formed (the jackknife fails on
/// some leave-one-out samples) stops the whole analysis with exit 1, where
/// the analytic interval could be kept with a warning.
#[test]

fn unavailable_bca_interval_keeps_the_analytic_interval_with_a_warning() {
    let (v, t) = json_and_text(FIVE, &["--bootstrap", "60", "--interval", "bca"]);
    // Regression's BCa interval exists; IPW's jackknife fails (a leave-one-out
    // sample with one exposed row), so IPW keeps its sandwich interval.
    let ipw = v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .find(|e| e["method"] == "ipw")
        .unwrap();
    assert_eq!(ipw["ci_method"], "sandwich", "{ipw}");
    assert!(ipw.get("bootstrap").is_none());
    warned(&v, &t, "no BCa interval");
}
