//! The worst-case block of `plan`: the reagent pump stuck at its maximum and at zero (the pH
//! the tank heads to and the time to cross each hard limit, from the core's
//! `titration::worst`), the dose across the influent flow range and ±25 % influent strength,
//! and the reagent used per day at the planned flow.

use phdose::titration::worst::{self, Crossing, HardLimits, Stuck, Tank};
use phdose::titration::{DosePlan, DoseRequest, dose};
use phdose::units::{LitresPerHour, TankVolume};

use super::input::PlanInput;
use crate::cli::CliError;
use crate::cli::composition::{self, Dissolved, HostSolution};
use crate::cli::format::sig;
use crate::cli::reagent::ReagentSolution;

/// Influent strength factors of the dose corners: every influent total ×0.75, ×1 and ×1.25.
pub const STRENGTH_FACTORS: [f64; 3] = [0.75, 1.0, 1.25];

/// Hours in a day, for the reagent use per day.
pub const HOURS_PER_DAY: f64 = 24.0;

/// The block's caution: the estimate is a model, the hardware interlocks stay.
pub const WORST_CAUTION: &str = "a model estimate (ideal stirred tank, no transport delay, no probe lag). This \
code can put acid or caustic into a tank: hardwired interlocks (flow switch, independent pH cut-outs, manual \
reset) are still required; see SAFETY.md.";

/// How one dose corner came out.
#[derive(Clone, Debug, PartialEq)]
pub enum CornerFlag {
    /// A flow the pump delivers (or no pump was given).
    Ok,
    /// The influent is already inside the band: no dose (flow 0).
    NoDose,
    /// Above the pump's maximum.
    BeyondPump,
    /// Above zero but below the pump's smallest steady flow (its minimum or one step).
    BelowTurndown,
    /// No flow reaches the setpoint (the reason, readable).
    Unreachable(String),
}

impl CornerFlag {
    /// The JSON name.
    pub fn key(&self) -> &'static str {
        match self {
            Self::Ok => "ok",
            Self::NoDose => "no_dose",
            Self::BeyondPump => "beyond_pump",
            Self::BelowTurndown => "below_turndown",
            Self::Unreachable(_) => "unreachable",
        }
    }
}

/// The setpoint planned at one influent flow and strength.
#[derive(Clone, Debug, PartialEq)]
pub struct Corner {
    /// Influent flow, L/h.
    pub influent_flow_l_per_h: f64,
    /// Factor on every influent total (0.75, 1 or 1.25).
    pub strength_factor: f64,
    /// Reagent flow for the setpoint, L/h (`None` when unreachable).
    pub reagent_flow_l_per_h: Option<f64>,
    /// What the pump makes of it.
    pub flag: CornerFlag,
}

