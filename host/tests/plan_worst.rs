//! `phdose plan`: the worst-case block (pump stuck at max and at zero, times to the hard
//! limits, dose corners, reagent use per day).
//!
//! Scenarios are invented (rinse water at a fictional plating shop; a hydrochloric-acid rinse
//! neutralised with caustic). The references are independent of the code under test: a mixture
//! built by hand (each concentration weighted by its flow, calc) and solved with the library's
//! `Solution`, and the closed form of a strong acid / strong base tank in ideal activities,
//! derived below from the charge balance.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{json_error, num, ok_json, ok_table};
use phdose::chem::{Activity, Solution, water};
use phdose::units::Celsius;
use serde_json::Value;

/// Hydrochloric-acid rinse (invented): 2 mmol/L HCl at 800 L/h, 25 °C, ideal activities,
/// 1.5 mol/L caustic on a 4 L/h pump, setpoint pH 7, 400 L tank, hard limits pH 3 and 10.
const ACID_RINSE: &str = r#"{"temperature_c": 25, "activity": "ideal",
  "influent": {"flow_l_per_h": 800, "dissolved": {"HCl": 0.002}},
  "reagent": {"dissolved": {"NaOH": 1.5}}, "setpoint_ph": 7.0,
  "pump": {"max_l_per_h": 4, "step_l_per_h": 0.001},
  "tank_volume_l": 400, "low_limit_ph": 3, "high_limit_ph": 10}"#;

/// The net strong charge z (eq/L, Na⁺ − Cl⁻) of a strong acid / strong base solution at pH `ph`:
/// the charge balance h + z = Kw/h (ideal activities; calc).
fn z_of_ph(ph: f64, kw: f64) -> f64 {
    let h = 10f64.powf(-ph);
    kw / h - h
}

/// Kw at 25 °C from the library's IAPWS formulation (Bandura & Lvov 2006): an input constant
/// of the closed form, the same one the solver uses.
fn kw25() -> f64 {
    10f64.powf(-water::pkw(Celsius::new(25.0).unwrap()))
}

/// The time (s) a stirred tank of `volume_l` takes from strong charge `z0` to the pH `limit`
/// while its feed has the strong charge `z_end` at `through_l_per_h`: z(t) = z_end + (z0 −
/// z_end)·exp(−t/τ), τ = V/Q, so t = τ·ln((z0 − z_end)/(z_limit − z_end)) (calc).
fn closed_form_time_s(volume_l: f64, through_l_per_h: f64, z0: f64, z_end: f64, limit_ph: f64) -> f64 {
    let tau_s = volume_l / through_l_per_h * 3600.0;
    tau_s * ((z0 - z_end) / (z_of_ph(limit_ph, kw25()) - z_end)).ln()
}

