//! Titration curves: pH of a sample against added titrant, with adaptive spacing, and the
//! equivalence points — from the curve (maximum slope) and from the model (stoichiometry).

use heapless::Vec;

use crate::chem::system::MAX_STEPS_U8;
use crate::chem::{CompositionError, Equilibrium, Solution, SolveError};
use crate::invariant::holds;
use crate::real::Real;

/// A local slope maximum counts as an inflection when it is at least this many times steeper
/// than the flattest part of the curve on both sides of it (common practice, no source). The
/// total-alkalinity endpoint (pH about 4.3) of a water with acetate and phosphate beside its
/// carbonate stands only 2.97–3.12 times above its flank between 5 and 50 °C (measured with
/// exact slopes on the invented rinse of the tests below; 3.19–3.30 ideal), so a ratio of 3
/// would lose it at some temperatures; 2 keeps it with margin.
pub const INFLECTION_PROMINENCE: f64 = 2.0;

/// Golden-section steps that refine one slope extremum in [`Titration::inflections_exact`]:
/// the bracket (two curve segments) shrinks by 0.618^32 ≈ 2e-7.
pub const GOLDEN_ITERATIONS: usize = 32;

/// Most slope extrema [`Titration::inflections_exact`] refines on one curve.
pub const MAX_EXTREMA: usize = 48;

/// One point of a titration curve.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CurvePoint<R: Real> {
    /// Titrant added, L.
    pub titrant_l: R,
    /// pH of the mixture.
    pub ph: R,
    /// Buffer capacity of the mixture, mol/L per pH.
    pub buffer_capacity_mol_per_l_per_ph: R,
}

/// An equivalence point.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EquivalencePoint<R: Real> {
    /// Titrant added at the point, L.
    pub titrant_l: R,
    /// pH there: the pH of the salt solution formed, rarely 7.
    pub ph: R,
    /// For model points: the system key and step (1-based) completed there, or `("strong", 0)`
    /// where the strong ions alone balance; `("", 0)` for a point found on a curve.
    pub system: &'static str,
    /// See `system`.
    pub step: u8,
}

/// Why a curve could not be computed.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CurveError {
    /// Sample volume or titrant range not finite or ≤ 0.
    InvalidRange,
    /// Mixing failed (e.g. capacity `N` too small for the titrant's systems).
    Composition(CompositionError),
    /// A solve failed.
    Solve(SolveError),
}

impl core::fmt::Display for CurveError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::InvalidRange => f.write_str("sample volume and titrant range must be finite and positive"),
            Self::Composition(e) => core::fmt::Display::fmt(e, f),
            Self::Solve(e) => core::fmt::Display::fmt(e, f),
        }
    }
}

impl core::error::Error for CurveError {}

/// A titration: `sample_volume_l` of `sample` receives `titrant`.
#[derive(Clone, Debug, PartialEq)]
pub struct Titration<'a, R: Real, const N: usize, const M: usize> {
    /// The sample (its capacity `N` must also hold the titrant's systems).
    pub sample: &'a Solution<R, N>,
    /// Sample volume, L (> 0).
    pub sample_volume_l: R,
    /// The titrant.
    pub titrant: &'a Solution<R, M>,
}

