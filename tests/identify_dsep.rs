//! d-separation checked against networkx (`is_d_separator`) on 300 seeded
//! random DAGs of 5 to 15 nodes, 2400 queries (fixture made by
//! tests/scripts/make_dsep_fixtures.py, which records the networkx version).
//! The same reference checks the listing of open backdoor paths: when the
//! exposure has no children, every path from it is a backdoor path, so some
//! backdoor path is open exactly when the reference says d-connected.

use crate::helpers::fixture;
use causeway::graph::{Graph, Node};
use causeway::identify::open_backdoor_paths;
use serde_json::Value;

fn nodes(v: &Value) -> Vec<Node> {
    v.as_array()
        .expect("node list")
        .iter()
        .map(|n| n.as_u64().expect("node index") as Node)
        .collect()
}

fn load() -> Value {
    let text = std::fs::read_to_string(fixture("dsep_networkx.json")).expect("fixture present");
    serde_json::from_str(&text).expect("fixture is JSON")
}

fn build(case: &Value) -> Graph {
    let mut g = Graph::new();
    let n = case["nodes"].as_u64().unwrap() as usize;
    for i in 0..n {
        g.add_node(&format!("v{i}"));
    }
    for e in case["edges"].as_array().unwrap() {
        let e = nodes(e);
        g.add_edge(e[0], e[1]);
    }
    g
}

// Source: networkx is_d_separator (version recorded in the fixture).
#[test]
fn d_separation_matches_networkx() {
    let doc = load();
    assert!(
        doc["networkx"].as_str().is_some(),
        "fixture names its networkx version"
    );
    let mut checked = 0;
    let mut separated = 0;
    for case in doc["cases"].as_array().unwrap() {
        let g = build(case);
        for q in case["queries"].as_array().unwrap() {
            let (x, y, z) = (nodes(&q["x"]), nodes(&q["y"]), nodes(&q["z"]));
            let want = q["separated"].as_bool().unwrap();
            assert_eq!(
                g.d_separated(&x, &y, &z),
                want,
                "graph {:?}, query {q}",
                case["edges"]
            );
            checked += 1;
            separated += usize::from(want);
        }
    }
    // Both answers occur often enough for the check to mean something.
    assert!(checked >= 2000 && separated > 300 && checked - separated > 300);
}

// Source: networkx is_d_separator, read through Pearl (2009) Def. 3.3.1:
// for a set with no descendant of X, some backdoor path is open given Z
// exactly when X and Y are d-connected given Z with X's outgoing edges cut.
// The reference answer is the fixture's, when the query's graph has no edge
// out of x (then the cut graph is the graph itself).
#[test]
fn open_backdoor_paths_agree_with_networkx() {
    let doc = load();
    let mut checked = 0;
    for case in doc["cases"].as_array().unwrap() {
        let g = build(case);
        for q in case["queries"].as_array().unwrap() {
            let (x, y, z) = (nodes(&q["x"]), nodes(&q["y"]), nodes(&q["z"]));
            if x.len() != 1 || y.len() != 1 || !g.children(x[0]).is_empty() {
                continue;
            }
            // One path is enough to decide; dense graphs have thousands.
            let (paths, _) = open_backdoor_paths(&g, x[0], y[0], &z, 1);
            let want_open = !q["separated"].as_bool().unwrap();
            assert_eq!(
                !paths.is_empty(),
                want_open,
                "graph {:?}, query {q}",
                case["edges"]
            );
            checked += 1;
        }
    }
    assert!(checked > 200, "only {checked} queries had a childless exposure");
}
