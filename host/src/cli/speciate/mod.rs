//! `phdose speciate`: pH, ionic strength, buffer capacity and every species of a mix.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::args::{self, ACTIVITY, EXAMPLE, HELP, JSON, TEMPERATURE};
use super::{CliError, Mode, help, json as json_io};
use input::SpeciateInput;

/// Runs `speciate` with the arguments after the command name.
pub fn run(argv: &[String], mode: Mode, stdin: &mut dyn Read) -> Result<String, CliError> {
    let p = args::parse(argv, &[JSON, EXAMPLE, TEMPERATURE, ACTIVITY, HELP])?;
    if p.has(HELP) {
        return Ok(help::SPECIATE.to_owned());
    }
    let (request, title) = if p.has(EXAMPLE) {
        if let Some(extra) = p.positionals.first() {
            return Err(CliError::new(format!("--example takes no substances (got '{extra}')")));
        }
        (example::input(p.value(TEMPERATURE), p.value(ACTIVITY))?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let flags = p.given(&[TEMPERATURE, ACTIVITY]);
        if !p.positionals.is_empty() || !flags.is_empty() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put substances, temperature_c and \
                 activity in the JSON object instead of the command line",
            ));
        }
        (SpeciateInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (SpeciateInput::from_flags(&p.positionals, p.value(TEMPERATURE), p.value(ACTIVITY))?, None)
    };
    let report = report::compute(request)?;
    match mode {
        Mode::Json => json::render(&report),
        Mode::Table => Ok(table::render(&report, title)),
    }
}
