//! The chemistry the loop runs on: the configured influent, the reagents, the steady-state
//! reagent flow for a pH (the titration curve read backwards), and the cached feed-forward.
//!
//! Everything here rests on one linear fact of the dose model (see [`crate::titration::dose`]):
//! influent at flow `Q_in` with charge excess `G(x) = g_in(x) + Δc` at a trial pH `x`, mixed with
//! reagent at flow `Q_r` with charge excess `g_r(x)`, sits at `x` exactly when
//! `Q_in·G(x) + Q_r·g_r(x) = 0`. Here `Δc` (eq/L) is the adaptation's correction of the
//! influent's strong-ion excess ([`super::adapt`]).

use super::positive;
use crate::chem::{CompositionError, Equilibrium, Solution, SolveError};
use crate::real::Real;
use crate::titration::dose::{DoseError, DoseRequest, plan};
use crate::units::Celsius;
use crate::units::{InvalidInput, LitresPerHour, Ph};

/// Room for acid–base systems in a reagent (sulfuric acid needs one, caustic none).
pub const REAGENT_CAPACITY: usize = 2;

/// Which of the two reagent pumps.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ReagentSide {
    /// The caustic (base) pump: raises the pH.
    Caustic,
    /// The acid pump: lowers the pH.
    Acid,
}

impl ReagentSide {
    /// Index 0 for caustic, 1 for acid (used for the two-slot arrays of the loop).
    pub fn index(self) -> usize {
        match self {
            Self::Caustic => 0,
            Self::Acid => 1,
        }
    }

    /// This side's entry of a two-slot array (caustic first, as [`ReagentSide::index`]):
    /// exact by construction, no index to check.
    pub(crate) fn of<T>(self, pair: &[T; 2]) -> &T {
        let [caustic, acid] = pair;
        match self {
            Self::Caustic => caustic,
            Self::Acid => acid,
        }
    }

    /// [`ReagentSide::of`], mutable.
    pub(crate) fn of_mut<T>(self, pair: &mut [T; 2]) -> &mut T {
        let [caustic, acid] = pair;
        match self {
            Self::Caustic => caustic,
            Self::Acid => acid,
        }
    }

    /// The other side.
    pub fn other(self) -> Self {
        match self {
            Self::Caustic => Self::Acid,
            Self::Acid => Self::Caustic,
        }
    }
}

/// A reagent as the loop sees it: its solution (mol/L, from mass percent and density) and the
/// highest flow its pump delivers.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reagent<R: Real> {
    /// The reagent's composition (its temperature is replaced by the influent's).
    pub solution: Solution<R, REAGENT_CAPACITY>,
    /// Highest flow of its pump, L/h (> 0).
    pub max_l_per_h: R,
}

/// Everything the feed-forward was computed from and what it gave.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FeedForward<R: Real> {
    /// Influent flow it was computed for, L/h.
    pub influent_flow_l_per_h: R,
    /// Temperature it was computed for, °C.
    pub temperature_c: R,
    /// Adaptation correction it was computed with, eq/L.
    pub correction_eq_per_l: R,
    /// Steady-state reagent flow that holds the setpoint, L/h (≥ 0).
    pub flow_l_per_h: R,
    /// Local process gain dpH/dQ_r at the setpoint, pH per L/h (positive for caustic).
    pub gain_ph_per_l_per_h: R,
    /// Ionic strength of the mixture at the setpoint, mol/L (activity coefficients of the loop).
    pub ionic_strength_mol_per_l: R,
    /// The reagent's charge excess at the setpoint, g_r(sp), eq/L.
    pub reagent_excess_at_setpoint_eq_per_l: R,
}

/// Why the loop's chemistry could not be evaluated.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ModelError {
    /// The dose model refused (unreachable setpoint, invalid flow, …).
    Dose(DoseError),
    /// Building the adapted influent or the tank mixture failed.
    Composition(CompositionError),
    /// The tank model's pH solve failed.
    Solve(SolveError),
    /// No reagent is configured on the requested side.
    NoReagent,
}

impl core::fmt::Display for ModelError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Dose(e) => core::fmt::Display::fmt(e, f),
            Self::Composition(e) => core::fmt::Display::fmt(e, f),
            Self::Solve(e) => core::fmt::Display::fmt(e, f),
            Self::NoReagent => f.write_str("no reagent is configured on that side"),
        }
    }
}

impl core::error::Error for ModelError {}

/// The influent as configured, adapted by `correction_eq_per_l` (a strong cation excess when
/// positive, anion when negative) and brought to `temperature`.
pub fn adapted_influent<R: Real, const N: usize>(
    influent: &Solution<R, N>,
    temperature: Celsius<R>,
    correction_eq_per_l: R,
) -> Result<Solution<R, N>, CompositionError> {
    let mut s = influent.clone();
    s.set_temperature(temperature);
    if correction_eq_per_l > R::ZERO {
        s.add_strong_ion(1, correction_eq_per_l)?;
    } else if correction_eq_per_l < R::ZERO {
        s.add_strong_ion(-1, -correction_eq_per_l)?;
    }
    Ok(s)
}

