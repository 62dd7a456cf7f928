//! Temperature and activity model: the conditions both chemistry commands share.

use phdose::chem::Activity;
use phdose::units::Celsius;

use super::CliError;
use super::args;

/// Temperature used when none is given, °C.
pub const DEFAULT_TEMPERATURE_C: f64 = 25.0;

/// The conditions of a calculation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conditions {
    /// Water temperature.
    pub temperature: Celsius<f64>,
    /// Activity model.
    pub activity: Activity,
}

impl Conditions {
    /// Checks the optional temperature (°C) and activity name, applying the defaults
    /// (25 °C, Davies).
    pub fn new(temperature_c: Option<f64>, activity: Option<&str>) -> Result<Self, CliError> {
        let temperature =
            Celsius::new(temperature_c.unwrap_or(DEFAULT_TEMPERATURE_C)).map_err(|e| CliError::new(e.to_string()))?;
        let activity = activity.map_or(Ok(Activity::Davies), parse_activity)?;
        Ok(Self { temperature, activity })
    }

    /// From the `--temperature-c` and `--activity` values as given on the command line;
    /// `default_temperature_c` stands in for a missing `--temperature-c` (`None`: 25 °C).
    pub fn from_flags(
        temperature_c: Option<&str>,
        activity: Option<&str>,
        default_temperature_c: Option<f64>,
    ) -> Result<Self, CliError> {
        let t = temperature_c.map(|t| args::number(args::TEMPERATURE.name, t)).transpose()?;
        Self::new(t.or(default_temperature_c), activity)
    }

    /// Temperature, °C.
    pub fn celsius(&self) -> f64 {
        self.temperature.celsius()
    }

    /// "davies" or "ideal".
    pub fn activity_name(&self) -> &'static str {
        activity_name(self.activity)
    }
}

/// Parses an activity model name ("davies" or "ideal", ASCII case ignored).
pub fn parse_activity(name: &str) -> Result<Activity, CliError> {
    if name.eq_ignore_ascii_case("davies") {
        Ok(Activity::Davies)
    } else if name.eq_ignore_ascii_case("ideal") {
        Ok(Activity::Ideal)
    } else {
        Err(CliError::new(format!("unknown activity model '{name}'; use \"davies\" or \"ideal\"")))
    }
}

/// The name of an activity model as accepted by [`parse_activity`].
pub fn activity_name(activity: Activity) -> &'static str {
    match activity {
        Activity::Davies => "davies",
        Activity::Ideal => "ideal",
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
        assert!(Conditions::new(None, Some("debye")).is_err());
    }

    #[test]
    fn from_flag_values() {
        assert_eq!(Conditions::from_flags(None, None, None).unwrap(), Conditions::new(None, None).unwrap());
        let c = Conditions::from_flags(Some("18"), Some("ideal"), Some(30.0)).unwrap();
        assert_eq!((c.celsius(), c.activity), (18.0, Activity::Ideal));
        assert_eq!(Conditions::from_flags(None, None, Some(30.0)).unwrap().celsius(), 30.0);
        let e = Conditions::from_flags(Some("warm"), None, None).unwrap_err();
        assert!(e.message().starts_with("--temperature-c: "), "{e}");
        assert!(Conditions::from_flags(Some("150"), None, None).is_err());
    }
}
