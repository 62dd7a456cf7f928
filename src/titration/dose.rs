//! The inverse problem: reagent flow for a target pH (feed-forward), the process gain there, and
//! the checks a controller runs at boot (reachable? within the pump? controllable?).
//!
//! For a stream s and a candidate pH x, g_s(x) is the stream's charge excess at x (eq/L; linear
//! in its totals). Mixing influent (flow Q_in) with reagent (flow Q_r) reaches pH x exactly when
//! Q_in·g_in(x) + Q_r·g_r(x) = 0, so Q_r = −Q_in·g_in(x)/g_r(x): closed form in ideal mode. With
//! Davies activities g depends on the mixture's ionic strength, which depends on Q_r; a short
//! fixed point (at most [`MAX_DOSE_ROUNDS`] rounds) refines it.
//!
//! Process gain at the operating point: dpH/dQ_r = g_r(x)/((Q_in + Q_r)·β_mix(x)), in pH per L/h.

use heapless::Vec;

use crate::chem::activity::{Activity, DAVIES_MAX_IONIC_STRENGTH};
use crate::chem::{CompositionError, Equilibrium, Solution, SolveError};
use crate::real::Real;
use crate::titration::hazard::{self, Gas, ReagentStock};
use crate::units::{InvalidInput, LitresPerHour, Ph, PhWidth, Quantity};

/// Most ionic-strength rounds of the fast path of one dose computation.
pub const MAX_DOSE_ROUNDS: u32 = 12;
/// Most halvings of the bracketed search that takes over when the fast path cannot conclude.
pub const MAX_BRACKET_STEPS: u32 = 64;
/// Most ionic-strength rounds at a fixed pH inside one halving of the bracketed search.
pub const MAX_FIXED_PH_ROUNDS: u32 = 8;
/// Flow ratios (reagent to influent) the bracketed search scans for the first sign change:
/// quarter decades from 10^[`SCAN_LOWEST_LOG10_RATIO`] to 1e9.
pub const SCAN_POINTS: u32 = 73;
/// log10 of the smallest reagent-to-influent flow ratio scanned.
pub const SCAN_LOWEST_LOG10_RATIO: f64 = -9.0;
/// Setpoint offsets scanned (each side, 0.1 pH apart) when looking for a controllable setpoint.
pub const SETPOINT_SCAN_STEPS: u32 = 20;
/// Spacing of that scan, pH.
pub const SETPOINT_SCAN_SPACING_PH: f64 = 0.1;
/// A pump step whose pH change is below this many times the solver's pH tolerance is taken from
/// the linear gain: the real solve cannot resolve it (its sign is noise), and at that size the
/// linear gain is exact to first order.
pub const LINEAR_STEP_TOLERANCES: f64 = 100.0;

/// A metering pump, checked at construction: maximum above 0 and at most
/// [`crate::units::MAX_FLOW_L_PER_H`] L/h, step above 0 and at most the maximum, lowest steady
/// flow 0 (the default) up to the maximum.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pump<R: Real> {
    max_l_per_h: R,
    step_l_per_h: R,
    min_l_per_h: R,
}

impl<R: Real> Pump<R> {
    /// A pump delivering at most `max_l_per_h` in steps of `step_l_per_h` (its stroke or
    /// speed resolution), both L/h. The error names the value that is out of range.
    pub fn new(max_l_per_h: R, step_l_per_h: R) -> Result<Self, InvalidInput> {
        let max = LitresPerHour::new(max_l_per_h)
            .and_then(|m| m.positive(Quantity::PumpMax))
            .map_err(|e| InvalidInput { quantity: Quantity::PumpMax, ..e })?;
        let step = step_l_per_h.to_f64();
        if !(step.is_finite() && step > 0.0 && step_l_per_h <= max.l_per_h()) {
            return Err(InvalidInput { quantity: Quantity::PumpStep, value: step });
        }
        Ok(Self { max_l_per_h, step_l_per_h, min_l_per_h: R::ZERO })
    }

    /// The same pump with a lowest steady flow of `min_l_per_h` L/h (0 up to the maximum;
    /// e.g. an analog pump's minimum duty times its maximum). The error names the value.
    pub fn with_minimum(self, min_l_per_h: R) -> Result<Self, InvalidInput> {
        let min = min_l_per_h.to_f64();
        if !(min.is_finite() && min >= 0.0 && min_l_per_h <= self.max_l_per_h) {
            return Err(InvalidInput { quantity: Quantity::PumpMin, value: min });
        }
        Ok(Self { min_l_per_h, ..self })
    }

    /// Lowest steady flow, L/h (0 when not given, ≤ the maximum).
    pub fn min_l_per_h(&self) -> R {
        self.min_l_per_h
    }

    /// Smallest flow the pump delivers steadily, L/h: the larger of its minimum and one step.
    /// A planned flow above zero but below it is [`DoseCheck::BelowTurndown`].
    pub fn smallest_l_per_h(&self) -> R {
        self.min_l_per_h.max(self.step_l_per_h)
    }

    /// Highest flow, L/h (> 0).
    pub fn max_l_per_h(&self) -> R {
        self.max_l_per_h
    }

    /// Smallest flow change the pump can make, L/h (> 0, ≤ the maximum).
    pub fn step_l_per_h(&self) -> R {
        self.step_l_per_h
    }
}

/// What to plan for. Every field is a checked type, so a request is valid by construction.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DoseRequest<R: Real> {
    /// Target pH.
    pub setpoint: Ph<R>,
    /// The pump, if known (enables the capacity and steepness checks).
    pub pump: Option<Pump<R>>,
    /// Full width of the control band; with a pump, enables the steepness check.
    pub band: Option<PhWidth<R>>,
    /// The reagent as stored (grade and tank temperature), if known: enables the
    /// crystallisation check ([`DoseCheck::ReagentCrystallises`]).
    pub reagent_stock: Option<ReagentStock<R>>,
}

impl<R: Real> DoseRequest<R> {
    /// A request for `setpoint` alone (no pump, no band: no capacity or steepness check).
    pub fn new(setpoint: Ph<R>) -> Self {
        Self { setpoint, pump: None, band: None, reagent_stock: None }
    }

    /// Checks raw numbers into a request (the error names the first value out of range).
    pub fn checked(setpoint_ph: R, pump: Option<(R, R)>, band_ph: Option<R>) -> Result<Self, InvalidInput> {
        Ok(Self {
            setpoint: Ph::new(setpoint_ph)?,
            pump: pump.map(|(max, step)| Pump::new(max, step)).transpose()?,
            band: band_ph.map(PhWidth::new).transpose()?,
            reagent_stock: None,
        })
    }

    /// The same request with the reagent's stock (grade and storage temperature).
    pub fn with_reagent_stock(self, stock: ReagentStock<R>) -> Self {
        Self { reagent_stock: Some(stock), ..self }
    }
}

