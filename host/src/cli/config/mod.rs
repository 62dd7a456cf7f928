//! What `pack` and `check` share: reading a skid file (TOML or blob), the annotated template of
//! the built-in skid, and the boot report as a table and as JSON.

pub mod report;
pub mod template;
pub mod toml_file;

use std::path::Path;

use phdose::config::Skid;
use phdose::config::blob::MAGIC;

use super::{CliError, files};

/// Largest skid file read, bytes (a blob is at most `blob::MAX_BLOB_LEN`; a TOML skid with
/// every comment is a few kB).
pub const MAX_FILE_BYTES: u64 = 1 << 20;

/// A skid file as read from disk.
#[derive(Debug)]
pub enum SkidFile {
    /// A configuration blob (or a file that should be one): checked by `check_blob`.
    Blob(Vec<u8>),
    /// A TOML skid, parsed.
    Toml(Box<Skid>),
}

/// Reads `path`: a blob when it starts with the magic bytes `PHDK`; else TOML when its name
/// ends in `.toml` or it is UTF-8 text; else a blob (a damaged blob, refused by the boot
/// checks with 201). A TOML file that does not parse is an error naming the line and the key.
pub fn read(path: &str) -> Result<SkidFile, CliError> {
    let bytes = files::read_bytes(path, MAX_FILE_BYTES, "skid file")?;
    let is_toml_name = Path::new(path).extension().is_some_and(|e| e.eq_ignore_ascii_case("toml"));
    if bytes.starts_with(&MAGIC) {
        return Ok(SkidFile::Blob(bytes));
    }
    match String::from_utf8(bytes) {
        Ok(text) => toml_file::parse(&text).map(|s| SkidFile::Toml(Box::new(s))).map_err(|e| e.in_file(path)),
        Err(_) if is_toml_name => Err(CliError::new(format!("skid file '{path}' is not valid UTF-8"))),
        Err(e) => Ok(SkidFile::Blob(e.into_bytes())),
    }
}

/// Reads a TOML skid file (`pack`): a blob is refused, it is already packed.
pub fn read_toml(path: &str) -> Result<Skid, CliError> {
    match read(path)? {
        SkidFile::Toml(skid) => Ok(*skid),
        SkidFile::Blob(_) => Err(CliError::new(format!(
            "'{path}' is a configuration blob, not a TOML skid file: `phdose check {path}` checks it"
        ))),
    }
}
