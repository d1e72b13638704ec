//! Command-line front end: one file per command, each with its clap
//! arguments and a `run` function. This module dispatches and maps errors to
//! exit codes; all computing happens in the library.

use causeway::{Error, Setting};
use clap::{Parser, Subcommand};
use std::io::Write;

mod bar;
mod check;
mod common;
mod compare;
mod demo;
mod draw;
mod estimate;
mod flags;
mod identify;
mod sensitivity;
mod simulate;

/// Estimate the causal effect of an exposure on an outcome from
/// observational data, under a causal graph you declare.
///
/// Every estimate is only as valid as the declared graph and the usual
/// assumptions (no unmeasured confounding beyond the graph, positivity,
/// consistency, correctly specified models). It does not replace study design
/// review, subject-matter and clinical judgement, or the ethics and reporting
/// rules that apply to your work.
///
/// Examples (run from the repository root):
///   causeway demo
///   causeway estimate --graph demo-data/main.graph --data demo-data/study.csv \
///       --exposure enrolled --outcome pain_days --categorical role
#[derive(Parser)]
#[command(name = "causeway", version, propagate_version = true, max_term_width = 100)]
#[command(verbatim_doc_comment)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    Identify(identify::Args),
    Estimate(estimate::Args),
    Compare(compare::Args),
    Check(check::Args),
    Sensitivity(sensitivity::Args),
    Simulate(simulate::Args),
    Draw(draw::Args),
    Demo(demo::Args),
}

/// Runs the command line and returns the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let _ = e.print();
            return match e.kind() {
                clap::error::ErrorKind::DisplayHelp | clap::error::ErrorKind::DisplayVersion => 0,
                _ => 2,
            };
        }
    };
    // A panic is a bug: report it as an internal error (exit 1), never 101.
    std::panic::set_hook(Box::new(|info| {
        eprintln!("causeway: internal error (please report it): {info}");
    }));
    let outcome = std::panic::catch_unwind(move || match cli.command {
        Command::Compare(a) => compare::run(a),
        Command::Demo(a) => demo::run(a),
        Command::Draw(a) => draw::run(a),
        Command::Estimate(a) => estimate::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Sensitivity(a) => sensitivity::run(a),
        Command::Identify(a) => identify::run(a),
        Command::Check(a) => check::run(a),
    });
    match outcome {
        Ok(Ok(code)) => code,
        Ok(Err(e)) => report_error(&e),
        Err(_) => 1,
    }
}

fn report_error(e: &Error) -> i32 {
    let mut err = std::io::stderr().lock();
    let label = match e {
        Error::NotIdentified(_) => "not identified",
        _ => "error",
    };
    match e {
        Error::Option { setting, message } => {
            let _ = writeln!(err, "causeway: {label}: {} {message}", flag(*setting));
        }
        _ => {
            let _ = writeln!(err, "causeway: {label}: {e}");
        }
    }
    e.exit_code()
}

/// The flag that sets a library [`Setting`]: the one place the binary puts
/// flag names on the library's option errors.
pub fn flag(setting: Setting) -> &'static str {
    match setting {
        Setting::Method => "--method",
        Setting::Estimand => "--estimand",
        Setting::Scale => "--scale",
        Setting::Interval => "--interval",
        Setting::Bootstrap => "--bootstrap",
        Setting::Level => "--level",
        Setting::Trim => "--trim",
        Setting::Interact => "--interact",
        Setting::Alpha => "--alpha",
        Setting::Q => "--q",
        Setting::Estimate => "--estimate",
        Setting::Se => "--se",
        Setting::Df => "--df",
        Setting::R2Exposure => "--r2-exposure",
        Setting::R2Outcome => "--r2-outcome",
        Setting::Ci => "--ci",
        Setting::Smd => "--smd",
        Setting::Exposure => "--exposure",
        Setting::Outcome => "--outcome",
        Setting::Latent => "--latent",
        Setting::Adjust => "--adjust",
        Setting::Categorical => "--categorical",
        Setting::Exposed => "--exposed",
        Setting::Reference => "--reference",
        Setting::At => "--at",
        Setting::Contrast => "--contrast",
        Setting::Shape => "--shape",
    }
}
