//! `phdose pack [SKID.toml] --out FILE`: the configuration blob a controller loads, written only
//! when the boot checks allow dosing with it.

use std::path::PathBuf;

use phdose::config::Skid;
use phdose::config::blob::{self, MAX_BLOB_LEN};
use phdose::config::boot;
use phdose::config::example::plating_rinse;
use serde::Serialize;

use super::caution::CHECK_CAUTION;
use super::config::report::{self, ReportOut, Source};
use super::config::{self, template::TEMPLATE};
use super::{CliError, Mode, REFUSED_CODE, Reply, files, json, layout};

const AFTER_HELP: &str = "\
Reads the TOML skid file (without one: the built-in example skid, the rinse-water tank of a
fictional plating shop), runs the boot checks in f32 as on the board (`boot::check::<f32>`),
prints the report and writes the blob (magic PHDK, version, length, postcard payload,
CRC-32/ISO-HDLC) to --out FILE. The sections [plant], [disturbances] and [run] of a simulator
scenario file are ignored; any other unknown key is an error.

The blob is written only when the boot checks allow dosing: a controller would refuse a blob
with errors at power-on anyway, so writing one is refused too (exit 1, nothing written).
--even-if-refused writes it regardless (to test a controller's refusal path); --force only
allows replacing an existing FILE, it never lets a refused configuration through.

--template prints the built-in skid as an annotated TOML file (a comment with unit and range on
every key): the start of your own skid file.

Exit codes:
  0  the blob was written (warnings may be listed; with --even-if-refused also errors)
  1  the boot checks refuse dosing: nothing written
  2  the file cannot be read or parsed (the message names the line and the key), FILE exists
     without --force or cannot be written; usage errors. With --json: {\"error\": \"...\"}.

JSON result: the report of `phdose check --json` (allowed, errors, warnings, dropped), then
file (null for the built-in skid), skid, real (\"f32\"), written (the path, null when nothing was
written) and blob_bytes.

Examples:
  phdose pack --template > skid.toml
  phdose pack skid.toml --out skid.bin
  phdose pack --out example.bin --force
  phdose check skid.bin

A passed boot check does not replace hardwired interlocks: read SAFETY.md.";

/// write the configuration blob of a skid (TOML file or the built-in example)
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The TOML skid file [default: the built-in example skid]
    #[arg(value_name = "SKID.toml")]
    pub file: Option<String>,
    /// Write the blob to FILE
    #[arg(long, value_name = "FILE", required_unless_present = "template")]
    pub out: Option<PathBuf>,
    /// Replace FILE if it exists
    #[arg(long, requires = "out")]
    pub force: bool,
    /// Write the blob even when the boot checks refuse dosing with it
    #[arg(long, requires = "out")]
    pub even_if_refused: bool,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
    /// Print the built-in skid as an annotated TOML file and exit
    #[arg(long, conflicts_with_all = ["file", "out", "json"])]
    pub template: bool,
}

#[derive(Serialize)]
struct PackOut<'a> {
    #[serde(flatten)]
    report: ReportOut,
    file: Option<&'a str>,
    skid: &'a str,
    real: &'static str,
    written: Option<String>,
    blob_bytes: usize,
}

/// The blob of `skid`.
fn encode(skid: &Skid) -> Result<Vec<u8>, CliError> {
    let mut buf = vec![0u8; MAX_BLOB_LEN];
    let len = blob::encode(skid, &mut buf)
        .map_err(|e| CliError::new(format!("cannot pack the skid into {MAX_BLOB_LEN} bytes: {e}")))?;
    buf.truncate(len);
    Ok(buf)
}

/// Runs `pack`: exit 0 when the blob was written, 1 when the boot checks refused it.
pub fn run(args: Args) -> Result<Reply, CliError> {
    if args.template {
        return Ok(Reply { stdout: TEMPLATE.to_owned(), code: 0 });
    }
    let out = args.out.as_ref().ok_or_else(|| CliError::new("--out FILE is required"))?;
    let skid = match &args.file {
        Some(path) => config::read_toml(path)?,
        None => plating_rinse(),
    };
    let report = boot::check::<f32>(&skid);
    let bytes = encode(&skid)?;
    let write = report.allowed() || args.even_if_refused;
    if write {
        files::write_new(out, &bytes, args.force, "blob")?;
    }
    let shown = out.display().to_string();
    let code = if write { 0 } else { REFUSED_CODE };
    let stdout = match Mode::of(args.json) {
        Mode::Json => json::render(&PackOut {
            report: ReportOut::from(&report),
            file: args.file.as_deref(),
            skid: &skid.name,
            real: "f32",
            written: write.then(|| shown.clone()),
            blob_bytes: bytes.len(),
        })?,
        Mode::Table => {
            let heading = match &args.file {
                Some(path) => format!("Boot checks of {path} (TOML skid file, in f32 as on the board)"),
                None => "Boot checks of the built-in example skid (invented: a fictional plating shop's rinse tank, \
                         in f32 as on the board)"
                    .to_owned(),
            };
            let table = report::table(&Source { heading: &heading, skid: Some(&skid.name) }, &report);
            let line = match (write, report.allowed()) {
                (true, true) => format!("wrote blob ({} bytes) to {shown}", bytes.len()),
                (true, false) => format!(
                    "wrote blob ({} bytes) to {shown} although the boot checks refuse it (--even-if-refused): \
                     a controller will not dose with it",
                    bytes.len()
                ),
                (false, _) => format!(
                    "nothing written to {shown}: the boot checks refuse dosing with these settings (fix the \
                     errors; --even-if-refused writes the blob anyway)"
                ),
            };
            layout::finish(table, &[line], CHECK_CAUTION)
        }
    };
    Ok(Reply { stdout, code })
}
