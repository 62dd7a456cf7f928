//! Checks against the outside world: textbook worked examples, IUPAC standard buffers and their temperature tables.
//!
//! Every reference value names its source beside it. Textbook examples are solved with the
//! book's own constants (test-only systems built with `LogK::vant_hoff(pKa, 0.0)`), ideal
//! activities, at 25 °C. Standard buffers are solved with the catalogue constants and Davies
//! activities. Kw / pKw table values are unit-tested in `src/chem/water.rs` and not repeated.
//!
//! Tolerances for textbook examples:
//! - The books print pH to 2 decimals (±0.005 rounding).
//! - The books use Kw = 1.0e-14; the model's Kw(25 °C) has pKw = 13.995 (Bandura & Lvov 2006).
//!   An acidic solution's pH does not depend on Kw here; a basic solution's pH moves by up to
//!   0.005 (pOH is fixed by the chemistry, pH = pKw − pOH).
//! - Hence `TOL_ACIDIC` = 0.01 and `TOL_BASIC` = 0.012 (0.005 + 0.005 + 0.002 margin).
//!   Concentrations printed to two significant figures are checked to ± half a unit of the
//!   last printed digit.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::chem::water::density_kg_per_l;
use phdose::chem::{AcidBaseSystem, Activity, LogK, MAX_STEPS, Solution};
use phdose::units::Celsius;

/// Acidic textbook cases: printed rounding ±0.005, doubled for the books' own rounding of
/// intermediate results (see the module docs).
const TOL_ACIDIC: f64 = 0.01;
/// Basic textbook cases: printed rounding ±0.005 plus up to 0.005 from Kw (1.0e-14 in the book,
/// 10^−13.995 in the model) plus 0.002 margin.
const TOL_BASIC: f64 = 0.012;

/// A test-only acid–base system with the textbook's own pKa values (temperature-independent:
/// the examples are all at 25 °C).
fn textbook_system(
    key: &'static str,
    forms: [&'static str; MAX_STEPS + 1],
    charge_protonated: i8,
    pkas: &[f64],
) -> &'static AcidBaseSystem {
    let mut log_k = [LogK::vant_hoff(0.0, 0.0); MAX_STEPS];
    for (k, pka) in log_k.iter_mut().zip(pkas) {
        *k = LogK::vant_hoff(*pka, 0.0);
    }
    let system = AcidBaseSystem {
        key,
        forms,
        steps: u8::try_from(pkas.len()).unwrap(),
        log_k,
        charge_protonated,
        parent_acid: "",
    };
    system.validate().unwrap();
    // A solution refers to its systems for its whole life; a test may leak a few.
    Box::leak(Box::new(system))
}

/// pKa from a printed Ka.
fn pk(ka: f64) -> f64 {
    -ka.log10()
}

/// The textbooks' Kw.
const TEXTBOOK_PKW: f64 = 14.0;

fn ideal_25() -> Solution<f64, 4> {
    Solution::new(Celsius::standard(), Activity::Ideal)
}

fn assert_ph(case: &str, got: f64, printed: f64, tol: f64) {
    println!("{case}: model pH {got:.4}, printed {printed}, deviation {:+.4}", got - printed);
    assert!((got - printed).abs() <= tol, "{case}: model pH {got}, printed {printed} (tolerance {tol})");
}

/// `value` must round to `printed`, which has `sig` significant figures.
fn assert_printed(case: &str, what: &str, value: f64, printed: f64, sig: i32) {
    let exponent = printed.abs().log10().floor();
    let half_unit = 0.5 * 10f64.powf(exponent - f64::from(sig - 1));
    println!("{case}: {what} = {value:.4e}, printed {printed:e}");
    assert!(
        (value - printed).abs() <= half_unit * 1.000_001,
        "{case}: {what} = {value:e} does not round to the printed {printed:e}"
    );
}

// ---------------------------------------------------------------------------------------------
// a. Textbook worked examples (25 °C, ideal activities, the book's constants).
// ---------------------------------------------------------------------------------------------

