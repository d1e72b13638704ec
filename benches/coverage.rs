//! The larger coverage study: the seeded designs of the quick coverage
//! tests (tests/designs.rs, included below, so both use one definition),
//! repeated many more times, for every method. Prints, per design and
//! method, the mean estimate, its bias against the known truth, and the
//! share of 95% intervals that cover the truth with its Monte Carlo
//! standard error (sqrt(p (1 - p) / reps)).
//!
//! Run: `cargo bench --bench coverage` (set `CAUSEWAY_BENCH_REPS` for the
//! number of repetitions, default 5000; multiple imputation, which analyses
//! 20 datasets per repetition, runs a fifth as many).

#[path = "../tests/designs.rs"]
#[allow(dead_code)]
mod designs;

use causeway::analysis::{self, Options};
use causeway::data::Dataset;
use causeway::estimate::{Problem, Spec, method};
use causeway::plan::{AdjustChoice, Plan, Roles};
use causeway::problem::Missing;
use std::time::Instant;

const METHODS: [&str; 3] = ["regression", "ipw", "aipw"];

/// One method's estimate and interval.
type Row = (&'static str, f64, [f64; 2]);

/// One design: its label, the true effect, the repetitions as a share of
/// the default, and each method's estimate on the dataset of a seed.
struct Design {
    label: &'static str,
    truth: f64,
    share: f64,
    run: fn(u64) -> Vec<Row>,
}

fn spec(covariate: &str) -> Spec {
    Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        covariates: vec![covariate.into()],
        ..Spec::default()
    }
}

/// Every method on one problem.
fn each(data: &Dataset, spec: &Spec) -> Vec<Row> {
    let p = Problem::build(data, spec).expect("problem");
    METHODS
        .iter()
        .map(|m| {
            let e = method(m).unwrap().estimate(&p).expect("estimate");
            (*m, e.estimate, e.ci)
        })
        .collect()
}

/// Every method through the whole analysis (which imputes when asked).
fn analysed(data: &Dataset, missing: Missing) -> Vec<Row> {
    let g = causeway::graph::parse("l -> a\nl -> y\na -> y\n", "sim.graph")
        .unwrap()
        .graph;
    let cols: Vec<String> = ["l", "a", "y"].iter().map(|c| c.to_string()).collect();
    let roles = Roles::resolve(g, Some(&cols), Some("sim"), &[], "a", "y").unwrap();
    let plan = Plan::new(roles, &AdjustChoice::Optimal, false).unwrap();
    let opts = Options {
        model: Spec {
            missing,
            ..Spec::default()
        },
        threads: 1,
        ..Options::default()
    };
    let a = analysis::run(&plan, data, &opts).expect("analysis");
    METHODS
        .iter()
        .filter_map(|m| {
            let e = &a.estimates.iter().find(|e| e.estimate.method == *m)?.estimate;
            Some((*m, e.estimate, e.ci))
        })
        .collect()
}

fn designs() -> Vec<Design> {
    vec![
        Design {
            label: "clustered rows (50 clusters of 12), cluster-robust",
            truth: 2.0,
            share: 1.0,
            run: |s| {
                let sp = Spec {
                    cluster: Some("site".into()),
                    ..spec("x")
                };
                each(&designs::clustered(s, 50, 12), &sp)
            },
        },
        Design {
            label: "clustered rows (50 clusters of 12), rows taken as independent",
            truth: 2.0,
            share: 1.0,
            run: |s| each(&designs::clustered(s, 50, 12), &spec("x")),
        },
        Design {
            label: "survey sample of 800, weighted",
            truth: 2.0,
            share: 1.0,
            run: |s| {
                let sp = Spec {
                    weights: Some("w".into()),
                    ..spec("x")
                };
                each(&designs::surveyed(s, 800), &sp)
            },
        },
        Design {
            label: "survey sample of 800, unweighted",
            truth: 2.0,
            share: 1.0,
            run: |s| each(&designs::surveyed(s, 800), &spec("x")),
        },
        Design {
            label: "outcome missing given x (1000 rows), weighted",
            truth: 2.0,
            share: 1.0,
            run: |s| {
                let sp = Spec {
                    missing: Missing::Weight,
                    interact: vec!["x".into()],
                    ..spec("x")
                };
                each(&designs::outcome_missing(s, 1000), &sp)
            },
        },
        Design {
            label: "outcome missing given x (1000 rows), complete cases",
            truth: 2.0,
            share: 1.0,
            run: |s| {
                let sp = Spec {
                    interact: vec!["x".into()],
                    ..spec("x")
                };
                each(&designs::outcome_missing(s, 1000), &sp)
            },
        },
        Design {
            label: "covariate and outcome missing at random (600 rows), 20 imputations",
            truth: 2.0,
            share: 0.2,
            run: |s| analysed(&designs::missing_at_random(s, 600), Missing::Impute),
        },
        Design {
            label: "covariate and outcome missing at random (600 rows), complete cases",
            truth: 2.0,
            share: 1.0,
            run: |s| analysed(&designs::missing_at_random(s, 600), Missing::Complete),
        },
    ]
}

fn main() {
    let reps: u64 = std::env::var("CAUSEWAY_BENCH_REPS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(5000);
    println!("95% intervals; repetitions per design as shown");
    println!(
        "{:<70} {:>5} {:<11} {:>9} {:>9} {:>9} {:>7}",
        "design", "reps", "method", "mean", "bias", "coverage", "mc se"
    );
    for d in designs() {
        let t = Instant::now();
        let n = ((reps as f64 * d.share).round() as u64).max(1);
        let mut sum = [0.0; METHODS.len()];
        let mut covered = [0u64; METHODS.len()];
        let mut seen = [0u64; METHODS.len()];
        for rep in 0..n {
            for (m, est, ci) in (d.run)(1_000_000 + rep) {
                let k = METHODS.iter().position(|x| *x == m).unwrap();
                sum[k] += est;
                seen[k] += 1;
                covered[k] += u64::from(ci[0] <= d.truth && d.truth <= ci[1]);
            }
        }
        for (k, m) in METHODS.iter().enumerate() {
            if seen[k] == 0 {
                continue;
            }
            let runs = seen[k] as f64;
            let mean = sum[k] / runs;
            let c = covered[k] as f64 / runs;
            println!(
                "{:<70} {:>5} {:<11} {:>9.4} {:>9.4} {:>9.3} {:>7.3}",
                d.label,
                seen[k],
                m,
                mean,
                mean - d.truth,
                c,
                (c * (1.0 - c) / runs).sqrt()
            );
        }
        eprintln!("  ({} in {:.1?})", d.label, t.elapsed());
    }
}
