//! Does a claim bear on the chosen adjustment (or front-door) set?
//!
//! A rejected claim says the graph leaves out an edge or an unobserved
//! common cause between two variables. Whether that matters for the
//! estimate depends on where the two variables sit. A claim bears on the
//! set used when
//!
//! - it involves the exposure, the outcome, or a variable on a directed
//!   path between them (a mediator), or a member of the front-door set; or
//! - replacing the claimed independence by a link between the two variables
//!   (`a -> b`, `b -> a` when either keeps the graph acyclic, or `a <-> b`)
//!   would make the set used fail its criterion, or would change the
//!   strategy or the set the same rule chooses ([`Plan::new`]).
//!
//! Otherwise the omission, if real, leaves the adjustment as it is: the
//! graph is still wrong there, but not in a way that moves this estimate.

use super::CheckReport;
use crate::graph::{Graph, Names, Node, set_text};
use crate::identify::{Strategy, check_frontdoor, is_backdoor_set};
use crate::plan::{AdjustChoice, Plan, Roles};
use rayon::prelude::*;
use serde::Serialize;

/// The adjustment a check was judged against (the JSON `adjustment`).
#[derive(Debug, Clone, Serialize)]
pub struct Adjustment {
    /// The exposure.
    pub exposure: String,
    /// The outcome.
    pub outcome: String,
    /// How the effect is identified under the declared graph.
    pub strategy: Strategy,
    /// The graph has a directed path from the exposure to the outcome (when
    /// it has none, it implies that the effect is zero).
    pub directed_path: bool,
    /// The adjustment set used (backdoor), sorted by name.
    pub adjustment_set: Option<Vec<String>>,
    /// The front-door set used (frontdoor), sorted by name.
    pub frontdoor_set: Option<Vec<String>>,
    /// Tested claims that bear on the set.
    pub bearing: usize,
    /// Rejected claims that bear on the set.
    pub rejected_bearing: usize,
}

/// What a claim means for the set: whether it bears on it, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Bearing {
    /// The claim bears on the chosen set.
    pub bears: bool,
    /// Why, in one clause.
    pub reason: String,
}

/// The set a plan uses, in words.
fn used(plan: &Plan) -> String {
    match plan.strategy {
        Strategy::Backdoor => format!(
            "the adjustment set {}",
            set_text(
                plan.adjustment_set.as_deref().unwrap_or_default(),
                Names::Plain,
                "{}"
            )
        ),
        Strategy::Frontdoor => format!(
            "the front-door set {}",
            set_text(
                plan.frontdoor_set.as_deref().unwrap_or_default(),
                Names::Plain,
                "{}"
            )
        ),
        Strategy::None => "the verdict that the effect is not identified".to_string(),
    }
}

/// Does the set `plan` uses still meet its criterion in `g`?
fn still_valid(g: &Graph, plan: &Plan) -> bool {
    let (x, y) = (plan.roles.exposure, plan.roles.outcome);
    let nodes = |names: &Option<Vec<String>>| -> Vec<Node> {
        names.iter().flatten().filter_map(|n| g.node(n)).collect()
    };
    match plan.strategy {
        Strategy::Backdoor => is_backdoor_set(g, x, y, &nodes(&plan.adjustment_set)),
        Strategy::Frontdoor => check_frontdoor(g, x, y, &nodes(&plan.frontdoor_set)).holds(),
        Strategy::None => true,
    }
}

