//! The feedback trim: a PI controller on the pH error mapped into reagent flow.
//!
//! The pH error is taken through the model's static titration curve into the reagent flow that
//! would close it at steady state, `e_q = Q*(setpoint) − Q*(measured)` (L/h; see
//! [`super::feedforward::steady_flow_l_per_h`]) — the strong-acid-equivalent transformation of
//! Wright & Kravaris (1991, Ind. Eng. Chem. Res. 30, 1561). In that variable the process is a
//! linear first-order lag of gain 1 whatever the buffer capacity, so a PI with fixed gain has
//! the same closed-loop response on the flat and the steep parts of the curve. Seen from the
//! pH, that is a PI whose gain is scheduled on the model's process gain (the secant between
//! the measured pH and the setpoint, the local gain near the setpoint): reported as
//! [`PiOutput::scheduled_gain_l_per_h_per_ph`].
//!
//! Tuning rule: IMC for a first-order process of unit gain (Rivera, Morari & Skogestad 1986,
//! Ind. Eng. Chem. Process Des. Dev. 25, 252; volume and page from memory): integral time `Ti` ≈ the tank's residence time
//! plus its dead time, proportional gain `Kc = Ti/λ` for a desired closed-loop time constant λ.
//!
//! **Gain on the tank.** A neutralisation tank is usually lag-dominant: its time constant in
//! flow units, the residence time `τ = V/Q` (V the tank volume, Q the flow through it), is many
//! times the loop's dead time, and the integral time is then set well below τ by the SIMC rule
//! (Skogestad 2003, J. Process Control 13, 291–309; from memory): for a process of unit gain,
//! `Kc = τ/(τc + θ)` and `Ti = min(τ, 4·(τc + θ))`. Read that way, a configured `Ti < τ` states
//! `τc + θ = Ti/4`, and the gain that goes with it is `4·τ/Ti` — larger than `Ti/λ` whenever
//! `Ti² < 4·τ·λ`. [`PiTuning::for_tank`] takes the larger of the two: the IMC gain when `Ti` was
//! set near the residence time, the SIMC gain when it was set below it. Since τ follows the flow,
//! so does the gain; and since the flow-mapped error is itself proportional to the influent
//! flow, the proportional action in reagent is then `4·V·Δ/Ti`, with Δ the tank's excess charge
//! per litre against the setpoint divided by the reagent's: the reagent that puts the whole tank
//! back within `Ti/4`, whatever the flow.
//!
//! The tank's gain is meant for the upsets of a running tank (a slug, a change of the influent),
//! not for a start from raw water or a setpoint far away, where the output's rate limit and the
//! pump's maximum dominate: its extra action over the configured gain's is bounded by
//! [`boosted_error`] (the loop passes ± its feed-forward, so the extra can at most double the
//! dose or stop it). Beyond that bound the configured gain alone acts.
//!
//! Anti-windup by conditional integration: the integrator does not move in a direction the
//! output cannot follow (at the pump's limits or the rate limit). Manual → auto is bumpless: the
//! integrator is set so that the first automatic output equals the last manual one.

use crate::real::Real;

/// PI tuning.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PiTuning<R: Real> {
    /// Integral time Ti, s (1–100 000); about the tank's residence time plus dead time.
    pub integral_time_s: R,
    /// Desired closed-loop time constant λ, s (1–100 000); Kc = Ti/λ.
    pub closed_loop_time_constant_s: R,
    /// Largest change of the reagent flow per second, L/h per s (> 0).
    pub rate_limit_l_per_h_per_s: R,
}

/// Longest tank time constant [`PiTuning::for_tank`] takes, s (about 11.6 days): keeps the
/// scheduled gain finite at a vanishing flow.
pub const MAX_TANK_TIME_CONSTANT_S: f64 = 1e6;

impl<R: Real> PiTuning<R> {
    /// Proportional gain Kc = Ti/λ (dimensionless: L/h of output per L/h of error).
    pub fn proportional_gain(&self) -> R {
        self.integral_time_s / self.closed_loop_time_constant_s
    }

