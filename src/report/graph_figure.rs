//! The causal graph as a figure: a layered SVG drawing with the exposure on
//! the left and the outcome on the right, or a DOT text for graph-layout
//! programs.
//!
//! Layout: the exposure, the outcome and the nodes on directed paths between
//! them form a middle band, placed in columns by their longest distance from
//! the exposure. Every other node sits in a row above the band when it is an
//! ancestor of the exposure or the outcome (a possible confounder), below it
//! otherwise, near the mean position of its neighbours already placed. A row
//! wider than the page ([`MAX_WIDTH`]) is wrapped into several rows. Without
//! an exposure and an outcome, or when the band itself would be too wide,
//! the nodes are placed top to bottom in rows by their longest distance from
//! a root, wrapped the same way.
//!
//! Routing: an edge is drawn straight, or as a curve bent to one side, when
//! that misses every box it does not join; otherwise it runs through the
//! gaps between rows and a free vertical lane. Latent common causes written
//! as `a <-> b` are drawn as dashed two-headed lines.

use super::svg::{Svg, esc, ink, text_width};
use crate::graph::{Graph, Node};
use crate::identify::{check_frontdoor, is_backdoor_set};
use std::collections::BTreeMap;
use std::fmt::Write;

/// Which nodes to mark in the figure.
#[derive(Debug, Clone, Default)]
pub struct Marks {
    /// The exposure.
    pub exposure: Option<Node>,
    /// The outcome.
    pub outcome: Option<Node>,
    /// The adjustment set, or the front-door set (whose members are then
    /// drawn as mediators).
    pub adjust: Vec<Node>,
}

/// What a node is in the figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Role {
    Exposure,
    Outcome,
    Adjusted,
    Mediator,
    Latent,
    Plain,
}

impl Role {
    fn label(self) -> &'static str {
        match self {
            Role::Exposure => "exposure",
            Role::Outcome => "outcome",
            Role::Adjusted => "adjusted for",
            Role::Mediator => "mediator (front-door set)",
            Role::Latent => "unobserved",
            Role::Plain => "observed",
        }
    }
}

/// True when `m.adjust` is a front-door set rather than an adjustment set:
/// it fails the backdoor criterion and meets the front-door criterion.
fn is_frontdoor(g: &Graph, m: &Marks) -> bool {
    match (m.exposure, m.outcome) {
        (Some(x), Some(y)) if !m.adjust.is_empty() => {
            !is_backdoor_set(g, x, y, &m.adjust) && check_frontdoor(g, x, y, &m.adjust).holds()
        }
        _ => false,
    }
}

fn roles(g: &Graph, m: &Marks) -> Vec<Role> {
    let frontdoor = is_frontdoor(g, m);
    (0..g.len())
        .map(|v| {
            if m.exposure == Some(v) {
                Role::Exposure
            } else if m.outcome == Some(v) {
                Role::Outcome
            } else if m.adjust.contains(&v) {
                if frontdoor { Role::Mediator } else { Role::Adjusted }
            } else if g.is_latent(v) {
                Role::Latent
            } else {
                Role::Plain
            }
        })
        .collect()
}

/// Nodes drawn as boxes (latent nodes made by `a <-> b` are drawn as arcs).
fn drawn(g: &Graph) -> Vec<Node> {
    (0..g.len()).filter(|&v| g.bidirected_pair(v).is_none()).collect()
}

/// Longest directed distance from `from` (or from the roots when None),
/// over drawn nodes, in topological order.
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

/// The widest the figure gets, in pixels (a page's text width at 96 dpi is
/// about 600 to 800).
pub const MAX_WIDTH: f64 = 800.0;
const PAD: f64 = 24.0;
const AVAIL: f64 = MAX_WIDTH - 2.0 * PAD;
const COL_GAP: f64 = 190.0;
const H_GAP: f64 = 40.0;
const ROW_GAP: f64 = 78.0;
const BOX_H: f64 = 34.0;
const FONT: f64 = 13.0;

fn box_w(name: &str) -> f64 {
    text_width(name, FONT).max(36.0) + 24.0
}

/// A placed box: centre and width.
#[derive(Debug, Clone, Copy)]
struct Placed {
    x: f64,
    y: f64,
    w: f64,
}

impl Placed {
    /// Is (px, py) inside the box grown by `pad` on every side?
    fn contains(&self, px: f64, py: f64, pad: f64) -> bool {
        (px - self.x).abs() < self.w / 2.0 + pad && (py - self.y).abs() < BOX_H / 2.0 + pad
    }
}

