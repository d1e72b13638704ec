//! The causal graph as a figure: a layered SVG drawing with the exposure on
//! the left and the outcome on the right, or a DOT text for other tools.
//!
//! Layout: the exposure, the outcome and the nodes on directed paths between
//! them form a middle band, placed in columns by their longest distance from
//! the exposure. Every other node sits at the mean column of its neighbours,
//! above the band when it is an ancestor of the exposure or the outcome
//! (a possible confounder), below it otherwise. Without an exposure and an
//! outcome the nodes are placed in columns by their longest distance from a
//! root. Latent common causes written as `a <-> b` are drawn as a dashed
//! two-headed arc.

use super::svg::{Svg, esc, ink, text_width};
use crate::graph::{Graph, Node};
use std::collections::BTreeMap;
use std::fmt::Write;

/// Which nodes to mark in the figure.
#[derive(Debug, Clone, Default)]
pub struct Marks {
    /// The exposure.
    pub exposure: Option<Node>,
    /// The outcome.
    pub outcome: Option<Node>,
    /// The adjustment (or front-door) set.
    pub adjust: Vec<Node>,
}

#[derive(Clone, Copy, PartialEq)]
enum Role {
    Exposure,
    Outcome,
    Adjusted,
    Latent,
    Plain,
}

fn role(g: &Graph, m: &Marks, v: Node) -> Role {
    if m.exposure == Some(v) {
        Role::Exposure
    } else if m.outcome == Some(v) {
        Role::Outcome
    } else if m.adjust.contains(&v) {
        Role::Adjusted
    } else if g.is_latent(v) {
        Role::Latent
    } else {
        Role::Plain
    }
}

/// Nodes drawn as boxes (latent nodes made by `a <-> b` are drawn as arcs).
fn drawn(g: &Graph) -> Vec<Node> {
    (0..g.len()).filter(|&v| g.bidirected_pair(v).is_none()).collect()
}

/// Longest directed distance from any node of `from` (or from the roots when
/// `from` is empty), over drawn nodes, in topological order.
fn depths(g: &Graph, from: Option<Node>) -> Vec<Option<usize>> {
    let order = g.topological_order().unwrap_or_else(|_| (0..g.len()).collect());
    let mut d: Vec<Option<usize>> = vec![None; g.len()];
    for &v in &order {
        if g.bidirected_pair(v).is_some() {
            continue;
        }
        let best = g.parents(v).iter().filter_map(|&p| d[p].map(|x| x + 1)).max();
        d[v] = match from {
            Some(x) if v == x => Some(0),
            Some(_) => best,
            None => Some(best.unwrap_or(0)),
        };
    }
    d
}

