//! The larger coverage study: the seeded designs of the quick coverage
//! tests (tests/designs.rs, included below, so both use one definition),
//! repeated many more times, for every method. Prints, per design and
//! method, the mean estimate, its bias against the known truth, and the
//! share of 95% intervals that cover the truth with its Monte Carlo
//! standard error (sqrt(p (1 - p) / reps)).
//!
//! Run: `cargo bench --bench coverage` (set `CAUSEWAY_BENCH_REPS` for the
//! number of repetitions, default 1000).

#[path = "../tests/designs.rs"]
#[allow(dead_code)]
mod designs;

use causeway::data::Dataset;
use causeway::estimate::{Problem, Spec, method};
use std::time::Instant;

/// One design: its label, the true effect, a dataset per seed, and the
/// specification the analysis uses.
struct Design {
    label: &'static str,
    truth: f64,
    data: fn(u64) -> Dataset,
    spec: fn() -> Spec,
}

fn base() -> Spec {
    Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        covariates: vec!["x".into()],
        ..Spec::default()
    }
}

fn designs() -> Vec<Design> {
    vec![
        Design {
            label: "clustered rows (50 clusters of 12), cluster-robust",
            truth: 2.0,
            data: |s| designs::clustered(s, 50, 12),
            spec: || Spec {
                cluster: Some("site".into()),
                ..base()
            },
        },
        Design {
            label: "clustered rows (50 clusters of 12), rows taken as independent",
            truth: 2.0,
            data: |s| designs::clustered(s, 50, 12),
            spec: base,
        },
        Design {
            label: "survey sample of 800, weighted",
            truth: 2.0,
            data: |s| designs::surveyed(s, 800),
            spec: || Spec {
                weights: Some("w".into()),
                ..base()
            },
        },
        Design {
            label: "survey sample of 800, unweighted",
            truth: 2.0,
            data: |s| designs::surveyed(s, 800),
            spec: base,
        },
    ]
}

fn main() {
    let reps: u64 = std::env::var("CAUSEWAY_BENCH_REPS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1000);
    let methods = ["regression", "ipw", "aipw"];
    println!("{reps} repetitions per design; 95% intervals");
    println!(
        "{:<64} {:<11} {:>9} {:>9} {:>9} {:>7}",
        "design", "method", "mean", "bias", "coverage", "mc se"
    );
    for d in designs() {
        let t = Instant::now();
        let mut sum = [0.0; 3];
        let mut covered = [0u64; 3];
        for rep in 0..reps {
            let data = (d.data)(1_000_000 + rep);
            let p = Problem::build(&data, &(d.spec)()).expect("problem");
            for (k, m) in methods.iter().enumerate() {
                let e = method(m).unwrap().estimate(&p).expect("estimate");
                sum[k] += e.estimate;
                covered[k] += u64::from(e.ci[0] <= d.truth && d.truth <= e.ci[1]);
            }
        }
        for (k, m) in methods.iter().enumerate() {
            let mean = sum[k] / reps as f64;
            let c = covered[k] as f64 / reps as f64;
            println!(
                "{:<64} {:<11} {:>9.4} {:>9.4} {:>9.3} {:>7.3}",
                d.label,
                m,
                mean,
                mean - d.truth,
                c,
                (c * (1.0 - c) / reps as f64).sqrt()
            );
        }
        eprintln!("  ({} in {:.1?})", d.label, t.elapsed());
    }
}
