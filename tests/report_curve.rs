//! The dose-response figure: well-formed SVG, data inside the plot area,
//! bands around their estimates, labels that never overprint, gaps where no
//! interval could be formed, and the awkward inputs (one dose, a flat
//! curve, extreme magnitudes, long labels). The curves here are invented
//! shapes, not results; text sizes are judged with the figures' own
//! conservative width rule (`sensitivity_figure::label_width`), as the
//! sensitivity figure's overprint test does.

use causeway::report::curve_figure::{CurvePlot, CurvePoint, CurveSeries, MarkedDose, curve_svg};
use causeway::report::sensitivity_figure::label_width;
use roxmltree::{Document, Node};

type Box4 = [f64; 4];

fn point(x: f64, estimate: f64, half: f64) -> CurvePoint {
    CurvePoint {
        x,
        estimate,
        lower: estimate - half,
        upper: estimate + half,
    }
}

/// A curve over doses 0, 5, ..., 35 of `f`, with interval half-width
/// growing away from the middle.
fn series(label: &str, f: impl Fn(f64) -> f64) -> CurveSeries {
    CurveSeries {
        label: label.into(),
        points: (0..8)
            .map(|k| {
                let x = 5.0 * k as f64;
                point(x, f(x), 0.4 + 0.05 * (x - 17.5).abs())
            })
            .collect(),
    }
}

fn sample() -> CurvePlot {
    CurvePlot {
        title: "Mean pain days by standing hours".into(),
        x_label: "standing_hours (dose)".into(),
        y_label: "mean pain_days".into(),
        level: 0.95,
        series: vec![
            series("regression standardization", |x| 6.0 - 0.08 * x),
            series("inverse probability weighting", |x| 6.3 - 0.1 * x + 0.001 * x * x),
            series("AIPW (doubly robust)", |x| 5.8 - 0.07 * x),
        ],
        marks: vec![
            MarkedDose {
                x: 10.0,
                label: "reference: 10".into(),
            },
            MarkedDose {
                x: 30.0,
                label: "contrast dose: 30".into(),
            },
        ],
    }
}

fn num(n: Node, a: &str) -> f64 {
    n.attribute(a)
        .unwrap_or_else(|| panic!("<{}> has no {a}", n.tag_name().name()))
        .parse()
        .unwrap()
}

fn points(n: Node) -> Vec<(f64, f64)> {
    n.attribute("points")
        .unwrap()
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}

fn in_legend(n: Node) -> bool {
    n.ancestors().any(|a| a.attribute("class") == Some("legend"))
}

fn plot_area(doc: &Document) -> Box4 {
    let r = doc
        .descendants()
        .find(|n| n.attribute("class") == Some("plot-area"))
        .expect("the plot area is marked");
    let (x, y) = (num(r, "x"), num(r, "y"));
    [x, y, x + num(r, "width"), y + num(r, "height")]
}

/// Every text's box (ascent 0.8, descent 0.25 of the font size), placed by
/// its anchor; a text turned by -90 degrees reads upwards from its anchor.
fn text_boxes(doc: &Document) -> Vec<(String, Box4)> {
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| {
            let (x, y, size) = (num(n, "x"), num(n, "y"), num(n, "font-size"));
            let s = n.text().unwrap_or("").to_string();
            let w = label_width(&s, size);
            let shift = match n.attribute("text-anchor") {
                Some("end") => w,
                Some("middle") => w / 2.0,
                _ => 0.0,
            };
            let b = if n
                .attribute("transform")
                .is_some_and(|t| t.starts_with("rotate(-90"))
            {
                [x - 0.8 * size, y - w + shift, x + 0.25 * size, y + shift]
            } else {
                [x - shift, y - 0.8 * size, x - shift + w, y + 0.25 * size]
            };
            (s, b)
        })
        .collect()
}

fn apart(p: &Box4, q: &Box4) -> bool {
    p[2] <= q[0] || q[2] <= p[0] || p[3] <= q[1] || q[3] <= p[1]
}

fn inside(p: (f64, f64), b: &Box4) -> bool {
    // Coordinates are written to 0.1 px.
    p.0 >= b[0] - 0.05 && p.0 <= b[2] + 0.05 && p.1 >= b[1] - 0.05 && p.1 <= b[3] + 0.05
}

