//! Salt hydrolysis: what a salt's ions do in water and what pH results.
//!
//! A salt's cation comes from a parent base and its anion from a parent acid. The conjugate of
//! a strong parent does nothing; the conjugate of a weak parent reacts with water
//! (Ka·Kb = Kw), which is why a salt solution — and so an equivalence point — is rarely at
//! pH 7.
//!
//! **Rules used here** (documented constants, common practice, no source):
//! - An ion's *hydrolysis constant* is its Ka (acting as acid) or Kb = Kw/Ka(conjugate acid)
//!   (acting as base), at the solution's temperature.
//! - A hydrolysis constant below [`NEGLIGIBLE_HYDROLYSIS_K`] (10⁻¹¹) is treated as no reaction,
//!   and the parent on that side is called **strong**. At 25 °C this means: a parent acid is
//!   strong when the step that made the anion has pKa < 3 (HCl, HNO3, H2SO4 → SO4²⁻ with pKa
//!   1.99), a parent base is strong when its conjugate acid has pKa > 11 (NaOH, KOH …). Strong
//!   ions (Na⁺, Cl⁻ …) are always inert.
//! - An ion that can both gain and lose a proton (a middle form of a polyprotic system) is
//!   **amphiprotic**; no threshold is applied to it, its Ka and Kb are compared.
//! - The predicted class compares the largest acid constant with the largest base constant of
//!   the reacting ions; within a factor 10^0.1 of each other the class is **neutral**.
//! - The square-root approximation ignores activity and is accepted by the usual 5 % rule:
//!   the hydrolysed amount must stay below 5 % of the ion's concentration (for the amphiprotic
//!   formula √(K1·K2): K1 < 5 % of C and Kw < 5 % of K2·C).

use super::activity::Activity;
use super::solution::{CompositionError, Solution};
use super::solve::{Equilibrium, SolveError};
use super::substance::{self, Ion, SaltIons, Substance, UnknownSubstance};
use crate::real::Real;
use crate::units::Celsius;

/// Hydrolysis constants below this are treated as no reaction (see the module rules).
pub const NEGLIGIBLE_HYDROLYSIS_K: f64 = 1e-11;
/// Half-width, in log10 units, of the Ka ≈ Kb band called neutral.
pub const NEUTRAL_LOG_BAND: f64 = 0.1;
/// The 5 % rule's limit on the hydrolysed fraction.
pub const APPROXIMATION_LIMIT: f64 = 0.05;

/// What an ion does in water.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum IonAction {
    /// Nothing: conjugate of a strong parent (or hydrolysis constant negligible).
    Nothing,
    /// Gives a proton to water (weak acid).
    Acid,
    /// Takes a proton from water (weak base).
    Base,
    /// Can do both (a middle form of a polyprotic system).
    Amphiprotic,
}

impl IonAction {
    /// Lower-case name for reports ("nothing", "acid", "base", "amphiprotic").
    pub const fn as_str(self) -> &'static str {
        match self {
            Self::Nothing => "nothing",
            Self::Acid => "acid",
            Self::Base => "base",
            Self::Amphiprotic => "amphiprotic",
        }
    }
}

/// Whether a parent acid or base is strong or weak under the module's rule.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Strength {
    /// Its conjugate does nothing in water.
    Strong,
    /// Its conjugate reacts with water.
    Weak,
}

impl Strength {
    /// "strong" / "weak".
    pub const fn as_str(self) -> &'static str {
        match self {
            Self::Strong => "strong",
            Self::Weak => "weak",
        }
    }
}

/// Predicted character of the salt solution.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SaltClass {
    /// pH below neutral.
    Acidic,
    /// pH above neutral.
    Basic,
    /// pH at neutral (no reacting ion, or Ka ≈ Kb).
    Neutral,
}

impl SaltClass {
    /// "acidic" / "basic" / "neutral".
    pub const fn as_str(self) -> &'static str {
        match self {
            Self::Acidic => "acidic",
            Self::Basic => "basic",
            Self::Neutral => "neutral",
        }
    }
}

/// One ion of the salt, analysed.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IonReport<R: Real> {
    /// Ion formula ("HPO4^2-").
    pub formula: &'static str,
    /// Ions per formula unit of salt.
    pub count: u8,
    /// What it does in water.
    pub action: IonAction,
    /// Its Ka when it can give a proton (dimensionless, at the solution's temperature).
    pub ka: Option<R>,
    /// Its Kb when it can take a proton.
    pub kb: Option<R>,
}

