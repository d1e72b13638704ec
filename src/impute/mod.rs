//! Multiple imputation by chained equations (van Buuren &
//! Groothuis-Oudshoorn 2011, J Stat Softw 45(3); van Buuren 2018,
//! *Flexible Imputation of Missing Data*, 2nd ed., ch. 3 and 4).
//!
//! Every used column with missing cells is imputed from all the other used
//! columns (the exposure and the outcome included), by a model fitting its
//! kind, with the model's parameters drawn from their approximate
//! posterior so that each imputation carries the uncertainty of its model:
//!
//! - a numeric column: predictive mean matching (van Buuren 2018, sec.
//!   3.4, "type 1" matching): the linear model's `sigma^2` is drawn as
//!   `RSS / chi^2(n_obs - p)` and its coefficients from
//!   `N(beta_hat, sigma^2 (X'X)^-1)`; each missing cell takes the observed
//!   value of one of the [`DONORS`] observed rows whose fitted mean (at
//!   `beta_hat`) is nearest its own drawn mean. Imputed values are values
//!   that occur, so skewed, bounded or integer columns stay so;
//! - a column of two values: logistic regression, coefficients drawn from
//!   `N(beta_hat, I^-1)` (the inverse information), the value drawn from
//!   the fitted probability;
//! - a categorical column (text, or named categorical): multinomial
//!   logistic regression, likewise.
//!
//! The fits are the crate's own ([`crate::model`]). Missing cells start as
//! random draws of the column's observed values; the chain then visits the
//! columns in turn for [`ITERATIONS`] rounds. Imputation `m` draws from the
//! random stream `(seed, m)` alone ([`crate::random::stream_rng`]), so the
//! imputed datasets are the same for any number of threads. Predictors
//! enter as numbers scaled by their observed mean and standard deviation
//! and as level indicators. Sampling weights and clusters play no part in
//! the imputation models.

use crate::data::{Column, DenseRows, MAX_LEVELS};
use crate::data::{Dataset, Imputed, ImputedColumn};
use crate::model::{Logit, LogitOptions, Multinomial, Ols};
use crate::random::stream_rng;
use crate::resources::{Demand, Machine};
use crate::{Error, Result, Setting};
use nalgebra::{DMatrix, DVector};
use rand::RngExt;
use rand_chacha::ChaCha8Rng;
use rand_distr::{ChiSquared, Distribution, StandardNormal};
use rayon::prelude::*;

/// Rounds of the chain (van Buuren 2018, sec. 6.5.2: 5 to 20 rounds
/// usually suffice; the reported stability measure shows whether they did).
pub const ITERATIONS: usize = 10;

/// Observed rows among which predictive mean matching draws its donor
/// (van Buuren 2018, sec. 3.4.3: 5 is the usual choice).
pub const DONORS: usize = 5;

/// Most imputations accepted whatever the memory (each is analysed in full).
pub const MAX_IMPUTATIONS: usize = 1000;

/// The settings of an imputation run.
#[derive(Debug, Clone)]
pub struct Settings<'a> {
    /// The columns to impute from each other.
    pub columns: Vec<&'a str>,
    /// Columns to treat as categorical.
    pub categorical: &'a [String],
    /// Imputed datasets.
    pub imputations: usize,
    /// Seed of the random streams.
    pub seed: u64,
    /// Worker threads (0: all cores).
    pub threads: usize,
}

