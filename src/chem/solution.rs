//! A solution: fixed-capacity composition (reaction invariants), temperature and activity mode.

use heapless::Vec;

use super::activity::{self, Activity};
use super::substance::{self, Part, Substance, UnknownSubstance};
use super::system::{AcidBaseSystem, MAX_STEPS, SystemError};
use super::water;
use crate::real::Real;
use crate::units::{Celsius, Compact, MAX_CELSIUS, MIN_CELSIUS, TemperatureOutOfRange};

/// Largest total (mol/L) or strong-ion amount (eq/L) a solution accepts. Above it the
/// dilute-solution chemistry here means nothing (and the solver's pH bracket may not hold).
pub const MAX_TOTAL_MOL_PER_L: f64 = 20.0;

/// Why a composition change was refused. The solution is left unchanged.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CompositionError {
    /// An amount was NaN or infinite.
    NonFinite,
    /// An amount was negative (mol/L).
    Negative {
        /// The rejected amount, mol/L.
        mol_per_l: f64,
    },
    /// An amount or resulting total exceeds [`MAX_TOTAL_MOL_PER_L`].
    TooConcentrated {
        /// The rejected total, mol/L.
        mol_per_l: f64,
    },
    /// The solution already holds `capacity` distinct systems.
    CapacityExceeded {
        /// The solution's capacity (its const generic `N`).
        capacity: usize,
    },
    /// The formula or name is not in the substance table.
    UnknownSubstance(UnknownSubstance),
    /// The system description is invalid.
    InvalidSystem(SystemError),
    /// The temperature is outside 0–100 °C.
    Temperature(TemperatureOutOfRange),
    /// A system of this key is already present with other constants (one with given pKa
    /// values, the other with its temperature functions, or given different values).
    ConflictingConstants,
    /// Mixing flows must be finite, ≥ 0 and not both zero (L/h).
    InvalidFlow {
        /// The first (own) flow, L/h.
        first_l_per_h: f64,
        /// The second (other) flow, L/h.
        second_l_per_h: f64,
    },
}

impl core::fmt::Display for CompositionError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::NonFinite => f.write_str("amount is not a finite number"),
            Self::Negative { mol_per_l } => write!(f, "amount {} mol/L is negative", Compact(*mol_per_l)),
            Self::TooConcentrated { mol_per_l } => {
                write!(f, "total {} mol/L exceeds the {MAX_TOTAL_MOL_PER_L} mol/L limit", Compact(*mol_per_l))
            }
            Self::CapacityExceeded { capacity } => {
                write!(f, "solution capacity of {capacity} acid-base systems exceeded")
            }
            Self::UnknownSubstance(e) => core::fmt::Display::fmt(e, f),
            Self::InvalidSystem(e) => core::fmt::Display::fmt(e, f),
            Self::Temperature(e) => core::fmt::Display::fmt(e, f),
            Self::ConflictingConstants => {
                f.write_str("a system of this key is already present with other equilibrium constants")
            }
            Self::InvalidFlow { first_l_per_h, second_l_per_h } => write!(
                f,
                "mixing flows {} and {} L/h must be finite, non-negative and not both zero",
                Compact(*first_l_per_h),
                Compact(*second_l_per_h)
            ),
        }
    }
}

impl core::error::Error for CompositionError {}

impl From<UnknownSubstance> for CompositionError {
    fn from(e: UnknownSubstance) -> Self {
        Self::UnknownSubstance(e)
    }
}
impl From<TemperatureOutOfRange> for CompositionError {
    fn from(e: TemperatureOutOfRange) -> Self {
        Self::Temperature(e)
    }
}

/// One acid–base system in a solution with its total concentration.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Component<R: Real> {
    /// The system (a reference: a solution holds no copy of the names and temperature
    /// functions, which keeps a component at a few words).
    pub system: &'static AcidBaseSystem,
    /// Total concentration of all its forms, mol/L (0–[`MAX_TOTAL_MOL_PER_L`]).
    pub total_mol_per_l: R,
    /// pKa of each step at the solution's temperature (cached; entries past `steps` unused).
    pub(crate) pk: [R; MAX_STEPS],
}

