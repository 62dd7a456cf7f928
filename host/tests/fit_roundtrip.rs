//! Round trip of `curve` and `fit`: every curve that `phdose curve ... --csv FILE` writes is read,
//! unmodified, by `phdose fit --data FILE`, and the fit either recovers the composition that
//! made the curve or refuses it for its quality. Three invented waters × three titrants; Davies
//! activities (the default of both commands), 25 °C, 50 mL samples.
//!
//! What "truth" is (reference values: the recipe's ions, counted by hand in the comments below
//! and checked against the library's own count of the recipe):
//! - strong charge: strong cations minus strong anions of the recipe, eq/L (phosphate and
//!   carbonate enter the model as their neutral acids, H3PO4 and CO2, as the library counts
//!   them);
//! - carbonate and phosphate: the recipe's totals, fitted as the catalogue's systems
//!   (`--carbonate`, `--phosphate`: constants, charges and temperature functions known);
//! - the fit is told the ionic strength of the recipe's inert salts
//!   (`--inert-ionic-strength-mol-per-l`), as a lab would estimate it from the sample's make-up
//!   or conductivity: the recipe's strong-ion ionic strength minus that of the fitted strong
//!   charge, which the model carries as one monovalent ion (I = |Q| / 2).
//!
//! Titration ranges: the acids (0.02 mol/L HCl, 0.01 mol/L H2SO4: the same 0.02 eq/L) run down
//! to pH 3.6–3.7, past carbonate's first step (pKa 6.35) and its end point near pH 4.5 and past
//! phosphate's second step (pKa ≈ 7.1) and its end point near pH 4.7; 0.02 mol/L NaOH runs up
//! to pH 10.8–10.9, past carbonate's second step (pKa 10.3). The test checks both ends in every
//! CSV.
//!
//! Tolerances: strong charge within 2 % and totals within 5 % (the goal of this test). One more
//! case shows what the inert ionic strength is for: the make-up water titrated with NaOH without
//! it misses by a measured amount (`Expect::Bias`, with its reason).
//!
//! `cargo test -p phdose-host --release --test fit_roundtrip -- --nocapture` prints the table
//! README.md shows.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{run, scratch};
use phdose::chem::{Activity, Solution};
use phdose::units::Celsius;

/// An invented water: its recipe (substance, mol/L) and what the fit is asked for.
struct Water {
    name: &'static str,
    recipe: &'static [(&'static str, f64)],
    carbonate: bool,
    phosphate: bool,
    /// Hand count of the truth: strong charge meq/L, carbonate mmol/L, phosphate mmol/L, inert
    /// ionic strength mmol/L.
    hand: (f64, f64, f64, f64),
}

/// A make-up water from an invented well: bicarbonate with dissolved CO2, hardness and salt.
/// Strong ions: Na⁺ 2.5 + 1.5, Ca²⁺ 2 × 1.0, Cl⁻ 2 × 1.0 + 1.5 meq/L → 2.5 meq/L; carbonate
/// 2.5 + 0.8 = 3.3 mmol/L. Strong-ion ionic strength ½(4.0 + 4 × 1.0 + 3.5) = 5.75 mmol/L, of
/// which the fitted 2.5 meq/L carry 1.25: inert 4.5 mmol/L. pH 6.8.
const MAKE_UP: Water = Water {
    name: "make-up water",
    recipe: &[("NaHCO3", 0.0025), ("CO2", 0.0008), ("CaCl2", 0.001), ("NaCl", 0.0015)],
    carbonate: true,
    phosphate: false,
    hand: (2.5, 3.3, 0.0, 4.5),
};

/// The rinse of an invented phosphate-dosed boiler feed line: disodium phosphate with a little
/// monosodium phosphate and salt. Strong ions: Na⁺ 2 × 1.7 + 0.1 + 0.5, Cl⁻ 0.5 → 3.5 meq/L;
/// phosphate 1.8 mmol/L. Ionic strength ½(4.0 + 0.5) = 2.25, fitted charge 1.75: inert
/// 0.5 mmol/L. pH 8.3.
const PHOSPHATE_RINSE: Water = Water {
    name: "phosphate-dosed feed rinse",
    recipe: &[("Na2HPO4", 0.0017), ("NaH2PO4", 0.0001), ("NaCl", 0.0005)],
    carbonate: false,
    phosphate: true,
    hand: (3.5, 0.0, 1.8, 0.5),
};

