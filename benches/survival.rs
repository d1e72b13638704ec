//! Benchmark of time-to-event analysis: 100,000 people with 5 baseline
//! covariates, follow-up of up to 120 periods (monthly, with censoring), the
//! IP-weighted and the standardised (g-formula) pooled logistic hazard
//! curves with horizons at 60 and 120 periods, and 200 bootstrap replicates
//! that refit every model, on 2 worker threads.
//!
//! Its own seeded generator: L1..L4 ~ N(0, 1), L5 ~ Bernoulli(0.4); the
//! exposure A ~ Bernoulli(expit(-0.3 + 0.4 L1 - 0.3 L2 + 0.5 L5)); a monthly
//! event hazard expit(-5.5 + 0.3 A + 0.3 L1 + 0.2 L3 + 0.004 month) and a
//! monthly drop-out hazard of 0.004; follow-up ends at 120. Times are whole
//! months (the period is 1).
//!
//! Times `causeway::analysis::run` (the pipeline of `causeway estimate`)
//! without and with the replicates. Compare with the same analysis in
//! pandas + statsmodels, bench/python/survival_reference.py (run it with
//! `bash bench/python/run.sh survival` on the CSV this benchmark writes; see
//! bench/README.md), and report the ratio.
//!
//! Run: `cargo bench --bench survival` (`CAUSEWAY_BENCH_ROWS`,
//! `CAUSEWAY_BENCH_REPLICATES`, `CAUSEWAY_BENCH_THREADS`,
//! `CAUSEWAY_BENCH_REPEAT` as for the other benchmarks).

use causeway::analysis::{self, Options};
use causeway::data::{Dataset, ReadOptions};
use causeway::plan::{AdjustChoice, Plan, Roles};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::Write;
use std::path::Path;
use std::time::Instant;

fn env_usize(name: &str, default: usize) -> usize {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

fn expit(x: f64) -> f64 {
    1.0 / (1.0 + (-x).exp())
}

/// Writes the seeded study (see the module note) to `path`.
fn generate(path: &Path, rows: usize) {
    let mut r = ChaCha8Rng::seed_from_u64(20261203);
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).expect("create"));
    writeln!(out, "l1,l2,l3,l4,l5,a,event,month").expect("write");
    for _ in 0..rows {
        let l: Vec<f64> = (0..4)
            .map(|_| r.sample::<f64, _>(rand_distr::StandardNormal))
            .collect();
        let l5 = f64::from(u8::from(r.random::<f64>() < 0.4));
        let a = f64::from(u8::from(
            r.random::<f64>() < expit(-0.3 + 0.4 * l[0] - 0.3 * l[1] + 0.5 * l5),
        ));
        let (mut month, mut event) = (120, 0);
        for k in 0..120 {
            let h = expit(-5.5 + 0.3 * a + 0.3 * l[0] + 0.2 * l[2] + 0.004 * k as f64);
            if r.random::<f64>() < h {
                (month, event) = (k + 1, 1);
                break;
            }
            if r.random::<f64>() < 0.004 {
                month = k + 1;
                break;
            }
        }
        writeln!(
            out,
            "{:.6},{:.6},{:.6},{:.6},{l5},{a},{event},{month}",
            l[0], l[1], l[2], l[3]
        )
        .expect("write");
    }
}

fn main() {
    let rows = env_usize("CAUSEWAY_BENCH_ROWS", 100_000);
    let replicates = env_usize("CAUSEWAY_BENCH_REPLICATES", 200);
    let threads = env_usize("CAUSEWAY_BENCH_THREADS", 2);
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"));
    let path = dir.join(format!("survival-bench-{rows}.csv"));
    if !path.exists() {
        generate(&path, rows);
    }
    println!("data {} ({rows} rows)", path.display());
    let t0 = Instant::now();
    let data = Dataset::open(&path, &ReadOptions::default()).expect("parse");
    let parse = t0.elapsed();
    let mut graph = String::from("a -> event\n");
    for c in ["l1", "l2", "l3", "l4", "l5"] {
        graph.push_str(&format!("{c} -> a\n{c} -> event\n"));
    }
    let g = causeway::graph::parse(&graph, "bench.graph")
        .expect("graph")
        .graph;
    let roles = Roles::resolve(g, Some(data.names()), Some("bench"), &[], "a", "event").expect("roles");
    let plan = Plan::new(roles, &AdjustChoice::Optimal, false).expect("plan");
    let base = Options {
        methods: Some(vec!["ipw".into(), "regression".into()]),
        model: causeway::estimate::Spec {
            time: Some("month".into()),
            horizon: Some(vec![60.0, 120.0]),
            period: Some(1.0),
            ..Default::default()
        },
        threads,
        ..Options::default()
    };
    let t1 = Instant::now();
    let plain = analysis::run(&plan, &data, &base).expect("analysis");
    let analytic = t1.elapsed();
    let opts = Options {
        bootstrap: replicates,
        ..base.clone()
    };
    let repeat = env_usize("CAUSEWAY_BENCH_REPEAT", 3).max(1);
    let mut runs = Vec::new();
    let mut boot = None;
    for _ in 0..repeat {
        let t2 = Instant::now();
        boot = Some(analysis::run(&plan, &data, &opts).expect("bootstrapped analysis"));
        runs.push(t2.elapsed());
    }
    let boot = boot.expect("one run");
    let best = *runs.iter().min().expect("one run");
    println!("rows {rows}, replicates {replicates}, threads {threads}");
    for c in &plain.curves {
        if let Some(p) = c.points.iter().find(|p| p.x == 120.0) {
            println!(
                "{:>10} {:>9}: survival at 120 {:.6} (sandwich SE {:.5})",
                c.method,
                c.level.as_deref().unwrap_or("-"),
                p.estimate,
                p.std_error
            );
        }
    }
    for e in &boot.estimates {
        if let Some(b) = &e.bootstrap {
            println!(
                "{:>10} {} {} at {}: {:.6}, bootstrap CI {:.5} to {:.5} ({} failed)",
                e.estimate.method,
                e.estimate.measure.map_or("", |m| m.words()),
                e.estimate.scale,
                e.estimate.horizon.map_or(f64::NAN, |h| h),
                e.estimate.estimate,
                b.ci[0],
                b.ci[1],
                b.failed
            );
        }
    }
    println!("parse CSV                   {parse:.2?}");
    println!("analysis, analytic only     {analytic:.2?}");
    println!(
        "analysis with {replicates} replicates {best:.2?} (best of {repeat}: {})",
        runs.iter()
            .map(|t| format!("{t:.2?}"))
            .collect::<Vec<_>>()
            .join(", ")
    );
    println!(
        "compare: bash bench/python/run.sh survival {}   (ratio: python time / {:.3} s)",
        path.display(),
        best.as_secs_f64()
    );
}
