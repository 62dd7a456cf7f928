//! The readable `fit` report, and the figure of data against the fit.

use std::fmt::Write;

use super::report::FitReport;
use crate::cli::caution::CAUTION;
use crate::cli::format::{fixed, sig};
use crate::cli::layout;
use crate::plot::{self, Figure, LegendAt, Panel, Series, Style};

const LABEL: usize = 18;

fn pm(value: f64, se: f64, decimals: usize) -> String {
    format!("{} ± {}", fixed(value, decimals), fixed(se, decimals))
}

/// Renders the report; `title` (used by `--example`) goes first; `written` lists files written.
pub fn render(r: &FitReport, title: Option<&str>, written: &[String]) -> String {
    let i = &r.input;
    let e = &r.result.effective;
    let se = &r.result.standard_errors;
    let activity = layout::activity(i.conditions.activity);
    let mut s = layout::start(title);
    let _ = writeln!(s, "Effective composition fitted to {} lab points", r.result.points);
    let _ = writeln!(
        s,
        "{:<LABEL$}{} mL titrated with {}, {:.1} °C, {activity}",
        "sample",
        sig(i.sample_volume_l * 1000.0, 6),
        i.titrant.describe(),
        i.conditions.celsius()
    );
    let _ = writeln!(s);
    let q = e.strong_charge_eq_per_l * 1000.0;
    let sense = if q < 0.0 { "net strong acid" } else { "net strong base" };
    let _ =
        writeln!(s, "{:<LABEL$}{} meq/L   ({sense})", "strong charge", pm(q, se.strong_charge_eq_per_l * 1000.0, 3));
    if i.carbonate {
        let _ = writeln!(
            s,
            "{:<LABEL$}{} mmol/L",
            "carbonate",
            pm(e.carbonate_mol_per_l * 1000.0, se.carbonate_mol_per_l * 1000.0, 3)
        );
    }
    for (k, ((c, pka), (sc, spka))) in e.buffers.iter().zip(se.buffers.iter()).take(usize::from(i.buffers)).enumerate()
    {
        let name = if k == 0 { "buffer a" } else { "buffer b" };
        let _ = writeln!(s, "{:<LABEL$}{} mmol/L, pKa {}", name, pm(c * 1000.0, sc * 1000.0, 3), pm(*pka, *spka, 2));
    }
    let _ = writeln!(s, "{:<LABEL$}{} pH", "residual RMS", sig(r.result.rms_ph, 3));
    let _ = writeln!(s, "{:<LABEL$}{} (Levenberg-Marquardt)", "iterations", r.result.iterations);
    let st = &r.start.effective;
    let _ = writeln!(
        s,
        "{:<LABEL$}strong charge {} meq/L: {}",
        "start",
        sig(st.strong_charge_eq_per_l * 1000.0, 3),
        r.start.basis
    );
    let mut rest = Vec::new();
    if i.carbonate {
        rest.push(format!("carbonate {} mmol/L", sig(st.carbonate_mol_per_l * 1000.0, 3)));
    }
    for (c, pka) in st.buffers.iter().take(usize::from(i.buffers)) {
        rest.push(format!("buffer {} mmol/L at pKa {}", sig(c * 1000.0, 3), fixed(*pka, 2)));
    }
    if !rest.is_empty() {
        let _ = writeln!(s, "{:<LABEL$}{}", "", rest.join("; "));
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "± is one standard error. Buffers are generic monoprotic acids (pKa without temperature");
    let _ = writeln!(s, "dependence); together they stand for whatever buffers the real influent.");
    layout::finish(s, written, CAUTION)
}

/// The figure: lab points as squares, the fitted model as a line.
pub fn plot(r: &FitReport) -> Figure {
    let i = &r.input;
    let rising = match (i.points_ml.first(), i.points_ml.last()) {
        (Some(a), Some(b)) => b.1 >= a.1,
        _ => true,
    };
    Figure {
        title: format!(
            "Lab titration ({} mL with {}) and the fitted model",
            sig(i.sample_volume_l * 1000.0, 6),
            i.titrant.describe()
        ),
        x_label: "titrant added (mL)".to_owned(),
        panels: vec![Panel {
            y_label: "pH".to_owned(),
            series: vec![
                Series {
                    name: format!("fitted model (RMS {} pH)", sig(r.result.rms_ph, 2)),
                    points: r.model_curve.iter().map(|p| (p.titrant_l * 1000.0, p.ph)).collect(),
                    style: Style::Line,
                    color: plot::BLUE,
                },
                Series {
                    name: format!("lab points ({})", i.points_ml.len()),
                    points: i.points_ml.clone(),
                    style: Style::Points,
                    color: plot::RED,
                },
            ],
            marker_sets: Vec::new(),
            legend_at: if rising { LegendAt::LowerRight } else { LegendAt::UpperRight },
        }],
    }
}