/// A solution of up to `N` acid–base systems plus strong ions, at a temperature.
///
/// The state is the reaction invariants: system totals (mol/L) and the net strong-ion charge
/// (eq/L, strong cations minus strong anions). Mixing adds them flow-weighted. Strong ions
/// also contribute ½·Σc·z² to the ionic strength, which is tracked alongside.
///
/// Memory: `N` × (one pointer and four reals: 20 bytes for `f32` on a 32-bit MCU, 24 on a
/// 64-bit host) plus eight words; no heap. `N` is at most [`MAX_SYSTEMS`].
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Solution<R: Real, const N: usize> {
    components: Vec<Component<R>, N>,
    strong_charge_eq_per_l: R,
    strong_ionic_strength_mol_per_l: R,
    temperature: Celsius<R>,
    activity: Activity,
    pkw: R,
    /// Kw = 10^−pKw (cached with `pkw`).
    kw: R,
    debye_huckel_a: R,
    /// Bit `i` set: component `i`'s pKa values were given ([`Solution::add_system_with_pka`])
    /// and do not follow the temperature.
    given_pka: u32,
}

/// Most acid–base systems one solution can hold (the catalogue has 14).
pub const MAX_SYSTEMS: usize = 32;

fn check_amount<R: Real>(v: R) -> Result<R, CompositionError> {
    let x = v.to_f64();
    if !x.is_finite() {
        Err(CompositionError::NonFinite)
    } else if x < 0.0 {
        Err(CompositionError::Negative { mol_per_l: x })
    } else if x > MAX_TOTAL_MOL_PER_L {
        Err(CompositionError::TooConcentrated { mol_per_l: x })
    } else {
        Ok(v)
    }
}

impl<R: Real, const N: usize> Solution<R, N> {
    /// Pure water at `temperature` with the given activity mode.
    pub fn new(temperature: Celsius<R>, activity: Activity) -> Self {
        const { assert!(N > 0, "a solution needs room for at least one system") };
        const { assert!(N <= MAX_SYSTEMS, "a solution holds at most MAX_SYSTEMS systems") };
        let pkw = water::pkw(temperature);
        Self::empty_with(temperature, activity, (pkw, (-pkw).exp10()), activity::debye_huckel_a(temperature))
    }

    /// An empty solution (no systems, no strong ions) with these constants: `water` is (pKw, Kw).
    fn empty_with(temperature: Celsius<R>, activity: Activity, (pkw, kw): (R, R), debye_huckel_a: R) -> Self {
        Self {
            components: Vec::new(),
            strong_charge_eq_per_l: R::ZERO,
            strong_ionic_strength_mol_per_l: R::ZERO,
            temperature,
            activity,
            pkw,
            kw,
            debye_huckel_a,
            given_pka: 0,
        }
    }

    /// `true` when component `index` holds given pKa values.
    fn has_given_pka(&self, index: usize) -> bool {
        self.given_pka & bit(index) != 0
    }

    /// Pure water at 25 °C with Davies activities.
    pub fn standard() -> Self {
        Self::new(Celsius::standard(), Activity::Davies)
    }

    /// The systems present, in the order they were first added.
    pub fn components(&self) -> &[Component<R>] {
        &self.components
    }

    /// Net strong-ion charge, eq/L (strong cations minus strong anions).
    pub fn strong_charge_eq_per_l(&self) -> R {
        self.strong_charge_eq_per_l
    }

    /// Strong ions' contribution ½·Σc·z² to the ionic strength, mol/L.
    pub fn strong_ionic_strength_mol_per_l(&self) -> R {
        self.strong_ionic_strength_mol_per_l
    }

    /// Temperature.
    pub fn temperature(&self) -> Celsius<R> {
        self.temperature
    }

    /// Activity mode.
    pub fn activity(&self) -> Activity {
        self.activity
    }

