//! Built-in acid–base systems (const data). Every constant names its source beside it.
//!
//! Tags used below: "(checked)" = the value was read in the named source (or an independent
//! public transcription of it); "(from memory)" = the value is quoted from memory of the
//! named source and no test relies on it alone; "(calc)" = computed here from a checked
//! formula. All values are thermodynamic (I → 0) at 0.1 MPa, molal scale.
//!
//! To add a system, see DEVELOPERS.md ("Adding a catalogue entry").

use super::system::{AcidBaseSystem, LogK};

const NONE: LogK = LogK::analytic(0.0, 0.0, 0.0, 0.0, 0.0);

/// Carbonate: CO2(aq) (incl. H2CO3) / HCO3⁻ / CO3²⁻.
/// Both steps: Plummer & Busenberg (1982), Geochim. Cosmochim. Acta 46, 1011 (checked):
/// log K1 = −356.3094 − 0.06091964·T + 21834.37/T + 126.8339·log10 T − 1684915/T²;
/// log K2 = −107.8871 − 0.03252849·T + 5151.79/T + 38.92561·log10 T − 563713.9/T².
/// pK1 = 6.352, pK2 = 10.329 at 25 °C (calc).
pub const CARBONATE: AcidBaseSystem = AcidBaseSystem {
    key: "carbonate",
    forms: ["CO2", "HCO3-", "CO3^2-", ""],
    steps: 2,
    log_k: [
        LogK::analytic(-356.309_4, 21_834.37, -0.060_919_64, 126.833_9, -1_684_915.0),
        LogK::analytic(-107.887_1, 5151.79, -0.032_528_49, 38.925_61, -563_713.9),
        NONE,
    ],
    charge_protonated: 0,
    parent_acid: "H2CO3",
};

/// Phosphate: H3PO4 / H2PO4⁻ / HPO4²⁻ / PO4³⁻.
/// Step 1: Bates (1951), J. Res. NBS 47, 127 (journal volume and page from memory):
/// pK1 = 799.31/T − 4.5535 + 0.013486·T (coefficients from memory, not yet checked against the paper;
/// said to agree with the Millero & Pierrot 1998 refit, not checked); pK1 = 2.056 / 2.148 / 2.278 /
/// 2.339 at 0 / 25 / 50 / 60 °C (calc).
/// Step 2: ln K2 = 172.1033 − 8814.715/T − 27.927·ln T, the S = 0 terms of Millero (1995),
/// Geochim. Cosmochim. Acta 59, 661, K2P (Yao & Millero 1995; checked, via public
/// transcriptions in open-source CO2-system codes); also described as the Millero & Pierrot
/// (1998) refit of Bates & Acree (1943) (from memory). Rewritten in log10 form (a = 172.1033/ln10,
/// b = −8814.715/ln10, d = −27.927); pK2 = 7.313 / 7.200 / 7.183 / 7.197 at 0 / 25 / 50 / 60 °C
/// (calc).
/// Step 3: pKa 12.35, ΔH° 14.7 kJ/mol — Benjamin, "Water Chemistry", 2nd ed. (2015), table of
/// acidity constants (checked, via a public transcription); van 't Hoff temperature dependence.
pub const PHOSPHATE: AcidBaseSystem = AcidBaseSystem {
    key: "phosphate",
    forms: ["H3PO4", "H2PO4-", "HPO4^2-", "PO4^3-"],
    steps: 3,
    log_k: [
        LogK::analytic(4.5535, -799.31, -0.013_486, 0.0, 0.0),
        LogK::analytic(172.1033 / core::f64::consts::LN_10, -8814.715 / core::f64::consts::LN_10, 0.0, -27.927, 0.0),
        LogK::vant_hoff(12.35, 14.7),
    ],
    charge_protonated: 0,
    parent_acid: "H3PO4",
};