/// The checks every figure must pass: well-formed; every shape of the
/// data (polylines, polygons, markers) inside the plot area and every
/// legend shape outside it; no text overprints another, enters the plot
/// area or leaves the figure.
fn check_layout(svg: &str) {
    let doc = Document::parse(svg).expect("the figure is well-formed XML");
    let root = doc.root_element();
    let (width, height) = (num(root, "width"), num(root, "height"));
    let plot = plot_area(&doc);
    for n in doc.descendants().filter(|n| n.is_element()) {
        let mut pts = Vec::new();
        match n.tag_name().name() {
            "polyline" | "polygon" => pts = points(n),
            "circle" => {
                let (cx, cy, r) = (num(n, "cx"), num(n, "cy"), num(n, "r"));
                pts = vec![(cx - r, cy - r), (cx + r, cy + r)];
            }
            "rect" if n.attribute("class").is_none() && n.attribute("width") != Some("100%") => {
                let (x, y) = (num(n, "x"), num(n, "y"));
                pts = vec![(x, y), (x + num(n, "width"), y + num(n, "height"))];
            }
            "path" => panic!("paths are not expected in this figure"),
            _ => {}
        }
        for p in pts {
            if in_legend(n) {
                assert!(!inside(p, &plot), "a legend shape enters the plot area at {p:?}");
                assert!(p.0 >= 0.0 && p.0 <= width && p.1 >= 0.0 && p.1 <= height);
            } else {
                assert!(
                    inside(p, &plot),
                    "<{}> point {p:?} lies outside the plot area {plot:?}",
                    n.tag_name().name()
                );
            }
        }
    }
    let boxes = text_boxes(&doc);
    for (i, (a, p)) in boxes.iter().enumerate() {
        assert!(
            p[0] >= 0.0 && p[2] <= width && p[1] >= 0.0 && p[3] <= height,
            "'{a}' leaves the figure: {p:?}"
        );
        assert!(apart(p, &plot), "'{a}' {p:?} overprints the plot area {plot:?}");
        for (b, q) in &boxes[i + 1..] {
            assert!(apart(p, q), "'{a}' {p:?} overprints '{b}' {q:?}");
        }
    }
    // Legend swatches (the band samples) overlap no text and no other swatch.
    let swatches: Vec<Box4> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect") && in_legend(*n) && n.attribute("fill-opacity").is_some())
        .map(|n| {
            let (x, y) = (num(n, "x"), num(n, "y"));
            [x, y, x + num(n, "width"), y + num(n, "height")]
        })
        .collect();
    for (i, p) in swatches.iter().enumerate() {
        for (t, q) in &boxes {
            assert!(apart(p, q), "a legend swatch {p:?} overprints '{t}' {q:?}");
        }
        for q in &swatches[i + 1..] {
            assert!(apart(p, q), "legend swatches {p:?} and {q:?} overlap");
        }
    }
    // Vertical lines (marked doses) cross no text.
    for l in doc.descendants().filter(|n| n.has_tag_name("line")) {
        let (x, y1, y2) = (
            num(l, "x1"),
            num(l, "y1").min(num(l, "y2")),
            num(l, "y1").max(num(l, "y2")),
        );
        if num(l, "x2") != x {
            continue;
        }
        for (t, b) in &boxes {
            let crosses = x > b[0] && x < b[2] && y2 > b[1] && y1 < b[3];
            assert!(!crosses, "a line at x = {x} crosses '{t}' {b:?}");
        }
    }
}

/// The vertical extent of `polygon` at `x` (None when `x` is beyond it).
fn extent_at(polygon: &[(f64, f64)], x: f64) -> Option<(f64, f64)> {
    let mut ys = Vec::new();
    for k in 0..polygon.len() {
        let (a, b) = (polygon[k], polygon[(k + 1) % polygon.len()]);
        let (lo, hi) = (a.0.min(b.0), a.0.max(b.0));
        if x < lo - 1e-9 || x > hi + 1e-9 {
            continue;
        }
        if (b.0 - a.0).abs() < 1e-9 {
            ys.extend([a.1, b.1]);
        } else {
            ys.push(a.1 + (b.1 - a.1) * (x - a.0) / (b.0 - a.0));
        }
    }
    if ys.is_empty() {
        return None;
    }
    Some(ys.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &y| {
        (l.min(y), h.max(y))
    }))
}

fn colour(n: Node, attr: &str) -> String {
    n.attribute(attr).unwrap().to_string()
}

/// The bands, each with its fill colour.
fn bands_by_colour(doc: &Document) -> Vec<(String, Vec<(f64, f64)>)> {
    doc.descendants()
        .filter(|n| n.attribute("class") == Some("band"))
        .map(|n| (colour(n, "fill"), points(n)))
        .collect()
}

/// The estimate lines (outside the legend), each with its stroke colour.
fn estimate_lines(doc: &Document) -> Vec<(String, Vec<(f64, f64)>)> {
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline") && !in_legend(*n))
        .map(|n| (colour(n, "stroke"), points(n)))
        .collect()
}

