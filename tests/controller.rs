//! The controller on a plant model: the built-in example skid (the rinse-water tank of a
//! fictional plating shop) from its settings through the boot checks to `step`, and every
//! interlock: each trip reason is reachable, stops the pumps within the step that sees it,
//! and only a reset with the cause cleared restarts dosing.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::plant::{Plant, caustic};
use phdose::chem::{Activity, Solution};
use phdose::config::build::{self, MODEL_SYSTEMS};
use phdose::config::{Skid, example};
use phdose::control::controller::{Controller, TickInputs, TickOutputs};
use phdose::control::feedforward::ReagentSide;
use phdose::control::supervisor::{ModeRequest, State, TripReason};
use phdose::probe::calibration::Calibration;
use phdose::units::Celsius;
use proptest::prelude::*;

const T_C: f64 = 18.0;
const TICK_S: f64 = 5.0;

/// The example skid's true rinse water (the same as configured), Davies.
fn rinse() -> Solution<f64, 8> {
    let mut s = Solution::new(Celsius::new(T_C).unwrap(), Activity::Davies);
    for (f, c) in [("H2SO4", 0.0012), ("HCl", 0.0006), ("NaHCO3", 0.0010)] {
        s.add_formula(f, c).unwrap();
    }
    s
}

/// ±0.2 mV of electrode noise, alternating with the tick count (keeps the frozen-signal check
/// quiet, as a real electrode's noise does).
fn dither(k: u64) -> f64 {
    if k.is_multiple_of(2) { 0.2 } else { -0.2 }
}

/// The probes' true electrodes: the configured calibrations.
fn electrodes(skid: &Skid) -> Vec<Calibration<f64>> {
    skid.probes.probes.iter().map(|c| build::calibration::<f64>(c).unwrap()).collect()
}

/// A rig: controller, plant, electrodes, and the tick count (for a ±0.2 mV dither that keeps
/// the frozen-signal check quiet, as real electrode noise does).
struct Rig {
    c: Controller<f64, MODEL_SYSTEMS>,
    plant: Plant,
    electrodes: Vec<Calibration<f64>>,
    k: u64,
    /// Extra offset per probe, mV (a drifting probe).
    drift_mv: [f64; 3],
    /// The plant ignores the caustic pump (a pump that strokes but delivers nothing).
    dead_pump: bool,
    /// The caustic pump delivers this whatever it is told, L/h, while the dosing-enable relay is
    /// closed (a stuck pump: only the relay stops it).
    stuck_l_per_h: Option<f64>,
    flow_l_per_h: f64,
}

impl Rig {
    fn new(skid: &Skid) -> Self {
        let (c, report) = build::controller::<f64>(skid).unwrap();
        assert!(report.allowed(), "{report:?}");
        Self {
            c,
            plant: Plant::new(rinse(), caustic(T_C), 250.0, 15.0),
            electrodes: electrodes(skid),
            k: 0,
            drift_mv: [0.0; 3],
            dead_pump: false,
            stuck_l_per_h: None,
            flow_l_per_h: 1200.0,
        }
    }

    fn inputs(&self, mode: ModeRequest) -> TickInputs<f64> {
        let t = Celsius::new(T_C).unwrap();
        let dither = dither(self.k);
        let mut mv = [f64::NAN; 3];
        for (i, e) in self.electrodes.iter().enumerate() {
            mv[i] = e.mv(self.plant.probe_ph, t) + dither + self.drift_mv[i];
        }
        TickInputs {
            dt_s: TICK_S,
            probe_mv: mv,
            temperature_c: T_C,
            influent_flow_l_per_h: Some(self.flow_l_per_h),
            flow_switch: true,
            reagent_low: [false; 2],
            reset: false,
            mode,
            manual: (ReagentSide::Caustic, 0.0),
        }
    }

