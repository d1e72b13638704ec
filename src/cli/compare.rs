//! `causeway compare`: the same analysis under several graphs, in one table,
//! after a summary of how the graphs differ.

use super::common::{DelimiterArg, FormatArg, print_stdout, to_json, write_bundle};
use super::flags::{self, DataSource, EstimateFlags};
use causeway::analysis::{self, Analysis};
use causeway::graph::{self, Graph, diff};
use causeway::identify::Strategy;
use causeway::plan::Plan;
use causeway::report::bundle::{self, File};
use causeway::report::compare_doc::{self, Difference, Run, RunResult};
use causeway::report::doc::{Block, DataTable, Doc, FileStamp, Stamp};
use causeway::report::{csv, estimate_doc};
use causeway::{Error, Result};
use serde_json::{Value, json};
use std::path::PathBuf;

/// Run the same analysis under several graphs.
///
/// Each graph gets its own identification; the table shows, per graph, the
/// strategy, the set used, each method's estimate and interval and the
/// E-value. Graphs under which the effect is not identified keep their row,
/// with the reason. Above the table: what differs between the graphs.
///
/// Example (run from the repository root):
///   causeway compare --graph demo-data/main.graph --graph demo-data/hidden-motivation.graph \
///       --data demo-data/study.csv --exposure enrolled --outcome pain_days --categorical role
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
pub struct Args {
    /// A graph file; repeat the flag for each graph to compare.
    #[arg(long, value_name = "FILE", required = true)]
    pub graph: Vec<PathBuf>,
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
    /// Also write a report bundle to this folder.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

/// A graph to compare: its label and its text.
pub struct GraphInput {
    /// Shown in tables (a path, or a name).
    pub label: String,
    /// The graph file's bytes.
    pub bytes: Vec<u8>,
}

/// A finished comparison.
pub struct Comparison {
    /// One run per graph.
    pub runs: Vec<Run>,
    /// The plans of graphs that got that far, by run index.
    pub plans: Vec<Option<Plan>>,
    /// How each graph differs from the first.
    pub differences: Vec<Difference>,
    /// The stamp.
    pub stamp: Stamp,
}

/// Runs the analysis under each graph on the same data.
pub fn compare(inputs: &[GraphInput], data: &DataSource, f: &EstimateFlags) -> Result<Comparison> {
    let opts = f.options()?;
    let columns = data.header()?;
    let mut graphs: Vec<Graph> = Vec::new();
    let mut plans: Vec<Option<Plan>> = Vec::new();
    let mut runs: Vec<Run> = Vec::new();
    for inp in inputs {
        let parsed = graph::parse_bytes(&inp.bytes, &inp.label)?;
        if !f.quiet {
            for w in &parsed.warnings {
                eprintln!("causeway: warning: {w}");
            }
        }
        let plan = f.plan(parsed.graph, &columns, &data.shown)?;
        graphs.push(plan.roles.graph.clone());
        if plan.strategy == Strategy::None {
            runs.push(Run {
                graph: inp.label.clone(),
                result: RunResult::Stopped {
                    strategy: Strategy::None,
                    reason: plan.not_identified_reason(),
                    check: None,
                },
            });
        } else {
            runs.push(Run {
                graph: inp.label.clone(),
                result: RunResult::Stopped {
                    strategy: plan.strategy,
                    reason: String::new(),
                    check: None,
                },
            });
        }
        plans.push(Some(plan));
    }
    f.check_benchmarks(plans.iter().flatten())?;
    // Read every column any graph needs, once.
    let mut keep: Vec<String> = Vec::new();
    let wanted = |p: &&Plan| p.strategy != Strategy::None || opts.check.is_some();
    for p in plans.iter().flatten().filter(wanted) {
        for c in analysis::columns(p, &opts) {
            if !keep.contains(&c) {
                keep.push(c);
            }
        }
    }
    let dataset = if keep.is_empty() {
        None
    } else {
        Some(data.load(keep)?)
    };
    for (run, plan) in runs.iter_mut().zip(&plans) {
        let (Some(plan), Some(ds)) = (plan, &dataset) else {
            continue;
        };
        if plan.strategy == Strategy::None {
            if let (Some(c), RunResult::Stopped { check, .. }) = (&opts.check, &mut run.result) {
                *check = Some(analysis::check_summary(plan, ds, c)?);
            }
            continue;
        }
        run.result = match analysis::run(plan, ds, &opts) {
            Ok(a) => RunResult::Done(Box::new(a)),
            Err(
                e @ (Error::Input(_)
                | Error::Option { .. }
                | Error::Advised { .. }
                | Error::Io { .. }
                | Error::Graph(_)),
            ) => {
                return Err(e);
            }
            Err(e) => RunResult::Stopped {
                strategy: plan.strategy,
                reason: format!("the estimate failed: {e}"),
                check: None,
            },
        };
    }
    let differences = inputs
        .iter()
        .zip(&graphs)
        .skip(1)
        .map(|(inp, g)| Difference {
            graph: inp.label.clone(),
            against: inputs[0].label.clone(),
            diff: diff(&graphs[0], g),
        })
        .collect();
    let mut files: Vec<FileStamp> = inputs.iter().map(|i| FileStamp::of(&i.label, &i.bytes)).collect();
    files.push(data.stamp()?);
    Ok(Comparison {
        runs,
        plans,
        differences,
        stamp: flags::stamp(f.seed, files),
    })
}

impl Comparison {
    /// The JSON of the contract: the stamp, then `runs`.
    pub fn json(&self) -> Result<Value> {
        let s = &self.stamp;
        let n = s.files.len();
        let rows = self.analyses().next().map(|a| a.sample.rows);
        let mut runs = Vec::new();
        for r in &self.runs {
            let mut v = match &r.result {
                RunResult::Done(a) => serde_json::to_value(a.as_ref())
                    .map_err(|e| Error::Internal(format!("cannot write the JSON: {e}")))?,
                RunResult::Stopped {
                    strategy,
                    reason,
                    check,
                } => {
                    let mut v = json!({
                        "identification": {"strategy": strategy, "adjustment_set": null, "frontdoor_set": null},
                        "estimates": [],
                        "reason": reason,
                    });
                    if let Some(c) = check {
                        v["check"] = json!(c);
                    }
                    v
                }
            };
            if let Value::Object(m) = &mut v {
                m.insert("graph".into(), json!(r.graph));
            }
            runs.push(v);
        }
        Ok(json!({
            "tool": s.tool,
            "inputs": {
                "graphs": &s.files[..n - 1],
                "data": {"path": s.files[n - 1].path, "sha256": s.files[n - 1].sha256, "rows": rows},
            },
            "command": s.command,
            "seed": s.seed,
            "differences": self.differences,
            "runs": runs,
        }))
    }