    /// The tuning for a tank whose time constant in flow units (its residence time V/Q) is
    /// `time_constant_s` (s; clamped to at most [`MAX_TANK_TIME_CONSTANT_S`]): the same integral
    /// time and rate limit, and the proportional gain `max(Ti/λ, 4·τ/Ti)` (see the module docs:
    /// the SIMC gain for the configured integral time when that lies below the residence time).
    /// A time constant that is not a positive number leaves the tuning as it is. Never lowers
    /// the gain.
    pub fn for_tank(&self, time_constant_s: R) -> Self {
        if !(time_constant_s.is_finite() && time_constant_s > R::ZERO) {
            return *self;
        }
        let tau = time_constant_s.min(R::from_f64(MAX_TANK_TIME_CONSTANT_S));
        let simc = R::from_f64(4.0) * tau / self.integral_time_s;
        let kc = self.proportional_gain();
        if simc > kc && simc.is_finite() {
            // Kc = Ti/λ' with λ' = Ti/Kc: the PI below reads the gain through λ.
            Self { closed_loop_time_constant_s: self.integral_time_s / simc, ..*self }
        } else {
            *self
        }
    }
}

/// The error to give a PI tuned at `tank` (the tuning [`PiTuning::for_tank`] returns for `base`)
/// so that its proportional action is `base`'s plus the tank gain's extra, the extra bounded to
/// ±`extra_limit_l_per_h` (L/h, ≥ 0; a limit that is not a positive number allows no extra).
/// Within the bound that is `error_l_per_h` itself. The integral action is the same fraction of
/// the tank gain's. Returns `error_l_per_h` when `tank`'s gain is not a positive number.
pub fn boosted_error<R: Real>(base: &PiTuning<R>, tank: &PiTuning<R>, error_l_per_h: R, extra_limit_l_per_h: R) -> R {
    let (k0, k) = (base.proportional_gain(), tank.proportional_gain());
    if !(k.is_finite() && k > R::ZERO && error_l_per_h.is_finite()) {
        return error_l_per_h;
    }
    let limit = if extra_limit_l_per_h > R::ZERO { extra_limit_l_per_h } else { R::ZERO };
    let extra = ((k - k0).max(R::ZERO) * error_l_per_h).max(-limit).min(limit);
    let e = (k0 * error_l_per_h + extra) / k;
    if e.is_finite() { e } else { error_l_per_h }
}

/// One PI evaluation.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PiOutput<R: Real> {
    /// Reagent flow demanded (feed-forward + trim, limited), L/h (0 – pump maximum).
    pub flow_l_per_h: R,
    /// The trim part (proportional + integral), L/h (signed).
    pub trim_l_per_h: R,
    /// `true` when the output sits at the pump's maximum.
    pub saturated_high: bool,
    /// `true` when the rate limit held the output back this tick.
    pub rate_limited: bool,
    /// The PI gain seen from the pH, L/h per pH (Kc·e_q/e_pH; the local value when the error is
    /// tiny).
    pub scheduled_gain_l_per_h_per_ph: R,
}

/// PI state: the integrator and the last output (for the rate limit).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pi<R: Real> {
    integral_l_per_h: R,
    last_output_l_per_h: R,
}

impl<R: Real> Default for Pi<R> {
    fn default() -> Self {
        Self::new()
    }
}

impl<R: Real> Pi<R> {
    /// Integrator empty, last output zero.
    pub fn new() -> Self {
        Self { integral_l_per_h: R::ZERO, last_output_l_per_h: R::ZERO }
    }

    /// The integrator's content, L/h.
    pub fn integral_l_per_h(&self) -> R {
        self.integral_l_per_h
    }

    /// The last output, L/h.
    pub fn last_output_l_per_h(&self) -> R {
        self.last_output_l_per_h
    }

