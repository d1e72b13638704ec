//! A small SVG writer shared by every figure: escaping, a palette that
//! stays readable in greyscale, and the few shapes the figures use.

use std::fmt::Write;

/// Ink colours: distinct in lightness as well as hue, so that figures print
/// in greyscale.
pub mod ink {
    /// Text and axes.
    pub const TEXT: &str = "#1d2430";
    /// The exposure and the main series.
    pub const DEEP: &str = "#0b4f6c";
    /// The outcome and the second series.
    pub const WARM: &str = "#c8781e";
    /// Adjustment sets, highlights.
    pub const PALE: &str = "#dcebd9";
    /// Latent nodes, grid lines.
    pub const MUTED: &str = "#8a93a0";
    /// Background panels.
    pub const PAPER: &str = "#f7f5f0";
}

/// Escapes text for SVG/XML content and attributes.
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c if (c as u32) < 0x20 && c != '\n' && c != '\t' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// Approximate width of `s` in pixels at font size `size` (sans-serif).
pub fn text_width(s: &str, size: f64) -> f64 {
    s.chars().count() as f64 * size * 0.58
}

/// Marker shapes for points in figures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Shape {
    /// A circle.
    Circle,
    /// A square.
    Square,
    /// A triangle pointing up.
    Triangle,
    /// A diamond.
    Diamond,
}

/// The smallest m · 10^k at or above `v` for m in `mults`, computed so that
/// decimal values such as 0.3 come out as the nearest double.
fn round_at_or_above(v: f64, mults: &[f64]) -> f64 {
    let k = v.log10().floor() as i32;
    let scale = |m: f64| {
        if k >= 0 {
            m * 10f64.powi(k)
        } else {
            m / 10f64.powi(-k)
        }
    };
    for &m in mults {
        if scale(m) >= v * (1.0 - 1e-12) {
            return scale(m);
        }
    }
    scale(10.0)
}

/// A round number at or above `v` > 0: 1, 2, 2.5 or 5 times a power of 10.
pub fn nice_ceiling(v: f64) -> f64 {
    if !(v > 0.0 && v.is_finite()) {
        return 1.0;
    }
    round_at_or_above(v, &[1.0, 2.0, 2.5, 5.0, 10.0])
}

/// A round axis limit at or above `v` > 0: 1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6
/// or 8 times a power of 10.
pub fn axis_ceiling(v: f64) -> f64 {
    if !(v > 0.0 && v.is_finite()) {
        return 1.0;
    }
    round_at_or_above(v, &[1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0])
}

fn point_list(points: &[(f64, f64)]) -> String {
    let mut s = String::with_capacity(points.len() * 12);
    for (i, (x, y)) in points.iter().enumerate() {
        if i > 0 {
            s.push(' ');
        }
        let _ = write!(s, "{x:.1},{y:.1}");
    }
    s
}

/// An SVG document being built.
pub struct Svg {
    body: String,
    width: f64,
    height: f64,
}

impl Svg {
    /// A blank canvas of the given size in pixels.
    pub fn new(width: f64, height: f64) -> Self {
        Svg {
            body: String::new(),
            width,
            height,
        }
    }

    /// Appends raw SVG elements.
    pub fn raw(&mut self, s: &str) {
        self.body.push_str(s);
        self.body.push('\n');
    }

