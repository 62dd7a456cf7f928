//! Round trip of `curve` and `fit`: every curve that `phdose curve ... --csv FILE` writes is read,
//! unmodified, by `phdose fit --data FILE`, and the fit either recovers the composition that
//! made the curve or refuses it for its quality. Three invented waters × three titrants; Davies
//! activities (the default of both commands), 25 °C, 50 mL samples.
//!
//! What "truth" is (reference values: the recipe's ions, counted by hand in the comments below
//! and checked against the library's own count of the recipe):
//! - strong charge: strong cations minus strong anions of the recipe, eq/L;
//! - carbonate: the recipe's carbonate total;
//! - phosphate, fitted as one generic monoprotic buffer: phosphate's first proton (pKa ≈ 2.1)
//!   is effectively strong over a titration that stays above pH 3.5 (at most about 4 % of the
//!   phosphate holds it there, calc: 10^(2.1 − 3.5)) and its third (pKa ≈ 12.3) is not reached
//!   below pH 11 (under 5 %, calc: 10^(11 − 12.3)), so the water behaves as if H2PO4⁻ were the
//!   buffer's acid form and one proton per phosphate a strong anion: the effective strong charge
//!   is (strong ions − phosphate total) and the buffer total is the phosphate total.
//!
//! Titration ranges: the acids (0.02 mol/L HCl, 0.01 mol/L H2SO4: the same 0.02 eq/L) run down
//! to pH 3.6–3.7, past carbonate's first step (pKa 6.35) and its end point near pH 4.5 and past
//! phosphate's second step (pKa ≈ 7.1) and its end point near pH 4.7, while staying above pH 3.5
//! (above); 0.02 mol/L NaOH runs up to pH 10.8–10.9, past carbonate's second step (pKa 10.3).
//! The test checks both ends in every CSV.
//!
//! Tolerances: strong charge within 2 % and totals within 5 % (the goal of this test), except
//! where a case states a measured limit of the fit's model and its reason (`Expect::Bias`): the
//! fit carries the strong charge as one monovalent ion and phosphate as a buffer whose forms
//! carry charges 0/−1, so under Davies activities their ionic strength and activity
//! coefficients differ from the recipe's. Where the data cannot bracket a buffer's pKa
//! (`Expect::Refused`) the fit must refuse, exit 1, instead of answering.
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
    buffers: u8,
    /// Hand count of the truth: effective strong charge meq/L, carbonate mmol/L, phosphate mmol/L.
    hand: (f64, f64, f64),
}

/// A make-up water from an invented well: bicarbonate with dissolved CO2, hardness and salt.
/// Strong ions: Na⁺ 2.5 + 1.5, Ca²⁺ 2 × 1.0, Cl⁻ 2 × 1.0 + 1.5 meq/L → 2.5 meq/L; carbonate
/// 2.5 + 0.8 = 3.3 mmol/L. pH 6.8.
const MAKE_UP: Water = Water {
    name: "make-up water",
    recipe: &[("NaHCO3", 0.0025), ("CO2", 0.0008), ("CaCl2", 0.001), ("NaCl", 0.0015)],
    carbonate: true,
    buffers: 0,
    hand: (2.5, 3.3, 0.0),
};

/// The rinse of an invented phosphate-dosed boiler feed line: disodium phosphate with a little
/// monosodium phosphate and salt. Strong ions: Na⁺ 2 × 1.7 + 0.1 + 0.5, Cl⁻ 0.5 → 3.5 meq/L;
/// phosphate 1.8 mmol/L; effective strong charge 3.5 − 1.8 = 1.7 meq/L. pH 8.3.
const PHOSPHATE_RINSE: Water = Water {
    name: "phosphate-dosed feed rinse",
    recipe: &[("Na2HPO4", 0.0017), ("NaH2PO4", 0.0001), ("NaCl", 0.0005)],
    carbonate: false,
    buffers: 1,
    hand: (1.7, 0.0, 1.8),
};

