//! Solving a `plan` request: influent and reagent → feed-forward plan, verdicts and stage advice.

use phdose::titration::hazard::{self, Gas, ReagentStock};
use phdose::titration::stages::{self, StageAdvice, StageCheck};
use phdose::titration::{DoseCheck, DoseError, DosePlan, DoseRequest, InBand, dose};
use phdose::units::LitresPerHour;

use super::input::PlanInput;
use super::worst::{self, WorstReport};
use crate::cli::CliError;
use crate::cli::composition::{self, HostSolution};
use crate::cli::format::{fixed, sig};

/// Why the setpoint cannot be reached (not an input error: the plan reports it).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Unreachable {
    /// The reagent moves the pH away from the setpoint.
    WrongDirection,
    /// Even an unlimited dose only approaches `limit_ph`.
    BeyondReagent {
        /// The pH an unlimited dose approaches.
        limit_ph: f64,
    },
    /// The mixture at the setpoint is beyond the activity model's ionic-strength range.
    BeyondActivityModel {
        /// The ionic strength it would need, mol/L.
        ionic_strength_mol_per_l: f64,
    },
}

/// Everything `plan` reports.
#[derive(Clone, Debug, PartialEq)]
pub struct PlanReport {
    /// The request.
    pub input: PlanInput,
    /// The influent's own pH.
    pub influent_ph: f64,
    /// The plan, when the setpoint is reachable.
    pub plan: Option<DosePlan<f64>>,
    /// Why not, when it is not.
    pub unreachable: Option<Unreachable>,
    /// One readable line per finding: "ok", or each failed check.
    pub verdicts: Vec<String>,
    /// Stage advice for the influent pH and the setpoint (common practice).
    pub stages: Option<StageAdvice<f64>>,
    /// Each advised stage planned with the same reagent, pump and band (with a pump and a band).
    pub stage_checks: Vec<StageCheck<f64>>,
    /// Remarks about the request (checks skipped for lack of data).
    pub notes: Vec<String>,
    /// The worst case: pump stuck at max and at zero, dose corners, reagent per day.
    pub worst: WorstReport,
}

impl PlanReport {
    /// Reachable and every check passed.
    pub fn all_clear(&self) -> bool {
        self.plan.as_ref().is_some_and(DosePlan::all_clear)
    }

    /// A hazard check failed (gas release, crystallisation): the plan must not be used.
    pub fn hazard(&self) -> bool {
        self.plan.as_ref().is_some_and(|p| p.checks.iter().any(DoseCheck::is_hazard))
    }
}

/// The readable verdict for an influent already in band.
pub fn in_band_verdict(b: &InBand<f64>, setpoint_ph: f64) -> String {
    let head = format!(
        "no dose needed: influent pH {} is already inside the band {}–{} around setpoint {}",
        fixed(b.influent_ph, 2),
        fixed(b.low_ph, 2),
        fixed(b.high_ph, 2),
        fixed(setpoint_ph, 2)
    );
    if b.reagent_reaches_setpoint {
        head
    } else {
        format!(
            "{head} (this reagent could not bring it to the setpoint itself: it pulls the other way or not far enough)"
        )
    }
}

