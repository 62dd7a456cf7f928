//! `phdose plan`: the JSON contract, round trips through the library, verdicts and errors.
//!
//! Scenarios are invented (rinse water at a fictional plating shop). The round trips are the
//! reference here: mixing the influent with the planned reagent flow in the phdose library and
//! solving must give back the setpoint. Molarities of reagents as bought are calculated from
//! c = w·ρ·1000/M with the molar mass from the substance table (calc).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{json_error, num, ok_json, ok_table, run, table_error, usage_error};
use phdose::chem::{Activity, Solution};
use phdose::units::Celsius;
use serde_json::Value;

/// The request from the command's issue: bicarbonate rinse water with some hydrochloric acid.
const ISSUE: &str = r#"{"temperature_c": 25, "activity": "davies",
  "influent": {"flow_l_per_h": 1200, "dissolved": {"NaHCO3": 0.002, "HCl": 0.001}},
  "reagent": {"dissolved": {"NaOH": 6.25}}, "setpoint_ph": 7.0,
  "pump": {"max_l_per_h": 10, "step_l_per_h": 0.01}, "band_ph": 0.3}"#;

/// Mixes the influent of a plan document (at its flow) with `reagent` at the planned flow in
/// the library and returns the mixture's pH.
fn mixture_ph(doc: &Value, reagent: &[(&str, f64)]) -> f64 {
    let t = Celsius::new(num(doc, "temperature_c")).unwrap();
    let activity = if doc["activity"] == "ideal" { Activity::Ideal } else { Activity::Davies };
    let mut influent: Solution<f64, 8> = Solution::new(t, activity);
    for (formula, c) in doc["influent_dissolved"].as_object().unwrap() {
        influent.add_formula(formula, c.as_f64().unwrap()).unwrap();
    }
    let mut r: Solution<f64, 2> = Solution::new(t, activity);
    for (f, c) in reagent {
        r.add_formula(f, *c).unwrap();
    }
    let mix = influent.mix(num(doc, "influent_flow_l_per_h"), &r, num(doc, "reagent_flow_l_per_h")).unwrap();
    mix.solve().unwrap().ph
}

#[test]
fn contract_keys_and_round_trip() {
    let doc = ok_json(&["plan", "--json"], ISSUE);
    // The stable contract.
    assert_eq!(doc["reachable"], Value::Bool(true));
    let flow = num(&doc, "reagent_flow_l_per_h");
    assert!(flow > 0.0 && flow < 10.0, "flow {flow}");
    assert!(num(&doc, "mixture_buffer_capacity") > 0.0);
    assert!(num(&doc, "gain_ph_per_l_per_h") > 0.0, "caustic raises the pH");
    assert_eq!(doc["verdicts"], serde_json::json!(["ok"]));
    assert_eq!(doc["all_clear"], Value::Bool(true));
    // Round trip through the library: the planned flow gives the setpoint.
    let ph = mixture_ph(&doc, &[("NaOH", 6.25)]);
    assert!((ph - 7.0).abs() < 1e-6, "mixture pH {ph}");
    // Stoichiometric bound (calc): the acid turned 1 mmol/L of the bicarbonate into CO2; pH 7
    // lies between pKa1 and the bicarbonate point, so the caustic turns back part of that CO2:
    // between 0 and 1 meq/L of the mixture.
    let meq_per_l = flow * 6.25 / (1200.0 + flow) * 1000.0;
    assert!(meq_per_l > 0.0 && meq_per_l < 1.0, "{meq_per_l} meq/L");
    // Extras are present and consistent.
    assert_eq!(num(&doc, "reagent_mol_per_l"), 6.25);
    assert!(num(&doc, "influent_ph") < 7.0);
    let step = num(&doc, "gain_ph_per_step");
    assert!(step > 0.0 && step < 0.3, "one step {step} pH fits the 0.3 band");
    // The linear gain times the step approximates the real step (buffered water).
    assert!((num(&doc, "gain_ph_per_l_per_h") * 0.01 / step - 1.0).abs() < 0.1);
    assert!(num(&doc, "mixture_ionic_strength") > 0.0);
    assert!(doc["activity_rounds"].as_u64().unwrap() >= 1);
    assert!(doc.get("rounds").is_none(), "one name per quantity");
    assert_eq!(doc["checks"], serde_json::json!([]));
    assert!(doc["unreachable"].is_null());
    let stages = &doc["stage_advice"];
    assert_eq!(stages["stages"].as_u64(), Some(1));
    assert!(stages["basis"].as_str().unwrap().contains("common practice"));
    assert!(doc["caution"].as_str().unwrap().contains("SAFETY.md"));
}

