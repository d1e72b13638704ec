//! The analysis plan: settings checked and names resolved before any model
//! is fitted. A plan holds the graph with its unobserved nodes marked (nodes
//! that are not columns of the data, and those named as latent), the
//! exposure and outcome, the identification under the graph, and the set
//! the estimate will use (adjustment set or front-door set).

use crate::error::{Advice, Phrasing, Remedy, Setting, Words, nearest_names};
use crate::graph::{Graph, Names, Node, set_text};
use crate::identify::{Identification, Strategy, identify};
use crate::{Error, Result};

/// Which adjustment set to use under the backdoor strategy.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub enum AdjustChoice {
    /// The optimal set O when it is observed and valid, else the smallest
    /// minimal set.
    #[default]
    Optimal,
    /// The smallest minimal set (ties broken by name).
    Minimal,
    /// The analyst's own set.
    Given(Vec<String>),
}

impl AdjustChoice {
    /// Parses the adjustment setting: `optimal`, `minimal`, or `A,B,C`.
    pub fn parse(s: &str) -> AdjustChoice {
        match s.trim() {
            "optimal" => AdjustChoice::Optimal,
            "minimal" => AdjustChoice::Minimal,
            list => AdjustChoice::Given(split_list(list)),
        }
    }
}

/// Splits a comma-separated list into trimmed, non-empty names.
pub fn split_list(s: &str) -> Vec<String> {
    s.split(',')
        .map(|x| x.trim().to_string())
        .filter(|x| !x.is_empty())
        .collect()
}

/// Why node `v` is unobserved, for messages.
fn why_latent(g: &Graph, v: Node, data: Option<&str>) -> String {
    if g.bidirected_pair(v).is_some() {
        "it is a latent node made by '<->'".to_string()
    } else if let Some(d) = data {
        format!("it is not a column of {d}")
    } else {
        "it is unobserved in the graph".to_string()
    }
}

/// The graph's nodes that are observed, with the exposure and outcome
/// resolved and checked.
#[derive(Debug, Clone)]
pub struct Roles {
    /// The graph with unobserved nodes marked.
    pub graph: Graph,
    /// The exposure node.
    pub exposure: Node,
    /// The outcome node.
    pub outcome: Node,
}

impl Roles {
    /// Marks unobserved nodes (absent from `columns` when given, or named
    /// in `latent`) and resolves the exposure and outcome; `data` names the
    /// data file in messages.
    pub fn resolve(
        mut graph: Graph,
        columns: Option<&[String]>,
        data: Option<&str>,
        latent: &[String],
        exposure: &str,
        outcome: &str,
    ) -> Result<Roles> {
        if let Some(cols) = columns {
            for v in 0..graph.len() {
                if !cols.iter().any(|c| c == graph.name(v)) {
                    graph.set_latent(v, true);
                }
            }
        }
        let mut marked = Vec::new();
        for name in latent {
            let v = node(&graph, name, Setting::Latent)?;
            graph.set_latent(v, true);
            marked.push(v);
        }
        let x = node(&graph, exposure, Setting::Exposure)?;
        let y = node(&graph, outcome, Setting::Outcome)?;
        if x == y {
            return Err(Error::option(
                Setting::Outcome,
                format!("is the same node '{exposure}' as the exposure"),
            ));
        }
        for (v, setting, role) in [
            (x, Setting::Exposure, "exposure"),
            (y, Setting::Outcome, "outcome"),
        ] {
            if marked.contains(&v) {
                return Err(Error::option(
                    Setting::Latent,
                    format!(
                        "lists '{}', the {role}; the {role} must be observed",
                        graph.name(v)
                    ),
                ));
            }
            if graph.is_latent(v) {
                return Err(Error::option(
                    setting,
                    format!(
                        "'{}' is unobserved: {}",
                        graph.name(v),
                        why_latent(&graph, v, data)
                    ),
                ));
            }
        }
        Ok(Roles {
            graph,
            exposure: x,
            outcome: y,
        })
    }

    /// Resolves the analyst's adjustment set to observed nodes other than the
    /// exposure and outcome.
    pub fn adjust_nodes(&self, names: &[String]) -> Result<Vec<Node>> {
        let mut set = Vec::new();
        for name in names {
            let v = node(&self.graph, name, Setting::Adjust)?;
            if v == self.exposure || v == self.outcome {
                return Err(Error::option(
                    Setting::Adjust,
                    format!("'{name}' is the exposure or the outcome; list other variables"),
                ));
            }
            if self.graph.is_latent(v) {
                return Err(Error::option(
                    Setting::Adjust,
                    format!("'{name}' is unobserved, so it cannot be adjusted for"),
                ));
            }
            if !set.contains(&v) {
                set.push(v);
            }
        }
        Ok(set)
    }
}

/// The node called `name`, or an error naming `setting`.
pub fn node(g: &Graph, name: &str, setting: Setting) -> Result<Node> {
    g.node(name).ok_or_else(|| {
        if let Some(why) = crate::graph::unwritable(name) {
            return Error::option(
                setting,
                format!(
                    "'{}' cannot be a node of the graph: {why}; rename the column in the data",
                    name.escape_debug()
                ),
            );
        }
        Error::option(
            setting,
            format!(
                "'{name}' is not a node of the graph (names are matched exactly, case-sensitive){}",
                nearest_names(name, (0..g.len()).map(|v| g.name(v)))
            ),
        )
    })
}

