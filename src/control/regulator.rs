//! The control law of one tick: cached feed-forward, flow-mapped PI trim (its gain scheduled on
//! the tank's residence time, [`PiTuning::for_tank`]), split range between the caustic and the
//! acid pump, tank model, adaptation and model residual.
//!
//! [`Regulator::step`] is pure: no I/O, no clock (time comes in as `dt_s`), fixed memory. It
//! does not decide *whether* to dose — the supervisor does, and tells it through
//! [`RegulatorMode`].
//!
//! # Cost of one step
//! A steady tick (no dead band crossed): six charge-balance evaluations (influent and both
//! reagents at the measured pH, for the error and the adaptation) plus one warm pH solve of the
//! tank model (the residual), bounded by [`crate::chem::Solution::solve_with`]'s documented
//! worst case and typically one or two iterations. A tick that recomputes the feed-forward adds
//! one [`crate::titration::dose::plan`] without pump or band checks: one cold influent solve
//! plus at most [`crate::titration::dose::MAX_DOSE_ROUNDS`] × (two evaluations and one mix),
//! and one evaluation of the reagent at the setpoint.

use super::adapt::{AdaptSettings, Adaptation, MIN_CORRECTION_BOUND_EQ_PER_L, ResidualWarning};
use super::feedback::{Pi, PiTuning, boosted_error};
use super::feedforward::{
    DeadBands, FeedForward, ModelError, Reagent, ReagentSide, adapted_influent, compute, steady_flow_l_per_h,
    tank_equilibrium,
};
use crate::chem::{Equilibrium, Solution};
use crate::real::Real;
use crate::units::Celsius;

/// Which law runs in automatic.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Law<R: Real> {
    /// The chemistry's law: feed-forward from the dose model plus PI on the flow-mapped error,
    /// with adaptation.
    Model,
    /// A conventional loop for comparison: no feed-forward, no adaptation, PI on the pH error
    /// itself with a fixed gain (L/h of reagent per pH of error; the PI's proportional factor
    /// Ti/λ multiplies it). The interlocks and the model residual run as for [`Law::Model`].
    FeedbackOnly {
        /// Gain on the pH error, L/h per pH (> 0).
        gain_l_per_h_per_ph: R,
    },
}

/// Settings of the control law.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RegulatorSettings<R: Real> {
    /// The law (the chemistry's, or feedback only for a comparison).
    pub law: Law<R>,
    /// Setpoint, pH (0–14; the boot checks demand it inside the hard limits).
    pub setpoint_ph: R,
    /// PI tuning.
    pub pi: PiTuning<R>,
    /// Feed-forward recompute dead bands.
    pub dead_bands: DeadBands<R>,
    /// Adaptation and residual.
    pub adapt: AdaptSettings<R>,
    /// The idle pump takes over only once the pH is beyond the setpoint by this much on its
    /// side, pH (0–2): the dead band between the caustic and the acid pump.
    pub switch_dead_band_ph: R,
}

/// What the supervisor lets the law do this tick.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RegulatorMode<R: Real> {
    /// Closed loop.
    Auto,
    /// The operator's flow on one pump (still subject to the interlocks upstream), L/h.
    Manual {
        /// Which pump.
        side: ReagentSide,
        /// Flow, L/h (clamped to 0 – the pump's maximum).
        flow_l_per_h: R,
    },
    /// Dosing stopped (tripped, standby, no flow): outputs zero, the integrator tracks.
    Stopped,
}

/// Inputs of one tick.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RegulatorInputs<R: Real> {
    /// Time since the last tick, s (> 0).
    pub dt_s: R,
    /// The selected (validated, voted) tank pH.
    pub ph: R,
    /// Tank temperature.
    pub temperature: Celsius<R>,
    /// Influent flow (measured, or the design flow), L/h (≥ 0).
    pub influent_flow_l_per_h: R,
    /// Reagent flows actually delivered during the last `dt_s` (caustic, acid), L/h, as the
    /// pump layer quantised them.
    pub delivered_l_per_h: [R; 2],
    /// `true` when the pH can be believed (probes healthy and agreeing).
    pub ph_trusted: bool,
    /// Mode granted by the supervisor.
    pub mode: RegulatorMode<R>,
}

