//! Hazards of a dose that no pH check sees: a gas driven out of the influent by acid, and a
//! reagent stored below the temperature where it crystallises or freezes.
//!
//! **Gas release.** Acid dosed onto water that carries hypochlorite makes chlorine (Cl2(aq),
//! then Cl2 gas); onto water that carries sulfide it makes hydrogen sulfide (H2S). Both are
//! toxic at low concentrations in air. The check computes, from the speciation, the pH below
//! which the gas-forming species exceeds [`GAS_FRACTION_LIMIT`] of its total, and reports a
//! [`GasRelease`] when acid is dosed to a setpoint below it.
//!
//! *The threshold is our convention* (common practice, no source): "significant" is defined as
//! the gas-forming species being more than 1 % of the total (free chlorine, or total sulfide).
//! It is **not** an exposure limit: an open tank above that pH still releases some gas, and the
//! air concentration depends on the tank, its ventilation and the amounts, which this model does
//! not know. Concentrated acid also makes a low pH locally at the injection point whatever the
//! setpoint; mixing there is the designer's job. Local codes, the SDS and licensed practice
//! govern (SAFETY.md).
//!
//! - Chlorine: Cl2(aq) + H2O ⇌ HOCl + H⁺ + Cl⁻, K_h = a(HOCl)·a(H⁺)·a(Cl⁻)/a(Cl2); with
//!   HOCl ⇌ H⁺ + OCl⁻ (Ka from the catalogue's hypochlorite, Morris 1966) the fraction of free
//!   chlorine present as Cl2(aq) at hydrogen-ion activity h and chloride c is
//!   f = r/(1 + r + Ka/h), r = h·c/K_h. It depends on the chloride: the mixture's chloride is
//!   bounded from above by its strong ions (see [`chloride_upper_bound_mol_per_l`]) and taken at
//!   least equal to the hypochlorite. The activity coefficient of chloride is taken as 1, which
//!   overstates Cl2 (on the safe side).
//! - Hydrogen sulfide: H2S ⇌ H⁺ + HS⁻ (Ka1 from the catalogue's sulfide, Millero 1988), the
//!   fraction as H2S is 1/(1 + Ka1/h); activity coefficients taken as 1 (overstates H2S).
//!
//! **Crystallisation.** [`CRYSTALLISATION`] lists the temperature below which common reagent
//! grades crystallise or freeze, with sources; [`crystallises`] compares a stored reagent's
//! temperature with it.
//!
//! No loops but the scan of the fixed table (at most [`CRYSTALLISATION`]`.len()` rows); all
//! arithmetic in `f64` (constants, as the catalogue's) and returned in `R`.

use crate::chem::Solution;
use crate::chem::catalogue::{HYPOCHLORITE, SULFIDE};
use crate::real::Real;

/// Fraction of the total (free chlorine, or total sulfide) above which the gas-forming species
/// is called significant: 1 %. Our convention (common practice, no source); see the module docs.
pub const GAS_FRACTION_LIMIT: f64 = 0.01;

/// Chlorine hydrolysis constant K_h = a(HOCl)·a(H⁺)·a(Cl⁻)/a(Cl2(aq)), (mol/L)², at 10 and
/// 30 °C in pure water: 2.2e-4 and 4.4e-4. Source: ECHA REACH registration dossier for
/// chlorine, "Dissociation constant" (key values 2.2e-4 / 3.2e-4 / 4.4e-4 at 10 / 20 / 30 °C;
/// checked, read in the dossier). Between and beyond the two points log10 K_h is taken linear
/// in 1/T (van 't Hoff, ΔH° ≈ +24.7 kJ/mol, calc); the dossier's 20 °C value is reproduced
/// within 2 % (a unit test). Beyond 10–30 °C this is an extrapolation.
pub const CHLORINE_HYDROLYSIS_POINTS: [(f64, f64); 2] = [(10.0, 2.2e-4), (30.0, 4.4e-4)];

