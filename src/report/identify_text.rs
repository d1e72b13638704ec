//! The `identify` result in plain words: the verdict, the backdoor paths to
//! block, the recommended adjustment set and why, every minimal set, the
//! front-door set and the conditions it meets, and a check of the analyst's
//! own set. Only lays out an [`Identification`]; the graph is used to draw
//! each path's arrows.

use super::doc::{CAUTION, shown_of};
use crate::graph::{self, Graph, Names, quote};
use crate::identify::{Identification, Strategy};
use std::fmt::Write;

/// A node name as written in a graph file (quoted when needed).
fn show(name: &str) -> String {
    quote(name)
}

/// Text width of the report.
const WIDTH: usize = 88;

/// Writes `text` as a paragraph wrapped at [`WIDTH`] columns: the first line
/// starts with `first` (and a space, unless it ends with one), the others
/// with `rest`.
fn para(out: &mut String, first: &str, rest: &str, text: &str) {
    let mut line = first.to_string();
    let mut empty = first.is_empty() || first.ends_with(' ');
    for word in text.split_whitespace() {
        if !empty && line.chars().count() + 1 + word.chars().count() > WIDTH {
            let _ = writeln!(out, "{line}");
            line = rest.to_string();
            empty = rest.is_empty() || rest.ends_with(' ');
        }
        if !empty {
            line.push(' ');
        }
        line.push_str(word);
        empty = false;
    }
    let _ = writeln!(out, "{line}");
}

/// A set in the identify report: [`graph::set_text`] with quoted names and
/// the empty set as `nothing (the empty set)`.
fn set_text(set: &[String]) -> String {
    graph::set_text(set, Names::Quoted, "nothing (the empty set)")
}

fn paths_block(out: &mut String, g: &Graph, paths: &[Vec<String>]) {
    for p in paths {
        let _ = writeln!(out, "    {}", g.path_text(p));
    }
}

fn names_line(g: &Graph, names: &[String]) -> String {
    let mut plain = Vec::new();
    let mut pairs = Vec::new();
    for n in names {
        match g.node(n).and_then(|v| g.bidirected_pair(v)) {
            Some((a, b)) => pairs.push(format!("{} <-> {}", show(g.name(a)), show(g.name(b)))),
            None => plain.push(show(n)),
        }
    }
    if !pairs.is_empty() {
        let what = if pairs.len() == 1 {
            "a common cause"
        } else {
            "common causes"
        };
        plain.push(format!("{what} written {}", pairs.join(", ")));
    }
    plain.join(", ")
}

/// Renders the identification report as plain text.
pub fn identify_text(id: &Identification, g: &Graph) -> String {
    let mut out = String::new();
    let (x, y) = (show(&id.exposure), show(&id.outcome));
    let _ = writeln!(out, "Identifying the effect of {x} on {y}");
    para(
        &mut out,
        "  observed:   ",
        "              ",
        &names_line(g, &id.observed),
    );
    if !id.latent.is_empty() {
        para(
            &mut out,
            "  unobserved:",
            "              ",
            &names_line(g, &id.latent),
        );
    }
    let _ = writeln!(out);
    verdict(&mut out, id);
    backdoor(&mut out, id, g, &x);
    frontdoor(&mut out, id, &x, &y);
    given(&mut out, id, g, &x);
    para(&mut out, "", "", &format!("Caution: {CAUTION}"));
    out
}

fn verdict(out: &mut String, id: &Identification) {
    let text = match id.strategy {
        Strategy::Backdoor => {
            "identified by adjustment (some set of observed variables meets the backdoor criterion)."
        }
        Strategy::Frontdoor => {
            "identified through the front-door criterion (no set of observed variables meets the backdoor criterion)."
        }
        Strategy::None => "not identified by the backdoor or the front-door criterion under this graph.",
    };
    para(out, "Verdict:", "  ", text);
    if let Some(w) = id.no_directed_path_warning(show) {
        para(out, "! Warning:", "  ", &format!("{w}."));
    }
    let _ = writeln!(out);
}

fn backdoor(out: &mut String, id: &Identification, g: &Graph, x: &str) {
    let b = &id.backdoor;
    if b.open_paths.is_empty() {
        let _ = writeln!(out, "Backdoor paths: none is open without adjustment.");
    } else {
        let _ = writeln!(
            out,
            "Backdoor paths open without adjustment, to be blocked ({}):",
            shown_of(b.open_paths.len(), b.open_paths_total, b.open_paths_complete)
        );
        paths_block(out, g, &b.open_paths);
    }
    let _ = writeln!(out);
    match id.recommended_adjustment() {
        Some(set) => {
            let _ = writeln!(out, "Recommended adjustment set: {}", set_text(&set));
            if b.optimal_set.is_some() {
                para(
                    out,
                    "  why:",
                    "       ",
                    "it is the optimal set O = pa(cn) minus forb (Henckel, Perkovic & Maathuis 2022), \
                     which among valid adjustment sets gives the smallest asymptotic variance for many \
                     estimators.",
                );
            } else {
                let reason = b.optimal_set_reason.as_deref().unwrap_or("it is not available");
                para(
                    out,
                    "  why:",
                    "       ",
                    &format!("the optimal set cannot be used ({reason}); this is the smallest minimal set."),
                );
            }
        }
        None => para(
            out,
            "Adjustment:",
            "  ",
            &format!(
                "no set of observed variables blocks every backdoor path without including an \
                 unobserved variable or a descendant of {x}."
            ),
        ),
    }
    if !b.minimal_sets.is_empty() {
        let count = shown_of(
            b.minimal_sets.len(),
            b.minimal_sets_total,
            b.minimal_sets_complete,
        );
        let _ = writeln!(out, "Minimal adjustment sets ({count}):");
        for s in &b.minimal_sets {
            let _ = writeln!(out, "    {}", set_text(s));
        }
    }
    let _ = writeln!(out);
}

