//! The quick path of the pH solver: Halley steps on the log charge ratio, with the activity
//! coefficients updated inside the iteration.
//!
//! The charge balance is split into its positive and negative parts, P(x) (H⁺, strong-ion
//! excess when positive, every positively charged form) and N(x) (OH⁻, strong-ion deficit, every
//! negatively charged form), at pH x. The root of f = P − N is the root of
//! g(x) = ln P(x) − ln N(x). Where one species dominates each side, g is close to a straight
//! line in x (a strong acid gives g = ln10·(pC − x) exactly), so Newton steps on g land near the
//! root from far away, where Newton steps on f crawl at 0.43 pH per step. Near the root g is
//! smooth and Halley's method (which also uses g″) converges cubically.
//!
//! Davies mode: the activity coefficients of an evaluation come from the ionic strength the
//! previous evaluation predicted for this pH. Each evaluation also gives ∂g/∂(Davies factor) and
//! dI/dpH, so the step solves the coupled system to first order: the step is taken on
//! G(x) = g(x, F(I(x))) (F the Davies factor of an ionic strength) with its total derivative. An
//! answer is accepted only where the coefficients an evaluation used reproduce themselves (the
//! nested solve's own test), so the quick path changes how fast the answer is reached, not what it is.
//!
//! Every quantity comes out of one pass over the components with the same alpha fractions the
//! rest of the solver uses; the only extra work per evaluation is a few multiply–adds per form.

use super::activity;
use super::solution::Solution;
use super::solution::{Component, MAX_SYSTEMS};
use super::solve::{Eval, PH_MAX, PH_MIN, clamp};
use super::system::MAX_STEPS;
use crate::real::Real;

/// Largest final step, pH, that the quick path takes without evaluating after it (f64: 1e-7;
/// f32: its tolerance, as before). The step's own error is of the order of its square or
/// fourth power: below 1e-13 pH.
pub(crate) const FINAL_STEP_PH: f64 = 1e-7;

/// The same for a Householder step (fourth order: its error is of the order of the step to
/// the fourth power). Over the seeded corpus, re-solving each answer from itself moved it by
/// at most 2e-13 pH at this size (1e-14 at 1e-4; 2e-11 at 3e-3, too close to the 1e-10
/// tolerance), and by at most 1e-11 over the random mixtures of `tests/solver_counts.rs`.
pub(crate) const FINAL_HOUSEHOLDER_STEP_PH: f64 = 1e-3;

/// The same for the last step of a Davies solve, which moves the pH and the Davies factor
/// together by Newton on both equations: second order (the factor's elimination is first
/// order), so its error is of the order of the larger move squared. Over the seeded corpus,
/// re-solving each answer from itself moved it by at most 5e-13 pH at this size (1e-14 at
/// 1e-7, 2e-11 at 1e-5).
pub(crate) const FINAL_DAVIES_STEP_PH: f64 = 1e-6;

/// Most evaluations of the quick path; a solve it has not finished by then continues with the
/// nested solve from the last point.
pub const QUICK_ITERATIONS: u32 = 10;

/// Largest |pKa| the quick path takes (a solution with a larger one, which no chemistry has, is
/// left to the nested solve).
pub const MAX_PK: f64 = 100.0;

/// Largest pH step of one quick iteration.
const MAX_STEP_PH: f64 = 4.0;

/// Ka of every step of every component of one solve (rows in the components' order).
pub(crate) type StepConstants<R> = heapless::Vec<[R; MAX_STEPS], MAX_SYSTEMS>;

/// What the quick path reads of a solution, without its capacity: the quick path's code is
/// compiled once per real type instead of once per solution capacity (it is most of the
/// solver's code size on a board).
pub(crate) struct View<'a, R: Real> {
    components: &'a [Component<R>],
    strong_charge_eq_per_l: R,
    strong_ionic_strength_mol_per_l: R,
    pkw: R,
    kw: R,
    debye_huckel_a: R,
    davies: bool,
}

impl<R: Real, const N: usize> Solution<R, N> {
    /// The quick path's view of this solution.
    pub(crate) fn view(&self) -> View<'_, R> {
        View {
            components: self.components(),
            strong_charge_eq_per_l: self.strong_charge_eq_per_l(),
            strong_ionic_strength_mol_per_l: self.strong_ionic_strength_mol_per_l(),
            pkw: self.pkw(),
            kw: self.kw(),
            debye_huckel_a: self.debye_huckel_a(),
            davies: self.activity() == super::activity::Activity::Davies,
        }
    }
}

/// Largest ratio of neighbouring forms an evaluation carries (1e12 in `f32`, 1e30 in `f64`).
/// A larger one means the lower form's fraction is below 1e-12 (1e-30) of its neighbour's:
/// far beneath the precision, so capping changes no result; it keeps products of up to three
/// ratios finite.
fn ratio_cap<R: Real>() -> R {
    R::from_f64(if R::RELATIVE_PRECISION > 1e-10 { 1e12 } else { 1e30 })
}

/// `true` where `R`'s exponentials are approximations (`f32` with `fast-math`: micromath, about
/// 2e-3 relative, with jumps).
fn approximate_exp<R: Real>() -> bool {
    cfg!(feature = "fast-math") && R::RELATIVE_PRECISION > 1e-10
}

/// Largest pH (and Davies-factor) move, in pH units, up to which the quick path updates 10^∓pH
/// (10^±φ) by a short series instead of exponentials and a reciprocal (see [`Powers::advance`]).
const SERIES_STEP_PH: f64 = 0.05;

/// The four powers of ten an evaluation starts from: `e` = 10^−pH, `inv_e` = 10^pH, `big_g` =
/// 10^φ, `inv_g` = 10^−φ (φ the Davies factor).
#[derive(Clone, Copy)]
pub(crate) struct Powers<R> {
    e: R,
    inv_e: R,
    big_g: R,
    inv_g: R,
}

impl<R: Real> Powers<R> {
    /// At pH `x` and Davies factor `af`: two exponentials (one in ideal mode) and reciprocals.
    fn at(x: R, af: R) -> Self {
        let e = (-x).exp10_quick();
        let (big_g, inv_g) = if af != R::ZERO {
            let g = af.exp10_quick();
            (g, R::ONE / g)
        } else {
            (R::ONE, R::ONE)
        };
        Powers { e, inv_e: R::ONE / e, big_g, inv_g }
    }

