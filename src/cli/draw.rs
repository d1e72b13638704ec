//! `causeway draw`: the graph as an SVG figure or DOT text.

use super::common::{DelimiterArg, load_graph, print_stdout, resolve, split_list, write_atomic};
use causeway::Result;
use causeway::error::Setting;
use causeway::report::graph_figure::{self, Marks};
use std::path::PathBuf;

/// Draw the graph, with the exposure, outcome, adjustment set and
/// unobserved nodes marked.
///
/// Examples (run from the repository root):
///   causeway draw --graph demo-data/main.graph --exposure enrolled --outcome pain_days \
///       --adjust age,role --format svg --output graph.svg
///   causeway draw --graph demo-data/hidden-motivation.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --adjust standing_hours --output frontdoor.svg
///   causeway draw --graph demo-data/main.graph --format dot --output graph.dot
/// The second draws motivation as unobserved (not a column of the data) and
/// standing_hours as a front-door mediator; the third exports the graph in
/// the DOT language for graph-layout programs.
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The graph file (plain-text edge list).
    #[arg(long, value_name = "FILE")]
    graph: PathBuf,
    /// The exposure (drawn on the left).
    #[arg(long, value_name = "NAME")]
    exposure: Option<String>,
    /// The outcome (drawn on the right).
    #[arg(long, value_name = "NAME")]
    outcome: Option<String>,
    /// Nodes to mark as adjusted for, comma-separated.
    #[arg(long, value_name = "A,B")]
    adjust: Option<String>,
    /// Nodes to mark as unobserved, comma-separated.
    #[arg(long, value_name = "A,B")]
    latent: Option<String>,
    /// Data file: graph nodes that are not among its column names are drawn
    /// as unobserved (only the header line is read).
    #[arg(long, value_name = "FILE")]
    data: Option<PathBuf>,
    /// Field separator of delimited text: comma, tab or semicolon (default:
    /// tab for a .tsv file, else detected from the header line).
    #[arg(long, value_enum, value_name = "SEP")]
    delimiter: Option<DelimiterArg>,
    /// svg (a figure) or dot (the graph in the DOT language, an export for
    /// graph-layout programs).
    #[arg(long, default_value = "svg", value_parser = ["svg", "dot"])]
    format: String,
    /// Write to this file instead of standard output.
    #[arg(long, short, value_name = "FILE")]
    output: Option<PathBuf>,
    /// Print no warnings.
    #[arg(long)]
    quiet: bool,
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    let mut g = load_graph(&a.graph, a.quiet)?;
    if let Some(path) = &a.data {
        let columns = super::flags::DataSource::open(path, a.delimiter)?.header()?;
        for v in 0..g.len() {
            if !columns.iter().any(|c| c == g.name(v)) {
                g.set_latent(v, true);
            }
        }
    }
    for name in a.latent.as_deref().map(split_list).unwrap_or_default() {
        let v = resolve(&g, &name, Setting::Latent)?;
        g.set_latent(v, true);
    }
    let mut marks = Marks {
        exposure: a
            .exposure
            .as_deref()
            .map(|n| resolve(&g, n, Setting::Exposure))
            .transpose()?,
        outcome: a
            .outcome
            .as_deref()
            .map(|n| resolve(&g, n, Setting::Outcome))
            .transpose()?,
        adjust: Vec::new(),
    };
    for name in a.adjust.as_deref().map(split_list).unwrap_or_default() {
        marks.adjust.push(resolve(&g, &name, Setting::Adjust)?);
    }
    let text = match a.format.as_str() {
        "dot" => graph_figure::dot(&g, &marks),
        _ => graph_figure::svg(&g, &marks),
    };
    match &a.output {
        Some(path) => write_atomic(path, text.as_bytes(), &[&a.graph])?,
        None => print_stdout(&text)?,
    }
    Ok(0)
}