    /// Moves `delta_l_per_h` from the integrator into the feed-forward (the adaptation took it
    /// over): the integrator loses it, so the total output is unchanged.
    pub fn transfer_to_feed_forward(&mut self, delta_l_per_h: R) {
        if delta_l_per_h.is_finite() {
            self.integral_l_per_h -= delta_l_per_h;
        }
    }

    /// Tracks an output that is not ours (manual, or zero while dosing is stopped): the
    /// integrator is set so that `feed_forward + Kc·error + integral = output`, and the rate
    /// limit starts from `output`. Bumpless transfer back to automatic.
    pub fn track(&mut self, tuning: &PiTuning<R>, feed_forward_l_per_h: R, error_l_per_h: R, output_l_per_h: R) {
        let p = tuning.proportional_gain() * error_l_per_h;
        let i = output_l_per_h - feed_forward_l_per_h - p;
        if i.is_finite() && output_l_per_h.is_finite() {
            self.integral_l_per_h = i;
            self.last_output_l_per_h = output_l_per_h;
        }
    }

    /// Resets the integrator and the last output (e.g. when the active pump changes).
    pub fn reset(&mut self) {
        *self = Self::new();
    }

    /// One automatic step of `dt_s` seconds: feed-forward `ff`, flow-mapped error `e_q`
    /// (L/h), pH error `e_ph` (for the reported gain only) and the pump maximum. Constant time.
    pub fn step(
        &mut self,
        tuning: &PiTuning<R>,
        dt_s: R,
        feed_forward_l_per_h: R,
        error_l_per_h: R,
        error_ph: R,
        max_l_per_h: R,
    ) -> PiOutput<R> {
        let kc = tuning.proportional_gain();
        let p = kc * error_l_per_h;
        let di = kc * error_l_per_h * dt_s / tuning.integral_time_s;
        let candidate_i = self.integral_l_per_h + di;
        let raw = feed_forward_l_per_h + p + candidate_i;
        let max_step = tuning.rate_limit_l_per_h_per_s * dt_s;
        let lo = (self.last_output_l_per_h - max_step).max(R::ZERO);
        let hi = (self.last_output_l_per_h + max_step).min(max_l_per_h);
        let mut out = if raw.is_finite() { raw } else { self.last_output_l_per_h };
        let rate_limited = out > hi && hi < max_l_per_h || out < lo && lo > R::ZERO;
        out = out.max(lo).min(hi).max(R::ZERO).min(max_l_per_h);
        // Conditional integration: keep the new integrator only if the output could follow it.
        let pushing_up = di > R::ZERO;
        let blocked = (pushing_up && raw > out) || (!pushing_up && raw < out);
        if !blocked && candidate_i.is_finite() {
            self.integral_l_per_h = candidate_i;
        }
        self.last_output_l_per_h = out;
        let gain = if error_ph.abs() > R::from_f64(1e-6) { kc * error_l_per_h / error_ph } else { R::ZERO };
        PiOutput {
            flow_l_per_h: out,
            trim_l_per_h: out - feed_forward_l_per_h,
            saturated_high: out >= max_l_per_h,
            rate_limited,
            scheduled_gain_l_per_h_per_ph: gain,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tuning() -> PiTuning<f64> {
        PiTuning { integral_time_s: 600.0, closed_loop_time_constant_s: 300.0, rate_limit_l_per_h_per_s: 0.1 }
    }

    #[test]
    fn unit_gain_first_order_loop_settles_with_the_designed_time_constant() {
        // Plant in flow units: z' = (u − z)/τ, τ = Ti. IMC gives a first-order closed loop with
        // time constant λ: after λ the error is e^-1 of its start (within the rate limit).
        let t = PiTuning { rate_limit_l_per_h_per_s: 1e9, ..tuning() };
        let mut pi = Pi::new();
        let (target, mut z, dt) = (5.0, 0.0, 0.5);
        let mut at_lambda = f64::NAN;
        for k in 0..8000 {
            let time = f64::from(k) * dt;
            if (time - 300.0).abs() < 1e-9 {
                at_lambda = (target - z) / target;
            }
            let out = pi.step(&t, dt, 0.0, target - z, 0.0, 100.0);
            z += (out.flow_l_per_h - z) / 600.0 * dt;
        }
        assert!((at_lambda - (-1.0f64).exp()).abs() < 0.02, "{at_lambda}");
        assert!((z - target).abs() < 1e-3, "{z}");
    }

    #[test]
    fn gain_for_the_tank_follows_simc_below_the_residence_time() {
        // The example rinse tank: 250 L at 1200 L/h, τ = 750 s; Ti = 140 s, λ = 15 s.
        let t = PiTuning { integral_time_s: 140.0, closed_loop_time_constant_s: 15.0, rate_limit_l_per_h_per_s: 0.05 };
        let tau = 250.0 / 1200.0 * 3600.0;
        let s = t.for_tank(tau);
        assert!((s.proportional_gain() - 4.0 * 750.0 / 140.0).abs() < 1e-9, "{}", s.proportional_gain());
        assert_eq!((s.integral_time_s, s.rate_limit_l_per_h_per_s), (140.0, 0.05));
        // The gain follows the flow: 30 % more flow, 1/1.3 of the gain.
        let high = t.for_tank(tau / 1.3);
        assert!((high.proportional_gain() * 1.3 - s.proportional_gain()).abs() < 1e-9);
        // Ti set at the residence time (the IMC reading): Ti/λ is kept.
        let imc = PiTuning { integral_time_s: 750.0, closed_loop_time_constant_s: 50.0, ..t };
        assert_eq!(imc.for_tank(tau), imc);
        // No usable time constant: unchanged; a huge one is clamped.
        for bad in [0.0, -5.0, f64::NAN, f64::INFINITY] {
            assert_eq!(t.for_tank(bad), t, "{bad}");
        }
        let huge = t.for_tank(1e300).proportional_gain();
        assert!((huge - 4.0 * MAX_TANK_TIME_CONSTANT_S / 140.0).abs() < 1e-6, "{huge}");
        // f32 gives the same gain.
        let t32 = PiTuning::<f32> {
            integral_time_s: 140.0,
            closed_loop_time_constant_s: 15.0,
            rate_limit_l_per_h_per_s: 0.05,
        };
        assert!((t32.for_tank(750.0).proportional_gain() - 150.0 / 7.0).abs() < 1e-4);
    }

    #[test]
    fn the_extra_action_of_the_tank_gain_is_bounded() {
        let base =
            PiTuning { integral_time_s: 140.0, closed_loop_time_constant_s: 15.0, rate_limit_l_per_h_per_s: 0.05 };
        let tank = base.for_tank(750.0);
        let (k0, k) = (base.proportional_gain(), tank.proportional_gain());
        // A small error: the tank gain acts in full.
        assert!((boosted_error(&base, &tank, 0.01, 0.5) - 0.01).abs() < 1e-15);
        assert!((boosted_error(&base, &tank, -0.01, 0.5) + 0.01).abs() < 1e-15);
        // A large one: the configured gain's action plus the bound, either sign.
        for e in [0.5, -0.5] {
            let p = k * boosted_error(&base, &tank, e, 0.5);
            assert!((p - (k0 * e + 0.5_f64.copysign(e))).abs() < 1e-12, "{e}: {p}");
        }
        // No bound, or no tank gain: the configured gain alone.
        for limit in [0.0, -1.0, f64::NAN] {
            assert!((k * boosted_error(&base, &tank, 0.5, limit) - k0 * 0.5).abs() < 1e-12, "{limit}");
        }
        assert_eq!(boosted_error(&base, &base, 0.5, 1.0), 0.5);
        let broken = PiTuning { closed_loop_time_constant_s: 0.0, ..base };
        assert_eq!(boosted_error(&base, &broken, 0.5, 1.0), 0.5);
    }

    /// Integrated error of a load step on a lag-dominant tank in flow units, z' = (u(t − θ) − d − z)/τ,
    /// with the PI at `tuning`. Returns (∫|e| dt, |e| over the last hour).
    fn load_step(tuning: &PiTuning<f64>, tau: f64, theta: f64) -> (f64, f64) {
        let dt = 1.0;
        let d = 1.0;
        let mut pi = Pi::new();
        let mut z = 0.0;
        let lag = theta as usize;
        let mut line = [0.0_f64; 64];
        let (mut iae, mut late) = (0.0, 0.0_f64);
        let end = 6 * 3600;
        for k in 0..end {
            let e = 0.0 - z;
            let out = pi.step(tuning, dt, 0.0, e, 0.0, 100.0);
            line[k % 64] = out.flow_l_per_h;
            let arriving = if k >= lag { line[(k - lag) % 64] } else { 0.0 };
            z += (arriving - d - z) / tau * dt;
            iae += e.abs() * dt;
            if k > end - 3600 {
                late = late.max(e.abs());
            }
        }
        (iae, late)
    }

    #[test]
    fn the_tank_gain_rejects_a_load_step_faster_and_still_settles() {
        // A 750 s tank with 20 s of dead time, tuned by SIMC for τc = 15 s: Ti = 4·(15 + 20).
        let t = PiTuning { integral_time_s: 140.0, closed_loop_time_constant_s: 15.0, rate_limit_l_per_h_per_s: 1e9 };
        let (plain, plain_late) = load_step(&t, 750.0, 20.0);
        let (tank, tank_late) = load_step(&t.for_tank(750.0), 750.0, 20.0);
        // For a PI, ∫e over a load step is d·Ti/Kc (the integrator must take up d): 15 s with
        // Ti/λ, 140²/3000 = 6.5 s with the tank's gain; |e| ≥ e, so the IAE is at least that.
        assert!(plain >= 15.0 * 0.99 && tank >= 140.0 * 140.0 / 3000.0 * 0.99, "{plain} {tank}");
        assert!(tank < 0.7 * plain, "tank gain {tank} vs Ti/λ {plain}");
        assert!(plain_late < 1e-6 && tank_late < 1e-6, "{plain_late} {tank_late}");
        // With 50 % more dead time than it was tuned for the loop still settles.
        let (_, slow_late) = load_step(&t.for_tank(750.0), 750.0, 30.0);
        assert!(slow_late < 1e-6, "{slow_late}");
    }

    #[test]
    fn anti_windup_at_the_pump_maximum() {
        let t = tuning();
        let mut pi = Pi::new();
        for _ in 0..10_000 {
            pi.step(&t, 1.0, 1.0, 50.0, 1.0, 2.0);
        }
        assert_eq!(pi.last_output_l_per_h(), 2.0);
        // The integrator did not wind up: one tick of negative error brings the output down.
        let out = pi.step(&t, 1.0, 1.0, -1.0, -0.1, 2.0);
        assert!(out.flow_l_per_h < 2.0, "{out:?}");
    }

    #[test]
    fn rate_limit_and_bumpless_transfer() {
        let t = tuning();
        let mut pi = Pi::new();
        pi.track(&t, 3.0, 0.4, 1.5);
        let out = pi.step(&t, 1.0, 3.0, 0.4, 0.1, 10.0);
        assert!((out.flow_l_per_h - 1.5).abs() < 0.1 + 1e-12, "{out:?}");
        let mut pi = Pi::new();
        let out = pi.step(&t, 1.0, 5.0, 0.0, 0.0, 10.0);
        assert!((out.flow_l_per_h - 0.1).abs() < 1e-12 && out.rate_limited, "{out:?}");
    }

    #[test]
    fn transfer_keeps_the_output() {
        let t = PiTuning { rate_limit_l_per_h_per_s: 1e9, ..tuning() };
        let mut pi = Pi::new();
        pi.track(&t, 2.0, 0.0, 2.5);
        pi.transfer_to_feed_forward(0.3);
        let out = pi.step(&t, 1e-9, 2.3, 0.0, 0.0, 10.0);
        assert!((out.flow_l_per_h - 2.5).abs() < 1e-9, "{out:?}");
    }
}