#[test]
fn harvey_alanine_hydrochloride() {
    // D. Harvey, "Modern Analytical Chemistry", 1st ed. (McGraw-Hill 2000), §6G.5, p. 163:
    // 0.10 M alanine hydrochloride (H2L+ with Cl- spectator), pKa1 = 2.348, pKa2 = 9.867;
    // printed [H3O+] = 1.91e-2 M, pH = 1.72.
    let alanine = textbook_system("test-alanine", ["H2L+", "HL", "L-", ""], 1, &[2.348, 9.867]);
    let mut s = ideal_25();
    s.add_system(alanine, 0.10).unwrap();
    s.add_strong_ion(-1, 0.10).unwrap(); // Cl-
    let eq = s.solve().unwrap();
    assert_ph("Harvey alanine·HCl", eq.ph, 1.72, TOL_ACIDIC);
    assert_printed("Harvey alanine·HCl", "[H3O+]", s.speciate(&eq).h_mol_per_l, 1.91e-2, 3);
}

#[test]
fn openstax_anilinium_chloride() {
    // OpenStax "Chemistry 2e" (2019), §14.4, example "Calculating the pH of an Acidic Salt
    // Solution": 0.233 M C6H5NH3Cl, Kb(aniline) = 4.3e-10, Kw = 1.0e-14 → Ka = 2.3e-5;
    // printed [H3O+] = 0.0023 M, pH = 2.64.
    let pka = TEXTBOOK_PKW - pk(4.3e-10);
    let anilinium = textbook_system("test-anilinium", ["C6H5NH3+", "C6H5NH2", "", ""], 1, &[pka]);
    let mut s = ideal_25();
    s.add_system(anilinium, 0.233).unwrap();
    s.add_strong_ion(-1, 0.233).unwrap(); // Cl-
    let eq = s.solve().unwrap();
    assert_ph("OpenStax anilinium chloride", eq.ph, 2.64, TOL_ACIDIC);
    assert_printed("OpenStax anilinium chloride", "[H3O+]", s.speciate(&eq).h_mol_per_l, 0.0023, 2);
}

#[test]
fn openstax_sodium_cyanide() {
    // OpenStax "Chemistry 2e", §14.4, "Equilibrium in a Solution of a Salt of a Weak Acid and a
    // Strong Base", Check Your Learning: 0.083 M NaCN, Ka(HCN) = 4.9e-10 (Appendix H);
    // printed pH = 11.11.
    let cyanide = textbook_system("test-cyanide", ["HCN", "CN-", "", ""], 0, &[pk(4.9e-10)]);
    let mut s = ideal_25();
    s.add_system(cyanide, 0.083).unwrap();
    s.add_strong_ion(1, 0.083).unwrap(); // Na+
    let eq = s.solve().unwrap();
    assert_ph("OpenStax NaCN", eq.ph, 11.11, TOL_BASIC);
}

#[test]
fn openstax_aluminium_chloride() {
    // OpenStax "Chemistry 2e", §14.4, example "Hydrolysis of [Al(H2O)6]3+": 0.10 M AlCl3,
    // Ka([Al(H2O)6]3+) = 1.4e-5 (first step only); printed [H3O+] = 1.2e-3 M, pH = 2.92.
    // The book's pH comes from the rounded [H3O+] (−log 1.2e-3 = 2.921); the unrounded
    // approximate and exact answers are 2.927 and 2.930, so this case uses the 0.01 tolerance
    // fully.
    let aluminium =
        textbook_system("test-hexaaquaaluminium", ["Al(H2O)6^3+", "Al(H2O)5OH^2+", "", ""], 3, &[pk(1.4e-5)]);
    let mut s = ideal_25();
    s.add_system(aluminium, 0.10).unwrap();
    s.add_strong_ion(-1, 0.30).unwrap(); // 3 Cl-
    let eq = s.solve().unwrap();
    assert_ph("OpenStax AlCl3", eq.ph, 2.92, TOL_ACIDIC);
    assert_printed("OpenStax AlCl3", "[H3O+]", s.speciate(&eq).h_mol_per_l, 1.2e-3, 2);
}

