//! Titration and dose models on top of [`crate::chem`]: streams and mixing, commercial reagents,
//! the inverse dose for a setpoint (feed-forward) with process gain and boot checks.

pub mod alkalinity;
pub mod curve;
pub mod dose;
pub mod fit;
pub mod reagent;
pub mod stream;

pub use curve::{CurvePoint, EquivalencePoint, Titration, inflections};
pub use dose::{DoseCheck, DoseError, DosePlan, DoseRequest, Pump, plan};
pub use stream::Stream;
