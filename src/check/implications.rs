//! The testable implications of a graph: for every pair of observed nodes
//! that are not adjacent, a set of observed nodes that d-separates them, or
//! the pair marked untestable when no observed set does.
//!
//! Without latent nodes the separating set is the parents of the later node
//! of the pair in a topological order (the local Markov property; Pearl 2009,
//! Theorem 1.2.7). With latent nodes it is the observed ancestors of the pair:
//! if any set of observed nodes separates two nodes, that one does (van der
//! Zander, Liśkiewicz & Textor 2019, the ancestral-set lemma for separators);
//! it is then pruned greedily to a smaller separating set.

use crate::graph::{Graph, Node};

/// A conditional independence the graph implies: `a` and `b` are
/// d-separated given `given`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Implication {
    /// The earlier node of the pair (topological order).
    pub a: Node,
    /// The later node.
    pub b: Node,
    /// The separating set, sorted by node index.
    pub given: Vec<Node>,
}

/// The implications among observed nodes, and the non-adjacent pairs that
/// no observed set separates.
pub fn implications(g: &Graph) -> (Vec<Implication>, Vec<(Node, Node)>) {
    let order = g.topological_order().unwrap_or_else(|_| (0..g.len()).collect());
    let mut rank = vec![0; g.len()];
    for (i, &v) in order.iter().enumerate() {
        rank[v] = i;
    }
    let mut observed = g.observed();
    observed.sort_by_key(|&v| rank[v]);
    let no_latent = g.latent_nodes().is_empty();
    let (mut found, mut untestable) = (Vec::new(), Vec::new());
    for (i, &a) in observed.iter().enumerate() {
        for &b in &observed[i + 1..] {
            if g.adjacent(a, b) {
                continue;
            }
            match separator(g, a, b, no_latent) {
                Some(given) => found.push(Implication { a, b, given }),
                None => untestable.push((a, b)),
            }
        }
    }
    (found, untestable)
}

fn separator(g: &Graph, a: Node, b: Node, no_latent: bool) -> Option<Vec<Node>> {
    if no_latent {
        // b comes after a, so a is not a descendant of b.
        let mut z = g.parents(b).to_vec();
        z.sort_unstable();
        return Some(z);
    }
    let anc = g.ancestors(&[a, b]);
    let mut z: Vec<Node> = (0..g.len())
        .filter(|&v| anc[v] && !g.is_latent(v) && v != a && v != b)
        .collect();
    if !g.d_separated(&[a], &[b], &z) {
        return None;
    }
    // Drop members one at a time while the rest still separates.
    let mut k = 0;
    while k < z.len() {
        let mut trial = z.clone();
        trial.remove(k);
        if g.d_separated(&[a], &[b], &trial) {
            z = trial;
        } else {
            k += 1;
        }
    }
    Some(z)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::parse;

    fn brute_separable(g: &Graph, a: Node, b: Node) -> bool {
        let others: Vec<Node> = g.observed().into_iter().filter(|&v| v != a && v != b).collect();
        (0u32..1 << others.len()).any(|m| {
            let z: Vec<Node> = (0..others.len())
                .filter(|i| m >> i & 1 == 1)
                .map(|i| others[i])
                .collect();
            g.d_separated(&[a], &[b], &z)
        })
    }

    // Every reported set separates its pair, and a pair is untestable exactly
    // when no subset of the observed nodes separates it (brute force).
    #[test]
    fn agrees_with_brute_force_on_small_graphs() {
        let texts = [
            "a -> b -> c\na -> d\nd -> c",
            "x -> m -> y\nx <-> y\nz -> x",
            "a -> b\nc -> b\nb -> d\nu -> a\nu -> d",
            "a -> b -> c -> d\na <-> c\nb <-> d",
        ];
        for t in texts {
            let mut g = parse(t, "t").unwrap().graph;
            if let Some(u) = g.node("u") {
                g.set_latent(u, true);
            }
            let (imps, untestable) = implications(&g);
            for i in &imps {
                assert!(g.d_separated(&[i.a], &[i.b], &i.given), "{t}");
            }
            for &(a, b) in &untestable {
                assert!(!brute_separable(&g, a, b), "{t}: {} {}", g.name(a), g.name(b));
            }
            let obs = g.observed();
            let pairs = obs
                .iter()
                .enumerate()
                .flat_map(|(i, &a)| obs[i + 1..].iter().map(move |&b| (a, b)));
            let nonadjacent = pairs.filter(|&(a, b)| !g.adjacent(a, b)).count();
            assert_eq!(imps.len() + untestable.len(), nonadjacent, "{t}");
        }
    }
}
