//! `causeway simulate`: data drawn from the structural model written in a
//! graph file, and the true effect of an exposure on an outcome.

use super::bar;
use super::common::{
    load_graph, print_with, refuse_inputs, resolve, split_list, write_atomic, write_atomic_with,
};
use causeway::error::Setting;
use causeway::progress::Reporter;
use causeway::resources::{Demand, check_disk};
use causeway::simulate::{Contrast, Method, Model, Options, ParquetSink, ROW_BLOCK, Truth, TruthOptions};
use causeway::{Error, Result};
use std::path::PathBuf;

/// Draw data from the structural model that the graph file writes down, and
/// report the true effect of the exposure on the outcome.
///
/// Every edge into a node needs a coefficient, written after the edge's
/// target: 'age -> pain_days (0.05)'; for a categorical parent one per level
/// other than its first: 'role -> pain_days (warehouse 1.2, driver 2)'. Node
/// attributes shape each variable: 'enrolled : binary intercept=-2.3',
/// 'age : intercept=42 sd=9.5 round=0 min=22 max=64',
/// 'role : levels(office 0.5, warehouse 0.3, driver 0.2)',
/// 'motivation : latent'. A continuous node is linear in its parents plus
/// Gaussian noise (sd 1 unless written), then rounded and clipped; a binary
/// node is logistic in its parents; a categorical node must be a root. Latent
/// nodes are simulated but left out of the CSV, whose columns follow the
/// order in which the graph file first names each observed node.
///
/// The true effect (X = 1 vs X = 0 for a binary exposure, a one-unit increase
/// for a continuous one) comes from the path rule (Wright 1934: the sum over
/// directed paths of the products of their coefficients) when every node on
/// those paths is linear Gaussian without rounding or clipping; otherwise from
/// Monte Carlo under both interventions with common random numbers.
///
/// The same seed gives the same bytes on every platform.
///
/// Example (run from the repository root):
///   causeway simulate --graph demo-data/study.graph --rows 3000 --seed 20240611 \
///       --exposure enrolled --outcome pain_days --truth truth.json --output study.csv
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The graph file, with edge coefficients and node attributes.
    #[arg(long, value_name = "FILE")]
    graph: PathBuf,
    /// Number of rows to draw. They are written as they are drawn, so any
    /// number fits in memory; with --output, the rows must fit on the disk.
    #[arg(long, value_name = "N")]
    rows: u64,
    /// Seed of the random number generator.
    #[arg(long, value_name = "N")]
    seed: u64,
    /// The exposure whose true effect to report (with --outcome).
    #[arg(long, value_name = "NAME", requires = "outcome")]
    exposure: Option<String>,
    /// The outcome whose true effect to report (with --exposure).
    #[arg(long, value_name = "NAME", requires = "exposure")]
    outcome: Option<String>,
    /// Write the true effect to this file as JSON.
    #[arg(long, value_name = "FILE", requires = "exposure")]
    truth: Option<PathBuf>,
    /// Write the data to this file instead of standard output: Parquet
    /// when its name ends in .parquet, else CSV.
    #[arg(long, short, value_name = "FILE")]
    output: Option<PathBuf>,
    /// Coefficient for edges written without one (otherwise such an edge is an error).
    #[arg(long, value_name = "NUMBER", allow_negative_numbers = true)]
    default_coef: Option<f64>,
    /// More nodes to leave out of the CSV, comma-separated.
    #[arg(long, value_name = "A,B")]
    latent: Option<String>,
    /// Monte Carlo draws for the true effect, when the path rule does not apply.
    #[arg(long, value_name = "N", default_value_t = 1_000_000)]
    mc_draws: usize,
    /// Print no warnings and no true effect on standard error.
    #[arg(long)]
    quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    if a.rows == 0 {
        return Err(Error::input("--rows must be at least 1"));
    }
    if a.mc_draws < 2 {
        return Err(Error::input("--mc-draws must be at least 2"));
    }
    if let (Some(t), Some(o)) = (&a.truth, &a.output)
        && t == o
    {
        return Err(Error::input(format!(
            "--truth and --output are the same file ({}); give two files",
            t.display()
        )));
    }
    // Refuse an output onto the graph file before anything is written.
    for path in a.output.iter().chain(&a.truth) {
        refuse_inputs(path, &[&a.graph])?;
    }
    let mut g = load_graph(&a.graph, a.quiet)?;
    for name in a.latent.as_deref().map(split_list).unwrap_or_default() {
        let v = resolve(&g, &name, Setting::Latent)?;
        g.set_latent(v, true);
    }
    if g.observed().is_empty() {
        return Err(Error::input(format!(
            "{}: every node is latent, so the CSV would have no columns",
            a.graph.display()
        )));
    }
    let roles = match (&a.exposure, &a.outcome) {
        (Some(x), Some(y)) => Some((
            resolve(&g, x, Setting::Exposure)?,
            resolve(&g, y, Setting::Outcome)?,
        )),
        _ => None,
    };
    let model = Model::new(
        &g,
        &Options {
            default_coef: a.default_coef,
        },
    )?;
    if !a.quiet {
        for e in model.defaulted_edges() {
            eprintln!(
                "causeway: warning: edge {e} has no coefficient; using --default-coef {}",
                a.default_coef.unwrap_or_default()
            );
        }
    }
    // A first block drawn ahead finds an overflow before anything is
    // written, and measures the bytes of a row for the disk-space check.
    let first = a.rows.min(ROW_BLOCK as u64);
    let sample = csv_bytes(&model, first, a.seed)?;
    if let Some(path) = &a.output {
        let header = csv_bytes(&model, 0, a.seed)?;
        check_disk(
            &Demand {
                setting: Setting::Rows,
                count: a.rows,
                unit: "rows",
                per_unit: (sample - header).div_ceil(first),
                fixed: header,
                least: 1,
            },
            path,
        )?;
    }
    let truth = match roles {
        Some((x, y)) => Some(model.true_effect_reported(
            x,
            y,
            &TruthOptions {
                mc_draws: a.mc_draws,
                seed: a.seed,
            },
            &bar::reporter(a.quiet),
        )?),
        None => None,
    };
    if let (Some(path), Some(t)) = (&a.truth, &truth) {
        let mut json = serde_json::to_string_pretty(t)
            .map_err(|e| Error::Internal(format!("could not write the truth as JSON: {e}")))?;
        json.push('\n');
        let mut inputs = vec![a.graph.as_path()];
        if let Some(o) = &a.output {
            inputs.push(o.as_path());
        }
        write_atomic(path, json.as_bytes(), &inputs)?;
    }
    let progress = bar::reporter(a.quiet);
    match &a.output {
        Some(path) => {
            let mut inputs = vec![a.graph.as_path()];
            if let Some(t) = &a.truth {
                inputs.push(t.as_path());
            }
            let name = path.display().to_string();
            let parquet = path
                .extension()
                .is_some_and(|e| e.eq_ignore_ascii_case("parquet"));
            write_atomic_with(path, &inputs, |w| {
                if parquet {
                    model.write_to(a.rows, a.seed, &mut ParquetSink::new(w), &name, &progress)
                } else {
                    model.write_rows(a.rows, a.seed, w, &name, &progress)
                }
            })?
        }
        None => print_with(|w| model.write_rows(a.rows, a.seed, w, "standard output", &progress))?,
    }
    if let (Some(t), false) = (&truth, a.quiet) {
        eprint!("{}", describe(t));
    }
    Ok(0)
}

