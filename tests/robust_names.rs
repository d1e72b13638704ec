//! Hostile names and graph facts the analyst should hear.
//!
//! * Column and node names with non-ASCII letters (é, ß, 体重, an emoji) and
//!   with characters special to LaTeX, CSV, XML, Markdown and JSON survive
//!   every output format: each output is read back with a reader for its
//!   format (serde_json, the csv crate, roxmltree, pdflatex when installed)
//!   and the names compared.
//! * A graph with no directed path from the exposure to the outcome says
//!   that the graph implies no effect, in every format.
//! * Lists cut at a cap say how many were shown and how many exist.
//!
//! The data are invented for these tests. Every run of the binary is
//! bounded by a timeout in the harness (the child is killed and the test
//! fails); nothing asserts on measured times.

use crate::helpers::{Run, run_bounded};
use serde_json::Value;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Duration;

/// Longest a single run may take before the harness kills it.
const LIMIT: Duration = Duration::from_secs(60);

/// Runs the binary in `dir`, killing it (and failing) after [`LIMIT`].
fn run(dir: &Path, args: &[&str]) -> Run {
    run_bounded(dir, args, LIMIT)
}

fn ok(dir: &Path, args: &[&str]) -> String {
    let r = run(dir, args);
    assert_eq!(r.code, 0, "{args:?}: {}", r.stderr);
    r.stdout
}

// The hostile names: exposure, outcome, two confounders, a mediator.
const X: &str = "traité|ß";
const Y: &str = "体重 😀";
const L: &str = "a_b%c&d#e$f{g}h~i^j\\k|l";
const C: &str = "x,\"y\" *z*";
const M: &str = "<m&n'o\">";

/// A name as a graph file writes it.
fn q(s: &str) -> String {
    format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
}

