//! The graph-file parser.
//!
//! One statement per line; `#` starts a comment (outside quotes).
//!
//! ```text
//! age -> enrolled                 # an edge
//! enrolled -> standing -> pain    # a chain of edges
//! enrolled <-> pain               # a fresh latent common cause of both
//! site                            # a node with no edges
//! "blood pressure" -> stroke      # quoted names may hold any character
//! age -> pain (0.3)               # a coefficient for `simulate`
//! role -> pain (warehouse 2, driver 3.5)   # per-level coefficients
//! enrolled : binary intercept=-0.5         # node attributes for `simulate`
//! role : levels(office 0.5, warehouse 0.3, driver 0.2)
//! motivation : latent                      # unobserved: simulated, not output
//! ```

use super::{Coef, Graph, Node, NodeSpec};
use std::collections::{HashMap, HashSet};
use std::fmt;

/// A graph-file error with its place (`file:line:column`; line 0 when the
/// error concerns the whole file).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub struct ParseError {
    /// The file name as given by the user.
    pub file: String,
    /// 1-based line, 0 for the whole file.
    pub line: usize,
    /// 1-based column in characters.
    pub col: usize,
    /// What went wrong and what was expected.
    pub message: String,
}

impl fmt::Display for ParseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 {
            write!(f, "{}: {}", self.file, self.message)
        } else {
            write!(f, "{}:{}:{}: {}", self.file, self.line, self.col, self.message)
        }
    }
}

/// A problem worth reporting that does not stop the parse.
#[derive(Debug, Clone, PartialEq)]
pub struct Warning {
    /// 1-based line.
    pub line: usize,
    /// 1-based column.
    pub col: usize,
    /// The message, with the file name.
    pub message: String,
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

/// A parsed graph file.
#[derive(Debug, Clone)]
pub struct Parsed {
    /// The graph.
    pub graph: Graph,
    /// Duplicate edges and the like.
    pub warnings: Vec<Warning>,
}

/// Parses a graph file's bytes; `file` names it in messages.
pub fn parse_bytes(bytes: &[u8], file: &str) -> Result<Parsed, ParseError> {
    match std::str::from_utf8(bytes) {
        Ok(text) => parse(text, file),
        Err(e) => {
            let good = &bytes[..e.valid_up_to()];
            let line = good.iter().filter(|&&b| b == b'\n').count() + 1;
            let start = good.iter().rposition(|&b| b == b'\n').map_or(0, |p| p + 1);
            let col = String::from_utf8_lossy(&good[start..]).chars().count() + 1;
            Err(ParseError {
                file: file.to_string(),
                line,
                col,
                message: "this is not text (invalid UTF-8); a graph file is a plain-text edge list".into(),
            })
        }
    }
}

/// Parses graph-file text; `file` names it in messages.
pub fn parse(text: &str, file: &str) -> Result<Parsed, ParseError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut p = State {
        file,
        graph: Graph::new(),
        warnings: Vec::new(),
        edge_place: HashMap::new(),
        bidirected: HashSet::new(),
    };
    for (k, raw) in text.split('\n').enumerate() {
        let raw = raw.strip_suffix('\r').unwrap_or(raw);
        let chars: Vec<char> = raw.chars().collect();
        let mut line = Line {
            chars: &chars,
            pos: 0,
            number: k + 1,
        };
        p.statement(&mut line)?;
    }
    if p.graph.is_empty() {
        return Err(ParseError {
            file: file.to_string(),
            line: 0,
            col: 0,
            message: "the graph file declares no nodes (expected lines such as 'a -> b')".into(),
        });
    }
    if let Err(cycle) = p.graph.topological_order() {
        let (line, col) = p.edge_place[&(cycle[0], cycle[1])];
        let path: Vec<String> = cycle.iter().map(|&v| clip(p.graph.name(v))).collect();
        return Err(ParseError {
            file: file.to_string(),
            line,
            col,
            message: format!(
                "directed cycle: {} (a causal graph must be acyclic)",
                path.join(" -> ")
            ),
        });
    }
    Ok(Parsed {
        graph: p.graph,
        warnings: p.warnings,
    })
}