    /// One tick with `inputs`, then the plant advances with what the pumps deliver.
    fn tick(&mut self, inputs: &TickInputs<f64>) -> TickOutputs<f64> {
        let out = self.c.step(inputs);
        let q = match self.stuck_l_per_h {
            Some(q) if out.dosing_enabled => q,
            _ if self.dead_pump => 0.0,
            _ => out.delivered_l_per_h[0],
        };
        let flow = if inputs.flow_switch { self.flow_l_per_h } else { 0.0 };
        self.plant.advance(inputs.dt_s.clamp(0.0, 120.0), flow, q);
        self.k += 1;
        out
    }

    fn run(&mut self, seconds: f64, mode: ModeRequest) -> Vec<TickOutputs<f64>> {
        (0..(seconds / TICK_S) as usize).map(|_| self.tick(&self.inputs(mode))).collect()
    }
}

#[test]
fn the_example_skid_reaches_its_band_from_a_cold_start_without_trips() {
    let skid = example::plating_rinse();
    let mut rig = Rig::new(&skid);
    assert_eq!(rig.c.state(), State::Starting);
    let outs = rig.run(7200.0, ModeRequest::Auto);
    assert_eq!(outs[0].state, State::Idle, "the first tick only decides");
    assert!(outs[1].state == State::Auto && outs[1].dosing_enabled);
    assert!(outs.iter().all(|o| o.trip.is_none()), "{:?}", outs.iter().find_map(|o| o.trip));
    let sp = f64::from(skid.control.setpoint_ph);
    let half_band = f64::from(skid.control.band_ph) / 2.0;
    let first_in = outs.iter().position(|o| o.vote.ph.is_some_and(|p| (p - sp).abs() <= half_band)).unwrap();
    let tail = &outs[outs.len() - 720..];
    let worst = tail.iter().filter_map(|o| o.vote.ph).map(|p| (p - sp).abs()).fold(0.0, f64::max);
    println!(
        "example skid: inside ±{half_band} pH after {} s; worst error in the second hour {worst:.3} pH; tank pH {:.3}; \
         caustic {:.3} L in the last hour",
        first_in as f64 * TICK_S,
        rig.plant.ph,
        tail.last().unwrap().dose_last_hour_l[0]
    );
    assert!(worst <= half_band, "worst error in the second hour {worst}");
}

#[test]
fn the_example_skid_runs_in_f32_too() {
    let skid = example::plating_rinse();
    let (mut c, report) = build::controller::<f32>(&skid).unwrap();
    assert!(report.allowed(), "{report:?}");
    let mut plant = Plant::new(rinse(), caustic(T_C), 250.0, 15.0);
    let e: Vec<Calibration<f32>> = skid.probes.probes.iter().map(|c| build::calibration::<f32>(c).unwrap()).collect();
    let t = Celsius::new(T_C as f32).unwrap();
    let mut last = None;
    for k in 0..1440 {
        let dither = dither(k) as f32;
        let mut mv = [f32::NAN; 3];
        for (i, cal) in e.iter().enumerate() {
            mv[i] = cal.mv(plant.probe_ph as f32, t) + dither;
        }
        let out = c.step(&TickInputs {
            dt_s: 5.0,
            probe_mv: mv,
            temperature_c: T_C as f32,
            influent_flow_l_per_h: Some(1200.0),
            flow_switch: true,
            reagent_low: [false; 2],
            reset: false,
            mode: ModeRequest::Auto,
            manual: (ReagentSide::Caustic, 0.0),
        });
        assert!(out.trip.is_none(), "{:?}", out.trip);
        plant.advance(5.0, 1200.0, f64::from(out.delivered_l_per_h[0]));
        last = out.vote.ph;
    }
    let err = (f64::from(last.unwrap()) - 7.0).abs();
    assert!(err <= 0.15, "f32 controller ends {err} pH from the setpoint");
}