/// Places `items` (node, width, wanted x) in rows no wider than [`AVAIL`],
/// in order of wanted x, each box as near its wanted x as the others allow.
fn pack(mut items: Vec<(Node, f64, f64)>, g: &Graph) -> Vec<Vec<(Node, f64, f64)>> {
    items.sort_by(|a, b| a.2.total_cmp(&b.2).then(g.name(a.0).cmp(g.name(b.0))));
    let mut rows: Vec<Vec<(Node, f64, f64)>> = Vec::new();
    let mut used = f64::INFINITY;
    for it in items {
        if used + H_GAP + it.1 > AVAIL {
            rows.push(Vec::new());
            used = -H_GAP;
        }
        used += H_GAP + it.1;
        rows.last_mut().expect("a row").push(it);
    }
    for row in &mut rows {
        // Left to right: no overlap; then right to left: inside the page.
        let mut prev: Option<(f64, f64)> = None;
        for it in row.iter_mut() {
            let lo = match prev {
                Some((x, w)) => x + (w + it.1) / 2.0 + H_GAP,
                None => it.1 / 2.0,
            };
            it.2 = it.2.max(lo);
            prev = Some((it.2, it.1));
        }
        let mut next: Option<(f64, f64)> = None;
        for it in row.iter_mut().rev() {
            let hi = match next {
                Some((x, w)) => x - (w + it.1) / 2.0 - H_GAP,
                None => AVAIL - it.1 / 2.0,
            };
            it.2 = it.2.min(hi);
            next = Some((it.2, it.1));
        }
    }
    rows
}

/// The mean x of the placed neighbours of `v`, or `fallback`.
fn wanted_x(g: &Graph, pos: &BTreeMap<Node, Placed>, v: Node, fallback: f64) -> f64 {
    let xs: Vec<f64> = g
        .parents(v)
        .iter()
        .chain(g.children(v))
        .filter_map(|u| pos.get(u).map(|p| p.x))
        .collect();
    if xs.is_empty() {
        fallback
    } else {
        xs.iter().sum::<f64>() / xs.len() as f64
    }
}

/// Box centres in pixels, inside [0, AVAIL] across; rows may have any y.
fn place(g: &Graph, m: &Marks) -> BTreeMap<Node, Placed> {
    let nodes = drawn(g);
    let root_depth = depths(g, None);
    if let (Some(x), Some(y)) = (m.exposure, m.outcome)
        && let Some(pos) = band_layout(g, x, y, &nodes, &root_depth)
    {
        return pos;
    }
    // Rows by depth from the roots, top to bottom.
    let mut by_depth: BTreeMap<usize, Vec<Node>> = BTreeMap::new();
    for &v in &nodes {
        by_depth.entry(root_depth[v].unwrap_or(0)).or_default().push(v);
    }
    let mut pos = BTreeMap::new();
    let mut y = 0.0;
    for (_, vs) in by_depth {
        let items = vs
            .iter()
            .map(|&v| (v, box_w(g.name(v)), wanted_x(g, &pos, v, AVAIL / 2.0)))
            .collect();
        for row in pack(items, g) {
            for (v, w, x) in row {
                pos.insert(v, Placed { x, y, w });
            }
            y += ROW_GAP;
        }
    }
    pos
}

