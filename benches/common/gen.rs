//! The seeded data generator of the estimation benchmarks (shared by
//! benches/estimate.rs and benches/bootstrap.rs): 20 covariates (10
//! continuous standard normal, 5 binary, 5 categorical with 4 levels coded
//! 1 to 4), a binary exposure from a logistic model in them, and a
//! continuous outcome Y = 1 + 2 A + (linear in the covariates) + N(0, 1),
//! so the effect of A is 2 for every unit. Written as CSV with columns
//! c1..c10, b1..b5, k1..k5, a, y.
#![allow(dead_code)]

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::Write;
use std::path::Path;

/// Continuous covariates.
pub const CONT: usize = 10;
/// Binary covariates.
pub const BIN: usize = 5;
/// Categorical covariates (4 levels).
pub const CAT: usize = 5;

/// The covariate column names, in file order.
pub fn covariates() -> Vec<String> {
    let mut names: Vec<String> = (1..=CONT).map(|j| format!("c{j}")).collect();
    names.extend((1..=BIN).map(|j| format!("b{j}")));
    names.extend((1..=CAT).map(|j| format!("k{j}")));
    names
}

/// The categorical covariates.
pub fn categorical() -> Vec<String> {
    (1..=CAT).map(|j| format!("k{j}")).collect()
}

/// Writes `rows` seeded rows to `path`.
pub fn generate(path: &Path, rows: usize) {
    let f = std::fs::File::create(path).expect("create bench data");
    let mut w = std::io::BufWriter::with_capacity(1 << 20, f);
    let mut r = ChaCha8Rng::seed_from_u64(20261201);
    let mut header = covariates();
    header.push("a".into());
    header.push("y".into());
    writeln!(w, "{}", header.join(",")).unwrap();
    let expit = |x: f64| 1.0 / (1.0 + (-x).exp());
    let mut line = String::with_capacity(256);
    for _ in 0..rows {
        line.clear();
        let mut lin = 0.0;
        let mut out = 0.0;
        for j in 0..CONT {
            let v: f64 = r.sample(rand_distr::StandardNormal);
            lin += 0.1 * v * if j % 2 == 0 { 1.0 } else { -1.0 };
            out += 0.3 * v;
            line.push_str(&format!("{v:.4},"));
        }
        for j in 0..BIN {
            let v = u8::from(r.random::<f64>() < 0.3 + 0.05 * j as f64);
            lin += 0.2 * f64::from(v);
            out += 0.5 * f64::from(v);
            line.push_str(if v == 1 { "1," } else { "0," });
        }
        for _ in 0..CAT {
            let v = 1 + (r.random::<f64>() * 4.0) as u32;
            lin += 0.1 * f64::from(v);
            out += 0.2 * f64::from(v);
            line.push_str(&format!("{v},"));
        }
        let a = u8::from(r.random::<f64>() < expit(-0.8 + lin));
        let e: f64 = r.sample(rand_distr::StandardNormal);
        let y = 1.0 + 2.0 * f64::from(a) + out + e;
        line.push_str(&format!("{a},{y:.4}"));
        writeln!(w, "{line}").unwrap();
    }
    w.flush().unwrap();
}