/// Which textbook square-root formula was used.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ApproximationKind {
    /// [H⁺] = √(Ka·C).
    WeakAcid,
    /// [OH⁻] = √(Kb·C).
    WeakBase,
    /// [H⁺] = √(K1·K2) of the amphiprotic ion.
    Amphiprotic,
    /// [H⁺] = √(Ka(cation)·Kw/Kb(anion)) when both ions react.
    BothIons,
}

/// The square-root approximation beside the exact answer.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Approximation<R: Real> {
    /// Which formula.
    pub kind: ApproximationKind,
    /// The approximate pH (concentration scale, γ = 1).
    pub ph: R,
    /// Approximate minus exact pH.
    pub error_ph: R,
    /// The quantity the validity rule checks (hydrolysed fraction, or the larger of K1/C and
    /// Kw/(K2·C) for the amphiprotic formula).
    pub rule_ratio: R,
    /// `true` when `rule_ratio` < 5 % (the usual validity rule holds).
    pub valid: bool,
}

/// Full salt-hydrolysis analysis.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SaltReport<R: Real> {
    /// The salt's formula.
    pub formula: &'static str,
    /// Salt concentration, mol/L.
    pub concentration_mol_per_l: R,
    /// Parent acid (of the anion).
    pub parent_acid: &'static str,
    /// Its strength under the module's rule.
    pub parent_acid_strength: Strength,
    /// Parent base (of the cation).
    pub parent_base: &'static str,
    /// Its strength under the module's rule.
    pub parent_base_strength: Strength,
    /// The cation.
    pub cation: IonReport<R>,
    /// The anion.
    pub anion: IonReport<R>,
    /// Predicted class from Ka vs Kb.
    pub class: SaltClass,
    /// Exact solution of the charge balance (with the chosen activity mode).
    pub equilibrium: Equilibrium<R>,
    /// Neutral pH at the temperature (pKw/2).
    pub neutral_ph: R,
    /// Textbook approximation, when one applies.
    pub approximation: Option<Approximation<R>>,
}

/// Why a salt analysis failed.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SaltError {
    /// Not in the substance table.
    Unknown(UnknownSubstance),
    /// In the table, but not a salt (an acid, a base or a gas).
    NotASalt,
    /// Concentration or temperature rejected.
    Composition(CompositionError),
    /// The pH solve failed.
    Solve(SolveError),
}

impl core::fmt::Display for SaltError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Unknown(e) => core::fmt::Display::fmt(e, f),
            Self::NotASalt => f.write_str("that substance is an acid, a base or a gas, not a salt"),
            Self::Composition(e) => core::fmt::Display::fmt(e, f),
            Self::Solve(e) => core::fmt::Display::fmt(e, f),
        }
    }
}

impl core::error::Error for SaltError {}

fn ion_formula(ion: Ion) -> &'static str {
    match ion {
        Ion::Strong(s) => s.formula(),
        Ion::Form(sys, j) => sys.form(usize::from(j)),
    }
}

/// Analyses one ion at temperature `t`: its action and constants.
fn analyse_ion<R: Real>(ion: Ion, count: u8, t: Celsius<R>, pkw: R) -> IonReport<R> {
    let formula = ion_formula(ion);
    let (mut ka, mut kb) = (None, None);
    if let Ion::Form(sys, j) = ion {
        let j = usize::from(j);
        // Giving a proton: step j+1. Taking one: step j (Kb = Kw/Ka_j).
        ka = sys.pka(j + 1, t.kelvin()).map(|pk: R| (-pk).exp10());
        kb = sys.pka(j, t.kelvin()).map(|pk: R| (pk - pkw).exp10());
    }
    let negligible = |k: Option<R>| k.is_none_or(|k| k.to_f64() < NEGLIGIBLE_HYDROLYSIS_K);
    let action = match (ka.is_some() && kb.is_some(), negligible(ka), negligible(kb)) {
        (true, _, _) => IonAction::Amphiprotic,
        (false, false, _) => IonAction::Acid,
        (false, true, false) => IonAction::Base,
        (false, true, true) => IonAction::Nothing,
    };
    IonReport { formula, count, action, ka, kb }
}

fn parents(ions: &SaltIons) -> (&'static str, &'static str) {
    let acid = match ions.anion {
        Ion::Strong(s) => s.parent(),
        Ion::Form(sys, _) => sys.parent_acid,
    };
    let base = match ions.cation {
        Ion::Strong(s) => s.parent(),
        Ion::Form(sys, _) => sys.parent_base(),
    };
    (acid, base)
}

/// Analyses `mol_per_l` of the salt with this formula or name at `temperature`.
pub fn analyse<R: Real>(
    formula_or_name: &str,
    mol_per_l: R,
    temperature: Celsius<R>,
    activity: Activity,
) -> Result<SaltReport<R>, SaltError> {
    let s = substance::find(formula_or_name).map_err(SaltError::Unknown)?;
    analyse_substance(s, mol_per_l, temperature, activity)
}