/// A check that failed but still leaves a plan.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DoseCheck<R: Real> {
    /// The needed flow exceeds the pump's maximum.
    BeyondPump {
        /// Flow the setpoint needs, L/h.
        needed_l_per_h: R,
        /// The pump's maximum, L/h.
        max_l_per_h: R,
    },
    /// One pump step moves the pH more than the control band: the loop will limit-cycle.
    TooSteep {
        /// pH change of one pump step up from the planned flow (a real solve).
        step_delta_ph: R,
        /// The control band's width, pH.
        band_ph: R,
        /// Dilute the reagent by this factor (found to 5 %) and one step fits the band, and the
        /// diluted reagent's flow is not below the pump's turndown: a real plan of the diluted
        /// reagent (see [`DoseCheck::BelowTurndown`]). Capped at [`MAX_DILUTION`], which means
        /// no dilution up to the cap is enough.
        dilute_reagent_by: R,
        /// Flow the diluted reagent needs at this influent flow, L/h; `None` at the cap. Above
        /// the pump's maximum, the dilution alone is not a remedy: it needs a pump this big.
        diluted_flow_l_per_h: Option<R>,
        /// Coarsest pump step (L/h) with which this reagent at the planned flow moves the pH by
        /// no more than the band (a real solve), when such a pump also delivers the planned
        /// flow (within its maximum, not below its minimum or that step); `None` otherwise.
        max_step_l_per_h: Option<R>,
        /// Nearest setpoint (within ±2 pH, 0.1 apart) where one step fits the band, the flow
        /// fits the pump and is not below its turndown, if any.
        nearest_controllable_setpoint_ph: Option<R>,
    },
    /// The planned flow is above zero but below the smallest flow the pump delivers steadily
    /// (its minimum or one step, [`Pump::smallest_l_per_h`]): the pump can only pulse it. Not
    /// raised when the influent is already in band ([`DosePlan::in_band`]).
    BelowTurndown {
        /// Flow the setpoint needs, L/h.
        needed_l_per_h: R,
        /// The pump's smallest steady flow, L/h.
        smallest_l_per_h: R,
        /// Dilute the reagent by this factor (found to 5 %) and a real plan of it passes the
        /// pump, turndown and steepness checks; `None` when no dilution up to [`MAX_DILUTION`]
        /// does.
        dilute_reagent_by: Option<R>,
    },
    /// The working precision cannot resolve the plan: the mixture's pH at the planned flow is
    /// only known to about `resolution_ph` (see [`crate::chem::Equilibrium::resolution_ph`]),
    /// which is more than a tenth of the band, or more than one pump step moves the pH. Typical
    /// of `f32` near an unbuffered equivalence point; plan in `f64` or choose a buffered setpoint.
    ResolutionLimited {
        /// How finely the precision places the mixture's pH, pH.
        resolution_ph: R,
        /// What the plan needs resolved: the smaller of a tenth of the band and one pump
        /// step's pH change, pH.
        needed_ph: R,
    },
    /// Error-level hazard: the reagent lowers the pH to a setpoint below the pH where `gas` is
    /// released from the influent (chlorine from hypochlorite, hydrogen sulfide from sulfide;
    /// see [`crate::titration::hazard`] for the threshold and its sources). Choose another
    /// setpoint or remove the hypochlorite/sulfide first; never dose acid onto it blindly.
    GasRelease {
        /// The gas.
        gas: Gas,
        /// The pH below which the release is significant (gas-forming species above
        /// [`hazard::GAS_FRACTION_LIMIT`] of its total) in the mixture at the planned flow.
        release_below_ph: R,
        /// Fraction of the total present as the gas-forming species at the setpoint (0–1).
        gas_fraction: R,
    },
    /// Error-level hazard: the reagent is stored below its crystallisation (freezing)
    /// temperature ([`hazard::CRYSTALLISATION`]): lines and pump heads block, the dose stops.
    ReagentCrystallises {
        /// The grade's crystallisation temperature, °C.
        crystallises_below_c: R,
        /// The storage temperature given, °C.
        reagent_temperature_c: R,
    },
}

impl<R: Real> DoseCheck<R> {
    /// `true` for the hazard checks (gas release, crystallisation): a plan with one of these
    /// must not be used as it stands.
    pub fn is_hazard(&self) -> bool {
        matches!(self, Self::GasRelease { .. } | Self::ReagentCrystallises { .. })
    }
}

/// Most checks one plan reports: one of each kind (pump, steepness, resolution, turndown, two
/// gases, crystallisation).
pub const MAX_CHECKS: usize = 7;

/// A feed-forward plan.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DosePlan<R: Real> {
    /// The setpoint planned for, pH.
    pub setpoint_ph: R,
    /// Reagent flow that brings the mixture to the setpoint, L/h (≥ 0).
    pub reagent_flow_l_per_h: R,
    /// Buffer capacity of the mixture at the setpoint, mol/L per pH.
    pub mixture_buffer_capacity_mol_per_l_per_ph: R,
    /// Ionic strength of the mixture at the setpoint, mol/L.
    pub mixture_ionic_strength_mol_per_l: R,
    /// Process gain dpH/dQ_r at the setpoint, pH per (L/h); positive for a base reagent.
    pub gain_ph_per_l_per_h: R,
    /// pH change of one pump step up from the planned flow, when a pump was given (a real
    /// solve, signed like the gain).
    pub gain_ph_per_step: Option<R>,
    /// The influent's own pH.
    pub influent_ph: R,
    /// Ionic-strength rounds used: 1 in ideal mode, at most [`MAX_DOSE_ROUNDS`] on the fast
    /// path; more when the bracketed search decided (rounds of the fast path plus halvings, at
    /// most [`MAX_DOSE_ROUNDS`] + [`MAX_BRACKET_STEPS`]).
    pub rounds: u32,
    /// How finely the working precision places the mixture's pH at the planned flow, pH
    /// (ε·S/β of the mixture, as [`crate::chem::Equilibrium::resolution_ph`]): the planned flow
    /// reaches the setpoint to within a few times this. About 1e-12 or less in `f64`; in `f32`
    /// from 1e-6 on buffered setpoints to 0.1 near unbuffered equivalence points.
    pub resolution_ph: R,
    /// Checks that failed (empty when all is well).
    pub checks: Vec<DoseCheck<R>, MAX_CHECKS>,
    /// The influent's own pH already lies inside the band around the setpoint (a band was
    /// given): no dose is needed. When the reagent could not reach the setpoint itself, the plan
    /// is the idle one (flow 0, the influent's own buffer capacity and ionic strength, the gain
    /// of the first drop, no checks).
    pub in_band: Option<InBand<R>>,
}

/// The influent already inside the control band: "no dose needed".
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InBand<R: Real> {
    /// The influent's own pH.
    pub influent_ph: R,
    /// Lower edge of the band (setpoint − band/2), pH.
    pub low_ph: R,
    /// Upper edge of the band (setpoint + band/2), pH.
    pub high_ph: R,
    /// Whether this reagent could bring the influent to the setpoint itself (else it only
    /// moves the pH away from it, or not far enough).
    pub reagent_reaches_setpoint: bool,
}

impl<R: Real> DosePlan<R> {
    /// `true` when no check failed.
    pub fn all_clear(&self) -> bool {
        self.checks.is_empty()
    }

    /// `true` when the influent is already inside the band: no dose is needed.
    pub fn no_dose_needed(&self) -> bool {
        self.in_band.is_some()
    }
}

