//! The pH solver: root of the charge balance by guarded Newton steps on pH.
//!
//! For a candidate pH x, the charge excess is
//! f(x) = [H⁺] − [OH⁻] + Q_strong + Σ_s C_s·(z0_s − n̄_s(x)),
//! where n̄_s is the mean number of protons system s has lost. f is strictly decreasing in x
//! and f′(x) = −β(x), the buffer capacity (Van Slyke), so each evaluation gives the Newton
//! step x + f/β and the buffer capacity at no extra cost.
//!
//! **Bounds.** The root is searched in [[`PH_MIN`], [`PH_MAX`]]; every evaluation shrinks
//! that bracket. For the first B = ⌈log2((PH_MAX − PH_MIN)/tol)⌉ iterations the solver takes
//! Newton steps, replaced by bisection (or a bounded walk while the root is bounded on one
//! side only) whenever a step would leave the bracket or the iteration stops converging; after B iterations it only bisects, which reaches the
//! tolerance within B more. One solve therefore takes at most 2·B iterations:
//! [`max_ph_iterations`] (76 for `f64`, 42 for `f32`). With Davies activities the ionic strength is a fixed point over such
//! solves, at most [`MAX_ACTIVITY_ITERATIONS`] of them, each warm-started from the last.
//! Every loop in this file is bounded by one of these constants.
//!
//! That nested solve is the fallback. Solves start on the quick path (`quick.rs`), which
//! settles almost all of them in two to six evaluations; [`max_solve_evaluations`] is the
//! bound of the whole.

use super::activity::{self, Activity, DAVIES_MAX_IONIC_STRENGTH};
use super::quick::{QUICK_ITERATIONS, Quick};
use super::solution::{Component, Solution};
use super::system::MAX_STEPS;
use crate::invariant::at;
use crate::real::Real;

/// Lowest pH the solver searches.
pub const PH_MIN: f64 = -1.0;
/// Highest pH the solver searches.
pub const PH_MAX: f64 = 16.0;
/// Step (pH units) the solver walks towards a root bounded on one side only.
pub const EXPANSION_STEP_PH: f64 = 2.0;
/// Most ionic-strength fixed-point rounds in Davies mode.
pub const MAX_ACTIVITY_ITERATIONS: u32 = 16;
/// Worst-case evaluations of one [`Solution::solve_with`] with `max_iterations` not lowered:
/// the quick path ([`QUICK_ITERATIONS`]) plus, for what it does not settle, one nested inner solve
/// in ideal mode or [`MAX_ACTIVITY_ITERATIONS`] of them in Davies mode (+1 evaluation for the
/// first ionic strength when the quick path is off). For `f64`: 86 ideal, 1227 Davies; for
/// `f32`: 52 and 683. The corpus figures in the README show what solves actually take.
pub fn max_solve_evaluations<R: Real>(activity: Activity) -> u32 {
    match activity {
        Activity::Ideal => QUICK_ITERATIONS + max_ph_iterations::<R>(),
        Activity::Davies => QUICK_ITERATIONS + MAX_ACTIVITY_ITERATIONS * max_ph_iterations::<R>() + 1,
    }
}

/// Worst-case iterations of one inner solve for real type `R`: 2·[`bisection_iterations`]
/// (76 for `f64`, 42 for `f32`, 36 for `f32` with `fast-math`).
pub fn max_ph_iterations<R: Real>() -> u32 {
    2 * bisection_iterations::<R>()
}

/// Iterations plain bisection needs to shrink the bracket below `R::PH_TOLERANCE`:
/// ⌈log2((PH_MAX − PH_MIN)/tol)⌉ (38 for `f64`, 21 for `f32`).
pub fn bisection_iterations<R: Real>() -> u32 {
    let ratio = (PH_MAX - PH_MIN) / R::PH_TOLERANCE.to_f64();
    ceil_log2(ratio)
}

/// ⌈log2 `ratio`⌉ for a ratio > 1 (the least n with 2^n ≥ ratio), read off the binary exponent
/// instead of counting doublings (this runs once per solve); 0 for a ratio ≤ 1, capped at 64.
#[inline]
fn ceil_log2(ratio: f64) -> u32 {
    if ratio.is_nan() || ratio <= 1.0 {
        return 0;
    }
    if !ratio.is_finite() {
        return 64;
    }
    let bits = ratio.to_bits();
    // A finite ratio > 1 is normal: biased exponent 1023 + e, e ≥ 0.
    let exponent = u32::try_from((bits >> 52) & 0x7ff).unwrap_or(0).saturating_sub(1023);
    let exact_power = bits & ((1_u64 << 52) - 1) == 0;
    (if exact_power { exponent } else { exponent + 1 }).min(64)
}