/// Runs the example in auto for 30 min, then applies `cause` each tick until the trip; checks
/// the trip's code, that the pumps stopped in that very step, that a reset while the cause
/// persists does not restart, that clearing without a reset does not restart, and that a reset
/// with the cause cleared does.
fn trips<F, G>(skid: &Skid, reason: TripReason, within_s: f64, cause: F, clear: G)
where
    F: Fn(&mut Rig, &mut TickInputs<f64>),
    G: Fn(&mut Rig),
{
    let mut rig = Rig::new(skid);
    rig.run(1800.0, ModeRequest::Auto);
    assert_eq!(rig.c.state(), State::Auto, "{reason:?}: not dosing before the cause");
    let mut tripped = None;
    for _ in 0..(within_s / TICK_S) as usize {
        let mut i = rig.inputs(ModeRequest::Auto);
        cause(&mut rig, &mut i);
        let out = rig.tick(&i);
        if out.state == State::Tripped {
            tripped = Some(out);
            break;
        }
        assert!(out.dosing_enabled);
    }
    let out = tripped.unwrap_or_else(|| panic!("{reason:?} did not trip within {within_s} s"));
    assert_eq!(out.trip.map(|t| t.reason), Some(reason), "{reason:?}: {:?}", out.trip);
    assert_eq!(out.trip.unwrap().reason.code(), reason.code());
    assert!(!out.dosing_enabled && out.alarm, "{reason:?}");
    assert!(
        out.delivered_l_per_h.iter().all(|q| *q == 0.0),
        "{reason:?}: pumps still running {:?}",
        out.delivered_l_per_h
    );
    if matches!(reason, TripReason::ModelMismatch | TripReason::Runaway) {
        // Only observable while dosing (see the supervisor's docs): the reset restarts dosing and
        // the condition trips again after its time while the cause persists.
        let mut i = rig.inputs(ModeRequest::Auto);
        cause(&mut rig, &mut i);
        i.reset = true;
        assert_eq!(rig.tick(&i).state, State::Auto);
        let again = (0..(within_s / TICK_S) as usize).find_map(|_| {
            let mut i = rig.inputs(ModeRequest::Auto);
            cause(&mut rig, &mut i);
            rig.tick(&i).trip
        });
        assert_eq!(again.map(|t| t.reason), Some(reason), "the persisting cause did not trip again");
    } else {
        // Reset while the cause persists: stays tripped, pumps off.
        let mut i = rig.inputs(ModeRequest::Auto);
        cause(&mut rig, &mut i);
        i.reset = true;
        let out = rig.tick(&i);
        assert_eq!(out.state, State::Tripped, "{reason:?}: a reset with the cause present restarted");
        assert_eq!(out.delivered_l_per_h, [0.0, 0.0]);
    }
    // Cause cleared, no reset: stays tripped (for 10 min, while the probes' transients settle).
    clear(&mut rig);
    for _ in 0..120 {
        let out = rig.tick(&rig.inputs(ModeRequest::Auto));
        assert_eq!(out.state, State::Tripped, "{reason:?}: restarted without a reset");
    }
    // Reset with the cause cleared: doses again.
    let mut i = rig.inputs(ModeRequest::Auto);
    i.reset = true;
    let out = rig.tick(&i);
    assert_eq!(
        out.state,
        State::Auto,
        "{reason:?}: reset with the cause cleared did not restart: {:?}, vote {:?}",
        out.trip,
        out.vote
    );
}

fn no_clear(_: &mut Rig) {}

#[test]
fn no_flow_trips() {
    trips(&example::plating_rinse(), TripReason::NoFlow, 10.0, |_, i| i.flow_switch = false, no_clear);
}

#[test]
fn a_low_measured_flow_trips_as_no_flow() {
    trips(&example::plating_rinse(), TripReason::NoFlow, 10.0, |_, i| i.influent_flow_l_per_h = Some(20.0), no_clear);
}

#[test]
fn ph_beyond_the_high_limit_trips() {
    // A creeping rise (0.02 pH/s, under the rate check) until beyond the high limit 10. The
    // runaway trip would see the rising reading with the pump off first: its time is set beyond
    // this test's reach, so the test sees the hard limit alone (the runaway has its own test).
    let mut skid = example::plating_rinse();
    skid.interlocks.runaway_off_s = 3600.0;
    trips(
        &skid,
        TripReason::PhHigh,
        600.0,
        |rig, i| {
            let t = Celsius::new(T_C).unwrap();
            let climb = 0.1 * (rig.k as f64 - 360.0);
            for (k, e) in rig.electrodes.iter().enumerate() {
                i.probe_mv[k] = e.mv(rig.plant.probe_ph + climb, t) + dither(rig.k);
            }
        },
        |rig| rig.k = 360,
    );
}

