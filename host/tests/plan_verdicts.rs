//! `phdose plan` verdicts that must agree with each other: an influent already in band, remedies
//! that pass the plan's own checks, turndown, absurd flows and tiny pump steps.
//!
//! Every scenario is invented (fictional plants). The reference is the plan itself: a remedy the
//! plan suggests is applied (a weaker reagent, a stage setpoint) and planned again, and the
//! second plan must pass the checks the first one failed.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{num, ok_json, ok_table, run};
use serde_json::Value;

fn verdicts(doc: &Value) -> Vec<String> {
    doc["verdicts"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_owned()).collect()
}

fn check<'a>(doc: &'a Value, kind: &str) -> Option<&'a Value> {
    doc["checks"].as_array().unwrap().iter().find(|c| c["kind"] == kind)
}

/// A plan request as JSON: influent (formula, mol/L), flow, reagent (its JSON object),
/// setpoint, pump (max, step, optional minimum) and band.
struct Req {
    influent: Vec<(&'static str, f64)>,
    flow_l_per_h: f64,
    reagent: String,
    setpoint_ph: f64,
    pump: (f64, f64, Option<f64>),
    band_ph: f64,
}

impl Req {
    fn json(&self) -> String {
        let dissolved: Vec<String> = self.influent.iter().map(|(f, c)| format!("\"{f}\": {c:e}")).collect();
        let (max, step, min) = self.pump;
        let min = min.map(|m| format!(", \"min_l_per_h\": {m:e}")).unwrap_or_default();
        format!(
            r#"{{"temperature_c": 25, "influent": {{"flow_l_per_h": {:e}, "dissolved": {{{}}}}}, "reagent": {},
               "setpoint_ph": {}, "pump": {{"max_l_per_h": {max:e}, "step_l_per_h": {step:e}{min}}}, "band_ph": {}}}"#,
            self.flow_l_per_h,
            dissolved.join(", "),
            self.reagent,
            self.setpoint_ph,
            self.band_ph
        )
    }

    fn plan(&self) -> Value {
        ok_json(&["plan", "--json"], &self.json())
    }

    /// The same request with caustic soda at `mol_per_l` as the reagent.
    fn with_caustic(&self, mol_per_l: f64) -> Self {
        Self {
            reagent: format!(r#"{{"dissolved": {{"NaOH": {mol_per_l:e}}}}}"#),
            influent: self.influent.clone(),
            ..*self
        }
    }

    /// The table for the same request (flags).
    fn table(&self) -> String {
        let mut a: Vec<String> = vec!["plan".into()];
        a.extend(self.influent.iter().map(|(f, c)| format!("{f}={c}")));
        let (max, step, min) = self.pump;
        let reagent = self.reagent.replace(['{', '}', '"', ' '], "");
        let reagent = if let Some(r) = reagent.strip_prefix("substance:") {
            let (name, pct) = r.split_once(",mass_percent:").unwrap();
            format!("{name}={pct}%")
        } else {
            reagent.replace("dissolved:", "").replace(':', "=")
        };
        for (k, v) in [
            ("--flow-l-per-h", format!("{}", self.flow_l_per_h)),
            ("--reagent", reagent),
            ("--setpoint-ph", format!("{}", self.setpoint_ph)),
            ("--band-ph", format!("{}", self.band_ph)),
            ("--pump-max-l-per-h", format!("{max}")),
            ("--pump-step-l-per-h", format!("{step}")),
        ] {
            a.push(k.into());
            a.push(v);
        }
        if let Some(m) = min {
            a.push("--pump-min-l-per-h".into());
            a.push(format!("{m}"));
        }
        let args: Vec<&str> = a.iter().map(String::as_str).collect();
        ok_table(&args)
    }
}

impl Clone for Req {
    fn clone(&self) -> Self {
        Self { influent: self.influent.clone(), reagent: self.reagent.clone(), ..*self }
    }
}

/// Boiler-house softener rinse (invented): bicarbonate with a little carbonate, pH about 8.88
/// at 25 °C (the plan reports it; the test reads it back rather than assuming it).
fn softener(reagent: &str, band_ph: f64) -> Req {
    Req {
        influent: vec![("NaHCO3", 0.002), ("Na2CO3", 0.000085)],
        flow_l_per_h: 1000.0,
        reagent: reagent.to_owned(),
        setpoint_ph: 8.95,
        pump: (2.0, 0.001, None),
        band_ph,
    }
}

const HCL_32: &str = r#"{"substance": "HCl", "mass_percent": 32}"#;
const NAOH_25: &str = r#"{"substance": "NaOH", "mass_percent": 25}"#;
const NAOH_50: &str = r#"{"substance": "NaOH", "mass_percent": 50}"#;

