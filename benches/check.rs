//! Benchmark of `causeway::check::run`: the graph's testable implications,
//! each tested on the data, on random DAGs of 15, 30 and 60 nodes and
//! 25,000, 50,000 and 100,000 rows.
//!
//! Data generator (its own, seeded): nodes v1..vN in topological order; each
//! earlier node is a parent of a later one with probability 3 / (N - 1)
//! (about 1.5 parents a node on average). One node in eight is binary,
//! Bernoulli(expit(sum of parent terms)); the others are linear Gaussian,
//! sum of parent terms + N(0, 1). Each parent term is the parent's value
//! times a coefficient of random sign and size uniform in [0.3, 0.8],
//! divided by the square root of the node's number of parents so that
//! variances stay moderate. Written as CSV (4 decimals) in a temporary
//! folder; the smaller row counts are the first rows of the same stream.
//!
//! For each size it times (1) a plain CSV parse of the file (the `csv`
//! crate, every field parsed to f64: the baseline), (2) causeway's own
//! read (`Dataset::open`), and (3) `check::run` on the loaded data, and
//! prints the number of implications tested, the number rejected at
//! alpha 0.05 after Holm's adjustment (the data follow the graph, so few
//! or none), and check / parse.
//!
//! Run: `cargo bench --bench check`.

use causeway::check::{CheckOptions, run};
use causeway::data::{Dataset, ReadOptions};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::Write;
use std::path::Path;
use std::time::{Duration, Instant};

/// A random DAG: each node's parents (earlier nodes) with coefficients, and
/// whether it is binary.
struct Dag {
    parents: Vec<Vec<(usize, f64)>>,
    binary: Vec<bool>,
}

fn random_dag(nodes: usize, seed: u64) -> Dag {
    let mut r = ChaCha8Rng::seed_from_u64(seed);
    let p = (3.0 / (nodes - 1) as f64).min(1.0);
    let mut parents = vec![Vec::new(); nodes];
    for (j, pj) in parents.iter_mut().enumerate() {
        for i in 0..j {
            if r.random::<f64>() < p {
                let size = 0.3 + 0.5 * r.random::<f64>();
                let sign = if r.random::<bool>() { 1.0 } else { -1.0 };
                pj.push((i, sign * size));
            }
        }
        let k = pj.len().max(1) as f64;
        pj.iter_mut().for_each(|(_, b)| *b /= k.sqrt());
    }
    let binary = (0..nodes).map(|j| j % 8 == 3).collect();
    Dag { parents, binary }
}

fn graph_text(d: &Dag) -> String {
    let mut t = String::new();
    for (j, ps) in d.parents.iter().enumerate() {
        if ps.is_empty() {
            t.push_str(&format!("v{}\n", j + 1));
        }
        for (i, _) in ps {
            t.push_str(&format!("v{} -> v{}\n", i + 1, j + 1));
        }
    }
    t
}

fn write_csv(d: &Dag, rows: usize, seed: u64, path: &Path) {
    let n = d.parents.len();
    let f = std::fs::File::create(path).expect("create bench data");
    let mut w = std::io::BufWriter::with_capacity(1 << 20, f);
    let header: Vec<String> = (1..=n).map(|j| format!("v{j}")).collect();
    writeln!(w, "{}", header.join(",")).unwrap();
    let mut r = ChaCha8Rng::seed_from_u64(seed);
    let mut x = vec![0.0; n];
    let mut line = String::with_capacity(16 * n);
    for _ in 0..rows {
        line.clear();
        for j in 0..n {
            let lin: f64 = d.parents[j].iter().map(|&(i, b)| b * x[i]).sum();
            x[j] = if d.binary[j] {
                f64::from(u8::from(r.random::<f64>() < 1.0 / (1.0 + (-lin).exp())))
            } else {
                let e: f64 = r.sample(rand_distr::StandardNormal);
                lin + e
            };
            if j > 0 {
                line.push(',');
            }
            if d.binary[j] {
                line.push_str(if x[j] == 1.0 { "1" } else { "0" });
            } else {
                line.push_str(&format!("{:.4}", x[j]));
            }
        }
        writeln!(w, "{line}").unwrap();
    }
    w.flush().unwrap();
}

/// The baseline: read every record with the `csv` crate and parse each
/// field to f64; returns the sum so the work is not optimized away.
fn plain_parse(path: &Path) -> f64 {
    let mut rd = csv::Reader::from_path(path).expect("open csv");
    let mut rec = csv::ByteRecord::new();
    let mut sum = 0.0;
    while rd.read_byte_record(&mut rec).expect("record") {
        for field in rec.iter() {
            let v: f64 = std::str::from_utf8(field).unwrap().parse().unwrap();
            sum += v;
        }
    }
    sum
}

fn secs(d: Duration) -> f64 {
    d.as_secs_f64()
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    println!(
        "{:>5} {:>7} {:>6} {:>8} {:>9} {:>9} {:>9} {:>12}",
        "nodes", "rows", "tests", "rejected", "parse s", "read s", "check s", "check/parse"
    );
    for nodes in [15usize, 30, 60] {
        let dag = random_dag(nodes, 7000 + nodes as u64);
        let g = causeway::graph::parse(&graph_text(&dag), "bench.graph")
            .expect("graph")
            .graph;
        for rows in [25_000usize, 50_000, 100_000] {
            let path = dir.path().join(format!("check-{nodes}-{rows}.csv"));
            write_csv(&dag, rows, 42, &path);
            let t = Instant::now();
            let sum = plain_parse(&path);
            let parse = t.elapsed();
            assert!(sum.is_finite());
            let t = Instant::now();
            let data = Dataset::open(&path, &ReadOptions::default()).expect("read");
            let read = t.elapsed();
            let t = Instant::now();
            let report = run(&g, &data, &CheckOptions::default()).expect("check");
            let check = t.elapsed();
            println!(
                "{nodes:>5} {rows:>7} {:>6} {:>8} {:>9.3} {:>9.3} {:>9.3} {:>12.1}",
                report.tested,
                report.rejected,
                secs(parse),
                secs(read),
                secs(check),
                secs(check) / secs(parse)
            );
            let _ = std::fs::remove_file(&path);
        }
    }
    println!("threads {}", rayon::current_num_threads());
}