/// The band layout, or None when the band does not fit across the page.
fn band_layout(
    g: &Graph,
    x: Node,
    y: Node,
    nodes: &[Node],
    root_depth: &[Option<usize>],
) -> Option<BTreeMap<Node, Placed>> {
    let from_x = depths(g, Some(x));
    let desc_x = g.descendants(&[x]);
    let anc_y = g.ancestors(&[y]);
    let anc_xy = g.ancestors(&[x, y]);
    let dy = from_x[y].unwrap_or(2).max(1);
    let mut band: BTreeMap<usize, Vec<Node>> = BTreeMap::new();
    for &v in nodes {
        if v == y {
            band.entry(dy).or_default().push(v);
        } else if v == x || (desc_x[v] && anc_y[v]) {
            band.entry(from_x[v].unwrap_or(0).min(dy - 1))
                .or_default()
                .push(v);
        }
    }
    let widest = band
        .values()
        .flatten()
        .map(|&v| box_w(g.name(v)))
        .fold(0.0, f64::max);
    let gap = (COL_GAP.max(widest + 40.0)).min((AVAIL - widest) / dy as f64);
    if gap < widest + H_GAP {
        return None;
    }
    let left = (AVAIL - dy as f64 * gap) / 2.0;
    let mut pos = BTreeMap::new();
    for (c, vs) in &band {
        for (i, &v) in vs.iter().enumerate() {
            // Parallel mediators at the same distance alternate below and above.
            let row = if i == 0 {
                0.0
            } else {
                i.div_ceil(2) as f64 * if i % 2 == 1 { 1.0 } else { -1.0 }
            };
            pos.insert(
                v,
                Placed {
                    x: left + *c as f64 * gap,
                    y: row * 0.9 * ROW_GAP,
                    w: box_w(g.name(v)),
                },
            );
        }
    }
    let centre = left + dy as f64 * gap / 2.0;
    let mut top = pos.values().map(|p: &Placed| p.y).fold(0.0, f64::min);
    let mut bottom = pos.values().map(|p: &Placed| p.y).fold(0.0, f64::max);
    // Everything else in rows by depth: ancestors of the exposure or the
    // outcome above the band (the deepest nearest to it), the rest below.
    let off: Vec<Node> = nodes.iter().copied().filter(|v| !pos.contains_key(v)).collect();
    let mut above: BTreeMap<std::cmp::Reverse<usize>, Vec<Node>> = BTreeMap::new();
    let mut below: BTreeMap<usize, Vec<Node>> = BTreeMap::new();
    let lone = usize::MAX;
    for &v in &off {
        let d = if g.parents(v).is_empty() && g.children(v).is_empty() {
            lone
        } else {
            root_depth[v].unwrap_or(0)
        };
        if anc_xy[v] && d != lone {
            above.entry(std::cmp::Reverse(d)).or_default().push(v);
        } else {
            below.entry(d).or_default().push(v);
        }
    }
    let rows = above
        .into_values()
        .map(|vs| (true, vs))
        .chain(below.into_values().map(|vs| (false, vs)));
    for (up, vs) in rows {
        let items = vs
            .iter()
            .map(|&v| (v, box_w(g.name(v)), wanted_x(g, &pos, v, centre)))
            .collect();
        for row in pack(items, g) {
            let y = if up {
                top -= ROW_GAP;
                top
            } else {
                bottom += ROW_GAP;
                bottom
            };
            for (v, w, x) in row {
                pos.insert(v, Placed { x, y, w });
            }
        }
    }
    Some(pos)
}

/// Where the segment from the centre of box `p` towards (tx, ty) leaves it.
fn clip(p: &Placed, tx: f64, ty: f64) -> (f64, f64) {
    let (dx, dy) = (tx - p.x, ty - p.y);
    if dx == 0.0 && dy == 0.0 {
        return (p.x, p.y);
    }
    let sx = if dx != 0.0 {
        (p.w / 2.0 + 3.0) / dx.abs()
    } else {
        f64::INFINITY
    };
    let sy = if dy != 0.0 {
        (BOX_H / 2.0 + 3.0) / dy.abs()
    } else {
        f64::INFINITY
    };
    let s = sx.min(sy).min(1.0);
    (p.x + dx * s, p.y + dy * s)
}

/// An edge's drawn line: the SVG path data, and points along it.
#[derive(Debug, Clone)]
struct Route {
    d: String,
    samples: Vec<(f64, f64)>,
}

fn quad_route(a: &Placed, b: &Placed, bend: f64) -> Route {
    let (mx, my) = ((a.x + b.x) / 2.0, (a.y + b.y) / 2.0);
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let len = (dx * dx + dy * dy).sqrt().max(1e-9);
    let (cx, cy) = (mx - dy / len * bend, my + dx / len * bend);
    let (sx, sy) = clip(a, cx, cy);
    let (ex, ey) = clip(b, cx, cy);
    let samples = (0..=48)
        .map(|i| {
            let t = i as f64 / 48.0;
            let u = 1.0 - t;
            (
                u * u * sx + 2.0 * u * t * cx + t * t * ex,
                u * u * sy + 2.0 * u * t * cy + t * t * ey,
            )
        })
        .collect();
    Route {
        d: format!("M{sx:.1},{sy:.1} Q{cx:.1},{cy:.1} {ex:.1},{ey:.1}"),
        samples,
    }
}

