//! Command dispatch, output modes and exit codes.

mod args;
mod caution;
mod composition;
mod conditions;
mod curve;
mod error;
mod files;
mod fit;
mod format;
mod help;
mod json;
mod layout;
mod plan;
mod reagent;
mod salt;
mod speciate;
mod substances;
mod volume;

use std::ffi::OsString;
use std::io::{self, Read, Write};
use std::process::ExitCode;

pub use error::CliError;

/// Exit code of every failure (input, solver or internal error).
pub const FAILURE_CODE: u8 = 2;

/// How results and errors are printed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    /// `--json`: one JSON document on stdout, errors as `{"error": "..."}` on stdout.
    Json,
    /// Readable tables on stdout, errors as one `error: ...` line on stderr.
    Table,
}

/// `true` when `--json` appears among the arguments (before a `--` separator).
pub fn wants_json(argv: &[OsString]) -> bool {
    argv.iter().take_while(|a| *a != "--").any(|a| a == "--json")
}

/// What one run prints and how it exits.
#[derive(Debug)]
pub struct Outcome {
    stdout: String,
    stderr: String,
    code: u8,
}

impl Outcome {
    fn success(stdout: String) -> Self {
        Self { stdout, stderr: String::new(), code: 0 }
    }

    fn failure(mode: Mode, error: &CliError) -> Self {
        match mode {
            Mode::Json => {
                Self { stdout: json::error_document(error.message()), stderr: String::new(), code: FAILURE_CODE }
            }
            Mode::Table => Self { stdout: String::new(), stderr: format!("error: {error}\n"), code: FAILURE_CODE },
        }
    }

    /// The outcome after a caught panic (the panic hook has already said where, on stderr).
    pub fn internal_error(json: bool) -> Self {
        if json {
            Self::failure(Mode::Json, &CliError::new("internal error (a bug in phdose, please report it)"))
        } else {
            Self { stdout: String::new(), stderr: String::new(), code: FAILURE_CODE }
        }
    }

    /// Prints the outcome and returns the exit code. A reader that closes the pipe early
    /// (`phdose substances | head`) is not an error.
    pub fn emit(self) -> ExitCode {
        let mut code = self.code;
        let mut out = io::stdout().lock();
        if let Err(e) = out.write_all(self.stdout.as_bytes()).and_then(|()| out.flush())
            && e.kind() != io::ErrorKind::BrokenPipe
        {
            let _ = writeln!(io::stderr(), "error: cannot write to stdout: {e}");
            code = FAILURE_CODE;
        }
        let _ = io::stderr().write_all(self.stderr.as_bytes());
        ExitCode::from(code)
    }
}

/// Runs the command line `argv` (without the program name), reading JSON input from `stdin`.
pub fn run(argv: &[OsString], stdin: &mut dyn Read) -> Outcome {
    let mode = if wants_json(argv) { Mode::Json } else { Mode::Table };
    match dispatch(argv, stdin, mode) {
        Ok(text) => Outcome::success(text),
        Err(e) => Outcome::failure(mode, &e),
    }
}

fn dispatch(argv: &[OsString], stdin: &mut dyn Read, mode: Mode) -> Result<String, CliError> {
    let args = args::to_strings(argv)?;
    let Some((command, rest)) = args.split_first() else {
        return Err(CliError::new("no command given; run `phdose help` for the list of commands"));
    };
    match command.as_str() {
        "speciate" => speciate::run(rest, mode, stdin),
        "salt" => salt::run(rest, mode, stdin),
        "substances" => substances::run(rest, mode),
        "plan" => plan::run(rest, mode, stdin),
        "curve" => curve::run(rest, mode, stdin),
        "fit" => fit::run(rest, mode, stdin),
        "help" | "--help" | "-h" => help::run(rest),
        "version" | "--version" | "-V" => Ok(format!("phdose {}\n", env!("CARGO_PKG_VERSION"))),
        other => Err(CliError::new(format!("unknown command '{other}'; the commands are {}", help::COMMANDS))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn os(args: &[&str]) -> Vec<OsString> {
        args.iter().map(OsString::from).collect()
    }

    #[test]
    fn json_mode_is_detected_before_the_separator_only() {
        assert!(wants_json(&os(&["salt", "--json"])));
        assert!(!wants_json(&os(&["salt", "--", "--json"])));
        assert!(!wants_json(&os(&["salt", "Na2HPO4", "0.05"])));
    }

    #[test]
    fn failures_go_to_the_right_stream_with_code_2() {
        let table = run(&os(&["frobnicate"]), &mut io::empty());
        assert_eq!(table.code, FAILURE_CODE);
        assert!(table.stdout.is_empty() && table.stderr.starts_with("error: unknown command"));
        let json = run(&os(&["frobnicate", "--json"]), &mut io::empty());
        assert_eq!(json.code, FAILURE_CODE);
        assert!(json.stderr.is_empty() && json.stdout.contains("\"error\""));
    }
}
