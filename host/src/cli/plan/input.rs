//! What `plan` is asked: influent, reagent, setpoint, pump and band, from JSON or flags.

use phdose::titration::hazard;
use phdose::titration::worst::{HardLimits, WorstError};
use phdose::titration::{DoseRequest, Pump};
use phdose::units::{InvalidInput, LitresPerHour, Quantity, TankVolume};
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
    /// What the worst-case block needs beyond the plan: tank, hard limits, influent flow range.
    pub worst: WorstInput,
}

/// Lowest influent flow of the dose corners when none is given, as a fraction of the design
/// flow: 50 %–150 % is a round range of our own (the built-in skid's 600–1800 L/h around
/// 1200 L/h), not a standard.
pub const DEFAULT_MIN_FLOW_FRACTION: f64 = 0.5;
/// Highest influent flow of the dose corners when none is given, as a fraction of the design
/// flow (see [`DEFAULT_MIN_FLOW_FRACTION`]).
pub const DEFAULT_MAX_FLOW_FRACTION: f64 = 1.5;

/// The worst-case inputs of a `plan` request, checked: the names are the skid file's
/// (`control.tank_volume_l`, `control.low_limit_ph`, `control.high_limit_ph`,
/// `influent.min_flow_l_per_h`, `influent.max_flow_l_per_h`).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct WorstInput {
    /// Tank liquid volume, L (1–1e6), if given: enables the times to the hard limits.
    pub tank_volume_l: Option<f64>,
    /// Low hard limit, pH (0–14, below the setpoint), if given.
    pub low_limit_ph: Option<f64>,
    /// High hard limit, pH (0–14, above the setpoint), if given.
    pub high_limit_ph: Option<f64>,
    /// Lowest influent flow, L/h (1e-3 up to the design flow), if given.
    pub min_flow_l_per_h: Option<f64>,
    /// Highest influent flow, L/h (the design flow up to 1e7), if given.
    pub max_flow_l_per_h: Option<f64>,
}

impl WorstInput {
    /// The hard limits (checked when the input was made).
    pub fn limits(&self) -> HardLimits<f64> {
        HardLimits::new(self.low_limit_ph, self.high_limit_ph).unwrap_or_else(|_| HardLimits::none())
    }

    /// The influent flow range of the dose corners, L/h, and whether it was given (else
    /// [`DEFAULT_MIN_FLOW_FRACTION`]–[`DEFAULT_MAX_FLOW_FRACTION`] of `design_l_per_h`).
    pub fn flow_range(&self, design_l_per_h: f64) -> (f64, f64, bool) {
        let given = self.min_flow_l_per_h.is_some() || self.max_flow_l_per_h.is_some();
        let low = self.min_flow_l_per_h.unwrap_or(DEFAULT_MIN_FLOW_FRACTION * design_l_per_h);
        let high = self.max_flow_l_per_h.unwrap_or(DEFAULT_MAX_FLOW_FRACTION * design_l_per_h);
        (low, high, given)
    }