/// Why a solve failed.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SolveError {
    /// An input (total, strong charge or warm start) is NaN or infinite.
    NonFinite,
    /// No pH in [`PH_MIN`, `PH_MAX`] balances the charges (absurd composition).
    NoRoot {
        /// Charge excess at `PH_MIN`, eq/L (must be > 0 for a root).
        excess_at_min_eq_per_l: f64,
        /// Charge excess at `PH_MAX`, eq/L (must be < 0 for a root).
        excess_at_max_eq_per_l: f64,
    },
    /// The iteration limit was reached (only with a caller-lowered limit, see [`SolverOptions`]).
    IterationLimit {
        /// Iterations spent.
        iterations: u32,
    },
    /// Davies mode: the ionic strength exceeds [`DAVIES_MAX_IONIC_STRENGTH`].
    IonicStrengthTooHigh {
        /// The ionic strength reached, mol/L.
        mol_per_l: f64,
    },
    /// Davies mode: the ionic-strength fixed point did not settle in [`MAX_ACTIVITY_ITERATIONS`].
    ActivityNotConverged,
}

impl core::fmt::Display for SolveError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::NonFinite => f.write_str("composition or start value is not finite"),
            Self::NoRoot { excess_at_min_eq_per_l, excess_at_max_eq_per_l } => write!(
                f,
                "no pH in [{PH_MIN}, {PH_MAX}] balances the charges (excess {excess_at_min_eq_per_l:e} eq/L at pH {PH_MIN}, {excess_at_max_eq_per_l:e} eq/L at pH {PH_MAX})"
            ),
            Self::IterationLimit { iterations } => write!(f, "pH solver stopped after {iterations} iterations"),
            Self::IonicStrengthTooHigh { mol_per_l } => write!(
                f,
                "ionic strength {mol_per_l:.3} mol/L is above the Davies limit {DAVIES_MAX_IONIC_STRENGTH} mol/L; use ideal activities"
            ),
            Self::ActivityNotConverged => f.write_str("ionic strength did not converge"),
        }
    }
}

impl core::error::Error for SolveError {}

/// Solver settings. `Default` is what the controller should use.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SolverOptions<R: Real> {
    /// Start from this pH (e.g. the previous cycle's result). `None`: a cold start where a
    /// staircase model of the composition puts the root (pH 7 with `newton` off).
    pub warm_start_ph: Option<R>,
    /// Davies mode: the previous cycle's ionic strength, mol/L. It only chooses the activity
    /// coefficients of the first evaluation (the iteration then solves for them from this
    /// composition); a value that is not finite or outside 0–0.5 mol/L is ignored (the strong
    /// ions' ionic strength is used). The answer never depends on it beyond the solver's
    /// tolerance.
    pub warm_start_ionic_strength: Option<R>,
    /// Iteration limit, clamped to [`max_ph_iterations`]. Lowered below that, it caps the
    /// evaluations of a whole ideal-mode solve, and in Davies mode those of the quick path and of
    /// each nested inner solve. Lowering it is for tests of the limit path and for hard real-time
    /// budgets.
    pub max_iterations: u32,
    /// Guarded Newton (`true`) or plain bisection (`false`, the benchmark baseline).
    pub newton: bool,
}

impl<R: Real> Default for SolverOptions<R> {
    fn default() -> Self {
        Self { warm_start_ph: None, warm_start_ionic_strength: None, max_iterations: u32::MAX, newton: true }
    }
}

