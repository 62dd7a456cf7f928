//! The controller: everything a dosing controller runs every tick, in one value with one entry
//! point, [`Controller::step`]. Pure: no I/O, no clock (time comes in as `dt_s`), fixed memory,
//! no panics. The host simulator, the hardware-in-the-loop rig and a board run exactly this.
//!
//! # Order inside a tick
//! 1. The watchdog: a tick whose `dt_s` is not a positive number or exceeds the limit is stale.
//! 2. The probes: each one's signal is validated ([`crate::probe::monitor`]) and converted at
//!    the measured temperature; the healthy ones vote ([`crate::probe::vote`]).
//! 3. The trip conditions (pH limits, probes, flow, overdose, reagent low, stale inputs, model
//!    mismatch) go to the [`Supervisor`], which decides whether dosing may run.
//! 4. Only then the control law ([`Regulator::step`]) in the mode the supervisor grants
//!    (stopped unless dosing), and the pump outputs in the pumps' own units ([`PumpChannel`]);
//!    a pump is commanded only in a dosing state.
//! 5. Bookkeeping: the dose ledgers (the overdose guard's input), the model-mismatch timer.
//!
//! # Cost of one step
//! The control law's cost (see [`super::regulator`]: a steady tick is six charge-balance
//! evaluations and one warm pH solve; a recompute adds one dose plan), plus a constant amount
//! of arithmetic: at most three probe ticks (constant time each), one vote over at most three
//! readings, at most twelve trip conditions, two pump commands and two ledger bookings (each at
//! most 36 bucket moves, only on ticks longer than five minutes).

use heapless::Vec;

use super::feedforward::{Reagent, ReagentSide};
use super::ledger::DoseLedger;
use super::pump::{PumpChannel, PumpDrive, PumpOutput};
use super::regulator::{Regulator, RegulatorError, RegulatorInputs, RegulatorMode, RegulatorOutput, RegulatorSettings};
use super::supervisor::{Conditions, ModeRequest, State, Supervisor, Trip, TripReason};
use crate::chem::Solution;
use crate::probe::Probe;
use crate::probe::monitor::Reading;
use crate::probe::vote::{MAX_PROBES, Vote, VoteSettings, vote};
use crate::real::Real;
use crate::units::Celsius;

/// One reagent line: the reagent, its pump and its overdose limits.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ReagentLine<R: Real> {
    /// The reagent (mol/L) with its pump's maximum.
    pub reagent: Reagent<R>,
    /// The pump's input.
    pub drive: PumpDrive<R>,
    /// Most reagent in any hour, L (> 0).
    pub max_per_hour_l: R,
    /// Most reagent in any day, L (≥ the hourly limit).
    pub max_per_day_l: R,
}

/// Interlock limits (the pH limits are in [`ControllerConfig`]).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Interlocks<R: Real> {
    /// A measured influent flow below this is no flow, L/h (≥ 0).
    pub no_flow_below_l_per_h: R,
    /// A tick longer than this is stale, s (> 0).
    pub max_tick_age_s: R,
    /// Model mismatch: |measured − model pH| beyond this …, pH (> 0).
    pub mismatch_trip_ph: R,
    /// … for this long trips, s (> 0).
    pub mismatch_trip_s: R,
    /// Runaway: the pH farther than this from the setpoint on a pump's side, pH (> 0) …
    pub runaway_margin_ph: R,
    /// … still moving away, with that pump off for longer than this, s (> 0).
    pub runaway_off_s: R,
}

/// Everything a controller is built from (see [`crate::config`] for the stored form and the
/// boot checks that validate it).
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ControllerConfig<R: Real, const N: usize> {
    /// The control law's settings (setpoint, tuning, adaptation).
    pub regulator: RegulatorSettings<R>,
    /// The configured influent.
    pub influent: Solution<R, N>,
    /// Design influent flow, L/h (used when no flow is measured).
    pub design_flow_l_per_h: R,
    /// Caustic and acid lines.
    pub lines: [Option<ReagentLine<R>>; 2],
    /// Low hard limit, pH.
    pub low_limit_ph: R,
    /// High hard limit, pH.
    pub high_limit_ph: R,
    /// Interlocks.
    pub interlocks: Interlocks<R>,
    /// One to three calibrated probes.
    pub probes: Vec<Probe<R>, MAX_PROBES>,
    /// The probes' vote.
    pub vote: VoteSettings<R>,
}

