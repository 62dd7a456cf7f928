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

impl<R: Real> PiTuning<R> {
    /// Proportional gain Kc = Ti/λ (dimensionless: L/h of output per L/h of error).
    pub fn proportional_gain(&self) -> R {
        self.integral_time_s / self.closed_loop_time_constant_s
    }
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