/// The solved state of a solution.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Equilibrium<R: Real> {
    /// pH = −log10 a(H⁺) (activity scale in Davies mode, concentration scale in ideal mode).
    pub ph: R,
    /// Newton/bisection iterations spent, summed over ionic-strength rounds.
    pub iterations: u32,
    /// Buffer capacity β = dCb/dpH at the root, mol/L per pH unit (> 0).
    pub buffer_capacity_mol_per_l_per_ph: R,
    /// Ionic strength at the root, mol/L (computed in both activity modes).
    pub ionic_strength_mol_per_l: R,
    /// Charge-balance residual at the returned pH, eq/L.
    pub residual_eq_per_l: R,
    /// The Davies factor used (log10 γ(z) = −factor·z²); 0 in ideal mode.
    pub davies_factor: R,
    /// How finely the working precision can place this root, pH: ε·S/β, where ε is the real
    /// type's relative precision ([`Real::RELATIVE_PRECISION`]: 2.2e-16 for `f64`, 1.2e-7 for
    /// `f32`), S the sum of the magnitudes
    /// of every charge term in the balance (H⁺, OH⁻, 2× the strong ions' ionic strength, each
    /// system's total times its largest charge), eq/L, and β the buffer capacity. Rounding of
    /// the charge sum alone moves the root by about this much, whatever the tolerance; see
    /// [`Equilibrium::resolution_limited`].
    pub resolution_ph: R,
}

impl<R: Real> Equilibrium<R> {
    /// `true` when the working precision, not the solver's tolerance, limits this pH: the
    /// [`resolution_ph`](Self::resolution_ph) estimate exceeds the solver's pH tolerance
    /// (`R::PH_TOLERANCE`). Then the pH is only good to a few times `resolution_ph` — in `f32`
    /// near an unbuffered equivalence point that can be 1e-3 to 0.1 pH; solve in `f64` (or
    /// control on a buffered setpoint) when that matters.
    pub fn resolution_limited(&self) -> bool {
        self.resolution_ph > R::PH_TOLERANCE
    }
}

/// `value` limited to [0, `max`] (an ionic-strength iterate kept inside the Davies range).
pub(crate) fn clamp<R: Real>(value: R, max: R) -> R {
    value.max(R::ZERO).min(max)
}

/// Result of one charge-balance evaluation.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Eval<R> {
    pub excess: R,
    pub beta: R,
    pub ionic_strength: R,
    /// [H⁺] + [OH⁻], mol/L (the water's part of the resolution estimate's charge sum).
    pub water: R,
}

/// Alpha fractions of a component at `ph` with Davies factor `af`: returns the fractions
/// (entries past `steps` are 0). Computed in log space, scaled by the largest term, so neither
/// `f32` nor `f64` can overflow or underflow to a 0/0.
pub(crate) fn alphas<R: Real>(c: &Component<R>, ph: R, af: R) -> [R; MAX_STEPS + 1] {
    let n = c.system.step_count();
    let mut logs = [R::ZERO; MAX_STEPS + 1];
    let mut acc = R::ZERO;
    let mut max = R::ZERO;
    for j in 1..=n {
        // log([A_j]/[A_{j−1}]) = pH − pK_j + log γ(z_{j−1}) − log γ(z_j), with z_j = z_{j−1} − 1:
        // the γ terms give −af·(2·z_{j−1} − 1).
        let z_prev = c.system.charge_of_form(j - 1);
        let pk = at(&c.pk, j - 1);
        acc += ph - pk - af * R::from_i32(2 * z_prev - 1);
        if let Some(l) = logs.get_mut(j) {
            *l = acc;
        }
        max = max.max(acc);
    }
    let mut out = [R::ZERO; MAX_STEPS + 1];
    let mut sum = R::ZERO;
    for (o, l) in out.iter_mut().zip(logs.iter()).take(n + 1) {
        *o = (*l - max).exp10();
        sum += *o;
    }
    // sum ≥ 1 because the largest term is 10^0.
    for o in out.iter_mut().take(n + 1) {
        *o = *o / sum;
    }
    out
}

impl<R: Real, const N: usize> Solution<R, N> {
    /// Charge excess (eq/L), buffer capacity and ionic strength at `ph` with Davies factor `af`.
    pub(crate) fn evaluate(&self, ph: R, af: R) -> Eval<R> {
        // [H+] = a_H/γ1 and [OH−] = Kw/(a_H·γ1); log γ1 = −af.
        let h = (af - ph).exp10();
        let oh = (ph - self.pkw() + af).exp10();
        let mut excess = h - oh + self.strong_charge_eq_per_l();
        let mut var_sum = h + oh;
        let mut ionic2 = h + oh;
        for c in self.components() {
            let a = alphas(c, ph, af);
            let z0 = c.system.charge_of_form(0);
            let mut nbar = R::ZERO;
            let mut z2 = R::ZERO;
            for (j, aj) in a.iter().enumerate().take(c.system.step_count() + 1) {
                let jr = R::from_i32(i32::try_from(j).unwrap_or(0));
                nbar += jr * *aj;
                let z = R::from_i32(z0 - i32::try_from(j).unwrap_or(0));
                z2 += z * z * *aj;
            }
            let mut var = R::ZERO;
            for (j, aj) in a.iter().enumerate().take(c.system.step_count() + 1) {
                let d = R::from_i32(i32::try_from(j).unwrap_or(0)) - nbar;
                var += d * d * *aj;
            }
            excess += c.total_mol_per_l * (R::from_i32(z0) - nbar);
            var_sum += c.total_mol_per_l * var;
            ionic2 += c.total_mol_per_l * z2;
        }
        Eval {
            water: h + oh,
            excess,
            beta: R::LN_10 * var_sum,
            ionic_strength: R::from_f64(0.5) * ionic2 + self.strong_ionic_strength_mol_per_l(),
        }
    }

