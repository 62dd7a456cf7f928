//! What `plan` is asked: influent, reagent, setpoint, pump and band, from JSON or flags.

use phdose::titration::hazard;
use phdose::titration::{DoseRequest, Pump};
use phdose::units::{InvalidInput, LitresPerHour, Quantity};
use serde::Deserialize;

use super::{Args, example};
use crate::cli::CliError;
use crate::cli::composition::{self, Dissolved};
use crate::cli::conditions::Conditions;
use crate::cli::json::{self, Entries};
use crate::cli::reagent::{Reagent, ReagentJson};

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
    /// Temperature of the reagent's tank and lines, °C, if given (else the influent's).
    pub reagent_temperature_c: Option<f64>,
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
    #[serde(default)]
    reagent_temperature_c: Option<f64>,
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
    #[serde(default)]
    min_l_per_h: Option<f64>,
}

/// The core's message for a value out of range, with the request field it came from.
fn invalid(e: InvalidInput) -> CliError {
    let field = match e.quantity {
        Quantity::Ph => "setpoint_ph",
        Quantity::PhWidth => "band_ph",
        Quantity::PumpMax => "pump max_l_per_h",
        Quantity::PumpStep => "pump step_l_per_h",
        Quantity::PumpMin => "pump min_l_per_h",
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
        pump: Option<(f64, f64, Option<f64>)>,
        band_ph: Option<f64>,
    ) -> Result<Self, CliError> {
        LitresPerHour::new(flow_l_per_h)
            .map_err(|e| InvalidInput { quantity: Quantity::InfluentFlow, ..e })
            .and_then(|f| f.plannable(Quantity::InfluentFlow))
            .map_err(invalid)?;
        let request =
            DoseRequest::checked(setpoint_ph, pump.map(|(max, step, _)| (max, step)), band_ph).map_err(invalid)?;
        let pump = match (request.pump, pump.and_then(|(_, _, min)| min)) {
            (Some(p), Some(min)) => Some(p.with_minimum(min).map_err(invalid)?),
            (p, _) => p,
        };
        Ok(Self {
            conditions,
            influent,
            flow_l_per_h,
            reagent,
            setpoint_ph,
            pump,
            band_ph,
            reagent_temperature_c: None,
        })
    }

    /// The same input with the reagent's tank temperature, checked by the core's stock
    /// constructor (the error names the field and the value).
    pub fn with_reagent_temperature(self, celsius: Option<f64>) -> Result<Self, CliError> {
        if let Some(t) = celsius {
            hazard::storage_celsius(t).map_err(|e| CliError::new(format!("reagent_temperature_c: {e}")))?;
        }
        Ok(Self { reagent_temperature_c: celsius, ..self })
    }

    /// The reagent's tank temperature: the one given, else the influent's, °C.
    pub fn reagent_celsius(&self) -> f64 {
        self.reagent_temperature_c.unwrap_or(self.conditions.celsius())
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        let influent = composition::resolve(r.influent.dissolved.0, "influent")?;
        let reagent = Reagent::from_json(r.reagent, "reagent")?;
        let pump = r.pump.map(|p| (p.max_l_per_h, p.step_l_per_h, p.min_l_per_h));
        Self::new(conditions, influent, r.influent.flow_l_per_h, reagent, r.setpoint_ph, pump, r.band_ph)?
            .with_reagent_temperature(r.reagent_temperature_c)
    }

    /// From the command line: influent `SUBSTANCE=MOL_PER_L` arguments and the options; with
    /// `--example`, the built-in scenario supplies every value an option does not override.
    pub fn from_args(a: &Args) -> Result<Self, CliError> {
        let missing = |option: &str| CliError::new(format!("missing --{option} (or use --example)"));
        let influent = if a.example {
            example::DISSOLVED.iter().map(|(f, c)| ((*f).to_owned(), *c)).collect()
        } else {
            composition::require(&a.influent, "no influent", "NaHCO3=0.002 HCl=0.001")?
        };
        let influent = composition::resolve(influent, "influent")?;
        let conditions = Conditions::from_args(a.conditions, a.example.then_some(example::TEMPERATURE_C))?;
        let default = |value: f64| if a.example { Some(value) } else { None };
        let flow = a.flow_l_per_h.or(default(example::FLOW_L_PER_H)).ok_or_else(|| missing("flow-l-per-h"))?;
        let reagent = match &a.reagent {
            Some(text) => Reagent::from_flag(text, a.reagent_density, "reagent")?,
            None if a.example => Reagent::grade(example::REAGENT.0, example::REAGENT.1, None, "reagent")?,
            None => return Err(missing("reagent")),
        };
        let setpoint = a.setpoint_ph.or(default(example::SETPOINT_PH)).ok_or_else(|| missing("setpoint-ph"))?;
        let (example_max, example_step) = example::PUMP;
        let max = a.pump_max_l_per_h.or(default(example_max));
        let step = a.pump_step_l_per_h.or(default(example_step));
        let pump = match (max, step) {
            _ if a.no_pump => None,
            (Some(max_l_per_h), Some(step_l_per_h)) => Some((max_l_per_h, step_l_per_h, a.pump_min_l_per_h)),
            (None, None) if a.pump_min_l_per_h.is_some() => {
                return Err(CliError::new(
                    "--pump-min-l-per-h needs the pump: give --pump-max-l-per-h and --pump-step-l-per-h too",
                ));
            }
            (None, None) => None,
            _ => {
                return Err(CliError::new(
                    "give the pump as both --pump-max-l-per-h and --pump-step-l-per-h, or neither",
                ));
            }
        };
        let band = a.band_ph.or(default(example::BAND_PH));
        Self::new(conditions, influent, flow, reagent, setpoint, pump, band)?
            .with_reagent_temperature(a.reagent_temperature_c)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use clap::Parser;

    #[derive(Parser)]
    struct Plan {
        #[command(flatten)]
        args: Args,
    }

    fn flags(argv: &[&str]) -> Result<PlanInput, CliError> {
        let plan = Plan::try_parse_from(std::iter::once("plan").chain(argv.iter().copied())).unwrap();
        PlanInput::from_args(&plan.args)
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
