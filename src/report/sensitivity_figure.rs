//! The sensitivity figure: how strong a hidden confounder would have to be,
//! set against how strong the measured covariates are.
//!
//! One strip per scale, stacked. Each strip has a horizontal strength axis
//! and two vertical reference lines: the strength that accounts for all of
//! the estimate (solid, with the region beyond it tinted) and the strength
//! that brings the interval to the null (dashed). Below them, one row per
//! yardstick:
//!
//! - risk-ratio strip (E-value, VanderWeele and Ding 2017): the observed
//!   association as a risk ratio;
//! - partial-R² strip (robustness value, Cinelli and Hazlett 2020): each
//!   benchmark covariate, with one marker per multiple, and each
//!   hypothesized confounder. A confounder with partial R² x with the
//!   exposure and y with the outcome is placed at the equal strength s that
//!   would bias the estimate as much ([`equal_strength`]), so a marker right
//!   of the solid line marks a confounder strong enough to account for all
//!   of the estimate.
//!
//! Every text sits in its own row or column, so no label can overprint
//! another: reference-line labels in rows above the strip, yardstick names
//! in a column to its left, notes and legend entries in rows below.

use super::sensitivity_text::{multiple_label, pct, wrap};
use super::svg::{Shape, Svg, ink};
use super::svg::{axis_ceiling, nice_ceiling};
use crate::sensitivity::evalue::{EValue, SCALE_RR};
use crate::sensitivity::robustness::{Adjusted, BenchmarkTable, RobustnessValue, equal_strength};
use crate::{Error, Result};

/// What a marker stands for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Mark {
    /// A hidden confounder this many times as strong as a measured covariate.
    Multiple(f64),
    /// A confounder strength the analyst put forward.
    Hypothesized,
    /// The observed association itself.
    Observed,
}

/// One row of a strip: a label and its markers, in the strip's units
/// (risk ratios, or equal-strength partial R² as a proportion).
#[derive(Debug, Clone, PartialEq)]
pub struct Yardstick {
    /// The row's label.
    pub label: String,
    /// Markers: what each stands for and where.
    pub points: Vec<(Mark, f64)>,
    /// Notes printed under the strip (e.g. a multiple that cannot exist).
    pub notes: Vec<String>,
}

/// The rows of the partial-R² strip for a benchmark table: one per
/// covariate, each multiple at its equal strength.
pub fn benchmark_yardsticks(t: &BenchmarkTable) -> Vec<Yardstick> {
    t.measured
        .iter()
        .map(|cov| {
            let mut points = Vec::new();
            let mut notes = Vec::new();
            for &k in &t.multiples {
                match t.row(&cov.name, k) {
                    Some(r) => points.push((Mark::Multiple(k), equal_strength(r.r2_exposure, r.r2_outcome))),
                    None => notes.push(format!("{}, {}: cannot exist", cov.name, multiple_label(k))),
                }
            }
            Yardstick {
                label: cov.name.clone(),
                points,
                notes,
            }
        })
        .collect()
}

/// The rows of the partial-R² strip for hypothesized confounders.
pub fn hypothesised_yardsticks(rows: &[Adjusted]) -> Vec<Yardstick> {
    rows.iter()
        .map(|a| Yardstick {
            label: format!("hypothesized: {}, {}", pct(a.r2_exposure), pct(a.r2_outcome)),
            points: vec![(Mark::Hypothesized, equal_strength(a.r2_exposure, a.r2_outcome))],
            notes: Vec::new(),
        })
        .collect()
}

/// Figure width, shared by the figures of this family.
pub(super) const WIDTH: f64 = 780.0;
/// Outer margin.
pub(super) const MARGIN: f64 = 24.0;
const FONT: f64 = 12.0;
/// Small text.
pub(super) const SMALL: f64 = 11.0;
/// Height of a legend row.
pub(super) const ROW: f64 = 26.0;
/// Height of a text line.
pub(super) const LINE: f64 = 17.0;
const PLOT_MIN: f64 = 420.0;
const FOOTNOTE: &str = "One hidden confounder is assumed, described by how strongly it is tied to the exposure \
and to the outcome beyond the measured covariates. The lines show how strong it would have to be, not that it \
is absent; judge whether such a confounder is plausible with subject-matter knowledge.";

/// A conservative width of `s` in pixels at font size `size` (wider than
/// most sans-serif text), used for every layout decision here.
pub fn label_width(s: &str, size: f64) -> f64 {
    s.chars().count() as f64 * size * 0.62
}

