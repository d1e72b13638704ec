//! The first hour with causeway: data files that are not comma-separated,
//! exposures coded as text or as two numbers other than 0/1, misspelt
//! names, a closed standard output, and a covariate that separates the
//! exposure. The rules are causeway's own (common practice, no source).

use crate::helpers::{DEMO_QUESTION, Run, repo, write};
use crate::robust_data::{cw, expect};
use serde_json::Value;
use std::path::Path;
use std::process::{Command, Stdio};

/// The demo study (invented data) with every comma replaced by `sep`,
/// written to `name` in `dir`. The demo has no quoted fields.
fn demo_as(dir: &Path, name: &str, sep: &str) -> String {
    let text = std::fs::read_to_string(repo("demo-data/study.csv")).unwrap();
    write(dir, name, &text.replace(',', sep))
}

/// The demo study with `enrolled` recoded by `code` (0/1 to its text).
fn demo_recoded(dir: &Path, name: &str, mut code: impl FnMut(&str) -> String) -> String {
    let text = std::fs::read_to_string(repo("demo-data/study.csv")).unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    let at = header.split(',').position(|h| h == "enrolled").unwrap();
    let mut out = format!("{header}\n");
    for line in lines {
        let mut f: Vec<String> = line.split(',').map(str::to_string).collect();
        f[at] = code(&f[at]);
        out.push_str(&f.join(","));
        out.push('\n');
    }
    write(dir, name, &out)
}

fn estimate(dir: &Path, data: &str, extra: &[&str]) -> Run {
    let graph = repo("demo-data/main.graph").display().to_string();
    let mut args = vec!["estimate", "--graph", &graph, "--data", data, "--quiet"];
    args.extend(DEMO_QUESTION);
    args.extend_from_slice(extra);
    cw(dir, &args)
}

fn json(r: &Run) -> Value {
    assert_eq!(r.code, 0, "{}", r.stderr);
    serde_json::from_str(&r.stdout).expect("JSON output")
}

/// The estimates of a JSON run, for comparing runs number for number.
fn numbers(v: &Value) -> Vec<f64> {
    v["estimates"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|e| [e["estimate"].as_f64().unwrap(), e["std_error"].as_f64().unwrap()])
        .collect()
}

// ------------------------------------------------------------ delimiters

#[test]
fn tab_and_semicolon_files_are_detected_and_give_the_csv_numbers() {
    let dir = tempfile::tempdir().unwrap();
    let csv = repo("demo-data/study.csv").display().to_string();
    let want = numbers(&json(&estimate(dir.path(), &csv, &["--format", "json"])));
    for (name, sep) in [("study.tsv", "\t"), ("study.txt", "\t"), ("study-semi.csv", ";")] {
        let path = demo_as(dir.path(), name, sep);
        let got = numbers(&json(&estimate(dir.path(), &path, &["--format", "json"])));
        assert_eq!(got, want, "{name}");
    }
    // --delimiter overrides detection; the same numbers again.
    let path = demo_as(dir.path(), "semi.dat", ";");
    let got = numbers(&json(&estimate(
        dir.path(),
        &path,
        &["--format", "json", "--delimiter", "semicolon"],
    )));
    assert_eq!(got, want);
}

#[test]
fn a_wrong_delimiter_says_what_the_file_looks_like() {
    let dir = tempfile::tempdir().unwrap();
    let path = demo_as(dir.path(), "study.txt", "\t");
    let r = estimate(dir.path(), &path, &["--delimiter", "comma"]);
    expect(
        &r,
        2,
        &[
            "study.txt:1",
            "one field",
            "containing tabs",
            "looks tab-separated",
            "--delimiter tab",
        ],
    );
    assert!(
        !r.stderr.contains("not a column") && !r.stderr.contains("unobserved"),
        "{}",
        r.stderr
    );
    // The same for identify and check, which also read the data.
    let graph = repo("demo-data/main.graph").display().to_string();
    for args in [
        vec![
            "identify",
            "--graph",
            &graph,
            "--data",
            &path,
            "--exposure",
            "enrolled",
            "--outcome",
            "pain_days",
        ],
        vec!["check", "--graph", &graph, "--data", &path],
    ] {
        let mut args = args.clone();
        args.extend(["--delimiter", "comma"]);
        expect(&cw(dir.path(), &args), 2, &["looks tab-separated"]);
    }
    let semi = demo_as(dir.path(), "semi.csv", ";");
    expect(
        &estimate(dir.path(), &semi, &["--delimiter", "tab"]),
        2,
        &["containing semicolons", "--delimiter semicolon"],
    );
}

