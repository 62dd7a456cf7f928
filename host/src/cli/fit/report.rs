//! Fitting: the starting guess, the Levenberg–Marquardt fit and the fitted model curve.

use heapless::Vec as FixedVec;
use phdose::chem::Solution;
use phdose::titration::curve::{CurvePoint, Titration, strong_equivalents_eq_per_l};
use phdose::titration::fit::{
    self, Effective, FitError, FitQuality, FitResult, FitSpec, PKA_INSIDE_DATA_PH, PKA_RANGE,
};

use super::input::FitInput;
use crate::cli::CliError;
use crate::cli::format::{fixed, sig};
use crate::cli::reagent::ReagentSolution;

/// Systems the fit's own model sample holds (`phdose::titration::fit` uses `Solution<_, 6>`):
/// the fitted systems plus the titrant's must fit in it.
pub const FIT_MODEL_CAPACITY: usize = 6;
/// Starting carbonate total, mol/L.
pub const START_CARBONATE_MOL_PER_L: f64 = 1e-3;
/// Starting phosphate total, mol/L.
pub const START_PHOSPHATE_MOL_PER_L: f64 = 3e-4;
/// Starting total of each buffer, mol/L.
pub const START_BUFFER_MOL_PER_L: f64 = 5e-4;
/// Points of the fitted model curve drawn in the plot.
pub const MODEL_CURVE_POINTS: usize = 128;

/// The starting guess and how it was found.
#[derive(Clone, Debug, PartialEq)]
pub struct Start {
    /// The guess.
    pub effective: Effective<f64>,
    /// How the strong charge was guessed, in words.
    pub basis: String,
}

/// Everything `fit` reports.
#[derive(Clone, Debug, PartialEq)]
pub struct FitReport {
    /// The request.
    pub input: FitInput,
    /// Where the fit started.
    pub start: Start,
    /// The fit (`None` when it was refused as ill-conditioned: no result to show).
    pub result: Option<FitResult<f64>>,
    /// Why the fit is refused for its quality (`None`: accepted).
    pub refusal: Option<FitError>,
    /// The fitted model's curve over the data's titrant range, for the plot (empty without a
    /// result).
    pub model_curve: Vec<CurvePoint<f64>>,
}

impl FitReport {
    /// The data's lowest and highest pH.
    pub fn data_ph_range(&self) -> (f64, f64) {
        self.input
            .points_ml
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), (_, p)| (lo.min(*p), hi.max(*p)))
    }

    /// The pH range a fitted pKa must lie in: the data's, narrowed by `PKA_INSIDE_DATA_PH` at
    /// each end (empty, lowest above highest, when the data span less than twice that).
    pub fn allowed_pka_range(&self) -> (f64, f64) {
        let (lo, hi) = self.data_ph_range();
        (lo + PKA_INSIDE_DATA_PH, hi - PKA_INSIDE_DATA_PH)
    }
}

/// The refusal's key in the JSON document.
pub fn refusal_key(e: &FitError) -> &'static str {
    match e {
        FitError::IllConditioned { .. } => "ill_conditioned",
        FitError::NotConverged { .. } => "not_converged",
        FitError::PkaOutsideData { .. } => "pka_outside_data",
        FitError::ResidualAboveBound { .. } => "residual_above_bound",
        _ => "other",
    }
}

/// What to try after a refusal.
pub fn refusal_hint(e: &FitError) -> &'static str {
    match e {
        FitError::NotConverged { .. } => "fit fewer unknowns (--buffers, --carbonate)",
        FitError::PkaOutsideData { .. } => "fit fewer buffers (--buffers) or titrate over a wider pH range",
        FitError::ResidualAboveBound { .. } => {
            "fit a carbonate total (--carbonate) or buffers (--buffers), or check the titrant and the sample volume"
        }
        _ => "fit fewer unknowns (--buffers, --carbonate) or titrate over a wider pH range",
    }
}

/// The refusal in words, with what to try.
pub fn refusal_reason(e: &FitError) -> String {
    format!("{e}; {}", refusal_hint(e))
}

/// The volume (mL) where the points cross pH 7, by linear interpolation between the first
/// pair of neighbours on either side of it.
pub fn crossing_ml(points_ml: &[(f64, f64)], ph: f64) -> Option<f64> {
    points_ml.windows(2).find_map(|w| match w {
        [(v0, p0), (v1, p1)] if (p0 - ph) * (p1 - ph) <= 0.0 && p0 != p1 => {
            Some(v0 + (ph - p0) * (v1 - v0) / (p1 - p0))
        }
        _ => None,
    })
}

/// The documented starting guess (see `phdose help fit`).
pub fn guess(input: &FitInput, titrant: &ReagentSolution) -> Start {
    let v0 = input.sample_volume_l;
    let u = input.unknowns;
    let (lo, hi) = input.points_ml.iter().fold((14.0f64, 0.0f64), |(a, b), (_, p)| (a.min(*p), b.max(*p)));
    let spread = |k: f64, of: f64| (lo + (hi - lo) * k / of).clamp(PKA_RANGE.0, PKA_RANGE.1);
    let buffers = match u.buffers {
        0 => [(0.0, 7.0), (0.0, 7.0)],
        1 => [(START_BUFFER_MOL_PER_L, spread(1.0, 2.0)), (0.0, 7.0)],
        _ => [(START_BUFFER_MOL_PER_L, spread(1.0, 3.0)), (START_BUFFER_MOL_PER_L, spread(2.0, 3.0))],
    };
    let carbonate = if u.carbonate { START_CARBONATE_MOL_PER_L } else { 0.0 };
    let phosphate = if u.phosphate { START_PHOSPHATE_MOL_PER_L } else { 0.0 };
    let mut effective = Effective {
        strong_charge_eq_per_l: 0.0,
        carbonate_mol_per_l: carbonate,
        phosphate_mol_per_l: phosphate,
        buffers,
    };
    // Sulfuric acid counts with both protons (see `strong_equivalents_eq_per_l`).
    let ct = strong_equivalents_eq_per_l(titrant);
    let (strong, basis) = match crossing_ml(&input.points_ml, 7.0) {
        Some(ml) => (-ct * ml / 1000.0 / v0, format!("from the pH 7 crossing at {} mL of titrant", fixed(ml, 2))),
        None => {
            let (ml, ph) = input.points_ml.first().copied().unwrap_or((0.0, 7.0));
            let v = ml / 1000.0;
            let basis = format!(
                "from the charge balance at the first point (pH {} at {} mL) with the starting totals",
                fixed(ph, 2),
                sig(ml, 4)
            );
            (first_point_strong_charge(input, titrant, &effective, v, ph), basis)
        }
    };
    effective.strong_charge_eq_per_l = strong;
    Start { effective, basis }
}