#[test]
fn time_to_a_limit_matches_the_closed_form() {
    let doc = ok_json(&["plan", "--json"], ACID_RINSE);
    let w = &doc["worst_case"];
    let (q_in, c_a, c_b, q_max, v) = (800.0, 0.002, 1.5, 4.0, 400.0);
    let q_plan = num(&doc, "reagent_flow_l_per_h");
    // The setpoint state: the influent mixed with the caustic at the planned flow.
    let z0 = (q_plan * c_b - q_in * c_a) / (q_in + q_plan);
    // Stuck at max: the feed is the influent with the caustic at the pump's maximum.
    let z_max = (q_max * c_b - q_in * c_a) / (q_in + q_max);
    let stuck_max = &w["stuck_max"];
    assert_eq!(stuck_max["crosses_high_limit"], Value::Bool(true));
    let expect = closed_form_time_s(v, q_in + q_max, z0, z_max, 10.0);
    let got = num(stuck_max, "time_to_high_limit_s");
    assert!((got - expect).abs() < 1e-5 * expect, "stuck at max: {got} s vs closed form {expect} s");
    assert!((num(stuck_max, "time_constant_s") - v / (q_in + q_max) * 3600.0).abs() < 1e-9);
    // It heads up, away from the low limit: never, and the time is null.
    assert_eq!(stuck_max["crosses_low_limit"], Value::Bool(false));
    assert!(stuck_max["time_to_low_limit_s"].is_null());
    // Stuck at zero: the feed is the influent alone (z = −c_a), through flow the influent's.
    let stuck_zero = &w["stuck_zero"];
    let expect = closed_form_time_s(v, q_in, z0, -c_a, 3.0);
    let got = num(stuck_zero, "time_to_low_limit_s");
    assert!((got - expect).abs() < 1e-5 * expect, "stuck at zero: {got} s vs closed form {expect} s");
    assert!(stuck_zero["time_to_high_limit_s"].is_null());
    assert!(stuck_zero["solves"].as_u64().unwrap() <= 57, "the documented bound");
    // The end pHs: the closed form of the feeds, h = (−z + √(z² + 4Kw))/2 (calc).
    let ph_of_z = |z: f64| -(0.5 * (-z + (z * z + 4.0 * kw25()).sqrt())).log10();
    assert!((num(w, "stuck_max_ph") - ph_of_z(z_max)).abs() < 1e-6);
    assert!((num(w, "stuck_zero_ph") - ph_of_z(-c_a)).abs() < 1e-6);
}

