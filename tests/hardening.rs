//! Regression tests for what a stress campaign on the core found (wrong refusals and silently
//! wrong answers a controller would act on). Each test failed on the code before its fix.
//!
//! The waters are invented; the reference for every warm solve is the cold solve of the same
//! water (the solver's own documented contract), never a hard-coded pH.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::Real;
use phdose::chem::{Activity, Solution, SolveError, SolverOptions};
use phdose::titration::{DoseError, DoseRequest, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};

fn davies<R: Real, const N: usize>(celsius: f64) -> Solution<R, N> {
    Solution::new(Celsius::new(R::from_f64(celsius)).unwrap(), Activity::Davies)
}

/// Pure water and a bicarbonate water, Davies mode, started from far-off pH values: any
/// finite start is accepted (the docs' promise), and the answer is the cold solve's.
fn far_starts<R: Real>() {
    let tol = 10.0 * R::PH_TOLERANCE.to_f64();
    let pure: Solution<R, 2> = davies(25.0);
    let mut soda: Solution<R, 2> = davies(25.0);
    soda.add_formula("NaHCO3", R::from_f64(0.002)).unwrap();
    for water in [&pure, &soda] {
        let cold = water.solve().unwrap().ph.to_f64();
        for start in [-1e6, -5.0, -1.0, 0.0, 0.5, 13.5, 14.0, 15.0, 16.0, 40.0, 1e6] {
            let from = water.solve_from(R::from_f64(start)).unwrap_or_else(|e| panic!("start {start}: {e}"));
            assert!((from.ph.to_f64() - cold).abs() <= tol, "start {start}: {} vs cold {cold}", from.ph);
            let with = water
                .solve_with(SolverOptions { warm_start_ph: Some(R::from_f64(start)), ..SolverOptions::default() })
                .unwrap();
            assert!((with.ph.to_f64() - cold).abs() <= tol, "start {start}: {} vs cold {cold}", with.ph);
        }
    }
}

#[test]
fn davies_solve_accepts_any_finite_start_f64() {
    far_starts::<f64>();
}

#[test]
fn davies_solve_accepts_any_finite_start_f32() {
    far_starts::<f32>();
}

/// 2 mM NaHCO3 at 25 °C, warm-started from the equilibrium of the same water with extra NaCl
/// (the previous cycle was saltier): the warm solve must equal the cold solve. Before the fix it
/// returned 8.2679, 8.2248, 8.1102 and 8.0558 for 1, 10, 100 and 450 mM NaCl (cold 8.2764).
fn warm_after_salinity_change<R: Real>() {
    let tol = 10.0 * R::PH_TOLERANCE.to_f64();
    let mut now: Solution<R, 2> = davies(25.0);
    now.add_formula("NaHCO3", R::from_f64(0.002)).unwrap();
    let cold = now.solve().unwrap();
    for nacl in [0.001, 0.01, 0.1, 0.45] {
        let mut before = now.clone();
        before.add_formula("NaCl", R::from_f64(nacl)).unwrap();
        let previous = before.solve().unwrap();
        let warm = now.solve_warm(&previous).unwrap();
        assert!(
            (warm.ph - cold.ph).abs().to_f64() <= tol,
            "{} after {nacl} M NaCl: warm {} vs cold {}",
            R::NAME,
            warm.ph,
            cold.ph
        );
        let rel = ((warm.ionic_strength_mol_per_l - cold.ionic_strength_mol_per_l) / cold.ionic_strength_mol_per_l)
            .abs()
            .to_f64();
        assert!(
            rel <= 1e-4,
            "ionic strength warm {} vs cold {}",
            warm.ionic_strength_mol_per_l,
            cold.ionic_strength_mol_per_l
        );
        // And the other way round: the previous cycle was fresher.
        let back = before.solve_warm(&cold).unwrap();
        assert!(
            (back.ph - previous.ph).abs().to_f64() <= tol,
            "{nacl} M NaCl from fresh: {} vs {}",
            back.ph,
            previous.ph
        );
    }
}

#[test]
fn warm_solve_follows_a_salinity_change_f64() {
    warm_after_salinity_change::<f64>();
}

#[test]
fn warm_solve_follows_a_salinity_change_f32() {
    warm_after_salinity_change::<f32>();
}

