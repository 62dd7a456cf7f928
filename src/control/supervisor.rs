//! The supervisor: decides every tick whether dosing may run, and latches the reason when it
//! may not.
//!
//! # States and transitions
//!
//! ```text
//!            boot report refuses                    any trip condition (latched, pumps off)
//!  Starting ───────────────────► Refused     Idle / Auto / Manual ─────────────────────────► Tripped
//!     │  boot report allows (first tick)      ▲                                               │
//!     └──────────────────────────► Idle ◄─────┼──── reset input, every cause cleared ◄───────┘
//!                                  │  ▲       │
//!      mode request Auto / Manual  ▼  │ mode request Off
//!                               Auto ⇄ Manual (mode request; bumpless in the control law)
//! ```
//!
//! - **Starting**: before the first tick; the boot report decides between Idle and Refused.
//! - **Refused**: the configuration failed its boot checks. Nothing doses; no input leaves this
//!   state (a new configuration means a restart).
//! - **Idle**: ready, not dosing (the operator's mode is Off). Trips are still watched, except
//!   no-flow: a stopped line is normal when nothing doses.
//! - **Auto** / **Manual**: dosing, closed loop or at the operator's flow.
//! - **Tripped**: a trip condition was seen; pumps off, the dosing-enable relay open, the reason
//!   latched with its numbers. Only a reset input leaves it, and only when no trip condition
//!   holds any more (a reset while the cause persists is ignored and the trip stays).
//!
//! Every trip reason has a stable numeric code ([`TripReason::code`]); codes are never reused.
//! When several conditions hold at once, the root cause is latched ([`TripReason::PRIORITY`]).
//!
//! **Model mismatch** can only be observed while dosing (it compares the measured pH with the
//! model's for the dose delivered): once tripped, nothing is delivered and measurement and
//! model agree again, so the reset is the operator's acknowledgement. Dosing restarts with the
//! mismatch timer at zero and trips again after the trip time if the cause persists.

/// Why dosing was stopped. The numeric codes are stable (see [`TripReason::code`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum TripReason {
    /// No influent flow while dosing (flow switch open, or measured flow below the minimum).
    NoFlow,
    /// The tank pH is above the high hard limit.
    PhHigh,
    /// The tank pH is below the low hard limit.
    PhLow,
    /// No probe gives a trustworthy pH (out of range, frozen, too fast, too noisy).
    ProbeFault,
    /// The probes disagree by more than the allowed spread.
    ProbeDisagreement,
    /// A pump delivered more than its limit within the last hour.
    OverdoseHour,
    /// A pump delivered more than its limit within the last day.
    OverdoseDay,
    /// The inputs are stale: the time since the last tick exceeds the watchdog limit (or is
    /// not a positive number).
    StaleInputs,
    /// A reagent tank's low-level switch is active.
    ReagentLow,
    /// The measured pH and the model disagree beyond the trip bound for the trip time (a
    /// stuck pump, a siphoning line or a wrong reagent).
    ModelMismatch,
    /// The configuration failed its boot checks.
    ConfigInvalid,
    /// The pH runs away on the side only a pump pushes it, with that pump off for longer than
    /// the runaway time and the pH still moving away: a pump delivering without being told
    /// (stuck, siphoning), or an influent the skid cannot correct. Independent of the model.
    Runaway,
}

impl TripReason {
    /// The order in which a reason is latched when several hold at once: root causes first
    /// (stale inputs and broken probes make the other conditions meaningless), then the
    /// process conditions.
    pub const PRIORITY: [Self; 12] = [
        Self::ConfigInvalid,
        Self::StaleInputs,
        Self::ProbeFault,
        Self::ProbeDisagreement,
        Self::NoFlow,
        Self::ReagentLow,
        Self::Runaway,
        Self::PhHigh,
        Self::PhLow,
        Self::OverdoseHour,
        Self::OverdoseDay,
        Self::ModelMismatch,
    ];

