//! [`Identification`]: everything `causeway identify` reports, gathered
//! from the criteria of this module. It serialises exactly as the `identify`
//! JSON of the command-line contract; facts only the text report needs are
//! kept in fields that are not serialized.

use super::{
    COUNT_LIMIT, OPEN_PATH_CAP, SET_CAP, check_backdoor, frontdoor_obstacle, minimal_backdoor_listing,
    minimal_frontdoor_listing, open_backdoor_path_listing, optimal_set,
};
use crate::graph::{Graph, Node};
use serde::Serialize;

/// How the effect is identified.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Strategy {
    /// By adjustment for a set meeting the backdoor criterion.
    Backdoor,
    /// By the front-door formula through a set of intermediate variables.
    Frontdoor,
    /// Not identified by the criteria the tool knows.
    None,
}

impl Strategy {
    /// Its name in output (`backdoor`, `frontdoor`, `none`).
    pub fn name(self) -> &'static str {
        match self {
            Strategy::Backdoor => "backdoor",
            Strategy::Frontdoor => "frontdoor",
            Strategy::None => "none",
        }
    }
}

/// The backdoor part of an [`Identification`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BackdoorSummary {
    /// Some set of observed variables meets the backdoor criterion.
    pub identified: bool,
    /// Every inclusion-minimal backdoor adjustment set (each sorted; the
    /// list by size, then names); `[[]]` when adjusting for nothing is valid.
    pub minimal_sets: Vec<Vec<String>>,
    /// The optimal adjustment set, when it is observed and valid.
    pub optimal_set: Option<Vec<String>>,
    /// Backdoor paths open when adjusting for nothing.
    pub open_paths: Vec<Vec<String>>,
    /// The same paths as lists of edges, each `[from, to]` as drawn in
    /// the graph (a `<->` edge appears as its latent node's two edges).
    pub open_path_edges: Vec<Vec<[String; 2]>>,
    /// How many minimal sets exist (counted up to
    /// [`COUNT_LIMIT`](super::COUNT_LIMIT); at most
    /// [`SET_CAP`](super::SET_CAP) are listed).
    pub minimal_sets_total: usize,
    /// `minimal_sets_total` is exact (else the count stopped: at least).
    pub minimal_sets_complete: bool,
    /// How many open paths exist (counted up to the count limit; at most
    /// [`OPEN_PATH_CAP`](super::OPEN_PATH_CAP) are listed).
    pub open_paths_total: usize,
    /// `open_paths_total` is exact (else a lower bound).
    pub open_paths_complete: bool,
    /// Why the optimal set is `None`.
    #[serde(skip)]
    pub optimal_set_reason: Option<String>,
}

/// The front-door part of an [`Identification`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FrontdoorSummary {
    /// Some set of observed variables meets the front-door criterion.
    pub identified: bool,
    /// Every inclusion-minimal front-door set (each sorted; the list by
    /// size, then names).
    pub sets: Vec<Vec<String>>,
    /// How many minimal front-door sets exist (counted up to the count
    /// limit; at most [`SET_CAP`](super::SET_CAP) are listed).
    pub sets_total: usize,
    /// `sets_total` is exact (else a lower bound).
    pub sets_complete: bool,
    /// Why no set meets the criterion, when none does.
    #[serde(skip)]
    pub obstacle: Option<String>,
}

/// The backdoor criterion applied to a set the analyst gave.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GivenSet {
    /// The set, sorted by name.
    pub set: Vec<String>,
    /// It meets the backdoor criterion.
    pub valid: bool,
    /// Backdoor paths the set leaves open.
    pub open_paths: Vec<Vec<String>>,
    /// The same paths as lists of directed edges `[from, to]`.
    pub open_path_edges: Vec<Vec<[String; 2]>>,
    /// How many open paths exist (counted up to the count limit).
    pub open_paths_total: usize,
    /// `open_paths_total` is exact (else a lower bound).
    pub open_paths_complete: bool,
    /// Members that are descendants of the exposure.
    #[serde(skip)]
    pub descendants_of_exposure: Vec<String>,
}

/// What the graph says about identifying the effect of the exposure on the
/// outcome; serialises as the `identify` JSON of the command-line contract.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Identification {
    /// The exposure's name.
    pub exposure: String,
    /// The outcome's name.
    pub outcome: String,
    /// Observed nodes, in declaration order.
    pub observed: Vec<String>,
    /// Unobserved nodes, in declaration order (those made by `a <-> b`
    /// included).
    pub latent: Vec<String>,
    /// How the effect is identified: backdoor when some observed set meets
    /// the backdoor criterion, else frontdoor when some set meets the
    /// front-door criterion, else none.
    pub strategy: Strategy,
    /// The backdoor criterion.
    pub backdoor: BackdoorSummary,
    /// The front-door criterion.
    pub frontdoor: FrontdoorSummary,
    /// The set the analyst gave, when one was given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub given_set: Option<GivenSet>,
    /// The graph has a directed path from the exposure to the outcome (when
    /// it has none, the graph implies that the effect is zero); `directed_path`
    /// in JSON.
    #[serde(rename = "directed_path")]
    pub exposure_is_ancestor: bool,
}