    /// The powers at pH `to` and Davies factor `af` from these at pH `from` and `af_before`:
    /// where both moves are within [`SERIES_STEP_PH`], each pair is multiplied by 10^∓move from
    /// one series (10^y = E + O and 10^−y = E − O with E and O the even and odd parts of
    /// e^(y·ln10), the first term left out about 1e-20 relative in f64 and 3e-9 in f32): no
    /// exponential, no division. Otherwise, and with approximate exponentials (`fast-math`),
    /// [`Powers::at`] at exactly `to`. Each series update rounds to a few units in the last
    /// place; the quick path makes at most [`QUICK_ITERATIONS`] of them (a drift below 1e-14
    /// relative in f64, a unit test).
    fn advance(self, (from, to): (R, R), (af_before, af): (R, R)) -> Self {
        let limit = R::from_f64(SERIES_STEP_PH);
        let (dx, da) = (to - from, af - af_before);
        if approximate_exp::<R>() || !(dx.abs() <= limit && da.abs() <= limit) {
            return Self::at(to, af);
        }
        let (up, down) = pow10_pair(dx);
        let (e, inv_e) = (self.e * down, self.inv_e * up);
        let (big_g, inv_g) = if af == R::ZERO {
            (R::ONE, R::ONE)
        } else if da == R::ZERO {
            (self.big_g, self.inv_g)
        } else {
            let (up, down) = pow10_pair(da);
            (self.big_g * up, self.inv_g * down)
        };
        Powers { e, inv_e, big_g, inv_g }
    }
}

/// (10^y, 10^−y) for |y| ≤ [`SERIES_STEP_PH`] from the even and odd parts of the exponential
/// series in t = y·ln10 (|t| ≤ 0.116): to t¹¹ in f64 (the first term left out, t¹²/12!, is at
/// most 1.2e-20), to t⁵ in f32 (t⁶/720: at most 3.4e-9). Horner in t², the two parts side by side.
fn pow10_pair<R: Real>(y: R) -> (R, R) {
    let t = y * R::LN_10;
    let w = t * t;
    let c = |v: f64| R::from_f64(v);
    let (even, odd) = if R::RELATIVE_PRECISION > 1e-10 {
        (R::ONE + w * (c(0.5) + w * c(1.0 / 24.0)), R::ONE + w * (c(1.0 / 6.0) + w * c(1.0 / 120.0)))
    } else {
        let even = R::ONE
            + w * (c(0.5)
                + w * (c(1.0 / 24.0) + w * (c(1.0 / 720.0) + w * (c(1.0 / 40_320.0) + w * c(1.0 / 3_628_800.0)))));
        let odd = R::ONE
            + w * (c(1.0 / 6.0)
                + w * (c(1.0 / 120.0) + w * (c(1.0 / 5_040.0) + w * (c(1.0 / 362_880.0) + w * c(1.0 / 39_916_800.0)))));
        (even, odd)
    };
    let odd = t * odd;
    (even + odd, even - odd)
}

/// `base`^`exponent` by binary powering (at most 32 squarings).
fn pow_int<R: Real>(base: R, exponent: i32) -> R {
    let mut e = exponent.unsigned_abs();
    let (mut acc, mut b) = (R::ONE, base);
    while e > 0 {
        if e & 1 == 1 {
            acc *= b;
        }
        b *= b;
        e >>= 1;
    }
    if exponent < 0 { R::ONE / acc } else { acc }
}

/// Unnormalised amounts of a component's forms, d_0 = 1 and d_j = d_{j−1}·[A_j]/[A_{j−1}] with
/// [A_j]/[A_{j−1}] = K_j·10^pH·10^(−φ·(2·z_{j−1} − 1)), as products: no exponential per form.
/// `inv_h` = 10^pH, `big_g` = 10^φ, `inv_g` = 10^−φ (φ the Davies factor). Entries past the
/// component's steps are 0.
///
/// With `fast-math`, `f32`'s exponential is an approximation (about 2e-3 relative): there each
/// ratio is one exponential of its whole exponent, as in the nested solve, instead of a product
/// of three approximations (`x` and `af` are the pH and the Davies factor for that case).
fn form_weights<R: Real>(
    c: &Component<R>,
    ka: &[R; MAX_STEPS],
    (inv_h, big_g, inv_g): (R, R, R),
    (x, af): (R, R),
) -> [R; MAX_STEPS + 1] {
    let approximate_exp = approximate_exp::<R>();
    let n = c.system.step_count();
    let cap = ratio_cap::<R>();
    let z0 = c.system.charge_of_form(0);
    // 10^(−φ·(2·z_{j−1} − 1)) for j = 1: G^(1 − 2·z0); each further step multiplies by G².
    let mut activity = match 1 - 2 * z0 {
        1 => big_g,
        -1 => inv_g,
        e => pow_int(big_g, e),
    };
    let g2 = big_g * big_g;
    let mut d = [R::ZERO; MAX_STEPS + 1];
    let mut product = R::ONE;
    if let Some(first) = d.get_mut(0) {
        *first = R::ONE;
    }
    for (j, (slot, k)) in d.iter_mut().skip(1).zip(ka.iter()).enumerate().take(n) {
        let raw = if approximate_exp {
            let z_prev = c.system.charge_of_form(j);
            (x - crate::invariant::at(&c.pk, j) - af * R::from_i32(2 * z_prev - 1)).exp10()
        } else {
            *k * inv_h * activity
        };
        activity *= g2;
        product *= raw.max(R::ZERO).min(cap);
        *slot = product;
    }
    d
}

/// The distribution of a component's proton-loss number j over its forms: mean n̄ and central
/// moments μ2 (variance), μ3, μ4, from the unnormalised form amounts `d` (`n` steps). Taken about
/// the most abundant form (the raw moments of j − j_max are small where one form dominates, so
/// the central moments keep their relative precision there), one division.
#[derive(Clone, Copy)]
struct Moments<R> {
    mean: R,
    var: R,
    mu3: R,
    mu4: R,
    /// 1 / Σ d_j (the normalisation of the form amounts).
    inv_sum: R,
}

/// [`moments`] in closed form for one to three steps: with α_j = d_j / Σd and
/// t_j = j − n̄ written as Σ_k α_k·(j − k) (no cancellation where one form dominates, the same
/// relative precision as moments about the most abundant form), μ_r = Σ α_j·t_j^r. No search,
/// no integer conversions; the general sum for anything else.
fn moments_closed<R: Real>(d: &[R; MAX_STEPS + 1], n: usize) -> Moments<R> {
    match (n, d) {
        (1, [d0, d1, _, _]) => moments_of_2(*d0, *d1),
        (2, [d0, d1, d2, _]) => moments_of_3(*d0, *d1, *d2),
        (3, [d0, d1, d2, d3]) => moments_of_4(*d0, *d1, *d2, *d3),
        _ => moments(d, n),
    }
}

