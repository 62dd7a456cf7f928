//! `phdose plan` hazard verdicts: acid onto hypochlorite (chlorine), acid onto sulfide (hydrogen
//! sulfide), a reagent below its crystallisation temperature. Each case is a command that said
//! `verdict ok` before the hazard checks existed.
//!
//! Scenarios are invented: the effluent of a fictional dairy's cleaning station (hypochlorite
//! sanitiser in brine), the scrubber bleed of a fictional tannery (sulfide), the rinse of a
//! fictional plating shop dosed with 50 % caustic from an unheated tank.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{num, ok_json, ok_table};
use serde_json::Value;

fn verdicts(doc: &Value) -> Vec<String> {
    doc["verdicts"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_owned()).collect()
}

#[test]
fn acid_onto_hypochlorite_names_chlorine() {
    let args =
        ["plan", "NaOCl=0.01", "NaCl=0.01", "--flow-l-per-h", "1000", "--reagent", "HCl=32%", "--setpoint-ph", "3"];
    let table = ok_table(&args);
    assert!(!table.contains("verdict             ok"), "{table}");
    assert!(table.contains("chlorine (Cl2)"), "{table}");
    let doc = plan_json(
        r#""influent": {"flow_l_per_h": 1000, "dissolved": {"NaOCl": 0.01, "NaCl": 0.01}},
        "reagent": {"substance": "HCl", "mass_percent": 32}, "setpoint_ph": 3"#,
    );
    assert_ne!(verdicts(&doc), vec!["ok".to_owned()]);
    assert_eq!(doc["all_clear"], Value::Bool(false));
    let hazard = doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == "gas_release").expect("gas_release");
    assert_eq!(hazard["gas"], "Cl2");
    let release = num(hazard, "release_below_ph");
    // The release pH lies above the setpoint (that is the finding) and below the hypochlorite
    // pKa (Cl2(aq) only appears where HOCl dominates).
    assert!(release > 3.0 && release < 7.5, "{release}");
    // A setpoint above the release pH is no chlorine hazard.
    let doc = plan_json(
        r#""influent": {"flow_l_per_h": 1000, "dissolved": {"NaOCl": 0.01, "NaCl": 0.01}},
        "reagent": {"substance": "HCl", "mass_percent": 32}, "setpoint_ph": 7"#,
    );
    assert!(!doc["checks"].as_array().unwrap().iter().any(|c| c["kind"] == "gas_release"), "{doc}");
}

#[test]
fn acid_onto_sulfide_names_hydrogen_sulfide() {
    let args =
        ["plan", "NaHS=0.002", "NaOH=0.002", "--flow-l-per-h", "1000", "--reagent", "H2SO4=96%", "--setpoint-ph", "5"];
    let table = ok_table(&args);
    assert!(table.contains("hydrogen sulfide (H2S)"), "{table}");
    let doc = plan_json(
        r#""influent": {"flow_l_per_h": 1000, "dissolved": {"NaHS": 0.002, "NaOH": 0.002}},
        "reagent": {"substance": "H2SO4", "mass_percent": 96}, "setpoint_ph": 5"#,
    );
    assert_eq!(doc["all_clear"], Value::Bool(false));
    let hazard = doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == "gas_release").expect("gas_release");
    assert_eq!(hazard["gas"], "H2S");
    // Millero's pKa1 is 6.98 at 25 °C; 1 % H2S lies two pH units above it (calc).
    let release = num(hazard, "release_below_ph");
    assert!((release - (6.98 + 2.0)).abs() < 0.05, "{release}");
    assert!(num(hazard, "gas_fraction") > 0.9, "{hazard}");
}

#[test]
fn cold_fifty_percent_caustic_crystallises() {
    let args = [
        "plan",
        "H2SO4=0.003",
        "--flow-l-per-h",
        "500",
        "--reagent",
        "NaOH=50%",
        "--setpoint-ph",
        "7",
        "--temperature-c",
        "1",
    ];
    let table = ok_table(&args);
    assert!(table.contains("crystallis"), "{table}");
    let cold = r#""temperature_c": 1, "influent": {"flow_l_per_h": 500, "dissolved": {"H2SO4": 0.003}},
        "reagent": {"substance": "NaOH", "mass_percent": 50}, "setpoint_ph": 7"#;
    let doc = plan_json(cold);
    assert_eq!(doc["all_clear"], Value::Bool(false));
    let c = doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == "reagent_crystallises").expect("check");
    assert_eq!(num(c, "reagent_temperature_c"), 1.0);
    assert!(num(c, "crystallises_below_c") > 1.0);
    // A heated reagent tank clears it.
    let mut warm = args.to_vec();
    warm.extend(["--reagent-temperature-c", "25"]);
    assert!(!ok_table(&warm).contains("crystallis"));
    let doc = plan_json(&format!("{cold}, \"reagent_temperature_c\": 25"));
    assert!(!doc["checks"].as_array().unwrap().iter().any(|c| c["kind"] == "reagent_crystallises"), "{doc}");
}

/// `plan --json` with the request's fields (without the braces).
fn plan_json(fields: &str) -> Value {
    ok_json(&["plan", "--json"], &format!("{{{fields}}}"))
}

#[test]
fn reagent_temperature_is_checked_and_boot_codes_are_listed() {
    use common::{json_error, table_error};
    let args = ["plan", "H2SO4=0.003", "--flow-l-per-h", "500", "--reagent", "NaOH=50%", "--setpoint-ph", "7"];
    let mut frozen = args.to_vec();
    frozen.extend(["--reagent-temperature-c", "-80"]);
    assert!(table_error(&frozen).contains("reagent_temperature_c"));
    let msg = json_error(
        &["plan", "--json"],
        r#"{"influent": {"flow_l_per_h": 500, "dissolved": {"H2SO4": 0.003}},
            "reagent": {"substance": "NaOH", "mass_percent": 50}, "setpoint_ph": 7, "reagent_temperature_c": 1e300}"#,
    );
    assert!(msg.contains("reagent_temperature_c"), "{msg}");
    // The boot checks' hazard codes are documented by `check --help`.
    let help = common::run(&["check", "--help"], "").stdout;
    assert!(help.contains("219") && help.contains("chlorine (Cl2)"), "{help}");
    assert!(help.contains("220") && help.contains("hydrogen sulfide (H2S)"), "{help}");
}