impl Identification {
    /// The adjustment set to use: the optimal set when it is valid, else the
    /// smallest minimal set (ties broken by names); None when no observed
    /// set meets the backdoor criterion.
    pub fn recommended_adjustment(&self) -> Option<Vec<String>> {
        self.backdoor
            .optimal_set
            .clone()
            .or_else(|| self.backdoor.minimal_sets.first().cloned())
    }

    /// The smallest front-door set (ties broken by names), if any.
    pub fn recommended_frontdoor(&self) -> Option<Vec<String>> {
        self.frontdoor.sets.first().cloned()
    }

    /// The warning every report gives when the graph has no directed path
    /// from the exposure to the outcome (None when it has one), with the
    /// names as `show` writes them.
    pub fn no_directed_path_warning(&self, show: impl Fn(&str) -> String) -> Option<String> {
        (!self.exposure_is_ancestor)
            .then(|| no_directed_path_warning(&show(&self.exposure), &show(&self.outcome)))
    }
}

/// The warning for a graph with no directed path from `x` to `y`: the graph
/// itself says the effect is zero, and an estimate only tests that claim.
pub fn no_directed_path_warning(x: &str, y: &str) -> String {
    format!(
        "the graph has no directed path from {x} to {y}, so under the graph {x} has no effect on {y}: \
         the effect is zero by assumption. Any estimate of it is a test of that claim, not a measure \
         of an effect; one clearly away from zero points to an arrow missing from the graph, confounding it \
         does not show, or a problem with the data or the models"
    )
}

fn names(g: &Graph, sets: &[Vec<Node>]) -> Vec<Vec<String>> {
    sets.iter().map(|s| g.names_of(s)).collect()
}

/// Each path as its edges, `[from, to]` in the direction of the graph's
/// edge between consecutive nodes.
pub fn path_edges(g: &Graph, paths: &[Vec<Node>]) -> Vec<Vec<[String; 2]>> {
    paths
        .iter()
        .map(|p| {
            p.windows(2)
                .map(|w| {
                    let (a, b) = if g.has_edge(w[0], w[1]) {
                        (w[0], w[1])
                    } else {
                        (w[1], w[0])
                    };
                    [g.name(a).to_string(), g.name(b).to_string()]
                })
                .collect()
        })
        .collect()
}

/// Applies every criterion of this module to the effect of `x` on `y`, and
/// checks `given` against the backdoor criterion when it is passed. The
/// caller makes sure `x` and `y` are distinct observed nodes and that
/// `given` holds neither.
pub fn identify(g: &Graph, x: Node, y: Node, given: Option<&[Node]>) -> Identification {
    let open = open_backdoor_path_listing(g, x, y, &[], OPEN_PATH_CAP, COUNT_LIMIT);
    let minimal = minimal_backdoor_listing(g, x, y, SET_CAP, COUNT_LIMIT);
    let optimal = optimal_set(g, x, y);
    let front = minimal_frontdoor_listing(g, x, y, SET_CAP, COUNT_LIMIT);
    let backdoor = BackdoorSummary {
        identified: !minimal.items.is_empty(),
        minimal_sets: names(g, &minimal.items),
        optimal_set: optimal.as_ref().ok().map(|o| g.names_of(o)),
        open_paths: names(g, &open.items),
        open_path_edges: path_edges(g, &open.items),
        minimal_sets_total: minimal.total,
        minimal_sets_complete: minimal.complete,
        open_paths_total: open.total,
        open_paths_complete: open.complete,
        optimal_set_reason: optimal.err(),
    };
    let frontdoor = FrontdoorSummary {
        identified: !front.items.is_empty(),
        sets: names(g, &front.items),
        sets_total: front.total,
        sets_complete: front.complete,
        obstacle: if front.items.is_empty() {
            frontdoor_obstacle(g, x, y)
        } else {
            None
        },
    };
    let strategy = if backdoor.identified {
        Strategy::Backdoor
    } else if frontdoor.identified {
        Strategy::Frontdoor
    } else {
        Strategy::None
    };
    let given_set = given.map(|z| {
        let mut z = z.to_vec();
        super::sort_by_name(g, &mut z);
        z.dedup();
        let check = check_backdoor(g, x, y, &z);
        GivenSet {
            set: g.names_of(&z),
            valid: check.valid,
            open_paths: names(g, &check.open_paths),
            open_path_edges: path_edges(g, &check.open_paths),
            open_paths_total: check.open_paths_total,
            open_paths_complete: check.open_paths_complete,
            descendants_of_exposure: g.names_of(&check.descendants_of_exposure),
        }
    });
    Identification {
        exposure: g.name(x).to_string(),
        outcome: g.name(y).to_string(),
        observed: g.names_of(&g.observed()),
        latent: g.names_of(&g.latent_nodes()),
        strategy,
        backdoor,
        frontdoor,
        given_set,
        exposure_is_ancestor: g.is_ancestor(x, y),
    }
}
