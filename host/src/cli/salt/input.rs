//! What `salt` is asked: one salt, its concentration and the conditions, from JSON or flags.

use serde::Deserialize;

use crate::cli::CliError;
use crate::cli::conditions::{ConditionArgs, Conditions};
use crate::cli::format::num;
use crate::cli::json;

/// Shape of the JSON request, shown when stdin is empty.
pub const JSON_EXAMPLE: &str =
    r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.05, "temperature_c": 25, "activity": "davies"}"#;

/// A complete `salt` request.
#[derive(Clone, Debug, PartialEq)]
pub struct SaltInput {
    /// Formula or name of the salt, as given.
    pub salt: String,
    /// Salt concentration, mol/L (> 0).
    pub mol_per_l: f64,
    /// Temperature and activity model.
    pub conditions: Conditions,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    salt: String,
    concentration_mol_per_l: f64,
    #[serde(default)]
    temperature_c: Option<f64>,
    #[serde(default)]
    activity: Option<String>,
}

impl SaltInput {
    /// Checks the concentration (finite and > 0: a salt analysis of no salt means nothing).
    pub fn new(salt: String, mol_per_l: f64, conditions: Conditions) -> Result<Self, CliError> {
        if !(mol_per_l.is_finite() && mol_per_l > 0.0) {
            return Err(CliError::new(format!("concentration {} mol/L must be a number above 0", num(mol_per_l))));
        }
        Ok(Self { salt, mol_per_l, conditions })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        Self::new(r.salt, r.concentration_mol_per_l, conditions)
    }

    /// From the `SALT MOL_PER_L` arguments and the condition options.
    pub fn from_args(
        salt: Option<String>,
        mol_per_l: Option<f64>,
        conditions: ConditionArgs,
    ) -> Result<Self, CliError> {
        let (Some(salt), Some(mol_per_l)) = (salt, mol_per_l) else {
            return Err(CliError::new("expected SALT MOL_PER_L (e.g. `phdose salt Na2HPO4 0.05`)"));
        };
        Self::new(salt, mol_per_l, Conditions::from_args(conditions, None)?)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn json_and_flags_agree() {
        let a = SaltInput::from_json(r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0.05}"#).unwrap();
        let b = SaltInput::from_args(Some("Na2HPO4".to_owned()), Some(0.05), ConditionArgs::default()).unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn bad_requests_are_refused() {
        assert!(SaltInput::from_json(r#"{"salt": "Na2HPO4"}"#).is_err());
        assert!(SaltInput::from_json(r#"{"salt": "Na2HPO4", "concentration_mol_per_l": 0}"#).is_err());
        assert!(SaltInput::from_json(r#"{"salt": "Na2HPO4", "concentration_mol_per_l": -0.1}"#).is_err());
        assert!(SaltInput::from_args(Some("Na2HPO4".to_owned()), None, ConditionArgs::default()).is_err());
        let e = SaltInput::from_json(r#"{"salt": "Na2HPO4", "concentration_mol_per_l": -1e-300}"#).unwrap_err();
        assert_eq!(e.message(), "concentration -1e-300 mol/L must be a number above 0");
    }
}