struct State<'a> {
    file: &'a str,
    graph: Graph,
    warnings: Vec<Warning>,
    edge_place: HashMap<(Node, Node), (usize, usize)>,
    bidirected: HashSet<(Node, Node)>,
}

struct Line<'a> {
    chars: &'a [char],
    pos: usize,
    number: usize,
}

impl Line<'_> {
    fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }
    fn col(&self) -> usize {
        self.pos + 1
    }
    fn skip_ws(&mut self) {
        while matches!(self.peek(), Some(c) if c.is_whitespace()) {
            self.pos += 1;
        }
    }
    /// At the end of the statement (end of line or a comment)?
    fn at_end(&mut self) -> bool {
        self.skip_ws();
        matches!(self.peek(), None | Some('#'))
    }
    fn eat(&mut self, s: &str) -> bool {
        let n = s.chars().count();
        if self.chars.len() >= self.pos + n
            && self.chars[self.pos..self.pos + n].iter().copied().eq(s.chars())
        {
            self.pos += n;
            true
        } else {
            false
        }
    }
    /// A bare word: letters, digits, `_` and `.`.
    fn word(&mut self) -> Option<String> {
        let start = self.pos;
        while matches!(self.peek(), Some(c) if is_name_char(c)) {
            self.pos += 1;
        }
        (self.pos > start).then(|| self.chars[start..self.pos].iter().collect())
    }
    /// A number such as `-0.5` or `1e-3`.
    fn number(&mut self) -> Option<f64> {
        let start = self.pos;
        while matches!(self.peek(), Some(c) if c.is_ascii_digit() || "+-.eE".contains(c)) {
            self.pos += 1;
        }
        let s: String = self.chars[start..self.pos].iter().collect();
        match s.parse::<f64>() {
            Ok(v) if v.is_finite() => Some(v),
            _ => {
                self.pos = start;
                None
            }
        }
    }
}

/// Longest name (in characters) quoted whole in a message.
const SHOWN_CHARS: usize = 60;

/// A name from the file as shown in a message: names longer than
/// [`SHOWN_CHARS`] characters are cut, with their length, so that a huge
/// token does not flood the terminal.
pub(crate) fn clip(name: &str) -> String {
    let n = name.chars().count();
    if n <= SHOWN_CHARS {
        return name.to_string();
    }
    let head: String = name.chars().take(SHOWN_CHARS).collect();
    format!("{head}... ({n} characters)")
}

fn is_name_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_' || c == '.'
}

