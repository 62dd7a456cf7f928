//! Link-time proof that the phdose entry points a controller calls have no reachable panic.
//!
//! `panic-never` turns any panic the optimiser cannot remove into a link error, so this binary
//! only links if every call below is panic-free for *all* inputs: the inputs pass through
//! `black_box`, so nothing is constant-folded away. Build with `bash tools/no-panic/check.sh`.
#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use heapless::Vec;
#[cfg(feature = "prove")]
use panic_never as _;

/// Without `prove`: a handler that keeps the panic paths visible for `objdump` (see check.sh).
#[cfg(not(feature = "prove"))]
#[panic_handler]
fn on_panic(_: &core::panic::PanicInfo<'_>) -> ! {
    loop {
        cortex_m::asm::udf();
    }
}
use phdose::Real;
use phdose::chem::salt;
use phdose::chem::{Activity, Solution};
use phdose::config::{boot, build, example};
use phdose::control::adapt::AdaptSettings;
use phdose::control::controller::{Controller, TickInputs};
use phdose::control::feedback::PiTuning;
use phdose::control::feedforward::{DeadBands, Reagent, ReagentSide};
use phdose::control::regulator::{Law, Regulator, RegulatorInputs, RegulatorMode, RegulatorSettings};
use phdose::control::supervisor::ModeRequest;
use phdose::probe::buffers::Buffer;
use phdose::probe::calibration::{Acceptance, Calibration, CalibrationPoint, calibrate};
use phdose::probe::monitor::MonitorSettings;
use phdose::probe::vote::{VoteSettings, vote};
use phdose::probe::{Probe, nernst};
use phdose::titration::alkalinity::{self, AcidPoint};
use phdose::titration::fit::{self, Effective, FitSpec};
use phdose::titration::{self, CurvePoint, DoseRequest, EquivalencePoint, Titration, stages, worst};
use phdose::units::{Celsius, LitresPerHour, TankVolume};

fn sink<R: Real>(x: R) {
    black_box(x);
}

fn r<R: Real>(v: f64) -> R {
    black_box(R::from_f64(v))
}

fn chemistry<R: Real>() -> Option<()> {
    let t = Celsius::new(r::<R>(18.0)).ok()?;
    let mut s: Solution<R, 8> = Solution::new(t, Activity::Davies);
    s.add_formula(black_box("NaHCO3"), r::<R>(0.002)).ok()?;
    s.add_formula(black_box("H2SO4"), r::<R>(0.0006)).ok()?;
    let eq = s.solve().ok()?;
    let again = s.solve_warm(&eq).ok()?;
    sink(again.ph);
    let sp = s.speciate(&eq);
    sink(sp.h_mol_per_l);
    s.set_temperature(Celsius::new(r::<R>(35.0)).ok()?);
    sink(s.solve_from(r::<R>(7.0)).ok()?.ph);
    let report = salt::analyse(black_box("Na2HPO4"), r::<R>(0.05), t, Activity::Davies).ok()?;
    sink(report.equilibrium.ph);
    Some(())
}

fn dosing<R: Real>() -> Option<()> {
    let t = Celsius::new(r::<R>(18.0)).ok()?;
    let mut influent: Solution<R, 6> = Solution::new(t, Activity::Davies);
    influent.add_formula(black_box("NaHCO3"), r::<R>(0.001)).ok()?;
    influent.add_formula(black_box("H2SO4"), r::<R>(0.0012)).ok()?;
    let mut reagent: Solution<R, 1> = Solution::new(t, Activity::Davies);
    reagent.add_formula(black_box("NaOH"), r::<R>(7.96)).ok()?;
    let request = DoseRequest::checked(r::<R>(7.0), Some((r::<R>(10.0), r::<R>(0.01))), Some(r::<R>(0.3))).ok()?;
    let flow = LitresPerHour::new(r::<R>(1200.0)).ok()?;
    let p = titration::plan(&influent, flow, &reagent, &request).ok()?;
    sink(p.resolution_ph);
    sink(p.reagent_flow_l_per_h);
    let limits = worst::HardLimits::new(Some(r::<R>(1.0)), Some(r::<R>(10.0))).ok()?;
    let tank = worst::Tank {
        volume: TankVolume::new(r::<R>(250.0)).ok()?,
        planned_reagent_flow: LitresPerHour::new(p.reagent_flow_l_per_h).ok()?,
    };
    let pump_max = LitresPerHour::new(r::<R>(10.0)).ok()?;
    let stuck = worst::stuck(&influent, flow, &reagent, pump_max, limits, Some(tank)).ok()?;
    sink(stuck.end_ph);
    sink(stuck.time_constant_s.unwrap_or(r::<R>(0.0)));
    let a = alkalinity::alkalinity(&influent).ok()?;
    sink(a.total_eq_per_l);
    let st = stages::advise(r::<R>(2.0), r::<R>(11.0), r::<R>(7.0)).ok()?;
    sink(st.excursion_ph);
    Some(())
}