#[test]
fn influent_in_band_needs_no_dose() {
    // Finding 4: acid or caustic, an influent inside the band is "no dose needed", not
    // "unreachable" and not "ok".
    for reagent in [HCL_32, NAOH_25] {
        let req = softener(reagent, 0.2);
        let doc = req.plan();
        let influent_ph = num(&doc, "influent_ph");
        assert!((influent_ph - 8.95).abs() <= 0.1, "scenario drifted: influent pH {influent_ph}");
        let v = verdicts(&doc);
        assert!(v[0].starts_with("no dose needed"), "{reagent}: {v:?}");
        assert!(v[0].contains(&format!("{influent_ph:.2}")) && v[0].contains("8.85") && v[0].contains("9.05"), "{v:?}");
        assert!(!v.iter().any(|s| s.contains("unreachable") || s == "ok"), "{v:?}");
        let band = &doc["in_band"];
        assert_eq!((num(band, "influent_ph"), num(band, "low_ph"), num(band, "high_ph")), (influent_ph, 8.85, 9.05));
        assert_eq!(doc["reachable"], Value::Bool(true));
        let table = req.table();
        assert!(table.contains("no dose needed") && !table.contains("unreachable"), "{table}");
    }
    // A narrower band leaves the influent outside it: then the acid is really the wrong way.
    let table = softener(HCL_32, 0.1).table();
    assert!(table.contains("unreachable") && !table.contains("no dose needed"), "{table}");
}

/// Stripping-line rinse at a fictional anodizing shop: sulfuric acid only, no buffer, 50 %
/// caustic, a 2 L/h pump with a fine step (a remedy used to contradict the other checks here).
fn strip() -> Req {
    Req {
        influent: vec![("H2SO4", 0.003)],
        flow_l_per_h: 500.0,
        reagent: NAOH_50.to_owned(),
        setpoint_ph: 7.0,
        pump: (2.0, 0.001, None),
        band_ph: 0.5,
    }
}

#[test]
fn weaker_reagent_advice_fits_the_pump() {
    // Finding 3: a weaker reagent is advised as the remedy only when, applied, it passes the
    // pump and the steepness checks; otherwise the verdict says no single change is enough
    // and what is.
    let req = strip();
    let doc = req.plan();
    let steep = check(&doc, "too_steep").expect("too steep");
    let f = num(steep, "dilute_reagent_by");
    let text = verdicts(&doc).into_iter().find(|v| v.starts_with("too steep")).unwrap();
    let weaker = req.with_caustic(num(&doc, "reagent_mol_per_l") / f).plan();
    let diluted_flow = num(&weaker, "reagent_flow_l_per_h");
    assert!((diluted_flow - num(steep, "diluted_flow_l_per_h")).abs() <= 1e-6 * diluted_flow, "{steep}");
    // The weaker reagent really fits the band (the factor is a real plan of it).
    assert!(num(&weaker, "gain_ph_per_step").abs() <= 0.5, "{weaker}");
    if diluted_flow <= 2.0 {
        assert_eq!(weaker["all_clear"], Value::Bool(true), "{weaker}");
        assert!(!text.contains("alone is not enough"), "{text}");
    } else {
        // About 18 L/h from a 2 L/h pump: the dilution alone is not a remedy; the verdict says
        // so and what is (that reagent with a bigger pump, or this one with a finer step).
        assert!(check(&weaker, "beyond_pump").is_some(), "{weaker}");
        assert!(text.contains("a weaker reagent alone is not enough"), "{text}");
        assert!(text.contains(&format!("at least {} L/h", sig3(diluted_flow))), "{text}");
        // The other change named: a finer pump step with this reagent; applied, it passes.
        let max_step = num(steep, "max_step_l_per_h");
        assert!(text.contains(&format!("step of at most {} L/h", sig3(max_step))), "{text}");
        let finer = Req { pump: (2.0, max_step, None), ..req.clone() }.plan();
        assert_eq!(finer["all_clear"], Value::Bool(true), "{finer}");
    }
}

/// Three significant digits, trailing zeros trimmed, scientific below 1e-3 ("8.33e-6").
fn sig3(v: f64) -> String {
    let s = format!("{v:.2e}");
    let (m, e) = s.split_once('e').unwrap();
    let e: i32 = e.parse().unwrap();
    let trim =
        |t: &str| if t.contains('.') { t.trim_end_matches('0').trim_end_matches('.').to_owned() } else { t.to_owned() };
    if (-3..6).contains(&e) {
        let decimals = usize::try_from((2 - e).max(0)).unwrap();
        trim(&format!("{v:.decimals$}"))
    } else {
        format!("{}e{e}", trim(m))
    }
}

