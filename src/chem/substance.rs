//! Dissolvable substances by their usual formula, each mapped onto acid–base systems and
//! strong ions. Molar masses from the IUPAC standard atomic weights (abridged, 2021:
//! H 1.008, C 12.011, N 14.007, O 15.999, Na 22.990, K 39.098, Ca 40.078, Mg 24.305,
//! Cl 35.45, S 32.06, P 30.974, B 10.81, F 18.998, Si 28.085; from memory), rounded to 0.001.
//!
//! A substance's effect on the solution is only its strong ions and its system totals: which
//! form was added (CO2, HCO3⁻ or CO3²⁻) is told by the strong ions that came with it, through
//! the charge balance.

use super::catalogue as cat;
use super::system::AcidBaseSystem;

/// A fully dissociated ion (conjugate of a strong acid or a strong base).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StrongIon {
    /// Na⁺ (parent base NaOH).
    Sodium,
    /// K⁺ (parent base KOH).
    Potassium,
    /// Ca²⁺ (parent base Ca(OH)2).
    Calcium,
    /// Mg²⁺ (parent base Mg(OH)2).
    Magnesium,
    /// Cl⁻ (parent acid HCl).
    Chloride,
    /// NO3⁻ (parent acid HNO3).
    Nitrate,
}

impl StrongIon {
    /// Ion charge.
    pub const fn charge(self) -> i8 {
        match self {
            Self::Sodium | Self::Potassium => 1,
            Self::Calcium | Self::Magnesium => 2,
            Self::Chloride | Self::Nitrate => -1,
        }
    }
    /// Ion formula.
    pub const fn formula(self) -> &'static str {
        match self {
            Self::Sodium => "Na+",
            Self::Potassium => "K+",
            Self::Calcium => "Ca^2+",
            Self::Magnesium => "Mg^2+",
            Self::Chloride => "Cl-",
            Self::Nitrate => "NO3-",
        }
    }
    /// The strong acid or strong base this ion is the (inert) conjugate of.
    pub const fn parent(self) -> &'static str {
        match self {
            Self::Sodium => "NaOH",
            Self::Potassium => "KOH",
            Self::Calcium => "Ca(OH)2",
            Self::Magnesium => "Mg(OH)2",
            Self::Chloride => "HCl",
            Self::Nitrate => "HNO3",
        }
    }
}

/// What one formula unit of a substance puts into the water.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Part {
    /// `count` strong ions.
    Strong(StrongIon, u8),
    /// `count` mol of an acid–base system's total.
    System(&'static AcidBaseSystem, u8),
}

/// One ion of a salt, as far as hydrolysis is concerned.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Ion {
    /// A strong ion: the conjugate of a strong parent, does nothing in water.
    Strong(StrongIon),
    /// Form `protons_lost` of an acid–base system (e.g. HPO4²⁻ = phosphate form 2).
    Form(&'static AcidBaseSystem, u8),
}

/// How a salt splits into ions.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SaltIons {
    /// The cation.
    pub cation: Ion,
    /// Cations per formula unit.
    pub cations: u8,
    /// The anion.
    pub anion: Ion,
    /// Anions per formula unit.
    pub anions: u8,
    /// `false` when dissolving also releases a neutral acid or base beside the ions (borax
    /// gives B(OH)3 as well as B(OH)4⁻), so the one-ion square-root approximation does not apply.
    pub simple: bool,
}

/// A dissolvable substance.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Substance {
    /// The usual formula, as accepted by [`find`] ("NaHCO3").
    pub formula: &'static str,
    /// Common name ("sodium bicarbonate"); also accepted by [`find`], ignoring ASCII case.
    pub name: &'static str,
    /// Molar mass of the formula unit, g/mol.
    pub molar_mass_g_per_mol: f64,
    /// What one formula unit adds (at most three parts).
    pub parts: &'static [Part],
    /// The salt's ions, for salt-hydrolysis analysis; `None` for acids, bases and gases.
    pub salt: Option<SaltIons>,
}

use Part::{Strong as S, System as Y};
use StrongIon::{Calcium as CA, Chloride as CL, Magnesium as MG, Nitrate as NO3, Potassium as K, Sodium as NA};

const fn salt(cation: Ion, cations: u8, anion: Ion, anions: u8) -> Option<SaltIons> {
    Some(SaltIons { cation, cations, anion, anions, simple: true })
}
const fn sub(
    formula: &'static str,
    name: &'static str,
    molar_mass_g_per_mol: f64,
    parts: &'static [Part],
    salt: Option<SaltIons>,
) -> Substance {
    Substance { formula, name, molar_mass_g_per_mol, parts, salt }
}
const fn form(system: &'static AcidBaseSystem, protons_lost: u8) -> Ion {
    Ion::Form(system, protons_lost)
}
const NA_ION: Ion = Ion::Strong(NA);
const K_ION: Ion = Ion::Strong(K);