#[test]
fn openstax_carbonic_acid_speciation() {
    // OpenStax "Chemistry 2e", §14.5, example "Ionization of a Diprotic Acid": 0.033 M H2CO3,
    // Ka1 = 4.3e-7, Ka2 = 4.7e-11; printed [H3O+] = [HCO3-] = 1.2e-4 M, [CO3 2-] = 4.7e-11 M,
    // [H2CO3] = 0.033 M.
    let carbonic = textbook_system("test-carbonic", ["H2CO3", "HCO3-", "CO3^2-", ""], 0, &[pk(4.3e-7), pk(4.7e-11)]);
    let mut s = ideal_25();
    s.add_system(carbonic, 0.033).unwrap();
    let eq = s.solve().unwrap();
    let sp = s.speciate(&eq);
    let forms = sp.forms_mol_per_l[0];
    let case = "OpenStax H2CO3";
    assert_printed(case, "[H3O+]", sp.h_mol_per_l, 1.2e-4, 2);
    assert_printed(case, "[HCO3-]", forms[1], 1.2e-4, 2);
    assert_printed(case, "[CO3 2-]", forms[2], 4.7e-11, 2);
    assert_printed(case, "[H2CO3]", forms[0], 0.033, 2);
}

#[test]
fn openstax_hydrogen_sulfide_speciation() {
    // OpenStax "Chemistry 2e", §14.5, same example, Check Your Learning: 0.1 M H2S,
    // Ka1 = 8.9e-8, Ka2 = 1.0e-19; printed [H3O+] = [HS-] = 9.4e-5 M, [S2-] = 1e-19 M.
    let sulfide = textbook_system("test-sulfide", ["H2S", "HS-", "S^2-", ""], 0, &[pk(8.9e-8), pk(1.0e-19)]);
    let mut s = ideal_25();
    s.add_system(sulfide, 0.1).unwrap();
    let eq = s.solve().unwrap();
    let sp = s.speciate(&eq);
    let forms = sp.forms_mol_per_l[0];
    let case = "OpenStax H2S";
    assert_printed(case, "[H3O+]", sp.h_mol_per_l, 9.4e-5, 2);
    assert_printed(case, "[HS-]", forms[1], 9.4e-5, 2);
    assert_printed(case, "[S2-]", forms[2], 1e-19, 1);
}

#[test]
fn openstax_formic_acid() {
    // OpenStax "Chemistry 2e", §14.3, example "Calculating Equilibrium Concentrations in a Weak
    // Acid Solution": 0.534 M HCO2H, Ka = 1.8e-4; printed [H3O+] = 0.0098 M (x << C
    // approximation; the exact quadratic gives 0.0097), pH = 2.01.
    let formic = textbook_system("test-formic", ["HCOOH", "HCOO-", "", ""], 0, &[pk(1.8e-4)]);
    let mut s = ideal_25();
    s.add_system(formic, 0.534).unwrap();
    let eq = s.solve().unwrap();
    assert_ph("OpenStax formic acid", eq.ph, 2.01, TOL_ACIDIC);
}

#[test]
fn openstax_trimethylamine() {
    // OpenStax "Chemistry 2e", §14.3, example "Calculating Equilibrium Concentrations in a Weak
    // Base Solution": 0.25 M (CH3)3N, Kb = 6.3e-5, pKw = 14.00; printed [OH-] = 4.0e-3 M,
    // pOH = 2.40, pH = 11.60.
    let pka = TEXTBOOK_PKW - pk(6.3e-5);
    let tma = textbook_system("test-trimethylamine", ["(CH3)3NH+", "(CH3)3N", "", ""], 1, &[pka]);
    let mut s = ideal_25();
    // A system whose protonated form is a cation, added without strong ions: the free base.
    s.add_system(tma, 0.25).unwrap();
    let eq = s.solve().unwrap();
    assert_ph("OpenStax trimethylamine", eq.ph, 11.60, TOL_BASIC);
    assert_printed("OpenStax trimethylamine", "[OH-]", s.speciate(&eq).oh_mol_per_l, 4.0e-3, 2);
}

