//! The analysis by multiple imputation: the used columns' missing cells
//! imputed ([`crate::impute`]), each completed dataset analysed in full by
//! [`super::run`], and every estimate, curve point, E-value and robustness
//! value pooled by Rubin's rules ([`crate::infer::pool`]).
//!
//! The complete-data degrees of freedom are the used rows minus the
//! outcome model's terms (`n - k`, for every method alike). Ratios and
//! odds ratios are pooled on the log scale. The bootstrap is not combined
//! with imputation: the within-imputation variance is each dataset's
//! sandwich variance.

use super::{Analysis, Options, check_summary};
use crate::data::{Dataset, MissingData};
use crate::estimate::Scale;
use crate::impute::{self, Settings};
use crate::infer::pool::{Pooled, rubin};
use crate::plan::Plan;
use crate::problem::Missing;
use crate::sensitivity::evalue::{self, EValue};
use crate::sensitivity::robustness::{self, Coefficient};
use crate::{Error, Result, Setting};

/// Runs the analysis on every imputed dataset and pools the results.
pub(super) fn run(plan: &Plan, data: &Dataset, opts: &Options) -> Result<Analysis> {
    if opts.bootstrap > 0 {
        return Err(Error::option(
            Setting::Bootstrap,
            "with multiple imputation: the bootstrap is not combined with it; the pooled intervals come from \
             Rubin's rules over each imputed dataset's sandwich variance; leave the bootstrap out, or \
             handle missing values by complete cases",
        ));
    }
    if opts.model.subgroup.is_some() {
        return Err(Error::option(
            Setting::Subgroup,
            "with multiple imputation: effects within subgroups are not pooled across imputed datasets yet; leave \
             the subgroups out, \
             or handle missing values by complete cases or by weighting for a missing outcome",
        ));
    }
    let spec = super::spec(plan, opts);
    let mut columns: Vec<&str> = vec![&spec.exposure, &spec.outcome];
    columns.extend(spec.covariates.iter().map(String::as_str));
    columns.extend(spec.mediators.iter().map(String::as_str));
    let settings = Settings {
        columns,
        categorical: &spec.categorical,
        imputations: spec.imputations,
        seed: opts.seed,
        threads: opts.threads,
    };
    let (datasets, summary) = impute::impute(data, &settings)?;
    let mut inner = opts.clone();
    inner.model.missing = Missing::Complete;
    inner.check = None;
    let analyses = datasets
        .iter()
        .map(|d| super::run(plan, d, &inner))
        .collect::<Result<Vec<Analysis>>>()?;
    let mut out = pool(&analyses, opts.model.level)?;
    let m = analyses.len();
    // Warnings that differ only in their numbers are shown once, as the
    // first dataset that raised them words them.
    let key = |w: &str| w.chars().filter(|c| !c.is_ascii_digit()).collect::<String>();
    let mut warnings: Vec<String> = Vec::new();
    let mut keys: Vec<String> = Vec::new();
    let mut similar = 0usize;
    for w in analyses.iter().flat_map(|a| &a.warnings) {
        let k = key(w);
        if !keys.contains(&k) {
            keys.push(k);
            warnings.push(w.clone());
        } else if !warnings.contains(w) {
            similar += 1;
        }
    }
    if similar > 0 {
        warnings.push(format!(
            "{similar} further warnings of the kinds above, with other numbers, came from other imputed \
             datasets"
        ));
    }
    if summary.largest_change > 0.1 {
        warnings.push(format!(
            "the imputation chains may not have settled: an imputed column's mean (in standard \
             deviations) or level share still moved by {:.3} between the last two of {} rounds",
            summary.largest_change, summary.iterations
        ));
    }
    out.warnings = warnings;
    let imputed: Vec<String> = summary
        .columns
        .iter()
        .map(|c| format!("{} ({} cells, {})", c.column, c.missing, c.model))
        .collect();
    out.notes.push(format!(
        "missing values were imputed by chained equations ({}) from every other used column, the \
         exposure and outcome included, in {} rounds; each of the {m} imputed datasets was analysed in \
         full and the estimates were pooled by Rubin's rules, with Barnard-Rubin degrees of freedom \
         (complete-data degrees of freedom: used rows minus outcome-model terms) and the fraction of \
         missing information per estimate; ratios are pooled on the log scale; the diagnostics and \
         balance shown are those of the first imputed dataset",
        if imputed.is_empty() {
            "no used column had missing cells".to_string()
        } else {
            imputed.join(", ")
        },
        summary.iterations
    ));
    out.methods_sentences.push(format!(
        "Missing values were imputed {m} times by chained equations (predictive mean matching for \
         numeric columns, logistic or multinomial regression for categorical ones, {} rounds), and \
         the results were combined by Rubin's rules.",
        summary.iterations
    ));
    // The pooled sample is the whole file; its missing-data patterns are
    // those of the data before imputation.
    let before = data.complete_cases(&settings.columns)?;
    out.sample.missing = MissingData {
        handling: Missing::Impute.word(),
        imputations: Some(m),
        imputed: Some(summary),
        ..before.missing
    };
    if let Some(c) = &opts.check {
        let sum = check_summary(plan, data, c)?;
        if sum.rejected > 0 {
            out.warnings.push(format!("graph check: {}", sum.sentence()));
        }
        out.check = Some(sum);
    }
    Ok(out)
}