    /// Charge excess (eq/L) of this solution if it were at `ph` with activity coefficients
    /// from `ionic_strength_mol_per_l` (ignored in ideal mode). Linear in the totals: the
    /// quantity the dose model mixes. Positive means the true pH is above `ph`.
    pub fn charge_excess_eq_per_l(&self, ph: R, ionic_strength_mol_per_l: R) -> R {
        self.evaluate(ph, self.activity_factor(ionic_strength_mol_per_l)).excess
    }

    /// The Davies factor (log10 γ(z) = −factor·z²) this solution's activity mode gives at
    /// `ionic_strength_mol_per_l`; 0 in ideal mode.
    pub(crate) fn activity_factor(&self, ionic_strength_mol_per_l: R) -> R {
        match self.activity() {
            Activity::Ideal => R::ZERO,
            Activity::Davies => activity::davies_factor(self.debye_huckel_a(), ionic_strength_mol_per_l),
        }
    }

    fn check_finite(&self) -> Result<(), SolveError> {
        let ok = self.strong_charge_eq_per_l().is_finite()
            && self.strong_ionic_strength_mol_per_l().is_finite()
            && self.components().iter().all(|c| c.total_mol_per_l.is_finite());
        if ok { Ok(()) } else { Err(SolveError::NonFinite) }
    }

    /// Solves for the pH with default options (cold start, guarded Newton).
    pub fn solve(&self) -> Result<Equilibrium<R>, SolveError> {
        self.solve_with(SolverOptions::default())
    }

    /// Solves for the pH starting from `warm_start_ph` (e.g. the previous control cycle's pH;
    /// any finite value is accepted and clamped into the search bracket).
    pub fn solve_from(&self, warm_start_ph: R) -> Result<Equilibrium<R>, SolveError> {
        self.solve_with(SolverOptions { warm_start_ph: Some(warm_start_ph), ..SolverOptions::default() })
    }

    /// Solves again from a previous result of (nearly) the same solution — the control-loop
    /// case: one or two iterations for the same water; after a change of about 1 %, about two
    /// in ideal mode and three in Davies mode (see the README's corpus table).
    pub fn solve_warm(&self, previous: &Equilibrium<R>) -> Result<Equilibrium<R>, SolveError> {
        self.solve_with(SolverOptions {
            warm_start_ph: Some(previous.ph),
            warm_start_ionic_strength: Some(previous.ionic_strength_mol_per_l),
            ..SolverOptions::default()
        })
    }