/// Reagent used per day at the planned flow.
#[derive(Clone, Debug, PartialEq)]
pub struct PerDay {
    /// Volume of reagent as dosed, L/day (the planned flow × 24 h).
    pub litres: f64,
    /// Mass of reagent as dosed, kg/day (litres × the grade's density); `None` for a reagent
    /// given in mol/L (no density).
    pub kg: Option<f64>,
    /// Mass of each dissolved substance, kg/day (mol/L × molar mass × L/day / 1000).
    pub substances_kg: Vec<(&'static str, f64)>,
}

/// Everything the worst-case block reports.
#[derive(Clone, Debug, PartialEq)]
pub struct WorstReport {
    /// The hard limits given (either may be absent).
    pub limits: HardLimits<f64>,
    /// Tank liquid volume, L, if given.
    pub tank_volume_l: Option<f64>,
    /// The pump stuck at its maximum (needs the pump).
    pub stuck_max: Option<Stuck<f64>>,
    /// The pump stuck at zero.
    pub stuck_zero: Option<Stuck<f64>>,
    /// Lowest influent flow of the corners, L/h.
    pub min_flow_l_per_h: f64,
    /// Highest influent flow of the corners, L/h.
    pub max_flow_l_per_h: f64,
    /// Whether the flow range was given (else 50 %–150 % of the design flow).
    pub flow_range_given: bool,
    /// The dose corners: strength (rows) by flow (min, design, max).
    pub corners: Vec<Corner>,
    /// Reagent use per day, with a plan.
    pub per_day: Option<PerDay>,
    /// Remarks: what could not be worked out and why.
    pub notes: Vec<String>,
}

/// One stuck case; a failure is a note, not an error (the rest of the plan still stands).
fn stuck_case(
    what: &str,
    inputs: (&HostSolution, LitresPerHour<f64>, &ReagentSolution),
    stuck_l_per_h: f64,
    limits: HardLimits<f64>,
    tank: Option<Tank<f64>>,
    notes: &mut Vec<String>,
) -> Option<Stuck<f64>> {
    let (influent, flow, reagent) = inputs;
    let stuck_flow = LitresPerHour::new(stuck_l_per_h).ok()?;
    match worst::stuck(influent, flow, reagent, stuck_flow, limits, tank) {
        Ok(s) => Some(s),
        Err(e) => {
            notes.push(format!("pump stuck at {what}: not worked out: {e}"));
            None
        }
    }
}

/// The influent with every total scaled by `factor`.
fn scaled(dissolved: &[Dissolved], factor: f64) -> Vec<Dissolved> {
    dissolved.iter().map(|d| Dissolved { mol_per_l: d.mol_per_l * factor, ..d.clone() }).collect()
}

/// The reagent flow for the setpoint at one corner (the closed form of `titration::plan`, with
/// the band for the in-band case and without the pump, whose limits are flagged here).
fn corner(input: &PlanInput, reagent: &ReagentSolution, flow_l_per_h: f64, factor: f64) -> Corner {
    let c = input.conditions;
    let at = |reagent_flow_l_per_h, flag| Corner {
        influent_flow_l_per_h: flow_l_per_h,
        strength_factor: factor,
        reagent_flow_l_per_h,
        flag,
    };
    let influent: HostSolution = match composition::solution(c, &scaled(&input.influent, factor), "influent") {
        Ok(s) => s,
        Err(e) => return at(None, CornerFlag::Unreachable(e.message().to_owned())),
    };
    let request = match DoseRequest::checked(input.setpoint_ph, None, input.band_ph) {
        Ok(r) => r,
        Err(e) => return at(None, CornerFlag::Unreachable(e.to_string())),
    };
    let flow = match LitresPerHour::new(flow_l_per_h) {
        Ok(f) => f,
        Err(e) => return at(None, CornerFlag::Unreachable(e.to_string())),
    };
    match dose::plan(&influent, flow, reagent, &request) {
        Ok(p) => at(Some(p.reagent_flow_l_per_h), pump_flag(input, &p)),
        Err(e) => at(None, CornerFlag::Unreachable(e.to_string())),
    }
}

/// What the pump makes of a planned flow.
fn pump_flag(input: &PlanInput, p: &DosePlan<f64>) -> CornerFlag {
    let q = p.reagent_flow_l_per_h;
    match input.pump {
        _ if p.in_band.is_some() && q == 0.0 => CornerFlag::NoDose,
        Some(pump) if q > pump.max_l_per_h() => CornerFlag::BeyondPump,
        Some(pump) if p.in_band.is_none() && q > 0.0 && q < pump.smallest_l_per_h() => CornerFlag::BelowTurndown,
        _ => CornerFlag::Ok,
    }
}

/// Works out the block. `plan` is the nominal plan (its flow defines the setpoint state the
/// crossing times start from); without it the times are not worked out.
pub fn compute(
    input: &PlanInput,
    influent: &HostSolution,
    reagent: &ReagentSolution,
    plan: Option<&DosePlan<f64>>,
) -> Result<WorstReport, CliError> {
    let w = input.worst;
    let limits = w.limits();
    let mut notes = Vec::new();
    let flow = LitresPerHour::new(input.flow_l_per_h).map_err(|e| CliError::new(format!("influent: {e}")))?;
    let tank = match (w.tank_volume_l, plan) {
        (Some(v), Some(p)) => {
            let volume = TankVolume::new(v).map_err(|e| CliError::new(format!("tank_volume_l: {e}")))?;
            let planned_reagent_flow = LitresPerHour::new(p.reagent_flow_l_per_h)
                .map_err(|e| CliError::new(format!("planned reagent flow: {e}")))?;
            Some(Tank { volume, planned_reagent_flow })
        }
        (Some(_), None) => {
            notes.push(
                "no times to the hard limits: they start from the setpoint state, and the setpoint is unreachable"
                    .to_owned(),
            );
            None
        }
        (None, _) => {
            notes.push(
                "no tank_volume_l (--tank-volume-l): the end pH of each stuck case only, no times to the hard limits"
                    .to_owned(),
            );
            None
        }
    };
    if w.low_limit_ph.is_none() && w.high_limit_ph.is_none() {
        notes.push("no hard limits (--low-limit-ph, --high-limit-ph): nothing to cross".to_owned());
    }
    let inputs = (influent, flow, reagent);
    let stuck_max = match input.pump {
        Some(pump) => stuck_case("max", inputs, pump.max_l_per_h(), limits, tank, &mut notes),
        None => {
            notes.push("no pump: the pump stuck at its maximum needs --pump-max-l-per-h".to_owned());
            None
        }
    };
    let stuck_zero = stuck_case("zero", inputs, 0.0, limits, tank, &mut notes);

    let (min_flow, max_flow, flow_range_given) = w.flow_range(input.flow_l_per_h);
    let mut corners = Vec::new();
    for factor in STRENGTH_FACTORS {
        for q in [min_flow, input.flow_l_per_h, max_flow] {
            corners.push(corner(input, reagent, q, factor));
        }
    }

    let per_day = plan.map(|p| {
        let litres = p.reagent_flow_l_per_h * HOURS_PER_DAY;
        PerDay {
            litres,
            kg: input.reagent.grade.as_ref().map(|g| litres * g.density_kg_per_l),
            substances_kg: input
                .reagent
                .dissolved
                .iter()
                .map(|d| (d.substance.formula, d.mol_per_l * d.substance.molar_mass_g_per_mol * litres / 1000.0))
                .collect(),
        }
    });
    if per_day.is_some() && input.reagent.grade.is_none() {
        notes.push(
            "the reagent was given in mol/L, without a density: no kg/day of reagent solution; the dissolved \
             substances' own mass is mol/L x molar mass x L/day"
                .to_owned(),
        );
    }
    Ok(WorstReport {
        limits,
        tank_volume_l: w.tank_volume_l,
        stuck_max,
        stuck_zero,
        min_flow_l_per_h: min_flow,
        max_flow_l_per_h: max_flow,
        flow_range_given,
        corners,
        per_day,
        notes,
    })
}

/// "after 17.9 s (0.30 min)", "never", "beyond it (no tank volume: no time)".
pub fn crossing_words(c: Crossing<f64>) -> String {
    match c {
        Crossing::Never => "never".to_owned(),
        Crossing::Beyond => "yes (no time without the tank volume)".to_owned(),
        Crossing::After { time_s } => duration(time_s),
    }
}

/// A duration in s, with minutes or hours beside it when long.
pub fn duration(seconds: f64) -> String {
    if seconds < 120.0 {
        format!("after {} s", sig(seconds, 3))
    } else if seconds < 7200.0 {
        format!("after {} s ({} min)", sig(seconds, 3), sig(seconds / 60.0, 3))
    } else {
        format!("after {} s ({} h)", sig(seconds, 3), sig(seconds / 3600.0, 3))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn durations_read_well() {
        assert_eq!(duration(17.94), "after 17.9 s");
        assert_eq!(duration(600.0), "after 600 s (10 min)");
        assert_eq!(duration(9000.0), "after 9000 s (2.5 h)");
        assert_eq!(crossing_words(Crossing::Never), "never");
    }

    #[test]
    fn scaling_multiplies_every_total() {
        let d = composition::resolve(vec![("NaHCO3".to_owned(), 0.002), ("HCl".to_owned(), 0.001)], "").unwrap();
        let s = scaled(&d, 1.25);
        assert_eq!(s.iter().map(|d| d.mol_per_l).collect::<Vec<_>>(), vec![0.002 * 1.25, 0.001 * 1.25]);
    }
}