/// Ticks from `lo` to `hi` at a round step, `lo` and `hi` included.
pub(super) fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    let step = nice_ceiling((hi - lo) / 6.0);
    let mut t = vec![lo];
    let mut k = (lo / step).floor() + 1.0;
    while k * step < hi - step * 1e-9 {
        if k * step > lo + step * 0.4 {
            t.push(k * step);
        }
        k += 1.0;
    }
    if hi - t[t.len() - 1] < step * 0.4 && t.len() > 1 {
        t.pop();
    }
    t.push(hi);
    t
}

fn fmt_tick(v: f64, percent: bool) -> String {
    let v = if percent { v * 100.0 } else { v };
    let s = if (v - v.round()).abs() < 1e-9 {
        format!("{v:.0}")
    } else {
        format!("{v:.1}")
    };
    if percent { format!("{s}%") } else { s }
}

/// One strip of the figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Strip {
    /// Heading lines.
    pub title: String,
    /// Axis title.
    pub axis: String,
    /// Axis range.
    pub lo: f64,
    /// Axis range.
    pub hi: f64,
    /// Tick labels as percentages.
    pub percent: bool,
    /// Strength that accounts for all of the estimate, with its label.
    pub estimate_line: (f64, String),
    /// Strength that brings the interval to the null, with its label.
    pub interval_line: Option<(f64, String)>,
    /// The rows.
    pub rows: Vec<Yardstick>,
}

/// The risk-ratio strip of an E-value.
pub fn evalue_strip(e: &EValue) -> Strip {
    let rr = if e.rr < 1.0 { 1.0 / e.rr } else { e.rr };
    let interval = e.ci_limit.map(|l| {
        if l > 1.0 {
            (l, format!("interval reaches 1: {l:.2}"))
        } else {
            (1.0, "interval reaches 1 already".to_string())
        }
    });
    let reach = (1.25 * e.point).max(1.1 * rr).max(2.0);
    let what = match (e.rr < 1.0, e.scale == SCALE_RR) {
        (false, true) => "observed risk ratio",
        (true, true) => "observed risk ratio, inverted",
        (false, false) => "observed, as a risk ratio",
        (true, false) => "observed, as a risk ratio, inverted",
    };
    Strip {
        title: format!("Risk-ratio scale (E-value; {})", e.scale),
        axis: "risk ratio tying a hidden confounder to both the exposure and the outcome".into(),
        lo: 1.0,
        hi: axis_ceiling(reach),
        percent: false,
        estimate_line: (e.point, format!("accounts for all of it: {:.2}", e.point)),
        interval_line: interval,
        rows: vec![Yardstick {
            label: what.to_string(),
            points: vec![(Mark::Observed, rr)],
            notes: Vec::new(),
        }],
    }
}

/// The partial-R² strip of a robustness value with its yardsticks.
pub fn robustness_strip(rv: &RobustnessValue, rows: Vec<Yardstick>) -> Strip {
    let whole = (rv.q - 1.0).abs() < 1e-12;
    let (all, reach) = if whole {
        ("accounts for all of it".to_string(), "zero".to_string())
    } else {
        (
            format!("accounts for {:.0}% of it", 100.0 * rv.q),
            "that value".to_string(),
        )
    };
    let level = format!("{:.0}%", 100.0 * (1.0 - rv.alpha));
    let far = rows
        .iter()
        .flat_map(|r| r.points.iter().map(|p| p.1))
        .fold(1.25 * rv.rv, f64::max)
        .max(0.02);
    Strip {
        title: "Partial R\u{b2} scale (robustness value; linear outcome model)".into(),
        axis: "share of leftover variance explained in both the exposure and the outcome".into(),
        lo: 0.0,
        hi: axis_ceiling(far * 1.05).min(1.0),
        percent: true,
        estimate_line: (rv.rv, format!("{all}: {}", pct(rv.rv))),
        interval_line: Some(if rv.rv_alpha > 0.0 {
            (
                rv.rv_alpha,
                format!("{level} interval reaches {reach}: {}", pct(rv.rv_alpha)),
            )
        } else {
            (0.0, format!("{level} interval reaches {reach} already"))
        }),
        rows,
    }
}

