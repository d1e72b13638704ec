//! Listing the minimal vertex separators of two nodes in an undirected graph,
//! with every separator drawn from an allowed set, with polynomial delay.
//!
//! This is in the spirit of the listing of minimal separators of van der
//! Zander, Liśkiewicz & Textor (Artificial Intelligence 2019;270:1-40); the
//! version used here is written out below with its proof.
//!
//! A set S is a minimal x-y separator exactly when the components C_x and
//! C_y of the graph minus S that hold x and y are both *full*: every member
//! of S has a neighbour in each (a standard fact: Golumbic, *Algorithmic Graph
//! Theory and Perfect Graphs*, 1980; from memory). So S = N(C_x),
//! and S is determined by C_x. Allowed set R: since a subset of a set in R is
//! in R, the minimal separators inside R are the minimal separators that
//! happen to lie in R.
//!
//! * Closure. If S lies in R and A lies in C_x(S), every neighbour of A
//!   outside R is in C_x(S) too (it cannot be in S). So the closure A* of A
//!   (add neighbours outside R until none is left) lies in C_x(S); if it
//!   holds y, no separator in R has A on the x side.
//! * Smallest x side. Otherwise let D be the component of y in the graph
//!   minus N(A*), and C the component of x in the graph minus N(D). Then
//!   S = N(C) is a minimal separator (C and the y component, which contains
//!   D, are both full), S lies in N(A*), hence in R, and every minimal
//!   separator T in R with A in C_x(T) has C inside C_x(T): C_y(T) avoids
//!   N(A*), so it lies in D, so T = N(C_y(T)) lies in D ∪ N(D), which C
//!   avoids.
//! * Partition. The separators T in R with A* in C_x(T) and C_x(T) disjoint
//!   from a forbidden set F are: N(C) itself (when C misses F), and those
//!   whose x side strictly contains C, hence contains a first member v_i of
//!   N(C) \ F = (v_1, ..., v_k); those are found by recursing with
//!   A = C + v_i and F = F + {v_1, ..., v_(i-1)}. A branch is entered only
//!   when its closure misses y and its smallest x side misses F, so every
//!   branch yields a separator, each separator is listed once, and the
//!   delay between two outputs is O(n (n + m)).

use super::Listing;
use crate::graph::Node;

/// An undirected graph on nodes 0..n, as adjacency lists.
pub struct Undirected {
    /// Neighbours of each node.
    pub adj: Vec<Vec<Node>>,
}

struct Frame {
    side: Vec<bool>,
    forbidden: Vec<Node>,
    branches: Vec<Node>,
    next: usize,
}

impl Undirected {
    fn boundary(&self, set: &[bool]) -> Vec<bool> {
        let mut b = vec![false; set.len()];
        for (v, _) in set.iter().enumerate().filter(|&(_, &s)| s) {
            for &w in &self.adj[v] {
                if !set[w] {
                    b[w] = true;
                }
            }
        }
        b
    }

    /// The nodes reachable from `start` without entering `blocked`.
    fn component(&self, start: Node, blocked: &[bool]) -> Vec<bool> {
        let mut seen = vec![false; self.adj.len()];
        seen[start] = true;
        let mut stack = vec![start];
        while let Some(v) = stack.pop() {
            for &w in &self.adj[v] {
                if !seen[w] && !blocked[w] {
                    seen[w] = true;
                    stack.push(w);
                }
            }
        }
        seen
    }

    /// The smallest x side of a minimal separator in R whose x side holds
    /// `a`, or None when there is none.
    fn smallest_side(&self, a: &[bool], y: Node, allowed: &[bool]) -> Option<Vec<bool>> {
        // Closure: absorb neighbours that may not be in a separator.
        let mut closed = a.to_vec();
        let mut stack: Vec<Node> = (0..a.len()).filter(|&v| a[v]).collect();
        while let Some(v) = stack.pop() {
            for &w in &self.adj[v] {
                if !closed[w] && !allowed[w] {
                    closed[w] = true;
                    stack.push(w);
                }
            }
        }
        if closed[y] {
            return None;
        }
        let x_of = |m: &[bool]| m.iter().position(|&s| s);
        let x = x_of(a)?;
        let d = self.component(y, &self.boundary(&closed));
        Some(self.component(x, &self.boundary(&d)))
    }

    /// Minimal x-y separators made only of `allowed` nodes (x and y must not
    /// be allowed): the first `cap` kept, counted up to `count_to`.
    /// Each separator is sorted by node index.
    pub fn minimal_separators(
        &self,
        x: Node,
        y: Node,
        allowed: &[bool],
        cap: usize,
        count_to: usize,
    ) -> Listing<Vec<Node>> {
        let n = self.adj.len();
        let (cap, count_to) = (cap.max(1), count_to.max(cap.max(1) + 1));
        let mut out = Listing::empty();
        let mut start = vec![false; n];
        start[x] = true;
        let Some(side) = self.smallest_side(&start, y, allowed) else {
            return out;
        };
        let (sep, f) = self.frame(side, Vec::new());
        if out.offer(sep, cap, count_to) {
            return out;
        }
        let mut stack = vec![f];
        while let Some(top) = stack.last_mut() {
            if top.next == top.branches.len() {
                stack.pop();
                continue;
            }
            let i = top.next;
            top.next += 1;
            let mut a = top.side.clone();
            a[top.branches[i]] = true;
            let mut forbidden = top.forbidden.clone();
            forbidden.extend_from_slice(&top.branches[..i]);
            if let Some(side) = self.smallest_side(&a, y, allowed)
                && !forbidden.iter().any(|&f| side[f])
            {
                let (sep, f) = self.frame(side, forbidden);
                if out.offer(sep, cap, count_to) {
                    return out;
                }
                stack.push(f);
            }
        }
        out
    }

    /// The separator N(side) and the frame that branches on it.
    fn frame(&self, side: Vec<bool>, forbidden: Vec<Node>) -> (Vec<Node>, Frame) {
        let b = self.boundary(&side);
        let sep: Vec<Node> = (0..b.len()).filter(|&v| b[v]).collect();
        let branches = sep.iter().copied().filter(|v| !forbidden.contains(v)).collect();
        let frame = Frame {
            side,
            forbidden,
            branches,
            next: 0,
        };
        (sep, frame)
    }
}
