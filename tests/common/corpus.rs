//! The seeded solver corpus, shared by `benches/corpus.rs` (time and counts) and
//! `tests/solver_counts.rs` (the counts as assertions): 1,000 mixtures of 1–4 catalogue systems
//! (totals 0.1–10 mmol/L, log-uniform), a strong-ion excess of ±(0–5) meq/L, 5–60 °C, kept only
//! when the Davies ionic strength is at most 0.1 mol/L; the warm case re-solves each after
//! scaling its strong-ion excess and its first system's total by a factor within ±1 %. Seeded
//! (splitmix64), so every run and machine sees the same corpus.
#![allow(dead_code, clippy::unwrap_used, clippy::cast_precision_loss, clippy::cast_possible_truncation)]

use phdose::Real;
use phdose::chem::catalogue::ALL;
use phdose::chem::{Activity, Equilibrium, Solution};
use phdose::units::Celsius;

/// Mixtures in the corpus.
pub const MIXTURES: usize = 1000;
/// Capacity of every solution (four systems).
pub const N: usize = 4;

/// splitmix64: a small, well-known seeded generator (Steele, Lea & Flood 2014).
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }

    pub fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// One mixture of the corpus, in f64 numbers (built in either precision).
#[derive(Clone)]
pub struct Mixture {
    /// Temperature, °C.
    pub celsius: f64,
    /// (catalogue index, total mol/L).
    pub systems: Vec<(usize, f64)>,
    /// Strong-ion excess, eq/L.
    pub strong_eq_per_l: f64,
}

impl Mixture {
    pub fn build<R: Real>(&self, activity: Activity, scale: f64) -> Solution<R, N> {
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

pub fn corpus() -> Vec<Mixture> {
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
pub fn nudge(k: usize) -> f64 {
    1.0 + 0.01 * ((k as f64 * 0.618_034) % 1.0 * 2.0 - 1.0)
}

/// (mean, worst) iterations: cold, and warm after the nudge.
pub fn counts<R: Real>(corpus: &[Mixture], activity: Activity) -> ((f64, u32), (f64, u32)) {
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
