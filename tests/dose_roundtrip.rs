//! Property tests of the dose model: mixing the influent with the planned reagent flow and
//! solving gives the setpoint back (f64: within 1e-6 pH; f32: within the plan's own resolution
//! verdict), and the planned flow is monotone in the setpoint.
//!
//! `PHDOSE_PROPTEST_CASES=N` runs N cases per property instead of the default (a soak:
//! `PHDOSE_PROPTEST_CASES=1000000 cargo test --release -p phdose --test dose_roundtrip`).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::Real;
use phdose::chem::{Activity, Solution, catalogue};
use phdose::titration::{DoseError, DoseRequest, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};
use proptest::prelude::*;

/// Default cases per property.
const CASES: u32 = 256;

/// The case count: [`CASES`], or `PHDOSE_PROPTEST_CASES` from the environment.
fn cases() -> u32 {
    std::env::var("PHDOSE_PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(CASES)
}

/// A random influent: up to four catalogue systems, a strong-ion charge, a temperature.
fn influent() -> impl Strategy<Value = (Solution<f64, 8>, f64)> {
    influent_in::<f64>()
}

fn influent_in<R: Real>() -> impl Strategy<Value = (Solution<R, 8>, f64)> {
    (
        proptest::collection::vec((0usize..catalogue::ALL.len(), -6.0f64..-1.7), 0..4),
        -0.01f64..0.01,
        0.0f64..60.0,
        prop_oneof![Just(Activity::Ideal), Just(Activity::Davies)],
        10.0f64..5000.0,
    )
        .prop_map(|(systems, q, t, activity, flow)| {
            let mut s = Solution::new(Celsius::new(R::from_f64(t)).unwrap(), activity);
            for (i, log_c) in systems {
                s.add_system(catalogue::ALL[i], R::from_f64(10f64.powf(log_c))).unwrap();
            }
            if q >= 0.0 {
                s.add_formula("NaOH", R::from_f64(q)).unwrap();
            } else {
                s.add_formula("HCl", R::from_f64(-q)).unwrap();
            }
            (s, flow)
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(), ..ProptestConfig::default() })]

    #[test]
    fn planned_dose_reaches_the_setpoint((influent, flow) in influent(), setpoint in 2.0f64..12.0, base in any::<bool>(), conc in 0.05f64..5.0) {
        let mut reagent: Solution<f64, 2> = Solution::standard();
        reagent.add_formula(if base { "NaOH" } else { "HCl" }, conc).unwrap();
        let req = DoseRequest::new(Ph::new(setpoint).unwrap());
        match plan(&influent, LitresPerHour::new(flow).unwrap(), &reagent, &req) {
            Ok(p) => {
                let mut r = reagent.clone();
                r.set_temperature(influent.temperature());
                let mix = influent.mix(flow, &r, p.reagent_flow_l_per_h).unwrap();
                // A plan is only returned for a mixture the solver accepts (the activity model's
                // range is checked by the plan itself).
                let eq = mix.solve().map_err(|e| TestCaseError::fail(format!("planned mixture does not solve: {e}")))?;
                prop_assert!((eq.ph - setpoint).abs() < 1e-6, "setpoint {} got {} (flow {})", setpoint, eq.ph, p.reagent_flow_l_per_h);
                prop_assert!(p.reagent_flow_l_per_h >= 0.0);
                // Base raises the pH: positive gain; acid lowers it.
                prop_assert!((p.gain_ph_per_l_per_h > 0.0) == base || p.gain_ph_per_l_per_h == 0.0);
                prop_assert!(p.resolution_ph < 1e-9, "f64 resolution {}", p.resolution_ph);
            }
            // Unreachable is a legitimate answer; check it is the right one.
            Err(DoseError::WrongDirection { influent_ph, setpoint_ph }) => {
                let right = if base { setpoint_ph < influent_ph } else { setpoint_ph > influent_ph };
                prop_assert!(right, "wrong direction claimed: setpoint {} influent {}", setpoint_ph, influent_ph);
            }
            Err(DoseError::BeyondReagent { limit_ph, setpoint_ph }) => {
                let right = if base { setpoint_ph >= limit_ph - 1e-6 } else { setpoint_ph <= limit_ph + 1e-6 };
                prop_assert!(right, "beyond-reagent claimed: setpoint {} limit {}", setpoint_ph, limit_ph);
            }
            Err(DoseError::BeyondActivityModel { ionic_strength_mol_per_l, .. }) => {
                prop_assert!(ionic_strength_mol_per_l > 0.5, "activity-range refusal at I = {}", ionic_strength_mol_per_l);
            }
            Err(e) => return Err(TestCaseError::fail(format!("unexpected refusal: {e:?}"))),
        }
    }

    /// f32: the plan's mixture, solved in f32, reaches the setpoint within the plan's own
    /// resolution verdict (eight times `resolution_ph`, or ten solver tolerances where that is
    /// larger: 1e-4 pH, 1e-3 with `fast-math`).
    #[test]
    fn f32_planned_dose_reaches_the_setpoint_within_its_resolution((influent, flow) in influent_in::<f32>(), setpoint in 2.0f64..12.0, base in any::<bool>(), conc in 0.05f64..5.0) {
        let mut reagent: Solution<f32, 2> = Solution::standard();
        reagent.add_formula(if base { "NaOH" } else { "HCl" }, conc as f32).unwrap();
        let req = DoseRequest::new(Ph::new(setpoint as f32).unwrap());
        if let Ok(p) = plan(&influent, LitresPerHour::new(flow as f32).unwrap(), &reagent, &req) {
            let mut r = reagent.clone();
            r.set_temperature(influent.temperature());
            let mix = influent.mix(flow as f32, &r, p.reagent_flow_l_per_h).unwrap();
            let eq = mix.solve().map_err(|e| TestCaseError::fail(format!("planned mixture does not solve: {e}")))?;
            let miss = (f64::from(eq.ph) - f64::from(req.setpoint.ph())).abs();
            let bound = (8.0 * f64::from(p.resolution_ph)).max(10.0 * f64::from(f32::PH_TOLERANCE));
            prop_assert!(miss <= bound, "setpoint {} got {} (resolution {}, flow {})", req.setpoint.ph(), eq.ph, p.resolution_ph, p.reagent_flow_l_per_h);
        }
    }

    #[test]
    fn more_base_for_a_higher_setpoint((influent, flow) in influent(), a in 3.0f64..11.0, d in 0.05f64..1.0) {
        let mut reagent: Solution<f64, 2> = Solution::standard();
        reagent.add_formula("NaOH", 1.0).unwrap();
        let low = plan(&influent, LitresPerHour::new(flow).unwrap(), &reagent, &DoseRequest::new(Ph::new(a).unwrap()));
        let high = plan(&influent, LitresPerHour::new(flow).unwrap(), &reagent, &DoseRequest::new(Ph::new(a + d).unwrap()));
        if let (Ok(l), Ok(h)) = (low, high) {
            prop_assert!(h.reagent_flow_l_per_h >= l.reagent_flow_l_per_h);
        }
    }
}
