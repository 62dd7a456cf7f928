//! The simulator's speed: one run of the built-in scenario (8 simulated hours, 1 s plant step,
//! 5 s controller tick, the real `Controller::step` in f64) with the configured controller, and
//! one with the feedback-only baseline. `cargo bench -p phdose-sim --bench simulate`; the
//! speed ratio (simulated time / wall time) is printed before criterion's figures.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]

use std::hint::black_box;
use std::time::Instant;

use criterion::{Criterion, criterion_group, criterion_main};
use phdose_sim::baseline::tune;
use phdose_sim::run::{Loop, run};
use phdose_sim::scenario::plating_rinse;

fn simulate(c: &mut Criterion) {
    let s = plating_rinse();
    let baseline = tune(&s).unwrap().as_loop();
    // The ratio, from the median of a few plain runs (one core: a run is single-threaded).
    let mut walls: Vec<f64> = (0..7)
        .map(|_| {
            let t = Instant::now();
            black_box(run(&s, Loop::Configured, None).unwrap());
            t.elapsed().as_secs_f64()
        })
        .collect();
    walls.sort_by(f64::total_cmp);
    let median = walls[walls.len() / 2];
    println!(
        "built-in scenario: {:.0} s simulated in {:.3} s of wall time (median of 7): {:.0}x real time",
        s.run.duration_s,
        median,
        s.run.duration_s / median
    );
    let mut g = c.benchmark_group("simulate_8h_plating_rinse");
    g.sample_size(10);
    g.bench_function("configured", |b| b.iter(|| run(black_box(&s), Loop::Configured, None).unwrap()));
    g.bench_function("baseline", |b| b.iter(|| run(black_box(&s), baseline, None).unwrap()));
    g.finish();
}

criterion_group!(benches, simulate);
criterion_main!(benches);
