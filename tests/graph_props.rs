//! Property tests for the graph parser: arbitrary text never panics it, and
//! parse -> print -> parse gives the same graph.

use causeway::graph::{Graph, parse, parse_bytes};
use proptest::prelude::*;

fn same(a: &Graph, b: &Graph) -> bool {
    let names = |g: &Graph| (0..g.len()).map(|v| g.name(v).to_string()).collect::<Vec<_>>();
    let edges = |g: &Graph| {
        let mut e: Vec<(String, String)> = g
            .edges()
            .into_iter()
            .map(|(x, y)| (g.name(x).to_string(), g.name(y).to_string()))
            .collect();
        e.sort();
        e
    };
    let mut na = names(a);
    let mut nb = names(b);
    na.sort();
    nb.sort();
    na == nb
        && edges(a) == edges(b)
        && (0..a.len()).all(|v| a.is_latent(v) == b.node(a.name(v)).is_some_and(|w| b.is_latent(w)))
}

fn name() -> impl Strategy<Value = String> {
    prop_oneof![
        "[a-z][a-z0-9_]{0,6}",
        "[A-Za-z ]{1,8}".prop_filter("not blank", |s| !s.trim().is_empty()),
        Just("blood \"pressure\"".to_string()),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let _ = parse_bytes(&bytes, "fuzz.graph");
    }

    #[test]
    fn random_graph_like_text_never_panics(lines in proptest::collection::vec(
        "[a-c\" ]{0,3}(->|<->|-|>|<|\\(|\\)|:|#|,|=|[0-9.]{1,3}|binary|levels|\\s){0,6}[a-c\"]{0,2}", 0..8)) {
        let _ = parse(&lines.join("\n"), "fuzz.graph");
    }

    #[test]
    fn print_then_parse_round_trips(
        names in proptest::collection::vec(name(), 2..7),
        edges in proptest::collection::vec((0usize..7, 0usize..7, 0u8..3, -3.0f64..3.0), 0..12),
    ) {
        // Keep edges forward in the list order so the graph is acyclic.
        let mut names = names;
        names.sort();
        names.dedup();
        let mut text = String::new();
        for n in &names {
            text.push_str(&causeway::graph::quote(n));
            text.push('\n');
        }
        for (i, j, kind, c) in edges {
            let (i, j) = (i % names.len(), j % names.len());
            if i >= j { continue; }
            let (a, b) = (causeway::graph::quote(&names[i]), causeway::graph::quote(&names[j]));
            match kind {
                0 => text.push_str(&format!("{a} -> {b}\n")),
                1 => text.push_str(&format!("{a} -> {b} ({c})\n")),
                _ => text.push_str(&format!("{a} <-> {b}\n")),
            }
        }
        let g1 = parse(&text, "a").unwrap().graph;
        let printed = g1.to_text();
        let g2 = parse(&printed, "b").unwrap().graph;
        prop_assert!(same(&g1, &g2), "text:\n{}\nprinted:\n{}", text, printed);
        prop_assert_eq!(g2.to_text(), printed);
    }
}
