//! Influent characterisation: fit an effective composition to a lab titration of the real
//! influent (added reagent vs measured pH) by bounded Levenberg–Marquardt with fixed-size
//! matrices.
//!
//! Unknowns (up to [`MAX_PARAMETERS`]): the net strong-ion charge (always), the carbonate and
//! phosphate totals (optional; the catalogue's systems, with their own constants, charges and
//! temperature functions) and up to two generic monoprotic weak buffers (total and pKa each).
//! Totals are fitted as log10 (so they stay positive), pKa within [`PKA_RANGE`]. Residuals are in
//! pH. The sample's inert salts (what carries ionic strength but no net charge and no buffering)
//! can be given as [`FitSpec::inert_ionic_strength_mol_per_l`], so that the activity
//! coefficients of the model are the sample's.
//!
//! Quality policy: [`fit`] returns a composition only when the lab points are physically
//! possible (see [`PointProblem`]) and the fit passes every check below; otherwise a typed
//! [`FitError`] says why. [`fit_assessed`] runs the same fit and returns a refused result with
//! its verdict ([`FitQuality`]), for a report that shows the numbers of a refused fit. Checks, in
//! the order they are reported:
//!
//! 1. identifiable: every fitted parameter has a standard error within
//!    [`MAX_STANDARD_ERROR_LOG`] ([`FitError::IllConditioned`], returned by both functions);
//! 2. converged: the iterations stopped because no step improved the residual any more, not at
//!    [`MAX_FIT_ITERATIONS`] ([`FitError::NotConverged`]);
//! 3. every fitted pKa lies at least [`PKA_INSIDE_DATA_PH`] inside the pH range the data
//!    cover: the data bracket it ([`FitError::PkaOutsideData`]);
//! 4. the RMS residual is at most [`MAX_RMS_PH`] ([`FitError::ResidualAboveBound`]).

use crate::chem::system::{AcidBaseSystem, LogK};
use crate::chem::{Activity, CompositionError, Solution, catalogue};
use crate::invariant::{at, at2, set, set2};
use crate::real::Real;
use crate::units::Celsius;

/// Most parameters: strong charge, carbonate, phosphate, two buffers × (total, pKa).
pub const MAX_PARAMETERS: usize = 7;
/// Most Levenberg–Marquardt iterations. Noiseless curves of this crate fitted back with the
/// model that made them take up to 95 (the residual falls geometrically to round-off before no
/// step improves it; `host/tests/fit_roundtrip.rs`); lab data, whose residual levels off at
/// their noise, far fewer.
pub const MAX_FIT_ITERATIONS: u32 = 200;
/// Allowed range of a fitted buffer's pKa.
pub const PKA_RANGE: (f64, f64) = (1.0, 13.0);
/// Allowed range of log10(total / (mol/L)) of a fitted total.
pub const LOG_TOTAL_RANGE: (f64, f64) = (-7.0, 0.0);
/// Largest acceptable standard error of a fitted log10 total (a factor of 10^0.5 ≈ 3) or pKa
/// (0.5 pH); beyond it the data do not determine the parameter and the fit is refused.
pub const MAX_STANDARD_ERROR_LOG: f64 = 0.5;

/// Largest accepted RMS residual of a fit, pH. Common practice, no source: a lab pH meter's
/// noise is about 0.01–0.02 pH (from memory), and this crate's own noiseless curves fitted back
/// to the effective model leave 0.005–0.03 pH (`host/tests/fit_roundtrip.rs`: the sample's
/// ionic strength is not that of the fitted monovalent strong ions, and phosphate's charges
/// and first proton are not a generic buffer's; the most, 0.029, for a phosphate water titrated
/// with acid). A residual above about three times the meter's noise means the model does not
/// describe the curve (a missing carbonate or buffer, a wrong titrant or sample volume), and its
/// numbers are not the sample's.
pub const MAX_RMS_PH: f64 = 0.05;

/// How far inside the pH range the data cover a fitted pKa must lie, pH: the data must reach
/// at least 0.3 pH beyond it on both sides, so they show the middle third of that buffer's
/// step (from 1/3 to 2/3 protonated: 10^0.3 = 2, calc). Common practice, no source; the
/// reasoning: a titration that does not bracket a buffer's half-neutralisation point (pH = pKa)
/// sees only the tail of its buffering, and the fit then trades the buffer's total against
/// the strong charge along a nearly flat valley of the residual. This crate's own curves show
/// it (`host/tests/fit_roundtrip.rs`, Davies): a phosphate rinse (pKa₂ ≈ 7.1) titrated with NaOH
/// from pH 8.31 fitted its strong charge 92 % low (standard error 2.5 % of the truth) with the
/// pKa at 8.21, outside the data; a carbonate and phosphate rinse titrated with NaOH from pH
/// 8.51 fitted it 24 % low (standard error 0.2 %) with the pKa at 8.54, 0.03 inside. A phosphate
/// water that starts below the pKa (calc: `phdose curve Na2HPO4=0.00054 NaH2PO4=0.00126
/// NaCl=0.0005 --sample-ml 50 --titrant NaOH=0.02 --max-titrant-ml 5.25`, pH 6.75 to 10.80,
/// then `phdose fit --buffers 1`) puts it at 7.13, 0.38 inside, and recovers its strong charge
/// within 1.1 % and its phosphate within 0.1 %.
pub const PKA_INSIDE_DATA_PH: f64 = 0.3;

/// Largest titrant volume of a lab point, as a multiple of the sample volume (dimensionless).
/// A lab titration adds a burette's worth (up to some 50 mL) to a sample of 25–100 mL
/// (common practice, no source); ten sample volumes dilute the sample elevenfold and leave
/// generous room, while a volume beyond it is a typing or unit error (mL for µL, a column mixed
/// up), not a titration.
pub const MAX_TITRANT_PER_SAMPLE: f64 = 10.0;

/// Range of an accepted measured pH, (lowest, highest). The span of a lab pH meter's usual
/// calibration buffers and of glass electrodes' specified range (common practice, no source);
/// outside it a reading is a typing error or a meter fault, and the fit's activity model
/// (Davies, valid to an ionic strength of about 0.5 mol/L) does not hold there anyway.
pub const MEASURED_PH_RANGE: (f64, f64) = (0.0, 14.0);

/// The generic buffer systems a fit may use (monoprotic HA / A⁻, pKa set by the fit).
pub const BUFFER_KEYS: [&str; 2] = ["fitted-buffer-a", "fitted-buffer-b"];

/// Acid–base systems an [`Effective`] composition can hold: carbonate, phosphate and the buffers
/// of [`BUFFER_KEYS`]. [`Effective::solution`] needs at least this capacity.
pub const FITTED_SYSTEMS: usize = 2 + BUFFER_KEYS.len();

/// Largest [`FitSpec::inert_ionic_strength_mol_per_l`], mol/L: the Davies equation's range
/// (about 0.5 mol/L).
pub const MAX_INERT_IONIC_STRENGTH_MOL_PER_L: f64 = 0.5;

