//! The control law on a plant model: a well-mixed overflowing tank on the reaction invariants,
//! with Davies activities (the controller's model is ideal), a first-order probe lag, and a true
//! influent that may differ from the configured one. Scenario of our own: the rinse-water tank
//! of a fictional plating shop (bicarbonate water with sulfuric-acid carry-over and a little
//! phosphate, neutralised with 25 % caustic).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::chem::{Activity, CompositionError, Solution};
use phdose::control::adapt::AdaptSettings;
use phdose::control::feedback::PiTuning;
use phdose::control::feedforward::{DeadBands, ModelError, Reagent, ReagentSide};
use phdose::control::regulator::{
    Law, Regulator, RegulatorError, RegulatorInputs, RegulatorMode, RegulatorOutput, RegulatorSettings,
};
use phdose::titration::reagent::mol_per_l_of;
use phdose::units::Celsius;

const T_C: f64 = 14.0;
const VOLUME_L: f64 = 250.0;
const TICK_S: f64 = 5.0;
const PROBE_LAG_S: f64 = 15.0;

fn water(nahco3: f64, h2so4: f64, activity: Activity) -> Solution<f64, 6> {
    let mut s = Solution::new(Celsius::new(T_C).unwrap(), activity);
    s.add_formula("NaHCO3", nahco3).unwrap();
    s.add_formula("H2SO4", h2so4).unwrap();
    s.add_formula("Na2HPO4", 0.0001).unwrap();
    s
}

fn caustic(activity: Activity) -> Solution<f64, 2> {
    let mut s = Solution::new(Celsius::new(T_C).unwrap(), activity);
    s.add_formula("NaOH", mol_per_l_of("NaOH", 25.0, 1.274).unwrap()).unwrap();
    s
}

fn settings(setpoint_ph: f64, bound_fraction: f64) -> RegulatorSettings<f64> {
    let residence_s = VOLUME_L / 1200.0 * 3600.0;
    RegulatorSettings {
        law: Law::Model,
        setpoint_ph,
        pi: PiTuning {
            integral_time_s: residence_s + PROBE_LAG_S,
            closed_loop_time_constant_s: 300.0,
            rate_limit_l_per_h_per_s: 0.05,
        },
        dead_bands: DeadBands { flow_fraction: 0.02, temperature_c: 0.5, correction_fraction: 0.02 },
        adapt: AdaptSettings {
            tank_volume_l: VOLUME_L,
            filter_time_s: 3.0 * residence_s,
            bound_fraction,
            residual_bound_ph: 0.5,
            residual_time_s: 1200.0,
        },
        switch_dead_band_ph: 0.3,
    }
}

struct Plant {
    tank: Solution<f64, 6>,
    influent: Solution<f64, 6>,
    reagent: Solution<f64, 2>,
    probe_ph: f64,
}

impl Plant {
    fn new(influent: Solution<f64, 6>) -> Self {
        let ph = influent.solve().unwrap().ph;
        Self { tank: influent.clone(), influent, reagent: caustic(Activity::Davies), probe_ph: ph }
    }

    /// Advances one tick in 1 s sub-steps (explicit in the invariants; ΔV/V ≈ 1.3e-3 per step).
    fn advance(&mut self, influent_l_per_h: f64, reagent_l_per_h: f64) -> f64 {
        let steps = TICK_S as u32;
        let dt = TICK_S / f64::from(steps);
        let mut eq = self.tank.solve().unwrap();
        for _ in 0..steps {
            let inflow = self.influent.mix(influent_l_per_h, &self.reagent, reagent_l_per_h).unwrap();
            let dv = (influent_l_per_h + reagent_l_per_h) * dt / 3600.0;
            self.tank = self.tank.mix(VOLUME_L - dv, &inflow, dv).unwrap();
            eq = self.tank.solve_warm(&eq).unwrap();
            self.probe_ph += (eq.ph - self.probe_ph) * (1.0 - (-dt / PROBE_LAG_S).exp());
        }
        eq.ph
    }
}