#[test]
fn quoted_fields_may_hold_the_delimiter() {
    let dir = tempfile::tempdir().unwrap();
    let graph = write(dir.path(), "g.graph", "z -> x\nz -> y\nx -> y\nnote\n");
    let mut rows = String::from("z;x;y;\"note; with separators\"\n");
    for i in 0..60 {
        let z = f64::from(i % 7) - 3.0;
        let x = u8::from(i % 3 == 0 || i % 5 == 0);
        rows.push_str(&format!(
            "{z};{x};{};\"a; b, c\"\n",
            1.0 + z + f64::from(x) + f64::from(i % 4) / 4.0
        ));
    }
    let data = write(dir.path(), "q.csv", &rows);
    let r = cw(
        dir.path(),
        &[
            "estimate",
            "--graph",
            &graph,
            "--data",
            &data,
            "--exposure",
            "x",
            "--outcome",
            "y",
            "--quiet",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
}

// ------------------------------------------------------- exposure coding

#[test]
fn a_text_exposure_is_coded_and_the_exposed_level_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let csv = repo("demo-data/study.csv").display().to_string();
    let want = numbers(&json(&estimate(dir.path(), &csv, &["--format", "json"])));
    // enrolled/declined: "enrolled" sorts last, so it is exposed by default.
    let text = demo_recoded(dir.path(), "text.csv", |v| {
        if v == "1" {
            "enrolled".into()
        } else {
            "declined".into()
        }
    });
    let v = json(&estimate(dir.path(), &text, &["--format", "json"]));
    assert_eq!(numbers(&v), want);
    assert_eq!(v["exposure_coding"]["exposed"], "enrolled");
    assert_eq!(v["exposure_coding"]["unexposed"], "declined");
    assert_eq!(v["exposure_coding"]["rule"], "sorts last");
    let t = estimate(dir.path(), &text, &[]);
    assert!(
        t.stdout.contains("enrolled = enrolled is taken as exposed") && t.stdout.contains("sorts last"),
        "{}",
        t.stdout
    );
    // --exposed declined flips the coding: every effect changes sign.
    let v = json(&estimate(
        dir.path(),
        &text,
        &["--format", "json", "--exposed", "declined"],
    ));
    assert_eq!(v["exposure_coding"]["exposed"], "declined");
    assert_eq!(v["exposure_coding"]["rule"], "given");
    for (a, b) in numbers(&v).iter().zip(&want).step_by(2) {
        assert!((a + b).abs() < 1e-9 * b.abs().max(1.0), "{a} against {b}");
    }
}

#[test]
fn two_numbers_other_than_zero_and_one_take_the_larger_as_exposed() {
    let dir = tempfile::tempdir().unwrap();
    let csv = repo("demo-data/study.csv").display().to_string();
    let want = numbers(&json(&estimate(dir.path(), &csv, &["--format", "json"])));
    let coded = demo_recoded(dir.path(), "12.csv", |v| {
        if v == "1" { "2".into() } else { "1".into() }
    });
    let v = json(&estimate(dir.path(), &coded, &["--format", "json"]));
    assert_eq!(numbers(&v), want);
    assert_eq!(v["exposure_coding"]["exposed"], "2");
    assert_eq!(v["exposure_coding"]["rule"], "larger value");
    let t = estimate(dir.path(), &coded, &[]);
    assert!(
        t.stdout.contains("enrolled = 2 is taken as exposed"),
        "{}",
        t.stdout
    );
    // The 0/1 demo says it too.
    let t = estimate(dir.path(), &csv, &[]);
    assert!(
        t.stdout.contains("enrolled = 1 is taken as exposed"),
        "{}",
        t.stdout
    );
    // --exposed 2.0 names the same value as 2.
    let v = json(&estimate(
        dir.path(),
        &coded,
        &["--format", "json", "--exposed", "2.0"],
    ));
    assert_eq!(numbers(&v), want);
}

#[test]
fn exposed_values_that_do_not_fit_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let text = demo_recoded(dir.path(), "text.csv", |v| {
        if v == "1" {
            "quit".into()
        } else {
            "continued".into()
        }
    });
    expect(
        &estimate(dir.path(), &text, &["--exposed", "yes"]),
        2,
        &["--exposed 'yes'", "'enrolled'", "'continued' and 'quit'"],
    );
    // Three text levels: a categorical exposure; an exposed value does not
    // apply to it, and a reference level must be one of its levels.
    let mut n = 0;
    let three = demo_recoded(dir.path(), "three.csv", |_| {
        n += 1;
        ["a", "b", "c"][n % 3].into()
    });
    expect(
        &estimate(dir.path(), &three, &["--exposed", "b"]),
        2,
        &["--exposed 'b'", "'enrolled' has 3 levels"],
    );
    expect(
        &estimate(dir.path(), &three, &["--reference", "z"]),
        2,
        &["--reference 'z' is not a level", "'a', 'b', 'c'"],
    );
    // Run: every method's rows compare each level with the reference, and
    // the JSON names both (cli-contract, "Turn 2 additions").
    let v = json(&estimate(
        dir.path(),
        &three,
        &["--reference", "b", "--format", "json"],
    ));
    let rows = v["estimates"].as_array().unwrap();
    assert_eq!(rows.len(), 6, "{v}");
    for r in rows {
        assert_eq!(r["contrast"]["reference"], "b", "{r}");
        assert!(
            ["a", "c"].contains(&r["contrast"]["level"].as_str().unwrap()),
            "{r}"
        );
        assert!(r["means"]["b"].is_number(), "{r}");
    }
    assert_eq!(v["diagnostics"].as_object().map(|_| 0), None);
    assert_eq!(v["level_diagnostics"].as_array().unwrap().len(), 3);
    assert_eq!(v["sensitivity"]["by_contrast"].as_array().unwrap().len(), 2);
    // A continuous exposure has no exposed value.
    let graph = repo("demo-data/main.graph").display().to_string();
    let csv = repo("demo-data/study.csv").display().to_string();
    let r = cw(
        dir.path(),
        &[
            "estimate",
            "--graph",
            &graph,
            "--data",
            &csv,
            "--exposure",
            "standing_hours",
            "--outcome",
            "pain_days",
            "--exposed",
            "1",
        ],
    );
    expect(&r, 2, &["--exposed '1'", "not two"]);
}