impl<R: Real, const N: usize, const M: usize> Titration<'_, R, N, M> {
    fn check(&self) -> Result<(), CurveError> {
        let v = self.sample_volume_l.to_f64();
        if v.is_finite() && v > 0.0 { Ok(()) } else { Err(CurveError::InvalidRange) }
    }

    /// The mixture after adding `titrant_l` L of titrant.
    pub fn mixture(&self, titrant_l: R) -> Result<Solution<R, N>, CurveError> {
        self.sample.mix(self.sample_volume_l, self.titrant, titrant_l).map_err(CurveError::Composition)
    }

    /// Solved state after adding `titrant_l` L, warm-started from `near_ph` if given.
    pub fn equilibrium_at(&self, titrant_l: R, near_ph: Option<R>) -> Result<Equilibrium<R>, CurveError> {
        let m = self.mixture(titrant_l)?;
        match near_ph {
            Some(p) => m.solve_from(p),
            None => m.solve(),
        }
        .map_err(CurveError::Solve)
    }

    fn point(&self, titrant_l: R, near_ph: Option<R>) -> Result<CurvePoint<R>, CurveError> {
        let e = self.equilibrium_at(titrant_l, near_ph)?;
        Ok(CurvePoint { titrant_l, ph: e.ph, buffer_capacity_mol_per_l_per_ph: e.buffer_capacity_mol_per_l_per_ph })
    }

    /// Fills `out` (cleared first, capacity `K` ≥ 4) with `K` points of the curve from 0 to
    /// `max_titrant_l`; see [`Titration::curve_points`] for fewer.
    pub fn curve<const K: usize>(&self, max_titrant_l: R, out: &mut Vec<CurvePoint<R>, K>) -> Result<(), CurveError> {
        self.curve_points(max_titrant_l, K, out)
    }

    /// Fills `out` (cleared first, capacity `K` ≥ 4) with `points` (4 ≤ points ≤ K; clamped)
    /// points of the curve from 0 to `max_titrant_l`.
    ///
    /// Spacing is adaptive: ⌈points/4⌉ evenly spaced points first, then the remaining capacity is
    /// spent splitting, one at a time, the segment that is longest on a plot normalised to the
    /// curve's pH span and the titrant range — so the steep parts get the points. Exactly
    /// `points` solves (each warm-started from a neighbour) and O(K²) comparisons.
    pub fn curve_points<const K: usize>(
        &self,
        max_titrant_l: R,
        points: usize,
        out: &mut Vec<CurvePoint<R>, K>,
    ) -> Result<(), CurveError> {
        const { assert!(K >= 4, "a titration curve needs at least 4 points") };
        let points = points.clamp(4, K);
        self.check()?;
        let vmax = max_titrant_l.to_f64();
        if !(vmax.is_finite() && vmax > 0.0) {
            return Err(CurveError::InvalidRange);
        }
        out.clear();
        let initial = points.div_ceil(4).max(2);
        let mut near = None;
        for i in 0..initial {
            let v = max_titrant_l * R::from_f64(i as f64 / (initial - 1) as f64);
            let p = self.point(v, near)?;
            near = Some(p.ph);
            out.push(p).map_err(|_| CurveError::InvalidRange)?;
        }
        while out.len() < points {
            let (lo_ph, hi_ph) =
                out.iter().fold((R::from_f64(99.0), R::from_f64(-99.0)), |(a, b), p| (a.min(p.ph), b.max(p.ph)));
            let span = (hi_ph - lo_ph).max(R::from_f64(1e-3));
            // The longest segment: its left index, length, midpoint titrant and left pH (taken
            // from the window itself, so no index is read back).
            let mut best: Option<(usize, R, R, R)> = None;
            for (i, w) in out.windows(2).enumerate() {
                if let [a, b] = w {
                    let dv = (b.titrant_l - a.titrant_l) / max_titrant_l;
                    let dp = (b.ph - a.ph) / span;
                    let len = dv * dv + dp * dp;
                    if best.is_none_or(|(_, l, _, _)| len > l) {
                        best = Some((i, len, (a.titrant_l + b.titrant_l) * R::from_f64(0.5), a.ph));
                    }
                }
            }
            let Some((i, _, v, left_ph)) = best else { break };
            // `i` is a window's left index, so i + 1 < len (the guard lets the optimiser see
            // that `insert` cannot panic); len < points ≤ K, so there is room.
            if !holds(i + 1 < out.len(), "segment index inside the curve") {
                break;
            }
            let p = self.point(v, Some(left_ph))?;
            out.insert(i + 1, p).map_err(|_| CurveError::InvalidRange)?;
        }
        Ok(())
    }

    /// The exact slope of the curve, dpH/dL of titrant, at a solved state `e` of the mixture
    /// after `titrant_l` L, with `titrant` already at the mixture's temperature and activity
    /// mode. The mixture's charge excess is linear in its totals, which mixing makes
    /// flow-weighted means, so at fixed pH its derivative with respect to the titrant volume is
    /// the titrant's own charge excess (water terms included) at the mixture's pH over the
    /// total volume; dividing by the buffer capacity turns charge into pH. The change of the
    /// ionic strength and of the mixing temperature along the curve is neglected (both move the
    /// activity coefficients and constants far less than one point's pH step).
    fn exact_slope(&self, titrant: &Solution<R, M>, titrant_l: R, e: &Equilibrium<R>) -> R {
        let excess = titrant.charge_excess_eq_per_l(e.ph, e.ionic_strength_mol_per_l);
        let beta = e.buffer_capacity_mol_per_l_per_ph.max(R::from_f64(1e-300));
        excess / ((self.sample_volume_l + titrant_l) * beta)
    }

    /// |dpH/dV| (pH per L) and pH after `titrant_l` L, solved warm from `near_ph`.
    fn steepness(&self, titrant: &Solution<R, M>, titrant_l: R, near_ph: R) -> Result<(R, R), CurveError> {
        let e = self.equilibrium_at(titrant_l, Some(near_ph))?;
        Ok((self.exact_slope(titrant, titrant_l, &e).abs(), e.ph))
    }

    /// Golden-section search for the steepest (`steepest`) or flattest point of the curve in
    /// `[lo, hi]` L: [`GOLDEN_ITERATIONS`] solves, each warm-started from `near_ph`. Returns
    /// (titrant L, |dpH/dV|, pH).
    fn golden(
        &self,
        titrant: &Solution<R, M>,
        lo: R,
        hi: R,
        near_ph: R,
        steepest: bool,
    ) -> Result<(R, R, R), CurveError> {
        let better = |a: R, b: R| if steepest { a > b } else { a < b };
        let r = R::from_f64(0.618_033_988_749_894_9);
        let (mut a, mut b) = (lo, hi);
        let mut x1 = b - r * (b - a);
        let mut x2 = a + r * (b - a);
        let (mut f1, mut p1) = self.steepness(titrant, x1, near_ph)?;
        let (mut f2, mut p2) = self.steepness(titrant, x2, near_ph)?;
        // GOLDEN_ITERATIONS steps, one solve each; the bracket shrinks by 0.618 per step.
        for _ in 0..GOLDEN_ITERATIONS {
            if better(f1, f2) {
                b = x2;
                (x2, f2, p2) = (x1, f1, p1);
                x1 = b - r * (b - a);
                (f1, p1) = self.steepness(titrant, x1, p2)?;
            } else {
                a = x1;
                (x1, f1, p1) = (x2, f2, p2);
                x2 = a + r * (b - a);
                (f2, p2) = self.steepness(titrant, x2, p1)?;
            }
        }
        Ok(if better(f1, f2) { (x1, f1, p1) } else { (x2, f2, p2) })
    }

    /// Equivalence (inflection) points of this titration, found on `curve` (points of this
    /// titration in ascending titrant, e.g. from [`Titration::curve_points`]) with the model's
    /// exact slope instead of the chords between points, so what is found does not depend on
    /// how many points the curve has.
    ///
    /// The exact slope |dpH/dV| is taken at every point; each interior local maximum and
    /// minimum among the points is refined by a golden-section search between its neighbours
    /// ([`GOLDEN_ITERATIONS`] solves). A refined maximum is an equivalence point when it is at
    /// least [`INFLECTION_PROMINENCE`] times steeper than the flattest stretch on each side
    /// before the curve gets steeper than it again (its topographic prominence as a ratio);
    /// a maximum at either end of the curve is not one. pH and titrant volume are those of
    /// the refined maximum. `out` keeps the first `E` in titrant order.
    ///
    /// Bounded: one solve per point, [`GOLDEN_ITERATIONS`] + 2 solves per refined extremum (at
    /// most [`MAX_EXTREMA`] are refined; beyond them the curve is too noisy to read and the
    /// rest are ignored), and O(MAX_EXTREMA²) comparisons.
    pub fn inflections_exact<const E: usize>(
        &self,
        curve: &[CurvePoint<R>],
        out: &mut Vec<EquivalencePoint<R>, E>,
    ) -> Result<(), CurveError> {
        self.check()?;
        out.clear();
        let mut titrant = self.titrant.clone();
        let first = curve.first().map_or(R::ZERO, |p| p.titrant_l);
        let mixture = self.mixture(first)?;
        titrant.set_temperature(mixture.temperature());
        titrant.set_activity(mixture.activity());
        // Extremes of |slope|, in titrant order: (titrant L, |slope|, pH, is a maximum).
        let mut extremes: Vec<(R, R, R, bool), MAX_EXTREMA> = Vec::new();
        // A sliding window of three points with their exact slopes; one solve per point.
        let mut window: [Option<(R, R, R)>; 3] = [None; 3];
        for (k, p) in curve.iter().enumerate() {
            let (s, ph) = self.steepness(&titrant, p.titrant_l, p.ph)?;
            let [_, w1, w2] = window;
            window = [w1, w2, Some((p.titrant_l, s, ph))];
            let [Some(a), Some(b), Some(c)] = window else {
                continue;
            };
            // The curve's first point is a flank when the slope rises away from it.
            if k == 2 && a.1 < b.1 && extremes.push((a.0, a.1, a.2, false)).is_err() {
                break;
            }
            let is_max = b.1 > a.1 && b.1 >= c.1;
            let is_min = b.1 < a.1 && b.1 <= c.1;
            if is_max || is_min {
                let (v, s, ph) = self.golden(&titrant, a.0, c.0, b.2, is_max)?;
                // Keep the sampled point if the search found nothing better (flat or noisy).
                let keep = if is_max { s > b.1 } else { s < b.1 };
                let e = if keep { (v, s, ph, is_max) } else { (b.0, b.1, b.2, is_max) };
                if extremes.push(e).is_err() {
                    break;
                }
            }
        }
        // The last point is a flank when the slope falls towards it.
        if let [_, Some(b), Some(c)] = window
            && c.1 < b.1
        {
            // A full list already ends the search; the last flank is then not needed.
            let _ = extremes.push((c.0, c.1, c.2, false));
        }
        let prominence = R::from_f64(INFLECTION_PROMINENCE);
        for (i, &(v, s, ph, is_max)) in extremes.iter().enumerate() {
            if !is_max {
                continue;
            }
            // Flattest stretch on each side before a steeper maximum (at most MAX_EXTREMA each).
            let flank = |side: &mut dyn Iterator<Item = &(R, R, R, bool)>| {
                let mut lowest: Option<R> = None;
                for &(_, sj, _, max_j) in side {
                    if max_j && sj > s {
                        break;
                    }
                    if !max_j {
                        lowest = Some(lowest.map_or(sj, |l: R| l.min(sj)));
                    }
                }
                lowest
            };
            let left = flank(&mut extremes.iter().take(i).rev());
            let right = flank(&mut extremes.iter().skip(i + 1));
            let (Some(left), Some(right)) = (left, right) else {
                continue;
            };
            if s < prominence * left.max(right) {
                continue;
            }
            if out.push(EquivalencePoint { titrant_l: v, ph, system: "", step: 0 }).is_err() {
                break;
            }
        }
        Ok(())
    }

    /// Equivalence points predicted from the composition (strong titrants only: the titrant
    /// counts with [`strong_equivalents_eq_per_l`], so sulfuric acid counts with both protons;
    /// its weak steps are not counted). Level 0 has every system fully protonated; then
    /// each system step, taken in order of pKa, is a further stoichiometric level; the titrant volume that reaches it is where the strong-ion charge
    /// balances the systems' charges with every lower-pKa step completed. Points within
    /// (0, `max_titrant_l`] are returned with their pH (solved); `out` keeps the first `E`. At
    /// most 3·N levels.
    pub fn model_equivalence_points<const E: usize>(
        &self,
        max_titrant_l: R,
        out: &mut Vec<EquivalencePoint<R>, E>,
    ) -> Result<(), CurveError> {
        self.check()?;
        out.clear();
        let ct = strong_equivalents_eq_per_l(self.titrant);
        if ct == R::ZERO {
            return Ok(());
        }
        let v0 = self.sample_volume_l;
        let comps = self.sample.components();
        let base_titrant = ct > R::ZERO;
        // The next step above `last` in (pKa, component, step) order: one scan of ≤ 3·N steps.
        // Steps are counted in u8 alongside each component's cached pKa (at most MAX_STEPS per
        // component), so the step number is exact and nothing is looked up again.
        let next_step = |last: Option<Level<R>>| {
            let mut next: Option<Level<R>> = None;
            for (ci, c) in comps.iter().enumerate() {
                for (step, pk) in (1..=MAX_STEPS_U8).zip(c.pk).take(c.system.step_count()) {
                    let key = (pk, ci, step);
                    if last.is_none_or(|l| key.gt(&l.order())) && next.is_none_or(|n| key.lt(&n.order())) {
                        next = Some(Level {
                            pk,
                            component: ci,
                            step,
                            key: c.system.key,
                            total_mol_per_l: c.total_mol_per_l,
                        });
                    }
                }
            }
            next
        };
        let label = |s: Option<Level<R>>| -> (&'static str, u8) { s.map_or(("strong", 0), |l| (l.key, l.step)) };
        // Level k: the k lowest-pKa steps deprotonated, the rest protonated. Its charge (eq) z_k
        // starts with every system fully protonated and loses one proton per formula unit of the
        // step completed. The titrant charge ct·v cancels it at v = −z_k/ct. A base titrant
        // reaches level k by completing its k-th step (label: that step; level 0: "strong"); an
        // acid titrant reaches it by re-protonating step k+1 (label: that step; the top level,
        // where only the strong base is neutralised: "strong"). At most 3·N + 1 levels.
        let mut z = self.sample.strong_charge_eq_per_l() * v0;
        for c in comps {
            z += R::from_i32(c.system.charge_of_form(0)) * c.total_mol_per_l * v0;
        }
        let mut previous: Option<Level<R>> = None;
        let mut near = None;
        for _ in 0..=(3 * comps.len()) {
            let upcoming = next_step(previous);
            let v = -z / ct;
            if v > R::ZERO && v <= max_titrant_l {
                let e = self.equilibrium_at(v, near)?;
                near = Some(e.ph);
                let (system, step) = if base_titrant { label(previous) } else { label(upcoming) };
                if out.push(EquivalencePoint { titrant_l: v, ph: e.ph, system, step }).is_err() {
                    break;
                }
            }
            let Some(level) = upcoming else { break };
            z -= level.total_mol_per_l * v0;
            previous = upcoming;
        }
        // An acid titrant meets the levels from the top down: report them in titrant order.
        if !base_titrant {
            out.reverse();
        }
        Ok(())
    }
}

