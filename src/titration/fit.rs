//! Influent characterisation: fit an effective composition to a lab titration of the real
//! influent (added reagent vs measured pH) by bounded Levenberg–Marquardt with fixed-size
//! matrices.
//!
//! Unknowns (up to [`MAX_PARAMETERS`]): the net strong-ion charge (always), the carbonate total
//! (optional) and up to two generic monoprotic weak buffers (total and pKa each). Totals are
//! fitted as log10 (so they stay positive), pKa within [`PKA_RANGE`]. Residuals are in pH.

use crate::chem::system::{AcidBaseSystem, LogK};
use crate::chem::{Activity, Solution, catalogue};
use crate::real::Real;
use crate::units::Celsius;

/// Most parameters: strong charge, carbonate, two buffers × (total, pKa).
pub const MAX_PARAMETERS: usize = 6;
/// Most Levenberg–Marquardt iterations.
pub const MAX_FIT_ITERATIONS: u32 = 60;
/// Allowed range of a fitted buffer's pKa.
pub const PKA_RANGE: (f64, f64) = (1.0, 13.0);
/// Allowed range of log10(total / (mol/L)) of a fitted total.
pub const LOG_TOTAL_RANGE: (f64, f64) = (-7.0, 0.0);
/// Largest acceptable standard error of a fitted log10 total (a factor of 10^0.5 ≈ 3) or pKa
/// (0.5 pH); beyond it the data do not determine the parameter and the fit is refused.
pub const MAX_STANDARD_ERROR_LOG: f64 = 0.5;

/// The generic buffer systems a fit may use (monoprotic HA / A⁻, pKa set by the fit).
pub const BUFFER_KEYS: [&str; 2] = ["fitted-buffer-a", "fitted-buffer-b"];

/// What to fit.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FitSpec<R: Real> {
    /// Fit a carbonate total.
    pub carbonate: bool,
    /// Number of generic buffers to fit (0–2).
    pub buffers: u8,
    /// Sample volume titrated, L.
    pub sample_volume_l: R,
    /// Temperature of the titration.
    pub temperature: Celsius<R>,
    /// Activity mode of the model.
    pub activity: Activity,
}

/// An effective composition (the fit's result, or a starting guess).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Effective<R: Real> {
    /// Net strong-ion charge, eq/L (strong cations minus strong anions).
    pub strong_charge_eq_per_l: R,
    /// Carbonate total, mol/L (0 when not fitted).
    pub carbonate_mol_per_l: R,
    /// Generic buffers: (total mol/L, pKa at 25 °C); unused entries are (0, 7).
    pub buffers: [(R, R); 2],
}

impl<R: Real> Effective<R> {
    /// The composition as a solution at `temperature` (buffers taken with ΔH° = 0). `N` ≥ 3
    /// holds every fitted system; extra room is for what is mixed in later (a titrant).
    pub fn solution<const N: usize>(&self, temperature: Celsius<R>, activity: Activity) -> Solution<R, N> {
        let mut s = Solution::new(temperature, activity);
        let q = self.strong_charge_eq_per_l;
        // Errors here mean a non-finite or absurd value: the fit's bounds prevent them.
        let _ = if q >= R::ZERO { s.add_strong_ion(1, q) } else { s.add_strong_ion(-1, -q) };
        if self.carbonate_mol_per_l > R::ZERO {
            let _ = s.add_system(&catalogue::CARBONATE, self.carbonate_mol_per_l);
        }
        for (i, (total, pka)) in self.buffers.iter().enumerate() {
            if *total > R::ZERO {
                let _ = s.add_system(&buffer_system(i, pka.to_f64()), *total);
            }
        }
        s
    }
}

/// A generic monoprotic buffer (HA/A⁻) with the given pKa at 25 °C and ΔH° = 0.
pub fn buffer_system(index: usize, pka: f64) -> AcidBaseSystem {
    AcidBaseSystem {
        key: BUFFER_KEYS.get(index).copied().unwrap_or("fitted-buffer"),
        forms: ["HA", "A-", "", ""],
        steps: 1,
        log_k: [
            LogK::vant_hoff(pka, 0.0),
            LogK::analytic(0.0, 0.0, 0.0, 0.0, 0.0),
            LogK::analytic(0.0, 0.0, 0.0, 0.0, 0.0),
        ],
        charge_protonated: 0,
        parent_acid: "HA",
    }
}