/// Computes the feed-forward: one [`plan`] (one influent solve and at most
/// [`crate::titration::dose::MAX_DOSE_ROUNDS`] × two charge-balance evaluations; no pump or
/// band checks — those belong to the boot checks).
///
/// `N` is the capacity of the mixture too (influent plus reagent systems).
pub fn compute<R: Real, const N: usize>(
    adapted: &Solution<R, N>,
    influent_flow_l_per_h: R,
    reagent: &Reagent<R>,
    setpoint_ph: R,
    correction_eq_per_l: R,
) -> Result<FeedForward<R>, ModelError> {
    let checked = |e: InvalidInput| ModelError::Dose(DoseError::Input(e));
    let request = DoseRequest::new(Ph::new(setpoint_ph).map_err(checked)?);
    let flow = LitresPerHour::new(influent_flow_l_per_h).map_err(checked)?;
    let p = plan(adapted, flow, &reagent.solution, &request).map_err(ModelError::Dose)?;
    let mut r = reagent.solution.clone();
    r.set_temperature(adapted.temperature());
    let gr = r.charge_excess_eq_per_l(setpoint_ph, p.mixture_ionic_strength_mol_per_l);
    Ok(FeedForward {
        influent_flow_l_per_h,
        temperature_c: adapted.temperature().celsius(),
        correction_eq_per_l,
        flow_l_per_h: p.reagent_flow_l_per_h,
        gain_ph_per_l_per_h: p.gain_ph_per_l_per_h,
        ionic_strength_mol_per_l: p.mixture_ionic_strength_mol_per_l,
        reagent_excess_at_setpoint_eq_per_l: gr,
    })
}

/// Dead bands on the feed-forward's inputs: it is recomputed only when one of them is crossed.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DeadBands<R: Real> {
    /// Relative change of the influent flow, fraction (0.001–0.5; e.g. 0.02 = 2 %).
    pub flow_fraction: R,
    /// Change of temperature, °C (0.01–10).
    pub temperature_c: R,
    /// Change of the adaptation correction, as a fraction of the correction's bound (0.001–0.5).
    pub correction_fraction: R,
}

impl<R: Real> FeedForward<R> {
    /// `true` when the inputs have moved beyond `bands` since this value was computed.
    /// `correction_bound_eq_per_l` is the adaptation's bound (the scale of its dead band).
    pub fn is_stale(
        &self,
        bands: &DeadBands<R>,
        influent_flow_l_per_h: R,
        temperature_c: R,
        correction_eq_per_l: R,
        correction_bound_eq_per_l: R,
    ) -> bool {
        let df = (influent_flow_l_per_h - self.influent_flow_l_per_h).abs();
        let dt = (temperature_c - self.temperature_c).abs();
        let dc = (correction_eq_per_l - self.correction_eq_per_l).abs();
        df > bands.flow_fraction * self.influent_flow_l_per_h.abs()
            || dt > bands.temperature_c
            || dc > bands.correction_fraction * correction_bound_eq_per_l
    }
}

/// The steady-state reagent flow (L/h) that would hold the tank at `ph`: the titration curve
/// read backwards, `Q*(x) = −Q_in·G(x)/g_r(x)` with `G = g_in + correction_eq_per_l` (the charge
/// excess is linear in the strong ions, so the correction adds to it), activity coefficients at
/// `ionic_strength_mol_per_l`. Two charge-balance evaluations.
///
/// Where the reagent can no longer pull towards `ph` (`ph` at or beyond the reagent's own pH,
/// `g_r` of the wrong sign or vanishing), the flow is unbounded: `saturation_l_per_h` is
/// returned instead. The result is clamped to ±`saturation_l_per_h`.
#[allow(clippy::too_many_arguments, reason = "the closed form's eight inputs, each a plain value")]
pub fn steady_flow_l_per_h<R: Real, const N: usize>(
    influent: &Solution<R, N>,
    correction_eq_per_l: R,
    influent_flow_l_per_h: R,
    reagent: &Solution<R, REAGENT_CAPACITY>,
    side: ReagentSide,
    ph: R,
    ionic_strength_mol_per_l: R,
    saturation_l_per_h: R,
) -> R {
    let g_in = influent.charge_excess_eq_per_l(ph, ionic_strength_mol_per_l) + correction_eq_per_l;
    let g_r = reagent.charge_excess_eq_per_l(ph, ionic_strength_mol_per_l);
    // Caustic pulls the pH up: its excess is positive below its own pH; acid the reverse.
    let pulls = match side {
        ReagentSide::Caustic => g_r > R::ZERO,
        ReagentSide::Acid => g_r < R::ZERO,
    };
    let tiny = R::from_f64(1e-12);
    if !pulls || g_r.abs() < tiny {
        return saturation_l_per_h;
    }
    let q = -influent_flow_l_per_h * g_in / g_r;
    if q.is_finite() { q.max(-saturation_l_per_h).min(saturation_l_per_h) } else { saturation_l_per_h }
}

