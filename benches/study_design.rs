//! Benchmark of the study-design options on 100,000 rows: the plain
//! estimate, clustered rows (`--cluster`), sampling weights (`--weights`)
//! and multiple imputation (`--missing impute --imputations 20`), each
//! timed as the whole `causeway estimate` command and reported as a ratio
//! to the plain run timed beside it.
//!
//! Data: the seeded generator shared by the estimation benchmarks
//! (benches/common/gen.rs: 20 covariates, binary exposure `a`, continuous
//! outcome `y`), with three columns added by this file's own seeded
//! step: `site` (200 sites of unequal size), `w` (sampling weights between
//! 0.5 and 4) and, in a second file, about 8% of `c1` and 5% of `y`
//! blanked at random given `c2` (missing at random).
//!
//! Run: `cargo bench --bench study_design` (set `CAUSEWAY_BENCH_ROWS` for
//! another size, `CAUSEWAY_BENCH_REPEAT` for the number of timed runs of
//! each command, best reported; `CAUSEWAY_BENCH_IMPUTATIONS` for another M).

#[path = "common/gen.rs"]
mod generator;

use generator::{categorical, covariates, generate};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::{BufRead, Write};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

fn env_usize(name: &str, default: usize) -> usize {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// Adds `site` and `w` to every row; with `blank`, also blanks cells of
/// `c1` and `y` at random given `c2`.
fn derive(from: &Path, to: &Path, blank: bool) {
    let input = std::io::BufReader::new(std::fs::File::open(from).expect("bench data"));
    let mut out = std::io::BufWriter::new(std::fs::File::create(to).expect("derived data"));
    let mut r = ChaCha8Rng::seed_from_u64(20261203);
    let mut lines = input.lines();
    let header = lines.next().unwrap().unwrap();
    let names: Vec<&str> = header.split(',').collect();
    let col = |n: &str| names.iter().position(|&c| c == n).unwrap();
    let (c1, c2, y) = (col("c1"), col("c2"), col("y"));
    writeln!(out, "{header},site,w").unwrap();
    for line in lines {
        let line = line.unwrap();
        let mut cells: Vec<String> = line.split(',').map(str::to_string).collect();
        // Site sizes vary: the square of a uniform draw spreads rows unevenly.
        let u: f64 = r.random();
        let site = 1 + (u * u * 200.0) as u32;
        let w = 0.5 + 3.5 * r.random::<f64>();
        if blank {
            let z: f64 = cells[c2].parse().unwrap();
            let p = 1.0 / (1.0 + (-(-2.6 + 0.8 * z)).exp());
            if r.random::<f64>() < p {
                cells[c1].clear();
            }
            if r.random::<f64>() < p * 0.6 {
                cells[y].clear();
            }
        }
        writeln!(out, "{},{site},{w:.3}", cells.join(",")).unwrap();
    }
    out.flush().unwrap();
}

fn graph_text() -> String {
    let mut t = String::from("a -> y\n");
    for c in covariates() {
        t.push_str(&format!("{c} -> a\n{c} -> y\n"));
    }
    t
}

/// Best wall time of `repeat` runs of `causeway estimate` with `extra`.
fn time(graph: &Path, data: &Path, extra: &[&str], repeat: usize) -> Duration {
    let cats = categorical().join(",");
    let mut best = Duration::MAX;
    for _ in 0..repeat {
        let t = Instant::now();
        let out = Command::new(env!("CARGO_BIN_EXE_causeway"))
            .args(["estimate", "--graph"])
            .arg(graph)
            .arg("--data")
            .arg(data)
            .args(["--exposure", "a", "--outcome", "y", "--categorical", &cats])
            .args(["--format", "json", "--quiet"])
            .args(extra)
            .output()
            .expect("run causeway");
        let took = t.elapsed();
        assert!(
            out.status.success(),
            "causeway {extra:?} failed: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        best = best.min(took);
    }
    best
}

fn main() {
    let rows = env_usize("CAUSEWAY_BENCH_ROWS", 100_000);
    let repeat = env_usize("CAUSEWAY_BENCH_REPEAT", 3);
    let m = env_usize("CAUSEWAY_BENCH_IMPUTATIONS", 20).to_string();
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"));
    let base = dir.join(format!("estimate-bench-{rows}.csv"));
    if !base.exists() {
        generate(&base, rows);
    }
    let full: PathBuf = dir.join(format!("study-design-bench-{rows}.csv"));
    let holes: PathBuf = dir.join(format!("study-design-missing-bench-{rows}.csv"));
    if !full.exists() {
        derive(&base, &full, false);
    }
    if !holes.exists() {
        derive(&base, &holes, true);
    }
    let graph = dir.join("study-design-bench.graph");
    std::fs::write(&graph, graph_text()).unwrap();

    println!("{rows} rows, 20 covariates, methods regression, ipw, aipw; best of {repeat}");
    let runs: Vec<(&str, &Path, Vec<&str>)> = vec![
        ("plain", &full, vec![]),
        ("--cluster site", &full, vec!["--cluster", "site"]),
        ("--weights w", &full, vec!["--weights", "w"]),
        ("plain, complete cases of the file with holes", &holes, vec![]),
        (
            "--missing impute",
            &holes,
            vec!["--missing", "impute", "--imputations", &m],
        ),
    ];
    let mut plain = None;
    let mut plain_holes = None;
    for (label, data, extra) in &runs {
        let t = time(&graph, data, extra, repeat);
        let reference = if *data == holes.as_path() {
            *plain_holes.get_or_insert(t)
        } else {
            *plain.get_or_insert(t)
        };
        println!(
            "{label:<48} {:>9.3} s   ratio to plain {:>6.2}",
            t.as_secs_f64(),
            t.as_secs_f64() / reference.as_secs_f64()
        );
    }
}
