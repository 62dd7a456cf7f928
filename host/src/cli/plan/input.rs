//! What `plan` is asked: influent, reagent, setpoint, pump and band, from JSON or flags.

use phdose::titration::{DoseRequest, Pump};
use phdose::units::{InvalidInput, LitresPerHour, Quantity};
use serde::Deserialize;

use super::example;
use crate::cli::CliError;
use crate::cli::args::{self, Parsed, Spec};
use crate::cli::composition::{self, Dissolved};
use crate::cli::conditions::Conditions;
use crate::cli::json::{self, Entries};
use crate::cli::reagent::{Reagent, ReagentJson};

/// `--flow-l-per-h`: influent flow.
pub const FLOW: Spec = Spec { name: "--flow-l-per-h", takes_value: true };
/// `--reagent`: `NaOH=6.25` (mol/L) or `NaOH=25%`.
pub const REAGENT: Spec = Spec { name: "--reagent", takes_value: true };
/// `--reagent-density`: kg/L, with a mass-percent reagent.
pub const REAGENT_DENSITY: Spec = Spec { name: "--reagent-density", takes_value: true };
/// `--setpoint-ph`.
pub const SETPOINT: Spec = Spec { name: "--setpoint-ph", takes_value: true };
/// `--pump-max-l-per-h`.
pub const PUMP_MAX: Spec = Spec { name: "--pump-max-l-per-h", takes_value: true };
/// `--pump-step-l-per-h`.
pub const PUMP_STEP: Spec = Spec { name: "--pump-step-l-per-h", takes_value: true };
/// `--band-ph`.
pub const BAND: Spec = Spec { name: "--band-ph", takes_value: true };
/// `--no-pump`: drop the example's pump (and with it the pump checks).
pub const NO_PUMP: Spec = Spec { name: "--no-pump", takes_value: false };

/// The options that describe a request (refused with `--json`).
pub const REQUEST_FLAGS: [Spec; 10] =
    [FLOW, REAGENT, REAGENT_DENSITY, SETPOINT, PUMP_MAX, PUMP_STEP, BAND, NO_PUMP, args::TEMPERATURE, args::ACTIVITY];

/// Shape of the JSON request, shown when stdin is empty.
pub const JSON_EXAMPLE: &str = r#"{"influent": {"flow_l_per_h": 1200, "dissolved": {"NaHCO3": 0.002, "HCl": 0.001}}, "reagent": {"dissolved": {"NaOH": 6.25}}, "setpoint_ph": 7.0, "pump": {"max_l_per_h": 10, "step_l_per_h": 0.01}, "band_ph": 0.3}"#;