impl State<'_> {
    fn err(&self, line: &Line, col: usize, message: impl Into<String>) -> ParseError {
        ParseError {
            file: self.file.to_string(),
            line: line.number,
            col,
            message: message.into(),
        }
    }

    fn warn(&mut self, line: &Line, col: usize, message: String) {
        self.warnings.push(Warning {
            line: line.number,
            col,
            message: format!("{}:{}:{}: {}", self.file, line.number, col, message),
        });
    }

    fn statement(&mut self, line: &mut Line) -> Result<(), ParseError> {
        if line.at_end() {
            return Ok(());
        }
        let first = self.node(line, "a node name")?;
        if line.at_end() {
            return Ok(());
        }
        if line.peek() == Some(':') {
            line.pos += 1;
            return self.attributes(line, first);
        }
        if line.peek() == Some('(') {
            return Err(self.err(
                line,
                line.col(),
                "a coefficient in parentheses must follow the target of an edge, as in 'a -> b (0.5)'",
            ));
        }
        let mut prev = first;
        while !line.at_end() {
            let arrow_col = line.col();
            let bidirected = if line.eat("<->") {
                true
            } else if line.eat("->") {
                false
            } else {
                let found = line.peek().map(String::from).unwrap_or_default();
                return Err(self.err(
                    line,
                    arrow_col,
                    format!(
                        "unexpected '{found}' after node '{}': expected '->', '<->', ':' or the end of the line",
                        clip(self.graph.name(prev))
                    ),
                ));
            };
            let arrow = if bidirected { "<->" } else { "->" };
            if line.at_end() {
                return Err(self.err(
                    line,
                    arrow_col,
                    format!("dangling arrow: expected a node name after '{arrow}'"),
                ));
            }
            let node_col = line.col();
            let next = self.node(line, &format!("a node name after '{arrow}'"))?;
            if next == prev {
                return Err(self.err(
                    line,
                    node_col,
                    format!(
                        "self-loop: '{}' {arrow} '{}' (a variable cannot cause itself)",
                        clip(self.graph.name(prev)),
                        clip(self.graph.name(next))
                    ),
                ));
            }
            line.skip_ws();
            let coef = if line.peek() == Some('(') {
                Some(self.coef(line)?)
            } else {
                None
            };
            if bidirected {
                let key = (prev.min(next), prev.max(next));
                if !self.bidirected.insert(key) {
                    let msg = format!(
                        "duplicate edge '{}' <-> '{}' (ignored)",
                        clip(self.graph.name(prev)),
                        clip(self.graph.name(next))
                    );
                    self.warn(line, arrow_col, msg);
                } else {
                    let u = self.graph.add_bidirected(prev, next);
                    for v in [prev, next] {
                        self.edge_place.insert((u, v), (line.number, arrow_col));
                        if let Some(c) = &coef {
                            self.graph.set_coef(u, v, c.clone());
                        }
                    }
                }
            } else {
                if !self.graph.add_edge(prev, next) {
                    let msg = format!(
                        "duplicate edge '{}' -> '{}' (ignored)",
                        clip(self.graph.name(prev)),
                        clip(self.graph.name(next))
                    );
                    self.warn(line, arrow_col, msg);
                } else {
                    self.edge_place.insert((prev, next), (line.number, arrow_col));
                }
                if let Some(c) = coef {
                    self.graph.set_coef(prev, next, c);
                }
            }
            prev = next;
        }
        Ok(())
    }

    /// A bare or double-quoted node name.
    fn node(&mut self, line: &mut Line, expected: &str) -> Result<Node, ParseError> {
        line.skip_ws();
        let col = line.col();
        if line.peek() == Some('"') {
            line.pos += 1;
            let mut name = String::new();
            loop {
                match line.peek() {
                    None => {
                        return Err(self.err(line, col, "unterminated quoted name: expected a closing '\"'"));
                    }
                    Some('"') => {
                        line.pos += 1;
                        break;
                    }
                    Some('\\') if matches!(line.chars.get(line.pos + 1), Some('"' | '\\')) => {
                        name.push(line.chars[line.pos + 1]);
                        line.pos += 2;
                    }
                    Some(c) => {
                        name.push(c);
                        line.pos += 1;
                    }
                }
            }
            if name.trim().is_empty() {
                return Err(self.err(
                    line,
                    col,
                    "empty quoted name: expected a node name between the quotes",
                ));
            }
            return Ok(self.graph.add_node(&name));
        }
        match line.word() {
            Some(w) => Ok(self.graph.add_node(&w)),
            None => {
                let found = match line.peek() {
                    Some(c) if c.is_control() => format!("control character U+{:04X}", c as u32),
                    Some(c) => format!("'{c}'"),
                    None => "the end of the line".into(),
                };
                Err(self.err(
                    line,
                    col,
                    format!("expected {expected} (letters, digits, '_' or '.', or a double-quoted name), found {found}"),
                ))
            }
        }
    }

    /// `(0.5)` or `(level 1.2, level 0.3)`.
    fn coef(&mut self, line: &mut Line) -> Result<Coef, ParseError> {
        let open = line.col();
        line.pos += 1;
        line.skip_ws();
        let start = line.pos;
        if let Some(v) = line.number() {
            let token_is_word = line.chars[start..line.pos].iter().all(|&c| is_name_char(c));
            line.skip_ws();
            if line.eat(")") {
                return Ok(Coef::Value(v));
            }
            // A number followed by more is a level named by a number, as in
            // '(2 0.5, 3 0.7)' for a parent with levels 1, 2 and 3.
            if !token_is_word || line.at_end() {
                return Err(self.err(line, line.col(), "expected ')' after the coefficient"));
            }
            line.pos = start;
        }
        let pairs = self.level_list(line, open)?;
        Ok(Coef::Levels(pairs))
    }

    /// `name number, name number )` — the caller has eaten the '('.
    fn level_list(&mut self, line: &mut Line, open: usize) -> Result<Vec<(String, f64)>, ParseError> {
        let mut pairs = Vec::new();
        loop {
            line.skip_ws();
            let col = line.col();
            let Some(level) = line.word() else {
                return Err(self.err(
                    line,
                    col,
                    "expected a number, or 'level number' pairs separated by commas, inside the parentheses",
                ));
            };
            // 'a-1' or '0-8' is not read as level 'a' with -1: a space is needed.
            if matches!(line.peek(), Some(c) if c.is_ascii_digit() || "+-.".contains(c)) {
                return Err(self.err(
                    line,
                    line.col(),
                    format!("expected a space, then a number, after level '{}'", clip(&level)),
                ));
            }
            line.skip_ws();
            let Some(v) = line.number() else {
                return Err(self.err(
                    line,
                    line.col(),
                    format!("expected a number after level '{}'", clip(&level)),
                ));
            };
            pairs.push((level, v));
            line.skip_ws();
            if line.eat(",") {
                continue;
            }
            if line.eat(")") {
                return Ok(pairs);
            }
            return Err(self.err(line, open, "unclosed '(': expected ',' or ')'"));
        }
    }

    /// `: binary intercept=-1 sd=2 round=0 min=0 max=90 levels(a 0.5, b 0.5) latent`.
    fn attributes(&mut self, line: &mut Line, node: Node) -> Result<(), ParseError> {
        let mut spec = self.graph.spec(node).clone();
        let mut latent = false;
        while !line.at_end() {
            let col = line.col();
            let Some(key) = line.word() else {
                return Err(self.err(
                    line,
                    col,
                    "expected an attribute: binary, latent, intercept=, sd=, round=, min=, max= or levels(...)",
                ));
            };
            match key.as_str() {
                "binary" => spec.binary = true,
                "latent" => latent = true,
                "levels" => {
                    line.skip_ws();
                    let open = line.col();
                    if !line.eat("(") {
                        return Err(self.err(line, open, "expected '(' after 'levels'"));
                    }
                    spec.levels = self.level_list(line, open)?;
                }
                "intercept" | "sd" | "round" | "min" | "max" => {
                    line.skip_ws();
                    if !line.eat("=") {
                        return Err(self.err(
                            line,
                            line.col(),
                            format!("expected '=' after '{}'", clip(&key)),
                        ));
                    }
                    line.skip_ws();
                    let vcol = line.col();
                    let Some(v) = line.number() else {
                        return Err(self.err(line, vcol, format!("expected a number after '{key}='")));
                    };
                    match key.as_str() {
                        "intercept" => spec.intercept = Some(v),
                        "sd" if v >= 0.0 => spec.sd = Some(v),
                        "round" if v >= 0.0 && v.fract() == 0.0 && v <= 12.0 => spec.round = Some(v as u32),
                        "min" => spec.min = Some(v),
                        "max" => spec.max = Some(v),
                        _ => return Err(self.err(line, vcol, format!("'{key}' out of range"))),
                    }
                }
                other => {
                    return Err(self.err(
                        line,
                        col,
                        format!("unknown attribute '{}': expected binary, latent, intercept=, sd=, round=, min=, max= or levels(...)", clip(other)),
                    ));
                }
            }
        }
        *self.graph.spec_mut(node) = NodeSpec { ..spec };
        if latent {
            self.graph.set_latent(node, true);
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(text: &str) -> ParseError {
        parse(text, "g.txt").unwrap_err()
    }

    #[test]
    fn contract_example_parses() {
        let p = parse(
            "# comment\nage -> enrolled\nage -> pain_days\nenrolled -> standing_hours -> pain_days # chain\nenrolled <-> pain_days\nsite\n\"blood pressure\" -> stroke\n",
            "g.txt",
        )
        .unwrap();
        let g = &p.graph;
        assert_eq!(g.len(), 8); // 7 named + 1 latent
        let u = g.latent_nodes();
        assert_eq!(u.len(), 1);
        assert_eq!(g.children(u[0]).len(), 2);
        assert!(g.node("blood pressure").is_some());
        assert!(
            g.node("site")
                .is_some_and(|s| g.parents(s).is_empty() && g.children(s).is_empty())
        );
        assert!(p.warnings.is_empty());
    }

    #[test]
    fn errors_have_places() {
        let e = err("a -> b\nb ->\n");
        assert_eq!((e.line, e.col), (2, 3));
        assert!(e.message.contains("dangling arrow"));
        let e = err("a => b");
        assert_eq!((e.line, e.col), (1, 3));
        assert!(e.message.contains("expected '->'"));
        let e = err("x -> \"open");
        assert_eq!((e.line, e.col), (1, 6));
        assert!(e.message.contains("unterminated"));
        let e = err("a -> a");
        assert!(e.message.contains("self-loop"));
        let e = err("a -> b\nb -> c\nc -> a\n");
        assert!(
            e.message.contains("directed cycle: a -> b -> c -> a"),
            "{}",
            e.message
        );
        assert_eq!(e.to_string().split(':').nth(1), Some("1"));
        let e = err("# only a comment\n\n");
        assert!(e.message.contains("no nodes"));
        let e = parse_bytes(b"a -> b\n\xff\xfe", "g.txt").unwrap_err();
        assert_eq!((e.line, e.col), (2, 1));
    }

    #[test]
    fn duplicate_edge_warns() {
        let p = parse("a -> b\na -> b\n", "g.txt").unwrap();
        assert_eq!(p.warnings.len(), 1);
        assert!(p.warnings[0].message.starts_with("g.txt:2:3: duplicate edge"));
    }

    #[test]
    fn numeric_level_names_and_spaces_in_level_lists() {
        // Found by the graph_parse fuzz target: '(0-8)' was read as level
        // '0' with coefficient -8, and printed as '(0 -8)', which did not parse.
        let e = parse("z -> x (0-8)\n", "g.txt").unwrap_err();
        assert_eq!((e.line, e.col), (1, 10), "{e}");
        assert!(
            e.message
                .contains("expected a space, then a number, after level '0'"),
            "{e}"
        );
        let p = parse("edu -> y (2 0.5, 3 -0.7)\nz -> y (1e5)\n", "g.txt").unwrap();
        let g = &p.graph;
        let (edu, y, z) = (g.node("edu").unwrap(), g.node("y").unwrap(), g.node("z").unwrap());
        assert_eq!(
            g.coef(edu, y),
            Some(&Coef::Levels(vec![("2".into(), 0.5), ("3".into(), -0.7)]))
        );
        assert_eq!(g.coef(z, y), Some(&Coef::Value(1e5)));
        let again = parse(&g.to_text(), "printed").unwrap().graph;
        assert_eq!(again.to_text(), g.to_text());
        assert!(parse("z -> y (-1 2)\n", "g.txt").is_err());
        assert!(parse("z -> y (2\n", "g.txt").is_err());
    }

    #[test]
    fn coefficients_and_attributes() {
        let p = parse(
            "role : levels(office 0.5, warehouse 0.3, driver 0.2)\nrole -> y (warehouse 2, driver -1.5)\nx -> y (0.25) -> z (-3e-1)\nx : binary intercept=-0.5\n",
            "g.txt",
        )
        .unwrap();
        let g = &p.graph;
        let (x, y, z, role) = (
            g.node("x").unwrap(),
            g.node("y").unwrap(),
            g.node("z").unwrap(),
            g.node("role").unwrap(),
        );
        assert_eq!(g.coef(x, y), Some(&Coef::Value(0.25)));
        assert_eq!(g.coef(y, z), Some(&Coef::Value(-0.3)));
        assert_eq!(g.spec(role).levels.len(), 3);
        assert!(matches!(g.coef(role, y), Some(Coef::Levels(l)) if l.len() == 2));
        assert!(g.spec(x).binary);
        assert_eq!(g.spec(x).intercept, Some(-0.5));
        assert!(!g.is_latent(x));
        let p = parse("m -> y (1)\nm : latent sd=2\n", "g.txt").unwrap();
        let m = p.graph.node("m").unwrap();
        assert!(p.graph.is_latent(m));
        assert_eq!(p.graph.spec(m).sd, Some(2.0));
    }
}
