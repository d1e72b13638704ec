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

pub use adjustment_sets::minimal_backdoor_sets;
pub use backdoor::{BackdoorCheck, check_backdoor, is_backdoor_set};
pub use frontdoor::{FrontdoorCheck, check_frontdoor, frontdoor_obstacle, minimal_frontdoor_sets};
pub use optimal::optimal_set;
pub use paths::open_backdoor_paths;
pub use summary::{BackdoorSummary, FrontdoorSummary, GivenSet, Identification, Strategy, identify};

use crate::graph::{Graph, Node};

/// At most this many open paths are listed (the command-line contract).
pub const OPEN_PATH_CAP: usize = 50;

/// At most this many minimal adjustment or front-door sets are listed.
pub const SET_CAP: usize = 100;

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
