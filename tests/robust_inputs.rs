//! Hostile data inputs: categorical columns with too many levels (an
//! identifier, a number named categorical, an exposure), numeric columns
//! with a few stray cells, missing-value tokens, control bytes and bytes
//! that are not UTF-8, and special files (devices, folders, empty, binary,
//! compressed, unreadable). Every run goes through the binary under a
//! harness timeout: it must end, with exit 2 and a message naming the file,
//! the column or the cells.

use crate::helpers::{Run, run_bounded, write};
use causeway::data::{Dataset, Frame, ReadOptions, Role};
use proptest::prelude::*;
use std::path::Path;
use std::process::Command;
use std::time::Duration;

/// The most a run may take before the harness kills it and fails.
const LIMIT: Duration = Duration::from_secs(30);

/// Runs `causeway` with `args` in `dir`, killed and failed past [`LIMIT`].
fn bounded(dir: &Path, args: &[&str]) -> Run {
    run_bounded(dir, args, LIMIT)
}

/// Asserts exit `code` and that standard error holds each of `words`.
fn expect(r: &Run, code: i32, words: &[&str]) {
    assert_eq!(r.code, code, "stderr: {}\nstdout: {}", r.stderr, r.stdout);
    for w in words {
        assert!(r.stderr.contains(w), "stderr lacks {w:?}: {}", r.stderr);
    }
}

/// `n` rows of a confounded binary exposure x, outcome y, covariate z
/// (numbers), with `extra(i)` appended as column `name` when given.
fn data(n: usize, extra: Option<(&str, &dyn Fn(usize) -> String)>) -> String {
    let mut s = String::from("z,x,y");
    if let Some((name, _)) = extra {
        s.push(',');
        s.push_str(name);
    }
    s.push('\n');
    for i in 0..n {
        let z = ((i * 37) % 101) as f64 / 10.0 - 5.0;
        let x = usize::from((i * 7919) % 13 < 6 + usize::from(z > 0.0));
        let y = 1.0 + 2.0 * x as f64 + 0.5 * z + ((i * 31) % 17) as f64 / 17.0;
        s.push_str(&format!("{z},{x},{y}"));
        if let Some((_, f)) = extra {
            s.push(',');
            s.push_str(&f(i));
        }
        s.push('\n');
    }
    s
}

/// The graph z -> x -> y, z -> y, with `w -> x`, `w -> y` for each `w`.
fn graph(dir: &Path, extra: &[&str]) -> String {
    let mut g = String::from("z -> x\nz -> y\nx -> y\n");
    for w in extra {
        g.push_str(&format!("{w} -> x\n{w} -> y\n"));
    }
    write(dir, "g.txt", &g)
}

fn estimate(dir: &Path, more: &[&str]) -> Run {
    let mut args = vec![
        "estimate",
        "--graph",
        "g.txt",
        "--data",
        "d.csv",
        "--exposure",
        "x",
        "--outcome",
        "y",
    ];
    args.extend_from_slice(more);
    bounded(dir, &args)
}

// ------------------------------------------------------ many levels

#[test]
fn an_identifier_column_is_refused_by_every_command_that_codes_columns() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let id = |i: usize| format!("P{i:05}");
    write(d, "d.csv", &data(5000, Some(("id", &id))));
    graph(d, &["id"]);
    std::fs::copy(d.join("g.txt"), d.join("h.txt")).unwrap();
    let want = [
        "d.csv",
        "column 'id' has 5000 levels over 5000",
        "like an identifier",
        "--latent id",
    ];
    expect(&estimate(d, &[]), 2, &want);
    let check = bounded(d, &["check", "--graph", "g.txt", "--data", "d.csv"]);
    expect(&check, 2, &want);
    let compare = bounded(
        d,
        &[
            "compare",
            "--graph",
            "g.txt",
            "--graph",
            "h.txt",
            "--data",
            "d.csv",
            "--exposure",
            "x",
            "--outcome",
            "y",
        ],
    );
    expect(&compare, 2, &want);
    // Declared unobserved, as the message offers, it is no longer read:
    // here it confounds x and y, so the effect is then not identified.
    let r = estimate(d, &["--latent", "id"]);
    expect(&r, 3, &["not identified"]);
}