// ------------------------------------------------------------ names

#[test]
fn misspelt_names_get_the_nearest_names() {
    let dir = tempfile::tempdir().unwrap();
    let graph = repo("demo-data/main.graph").display().to_string();
    let csv = repo("demo-data/study.csv").display().to_string();
    let base = ["--graph", &graph, "--data", &csv];
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["estimate", "--exposure", "enroled", "--outcome", "pain_days"],
            "did you mean 'enrolled'?",
        ),
        (
            vec!["estimate", "--exposure", "enrolled", "--outcome", "Pain_Days"],
            "did you mean 'pain_days'?",
        ),
        (
            vec![
                "estimate",
                "--exposure",
                "enrolled",
                "--outcome",
                "pain_days",
                "--adjust",
                "age,rol",
            ],
            "--adjust 'rol'",
        ),
        (
            vec![
                "estimate",
                "--exposure",
                "enrolled",
                "--outcome",
                "pain_days",
                "--categorical",
                "roles",
            ],
            "--categorical 'roles' is not a node of the graph (names are matched exactly, case-sensitive); did you mean 'role'?",
        ),
        (
            vec![
                "estimate",
                "--exposure",
                "enrolled",
                "--outcome",
                "pain_days",
                "--interact",
                "AGE",
            ],
            "--interact 'AGE' is not a node of the graph (names are matched exactly, case-sensitive); did you mean 'age'?",
        ),
        (
            vec![
                "estimate",
                "--exposure",
                "enrolled",
                "--outcome",
                "pain_days",
                "--latent",
                "ag",
            ],
            "did you mean 'age'?",
        ),
        (
            vec!["identify", "--exposure", "enrolld", "--outcome", "pain_days"],
            "did you mean 'enrolled'?",
        ),
        (vec!["check", "--categorical", "rle"], "did you mean 'role'?"),
    ];
    for (mut args, want) in cases {
        args.extend_from_slice(&base);
        let r = cw(dir.path(), &args);
        expect(&r, 2, &[want]);
    }
    // draw reads no data: its graph nodes are suggested.
    let r = cw(dir.path(), &["draw", "--graph", &graph, "--exposure", "Enrolled"]);
    expect(&r, 2, &["did you mean 'enrolled'?"]);
    // Nothing near: no suggestion.
    let r = cw(dir.path(), &["draw", "--graph", &graph, "--exposure", "weight"]);
    expect(&r, 2, &["--exposure 'weight'"]);
    assert!(!r.stderr.contains("did you mean"), "{}", r.stderr);
}

