//! `phdose check FILE`: the boot checks a controller runs at power-on, on a configuration blob
//! or a TOML skid file, with the verdict as the exit code.

use phdose::config::boot;
use serde::Serialize;

use super::caution::CHECK_CAUTION;
use super::config::report::{self, ReportOut, Source};
use super::config::{self, SkidFile};
use super::{CliError, Mode, REFUSED_CODE, Reply, json, layout};

fn after_help() -> String {
    format!(
        "\
FILE is a configuration blob when it starts with the magic bytes PHDK (as `phdose pack` writes
it), else a TOML skid file (`phdose pack --template` prints an annotated one). Any other binary
file is taken for a damaged blob (error 201). The sections [plant], [disturbances] and [run]
of a simulator scenario file are ignored; any other unknown key is an error.

The checks are the core's, in f32 as on the board: `boot::check_blob::<f32>` for a blob (magic,
version, length and CRC first, then the settings), `boot::check::<f32>` for a TOML file.

Exit codes:
  0  dosing allowed (no error; warnings may be listed)
  1  dosing refused: at least one error (2xx)
  2  the file cannot be read, or the TOML does not parse (the message names the line and the
     key); usage errors. With --json: {{\"error\": \"...\"}} on stdout.

JSON result: allowed (bool), errors and warnings ([{{code, message, name, value, limit}}]:
message is the finding as the table prints it, name the setting or item or null, value and
limit its numbers), dropped (findings beyond the report's capacity); also file, format
(\"blob\" or \"toml\"), skid (its name, null when the blob did not decode), real (\"f32\").

Codes (2xx errors refuse dosing, 3xx warnings allow it):
{}
Examples:
  phdose check skid.toml
  phdose check skid.bin --json

A passed boot check does not replace hardwired interlocks: read SAFETY.md.",
        report::code_lines()
    )
}

/// the boot checks of a skid file (blob or TOML): may the controller dose with it?
#[derive(Debug, clap::Args)]
#[command(after_help = after_help())]
pub struct Args {
    /// The skid file: a configuration blob or a TOML skid file
    #[arg(value_name = "FILE")]
    pub file: String,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

#[derive(Serialize)]
struct CheckOut<'a> {
    #[serde(flatten)]
    report: ReportOut,
    file: &'a str,
    format: &'static str,
    skid: Option<&'a str>,
    real: &'static str,
}

/// Runs `check`: exit 0 when the checks allow dosing, 1 when they refuse it.
pub fn run(args: Args) -> Result<Reply, CliError> {
    let (format, skid, report) = match config::read(&args.file)? {
        SkidFile::Blob(bytes) => {
            let (skid, report) = boot::check_blob::<f32>(&bytes);
            ("blob", skid, report)
        }
        SkidFile::Toml(skid) => {
            let report = boot::check::<f32>(&skid);
            ("toml", Some(*skid), report)
        }
    };
    let name = skid.as_ref().map(|s| s.name.as_str());
    let code = if report.allowed() { 0 } else { REFUSED_CODE };
    let stdout = match Mode::of(args.json) {
        Mode::Json => json::render(&CheckOut {
            report: ReportOut::from(&report),
            file: &args.file,
            format,
            skid: name,
            real: "f32",
        })?,
        Mode::Table => {
            let what = if format == "blob" { "configuration blob" } else { "TOML skid file" };
            let heading = format!("Boot checks of {} ({what}, in f32 as on the board)", args.file);
            layout::finish(report::table(&Source { heading: &heading, skid: name }, &report), &[], CHECK_CAUTION)
        }
    };
    Ok(Reply { stdout, code })
}
