//! Property tests of the dose model: mixing the influent with the planned reagent flow and
//! solving gives the setpoint back (f64: within 1e-6 pH), and the planned flow is monotone in
//! the setpoint.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::chem::{Activity, Solution, catalogue};
use phdose::titration::{DoseError, DoseRequest, plan};
use phdose::units::Celsius;
use proptest::prelude::*;

/// A random influent: up to four catalogue systems, a strong-ion charge, a temperature.
fn influent() -> impl Strategy<Value = (Solution<f64, 8>, f64)> {
    (
        proptest::collection::vec((0usize..catalogue::ALL.len(), -6.0f64..-1.7), 0..4),
        -0.01f64..0.01,
        0.0f64..60.0,
        prop_oneof![Just(Activity::Ideal), Just(Activity::Davies)],
        10.0f64..5000.0,
    )
        .prop_map(|(systems, q, t, activity, flow)| {
            let mut s = Solution::new(Celsius::new(t).unwrap(), activity);
            for (i, log_c) in systems {
                s.add_system(catalogue::ALL[i], 10f64.powf(log_c)).unwrap();
            }
            if q >= 0.0 {
                s.add_formula("NaOH", q).unwrap();
            } else {
                s.add_formula("HCl", -q).unwrap();
            }
            (s, flow)
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn planned_dose_reaches_the_setpoint((influent, flow) in influent(), setpoint in 2.0f64..12.0, base in any::<bool>(), conc in 0.05f64..5.0) {
        let mut reagent: Solution<f64, 2> = Solution::standard();
        reagent.add_formula(if base { "NaOH" } else { "HCl" }, conc).unwrap();
        let req = DoseRequest { setpoint_ph: setpoint, pump: None, band_ph: None };
        match plan(&influent, flow, &reagent, &req) {
            Ok(p) => {
                let mut r = reagent.clone();
                r.set_temperature(influent.temperature());
                let mix = influent.mix(flow, &r, p.reagent_flow_l_per_h).unwrap();
                // The Davies refusal above I = 0.5 can stop a solve of very salty mixtures.
                if let Ok(eq) = mix.solve() {
                    prop_assert!((eq.ph - setpoint).abs() < 1e-6, "setpoint {} got {} (flow {})", setpoint, eq.ph, p.reagent_flow_l_per_h);
                    prop_assert!(p.reagent_flow_l_per_h >= 0.0);
                    // Base raises the pH: positive gain; acid lowers it.
                    prop_assert!((p.gain_ph_per_l_per_h > 0.0) == base || p.gain_ph_per_l_per_h == 0.0);
                }
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
            Err(e) => {
                // Only activity-range refusals are acceptable here.
                prop_assert!(matches!(e, DoseError::Solve(_) | DoseError::NotConverged), "{e:?}");
            }
        }
    }

    #[test]
    fn more_base_for_a_higher_setpoint((influent, flow) in influent(), a in 3.0f64..11.0, d in 0.05f64..1.0) {
        let mut reagent: Solution<f64, 2> = Solution::standard();
        reagent.add_formula("NaOH", 1.0).unwrap();
        let low = plan(&influent, flow, &reagent, &DoseRequest { setpoint_ph: a, pump: None, band_ph: None });
        let high = plan(&influent, flow, &reagent, &DoseRequest { setpoint_ph: a + d, pump: None, band_ph: None });
        if let (Ok(l), Ok(h)) = (low, high) {
            prop_assert!(h.reagent_flow_l_per_h >= l.reagent_flow_l_per_h);
        }
    }
}
