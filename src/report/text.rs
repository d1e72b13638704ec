//! Plain-text rendering for the terminal: wrapped paragraphs, aligned
//! tables, warnings marked with `!`, and the stamp as a footer.

use super::doc::{Align, Block, CAUTION, Doc, Exporter, Table};

/// Renders documents as plain text.
pub struct Text;

const WIDTH: usize = 92;

/// Wraps `s` at `width` columns, each line prefixed by `indent`.
pub fn wrap(s: &str, indent: &str, width: usize) -> String {
    let mut out = String::new();
    let mut line = String::new();
    for word in s.split_whitespace() {
        if !line.is_empty() && indent.len() + line.chars().count() + 1 + word.chars().count() > width {
            out.push_str(indent);
            out.push_str(&line);
            out.push('\n');
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        out.push_str(indent);
        out.push_str(&line);
        out.push('\n');
    }
    out
}

/// A table with columns padded to their widest cell.
pub fn table(t: &Table, indent: &str) -> String {
    let n = t.headers.len();
    let mut w: Vec<usize> = t.headers.iter().map(|h| h.chars().count()).collect();
    for r in &t.rows {
        for (i, c) in r.iter().enumerate().take(n) {
            w[i] = w[i].max(c.chars().count());
        }
    }
    let cell = |i: usize, s: &str| {
        let pad = w[i].saturating_sub(s.chars().count());
        match t.align[i] {
            Align::Left => format!("{s}{}", " ".repeat(pad)),
            Align::Right => format!("{}{s}", " ".repeat(pad)),
        }
    };
    let line = |cells: &[String]| {
        let parts: Vec<String> = cells.iter().enumerate().map(|(i, c)| cell(i, c)).collect();
        format!("{indent}{}\n", parts.join("  ").trim_end())
    };
    let mut out = String::new();
    if !t.caption.is_empty() {
        out.push_str(&format!("{indent}{}\n", t.caption));
    }
    out.push_str(&line(&t.headers));
    let total: usize = w.iter().sum::<usize>() + 2 * n.saturating_sub(1);
    out.push_str(&format!("{indent}{}\n", "-".repeat(total)));
    for r in &t.rows {
        out.push_str(&line(r));
    }
    for note in &t.notes {
        out.push_str(&wrap(note, &format!("{indent}  "), WIDTH));
    }
    out
}

impl Exporter for Text {
    fn render(&self, doc: &Doc) -> String {
        let mut out = format!(
            "{}\n{}\n",
            doc.title,
            "=".repeat(doc.title.chars().count().min(WIDTH))
        );
        for b in &doc.blocks {
            match b {
                Block::Heading(h) => out.push_str(&format!("\n{}\n", h.to_uppercase())),
                Block::Subheading(h) => {
                    out.push_str(&format!("\n  {h}\n  {}\n", "-".repeat(h.chars().count())))
                }
                Block::Para(p) => out.push_str(&wrap(p, "  ", WIDTH)),
                Block::List(items) => {
                    for it in items {
                        let w = wrap(it, "    ", WIDTH);
                        out.push_str(&format!("  - {}", w.trim_start()));
                    }
                }
                Block::Table(t) => out.push_str(&table(t, "  ")),
                Block::Figure { path, caption } => out.push_str(&format!("  [figure {path}: {caption}]\n")),
                Block::Warning(w) => out.push_str(&wrap(&format!("! {w}"), "  ", WIDTH)),
                Block::Data(_) => {}
            }
        }
        out.push_str("\nCAUTION\n");
        out.push_str(&wrap(CAUTION, "  ", WIDTH));
        if let Some(s) = &doc.stamp {
            out.push('\n');
            for l in s.lines() {
                out.push_str(&format!("  {l}\n"));
            }
        }
        out
    }
}