#[test]
fn openstax_sodium_hydrogen_sulfate() {
    // OpenStax "Chemistry 2e", §14.3, example "Calculating Equilibrium Concentrations without
    // Simplifying Assumptions": 0.50 M NaHSO4, Ka(HSO4-) = 1.2e-2; quadratic → printed
    // [H3O+] = 0.072 M, pH = 1.14.
    let bisulfate = textbook_system("test-hydrogensulfate", ["HSO4-", "SO4^2-", "", ""], -1, &[pk(1.2e-2)]);
    let mut s = ideal_25();
    s.add_system(bisulfate, 0.50).unwrap();
    s.add_strong_ion(1, 0.50).unwrap(); // Na+
    let eq = s.solve().unwrap();
    assert_ph("OpenStax NaHSO4", eq.ph, 1.14, TOL_ACIDIC);
    assert_printed("OpenStax NaHSO4", "[H3O+]", s.speciate(&eq).h_mol_per_l, 0.072, 2);
}

#[test]
fn openstax_unbuffered_solution_plus_base() {
    // OpenStax "Chemistry 2e", §14.6, example "pH Changes in Buffered and Unbuffered
    // Solutions", part (c): 100 mL of a strong-acid (HCl) solution at pH 4.74 ([H3O+] = 1.8e-5
    // M) plus 1.0 mL of 0.10 M NaOH; printed [OH-] = 9.7e-4 M, pH = 10.99. Exercises `mix`.
    let mut acid = ideal_25();
    acid.add_formula("HCl", 1.8e-5).unwrap();
    let mut base = ideal_25();
    base.add_formula("NaOH", 0.10).unwrap();
    let mixed = acid.mix(100.0, &base, 1.0).unwrap();
    let eq = mixed.solve().unwrap();
    assert_ph("OpenStax unbuffered + NaOH", eq.ph, 10.99, TOL_BASIC);
    assert_printed("OpenStax unbuffered + NaOH", "[OH-]", mixed.speciate(&eq).oh_mol_per_l, 9.7e-4, 2);
}

#[test]
fn openstax_strong_acid_strong_base_titration_points() {
    // OpenStax "Chemistry 2e", §14.7, example "Calculating pH for Titration Solutions: Strong
    // Acid/Strong Base": 25.00 mL 0.100 M HCl with 0.100 M NaOH. Printed: 0.00 mL → pH 1.000;
    // 12.50 mL → [H3O+] = 0.0333 M; 37.50 mL → [OH-] = 0.0200 M, pH 12.30.
    let mut acid = ideal_25();
    acid.add_formula("HCl", 0.100).unwrap();
    let mut base = ideal_25();
    base.add_formula("NaOH", 0.100).unwrap();
    let case = "OpenStax HCl/NaOH";
    let start = acid.solve().unwrap();
    // 1.000 printed to three decimals: the acidic tolerance is ample; check it to ±0.0005.
    assert_ph(case, start.ph, 1.000, 0.0005);
    let quarter = acid.mix(25.00, &base, 12.50).unwrap();
    let eq = quarter.solve().unwrap();
    assert_printed(case, "[H3O+] at 12.50 mL", quarter.speciate(&eq).h_mol_per_l, 0.0333, 3);
    let past = acid.mix(25.00, &base, 37.50).unwrap();
    let eq = past.solve().unwrap();
    assert_ph(case, eq.ph, 12.30, TOL_BASIC);
    assert_printed(case, "[OH-] at 37.50 mL", past.speciate(&eq).oh_mol_per_l, 0.0200, 3);
    // Check Your Learning, same example: 50.0 mL 0.100 M HNO3 with 0.200 M NaOH; printed
    // pH 12.523 at 40.0 mL (three decimals: ±0.0005 rounding + 0.005 from Kw + margin).
    let mut nitric = ideal_25();
    nitric.add_formula("HNO3", 0.100).unwrap();
    let mut strong_base = ideal_25();
    strong_base.add_formula("NaOH", 0.200).unwrap();
    let eq = nitric.mix(50.0, &strong_base, 40.0).unwrap().solve().unwrap();
    assert_ph("OpenStax HNO3/NaOH", eq.ph, 12.523, 0.007);
}

// ---------------------------------------------------------------------------------------------
// b., c. Standard buffers (catalogue constants, Davies activities).
// ---------------------------------------------------------------------------------------------

/// Tolerance for the standard buffers at 25 °C with Davies activities.
const TOL_BUFFER_25C: f64 = 0.02;
/// Tolerance for the carbonate buffer over 0–50 °C (measured worst case 0.0093, at 25 °C).
const TOL_CARBONATE_T: f64 = 0.015;

