//! Fuzz target `differential`: a target that can fail on a wrong answer, not only on a panic.
//!
//! Arbitrary bytes → a plausible water (1–4 catalogue substances, 1 µmol/L – 0.3 mol/L each,
//! 0–100 °C, ideal or Davies), a reagent (one of six common ones, 1 mmol/L – 20 mol/L, soda ash to 2 mol/L), an
//! influent flow (0.01 – 10,000 L/h), a setpoint (pH 0–14) and a small change of the water for a
//! warm re-solve. It then checks the core's answers against each other and against brute force:
//!
//! 1. **Errors only where documented.** Solving the water fails only in Davies mode with
//!    `IonicStrengthTooHigh` (the water is beyond the activity model). `plan` fails only with
//!    `WrongDirection`, `BeyondReagent` or `BeyondActivityModel`, or with the influent's own
//!    solve error; never a composition or an input error for these inputs.
//! 2. **f64 residual**: the charge balance of the returned pH, recomputed from the speciation,
//!    is within 1e-8 of the sum of charge magnitudes.
//! 3. **Warm ≡ cold**: the changed water solved warm from the previous equilibrium agrees with
//!    its cold solve within 1e-8 pH plus four times their resolution estimates.
//! 4. **f32 within its resolution verdict**: |pH(f32) − pH(f64)| ≤ 1e-4 + resolution_ph(f32)
//!    (the README's f32 resolution rule, `libm` maths).
//! 5. **Dose round trip**: an f64 plan's mixture solves to the setpoint within 1e-6 pH; an f32
//!    plan's flow, mixed and solved in f64, within 1e-4 pH or 8 × the plan's resolution.
//! 6. **Refusals are true**: when `plan` refuses, the mixtures at 49 reagent flows spanning
//!    1e-6 – 1e6 times the influent flow (and the influent itself) never straddle the setpoint
//!    by more than their resolution; a `BeyondReagent` limit is the reagent's own pH in the
//!    influent's activity model.
//!
//! Byte layout (reads past the end yield 0): `flags` (bit 0 Davies) · temperature · substance
//! count · (substance, amount)… · reagent · reagent amount · influent flow · setpoint · change
//! substance · change amount.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose::Real;
use phdose::chem::substance::SUBSTANCES;
use phdose::chem::{Activity, DAVIES_MAX_IONIC_STRENGTH, Equilibrium, Solution, SolveError};
use phdose::titration::{DoseError, DoseRequest, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};

#[path = "input.rs"]
mod input;
use input::Input;

/// Reagents a skid doses (formula).
const REAGENTS: [&str; 6] = ["HCl", "H2SO4", "HNO3", "NaOH", "KOH", "Na2CO3"];
/// Capacity of every influent (room for four substances of up to two systems and the reagent).
const CAP: usize = 12;