/// A smooth curve from `a` to `b` through one point per row between them,
/// each point where the straight line crosses that row or, when a box is
/// there, just beside the box. None when the two boxes share a row or no
/// row lies between them.
fn spline_route(a: &Placed, b: &Placed, boxes: &[Placed], levels: &[f64]) -> Option<Route> {
    let (lo, hi) = (a.y.min(b.y), a.y.max(b.y));
    let mut between: Vec<f64> = levels
        .iter()
        .copied()
        .filter(|&l| l > lo + 1.0 && l < hi - 1.0)
        .collect();
    if between.is_empty() {
        return None;
    }
    if b.y < a.y {
        between.reverse();
    }
    let mut pts = vec![(a.x, a.y)];
    for l in between {
        let on_line = a.x + (b.x - a.x) * (l - a.y) / (b.y - a.y);
        let blocked: Vec<(f64, f64)> = boxes
            .iter()
            .filter(|p| (p.y - l).abs() < 1.0)
            .map(|p| (p.x - p.w / 2.0 - 14.0, p.x + p.w / 2.0 + 14.0))
            .collect();
        let free = |x: f64| blocked.iter().all(|&(l, r)| x <= l || x >= r);
        let x = std::iter::once(on_line)
            .chain(blocked.iter().flat_map(|&(l, r)| [l, r]))
            .filter(|&x| free(x))
            .min_by(|p, q| (p - on_line).abs().total_cmp(&(q - on_line).abs()))
            .unwrap_or(on_line);
        pts.push((x, l));
    }
    pts.push((b.x, b.y));
    // Catmull-Rom through the points, as cubic Bezier pieces.
    let n = pts.len();
    let at = |i: isize| pts[i.clamp(0, n as isize - 1) as usize];
    let mut pieces = Vec::new();
    for i in 0..n - 1 {
        let (p0, p1, p2, p3) = (
            at(i as isize - 1),
            at(i as isize),
            at(i as isize + 1),
            at(i as isize + 2),
        );
        let c1 = (p1.0 + (p2.0 - p0.0) / 6.0, p1.1 + (p2.1 - p0.1) / 6.0);
        let c2 = (p2.0 - (p3.0 - p1.0) / 6.0, p2.1 - (p3.1 - p1.1) / 6.0);
        pieces.push([p1, c1, c2, p2]);
    }
    let first = pieces[0][1];
    pieces[0][0] = clip(a, first.0, first.1);
    let last = pieces[n - 2][2];
    pieces[n - 2][3] = clip(b, last.0, last.1);
    let mut d = format!("M{:.1},{:.1}", pieces[0][0].0, pieces[0][0].1);
    let mut samples = Vec::new();
    for [p, c1, c2, q] in &pieces {
        let _ = write!(
            d,
            " C{:.1},{:.1} {:.1},{:.1} {:.1},{:.1}",
            c1.0, c1.1, c2.0, c2.1, q.0, q.1
        );
        for k in 0..=24 {
            let t = k as f64 / 24.0;
            let u = 1.0 - t;
            let f = |a: f64, b: f64, c: f64, e: f64| {
                u * u * u * a + 3.0 * u * u * t * b + 3.0 * u * t * t * c + t * t * t * e
            };
            samples.push((f(p.0, c1.0, c2.0, q.0), f(p.1, c1.1, c2.1, q.1)));
        }
    }
    Some(Route { d, samples })
}

/// A route through the gaps between rows: out of the top or bottom of `a`,
/// along the gap next to its row, down or up a free vertical lane, along
/// the gap next to `b`'s row, and into `b`.
fn lane_route(a: &Placed, b: &Placed, boxes: &[Placed], levels: &[f64], used: &mut Vec<(f64, f64)>) -> Route {
    let gap_after = |y: f64, down: bool| -> f64 {
        let next = if down {
            levels
                .iter()
                .copied()
                .filter(|&l| l > y + 1.0)
                .fold(f64::INFINITY, f64::min)
        } else {
            levels
                .iter()
                .copied()
                .filter(|&l| l < y - 1.0)
                .fold(f64::NEG_INFINITY, f64::max)
        };
        if next.is_finite() {
            (y + next) / 2.0
        } else if down {
            y + ROW_GAP / 2.0
        } else {
            y - ROW_GAP / 2.0
        }
    };
    let down = b.y > a.y + 1.0;
    let same = (b.y - a.y).abs() <= 1.0;
    // Lines already drawn along a gap or a lane are not drawn over: each
    // new one is moved a few pixels aside.
    let spread = |v: f64, used: &mut Vec<(f64, f64)>, key: f64| {
        let n = used.iter().filter(|u| (u.0 - key).abs() < 0.5).count() % 5;
        used.push((key, v));
        // 0, +4, -4, +8, -8, then again: gaps are at least 18 pixels clear.
        let step = n.div_ceil(2) as f64 * 4.0;
        if n % 2 == 1 { v + step } else { v - step }
    };
    let ca0 = gap_after(a.y, down);
    let ca = spread(ca0, used, ca0 + 1e6);
    let cb = if same {
        ca
    } else {
        let cb0 = gap_after(b.y, !down);
        spread(cb0, used, cb0 + 1e6)
    };
    let (lo, hi) = (ca.min(cb), ca.max(cb));
    // Boxes in the way of a vertical lane between the two gaps.
    let blocked: Vec<(f64, f64)> = boxes
        .iter()
        .filter(|p| p.y > lo && p.y < hi)
        .map(|p| (p.x - p.w / 2.0 - 8.0, p.x + p.w / 2.0 + 8.0))
        .collect();
    let free = |x: f64| blocked.iter().all(|&(l, r)| x <= l || x >= r);
    let want = (a.x + b.x) / 2.0;
    let lane = [a.x, b.x, want]
        .into_iter()
        .chain(blocked.iter().flat_map(|&(l, r)| [l - 1.0, r + 1.0]))
        .filter(|&x| free(x))
        .min_by(|p, q| (p - want).abs().total_cmp(&(q - want).abs()))
        .unwrap_or(want);
    let lane = {
        let moved = spread(lane, used, lane);
        if free(moved) { moved } else { lane }
    };
    let edge_y = |p: &Placed, towards: f64| {
        if towards > p.y {
            p.y + BOX_H / 2.0 + 3.0
        } else {
            p.y - BOX_H / 2.0 - 3.0
        }
    };
    let pts = [
        (a.x, edge_y(a, ca)),
        (a.x, ca),
        (lane, ca),
        (lane, cb),
        (b.x, cb),
        (b.x, edge_y(b, cb)),
    ];
    let mut samples = Vec::new();
    for w in pts.windows(2) {
        for i in 0..=24 {
            let t = i as f64 / 24.0;
            samples.push((w[0].0 + (w[1].0 - w[0].0) * t, w[0].1 + (w[1].1 - w[0].1) * t));
        }
    }
    let mut d = String::new();
    for (i, (x, y)) in pts.iter().enumerate() {
        let _ = write!(d, "{}{x:.1},{y:.1}", if i == 0 { "M" } else { " L" });
    }
    Route { d, samples }
}

