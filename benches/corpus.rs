//! The solver over a seeded corpus of random mixtures: evaluations (iterations) per solve and
//! time per solve, cold and warm after a ≤ 1 % change, ideal and Davies, f64 and f32.
//!
//! The corpus (`tests/common/corpus.rs`, shared with `tests/solver_counts.rs`, which asserts the
//! counts): 1,000 seeded mixtures of 1–4 catalogue systems, 5–60 °C, I ≤ 0.1 mol/L; the warm
//! case re-solves each after a change within ±1 %. `cargo bench --bench corpus` prints the counts as a markdown table,
//! then criterion's time per solve (one element = one solve).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use phdose::Real;
use phdose::chem::{Activity, Equilibrium, Solution};

#[path = "../tests/common/corpus.rs"]
mod corpus;
use corpus::{Mixture, N, corpus, counts, nudge};

fn bench_real<R: Real>(c: &mut Criterion, real: &str, corpus: &[Mixture]) {
    for activity in [Activity::Ideal, Activity::Davies] {
        let name = if activity == Activity::Ideal { "ideal" } else { "davies" };
        let solutions: Vec<Solution<R, N>> =
            corpus.iter().enumerate().map(|(k, m)| m.build::<R>(activity, nudge(k))).collect();
        let previous: Vec<Equilibrium<R>> =
            corpus.iter().map(|m| m.build::<R>(activity, 1.0).solve().unwrap()).collect();
        let mut g = c.benchmark_group(format!("corpus/{real}/{name}"));
        g.throughput(Throughput::Elements(corpus.len() as u64));
        g.sample_size(20);
        g.bench_function("cold", |b| {
            b.iter(|| {
                for s in &solutions {
                    black_box(s.solve().unwrap());
                }
            });
        });
        g.bench_function("warm", |b| {
            b.iter(|| {
                for (s, p) in solutions.iter().zip(&previous) {
                    black_box(s.solve_warm(p).unwrap());
                }
            });
        });
        g.finish();
    }
}

fn corpus_bench(c: &mut Criterion) {
    let corpus = corpus();
    println!("\nIterations per solve over {} seeded mixtures (mean / worst):\n", corpus.len());
    println!("| real | activity | cold | warm after ≤ 1 % |");
    println!("|---|---|---|---|");
    for activity in [Activity::Ideal, Activity::Davies] {
        let name = if activity == Activity::Ideal { "ideal" } else { "Davies" };
        let ((cm, cw), (wm, ww)) = counts::<f64>(&corpus, activity);
        println!("| f64 | {name} | {cm:.2} / {cw} | {wm:.2} / {ww} |");
        let ((cm, cw), (wm, ww)) = counts::<f32>(&corpus, activity);
        println!("| f32 | {name} | {cm:.2} / {cw} | {wm:.2} / {ww} |");
    }
    println!();
    bench_real::<f64>(c, "f64", &corpus);
    bench_real::<f32>(c, "f32", &corpus);
}

criterion_group!(benches, corpus_bench);
criterion_main!(benches);