// ------------------------------------------------------- closed stdout

/// Runs `args` in `dir` with standard output a pipe whose reading end is
/// closed before the command starts, so the first write fails.
fn closed_stdout(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    let (reader, writer) = std::io::pipe().expect("a pipe");
    drop(reader);
    let o = Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::null())
        .stdout(Stdio::from(writer))
        .stderr(Stdio::piped())
        .output()
        .expect("the binary runs");
    (o.status.code(), String::from_utf8_lossy(&o.stderr).into_owned())
}

#[test]
fn a_closed_stdout_ends_every_command_quietly() {
    let dir = tempfile::tempdir().unwrap();
    let graph = repo("demo-data/main.graph").display().to_string();
    let sim = repo("demo-data/study.graph").display().to_string();
    let csv = repo("demo-data/study.csv").display().to_string();
    let xy = ["--exposure", "enrolled", "--outcome", "pain_days"];
    let runs: Vec<Vec<&str>> = vec![
        [&["identify", "--graph", &graph, "--data", &csv][..], &xy].concat(),
        [
            &[
                "estimate",
                "--graph",
                &graph,
                "--data",
                &csv,
                "--categorical",
                "role",
            ][..],
            &xy,
        ]
        .concat(),
        [
            &["estimate", "--graph", &graph, "--data", &csv, "--format", "json"][..],
            &xy,
        ]
        .concat(),
        [
            &["compare", "--graph", &graph, "--graph", &graph, "--data", &csv][..],
            &xy,
        ]
        .concat(),
        vec!["check", "--graph", &graph, "--data", &csv],
        vec!["demo"],
        vec!["sensitivity", "--rr", "1.8", "--ci", "1.2,2.6"],
        vec![
            "sensitivity",
            "--rr",
            "1.8",
            "--ci",
            "1.2,2.6",
            "--format",
            "json",
        ],
        vec!["sensitivity", "--estimate", "0.5", "--se", "0.1", "--df", "500"],
        [&["draw", "--graph", &graph][..], &xy].concat(),
        vec!["draw", "--graph", &graph, "--format", "dot"],
        vec![
            "simulate", "--graph", &sim, "--rows", "2000", "--seed", "3", "--quiet",
        ],
    ];
    for args in runs {
        let (code, stderr) = closed_stdout(dir.path(), &args);
        assert_eq!(code, Some(0), "{args:?}: {stderr}");
        assert!(
            !stderr.contains("internal error")
                && !stderr.contains("panicked")
                && !stderr.contains("Broken pipe"),
            "{args:?}: {stderr}"
        );
    }
}