/// A fitted composition with its uncertainties.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FitResult<R: Real> {
    /// The effective composition.
    pub effective: Effective<R>,
    /// Standard errors in the same units (0 for parameters not fitted).
    pub standard_errors: Effective<R>,
    /// Root-mean-square residual, pH.
    pub rms_ph: R,
    /// Points used.
    pub points: u32,
    /// Levenberg–Marquardt iterations used.
    pub iterations: u32,
}

/// Why a fit was refused.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum FitError {
    /// Fewer points than parameters + 2, or a point is not finite, or the setup is invalid.
    InvalidData,
    /// The data do not determine this parameter (singular or near-singular normal matrix, or a
    /// standard error above [`MAX_STANDARD_ERROR_LOG`]).
    IllConditioned {
        /// Which parameter: "strong charge", "carbonate", "buffer a total", "buffer a pKa" …
        parameter: &'static str,
    },
    /// The model could not be evaluated at some point (a solve failed).
    ModelFailed,
}

impl core::fmt::Display for FitError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::InvalidData => {
                f.write_str("need finite data, at least two more points than parameters, and a positive sample volume")
            }
            Self::IllConditioned { parameter } => {
                write!(f, "ill-conditioned fit: the titration data do not determine the {parameter}")
            }
            Self::ModelFailed => f.write_str("the model could not be solved at a data point"),
        }
    }
}

impl core::error::Error for FitError {}

const NAMES: [&str; MAX_PARAMETERS] =
    ["strong charge", "carbonate", "buffer a total", "buffer a pKa", "buffer b total", "buffer b pKa"];

/// Parameter vector layout: [Q (meq/L), log10 C_T, log10 C_a, pKa_a, log10 C_b, pKa_b].
#[derive(Clone, Copy)]
struct Layout {
    active: [bool; MAX_PARAMETERS],
}

impl Layout {
    fn new<R: Real>(spec: &FitSpec<R>) -> Self {
        let b = spec.buffers.min(2);
        Self { active: [true, spec.carbonate, b >= 1, b >= 1, b >= 2, b >= 2] }
    }
    fn count(&self) -> usize {
        self.active.iter().filter(|a| **a).count()
    }
}

fn to_effective<R: Real>(p: &[R; MAX_PARAMETERS], layout: Layout) -> Effective<R> {
    let get = |i: usize| p.get(i).copied().unwrap_or(R::ZERO);
    let total = |i: usize| if layout.active.get(i).copied().unwrap_or(false) { get(i).exp10() } else { R::ZERO };
    Effective {
        strong_charge_eq_per_l: get(0) * R::from_f64(1e-3),
        carbonate_mol_per_l: total(1),
        buffers: [(total(2), get(3)), (total(4), get(5))],
    }
}

fn clamp_parameters<R: Real>(p: &mut [R; MAX_PARAMETERS]) {
    for (i, v) in p.iter_mut().enumerate() {
        let (lo, hi) = match i {
            0 => (-1000.0, 1000.0),
            3 | 5 => PKA_RANGE,
            _ => LOG_TOTAL_RANGE,
        };
        *v = v.max(R::from_f64(lo)).min(R::from_f64(hi));
    }
}

/// Residual sum of squares (pH²) of the model with parameters `p` over all points.
fn residual_sum<R: Real, const M: usize>(
    p: &[R; MAX_PARAMETERS],
    layout: Layout,
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    data: &[(R, R)],
) -> Result<R, FitError> {
    let sample: Sample<R> = to_effective(p, layout).solution(spec.temperature, spec.activity);
    let mut rss = R::ZERO;
    for (v, ph) in data {
        let r = point_residual(&sample, spec, titrant, *v, *ph)?;
        rss += r * r;
    }
    Ok(rss)
}