/// How the plan changes when the graph is `g`, or None when it does not.
fn change(g: Graph, plan: &Plan, choice: &AdjustChoice) -> Option<String> {
    if !still_valid(&g, plan) {
        return Some(match plan.strategy {
            Strategy::Frontdoor => format!("{} would no longer meet the front-door criterion", used(plan)),
            _ => format!("{} would no longer block every backdoor path", used(plan)),
        });
    }
    let roles = Roles {
        graph: g,
        exposure: plan.roles.exposure,
        outcome: plan.roles.outcome,
    };
    let Ok(new) = Plan::new(roles, choice, false) else {
        return Some(format!("{} would no longer be valid", used(plan)));
    };
    if new.strategy == Strategy::None && plan.strategy != Strategy::None {
        return Some("the effect would no longer be identified".to_string());
    }
    if new.strategy != plan.strategy
        || new.adjustment_set != plan.adjustment_set
        || new.frontdoor_set != plan.frontdoor_set
    {
        return Some(format!("the same rule would choose {} instead", used(&new)));
    }
    None
}

/// Which nodes lie on a directed path from the exposure to the outcome
/// (descendants of the one and ancestors of the other).
fn on_causal_path(plan: &Plan) -> Vec<bool> {
    let g = &plan.roles.graph;
    let de_x = g.descendants(&[plan.roles.exposure]);
    let an_y = g.ancestors(&[plan.roles.outcome]);
    de_x.iter().zip(&an_y).map(|(&d, &a)| d && a).collect()
}

/// Whether the claim that `a` and `b` are independent bears on the set
/// `plan` uses (chosen by `choice`); see the module documentation.
/// `on_path` marks the nodes on a causal path ([`on_causal_path`]),
/// computed once for all claims.
fn bearing_on(plan: &Plan, choice: &AdjustChoice, on_path: &[bool], a: Node, b: Node) -> Bearing {
    let g = &plan.roles.graph;
    let (x, y) = (plan.roles.exposure, plan.roles.outcome);
    let frontdoor = plan.frontdoor_set.as_deref().unwrap_or_default();
    for v in [a, b] {
        let name = g.name(v);
        let why = if v == x {
            "it involves the exposure".to_string()
        } else if v == y {
            "it involves the outcome".to_string()
        } else if frontdoor.iter().any(|m| m == name) {
            format!("it involves {name}, a member of the front-door set")
        } else if on_path[v] {
            format!(
                "it involves {name}, on a causal path from {} to {}",
                g.name(x),
                g.name(y)
            )
        } else {
            continue;
        };
        return Bearing {
            bears: true,
            reason: why,
        };
    }
    let (na, nb) = (g.name(a), g.name(b));
    let mut variants: Vec<(String, Graph)> = Vec::new();
    for (from, to) in [(a, b), (b, a)] {
        if !g.is_ancestor(to, from) {
            let mut h = g.clone();
            h.add_edge(from, to);
            variants.push((format!("{} -> {}", g.name(from), g.name(to)), h));
        }
    }
    let mut h = g.clone();
    h.add_bidirected(a, b);
    variants.push((format!("{na} <-> {nb}"), h));
    for (edge, h) in variants {
        if let Some(what) = change(h, plan, choice) {
            return Bearing {
                bears: true,
                reason: format!("with {edge} added to the graph, {what}"),
            };
        }
    }
    Bearing {
        bears: false,
        reason: format!(
            "with {na} and {nb} linked either way or by a shared unobserved cause, {} would stay \
             valid and be chosen again",
            used(plan)
        ),
    }
}