/// The inputs of one tick (what the board reads, or the simulator provides).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TickInputs<R: Real> {
    /// Time since the last tick, s (> 0, ≤ the watchdog limit).
    pub dt_s: R,
    /// Each probe's raw potential, mV (index = probe; NaN for a broken input).
    pub probe_mv: [R; MAX_PROBES],
    /// Tank temperature, °C (0–100; outside, the design temperature is used and a warning set).
    pub temperature_c: R,
    /// Measured influent flow, L/h, if a flow meter is fitted (`None`: the design flow).
    pub influent_flow_l_per_h: Option<R>,
    /// The flow switch (true = flow).
    pub flow_switch: bool,
    /// Reagent tank low-level switches (caustic, acid; true = low).
    pub reagent_low: [bool; 2],
    /// The reset input (acted on while true).
    pub reset: bool,
    /// The operator's mode.
    pub mode: ModeRequest,
    /// Manual mode: which pump and its flow, L/h.
    pub manual: (ReagentSide, R),
}

/// Warning flags (dosing continues). Bit values are stable.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Warnings(pub u16);

impl Warnings {
    /// Model and probe disagree beyond the residual bound for the residual time.
    pub const RESIDUAL: u16 = 1 << 0;
    /// A probe is faulted while others carry on.
    pub const PROBE_FAULT: u16 = 1 << 1;
    /// The model could not be evaluated this tick (the last feed-forward was kept).
    pub const MODEL: u16 = 1 << 2;
    /// The active pump is at its maximum.
    pub const SATURATED: u16 = 1 << 3;
    /// The temperature input is invalid; the design temperature is used.
    pub const TEMPERATURE: u16 = 1 << 4;

    /// `true` when `flag` is set.
    pub const fn has(self, flag: u16) -> bool {
        self.0 & flag != 0
    }
}

/// The outputs of one tick.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TickOutputs<R: Real> {
    /// Pump commands and what they deliver (caustic, acid; `None` for an absent line).
    pub pumps: [Option<PumpOutput<R>>; 2],
    /// The dosing-enable relay: closed only in a dosing state.
    pub dosing_enabled: bool,
    /// The alarm output: tripped or refused.
    pub alarm: bool,
    /// The supervisor's state.
    pub state: State,
    /// The latched trip.
    pub trip: Option<Trip>,
    /// Warning flags.
    pub warnings: Warnings,
    /// The probes' vote (selected pH, spread, faults).
    pub vote: Vote<R>,
    /// The reagent flow delivered this tick (caustic, acid), L/h.
    pub delivered_l_per_h: [R; 2],
    /// Reagent delivered in the last hour (caustic, acid), L.
    pub dose_last_hour_l: [R; 2],
    /// Reagent delivered in the last day (caustic, acid), L.
    pub dose_last_day_l: [R; 2],
    /// The control law's output this tick.
    pub law: RegulatorOutput<R>,
}

/// Why a controller could not be built.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ControllerError {
    /// No probe.
    NoProbe,
    /// The control law refused its settings or model.
    Regulator(RegulatorError),
}

impl core::fmt::Display for ControllerError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::NoProbe => f.write_str("no pH probe configured"),
            Self::Regulator(e) => core::fmt::Display::fmt(e, f),
        }
    }
}

impl core::error::Error for ControllerError {}