    /// Every reason, in code order.
    pub const ALL: [Self; 12] = [
        Self::NoFlow,
        Self::PhHigh,
        Self::PhLow,
        Self::ProbeFault,
        Self::ProbeDisagreement,
        Self::OverdoseHour,
        Self::OverdoseDay,
        Self::StaleInputs,
        Self::ReagentLow,
        Self::ModelMismatch,
        Self::ConfigInvalid,
        Self::Runaway,
    ];

    /// The stable numeric code (101–112), for displays, logs and the host tools.
    pub const fn code(self) -> u16 {
        match self {
            Self::NoFlow => 101,
            Self::PhHigh => 102,
            Self::PhLow => 103,
            Self::ProbeFault => 104,
            Self::ProbeDisagreement => 105,
            Self::OverdoseHour => 106,
            Self::OverdoseDay => 107,
            Self::StaleInputs => 108,
            Self::ReagentLow => 109,
            Self::ModelMismatch => 110,
            Self::ConfigInvalid => 111,
            Self::Runaway => 112,
        }
    }

    /// A short message (the numbers come with [`Trip`]).
    pub const fn message(self) -> &'static str {
        match self {
            Self::NoFlow => "no influent flow while dosing",
            Self::PhHigh => "pH above the high hard limit",
            Self::PhLow => "pH below the low hard limit",
            Self::ProbeFault => "no trustworthy pH probe",
            Self::ProbeDisagreement => "pH probes disagree",
            Self::OverdoseHour => "reagent dose in the last hour above its limit",
            Self::OverdoseDay => "reagent dose in the last day above its limit",
            Self::StaleInputs => "inputs stale (control tick too old)",
            Self::ReagentLow => "reagent tank low",
            Self::ModelMismatch => "measured pH and model disagree beyond the trip bound",
            Self::ConfigInvalid => "configuration failed its boot checks",
            Self::Runaway => "pH running away on a pump's side with that pump off (stuck or siphoning pump?)",
        }
    }
}

/// A latched trip: the reason, the value that tripped it and the limit it crossed (in the
/// reason's unit: pH, L/h, L, s; 0 where there is no number).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Trip {
    /// Why.
    pub reason: TripReason,
    /// The offending value.
    pub value: f64,
    /// The limit it crossed.
    pub limit: f64,
}

impl core::fmt::Display for Trip {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        use crate::units::Compact;
        write!(
            f,
            "trip {}: {} ({} against limit {})",
            self.reason.code(),
            self.reason.message(),
            Compact(self.value),
            Compact(self.limit)
        )
    }
}

/// The supervisor's state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum State {
    /// Before the first tick.
    Starting,
    /// Boot checks failed: never doses.
    Refused,
    /// Ready, not dosing.
    Idle,
    /// Dosing, closed loop.
    Auto,
    /// Dosing at the operator's flow.
    Manual,
    /// Stopped with a latched reason; needs a reset once the cause has cleared.
    Tripped,
}

impl State {
    /// `true` in the states where the pumps may run.
    pub const fn doses(self) -> bool {
        matches!(self, Self::Auto | Self::Manual)
    }

    /// A stable numeric code for displays and logs (0–5, in declaration order).
    pub const fn code(self) -> u8 {
        match self {
            Self::Starting => 0,
            Self::Refused => 1,
            Self::Idle => 2,
            Self::Auto => 3,
            Self::Manual => 4,
            Self::Tripped => 5,
        }
    }
}

/// What the operator asks for (a mode switch on the panel, or the host).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ModeRequest {
    /// Do not dose.
    Off,
    /// Closed loop.
    Auto,
    /// The operator's flow.
    Manual,
}

/// What the supervisor sees this tick: each trip condition, evaluated by the controller, as
/// `Some(trip)` when it holds.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Conditions {
    /// The conditions that hold now, one slot per reason in [`TripReason::ALL`] order; when
    /// several hold, the first in [`TripReason::PRIORITY`] order is latched.
    pub holding: [Option<Trip>; TripReason::ALL.len()],
}