/// The readable verdict for a failed check; `pump_max_l_per_h` is the pump's maximum (the
/// pump checks only run with a pump).
pub fn check_verdict(check: &DoseCheck<f64>, setpoint_ph: f64, pump_max_l_per_h: f64) -> String {
    match *check {
        DoseCheck::BeyondPump { needed_l_per_h, max_l_per_h } => {
            format!("beyond pump capacity: needs {} L/h, pump max {} L/h", sig(needed_l_per_h, 4), sig(max_l_per_h, 4))
        }
        DoseCheck::BelowTurndown { needed_l_per_h, smallest_l_per_h, dilute_reagent_by } => {
            let head = format!(
                "below turndown: needs {} L/h, less than the {} L/h the pump delivers steadily (its minimum or one step)",
                sig(needed_l_per_h, 3),
                sig(smallest_l_per_h, 3)
            );
            match dilute_reagent_by {
                Some(f) => format!("{head}; use a reagent about {}x weaker or a smaller pump", sig(f, 3)),
                None => format!("{head}; use a smaller pump (no weaker reagent fits this pump)"),
            }
        }
        DoseCheck::TooSteep {
            step_delta_ph,
            band_ph,
            dilute_reagent_by,
            diluted_flow_l_per_h,
            max_step_l_per_h,
            nearest_controllable_setpoint_ph,
        } => {
            let head =
                format!("too steep: one pump step moves pH by {} > band {}", fixed(step_delta_ph, 2), sig(band_ph, 3));
            let finer = max_step_l_per_h
                .map(|q| format!("this reagent with a pump step of at most {} L/h, ", sig(q, 3)))
                .unwrap_or_default();
            let remedy = match diluted_flow_l_per_h {
                Some(q) if q <= pump_max_l_per_h => {
                    format!(
                        "use a reagent about {}x weaker (then {} L/h), {finer}",
                        sig(dilute_reagent_by, 3),
                        sig(q, 3)
                    )
                }
                Some(q) => format!(
                    "a weaker reagent alone is not enough: about {}x weaker fits the band but needs {} L/h, above \
                     the pump's {} L/h; use it with a pump of at least {} L/h (step no coarser), or {finer}",
                    sig(dilute_reagent_by, 3),
                    sig(q, 3),
                    sig(pump_max_l_per_h, 4),
                    sig(q, 3)
                ),
                None => format!("no weaker reagent (up to {}x) is enough; {finer}", sig(dilute_reagent_by, 2)),
            };
            match nearest_controllable_setpoint_ph {
                Some(sp) => format!("{head}; {remedy}a second stage, or setpoint {}", fixed(sp, 1)),
                None => format!(
                    "{head}; {remedy}or a second stage (no setpoint within 2 pH of {} is controllable with this pump)",
                    fixed(setpoint_ph, 1)
                ),
            }
        }
        DoseCheck::ResolutionLimited { resolution_ph, needed_ph } => format!(
            "resolution-limited: the working precision places the mixture's pH only to {} pH, more than the {} pH the plan needs",
            sig(resolution_ph, 2),
            sig(needed_ph, 2)
        ),
        DoseCheck::GasRelease { gas, release_below_ph, gas_fraction } => format!(
            "HAZARD {} ({}): acid to pH {} releases it from the influent's {}: significant below pH {} \
             ({} % of the {} as {} at the setpoint); keep the setpoint above pH {} or remove the {} first",
            gas.name(),
            gas.formula(),
            fixed(setpoint_ph, 2),
            gas.from_system(),
            fixed(release_below_ph, 2),
            sig(100.0 * gas_fraction, 2),
            match gas {
                Gas::Chlorine => "free chlorine",
                Gas::HydrogenSulfide => "sulfide",
            },
            gas.formula(),
            fixed(release_below_ph, 2),
            gas.from_system()
        ),
        DoseCheck::ReagentCrystallises { crystallises_below_c, reagent_temperature_c } => format!(
            "HAZARD reagent crystallises: this grade crystallises below {} °C and its tank is at {} °C; lines and \
             pump heads block; trace-heat tank and lines or choose a weaker grade",
            sig(crystallises_below_c, 3),
            sig(reagent_temperature_c, 3)
        ),
    }
}

