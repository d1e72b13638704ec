//! Graph-file parsing through the binary: each kind of mistake gives its
//! message with file:line:column and exit code 2.

use crate::helpers::{run_in, write};

fn draw_err(text: &str) -> crate::helpers::Run {
    let dir = tempfile::tempdir().unwrap();
    let g = write(dir.path(), "g.txt", text);
    run_in(dir.path(), &["draw", "--graph", &g, "--format", "dot"])
}

#[test]
fn parse_errors_name_the_place() {
    let cases: &[(&str, &str, &str)] = &[
        ("a -> b\nb ->\n", "g.txt:2:3:", "dangling arrow"),
        ("a -> b\nc => d\n", "g.txt:2:3:", "expected '->'"),
        ("\"open -> b\n", "g.txt:1:1:", "unterminated"),
        ("a -> a\n", "g.txt:1:6:", "self-loop"),
        (
            "a -> b\nb -> c\nc -> a\n",
            "g.txt:1:3:",
            "directed cycle: a -> b -> c -> a",
        ),
        ("# nothing\n", "g.txt:", "no nodes"),
        ("a -> b (x)\n", "g.txt:1:10:", "expected a number"),
        ("a : purple\n", "g.txt:1:5:", "unknown attribute"),
    ];
    for (text, place, words) in cases {
        let r = draw_err(text);
        assert_eq!(r.code, 2, "{text:?}: {}", r.stderr);
        assert!(r.stderr.contains(place), "{text:?}: {}", r.stderr);
        assert!(r.stderr.contains(words), "{text:?}: {}", r.stderr);
    }
}

#[test]
fn duplicate_edge_is_a_warning() {
    let r = draw_err("a -> b\na -> b\n");
    assert_eq!(r.code, 0);
    assert!(r.stderr.contains("g.txt:2:3: duplicate edge"), "{}", r.stderr);
}