impl Conditions {
    /// Records that `reason` holds with `value` against `limit`.
    pub fn set(&mut self, reason: TripReason, value: f64, limit: f64) {
        if let Some(slot) = TripReason::ALL.iter().position(|r| *r == reason).and_then(|i| self.holding.get_mut(i)) {
            *slot = Some(Trip { reason, value, limit });
        }
    }

    /// The condition to latch: the first that holds in [`TripReason::PRIORITY`] order,
    /// skipping `NoFlow` when `dosing` is false. At most 12 × 12 comparisons.
    pub fn first(&self, dosing: bool) -> Option<Trip> {
        TripReason::PRIORITY
            .iter()
            .filter(|r| dosing || **r != TripReason::NoFlow)
            .find_map(|r| self.holding.iter().flatten().find(|t| t.reason == *r).copied())
    }

    /// `true` when `reason` holds.
    pub fn holds(&self, reason: TripReason) -> bool {
        self.holding.iter().flatten().any(|t| t.reason == reason)
    }
}

/// The supervisor. Constant-time [`Supervisor::step`] (at most [`TripReason::ALL`].len()
/// condition checks).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Supervisor {
    state: State,
    latched: Option<Trip>,
}

impl Default for Supervisor {
    fn default() -> Self {
        Self::new()
    }
}

impl Supervisor {
    /// A supervisor in [`State::Starting`].
    pub const fn new() -> Self {
        Self { state: State::Starting, latched: None }
    }

    /// The state.
    pub const fn state(&self) -> State {
        self.state
    }

    /// The latched trip, while [`State::Tripped`] (or the boot refusal in [`State::Refused`]).
    pub const fn latched(&self) -> Option<Trip> {
        self.latched
    }