#[test]
fn sample_figure_is_laid_out_without_overprinting() {
    let svg = curve_svg(&sample());
    check_layout(&svg);
    let doc = Document::parse(&svg).unwrap();
    let texts: Vec<String> = text_boxes(&doc).into_iter().map(|t| t.0).collect();
    for want in [
        "regression standardization",
        "inverse probability weighting",
        "AIPW (doubly robust)",
        "reference: 10",
        "contrast dose: 30",
        "standing_hours (dose)",
        "mean pain_days",
    ] {
        assert!(texts.iter().any(|t| t == want), "'{want}' is missing");
    }
    assert!(
        texts
            .iter()
            .any(|t| t.contains("pointwise 95% confidence intervals")),
        "the caption names the pointwise level: {texts:?}"
    );
    assert!(
        texts
            .iter()
            .any(|t| t.contains("only as valid as the declared graph"))
    );
    assert_eq!(estimate_lines(&doc).len(), 3);
    assert_eq!(bands_by_colour(&doc).len(), 3);
}

/// Each estimate lies inside the band of its own series (matched by
/// colour), at every dose.
#[test]
fn each_band_encloses_its_estimates() {
    let svg = curve_svg(&sample());
    let doc = Document::parse(&svg).unwrap();
    let bands = bands_by_colour(&doc);
    for (c, line) in estimate_lines(&doc) {
        let band = &bands.iter().find(|b| b.0 == c).expect("every curve has a band").1;
        for &(x, y) in &line {
            let (lo, hi) = extent_at(band, x).expect("the band spans every dose");
            // Below 0.1 px, the written precision.
            assert!(
                y > lo - 0.1 && y < hi + 0.1,
                "estimate at ({x}, {y}) outside band {lo}..{hi}"
            );
            assert!(hi - lo > 1.0, "the sample's intervals are visibly wide");
        }
    }
}

/// A NaN bound breaks the band at that dose (the estimate line goes on);
/// a lone dose with an interval becomes a bar; no interval at all, no band.
#[test]
fn missing_intervals_leave_the_band_out() {
    let mut plot = sample();
    plot.series.truncate(1);
    plot.marks.clear();
    plot.series[0].points[3].lower = f64::NAN;
    plot.series[0].points[5].upper = f64::INFINITY;
    plot.series[0].points[7].upper = f64::NAN;
    let svg = curve_svg(&plot);
    check_layout(&svg);
    let doc = Document::parse(&svg).unwrap();
    let lines = estimate_lines(&doc);
    assert_eq!(lines.len(), 1, "a missing bound does not break the estimate line");
    let xs: Vec<f64> = lines[0].1.iter().map(|p| p.0).collect();
    assert_eq!(xs.len(), 8);
    let bands = bands_by_colour(&doc);
    // Doses 0-10 form a band; dose 20 alone with an interval is a bar.
    assert_eq!(bands.len(), 1);
    let band = &bands[0].1;
    for (k, &x) in xs.iter().enumerate() {
        let covered = extent_at(band, x).is_some();
        assert_eq!(covered, k <= 2, "dose {k}: band present = {covered}");
    }
    let bar = doc.descendants().filter(|n| n.has_tag_name("line")).any(|n| {
        (num(n, "x1") - xs[4]).abs() < 0.05 && num(n, "x2") == num(n, "x1") && num(n, "y1") != num(n, "y2")
    });
    assert!(bar, "the lone interval at dose 20 is drawn as a bar");
    let texts: Vec<String> = text_boxes(&doc).into_iter().map(|t| t.0).collect();
    assert!(texts.iter().any(|t| t.contains("only the estimate is drawn")));
    assert!(
        texts
            .iter()
            .any(|t| t.starts_with("Bands and bars: pointwise 95%")),
        "the caption names both kinds of interval drawn: {texts:?}"
    );

    for p in &mut plot.series[0].points {
        p.lower = f64::NAN;
        p.upper = f64::NAN;
    }
    let svg = curve_svg(&plot);
    check_layout(&svg);
    let doc = Document::parse(&svg).unwrap();
    assert!(bands_by_colour(&doc).is_empty());
    assert_eq!(estimate_lines(&doc).len(), 1);
    let texts: Vec<String> = text_boxes(&doc).into_iter().map(|t| t.0).collect();
    assert!(
        texts
            .iter()
            .any(|t| t.contains("No 95% confidence interval could be formed"))
    );
}

#[test]
fn same_input_gives_the_same_bytes() {
    let a = curve_svg(&sample());
    let b = curve_svg(&sample().clone());
    assert_eq!(a, b);
    let mut other = sample();
    other.level = 0.9;
    assert_ne!(a, curve_svg(&other));
    assert!(curve_svg(&other).contains("pointwise 90% confidence"));
}

