//! Front-door sets: Pearl's criterion (Biometrika 1995;82:669-688;
//! *Causality*, 2009, Def. 3.3.3) read for a set M as a whole:
//!
//! 1. every directed path from X to Y passes through M;
//! 2. X and M are d-separated by the empty set once the edges out of X are
//!    removed (no unblocked backdoor path from X to M);
//! 3. M and Y are d-separated by {X} once the edges out of every member of M
//!    are removed (X blocks every backdoor path from M to Y).
//!
//! The search rests on three facts, each shown here.
//!
//! * (2) holds for M exactly when it holds for each member, and a member
//!   meeting (2) is not an ancestor of X (a directed path into X is an open
//!   backdoor path). So removing edges out of members leaves the ancestors
//!   of X unchanged.
//! * Given (2), condition (3) holds for M exactly when, for each member m,
//!   no path from m to Y that starts with an edge into m and has no other
//!   member of M on it is open given {X}: with their outgoing edges removed,
//!   other members can only be colliders that are not ancestors of X. Call
//!   the failure of this bad(m, M). Adding members only blocks more paths, so
//!   bad(m, M) can only turn false as M grows.
//! * Hence sets meeting (1)-(3) are closed under union, and inside any
//!   candidate set S there is a largest one when there is any: drop from S,
//!   until none is left, every m with bad(m, S) (one reachability search per
//!   round); the fixpoint S* meets (2) and (3), holds every valid subset of
//!   S, and is valid exactly when it meets (1).
//! * Every minimal set lies among the ancestors of Y. If M is valid, so is
//!   its part M' inside An(Y): a path open given {X} has all its nodes in
//!   An(m, Y, X), so a member of M outside An(Y) (and, by (2), outside
//!   An(X)) cannot lie on a path from a member of M' to Y; the paths that
//!   M' has to block are blocked already.
//!
//! That gives an exact test "is there a front-door set inside S", which is
//! monotone in S. A set S that passes while no S minus one member does is a
//! minimal front-door set; one is found with the divide-and-conquer search
//! for a minimal subset under a monotone test of Junker (QuickXplain, AAAI
//! 2004, from memory), in O(k log(n/k)) tests for a set of size k. All
//! minimal sets are listed by branching: every minimal set other than the
//! one found, M0, misses some member of M0, so it is a minimal set inside
//! S minus that member; searched sets are remembered so none is searched
//! twice.

use super::Listing;
use crate::graph::{Graph, Node, quote};
use std::collections::HashSet;

/// Upper bound on candidate sets searched; past it the list is reported as
/// truncated.
const SEARCH_BUDGET: usize = 2_000;

/// Pearl's three front-door conditions applied to one set.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FrontdoorCheck {
    /// (1): every directed path from the exposure to the outcome passes
    /// through the set.
    pub intercepts_directed_paths: bool,
    /// (2): no open backdoor path from the exposure to any member.
    pub no_backdoor_from_exposure: bool,
    /// (3): the exposure blocks every backdoor path from the set to the
    /// outcome.
    pub exposure_blocks_backdoor_to_outcome: bool,
}

impl FrontdoorCheck {
    /// All three conditions hold.
    pub fn holds(&self) -> bool {
        self.intercepts_directed_paths
            && self.no_backdoor_from_exposure
            && self.exposure_blocks_backdoor_to_outcome
    }
}

/// The three front-door conditions for the set `m` (read literally from the
/// definitions, one d-separation test each).
pub fn check_frontdoor(g: &Graph, x: Node, y: Node, m: &[Node]) -> FrontdoorCheck {
    FrontdoorCheck {
        intercepts_directed_paths: !directed_path_avoiding(g, x, y, &g.mask(m)),
        no_backdoor_from_exposure: g.without_edges_out_of(&[x]).d_separated(&[x], m, &[]),
        exposure_blocks_backdoor_to_outcome: g.without_edges_out_of(m).d_separated(m, &[y], &[x]),
    }
}

