//! The causal graph: a directed acyclic graph over named variables, some of
//! them unobserved (latent).
//!
//! A graph comes from a plain-text edge list ([`parse`]); `a <-> b` adds a
//! fresh latent node pointing into both. Nodes that are not columns of the
//! data, or that the analyst names as latent, are unobserved. Edges may carry
//! coefficients and nodes attributes ([`NodeSpec`]) for the `simulate`
//! command; every other command ignores them.
//!
//! d-separation ([`Graph::d_separated`]) follows the reachability ("Bayes
//! ball") algorithm of Shachter (1998) as presented in Koller & Friedman,
//! *Probabilistic Graphical Models* (2009), Algorithm 3.1.

mod diff;
mod dsep;
mod parse;
mod print;

pub use diff::{GraphDiff, diff};
pub use parse::{ParseError, Parsed, Warning, parse, parse_bytes};
pub use print::{Names, quote, set_text, unwritable};

use std::collections::{BTreeMap, HashMap};

/// Index of a node in a [`Graph`].
pub type Node = usize;

/// A coefficient written after an edge, for simulation.
#[derive(Debug, Clone, PartialEq)]
pub enum Coef {
    /// One number: the effect of a one-unit change in the parent.
    Value(f64),
    /// Per-level effects of a categorical parent, against its first level.
    Levels(Vec<(String, f64)>),
}

/// How `simulate` draws a node, from the attributes written in the graph file
/// (`name : binary intercept=-1`). Every other command ignores them.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct NodeSpec {
    /// Drawn from a logistic model (0/1) rather than a linear Gaussian one.
    pub binary: bool,
    /// Intercept of the node's structural equation.
    pub intercept: Option<f64>,
    /// Standard deviation of the Gaussian noise (continuous nodes).
    pub sd: Option<f64>,
    /// Levels and their probabilities, for a categorical root node.
    pub levels: Vec<(String, f64)>,
    /// Round the simulated value to this many decimals.
    pub round: Option<u32>,
    /// Clip the simulated value below.
    pub min: Option<f64>,
    /// Clip the simulated value above.
    pub max: Option<f64>,
}

/// A directed acyclic graph with named nodes.
#[derive(Debug, Clone, Default)]
pub struct Graph {
    names: Vec<String>,
    index: HashMap<String, Node>,
    parents: Vec<Vec<Node>>,
    children: Vec<Vec<Node>>,
    latent: Vec<bool>,
    /// Nodes created by `a <-> b`, with the two nodes they point into.
    bidirected: Vec<Option<(Node, Node)>>,
    coefs: BTreeMap<(Node, Node), Coef>,
    specs: Vec<NodeSpec>,
}

impl Graph {
    /// An empty graph.
    pub fn new() -> Self {
        Self::default()
    }

    /// The node called `name`, adding it if it is new.
    pub fn add_node(&mut self, name: &str) -> Node {
        if let Some(&i) = self.index.get(name) {
            return i;
        }
        let i = self.names.len();
        self.names.push(name.to_string());
        self.index.insert(name.to_string(), i);
        self.parents.push(Vec::new());
        self.children.push(Vec::new());
        self.latent.push(false);
        self.bidirected.push(None);
        self.specs.push(NodeSpec::default());
        i
    }

    /// Adds the edge `from -> to`; returns false if it was already there.
    pub fn add_edge(&mut self, from: Node, to: Node) -> bool {
        if self.children[from].contains(&to) {
            return false;
        }
        self.children[from].push(to);
        self.parents[to].push(from);
        true
    }

    /// Adds a fresh latent node pointing into `a` and `b` (`a <-> b`).
    pub fn add_bidirected(&mut self, a: Node, b: Node) -> Node {
        let base = format!("{}<->{}", self.names[a], self.names[b]);
        let mut name = base.clone();
        let mut k = 2;
        while self.index.contains_key(&name) {
            name = format!("{base}#{k}");
            k += 1;
        }
        let u = self.add_node(&name);
        self.latent[u] = true;
        self.bidirected[u] = Some((a, b));
        self.add_edge(u, a);
        self.add_edge(u, b);
        u
    }

    /// Number of nodes.
    pub fn len(&self) -> usize {
        self.names.len()
    }

    /// True when the graph has no nodes.
    pub fn is_empty(&self) -> bool {
        self.names.is_empty()
    }

    /// The name of node `i`.
    pub fn name(&self, i: Node) -> &str {
        &self.names[i]
    }

    /// Names of a list of nodes.
    pub fn names_of(&self, nodes: &[Node]) -> Vec<String> {
        nodes.iter().map(|&i| self.names[i].clone()).collect()
    }

    /// The node called `name`, if any.
    pub fn node(&self, name: &str) -> Option<Node> {
        self.index.get(name).copied()
    }

    /// Parents of node `i`.
    pub fn parents(&self, i: Node) -> &[Node] {
        &self.parents[i]
    }

    /// Children of node `i`.
    pub fn children(&self, i: Node) -> &[Node] {
        &self.children[i]
    }

    /// Every edge as (from, to), in insertion order of the parents.
    pub fn edges(&self) -> Vec<(Node, Node)> {
        (0..self.len())
            .flat_map(|a| self.children[a].iter().map(move |&b| (a, b)))
            .collect()
    }

