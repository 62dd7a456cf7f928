//! Small self-contained SVG plots: x/y axes with "nice" ticks, grid and labels, data series
//! drawn as polylines or point markers, and labelled circle markers (e.g. equivalence points).
//!
//! Used by `phdose curve` (titration curve with equivalence points) and `phdose fit` (lab
//! points against the fitted model). The output is plain SVG 1.1 text with no scripts, no
//! external references and every user-visible string XML-escaped.

use std::fmt::Write;

/// Canvas width, px.
pub const WIDTH: f64 = 800.0;
/// Canvas height, px.
pub const HEIGHT: f64 = 520.0;
const LEFT: f64 = 72.0;
const RIGHT: f64 = 28.0;
/// Top margin above the legend rows.
const TOP_BASE: f64 = 52.0;
/// Height of one legend row.
const LEGEND_ROW: f64 = 18.0;
/// Estimated width of one character of legend text at 13 px (DejaVu Sans averages about 7).
const CHAR_WIDTH: f64 = 7.5;
const BOTTOM: f64 = 62.0;
/// Tick count aimed at on each axis.
const TARGET_TICKS: f64 = 8.0;

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Style {
    /// A polyline through the points in order.
    Line,
    /// A small square at each point.
    Points,
}

/// One data series.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// (x, y) in data units; non-finite points are skipped.
    pub points: Vec<(f64, f64)>,
    /// Line or point markers.
    pub style: Style,
    /// CSS colour.
    pub color: &'static str,
}

/// A labelled circle at a data position.
#[derive(Clone, Debug, PartialEq)]
pub struct Marker {
    /// Position, data units.
    pub x: f64,
    /// Position, data units.
    pub y: f64,
    /// Text beside the circle.
    pub label: String,
}

/// A corner of a marker, for its label.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Corner {
    /// Above and to the left.
    UpperLeft,
    /// Above and to the right.
    UpperRight,
    /// Below and to the left.
    LowerLeft,
    /// Below and to the right.
    LowerRight,
}

/// A group of markers drawn alike, with one legend entry.
#[derive(Clone, Debug, PartialEq)]
pub struct MarkerSet {
    /// Legend text.
    pub name: String,
    /// SVG class of each circle (lets tools and tests find them).
    pub class: &'static str,
    /// CSS colour.
    pub color: &'static str,
    /// Filled dot (`true`) or open ring.
    pub filled: bool,
    /// Where each label goes relative to its circle.
    pub label_at: Corner,
    /// The markers.
    pub markers: Vec<Marker>,
}

/// A plot.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Plot {
    /// Title line.
    pub title: String,
    /// X axis label, with unit.
    pub x_label: String,
    /// Y axis label, with unit.
    pub y_label: String,
    /// Series, drawn in order.
    pub series: Vec<Series>,
    /// Marker groups, drawn over the series.
    pub marker_sets: Vec<MarkerSet>,
}

/// Evenly spaced "nice" ticks (1, 2 or 5 × 10ⁿ apart) covering [lo, hi]: the axis runs from
/// the first tick to the last. A zero-width range is widened by ±0.5 (or ±10 % of |lo|).
pub fn nice_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let (mut lo, mut hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if hi - lo <= f64::EPSILON * hi.abs().max(1.0) {
        let pad = if lo == 0.0 { 0.5 } else { 0.1 * lo.abs() };
        lo -= pad;
        hi += pad;
    }
    let raw = (hi - lo) / TARGET_TICKS;
    let base = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0].iter().map(|m| m * base).find(|s| *s >= raw).unwrap_or(10.0 * base);
    let first = (lo / step).floor();
    let last = (hi / step).ceil();
    // Bounded: (hi − lo)/step ≤ TARGET_TICKS, so at most TARGET_TICKS + 2 ticks.
    let count = (last - first).clamp(1.0, 2.0 * TARGET_TICKS) as u32;
    (0..=count).map(|i| (first + f64::from(i)) * step).collect()
}

/// Decimals that show a tick step exactly enough: 0 for steps ≥ 1, else −⌊log10 step⌋.
fn decimals_for(ticks: &[f64]) -> usize {
    match ticks {
        [a, b, ..] => {
            let step = (b - a).abs();
            if step >= 1.0 || step <= 0.0 { 0 } else { (-step.log10().floor()).clamp(0.0, 10.0) as usize }
        }
        _ => 0,
    }
}