/// The inputs of one tick at 1200 L/h (or `flow`), with a trusted probe.
fn tick(ph: f64, flow: f64, delivered: [f64; 2], mode: RegulatorMode<f64>) -> RegulatorInputs<f64> {
    RegulatorInputs {
        dt_s: TICK_S,
        ph,
        temperature: Celsius::new(T_C).unwrap(),
        influent_flow_l_per_h: flow,
        delivered_l_per_h: delivered,
        ph_trusted: true,
        mode,
    }
}

struct Run {
    ph: Vec<f64>,
    out: Vec<RegulatorOutput<f64>>,
}

/// Runs `ticks` ticks; `flow_at(k)` gives the influent flow of tick k.
fn run(reg: &mut Regulator<f64, 6>, plant: &mut Plant, ticks: usize, flow_at: impl Fn(usize) -> f64) -> Run {
    let mut delivered = [0.0; 2];
    let mut r = Run { ph: Vec::new(), out: Vec::new() };
    for k in 0..ticks {
        let flow = flow_at(k);
        let out = reg.step(&tick(plant.probe_ph, flow, delivered, RegulatorMode::Auto));
        delivered = out.demand_l_per_h;
        let ph = plant.advance(flow, delivered[0]);
        r.ph.push(ph);
        r.out.push(out);
    }
    r
}

fn regulator(setpoint_ph: f64, bound_fraction: f64) -> Regulator<f64, 6> {
    let configured = water(0.0015, 0.0022, Activity::Ideal);
    let reagent = Reagent { solution: caustic(Activity::Ideal), max_l_per_h: 3.0 };
    Regulator::new(settings(setpoint_ph, bound_fraction), configured, Some(reagent), None, 1200.0).unwrap()
}

fn ticks(seconds: f64) -> usize {
    (seconds / TICK_S) as usize
}

#[test]
fn cold_start_reaches_the_band_and_stays() {
    let mut reg = regulator(7.5, 0.5);
    let mut plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    assert!(plant.probe_ph < 4.0, "the rinse water starts acidic: {}", plant.probe_ph);
    let r = run(&mut reg, &mut plant, ticks(7200.0), |_| 1200.0);
    let entered = r.ph.iter().position(|p| (p - 7.5).abs() < 0.3).unwrap();
    let last_hour = &r.ph[ticks(3600.0)..];
    let worst = last_hour.iter().map(|p| (p - 7.5).abs()).fold(0.0, f64::max);
    println!("band entered after {} s; worst |error| in the second hour {worst:.4} pH", entered as f64 * TICK_S);
    assert!(entered as f64 * TICK_S < 3600.0);
    assert!(worst < 0.3, "{worst}");
    // Every tick is a real, finite computation: the feed-forward was computed at least once and
    // the loop never reported a model failure.
    assert!(r.out.iter().all(|o| o.model_error.is_none()));
}