/// A CSV field (RFC 4180).
fn field(s: &str) -> String {
    if s.contains([',', '"', '\n']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// A small deterministic generator (invented data; a linear congruential
/// stream is enough here).
struct Lcg(u64);

impl Lcg {
    fn unit(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn normal(&mut self) -> f64 {
        let (a, b) = (self.unit(), self.unit());
        (-2.0 * a.ln()).sqrt() * (std::f64::consts::TAU * b).cos()
    }
}

/// Writes `d.csv` (columns L, C, X, M, Y; invented) and the graph `g.graph`.
fn hostile_study(dir: &Path) {
    let mut r = Lcg(20261203);
    let mut text = [L, C, X, M, Y].map(field).join(",") + "\n";
    for _ in 0..300 {
        let (l, c) = (r.normal(), r.normal());
        let p = 1.0 / (1.0 + (-(0.5 * l + 0.3 * c)).exp());
        let x = u8::from(r.unit() < p);
        let m = f64::from(x) + r.normal();
        let y = 2.0 * m + l + 0.5 * c + r.normal();
        text += &format!("{l:.4},{c:.4},{x},{m:.4},{y:.4}\n");
    }
    std::fs::write(dir.join("d.csv"), text).unwrap();
    let graph = format!(
        "{l} -> {x}\n{l} -> {y}\n{c} -> {x}\n{c} -> {y}\n{x} -> {m} -> {y}\n",
        l = q(L),
        c = q(C),
        x = q(X),
        y = q(Y),
        m = q(M)
    );
    std::fs::write(dir.join("g.graph"), graph).unwrap();
}

/// Every text of an SVG file, read with an XML parser.
fn svg_texts(path: &Path) -> String {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    doc.descendants()
        .filter_map(|n| n.text())
        .collect::<Vec<_>>()
        .join("\n")
}

/// The records of a CSV text (lines starting with `#` are comments).
fn csv_records(text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let mut rd = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .flexible(true)
        .from_reader(text.as_bytes());
    let headers = rd.headers().unwrap().iter().map(String::from).collect();
    let rows = rd
        .records()
        .map(|r| r.unwrap().iter().map(String::from).collect())
        .collect();
    (headers, rows)
}

/// Compiles `file` in `dir` with pdflatex when it is installed (required
/// with CAUSEWAY_REQUIRE_TEX=1).
fn compiles(dir: &Path, file: &str) {
    let required = std::env::var("CAUSEWAY_REQUIRE_TEX").is_ok_and(|v| v == "1");
    let found = Command::new("pdflatex")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success());
    if !found {
        assert!(!required, "CAUSEWAY_REQUIRE_TEX=1 but pdflatex is not installed");
        return;
    }
    let out = Command::new("pdflatex")
        .args(["-interaction=nonstopmode", "-halt-on-error", file])
        .current_dir(dir)
        .stdin(Stdio::null())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "pdflatex {file} failed: {}",
        String::from_utf8_lossy(&out.stdout)
    );
}

/// The pipe tables of a Markdown text: each a list of rows of cells,
/// split at pipes that are not escaped.
fn markdown_tables(text: &str) -> Vec<Vec<Vec<String>>> {
    let mut tables: Vec<Vec<Vec<String>>> = Vec::new();
    let mut inside = false;
    for l in text.lines() {
        if !l.starts_with("| ") {
            inside = false;
            continue;
        }
        if !inside {
            tables.push(Vec::new());
            inside = true;
        }
        let mut cells = vec![String::new()];
        let mut chars = l.trim().trim_start_matches('|').trim_end_matches('|').chars();
        while let Some(c) = chars.next() {
            match c {
                '\\' => match chars.next() {
                    Some('|') => cells.last_mut().unwrap().push('|'),
                    Some(o) => cells.last_mut().unwrap().extend(['\\', o]),
                    None => {}
                },
                '|' => cells.push(String::new()),
                c => cells.last_mut().unwrap().push(c),
            }
        }
        tables
            .last_mut()
            .unwrap()
            .push(cells.iter().map(|c| c.trim().to_string()).collect());
    }
    tables
}

#[test]
fn hostile_names_survive_every_format() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    hostile_study(dir);
    let base = [
        "--graph",
        "g.graph",
        "--data",
        "d.csv",
        "--exposure",
        X,
        "--outcome",
        Y,
    ];
    let with = |cmd: &str, extra: &[&str]| -> Vec<String> {
        let mut v = vec![cmd.to_string()];
        v.extend(base.iter().map(|s| s.to_string()));
        v.extend(extra.iter().map(|s| s.to_string()));
        v
    };
    let go = |args: Vec<String>| ok(dir, &args.iter().map(String::as_str).collect::<Vec<_>>());

    // identify: JSON through serde, text as written.
    let v: Value = serde_json::from_str(&go(with("identify", &["--format", "json"]))).unwrap();
    assert_eq!(
        (v["exposure"].as_str(), v["outcome"].as_str()),
        (Some(X), Some(Y))
    );
    assert_eq!(v["backdoor"]["optimal_set"], serde_json::json!([L, C]));
    assert_eq!(v["frontdoor"]["sets"], serde_json::json!([[M]]));
    assert_eq!(v["directed_path"], true);
    let text = go(with("identify", &[]));
    for name in [X, Y, M] {
        assert!(text.contains(&q(name)), "{name} in\n{text}");
    }

    // estimate in every format.
    let v: Value = serde_json::from_str(&go(with("estimate", &["--format", "json"]))).unwrap();
    assert_eq!(
        (v["exposure"].as_str(), v["outcome"].as_str()),
        (Some(X), Some(Y))
    );
    assert_eq!(v["identification"]["adjustment_set"], serde_json::json!([L, C]));
    assert_eq!(v["identification"]["directed_path"], true);
    let names: Vec<&str> = v["diagnostics"]["balance"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|b| b["covariate"].as_str())
        .collect();
    assert!(names.contains(&L) && names.contains(&C), "{names:?}");

    let (headers, rows) = csv_records(&go(with("estimate", &["--format", "csv"])));
    let col = |h: &str| headers.iter().position(|x| x == h).unwrap();
    assert!(!rows.is_empty());
    for r in &rows {
        assert_eq!((r[col("exposure")].as_str(), r[col("outcome")].as_str()), (X, Y));
        let mut set: Vec<&str> = r[col("set")].split(';').collect();
        set.sort_unstable();
        assert_eq!(set, [L, C]);
        assert_eq!(r[col("note")], "");
    }

    let text = go(with("estimate", &[]));
    assert!(text.contains(X) && text.contains(Y) && text.contains(L), "{text}");

    let md = go(with("estimate", &["--format", "markdown"]));
    let tables = markdown_tables(&md);
    assert!(!tables.is_empty());
    for rows in &tables {
        // Header, rule and body rows of one table have the same width: a
        // pipe in a name must not add a cell.
        assert!(rows.iter().all(|r| r.len() == rows[0].len()), "{rows:?}");
    }
    assert!(
        tables.iter().flatten().flatten().any(|c| c == L),
        "a covariate's name, pipe and all, in a table cell:\n{md}"
    );
    assert!(md.contains(Y));

    let tex = go(with("estimate", &["--format", "latex"]));
    assert!(tex.contains("traité\\textbar{}ß"), "{tex}");
    assert!(tex.contains("\\texttt{[U+4F53]}\\texttt{[U+91CD]} \\texttt{[U+1F600]}"));
    assert!(tex.contains(
        "a\\_b\\%c\\&d\\#e\\$f\\{g\\}h\\textasciitilde{}i\\textasciicircum{}j\\textbackslash{}k\\textbar{}l"
    ));
    std::fs::write(dir.join("estimate.tex"), &tex).unwrap();
    compiles(dir, "estimate.tex");

    // The bundle: every file read back with its reader.
    go(with("estimate", &["--out", "out", "--check"]));
    let out = dir.join("out");
    let v: Value = serde_json::from_str(&std::fs::read_to_string(out.join("results.json")).unwrap()).unwrap();
    assert_eq!(
        (v["exposure"].as_str(), v["outcome"].as_str()),
        (Some(X), Some(Y))
    );
    for f in std::fs::read_dir(&out).unwrap() {
        let p = f.unwrap().path();
        if p.extension().is_some_and(|e| e == "csv") {
            let (h, rows) = csv_records(&std::fs::read_to_string(&p).unwrap());
            assert!(rows.iter().all(|r| r.len() == h.len()), "{}", p.display());
        }
    }
    let (h, rows) = csv_records(&std::fs::read_to_string(out.join("balance.csv")).unwrap());
    let cov = h.iter().position(|x| x == "term").unwrap();
    let got: Vec<&str> = rows.iter().map(|r| r[cov].as_str()).collect();
    assert!(got.contains(&L) && got.contains(&C), "{got:?}");
    let figures: Vec<_> = std::fs::read_dir(out.join("figures"))
        .unwrap()
        .map(|f| f.unwrap().path())
        .collect();
    assert!(!figures.is_empty());
    for f in &figures {
        svg_texts(f);
    }
    let graph_svg = figures
        .iter()
        .find(|f| f.to_string_lossy().ends_with("-graph.svg"))
        .unwrap();
    let texts = svg_texts(graph_svg);
    for name in [X, Y, L, C, M] {
        assert!(texts.contains(name), "{name} in the graph figure");
    }
    let report = std::fs::read_to_string(out.join("report.md")).unwrap();
    assert!(report.contains(Y) && report.contains("traité\\|ß"));
    compiles(&out, "table-standalone.tex");

    // check in every format.
    let check = ["check", "--graph", "g.graph", "--data", "d.csv"];
    let with_format = |f: &str| {
        let mut v = check.to_vec();
        v.extend(["--format", f]);
        ok(dir, &v)
    };
    let v: Value = serde_json::from_str(&with_format("json")).unwrap();
    let mut named: Vec<String> = Vec::new();
    for i in v["implications"].as_array().unwrap() {
        named.push(i["a"].as_str().unwrap().into());
        named.push(i["b"].as_str().unwrap().into());
        named.extend(
            i["given"]
                .as_array()
                .unwrap()
                .iter()
                .map(|g| g.as_str().unwrap().to_string()),
        );
    }
    for name in [X, Y, L, C, M] {
        assert!(named.iter().any(|n| n == name), "{name} among {named:?}");
    }
    let (_, rows) = csv_records(&with_format("csv"));
    let cells: Vec<&String> = rows.iter().flatten().collect();
    // The reading table writes names as the graph file does (quoted).
    assert!(cells.iter().any(|c| c.contains(&q(M))) && cells.iter().any(|c| c.contains(&q(C))));
    let tex = with_format("latex");
    std::fs::write(dir.join("check.tex"), &tex).unwrap();
    compiles(dir, "check.tex");
    assert!(with_format("markdown").contains(Y));
    assert!(with_format("text").contains(&q(M)));

    // draw: SVG through an XML parser, DOT names quoted as the graph file.
    let svg = dir.join("drawn.svg");
    ok(
        dir,
        &[
            "draw",
            "--graph",
            "g.graph",
            "--exposure",
            X,
            "--outcome",
            Y,
            "--output",
            "drawn.svg",
        ],
    );
    let texts = svg_texts(&svg);
    for name in [X, Y, L, C, M] {
        assert!(texts.contains(name), "{name} drawn");
    }
    let dot = ok(dir, &["draw", "--graph", "g.graph", "--format", "dot"]);
    for name in [X, Y, L, C, M] {
        assert!(dot.contains(&q(name)), "{name} in DOT");
    }

    // compare: two graphs, one row per graph and method.
    std::fs::copy(dir.join("g.graph"), dir.join("h.graph")).unwrap();
    let cmp = |f: &str| {
        ok(
            dir,
            &[
                "compare",
                "--graph",
                "g.graph",
                "--graph",
                "h.graph",
                "--data",
                "d.csv",
                "--exposure",
                X,
                "--outcome",
                Y,
                "--format",
                f,
            ],
        )
    };
    let v: Value = serde_json::from_str(&cmp("json")).unwrap();
    for run in v["runs"].as_array().unwrap() {
        assert_eq!(
            (run["exposure"].as_str(), run["outcome"].as_str()),
            (Some(X), Some(Y))
        );
    }
    let (h, rows) = csv_records(&cmp("csv"));
    let e = h.iter().position(|x| x == "exposure").unwrap();
    assert!(rows.iter().all(|r| r[e] == X));
    let tex = cmp("latex");
    std::fs::write(dir.join("compare.tex"), &tex).unwrap();
    compiles(dir, "compare.tex");
}