    /// True when `a -> b` is an edge.
    pub fn has_edge(&self, a: Node, b: Node) -> bool {
        self.children[a].contains(&b)
    }

    /// True when `a` and `b` are joined by an edge in either direction.
    pub fn adjacent(&self, a: Node, b: Node) -> bool {
        self.has_edge(a, b) || self.has_edge(b, a)
    }

    /// Is node `i` unobserved?
    pub fn is_latent(&self, i: Node) -> bool {
        self.latent[i]
    }

    /// Marks node `i` as unobserved (or observed).
    pub fn set_latent(&mut self, i: Node, latent: bool) {
        self.latent[i] = latent;
    }

    /// The pair a latent node was created for by `a <-> b`, if it was.
    pub fn bidirected_pair(&self, i: Node) -> Option<(Node, Node)> {
        self.bidirected[i]
    }

    /// Observed nodes, in declaration order.
    pub fn observed(&self) -> Vec<Node> {
        (0..self.len()).filter(|&i| !self.latent[i]).collect()
    }

    /// Latent nodes, in declaration order.
    pub fn latent_nodes(&self) -> Vec<Node> {
        (0..self.len()).filter(|&i| self.latent[i]).collect()
    }

    /// The coefficient written after the edge `a -> b`, if any.
    pub fn coef(&self, a: Node, b: Node) -> Option<&Coef> {
        self.coefs.get(&(a, b))
    }

    /// Sets the coefficient of the edge `a -> b`.
    pub fn set_coef(&mut self, a: Node, b: Node, c: Coef) {
        self.coefs.insert((a, b), c);
    }

    /// Simulation attributes of node `i`.
    pub fn spec(&self, i: Node) -> &NodeSpec {
        &self.specs[i]
    }

    /// Mutable simulation attributes of node `i`.
    pub fn spec_mut(&mut self, i: Node) -> &mut NodeSpec {
        &mut self.specs[i]
    }

    /// Membership mask of `set`.
    pub fn mask(&self, set: &[Node]) -> Vec<bool> {
        let mut m = vec![false; self.len()];
        for &i in set {
            m[i] = true;
        }
        m
    }

    /// Nodes reachable from `start` by following `next`, `start` included.
    fn closure<'a>(&'a self, start: &[Node], next: impl Fn(Node) -> &'a [Node]) -> Vec<bool> {
        let mut seen = self.mask(start);
        let mut stack: Vec<Node> = start.to_vec();
        while let Some(v) = stack.pop() {
            for &w in next(v) {
                if !seen[w] {
                    seen[w] = true;
                    stack.push(w);
                }
            }
        }
        seen
    }

    /// Ancestors of `set`, the set itself included, as a mask.
    pub fn ancestors(&self, set: &[Node]) -> Vec<bool> {
        self.closure(set, |v| &self.parents[v])
    }

    /// Descendants of `set`, the set itself included, as a mask.
    pub fn descendants(&self, set: &[Node]) -> Vec<bool> {
        self.closure(set, |v| &self.children[v])
    }

    /// Is there a directed path from `a` to `b` (of length zero or more)?
    pub fn is_ancestor(&self, a: Node, b: Node) -> bool {
        self.descendants(&[a])[b]
    }

    /// A topological order (parents before children), or a directed cycle
    /// as a node list whose first node is repeated at the end.
    pub fn topological_order(&self) -> Result<Vec<Node>, Vec<Node>> {
        // Depth-first search with colours; a grey node met again closes a cycle.
        let n = self.len();
        let mut colour = vec![0u8; n];
        let mut order = Vec::with_capacity(n);
        for root in 0..n {
            if colour[root] != 0 {
                continue;
            }
            let mut stack: Vec<(Node, usize)> = vec![(root, 0)];
            colour[root] = 1;
            while let Some(&mut (v, ref mut k)) = stack.last_mut() {
                if *k < self.children[v].len() {
                    let w = self.children[v][*k];
                    *k += 1;
                    match colour[w] {
                        0 => {
                            colour[w] = 1;
                            stack.push((w, 0));
                        }
                        1 => {
                            let from = stack.iter().position(|&(u, _)| u == w).unwrap_or(0);
                            let mut cycle: Vec<Node> = stack[from..].iter().map(|&(u, _)| u).collect();
                            cycle.push(w);
                            return Err(cycle);
                        }
                        _ => {}
                    }
                } else {
                    colour[v] = 2;
                    order.push(v);
                    stack.pop();
                }
            }
        }
        order.reverse();
        Ok(order)
    }

    /// A copy without the edges that leave any node of `set`.
    pub fn without_edges_out_of(&self, set: &[Node]) -> Graph {
        let cut = self.mask(set);
        self.filter_edges(|a, _| !cut[a])
    }

    /// A copy without the edges that enter any node of `set`.
    pub fn without_edges_into(&self, set: &[Node]) -> Graph {
        let cut = self.mask(set);
        self.filter_edges(|_, b| !cut[b])
    }

    /// A copy keeping only the edges for which `keep(from, to)` holds.
    pub fn filter_edges(&self, keep: impl Fn(Node, Node) -> bool) -> Graph {
        let mut g = self.clone();
        for a in 0..g.len() {
            g.children[a].retain(|&b| keep(a, b));
            g.parents[a].retain(|&p| keep(p, a));
        }
        g
    }
}