/// The warm solve depends on the water, not on the previous cycle: an absurd or out-of-range
/// previous ionic strength (0.6 mol/L, −1e-18, NaN, infinite) gives the cold answer.
fn warm_ignores_a_bad_previous_ionic_strength<R: Real>() {
    let tol = 10.0 * R::PH_TOLERANCE.to_f64();
    let mut now: Solution<R, 2> = davies(25.0);
    now.add_formula("NaHCO3", R::from_f64(0.002)).unwrap();
    let cold = now.solve().unwrap();
    for bad in [0.6, 5.0, -1e-18, -1.0, f64::NAN, f64::INFINITY] {
        let mut previous = cold;
        previous.ionic_strength_mol_per_l = R::from_f64(bad);
        let warm = now.solve_warm(&previous).unwrap_or_else(|e| panic!("previous I {bad}: {e}"));
        assert!((warm.ph - cold.ph).abs().to_f64() <= tol, "previous I {bad}: {} vs {}", warm.ph, cold.ph);
    }
}

#[test]
fn warm_solve_does_not_depend_on_the_previous_ionic_strength_f64() {
    warm_ignores_a_bad_previous_ionic_strength::<f64>();
}

#[test]
fn warm_solve_does_not_depend_on_the_previous_ionic_strength_f32() {
    warm_ignores_a_bad_previous_ionic_strength::<f32>();
}

/// A non-finite warm-start pH is still an error: it is the caller's bug, not a water.
#[test]
fn non_finite_start_ph_is_refused() {
    let s: Solution<f64, 1> = davies(25.0);
    assert_eq!(s.solve_from(f64::NAN), Err(SolveError::NonFinite));
}

/// Shrunk case of the dose round-trip property: pure water at 59.382 °C, 10 L/h, NaOH
/// 0.066558 M, setpoint 11.80495. The limit an unlimited dose approaches is the reagent's own
/// pH in the influent's activity model (Davies), not its ideal pH.
#[test]
fn beyond_reagent_reports_the_davies_limit() {
    let water: Solution<f64, 2> = davies(59.382);
    let mut caustic: Solution<f64, 1> = davies(59.382);
    caustic.add_formula("NaOH", 0.066558).unwrap();
    let own = caustic.solve().unwrap().ph;
    let request = DoseRequest::new(Ph::new(11.80495).unwrap());
    match plan(&water, LitresPerHour::new(10.0).unwrap(), &caustic, &request) {
        Err(DoseError::BeyondReagent { limit_ph, .. }) => {
            assert!((limit_ph - own).abs() < 1e-6, "limit {limit_ph} vs the reagent's Davies pH {own}");
        }
        other => panic!("{other:?}"),
    }
}

/// The README's rinse water at 1200 L/h with 20 M HCl for setpoint 0.3 needs a mixture at an
/// ionic strength of about 0.67 mol/L, beyond the Davies model's range: refused with a typed
/// error, not planned (the solver would refuse the mixture it planned). Setpoint 0 is refused
/// the same way, not reported as a failed refinement.
#[test]
fn plans_beyond_the_activity_model_are_refused() {
    let mut rinse: Solution<f64, 6> = davies(14.0);
    rinse.add_formula("NaHCO3", 0.0015).unwrap();
    rinse.add_formula("H2SO4", 0.0022).unwrap();
    let mut acid: Solution<f64, 1> = davies(14.0);
    acid.add_formula("HCl", 20.0).unwrap_or_else(|e| panic!("{e}"));
    for setpoint in [0.3, 0.0] {
        let request = DoseRequest::new(Ph::new(setpoint).unwrap());
        match plan(&rinse, LitresPerHour::new(1200.0).unwrap(), &acid, &request) {
            Err(DoseError::BeyondActivityModel { ionic_strength_mol_per_l, .. }) => {
                assert!(ionic_strength_mol_per_l > 0.5, "setpoint {setpoint}: {ionic_strength_mol_per_l}")
            }
            other => panic!("setpoint {setpoint}: {other:?}"),
        }
    }
    // A plan the model can hold still works, and its mixture solves to the setpoint.
    let request = DoseRequest::new(Ph::new(2.0).unwrap());
    let p = plan(&rinse, LitresPerHour::new(1200.0).unwrap(), &acid, &request).unwrap();
    let mut a = acid.clone();
    a.set_temperature(rinse.temperature());
    let ph = rinse.mix(1200.0, &a, p.reagent_flow_l_per_h).unwrap().solve().unwrap().ph;
    assert!((ph - 2.0).abs() < 1e-6, "{ph}");
}