    /// Checks the values with the core's types against the setpoint and the design flow; the
    /// error names the request field and the value.
    fn check(self, setpoint_ph: f64, flow_l_per_h: f64) -> Result<Self, CliError> {
        if let Some(v) = self.tank_volume_l {
            TankVolume::new(v).map_err(|e| CliError::new(format!("tank_volume_l: {e}")))?;
        }
        for (field, value) in [("low_limit_ph", self.low_limit_ph), ("high_limit_ph", self.high_limit_ph)] {
            if let Some(v) = value {
                phdose::units::Ph::new(v).map_err(|e| CliError::new(format!("{field}: {e}")))?;
            }
        }
        let limits = HardLimits::new(self.low_limit_ph, self.high_limit_ph).map_err(|e| match e {
            WorstError::LimitsInconsistent { .. } => CliError::new(format!("low_limit_ph, high_limit_ph: {e}")),
            other => CliError::new(other.to_string()),
        })?;
        if let Some(low) = limits.low_ph()
            && setpoint_ph <= low
        {
            return Err(CliError::new(format!(
                "low_limit_ph: the setpoint pH {setpoint_ph} must lie above the low hard limit pH {low} (the \
                 controller trips below it)"
            )));
        }
        if let Some(high) = limits.high_ph()
            && setpoint_ph >= high
        {
            return Err(CliError::new(format!(
                "high_limit_ph: the setpoint pH {setpoint_ph} must lie below the high hard limit pH {high} (the \
                 controller trips above it)"
            )));
        }
        let plannable = |field: &str, v: f64| {
            LitresPerHour::new(v)
                .and_then(|f| f.plannable(Quantity::InfluentFlow))
                .map(|_| ())
                .map_err(|e| CliError::new(format!("influent {field}: {e}")))
        };
        if let Some(v) = self.min_flow_l_per_h {
            plannable("min_flow_l_per_h", v)?;
            if v > flow_l_per_h {
                return Err(CliError::new(format!(
                    "influent min_flow_l_per_h: {v} L/h is above the design flow {flow_l_per_h} L/h"
                )));
            }
        }
        if let Some(v) = self.max_flow_l_per_h {
            plannable("max_flow_l_per_h", v)?;
            if v < flow_l_per_h {
                return Err(CliError::new(format!(
                    "influent max_flow_l_per_h: {v} L/h is below the design flow {flow_l_per_h} L/h"
                )));
            }
        }
        Ok(self)
    }
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
    #[serde(default)]
    tank_volume_l: Option<f64>,
    #[serde(default)]
    low_limit_ph: Option<f64>,
    #[serde(default)]
    high_limit_ph: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct InfluentJson {
    flow_l_per_h: f64,
    dissolved: Entries,
    #[serde(default)]
    min_flow_l_per_h: Option<f64>,
    #[serde(default)]
    max_flow_l_per_h: Option<f64>,
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
            worst: WorstInput::default(),
        })
    }

    /// The same input with the worst-case inputs, checked against the setpoint (strictly
    /// between the hard limits) and the design flow (inside the flow range); the error names
    /// the field and the value.
    pub fn with_worst(self, worst: WorstInput) -> Result<Self, CliError> {
        Ok(Self { worst: worst.check(self.setpoint_ph, self.flow_l_per_h)?, ..self })
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
        let worst = WorstInput {
            tank_volume_l: r.tank_volume_l,
            low_limit_ph: r.low_limit_ph,
            high_limit_ph: r.high_limit_ph,
            min_flow_l_per_h: r.influent.min_flow_l_per_h,
            max_flow_l_per_h: r.influent.max_flow_l_per_h,
        };
        Self::new(conditions, influent, r.influent.flow_l_per_h, reagent, r.setpoint_ph, pump, r.band_ph)?
            .with_reagent_temperature(r.reagent_temperature_c)?
            .with_worst(worst)
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
        // An option overrides the example's flow range as a whole: a new design flow or one end
        // of the range given on the command line drops the example's range.
        let example_range =
            a.example && a.flow_l_per_h.is_none() && a.min_flow_l_per_h.is_none() && a.max_flow_l_per_h.is_none();
        let (example_min, example_max) = example::FLOW_RANGE_L_PER_H;
        let worst = WorstInput {
            tank_volume_l: a.tank_volume_l.or(default(example::TANK_VOLUME_L)),
            low_limit_ph: a.low_limit_ph.or(default(example::HARD_LIMITS_PH.0)),
            high_limit_ph: a.high_limit_ph.or(default(example::HARD_LIMITS_PH.1)),
            min_flow_l_per_h: a.min_flow_l_per_h.or(example_range.then_some(example_min)),
            max_flow_l_per_h: a.max_flow_l_per_h.or(example_range.then_some(example_max)),
        };
        Self::new(conditions, influent, flow, reagent, setpoint, pump, band)?
            .with_reagent_temperature(a.reagent_temperature_c)?
            .with_worst(worst)
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

    #[test]
    fn worst_case_inputs_agree_and_are_checked() {
        let json = JSON_EXAMPLE
            .replace(
                r#""flow_l_per_h": 1200,"#,
                r#""flow_l_per_h": 1200, "min_flow_l_per_h": 700, "max_flow_l_per_h": 1500,"#,
            )
            .replace(
                r#""band_ph": 0.3}"#,
                r#""band_ph": 0.3, "tank_volume_l": 400, "low_limit_ph": 4, "high_limit_ph": 9.5}"#,
            );
        let a = PlanInput::from_json(&json).unwrap();
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
            "--tank-volume-l",
            "400",
            "--low-limit-ph",
            "4",
            "--high-limit-ph",
            "9.5",
            "--min-flow-l-per-h",
            "700",
            "--max-flow-l-per-h",
            "1500",
        ])
        .unwrap();
        assert_eq!(a, b);
        assert_eq!(a.worst.flow_range(a.flow_l_per_h), (700.0, 1500.0, true));
        // Without a range: 50 % and 150 % of the design flow.
        assert_eq!(WorstInput::default().flow_range(1200.0), (600.0, 1800.0, false));
        let base = r#""influent": {"flow_l_per_h": 1200, "dissolved": {"HCl": 0.001}}, "reagent": {"dissolved": {"NaOH": 1}}, "setpoint_ph": 7"#;
        for (extra, expect) in [
            (r#""tank_volume_l": 0.2"#, "tank_volume_l: tank volume 0.2"),
            (r#""low_limit_ph": 9, "high_limit_ph": 4"#, "not below the high limit"),
            (r#""low_limit_ph": 7.5"#, "low_limit_ph: the setpoint pH 7"),
            (r#""high_limit_ph": 6"#, "high_limit_ph: the setpoint pH 7"),
            (r#""high_limit_ph": 15"#, "high_limit_ph: pH 15"),
        ] {
            let e = PlanInput::from_json(&format!("{{{base}, {extra}}}")).unwrap_err();
            assert!(e.message().contains(expect), "{extra}: {e}");
        }
        let flows = |min: &str, max: &str| {
            let text = format!(
                r#"{{"influent": {{"flow_l_per_h": 1200, "min_flow_l_per_h": {min}, "max_flow_l_per_h": {max}, "dissolved": {{"HCl": 0.001}}}}, "reagent": {{"dissolved": {{"NaOH": 1}}}}, "setpoint_ph": 7}}"#
            );
            PlanInput::from_json(&text).map(|_| ())
        };
        assert!(flows("600", "1800").is_ok());
        assert!(flows("1300", "1800").unwrap_err().message().contains("above the design flow"));
        assert!(flows("600", "1000").unwrap_err().message().contains("below the design flow"));
        assert!(flows("0", "1800").unwrap_err().message().contains("influent min_flow_l_per_h"));
        // The example's range follows the example's design flow only.
        let ex = flags(&["--example"]).unwrap();
        assert_eq!(ex.worst.flow_range(ex.flow_l_per_h), (600.0, 1800.0, true));
        let moved = flags(&["--example", "--flow-l-per-h", "2000"]).unwrap();
        assert_eq!(moved.worst.flow_range(moved.flow_l_per_h), (1000.0, 3000.0, false));
    }
}
