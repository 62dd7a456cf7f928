//! Adaptation and the model residual.
//!
//! **Tank model.** The loop keeps the volume fraction φ of each reagent in the tank, from the
//! flows actually delivered: a well-mixed tank of volume V obeys
//! `dφ/dt = (Q_r − (Q_in + Q_total)·φ)/V`, integrated exactly over a tick for constant flows
//! (no step-size error). The tank's totals are then `(1 − Σφ)·influent + Σ φ·reagent`.
//!
//! **Adaptation** inverts the charge balance of that mixture at the measured pH `y` for the one
//! number the chemistry gives meaning to, the influent's effective strong-ion excess `Δc`:
//! `(1 − Σφ)·(g_in(y) + Δc) + Σ φ·g_r(y) = 0` gives
//! `Δc_raw = −g_in(y) − Σ φ·g_r(y)/(1 − Σφ)` — two charge-balance evaluations, no solve. The
//! raw value is clamped to ±bound, low-pass filtered with a configured time constant, and
//! frozen (not updated) whenever its inputs are not trustworthy.
//!
//! **Residual.** The model's pH for the tank (one warm solve) with the raw estimate clamped to
//! its bound, against the measured pH. While the raw estimate is inside the bound the model
//! explains the measurement by construction and the residual is near zero (only the activity
//! coefficients differ); the residual is what the model cannot explain with a correction
//! within its bound — an influent unlike the configured one, a probe far off, a pump delivering
//! much less than it reports. A residual beyond its bound for the configured time raises a
//! warning with the numbers and freezes adaptation until the residual comes back inside half
//! its bound (or a reset). A probe error whose dose equivalent lies within the bound is
//! absorbed by adaptation and *not* detected here — on a steep curve that can be several pH
//! (measured: a single probe reading 4 pH high on the plating-rinse test water was absorbed with
//! a ±50 % bound). That is what redundant probes and the hard pH limits are for.

use super::positive;
use crate::real::Real;

/// Adaptation and residual settings.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdaptSettings<R: Real> {
    /// Tank (liquid) volume, L (1–1 000 000).
    pub tank_volume_l: R,
    /// Time constant of the estimate's low-pass filter, s (≥ the tick; typically several tank
    /// residence times).
    pub filter_time_s: R,
    /// Largest correction, as a fraction of the influent's design reagent demand |g_in(sp)|
    /// (0–2; e.g. 0.5 = ±50 %).
    pub bound_fraction: R,
    /// Residual beyond which the model and the probe disagree, pH (0.05–5).
    pub residual_bound_ph: R,
    /// Time the residual must stay beyond its bound before the warning, s (≥ 0).
    pub residual_time_s: R,
}

/// Smallest bound on the correction, eq/L: keeps adaptation possible on an influent whose
/// design demand at the setpoint is nearly zero.
pub const MIN_CORRECTION_BOUND_EQ_PER_L: f64 = 1e-5;

/// The model-residual warning: "model and probe disagree by `residual_ph` for `for_s`".
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ResidualWarning<R: Real> {
    /// Measured minus modelled pH, pH.
    pub residual_ph: R,
    /// How long it has been beyond the bound, s.
    pub for_s: R,
}

/// Adaptation and residual state.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Adaptation<R: Real> {
    fractions: [R; 2],
    correction_eq_per_l: R,
    beyond_s: R,
    warning: bool,
}

impl<R: Real> Default for Adaptation<R> {
    fn default() -> Self {
        Self::new()
    }
}

impl<R: Real> Adaptation<R> {
    /// No reagent in the tank, no correction, no warning.
    pub fn new() -> Self {
        Self { fractions: [R::ZERO; 2], correction_eq_per_l: R::ZERO, beyond_s: R::ZERO, warning: false }
    }

    /// Modelled volume fraction of each reagent in the tank (caustic, acid), 0–1.
    pub fn fractions(&self) -> [R; 2] {
        self.fractions
    }