/// [`moments_closed`] of two forms with amounts `d0`, `d1`.
#[inline]
fn moments_of_2<R: Real>(d0: R, d1: R) -> Moments<R> {
    let three = R::from_f64(3.0);
    let inv_sum = R::ONE / (d0 + d1);
    let (a0, a1) = (d0 * inv_sum, d1 * inv_sum);
    let var = a0 * a1;
    Moments { mean: a1, var, mu3: var * (a0 - a1), mu4: var * (R::ONE - three * var), inv_sum }
}

/// [`moments_closed`] of three forms.
#[inline]
fn moments_of_3<R: Real>(d0: R, d1: R, d2: R) -> Moments<R> {
    let two = R::from_f64(2.0);
    let inv_sum = R::ONE / (d0 + d1 + d2);
    let (a0, a1, a2) = (d0 * inv_sum, d1 * inv_sum, d2 * inv_sum);
    let (t0, t1, t2) = (-(a1 + two * a2), a0 - a2, two * a0 + a1);
    let (w0, w1, w2) = (a0 * t0 * t0, a1 * t1 * t1, a2 * t2 * t2);
    Moments {
        mean: a1 + two * a2,
        var: w0 + w1 + w2,
        mu3: w0 * t0 + w1 * t1 + w2 * t2,
        mu4: w0 * t0 * t0 + w1 * t1 * t1 + w2 * t2 * t2,
        inv_sum,
    }
}

/// [`moments_closed`] of four forms.
#[inline]
fn moments_of_4<R: Real>(d0: R, d1: R, d2: R, d3: R) -> Moments<R> {
    let two = R::from_f64(2.0);
    let three = R::from_f64(3.0);
    let inv_sum = R::ONE / (d0 + d1 + d2 + d3);
    let (a0, a1, a2, a3) = (d0 * inv_sum, d1 * inv_sum, d2 * inv_sum, d3 * inv_sum);
    let t0 = -(a1 + two * a2 + three * a3);
    let t1 = a0 - a2 - two * a3;
    let t2 = two * a0 + a1 - a3;
    let t3 = three * a0 + two * a1 + a2;
    let (w0, w1, w2, w3) = (a0 * t0 * t0, a1 * t1 * t1, a2 * t2 * t2, a3 * t3 * t3);
    Moments {
        mean: a1 + two * a2 + three * a3,
        var: w0 + w1 + w2 + w3,
        mu3: w0 * t0 + w1 * t1 + w2 * t2 + w3 * t3,
        mu4: w0 * t0 * t0 + w1 * t1 * t1 + w2 * t2 * t2 + w3 * t3 * t3,
        inv_sum,
    }
}

/// The moments of a component straight from its step constants, the form amounts kept as
/// scalars (the same products as [`form_weights`], in the same order): no array of form amounts
/// is written and read back, which costs a store-forwarding stall per component where a
/// compiler moves it through memory in pieces (measured: a build with one codegen unit
/// spent 45 % longer per solve on it).
#[inline]
fn step_moments<R: Real>(c: &Component<R>, ka: &[R; MAX_STEPS], (inv_h, big_g, inv_g): (R, R, R)) -> Moments<R> {
    let cap = ratio_cap::<R>();
    let z0 = c.system.charge_of_form(0);
    let a1 = match 1 - 2 * z0 {
        1 => big_g,
        -1 => inv_g,
        e => pow_int(big_g, e),
    };
    let ratio = |k: R, activity: R| (k * inv_h * activity).max(R::ZERO).min(cap);
    let [k1, k2, k3] = *ka;
    match c.system.step_count() {
        1 => moments_of_2(R::ONE, ratio(k1, a1)),
        2 => {
            let g2 = big_g * big_g;
            let d1 = ratio(k1, a1);
            moments_of_3(R::ONE, d1, d1 * ratio(k2, a1 * g2))
        }
        3 => {
            let g2 = big_g * big_g;
            let a2 = a1 * g2;
            let d1 = ratio(k1, a1);
            let d2 = d1 * ratio(k2, a2);
            moments_of_4(R::ONE, d1, d2, d2 * ratio(k3, a2 * g2))
        }
        // (No catalogue system has another count; `x` and `af` serve only approximate
        // exponentials, which never take this path.)
        n => moments(&form_weights(c, ka, (inv_h, big_g, inv_g), (R::ZERO, R::ZERO)), n),
    }
}

fn moments<R: Real>(d: &[R; MAX_STEPS + 1], n: usize) -> Moments<R> {
    let mut top = 0_i32;
    let mut best = R::ZERO;
    for (j, v) in (0_i32..).zip(d.iter()).take(n + 1) {
        if *v > best {
            best = *v;
            top = j;
        }
    }
    let (mut s0, mut s1, mut s2, mut s3, mut s4) = (R::ZERO, R::ZERO, R::ZERO, R::ZERO, R::ZERO);
    for (j, v) in (0_i32..).zip(d.iter()).take(n + 1) {
        let t = R::from_i32(j - top);
        let t2 = t * t;
        s0 += *v;
        s1 += t * *v;
        s2 += t2 * *v;
        s3 += t2 * t * *v;
        s4 += t2 * t2 * *v;
    }
    let inv_sum = R::ONE / s0;
    let (e1, e2, e3, e4) = (s1 * inv_sum, s2 * inv_sum, s3 * inv_sum, s4 * inv_sum);
    let e1s = e1 * e1;
    let (three, four, six) = (R::from_f64(3.0), R::from_f64(4.0), R::from_f64(6.0));
    Moments {
        mean: R::from_i32(top) + e1,
        var: (e2 - e1s).max(R::ZERO),
        mu3: e3 - three * e1 * e2 + R::from_f64(2.0) * e1 * e1s,
        mu4: e4 - four * e1 * e3 + six * e1s * e2 - three * e1s * e1s,
        inv_sum,
    }
}

/// ln(P/N). Near the root (|u| ≤ 0.1 with u = (P − N)/(P + N)) by the series
/// ln(P/N) = 2·(u + u³/3 + … + u¹⁵/15) (f64; to u⁷/7 in f32), truncation below 1e-18 (1.2e-9)
/// relative, exact arithmetic only:
/// it carries the ratio's rounding alone, where ln P − ln N would add the rounding of two
/// logarithms of size |ln P|, and where an approximate `ln` (`fast-math`) would add its own
/// error right where the iteration decides it has converged. Elsewhere one logarithm.
fn ln_ratio<R: Real>(p: R, n: R) -> R {
    let u = (p - n) / (p + n);
    if u.abs() <= R::from_f64(0.1) {
        // The coefficients 1/(2k + 1) as constants: no division; the polynomial in w = u² by
        // Estrin's scheme (pairs, then pairs of pairs: four multiplications deep instead of
        // eight in a row). f32 stops after u⁷/7 (the next term is below 1.2e-9 of the sum,
        // under f32's rounding).
        let c = |k: u32| R::from_f64(1.0 / f64::from(2 * k + 1));
        let w = u * u;
        let w2 = w * w;
        let low = (R::ONE + c(1) * w) + w2 * (c(2) + c(3) * w);
        let sum = if R::RELATIVE_PRECISION > 1e-10 {
            low
        } else {
            let high = (c(4) + c(5) * w) + w2 * (c(6) + c(7) * w);
            low + (w2 * w2) * high
        };
        R::from_f64(2.0) * u * sum
    } else {
        (p / n).ln()
    }
}