/// A gas that acid can drive out of the influent.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Gas {
    /// Chlorine, Cl2, from hypochlorite (HOCl/OCl⁻) and chloride.
    Chlorine,
    /// Hydrogen sulfide, H2S, from sulfide (HS⁻).
    HydrogenSulfide,
}

impl Gas {
    /// The gas's formula ("Cl2", "H2S").
    pub const fn formula(self) -> &'static str {
        match self {
            Self::Chlorine => "Cl2",
            Self::HydrogenSulfide => "H2S",
        }
    }

    /// The gas's name ("chlorine", "hydrogen sulfide").
    pub const fn name(self) -> &'static str {
        match self {
            Self::Chlorine => "chlorine",
            Self::HydrogenSulfide => "hydrogen sulfide",
        }
    }

    /// What in the influent releases it ("hypochlorite", "sulfide"): the catalogue key.
    pub const fn from_system(self) -> &'static str {
        match self {
            Self::Chlorine => "hypochlorite",
            Self::HydrogenSulfide => "sulfide",
        }
    }

    /// The constants the release pH is computed from, with their sources.
    pub const fn basis(self) -> &'static str {
        match self {
            Self::Chlorine => {
                "Cl2(aq) above 1 % of free chlorine (our convention, no source); chlorine hydrolysis constant from \
                 the ECHA REACH registration dossier for chlorine (2.2e-4 and 4.4e-4 (mol/L)^2 at 10 and 30 °C, \
                 van 't Hoff between), HOCl pKa from Morris (1966), the mixture's chloride bounded from its strong \
                 ions"
            }
            Self::HydrogenSulfide => {
                "H2S above 1 % of total sulfide (our convention, no source); H2S pKa1 from Millero (1988) at the \
                 water's temperature"
            }
        }
    }
}

/// Acid dosing to `checked_ph` releases `gas`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GasRelease<R: Real> {
    /// The gas.
    pub gas: Gas,
    /// The pH below which the gas-forming species exceeds [`GAS_FRACTION_LIMIT`] of its total,
    /// at the mixture's temperature and chloride, pH (0–14).
    pub release_below_ph: R,
    /// Fraction of the total present as the gas-forming species at the checked pH (0–1).
    pub gas_fraction: R,
}

/// Chlorine hydrolysis constant K_h at `kelvin`, (mol/L)² (see [`CHLORINE_HYDROLYSIS_POINTS`]).
pub fn chlorine_hydrolysis_constant(kelvin: f64) -> f64 {
    let [(t1, k1), (t2, k2)] = CHLORINE_HYDROLYSIS_POINTS;
    let (x1, x2) = (1.0 / (t1 + 273.15), 1.0 / (t2 + 273.15));
    let (l1, l2) = (libm::log10(k1), libm::log10(k2));
    libm::pow(10.0, l1 + (l2 - l1) * (1.0 / kelvin - x1) / (x2 - x1))
}

/// HOCl's pKa at `kelvin` (catalogue: Morris 1966).
fn hocl_pka(kelvin: f64) -> f64 {
    HYPOCHLORITE.pka(1, kelvin).unwrap_or(7.537)
}

/// H2S's pKa1 at `kelvin` (catalogue: Millero 1988).
fn h2s_pka(kelvin: f64) -> f64 {
    SULFIDE.pka(1, kelvin).unwrap_or(6.98)
}

/// Fraction of free chlorine present as Cl2(aq) at `ph`, `kelvin` and `chloride_mol_per_l`
/// (0–1; 0 without chloride).
pub fn chlorine_fraction(ph: f64, kelvin: f64, chloride_mol_per_l: f64) -> f64 {
    let h = libm::pow(10.0, -ph);
    let r = h * chloride_mol_per_l.max(0.0) / chlorine_hydrolysis_constant(kelvin);
    let ka = libm::pow(10.0, -hocl_pka(kelvin));
    r / (1.0 + r + ka / h)
}