/// Why no plan exists.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum DoseError {
    /// The reagent moves the pH away from the setpoint.
    WrongDirection {
        /// The influent's pH.
        influent_ph: f64,
        /// The setpoint.
        setpoint_ph: f64,
    },
    /// Even an unlimited dose stops short of the setpoint.
    BeyondReagent {
        /// The pH an unlimited dose approaches: the reagent's own pH at the influent's
        /// temperature, in the influent's activity model.
        limit_ph: f64,
        /// The setpoint.
        setpoint_ph: f64,
    },
    /// An input out of its range (the influent flow is zero, or a raw value given to
    /// [`DoseRequest::checked`]); carries the rejected value.
    Input(InvalidInput),
    /// Davies mode: the mixture that would reach the setpoint (or, for a setpoint beyond the
    /// reagent, the reagent itself) has an ionic strength above the activity model's range
    /// ([`crate::chem::activity::DAVIES_MAX_IONIC_STRENGTH`]), where no dose can be trusted.
    BeyondActivityModel {
        /// The ionic strength reached, mol/L.
        ionic_strength_mol_per_l: f64,
        /// The setpoint.
        setpoint_ph: f64,
    },
    /// A composition error (e.g. the mixture's capacity `N` cannot hold the reagent's systems).
    Composition(CompositionError),
    /// Solving the influent or the reagent failed.
    Solve(SolveError),
}

impl core::fmt::Display for DoseError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::WrongDirection { influent_ph, setpoint_ph } => write!(
                f,
                "unreachable: the reagent moves the pH away from the setpoint {setpoint_ph:.2} (influent pH {influent_ph:.2})"
            ),
            Self::BeyondReagent { limit_ph, setpoint_ph } => write!(
                f,
                "unreachable: setpoint {setpoint_ph:.2} is beyond pH {limit_ph:.2}, which even an unlimited dose only approaches"
            ),
            Self::BeyondActivityModel { ionic_strength_mol_per_l, setpoint_ph } => write!(
                f,
                "unreachable within the activity model: setpoint {setpoint_ph:.2} needs an ionic strength of {ionic_strength_mol_per_l:.3} mol/L, above the Davies limit {} mol/L",
                crate::chem::activity::DAVIES_MAX_IONIC_STRENGTH
            ),
            Self::Input(e) => core::fmt::Display::fmt(e, f),
            Self::Composition(e) => core::fmt::Display::fmt(e, f),
            Self::Solve(e) => core::fmt::Display::fmt(e, f),
        }
    }
}

impl core::error::Error for DoseError {}

impl From<InvalidInput> for DoseError {
    fn from(e: InvalidInput) -> Self {
        Self::Input(e)
    }
}

/// The core of the closed form at one setpoint; no pump or band checks.
struct Core<R: Real> {
    flow: R,
    beta: R,
    resolution: R,
    ionic: R,
    gain: R,
    rounds: u32,
}

/// Outcome of the fast path of [`Mixing::core`].
enum Fast<R: Real> {
    /// A plan, or an error no other method would avoid.
    Done(Result<Core<R>, DoseError>),
    /// The fast path could not conclude after `rounds` rounds.
    Undecided { rounds: u32 },
}

/// Influent at its flow, reagent (already at the influent's temperature), and the influent's own
/// equilibrium: everything the closed form and the checks share.
struct Mixing<'a, R: Real, const N: usize, const M: usize> {
    influent: &'a Solution<R, N>,
    influent_flow_l_per_h: R,
    influent_eq: Equilibrium<R>,
    reagent: &'a Solution<R, M>,
}