/// `true` for a negative number (`false` for NaN as well as for ≥ 0).
fn negative<R: Real>(v: R) -> bool {
    v < R::ZERO
}

/// One evaluation of the log charge ratio and everything the quick step needs.
#[derive(Clone, Copy, Debug)]
pub(crate) struct LogEval<R> {
    /// The plain evaluation (excess, buffer capacity, ionic strength).
    pub eval: Eval<R>,
    /// g = ln P − ln N.
    pub g: R,
    /// dg/dpH at fixed activity coefficients.
    pub g1: R,
    /// d²g/dpH² at fixed activity coefficients.
    pub g2: R,
    /// d³g/dpH³ at fixed activity coefficients.
    pub g3: R,
    /// ∂g/∂(Davies factor) at fixed pH.
    pub g_af: R,
    /// dI/dpH at fixed activity coefficients, mol/L per pH (Davies mode; in ideal mode, where
    /// nothing reads it, only H⁺ and OH⁻ are counted).
    pub ionic_x: R,
    /// ∂I/∂(Davies factor) at fixed pH, mol/L.
    pub ionic_af: R,
    /// ∂(P − N)/∂(Davies factor) at fixed pH, eq/L: carries the residual along a final step.
    pub excess_af: R,
    /// d(P − N)/dpH, d²(P − N)/dpH², d³(P − N)/dpH³ at fixed activity coefficients, eq/L per
    /// pH (squared, cubed): carry the residual along a final step to third order.
    pub excess_x: [R; 3],
}

/// Outcome of the quick path.
pub(crate) enum Quick<R> {
    /// Converged: pH, its evaluation, evaluations spent, the Davies factor it used.
    Done(R, Eval<R>, u32, R),
    /// Not settled: evaluations spent, the last pH and the last ionic strength (for the nested
    /// solve to continue from).
    Continue(u32, R, R),
}