/// pH below which Cl2(aq) exceeds `fraction` of free chlorine at `kelvin` and
/// `chloride_mol_per_l` (> 0; `fraction` in (0, 1)). Closed form: with a = c/K_h,
/// h = (f + √(f² + 4·a·(1−f)·f·Ka)) / (2·a·(1−f)). `None` without chloride or for a fraction
/// outside (0, 1).
pub fn chlorine_release_ph(kelvin: f64, chloride_mol_per_l: f64, fraction: f64) -> Option<f64> {
    if !(chloride_mol_per_l > 0.0 && fraction > 0.0 && fraction < 1.0) {
        return None;
    }
    let a = chloride_mol_per_l / chlorine_hydrolysis_constant(kelvin);
    let ka = libm::pow(10.0, -hocl_pka(kelvin));
    let f = fraction;
    let h = (f + libm::sqrt(f * f + 4.0 * a * (1.0 - f) * f * ka)) / (2.0 * a * (1.0 - f));
    Some(-libm::log10(h))
}

/// Fraction of total sulfide present as H2S at `ph` and `kelvin` (0–1).
pub fn hydrogen_sulfide_fraction(ph: f64, kelvin: f64) -> f64 {
    1.0 / (1.0 + libm::pow(10.0, ph - h2s_pka(kelvin)))
}

/// pH below which H2S exceeds `fraction` of total sulfide at `kelvin`:
/// pKa1 + log10((1 − f)/f). `None` for a fraction outside (0, 1).
pub fn hydrogen_sulfide_release_ph(kelvin: f64, fraction: f64) -> Option<f64> {
    if !(fraction > 0.0 && fraction < 1.0) {
        return None;
    }
    Some(h2s_pka(kelvin) + libm::log10((1.0 - fraction) / fraction))
}

/// An upper bound on the chloride of `solution`, mol/L: ½Σc·z² − ½Σc·z over its strong ions.
/// Every strong ion adds a non-negative amount to it (a cation of charge z adds c·z(z−1)/2, an
/// anion of charge −z adds c·z(z+1)/2), and a chloride ion adds exactly its concentration, so
/// the bound is exact when the only strong anion is chloride and every strong cation is
/// monovalent (NaCl, HCl as a reagent), and too high otherwise (nitrate, calcium): on the
/// safe side for the chlorine check.
pub fn chloride_upper_bound_mol_per_l<R: Real, const N: usize>(solution: &Solution<R, N>) -> f64 {
    let bound = solution.strong_ionic_strength_mol_per_l().to_f64() - 0.5 * solution.strong_charge_eq_per_l().to_f64();
    if bound.is_finite() { bound.max(0.0) } else { 0.0 }
}

/// The gases that acid dosing to `ph` releases from `mixture` (the influent mixed with the
/// planned reagent flow): at most one entry per [`Gas`], in the order chlorine, hydrogen
/// sulfide; `None` where the system is absent or `ph` is at or above its release pH.
///
/// For chlorine the chloride is [`chloride_upper_bound_mol_per_l`], and at least the
/// hypochlorite total (commercial hypochlorite is made from chlorine and caustic, which gives
/// one chloride per hypochlorite: common practice, no source). Constant cost: two pKa
/// evaluations and a few powers.
pub fn gas_releases<R: Real, const N: usize>(mixture: &Solution<R, N>, ph: R) -> [Option<GasRelease<R>>; 2] {
    let kelvin = mixture.temperature().kelvin().to_f64();
    let x = ph.to_f64();
    let hypochlorite = mixture.total_of(Gas::Chlorine.from_system()).to_f64();
    let chlorine = if hypochlorite > 0.0 {
        let chloride = chloride_upper_bound_mol_per_l(mixture).max(hypochlorite);
        chlorine_release_ph(kelvin, chloride, GAS_FRACTION_LIMIT).filter(|&p| x < p).map(|p| GasRelease {
            gas: Gas::Chlorine,
            release_below_ph: R::from_f64(p),
            gas_fraction: R::from_f64(chlorine_fraction(x, kelvin, chloride)),
        })
    } else {
        None
    };
    let sulfide = mixture.total_of(Gas::HydrogenSulfide.from_system()).to_f64();
    let h2s = if sulfide > 0.0 {
        hydrogen_sulfide_release_ph(kelvin, GAS_FRACTION_LIMIT).filter(|&p| x < p).map(|p| GasRelease {
            gas: Gas::HydrogenSulfide,
            release_below_ph: R::from_f64(p),
            gas_fraction: R::from_f64(hydrogen_sulfide_fraction(x, kelvin)),
        })
    } else {
        None
    };
    [chlorine, h2s]
}

