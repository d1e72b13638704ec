//! CSV rendering: the document's tables, one after another, with the stamp
//! as leading `#` comment lines and a blank line between tables.

use super::doc::{Block, Doc, Exporter};

/// Renders the tables of documents as CSV.
pub struct Csv;

fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) || s.starts_with(' ') || s.ends_with(' ') {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

impl Exporter for Csv {
    fn render(&self, doc: &Doc) -> String {
        let mut out = String::new();
        if let Some(s) = &doc.stamp {
            for l in s.lines() {
                out.push_str(&format!("# {l}\n"));
            }
        }
        let mut first = true;
        for b in &doc.blocks {
            if let Block::Table(t) = b {
                if !first {
                    out.push('\n');
                }
                first = false;
                let line = |cells: &[String]| cells.iter().map(|c| field(c)).collect::<Vec<_>>().join(",");
                out.push_str(&line(&t.headers));
                out.push('\n');
                for r in &t.rows {
                    out.push_str(&line(r));
                    out.push('\n');
                }
            }
        }
        out
    }
}
