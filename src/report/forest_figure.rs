//! The subgroup figure: for each method, a band holding its overall
//! effect (a filled diamond) and its effect within each level of the
//! subgroup column (open circles), each with its interval as a bar, on
//! one shared axis with the no-effect value marked; the numbers are
//! printed at the right, and each band's heading carries the test of
//! equal effects. Ratios are placed on a log axis.

use super::estimate_doc::num;
use super::svg::{Shape, Svg, ink, nice_ceiling, text_width};

/// One row of the figure.
#[derive(Debug, Clone)]
pub struct ForestRow {
    /// Its label ("overall", "sex = 1").
    pub label: String,
    /// The estimate.
    pub estimate: f64,
    /// Interval limits.
    pub lower: f64,
    /// Upper limit.
    pub upper: f64,
    /// The whole sample's row (drawn as a diamond).
    pub overall: bool,
}

/// One method's band.
#[derive(Debug, Clone)]
pub struct ForestGroup {
    /// The method (and contrast).
    pub title: String,
    /// The equal-effects test in words, if formed.
    pub note: Option<String>,
    /// Its rows.
    pub rows: Vec<ForestRow>,
}

/// The whole figure.
#[derive(Debug, Clone)]
pub struct ForestPlot {
    /// Title at the top.
    pub title: String,
    /// The axis label.
    pub x_label: String,
    /// The no-effect value (0 for differences, 1 for ratios).
    pub null: f64,
    /// Log axis (ratios).
    pub log: bool,
    /// The bands, top to bottom.
    pub groups: Vec<ForestGroup>,
}

const ROW: f64 = 22.0;
const HEAD: f64 = 26.0;

/// Round ticks over the axis span [lo, hi] (about five), as data values
/// (`lo` and `hi` are logarithms on a log axis).
fn ticks(lo: f64, hi: f64, log: bool) -> Vec<(f64, String)> {
    if log {
        let all: [f64; 13] = [
            0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0,
        ];
        return all
            .iter()
            .copied()
            .filter(|v: &f64| v.ln() >= lo - 1e-12 && v.ln() <= hi + 1e-12)
            .map(|v| (v, format!("{v}")))
            .collect();
    }
    let step = nice_ceiling((hi - lo) / 5.0);
    // Enough decimals for the step (2.5 x 10^k needs one more).
    let decimals = (-(step.log10().floor()) as i32
        + i32::from((step / 10f64.powf(step.log10().floor()) - 2.5).abs() < 1e-9))
    .max(0) as usize;
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last.min(first + 20))
        .map(|k| {
            let v = k as f64 * step;
            let text = format!("{v:.decimals$}");
            (
                v,
                if text.trim_start_matches('-').chars().all(|c| c == '0' || c == '.') {
                    "0".into()
                } else {
                    text
                },
            )
        })
        .collect()
}