    /// Changes the activity mode.
    pub fn set_activity(&mut self, activity: Activity) {
        self.activity = activity;
    }

    /// −log10 Kw at the solution's temperature.
    pub fn pkw(&self) -> R {
        self.pkw
    }

    /// Kw = 10^−pKw at the solution's temperature (cached).
    pub(crate) fn kw(&self) -> R {
        self.kw
    }

    /// Debye–Hückel A at the solution's temperature.
    pub fn debye_huckel_a(&self) -> R {
        self.debye_huckel_a
    }

    /// Total of the system with `key`, mol/L (0 when absent).
    pub fn total_of(&self, key: &str) -> R {
        self.components.iter().find(|c| c.system.key == key).map_or(R::ZERO, |c| c.total_mol_per_l)
    }

    /// An empty solution (no systems, no strong ions) with this one's temperature, activity
    /// mode and water constants.
    fn empty_like(&self) -> Self {
        Self::empty_with(self.temperature, self.activity, (self.pkw, self.kw), self.debye_huckel_a)
    }

    /// Changes the temperature and recomputes every temperature-dependent constant (nothing to
    /// do when it is the temperature the solution already has).
    pub fn set_temperature(&mut self, temperature: Celsius<R>) {
        if temperature.celsius() == self.temperature.celsius() {
            return;
        }
        self.temperature = temperature;
        self.pkw = water::pkw(temperature);
        self.kw = (-self.pkw).exp10();
        self.debye_huckel_a = activity::debye_huckel_a(temperature);
        let tk = temperature.kelvin();
        let given = self.given_pka;
        for (i, c) in self.components.iter_mut().enumerate() {
            if given & bit(i) == 0 {
                c.pk = pk_at(c.system, tk);
            }
        }
    }

    /// Adds `total_mol_per_l` of an acid–base system's total (merged with a system of the
    /// same key). The strong-ion charge does not change, so this adds the system as an
    /// electrically neutral compound whose protons the charge balance accounts for: CO2 for
    /// carbonate, NH3 for ammonium, H2SO4 for sulfate, H3PO4 for phosphate. Add strong ions
    /// (or use [`Solution::add_substance`]) for salts.
    pub fn add_system(&mut self, system: &'static AcidBaseSystem, total_mol_per_l: R) -> Result<(), CompositionError> {
        system.validate().map_err(CompositionError::InvalidSystem)?;
        self.add_component(system, total_mol_per_l, None)
    }

    /// Adds a system whose step constants are given here instead of by its temperature
    /// functions: `pka[j]` is step `j + 1`'s pKa (entries past the system's steps are ignored),
    /// held at every temperature. For constants found by fitting a titration curve, or taken
    /// from a source at one temperature. Merges with a system of the same key only when that
    /// one was added with the same pKa values; otherwise [`CompositionError::ConflictingConstants`].
    pub fn add_system_with_pka(
        &mut self,
        system: &'static AcidBaseSystem,
        pka: [R; MAX_STEPS],
        total_mol_per_l: R,
    ) -> Result<(), CompositionError> {
        system.validate().map_err(CompositionError::InvalidSystem)?;
        for (step, pk) in (0u8..).zip(pka.iter()).take(system.step_count()) {
            if !pk.to_f64().is_finite() {
                return Err(CompositionError::InvalidSystem(SystemError::NonFiniteConstant(step)));
            }
        }
        self.add_component(system, total_mol_per_l, Some(pka))
    }

    /// Adds a validated system: `fixed` holds given pKa values, `None` the temperature's.
    fn add_component(
        &mut self,
        system: &'static AcidBaseSystem,
        total_mol_per_l: R,
        fixed: Option<[R; MAX_STEPS]>,
    ) -> Result<(), CompositionError> {
        self.add_component_cached(system, total_mol_per_l, fixed, None)
    }

