//! Times pH solves over the seeded corpus of `tests/common/corpus.rs` (1,000 mixtures of 1–4
//! catalogue systems, 5–60 °C, I ≤ 0.1 mol/L) and prints nanoseconds per solve; `counts` prints the
//! evaluations per solve instead. Criterion's `cargo bench --bench corpus` gives the figures README
//! reports; this driver is for what criterion is slow at:
//!
//! - interleaved before/after runs: build it twice, once as it is and once with `phdose`'s path
//!   pointing at a second checkout (`git worktree add /tmp/before REV`), then alternate the two
//!   binaries a few times and compare medians (`tools/solve-timing/ab.sh` does that);
//! - profiling: `perf record -e cpu-clock target/release/phdose-solve-timing davies warm 2000`;
//! - instruction counts: `valgrind --tool=callgrind` with a small repeat count.
//!
//! Usage: `phdose-solve-timing ideal|davies cold|warm REPEATS [f32]` or `phdose-solve-timing counts`.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::cast_precision_loss)]

#[path = "../../../tests/common/corpus.rs"]
mod corpus;

use std::hint::black_box;

use phdose::Real;
use phdose::chem::{Activity, Equilibrium, Solution};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("counts") {
        let c = corpus::corpus();
        for a in [Activity::Ideal, Activity::Davies] {
            let ((cm, cw), (wm, ww)) = corpus::counts::<f64>(&c, a);
            println!("{a:?} f64: cold {cm:.2} / {cw}, warm {wm:.2} / {ww} (mean / worst evaluations)");
        }
        return;
    }
    if args.len() < 4 {
        eprintln!("usage: phdose-solve-timing ideal|davies cold|warm REPEATS [f32] | counts");
        std::process::exit(2);
    }
    if args.get(4).map(String::as_str) == Some("f32") { run::<f32>(&args) } else { run::<f64>(&args) }
}

fn run<R: Real>(args: &[String]) {
    let activity = if args[1] == "davies" { Activity::Davies } else { Activity::Ideal };
    let warm = args[2] == "warm";
    let repeats: usize = args[3].parse().expect("REPEATS is a count");
    let c = corpus::corpus();
    let solutions: Vec<Solution<R, { corpus::N }>> =
        c.iter().enumerate().map(|(k, m)| m.build::<R>(activity, corpus::nudge(k))).collect();
    let previous: Vec<Equilibrium<R>> = c.iter().map(|m| m.build::<R>(activity, 1.0).solve().unwrap()).collect();
    let start = std::time::Instant::now();
    for _ in 0..repeats {
        for (s, p) in solutions.iter().zip(&previous) {
            if warm {
                black_box(s.solve_warm(p).unwrap());
            } else {
                black_box(s.solve().unwrap());
            }
        }
    }
    let ns = start.elapsed().as_nanos() as f64 / (repeats * solutions.len()) as f64;
    println!("{ns:.1} ns/solve");
}
