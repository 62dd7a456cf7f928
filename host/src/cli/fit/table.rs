//! The readable `fit` report, and the figure of data against the fit.

use std::fmt::Write;

use phdose::titration::fit::{FitResult, MAX_FIT_ITERATIONS, MAX_RMS_PH};

use super::report::{FitReport, refusal_hint, refusal_key};
use crate::cli::caution::CAUTION;
use crate::cli::format::{fixed, num, sig};
use crate::cli::layout;
use crate::plot::{self, Figure, LegendAt, Panel, Series, Style};

const LABEL: usize = 18;

fn pm(value: f64, se: f64, decimals: usize) -> String {
    format!("{} ± {}", fixed(value, decimals), fixed(se, decimals))
}

/// Renders the report; `title` (used by `--example`) goes first; `written` lists files written.
/// A refused fit starts with `FIT REFUSED:` and the reason, and its numbers (when the fit ran
/// to the end) are marked as the refused fit's.
pub fn render(r: &FitReport, title: Option<&str>, written: &[String]) -> String {
    let i = &r.input;
    let activity = layout::activity(i.conditions.activity);
    let mut s = layout::start(title);
    if let Some(e) = &r.refusal {
        let _ = writeln!(s, "FIT REFUSED: {e}");
        let _ = writeln!(s, "{:<LABEL$}{}", "what to try", refusal_hint(e));
        let _ = writeln!(s);
    }
    let heading = match (&r.refusal, &r.result) {
        (None, _) => "Effective composition fitted to",
        (Some(_), Some(_)) => "Refused fit (its numbers are not the sample's) of",
        (Some(_), None) => "No composition: the fit was refused before a result, for",
    };
    let _ = writeln!(s, "{heading} {} lab points", i.points_ml.len());
    let _ = writeln!(
        s,
        "{:<LABEL$}{} mL titrated with {}, {:.1} °C, {activity}",
        "sample",
        sig(i.sample_volume_l * 1000.0, 6),
        i.titrant.describe(),
        i.conditions.celsius()
    );
    let (lo, hi) = r.data_ph_range();
    let _ = writeln!(s, "{:<LABEL$}pH {} to {}", "data", fixed(lo, 2), fixed(hi, 2));
    let inert = i.unknowns.inert_ionic_strength_mol_per_l;
    if inert > 0.0 {
        let _ = writeln!(s, "{:<LABEL$}{} mol/L ionic strength of inert salts (given)", "salts", sig(inert, 3));
    }
    let _ = writeln!(s);
    if let Some(result) = &r.result {
        values(&mut s, r, result);
    }
    let _ = writeln!(s, "{:<LABEL$}{}", "quality", quality_line(r));
    let st = &r.start.effective;
    let _ = writeln!(
        s,
        "{:<LABEL$}strong charge {} meq/L: {}",
        "start",
        sig(st.strong_charge_eq_per_l * 1000.0, 3),
        r.start.basis
    );
    let mut rest = Vec::new();
    if i.unknowns.carbonate {
        rest.push(format!("carbonate {} mmol/L", sig(st.carbonate_mol_per_l * 1000.0, 3)));
    }
    if i.unknowns.phosphate {
        rest.push(format!("phosphate {} mmol/L", sig(st.phosphate_mol_per_l * 1000.0, 3)));
    }
    for (c, pka) in st.buffers.iter().take(usize::from(i.unknowns.buffers)) {
        rest.push(format!("buffer {} mmol/L at pKa {}", sig(c * 1000.0, 3), fixed(*pka, 2)));
    }
    if !rest.is_empty() {
        let _ = writeln!(s, "{:<LABEL$}{}", "", rest.join("; "));
    }
    let _ = writeln!(s);
    if r.result.is_some() {
        let _ = writeln!(s, "± is one standard error. Buffers are generic monoprotic acids (pKa without temperature");
        let _ = writeln!(s, "dependence); together they stand for whatever buffers the real influent.");
    }
    layout::finish(s, written, CAUTION)
}

/// The fitted values with their standard errors, the residual and the iterations.
fn values(s: &mut String, r: &FitReport, result: &FitResult<f64>) {
    let i = &r.input;
    let e = &result.effective;
    let se = &result.standard_errors;
    let q = e.strong_charge_eq_per_l * 1000.0;
    let sense = if q < 0.0 { "net strong acid" } else { "net strong base" };
    let _ =
        writeln!(s, "{:<LABEL$}{} meq/L   ({sense})", "strong charge", pm(q, se.strong_charge_eq_per_l * 1000.0, 3));
    if i.unknowns.carbonate {
        let _ = writeln!(
            s,
            "{:<LABEL$}{} mmol/L",
            "carbonate",
            pm(e.carbonate_mol_per_l * 1000.0, se.carbonate_mol_per_l * 1000.0, 3)
        );
    }
    if i.unknowns.phosphate {
        let _ = writeln!(
            s,
            "{:<LABEL$}{} mmol/L",
            "phosphate",
            pm(e.phosphate_mol_per_l * 1000.0, se.phosphate_mol_per_l * 1000.0, 3)
        );
    }
    for (k, ((c, pka), (sc, spka))) in
        e.buffers.iter().zip(se.buffers.iter()).take(usize::from(i.unknowns.buffers)).enumerate()
    {
        let name = if k == 0 { "buffer a" } else { "buffer b" };
        let _ = writeln!(s, "{:<LABEL$}{} mmol/L, pKa {}", name, pm(c * 1000.0, sc * 1000.0, 3), pm(*pka, *spka, 2));
    }
    let _ = writeln!(s, "{:<LABEL$}{} pH (bound {})", "residual RMS", sig(result.rms_ph, 3), num(MAX_RMS_PH));
    let how = if result.converged {
        "converged: no step improved the residual any more".to_owned()
    } else {
        format!("did not converge: stopped at the cap of {MAX_FIT_ITERATIONS}")
    };
    let _ = writeln!(s, "{:<LABEL$}{} (Levenberg-Marquardt), {how}", "iterations", result.iterations);
}

/// The quality verdict in one line: what was checked, or why the fit is refused.
fn quality_line(r: &FitReport) -> String {
    match &r.refusal {
        Some(e) => format!("REFUSED ({}): see above", refusal_key(e).replace('_', " ")),
        None => {
            let (lo, hi) = r.allowed_pka_range();
            // The data's range narrowed by PKA_INSIDE_DATA_PH at each end.
            let pka = if r.input.unknowns.buffers > 0 {
                format!(", pKa within pH {}-{}", fixed(lo, 2), fixed(hi, 2))
            } else {
                String::new()
            };
            format!("accepted: identifiable, converged, RMS <= {} pH{pka}", num(MAX_RMS_PH))
        }
    }
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
                    name: match (&r.result, &r.refusal) {
                        (Some(f), None) => format!("fitted model (RMS {} pH)", sig(f.rms_ph, 2)),
                        (Some(f), Some(_)) => format!("refused fit (RMS {} pH)", sig(f.rms_ph, 2)),
                        (None, _) => "no model: fit refused".to_owned(),
                    },
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