#[test]
fn ph_below_the_low_limit_trips() {
    // A creeping fall (0.02 pH/s) from the setpoint to below the low limit 1.
    let skid = example::plating_rinse();
    trips(
        &skid,
        TripReason::PhLow,
        900.0,
        |rig, i| {
            let t = Celsius::new(T_C).unwrap();
            let fall = 0.1 * (rig.k as f64 - 360.0);
            for (k, e) in rig.electrodes.iter().enumerate() {
                i.probe_mv[k] = e.mv(rig.plant.probe_ph - fall, t) + dither(rig.k);
            }
        },
        |rig| {
            // The false low reading made the loop overdose before the trip: the tank needs an
            // hour of flushing before no trip condition holds.
            rig.k = 360;
            for _ in 0..720 {
                rig.tick(&rig.inputs(ModeRequest::Off));
            }
        },
    );
}

#[test]
fn broken_probe_inputs_trip() {
    trips(&example::plating_rinse(), TripReason::ProbeFault, 10.0, |_, i| i.probe_mv = [f64::NAN; 3], no_clear);
}

#[test]
fn disagreeing_probes_trip() {
    // Probe 2 drifts: +2 mV per tick (0.007 pH/s, under the rate check) until 0.4 pH apart.
    trips(
        &example::plating_rinse(),
        TripReason::ProbeDisagreement,
        600.0,
        |rig, i| {
            rig.drift_mv[1] += 2.0;
            i.probe_mv[1] += 2.0;
        },
        |rig| rig.drift_mv[1] = 0.0,
    );
}

#[test]
fn stale_inputs_trip() {
    trips(&example::plating_rinse(), TripReason::StaleInputs, 10.0, |_, i| i.dt_s = 45.0, no_clear);
}

#[test]
fn reagent_low_trips() {
    trips(&example::plating_rinse(), TripReason::ReagentLow, 10.0, |_, i| i.reagent_low = [true, false], no_clear);
}

#[test]
fn overdose_in_an_hour_trips() {
    // The operator runs the caustic pump at 10 L/h by hand: 2.5 L in 15 minutes.
    let mut skid = example::plating_rinse();
    skid.control.high_limit_ph = 14.0;
    skid.probes.max_rate_ph_per_s = 5.0;
    skid.probes.max_noise_mv = 100.0;
    trips(
        &skid,
        TripReason::OverdoseHour,
        1200.0,
        |_, i| {
            i.mode = ModeRequest::Manual;
            i.manual = (ReagentSide::Caustic, 10.0);
        },
        |rig| {
            // An hour of no dosing empties the window (the controller stays tripped meanwhile).
            for _ in 0..720 {
                rig.tick(&rig.inputs(ModeRequest::Off));
            }
        },
    );
}

#[test]
fn overdose_in_a_day_trips() {
    // Hourly limit 2.5 L, daily 3 L: 1.5 L/h by hand passes the hour but not the day.
    let mut skid = example::plating_rinse();
    skid.caustic.as_mut().unwrap().max_per_day_l = 3.0;
    skid.control.high_limit_ph = 14.0;
    skid.probes.max_rate_ph_per_s = 5.0;
    skid.probes.max_noise_mv = 100.0;
    trips(
        &skid,
        TripReason::OverdoseDay,
        3.0 * 3600.0,
        |_, i| {
            i.mode = ModeRequest::Manual;
            i.manual = (ReagentSide::Caustic, 1.5);
        },
        |rig| {
            for _ in 0..(25 * 720) {
                rig.tick(&rig.inputs(ModeRequest::Off));
            }
        },
    );
}