    /// Solves for the pH with explicit options. Never panics; at most
    /// [`max_solve_evaluations`] counted evaluations (with `max_iterations` lowered to L: L in
    /// ideal mode; in Davies mode min(L, [`QUICK_ITERATIONS`]) on the quick path plus L per nested
    /// inner solve), plus two
    /// uncounted evaluations at the ends of the search range when a solve converges on its edge
    /// (the no-root check).
    ///
    /// Order of work: a cold start (no `warm_start_ph`) begins where a staircase model of the
    /// composition puts the root (no evaluation spent); the quick path (`newton`, see
    /// `quick.rs`: Halley / Householder steps on the log charge ratio, the activity
    /// coefficients solved alongside) settles almost every solve; what it does not settle in
    /// [`QUICK_ITERATIONS`] evaluations continues from its last point with the nested solve
    /// (guarded Newton with bisection inside, an ionic-strength fixed point around it), which
    /// carries the worst-case bound. Both accept the same states: a pH step within the pH
    /// tolerance with activity coefficients that reproduce themselves.
    pub fn solve_with(&self, options: SolverOptions<R>) -> Result<Equilibrium<R>, SolveError> {
        self.check_finite()?;
        let mut start = match options.warm_start_ph {
            Some(p) if !p.is_finite() => return Err(SolveError::NonFinite),
            Some(p) => p.max(R::from_f64(PH_MIN)).min(R::from_f64(PH_MAX)),
            None => R::from_f64(7.0),
        };
        let limit = options.max_iterations.min(max_ph_iterations::<R>());
        let a = self.debye_huckel_a();
        let max_ionic = R::from_f64(DAVIES_MAX_IONIC_STRENGTH);
        // The strong ions alone: no pH can bring the ionic strength below this.
        let strong = self.strong_ionic_strength_mol_per_l();
        let davies = self.activity() == Activity::Davies;
        if davies && strong.to_f64() > DAVIES_MAX_IONIC_STRENGTH {
            return Err(SolveError::IonicStrengthTooHigh { mol_per_l: strong.to_f64() });
        }
        // The first activity coefficients: the previous cycle's ionic strength when it is a
        // valid one, else the strong ions'. They only choose where the iteration starts.
        let hint = match options.warm_start_ionic_strength {
            Some(i) if i.is_finite() && i >= R::ZERO && i <= max_ionic => i,
            _ => strong,
        };
        // Quick path (see `quick.rs`): Halley steps on the log charge ratio with the activity
        // coefficients updated inside the iteration. It returns only a state the nested solve
        // below would also accept; anything else continues there from where it stopped.
        let mut total_iterations = 0_u32;
        let mut ionic = hint;
        if options.newton && limit > 0 {
            if options.warm_start_ph.is_none() {
                start = self.view().cold_start_ph(self.activity_factor(hint));
            }
            match self.view().quick_solve(start, hint, limit) {
                Quick::Done(ph, e, it, af) => return Ok(self.finish(ph, e, it, af)),
                Quick::Continue(it, x, i) => {
                    total_iterations = it;
                    start = x;
                    ionic = clamp(i, max_ionic);
                }
            }
        }
        match self.activity() {
            Activity::Ideal => {
                // A lowered limit caps the whole solve; the default leaves the nested solve its
                // full worst case after the quick path.
                let budget = if options.max_iterations < max_ph_iterations::<R>() {
                    limit.saturating_sub(total_iterations)
                } else {
                    limit
                };
                if budget == 0 {
                    return Err(SolveError::IterationLimit { iterations: total_iterations });
                }
                let (ph, e, it) = self.inner_solve(start, R::ZERO, budget, options.newton).map_err(|e| match e {
                    SolveError::IterationLimit { iterations } => {
                        SolveError::IterationLimit { iterations: iterations.saturating_add(total_iterations) }
                    }
                    other => other,
                })?;
                Ok(self.finish(ph, e, total_iterations.saturating_add(it), R::ZERO))
            }
            Activity::Davies => {
                if total_iterations == 0 {
                    // No quick path: the first ionic strength comes from this composition (one
                    // evaluation at the start pH), never from a start guess or a previous cycle
                    // alone.
                    total_iterations = 1;
                    ionic = clamp(self.evaluate(start, activity::davies_factor(a, hint)).ionic_strength, max_ionic);
                }
                let mut previous_delta: Option<R> = None;
                for _round in 0..MAX_ACTIVITY_ITERATIONS {
                    let af = activity::davies_factor(a, ionic);
                    let (ph, e, it) = self.inner_solve(start, af, limit, options.newton)?;
                    total_iterations = total_iterations.saturating_add(it);
                    let next = e.ionic_strength;
                    // Converged when the ionic strength at the root reproduces the one its
                    // activity coefficients came from: relatively, or to where log10 γ moves by
                    // less than a tenth of the pH tolerance (the test that stops the 2-cycles
                    // noisy f32 arithmetic can fall into on an H⁺-dominated ionic strength).
                    // A pH that did not move is *not* convergence: after a salinity change
                    // the previous pH solves the old activity coefficients in one iteration.
                    let tol = R::IONIC_STRENGTH_TOLERANCE * next.max(R::from_f64(1e-12));
                    let af_moved = (activity::davies_factor(a, next) - af).abs();
                    if (next - ionic).abs() <= tol || af_moved <= R::from_f64(0.1) * R::PH_TOLERANCE {
                        if next > max_ionic {
                            return Err(SolveError::IonicStrengthTooHigh { mol_per_l: next.to_f64() });
                        }
                        return Ok(self.finish(ph, e, total_iterations, af));
                    }
                    if next > max_ionic && ionic >= max_ionic {
                        // Even the activity coefficients of the model's upper limit give a
                        // root beyond it: the fixed point lies outside the Davies range.
                        return Err(SolveError::IonicStrengthTooHigh { mol_per_l: next.to_f64() });
                    }
                    // Damp the update (average with the last value) when it changes direction:
                    // the fixed point is then cycling, which noisy f32 arithmetic can cause.
                    let delta = next - ionic;
                    let cycling = previous_delta.is_some_and(|p: R| (p > R::ZERO) != (delta > R::ZERO));
                    previous_delta = Some(delta);
                    ionic = clamp(if cycling { (ionic + next) * R::from_f64(0.5) } else { next }, max_ionic);
                    start = ph;
                }
                Err(SolveError::ActivityNotConverged)
            }
        }
    }

