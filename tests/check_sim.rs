//! `check` on data simulated from a known graph (causeway::simulate): under
//! the true graph every implied independence holds, so each test's
//! unadjusted rejection rate over repeated seeds should be near alpha; under
//! a graph that leaves out an edge that matters, the claim the missing edge
//! breaks should be rejected (the definition of a level-alpha test and of
//! power; common practice, no source).

use causeway::check::{CheckOptions, CheckReport, run};
use causeway::data::{Dataset, ReadOptions};
use causeway::graph::{Graph, parse};
use causeway::simulate::{simulate, write_csv};
use std::collections::BTreeMap;

/// The data-generating model: two categorical roots, a binary node, four
/// continuous nodes (linear Gaussian, no rounding or clipping, so the tests'
/// linear models are correct).
const TRUE_GRAPH: &str = "
c1 : levels(p 0.4, q 0.35, r 0.25)
c2 : levels(u 0.5, v 0.3, w 0.2)
x1 : sd=1
b1 : binary intercept=-0.3
x2 : sd=1
x3 : sd=1
y  : sd=1
c1 -> x2 (q 0.8, r -0.6)
x1 -> x2 (0.7)
x1 -> b1 (0.9)
c2 -> b1 (v 0.7, w -1.2)
x2 -> x3 (0.6)
b1 -> x3 (0.8)
x3 -> y (0.7)
c2 -> y (v 0.8, w -0.9)
";

fn graph(text: &str) -> Graph {
    parse(text, "sim.graph").unwrap().graph
}

fn data(g: &Graph, n: usize, seed: u64) -> Dataset {
    let sim = simulate(g, n, seed).unwrap();
    let mut csv = Vec::new();
    write_csv(&sim, &mut csv).unwrap();
    Dataset::read(&csv[..], "sim.csv", &ReadOptions::default()).unwrap()
}

fn key(r: &CheckReport, i: usize) -> String {
    let t = &r.implications[i];
    format!("{} _||_ {} | {:?} ({})", t.a, t.b, t.given, t.test)
}

// Under the true graph each claim's rejection count over 200 seeds
// (n = 300, unadjusted p <= 0.05) is Binomial(200, 0.05) for an exact test:
// accepted within [1, 23], where each tail has probability below 4e-5
// (scipy.stats.binom), so a correct test fails this about once in 10^3 runs
// of the whole family, a test of the wrong size almost always. The pooled
// rate over all claims must lie in [0.035, 0.065] (about 3.7 binomial
// standard deviations for independent tests).
#[test]
fn rejection_rate_under_the_true_graph_is_near_alpha() {
    let g = graph(TRUE_GRAPH);
    let opts = CheckOptions::default();
    let mut counts: BTreeMap<String, usize> = BTreeMap::new();
    let mut tests = std::collections::BTreeSet::new();
    let seeds = 200;
    for seed in 0..seeds {
        let r = run(&g, &data(&g, 300, seed), &opts).unwrap();
        assert!(
            r.not_tested.is_empty() && r.untestable.is_empty(),
            "{:?}",
            r.not_tested
        );
        for (i, t) in r.implications.iter().enumerate() {
            tests.insert(t.test.clone());
            *counts.entry(key(&r, i)).or_default() += usize::from(t.p_value <= 0.05);
        }
    }
    assert_eq!(tests.len(), 4, "every kind of test is exercised: {tests:?}");
    assert!(counts.len() >= 12, "{counts:?}");
    println!("rejections of {seeds}: {counts:#?}");
    for (k, &c) in &counts {
        assert!((1..=23).contains(&c), "{k}: rejected in {c} of {seeds} seeds");
    }
    let pooled = counts.values().sum::<usize>() as f64 / (counts.len() * seeds as usize) as f64;
    assert!(
        (0.035..=0.065).contains(&pooled),
        "pooled rejection rate {pooled}: {counts:?}"
    );
}

// Under a graph without x2 -> x3 (coefficient 0.6) and without c2 -> y, the
// claims about those pairs are false; at n = 300 each test has power near 1,
// so we ask for rejection (after Holm adjustment) in at least 48 of 50 seeds.
#[test]
fn a_missing_edge_is_detected() {
    let truth = graph(TRUE_GRAPH);
    let wrong = graph(
        &TRUE_GRAPH
            .replace("x2 -> x3 (0.6)\n", "")
            .replace("c2 -> y (v 0.8, w -0.9)\n", ""),
    );
    let mut hits: BTreeMap<(String, String), usize> = BTreeMap::new();
    let seeds = 50;
    for seed in 0..seeds {
        let r = run(&wrong, &data(&truth, 300, 1000 + seed), &CheckOptions::default()).unwrap();
        for t in &r.implications {
            let pair = (t.a.clone(), t.b.clone());
            if matches!(
                (t.a.as_str(), t.b.as_str()),
                ("x2", "x3") | ("x3", "x2") | ("c2", "y") | ("y", "c2")
            ) {
                *hits.entry(pair).or_default() += usize::from(t.rejected);
            }
        }
    }
    println!("rejections of {seeds}: {hits:?}");
    assert_eq!(hits.len(), 2, "both broken claims are listed: {hits:?}");
    for (pair, &h) in &hits {
        assert!(h >= 48, "{pair:?} rejected in {h} of {seeds} seeds");
    }
}
