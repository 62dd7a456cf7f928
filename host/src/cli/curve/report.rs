//! Computing a `curve` request: the adaptive curve and both kinds of equivalence point.

use heapless::Vec as FixedVec;
use phdose::titration::curve::{CurveError, CurvePoint, EquivalencePoint, Titration};

use super::input::CurveInput;
use crate::cli::CliError;
use crate::cli::composition::{self, HostSolution};
use crate::cli::reagent::ReagentSolution;

/// Most equivalence points kept of each kind.
pub const MAX_EQUIVALENCE_POINTS: usize = 16;

/// Everything `curve` reports.
#[derive(Clone, Debug, PartialEq)]
pub struct CurveReport {
    /// The request.
    pub input: CurveInput,
    /// The curve, ascending in titrant.
    pub points: Vec<CurvePoint<f64>>,
    /// Equivalence points found on the curve (slope maxima).
    pub on_curve: Vec<EquivalencePoint<f64>>,
    /// Equivalence points predicted from the composition.
    pub model: Vec<EquivalencePoint<f64>>,
}

type HostTitration<'a> = Titration<'a, f64, { composition::CAPACITY }, { crate::cli::reagent::CAPACITY }>;

fn fill(t: &HostTitration<'_>, max_titrant_l: f64, points: usize) -> Result<Vec<CurvePoint<f64>>, CurveError> {
    let mut out: FixedVec<CurvePoint<f64>, { super::input::MAX_POINTS }> = FixedVec::new();
    t.curve_points(max_titrant_l, points, &mut out)?;
    Ok(out.to_vec())
}

fn curve_error(e: CurveError) -> CliError {
    match e {
        CurveError::Solve(s) => CliError::new(format!("curve: pH solver: {s}")),
        other => CliError::new(format!("curve: {other}")),
    }
}

/// Builds the solutions, computes the curve and the equivalence points.
pub fn compute(input: CurveInput) -> Result<CurveReport, CliError> {
    let c = input.conditions;
    let sample: HostSolution = composition::solution(c, &input.sample, "sample")?;
    let titrant: ReagentSolution = input.titrant.solution(c, "titrant")?;
    let t = Titration { sample: &sample, sample_volume_l: input.sample_volume_l, titrant: &titrant };
    let points = fill(&t, input.max_titrant_l, input.points).map_err(curve_error)?;
    let mut found: FixedVec<EquivalencePoint<f64>, MAX_EQUIVALENCE_POINTS> = FixedVec::new();
    t.inflections_exact(&points, &mut found).map_err(curve_error)?;
    let mut model: FixedVec<EquivalencePoint<f64>, MAX_EQUIVALENCE_POINTS> = FixedVec::new();
    t.model_equivalence_points(input.max_titrant_l, &mut model).map_err(curve_error)?;
    // The core reports model points in titrant order.
    Ok(CurveReport { points, on_curve: found.to_vec(), model: model.to_vec(), input })
}

/// The CSV text: header `titrant_ml,ph,buffer_capacity` (the JSON keys; buffer capacity in mol/L
/// per pH), one line per point. `fit --data` reads it as it is.
pub fn csv(r: &CurveReport) -> String {
    let mut s = String::from("titrant_ml,ph,buffer_capacity\n");
    for p in &r.points {
        s.push_str(&format!("{},{},{}\n", p.titrant_l * 1000.0, p.ph, p.buffer_capacity_mol_per_l_per_ph));
    }
    s
}

/// A model point's meaning: "strong ions balanced", "carbonate step 1".
pub fn model_label(e: &EquivalencePoint<f64>) -> String {
    if e.system == "strong" { "strong ions balanced".to_owned() } else { format!("{} step {}", e.system, e.step) }
}
