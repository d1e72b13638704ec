//! Robustness against bad flags, and the guarantees of every run: exit code
//! 2 naming the flag, never a panic, inputs never changed, an output path
//! that is an input refused, and results that do not depend on --threads.

use crate::helpers::{Run, write};
use crate::robust_data::{CONFOUNDED, csv, cw, expect, rows};
use serde_json::Value;
use std::path::Path;
use std::time::SystemTime;

/// A folder with the confounded graph (`g.graph`) and 150 rows (`d.csv`).
fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "g.graph", CONFOUNDED);
    write(dir.path(), "d.csv", &csv(&rows(150, 1.0, 21)));
    dir
}

fn estimate_in(dir: &Path, extra: &[&str]) -> Run {
    let mut args = vec![
        "estimate",
        "--graph",
        "g.graph",
        "--data",
        "d.csv",
        "--exposure",
        "x",
        "--outcome",
        "y",
    ];
    args.extend_from_slice(extra);
    cw(dir, &args)
}

fn estimate(extra: &[&str]) -> Run {
    estimate_in(setup().path(), extra)
}

#[test]
fn level_outside_zero_one() {
    for v in ["1.5", "0", "1", "nan"] {
        expect(
            &estimate(&["--level", v]),
            2,
            &["--level", "strictly between 0 and 1"],
        );
    }
    let r = estimate(&["--level", "-0.5"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    expect(&estimate(&["--level", "high"]), 2, &["--level"]);
}

#[test]
fn trim_at_or_above_one_half() {
    for v in ["0.5", "0.7", "inf"] {
        expect(&estimate(&["--trim", v]), 2, &["--trim", "below 0.5"]);
    }
    let r = estimate(&["--trim", "-0.1"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
}

#[test]
fn negative_bootstrap() {
    let r = estimate(&["--bootstrap", "-5"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    expect(&estimate(&["--bootstrap", "many"]), 2, &["--bootstrap"]);
}

/// A negative number after --trim, --level or --bootstrap is read by the
/// flag parser as an unknown flag ("unexpected argument '-0' found"), so the
/// message does not name the flag.
#[test]

fn negative_values_name_their_flag() {
    expect(&estimate(&["--trim", "-0.1"]), 2, &["--trim"]);
    expect(&estimate(&["--level", "-0.5"]), 2, &["--level"]);
    expect(&estimate(&["--bootstrap", "-5"]), 2, &["--bootstrap"]);
}

#[test]
fn unknown_method_and_other_names() {
    expect(
        &estimate(&["--method", "regression,magic"]),
        2,
        &["--method 'magic'", "expected one of regression, ipw"],
    );
    expect(&estimate(&["--method", ","]), 2, &["--method"]);
    expect(
        &estimate(&["--method", "frontdoor"]),
        2,
        &["--method 'frontdoor' does not fit the backdoor strategy"],
    );
    expect(&estimate(&["--estimand", "atx"]), 2, &["atx"]);
    expect(&estimate(&["--scale", "log"]), 2, &["log"]);
    expect(
        &estimate(&["--shape", "cubic"]),
        2,
        &["invalid value 'cubic'", "--shape"],
    );
    expect(
        &estimate(&["--interval", "wide"]),
        2,
        &["invalid value 'wide'", "--interval"],
    );
    expect(&estimate(&["--contrast", "1"]), 2, &["--contrast '1'"]);
    expect(&estimate(&["--latent", "q"]), 2, &["--latent 'q' is not a node"]);
}

#[test]
fn adjust_name_not_in_the_graph() {
    expect(
        &estimate(&["--adjust", "z,q"]),
        2,
        &["--adjust 'q' is not a node of the graph"],
    );
    expect(
        &estimate(&["--adjust", "x"]),
        2,
        &["--adjust 'x' is the exposure or the outcome"],
    );
}

#[test]
fn invalid_adjust_set_names_the_open_path() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "g.graph",
        "z -> x\nz -> y\nw -> x\nw -> y\nx -> m -> y\n",
    );
    let mut text = String::from("z,w,m,x,y\n");
    for (i, (z, x, y)) in rows(150, 1.0, 22).into_iter().enumerate() {
        let w = ((i * 37) % 11) as f64 / 11.0;
        text.push_str(&format!("{z},{w},{},{x},{}\n", x + 0.1 * z, y + w));
    }
    write(dir.path(), "d.csv", &text);
    let r = estimate_in(dir.path(), &["--adjust", "z"]);
    expect(
        &r,
        2,
        &[
            "--adjust {z} does not meet the backdoor criterion",
            "x <- w -> y",
            "--force-adjust",
        ],
    );
    assert!(r.stdout.is_empty());
    let r = estimate_in(dir.path(), &["--adjust", "z,w,m"]);
    expect(&r, 2, &["m descends from the exposure"]);
    // Forced: estimated, with the warning in the JSON and the text.
    let r = estimate_in(
        dir.path(),
        &["--adjust", "z", "--force-adjust", "--format", "json"],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["identification"]["adjustment_set"], serde_json::json!(["z"]));
    let w = v["warnings"][0].as_str().unwrap();
    assert!(
        w.contains("does not meet the backdoor criterion") && w.contains("x <- w -> y"),
        "{w}"
    );
    let t = estimate_in(dir.path(), &["--adjust", "z", "--force-adjust"]);
    assert!(t.stdout.contains("--force-adjust"), "{}", t.stdout);
}

/// Bytes and modification time of each file.
fn snapshot(paths: &[&Path]) -> Vec<(Vec<u8>, SystemTime)> {
    paths
        .iter()
        .map(|p| {
            (
                std::fs::read(p).unwrap(),
                std::fs::metadata(p).unwrap().modified().unwrap(),
            )
        })
        .collect()
}

#[test]
fn out_folder_that_cannot_be_written() {
    let dir = setup();
    let before = snapshot(&[&dir.path().join("g.graph"), &dir.path().join("d.csv")]);
    // A folder under an existing regular file.
    let r = estimate_in(dir.path(), &["--out", "d.csv/report"]);
    expect(&r, 2, &["--out d.csv/report", "cannot create the folder"]);
    // The data file itself as the folder.
    let r = estimate_in(dir.path(), &["--out", "d.csv"]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("d.csv"), "{}", r.stderr);
    let after = snapshot(&[&dir.path().join("g.graph"), &dir.path().join("d.csv")]);
    assert!(before == after, "an input changed");
}

#[test]
fn inputs_are_unchanged_after_a_run_with_out() {
    let dir = setup();
    let inputs = [dir.path().join("g.graph"), dir.path().join("d.csv")];
    let paths: Vec<&Path> = inputs.iter().map(|p| p.as_path()).collect();
    let before = snapshot(&paths);
    let r = estimate_in(dir.path(), &["--out", "bundle", "--bootstrap", "20", "--quiet"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    for f in [
        "report.md",
        "results.json",
        "table.tex",
        "estimates.csv",
        "figures/g-graph.svg",
    ] {
        assert!(dir.path().join("bundle").join(f).is_file(), "{f} written");
    }
    // A second run over the same bundle replaces it, still not the inputs.
    let r = estimate_in(dir.path(), &["--out", "bundle", "--quiet"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(snapshot(&paths) == before, "an input changed");
}

#[test]
fn draw_output_onto_the_graph_is_refused() {
    let dir = setup();
    let g = dir.path().join("g.graph");
    let before = snapshot(&[&g]);
    for out in ["g.graph", "./g.graph"] {
        let r = cw(dir.path(), &["draw", "--graph", "g.graph", "--output", out]);
        expect(&r, 2, &["refusing to write", "it is an input file"]);
    }
    // Through a symbolic link and a hard link to the graph.
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink("g.graph", dir.path().join("soft.svg")).unwrap();
        std::fs::hard_link(&g, dir.path().join("hard.svg")).unwrap();
        for out in ["soft.svg", "hard.svg"] {
            let r = cw(dir.path(), &["draw", "--graph", "g.graph", "--output", out]);
            expect(&r, 2, &["refusing to write", "it is an input file"]);
        }
    }
    assert!(snapshot(&[&g]) == before, "the graph changed");
}

#[test]
fn simulate_output_onto_the_graph_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let text = "z -> x (0.5)\nz -> y (1)\nx -> y (1)\nx : binary\n";
    write(dir.path(), "m.graph", text);
    let g = dir.path().join("m.graph");
    let before = snapshot(&[&g]);
    let base = ["simulate", "--graph", "m.graph", "--rows", "10", "--seed", "1"];
    let mut a = base.to_vec();
    a.extend_from_slice(&["--output", "m.graph"]);
    expect(&cw(dir.path(), &a), 2, &["refusing to write m.graph"]);
    // --truth is written before --output: a refused output leaves no truth.
    let mut a = base.to_vec();
    a.extend_from_slice(&[
        "--exposure",
        "x",
        "--outcome",
        "y",
        "--truth",
        "t.json",
        "--output",
        "m.graph",
    ]);
    expect(&cw(dir.path(), &a), 2, &["refusing to write m.graph"]);
    assert!(!dir.path().join("t.json").exists(), "nothing written");
    let mut a = base.to_vec();
    a.extend_from_slice(&["--exposure", "x", "--outcome", "y", "--truth", "m.graph"]);
    expect(&cw(dir.path(), &a), 2, &["refusing to write m.graph"]);
    assert!(snapshot(&[&g]) == before, "the graph changed");
}

#[test]
fn out_folder_holding_an_input_is_refused_before_anything_is_written() {
    let dir = setup();
    let sub = dir.path().join("res");
    std::fs::create_dir(&sub).unwrap();
    // The data file is named like a bundle file: res/results.json.
    std::fs::rename(dir.path().join("d.csv"), sub.join("results.json")).unwrap();
    let data = sub.join("results.json");
    let before = snapshot(&[&data]);
    let args = [
        "estimate",
        "--graph",
        "g.graph",
        "--data",
        "res/results.json",
        "--exposure",
        "x",
        "--outcome",
        "y",
        "--out",
        "res",
    ];
    let r = cw(dir.path(), &args);
    expect(
        &r,
        2,
        &["refusing to write res/results.json", "it is an input file"],
    );
    assert!(snapshot(&[&data]) == before, "the data changed");
    let written: Vec<_> = std::fs::read_dir(&sub)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(written.len(), 1, "no bundle file written: {written:?}");
    // The graph as a bundle file name, in the working folder.
    std::fs::rename(dir.path().join("g.graph"), dir.path().join("report.md")).unwrap();
    let args = [
        "estimate",
        "--graph",
        "report.md",
        "--data",
        "res/results.json",
        "--exposure",
        "x",
        "--outcome",
        "y",
        "--out",
        ".",
    ];
    expect(&cw(dir.path(), &args), 2, &["refusing to write", "report.md"]);
    assert!(!dir.path().join("results.json").exists());
}

#[test]
fn threads_do_not_change_the_json() {
    let dir = setup();
    let run = |t: &str| {
        let r = estimate_in(
            dir.path(),
            &["--bootstrap", "50", "--threads", t, "--format", "json", "--quiet"],
        );
        assert_eq!(r.code, 0, "{}", r.stderr);
        r.stdout
    };
    let (one, two) = (run("1"), run("2"));
    // Only the echoed command line differs (it holds the --threads value).
    let strip = |s: &str| -> String {
        s.lines()
            .filter(|l| !l.trim_start().starts_with("\"command\":"))
            .collect::<Vec<_>>()
            .join("\n")
    };
    assert_eq!(one.lines().count(), two.lines().count());
    assert_eq!(strip(&one), strip(&two), "JSON differs between --threads 1 and 2");
    let v: Value = serde_json::from_str(&one).unwrap();
    assert!(v["estimates"][0]["bootstrap"]["replicates"] == 50);
}

/// `sensitivity --df 1e9` used to run forever: the t quantile's inversion
/// in statrs does not return at such degrees of freedom (now an expansion
/// is used above 1e5; see tests/sensitivity.rs).
#[test]
fn huge_degrees_of_freedom_finish() {
    let dir = tempfile::tempdir().unwrap();
    for df in ["1e9", "1e300"] {
        let r = cw(
            dir.path(),
            &[
                "sensitivity",
                "--estimate",
                "0.5",
                "--se",
                "0.1",
                "--df",
                df,
                "--format",
                "json",
            ],
        );
        assert_eq!(r.code, 0, "{}", r.stderr);
        let v: Value = serde_json::from_str(&r.stdout).unwrap();
        assert!(v["robustness_value"]["rv"].as_f64().unwrap() > 0.0);
    }
}

#[test]
fn negative_summary_numbers_name_their_flag() {
    let dir = tempfile::tempdir().unwrap();
    let cases: &[(&[&str], &str)] = &[
        (&["--smd", "0.5", "--se", "-1"], "--se"),
        (&["--rr", "2", "--ci", "-1,3"], "--ci"),
        (&["--estimate", "1", "--se", "1", "--df", "-3"], "--df"),
        (&["--estimate", "1", "--se", "1", "--df", "9", "--q", "-1"], "--q"),
        (
            &[
                "--estimate",
                "1",
                "--se",
                "1",
                "--df",
                "9",
                "--r2-exposure",
                "-0.1",
                "--r2-outcome",
                "0.1",
            ],
            "--r2-exposure",
        ),
    ];
    for (args, flag) in cases {
        let mut a = vec!["sensitivity"];
        a.extend_from_slice(args);
        expect(&cw(dir.path(), &a), 2, &[flag]);
    }
}

/// Runs `causeway` in `dir` with `CAUSEWAY_MEMORY_LIMIT` set to `memory` bytes.
fn with_memory(dir: &Path, memory: u64, args: &[&str]) -> Run {
    let r: Run = std::process::Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(args)
        .current_dir(dir)
        .env("CAUSEWAY_MEMORY_LIMIT", memory.to_string())
        .output()
        .unwrap()
        .into();
    assert!(
        !r.stderr.contains("panicked") && !r.stderr.contains("internal error"),
        "{}",
        r.stderr
    );
    r
}

/// A replicate count whose results do not fit in memory is refused before
/// the bootstrap starts (it used to abort the process on a failed
/// allocation), naming the flag, the memory needed and available, and how
/// many replicates fit; the same count under more memory runs.
#[test]
fn bootstrap_beyond_memory_is_refused_with_the_count_that_fits() {
    let dir = setup();
    let args = [
        "estimate",
        "--graph",
        "g.graph",
        "--data",
        "d.csv",
        "--exposure",
        "x",
        "--outcome",
        "y",
        "--bootstrap",
        "100000000000",
        "--quiet",
    ];
    let r = with_memory(dir.path(), 2 << 30, &args);
    expect(
        &r,
        2,
        &[
            "--bootstrap 100000000000: needs about",
            "TiB of memory",
            "2.0 GiB is available",
            "replicates fit",
        ],
    );
    assert_eq!(r.stderr.lines().count(), 1, "{}", r.stderr);
    // The count the message gives is the largest that fits: one more is
    // refused too.
    let r = with_memory(dir.path(), 700 << 20, &args);
    let fit: u64 = r
        .stderr
        .split("at most ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no count in {}", r.stderr));
    assert!(fit >= 2, "{}", r.stderr);
    let over = (fit + 1).to_string();
    let mut a = args;
    a[10] = &over;
    expect(&with_memory(dir.path(), 700 << 20, &a), 2, &["--bootstrap"]);
    let r = with_memory(
        dir.path(),
        u64::MAX,
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
            "--bootstrap",
            "2000000000000000000",
            "--quiet",
        ],
    );
    expect(&r, 2, &["needs more memory than any machine can address"]);
}

/// More threads than 4 per core are cut, with a warning naming the flag,
/// and the results are those of one thread.
#[test]
fn threads_beyond_the_machine_are_cut_with_a_warning() {
    let dir = setup();
    let run = |t: &str| {
        estimate_in(
            dir.path(),
            &["--bootstrap", "30", "--threads", t, "--format", "json"],
        )
    };
    let many = run("1000000");
    expect(
        &many,
        0,
        &[
            "causeway: warning: --threads 1000000: more than 4 per core",
            "; using ",
        ],
    );
    let one = run("1");
    assert!(!one.stderr.contains("--threads"), "{}", one.stderr);
    let strip = |s: &str| -> Value {
        let mut v: Value = serde_json::from_str(s).unwrap();
        v.as_object_mut().unwrap().remove("command");
        v
    };
    assert_eq!(strip(&many.stdout), strip(&one.stdout));
    let max = estimate_in(dir.path(), &["--threads", "18446744073709551615", "--quiet"]);
    assert_eq!(max.code, 0, "{}", max.stderr);
    assert!(max.stderr.is_empty(), "--quiet still warned: {}", max.stderr);
}

/// Rows are written as they are drawn: standard output and a file get the
/// same bytes, a reader that stops early ends the run quietly, and rows
/// that cannot fit on the disk are refused before anything is written.
#[test]
fn simulated_rows_stream_in_bounded_memory() {
    let dir = tempfile::tempdir().unwrap();
    let g = write(
        dir.path(),
        "m.graph",
        "z : binary\nz -> x (0.5)\nx -> y (2)\nz -> y (1)\n",
    );
    let base = ["simulate", "--graph", &g, "--rows", "9000", "--seed", "4"];
    let out = cw(dir.path(), &base);
    assert_eq!(out.code, 0, "{}", out.stderr);
    assert_eq!(out.stdout.lines().count(), 9001);
    let mut to_file = base.to_vec();
    to_file.extend(["--output", "s.csv"]);
    assert_eq!(cw(dir.path(), &to_file).code, 0);
    assert_eq!(
        std::fs::read_to_string(dir.path().join("s.csv")).unwrap(),
        out.stdout
    );
    // A reader that goes away after the header.
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(["simulate", "--graph", &g, "--rows", "100000000000", "--seed", "4"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let mut head = [0u8; 64];
    std::io::Read::read_exact(child.stdout.as_mut().unwrap(), &mut head).unwrap();
    drop(child.stdout.take());
    let status = wait_at_most(&mut child, 20);
    assert_eq!(status.code(), Some(0));
    // More rows than the disk holds.
    let r = cw(
        dir.path(),
        &[
            "simulate",
            "--graph",
            &g,
            "--rows",
            "1000000000000000",
            "--seed",
            "4",
            "--output",
            "big.csv",
        ],
    );
    expect(
        &r,
        2,
        &[
            "--rows 1000000000000000: needs about",
            "of disk space",
            "rows fit",
        ],
    );
    assert!(!dir.path().join("big.csv").exists());
}

/// Waits for `child`, killing it and failing after `secs` seconds.
fn wait_at_most(child: &mut std::process::Child, secs: u64) -> std::process::ExitStatus {
    let start = std::time::Instant::now();
    loop {
        if let Some(s) = child.try_wait().unwrap() {
            return s;
        }
        if start.elapsed().as_secs() >= secs {
            let _ = child.kill();
            panic!("still running after {secs} s");
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
}

/// Ctrl-C during a long simulation to a file ends it with 130 and leaves
/// neither the output nor its temporary file behind; an existing output
/// is left as it was.
#[cfg(unix)]
#[test]
fn an_interrupted_simulation_leaves_no_file() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "m.graph", "x -> y (2)\n");
    write(dir.path(), "s.csv", "old\n");
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_causeway"))
        // About 1.5 GB of rows: seconds of work, stopped long before the end.
        .args([
            "simulate", "--graph", "m.graph", "--rows", "50000000", "--seed", "1", "--output", "s.csv",
        ])
        .current_dir(dir.path())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    // Wait until the temporary file is being written.
    let start = std::time::Instant::now();
    while std::fs::read_dir(dir.path()).unwrap().count() < 3 {
        assert!(start.elapsed().as_secs() < 20, "no temporary file appeared");
        assert!(
            child.try_wait().unwrap().is_none(),
            "ended before it was interrupted"
        );
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    let killed = std::process::Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(killed.success());
    assert_eq!(wait_at_most(&mut child, 20).code(), Some(130));
    let mut left: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    left.sort();
    assert_eq!(left, ["m.graph", "s.csv"]);
    assert_eq!(
        std::fs::read_to_string(dir.path().join("s.csv")).unwrap(),
        "old\n"
    );
}
