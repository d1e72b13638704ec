//! `causeway identify`: which variables to adjust for, the optimal set,
//! front-door sets, open backdoor paths and a verdict.

use super::common::{DelimiterArg, load_graph, print_stdout, to_json};
use super::flags::DataSource;
use causeway::Result;
use causeway::identify::{Strategy, identify};
use causeway::plan::{Roles, split_list};
use causeway::report::identify_text::identify_text;
use std::path::PathBuf;

/// Which variables to adjust for, and whether the effect is identified.
///
/// Lists the backdoor paths to block, every minimal backdoor adjustment set,
/// the optimal adjustment set and the front-door sets, and checks a set given
/// with --adjust against the backdoor criterion. Nodes of the graph that are
/// not columns of --data are unobserved. Exit code 3 when neither the
/// backdoor nor the front-door criterion identifies the effect.
///
/// Examples (run from the repository root):
///   causeway identify --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days
///   causeway identify --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --adjust age,role --format json
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The graph file (plain-text edge list).
    #[arg(long, value_name = "FILE")]
    graph: PathBuf,
    /// The exposure (treatment) variable.
    #[arg(long, value_name = "NAME")]
    exposure: String,
    /// The outcome variable.
    #[arg(long, value_name = "NAME")]
    outcome: String,
    /// The data (delimited text, also compressed, Parquet, Arrow IPC or
    /// Stata .dta); only its header is read. Graph nodes that are not columns are unobserved. `-`
    /// reads standard input.
    #[arg(long, value_name = "FILE")]
    data: Option<PathBuf>,
    /// Field separator of delimited text: comma, tab or semicolon (default:
    /// tab for a .tsv file, else detected from the header line).
    #[arg(long, value_enum, value_name = "SEP")]
    delimiter: Option<DelimiterArg>,
    /// Nodes to treat as unobserved, comma-separated.
    #[arg(long, value_name = "A,B")]
    latent: Option<String>,
    /// A set to check against the backdoor criterion, comma-separated.
    #[arg(long, value_name = "A,B")]
    adjust: Option<String>,
    /// text (a report in words) or json (stable keys, for scripts).
    #[arg(long, default_value = "text", value_parser = ["text", "json"])]
    format: String,
    /// Print no warnings.
    #[arg(long)]
    quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    let g = load_graph(&a.graph, a.quiet)?;
    let data = a
        .data
        .as_deref()
        .map(|d| DataSource::open(d, a.delimiter))
        .transpose()?;
    let columns = data.as_ref().map(DataSource::header).transpose()?;
    let shown = data.as_ref().map(|d| d.shown.clone());
    let latent = a.latent.as_deref().map(split_list).unwrap_or_default();
    let roles = Roles::resolve(
        g,
        columns.as_deref(),
        shown.as_deref(),
        &latent,
        &a.exposure,
        &a.outcome,
    )?;
    let given = match a.adjust.as_deref() {
        Some(list) => Some(roles.adjust_nodes(&split_list(list))?),
        None => None,
    };
    let id = identify(&roles.graph, roles.exposure, roles.outcome, given.as_deref());
    let text = match a.format.as_str() {
        "json" => to_json(&id)?,
        _ => identify_text(&id, &roles.graph),
    };
    print_stdout(&text)?;
    Ok(if id.strategy == Strategy::None { 3 } else { 0 })
}
