//! d-separation by the reachability ("Bayes ball") algorithm: Shachter
//! (1998); Koller & Friedman (2009), Algorithm 3.1. Linear in the size of the
//! graph.

use super::{Graph, Node};

impl Graph {
    /// Nodes joined to some node of `from` by a path that is open given
    /// `given` (d-connected), as a mask. Nodes of `given` are never marked;
    /// nodes of `from` are marked when not in `given`.
    pub fn d_connected_from(&self, from: &[Node], given: &[Node]) -> Vec<bool> {
        let n = self.len();
        let in_given = self.mask(given);
        // A collider on an open path must have a descendant in `given`,
        // that is, be an ancestor of `given`.
        let anc_given = self.ancestors(given);
        // visited[v][0]: arrived travelling up (from a child);
        // visited[v][1]: arrived travelling down (from a parent).
        let mut visited = vec![[false; 2]; n];
        let mut reached = vec![false; n];
        let mut stack: Vec<(Node, usize)> = from.iter().map(|&x| (x, 0)).collect();
        while let Some((v, dir)) = stack.pop() {
            if visited[v][dir] {
                continue;
            }
            visited[v][dir] = true;
            if !in_given[v] {
                reached[v] = true;
            }
            let up = dir == 0;
            if up && !in_given[v] {
                stack.extend(self.parents(v).iter().map(|&p| (p, 0)));
                stack.extend(self.children(v).iter().map(|&c| (c, 1)));
            } else if !up {
                if !in_given[v] {
                    stack.extend(self.children(v).iter().map(|&c| (c, 1)));
                }
                if anc_given[v] {
                    stack.extend(self.parents(v).iter().map(|&p| (p, 0)));
                }
            }
        }
        reached
    }

    /// Are the node sets `xs` and `ys` d-separated given `zs`? The sets
    /// should be disjoint; a node in both `xs` and `ys` is never separated.
    pub fn d_separated(&self, xs: &[Node], ys: &[Node], zs: &[Node]) -> bool {
        let reached = self.d_connected_from(xs, zs);
        let in_z = self.mask(zs);
        !ys.iter().any(|&y| reached[y] || (xs.contains(&y) && !in_z[y]))
    }
}

#[cfg(test)]
mod tests {
    use crate::graph::parse;

    fn g(text: &str) -> crate::graph::Graph {
        parse(text, "t").unwrap().graph
    }

    // Textbook facts (common practice, e.g. Pearl 2009, sec. 1.2.3): a chain
    // and a fork are blocked by their middle node.
    #[test]
    fn chain_fork_collider() {
        let chain = g("a -> b -> c");
        let (a, b, c) = (0, 1, 2);
        assert!(!chain.d_separated(&[a], &[c], &[]));
        assert!(chain.d_separated(&[a], &[c], &[b]));
        let fork = g("b -> a\nb -> c");
        let (b, a, c) = (0, 1, 2);
        assert!(!fork.d_separated(&[a], &[c], &[]));
        assert!(fork.d_separated(&[a], &[c], &[b]));
    }

    // A collider blocks the path by itself and is opened by conditioning on
    // it or on a descendant (common practice, Pearl 2009, sec. 1.2.3).
    #[test]
    fn collider_and_descendant() {
        let gr = g("a -> b\nc -> b\nb -> d");
        let (a, b, c, d) = (0, 1, 2, 3);
        assert!(gr.d_separated(&[a], &[c], &[]));
        assert!(!gr.d_separated(&[a], &[c], &[b]));
        assert!(!gr.d_separated(&[a], &[c], &[d]));
    }
}
