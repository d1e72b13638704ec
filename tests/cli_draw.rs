//! `causeway draw`: the SVG parses as XML and marks the roles; DOT lists
//! every edge.

use crate::helpers::{repo, run};

#[test]
fn svg_parses_and_marks_roles() {
    let g = repo("examples/graphs/confounding.graph");
    let g = g.to_str().unwrap();
    let (r, _d) = run(&[
        "draw",
        "--graph",
        g,
        "--exposure",
        "enrolled",
        "--outcome",
        "pain_days",
        "--adjust",
        "age,role",
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let doc = roxmltree::Document::parse(&r.stdout).expect("SVG is well-formed XML");
    let texts: Vec<&str> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text())
        .collect();
    for name in [
        "enrolled",
        "pain_days",
        "age",
        "role",
        "standing_hours",
        "adjusted for",
        "exposure",
        "outcome",
        "observed",
        "unmeasured common cause",
    ] {
        assert!(texts.contains(&name), "missing label {name}");
    }
    // Only kinds drawn are in the legend: no node is unobserved, no set is
    // a front-door set.
    assert!(!texts.contains(&"unobserved"), "{texts:?}");
    assert!(!texts.iter().any(|t| t.contains("mediator")), "{texts:?}");
    // The latent common cause is drawn as a dashed two-headed arc.
    assert!(r.stdout.contains("marker-start"));
}

#[test]
fn dot_lists_edges() {
    let g = repo("examples/graphs/confounding.graph");
    let (r, _d) = run(&["draw", "--graph", g.to_str().unwrap(), "--format", "dot"]);
    assert_eq!(r.code, 0);
    assert!(r.stdout.contains("\"enrolled\" -> \"standing_hours\";"));
    assert!(r.stdout.contains("dir=both"));
    // Labelled as an export for graph-layout programs, in a comment.
    assert!(
        r.stdout
            .starts_with("// The causal graph exported from causeway in the DOT language, for graph-layout")
    );
    assert!(r.stdout.contains("\ndigraph causeway {"));
}

// With --data, a node that is not a column of the data (motivation in the
// demo's hidden-motivation graph) is drawn as unobserved; the front-door
// set {standing_hours} is drawn as a mediator, not as adjusted for.
#[test]
fn data_marks_missing_columns_unobserved_and_front_door_is_a_mediator() {
    let g = repo("demo-data/hidden-motivation.graph");
    let d = repo("demo-data/study.csv");
    let args = [
        "draw",
        "--graph",
        g.to_str().unwrap(),
        "--exposure",
        "enrolled",
        "--outcome",
        "pain_days",
        "--adjust",
        "standing_hours",
    ];
    let (r, _d) = run(&args);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(!r.stdout.contains(">unobserved<"), "{}", r.stdout);
    let mut with_data = args.to_vec();
    with_data.extend(["--data", d.to_str().unwrap()]);
    let (r, _d) = run(&with_data);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let doc = roxmltree::Document::parse(&r.stdout).expect("SVG is well-formed XML");
    let texts: Vec<&str> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text())
        .collect();
    assert!(texts.contains(&"unobserved"), "{texts:?}");
    assert!(texts.contains(&"mediator (front-door set)"), "{texts:?}");
    assert!(!texts.contains(&"adjusted for"), "{texts:?}");
    // motivation's box is dashed (unobserved).
    let dashed = doc.descendants().filter(|n| n.has_tag_name("rect")).any(|n| {
        n.attribute("stroke-dasharray").is_some()
            && n.next_sibling_element().and_then(|t| t.text()) == Some("motivation")
    });
    assert!(dashed, "{}", r.stdout);
}