    fn finish(&self, ph: R, e: Eval<R>, iterations: u32, af: R) -> Equilibrium<R> {
        Equilibrium {
            resolution_ph: self.view().resolution_from_water(e.water, e.beta),
            ph,
            iterations,
            buffer_capacity_mol_per_l_per_ph: e.beta,
            ionic_strength_mol_per_l: e.ionic_strength,
            residual_eq_per_l: e.excess,
            davies_factor: af,
        }
    }

    /// One solve at fixed activity factor: returns (pH, evaluation at pH, iterations).
    ///
    /// Phase 1 (at most [`bisection_iterations`] iterations): guarded Newton. The Newton step
    /// is taken when it stays inside the bracket and the iteration is converging (the charge
    /// excess or the step at least halved since the previous iteration); a step within the
    /// tolerance ends the solve whatever the bracket says. Otherwise the solver
    /// bisects the bracket, or, while the root has only been bounded on one side, steps
    /// [`EXPANSION_STEP_PH`] towards it. Phase 2: plain bisection of the bracket phase 1 left,
    /// at most [`bisection_iterations`] more. Hence ≤ [`max_ph_iterations`] in all.
    fn inner_solve(&self, start: R, af: R, limit: u32, newton: bool) -> Result<(R, Eval<R>, u32), SolveError> {
        let tol = R::PH_TOLERANCE;
        let half = R::from_f64(0.5);
        let newton_budget = if newton { bisection_iterations::<R>() } else { 0 };
        let mut lo = R::from_f64(PH_MIN);
        let mut hi = R::from_f64(PH_MAX);
        let (mut lo_seen, mut hi_seen) = (false, false);
        let mut x = if newton { start } else { (lo + hi) * half };
        let mut previous: Option<(R, R)> = None; // (excess, step) of the previous iteration
        let mut iterations = 0_u32;
        while iterations < limit {
            iterations += 1;
            let e = self.evaluate(x, af);
            if !e.excess.is_finite() || !e.beta.is_finite() {
                return Err(SolveError::NonFinite);
            }
            if e.excess > R::ZERO {
                lo = x;
                lo_seen = true;
            } else if e.excess < R::ZERO {
                hi = x;
                hi_seen = true;
            } else {
                return self.accept(x, e, iterations, af);
            }
            let bisect = (lo + hi) * half;
            let next = if iterations <= newton_budget && e.beta > R::ZERO {
                let step = e.excess / e.beta;
                let n = x + step;
                let converging =
                    previous.is_none_or(|(pf, ps)| e.excess.abs() <= pf.abs() * half || step.abs() <= ps.abs() * half);
                if step.abs() <= tol {
                    // Converged: accept x below. Tested before the bracket because a step under
                    // half an ulp of x rounds to x itself, which is now a bracket edge, and the
                    // strict test would send the solver walking away from the root.
                    n
                } else if n > lo && n < hi && converging {
                    n
                } else if lo_seen && hi_seen {
                    bisect
                } else {
                    // Root bounded on one side only: walk towards it instead of jumping to the
                    // middle of the whole search range.
                    let walk = if e.excess > R::ZERO {
                        x + R::from_f64(EXPANSION_STEP_PH)
                    } else {
                        x - R::from_f64(EXPANSION_STEP_PH)
                    };
                    if walk > lo && walk < hi { walk } else { bisect }
                }
            } else {
                bisect
            };
            if (next - x).abs() <= tol || hi - lo <= tol {
                return self.accept(x, e, iterations, af);
            }
            previous = Some((e.excess, next - x));
            x = next;
        }
        Err(SolveError::IterationLimit { iterations })
    }