/// The figure as SVG.
pub fn forest_svg(p: &ForestPlot) -> String {
    let tx = |v: f64| if p.log { v.max(1e-300).ln() } else { v };
    let values = p
        .groups
        .iter()
        .flat_map(|g| g.rows.iter().flat_map(|r| [r.lower, r.upper, r.estimate]))
        .chain([p.null])
        .filter(|v| v.is_finite() && (!p.log || *v > 0.0))
        .map(tx);
    let (mut lo, mut hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
        (a.min(v), b.max(v))
    });
    if hi <= lo {
        lo -= 1.0;
        hi += 1.0;
    }
    let pad = 0.06 * (hi - lo);
    let (lo, hi) = (lo - pad, hi + pad);
    let label_w = p
        .groups
        .iter()
        .flat_map(|g| g.rows.iter().map(|r| text_width(&r.label, 11.0) + 24.0))
        .fold(140.0f64, f64::max)
        .min(260.0);
    let (x0, plot_w, right_w) = (label_w + 10.0, 340.0, 190.0);
    let width = x0 + plot_w + right_w;
    let body: f64 = p.groups.iter().map(|g| HEAD + ROW * g.rows.len() as f64).sum();
    let top = 46.0;
    let height = top + body + 58.0;
    let sx = |v: f64| x0 + (tx(v) - lo) / (hi - lo) * plot_w;
    let mut s = Svg::new(width, height);
    let ts = format!(r#"fill="{}""#, ink::TEXT);
    let muted = format!(r#"fill="{}""#, ink::MUTED);
    s.text(
        12.0,
        24.0,
        14.0,
        "start",
        &format!(r#"{ts} font-weight="bold""#),
        &p.title,
    );
    // Bands: a paper-coloured panel behind each method's rows.
    let mut y = top;
    let bottom = top + body;
    for (k, g) in p.groups.iter().enumerate() {
        let h = HEAD + ROW * g.rows.len() as f64;
        if k % 2 == 0 {
            s.rect(0.0, y, width, h, &format!(r#"fill="{}""#, ink::PAPER));
        }
        s.text(
            12.0,
            y + 17.0,
            12.0,
            "start",
            &format!(r#"{ts} font-weight="bold""#),
            &g.title,
        );
        if let Some(n) = &g.note {
            s.text(width - 12.0, y + 17.0, 10.5, "end", &muted, n);
        }
        let mut ry = y + HEAD + ROW / 2.0;
        for r in &g.rows {
            s.text(24.0, ry + 4.0, 11.0, "start", &ts, &r.label);
            let ok = [r.estimate, r.lower, r.upper]
                .iter()
                .all(|v| v.is_finite() && (!p.log || *v > 0.0));
            if ok {
                let colour = if r.overall { ink::DEEP } else { ink::WARM };
                s.line(
                    sx(r.lower),
                    ry,
                    sx(r.upper),
                    ry,
                    &format!(r#"stroke="{colour}" stroke-width="2""#),
                );
                for end in [r.lower, r.upper] {
                    s.line(
                        sx(end),
                        ry - 4.0,
                        sx(end),
                        ry + 4.0,
                        &format!(r#"stroke="{colour}" stroke-width="1.2""#),
                    );
                }
                if r.overall {
                    s.marker(
                        Shape::Diamond,
                        sx(r.estimate),
                        ry,
                        12.0,
                        &format!(r#"fill="{colour}""#),
                    );
                } else {
                    s.marker(
                        Shape::Circle,
                        sx(r.estimate),
                        ry,
                        9.0,
                        &format!(r#"fill="white" stroke="{colour}" stroke-width="2""#),
                    );
                }
            }
            s.text(
                x0 + plot_w + 14.0,
                ry + 4.0,
                11.0,
                "start",
                &ts,
                &format!("{} ({} to {})", num(r.estimate), num(r.lower), num(r.upper)),
            );
            ry += ROW;
        }
        y += h;
    }
    // The no-effect line and the axis.
    let axis = format!(r#"stroke="{}" stroke-width="1""#, ink::TEXT);
    s.line(
        sx(p.null),
        top,
        sx(p.null),
        bottom,
        &format!(
            r#"stroke="{}" stroke-width="1.2" stroke-dasharray="4 3""#,
            ink::MUTED
        ),
    );
    s.line(x0, bottom, x0 + plot_w, bottom, &axis);
    for (t, label) in ticks(lo, hi, p.log) {
        let x = sx(t);
        s.line(x, bottom, x, bottom + 5.0, &axis);
        s.text(x, bottom + 18.0, 10.5, "middle", &ts, &label);
    }
    s.text(x0 + plot_w / 2.0, bottom + 40.0, 11.5, "middle", &ts, &p.x_label);
    s.finish(&p.title)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_inside() {
        let labels = |v: Vec<(f64, String)>| v.into_iter().map(|t| t.1).collect::<Vec<_>>();
        assert_eq!(labels(ticks(-0.3, 4.2, false)), ["0", "1", "2", "3", "4"]);
        assert_eq!(labels(ticks(-0.07, 0.31, false)), ["0", "0.1", "0.2", "0.3"]);
        assert_eq!(labels(ticks(0.5f64.ln(), 3f64.ln(), true)), ["0.5", "1", "2"]);
    }
}
