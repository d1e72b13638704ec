//! `causeway sensitivity`: sensitivity to unmeasured confounding from
//! summary numbers alone (an estimate reported elsewhere).

use super::common::{print_stdout, split_list, write_atomic};
use causeway::report::doc::CAUTION;
use causeway::report::sensitivity_figure::{self, hypothesised_yardsticks};
use causeway::report::sensitivity_text::{
    LIMITS, adjusted_section, evalue_section, robustness_section, wrap,
};
use causeway::sensitivity::SensitivityBlock;
use causeway::sensitivity::evalue::{self, EValue};
use causeway::sensitivity::robustness::{Adjusted, Coefficient, RobustnessValue, adjust, robustness_value};
use causeway::{Error, Result};
use serde::Serialize;
use std::path::PathBuf;

/// How strong would a hidden confounder have to be? E-values for a ratio or
/// a standardized difference; robustness values and corrected estimates for
/// a linear-regression coefficient.
///
/// Give exactly one of --rr, --or, --hr, --smd or --estimate.
///
/// Examples (the risk ratio is invented for illustration; the coefficient,
/// standard error and residual df are those of the demo's main regression):
///   causeway sensitivity --rr 1.8 --ci 1.3,2.5
///   causeway sensitivity --or 1.9 --ci 1.3,2.8 --common-outcome
///   causeway sensitivity --estimate -3.10 --se 0.1145 --df 2992 \
///       --r2-exposure 0.02,0.05 --r2-outcome 0.10,0.30 --figure sensitivity.svg
#[derive(clap::Args)]
#[command(verbatim_doc_comment)]
#[command(group(clap::ArgGroup::new("input").required(true).multiple(false)
    .args(["rr", "or", "hr", "smd", "estimate"])))]
pub struct Args {
    /// A risk ratio.
    #[arg(long, value_name = "EST", allow_negative_numbers = true)]
    rr: Option<f64>,
    /// An odds ratio (read as a risk ratio unless --common-outcome).
    #[arg(long = "or", value_name = "EST", allow_negative_numbers = true)]
    or: Option<f64>,
    /// A hazard ratio (read as a risk ratio unless --common-outcome).
    #[arg(long, value_name = "EST", allow_negative_numbers = true)]
    hr: Option<f64>,
    /// A standardized mean difference (needs --se).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    smd: Option<f64>,
    /// A linear-regression coefficient of the exposure (needs --se and --df).
    #[arg(long, value_name = "B", allow_negative_numbers = true)]
    estimate: Option<f64>,
    /// Confidence interval of the ratio, as LOWER,UPPER.
    #[arg(long, value_name = "LO,HI", allow_hyphen_values = true)]
    ci: Option<String>,
    /// The outcome is common (above about 15%): convert the odds or hazard
    /// ratio to an approximate risk ratio.
    #[arg(long)]
    common_outcome: bool,
    /// Standard error of --smd or --estimate.
    #[arg(long, value_name = "SE", allow_negative_numbers = true)]
    se: Option<f64>,
    /// Residual degrees of freedom of the regression behind --estimate.
    #[arg(long, value_name = "DF", allow_negative_numbers = true)]
    df: Option<f64>,
    /// Proportion of the estimate to explain away (1 = all of it).
    #[arg(long, value_name = "Q", allow_negative_numbers = true)]
    q: Option<f64>,
    /// Significance level for the robustness value and adjusted intervals.
    #[arg(long, value_name = "ALPHA", allow_negative_numbers = true)]
    alpha: Option<f64>,
    /// Confidence level of the interval for --smd.
    #[arg(long, value_name = "LEVEL", allow_negative_numbers = true)]
    level: Option<f64>,
    /// Hypothesized partial R2 of a confounder with the exposure (comma-separated
    /// list, paired with --r2-outcome).
    #[arg(long, value_name = "R[,R...]", allow_hyphen_values = true)]
    r2_exposure: Option<String>,
    /// Hypothesized partial R2 of a confounder with the outcome (comma-separated
    /// list, paired with --r2-exposure).
    #[arg(long, value_name = "R[,R...]", allow_hyphen_values = true)]
    r2_outcome: Option<String>,
    /// text (a readable summary) or json.
    #[arg(long, default_value = "text", value_parser = ["text", "json"])]
    format: String,
    /// Also write the sensitivity figure to this SVG file.
    #[arg(long, value_name = "FILE.svg")]
    figure: Option<PathBuf>,
    /// Print no notes on standard error.
    #[arg(long)]
    quiet: bool,
}

