//! `causeway identify`: which variables to adjust for, the optimal set,
//! front-door sets, open backdoor paths and a verdict.

use super::common::{load_graph, resolve, split_list};
use causeway::graph::Graph;
use causeway::identify::{Strategy, identify};
use causeway::report::identify_text::identify_text;
use causeway::{Error, Result};
use std::io::{Read, Write};
use std::path::PathBuf;

/// Which variables to adjust for, and whether the effect is identified.
///
/// Lists the backdoor paths to block, every minimal backdoor adjustment set,
/// the optimal adjustment set and the front-door sets, and checks a set given
/// with --adjust against the backdoor criterion. Nodes of the graph that are
/// not columns of --data are unobserved. Exit code 3 when neither the
/// backdoor nor the front-door criterion identifies the effect.
///
/// Example:
///   causeway identify --graph study.graph --exposure enrolled --outcome pain_days \
///       --data study.csv --adjust age,role
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
    /// CSV data; only its header line is read. Graph nodes that are not
    /// columns are unobserved. `-` reads standard input.
    #[arg(long, value_name = "CSV")]
    data: Option<PathBuf>,
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

/// The column names of a CSV file's header line (a UTF-8 byte-order mark is
/// dropped); `-` reads standard input.
fn read_header(path: &PathBuf) -> Result<Vec<String>> {
    let shown = path.display().to_string();
    let reader: Box<dyn Read> = if shown == "-" {
        Box::new(std::io::stdin())
    } else {
        Box::new(std::fs::File::open(path).map_err(|e| Error::io(path, e))?)
    };
    let mut csv = csv::ReaderBuilder::new().has_headers(true).from_reader(reader);
    let header = csv
        .headers()
        .map_err(|e| Error::input(format!("{shown}: cannot read the CSV header line: {e}")))?;
    let mut names: Vec<String> = header.iter().map(|h| h.trim().to_string()).collect();
    if let Some(first) = names.first_mut()
        && let Some(rest) = first.strip_prefix('\u{feff}')
    {
        *first = rest.to_string();
    }
    if names.iter().all(|n| n.is_empty()) {
        return Err(Error::input(format!("{shown}: the CSV header line is empty")));
    }
    Ok(names)
}

/// Marks as latent every node that is not a column of the data.
fn mark_unmeasured(g: &mut Graph, columns: &[String]) {
    for v in 0..g.len() {
        if !columns.iter().any(|c| c == g.name(v)) {
            g.set_latent(v, true);
        }
    }
}

/// Why a node is unobserved, for messages.
fn why_latent(g: &Graph, v: usize, data: Option<&PathBuf>, marked: &[usize]) -> String {
    if marked.contains(&v) {
        "it is marked unobserved by --latent".to_string()
    } else if let Some(d) = data {
        format!("it is not a column of {}", d.display())
    } else if g.bidirected_pair(v).is_some() {
        "it is a latent node made by '<->'".to_string()
    } else {
        "it is unobserved".to_string()
    }
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    let mut g = load_graph(&a.graph, a.quiet)?;
    if let Some(d) = &a.data {
        let columns = read_header(d)?;
        mark_unmeasured(&mut g, &columns);
    }
    let mut marked = Vec::new();
    for name in a.latent.as_deref().map(split_list).unwrap_or_default() {
        let v = resolve(&g, &name, "--latent")?;
        g.set_latent(v, true);
        marked.push(v);
    }
    let x = resolve(&g, &a.exposure, "--exposure")?;
    let y = resolve(&g, &a.outcome, "--outcome")?;
    if x == y {
        return Err(Error::input(format!(
            "--exposure and --outcome are the same node '{}'",
            a.exposure
        )));
    }
    for (v, flag) in [(x, "--exposure"), (y, "--outcome")] {
        if g.is_latent(v) {
            return Err(Error::input(format!(
                "{flag} '{}' is unobserved: {}",
                g.name(v),
                why_latent(&g, v, a.data.as_ref(), &marked)
            )));
        }
    }
    let given = match a.adjust.as_deref() {
        None => None,
        Some(list) => {
            let mut set = Vec::new();
            for name in split_list(list) {
                let v = resolve(&g, &name, "--adjust")?;
                if v == x || v == y {
                    return Err(Error::input(format!(
                        "--adjust '{name}' is the exposure or the outcome; list other variables"
                    )));
                }
                if g.is_latent(v) {
                    return Err(Error::input(format!(
                        "--adjust '{name}' is unobserved and cannot be adjusted for: {}",
                        why_latent(&g, v, a.data.as_ref(), &marked)
                    )));
                }
                set.push(v);
            }
            Some(set)
        }
    };
    let id = identify(&g, x, y, given.as_deref());
    let text = match a.format.as_str() {
        "json" => {
            let mut s = serde_json::to_string_pretty(&id)
                .map_err(|e| Error::Numerical(format!("cannot write the JSON: {e}")))?;
            s.push('\n');
            s
        }
        _ => identify_text(&id, &g),
    };
    let mut stdout = std::io::stdout().lock();
    match stdout.write_all(text.as_bytes()).and_then(|()| stdout.flush()) {
        Ok(()) => {}
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {}
        Err(e) => return Err(Error::io("standard output", e)),
    }
    Ok(if id.strategy == Strategy::None { 3 } else { 0 })
}