/// How one column is imputed.
#[derive(Debug, Clone)]
enum Kind {
    /// Predictive mean matching.
    Numeric { mean: f64, sd: f64 },
    /// Logistic (two levels) or multinomial: each level's value in the
    /// column (a number, or a text code).
    Levels(Vec<LevelValue>),
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum LevelValue {
    Number(f64),
    Code(u32),
}

/// A column in the chain: its kind, rows and current values (numbers, or
/// level indices).
#[derive(Debug, Clone)]
struct Var {
    name: String,
    kind: Kind,
    observed: Vec<usize>,
    missing: Vec<usize>,
    start: Vec<f64>,
}

impl Var {
    fn of(data: &Dataset, name: &str, categorical: bool) -> Result<Var> {
        let col = data.require(name)?;
        let n = col.len();
        let observed: Vec<usize> = (0..n).filter(|&i| !col.is_missing(i)).collect();
        let missing: Vec<usize> = (0..n).filter(|&i| col.is_missing(i)).collect();
        if observed.is_empty() {
            return Err(Error::input(format!(
                "{}: column '{name}' is missing in every row, so it cannot be imputed (leave it out of \
                 the graph's adjustment or mark it unobserved)",
                data.source()
            )));
        }
        let levels = level_values(col, &observed, categorical);
        if !missing.is_empty() {
            let distinct = levels
                .as_ref()
                .map_or_else(|| distinct_numbers(col, &observed), Vec::len);
            if distinct < 2 {
                return Err(Error::input(format!(
                    "{}: column '{name}' has a single observed value ({} rows observed, {} missing): \
                     there is nothing to impute its missing cells from",
                    data.source(),
                    observed.len(),
                    missing.len()
                )));
            }
        }
        let (kind, start) = match levels {
            Some(levels) => {
                if levels.len() > MAX_LEVELS {
                    return Err(Error::input(format!(
                        "column '{name}' has {} levels, more than the {MAX_LEVELS} a categorical column may have",
                        levels.len()
                    )));
                }
                let start = (0..n)
                    .map(|i| {
                        let v = value_of(col, i);
                        levels.iter().position(|l| *l == v).map_or(f64::NAN, |k| k as f64)
                    })
                    .collect();
                (Kind::Levels(levels), start)
            }
            None => {
                let k = observed.len() as f64;
                let mean = observed.iter().map(|&i| col.values[i]).sum::<f64>() / k;
                let var = observed
                    .iter()
                    .map(|&i| (col.values[i] - mean).powi(2))
                    .sum::<f64>()
                    / k;
                let sd = if var > 0.0 { var.sqrt() } else { 1.0 };
                (Kind::Numeric { mean, sd }, col.values.clone())
            }
        };
        Ok(Var {
            name: name.to_string(),
            kind,
            observed,
            missing,
            start,
        })
    }

    fn model(&self) -> &'static str {
        match &self.kind {
            Kind::Numeric { .. } => "predictive mean matching",
            Kind::Levels(l) if l.len() == 2 => "logistic",
            Kind::Levels(_) => "multinomial",
        }
    }

    /// The predictor columns this variable contributes.
    fn width(&self) -> usize {
        match &self.kind {
            Kind::Numeric { .. } => 1,
            Kind::Levels(l) => l.len() - 1,
        }
    }

    fn put(&self, values: &[f64], i: usize, row: &mut [f64]) {
        match &self.kind {
            Kind::Numeric { mean, sd } => row[0] = (values[i] - mean) / sd,
            Kind::Levels(_) => {
                row.iter_mut().for_each(|v| *v = 0.0);
                let k = values[i] as usize;
                if k > 0 {
                    row[k - 1] = 1.0;
                }
            }
        }
    }
}

fn value_of(col: &Column, i: usize) -> LevelValue {
    match col.codes() {
        Some((codes, _)) => LevelValue::Code(codes[i]),
        None => LevelValue::Number(col.values[i]),
    }
}

/// The levels of a categorical or two-valued column, in order of first
/// appearance (`None`: a numeric column of more than two values).
fn level_values(col: &Column, observed: &[usize], categorical: bool) -> Option<Vec<LevelValue>> {
    let numeric = !col.is_text() && !categorical;
    let mut levels: Vec<LevelValue> = Vec::new();
    for &i in observed {
        let v = value_of(col, i);
        if !levels.contains(&v) {
            levels.push(v);
            if numeric && levels.len() > 2 {
                return None;
            }
            if levels.len() > MAX_LEVELS {
                break;
            }
        }
    }
    Some(levels)
}

fn distinct_numbers(col: &Column, observed: &[usize]) -> usize {
    let first = col.values[observed[0]];
    if observed.iter().any(|&i| col.values[i] != first) {
        2
    } else {
        1
    }
}

