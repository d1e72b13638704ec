//! Benchmark of the data, model and estimate stages on 1,000,000 rows.
//!
//! Writes a seeded CSV (20 covariates: 10 continuous, 5 binary, 5
//! categorical with 4 levels; a binary exposure; a continuous outcome) to
//! the target folder, then times (1) parsing it, (2) preparing the
//! problem and running regression, ipw and aipw with analytic intervals,
//! and (3) the same three with a 4-level categorical exposure.
//! Peak memory is the process's VmHWM (reset before parsing where the
//! kernel allows). Targets: whole run within 3x the parse time; peak memory
//! within 3x the used columns as f64.
//!
//! Run: `cargo bench --bench estimate` (set `CAUSEWAY_BENCH_ROWS` for
//! another size).

#[path = "common/gen.rs"]
mod generator;

use causeway::data::{Dataset, ReadOptions};
use causeway::estimate::{Estimator, Problem, Spec, by_name, needs, rows as estimate_rows};
use causeway::learn::Fits;
use generator::{BIN, CAT, CONT, generate};
use std::path::Path;
use std::time::Instant;

/// VmHWM (peak resident memory) in bytes.
fn peak_bytes() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

fn main() {
    let rows: usize = std::env::var("CAUSEWAY_BENCH_ROWS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1_000_000);
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"));
    let path = dir.join(format!("estimate-bench-{rows}.csv"));
    if !path.exists() {
        let t = Instant::now();
        generate(&path, rows);
        println!(
            "generated {} ({rows} rows) in {:.2?}",
            path.display(),
            t.elapsed()
        );
    }
    let size = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
    // Forget the generator's peak (Linux >= 4.0); harmless elsewhere.
    let reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();

    let t0 = Instant::now();
    let data = Dataset::open(&path, &ReadOptions::default()).expect("parse");
    let parse = t0.elapsed();
    let peak_parse = peak_bytes();

    let covariates: Vec<String> = data.names()[..CONT + BIN + CAT].to_vec();
    let spec = Spec {
        exposure: "a".into(),
        outcome: "y".into(),
        categorical: covariates[CONT + BIN..].to_vec(),
        covariates,
        ..Spec::default()
    };
    let t1 = Instant::now();
    let problem = Problem::build(&data, &spec).expect("problem");
    let build = t1.elapsed();
    let mut times = Vec::new();
    // The models are fitted once and shared by the three methods, as the
    // pipeline does; their time is counted with the first method.
    let chosen: Vec<&dyn Estimator> = ["regression", "ipw", "aipw"]
        .iter()
        .map(|n| by_name(n).expect("method"))
        .collect();
    let t = Instant::now();
    let fits = Fits::fit(&problem, None, None, needs(&chosen));
    let mut fit_time = Some(t.elapsed());
    for est in &chosen {
        let name = est.about().name;
        let t = Instant::now();
        let e = estimate_rows(*est, &problem, &fits)
            .expect("estimate")
            .0
            .remove(0);
        times.push((name, t.elapsed() + fit_time.take().unwrap_or_default()));
        println!(
            "{name:>10}: {:.4} (SE {:.4}, CI {:.4} to {:.4})",
            e.estimate, e.std_error, e.ci[0], e.ci[1]
        );
    }
    let whole = t0.elapsed();
    let peak = peak_bytes();
    let used = (spec.covariates.len() + 2) as f64 * rows as f64 * 8.0;

    println!(
        "rows {rows}, file {:.1} MB, threads {}",
        size as f64 / 1e6,
        rayon::current_num_threads()
    );
    println!("parse             {parse:.2?}");
    println!("prepare problem   {build:.2?}");
    for (name, t) in &times {
        println!("{name:<17} {t:.2?}");
    }
    println!("whole run         {whole:.2?}");
    println!(
        "whole / parse     {:.2}  (target <= 3)",
        whole.as_secs_f64() / parse.as_secs_f64()
    );
    println!("used columns      {:.1} MB as f64", used / 1e6);
    if let (Some(pp), Some(p)) = (peak_parse, peak) {
        println!("peak after parse  {:.1} MB", pp as f64 / 1e6);
        println!(
            "peak memory       {:.1} MB = {:.2}x the used columns (target <= 3){}",
            p as f64 / 1e6,
            p as f64 / used,
            if reset {
                ""
            } else {
                " [peak not reset: includes the generator]"
            }
        );
    }
    drop(fits);
    drop(problem);

    // A categorical exposure of 4 levels on the same rows: the first
    // categorical covariate as the exposure (multinomial propensity model,
    // one mean per level, three contrasts per method).
    let cats = &spec.categorical;
    let spec4 = Spec {
        exposure: cats[0].clone(),
        outcome: "y".into(),
        categorical: cats.clone(),
        covariates: data.names()[..CONT + BIN].to_vec(),
        ..Spec::default()
    };
    let t4 = Instant::now();
    let problem4 = Problem::build(&data, &spec4).expect("problem");
    let fits4 = Fits::fit(&problem4, None, None, needs(&chosen));
    for est in &chosen {
        let (r, _) = estimate_rows(*est, &problem4, &fits4).expect("estimate");
        println!(
            "4 levels {:>10}: {} contrasts, first {:.4} (SE {:.4})",
            est.about().name,
            r.len(),
            r[0].estimate,
            r[0].std_error
        );
    }
    println!(
        "4-level exposure, prepare + regression, ipw, aipw  {:.2?}",
        t4.elapsed()
    );
    drop(data);
}