/// An invented mixed rinse: bicarbonate and disodium phosphate with salt and some hardness.
/// Strong ions: Na⁺ 1.5 + 2 × 0.6 + 1.0, Ca²⁺ 2 × 0.3, Cl⁻ 1.0 + 2 × 0.3 → 2.7 meq/L; carbonate
/// 1.5 mmol/L; phosphate 0.6 mmol/L. Ionic strength ½(3.7 + 4 × 0.3 + 1.6) = 3.25, fitted
/// charge 1.35: inert 1.9 mmol/L. pH 8.5.
const MIXED_RINSE: Water = Water {
    name: "mixed rinse",
    recipe: &[("NaHCO3", 0.0015), ("Na2HPO4", 0.0006), ("NaCl", 0.001), ("CaCl2", 0.0003)],
    carbonate: true,
    phosphate: true,
    hand: (2.7, 1.5, 0.6, 1.9),
};

/// What a case must give.
enum Expect {
    /// Accepted; strong charge within 2 %, every fitted total within 5 %.
    Recovered,
    /// Accepted, outside 2 % / 5 % by a measured amount within these relative limits, for the
    /// reason given.
    Bias { strong: f64, totals: f64, why: &'static str },
}

struct Case {
    water: &'static Water,
    titrant: &'static str,
    max_ml: f64,
    /// Whether the fit is told the inert ionic strength.
    inert: bool,
    expect: Expect,
}

/// Why the make-up water's NaOH titration reads high without the inert ionic strength:
/// measured +3.0 % strong charge, +2.4 % carbonate (with ideal activities both recover exactly).
const IONIC_STRENGTH: &str = "without the inert ionic strength the model's is that of the fitted strong charge \
alone (1.25 mmol/L where the recipe's salts give 5.75): carbonate's CO3²⁻ step, which only the NaOH titration \
sees, is then placed with the wrong activity coefficients";

const fn case(water: &'static Water, titrant: &'static str, max_ml: f64) -> Case {
    Case { water, titrant, max_ml, inert: true, expect: Expect::Recovered }
}

const CASES: [Case; 10] = [
    case(&MAKE_UP, "HCl=0.02", 7.0),
    case(&MAKE_UP, "H2SO4=0.01", 7.0),
    case(&MAKE_UP, "NaOH=0.02", 11.0),
    case(&PHOSPHATE_RINSE, "HCl=0.02", 5.0),
    case(&PHOSPHATE_RINSE, "H2SO4=0.01", 5.0),
    case(&PHOSPHATE_RINSE, "NaOH=0.02", 2.5),
    case(&MIXED_RINSE, "HCl=0.02", 6.0),
    case(&MIXED_RINSE, "H2SO4=0.01", 6.0),
    case(&MIXED_RINSE, "NaOH=0.02", 6.0),
    Case {
        water: &MAKE_UP,
        titrant: "NaOH=0.02",
        max_ml: 11.0,
        inert: false,
        expect: Expect::Bias { strong: 0.04, totals: 0.05, why: IONIC_STRENGTH },
    },
];

/// The truth of a water from the library's count of its recipe: (strong charge meq/L,
/// carbonate mmol/L, phosphate mmol/L, inert ionic strength mmol/L), checked against the hand
/// count.
fn truth(w: &Water) -> (f64, f64, f64, f64) {
    let mut s: Solution<f64, 8> = Solution::new(Celsius::new(25.0).unwrap(), Activity::Davies);
    for (formula, mol_per_l) in w.recipe {
        s.add_formula(formula, *mol_per_l).unwrap();
    }
    let q = s.strong_charge_eq_per_l();
    let inert = s.strong_ionic_strength_mol_per_l() - 0.5 * q.abs();
    let t = (q * 1000.0, s.total_of("carbonate") * 1000.0, s.total_of("phosphate") * 1000.0, inert * 1000.0);
    let close = |a: f64, b: f64| (a - b).abs() < 1e-9;
    let h = w.hand;
    assert!(close(t.0, h.0) && close(t.1, h.1) && close(t.2, h.2) && close(t.3, h.3), "{}: {t:?} vs {h:?}", w.name);
    t
}

/// The first number after `label` on the report's line that starts with it, and the one after
/// "±" (its standard error).
fn reported(out: &str, label: &str) -> Option<(f64, f64)> {
    let line = out.lines().find(|l| l.starts_with(label))?;
    let mut words = line[label.len()..].split_whitespace();
    let value = words.next()?.parse().ok()?;
    let se = words.skip_while(|w| *w != "±").nth(1).and_then(|w| w.parse().ok()).unwrap_or(0.0);
    Some((value, se))
}

fn pct(fitted: f64, truth: f64) -> f64 {
    100.0 * (fitted / truth - 1.0)
}

#[test]
fn every_curve_fits_back_to_its_composition() {
    let dir = scratch("fit-roundtrip");
    let mut table = vec![
        "| water | titrant | data pH | strong charge meq/L: true → fitted | carbonate mmol/L | phosphate mmol/L | inert I given | RMS pH | verdict |".to_owned(),
        "|---|---|---|---|---|---|---|---|---|".to_owned(),
    ];
    let mut notes: Vec<String> = Vec::new();
    for (k, case) in CASES.iter().enumerate() {
        let w = case.water;
        let (strong, carbonate, phosphate, inert_mmol) = truth(w);
        let csv = dir.join(format!("case{k}.csv"));
        let csv = csv.to_str().unwrap();
        let mut curve: Vec<&str> = vec!["curve"];
        let recipe: Vec<String> = w.recipe.iter().map(|(f, c)| format!("{f}={c}")).collect();
        curve.extend(recipe.iter().map(String::as_str));
        let max_ml = case.max_ml.to_string();
        curve.extend(["--sample-ml", "50", "--titrant", case.titrant, "--max-titrant-ml", &max_ml, "--csv", csv]);
        let made = run(&curve, "");
        assert_eq!(made.code, 0, "{curve:?}: {}", made.stderr);

        // The data cover what the header says: acids to pH 3.5–3.7, NaOH to at least 10.8.
        let text = std::fs::read_to_string(csv).unwrap();
        let ph: Vec<f64> = text.lines().skip(1).map(|l| l.split(',').nth(1).unwrap().parse().unwrap()).collect();
        let (lo, hi) = ph.iter().fold((14.0f64, 0.0f64), |(a, b), p| (a.min(*p), b.max(*p)));
        if case.titrant.starts_with("NaOH") {
            assert!(hi >= 10.8, "{} with {}: ends at pH {hi}", w.name, case.titrant);
        } else {
            assert!((3.5..=3.7).contains(&lo), "{} with {}: ends at pH {lo}", w.name, case.titrant);
        }

        let inert = (inert_mmol / 1000.0).to_string();
        let mut fit = vec!["fit", "--data", csv, "--titrant", case.titrant, "--sample-ml", "50"];
        if w.carbonate {
            fit.push("--carbonate");
        }
        if w.phosphate {
            fit.push("--phosphate");
        }
        if case.inert {
            fit.extend(["--inert-ionic-strength-mol-per-l", &inert]);
        }
        let r = run(&fit, "");
        assert!(r.stderr.is_empty(), "{fit:?}: {}", r.stderr);
        let out = &r.stdout;
        let q = reported(out, "strong charge");
        let c = reported(out, "carbonate");
        let p = reported(out, "phosphate");
        let rms = reported(out, "residual RMS").map(|v| v.0);
        let quality = out.lines().find(|l| l.starts_with("quality")).unwrap_or_else(|| panic!("no quality: {out}"));
        assert_eq!(r.code, 0, "{} with {}: {out}", w.name, case.titrant);
        assert!(quality.contains("accepted"), "{quality}");

        let (q_tol, t_tol) = match &case.expect {
            Expect::Recovered => (0.02, 0.05),
            Expect::Bias { strong, totals, why } => {
                notes.push(format!("{} with {}, no inert ionic strength given: {why}.", w.name, case.titrant));
                (*strong, *totals)
            }
        };
        let cell = |fitted: Option<(f64, f64)>, truth: f64| match fitted {
            Some((v, se)) => format!("{truth:.3} → {v:.3} ± {se:.3} ({:+.1} %)", pct(v, truth)),
            None => format!("{truth:.3} → —"),
        };
        let verdict = match case.expect {
            Expect::Bias { .. } => format!("accepted; outside 2 % / 5 % (limit {:.0} %)", q_tol * 100.0),
            Expect::Recovered => "accepted, within 2 % / 5 %".to_owned(),
        };
        table.push(format!(
            "| {} | {} | {:.2}–{:.2} | {} | {} | {} | {} | {} | {verdict} |",
            w.name,
            case.titrant.replace('=', " "),
            lo,
            hi,
            cell(q, strong),
            if w.carbonate { cell(c, carbonate) } else { "—".to_owned() },
            if w.phosphate { cell(p, phosphate) } else { "—".to_owned() },
            if case.inert { format!("{inert_mmol:.2} mmol/L") } else { "none".to_owned() },
            rms.map(|v| format!("{v:.1e}")).unwrap_or_else(|| "—".to_owned()),
        ));

        let off = |fitted: Option<(f64, f64)>, truth: f64| (fitted.unwrap().0 / truth - 1.0).abs();
        let q_off = off(q, strong);
        let c_off = if w.carbonate { off(c, carbonate) } else { 0.0 };
        let p_off = if w.phosphate { off(p, phosphate) } else { 0.0 };
        let case_name = format!("{} with {}", w.name, case.titrant);
        assert!(q_off <= q_tol, "{case_name}: strong charge {q:?} vs {strong}");
        assert!(
            c_off <= t_tol && p_off <= t_tol,
            "{case_name}: carbonate {c:?} vs {carbonate}, phosphate {p:?} vs {phosphate}"
        );
        if let Expect::Bias { .. } = case.expect {
            // A stated limit is a real miss of 2 % / 5 %, not slack: if the fit now recovers the
            // case without the inert ionic strength, the option's reason is gone.
            assert!(q_off > 0.02 || c_off > 0.05, "{case_name}: now within 2 % / 5 %");
        }
    }
    println!("{}", table.join("\n"));
    println!();
    for n in notes {
        println!("- {n}");
    }
}

/// The phosphate rinse titrated with NaOH starts at pH 8.3, above phosphate's second pKa
/// (≈ 7.1): fitted as a generic buffer (`--buffers 1`, pKa unknown) the data cannot bracket
/// the buffer's pKa, and the fit is refused (exit 1) instead of answering 92 % low as it did
/// before the quality policy; with `--phosphate` (pKa known) it fits (table above).
#[test]
fn an_unbracketed_generic_buffer_is_refused() {
    let dir = scratch("fit-roundtrip-unbracketed");
    let csv = dir.join("rinse.csv");
    let csv = csv.to_str().unwrap();
    let recipe: Vec<String> = PHOSPHATE_RINSE.recipe.iter().map(|(f, c)| format!("{f}={c}")).collect();
    let mut curve: Vec<&str> = vec!["curve"];
    curve.extend(recipe.iter().map(String::as_str));
    curve.extend(["--sample-ml", "50", "--titrant", "NaOH=0.02", "--max-titrant-ml", "2.5", "--csv", csv]);
    assert_eq!(run(&curve, "").code, 0);
    let r = run(&["fit", "--data", csv, "--titrant", "NaOH=0.02", "--sample-ml", "50", "--buffers", "1"], "");
    assert_eq!(r.code, 1, "{}", r.stdout);
    assert!(r.stdout.starts_with("FIT REFUSED: ") && r.stdout.contains("pka outside data"), "{}", r.stdout);
}
