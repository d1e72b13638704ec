//! Prints the bootstrap frequency weights that `causeway::infer::bootstrap`
//! draws, one replicate per line (space-separated counts), so that a
//! reference computation can use the very same resamples.
//!
//! Usage: cargo run --example bootstrap_resamples -- N REPLICATES SEED

use causeway::infer::bootstrap::resample_weights;
use std::io::Write;

fn main() {
    let args: Option<Vec<u64>> = std::env::args().skip(1).map(|a| a.parse().ok()).collect();
    let Some([n, b, seed]) = args.as_deref().and_then(|a| <[u64; 3]>::try_from(a).ok()) else {
        eprintln!("usage: bootstrap_resamples N REPLICATES SEED (whole numbers)");
        std::process::exit(2);
    };
    let out = std::io::stdout();
    let mut out = std::io::BufWriter::new(out.lock());
    for i in 0..b {
        let w = resample_weights(n as usize, seed, i);
        let line: Vec<String> = w.iter().map(|c| format!("{}", *c as u64)).collect();
        if writeln!(out, "{}", line.join(" ")).is_err() {
            std::process::exit(1);
        }
    }
}
