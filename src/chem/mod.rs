//! Acid–base chemistry: water, systems, catalogue, substances, solutions, the pH solver,
//! activity corrections and salt hydrolysis. The bedrock layer: imports nothing above it.

pub mod activity;
pub mod catalogue;
mod quick;
pub mod salt;
pub mod solution;
pub mod solve;
pub mod substance;
pub mod system;
pub mod water;

pub use activity::{Activity, DAVIES_MAX_IONIC_STRENGTH};
pub use quick::QUICK_ITERATIONS;
pub use solution::{Component, CompositionError, MAX_SYSTEMS, MAX_TOTAL_MOL_PER_L, Solution};
pub use solve::{
    Equilibrium, MAX_ACTIVITY_ITERATIONS, PH_MAX, PH_MIN, SolveError, SolverOptions, Speciation, bisection_iterations,
    max_ph_iterations, max_solve_evaluations,
};
pub use substance::{Substance, UnknownSubstance};
pub use system::{AcidBaseSystem, LogK, MAX_STEPS};