/// The route of the edge between boxes `ia` and `ib` that misses every
/// other box: the first clear one of straight, bent either way by growing
/// amounts, and the lane route.
fn route(
    ia: usize,
    ib: usize,
    boxes: &[Placed],
    levels: &[f64],
    curved: bool,
    used: &mut Vec<(f64, f64)>,
) -> Route {
    let (a, b) = (&boxes[ia], &boxes[ib]);
    let clear = |r: &Route| {
        r.samples.iter().all(|&(x, y)| {
            boxes
                .iter()
                .enumerate()
                .all(|(i, p)| i == ia || i == ib || !p.contains(x, y, 3.0))
        })
    };
    // Bends of k * 18 px either way (straight first when allowed): gentle
    // ones, then the spline through the rows' gaps, then wider ones.
    let bent = |ks: std::ops::RangeInclusive<i32>| {
        ks.flat_map(|k| if k == 0 { vec![0] } else { vec![k, -k] })
            .filter(|&k| k != 0 || !curved)
            .map(|k| quad_route(a, b, f64::from(k) * 18.0))
    };
    let gentle = bent(0..=3);
    let spline = spline_route(a, b, boxes, levels);
    if let Some(r) = gentle.chain(spline).chain(bent(4..=12)).find(|r| clear(r)) {
        return r;
    }
    lane_route(a, b, boxes, levels, used)
}

/// The drawn geometry: boxes of the drawn nodes (in the order of `nodes`,
/// shifted into the page), and every edge's route with its ends.
struct Geometry {
    nodes: Vec<Node>,
    boxes: Vec<Placed>,
    edges: Vec<(Node, Node, Route)>,
    arcs: Vec<(Node, Node, Route)>,
    width: f64,
    height: f64,
}