/// Escapes text for SVG content and attribute values.
pub fn escape(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&apos;"),
            c => s.push(c),
        }
    }
    s
}

struct Frame {
    x_ticks: Vec<f64>,
    y_ticks: Vec<f64>,
    top: f64,
}

impl Frame {
    fn bounds(ticks: &[f64]) -> (f64, f64) {
        (ticks.first().copied().unwrap_or(0.0), ticks.last().copied().unwrap_or(1.0))
    }
    fn px(&self, x: f64) -> f64 {
        let (lo, hi) = Self::bounds(&self.x_ticks);
        LEFT + (x - lo) / (hi - lo) * (WIDTH - LEFT - RIGHT)
    }
    fn py(&self, y: f64) -> f64 {
        let (lo, hi) = Self::bounds(&self.y_ticks);
        HEIGHT - BOTTOM - (y - lo) / (hi - lo) * (HEIGHT - self.top - BOTTOM)
    }
}

#[derive(Clone, Copy)]
enum Symbol {
    Line(&'static str),
    Square(&'static str),
    Circle(&'static str, bool),
}

struct LegendEntry<'a> {
    symbol: Symbol,
    text: &'a str,
    x: f64,
    row: usize,
}

/// Places the legend entries left to right, starting a new row when one would run past the
/// plot's right edge.
fn legend_layout(plot: &Plot) -> Vec<LegendEntry<'_>> {
    let items = plot
        .series
        .iter()
        .map(|s| {
            let symbol = match s.style {
                Style::Line => Symbol::Line(s.color),
                Style::Points => Symbol::Square(s.color),
            };
            (symbol, s.name.as_str())
        })
        .chain(
            plot.marker_sets
                .iter()
                .filter(|m| !m.markers.is_empty())
                .map(|m| (Symbol::Circle(m.color, m.filled), m.name.as_str())),
        );
    let mut out = Vec::new();
    let (mut x, mut row) = (LEFT, 0);
    for (symbol, text) in items {
        let width = 30.0 + CHAR_WIDTH * text.chars().count() as f64;
        if x > LEFT && x + width > WIDTH - RIGHT {
            x = LEFT;
            row += 1;
        }
        out.push(LegendEntry { symbol, text, x, row });
        x += width + 22.0;
    }
    out
}

/// Renders the plot as an SVG document. Fails when no series or marker has a finite point.
pub fn render(plot: &Plot) -> Result<String, String> {
    let finite = |(x, y): &(f64, f64)| x.is_finite() && y.is_finite();
    let all: Vec<(f64, f64)> = plot
        .series
        .iter()
        .flat_map(|s| s.points.iter().copied())
        .chain(plot.marker_sets.iter().flat_map(|m| m.markers.iter().map(|k| (k.x, k.y))))
        .filter(finite)
        .collect();
    if all.is_empty() {
        return Err("nothing to plot: no finite points".to_owned());
    }
    let (x_lo, x_hi) = all.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.0), b.max(p.0)));
    let (y_lo, y_hi) = all.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| (a.min(p.1), b.max(p.1)));
    let legend = legend_layout(plot);
    let rows = legend.iter().map(|e| e.row).max().map_or(0, |r| r + 1);
    let top = TOP_BASE + LEGEND_ROW * rows as f64;
    let f = Frame { x_ticks: nice_ticks(x_lo, x_hi), y_ticks: nice_ticks(y_lo, y_hi), top };
    let (plot_l, plot_r, plot_t, plot_b) = (LEFT, WIDTH - RIGHT, top, HEIGHT - BOTTOM);

    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{HEIGHT}" viewBox="0 0 {WIDTH} {HEIGHT}" font-family="DejaVu Sans, Verdana, sans-serif" font-size="13">"#
    );
    let _ = writeln!(s, r#"<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="white"/>"#);
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="24" text-anchor="middle" font-size="16" font-weight="bold">{}</text>"#,
        WIDTH / 2.0,
        escape(&plot.title)
    );

    // Grid, ticks and tick labels.
    let _ = writeln!(s, r##"<g class="grid" stroke="#e3e3e3" stroke-width="1">"##);
    for &t in &f.x_ticks {
        let x = f.px(t);
        let _ = writeln!(s, r#"<line x1="{x:.2}" y1="{plot_t:.2}" x2="{x:.2}" y2="{plot_b:.2}"/>"#);
    }
    for &t in &f.y_ticks {
        let y = f.py(t);
        let _ = writeln!(s, r#"<line x1="{plot_l:.2}" y1="{y:.2}" x2="{plot_r:.2}" y2="{y:.2}"/>"#);
    }
    let _ = writeln!(s, "</g>");
    let _ = writeln!(
        s,
        r#"<rect class="axes" x="{plot_l:.2}" y="{plot_t:.2}" width="{:.2}" height="{:.2}" fill="none" stroke="black" stroke-width="1.2"/>"#,
        plot_r - plot_l,
        plot_b - plot_t
    );
    let (xd, yd) = (decimals_for(&f.x_ticks), decimals_for(&f.y_ticks));
    let _ = writeln!(s, r#"<g class="x-ticks" text-anchor="middle">"#);
    for &t in &f.x_ticks {
        let x = f.px(t);
        let _ = writeln!(
            s,
            r#"<line x1="{x:.2}" y1="{plot_b:.2}" x2="{x:.2}" y2="{:.2}" stroke="black"/><text x="{x:.2}" y="{:.2}">{t:.xd$}</text>"#,
            plot_b + 5.0,
            plot_b + 20.0
        );
    }
    let _ = writeln!(s, "</g>");
    let _ = writeln!(s, r#"<g class="y-ticks" text-anchor="end">"#);
    for &t in &f.y_ticks {
        let y = f.py(t);
        let _ = writeln!(
            s,
            r#"<line x1="{:.2}" y1="{y:.2}" x2="{plot_l:.2}" y2="{y:.2}" stroke="black"/><text x="{:.2}" y="{:.2}">{t:.yd$}</text>"#,
            plot_l - 5.0,
            plot_l - 8.0,
            y + 4.5
        );
    }
    let _ = writeln!(s, "</g>");
    let _ = writeln!(
        s,
        r#"<text class="x-label" x="{:.2}" y="{:.2}" text-anchor="middle" font-size="14">{}</text>"#,
        (plot_l + plot_r) / 2.0,
        HEIGHT - 16.0,
        escape(&plot.x_label)
    );
    let (ly_x, ly_y) = (20.0, (plot_t + plot_b) / 2.0);
    let _ = writeln!(
        s,
        r#"<text class="y-label" x="{ly_x:.2}" y="{ly_y:.2}" text-anchor="middle" font-size="14" transform="rotate(-90 {ly_x:.2} {ly_y:.2})">{}</text>"#,
        escape(&plot.y_label)
    );

    // Series.
    for series in &plot.series {
        let pts: Vec<(f64, f64)> = series.points.iter().copied().filter(finite).collect();
        match series.style {
            Style::Line => {
                let coords: Vec<String> = pts.iter().map(|(x, y)| format!("{:.2},{:.2}", f.px(*x), f.py(*y))).collect();
                let _ = writeln!(
                    s,
                    r#"<polyline class="series" fill="none" stroke="{}" stroke-width="2" stroke-linejoin="round" points="{}"/>"#,
                    series.color,
                    coords.join(" ")
                );
            }
            Style::Points => {
                let _ = writeln!(s, r#"<g class="data-points" fill="{}">"#, series.color);
                for (x, y) in &pts {
                    let _ = writeln!(
                        s,
                        r#"<rect x="{:.2}" y="{:.2}" width="6" height="6"/>"#,
                        f.px(*x) - 3.0,
                        f.py(*y) - 3.0
                    );
                }
                let _ = writeln!(s, "</g>");
            }
        }
    }

    // Markers and their labels.
    for set in &plot.marker_sets {
        let (fill, r) = if set.filled { (set.color, 5.5) } else { ("none", 8.0) };
        for m in set.markers.iter().filter(|m| m.x.is_finite() && m.y.is_finite()) {
            let (cx, cy) = (f.px(m.x), f.py(m.y));
            let _ = writeln!(
                s,
                r#"<circle class="{}" cx="{cx:.2}" cy="{cy:.2}" r="{r}" fill="{fill}" stroke="{}" stroke-width="2"/>"#,
                set.class, set.color
            );
            if m.label.is_empty() {
                continue;
            }
            let (tx, ty, anchor) = match set.label_at {
                Corner::UpperLeft => (cx - 10.0, cy - 10.0, "end"),
                Corner::UpperRight => (cx + 10.0, cy - 10.0, "start"),
                Corner::LowerLeft => (cx - 12.0, cy + 18.0, "end"),
                Corner::LowerRight => (cx + 12.0, cy + 18.0, "start"),
            };
            let tx = tx.clamp(plot_l + 4.0, plot_r - 4.0);
            let ty = ty.clamp(plot_t + 14.0, plot_b - 6.0);
            let _ = writeln!(
                s,
                r#"<text class="{}-label" x="{tx:.2}" y="{ty:.2}" text-anchor="{anchor}" fill="{}" stroke="white" stroke-width="3" paint-order="stroke">{}</text>"#,
                set.class,
                set.color,
                escape(&m.label)
            );
        }
    }

    // Legend: rows under the title, wrapped to the plot's width.
    let _ = writeln!(s, r#"<g class="legend">"#);
    for e in &legend {
        let x = e.x;
        let y = 46.0 + LEGEND_ROW * e.row as f64;
        match e.symbol {
            Symbol::Line(color) => {
                let _ = writeln!(
                    s,
                    r#"<line x1="{x:.2}" y1="{:.2}" x2="{:.2}" y2="{:.2}" stroke="{color}" stroke-width="2"/>"#,
                    y - 4.0,
                    x + 24.0,
                    y - 4.0
                );
            }
            Symbol::Square(color) => {
                let _ =
                    writeln!(s, r#"<rect x="{:.2}" y="{:.2}" width="6" height="6" fill="{color}"/>"#, x + 9.0, y - 7.0);
            }
            Symbol::Circle(color, filled) => {
                let fill = if filled { color } else { "none" };
                let _ = writeln!(
                    s,
                    r#"<circle cx="{:.2}" cy="{:.2}" r="5" fill="{fill}" stroke="{color}" stroke-width="2"/>"#,
                    x + 12.0,
                    y - 4.0
                );
            }
        }
        let _ = writeln!(s, r#"<text x="{:.2}" y="{y:.2}">{}</text>"#, x + 30.0, escape(e.text));
    }
    let _ = writeln!(s, "</g>");
    let _ = writeln!(s, "</svg>");
    Ok(s)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    #[test]
    fn ticks_are_nice_and_cover_the_range() {
        let t = nice_ticks(3.8, 11.2);
        assert_eq!(t, vec![3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0, 12.0]);
        let t = nice_ticks(0.0, 30.0);
        assert_eq!((t[0], t[t.len() - 1], t[1] - t[0]), (0.0, 30.0, 5.0));
        let t = nice_ticks(0.0, 0.012);
        assert!(t[0] <= 0.0 && *t.last().unwrap() >= 0.012 && t.len() <= 18);
        let flat = nice_ticks(7.0, 7.0);
        assert!(flat[0] < 7.0 && *flat.last().unwrap() > 7.0);
        assert_eq!(decimals_for(&[0.0, 0.5]), 1);
        assert_eq!(decimals_for(&[0.0, 2.0]), 0);
    }

    #[test]
    fn renders_series_markers_and_escapes_text() {
        let plot = Plot {
            title: "A <test> & \"plot\"".into(),
            x_label: "titrant (mL)".into(),
            y_label: "pH".into(),
            series: vec![
                Series {
                    name: "model".into(),
                    points: vec![(0.0, 3.0), (1.0, 4.0), (f64::NAN, 1.0), (2.0, 9.0)],
                    style: Style::Line,
                    color: "black",
                },
                Series { name: "lab".into(), points: vec![(0.5, 3.5)], style: Style::Points, color: "gray" },
            ],
            marker_sets: vec![MarkerSet {
                name: "eq".into(),
                class: "eq",
                color: "red",
                filled: true,
                label_at: Corner::UpperLeft,
                markers: vec![Marker { x: 1.5, y: 6.5, label: "pH 6.50".into() }],
            }],
        };
        let svg = render(&plot).unwrap();
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
        assert!(svg.contains("A &lt;test&gt; &amp; &quot;plot&quot;"));
        let poly = svg.lines().find(|l| l.contains("<polyline")).unwrap();
        let pts = poly.split("points=\"").nth(1).unwrap().split('"').next().unwrap();
        assert_eq!(pts.split_whitespace().count(), 3, "the NaN point is skipped");
        assert_eq!(svg.matches("<circle class=\"eq\"").count(), 1);
        assert!(svg.contains(">pH 6.50</text>"));
        assert!(svg.contains(">titrant (mL)</text>") && svg.contains("rotate(-90"));
        assert!(render(&Plot::default()).is_err());
    }
}
