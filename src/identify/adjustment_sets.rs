//! Every inclusion-minimal backdoor adjustment set of observed variables.
//!
//! A set Z with no descendant of X meets the backdoor criterion exactly when
//! it d-separates X and Y in the graph G' with the edges out of X removed
//! (Pearl 2009, Def. 3.3.1). Minimal d-separators lie among the ancestors of
//! X and Y in G' (Tian, Paz & Pearl 1998, "Finding minimal d-separators", from memory;
//! van der Zander, Liśkiewicz & Textor 2019): if Z separates, so does its
//! part inside An(X, Y), because the moral graph of G'[An(X, Y)] is a
//! subgraph of the moral graph of G'[An(X, Y, Z)]. For sets inside An(X, Y),
//! d-separation is ordinary separation in the moral graph of G'[An(X, Y)]
//! (Lauritzen, Dawid, Larsen & Leimer, Networks 1990;20:491-505, from
//! memory). So the
//! minimal backdoor sets are the minimal vertex separators of X and Y in that
//! moral graph that avoid latent nodes and descendants of X, listed by
//! [`separators`](super::separators) with polynomial delay.

use super::Listing;
use super::separators::Undirected;
use crate::graph::{Graph, Node};

/// Every inclusion-minimal backdoor adjustment set for the effect of `x` on
/// `y` made of observed nodes (not `x` or `y`, no descendant of `x`), at
/// most `cap` (at least 1) of them. Each set is sorted by name; the list is
/// sorted by size, then names. `[[]]` when adjusting for nothing is valid,
/// `[]` when no set is. The flag is true when there are more than `cap`.
pub fn minimal_backdoor_sets(g: &Graph, x: Node, y: Node, cap: usize) -> (Vec<Vec<Node>>, bool) {
    minimal_backdoor_listing(g, x, y, cap, cap.saturating_add(1)).into_pair()
}

/// As [`minimal_backdoor_sets`], with the sets past the cap counted up to
/// `count_to`.
pub fn minimal_backdoor_listing(
    g: &Graph,
    x: Node,
    y: Node,
    cap: usize,
    count_to: usize,
) -> Listing<Vec<Node>> {
    if x == y {
        return Listing::empty();
    }
    let gx = g.without_edges_out_of(&[x]);
    let keep = gx.ancestors(&[x, y]);
    let de_x = g.descendants(&[x]);
    let n = g.len();
    let allowed: Vec<bool> = (0..n)
        .map(|v| keep[v] && !de_x[v] && !g.is_latent(v) && v != y)
        .collect();
    let moral = moralize(&gx, &keep);
    let mut listing = moral.minimal_separators(x, y, &allowed, cap, count_to);
    for s in &mut listing.items {
        super::sort_by_name(g, s);
    }
    super::sort_sets(g, &mut listing.items);
    listing
}

/// The moral graph of the subgraph induced by `keep` (an ancestral set):
/// each node joined to its parents, and the parents of each node joined.
fn moralize(g: &Graph, keep: &[bool]) -> Undirected {
    let mut adj: Vec<Vec<Node>> = vec![Vec::new(); g.len()];
    for v in (0..g.len()).filter(|&v| keep[v]) {
        let ps: Vec<Node> = g.parents(v).iter().copied().filter(|&p| keep[p]).collect();
        for (i, &p) in ps.iter().enumerate() {
            adj[p].push(v);
            adj[v].push(p);
            for &q in &ps[i + 1..] {
                adj[p].push(q);
                adj[q].push(p);
            }
        }
    }
    for a in &mut adj {
        a.sort_unstable();
        a.dedup();
    }
    Undirected { adj }
}
