//! Fuzz target: the graph-file parser never panics on any bytes, and a
//! graph it accepts prints to text that parses back to the same graph.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(parsed) = causeway::graph::parse_bytes(data, "fuzz.graph") else {
        return;
    };
    let g = parsed.graph;
    let printed = g.to_text();
    let again = causeway::graph::parse(&printed, "printed.graph")
        .unwrap_or_else(|e| panic!("printed graph does not parse: {e}\n{printed}"))
        .graph;
    assert_eq!(again.len(), g.len(), "node count after printing:\n{printed}");
    assert_eq!(again.to_text(), printed, "printing is not stable");
    // The graph's queries run on whatever was accepted.
    if g.len() >= 2 {
        let _ = g.topological_order();
        let _ = g.d_separated(&[0], &[1], &[]);
    }
});