/// Marks each tested claim of `report` with whether it bears on the set
/// `plan` uses, and records the adjustment judged against. `plan` must be
/// made under the same graph, with the same unobserved nodes.
pub fn judge(report: &mut CheckReport, plan: &Plan, choice: &AdjustChoice) {
    let g = &plan.roles.graph;
    let on_path = on_causal_path(plan);
    let found: Vec<Option<Bearing>> = report
        .implications
        .par_iter()
        .map(|i| match (g.node(&i.a), g.node(&i.b)) {
            (Some(a), Some(b)) => Some(bearing_on(plan, choice, &on_path, a, b)),
            _ => None,
        })
        .collect();
    for (i, b) in report.implications.iter_mut().zip(found) {
        i.bears_on_adjustment = b.as_ref().map(|b| b.bears);
        i.bearing = b.map(|b| b.reason);
    }
    let bears = |i: &&super::TestedImplication| i.bears_on_adjustment == Some(true);
    report.warnings.extend(plan.warnings.iter().cloned());
    report.adjustment = Some(Adjustment {
        exposure: g.name(plan.roles.exposure).to_string(),
        outcome: g.name(plan.roles.outcome).to_string(),
        strategy: plan.strategy,
        directed_path: plan.identification.exposure_is_ancestor,
        adjustment_set: plan.adjustment_set.clone(),
        frontdoor_set: plan.frontdoor_set.clone(),
        bearing: report.implications.iter().filter(bears).count(),
        rejected_bearing: report
            .implications
            .iter()
            .filter(|i| i.rejected)
            .filter(bears)
            .count(),
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::parse;

    fn plan(text: &str, x: &str, y: &str) -> Plan {
        let g = parse(text, "t").unwrap().graph;
        let roles = Roles::resolve(g, None, None, &[], x, y).unwrap();
        Plan::new(roles, &AdjustChoice::Optimal, false).unwrap()
    }

    fn judged(p: &Plan, a: &str, b: &str) -> Bearing {
        let g = &p.roles.graph;
        bearing_on(
            p,
            &AdjustChoice::Optimal,
            &on_causal_path(p),
            g.node(a).unwrap(),
            g.node(b).unwrap(),
        )
    }

    // Three covariates pointing into x and y, none linked to another: a
    // link between two of them leaves O = {c1, c2, c3} valid and chosen.
    #[test]
    fn covariate_pairs_do_not_bear_but_exposure_pairs_do() {
        let p = plan(
            "c1 -> x\nc2 -> x\nc3 -> x\nc1 -> y\nc2 -> y\nc3 -> y\nx -> y\nw -> y",
            "x",
            "y",
        );
        let b = judged(&p, "c1", "c2");
        assert!(!b.bears, "{b:?}");
        assert!(b.reason.contains("{c1, c2, c3, w}"), "{b:?}");
        let b = judged(&p, "w", "x");
        assert!(b.bears && b.reason.contains("exposure"), "{b:?}");
    }

    // Only u causes the exposure and only z the outcome: adjusting for
    // nothing is the smallest minimal set, and a link between u and z
    // would open x <- u -> z -> y (or x <- u <-> z -> y). The optimal set
    // {z} blocks that path whatever links u and z, so under it the same
    // claim does not bear.
    #[test]
    fn a_link_that_invalidates_the_set_bears() {
        let g = parse("u -> x\nz -> y\nx -> y", "t").unwrap().graph;
        let roles = Roles::resolve(g, None, None, &[], "x", "y").unwrap();
        let p = Plan::new(roles.clone(), &AdjustChoice::Minimal, false).unwrap();
        assert_eq!(p.adjustment_set, Some(Vec::new()));
        let (u, z) = (roles.graph.node("u").unwrap(), roles.graph.node("z").unwrap());
        let b = bearing_on(&p, &AdjustChoice::Minimal, &on_causal_path(&p), u, z);
        assert!(b.bears, "{b:?}");
        assert_eq!(
            b.reason,
            "with u -> z added to the graph, the adjustment set {} would no longer block every \
             backdoor path"
        );
        let p = Plan::new(roles, &AdjustChoice::Optimal, false).unwrap();
        assert_eq!(p.adjustment_set, Some(vec!["z".to_string()]));
        let b = bearing_on(&p, &AdjustChoice::Optimal, &on_causal_path(&p), u, z);
        assert!(!b.bears, "{b:?}");
    }

    // A front-door mediator's claims bear on the front-door set.
    #[test]
    fn front_door_members_bear() {
        let p = plan("x <-> y\nx -> m -> y\nw -> m", "x", "y");
        assert_eq!(p.strategy, Strategy::Frontdoor);
        let b = judged(&p, "w", "x");
        assert!(b.bears);
        let b = judged(&p, "m", "w");
        assert!(b.bears, "{b:?}");
    }
}