    /// One tick. `boot_allows` is the boot report's verdict (it matters only in
    /// [`State::Starting`]); `conditions` the trip conditions that hold now; `request` the
    /// operator's mode; `reset` the reset input (a level: reset is acted on while it is true).
    pub fn step(&mut self, boot_allows: bool, conditions: &Conditions, request: ModeRequest, reset: bool) -> State {
        match self.state {
            State::Starting => {
                // The first tick only decides between Idle and Refused: dosing starts no
                // earlier than the second tick, with the inputs of a running controller.
                if boot_allows {
                    self.state = State::Idle;
                    return self.state;
                } else {
                    self.state = State::Refused;
                    self.latched = Some(Trip { reason: TripReason::ConfigInvalid, value: 0.0, limit: 0.0 });
                    return self.state;
                }
            }
            State::Refused => return self.state,
            State::Tripped => {
                // Leave only on reset, and only when nothing (no-flow included) holds.
                if reset && conditions.first(true).is_none() {
                    self.latched = None;
                    self.state = State::Idle;
                } else {
                    return self.state;
                }
            }
            State::Idle | State::Auto | State::Manual => {}
        }
        // Trips are watched in every running state; no-flow only while dosing.
        if let Some(trip) = conditions.first(self.state.doses()) {
            self.state = State::Tripped;
            self.latched = Some(trip);
            return self.state;
        }
        self.state = match request {
            ModeRequest::Off => State::Idle,
            ModeRequest::Auto => State::Auto,
            ModeRequest::Manual => State::Manual,
        };
        // Entering a dosing state with no flow trips at once on the next tick; here it is
        // caught before a pump runs: dosing states re-check no-flow now.
        if let Some(trip) = conditions.first(self.state.doses()) {
            self.state = State::Tripped;
            self.latched = Some(trip);
        }
        self.state
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn with(reason: TripReason) -> Conditions {
        let mut c = Conditions::default();
        c.set(reason, 1.0, 0.5);
        c
    }

    #[test]
    fn codes_are_stable_and_distinct() {
        let codes: [u16; 12] = TripReason::ALL.map(TripReason::code);
        assert_eq!(codes, [101, 102, 103, 104, 105, 106, 107, 108, 109, 110, 111, 112]);
    }

    #[test]
    fn boot_refusal_is_final() {
        let mut s = Supervisor::new();
        assert_eq!(s.step(false, &Conditions::default(), ModeRequest::Auto, false), State::Refused);
        assert_eq!(s.latched().map(|t| t.reason), Some(TripReason::ConfigInvalid));
        assert_eq!(s.step(true, &Conditions::default(), ModeRequest::Auto, true), State::Refused);
    }

    #[test]
    fn every_reason_trips_from_every_dosing_state_and_needs_a_cleared_reset() {
        for reason in TripReason::ALL {
            for request in [ModeRequest::Auto, ModeRequest::Manual] {
                let mut s = Supervisor::new();
                assert_eq!(s.step(true, &Conditions::default(), request, false), State::Idle);
                assert!(s.step(true, &Conditions::default(), request, false).doses());
                assert_eq!(s.step(true, &with(reason), request, false), State::Tripped, "{reason:?}");
                assert_eq!(s.latched().map(|t| t.reason), Some(reason));
                // Cause cleared, no reset: stays tripped.
                assert_eq!(s.step(true, &Conditions::default(), request, false), State::Tripped);
                // Reset while the cause persists: stays tripped.
                assert_eq!(s.step(true, &with(reason), request, true), State::Tripped);
                // Reset with the cause cleared: back to idle, then the request applies.
                assert_eq!(s.step(true, &Conditions::default(), request, true), request_state(request));
                assert_eq!(s.latched(), None);
            }
        }
    }

    fn request_state(r: ModeRequest) -> State {
        match r {
            ModeRequest::Off => State::Idle,
            ModeRequest::Auto => State::Auto,
            ModeRequest::Manual => State::Manual,
        }
    }

    #[test]
    fn no_flow_is_only_a_trip_while_dosing() {
        let mut s = Supervisor::new();
        let no_flow = with(TripReason::NoFlow);
        assert_eq!(s.step(true, &no_flow, ModeRequest::Off, false), State::Idle);
        assert_eq!(s.step(true, &no_flow, ModeRequest::Off, false), State::Idle);
        // Asking to dose with no flow trips before a pump runs.
        assert_eq!(s.step(true, &no_flow, ModeRequest::Auto, false), State::Tripped);
        // Other trips latch in idle too.
        let mut idle = Supervisor::new();
        idle.step(true, &Conditions::default(), ModeRequest::Off, false);
        assert_eq!(idle.step(true, &with(TripReason::PhHigh), ModeRequest::Off, false), State::Tripped);
    }

    #[test]
    fn the_first_reason_in_priority_order_is_latched_with_its_numbers() {
        let mut c = Conditions::default();
        c.set(TripReason::OverdoseHour, 3.0, 2.5);
        c.set(TripReason::PhHigh, 11.2, 10.5);
        let mut s = Supervisor::new();
        s.step(true, &Conditions::default(), ModeRequest::Auto, false);
        s.step(true, &c, ModeRequest::Auto, false);
        let t = s.latched().unwrap();
        assert_eq!((t.reason, t.value, t.limit), (TripReason::PhHigh, 11.2, 10.5));
        assert_eq!(std::format!("{t}"), "trip 102: pH above the high hard limit (11.2 against limit 10.5)");
        // A broken probe makes the pH meaningless: it is the root cause, latched first.
        c.set(TripReason::ProbeFault, 0.0, 1.0);
        let mut s = Supervisor::new();
        s.step(true, &Conditions::default(), ModeRequest::Auto, false);
        s.step(true, &c, ModeRequest::Auto, false);
        assert_eq!(s.latched().map(|t| t.reason), Some(TripReason::ProbeFault));
    }
}
