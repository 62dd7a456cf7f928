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

use crate::chem::activity::Activity;
use crate::chem::{CompositionError, Equilibrium, Solution, SolveError};
use crate::real::Real;

/// Most ionic-strength rounds of one dose computation.
pub const MAX_DOSE_ROUNDS: u32 = 12;
/// Setpoint offsets scanned (each side, 0.1 pH apart) when looking for a controllable setpoint.
pub const SETPOINT_SCAN_STEPS: u32 = 20;
/// Spacing of that scan, pH.
pub const SETPOINT_SCAN_SPACING_PH: f64 = 0.1;

/// A metering pump.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pump<R: Real> {
    /// Highest flow, L/h (> 0).
    pub max_l_per_h: R,
    /// Smallest flow change the pump can make (stroke/step resolution), L/h (> 0).
    pub step_l_per_h: R,
}

/// What to plan for.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DoseRequest<R: Real> {
    /// Target pH (0–14).
    pub setpoint_ph: R,
    /// The pump, if known (enables the capacity and steepness checks).
    pub pump: Option<Pump<R>>,
    /// Full width of the control band, pH (> 0); with a pump, enables the steepness check.
    pub band_ph: Option<R>,
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
        /// Dilute the reagent by this factor (within 5 %) to make one step fit the band (a real
        /// solve: a step of step/factor L/h of this reagent at the planned flow moves the pH by
        /// no more than the band). Capped at [`MAX_DILUTION`].
        dilute_reagent_by: R,
        /// Nearest setpoint (within ±2 pH, 0.1 apart) where one step fits the band, if any.
        nearest_controllable_setpoint_ph: Option<R>,
    },
}

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
    /// Ionic-strength rounds used (1 in ideal mode).
    pub rounds: u32,
    /// Checks that failed (empty when all is well).
    pub checks: Vec<DoseCheck<R>, 2>,
}

impl<R: Real> DosePlan<R> {
    /// `true` when no check failed.
    pub fn all_clear(&self) -> bool {
        self.checks.is_empty()
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
        /// The pH an unlimited dose approaches (the reagent's own pH, ideal activities).
        limit_ph: f64,
        /// The setpoint.
        setpoint_ph: f64,
    },
    /// Setpoint not finite or outside 0–14.
    InvalidSetpoint,
    /// Influent flow not finite or ≤ 0 (or above [`crate::titration::stream::MAX_FLOW_L_PER_H`]).
    InvalidFlow,
    /// Pump maximum or step not finite or ≤ 0, or the step larger than the maximum.
    InvalidPump,
    /// Control band not finite or ≤ 0.
    InvalidBand,
    /// A composition error (e.g. the mixture's capacity `N` cannot hold the reagent's systems).
    Composition(CompositionError),
    /// Solving the influent or the reagent failed.
    Solve(SolveError),
    /// The ionic-strength refinement did not settle in [`MAX_DOSE_ROUNDS`].
    NotConverged,
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
            Self::InvalidSetpoint => f.write_str("setpoint must be a pH within 0-14"),
            Self::InvalidFlow => f.write_str("influent flow must be finite and positive"),
            Self::InvalidPump => f.write_str(
                "pump maximum and step must be finite and positive, with the step no larger than the maximum",
            ),
            Self::InvalidBand => f.write_str("control band must be finite and positive"),
            Self::Composition(e) => core::fmt::Display::fmt(e, f),
            Self::Solve(e) => core::fmt::Display::fmt(e, f),
            Self::NotConverged => f.write_str("dose refinement for activity did not converge"),
        }
    }
}

impl core::error::Error for DoseError {}

fn positive_finite<R: Real>(v: R) -> bool {
    let x = v.to_f64();
    x.is_finite() && x > 0.0
}