/// An analysis plan: what will be estimated and with which set.
#[derive(Debug, Clone)]
pub struct Plan {
    /// Graph, exposure and outcome.
    pub roles: Roles,
    /// What the graph says about identification.
    pub identification: Identification,
    /// The strategy the estimate follows (backdoor, frontdoor or none).
    pub strategy: Strategy,
    /// The adjustment set used (backdoor), sorted by name.
    pub adjustment_set: Option<Vec<String>>,
    /// The front-door set used (frontdoor), sorted by name.
    pub frontdoor_set: Option<Vec<String>>,
    /// Why this set was chosen, in words.
    pub reason: String,
    /// Warnings (an invalid set used on request).
    pub warnings: Vec<String>,
}

impl Plan {
    /// Identifies the effect and chooses the set to use. An invalid set of
    /// the analyst's is refused unless `force` is set, and then used with a
    /// warning, worded by [`Words`].
    pub fn new(roles: Roles, adjust: &AdjustChoice, force: bool) -> Result<Plan> {
        Plan::phrased(roles, adjust, force, &Words)
    }

    /// As [`Plan::new`], with the warnings naming settings in `phrasing`.
    pub fn phrased(
        roles: Roles,
        adjust: &AdjustChoice,
        force: bool,
        phrasing: &dyn Phrasing,
    ) -> Result<Plan> {
        let g = &roles.graph;
        let (x, y) = (roles.exposure, roles.outcome);
        let given = match adjust {
            AdjustChoice::Given(names) => Some(roles.adjust_nodes(names)?),
            _ => None,
        };
        let id = identify(g, x, y, given.as_deref());
        let mut warnings: Vec<String> = id.no_directed_path_warning(str::to_string).into_iter().collect();
        let mut strategy = id.strategy;
        let (adjustment_set, frontdoor_set, reason) = match (&id.given_set, adjust) {
            (Some(gs), _) if gs.valid => {
                strategy = Strategy::Backdoor;
                (
                    Some(gs.set.clone()),
                    None,
                    "the set given by the analyst, which meets the backdoor criterion".into(),
                )
            }
            (Some(gs), _) => {
                let why = given_set_problem(g, gs);
                let set = set_text(&gs.set, Names::Plain, "{}");
                if !force {
                    let choose = ["optimal", "minimal"].map(String::from).to_vec();
                    return Err(Error::option(
                        Setting::Adjust,
                        format!("{set} does not meet the backdoor criterion: {why}"),
                    )
                    .advised(Advice {
                        remedies: vec![
                            Remedy::Choose(Setting::Adjust, choose),
                            Remedy::TurnOn(Setting::ForceAdjust),
                        ],
                        purpose: "to estimate with it anyway",
                    }));
                }
                warnings.push(format!(
                    "{} {set} does not meet the backdoor criterion ({why}); it was used as asked ({}), \
                     so the estimate is biased under the graph",
                    phrasing.setting(Setting::Adjust),
                    phrasing.setting(Setting::ForceAdjust),
                ));
                strategy = Strategy::Backdoor;
                (
                    Some(gs.set.clone()),
                    None,
                    "the set given by the analyst (forced; not valid under the graph)".into(),
                )
            }
            (None, _) => match id.strategy {
                Strategy::Backdoor => {
                    let minimal = smallest(&id.backdoor.minimal_sets);
                    match (adjust, &id.backdoor.optimal_set) {
                        (AdjustChoice::Optimal, Some(o)) => (
                            Some(o.clone()),
                            None,
                            "the optimal adjustment set O (Henckel, Perković & Maathuis 2022)".into(),
                        ),
                        (AdjustChoice::Optimal, None) => (
                            minimal,
                            None,
                            format!(
                                "the smallest minimal adjustment set (the optimal set is not available: {})",
                                id.backdoor
                                    .optimal_set_reason
                                    .clone()
                                    .unwrap_or_else(|| "not valid".into())
                            ),
                        ),
                        _ => (minimal, None, "the smallest minimal adjustment set".into()),
                    }
                }
                Strategy::Frontdoor => (
                    None,
                    smallest(&id.frontdoor.sets),
                    "the smallest front-door set (Pearl 1995)".into(),
                ),
                Strategy::None => (None, None, String::new()),
            },
        };
        Ok(Plan {
            roles,
            identification: id,
            strategy,
            adjustment_set,
            frontdoor_set,
            reason,
            warnings,
        })
    }

    /// Why the effect is not identified, in one sentence (strategy none).
    pub fn not_identified_reason(&self) -> String {
        let id = &self.identification;
        let g = &self.roles.graph;
        let fd = match &id.frontdoor.obstacle {
            Some(o) => format!("none meets the front-door criterion: {o}"),
            None => "none meets the front-door criterion".into(),
        };
        format!(
            "the effect of {} on {} is not identified under this graph: no set of observed variables meets \
             the backdoor criterion, and {fd}",
            g.name(self.roles.exposure),
            g.name(self.roles.outcome)
        )
    }
}

fn smallest(sets: &[Vec<String>]) -> Option<Vec<String>> {
    sets.iter()
        .min_by(|a, b| a.len().cmp(&b.len()).then_with(|| a.cmp(b)))
        .cloned()
}

fn given_set_problem(g: &Graph, gs: &crate::identify::GivenSet) -> String {
    if !gs.descendants_of_exposure.is_empty() {
        return format!(
            "{} descends from the exposure",
            gs.descendants_of_exposure.join(", ")
        );
    }
    match gs.open_paths.first() {
        Some(p) => format!("the backdoor path {} stays open", g.path_text(p)),
        None => "it does not block every backdoor path".into(),
    }
}
