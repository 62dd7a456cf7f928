//! `phdose`: the host command-line front end of the phdose chemistry crate.
//!
//! The arguments are defined with `clap` (see `cli`); `phdose --help` lists the commands.
//! Exit codes: 0 success, 1 a refusal verdict (`check` and `pack`: the boot checks refuse
//! dosing; `fit`: the fit is refused for its quality), 2 any usage, input, solver or internal error (reported as `{"error": "..."}` on
//! stdout with `--json`, as an `error: ...` message on stderr otherwise).
//! The program never prints a panic or a backtrace.

mod cli;
mod plot;

use std::io::Write;
use std::panic;
use std::process::ExitCode;

fn main() -> ExitCode {
    // A panic would be a bug; report it in one line instead of Rust's default panic message
    // and backtrace, then fall through to the ordinary error path below.
    panic::set_hook(Box::new(|info| {
        let at = info.location().map(|l| format!(" at {}:{}", l.file(), l.line())).unwrap_or_default();
        let _ = writeln!(std::io::stderr(), "error: internal error{at} (a bug in phdose, please report it)");
    }));

    let argv: Vec<std::ffi::OsString> = std::env::args_os().skip(1).collect();
    let json = cli::wants_json(&argv);
    let outcome = panic::catch_unwind(panic::AssertUnwindSafe(|| cli::run(&argv, &mut std::io::stdin().lock())))
        .unwrap_or_else(|_| cli::Outcome::internal_error(json));
    outcome.emit()
}