/// Highest pKa (at the titrant's temperature) at which a titrant's acid step counts as complete
/// in the stoichiometry: 2.5, where the step is at least 98 % dissociated at pH 4.3, the lowest of
/// the usual alkalinity endpoints (common practice, no source). Both of sulfuric acid's steps
/// (pKa about −3 and 2.0) count; phosphoric acid's first (2.1) does, its second (7.2) does not.
pub const STRONG_STEP_MAX_PKA: f64 = 2.5;

/// The equivalents per litre a titrant delivers as a strong reagent, eq/L (> 0 base, < 0 acid):
/// its strong-ion charge plus, for each of its acid–base systems with at least one step at a pKa
/// ≤ [`STRONG_STEP_MAX_PKA`], the charge that system carries with those steps complete
/// (−2 × total for sulfate). Systems without such a step (a weak titrant's) are not counted,
/// as before. One pass over the titrant's systems.
pub fn strong_equivalents_eq_per_l<R: Real, const N: usize>(titrant: &Solution<R, N>) -> R {
    let limit = R::from_f64(STRONG_STEP_MAX_PKA);
    let mut q = titrant.strong_charge_eq_per_l();
    for c in titrant.components() {
        let strong_steps = c.pk.iter().take(c.system.step_count()).filter(|pk| **pk <= limit).count();
        if strong_steps > 0 {
            q += c.total_mol_per_l * R::from_i32(c.system.charge_of_form(strong_steps));
        }
    }
    q
}

