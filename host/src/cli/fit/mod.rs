//! `phdose fit`: an effective influent composition fitted to a lab titration.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::args::{self, EXAMPLE, HELP, JSON};
use super::{CliError, Mode, files, help, json as json_io};
use input::{BUFFERS, FitInput, REQUEST_FLAGS, SVG};

/// Runs `fit` with the arguments after the command name.
pub fn run(argv: &[String], mode: Mode, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mut specs = REQUEST_FLAGS.to_vec();
    specs.extend([BUFFERS, SVG, JSON, EXAMPLE, HELP]);
    let p = args::parse(argv, &specs)?;
    if p.has(HELP) {
        return Ok(help::FIT.to_owned());
    }
    let (request, title) = if p.has(EXAMPLE) {
        let flags = p.given(&REQUEST_FLAGS);
        if !flags.is_empty() || !p.positionals.is_empty() {
            return Err(CliError::new(format!(
                "--example is a fixed data set; only --buffers, --svg and --json go with it (got {})",
                flags
                    .into_iter()
                    .map(str::to_owned)
                    .chain(p.positionals.iter().cloned())
                    .collect::<Vec<_>>()
                    .join(", ")
            )));
        }
        (FitInput::example(p.value(BUFFERS))?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let mut flags = p.given(&REQUEST_FLAGS);
        flags.extend(p.given(&[BUFFERS]));
        if !p.positionals.is_empty() || !flags.is_empty() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put sample_volume_l, titrant, points, \
                 carbonate and buffers in the JSON object instead of the command line (only --svg goes with --json)",
            ));
        }
        (FitInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (FitInput::from_flags(&p)?, None)
    };
    let report = report::compute(request)?;
    let mut written = Vec::new();
    if let Some(path) = p.value(SVG) {
        written.push(files::write_svg(path, &table::plot(&report))?);
    }
    match mode {
        Mode::Json => json::render(&report, p.value(SVG)),
        Mode::Table => Ok(table::render(&report, title, &written)),
    }
}
