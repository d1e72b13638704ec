//! LaTeX rendering: a complete article that compiles as is, with booktabs
//! tables. Used for `--format latex` and the bundle's table.tex.

use super::doc::{Align, Block, CAUTION, Doc, Exporter, Table};

/// Renders documents as a LaTeX article.
pub struct Latex;

/// Escapes LaTeX special characters.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '\\' => out.push_str("\\textbackslash{}"),
            '&' | '%' | '$' | '#' | '_' | '{' | '}' => {
                out.push('\\');
                out.push(c);
            }
            '~' => out.push_str("\\textasciitilde{}"),
            '^' => out.push_str("\\textasciicircum{}"),
            '<' => out.push_str("\\textless{}"),
            '>' => out.push_str("\\textgreater{}"),
            '×' => out.push_str("$\\times$"),
            '²' => out.push_str("\\textsuperscript{2}"),
            '–' | '−' => out.push_str("--"),
            c if c.is_ascii() => out.push(c),
            _ => out.push('?'),
        }
    }
    out
}

/// A booktabs table environment.
pub fn table(t: &Table) -> String {
    let spec: String = t
        .align
        .iter()
        .map(|a| if *a == Align::Right { 'r' } else { 'l' })
        .collect();
    let row = |cells: &[String]| cells.iter().map(|c| esc(c)).collect::<Vec<_>>().join(" & ") + " \\\\\n";
    let mut out = String::from("\\begin{table}[ht]\n\\centering\n\\small\n");
    if !t.caption.is_empty() {
        out.push_str(&format!("\\caption{{{}}}\n", esc(&t.caption)));
    }
    out.push_str(&format!("\\begin{{tabular}}{{{spec}}}\n\\toprule\n"));
    out.push_str(&row(&t.headers));
    out.push_str("\\midrule\n");
    for r in &t.rows {
        out.push_str(&row(r));
    }
    out.push_str("\\bottomrule\n\\end{tabular}\n");
    for n in &t.notes {
        out.push_str(&format!("\n\\par\\smallskip\\footnotesize {}\n", esc(n)));
    }
    out.push_str("\\end{table}\n");
    out
}

impl Exporter for Latex {
    fn render(&self, doc: &Doc) -> String {
        let mut out = String::from(
            "\\documentclass{article}\n\\usepackage[T1]{fontenc}\n\\usepackage{booktabs}\n\\usepackage[margin=2cm,landscape]{geometry}\n\\begin{document}\n",
        );
        out.push_str(&format!("\\section*{{{}}}\n", esc(&doc.title)));
        for b in &doc.blocks {
            match b {
                Block::Heading(h) => out.push_str(&format!("\\subsection*{{{}}}\n", esc(h))),
                Block::Para(p) => out.push_str(&format!("{}\n\n", esc(p))),
                Block::List(items) => {
                    out.push_str("\\begin{itemize}\n");
                    for i in items {
                        out.push_str(&format!("\\item {}\n", esc(i)));
                    }
                    out.push_str("\\end{itemize}\n");
                }
                Block::Table(t) => out.push_str(&table(t)),
                Block::Figure { path, caption } => {
                    out.push_str(&format!("% figure: {} ({})\n", esc(path), esc(caption)))
                }
                Block::Warning(w) => out.push_str(&format!("\\textbf{{Warning.}} {}\n\n", esc(w))),
            }
        }
        out.push_str(&format!("\\subsection*{{Cautions}}\n{}\n\n", esc(CAUTION)));
        if let Some(s) = &doc.stamp {
            out.push_str("\\begin{flushleft}\\footnotesize\n");
            for l in s.lines() {
                out.push_str(&format!("{}\\\\\n", esc(&l)));
            }
            out.push_str("\\end{flushleft}\n");
            for l in s.lines() {
                out.push_str(&format!("% {}\n", l.replace('\n', " ")));
            }
        }
        out.push_str("\\end{document}\n");
        out
    }
}