/// pH (activity scale) of a buffer given in mol/kg. The molal amounts are turned into mol/L
/// with the density of pure water (the solutes' own volume changes c by < 0.3 % here, which
/// moves a buffer's pH by < 0.001).
fn buffer_ph(celsius: f64, recipe: &[(&str, f64)]) -> f64 {
    let t = Celsius::new(celsius).unwrap();
    let rho = density_kg_per_l(t);
    let mut s: Solution<f64, 4> = Solution::new(t, Activity::Davies);
    for (formula, mol_per_kg) in recipe {
        s.add_formula(formula, mol_per_kg * rho).unwrap();
    }
    s.solve().unwrap().ph
}

const PHOSPHATE_1_1: &[(&str, f64)] = &[("KH2PO4", 0.025), ("Na2HPO4", 0.025)];
const BORAX: &[(&str, f64)] = &[("Na2B4O7", 0.01)];
const CARBONATE_1_1: &[(&str, f64)] = &[("NaHCO3", 0.025), ("Na2CO3", 0.025)];
const KHP: &[(&str, f64)] = &[("KHC8H4O4", 0.05)];

#[test]
fn iupac_standard_buffers_at_25c() {
    // pH(S) at 25 °C: Buck et al. 2002, Pure Appl. Chem. 74, 2169 (IUPAC recommendations; NIST
    // values; the numbers read through an independent open-source transcription of the table). Phosphate 0.025/0.025 mol/kg 6.865;
    // borax 0.01 mol/kg 9.180; carbonate 0.025/0.025 mol/kg 10.012 (borax and carbonate also
    // "Two new standards for the pH scale", J. Res. NBS 73A, 37, 1969); KHP 0.05 mol/kg 4.005
    // (also Hamer, Pinching & Acree 1946, J. Res. NBS 36, 47).
    let cases = [
        ("phosphate 0.025/0.025", PHOSPHATE_1_1, 6.865),
        ("borax 0.01", BORAX, 9.180),
        ("carbonate 0.025/0.025", CARBONATE_1_1, 10.012),
        ("KHP 0.05", KHP, 4.005),
    ];
    let mut failures = 0;
    for (name, recipe, ph_s) in cases {
        let got = buffer_ph(25.0, recipe);
        println!("buffer {name}: model {got:.4}, IUPAC {ph_s}, deviation {:+.4}", got - ph_s);
        if (got - ph_s).abs() > TOL_BUFFER_25C {
            failures += 1;
        }
    }
    assert_eq!(failures, 0, "a standard buffer is off by more than {TOL_BUFFER_25C}");
}

#[test]
fn carbonate_buffer_follows_the_iupac_temperature_table() {
    // 0.025/0.025 mol/kg NaHCO3/Na2CO3, pH(S) at 0–50 °C: Buck et al. 2002 (IUPAC; numbers read
    // through an independent open-source transcription of the table). Model constants: Plummer & Busenberg 1982 (catalogue CARBONATE).
    let table = [
        (0.0, 10.317),
        (5.0, 10.245),
        (10.0, 10.179),
        (15.0, 10.118),
        (20.0, 10.062),
        (25.0, 10.012),
        (30.0, 9.966),
        (35.0, 9.925),
        (40.0, 9.889),
        (45.0, 9.857),
        (50.0, 9.828),
    ];
    let mut worst = 0.0_f64;
    for (t, ph_s) in table {
        let got = buffer_ph(t, CARBONATE_1_1);
        let d = got - ph_s;
        println!("carbonate buffer {t:>4} °C: model {got:.4}, IUPAC {ph_s}, deviation {d:+.4}");
        worst = worst.max(d.abs());
        assert!(d.abs() <= TOL_CARBONATE_T, "carbonate buffer at {t} °C: {got} vs {ph_s}");
    }
    println!("carbonate buffer 0–50 °C: worst |deviation| {worst:.4}");
}

