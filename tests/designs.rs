//! Seeded data-generating designs shared by the quick coverage tests and
//! the larger coverage study (benches/coverage.rs includes this file), so
//! both draw from one definition of each design. Every design is invented.

use causeway::data::Dataset;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

pub fn rng(seed: u64) -> ChaCha8Rng {
    ChaCha8Rng::seed_from_u64(seed)
}

pub fn normal(r: &mut ChaCha8Rng) -> f64 {
    r.sample(rand_distr::StandardNormal)
}

pub fn dataset(cols: Vec<(&str, Vec<f64>)>) -> Dataset {
    Dataset::from_columns("sim", cols.into_iter().map(|(n, v)| (n.to_string(), v)).collect()).unwrap()
}

/// Clustered data: `g` clusters of `m` rows; the exposure leans on a
/// cluster tendency and the outcome carries a shared cluster effect.
pub fn clustered(seed: u64, g: usize, m: usize) -> Dataset {
    let mut r = rng(seed);
    let (mut site, mut x, mut a, mut y) = (vec![], vec![], vec![], vec![]);
    for k in 0..g {
        let tendency = 1.5 * normal(&mut r);
        let effect = 2.0 * normal(&mut r);
        for _ in 0..m {
            let xi = normal(&mut r);
            let p = 1.0 / (1.0 + (-(0.5 * xi + tendency)).exp());
            let ai = if r.random::<f64>() < p { 1.0 } else { 0.0 };
            site.push(k as f64);
            x.push(xi);
            a.push(ai);
            y.push(1.0 + 2.0 * ai + xi + effect + normal(&mut r));
        }
    }
    dataset(vec![("site", site), ("x", x), ("a", a), ("y", y)])
}

/// A survey sample: units drawn with probabilities that rise with `x`
/// (0.15 to 0.85), carrying the weight `w` = 1 / probability; the effect
/// 2 + x averages 2 in the population, near 2.4 among the sampled.
pub fn surveyed(seed: u64, n: usize) -> Dataset {
    let mut r = rng(seed);
    let (mut x, mut a, mut y, mut w) = (vec![], vec![], vec![], vec![]);
    while x.len() < n {
        let xi = normal(&mut r);
        let p = 1.0 / (1.0 + (-0.5 * xi).exp());
        let ai = if r.random::<f64>() < p { 1.0 } else { 0.0 };
        let yi = 1.0 + ai * (2.0 + xi) + xi + normal(&mut r);
        // Selection probabilities between 0.15 and 0.85 (weights 1.2 to 6.7).
        let s = 0.15 + 0.7 / (1.0 + (-1.5 * xi).exp());
        if r.random::<f64>() < s {
            x.push(xi);
            a.push(ai);
            y.push(yi);
            w.push(1.0 / s);
        }
    }
    dataset(vec![("x", x), ("a", a), ("y", y), ("w", w)])
}

/// `n` rows in which x confounds and modifies the effect (ATE 2) and
/// the outcome is missing more often for larger x (missing at random given
/// x; about 40% missing).
pub fn outcome_missing(seed: u64, n: usize) -> Dataset {
    let mut r = rng(seed);
    let (mut x, mut a, mut y) = (vec![], vec![], vec![]);
    for _ in 0..n {
        let xi = normal(&mut r);
        let ai = f64::from(u8::from(r.random::<f64>() < 1.0 / (1.0 + (-0.5 * xi).exp())));
        let yi = 1.0 + ai * (2.0 + xi) + xi + normal(&mut r);
        let seen = r.random::<f64>() < 1.0 / (1.0 + (-(0.5 - 1.5 * xi)).exp());
        x.push(xi);
        a.push(ai);
        y.push(if seen { yi } else { f64::NAN });
    }
    dataset(vec![("x", x), ("a", a), ("y", y)])
}

/// `n` rows with true effect 2: l ~ N(0, 1), a ~ Bernoulli(expit(0.5 l)),
/// y = 1 + 2 a + l + N(0, 1). The outcome is missing with a probability
/// that depends on the exposure (always observed); the covariate, on rows
/// whose outcome is observed, with a probability rising steeply with the
/// outcome. Missing at random: each pattern depends on observed values.
pub fn missing_at_random(seed: u64, n: usize) -> Dataset {
    let mut r = rng(seed);
    let expit = |x: f64| 1.0 / (1.0 + (-x).exp());
    let (mut l, mut a, mut y) = (vec![], vec![], vec![]);
    for _ in 0..n {
        let li = normal(&mut r);
        let ai = f64::from(u8::from(r.random::<f64>() < expit(0.5 * li)));
        let yi = 1.0 + 2.0 * ai + li + normal(&mut r);
        let y_missing = r.random::<f64>() < expit(-1.5 + ai);
        let l_missing = !y_missing && r.random::<f64>() < expit(-2.0 + 1.5 * (yi - 2.0));
        l.push(if l_missing { f64::NAN } else { li });
        a.push(ai);
        y.push(if y_missing { f64::NAN } else { yi });
    }
    dataset(vec![("l", l), ("a", a), ("y", y)])
}
