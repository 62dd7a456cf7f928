//! Computing a `curve` request: the adaptive curve and both kinds of equivalence point.

use heapless::Vec as FixedVec;
use phdose::titration::curve::{CurveError, CurvePoint, EquivalencePoint, Titration, inflections};

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

fn fill<const K: usize>(t: &HostTitration<'_>, max_titrant_l: f64) -> Result<Vec<CurvePoint<f64>>, CurveError> {
    let mut out: FixedVec<CurvePoint<f64>, K> = FixedVec::new();
    t.curve(max_titrant_l, &mut out)?;
    Ok(out.to_vec())
}

/// `Titration::curve` fills a vector of compile-time capacity K with exactly K points, so each
/// allowed point count is its own instance (multiples of 8 up to 256).
macro_rules! curve_with_points {
    ($n:expr, $t:expr, $max:expr; $($k:literal)*) => {
        match $n {
            $($k => fill::<$k>($t, $max),)*
            other => return Err(CliError::new(format!("points {other} is not a supported count"))),
        }
    };
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
    let points = curve_with_points!(input.points, &t, input.max_titrant_l;
        8 16 24 32 40 48 56 64 72 80 88 96 104 112 120 128
        136 144 152 160 168 176 184 192 200 208 216 224 232 240 248 256)
    .map_err(curve_error)?;
    let mut found: FixedVec<EquivalencePoint<f64>, MAX_EQUIVALENCE_POINTS> = FixedVec::new();
    inflections(&points, &mut found);
    let mut model: FixedVec<EquivalencePoint<f64>, MAX_EQUIVALENCE_POINTS> = FixedVec::new();
    t.model_equivalence_points(input.max_titrant_l, &mut model).map_err(curve_error)?;
    // The core lists model points by stoichiometric level; with an acid titrant the levels run
    // backwards in volume. Tables and plots read in titrant order.
    let mut model = model.to_vec();
    model.sort_by(|a, b| a.titrant_l.total_cmp(&b.titrant_l));
    Ok(CurveReport { points, on_curve: found.to_vec(), model, input })
}

/// The CSV text: header `titrant_ml,ph,buffer_capacity_mol_per_l_per_ph`, one line per point.
pub fn csv(r: &CurveReport) -> String {
    let mut s = String::from("titrant_ml,ph,buffer_capacity_mol_per_l_per_ph\n");
    for p in &r.points {
        s.push_str(&format!("{},{},{}\n", p.titrant_l * 1000.0, p.ph, p.buffer_capacity_mol_per_l_per_ph));
    }
    s
}

/// A model point's meaning: "strong ions balanced", "carbonate step 1".
pub fn model_label(e: &EquivalencePoint<f64>) -> String {
    if e.system == "strong" { "strong ions balanced".to_owned() } else { format!("{} step {}", e.system, e.step) }
}