/// Imputes the missing cells of `settings.columns` in `data`: one
/// completed dataset per imputation, and the summary the report shows.
pub fn impute(data: &Dataset, settings: &Settings<'_>) -> Result<(Vec<Dataset>, Imputed)> {
    let m = settings.imputations;
    let n = data.nrows();
    let vars = settings
        .columns
        .iter()
        .map(|c| Var::of(data, c, settings.categorical.iter().any(|k| k == c)))
        .collect::<Result<Vec<Var>>>()?;
    let machine = Machine::now();
    // Each imputation holds a copy of the used columns (values and codes)
    // and its chain's working columns and design.
    let cols = vars.len() as u64;
    let width: u64 = vars.iter().map(|v| v.width() as u64).sum::<u64>() + 1;
    let demand = Demand {
        setting: Setting::Imputations,
        count: m as u64,
        unit: "imputations",
        per_unit: (n as u64).saturating_mul(12 * cols + 8 * width),
        fixed: 0,
        least: 2,
    };
    if !(2..=MAX_IMPUTATIONS).contains(&m) {
        return Err(Error::option(
            Setting::Imputations,
            format!("{m}: expected at least 2 and at most {MAX_IMPUTATIONS} imputed datasets"),
        ));
    }
    machine.check(&demand)?;
    let threads = machine.threads(settings.threads);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| Error::Internal(format!("could not start worker threads: {e}")))?;
    type Run = Result<(Vec<Vec<f64>>, [Round; 2])>;
    let runs: Vec<Run> = pool.install(|| {
        (0..m as u64)
            .into_par_iter()
            .map(|s| chain(&vars, &mut stream_rng(settings.seed, s)))
            .collect()
    });
    let mut datasets = Vec::with_capacity(m);
    let mut rounds = Vec::with_capacity(m);
    for r in runs {
        let (values, last) = r?;
        rounds.push(last);
        let mut d = data.clone();
        for (v, vals) in vars.iter().zip(&values) {
            if v.missing.is_empty() {
                continue;
            }
            let col = d.column_mut(&v.name)?;
            for &i in &v.missing {
                match &v.kind {
                    Kind::Numeric { .. } => col.fill_number(i, vals[i]),
                    Kind::Levels(l) => match l[vals[i] as usize] {
                        LevelValue::Number(x) => col.fill_number(i, x),
                        LevelValue::Code(c) => col.fill_code(i, c),
                    },
                }
            }
        }
        datasets.push(d);
    }
    let imputed = Imputed {
        iterations: ITERATIONS,
        largest_change: largest_change(&rounds),
        columns: vars
            .iter()
            .filter(|v| !v.missing.is_empty())
            .map(|v| ImputedColumn {
                column: v.name.clone(),
                missing: v.missing.len(),
                model: v.model().to_string(),
            })
            .collect(),
    };
    Ok((datasets, imputed))
}

/// Summaries of one round: per variable, the mean of a numeric column's
/// imputed cells in its observed standard deviations, or each level's
/// share of a categorical column's imputed cells.
type Round = Vec<Vec<f64>>;

/// One chain: the completed values of every variable, and the summaries
/// of its last two rounds.
fn chain(vars: &[Var], rng: &mut ChaCha8Rng) -> Result<(Vec<Vec<f64>>, [Round; 2])> {
    let mut values: Vec<Vec<f64>> = vars.iter().map(|v| v.start.clone()).collect();
    for (v, vals) in vars.iter().zip(values.iter_mut()) {
        for &i in &v.missing {
            let donor = v.observed[rng.random_range(0..v.observed.len())];
            vals[i] = vals[donor];
        }
    }
    let targets: Vec<usize> = (0..vars.len()).filter(|&j| !vars[j].missing.is_empty()).collect();
    let mut rounds: [Round; 2] = [vec![Vec::new(); vars.len()], vec![Vec::new(); vars.len()]];
    for _ in 0..ITERATIONS {
        rounds.swap(0, 1);
        for &j in &targets {
            let v = &vars[j];
            let drawn = draw(vars, &values, j, rng).map_err(|e| match e {
                Error::Input(_) | Error::Option { .. } => e,
                other => Error::Numerical(format!("imputing '{}': {other}", v.name)),
            })?;
            for (&i, x) in v.missing.iter().zip(drawn) {
                values[j][i] = x;
            }
            rounds[1][j] = summarise(v, &values[j]);
        }
    }
    Ok((values, rounds))
}