#[test]
fn a_name_a_graph_file_cannot_write_is_named_as_such() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    std::fs::write(dir.join("g.graph"), "a -> b\n").unwrap();
    let r = run(
        dir,
        &[
            "identify",
            "--graph",
            "g.graph",
            "--exposure",
            "line\nbreak",
            "--outcome",
            "b",
        ],
    );
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("--exposure"), "{}", r.stderr);
    assert!(r.stderr.contains("line break"), "{}", r.stderr);
}

/// C confounds X and Y; X has no arrow towards Y.
fn no_path_study(dir: &Path) {
    let mut r = Lcg(7);
    let mut text = String::from("C,X,Y\n");
    for _ in 0..300 {
        let c = r.normal();
        let x = u8::from(r.unit() < 1.0 / (1.0 + (-c).exp()));
        let y = c + r.normal();
        text += &format!("{c:.4},{x},{y:.4}\n");
    }
    std::fs::write(dir.join("d.csv"), text).unwrap();
    std::fs::write(dir.join("none.graph"), "C -> X\nC -> Y\n").unwrap();
    std::fs::write(dir.join("path.graph"), "C -> X\nC -> Y\nX -> Y\n").unwrap();
}

#[test]
fn no_directed_path_is_said_in_every_format() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    no_path_study(dir);
    let said = "no directed path from X to Y";
    let args = |graph: &'static str, cmd: &'static str, format: &'static str| {
        let mut v = vec![cmd, "--graph", graph, "--data", "d.csv"];
        if cmd != "check" || format != "none" {
            v.extend(["--exposure", "X", "--outcome", "Y"]);
        }
        if format != "none" {
            v.extend(["--format", format]);
        }
        v
    };

    // identify
    let v: Value = serde_json::from_str(&ok(dir, &args("none.graph", "identify", "json"))).unwrap();
    assert_eq!(v["directed_path"], false);
    let text = ok(dir, &args("none.graph", "identify", "text"));
    assert!(text.contains(said) && text.contains("zero"), "{text}");
    let v: Value = serde_json::from_str(&ok(dir, &args("path.graph", "identify", "json"))).unwrap();
    assert_eq!(v["directed_path"], true);
    assert!(!ok(dir, &args("path.graph", "identify", "text")).contains(said));

    // estimate: the estimate is still reported, with the warning.
    let v: Value = serde_json::from_str(&ok(dir, &args("none.graph", "estimate", "json"))).unwrap();
    assert_eq!(v["identification"]["directed_path"], false);
    assert!(!v["estimates"].as_array().unwrap().is_empty());
    let warned = |v: &Value| {
        v["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|w| w.as_str().unwrap().contains(said))
    };
    assert!(warned(&v), "{}", v["warnings"]);
    for format in ["text", "markdown", "latex"] {
        let out = ok(dir, &args("none.graph", "estimate", format));
        assert!(out.contains(said), "{format}:\n{out}");
        assert!(out.contains("test of that claim"), "{format}");
    }
    let (h, rows) = csv_records(&ok(dir, &args("none.graph", "estimate", "csv")));
    let note = h.iter().position(|x| x == "note").unwrap();
    assert!(!rows.is_empty() && rows.iter().all(|r| r[note].contains(said)));
    let v: Value = serde_json::from_str(&ok(dir, &args("path.graph", "estimate", "json"))).unwrap();
    assert_eq!(v["identification"]["directed_path"], true);
    assert!(!warned(&v));

    // compare and check with the question named.
    let v: Value = serde_json::from_str(&ok(
        dir,
        &[
            "compare",
            "--graph",
            "none.graph",
            "--graph",
            "path.graph",
            "--data",
            "d.csv",
            "--exposure",
            "X",
            "--outcome",
            "Y",
            "--format",
            "json",
        ],
    ))
    .unwrap();
    let runs = v["runs"].as_array().unwrap();
    assert!(warned(&runs[0]) && !warned(&runs[1]));
    let text = ok(
        dir,
        &[
            "compare",
            "--graph",
            "none.graph",
            "--graph",
            "path.graph",
            "--data",
            "d.csv",
            "--exposure",
            "X",
            "--outcome",
            "Y",
        ],
    );
    assert!(text.contains(said), "{text}");
    let v: Value = serde_json::from_str(&ok(dir, &args("none.graph", "check", "json"))).unwrap();
    assert_eq!(v["adjustment"]["directed_path"], false);
    assert!(warned(&v));
    assert!(ok(dir, &args("none.graph", "check", "markdown")).contains(said));

    // The demo bundle of an estimate says it in report.md and results.json.
    let mut a = args("none.graph", "estimate", "none");
    a.extend(["--out", "bundle"]);
    ok(dir, &a);
    assert!(
        std::fs::read_to_string(dir.join("bundle/report.md"))
            .unwrap()
            .contains(said)
    );
    let (h, rows) = csv_records(&std::fs::read_to_string(dir.join("bundle/estimates.csv")).unwrap());
    let note = h.iter().position(|x| x == "note").unwrap();
    assert!(rows.iter().all(|r| r[note].contains(said)));
}