/// Is there a directed path from `x` to `y` with no node of `avoid` on it?
fn directed_path_avoiding(g: &Graph, x: Node, y: Node, avoid: &[bool]) -> bool {
    let mut seen = vec![false; g.len()];
    seen[x] = true;
    let mut stack = vec![x];
    while let Some(v) = stack.pop() {
        for &c in g.children(v) {
            if c == y {
                return true;
            }
            if !seen[c] && !avoid[c] {
                seen[c] = true;
                stack.push(c);
            }
        }
    }
    false
}

struct Search<'a> {
    g: &'a Graph,
    x: Node,
    y: Node,
    /// Ancestors of X (the exposure included).
    anc_x: Vec<bool>,
}

impl Search<'_> {
    fn new(g: &Graph, x: Node, y: Node) -> Search<'_> {
        Search {
            g,
            x,
            y,
            anc_x: g.ancestors(&[x]),
        }
    }

    /// Nodes d-connected to Y given {X} once the edges out of `cut` nodes
    /// are removed (the reachability search of the graph module, run on the
    /// cut graph without building it). Valid while no `cut` node is an
    /// ancestor of X, which (2) guarantees.
    fn connected_to_y(&self, cut: &[bool]) -> Vec<bool> {
        let g = self.g;
        let mut visited = vec![[false; 2]; g.len()];
        let mut reached = vec![false; g.len()];
        // 0: arrived from a child (travelling up); 1: from a parent.
        let mut stack = vec![(self.y, 0usize)];
        while let Some((v, dir)) = stack.pop() {
            if visited[v][dir] {
                continue;
            }
            visited[v][dir] = true;
            let given = v == self.x;
            reached[v] = !given;
            let to_children = !given && !cut[v];
            let to_parents = if dir == 0 { !given } else { self.anc_x[v] };
            if to_children {
                stack.extend(g.children(v).iter().map(|&c| (c, 1)));
            }
            if to_parents {
                stack.extend(g.parents(v).iter().filter(|&&p| !cut[p]).map(|&p| (p, 0)));
            }
        }
        reached
    }

    /// The largest subset of `s` meeting (2) and (3), given members of `s`
    /// that all meet (2).
    fn fixpoint(&self, mut s: Vec<Node>) -> Vec<Node> {
        loop {
            let reached = self.connected_to_y(&self.g.mask(&s));
            let before = s.len();
            s.retain(|&m| !reached[m]);
            if s.len() == before {
                return s;
            }
        }
    }

    /// The largest front-door set inside `s`, if there is one.
    fn largest_within(&self, s: Vec<Node>) -> Option<Vec<Node>> {
        let f = self.fixpoint(s);
        let ok = !f.is_empty() && !directed_path_avoiding(self.g, self.x, self.y, &self.g.mask(&f));
        ok.then_some(f)
    }

    fn passes(&self, s: &[Node]) -> bool {
        self.largest_within(s.to_vec()).is_some()
    }

    /// An inclusion-minimal front-door set inside `cur`, itself a front-door
    /// set (Junker's divide and conquer).
    fn minimize(&self, cur: Vec<Node>) -> Vec<Node> {
        let mut found = self.quick(&[], false, &cur);
        found.sort_unstable();
        found
    }

    /// A minimal subset X of `cands` such that `background` plus X passes,
    /// given that `background` plus `cands` passes; `fresh` says that the
    /// background has grown since the last test.
    fn quick(&self, background: &[Node], fresh: bool, cands: &[Node]) -> Vec<Node> {
        if fresh && self.passes(background) {
            return Vec::new();
        }
        if cands.len() == 1 {
            return cands.to_vec();
        }
        let (c1, c2) = cands.split_at(cands.len() / 2);
        let with_c1 = [background, c1].concat();
        let x2 = self.quick(&with_c1, true, c2);
        let with_x2 = [background, &x2].concat();
        let x1 = self.quick(&with_x2, !x2.is_empty(), c1);
        [x1, x2].concat()
    }
}

