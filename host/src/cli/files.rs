//! Writing the optional output files (`--csv`, `--svg`).

use super::CliError;
use crate::plot::Plot;

/// Writes `content` to `path`; `what` ("CSV", "SVG") names the file in the error.
pub fn write(path: &str, content: &str, what: &str) -> Result<(), CliError> {
    if path.is_empty() {
        return Err(CliError::new(format!("{what} file name is empty")));
    }
    std::fs::write(path, content).map_err(|e| CliError::new(format!("cannot write {what} file '{path}': {e}")))
}

/// Renders `plot` as SVG and writes it to `path`; returns the line the table reports it with.
pub fn write_svg(path: &str, plot: &Plot) -> Result<String, CliError> {
    let svg = crate::plot::render(plot).map_err(|e| CliError::new(format!("SVG: {e}")))?;
    write(path, &svg, "SVG")?;
    Ok(format!("wrote SVG plot to {path}"))
}

/// Reads a text file of at most `max_bytes`; `what` names it in the error.
pub fn read(path: &str, max_bytes: u64, what: &str) -> Result<String, CliError> {
    use std::io::Read;
    let file = std::fs::File::open(path).map_err(|e| CliError::new(format!("cannot open {what} '{path}': {e}")))?;
    let mut bytes = Vec::new();
    file.take(max_bytes + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| CliError::new(format!("cannot read {what} '{path}': {e}")))?;
    if u64::try_from(bytes.len()).unwrap_or(u64::MAX) > max_bytes {
        return Err(CliError::new(format!("{what} '{path}' is larger than {max_bytes} bytes")));
    }
    String::from_utf8(bytes).map_err(|_| CliError::new(format!("{what} '{path}' is not valid UTF-8")))
}