/// Result of one tick.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RegulatorOutput<R: Real> {
    /// Demanded flow of each pump (caustic, acid), L/h; at most one is non-zero.
    pub demand_l_per_h: [R; 2],
    /// The pump the loop works with.
    pub active: ReagentSide,
    /// Feed-forward flow of the active pump, L/h.
    pub feed_forward_l_per_h: R,
    /// Feedback trim (output − feed-forward), L/h.
    pub trim_l_per_h: R,
    /// pH error mapped into flow, Q*(setpoint) − Q*(measured), L/h.
    pub error_l_per_h: R,
    /// PI gain seen from the pH (scheduled on the model's process gain), L/h per pH.
    pub scheduled_gain_l_per_h_per_ph: R,
    /// Model's process gain at the setpoint, pH per L/h.
    pub process_gain_ph_per_l_per_h: R,
    /// The modelled tank pH for the doses delivered, with the adaptation estimate clamped to its
    /// bound (None when the model failed).
    pub model_ph: Option<R>,
    /// Measured minus modelled pH.
    pub residual_ph: Option<R>,
    /// The residual warning, when it stands.
    pub residual_warning: Option<ResidualWarning<R>>,
    /// Adaptation correction of the influent's strong-ion excess, eq/L.
    pub correction_eq_per_l: R,
    /// `true` when adaptation moved this tick.
    pub adapted: bool,
    /// `true` when the feed-forward was recomputed this tick.
    pub feed_forward_recomputed: bool,
    /// The model could not be evaluated this tick (the last good feed-forward was kept).
    pub model_error: Option<ModelError>,
    /// `true` when the output sits at the active pump's maximum.
    pub saturated: bool,
}

/// Why a regulator could not be built.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RegulatorError {
    /// Neither a caustic nor an acid reagent.
    NoReagent,
    /// A setting outside its documented range (which one, and the value).
    Setting {
        /// The setting's name.
        name: &'static str,
        /// The rejected value.
        value: f64,
    },
    /// The model could not be evaluated at the design point.
    Model(ModelError),
}

impl core::fmt::Display for RegulatorError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::NoReagent => f.write_str("no reagent configured"),
            Self::Setting { name, value } => write!(f, "setting {name} = {value:e} is outside its range"),
            Self::Model(e) => core::fmt::Display::fmt(e, f),
        }
    }
}

impl core::error::Error for RegulatorError {}

fn check<R: Real>(name: &'static str, v: R, lo: f64, hi: f64) -> Result<(), RegulatorError> {
    let x = v.to_f64();
    if x.is_finite() && x >= lo && x <= hi { Ok(()) } else { Err(RegulatorError::Setting { name, value: x }) }
}

impl<R: Real> RegulatorSettings<R> {
    /// Checks every setting against its documented range.
    pub fn validate(&self) -> Result<(), RegulatorError> {
        check("setpoint_ph", self.setpoint_ph, 0.0, 14.0)?;
        check("integral_time_s", self.pi.integral_time_s, 1.0, 1e5)?;
        check("closed_loop_time_constant_s", self.pi.closed_loop_time_constant_s, 1.0, 1e5)?;
        check("rate_limit_l_per_h_per_s", self.pi.rate_limit_l_per_h_per_s, 1e-9, 1e6)?;
        check("flow_dead_band_fraction", self.dead_bands.flow_fraction, 1e-3, 0.5)?;
        check("temperature_dead_band_c", self.dead_bands.temperature_c, 0.01, 10.0)?;
        check("correction_dead_band_fraction", self.dead_bands.correction_fraction, 1e-3, 0.5)?;
        check("tank_volume_l", self.adapt.tank_volume_l, 1.0, 1e6)?;
        check("adaptation_filter_time_s", self.adapt.filter_time_s, 1.0, 1e7)?;
        check("adaptation_bound_fraction", self.adapt.bound_fraction, 0.0, 2.0)?;
        check("residual_bound_ph", self.adapt.residual_bound_ph, 0.05, 5.0)?;
        check("residual_time_s", self.adapt.residual_time_s, 0.0, 1e7)?;
        check("switch_dead_band_ph", self.switch_dead_band_ph, 0.0, 2.0)?;
        if let Law::FeedbackOnly { gain_l_per_h_per_ph } = self.law {
            check("gain_l_per_h_per_ph", gain_l_per_h_per_ph, 1e-9, 1e6)?;
        }
        Ok(())
    }
}

/// The control law's state. `N` is the capacity of the influent *and* the tank mixture: room
/// for the influent's systems plus both reagents' ([`super::feedforward::REAGENT_CAPACITY`]
/// each at most).
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Regulator<R: Real, const N: usize> {
    settings: RegulatorSettings<R>,
    influent: Solution<R, N>,
    reagents: [Option<Reagent<R>>; 2],
    active: ReagentSide,
    ff: Option<FeedForward<R>>,
    pi: Pi<R>,
    adaptation: Adaptation<R>,
    correction_bound_eq_per_l: R,
    tank: Option<Equilibrium<R>>,
}

