//! Timing of `check` (run with `cargo bench --bench check`): data simulated
//! by `causeway::simulate` from seeded random graphs with edge coefficients
//! (average degree 3; about 10% binary nodes, some categorical roots with 3
//! levels, one node in 20 unobserved), written to a CSV file, then read and
//! checked. Sizes: 30 nodes with 25,000, 50,000 and 100,000 rows, and 15 and
//! 60 nodes with 100,000 rows. The baseline is a plain parse of the same CSV
//! (`Dataset::open`). Each timing is the median of three runs.
//! `cargo bench --bench check -- NODES ROWS` times one size only.
//! `cargo bench --bench check -- NODES ROWS` times one size only.

use causeway::check::{CheckOptions, run};
use causeway::data::{Dataset, ReadOptions};
use causeway::graph::parse;
use causeway::simulate::{simulate, write_csv};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::fmt::Write;
use std::time::{Duration, Instant};

/// A random graph file with coefficients and node attributes.
fn graph_text(n: usize, seed: u64) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let p = (3.0 / (n as f64 - 1.0)).min(1.0);
    let mut parents: Vec<Vec<usize>> = vec![Vec::new(); n];
    for (j, pa) in parents.iter_mut().enumerate() {
        for i in 0..j {
            if rng.random_bool(p) {
                pa.push(i);
            }
        }
    }
    // Kinds: categorical roots (one root in three), binary (one node in
    // ten), latent (one in twenty), the rest continuous.
    let kind: Vec<char> = parents
        .iter()
        .map(|pa| {
            if pa.is_empty() && rng.random_bool(1.0 / 3.0) {
                'c'
            } else if rng.random_bool(0.1) {
                'b'
            } else if rng.random_bool(0.05) {
                'l'
            } else {
                'x'
            }
        })
        .collect();
    let mut s = String::new();
    for (v, k) in kind.iter().enumerate() {
        let _ = match k {
            'c' => writeln!(s, "v{v} : levels(p 0.4, q 0.35, r 0.25)"),
            'b' => writeln!(s, "v{v} : binary intercept=0"),
            'l' => writeln!(s, "v{v} : latent"),
            _ => writeln!(s, "v{v} : sd=1"),
        };
    }
    for (v, pa) in parents.iter().enumerate() {
        let scale = 0.8 / (pa.len().max(1) as f64).sqrt();
        for &u in pa {
            let mut c = || {
                let m = rng.random_range(0.3..1.0) * scale;
                if rng.random_bool(0.5) { m } else { -m }
            };
            let _ = if kind[u] == 'c' {
                writeln!(s, "v{u} -> v{v} (q {:.3}, r {:.3})", c(), c())
            } else {
                writeln!(s, "v{u} -> v{v} ({:.3})", c())
            };
        }
    }
    s
}

fn median(mut t: Vec<Duration>) -> Duration {
    t.sort();
    t[t.len() / 2]
}

fn time<T>(f: impl Fn() -> T) -> (Duration, T) {
    let mut times = Vec::new();
    let mut last = None;
    for _ in 0..3 {
        let t0 = Instant::now();
        last = Some(f());
        times.push(t0.elapsed());
    }
    (median(times), last.unwrap())
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    println!(
        "{:>5} {:>8} {:>7} {:>6} {:>9} {:>10} {:>10} {:>7}",
        "nodes", "rows", "claims", "tested", "parse", "check", "total", "ratio"
    );
    // `cargo bench --bench check -- NODES ROWS` times one size only.
    let args: Vec<usize> = std::env::args().skip(1).filter_map(|a| a.parse().ok()).collect();
    let sizes = match args[..] {
        [n, rows] => vec![(n, rows)],
        _ => vec![
            (30, 25_000),
            (30, 50_000),
            (30, 100_000),
            (15, 100_000),
            (60, 100_000),
        ],
    };
    for (n, rows) in sizes {
        let text = graph_text(n, 7 + n as u64);
        let g = parse(&text, "bench.graph").expect("graph parses").graph;
        let sim = simulate(&g, rows, 11).expect("simulation");
        let path = dir.path().join(format!("bench_{n}_{rows}.csv"));
        write_csv(&sim, std::fs::File::create(&path).expect("csv file")).expect("csv written");
        let (parse_t, _) = time(|| Dataset::open(&path, &ReadOptions::default()).expect("csv reads"));
        let data = Dataset::open(&path, &ReadOptions::default()).expect("csv reads");
        let opts = CheckOptions::default();
        let (check_t, report) = time(|| run(&g, &data, &opts).expect("check runs"));
        let total = parse_t + check_t;
        println!(
            "{n:>5} {rows:>8} {:>7} {:>6} {:>8.3}s {:>9.3}s {:>9.3}s {:>6.1}x",
            report.tested + report.not_tested.len(),
            report.tested,
            parse_t.as_secs_f64(),
            check_t.as_secs_f64(),
            total.as_secs_f64(),
            total.as_secs_f64() / parse_t.as_secs_f64()
        );
    }
}
