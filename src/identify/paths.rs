//! Backdoor paths open given a conditioning set, listed one by one.
//!
//! A path is open given Z when every collider on it is in Z or has a
//! descendant in Z, and no other node on it is in Z (Pearl 2009, Def. 1.2.3).
//! The listing is a depth-first search over simple paths that starts with an
//! edge into the exposure; before extending a partial path it checks, with a
//! reachability ("Bayes ball") search that avoids the nodes already on the
//! path, that the outcome can still be reached by an open trail. That check
//! never discards a branch that leads to an open path, so the listing is
//! complete up to the cap, and it keeps the search away from dead ends on
//! large graphs. Every node of an open path is an ancestor of the exposure,
//! the outcome or Z, so the search is confined to that ancestral set.

use super::Listing;
use crate::graph::{Graph, Node};

/// Upper bound on search steps, a guard against pathological graphs; when
/// reached, the listing is reported as truncated.
const STEP_BUDGET: usize = 200_000;

/// How the path arrived at a node: from one of its children (the edge points
/// away from the node) or from one of its parents (the edge points into it).
#[derive(Clone, Copy, PartialEq, Eq)]
enum Arrival {
    FromChild,
    FromParent,
}

struct Setting<'a> {
    g: &'a Graph,
    y: Node,
    in_z: Vec<bool>,
    anc_z: Vec<bool>,
    relevant: Vec<bool>,
}

impl Setting<'_> {
    /// The moves allowed after arriving at `v`: (next node, its arrival).
    fn moves(&self, v: Node, arrival: Arrival) -> Vec<(Node, Arrival)> {
        let g = self.g;
        let mut out = Vec::new();
        let pass = !self.in_z[v];
        // Leaving towards a child: v is a non-collider (chain or fork).
        if pass {
            out.extend(g.children(v).iter().map(|&c| (c, Arrival::FromParent)));
        }
        // Leaving towards a parent: a non-collider when we came from a
        // child, a collider when we came from a parent.
        let to_parents = match arrival {
            Arrival::FromChild => pass,
            Arrival::FromParent => self.anc_z[v],
        };
        if to_parents {
            out.extend(g.parents(v).iter().map(|&p| (p, Arrival::FromChild)));
        }
        out.retain(|&(w, _)| self.relevant[w]);
        out
    }

    /// Can the outcome be reached from `v` (arrived as given) by an open
    /// trail that avoids the `blocked` nodes?
    fn can_reach(&self, v: Node, arrival: Arrival, blocked: &[bool]) -> bool {
        let idx = |a: Arrival| usize::from(a == Arrival::FromParent);
        let mut seen = vec![[false; 2]; self.g.len()];
        let mut stack = vec![(v, arrival)];
        seen[v][idx(arrival)] = true;
        while let Some((u, a)) = stack.pop() {
            if u == self.y {
                return true;
            }
            for (w, b) in self.moves(u, a) {
                if !blocked[w] && !seen[w][idx(b)] {
                    seen[w][idx(b)] = true;
                    stack.push((w, b));
                }
            }
        }
        false
    }
}

/// Backdoor paths from `x` to `y` (simple paths whose first edge points into
/// `x`) that are open given `z`, each as the node list from `x` to `y`, at
/// most `cap` of them, shortest first (ties by node names). The flag is true
/// when the listing stopped early (more than `cap` paths, or the search
/// budget ran out). `z` should not contain `x` or `y`; if it does, no path is
/// listed. Latent nodes (including those made by `a <-> b`) are ordinary
/// nodes of a path.
pub fn open_backdoor_paths(g: &Graph, x: Node, y: Node, z: &[Node], cap: usize) -> (Vec<Vec<Node>>, bool) {
    open_backdoor_path_listing(g, x, y, z, cap, cap.saturating_add(1)).into_pair()
}

/// As [`open_backdoor_paths`], with the paths past the cap counted up to
/// `count_to` (the search budget still applies; when it runs out, the
/// listing is incomplete).
pub fn open_backdoor_path_listing(
    g: &Graph,
    x: Node,
    y: Node,
    z: &[Node],
    cap: usize,
    count_to: usize,
) -> Listing<Vec<Node>> {
    let mut found = Listing::empty();
    if x == y || z.contains(&x) || z.contains(&y) {
        return found;
    }
    let count_to = count_to.max(cap.saturating_add(1));
    let mut roots = z.to_vec();
    roots.extend([x, y]);
    let st = Setting {
        g,
        y,
        in_z: g.mask(z),
        anc_z: g.ancestors(z),
        relevant: g.ancestors(&roots),
    };
    let mut on_path = vec![false; g.len()];
    on_path[x] = true;
    let mut path = vec![x];
    let mut steps = 0usize;
    // Explicit stack of (node, arrival, depth at which it extends the path).
    let mut stack: Vec<(Node, Arrival, usize)> = g
        .parents(x)
        .iter()
        .rev()
        .filter(|&&p| st.relevant[p])
        .map(|&p| (p, Arrival::FromChild, 1))
        .collect();
    while let Some((v, arrival, depth)) = stack.pop() {
        steps += 1;
        if steps > STEP_BUDGET {
            found.complete = false;
            break;
        }
        for &u in &path[depth..] {
            on_path[u] = false;
        }
        path.truncate(depth);
        if on_path[v] {
            continue;
        }
        path.push(v);
        on_path[v] = true;
        if v == y {
            if found.offer(path.clone(), cap, count_to) {
                break;
            }
            continue;
        }
        on_path[v] = false;
        let alive = st.can_reach(v, arrival, &on_path);
        on_path[v] = true;
        if !alive {
            continue;
        }
        let mut next = st.moves(v, arrival);
        next.retain(|&(w, _)| !on_path[w]);
        for &(w, b) in next.iter().rev() {
            stack.push((w, b, depth + 1));
        }
    }
    super::sort_paths(g, &mut found.items);
    found
}
