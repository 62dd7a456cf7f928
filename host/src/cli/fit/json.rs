//! The `fit` JSON document.

use serde::Serialize;

use super::report::FitReport;
use crate::cli::CliError;
use crate::cli::json::{self, Num};
use crate::cli::reagent::ReagentOut;

#[derive(Serialize)]
struct Output<'a> {
    strong_charge_meq_per_l: Value,
    carbonate_mmol_per_l: Option<Value>,
    buffers: Vec<BufferOut>,
    rms_ph: Num,
    points: u32,
    iterations: u32,
    start: StartOut<'a>,
    sample_volume_l: Num,
    titrant: ReagentOut,
    temperature_c: Num,
    activity: &'static str,
    svg_file: Option<&'a str>,
}

#[derive(Serialize)]
struct Value {
    value: Num,
    standard_error: Num,
}

#[derive(Serialize)]
struct BufferOut {
    total_mmol_per_l: Value,
    pka: Value,
}

#[derive(Serialize)]
struct StartOut<'a> {
    strong_charge_meq_per_l: Num,
    carbonate_mmol_per_l: Option<Num>,
    buffer_pkas: Vec<Num>,
    basis: &'a str,
}

/// Renders the report; `svg` names the plot file written, if any.
pub fn render(r: &FitReport, svg: Option<&str>) -> Result<String, CliError> {
    let e = &r.result.effective;
    let se = &r.result.standard_errors;
    let i = &r.input;
    let nb = usize::from(i.buffers);
    let out = Output {
        strong_charge_meq_per_l: Value {
            value: Num(e.strong_charge_eq_per_l * 1000.0),
            standard_error: Num(se.strong_charge_eq_per_l * 1000.0),
        },
        carbonate_mmol_per_l: i.carbonate.then_some(Value {
            value: Num(e.carbonate_mol_per_l * 1000.0),
            standard_error: Num(se.carbonate_mol_per_l * 1000.0),
        }),
        buffers: e
            .buffers
            .iter()
            .zip(se.buffers.iter())
            .take(nb)
            .map(|((c, pka), (sc, spka))| BufferOut {
                total_mmol_per_l: Value { value: Num(c * 1000.0), standard_error: Num(sc * 1000.0) },
                pka: Value { value: Num(*pka), standard_error: Num(*spka) },
            })
            .collect(),
        rms_ph: Num(r.result.rms_ph),
        points: r.result.points,
        iterations: r.result.iterations,
        start: StartOut {
            strong_charge_meq_per_l: Num(r.start.effective.strong_charge_eq_per_l * 1000.0),
            carbonate_mmol_per_l: i.carbonate.then_some(Num(r.start.effective.carbonate_mol_per_l * 1000.0)),
            buffer_pkas: r.start.effective.buffers.iter().take(nb).map(|b| Num(b.1)).collect(),
            basis: &r.start.basis,
        },
        sample_volume_l: Num(i.sample_volume_l),
        titrant: i.titrant.to_out(),
        temperature_c: Num(i.conditions.celsius()),
        activity: i.conditions.activity_name(),
        svg_file: svg,
    };
    json::render(&out)
}