/// The core of the closed form at one setpoint; no pump or band checks.
struct Core<R: Real> {
    flow: R,
    beta: R,
    ionic: R,
    gain: R,
    rounds: u32,
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
    /// The closed-form flow for setpoint `x`, refined for activity in at most
    /// [`MAX_DOSE_ROUNDS`] rounds.
    fn core(&self, x: R) -> Result<Core<R>, DoseError> {
        let (influent, q_in, reagent) = (self.influent, self.influent_flow_l_per_h, self.reagent);
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
                return Err(self.unreachable_reason(x));
            };
            let mixture = influent.mix(q_in, reagent, flow).map_err(DoseError::Composition)?;
            let e = mixture.evaluate(x, af);
            let settled = match influent.activity() {
                Activity::Ideal => true,
                Activity::Davies => (e.ionic_strength - ionic).abs() <= R::IONIC_STRENGTH_TOLERANCE * e.ionic_strength,
            };
            if settled {
                let gain = if e.beta > R::ZERO { gr / ((q_in + flow) * e.beta) } else { R::ZERO };
                return Ok(Core { flow, beta: e.beta, ionic: e.ionic_strength, gain, rounds: round });
            }
            ionic = e.ionic_strength;
        }
        Err(DoseError::NotConverged)
    }

    /// Which way is the setpoint unreachable? Compares the reagent's own pull at the influent's
    /// pH; the limit of an unlimited dose is the reagent's own pH (ideal activities).
    fn unreachable_reason(&self, x: R) -> DoseError {
        let setpoint_ph = x.to_f64();
        let influent_ph = self.influent_eq.ph;
        let reagent_pushes_up = self.reagent.evaluate(influent_ph, R::ZERO).excess > R::ZERO;
        if reagent_pushes_up != (x > influent_ph) {
            return DoseError::WrongDirection { influent_ph: influent_ph.to_f64(), setpoint_ph };
        }
        let mut own = self.reagent.clone();
        own.set_activity(Activity::Ideal);
        match own.solve() {
            Ok(eq) => DoseError::BeyondReagent { limit_ph: eq.ph.to_f64(), setpoint_ph },
            Err(e) => DoseError::Solve(e),
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
                    .filter(|c| c.flow <= pump.max_l_per_h)
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
/// must fit in capacity `N`: give the influent room for the reagent's systems. Worst case:
/// [`MAX_DOSE_ROUNDS`] × (two charge-balance evaluations and one mix) plus one influent solve,
/// and, only when the steepness check fails, up to 2·[`SETPOINT_SCAN_STEPS`] more such plans.
pub fn plan<R: Real, const N: usize, const M: usize>(
    influent: &Solution<R, N>,
    influent_flow_l_per_h: R,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
) -> Result<DosePlan<R>, DoseError> {
    let x = request.setpoint_ph;
    let xf = x.to_f64();
    if !(xf.is_finite() && (0.0..=14.0).contains(&xf)) {
        return Err(DoseError::InvalidSetpoint);
    }
    if !positive_finite(influent_flow_l_per_h) || influent_flow_l_per_h.to_f64() > super::stream::MAX_FLOW_L_PER_H {
        return Err(DoseError::InvalidFlow);
    }
    if !request.pump.is_none_or(|p| {
        positive_finite(p.max_l_per_h) && positive_finite(p.step_l_per_h) && p.step_l_per_h <= p.max_l_per_h
    }) {
        return Err(DoseError::InvalidPump);
    }
    if !request.band_ph.is_none_or(positive_finite) {
        return Err(DoseError::InvalidBand);
    }
    let mut reagent = reagent.clone();
    reagent.set_temperature(influent.temperature());
    let influent_eq = influent.solve().map_err(DoseError::Solve)?;
    let m = Mixing { influent, influent_flow_l_per_h, influent_eq, reagent: &reagent };
    let core = m.core(x)?;

    let mut checks = Vec::new();
    let mut gain_ph_per_step = None;
    if let Some(pump) = request.pump {
        if core.flow > pump.max_l_per_h {
            let _ = checks.push(DoseCheck::BeyondPump { needed_l_per_h: core.flow, max_l_per_h: pump.max_l_per_h });
        }
        let step = m.step_delta_ph(x, core.flow, pump.step_l_per_h)?;
        gain_ph_per_step = Some(step);
        if let Some(band) = request.band_ph
            && step.abs() > band
        {
            let _ = checks.push(DoseCheck::TooSteep {
                step_delta_ph: step.abs(),
                band_ph: band,
                dilute_reagent_by: m.dilution_needed(x, core.flow, pump.step_l_per_h, band),
                nearest_controllable_setpoint_ph: m.nearest_controllable(x, pump, band),
            });
        }
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
        checks,
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
            let req = DoseRequest { setpoint_ph: sp, pump: None, band_ph: None };
            let p = plan(&influent, 1200.0, &reagent, &req).unwrap();
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
        let req = DoseRequest { setpoint_ph: 6.8, pump: None, band_ph: None };
        let p = plan(&influent, 1200.0, &reagent, &req).unwrap();
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
        let wrong = plan(&influent, 1200.0, &reagent, &DoseRequest { setpoint_ph: 2.0, pump: None, band_ph: None });
        assert!(matches!(wrong, Err(DoseError::WrongDirection { .. })), "{wrong:?}");
        let beyond = plan(&influent, 1200.0, &reagent, &DoseRequest { setpoint_ph: 12.5, pump: None, band_ph: None });
        match beyond {
            Err(DoseError::BeyondReagent { limit_ph, .. }) => {
                // 0.01 M NaOH at the influent's 14 °C: pH = pKw(14 °C) − 2 (ideal).
                let expect = crate::chem::water::pkw(Celsius::new(14.0).unwrap()) - 2.0;
                assert!((limit_ph - expect).abs() < 0.01, "{limit_ph} vs {expect}");
            }
            other => panic!("{other:?}"),
        }
        assert_eq!(
            plan(&influent, 1200.0, &reagent, &DoseRequest { setpoint_ph: f64::NAN, pump: None, band_ph: None }),
            Err(DoseError::InvalidSetpoint)
        );
        let bad_pump =
            DoseRequest { setpoint_ph: 7.0, pump: Some(Pump { max_l_per_h: 1.0, step_l_per_h: 2.0 }), band_ph: None };
        assert_eq!(plan(&influent, 1200.0, &reagent, &bad_pump), Err(DoseError::InvalidPump));
        let bad_band = DoseRequest { setpoint_ph: 7.0, pump: None, band_ph: Some(0.0) };
        assert_eq!(plan(&influent, 1200.0, &reagent, &bad_band), Err(DoseError::InvalidBand));
        let ok = DoseRequest { setpoint_ph: 7.0, pump: None, band_ph: None };
        assert_eq!(plan(&influent, -5.0, &reagent, &ok), Err(DoseError::InvalidFlow));
    }

    #[test]
    fn pump_capacity_and_steepness_checks() {
        // Stripping-line rinse: sulfuric acid and salt, no carbonate: almost no buffer at pH 7.
        let mut influent: Solution<f64, 6> = Solution::new(Celsius::new(14.0).unwrap(), Activity::Davies);
        influent.add_formula("H2SO4", 0.002).unwrap();
        influent.add_formula("NaCl", 0.001).unwrap();
        let reagent = caustic(6.25);
        // Neutral setpoint on unbuffered water with strong caustic and a coarse pump: steep.
        let req = DoseRequest {
            setpoint_ph: 7.0,
            pump: Some(Pump { max_l_per_h: 0.5, step_l_per_h: 0.01 }),
            band_ph: Some(0.3),
        };
        let p = plan(&influent, 1200.0, &reagent, &req).unwrap();
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
        // The dilution factor is real: a step of step/factor L/h fits the band, and one of
        // step/(0.9·factor) does not.
        let step_with = |q: f64| {
            let r = {
                let mut r = reagent.clone();
                r.set_temperature(influent.temperature());
                r
            };
            let base = influent.mix(1200.0, &r, needed).unwrap();
            let moved = influent.mix(1200.0, &r, needed + q).unwrap();
            (moved.solve().unwrap().ph - base.solve().unwrap().ph).abs()
        };
        assert!(step_with(0.01 / dilute) <= 0.3 + 1e-9, "{}", step_with(0.01 / dilute));
        assert!(step_with(0.01 / (0.9 * dilute)) > 0.3, "{}", step_with(0.01 / (0.9 * dilute)));
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
        let fine = DoseRequest {
            setpoint_ph: 8.0,
            pump: Some(Pump { max_l_per_h: 5.0, step_l_per_h: 0.002 }),
            band_ph: Some(0.3),
        };
        let p = plan(&weak, 1200.0, &reagent, &fine).unwrap();
        let nearest = p.checks.iter().find_map(|c| match c {
            DoseCheck::TooSteep { nearest_controllable_setpoint_ph, .. } => *nearest_controllable_setpoint_ph,
            _ => None,
        });
        let sp = nearest.expect("a controllable setpoint nearby");
        let again = plan(&weak, 1200.0, &reagent, &DoseRequest { setpoint_ph: sp, ..fine }).unwrap();
        assert!(again.gain_ph_per_step.unwrap().abs() <= 0.3 && again.all_clear(), "{again:?}");
        // A buffered influent with a big pump and a fine step is all clear.
        let ok = DoseRequest {
            setpoint_ph: 6.3,
            pump: Some(Pump { max_l_per_h: 20.0, step_l_per_h: 1e-4 }),
            band_ph: Some(0.3),
        };
        assert!(plan(&rinse(), 1200.0, &reagent, &ok).unwrap().all_clear());
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
        let a = plan(&inf32, 1200.0, &r32, &DoseRequest { setpoint_ph: 7.5, pump: None, band_ph: None }).unwrap();
        let b = plan(&inf64, 1200.0, &r64, &DoseRequest { setpoint_ph: 7.5, pump: None, band_ph: None }).unwrap();
        let rel = (f64::from(a.reagent_flow_l_per_h) - b.reagent_flow_l_per_h).abs() / b.reagent_flow_l_per_h;
        assert!(rel < 1e-3, "f32 flow {} vs f64 {}", a.reagent_flow_l_per_h, b.reagent_flow_l_per_h);
    }
}
