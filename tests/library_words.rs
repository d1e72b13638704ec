//! The library names no command-line flag: its messages name settings in
//! words (`Setting::words`) and carry advice as typed values (`Remedy`),
//! which the binary phrases with its flag names (`cli::Flags`).
//!
//! The scan reads every `.rs` file under src/ except src/cli/ and
//! src/main.rs and lists each string literal (plain, byte or raw) holding a
//! flag-like `--` followed by a letter. Not scanned:
//! - comments, doc comments included: they are read by developers, not
//!   printed to users (the few left say which output format a module
//!   serves, such as `--format latex`);
//! - items under `#[cfg(test)]`: test code cannot make the library speak; it
//!   only checks what the library returns, and that text is scanned where
//!   it is written (a test may also feed flag-like text as input, as the
//!   LaTeX escaping test does).

use crate::helpers::repo;
use std::path::{Path, PathBuf};

/// Files excused from the scan: none. Each entry must still need its place
/// (the test fails on an entry with nothing to excuse), so the list only
/// shrinks.
const ALLOWED: [&str; 0] = [];

/// The string literals of Rust `source` that hold `--` followed by a
/// letter, outside `#[cfg(test)]` items, as (line, literal text).
fn flag_like_strings(source: &str) -> Vec<(usize, String)> {
    let c: Vec<char> = source.chars().collect();
    let mut found = Vec::new();
    let (mut i, mut line) = (0, 1);
    // Brace depth; the depth at which a `#[cfg(test)]` item's body opened.
    let mut depth = 0usize;
    let mut test_body: Option<usize> = None;
    let mut test_pending = false;
    let ident = |ch: char| ch.is_alphanumeric() || ch == '_';
    while i < c.len() {
        let ch = c[i];
        let next = c.get(i + 1).copied();
        let prev_ident = i > 0 && ident(c[i - 1]);
        // Comments.
        if ch == '/' && next == Some('/') {
            while i < c.len() && c[i] != '\n' {
                i += 1;
            }
            continue;
        }
        if ch == '/' && next == Some('*') {
            let mut nest = 0;
            while i < c.len() {
                if c[i] == '/' && c.get(i + 1) == Some(&'*') {
                    nest += 1;
                    i += 2;
                } else if c[i] == '*' && c.get(i + 1) == Some(&'/') {
                    nest -= 1;
                    i += 2;
                    if nest == 0 {
                        break;
                    }
                } else {
                    line += usize::from(c[i] == '\n');
                    i += 1;
                }
            }
            continue;
        }
        // String literals: raw (r"..", r#".."#, br".."), plain and byte.
        let raw_start = if !prev_ident && ch == 'r' {
            Some(i + 1)
        } else if !prev_ident && ch == 'b' && next == Some('r') {
            Some(i + 2)
        } else {
            None
        };
        if let Some(mut j) = raw_start {
            let mut hashes = 0;
            while c.get(j) == Some(&'#') {
                hashes += 1;
                j += 1;
            }
            if c.get(j) == Some(&'"') {
                let (start_line, body) = (line, j + 1);
                let mut k = body;
                loop {
                    if k >= c.len() {
                        break;
                    }
                    if c[k] == '"' && (1..=hashes).all(|h| c.get(k + h) == Some(&'#')) {
                        break;
                    }
                    line += usize::from(c[k] == '\n');
                    k += 1;
                }
                let text: String = c[body..k.min(c.len())].iter().collect();
                if test_body.is_none() && is_flag_like(&text) {
                    found.push((start_line, text));
                }
                i = k + 1 + hashes;
                continue;
            }
        }
        if ch == '"' || (!prev_ident && ch == 'b' && next == Some('"')) {
            let start_line = line;
            let mut k = if ch == '"' { i + 1 } else { i + 2 };
            let body = k;
            while k < c.len() && c[k] != '"' {
                if c[k] == '\\' {
                    k += 1;
                }
                line += usize::from(c.get(k) == Some(&'\n'));
                k += 1;
            }
            let text: String = c[body..k.min(c.len())].iter().collect();
            if test_body.is_none() && is_flag_like(&text) {
                found.push((start_line, text));
            }
            i = k + 1;
            continue;
        }
        // A character literal ('x', '\n', '\'') or a lifetime ('a).
        if ch == '\'' {
            if next == Some('\\') {
                // Past the backslash and the escaped character.
                let mut k = i + 3;
                while k < c.len() && c[k] != '\'' {
                    k += 1;
                }
                i = k + 1;
            } else if c.get(i + 2) == Some(&'\'') {
                i += 3;
            } else {
                i += 1;
            }
            continue;
        }
        if source_at(&c, i, "#[cfg(test)]") {
            test_pending = true;
            i += "#[cfg(test)]".len();
            continue;
        }
        match ch {
            '\n' => line += 1,
            ';' if test_pending && test_body.is_none() => test_pending = false,
            '{' => {
                if test_pending && test_body.is_none() {
                    test_body = Some(depth);
                    test_pending = false;
                }
                depth += 1;
            }
            '}' => {
                depth = depth.saturating_sub(1);
                if test_body == Some(depth) {
                    test_body = None;
                }
            }
            _ => {}
        }
        i += 1;
    }
    found
}