    /// The analyses that ran.
    pub fn analyses(&self) -> impl Iterator<Item = &Analysis> {
        self.runs.iter().filter_map(|r| match &r.result {
            RunResult::Done(a) => Some(a.as_ref()),
            RunResult::Stopped { .. } => None,
        })
    }

    /// The comparison's blocks: what differs, then the table (and, for the
    /// data formats, the tidy table of every estimate).
    pub fn blocks(&self, level: f64) -> Vec<Block> {
        let mut b = Vec::new();
        let diff = compare_doc::differences_blocks(&self.differences);
        if !diff.is_empty() {
            b.push(Block::Heading("What differs between the graphs".into()));
            b.extend(diff);
        }
        b.push(Block::Heading("Estimates under each graph".into()));
        let mut table = compare_doc::comparison_table(&self.runs, level);
        // The same data and exposure under every graph: one coding.
        if let Some(a) = self.analyses().find(|a| a.exposure_coding.is_some())
            && let Some(c) = &a.exposure_coding
        {
            table.notes.insert(0, format!("{}.", c.sentence(&a.exposure)));
        }
        b.push(Block::Table(table));
        if let Some(t) = self.data_tables().into_iter().next() {
            b.push(Block::Data(t));
        }
        b
    }

    /// The tidy tables of every run, stacked (`estimates` first).
    pub fn data_tables(&self) -> Vec<DataTable> {
        let mut all = Vec::new();
        for (run, plan) in self.runs.iter().zip(&self.plans) {
            match &run.result {
                RunResult::Done(a) => all.extend(csv::analysis_tables(&run.graph, a)),
                RunResult::Stopped {
                    strategy,
                    reason,
                    check,
                } => {
                    let (x, y) = plan.as_ref().map_or((String::new(), String::new()), |p| {
                        let g = &p.roles.graph;
                        (
                            g.name(p.roles.exposure).to_string(),
                            g.name(p.roles.outcome).to_string(),
                        )
                    });
                    all.push(csv::stopped(&run.graph, &x, &y, *strategy, reason));
                    all.extend(check.iter().map(|c| csv::check(&run.graph, c)));
                }
            }
        }
        csv::stack(all)
    }

