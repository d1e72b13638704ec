//! The backdoor criterion for one exposure and one outcome (Pearl J.
//! *Causality*, 2nd ed., 2009, Def. 3.3.1): a set Z is admissible when no
//! member of Z is a descendant of X, and Z blocks every path between X and Y
//! that starts with an arrow into X. The second condition is tested as
//! d-separation of X and Y given Z in the graph with the edges out of X
//! removed.

use super::{COUNT_LIMIT, OPEN_PATH_CAP, paths::open_backdoor_path_listing};
use crate::graph::{Graph, Node};

/// The backdoor criterion applied to one set, with the reasons when it fails.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BackdoorCheck {
    /// True when the set meets the criterion.
    pub valid: bool,
    /// Members of the set that are descendants of the exposure (the
    /// exposure itself included, if it is a member), sorted by name.
    pub descendants_of_exposure: Vec<Node>,
    /// Backdoor paths left open by the set, at most
    /// [`OPEN_PATH_CAP`](super::OPEN_PATH_CAP), each from exposure to outcome.
    pub open_paths: Vec<Vec<Node>>,
    /// How many open paths were counted (up to
    /// [`COUNT_LIMIT`](super::COUNT_LIMIT)).
    pub open_paths_total: usize,
    /// The count of open paths is exact (else a lower bound).
    pub open_paths_complete: bool,
    /// True when the set contains the outcome (never admissible).
    pub contains_outcome: bool,
}

/// Does `z` meet the backdoor criterion for the effect of `x` on `y`? A set
/// that contains `x` or `y` never does.
pub fn is_backdoor_set(g: &Graph, x: Node, y: Node, z: &[Node]) -> bool {
    if z.contains(&y) {
        return false;
    }
    let de_x = g.descendants(&[x]);
    if z.iter().any(|&v| de_x[v]) {
        return false;
    }
    g.without_edges_out_of(&[x]).d_separated(&[x], &[y], z)
}

/// The backdoor criterion for `z`, with the members that are descendants of
/// `x` and the backdoor paths that `z` leaves open (read in the graph as
/// declared, so that a descendant in `z` may open a path through a collider).
pub fn check_backdoor(g: &Graph, x: Node, y: Node, z: &[Node]) -> BackdoorCheck {
    let valid = is_backdoor_set(g, x, y, z);
    let de_x = g.descendants(&[x]);
    let mut descendants: Vec<Node> = z.iter().copied().filter(|&v| de_x[v]).collect();
    super::sort_by_name(g, &mut descendants);
    descendants.dedup();
    let contains_outcome = z.contains(&y);
    let open = if contains_outcome || z.contains(&x) {
        super::Listing::empty()
    } else {
        open_backdoor_path_listing(g, x, y, z, OPEN_PATH_CAP, COUNT_LIMIT)
    };
    BackdoorCheck {
        valid,
        descendants_of_exposure: descendants,
        open_paths: open.items,
        open_paths_total: open.total,
        open_paths_complete: open.complete,
        contains_outcome,
    }
}
