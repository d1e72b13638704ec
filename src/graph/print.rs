//! Writes a graph back in the graph-file syntax, so that parsing the output
//! gives the same graph.

use super::{Coef, Graph, Node};
use std::fmt::Write;

/// A node name, quoted when it is not a bare word.
pub fn quote(name: &str) -> String {
    let bare = !name.is_empty() && name.chars().all(|c| c.is_alphanumeric() || c == '_' || c == '.');
    if bare {
        name.to_string()
    } else {
        format!("\"{}\"", name.replace('\\', "\\\\").replace('"', "\\\""))
    }
}

/// Why `name` cannot be written in a graph file, or None when it can (with
/// [`quote`]): a statement is one line, so a name holding a line break
/// cannot be written, and a quoted name must not be blank.
pub fn unwritable(name: &str) -> Option<&'static str> {
    if name.contains(['\n', '\r']) {
        Some("it holds a line break, and a graph file writes one statement per line")
    } else if name.trim().is_empty() {
        Some("it is blank, and a node name must have a visible character")
    } else {
        None
    }
}

/// How [`set_text`] writes each name.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Names {
    /// As the graph file writes it, quoted when not a bare word.
    Quoted,
    /// As it is.
    Plain,
}

/// The one way to print a set of names: `{a, b}`, in the order given; the
/// empty set as `empty` (for example `{}` or `nothing`).
pub fn set_text(set: &[String], names: Names, empty: &str) -> String {
    if set.is_empty() {
        return empty.to_string();
    }
    let shown: Vec<String> = match names {
        Names::Quoted => set.iter().map(|s| quote(s)).collect(),
        Names::Plain => set.to_vec(),
    };
    format!("{{{}}}", shown.join(", "))
}

fn coef_text(c: &Coef) -> String {
    match c {
        Coef::Value(v) => format!(" ({v})"),
        Coef::Levels(l) => {
            let items: Vec<String> = l.iter().map(|(k, v)| format!("{} {v}", quote(k))).collect();
            format!(" ({})", items.join(", "))
        }
    }
}

impl Graph {
    /// A path with its arrows, `x <- a -> y`; a latent node made by `a <-> b`
    /// between its two nodes is written `a <-> b`.
    pub fn path_text(&self, path: &[String]) -> String {
        let g = self;
        let nodes: Vec<Option<usize>> = path.iter().map(|n| g.node(n)).collect();
        let mut out = quote(&path[0]);
        let mut i = 1;
        while i < path.len() {
            let (a, b) = (nodes[i - 1], nodes[i]);
            let pair = b.and_then(|b| g.bidirected_pair(b));
            let next = nodes.get(i + 1).copied().flatten();
            if let (Some((p, q)), Some(a), Some(c)) = (pair, a, next)
                && ((p, q) == (a, c) || (q, p) == (a, c))
            {
                let _ = write!(out, " <-> {}", quote(&path[i + 1]));
                i += 2;
                continue;
            }
            let arrow = match (a, b) {
                (Some(a), Some(b)) if g.has_edge(b, a) => "<-",
                _ => "->",
            };
            let _ = write!(out, " {arrow} {}", quote(&path[i]));
            i += 1;
        }
        out
    }

    /// The graph as graph-file text: attributes and lone nodes in declaration
    /// order, then edges sorted by name, so equal graphs print the same.
    /// Latent nodes made by `a <-> b` are written back as `a <-> b`.
    pub fn to_text(&self) -> String {
        let mut out = String::new();
        let generated = |v: Node| self.bidirected_pair(v).is_some();
        for v in 0..self.len() {
            if generated(v) {
                continue;
            }
            let s = self.spec(v);
            let mut attrs = Vec::new();
            if s.binary {
                attrs.push("binary".to_string());
            }
            for (key, val) in [
                ("intercept", s.intercept),
                ("sd", s.sd),
                ("min", s.min),
                ("max", s.max),
            ] {
                if let Some(x) = val {
                    attrs.push(format!("{key}={x}"));
                }
            }
            if let Some(r) = s.round {
                attrs.push(format!("round={r}"));
            }
            if !s.levels.is_empty() {
                let items: Vec<String> = s
                    .levels
                    .iter()
                    .map(|(k, p)| format!("{} {p}", quote(k)))
                    .collect();
                attrs.push(format!("levels({})", items.join(", ")));
            }
            if !attrs.is_empty() {
                let _ = writeln!(out, "{} : {}", quote(self.name(v)), attrs.join(" "));
            } else if self.parents(v).is_empty() && self.children(v).is_empty() {
                let _ = writeln!(out, "{}", quote(self.name(v)));
            }
        }
        let mut edges = self.edges();
        edges.sort_by(|x, y| (self.name(x.0), self.name(x.1)).cmp(&(self.name(y.0), self.name(y.1))));
        for (a, b) in edges {
            if let Some((p, q)) = self.bidirected_pair(a) {
                if b == p {
                    let c = self.coef(a, b).map(coef_text).unwrap_or_default();
                    let _ = writeln!(out, "{} <-> {}{c}", quote(self.name(p)), quote(self.name(q)));
                }
                continue;
            }
            let c = self.coef(a, b).map(coef_text).unwrap_or_default();
            let _ = writeln!(out, "{} -> {}{c}", quote(self.name(a)), quote(self.name(b)));
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_set_prints_in_braces_with_the_empty_wording_given() {
        let set = vec!["age".to_string(), "blood pressure".to_string()];
        assert_eq!(set_text(&set, Names::Plain, "{}"), "{age, blood pressure}");
        assert_eq!(set_text(&set, Names::Quoted, "{}"), "{age, \"blood pressure\"}");
        assert_eq!(set_text(&[], Names::Quoted, "nothing"), "nothing");
        assert_eq!(set_text(&[], Names::Plain, "{}"), "{}");
    }
}
