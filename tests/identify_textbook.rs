//! Textbook graphs with known answers; each test names the fact it checks.

use causeway::graph::{Graph, parse};
use causeway::identify::{
    Strategy, check_backdoor, identify, minimal_backdoor_sets, minimal_frontdoor_sets, optimal_set,
};

fn graph(text: &str) -> Graph {
    parse(text, "test.graph").expect("test graph parses").graph
}

fn node(g: &Graph, name: &str) -> usize {
    g.node(name).expect("node in graph")
}

fn names(g: &Graph, sets: &[Vec<usize>]) -> Vec<Vec<String>> {
    sets.iter().map(|s| g.names_of(s)).collect()
}

fn sets(list: &[&[&str]]) -> Vec<Vec<String>> {
    list.iter()
        .map(|s| s.iter().map(|n| n.to_string()).collect())
        .collect()
}

// Confounding triangle: adjust for the common cause (Pearl 2009, sec. 3.3.1;
// common practice).
#[test]
fn confounding_triangle_adjusts_for_the_confounder() {
    let g = graph("C -> X\nC -> Y\nX -> Y");
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    let (m, trunc) = minimal_backdoor_sets(&g, x, y, 100);
    assert!(!trunc);
    assert_eq!(names(&g, &m), sets(&[&["C"]]));
    assert_eq!(g.names_of(&optimal_set(&g, x, y).unwrap()), ["C"]);
    let id = identify(&g, x, y, None);
    assert_eq!(id.strategy, Strategy::Backdoor);
    assert_eq!(id.backdoor.open_paths, sets(&[&["X", "C", "Y"]]));
    assert_eq!(id.recommended_adjustment(), Some(vec!["C".to_string()]));
    assert!(!check_backdoor(&g, x, y, &[]).valid);
}

// M-structure: X <- A -> M <- B -> Y. Adjusting for nothing is valid;
// adjusting for the collider M alone opens X <- A -> M <- B -> Y (common
// practice; Pearl 2009 and Greenland, Epidemiology 2003;14:300-306, both
// from memory). The optimal set is {B}, the parent of Y (Henckel et al.
// 2022, definition from memory).
#[test]
fn m_structure_empty_set_valid_collider_alone_not() {
    let g = graph("A -> X\nA -> M\nB -> M\nB -> Y\nX -> Y");
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    let (m, _) = minimal_backdoor_sets(&g, x, y, 100);
    assert_eq!(names(&g, &m), vec![Vec::<String>::new()]);
    let alone = check_backdoor(&g, x, y, &[node(&g, "M")]);
    assert!(!alone.valid);
    assert_eq!(names(&g, &alone.open_paths), sets(&[&["X", "A", "M", "B", "Y"]]));
    // Adding A (or B) to M closes the path again.
    assert!(check_backdoor(&g, x, y, &[node(&g, "M"), node(&g, "A")]).valid);
    let id = identify(&g, x, y, None);
    assert!(id.backdoor.open_paths.is_empty());
    assert_eq!(id.backdoor.optimal_set, Some(vec!["B".to_string()]));
}

// A mediator must never be adjusted for: it is a descendant of the exposure
// (Pearl 2009, Def. 3.3.1, condition (i)).
#[test]
fn mediator_is_never_an_adjustment_variable() {
    let g = graph("C -> X\nC -> Y\nX -> M -> Y");
    let (x, y, med) = (node(&g, "X"), node(&g, "Y"), node(&g, "M"));
    let (m, _) = minimal_backdoor_sets(&g, x, y, 100);
    assert_eq!(names(&g, &m), sets(&[&["C"]]));
    let with_m = check_backdoor(&g, x, y, &[node(&g, "C"), med]);
    assert!(!with_m.valid);
    assert_eq!(with_m.descendants_of_exposure, vec![med]);
    assert!(with_m.open_paths.is_empty(), "C blocks the only backdoor path");
    let opt = optimal_set(&g, x, y).unwrap();
    assert!(!opt.contains(&med));
}

