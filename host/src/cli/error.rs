//! The one error type of the CLI: a message for the user; and the core errors that echo a
//! number, worded again with [`num`] so that 1e300 does not come back as 301 digits.

use std::fmt;

use phdose::chem::salt::SaltError;
use phdose::chem::{CompositionError, MAX_TOTAL_MOL_PER_L};
use phdose::titration::reagent::ReagentError;
use phdose::units::{MAX_CELSIUS, MIN_CELSIUS, TemperatureOutOfRange};

use super::format::num;

/// An input, solver or usage error, already worded for the user.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CliError {
    message: String,
}

impl CliError {
    /// An error with this message.
    pub fn new(message: impl Into<String>) -> Self {
        Self { message: message.into() }
    }

    /// The message.
    pub fn message(&self) -> &str {
        &self.message
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for CliError {}

/// A rejected temperature.
pub fn temperature(e: TemperatureOutOfRange) -> String {
    format!("temperature {} °C is outside the valid range {MIN_CELSIUS}–{MAX_CELSIUS} °C", num(e.celsius))
}

/// A rejected amount (the core's own words, with the number in [`num`] form).
pub fn composition(e: CompositionError) -> String {
    match e {
        CompositionError::Negative { mol_per_l } => format!("amount {} mol/L is negative", num(mol_per_l)),
        CompositionError::TooConcentrated { mol_per_l } => {
            format!("total {} mol/L exceeds the {MAX_TOTAL_MOL_PER_L} mol/L limit", num(mol_per_l))
        }
        CompositionError::Temperature(t) => temperature(t),
        other => other.to_string(),
    }
}

/// A rejected mass percent or density.
pub fn reagent(e: ReagentError) -> String {
    match e {
        ReagentError::MassPercent(p) => format!("mass percent {} is outside (0, 100]", num(p)),
        ReagentError::Density(d) => format!("density {} kg/L is outside (0.5, 3]", num(d)),
        other => other.to_string(),
    }
}

/// A salt analysis that failed.
pub fn salt(e: SaltError) -> String {
    match e {
        SaltError::Composition(c) => composition(c),
        other => other.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_in_core_errors_are_short() {
        let e = composition(CompositionError::TooConcentrated { mol_per_l: 1e300 });
        assert_eq!(e, "total 1e300 mol/L exceeds the 20 mol/L limit");
        assert_eq!(composition(CompositionError::Negative { mol_per_l: -0.001 }), "amount -0.001 mol/L is negative");
        assert!(temperature(TemperatureOutOfRange { celsius: -1e-300 }).starts_with("temperature -1e-300 °C"));
        assert_eq!(reagent(ReagentError::Density(1e9)), "density 1e9 kg/L is outside (0.5, 3]");
        assert_eq!(salt(SaltError::NotASalt), SaltError::NotASalt.to_string());
    }
}