/// The bytes of the CSV of the first `rows` rows (the header alone for 0).
fn csv_bytes(model: &Model, rows: u64, seed: u64) -> Result<u64> {
    let mut count = Count(0);
    model.write_rows(rows, seed, &mut count, "CSV", &Reporter::none())?;
    Ok(count.0)
}

/// A writer that only counts bytes.
struct Count(u64);

impl std::io::Write for Count {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0 += buf.len() as u64;
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// Compact number for people (JSON keeps full precision).
fn short(x: f64) -> String {
    let s = format!("{:.6}", x);
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" { "0".into() } else { s.into() }
}

/// The true effect as text for standard error.
fn describe(t: &Truth) -> String {
    let contrast = match t.contrast {
        Contrast::OneVsZero => format!("{x} = 1 vs {x} = 0", x = t.exposure),
        Contrast::UnitIncrease => format!("a one-unit increase in {}", t.exposure),
    };
    let mut s = format!(
        "true effect of {} on {} ({contrast}): {}\n",
        t.exposure,
        t.outcome,
        short(t.effect)
    );
    match t.method {
        Method::PathRule if t.paths_total == 0 => {
            s += &format!(
                "  no directed path from {} to {}: the model implies no effect\n",
                t.exposure, t.outcome
            );
        }
        Method::PathRule => {
            s += "  by the path rule (Wright 1934): sum over directed paths of the products of their coefficients\n";
            for p in &t.paths {
                let factors: Vec<String> = p.coefficients.iter().map(|&c| short(c)).collect();
                s += &format!(
                    "    {}: {} = {}\n",
                    p.path.join(" -> "),
                    factors.join(" x "),
                    short(p.product)
                );
            }
            if (t.paths.len() as u64) < t.paths_total {
                // The count saturates: at its ceiling it is a lower bound.
                let total = usize::try_from(t.paths_total).unwrap_or(usize::MAX);
                let count = causeway::report::doc::shown_of(t.paths.len(), total, total < usize::MAX);
                s += &format!("    ... directed paths: {count}\n");
            }
        }
        Method::MonteCarlo => {
            s += &format!(
                "  by Monte Carlo: {} draws with common random numbers, Monte Carlo SE {}\n",
                t.mc_draws.unwrap_or(0),
                t.mc_se.map_or("?".into(), |e| format!("{e:.2e}"))
            );
            if let Some(r) = &t.mc_reason {
                s += &format!("  ({r})\n");
            }
        }
    }
    s
}