impl<R: Real, const N: usize, const M: usize> Mixing<'_, R, N, M> {
    /// The flow for setpoint `x`: the closed form refined for activity by a fixed point on the
    /// mixture's ionic strength (at most [`MAX_DOSE_ROUNDS`] rounds, the usual case); when that
    /// cannot conclude — in Davies mode the closed form at a guessed ionic strength can point the
    /// wrong way, and near the reagent's own pH the fixed point can oscillate — the bracketed
    /// search [`Self::bracketed`] decides, which cannot be misled by either.
    fn core(&self, x: R) -> Result<Core<R>, DoseError> {
        match self.fixed_point(x) {
            Fast::Done(result) => result,
            Fast::Undecided { rounds } => self.bracketed(x, rounds),
        }
    }

    /// The fast path. Undecided when the closed form's signs disagree at the current ionic
    /// strength, when it settles beyond the activity model, or when the rounds run out; an
    /// error only for a composition error.
    fn fixed_point(&self, x: R) -> Fast<R> {
        let (influent, q_in, reagent) = (self.influent, self.influent_flow_l_per_h, self.reagent);
        let davies = influent.activity() == Activity::Davies;
        let mut ionic = self.influent_eq.ionic_strength_mol_per_l;
        for round in 1..=MAX_DOSE_ROUNDS {
            let af = influent.activity_factor(ionic);
            let gi = influent.evaluate(x, af).excess;
            let gr = reagent.evaluate(x, af).excess;
            let flow = if gi == R::ZERO {
                R::ZERO
            } else if (gi > R::ZERO) != (gr > R::ZERO) && gr != R::ZERO {
                -q_in * gi / gr
            } else {
                return Fast::Undecided { rounds: round };
            };
            let mixture = match influent.mix(q_in, reagent, flow) {
                Ok(m) => m,
                Err(e) => return Fast::Done(Err(DoseError::Composition(e))),
            };
            let e = mixture.evaluate(x, af);
            let settled = !davies || (e.ionic_strength - ionic).abs() <= R::IONIC_STRENGTH_TOLERANCE * e.ionic_strength;
            if settled {
                if davies && e.ionic_strength.to_f64() > DAVIES_MAX_IONIC_STRENGTH {
                    // Settled beyond the activity model: let the bracketed search judge.
                    return Fast::Undecided { rounds: round };
                }
                let gain = if e.beta > R::ZERO { gr / ((q_in + flow) * e.beta) } else { R::ZERO };
                let resolution = mixture.resolution(x, af, e.beta);
                return Fast::Done(Ok(Core {
                    flow,
                    beta: e.beta,
                    ionic: e.ionic_strength,
                    resolution,
                    gain,
                    rounds: round,
                }));
            }
            ionic = e.ionic_strength;
        }
        Fast::Undecided { rounds: MAX_DOSE_ROUNDS }
    }

    /// Charge excess (eq/L) and ionic strength (mol/L) at pH `x` of the mixture whose reagent
    /// volume fraction is `t` (0 = influent, 1 = reagent), with activity coefficients from its
    /// own ionic strength at `x` (clamped to the Davies range for the coefficients only). At a
    /// fixed pH every term is linear in the totals, so the mixture's excess and ionic strength
    /// are `(1 − t)·influent + t·reagent`. A fixed point of at most [`MAX_FIXED_PH_ROUNDS`]
    /// rounds of two evaluations (one in ideal mode), starting from `ionic`.
    fn consistent_at(&self, x: R, t: R, mut ionic: R) -> (R, R) {
        let max = R::from_f64(DAVIES_MAX_IONIC_STRENGTH);
        let mut excess = R::ZERO;
        for _ in 0..MAX_FIXED_PH_ROUNDS {
            let af = self.influent.activity_factor(ionic.max(R::ZERO).min(max));
            let (ei, er) = (self.influent.evaluate(x, af), self.reagent.evaluate(x, af));
            let next = (R::ONE - t) * ei.ionic_strength + t * er.ionic_strength;
            excess = (R::ONE - t) * ei.excess + t * er.excess;
            let settled = af == R::ZERO || (next - ionic).abs() <= R::IONIC_STRENGTH_TOLERANCE * next;
            ionic = next;
            if settled {
                break;
            }
        }
        (excess, ionic)
    }

    /// The robust path: a scan, then bisection, on the reagent's volume fraction `t` in the
    /// mixture. The mixture's self-consistent charge excess at the setpoint is the influent's at
    /// `t = 0` and the reagent's at `t = 1`, and continuous between; its first sign change along
    /// [`SCAN_POINTS`] flow ratios (quarter decades from 1e-9 to 1e9 times the influent flow,
    /// then the pure reagent) brackets the smallest dose at the setpoint, which bisection then
    /// narrows. No sign change means the setpoint is out of reach (the reason follows from where
    /// the influent's and the reagent's own pH lie). The flow is the closed form at the
    /// bracket's ionic strength. At most [`SCAN_POINTS`] + 1 + [`MAX_BRACKET_STEPS`] + 1 calls
    /// of [`Self::consistent_at`], plus one reagent solve to name an unreachable setpoint's
    /// limit.
    /// `fast_rounds` (the fast path's rounds) count into the plan's `rounds`.
    fn bracketed(&self, x: R, fast_rounds: u32) -> Result<Core<R>, DoseError> {
        let (influent, q_in, reagent) = (self.influent, self.influent_flow_l_per_h, self.reagent);
        let (e0, i0) = self.consistent_at(x, R::ZERO, self.influent_eq.ionic_strength_mol_per_l);
        if e0 == R::ZERO {
            let af = influent.activity_factor(i0);
            let e = influent.evaluate(x, af);
            return Ok(Core {
                flow: R::ZERO,
                beta: e.beta,
                ionic: e.ionic_strength,
                resolution: influent.resolution(x, af, e.beta),
                gain: R::ZERO,
                rounds: fast_rounds,
            });
        }
        // The first sign change along a scan of the reagent-to-influent flow ratio, so that the
        // smallest dose reaching the setpoint is found: with activity coefficients the mixture's
        // pH need not be monotonic in the dose (diluting a salty buffer moves its pH before the
        // reagent takes over), and a setpoint can be crossed twice.
        let positive0 = e0 > R::ZERO;
        let mut lo = R::ZERO;
        let mut hi = None;
        let mut ionic = i0;
        for k in 0..SCAN_POINTS {
            let ratio = R::from_f64(libm::pow(10.0, SCAN_LOWEST_LOG10_RATIO + 0.25 * f64::from(k)));
            let t = ratio / (R::ONE + ratio);
            let (e, i) = self.consistent_at(x, t, ionic);
            ionic = i;
            if e == R::ZERO || (e > R::ZERO) != positive0 {
                hi = Some(t);
                break;
            }
            lo = t;
        }
        let hi = match hi {
            Some(t) => t,
            None => {
                let (e1, _) = self.consistent_at(x, R::ONE, ionic);
                if (e1 > R::ZERO) == positive0 || e1 == R::ZERO {
                    return Err(self.unreachable_reason(x));
                }
                R::ONE
            }
        };
        // Invariant: the excess has e0's sign at `lo` and the other sign (or zero) at `hi`.
        let mut hi = hi;
        let mut steps = 0_u32;
        while steps < MAX_BRACKET_STEPS {
            steps += 1;
            let mid = R::from_f64(0.5) * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            let (e, i) = self.consistent_at(x, mid, ionic);
            ionic = i;
            if e == R::ZERO {
                (lo, hi) = (mid, mid);
                break;
            }
            if (e > R::ZERO) == positive0 {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= R::from_f64(R::RELATIVE_PRECISION) * hi {
                break;
            }
        }
        let t = R::from_f64(0.5) * (lo + hi);
        let (_, ionic) = self.consistent_at(x, t, ionic);
        if influent.activity() == Activity::Davies && ionic.to_f64() > DAVIES_MAX_IONIC_STRENGTH {
            return Err(DoseError::BeyondActivityModel {
                ionic_strength_mol_per_l: ionic.to_f64(),
                setpoint_ph: x.to_f64(),
            });
        }
        let af = influent.activity_factor(ionic);
        let gi = influent.evaluate(x, af).excess;
        let gr = reagent.evaluate(x, af).excess;
        // The closed form at the converged activity coefficients is exact there; the bracket's
        // own fraction is the fallback when rounding leaves the two excesses of equal sign.
        let flow =
            if (gi > R::ZERO) != (gr > R::ZERO) && gr != R::ZERO { -q_in * gi / gr } else { q_in * t / (R::ONE - t) };
        let mixture = influent.mix(q_in, reagent, flow).map_err(DoseError::Composition)?;
        let e = mixture.evaluate(x, af);
        let gain = if e.beta > R::ZERO { gr / ((q_in + flow) * e.beta) } else { R::ZERO };
        let resolution = mixture.resolution(x, af, e.beta);
        Ok(Core { flow, beta: e.beta, ionic: e.ionic_strength, resolution, gain, rounds: fast_rounds + steps })
    }

    /// Why is the setpoint out of reach? Called when neither the influent nor the reagent
    /// (each at its own ionic strength at the setpoint) is on the far side of it. The reagent's
    /// own pH in the influent's activity model is the limit an unlimited dose approaches: if it
    /// lies between the influent's pH and the setpoint, the setpoint is beyond the reagent;
    /// otherwise the reagent pulls the wrong way. A reagent too concentrated for the Davies
    /// model, or whose pH lies beyond the search range, has no such pH: its pull at the
    /// influent's pH (in the influent's activity coefficients, the first drop's view) gives the
    /// direction, and a setpoint on its side is [`DoseError::BeyondActivityModel`].
    fn unreachable_reason(&self, x: R) -> DoseError {
        let setpoint_ph = x.to_f64();
        let influent_ph = self.influent_eq.ph;
        let wrong = DoseError::WrongDirection { influent_ph: influent_ph.to_f64(), setpoint_ph };
        let mut own = self.reagent.clone();
        own.set_activity(self.influent.activity());
        match own.solve() {
            Ok(eq) if (eq.ph - x).abs() < (influent_ph - x).abs() => {
                DoseError::BeyondReagent { limit_ph: eq.ph.to_f64(), setpoint_ph }
            }
            Ok(_) => wrong,
            Err(e) => {
                // No own pH in the model: too concentrated for Davies, or beyond the pH search
                // range (a concentrated strong acid or base). The first drop's pull decides the
                // direction; a setpoint on the reagent's side that the bracket could not reach
                // lies beyond the activity model.
                let af = self.influent.activity_factor(self.influent_eq.ionic_strength_mol_per_l);
                let pushes_up = self.reagent.evaluate(influent_ph, af).excess > R::ZERO;
                if pushes_up != (x > influent_ph) {
                    return wrong;
                }
                match e {
                    SolveError::IonicStrengthTooHigh { mol_per_l } => {
                        DoseError::BeyondActivityModel { ionic_strength_mol_per_l: mol_per_l, setpoint_ph }
                    }
                    SolveError::NoRoot { .. } if self.influent.activity() == Activity::Davies => {
                        DoseError::BeyondActivityModel {
                            ionic_strength_mol_per_l: own.strong_ionic_strength_mol_per_l().to_f64(),
                            setpoint_ph,
                        }
                    }
                    other => DoseError::Solve(other),
                }
            }
        }
    }

    /// pH change when the reagent flow goes from `flow` to `flow + step` (a real solve, not
    /// the linear gain: near neutrality in unbuffered water the two differ by orders of
    /// magnitude).
    fn step_delta_ph(&self, x: R, flow: R, step: R) -> Result<R, DoseError> {
        let mix =
            self.influent.mix(self.influent_flow_l_per_h, self.reagent, flow + step).map_err(DoseError::Composition)?;
        let eq = mix.solve_from(x).map_err(DoseError::Solve)?;
        Ok(eq.ph - x)
    }

    /// pH change of one pump step up from `flow` at setpoint `x`: the real solve
    /// ([`Self::step_delta_ph`]), or `gain·step` when both are below
    /// [`LINEAR_STEP_TOLERANCES`] × the solver's pH tolerance (the real solve's sign is noise
    /// there; the linear gain is exact to first order).
    fn step_ph(&self, x: R, flow: R, gain: R, step: R) -> Result<R, DoseError> {
        let real = self.step_delta_ph(x, flow, step)?;
        let linear = gain * step;
        let floor = R::PH_TOLERANCE * R::from_f64(LINEAR_STEP_TOLERANCES);
        Ok(if real.abs() < floor && linear.abs() < floor { linear } else { real })
    }

    /// The plan of an influent already in band that this reagent cannot bring to the setpoint:
    /// no dose, the influent's own buffer capacity and ionic strength, the gain of the first
    /// drop (signed: it may move the pH away from the setpoint) and, with a pump, the pH
    /// change of one step from zero. No checks: there is nothing to dose.
    fn idle(&self, x: R, request: &DoseRequest<R>, in_band: InBand<R>) -> Result<DosePlan<R>, DoseError> {
        let eq = self.influent_eq;
        let af = self.influent.activity_factor(eq.ionic_strength_mol_per_l);
        let gr = self.reagent.evaluate(eq.ph, af).excess;
        let beta = eq.buffer_capacity_mol_per_l_per_ph;
        let gain = if beta > R::ZERO { gr / (self.influent_flow_l_per_h * beta) } else { R::ZERO };
        let gain_ph_per_step = match request.pump {
            Some(pump) => Some(self.step_ph(eq.ph, R::ZERO, gain, pump.step_l_per_h)?),
            None => None,
        };
        Ok(DosePlan {
            setpoint_ph: x,
            reagent_flow_l_per_h: R::ZERO,
            mixture_buffer_capacity_mol_per_l_per_ph: beta,
            mixture_ionic_strength_mol_per_l: eq.ionic_strength_mol_per_l,
            gain_ph_per_l_per_h: gain,
            gain_ph_per_step,
            influent_ph: eq.ph,
            rounds: 0,
            resolution_ph: eq.resolution_ph,
            checks: Vec::new(),
            in_band: Some(in_band),
        })
    }

    /// Smallest factor f (1–[`MAX_DILUTION`], found to 5 %) such that a step of `step/f` L/h
    /// at the planned flow moves the pH by at most `band`: diluting the reagent f-fold (ignoring
    /// the extra water's volume, small at these flows) gives a pump step that fits the band.
    /// Bisection on log f: at most 30 solves.
    fn dilution_needed(&self, x: R, flow: R, step: R, band: R) -> R {
        let fits = |f: f64| self.step_delta_ph(x, flow, step / R::from_f64(f)).is_ok_and(|d| d.abs() <= band);
        if !fits(MAX_DILUTION) {
            return R::from_f64(MAX_DILUTION);
        }
        let (mut lo, mut hi) = (0.0_f64, libm::log10(MAX_DILUTION)); // log10 f: lo fails, hi fits
        for _ in 0..30 {
            if hi - lo < 0.02 {
                break;
            }
            let mid = 0.5 * (lo + hi);
            if fits(libm::pow(10.0, mid)) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        R::from_f64(libm::pow(10.0, hi))
    }

    /// Nearest setpoint within ±2 pH (0.1 apart, closest first) where one pump step fits the
    /// band and the flow fits the pump. Bounded: 2·[`SETPOINT_SCAN_STEPS`] core solves.
    fn nearest_controllable(&self, x: R, pump: Pump<R>, band: R) -> Option<R> {
        for k in 1..=SETPOINT_SCAN_STEPS {
            let d = R::from_f64(SETPOINT_SCAN_SPACING_PH * f64::from(k));
            for candidate in [x - d, x + d] {
                if candidate < R::ZERO || candidate > R::from_f64(14.0) {
                    continue;
                }
                let ok = self
                    .core(candidate)
                    .ok()
                    .filter(|c| c.flow <= pump.max_l_per_h && (c.flow == R::ZERO || c.flow >= pump.smallest_l_per_h()))
                    .and_then(|c| self.step_delta_ph(candidate, c.flow, pump.step_l_per_h).ok())
                    .is_some_and(|d| d.abs() <= band);
                if ok {
                    return Some(candidate);
                }
            }
        }
        None
    }
}

/// Largest dilution factor [`DoseCheck::TooSteep`] reports.
pub const MAX_DILUTION: f64 = 1e6;

/// Plans the reagent flow that brings `influent` (at `influent_flow_l_per_h`) to the request's
/// setpoint, with the process gain and the pump/band checks.
///
/// The reagent is taken at the influent's temperature (reagent flows are small). The mixture
/// must fit in capacity `N`: give the influent room for the reagent's systems. Cost: one
/// influent solve plus [`MAX_DOSE_ROUNDS`] × (two charge-balance evaluations and one mix) on
/// the fast path, which decides almost every plan; when it cannot (a setpoint near the reagent's
/// own pH in brine, or an out-of-reach setpoint), a bracketed search adds at most
/// ([`SCAN_POINTS`] + [`MAX_BRACKET_STEPS`] + 3) × [`MAX_FIXED_PH_ROUNDS`] × 2 evaluations (2,240)
/// and one reagent solve.
/// Only when the steepness or turndown check fails, the remedies: up to 2·[`SETPOINT_SCAN_STEPS`]
/// more such plans for the setpoint scan, and at most 2 + [`super::remedy::MAX_DILUTION_HALVINGS`]
/// plans of a diluted reagent (without remedies) for the dilution.
///
/// An influent already inside the band is a plan with [`DosePlan::in_band`] set (see there);
/// the influent flow must be at least [`crate::units::MIN_PLANNED_FLOW_L_PER_H`].
pub fn plan<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    influent_flow: LitresPerHour<R>,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
) -> Result<DosePlan<R>, DoseError> {
    plan_with(influent, influent_flow, reagent, request, true)
}

