//! Figures drawn with `plotters` on its SVG backend: one or more panels stacked on a shared x
//! axis, each with its own y axis, line and point series, labelled markers and a legend.
//!
//! `phdose curve` and `phdose fit` draw one panel; a time-series figure stacks several (pH,
//! flows, events) on one time axis with the same types. The caller describes the figure as
//! data ([`Figure`]); [`render`] turns it into an SVG document.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

pub use plotters::chart::SeriesLabelPosition as LegendAt;

/// Figure width, px.
const WIDTH: u32 = 800;
/// Height of the title strip, px.
const TITLE_HEIGHT: u32 = 40;
/// Height of one panel, px.
const PANEL_HEIGHT: u32 = 480;
const FONT: &str = "sans-serif";

/// Blue of a model curve.
pub const BLUE: RGBColor = RGBColor(0x1f, 0x4e, 0x9c);
/// Red of measured points and of the equivalence points found on a curve.
pub const RED: RGBColor = RGBColor(0xc0, 0x39, 0x2b);
/// Green of the equivalence points from the model.
pub const GREEN: RGBColor = RGBColor(0x2e, 0x8b, 0x57);

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Style {
    /// A line through the points in order.
    Line,
    /// A small filled square at each point.
    Points,
}

/// One data series.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// (x, y) in data units; points that are not finite are skipped.
    pub points: Vec<(f64, f64)>,
    /// Line or points.
    pub style: Style,
    /// Colour.
    pub color: RGBColor,
}

/// A marker at a data position, with a label beside it (none when empty).
#[derive(Clone, Debug, PartialEq)]
pub struct Marker {
    /// Position, data units.
    pub x: f64,
    /// Position, data units.
    pub y: f64,
    /// Text beside the circle.
    pub label: String,
}

/// Where a marker's label goes, seen from the marker.
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

/// Markers drawn alike (circles, filled or open), with one legend entry.
#[derive(Clone, Debug, PartialEq)]
pub struct MarkerSet {
    /// Legend text.
    pub name: String,
    /// Colour.
    pub color: RGBColor,
    /// Filled dot (`true`) or open ring.
    pub filled: bool,
    /// Where the labels go.
    pub label_at: Corner,
    /// The markers.
    pub markers: Vec<Marker>,
}

/// One panel: a y axis, its series and markers, and where its legend sits.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// Y axis label, with unit.
    pub y_label: String,
    /// Series, drawn in order.
    pub series: Vec<Series>,
    /// Marker sets, drawn over the series.
    pub marker_sets: Vec<MarkerSet>,
    /// Corner of the legend.
    pub legend_at: LegendAt,
}

/// A figure: panels stacked top to bottom on one x axis.
#[derive(Clone, Debug, PartialEq)]
pub struct Figure {
    /// Title line.
    pub title: String,
    /// X axis label, with unit (shown under the bottom panel).
    pub x_label: String,
    /// The panels, top first.
    pub panels: Vec<Panel>,
}

fn finite(&(x, y): &(f64, f64)) -> bool {
    x.is_finite() && y.is_finite()
}

impl Panel {
    /// Every finite point of the panel: series and markers.
    fn points(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        let series = self.series.iter().flat_map(|s| s.points.iter().copied());
        let markers = self.marker_sets.iter().flat_map(|m| m.markers.iter().map(|k| (k.x, k.y)));
        series.chain(markers).filter(finite)
    }
}

/// The range covering `values`, widened by 4 % on each side (`pad`), or by ±0.5 when it has no
/// width; `None` when there are no values.
fn range(values: impl Iterator<Item = f64>, pad: bool) -> Option<std::ops::Range<f64>> {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| (lo.min(v), hi.max(v)));
    if lo > hi {
        return None;
    }
    let margin = if hi > lo { if pad { 0.04 * (hi - lo) } else { 0.0 } } else { 0.5 };
    Some(lo - margin..hi + margin)
}

/// A plotters error as text.
fn text(e: impl std::fmt::Display) -> String {
    e.to_string()
}

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// Offset (px) and text anchor of a label at `corner`.
fn label_place(corner: Corner) -> ((i32, i32), Pos) {
    match corner {
        Corner::UpperLeft => ((-9, -9), Pos::new(HPos::Right, VPos::Bottom)),
        Corner::UpperRight => ((9, -9), Pos::new(HPos::Left, VPos::Bottom)),
        Corner::LowerLeft => ((-9, 9), Pos::new(HPos::Right, VPos::Top)),
        Corner::LowerRight => ((9, 9), Pos::new(HPos::Left, VPos::Top)),
    }
}

