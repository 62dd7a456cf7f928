//! `Controller::step` benchmarks on the built-in example skid (the rinse-water tank of a
//! fictional plating shop), f32 and f64:
//! - **steady**: a tick whose inputs stay inside the feed-forward's dead bands (no recompute):
//!   three probe ticks, the vote, the supervisor, the control law's six charge-balance
//!   evaluations and one warm pH solve, the pump outputs and the ledgers;
//! - **recompute**: a tick whose influent flow alternates by 10 % (beyond the 2 % dead band), so
//!   every tick also recomputes the feed-forward (one dose plan).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use phdose::Real;
use phdose::config::build::{self, MODEL_SYSTEMS};
use phdose::config::example;
use phdose::control::controller::{Controller, TickInputs};
use phdose::control::feedforward::ReagentSide;
use phdose::control::supervisor::{ModeRequest, State};
use phdose::units::Celsius;

/// A controller running at pH 7 with the tank steady, and the inputs of a steady tick.
fn running<R: Real>() -> (Controller<R, MODEL_SYSTEMS>, TickInputs<R>) {
    let skid = example::plating_rinse();
    let (mut c, report) = build::controller::<R>(&skid).unwrap();
    assert!(report.allowed());
    let t = Celsius::new(R::from_f64(18.0)).unwrap();
    let mv: Vec<R> =
        skid.probes.probes.iter().map(|p| build::calibration::<R>(p).unwrap().mv(R::from_f64(7.0), t)).collect();
    let inputs = TickInputs {
        dt_s: R::from_f64(5.0),
        probe_mv: [mv[0], mv[1], R::from_f64(f64::NAN)],
        temperature_c: R::from_f64(18.0),
        influent_flow_l_per_h: Some(R::from_f64(1200.0)),
        flow_switch: true,
        reagent_low: [false; 2],
        reset: false,
        mode: ModeRequest::Auto,
        manual: (ReagentSide::Caustic, R::ZERO),
    };
    for k in 0..200_u32 {
        let mut i = inputs;
        // ±0.2 mV of electrode noise keeps the frozen-signal check quiet.
        let d = R::from_f64(if k.is_multiple_of(2) { 0.2 } else { -0.2 });
        i.probe_mv = [i.probe_mv[0] + d, i.probe_mv[1] + d, i.probe_mv[2]];
        c.step(&i);
    }
    assert_eq!(c.state(), State::Auto);
    (c, inputs)
}

fn bench_real<R: Real>(crit: &mut Criterion, name: &str) {
    let mut g = crit.benchmark_group(format!("controller/{name}"));
    let (mut c, inputs) = running::<R>();
    let mut k = 0_u32;
    // What each benchmark times, checked once outside the timing (debug assertions are off in
    // the bench profile).
    let mut probe = c.clone();
    assert!(!probe.step(&inputs).law.feed_forward_recomputed, "the steady tick must not recompute");
    let mut other = inputs;
    other.influent_flow_l_per_h = Some(R::from_f64(1320.0));
    assert!(probe.step(&other).law.feed_forward_recomputed, "a 10 % flow change must recompute");
    g.bench_function("steady step", |b| {
        b.iter(|| {
            k = k.wrapping_add(1);
            let mut i = inputs;
            let d = R::from_f64(if k.is_multiple_of(2) { 0.2 } else { -0.2 });
            i.probe_mv = [i.probe_mv[0] + d, i.probe_mv[1] + d, i.probe_mv[2]];
            c.step(black_box(&i))
        })
    });
    let (mut c, inputs) = running::<R>();
    g.bench_function("step with feed-forward recompute", |b| {
        b.iter(|| {
            k = k.wrapping_add(1);
            let mut i = inputs;
            let d = R::from_f64(if k.is_multiple_of(2) { 0.2 } else { -0.2 });
            i.probe_mv = [i.probe_mv[0] + d, i.probe_mv[1] + d, i.probe_mv[2]];
            i.influent_flow_l_per_h = Some(R::from_f64(if k.is_multiple_of(2) { 1200.0 } else { 1320.0 }));
            c.step(black_box(&i))
        })
    });
    g.finish();
}

fn benches(c: &mut Criterion) {
    bench_real::<f32>(c, "f32");
    bench_real::<f64>(c, "f64");
}

criterion_group!(controller, benches);
criterion_main!(controller);