// Front-door graph X -> M -> Y with X <-> Y: no backdoor set, front-door
// set {M} (Pearl, Biometrika 1995;82:669-688; Causality 2009, sec. 3.3.2).
#[test]
fn frontdoor_graph() {
    let g = graph("X -> M -> Y\nX <-> Y");
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    let (bd, _) = minimal_backdoor_sets(&g, x, y, 100);
    assert!(bd.is_empty());
    let (fd, _) = minimal_frontdoor_sets(&g, x, y, 100);
    assert_eq!(names(&g, &fd), sets(&[&["M"]]));
    let id = identify(&g, x, y, None);
    assert_eq!(id.strategy, Strategy::Frontdoor);
    assert_eq!(id.backdoor.optimal_set, None);
    assert_eq!(id.recommended_frontdoor(), Some(vec!["M".to_string()]));
    // With the mediator confounded with the outcome as well, condition (3)
    // fails and nothing identifies the effect (Pearl 2009, sec. 3.3.2).
    let g2 = graph("X -> M -> Y\nX <-> Y\nM <-> Y");
    let id2 = identify(&g2, node(&g2, "X"), node(&g2, "Y"), None);
    assert_eq!(id2.strategy, Strategy::None);
    assert!(id2.frontdoor.obstacle.as_deref().unwrap().contains("condition 3"));
}

// Two minimal sets on one backdoor path, X <- A -> B -> Y: either blocks it
// (common practice, no source). The optimal set holds the parents of the
// outcome that are not descendants of X, here B and the precision variable
// P (Henckel, Perković & Maathuis 2022; definition from memory).
#[test]
fn two_minimal_sets_and_optimal_set_with_precision_variable() {
    let g = graph("A -> X\nA -> B -> Y\nX -> Y\nP -> Y");
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    let (m, _) = minimal_backdoor_sets(&g, x, y, 100);
    assert_eq!(names(&g, &m), sets(&[&["A"], &["B"]]));
    assert_eq!(g.names_of(&optimal_set(&g, x, y).unwrap()), ["B", "P"]);
    let id = identify(&g, x, y, None);
    assert_eq!(
        id.recommended_adjustment(),
        Some(vec!["B".to_string(), "P".to_string()])
    );
}

// When the optimal set includes an unobserved variable, the recommendation
// falls back to the smallest minimal set (Henckel et al. 2022 define O over
// the whole graph; the fallback is causeway's rule).
#[test]
fn optimal_set_with_latent_member_falls_back() {
    let g = graph("A -> X\nA -> B -> Y\nX -> Y\nU -> Y");
    let mut g = g;
    let u = node(&g, "U");
    g.set_latent(u, true);
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    assert!(optimal_set(&g, x, y).unwrap_err().contains("U"));
    let id = identify(&g, x, y, None);
    assert_eq!(id.backdoor.optimal_set, None);
    assert_eq!(id.recommended_adjustment(), Some(vec!["A".to_string()]));
}

// No directed path from X to Y: the graph implies no effect. With a
// confounder the optimal set is null (adjusting for nothing is not valid)
// and there is no front-door set (the command-line contract).
#[test]
fn exposure_not_an_ancestor_of_outcome() {
    let g = graph("C -> X\nC -> Y");
    let (x, y) = (node(&g, "X"), node(&g, "Y"));
    let id = identify(&g, x, y, None);
    assert!(!id.exposure_is_ancestor);
    assert_eq!(id.backdoor.minimal_sets, sets(&[&["C"]]));
    assert_eq!(id.backdoor.optimal_set, None);
    assert!(id.frontdoor.sets.is_empty());
    let g2 = graph("X\nY");
    let id2 = identify(&g2, node(&g2, "X"), node(&g2, "Y"), None);
    assert_eq!(id2.backdoor.optimal_set, Some(Vec::new()));
    assert_eq!(id2.backdoor.minimal_sets, vec![Vec::<String>::new()]);
}

// NHEFS (Hernán & Robins, Causal Inference: What If, 2020, ch. 12): with the
// nine baseline covariates as common causes of qsmk and wt82_71, the one
// minimal adjustment set and the optimal set are all nine, the set the book
// adjusts for. Graph copied unchanged from the project's reference data
// (tests/data/nhefs.graph, which names its source).
#[test]
fn nhefs_graph_adjusts_for_the_nine_covariates() {
    let text = std::fs::read_to_string(crate::helpers::data("nhefs.graph")).unwrap();
    let g = graph(&text);
    let (x, y) = (node(&g, "qsmk"), node(&g, "wt82_71"));
    let mut nine = vec![
        "active",
        "age",
        "education",
        "exercise",
        "race",
        "sex",
        "smokeintensity",
        "smokeyrs",
        "wt71",
    ];
    nine.sort();
    let id = identify(&g, x, y, None);
    assert_eq!(id.backdoor.minimal_sets, sets(&[&nine]));
    assert_eq!(id.backdoor.optimal_set, Some(sets(&[&nine]).remove(0)));
    assert_eq!(id.backdoor.open_paths.len(), 9);
}