#[test]
fn adaptation_learns_an_influent_whose_alkalinity_is_30_percent_off() {
    // Configured: 1.5 mmol/L bicarbonate and 2.2 mmol/L sulfuric acid, a total alkalinity of
    // 1.5 − 2·2.2 = −2.9 meq/L (mineral acidity). True: 30 % more negative, −3.77 meq/L, with
    // the acid at (1.5 + 3.77)/2 = 2.635 mmol/L.
    let true_water = water(0.0015, 0.002635, Activity::Davies);
    let sp = 7.5;
    // The correction adaptation should find, from the dose model alone (no adaptation code):
    // the strong-ion excess that makes the configured ideal model need the dose the true
    // (Davies) water needs, Δc = −ΔQ·g_r(sp)/Q_in.
    let request = phdose::titration::DoseRequest::new(phdose::units::Ph::new(sp).unwrap());
    let q_true = phdose::titration::plan(
        &true_water,
        phdose::units::LitresPerHour::new(1200.0).unwrap(),
        &caustic(Activity::Davies),
        &request,
    )
    .unwrap();
    let configured = water(0.0015, 0.0022, Activity::Ideal);
    let q_conf = phdose::titration::plan(
        &configured,
        phdose::units::LitresPerHour::new(1200.0).unwrap(),
        &caustic(Activity::Ideal),
        &request,
    )
    .unwrap();
    let g_r = caustic(Activity::Ideal).charge_excess_eq_per_l(sp, 0.0);
    let expected = -(q_true.reagent_flow_l_per_h - q_conf.reagent_flow_l_per_h) * g_r / 1200.0;

    let mut with = regulator(sp, 0.5);
    let mut plant = Plant::new(true_water.clone());
    let settle = run(&mut with, &mut plant, ticks(4.0 * 3600.0), |_| 1200.0);
    let last = settle.out.last().unwrap();
    println!("correction {:.4e} eq/L, expected {expected:.4e}", last.correction_eq_per_l);
    assert!((last.correction_eq_per_l - expected).abs() < 0.05 * expected.abs(), "{last:?}");
    // The feed-forward now carries the difference; the trim is small.
    assert!(last.trim_l_per_h.abs() < 0.05 * last.feed_forward_l_per_h, "{last:?}");
    let steady = settle.ph[settle.ph.len() - ticks(1800.0)..].iter().map(|p| (p - sp).abs()).fold(0.0, f64::max);
    assert!(steady < 0.05, "steady error {steady}");

    // Then the flow steps up 40 %: the adapted feed-forward scales with the right composition.
    let after_step = run(&mut with, &mut plant, ticks(3600.0), |_| 1680.0);
    let worst_with = after_step.ph.iter().map(|p| (p - sp).abs()).fold(0.0, f64::max);

    let mut without = regulator(sp, 0.0);
    let mut plant2 = Plant::new(true_water);
    run(&mut without, &mut plant2, ticks(4.0 * 3600.0), |_| 1200.0);
    let after_step2 = run(&mut without, &mut plant2, ticks(3600.0), |_| 1680.0);
    let worst_without = after_step2.ph.iter().map(|p| (p - sp).abs()).fold(0.0, f64::max);
    println!("flow step: worst |error| {worst_with:.3} pH adapted, {worst_without:.3} pH not adapted");
    assert!(worst_with < 0.5 * worst_without, "{worst_with} vs {worst_without}");
}

/// Time (s) for the flow-mapped error to fall from its peak to a tenth of it after a step in
/// the true influent's acid that the controller is not told about.
fn recovery_time(setpoint_ph: f64) -> f64 {
    let mut reg = regulator(setpoint_ph, 0.0);
    let mut plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    run(&mut reg, &mut plant, ticks(4.0 * 3600.0), |_| 1200.0);
    plant.influent = water(0.0015, 0.0024, Activity::Davies);
    let r = run(&mut reg, &mut plant, ticks(3.0 * 3600.0), |_| 1200.0);
    let e: Vec<f64> = r.out.iter().map(|o| o.error_l_per_h.abs()).collect();
    let (peak_at, peak) = e.iter().copied().enumerate().fold((0, 0.0), |a, (i, v)| if v > a.1 { (i, v) } else { a });
    let back = e[peak_at..].iter().position(|v| *v < 0.1 * peak).unwrap();
    let worst_ph = r.ph.iter().map(|p| (p - setpoint_ph).abs()).fold(0.0, f64::max);
    println!(
        "setpoint {setpoint_ph}: peak error {peak:.4} L/h ({worst_ph:.3} pH), back to 10 % in {} s",
        back as f64 * TICK_S
    );
    back as f64 * TICK_S
}