/// Analyses `mol_per_l` of `substance` (which must be a salt) at `temperature`.
pub fn analyse_substance<R: Real>(
    substance: &'static Substance,
    mol_per_l: R,
    temperature: Celsius<R>,
    activity: Activity,
) -> Result<SaltReport<R>, SaltError> {
    let ions = substance.salt.ok_or(SaltError::NotASalt)?;
    let mut sol: Solution<R, 3> = Solution::new(temperature, activity);
    sol.add_substance(substance, mol_per_l).map_err(SaltError::Composition)?;
    let eq = sol.solve().map_err(SaltError::Solve)?;
    let pkw = sol.pkw();
    let cation = analyse_ion(ions.cation, ions.cations, temperature, pkw);
    let anion = analyse_ion(ions.anion, ions.anions, temperature, pkw);
    let (parent_acid, parent_base) = parents(&ions);
    let strength = |k: Option<R>| match k {
        Some(k) if k.to_f64() >= NEGLIGIBLE_HYDROLYSIS_K => Strength::Weak,
        _ => Strength::Strong,
    };
    let parent_acid_strength = strength(anion.kb);
    let parent_base_strength = strength(cation.ka);

    // Largest acting acid and base constants.
    let acting = |r: &IonReport<R>, acid: bool| -> R {
        let k = if acid { r.ka } else { r.kb };
        match (r.action, k) {
            (IonAction::Nothing, _) | (_, None) => R::ZERO,
            (IonAction::Acid, Some(k)) if acid => k,
            (IonAction::Base, Some(k)) if !acid => k,
            (IonAction::Amphiprotic, Some(k)) => k,
            _ => R::ZERO,
        }
    };
    let ka = acting(&cation, true).max(acting(&anion, true));
    let kb = acting(&cation, false).max(acting(&anion, false));
    let class = if ka <= R::ZERO && kb <= R::ZERO {
        SaltClass::Neutral
    } else if ka <= R::ZERO {
        SaltClass::Basic
    } else if kb <= R::ZERO {
        SaltClass::Acidic
    } else {
        let d = (ka / kb).log10().to_f64();
        if d > NEUTRAL_LOG_BAND {
            SaltClass::Acidic
        } else if d < -NEUTRAL_LOG_BAND {
            SaltClass::Basic
        } else {
            SaltClass::Neutral
        }
    };
    let neutral_ph = pkw * R::from_f64(0.5);
    let approximation = if ions.simple { approximate(&cation, &anion, mol_per_l, pkw, eq.ph) } else { None };
    Ok(SaltReport {
        formula: substance.formula,
        concentration_mol_per_l: mol_per_l,
        parent_acid,
        parent_acid_strength,
        parent_base,
        parent_base_strength,
        cation,
        anion,
        class,
        equilibrium: eq,
        neutral_ph,
        approximation,
    })
}

/// The one-ion formulas neglect water; when the ion supplies less H⁺ (or OH⁻) than water
/// itself (√(K·C) < √Kw) no such formula applies and none is reported.
fn above_water<R: Real>(x: R, kw: R) -> Option<R> {
    if x >= kw.sqrt() { Some(x) } else { None }
}