/// The JSON document of this command.
#[derive(Serialize)]
struct Output {
    #[serde(flatten)]
    block: SensitivityBlock,
    adjusted: Option<Vec<Adjusted>>,
}

fn parse_number(s: &str, flag: &str) -> Result<f64> {
    s.trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| Error::input(format!("{flag}: '{}' is not a number", s.trim())))
}

fn parse_ci(s: &str) -> Result<(f64, f64)> {
    let parts: Vec<&str> = s.split(',').collect();
    if parts.len() != 2 {
        return Err(Error::input(format!(
            "--ci '{s}': expected two numbers LOWER,UPPER"
        )));
    }
    let lo = parse_number(parts[0], "--ci")?;
    let hi = parse_number(parts[1], "--ci")?;
    if lo > hi {
        return Err(Error::input(format!(
            "--ci {s}: the lower limit is above the upper limit"
        )));
    }
    Ok((lo, hi))
}

fn parse_list(s: &str, flag: &str) -> Result<Vec<f64>> {
    let items = split_list(s);
    if items.is_empty() {
        return Err(Error::input(format!("{flag}: expected at least one value")));
    }
    items.iter().map(|x| parse_number(x, flag)).collect()
}

fn in_unit(v: f64, flag: &str) -> Result<f64> {
    if v > 0.0 && v < 1.0 {
        Ok(v)
    } else {
        Err(Error::input(format!("{flag} must be in (0, 1) (got {v})")))
    }
}

/// Refuses a flag that does not apply to the chosen input.
fn refuse(given: bool, flag: &str, applies: &str) -> Result<()> {
    if given {
        Err(Error::input(format!("{flag} applies only to {applies}")))
    } else {
        Ok(())
    }
}

struct Regression {
    coef: Coefficient,
    rv: RobustnessValue,
    adjusted: Option<Vec<Adjusted>>,
}

fn ratio_input(a: &Args) -> Result<EValue> {
    let ci = a.ci.as_deref().map(parse_ci).transpose()?;
    refuse(a.se.is_some(), "--se", "--smd and --estimate")?;
    if let Some(rr) = a.rr {
        refuse(a.common_outcome, "--common-outcome", "--or and --hr")?;
        positive(rr, "--rr")?;
        evalue::risk_ratio(rr, ci)
    } else if let Some(or) = a.or {
        positive(or, "--or")?;
        evalue::odds_ratio(or, ci, a.common_outcome)
    } else {
        let hr = a.hr.unwrap_or(f64::NAN);
        positive(hr, "--hr")?;
        evalue::hazard_ratio(hr, ci, a.common_outcome)
    }
}

fn positive(v: f64, flag: &str) -> Result<()> {
    if v > 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::input(format!("{flag} must be a positive ratio (got {v})")))
    }
}

fn regression_input(a: &Args, b: f64) -> Result<Regression> {
    let se =
        a.se.ok_or_else(|| Error::input("--estimate needs --se (its standard error)"))?;
    let df = a.df.ok_or_else(|| {
        Error::input("--estimate needs --df (the regression's residual degrees of freedom)")
    })?;
    let coef = Coefficient::new(b, se, df)?;
    let alpha = in_unit(a.alpha.unwrap_or(0.05), "--alpha")?;
    let rv = robustness_value(&coef, a.q.unwrap_or(1.0), alpha)?;
    let adjusted = match (&a.r2_exposure, &a.r2_outcome) {
        (None, None) => None,
        (Some(x), Some(y)) => {
            let xs = parse_list(x, "--r2-exposure")?;
            let ys = parse_list(y, "--r2-outcome")?;
            if xs.len() != ys.len() {
                return Err(Error::input(format!(
                    "--r2-exposure has {} values and --r2-outcome {}: give them in pairs",
                    xs.len(),
                    ys.len()
                )));
            }
            Some(
                xs.iter()
                    .zip(&ys)
                    .map(|(&rx, &ry)| adjust(&coef, rx, ry, alpha))
                    .collect::<Result<Vec<_>>>()?,
            )
        }
        (Some(_), None) => return Err(Error::input("--r2-exposure needs --r2-outcome")),
        (None, Some(_)) => return Err(Error::input("--r2-outcome needs --r2-exposure")),
    };
    Ok(Regression { coef, rv, adjusted })
}