fn titrations<R: Real>() -> Option<()> {
    let t = Celsius::new(r::<R>(20.0)).ok()?;
    let mut sample: Solution<R, 6> = Solution::new(t, Activity::Ideal);
    sample.add_formula(black_box("Na2CO3"), r::<R>(0.001)).ok()?;
    let mut acid: Solution<R, 1> = Solution::new(t, Activity::Ideal);
    acid.add_formula(black_box("HCl"), r::<R>(0.02)).ok()?;
    let tt = Titration { sample: &sample, sample_volume_l: r::<R>(0.1), titrant: &acid };
    let mut curve: Vec<CurvePoint<R>, 64> = Vec::new();
    tt.curve(r::<R>(0.02), &mut curve).ok()?;
    let mut found: Vec<EquivalencePoint<R>, 4> = Vec::new();
    titration::inflections(&curve, &mut found);
    tt.model_equivalence_points(r::<R>(0.02), &mut found).ok()?;
    let mut data: Vec<AcidPoint<R>, 64> = Vec::new();
    for p in &curve {
        data.push(AcidPoint { titrant_l: p.titrant_l, ph: p.ph }).ok()?;
    }
    sink(alkalinity::gran(&data, r::<R>(0.1), r::<R>(0.02)).ok()?.equivalence_l);
    sink(alkalinity::fixed_endpoint_eq_per_l(&data, r::<R>(0.1), r::<R>(0.02), r::<R>(4.5)).ok()?);
    let mut lab: Vec<(R, R), 64> = Vec::new();
    for p in &curve {
        lab.push((p.titrant_l, p.ph)).ok()?;
    }
    let spec = FitSpec {
        carbonate: true,
        phosphate: black_box(true),
        inert_ionic_strength_mol_per_l: r::<R>(1e-3),
        buffers: black_box(1),
        sample_volume_l: r::<R>(0.1),
        temperature: t,
        activity: Activity::Ideal,
    };
    let start = Effective {
        strong_charge_eq_per_l: r::<R>(1e-3),
        carbonate_mol_per_l: r::<R>(1e-3),
        phosphate_mol_per_l: r::<R>(1e-4),
        buffers: [(r::<R>(1e-4), r::<R>(8.0)), (r::<R>(0.0), r::<R>(7.0))],
    };
    sink(fit::fit(&spec, &acid, &lab, &start).ok()?.rms_ph);
    sink(fit::fit_assessed(&spec, &acid, &lab, &start).ok()?.rms_ph);
    Some(())
}

fn control_law<R: Real>() -> Option<()> {
    let t = Celsius::new(r::<R>(14.0)).ok()?;
    let mut influent: Solution<R, 6> = Solution::new(t, Activity::Ideal);
    influent.add_formula(black_box("NaHCO3"), r::<R>(0.0015)).ok()?;
    influent.add_formula(black_box("H2SO4"), r::<R>(0.0022)).ok()?;
    let mut caustic = Solution::new(t, Activity::Ideal);
    caustic.add_formula(black_box("NaOH"), r::<R>(7.96)).ok()?;
    let settings = RegulatorSettings {
        law: Law::Model,
        setpoint_ph: r::<R>(7.5),
        pi: PiTuning {
            integral_time_s: r::<R>(765.0),
            closed_loop_time_constant_s: r::<R>(300.0),
            rate_limit_l_per_h_per_s: r::<R>(0.05),
        },
        dead_bands: DeadBands {
            flow_fraction: r::<R>(0.02),
            temperature_c: r::<R>(0.5),
            correction_fraction: r::<R>(0.02),
        },
        adapt: AdaptSettings {
            tank_volume_l: r::<R>(250.0),
            filter_time_s: r::<R>(2250.0),
            bound_fraction: r::<R>(0.5),
            residual_bound_ph: r::<R>(0.5),
            residual_time_s: r::<R>(1200.0),
        },
        switch_dead_band_ph: r::<R>(0.3),
    };
    let reagent = Reagent { solution: caustic, max_l_per_h: r::<R>(3.0) };
    let mut reg = Regulator::new(settings, influent, Some(reagent), None, r::<R>(1200.0)).ok()?;
    let out = reg.step(&RegulatorInputs {
        dt_s: r::<R>(5.0),
        ph: r::<R>(6.9),
        temperature: t,
        influent_flow_l_per_h: r::<R>(1250.0),
        delivered_l_per_h: [r::<R>(0.6), r::<R>(0.0)],
        ph_trusted: black_box(true),
        mode: black_box(RegulatorMode::Auto),
    });
    sink(out.demand_l_per_h[0]);
    Some(())
}