#[test]
fn khp_follows_hamer_pinching_acree_formula() {
    // Hamer, Pinching & Acree 1946, J. Res. NBS 36, 47 (RP1690): 0.05 mol/kg KHP,
    // pH = 1336.08/T − 5.2678 + 0.016069·T with T = t + 273.16, valid 0–60 °C.
    //
    // The catalogue's phthalate constants use constant-ΔH° van 't Hoff (pK and ΔH° from memory
    // of Hamer et al. / Goldberg et al. 2002). The measured KHP pH has a minimum near 15 °C — a
    // heat-capacity term the van 't Hoff form cannot carry — so the model drifts away at the
    // ends of the range: measured deviation −0.033 at 0 °C, +0.008 at 25 °C, −0.022 at 50 °C,
    // −0.050 at 60 °C. This test holds the 10–40 °C band to 0.015 and the whole 0–60 °C range
    // to 0.06 (the measured worst case plus 0.01), so a regression in either shows up.
    let mut worst = 0.0_f64;
    for t in [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0, 55.0, 60.0] {
        let tk = t + 273.16;
        let hamer = 1336.08 / tk - 5.2678 + 0.016_069 * tk;
        let got = buffer_ph(t, KHP);
        let d = got - hamer;
        println!("KHP {t:>4} °C: model {got:.4}, Hamer et al. {hamer:.4}, deviation {d:+.4}");
        worst = worst.max(d.abs());
        let tol = if (10.0..=40.0).contains(&t) { 0.015 } else { 0.06 };
        assert!(d.abs() <= tol, "KHP at {t} °C: {got} vs {hamer}");
    }
    println!("KHP 0–60 °C: worst |deviation| {worst:.4}");
}

// ---------------------------------------------------------------------------------------------
// d. Catalogue pK(T) against the published temperature functions.
// ---------------------------------------------------------------------------------------------

/// Tolerance for a catalogue pK against the value computed from its published function: the
/// four-decimal values below are rounded to 0.001, and the catalogue holds the same function, so
/// any deviation beyond rounding means a wrong coefficient or a wrong ln → log10 conversion.
const TOL_PK_FUNCTION: f64 = 0.005;

/// pK of `step` of `system` at `celsius`, read the way the solver reads it (the solution's
/// cached constant).
fn catalogue_pk(system: &'static AcidBaseSystem, step: usize, celsius: f64) -> f64 {
    let mut s: Solution<f64, 4> = Solution::new(Celsius::new(celsius).unwrap(), Activity::Ideal);
    s.add_system(system, 1e-3).unwrap();
    s.component_pka(0, step).unwrap()
}

/// Each row: system, step, source, pK at 0 / 25 / 50 / 60 °C.
///
/// The four pK values are NOT read from the sources' measurement tables: they were computed here
/// (python3, by hand, outside the crate) from the published temperature function named beside
/// them, at T = 273.15 / 298.15 / 323.15 / 333.15 K, rounded to 0.001. They check that the
/// catalogue carries each function with the right coefficients, sign and ln → log10 conversion.
/// Coefficients marked "from memory" have not been checked against the papers themselves.
const PUBLISHED_PK_T: [(&str, usize, &str, [f64; 4]); 4] = [
    (
        "acetate",
        1,
        // Harned & Ehlers (1933), J. Am. Chem. Soc. 55, 652 (volume/page from memory):
        // pK = 1170.48/T − 3.1649 + 0.013399·T (from memory), calc.
        "Harned & Ehlers 1933",
        [4.780, 4.756, 4.787, 4.812],
    ),
    (
        "phosphate",
        1,
        // Bates (1951), J. Res. NBS 47, 127 (volume/page from memory):
        // pK1 = 799.31/T − 4.5535 + 0.013486·T (from memory), calc.
        "Bates 1951",
        [2.056, 2.148, 2.278, 2.339],
    ),
    (
        "phosphate",
        2,
        // Millero (1995), Geochim. Cosmochim. Acta 59, 661, K2P at S = 0:
        // ln K2 = 172.1033 − 8814.715/T − 27.927·ln T (checked, via public transcriptions), calc.
        "Millero 1995 (S = 0)",
        [7.313, 7.200, 7.183, 7.197],
    ),
    (
        "ammonium",
        1,
        // Bates & Pinching (1949): pK = 2835.76/T − 0.6322 + 0.001225·T (from memory), calc.
        "Bates & Pinching 1949",
        [10.084, 9.244, 8.539, 8.288],
    ),
];