/// One system step as a stoichiometric level of [`Titration::model_equivalence_points`].
#[derive(Clone, Copy)]
struct Level<R> {
    pk: R,
    component: usize,
    step: u8,
    key: &'static str,
    total_mol_per_l: R,
}

impl<R: Real> Level<R> {
    /// The order levels are taken in: pKa, then component, then step.
    fn order(&self) -> (R, usize, u8) {
        (self.pk, self.component, self.step)
    }
}

/// Equivalence (inflection) points found on a computed or measured curve: local maxima of
/// |dpH/dV| that stand out by [`INFLECTION_PROMINENCE`], located between points by fitting a
/// parabola through the three slopes around the maximum. pH at the point by linear
/// interpolation. O(K²) for K points; writes at most `E`.
pub fn inflections<R: Real, const E: usize>(curve: &[CurvePoint<R>], out: &mut Vec<EquivalencePoint<R>, E>) {
    out.clear();
    let slope = |i: usize| -> Option<(R, R)> {
        let a = curve.get(i)?;
        let b = curve.get(i + 1)?;
        let dv = b.titrant_l - a.titrant_l;
        if dv <= R::ZERO {
            return None;
        }
        Some(((a.titrant_l + b.titrant_l) * R::from_f64(0.5), ((b.ph - a.ph) / dv).abs()))
    };
    let n = curve.len().saturating_sub(1); // number of segments
    for i in 0..n {
        let Some((m, s)) = slope(i) else { continue };
        let left = if i > 0 { slope(i - 1) } else { None };
        let right = slope(i + 1);
        let is_max = left.is_none_or(|(_, l)| s >= l) && right.is_none_or(|(_, r)| s > r);
        if !is_max || s <= R::ZERO {
            continue;
        }
        // Flattest slope on each side before the curve gets steeper than this maximum again.
        let mut left_min = s;
        for j in (0..i).rev() {
            let Some((_, sj)) = slope(j) else { break };
            if sj > s {
                break;
            }
            left_min = left_min.min(sj);
        }
        let mut right_min = s;
        for j in (i + 1)..n {
            let Some((_, sj)) = slope(j) else { break };
            if sj > s {
                break;
            }
            right_min = right_min.min(sj);
        }
        let prominence = R::from_f64(INFLECTION_PROMINENCE);
        if s < prominence * left_min.max(right_min) {
            continue;
        }
        // Parabola through (m−, s−), (m, s), (m+, s+): vertex abscissa.
        let v = match (left, right) {
            (Some((ml, sl)), Some((mr, sr))) => {
                let d1 = (s - sl) / (m - ml);
                let d2 = (sr - s) / (mr - m);
                if d2 < d1 {
                    // Concave: vertex of the parabola through the three points, kept between them.
                    parabola_vertex(ml, sl, m, s, mr, sr).unwrap_or(m).max(ml).min(mr)
                } else {
                    m
                }
            }
            _ => m,
        };
        let ph = interpolate_ph(curve, v);
        if out.push(EquivalencePoint { titrant_l: v, ph, system: "", step: 0 }).is_err() {
            break;
        }
    }
}