/// Fits `spec`'s unknowns to `data` = (titrant added in L, measured pH), ascending in titrant,
/// for a sample titrated with `titrant`, starting from `start`.
///
/// Bounded: at most [`MAX_FIT_ITERATIONS`] iterations, each (k + 1) model evaluations of every
/// point for the Jacobian plus at most 12 damped trials, k ≤ [`MAX_PARAMETERS`].
pub fn fit<R: Real, const M: usize>(
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    data: &[(R, R)],
    start: &Effective<R>,
) -> Result<FitResult<R>, FitError> {
    let layout = Layout::new(spec);
    let k = layout.count();
    let vol = spec.sample_volume_l.to_f64();
    if data.len() < k + 2
        || !(vol.is_finite() && vol > 0.0)
        || data.iter().any(|(v, p)| !v.is_finite() || !p.is_finite())
    {
        return Err(FitError::InvalidData);
    }
    let log_or = |c: R, default: f64| if c > R::ZERO { c.log10() } else { R::from_f64(default) };
    let mut p: [R; MAX_PARAMETERS] = [
        start.strong_charge_eq_per_l * R::from_f64(1000.0),
        log_or(start.carbonate_mol_per_l, -3.0),
        log_or(start.buffers[0].0, -3.5),
        start.buffers[0].1,
        log_or(start.buffers[1].0, -3.5),
        start.buffers[1].1,
    ];
    clamp_parameters(&mut p);
    let h = R::PH_TOLERANCE.sqrt() * R::from_f64(10.0);
    let mut lambda = R::from_f64(1e-3);
    let mut rss = residual_sum(&p, layout, spec, titrant, data)?;
    let mut iterations = 0;
    for it in 1..=MAX_FIT_ITERATIONS {
        iterations = it;
        // Normal equations from a forward-difference Jacobian, accumulated point by point.
        let (a, g) = normal_equations(&p, layout, spec, titrant, data, h)?;
        let mut improved = false;
        // Up to 8 damping increases per iteration.
        let max_diag =
            (0..MAX_PARAMETERS).filter_map(|i| a.get(i).and_then(|r| r.get(i))).fold(R::ZERO, |m, d| m.max(*d));
        for _ in 0..12 {
            // Marquardt scaling, with a floor so a column the data do not see stays invertible.
            let mut damped = a;
            for (i, row) in damped.iter_mut().enumerate() {
                if let Some(d) = row.get_mut(i) {
                    *d += lambda * d.max(R::from_f64(1e-6) * max_diag).max(R::from_f64(1e-30));
                }
            }
            let Some(step) = solve_spd(&damped, &g, layout) else {
                lambda *= R::from_f64(10.0);
                continue;
            };
            // Trust region: at most 1 unit of log10 total or pKa, and half the strong charge (or
            // 0.1 meq/L), per iteration: titration curves are too nonlinear for long steps.
            let mut trial = p;
            for (i, (t, s)) in trial.iter_mut().zip(step.iter()).enumerate() {
                let limit = if i == 0 { (t.abs() * R::from_f64(0.5)).max(R::from_f64(0.1)) } else { R::ONE };
                *t -= s.max(-limit).min(limit);
            }
            clamp_parameters(&mut trial);
            let trial_rss = residual_sum(&trial, layout, spec, titrant, data)?;
            if trial_rss < rss {
                let gain = rss - trial_rss;
                p = trial;
                rss = trial_rss;
                lambda = (lambda * R::from_f64(0.1)).max(R::from_f64(1e-12));
                improved = gain > R::from_f64(1e-12) * (rss + R::from_f64(1e-20));
                break;
            }
            lambda *= R::from_f64(10.0);
        }
        if !improved {
            break;
        }
    }
    // Covariance: s²·(JᵀJ)⁻¹ at the solution.
    let (a, _) = normal_equations(&p, layout, spec, titrant, data, h)?;
    let n = data.len();
    let dof = R::from_f64((n - k) as f64);
    let s2 = (rss / dof).max(R::from_f64(1e-12));
    let mut se = [R::ZERO; MAX_PARAMETERS];
    for (i, e) in se.iter_mut().enumerate() {
        if !layout.active.get(i).copied().unwrap_or(false) {
            continue;
        }
        let mut unit = [R::ZERO; MAX_PARAMETERS];
        if let Some(u) = unit.get_mut(i) {
            *u = R::ONE;
        }
        let name = NAMES.get(i).copied().unwrap_or("parameter");
        let col = solve_spd(&a, &unit, layout).ok_or(FitError::IllConditioned { parameter: name })?;
        let var = col.get(i).copied().unwrap_or(R::ZERO) * s2;
        if !var.is_finite() || var < R::ZERO {
            return Err(FitError::IllConditioned { parameter: name });
        }
        *e = var.sqrt();
        // log10 totals and pKa: refuse if the data leave them loose.
        if i > 0 && *e > R::from_f64(MAX_STANDARD_ERROR_LOG) {
            return Err(FitError::IllConditioned { parameter: name });
        }
    }
    let eff = to_effective(&p, layout);
    let ln10 = R::LN_10;
    let se_of = |i: usize| se.get(i).copied().unwrap_or(R::ZERO);
    let standard_errors = Effective {
        strong_charge_eq_per_l: se_of(0) * R::from_f64(1e-3),
        carbonate_mol_per_l: eff.carbonate_mol_per_l * ln10 * se_of(1),
        buffers: [(eff.buffers[0].0 * ln10 * se_of(2), se_of(3)), (eff.buffers[1].0 * ln10 * se_of(4), se_of(5))],
    };
    Ok(FitResult {
        effective: eff,
        standard_errors,
        rms_ph: (rss / R::from_f64(n as f64)).sqrt(),
        points: u32::try_from(n).unwrap_or(u32::MAX),
        iterations,
    })
}