#[test]
fn a_pump_that_delivers_nothing_trips_on_model_mismatch() {
    let mut skid = example::plating_rinse();
    skid.interlocks.mismatch_trip_s = 600.0;
    // The loop pushes a dead pump to its maximum: lift the overdose guard so that this test sees
    // the model mismatch alone (the guard has its own tests).
    let caustic = skid.caustic.as_mut().unwrap();
    caustic.max_per_hour_l = 20.0;
    caustic.max_per_day_l = 200.0;
    trips(&skid, TripReason::ModelMismatch, 3600.0, |rig, _| rig.dead_pump = true, |rig| rig.dead_pump = false);
}

/// A caustic pump stuck at 1 L/h (2.5 times the demand) after 30 min in auto: the loop cuts its
/// command, the pH keeps rising with the pump "off", and the runaway trip (112) stops it — before
/// the pH reaches the high limit, which is what the trip is for.
#[test]
fn a_stuck_pump_trips_on_runaway_before_the_high_limit() {
    let skid = example::plating_rinse();
    trips(
        &skid,
        TripReason::Runaway,
        1200.0,
        |rig, _| {
            rig.stuck_l_per_h = Some(1.0);
            assert!(rig.plant.probe_ph < 10.0, "reached the high limit first: {}", rig.plant.probe_ph);
        },
        |rig| {
            rig.stuck_l_per_h = None;
            for _ in 0..360 {
                rig.tick(&rig.inputs(ModeRequest::Off));
            }
        },
    );
}

#[test]
fn a_refused_configuration_never_doses() {
    let mut skid = example::plating_rinse();
    skid.control.band_ph = 0.0; // boot error 202
    let (mut c, report) = build::controller::<f64>(&skid).unwrap();
    assert!(!report.allowed());
    let mut plant = Plant::new(rinse(), caustic(T_C), 250.0, 15.0);
    let e = electrodes(&skid);
    for k in 0..100 {
        let mut mv = [f64::NAN; 3];
        for (i, cal) in e.iter().enumerate() {
            mv[i] = cal.mv(plant.probe_ph, Celsius::new(T_C).unwrap()) + dither(k);
        }
        let out = c.step(&TickInputs {
            dt_s: 5.0,
            probe_mv: mv,
            temperature_c: T_C,
            influent_flow_l_per_h: Some(1200.0),
            flow_switch: true,
            reagent_low: [false; 2],
            reset: k % 3 == 0,
            mode: ModeRequest::Auto,
            manual: (ReagentSide::Caustic, 1.0),
        });
        assert_eq!(out.state, State::Refused);
        assert_eq!(out.trip.map(|t| t.reason), Some(TripReason::ConfigInvalid));
        assert!(!out.dosing_enabled && out.alarm && out.delivered_l_per_h == [0.0, 0.0]);
        plant.advance(5.0, 1200.0, 0.0);
    }
}

/// A board that switched its outputs off between two steps (a refused frame) says so; the next
/// step counts the last commands only for the time they ran: the law's tank model advances with
/// that share of them, the earliest switch-off counts, and one at the interval's end changes
/// nothing.
#[test]
fn outputs_forced_off_count_the_last_commands_for_the_time_they_ran() {
    let skid = example::plating_rinse();
    let mut rig = Rig::new(&skid);
    let outs = rig.run(600.0, ModeRequest::Auto);
    let last = outs.last().unwrap();
    assert!(last.dosing_enabled && last.delivered_l_per_h[0] > 0.0, "{last:?}");
    let mut inputs = rig.inputs(ModeRequest::Auto);
    inputs.dt_s = 2.0 * TICK_S;

    let mut plain = rig.c.clone();
    let plain_out = plain.step(&inputs);
    // Switched off at the end of the interval: the commands ran all of it.
    let mut at_end = rig.c.clone();
    at_end.outputs_forced_off(2.0 * TICK_S);
    assert_eq!(at_end.step(&inputs), plain_out);
    assert_eq!(at_end, plain);

    // Switched off one tick into a two-tick gap (told twice; the earlier time counts): the tank
    // model advances with half of each command over the gap.
    let mut half = rig.c.clone();
    half.outputs_forced_off(TICK_S);
    half.outputs_forced_off(1.5 * TICK_S);
    half.step(&inputs);
    let mut expected = *rig.c.law().adaptation();
    let q = last.delivered_l_per_h.map(|q| q * 0.5);
    expected.advance_tank(&rig.c.law().settings().adapt, 2.0 * TICK_S, rig.flow_l_per_h, q);
    assert_eq!(half.law().adaptation().fractions(), expected.fractions());
    let plain_caustic = plain.law().adaptation().fractions()[0];
    assert!(half.law().adaptation().fractions()[0] < plain_caustic, "less caustic than without the switch-off");

    // Not finite or negative: the commands did not run at all.
    for bad in [f64::NAN, -1.0] {
        let mut none = rig.c.clone();
        none.outputs_forced_off(bad);
        none.step(&inputs);
        let mut expected = *rig.c.law().adaptation();
        expected.advance_tank(&rig.c.law().settings().adapt, 2.0 * TICK_S, rig.flow_l_per_h, [0.0; 2]);
        assert_eq!(none.law().adaptation().fractions(), expected.fractions(), "{bad}");
    }
}