#[test]
fn a_number_named_categorical_with_thousands_of_values_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write(d, "d.csv", &data(3000, Some(("w", &|i| format!("{}", i * 3)))));
    graph(d, &["w"]);
    expect(
        &estimate(d, &["--categorical", "w"]),
        2,
        &[
            "column 'w' has 3000 levels",
            "leave w out of --categorical",
            "--latent w",
        ],
    );
    // 150 levels over 3000 rows: not identifier-like, but past the cap.
    write(d, "d.csv", &data(3000, Some(("w", &|i| format!("{}", i % 150)))));
    expect(
        &estimate(d, &["--categorical", "w"]),
        2,
        &["column 'w' has 150 levels over 3000", "more than the 100"],
    );
    let check = bounded(
        d,
        &[
            "check",
            "--graph",
            "g.txt",
            "--data",
            "d.csv",
            "--categorical",
            "w",
        ],
    );
    expect(&check, 2, &["column 'w' has 150 levels"]);
    // As a number it is a covariate like any other.
    let r = estimate(d, &["--method", "regression"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
}

#[test]
fn an_exposure_with_too_many_levels_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut text = String::from("z,e,y\n");
    for i in 0..600 {
        text.push_str(&format!("{},L{},{}\n", i % 7, i % 25, (i * 13) % 11));
    }
    write(d, "d.csv", &text);
    write(d, "g.txt", "z -> e\nz -> y\ne -> y\n");
    let r = bounded(
        d,
        &[
            "estimate",
            "--graph",
            "g.txt",
            "--data",
            "d.csv",
            "--exposure",
            "e",
            "--outcome",
            "y",
        ],
    );
    expect(
        &r,
        2,
        &[
            "column 'e' has 25 levels",
            "more than the 20 a categorical exposure",
        ],
    );
    assert!(!r.stderr.contains("--latent"), "{}", r.stderr);
}

#[test]
fn check_does_not_fit_a_multinomial_test_too_large_to_end() {
    // Two covariates of 60 levels over 3000 rows (allowed as columns): the
    // test of one against the other would fit 59 x 60 coefficients.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write(
        d,
        "d.csv",
        &data(3000, Some(("a,b", &|i| format!("A{},B{}", i % 60, (i * 7) % 60)))),
    );
    graph(d, &["a", "b"]);
    let r = bounded(
        d,
        &["check", "--graph", "g.txt", "--data", "d.csv", "--format", "json"],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    let reasons = v["not_tested"].to_string();
    assert!(reasons.contains("would have 3540 coefficients"), "{reasons}");
}

// ------------------------------------------------------ stray cells

/// `d.csv` with covariate z of numbers, but for the given (row, text) cells.
fn strays(d: &Path, cells: &[(usize, &str)]) {
    let mut lines: Vec<String> = data(300, None).lines().map(String::from).collect();
    for &(row, text) in cells {
        let rest = lines[row + 1].split_once(',').unwrap().1.to_string();
        lines[row + 1] = format!("{text},{rest}");
    }
    write(d, "d.csv", &(lines.join("\n") + "\n"));
}

#[test]
fn a_numeric_column_with_stray_cells_names_them_and_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    strays(d, &[(9, "0x1F"), (19, "\"1,5\""), (40, "abc")]);
    let r = estimate(d, &[]);
    expect(
        &r,
        2,
        &[
            "d.csv:11:1: column 'z'",
            "except in 3 cells",
            "line 11 '0x1F'",
            "line 21 '1,5'",
            "line 42 'abc'",
            "--categorical z",
        ],
    );
    // Named categorical, its values are levels (as many as the cap allows).
    let few: Vec<(usize, &str)> = vec![(3, "other")];
    let mut lines: Vec<String> = data(300, None).lines().map(String::from).collect();
    for (i, l) in lines.iter_mut().enumerate().skip(1) {
        let rest = l.split_once(',').unwrap().1.to_string();
        *l = format!("{},{rest}", i % 4);
    }
    for (row, t) in few {
        let rest = lines[row + 1].split_once(',').unwrap().1.to_string();
        lines[row + 1] = format!("{t},{rest}");
    }
    write(d, "d.csv", &(lines.join("\n") + "\n"));
    expect(&estimate(d, &[]), 2, &["line 5 'other'", "--categorical z"]);
    let r = estimate(d, &["--categorical", "z", "--method", "regression"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
}

#[test]
fn the_outcome_with_stray_cells_lists_them_too() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    let mut text = data(100, None);
    for k in 0..8 {
        // Line 3 + 10 k: the outcome (column 3) holds text.
        let mut lines: Vec<String> = text.lines().map(String::from).collect();
        let l = &mut lines[2 + 10 * k];
        let (head, _) = l.rsplit_once(',').unwrap();
        *l = format!("{head},#REF!");
        text = lines.join("\n") + "\n";
    }
    write(d, "d.csv", &text);
    let r = estimate(d, &[]);
    expect(
        &r,
        2,
        &[
            "d.csv:3:3: column 'y'",
            "except in 8 cells (the first 5 shown)",
            "line 43 '#REF!'",
        ],
    );
    assert!(!r.stderr.contains("line 53"), "only five shown: {}", r.stderr);
}