/// One dose, a flat curve, huge and tiny magnitudes, negative values, and
/// a series with no placeable point: each still lays out cleanly, with its
/// estimates inside the plot's axis range.
#[test]
fn awkward_inputs_lay_out_cleanly() {
    let one = |label: &str, pts: Vec<CurvePoint>| CurvePlot {
        title: "Edge case".into(),
        x_label: "dose".into(),
        y_label: "mean outcome".into(),
        level: 0.95,
        series: vec![CurveSeries {
            label: label.into(),
            points: pts,
        }],
        marks: Vec::new(),
    };
    let flat: Vec<CurvePoint> = (0..5).map(|k| point(k as f64, 3.0, 0.0)).collect();
    let cases = vec![
        one("a single dose", vec![point(2.5, 1.7, 0.3)]),
        one("flat, no width", flat),
        one(
            "zero everywhere",
            (0..4).map(|k| point(k as f64, 0.0, 0.0)).collect(),
        ),
        one(
            "huge",
            (0..6)
                .map(|k| point(1e6 * k as f64, 4.2e9 + 1e8 * k as f64, 3e7))
                .collect(),
        ),
        one(
            "tiny",
            (0..6)
                .map(|k| point(1e-4 * k as f64, 2e-7 * k as f64, 5e-8))
                .collect(),
        ),
        one(
            "negative",
            (0..6)
                .map(|k| point(-(k as f64), -40.0 - k as f64, 2.0))
                .collect(),
        ),
        one(
            "nothing placeable",
            vec![point(f64::NAN, 1.0, 0.1), point(1.0, f64::NAN, 0.1)],
        ),
        one("nothing at all", Vec::new()),
    ];
    for plot in cases {
        let svg = curve_svg(&plot);
        check_layout(&svg);
        let doc = Document::parse(&svg).unwrap();
        // Every tick label is a number (scaled by the axis title's power).
        let ticks: Vec<String> = doc
            .descendants()
            .filter(|n| n.has_tag_name("text") && n.attribute("text-anchor") == Some("end"))
            .map(|n| n.text().unwrap().to_string())
            .collect();
        assert!(ticks.len() >= 2, "{}: y ticks {ticks:?}", plot.series[0].label);
        for t in &ticks {
            assert!(t.parse::<f64>().is_ok(), "{}: tick '{t}'", plot.series[0].label);
        }
        let markers = doc
            .descendants()
            .filter(|n| n.has_tag_name("circle") && !in_legend(*n))
            .count();
        let placeable = plot.series[0]
            .points
            .iter()
            .filter(|p| p.x.is_finite() && p.estimate.is_finite())
            .count();
        assert_eq!(
            markers, placeable,
            "{}: one marker per placeable dose",
            plot.series[0].label
        );
    }
    let huge = curve_svg(&one("huge", vec![point(0.0, 4.2e9, 1e8), point(1.0, 4.4e9, 1e8)]));
    assert!(
        huge.contains("mean outcome (\u{d7}10\u{2079})"),
        "the axis title names the unit"
    );
}

/// Long title, legend labels, axis titles and marked-dose labels wrap or
/// end in an ellipsis; nothing overprints; many series flow into several
/// legend rows.
#[test]
fn long_labels_neither_overprint_nor_leave_the_figure() {
    let long = "a very long description of the quantity that keeps going well past any sensible width ";
    let mut plot = sample();
    plot.title = long.repeat(3);
    plot.x_label = format!("{} (dose)", long.repeat(2));
    plot.y_label = long.repeat(2);
    for (k, s) in plot.series.iter_mut().enumerate() {
        s.label = format!("method {k}: {}", long.repeat(2));
    }
    plot.series
        .extend((0..4).map(|k| series(&format!("extra method {k}"), move |x| 5.0 + 0.02 * k as f64 * x)));
    plot.marks = vec![
        MarkedDose {
            x: 0.0,
            label: long.repeat(2),
        },
        MarkedDose {
            x: 35.0,
            label: "withoutanyspaces".repeat(10),
        },
        MarkedDose {
            x: 17.5,
            label: "middle".into(),
        },
    ];
    let svg = curve_svg(&plot);
    check_layout(&svg);
    let doc = Document::parse(&svg).unwrap();
    let texts: Vec<String> = text_boxes(&doc).into_iter().map(|t| t.0).collect();
    assert!(
        texts.iter().filter(|t| t.ends_with('\u{2026}')).count() >= 4,
        "{texts:?}"
    );
    // The title wraps over several lines rather than running off.
    assert!(texts.iter().filter(|t| t.starts_with("a very long")).count() >= 3);
}