    /// The frame of a plot area (the curve figures' look): a thin muted
    /// border around `w` by `h` from (`x`, `top`). Returns the styles of
    /// its grid lines and of its axis ticks.
    pub fn plot_frame(&mut self, x: f64, top: f64, w: f64, h: f64) -> (String, String) {
        self.rect(
            x,
            top,
            w,
            h,
            &format!(
                r#"class="plot-area" fill="none" stroke="{}" stroke-width="0.8""#,
                ink::MUTED
            ),
        );
        (
            format!(
                r#"stroke="{}" stroke-width="0.5" stroke-dasharray="1 3""#,
                ink::MUTED
            ),
            format!(r#"stroke="{}" stroke-width="1""#, ink::TEXT),
        )
    }

    /// Bold title lines of `size` from the left margin `x`, the first
    /// below `y`; returns the `y` under the last line.
    pub fn title_lines(&mut self, x: f64, mut y: f64, size: f64, style: &str, lines: &[String]) -> f64 {
        for l in lines {
            y += size + 5.0;
            self.text(
                x,
                y - 5.0,
                size,
                "start",
                &format!(r#"{style} font-weight="bold""#),
                l,
            );
        }
        y
    }

    /// A text label; `anchor` is start, middle or end.
    pub fn text(&mut self, x: f64, y: f64, size: f64, anchor: &str, style: &str, s: &str) {
        let _ = writeln!(
            self.body,
            r#"<text x="{x:.1}" y="{y:.1}" font-size="{size}" text-anchor="{anchor}" {style}>{}</text>"#,
            esc(s)
        );
    }

    /// A straight line.
    pub fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, style: &str) {
        let _ = writeln!(
            self.body,
            r#"<line x1="{x1:.1}" y1="{y1:.1}" x2="{x2:.1}" y2="{y2:.1}" {style}/>"#
        );
    }

    /// A text label turned by `angle` degrees about its anchor point
    /// (-90 reads bottom to top).
    #[allow(clippy::too_many_arguments)]
    pub fn text_rotated(
        &mut self,
        x: f64,
        y: f64,
        angle: f64,
        size: f64,
        anchor: &str,
        style: &str,
        s: &str,
    ) {
        let _ = writeln!(
            self.body,
            r#"<text x="{x:.1}" y="{y:.1}" font-size="{size}" text-anchor="{anchor}" transform="rotate({angle:.1} {x:.1} {y:.1})" {style}>{}</text>"#,
            esc(s)
        );
    }

    /// An open polyline through `points` (nothing for fewer than two).
    pub fn polyline(&mut self, points: &[(f64, f64)], style: &str) {
        if points.len() < 2 {
            return;
        }
        let _ = writeln!(
            self.body,
            r#"<polyline points="{}" fill="none" {style}/>"#,
            point_list(points)
        );
    }

    /// A closed polygon through `points`.
    pub fn polygon(&mut self, points: &[(f64, f64)], style: &str) {
        if points.len() < 3 {
            return;
        }
        let _ = writeln!(self.body, r#"<polygon points="{}" {style}/>"#, point_list(points));
    }

    /// A rectangle with its top-left corner at (x, y).
    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, style: &str) {
        let _ = writeln!(
            self.body,
            r#"<rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{h:.1}" {style}/>"#
        );
    }

    /// A circle.
    pub fn circle(&mut self, cx: f64, cy: f64, r: f64, style: &str) {
        let _ = writeln!(
            self.body,
            r#"<circle cx="{cx:.1}" cy="{cy:.1}" r="{r:.1}" {style}/>"#
        );
    }

    /// A point marker of the given shape centred on (x, y), about `size`
    /// pixels across; shapes stay distinct when printed in greyscale.
    pub fn marker(&mut self, shape: Shape, x: f64, y: f64, size: f64, style: &str) {
        let h = size / 2.0;
        match shape {
            Shape::Circle => self.circle(x, y, h, style),
            Shape::Square => self.rect(x - h * 0.9, y - h * 0.9, h * 1.8, h * 1.8, style),
            Shape::Triangle => self.polygon(
                &[(x, y - h * 1.15), (x + h, y + h * 0.75), (x - h, y + h * 0.75)],
                style,
            ),
            Shape::Diamond => self.polygon(
                &[(x, y - h * 1.2), (x + h, y), (x, y + h * 1.2), (x - h, y)],
                style,
            ),
        }
    }

    /// Starts a group of elements clipped to the rectangle (x, y, w, h);
    /// close it with [`Svg::end_clip`]. `id` must be unique in the document.
    pub fn begin_clip(&mut self, id: &str, x: f64, y: f64, w: f64, h: f64) {
        let id = esc(id);
        let _ = writeln!(
            self.body,
            r#"<clipPath id="{id}"><rect x="{x:.1}" y="{y:.1}" width="{w:.1}" height="{h:.1}"/></clipPath><g clip-path="url(#{id})">"#
        );
    }

    /// Ends a group started by [`Svg::begin_clip`].
    pub fn end_clip(&mut self) {
        self.body.push_str("</g>\n");
    }

    /// The finished document, with a title for accessibility.
    pub fn finish(self, title: &str) -> String {
        format!(
            concat!(
                r#"<?xml version="1.0" encoding="UTF-8"?>"#,
                "\n",
                r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w:.0}" height="{h:.0}" viewBox="0 0 {w:.0} {h:.0}" font-family="Helvetica, Arial, sans-serif">"#,
                "\n<title>{t}</title>\n",
                r#"<rect width="100%" height="100%" fill="white"/>"#,
                "\n{b}</svg>\n"
            ),
            w = self.width,
            h = self.height,
            t = esc(title),
            b = self.body
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_limits_are_round() {
        assert_eq!(nice_ceiling(7.26), 10.0);
        assert_eq!(nice_ceiling(0.278), 0.5);
        assert_eq!(nice_ceiling(0.2), 0.2);
        assert_eq!(nice_ceiling(2.1), 2.5);
        assert_eq!(axis_ceiling(10.9), 12.0);
        assert_eq!(axis_ceiling(0.3), 0.3);
    }
}