    /// The current correction of the influent's strong-ion excess, eq/L.
    pub fn correction_eq_per_l(&self) -> R {
        self.correction_eq_per_l
    }

    /// `true` while the residual warning stands (adaptation frozen).
    pub fn warning(&self) -> bool {
        self.warning
    }

    /// Clears the residual warning and its timer (operator reset).
    pub fn clear_warning(&mut self) {
        self.warning = false;
        self.beyond_s = R::ZERO;
    }

    /// Advances the tank model over `dt_s` with the flows delivered during it (L/h): exact
    /// solution of the linear mixing equation for constant flows. Constant time.
    pub fn advance_tank(
        &mut self,
        settings: &AdaptSettings<R>,
        dt_s: R,
        influent_l_per_h: R,
        delivered_l_per_h: [R; 2],
    ) {
        let [qc, qa] = delivered_l_per_h.map(|q| if q.is_finite() { q.max(R::ZERO) } else { R::ZERO });
        let qin = if influent_l_per_h.is_finite() { influent_l_per_h.max(R::ZERO) } else { R::ZERO };
        let total = qin + qc + qa;
        if !positive(total) || !positive(settings.tank_volume_l) || !positive(dt_s) {
            return;
        }
        // φ → φ∞ = Q_r/total with rate total/V (flows in L/h, time in s).
        let rate_per_s = total / settings.tank_volume_l / R::from_f64(3600.0);
        let decay = (-(rate_per_s * dt_s)).exp();
        for (phi, q) in self.fractions.iter_mut().zip([qc, qa]) {
            let target = q / total;
            let next = target + (*phi - target) * decay;
            if next.is_finite() {
                *phi = next.max(R::ZERO).min(R::ONE);
            }
        }
    }

    /// Raw correction from the charge balance at the measured pH: `g_in` is the configured
    /// influent's charge excess at the measured pH (without correction), `g_r` the reagents'.
    pub fn raw_correction(&self, g_in_eq_per_l: R, g_r_eq_per_l: [R; 2]) -> Option<R> {
        let [pc, pa] = self.fractions;
        let share = R::ONE - pc - pa;
        if !positive(share - R::from_f64(1e-6)) {
            return None;
        }
        let raw = -g_in_eq_per_l - (pc * g_r_eq_per_l[0] + pa * g_r_eq_per_l[1]) / share;
        raw.is_finite().then_some(raw)
    }

    /// Filters `raw` into the correction over `dt_s`, clamped to ±`bound_eq_per_l`; does
    /// nothing when `trusted` is false or the residual warning stands. Returns whether it
    /// updated.
    pub fn update(
        &mut self,
        settings: &AdaptSettings<R>,
        dt_s: R,
        raw: Option<R>,
        bound_eq_per_l: R,
        trusted: bool,
    ) -> bool {
        let Some(raw) = raw else { return false };
        if !trusted || self.warning || !positive(dt_s) || !positive(bound_eq_per_l) {
            return false;
        }
        let target = raw.max(-bound_eq_per_l).min(bound_eq_per_l);
        let alpha = R::ONE - (-(dt_s / settings.filter_time_s.max(dt_s))).exp();
        let next = self.correction_eq_per_l + (target - self.correction_eq_per_l) * alpha;
        if next.is_finite() {
            self.correction_eq_per_l = next.max(-bound_eq_per_l).min(bound_eq_per_l);
            true
        } else {
            false
        }
    }

