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
