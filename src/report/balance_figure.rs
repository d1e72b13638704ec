//! The covariate balance figure: for each adjustment term, the absolute
//! standardized mean difference between exposed and unexposed before
//! weighting (open circle) and after inverse probability weighting (filled
//! square), with a dashed guide at 0.1 (a common rule of thumb, no source).

use super::svg::{Shape, Svg, ink, text_width};
use crate::estimate::Balance;

/// The figure as an SVG document.
pub fn svg(rows: &[Balance]) -> String {
    let label_w = rows
        .iter()
        .map(|r| text_width(&r.covariate, 12.0))
        .fold(60.0, f64::max)
        + 24.0;
    let plot_w = 420.0;
    let row_h = 22.0;
    let top = 56.0;
    let height = top + row_h * rows.len().max(1) as f64 + 78.0;
    let width = label_w + plot_w + 40.0;
    let max = rows
        .iter()
        .flat_map(|r| [r.smd_raw.abs(), r.smd_weighted.abs()])
        .filter(|v| v.is_finite())
        .fold(0.25, f64::max);
    let max = (max * 10.0).ceil() / 10.0;
    let x = |v: f64| label_w + plot_w * (v.abs().min(max) / max);
    let mut s = Svg::new(width, height);
    let text = format!(r#"fill="{}""#, ink::TEXT);
    s.text(
        label_w,
        24.0,
        14.0,
        "start",
        &format!(r#"{text} font-weight="bold""#),
        "Covariate balance before and after weighting",
    );
    let bottom = top + row_h * rows.len() as f64;
    // Grid and ticks.
    let steps = (max / 0.1).round() as usize;
    for k in 0..=steps {
        let v = k as f64 * 0.1;
        let gx = x(v);
        s.line(
            gx,
            top - 6.0,
            gx,
            bottom,
            &format!(r#"stroke="{}" stroke-width="0.5""#, ink::PAPER),
        );
        s.text(gx, bottom + 16.0, 11.0, "middle", &text, &format!("{v:.1}"));
    }
    s.line(
        label_w,
        bottom,
        label_w + plot_w,
        bottom,
        &format!(r#"stroke="{}""#, ink::TEXT),
    );
    let guide = x(0.1);
    s.line(
        guide,
        top - 8.0,
        guide,
        bottom,
        &format!(r#"stroke="{}" stroke-dasharray="4 3""#, ink::MUTED),
    );
    for (i, r) in rows.iter().enumerate() {
        let y = top + row_h * (i as f64 + 0.5);
        s.text(label_w - 10.0, y + 4.0, 12.0, "end", &text, &r.covariate);
        s.line(
            x(r.smd_raw),
            y,
            x(r.smd_weighted),
            y,
            &format!(r#"stroke="{}" stroke-width="1""#, ink::MUTED),
        );
        s.marker(
            Shape::Circle,
            x(r.smd_raw),
            y,
            9.0,
            &format!(r#"fill="white" stroke="{}" stroke-width="1.5""#, ink::WARM),
        );
        s.marker(
            Shape::Square,
            x(r.smd_weighted),
            y,
            8.0,
            &format!(r#"fill="{}""#, ink::DEEP),
        );
    }
    s.text(
        label_w + plot_w / 2.0,
        bottom + 36.0,
        12.0,
        "middle",
        &text,
        "absolute standardized mean difference, exposed vs unexposed",
    );
    let ly = bottom + 58.0;
    s.marker(
        Shape::Circle,
        label_w + 6.0,
        ly - 4.0,
        9.0,
        &format!(r#"fill="white" stroke="{}" stroke-width="1.5""#, ink::WARM),
    );
    s.text(label_w + 16.0, ly, 11.0, "start", &text, "before weighting");
    s.marker(
        Shape::Square,
        label_w + 136.0,
        ly - 4.0,
        8.0,
        &format!(r#"fill="{}""#, ink::DEEP),
    );
    s.text(label_w + 146.0, ly, 11.0, "start", &text, "after weighting");
    s.line(
        label_w + 262.0,
        ly - 4.0,
        label_w + 282.0,
        ly - 4.0,
        &format!(r#"stroke="{}" stroke-dasharray="4 3""#, ink::MUTED),
    );
    s.text(label_w + 288.0, ly, 11.0, "start", &text, "0.1 guide");
    s.finish("covariate balance")
}
