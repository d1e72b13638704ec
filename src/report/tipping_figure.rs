//! The tipping-point figure: how strong an unmeasured confounder would have
//! to be to explain away an estimate, drawn from frontiers computed in
//! [`crate::sensitivity::frontier`].
//!
//! One panel per scale, side by side: the risk-ratio panel (E-value of
//! VanderWeele and Ding 2017) and the partial-R² panel (robustness value of
//! Cinelli and Hazlett 2020). In each, the frontier of the estimate is a
//! solid line with the region beyond it shaded, the frontier of the
//! confidence limit is dashed, the equal-strength points (E-values,
//! robustness values) are circles (filled for the estimate, hollow for the
//! interval), and reference points are squares (bounds from observed
//! covariates), diamonds (observed covariates) and triangles (hypothesised
//! confounders), so the figure reads in greyscale.

use super::sensitivity_text::{pct, wrap};
use super::svg::{Shape, Svg, ink, text_width};
use crate::sensitivity::evalue::EValue;
use crate::sensitivity::frontier::{
    Polyline, R2Frontiers, RrFrontiers, nice_ceiling, r2_axis_max, r2_frontiers, rr_frontiers,
};
use crate::sensitivity::robustness::{Coefficient, RobustnessValue};
use crate::{Error, Result};

/// What a reference point stands for (decides its marker).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReferenceKind {
    /// A bound for a confounder k times as strong as an observed covariate.
    Benchmark,
    /// An observed covariate's own strength.
    Observed,
    /// A confounder strength the analyst put forward.
    Hypothesised,
}

/// A labelled point in a panel, in the panel's units (risk ratios, or
/// partial R² as proportions).
#[derive(Debug, Clone, PartialEq)]
pub struct Reference {
    /// Short label drawn beside the point.
    pub label: String,
    /// Strength of association with the exposure.
    pub x: f64,
    /// Strength of association with the outcome.
    pub y: f64,
    /// Its kind.
    pub kind: ReferenceKind,
}

/// The risk-ratio panel.
#[derive(Debug, Clone, PartialEq)]
pub struct RrPanel {
    /// The frontiers.
    pub frontiers: RrFrontiers,
    /// Reference points (RR_EU, RR_UY).
    pub references: Vec<Reference>,
}

/// The partial-R² panel.
#[derive(Debug, Clone, PartialEq)]
pub struct R2Panel {
    /// The frontiers.
    pub frontiers: R2Frontiers,
    /// The robustness values drawn on the diagonal.
    pub robustness: RobustnessValue,
    /// Reference points (R2_dz, R2_yz).
    pub references: Vec<Reference>,
}

const SIDE: f64 = 330.0;
const LEFT: f64 = 80.0;
const RIGHT: f64 = 26.0;
const TOP: f64 = 46.0;
const BOTTOM: f64 = 70.0;
const PANEL_W: f64 = LEFT + SIDE + RIGHT;
const PANEL_H: f64 = TOP + SIDE + BOTTOM;
const HEAD: f64 = 40.0;
const FONT: f64 = 12.0;
const LEGEND_ROW: f64 = 22.0;
const FOOTNOTE: &str = "A single unmeasured confounder, described by its two strengths, is \
assumed; the curves show how strong it would have to be, not that it is absent. Judge \
plausibility with subject-matter knowledge.";

/// The estimate frontier: a solid dark line.
fn solid() -> String {
    format!(
        r#"stroke="{}" stroke-width="2.6" stroke-linejoin="round""#,
        ink::DEEP
    )
}

/// The interval frontier: a dashed lighter line.
fn dashed() -> String {
    format!(
        r#"stroke="{}" stroke-width="2.6" stroke-dasharray="8 5" stroke-linejoin="round""#,
        ink::WARM
    )
}

/// Maps panel units to pixels.
struct Frame {
    x0: f64,
    y0: f64,
    lo: f64,
    hi: f64,
}

impl Frame {
    fn px(&self, x: f64) -> f64 {
        self.x0 + LEFT + (x - self.lo) / (self.hi - self.lo) * SIDE
    }
    fn py(&self, y: f64) -> f64 {
        self.y0 + TOP + SIDE - (y - self.lo) / (self.hi - self.lo) * SIDE
    }
    fn pts(&self, line: &Polyline) -> Vec<(f64, f64)> {
        line.iter().map(|&(x, y)| (self.px(x), self.py(y))).collect()
    }
}

