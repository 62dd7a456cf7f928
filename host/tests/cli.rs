//! The `phdose` command-line contract: JSON keys and round trips, exit codes, error objects,
//! table mode and the built-in example, tested by running the built binary.
//!
//! Scenario data is invented (rinse water and cleaner baths at a fictional plating shop). These
//! tests check the CLI contract and internal consistency (species sum to totals, charges
//! balance, values in plausible ranges), not chemistry reference values: those live in the
//! core crate's tests.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use std::process::Command;

use common::{json_error, num, ok_json, ok_table, run, table_error, usage_error};
use serde_json::Value;

/// Checks a speciate document's internal consistency: every system's forms appear in
/// "species" and sum to its total, and the charges (species plus strong ions) balance.
fn check_speciation(doc: &Value) {
    for key in ["ph", "ionic_strength", "buffer_capacity", "temperature_c", "pkw", "strong_charge_eq_per_l"] {
        assert!(num(doc, key).is_finite());
    }
    assert!(doc["iterations"].as_u64().unwrap() >= 1);
    assert!(num(doc, "ionic_strength") >= 0.0 && num(doc, "buffer_capacity") > 0.0);
    let species = doc["species"].as_object().unwrap();
    let h = species["H+"].as_f64().unwrap();
    let oh = species["OH-"].as_f64().unwrap();
    assert!(h > 0.0 && oh > 0.0);
    let mut charge = h - oh + num(doc, "strong_charge_eq_per_l");
    let mut scale = h + oh + num(doc, "strong_charge_eq_per_l").abs();
    let totals = doc["totals_mol_per_l"].as_object().unwrap();
    let systems = doc["systems"].as_array().unwrap();
    assert_eq!(systems.len(), totals.len());
    for s in systems {
        let key = s["key"].as_str().unwrap();
        let total = totals[key].as_f64().unwrap();
        assert_eq!(num(s, "total_mol_per_l"), total);
        let mut sum = 0.0;
        for f in s["forms"].as_array().unwrap() {
            let formula = f["formula"].as_str().unwrap();
            let c = species.get(formula).and_then(Value::as_f64).unwrap_or_else(|| panic!("{formula} not in species"));
            assert_eq!(c, num(f, "mol_per_l"), "{formula}");
            assert!(c >= 0.0);
            sum += c;
            let z = f["charge"].as_i64().unwrap() as f64;
            charge += z * c;
            scale += z.abs() * c;
        }
        assert!((sum - total).abs() <= 1e-12 * total.max(1e-300), "{key}: forms sum {sum}, total {total}");
    }
    assert!(charge.abs() <= 1e-9 * scale, "charge balance off by {charge} eq/L (scale {scale})");
    let strong: f64 = doc["strong_ions_mol_per_l"]
        .as_object()
        .unwrap()
        .iter()
        .map(|(ion, c)| {
            let z = if ion.ends_with("^2+") {
                2.0
            } else if ion.ends_with('+') {
                1.0
            } else {
                -1.0
            };
            z * c.as_f64().unwrap()
        })
        .sum();
    assert!((strong - num(doc, "strong_charge_eq_per_l")).abs() < 1e-15);
}

// Invented scenario: the final rinse of a fictional zinc-plating line, fed with hard-ish
// make-up water (bicarbonate), some phosphoric acid drag-out and a little caustic.
const RINSE: &str = r#"{"temperature_c": 22.0, "activity": "davies",
    "dissolved": {"NaHCO3": 0.003, "H3PO4": 0.0004, "NaOH": 0.0005}}"#;

#[test]
fn speciate_json_round_trip() {
    let doc = ok_json(&["speciate", "--json"], RINSE);
    check_speciation(&doc);
    for key in ["CO2", "HCO3-", "CO3^2-", "H3PO4", "H2PO4-", "HPO4^2-", "PO4^3-", "H+", "OH-"] {
        assert!(doc["species"].get(key).is_some(), "species {key} missing");
    }
    assert_eq!(num(&doc["totals_mol_per_l"], "carbonate"), 0.003);
    assert_eq!(num(&doc["totals_mol_per_l"], "phosphate"), 0.0004);
    assert!((num(&doc["strong_ions_mol_per_l"], "Na+") - 0.0035).abs() < 1e-15);
    assert_eq!(num(&doc, "temperature_c"), 22.0);
    assert_eq!(doc["activity"], "davies");
    // Bicarbonate water with a little acid: near-neutral, dilute, buffered.
    let ph = num(&doc, "ph");
    assert!(ph > 5.5 && ph < 8.5, "pH {ph}");
    assert!(num(&doc, "ionic_strength") > 1e-4 && num(&doc, "ionic_strength") < 0.05);
    assert!(num(&doc, "residual_eq_per_l").abs() < 1e-12);
    let g = &doc["activity_coefficients"];
    assert!(num(g, "z1") < 1.0 && num(g, "z2") < num(g, "z1") && num(g, "z3") < num(g, "z2"));
    assert_eq!(doc["substances"].as_array().unwrap().len(), 3);
    // `dissolved` has the request's shape: as given -> mol/L.
    assert_eq!(num(&doc["dissolved"], "H3PO4"), 0.0004);
}