/// Draws one panel on `area`; `x_label` is shown when given (the bottom panel).
fn draw_panel(area: &Area<'_>, panel: &Panel, x: std::ops::Range<f64>, x_label: Option<&str>) -> Result<(), String> {
    let y = range(panel.points().map(|(_, y)| y), true).unwrap_or(0.0..1.0);
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .margin_right(24)
        .x_label_area_size(if x_label.is_some() { 48 } else { 24 })
        .y_label_area_size(64)
        .build_cartesian_2d(x, y)
        .map_err(text)?;
    let mut mesh = chart.configure_mesh();
    mesh.y_desc(panel.y_label.as_str())
        .label_style((FONT, 15))
        .axis_desc_style((FONT, 17))
        .light_line_style(WHITE.mix(0.0))
        .bold_line_style(BLACK.mix(0.12));
    if let Some(label) = x_label {
        mesh.x_desc(label);
    }
    mesh.draw().map_err(text)?;

    for s in &panel.series {
        let points = s.points.iter().copied().filter(finite);
        let color = s.color;
        // A series with an empty name gets no legend entry (the second line of a band).
        let named = !s.name.is_empty();
        match s.style {
            Style::Line => {
                let drawn = chart.draw_series(LineSeries::new(points, color.stroke_width(2))).map_err(text)?;
                if named {
                    drawn
                        .label(s.name.as_str())
                        .legend(move |(x, y)| PathElement::new([(x, y), (x + 20, y)], color.stroke_width(2)));
                }
            }
            Style::Points => {
                let drawn = chart
                    .draw_series(
                        points.map(|p| EmptyElement::at(p) + Rectangle::new([(-3, -3), (3, 3)], color.filled())),
                    )
                    .map_err(text)?;
                if named {
                    drawn
                        .label(s.name.as_str())
                        .legend(move |(x, y)| Rectangle::new([(x + 7, y - 3), (x + 13, y + 3)], color.filled()));
                }
            }
        }
    }
    for set in panel.marker_sets.iter().filter(|m| !m.markers.is_empty()) {
        let (style, radius) = if set.filled { (set.color.filled(), 6) } else { (set.color.stroke_width(2), 8) };
        let (offset, anchor) = label_place(set.label_at);
        let font = (FONT, 15).into_font().color(&set.color).pos(anchor);
        let markers = set.markers.iter().filter(|m| finite(&(m.x, m.y)));
        chart
            .draw_series(markers.map(|m| {
                EmptyElement::at((m.x, m.y))
                    + Circle::new((0, 0), radius, style)
                    + Text::new(m.label.clone(), offset, font.clone())
            }))
            .map_err(text)?
            .label(set.name.as_str())
            .legend(move |(x, y)| Circle::new((x + 10, y), 5, style));
    }
    chart
        .configure_series_labels()
        .position(panel.legend_at.clone())
        .label_font((FONT, 15))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK.mix(0.4))
        .draw()
        .map_err(text)?;
    Ok(())
}

