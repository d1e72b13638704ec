//! Using causeway as a library: identify the effect under a graph, then
//! estimate it on the (invented) demo data.
//!
//! Run from the repository root: `cargo run --release --example library`

use causeway::analysis::{self, Options};
use causeway::data::{Dataset, ReadOptions};
use causeway::graph;
use causeway::plan::{AdjustChoice, Plan, Roles};

fn main() -> causeway::Result<()> {
    let text = std::fs::read_to_string("demo-data/main.graph")
        .map_err(|e| causeway::Error::io("demo-data/main.graph", e))?;
    let g = graph::parse(&text, "demo-data/main.graph")?.graph;
    let csv = std::path::Path::new("demo-data/study.csv");
    let columns = Dataset::read_header(
        std::fs::File::open(csv).map_err(|e| causeway::Error::io(csv, e))?,
        "study.csv",
        None,
    )?;
    let roles = Roles::resolve(g, Some(&columns), Some("study.csv"), &[], "enrolled", "pain_days")?;
    let plan = Plan::new(roles, &AdjustChoice::Optimal, false)?;
    println!(
        "strategy: {:?}, adjustment set: {:?}",
        plan.strategy, plan.adjustment_set
    );
    let mut opts = Options::default();
    opts.model.categorical = vec!["role".into()];
    let data = Dataset::open(
        csv,
        &ReadOptions {
            keep: Some(analysis::columns(&plan, &opts)),
            ..ReadOptions::default()
        },
    )?;
    let result = analysis::run(&plan, &data, &opts)?;
    for item in &result.estimates {
        let e = &item.estimate;
        println!(
            "{:<12} {:>8.3}  ({:.3} to {:.3})",
            e.method, e.estimate, e.ci[0], e.ci[1]
        );
    }
    println!("(invented data; an estimate is only as valid as the declared graph and its assumptions)");
    Ok(())
}
