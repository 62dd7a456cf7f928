//! Whole runs of the simulator with the real controller in the loop.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose_sim::run::{Loop, run};
use phdose_sim::scenario::plating_rinse;

#[test]
fn the_built_in_scenario_runs_without_trips() {
    let s = plating_rinse();
    let wall = std::time::Instant::now();
    let t = run(&s, Loop::Configured, None).unwrap();
    let secs = wall.elapsed().as_secs_f64();
    println!(
        "IAE {:.1} pH·s, in band {:.3}, max |e| {:.3}, caustic {:.3} L, trips {:?}, {} steps, {:.0}x real time",
        t.iae_ph_s,
        t.in_band_s / t.simulated_s,
        t.max_abs_error_ph,
        t.reagent_l[0],
        t.trips,
        t.steps,
        t.simulated_s / secs
    );
    assert!(t.trips.is_empty(), "{:?}", t.trips);
}