#[test]
fn known_missing_tokens_are_read_as_missing_and_counted() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    strays(
        d,
        &[
            (2, "N/A"),
            (5, "NULL"),
            (7, ".a"),
            (8, "?"),
            (11, "na"),
            (12, "#N/A"),
            (13, "-"),
        ],
    );
    let r = estimate(d, &["--method", "regression", "--format", "json"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let v: serde_json::Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(v["sample"]["dropped_by_column"]["z"], 7);
    let warnings = v["warnings"].to_string();
    for w in [
        "cells read as missing: z:",
        "'N/A' 1",
        "'.a' 1",
        "'?' 1",
        "'na' 1",
        "'-' 1",
    ] {
        assert!(warnings.contains(w), "warnings lack {w:?}: {warnings}");
    }
}

#[test]
fn control_bytes_and_bytes_that_are_not_utf8_are_named_escaped() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    strays(d, &[(4, "1\u{1b}[2J")]);
    expect(
        &estimate(d, &[]),
        2,
        &["d.csv:6:1: the cell of column 'z' holds a control character: '1\\x1B[2J'"],
    );
    let mut bytes = data(50, None).into_bytes();
    let at = bytes.iter().rposition(|&b| b == b'\n').unwrap();
    bytes.splice(at..at, [b'\xff']);
    std::fs::write(d.join("d.csv"), bytes).unwrap();
    expect(&estimate(d, &[]), 2, &["d.csv:51:3:", "not UTF-8", "\\xFF"]);
}

// ------------------------------------------------------ special files

#[test]
fn special_files_get_their_own_message() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    write(d, "d.csv", &data(50, None));
    std::fs::create_dir(d.join("folder")).unwrap();
    write(d, "empty.csv", "");
    write(d, "header.csv", "z,x,y\n");
    let mut png = b"\x89PNG\r\n\x1a\n\0\0\0\rIHDR".to_vec();
    png.extend_from_slice(&[7u8; 64]);
    std::fs::write(d.join("image.png"), &png).unwrap();
    std::fs::write(d.join("d.csv.gz"), b"\x1f\x8b\x08\x00\x00\x00\x00\x00\x00\x03abc").unwrap();
    std::fs::write(d.join("d.csv.zst"), b"\x28\xb5\x2f\xfd\x04\x58abc").unwrap();
    std::fs::write(d.join("d.csv.xz"), b"\xfd7zXZ\x00\x00\x04abc").unwrap();
    // A graph that is binary data is left to the graph parser, which
    // names the line and column of the first byte that is not text.
    let data_cases: [(&str, &[&str]); 8] = [
        ("/dev/null", &["/dev/null", "empty"]),
        ("folder", &["--data folder: is a folder, not a data file"]),
        ("empty.csv", &["empty.csv", "the file is empty"]),
        ("header.csv", &["header.csv:2:", "header but no data rows"]),
        (
            "image.png",
            &["--data image.png: is not delimited text", "binary"],
        ),
        // gzip and zstd are read: these streams are damaged.
        (
            "d.csv.gz",
            &["d.csv.gz: the gzip stream is", "cannot be decompressed"],
        ),
        (
            "d.csv.zst",
            &["d.csv.zst: the zstd stream is", "cannot be decompressed"],
        ),
        (
            "d.csv.xz",
            &[
                "--data d.csv.xz: looks compressed (xz)",
                "only gzip and zstd are read",
            ],
        ),
    ];
    for (path, words) in data_cases {
        for cmd in ["estimate", "check", "identify"] {
            let mut args = vec![cmd, "--graph", "g.txt", "--data", path];
            if cmd != "check" {
                args.extend(["--exposure", "x", "--outcome", "y"]);
            }
            let r = bounded(d, &args);
            // identify reads the header alone: a header without rows is fine.
            if cmd == "identify" && path == "header.csv" {
                assert_eq!(r.code, 0, "{}", r.stderr);
                continue;
            }
            expect(&r, 2, words);
            assert!(!r.stderr.contains("no such file"), "{cmd} {path}: {}", r.stderr);
        }
    }
    // A device that never ends is refused on its first bytes, not read.
    for flag in ["--data", "--graph"] {
        let mut args = vec![
            "estimate",
            "--graph",
            "g.txt",
            "--data",
            "d.csv",
            "--exposure",
            "x",
            "--outcome",
            "y",
        ];
        let at = args.iter().position(|a| *a == flag).unwrap();
        args[at + 1] = "/dev/zero";
        expect(
            &bounded(d, &args),
            2,
            &[&format!("{flag} /dev/zero: is not delimited text"), "binary"],
        );
    }
    let graph_cases: [(&str, &[&str]); 4] = [
        ("folder", &["--graph folder: is a folder, not a graph file"]),
        ("image.png", &["image.png:1:1:", "not text"]),
        ("d.csv.gz", &["--graph d.csv.gz: looks compressed (gzip)"]),
        ("d.csv.zst", &["--graph d.csv.zst: looks compressed (zstd)"]),
    ];
    for (path, words) in graph_cases {
        for cmd in ["estimate", "check", "identify", "draw"] {
            let mut args = vec![cmd, "--graph", path];
            if cmd != "draw" {
                args.extend(["--data", "d.csv"]);
            }
            if cmd != "check" {
                args.extend(["--exposure", "x", "--outcome", "y"]);
            }
            expect(&bounded(d, &args), 2, words);
        }
    }
}