type Matrix<R> = [[R; MAX_PARAMETERS]; MAX_PARAMETERS];

fn normal_equations<R: Real, const M: usize>(
    p: &[R; MAX_PARAMETERS],
    layout: Layout,
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    data: &[(R, R)],
    h: R,
) -> Result<(Matrix<R>, [R; MAX_PARAMETERS]), FitError> {
    // One sample per shifted parameter (forward differences), built once. The Jacobian is never
    // stored: each data point's row (≤ 6 numbers) is accumulated into JᵀJ and Jᵀr at once.
    let base: Sample<R> = to_effective(p, layout).solution(spec.temperature, spec.activity);
    let mut shifted: [Option<Sample<R>>; MAX_PARAMETERS] = Default::default();
    for (i, slot) in shifted.iter_mut().enumerate() {
        if layout.active.get(i).copied().unwrap_or(false) {
            let mut q = *p;
            if let Some(v) = q.get_mut(i) {
                *v += h;
            }
            *slot = Some(to_effective(&q, layout).solution(spec.temperature, spec.activity));
        }
    }
    let mut a = [[R::ZERO; MAX_PARAMETERS]; MAX_PARAMETERS];
    let mut g = [R::ZERO; MAX_PARAMETERS];
    for (v, ph) in data {
        let r0 = point_residual(&base, spec, titrant, *v, *ph)?;
        let mut row = [R::ZERO; MAX_PARAMETERS];
        for (j, s) in row.iter_mut().zip(shifted.iter()) {
            if let Some(sample) = s {
                *j = (point_residual(sample, spec, titrant, *v, *ph)? - r0) / h;
            }
        }
        for (i, ri) in row.iter().enumerate() {
            if let Some(x) = g.get_mut(i) {
                *x += *ri * r0;
            }
            if let Some(arow) = a.get_mut(i) {
                for (x, rj) in arow.iter_mut().zip(row.iter()) {
                    *x += *ri * *rj;
                }
            }
        }
    }
    Ok((a, g))
}

/// Model sample: the three fitted systems plus room for up to three titrant systems.
type Sample<R> = Solution<R, 6>;