/// Solves the modelled tank: influent (adapted) and each reagent at the volume fractions
/// `fractions` (caustic, acid; each 0–1, sum < 1), warm-started from `previous`. `N` must hold
/// the influent's systems plus both reagents'. One mix per reagent and one warm solve.
pub fn tank_equilibrium<R: Real, const N: usize>(
    adapted: &Solution<R, N>,
    reagents: &[Option<Reagent<R>>; 2],
    fractions: [R; 2],
    previous: Option<&Equilibrium<R>>,
) -> Result<Equilibrium<R>, ModelError> {
    let [phi_c, phi_a] = fractions;
    let mut influent_share = R::ONE - phi_c.max(R::ZERO) - phi_a.max(R::ZERO);
    if !positive(influent_share) {
        return Err(ModelError::Composition(CompositionError::InvalidFlow {
            first_l_per_h: influent_share.to_f64(),
            second_l_per_h: (phi_c + phi_a).to_f64(),
        }));
    }
    let mut tank = adapted.clone();
    for (slot, phi) in reagents.iter().zip(fractions) {
        if let Some(r) = slot
            && phi > R::ZERO
        {
            let mut rs = r.solution.clone();
            rs.set_temperature(adapted.temperature());
            // Mixing `tank` (share so far) with this reagent at fraction `phi` of the whole.
            tank = tank.mix(influent_share, &rs, phi).map_err(ModelError::Composition)?;
            influent_share += phi;
        }
    }
    let eq = match previous {
        Some(p) => tank.solve_warm(p),
        None => tank.solve(),
    };
    eq.map_err(ModelError::Solve)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Activity;

    fn rinse() -> Solution<f64, 6> {
        let mut s = Solution::new(Celsius::new(20.0).unwrap(), Activity::Ideal);
        s.add_formula("HCl", 0.002).unwrap();
        s.add_formula("NaHCO3", 0.0008).unwrap();
        s
    }

    fn caustic() -> Reagent<f64> {
        let mut s = Solution::new(Celsius::new(20.0).unwrap(), Activity::Ideal);
        s.add_formula("NaOH", 1.0).unwrap();
        Reagent { solution: s, max_l_per_h: 10.0 }
    }

    #[test]
    fn steady_flow_at_the_setpoint_is_the_feed_forward() {
        let inf = rinse();
        let r = caustic();
        let ff = compute(&inf, 1000.0, &r, 7.0, 0.0).unwrap();
        let q = steady_flow_l_per_h(
            &inf,
            0.0,
            1000.0,
            &r.solution,
            ReagentSide::Caustic,
            7.0,
            ff.ionic_strength_mol_per_l,
            100.0,
        );
        assert!((q - ff.flow_l_per_h).abs() < 1e-9 * ff.flow_l_per_h, "{q} vs {}", ff.flow_l_per_h);
        // Mixing at that flow and solving gives the setpoint back.
        let tank =
            tank_equilibrium(&inf, &[Some(r.clone()), None], [ff.flow_l_per_h / (1000.0 + ff.flow_l_per_h), 0.0], None)
                .unwrap();
        assert!((tank.ph - 7.0).abs() < 1e-6, "{}", tank.ph);
    }

    #[test]
    fn steady_flow_rises_with_ph_and_saturates_beyond_the_reagent() {
        let inf = rinse();
        let r = caustic();
        let f = |ph| steady_flow_l_per_h(&inf, 0.0, 1000.0, &r.solution, ReagentSide::Caustic, ph, 0.0, 50.0);
        assert!(f(5.0) < f(7.0) && f(7.0) < f(9.0));
        assert_eq!(f(14.5), 50.0);
        // Below the influent's own pH the flow is negative (the tank would need acid).
        assert!(f(2.0) < 0.0);
    }

    #[test]
    fn correction_moves_the_feed_forward_by_the_closed_form() {
        let inf = rinse();
        let r = caustic();
        let base = compute(&inf, 1000.0, &r, 7.0, 0.0).unwrap();
        let dc = -2e-4; // 0.2 meq/L more strong acid than configured
        let a = adapted_influent(&inf, Celsius::new(20.0).unwrap(), dc).unwrap();
        let adapted = compute(&a, 1000.0, &r, 7.0, dc).unwrap();
        let expect = base.flow_l_per_h - 1000.0 * dc / base.reagent_excess_at_setpoint_eq_per_l;
        assert!((adapted.flow_l_per_h - expect).abs() < 1e-6, "{} vs {expect}", adapted.flow_l_per_h);
    }

    #[test]
    fn dead_bands() {
        let inf = rinse();
        let ff = compute(&inf, 1000.0, &caustic(), 7.0, 0.0).unwrap();
        let b = DeadBands { flow_fraction: 0.02, temperature_c: 0.5, correction_fraction: 0.05 };
        assert!(!ff.is_stale(&b, 1010.0, 20.2, 0.0, 1e-3));
        assert!(ff.is_stale(&b, 1030.0, 20.0, 0.0, 1e-3));
        assert!(ff.is_stale(&b, 1000.0, 21.0, 0.0, 1e-3));
        assert!(ff.is_stale(&b, 1000.0, 20.0, 1e-4, 1e-3));
    }
}
