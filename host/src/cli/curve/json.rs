//! The `curve` JSON document.

use serde::Serialize;

use super::report::CurveReport;
use crate::cli::CliError;
use crate::cli::json::{self, Num};
use crate::cli::reagent::ReagentOut;

#[derive(Serialize)]
struct Output<'a> {
    points: Vec<PointOut>,
    equivalence_points: Equivalence,
    sample_volume_ml: Num,
    max_titrant_ml: Num,
    point_count: usize,
    titrant: ReagentOut,
    temperature_c: Num,
    activity: &'static str,
    files: Files<'a>,
}

#[derive(Serialize)]
struct PointOut {
    titrant_ml: Num,
    ph: Num,
    buffer_capacity: Num,
}

#[derive(Serialize)]
struct Equivalence {
    curve: Vec<CurveEq>,
    model: Vec<ModelEq>,
}

#[derive(Serialize)]
struct CurveEq {
    titrant_ml: Num,
    ph: Num,
}

#[derive(Serialize)]
struct ModelEq {
    titrant_ml: Num,
    ph: Num,
    system: &'static str,
    step: u8,
}

#[derive(Serialize)]
struct Files<'a> {
    csv: Option<&'a str>,
    svg: Option<&'a str>,
}

/// Renders the report; `csv`/`svg` name the files written, if any.
pub fn render(r: &CurveReport, csv: Option<&str>, svg: Option<&str>) -> Result<String, CliError> {
    let out = Output {
        points: r
            .points
            .iter()
            .map(|p| PointOut {
                titrant_ml: Num(p.titrant_l * 1000.0),
                ph: Num(p.ph),
                buffer_capacity: Num(p.buffer_capacity_mol_per_l_per_ph),
            })
            .collect(),
        equivalence_points: Equivalence {
            curve: r
                .on_curve
                .iter()
                .map(|e| CurveEq { titrant_ml: Num(e.titrant_l * 1000.0), ph: Num(e.ph) })
                .collect(),
            model: r
                .model
                .iter()
                .map(|e| ModelEq {
                    titrant_ml: Num(e.titrant_l * 1000.0),
                    ph: Num(e.ph),
                    system: e.system,
                    step: e.step,
                })
                .collect(),
        },
        sample_volume_ml: Num(r.input.sample_volume_l * 1000.0),
        max_titrant_ml: Num(r.input.max_titrant_l * 1000.0),
        point_count: r.points.len(),
        titrant: r.input.titrant.to_out(),
        temperature_c: Num(r.input.conditions.celsius()),
        activity: r.input.conditions.activity_name(),
        files: Files { csv, svg },
    };
    json::render(&out)
}
