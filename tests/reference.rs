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
// b. Catalogue pK(T) against independent published functions and values.
// ---------------------------------------------------------------------------------------------

/// pK of `step` of `system` at `celsius`, read the way the solver reads it (the solution's
/// cached constant).
fn catalogue_pk(system: &'static AcidBaseSystem, step: usize, celsius: f64) -> f64 {
    let mut s: Solution<f64, 4> = Solution::new(Celsius::new(celsius).unwrap(), Activity::Ideal);
    s.add_system(system, 1e-3).unwrap();
    s.component_pka(0, step).unwrap()
}

/// Gas constant used to evaluate Goldberg et al.'s constant-ΔCp form, J/(K·mol) (CODATA 2018; the
/// review itself used 8.31451, which changes these pK values by < 1e-5).
const R: f64 = 8.314_462_618;

/// pK(T) from Goldberg, Kishore & Lennen (2002), J. Phys. Chem. Ref. Data 31, 231: their selected
/// pK, ΔH° (kJ/mol) and ΔCp° (J/(K·mol)) at 298.15 K in the integrated van 't Hoff equation with a
/// constant ΔCp° (their form). Written out here independently of the crate's `clarke_glew`. Also
/// used for other sources that give the same three numbers at 25 °C (Kettler et al. 1991, the ion
/// database of the ionize package), named in each row.
fn goldberg(pk_25: f64, dh_kj: f64, dcp: f64, kelvin: f64) -> f64 {
    let theta = 298.15;
    pk_25
        + ((dh_kj * 1000.0 - dcp * theta) * (1.0 / kelvin - 1.0 / theta) - dcp * (kelvin / theta).ln())
            / (R * std::f64::consts::LN_10)
}

/// pK from a natural-log fit ln K = a + b/T + c·ln T + d·T (the form of Millero & Pierrot 1998 and
/// Millero 2007, Table 11).
fn pk_from_ln_k(a: f64, b: f64, c: f64, d: f64, kelvin: f64) -> f64 {
    -(a + b / kelvin + c * kelvin.ln() + d * kelvin) / std::f64::consts::LN_10
}

/// pK at `kelvin` read from a table of (°C, pK) rows printed by a script under tools/reference/ (the
/// checks below only ask for the table's own temperatures).
fn tabulated(table: &[(f64, f64)], kelvin: f64) -> f64 {
    let celsius = kelvin - 273.15;
    table.iter().find(|(t, _)| (t - celsius).abs() < 1e-6).map(|&(_, pk)| pk).expect("a tabulated temperature")
}

/// pK of oxalic acid = H-oxalate + H+: Shock (1995), Am. J. Sci. 295, 496 (revised-HKF parameters of
/// "oxalic acid" and "H-oxalate" in the OBIGT database), evaluated at 1 bar by `subcrt` of the PyPI
/// package pychnosz 1.5.3; printed by tools/reference/logk_second_sources.py (pinned in
/// tools/reference/requirements-logk.txt). The 0 °C row is CHNOSZ's 0.01 °C.
const SHOCK95_OXALATE_K1: [(f64, f64); 13] = [
    (0.0, 1.2623),
    (5.0, 1.2579),
    (10.0, 1.2569),
    (15.0, 1.2588),
    (20.0, 1.2634),
    (25.0, 1.2703),
    (30.0, 1.2793),
    (35.0, 1.2903),
    (40.0, 1.3031),
    (45.0, 1.3175),
    (50.0, 1.3334),
    (55.0, 1.3507),
    (60.0, 1.3693),
];

/// pK of H-oxalate = oxalate-2 + H+: Shock (1995), as [`SHOCK95_OXALATE_K1`] (same package, script and
/// conditions).
const SHOCK95_OXALATE_K2: [(f64, f64); 13] = [
    (0.0, 4.2034),
    (5.0, 4.2040),
    (10.0, 4.2106),
    (15.0, 4.2220),
    (20.0, 4.2375),
    (25.0, 4.2566),
    (30.0, 4.2786),
    (35.0, 4.3033),
    (40.0, 4.3303),
    (45.0, 4.3594),
    (50.0, 4.3903),
    (55.0, 4.4230),
    (60.0, 4.4571),
];

/// pK of formic acid = formate + H+: Shock (1995), as [`SHOCK95_OXALATE_K1`] (same package, script and
/// conditions; the script's `OBIGT_FORMATE`).
const SHOCK95_FORMATE: [(f64, f64); 13] = [
    (0.0, 3.7949),
    (5.0, 3.7782),
    (10.0, 3.7663),
    (15.0, 3.7585),
    (20.0, 3.7543),
    (25.0, 3.7530),
    (30.0, 3.7543),
    (35.0, 3.7580),
    (40.0, 3.7638),
    (45.0, 3.7715),
    (50.0, 3.7809),
    (55.0, 3.7918),
    (60.0, 3.8041),
];