/// Renders the figure as an SVG document. Fails when no panel has a finite point.
pub fn render(figure: &Figure) -> Result<String, String> {
    let x = range(figure.panels.iter().flat_map(Panel::points).map(|(x, _)| x), false)
        .ok_or_else(|| "nothing to plot: no finite points".to_owned())?;
    let rows = u32::try_from(figure.panels.len()).unwrap_or(1).max(1);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, TITLE_HEIGHT + rows * PANEL_HEIGHT)).into_drawing_area();
        root.fill(&WHITE).map_err(text)?;
        let body = root.titled(&figure.title, (FONT, 20).into_font().style(FontStyle::Bold)).map_err(text)?;
        let areas = body.split_evenly((figure.panels.len(), 1));
        let last = figure.panels.len().saturating_sub(1);
        for (k, (panel, area)) in figure.panels.iter().zip(&areas).enumerate() {
            let x_label = (k == last).then_some(figure.x_label.as_str());
            draw_panel(area, panel, x.clone(), x_label)?;
        }
        root.present().map_err(text)?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    fn panel(y_label: &str, points: Vec<(f64, f64)>) -> Panel {
        Panel {
            y_label: y_label.into(),
            series: vec![Series { name: "model".into(), points, style: Style::Line, color: BLUE }],
            marker_sets: Vec::new(),
            legend_at: LegendAt::UpperRight,
        }
    }

    /// The vertices of each polyline drawn in `color` with more than two points (legend
    /// samples have two).
    fn lines(doc: &roxmltree::Document<'_>, color: &str) -> Vec<Vec<(f64, f64)>> {
        doc.descendants()
            .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke") == Some(color))
            .map(|n| {
                let points = n.attribute("points").unwrap_or("").split_whitespace();
                points
                    .filter_map(|p| p.split_once(','))
                    .map(|(x, y)| (x.parse().unwrap(), y.parse().unwrap()))
                    .collect()
            })
            .filter(|v: &Vec<(f64, f64)>| v.len() > 2)
            .collect()
    }

    fn texts(doc: &roxmltree::Document<'_>) -> Vec<String> {
        doc.descendants().filter(|n| n.has_tag_name("text")).map(|n| n.text().unwrap_or("").trim().to_owned()).collect()
    }

    #[test]
    fn one_panel_with_series_markers_and_escaped_text() {
        let mut p = panel("pH", vec![(0.0, 3.0), (1.0, 4.0), (f64::NAN, 1.0), (2.0, 9.0)]);
        p.series.push(Series {
            name: "lab <points>".into(),
            points: vec![(0.5, 3.5)],
            style: Style::Points,
            color: RED,
        });
        p.marker_sets.push(MarkerSet {
            name: "equivalence & more".into(),
            color: GREEN,
            filled: false,
            label_at: Corner::UpperLeft,
            markers: vec![Marker { x: 1.5, y: 6.5, label: "pH 6.50".into() }],
        });
        let figure = Figure { title: "A \"test\"".into(), x_label: "titrant (mL)".into(), panels: vec![p] };
        let svg = render(&figure).unwrap();
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let texts = texts(&doc);
        for want in ["A \"test\"", "titrant (mL)", "pH", "pH 6.50", "lab <points>", "equivalence & more"] {
            assert!(texts.iter().any(|t| t == want), "{want} missing in {texts:?}");
        }
        let lines = lines(&doc, "#1F4E9C");
        assert_eq!(lines.len(), 1);
        assert_eq!(lines[0].len(), 3, "the NaN point is skipped");
        // One open ring for the marker and one in the legend.
        let rings = doc.descendants().filter(|n| n.has_tag_name("circle") && n.attribute("fill") == Some("none"));
        assert_eq!(rings.count(), 2);
    }

    #[test]
    fn stacked_panels_share_one_x_axis() {
        let figure = Figure {
            title: "Run".into(),
            x_label: "time (min)".into(),
            panels: vec![
                panel("pH", vec![(0.0, 7.0), (30.0, 7.1), (60.0, 7.2)]),
                panel("flow (L/h)", vec![(0.0, 1.0), (15.0, 1.5), (30.0, 2.0)]),
            ],
        };
        let svg = render(&figure).unwrap();
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let texts = texts(&doc);
        assert!(texts.iter().any(|t| t == "pH") && texts.iter().any(|t| t == "flow (L/h)"));
        assert_eq!(texts.iter().filter(|t| *t == "time (min)").count(), 1, "x label under the bottom panel only");
        let height: u32 = doc.root_element().attribute("height").unwrap().parse().unwrap();
        assert_eq!(height, TITLE_HEIGHT + 2 * PANEL_HEIGHT);
        // Both panels run to the same x: the shorter series ends at half the width of the longer.
        let ends: Vec<f64> = lines(&doc, "#1F4E9C").iter().map(|l| l.last().unwrap().0).collect();
        assert_eq!(ends.len(), 2, "{ends:?}");
        let starts: Vec<f64> = lines(&doc, "#1F4E9C").iter().map(|l| l[0].0).collect();
        assert_eq!(starts[0], starts[1], "same x origin");
        assert!((ends[1] - starts[1] - (ends[0] - starts[0]) / 2.0).abs() <= 1.0, "{starts:?} {ends:?}");
    }

    #[test]
    fn nothing_to_plot_is_an_error() {
        let figure =
            Figure { title: "empty".into(), x_label: "x".into(), panels: vec![panel("y", vec![(f64::NAN, 1.0)])] };
        assert!(render(&figure).is_err());
    }
}
