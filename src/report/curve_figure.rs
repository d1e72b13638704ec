//! The dose-response figure: the mean outcome at each evaluated dose of a
//! continuous exposure, one curve per estimation method, each with its
//! pointwise confidence band.
//!
//! # API
//!
//! Fill a [`CurvePlot`] and call [`curve_svg`]; the result is a complete SVG
//! document (same input, same bytes).
//!
//! - [`CurvePlot::title`], [`CurvePlot::x_label`] (the exposure and the
//!   word "dose"), [`CurvePlot::y_label`] (the mean outcome) and
//!   [`CurvePlot::level`] (the confidence level of the intervals, e.g. 0.95,
//!   quoted by the caption).
//! - [`CurvePlot::series`]: one [`CurveSeries`] per method, its legend label
//!   and its [`CurvePoint`]s (dose `x`, `estimate`, `lower`, `upper`), drawn
//!   in dose order. A bound that is NaN or infinite means no interval could
//!   be formed at that dose: the estimate is still drawn and joined, the
//!   band is left out there. A run of doses with intervals is drawn as a
//!   shaded band; a lone dose with an interval as a bar. A point whose dose
//!   or estimate is not finite cannot be placed and breaks the line.
//! - [`CurvePlot::marks`]: doses to point out (such as the two doses of a
//!   requested contrast), each a dashed vertical line with its label above
//!   the plot.
//!
//! # Layout
//!
//! From the top: the title (wrapped), the legend in flowing rows, one row
//! per marked dose's label, the plot, the dose axis and its title, and the
//! caption. Legend and labels sit outside the plot, so none can overprint
//! the data or each other; labels too long for their place end in an
//! ellipsis. Series differ in colour, dash pattern and marker shape, so the
//! figure reads in greyscale (four colours and dash patterns; the marker
//! shifts beyond four series).
//! Axis limits are round numbers around the data (a flat curve or a single
//! dose is given a range around its value); values of very large or very
//! small magnitude are labelled in units of a power of ten, named in the
//! axis title.

use super::sensitivity_figure::{LINE, MARGIN, ROW, SMALL, WIDTH, label_width, lines, ticks};
use super::svg::{Shape, Svg, ink, nice_ceiling};

/// One evaluated dose of a curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurvePoint {
    /// The dose.
    pub x: f64,
    /// The estimated mean outcome at the dose.
    pub estimate: f64,
    /// The lower confidence limit (NaN when none could be formed).
    pub lower: f64,
    /// The upper confidence limit (NaN when none could be formed).
    pub upper: f64,
}

/// One curve: an estimation method's estimates over the doses.
#[derive(Debug, Clone, PartialEq)]
pub struct CurveSeries {
    /// The legend label (the method).
    pub label: String,
    /// The evaluated doses, in any order.
    pub points: Vec<CurvePoint>,
}

/// A dose to point out on the figure.
#[derive(Debug, Clone, PartialEq)]
pub struct MarkedDose {
    /// The dose.
    pub x: f64,
    /// Its label, printed above the plot.
    pub label: String,
}

/// Everything the dose-response figure shows.
#[derive(Debug, Clone, PartialEq)]
pub struct CurvePlot {
    /// The figure's title.
    pub title: String,
    /// The dose axis title.
    pub x_label: String,
    /// The outcome axis title.
    pub y_label: String,
    /// The confidence level of the intervals, as a proportion.
    pub level: f64,
    /// One curve per method.
    pub series: Vec<CurveSeries>,
    /// Doses to point out.
    pub marks: Vec<MarkedDose>,
}

const TITLE: f64 = 17.0;
const PLOT_H: f64 = 340.0;
/// Gap between the plot frame and the data, so markers stay inside it.
const INSET: f64 = 10.0;
const MARKER: f64 = 9.0;
pub(super) const CAUTION: &str =
    "An estimate is only as valid as the declared graph and the usual assumptions.";

