//! The built-in `speciate --example` scenario (invented data).

use super::input::SpeciateInput;
use crate::cli::CliError;
use crate::cli::conditions::{ConditionArgs, Conditions};

/// First line of the example's table.
pub const TITLE: &str = "Built-in example (invented): rinse water after the pickling line of a fictional plating shop";

/// Temperature of the example, °C.
pub const TEMPERATURE_C: f64 = 18.0;

/// What the rinse water carries, mol/L: bicarbonate alkalinity of the make-up water, sulfuric
/// acid dragged out of the pickling line, and phosphate from an alkaline cleaner.
pub const DISSOLVED: [(&str, f64); 3] = [("NaHCO3", 0.002), ("H2SO4", 0.0006), ("Na2HPO4", 0.0003)];

/// The example request; `--temperature-c` / `--activity`, when given, override its conditions
/// (18 °C, Davies).
pub fn input(conditions: ConditionArgs) -> Result<SpeciateInput, CliError> {
    let conditions = Conditions::from_args(conditions, Some(TEMPERATURE_C))?;
    let entries = DISSOLVED.iter().map(|(f, c)| ((*f).to_owned(), *c)).collect();
    SpeciateInput::new(conditions, entries)
}
