//! **phdose** — fixed-memory acid–base chemistry for pH dosing controllers.
//!
//! Everything here is `no_std`, allocates nothing, contains no `unsafe` and does not panic:
//! capacities are const generics, every fallible call returns a typed error, and every loop has
//! a documented worst-case iteration count. The same code runs in `f32` (MCU with an FPU) and
//! `f64` (host). This code can end up putting acid or caustic into a tank: read [`safety`]
//! (the repository's SAFETY.md) before you wire it to a pump.
//!
//! ```
//! use phdose::chem::{Activity, Solution};
//! use phdose::units::Celsius;
//!
//! // Rinse water: 2 mmol/L bicarbonate alkalinity, 1 mmol/L hydrochloric acid, 18 °C.
//! let mut rinse: Solution<f32, 4> = Solution::new(Celsius::new(18.0).unwrap(), Activity::Davies);
//! rinse.add_formula("NaHCO3", 0.002).unwrap();
//! rinse.add_formula("HCl", 0.001).unwrap();
//! let eq = rinse.solve().unwrap();
//! assert!(eq.ph > 6.0 && eq.ph < 6.6);
//! // The next control cycle starts from the last answer and needs one or two iterations.
//! let again = rinse.solve_warm(&eq).unwrap();
//! assert!(again.iterations <= 2);
//! ```
//!
//! # Layers (lower never imports higher)
//! - [`real`]: the `f32`/`f64` abstraction.
//! - [`units`]: checked unit newtypes.
//! - [`chem`]: water, acid–base systems, catalogue, substances, solution, solver, salt hydrolysis.
//! - [`titration`]: streams, reagents, dose for a setpoint, process gain, boot checks.
//! - [`probe`]: the pH probe: Nernst slope, buffer table, calibration and acceptance, temperature
//!   compensation, signal validation, the vote between two or three probes (imports only `real`
//!   and `units`; `control` may import it, never the reverse).
//! - [`control`]: the per-tick control law: feed-forward, flow-mapped PI, adaptation, residual.
//!
//! MSRV: Rust 1.95.
#![no_std]
#![forbid(unsafe_code)]
#![deny(missing_docs)]
#![cfg_attr(docsrs, feature(doc_cfg))]
#![cfg_attr(test, allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic))]

#[cfg(test)]
extern crate std;

pub mod chem;
pub mod config;
pub mod control;
mod invariant;
pub mod probe;
pub mod real;
pub mod titration;
pub mod units;

/// The repository's SAFETY.md, included so that the crate documentation carries it.
pub mod safety {
    #![doc = include_str!("../SAFETY.md")]
}

pub use real::Real;

/// The README's Rust examples, compiled and run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
pub struct ReadmeDoctests;
