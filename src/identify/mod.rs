//! Identification: which sets of observed variables identify the causal
//! effect of one exposure X on one outcome Y under the declared graph.
//!
//! * the backdoor criterion (Pearl J. *Causality*, 2nd ed., 2009, Def.
//!   3.3.1), with the backdoor paths a set leaves open ([`backdoor`],
//!   [`paths`]);
//! * every inclusion-minimal backdoor adjustment set of observed variables,
//!   listed with polynomial delay as minimal separators in a moral graph, in
//!   the manner of van der Zander, Liśkiewicz & Textor (Artificial
//!   Intelligence 2019;270:1-40) ([`adjustment_sets`], [`separators`]);
//! * the optimal adjustment set of Henckel, Perković & Maathuis (JRSS-B
//!   2022;84:579-599) ([`optimal`]);
//! * front-door sets (Pearl, Biometrika 1995;82:669-688) ([`frontdoor`]);
//! * [`identify`], which gathers all of these into one [`Identification`],
//!   the record behind `causeway identify`.
//!
//! Nodes are [`Node`] indices into a [`Graph`]; names appear only in the
//! [`Identification`]. Every answer is only as good as the declared graph.

pub mod adjustment_sets;
pub mod backdoor;
pub mod frontdoor;
pub mod optimal;
pub mod paths;
pub mod separators;
mod summary;

pub use adjustment_sets::{minimal_backdoor_listing, minimal_backdoor_sets};
pub use backdoor::{BackdoorCheck, check_backdoor, is_backdoor_set};
pub use frontdoor::{
    FrontdoorCheck, check_frontdoor, frontdoor_obstacle, minimal_frontdoor_listing, minimal_frontdoor_sets,
};
pub use optimal::optimal_set;
pub use paths::{open_backdoor_path_listing, open_backdoor_paths};
pub use summary::{
    BackdoorSummary, FrontdoorSummary, GivenSet, Identification, Strategy, identify, no_directed_path_warning,
};

use crate::graph::{Graph, Node};

/// At most this many open paths are listed (the command-line contract).
pub const OPEN_PATH_CAP: usize = 50;

/// At most this many minimal adjustment or front-door sets are listed.
pub const SET_CAP: usize = 100;

/// Past the cap, a listing goes on counting (without keeping) up to this
/// many items, so that a report can say how many exist; past it, the count
/// is a lower bound ("at least").
pub const COUNT_LIMIT: usize = 1000;

/// A list cut at a cap: the first items found, and how many the listing
/// counted before it ended or stopped.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Listing<T> {
    /// The first items found, at most the cap.
    pub items: Vec<T>,
    /// How many were counted (never fewer than `items`).
    pub total: usize,
    /// The listing ran to its end, so `total` is exact; otherwise it
    /// stopped early (at its count limit or search budget) and `total` is a
    /// lower bound.
    pub complete: bool,
}

impl<T> Listing<T> {
    /// An empty, complete listing.
    pub fn empty() -> Self {
        Listing {
            items: Vec::new(),
            total: 0,
            complete: true,
        }
    }

    /// Counts `item`, keeping it when fewer than `cap` are kept; true when
    /// the count has reached `count_to` (the listing should stop, and is
    /// then marked incomplete).
    fn offer(&mut self, item: T, cap: usize, count_to: usize) -> bool {
        if self.items.len() < cap {
            self.items.push(item);
        }
        self.total += 1;
        if self.total >= count_to {
            self.complete = false;
            return true;
        }
        false
    }

    /// More items exist than are listed, or may exist.
    pub fn truncated(&self) -> bool {
        !self.complete || self.total > self.items.len()
    }

    /// The items and [`Listing::truncated`].
    pub fn into_pair(self) -> (Vec<T>, bool) {
        let t = self.truncated();
        (self.items, t)
    }
}

/// Sorts nodes by name.
fn sort_by_name(g: &Graph, nodes: &mut [Node]) {
    nodes.sort_by(|&a, &b| g.name(a).cmp(g.name(b)));
}

/// Sorts sets (each already sorted) by size, then by their names in order.
fn sort_sets(g: &Graph, sets: &mut [Vec<Node>]) {
    sets.sort_by(|a, b| {
        a.len()
            .cmp(&b.len())
            .then_with(|| a.iter().map(|&v| g.name(v)).cmp(b.iter().map(|&v| g.name(v))))
    });
}

/// Sorts paths by length, then by their names in order.
fn sort_paths(g: &Graph, paths: &mut [Vec<Node>]) {
    sort_sets(g, paths);
}