#[test]
fn a_bigger_tank_gives_proportionally_more_time() {
    // τ scales with V and the path in units of τ does not change: the time scales exactly.
    let small = ok_json(&["plan", "--json"], ACID_RINSE);
    let big = ok_json(&["plan", "--json"], &ACID_RINSE.replace(r#""tank_volume_l": 400"#, r#""tank_volume_l": 4000"#));
    let t = |d: &Value| num(&d["worst_case"]["stuck_max"], "time_to_high_limit_s");
    assert!((t(&big) / t(&small) - 10.0).abs() < 1e-4, "{} vs {}", t(&big), t(&small));
}

/// The example's influent and reagent, mixed by hand: every concentration weighted by its flow,
/// added to a fresh `Solution` and solved.
fn by_hand(doc: &Value, reagent_flow_l_per_h: f64) -> f64 {
    let t = Celsius::new(num(doc, "temperature_c")).unwrap();
    let q_in = num(doc, "influent_flow_l_per_h");
    let total = q_in + reagent_flow_l_per_h;
    let mut s: Solution<f64, 8> = Solution::new(t, Activity::Davies);
    for (formula, c) in doc["influent_dissolved"].as_object().unwrap() {
        s.add_formula(formula, c.as_f64().unwrap() * q_in / total).unwrap();
    }
    let c_r = num(doc, "reagent_mol_per_l");
    if reagent_flow_l_per_h > 0.0 {
        s.add_formula("NaOH", c_r * reagent_flow_l_per_h / total).unwrap();
    }
    s.solve().unwrap().ph
}

#[test]
fn stuck_ph_equals_a_mixture_solved_by_hand() {
    let doc = ok_json(&["plan", "--example", "--json"], "");
    assert_eq!(doc["activity"], "davies");
    let w = &doc["worst_case"];
    let max = num(&doc["pump"], "max_l_per_h");
    let expect = by_hand(&doc, max);
    assert!((num(w, "stuck_max_ph") - expect).abs() < 1e-9, "{} vs {expect}", num(w, "stuck_max_ph"));
    assert_eq!(num(&w["stuck_max"], "end_ph"), num(w, "stuck_max_ph"));
    // Stuck at zero the tank heads to the influent's own pH.
    assert!((num(w, "stuck_zero_ph") - by_hand(&doc, 0.0)).abs() < 1e-9);
    assert!((num(w, "stuck_zero_ph") - num(&doc, "influent_ph")).abs() < 1e-9);
    // The start state is the setpoint (to the plan's resolution).
    assert!((num(&w["stuck_max"], "start_ph") - 7.0).abs() < 1e-6);
    // The example: 250 L tank, limits pH 1 and 10 (the built-in skid's). Stuck at max crosses the
    // high limit within the first time constant; stuck at zero heads to the influent's pH
    // (about 2.8), above the low limit: never.
    assert_eq!((num(w, "tank_volume_l"), num(w, "low_limit_ph"), num(w, "high_limit_ph")), (250.0, 1.0, 10.0));
    let t = num(&w["stuck_max"], "time_to_high_limit_s");
    assert!(t > 0.0 && t < num(&w["stuck_max"], "time_constant_s"), "{t}");
    assert_eq!(w["stuck_zero"]["crosses_low_limit"], Value::Bool(false));
    assert!(w["stuck_zero"]["time_to_low_limit_s"].is_null());
}

/// The corner at `(flow, factor)`.
fn corner(w: &Value, flow: f64, factor: f64) -> f64 {
    let c = w["dose_corners"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| num(c, "influent_flow_l_per_h") == flow && num(c, "strength_factor") == factor)
        .unwrap_or_else(|| panic!("no corner {flow} L/h x{factor}"));
    num(c, "reagent_flow_l_per_h")
}

#[test]
fn strength_corners_bracket_the_nominal_dose() {
    let doc = ok_json(&["plan", "--example", "--json"], "");
    let w = &doc["worst_case"];
    let nominal = num(&doc, "reagent_flow_l_per_h");
    assert_eq!((num(w, "min_flow_l_per_h"), num(w, "max_flow_l_per_h")), (600.0, 1800.0));
    assert_eq!(w["dose_corners"].as_array().unwrap().len(), 9);
    assert_eq!(corner(w, 1200.0, 1.0), nominal);
    for q in [600.0, 1200.0, 1800.0] {
        let (weak, mid, strong) = (corner(w, q, 0.75), corner(w, q, 1.0), corner(w, q, 1.25));
        assert!(weak < mid && mid < strong, "{q} L/h: {weak} {mid} {strong}");
        // At fixed compositions the mixing ratio does not depend on the flow (calc): the dose
        // scales with the influent flow.
        assert!((mid / nominal - q / 1200.0).abs() < 1e-9, "{q} L/h: {mid} vs {nominal}");
    }
    // An acid reagent on an alkaline influent (invented soda rinse, 36 % hydrochloric acid):
    // the brackets hold the other way round too.
    let soda = r#"{"influent": {"flow_l_per_h": 500, "dissolved": {"Na2CO3": 0.003, "NaOH": 0.001}},
      "reagent": {"substance": "HCl", "mass_percent": 36}, "setpoint_ph": 8.5,
      "pump": {"max_l_per_h": 0.2, "step_l_per_h": 0.001}}"#;
    let doc = ok_json(&["plan", "--json"], soda);
    let w = &doc["worst_case"];
    assert_eq!(w["flow_range_given"], Value::Bool(false));
    assert_eq!((num(w, "min_flow_l_per_h"), num(w, "max_flow_l_per_h")), (250.0, 750.0));
    let nominal = num(&doc, "reagent_flow_l_per_h");
    assert!(corner(w, 500.0, 0.75) < nominal && nominal < corner(w, 500.0, 1.25));
    // The 150 % flow at 125 % strength needs more than the pump: flagged.
    let flags: Vec<&str> = w["dose_corners"].as_array().unwrap().iter().map(|c| c["flag"].as_str().unwrap()).collect();
    assert!(corner(w, 750.0, 1.25) > 0.2 && flags.contains(&"beyond_pump"), "{flags:?}");
    // Acid on an alkaline influent: stuck at max heads down, stuck at zero stays alkaline.
    assert!(num(w, "stuck_max_ph") < 8.5 && num(w, "stuck_zero_ph") > 8.5);
}

#[test]
fn reagent_per_day_is_flow_times_a_day() {
    let doc = ok_json(&["plan", "--example", "--json"], "");
    let w = &doc["worst_case"];
    let flow = num(&doc, "reagent_flow_l_per_h");
    let litres = num(w, "reagent_per_day_l");
    assert!((litres - flow * 24.0).abs() < 1e-12 * litres, "{litres} vs {flow} x 24 h");
    // 25 % caustic at 1.274 kg/L (the grade table's density, interpolated between the NaOH
    // table's 24 % and 28 % rows; see src/titration/reagent.rs).
    assert_eq!(num(&doc["reagent"], "density_kg_per_l"), 1.274);
    let kg = num(w, "reagent_per_day_kg");
    assert!((kg - litres * 1.274).abs() < 1e-12 * kg, "{kg} vs {litres} L x 1.274 kg/L");
    // The NaOH in it: a quarter of the mass (w = 25 %, c = w·ρ·1000/M so c·M·L = w·ρ·L; calc).
    let naoh = num(&w["substances_per_day_kg"], "NaOH");
    assert!((naoh - 0.25 * kg).abs() < 1e-9 * naoh, "{naoh} vs {kg} x 0.25");

    // A mol/L reagent has no density: no kg/day of solution, a note, the substance's own mass.
    let doc = ok_json(&["plan", "--json"], ACID_RINSE);
    let w = &doc["worst_case"];
    assert!(w["reagent_per_day_kg"].is_null());
    assert!(w["notes"].as_array().unwrap().iter().any(|n| n.as_str().unwrap().contains("no kg/day")));
    let litres = num(w, "reagent_per_day_l");
    // NaOH 39.997 g/mol (from memory; the substance table's value).
    let naoh = num(&w["substances_per_day_kg"], "NaOH");
    assert!((naoh - 1.5 * 39.997 * litres / 1000.0).abs() < 1e-3 * naoh, "{naoh}");
}

#[test]
fn missing_inputs_are_notes_not_errors() {
    // No pump, no tank, no limits: the influent's end pH only, and notes saying why.
    let doc = ok_json(&["plan", "--example", "--json", "--no-pump", "--setpoint-ph", "8"], "");
    let w = &doc["worst_case"];
    assert!(w["stuck_max"].is_null() && w["stuck_max_ph"].is_null());
    assert!(w["notes"].as_array().unwrap().iter().any(|n| n.as_str().unwrap().contains("no pump")));
    // An unreachable setpoint: end pHs, but no times (no setpoint state), with a note.
    let beyond = ACID_RINSE
        .replace(r#""setpoint_ph": 7.0"#, r#""setpoint_ph": 9.9"#)
        .replace(r#""reagent": {"dissolved": {"NaOH": 1.5}}"#, r#""reagent": {"dissolved": {"NaOH": 0.00001}}"#);
    let doc = ok_json(&["plan", "--json"], &beyond);
    assert_eq!(doc["reachable"], Value::Bool(false));
    let w = &doc["worst_case"];
    assert!(w["stuck_max"]["time_to_high_limit_s"].is_null() && w["stuck_zero"]["time_constant_s"].is_null());
    assert!(w["reagent_per_day_l"].is_null());
    assert!(w["notes"].as_array().unwrap().iter().any(|n| n.as_str().unwrap().contains("unreachable")));
    // A setpoint outside the hard limits is refused (the controller would trip at once).
    let e = json_error(&["plan", "--json"], &ACID_RINSE.replace(r#""high_limit_ph": 10"#, r#""high_limit_ph": 6.5"#));
    assert!(e.contains("high_limit_ph") && e.contains("6.5"), "{e}");
}

#[test]
fn table_shows_the_block_and_the_readme_quotes_it() {
    let out = ok_table(&["plan", "--example"]);
    let start = out.find("worst case").expect("a worst case block");
    let end = out[start..].find("\n\n").map_or(out.len(), |k| start + k + 1);
    let block = &out[start..end];
    for part in
        ["hardwired", "SAFETY.md", "pump stuck at max", "high limit 10.00  crossed after", "dose corners", "L/day"]
    {
        assert!(block.contains(part), "block lacks {part}:\n{block}");
    }
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md")).unwrap();
    assert!(readme.contains(block), "README must quote the example's worst-case block verbatim:\n{block}");
}