/// On the pooling scale: the log for ratios.
fn to_pool(scale: Scale, estimate: f64, std_error: f64) -> (f64, f64) {
    match scale {
        Scale::Difference => (estimate, std_error * std_error),
        Scale::Ratio | Scale::Odds => (estimate.ln(), (std_error / estimate).powi(2)),
    }
}

/// Estimate, standard error and interval back on the reported scale.
fn from_pool(scale: Scale, p: &Pooled, level: f64) -> Result<(f64, f64, [f64; 2])> {
    let ci = p.ci(level)?;
    Ok(match scale {
        Scale::Difference => (p.estimate, p.std_error(), ci),
        Scale::Ratio | Scale::Odds => {
            let e = p.estimate.exp();
            (e, e * p.std_error(), [ci[0].exp(), ci[1].exp()])
        }
    })
}

/// The first analysis with every estimate, curve point and sensitivity
/// value replaced by its pooled value.
fn pool(analyses: &[Analysis], level: f64) -> Result<Analysis> {
    let first = &analyses[0];
    let nu_com = |a: &Analysis| (a.sample.used as f64 - a.model_terms as f64).max(1.0);
    let nu = nu_com(first);
    let mut out = first.clone();
    let layout_differs =
        || Error::Internal("the imputed datasets' analyses differ in their estimates".into());
    for (r, item) in out.estimates.iter_mut().enumerate() {
        let e = &mut item.estimate;
        let (mut q, mut u) = (Vec::new(), Vec::new());
        for a in analyses {
            let x = &a.estimates.get(r).ok_or_else(layout_differs)?.estimate;
            if x.method != e.method || x.spec.label != e.spec.label {
                return Err(layout_differs());
            }
            let (qi, ui) = to_pool(e.scale, x.estimate, x.std_error);
            q.push(qi);
            u.push(ui);
        }
        let p = rubin(&q, &u, nu)?;
        let (est, se, ci) = from_pool(e.scale, &p, level)?;
        crate::estimate::finite_result(
            &[est, se, ci[0], ci[1]],
            &format!("the pooled {} estimate", e.method),
        )?;
        e.estimate = est;
        e.std_error = se;
        e.ci = ci;
        e.ci_method = "rubin".into();
        e.df = Some(p.df);
        e.fraction_missing_information = Some(p.fmi);
        if let Some(means) = &mut e.means {
            let k = analyses.len() as f64;
            let of = |f: &dyn Fn(&crate::estimate::Means) -> f64| {
                analyses
                    .iter()
                    .filter_map(|a| a.estimates[r].estimate.means.as_ref().map(f))
                    .sum::<f64>()
                    / k
            };
            means.exposed = of(&|m| m.exposed);
            means.unexposed = of(&|m| m.unexposed);
        }
        item.analytic_ci = ci;
        item.bootstrap = None;
    }
    for (c, curve) in out.curves.iter_mut().enumerate() {
        for (j, point) in curve.points.iter_mut().enumerate() {
            let (mut q, mut u) = (Vec::new(), Vec::new());
            for a in analyses {
                let x = a
                    .curves
                    .get(c)
                    .and_then(|c| c.points.get(j))
                    .ok_or_else(layout_differs)?;
                q.push(x.estimate);
                u.push(x.std_error * x.std_error);
            }
            let p = rubin(&q, &u, nu)?;
            point.estimate = p.estimate;
            point.std_error = p.std_error();
            point.ci = p.ci(level)?;
        }
    }
    // Sensitivity: each dataset's E-value risk ratio pooled on the log
    // scale, each dataset's outcome-model coefficient pooled for the
    // robustness value (both approximate).
    let z = crate::dist::normal_critical(level)?;
    let s = &mut out.sensitivity;
    s.evalue = pool_evalue(
        analyses.iter().map(|a| a.sensitivity.evalue.as_ref()),
        z,
        nu,
        level,
    );
    for (k, c) in s.by_contrast.iter_mut().enumerate() {
        c.evalue = pool_evalue(
            analyses
                .iter()
                .map(|a| a.sensitivity.by_contrast.get(k).and_then(|c| c.evalue.as_ref())),
            z,
            nu,
            level,
        );
        c.robustness_value = None;
    }
    let coefficients: Option<Vec<Coefficient>> = analyses.iter().map(|a| a.details.coefficient).collect();
    out.details.coefficient = None;
    s.robustness_value = None;
    if let Some(cs) = coefficients {
        let q: Vec<f64> = cs.iter().map(|c| c.estimate).collect();
        let u: Vec<f64> = cs.iter().map(|c| c.se * c.se).collect();
        let p = rubin(&q, &u, cs[0].df)?;
        if let Ok(c) = Coefficient::new(p.estimate, p.std_error(), p.df)
            && let Ok(rv) = robustness::robustness_value(&c, 1.0, 1.0 - level)
        {
            s.robustness_value = Some(rv);
            out.details.coefficient = Some(c);
        }
    }
    if s.benchmarks.take().is_some() {
        out.details.notes.push(
            "no benchmark bounds: they rest on each imputed dataset's covariate strengths, which are not pooled"
                .into(),
        );
    }
    out.details.notes.push(
        "with multiple imputation the E-value and robustness value are approximate: they are formed from \
         the pooled estimate and interval (the E-value's risk ratio pooled on the log scale, the \
         outcome-model coefficient pooled by Rubin's rules with its Barnard-Rubin degrees of freedom)"
            .into(),
    );
    Ok(out)
}

/// Each dataset's E-value risk ratio and interval pooled on the log scale
/// (the standard error read from the interval's width), then the E-value
/// of the pooled ratio; `None` when a dataset has none.
fn pool_evalue<'a>(
    each: impl Iterator<Item = Option<&'a EValue>>,
    z: f64,
    nu: f64,
    level: f64,
) -> Option<EValue> {
    let each: Vec<&EValue> = each.collect::<Option<_>>()?;
    let first = *each.first()?;
    let q: Vec<f64> = each.iter().map(|e| e.rr.ln()).collect();
    let u: Option<Vec<f64>> = each
        .iter()
        .map(|e| e.rr_ci.map(|(lo, hi)| ((hi.ln() - lo.ln()) / (2.0 * z)).powi(2)))
        .collect();
    let mut e = match u {
        Some(u) => {
            let p = rubin(&q, &u, nu).ok()?;
            let ci = p.ci(level).ok()?;
            evalue::risk_ratio(p.estimate.exp(), Some((ci[0].exp(), ci[1].exp()))).ok()?
        }
        None => evalue::risk_ratio((q.iter().sum::<f64>() / q.len() as f64).exp(), None).ok()?,
    };
    e.scale = first.scale.clone();
    Some(e)
}
