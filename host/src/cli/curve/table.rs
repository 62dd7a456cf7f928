//! The readable `curve` table, and the SVG plot.

use std::fmt::Write;

use super::report::{CurveReport, model_label};
use crate::cli::caution::CAUTION;
use crate::cli::composition;
use crate::cli::format::{fixed, sci, sig};
use crate::cli::layout;
use crate::plot::{Corner, Marker, MarkerSet, Plot, Series, Style};

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

/// The plot: pH against titrant mL, curve-found equivalence points as filled circles labelled
/// with their pH, model points as open rings.
pub fn plot(r: &CurveReport) -> Plot {
    let i = &r.input;
    let titrant = i.titrant.describe();
    // Labels go on the side away from the curve: a falling curve leaves the upper right and
    // lower left free, a rising one the upper left and lower right.
    let falling = match (r.points.first(), r.points.last()) {
        (Some(a), Some(b)) => b.ph < a.ph,
        _ => false,
    };
    let (curve_side, model_side) =
        if falling { (Corner::UpperRight, Corner::LowerLeft) } else { (Corner::LowerRight, Corner::UpperLeft) };
    Plot {
        title: format!("Titration of a {} mL sample with {titrant}", sig(i.sample_volume_l * 1000.0, 6)),
        x_label: "titrant added (mL)".to_owned(),
        y_label: "pH".to_owned(),
        series: vec![Series {
            name: format!("model curve ({} points)", r.points.len()),
            points: r.points.iter().map(|p| (p.titrant_l * 1000.0, p.ph)).collect(),
            style: Style::Line,
            color: "#1f4e9c",
        }],
        marker_sets: vec![
            MarkerSet {
                name: "equivalence point on the curve".to_owned(),
                class: "eq-curve",
                color: "#c0392b",
                filled: true,
                label_at: curve_side,
                markers: r
                    .on_curve
                    .iter()
                    .map(|e| Marker { x: e.titrant_l * 1000.0, y: e.ph, label: format!("pH {}", fixed(e.ph, 2)) })
                    .collect(),
            },
            MarkerSet {
                name: "equivalence point from the model".to_owned(),
                class: "eq-model",
                color: "#2e8b57",
                filled: false,
                label_at: model_side,
                markers: r
                    .model
                    .iter()
                    .filter(|m| {
                        // Label a model point only when no curve point sits near it (else the
                        // curve point's label already gives the pH).
                        r.on_curve.iter().all(|e| (e.titrant_l - m.titrant_l).abs() > 0.02 * i.max_titrant_l)
                    })
                    .map(|e| Marker { x: e.titrant_l * 1000.0, y: e.ph, label: format!("pH {}", fixed(e.ph, 2)) })
                    .chain(
                        r.model
                            .iter()
                            .filter(|m| {
                                r.on_curve.iter().any(|e| (e.titrant_l - m.titrant_l).abs() <= 0.02 * i.max_titrant_l)
                            })
                            .map(|e| Marker { x: e.titrant_l * 1000.0, y: e.ph, label: String::new() }),
                    )
                    .collect(),
            },
        ],
    }
}