/// A complete `plan` request.
#[derive(Clone, Debug, PartialEq)]
pub struct PlanInput {
    /// Temperature and activity model (the reagent is taken at the influent's temperature).
    pub conditions: Conditions,
    /// What the influent carries.
    pub influent: Vec<Dissolved>,
    /// Influent flow, L/h.
    pub flow_l_per_h: f64,
    /// The reagent.
    pub reagent: Reagent,
    /// Target pH.
    pub setpoint_ph: f64,
    /// The metering pump, if given.
    pub pump: Option<Pump<f64>>,
    /// Control band (full width), pH, if given.
    pub band_ph: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    #[serde(default)]
    temperature_c: Option<f64>,
    #[serde(default)]
    activity: Option<String>,
    influent: InfluentJson,
    reagent: ReagentJson,
    setpoint_ph: f64,
    #[serde(default)]
    pump: Option<PumpJson>,
    #[serde(default)]
    band_ph: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct InfluentJson {
    flow_l_per_h: f64,
    dissolved: Entries,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PumpJson {
    max_l_per_h: f64,
    step_l_per_h: f64,
}

/// The core's message for a value out of range, with the request field it came from.
fn invalid(e: InvalidInput) -> CliError {
    let field = match e.quantity {
        Quantity::Ph => "setpoint_ph",
        Quantity::PhWidth => "band_ph",
        Quantity::PumpMax => "pump max_l_per_h",
        Quantity::PumpStep => "pump step_l_per_h",
        _ => "influent flow_l_per_h",
    };
    CliError::new(format!("{field}: {e}"))
}

impl PlanInput {
    /// Checks the numbers with the core's own checked types (one set of rules); the error
    /// names the request field and the rejected value.
    pub fn new(
        conditions: Conditions,
        influent: Vec<Dissolved>,
        flow_l_per_h: f64,
        reagent: Reagent,
        setpoint_ph: f64,
        pump: Option<(f64, f64)>,
        band_ph: Option<f64>,
    ) -> Result<Self, CliError> {
        LitresPerHour::new(flow_l_per_h).and_then(|f| f.positive(Quantity::InfluentFlow)).map_err(invalid)?;
        let request = DoseRequest::checked(setpoint_ph, pump, band_ph).map_err(invalid)?;
        Ok(Self { conditions, influent, flow_l_per_h, reagent, setpoint_ph, pump: request.pump, band_ph })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        let influent = composition::resolve(r.influent.dissolved.0, "influent")?;
        let reagent = Reagent::from_json(r.reagent, "reagent")?;
        let pump = r.pump.map(|p| (p.max_l_per_h, p.step_l_per_h));
        Self::new(conditions, influent, r.influent.flow_l_per_h, reagent, r.setpoint_ph, pump, r.band_ph)
    }

    /// From the command line: influent `SUBSTANCE=MOL_PER_L` positionals and the options; with
    /// `example`, the built-in scenario supplies every value an option does not override.
    pub fn from_flags(p: &Parsed, example: bool) -> Result<Self, CliError> {
        let num = |spec: Spec| p.value(spec).map(|v| args::number(spec.name, v)).transpose();
        let missing = |spec: Spec| CliError::new(format!("missing {} (or use --example)", spec.name));

        let influent = if example {
            if let Some(extra) = p.positionals.first() {
                return Err(CliError::new(format!("--example takes no influent substances (got '{extra}')")));
            }
            example::DISSOLVED.iter().map(|(f, c)| ((*f).to_owned(), *c)).collect()
        } else {
            composition::parse_positionals(&p.positionals, "no influent", "NaHCO3=0.002 HCl=0.001")?
        };
        let influent = composition::resolve(influent, "influent")?;

        let default_temperature_c = example.then_some(example::TEMPERATURE_C);
        let conditions =
            Conditions::from_flags(p.value(args::TEMPERATURE), p.value(args::ACTIVITY), default_temperature_c)?;
        let flow = match num(FLOW)? {
            Some(f) => f,
            None if example => example::FLOW_L_PER_H,
            None => return Err(missing(FLOW)),
        };
        let reagent = match p.value(REAGENT) {
            Some(text) => Reagent::from_flag(text, p.value(REAGENT_DENSITY), "reagent")?,
            None if example => {
                if p.has(REAGENT_DENSITY) {
                    return Err(CliError::new("--reagent-density goes with --reagent NAME=PERCENT%"));
                }
                Reagent::grade(example::REAGENT.0, example::REAGENT.1, None, "reagent")?
            }
            None => return Err(missing(REAGENT)),
        };
        let setpoint = match num(SETPOINT)? {
            Some(s) => s,
            None if example => example::SETPOINT_PH,
            None => return Err(missing(SETPOINT)),
        };
        let pump = if p.has(NO_PUMP) {
            if p.has(PUMP_MAX) || p.has(PUMP_STEP) {
                return Err(CliError::new("--no-pump cannot be combined with --pump-max-l-per-h/--pump-step-l-per-h"));
            }
            None
        } else {
            let default = example.then_some(example::PUMP);
            match (num(PUMP_MAX)?, num(PUMP_STEP)?, default) {
                (Some(m), Some(s), _) => Some((m, s)),
                (Some(m), None, Some((_, s))) => Some((m, s)),
                (None, Some(s), Some((m, _))) => Some((m, s)),
                (None, None, Some((m, s))) => Some((m, s)),
                (None, None, None) => None,
                _ => {
                    return Err(CliError::new(
                        "give the pump as both --pump-max-l-per-h and --pump-step-l-per-h, or neither",
                    ));
                }
            }
        };
        let band = match num(BAND)? {
            Some(b) => Some(b),
            None if example => Some(example::BAND_PH),
            None => None,
        };
        Self::new(conditions, influent, flow, reagent, setpoint, pump, band)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::cli::args::{HELP, JSON};

    fn flags(argv: &[&str]) -> Result<PlanInput, CliError> {
        let mut specs = REQUEST_FLAGS.to_vec();
        specs.extend([JSON, HELP]);
        let argv: Vec<String> = argv.iter().map(|s| (*s).to_owned()).collect();
        let p = args::parse(&argv, &specs).unwrap();
        PlanInput::from_flags(&p, false)
    }

    #[test]
    fn json_and_flags_agree() {
        let a = PlanInput::from_json(JSON_EXAMPLE).unwrap();
        let b = flags(&[
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
        ])
        .unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn bad_numbers_are_named() {
        let base =
            r#""influent": {"flow_l_per_h": 1200, "dissolved": {"HCl": 0.001}}, "reagent": {"dissolved": {"NaOH": 1}}"#;
        for (extra, expect) in [
            (r#""setpoint_ph": 15"#, "setpoint_ph"),
            (r#""setpoint_ph": 7, "band_ph": 0"#, "band_ph"),
            (r#""setpoint_ph": 7, "pump": {"max_l_per_h": 1, "step_l_per_h": 2}"#, "step_l_per_h"),
            (r#""setpoint_ph": 7, "pump": {"max_l_per_h": -1, "step_l_per_h": 0.1}"#, "max_l_per_h"),
        ] {
            let e = PlanInput::from_json(&format!("{{{base}, {extra}}}")).unwrap_err();
            assert!(e.message().contains(expect), "{extra}: {e}");
        }
        assert!(flags(&["HCl=0.001", "--reagent", "NaOH=1", "--setpoint-ph", "7"]).is_err());
        let half = flags(&[
            "HCl=0.001",
            "--flow-l-per-h",
            "10",
            "--reagent",
            "NaOH=1",
            "--setpoint-ph",
            "7",
            "--pump-max-l-per-h",
            "1",
        ]);
        assert!(half.unwrap_err().message().contains("both"));
    }
}
