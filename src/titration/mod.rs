//! Titration and dose models on top of [`crate::chem`]: streams and mixing ([`stream`]),
//! commercial reagents ([`reagent`]), titration curves and equivalence points ([`curve`]), the
//! dose for a setpoint with process gain and boot checks ([`dose`]) and their remedies
//! ([`remedy`]), alkalinity ([`alkalinity`]), influent characterisation by Levenberg–Marquardt
//! ([`fit`]), stage advice ([`stages`]) and the hazards no pH check sees: gas release, reagent
//! crystallisation ([`hazard`]), and the worst case of a stuck pump: the pH the tank heads to and
//! the time to cross each hard limit ([`worst`]).

pub mod alkalinity;
pub mod curve;
pub mod dose;
pub mod fit;
pub mod hazard;
pub mod reagent;
pub mod remedy;
pub mod stages;
pub mod stream;
pub mod worst;

pub use curve::{CurvePoint, EquivalencePoint, Titration, inflections};
pub use dose::{DoseCheck, DoseError, DosePlan, DoseRequest, InBand, Pump, plan};
pub use stream::Stream;