impl<R: Real, const N: usize> Regulator<R, N> {
    /// Builds the law for an influent composition at its design flow and temperature. The pump
    /// that starts active is the one that moves the design influent towards the setpoint.
    pub fn new(
        settings: RegulatorSettings<R>,
        influent: Solution<R, N>,
        caustic: Option<Reagent<R>>,
        acid: Option<Reagent<R>>,
        design_flow_l_per_h: R,
    ) -> Result<Self, RegulatorError> {
        settings.validate()?;
        check("design_flow_l_per_h", design_flow_l_per_h, 1e-6, 1e7)?;
        for r in [&caustic, &acid].into_iter().flatten() {
            check("reagent max_l_per_h", r.max_l_per_h, 1e-9, 1e6)?;
        }
        let x = settings.setpoint_ph;
        let g_in = influent.charge_excess_eq_per_l(x, influent.strong_ionic_strength_mol_per_l());
        // Influent excess > 0 at the setpoint means its own pH is above it: acid needed.
        let wanted = if g_in > R::ZERO { ReagentSide::Acid } else { ReagentSide::Caustic };
        let reagents = [caustic, acid];
        // `N` must hold the tank: the influent's systems plus both reagents' (a tick mixes in the
        // pump that runs; the idle one's systems arrive only after a switch). Mixing them all
        // once here makes too small an `N` a refusal now, not a model error on every tick after
        // the first switch. At most two mixes.
        reagents
            .iter()
            .flatten()
            .try_fold(influent.clone(), |tank, r| tank.mix(R::ONE, &r.solution, R::ONE))
            .map_err(|e| RegulatorError::Model(ModelError::Composition(e)))?;
        let active = match (&reagents[0], &reagents[1]) {
            (None, None) => return Err(RegulatorError::NoReagent),
            (Some(_), None) => ReagentSide::Caustic,
            (None, Some(_)) => ReagentSide::Acid,
            (Some(_), Some(_)) => wanted,
        };
        let bound = (settings.adapt.bound_fraction * g_in.abs()).max(R::from_f64(MIN_CORRECTION_BOUND_EQ_PER_L));
        let mut reg = Self {
            settings,
            influent,
            reagents,
            active,
            ff: None,
            pi: Pi::new(),
            adaptation: Adaptation::new(),
            correction_bound_eq_per_l: bound,
            tank: None,
        };
        let t = reg.influent.temperature();
        reg.recompute(design_flow_l_per_h, t).map_err(RegulatorError::Model)?;
        Ok(reg)
    }

    /// The settings.
    pub fn settings(&self) -> &RegulatorSettings<R> {
        &self.settings
    }

    /// The current feed-forward, if one was computed.
    pub fn feed_forward(&self) -> Option<&FeedForward<R>> {
        self.ff.as_ref()
    }

    /// The adaptation and residual state.
    pub fn adaptation(&self) -> &Adaptation<R> {
        &self.adaptation
    }

    /// Bound of the adaptation correction, eq/L.
    pub fn correction_bound_eq_per_l(&self) -> R {
        self.correction_bound_eq_per_l
    }

    /// The pump the loop works with.
    pub fn active(&self) -> ReagentSide {
        self.active
    }

    /// Operator reset: clears the residual warning.
    pub fn reset_warning(&mut self) {
        self.adaptation.clear_warning();
    }

    fn reagent(&self, side: ReagentSide) -> Option<&Reagent<R>> {
        side.of(&self.reagents).as_ref()
    }

    /// Recomputes the feed-forward at `flow` and `temperature` with the current correction,
    /// moving the correction's share of the change out of the integrator.
    fn recompute(&mut self, flow: R, temperature: Celsius<R>) -> Result<(), ModelError> {
        let c = self.adaptation.correction_eq_per_l();
        // The configured influent and the reagents follow the temperature the feed-forward is
        // computed at; their compositions never change.
        self.influent.set_temperature(temperature);
        for r in self.reagents.iter_mut().flatten() {
            r.solution.set_temperature(temperature);
        }
        let reagent = self.reagent(self.active).ok_or(ModelError::NoReagent)?;
        let adapted = adapted_influent(&self.influent, temperature, c).map_err(ModelError::Composition)?;
        let ff = compute(&adapted, flow, reagent, self.settings.setpoint_ph, c)?;
        if let Some(old) = &self.ff {
            // dQ*/dΔc = −Q_in/g_r(sp): the adaptation's part of the change was integrator work.
            let g = ff.reagent_excess_at_setpoint_eq_per_l;
            if g != R::ZERO {
                self.pi.transfer_to_feed_forward(-flow * (c - old.correction_eq_per_l) / g);
            }
        }
        self.ff = Some(ff);
        Ok(())
    }