    /// ε·S/β at `ph` (see [`Equilibrium::resolution_ph`]). One pass over the components, no
    /// exponentials beyond H⁺ and OH⁻.
    pub(crate) fn resolution(&self, ph: R, af: R, beta: R) -> R {
        self.view().resolution(ph, af, beta)
    }

    /// Accepts a converged pH unless it sits on the edge of the search bracket (no root).
    fn accept(&self, x: R, e: Eval<R>, iterations: u32, af: R) -> Result<(R, Eval<R>, u32), SolveError> {
        let edge = R::from_f64(1e3) * R::PH_TOLERANCE;
        if x <= R::from_f64(PH_MIN) + edge || x >= R::from_f64(PH_MAX) - edge {
            let at_min = self.evaluate(R::from_f64(PH_MIN), af).excess.to_f64();
            let at_max = self.evaluate(R::from_f64(PH_MAX), af).excess.to_f64();
            if !(at_min > 0.0 && at_max < 0.0) {
                return Err(SolveError::NoRoot { excess_at_min_eq_per_l: at_min, excess_at_max_eq_per_l: at_max });
            }
        }
        Ok((x, e, iterations))
    }

    /// Concentrations of every form of every system, and of H⁺ and OH⁻, at a solved state.
    pub fn speciate(&self, eq: &Equilibrium<R>) -> Speciation<R, N> {
        let af = eq.davies_factor;
        let mut totals = heapless::Vec::new();
        for c in self.components() {
            let a = alphas(c, eq.ph, af);
            let mut conc = [R::ZERO; MAX_STEPS + 1];
            for (o, aj) in conc.iter_mut().zip(a.iter()) {
                *o = *aj * c.total_mol_per_l;
            }
            // Capacity equals the solution's, so this push cannot fail; ignore defensively.
            let _ = totals.push(conc);
        }
        Speciation {
            h_mol_per_l: (af - eq.ph).exp10(),
            oh_mol_per_l: (eq.ph - self.pkw() + af).exp10(),
            forms_mol_per_l: totals,
        }
    }
}

