//! The controller that runs every tick, above [`crate::titration`].
//!
//! The control law: the chemistry it runs on and the cached feed-forward ([`feedforward`]), the
//! flow-mapped PI trim ([`feedback`]), the tank model with adaptation and model residual
//! ([`adapt`]), and one tick of all of them with the split range between caustic and acid
//! ([`regulator`]); the pump outputs in the pumps' own units ([`pump`]), the dose bookkeeping
//! for the overdose guard ([`ledger`]) and the supervisor with its interlocks ([`supervisor`]);
//! [`controller`] runs all of them, with the probes, in one `step` per tick.

pub mod adapt;
pub mod controller;
pub mod feedback;
pub mod feedforward;
pub mod ledger;
pub mod pump;
pub mod regulator;
pub mod supervisor;

/// `true` when `x` is a number above zero (false for NaN): `!positive(x)` rejects NaN too.
pub(crate) fn positive<R: crate::real::Real>(x: R) -> bool {
    x > R::ZERO
}