/// Runs the command.
pub fn run(a: Args) -> Result<i32> {
    if let Some(level) = a.level {
        in_unit(level, "--level")?;
    }
    let regression_only = "--estimate";
    let not_regression = a.estimate.is_none();
    if not_regression {
        refuse(a.df.is_some(), "--df", regression_only)?;
        refuse(a.q.is_some(), "--q", regression_only)?;
        refuse(a.alpha.is_some(), "--alpha", regression_only)?;
        refuse(a.r2_exposure.is_some(), "--r2-exposure", regression_only)?;
        refuse(a.r2_outcome.is_some(), "--r2-outcome", regression_only)?;
    }
    if a.smd.is_none() {
        refuse(a.level.is_some(), "--level", "--smd")?;
    }
    let (ev, reg) = if let Some(d) = a.smd {
        refuse(
            a.ci.is_some(),
            "--ci",
            "--rr, --or and --hr (give --se with --smd)",
        )?;
        refuse(a.common_outcome, "--common-outcome", "--or and --hr")?;
        let se =
            a.se.ok_or_else(|| Error::input("--smd needs --se (its standard error)"))?;
        (
            Some(evalue::standardized_difference(d, se, a.level.unwrap_or(0.95))?),
            None,
        )
    } else if let Some(b) = a.estimate {
        refuse(
            a.ci.is_some(),
            "--ci",
            "--rr, --or and --hr (give --se with --estimate)",
        )?;
        refuse(a.common_outcome, "--common-outcome", "--or and --hr")?;
        (None, Some(regression_input(&a, b)?))
    } else {
        (Some(ratio_input(&a)?), None)
    };

    if let Some(path) = &a.figure {
        let svg = figure(ev.as_ref(), reg.as_ref())?;
        write_atomic(path, svg.as_bytes(), &[])?;
        if !a.quiet {
            eprintln!("causeway: wrote the sensitivity figure to {}", path.display());
        }
    }

    match a.format.as_str() {
        "json" => {
            let out = Output {
                block: SensitivityBlock {
                    by_contrast: Vec::new(),
                    by_horizon: Vec::new(),
                    evalue: ev,
                    robustness_value: reg.as_ref().map(|r| r.rv.clone()),
                    benchmarks: None,
                },
                adjusted: reg.and_then(|r| r.adjusted),
            };
            let text = serde_json::to_string_pretty(&out)
                .map_err(|e| Error::Internal(format!("could not write JSON: {e}")))?;
            print_stdout(&format!("{text}\n"))?;
        }
        _ => print_stdout(&text(ev.as_ref(), reg.as_ref()))?,
    }
    Ok(0)
}

fn text(ev: Option<&EValue>, reg: Option<&Regression>) -> String {
    let mut s = String::from("Sensitivity to unmeasured confounding\n\n");
    if let Some(e) = ev {
        s.push_str(&evalue_section(e, &super::Flags));
        s.push('\n');
    }
    if let Some(r) = reg {
        s.push_str(&robustness_section(&r.coef, &r.rv));
        s.push('\n');
        if let Some(rows) = &r.adjusted {
            s.push_str(&adjusted_section(rows, r.rv.alpha));
            s.push('\n');
        }
    }
    s.push_str(&wrap(&format!("Caution: {LIMITS} {CAUTION}"), 78, ""));
    s
}

fn figure(ev: Option<&EValue>, reg: Option<&Regression>) -> Result<String> {
    let r2 = reg.map(|r| {
        (
            &r.rv,
            hypothesised_yardsticks(r.adjusted.as_deref().unwrap_or_default()),
        )
    });
    sensitivity_figure::figure(ev, r2)
}
