//! The survival figure: one method's adjusted survival curves, one per
//! exposure level, drawn as steps with their pointwise confidence bands,
//! and the numbers still followed in each group beneath the time axis.
//!
//! # API
//!
//! Fill a [`SurvivalPlot`] and call [`survival_svg`]; the result is a
//! complete SVG document (same input, same bytes).
//!
//! # Layout
//!
//! From the top: the title (wrapped), the legend (one entry per level), the
//! plot (survival from 0 to 1 on the vertical axis, time from 0 to the last
//! horizon on the horizontal one, the horizons marked by faint dashed
//! lines), the time axis and its title, a row per level with the numbers at
//! risk under their ticks, and the caption. The levels differ in colour and
//! dash pattern (the palette of the dose-response figure), so the figure
//! reads in greyscale.

use super::curve_figure::{CAUTION, band_style, line_style, style, text_style};
use super::sensitivity_figure::{LINE, MARGIN, ROW, SMALL, WIDTH, label_width, lines, ticks};
use super::svg::{Svg, ink};

/// One level's curve.
#[derive(Debug, Clone, PartialEq)]
pub struct SurvivalSeries {
    /// The legend label (the exposure level).
    pub label: String,
    /// (time, survival, lower, upper), in time order.
    pub points: Vec<(f64, f64, f64, f64)>,
    /// The numbers at risk at [`SurvivalPlot::at_risk_times`].
    pub at_risk: Vec<usize>,
}

/// The survival figure's content.
#[derive(Debug, Clone, PartialEq)]
pub struct SurvivalPlot {
    /// The title.
    pub title: String,
    /// The time axis title.
    pub x_label: String,
    /// The confidence level of the bands.
    pub level: f64,
    /// The horizons to mark.
    pub horizons: Vec<f64>,
    /// The times at which people at risk are counted.
    pub at_risk_times: Vec<f64>,
    /// One series per exposure level.
    pub series: Vec<SurvivalSeries>,
}

const PLOT_H: f64 = 300.0;
const TITLE: f64 = 15.0;

/// A number for an axis label.
fn label(v: f64) -> String {
    let r = (v * 1e6).round() / 1e6;
    format!("{r}")
}

/// The points of a step function through `pts` (value held until the next
/// time).
fn steps(pts: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::with_capacity(2 * pts.len());
    for (k, &(x, y)) in pts.iter().enumerate() {
        if k > 0 {
            out.push((x, pts[k - 1].1));
        }
        out.push((x, y));
    }
    out
}

