//! Hazard verdicts of the dose plan: acid dosed onto water that carries
//! hypochlorite or sulfide to a setpoint where chlorine or hydrogen sulfide is released must not
//! be "all clear". Scenarios are invented: the cleaning-station effluent of a fictional dairy
//! (hypochlorite sanitiser in brine) and the scrubber bleed of a fictional tannery (sulfide).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::chem::{Activity, Solution};
use phdose::titration::{DoseRequest, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};

fn influent<R: phdose::real::Real>(t: f64, parts: &[(&str, f64)]) -> Solution<R, 6> {
    let mut s = Solution::new(Celsius::new(R::from_f64(t)).unwrap(), Activity::Davies);
    for (f, c) in parts {
        s.add_formula(f, R::from_f64(*c)).unwrap();
    }
    s
}

fn reagent<R: phdose::real::Real>(f: &str, c: f64) -> Solution<R, 2> {
    let mut s = Solution::standard();
    s.add_formula(f, R::from_f64(c)).unwrap();
    s
}

fn all_clear<R: phdose::real::Real>(inf: &Solution<R, 6>, r: &Solution<R, 2>, sp: f64) -> bool {
    let req = DoseRequest::new(Ph::new(R::from_f64(sp)).unwrap());
    plan(inf, LitresPerHour::new(R::from_f64(1000.0)).unwrap(), r, &req).unwrap().all_clear()
}

#[test]
fn acid_onto_hypochlorite_below_the_release_ph_is_not_clear() {
    // Hydrochloric acid (10.17 mol/L: 32 % at 1.159 kg/L, the grade table's values).
    let dairy = influent::<f64>(25.0, &[("NaOCl", 0.01), ("NaCl", 0.01)]);
    assert!(!all_clear(&dairy, &reagent("HCl", 10.17), 3.0));
    let dairy32 = influent::<f32>(25.0, &[("NaOCl", 0.01), ("NaCl", 0.01)]);
    assert!(!all_clear(&dairy32, &reagent("HCl", 10.17), 3.0));
    // Far above the release pH the same plan is clear: the check is not "any hypochlorite".
    assert!(all_clear(&dairy, &reagent("HCl", 10.17), 8.0));
}

#[test]
fn acid_onto_sulfide_below_the_release_ph_is_not_clear() {
    let tannery = influent::<f64>(25.0, &[("NaHS", 0.002), ("NaOH", 0.002)]);
    assert!(!all_clear(&tannery, &reagent("H2SO4", 17.97), 5.0));
    let tannery32 = influent::<f32>(25.0, &[("NaHS", 0.002), ("NaOH", 0.002)]);
    assert!(!all_clear(&tannery32, &reagent("H2SO4", 17.97), 5.0));
    // Caustic onto the same water (towards less H2S) is no sulfide hazard.
    let acidic = influent::<f64>(25.0, &[("NaHS", 0.002), ("HCl", 0.004)]);
    assert!(all_clear(&acidic, &reagent("NaOH", 6.25), 10.0));
}

#[test]
fn the_verdicts_name_the_gas_and_the_release_ph() {
    use phdose::titration::DoseCheck;
    use phdose::titration::hazard::{Gas, ReagentStock};
    let dairy = influent::<f64>(25.0, &[("NaOCl", 0.01), ("NaCl", 0.01)]);
    let req = DoseRequest::new(Ph::new(3.0).unwrap());
    let p = plan(&dairy, LitresPerHour::new(1000.0).unwrap(), &reagent("HCl", 10.17), &req).unwrap();
    let (release, fraction) = p
        .checks
        .iter()
        .find_map(|c| match *c {
            DoseCheck::GasRelease { gas: Gas::Chlorine, release_below_ph, gas_fraction } => {
                Some((release_below_ph, gas_fraction))
            }
            _ => None,
        })
        .expect("chlorine verdict");
    assert!(p.checks.iter().all(DoseCheck::is_hazard));
    // The mixture's chloride: 0.01 mol/L from the salt plus the acid's (flow × 10.17 mol/L
    // diluted into 1000 L/h); the release pH is computed at it (calc, same module).
    let chloride = (0.01 * 1000.0 + 10.17 * p.reagent_flow_l_per_h) / (1000.0 + p.reagent_flow_l_per_h);
    let expect = phdose::titration::hazard::chlorine_release_ph(298.15, chloride, 0.01).unwrap();
    assert!((release - expect).abs() < 1e-6, "{release} vs {expect}");
    assert!(fraction > 0.01 && fraction < 1.0, "{fraction}");
    // 50 % caustic stored at 1 °C onto acid rinse water: crystallises (15 °C, the table's row).
    let rinse = influent::<f64>(1.0, &[("H2SO4", 0.003)]);
    let cold =
        DoseRequest::new(Ph::new(7.0).unwrap()).with_reagent_stock(ReagentStock::new("NaOH", 50.0, 1.0).unwrap());
    let p = plan(&rinse, LitresPerHour::new(500.0).unwrap(), &reagent("NaOH", 19.07), &cold).unwrap();
    assert!(
        p.checks.contains(&DoseCheck::ReagentCrystallises { crystallises_below_c: 15.0, reagent_temperature_c: 1.0 }),
        "{:?}",
        p.checks
    );
    let warm = cold.with_reagent_stock(ReagentStock::new("NaOH", 50.0, 25.0).unwrap());
    assert!(plan(&rinse, LitresPerHour::new(500.0).unwrap(), &reagent("NaOH", 19.07), &warm).unwrap().all_clear());
}