fn point_residual<R: Real, const M: usize>(
    sample: &Sample<R>,
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    titrant_l: R,
    measured_ph: R,
) -> Result<R, FitError> {
    let mix = sample.mix(spec.sample_volume_l, titrant, titrant_l).map_err(|_| FitError::ModelFailed)?;
    let eq = mix.solve_from(measured_ph).map_err(|_| FitError::ModelFailed)?;
    Ok(eq.ph - measured_ph)
}

/// Solves A·x = b on the active sub-block by Cholesky; `None` when A is not positive definite
/// or a pivot is below 1e-12 of the largest diagonal (numerically singular). k ≤ 6: fixed work.
/// Written with `get` throughout so that no bounds check can panic (the link-time check in
/// tools/no-panic proves it).
fn solve_spd<R: Real>(a: &Matrix<R>, b: &[R; MAX_PARAMETERS], layout: Layout) -> Option<[R; MAX_PARAMETERS]> {
    // Indices of the active parameters (push, not `collect`: heapless' FromIterator panics on
    // overflow, and the optimiser cannot see that at most MAX_PARAMETERS come).
    let mut idx: heapless::Vec<usize, MAX_PARAMETERS> = heapless::Vec::new();
    for (i, active) in layout.active.iter().enumerate() {
        if *active {
            let _ = idx.push(i);
        }
    }
    let k = idx.len();
    let read = |m: &Matrix<R>, i: usize, j: usize| m.get(i).and_then(|row| row.get(j)).copied().unwrap_or(R::ZERO);
    let at = |i: usize, j: usize| match (idx.get(i), idx.get(j)) {
        (Some(&r), Some(&c)) => read(a, r, c),
        _ => R::ZERO,
    };
    let max_diag = (0..k).map(|i| at(i, i)).fold(R::ZERO, |m, d| m.max(d));
    if !max_diag.is_finite() || max_diag <= R::ZERO {
        return None;
    }
    // L·Lᵀ = A (lower triangle in `l`).
    let mut l: Matrix<R> = [[R::ZERO; MAX_PARAMETERS]; MAX_PARAMETERS];
    for i in 0..k {
        for j in 0..=i {
            let mut sum = at(i, j);
            for m in 0..j {
                sum -= read(&l, i, m) * read(&l, j, m);
            }
            let value = if i == j {
                if !sum.is_finite() || sum <= R::from_f64(1e-12) * max_diag {
                    return None;
                }
                sum.sqrt()
            } else {
                sum / read(&l, j, j)
            };
            if let Some(x) = l.get_mut(i).and_then(|row| row.get_mut(j)) {
                *x = value;
            }
        }
    }
    // Forward (L·y = b) and back (Lᵀ·x = y) substitution.
    let mut y = [R::ZERO; MAX_PARAMETERS];
    for i in 0..k {
        let mut sum = idx.get(i).and_then(|&r| b.get(r)).copied().unwrap_or(R::ZERO);
        for m in 0..i {
            sum -= read(&l, i, m) * y.get(m).copied().unwrap_or(R::ZERO);
        }
        if let Some(v) = y.get_mut(i) {
            *v = sum / read(&l, i, i);
        }
    }
    let mut x = [R::ZERO; MAX_PARAMETERS];
    for i in (0..k).rev() {
        let mut sum = y.get(i).copied().unwrap_or(R::ZERO);
        for m in (i + 1)..k {
            sum -= read(&l, m, i) * x.get(m).copied().unwrap_or(R::ZERO);
        }
        if let Some(v) = x.get_mut(i) {
            *v = sum / read(&l, i, i);
        }
    }
    let mut out = [R::ZERO; MAX_PARAMETERS];
    for (i, &r) in idx.iter().enumerate() {
        if let (Some(o), Some(v)) = (out.get_mut(r), x.get(i)) {
            *o = *v;
        }
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A small deterministic generator (xorshift64*) for test noise.
    struct Noise(u64);
    impl Noise {
        fn uniform(&mut self) -> f64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
        }
        /// Approximately normal (sum of 12 uniforms − 6), standard deviation `sd`.
        fn normal(&mut self, sd: f64) -> f64 {
            (0..12).map(|_| self.uniform()).sum::<f64>().mul_add(sd, -6.0 * sd)
        }
    }

    fn spec(buffers: u8, carbonate: bool) -> FitSpec<f64> {
        FitSpec {
            carbonate,
            buffers,
            sample_volume_l: 0.1,
            temperature: Celsius::new(20.0).unwrap(),
            activity: Activity::Ideal,
        }
    }

    fn caustic() -> Solution<f64, 1> {
        let mut t = Solution::new(Celsius::new(20.0).unwrap(), Activity::Ideal);
        t.add_formula("NaOH", 0.05).unwrap();
        t
    }

    /// Lab titration of a fictional metal-finishing effluent: 100 mL with 0.05 M NaOH, 0–12 mL.
    fn synthetic(truth: &Effective<f64>, sd_ph: f64, seed: u64) -> std::vec::Vec<(f64, f64)> {
        let sample: Solution<f64, 4> = truth.solution(Celsius::new(20.0).unwrap(), Activity::Ideal);
        let t = caustic();
        let mut noise = Noise(seed);
        (0..40)
            .map(|i| {
                let v = 0.012 * f64::from(i) / 39.0;
                let ph = sample.mix(0.1, &t, v).unwrap().solve().unwrap().ph;
                (v, ph + noise.normal(sd_ph))
            })
            .collect()
    }

    #[test]
    fn recovers_known_parameters_from_noisy_titration() {
        let truth = Effective {
            strong_charge_eq_per_l: -2.0e-3,
            carbonate_mol_per_l: 1.5e-3,
            buffers: [(1.0e-3, 7.0), (0.0, 7.0)],
        };
        // Noise: normal, σ = 0.01 pH (a good lab meter). Tolerances: strong charge ±5 %,
        // carbonate and buffer totals ±15 %, buffer pKa ±0.15.
        let data = synthetic(&truth, 0.01, 7);
        let start = Effective {
            strong_charge_eq_per_l: -1.0e-3,
            carbonate_mol_per_l: 1e-3,
            buffers: [(5e-4, 8.0), (0.0, 7.0)],
        };
        let r = fit(&spec(1, true), &caustic(), &data, &start).unwrap();
        let e = r.effective;
        assert!((e.strong_charge_eq_per_l - truth.strong_charge_eq_per_l).abs() < 0.05 * 2.0e-3, "{r:?}");
        assert!((e.carbonate_mol_per_l / truth.carbonate_mol_per_l - 1.0).abs() < 0.15, "{r:?}");
        assert!((e.buffers[0].0 / truth.buffers[0].0 - 1.0).abs() < 0.15, "{r:?}");
        assert!((e.buffers[0].1 - 7.0).abs() < 0.15, "{r:?}");
        // The residual is the noise level, and the standard errors are non-zero and modest.
        assert!(r.rms_ph > 0.005 && r.rms_ph < 0.02, "rms {}", r.rms_ph);
        assert!(r.standard_errors.carbonate_mol_per_l > 0.0 && r.standard_errors.carbonate_mol_per_l < 5e-4);
        assert!(r.iterations <= MAX_FIT_ITERATIONS);
    }

    #[test]
    fn refuses_parameters_the_data_cannot_see() {
        // Strong acid only, titrated to pH ~3: a second buffer with pKa far outside the data
        // range cannot be determined.
        let truth =
            Effective { strong_charge_eq_per_l: -8.0e-3, carbonate_mol_per_l: 0.0, buffers: [(0.0, 7.0), (0.0, 7.0)] };
        let data = synthetic(&truth, 0.005, 3);
        let start = Effective {
            strong_charge_eq_per_l: -5.0e-3,
            carbonate_mol_per_l: 0.0,
            buffers: [(1e-4, 10.5), (1e-4, 11.5)],
        };
        let r = fit(&spec(2, false), &caustic(), &data, &start);
        assert!(matches!(r, Err(FitError::IllConditioned { .. })), "{r:?}");
        // Too few points for the parameters.
        assert_eq!(fit(&spec(2, true), &caustic(), &data[..6], &start).map(|r| r.points), Err(FitError::InvalidData));
    }
}