/// One stretch of a reagent's crystallisation (freezing) curve: between `from_mass_percent` and
/// `to_mass_percent` (% w/w) the reagent crystallises below a temperature linear between
/// `from_c` and `to_c` (°C).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CrystallisationRow {
    /// Substance formula ("NaOH").
    pub formula: &'static str,
    /// Lowest mass percent of the stretch, % w/w.
    pub from_mass_percent: f64,
    /// Highest mass percent of the stretch, % w/w.
    pub to_mass_percent: f64,
    /// Crystallisation temperature at `from_mass_percent`, °C.
    pub from_c: f64,
    /// Crystallisation temperature at `to_mass_percent`, °C.
    pub to_c: f64,
    /// Where the values come from.
    pub source: &'static str,
}

/// Crystallisation and freezing temperatures of common reagent grades. A grade outside every
/// row has no entry (the check then says nothing; the SDS governs).
pub const CRYSTALLISATION: [CrystallisationRow; 7] = [
    CrystallisationRow {
        formula: "NaOH",
        from_mass_percent: 49.0,
        to_mass_percent: 51.0,
        from_c: 15.0,
        to_c: 15.0,
        source: "50 % (49-51 %) liquid caustic soda: crystallisation begins at 12-15 °C (54-59 °F), a producer's \
                 product data sheet (Georgia Gulf, \"50% Liquid Caustic Soda\"; checked, public copy); freezing \
                 point about 14 °C (58 °F), Dow's caustic soda physical-properties page (checked). The upper end, \
                 15 °C, is taken",
    },
    CrystallisationRow {
        formula: "HCl",
        from_mass_percent: 30.0,
        to_mass_percent: 32.0,
        from_c: -52.0,
        to_c: -43.0,
        source: HCL_SOURCE,
    },
    CrystallisationRow {
        formula: "HCl",
        from_mass_percent: 32.0,
        to_mass_percent: 34.0,
        from_c: -43.0,
        to_c: -36.0,
        source: HCL_SOURCE,
    },
    CrystallisationRow {
        formula: "HCl",
        from_mass_percent: 34.0,
        to_mass_percent: 36.0,
        from_c: -36.0,
        to_c: -30.0,
        source: HCL_SOURCE,
    },
    CrystallisationRow {
        formula: "HCl",
        from_mass_percent: 36.0,
        to_mass_percent: 38.0,
        from_c: -30.0,
        to_c: -26.0,
        source: HCL_SOURCE,
    },
    CrystallisationRow {
        formula: "H2SO4",
        from_mass_percent: 95.5,
        to_mass_percent: 96.5,
        from_c: -13.0,
        to_c: -13.0,
        source: "96 % sulfuric acid freezes near -13 °C (from memory, unverified)",
    },
    CrystallisationRow {
        formula: "H2SO4",
        from_mass_percent: 97.5,
        to_mass_percent: 98.5,
        from_c: 3.0,
        to_c: 3.0,
        source: "98 % sulfuric acid freezes between about -1 and +3 °C (from memory, unverified); the higher value \
                 is taken",
    },
];