/// pK of acetic acid = acetate + H+: Shock (1995), as [`SHOCK95_OXALATE_K1`] (same package, script and
/// conditions; OBIGT species "acetic acid" and "acetate").
const SHOCK95_ACETATE: [(f64, f64); 13] = [
    (0.0, 4.7812),
    (5.0, 4.7709),
    (10.0, 4.7636),
    (15.0, 4.7591),
    (20.0, 4.7570),
    (25.0, 4.7572),
    (30.0, 4.7594),
    (35.0, 4.7635),
    (40.0, 4.7694),
    (45.0, 4.7768),
    (50.0, 4.7858),
    (55.0, 4.7963),
    (60.0, 4.8080),
];

/// One check: a catalogue step against a published function or value that is not the one the
/// catalogue carries, at the temperatures the reference covers.
struct PkCheck {
    key: &'static str,
    step: usize,
    /// The reference and where it was read.
    source: &'static str,
    /// Temperatures, °C: the reference's own range, in 5 °C steps.
    celsius: &'static [f64],
    /// The reference pK at a temperature in kelvin.
    reference: fn(f64) -> f64,
    /// Bound on |catalogue − reference|: 0.005 in pK unless the comment beside the row says why the
    /// sources' scatter is larger.
    tol: f64,
}

const T_0_60: &[f64] = &[0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0, 55.0, 60.0];
const T_0_50: &[f64] = &[0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0];
const T_0_45: &[f64] = &[0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0];
const T_0_35: &[f64] = &[0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0];

/// Bounds for the second-source rows whose sources scatter by more than 0.005 in pK: each is the
/// measured worst |catalogue − source| over the row's temperatures, rounded up to the next 0.001 (the
/// row's comment says why the sources part).
const TOL_SHOCK95_OX1: f64 = 0.036;
const TOL_SHOCK95_OX2: f64 = 0.025;
const TOL_IONIZE_OX1: f64 = 0.011;
const TOL_THERMODDEM_P1: f64 = 0.025;