#[cfg(unix)]
#[test]
fn an_unreadable_file_says_so() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    let p = d.join("d.csv");
    std::fs::write(&p, data(20, None)).unwrap();
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o000)).unwrap();
    // A superuser reads it anyway: then there is nothing to refuse.
    if std::fs::read(&p).is_ok() {
        return;
    }
    expect(
        &estimate(d, &[]),
        2,
        &["--data d.csv: cannot be read: permission denied"],
    );
}

#[cfg(unix)]
#[test]
fn a_named_pipe_is_read_once() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    graph(d, &[]);
    let fifo = d.join("d.csv");
    let made = Command::new("mkfifo").arg(&fifo).status();
    if !made.is_ok_and(|s| s.success()) {
        return;
    }
    let text = data(200, None);
    let writer = std::thread::spawn(move || std::fs::write(fifo, text));
    let r = estimate(d, &["--method", "regression"]);
    writer.join().unwrap().unwrap();
    assert_eq!(r.code, 0, "{}", r.stderr);
}

// ------------------------------------------------------ properties

/// Codes column `z` of `text` as a covariate (not named categorical).
fn code_z(text: &str) -> causeway::Result<usize> {
    let d = Dataset::read(text.as_bytes(), "p.csv", &ReadOptions::default())?;
    let s = d.complete_cases(&["z"])?;
    Frame::new(s.used).push_from(&d, &s, "z", Role::Covariate { categorical: false })?;
    Ok(s.dropped)
}

/// Known tokens (the empty cell aside: in a one-column file it is a blank
/// line, which is skipped).
const KNOWN: [&str; 14] = [
    "NA", "n/a", "NaN", "nan", "null", "NULL", "Na", "N/a", ".", "-", "?", "#N/A", ".a", ".z",
];

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    /// Stray cells in a column of numbers are always refused, naming the
    /// line of each of the first five and how many there are.
    #[test]
    fn stray_cells_are_reported_with_their_lines(
        n in 20usize..80,
        picks in proptest::collection::btree_map(0usize..1000, "[A-Za-z#!@$%&*]{1,4}|0x[0-9A-F]{1,3}|[0-9]+,[0-9]+", 1..9),
    ) {
        let picks: Vec<(usize, String)> = picks.into_iter().map(|(r, t)| (r % n, t)).collect();
        let mut cells: Vec<String> = (0..n).map(|i| format!("{}", i as f64 / 3.0)).collect();
        let mut stray = std::collections::BTreeMap::new();
        for (r, t) in picks {
            let known = KNOWN.iter().any(|k| k.eq_ignore_ascii_case(&t)) || t.len() == 2 && t.starts_with('.');
            prop_assume!(!known && t.parse::<f64>().is_err());
            cells[r] = format!("\"{t}\"");
            stray.insert(r, t);
        }
        prop_assume!(stray.len() * 2 < n);
        let text = format!("z\n{}\n", cells.join("\n"));
        let e = code_z(&text).unwrap_err();
        prop_assert_eq!(e.exit_code(), 2);
        let m = e.to_string();
        prop_assert!(m.contains(&format!("except in {}", stray.len())), "{}", m);
        for (r, t) in stray.iter().take(5) {
            let cell = format!("line {} '{t}'", r + 2);
            prop_assert!(m.contains(&cell), "{} lacks {}", m, cell);
        }
    }

    /// Known missing tokens in a column of numbers are read as missing.
    #[test]
    fn known_tokens_are_read_as_missing(
        n in 20usize..80,
        picks in proptest::collection::btree_map(0usize..1000, 0usize..KNOWN.len(), 1..9),
    ) {
        let mut cells: Vec<String> = (0..n).map(|i| format!("{}", i as f64 / 3.0)).collect();
        let mut rows = std::collections::BTreeSet::new();
        for (r, k) in picks {
            cells[r % n] = KNOWN[k].to_string();
            rows.insert(r % n);
        }
        let text = format!("z\n{}\n", cells.join("\n"));
        prop_assert_eq!(code_z(&text).unwrap(), rows.len());
    }
}