/// Reaches `setpoint` with `reagent` into `influent` at `flow` (Davies, at the influent's
/// temperature) and checks the planned flow really solves to the setpoint.
fn plan_reaches<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    flow_l_per_h: f64,
    reagent: &Solution<R, M>,
    setpoint: f64,
    tol_ph: f64,
) -> f64 {
    let request = DoseRequest::new(Ph::new(R::from_f64(setpoint)).unwrap());
    let p = plan(influent, LitresPerHour::new(R::from_f64(flow_l_per_h)).unwrap(), reagent, &request)
        .unwrap_or_else(|e| panic!("setpoint {setpoint}: {e:?}"));
    let mut r = reagent.clone();
    r.set_temperature(influent.temperature());
    let mix = influent.mix(R::from_f64(flow_l_per_h), &r, p.reagent_flow_l_per_h).unwrap();
    let ph = mix.solve().unwrap().ph.to_f64();
    assert!(
        (ph - setpoint).abs() <= tol_ph,
        "setpoint {setpoint}: planned flow {} gives pH {ph}",
        p.reagent_flow_l_per_h
    );
    p.reagent_flow_l_per_h.to_f64()
}

/// Differential fuzz finding: brine at 96.6 °C, 0.1 L/h, dosed with 0.0106 M HCl toward pH
/// 2.13. The brine's own ionic strength (0.39 mol/L) makes the dilute acid look unable to get
/// there, but the mixture that does (about 0.77 L/h of acid) is far less salty. Was refused as
/// beyond the reagent.
#[test]
fn a_reachable_setpoint_in_brine_is_planned() {
    let mut brine: Solution<f64, 3> = davies(96.6);
    brine.add_formula("NaCl", 0.39).unwrap();
    let mut acid: Solution<f64, 1> = davies(96.6);
    acid.add_formula("HCl", 0.0106).unwrap();
    let q = plan_reaches(&brine, 0.1, &acid, 2.13, 1e-6);
    assert!(q > 0.1 && q < 10.0, "{q}");
}

/// Differential fuzz finding: phosphoric acid at 83.1 °C (pH about 2.0) with 0.01 M HCl, whose
/// own pH is above the influent's in the Davies model: the acid raises the pH, so a setpoint
/// below the influent is the wrong direction (was: beyond the reagent, from an ideal-activity
/// direction test).
#[test]
fn direction_is_judged_in_the_influents_activity_model() {
    let mut acidic: Solution<f64, 3> = davies(83.1);
    acidic.add_formula("H3PO4", 0.0353).unwrap();
    let mut acid: Solution<f64, 1> = davies(83.1);
    acid.add_formula("HCl", 0.01).unwrap();
    let influent_ph = acidic.solve().unwrap().ph;
    let own_ph = {
        let mut a = acid.clone();
        a.set_temperature(acidic.temperature());
        a.solve().unwrap().ph
    };
    assert!(own_ph > influent_ph, "premise: {own_ph} > {influent_ph}");
    let request = DoseRequest::new(Ph::new(0.0).unwrap());
    let r = plan(&acidic, LitresPerHour::new(10.0).unwrap(), &acid, &request);
    assert!(matches!(r, Err(DoseError::WrongDirection { .. })), "{r:?}");
}

/// Differential fuzz finding: brine at 0 °C, 0.18 L/h, 0.0103 M NaOH toward pH 12.74, close
/// to the reagent's own pH: the ionic-strength refinement oscillated (NotConverged) although
/// about 0.59 L/h reaches the setpoint.
#[test]
fn a_setpoint_near_the_reagents_own_ph_converges() {
    let mut brine: Solution<f64, 3> = davies(0.0);
    brine.add_formula("NaCl", 0.4).unwrap();
    let mut caustic: Solution<f64, 1> = davies(0.0);
    caustic.add_formula("NaOH", 0.0103).unwrap();
    let q = plan_reaches(&brine, 0.18, &caustic, 12.74, 1e-6);
    assert!(q > 0.18, "{q}");
}

