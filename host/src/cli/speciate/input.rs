//! What `speciate` is asked to solve: conditions and dissolved substances, from JSON or flags.

use serde::Deserialize;

use crate::cli::CliError;
use crate::cli::composition;
pub use crate::cli::composition::Dissolved;
use crate::cli::conditions::{ConditionArgs, Conditions};
use crate::cli::json::{self, Entries};

/// Shape of the JSON request, shown when stdin is empty.
pub const JSON_EXAMPLE: &str =
    r#"{"temperature_c": 25.0, "activity": "davies", "dissolved": {"NaHCO3": 0.002, "HCl": 0.001}}"#;

/// A complete `speciate` request.
#[derive(Clone, Debug, PartialEq)]
pub struct SpeciateInput {
    /// Temperature and activity model.
    pub conditions: Conditions,
    /// Substances in the order given.
    pub dissolved: Vec<Dissolved>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    #[serde(default)]
    temperature_c: Option<f64>,
    #[serde(default)]
    activity: Option<String>,
    dissolved: Entries,
}

impl SpeciateInput {
    /// Resolves every substance name; refuses unknown names and a substance named twice.
    pub fn new(conditions: Conditions, entries: Vec<(String, f64)>) -> Result<Self, CliError> {
        Ok(Self { conditions, dissolved: composition::resolve(entries, "")? })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        Self::new(conditions, r.dissolved.0)
    }

    /// From the `SUBSTANCE=MOL_PER_L` arguments and the condition options.
    pub fn from_args(dissolved: &[(String, f64)], conditions: ConditionArgs) -> Result<Self, CliError> {
        let entries = composition::require(dissolved, "nothing dissolved", "NaHCO3=0.002")?;
        Self::new(Conditions::from_args(conditions, None)?, entries)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::cli::conditions::ActivityModel;
    use phdose::chem::Activity;

    #[test]
    fn json_defaults_and_names() {
        let i = SpeciateInput::from_json(r#"{"dissolved": {"sodium bicarbonate": 0.002}}"#).unwrap();
        assert_eq!(i.conditions, Conditions::new(None, None).unwrap());
        assert_eq!(i.dissolved.len(), 1);
        assert_eq!(i.dissolved.first().map(|d| d.substance.formula), Some("NaHCO3"));
    }

    #[test]
    fn from_the_command_line() {
        let dissolved = [("NaHCO3".to_owned(), 2e-3), ("H2SO4".to_owned(), 6e-4)];
        let conditions = ConditionArgs { temperature_c: Some(18.0), activity: Some(ActivityModel::Ideal) };
        let i = SpeciateInput::from_args(&dissolved, conditions).unwrap();
        assert_eq!(i.conditions.activity, Activity::Ideal);
        assert_eq!(i.dissolved.iter().map(|d| d.mol_per_l).collect::<Vec<_>>(), vec![2e-3, 6e-4]);
        assert!(SpeciateInput::from_args(&[], ConditionArgs::default()).is_err());
    }

    #[test]
    fn same_substance_twice_is_refused() {
        let e = SpeciateInput::from_json(r#"{"dissolved": {"NaHCO3": 0.001, "Sodium Bicarbonate": 0.001}}"#);
        assert!(e.unwrap_err().message().contains("given twice"));
    }

    #[test]
    fn unknown_fields_and_substances_are_refused() {
        assert!(SpeciateInput::from_json(r#"{"temprature_c": 18, "dissolved": {}}"#).is_err());
        let e = SpeciateInput::from_json(r#"{"dissolved": {"NaXYZ": 0.001}}"#).unwrap_err();
        assert!(e.message().contains("known formulas") && e.message().contains("NaHCO3"));
    }
}
