//! The solver over a seeded corpus of random mixtures: evaluations (iterations) per solve and
//! time per solve, cold and warm after a ≤ 1 % change, ideal and Davies, f64 and f32.
//!
//! The corpus: 1,000 mixtures of 1–4 catalogue systems (totals 0.1–10 mmol/L, log-uniform),
//! a strong-ion excess of ±(0–5) meq/L, 5–60 °C, kept only when the Davies ionic strength is at
//! most 0.1 mol/L; the warm case re-solves each after scaling its strong-ion excess and its
//! first system's total by a factor within ±1 %. Seeded (splitmix64), so every run and machine
//! sees the same corpus. `cargo bench --bench corpus` prints the counts as a markdown table,
//! then criterion's time per solve (one element = one solve).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use phdose::Real;
use phdose::chem::catalogue::ALL;
use phdose::chem::{Activity, Equilibrium, Solution};
use phdose::units::Celsius;

/// Mixtures in the corpus.
const MIXTURES: usize = 1000;
/// Capacity of every solution (four systems).
const N: usize = 4;

/// splitmix64: a small, well-known seeded generator (Steele, Lea & Flood 2014).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }

    fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// One mixture of the corpus, in f64 numbers (built in either precision).
#[derive(Clone)]
struct Mixture {
    celsius: f64,
    systems: Vec<(usize, f64)>,
    strong_eq_per_l: f64,
}

impl Mixture {
    fn build<R: Real>(&self, activity: Activity, scale: f64) -> Solution<R, N> {
        let mut s = Solution::new(Celsius::new(R::from_f64(self.celsius)).unwrap(), activity);
        for (k, (system, total)) in self.systems.iter().enumerate() {
            let t = if k == 0 { total * scale } else { *total };
            s.add_system(ALL[*system], R::from_f64(t)).unwrap();
        }
        let q = self.strong_eq_per_l * scale;
        if q >= 0.0 {
            s.add_strong_ion(1, R::from_f64(q)).unwrap();
        } else {
            s.add_strong_ion(-1, R::from_f64(-q)).unwrap();
        }
        s
    }
}

fn corpus() -> Vec<Mixture> {
    let mut rng = Rng(0x5EED_CAFE_F00D_0001);
    let mut out = Vec::with_capacity(MIXTURES);
    while out.len() < MIXTURES {
        let n = 1 + (rng.next() % 4) as usize;
        let mut systems = Vec::with_capacity(n);
        while systems.len() < n {
            let k = (rng.next() % ALL.len() as u64) as usize;
            if systems.iter().all(|(s, _)| *s != k) {
                systems.push((k, 10f64.powf(rng.uniform(-4.0, -2.0))));
            }
        }
        let m = Mixture { celsius: rng.uniform(5.0, 60.0), systems, strong_eq_per_l: rng.uniform(-0.005, 0.005) };
        let fits = m.build::<f64>(Activity::Davies, 1.0).solve().is_ok_and(|e| e.ionic_strength_mol_per_l <= 0.1);
        if fits {
            out.push(m);
        }
    }
    out
}

/// The change for the warm case: a factor within ±1 %.
fn nudge(k: usize) -> f64 {
    1.0 + 0.01 * ((k as f64 * 0.618_034) % 1.0 * 2.0 - 1.0)
}

/// (mean, worst) iterations: cold, and warm after the nudge.
fn counts<R: Real>(corpus: &[Mixture], activity: Activity) -> ((f64, u32), (f64, u32)) {
    let (mut cold_sum, mut cold_max, mut warm_sum, mut warm_max) = (0u64, 0u32, 0u64, 0u32);
    for (k, m) in corpus.iter().enumerate() {
        let base = m.build::<R>(activity, 1.0);
        let previous: Equilibrium<R> = base.solve().unwrap();
        let next = m.build::<R>(activity, nudge(k));
        let cold = next.solve().unwrap();
        let warm = next.solve_warm(&previous).unwrap();
        cold_sum += u64::from(cold.iterations);
        cold_max = cold_max.max(cold.iterations);
        warm_sum += u64::from(warm.iterations);
        warm_max = warm_max.max(warm.iterations);
    }
    let n = corpus.len() as f64;
    ((cold_sum as f64 / n, cold_max), (warm_sum as f64 / n, warm_max))
}

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