/// An invented mixed rinse: bicarbonate and disodium phosphate with salt and some hardness.
/// Strong ions: Na⁺ 1.5 + 2 × 0.6 + 1.0, Ca²⁺ 2 × 0.3, Cl⁻ 1.0 + 2 × 0.3 → 2.7 meq/L; carbonate
/// 1.5 mmol/L; phosphate 0.6 mmol/L; effective strong charge 2.7 − 0.6 = 2.1 meq/L. pH 8.5.
const MIXED_RINSE: Water = Water {
    name: "mixed rinse",
    recipe: &[("NaHCO3", 0.0015), ("Na2HPO4", 0.0006), ("NaCl", 0.001), ("CaCl2", 0.0003)],
    carbonate: true,
    buffers: 1,
    hand: (2.1, 1.5, 0.6),
};

/// What a case must give.
enum Expect {
    /// Accepted; strong charge within 2 %, every fitted total within 5 %.
    Recovered,
    /// Accepted, with a measured limit of the fit's model wider than the 2 % / 5 % above, and its
    /// reason. Relative tolerances.
    Bias { strong: f64, carbonate: f64, buffer: f64, why: &'static str },
    /// Refused for its quality (exit 1) with this refusal key.
    Refused { refusal: &'static str, why: &'static str },
}

struct Case {
    water: &'static Water,
    titrant: &'static str,
    max_ml: f64,
    expect: Expect,
}

/// Why the make-up water's NaOH titration reads high: measured +3.0 % strong charge, +2.4 %
/// carbonate (with ideal activities both recover exactly, and so does the same water without
/// its calcium chloride and salt: its only strong ion is then the Na⁺ the fit models).
const IONIC_STRENGTH: &str = "the fit carries the strong charge as one monovalent ion (ionic strength 1.25 mmol/L \
where the recipe's salts give 5.75): carbonate's CO3²⁻ step, which only the NaOH titration sees, is then placed \
with the wrong activity coefficients";

/// Why the mixed rinse's acid titrations split carbonate and phosphate unevenly: measured −9.0 %
/// and −8.2 % phosphate, +4.1 % and +3.7 % carbonate, their sum within 1 % (with ideal
/// activities −3.0 % and +1.5 %). The test checks the sum.
const PHOSPHATE_CHARGES: &str = "phosphate's H2PO4⁻/HPO4²⁻ carry charges −1/−2 where the generic buffer's forms \
carry 0/−1; under Davies activities the fit moves some of the phosphate to the carbonate, whose step overlaps";

/// Why the NaOH titrations of the phosphate-bearing waters are refused: they start above
/// phosphate's pKa (≈ 7.1) and never bracket it. Before the quality policy they were answered
/// with exit 0: strong charge 92 % and 24 % low with standard errors of 2.5 % and 0.2 %.
const UNBRACKETED: &str =
    "the titration starts at pH 8.3 or 8.5, above phosphate's pKa ≈ 7.1, and sees only the tail of its step";

const CASES: [Case; 9] = [
    Case { water: &MAKE_UP, titrant: "HCl=0.02", max_ml: 7.0, expect: Expect::Recovered },
    Case { water: &MAKE_UP, titrant: "H2SO4=0.01", max_ml: 7.0, expect: Expect::Recovered },
    Case {
        water: &MAKE_UP,
        titrant: "NaOH=0.02",
        max_ml: 11.0,
        expect: Expect::Bias { strong: 0.04, carbonate: 0.05, buffer: 0.05, why: IONIC_STRENGTH },
    },
    Case { water: &PHOSPHATE_RINSE, titrant: "HCl=0.02", max_ml: 5.0, expect: Expect::Recovered },
    Case { water: &PHOSPHATE_RINSE, titrant: "H2SO4=0.01", max_ml: 5.0, expect: Expect::Recovered },
    Case {
        water: &PHOSPHATE_RINSE,
        titrant: "NaOH=0.02",
        max_ml: 2.5,
        expect: Expect::Refused { refusal: "pka outside data", why: UNBRACKETED },
    },
    Case {
        water: &MIXED_RINSE,
        titrant: "HCl=0.02",
        max_ml: 6.0,
        expect: Expect::Bias { strong: 0.02, carbonate: 0.05, buffer: 0.10, why: PHOSPHATE_CHARGES },
    },
    Case {
        water: &MIXED_RINSE,
        titrant: "H2SO4=0.01",
        max_ml: 6.0,
        expect: Expect::Bias { strong: 0.02, carbonate: 0.05, buffer: 0.10, why: PHOSPHATE_CHARGES },
    },
    Case {
        water: &MIXED_RINSE,
        titrant: "NaOH=0.02",
        max_ml: 6.0,
        expect: Expect::Refused { refusal: "pka outside data", why: UNBRACKETED },
    },
];

/// The truth of a water from the library's count of its recipe: (effective strong charge
/// meq/L, carbonate mmol/L, phosphate mmol/L), checked against the hand count.
fn truth(w: &Water) -> (f64, f64, f64) {
    let mut s: Solution<f64, 8> = Solution::new(Celsius::new(25.0).unwrap(), Activity::Davies);
    for (formula, mol_per_l) in w.recipe {
        s.add_formula(formula, *mol_per_l).unwrap();
    }
    let phosphate = s.total_of("phosphate") * 1000.0;
    let t = (s.strong_charge_eq_per_l() * 1000.0 - phosphate, s.total_of("carbonate") * 1000.0, phosphate);
    let close = |a: f64, b: f64| (a - b).abs() < 1e-9;
    assert!(close(t.0, w.hand.0) && close(t.1, w.hand.1) && close(t.2, w.hand.2), "{}: {t:?} vs {:?}", w.name, w.hand);
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

/// The pKa on the "buffer a" line.
fn reported_pka(out: &str) -> Option<f64> {
    let line = out.lines().find(|l| l.starts_with("buffer a"))?;
    line.split("pKa ").nth(1)?.split_whitespace().next()?.parse().ok()
}

fn pct(fitted: f64, truth: f64) -> f64 {
    100.0 * (fitted / truth - 1.0)
}

#[test]
fn every_curve_fits_back_to_its_composition_or_is_refused() {
    let dir = scratch("fit-roundtrip");
    let mut table = vec![
        "| water | titrant | data pH | strong charge meq/L: true → fitted | carbonate mmol/L | phosphate (buffer) mmol/L, pKa | RMS pH | verdict |".to_owned(),
        "|---|---|---|---|---|---|---|---|".to_owned(),
    ];
    let mut notes: Vec<String> = Vec::new();
    for (k, case) in CASES.iter().enumerate() {
        let w = case.water;
        let (strong, carbonate, phosphate) = truth(w);
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

        let mut fit = vec!["fit", "--data", csv, "--titrant", case.titrant, "--sample-ml", "50"];
        if w.carbonate {
            fit.push("--carbonate");
        }
        if w.buffers == 1 {
            fit.extend(["--buffers", "1"]);
        }
        let r = run(&fit, "");
        assert!(r.stderr.is_empty(), "{fit:?}: {}", r.stderr);
        let out = &r.stdout;
        let q = reported(out, "strong charge");
        let c = reported(out, "carbonate");
        let b = reported(out, "buffer a");
        let rms = reported(out, "residual RMS").map(|v| v.0);
        let quality = out.lines().find(|l| l.starts_with("quality")).unwrap_or_else(|| panic!("no quality: {out}"));

        let (q_tol, c_tol, b_tol) = match &case.expect {
            Expect::Recovered => (Some(0.02), 0.05, 0.05),
            Expect::Bias { strong, carbonate, buffer, why } => {
                notes.push(format!("{} with {}: {why}.", w.name, case.titrant));
                (Some(*strong), *carbonate, *buffer)
            }
            Expect::Refused { refusal, why } => {
                assert_eq!(r.code, 1, "{} with {}: expected a refusal: {out}", w.name, case.titrant);
                assert!(out.starts_with("FIT REFUSED: ") && quality.contains(refusal), "{out}");
                notes.push(format!("{} with {}: refused, {why}.", w.name, case.titrant));
                (None, 0.0, 0.0)
            }
        };
        let cell = |fitted: Option<(f64, f64)>, truth: f64| match fitted {
            Some((v, se)) => format!("{truth:.3} → {v:.3} ± {se:.3} ({:+.1} %)", pct(v, truth)),
            None => format!("{truth:.3} → —"),
        };
        let verdict = match (&case.expect, q_tol) {
            (Expect::Refused { refusal, .. }, _) => format!("refused ({refusal}), exit 1"),
            (Expect::Bias { .. }, Some(t)) => {
                format!("accepted; outside 2 % / 5 % (limit {:.0} % / {:.0} %)", t * 100.0, c_tol.max(b_tol) * 100.0)
            }
            _ => "accepted, within 2 % / 5 %".to_owned(),
        };
        table.push(format!(
            "| {} | {} | {:.2}–{:.2} | {} | {} | {} | {} | {verdict} |",
            w.name,
            case.titrant.replace('=', " "),
            lo,
            hi,
            cell(q, strong),
            if w.carbonate { cell(c, carbonate) } else { "—".to_owned() },
            if w.buffers > 0 {
                format!(
                    "{}{}",
                    cell(b, phosphate),
                    reported_pka(out).map(|p| format!(", pKa {p:.2}")).unwrap_or_default()
                )
            } else {
                "—".to_owned()
            },
            rms.map(|v| format!("{v:.3}")).unwrap_or_else(|| "—".to_owned()),
        ));

        let Some(q_tol) = q_tol else { continue };
        assert_eq!(r.code, 0, "{} with {}: {out}", w.name, case.titrant);
        assert!(quality.contains("accepted"), "{quality}");
        let (qv, _) = q.unwrap();
        assert!((qv / strong - 1.0).abs() <= q_tol, "{} with {}: strong charge {qv} vs {strong}", w.name, case.titrant);
        if w.carbonate {
            let (cv, _) = c.unwrap();
            assert!(
                (cv / carbonate - 1.0).abs() <= c_tol,
                "{} with {}: carbonate {cv} vs {carbonate}",
                w.name,
                case.titrant
            );
        }
        if w.buffers > 0 {
            let (bv, _) = b.unwrap();
            assert!(
                (bv / phosphate - 1.0).abs() <= b_tol,
                "{} with {}: buffer {bv} vs {phosphate}",
                w.name,
                case.titrant
            );
        }
        if let Expect::Bias { .. } = case.expect {
            // A stated limit is a real miss of 2 % / 5 %, not slack: if the fit now recovers the
            // case, move it to `Recovered` (and update README's table).
            let (qv, cv, bv) = (qv, c.map_or(carbonate, |v| v.0), b.map_or(phosphate, |v| v.0));
            let within = (qv / strong - 1.0).abs() <= 0.02
                && (!w.carbonate || (cv / carbonate - 1.0).abs() <= 0.05)
                && (w.buffers == 0 || (bv / phosphate - 1.0).abs() <= 0.05);
            assert!(!within, "{} with {}: now within 2 % / 5 %", w.name, case.titrant);
            if w.carbonate && w.buffers > 0 {
                // The split moves between carbonate and phosphate: their sum is recovered.
                let sum = cv + bv;
                assert!((sum / (carbonate + phosphate) - 1.0).abs() <= 0.01, "sum {sum}");
            }
        }
    }
    println!("{}", table.join("\n"));
    println!();
    for n in notes {
        println!("- {n}");
    }
}