/// The built-in substance table.
pub const SUBSTANCES: &[Substance] = &[
    // Strong acids and bases.
    sub("HCl", "hydrochloric acid", 36.458, &[S(CL, 1)], None),
    sub("HNO3", "nitric acid", 63.012, &[S(NO3, 1)], None),
    sub("H2SO4", "sulfuric acid", 98.072, &[Y(&cat::SULFATE, 1)], None),
    sub("NaOH", "sodium hydroxide", 39.997, &[S(NA, 1)], None),
    sub("KOH", "potassium hydroxide", 56.105, &[S(K, 1)], None),
    sub("Ca(OH)2", "calcium hydroxide", 74.092, &[S(CA, 1)], None),
    sub("Mg(OH)2", "magnesium hydroxide", 58.319, &[S(MG, 1)], None),
    // Neutral salts of strong parents.
    sub("NaCl", "sodium chloride", 58.440, &[S(NA, 1), S(CL, 1)], salt(NA_ION, 1, Ion::Strong(CL), 1)),
    sub("KCl", "potassium chloride", 74.548, &[S(K, 1), S(CL, 1)], salt(K_ION, 1, Ion::Strong(CL), 1)),
    sub("NaNO3", "sodium nitrate", 84.994, &[S(NA, 1), S(NO3, 1)], salt(NA_ION, 1, Ion::Strong(NO3), 1)),
    sub("KNO3", "potassium nitrate", 101.102, &[S(K, 1), S(NO3, 1)], salt(K_ION, 1, Ion::Strong(NO3), 1)),
    sub("CaCl2", "calcium chloride", 110.978, &[S(CA, 1), S(CL, 2)], salt(Ion::Strong(CA), 1, Ion::Strong(CL), 2)),
    sub("MgCl2", "magnesium chloride", 95.205, &[S(MG, 1), S(CL, 2)], salt(Ion::Strong(MG), 1, Ion::Strong(CL), 2)),
    sub(
        "Na2SO4",
        "sodium sulfate",
        142.036,
        &[S(NA, 2), Y(&cat::SULFATE, 1)],
        salt(NA_ION, 2, form(&cat::SULFATE, 1), 1),
    ),
    sub(
        "MgSO4",
        "magnesium sulfate",
        120.361,
        &[S(MG, 1), Y(&cat::SULFATE, 1)],
        salt(Ion::Strong(MG), 1, form(&cat::SULFATE, 1), 1),
    ),
    // Ammonia and ammonium salts.
    sub("NH3", "ammonia", 17.031, &[Y(&cat::AMMONIUM, 1)], None),
    sub(
        "NH4Cl",
        "ammonium chloride",
        53.489,
        &[Y(&cat::AMMONIUM, 1), S(CL, 1)],
        salt(form(&cat::AMMONIUM, 0), 1, Ion::Strong(CL), 1),
    ),
    sub(
        "(NH4)2SO4",
        "ammonium sulfate",
        132.134,
        &[Y(&cat::AMMONIUM, 2), Y(&cat::SULFATE, 1)],
        salt(form(&cat::AMMONIUM, 0), 2, form(&cat::SULFATE, 1), 1),
    ),
    sub(
        "NH4F",
        "ammonium fluoride",
        37.037,
        &[Y(&cat::AMMONIUM, 1), Y(&cat::FLUORIDE, 1)],
        salt(form(&cat::AMMONIUM, 0), 1, form(&cat::FLUORIDE, 1), 1),
    ),
    sub(
        "CH3COONH4",
        "ammonium acetate",
        77.083,
        &[Y(&cat::AMMONIUM, 1), Y(&cat::ACETATE, 1)],
        salt(form(&cat::AMMONIUM, 0), 1, form(&cat::ACETATE, 1), 1),
    ),
    // Acetate, formate.
    sub("CH3COOH", "acetic acid", 60.052, &[Y(&cat::ACETATE, 1)], None),
    sub(
        "CH3COONa",
        "sodium acetate",
        82.034,
        &[S(NA, 1), Y(&cat::ACETATE, 1)],
        salt(NA_ION, 1, form(&cat::ACETATE, 1), 1),
    ),
    sub("HCOOH", "formic acid", 46.025, &[Y(&cat::FORMATE, 1)], None),
    sub(
        "HCOONa",
        "sodium formate",
        68.007,
        &[S(NA, 1), Y(&cat::FORMATE, 1)],
        salt(NA_ION, 1, form(&cat::FORMATE, 1), 1),
    ),
    // Carbonate.
    sub("CO2", "carbon dioxide", 44.009, &[Y(&cat::CARBONATE, 1)], None),
    sub(
        "NaHCO3",
        "sodium bicarbonate",
        84.006,
        &[S(NA, 1), Y(&cat::CARBONATE, 1)],
        salt(NA_ION, 1, form(&cat::CARBONATE, 1), 1),
    ),
    sub(
        "Na2CO3",
        "sodium carbonate",
        105.988,
        &[S(NA, 2), Y(&cat::CARBONATE, 1)],
        salt(NA_ION, 2, form(&cat::CARBONATE, 2), 1),
    ),
    sub(
        "K2CO3",
        "potassium carbonate",
        138.204,
        &[S(K, 2), Y(&cat::CARBONATE, 1)],
        salt(K_ION, 2, form(&cat::CARBONATE, 2), 1),
    ),
    // Phosphate.
    sub("H3PO4", "phosphoric acid", 97.994, &[Y(&cat::PHOSPHATE, 1)], None),
    sub(
        "NaH2PO4",
        "monosodium phosphate",
        119.976,
        &[S(NA, 1), Y(&cat::PHOSPHATE, 1)],
        salt(NA_ION, 1, form(&cat::PHOSPHATE, 1), 1),
    ),
    sub(
        "Na2HPO4",
        "disodium phosphate",
        141.958,
        &[S(NA, 2), Y(&cat::PHOSPHATE, 1)],
        salt(NA_ION, 2, form(&cat::PHOSPHATE, 2), 1),
    ),
    sub(
        "Na3PO4",
        "trisodium phosphate",
        163.940,
        &[S(NA, 3), Y(&cat::PHOSPHATE, 1)],
        salt(NA_ION, 3, form(&cat::PHOSPHATE, 3), 1),
    ),
    sub(
        "KH2PO4",
        "monopotassium phosphate",
        136.084,
        &[S(K, 1), Y(&cat::PHOSPHATE, 1)],
        salt(K_ION, 1, form(&cat::PHOSPHATE, 1), 1),
    ),
    sub(
        "K2HPO4",
        "dipotassium phosphate",
        174.174,
        &[S(K, 2), Y(&cat::PHOSPHATE, 1)],
        salt(K_ION, 2, form(&cat::PHOSPHATE, 2), 1),
    ),
    // Borate.
    sub("H3BO3", "boric acid", 61.831, &[Y(&cat::BORATE, 1)], None),
    sub(
        "Na2B4O7",
        "borax (anhydrous sodium tetraborate)",
        201.213,
        &[S(NA, 2), Y(&cat::BORATE, 4)],
        // B4O7²⁻ + 7 H2O → 2 B(OH)3 + 2 B(OH)4⁻: two borate anions and two neutral boric acids.
        Some(SaltIons { cation: NA_ION, cations: 2, anion: form(&cat::BORATE, 1), anions: 2, simple: false }),
    ),
    // Hypochlorite, fluoride.
    sub("HOCl", "hypochlorous acid", 52.457, &[Y(&cat::HYPOCHLORITE, 1)], None),
    sub(
        "NaOCl",
        "sodium hypochlorite",
        74.439,
        &[S(NA, 1), Y(&cat::HYPOCHLORITE, 1)],
        salt(NA_ION, 1, form(&cat::HYPOCHLORITE, 1), 1),
    ),
    sub("HF", "hydrofluoric acid", 20.006, &[Y(&cat::FLUORIDE, 1)], None),
    sub(
        "NaF",
        "sodium fluoride",
        41.988,
        &[S(NA, 1), Y(&cat::FLUORIDE, 1)],
        salt(NA_ION, 1, form(&cat::FLUORIDE, 1), 1),
    ),
    // Oxalate, citrate, phthalate.
    sub("H2C2O4", "oxalic acid", 90.034, &[Y(&cat::OXALATE, 1)], None),
    sub(
        "Na2C2O4",
        "sodium oxalate",
        133.998,
        &[S(NA, 2), Y(&cat::OXALATE, 1)],
        salt(NA_ION, 2, form(&cat::OXALATE, 2), 1),
    ),
    sub("C6H8O7", "citric acid", 192.123, &[Y(&cat::CITRATE, 1)], None),
    sub(
        "Na3C6H5O7",
        "trisodium citrate",
        258.069,
        &[S(NA, 3), Y(&cat::CITRATE, 1)],
        salt(NA_ION, 3, form(&cat::CITRATE, 3), 1),
    ),
    sub(
        "KHC8H4O4",
        "potassium hydrogen phthalate",
        204.222,
        &[S(K, 1), Y(&cat::PHTHALATE, 1)],
        salt(K_ION, 1, form(&cat::PHTHALATE, 1), 1),
    ),
    // Sulfide, silicate.
    sub("H2S", "hydrogen sulfide", 34.076, &[Y(&cat::SULFIDE, 1)], None),
    sub(
        "NaHS",
        "sodium hydrosulfide",
        56.058,
        &[S(NA, 1), Y(&cat::SULFIDE, 1)],
        salt(NA_ION, 1, form(&cat::SULFIDE, 1), 1),
    ),
    sub("H4SiO4", "silicic acid", 96.113, &[Y(&cat::SILICATE, 1)], None),
];