#[test]
fn stage_setpoints_pass_the_steepness_check() {
    // Finding 3: the stage advice's intermediate setpoint (the rule of thumb put it at 4.7) must
    // itself pass the steepness check with the same reagent and pump, or be marked as not.
    let req = strip();
    let doc = req.plan();
    let advice = &doc["stage_advice"];
    let stages = advice["stage_checks"].as_array().expect("stage checks");
    assert_eq!(stages.len() as u64, advice["stages"].as_u64().unwrap());
    let first = &stages[0];
    let sp = num(first, "setpoint_ph");
    assert_eq!(Some(sp), advice["setpoints_ph"][0].as_f64());
    // Plan the first stage on its own (its influent is the raw influent).
    let alone = Req { setpoint_ph: sp, ..req.clone() }.plan();
    let steep_alone = check(&alone, "too_steep").is_some();
    assert_eq!(first["controllable"], Value::Bool(!steep_alone), "stage 1 at {sp}: {alone}");
    assert!((num(first, "rule_setpoint_ph") - 4.66).abs() < 0.05, "{first}");
}

/// Soft-water rinse at a fictional bottle-washing line: bicarbonate half turned to CO2, so well
/// buffered; the setpoint needs less than one pump step.
fn bottle_wash(step: f64, min: Option<f64>) -> Req {
    Req {
        influent: vec![("NaHCO3", 0.01), ("HCl", 0.0074)],
        flow_l_per_h: 1000.0,
        reagent: r#"{"dissolved": {"NaOH": 6.25}}"#.to_owned(),
        setpoint_ph: 6.2,
        pump: (10.0, step, min),
        band_ph: 0.5,
    }
}

#[test]
fn flow_below_one_pump_step_is_a_turndown_verdict() {
    // Finding 7: planned 0.289 L/h with a 0.4 L/h step: the pump cannot deliver it steadily.
    let doc = bottle_wash(0.4, None).plan();
    let flow = num(&doc, "reagent_flow_l_per_h");
    assert!(flow > 0.0 && flow < 0.4, "scenario drifted: {flow}");
    let t = check(&doc, "below_turndown").unwrap_or_else(|| panic!("{doc}"));
    assert_eq!((num(t, "needed_l_per_h"), num(t, "smallest_l_per_h")), (flow, 0.4));
    assert_eq!(doc["all_clear"], Value::Bool(false));
    assert!(verdicts(&doc).iter().any(|v| v.starts_with("below turndown")), "{doc}");
    // A remedy it names (a weaker reagent) passes the checks when applied.
    if let Some(f) = t["dilute_reagent_by"].as_f64() {
        let weaker = bottle_wash(0.4, None).with_caustic(6.25 / f).plan();
        assert_eq!(weaker["all_clear"], Value::Bool(true), "{weaker}");
    }
    assert!(bottle_wash(0.4, None).table().contains("below turndown"));
    // A pump minimum above the planned flow: turndown too, in JSON and on the command line.
    let doc = bottle_wash(0.001, Some(0.5)).plan();
    let t = check(&doc, "below_turndown").unwrap_or_else(|| panic!("{doc}"));
    assert_eq!(num(t, "smallest_l_per_h"), 0.5);
    assert!(bottle_wash(0.001, Some(0.5)).table().contains("below turndown"));
    // With a fine step and no minimum the same plan is all clear.
    assert_eq!(bottle_wash(0.001, None).plan()["all_clear"], Value::Bool(true));
}

#[test]
fn absurd_flows_are_refused_with_their_value() {
    for (flow, shown) in [("1e-300", "1e-300"), ("1e8", "1e8"), ("-5", "-5")] {
        let r = run(
            &[
                "plan",
                "HCl=0.001",
                "--flow-l-per-h",
                flow,
                "--reagent",
                "NaOH=1",
                "--setpoint-ph",
                "7",
                "--activity",
                "ideal",
            ],
            "",
        );
        assert_eq!(r.code, 2, "{flow}: {}", r.stdout);
        assert!(r.stderr.contains("influent") && r.stderr.contains(shown), "{flow}: {}", r.stderr);
    }
}

#[test]
fn tiny_pump_step_prints_no_negative_zero() {
    // Finding 7: a 1e-12 L/h step moves the pH by about gain × step, with the gain's sign.
    let req = Req {
        influent: vec![("NaHCO3", 0.004), ("H2SO4", 0.001)],
        flow_l_per_h: 1200.0,
        reagent: NAOH_25.to_owned(),
        setpoint_ph: 7.0,
        pump: (10.0, 1e-12, None),
        band_ph: 0.3,
    };
    let table = req.table();
    let line = table.lines().find(|l| l.starts_with("one pump step")).unwrap();
    assert!(!line.contains("0.000") && !line.contains("-0") && !line.contains("−0"), "{line}");
    let doc = req.plan();
    let (gain, step) = (num(&doc, "gain_ph_per_l_per_h"), num(&doc, "gain_ph_per_step"));
    assert!(gain > 0.0 && step > 0.0, "gain {gain}, step {step}");
    assert!((step - gain * 1e-12).abs() <= 0.01 * gain * 1e-12, "step {step} vs {}", gain * 1e-12);
}
