//! `phdose salt`: what a salt's ions do in water and the pH that results.

mod input;
mod json;
mod names;
mod table;

use std::io::Read;

use phdose::chem::salt;

use super::conditions::ConditionArgs;
use super::{CliError, Mode, json as json_io, value};
use input::SaltInput;

const AFTER_HELP: &str = "\
JSON request (temperature_c and activity optional; defaults 25 and \"davies\"):
  {\"salt\": \"Na2HPO4\", \"concentration_mol_per_l\": 0.05, \"temperature_c\": 25, \"activity\": \"davies\"}

JSON result keys: salt, name, given_as, concentration_mol_per_l, temperature_c, activity,
class (acidic|basic|neutral), ph, neutral_ph, parent_acid, parent_acid_strength,
parent_base, parent_base_strength, cation and anion {formula, count, action, ka, kb, pka,
pkb; null when absent}, approximation (null or {kind, ph, error_ph, rule_ratio, valid}),
ionic_strength, buffer_capacity, iterations.
The approximation is the textbook square-root formula (activities ignored) with the 5 % rule.

Examples:
  phdose salt Na2HPO4 0.05 --temperature-c 25 --activity ideal
  phdose salt --json < request.json";

/// what a salt's ions do in water: class, parents, ion actions and the exact pH
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The salt: a formula or name from `phdose substances`
    salt: Option<String>,
    /// Its concentration, mol/L
    #[arg(value_parser = value::finite_number, allow_negative_numbers = true)]
    mol_per_l: Option<f64>,
    #[command(flatten)]
    conditions: ConditionArgs,
    /// Read the request as JSON from stdin and print the result as JSON
    #[arg(long)]
    json: bool,
}

/// Runs `salt`.
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mode = Mode::of(args.json);
    let request = if mode == Mode::Json {
        if args.salt.is_some() || args.conditions.given() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put salt, concentration_mol_per_l, \
                 temperature_c and activity in the JSON object instead of the command line",
            ));
        }
        SaltInput::from_json(&json_io::read_input(stdin)?)?
    } else {
        SaltInput::from_args(args.salt, args.mol_per_l, args.conditions)?
    };
    let c = request.conditions;
    let report = salt::analyse(&request.salt, request.mol_per_l, c.temperature, c.activity)
        .map_err(|e| CliError::new(format!("'{}': {}", request.salt, e)))?;
    match mode {
        Mode::Json => json::render(&request, &report),
        Mode::Table => Ok(table::render(&request, &report)),
    }
}