/// The controller's state. `N` is the capacity of the influent and tank model.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Controller<R: Real, const N: usize> {
    law: Regulator<R, N>,
    supervisor: Supervisor,
    boot_allows: bool,
    probes: Vec<Probe<R>, MAX_PROBES>,
    vote: VoteSettings<R>,
    channels: [Option<PumpChannel<R>>; 2],
    limits_per_hour_l: [R; 2],
    limits_per_day_l: [R; 2],
    ledgers: [DoseLedger<R>; 2],
    low_limit_ph: R,
    high_limit_ph: R,
    interlocks: Interlocks<R>,
    design_flow_l_per_h: R,
    design_temperature: Celsius<R>,
    delivered_l_per_h: [R; 2],
    /// Outputs switched off outside `step` this long after the last step, s (see
    /// [`Controller::outputs_forced_off`]).
    forced_off_after_s: Option<R>,
    mismatch_s: R,
    last_residual_ph: Option<R>,
    /// Per pump (caustic, acid): how long it has delivered nothing while dosing, s.
    off_s: [R; 2],
    /// The voted pH of the last tick.
    last_ph: Option<R>,
}

impl<R: Real, const N: usize> Controller<R, N> {
    /// Builds a controller. `boot_allows` is the boot report's verdict: when false the
    /// controller never leaves [`State::Refused`] (it still reads its probes for display).
    pub fn new(config: ControllerConfig<R, N>, boot_allows: bool) -> Result<Self, ControllerError> {
        if config.probes.is_empty() {
            return Err(ControllerError::NoProbe);
        }
        let [caustic, acid] = config.lines;
        let design_temperature = config.influent.temperature();
        let law = Regulator::new(
            config.regulator,
            config.influent,
            caustic.as_ref().map(|l| l.reagent.clone()),
            acid.as_ref().map(|l| l.reagent.clone()),
            config.design_flow_l_per_h,
        )
        .map_err(ControllerError::Regulator)?;
        let lines = [caustic, acid];
        let limit = |f: fn(&ReagentLine<R>) -> R| lines.clone().map(|l| l.as_ref().map_or(R::ZERO, f));
        Ok(Self {
            law,
            supervisor: Supervisor::new(),
            boot_allows,
            probes: config.probes,
            vote: config.vote,
            channels: lines.clone().map(|l| l.map(|l| PumpChannel::new(l.drive))),
            limits_per_hour_l: limit(|l| l.max_per_hour_l),
            limits_per_day_l: limit(|l| l.max_per_day_l),
            ledgers: [DoseLedger::new(), DoseLedger::new()],
            low_limit_ph: config.low_limit_ph,
            high_limit_ph: config.high_limit_ph,
            interlocks: config.interlocks,
            design_flow_l_per_h: config.design_flow_l_per_h,
            design_temperature,
            delivered_l_per_h: [R::ZERO; 2],
            forced_off_after_s: None,
            mismatch_s: R::ZERO,
            last_residual_ph: None,
            off_s: [R::ZERO; 2],
            last_ph: None,
        })
    }

    /// Tells the controller that every output was switched off outside [`Controller::step`],
    /// `after_s` seconds (0 or more) after the last step: for instance a board that refused a
    /// frame and turned its pumps off at once. The next step then tells the control law that the
    /// last commands ran for that long only, not for the whole interval (the law's tank model
    /// would otherwise count reagent that never came, and its adaptation learn from it). Called
    /// more than once before a step, the earliest time counts; a value that is not finite or is
    /// negative counts as 0. The dose ledgers are not changed: they book each new command for
    /// the interval before it, which over a gap is more than was delivered (the overdose
    /// guard's safe side).
    pub fn outputs_forced_off(&mut self, after_s: R) {
        let after = if after_s.is_finite() { after_s.max(R::ZERO) } else { R::ZERO };
        self.forced_off_after_s = Some(self.forced_off_after_s.map_or(after, |earlier| earlier.min(after)));
    }

    /// The supervisor's state.
    pub fn state(&self) -> State {
        self.supervisor.state()
    }

    /// The control law (read only: feed-forward, adaptation).
    pub fn law(&self) -> &Regulator<R, N> {
        &self.law
    }

    /// The dose ledgers (caustic, acid).
    pub fn ledgers(&self) -> &[DoseLedger<R>; 2] {
        &self.ledgers
    }