/// Acetate: CH3COOH / CH3COO⁻. Harned & Ehlers (1933), J. Am. Chem. Soc. 55, 652 (journal
/// volume and page from memory): pK = 1170.48/T − 3.1649 + 0.013399·T, measured 0–60 °C
/// (coefficients from memory, not yet checked against the paper); pK = 4.780 / 4.756 / 4.787 / 4.812 at
/// 0 / 25 / 50 / 60 °C (calc). Goldberg, Kishore & Lennen (2002), J. Phys. Chem. Ref. Data 31,
/// 231 give 4.756; ΔH° −0.41 kJ/mol, ΔCp° −142 J/(K·mol) (from memory), which the fit agrees
/// with. Beyond 60 °C the fit is extrapolated.
pub const ACETATE: AcidBaseSystem = AcidBaseSystem {
    key: "acetate",
    forms: ["CH3COOH", "CH3COO-", "", ""],
    steps: 1,
    log_k: [LogK::analytic(3.1649, -1170.48, -0.013_399, 0.0, 0.0), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "CH3COOH",
};

/// Ammonium: NH4⁺ / NH3. Bates & Pinching (1949) (from memory): pK = 2835.76/T − 0.6322 +
/// 0.001225·T (coefficients from memory, not yet checked against the paper; said to agree with
/// Millero & Pierrot 1998, not checked); pK = 10.084 / 9.244 / 8.539 / 8.288 at 0 / 25 / 50 / 60 °C
/// (calc). Benjamin, "Water Chemistry", 2nd ed., Appendix A gives 9.244 at 25 °C (checked, via a
/// public transcription).
pub const AMMONIUM: AcidBaseSystem = AcidBaseSystem {
    key: "ammonium",
    forms: ["NH4+", "NH3", "", ""],
    steps: 1,
    log_k: [LogK::analytic(0.6322, -2835.76, -0.001_225, 0.0, 0.0), NONE, NONE],
    charge_protonated: 1,
    parent_acid: "",
};

/// Borate: B(OH)3 / B(OH)4⁻. Manov, DeLollis & Acree (1944), J. Res. NBS 33, 287:
/// pK = 2237.94/T + 0.016883·T − 3.305, fitted 0–60 °C (checked, via the paper's abstract);
/// 9.235 at 25 °C (calc). Beyond 60 °C the fit is extrapolated. Goldberg et al. 2002 give
/// 9.237; 13.8 kJ/mol (from memory); Millero's formula gives 9.236 (calc).
pub const BORATE: AcidBaseSystem = AcidBaseSystem {
    key: "borate",
    forms: ["B(OH)3", "B(OH)4-", "", ""],
    steps: 1,
    log_k: [LogK::analytic(3.305, -2237.94, -0.016_883, 0.0, 0.0), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "H3BO3",
};

/// Sulfate's second proton: HSO4⁻ / SO4²⁻ (the first proton of H2SO4 is strong). pKa 1.99,
/// ΔH° −21.9 kJ/mol — Benjamin, "Water Chemistry", 2nd ed. (checked). Not replaced yet:
/// Dickson's (1990) ln K = 141.328 − 4276.1/T − 23.093·ln T (checked, via public transcriptions)
/// gives pK 1.685 / 1.993 / 2.319 / 2.452 at 0 / 25 / 50 / 60 °C (calc), 0.011–0.025 away from
/// the Clegg, Rard & Pitzer (1994) values (1.674 / 1.979 / 2.330 / 2.477,
/// from memory); which to adopt is still open.
pub const SULFATE: AcidBaseSystem = AcidBaseSystem {
    key: "sulfate",
    forms: ["HSO4-", "SO4^2-", "", ""],
    steps: 1,
    log_k: [LogK::vant_hoff(1.99, -21.9), NONE, NONE],
    charge_protonated: -1,
    parent_acid: "H2SO4",
};

/// Hypochlorite: HOCl / OCl⁻. Morris (1966), J. Phys. Chem. 70, 3798: pKa = 3000/T − 10.0686 +
/// 0.0253·T (checked); 7.537 at 25 °C (calc).
pub const HYPOCHLORITE: AcidBaseSystem = AcidBaseSystem {
    key: "hypochlorite",
    forms: ["HOCl", "OCl-", "", ""],
    steps: 1,
    log_k: [LogK::analytic(10.0686, -3000.0, -0.0253, 0.0, 0.0), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "HOCl",
};

/// Fluoride: HF / F⁻. pKa 3.17 (calc from Millero's formula, checked formula), ΔH° −13 kJ/mol
/// (from memory, NBS tables).
pub const FLUORIDE: AcidBaseSystem = AcidBaseSystem {
    key: "fluoride",
    forms: ["HF", "F-", "", ""],
    steps: 1,
    log_k: [LogK::vant_hoff(3.17, -13.0), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "HF",
};

/// Citrate: H3Cit / H2Cit⁻ / HCit²⁻ / Cit³⁻. pKa; ΔH° (kJ/mol): 3.128; 4.07 · 4.761; 2.23 ·
/// 6.396; −3.38 — Goldberg et al. (2002) (from memory).
pub const CITRATE: AcidBaseSystem = AcidBaseSystem {
    key: "citrate",
    forms: ["H3Cit", "H2Cit-", "HCit^2-", "Cit^3-"],
    steps: 3,
    log_k: [LogK::vant_hoff(3.128, 4.07), LogK::vant_hoff(4.761, 2.23), LogK::vant_hoff(6.396, -3.38)],
    charge_protonated: 0,
    parent_acid: "C6H8O7",
};

/// Formate: HCOOH / HCOO⁻. pKa 3.75 (CRC Handbook, from memory; OpenStax "Chemistry 2e"
/// Appendix H lists Ka 1.8e-4, pKa 3.74, checked), ΔH° ≈ −0.1 kJ/mol (NBS tables, from memory).
pub const FORMATE: AcidBaseSystem = AcidBaseSystem {
    key: "formate",
    forms: ["HCOOH", "HCOO-", "", ""],
    steps: 1,
    log_k: [LogK::vant_hoff(3.75, -0.1), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "HCOOH",
};

/// Oxalate: H2C2O4 / HC2O4⁻ / C2O4²⁻. pKa; ΔH° (kJ/mol): 1.25; 0 · 4.27; −6.7 (CRC / Martell &
/// Smith / NBS tables, from memory; OpenStax "Chemistry 2e" Appendix H lists Ka 6.0e-2 and
/// 6.1e-5, pKa 1.22 and 4.21, checked, not thermodynamic).
pub const OXALATE: AcidBaseSystem = AcidBaseSystem {
    key: "oxalate",
    forms: ["H2C2O4", "HC2O4-", "C2O4^2-", ""],
    steps: 2,
    log_k: [LogK::vant_hoff(1.25, 0.0), LogK::vant_hoff(4.27, -6.7), NONE],
    charge_protonated: 0,
    parent_acid: "H2C2O4",
};

/// Sulfide, first step only: H2S / HS⁻ (the second pKa, 17–19, is negligible in water).
/// pKa 6.98 (calc from Millero's formula, checked formula), ΔH° 22 kJ/mol (NBS tables, from
/// memory).
pub const SULFIDE: AcidBaseSystem = AcidBaseSystem {
    key: "sulfide",
    forms: ["H2S", "HS-", "", ""],
    steps: 1,
    log_k: [LogK::vant_hoff(6.98, 22.0), NONE, NONE],
    charge_protonated: 0,
    parent_acid: "H2S",
};

/// Silicate, first step only: Si(OH)4 / SiO(OH)3⁻. Millero (1995), Geochim. Cosmochim. Acta 59,
/// 661: ln K = −8904.2/T + 117.385 − 19.334·ln T (checked), rewritten in log10 form
/// (a = 117.385/ln10, b = −8904.2/ln10, d = −19.334); pKa 9.83 at 25 °C (calc).
pub const SILICATE: AcidBaseSystem = AcidBaseSystem {
    key: "silicate",
    forms: ["Si(OH)4", "SiO(OH)3-", "", ""],
    steps: 1,
    log_k: [
        LogK::analytic(117.385 / core::f64::consts::LN_10, -8904.2 / core::f64::consts::LN_10, 0.0, -19.334, 0.0),
        NONE,
        NONE,
    ],
    charge_protonated: 0,
    parent_acid: "H4SiO4",
};

/// Phthalate: H2Phth / HPhth⁻ / Phth²⁻ (for potassium hydrogen phthalate). pKa 2.950 and
/// 5.408 at 25 °C with ΔH° −2.7 and −2.2 kJ/mol (Hamer, Pinching & Acree 1945/1946 and
/// Goldberg et al. 2002, from memory).
pub const PHTHALATE: AcidBaseSystem = AcidBaseSystem {
    key: "phthalate",
    forms: ["H2Phth", "HPhth-", "Phth^2-", ""],
    steps: 2,
    log_k: [LogK::vant_hoff(2.950, -2.7), LogK::vant_hoff(5.408, -2.2), NONE],
    charge_protonated: 0,
    parent_acid: "H2C8H4O4",
};

/// Every built-in system.
pub const ALL: [&AcidBaseSystem; 14] = [
    &CARBONATE,
    &PHOSPHATE,
    &ACETATE,
    &AMMONIUM,
    &BORATE,
    &SULFATE,
    &HYPOCHLORITE,
    &FLUORIDE,
    &CITRATE,
    &FORMATE,
    &OXALATE,
    &SULFIDE,
    &SILICATE,
    &PHTHALATE,
];

/// Looks a built-in system up by its key ("carbonate", "phosphate" …).
pub fn by_key(key: &str) -> Option<&'static AcidBaseSystem> {
    ALL.iter().copied().find(|s| s.key == key)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_entry_is_valid_and_keys_are_unique() {
        for (i, s) in ALL.iter().enumerate() {
            assert!(s.validate().is_ok(), "{}", s.key);
            for t in ALL.iter().skip(i + 1) {
                assert_ne!(s.key, t.key);
            }
            // pKa ascend within a system at 25 °C.
            let pk: [Option<f64>; 3] = [1, 2, 3].map(|j| s.pka(j, 298.15));
            for w in pk.windows(2) {
                if let [Some(a), Some(b)] = w {
                    assert!(a < b, "{}: {a} !< {b}", s.key);
                }
            }
        }
    }

    #[test]
    fn carbonate_matches_plummer_busenberg_table() {
        // pK1, pK2 at 0, 25, 50 °C computed by hand from the published Plummer & Busenberg (1982,
        // Geochim. Cosmochim. Acta 46, 1011) log K1(T) and log K2(T) fits (calc from the checked formula).
        for (t, pk1, pk2) in [(0.0, 6.579, 10.629), (25.0, 6.352, 10.329), (50.0, 6.286, 10.174)] {
            let tk = 273.15 + t;
            let got1: f64 = CARBONATE.pka(1, tk).unwrap();
            let got2: f64 = CARBONATE.pka(2, tk).unwrap();
            assert!((got1 - pk1).abs() < 0.001 && (got2 - pk2).abs() < 0.001, "{t}: {got1} {got2}");
        }
    }

    #[test]
    fn analytic_fits_at_25c() {
        // Morris (1966) HOCl formula: 7.537 at 25 °C, 7.825 at 0 °C (calc); Millero silicate 9.83.
        assert!((HYPOCHLORITE.pka(1, 298.15_f64).unwrap() - 7.537).abs() < 0.001);
        assert!((HYPOCHLORITE.pka(1, 273.15_f64).unwrap() - 7.825).abs() < 0.001);
        assert!((SILICATE.pka(1, 298.15_f64).unwrap() - 9.83).abs() < 0.01);
        // Manov et al. (1944) borate fit: 9.2348 at 25 °C, 9.4997 at 0 °C (calc from the formula).
        assert!((BORATE.pka(1, 298.15_f64).unwrap() - 9.2348).abs() < 1e-3);
        assert!((BORATE.pka(1, 273.15_f64).unwrap() - 9.4997).abs() < 1e-3);
        assert_eq!(by_key("borate").map(|s| s.key), Some("borate"));
        assert!(by_key("unobtainium").is_none());
    }
}
