//! Timing of identification on seeded random DAGs (run with
//! `cargo bench --bench identify`). Graphs of 20, 60 and 200 nodes with
//! average degree 3 (and, as a harder case, 6), about 5% of nodes
//! unobserved and a few `<->` pairs; the
//! exposure is drawn among nodes with parents and a directed path to the
//! outcome when there is one. Prints the median and largest time per graph for the whole
//! `identify` call and for each of its parts.

use causeway::graph::{Graph, Node};
use causeway::identify::{
    OPEN_PATH_CAP, SET_CAP, identify, minimal_backdoor_sets, minimal_frontdoor_sets, open_backdoor_paths,
    optimal_set,
};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::{Duration, Instant};

const GRAPHS_PER_SIZE: usize = 30;

/// A random DAG: nodes in a random order, each forward pair joined with the
/// probability that gives the average degree; then latent nodes and `<->`.
fn random_graph(n: usize, degree: f64, seed: u64) -> (Graph, Node, Node) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut g = Graph::new();
    for i in 0..n {
        g.add_node(&format!("v{i}"));
    }
    let mut order: Vec<Node> = (0..n).collect();
    for i in (1..n).rev() {
        order.swap(i, rng.random_range(0..=i));
    }
    let p = (degree / (n as f64 - 1.0)).min(1.0);
    for i in 0..n {
        for j in i + 1..n {
            if rng.random_bool(p) {
                g.add_edge(order[i], order[j]);
            }
        }
    }
    for _ in 0..n / 20 {
        let a = rng.random_range(0..n);
        let b = rng.random_range(0..n);
        if a != b {
            g.add_bidirected(a, b);
        }
    }
    // Pick the outcome late in the order and an exposure that reaches it.
    let y = order[rng.random_range(n * 2 / 3..n)];
    let anc = g.ancestors(&[y]);
    // Prefer exposures with parents, so that there are backdoor paths.
    let mut pool: Vec<Node> = (0..n)
        .filter(|&v| v != y && anc[v] && !g.parents(v).is_empty())
        .collect();
    if pool.is_empty() {
        pool = (0..n).filter(|&v| v != y && anc[v]).collect();
    }
    let x = if pool.is_empty() {
        order[0]
    } else {
        pool[rng.random_range(0..pool.len())]
    };
    let mut latent = 0;
    while latent < n / 20 {
        let v = rng.random_range(0..n);
        if v != x && v != y && !g.is_latent(v) {
            g.set_latent(v, true);
            latent += 1;
        }
    }
    (g, x, y)
}

fn time<T>(f: impl FnOnce() -> T) -> (T, Duration) {
    let t = Instant::now();
    let out = f();
    (out, t.elapsed())
}

fn summary(mut d: Vec<Duration>) -> String {
    d.sort();
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    format!("{:>9.3} {:>9.3}", ms(d[d.len() / 2]), ms(d[d.len() - 1]))
}

fn main() {
    for degree in [3.0, 6.0] {
        table(degree);
    }
}

fn table(degree: f64) {
    println!("identify on random DAGs, average degree {degree}, {GRAPHS_PER_SIZE} graphs per size");
    println!("times in ms per graph: median, max");
    println!(
        "{:>5} | {:>19} | {:>19} | {:>19} | {:>19} | {:>19} | found: sets (bd, fd), paths; truncated (bd, fd, paths)",
        "nodes", "identify", "minimal backdoor", "open paths", "optimal", "front-door"
    );
    for n in [20usize, 60, 200] {
        let mut t = vec![Vec::new(); 5];
        let (mut bd, mut fd, mut np) = (0usize, 0usize, 0usize);
        let mut trunc = [0usize; 3];
        for k in 0..GRAPHS_PER_SIZE {
            let (g, x, y) = random_graph(n, degree, 1000 * n as u64 + k as u64);
            let (id, d) = time(|| identify(&g, x, y, None));
            t[0].push(d);
            let ((sets, tr), d) = time(|| minimal_backdoor_sets(&g, x, y, SET_CAP));
            t[1].push(d);
            let ((paths, ptr), d) = time(|| open_backdoor_paths(&g, x, y, &[], OPEN_PATH_CAP));
            t[2].push(d);
            t[3].push(time(|| optimal_set(&g, x, y)).1);
            let ((fsets, ftr), d) = time(|| minimal_frontdoor_sets(&g, x, y, SET_CAP));
            t[4].push(d);
            assert_eq!(sets.len(), id.backdoor.minimal_sets.len());
            bd += sets.len();
            fd += fsets.len();
            np += paths.len();
            for (k, flag) in [tr, ftr, ptr].into_iter().enumerate() {
                trunc[k] += usize::from(flag);
            }
        }
        let cols: Vec<String> = t.into_iter().map(summary).collect();
        println!("{n:>5} | {} | {bd}, {fd}, {np}; {trunc:?}", cols.join(" | "));
    }
    println!();
}
