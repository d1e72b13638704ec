//! The generic bootstrap engine (src/infer/bootstrap.rs) against scipy
//! (fixtures from tests/scripts/make_bootstrap_fixtures.py, which records the
//! library versions), plus determinism, failure counting and a small
//! coverage simulation.

use crate::helpers::{data, fixture};
use causeway::Error;
use causeway::infer::bootstrap::{BootOpts, IntervalKind, resample_weights, run};
use rand_chacha::ChaCha8Rng;
use rand_chacha::rand_core::{Rng, SeedableRng};
use serde_json::Value;

fn sample() -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(data("bootstrap_sample.csv")).unwrap();
    let mut x = Vec::new();
    let mut y = Vec::new();
    for line in text.lines().skip(1) {
        let mut it = line.split(',');
        x.push(it.next().unwrap().parse::<f64>().unwrap());
        y.push(it.next().unwrap().parse::<f64>().unwrap());
    }
    (x, y)
}

fn wmean(v: &[f64], w: &[f64]) -> f64 {
    v.iter().zip(w).map(|(a, b)| a * b).sum::<f64>() / w.iter().sum::<f64>()
}

/// Mean of x, ratio of means mean(y)/mean(x), Pearson correlation of x, y,
/// all with frequency weights.
fn three_statistics(x: &[f64], y: &[f64], w: &[f64]) -> Vec<f64> {
    let (mx, my) = (wmean(x, w), wmean(y, w));
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for i in 0..x.len() {
        let (a, b) = (x[i] - mx, y[i] - my);
        sxy += w[i] * a * b;
        sxx += w[i] * a * a;
        syy += w[i] * b * b;
    }
    vec![mx, my / mx, sxy / (sxx * syy).sqrt()]
}

fn opts(replicates: usize, seed: u64, threads: usize) -> BootOpts {
    BootOpts {
        replicates,
        seed,
        threads,
        level: 0.95,
        progress: causeway::progress::Reporter::none(),
        bca: true,
    }
}

fn pair(v: &Value) -> [f64; 2] {
    [v[0].as_f64().unwrap(), v[1].as_f64().unwrap()]
}

/// The resamples are those stored when the fixture was made: the random
/// streams (ChaCha8 by stream number, Lemire's bounded draw) are stable.
#[test]
fn resamples_match_the_committed_ones() {
    let text = std::fs::read_to_string(fixture("bootstrap_weights_n30_b2000_seed7.txt")).unwrap();
    let mut count = 0;
    for (i, line) in text.lines().enumerate() {
        let stored: Vec<f64> = line.split(' ').map(|c| c.parse().unwrap()).collect();
        assert_eq!(stored, resample_weights(30, 7, i as u64), "replicate {i}");
        count += 1;
    }
    assert_eq!(count, 2000);
}

/// Same resamples as scipy (bootstrap_scipy.json, "same_resamples"):
/// percentile, BCa (scipy.stats's own BCa routine with its jackknife on the
/// data) and normal intervals agree to 1e-9. The values are the same
/// arithmetic up to summation order; the slack covers the normal
/// distribution function (statrs, about 1e-11) moving a BCa quantile level.
#[test]
fn intervals_on_the_same_resamples_match_scipy() {
    let (x, y) = sample();
    let fx: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("bootstrap_scipy.json")).unwrap()).unwrap();
    let d = run(30, &opts(2000, 7, 2), |w| Ok(three_statistics(&x, &y, w))).unwrap();
    for (j, name) in ["mean", "ratio", "correlation"].iter().enumerate() {
        let want = &fx["same_resamples"][name];
        let s = &d.summaries[j];
        let close = |a: f64, b: f64, what: &str| {
            assert!((a - b).abs() < 1e-9, "{name} {what}: {a} vs scipy {b}");
        };
        close(s.estimate, want["estimate"].as_f64().unwrap(), "estimate");
        close(s.std_error.unwrap(), want["std_error"].as_f64().unwrap(), "se");
        close(
            s.acceleration.unwrap(),
            want["acceleration"].as_f64().unwrap(),
            "acceleration",
        );
        for (kind, key) in [
            (IntervalKind::Percentile, "percentile"),
            (IntervalKind::Bca, "bca"),
            (IntervalKind::Normal, "normal"),
        ] {
            let got = s.interval(kind).unwrap();
            let w = pair(&want[key]);
            close(got[0], w[0], key);
            close(got[1], w[1], key);
        }
        assert_eq!(s.failed, 0);
    }
}

/// Against scipy.stats.bootstrap with its own 20000 resamples: the two
/// differ only by Monte Carlo error. For a quantile at level p the error of
/// B replicates is about sqrt(p(1-p)/B) / density; here the most extreme
/// BCa level is about 0.0075, which gives roughly 0.09 bootstrap standard
/// errors for B = 2000 (and a third of that for scipy's 20000). The
/// tolerance, 0.4 standard errors, is about 4 Monte Carlo standard
/// deviations of the difference.
#[test]
fn intervals_agree_with_scipy_bootstrap_within_monte_carlo_error() {
    let (x, y) = sample();
    let fx: Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("bootstrap_scipy.json")).unwrap()).unwrap();
    let d = run(30, &opts(2000, 7, 1), |w| Ok(three_statistics(&x, &y, w))).unwrap();
    for (j, name) in ["mean", "ratio", "correlation"].iter().enumerate() {
        let want = &fx["scipy_bootstrap"][name];
        let s = &d.summaries[j];
        let se = want["std_error"].as_f64().unwrap();
        assert!((s.std_error.unwrap() - se).abs() < 0.1 * se, "{name} se");
        for (kind, key) in [
            (IntervalKind::Percentile, "percentile"),
            (IntervalKind::Bca, "bca"),
        ] {
            let got = s.interval(kind).unwrap();
            let w = pair(&want[key]);
            for k in 0..2 {
                assert!(
                    (got[k] - w[k]).abs() < 0.4 * se,
                    "{name} {key}: {got:?} vs scipy.stats.bootstrap {w:?}"
                );
            }
        }
    }
}

