//! Charge-balance evaluations per pH solve, as assertions: over the seeded corpus of
//! `tests/common/corpus.rs` (1,000 mixtures of 1–4 catalogue systems, 5–60 °C, I ≤ 0.1 mol/L),
//! cold and warm after a change within ±1 %, f64 and f32, ideal and Davies; and over random
//! mixtures of up to eight catalogue systems (proptest) in the same range.
//!
//! The bounds are the solver's goals: cold, a mean of at most 5 evaluations and a worst of 10
//! in Davies mode, 4 and 8 ideal; warm, a mean of at most 3 in Davies mode and 2 ideal.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

#[path = "common/corpus.rs"]
mod corpus;

use corpus::{corpus, counts};
use phdose::Real;
use phdose::chem::{Activity, Solution, catalogue};
use phdose::units::Celsius;
use proptest::prelude::*;

/// (cold mean, cold worst, warm mean, warm worst) allowed.
struct Bounds {
    cold_mean: f64,
    cold_worst: u32,
    warm_mean: f64,
    warm_worst: u32,
}

const DAVIES: Bounds = Bounds { cold_mean: 5.0, cold_worst: 10, warm_mean: 3.0, warm_worst: 4 };
const IDEAL: Bounds = Bounds { cold_mean: 4.0, cold_worst: 8, warm_mean: 2.0, warm_worst: 4 };

fn check<R: Real>(activity: Activity, bounds: &Bounds, warm_mean: f64) {
    let corpus = corpus();
    let ((cold_mean, cold_worst), (w_mean, w_worst)) = counts::<R>(&corpus, activity);
    println!(
        "{} {activity:?}: cold {cold_mean:.2} / {cold_worst}, warm {w_mean:.2} / {w_worst} (over {} mixtures)",
        R::NAME,
        corpus.len()
    );
    assert!(cold_mean <= bounds.cold_mean, "{} {activity:?} cold mean {cold_mean}", R::NAME);
    assert!(cold_worst <= bounds.cold_worst, "{} {activity:?} cold worst {cold_worst}", R::NAME);
    assert!(w_mean <= warm_mean, "{} {activity:?} warm mean {w_mean}", R::NAME);
    assert!(w_worst <= bounds.warm_worst, "{} {activity:?} warm worst {w_worst}", R::NAME);
}

/// micromath's exp/ln (`fast-math`) are approximations with a noisy derivative: the f32
/// counts are not the goal's there (measured and reported separately).
const FAST_MATH: bool = cfg!(feature = "fast-math");

#[test]
fn f64_davies_over_the_corpus() {
    check::<f64>(Activity::Davies, &DAVIES, DAVIES.warm_mean);
}

#[test]
fn f64_ideal_over_the_corpus() {
    check::<f64>(Activity::Ideal, &IDEAL, IDEAL.warm_mean);
}

#[test]
fn f32_davies_over_the_corpus() {
    if !FAST_MATH {
        check::<f32>(Activity::Davies, &DAVIES, DAVIES.warm_mean);
    }
}

#[test]
fn f32_ideal_over_the_corpus() {
    if !FAST_MATH {
        check::<f32>(Activity::Ideal, &IDEAL, IDEAL.warm_mean);
    }
}

/// The steps a solve takes without confirming them (ideal: up to 1e-3 pH Householder or 1e-7
/// Newton; Davies: up to 1e-6 pH and Davies factor together, Newton on both) leave an error of
/// the order of the step's fourth power or square. Measured here: every answer over the corpus
/// (f64, cold and warm, both activity modes) is re-solved from itself; the move is the answer's
/// error to first order and must stay a hundred times below the 1e-10 pH tolerance. (At a
/// Davies allowance of 1e-5 pH the move reached 2.5e-11 and this fails; 1e-6 gives 5e-13.)
#[test]
fn unconfirmed_final_steps_stay_far_below_the_tolerance() {
    let mixtures = corpus();
    for activity in [Activity::Ideal, Activity::Davies] {
        let mut worst = 0.0_f64;
        for (k, m) in mixtures.iter().enumerate() {
            let s = m.build::<f64>(activity, corpus::nudge(k));
            let previous = m.build::<f64>(activity, 1.0).solve().unwrap();
            for answer in [s.solve().unwrap(), s.solve_warm(&previous).unwrap()] {
                let again = s.solve_warm(&answer).unwrap();
                worst = worst.max((again.ph - answer.ph).abs());
            }
        }
        println!("{activity:?}: largest move of a re-solved answer {worst:.2e} pH");
        assert!(worst <= 1e-12, "{activity:?}: {worst:e}");
    }
}

/// A random mixture in the catalogue's range: up to eight systems of 0.01–10 mmol/L each, a
/// strong-ion excess of ±(0–10) meq/L, 5–60 °C.
fn mixture() -> impl Strategy<Value = (Vec<(usize, f64)>, f64, f64)> {
    (
        proptest::sample::subsequence((0..catalogue::ALL.len()).collect::<Vec<_>>(), 1..=8),
        proptest::collection::vec(-5.0..=-2.0_f64, 8),
        -0.01..=0.01_f64,
        5.0..=60.0_f64,
    )
        .prop_map(|(indices, logs, strong, celsius)| {
            (indices.into_iter().zip(logs).map(|(i, l)| (i, 10f64.powf(l))).collect(), strong, celsius)
        })
}

fn build<R: Real>(systems: &[(usize, f64)], strong: f64, celsius: f64, activity: Activity) -> Solution<R, 8> {
    let mut s = Solution::new(Celsius::new(R::from_f64(celsius)).unwrap(), activity);
    for &(i, total) in systems {
        s.add_system(catalogue::ALL[i], R::from_f64(total)).unwrap();
    }
    if strong >= 0.0 {
        s.add_strong_ion(1, R::from_f64(strong)).unwrap();
    } else {
        s.add_strong_ion(-1, R::from_f64(-strong)).unwrap();
    }
    s
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2048, ..ProptestConfig::default() })]

    /// The cold worst cases hold for every mixture in range, not only the corpus's.
    #[test]
    fn cold_solves_stay_within_the_worst_case_goals((systems, strong, celsius) in mixture()) {
        for activity in [Activity::Ideal, Activity::Davies] {
            let bound = if activity == Activity::Davies { DAVIES.cold_worst } else { IDEAL.cold_worst };
            let s = build::<f64>(&systems, strong, celsius, activity);
            let e = s.solve().unwrap();
            // The range of the goal: I ≤ 0.1 mol/L.
            if e.ionic_strength_mol_per_l > 0.1 {
                continue;
            }
            prop_assert!(e.iterations <= bound, "f64 {activity:?}: {} evaluations", e.iterations);
            // The unconfirmed last step's error stays ten times below the tolerance here too
            // (1e-12 over the corpus, see above).
            let again = s.solve_warm(&e).unwrap();
            prop_assert!((again.ph - e.ph).abs() <= 1e-11, "f64 {activity:?}: re-solve moved {:e}", again.ph - e.ph);
            if !FAST_MATH {
                let e32 = build::<f32>(&systems, strong, celsius, activity).solve().unwrap();
                prop_assert!(e32.iterations <= bound, "f32 {activity:?}: {} evaluations", e32.iterations);
            }
        }
    }
}
