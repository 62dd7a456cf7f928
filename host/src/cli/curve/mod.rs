//! `phdose curve`: a titration curve with its equivalence points, as a table, JSON, CSV or SVG.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::args::{self, EXAMPLE, HELP, JSON};
use super::{CliError, Mode, files, help, json as json_io};
use input::{CSV, CurveInput, POINTS, REQUEST_FLAGS, SVG};

/// Runs `curve` with the arguments after the command name.
pub fn run(argv: &[String], mode: Mode, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mut specs = REQUEST_FLAGS.to_vec();
    specs.extend([POINTS, CSV, SVG, JSON, EXAMPLE, HELP]);
    let p = args::parse(argv, &specs)?;
    if p.has(HELP) {
        return Ok(help::CURVE.to_owned());
    }
    let (request, title) = if p.has(EXAMPLE) {
        let flags = p.given(&REQUEST_FLAGS);
        if let Some(extra) = p.positionals.first() {
            return Err(CliError::new(format!("--example takes no sample substances (got '{extra}')")));
        }
        if !flags.is_empty() {
            return Err(CliError::new(format!(
                "--example is a fixed scenario; only --points, --csv, --svg and --json go with it (got {})",
                flags.join(", ")
            )));
        }
        (CurveInput::example(p.value(POINTS))?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let mut flags = p.given(&REQUEST_FLAGS);
        flags.extend(p.given(&[POINTS]));
        if !p.positionals.is_empty() || !flags.is_empty() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put sample, titrant, max_titrant_l and \
                 points in the JSON object instead of the command line (only --csv and --svg go with --json)",
            ));
        }
        (CurveInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (CurveInput::from_flags(&p)?, None)
    };
    let report = report::compute(request)?;
    let mut written = Vec::new();
    if let Some(path) = p.value(CSV) {
        files::write(path, &report::csv(&report), "CSV")?;
        written.push(format!("wrote CSV to {path}"));
    }
    if let Some(path) = p.value(SVG) {
        written.push(files::write_svg(path, &table::plot(&report))?);
    }
    match mode {
        Mode::Json => json::render(&report, p.value(CSV), p.value(SVG)),
        Mode::Table => Ok(table::render(&report, title, &written)),
    }
}