#[test]
fn scheduled_gain_keeps_the_response_at_two_buffer_capacities() {
    // pH 6.5 sits on the carbonate buffer; pH 8.6 is far less buffered.
    let buffered = water(0.0015, 0.0022, Activity::Ideal);
    let gain = |ph: f64| {
        Regulator::new(
            settings(ph, 0.0),
            buffered.clone(),
            Some(Reagent { solution: caustic(Activity::Ideal), max_l_per_h: 3.0 }),
            None,
            1200.0,
        )
        .unwrap()
        .feed_forward()
        .unwrap()
        .gain_ph_per_l_per_h
    };
    let (g1, g2) = (gain(6.5), gain(8.6));
    println!("process gain {g1:.3} pH per L/h at 6.5, {g2:.3} at 8.6");
    assert!(g2 > 2.0 * g1, "the two operating points must differ in gain: {g1} vs {g2}");
    let (t1, t2) = (recovery_time(6.5), recovery_time(8.6));
    assert!(t1 / t2 < 1.5 && t2 / t1 < 1.5, "recovery {t1} s vs {t2} s");
}

#[test]
fn manual_to_auto_is_bumpless_and_stopped_outputs_nothing() {
    let mut reg = regulator(7.5, 0.5);
    let mut plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    let mut delivered = [0.0; 2];
    let mut last = 0.0;
    for k in 0..ticks(3600.0) {
        let mode = if k < ticks(1800.0) {
            RegulatorMode::Manual { side: ReagentSide::Caustic, flow_l_per_h: 1.2 }
        } else {
            RegulatorMode::Auto
        };
        let out = reg.step(&tick(plant.probe_ph, 1200.0, delivered, mode));
        if k == ticks(1800.0) {
            assert!(
                (out.demand_l_per_h[0] - last).abs() <= 0.05 * TICK_S + 1e-12,
                "bump {} → {}",
                last,
                out.demand_l_per_h[0]
            );
        }
        last = out.demand_l_per_h[0];
        delivered = out.demand_l_per_h;
        plant.advance(1200.0, delivered[0]);
    }
    let stopped = reg.step(&tick(plant.probe_ph, 1200.0, delivered, RegulatorMode::Stopped));
    assert_eq!(stopped.demand_l_per_h, [0.0, 0.0]);
}

#[test]
fn a_pump_that_delivers_nothing_raises_the_residual_warning() {
    let mut reg = regulator(7.5, 0.5);
    let mut plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    run(&mut reg, &mut plant, ticks(3.0 * 3600.0), |_| 1200.0);
    // The suction line has lost its prime: the pump strokes, the controller counts the strokes
    // as delivered, no caustic reaches the tank. The tank falls back towards the influent's pH;
    // no correction within the bound explains that with the dose the controller believes in.
    let mut delivered = [0.0; 2];
    let mut first_warning = None;
    for k in 0..ticks(3600.0) {
        let out = reg.step(&tick(plant.probe_ph, 1200.0, delivered, RegulatorMode::Auto));
        if first_warning.is_none()
            && let Some(w) = out.residual_warning
        {
            first_warning = Some((k, w));
        }
        delivered = out.demand_l_per_h;
        plant.advance(1200.0, 0.0);
    }
    let (k, w) = first_warning.expect("the residual warning must be raised");
    println!("warning after {} s: residual {:.2} pH for {} s", k as f64 * TICK_S, w.residual_ph, w.for_s);
    assert!(w.residual_ph < -0.5 && w.for_s >= 1200.0);
    assert!(k as f64 * TICK_S <= 3000.0);
    assert!(reg.adaptation().warning());
    // Adaptation never left its bound.
    assert!(reg.adaptation().correction_eq_per_l().abs() <= reg.correction_bound_eq_per_l());
}

/// Acidic rinse water with carbonate as its only system, in a solution of capacity `N`.
fn acidic_rinse<const N: usize>() -> Solution<f64, N> {
    let mut s = Solution::new(Celsius::new(T_C).unwrap(), Activity::Ideal);
    s.add_formula("NaHCO3", 0.0015).unwrap();
    s.add_formula("HCl", 0.002).unwrap();
    s
}