/// No substance has that formula or name. Its `Display` lists every known formula.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct UnknownSubstance;

impl core::fmt::Display for UnknownSubstance {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str("unknown substance; known formulas: ")?;
        for (i, s) in SUBSTANCES.iter().enumerate() {
            if i > 0 {
                f.write_str(", ")?;
            }
            f.write_str(s.formula)?;
        }
        Ok(())
    }
}

impl core::error::Error for UnknownSubstance {}

/// Finds a substance by exact formula ("NaHCO3") or by name, ignoring ASCII case
/// ("Sodium Bicarbonate"). A few spellings are also accepted: "H2CO3" for CO2, "Na2B4O7·10H2O"
/// is *not* (give the anhydrous amount).
pub fn find(formula_or_name: &str) -> Result<&'static Substance, UnknownSubstance> {
    let key = match formula_or_name {
        "H2CO3" => "CO2",
        "NH4OH" => "NH3",
        other => other,
    };
    SUBSTANCES
        .iter()
        .find(|s| s.formula == key)
        .or_else(|| SUBSTANCES.iter().find(|s| s.name.eq_ignore_ascii_case(key)))
        .ok_or(UnknownSubstance)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_has_the_required_substances_and_unique_formulas() {
        let required = [
            "HCl",
            "HNO3",
            "H2SO4",
            "NaOH",
            "KOH",
            "Ca(OH)2",
            "Mg(OH)2",
            "NaCl",
            "KCl",
            "Na2SO4",
            "CaCl2",
            "NH3",
            "NH4Cl",
            "(NH4)2SO4",
            "CH3COOH",
            "CH3COONa",
            "CO2",
            "NaHCO3",
            "Na2CO3",
            "H3PO4",
            "NaH2PO4",
            "Na2HPO4",
            "Na3PO4",
            "KH2PO4",
            "K2HPO4",
            "H3BO3",
            "Na2B4O7",
            "HOCl",
            "NaOCl",
            "HF",
            "NaF",
            "HCOOH",
            "HCOONa",
            "H2C2O4",
            "C6H8O7",
            "Na3C6H5O7",
            "H2S",
            "NaHS",
            "KHC8H4O4",
        ];
        for f in required {
            assert!(find(f).is_ok(), "{f} missing");
        }
        assert!(SUBSTANCES.len() >= 35);
        for (i, a) in SUBSTANCES.iter().enumerate() {
            for b in SUBSTANCES.iter().skip(i + 1) {
                assert_ne!(a.formula, b.formula);
                assert_ne!(a.name, b.name);
            }
        }
    }

    #[test]
    fn salts_are_electrically_neutral() {
        // cation charge × count + anion charge × count = 0 for every salt in the table.
        fn charge(ion: Ion) -> i32 {
            match ion {
                Ion::Strong(s) => i32::from(s.charge()),
                Ion::Form(sys, j) => sys.charge_of_form(usize::from(j)),
            }
        }
        for s in SUBSTANCES {
            if let Some(salt) = s.salt {
                let q = charge(salt.cation) * i32::from(salt.cations) + charge(salt.anion) * i32::from(salt.anions);
                // Borax: 2 Na+ and 2 B(OH)4- is neutral too (the other two borons are B(OH)3).
                assert_eq!(q, 0, "{}", s.formula);
            }
        }
    }

    #[test]
    fn lookup_by_name_and_unknown_lists_known() {
        assert_eq!(find("sodium bicarbonate").map(|s| s.formula), Ok("NaHCO3"));
        assert_eq!(find("H2CO3").map(|s| s.formula), Ok("CO2"));
        assert_eq!(find("NaXYZ"), Err(UnknownSubstance));
        let mut buf = heapless::String::<1024>::new();
        core::fmt::write(&mut buf, format_args!("{UnknownSubstance}")).unwrap();
        assert!(buf.contains("NaHCO3") && buf.contains("KHC8H4O4"));
    }

    #[test]
    fn molar_masses_are_plausible() {
        // NaOH 39.997 g/mol, H2SO4 98.072 g/mol (IUPAC atomic weights, computed).
        assert!((find("NaOH").unwrap().molar_mass_g_per_mol - 39.997).abs() < 0.01);
        assert!((find("H2SO4").unwrap().molar_mass_g_per_mol - 98.072).abs() < 0.01);
    }
}