    /// [`Self::add_component`] with, in `cached`, the system's pKa values at this solution's
    /// temperature when the caller already holds them (used instead of the temperature
    /// functions for a system that follows the temperature).
    fn add_component_cached(
        &mut self,
        system: &'static AcidBaseSystem,
        total_mol_per_l: R,
        fixed: Option<[R; MAX_STEPS]>,
        cached: Option<[R; MAX_STEPS]>,
    ) -> Result<(), CompositionError> {
        let amount = check_amount(total_mol_per_l)?;
        if let Some(i) = self.components.iter().position(|c| c.system.key == system.key) {
            let given = self.has_given_pka(i);
            let Some(c) = self.components.get_mut(i) else { return Err(CompositionError::ConflictingConstants) };
            let same_constants = match fixed {
                None => !given,
                Some(pka) => given && c.pk == pka,
            };
            if !same_constants {
                return Err(CompositionError::ConflictingConstants);
            }
            c.total_mol_per_l = check_amount(c.total_mol_per_l + amount)?;
            return Ok(());
        }
        let component = Component {
            system,
            total_mol_per_l: amount,
            pk: fixed.or(cached).unwrap_or_else(|| pk_at(system, self.temperature.kelvin())),
        };
        let index = self.components.len();
        self.components.push(component).map_err(|_| CompositionError::CapacityExceeded { capacity: N })?;
        if fixed.is_some() {
            self.given_pka |= bit(index);
        }
        Ok(())
    }

    /// Adds `mol_per_l` of strong ions of charge `charge` (e.g. +1 for Na⁺, −1 for Cl⁻).
    pub fn add_strong_ion(&mut self, charge: i8, mol_per_l: R) -> Result<(), CompositionError> {
        let amount = check_amount(mol_per_l)?;
        let z = R::from_i32(i32::from(charge));
        let q = self.strong_charge_eq_per_l + z * amount;
        let i = self.strong_ionic_strength_mol_per_l + R::from_f64(0.5) * z * z * amount;
        if q.abs().to_f64() > MAX_TOTAL_MOL_PER_L || i.to_f64() > MAX_TOTAL_MOL_PER_L {
            return Err(CompositionError::TooConcentrated { mol_per_l: q.to_f64() });
        }
        self.strong_charge_eq_per_l = q;
        self.strong_ionic_strength_mol_per_l = i;
        Ok(())
    }

    /// Dissolves `mol_per_l` of a substance. On error the solution is unchanged.
    pub fn add_substance(&mut self, substance: &Substance, mol_per_l: R) -> Result<(), CompositionError> {
        let amount = check_amount(mol_per_l)?;
        let mut next = self.clone();
        for part in substance.parts {
            match *part {
                Part::Strong(ion, count) => {
                    next.add_strong_ion(ion.charge(), amount * R::from_i32(i32::from(count)))?
                }
                Part::System(system, count) => next.add_system(system, amount * R::from_i32(i32::from(count)))?,
            }
        }
        *self = next;
        Ok(())
    }

    /// Dissolves `mol_per_l` of the substance with this formula or name (see [`substance::find`]).
    pub fn add_formula(&mut self, formula_or_name: &str, mol_per_l: R) -> Result<(), CompositionError> {
        let s = substance::find(formula_or_name)?;
        self.add_substance(s, mol_per_l)
    }