/// Every command writes standard output through the one writer in
/// src/cli/common.rs, which ends quietly on a closed pipe.
#[test]
fn only_the_one_writer_touches_stdout() {
    for entry in std::fs::read_dir(repo("src/cli")).unwrap() {
        let path = entry.unwrap().path();
        // Standard error is not at issue.
        let text = std::fs::read_to_string(&path)
            .unwrap()
            .replace("eprintln!(", "")
            .replace("eprint!(", "");
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        for bad in ["print!(", "println!(", "stdout()"] {
            let uses = text.matches(bad).count();
            let allowed = usize::from(name == "common.rs" && bad == "stdout()");
            assert!(
                uses <= allowed,
                "{name} uses {bad} directly: write through common::print_stdout"
            );
        }
    }
}

/// The library prints nothing and draws no progress bar: it reports
/// progress through `causeway::progress::Reporter` and returns warnings as
/// values; only the binary (src/cli, src/main.rs) writes to the terminal.
#[test]
fn the_library_never_prints_or_draws() {
    fn walk(dir: &std::path::Path, out: &mut Vec<std::path::PathBuf>) {
        for entry in std::fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                if !path.ends_with("cli") {
                    walk(&path, out);
                }
            } else if path.extension().is_some_and(|e| e == "rs") && !path.ends_with("main.rs") {
                out.push(path);
            }
        }
    }
    let mut files = Vec::new();
    walk(&repo("src"), &mut files);
    assert!(files.len() > 50, "the library's files were found");
    for path in files {
        let text = std::fs::read_to_string(&path).unwrap();
        for bad in [
            "print!(",
            "println!(",
            "eprint!(",
            "eprintln!(",
            "indicatif",
            "stdout()",
            "stderr()",
        ] {
            assert!(
                !text.contains(bad),
                "{} uses {bad}: the library reports through values and callbacks",
                path.display()
            );
        }
    }
}

// ------------------------------------------------------- separation

#[test]
fn a_level_seen_only_among_the_exposed_is_bad_input_naming_it() {
    let dir = tempfile::tempdir().unwrap();
    // The demo study with the role of 15 enrolled staff recoded to a new
    // level, contractor, that no unexposed row has.
    let text = std::fs::read_to_string(repo("demo-data/study.csv")).unwrap();
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    let names: Vec<&str> = header.split(',').collect();
    let (x, role) = (
        names.iter().position(|h| *h == "enrolled").unwrap(),
        names.iter().position(|h| *h == "role").unwrap(),
    );
    let mut out = format!("{header}\n");
    let mut k = 0;
    for line in lines {
        let mut f: Vec<&str> = line.split(',').collect();
        if f[x] == "1" && k < 15 {
            f[role] = "contractor";
            k += 1;
        }
        out.push_str(&f.join(","));
        out.push('\n');
    }
    let data = write(dir.path(), "sep.csv", &out);
    let r = estimate(dir.path(), &data, &[]);
    expect(
        &r,
        2,
        &[
            "the exposure 'enrolled' is predicted perfectly",
            "all 15 rows with role = contractor are exposed",
            "positivity violation",
        ],
    );
    assert!(r.stdout.is_empty(), "{}", r.stdout);
    // Regression alone still runs, with the reason in its warnings.
    let r = estimate(dir.path(), &data, &["--method", "regression", "--format", "json"]);
    let v = json(&r);
    let w = v["warnings"].to_string();
    assert!(w.contains("role = contractor"), "{w}");
}