/// Grid positions (column, row) of the drawn nodes.
fn layout(g: &Graph, m: &Marks) -> BTreeMap<Node, (f64, f64)> {
    let nodes = drawn(g);
    let root_depth = depths(g, None);
    let mut pos = BTreeMap::new();
    let (Some(x), Some(y)) = (m.exposure, m.outcome) else {
        // Columns by depth from the roots; nodes sharing a column are stacked.
        let mut by_col: BTreeMap<usize, Vec<Node>> = BTreeMap::new();
        for &v in &nodes {
            by_col.entry(root_depth[v].unwrap_or(0)).or_default().push(v);
        }
        for (c, vs) in by_col {
            let n = vs.len() as f64;
            for (i, &v) in vs.iter().enumerate() {
                pos.insert(v, (c as f64, i as f64 - (n - 1.0) / 2.0));
            }
        }
        return pos;
    };
    // The middle band: exposure, outcome and the nodes on directed paths
    // between them, by their longest distance from the exposure.
    let from_x = depths(g, Some(x));
    let desc_x = g.descendants(&[x]);
    let anc_y = g.ancestors(&[y]);
    let anc_xy = g.ancestors(&[x, y]);
    let dy = from_x[y].unwrap_or(2).max(1) as f64;
    let mut band_cols: BTreeMap<usize, Vec<Node>> = BTreeMap::new();
    for &v in &nodes {
        if v == y {
            pos.insert(v, (dy, 0.0));
        } else if v == x || (desc_x[v] && anc_y[v]) {
            band_cols.entry(from_x[v].unwrap_or(0)).or_default().push(v);
        }
    }
    for (c, vs) in band_cols {
        for (i, &v) in vs.iter().enumerate() {
            // Parallel mediators at the same distance alternate below and above.
            let row = if i == 0 {
                0.0
            } else {
                i.div_ceil(2) as f64 * if i % 2 == 1 { 1.0 } else { -1.0 }
            };
            pos.insert(v, (c as f64, row * 0.9));
        }
    }
    let band_rows_below = pos.values().map(|p| p.1).fold(0.0, f64::max);
    let band_rows_above = pos.values().map(|p| -p.1).fold(0.0, f64::max);
    // Everything else in rows by depth: ancestors of the exposure or the
    // outcome above the band (the deepest nearest to it), the rest below;
    // each row spread across the band's width, ordered by the mean column
    // of the neighbours already placed.
    let off: Vec<Node> = nodes.iter().copied().filter(|v| !pos.contains_key(v)).collect();
    let max_depth = off.iter().filter_map(|&v| root_depth[v]).max().unwrap_or(0);
    let mut rows: BTreeMap<i64, Vec<Node>> = BTreeMap::new();
    for &v in &off {
        let d = root_depth[v].unwrap_or(0) as i64;
        let key = if anc_xy[v] {
            -(1 + max_depth as i64 - d)
        } else {
            1 + d
        };
        rows.entry(key).or_default().push(v);
    }
    let keys: Vec<i64> = rows.keys().copied().collect();
    let order: Vec<i64> = keys
        .iter()
        .rev()
        .filter(|k| **k < 0)
        .chain(keys.iter().filter(|k| **k > 0))
        .copied()
        .collect();
    for key in order {
        let mut vs = rows[&key].clone();
        let centre = |v: Node| -> f64 {
            let placed: Vec<f64> = g
                .parents(v)
                .iter()
                .chain(g.children(v))
                .filter_map(|u| pos.get(u).map(|p| p.0))
                .collect();
            if placed.is_empty() {
                dy / 2.0
            } else {
                placed.iter().sum::<f64>() / placed.len() as f64
            }
        };
        let mut keyed: Vec<(f64, Node)> = vs.iter().map(|&v| (centre(v), v)).collect();
        keyed.sort_by(|a, b| a.0.total_cmp(&b.0).then(g.name(a.1).cmp(g.name(b.1))));
        vs = keyed.into_iter().map(|p| p.1).collect();
        let k = vs.len() as f64;
        let step = (dy / k.max(1.0)).max(1.0);
        let row = if key < 0 {
            key as f64 - band_rows_above
        } else {
            key as f64 + band_rows_below
        };
        for (i, &v) in vs.iter().enumerate() {
            pos.insert(v, (dy / 2.0 + (i as f64 - (k - 1.0) / 2.0) * step, row));
        }
    }
    pos
}

const COL_GAP: f64 = 190.0;
const ROW_GAP: f64 = 78.0;
const BOX_H: f64 = 34.0;
const FONT: f64 = 13.0;

fn box_w(name: &str) -> f64 {
    text_width(name, FONT).max(36.0) + 24.0
}

/// Where the segment from the centre of a box towards (tx, ty) leaves it.
fn clip(cx: f64, cy: f64, w: f64, tx: f64, ty: f64) -> (f64, f64) {
    let (dx, dy) = (tx - cx, ty - cy);
    if dx == 0.0 && dy == 0.0 {
        return (cx, cy);
    }
    let sx = if dx != 0.0 {
        (w / 2.0 + 3.0) / dx.abs()
    } else {
        f64::INFINITY
    };
    let sy = if dy != 0.0 {
        (BOX_H / 2.0 + 3.0) / dy.abs()
    } else {
        f64::INFINITY
    };
    let s = sx.min(sy).min(1.0);
    (cx + dx * s, cy + dy * s)
}