/// The largest change, between the last two rounds, of a summary averaged
/// over the chains.
fn largest_change(rounds: &[[Round; 2]]) -> f64 {
    let m = rounds.len() as f64;
    let Some(first) = rounds.first() else {
        return 0.0;
    };
    let mut change: f64 = 0.0;
    for j in 0..first[1].len() {
        for k in 0..first[1][j].len() {
            let d: f64 = rounds.iter().map(|r| r[1][j][k] - r[0][j][k]).sum::<f64>() / m;
            change = change.max(d.abs());
        }
    }
    change
}

fn summarise(v: &Var, values: &[f64]) -> Vec<f64> {
    let k = v.missing.len() as f64;
    match &v.kind {
        Kind::Numeric { sd, .. } => vec![v.missing.iter().map(|&i| values[i]).sum::<f64>() / k / sd],
        Kind::Levels(l) => (0..l.len())
            .map(|c| v.missing.iter().filter(|&&i| values[i] as usize == c).count() as f64 / k)
            .collect(),
    }
}

/// The design of the rows `rows`: an intercept and every variable but `j`.
fn design(vars: &[Var], values: &[Vec<f64>], j: usize, rows: &[usize]) -> DMatrix<f64> {
    let p = 1 + vars
        .iter()
        .enumerate()
        .filter(|&(k, _)| k != j)
        .map(|(_, v)| v.width())
        .sum::<usize>();
    let mut x = DMatrix::zeros(rows.len(), p);
    let mut buf = vec![0.0; MAX_LEVELS + 1];
    for (r, &i) in rows.iter().enumerate() {
        x[(r, 0)] = 1.0;
        let mut c = 1;
        for (k, v) in vars.iter().enumerate().filter(|&(k, _)| k != j) {
            let w = v.width();
            v.put(&values[k], i, &mut buf[..w]);
            for (t, &b) in buf[..w].iter().enumerate() {
                x[(r, c + t)] = b;
            }
            c += w;
        }
    }
    x
}

fn normals(k: usize, rng: &mut ChaCha8Rng) -> DVector<f64> {
    DVector::from_fn(k, |_, _| StandardNormal.sample(rng))
}

/// A draw from `N(0, cov)` by the symmetric eigen-decomposition (a
/// covariance with aliased, zero, directions is positive semi-definite).
fn correlated(cov: &DMatrix<f64>, rng: &mut ChaCha8Rng) -> DVector<f64> {
    let z = normals(cov.nrows(), rng);
    let e = cov.clone().symmetric_eigen();
    let scaled = DVector::from_fn(z.len(), |i, _| z[i] * e.eigenvalues[i].max(0.0).sqrt());
    &e.eigenvectors * scaled
}