    /// One tick. Never panics; bounded cost (see the module docs).
    pub fn step(&mut self, inputs: &TickInputs<R>) -> TickOutputs<R> {
        let mut warnings = 0_u16;
        let dt = inputs.dt_s;
        let dt_ok = dt.is_finite() && dt > R::ZERO && dt <= self.interlocks.max_tick_age_s;
        let temperature = match Celsius::new(inputs.temperature_c) {
            Ok(t) => t,
            Err(_) => {
                warnings |= Warnings::TEMPERATURE;
                self.design_temperature
            }
        };

        // 2. Probes and vote. At most MAX_PROBES readings. A stale tick still feeds the probes
        // the real elapsed time (their monitor accepts up to an hour), so a late tick is
        // reported as stale, not as a probe fault.
        let probe_dt = if dt.is_finite() && dt > R::ZERO {
            dt.min(R::from_f64(crate::probe::monitor::MAX_TICK_S))
        } else {
            R::ZERO
        };
        // What the pumps delivered over the interval that ends now: the last commands, for the
        // share of the interval before any forced switch-off.
        let ran_l_per_h = match self.forced_off_after_s.take() {
            Some(after) => {
                let share = if probe_dt > R::ZERO { (after / probe_dt).max(R::ZERO).min(R::ONE) } else { R::ZERO };
                self.delivered_l_per_h.map(|q| q * share)
            }
            None => self.delivered_l_per_h,
        };
        let mut readings: Vec<Reading<R>, MAX_PROBES> = Vec::new();
        for (probe, mv) in self.probes.iter_mut().zip(inputs.probe_mv) {
            // Capacity MAX_PROBES and at most MAX_PROBES probes: the push cannot fail.
            let pushed = readings.push(probe.tick(probe_dt, mv, temperature));
            debug_assert!(pushed.is_ok());
        }
        let v = vote(&readings, &self.vote).unwrap_or_else(|_| Vote::none());
        if v.faults.iter().any(Option::is_some) {
            warnings |= Warnings::PROBE_FAULT;
        }

        // 3. Trip conditions, then the supervisor.
        let flow = match inputs.influent_flow_l_per_h {
            Some(q) if q.is_finite() => q.max(R::ZERO),
            Some(_) => R::ZERO,
            None => self.design_flow_l_per_h,
        };
        let mut c = Conditions::default();
        let f = |x: R| x.to_f64();
        let no_flow = !inputs.flow_switch
            || (inputs.influent_flow_l_per_h.is_some() && flow < self.interlocks.no_flow_below_l_per_h);
        if no_flow {
            c.set(TripReason::NoFlow, f(flow), f(self.interlocks.no_flow_below_l_per_h));
        }
        match v.ph {
            Some(ph) if ph > self.high_limit_ph => c.set(TripReason::PhHigh, f(ph), f(self.high_limit_ph)),
            Some(ph) if ph < self.low_limit_ph => c.set(TripReason::PhLow, f(ph), f(self.low_limit_ph)),
            Some(_) => {}
            None => c.set(TripReason::ProbeFault, v.healthy_count() as f64, 1.0),
        }
        if let Some(d) = v.disagreement {
            c.set(TripReason::ProbeDisagreement, f(d.spread_ph), f(d.limit_ph));
        }
        for k in 0..2 {
            let (ledger, hour, day) = (
                crate::invariant::at(&self.ledgers, k),
                crate::invariant::at(&self.limits_per_hour_l, k),
                crate::invariant::at(&self.limits_per_day_l, k),
            );
            if hour > R::ZERO && ledger.last_hour_l() > hour {
                c.set(TripReason::OverdoseHour, f(ledger.last_hour_l()), f(hour));
            }
            if day > R::ZERO && ledger.last_day_l() > day {
                c.set(TripReason::OverdoseDay, f(ledger.last_day_l()), f(day));
            }
        }
        if !dt_ok {
            c.set(TripReason::StaleInputs, f(dt), f(self.interlocks.max_tick_age_s));
        }
        let low = inputs.reagent_low.iter().zip(&self.channels).any(|(low, ch)| *low && ch.is_some());
        if low {
            c.set(TripReason::ReagentLow, 1.0, 0.0);
        }
        if self.mismatch_s > self.interlocks.mismatch_trip_s {
            let r = self.last_residual_ph.map_or(0.0, |r| f(r.abs()));
            c.set(TripReason::ModelMismatch, r, f(self.interlocks.mismatch_trip_ph));
        }
        // Runaway (112): a pump that has delivered nothing for longer than the runaway time
        // while dosing, and the pH past the margin on that pump's side and still moving away
        // (the caustic pump pushes up, the acid pump down). Whatever the model says: a pump
        // that delivers without being told shows here.
        let was_dosing = self.supervisor.state().doses();
        let sp = self.law.settings().setpoint_ph;
        let (margin, off_limit) = (self.interlocks.runaway_margin_ph, self.interlocks.runaway_off_s);
        for ((off_s, delivered), (channel, up)) in
            self.off_s.iter_mut().zip(ran_l_per_h).zip(self.channels.iter().zip([R::ONE, -R::ONE]))
        {
            if was_dosing && channel.is_some() && delivered <= R::ZERO {
                *off_s += probe_dt;
            } else {
                *off_s = R::ZERO;
            }
            if let (Some(ph), Some(last)) = (v.ph, self.last_ph)
                && *off_s > off_limit
                && up * (ph - sp) > margin
                && up * (ph - last) > R::ZERO
            {
                c.set(TripReason::Runaway, f(ph), f(sp + up * margin));
            }
        }
        self.last_ph = v.ph;
        let state = self.supervisor.step(self.boot_allows, &c, inputs.mode, inputs.reset);
        let dosing = state.doses();

        // 4. The control law in the granted mode, then the pumps.
        let mode = match state {
            State::Auto => RegulatorMode::Auto,
            State::Manual => RegulatorMode::Manual { side: inputs.manual.0, flow_l_per_h: inputs.manual.1 },
            _ => RegulatorMode::Stopped,
        };
        let trusted = v.ph.is_some() && v.disagreement.is_none();
        let law = self.law.step(&RegulatorInputs {
            dt_s: probe_dt,
            ph: v.ph.unwrap_or(R::from_f64(f64::NAN)),
            temperature,
            influent_flow_l_per_h: if no_flow { R::ZERO } else { flow },
            delivered_l_per_h: ran_l_per_h,
            ph_trusted: trusted,
            mode,
        });
        let mut pumps = [None, None];
        let mut delivered = [R::ZERO; 2];
        for (((slot, channel), demand), (out_q, ledger)) in pumps
            .iter_mut()
            .zip(self.channels.iter_mut())
            .zip(law.demand_l_per_h)
            .zip(delivered.iter_mut().zip(self.ledgers.iter_mut()))
        {
            if let Some(ch) = channel {
                let out = if dosing { ch.command(demand, probe_dt) } else { ch.stop() };
                *out_q = out.delivered_l_per_h;
                ledger.book(out.delivered_l, probe_dt);
                *slot = Some(out);
            }
        }
        self.delivered_l_per_h = delivered;

        // 5. The model-mismatch timer: only while dosing in auto on a trusted pH.
        match law.residual_ph {
            Some(r) if state == State::Auto && trusted && r.abs() > self.interlocks.mismatch_trip_ph => {
                self.mismatch_s += probe_dt;
            }
            _ => self.mismatch_s = R::ZERO,
        }
        self.last_residual_ph = law.residual_ph;
        if law.residual_warning.is_some() {
            warnings |= Warnings::RESIDUAL;
        }
        if law.model_error.is_some() {
            warnings |= Warnings::MODEL;
        }
        if law.saturated {
            warnings |= Warnings::SATURATED;
        }
        if inputs.reset {
            self.law.reset_warning();
        }
        TickOutputs {
            pumps,
            dosing_enabled: dosing,
            alarm: matches!(state, State::Tripped | State::Refused),
            state,
            trip: self.supervisor.latched(),
            warnings: Warnings(warnings),
            vote: v,
            delivered_l_per_h: delivered,
            dose_last_hour_l: self.ledgers.map(|l| l.last_hour_l()),
            dose_last_day_l: self.ledgers.map(|l| l.last_day_l()),
            law,
        }
    }
}