/// The figure as an SVG document.
pub fn survival_svg(plot: &SurvivalPlot) -> String {
    let ts = text_style();
    let x_hi = plot
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.0))
        .chain(plot.horizons.iter().copied())
        .fold(0.0f64, f64::max)
        .max(f64::MIN_POSITIVE);
    let x_ticks = ticks(0.0, x_hi);
    let y_ticks = [0.0, 0.2, 0.4, 0.6, 0.8, 1.0];
    let level_w = plot
        .series
        .iter()
        .map(|s| label_width(&s.label, SMALL))
        .fold(label_width("at risk", SMALL), f64::max);
    // Room for half of a count centred under the first and last ticks.
    let plot_x = MARGIN + level_w.max(40.0) + 36.0;
    let plot_w = WIDTH - plot_x - MARGIN - 20.0;
    let full = WIDTH - 2.0 * MARGIN;
    let title = lines(&plot.title, full, TITLE);
    let caption_text = format!(
        "Steps: estimated survival under each level; shaded bands: pointwise {:.0}% confidence intervals, \
         each for its own time, not for the whole curve at once. Dashed lines: the times at which risks are \
         compared. Numbers at risk: people still followed in each observed group.",
        100.0 * plot.level
    );
    let caption: Vec<String> = lines(&caption_text, full, SMALL)
        .into_iter()
        .chain(std::iter::once(CAUTION.to_string()))
        .collect();
    let title_h = title.len() as f64 * (TITLE + 5.0);
    let legend_top = MARGIN + title_h + 4.0;
    let top = legend_top + ROW + 8.0;
    let bottom = top + PLOT_H;
    let x_title_y = bottom + 36.0;
    let risk_top = x_title_y + 10.0;
    let caption_top = risk_top + (plot.series.len() + 1) as f64 * LINE + 12.0;
    let height = caption_top + caption.len() as f64 * LINE + MARGIN;
    let px = |v: f64| plot_x + v / x_hi * plot_w;
    let py = |v: f64| bottom - v.clamp(0.0, 1.0) * PLOT_H;

    let mut c = Svg::new(WIDTH, height);
    c.title_lines(MARGIN, MARGIN, TITLE, &ts, &title);
    // Legend.
    let mut lx = MARGIN;
    let cy = legend_top + ROW / 2.0;
    for (i, s) in plot.series.iter().enumerate() {
        c.rect(lx + 2.0, cy - 7.0, 34.0, 14.0, &band_style(i, plot.series.len()));
        c.line(lx + 2.0, cy, lx + 36.0, cy, &line_style(i));
        c.text(lx + 44.0, cy + 4.0, SMALL, "start", &ts, &s.label);
        lx += 66.0 + label_width(&s.label, SMALL);
    }
    // Frame, grid, axes.
    let (grid, axis) = c.plot_frame(plot_x, top, plot_w, PLOT_H);
    for &t in &y_ticks {
        let yy = py(t);
        c.line(plot_x, yy, plot_x + plot_w, yy, &grid);
        c.line(plot_x - 5.0, yy, plot_x, yy, &axis);
        c.text(plot_x - 8.0, yy + 4.0, SMALL, "end", &ts, &label(t));
    }
    for &t in &x_ticks {
        let xx = px(t);
        c.line(xx, bottom, xx, bottom + 5.0, &axis);
        c.text(xx, bottom + 18.0, SMALL, "middle", &ts, &label(t));
    }
    let mark = format!(
        r#"stroke="{}" stroke-width="1" stroke-dasharray="4 3""#,
        ink::MUTED
    );
    for &h in &plot.horizons {
        c.line(px(h), top, px(h), bottom, &mark);
    }
    c.line(plot_x, bottom, plot_x + plot_w, bottom, &axis);
    c.line(plot_x, top, plot_x, bottom, &axis);
    c.text_rotated(
        MARGIN + 4.0,
        (top + bottom) / 2.0,
        -90.0,
        SMALL,
        "middle",
        &ts,
        "survival probability",
    );
    c.text(
        plot_x + plot_w / 2.0,
        x_title_y,
        SMALL,
        "middle",
        &ts,
        &plot.x_label,
    );
    // Bands, then steps.
    for (i, s) in plot.series.iter().enumerate() {
        let finite: Vec<&(f64, f64, f64, f64)> = s
            .points
            .iter()
            .filter(|p| p.0.is_finite() && p.2.is_finite() && p.3.is_finite())
            .collect();
        if finite.len() > 1 {
            let upper = steps(&finite.iter().map(|p| (px(p.0), py(p.3))).collect::<Vec<_>>());
            let lower = steps(&finite.iter().map(|p| (px(p.0), py(p.2))).collect::<Vec<_>>());
            let outline: Vec<(f64, f64)> = upper.into_iter().chain(lower.into_iter().rev()).collect();
            c.polygon(&outline, &band_style(i, plot.series.len()));
        }
    }
    for (i, s) in plot.series.iter().enumerate() {
        let pts: Vec<(f64, f64)> = s
            .points
            .iter()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .map(|p| (px(p.0), py(p.1)))
            .collect();
        c.polyline(&steps(&pts), &line_style(i));
    }
    // Numbers at risk.
    let head_y = risk_top + LINE;
    c.text(
        MARGIN,
        head_y,
        SMALL,
        "start",
        &format!(r#"{ts} font-weight="bold""#),
        "at risk",
    );
    for (i, s) in plot.series.iter().enumerate() {
        let ry = head_y + (i + 1) as f64 * LINE;
        c.text(
            MARGIN,
            ry,
            SMALL,
            "start",
            &format!(r#"fill="{}""#, style(i).0),
            &s.label,
        );
        for (&t, n) in plot.at_risk_times.iter().zip(&s.at_risk) {
            c.text(px(t), ry, SMALL, "middle", &ts, &n.to_string());
        }
    }
    let mut y = caption_top;
    for l in &caption {
        y += LINE;
        c.text(MARGIN, y - 4.0, SMALL, "start", &ts, l);
    }
    c.finish(&plot.title)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn draws_steps_bands_and_numbers_at_risk() {
        let plot = SurvivalPlot {
            title: "Survival".into(),
            x_label: "months".into(),
            level: 0.95,
            horizons: vec![60.0, 120.0],
            at_risk_times: vec![0.0, 60.0, 120.0],
            series: vec![
                SurvivalSeries {
                    label: "exposed".into(),
                    points: vec![
                        (0.0, 1.0, 1.0, 1.0),
                        (60.0, 0.9, 0.85, 0.95),
                        (120.0, 0.8, 0.7, 0.9),
                    ],
                    at_risk: vec![428, 382, 326],
                },
                SurvivalSeries {
                    label: "unexposed".into(),
                    points: vec![
                        (0.0, 1.0, 1.0, 1.0),
                        (60.0, 0.92, 0.9, 0.94),
                        (120.0, 0.81, 0.78, 0.84),
                    ],
                    at_risk: vec![1201, 1122, 986],
                },
            ],
        };
        let svg = survival_svg(&plot);
        assert_eq!(svg, survival_svg(&plot));
        for n in ["428", "326", "1201", "986", "at risk", "exposed", "unexposed"] {
            assert!(svg.contains(&format!(">{n}</text>")), "{n}");
        }
        assert_eq!(svg.matches("<polygon").count(), 2);
        assert_eq!(svg.matches("<polyline").count(), 2);
        assert_eq!(
            steps(&[(0.0, 1.0), (1.0, 0.5)]),
            vec![(0.0, 1.0), (1.0, 1.0), (1.0, 0.5)]
        );
    }
}