/// Plans the dose. An unreachable setpoint is a result, not an error; bad compositions and
/// solver failures are errors.
pub fn compute(input: PlanInput) -> Result<PlanReport, CliError> {
    let c = input.conditions;
    let influent: HostSolution = composition::solution(c, &input.influent, "influent")?;
    let reagent = input.reagent.solution(c, "reagent")?;
    let influent_eq = influent.solve().map_err(|e| CliError::new(format!("influent: pH solver: {e}")))?;
    // The input was checked by `PlanInput::new` with the same constructors: these cannot fail.
    let mut request = DoseRequest::checked(input.setpoint_ph, None, input.band_ph)
        .map_err(|e| CliError::new(format!("plan request: {e}")))?;
    request.pump = input.pump;
    let mut stock_notes = Vec::new();
    // The crystallisation check needs the grade as bought (one substance, mass percent).
    if let (Some(grade), [only]) = (&input.reagent.grade, input.reagent.dissolved.as_slice()) {
        let formula = only.substance.formula;
        let stock = ReagentStock::new(formula, grade.mass_percent, input.reagent_celsius())
            .map_err(|e| CliError::new(format!("reagent: {e}")))?;
        request = request.with_reagent_stock(stock);
        if hazard::crystallisation_c(formula, grade.mass_percent).is_none() {
            stock_notes.push(format!(
                "no crystallisation data for {formula} {} %: that check was skipped (the SDS governs)",
                sig(grade.mass_percent, 4)
            ));
        }
    }
    let flow = LitresPerHour::new(input.flow_l_per_h).map_err(|e| CliError::new(format!("influent: {e}")))?;

    let mut verdicts = Vec::new();
    let (plan, unreachable) = match dose::plan(&influent, flow, &reagent, &request) {
        Ok(p) => {
            let pump_max = input.pump.map_or(f64::INFINITY, |pump| pump.max_l_per_h());
            if let Some(b) = &p.in_band {
                verdicts.push(in_band_verdict(b, input.setpoint_ph));
            }
            verdicts.extend(p.checks.iter().map(|k| check_verdict(k, input.setpoint_ph, pump_max)));
            if verdicts.is_empty() {
                verdicts.push("ok".to_owned());
            }
            (Some(p), None)
        }
        Err(
            e @ (DoseError::WrongDirection { .. }
            | DoseError::BeyondReagent { .. }
            | DoseError::BeyondActivityModel { .. }),
        ) => {
            verdicts.push(e.to_string());
            let why = match e {
                DoseError::BeyondReagent { limit_ph, .. } => Unreachable::BeyondReagent { limit_ph },
                DoseError::BeyondActivityModel { ionic_strength_mol_per_l, .. } => {
                    Unreachable::BeyondActivityModel { ionic_strength_mol_per_l }
                }
                _ => Unreachable::WrongDirection,
            };
            (None, Some(why))
        }
        Err(DoseError::Solve(e)) => return Err(CliError::new(format!("dose: pH solver: {e}"))),
        Err(e) => return Err(CliError::new(format!("dose: {e}"))),
    };

    let mut notes = Vec::new();
    match (input.pump.is_some(), input.band_ph.is_some()) {
        (false, true) => notes.push("band_ph given without a pump: the steepness check needs the pump step".to_owned()),
        (true, false) => notes.push("no band_ph: the steepness check was skipped".to_owned()),
        (false, false) => notes.push("no pump and no band_ph: the pump and steepness checks were skipped".to_owned()),
        (true, true) => {}
    }
    if input.reagent_temperature_c.is_none()
        && plan.as_ref().is_some_and(|p| p.checks.iter().any(|c| matches!(c, DoseCheck::ReagentCrystallises { .. })))
    {
        notes.push(
            "the reagent's tank was taken at the influent's temperature; give reagent_temperature_c \
             (--reagent-temperature-c) if it is kept elsewhere"
                .to_owned(),
        );
    }
    notes.extend(stock_notes);
    let stages = stages::advise(influent_eq.ph, influent_eq.ph, input.setpoint_ph).ok();
    // The stages are checked like the plan (the steepness check needs the pump and the band).
    let stage_checks = match (&stages, request.pump, request.band) {
        (Some(a), Some(_), Some(_)) => {
            stages::check(a, &influent, flow, &reagent, &request).into_iter().flatten().collect()
        }
        _ => Vec::new(),
    };
    let worst = worst::compute(&input, &influent, &reagent, plan.as_ref())?;
    Ok(PlanReport {
        influent_ph: influent_eq.ph,
        plan,
        unreachable,
        verdicts,
        stages,
        stage_checks,
        notes,
        worst,
        input,
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn verdict_wording() {
        let v = check_verdict(&DoseCheck::BeyondPump { needed_l_per_h: 12.345, max_l_per_h: 10.0 }, 7.0, 10.0);
        assert_eq!(v, "beyond pump capacity: needs 12.35 L/h, pump max 10 L/h");
        let steep = DoseCheck::TooSteep {
            step_delta_ph: 0.814,
            band_ph: 0.3,
            dilute_reagent_by: 4.21,
            diluted_flow_l_per_h: Some(2.5),
            max_step_l_per_h: None,
            nearest_controllable_setpoint_ph: Some(8.4),
        };
        assert_eq!(
            check_verdict(&steep, 7.0, 10.0),
            "too steep: one pump step moves pH by 0.81 > band 0.3; use a reagent about 4.21x weaker (then 2.5 \
             L/h), a second stage, or setpoint 8.4"
        );
        // The same dilution with a smaller pump is no remedy by itself; the verdict says what is.
        let small = check_verdict(&steep, 7.0, 2.0);
        assert!(
            small.contains("a weaker reagent alone is not enough") && small.contains("at least 2.5 L/h"),
            "{small}"
        );
        let none = DoseCheck::TooSteep {
            step_delta_ph: 2.0,
            band_ph: 0.3,
            dilute_reagent_by: 50.0,
            diluted_flow_l_per_h: Some(1.0),
            max_step_l_per_h: Some(1e-4),
            nearest_controllable_setpoint_ph: None,
        };
        let none = check_verdict(&none, 7.0, 10.0);
        assert!(none.contains("no setpoint within 2 pH of 7.0") && none.contains("step of at most 1e-4 L/h"), "{none}");
    }

    #[test]
    fn hazard_wording_names_the_gas_and_the_ph() {
        let cl = DoseCheck::GasRelease { gas: Gas::Chlorine, release_below_ph: 3.754, gas_fraction: 0.054 };
        let v = check_verdict(&cl, 3.0, 10.0);
        assert!(v.starts_with("HAZARD chlorine (Cl2): acid to pH 3.00"), "{v}");
        assert!(v.contains("below pH 3.75") && v.contains("5.4 % of the free chlorine"), "{v}");
        let h2s = DoseCheck::GasRelease { gas: Gas::HydrogenSulfide, release_below_ph: 8.98, gas_fraction: 0.99 };
        assert!(check_verdict(&h2s, 5.0, 10.0).starts_with("HAZARD hydrogen sulfide (H2S)"));
        let cold = DoseCheck::ReagentCrystallises { crystallises_below_c: 15.0, reagent_temperature_c: 1.0 };
        assert!(check_verdict(&cold, 7.0, 10.0).contains("crystallises below 15 °C and its tank is at 1 °C"));
        assert!([cl, h2s, cold].iter().all(DoseCheck::is_hazard));
    }
}