/// What to fit.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FitSpec<R: Real> {
    /// Fit a carbonate total.
    pub carbonate: bool,
    /// Fit a phosphate total (the catalogue's triprotic system, its pKa and charges known).
    pub phosphate: bool,
    /// Ionic strength of the sample's inert salts, mol/L (0 to
    /// [`MAX_INERT_IONIC_STRENGTH_MOL_PER_L`]): salts that carry no net strong charge and do not
    /// buffer (sodium chloride, calcium chloride…), known from the sample's make-up or estimated
    /// from its conductivity. The model adds it as a 1:1 salt; 0 leaves the ionic strength to
    /// the fitted composition alone. Ignored with ideal activities.
    pub inert_ionic_strength_mol_per_l: R,
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
    /// Phosphate total, mol/L (0 when not fitted).
    pub phosphate_mol_per_l: R,
    /// Generic buffers: (total mol/L, pKa at 25 °C); unused entries are (0, 7).
    pub buffers: [(R, R); 2],
}

impl<R: Real> Effective<R> {
    /// The composition as a solution at `temperature` (buffers taken with ΔH° = 0). Zero totals
    /// are left out. `N` ≥ [`FITTED_SYSTEMS`] holds every fitted system (checked at compile
    /// time, so the capacity cannot run out); extra room is for what is mixed in later (a
    /// titrant).
    ///
    /// ```
    /// use phdose::chem::{Activity, Solution};
    /// use phdose::titration::fit::Effective;
    /// use phdose::units::Celsius;
    /// let e = Effective {
    ///     strong_charge_eq_per_l: 1e-3,
    ///     carbonate_mol_per_l: 1e-3,
    ///     phosphate_mol_per_l: 2e-4,
    ///     buffers: [(1e-4, 7.0), (1e-4, 9.0)],
    /// };
    /// let s: Solution<f64, 4> = e.solution(Celsius::new(20.0).unwrap(), Activity::Ideal).unwrap();
    /// assert_eq!(s.components().len(), 4);
    /// ```
    /// Too small a capacity does not compile:
    /// ```compile_fail
    /// use phdose::chem::{Activity, Solution};
    /// use phdose::titration::fit::Effective;
    /// use phdose::units::Celsius;
    /// let e = Effective {
    ///     strong_charge_eq_per_l: 1e-3,
    ///     carbonate_mol_per_l: 1e-3,
    ///     phosphate_mol_per_l: 0.0,
    ///     buffers: [(1e-4, 7.0), (1e-4, 9.0)],
    /// };
    /// let s: Solution<f64, 3> = e.solution(Celsius::new(20.0).unwrap(), Activity::Ideal).unwrap();
    /// ```
    ///
    /// # Errors
    /// [`CompositionError::NonFinite`] for a value that is not a finite number,
    /// [`CompositionError::Negative`] for a negative total, [`CompositionError::TooConcentrated`]
    /// beyond the solution's limits and [`CompositionError::InvalidSystem`] for a buffer whose
    /// pKa is not finite: an effective composition is caller data (a fit's result is always
    /// accepted).
    pub fn solution<const N: usize>(
        &self,
        temperature: Celsius<R>,
        activity: Activity,
    ) -> Result<Solution<R, N>, CompositionError> {
        const {
            assert!(
                N >= FITTED_SYSTEMS,
                "an effective composition needs room for carbonate, phosphate and both buffers"
            )
        };
        let mut s = Solution::new(temperature, activity);
        let q = self.strong_charge_eq_per_l;
        if q >= R::ZERO {
            s.add_strong_ion(1, q)?;
        } else {
            // Negative, or NaN (refused as not finite).
            s.add_strong_ion(-1, -q)?;
        }
        // `!= 0` rather than `> 0`: a NaN or negative total is refused, not left out.
        if self.carbonate_mol_per_l != R::ZERO {
            s.add_system(&catalogue::CARBONATE, self.carbonate_mol_per_l)?;
        }
        if self.phosphate_mol_per_l != R::ZERO {
            s.add_system(&catalogue::PHOSPHATE, self.phosphate_mol_per_l)?;
        }
        let [(total_a, pka_a), (total_b, pka_b)] = self.buffers;
        let [system_a, system_b] = &FITTED_BUFFERS;
        // Two iterations.
        for (system, total, pka) in [(system_a, total_a, pka_a), (system_b, total_b, pka_b)] {
            if total != R::ZERO {
                s.add_system_with_pka(system, [pka, R::ZERO, R::ZERO], total)?;
            }
        }
        Ok(s)
    }
}

/// The generic monoprotic buffer (HA/A⁻) of fitted buffer `index` (keyed by [`BUFFER_KEYS`]);
/// `None` for an index past [`BUFFER_KEYS`]. Its pKa is the fit's, given with
/// [`Solution::add_system_with_pka`] (the system's own constant, pKa 7 with ΔH° = 0, is a
/// placeholder that no fitted solution uses).
pub fn buffer_system(index: usize) -> Option<&'static AcidBaseSystem> {
    FITTED_BUFFERS.get(index)
}

/// The systems of [`BUFFER_KEYS`], in that order.
static FITTED_BUFFERS: [AcidBaseSystem; 2] = [keyed_buffer(BUFFER_KEYS[0]), keyed_buffer(BUFFER_KEYS[1])];

const fn keyed_buffer(key: &'static str) -> AcidBaseSystem {
    AcidBaseSystem {
        key,
        forms: ["HA", "A-", "", ""],
        steps: 1,
        log_k: [
            LogK::vant_hoff(7.0, 0.0),
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
    /// Levenberg–Marquardt iterations used (1 to [`MAX_FIT_ITERATIONS`]).
    pub iterations: u32,
    /// `true` when the iterations stopped because no step improved the residual any more
    /// (relative gain below 1e-12, or no damped step lowered it); `false` when they stopped at
    /// [`MAX_FIT_ITERATIONS`] while still improving.
    pub converged: bool,
    /// Lowest measured pH of the data.
    pub data_min_ph: R,
    /// Highest measured pH of the data.
    pub data_max_ph: R,
    /// The quality verdict (see the module docs): [`FitQuality::Accepted`] for every result
    /// [`fit`] returns.
    pub quality: FitQuality,
}

/// The quality verdict of a fit that ran to the end.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FitQuality {
    /// Every check passed: the composition describes the data.
    Accepted,
    /// A check failed: the first failing one, as the error [`fit`] returns
    /// ([`FitError::NotConverged`], [`FitError::PkaOutsideData`] or
    /// [`FitError::ResidualAboveBound`]). The numbers of the result are not the sample's.
    Refused(FitError),
}

impl FitQuality {
    /// `true` for [`FitQuality::Accepted`].
    pub fn is_accepted(&self) -> bool {
        matches!(self, Self::Accepted)
    }
}

/// What is wrong with a lab point (see [`FitError::InvalidPoint`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PointProblem {
    /// The titrant volume or the pH is not a finite number.
    NotFinite,
    /// The titrant volume is below zero.
    NegativeVolume,
    /// The titrant volume is below the previous point's: the points must be in titrant order
    /// (non-decreasing volumes; equal volumes are repeated readings).
    VolumeDecreases,
    /// The titrant volume is above [`MAX_TITRANT_PER_SAMPLE`] times the sample volume.
    VolumeAboveBound,
    /// The pH is outside [`MEASURED_PH_RANGE`].
    PhOutsideRange,
}