fn geometry(g: &Graph, m: &Marks) -> Geometry {
    let pos = place(g, m);
    let nodes: Vec<Node> = pos.keys().copied().collect();
    let min_x = pos
        .values()
        .map(|p| p.x - p.w / 2.0)
        .fold(f64::INFINITY, f64::min);
    let min_y = pos.values().map(|p| p.y).fold(f64::INFINITY, f64::min);
    let shift_x = PAD - min_x;
    let boxes: Vec<Placed> = pos
        .values()
        .map(|p| Placed {
            x: p.x + shift_x,
            y: p.y - min_y + PAD + BOX_H / 2.0 + ROW_GAP / 2.0,
            w: p.w,
        })
        .collect();
    let mut levels: Vec<f64> = boxes.iter().map(|p| p.y).collect();
    levels.sort_by(f64::total_cmp);
    levels.dedup_by(|a, b| (*a - *b).abs() < 1.0);
    let index = |v: Node| nodes.iter().position(|&u| u == v);
    let mut edges = Vec::new();
    let mut used = Vec::new();
    for (a, b) in g.edges() {
        if let (Some(ia), Some(ib)) = (index(a), index(b)) {
            edges.push((a, b, route(ia, ib, &boxes, &levels, false, &mut used)));
        }
    }
    let mut arcs = Vec::new();
    for v in 0..g.len() {
        if let Some((a, b)) = g.bidirected_pair(v)
            && let (Some(ia), Some(ib)) = (index(a), index(b))
        {
            arcs.push((a, b, route(ia, ib, &boxes, &levels, true, &mut used)));
        }
    }
    let right = boxes.iter().map(|p| p.x + p.w / 2.0).fold(0.0, f64::max);
    let bottom = boxes.iter().map(|p| p.y).fold(0.0, f64::max);
    let mut lowest = bottom + BOX_H / 2.0 + ROW_GAP / 2.0;
    for (_, _, r) in edges.iter().chain(&arcs) {
        for &(_, y) in &r.samples {
            lowest = lowest.max(y + 8.0);
        }
    }
    Geometry {
        nodes,
        boxes,
        edges,
        arcs,
        width: right + PAD,
        height: lowest,
    }
}

