//! Every example in every `--help` runs as written from the repository
//! root. An example is a help line that starts with "  causeway "; a line
//! ending in a backslash continues on the next. Each runs in a temporary
//! folder that holds a link to the repository's demo-data/, so examples
//! that write files write them there.

use std::path::Path;
use std::process::Command;

/// The subcommands, and the top level (empty name).
const COMMANDS: [&str; 9] = [
    "",
    "identify",
    "estimate",
    "compare",
    "check",
    "sensitivity",
    "simulate",
    "draw",
    "demo",
];

/// The example commands of a help text, continuation lines joined.
fn examples(help: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut lines = help.lines();
    while let Some(line) = lines.next() {
        if !line.starts_with("  causeway ") {
            continue;
        }
        let mut cmd = line.trim().to_string();
        while cmd.ends_with('\\') {
            cmd.pop();
            cmd.truncate(cmd.trim_end().len());
            match lines.next() {
                Some(next) => cmd.push_str(&format!(" {}", next.trim())),
                None => break,
            }
        }
        out.push(cmd);
    }
    out
}

/// Splits a command line into words as a POSIX shell would for the plain
/// words and simple quotes the examples use.
fn words(cmd: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut quote: Option<char> = None;
    let mut started = false;
    for c in cmd.chars() {
        match (quote, c) {
            (Some(q), c) if c == q => quote = None,
            (Some(_), c) => cur.push(c),
            (None, '\'' | '"') => {
                quote = Some(c);
                started = true;
            }
            (None, c) if c.is_whitespace() => {
                if started || !cur.is_empty() {
                    out.push(std::mem::take(&mut cur));
                }
                started = false;
            }
            (None, c) => cur.push(c),
        }
    }
    assert!(quote.is_none(), "unbalanced quote in {cmd}");
    if started || !cur.is_empty() {
        out.push(cur);
    }
    out
}

fn help(sub: &str) -> String {
    let mut args: Vec<&str> = Vec::new();
    if !sub.is_empty() {
        args.push(sub);
    }
    args.push("--help");
    let o = Command::new(env!("CARGO_BIN_EXE_causeway"))
        .args(&args)
        .output()
        .expect("the binary runs");
    assert!(o.status.success(), "causeway {sub} --help failed");
    String::from_utf8(o.stdout).expect("help is UTF-8")
}

#[test]
fn the_example_parser_joins_continuations() {
    let text = "Example:\n  causeway a --x 1 \\\n      --y 2\n  not causeway\n  causeway b 'q r'\n";
    let ex = examples(text);
    assert_eq!(ex, ["causeway a --x 1 --y 2", "causeway b 'q r'"]);
    assert_eq!(words(&ex[1]), ["causeway", "b", "q r"]);
}

#[test]
fn every_help_example_runs_from_the_repository_root() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut ran = 0;
    for sub in COMMANDS {
        let found = examples(&help(sub));
        // Every subcommand shows at least one example.
        assert!(
            sub.is_empty() || !found.is_empty(),
            "causeway {sub} --help has no example"
        );
        for cmd in found {
            let w = words(&cmd);
            assert_eq!(w[0], "causeway", "{cmd}");
            let dir = tempfile::tempdir().expect("temp dir");
            #[cfg(unix)]
            std::os::unix::fs::symlink(root.join("demo-data"), dir.path().join("demo-data")).unwrap();
            #[cfg(not(unix))]
            {
                let to = dir.path().join("demo-data");
                std::fs::create_dir(&to).unwrap();
                for f in std::fs::read_dir(root.join("demo-data")).unwrap() {
                    let f = f.unwrap();
                    std::fs::copy(f.path(), to.join(f.file_name())).unwrap();
                }
            }
            let o = Command::new(env!("CARGO_BIN_EXE_causeway"))
                .args(&w[1..])
                .current_dir(dir.path())
                .output()
                .expect("the binary runs");
            assert_eq!(
                o.status.code(),
                Some(0),
                "the example `{cmd}` (from `causeway {sub} --help`) failed:\n{}",
                String::from_utf8_lossy(&o.stderr)
            );
            assert!(
                !o.stdout.is_empty() || w.iter().any(|a| a == "--output" || a == "--out"),
                "{cmd}"
            );
            ran += 1;
        }
    }
    assert!(ran >= 10, "only {ran} examples found");
}