/// Colour, dash pattern and marker of the `i`th series.
/// Beyond four series the marker shifts, so no two of the first sixteen
/// series look alike.
pub(super) fn style(i: usize) -> (&'static str, &'static str, Shape) {
    let shapes = [Shape::Circle, Shape::Square, Shape::Triangle, Shape::Diamond];
    let shape = shapes[(i + i / 4) % 4];
    match i % 4 {
        0 => (ink::DEEP, "", shape),
        1 => (ink::WARM, r#" stroke-dasharray="7 4""#, shape),
        2 => (ink::TEXT, r#" stroke-dasharray="2 3""#, shape),
        _ => (ink::MUTED, r#" stroke-dasharray="9 3 2 3""#, shape),
    }
}

pub(super) fn line_style(i: usize) -> String {
    let (colour, dash, _) = style(i);
    format!(r#"stroke="{colour}" stroke-width="2.2" stroke-linejoin="round"{dash}"#)
}

/// A band's fill and faint edge; lighter when three or more bands may
/// overlap, so that each stays traceable by its edge.
pub(super) fn band_style(i: usize, count: usize) -> String {
    let colour = style(i).0;
    let fill = if count <= 2 { 0.16 } else { 0.1 };
    format!(
        r#"fill="{colour}" fill-opacity="{fill}" stroke="{colour}" stroke-opacity="0.45" stroke-width="0.7""#
    )
}

fn marker_style(i: usize) -> String {
    format!(r#"fill="{}" stroke="white" stroke-width="1""#, style(i).0)
}

pub(super) fn text_style() -> String {
    format!(r#"fill="{}""#, ink::TEXT)
}

/// `s` cut to `width` pixels at `size`, ending in an ellipsis when cut.
fn fit(s: &str, width: f64, size: f64) -> String {
    if label_width(s, size) <= width {
        return s.to_string();
    }
    let mut out = String::new();
    for c in s.chars() {
        if label_width(&out, size) + label_width("x\u{2026}", size) > width {
            break;
        }
        out.push(c);
    }
    format!("{}\u{2026}", out.trim_end())
}

/// Round axis limits around the values `lo` ≤ `hi`: multiples of the step
/// that [`ticks`] then uses, so that every tick is a round number.
fn limits(lo: f64, hi: f64) -> (f64, f64) {
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else if lo != 0.0 {
        (lo - 0.1 * lo.abs(), hi + 0.1 * hi.abs())
    } else {
        (-1.0, 1.0)
    };
    let mut step = nice_ceiling((hi - lo) / 6.0);
    loop {
        let a = (lo / step + 1e-9).floor() * step;
        let b = (hi / step - 1e-9).ceil() * step;
        let next = nice_ceiling((b - a) / 6.0);
        if next <= step * (1.0 + 1e-9) {
            return (a, b);
        }
        step = next;
    }
}

/// The dose axis: the range of the doses themselves (no empty stretch past
/// the last dose), with the round ticks inside it; a single dose gets a
/// round range around it.
fn dose_axis((lo, hi): (f64, f64)) -> (f64, f64, Vec<f64>) {
    let (a, b) = limits(lo, hi);
    let all = ticks(a, b);
    let slack = 1e-9 * (hi - lo);
    let inside: Vec<f64> = all
        .iter()
        .copied()
        .filter(|&t| t >= lo - slack && t <= hi + slack)
        .collect();
    if hi > lo && inside.len() >= 2 {
        (lo, hi, inside)
    } else {
        (a, b, all)
    }
}

/// The range of the finite values, or (0, 1) when there are none.
fn span(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    if lo > hi { (0.0, 1.0) } else { (lo, hi) }
}

/// Tick labels: in units of a power of ten when the values are very large
/// or very small, with as many decimals as the round ticks need.
struct TickLabels {
    power: i32,
    labels: Vec<String>,
}

impl TickLabels {
    fn new(ticks: &[f64]) -> Self {
        let big = ticks.iter().fold(0.0f64, |m, t| m.max(t.abs()));
        let power = if big >= 1e5 || (big > 0.0 && big < 1e-3) {
            big.log10().floor() as i32
        } else {
            0
        };
        let scaled: Vec<f64> = ticks
            .iter()
            .map(|&t| {
                if power >= 0 {
                    t / 10f64.powi(power)
                } else {
                    t * 10f64.powi(-power)
                }
            })
            .collect();
        let decimals = (0..12)
            .find(|&d| {
                scaled.iter().all(|v| {
                    let w = v * 10f64.powi(d);
                    (w - w.round()).abs() < 1e-6
                })
            })
            .unwrap_or(12) as usize;
        let labels = scaled
            .iter()
            .map(|v| {
                let s = format!("{v:.decimals$}");
                if s.trim_start_matches('-').chars().all(|c| c == '0' || c == '.') {
                    s.trim_start_matches('-').to_string()
                } else {
                    s
                }
            })
            .collect();
        TickLabels { power, labels }
    }

    /// What the axis title adds: the unit's power of ten, if any.
    fn suffix(&self) -> String {
        if self.power == 0 {
            return String::new();
        }
        let sup: String = self
            .power
            .to_string()
            .chars()
            .map(|c| match c {
                '-' => '\u{207b}',
                '1' => '\u{b9}',
                '2' => '\u{b2}',
                '3' => '\u{b3}',
                d => char::from_u32(0x2070 + d.to_digit(10).unwrap_or(0)).unwrap_or(d),
            })
            .collect();
        format!(" (\u{d7}10{sup})")
    }
}

/// The level as a percentage, without a needless decimal.
fn level_text(level: f64) -> String {
    let p = 100.0 * level;
    if (p - p.round()).abs() < 1e-9 {
        format!("{p:.0}%")
    } else {
        format!("{p:.1}%")
    }
}

/// A series' placeable points in dose order, and the runs between breaks.
fn runs(series: &CurveSeries) -> Vec<Vec<CurvePoint>> {
    let mut pts = series.points.clone();
    pts.sort_by(|a, b| a.x.total_cmp(&b.x));
    let mut out: Vec<Vec<CurvePoint>> = vec![Vec::new()];
    for p in pts {
        if p.x.is_finite() && p.estimate.is_finite() {
            if let Some(r) = out.last_mut() {
                r.push(p);
            }
        } else if !out.last().is_some_and(|r| r.is_empty()) {
            out.push(Vec::new());
        }
    }
    out.retain(|r| !r.is_empty());
    out
}

fn has_interval(p: &CurvePoint) -> bool {
    p.lower.is_finite() && p.upper.is_finite()
}

/// The stretches of a run whose doses all have intervals: each is drawn
/// as a band, or as a bar when it holds a single dose.
fn interval_parts(run: &[CurvePoint]) -> impl Iterator<Item = &[CurvePoint]> {
    run.split(|p| !has_interval(p)).filter(|part| !part.is_empty())
}

/// Rows for the labels of marked doses (at pixel positions, with labels
/// already cut to half the plot), top row first, each with the side of its
/// line its label takes (true: right). A line runs from its label's row
/// down through every row below it, so rows are filled from the bottom up,
/// each with a label whose span holds no line of a mark still to be placed
/// above it; when no label fits so, the one with the most room is cut to it.
fn place_marks(mut pending: Vec<(f64, String)>) -> Vec<(f64, String, bool)> {
    pending.sort_by(|a, b| b.0.total_cmp(&a.0));
    let span = |x: f64, w: f64, right: bool| {
        if right {
            (x + 6.0, x + 6.0 + w)
        } else {
            (x - 6.0 - w, x - 6.0)
        }
    };
    let mut rows = Vec::new();
    while !pending.is_empty() {
        // Room on each side of mark i before another pending line or the
        // figure's edge.
        let room = |i: usize, right: bool| {
            let x = pending[i].0;
            let others = pending
                .iter()
                .enumerate()
                .filter(|&(j, _)| j != i)
                .map(|(_, m)| m.0);
            if right {
                others.filter(|&o| o > x).fold(WIDTH - MARGIN, f64::min) - x - 8.0
            } else {
                x - others.filter(|&o| o < x).fold(MARGIN, f64::max) - 8.0
            }
        };
        let fits = (0..pending.len())
            .flat_map(|i| [(i, true), (i, false)])
            .find(|&(i, right)| {
                let (a, b) = span(pending[i].0, label_width(&pending[i].1, SMALL), right);
                a >= MARGIN && b <= WIDTH - MARGIN && b - a <= room(i, right) + 2.0
            });
        let (i, right, label) = match fits {
            Some((i, right)) => (i, right, pending[i].1.clone()),
            None => {
                let (i, right) = (0..pending.len())
                    .flat_map(|i| [(i, true), (i, false)])
                    .max_by(|a, b| room(a.0, a.1).total_cmp(&room(b.0, b.1)))
                    .unwrap_or((0, true));
                (i, right, fit(&pending[i].1, room(i, right).max(0.0), SMALL))
            }
        };
        let (x, _) = pending.remove(i);
        rows.push((x, label, right));
    }
    rows.reverse();
    rows
}

/// The dose-response figure as an SVG document.
pub fn curve_svg(plot: &CurvePlot) -> String {
    let ts = text_style();
    let series_runs: Vec<Vec<Vec<CurvePoint>>> = plot.series.iter().map(runs).collect();
    let placed = || series_runs.iter().flatten().flatten();
    let (x_lo, x_hi, x_ticks) = dose_axis(span(placed().map(|p| p.x).chain(plot.marks.iter().map(|m| m.x))));
    let (y_lo, y_hi) = span(placed().flat_map(|p| match has_interval(p) {
        true => vec![p.estimate, p.lower, p.upper],
        false => vec![p.estimate],
    }));
    let (y_lo, y_hi) = limits(y_lo, y_hi);
    let y_ticks = ticks(y_lo, y_hi);
    let x_labels = TickLabels::new(&x_ticks);
    let y_labels = TickLabels::new(&y_ticks);
    let tick_w = y_labels
        .labels
        .iter()
        .map(|l| label_width(l, SMALL))
        .fold(0.0, f64::max);
    let plot_x = MARGIN + LINE + 8.0 + tick_w + 8.0;
    let plot_w = WIDTH - plot_x - MARGIN;
    let full = WIDTH - 2.0 * MARGIN;

    // Legend entries in flowing rows.
    let entry_w = |l: &str| 44.0 + label_width(l, SMALL) + 22.0;
    let legend: Vec<String> = plot
        .series
        .iter()
        .map(|s| fit(&s.label, full - 66.0, SMALL))
        .collect();
    let mut legend_pos = Vec::new();
    let (mut lx, mut rows) = (MARGIN, 0usize);
    for l in &legend {
        if lx > MARGIN && lx + entry_w(l) > WIDTH - MARGIN {
            lx = MARGIN;
            rows += 1;
        }
        legend_pos.push((lx, rows));
        lx += entry_w(l);
    }
    let legend_rows = if legend.is_empty() { 0 } else { rows + 1 };

    let title: Vec<String> = lines(&plot.title, full, TITLE)
        .iter()
        .map(|l| fit(l, full, TITLE))
        .collect();
    let x_title: Vec<String> = lines(&format!("{}{}", plot.x_label, x_labels.suffix()), plot_w, SMALL)
        .iter()
        .map(|l| fit(l, plot_w, SMALL))
        .collect();
    let parts = || series_runs.iter().flatten().flat_map(|r| interval_parts(r));
    let any_bar = parts().any(|p| p.len() == 1);
    let any_band = parts().any(|p| p.len() > 1);
    let any_missing = placed().any(|p| !has_interval(p));
    let level = level_text(plot.level);
    let mut caption = match (any_band, any_bar) {
        (true, true) => format!(
            "Bands and bars: pointwise {level} confidence intervals, each for its own dose, not for the whole curve at once."
        ),
        (true, false) => format!(
            "Shaded bands: pointwise {level} confidence intervals, each for its own dose, not for the whole curve at once."
        ),
        (false, true) => format!("Bars: pointwise {level} confidence intervals, each for its own dose."),
        (false, false) => format!("No {level} confidence interval could be formed at any dose."),
    };
    if any_missing && (any_band || any_bar) {
        caption.push_str(" Where no interval could be formed, only the estimate is drawn.");
    }
    if placed().next().is_none() {
        caption = "No estimate could be placed on the figure.".to_string();
    }
    let caption: Vec<String> = lines(&caption, full, SMALL)
        .into_iter()
        .chain(std::iter::once(CAUTION.to_string()))
        .collect();

    let title_h = title.len() as f64 * (TITLE + 5.0);
    let marks_top = MARGIN + title_h + 8.0 + legend_rows as f64 * ROW + 4.0;
    let top = marks_top + plot.marks.len() as f64 * LINE + 8.0;
    let bottom = top + PLOT_H;
    let x_title_top = bottom + 30.0;
    let caption_top = x_title_top + x_title.len() as f64 * LINE + 10.0;
    let height = caption_top + caption.len() as f64 * LINE + MARGIN;

    let px = |v: f64| plot_x + INSET + (v - x_lo) / (x_hi - x_lo) * (plot_w - 2.0 * INSET);
    let py = |v: f64| bottom - INSET - (v - y_lo) / (y_hi - y_lo) * (PLOT_H - 2.0 * INSET);

    let mut c = Svg::new(WIDTH, height);
    let mut y = c.title_lines(MARGIN, MARGIN, TITLE, &ts, &title);
    y += 8.0;
    // Legend: band swatch, line and marker, then the label.
    c.raw(r#"<g class="legend">"#);
    for (i, (l, (lx, row))) in legend.iter().zip(&legend_pos).enumerate() {
        let cy = y + *row as f64 * ROW + ROW / 2.0;
        c.rect(lx + 2.0, cy - 7.0, 34.0, 14.0, &band_style(i, plot.series.len()));
        c.line(lx + 2.0, cy, lx + 36.0, cy, &line_style(i));
        c.marker(style(i).2, lx + 19.0, cy, MARKER, &marker_style(i));
        c.text(lx + 44.0, cy + 4.0, SMALL, "start", &ts, l);
    }
    c.raw("</g>");

    // Labels of the marked doses, one row each; a mark's line runs from
    // its label's row down to the axis (see [`place_marks`]).
    let mark_style = format!(
        r#"stroke="{}" stroke-width="1.2" stroke-dasharray="3 3""#,
        ink::MUTED
    );
    let mut mark_lines = Vec::new();
    let marks: Vec<(f64, String)> = plot
        .marks
        .iter()
        .filter(|m| m.x.is_finite())
        .map(|m| (px(m.x), fit(&m.label, plot_w / 2.0 - 12.0, SMALL)))
        .collect();
    for (i, (x, label, right)) in place_marks(marks).into_iter().enumerate() {
        let row_y = marks_top + (i + 1) as f64 * LINE;
        let (tx, anchor) = if right {
            (x + 6.0, "start")
        } else {
            (x - 6.0, "end")
        };
        c.text(tx, row_y - 3.0, SMALL, anchor, &ts, &label);
        mark_lines.push((x, row_y - LINE + 4.0));
    }

    // The plot frame, grid and axes.
    let (grid, axis) = c.plot_frame(plot_x, top, plot_w, PLOT_H);
    for (t, l) in y_ticks.iter().zip(&y_labels.labels) {
        let yy = py(*t);
        c.line(plot_x, yy, plot_x + plot_w, yy, &grid);
        c.line(plot_x - 5.0, yy, plot_x, yy, &axis);
        c.text(plot_x - 8.0, yy + 4.0, SMALL, "end", &ts, l);
    }
    // Dose ticks: every one drawn, as many labelled as fit side by side.
    let widest = x_labels
        .labels
        .iter()
        .map(|l| label_width(l, SMALL))
        .fold(0.0, f64::max);
    let gap = if x_ticks.len() > 1 {
        px(x_ticks[1]) - px(x_ticks[0])
    } else {
        f64::INFINITY
    };
    let every = ((widest + 10.0) / gap).ceil().max(1.0) as usize;
    for (k, (t, l)) in x_ticks.iter().zip(&x_labels.labels).enumerate() {
        let xx = px(*t);
        c.line(xx, top, xx, bottom, &grid);
        c.line(xx, bottom, xx, bottom + 5.0, &axis);
        if k % every == 0 {
            c.text(xx, bottom + 18.0, SMALL, "middle", &ts, l);
        }
    }
    c.line(plot_x, bottom, plot_x + plot_w, bottom, &axis);
    c.line(plot_x, top, plot_x, bottom, &axis);
    for (x, from) in &mark_lines {
        c.line(*x, *from, *x, bottom, &mark_style);
    }

    // Bands and bars first, then lines, then markers on top.
    for (i, runs) in series_runs.iter().enumerate() {
        for part in runs.iter().flat_map(|r| interval_parts(r)) {
            if let [p] = part {
                let (x, lo, hi) = (px(p.x), py(p.lower), py(p.upper));
                let bar = format!(r#"stroke="{}" stroke-width="1.6""#, style(i).0);
                c.line(x, lo, x, hi, &bar);
                c.line(x - 4.0, lo, x + 4.0, lo, &bar);
                c.line(x - 4.0, hi, x + 4.0, hi, &bar);
            } else {
                let outline: Vec<(f64, f64)> = part
                    .iter()
                    .map(|p| (px(p.x), py(p.upper)))
                    .chain(part.iter().rev().map(|p| (px(p.x), py(p.lower))))
                    .collect();
                c.polygon(
                    &outline,
                    &format!(r#"class="band" {}"#, band_style(i, plot.series.len())),
                );
            }
        }
    }
    for (i, runs) in series_runs.iter().enumerate() {
        for run in runs {
            let pts: Vec<(f64, f64)> = run.iter().map(|p| (px(p.x), py(p.estimate))).collect();
            c.polyline(&pts, &line_style(i));
        }
    }
    for (i, runs) in series_runs.iter().enumerate() {
        for p in runs.iter().flatten() {
            c.marker(style(i).2, px(p.x), py(p.estimate), MARKER, &marker_style(i));
        }
    }

    // Axis titles and caption.
    let y_suffix = y_labels.suffix();
    let y_title = format!(
        "{}{y_suffix}",
        fit(&plot.y_label, PLOT_H - label_width(&y_suffix, SMALL), SMALL)
    );
    c.text_rotated(
        MARGIN + LINE - 4.0,
        top + PLOT_H / 2.0,
        -90.0,
        SMALL,
        "middle",
        &ts,
        &y_title,
    );
    for (k, l) in x_title.iter().enumerate() {
        let yy = x_title_top + (k + 1) as f64 * LINE - 4.0;
        c.text(plot_x + plot_w / 2.0, yy, SMALL, "middle", &ts, l);
    }
    let muted = format!(r#"fill="{}""#, ink::MUTED);
    for (k, l) in caption.iter().enumerate() {
        let yy = caption_top + (k + 1) as f64 * LINE - 4.0;
        let style = if k + 1 == caption.len() { &muted } else { &ts };
        c.text(MARGIN, yy, SMALL, "start", style, l);
    }
    c.finish(&plot.title)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limits_are_round_multiples_of_the_tick_step() {
        for (lo, hi) in [
            (0.3, 5.1),
            (0.5, 6.5),
            (-2.2, 7.9),
            (1e-7, 3e-7),
            (4e8, 4.1e8),
            (3.0, 3.0),
            (0.0, 0.0),
        ] {
            let (a, b) = limits(lo, hi);
            assert!(a <= lo && b >= hi && b > a, "{lo}..{hi} gave {a}..{b}");
            let t = ticks(a, b);
            let step = t[1] - t[0];
            for w in t.windows(2) {
                assert!(
                    ((w[1] - w[0]) / step - 1.0).abs() < 1e-6,
                    "{lo}..{hi}: uneven ticks {t:?}"
                );
            }
        }
    }

    #[test]
    fn the_dose_axis_spans_the_doses_with_round_ticks_inside() {
        let (lo, hi, t) = dose_axis((0.0, 35.0));
        assert_eq!((lo, hi), (0.0, 35.0));
        assert_eq!(t, [0.0, 10.0, 20.0, 30.0]);
        let (lo, hi, t) = dose_axis((2.5, 2.5));
        assert!(lo < 2.5 && hi > 2.5 && t.len() >= 2);
        for k in 1..200 {
            let (lo, hi) = (0.37 * k as f64, 0.37 * k as f64 * (1.0 + 0.013 * k as f64));
            let (a, b, t) = dose_axis((lo, hi));
            assert!(a <= lo && b >= hi && t.len() >= 2, "{lo}..{hi}: {t:?}");
        }
    }

    #[test]
    fn tick_labels_use_a_power_of_ten_for_extreme_magnitudes() {
        let t = TickLabels::new(&[0.0, 0.25, 0.5]);
        assert_eq!(t.labels, ["0.00", "0.25", "0.50"].map(String::from));
        assert_eq!(t.suffix(), "");
        let t = TickLabels::new(&[2e6, 4e6, 6e6]);
        assert_eq!(t.labels, ["2", "4", "6"].map(String::from));
        assert_eq!(t.suffix(), " (\u{d7}10\u{2076})");
        let t = TickLabels::new(&[-1e-5, 0.0, 1e-5, 2e-5]);
        assert_eq!(t.labels, ["-1", "0", "1", "2"].map(String::from));
        assert_eq!(t.suffix(), " (\u{d7}10\u{207b}\u{2075})");
    }

    #[test]
    fn long_text_ends_in_an_ellipsis_within_its_width() {
        let s = fit(&"word ".repeat(40), 200.0, SMALL);
        assert!(s.ends_with('\u{2026}'));
        assert!(label_width(&s, SMALL) <= 200.0);
        assert_eq!(fit("short", 200.0, SMALL), "short");
        assert_eq!(level_text(0.95), "95%");
        assert_eq!(level_text(0.975), "97.5%");
    }
}