/// `k` backdoor chains A_i -> X, A_i -> B_i -> Y (each blocked by A_i or
/// B_i: 2^k minimal adjustment sets) and `k` front-door chains
/// X -> M_i -> N_i -> Y (2^k minimal front-door sets).
fn chains(k: usize) -> String {
    (0..k)
        .map(|i| format!("A{i} -> X\nA{i} -> B{i} -> Y\nX -> M{i} -> N{i} -> Y\n"))
        .collect()
}

#[test]
fn capped_lists_say_how_many_exist() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    let identify = |name: &str| -> (Value, String) {
        let json = ok(
            dir,
            &[
                "identify",
                "--graph",
                name,
                "--exposure",
                "X",
                "--outcome",
                "Y",
                "--format",
                "json",
            ],
        );
        let text = ok(
            dir,
            &["identify", "--graph", name, "--exposure", "X", "--outcome", "Y"],
        );
        (serde_json::from_str(&json).unwrap(), text)
    };

    // 2^7 = 128 minimal sets of each kind: 100 listed, 128 counted.
    std::fs::write(dir.join("seven.graph"), chains(7)).unwrap();
    let (v, text) = identify("seven.graph");
    let b = &v["backdoor"];
    assert_eq!(b["minimal_sets"].as_array().unwrap().len(), 100);
    assert_eq!(
        (
            b["minimal_sets_total"].as_u64(),
            b["minimal_sets_complete"].as_bool()
        ),
        (Some(128), Some(true))
    );
    let f = &v["frontdoor"];
    assert_eq!(f["sets"].as_array().unwrap().len(), 100);
    assert_eq!(
        (f["sets_total"].as_u64(), f["sets_complete"].as_bool()),
        (Some(128), Some(true))
    );
    assert!(
        text.contains("Minimal adjustment sets (100 shown of 128)"),
        "{text}"
    );
    assert!(
        text.contains("Minimal front-door sets (100 shown of 128)"),
        "{text}"
    );
    assert_eq!(
        (b["open_paths_total"].as_u64(), b["open_paths_complete"].as_bool()),
        (Some(7), Some(true))
    );
    assert!(text.contains("to be blocked (7):"), "{text}");

    // 2^10 = 1024 backdoor sets: the count stops at 1000, "at least".
    std::fs::write(
        dir.join("ten.graph"),
        (0..10)
            .map(|i| format!("A{i} -> X\nA{i} -> B{i} -> Y\n"))
            .collect::<String>()
            + "X -> Y\n",
    )
    .unwrap();
    let (v, text) = identify("ten.graph");
    let b = &v["backdoor"];
    assert_eq!(b["minimal_sets"].as_array().unwrap().len(), 100);
    assert_eq!(
        (
            b["minimal_sets_total"].as_u64(),
            b["minimal_sets_complete"].as_bool()
        ),
        (Some(1000), Some(false))
    );
    assert!(
        text.contains("Minimal adjustment sets (100 shown of at least 1000)"),
        "{text}"
    );

    // 8 x 8 = 64 open backdoor paths X <- U_i -> V_j -> Y: 50 listed.
    let mut g = String::from("X -> Y\n");
    for i in 0..8 {
        g += &format!("U{i} -> X\n");
        for j in 0..8 {
            g += &format!("U{i} -> V{j}\n");
        }
    }
    for j in 0..8 {
        g += &format!("V{j} -> Y\n");
    }
    std::fs::write(dir.join("paths.graph"), g).unwrap();
    let (v, text) = identify("paths.graph");
    let b = &v["backdoor"];
    assert_eq!(b["open_paths"].as_array().unwrap().len(), 50);
    assert_eq!(
        (b["open_paths_total"].as_u64(), b["open_paths_complete"].as_bool()),
        (Some(64), Some(true))
    );
    assert!(text.contains("to be blocked (50 shown of 64):"), "{text}");
    // The analyst's own (empty-handed) set leaves them all open.
    let json = ok(
        dir,
        &[
            "identify",
            "--graph",
            "paths.graph",
            "--exposure",
            "X",
            "--outcome",
            "Y",
            "--adjust",
            "V0",
            "--format",
            "json",
        ],
    );
    let v: Value = serde_json::from_str(&json).unwrap();
    let s = &v["given_set"];
    // V0 blocks the 8 paths through it, leaves the other 56 open and,
    // being a collider between every pair of U's, opens more.
    let total = s["open_paths_total"].as_u64().unwrap();
    assert!(total > 56 && s["open_paths_complete"] == true, "{s}");
    assert_eq!(s["open_paths"].as_array().unwrap().len(), 50);
    let text = ok(
        dir,
        &[
            "identify",
            "--graph",
            "paths.graph",
            "--exposure",
            "X",
            "--outcome",
            "Y",
            "--adjust",
            "V0",
        ],
    );
    assert!(
        text.contains(&format!("leaves open (50 shown of {total}):")),
        "{text}"
    );
}