impl<R: Real> View<'_, R> {
    /// ε·S/β at `ph`, where ε is the real type's relative precision and S the sum of the
    /// magnitudes of every charge term (`Equilibrium::resolution_ph`). One pass over the
    /// components, no exponentials beyond H⁺ and OH⁻.
    pub(crate) fn resolution(&self, ph: R, af: R, beta: R) -> R {
        self.resolution_from_water((af - ph).exp10() + (ph - self.pkw + af).exp10(), beta)
    }

    /// The same from [H⁺] + [OH⁻] (`water`, mol/L) as an evaluation already has it: no exponential.
    pub(crate) fn resolution_from_water(&self, water: R, beta: R) -> R {
        let mut scale = water + R::from_f64(2.0) * self.strong_ionic_strength_mol_per_l;
        for c in self.components {
            let z0 = c.system.charge_of_form(0);
            let z_last = z0 - i32::from(c.system.steps);
            scale += c.total_mol_per_l * R::from_i32(z0.abs().max(z_last.abs()));
        }
        let epsilon = R::from_f64(R::RELATIVE_PRECISION);
        if beta > R::ZERO { epsilon * scale / beta } else { R::from_f64(f64::INFINITY) }
    }

    /// Writes the step constants of one solve into `rows`, Ka = 10^−pKa of every step of every
    /// component (one exponential each; Kw is cached by the solution). `false` when a pKa is not finite or beyond
    /// ±[`MAX_PK`] (no chemistry has one): such a solution goes to the nested solve, which refuses
    /// or solves it as it always did. Only the components' rows are written (no array to clear).
    pub(crate) fn step_constants(&self, rows: &mut StepConstants<R>) -> bool {
        rows.clear();
        let limit = R::from_f64(MAX_PK);
        for c in self.components {
            let mut row = [R::ZERO; MAX_STEPS];
            for (k, pk) in row.iter_mut().zip(c.pk.iter()).take(c.system.step_count()) {
                if !(pk.is_finite() && pk.abs() <= limit) {
                    return false;
                }
                *k = (-*pk).exp10_quick();
            }
            if rows.push(row).is_err() {
                return false;
            }
        }
        true
    }

    /// The log charge ratio and its derivatives at pH `x` with Davies factor `af`, from the
    /// powers of ten at that point ([`Powers`]): at most one logarithm, the rest products.
    ///
    /// Per component, every quantity comes from the moments of its proton-loss number j (see
    /// [`Moments`]). For a system whose most protonated form carries no positive charge (z0 ≤ 0:
    /// every catalogue system but ammonium), every form sits on the negative side with |z| = j − z0,
    /// so with m = n̄ − z0 its terms are: N = C·m, dN/dpH = ln10·C·μ2, d²N/dpH² = ln10²·C·μ3,
    /// d³N/dpH³ = ln10³·C·(μ4 − 3·μ2²); ∂N/∂φ = ln10·C·(2·m·μ2 + μ3); Σ z²·[A_j] = C·(m² + μ2),
    /// its pH derivative ln10·C·(2·m·μ2 + μ3) and its φ derivative
    /// ln10·C·(4·m²·μ2 + 4·m·μ3 + μ4 − μ2²) (C the total). A system with a positive form is summed
    /// form by form.
    pub(crate) fn evaluate_log(&self, x: R, af: R, powers: Powers<R>, ka: &[[R; MAX_STEPS]]) -> LogEval<R> {
        let ln10 = R::LN_10;
        let ln10_2 = ln10 * ln10;
        let ln10_3 = ln10_2 * ln10;
        let davies = self.davies;
        // [H+] = 10^(φ − pH), [OH−] = Kw·10^(pH + φ).
        let Powers { e, inv_e, big_g, inv_g } = powers;
        // With `fast-math` (approximate f32 exponentials), one exponential each, as in the
        // nested solve, instead of products of approximations.
        let (h, oh) = if approximate_exp::<R>() {
            ((af - x).exp10(), (x - self.pkw + af).exp10())
        } else {
            (e * big_g, self.kw * inv_e * big_g)
        };
        let q = self.strong_charge_eq_per_l;
        // Positive side: value, d/dx, d²/dx², d³/dx³, ∂/∂af; the same for the negative side.
        let (mut p, mut p1, mut p2, mut p3, mut pa) = (h, -ln10 * h, ln10_2 * h, -ln10_3 * h, ln10 * h);
        let (mut n, mut n1, mut n2, mut n3, mut na) = (oh, ln10 * oh, ln10_2 * oh, ln10_3 * oh, ln10 * oh);
        if q > R::ZERO {
            p += q;
        } else {
            n -= q;
        }
        let mut var_sum = h + oh;
        let mut ionic2 = h + oh;
        // d(Σ c·z²)/dpH and ∂(Σ c·z²)/∂φ, both divided by ln10 (multiplied back at the end).
        let (mut ionic2_x, mut ionic2_af) = (oh - h, oh + h);
        let (two, three, four) = (R::from_f64(2.0), R::from_f64(3.0), R::from_f64(4.0));
        // N's own φ derivative (without ln10), summed over the z0 ≤ 0 systems.
        let mut na_sum = R::ZERO;
        let (mut n1_sum, mut n2_sum, mut n3_sum) = (R::ZERO, R::ZERO, R::ZERO);
        for (c, k) in self.components.iter().zip(ka) {
            let steps = c.system.step_count();
            let z0 = c.system.charge_of_form(0);
            // The form amounts as an array only where they come from approximate exponentials
            // (`fast-math`) or are summed form by form (a system with a positive form, below).
            let mo = if approximate_exp::<R>() {
                moments_closed(&form_weights(c, k, (inv_e, big_g, inv_g), (x, af)), steps)
            } else {
                step_moments(c, k, (inv_e, big_g, inv_g))
            };
            let total = c.total_mol_per_l;
            var_sum += total * mo.var;
            if z0 <= 0 {
                let m = mo.mean - R::from_i32(z0);
                n += total * m;
                n1_sum += total * mo.var;
                n2_sum += total * mo.mu3;
                n3_sum += total * (mo.mu4 - three * mo.var * mo.var);
                ionic2 += total * (m * m + mo.var);
                // The ionic strength's derivatives serve the Davies step only.
                if davies {
                    let cov = two * m * mo.var + mo.mu3;
                    na_sum += total * cov;
                    ionic2_x += total * cov;
                    ionic2_af += total * (four * m * m * mo.var + four * m * mo.mu3 + mo.mu4 - mo.var * mo.var);
                }
                continue;
            }
            // A system with a positively charged form: form by form.
            let d = form_weights(c, k, (inv_e, big_g, inv_g), (x, af));
            let nbar = mo.mean;
            let z0r = R::from_i32(z0);
            // n̄·(n̄ − 2·z0) + μ2 = E[j·(j − 2·z0)].
            let mbar = nbar * (nbar - two * z0r) + mo.var;
            for (j, dj) in (0_i32..).zip(d.iter()).take(steps + 1) {
                let z = z0 - j;
                if z == 0 {
                    continue;
                }
                let w = total * *dj * mo.inv_sum;
                let dv = R::from_i32(j) - nbar;
                let dm = R::from_i32(j * (j - 2 * z0)) - mbar;
                let zr = R::from_i32(z.abs());
                let (v, v1, v2, va) =
                    (zr * w, zr * w * ln10 * dv, zr * w * ln10_2 * (dv * dv - mo.var), zr * w * ln10 * dm);
                // α‴_j = α_j·ln10³·(d³ − 3·d·var − μ3).
                let v3 = zr * w * ln10_3 * (dv * dv * dv - three * dv * mo.var - mo.mu3);
                if z > 0 {
                    p += v;
                    p1 += v1;
                    p2 += v2;
                    p3 += v3;
                    pa += va;
                } else {
                    n += v;
                    n1 += v1;
                    n2 += v2;
                    n3 += v3;
                    na += va;
                }
                let z2 = R::from_i32(z * z);
                ionic2 += z2 * w;
                ionic2_x += z2 * w * dv;
                ionic2_af += z2 * w * dm;
            }
        }
        n1 += ln10 * n1_sum;
        n2 += ln10_2 * n2_sum;
        n3 += ln10_3 * n3_sum;
        na += ln10 * na_sum;
        let half = R::from_f64(0.5);
        let (inv_p, inv_n) = (R::ONE / p, R::ONE / n);
        let (rp, rn) = (p1 * inv_p, n1 * inv_n);
        LogEval {
            eval: Eval {
                water: h + oh,
                excess: p - n,
                beta: ln10 * var_sum,
                ionic_strength: half * ionic2 + self.strong_ionic_strength_mol_per_l,
            },
            g: ln_ratio(p, n),
            g1: rp - rn,
            g2: p2 * inv_p - rp * rp - n2 * inv_n + rn * rn,
            // d/dx (P″/P − (P′/P)²) = P‴/P − 3·P″P′/P² + 2·(P′/P)³.
            g3: p3 * inv_p - three * (p2 * inv_p) * rp + two * rp * rp * rp
                - (n3 * inv_n - three * (n2 * inv_n) * rn + two * rn * rn * rn),
            g_af: pa * inv_p - na * inv_n,
            excess_af: pa - na,
            excess_x: [p1 - n1, p2 - n2, p3 - n3],
            ionic_x: half * ln10 * ionic2_x,
            ionic_af: half * ln10 * ionic2_af,
        }
    }

    /// A cold start without a charge-balance evaluation: the pH where the charges would
    /// balance if every step were all-or-nothing at its pKa (a staircase in pH), refined by
    /// Henderson–Hasselbalch on the step where the balance changes sign, by water alone when
    /// the root lies between steps with charge left over, and by the neighbouring steps' partial
    /// reactions when the charges balance on a plateau (salts of weak parents, amphiprotic forms,
    /// a weak acid alone). `af` is the Davies factor the step constants are corrected
    /// with (0 in ideal mode). Cost: one breakpoint per step, computed once into a list (at most
    /// `MAX_SYSTEMS`·`MAX_STEPS` = 96 entries on the stack), then (steps in the solution)²
    /// comparisons over that list (≤ 576 for eight triprotic systems) and at most two logarithms
    /// (and one exponential and a square root past the highest or below the lowest step).
    pub(crate) fn cold_start_ph(&self, af: R) -> R {
        let lo = R::from_f64(PH_MIN + 1.0);
        let hi = R::from_f64(PH_MAX - 1.0);
        let tiny = R::from_f64(1e-300_f64.max(f64::from(f32::MIN_POSITIVE)));
        // Below every step: all systems fully protonated.
        let mut s_low = self.strong_charge_eq_per_l;
        for c in self.components {
            s_low += c.total_mol_per_l * R::from_i32(c.system.charge_of_form(0));
        }
        // Effective breakpoint of step j (1-based) of component c.
        let point = |c: &super::solution::Component<R>, j: usize| -> R {
            let z_prev = c.system.charge_of_form(j - 1);
            crate::invariant::at(&c.pk, j - 1) + af * R::from_i32(2 * z_prev - 1)
        };
        // The step where S(b−) > 0 ≥ S(b+): S(b−) = s_low − Σ_{p < b} C, S(b+) = S(b−) − Σ_{p = b} C.
        let mut best: Option<(R, R, R)> = None; // (b, S(b−), S(b+))
        let mut s_high = s_low;
        // (breakpoint, total) of the lowest and of the highest step.
        let mut first: Option<(R, R)> = None;
        let mut top: Option<(R, R)> = None;
        // A level of the staircase this close to zero is zero: the charges balance on a plateau
        // (a salt of a weak parent, an amphiprotic form, a weak acid alone), where the root is
        // set by the neighbouring steps' partial reactions, not by a leftover of charge.
        let mut scale = self.strong_charge_eq_per_l.abs();
        for c in self.components {
            scale += c.total_mol_per_l * R::from_i32(i32::from(c.system.steps).max(1));
        }
        let zero = R::from_f64(1e-9) * scale;
        // Every step's breakpoint and total once, in the components' order (the sums below add
        // in the same order as a pass over the components would).
        let mut points: heapless::Vec<(R, R), { MAX_SYSTEMS * MAX_STEPS }> = heapless::Vec::new();
        for c in self.components {
            for j in 1..=c.system.step_count() {
                if points.push((point(c, j), c.total_mol_per_l)).is_err() {
                    return R::from_f64(7.0);
                }
            }
        }
        for &(b, total) in &points {
            s_high -= total;
            if first.is_none_or(|(f, _)| b < f) {
                first = Some((b, total));
            }
            if top.is_none_or(|(t, _)| b > t) {
                top = Some((b, total));
            }
            let (mut below, mut at) = (R::ZERO, R::ZERO);
            for &(p, c) in &points {
                if p < b {
                    below += c;
                } else if p == b {
                    at += c;
                }
            }
            let (before, after) = (s_low - below, s_low - below - at);
            if before > zero && after <= zero {
                best = Some((b, before, after));
            }
        }
        let (pkw, kw) = (self.pkw, self.kw);
        // Past the highest step b (total c) with a leftover s ≥ 0: OH⁻ = s + the top form's
        // hydrolysis c·10^(b−pH); a quadratic in u = 10^pH: Kw·u² − s·u − c·10^b = 0.
        let top_end = |b: R, c: R, s: R| -> R {
            let u = (s + (s * s + R::from_f64(4.0) * kw * c * b.exp10()).sqrt()) / (R::from_f64(2.0) * kw);
            u.max(tiny).log10() - af
        };
        // Below the lowest step b (total c) with a deficit s ≤ 0: H⁺ = −s + the bottom form's
        // dissociation c·10^(pH−b); a quadratic in v = 10^−pH: v² + s·v − c·10^−b = 0.
        let low_end = |b: R, c: R, s: R| -> R {
            let v = (-s + (s * s + R::from_f64(4.0) * c * (-b).exp10()).sqrt()) * R::from_f64(0.5);
            af - v.max(tiny).log10()
        };
        let x = match best {
            None if s_high > R::ZERO && s_high <= zero => top.map_or(R::from_f64(7.0), |(b, c)| top_end(b, c, s_high)),
            // Every step is passed with charge to spare: the root is where OH⁻ takes it up.
            None if s_high > R::ZERO => pkw + s_high.max(tiny).log10() - af,
            // Every step leaves a deficit: H⁺ makes it up.
            None if s_low < -zero => af - (-s_low).max(tiny).log10(),
            None => first.map_or(R::from_f64(7.0), |(b, c)| low_end(b, c, s_low)),
            Some((b, before, after)) if after >= -zero => {
                // (`after` ≤ zero from the search: this arm is |after| ≤ zero.)
                // A plateau at zero above b: between b and the next step up (jumps j_b and
                // j_next) the two partial reactions balance, pH = ½(b + b_next + log10(j_b/j_next));
                // past the top step, water takes up the hydrolysis.
                let jump = before - after;
                let mut next: Option<(R, R)> = None;
                for &(p, c) in &points {
                    if p > b && next.is_none_or(|(n, _)| p < n) {
                        next = Some((p, c));
                    }
                }
                match next {
                    Some((n, j_next)) => R::from_f64(0.5) * (b + n + (jump / j_next.max(tiny)).log10()),
                    None => top_end(b, jump, after.max(R::ZERO)),
                }
            }
            Some((b, before, after)) => {
                let water_left = pkw + before.max(tiny).log10() - af;
                let water_right = af - (-after).max(tiny).log10();
                if water_left < b {
                    water_left
                } else if after < R::ZERO && water_right > b {
                    water_right
                } else {
                    // Henderson–Hasselbalch on this step: the deprotonated fraction it needs.
                    let frac = (before / (before - after)).max(R::from_f64(1e-3)).min(R::from_f64(1.0 - 1e-3));
                    b + (frac / (R::ONE - frac)).log10()
                }
            }
        };
        if x.is_finite() { x.max(lo).min(hi) } else { R::from_f64(7.0) }
    }

    /// The quick path from pH `start`. `ionic` is the ionic strength whose activity
    /// coefficients the first evaluation uses (Davies mode; ignored in ideal mode). At most
    /// `limit.min(QUICK_ITERATIONS)` evaluations.
    ///
    /// Davies mode solves two equations together, g(x, φ) = 0 and F(I(x, φ)) − φ = 0 (φ the
    /// Davies factor, F the Davies function), by Newton's method on both, with Halley's
    /// correction on the pH equation.
    pub(crate) fn quick_solve(&self, start: R, ionic: R, limit: u32) -> Quick<R> {
        let davies = self.davies;
        let approximate_exp = approximate_exp::<R>();
        let a = self.debye_huckel_a;
        let max_ionic = R::from_f64(activity::DAVIES_MAX_IONIC_STRENGTH);
        let clamp_i = |i: R| clamp(i, max_ionic);
        let (lo0, hi0) = (R::from_f64(PH_MIN), R::from_f64(PH_MAX));
        let (mut lo, mut hi) = (lo0, hi0);
        let edge = R::from_f64(1e3) * R::PH_TOLERANCE;
        let tol = R::PH_TOLERANCE;
        let max_step = R::from_f64(MAX_STEP_PH);
        let half = R::from_f64(0.5);
        let mut x = start.max(lo0).min(hi0);
        let mut af = if davies { activity::davies_factor(a, clamp_i(ionic)) } else { R::ZERO };
        let mut last_ionic = ionic;
        let mut previous_step: Option<R> = None;
        let mut spent = 0_u32;
        let mut constants = StepConstants::new();
        if !self.step_constants(&mut constants) {
            return Quick::Continue(0, x, ionic);
        }
        let mut powers = Powers::at(x, af);
        while spent < limit.min(QUICK_ITERATIONS) {
            spent += 1;
            let e = self.evaluate_log(x, af, powers, &constants);
            let finite = e.g.is_finite()
                && e.g1.is_finite()
                && e.g2.is_finite()
                && e.g3.is_finite()
                && e.g_af.is_finite()
                && e.ionic_x.is_finite()
                && e.ionic_af.is_finite()
                && e.eval.beta.is_finite()
                && e.eval.excess.is_finite()
                && e.eval.ionic_strength.is_finite();
            if !finite || !negative(e.g1) {
                break;
            }
            let ionic_here = e.eval.ionic_strength;
            last_ionic = ionic_here;
            // The Davies equation's residual r = F(I) − φ and its derivatives: dr/dx = C,
            // dr/dφ = D (F′·∂I/∂φ − 1, close to −1).
            let (r, c, d, consistent) = if davies {
                let i = clamp_i(ionic_here);
                let (factor, slope) = activity::davies_factor_and_slope(a, i);
                let r = factor - af;
                // The nested solve's test: φ reproduces itself to a tenth of the pH tolerance,
                // or the ionic strength it stands for (I − r/F′) matches I relatively.
                let tol_i = R::IONIC_STRENGTH_TOLERANCE * ionic_here.max(R::from_f64(1e-12));
                let consistent = r.abs() <= R::from_f64(0.1) * tol || (slope > R::ZERO && r.abs() <= tol_i * slope);
                (r, slope * e.ionic_x, slope * e.ionic_af - R::ONE, consistent)
            } else {
                (R::ZERO, R::ZERO, -R::ONE, true)
            };
            if !negative(d) {
                break;
            }
            // Eliminate dφ = −(r + C·dx)/D: the pH equation becomes G + G′·dx = 0. (Reciprocals
            // of D and G′ once each: every division waits for the one before it, so the step
            // below holds two in a row instead of five.)
            let inv_d = R::ONE / d;
            let big_g = e.g - e.g_af * r * inv_d;
            let big_g1 = e.g1 - e.g_af * c * inv_d;
            if !negative(big_g1) {
                break;
            }
            let inv_g1 = R::ONE / big_g1;
            let newton = -big_g * inv_g1;
            // Bracket: in ideal mode the sign of g is the sign of the charge excess (the nested
            // solve trusts it the same way). In Davies mode G corrects the activity
            // coefficients to first order only, so its sign is trusted only where that
            // correction is under a tenth of G; a wrong bracket would hold the iteration away
            // from the root (a state the quick path accepts is a true root either way).
            if !davies || (big_g - e.g).abs() <= R::from_f64(0.1) * big_g.abs() {
                if big_g > R::ZERO {
                    lo = lo.max(x);
                } else if big_g < R::ZERO {
                    hi = hi.min(x);
                }
            }
            // Halley's correction: t = G·g″/(2·G′²). For t ≤ ½ it damps (t < 0) or lengthens
            // the step moderately; beyond, plain Newton.
            let t = half * big_g * e.g2 * inv_g1 * inv_g1;
            // Near the root, Householder's third-order step (quartic convergence, uses g‴).
            let cube = big_g1 * big_g1 * big_g1;
            let six = R::from_f64(6.0);
            let den = six * cube - six * big_g * big_g1 * e.g2 + big_g * big_g * e.g3;
            // The third-order term as a fraction of Newton's step, s3 = G²·g‴/(6·G′³): like t, a
            // correction only where it is small. (Where the slope is nearly flat and g‴ is not,
            // the Householder quotient is a small step that has nothing to do with the root: an
            // ammonium water 3.8 pH from its new root gave a step of 9e-4 pH.)
            // (|s3| ≤ 0.1 tested as |G²·g‴| ≤ 0.6·|G′³|: no division.) With |t| and |s3| both
            // within 0.1 the denominator is 6·G′³·(1 − 2t + s3), never near zero.
            let small = R::from_f64(0.1);
            let s3_small = (big_g * big_g * e.g3).abs() <= R::from_f64(0.6) * cube.abs();
            let householder = t.abs() <= small && s3_small;
            let step = if householder {
                -(six * big_g * big_g1 * big_g1 - R::from_f64(3.0) * big_g * big_g * e.g2) / den
            } else if t <= half {
                newton / (R::ONE - t)
            } else {
                newton
            };
            // Converged: the step is within the tolerance, or (ideal mode, where rounding of the
            // charge sum can make the step flip back and forth just above the tolerance) the
            // bracket is narrower than the tolerance.
            // A bracket narrower than what the working precision can resolve (f32 on a flat
            // stretch of the curve, where the charge sum's rounding moved along the curve by the
            // buffer capacity exceeds the tolerance) and than ten tolerances is as converged as
            // the arithmetic allows (the answer is then within ten tolerances plus the resolution,
            // the README's rule for f32); `Equilibrium::resolution_limited` then says so.
            //
            // A step of at most FINAL_STEP_PH (and within the bracket) is also final: taken
            // without another evaluation, it leaves an error of the order of the step squared
            // (Newton) or to the fourth power (Householder), far below the tolerance, so the
            // evaluation that would confirm it is skipped. The buffer capacity and ionic
            // strength reported are those of the last evaluation, one such step away; the
            // residual is carried along the step to first order.
            let width = hi - lo;
            let resolved =
                width <= R::from_f64(10.0) * tol && width <= self.resolution_from_water(e.eval.water, e.eval.beta);
            let final_limit = if householder { FINAL_HOUSEHOLDER_STEP_PH } else { FINAL_STEP_PH };
            // With approximate exponentials (`fast-math`) the charge balance itself is off by
            // up to 2e-3 relative, varying with the pH (micromath's exponential has jumps), so a
            // step's own error says nothing about where it lands: no step longer than the
            // tolerance is taken unconfirmed there (a warm and a cold solve of one water landed
            // 1e-3 pH apart on the two sides of such a jump).
            let final_limit = if approximate_exp { 0.0 } else { final_limit };
            let final_step = R::from_f64(final_limit).max(tol);
            let inside = x + step >= lo && x + step <= hi;
            // Davies mode: the final step moves the Davies factor as well, by Newton on both
            // equations (second order: with both moves at most FINAL_DAVIES_STEP_PH its error
            // is of the order of their square, about 1e-12 pH); the φ elimination is first
            // order, so the Householder allowance does not apply.
            let d_af_final = if davies { -(r + c * step) * inv_d } else { R::ZERO };
            let davies_final = R::from_f64(if approximate_exp { 0.0 } else { FINAL_DAVIES_STEP_PH }).max(tol);
            // Only where the step is Newton's to within a tenth (|t| ≤ 0.1): a Halley step
            // damped by a large negative t is short however far the root is.
            let near = t.abs() <= small;
            let short = if davies {
                step.abs() <= davies_final && d_af_final.abs() <= davies_final
            } else {
                step.abs() <= final_step
            };
            // The ionic strength at the end of a final step (first order): a step that would
            // carry it past the Davies model's limit is not final (the limit's checks below
            // and in the nested solve decide there).
            let ionic_final =
                if davies && short { ionic_here + e.ionic_x * step + e.ionic_af * d_af_final } else { ionic_here };
            let finishing = short && near && inside && ionic_final <= max_ionic;
            if (step.abs() <= tol || width <= tol || resolved || finishing) && (consistent || finishing) {
                if ionic_here > max_ionic || x <= lo0 + edge || x >= hi0 - edge {
                    break;
                }
                if finishing {
                    // The residual at the state returned, by Taylor's series along the step to
                    // third order in the pH (a Householder step may be 1e-3 pH, where the
                    // second-order term still shows) and first order in the Davies factor;
                    // the ionic strength to first order.
                    let mut eval = e.eval;
                    let [e1, e2, e3] = e.excess_x;
                    let sixth = R::from_f64(1.0 / 6.0);
                    eval.excess += step * (e1 + step * (half * e2 + step * sixth * e3));
                    if davies {
                        eval.excess += e.excess_af * d_af_final;
                        eval.ionic_strength = ionic_final;
                    }
                    return Quick::Done(x + step, eval, spent, af + d_af_final);
                }
                return Quick::Done(x, e.eval, spent, af);
            }
            // At the rounding floor: steps of a few tolerances that flip sign without
            // shrinking. Bisect the bracket when there is one; else the nested solve, with its
            // own bracket, finishes from here.
            let floor = step.abs() <= R::from_f64(100.0) * tol;
            let stalled = floor
                && previous_step.is_some_and(|p: R| (p > R::ZERO) != (step > R::ZERO) && step.abs() > half * p.abs());
            previous_step = Some(step);
            if stalled {
                if lo > lo0 && hi < hi0 && x >= lo && x <= hi {
                    x = (lo + hi) * half;
                    powers = Powers::at(x, af);
                    previous_step = None;
                    continue;
                }
                break;
            }
            let bounded = step.max(-max_step).min(max_step);
            let mut next = x + bounded;
            if bounded.abs() > tol && !(next > lo && next < hi) {
                next = (lo + hi) * half;
            }
            let af_before = af;
            if davies {
                let d_af = -(r + c * (next - x)) * inv_d;
                af = (af + d_af).max(R::ZERO);
            }
            powers = powers.advance((x, next), (af_before, af));
            x = next;
        }
        Quick::Continue(spent, x, last_ionic)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 10^y by the standard library's `powf` (a second implementation, not the series).
    fn reference(y: f64) -> f64 {
        10f64.powf(y)
    }

    #[test]
    fn series_pair_matches_powers_of_ten_over_its_range() {
        let n = 2_000;
        let (mut worst64, mut worst32) = (0.0_f64, 0.0_f64);
        for k in 0..=n {
            let y = SERIES_STEP_PH * (2.0 * f64::from(k) / f64::from(n) - 1.0);
            let (up, down) = pow10_pair(y);
            worst64 = worst64.max((up / reference(y) - 1.0).abs()).max((down / reference(-y) - 1.0).abs());
            #[allow(clippy::cast_possible_truncation)]
            let (up, down) = pow10_pair(y as f32);
            let y32 = f64::from(y as f32);
            worst32 = worst32
                .max((f64::from(up) / reference(y32) - 1.0).abs())
                .max((f64::from(down) / reference(-y32) - 1.0).abs());
        }
        // A few units in the last place: 2.2e-16 and 1.2e-7 per unit.
        assert!(worst64 < 1e-15, "f64 worst relative error {worst64:e}");
        assert!(worst32 < 4e-7, "f32 worst relative error {worst32:e}");
    }

    #[test]
    fn log_ratio_series_matches_the_logarithm() {
        // Both sides of the series' switch (|u| = 0.1) and deep inside it. Reference: std's
        // ln_1p((p − n)/n) in f64 (p − n exact here, so no rounding of a ratio near 1 spoils it);
        // bounds a few units in the last place.
        for k in -120..=120 {
            let u = f64::from(k) * 1e-3;
            let (p, n) = (3e-4 * (1.0 + u), 3e-4 * (1.0 - u));
            let want = ((p - n) / n).ln_1p();
            let got = ln_ratio(p, n);
            assert!((got - want).abs() <= 1e-15 * want.abs(), "u = {u}: {got:e} against {want:e}");
            #[allow(clippy::cast_possible_truncation)]
            let (p32, n32) = (p as f32, n as f32);
            let want = ((f64::from(p32) - f64::from(n32)) / f64::from(n32)).ln_1p();
            let got32 = f64::from(ln_ratio(p32, n32));
            assert!((got32 - want).abs() <= 4e-7 * want.abs(), "f32 u = {u}: {got32:e} against {want:e}");
        }
    }

    #[test]
    fn advancing_powers_stays_on_the_exponentials() {
        // Ten small moves (the quick path's most), then one past the series' range.
        let (mut x, mut af) = (6.3_f64, 0.11_f64);
        let mut p = Powers::at(x, af);
        let moves = [0.049, -0.031, 0.002, 1e-7, -0.05, 0.0, 0.013, -0.0004, 0.04, -0.02, 0.7];
        for (k, dx) in moves.into_iter().enumerate() {
            let af_next = if k == 5 { 0.0 } else { af + 0.1 * dx };
            p = p.advance((x, x + dx), (af, af_next));
            x += dx;
            af = af_next;
            for (got, want) in
                [(p.e, reference(-x)), (p.inv_e, reference(x)), (p.big_g, reference(af)), (p.inv_g, reference(-af))]
            {
                assert!((got / want - 1.0).abs() < 1e-14, "move {k}: {got:e} against {want:e}");
            }
        }
    }
}
