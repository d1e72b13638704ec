//! LaTeX rendering with booktabs tables. `--format latex` writes a complete
//! article that compiles as is; the report bundle writes `table.tex`, a
//! fragment of tables that a manuscript includes with `\input{table}`
//! (its preamble needs `\usepackage{booktabs}`), and
//! `table-standalone.tex`, a small document that inputs the fragment.

use super::doc::{Align, Block, CAUTION, Doc, Exporter, Stamp, Table};

/// Renders documents as a LaTeX article.
pub struct Latex;

/// Letters beyond ASCII that pdfLaTeX sets from UTF-8 input with T1
/// fonts: the Latin-1 and Latin Extended-A letters (é, ß, ł, ő, ...), less
/// the few the T1 encoding lacks (found by compiling each with pdflatex).
fn settable(c: char) -> bool {
    let u = c as u32;
    (0xC0..=0x17F).contains(&u)
        && c != '×'
        && c != '÷'
        && !matches!(
            u,
            0x126 | 0x127 | 0x138 | 0x13F | 0x140 | 0x149 | 0x166 | 0x167 | 0x17F
        )
}

/// Escapes text for LaTeX, the one place that does: the characters special
/// to LaTeX become commands, Latin letters with accents pass through (the
/// documents load UTF-8 input and T1 fonts), a few symbols become their
/// commands, line breaks and tabs become spaces, and any other character
/// that pdfLaTeX cannot set (CJK, emoji, control characters) is written as
/// its code point in typewriter type, `\texttt{[U+4F53]}`, so that a name
/// stays recognisable and the document still compiles.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut prev = '\0';
    for c in s.chars() {
        match c {
            // A hyphen after a hyphen stays a hyphen (`--flag`), not a dash.
            '-' if prev == '-' => out.push_str("{}-"),
            '\\' => out.push_str("\\textbackslash{}"),
            '&' | '%' | '$' | '#' | '_' | '{' | '}' => {
                out.push('\\');
                out.push(c);
            }
            '~' => out.push_str("\\textasciitilde{}"),
            '^' => out.push_str("\\textasciicircum{}"),
            '<' => out.push_str("\\textless{}"),
            '>' => out.push_str("\\textgreater{}"),
            '|' => out.push_str("\\textbar{}"),
            '×' => out.push_str("$\\times$"),
            '²' => out.push_str("\\textsuperscript{2}"),
            '±' => out.push_str("$\\pm$"),
            '≤' => out.push_str("$\\leq$"),
            '≥' => out.push_str("$\\geq$"),
            'α' => out.push_str("$\\alpha$"),
            '·' => out.push_str("$\\cdot$"),
            '…' => out.push_str("\\dots{}"),
            '–' | '−' => out.push_str("--"),
            '—' => out.push_str("---"),
            '‘' | '’' => out.push('\''),
            '“' => out.push_str("``"),
            '”' => out.push_str("''"),
            '\n' | '\r' | '\t' => out.push(' '),
            c if c.is_ascii() && !c.is_ascii_control() => out.push(c),
            c if settable(c) => out.push(c),
            c => out.push_str(&format!("\\texttt{{[U+{:04X}]}}", c as u32)),
        }
        prev = c;
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

/// The stamp as LaTeX comment lines.
fn stamp_comments(stamp: Option<&Stamp>) -> String {
    stamp
        .iter()
        .flat_map(|s| s.lines())
        .map(|l| format!("% {}\n", l.replace(['\n', '\r'], " ")))
        .collect()
}

/// A fragment for `\input`: the stamp and the caution as comments, then
/// each table; no preamble and no document environment.
pub fn fragment(tables: &[Table], stamp: Option<&Stamp>) -> String {
    let mut out = String::from(
        "% Tables written by causeway, for \\input{table} in a manuscript whose preamble loads booktabs\n\
         % (\\usepackage{booktabs}). table-standalone.tex compiles them on their own.\n",
    );
    out.push_str(&stamp_comments(stamp));
    out.push_str(&format!("% {CAUTION}\n"));
    for t in tables {
        out.push('\n');
        out.push_str(&table(t));
    }
    out
}

/// A document that compiles the fragment `name` (e.g. `table.tex`) alone.
pub fn standalone(name: &str) -> String {
    format!(
        "% Compiles {name} on its own: pdflatex table-standalone.tex\n\
         \\documentclass{{article}}\n\\usepackage[utf8]{{inputenc}}\n\\usepackage[T1]{{fontenc}}\n\\usepackage{{booktabs}}\n\
         \\usepackage[margin=2cm,landscape]{{geometry}}\n\\begin{{document}}\n\\input{{{}}}\n\\end{{document}}\n",
        name.trim_end_matches(".tex")
    )
}

impl Exporter for Latex {
    fn render(&self, doc: &Doc) -> String {
        let mut out = String::from(
            "\\documentclass{article}\n\\usepackage[utf8]{inputenc}\n\\usepackage[T1]{fontenc}\n\\usepackage{booktabs}\n\\usepackage[margin=2cm,landscape]{geometry}\n\\begin{document}\n",
        );
        out.push_str(&format!("\\section*{{{}}}\n", esc(&doc.title)));
        for b in &doc.blocks {
            match b {
                Block::Heading(h) => out.push_str(&format!("\\subsection*{{{}}}\n", esc(h))),
                Block::Subheading(h) => out.push_str(&format!("\\subsubsection*{{{}}}\n", esc(h))),
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
                Block::Data(_) => {}
            }
        }
        out.push_str(&format!("\\subsection*{{Cautions}}\n{}\n\n", esc(CAUTION)));
        if let Some(s) = &doc.stamp {
            out.push_str("\\begin{flushleft}\\footnotesize\n");
            for l in s.lines() {
                out.push_str(&format!("{}\\\\\n", esc(&l)));
            }
            out.push_str("\\end{flushleft}\n");
            out.push_str(&stamp_comments(Some(s)));
        }
        out.push_str("\\end{document}\n");
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn specials_are_escaped() {
        assert_eq!(esc("a_b & 95% {x} #1 $2"), "a\\_b \\& 95\\% \\{x\\} \\#1 \\$2");
        assert_eq!(
            esc("x^2 ~ y\\z"),
            "x\\textasciicircum{}2 \\textasciitilde{} y\\textbackslash{}z"
        );
        assert_eq!(
            esc("a|b <c> R²"),
            "a\\textbar{}b \\textless{}c\\textgreater{} R\\textsuperscript{2}"
        );
        assert_eq!(esc("café ≥ 1 → 2"), "café $\\geq$ 1 \\texttt{[U+2192]} 2");
        assert_eq!(
            esc("体😀\u{1}Ħß\nx"),
            "\\texttt{[U+4F53]}\\texttt{[U+1F600]}\\texttt{[U+0001]}\\texttt{[U+0126]}ß x"
        );
        assert_eq!(esc("use --exposed"), "use -{}-exposed");
    }

    #[test]
    fn the_fragment_has_no_preamble_and_the_wrapper_inputs_it() {
        let mut t = Table::new("Effect of x_1 on y", &["method", "95% interval"]);
        t.row(vec!["ipw".into(), "0.1 to 0.2".into()]);
        let f = fragment(&[t], None);
        assert!(!f.contains("\\documentclass") && !f.contains("\\begin{document}"));
        assert!(f.contains("\\toprule") && f.contains("\\midrule") && f.contains("\\bottomrule"));
        assert!(f.contains("Effect of x\\_1 on y") && f.contains("95\\% interval"));
        let s = standalone("table.tex");
        assert!(s.contains("\\documentclass{article}") && s.contains("\\input{table}"));
        assert!(s.contains("\\usepackage{booktabs}"));
    }
}
