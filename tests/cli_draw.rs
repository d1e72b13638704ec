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
        "unobserved",
    ] {
        assert!(texts.contains(&name), "missing label {name}");
    }
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
    assert!(r.stdout.starts_with("digraph"));
}
