//! Markdown rendering (pipe tables), used for `--format markdown` and for
//! the report bundle's report.md.

use super::doc::{Align, Block, CAUTION, Doc, Exporter, Table};

/// Renders documents as Markdown.
pub struct Markdown;

fn cell(s: &str) -> String {
    s.replace('|', "\\|").replace(['\n', '\r'], " ")
}

/// Text inside the HTML of the stamp lines.
fn html(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;")
}

/// A link target: in angle brackets when it holds a space or a
/// parenthesis (a figure named after a graph file `my graph (2).txt`).
fn target(path: &str) -> String {
    if path.contains([' ', '(', ')', '<', '>']) {
        format!("<{}>", path.replace('<', "%3C").replace('>', "%3E"))
    } else {
        path.to_string()
    }
}

/// A pipe table.
pub fn table(t: &Table) -> String {
    let mut out = String::new();
    if !t.caption.is_empty() {
        out.push_str(&format!("**{}**\n\n", cell(&t.caption)));
    }
    let heads: Vec<String> = t.headers.iter().map(|h| cell(h)).collect();
    out.push_str(&format!("| {} |\n", heads.join(" | ")));
    let rule: Vec<&str> = t
        .align
        .iter()
        .map(|a| if *a == Align::Right { "---:" } else { ":---" })
        .collect();
    out.push_str(&format!("| {} |\n", rule.join(" | ")));
    for r in &t.rows {
        let cs: Vec<String> = r.iter().map(|c| cell(c)).collect();
        out.push_str(&format!("| {} |\n", cs.join(" | ")));
    }
    for n in &t.notes {
        out.push_str(&format!("\n{n}\n"));
    }
    out
}

impl Exporter for Markdown {
    fn render(&self, doc: &Doc) -> String {
        let mut out = format!("# {}\n", doc.title);
        for b in doc.blocks.iter().filter(|b| !matches!(b, Block::Data(_))) {
            out.push('\n');
            match b {
                Block::Heading(h) => out.push_str(&format!("## {h}\n")),
                Block::Subheading(h) => out.push_str(&format!("### {h}\n")),
                Block::Para(p) => out.push_str(&format!("{p}\n")),
                Block::List(items) => items.iter().for_each(|i| out.push_str(&format!("- {i}\n"))),
                Block::Table(t) => out.push_str(&table(t)),
                Block::Figure { path, caption } => {
                    out.push_str(&format!("![{caption}]({})\n\n*{caption}*\n", target(path)))
                }
                Block::Warning(w) => out.push_str(&format!("> **Warning.** {w}\n")),
                Block::Data(_) => {}
            }
        }
        out.push_str(&format!("\n## Cautions\n\n{CAUTION}\n"));
        if let Some(s) = &doc.stamp {
            out.push_str("\n---\n\n");
            for l in s.lines() {
                out.push_str(&format!("<sub>{}</sub><br>\n", html(&cell(&l))));
            }
        }
        out
    }
}
