//! Temperature and activity model: the conditions every chemistry command shares, and their
//! command-line options.

use clap::ValueEnum;
use phdose::chem::Activity;
use phdose::units::Celsius;

use super::CliError;
use super::value::finite_number;

/// Temperature used when none is given, °C.
pub const DEFAULT_TEMPERATURE_C: f64 = 25.0;

/// `--temperature-c` and `--activity`.
#[derive(clap::Args, Clone, Copy, Debug, Default)]
pub struct ConditionArgs {
    /// Water temperature, °C (0 to 100) [default: 25]
    #[arg(long, value_name = "C", value_parser = finite_number, allow_negative_numbers = true)]
    pub temperature_c: Option<f64>,
    /// Activity model [default: davies]
    #[arg(long, value_enum, ignore_case = true)]
    pub activity: Option<ActivityModel>,
}

impl ConditionArgs {
    /// Whether either option was given.
    pub fn given(&self) -> bool {
        self.temperature_c.is_some() || self.activity.is_some()
    }
}

/// The activity models by name, on the command line and in JSON.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum ActivityModel {
    /// Davies activity coefficients from the ionic strength (pH on the activity scale)
    Davies,
    /// Ideal solution, γ = 1 (pH on the concentration scale)
    Ideal,
}

impl From<ActivityModel> for Activity {
    fn from(m: ActivityModel) -> Self {
        match m {
            ActivityModel::Davies => Activity::Davies,
            ActivityModel::Ideal => Activity::Ideal,
        }
    }
}

/// The conditions of a calculation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conditions {
    /// Water temperature.
    pub temperature: Celsius<f64>,
    /// Activity model.
    pub activity: Activity,
}

impl Conditions {
    fn checked(temperature_c: Option<f64>, activity: Option<ActivityModel>) -> Result<Self, CliError> {
        let temperature =
            Celsius::new(temperature_c.unwrap_or(DEFAULT_TEMPERATURE_C)).map_err(|e| CliError::new(e.to_string()))?;
        Ok(Self { temperature, activity: activity.unwrap_or(ActivityModel::Davies).into() })
    }

    /// Checks the optional temperature (°C) and activity name of a JSON request, applying the
    /// defaults (25 °C, Davies).
    pub fn new(temperature_c: Option<f64>, activity: Option<&str>) -> Result<Self, CliError> {
        let activity = activity
            .map(|name| {
                ActivityModel::from_str(name, true)
                    .map_err(|_| CliError::new(format!("unknown activity model '{name}'; use \"davies\" or \"ideal\"")))
            })
            .transpose()?;
        Self::checked(temperature_c, activity)
    }

    /// From the command-line options; `default_temperature_c` stands in for a missing
    /// `--temperature-c` (`None`: 25 °C).
    pub fn from_args(args: ConditionArgs, default_temperature_c: Option<f64>) -> Result<Self, CliError> {
        Self::checked(args.temperature_c.or(default_temperature_c), args.activity)
    }

    /// Temperature, °C.
    pub fn celsius(&self) -> f64 {
        self.temperature.celsius()
    }

    /// "davies" or "ideal".
    pub fn activity_name(&self) -> &'static str {
        match self.activity {
            Activity::Davies => "davies",
            Activity::Ideal => "ideal",
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn defaults_and_checks() {
        let c = Conditions::new(None, None).unwrap();
        assert_eq!((c.celsius(), c.activity), (25.0, Activity::Davies));
        assert_eq!(Conditions::new(Some(18.0), Some("IDEAL")).unwrap().activity, Activity::Ideal);
        assert!(Conditions::new(Some(101.0), None).is_err());
        assert!(Conditions::new(None, Some("debye")).unwrap_err().message().contains("unknown activity model"));
        let e = Conditions::new(Some(1e300), None).unwrap_err();
        assert!(e.message().starts_with("temperature 1e300 °C"), "{e}");
    }

    #[test]
    fn from_options() {
        let none = ConditionArgs::default();
        assert!(!none.given());
        assert_eq!(Conditions::from_args(none, None).unwrap(), Conditions::new(None, None).unwrap());
        assert_eq!(Conditions::from_args(none, Some(30.0)).unwrap().celsius(), 30.0);
        let given = ConditionArgs { temperature_c: Some(18.0), activity: Some(ActivityModel::Ideal) };
        let c = Conditions::from_args(given, Some(30.0)).unwrap();
        assert_eq!((c.celsius(), c.activity), (18.0, Activity::Ideal));
        assert!(Conditions::from_args(ConditionArgs { temperature_c: Some(150.0), activity: None }, None).is_err());
    }
}