fn frontdoor(out: &mut String, id: &Identification, x: &str, y: &str) {
    let f = &id.frontdoor;
    match id.recommended_frontdoor() {
        Some(set) => {
            let _ = writeln!(out, "Front-door set: {}", set_text(&set));
            para(
                out,
                "  it meets all three conditions:",
                "    ",
                &format!(
                    "(1) every directed path from {x} to {y} passes through it; (2) no backdoor path \
                     from {x} to it is open; (3) {x} blocks every backdoor path from it to {y}."
                ),
            );
            if f.sets.len() > 1 || f.sets_total > f.sets.len() || !f.sets_complete {
                let count = shown_of(f.sets.len(), f.sets_total, f.sets_complete);
                let _ = writeln!(out, "Minimal front-door sets ({count}):");
                for s in &f.sets {
                    let _ = writeln!(out, "    {}", set_text(s));
                }
            }
        }
        None => {
            let reason = f
                .obstacle
                .as_deref()
                .unwrap_or("no set of observed variables meets it");
            para(out, "Front-door:", "  ", &format!("no set works: {reason}."));
        }
    }
    let _ = writeln!(out);
}

fn given(out: &mut String, id: &Identification, g: &Graph, x: &str) {
    let Some(s) = &id.given_set else {
        return;
    };
    let verdict = if s.valid {
        "meets the backdoor criterion"
    } else {
        "does NOT meet the backdoor criterion"
    };
    let _ = writeln!(out, "Your set {}: {verdict}.", set_text(&s.set));
    if !s.descendants_of_exposure.is_empty() {
        let names: Vec<String> = s.descendants_of_exposure.iter().map(|n| show(n)).collect();
        para(
            out,
            "  it includes",
            "    ",
            &format!(
                "descendants of {x}, which must not be adjusted for: {}",
                names.join(", ")
            ),
        );
    }
    if !s.open_paths.is_empty() {
        let _ = writeln!(
            out,
            "  backdoor paths it leaves open ({}):",
            shown_of(s.open_paths.len(), s.open_paths_total, s.open_paths_complete)
        );
        paths_block(out, g, &s.open_paths);
    }
    let _ = writeln!(out);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::graph::parse;
    use crate::identify::identify;

    fn graph(text: &str) -> Graph {
        parse(text, "t").unwrap().graph
    }

    #[test]
    fn paths_show_arrows_and_bidirected_pairs() {
        let g = graph("A -> \"blood pressure\"\nA -> Y\n\"blood pressure\" <-> Y");
        let p = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        assert_eq!(
            g.path_text(&p(&["blood pressure", "A", "Y"])),
            "\"blood pressure\" <- A -> Y"
        );
        let u = g.latent_nodes()[0];
        assert_eq!(
            g.path_text(&p(&["blood pressure", g.name(u), "Y"])),
            "\"blood pressure\" <-> Y"
        );
    }

    #[test]
    fn report_names_recommendation_truncation_and_caution() {
        let g = graph("A -> X\nA -> B -> Y\nX -> Y");
        let (x, y) = (g.node("X").unwrap(), g.node("Y").unwrap());
        let mut id = identify(&g, x, y, Some(&[]));
        let text = identify_text(&id, &g);
        assert!(text.contains("Recommended adjustment set: {B}"), "{text}");
        assert!(text.contains("optimal set"));
        assert!(text.contains("Your set nothing (the empty set): does NOT meet"));
        assert!(text.contains("X <- A -> B -> Y"));
        assert!(text.contains("only as valid as the declared graph"));
        id.backdoor.minimal_sets_total = 250;
        id.backdoor.optimal_set = None;
        id.backdoor.optimal_set_reason = Some("a reason".into());
        let text = identify_text(&id, &g);
        assert!(
            text.contains("Minimal adjustment sets (2 shown of 250)"),
            "{text}"
        );
        assert!(
            text.contains("(a reason); this is the smallest minimal set"),
            "{text}"
        );
        assert!(text.contains("Recommended adjustment set: {A}"), "{text}");
    }
}
