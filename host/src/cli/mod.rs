//! The command line (`clap` derive), dispatch, output modes and exit codes.

mod caution;
mod check;
mod composition;
mod conditions;
mod config;
mod curve;
mod error;
mod files;
mod fit;
mod format;
mod json;
mod layout;
mod pack;
mod plan;
mod reagent;
mod salt;
mod simulate;
mod speciate;
mod substances;
mod sweep;
mod value;
mod volume;

use std::ffi::OsString;
use std::io::{self, Read, Write};
use std::process::ExitCode;

use clap::{CommandFactory, Parser, Subcommand};
use clap_complete::Shell;

pub use error::CliError;

/// Exit code of every failure (usage, input, solver or internal error).
pub const FAILURE_CODE: u8 = 2;

/// Exit code of a refusal verdict: the boot checks of `check` and `pack` refuse dosing, or
/// `fit` refuses a fit for its quality.
pub const REFUSED_CODE: u8 = 1;

/// What a command with a go/no-go verdict prints and its exit code (0 or [`REFUSED_CODE`]).
#[derive(Debug)]
pub struct Reply {
    /// For stdout.
    pub stdout: String,
    /// Exit code.
    pub code: u8,
}

impl From<String> for Reply {
    /// A plain result: exit code 0.
    fn from(stdout: String) -> Self {
        Self { stdout, code: 0 }
    }
}

const AFTER_HELP: &str = "\
With --json, the request is one JSON object on stdin and the result one JSON object on stdout
(`pack` and `check` read their skid FILE instead).

Exit codes:
  0  a result was computed. For `plan` this includes an unreachable setpoint and failed
     checks: they are results (\"reachable\": false, \"verdicts\"), not errors. For `check`:
     dosing allowed; for `pack`: the blob was written.
  1  `check` and `pack`: the boot checks refuse dosing with the skid (the report says why).
     `fit`: the fit is refused for its quality (ill-conditioned, not converged, a pKa outside
     the data's pH range, or a residual above the bound; the report says why).
  2  any usage, input, solver or internal error:
     {\"error\": \"...\"} on stdout with --json, a message on stderr otherwise.
Defaults: 25 °C, Davies activities. Amounts are mol/L.

Examples:
  phdose speciate NaHCO3=0.002 HCl=0.001 --temperature-c 18
  echo '{\"salt\": \"Na2HPO4\", \"concentration_mol_per_l\": 0.05}' | phdose salt --json
  phdose plan --example
  phdose curve --example --out figures
  phdose pack --template > skid.toml
  phdose pack skid.toml --out skid.bin
  phdose check skid.bin
  phdose help plan
  phdose completions bash > ~/.local/share/bash-completion/completions/phdose

Model results do not replace pH measurement or hardwired interlocks: read SAFETY.md.";

/// phdose — acid-base chemistry for pH dosing (host tools)
#[derive(Debug, Parser)]
#[command(name = "phdose", version, arg_required_else_help = true, after_help = AFTER_HELP)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    Speciate(speciate::Args),
    Salt(salt::Args),
    Substances(substances::Args),
    Plan(plan::Args),
    Curve(curve::Args),
    Fit(fit::Args),
    Pack(pack::Args),
    Check(check::Args),
    Simulate(simulate::Args),
    Sweep(sweep::Args),
    /// print a shell completion script for phdose
    #[command(
        after_help = "Install (bash): phdose completions bash > ~/.local/share/bash-completion/completions/phdose\n\
                            See README.md for zsh, fish and PowerShell."
    )]
    Completions {
        /// The shell to complete in
        #[arg(value_enum)]
        shell: Shell,
    },
}

/// How results and errors are printed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    /// `--json`: one JSON document on stdout, errors as `{"error": "..."}` on stdout.
    Json,
    /// Readable tables on stdout, errors as a message on stderr.
    Table,
}

impl Mode {
    /// `Json` when `--json` was given.
    pub fn of(json: bool) -> Self {
        if json { Self::Json } else { Self::Table }
    }
}

/// `true` when `--json` appears among the arguments (before a `--` separator): decides how an
/// error is reported even when the arguments do not parse.
pub fn wants_json(argv: &[OsString]) -> bool {
    argv.iter().take_while(|a| *a != "--").any(|a| a == "--json")
}

/// What one run prints and how it exits.
#[derive(Debug)]
pub enum Outcome {
    /// Text for stdout and stderr, and the exit code.
    Text {
        /// For stdout.
        stdout: String,
        /// For stderr.
        stderr: String,
        /// Exit code.
        code: u8,
    },
    /// Help, version or a usage error, printed by `clap` (to stdout with code 0 for help and
    /// version, to stderr with code 2 otherwise; coloured on a terminal).
    Clap(clap::Error),
}

impl Outcome {
    fn reply(Reply { stdout, code }: Reply) -> Self {
        Self::Text { stdout, stderr: String::new(), code }
    }

    fn failure(mode: Mode, error: &CliError) -> Self {
        let (stdout, stderr) = match mode {
            Mode::Json => (json::error_document(error.message()), String::new()),
            Mode::Table => (String::new(), format!("error: {error}\n")),
        };
        Self::Text { stdout, stderr, code: FAILURE_CODE }
    }

