//! The `fit` JSON document (also for a refused fit: `quality` says which).

use phdose::titration::fit::MAX_RMS_PH;
use serde::Serialize;

use super::report::{FitReport, refusal_key, refusal_reason};
use crate::cli::CliError;
use crate::cli::json::{self, Num};
use crate::cli::reagent::ReagentOut;

#[derive(Serialize)]
struct Output<'a> {
    quality: &'static str,
    refusal: Option<&'static str>,
    reason: Option<String>,
    strong_charge_eq_per_l: Option<Value>,
    carbonate_mol_per_l: Option<Value>,
    phosphate_mol_per_l: Option<Value>,
    buffers: Vec<BufferOut>,
    rms_ph: Option<Num>,
    max_rms_ph: Num,
    point_count: u32,
    fit_iterations: Option<u32>,
    converged: Option<bool>,
    data_ph_range: [Num; 2],
    allowed_pka_range: [Num; 2],
    start: StartOut<'a>,
    sample_volume_ml: Num,
    inert_ionic_strength_mol_per_l: Num,
    titrant: ReagentOut,
    temperature_c: Num,
    activity: &'static str,
    files: Files<'a>,
}

#[derive(Serialize)]
struct Files<'a> {
    svg: Option<&'a str>,
}

#[derive(Serialize)]
struct Value {
    value: Num,
    standard_error: Num,
}

#[derive(Serialize)]
struct BufferOut {
    total_mol_per_l: Value,
    pka: Value,
}

#[derive(Serialize)]
struct StartOut<'a> {
    strong_charge_eq_per_l: Num,
    carbonate_mol_per_l: Option<Num>,
    phosphate_mol_per_l: Option<Num>,
    buffer_pkas: Vec<Num>,
    basis: &'a str,
}

/// Renders the report; `svg` names the plot file written, if any. A refused fit has
/// `"quality": "refused"`, its `refusal` key and `reason`; the values are those of the refused
/// fit, or null when it was refused before a result (ill-conditioned).
pub fn render(r: &FitReport, svg: Option<&str>) -> Result<String, CliError> {
    let i = &r.input;
    let u = i.unknowns;
    let nb = usize::from(u.buffers);
    let res = r.result.as_ref();
    let value = |v: f64, se: f64, scale: f64| Value { value: Num(v * scale), standard_error: Num(se * scale) };
    let (lo, hi) = r.data_ph_range();
    let (pka_lo, pka_hi) = r.allowed_pka_range();
    let out = Output {
        quality: if r.refusal.is_some() { "refused" } else { "accepted" },
        refusal: r.refusal.as_ref().map(refusal_key),
        reason: r.refusal.as_ref().map(refusal_reason),
        strong_charge_eq_per_l: res
            .map(|f| value(f.effective.strong_charge_eq_per_l, f.standard_errors.strong_charge_eq_per_l, 1.0)),
        carbonate_mol_per_l: res
            .filter(|_| u.carbonate)
            .map(|f| value(f.effective.carbonate_mol_per_l, f.standard_errors.carbonate_mol_per_l, 1.0)),
        phosphate_mol_per_l: res
            .filter(|_| u.phosphate)
            .map(|f| value(f.effective.phosphate_mol_per_l, f.standard_errors.phosphate_mol_per_l, 1.0)),
        buffers: res
            .map(|f| {
                f.effective
                    .buffers
                    .iter()
                    .zip(f.standard_errors.buffers.iter())
                    .take(nb)
                    .map(|((c, pka), (sc, spka))| BufferOut {
                        total_mol_per_l: value(*c, *sc, 1.0),
                        pka: value(*pka, *spka, 1.0),
                    })
                    .collect()
            })
            .unwrap_or_default(),
        rms_ph: res.map(|f| Num(f.rms_ph)),
        max_rms_ph: Num(MAX_RMS_PH),
        point_count: u32::try_from(i.points_ml.len()).unwrap_or(u32::MAX),
        fit_iterations: res.map(|f| f.iterations),
        converged: res.map(|f| f.converged),
        data_ph_range: [Num(lo), Num(hi)],
        allowed_pka_range: [Num(pka_lo), Num(pka_hi)],
        start: StartOut {
            strong_charge_eq_per_l: Num(r.start.effective.strong_charge_eq_per_l),
            carbonate_mol_per_l: u.carbonate.then_some(Num(r.start.effective.carbonate_mol_per_l)),
            phosphate_mol_per_l: u.phosphate.then_some(Num(r.start.effective.phosphate_mol_per_l)),
            buffer_pkas: r.start.effective.buffers.iter().take(nb).map(|b| Num(b.1)).collect(),
            basis: &r.start.basis,
        },
        sample_volume_ml: Num(i.sample_volume_l * 1000.0),
        inert_ionic_strength_mol_per_l: Num(u.inert_ionic_strength_mol_per_l),
        titrant: i.titrant.to_out(),
        temperature_c: Num(i.conditions.celsius()),
        activity: i.conditions.activity_name(),
        files: Files { svg },
    };
    json::render(&out)
}
