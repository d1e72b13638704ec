//! `causeway check`: the conditional independencies the graph implies among
//! observed variables, each tested on the data.

use super::common::{DelimiterArg, FormatArg, command_line, load_graph, print_stdout, split_list};
use causeway::check::{CheckOptions, Correction, judge, run as check};
use causeway::plan::{AdjustChoice, Plan, Roles};
use causeway::report::doc::{FileStamp, ToolInfo};
use causeway::report::{Format, Stamp, check_text::report_doc};
use causeway::{Error, Result};
use std::path::PathBuf;

/// Test the graph's implications against the data.
///
/// For every pair of observed variables the graph does not join, the graph
/// implies that they are independent given some set of observed variables
/// (when one exists); each such claim is tested on the data: partial
/// correlation (Fisher's z) for two continuous variables, a likelihood-ratio
/// test of nested logistic regressions when one is binary, a nested F test
/// for a continuous and a categorical variable, and a multinomial
/// likelihood-ratio test for two categorical ones. P-values are adjusted for
/// the number of tests. Graph nodes that are not columns of --data are
/// unobserved. The exit code is 0 whatever the verdict.
///
/// Examples (run from the repository root):
///   causeway check --graph demo-data/main.graph --data demo-data/study.csv --categorical role
///   causeway check --graph demo-data/main.graph --data demo-data/study.csv --categorical role \
///       --exposure enrolled --outcome pain_days
/// The second also says, for each claim, whether it bears on the adjustment
/// set chosen for the effect of enrolled on pain_days.
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The graph file (plain-text edge list).
    #[arg(long, value_name = "FILE")]
    graph: PathBuf,
    /// The data: delimited text with a header row (comma, tab or
    /// semicolon; also gzip or zstd compressed), Parquet, Arrow IPC or
    /// Stata .dta, told by content, else by name; `-` reads standard input.
    #[arg(long, value_name = "FILE")]
    data: PathBuf,
    /// Field separator of delimited text: comma, tab or semicolon (default:
    /// tab for a .tsv file, else detected from the header line).
    #[arg(long, value_enum, value_name = "SEP")]
    delimiter: Option<DelimiterArg>,
    /// Level at which an adjusted p-value rejects a claim.
    #[arg(long, default_value_t = 0.05, value_name = "A", allow_negative_numbers = true)]
    alpha: f64,
    /// Multiplicity adjustment: holm (family-wise error rate) or bh
    /// (Benjamini-Hochberg, false discovery rate).
    #[arg(long, default_value = "holm", value_parser = ["holm", "bh"])]
    correction: String,
    /// Columns to treat as categorical, comma-separated (text columns always are).
    #[arg(long, value_name = "A,B")]
    categorical: Option<String>,
    /// Nodes to treat as unobserved although they are columns, comma-separated.
    #[arg(long, value_name = "A,B")]
    latent: Option<String>,
    /// The exposure: with --outcome, each claim is marked by whether it
    /// bears on the adjustment (or front-door) set chosen for this effect.
    #[arg(long, value_name = "NAME", requires = "outcome")]
    exposure: Option<String>,
    /// The outcome (with --exposure).
    #[arg(long, value_name = "NAME", requires = "exposure")]
    outcome: Option<String>,
    /// The set the claims are judged against: optimal, minimal, or a
    /// comma-separated set (as for estimate; needs --exposure and --outcome).
    #[arg(long, value_name = "SET", requires = "exposure")]
    adjust: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: FormatArg,
    /// Print no warnings on standard error.
    #[arg(long)]
    quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    if !(a.alpha > 0.0 && a.alpha < 1.0) {
        return Err(Error::input(format!(
            "--alpha must be between 0 and 1 (got {})",
            a.alpha
        )));
    }
    let g = load_graph(&a.graph, a.quiet)?;
    let graph_bytes = std::fs::read(&a.graph).map_err(|e| Error::io(&a.graph, e))?;
    let keep: Vec<String> = (0..g.len()).map(|v| g.name(v).to_string()).collect();
    let source = super::flags::DataSource::open(&a.data, a.delimiter)?;
    let latent = a.latent.as_deref().map(split_list).unwrap_or_default();
    // The plan is made before any test runs, so a misspelt name fails fast.
    let choice = AdjustChoice::parse(a.adjust.as_deref().unwrap_or("optimal"));
    let plan = match (&a.exposure, &a.outcome) {
        (Some(x), Some(y)) => {
            let header = source.header()?;
            let shown = a.data.display().to_string();
            let roles = Roles::resolve(g.clone(), Some(&header), Some(&shown), &latent, x, y)?;
            Some(Plan::new(roles, &choice, false)?)
        }
        _ => None,
    };
    let data = source.load(keep)?;
    let data_stamp = source.stamp()?;
    let opts = CheckOptions {
        alpha: a.alpha,
        correction: if a.correction == "bh" {
            Correction::Bh
        } else {
            Correction::Holm
        },
        categorical: a.categorical.as_deref().map(split_list).unwrap_or_default(),
        latent,
    };
    let mut report = check(&g, &data, &opts)?;
    if let Some(plan) = &plan {
        judge(&mut report, plan, &choice);
    }
    if !a.quiet {
        for w in &report.warnings {
            eprintln!("causeway: warning: {w}");
        }
    }
    let format: Format = a.format.into();
    let text = match format.exporter() {
        Some(e) => {
            let mut doc = report_doc(&report);
            // No random numbers are drawn by `check`; the seed is shown as 0.
            doc.stamp = Some(Stamp {
                tool: ToolInfo::default(),
                command: command_line(),
                seed: 0,
                files: vec![
                    FileStamp::of(&a.graph.display().to_string(), &graph_bytes),
                    data_stamp,
                ],
            });
            e.render(&doc)
        }
        None => {
            let mut s = serde_json::to_string_pretty(&report)
                .map_err(|e| Error::Internal(format!("cannot write the JSON: {e}")))?;
            s.push('\n');
            s
        }
    };
    print_stdout(&text)?;
    Ok(0)
}
