//! Remedies searched jointly with the plan's own checks: a remedy is advised only when the
//! plan with it applied passes them.
//!
//! A weaker reagent is the reagent mixed with water (its totals and strong ions scaled by
//! 1/f, exactly what a user's weaker grade is in the model), planned again by
//! `dose::plan_with` without remedies. Bounded: at most 2 +
//! [`MAX_DILUTION_HALVINGS`] such plans.

use crate::chem::Solution;
use crate::real::Real;
use crate::units::LitresPerHour;

use super::dose::{DoseCheck, DosePlan, DoseRequest, MAX_DILUTION, plan_with};

/// Most halvings of the bisection on log10 of the dilution factor (from 6 decades down to
/// 0.02 decade, 5 %: 9 halvings are enough; the bound is a guard).
pub const MAX_DILUTION_HALVINGS: u32 = 30;

/// `reagent` diluted `factor`-fold with water (`factor` ≥ 1).
fn diluted<R: Real, const M: usize>(reagent: &Solution<R, M>, factor: f64) -> Option<Solution<R, M>> {
    let water: Solution<R, 1> = Solution::new(reagent.temperature(), reagent.activity());
    reagent.mix(R::ONE, &water, R::from_f64(factor - 1.0)).ok()
}

/// Whether a plan passes the checks a reagent's strength decides: one step fits the band, the
/// flow is not below the pump's turndown. (Its pump capacity is judged by the caller.)
fn steady(p: &DosePlan<impl Real>) -> bool {
    !p.checks.iter().any(|c| matches!(c, DoseCheck::TooSteep { .. } | DoseCheck::BelowTurndown { .. }))
}

/// The plan with the reagent diluted `factor`-fold, if one exists.
fn trial<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    flow: LitresPerHour<R>,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
    factor: f64,
) -> Option<DosePlan<R>> {
    let weaker = diluted(reagent, factor)?;
    plan_with(influent, flow, &weaker, request, false).ok()
}

/// Smallest dilution factor f (1–[`MAX_DILUTION`], found to 5 %) whose plan passes the
/// steepness and turndown checks, with that plan's reagent flow, L/h; `None` when no dilution
/// up to [`MAX_DILUTION`] does. Whether the flow fits the pump's maximum is left to the caller
/// (it is the one thing a weaker reagent makes worse). A weaker reagent never makes one step
/// steeper nor the flow smaller, so the passing factors form an interval from f upward; the
/// bisection keeps a factor whose plan passed.
pub(crate) fn dilution<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    flow: LitresPerHour<R>,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
) -> Option<(R, R)> {
    let passes = |log10_f: f64| {
        trial(influent, flow, reagent, request, libm::pow(10.0, log10_f)).filter(steady).map(|p| p.reagent_flow_l_per_h)
    };
    let (mut lo, mut hi) = (0.0_f64, libm::log10(MAX_DILUTION)); // log10 f: lo fails, hi passes
    let mut best = passes(hi)?;
    for _ in 0..MAX_DILUTION_HALVINGS {
        if hi - lo < 0.02 {
            break;
        }
        let mid = 0.5 * (lo + hi);
        match passes(mid) {
            Some(q) => (hi, best) = (mid, q),
            None => lo = mid,
        }
    }
    Some((R::from_f64(libm::pow(10.0, hi)), best))
}