/// The strong charge (eq/L of sample) that balances the charges of the starting composition
/// (without strong ions) mixed with `v` L of titrant at pH `ph`: the mixture's charge excess is
/// linear in the sample's strong charge, which mixing dilutes by v0 / (v0 + v). Ideal activities
/// (a start needs no more); with no systems it is the water-only balance.
fn first_point_strong_charge(
    input: &FitInput,
    titrant: &ReagentSolution,
    start: &Effective<f64>,
    v: f64,
    ph: f64,
) -> f64 {
    let v0 = input.sample_volume_l;
    let c = input.conditions;
    let sample: Result<Solution<f64, 8>, _> = start.solution(c.temperature, phdose::chem::Activity::Ideal);
    let mixed = sample.and_then(|s| s.mix(v0, titrant, v));
    match mixed {
        Ok(m) => -m.charge_excess_eq_per_l(ph, 0.0) * (v0 + v) / v0,
        Err(_) => 0.0,
    }
}

/// An error that is not a quality refusal: bad input or a model failure (exit 2).
fn input_error(e: FitError) -> CliError {
    CliError::new(format!("fit: {e}"))
}

/// Runs the fit and computes the fitted model's curve.
pub fn compute(input: FitInput) -> Result<FitReport, CliError> {
    let c = input.conditions;
    let titrant: ReagentSolution = input.titrant.solution(c, "titrant")?;
    let u = input.unknowns;
    let fitted = usize::from(u.carbonate) + usize::from(u.phosphate) + usize::from(u.buffers);
    let named = |key: &str| (u.carbonate && key == "carbonate") || (u.phosphate && key == "phosphate");
    let extra = titrant.components().iter().filter(|k| !named(k.system.key)).count();
    if fitted + extra > FIT_MODEL_CAPACITY {
        return Err(CliError::new(format!(
            "titrant: its {extra} acid-base system(s) plus the {fitted} fitted one(s) exceed the fit model's \
             {FIT_MODEL_CAPACITY}; use a strong titrant (NaOH, HCl) or fewer buffers"
        )));
    }
    let spec = FitSpec {
        carbonate: u.carbonate,
        phosphate: u.phosphate,
        inert_ionic_strength_mol_per_l: u.inert_ionic_strength_mol_per_l,
        buffers: u.buffers,
        sample_volume_l: input.sample_volume_l,
        temperature: c.temperature,
        activity: c.activity,
    };
    let data: Vec<(f64, f64)> = input.points_ml.iter().map(|(ml, ph)| (ml / 1000.0, *ph)).collect();
    let start = guess(&input, &titrant);
    let (result, refusal) = match fit::fit_assessed(&spec, &titrant, &data, &start.effective) {
        Ok(r) => {
            let refusal = match r.quality {
                FitQuality::Accepted => None,
                FitQuality::Refused(e) => Some(e),
            };
            (r, refusal)
        }
        Err(e) if e.is_quality_refusal() => {
            return Ok(FitReport { input, start, result: None, refusal: Some(e), model_curve: Vec::new() });
        }
        Err(e) => return Err(input_error(e)),
    };

    let max_l = data.iter().map(|(v, _)| *v).fold(0.0, f64::max);
    let model_curve = || -> Result<Vec<CurvePoint<f64>>, CliError> {
        if max_l <= 0.0 {
            return Ok(Vec::new());
        }
        let model_error = |e| CliError::new(format!("fitted model: {e}"));
        let mut sample: Solution<f64, 8> = result.effective.solution(c.temperature, c.activity).map_err(model_error)?;
        fit::add_inert_salt(&mut sample, u.inert_ionic_strength_mol_per_l).map_err(model_error)?;
        let t = Titration { sample: &sample, sample_volume_l: input.sample_volume_l, titrant: &titrant };
        let mut out: FixedVec<CurvePoint<f64>, MODEL_CURVE_POINTS> = FixedVec::new();
        t.curve(max_l, &mut out).map_err(|e| CliError::new(format!("fitted model curve: {e}")))?;
        Ok(out.to_vec())
    };
    // A refused fit's parameters may be far from any real water: without its curve the report
    // still stands (the plot shows the lab points alone).
    let model_curve = if refusal.is_some() { model_curve().unwrap_or_default() } else { model_curve()? };
    Ok(FitReport { input, start, result: Some(result), refusal, model_curve })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn crossing() {
        let pts = [(0.0, 3.0), (1.0, 5.0), (2.0, 9.0), (3.0, 10.0)];
        assert_eq!(crossing_ml(&pts, 7.0), Some(1.5));
        assert_eq!(crossing_ml(&pts[..2], 7.0), None);
    }
}