fn parabola_vertex<R: Real>(x0: R, y0: R, x1: R, y1: R, x2: R, y2: R) -> Option<R> {
    let denom = (x0 - x1) * (x0 - x2) * (x1 - x2);
    if denom == R::ZERO {
        return None;
    }
    let a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / denom;
    let b = (x2 * x2 * (y0 - y1) + x1 * x1 * (y2 - y0) + x0 * x0 * (y1 - y2)) / denom;
    if a == R::ZERO {
        return None;
    }
    let v = -b / (R::from_f64(2.0) * a);
    if v.is_finite() { Some(v) } else { None }
}

/// pH on the curve at `titrant_l` by linear interpolation (clamped to the ends).
pub fn interpolate_ph<R: Real>(curve: &[CurvePoint<R>], titrant_l: R) -> R {
    let mut prev: Option<&CurvePoint<R>> = None;
    for p in curve {
        if p.titrant_l >= titrant_l {
            return match prev {
                Some(a) if p.titrant_l > a.titrant_l => {
                    a.ph + (p.ph - a.ph) * (titrant_l - a.titrant_l) / (p.titrant_l - a.titrant_l)
                }
                _ => p.ph,
            };
        }
        prev = Some(p);
    }
    prev.map_or(R::ZERO, |p| p.ph)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Activity;
    use crate::units::Celsius;

    fn ideal<const N: usize>() -> Solution<f64, N> {
        Solution::new(Celsius::standard(), Activity::Ideal)
    }

    #[test]
    fn strong_acid_curve_matches_openstax_example() {
        // OpenStax "Chemistry 2e" §14.7, example "Calculating pH for Titration Solutions: Strong
        // Acid/Strong Base" (checked, read in the book's public source): 25.00 mL 0.100 M HCl
        // with 0.100 M NaOH. Printed: pH 1.000 at 0 mL, [H3O+] 0.0333 M at 12.50 mL, pH 7.00 at
        // 25.00 mL, pH 12.30 at 37.50 mL. The book uses Kw = 1.0e-14; the model's pKw(25 °C)
        // is 13.995, which moves the alkaline value by 0.005 — inside the printed rounding.
        let mut sample = ideal::<2>();
        sample.add_formula("HCl", 0.100).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("NaOH", 0.100).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.025, titrant: &titrant };
        let ph = |ml: f64| t.equilibrium_at(ml / 1000.0, None).unwrap().ph;
        assert!((ph(0.0) - 1.000).abs() < 0.0005);
        assert!((10f64.powf(-ph(12.5)) - 0.0333).abs() < 0.00005);
        assert!((ph(25.0) - 7.00).abs() < 0.005);
        assert!((ph(37.5) - 12.30).abs() < 0.006);
        // Curve and both kinds of equivalence point: 25.00 mL.
        let mut c: Vec<CurvePoint<f64>, 64> = Vec::new();
        t.curve(0.050, &mut c).unwrap();
        assert_eq!(c.len(), 64);
        assert!(c.windows(2).all(|w| w[0].titrant_l < w[1].titrant_l && w[0].ph <= w[1].ph));
        let mut eq: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        inflections(&c, &mut eq);
        assert_eq!(eq.len(), 1, "{eq:?}");
        assert!((eq[0].titrant_l - 0.025).abs() < 2e-5, "{:?}", eq[0]);
    }

    #[test]
    fn nitric_acid_curve_matches_openstax_check_your_learning() {
        // OpenStax "Chemistry 2e" §14.7, same example, Check Your Learning (checked): 50.0 mL
        // 0.100 M HNO3 with 0.200 M NaOH: pH 1.000 at 0 mL, 1.5111 at 15.0 mL, 7 at 25.0 mL,
        // 12.523 at 40.0 mL (book Kw 1.0e-14; model pKw 13.995, so ±0.006 at 40 mL).
        let mut sample = ideal::<2>();
        sample.add_formula("HNO3", 0.100).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("NaOH", 0.200).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.050, titrant: &titrant };
        let ph = |ml: f64| t.equilibrium_at(ml / 1000.0, None).unwrap().ph;
        assert!((ph(0.0) - 1.000).abs() < 0.0005);
        // Exact stoichiometry gives −log10(2 mmol / 65 mL) = 1.5119; the printed 1.5111 carries an
        // intermediate rounding, so this point is checked to 0.001.
        assert!((ph(15.0) - 1.5111).abs() < 0.001);
        assert!((ph(25.0) - 7.0).abs() < 0.005);
        assert!((ph(40.0) - 12.523).abs() < 0.006);
    }

    #[test]
    fn weak_acid_equivalence_is_the_salt_ph() {
        // Formic acid (plating-shop descaler rinse, invented) titrated with 0.1 M NaOH: the model
        // equivalence point sits where the salt sodium formate alone would be, at its pH.
        let mut sample = ideal::<2>();
        sample.add_formula("HCOOH", 0.05).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("NaOH", 0.1).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        let mut eq: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        t.model_equivalence_points(0.1, &mut eq).unwrap();
        assert_eq!(eq.len(), 1);
        assert!((eq[0].titrant_l - 0.05).abs() < 1e-12);
        assert_eq!((eq[0].system, eq[0].step), ("formate", 1));
        let salt = crate::chem::salt::analyse("HCOONa", 0.05 / 1.5, Celsius::standard(), Activity::Ideal).unwrap();
        assert!((eq[0].ph - salt.equilibrium.ph).abs() < 1e-6, "{} vs {}", eq[0].ph, salt.equilibrium.ph);
        assert!(eq[0].ph > 7.5, "a weak acid's equivalence point is basic");
        // The curve finds the same point.
        let mut c: Vec<CurvePoint<f64>, 96> = Vec::new();
        t.curve(0.1, &mut c).unwrap();
        let mut found: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        inflections(&c, &mut found);
        assert_eq!(found.len(), 1, "{found:?}");
        assert!((found[0].titrant_l - 0.05).abs() < 2e-4, "{:?}", found[0]);
        // So does the exact-slope finder, closer.
        t.inflections_exact(&c, &mut found).unwrap();
        assert_eq!(found.len(), 1, "{found:?}");
        assert!((found[0].titrant_l - 0.05).abs() < 2e-5, "{:?}", found[0]);
    }

    #[test]
    fn phosphoric_acid_has_two_visible_equivalence_points() {
        let mut sample = ideal::<2>();
        sample.add_formula("H3PO4", 0.01).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("NaOH", 0.1).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        let mut model: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        t.model_equivalence_points(0.035, &mut model).unwrap();
        assert_eq!(model.len(), 3); // 10, 20 and 30 mL
        let mut c: Vec<CurvePoint<f64>, 128> = Vec::new();
        t.curve(0.035, &mut c).unwrap();
        let mut found: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        inflections(&c, &mut found);
        // The third step (pKa 12.35) makes no inflection in water: two are found.
        assert_eq!(found.len(), 2, "{found:?}");
        for (f, m) in found.iter().zip(model.iter()) {
            assert!((f.titrant_l - m.titrant_l).abs() < 3e-4, "{f:?} vs {m:?}");
        }
        // The same two with exact slopes.
        t.inflections_exact(&c, &mut found).unwrap();
        assert_eq!(found.len(), 2, "{found:?}");
        for (f, m) in found.iter().zip(model.iter()) {
            assert!((f.titrant_l - m.titrant_l).abs() < 3e-4, "{f:?} vs {m:?}");
        }
    }

    /// An invented alkaline rinse (caustic, soda ash, a little trisodium phosphate and sodium
    /// acetate) titrated with 0.1 M HCl. Its pH-4.3 endpoint (carbonate's and acetate's protons
    /// taken up together, near 7.8 mL) stands only about 3 times steeper than the flattest
    /// stretch before it. The chord slopes between points underestimate peaks and overestimate
    /// flanks by an amount that depends on the spacing: at 20 °C they put it at 2.97 with 64
    /// points and above 3 with 256, so whether it was found depended on `--points`. With
    /// exact slopes the same points are found at every point count and temperature.
    #[test]
    fn exact_slopes_find_the_same_points_at_every_point_count() {
        for activity in [Activity::Davies, Activity::Ideal] {
            for celsius in [5.0, 20.0, 25.0, 35.0, 50.0] {
                let at = Celsius::new(celsius).unwrap();
                let mut sample: Solution<f64, 6> = Solution::new(at, activity);
                for (f, c) in [("NaOH", 0.003), ("Na2CO3", 0.002), ("Na3PO4", 0.0002), ("CH3COONa", 0.0005)] {
                    sample.add_formula(f, c).unwrap();
                }
                let mut titrant: Solution<f64, 1> = Solution::new(at, activity);
                titrant.add_formula("HCl", 0.1).unwrap();
                let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
                let mut c: Vec<CurvePoint<f64>, 256> = Vec::new();
                for points in [24, 64, 256] {
                    t.curve_points(0.015, points, &mut c).unwrap();
                    let mut found: Vec<EquivalencePoint<f64>, 8> = Vec::new();
                    t.inflections_exact(&c, &mut found).unwrap();
                    let case = std::format!("{activity:?} {celsius} °C, {points} points: {found:?}");
                    assert_eq!(found.len(), 2, "{case}");
                    // Carbonate step 2 (after phosphate step 3) near 5.20 mL (the pH there); the
                    // total-alkalinity endpoint near 7.81 mL, pH 4.3 (the model's stoichiometry
                    // has carbonate step 1 at 7.4 mL and acetate at 7.9 mL).
                    let [a, b] = [found[0], found[1]];
                    assert!((a.titrant_l - 0.0052).abs() < 3e-5, "{case}");
                    assert!((a.ph - t.equilibrium_at(0.0052, None).unwrap().ph).abs() < 0.05, "{case}");
                    assert!((b.titrant_l - 0.0078).abs() < 6e-5 && (b.ph - 4.3).abs() < 0.1, "{case}");
                }
            }
        }
    }

    /// The same in f32 (a controller's real): both points, within 0.02 mL of the f64 ones.
    #[test]
    fn exact_slopes_work_in_f32() {
        let at = Celsius::new(20.0_f32).unwrap();
        let mut sample: Solution<f32, 6> = Solution::new(at, Activity::Davies);
        for (f, c) in [("NaOH", 0.003), ("Na2CO3", 0.002), ("Na3PO4", 0.0002), ("CH3COONa", 0.0005)] {
            sample.add_formula(f, c).unwrap();
        }
        let mut titrant: Solution<f32, 1> = Solution::new(at, Activity::Davies);
        titrant.add_formula("HCl", 0.1).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        let mut c: Vec<CurvePoint<f32>, 64> = Vec::new();
        t.curve(0.015, &mut c).unwrap();
        let mut found: Vec<EquivalencePoint<f32>, 8> = Vec::new();
        t.inflections_exact(&c, &mut found).unwrap();
        assert_eq!(found.len(), 2, "{found:?}");
        assert!((found[0].titrant_l - 0.0052).abs() < 2e-5 && (found[1].titrant_l - 0.00781).abs() < 2e-5, "{found:?}");
    }

    #[test]
    fn sulfuric_acid_titrant_counts_both_protons() {
        // A bicarbonate cooling-tower make-up water (invented): the same equivalence points with
        // 0.02 M H2SO4 as with 0.04 M HCl (the same acid equivalents); before, the sulfuric acid
        // titrant gave none (its charge was held in its sulfate system, not its strong ions).
        let mut sample = ideal::<2>();
        sample.add_formula("NaHCO3", 0.004).unwrap();
        sample.add_formula("Na2CO3", 0.0003).unwrap();
        let points = |formula: &str, conc: f64| {
            let mut titrant = ideal::<2>();
            titrant.add_formula(formula, conc).unwrap();
            assert!((strong_equivalents_eq_per_l(&titrant) + 0.04).abs() < 1e-15, "{formula}");
            let t = Titration { sample: &sample, sample_volume_l: 0.05, titrant: &titrant };
            let mut eq: Vec<EquivalencePoint<f64>, 4> = Vec::new();
            t.model_equivalence_points(0.012, &mut eq).unwrap();
            eq.iter().map(|e| (e.system, e.step, e.titrant_l)).collect::<std::vec::Vec<_>>()
        };
        let (hcl, h2so4) = (points("HCl", 0.04), points("H2SO4", 0.02));
        assert_eq!(hcl.len(), 2, "{hcl:?}");
        assert_eq!(h2so4.len(), 2, "{h2so4:?}");
        for (a, b) in hcl.iter().zip(&h2so4) {
            assert_eq!((a.0, a.1), (b.0, b.1));
            assert!((a.2 - b.2).abs() < 1e-12, "{a:?} vs {b:?}");
        }
        // A weak titrant's system is still not counted; phosphoric acid counts its first step.
        let mut weak = ideal::<1>();
        weak.add_formula("CH3COOH", 0.1).unwrap();
        assert_eq!(strong_equivalents_eq_per_l(&weak), 0.0);
        let mut phosphoric = ideal::<1>();
        phosphoric.add_formula("H3PO4", 0.1).unwrap();
        assert!((strong_equivalents_eq_per_l(&phosphoric) + 0.1).abs() < 1e-15);
    }

    #[test]
    fn strong_acid_level_comes_before_the_carbonate_steps() {
        // Acidified bicarbonate rinse (invented): 2 mM HCl over 1 mM NaHCO3, 0.1 L, 0.01 M NaOH.
        let mut sample = ideal::<2>();
        sample.add_formula("HCl", 0.002).unwrap();
        sample.add_formula("NaHCO3", 0.001).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("NaOH", 0.01).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        let mut eq: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        t.model_equivalence_points(0.05, &mut eq).unwrap();
        let got: std::vec::Vec<(&str, u8, f64)> = eq.iter().map(|e| (e.system, e.step, e.titrant_l * 1000.0)).collect();
        assert_eq!(got.len(), 3, "{got:?}");
        for ((sys, step, ml), (esys, estep, eml)) in
            got.iter().zip([("strong", 0, 10.0), ("carbonate", 1, 20.0), ("carbonate", 2, 30.0)])
        {
            assert_eq!((*sys, *step), (esys, estep));
            assert!((ml - eml).abs() < 1e-9, "{ml} vs {eml}");
        }
        // CO2 solution at the first point is acidic, bicarbonate at the second is near 8.3.
        assert!(eq[0].ph < 5.5 && (eq[1].ph - 8.3).abs() < 0.3, "{eq:?}");
    }

    #[test]
    fn acid_titrant_points_come_in_titrant_order_with_their_step() {
        // Caustic carbonate cleaner rinse (invented): 1 mM NaOH + 1 mM Na2CO3, 0.1 L, 0.02 M HCl.
        let mut sample = ideal::<2>();
        sample.add_formula("NaOH", 0.001).unwrap();
        sample.add_formula("Na2CO3", 0.001).unwrap();
        let mut titrant = ideal::<1>();
        titrant.add_formula("HCl", 0.02).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        let mut eq: Vec<EquivalencePoint<f64>, 4> = Vec::new();
        t.model_equivalence_points(0.05, &mut eq).unwrap();
        let got: std::vec::Vec<(&str, u8, f64)> = eq.iter().map(|e| (e.system, e.step, e.titrant_l * 1000.0)).collect();
        // OH− first (5 mL), then CO3²− → HCO3− (step 2, 10 mL), then HCO3− → CO2 (step 1, 15 mL).
        let want = [("strong", 0, 5.0), ("carbonate", 2, 10.0), ("carbonate", 1, 15.0)];
        assert_eq!(got.len(), 3, "{got:?}");
        for ((s, k, ml), (ws, wk, wml)) in got.iter().zip(want) {
            assert_eq!((*s, *k), (ws, wk));
            assert!((ml - wml).abs() < 1e-9);
        }
        assert!(eq[0].ph > eq[1].ph && eq[1].ph > eq[2].ph);
        // A curve of fewer points than the buffer holds.
        let mut c: Vec<CurvePoint<f64>, 64> = Vec::new();
        t.curve_points(0.02, 24, &mut c).unwrap();
        assert_eq!(c.len(), 24);
    }

    #[test]
    fn invalid_ranges_are_refused() {
        let sample = ideal::<1>();
        let titrant = ideal::<1>();
        let t = Titration { sample: &sample, sample_volume_l: 0.0, titrant: &titrant };
        let mut c: Vec<CurvePoint<f64>, 8> = Vec::new();
        assert_eq!(t.curve(0.01, &mut c), Err(CurveError::InvalidRange));
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &titrant };
        assert_eq!(t.curve(f64::NAN, &mut c), Err(CurveError::InvalidRange));
    }
}