#[test]
fn speciate_defaults_names_and_ideal_mode() {
    let doc = ok_json(&["speciate", "--json"], r#"{"dissolved": {"sodium bicarbonate": 0.002, "HCl": 0.0008}}"#);
    check_speciation(&doc);
    assert_eq!(num(&doc, "temperature_c"), 25.0);
    assert_eq!(doc["activity"], "davies");
    assert_eq!(doc["substances"][0]["formula"], "NaHCO3");

    let ideal = ok_json(
        &["speciate", "--json"],
        r#"{"activity": "ideal", "dissolved": {"sodium bicarbonate": 0.002, "HCl": 0.0008}}"#,
    );
    check_speciation(&ideal);
    assert_eq!(ideal["activity"], "ideal");
    assert_eq!(num(&ideal["activity_coefficients"], "z1"), 1.0);
    assert_ne!(num(&ideal, "ph"), num(&doc, "ph"), "activity model must make a difference");
    // Same composition, so the same system totals.
    assert_eq!(ideal["totals_mol_per_l"], doc["totals_mol_per_l"]);
}

#[test]
fn speciate_pure_water_and_temperature() {
    // Nothing dissolved is valid JSON input (a blank). Neutral pH falls as water warms.
    let cold = ok_json(&["speciate", "--json"], r#"{"temperature_c": 5, "dissolved": {}}"#);
    let warm = ok_json(&["speciate", "--json"], r#"{"temperature_c": 60, "dissolved": {}}"#);
    check_speciation(&cold);
    check_speciation(&warm);
    assert!(num(&warm, "ph") < num(&cold, "ph"));
    assert!((num(&cold, "ph") - num(&cold, "neutral_ph")).abs() < 1e-6);
    assert!(num(&warm, "pkw") < num(&cold, "pkw"));
}

#[test]
fn speciate_table_agrees_with_json() {
    let doc = ok_json(
        &["speciate", "--json"],
        r#"{"temperature_c": 18, "activity": "ideal", "dissolved": {"NaHCO3": 0.002, "HCl": 0.001}}"#,
    );
    let r = run(&["speciate", "NaHCO3=0.002", "HCl=0.001", "--temperature-c", "18", "--activity", "ideal"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stderr.is_empty());
    let ph_line = r.stdout.lines().find(|l| l.starts_with("pH")).expect("a pH line");
    assert!(ph_line.contains(&format!("{:.3}", num(&doc, "ph"))), "{ph_line} vs {}", num(&doc, "ph"));
    for word in ["ionic strength", "buffer capacity", "HCO3-", "CO3^2-", "H+", "OH-", "18.0 °C", "ideal"] {
        assert!(r.stdout.contains(word), "table lacks {word}:\n{}", r.stdout);
    }
    let last = r.stdout.trim_end().lines().last().unwrap();
    assert!(last.contains("SAFETY.md") && last.len() < 120, "caution line: {last}");
}

#[test]
fn example_runs_in_both_modes() {
    let r = run(&["speciate", "--example"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("example") && r.stdout.contains("SO4^2-") && r.stdout.contains("HPO4^2-"));
    assert!(r.stdout.trim_end().lines().last().unwrap().contains("SAFETY.md"));

    let doc = ok_json(&["speciate", "--example", "--json"], "");
    check_speciation(&doc);
    assert_eq!(num(&doc, "temperature_c"), 18.0);
    for key in ["carbonate", "sulfate", "phosphate"] {
        assert!(num(&doc["totals_mol_per_l"], key) > 0.0, "{key}");
    }
    // Overriding the example's conditions is allowed.
    let ideal = ok_json(&["speciate", "--example", "--json", "--activity", "ideal", "--temperature-c", "30"], "");
    assert_eq!((ideal["activity"].as_str(), num(&ideal, "temperature_c")), (Some("ideal"), 30.0));
}

#[test]
fn salt_json_round_trip_disodium_phosphate() {
    let doc = ok_json(&["salt", "--json"], r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.05}"#);
    assert_eq!(doc["class"], "basic");
    let ph = num(&doc, "ph");
    assert!(ph > 9.0 && ph < 10.0, "pH {ph}");
    assert_eq!(doc["salt"], "Na2HPO4");
    assert_eq!(doc["parent_acid"], "H3PO4");
    assert_eq!(doc["parent_base"], "NaOH");
    assert_eq!(doc["parent_acid_strength"], "weak");
    assert_eq!(doc["parent_base_strength"], "strong");
    assert_eq!((num(&doc, "temperature_c"), doc["activity"].as_str()), (25.0, Some("davies")));
    let neutral = num(&doc, "neutral_ph");
    assert!(neutral > 6.9 && neutral < 7.1 && ph > neutral);

    let cation = &doc["cation"];
    assert_eq!((cation["formula"].as_str(), cation["count"].as_u64()), (Some("Na+"), Some(2)));
    assert_eq!(cation["action"], "nothing");
    assert!(cation["ka"].is_null() && cation["kb"].is_null());
    let anion = &doc["anion"];
    assert_eq!((anion["formula"].as_str(), anion["count"].as_u64()), (Some("HPO4^2-"), Some(1)));
    assert_eq!(anion["action"], "amphiprotic");
    assert!(num(anion, "kb") > num(anion, "ka"), "HPO4^2- is more base than acid");
    assert!((num(anion, "pka") + num(anion, "ka").log10()).abs() < 1e-12);

    let a = &doc["approximation"];
    assert_eq!(a["kind"], "amphiprotic");
    assert!((num(a, "error_ph") - (num(a, "ph") - ph)).abs() < 1e-9);
    assert!(num(a, "rule_ratio") >= 0.0);
    assert_eq!(a["valid"].as_bool(), Some(num(a, "rule_ratio") < 0.05));
}

#[test]
fn salt_classes_and_missing_approximation() {
    // A cleaner-bath buffer salt at bath temperature (invented): acidic.
    let acid = ok_json(
        &["salt", "--json"],
        r#"{"salt": "monosodium phosphate", "concentration_mol_per_l": 0.02, "temperature_c": 40}"#,
    );
    assert_eq!(acid["class"], "acidic");
    assert_eq!(acid["salt"], "NaH2PO4");
    assert!(num(&acid, "ph") < num(&acid, "neutral_ph"));
    assert_eq!(num(&acid, "temperature_c"), 40.0);

    // Strong parents on both sides: neutral, no approximation, pH at neutral in ideal mode.
    let neutral = ok_json(
        &["salt", "--json"],
        r#"{"salt": "NaNO3", "concentration_mol_per_l": 0.003, "activity": "ideal", "temperature_c": 12}"#,
    );
    assert_eq!(neutral["class"], "neutral");
    assert!(neutral["approximation"].is_null());
    assert!(neutral["anion"]["ka"].is_null() && neutral["anion"]["kb"].is_null());
    assert!((num(&neutral, "ph") - num(&neutral, "neutral_ph")).abs() < 1e-6);
}

#[test]
fn salt_table_mode() {
    let r = run(&["salt", "Na2HPO4", "0.05", "--temperature-c", "25", "--activity", "ideal"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    for word in ["basic", "H3PO4", "NaOH", "HPO4^2-", "amphiprotic", "ideal"] {
        assert!(r.stdout.contains(word), "table lacks {word}:\n{}", r.stdout);
    }
    let doc = ok_json(
        &["salt", "--json"],
        r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.05, "temperature_c": 25, "activity": "ideal"}"#,
    );
    let ph_line = r.stdout.lines().find(|l| l.starts_with("pH")).unwrap();
    assert!(ph_line.contains(&format!("{:.3}", num(&doc, "ph"))), "{ph_line}");
}

#[test]
fn speciate_json_errors() {
    let cases: &[(&str, &str)] = &[
        ("{not json", "invalid JSON"),
        ("", "no JSON"),
        ("[1, 2]", "invalid JSON"),
        (r#"{"dissolved": {"NaXYZ": 0.001}}"#, "known formulas"),
        (r#"{"dissolved": {"NaHCO3": -0.001}}"#, "negative"),
        (r#"{"dissolved": {"NaHCO3": "0.001"}}"#, "invalid"),
        (r#"{"dissolved": {"NaHCO3": 25}}"#, "limit"),
        (r#"{"temperature_c": 120, "dissolved": {"NaHCO3": 0.001}}"#, "temperature"),
        (r#"{"temperature_c": -3, "dissolved": {"NaHCO3": 0.001}}"#, "temperature"),
        (r#"{"activity": "debye", "dissolved": {"NaHCO3": 0.001}}"#, "activity"),
        (r#"{"temprature_c": 20, "dissolved": {"NaHCO3": 0.001}}"#, "unknown field"),
        (r#"{"dissolved": {"HCl": 0.001, "HCl": 0.002}}"#, "duplicate"),
        (r#"{"dissolved": {"HCl": 0.001, "hydrochloric acid": 0.002}}"#, "twice"),
        (r#"{"temperature_c": 20}"#, "dissolved"),
        // Too much salt for the Davies model: the solver refuses.
        (r#"{"dissolved": {"Na2SO4": 1.5}}"#, "ionic strength"),
    ];
    for (stdin, expect) in cases {
        let msg = json_error(&["speciate", "--json"], stdin);
        assert!(msg.contains(expect), "input {stdin:?}: message {msg:?} lacks {expect:?}");
    }
    let unknown = json_error(&["speciate", "--json"], r#"{"dissolved": {"NaXYZ": 0.001}}"#);
    assert!(unknown.contains("NaHCO3") && unknown.contains("H2SO4"), "{unknown}");
    // Input belongs in the JSON, not on the command line.
    json_error(&["speciate", "--json", "NaHCO3=0.001"], "");
    json_error(&["speciate", "--json", "--temperature-c", "20"], r#"{"dissolved": {}}"#);
}

#[test]
fn salt_json_errors() {
    let cases: &[(&str, &str)] = &[
        (r#"{"salt": "NaXYZ", "concentration_mol_per_l": 0.01}"#, "known formulas"),
        (r#"{"salt": "HCl", "concentration_mol_per_l": 0.01}"#, "not a salt"),
        (r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0}"#, "above 0"),
        (r#"{"salt": "Na2HPO4", "concentration_mol_per_l": -0.01}"#, "above 0"),
        (r#"{"salt": "Na2HPO4"}"#, "concentration_mol_per_l"),
        (r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.01, "temperature_c": 101}"#, "temperature"),
        (r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.01, "activity": "IDEALISH"}"#, "activity"),
        (r#"{"salt": "Na2SO4", "concentration_mol_per_l": 2.0}"#, "ionic strength"),
        ("salt please", "invalid JSON"),
    ];
    for (stdin, expect) in cases {
        let msg = json_error(&["salt", "--json"], stdin);
        assert!(msg.contains(expect), "input {stdin:?}: message {msg:?} lacks {expect:?}");
    }
    json_error(&["salt", "--json", "Na2HPO4", "0.05"], "");
    json_error(&["frobnicate", "--json"], "");
    json_error(&["speciate", "--json", "--bogus"], "");
}

#[test]
fn table_mode_errors() {
    assert!(table_error(&["speciate", "NaXYZ=0.001"]).contains("known formulas"));
    assert!(table_error(&["speciate", "NaHCO3=-0.001"]).contains("negative"));
    assert!(table_error(&["speciate"]).contains("--example"));
    assert!(table_error(&["speciate", "NaHCO3=0.001", "--temperature-c", "150"]).contains("temperature"));
    assert!(table_error(&["speciate", "Na2SO4=1.5"]).contains("ionic strength"));
    assert!(table_error(&["salt", "Na2HPO4"]).contains("SALT MOL_PER_L"));
    assert!(table_error(&["salt", "HCl", "0.01"]).contains("not a salt"));
    // A number echoed in a message is short: 1e300, not 301 digits.
    let e = table_error(&["speciate", "HCl=1e300"]);
    assert!(e.contains("total 1e300 mol/L exceeds the 20 mol/L limit"), "{e}");
    let e = table_error(&["salt", "Na2HPO4", "-0.000000001"]);
    assert!(e.contains("concentration -1e-9 mol/L must be a number above 0"), "{e}");
    // What the argument parser (clap) refuses: its message, a tip or the usage, exit 2.
    assert!(usage_error(&["speciate", "NaHCO3=abc"]).contains("amount of NaHCO3: 'abc' is not a number"));
    assert!(usage_error(&["speciate", "NaHCO3=NaN"]).contains("finite"));
    assert!(usage_error(&["speciate", "NaHCO3"]).contains("SUBSTANCE=MOL_PER_L"));
    assert!(usage_error(&["speciate", "NaHCO3=0.001", "--activity", "extended"]).contains("--activity"));
    assert!(usage_error(&["speciate", "NaHCO3=0.001", "--temperature-c"]).contains("a value is required"));
    assert!(usage_error(&["speciate", "--example", "HCl=0.001"]).contains("--example"));
    assert!(usage_error(&["salt", "Na2HPO4", "0.05", "--verbose"]).contains("unexpected argument '--verbose'"));
    assert!(usage_error(&["frobnicate"]).contains("unrecognized subcommand 'frobnicate'"));
}

#[test]
fn no_command_prints_the_usage_with_exit_2() {
    let r = run(&[], "");
    assert_eq!(r.code, 2);
    assert!(r.stdout.is_empty());
    assert!(r.stderr.contains("Usage: phdose <COMMAND>"), "{}", r.stderr);
    for command in ["speciate", "salt", "substances", "plan", "curve", "fit", "completions"] {
        assert!(r.stderr.contains(command), "usage lacks {command}: {}", r.stderr);
    }
}

#[test]
fn a_mistyped_command_or_option_gets_a_suggestion() {
    let e = usage_error(&["specaite", "NaHCO3=0.002"]);
    assert!(e.contains("unrecognized subcommand 'specaite'") && e.contains("'speciate'"), "{e}");
    let e = usage_error(&["speciate", "NaHCO3=0.002", "--temperature", "18"]);
    assert!(e.contains("tip: a similar argument exists: '--temperature-c'"), "{e}");
    // With --json the same refusal is a JSON document on stdout, still with the suggestion.
    let msg = json_error(&["plan", "--json", "--setpoint", "7"], "");
    assert!(msg.contains("unexpected argument '--setpoint'") && msg.contains("--setpoint-ph"), "{msg}");
    assert!(!msg.contains("Usage:"), "{msg}");
}

#[test]
fn version() {
    let r = run(&["--version"], "");
    assert_eq!(r.code, 0);
    assert_eq!(r.stdout.trim(), format!("phdose {}", env!("CARGO_PKG_VERSION")));
}

#[test]
fn bash_completion_script_parses() {
    let r = run(&["completions", "bash"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    for word in ["speciate", "--temperature-c", "--activity", "davies", "--out", "--force"] {
        assert!(r.stdout.contains(word), "completion lacks {word}");
    }
    let dir = common::scratch("completions");
    let script = dir.join("phdose.bash");
    std::fs::write(&script, &r.stdout).unwrap();
    let check = Command::new("bash").arg("-n").arg(&script).output().expect("bash is installed");
    assert!(check.status.success(), "bash -n: {}", String::from_utf8_lossy(&check.stderr));
    for shell in ["zsh", "fish", "powershell"] {
        let r = run(&["completions", shell], "");
        assert_eq!(r.code, 0, "{shell}: {}", r.stderr);
        assert!(r.stdout.contains("speciate") && r.stdout.contains("temperature-c"), "{shell}");
    }
    assert!(usage_error(&["completions", "tcsh"]).contains("possible values"));
}

#[cfg(unix)]
#[test]
fn non_utf8_argument_is_an_error_not_a_panic() {
    use std::os::unix::ffi::OsStrExt;
    let bad = std::ffi::OsStr::from_bytes(b"NaHCO3=\xff");
    let out = Command::new(env!("CARGO_BIN_EXE_phdose")).arg("speciate").arg(bad).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.starts_with("error: ") && stderr.contains("UTF-8"), "{stderr}");
}

#[test]
fn help_and_substances() {
    let commands = ["speciate", "salt", "substances", "plan", "curve", "fit", "completions"];
    for args in [vec!["--help"], vec!["help"], vec!["-h"]] {
        let r = run(&args, "");
        assert_eq!(r.code, 0, "{args:?}");
        assert!(r.stdout.contains("Usage: phdose <COMMAND>"), "{args:?}: {}", r.stdout);
        assert!(commands.iter().all(|c| r.stdout.contains(c)), "{args:?}: {}", r.stdout);
    }
    for command in commands {
        for args in [vec![command, "--help"], vec!["help", command], vec![command, "-h"]] {
            let r = run(&args, "");
            assert_eq!(r.code, 0, "{args:?}");
            assert!(r.stdout.contains(&format!("Usage: phdose {command}")), "{args:?}: {}", r.stdout);
        }
    }
    // The examples of the old help texts are kept.
    assert!(ok_table(&["speciate", "--help"]).contains("phdose speciate NaHCO3=0.002 H2SO4=0.0006"));
    assert!(ok_table(&["help", "salt"]).contains("phdose salt Na2HPO4 0.05"));
    let r = run(&["substances"], "");
    assert_eq!(r.code, 0);
    assert!(r.stdout.contains("NaHCO3") && r.stdout.contains("sodium bicarbonate") && r.stdout.contains("84.006"));
    let list = ok_json(&["substances", "--json"], "");
    let list = list.as_array().unwrap();
    assert!(list.len() >= 35);
    for s in list {
        assert!(num(s, "molar_mass_g_per_mol") > 0.0);
        assert!(!s["adds"].as_array().unwrap().is_empty(), "{s}");
    }
    // Every formula the table lists is accepted by speciate.
    for s in list {
        let formula = s["formula"].as_str().unwrap();
        let doc = ok_json(&["speciate", "--json"], &format!(r#"{{"dissolved": {{"{formula}": 0.0001}}}}"#));
        check_speciation(&doc);
    }
}

#[test]
fn speciate_reports_alkalinity_at_the_standard_methods_endpoints() {
    // Make-up water of the fictional plating shop: 2 mM bicarbonate (pH ≈ 8.3) has P ≈ 0 and
    // T ≈ 2 meq/L = 100.1 mg/L as CaCO3 (1 meq/L = 50.04 mg/L, calc: CaCO3 100.09 g/mol / 2); with
    // 0.5 mM carbonate added, P = 0.5 meq/L = 25.0 mg/L. Within 2 %: the endpoint capacities
    // carry small water and CO2-side terms.
    let doc = ok_json(&["speciate", "--json"], r#"{"activity": "ideal", "dissolved": {"NaHCO3": 0.002}}"#);
    let a = &doc["alkalinity"];
    assert!(num(a, "phenolphthalein_mg_per_l_as_caco3") < 1.0, "{a}");
    assert!((num(a, "total_mg_per_l_as_caco3") - 100.1).abs() < 2.0, "{a}");
    assert_eq!(num(a, "acidity_to_ph_4_5_mg_per_l_as_caco3"), 0.0);
    let doc =
        ok_json(&["speciate", "--json"], r#"{"activity": "ideal", "dissolved": {"NaHCO3": 0.002, "Na2CO3": 0.0005}}"#);
    let a = &doc["alkalinity"];
    assert!((num(a, "phenolphthalein_mg_per_l_as_caco3") - 25.0).abs() < 0.5, "{a}");
    assert!((num(a, "total_mg_per_l_as_caco3") - 150.1).abs() < 3.0, "{a}");
    // Acidic water has mineral acidity to pH 4.5 instead: 1 mM HCl less the 0.03 mM H+ still free at
    // pH 4.5 = 0.968 meq/L ≈ 48.4 mg/L as CaCO3.
    let doc = ok_json(&["speciate", "--json"], r#"{"activity": "ideal", "dissolved": {"HCl": 0.001}}"#);
    let a = &doc["alkalinity"];
    assert!(
        num(a, "total_mg_per_l_as_caco3") == 0.0 && (num(a, "acidity_to_ph_4_5_mg_per_l_as_caco3") - 48.5).abs() < 1.5,
        "{a}"
    );
}

/// `--json` reads the whole request from stdin; a request option on the command line beside it
/// is refused (exit 2, JSON error document) with a message that says how: which JSON keys to
/// use instead (README, "Vocabulary").
#[test]
fn json_with_request_flags_is_refused_with_the_keys_to_use() {
    for (args, stdin, keys) in [
        (vec!["speciate", "--json", "--temperature-c", "30"], r#"{"dissolved": {"NaHCO3": 0.002}}"#, "temperature_c"),
        (
            vec!["salt", "--json", "--temperature-c", "30"],
            r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.05}"#,
            "temperature_c",
        ),
        (vec!["plan", "--json", "--setpoint-ph", "7"], "{}", "setpoint_ph"),
        (vec!["curve", "--json", "--point-count", "32"], "{}", "point_count"),
        (vec!["fit", "--json", "--phosphate"], "{}", "phosphate"),
    ] {
        let msg = json_error(&args, stdin);
        assert!(msg.contains("JSON object instead of the command line") && msg.contains(keys), "{args:?}: {msg}");
    }
}