impl core::fmt::Display for PointProblem {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::NotFinite => f.write_str("not a finite number"),
            Self::NegativeVolume => f.write_str("negative titrant volume"),
            Self::VolumeDecreases => {
                f.write_str("titrant volume below the previous point's (the points must be in titrant order)")
            }
            Self::VolumeAboveBound => {
                write!(f, "titrant volume above {MAX_TITRANT_PER_SAMPLE} times the sample volume")
            }
            Self::PhOutsideRange => {
                write!(f, "pH outside {} to {}", MEASURED_PH_RANGE.0, MEASURED_PH_RANGE.1)
            }
        }
    }
}

/// Why a fit was refused.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum FitError {
    /// Fewer points than parameters + 2, more than `u32::MAX` points, a sample volume that is not
    /// positive and finite, or a starting value that is not finite.
    InvalidData,
    /// A lab point is not physically possible.
    InvalidPoint {
        /// Index of the point in the data (0-based).
        index: u32,
        /// What is wrong with it.
        problem: PointProblem,
    },
    /// The data do not determine this parameter (singular or near-singular normal matrix, or a
    /// standard error above [`MAX_STANDARD_ERROR_LOG`]).
    IllConditioned {
        /// Which parameter: "strong charge", "carbonate", "buffer a total", "buffer a pKa" …
        parameter: &'static str,
    },
    /// The model could not be evaluated at some point (the composition could not be built, or a
    /// mix or solve failed).
    ModelFailed,
    /// The iterations stopped at [`MAX_FIT_ITERATIONS`] while the residual was still falling:
    /// the result is not a minimum.
    NotConverged {
        /// Iterations used (= [`MAX_FIT_ITERATIONS`]).
        iterations: u32,
    },
    /// A fitted pKa does not lie at least [`PKA_INSIDE_DATA_PH`] inside the pH range the data
    /// cover: the data do not show the middle of that buffer's step, only its tail.
    PkaOutsideData {
        /// Which parameter: "buffer a pKa" or "buffer b pKa".
        parameter: &'static str,
        /// The fitted pKa.
        pka: f64,
        /// Lowest measured pH of the data.
        data_min_ph: f64,
        /// Highest measured pH of the data.
        data_max_ph: f64,
    },
    /// The RMS residual is above [`MAX_RMS_PH`]: the model does not describe the data.
    ResidualAboveBound {
        /// The fit's RMS residual, pH.
        rms_ph: f64,
        /// The bound, pH ([`MAX_RMS_PH`]).
        bound_ph: f64,
    },
}

impl FitError {
    /// `true` for a refusal of the fit's quality ([`FitError::IllConditioned`],
    /// [`FitError::NotConverged`], [`FitError::PkaOutsideData`],
    /// [`FitError::ResidualAboveBound`]): the data were valid, the fit ran, and its result does
    /// not describe the sample. `false` for invalid input or a model failure.
    pub fn is_quality_refusal(&self) -> bool {
        matches!(
            self,
            Self::IllConditioned { .. }
                | Self::NotConverged { .. }
                | Self::PkaOutsideData { .. }
                | Self::ResidualAboveBound { .. }
        )
    }
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
            Self::InvalidPoint { index, problem } => {
                write!(f, "lab point {} (counting from 1): {problem}", u64::from(*index) + 1)
            }
            Self::ModelFailed => f.write_str("the model could not be solved at a data point"),
            Self::NotConverged { iterations } => write!(
                f,
                "the fit did not converge: it stopped at the cap of {iterations} iterations while the residual was still falling"
            ),
            Self::PkaOutsideData { parameter, pka, data_min_ph, data_max_ph } => write!(
                f,
                "the fitted {parameter} {pka:.2} is not {PKA_INSIDE_DATA_PH} pH inside the pH range the data cover \
                 ({data_min_ph:.2} to {data_max_ph:.2}): the data do not bracket it, so they show only the tail of \
                 that buffer's step"
            ),
            Self::ResidualAboveBound { rms_ph, bound_ph } => write!(
                f,
                "residual RMS {rms_ph:.3} pH is above the {bound_ph} pH bound: the model does not describe the data"
            ),
        }
    }
}

impl core::error::Error for FitError {}

const NAMES: [&str; MAX_PARAMETERS] =
    ["strong charge", "carbonate", "phosphate", "buffer a total", "buffer a pKa", "buffer b total", "buffer b pKa"];

/// Parameter vector layout: [Q (meq/L), log10 C_T, log10 C_P, log10 C_a, pKa_a, log10 C_b, pKa_b].
#[derive(Clone, Copy)]
struct Layout {
    active: [bool; MAX_PARAMETERS],
}

impl Layout {
    fn new<R: Real>(spec: &FitSpec<R>) -> Self {
        let b = spec.buffers.min(2);
        Self { active: [true, spec.carbonate, spec.phosphate, b >= 1, b >= 1, b >= 2, b >= 2] }
    }
    fn count(&self) -> usize {
        self.active.iter().filter(|a| **a).count()
    }
}

fn to_effective<R: Real>(p: &[R; MAX_PARAMETERS], layout: Layout) -> Effective<R> {
    let [q_meq, log_c, log_p, log_a, pka_a, log_b, pka_b] = *p;
    let [_, carbonate, phosphate, buffer_a, _, buffer_b, _] = layout.active;
    let total = |active: bool, log: R| if active { log.exp10() } else { R::ZERO };
    Effective {
        strong_charge_eq_per_l: q_meq * R::from_f64(1e-3),
        carbonate_mol_per_l: total(carbonate, log_c),
        phosphate_mol_per_l: total(phosphate, log_p),
        buffers: [(total(buffer_a, log_a), pka_a), (total(buffer_b, log_b), pka_b)],
    }
}

/// The model sample of parameters `p` (clamped, so always a valid composition; a failure is
/// reported as [`FitError::ModelFailed`], never replaced by a default).
fn model_sample<R: Real>(p: &[R; MAX_PARAMETERS], layout: Layout, spec: &FitSpec<R>) -> Result<Sample<R>, FitError> {
    let mut s: Sample<R> =
        to_effective(p, layout).solution(spec.temperature, spec.activity).map_err(|_| FitError::ModelFailed)?;
    add_inert_salt(&mut s, spec.inert_ionic_strength_mol_per_l).map_err(|_| FitError::ModelFailed)?;
    Ok(s)
}