    /// The bundle: report.md with `head`, then a section per graph (its
    /// sub-sections one level down, each text said once), then `tail`;
    /// results.json; table.tex with every table; the tidy CSV files; and
    /// every graph's figures, named after the graph.
    pub fn bundle(&self, doc: &Doc, head: Vec<Block>, tail: Vec<Block>, json: &str) -> Result<Vec<File>> {
        let mut blocks = head;
        let mut figures = Vec::new();
        let mut tables = bundle::tables_of(&blocks);
        let mut taken: Vec<String> = Vec::new();
        for (run, plan) in self.runs.iter().zip(&self.plans) {
            let prefix = estimate_doc::figure_prefix(&run.graph, &taken);
            taken.push(prefix.clone());
            blocks.push(Block::Heading(format!("Graph {}", run.graph)));
            let Some(plan) = plan else { continue };
            match &run.result {
                RunResult::Done(a) => {
                    for blk in estimate_doc::analysis_blocks(a, Some(&prefix)) {
                        blocks.push(match blk {
                            Block::Heading(h) => Block::Subheading(h),
                            Block::Table(mut t) => {
                                t.caption = format!("{} (graph {})", t.caption, run.graph);
                                tables.push(t.clone());
                                Block::Table(t)
                            }
                            other => other,
                        });
                    }
                    figures.extend(bundle::figures(plan, Some(a), &prefix)?);
                }
                RunResult::Stopped { reason, .. } => {
                    let [graph_svg, ..] = estimate_doc::figure_paths(&prefix);
                    blocks.push(Block::Figure {
                        path: graph_svg,
                        caption: format!("The graph {}", run.graph),
                    });
                    blocks.push(Block::Para(format!("No estimate: {reason}.")));
                    figures.extend(bundle::figures(plan, None, &prefix)?);
                }
            }
        }
        blocks.extend(tail);
        let report = Doc {
            title: doc.title.clone(),
            blocks: compare_doc::said_once(blocks),
            stamp: doc.stamp.clone(),
        };
        let mut files = bundle::report_files(&report, json, &tables, &self.data_tables());
        files.extend(figures);
        Ok(files)
    }
}

/// Prints a comparison laid out as `blocks` (and writes its bundle, whose
/// report.md has `head`, a section per graph, then `tail`) in the requested
/// format.
#[allow(clippy::too_many_arguments)]
pub fn output(
    c: &Comparison,
    title: String,
    blocks: Vec<Block>,
    head: Vec<Block>,
    tail: Vec<Block>,
    format: FormatArg,
    out: Option<&PathBuf>,
    inputs: &[&std::path::Path],
) -> Result<()> {
    let doc = Doc {
        title,
        blocks,
        stamp: Some(c.stamp.clone()),
    };
    let json_text = to_json(&c.json()?)?;
    if let Some(dir) = out {
        write_bundle(dir, &c.bundle(&doc, head, tail, &json_text)?, inputs)?;
    }
    let text = match causeway::report::Format::from(format).exporter() {
        Some(x) => x.render(&doc),
        None => json_text,
    };
    print_stdout(&text)
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    let mut inputs = Vec::new();
    for p in &a.graph {
        let bytes = std::fs::read(p).map_err(|e| Error::io(p, e))?;
        inputs.push(GraphInput {
            label: p.display().to_string(),
            bytes,
        });
    }
    let data = DataSource::open(&a.data, a.delimiter)?;
    let c = compare(&inputs, &data, &a.flags)?;
    let mut paths: Vec<&std::path::Path> = a.graph.iter().map(|p| p.as_path()).collect();
    paths.push(&a.data);
    let title = format!(
        "causeway compare: {} on {} under {} graphs",
        a.flags.exposure,
        a.flags.outcome,
        inputs.len()
    );
    let blocks = c.blocks(a.flags.level);
    output(
        &c,
        title,
        blocks.clone(),
        blocks,
        Vec::new(),
        a.format,
        a.out.as_ref(),
        &paths,
    )?;
    if c.analyses().next().is_none() {
        // The report says why under each graph; the exit code needs its line too.
        eprintln!(
            "causeway: not identified: the effect of {} on {} is not identified under any of the {} graphs compared (the report gives each graph's reason)",
            a.flags.exposure,
            a.flags.outcome,
            inputs.len()
        );
        return Ok(3);
    }
    Ok(0)
}