#[test]
fn a_capacity_too_small_for_the_idle_reagent_is_refused_at_construction() {
    // The rinse water is neutralised with caustic; the idle acid pump carries sulfuric acid,
    // whose sulfate system reaches the tank only after a switch to the acid.
    let mut acid = Solution::new(Celsius::new(T_C).unwrap(), Activity::Ideal);
    acid.add_formula("H2SO4", 1.0).unwrap();
    let caustic_pump = || Some(Reagent { solution: caustic(Activity::Ideal), max_l_per_h: 3.0 });
    let acid_pump = Some(Reagent { solution: acid, max_l_per_h: 3.0 });
    let refused = Regulator::new(settings(7.5, 0.5), acidic_rinse::<1>(), caustic_pump(), acid_pump.clone(), 1200.0);
    assert_eq!(
        refused.map(|r| r.active()),
        Err(RegulatorError::Model(ModelError::Composition(CompositionError::CapacityExceeded { capacity: 1 })))
    );
    // The design point itself needs only the caustic: without the idle acid, N = 1 is enough.
    let caustic_only = Regulator::new(settings(7.5, 0.5), acidic_rinse::<1>(), caustic_pump(), None, 1200.0);
    assert_eq!(caustic_only.map(|r| r.active()), Ok(ReagentSide::Caustic));
    // Room for both: accepted, caustic active.
    let roomy = Regulator::new(settings(7.5, 0.5), acidic_rinse::<2>(), caustic_pump(), acid_pump, 1200.0);
    assert_eq!(roomy.map(|r| r.active()), Ok(ReagentSide::Caustic));
}

#[test]
fn regulator_state_size() {
    // Reported in README ("Memory and bounds"); the f32 board build with a six-system influent.
    let n32 = core::mem::size_of::<Regulator<f32, 6>>();
    let n64 = core::mem::size_of::<Regulator<f64, 6>>();
    println!("size_of Regulator<f32, 6> = {n32} B, Regulator<f64, 6> = {n64} B");
    assert!(n32 < n64);
}

#[test]
fn the_feedback_only_law_has_no_feed_forward_and_reaches_the_band_slower() {
    let mut s = settings(7.5, 0.5);
    s.law = Law::FeedbackOnly { gain_l_per_h_per_ph: 0.05 };
    s.pi.closed_loop_time_constant_s = s.pi.integral_time_s; // proportional factor Ti/λ = 1
    let configured = water(0.0015, 0.0022, Activity::Ideal);
    let reagent = Reagent { solution: caustic(Activity::Ideal), max_l_per_h: 3.0 };
    let mut reg = Regulator::new(s, configured, Some(reagent), None, 1200.0).unwrap();
    let mut plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    let first = reg.step(&tick(plant.probe_ph, 1200.0, [0.0; 2], RegulatorMode::Auto));
    assert_eq!(first.feed_forward_l_per_h, 0.0);
    assert!((first.error_l_per_h - 0.05 * (7.5 - plant.probe_ph)).abs() < 1e-12, "{first:?}");
    assert!(!first.adapted);
    let fb = run(&mut reg, &mut plant, ticks(14400.0), |_| 1200.0);
    let mut ff_reg = regulator(7.5, 0.5);
    let mut ff_plant = Plant::new(water(0.0015, 0.0022, Activity::Davies));
    let ff = run(&mut ff_reg, &mut ff_plant, ticks(14400.0), |_| 1200.0);
    let iae = |r: &Run| r.ph.iter().map(|p| (p - 7.5).abs() * TICK_S).sum::<f64>();
    println!(
        "IAE over 4 h from a cold start: feed-forward + feedback {:.0} pH·s, feedback only {:.0} pH·s",
        iae(&ff),
        iae(&fb)
    );
    assert!(fb.out.iter().all(|o| o.feed_forward_l_per_h == 0.0 && !o.adapted));
    assert!(iae(&fb) > iae(&ff), "the feedback-only loop should do worse");
}