/// Adds the inert salts of [`FitSpec::inert_ionic_strength_mol_per_l`] to a model solution, as
/// the fit's model holds them: a 1:1 salt of that concentration (ionic strength equal to it, no
/// net charge). Nothing for 0 or less.
///
/// # Errors
/// As [`Solution::add_strong_ion`] (a value that is not finite, or beyond the solution's limits).
pub fn add_inert_salt<R: Real, const N: usize>(
    solution: &mut Solution<R, N>,
    ionic_strength_mol_per_l: R,
) -> Result<(), CompositionError> {
    if ionic_strength_mol_per_l > R::ZERO {
        solution.add_strong_ion(1, ionic_strength_mol_per_l)?;
        solution.add_strong_ion(-1, ionic_strength_mol_per_l)?;
    }
    Ok(())
}

fn clamp_parameters<R: Real>(p: &mut [R; MAX_PARAMETERS]) {
    for (i, v) in p.iter_mut().enumerate() {
        let (lo, hi) = match i {
            0 => (-1000.0, 1000.0),
            4 | 6 => PKA_RANGE,
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
    let sample = model_sample(p, layout, spec)?;
    let mut rss = R::ZERO;
    for (v, ph) in data {
        let r = point_residual(&sample, spec, titrant, *v, *ph)?;
        rss += r * r;
    }
    Ok(rss)
}

/// Fits `spec`'s unknowns to `data` = (titrant added in L, measured pH), in titrant order, for a
/// sample titrated with `titrant`, starting from `start`, and returns the composition only when
/// the fit passes the quality policy (module docs).
///
/// Bounded: one pass over the data to check it, at most [`MAX_FIT_ITERATIONS`] iterations, each
/// (k + 1) model evaluations of every point for the Jacobian plus at most 12 damped trials,
/// k ≤ [`MAX_PARAMETERS`], and one more Jacobian for the standard errors.
///
/// # Errors
/// [`FitError::InvalidData`] / [`FitError::InvalidPoint`] for data or a setup that cannot be
/// fitted (volumes in L: each in 0 to [`MAX_TITRANT_PER_SAMPLE`] × `spec.sample_volume_l`,
/// non-decreasing; pH in [`MEASURED_PH_RANGE`]), [`FitError::ModelFailed`] when the model
/// cannot be solved, and a quality refusal ([`FitError::is_quality_refusal`]):
/// [`FitError::IllConditioned`], [`FitError::NotConverged`], [`FitError::PkaOutsideData`] or
/// [`FitError::ResidualAboveBound`].
pub fn fit<R: Real, const M: usize>(
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    data: &[(R, R)],
    start: &Effective<R>,
) -> Result<FitResult<R>, FitError> {
    let result = fit_assessed(spec, titrant, data, start)?;
    match result.quality {
        FitQuality::Accepted => Ok(result),
        FitQuality::Refused(e) => Err(e),
    }
}

/// Checks lab points: each finite, volume in 0 to [`MAX_TITRANT_PER_SAMPLE`] × `sample_volume_l`
/// and not below its predecessor's, pH in [`MEASURED_PH_RANGE`]. Returns the data's lowest and
/// highest pH. One pass over the data.
fn check_points<R: Real>(data: &[(R, R)], sample_volume_l: R) -> Result<(R, R), FitError> {
    let max_l = sample_volume_l * R::from_f64(MAX_TITRANT_PER_SAMPLE);
    let (ph_lo, ph_hi) = (R::from_f64(MEASURED_PH_RANGE.0), R::from_f64(MEASURED_PH_RANGE.1));
    let mut previous_l = R::ZERO;
    let mut range = (ph_hi, ph_lo);
    for (i, &(v, ph)) in data.iter().enumerate() {
        let problem = if !v.is_finite() || !ph.is_finite() {
            Some(PointProblem::NotFinite)
        } else if v < R::ZERO {
            Some(PointProblem::NegativeVolume)
        } else if v > max_l {
            Some(PointProblem::VolumeAboveBound)
        } else if v < previous_l {
            Some(PointProblem::VolumeDecreases)
        } else if ph < ph_lo || ph > ph_hi {
            Some(PointProblem::PhOutsideRange)
        } else {
            None
        };
        if let Some(problem) = problem {
            let index = u32::try_from(i).map_err(|_| FitError::InvalidData)?;
            return Err(FitError::InvalidPoint { index, problem });
        }
        previous_l = v;
        range = (range.0.min(ph), range.1.max(ph));
    }
    Ok(range)
}

/// The quality verdict of a fit that ran to the end (checks 2–4 of the module docs, in that
/// order): `pkas` are the fitted buffers' pKa, `None` for a buffer not fitted.
fn assess<R: Real>(converged: bool, iterations: u32, rms_ph: R, pkas: [Option<R>; 2], data_ph: (R, R)) -> FitQuality {
    if !converged {
        return FitQuality::Refused(FitError::NotConverged { iterations });
    }
    let inside = R::from_f64(PKA_INSIDE_DATA_PH);
    let (lo, hi) = data_ph;
    // Two iterations.
    for (pka, parameter) in pkas.into_iter().zip(["buffer a pKa", "buffer b pKa"]) {
        if let Some(pka) = pka
            && !(pka >= lo + inside && pka <= hi - inside)
        {
            return FitQuality::Refused(FitError::PkaOutsideData {
                parameter,
                pka: pka.to_f64(),
                data_min_ph: lo.to_f64(),
                data_max_ph: hi.to_f64(),
            });
        }
    }
    // A NaN residual is refused too.
    if !rms_ph.is_finite() || rms_ph > R::from_f64(MAX_RMS_PH) {
        return FitQuality::Refused(FitError::ResidualAboveBound { rms_ph: rms_ph.to_f64(), bound_ph: MAX_RMS_PH });
    }
    FitQuality::Accepted
}

/// Runs the fit of [`fit`] and returns its result with its quality verdict, also when the
/// verdict refuses it (`quality` is then [`FitQuality::Refused`]): for a report that shows the
/// numbers of a refused fit. Use [`fit`] to act on a composition. Same bounds as [`fit`].
///
/// # Errors
/// As [`fit`], except that [`FitError::NotConverged`], [`FitError::PkaOutsideData`] and
/// [`FitError::ResidualAboveBound`] come in `quality` instead.
pub fn fit_assessed<R: Real, const M: usize>(
    spec: &FitSpec<R>,
    titrant: &Solution<R, M>,
    data: &[(R, R)],
    start: &Effective<R>,
) -> Result<FitResult<R>, FitError> {
    let layout = Layout::new(spec);
    let k = layout.count();
    let vol = spec.sample_volume_l.to_f64();
    let [(start_a, start_pka_a), (start_b, start_pka_b)] = start.buffers;
    let start_values = [
        start.strong_charge_eq_per_l,
        start.carbonate_mol_per_l,
        start.phosphate_mol_per_l,
        start_a,
        start_pka_a,
        start_b,
        start_pka_b,
    ];
    let inert = spec.inert_ionic_strength_mol_per_l.to_f64();
    if data.len() < k + 2
        || !(vol.is_finite() && vol > 0.0)
        || start_values.iter().any(|v| !v.is_finite())
        || !(0.0..=MAX_INERT_IONIC_STRENGTH_MOL_PER_L).contains(&inert)
    {
        return Err(FitError::InvalidData);
    }
    let data_ph = check_points(data, spec.sample_volume_l)?;
    let points = u32::try_from(data.len()).map_err(|_| FitError::InvalidData)?;
    let log_or = |c: R, default: f64| if c > R::ZERO { c.log10() } else { R::from_f64(default) };
    let mut p: [R; MAX_PARAMETERS] = [
        start.strong_charge_eq_per_l * R::from_f64(1000.0),
        log_or(start.carbonate_mol_per_l, -3.0),
        log_or(start.phosphate_mol_per_l, -3.5),
        log_or(start_a, -3.5),
        start_pka_a,
        log_or(start_b, -3.5),
        start_pka_b,
    ];
    clamp_parameters(&mut p);
    let h = R::PH_TOLERANCE.sqrt() * R::from_f64(10.0);
    let mut lambda = R::from_f64(1e-3);
    let mut rss = residual_sum(&p, layout, spec, titrant, data)?;
    let mut iterations = 0;
    let mut converged = false;
    for it in 1..=MAX_FIT_ITERATIONS {
        iterations = it;
        // Normal equations from a forward-difference Jacobian, accumulated point by point.
        let (a, g) = normal_equations(&p, layout, spec, titrant, data, h)?;
        let mut improved = false;
        let max_diag = a.iter().enumerate().map(|(i, row)| at(row, i)).fold(R::ZERO, |m, d| m.max(d));
        // Up to 12 damping increases per iteration.
        for _ in 0..12 {
            // Marquardt scaling, with a floor so a column the data do not see stays invertible.
            // MAX_PARAMETERS rows, each with its diagonal entry.
            let mut damped = a;
            for (i, row) in damped.iter_mut().enumerate() {
                let d = at(row, i);
                set(row, i, d + lambda * d.max(R::from_f64(1e-6) * max_diag).max(R::from_f64(1e-30)));
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
            converged = true;
            break;
        }
    }
    // Covariance: s²·(JᵀJ)⁻¹ at the solution.
    let (a, _) = normal_equations(&p, layout, spec, titrant, data, h)?;
    let n = data.len();
    let dof = R::from_f64((n - k) as f64);
    let s2 = (rss / dof).max(R::from_f64(1e-12));
    let mut se = [R::ZERO; MAX_PARAMETERS];
    // MAX_PARAMETERS iterations, one solve each.
    for (i, ((e, active), name)) in se.iter_mut().zip(layout.active).zip(NAMES).enumerate() {
        if !active {
            continue;
        }
        let unit: [R; MAX_PARAMETERS] = core::array::from_fn(|j| if j == i { R::ONE } else { R::ZERO });
        let col = solve_spd(&a, &unit, layout).ok_or(FitError::IllConditioned { parameter: name })?;
        let var = at(&col, i) * s2;
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
    let [se_q, se_c, se_p, se_a, se_pka_a, se_b, se_pka_b] = se;
    let [(total_a, _), (total_b, _)] = eff.buffers;
    let standard_errors = Effective {
        strong_charge_eq_per_l: se_q * R::from_f64(1e-3),
        carbonate_mol_per_l: eff.carbonate_mol_per_l * ln10 * se_c,
        phosphate_mol_per_l: eff.phosphate_mol_per_l * ln10 * se_p,
        buffers: [(total_a * ln10 * se_a, se_pka_a), (total_b * ln10 * se_b, se_pka_b)],
    };
    let rms_ph = (rss / R::from_f64(f64::from(points))).sqrt();
    let [_, _, _, _, fitted_a, _, fitted_b] = layout.active;
    let [(_, pka_a), (_, pka_b)] = eff.buffers;
    let pkas = [fitted_a.then_some(pka_a), fitted_b.then_some(pka_b)];
    Ok(FitResult {
        effective: eff,
        standard_errors,
        rms_ph,
        points,
        iterations,
        converged,
        data_min_ph: data_ph.0,
        data_max_ph: data_ph.1,
        quality: assess(converged, iterations, rms_ph, pkas, data_ph),
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
    let base = model_sample(p, layout, spec)?;
    let mut shifted: [Option<Sample<R>>; MAX_PARAMETERS] = Default::default();
    // MAX_PARAMETERS iterations.
    for (i, (slot, active)) in shifted.iter_mut().zip(layout.active).enumerate() {
        if active {
            let mut q = *p;
            set(&mut q, i, at(p, i) + h);
            *slot = Some(model_sample(&q, layout, spec)?);
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
        // MAX_PARAMETERS² updates.
        for ((ri, gi), arow) in row.iter().zip(g.iter_mut()).zip(a.iter_mut()) {
            *gi += *ri * r0;
            for (x, rj) in arow.iter_mut().zip(row.iter()) {
                *x += *ri * *rj;
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
/// or a pivot is below 1e-12 of the largest diagonal (numerically singular). k ≤ 6: fixed work,
/// at most k³ inner steps. Every index is in bounds by construction (i, j, m < k ≤
/// MAX_PARAMETERS; `idx` holds indices < MAX_PARAMETERS) and goes through
/// [`crate::invariant`]: asserted in tests, panic-free in release (the link-time check in
/// tools/no-panic proves it).
fn solve_spd<R: Real>(a: &Matrix<R>, b: &[R; MAX_PARAMETERS], layout: Layout) -> Option<[R; MAX_PARAMETERS]> {
    // Indices of the active parameters (push, not `collect`: heapless' FromIterator panics on
    // overflow, and the optimiser cannot see that at most MAX_PARAMETERS come).
    let mut idx: heapless::Vec<usize, MAX_PARAMETERS> = heapless::Vec::new();
    for (i, active) in layout.active.iter().enumerate() {
        if *active {
            // Cannot fail: `layout.active` has MAX_PARAMETERS flags, the capacity.
            let pushed = idx.push(i);
            debug_assert!(pushed.is_ok(), "invariant broken: more active parameters than MAX_PARAMETERS");
        }
    }
    let k = idx.len();
    let sub = |i: usize, j: usize| at2(a, at(&idx, i), at(&idx, j));
    let max_diag = (0..k).map(|i| sub(i, i)).fold(R::ZERO, |m, d| m.max(d));
    if !max_diag.is_finite() || max_diag <= R::ZERO {
        return None;
    }
    // L·Lᵀ = A (lower triangle in `l`).
    let mut l: Matrix<R> = [[R::ZERO; MAX_PARAMETERS]; MAX_PARAMETERS];
    for i in 0..k {
        for j in 0..=i {
            let mut sum = sub(i, j);
            for m in 0..j {
                sum -= at2(&l, i, m) * at2(&l, j, m);
            }
            let value = if i == j {
                if !sum.is_finite() || sum <= R::from_f64(1e-12) * max_diag {
                    return None;
                }
                sum.sqrt()
            } else {
                sum / at2(&l, j, j)
            };
            set2(&mut l, i, j, value);
        }
    }
    // Forward (L·y = b) and back (Lᵀ·x = y) substitution.
    let mut y = [R::ZERO; MAX_PARAMETERS];
    for i in 0..k {
        let mut sum = at(b, at(&idx, i));
        for m in 0..i {
            sum -= at2(&l, i, m) * at(&y, m);
        }
        set(&mut y, i, sum / at2(&l, i, i));
    }
    let mut x = [R::ZERO; MAX_PARAMETERS];
    for i in (0..k).rev() {
        let mut sum = at(&y, i);
        for m in (i + 1)..k {
            sum -= at2(&l, m, i) * at(&x, m);
        }
        set(&mut x, i, sum / at2(&l, i, i));
    }
    let mut out = [R::ZERO; MAX_PARAMETERS];
    for (&r, v) in idx.iter().zip(x) {
        set(&mut out, r, v);
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
            phosphate: false,
            inert_ionic_strength_mol_per_l: 0.0,
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
        let sample: Solution<f64, 4> = truth.solution(Celsius::new(20.0).unwrap(), Activity::Ideal).unwrap();
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
            phosphate_mol_per_l: 0.0,
            buffers: [(1.0e-3, 7.0), (0.0, 7.0)],
        };
        // Noise: normal, σ = 0.01 pH (a good lab meter). Tolerances: strong charge ±5 %,
        // carbonate and buffer totals ±15 %, buffer pKa ±0.15.
        let data = synthetic(&truth, 0.01, 7);
        let start = Effective {
            strong_charge_eq_per_l: -1.0e-3,
            carbonate_mol_per_l: 1e-3,
            phosphate_mol_per_l: 0.0,
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
        assert!(r.iterations < MAX_FIT_ITERATIONS && r.converged && r.quality.is_accepted(), "{r:?}");
    }

    fn t20() -> Celsius<f64> {
        Celsius::new(20.0).unwrap()
    }

    #[test]
    fn effective_solution_holds_every_fitted_system_at_the_minimum_capacity() {
        let e = Effective {
            strong_charge_eq_per_l: -2.0e-3,
            carbonate_mol_per_l: 1.5e-3,
            phosphate_mol_per_l: 0.0,
            buffers: [(1.0e-3, 7.0), (2.0e-4, 9.5)],
        };
        let s: Solution<f64, FITTED_SYSTEMS> = e.solution(t20(), Activity::Ideal).unwrap();
        let keys: std::vec::Vec<&str> = s.components().iter().map(|c| c.system.key).collect();
        assert_eq!(keys, ["carbonate", BUFFER_KEYS[0], BUFFER_KEYS[1]]);
        assert_eq!(s.strong_charge_eq_per_l(), -2.0e-3);
        assert_eq!(s.total_of(BUFFER_KEYS[1]), 2.0e-4);
        assert_eq!(s.component_pka(2, 1), Some(9.5));
        // Unused entries are left out.
        let strong_only = Effective {
            carbonate_mol_per_l: 0.0,
            phosphate_mol_per_l: 0.0,
            buffers: [(0.0, 7.0), (0.0, f64::NAN)],
            ..e
        };
        assert_eq!(strong_only.solution::<FITTED_SYSTEMS>(t20(), Activity::Ideal).unwrap().components().len(), 0);
    }

    #[test]
    fn effective_solution_refuses_values_it_used_to_drop() {
        let ok = Effective {
            strong_charge_eq_per_l: 1e-3,
            carbonate_mol_per_l: 1e-3,
            phosphate_mol_per_l: 0.0,
            buffers: [(1e-4, 7.0), (0.0, 7.0)],
        };
        let refused =
            |e: Effective<f64>| e.solution::<FITTED_SYSTEMS>(t20(), Activity::Ideal).map(|s| s.components().len());
        assert_eq!(refused(ok), Ok(2));
        assert_eq!(refused(Effective { strong_charge_eq_per_l: f64::NAN, ..ok }), Err(CompositionError::NonFinite));
        assert_eq!(refused(Effective { carbonate_mol_per_l: f64::NAN, ..ok }), Err(CompositionError::NonFinite));
        assert_eq!(
            refused(Effective { carbonate_mol_per_l: -1e-3, ..ok }),
            Err(CompositionError::Negative { mol_per_l: -1e-3 })
        );
        assert_eq!(
            refused(Effective { buffers: [(f64::INFINITY, 7.0), (0.0, 7.0)], ..ok }),
            Err(CompositionError::NonFinite)
        );
        assert!(matches!(
            refused(Effective { buffers: [(1e-4, f64::NAN), (0.0, 7.0)], ..ok }),
            Err(CompositionError::InvalidSystem(_))
        ));
        assert!(matches!(
            refused(Effective { strong_charge_eq_per_l: -1e3, ..ok }),
            Err(CompositionError::TooConcentrated { .. })
        ));
    }

    #[test]
    fn buffer_keys_are_distinct_and_indexed_exactly() {
        // Distinct keys: the solution would merge two buffers of the same key into one.
        assert_ne!(BUFFER_KEYS[0], BUFFER_KEYS[1]);
        assert!(!BUFFER_KEYS.contains(&catalogue::CARBONATE.key));
        assert_eq!(buffer_system(1).map(|s| s.key), Some(BUFFER_KEYS[1]));
        assert_eq!(buffer_system(BUFFER_KEYS.len()), None);
    }

    #[test]
    fn a_start_that_is_not_finite_is_refused_not_clamped() {
        let truth = Effective {
            strong_charge_eq_per_l: -2.0e-3,
            carbonate_mol_per_l: 1.5e-3,
            phosphate_mol_per_l: 0.0,
            buffers: [(0.0, 7.0), (0.0, 7.0)],
        };
        let data = synthetic(&truth, 0.0, 1);
        let start = Effective { strong_charge_eq_per_l: f64::NAN, ..truth };
        assert_eq!(fit(&spec(0, true), &caustic(), &data, &start).map(|r| r.points), Err(FitError::InvalidData));
        let start = Effective { buffers: [(1e-4, f64::INFINITY), (0.0, 7.0)], ..truth };
        assert_eq!(fit(&spec(0, true), &caustic(), &data, &start).map(|r| r.points), Err(FitError::InvalidData));
        // The same data from a finite start fit, with every point counted.
        assert_eq!(fit(&spec(0, true), &caustic(), &data, &truth).map(|r| r.points), Ok(40));
    }

    #[test]
    fn solve_spd_solves_the_active_block_and_leaves_the_rest_zero() {
        // SPD block on parameters 0 and 2 (a 2×2 system), inactive rows hold junk that must be
        // ignored. Solution by hand: [[4, 2], [2, 3]]·x = [2, 5] → x = (−0.5, 2).
        let mut a = [[9.0_f64; MAX_PARAMETERS]; MAX_PARAMETERS];
        a[0][0] = 4.0;
        a[0][2] = 2.0;
        a[2][0] = 2.0;
        a[2][2] = 3.0;
        let b = [2.0, 7.0, 5.0, 7.0, 7.0, 7.0, 7.0];
        let layout = Layout { active: [true, false, true, false, false, false, false] };
        let x = solve_spd(&a, &b, layout).unwrap();
        assert!((x[0] + 0.5).abs() < 1e-12 && (x[2] - 2.0).abs() < 1e-12, "{x:?}");
        assert_eq!([x[1], x[3], x[4], x[5], x[6]], [0.0; 5]);
        // Not positive definite: refused.
        a[2][2] = 1.0;
        assert_eq!(solve_spd(&a, &b, layout), None);
    }

    /// An invented bicarbonate make-up water with hardness and salt (NaHCO3 4 mM, Na2CO3 0.3 mM,
    /// CaCl2 1.5 mM, NaCl 3 mM; 50 mL, 25 °C, Davies) titrated with 0.04 mol/L HCl, 0 to 12 mL
    /// (64 volumes, pH 9.05 to 2.45): the model's own noiseless curve. True strong charge
    /// 4.6 meq/L (Na⁺ 7.6 + Ca²⁺ 3.0 − Cl⁻ 6.0, from the recipe), carbonate 4.3 mmol/L.
    fn make_up_water_titrated_with_acid() -> (FitSpec<f64>, Solution<f64, 1>, std::vec::Vec<(f64, f64)>) {
        let t = Celsius::new(25.0).unwrap();
        let mut sample: Solution<f64, 4> = Solution::new(t, Activity::Davies);
        for (f, c) in [("NaHCO3", 0.004), ("Na2CO3", 0.0003), ("CaCl2", 0.0015), ("NaCl", 0.003)] {
            sample.add_formula(f, c).unwrap();
        }
        let mut acid: Solution<f64, 1> = Solution::new(t, Activity::Davies);
        acid.add_formula("HCl", 0.04).unwrap();
        let data = (0..64)
            .map(|i| {
                let v = 0.012 * f64::from(i) / 63.0;
                (v, sample.mix(0.05, &acid, v).unwrap().solve().unwrap().ph)
            })
            .collect();
        let spec = FitSpec {
            carbonate: false,
            phosphate: false,
            inert_ionic_strength_mol_per_l: 0.0,
            buffers: 0,
            sample_volume_l: 0.05,
            temperature: t,
            activity: Activity::Davies,
        };
        (spec, acid, data)
    }

    /// The start `phdose fit` guesses for these data: strong charge from the pH 7 crossing,
    /// carbonate 1 mmol/L, one buffer 0.5 mmol/L mid-way through the data's pH range.
    fn cli_start() -> Effective<f64> {
        Effective {
            strong_charge_eq_per_l: 1.02e-3,
            carbonate_mol_per_l: 1e-3,
            phosphate_mol_per_l: 0.0,
            buffers: [(5e-4, 5.75), (0.0, 7.0)],
        }
    }

    #[test]
    fn a_fit_that_does_not_describe_the_data_is_refused() {
        // Strong charge alone on a carbonate water: the best such model misses the curve by
        // pH units (it used to be returned as 0.96 ± 0.001 meq/L against a true 4.6).
        let (spec, acid, data) = make_up_water_titrated_with_acid();
        let r = fit(&spec, &acid, &data, &cli_start());
        let Err(FitError::ResidualAboveBound { rms_ph, bound_ph }) = r else { panic!("{r:?}") };
        assert!(rms_ph > 1.0 && bound_ph == MAX_RMS_PH, "{r:?}");
        assert!(r.is_err_and(|e| e.is_quality_refusal()));
        // `fit_assessed` keeps the numbers of the refused fit, with the same verdict.
        let a = fit_assessed(&spec, &acid, &data, &cli_start()).unwrap();
        assert_eq!(a.quality, FitQuality::Refused(FitError::ResidualAboveBound { rms_ph: a.rms_ph, bound_ph }));
        assert!(a.converged && a.rms_ph == rms_ph, "{a:?}");
        assert_eq!(
            (a.data_min_ph, a.data_max_ph),
            data.iter().fold((14.0, 0.0), |(lo, hi), p| (p.1.min(lo), p.1.max(hi)))
        );
    }

    #[test]
    fn a_fit_stopped_by_the_iteration_cap_is_refused() {
        // Carbonate and one buffer on the same data: the spare buffer drifts below the data's
        // pH range (pKa 2.3 against data from pH 2.45) and the fit runs into the iteration cap
        // (it used to be returned).
        let (spec, acid, data) = make_up_water_titrated_with_acid();
        let spec =
            FitSpec { carbonate: true, phosphate: false, inert_ionic_strength_mol_per_l: 0.0, buffers: 1, ..spec };
        let r = fit(&spec, &acid, &data, &cli_start());
        assert_eq!(r.map(|r| r.points), Err(FitError::NotConverged { iterations: MAX_FIT_ITERATIONS }));
        let a = fit_assessed(&spec, &acid, &data, &cli_start()).unwrap();
        assert!(!a.converged && a.iterations == MAX_FIT_ITERATIONS, "{a:?}");
        // The same data with carbonate alone fit: the recipe's 4.6 meq/L and 4.3 mmol/L.
        let r = fit(&FitSpec { buffers: 0, ..spec }, &acid, &data, &cli_start()).unwrap();
        assert!(r.converged && r.iterations < MAX_FIT_ITERATIONS && r.quality.is_accepted(), "{r:?}");
        assert!((r.effective.strong_charge_eq_per_l / 4.6e-3 - 1.0).abs() < 0.02, "{r:?}");
        assert!((r.effective.carbonate_mol_per_l / 4.3e-3 - 1.0).abs() < 0.05, "{r:?}");
    }

    #[test]
    fn impossible_or_disordered_points_are_refused() {
        let (spec, acid, data) = make_up_water_titrated_with_acid();
        let spec = FitSpec { carbonate: true, ..spec };
        let start = cli_start();
        assert!(fit(&spec, &acid, &data, &start).is_ok());
        let with = |i: usize, point: (f64, f64)| {
            let mut d = data.clone();
            d[i] = point;
            fit(&spec, &acid, &d, &start).map(|r| r.points)
        };
        let refused = |index: u32, problem: PointProblem| Err(FitError::InvalidPoint { index, problem });
        // 1e308 mL of titrant (1e305 L) on a 50 mL sample, at the end and in the middle.
        assert_eq!(with(63, (1e305, 2.4)), refused(63, PointProblem::VolumeAboveBound));
        assert_eq!(with(30, (1e305, data[30].1)), refused(30, PointProblem::VolumeAboveBound));
        // The bound is MAX_TITRANT_PER_SAMPLE sample volumes: 0.5 L passes the check (the model
        // then misses it and the fit is refused for its residual, not for the point), just
        // above is refused.
        assert!(with(63, (0.5, 2.4)).is_err_and(|e| e.is_quality_refusal()));
        assert_eq!(with(63, (0.5 * (1.0 + 1e-12), 2.4)), refused(63, PointProblem::VolumeAboveBound));
        // A volume below its predecessor (two points swapped); equal volumes are allowed.
        let mut swapped = data.clone();
        swapped.swap(10, 11);
        assert_eq!(fit(&spec, &acid, &swapped, &start).map(|r| r.points), refused(11, PointProblem::VolumeDecreases));
        let mut repeated = data.clone();
        repeated[11].0 = repeated[10].0;
        assert!(fit(&spec, &acid, &repeated, &start).is_ok());
        // Negative volume, pH beyond the measurable range, non-finite values.
        assert_eq!(with(0, (-1e-4, data[0].1)), refused(0, PointProblem::NegativeVolume));
        assert_eq!(with(5, (data[5].0, 15.5)), refused(5, PointProblem::PhOutsideRange));
        assert_eq!(with(5, (data[5].0, -0.5)), refused(5, PointProblem::PhOutsideRange));
        assert_eq!(with(7, (f64::NAN, 7.0)), refused(7, PointProblem::NotFinite));
        assert_eq!(with(7, (data[7].0, f64::INFINITY)), refused(7, PointProblem::NotFinite));
        assert!(!FitError::InvalidPoint { index: 0, problem: PointProblem::NotFinite }.is_quality_refusal());
    }

    #[test]
    fn the_policy_holds_in_f32() {
        // The make-up water's points in f32: carbonate fitted is accepted with the recipe's
        // numbers (strong charge ±2 %, carbonate ±5 %), strong charge alone is refused for its
        // residual, a 1e305 L point for its volume.
        let (spec, _, data) = make_up_water_titrated_with_acid();
        let t = Celsius::new(25.0_f32).unwrap();
        let spec = FitSpec {
            carbonate: true,
            phosphate: false,
            inert_ionic_strength_mol_per_l: 0.0,
            buffers: 0,
            sample_volume_l: 0.05_f32,
            temperature: t,
            activity: spec.activity,
        };
        let mut acid: Solution<f32, 1> = Solution::new(t, Activity::Davies);
        acid.add_formula("HCl", 0.04).unwrap();
        let data: std::vec::Vec<(f32, f32)> = data.iter().map(|&(v, ph)| (v as f32, ph as f32)).collect();
        let start = Effective {
            strong_charge_eq_per_l: 1.02e-3_f32,
            carbonate_mol_per_l: 1e-3,
            phosphate_mol_per_l: 0.0,
            buffers: [(0.0, 7.0), (0.0, 7.0)],
        };
        let r = fit(&spec, &acid, &data, &start).unwrap();
        assert!(r.converged && r.quality.is_accepted() && r.rms_ph < 0.05, "{r:?}");
        assert!((r.effective.strong_charge_eq_per_l / 4.6e-3 - 1.0).abs() < 0.02, "{r:?}");
        assert!((r.effective.carbonate_mol_per_l / 4.3e-3 - 1.0).abs() < 0.05, "{r:?}");
        let r = fit(&FitSpec { carbonate: false, ..spec }, &acid, &data, &start);
        assert!(matches!(r, Err(FitError::ResidualAboveBound { .. })), "{r:?}");
        let mut huge = data.clone();
        huge[63].0 = 1e30;
        let r = fit(&spec, &acid, &huge, &start).map(|r| r.points);
        assert_eq!(r, Err(FitError::InvalidPoint { index: 63, problem: PointProblem::VolumeAboveBound }));
    }

    #[test]
    fn the_quality_checks_come_in_their_documented_order_with_their_bounds() {
        let range = (4.0, 9.0);
        let ok = 0.01;
        assert_eq!(assess(true, 5, ok, [Some(7.0), None], range), FitQuality::Accepted);
        // A pKa PKA_INSIDE_DATA_PH inside either end passes; closer to an end or outside,
        // refused with the numbers.
        let edge = PKA_INSIDE_DATA_PH;
        assert!(assess(true, 5, ok, [Some(4.0 + edge), Some(9.0 - edge)], range).is_accepted());
        assert!(!assess(true, 5, ok, [Some(4.0 + 0.9 * edge), None], range).is_accepted());
        assert!(!assess(true, 5, ok, [None, Some(9.0 - 0.9 * edge)], range).is_accepted());
        let outside =
            FitError::PkaOutsideData { parameter: "buffer b pKa", pka: 9.6, data_min_ph: 4.0, data_max_ph: 9.0 };
        assert_eq!(assess(true, 5, ok, [Some(7.0), Some(9.6)], range), FitQuality::Refused(outside));
        assert!(!assess(true, 5, ok, [Some(3.4), None], range).is_accepted());
        assert!(!assess(true, 5, ok, [Some(f64::NAN), None], range).is_accepted());
        // The residual bound, inclusive; a NaN residual is refused.
        assert!(assess(true, 5, MAX_RMS_PH, [None, None], range).is_accepted());
        let above = FitError::ResidualAboveBound { rms_ph: 0.051, bound_ph: MAX_RMS_PH };
        assert_eq!(assess(true, 5, 0.051, [None, None], range), FitQuality::Refused(above));
        assert!(!assess(true, 5, f64::NAN, [None, None], range).is_accepted());
        // Order: not converged before the pKa, the pKa before the residual.
        let cap = FitError::NotConverged { iterations: MAX_FIT_ITERATIONS };
        assert_eq!(assess(false, MAX_FIT_ITERATIONS, 1.0, [Some(1.0), None], range), FitQuality::Refused(cap));
        assert!(matches!(
            assess(true, 5, 1.0, [Some(1.0), None], range),
            FitQuality::Refused(FitError::PkaOutsideData { .. })
        ));
        // Every quality refusal says so; the messages carry the numbers.
        for e in [cap, outside, above, FitError::IllConditioned { parameter: "carbonate" }] {
            assert!(e.is_quality_refusal(), "{e:?}");
        }
        assert!(std::format!("{outside}").contains("9.60") && std::format!("{outside}").contains("4.00 to 9.00"));
        assert!(std::format!("{above}").contains("0.051") && std::format!("{cap}").contains("200"));
    }

    #[test]
    fn refuses_parameters_the_data_cannot_see() {
        // Strong acid only, titrated to pH ~3: a second buffer with pKa far outside the data
        // range cannot be determined.
        let truth = Effective {
            strong_charge_eq_per_l: -8.0e-3,
            carbonate_mol_per_l: 0.0,
            phosphate_mol_per_l: 0.0,
            buffers: [(0.0, 7.0), (0.0, 7.0)],
        };
        let data = synthetic(&truth, 0.005, 3);
        let start = Effective {
            strong_charge_eq_per_l: -5.0e-3,
            carbonate_mol_per_l: 0.0,
            phosphate_mol_per_l: 0.0,
            buffers: [(1e-4, 10.5), (1e-4, 11.5)],
        };
        let r = fit(&spec(2, false), &caustic(), &data, &start);
        assert!(matches!(r, Err(FitError::IllConditioned { .. })), "{r:?}");
        // Too few points for the parameters.
        assert_eq!(fit(&spec(2, true), &caustic(), &data[..6], &start).map(|r| r.points), Err(FitError::InvalidData));
    }
}
