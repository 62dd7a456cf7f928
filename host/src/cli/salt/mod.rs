//! `phdose salt`: what a salt's ions do in water and the pH that results.

mod input;
mod json;
mod names;
mod table;

use std::io::Read;

use phdose::chem::salt;

use super::args::{self, ACTIVITY, HELP, JSON, TEMPERATURE};
use super::{CliError, Mode, help, json as json_io};
use input::SaltInput;

/// Runs `salt` with the arguments after the command name.
pub fn run(argv: &[String], mode: Mode, stdin: &mut dyn Read) -> Result<String, CliError> {
    let p = args::parse(argv, &[JSON, TEMPERATURE, ACTIVITY, HELP])?;
    if p.has(HELP) {
        return Ok(help::SALT.to_owned());
    }
    let request = if mode == Mode::Json {
        if !p.positionals.is_empty() || !p.given(&[TEMPERATURE, ACTIVITY]).is_empty() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put salt, concentration_mol_per_l, \
                 temperature_c and activity in the JSON object instead of the command line",
            ));
        }
        SaltInput::from_json(&json_io::read_input(stdin)?)?
    } else {
        SaltInput::from_flags(&p.positionals, p.value(TEMPERATURE), p.value(ACTIVITY))?
    };
    let c = request.conditions;
    let report = salt::analyse(&request.salt, request.mol_per_l, c.temperature, c.activity)
        .map_err(|e| CliError::new(format!("'{}': {e}", request.salt)))?;
    match mode {
        Mode::Json => json::render(&request, &report),
        Mode::Table => Ok(table::render(&request, &report)),
    }
}