/// [`plan`], with the remedies of failed checks searched only when `remedies` is true (the
/// remedy searches plan without them: no recursion). Without remedies a failed check's remedy
/// fields are `None`, and [`DoseCheck::TooSteep`]'s dilution is 1.
pub(crate) fn plan_with<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    influent_flow: LitresPerHour<R>,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
    remedies: bool,
) -> Result<DosePlan<R>, DoseError> {
    let x = request.setpoint.ph();
    let influent_flow_l_per_h = influent_flow.plannable(Quantity::InfluentFlow)?.l_per_h();
    let mut reagent = reagent.clone();
    reagent.set_temperature(influent.temperature());
    let influent_eq = influent.solve().map_err(DoseError::Solve)?;
    let in_band = request.band.and_then(|b| {
        let half = b.ph() * R::from_f64(0.5);
        let (low_ph, high_ph) = (x - half, x + half);
        let ph = influent_eq.ph;
        (ph >= low_ph && ph <= high_ph).then_some(InBand {
            influent_ph: ph,
            low_ph,
            high_ph,
            reagent_reaches_setpoint: true,
        })
    });
    let m = Mixing { influent, influent_flow_l_per_h, influent_eq, reagent: &reagent };
    let core = match (m.core(x), in_band) {
        (Ok(core), _) => core,
        (
            Err(
                DoseError::WrongDirection { .. }
                | DoseError::BeyondReagent { .. }
                | DoseError::BeyondActivityModel { .. },
            ),
            Some(band),
        ) => return m.idle(x, request, InBand { reagent_reaches_setpoint: false, ..band }),
        (Err(e), _) => return Err(e),
    };

    // At most one check of each kind, so the pushes below cannot overflow the capacity of
    // MAX_CHECKS (asserted in debug and test builds).
    let mut checks: Vec<DoseCheck<R>, MAX_CHECKS> = Vec::new();
    // Hazards first: a plan that releases a gas or starves on a frozen reagent is refused
    // whatever else it says.
    if x < influent_eq.ph {
        let mixture = influent.mix(influent_flow_l_per_h, &reagent, core.flow).map_err(DoseError::Composition)?;
        for release in hazard::gas_releases(&mixture, x).into_iter().flatten() {
            let pushed = checks.push(DoseCheck::GasRelease {
                gas: release.gas,
                release_below_ph: release.release_below_ph,
                gas_fraction: release.gas_fraction,
            });
            debug_assert!(pushed.is_ok());
        }
    }
    if let Some(stock) = request.reagent_stock
        && let Some(crystallises_below_c) = hazard::crystallises(&stock)
    {
        let pushed = checks.push(DoseCheck::ReagentCrystallises {
            crystallises_below_c,
            reagent_temperature_c: stock.temperature_c(),
        });
        debug_assert!(pushed.is_ok());
    }
    let mut gain_ph_per_step = None;
    if let Some(pump) = request.pump {
        if core.flow > pump.max_l_per_h {
            let pushed =
                checks.push(DoseCheck::BeyondPump { needed_l_per_h: core.flow, max_l_per_h: pump.max_l_per_h });
            debug_assert!(pushed.is_ok());
        }
        let smallest = pump.smallest_l_per_h();
        if in_band.is_none() && core.flow > R::ZERO && core.flow < smallest {
            let dilute_reagent_by = if remedies {
                super::remedy::dilution(influent, influent_flow, &reagent, request)
                    .filter(|(_, q)| *q <= pump.max_l_per_h)
                    .map(|(f, _)| f)
            } else {
                None
            };
            let pushed = checks.push(DoseCheck::BelowTurndown {
                needed_l_per_h: core.flow,
                smallest_l_per_h: smallest,
                dilute_reagent_by,
            });
            debug_assert!(pushed.is_ok());
        }
        let step = m.step_ph(x, core.flow, core.gain, pump.step_l_per_h)?;
        gain_ph_per_step = Some(step);
        if let Some(band) = request.band.map(PhWidth::ph)
            && step.abs() > band
        {
            let check = if remedies {
                let diluted = super::remedy::dilution(influent, influent_flow, &reagent, request);
                let f = m.dilution_needed(x, core.flow, pump.step_l_per_h, band);
                let finer = pump.step_l_per_h / f;
                let finer_fits = f < R::from_f64(MAX_DILUTION)
                    && core.flow <= pump.max_l_per_h
                    && core.flow >= pump.min_l_per_h.max(finer);
                DoseCheck::TooSteep {
                    step_delta_ph: step.abs(),
                    band_ph: band,
                    dilute_reagent_by: diluted.map_or(R::from_f64(MAX_DILUTION), |(f, _)| f),
                    diluted_flow_l_per_h: diluted.map(|(_, q)| q),
                    max_step_l_per_h: finer_fits.then_some(finer),
                    nearest_controllable_setpoint_ph: m.nearest_controllable(x, pump, band),
                }
            } else {
                DoseCheck::TooSteep {
                    step_delta_ph: step.abs(),
                    band_ph: band,
                    dilute_reagent_by: R::ONE,
                    diluted_flow_l_per_h: None,
                    max_step_l_per_h: None,
                    nearest_controllable_setpoint_ph: None,
                }
            };
            let pushed = checks.push(check);
            debug_assert!(pushed.is_ok());
        }
    }
    let band_need = request.band.map(|b| b.ph() * R::from_f64(0.1));
    let step_need = gain_ph_per_step.map(R::abs);
    let needed = match (band_need, step_need) {
        (Some(b), Some(s)) => Some(b.min(s)),
        (b, s) => b.or(s),
    };
    if let Some(needed_ph) = needed
        && core.resolution > needed_ph
    {
        let pushed = checks.push(DoseCheck::ResolutionLimited { resolution_ph: core.resolution, needed_ph });
        debug_assert!(pushed.is_ok());
    }
    Ok(DosePlan {
        setpoint_ph: x,
        reagent_flow_l_per_h: core.flow,
        mixture_buffer_capacity_mol_per_l_per_ph: core.beta,
        mixture_ionic_strength_mol_per_l: core.ionic,
        gain_ph_per_l_per_h: core.gain,
        gain_ph_per_step,
        influent_ph: influent_eq.ph,
        rounds: core.rounds,
        resolution_ph: core.resolution,
        checks,
        in_band,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Celsius;

    /// Rinse water of the (fictional) Brightwater Plating shop: pickling-acid carry-over in
    /// bicarbonate water, 14 °C.
    fn rinse() -> Solution<f64, 6> {
        let mut s = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        s.add_formula("NaHCO3", 0.0015).unwrap();
        s.add_formula("H2SO4", 0.0022).unwrap();
        s.add_formula("CaCl2", 0.0008).unwrap();
        s
    }

    fn caustic(mol_per_l: f64) -> Solution<f64, 1> {
        let mut s = Solution::standard();
        s.add_formula("NaOH", mol_per_l).unwrap();
        s
    }

    #[test]
    fn planned_dose_reaches_the_setpoint() {
        let influent = rinse();
        let reagent = caustic(2.0);
        for sp in [4.5, 6.5, 7.0, 8.5, 10.0] {
            let req = DoseRequest::new(Ph::new(sp).unwrap());
            let p = plan(&influent, LitresPerHour::new(1200.0).unwrap(), &reagent, &req).unwrap();
            let mut r = reagent.clone();
            r.set_temperature(influent.temperature());
            let mix = influent.mix(1200.0, &r, p.reagent_flow_l_per_h).unwrap();
            let ph = mix.solve().unwrap().ph;
            assert!((ph - sp).abs() < 1e-6, "setpoint {sp}: mixture pH {ph}");
            assert!(p.gain_ph_per_l_per_h > 0.0);
        }
    }

    #[test]
    fn gain_matches_a_finite_difference() {
        let influent = rinse();
        let reagent = caustic(2.0);
        let req = DoseRequest::new(Ph::new(6.8).unwrap());
        let p = plan(&influent, LitresPerHour::new(1200.0).unwrap(), &reagent, &req).unwrap();
        let ph_at = |q: f64| influent.mix(1200.0, &reagent, q).unwrap().solve().unwrap().ph;
        let dq = 1e-4 * p.reagent_flow_l_per_h;
        let fd = (ph_at(p.reagent_flow_l_per_h + dq) - ph_at(p.reagent_flow_l_per_h - dq)) / (2.0 * dq);
        // The model gain holds the activity coefficients fixed; the finite difference lets the
        // ionic strength follow the dose. At this low ionic strength that differs by < 1 %.
        assert!((fd - p.gain_ph_per_l_per_h).abs() < 1e-2 * fd.abs(), "fd {fd} vs model {}", p.gain_ph_per_l_per_h);
    }

    #[test]
    fn unreachable_setpoints_are_explained() {
        let influent = rinse();
        let reagent = caustic(0.01); // pH ≈ 12 reagent
        let wrong =
            plan(&influent, LitresPerHour::new(1200.0).unwrap(), &reagent, &DoseRequest::new(Ph::new(2.0).unwrap()));
        assert!(matches!(wrong, Err(DoseError::WrongDirection { .. })), "{wrong:?}");
        let beyond =
            plan(&influent, LitresPerHour::new(1200.0).unwrap(), &reagent, &DoseRequest::new(Ph::new(12.5).unwrap()));
        match beyond {
            Err(DoseError::BeyondReagent { limit_ph, .. }) => {
                // 0.01 M NaOH at the influent's 14 °C, in the influent's (Davies) model:
                // pH = pKw − 2 + log10 γ1 at I = 0.01 mol/L (the definition of pH on the
                // activity scale; water's own ions are negligible here).
                let t = Celsius::new(14.0).unwrap();
                let log_gamma = -crate::chem::activity::davies_factor(crate::chem::activity::debye_huckel_a(t), 0.01);
                let expect = crate::chem::water::pkw(t) - 2.0 + log_gamma;
                assert!((limit_ph - expect).abs() < 0.01, "{limit_ph} vs {expect}");
            }
            other => panic!("{other:?}"),
        }
        // Bad inputs are refused where they are made, with the rejected value.
        assert_eq!(Ph::new(f64::NAN).map_err(|e| e.quantity), Err(Quantity::Ph));
        assert_eq!(Pump::new(1.0, 2.0), Err(InvalidInput { quantity: Quantity::PumpStep, value: 2.0 }));
        assert_eq!(Pump::new(0.0, 0.0), Err(InvalidInput { quantity: Quantity::PumpMax, value: 0.0 }));
        assert_eq!(
            DoseRequest::checked(7.0, None, Some(0.0)),
            Err(InvalidInput { quantity: Quantity::PhWidth, value: 0.0 })
        );
        assert_eq!(DoseRequest::checked(15.0, None, None), Err(InvalidInput { quantity: Quantity::Ph, value: 15.0 }));
        // A zero influent flow passes the flow type but not the plan.
        let ok = DoseRequest::new(Ph::new(7.0).unwrap());
        assert_eq!(
            plan(&influent, LitresPerHour::new(0.0).unwrap(), &reagent, &ok),
            Err(DoseError::Input(InvalidInput { quantity: Quantity::InfluentFlow, value: 0.0 }))
        );
    }

    #[test]
    fn pump_capacity_and_steepness_checks() {
        // Stripping-line rinse: sulfuric acid and salt, no carbonate: almost no buffer at pH 7.
        let mut influent: Solution<f64, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        influent.add_formula("H2SO4", 0.002).unwrap();
        influent.add_formula("NaCl", 0.001).unwrap();
        let reagent = caustic(6.25);
        // Neutral setpoint on unbuffered water with strong caustic and a coarse pump: steep.
        let req = DoseRequest::checked(7.0, Some((0.5, 0.01)), Some(0.3)).unwrap();
        let p = plan(&influent, LitresPerHour::new(1200.0).unwrap(), &reagent, &req).unwrap();
        let needed = p.reagent_flow_l_per_h;
        assert!(
            p.checks
                .iter()
                .any(|c| matches!(c, DoseCheck::BeyondPump { needed_l_per_h, .. } if *needed_l_per_h == needed))
        );
        let steep = p.checks.iter().find_map(|c| match c {
            DoseCheck::TooSteep { step_delta_ph, dilute_reagent_by, .. } => Some((*step_delta_ph, *dilute_reagent_by)),
            _ => None,
        });
        let (dph, dilute) = steep.expect("too steep expected");
        assert!(dph > 0.3 && dilute > 1.0, "{dph} {dilute}");
        // The dilution factor is real: the reagent diluted that much, planned again, moves the
        // pH by no more than the band per step; diluted 10 % less, it does not.
        let step_with = |factor: f64| {
            let p = plan(&influent, LitresPerHour::new(1200.0).unwrap(), &caustic(6.25 / factor), &req).unwrap();
            p.gain_ph_per_step.unwrap().abs()
        };
        assert!(step_with(dilute) <= 0.3, "{}", step_with(dilute));
        assert!(step_with(0.9 * dilute) > 0.3, "{}", step_with(0.9 * dilute));
        // The scan found a setpoint where one step fits the band (away from neutral, where water
        // itself buffers), and it is really controllable there.
        let nearest = p.checks.iter().find_map(|c| match c {
            DoseCheck::TooSteep { nearest_controllable_setpoint_ph, .. } => *nearest_controllable_setpoint_ph,
            _ => None,
        });
        // Unbuffered: no setpoint within ±2 pH of neutral is controllable with this step.
        assert_eq!(nearest, None);
        // Weak carbonate buffer: a setpoint a little off neutral, nearer pK1, becomes controllable.
        let mut weak: Solution<f64, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        weak.add_formula("H2SO4", 0.0005).unwrap();
        weak.add_formula("NaHCO3", 0.0004).unwrap();
        let fine = DoseRequest::checked(8.0, Some((5.0, 0.002)), Some(0.3)).unwrap();
        let p = plan(&weak, LitresPerHour::new(1200.0).unwrap(), &reagent, &fine).unwrap();
        let nearest = p.checks.iter().find_map(|c| match c {
            DoseCheck::TooSteep { nearest_controllable_setpoint_ph, .. } => *nearest_controllable_setpoint_ph,
            _ => None,
        });
        let sp = nearest.expect("a controllable setpoint nearby");
        let again = plan(
            &weak,
            LitresPerHour::new(1200.0).unwrap(),
            &reagent,
            &DoseRequest { setpoint: Ph::new(sp).unwrap(), ..fine },
        )
        .unwrap();
        assert!(again.gain_ph_per_step.unwrap().abs() <= 0.3 && again.all_clear(), "{again:?}");
        // A buffered influent with a big pump and a fine step is all clear.
        let ok = DoseRequest::checked(6.3, Some((20.0, 1e-4)), Some(0.3)).unwrap();
        assert!(plan(&rinse(), LitresPerHour::new(1200.0).unwrap(), &reagent, &ok).unwrap().all_clear());
    }

    #[test]
    fn influent_in_band_needs_no_dose() {
        // Softener rinse (invented): bicarbonate with a little carbonate, pH ≈ 8.9 at 14 °C.
        let mut soft: Solution<f64, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        soft.add_formula("NaHCO3", 0.002).unwrap();
        soft.add_formula("Na2CO3", 0.0001).unwrap();
        let own = soft.solve().unwrap().ph;
        let mut acid: Solution<f64, 1> = Solution::standard();
        acid.add_formula("HCl", 10.0).unwrap();
        let sp = own + 0.05;
        let flow = LitresPerHour::new(1000.0).unwrap();
        // Finding 4: the acid pulls away from a setpoint just above the influent; with the
        // influent inside the band that is "no dose needed", not unreachable.
        let req = DoseRequest::checked(sp, Some((2.0, 0.001)), Some(0.2)).unwrap();
        let p = plan(&soft, flow, &acid, &req).unwrap();
        let b = p.in_band.expect("in band");
        assert!(!b.reagent_reaches_setpoint && p.reagent_flow_l_per_h == 0.0 && p.all_clear(), "{p:?}");
        assert!((b.low_ph - (sp - 0.1)).abs() < 1e-12 && (b.high_ph - (sp + 0.1)).abs() < 1e-12);
        assert!(p.gain_ph_per_l_per_h < 0.0, "acid lowers the pH: {}", p.gain_ph_per_l_per_h);
        // Outside the band it is still unreachable.
        let narrow = DoseRequest::checked(sp, Some((2.0, 0.001)), Some(0.05)).unwrap();
        assert!(matches!(plan(&soft, flow, &acid, &narrow), Err(DoseError::WrongDirection { .. })));
        // Caustic reaches it: a plan that trims, flagged in band, no turndown check even though
        // the trim is below one coarse step.
        let coarse = DoseRequest::checked(sp, Some((2.0, 0.5)), Some(0.2)).unwrap();
        let p = plan(&soft, flow, &caustic(6.0), &coarse).unwrap();
        assert!(p.reagent_flow_l_per_h > 0.0 && p.reagent_flow_l_per_h < 0.5, "{p:?}");
        assert!(p.in_band.is_some_and(|b| b.reagent_reaches_setpoint));
        assert!(!p.checks.iter().any(|c| matches!(c, DoseCheck::BelowTurndown { .. })), "{p:?}");
    }

    #[test]
    fn turndown_and_absurd_flows() {
        let influent = rinse();
        let reagent = caustic(2.0);
        let flow = LitresPerHour::new(1200.0).unwrap();
        let free = plan(&influent, flow, &reagent, &DoseRequest::new(Ph::new(6.3).unwrap())).unwrap();
        let q = free.reagent_flow_l_per_h;
        // Finding 7: a step coarser than the planned flow, or a minimum above it, is turndown.
        // (A band of 7 pH: wide enough for the steepness check, the influent at pH 2.6 outside it.)
        let coarse = DoseRequest::checked(6.3, Some((50.0, 1.2 * q)), Some(7.0)).unwrap();
        let p = plan(&influent, flow, &reagent, &coarse).unwrap();
        let t = p.checks.iter().find_map(|c| match c {
            DoseCheck::BelowTurndown { needed_l_per_h, smallest_l_per_h, .. } => {
                Some((*needed_l_per_h, *smallest_l_per_h))
            }
            _ => None,
        });
        assert_eq!(t, Some((q, 1.2 * q)), "{p:?}");
        let pump = Pump::new(50.0, q / 100.0).unwrap().with_minimum(3.0 * q).unwrap();
        let req = DoseRequest { pump: Some(pump), ..coarse };
        let p = plan(&influent, flow, &reagent, &req).unwrap();
        assert!(
            p.checks.iter().any(
                |c| matches!(c, DoseCheck::BelowTurndown { smallest_l_per_h, .. } if *smallest_l_per_h == 3.0 * q)
            )
        );
        assert_eq!(
            Pump::new(1.0, 0.1).unwrap().with_minimum(2.0),
            Err(InvalidInput { quantity: Quantity::PumpMin, value: 2.0 })
        );
        // Absurd influent flows are refused with their value.
        let tiny = LitresPerHour::new(1e-300).unwrap();
        assert_eq!(
            plan(&influent, tiny, &reagent, &DoseRequest::new(Ph::new(7.0).unwrap())),
            Err(DoseError::Input(InvalidInput { quantity: Quantity::InfluentFlow, value: 1e-300 }))
        );
        // A 1e-12 L/h step: the pH change has the gain's sign and size (no solver noise).
        let fine = DoseRequest::checked(7.0, Some((10.0, 1e-12)), Some(0.3)).unwrap();
        let p = plan(&influent, flow, &reagent, &fine).unwrap();
        let step = p.gain_ph_per_step.unwrap();
        assert!(step > 0.0 && (step - p.gain_ph_per_l_per_h * 1e-12).abs() < 1e-3 * step, "{step}");
    }

    #[test]
    fn steep_remedies_pass_when_applied() {
        // Finding 3: unbuffered acid rinse, 50 % caustic (19 mol/L, from the grade table), a
        // 2 L/h pump with a fine step: a weaker reagent fits the band but not the pump.
        let mut strip: Solution<f64, 6> = Solution::standard();
        strip.add_formula("H2SO4", 0.003).unwrap();
        let flow = LitresPerHour::new(500.0).unwrap();
        let reagent = caustic(19.0);
        let req = DoseRequest::checked(7.0, Some((2.0, 0.001)), Some(0.5)).unwrap();
        let p = plan(&strip, flow, &reagent, &req).unwrap();
        let (f, q, finer) = p
            .checks
            .iter()
            .find_map(|c| match c {
                DoseCheck::TooSteep { dilute_reagent_by, diluted_flow_l_per_h, max_step_l_per_h, .. } => {
                    Some((*dilute_reagent_by, diluted_flow_l_per_h.unwrap(), max_step_l_per_h.unwrap()))
                }
                _ => None,
            })
            .expect("too steep");
        assert!(q > 2.0, "the dilution needs {q} L/h, more than the pump");
        // Applied: the diluted reagent fits the band; only the pump is too small.
        let weaker = caustic(19.0 / f);
        let again = plan(&strip, flow, &weaker, &req).unwrap();
        assert!((again.reagent_flow_l_per_h - q).abs() < 1e-9 * q);
        assert!(again.checks.iter().all(|c| matches!(c, DoseCheck::BeyondPump { .. })), "{again:?}");
        let big = DoseRequest::checked(7.0, Some((q * 1.01, 0.001)), Some(0.5)).unwrap();
        assert!(plan(&strip, flow, &weaker, &big).unwrap().all_clear());
        // The finer step with this reagent passes; 10 % coarser does not.
        let at = |step: f64| {
            plan(&strip, flow, &reagent, &DoseRequest::checked(7.0, Some((2.0, step)), Some(0.5)).unwrap()).unwrap()
        };
        assert!(at(finer).all_clear(), "{:?}", at(finer));
        assert!(!at(finer * 1.1).all_clear());
    }

    #[test]
    fn f32_plan_agrees_with_f64() {
        let mut inf32: Solution<f32, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        inf32.add_formula("NaHCO3", 0.0015).unwrap();
        inf32.add_formula("H2SO4", 0.0022).unwrap();
        let mut r32: Solution<f32, 1> = Solution::standard();
        r32.add_formula("NaOH", 2.0).unwrap();
        let mut inf64: Solution<f64, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        inf64.add_formula("NaHCO3", 0.0015).unwrap();
        inf64.add_formula("H2SO4", 0.0022).unwrap();
        let r64 = caustic(2.0);
        let a =
            plan(&inf32, LitresPerHour::new(1200.0).unwrap(), &r32, &DoseRequest::new(Ph::new(7.5).unwrap())).unwrap();
        let b =
            plan(&inf64, LitresPerHour::new(1200.0).unwrap(), &r64, &DoseRequest::new(Ph::new(7.5).unwrap())).unwrap();
        let rel = (f64::from(a.reagent_flow_l_per_h) - b.reagent_flow_l_per_h).abs() / b.reagent_flow_l_per_h;
        assert!(rel < 1e-3, "f32 flow {} vs f64 {}", a.reagent_flow_l_per_h, b.reagent_flow_l_per_h);
    }
}