/// Observed ancestors of `y`, other than `x` and `y`, that meet condition
/// (2) alone: every minimal front-door set is made of them.
fn candidates(g: &Graph, x: Node, y: Node) -> Vec<Node> {
    let open_from_x = g.without_edges_out_of(&[x]).d_connected_from(&[x], &[]);
    let anc_y = g.ancestors(&[y]);
    (0..g.len())
        .filter(|&v| v != x && v != y && anc_y[v] && !g.is_latent(v) && !open_from_x[v])
        .collect()
}

/// Why no front-door set exists, in words (None when one does). Names the
/// first condition that no set of observed variables can meet.
pub fn frontdoor_obstacle(g: &Graph, x: Node, y: Node) -> Option<String> {
    let (ex, ey) = (quote(g.name(x)), quote(g.name(y)));
    if x == y || !g.is_ancestor(x, y) {
        return Some(format!("there is no directed path from {ex} to {ey}"));
    }
    if g.has_edge(x, y) {
        return Some(format!(
            "the direct edge {ex} -> {ey} passes through no other variable (condition 1)"
        ));
    }
    let cands = candidates(g, x, y);
    if directed_path_avoiding(g, x, y, &g.mask(&cands)) {
        return Some(format!(
            "the observed variables with no open backdoor path from {ex} (condition 2) \
             do not intercept every directed path from {ex} to {ey} (condition 1)"
        ));
    }
    let search = Search::new(g, x, y);
    match search.largest_within(cands) {
        Some(_) => None,
        None => Some(format!(
            "every set that meets conditions 1 and 2 leaves a backdoor path to {ey} \
             open given {ex} (condition 3)"
        )),
    }
}

/// Every inclusion-minimal non-empty front-door set of observed nodes (not
/// `x` or `y`) for the effect of `x` on `y`, at most `cap` (at least 1).
/// Each set is sorted by name; the list by size, then names. None when `x`
/// is not an ancestor of `y` (the graph implies no effect) or `x -> y` is an
/// edge. The flag is true when the listing stopped early.
pub fn minimal_frontdoor_sets(g: &Graph, x: Node, y: Node, cap: usize) -> (Vec<Vec<Node>>, bool) {
    minimal_frontdoor_listing(g, x, y, cap, cap.max(1).saturating_add(1)).into_pair()
}

/// As [`minimal_frontdoor_sets`], with the sets past the cap counted up to
/// `count_to` (the search budget still applies).
pub fn minimal_frontdoor_listing(
    g: &Graph,
    x: Node,
    y: Node,
    cap: usize,
    count_to: usize,
) -> Listing<Vec<Node>> {
    let cap = cap.max(1);
    let count_to = count_to.max(cap + 1);
    let mut listing = Listing::empty();
    if x == y || !g.is_ancestor(x, y) || g.has_edge(x, y) {
        return listing;
    }
    let search = Search::new(g, x, y);
    let mut found: HashSet<Vec<Node>> = HashSet::new();
    let mut searched: HashSet<Vec<Node>> = HashSet::new();
    let mut stack = vec![candidates(g, x, y)];
    while let Some(s) = stack.pop() {
        // The minimal sets inside s are those inside its largest valid subset.
        let Some(largest) = search.largest_within(s) else {
            continue;
        };
        if !searched.insert(largest.clone()) {
            continue;
        }
        if searched.len() > SEARCH_BUDGET {
            listing.complete = false;
            break;
        }
        let m = search.minimize(largest.clone());
        if found.insert(m.clone()) && listing.offer(m.clone(), cap, count_to) {
            break;
        }
        for &e in m.iter().rev() {
            stack.push(largest.iter().copied().filter(|&v| v != e).collect());
        }
    }
    for s in &mut listing.items {
        super::sort_by_name(g, s);
    }
    super::sort_sets(g, &mut listing.items);
    listing
}