#[test]
fn catalogue_pk_follows_the_published_temperature_functions() {
    let mut worst = 0.0_f64;
    for (key, step, source, pks) in PUBLISHED_PK_T {
        let system = phdose::chem::catalogue::by_key(key).unwrap();
        for (celsius, published) in [0.0, 25.0, 50.0, 60.0].into_iter().zip(pks) {
            let got = catalogue_pk(system, step, celsius);
            let d = got - published;
            println!("{key} pK{step} {celsius:>4} °C: crate {got:.4}, {source} {published:.3}, deviation {d:+.4}");
            worst = worst.max(d.abs());
            assert!(d.abs() <= TOL_PK_FUNCTION, "{key} pK{step} at {celsius} °C: {got} vs {published} ({source})");
        }
    }
    println!("catalogue pK(T) vs published functions: worst |deviation| {worst:.4}");
}

/// Tolerance for the phosphate buffer over 0–50 °C (measured worst case 0.0186, at 0 °C; 0.0129
/// of it is the 25 °C offset that `iupac_standard_buffers_at_25c` also sees).
const TOL_PHOSPHATE_T: f64 = 0.025;
/// Bound on the spread (max − min) of the phosphate buffer's deviation over 0–50 °C: the shape of
/// the curve, whatever the 25 °C offset. Measured 0.0065 with the published pK(T) functions; the
/// former constant-ΔH° van 't Hoff constants gave 0.054 (−0.027 at 0 °C, +0.013 at 25 °C, −0.026
/// at 50 °C).
const TOL_PHOSPHATE_T_SPREAD: f64 = 0.01;
/// Tolerance for the borax buffer over 0–50 °C (measured worst case 0.0225, at 0 °C).
const TOL_BORAX_T: f64 = 0.03;

#[test]
fn phosphate_and_borax_buffers_follow_the_iupac_temperature_table() {
    // pH(S) at 0–50 °C of 0.025/0.025 mol/kg KH2PO4/Na2HPO4 and 0.01 mol/kg borax: Buck et al.
    // 2002, Pure Appl. Chem. 74, 2169 (IUPAC; NIST values; the same transcription as
    // `phdose::probe::buffers::TABLE`). Model constants: catalogue PHOSPHATE (step 2: Millero 1995
    // at S = 0) and BORATE (Manov, DeLollis & Acree 1944), Davies activities.
    let table = [
        (0.0, 6.984, 9.464),
        (5.0, 6.951, 9.395),
        (10.0, 6.923, 9.332),
        (15.0, 6.900, 9.276),
        (20.0, 6.881, 9.225),
        (25.0, 6.865, 9.180),
        (30.0, 6.853, 9.139),
        (35.0, 6.844, 9.102),
        (40.0, 6.838, 9.068),
        (45.0, 6.834, 9.038),
        (50.0, 6.833, 9.010),
    ];
    let (mut worst_p, mut worst_b) = (0.0_f64, 0.0_f64);
    let (mut min_p, mut max_p) = (f64::INFINITY, f64::NEG_INFINITY);
    for (t, phosphate, borax) in table {
        let got_p = buffer_ph(t, PHOSPHATE_1_1);
        let got_b = buffer_ph(t, BORAX);
        let (dp, db) = (got_p - phosphate, got_b - borax);
        println!(
            "{t:>4} °C: phosphate model {got_p:.4}, IUPAC {phosphate}, deviation {dp:+.4}; borax model {got_b:.4}, IUPAC {borax}, deviation {db:+.4}"
        );
        worst_p = worst_p.max(dp.abs());
        min_p = min_p.min(dp);
        max_p = max_p.max(dp);
        worst_b = worst_b.max(db.abs());
        assert!(dp.abs() <= TOL_PHOSPHATE_T, "phosphate buffer at {t} °C: {got_p} vs {phosphate}");
        assert!(db.abs() <= TOL_BORAX_T, "borax buffer at {t} °C: {got_b} vs {borax}");
    }
    println!(
        "phosphate buffer 0–50 °C: worst |deviation| {worst_p:.4}, spread {:.4}; borax buffer: worst |deviation| {worst_b:.4}",
        max_p - min_p
    );
    assert!(
        max_p - min_p <= TOL_PHOSPHATE_T_SPREAD,
        "phosphate buffer deviation spread {} over 0–50 °C",
        max_p - min_p
    );
}