/// Differential fuzz finding, f32 only: ammonia water at 23 °C, 779.85 L/h, 0.1956 M soda ash
/// toward pH 11.42 (near the reagent's own pH): f32 reported a refinement that did not
/// converge where f64 plans; now both plan, and the f32 flow reaches the setpoint in f64.
#[test]
fn f32_plan_converges_where_f64_does() {
    fn case<R: Real>() -> Solution<R, 8> {
        let mut water: Solution<R, 8> = davies(22.955672541390097);
        for (f, c) in [
            ("NH3", 0.29672726285181816),
            ("NH4Cl", 5.35809261545927e-5),
            ("CH3COONa", 3.262030015201211e-6),
            ("CO2", 2.4525058797756143e-5),
        ] {
            water.add_formula(f, R::from_f64(c)).unwrap();
        }
        water
    }
    fn soda<R: Real>() -> Solution<R, 1> {
        let mut s: Solution<R, 1> = davies(22.955672541390097);
        s.add_formula("Na2CO3", R::from_f64(0.1955704222627649)).unwrap();
        s
    }
    let (flow, setpoint) = (779.8514824136743, 11.419607843137255);
    let q64 = plan_reaches(&case::<f64>(), flow, &soda::<f64>(), setpoint, 1e-6);
    let request = DoseRequest::new(Ph::new(setpoint as f32).unwrap());
    let p32 = plan(&case::<f32>(), LitresPerHour::new(flow as f32).unwrap(), &soda::<f32>(), &request).unwrap();
    let q32 = f64::from(p32.reagent_flow_l_per_h);
    let mut r = soda::<f64>();
    r.set_temperature(case::<f64>().temperature());
    let ph = case::<f64>().mix(flow, &r, q32).unwrap().solve().unwrap().ph;
    // The README's f32 round-trip rule: 8 × the plan's resolution, or 1e-4 pH (1e-3 with the
    // approximate `fast-math` functions).
    let floor = if cfg!(feature = "fast-math") { 1e-3 } else { 1e-4 };
    let bound = (8.0 * f64::from(p32.resolution_ph)).max(floor);
    assert!((ph - setpoint).abs() <= bound, "f32 flow {q32} (f64 {q64}) gives pH {ph}, bound {bound}");
}

/// Differential fuzz finding: a salty citrate–ammonium buffer at 99.9 °C, 0.01 L/h, dosed with
/// 1 mM HCl (own pH about 3.0) toward a setpoint just above the influent. With activity
/// coefficients the first drops dilute the buffer and raise its pH before the acid takes over, so
/// the setpoint above the influent is crossed on the way (near 0.0075 L/h). Was refused as the
/// wrong direction; the smallest dose reaching it is planned. (Found with pH 3.536 and setpoint
/// 3.557 under the former constant-ΔH° citrate constants; with Goldberg et al.'s ΔCp° the same
/// water is at pH 3.725, rises to about 3.83 near 0.1 L/h and falls after, so the setpoint is
/// the pH at 0.0075 L/h, 3.7457.)
#[test]
fn a_setpoint_reached_by_dilution_is_planned() {
    let mut buffer: Solution<f64, 8> = davies(99.91302357518883);
    for (f, c) in
        [("K2CO3", 0.00020715496518882822), ("C6H8O7", 0.28911775051388594), ("NH3", 0.2926442622591832), ("HCl", 1e-6)]
    {
        buffer.add_formula(f, c).unwrap();
    }
    let mut acid: Solution<f64, 1> = davies(99.91302357518883);
    acid.add_formula("HCl", 0.001).unwrap();
    let q = plan_reaches(&buffer, 0.01, &acid, 3.7457, 1e-6);
    // The smaller of the two crossings: the pH rises until about 0.01 L/h of acid.
    assert!(q > 0.005 && q < 0.01, "{q}");
}

/// A warm start on a nearly flat stretch of the log charge ratio, far from the new root (a
/// differential fuzz finding): an ammonium chloride water near 0 °C whose previous root sat at
/// pH 5.3, after a caustic addition that moves the root to pH 9.1. There the third derivative
/// dominated Householder's quotient, which returned a step of 9e-4 pH while Newton's pointed
/// 1,300 pH away, and a final-step rule that trusted short steps accepted it. The warm solve
/// must give the cold solve's answer, both activity modes, f64 and f32.
fn warm_far_from_the_root_on_a_flat_stretch<R: Real>() {
    for activity in [Activity::Ideal, Activity::Davies] {
        let mut water: Solution<R, 2> = Solution::new(Celsius::new(R::from_f64(0.389)).unwrap(), activity);
        water.add_formula("NH4Cl", R::from_f64(0.2963)).unwrap();
        let before = water.solve().unwrap();
        water.add_formula("KOH", R::from_f64(0.02895)).unwrap();
        let cold = water.solve().unwrap();
        let warm = water.solve_warm(&before).unwrap();
        let tol =
            1e-8_f64.max(10.0 * R::PH_TOLERANCE.to_f64()) + 4.0 * (cold.resolution_ph + warm.resolution_ph).to_f64();
        assert!(cold.ph.to_f64() > before.ph.to_f64() + 3.0, "{activity:?}: {} -> {}", before.ph, cold.ph);
        assert!((warm.ph - cold.ph).abs().to_f64() <= tol, "{activity:?}: warm {} vs cold {}", warm.ph, cold.ph);
    }
}

#[test]
fn warm_solve_far_from_the_root_on_a_flat_stretch_f64() {
    warm_far_from_the_root_on_a_flat_stretch::<f64>();
}

#[test]
fn warm_solve_far_from_the_root_on_a_flat_stretch_f32() {
    warm_far_from_the_root_on_a_flat_stretch::<f32>();
}