/// Source of the hydrochloric acid rows.
const HCL_SOURCE: &str = "melting points of 30/32/34/36/38 % hydrochloric acid, -52/-43/-36/-30/-26 °C, in the \
table of hydrochloric acid properties attributed to Perry's Handbook and the International Critical Tables (the \
table the grade densities come from; checked, via a public transcription); linear between rows";

/// Crystallisation temperature of `formula` at `mass_percent` % w/w, °C, and the row it came
/// from; `None` when no row covers it. Where two rows meet the higher temperature is taken.
/// Scans [`CRYSTALLISATION`] once.
pub fn crystallisation_c(formula: &str, mass_percent: f64) -> Option<(f64, &'static CrystallisationRow)> {
    let mut found: Option<(f64, &'static CrystallisationRow)> = None;
    for row in &CRYSTALLISATION {
        if row.formula != formula || !(row.from_mass_percent..=row.to_mass_percent).contains(&mass_percent) {
            continue;
        }
        let span = row.to_mass_percent - row.from_mass_percent;
        let t = if span > 0.0 {
            row.from_c + (row.to_c - row.from_c) * (mass_percent - row.from_mass_percent) / span
        } else {
            row.from_c
        };
        if found.is_none_or(|(best, _)| t > best) {
            found = Some((t, row));
        }
    }
    found
}

/// Lowest reagent storage temperature accepted, °C.
pub const MIN_STORAGE_C: f64 = -60.0;
/// Highest reagent storage temperature accepted, °C.
pub const MAX_STORAGE_C: f64 = 100.0;

/// Why a [`ReagentStock`] was refused.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StockError {
    /// Mass percent outside (0, 100] or not finite.
    MassPercent(f64),
    /// Temperature outside [`MIN_STORAGE_C`]–[`MAX_STORAGE_C`] °C or not finite.
    Temperature(f64),
}

impl core::fmt::Display for StockError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        use crate::units::Compact;
        match self {
            Self::MassPercent(w) => write!(f, "reagent mass percent {} is outside (0, 100]", Compact(*w)),
            Self::Temperature(t) => {
                write!(f, "reagent temperature {} °C is outside {MIN_STORAGE_C} to {MAX_STORAGE_C} °C", Compact(*t))
            }
        }
    }
}

impl core::error::Error for StockError {}

/// Checks a reagent storage temperature, °C: finite and within
/// [`MIN_STORAGE_C`]–[`MAX_STORAGE_C`] (reagent tanks stand outdoors: below 0 °C is valid).
pub fn storage_celsius<R: Real>(temperature_c: R) -> Result<R, StockError> {
    let t = temperature_c.to_f64();
    if t.is_finite() && (MIN_STORAGE_C..=MAX_STORAGE_C).contains(&t) {
        Ok(temperature_c)
    } else {
        Err(StockError::Temperature(t))
    }
}

/// A reagent as stored: substance, strength and the temperature of its tank and lines.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ReagentStock<R: Real> {
    formula: &'static str,
    mass_percent: R,
    temperature_c: R,
}

impl<R: Real> ReagentStock<R> {
    /// `formula` (as in the substance table, e.g. "NaOH") at `mass_percent` % w/w (0–100],
    /// stored at `temperature_c` °C ([`MIN_STORAGE_C`]–[`MAX_STORAGE_C`]).
    pub fn new(formula: &'static str, mass_percent: R, temperature_c: R) -> Result<Self, StockError> {
        let w = mass_percent.to_f64();
        if !(w.is_finite() && w > 0.0 && w <= 100.0) {
            return Err(StockError::MassPercent(w));
        }
        let temperature_c = storage_celsius(temperature_c)?;
        Ok(Self { formula, mass_percent, temperature_c })
    }

    /// Substance formula.
    pub fn formula(&self) -> &'static str {
        self.formula
    }

    /// Strength, % w/w.
    pub fn mass_percent(&self) -> R {
        self.mass_percent
    }

    /// Storage temperature, °C.
    pub fn temperature_c(&self) -> R {
        self.temperature_c
    }
}

