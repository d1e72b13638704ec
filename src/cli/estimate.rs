//! `causeway estimate`: identify the effect under the graph, then estimate
//! it with every method that fits, with intervals, diagnostics and
//! sensitivity; `--out DIR` writes a report bundle.

use super::common::{DelimiterArg, FormatArg, print_stdout, to_json, write_bundle};
use super::flags::{self, DataSource, EstimateFlags};
use causeway::Result;
use causeway::analysis::{self, Analysis};
use causeway::report::doc::{Block, Doc, Stamp};
use causeway::report::{csv, estimate_doc};
use serde_json::{Map, Value, json};
use std::path::PathBuf;

/// Estimate the effect of the exposure on the outcome under the graph.
///
/// Identifies the effect (backdoor adjustment, else the front-door formula),
/// then runs every method that fits: regression standardization, IPW and
/// AIPW for a backdoor set; the front-door formula otherwise. Prints
/// estimates with intervals, propensity and balance diagnostics, and the
/// sensitivity to unmeasured confounding (E-value; robustness value for a
/// linear outcome). Exit code 3 when the effect is not identified.
///
/// The data may be comma-, tab- or semicolon-separated (detected from the
/// header line; --delimiter overrides). A two-valued exposure may be
/// numbers or text (e.g. quit/continued): --exposed names the exposed
/// value; without it the larger number, or the text level that sorts last,
/// is exposed, and the report says which. An exposure of three or more
/// levels compares each with --reference (default the lowest); a numeric
/// exposure with many values is a dose, with a dose-response curve at --at
/// and a comparison of two doses with --contrast. Rows grouped in clusters
/// (--cluster COLUMN) get cluster-robust intervals, and a bootstrap that
/// resamples whole clusters.
///
/// Examples (run from the repository root):
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --categorical role
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --categorical role --exposed 1 \
///       --bootstrap 200 --out report
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --categorical role \
///       --benchmark role,age --benchmark-multiples 1,3
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure role --outcome pain_days --reference office
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure bmi --outcome pain_days --at 20,25,30,35 --contrast 20,30
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure bmi --outcome pain_days --cluster role
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// The graph file (plain-text edge list).
    #[arg(long, value_name = "FILE")]
    pub graph: PathBuf,
    /// The data: delimited text with a header row (comma, tab or
    /// semicolon; also gzip or zstd compressed), Parquet, Arrow IPC or
    /// Stata .dta, told by content, else by name; `-` reads standard input.
    #[arg(long, value_name = "FILE")]
    pub data: PathBuf,
    /// Field separator of delimited text: comma, tab or semicolon (default:
    /// tab for a .tsv file, else detected from the header line).
    #[arg(long, value_enum, value_name = "SEP")]
    pub delimiter: Option<DelimiterArg>,
    #[command(flatten)]
    pub flags: EstimateFlags,
    /// Output format on standard output.
    #[arg(long, value_enum, default_value = "text")]
    pub format: FormatArg,
    /// Also write a report bundle to this folder: report.md, results.json,
    /// table.tex (with table-standalone.tex), tidy CSV files and figures/*.svg.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

/// The `estimate` JSON: the stamp, then the analysis.
pub fn json(stamp: &Stamp, a: &Analysis, rows: usize) -> Result<Value> {
    let mut v = json!({
        "tool": stamp.tool,
        "inputs": {
            "graph": stamp.files.first(),
            "data": stamp.files.get(1).map(|f| json!({"path": f.path, "sha256": f.sha256, "rows": rows})),
        },
        "command": stamp.command,
        "seed": stamp.seed,
    });
    let body = serde_json::to_value(a)
        .map_err(|e| causeway::Error::Internal(format!("cannot write the JSON: {e}")))?;
    if let (Value::Object(m), Value::Object(b)) = (&mut v, body) {
        let b: Map<String, Value> = b;
        m.extend(b);
    }
    Ok(v)
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    let opts = a.flags.options()?;
    let g = flags::graph(&a.graph, a.flags.quiet)?;
    let data = DataSource::open(&a.data, a.delimiter)?;
    let columns = data.header()?;
    let plan = a.flags.plan(g, &columns, &data.shown)?;
    a.flags.check_benchmarks([&plan])?;
    if plan.strategy == causeway::identify::Strategy::None {
        return Err(causeway::Error::NotIdentified(plan.not_identified_reason()));
    }
    let dataset = data.load(analysis::columns(&plan, &opts))?;
    let result = analysis::run(&plan, &dataset, &opts)?;
    let stamp = flags::stamp(a.flags.seed, vec![flags::file_stamp(&a.graph)?, data.stamp()?]);
    let value = json(&stamp, &result, result.sample.rows)?;
    let graph_label = a.graph.display().to_string();
    let mut blocks = estimate_doc::analysis_blocks(&result, None);
    blocks.push(Block::Data(csv::estimates(&graph_label, &result)));
    let doc = Doc {
        title: format!("causeway estimate: {} on {}", result.exposure, result.outcome),
        blocks,
        stamp: Some(stamp.clone()),
    };
    let json_text = to_json(&value)?;
    if let Some(dir) = &a.out {
        let files =
            causeway::report::bundle::estimate_bundle(&plan, &result, &doc, &json_text, &graph_label)?;
        write_bundle(dir, &files, &[&a.graph, &a.data])?;
    }
    let text = match causeway::report::Format::from(a.format).exporter() {
        Some(x) => x.render(&doc),
        None => json_text,
    };
    print_stdout(&text)?;
    Ok(0)
}
