//! The implications `check` tests, against networkx: on 300 seeded random
//! DAGs (194 with latent nodes), every non-adjacent pair of observed nodes is
//! listed as testable exactly when some set of observed nodes d-separates it
//! (networkx `is_d_separator`, brute force over all subsets; fixture made by
//! tests/scripts/make_implication_fixtures.py, which records the networkx
//! version), and each reported set does separate its pair (re-checked with
//! `Graph::d_separated`, itself checked against networkx in identify_dsep).

use crate::helpers::fixture;
use causeway::check::implications;
use causeway::graph::{Graph, Node};
use serde_json::Value;
use std::collections::BTreeSet;

fn idx(v: &Value) -> Node {
    v.as_u64().expect("node index") as Node
}

// Source: networkx is_d_separator (version recorded in the fixture).
#[test]
fn testable_pairs_match_networkx_brute_force() {
    let text = std::fs::read_to_string(fixture("implications_networkx.json")).expect("fixture present");
    let doc: Value = serde_json::from_str(&text).expect("fixture is JSON");
    assert!(
        doc["networkx"].as_str().is_some(),
        "fixture names its networkx version"
    );
    let (mut testable, mut untestable, mut with_latent) = (0, 0, 0);
    for case in doc["cases"].as_array().unwrap() {
        let mut g = Graph::new();
        for i in 0..case["nodes"].as_u64().unwrap() {
            g.add_node(&format!("v{i}"));
        }
        for e in case["edges"].as_array().unwrap() {
            g.add_edge(idx(&e[0]), idx(&e[1]));
        }
        for v in case["latent"].as_array().unwrap() {
            g.set_latent(idx(v), true);
        }
        with_latent += usize::from(!g.latent_nodes().is_empty());
        let (imps, none) = implications(&g);
        let key = |a: Node, b: Node| (a.min(b), a.max(b));
        let got_testable: BTreeSet<_> = imps.iter().map(|i| key(i.a, i.b)).collect();
        let got_untestable: BTreeSet<_> = none.iter().map(|&(a, b)| key(a, b)).collect();
        let (mut want_testable, mut want_untestable) = (BTreeSet::new(), BTreeSet::new());
        for p in case["pairs"].as_array().unwrap() {
            let k = key(idx(&p[0]), idx(&p[1]));
            if p[2].as_bool().unwrap() {
                want_testable.insert(k);
            } else {
                want_untestable.insert(k);
            }
        }
        assert_eq!(
            got_testable, want_testable,
            "testable pairs, edges {}",
            case["edges"]
        );
        assert_eq!(
            got_untestable, want_untestable,
            "untestable pairs, edges {}",
            case["edges"]
        );
        assert_eq!(imps.len(), got_testable.len(), "one implication per pair");
        for i in &imps {
            assert!(
                i.given.iter().all(|&z| !g.is_latent(z) && z != i.a && z != i.b),
                "the set holds other observed nodes only"
            );
            assert!(
                g.d_separated(&[i.a], &[i.b], &i.given),
                "reported set separates v{} and v{}, edges {}",
                i.a,
                i.b,
                case["edges"]
            );
        }
        testable += want_testable.len();
        untestable += want_untestable.len();
    }
    // Both answers occur often enough for the check to mean something.
    assert!(testable > 4000 && untestable > 300 && with_latent > 150);
}
