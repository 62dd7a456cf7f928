//! Every remedy a plan suggests passes the plan's own checks when applied (proptest).
//!
//! Influents: acid rinse waters with a little bicarbonate (invented: H2SO4 1e-4–1e-2 mol/L,
//! NaHCO3 0–5e-3 mol/L, 5–40 °C, Davies), 10–5000 L/h, caustic 0.1–19 mol/L, setpoints 5–10,
//! pumps 0.5–50 L/h stepping 1e-4–1e-1 of their maximum, bands 0.1–1 pH. For each plan:
//! - a too-steep or turndown check's dilution, when its flow fits the pump, applied (caustic at
//!   c/f, planned again) passes the steepness, turndown and pump checks;
//! - a too-steep check's coarsest step, applied, passes them with this reagent;
//! - a too-steep check's nearest controllable setpoint, planned, passes them;
//! - every stage the stage check calls controllable, planned on its own influent, passes them.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::chem::{Activity, Solution};
use phdose::titration::stages;
use phdose::titration::{DoseCheck, DosePlan, DoseRequest, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};
use proptest::prelude::*;

/// Cases: each plan with a failed check runs up to a few hundred plans for its remedies, so
/// few cases keep the test within seconds in release and under a minute in debug.
const CASES: u32 = 64;

fn passes(p: &DosePlan<f64>) -> bool {
    !p.checks.iter().any(|c| {
        matches!(c, DoseCheck::BeyondPump { .. } | DoseCheck::TooSteep { .. } | DoseCheck::BelowTurndown { .. })
    })
}

fn caustic(mol_per_l: f64) -> Solution<f64, 1> {
    let mut s = Solution::standard();
    s.add_formula("NaOH", mol_per_l).unwrap();
    s
}

proptest! {
    #![proptest_config(ProptestConfig { cases: CASES, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn every_suggested_remedy_passes_when_applied(
        log_acid in -4.0_f64..-2.0,
        bicarbonate in 0.0_f64..5e-3,
        t in 5.0_f64..40.0,
        log_flow in 1.0_f64..3.7,
        log_c in -1.0_f64..1.28,
        sp in 5.0_f64..10.0,
        log_max in -0.3_f64..1.7,
        log_step_fraction in -4.0_f64..-1.0,
        band in 0.1_f64..1.0,
    ) {
        let mut influent: Solution<f64, 6> = Solution::new(Celsius::new(t).unwrap(), Activity::Davies);
        influent.add_formula("H2SO4", 10f64.powf(log_acid)).unwrap();
        if bicarbonate > 0.0 {
            influent.add_formula("NaHCO3", bicarbonate).unwrap();
        }
        let flow = LitresPerHour::new(10f64.powf(log_flow)).unwrap();
        let c = 10f64.powf(log_c);
        let max = 10f64.powf(log_max);
        let step = max * 10f64.powf(log_step_fraction);
        let req = DoseRequest::checked(sp, Some((max, step)), Some(band)).unwrap();
        let Ok(p) = plan(&influent, flow, &caustic(c), &req) else { return Ok(()) };
        for check in &p.checks {
            let (dilution, finer, nearest) = match *check {
                DoseCheck::TooSteep { dilute_reagent_by, diluted_flow_l_per_h, max_step_l_per_h, nearest_controllable_setpoint_ph, .. } => {
                    (diluted_flow_l_per_h.filter(|q| *q <= max).map(|_| dilute_reagent_by), max_step_l_per_h, nearest_controllable_setpoint_ph)
                }
                DoseCheck::BelowTurndown { dilute_reagent_by, .. } => (dilute_reagent_by, None, None),
                _ => (None, None, None),
            };
            if let Some(f) = dilution {
                let again = plan(&influent, flow, &caustic(c / f), &req).unwrap();
                prop_assert!(passes(&again), "dilution {f}: {again:?}");
            }
            if let Some(s) = finer {
                let finer_req = DoseRequest::checked(sp, Some((max, s)), Some(band)).unwrap();
                let again = plan(&influent, flow, &caustic(c), &finer_req).unwrap();
                prop_assert!(passes(&again), "step {s}: {again:?}");
            }
            if let Some(x) = nearest {
                let again = plan(&influent, flow, &caustic(c), &DoseRequest { setpoint: Ph::new(x).unwrap(), ..req }).unwrap();
                prop_assert!(passes(&again), "setpoint {x}: {again:?}");
            }
        }
        // The stages: the first is planned on the raw influent.
        let own = influent.solve().unwrap().ph;
        if let Ok(advice) = stages::advise(own, own, sp) {
            let checks = stages::check(&advice, &influent, flow, &caustic(c), &req);
            if let Some(first) = checks[0].filter(|s| s.controllable) {
                let again = plan(&influent, flow, &caustic(c), &DoseRequest { setpoint: Ph::new(first.setpoint_ph).unwrap(), ..req }).unwrap();
                prop_assert!(passes(&again), "stage 1 at {}: {again:?}", first.setpoint_ph);
            }
        }
    }
}