/// The published measurement tables themselves (NBS cell papers of the 1930s–50s) could not be read
/// here; every reference below is a published function of temperature or a published value, read in
/// the source named beside it, and evaluated at the reference's own temperatures.
const PK_CHECKS: &[PkCheck] = &[
    // Carbonate K1: Harned & Davis (1943), J. Am. Chem. Soc. 65, 2030 — their fit to their own
    // cells, 0–50 °C: pK1 = 3404.71/T − 14.8435 + 0.032786·T (checked, as transcribed in several
    // CO2SYS-family and carbonate codes). Catalogue: Plummer & Busenberg 1982.
    PkCheck {
        key: "carbonate",
        step: 1,
        source: "Harned & Davis 1943",
        celsius: T_0_50,
        reference: |t| 3404.71 / t - 14.8435 + 0.032_786 * t,
        tol: 0.005,
    },
    // Carbonate K2: Harned & Scholes (1941), J. Am. Chem. Soc. 63, 1706 (CO2SYS's comment prints
    // the volume as 43) — their fit, 0–50 °C: pK2 = 2902.39/T − 6.4980 + 0.02379·T (checked, as
    // above).
    PkCheck {
        key: "carbonate",
        step: 2,
        source: "Harned & Scholes 1941",
        celsius: T_0_50,
        reference: |t| 2902.39 / t - 6.4980 + 0.023_79 * t,
        tol: 0.005,
    },
    // Phosphate K1: Millero & Pierrot (1998), Aquat. Geochem. 4, 153, refit of Bates's (1951) cells:
    // ln K1 = 115.54 − 4576.7518/T − 18.453·ln T (checked, as transcribed in Pytzer,
    // pytzer/dissociation.py H3PO4_MP98, and in the MyAMI code). Catalogue: Bates 1951 (from memory).
    PkCheck {
        key: "phosphate",
        step: 1,
        source: "Millero & Pierrot 1998 (Bates 1951 cells)",
        celsius: T_0_60,
        reference: |t| pk_from_ln_k(115.54, -4576.7518, -18.453, 0.0, t),
        tol: 0.005,
    },
    // Phosphate K1 at 25 °C: NIST SRD 46 (v3), as carried by PHREEQC's minteq.v4.dat (shipped in the
    // PyPI package phreeqc 1.1.1, printed by tools/reference/logk_second_sources.py): cumulative
    // formation log K 21.721 (H3PO4) and 19.573 (H2PO4-), so pK1 = 2.148, each printed to 0.001: bound
    // 0.002.
    PkCheck {
        key: "phosphate",
        step: 1,
        source: "NIST SRD 46 via minteq.v4.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 21.721 - 19.573,
        tol: 0.002,
    },
    // Phosphate K1: Thermoddem v1.10 (PHREEQC_ThermoddemV1.10_15Dec2020.dat in the same package),
    // H2PO4- + H+ = H3PO4, log K 2.140, `-analytic` 7.1025502E+2 1.1203519E-1 -3.9337065E+4
    // -2.5690201E+2 2.3206641E+6 (its references: "92gre/fug" for log K, "89bsho/hel" for Cp). An
    // independent evaluation, 0.008 below Bates at 25 °C and 0.024 below at 0 °C: that is the
    // sources' scatter, the bound here (measured worst rounded up).
    PkCheck {
        key: "phosphate",
        step: 1,
        source: "Thermoddem v1.10 -analytic",
        celsius: T_0_60,
        reference: |t| {
            7.102_550_2e2 + 1.120_351_9e-1 * t - 3.933_706_5e4 / t - 2.569_020_1e2 * t.log10() + 2.320_664_1e6 / (t * t)
        },
        tol: TOL_THERMODDEM_P1,
    },
    // Phosphate K2: Goldberg et al. (2002), Section 8: pK 7.198, ΔH° 3.6 kJ/mol, ΔCp° −230 J/(K·mol)
    // (checked, via a public transcription). Catalogue: Millero & Pierrot's refit of Bates & Acree
    // (1943). The two evaluations of the same cells differ by up to 0.011 (at 0 °C: 7.303 against
    // 7.313), which is the bound here.
    PkCheck {
        key: "phosphate",
        step: 2,
        source: "Goldberg et al. 2002",
        celsius: T_0_60,
        reference: |t| goldberg(7.198, 3.6, -230.0, t),
        tol: 0.011,
    },
    // Phosphate K3: PHREEQC's phreeqc.dat / wateq4f.dat, PO4-3 + H+ = HPO4-2, log K 12.346,
    // ΔH° −3.530 kcal/mol (checked): van 't Hoff, 14.770 kJ/mol for the dissociation. Catalogue:
    // Benjamin 2015, 12.35 and 14.7 kJ/mol (van 't Hoff), printed to two decimals (±0.005), which
    // with the 0.004 offset at 25 °C makes the bound 0.006.
    PkCheck {
        key: "phosphate",
        step: 3,
        source: "phreeqc.dat / wateq4f.dat",
        celsius: T_0_60,
        reference: |t| goldberg(12.346, 3.530 * 4.184, 0.0, t),
        tol: 0.006,
    },
    // Acetic acid: Goldberg et al. (2002), Section 8: pK 4.756, ΔH° −0.41 kJ/mol, ΔCp° −142 J/(K·mol)
    // (checked, via a public transcription, and in the ion database of the PyPI package ionize 1.5.3,
    // ionize/Database/ion_data.json, "acetic acid": 4.756, −410 J/mol, −142 J/(K·mol), printed by
    // tools/reference/logk_second_sources.py). Catalogue: Harned & Ehlers 1933 (coefficients from
    // memory).
    PkCheck {
        key: "acetate",
        step: 1,
        source: "Goldberg et al. 2002",
        celsius: T_0_60,
        reference: |t| goldberg(4.756, -0.41, -142.0, t),
        tol: 0.005,
    },
    // Acetic acid: Shock (1995), revised-HKF parameters via pychnosz 1.5.3 (table above).
    PkCheck {
        key: "acetate",
        step: 1,
        source: "Shock 1995 via pychnosz 1.5.3",
        celsius: T_0_60,
        reference: |t| tabulated(&SHOCK95_ACETATE, t),
        tol: 0.005,
    },
    // Acetic acid at 25 °C: NIST SRD 46 (v4), as carried by minteq.v4.dat (phreeqc 1.1.1): association
    // log K 4.757 (printed to 0.001; bound 0.002).
    PkCheck {
        key: "acetate",
        step: 1,
        source: "NIST SRD 46 via minteq.v4.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 4.757,
        tol: 0.002,
    },
    // Ammonium: Millero & Pierrot (1998) refit of Bates & Pinching's (1949) cells:
    // ln K = −0.25444 − 6285.33/T + 0.0001635·T (checked, as transcribed in Pytzer, NH4_MP98, and
    // MyAMI). Catalogue: Bates & Pinching's own function. Within 0.005 over the cells' 0–50 °C; the
    // two fits part by 0.008 at 60 °C, so the bound is 0.009.
    PkCheck {
        key: "ammonium",
        step: 1,
        source: "Millero & Pierrot 1998 (Bates & Pinching 1949 cells)",
        celsius: T_0_60,
        reference: |t| pk_from_ln_k(-0.25444, -6285.33, 0.0, 0.000_163_5, t),
        tol: 0.009,
    },
    // Ammonium: Goldberg et al. (2002): 9.245, 51.95 kJ/mol, 8 J/(K·mol) (checked, via a public
    // transcription). Parts from Bates & Pinching by 0.008 at 0 °C: bound 0.009.
    PkCheck {
        key: "ammonium",
        step: 1,
        source: "Goldberg et al. 2002",
        celsius: T_0_60,
        reference: |t| goldberg(9.245, 51.95, 8.0, t),
        tol: 0.009,
    },
    // Boric acid: ln K = 148.0248 − 8966.901/T − 24.4344·ln T, Millero & Pierrot (1998) "following
    // Millero (1979)" (checked, as transcribed in Pytzer, BOH3_M79); the S = 0 terms of Dickson's
    // (1990) function for his cells at 273–318 K (attribution from memory), so 0–45 °C here.
    // Catalogue: Manov, DeLollis & Acree 1944.
    PkCheck {
        key: "borate",
        step: 1,
        source: "Millero 1979 / Dickson 1990 (S = 0)",
        celsius: T_0_45,
        reference: |t| pk_from_ln_k(148.0248, -8966.901, -24.4344, 0.0, t),
        tol: 0.005,
    },
    // Boric acid: Goldberg et al. (2002): 9.237, 13.8 kJ/mol, −240 J/(K·mol) (checked, via a public
    // transcription). Their ΔCp° bends more than Manov's cells (about −190 J/(K·mol) implied): the
    // two part by 0.020 at 60 °C, so the bound is 0.021.
    PkCheck {
        key: "borate",
        step: 1,
        source: "Goldberg et al. 2002",
        celsius: T_0_60,
        reference: |t| goldberg(9.237, 13.8, -240.0, t),
        tol: 0.021,
    },
    // HSO4⁻: Clegg, Rard & Pitzer (1994) eq. 21 with its T² term (checked, as transcribed in Pytzer,
    // HSO4_CRP94). The catalogue carries the same equation with the T² term re-expressed
    // (tools/reference/hso4_logk_basis.py): this row checks that re-expression, to 1e-4.
    PkCheck {
        key: "sulfate",
        step: 1,
        source: "Clegg, Rard & Pitzer 1994 eq. 21",
        celsius: T_0_60,
        reference: |t| -(562.694_86 - 102.5154 * t.ln() - 1.117_033e-4 * t * t + 0.247_753_8 * t - 13_273.75 / t),
        tol: 1e-4,
    },
    // HSO4⁻ at 25 °C: Benjamin, "Water Chemistry", 2nd ed. (2015), pKa 1.99 (checked, via a public
    // transcription), and PHREEQC's phreeqc.dat / wateq4f.dat, log K 1.988 (checked). CRP94 gives
    // 1.979: the compilations scatter by 0.011, the bound here.
    PkCheck {
        key: "sulfate",
        step: 1,
        source: "Benjamin 2015 (25 °C)",
        celsius: &[25.0],
        reference: |_| 1.99,
        tol: 0.012,
    },
    PkCheck {
        key: "sulfate",
        step: 1,
        source: "phreeqc.dat / wateq4f.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 1.988,
        tol: 0.012,
    },
    // HF: the `-analytic` of phreeqc.dat / wateq4f.dat for H+ + F- = HF: log K = −2.033 + 0.012645·T
    // + 429.01/T (checked; its origin is not stated in the file). Catalogue: Dickson & Riley 1979,
    // a straight van 't Hoff line. They agree at 25 °C (3.176 / 3.174) and part by 0.030 at 0 °C and
    // 0.050 at 60 °C: the published temperature dependence of HF is that uncertain. Bound 0.055.
    PkCheck {
        key: "fluoride",
        step: 1,
        source: "phreeqc.dat / wateq4f.dat -analytic",
        celsius: T_0_60,
        reference: |t| -2.033 + 0.012_645 * t + 429.01 / t,
        tol: 0.055,
    },
    // H2S: the `-analytic` of phreeqc.dat / wateq4f.dat for HS- + H+ = H2S: log K = −11.17 +
    // 0.02386·T + 3279.0/T (checked; origin not stated; note that it gives 6.942 at 25 °C while the
    // same entry's log_k is 6.994). Catalogue: Millero 1988. They part by 0.081 at 0 °C and 0.038 at
    // 25 °C: bound 0.085. The catalogue's value is the better documented one, not a settled one.
    PkCheck {
        key: "sulfide",
        step: 1,
        source: "phreeqc.dat / wateq4f.dat -analytic",
        celsius: T_0_60,
        reference: |t| -11.17 + 0.023_86 * t + 3279.0 / t,
        tol: 0.085,
    },
    // Si(OH)4: the `-analytic` of phreeqc.dat / wateq4f.dat for H4SiO4 = H3SiO4- + H+ (checked).
    // Catalogue: Millero 1995.
    PkCheck {
        key: "silicate",
        step: 1,
        source: "phreeqc.dat / wateq4f.dat -analytic",
        celsius: T_0_60,
        reference: |t| -(-302.3724 - 0.050_698 * t + 15_669.69 / t + 108.184_66 * t.log10() - 1_119_669.0 / (t * t)),
        tol: 0.005,
    },
    // Citric acid: Goldberg et al. (2002), Section 8 (checked, via a public transcription), evaluated
    // here with the formula written out in `goldberg`. The catalogue carries the same three numbers:
    // this checks the transcription and the crate's `clarke_glew` (to 1e-6), not the data; no second
    // temperature table for citric acid was found.
    PkCheck {
        key: "citrate",
        step: 1,
        source: "Goldberg et al. 2002 (same data)",
        celsius: T_0_60,
        reference: |t| goldberg(3.128, 4.07, -131.0, t),
        tol: 1e-6,
    },
    PkCheck {
        key: "citrate",
        step: 2,
        source: "Goldberg et al. 2002 (same data)",
        celsius: T_0_60,
        reference: |t| goldberg(4.761, 2.23, -178.0, t),
        tol: 1e-6,
    },
    PkCheck {
        key: "citrate",
        step: 3,
        source: "Goldberg et al. 2002 (same data)",
        celsius: T_0_60,
        reference: |t| goldberg(6.396, -3.38, -254.0, t),
        tol: 1e-6,
    },
    // Oxalic acid K1: Kettler, Palmer & Wesolowski (1991), J. Solution Chem. 20(9): log K1 = −1.277,
    // ΔH° −4.1 kJ/mol, ΔCp° −168 J/(K·mol) at infinite dilution and 25 °C (checked, via the paper's
    // abstract), evaluated here with the formula written out in `goldberg`. The catalogue carries the
    // same three numbers in `clarke_glew`: a transcription check, to 1e-6.
    PkCheck {
        key: "oxalate",
        step: 1,
        source: "Kettler et al. 1991 (same data)",
        celsius: T_0_60,
        reference: |t| goldberg(1.277, -4.1, -168.0, t),
        tol: 1e-6,
    },
    // Oxalic acid K1: Shock (1995), revised-HKF parameters via pychnosz 1.5.3 (table above), an
    // independent evaluation. The two cross at 15–20 °C and part by 0.016 at 0 °C and 0.035 at 60 °C.
    // Shock's slope is the smaller one, and his numbers do not agree with each other: the OBIGT rows
    // give ΔG° 1733 cal/mol, ΔH° −1020 cal/mol and ΔS° −8 cal/(K·mol) for the step, so ΔH° − TΔS° is
    // 1365, not 1733 (1.5 kJ/mol apart); the HKF temperature dependence follows ΔS°, which implies
    // ΔH° ≈ −2.7 kJ/mol against the −4.27 it lists and Kettler's −4.1. The ionize row below (ΔH° −3.9)
    // sides with Kettler. Bound: the measured worst rounded up.
    PkCheck {
        key: "oxalate",
        step: 1,
        source: "Shock 1995 via pychnosz 1.5.3",
        celsius: T_0_60,
        reference: |t| tabulated(&SHOCK95_OXALATE_K1, t),
        tol: TOL_SHOCK95_OX1,
    },
    // Oxalic acid K1: ionize 1.5.3, ionize/Database/ion_data.json, "oxalic acid": pKa 1.271, enthalpy
    // −3900 J/mol, heat capacity −231 J/(K·mol) (source of the entry not stated in the package),
    // evaluated with the formula written out in `goldberg`. Bound: the measured worst rounded up.
    PkCheck {
        key: "oxalate",
        step: 1,
        source: "ionize 1.5.3 database",
        celsius: T_0_60,
        reference: |t| goldberg(1.271, -3.9, -231.0, t),
        tol: TOL_IONIZE_OX1,
    },
    // Oxalic acid K2: Kettler et al. (1991) as above: log K2 = −4.275, ΔH° −6.8 kJ/mol, ΔCp° −261
    // J/(K·mol) (checked, via the abstract); same-data transcription check, to 1e-6.
    PkCheck {
        key: "oxalate",
        step: 2,
        source: "Kettler et al. 1991 (same data)",
        celsius: T_0_60,
        reference: |t| goldberg(4.275, -6.8, -261.0, t),
        tol: 1e-6,
    },
    // Oxalic acid K2: Shock (1995) via pychnosz 1.5.3 (table above): pK 4.257 at 25 °C against
    // Kettler's 4.275, and nearly the same slope (ΔH° −6.69 kJ/mol): a near-constant offset of about
    // 0.02, the sources' scatter. Bound: the measured worst rounded up.
    PkCheck {
        key: "oxalate",
        step: 2,
        source: "Shock 1995 via pychnosz 1.5.3",
        celsius: T_0_60,
        reference: |t| tabulated(&SHOCK95_OXALATE_K2, t),
        tol: TOL_SHOCK95_OX2,
    },
    // Oxalic acid K2 at 25 °C: ionize 1.5.3's database, pKa 4.266 (printed to 0.001). Only the 25 °C
    // value is used: the same entry's enthalpy, +7000 J/mol, has the opposite sign to Kettler et al.'s
    // (−6.8 kJ/mol, measured 0–175 °C) and Shock's (−6.69 kJ/mol). Bound: 0.009 measured, 0.010.
    PkCheck {
        key: "oxalate",
        step: 2,
        source: "ionize 1.5.3 database (25 °C)",
        celsius: &[25.0],
        reference: |_| 4.266,
        tol: 0.010,
    },
    // Formic acid: Shock (1995) via pychnosz 1.5.3 (table above), an independent evaluation of the
    // catalogue's Harned & Embree (1934) function (from memory). Measured: −0.0099 at 0 °C, −0.0010 at
    // 25 °C, +0.0055 at 60 °C; the two bend alike (the van 't Hoff line they replace missed Shock by
    // 0.05–0.06 at the ends). Bound: the measured worst rounded up.
    PkCheck {
        key: "formate",
        step: 1,
        source: "Shock 1995 via pychnosz 1.5.3",
        celsius: T_0_60,
        reference: |t| tabulated(&SHOCK95_FORMATE, t),
        tol: 0.010,
    },
    // Formic acid at 25 °C: ionize 1.5.3's database, "formic acid" pKa 3.752 (its enthalpy, −335 J/mol,
    // comes without a heat capacity, so only the 25 °C value is used), and NIST SRD 46 via
    // minteq.v4.dat (phreeqc 1.1.1): association log K 3.745 (checked). The two sources part by 0.007.
    PkCheck {
        key: "formate",
        step: 1,
        source: "ionize 1.5.3 database (25 °C)",
        celsius: &[25.0],
        reference: |_| 3.752,
        tol: 0.005,
    },
    PkCheck {
        key: "formate",
        step: 1,
        source: "NIST SRD 46 via minteq.v4.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 3.745,
        tol: 0.008,
    },
    // Phthalic acid: ionize 1.5.3, ionize/Database/ion_data.json, "phthalic acid": pKa 2.95 and 5.408,
    // enthalpy −2700 and −2170 J/mol, heat capacity −91 and −295 J/(K·mol) (printed by
    // tools/reference/logk_second_sources.py; the entry names no source, so whether it reduces the
    // same cells is not known), evaluated with the constant-ΔCp° formula written out in
    // `goldberg`. The catalogue carries Hamer & Acree's three-term functions (from memory): an
    // independent form, so this is the check of the coefficients. Measured worst 0.0007 (K1) and
    // 0.0010 (K2).
    PkCheck {
        key: "phthalate",
        step: 1,
        source: "ionize 1.5.3 database",
        celsius: T_0_60,
        reference: |t| goldberg(2.95, -2.7, -91.0, t),
        tol: 0.005,
    },
    PkCheck {
        key: "phthalate",
        step: 2,
        source: "ionize 1.5.3 database",
        celsius: T_0_60,
        reference: |t| goldberg(5.408, -2.17, -295.0, t),
        tol: 0.005,
    },
    // Phthalic acid at 25 °C: NIST SRD 46, as carried by minteq.v4.dat (phreeqc 1.1.1): association
    // log K 5.408 (step 2) and 8.358 (both steps), so pK1 = 2.950 and pK2 = 5.408 (checked).
    PkCheck {
        key: "phthalate",
        step: 1,
        source: "NIST SRD 46 via minteq.v4.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 2.950,
        tol: 0.005,
    },
    PkCheck {
        key: "phthalate",
        step: 2,
        source: "NIST SRD 46 via minteq.v4.dat (25 °C)",
        celsius: &[25.0],
        reference: |_| 5.408,
        tol: 0.005,
    },
    // HOCl: Morris (1966), J. Phys. Chem. 70, 3798, pKa = 3000/T − 10.0686 + 0.0253·T (checked),
    // over his 0–35 °C (range from memory). The catalogue carries the same formula: a transcription
    // check; no second table was found.
    PkCheck {
        key: "hypochlorite",
        step: 1,
        source: "Morris 1966 (same formula)",
        celsius: T_0_35,
        reference: |t| 3000.0 / t - 10.0686 + 0.0253 * t,
        tol: 1e-9,
    },
];