    /// One tick. Never panics; bounded cost (see the module docs).
    pub fn step(&mut self, inputs: &RegulatorInputs<R>) -> RegulatorOutput<R> {
        let dt = if inputs.dt_s.is_finite() && inputs.dt_s > R::ZERO { inputs.dt_s } else { R::ZERO };
        let flow =
            if inputs.influent_flow_l_per_h.is_finite() { inputs.influent_flow_l_per_h.max(R::ZERO) } else { R::ZERO };
        let ph_ok = inputs.ph.is_finite() && inputs.ph >= R::ZERO && inputs.ph <= R::from_f64(14.0);
        let trusted = inputs.ph_trusted && ph_ok && dt > R::ZERO && flow > R::ZERO;
        self.adaptation.advance_tank(&self.settings.adapt, dt, flow, inputs.delivered_l_per_h);

        // Feed-forward, recomputed only beyond its dead bands.
        let mut model_error = None;
        let mut recomputed = false;
        let stale = self.ff.as_ref().is_none_or(|ff| {
            ff.is_stale(
                &self.settings.dead_bands,
                flow,
                inputs.temperature.celsius(),
                self.adaptation.correction_eq_per_l(),
                self.correction_bound_eq_per_l,
            )
        });
        if stale && flow > R::ZERO {
            match self.recompute(flow, inputs.temperature) {
                Ok(()) => recomputed = true,
                Err(e) => model_error = Some(e),
            }
        }
        let c_ff = self.ff.as_ref().map_or(R::ZERO, |f| f.correction_eq_per_l);
        let (ff_flow, gain, ionic) = match &self.ff {
            Some(ff) if flow > R::ZERO => {
                // Between recomputes the feed-forward follows the flow proportionally (the
                // closed form is linear in Q_in).
                let scale = if ff.influent_flow_l_per_h > R::ZERO { flow / ff.influent_flow_l_per_h } else { R::ONE };
                (ff.flow_l_per_h * scale, ff.gain_ph_per_l_per_h, ff.ionic_strength_mol_per_l)
            }
            Some(ff) => (R::ZERO, ff.gain_ph_per_l_per_h, ff.ionic_strength_mol_per_l),
            None => (R::ZERO, R::ZERO, R::ZERO),
        };

        // The pH error in flow units, on the active pump.
        let side = self.active;
        let max = self.reagent(side).map_or(R::ZERO, |r| r.max_l_per_h);
        let saturation = max * R::from_f64(2.0);
        let (error_q, error_ph) = match self.reagent(side) {
            Some(r) if ph_ok && flow > R::ZERO => {
                let q_meas =
                    steady_flow_l_per_h(&self.influent, c_ff, flow, &r.solution, side, inputs.ph, ionic, saturation);
                (ff_flow - q_meas, self.settings.setpoint_ph - inputs.ph)
            }
            _ => (R::ZERO, R::ZERO),
        };

        // The feedback-only comparison law: no feed-forward, the pH error times a fixed gain.
        let (ff_flow, error_q) = match self.settings.law {
            Law::Model => (ff_flow, error_q),
            Law::FeedbackOnly { gain_l_per_h_per_ph } => {
                let towards = match side {
                    ReagentSide::Caustic => error_ph,
                    ReagentSide::Acid => -error_ph,
                };
                (R::ZERO, gain_l_per_h_per_ph * towards)
            }
        };

        // The PI's gain on the tank (see `super::feedback`): the chemistry's law schedules it on
        // the tank's residence time at the flow through it, its extra action bounded by the
        // feed-forward; the comparison law keeps its own gain.
        let (tuning, error_pi) = match self.settings.law {
            Law::Model if flow > R::ZERO => {
                let through = flow + ff_flow.max(R::ZERO);
                let tank = self.settings.pi.for_tank(self.settings.adapt.tank_volume_l / through * R::from_f64(3600.0));
                (tank, boosted_error(&self.settings.pi, &tank, error_q, ff_flow))
            }
            _ => (self.settings.pi, error_q),
        };

        // The law, in the mode the supervisor grants.
        let mut demand = [R::ZERO; 2];
        let mut trim = R::ZERO;
        let mut sched = R::ZERO;
        let mut saturated = false;
        let auto = matches!(inputs.mode, RegulatorMode::Auto);
        match inputs.mode {
            RegulatorMode::Auto if ph_ok && flow > R::ZERO && dt > R::ZERO => {
                let out = self.pi.step(&tuning, dt, ff_flow, error_pi, error_ph, max);
                *side.of_mut(&mut demand) = out.flow_l_per_h;
                trim = out.trim_l_per_h;
                sched = out.scheduled_gain_l_per_h_per_ph;
                saturated = out.saturated_high;
                self.maybe_switch(inputs.ph, ff_flow + trim + tuning.proportional_gain() * error_pi);
            }
            RegulatorMode::Manual { side: ms, flow_l_per_h } => {
                let m = self.reagent(ms).map_or(R::ZERO, |r| r.max_l_per_h);
                let q = if flow_l_per_h.is_finite() { flow_l_per_h.max(R::ZERO).min(m) } else { R::ZERO };
                *ms.of_mut(&mut demand) = q;
                let tracked = if ms == side { q } else { R::ZERO };
                self.pi.track(&tuning, ff_flow, error_pi, tracked);
            }
            // Stopped (idle, tripped, no flow): nothing to be bumpless from. The integrator is
            // cleared, so dosing restarts from the feed-forward (rate-limited from zero), not
            // from an integrator wound down to cancel it.
            _ => self.pi.reset(),
        }

        // Adaptation's raw estimate (two evaluations per reagent, no solve), then the model
        // residual: the tank model with that estimate clamped to its bound (one warm solve).
        let raw = if ph_ok {
            let g_in = self.influent.charge_excess_eq_per_l(inputs.ph, ionic);
            let mut g_r = [R::ZERO; 2];
            for (g, slot) in g_r.iter_mut().zip(&self.reagents) {
                if let Some(r) = slot {
                    *g = r.solution.charge_excess_eq_per_l(inputs.ph, ionic);
                }
            }
            self.adaptation.raw_correction(g_in, g_r)
        } else {
            None
        };
        let bound = self.correction_bound_eq_per_l;
        let explained = raw.map_or(self.adaptation.correction_eq_per_l(), |r| r.max(-bound).min(bound));
        let tank = adapted_influent(&self.influent, inputs.temperature, explained)
            .map_err(ModelError::Composition)
            .and_then(|inf| tank_equilibrium(&inf, &self.reagents, self.adaptation.fractions(), self.tank.as_ref()));
        let (model_ph, residual, warning) = match tank {
            Ok(eq) => {
                let r = inputs.ph - eq.ph;
                self.tank = Some(eq);
                let w = self.adaptation.watch_residual(&self.settings.adapt, dt, r, trusted);
                (Some(eq.ph), ph_ok.then_some(r), w)
            }
            Err(e) => {
                self.tank = None;
                model_error = model_error.or(Some(e));
                (None, None, None)
            }
        };
        let ok = trusted && auto && !saturated && model_error.is_none() && self.settings.law == Law::Model;
        let adapted = self.adaptation.update(&self.settings.adapt, dt, raw, bound, ok);

        RegulatorOutput {
            demand_l_per_h: demand,
            active: self.active,
            feed_forward_l_per_h: ff_flow,
            trim_l_per_h: trim,
            error_l_per_h: error_q,
            scheduled_gain_l_per_h_per_ph: sched,
            process_gain_ph_per_l_per_h: gain,
            model_ph,
            residual_ph: residual,
            residual_warning: warning,
            correction_eq_per_l: self.adaptation.correction_eq_per_l(),
            adapted,
            feed_forward_recomputed: recomputed,
            model_error,
            saturated,
        }
    }

    /// Split range: the idle pump takes over when the active one would go below zero and the pH
    /// is beyond the setpoint by the dead band on the idle pump's side.
    fn maybe_switch(&mut self, ph: R, unclamped_demand_l_per_h: R) {
        let other = self.active.other();
        if self.reagent(other).is_none() || unclamped_demand_l_per_h >= R::ZERO {
            return;
        }
        let sp = self.settings.setpoint_ph;
        let db = self.settings.switch_dead_band_ph;
        let beyond = match other {
            ReagentSide::Acid => ph > sp + db,
            ReagentSide::Caustic => ph < sp - db,
        };
        if beyond {
            self.active = other;
            self.pi.reset();
            self.ff = None; // recomputed for the new pump on the next tick
        }
    }
}