/// Marker shape and style: multiples cycle through shapes in greyscale.
fn marker(m: Mark, multiples: &[f64]) -> (Shape, String) {
    let filled = format!(r#"fill="{}" stroke="white" stroke-width="1""#, ink::TEXT);
    let hollow = format!(r#"fill="white" stroke="{}" stroke-width="1.8""#, ink::TEXT);
    match m {
        Mark::Observed => (Shape::Square, format!(r#"fill="{}" stroke="white""#, ink::DEEP)),
        Mark::Hypothesized => (
            Shape::Triangle,
            format!(
                r#"fill="{}" stroke="{}" stroke-width="1.2""#,
                ink::MUTED,
                ink::TEXT
            ),
        ),
        Mark::Multiple(k) => {
            let i = multiples.iter().position(|&x| x == k).unwrap_or(0);
            match i % 4 {
                0 => (Shape::Circle, hollow),
                1 => (Shape::Circle, filled),
                2 => (Shape::Diamond, filled),
                _ => (Shape::Square, hollow),
            }
        }
    }
}

fn solid() -> String {
    format!(r#"stroke="{}" stroke-width="2.4""#, ink::DEEP)
}

fn dashed() -> String {
    format!(
        r#"stroke="{}" stroke-width="2.4" stroke-dasharray="7 4""#,
        ink::WARM
    )
}

fn text_style() -> String {
    format!(r#"fill="{}""#, ink::TEXT)
}

/// Lines of `text` wrapped to `width` pixels at `size`.
pub(super) fn lines(text: &str, width: f64, size: f64) -> Vec<String> {
    let chars = (width / label_width("x", size)).floor().max(10.0) as usize;
    wrap(text, chars, "").lines().map(String::from).collect()
}

/// Height of a strip drawn with `label_w` for names.
fn strip_height(s: &Strip, plot_w: f64) -> f64 {
    let refs = 1 + s.interval_line.is_some() as usize;
    let notes: usize = s.rows.iter().map(|r| r.notes.len()).sum();
    let title = lines(&s.title, WIDTH - 2.0 * MARGIN, FONT + 1.0).len();
    let axis = lines(&s.axis, plot_w, SMALL).len();
    title as f64 * LINE
        + 6.0
        + refs as f64 * LINE
        + 6.0
        + s.rows.len() as f64 * ROW
        + 26.0
        + axis as f64 * LINE
        + notes as f64 * LINE
        + 18.0
}

/// Draws one strip with its top at `y`; returns the y below it.
fn draw_strip(c: &mut Svg, s: &Strip, y: f64, plot_x: f64, plot_w: f64, multiples: &[f64]) -> f64 {
    let ts = text_style();
    let px = |v: f64| plot_x + (v.clamp(s.lo, s.hi) - s.lo) / (s.hi - s.lo) * plot_w;
    let mut y = y;
    for l in lines(&s.title, WIDTH - 2.0 * MARGIN, FONT + 1.0) {
        y += LINE;
        c.text(
            MARGIN,
            y,
            FONT + 1.0,
            "start",
            &format!(r#"{ts} font-weight="bold""#),
            &l,
        );
    }
    y += 6.0;
    // Reference-line labels, one row each, rightmost line first. A line
    // runs down from its label's row, so every later label is put to the
    // left of its own line, away from the lines above it.
    let mut refs = vec![(s.estimate_line.0, s.estimate_line.1.clone(), solid())];
    if let Some((v, l)) = &s.interval_line {
        refs.push((*v, l.clone(), dashed()));
    }
    refs.sort_by(|a, b| b.0.total_cmp(&a.0));
    let label_top = y;
    for (i, (v, label, _)) in refs.iter().enumerate() {
        y += LINE;
        let x = px(*v);
        let w = label_width(label, SMALL);
        let (tx, anchor) = if i == 0 && x + 6.0 + w <= plot_x + plot_w {
            (x + 6.0, "start")
        } else {
            (x - 6.0, "end")
        };
        c.text(tx, y - 3.0, SMALL, anchor, &ts, label);
    }
    y += 6.0;
    let top = y;
    let bottom = top + s.rows.len() as f64 * ROW;
    // The region beyond the estimate line, then the plot frame.
    let shade_x = px(s.estimate_line.0);
    if shade_x < plot_x + plot_w {
        c.rect(
            shade_x,
            top,
            plot_x + plot_w - shade_x,
            bottom - top,
            &format!(r#"fill="{}" stroke="none""#, ink::PALE),
        );
    }
    c.rect(
        plot_x,
        top,
        plot_w,
        bottom - top,
        &format!(r#"fill="none" stroke="{}" stroke-width="0.8""#, ink::MUTED),
    );
    // Row guides, names and markers.
    for (i, r) in s.rows.iter().enumerate() {
        let cy = top + (i as f64 + 0.5) * ROW;
        c.line(
            plot_x,
            cy,
            plot_x + plot_w,
            cy,
            &format!(
                r#"stroke="{}" stroke-width="0.5" stroke-dasharray="1 3""#,
                ink::MUTED
            ),
        );
        c.text(plot_x - 10.0, cy + 4.0, FONT, "end", &ts, &r.label);
        let xs: Vec<f64> = r.points.iter().map(|p| px(p.1)).collect();
        if xs.len() > 1 {
            let lo = xs.iter().cloned().fold(f64::INFINITY, f64::min);
            let hi = xs.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            c.line(
                lo,
                cy,
                hi,
                cy,
                &format!(r#"stroke="{}" stroke-width="2""#, ink::TEXT),
            );
        }
    }
    // Reference lines over the rows, from their label row to the axis.
    for (i, (v, _, style)) in refs.iter().enumerate() {
        let x = px(*v);
        c.line(x, label_top + (i as f64) * LINE + 4.0, x, bottom, style);
    }
    for (i, r) in s.rows.iter().enumerate() {
        let cy = top + (i as f64 + 0.5) * ROW;
        for &(m, v) in &r.points {
            let (shape, style) = marker(m, multiples);
            c.marker(shape, px(v), cy, 11.0, &style);
        }
    }
    // Axis with ticks.
    let axis = format!(r#"stroke="{}" stroke-width="1""#, ink::TEXT);
    c.line(plot_x, bottom, plot_x + plot_w, bottom, &axis);
    for t in ticks(s.lo, s.hi) {
        let x = px(t);
        c.line(x, bottom, x, bottom + 5.0, &axis);
        c.text(x, bottom + 18.0, SMALL, "middle", &ts, &fmt_tick(t, s.percent));
    }
    y = bottom + 26.0;
    for l in lines(&s.axis, plot_w, SMALL) {
        y += LINE;
        c.text(plot_x + plot_w / 2.0, y - 4.0, SMALL, "middle", &ts, &l);
    }
    for n in s.rows.iter().flat_map(|r| &r.notes) {
        y += LINE;
        c.text(plot_x, y - 4.0, SMALL, "start", &ts, n);
    }
    y + 18.0
}

/// The sensitivity figure as an SVG document, with the strips given (at
/// least one).
pub fn svg(strips: &[Strip]) -> Result<String> {
    if strips.is_empty() {
        return Err(Error::input(
            "a sensitivity figure needs a risk-ratio or a partial-R2 strip",
        ));
    }
    let multiples: Vec<f64> = {
        let mut m = Vec::new();
        for s in strips {
            for r in &s.rows {
                for (mark, _) in &r.points {
                    if let Mark::Multiple(k) = mark
                        && !m.contains(k)
                    {
                        m.push(*k);
                    }
                }
            }
        }
        m
    };
    let names = strips
        .iter()
        .flat_map(|s| &s.rows)
        .map(|r| label_width(&r.label, FONT))
        .fold(0.0, f64::max);
    // The name column also leaves room for a reference label put left of
    // a line at the very start of the axis.
    let refs = strips
        .iter()
        .flat_map(|s| std::iter::once(&s.estimate_line.1).chain(s.interval_line.iter().map(|l| &l.1)))
        .map(|l| label_width(l, SMALL) + 6.0)
        .fold(0.0, f64::max);
    let label_col = names.max(refs - 10.0) + 20.0;
    let width = WIDTH.max(2.0 * MARGIN + label_col + PLOT_MIN);
    let plot_x = MARGIN + label_col;
    let plot_w = width - plot_x - MARGIN - 10.0;
    // Legend entries: markers and lines actually drawn.
    let mut legend: Vec<(Option<Mark>, Option<String>, String)> = vec![(
        None,
        Some(solid()),
        "strong enough to account for all of the estimate".into(),
    )];
    if strips.iter().any(|s| s.interval_line.is_some()) {
        legend.push((
            None,
            Some(dashed()),
            "strong enough for the interval to reach the null".into(),
        ));
    }
    let has = |f: &dyn Fn(&Mark) -> bool| {
        strips
            .iter()
            .flat_map(|s| &s.rows)
            .flat_map(|r| &r.points)
            .any(|(m, _)| f(m))
    };
    if has(&|m| *m == Mark::Observed) {
        legend.push((Some(Mark::Observed), None, "observed association".into()));
    }
    for &k in &multiples {
        legend.push((
            Some(Mark::Multiple(k)),
            None,
            format!("hidden confounder {} as the covariate", multiple_label(k)),
        ));
    }
    if has(&|m| *m == Mark::Hypothesized) {
        legend.push((Some(Mark::Hypothesized), None, "hypothesized confounder".into()));
    }
    // Legend in flowing rows: an entry moves to a new row when it would
    // pass the right margin.
    let entry_w = |l: &str| 40.0 + label_width(l, SMALL) + 22.0;
    let mut legend_pos = Vec::new();
    let (mut lx, mut lrow) = (MARGIN, 0usize);
    for (_, _, l) in &legend {
        if lx > MARGIN && lx + entry_w(l) > width - MARGIN {
            lx = MARGIN;
            lrow += 1;
        }
        legend_pos.push((lx, lrow));
        lx += entry_w(l);
    }
    let subtitle = lines(
        "Each row is a yardstick; a marker right of a line is strong enough for what the line says. \
         Covariates and hypothesized confounders are placed at the equal share that would bias the estimate as much.",
        width - 2.0 * MARGIN,
        SMALL,
    );
    let foot = lines(FOOTNOTE, width - 2.0 * MARGIN, SMALL);
    let mut height = 44.0 + subtitle.len() as f64 * LINE + 8.0;
    for s in strips {
        height += strip_height(s, plot_w);
    }
    height += (lrow + 1) as f64 * ROW + 8.0 + foot.len() as f64 * LINE + 12.0;
    let mut c = Svg::new(width, height);
    let ts = text_style();
    c.text(
        MARGIN,
        30.0,
        FONT + 5.0,
        "start",
        &format!(r#"{ts} font-weight="bold""#),
        "How strong would a hidden confounder have to be?",
    );
    let mut y = 44.0;
    for l in &subtitle {
        y += LINE;
        c.text(MARGIN, y - 4.0, SMALL, "start", &ts, l);
    }
    y += 8.0;
    for s in strips {
        y = draw_strip(&mut c, s, y, plot_x, plot_w, &multiples);
    }
    for ((mark, line, label), (lx, row)) in legend.iter().zip(&legend_pos) {
        let cy = y + *row as f64 * ROW + ROW / 2.0;
        if let Some(style) = line {
            c.line(lx + 2.0, cy, lx + 32.0, cy, style);
        }
        if let Some(m) = mark {
            let (shape, style) = marker(*m, &multiples);
            c.marker(shape, lx + 17.0, cy, 11.0, &style);
        }
        c.text(lx + 40.0, cy + 4.0, SMALL, "start", &ts, label);
    }
    y += (lrow + 1) as f64 * ROW + 8.0;
    for l in &foot {
        y += LINE;
        c.text(MARGIN, y - 4.0, SMALL, "start", &ts, l);
    }
    Ok(c.finish("How strong would a hidden confounder have to be?"))
}

/// The figure for an E-value and (for a linear-regression coefficient) a
/// robustness value with its yardstick rows.
pub fn figure(ev: Option<&EValue>, r2: Option<(&RobustnessValue, Vec<Yardstick>)>) -> Result<String> {
    let mut strips = Vec::new();
    if let Some(e) = ev {
        strips.push(evalue_strip(e));
    }
    if let Some((rv, rows)) = r2 {
        strips.push(robustness_strip(rv, rows));
    }
    svg(&strips)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sensitivity::evalue;
    use crate::sensitivity::robustness::{Coefficient, Covariate, benchmark_table, robustness_value};

    /// Every text's box: width by [`label_width`] (conservative), height
    /// from the font size (ascent 0.8, descent 0.25), placed by its anchor.
    pub(crate) fn text_boxes(svg: &str) -> Vec<(String, [f64; 4])> {
        let doc = roxmltree::Document::parse(svg).expect("the figure is well-formed XML");
        doc.descendants()
            .filter(|n| n.has_tag_name("text"))
            .map(|n| {
                let num = |a: &str| n.attribute(a).unwrap().parse::<f64>().unwrap();
                let (x, y, size) = (num("x"), num("y"), num("font-size"));
                let s = n.text().unwrap_or("").to_string();
                let w = label_width(&s, size);
                let x0 = match n.attribute("text-anchor") {
                    Some("end") => x - w,
                    Some("middle") => x - w / 2.0,
                    _ => x,
                };
                (s, [x0, y - 0.8 * size, x0 + w, y + 0.25 * size])
            })
            .collect()
    }

    fn assert_no_overlap(svg: &str) {
        let boxes = text_boxes(svg);
        let doc = roxmltree::Document::parse(svg).unwrap();
        for l in doc.descendants().filter(|n| n.has_tag_name("line")) {
            let v = |a: &str| l.attribute(a).unwrap().parse::<f64>().unwrap();
            let (x, y1, y2) = (v("x1"), v("y1").min(v("y2")), v("y1").max(v("y2")));
            if v("x2") != x {
                continue;
            }
            for (t, b) in &boxes {
                let crosses = x > b[0] && x < b[2] && y2 > b[1] && y1 < b[3];
                assert!(!crosses, "a line at x = {x} crosses '{t}' {b:?}");
            }
        }
        let width: f64 = roxmltree::Document::parse(svg)
            .unwrap()
            .root_element()
            .attribute("width")
            .unwrap()
            .parse()
            .unwrap();
        for (i, (a, p)) in boxes.iter().enumerate() {
            assert!(p[0] >= 0.0 && p[2] <= width, "'{a}' leaves the figure: {p:?}");
            for (b, q) in &boxes[i + 1..] {
                let apart = p[2] <= q[0] || q[2] <= p[0] || p[3] <= q[1] || q[3] <= p[1];
                assert!(apart, "'{a}' {p:?} overprints '{b}' {q:?}");
            }
        }
    }

    /// Covariates with long, similar names and nearly equal strengths (the
    /// NHEFS terms that overprinted in the earlier figure), an E-value, and
    /// an impossible multiple: no two texts share any space.
    #[test]
    fn no_label_overprints_another() {
        let c = Coefficient::new(3.46, 0.44, 1540.0).unwrap();
        let rv = robustness_value(&c, 1.0, 0.05).unwrap();
        let names = [
            ("wt71^2", 0.0005, 0.002),
            ("smokeintensity^2", 0.0098, 0.0008),
            ("smokeyrs^2", 0.002, 0.0009),
            ("role=warehouse", 0.0059, 0.0137),
            ("role=office", 0.0231, 0.0546),
            ("baseline_pain", 0.032, 0.449),
        ];
        let covs: Vec<Covariate> = names
            .iter()
            .map(|&(n, d, y)| Covariate {
                name: n.into(),
                r2_exposure: d,
                r2_outcome: y,
            })
            .collect();
        let t = benchmark_table(&c, &covs, &[0.5, 1.0, 2.0, 3.0], 0.05, "named").unwrap();
        assert!(!t.skipped.is_empty());
        let e = evalue::continuous(3.46, 0.44, 7.9, 0.95).unwrap();
        let svg = figure(Some(&e), Some((&rv, benchmark_yardsticks(&t)))).unwrap();
        assert_no_overlap(&svg);
        let texts: Vec<String> = text_boxes(&svg).into_iter().map(|(s, _)| s).collect();
        assert!(texts.iter().any(|s| s == "smokeintensity^2"));
        assert!(texts.iter().any(|s| s.contains("cannot exist")));
        // A reference line near the right edge puts its label to its left.
        let e = evalue::risk_ratio(1.02, Some((0.99, 1.05))).unwrap();
        assert_no_overlap(&figure(Some(&e), None).unwrap());
    }

    #[test]
    fn ticks_are_round_and_span_the_range() {
        let t = ticks(0.0, 0.5);
        let want = [0.0, 0.1, 0.2, 0.3, 0.4, 0.5];
        assert_eq!(t.len(), want.len());
        assert!(t.iter().zip(want).all(|(a, b)| (a - b).abs() < 1e-12));
        let t = ticks(1.0, 10.0);
        assert_eq!(t.first(), Some(&1.0));
        assert_eq!(t.last(), Some(&10.0));
        assert_eq!(fmt_tick(0.25, true), "25%");
        assert_eq!(fmt_tick(0.025, true), "2.5%");
        assert_eq!(fmt_tick(2.5, false), "2.5");
    }

    #[test]
    fn no_strip_is_an_error() {
        assert!(svg(&[]).is_err());
    }
}