/// The stored reagent is below its crystallisation temperature: `Some(that temperature, °C)`;
/// `None` when it is at or above it, or when [`CRYSTALLISATION`] has no row for the grade.
pub fn crystallises<R: Real>(stock: &ReagentStock<R>) -> Option<R> {
    let (t, _) = crystallisation_c(stock.formula, stock.mass_percent.to_f64())?;
    (stock.temperature_c.to_f64() < t).then(|| R::from_f64(t))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Activity;
    use crate::units::Celsius;

    const K25: f64 = 298.15;

    #[test]
    fn hydrolysis_constant_reproduces_its_source() {
        // ECHA dossier (see CHLORINE_HYDROLYSIS_POINTS): the two end points exactly, the
        // 20 °C key value 3.2e-4 within 2 % (it is not used to build the line).
        assert!((chlorine_hydrolysis_constant(283.15) / 2.2e-4 - 1.0).abs() < 1e-12);
        assert!((chlorine_hydrolysis_constant(303.15) / 4.4e-4 - 1.0).abs() < 1e-12);
        let k20 = chlorine_hydrolysis_constant(293.15);
        assert!((k20 / 3.2e-4 - 1.0).abs() < 0.02, "{k20}");
    }

    #[test]
    fn release_ph_is_where_the_fraction_crosses_the_limit() {
        for (t, cl) in [(283.15, 0.001), (K25, 0.02), (K25, 0.5), (333.15, 0.1)] {
            let p = chlorine_release_ph(t, cl, GAS_FRACTION_LIMIT).unwrap();
            // The closed form inverts the fraction: exactly 1 % at p, more below, less above.
            assert!((chlorine_fraction(p, t, cl) - GAS_FRACTION_LIMIT).abs() < 1e-12, "{t} {cl}");
            assert!(chlorine_fraction(p - 0.1, t, cl) > GAS_FRACTION_LIMIT);
            assert!(chlorine_fraction(p + 0.1, t, cl) < GAS_FRACTION_LIMIT);
        }
        // More chloride, more Cl2: the release pH rises ten-fold chloride → one pH unit (where
        // OCl- is negligible, r ∝ h·c).
        let lo = chlorine_release_ph(K25, 0.01, 0.01).unwrap();
        let hi = chlorine_release_ph(K25, 0.1, 0.01).unwrap();
        assert!((hi - lo - 1.0).abs() < 0.01, "{lo} {hi}");
        assert_eq!(chlorine_release_ph(K25, 0.0, 0.01), None);
        assert_eq!(chlorine_release_ph(K25, 0.01, 1.0), None);
        // Sulfide: 1 % H2S lies log10(99) above pKa1 (Millero 1988: 6.980 at 25 °C, calc).
        let p = hydrogen_sulfide_release_ph(K25, GAS_FRACTION_LIMIT).unwrap();
        assert!((p - (6.980 + libm::log10(99.0))).abs() < 0.002, "{p}");
        assert!((hydrogen_sulfide_fraction(p, K25) - 0.01).abs() < 1e-12);
        // Colder water, higher pKa1, so H2S appears at a higher pH.
        assert!(hydrogen_sulfide_release_ph(278.15, 0.01).unwrap() > p);
    }

    #[test]
    fn chloride_bound_is_exact_for_sodium_chloride_and_high_otherwise() {
        let mut s: Solution<f64, 4> = Solution::standard();
        s.add_formula("NaCl", 0.02).unwrap();
        s.add_formula("NaOCl", 0.01).unwrap();
        assert!((chloride_upper_bound_mol_per_l(&s) - 0.02).abs() < 1e-15);
        s.add_formula("HCl", 0.005).unwrap();
        assert!((chloride_upper_bound_mol_per_l(&s) - 0.025).abs() < 1e-15);
        // Calcium chloride: 2 mmol/L chloride, bound 3 mmol/L (the Ca²⁺ adds c·z(z−1)/2 = c).
        let mut c: Solution<f64, 2> = Solution::standard();
        c.add_formula("CaCl2", 0.001).unwrap();
        let b = chloride_upper_bound_mol_per_l(&c);
        assert!(b >= 0.002 && (b - 0.003).abs() < 1e-15, "{b}");
    }

    #[test]
    fn gas_releases_of_a_mixture() {
        let mut m: Solution<f64, 4> = Solution::new(Celsius::new(20.0).unwrap(), Activity::Davies);
        m.add_formula("NaOCl", 0.005).unwrap();
        m.add_formula("NaHS", 0.001).unwrap();
        let [cl, h2s] = gas_releases(&m, 3.0);
        let (cl, h2s) = (cl.unwrap(), h2s.unwrap());
        assert_eq!((cl.gas, h2s.gas), (Gas::Chlorine, Gas::HydrogenSulfide));
        assert!(cl.release_below_ph > 3.0 && cl.gas_fraction > 0.01);
        assert!(h2s.gas_fraction > 0.99);
        // Above both release pHs: nothing.
        assert_eq!(gas_releases(&m, 9.5), [None, None]);
        // Between them: sulfide only (H2S appears near pH 9, Cl2 only in strong acid).
        let [cl, h2s] = gas_releases(&m, 6.0);
        assert!(cl.is_none() && h2s.is_some());
        // f32 gives the same release pH.
        let mut m32: Solution<f32, 4> = Solution::new(Celsius::new(20.0).unwrap(), Activity::Davies);
        m32.add_formula("NaOCl", 0.005).unwrap();
        let [cl32, _] = gas_releases(&m32, 3.0_f32);
        let [cl64, _] = gas_releases(&m, 3.0);
        assert!((f64::from(cl32.unwrap().release_below_ph) - cl64.unwrap().release_below_ph).abs() < 1e-3);
    }

    #[test]
    fn crystallisation_table() {
        // Every row is well formed and names a source; the table covers the grade table's
        // caustic and hydrochloric acid grades.
        for row in &CRYSTALLISATION {
            assert!(row.from_mass_percent <= row.to_mass_percent && !row.source.is_empty());
            assert!(crate::chem::substance::find(row.formula).is_ok(), "{}", row.formula);
        }
        // HCl: the rows at 32 and 36 % and the interpolation between (source values).
        assert_eq!(crystallisation_c("HCl", 32.0).map(|(t, _)| t), Some(-43.0));
        assert_eq!(crystallisation_c("HCl", 36.0).map(|(t, _)| t), Some(-30.0));
        assert_eq!(crystallisation_c("HCl", 33.0).map(|(t, _)| t), Some(-39.5));
        assert_eq!(crystallisation_c("NaOH", 50.0).map(|(t, _)| t), Some(15.0));
        assert_eq!(crystallisation_c("NaOH", 25.0), None);
        let cold = ReagentStock::new("NaOH", 50.0_f32, 1.0).unwrap();
        assert_eq!(crystallises(&cold), Some(15.0));
        let warm = ReagentStock::new("NaOH", 50.0_f64, 20.0).unwrap();
        assert_eq!(crystallises(&warm), None);
        assert_eq!(crystallises(&ReagentStock::new("HCl", 32.0, -45.0).unwrap()), Some(-43.0));
        assert_eq!(crystallises(&ReagentStock::new("HCl", 32.0, -40.0).unwrap()), None);
        assert_eq!(ReagentStock::new("NaOH", 0.0, 20.0), Err(StockError::MassPercent(0.0)));
        assert_eq!(ReagentStock::new("NaOH", 50.0, -80.0), Err(StockError::Temperature(-80.0)));
        assert!(ReagentStock::new("NaOH", 50.0, f64::NAN).is_err());
    }
}
