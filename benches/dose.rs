//! Dose and curve benchmarks: `titration::plan` (feed-forward dose for a setpoint, with and
//! without the pump/band checks) and a 64-point adaptive titration curve, `f64` and `f32`.
//!
//! The influent is the rinse water of a fictional plating shop (Kestrel Row Plating): bicarbonate
//! make-up water with sulfuric-acid drag-out and a little phosphate cleaner, 1200 L/h, 18 °C,
//! Davies activities; the reagent is 25 % caustic (7.96 mol/L).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use heapless::Vec;
use phdose::Real;
use phdose::chem::{Activity, Solution};
use phdose::titration::{CurvePoint, DoseRequest, Titration, plan};
use phdose::units::{Celsius, LitresPerHour, Ph};

fn influent<R: Real>() -> Solution<R, 6> {
    let mut s = Solution::new(Celsius::new(R::from_f64(18.0)).unwrap(), Activity::Davies);
    s.add_formula("NaHCO3", R::from_f64(0.001)).unwrap();
    s.add_formula("H2SO4", R::from_f64(0.0012)).unwrap();
    s.add_formula("Na2HPO4", R::from_f64(0.0002)).unwrap();
    s
}

fn caustic<R: Real>() -> Solution<R, 1> {
    let mut s = Solution::new(Celsius::new(R::from_f64(18.0)).unwrap(), Activity::Davies);
    s.add_formula("NaOH", R::from_f64(7.963)).unwrap();
    s
}

fn bench_real<R: Real>(c: &mut Criterion, real: &str) {
    let inf = influent::<R>();
    let reagent = caustic::<R>();
    let flow = LitresPerHour::new(R::from_f64(1200.0)).unwrap();
    let bare = DoseRequest::new(Ph::new(R::from_f64(7.0)).unwrap());
    let checked =
        DoseRequest::checked(R::from_f64(7.0), Some((R::from_f64(10.0), R::from_f64(0.001))), Some(R::from_f64(0.3)))
            .unwrap();
    // The checked request must pass its checks, or the bench would time the setpoint scan.
    assert!(plan(&inf, flow, &reagent, &checked).unwrap().all_clear());
    let mut g = c.benchmark_group(format!("dose/{real}"));
    g.bench_function("plan", |b| {
        b.iter(|| plan(black_box(&inf), flow, black_box(&reagent), black_box(&bare)).unwrap())
    });
    g.bench_function("plan_with_pump_checks", |b| {
        b.iter(|| plan(black_box(&inf), flow, black_box(&reagent), black_box(&checked)).unwrap())
    });
    g.finish();

    // Lab titration of 100 mL of the influent with 0.02 M NaOH up to 20 mL.
    let mut titrant: Solution<R, 1> = Solution::new(Celsius::new(R::from_f64(18.0)).unwrap(), Activity::Davies);
    titrant.add_formula("NaOH", R::from_f64(0.02)).unwrap();
    let t = Titration { sample: &inf, sample_volume_l: R::from_f64(0.1), titrant: &titrant };
    let mut g = c.benchmark_group(format!("curve/{real}"));
    g.bench_function("64_points", |b| {
        b.iter(|| {
            let mut out: Vec<CurvePoint<R>, 64> = Vec::new();
            t.curve(black_box(R::from_f64(0.02)), &mut out).unwrap();
            out
        })
    });
    g.finish();
}

fn benches(c: &mut Criterion) {
    bench_real::<f64>(c, "f64");
    bench_real::<f32>(c, "f32");
}

criterion_group!(dose, benches);
criterion_main!(dose);