#[test]
fn results_do_not_depend_on_threads_and_follow_the_seed() {
    let (x, y) = sample();
    let f = |w: &[f64]| Ok(three_statistics(&x, &y, w));
    let one = run(30, &opts(300, 3, 1), f).unwrap();
    let two = run(30, &opts(300, 3, 2), f).unwrap();
    assert_eq!(one.values, two.values);
    assert_eq!(one.summaries, two.summaries);
    let again = run(30, &opts(300, 3, 2), f).unwrap();
    assert_eq!(again.values, one.values);
    let other = run(30, &opts(300, 4, 2), f).unwrap();
    assert_ne!(other.values, one.values);
}

/// A replicate that fails is counted for every statistic; a value that is
/// not finite is counted for its statistic only. The counts are checked
/// against the resamples themselves.
#[test]
fn failed_replicates_are_counted() {
    let (x, _) = sample();
    let b = 400;
    let d = run(30, &opts(b, 5, 2), |w| {
        if w[0] == 0.0 {
            return Err(Error::Numerical("row 0 not drawn".into()));
        }
        let second = if w[1] == 0.0 { f64::NAN } else { wmean(&x, w) };
        Ok(vec![wmean(&x, w), second])
    })
    .unwrap();
    let weights: Vec<Vec<f64>> = (0..b as u64).map(|i| resample_weights(30, 5, i)).collect();
    let no_row0 = weights.iter().filter(|w| w[0] == 0.0).count();
    let no_row0_or_1 = weights.iter().filter(|w| w[0] == 0.0 || w[1] == 0.0).count();
    assert!(no_row0 > 0);
    assert_eq!(d.failed, vec![no_row0, no_row0_or_1]);
    assert_eq!(d.summaries[0].failed, no_row0);
    // About a third of replicates fail: above 5%, so the summary warns.
    assert!(d.summaries[0].warnings.iter().any(|w| w.contains("failed")));
    assert!(d.failure_messages.iter().any(|m| m.contains("row 0 not drawn")));
    // The jackknife leaves row 0 out once: BCa is unavailable, and says so.
    assert!(d.summaries[0].bca.is_none());
    assert!(d.summaries[0].interval(IntervalKind::Bca).is_err());
    assert!(d.summaries[0].percentile.is_some());
    let block = d.summaries[0].block(IntervalKind::Percentile).unwrap();
    assert_eq!(block.failed, no_row0);
    assert_eq!(block.replicates, b);
    let json = serde_json::to_value(&block).unwrap();
    for key in ["replicates", "interval", "ci", "failed"] {
        assert!(json.get(key).is_some(), "{key}");
    }
}

/// Without the jackknife there is no BCa interval, and the other intervals
/// are unchanged.
#[test]
fn bca_can_be_left_out() {
    let (x, y) = sample();
    let f = |w: &[f64]| Ok(three_statistics(&x, &y, w));
    let with = run(30, &opts(200, 3, 1), f).unwrap();
    let o = BootOpts {
        bca: false,
        ..opts(200, 3, 1)
    };
    let without = run(30, &o, f).unwrap();
    assert_eq!(without.jackknife.groups, 0);
    let (a, b) = (&with.summaries[1], &without.summaries[1]);
    assert!(b.bca.is_none() && a.bca.is_some());
    assert_eq!(a.percentile, b.percentile);
    assert_eq!(a.normal, b.normal);
    assert!(
        b.interval(IntervalKind::Bca)
            .unwrap_err()
            .to_string()
            .contains("jackknife")
    );
}

#[test]
fn failure_on_the_full_data_is_an_error() {
    let r = run(10, &opts(20, 1, 1), |_| Err(Error::Numerical("no fit".into())));
    assert!(r.is_err());
}

/// Coverage: 200 seeded datasets of n = 50 from the exponential
/// distribution (true mean 1), B = 200 each. For this skewed case the
/// bootstrap intervals are known to undercover a little (common practice,
/// no source); a longer run of this same simulation with 4000 datasets gave
/// 0.921 (percentile), 0.927 (BCa) and 0.931 (normal). The Monte Carlo
/// standard deviation of a coverage near 0.925 over 200 datasets is 0.019;
/// accepted: 0.865 to 0.985, about 0.925 plus or minus 3 of them. A method
/// that targets the wrong quantiles or scale falls outside.
#[test]
fn intervals_cover_about_95_percent() {
    let (datasets, n) = (200, 50);
    let mut rng = ChaCha8Rng::seed_from_u64(2024);
    let mut covered = [0usize; 3];
    for k in 0..datasets {
        let x: Vec<f64> = (0..n)
            .map(|_| {
                let u = ((rng.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64;
                -u.ln()
            })
            .collect();
        let d = run(n, &opts(200, k as u64, 1), |w| Ok(vec![wmean(&x, w)])).unwrap();
        let s = &d.summaries[0];
        for (c, kind) in
            covered
                .iter_mut()
                .zip([IntervalKind::Percentile, IntervalKind::Bca, IntervalKind::Normal])
        {
            let ci = s.interval(kind).unwrap();
            if ci[0] <= 1.0 && 1.0 <= ci[1] {
                *c += 1;
            }
        }
    }
    for (c, name) in covered.iter().zip(["percentile", "bca", "normal"]) {
        let share = *c as f64 / datasets as f64;
        eprintln!("{name} coverage {share}");
        assert!((0.865..=0.985).contains(&share), "{name} coverage {share}");
    }
}