#[derive(Debug)]
struct Case {
    activity: Activity,
    celsius: f64,
    influent: Vec<(&'static str, f64)>,
    reagent: (&'static str, f64),
    flow_l_per_h: f64,
    setpoint_ph: f64,
    change: (&'static str, f64),
}

fn decode(inp: &mut Input<'_>) -> Case {
    let activity = if inp.flag() { Activity::Ideal } else { Activity::Davies };
    let celsius = inp.uniform(0.0, 100.0);
    let n = 1 + usize::from(inp.u8() % 4);
    let mut influent = Vec::with_capacity(n);
    for _ in 0..n {
        let s = &SUBSTANCES[usize::from(inp.u8()) % SUBSTANCES.len()];
        influent.push((s.formula, inp.log_uniform(1e-6, 0.3)));
    }
    let formula = REAGENTS[usize::from(inp.u8()) % REAGENTS.len()];
    // Up to 20 mol/L (concentrated HCl is about 12, 50 % NaOH about 19); soda ash only
    // dissolves to about 2 mol/L.
    let top = if formula == "Na2CO3" { 2.0 } else { 20.0 };
    let reagent = (formula, inp.log_uniform(1e-3, top));
    let flow_l_per_h = inp.log_uniform(0.01, 1e4);
    let setpoint_ph = inp.uniform(0.0, 14.0);
    let s = &SUBSTANCES[usize::from(inp.u8()) % SUBSTANCES.len()];
    let change = (s.formula, inp.log_uniform(1e-7, 0.03));
    Case { activity, celsius, influent, reagent, flow_l_per_h, setpoint_ph, change }
}

fn water<R: Real>(case: &Case, extra: Option<(&str, f64)>) -> Solution<R, CAP> {
    let t = Celsius::new(R::from_f64(case.celsius)).expect("0–100 °C is valid");
    let mut s = Solution::new(t, case.activity);
    for (f, c) in case.influent.iter().copied().chain(extra) {
        s.add_formula(f, R::from_f64(c)).unwrap_or_else(|e| panic!("adding {f} {c}: {e}"));
    }
    s
}

fn reagent<R: Real>(case: &Case) -> Solution<R, 2> {
    let t = Celsius::new(R::from_f64(case.celsius)).expect("valid");
    let mut s = Solution::new(t, case.activity);
    let (f, c) = case.reagent;
    s.add_formula(f, R::from_f64(c)).unwrap_or_else(|e| panic!("reagent {f} {c}: {e}"));
    s
}

/// Documented solve failure: Davies mode, beyond the activity model.
fn allowed_solve_error(activity: Activity, e: &SolveError) -> bool {
    activity == Activity::Davies && matches!(e, SolveError::IonicStrengthTooHigh { .. })
}

/// |Σ z·c| / Σ |z|·c at `eq`, from the speciation, summed in f64.
fn relative_residual<R: Real, const N: usize>(s: &Solution<R, N>, eq: &Equilibrium<R>) -> f64 {
    let sp = s.speciate(eq);
    let (h, oh, q) = (sp.h_mol_per_l.to_f64(), sp.oh_mol_per_l.to_f64(), s.strong_charge_eq_per_l().to_f64());
    let (mut residual, mut scale) = (h - oh + q, h + oh + q.abs());
    for (c, forms) in s.components().iter().zip(sp.forms_mol_per_l.iter()) {
        for (j, conc) in forms.iter().enumerate().take(c.system.step_count() + 1) {
            let z = f64::from(c.system.charge_of_form(j));
            residual += z * conc.to_f64();
            scale += z.abs() * conc.to_f64();
        }
    }
    residual.abs() / scale
}

/// pH of the influent mixed with `q` L/h of reagent (f64), or `None` beyond the activity model
/// or the pH search range.
fn mixture_ph(inf: &Solution<f64, CAP>, flow: f64, r: &Solution<f64, 2>, q: f64) -> Option<Equilibrium<f64>> {
    let m = inf.mix(flow, r, q).expect("mixing valid flows");
    match m.solve() {
        Ok(eq) => Some(eq),
        Err(e) if allowed_solve_error(m.activity(), &e) => None,
        // A concentrated reagent's mixture can lie beyond the pH search range (documented).
        Err(SolveError::NoRoot { .. }) => None,
        Err(e) => panic!("mixture at {q} L/h: {e:?}"),
    }
}

/// Bisects the reagent flow between `a` and `b` (flow, equilibrium; pH on either side of `x`)
/// for a mixture at the setpoint within the activity model: `Some(flow)` when one solves to
/// within 1e-6 pH of `x`, `None` when a mixture on the way is beyond the activity model.
fn bisect_for_setpoint(
    inf: &Solution<f64, CAP>,
    flow: f64,
    r: &Solution<f64, 2>,
    x: f64,
    mut a: (f64, Equilibrium<f64>),
    mut b: (f64, Equilibrium<f64>),
) -> Option<f64> {
    for _ in 0..200 {
        let q = 0.5 * (a.0 + b.0);
        if q <= a.0.min(b.0) || q >= a.0.max(b.0) {
            break;
        }
        let eq = mixture_ph(inf, flow, r, q)?;
        if (eq.ph - x).abs() <= 1e-6 {
            return Some(q);
        }
        if (eq.ph > x) == (a.1.ph > x) {
            a = (q, eq);
        } else {
            b = (q, eq);
        }
    }
    // The flows met without a pH within 1e-6 of x: a jump the bracket cannot split; report the
    // flow so the assertion names it.
    Some(0.5 * (a.0 + b.0))
}

fn check(case: &Case) {
    let inf64: Solution<f64, CAP> = water(case, None);
    let r64: Solution<f64, 2> = reagent(case);
    let activity = case.activity;

    // 1–2: the water itself.
    let eq64 = match inf64.solve() {
        Ok(eq) => eq,
        Err(e) => {
            assert!(allowed_solve_error(activity, &e), "influent solve: {e:?}");
            return;
        }
    };
    let rr = relative_residual(&inf64, &eq64);
    assert!(rr <= 1e-8, "f64 relative residual {rr:e} at pH {}", eq64.ph);

    // 3: warm ≡ cold after a change of the water.
    let changed: Solution<f64, CAP> = water(case, Some(case.change));
    match (changed.solve(), changed.solve_warm(&eq64)) {
        (Ok(cold), Ok(warm)) => {
            let tol = 1e-8 + 4.0 * (cold.resolution_ph + warm.resolution_ph);
            assert!((cold.ph - warm.ph).abs() <= tol, "warm {} vs cold {} (tol {tol:e})", warm.ph, cold.ph);
        }
        (Err(a), Err(b)) => {
            assert!(allowed_solve_error(activity, &a) && allowed_solve_error(activity, &b), "{a:?} {b:?}")
        }
        (cold, warm) => panic!("cold {cold:?} vs warm {warm:?}"),
    }

    // 4: f32 within its resolution verdict.
    let inf32: Solution<f32, CAP> = water(case, None);
    match inf32.solve() {
        Ok(eq32) => {
            let miss = (f64::from(eq32.ph) - eq64.ph).abs();
            // The README's f32 rule: 1e-4 + 2 × the resolution estimate.
            let bound = 1e-4 + 2.0 * f64::from(eq32.resolution_ph);
            assert!(miss <= bound, "f32 pH {} vs f64 {} (resolution {})", eq32.ph, eq64.ph, eq32.resolution_ph);
        }
        Err(e) => {
            // f32 may see the ionic strength a rounding beyond the limit where f64 is within.
            let near = eq64.ionic_strength_mol_per_l > 0.99 * DAVIES_MAX_IONIC_STRENGTH;
            assert!(allowed_solve_error(activity, &e) && near, "f32 solve {e:?} where f64 gave {eq64:?}");
        }
    }

    // 5–6: the dose plan.
    let x = case.setpoint_ph;
    let flow = case.flow_l_per_h;
    let mut r_at = r64.clone();
    r_at.set_temperature(inf64.temperature());
    let request = DoseRequest::new(Ph::new(x).expect("0–14"));
    let p64 = plan(&inf64, LitresPerHour::new(flow).expect("flow"), &r64, &request);
    match &p64 {
        Ok(p) => {
            let eq = mixture_ph(&inf64, flow, &r_at, p.reagent_flow_l_per_h)
                .unwrap_or_else(|| panic!("plan {p:?} gives a mixture beyond the activity model"));
            assert!(
                (eq.ph - x).abs() <= 1e-6,
                "f64 plan {} L/h gives pH {} for setpoint {x}",
                p.reagent_flow_l_per_h,
                eq.ph
            );
        }
        Err(e) => {
            match e {
                DoseError::WrongDirection { .. } | DoseError::BeyondActivityModel { .. } => {}
                DoseError::BeyondReagent { limit_ph, .. } => {
                    let mut own = r_at.clone();
                    own.set_activity(activity);
                    let own = own.solve().expect("a reagent with a limit solves");
                    assert!((own.ph - limit_ph).abs() <= 1e-6, "limit {limit_ph} vs the reagent's own pH {}", own.ph);
                }
                other => panic!("plan refused with {other:?}"),
            }
            // Brute force: does any pair of neighbouring flows straddle the setpoint?
            let mut previous = Some((0.0, eq64));
            for k in 0..=48 {
                let q = flow * 10f64.powf(f64::from(k) / 4.0 - 6.0);
                let here = mixture_ph(&inf64, flow, &r_at, q).map(|eq| (q, eq));
                if let (Some(a), Some(b)) = (previous, here) {
                    let margin = 1e-6 + a.1.resolution_ph + b.1.resolution_ph;
                    let straddle =
                        (a.1.ph < x - margin && b.1.ph > x + margin) || (a.1.ph > x + margin && b.1.ph < x - margin);
                    if straddle {
                        // A mixture between them is at the setpoint. Refusing is right only if
                        // the activity model cannot hold it: bisect on the flow for it.
                        let found = bisect_for_setpoint(&inf64, flow, &r_at, x, a, b);
                        assert!(
                            !(found.is_some()
                                || matches!(e, DoseError::WrongDirection { .. } | DoseError::BeyondReagent { .. })),
                            "refused ({e:?}) but {found:?} L/h reaches the setpoint (pH {} at {} L/h, pH {} at {} L/h)",
                            a.1.ph,
                            a.0,
                            b.1.ph,
                            b.0
                        );
                    }
                }
                previous = here;
            }
        }
    }

    // f32 plan: where it plans, its flow reaches the setpoint (checked in f64).
    let r32: Solution<f32, 2> = reagent(case);
    let request32 = DoseRequest::new(Ph::new(x as f32).expect("0–14"));
    match plan(&inf32, LitresPerHour::new(flow as f32).expect("flow"), &r32, &request32) {
        Ok(p) => {
            if let Some(eq) = mixture_ph(&inf64, flow, &r_at, f64::from(p.reagent_flow_l_per_h)) {
                let bound = (8.0 * f64::from(p.resolution_ph)).max(1e-4);
                let miss = (eq.ph - x).abs();
                assert!(
                    miss <= bound,
                    "f32 plan {} L/h gives pH {} for setpoint {x} (resolution {})",
                    p.reagent_flow_l_per_h,
                    eq.ph,
                    p.resolution_ph
                );
            }
        }
        Err(DoseError::Solve(e)) => assert!(allowed_solve_error(activity, &e), "f32 plan: {e:?}"),
        Err(
            e @ (DoseError::WrongDirection { .. }
            | DoseError::BeyondReagent { .. }
            | DoseError::BeyondActivityModel { .. }),
        ) => {
            if let Ok(p) = &p64 {
                // f32 may refuse only where f64 sits at a boundary it cannot resolve: the setpoint
                // within f32's reach of the influent's or the reagent's pH, or the mixture at the
                // activity model's edge.
                // "Within f32's reach": 1e-3 pH plus twice f32's own resolution estimate for the
                // influent (the README's f32 rule), which a salty water makes larger.
                let res32 = water::<f32>(case, None).solve().map_or(0.0, |e| f64::from(e.resolution_ph));
                let edge = p.mixture_ionic_strength_mol_per_l > 0.98 * DAVIES_MAX_IONIC_STRENGTH
                    || (x - eq64.ph).abs() <= 1e-3 + 2.0 * res32
                    || p.reagent_flow_l_per_h > 1e3 * flow;
                assert!(edge, "f32 refused ({e:?}) a plan f64 makes: {p:?}");
            }
        }
        Err(e) => panic!("f32 plan refused with {e:?}"),
    }
}

fuzz_target!(|data: &[u8]| {
    let mut inp = Input::new(data);
    let case = decode(&mut inp);
    if std::env::var_os("PHDOSE_FUZZ_SHOW").is_some() {
        eprintln!("{case:?}"); // reproducing a finding: PHDOSE_FUZZ_SHOW=1 cargo fuzz run … FILE
    }
    check(&case);
});