/// The graph as an SVG document, at most [`MAX_WIDTH`] pixels wide unless a
/// single name is wider.
pub fn svg(g: &Graph, m: &Marks) -> String {
    let geo = geometry(g, m);
    let role = roles(g, m);
    let mut kinds: Vec<Role> = geo.nodes.iter().map(|&v| role[v]).collect();
    kinds.sort();
    kinds.dedup();
    let legend_lines = legend_layout(&kinds, !geo.arcs.is_empty(), MAX_WIDTH);
    let legend_h = legend_lines.len() as f64 * (BOX_H + 10.0) + 12.0;
    let width = geo
        .width
        .max(legend_lines.iter().map(|l| l.1).fold(0.0, f64::max) + PAD);
    let height = geo.height + legend_h;
    let mut s = Svg::new(width, height);
    s.raw(&format!(
        r#"<defs><marker id="tip" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse"><path d="M0,0 L10,5 L0,10 L3,5 z" fill="{}"/></marker></defs>"#,
        ink::TEXT
    ));
    // Edges first, so boxes sit on top.
    for (a, _, r) in &geo.edges {
        let style = if g.is_latent(*a) {
            format!(r#"stroke="{}" stroke-dasharray="5 4""#, ink::MUTED)
        } else {
            format!(r#"stroke="{}""#, ink::TEXT)
        };
        s.raw(&format!(
            r#"<path d="{}" fill="none" {style} stroke-width="1.4" stroke-linejoin="round" marker-end="url(#tip)"/>"#,
            r.d
        ));
    }
    for (a, b, r) in &geo.arcs {
        s.raw(&format!(
            r#"<path d="{}" fill="none" stroke="{}" stroke-width="1.4" stroke-dasharray="5 4" stroke-linejoin="round" marker-start="url(#tip)" marker-end="url(#tip)"><title>unmeasured common cause of {} and {}</title></path>"#,
            r.d,
            ink::MUTED,
            esc(g.name(*a)),
            esc(g.name(*b))
        ));
    }
    for (&v, p) in geo.nodes.iter().zip(&geo.boxes) {
        node_box(&mut s, g.name(v), p.x, p.y, role[v]);
    }
    let mut y = geo.height + 4.0;
    for (items, _) in legend_lines {
        for (x, item) in items {
            match item {
                LegendItem::Kind(r) => {
                    let w = box_w(r.label());
                    node_box(&mut s, r.label(), x + w / 2.0, y + BOX_H / 2.0, r);
                }
                LegendItem::Arc => {
                    s.raw(&format!(
                        r#"<path d="M{:.1},{:.1} L{:.1},{:.1}" stroke="{}" stroke-width="1.4" stroke-dasharray="5 4" marker-start="url(#tip)" marker-end="url(#tip)"/>"#,
                        x + 2.0,
                        y + BOX_H / 2.0,
                        x + 40.0,
                        y + BOX_H / 2.0,
                        ink::MUTED
                    ));
                    s.text(
                        x + 48.0,
                        y + BOX_H / 2.0 + 4.0,
                        11.0,
                        "start",
                        &format!(r#"fill="{}""#, ink::MUTED),
                        LEGEND_ARC,
                    );
                }
            }
        }
        y += BOX_H + 10.0;
    }
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
        Role::Mediator => (
            ink::PAPER,
            ink::WARM,
            "",
            format!(r#"fill="{}" font-style="italic""#, ink::TEXT),
        ),
        Role::Latent => (
            "white",
            ink::MUTED,
            r#" stroke-dasharray="5 4""#,
            format!(r#"fill="{}" font-style="italic""#, ink::MUTED),
        ),
        Role::Plain => ("white", ink::TEXT, "", format!(r#"fill="{}""#, ink::TEXT)),
    };
    let sw = match r {
        Role::Adjusted => 2.4,
        Role::Mediator => 2.6,
        _ => 1.3,
    };
    s.raw(&format!(
        r#"<rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{BOX_H}" rx="7" fill="{fill}" stroke="{stroke}" stroke-width="{sw}"{extra}/>"#
    ));
    match r {
        Role::Adjusted => {
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
        Role::Mediator => {
            // A bar under the name: the effect is carried through here.
            s.line(
                x + 8.0,
                y + BOX_H - 6.0,
                x + w - 8.0,
                y + BOX_H - 6.0,
                &format!(r#"stroke="{}" stroke-width="2""#, ink::WARM),
            );
        }
        _ => {}
    }
    s.text(cx, cy + FONT * 0.36, FONT, "middle", &text_style, name);
}

const LEGEND_ARC: &str = "unmeasured common cause";

#[derive(Debug, Clone, Copy)]
enum LegendItem {
    Kind(Role),
    Arc,
}

/// The legend's lines: items with their left x, and each line's right end;
/// only the kinds drawn, wrapped at `width`.
fn legend_layout(kinds: &[Role], arcs: bool, width: f64) -> Vec<(Vec<(f64, LegendItem)>, f64)> {
    let mut items: Vec<(f64, LegendItem)> = kinds
        .iter()
        .map(|&r| (box_w(r.label()), LegendItem::Kind(r)))
        .collect();
    if arcs {
        items.push((48.0 + text_width(LEGEND_ARC, 11.0), LegendItem::Arc));
    }
    let mut lines: Vec<(Vec<(f64, LegendItem)>, f64)> = Vec::new();
    let mut x = f64::INFINITY;
    for (w, item) in items {
        if x + w > width - PAD {
            lines.push((Vec::new(), 0.0));
            x = PAD;
        }
        let line = lines.last_mut().expect("a line");
        line.0.push((x, item));
        line.1 = x + w;
        x += w + 14.0;
    }
    lines
}

/// The graph in the DOT language, with the same marks as the SVG drawing.
pub fn dot(g: &Graph, m: &Marks) -> String {
    let q = |s: &str| format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""));
    let mut out = String::from(
        "// The causal graph exported from causeway in the DOT language, for graph-layout\n\
         // programs (for example: dot -Tsvg graph.dot -o graph.svg). Node styles mark the\n\
         // exposure, the outcome, the adjusted-for set, front-door mediators and unobserved\n\
         // nodes; dashed two-headed edges are unmeasured common causes.\n\
         digraph causeway {\n  rankdir=LR;\n  node [shape=box, style=\"rounded\", fontname=\"Helvetica\"];\n",
    );
    let role = roles(g, m);
    for v in drawn(g) {
        let attrs = match role[v] {
            Role::Exposure => format!(
                "style=\"rounded,filled\", fillcolor=\"{}\", fontcolor=white",
                ink::DEEP
            ),
            Role::Outcome => format!("style=\"rounded,filled\", fillcolor=\"{}\"", ink::WARM),
            Role::Adjusted => format!(
                "style=\"rounded,filled\", fillcolor=\"{}\", peripheries=2",
                ink::PALE
            ),
            Role::Mediator => format!(
                "style=\"rounded,filled\", fillcolor=\"{}\", color=\"{}\", penwidth=2.5",
                ink::PAPER,
                ink::WARM
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

#[cfg(test)]
mod tests {
    use super::*;

    /// A small deterministic generator (xorshift64*), enough for test graphs.
    struct Gen(u64);
    impl Gen {
        fn next(&mut self) -> u64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
        }
        fn below(&mut self, n: u64) -> u64 {
            self.next() % n
        }
    }

    const NAMES: [&str; 8] = [
        "age",
        "sex",
        "bmi",
        "income",
        "smokeintensity",
        "region",
        "blood_pressure",
        "x",
    ];

    /// A random DAG of `n` nodes (names of varied length), edge density
    /// `p` in percent, with a few `<->` pairs; marks an exposure and an
    /// outcome when the generator says so.
    fn random(rng: &mut Gen, n: usize, p: u64) -> (Graph, Marks) {
        let mut g = Graph::new();
        let nodes: Vec<Node> = (0..n)
            .map(|i| g.add_node(&format!("{}{i}", NAMES[rng.below(8) as usize])))
            .collect();
        for j in 0..n {
            for i in 0..j {
                if rng.below(100) < p {
                    g.add_edge(nodes[i], nodes[j]);
                }
            }
        }
        for _ in 0..rng.below(3) {
            let (a, b) = (rng.below(n as u64) as usize, rng.below(n as u64) as usize);
            if a != b && !g.adjacent(nodes[a], nodes[b]) {
                g.add_bidirected(nodes[a], nodes[b]);
            }
        }
        let mut m = Marks::default();
        if rng.below(3) > 0 {
            let x = rng.below(n as u64 / 2) as usize;
            let y = x + 1 + rng.below((n - x - 1) as u64) as usize;
            m.exposure = Some(nodes[x]);
            m.outcome = Some(nodes[y]);
            g.add_edge(nodes[x], nodes[y]);
            m.adjust = g
                .parents(nodes[x])
                .iter()
                .copied()
                .filter(|&v| !g.is_latent(v))
                .collect();
        }
        (g, m)
    }

    // On many random graphs, no point of any drawn edge or arc lies inside
    // a box the edge does not join, and no two boxes overlap.
    #[test]
    fn edges_never_pass_behind_other_boxes() {
        let mut rng = Gen(0x9e37_79b9_7f4a_7c15);
        for case in 0..300 {
            let n = 3 + rng.below(28) as usize;
            let p = 5 + rng.below(25);
            let (g, m) = random(&mut rng, n, p);
            let geo = geometry(&g, &m);
            let at = |v: Node| geo.nodes.iter().position(|&u| u == v).unwrap();
            for (a, b, r) in geo.edges.iter().chain(&geo.arcs) {
                let (ia, ib) = (at(*a), at(*b));
                for &(x, y) in &r.samples {
                    for (i, bx) in geo.boxes.iter().enumerate() {
                        assert!(
                            i == ia || i == ib || !bx.contains(x, y, 0.0),
                            "case {case}: {} -> {} passes behind {}",
                            g.name(*a),
                            g.name(*b),
                            g.name(geo.nodes[i])
                        );
                    }
                }
            }
            for (i, p) in geo.boxes.iter().enumerate() {
                for q in &geo.boxes[i + 1..] {
                    let apart = (p.x - q.x).abs() >= (p.w + q.w) / 2.0 || (p.y - q.y).abs() >= BOX_H;
                    assert!(apart, "case {case}: boxes overlap");
                }
            }
        }
    }

    // A 30-node graph stays within the page width, with and without an
    // exposure and an outcome, and its boxes do not overlap.
    #[test]
    fn thirty_nodes_fit_the_page() {
        let mut rng = Gen(42);
        for _ in 0..20 {
            let (g, mut m) = random(&mut rng, 30, 12);
            for marks in [m.clone(), std::mem::take(&mut m)] {
                let text = svg(&g, &marks);
                let geo = geometry(&g, &marks);
                assert!(geo.width <= MAX_WIDTH + 1e-9, "width {}", geo.width);
                let w: f64 = text
                    .split("width=\"")
                    .nth(1)
                    .and_then(|t| t.split('"').next())
                    .unwrap()
                    .parse()
                    .unwrap();
                assert!(w <= MAX_WIDTH, "{w}");
            }
        }
    }

    // A front-door set is drawn as mediators, not as adjusted for; the
    // legend lists only the kinds drawn.
    #[test]
    fn front_door_members_are_mediators_and_the_legend_is_what_is_drawn() {
        let parsed = crate::graph::parse("x <-> y\nx -> m -> y\n", "t").unwrap().graph;
        let (x, y, mm) = (
            parsed.node("x").unwrap(),
            parsed.node("y").unwrap(),
            parsed.node("m").unwrap(),
        );
        let marks = Marks {
            exposure: Some(x),
            outcome: Some(y),
            adjust: vec![mm],
        };
        let text = svg(&parsed, &marks);
        assert!(text.contains(">mediator (front-door set)<"), "{text}");
        assert!(!text.contains(">adjusted for<"), "{text}");
        assert!(
            !text.contains(">unobserved<") && !text.contains(">observed<"),
            "{text}"
        );
        assert!(text.contains(LEGEND_ARC));
        let parsed = crate::graph::parse("c -> x -> y\nc -> y\n", "t").unwrap().graph;
        let c = parsed.node("c").unwrap();
        let marks = Marks {
            exposure: parsed.node("x"),
            outcome: parsed.node("y"),
            adjust: vec![c],
        };
        let text = svg(&parsed, &marks);
        assert!(
            text.contains(">adjusted for<") && !text.contains("mediator"),
            "{text}"
        );
        assert!(!text.contains(LEGEND_ARC), "{text}");
    }
}