#[test]
fn catalogue_pk_agrees_with_independent_published_functions() {
    let mut failures = Vec::new();
    for check in PK_CHECKS {
        let system = phdose::chem::catalogue::by_key(check.key).unwrap();
        let mut worst = 0.0_f64;
        for &celsius in check.celsius {
            let got = catalogue_pk(system, check.step, celsius);
            let reference = (check.reference)(celsius + 273.15);
            let d = got - reference;
            println!(
                "{} pK{} {celsius:>4} °C: catalogue {got:.4}, {} {reference:.4}, deviation {d:+.4}",
                check.key, check.step, check.source
            );
            worst = worst.max(d.abs());
        }
        println!(
            "== {} pK{} vs {}: worst |deviation| {worst:.4} (bound {})",
            check.key, check.step, check.source, check.tol
        );
        if worst > check.tol {
            failures.push(format!("{} pK{} vs {}: {worst} > {}", check.key, check.step, check.source, check.tol));
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

// ---------------------------------------------------------------------------------------------
// c. Standard buffers (catalogue constants, Davies activities).
// ---------------------------------------------------------------------------------------------

/// Tolerance for the standard buffers at 25 °C with Davies activities.
const TOL_BUFFER_25C: f64 = 0.02;
/// The goal for a standard buffer over 0–50 °C with Davies activities: the Bates–Guggenheim
/// convention behind the IUPAC values and Davies differ by about this much at I ≈ 0.1.
const TOL_BUFFER_T: f64 = 0.015;

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

/// Potassium tetroxalate KH3(C2O4)2 at `mol_per_kg`: two oxalic acids and one K⁺ per formula unit
/// (the K⁺ taking the place of one proton, as KOH would).
fn tetroxalate_ph(celsius: f64, mol_per_kg: f64) -> f64 {
    let t = Celsius::new(celsius).unwrap();
    let rho = density_kg_per_l(t);
    let mut s: Solution<f64, 4> = Solution::new(t, Activity::Davies);
    s.add_formula("H2C2O4", 2.0 * mol_per_kg * rho).unwrap();
    s.add_formula("KOH", mol_per_kg * rho).unwrap();
    s.solve().unwrap().ph
}

const PHOSPHATE_1_1: &[(&str, f64)] = &[("KH2PO4", 0.025), ("Na2HPO4", 0.025)];
const BORAX: &[(&str, f64)] = &[("Na2B4O7", 0.01)];
const CARBONATE_1_1: &[(&str, f64)] = &[("NaHCO3", 0.025), ("Na2CO3", 0.025)];
const KHP: &[(&str, f64)] = &[("KHC8H4O4", 0.05)];

/// pH(S) at 0–50 °C: Buck et al. 2002, Pure Appl. Chem. 74, 2169 (IUPAC Recommendations 2002; the
/// NIST values; the numbers read through an independent open-source transcription of the table,
/// the same as `phdose::probe::buffers::TABLE`). Columns: tetroxalate 0.05 mol/kg, KH phthalate
/// 0.05, phosphate 0.025/0.025, borax 0.01, carbonate 0.025/0.025.
const IUPAC_TABLE: [(f64, [f64; 5]); 11] = [
    (0.0, [1.666, 4.000, 6.984, 9.464, 10.317]),
    (5.0, [1.668, 3.998, 6.951, 9.395, 10.245]),
    (10.0, [1.670, 3.997, 6.923, 9.332, 10.179]),
    (15.0, [1.672, 3.998, 6.900, 9.276, 10.118]),
    (20.0, [1.675, 4.001, 6.881, 9.225, 10.062]),
    (25.0, [1.679, 4.005, 6.865, 9.180, 10.012]),
    (30.0, [1.683, 4.011, 6.853, 9.139, 9.966]),
    (35.0, [1.688, 4.018, 6.844, 9.102, 9.925]),
    (40.0, [1.694, 4.027, 6.838, 9.068, 9.889]),
    (45.0, [1.700, 4.038, 6.834, 9.038, 9.857]),
    (50.0, [1.707, 4.050, 6.833, 9.010, 9.828]),
];

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

/// The model's pH minus the IUPAC table over 0–50 °C for column `column`; prints every row and
/// returns (worst |deviation|, the deviations).
fn buffer_deviation_over_table(name: &str, column: usize, model: impl Fn(f64) -> f64) -> (f64, Vec<(f64, f64)>) {
    let mut worst = 0.0_f64;
    let mut rows = Vec::new();
    for (t, row) in IUPAC_TABLE {
        let ph_s = row[column];
        let got = model(t);
        let d = got - ph_s;
        println!("{name} {t:>4} °C: model {got:.4}, IUPAC {ph_s}, deviation {d:+.4}");
        worst = worst.max(d.abs());
        rows.push((t, d));
    }
    println!("== {name} 0–50 °C: worst |deviation| {worst:.4} (goal {TOL_BUFFER_T})");
    (worst, rows)
}

#[test]
fn khp_follows_hamer_pinching_acree_formula() {
    // Hamer, Pinching & Acree 1946, J. Res. NBS 36, 47 (RP1690): 0.05 mol/kg KHP,
    // pH = 1336.08/T − 5.2678 + 0.016069·T with T = t + 273.16, valid 0–60 °C.
    //
    // The catalogue's phthalate steps are Hamer & Acree's functions of the same cells (from memory,
    // checked against the ionize database's entry above). Measured: a near-constant offset, +0.0061
    // at 0 °C, +0.0073 at 25 °C, +0.0093 at 60 °C (spread 0.0032 over 0–60 °C), where the former van
    // 't Hoff lines drifted from −0.033 at 0 °C to −0.050 at 60 °C. The offset is the activity
    // convention (Davies against the 1946 paper's own extrapolation), not the temperature
    // functions. Bound: 0.010 at every temperature (measured worst rounded up), spread 0.005.
    let mut worst = 0.0_f64;
    let (mut lowest, mut highest) = (f64::INFINITY, f64::NEG_INFINITY);
    for t in [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0, 55.0, 60.0] {
        let tk = t + 273.16;
        let hamer = 1336.08 / tk - 5.2678 + 0.016_069 * tk;
        let got = buffer_ph(t, KHP);
        let d = got - hamer;
        println!("KHP {t:>4} °C: model {got:.4}, Hamer et al. {hamer:.4}, deviation {d:+.4}");
        worst = worst.max(d.abs());
        assert!(d.abs() <= 0.010, "KHP at {t} °C: {got} vs {hamer}");
        lowest = lowest.min(d);
        highest = highest.max(d);
    }
    println!("KHP 0–60 °C: worst |deviation| {worst:.4}, spread {:.4}", highest - lowest);
    assert!(highest - lowest <= 0.005, "KHP deviation spread {} over 0–60 °C", highest - lowest);
}

/// Checks a buffer against the IUPAC table: within [`TOL_BUFFER_T`] at every row from
/// `goal_from` to `goal_to` °C, and within `guard` at every row (for a buffer that misses the goal
/// somewhere, `guard` is its measured worst rounded up to the next 0.001, plus 0.001: a known miss,
/// stated in the test's comment and in README, that fails if it gets worse). Returns the deviations.
fn check_buffer(
    name: &str,
    column: usize,
    model: impl Fn(f64) -> f64,
    goal_from: f64,
    goal_to: f64,
    guard: f64,
) -> Vec<(f64, f64)> {
    let (worst, rows) = buffer_deviation_over_table(name, column, model);
    for &(t, d) in &rows {
        if (goal_from..=goal_to).contains(&t) {
            assert!(d.abs() <= TOL_BUFFER_T, "{name} at {t} °C: deviation {d} beyond the goal {TOL_BUFFER_T}");
        }
    }
    assert!(worst <= guard, "{name}: worst deviation {worst} beyond {guard}");
    rows
}

#[test]
fn carbonate_buffer_follows_the_iupac_temperature_table() {
    // Catalogue CARBONATE (Plummer & Busenberg 1982). Measured worst 0.0093 (at 25 °C): meets the
    // goal at every row.
    check_buffer("carbonate 0.025/0.025", 4, |t| buffer_ph(t, CARBONATE_1_1), 0.0, 50.0, TOL_BUFFER_T);
}

#[test]
fn phosphate_buffer_follows_the_iupac_temperature_table() {
    // Catalogue PHOSPHATE (step 2: Millero & Pierrot's refit of Bates & Acree 1943). Measured:
    // +0.012 to +0.019, worst +0.0186 at 0 °C; the goal is met from 15 to 50 °C only. The deviation
    // is a near-constant offset (spread 0.0065 over 0–50 °C), +0.013 already at 25 °C where pK2 is
    // not in question (7.200; Goldberg et al. 2002 select 7.198): most likely the Davies activity
    // coefficient of HPO4²⁻ at I = 0.1 against the Bates–Guggenheim convention of the table, not
    // the temperature function. Known miss, guard 0.020.
    let rows = check_buffer("phosphate 0.025/0.025", 2, |t| buffer_ph(t, PHOSPHATE_1_1), 15.0, 50.0, 0.020);
    let (min, max) = rows.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &(_, d)| (lo.min(d), hi.max(d)));
    println!("phosphate 0.025/0.025: deviation spread {:.4}", max - min);
    assert!(max - min <= 0.01, "phosphate buffer deviation spread {} over 0–50 °C", max - min);
}

#[test]
fn borax_buffer_follows_the_iupac_temperature_table() {
    // Catalogue BORATE (Manov, DeLollis & Acree 1944; Dickson 1990 agrees within 0.004, so the
    // constant is not the question). Measured: −0.0225 at 0 °C shrinking to +0.001 at 50 °C; the goal
    // is met from 10 to 50 °C. 0.01 mol/kg borax is 0.04 mol/kg boron, where polyborate ions form
    // (more so in the cold, which is the likely cause); the catalogue has one boron per system and
    // cannot carry them. Known miss, guard 0.024.
    check_buffer("borax 0.01", 3, |t| buffer_ph(t, BORAX), 10.0, 50.0, 0.024);
}

#[test]
fn khp_buffer_follows_the_iupac_temperature_table() {
    // Catalogue PHTHALATE: Hamer & Acree's functions (see the check above against their own 1946 KHP
    // function, which the model follows within a constant +0.006…+0.009). Measured: +0.0190 at 0 °C,
    // +0.0065 at 20 °C, +0.0182 at 50 °C; the goal is met from 10 to 45 °C. The IUPAC column bends
    // less than Hamer, Pinching & Acree's 1946 function over the same range (4.000 against 4.013 at
    // 0 °C, 4.050 against 4.060 at 50 °C): the table's Bates–Guggenheim convention, which Davies
    // does not reproduce at I ≈ 0.05. With the former van 't Hoff lines: −0.0198 at 0 °C, −0.013 at
    // 50 °C. Known miss, guard 0.020.
    check_buffer("KHP 0.05", 1, |t| buffer_ph(t, KHP), 10.0, 45.0, 0.020);
}

#[test]
fn tetroxalate_buffer_follows_the_iupac_temperature_table() {
    // 0.05 mol/kg KH3(C2O4)2 (IUPAC 2002 lists it with the primary standards; its exact status is
    // from memory). Catalogue OXALATE: Kettler, Palmer & Wesolowski (1991), pK, ΔH° and ΔCp° at 25 °C
    // in the constant-ΔCp form. Measured: −0.0023 at 0 °C, −0.0040 at 10 °C, −0.0010 at 25 °C,
    // +0.0098 at 50 °C (worst): meets the goal at every row. (With the former van 't Hoff lines from
    // memory, K1 ΔH° 0, the worst was −0.036 at 50 °C: a pK1 that did not rise with temperature.)
    check_buffer("tetroxalate 0.05", 0, |t| tetroxalate_ph(t, 0.05), 0.0, 50.0, TOL_BUFFER_T);
}