    /// Times the residual (measured − modelled pH). Returns the warning while it stands. The
    /// timer runs only while `trusted` (probe healthy, flow present); it restarts whenever the
    /// residual returns inside its bound, and the warning clears once the residual is back
    /// inside half the bound.
    pub fn watch_residual(
        &mut self,
        settings: &AdaptSettings<R>,
        dt_s: R,
        residual_ph: R,
        trusted: bool,
    ) -> Option<ResidualWarning<R>> {
        let r = residual_ph.abs();
        if !trusted || !residual_ph.is_finite() {
            self.beyond_s = R::ZERO;
        } else if r > settings.residual_bound_ph {
            self.beyond_s += dt_s;
            if self.beyond_s >= settings.residual_time_s {
                self.warning = true;
            }
        } else {
            self.beyond_s = R::ZERO;
            if r <= settings.residual_bound_ph * R::from_f64(0.5) {
                self.warning = false;
            }
        }
        self.warning.then_some(ResidualWarning { residual_ph, for_s: self.beyond_s })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn settings() -> AdaptSettings<f64> {
        AdaptSettings {
            tank_volume_l: 2000.0,
            filter_time_s: 600.0,
            bound_fraction: 0.5,
            residual_bound_ph: 0.5,
            residual_time_s: 600.0,
        }
    }

    #[test]
    fn tank_fraction_reaches_the_flow_ratio_with_the_residence_time() {
        let s = settings();
        let mut a = Adaptation::new();
        // 1000 L/h + 10 L/h into 2000 L: τ = 2000/1010 h = 7129 s.
        a.advance_tank(&s, 7128.7, 1000.0, [10.0, 0.0]);
        let target = 10.0 / 1010.0;
        assert!((a.fractions()[0] / target - (1.0 - (-1.0f64).exp())).abs() < 1e-4);
        // One long step and many short ones agree (exact integration).
        let mut b = Adaptation::new();
        for _ in 0..1000 {
            b.advance_tank(&s, 7.1287, 1000.0, [10.0, 0.0]);
        }
        assert!((a.fractions()[0] - b.fractions()[0]).abs() < 1e-12);
    }

    #[test]
    fn raw_correction_inverts_the_mixture_balance() {
        let mut a = Adaptation::<f64>::new();
        a.fractions = [0.01, 0.0];
        // Influent excess −2 meq/L at the measured pH, reagent +0.99 eq/L: balance of the
        // mixture needs Δc = 2e-3 − 0.01·0.99/0.99 = −8e-3.
        let raw = a.raw_correction(-2e-3, [0.99, 0.0]).unwrap();
        assert!((0.99 * (-2e-3 + raw) + 0.01 * 0.99).abs() < 1e-15, "{raw}");
    }

    #[test]
    fn update_is_filtered_bounded_and_frozen() {
        let s = settings();
        let mut a = Adaptation::<f64>::new();
        assert!(!a.update(&s, 1.0, Some(1e-3), 5e-4, false));
        assert_eq!(a.correction_eq_per_l(), 0.0);
        for _ in 0..100_000 {
            a.update(&s, 1.0, Some(1e-3), 5e-4, true);
        }
        assert!((a.correction_eq_per_l() - 5e-4).abs() < 1e-12);
        let mut b = Adaptation::<f64>::new();
        b.update(&s, 600.0, Some(1e-4), 5e-4, true);
        assert!((b.correction_eq_per_l() - 1e-4 * (1.0 - (-1.0f64).exp())).abs() < 1e-12);
    }

    #[test]
    fn residual_warning_needs_time_and_freezes_adaptation() {
        let s = settings();
        let mut a = Adaptation::<f64>::new();
        for _ in 0..599 {
            assert!(a.watch_residual(&s, 1.0, 0.8, true).is_none());
        }
        let w = a.watch_residual(&s, 1.0, 0.8, true).unwrap();
        assert_eq!(w.for_s, 600.0);
        assert!(!a.update(&s, 1.0, Some(1e-4), 1e-3, true), "frozen while warning");
        // Back inside the bound but not inside half of it: still warning.
        assert!(a.watch_residual(&s, 1.0, 0.4, true).is_some());
        assert!(a.watch_residual(&s, 1.0, 0.2, true).is_none());
        // An untrusted probe does not accumulate time.
        for _ in 0..1000 {
            assert!(a.watch_residual(&s, 1.0, 2.0, false).is_none());
        }
    }
}
