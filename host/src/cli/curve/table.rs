//! The readable `curve` table, and the figure.

use std::fmt::Write;

use phdose::titration::curve::EquivalencePoint;

use super::report::{CurveReport, model_label};
use crate::cli::caution::CAUTION;
use crate::cli::composition;
use crate::cli::format::{fixed, sci, sig};
use crate::cli::layout;
use crate::plot::{self, Corner, Figure, LegendAt, Marker, MarkerSet, Panel, Series, Style};

/// Renders the table; `title` (used by `--example`) goes first; `written` lists files written.
pub fn render(r: &CurveReport, title: Option<&str>, written: &[String]) -> String {
    let i = &r.input;
    let c = i.conditions;
    let activity = layout::activity(c.activity);
    let mut s = layout::start(title);
    let _ = writeln!(s, "Titration curve at {:.1} °C, {activity}", c.celsius());
    let _ = writeln!(s, "sample    {} mL: {}", sig(i.sample_volume_l * 1000.0, 6), composition::describe(&i.sample));
    let _ = writeln!(s, "titrant   {}, 0 to {} mL", i.titrant.describe(), sig(i.max_titrant_l * 1000.0, 6));
    let _ = writeln!(s);
    let _ = writeln!(s, "{:>12} {:>8} {:>16}", "titrant mL", "pH", "buffer capacity");
    let _ = writeln!(s, "{:>12} {:>8} {:>16}", "", "", "mol/L per pH");
    for p in &r.points {
        let _ = writeln!(
            s,
            "{:>12} {:>8} {:>16}",
            fixed(p.titrant_l * 1000.0, 3),
            fixed(p.ph, 3),
            sci(p.buffer_capacity_mol_per_l_per_ph)
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Equivalence points on the curve (slope maxima):");
    if r.on_curve.is_empty() {
        let _ = writeln!(s, "  none found in this range");
    }
    for e in &r.on_curve {
        let _ = writeln!(s, "  {:>9} mL   pH {}", fixed(e.titrant_l * 1000.0, 3), fixed(e.ph, 2));
    }
    let _ = writeln!(s, "Equivalence points from the model (stoichiometry):");
    if r.model.is_empty() {
        let _ = writeln!(s, "  none in this range");
    }
    for e in &r.model {
        let _ = writeln!(s, "  {:>9} mL   pH {}   {}", fixed(e.titrant_l * 1000.0, 3), fixed(e.ph, 2), model_label(e));
    }
    layout::finish(s, written, CAUTION)
}

/// The figure: pH against titrant mL, the equivalence points found on the curve as filled dots
/// and those from the model as open rings, each labelled with its pH (a model point right at a
/// curve point is left unlabelled: the curve point's label gives the pH).
pub fn plot(r: &CurveReport) -> Figure {
    let i = &r.input;
    // Labels and legend go where the curve is not: a falling curve leaves the upper right and
    // lower left free, a rising one the upper left and lower right.
    let falling = match (r.points.first(), r.points.last()) {
        (Some(a), Some(b)) => b.ph < a.ph,
        _ => false,
    };
    let (curve_side, model_side, legend_at) = if falling {
        (Corner::UpperRight, Corner::LowerLeft, LegendAt::UpperRight)
    } else {
        (Corner::LowerRight, Corner::UpperLeft, LegendAt::LowerRight)
    };
    let marker = |e: &EquivalencePoint<f64>, labelled: bool| Marker {
        x: e.titrant_l * 1000.0,
        y: e.ph,
        label: if labelled { format!("pH {}", fixed(e.ph, 2)) } else { String::new() },
    };
    let near_curve_point = |m: &EquivalencePoint<f64>| {
        r.on_curve.iter().any(|e| (e.titrant_l - m.titrant_l).abs() <= 0.02 * i.max_titrant_l)
    };
    Figure {
        title: format!("Titration of a {} mL sample with {}", sig(i.sample_volume_l * 1000.0, 6), i.titrant.describe()),
        x_label: "titrant added (mL)".to_owned(),
        panels: vec![Panel {
            y_label: "pH".to_owned(),
            series: vec![Series {
                name: format!("model curve ({} points)", r.points.len()),
                points: r.points.iter().map(|p| (p.titrant_l * 1000.0, p.ph)).collect(),
                style: Style::Line,
                color: plot::BLUE,
            }],
            marker_sets: vec![
                MarkerSet {
                    name: "equivalence point on the curve".to_owned(),
                    color: plot::RED,
                    filled: true,
                    label_at: curve_side,
                    markers: r.on_curve.iter().map(|e| marker(e, true)).collect(),
                },
                MarkerSet {
                    name: "equivalence point from the model".to_owned(),
                    color: plot::GREEN,
                    filled: false,
                    label_at: model_side,
                    markers: r.model.iter().map(|e| marker(e, !near_curve_point(e))).collect(),
                },
            ],
            legend_at,
        }],
    }
}