    /// The outcome after a caught panic (the panic hook has already said where, on stderr).
    pub fn internal_error(json: bool) -> Self {
        if json {
            Self::failure(Mode::Json, &CliError::new("internal error (a bug in phdose, please report it)"))
        } else {
            Self::Text { stdout: String::new(), stderr: String::new(), code: FAILURE_CODE }
        }
    }

    /// Prints the outcome and returns the exit code. A reader that closes the pipe early
    /// (`phdose substances | head`) is not an error.
    pub fn emit(self) -> ExitCode {
        let (stdout, stderr, mut code) = match self {
            Self::Text { stdout, stderr, code } => (stdout, stderr, code),
            Self::Clap(e) => {
                let _ = e.print();
                return ExitCode::from(if e.exit_code() == 0 { 0 } else { FAILURE_CODE });
            }
        };
        let mut out = io::stdout().lock();
        if let Err(e) = out.write_all(stdout.as_bytes()).and_then(|()| out.flush())
            && e.kind() != io::ErrorKind::BrokenPipe
        {
            let _ = writeln!(io::stderr(), "error: cannot write to stdout: {e}");
            code = FAILURE_CODE;
        }
        let _ = io::stderr().write_all(stderr.as_bytes());
        ExitCode::from(code)
    }
}

/// A `clap` error as one message for the JSON error document: its first paragraph and any tip,
/// without the "error: " prefix and the usage lines.
fn clap_message(e: &clap::Error) -> String {
    let text = e.render().to_string();
    let text = text.strip_prefix("error: ").unwrap_or(&text);
    text.split("\n\nUsage:").next().unwrap_or(text).trim().to_owned()
}

/// Runs the command line `argv` (without the program name), reading JSON input from `stdin`.
pub fn run(argv: &[OsString], stdin: &mut dyn Read) -> Outcome {
    let mode = Mode::of(wants_json(argv));
    let cli = match Cli::try_parse_from(std::iter::once(OsString::from("phdose")).chain(argv.iter().cloned())) {
        Ok(cli) => cli,
        Err(e) if mode == Mode::Json && e.use_stderr() => {
            return Outcome::failure(mode, &CliError::new(clap_message(&e)));
        }
        Err(e) => return Outcome::Clap(e),
    };
    let result: Result<Reply, CliError> = match cli.command {
        Command::Speciate(a) => speciate::run(a, stdin).map(Reply::from),
        Command::Salt(a) => salt::run(a, stdin).map(Reply::from),
        Command::Substances(a) => substances::run(a).map(Reply::from),
        Command::Plan(a) => plan::run(a, stdin).map(Reply::from),
        Command::Curve(a) => curve::run(a, stdin).map(Reply::from),
        Command::Fit(a) => fit::run(a, stdin),
        Command::Pack(a) => pack::run(a),
        Command::Check(a) => check::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Completions { shell } => Ok(completions(shell).into()),
    };
    match result {
        Ok(reply) => Outcome::reply(reply),
        Err(e) => Outcome::failure(mode, &e),
    }
}

/// The completion script for `shell`.
fn completions(shell: Shell) -> String {
    let mut script = Vec::new();
    clap_complete::generate(shell, &mut Cli::command(), "phdose", &mut script);
    String::from_utf8_lossy(&script).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn os(args: &[&str]) -> Vec<OsString> {
        args.iter().map(OsString::from).collect()
    }

    #[test]
    fn the_definitions_are_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn json_mode_is_detected_before_the_separator_only() {
        assert!(wants_json(&os(&["salt", "--json"])));
        assert!(!wants_json(&os(&["salt", "--", "--json"])));
        assert!(!wants_json(&os(&["salt", "Na2HPO4", "0.05"])));
    }

    #[test]
    fn usage_errors_are_clap_errors_or_json_documents() {
        let Outcome::Clap(e) = run(&os(&["specaite"]), &mut io::empty()) else {
            unreachable!("a mistyped command is a clap error")
        };
        assert_eq!((e.kind(), e.exit_code()), (clap::error::ErrorKind::InvalidSubcommand, 2));
        let Outcome::Text { stdout, stderr, code } = run(&os(&["specaite", "--json"]), &mut io::empty()) else {
            unreachable!("with --json the error is a JSON document")
        };
        assert_eq!(code, FAILURE_CODE);
        assert!(stderr.is_empty());
        let doc: serde_json::Value = serde_json::from_str(&stdout).unwrap_or_default();
        let message = doc.get("error").and_then(|m| m.as_str()).unwrap_or_default();
        assert!(message.starts_with("unrecognized subcommand 'specaite'") && message.contains("speciate"), "{stdout}");
        assert!(!message.contains("Usage:"), "{message}");
    }

    #[test]
    fn help_is_printed_by_clap_with_code_0() {
        let Outcome::Clap(e) = run(&os(&["plan", "--help", "--json"]), &mut io::empty()) else {
            unreachable!("help is clap's")
        };
        assert_eq!(e.exit_code(), 0);
        assert!(e.render().to_string().contains("reagent_flow_l_per_h"));
    }
}