/// The graph as an SVG document.
pub fn svg(g: &Graph, m: &Marks) -> String {
    let pos = layout(g, m);
    let widest = pos.keys().map(|&v| box_w(g.name(v))).fold(0.0, f64::max);
    let min_c = pos.values().map(|p| p.0).fold(f64::INFINITY, f64::min);
    let max_c = pos.values().map(|p| p.0).fold(f64::NEG_INFINITY, f64::max);
    let min_r = pos.values().map(|p| p.1).fold(f64::INFINITY, f64::min);
    let max_r = pos.values().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
    let margin = 30.0 + widest / 2.0;
    let gap = COL_GAP.max(widest + 50.0);
    let legend_h = 46.0;
    let width = (max_c - min_c) * gap + 2.0 * margin;
    let width = width.max(legend_width(m) + 40.0);
    let height = (max_r - min_r) * ROW_GAP + BOX_H + 90.0 + legend_h;
    let xy = |v: Node| {
        let (c, r) = pos[&v];
        (margin + (c - min_c) * gap, 50.0 + (r - min_r) * ROW_GAP)
    };
    let mut s = Svg::new(width, height);
    s.raw(&format!(
        r#"<defs><marker id="tip" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse"><path d="M0,0 L10,5 L0,10 L3,5 z" fill="{}"/></marker></defs>"#,
        ink::TEXT
    ));
    // Edges first, so boxes sit on top.
    for (a, b) in g.edges() {
        if g.bidirected_pair(a).is_some() {
            continue;
        }
        let ((x1, y1), (x2, y2)) = (xy(a), xy(b));
        let span = ((pos[&b].0 - pos[&a].0).abs() / 1.0).max(0.0);
        let same_row = (pos[&a].1 - pos[&b].1).abs() < 1e-9;
        // Bend edges that would run through boxes between their ends.
        let bend = if same_row && span > 1.0 { -28.0 * span } else { 0.0 };
        let (mx, my) = ((x1 + x2) / 2.0, (y1 + y2) / 2.0 + bend);
        let (sx, sy) = clip(x1, y1, box_w(g.name(a)), mx, my);
        let (ex, ey) = clip(x2, y2, box_w(g.name(b)), mx, my);
        let style = if g.is_latent(a) {
            format!(r#"stroke="{}" stroke-dasharray="5 4""#, ink::MUTED)
        } else {
            format!(r#"stroke="{}""#, ink::TEXT)
        };
        s.raw(&format!(
            r#"<path d="M{sx:.1},{sy:.1} Q{mx:.1},{my:.1} {ex:.1},{ey:.1}" fill="none" {style} stroke-width="1.4" marker-end="url(#tip)"/>"#
        ));
    }
    for v in 0..g.len() {
        let Some((a, b)) = g.bidirected_pair(v) else {
            continue;
        };
        let ((x1, y1), (x2, y2)) = (xy(a), xy(b));
        let (mx, my) = ((x1 + x2) / 2.0, (y1 + y2) / 2.0 + 36.0 + 0.15 * (x2 - x1).abs());
        let (sx, sy) = clip(x1, y1, box_w(g.name(a)), mx, my);
        let (ex, ey) = clip(x2, y2, box_w(g.name(b)), mx, my);
        s.raw(&format!(
            r#"<path d="M{sx:.1},{sy:.1} Q{mx:.1},{my:.1} {ex:.1},{ey:.1}" fill="none" stroke="{}" stroke-width="1.4" stroke-dasharray="5 4" marker-start="url(#tip)" marker-end="url(#tip)"><title>unmeasured common cause of {} and {}</title></path>"#,
            ink::MUTED,
            esc(g.name(a)),
            esc(g.name(b))
        ));
    }
    for &v in pos.keys() {
        let (cx, cy) = xy(v);
        node_box(&mut s, g.name(v), cx, cy, role(g, m, v));
    }
    legend(&mut s, height - legend_h + 8.0, m);
    s.finish("causal graph")
}

fn node_box(s: &mut Svg, name: &str, cx: f64, cy: f64, r: Role) {
    let w = box_w(name);
    let (x, y) = (cx - w / 2.0, cy - BOX_H / 2.0);
    let (fill, stroke, extra, text_style) = match r {
        Role::Exposure => (
            ink::DEEP,
            ink::DEEP,
            "",
            r#"fill="white" font-weight="bold""#.to_string(),
        ),
        Role::Outcome => (
            ink::WARM,
            ink::TEXT,
            "",
            format!(r#"fill="{}" font-weight="bold""#, ink::TEXT),
        ),
        Role::Adjusted => (ink::PALE, ink::DEEP, "", format!(r#"fill="{}""#, ink::TEXT)),
        Role::Latent => (
            "white",
            ink::MUTED,
            r#" stroke-dasharray="5 4""#,
            format!(r#"fill="{}" font-style="italic""#, ink::MUTED),
        ),
        Role::Plain => ("white", ink::TEXT, "", format!(r#"fill="{}""#, ink::TEXT)),
    };
    let sw = if r == Role::Adjusted { 2.4 } else { 1.3 };
    s.raw(&format!(
        r#"<rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{BOX_H}" rx="7" fill="{fill}" stroke="{stroke}" stroke-width="{sw}"{extra}/>"#
    ));
    if r == Role::Adjusted {
        // A second, inner outline: adjusted-for nodes are framed twice.
        s.raw(&format!(
            r#"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{}" rx="5" fill="none" stroke="{}" stroke-width="0.9"/>"#,
            x + 3.5,
            y + 3.5,
            w - 7.0,
            BOX_H - 7.0,
            ink::DEEP
        ));
    }
    s.text(cx, cy + FONT * 0.36, FONT, "middle", &text_style, name);
}

const LEGEND_NOTE: &str = "dashed arc: unmeasured common cause";

fn legend_items(m: &Marks) -> Vec<(&'static str, Role)> {
    let mut items: Vec<(&str, Role)> = Vec::new();
    if m.exposure.is_some() {
        items.push(("exposure", Role::Exposure));
    }
    if m.outcome.is_some() {
        items.push(("outcome", Role::Outcome));
    }
    if !m.adjust.is_empty() {
        items.push(("adjusted for", Role::Adjusted));
    }
    items.push(("unobserved", Role::Latent));
    items.push(("observed", Role::Plain));
    items
}

fn legend_width(m: &Marks) -> f64 {
    let boxes: f64 = legend_items(m).iter().map(|(l, _)| box_w(l) + 14.0).sum();
    20.0 + boxes + 8.0 + text_width(LEGEND_NOTE, 11.0)
}

fn legend(s: &mut Svg, y: f64, m: &Marks) {
    let mut x = 20.0;
    for (label, r) in legend_items(m) {
        let w = box_w(label);
        node_box(s, label, x + w / 2.0, y + BOX_H / 2.0, r);
        x += w + 14.0;
    }
    s.text(
        x + 8.0,
        y + BOX_H / 2.0 + 4.0,
        11.0,
        "start",
        &format!(r#"fill="{}""#, ink::MUTED),
        "dashed arc: unmeasured common cause",
    );
}

/// The graph in the DOT language, with the same marks as the SVG drawing.
pub fn dot(g: &Graph, m: &Marks) -> String {
    let q = |s: &str| format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""));
    let mut out = String::from(
        "digraph causeway {\n  rankdir=LR;\n  node [shape=box, style=\"rounded\", fontname=\"Helvetica\"];\n",
    );
    for v in drawn(g) {
        let attrs = match role(g, m, v) {
            Role::Exposure => format!(
                "style=\"rounded,filled\", fillcolor=\"{}\", fontcolor=white",
                ink::DEEP
            ),
            Role::Outcome => format!("style=\"rounded,filled\", fillcolor=\"{}\"", ink::WARM),
            Role::Adjusted => format!(
                "style=\"rounded,filled\", fillcolor=\"{}\", peripheries=2",
                ink::PALE
            ),
            Role::Latent => format!(
                "style=\"rounded,dashed\", color=\"{}\", fontcolor=\"{}\"",
                ink::MUTED,
                ink::MUTED
            ),
            Role::Plain => String::new(),
        };
        let _ = writeln!(out, "  {} [{attrs}];", q(g.name(v)));
    }
    for (a, b) in g.edges() {
        if g.bidirected_pair(a).is_some() {
            continue;
        }
        let style = if g.is_latent(a) { " [style=dashed]" } else { "" };
        let _ = writeln!(out, "  {} -> {}{style};", q(g.name(a)), q(g.name(b)));
    }
    for v in 0..g.len() {
        if let Some((a, b)) = g.bidirected_pair(v) {
            let _ = writeln!(
                out,
                "  {} -> {} [dir=both, style=dashed, constraint=false];",
                q(g.name(a)),
                q(g.name(b))
            );
        }
    }
    out.push_str("}\n");
    out
}
