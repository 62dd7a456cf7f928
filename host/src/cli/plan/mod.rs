//! `phdose plan`: feed-forward reagent flow for a setpoint, with the process gain, the pump and
//! steepness checks as readable verdicts, and stage advice.
//!
//! Exit codes: 0 whenever a plan was worked out, including an unreachable setpoint or failed
//! checks (they are results, reported in `reachable` and `verdicts`); 2 for input and solver
//! errors.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::args::{self, EXAMPLE, HELP, JSON};
use super::{CliError, Mode, help, json as json_io};
use input::{PlanInput, REQUEST_FLAGS};

/// Runs `plan` with the arguments after the command name.
pub fn run(argv: &[String], mode: Mode, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mut specs = REQUEST_FLAGS.to_vec();
    specs.extend([JSON, EXAMPLE, HELP]);
    let p = args::parse(argv, &specs)?;
    if p.has(HELP) {
        return Ok(help::PLAN.to_owned());
    }
    let (request, title) = if p.has(EXAMPLE) {
        (PlanInput::from_flags(&p, true)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let flags = p.given(&REQUEST_FLAGS);
        if !p.positionals.is_empty() || !flags.is_empty() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put influent, reagent, setpoint_ph, \
                 pump and band_ph in the JSON object instead of the command line",
            ));
        }
        (PlanInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (PlanInput::from_flags(&p, false)?, None)
    };
    let report = report::compute(request)?;
    match mode {
        Mode::Json => json::render(&report),
        Mode::Table => Ok(table::render(&report, title)),
    }
}