/// Draws the missing values of variable `j` (in the order of its missing
/// rows) from its model given the current values of the others.
fn draw(vars: &[Var], values: &[Vec<f64>], j: usize, rng: &mut ChaCha8Rng) -> Result<Vec<f64>> {
    let v = &vars[j];
    let xo = DenseRows(design(vars, values, j, &v.observed));
    let xm = design(vars, values, j, &v.missing);
    let y: Vec<f64> = v.observed.iter().map(|&i| values[j][i]).collect();
    match &v.kind {
        Kind::Numeric { .. } => {
            let fit = Ols::fit(&xo, &y, None)?;
            let rank = fit.sum_w - fit.df;
            let df = v.observed.len() as f64 - rank;
            if df < 1.0 || fit.rss <= 0.0 || fit.rss.is_nan() {
                // The column is a function of the others: impute the fit.
                return Ok((&xm * &fit.coef).iter().copied().collect());
            }
            let chi: f64 = ChiSquared::new(df)
                .map_err(|e| Error::Internal(format!("chi-square draw: {e}")))?
                .sample(rng);
            let sigma2 = fit.rss / chi;
            // (X'X)^-1 = cov * df / rss.
            let cov = &fit.cov * (fit.df / fit.rss * sigma2);
            let beta = &fit.coef + correlated(&cov, rng);
            let fitted_obs = &xo.0 * &fit.coef;
            let drawn = &xm * beta;
            Ok(match_means(&y, fitted_obs.as_slice(), drawn.as_slice(), rng))
        }
        Kind::Levels(levels) if levels.len() == 2 => {
            let fit = Logit::fit(&xo, &y, None, None, LogitOptions::default())?;
            let beta = &fit.coef + correlated(&fit.cov, rng);
            let eta = &xm * beta;
            Ok(eta
                .iter()
                .map(|&e| {
                    let p = crate::maths::expit_std(e);
                    f64::from(u8::from(rng.random::<f64>() < p))
                })
                .collect())
        }
        Kind::Levels(levels) => {
            let codes: Vec<usize> = y.iter().map(|&c| c as usize).collect();
            let mut fit = Multinomial::fit(&xo, &codes, levels.len(), None, None, LogitOptions::default())?;
            let stacked = DVector::from_column_slice(fit.coef.as_slice()) + correlated(&fit.cov, rng);
            fit.coef = DMatrix::from_column_slice(fit.coef.nrows(), fit.coef.ncols(), stacked.as_slice());
            let probs = fit.probabilities(&DenseRows(xm));
            Ok((0..v.missing.len())
                .map(|r| {
                    let u: f64 = rng.random();
                    let mut acc = 0.0;
                    for (k, p) in probs.iter().enumerate() {
                        acc += p[r];
                        if u < acc {
                            return k as f64;
                        }
                    }
                    (probs.len() - 1) as f64
                })
                .collect())
        }
    }
}

/// Predictive mean matching: for each drawn mean, the observed value of
/// one of the [`DONORS`] observed rows whose fitted mean is nearest,
/// chosen at random (ties broken by row order).
fn match_means(y: &[f64], fitted: &[f64], drawn: &[f64], rng: &mut ChaCha8Rng) -> Vec<f64> {
    let mut order: Vec<usize> = (0..y.len()).collect();
    order.sort_by(|&a, &b| fitted[a].total_cmp(&fitted[b]).then(a.cmp(&b)));
    let sorted: Vec<f64> = order.iter().map(|&k| fitted[k]).collect();
    let d = DONORS.min(y.len());
    drawn
        .iter()
        .map(|&t| {
            // The d nearest, by widening a window around t's place.
            let mut hi = sorted.partition_point(|&f| f < t);
            let mut lo = hi;
            while hi - lo < d {
                let take_low = match (lo > 0, hi < sorted.len()) {
                    (true, true) => t - sorted[lo - 1] <= sorted[hi] - t,
                    (true, false) => true,
                    _ => false,
                };
                if take_low {
                    lo -= 1;
                } else {
                    hi += 1;
                }
            }
            y[order[lo + rng.random_range(0..d)]]
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::match_means;
    use crate::random::stream_rng;

    #[test]
    fn matching_takes_a_donor_among_the_nearest_fitted_means() {
        let y: Vec<f64> = (0..20).map(|i| 100.0 + i as f64).collect();
        let fitted: Vec<f64> = (0..20).map(|i| i as f64).collect();
        let mut rng = stream_rng(3, 0);
        for _ in 0..50 {
            let v = match_means(&y, &fitted, &[9.6, -5.0, 40.0], &mut rng);
            assert!((107.0..=112.0).contains(&v[0]), "{v:?}");
            assert!((100.0..=104.0).contains(&v[1]), "{v:?}");
            assert!((115.0..=119.0).contains(&v[2]), "{v:?}");
        }
    }
}