#[test]
fn memory_of_the_controller_and_its_settings() {
    let c = std::mem::size_of::<Controller<f32, MODEL_SYSTEMS>>();
    let s = std::mem::size_of::<Skid>();
    let c64 = std::mem::size_of::<Controller<f64, MODEL_SYSTEMS>>();
    println!(
        "size_of Controller<f32, {MODEL_SYSTEMS}> = {c} B, Skid = {s} B, together {} B; Controller<f64, {MODEL_SYSTEMS}> = {c64} B",
        c + s
    );
    // The goal: both in 2 KiB (also a compile-time assertion in src/config/build.rs, so a
    // board build fails before a test could).
    assert!(c + s < phdose::config::build::MEMORY_BUDGET_BYTES);
    assert!(c + s < 2048, "{c} + {s}");
}

/// An arbitrary sequence of operator and fault inputs.
fn events() -> impl Strategy<Value = Vec<(u8, bool, bool, bool, bool, f64)>> {
    proptest::collection::vec(
        (0u8..3, any::<bool>(), any::<bool>(), any::<bool>(), any::<bool>(), 0.0f64..40.0),
        1..120,
    )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// Whatever the inputs: pumps deliver only in a dosing state; after a trip, dosing resumes
    /// only after a tick with the reset input; the alarm is on exactly when tripped or refused.
    #[test]
    fn no_dosing_outside_dosing_states_and_no_restart_without_reset(seq in events()) {
        let skid = example::plating_rinse();
        let mut rig = Rig::new(&skid);
        let mut tripped_since_reset = false;
        for (mode, flow, low, reset, nan_probe, dt) in seq {
            let mut i = rig.inputs(match mode { 0 => ModeRequest::Off, 1 => ModeRequest::Auto, _ => ModeRequest::Manual });
            i.flow_switch = flow || mode == 0;
            i.reagent_low = [low && mode == 2, false];
            i.reset = reset;
            i.manual = (ReagentSide::Caustic, 3.0);
            if nan_probe { i.probe_mv[0] = f64::NAN; }
            i.dt_s = dt;
            let out = rig.tick(&i);
            let dosing = out.state.doses();
            prop_assert_eq!(out.dosing_enabled, dosing);
            prop_assert!(dosing || out.delivered_l_per_h.iter().all(|q| *q == 0.0), "{:?} delivers {:?}", out.state, out.delivered_l_per_h);
            prop_assert_eq!(out.alarm, matches!(out.state, State::Tripped | State::Refused));
            if out.state == State::Tripped {
                tripped_since_reset = true;
            }
            if tripped_since_reset && dosing {
                prop_assert!(reset, "dosing resumed after a trip without a reset");
            }
            if reset && out.state != State::Tripped {
                tripped_since_reset = false;
            }
            prop_assert!(out.delivered_l_per_h.iter().all(|q| q.is_finite() && *q >= 0.0));
        }
    }
}