/// Concentrations at equilibrium.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Speciation<R: Real, const N: usize> {
    /// [H⁺], mol/L.
    pub h_mol_per_l: R,
    /// [OH⁻], mol/L.
    pub oh_mol_per_l: R,
    /// For each component (same order as [`Solution::components`]), the concentration of each
    /// form, fully protonated first, mol/L; entries past the system's last form are 0.
    pub forms_mol_per_l: heapless::Vec<[R; MAX_STEPS + 1], N>,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Celsius;

    fn ideal<const N: usize>() -> Solution<f64, N> {
        Solution::new(Celsius::standard(), Activity::Ideal)
    }

    #[test]
    fn pure_water_is_neutral() {
        let s = ideal::<1>();
        let e = s.solve().unwrap();
        assert!((e.ph - 13.995 / 2.0).abs() < 0.002, "{}", e.ph);
        // Water's buffer capacity at neutrality: ln10·2·1e-7 = 4.6e-7 (calc from the definition
        // β = ln10·([H+] + [OH-])).
        assert!((e.buffer_capacity_mol_per_l_per_ph - 4.6e-7).abs() < 0.05e-7);
    }

    #[test]
    fn ceil_log2_counts_doublings() {
        // The definition: the least n with 2^n ≥ ratio, by doubling.
        let by_doubling = |ratio: f64| {
            let (mut n, mut w) = (0_u32, 1.0_f64);
            while w < ratio && n < 64 {
                w *= 2.0;
                n += 1;
            }
            n
        };
        for ratio in [0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 1023.0, 1024.0, 1025.0, 1.7e11, 1.7e5, 1.7e4, 1e300] {
            assert_eq!(ceil_log2(ratio), by_doubling(ratio), "{ratio}");
        }
        assert_eq!(ceil_log2(f64::NAN), 0);
        assert_eq!(ceil_log2(f64::INFINITY), 64);
    }

    #[test]
    fn iteration_limits_are_what_the_docs_say() {
        assert_eq!(bisection_iterations::<f64>(), 38);
        // f32: tolerance 1e-5 (1e-4 with `fast-math`).
        assert_eq!(bisection_iterations::<f32>(), if cfg!(feature = "fast-math") { 18 } else { 21 });
        assert_eq!(max_ph_iterations::<f64>(), 76);
        assert_eq!(max_ph_iterations::<f32>(), if cfg!(feature = "fast-math") { 36 } else { 42 });
    }

    #[test]
    fn lowered_iteration_limit_is_reported() {
        let mut s = ideal::<2>();
        s.add_formula("H3PO4", 0.01).unwrap();
        // One evaluation fewer than the cold solve needs is not enough, and says so.
        let needed = s.solve().unwrap().iterations;
        assert!(needed >= 2, "{needed}");
        let opt = SolverOptions { max_iterations: needed - 1, ..SolverOptions::default() };
        assert_eq!(s.solve_with(opt), Err(SolveError::IterationLimit { iterations: needed - 1 }));
    }

    #[test]
    fn bisection_uses_exactly_the_documented_count_or_fewer() {
        let mut s = ideal::<2>();
        s.add_formula("Na2CO3", 0.003).unwrap();
        let e = s.solve_with(SolverOptions { newton: false, ..SolverOptions::default() }).unwrap();
        assert!(e.iterations <= bisection_iterations::<f64>() + 1, "{}", e.iterations);
        let n = s.solve().unwrap();
        assert!((n.ph - e.ph).abs() < 1e-9);
        assert!(n.iterations < e.iterations);
    }

    #[test]
    fn warm_start_takes_few_iterations() {
        let mut s: Solution<f64, 4> = Solution::standard();
        s.add_formula("NaHCO3", 0.002).unwrap();
        s.add_formula("HCl", 0.001).unwrap();
        let cold = s.solve().unwrap();
        let near = s.solve_from(cold.ph + 0.01).unwrap();
        assert!((near.ph - cold.ph).abs() < 1e-9);
        assert!(near.iterations <= 10, "iterations from a nearby pH: {}", near.iterations);
        let warm = s.solve_warm(&cold).unwrap();
        assert!((warm.ph - cold.ph).abs() < 1e-9);
        assert!(warm.iterations <= 2, "warm iterations {}", warm.iterations);
    }

    #[test]
    fn non_finite_warm_start_is_rejected() {
        let s = ideal::<1>();
        assert_eq!(s.solve_from(f64::NAN), Err(SolveError::NonFinite));
    }

    #[test]
    fn davies_refuses_high_ionic_strength() {
        let mut s: Solution<f64, 1> = Solution::standard();
        s.add_formula("NaCl", 2.0).unwrap();
        assert!(matches!(s.solve(), Err(SolveError::IonicStrengthTooHigh { .. })));
        s.set_activity(Activity::Ideal);
        assert!(s.solve().is_ok());
    }

    #[test]
    fn no_root_in_the_bracket_is_an_error() {
        // 15 M strong acid (ideal) would sit at pH −1.18, below the searched range.
        let mut s = ideal::<1>();
        s.add_formula("HCl", 15.0).unwrap();
        match s.solve() {
            Err(SolveError::NoRoot { excess_at_min_eq_per_l, .. }) => assert!(excess_at_min_eq_per_l < 0.0),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn strong_acid_and_base_limits() {
        // 0.01 M HCl, ideal: pH 2.000 (exact charge balance; water's share is negligible).
        let mut s = ideal::<1>();
        s.add_formula("HCl", 0.01).unwrap();
        assert!((s.solve().unwrap().ph - 2.0).abs() < 1e-6);
        let mut b = ideal::<1>();
        b.add_formula("NaOH", 0.01).unwrap();
        assert!((b.solve().unwrap().ph - (13.995 - 2.0)).abs() < 0.002);
    }

    #[test]
    fn speciation_sums_to_totals_and_balances_charge() {
        let mut s: Solution<f64, 4> = Solution::standard();
        s.add_formula("Na2HPO4", 0.01).unwrap();
        s.add_formula("CO2", 0.001).unwrap();
        let e = s.solve().unwrap();
        let sp = s.speciate(&e);
        let mut charge = sp.h_mol_per_l - sp.oh_mol_per_l + s.strong_charge_eq_per_l();
        for (c, f) in s.components().iter().zip(sp.forms_mol_per_l.iter()) {
            let sum: f64 = f.iter().sum();
            assert!((sum - c.total_mol_per_l).abs() < 1e-15);
            for (j, x) in f.iter().enumerate() {
                charge += f64::from(c.system.charge_of_form(j)) * x;
            }
        }
        assert!(charge.abs() < 1e-12, "{charge}");
    }
}
