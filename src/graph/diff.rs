//! What differs between two graphs over the same variables: edges added or
//! removed, nodes added or removed, nodes that became unobserved or observed.
//! Used by `compare` to say, above its table, how the graphs differ.
//! Latent nodes made by `a <-> b` are compared as `a <-> b` pairs.

use super::{Graph, Node};
use serde::Serialize;
use std::collections::BTreeSet;

/// Differences of graph `b` relative to graph `a`, by name.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct GraphDiff {
    /// Edges in `b` only, as "from -> to" or "a <-> b".
    pub edges_added: Vec<String>,
    /// Edges in `a` only.
    pub edges_removed: Vec<String>,
    /// Nodes in `b` only.
    pub nodes_added: Vec<String>,
    /// Nodes in `a` only.
    pub nodes_removed: Vec<String>,
    /// Nodes observed in `a` but unobserved in `b`.
    pub made_latent: Vec<String>,
    /// Nodes unobserved in `a` but observed in `b`.
    pub made_observed: Vec<String>,
}

impl GraphDiff {
    /// True when the graphs are the same.
    pub fn is_empty(&self) -> bool {
        *self == GraphDiff::default()
    }

    /// One plain sentence per kind of change.
    pub fn sentences(&self) -> Vec<String> {
        let mut v = Vec::new();
        let mut say = |what: &str, items: &[String]| {
            if !items.is_empty() {
                v.push(format!("{what}: {}", items.join(", ")));
            }
        };
        say("adds edges", &self.edges_added);
        say("removes edges", &self.edges_removed);
        say("adds nodes", &self.nodes_added);
        say("removes nodes", &self.nodes_removed);
        say("makes unobserved", &self.made_latent);
        say("makes observed", &self.made_observed);
        v
    }
}

fn edge_names(g: &Graph) -> BTreeSet<String> {
    let mut s = BTreeSet::new();
    for (a, b) in g.edges() {
        match g.bidirected_pair(a) {
            Some((p, q)) if b == p => {
                let (x, y) = if g.name(p) <= g.name(q) { (p, q) } else { (q, p) };
                s.insert(format!("{} <-> {}", g.name(x), g.name(y)));
            }
            Some(_) => {}
            None => {
                s.insert(format!("{} -> {}", g.name(a), g.name(b)));
            }
        }
    }
    s
}

fn named_nodes(g: &Graph) -> BTreeSet<String> {
    (0..g.len())
        .filter(|&v| g.bidirected_pair(v).is_none())
        .map(|v: Node| g.name(v).to_string())
        .collect()
}

/// The differences of `b` relative to `a`.
pub fn diff(a: &Graph, b: &Graph) -> GraphDiff {
    let (ea, eb) = (edge_names(a), edge_names(b));
    let (na, nb) = (named_nodes(a), named_nodes(b));
    let latent = |g: &Graph, n: &str| g.node(n).is_some_and(|v| g.is_latent(v));
    let both: Vec<&String> = na.intersection(&nb).collect();
    GraphDiff {
        edges_added: eb.difference(&ea).cloned().collect(),
        edges_removed: ea.difference(&eb).cloned().collect(),
        nodes_added: nb.difference(&na).cloned().collect(),
        nodes_removed: na.difference(&nb).cloned().collect(),
        made_latent: both
            .iter()
            .filter(|n| !latent(a, n) && latent(b, n))
            .map(|n| n.to_string())
            .collect(),
        made_observed: both
            .iter()
            .filter(|n| latent(a, n) && !latent(b, n))
            .map(|n| n.to_string())
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::parse;

    #[test]
    fn reports_each_kind_of_change() {
        let a = parse("x -> y\nz -> x\nz -> y\nm\n", "a").unwrap().graph;
        let mut b = parse("x -> y\nz -> x\nx <-> y\nu -> y\nm\n", "b").unwrap().graph;
        let m = b.node("m").unwrap();
        b.set_latent(m, true);
        let d = diff(&a, &b);
        assert_eq!(d.edges_added, vec!["u -> y", "x <-> y"]);
        assert_eq!(d.edges_removed, vec!["z -> y"]);
        assert_eq!(d.nodes_added, vec!["u"]);
        assert_eq!(d.made_latent, vec!["m"]);
        assert!(diff(&a, &a).is_empty());
    }
}