    /// Mixes `self` at `flow_self_l_per_h` with `other` at `flow_other_l_per_h`: totals and
    /// strong ions are flow-weighted averages (reaction invariants are conserved). The result
    /// takes `self`'s activity mode and the flow-weighted temperature (no heat of reaction).
    pub fn mix<const M: usize>(
        &self,
        flow_self_l_per_h: R,
        other: &Solution<R, M>,
        flow_other_l_per_h: R,
    ) -> Result<Self, CompositionError> {
        let (a, b) = (flow_self_l_per_h.to_f64(), flow_other_l_per_h.to_f64());
        if !(a.is_finite() && b.is_finite()) || a < 0.0 || b < 0.0 || a + b <= 0.0 {
            return Err(CompositionError::InvalidFlow { first_l_per_h: a, second_l_per_h: b });
        }
        let total = flow_self_l_per_h + flow_other_l_per_h;
        let (wa, wb) = (flow_self_l_per_h / total, flow_other_l_per_h / total);
        // A flow-weighted mean of two valid temperatures is valid; clamping removes only the
        // rounding of the mean (two 100 °C streams can average to 100.00000000000001).
        // Two streams at the same temperature mix at that temperature, and the result takes the
        // constants both already hold (pKw, Debye–Hückel A, every step's pKa) instead of
        // computing them again: the same numbers, without the temperature functions (on a
        // board without a double-precision FPU those dominate a control tick).
        let same_temperature = self.temperature.celsius() == other.temperature.celsius();
        let mut out = if same_temperature {
            self.empty_like()
        } else {
            let mean = self.temperature.celsius() * wa + other.temperature.celsius() * wb;
            Self::new(Celsius::new(mean.max(R::from_f64(MIN_CELSIUS)).min(R::from_f64(MAX_CELSIUS)))?, self.activity)
        };
        for (i, c) in self.components.iter().enumerate() {
            let cached = same_temperature.then_some(c.pk);
            out.add_component_cached(c.system, c.total_mol_per_l * wa, self.has_given_pka(i).then_some(c.pk), cached)?;
        }
        for (i, c) in other.components.iter().enumerate() {
            let cached = same_temperature.then_some(c.pk);
            out.add_component_cached(c.system, c.total_mol_per_l * wb, other.has_given_pka(i).then_some(c.pk), cached)?;
        }
        out.strong_charge_eq_per_l = self.strong_charge_eq_per_l * wa + other.strong_charge_eq_per_l * wb;
        out.strong_ionic_strength_mol_per_l =
            self.strong_ionic_strength_mol_per_l * wa + other.strong_ionic_strength_mol_per_l * wb;
        Ok(out)
    }

    /// Cached pKa of step `step` (1-based) of component `index` at the solution's temperature.
    pub fn component_pka(&self, index: usize, step: usize) -> Option<R> {
        let c = self.components.get(index)?;
        if step == 0 || step > c.system.step_count() {
            return None;
        }
        c.pk.get(step - 1).copied()
    }
}

/// The mask bit of component `index` (0 past [`MAX_SYSTEMS`], which `new` rules out).
fn bit(index: usize) -> u32 {
    u32::try_from(index).ok().and_then(|i| 1u32.checked_shl(i)).unwrap_or(0)
}

