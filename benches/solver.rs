//! pH solver benchmarks: guarded Newton (cold and warm start) against plain bisection, for
//! 1, 4 and 8 acid–base systems, ideal and Davies activities, `f64` and `f32`.
//!
//! Ids are `solve/<real>/<activity>/<N>sys/<mode>`, mode one of `cold` (default solver from
//! pH 7), `warm` (`solve_warm` from the previous cycle's equilibrium, the strong charge having
//! changed by 1 %), `bisect_cold` and `bisect_warm` (plain bisection to the same tolerance; the
//! warm variant only gets the previous ionic strength, bisection has no use for a start pH).
//! All four solve the same (nudged) composition. `cargo bench --bench iterations` prints the
//! iteration counts of the same cases.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use std::hint::black_box;

use common::{Water, activity_name, bisection, bisection_warm, build, nudged};
use criterion::{Criterion, criterion_group, criterion_main};
use phdose::Real;
use phdose::chem::Activity;

fn bench_water<R: Real, const N: usize>(c: &mut Criterion, real: &str, w: &Water, activity: Activity) {
    let base = build::<R, N>(w, activity);
    let previous = base.solve().expect("base water solves");
    let next = nudged(&base);
    let mut g = c.benchmark_group(format!("solve/{real}/{}/{}", activity_name(activity), w.label));
    g.bench_function("cold", |b| b.iter(|| black_box(&next).solve().unwrap()));
    g.bench_function("warm", |b| b.iter(|| black_box(&next).solve_warm(black_box(&previous)).unwrap()));
    g.bench_function("bisect_cold", |b| b.iter(|| black_box(&next).solve_with(black_box(bisection())).unwrap()));
    g.bench_function("bisect_warm", |b| {
        b.iter(|| black_box(&next).solve_with(black_box(bisection_warm(&previous))).unwrap())
    });
    g.finish();
}

fn bench_real<R: Real>(c: &mut Criterion, real: &str) {
    for activity in [Activity::Ideal, Activity::Davies] {
        bench_water::<R, 1>(c, real, &common::PLATING_RINSE, activity);
        bench_water::<R, 4>(c, real, &common::ANODISER_RETURN, activity);
        bench_water::<R, 8>(c, real, &common::ESTATE_EFFLUENT, activity);
    }
}

fn solver(c: &mut Criterion) {
    bench_real::<f64>(c, "f64");
    bench_real::<f32>(c, "f32");
}

criterion_group!(benches, solver);
criterion_main!(benches);