fn source_at(c: &[char], i: usize, word: &str) -> bool {
    word.chars().enumerate().all(|(k, w)| c.get(i + k) == Some(&w))
}

/// `--` followed by an ASCII letter, as in a flag name.
fn is_flag_like(text: &str) -> bool {
    text.as_bytes()
        .windows(3)
        .any(|w| w[0] == b'-' && w[1] == b'-' && w[2].is_ascii_alphabetic())
}

/// The library's source files: src/ without src/cli/ and src/main.rs.
fn library_files() -> Vec<PathBuf> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        entries.sort();
        for path in entries {
            if path.is_dir() {
                if path != repo("src/cli") {
                    walk(&path, out);
                }
            } else if path.extension().is_some_and(|e| e == "rs") && path != repo("src/main.rs") {
                out.push(path);
            }
        }
    }
    let mut files = Vec::new();
    walk(&repo("src"), &mut files);
    files
}

#[test]
fn the_library_names_no_flag() {
    let files = library_files();
    assert!(files.len() > 50, "the library's files were found");
    let mut offending = Vec::new();
    let mut excused = [false; ALLOWED.len()];
    for path in files {
        let rel = path
            .strip_prefix(repo(""))
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        let hits = flag_like_strings(&std::fs::read_to_string(&path).unwrap());
        if hits.is_empty() {
            continue;
        }
        if let Some(k) = ALLOWED
            .iter()
            .position(|a| rel == *a || (a.ends_with('/') && rel.starts_with(a)))
        {
            excused[k] = true;
            continue;
        }
        for (line, text) in hits {
            offending.push(format!("{rel}:{line}: \"{text}\""));
        }
    }
    assert!(
        offending.is_empty(),
        "the library names command-line flags; name the setting (Setting) or give advice \
         (Remedy) and let the binary phrase it:\n{}",
        offending.join("\n")
    );
    for (a, used) in ALLOWED.iter().zip(excused) {
        assert!(used, "{a} names no flag any more: take it off the allowed list");
    }
}

/// The scanner finds what it should and nothing else.
#[test]
fn the_scan_reads_literals_and_skips_comments_and_tests() {
    let src = r####"
/// Doc comment with `--flag`.
// A comment: "--not-a-literal"
/* block /* nested "--no" */ still "--no" */
fn f<'a>(x: &'a str) -> char {
    let _ = "plain -- text, a-b, --5 and x--";
    let _ = b"--byte";
    let _ = r#"--raw "quoted" "#;
    let _ = "escaped \" then --escaped";
    let _ = format!("{{ use --brace }}");
    if x == "}" { '"' } else { '\'' }
}
#[cfg(test)]
mod tests {
    fn g() { let _ = "--in-a-test"; if true { "}" } else { "{" }; }
}
fn h() -> &'static str { "multi
  line --after" }
"####;
    let found = flag_like_strings(src);
    let lines: Vec<(usize, &str)> = found.iter().map(|(l, t)| (*l, t.as_str())).collect();
    assert_eq!(
        lines,
        [
            (7, "--byte"),
            (8, "--raw \"quoted\" "),
            (9, "escaped \\\" then --escaped"),
            (10, "{{ use --brace }}"),
            (17, "multi\n  line --after"),
        ]
    );
}