fn pk_at<R: Real>(system: &AcidBaseSystem, kelvin: R) -> [R; MAX_STEPS] {
    let mut out = [R::ZERO; MAX_STEPS];
    for (o, k) in out.iter_mut().zip(system.log_k.iter()).take(system.step_count()) {
        *o = k.pk(kelvin);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::catalogue;

    type Sol = Solution<f64, 4>;

    #[test]
    fn substances_map_to_totals_and_strong_charge() {
        let mut s = Sol::standard();
        s.add_formula("Na2HPO4", 0.01).unwrap();
        s.add_formula("NaHCO3", 0.002).unwrap();
        s.add_formula("HCl", 0.001).unwrap();
        assert!((s.total_of("phosphate") - 0.01).abs() < 1e-15);
        assert!((s.total_of("carbonate") - 0.002).abs() < 1e-15);
        assert!((s.strong_charge_eq_per_l() - (0.02 + 0.002 - 0.001)).abs() < 1e-15);
        // ½Σcz²: Na 0.022·1, Cl 0.001·1.
        assert!((s.strong_ionic_strength_mol_per_l() - 0.5 * 0.023).abs() < 1e-15);
    }

    #[test]
    fn errors_leave_the_solution_unchanged() {
        let mut s: Solution<f64, 1> = Solution::standard();
        s.add_formula("NaHCO3", 0.002).unwrap();
        let before = s.clone();
        assert_eq!(s.add_formula("Na2HPO4", 0.01), Err(CompositionError::CapacityExceeded { capacity: 1 }));
        assert_eq!(s, before);
        assert_eq!(s.add_formula("NaOH", -1.0), Err(CompositionError::Negative { mol_per_l: -1.0 }));
        assert_eq!(s.add_formula("NaOH", f64::NAN), Err(CompositionError::NonFinite));
        assert!(matches!(s.add_formula("Unobtainium", 1.0), Err(CompositionError::UnknownSubstance(_))));
        assert!(matches!(s.add_formula("NaOH", 25.0), Err(CompositionError::TooConcentrated { .. })));
        assert_eq!(s, before);
    }

    #[test]
    fn mixing_conserves_totals() {
        let mut a = Sol::standard();
        a.add_formula("NaHCO3", 0.004).unwrap();
        let mut b = Sol::standard();
        b.add_formula("H3PO4", 0.01).unwrap();
        b.add_formula("NaOH", 0.005).unwrap();
        let m = a.mix(300.0, &b, 100.0).unwrap();
        assert!((m.total_of("carbonate") - 0.003).abs() < 1e-15);
        assert!((m.total_of("phosphate") - 0.0025).abs() < 1e-15);
        assert!((m.strong_charge_eq_per_l() - (0.75 * 0.004 + 0.25 * 0.005)).abs() < 1e-15);
        assert_eq!(a.mix(0.0, &b, 0.0), Err(CompositionError::InvalidFlow { first_l_per_h: 0.0, second_l_per_h: 0.0 }));
        assert_eq!(
            a.mix(-1.0, &b, 1.0),
            Err(CompositionError::InvalidFlow { first_l_per_h: -1.0, second_l_per_h: 1.0 })
        );
    }

    #[test]
    fn mixing_at_one_temperature_keeps_the_constants_it_would_compute() {
        // Both streams at 13.7 °C: the mix takes their cached constants; they must be the very
        // numbers a solution built at that temperature computes, whatever the flows (f32 too).
        fn check<R: Real>() {
            let t = Celsius::new(R::from_f64(13.7)).unwrap();
            let mut a: Solution<R, 4> = Solution::new(t, Activity::Davies);
            a.add_formula("NaHCO3", R::from_f64(0.004)).unwrap();
            a.add_system_with_pka(&catalogue::ACETATE, [R::from_f64(4.9), R::ZERO, R::ZERO], R::from_f64(0.001))
                .unwrap();
            let mut b: Solution<R, 4> = Solution::new(t, Activity::Davies);
            b.add_formula("H3PO4", R::from_f64(0.01)).unwrap();
            b.add_formula("NaHCO3", R::from_f64(0.001)).unwrap();
            for (qa, qb) in [(300.0, 100.0), (0.3, 0.7), (1.0, 1e-9), (7.0, 3.0)] {
                let m = a.mix(R::from_f64(qa), &b, R::from_f64(qb)).unwrap();
                let mut fresh: Solution<R, 4> = Solution::new(t, Activity::Davies);
                fresh.add_system(&catalogue::CARBONATE, R::ONE).unwrap();
                fresh.add_system(&catalogue::PHOSPHATE, R::ONE).unwrap();
                assert!(m.temperature().celsius() == t.celsius());
                assert!(m.pkw() == fresh.pkw() && m.kw() == fresh.kw());
                assert!(m.debye_huckel_a() == fresh.debye_huckel_a());
                assert_eq!(m.component_pka(0, 1), fresh.component_pka(0, 1));
                assert_eq!(m.component_pka(0, 2), fresh.component_pka(0, 2));
                assert_eq!(m.component_pka(2, 3), fresh.component_pka(1, 3));
                // The given pKa stays given (and does not follow a later temperature change).
                assert_eq!(m.component_pka(1, 1), Some(R::from_f64(4.9)));
                let mut warmer = m.clone();
                warmer.set_temperature(Celsius::new(R::from_f64(30.0)).unwrap());
                assert_eq!(warmer.component_pka(1, 1), Some(R::from_f64(4.9)));
                assert!(warmer.component_pka(0, 1) != m.component_pka(0, 1));
            }
            // Setting the temperature a solution already has changes nothing.
            let mut same = a.clone();
            same.set_temperature(t);
            assert_eq!(same, a);
        }
        check::<f64>();
        check::<f32>();
    }

    #[test]
    fn temperature_updates_cached_constants() {
        let mut s = Sol::standard();
        s.add_system(&catalogue::AMMONIUM, 0.001).unwrap();
        let pk25 = s.component_pka(0, 1).unwrap();
        s.set_temperature(Celsius::new(40.0).unwrap());
        assert!(s.component_pka(0, 1).unwrap() < pk25 - 0.3);
        assert!(s.pkw() < 13.6);
        assert_eq!(s.component_pka(0, 2), None);
        assert_eq!(s.component_pka(5, 1), None);
    }

    #[test]
    fn given_pka_values_hold_at_every_temperature_and_through_mixing() {
        let mut s = Sol::standard();
        s.add_system(&catalogue::AMMONIUM, 0.001).unwrap();
        s.add_system_with_pka(&catalogue::FORMATE, [3.9, 0.0, 0.0], 0.002).unwrap();
        // The same key with the same values merges; with other values or as a catalogue
        // system it is refused and the solution is unchanged.
        s.add_system_with_pka(&catalogue::FORMATE, [3.9, 0.0, 0.0], 0.001).unwrap();
        assert!((s.total_of("formate") - 0.003).abs() < 1e-15);
        let before = s.clone();
        assert_eq!(
            s.add_system_with_pka(&catalogue::FORMATE, [3.8, 0.0, 0.0], 0.001),
            Err(CompositionError::ConflictingConstants)
        );
        assert_eq!(s.add_system(&catalogue::FORMATE, 0.001), Err(CompositionError::ConflictingConstants));
        assert_eq!(s, before);
        let nh4 = s.component_pka(0, 1).unwrap();
        s.set_temperature(Celsius::new(45.0).unwrap());
        assert_eq!(s.component_pka(1, 1), Some(3.9));
        assert!(s.component_pka(0, 1).unwrap() < nh4 - 0.5, "the catalogue system follows the temperature");
        let mut other = Sol::standard();
        other.add_system(&catalogue::CARBONATE, 0.002).unwrap();
        let m = other.mix(1.0, &s, 1.0).unwrap();
        assert_eq!(m.component_pka(2, 1), Some(3.9));
        let mut m2 = m.clone();
        m2.set_temperature(Celsius::new(5.0).unwrap());
        assert_eq!(m2.component_pka(2, 1), Some(3.9));
        assert_ne!(m2.component_pka(0, 1), m.component_pka(0, 1));
    }

    fn mixes_at_100_c<R: Real>() {
        // Issue reproduction: 2 mM NaHCO3 at 100 °C with 1 M NaOH at 100 °C, flows 0.01–10 L/h.
        let t = Celsius::new(R::from_f64(100.0)).unwrap();
        let mut water: Solution<R, 4> = Solution::new(t, Activity::Ideal);
        water.add_formula("NaHCO3", R::from_f64(0.002)).unwrap();
        let mut caustic: Solution<R, 4> = Solution::new(t, Activity::Ideal);
        caustic.add_formula("NaOH", R::from_f64(1.0)).unwrap();
        for k in 0..=1000 {
            let flow = 0.01 * 1000f64.powf(f64::from(k) / 1000.0);
            let m = water.mix(R::from_f64(100.0), &caustic, R::from_f64(flow));
            assert!(m.is_ok(), "{} at {flow} L/h: {m:?}", R::NAME);
            assert!(m.unwrap().temperature().celsius().to_f64() <= 100.0);
        }
        // Two 100 °C streams of the same water.
        assert!(water.mix(R::from_f64(0.3), &water, R::from_f64(0.7)).is_ok());
    }

    #[test]
    fn mixing_streams_at_the_top_of_the_range_stays_in_range() {
        mixes_at_100_c::<f64>();
        mixes_at_100_c::<f32>();
    }
}