fn approximate<R: Real>(
    cation: &IonReport<R>,
    anion: &IonReport<R>,
    c: R,
    pkw: R,
    exact_ph: R,
) -> Option<Approximation<R>> {
    let kw = (-pkw).exp10();
    let cc = c * R::from_i32(i32::from(cation.count));
    let ca = c * R::from_i32(i32::from(anion.count));
    let limit = R::from_f64(APPROXIMATION_LIMIT);
    let (kind, h, ratio) = match (cation.action, anion.action) {
        (IonAction::Acid, IonAction::Nothing) => {
            let h = (cation.ka? * cc).sqrt();
            (ApproximationKind::WeakAcid, above_water(h, kw)?, h / cc)
        }
        (IonAction::Nothing, IonAction::Acid) => {
            let h = (anion.ka? * ca).sqrt();
            (ApproximationKind::WeakAcid, above_water(h, kw)?, h / ca)
        }
        (IonAction::Nothing, IonAction::Base) => {
            let oh = above_water((anion.kb? * ca).sqrt(), kw)?;
            (ApproximationKind::WeakBase, kw / oh, oh / ca)
        }
        (IonAction::Nothing, IonAction::Amphiprotic) => {
            // Ka of the ion is K(j+1); the conjugate acid's Ka is K(j) = Kw/Kb.
            let k2 = anion.ka?;
            let k1 = kw / anion.kb?;
            let h = (k1 * k2).sqrt();
            (ApproximationKind::Amphiprotic, h, (k1 / ca).max(kw / (k2 * ca)))
        }
        (IonAction::Acid, IonAction::Base) if cation.count == anion.count => {
            let ka = cation.ka?;
            let kb = anion.kb?;
            let h = (ka * kw / kb).sqrt();
            // Hydrolysed fraction of the pair: r/(1 + r) with r = √(Ka·Kb/Kw).
            let r = (ka * kb / kw).sqrt();
            (ApproximationKind::BothIons, h, r / (R::ONE + r))
        }
        _ => return None,
    };
    let ph = -h.log10();
    Some(Approximation { kind, ph, error_ph: ph - exact_ph, rule_ratio: ratio, valid: ratio < limit })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at25(formula: &str, c: f64) -> SaltReport<f64> {
        analyse(formula, c, Celsius::standard(), Activity::Ideal).unwrap()
    }

    #[test]
    fn classes_follow_ka_versus_kb() {
        // Expected classes as tabulated in OpenStax Chemistry 2e §14.4 (salt hydrolysis
        // exercises, read via the book's public source): NaHCO3, Na2HPO4 basic; KH2PO4, NH4F
        // acidic. NaNO3 (strong/strong) neutral.
        assert_eq!(at25("NaHCO3", 0.01).class, SaltClass::Basic);
        assert_eq!(at25("Na2HPO4", 0.01).class, SaltClass::Basic);
        assert_eq!(at25("KH2PO4", 0.01).class, SaltClass::Acidic);
        assert_eq!(at25("NH4F", 0.01).class, SaltClass::Acidic);
        assert_eq!(at25("NaNO3", 0.01).class, SaltClass::Neutral);
        assert_eq!(at25("Na2SO4", 0.01).class, SaltClass::Neutral);
        assert_eq!(at25("NaOCl", 0.01).class, SaltClass::Basic);
    }

    #[test]
    fn ion_actions_and_parents() {
        let r = at25("Na2HPO4", 0.05);
        assert_eq!(r.parent_acid, "H3PO4");
        assert_eq!(r.parent_base, "NaOH");
        assert_eq!(r.parent_base_strength, Strength::Strong);
        assert_eq!(r.parent_acid_strength, Strength::Weak);
        assert_eq!(r.cation.action, IonAction::Nothing);
        assert_eq!(r.anion.action, IonAction::Amphiprotic);
        let s = at25("(NH4)2SO4", 0.05);
        assert_eq!(s.parent_base, "NH3");
        assert_eq!(s.cation.action, IonAction::Acid);
        assert_eq!(s.anion.action, IonAction::Nothing);
        assert_eq!(s.parent_acid, "H2SO4");
        assert_eq!(s.parent_acid_strength, Strength::Strong);
        assert_eq!(s.class, SaltClass::Acidic);
    }

    #[test]
    fn neutral_salt_sits_at_neutral_ph_at_any_temperature() {
        for t in [5.0, 25.0, 60.0] {
            let r = analyse("NaCl", 0.01, Celsius::new(t).unwrap(), Activity::Ideal).unwrap();
            assert!((r.equilibrium.ph - r.neutral_ph).abs() < 1e-6, "{t}");
        }
    }

    #[test]
    fn approximation_error_and_validity_flag() {
        // Sodium fluoride 0.05 M: weak-base formula is accurate (hydrolysed fraction ~1e-4).
        let r = at25("NaF", 0.05);
        let a = r.approximation.unwrap();
        assert_eq!(a.kind, ApproximationKind::WeakBase);
        assert!(a.valid && a.error_ph.abs() < 0.01, "{a:?}");
        // Trisodium phosphate 0.01 M: PO4^3- (Kb ≈ 0.02) hydrolyses far beyond 5 %: the flag
        // must say the approximation is invalid and its error must be large.
        let p = at25("Na3PO4", 0.01);
        let a = p.approximation.unwrap();
        assert!(!a.valid && a.error_ph.abs() > 0.05, "{a:?}");
        // So dilute that water dominates: no square-root formula (it would give nonsense).
        assert!(at25("NaOCl", 1e-12).approximation.is_none());
        // Borax is not a simple salt: no square-root formula.
        assert!(at25("Na2B4O7", 0.01).approximation.is_none());
    }

    #[test]
    fn not_a_salt_and_unknown() {
        assert_eq!(
            analyse("HCl", 0.01, Celsius::standard(), Activity::Ideal).map(|r: SaltReport<f64>| r.class),
            Err(SaltError::NotASalt)
        );
        assert!(matches!(
            analyse::<f64>("XyZ", 0.01, Celsius::standard(), Activity::Ideal),
            Err(SaltError::Unknown(_))
        ));
    }
}