#[test]
fn mass_percent_reagent_forms() {
    let with_density = ISSUE.replace(
        r#"{"dissolved": {"NaOH": 6.25}}"#,
        r#"{"substance": "NaOH", "mass_percent": 25, "density_kg_per_l": 1.27}"#,
    );
    let doc = ok_json(&["plan", "--json"], &with_density);
    // c = 0.25 · 1.27 kg/L · 1000 / 39.997 g/mol (calc).
    let c = 0.25 * 1.27 * 1000.0 / 39.997;
    assert!((num(&doc, "reagent_mol_per_l") - c).abs() < 1e-9, "{doc}");
    assert!((mixture_ph(&doc, &[("NaOH", c)]) - 7.0).abs() < 1e-6);
    assert_eq!(num(&doc["reagent"], "mass_percent"), 25.0);
    // Without a density the grade table's 25 % caustic (1.274 kg/L at 20 °C) is used.
    let from_table =
        ISSUE.replace(r#"{"dissolved": {"NaOH": 6.25}}"#, r#"{"substance": "sodium hydroxide", "mass_percent": 25}"#);
    let doc = ok_json(&["plan", "--json"], &from_table);
    assert_eq!(num(&doc["reagent"], "density_kg_per_l"), 1.274);
    assert!(doc["reagent"]["density_source"].as_str().unwrap().contains("grade table"));
    // Same moles per hour whatever the form: flow × concentration agrees within 1e-9.
    let issue = ok_json(&["plan", "--json"], ISSUE);
    let a = num(&doc, "reagent_flow_l_per_h") * num(&doc, "reagent_mol_per_l");
    let b = num(&issue, "reagent_flow_l_per_h") * 6.25;
    assert!((a / b - 1.0).abs() < 1e-6, "{a} vs {b} mol/h");
}

#[test]
fn unreachable_is_a_result_not_an_error() {
    // 0.01 mol/L caustic (pH ≈ 12) cannot lift the rinse to pH 12.5.
    let beyond = ISSUE.replace("6.25", "0.01").replace(r#""setpoint_ph": 7.0"#, r#""setpoint_ph": 12.5"#);
    let doc = ok_json(&["plan", "--json"], &beyond);
    assert_eq!(doc["reachable"], Value::Bool(false));
    assert!(doc["reagent_flow_l_per_h"].is_null() && doc["gain_ph_per_l_per_h"].is_null());
    assert!(doc["mixture_buffer_capacity"].is_null());
    let verdicts = doc["verdicts"].as_array().unwrap();
    assert_eq!(verdicts.len(), 1);
    assert!(verdicts[0].as_str().unwrap().starts_with("unreachable: "), "{verdicts:?}");
    assert_eq!(doc["unreachable"]["kind"], "beyond_reagent");
    // 0.01 mol/L caustic on its own, ideal: pH = pKw(25 °C) − 2 ≈ 12.0 (calc).
    let limit = num(&doc["unreachable"], "limit_ph");
    assert!(limit > 11.5 && limit < 12.5, "limit {limit}");
    assert_eq!(doc["all_clear"], Value::Bool(false));

    // Caustic cannot lower the pH.
    let wrong = ISSUE.replace(r#""setpoint_ph": 7.0"#, r#""setpoint_ph": 4.0"#);
    let doc = ok_json(&["plan", "--json"], &wrong);
    assert_eq!(doc["reachable"], Value::Bool(false));
    assert_eq!(doc["unreachable"]["kind"], "wrong_direction");
    assert!(doc["verdicts"][0].as_str().unwrap().contains("away from the setpoint"));

    // Table mode says so too, with exit 0 and the caution at the end.
    let r = run(&["plan", "HCl=0.001", "--flow-l-per-h", "100", "--reagent", "NaOH=0.5", "--setpoint-ph", "3"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stdout.contains("unreachable: "), "{}", r.stdout);
    assert!(r.stdout.trim_end().ends_with("see SAFETY.md."));
}

#[test]
fn beyond_pump_verdict() {
    let small = ISSUE.replace(r#""max_l_per_h": 10"#, r#""max_l_per_h": 0.05"#);
    let doc = ok_json(&["plan", "--json"], &small);
    assert_eq!(doc["reachable"], Value::Bool(true));
    let flow = num(&doc, "reagent_flow_l_per_h");
    assert!(flow > 0.05);
    let v = doc["verdicts"].as_array().unwrap();
    let text = v.iter().filter_map(Value::as_str).find(|s| s.starts_with("beyond pump capacity")).expect("verdict");
    assert_eq!(text, format!("beyond pump capacity: needs {:.4} L/h, pump max 0.05 L/h", flow));
    let check = doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == "beyond_pump").unwrap();
    assert_eq!((num(check, "needed_l_per_h"), num(check, "max_l_per_h")), (flow, 0.05));
    assert_eq!(doc["all_clear"], Value::Bool(false));
    // Still the setpoint, if the pump could deliver.
    assert!((mixture_ph(&doc, &[("NaOH", 6.25)]) - 7.0).abs() < 1e-6);
}

/// Runs a plan that must come out too steep; returns the document, the verdict and the check.
fn steep_plan(request: &str) -> (Value, String, Value) {
    let doc = ok_json(&["plan", "--json"], request);
    assert_eq!(doc["reachable"], Value::Bool(true));
    let step = num(&doc, "gain_ph_per_step");
    assert!(step.abs() > num(&doc, "band_ph"), "one step moves {step} pH");
    let v: Vec<&str> = doc["verdicts"].as_array().unwrap().iter().filter_map(Value::as_str).collect();
    let text = v.iter().find(|s| s.starts_with("too steep: ")).unwrap_or_else(|| panic!("{v:?}")).to_string();
    assert!(text.contains(&format!("moves pH by {:.2} > band 0.3", step.abs())), "{text}");
    assert!(text.contains("x weaker") && text.contains("second stage"), "{text}");
    let check = doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == "too_steep").unwrap().clone();
    assert!(num(&check, "dilute_reagent_by") >= 1.0);
    assert_eq!(doc["all_clear"], Value::Bool(false));
    (doc, text, check)
}

#[test]
fn too_steep_verdicts() {
    // Stripping-line rinse (invented): sulfuric acid and sodium sulfate, no carbonate, so almost
    // no buffer near pH 7; 50 % caustic and a coarse pump step. Nothing within 2 pH helps.
    let bare = r#"{"temperature_c": 16, "influent": {"flow_l_per_h": 800,
        "dissolved": {"H2SO4": 0.0015, "Na2SO4": 0.001}},
        "reagent": {"substance": "NaOH", "mass_percent": 50},
        "setpoint_ph": 7.0, "pump": {"max_l_per_h": 5, "step_l_per_h": 0.02}, "band_ph": 0.3}"#;
    let (_, text, check) = steep_plan(bare);
    assert!(check["nearest_controllable_setpoint_ph"].is_null());
    assert!(text.contains("no setpoint within 2 pH of 7.0"), "{text}");

    // Soft make-up water (invented): a little bicarbonate left after the acid. At pH 8 one step
    // is too much; nearer pKa1 of carbonate a setpoint is controllable, and the verdict names it.
    let soft = r#"{"temperature_c": 16, "influent": {"flow_l_per_h": 800,
        "dissolved": {"H2SO4": 0.0005, "NaHCO3": 0.0006}},
        "reagent": {"substance": "NaOH", "mass_percent": 25},
        "setpoint_ph": 8.0, "pump": {"max_l_per_h": 5, "step_l_per_h": 0.005}, "band_ph": 0.3}"#;
    let (_, text, check) = steep_plan(soft);
    let sp = check["nearest_controllable_setpoint_ph"].as_f64().expect("a controllable setpoint nearby");
    assert!(text.ends_with(&format!("or setpoint {sp:.1}")), "{text}");
    // It really is controllable: plan it and the checks pass.
    let again = ok_json(&["plan", "--json"], &soft.replace(r#""setpoint_ph": 8.0"#, &format!("\"setpoint_ph\": {sp}")));
    assert!(num(&again, "gain_ph_per_step").abs() <= 0.3, "{again}");
    assert_eq!(again["verdicts"], serde_json::json!(["ok"]));
}

#[test]
fn example_table_and_json() {
    let out = ok_table(&["plan", "--example"]);
    assert!(out.starts_with("Built-in example (invented)"), "{out}");
    for word in ["reagent flow", "process gain", "buffer capacity", "verdict", "stage advice", "common practice"] {
        assert!(out.contains(word), "table lacks {word}:\n{out}");
    }
    let tail: Vec<&str> = out.trim_end().lines().rev().take(2).collect();
    let caution = format!("{} {}", tail[1], tail[0]);
    for word in ["model estimate", "flow switch", "pH cut-outs", "manual reset", "hardware", "SAFETY.md"] {
        assert!(caution.contains(word), "caution lacks {word}: {caution}");
    }
    let doc = ok_json(&["plan", "--example", "--json"], "");
    assert_eq!(num(&doc, "influent_flow_l_per_h"), 1200.0);
    assert_eq!(num(&doc["pump"], "max_l_per_h"), 10.0);
    assert_eq!(num(&doc["pump"], "step_l_per_h"), 0.01);
    assert_eq!(num(&doc, "band_ph"), 0.3);
    assert_eq!(num(&doc["reagent"], "mass_percent"), 25.0);
    let c = num(&doc, "reagent_mol_per_l");
    assert!((mixture_ph(&doc, &[("NaOH", c)]) - num(&doc, "setpoint_ph")).abs() < 1e-6);
    // The table shows the JSON's flow.
    let flow_line = out.lines().find(|l| l.starts_with("reagent flow")).unwrap();
    assert!(flow_line.contains(&format!("{:.4}", num(&doc, "reagent_flow_l_per_h"))), "{flow_line}");
    // Overrides: a finer setpoint, and no pump (the checks are skipped and said to be).
    let doc = ok_json(&["plan", "--example", "--json", "--setpoint-ph", "8", "--no-pump"], "");
    assert_eq!(num(&doc, "setpoint_ph"), 8.0);
    assert!(doc["pump"].is_null() && doc["gain_ph_per_step"].is_null());
    assert!(doc["notes"][0].as_str().unwrap().contains("steepness check"));
}

#[test]
fn flags_agree_with_json() {
    let doc = ok_json(&["plan", "--json"], ISSUE);
    let out = ok_table(&[
        "plan",
        "NaHCO3=0.002",
        "HCl=0.001",
        "--flow-l-per-h",
        "1200",
        "--reagent",
        "NaOH=6.25",
        "--setpoint-ph",
        "7",
        "--pump-max-l-per-h",
        "10",
        "--pump-step-l-per-h",
        "0.01",
        "--band-ph",
        "0.3",
        "--temperature-c",
        "25",
    ]);
    let line = out.lines().find(|l| l.starts_with("reagent flow")).unwrap();
    assert!(line.contains(&format!("{:.4}", num(&doc, "reagent_flow_l_per_h"))), "{line}");
    assert!(out.contains("verdict             ok"), "{out}");
}

#[test]
fn input_errors_exit_2() {
    let cases: &[(&str, &str)] = &[
        ("", "no JSON"),
        ("{", "invalid JSON"),
        (r#"{"influent": {"flow_l_per_h": 1, "dissolved": {}}, "setpoint_ph": 7}"#, "reagent"),
        (&ISSUE.replace("7.0", "15"), "setpoint_ph"),
        (&ISSUE.replace("1200", "0"), "flow_l_per_h"),
        (&ISSUE.replace("1200", "-5"), "flow_l_per_h"),
        (&ISSUE.replace(r#""step_l_per_h": 0.01"#, r#""step_l_per_h": 20"#), "step_l_per_h"),
        (&ISSUE.replace(r#""band_ph": 0.3"#, r#""band_ph": 0"#), "band_ph"),
        (&ISSUE.replace("NaHCO3", "NaXYZ"), "known formulas"),
        (&ISSUE.replace(r#""NaOH": 6.25"#, r#""NaOH": -1"#), "negative"),
        (&ISSUE.replace(r#""NaOH": 6.25"#, r#""NaOH": 0"#), "every amount is 0"),
        (&ISSUE.replace(r#"{"dissolved": {"NaOH": 6.25}}"#, r#"{"substance": "NaOH", "mass_percent": 33}"#), "density"),
        (&ISSUE.replace(r#"{"dissolved": {"NaOH": 6.25}}"#, r#"{"substance": "NaOH"}"#), "either"),
        (&ISSUE.replace("band_ph", "bandwidth"), "unknown field"),
        (&ISSUE.replace(r#""temperature_c": 25"#, r#""temperature_c": 120"#), "temperature"),
    ];
    for (stdin, expect) in cases {
        let msg = json_error(&["plan", "--json"], stdin);
        assert!(msg.contains(expect), "input {stdin:?}: message {msg:?} lacks {expect:?}");
    }
    json_error(&["plan", "--json", "--setpoint-ph", "7"], ISSUE);
    assert!(
        table_error(&["plan", "HCl=0.001", "--reagent", "NaOH=1", "--setpoint-ph", "7"]).contains("--flow-l-per-h")
    );
    assert!(usage_error(&["plan", "--example", "HCl=0.001"]).contains("--example"));
    assert!(table_error(&["plan", "--example", "--reagent", "NaOH=33%"]).contains("density"));
    assert!(usage_error(&["plan", "--example", "--pump-max-l-per-h", "x"]).contains("not a number"));
    assert!(usage_error(&["plan", "--example", "--no-pump", "--pump-step-l-per-h", "0.1"]).contains("--no-pump"));
    assert!(table_error(&["plan"]).contains("--example"));
}

#[test]
fn help_documents_the_exit_codes() {
    let out = ok_table(&["help"]);
    assert!(out.contains("plan") && out.contains("curve") && out.contains("fit"));
    assert!(out.contains("Exit codes") && out.contains("unreachable"), "{out}");
    let plan = ok_table(&["plan", "--help"]);
    for key in ["reachable", "reagent_flow_l_per_h", "mixture_buffer_capacity", "gain_ph_per_l_per_h", "verdicts"] {
        assert!(plan.contains(key), "plan help lacks {key}");
    }
}
