//! Prints the iteration counts behind the `solver` benchmark cases (same waters, same nudge),
//! as a markdown table: guarded Newton cold and warm against plain bisection. Run with
//! `cargo bench --bench iterations`.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{WATERS, Water, activity_name, bisection, bisection_warm, build, nudged};
use phdose::Real;
use phdose::chem::{Activity, bisection_iterations, max_ph_iterations};

fn row<R: Real, const N: usize>(real: &str, w: &Water, activity: Activity) {
    let base = build::<R, N>(w, activity);
    let previous = base.solve().expect("base water solves");
    let next = nudged(&base);
    let cold = next.solve().unwrap();
    let warm = next.solve_warm(&previous).unwrap();
    let bis_cold = next.solve_with(bisection()).unwrap();
    let bis_warm = next.solve_with(bisection_warm(&previous)).unwrap();
    println!(
        "| solve/{real}/{}/{} | {:.4} → {:.4} | {} | {} | {} | {} | {:.1e} |",
        activity_name(activity),
        w.label,
        previous.ph.to_f64(),
        cold.ph.to_f64(),
        cold.iterations,
        warm.iterations,
        bis_cold.iterations,
        bis_warm.iterations,
        (cold.ph.to_f64() - bis_cold.ph.to_f64()).abs(),
    );
}

fn table<R: Real>(real: &str) {
    for activity in [Activity::Ideal, Activity::Davies] {
        row::<R, 1>(real, WATERS[0], activity);
        row::<R, 4>(real, WATERS[1], activity);
        row::<R, 8>(real, WATERS[2], activity);
    }
}

fn main() {
    // `cargo bench` passes harness flags (e.g. `--bench`); this program takes none.
    println!("Waters:");
    for w in WATERS {
        println!("- {}: {}", w.label, w.description);
    }
    println!(
        "\nBounds per inner solve: f64 bisection {} / max {}; f32 bisection {} / max {}. Davies counts sum \
         the ionic-strength rounds (+1 for the first ionic-strength evaluation, spent by every start).\n",
        bisection_iterations::<f64>(),
        max_ph_iterations::<f64>(),
        bisection_iterations::<f32>(),
        max_ph_iterations::<f32>(),
    );
    println!(
        "| case | pH before → after nudge | Newton cold | Newton warm | bisection cold | bisection warm | abs. ΔpH Newton vs bisection |"
    );
    println!("|---|---|---|---|---|---|---|");
    table::<f64>("f64");
    table::<f32>("f32");
}