fn text_style() -> String {
    format!(r#"fill="{}""#, ink::TEXT)
}

/// Ticks from `lo` to `hi` at a round step, `lo` and `hi` included.
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    let step = nice_ceiling((hi - lo) / 6.0);
    let mut t = vec![lo];
    let mut k = (lo / step).floor() + 1.0;
    while k * step < hi - step * 1e-9 {
        if k * step > lo + step * 0.4 {
            t.push(k * step);
        }
        k += 1.0;
    }
    t.push(hi);
    t
}

fn fmt_tick(v: f64, percent: bool) -> String {
    if percent {
        let p = v * 100.0;
        if (p - p.round()).abs() < 1e-9 {
            format!("{p:.0}%")
        } else {
            format!("{p:.1}%")
        }
    } else if (v - v.round()).abs() < 1e-9 {
        format!("{v:.0}")
    } else {
        format!("{v:.1}")
    }
}

struct Axes<'a> {
    title: &'a str,
    x_label: &'a str,
    y_label: &'a str,
    percent: bool,
}

fn draw_frame(svg: &mut Svg, f: &Frame, a: &Axes) {
    let ts = text_style();
    let (left, top) = (f.x0 + LEFT, f.y0 + TOP);
    svg.rect(
        left,
        top,
        SIDE,
        SIDE,
        &format!(r#"fill="white" stroke="{}" stroke-width="1""#, ink::TEXT),
    );
    for t in ticks(f.lo, f.hi) {
        let (x, y) = (f.px(t), f.py(t));
        let grid = format!(
            r#"stroke="{}" stroke-width="0.6" stroke-opacity="0.45""#,
            ink::MUTED
        );
        if t > f.lo && t < f.hi {
            svg.line(x, top, x, top + SIDE, &grid);
            svg.line(left, y, left + SIDE, y, &grid);
        }
        let tick = format!(r#"stroke="{}" stroke-width="1""#, ink::TEXT);
        svg.line(x, top + SIDE, x, top + SIDE + 5.0, &tick);
        svg.line(left - 5.0, y, left, y, &tick);
        let label = fmt_tick(t, a.percent);
        svg.text(x, top + SIDE + 19.0, FONT - 1.0, "middle", &ts, &label);
        svg.text(left - 8.0, y + 4.0, FONT - 1.0, "end", &ts, &label);
    }
    svg.text(
        left + SIDE / 2.0,
        f.y0 + TOP - 16.0,
        FONT + 2.0,
        "middle",
        &format!(r#"fill="{}" font-weight="bold""#, ink::TEXT),
        a.title,
    );
    svg.text(
        left + SIDE / 2.0,
        top + SIDE + 42.0,
        FONT,
        "middle",
        &ts,
        a.x_label,
    );
    svg.text_rotated(
        f.x0 + 24.0,
        top + SIDE / 2.0,
        -90.0,
        FONT,
        "middle",
        &ts,
        a.y_label,
    );
    // The diagonal of equal strengths.
    svg.line(
        f.px(f.lo),
        f.py(f.lo),
        f.px(f.hi),
        f.py(f.hi),
        &format!(
            r#"stroke="{}" stroke-width="1" stroke-dasharray="2 3""#,
            ink::MUTED
        ),
    );
}

/// Shades the region beyond a decreasing frontier (towards the top-right
/// corner).
fn shade(svg: &mut Svg, f: &Frame, line: &Polyline) {
    if line.len() < 2 {
        return;
    }
    let mut poly = f.pts(line);
    poly.push((f.px(f.hi), f.py(f.hi)));
    svg.polygon(
        &poly,
        &format!(r#"fill="{}" fill-opacity="0.85" stroke="none""#, ink::PALE),
    );
}

/// Places point labels in a panel, avoiding the square's edges, the
/// markers and the labels already placed.
struct Labels {
    /// Markers and labels already placed: a label should not cover them.
    boxes: Vec<[f64; 4]>,
    /// Curve paths: better avoided.
    soft: Vec<[f64; 4]>,
}

impl Labels {
    fn new() -> Self {
        Labels {
            boxes: Vec::new(),
            soft: Vec::new(),
        }
    }

    /// Reserves the path of a curve, so labels keep off it.
    fn curve(&mut self, f: &Frame, line: &Polyline) {
        let pts = f.pts(line);
        for w in pts.windows(2) {
            // Points every few pixels along each segment.
            let (a, b) = (w[0], w[1]);
            let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
            let steps = (len / 4.0).ceil().max(1.0) as usize;
            for k in 0..=steps {
                let t = k as f64 / steps as f64;
                let (x, y) = (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1));
                self.soft.push([x - 1.5, y - 1.5, x + 1.5, y + 1.5]);
            }
        }
    }

    /// Reserves the area of a marker.
    fn mark(&mut self, px: f64, py: f64) {
        self.boxes.push([px - 6.0, py - 6.0, px + 6.0, py + 6.0]);
    }

    /// Draws `label` beside the point (px, py) at one of the candidate
    /// sides ((dx, dy) signs).
    fn place(&mut self, svg: &mut Svg, f: &Frame, px: f64, py: f64, sides: &[(f64, f64)], label: &str) {
        let w = text_width(label, FONT - 1.0);
        let h = FONT;
        let (l, t) = (f.x0 + LEFT + 3.0, f.y0 + TOP + 3.0);
        let (r, b) = (l + SIDE - 6.0, t + SIDE - 6.0);
        let rect = |(dx, dy): (f64, f64)| {
            let x = if dx < 0.0 { px - 9.0 - w } else { px + 9.0 };
            let y = if dy < 0.0 { py - 5.0 - h } else { py + 5.0 };
            [x, y, x + w, y + h]
        };
        let within = |bx: &[f64; 4]| bx[0] >= l && bx[2] <= r && bx[1] >= t && bx[3] <= b;
        let hits = |bx: &[f64; 4], list: &[[f64; 4]]| {
            list.iter()
                .filter(|o| !(bx[2] <= o[0] || bx[0] >= o[2] || bx[3] <= o[1] || bx[1] >= o[3]))
                .count()
        };
        let overlaps = |bx: &[f64; 4]| 1000 * hits(bx, &self.boxes) + hits(bx, &self.soft);
        // The side inside the square that covers the fewest markers and
        // labels, then the least curve (the first such side on ties); the
        // first side if none fits.
        let chosen = sides
            .iter()
            .map(|&side| rect(side))
            .filter(within)
            .min_by_key(overlaps)
            .unwrap_or_else(|| rect(sides[0]));
        svg.text(
            chosen[0],
            chosen[3] - 2.0,
            FONT - 1.0,
            "start",
            &format!(
                r#"fill="{}" stroke="white" stroke-width="3" paint-order="stroke""#,
                ink::TEXT
            ),
            label,
        );
        self.boxes.push(chosen);
    }
}

/// Label sides for a point on the diagonal: away from its own frontier
/// first (below left, above right), then the others.
const DIAGONAL_SIDES: [(f64, f64); 4] = [(-1.0, 1.0), (1.0, -1.0), (1.0, 1.0), (-1.0, -1.0)];
/// Label sides for a reference point: to the right first.
const REFERENCE_SIDES: [(f64, f64); 4] = [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)];

fn equal_point(svg: &mut Svg, f: &Frame, labels: &mut Labels, v: f64, filled: bool) -> bool {
    if !(v >= f.lo && v <= f.hi) {
        return false;
    }
    let style = if filled {
        format!(r#"fill="{}" stroke="white" stroke-width="1.2""#, ink::DEEP)
    } else {
        format!(r#"fill="white" stroke="{}" stroke-width="2.2""#, ink::WARM)
    };
    svg.marker(Shape::Circle, f.px(v), f.py(v), 10.0, &style);
    labels.mark(f.px(v), f.py(v));
    true
}

/// Draws the equal-strength points, then their labels.
fn equal_points(svg: &mut Svg, f: &Frame, labels: &mut Labels, points: &[(f64, bool, String)]) {
    let drawn: Vec<bool> = points
        .iter()
        .map(|(v, filled, _)| equal_point(svg, f, labels, *v, *filled))
        .collect();
    for ((v, _, label), shown) in points.iter().zip(drawn) {
        if shown {
            labels.place(svg, f, f.px(*v), f.py(*v), &DIAGONAL_SIDES, label);
        }
    }
}

fn inside(f: &Frame, r: &Reference) -> bool {
    r.x >= f.lo && r.x <= f.hi && r.y >= f.lo && r.y <= f.hi
}

fn reference_marks(svg: &mut Svg, f: &Frame, labels: &mut Labels, refs: &[Reference]) {
    for r in refs.iter().filter(|r| inside(f, r)) {
        let (shape, style) = match r.kind {
            ReferenceKind::Benchmark => (
                Shape::Square,
                format!(r#"fill="{}" stroke="white" stroke-width="1""#, ink::TEXT),
            ),
            ReferenceKind::Observed => (
                Shape::Diamond,
                format!(r#"fill="white" stroke="{}" stroke-width="1.8""#, ink::TEXT),
            ),
            ReferenceKind::Hypothesised => (
                Shape::Triangle,
                format!(
                    r#"fill="{}" stroke="{}" stroke-width="1.2""#,
                    ink::MUTED,
                    ink::TEXT
                ),
            ),
        };
        svg.marker(shape, f.px(r.x), f.py(r.y), 10.0, &style);
        labels.mark(f.px(r.x), f.py(r.y));
    }
}

fn reference_labels(svg: &mut Svg, f: &Frame, labels: &mut Labels, refs: &[Reference]) {
    for r in refs.iter().filter(|r| inside(f, r)) {
        labels.place(svg, f, f.px(r.x), f.py(r.y), &REFERENCE_SIDES, &r.label);
    }
}

fn curves(svg: &mut Svg, f: &Frame, id: &str, estimate: &[Polyline], interval: &[Polyline]) {
    svg.begin_clip(id, f.x0 + LEFT, f.y0 + TOP, SIDE, SIDE);
    for line in estimate {
        shade(svg, f, line);
    }
    for line in interval {
        svg.polyline(&f.pts(line), &dashed());
    }
    for line in estimate {
        svg.polyline(&f.pts(line), &solid());
    }
    svg.end_clip();
}

fn rr_panel(svg: &mut Svg, x0: f64, y0: f64, p: &RrPanel) {
    let fr = &p.frontiers;
    let f = Frame {
        x0,
        y0,
        lo: 1.0,
        hi: fr.max,
    };
    draw_frame(
        svg,
        &f,
        &Axes {
            title: &format!("Risk-ratio scale (observed {:.2})", fr.rr),
            x_label: "confounder-exposure association (risk ratio)",
            y_label: "confounder-outcome association (risk ratio)",
            percent: false,
        },
    );
    let interval: Vec<Polyline> = if fr.interval.is_empty() {
        Vec::new()
    } else {
        vec![fr.interval.clone()]
    };
    curves(svg, &f, "clip-rr", std::slice::from_ref(&fr.estimate), &interval);
    let mut labels = Labels::new();
    for line in std::iter::once(&fr.estimate).chain(&interval) {
        labels.curve(&f, line);
    }
    reference_marks(svg, &f, &mut labels, &p.references);
    let mut points = vec![(fr.evalue, true, format!("E-value {:.2}", fr.evalue))];
    if let Some(e) = fr.evalue_limit {
        points.push((e, false, format!("E-value, interval {e:.2}")));
    }
    equal_points(svg, &f, &mut labels, &points);
    reference_labels(svg, &f, &mut labels, &p.references);
}

fn r2_panel(svg: &mut Svg, x0: f64, y0: f64, p: &R2Panel) {
    let fr = &p.frontiers;
    let f = Frame {
        x0,
        y0,
        lo: 0.0,
        hi: fr.max,
    };
    draw_frame(
        svg,
        &f,
        &Axes {
            title: "Partial R\u{b2} scale",
            x_label: "confounder's share of exposure variance (partial R\u{b2})",
            y_label: "confounder's share of outcome variance (partial R\u{b2})",
            percent: true,
        },
    );
    curves(svg, &f, "clip-r2", &fr.estimate, &fr.interval);
    let mut labels = Labels::new();
    for line in fr.estimate.iter().chain(&fr.interval) {
        labels.curve(&f, line);
    }
    reference_marks(svg, &f, &mut labels, &p.references);
    let rv = &p.robustness;
    let mut points = vec![(rv.rv, true, format!("RV {}", pct(rv.rv)))];
    if !fr.interval.is_empty() {
        points.push((rv.rv_alpha, false, format!("RV, interval {}", pct(rv.rv_alpha))));
    }
    equal_points(svg, &f, &mut labels, &points);
    reference_labels(svg, &f, &mut labels, &p.references);
}

enum Swatch {
    Line(String),
    Area,
    Mark(Shape, String),
}

/// Legend rows: two columns when the labels fit, else one.
fn legend_columns(width: f64, items: &[(Swatch, String)]) -> usize {
    let widest = items
        .iter()
        .map(|(_, l)| text_width(l, FONT - 1.0))
        .fold(0.0, f64::max);
    if 2.0 * (44.0 + widest + 16.0) <= width {
        2
    } else {
        1
    }
}

fn legend(svg: &mut Svg, x: f64, y: f64, width: f64, items: &[(Swatch, String)]) {
    let ts = text_style();
    let cols = legend_columns(width, items);
    let col_w = (width / cols as f64).floor();
    for (i, (swatch, label)) in items.iter().enumerate() {
        let cx = x + (i % cols) as f64 * col_w;
        let cy = y + (i / cols) as f64 * LEGEND_ROW;
        match swatch {
            Swatch::Line(style) => svg.line(cx, cy, cx + 34.0, cy, style),
            Swatch::Area => svg.rect(
                cx,
                cy - 7.0,
                34.0,
                14.0,
                &format!(
                    r#"fill="{}" stroke="{}" stroke-width="0.6""#,
                    ink::PALE,
                    ink::MUTED
                ),
            ),
            Swatch::Mark(shape, style) => svg.marker(*shape, cx + 17.0, cy, 10.0, style),
        }
        svg.text(cx + 44.0, cy + 4.0, FONT - 1.0, "start", &ts, label);
    }
}

/// The tipping-point figure as an SVG document, with the panels given (at
/// least one).
pub fn svg(rr: Option<&RrPanel>, r2: Option<&R2Panel>) -> Result<String> {
    let panels = rr.is_some() as usize + r2.is_some() as usize;
    if panels == 0 {
        return Err(Error::input(
            "a tipping-point figure needs a risk-ratio or a partial-R2 panel",
        ));
    }
    let width = (panels as f64 * PANEL_W + 24.0).max(640.0);
    let refs: Vec<&Reference> = rr
        .iter()
        .flat_map(|p| p.references.iter())
        .chain(r2.iter().flat_map(|p| p.references.iter()))
        .collect();
    let has = |k: ReferenceKind| refs.iter().any(|r| r.kind == k);
    let q = r2.map(|p| p.robustness.q).unwrap_or(1.0);
    let (est_label, int_label, area_label) = if (q - 1.0).abs() < 1e-12 {
        (
            "frontier: confounding that explains away the estimate".to_string(),
            "frontier: confounding that moves the interval to the null".to_string(),
            "strong enough to explain away the estimate".to_string(),
        )
    } else {
        // With q < 1 only the partial-R2 panel uses q; the legend says so.
        (
            format!(
                "frontier: explains away the estimate (risk ratios) or {:.0}% of it (R\u{b2})",
                100.0 * q
            ),
            "frontier: moves the interval to that value".to_string(),
            "strong enough to reach the estimate's frontier".to_string(),
        )
    };
    let mut items = vec![
        (Swatch::Line(solid()), est_label),
        (Swatch::Line(dashed()), int_label),
        (Swatch::Area, area_label),
        (
            Swatch::Mark(Shape::Circle, format!(r#"fill="{}" stroke="white""#, ink::DEEP)),
            "equal strengths needed (estimate)".to_string(),
        ),
        (
            Swatch::Mark(
                Shape::Circle,
                format!(r#"fill="white" stroke="{}" stroke-width="2.2""#, ink::WARM),
            ),
            "equal strengths needed (interval)".to_string(),
        ),
    ];
    if has(ReferenceKind::Benchmark) {
        items.push((
            Swatch::Mark(Shape::Square, format!(r#"fill="{}""#, ink::TEXT)),
            "bound: k times as strong as an observed covariate".to_string(),
        ));
    }
    if has(ReferenceKind::Observed) {
        items.push((
            Swatch::Mark(
                Shape::Diamond,
                format!(r#"fill="white" stroke="{}" stroke-width="1.8""#, ink::TEXT),
            ),
            "observed covariate".to_string(),
        ));
    }
    if has(ReferenceKind::Hypothesised) {
        items.push((
            Swatch::Mark(
                Shape::Triangle,
                format!(r#"fill="{}" stroke="{}""#, ink::MUTED, ink::TEXT),
            ),
            "hypothesised confounder".to_string(),
        ));
    }
    let legend_w = width - 40.0;
    let rows = items.len().div_ceil(legend_columns(legend_w, &items));
    let legend_h = rows as f64 * LEGEND_ROW;
    let chars = ((width - 40.0) / text_width("x", FONT - 1.0)).floor() as usize;
    let foot: Vec<String> = wrap(FOOTNOTE, chars, "").lines().map(String::from).collect();
    let height = HEAD + PANEL_H + legend_h + 16.0 + 16.0 * foot.len() as f64 + 12.0;
    let mut doc = Svg::new(width, height);
    let ts = text_style();
    doc.text(
        width / 2.0,
        26.0,
        FONT + 4.0,
        "middle",
        &format!(r#"fill="{}" font-weight="bold""#, ink::TEXT),
        "How strong would unmeasured confounding have to be?",
    );
    let mut x0 = (width - panels as f64 * PANEL_W) / 2.0;
    if let Some(p) = rr {
        rr_panel(&mut doc, x0, HEAD, p);
        x0 += PANEL_W;
    }
    if let Some(p) = r2 {
        r2_panel(&mut doc, x0, HEAD, p);
    }
    let ly = HEAD + PANEL_H + 4.0;
    legend(&mut doc, 28.0, ly, legend_w, &items);
    for (i, line) in foot.iter().enumerate() {
        doc.text(
            width / 2.0,
            ly + legend_h + 14.0 + 16.0 * i as f64,
            FONT - 1.0,
            "middle",
            &ts,
            line,
        );
    }
    Ok(doc.finish("Tipping-point frontiers for unmeasured confounding"))
}

/// Points sampled along each frontier.
const FRONTIER_POINTS: usize = 240;

/// The tipping-point figure for an E-value and (for a linear-regression
/// coefficient) its robustness value, with reference points on the
/// partial-R² panel; frontiers are computed here from the sensitivity
/// results.
pub fn figure(
    ev: Option<&EValue>,
    r2: Option<(&Coefficient, &RobustnessValue, Vec<Reference>)>,
) -> Result<String> {
    let rr = match ev {
        Some(e) => Some(RrPanel {
            frontiers: rr_frontiers(e, &[], FRONTIER_POINTS)?,
            references: Vec::new(),
        }),
        None => None,
    };
    let r2 = match r2 {
        Some((coef, rv, refs)) => {
            let pts: Vec<(f64, f64)> = refs.iter().map(|p| (p.x, p.y)).collect();
            let max = r2_axis_max(rv.rv, &pts);
            Some(R2Panel {
                frontiers: r2_frontiers(coef, rv.q, rv.alpha, max, FRONTIER_POINTS)?,
                robustness: rv.clone(),
                references: refs,
            })
        }
        None => None,
    };
    svg(rr.as_ref(), r2.as_ref())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_span_the_range() {
        let t = ticks(0.0, 0.5);
        let want = [0.0, 0.1, 0.2, 0.3, 0.4, 0.5];
        assert_eq!(t.len(), want.len());
        assert!(t.iter().zip(want).all(|(a, b)| (a - b).abs() < 1e-12));
        let t = ticks(1.0, 10.0);
        assert_eq!(t.first(), Some(&1.0));
        assert_eq!(t.last(), Some(&10.0));
        assert!(t.contains(&2.0) && t.contains(&8.0));
        assert_eq!(fmt_tick(0.25, true), "25%");
        assert_eq!(fmt_tick(0.025, true), "2.5%");
        assert_eq!(fmt_tick(2.5, false), "2.5");
    }

    #[test]
    fn no_panel_is_an_error() {
        assert!(svg(None, None).is_err());
    }
}
