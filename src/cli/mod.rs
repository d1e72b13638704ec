//! Command-line front end: one file per command, each with its clap
//! arguments and a `run` function. This module dispatches and maps errors to
//! exit codes; all computing happens in the library.

use causeway::{Error, Phrasing, Remedy, Setting};
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
    let label = match e.problem() {
        Error::NotIdentified(_) => "not identified",
        _ => "error",
    };
    let _ = writeln!(std::io::stderr().lock(), "causeway: {label}: {}", e.text(&Flags));
    e.exit_code()
}

/// The command line's phrasing of the library's messages: settings by
/// their flags, advice as what to type.
pub struct Flags;

impl Phrasing for Flags {
    fn setting(&self, setting: Setting) -> &'static str {
        flag(setting)
    }

    fn remedy(&self, remedy: &Remedy) -> String {
        match remedy {
            Remedy::Choose(s, values) => format!("use {} {}", flag(*s), values.join(" or ")),
            Remedy::TurnOn(s) => format!("add {}", flag(*s)),
            Remedy::Give(s) => format!("give {}", flag(*s)),
            Remedy::Omit(s, values) => format!("leave {} out of {}", values.join(", "), flag(*s)),
        }
    }
}

/// The flag that sets a library [`Setting`]: the one place the binary puts
/// flag names on the library's messages (through [`Flags`]).
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
        Setting::ForceAdjust => "--force-adjust",
        Setting::Delimiter => "--delimiter",
        Setting::DefaultCoef => "--default-coef",
        Setting::CommonOutcome => "--common-outcome",
        Setting::Threads => "--threads",
        Setting::Rows => "--rows",
        Setting::Draws => "--mc-draws",
        Setting::Cluster => "--cluster",
        Setting::Weights => "--weights",
        Setting::Missing => "--missing",
        Setting::Imputations => "--imputations",
        Setting::Subgroup => "--subgroup",
        Setting::Time => "--time",
        Setting::Event => "--event",
        Setting::Horizon => "--horizon",
        Setting::Period => "--period",
        Setting::CensoringWeights => "--censoring-weights",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use causeway::{Advice, Words};
    use clap::CommandFactory;

    /// Every setting, so that each is checked against the flags below.
    const SETTINGS: [Setting; 44] = [
        Setting::Method,
        Setting::Estimand,
        Setting::Scale,
        Setting::Interval,
        Setting::Bootstrap,
        Setting::Level,
        Setting::Trim,
        Setting::Interact,
        Setting::Alpha,
        Setting::Q,
        Setting::Estimate,
        Setting::Se,
        Setting::Df,
        Setting::R2Exposure,
        Setting::R2Outcome,
        Setting::Ci,
        Setting::Smd,
        Setting::Exposure,
        Setting::Outcome,
        Setting::Latent,
        Setting::Adjust,
        Setting::Categorical,
        Setting::ForceAdjust,
        Setting::Delimiter,
        Setting::DefaultCoef,
        Setting::CommonOutcome,
        Setting::Exposed,
        Setting::Reference,
        Setting::At,
        Setting::Contrast,
        Setting::Shape,
        Setting::Threads,
        Setting::Rows,
        Setting::Draws,
        Setting::Cluster,
        Setting::Weights,
        Setting::Missing,
        Setting::Imputations,
        Setting::Subgroup,
        Setting::Time,
        Setting::Event,
        Setting::Horizon,
        Setting::Period,
        Setting::CensoringWeights,
    ];

    #[test]
    fn every_setting_names_a_flag_that_exists() {
        let cli = Cli::command();
        let mut longs = Vec::new();
        for sub in cli.get_subcommands() {
            longs.extend(sub.get_arguments().filter_map(|a| a.get_long()).map(String::from));
        }
        for s in SETTINGS {
            let f = flag(s);
            assert!(longs.iter().any(|l| format!("--{l}") == f), "{s:?}: {f}");
            assert!(!Words.setting(s).contains("--"), "{s:?}");
        }
    }

    #[test]
    fn advice_names_flags_and_values() {
        let advice = Advice {
            remedies: vec![
                Remedy::Choose(Setting::Adjust, vec!["optimal".into(), "minimal".into()]),
                Remedy::TurnOn(Setting::ForceAdjust),
            ],
            purpose: "to estimate with it anyway",
        };
        assert_eq!(
            advice.text(&Flags),
            "use --adjust optimal or minimal, or add --force-adjust to estimate with it anyway"
        );
        let e = Error::input("the file looks tab-separated").advised(Advice::one(
            Remedy::Choose(Setting::Delimiter, vec!["tab".into()]),
            "",
        ));
        assert_eq!(
            e.text(&Flags),
            "the file looks tab-separated; use --delimiter tab"
        );
        let e = Error::option(Setting::Level, "'2': must lie between 0 and 1");
        assert_eq!(e.text(&Flags), "--level '2': must lie between 0 and 1");
        assert_eq!(e.to_string(), "the interval level '2': must lie between 0 and 1");
    }

    /// The values the library advises for the separator are the flag's.
    #[test]
    fn delimiter_names_are_the_flag_values() {
        use clap::ValueEnum;
        for arg in common::DelimiterArg::value_variants() {
            let value = arg.to_possible_value().unwrap();
            assert_eq!(value.get_name(), causeway::data::Delimiter::from(*arg).name());
        }
        assert_eq!(
            common::DelimiterArg::value_variants().len(),
            causeway::data::Delimiter::ALL.len()
        );
    }
}