fn probes<R: Real>() -> Option<()> {
    let t = Celsius::new(r::<R>(23.0)).ok()?;
    sink(nernst::slope_mv_per_ph(t));
    sink(Buffer::Carbonate.ph(t).ok()?);
    // A point count, buffers and mV the optimiser cannot see: every branch of `calibrate` stays.
    let points = [
        CalibrationPoint { buffer: black_box(Buffer::Phthalate), temperature: t, mv: r::<R>(171.0) },
        CalibrationPoint { buffer: black_box(Buffer::Phosphate), temperature: t, mv: r::<R>(8.0) },
        CalibrationPoint { buffer: black_box(Buffer::Borax), temperature: t, mv: r::<R>(-128.0) },
    ];
    let n = black_box(3_usize).min(points.len());
    let cal = calibrate(points.get(..n)?).ok()?;
    let limits = Acceptance::new(r::<R>(95.0), r::<R>(105.0), r::<R>(30.0)).ok()?;
    black_box(limits.judge(&cal).accepted);
    let stored = Calibration::new(r::<R>(58.5), r::<R>(-3.0), t).ok()?;
    sink(stored.mv(r::<R>(7.5), t));
    let settings =
        MonitorSettings::new(r::<R>(600.0), r::<R>(0.2), r::<R>(5.0), r::<R>(60.0), r::<R>(0.2), r::<R>(900.0)).ok()?;
    let mut a = Probe::new(cal, settings);
    let mut b = Probe::new(stored, MonitorSettings::default());
    let readings = [a.tick(r::<R>(1.0), r::<R>(-20.0), t), b.tick(r::<R>(1.0), r::<R>(-25.0), t)];
    let m = black_box(2_usize).min(readings.len());
    let v = vote(readings.get(..m)?, &VoteSettings::new(r::<R>(0.3)).ok()?).ok()?;
    sink(v.ph?);
    sink(v.spread_ph);
    Some(())
}

/// Bytes standing in for a stored configuration: `black_box` hides them from the optimiser,
/// so the decoder and the boot checks are proven for any content.
static BLOB: [u8; 512] = [0; 512];

/// The board's path at power-on and every tick: decode the stored blob, run the boot checks,
/// build the controller, step it.
fn controller<R: Real>() -> Option<()> {
    let bytes: &[u8] = black_box(BLOB.get(..black_box(300)).unwrap_or(&[]));
    let (skid, report) = boot::check_blob::<R>(bytes);
    black_box(report.allowed());
    let skid = skid.unwrap_or_else(example::plating_rinse);
    let report = boot::check::<R>(black_box(&skid));
    let config = build::controller_config::<R>(&skid).ok()?;
    let mut c = Controller::new(config, report.allowed()).ok()?;
    c.outputs_forced_off(r::<R>(2.5));
    let out = c.step(&black_box(TickInputs {
        dt_s: r::<R>(5.0),
        probe_mv: [r::<R>(10.0), r::<R>(12.0), r::<R>(f64::NAN)],
        temperature_c: r::<R>(18.0),
        influent_flow_l_per_h: Some(r::<R>(1200.0)),
        flow_switch: true,
        reagent_low: [false, false],
        reset: false,
        mode: ModeRequest::Auto,
        manual: (ReagentSide::Caustic, r::<R>(0.0)),
    }));
    sink(out.delivered_l_per_h[0]);
    black_box(out.state);
    Some(())
}

#[entry]
fn main() -> ! {
    // f32 (what an MCU with a single-precision FPU runs) and f64, every layer.
    let ok = u8::from(chemistry::<f32>().is_some())
        + u8::from(dosing::<f32>().is_some())
        + u8::from(titrations::<f32>().is_some())
        + u8::from(chemistry::<f64>().is_some())
        + u8::from(dosing::<f64>().is_some())
        + u8::from(titrations::<f64>().is_some())
        + u8::from(control_law::<f32>().is_some())
        + u8::from(control_law::<f64>().is_some())
        + u8::from(probes::<f32>().is_some())
        + u8::from(probes::<f64>().is_some())
        + u8::from(controller::<f32>().is_some());
    black_box(ok);
    loop {
        cortex_m::asm::nop();
    }
}
