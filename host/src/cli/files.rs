//! Files a command reads and writes: the data file of `fit`, the skid file of `pack` and `check`,
//! and the output files. A command that writes files takes `--out DIR` ([`OutArgs`]): the folder
//! is created if missing, a file in it is never overwritten without `--force`, and every path
//! written is reported. An option that names one file (`--csv FILE`, `--svg FILE`) writes exactly
//! that file; `pack --out FILE` ([`write_new`]) also refuses to overwrite without `--force`.

use std::fs::OpenOptions;
use std::io::Write;
use std::path::{Path, PathBuf};

use super::CliError;

/// `--svg FILE`, `--out DIR` and `--force`: where a command's figure and files go.
#[derive(clap::Args, Clone, Debug, Default)]
pub struct OutArgs {
    /// Write the figure as SVG to FILE
    #[arg(long, value_name = "FILE", conflicts_with = "out")]
    pub svg: Option<String>,
    /// Write every output file into DIR (created if missing) under its default name
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Overwrite files that already exist in the --out folder
    #[arg(long, requires = "out")]
    pub force: bool,
}

/// One output file a command can write.
pub struct Output<'a> {
    /// What it is, for the report line ("CSV", "SVG plot").
    pub what: &'static str,
    /// Its name in the `--out` folder ("curve.csv").
    pub name: &'static str,
    /// The file its own option names, if given.
    pub path: Option<&'a str>,
    /// Its content, made only when the file is written.
    pub content: &'a dyn Fn() -> Result<String, CliError>,
}

/// What [`write_outputs`] wrote: the path of each output (`None`: not asked for) and one
/// report line per file.
#[derive(Debug)]
pub struct Written {
    /// Path of each output, in the order given.
    pub paths: Vec<Option<String>>,
    /// "wrote CSV to out/curve.csv", one per file written.
    pub lines: Vec<String>,
}

impl Written {
    /// The path the `k`-th output was written to, if it was.
    pub fn path(&self, k: usize) -> Option<&str> {
        self.paths.get(k).and_then(|p| p.as_deref())
    }
}

/// Writes `outputs`: all of them into the `--out` folder when one is given, else each to the
/// file its own option names (those without one are skipped).
pub fn write_outputs(out: &OutArgs, outputs: &[Output<'_>]) -> Result<Written, CliError> {
    let paths: Vec<Option<String>> = match &out.out {
        Some(dir) => {
            let contents =
                outputs.iter().map(|o| Ok((o.name, (o.content)()?))).collect::<Result<Vec<_>, CliError>>()?;
            write_into(dir, out.force, &contents)?.iter().map(|p| Some(p.display().to_string())).collect()
        }
        None => outputs
            .iter()
            .map(|o| o.path.map(|p| write(p, &(o.content)()?, o.what).map(|()| p.to_owned())).transpose())
            .collect::<Result<_, _>>()?,
    };
    let lines = outputs
        .iter()
        .zip(&paths)
        .filter_map(|(o, p)| p.as_ref().map(|p| format!("wrote {} to {p}", o.what)))
        .collect();
    Ok(Written { paths, lines })
}

/// Writes `files` (name, content) into `dir`, creating it (and its parents) if missing. Without
/// `force` nothing is written when any of the files exists already. Returns the paths written.
pub fn write_into(dir: &Path, force: bool, files: &[(&str, String)]) -> Result<Vec<PathBuf>, CliError> {
    let shown = dir.display();
    std::fs::create_dir_all(dir).map_err(|e| CliError::new(format!("cannot create folder '{shown}': {e}")))?;
    let paths: Vec<PathBuf> = files.iter().map(|(name, _)| dir.join(name)).collect();
    if !force {
        let existing: Vec<String> = paths.iter().filter(|p| p.exists()).map(|p| p.display().to_string()).collect();
        if !existing.is_empty() {
            return Err(CliError::new(format!(
                "will not overwrite {}: give --force, or another --out folder",
                existing.join(", ")
            )));
        }
    }
    for (path, (_, content)) in paths.iter().zip(files) {
        write_file(path, content.as_bytes(), force)
            .map_err(|e| CliError::new(format!("cannot write '{}': {e}", path.display())))?;
    }
    Ok(paths)
}

/// Writes `bytes` to `path`: replaces an existing file only with `force`; without it
/// `create_new` also refuses a file that appeared since any earlier check.
fn write_file(path: &Path, bytes: &[u8], force: bool) -> std::io::Result<()> {
    let mut options = OpenOptions::new();
    options.write(true);
    if force {
        options.create(true).truncate(true);
    } else {
        options.create_new(true);
    }
    options.open(path).and_then(|mut f| f.write_all(bytes))
}

/// Writes `bytes` to the one file `path` an option names (`pack --out FILE`): never over an
/// existing file without `force`; `what` ("blob") names the file in the error.
pub fn write_new(path: &Path, bytes: &[u8], force: bool, what: &str) -> Result<(), CliError> {
    let shown = path.display();
    if path.as_os_str().is_empty() {
        return Err(CliError::new(format!("{what} file name is empty")));
    }
    write_file(path, bytes, force).map_err(|e| {
        if e.kind() == std::io::ErrorKind::AlreadyExists {
            CliError::new(format!("will not overwrite {what} file '{shown}': give --force, or another file name"))
        } else {
            CliError::new(format!("cannot write {what} file '{shown}': {e}"))
        }
    })
}

/// A figure as SVG text.
pub fn svg(figure: &crate::plot::Figure) -> Result<String, CliError> {
    crate::plot::render(figure).map_err(|e| CliError::new(format!("SVG: {e}")))
}

/// Writes `content` to `path`; `what` ("CSV", "SVG plot") names the file in the error.
pub fn write(path: &str, content: &str, what: &str) -> Result<(), CliError> {
    if path.is_empty() {
        return Err(CliError::new(format!("{what} file name is empty")));
    }
    std::fs::write(path, content).map_err(|e| CliError::new(format!("cannot write {what} file '{path}': {e}")))
}

/// Reads a text file of at most `max_bytes`; `what` names it in the error.
pub fn read(path: &str, max_bytes: u64, what: &str) -> Result<String, CliError> {
    String::from_utf8(read_bytes(path, max_bytes, what)?)
        .map_err(|_| CliError::new(format!("{what} '{path}' is not valid UTF-8")))
}

/// Reads a file of at most `max_bytes` as bytes; `what` names it in the error.
pub fn read_bytes(path: &str, max_bytes: u64, what: &str) -> Result<Vec<u8>, CliError> {
    use std::io::Read;
    let file = std::fs::File::open(path).map_err(|e| CliError::new(format!("cannot open {what} '{path}': {e}")))?;
    let mut bytes = Vec::new();
    file.take(max_bytes + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| CliError::new(format!("cannot read {what} '{path}': {e}")))?;
    if u64::try_from(bytes.len()).unwrap_or(u64::MAX) > max_bytes {
        return Err(CliError::new(format!("{what} '{path}' is larger than {max_bytes} bytes")));
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("phdose-files-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        dir
    }

    fn files(a: &str, b: &str) -> Vec<(&'static str, String)> {
        vec![("a.csv", a.to_owned()), ("b.svg", b.to_owned())]
    }

    #[test]
    fn out_folder_is_created_and_paths_are_returned() {
        let dir = scratch("create").join("nested").join("figures");
        let paths = write_into(&dir, false, &files("1", "2")).unwrap();
        assert_eq!(paths, vec![dir.join("a.csv"), dir.join("b.svg")]);
        assert_eq!(std::fs::read_to_string(dir.join("b.svg")).unwrap(), "2");
    }

    #[test]
    fn existing_files_are_kept_without_force() {
        let dir = scratch("keep");
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("b.svg"), "old").unwrap();
        let e = write_into(&dir, false, &files("new", "new")).unwrap_err();
        assert!(e.message().contains("b.svg") && e.message().contains("--force"), "{e}");
        // Nothing was written: not even the file that did not exist.
        assert!(!dir.join("a.csv").exists());
        assert_eq!(std::fs::read_to_string(dir.join("b.svg")).unwrap(), "old");
        write_into(&dir, true, &files("new a", "new b")).unwrap();
        assert_eq!(std::fs::read_to_string(dir.join("b.svg")).unwrap(), "new b");
        assert_eq!(std::fs::read_to_string(dir.join("a.csv")).unwrap(), "new a");
    }

    #[test]
    fn one_file_is_kept_without_force() {
        let dir = scratch("one");
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("skid.bin");
        write_new(&path, b"first", false, "blob").unwrap();
        let e = write_new(&path, b"second", false, "blob").unwrap_err();
        assert!(e.message().contains("skid.bin") && e.message().contains("--force"), "{e}");
        assert_eq!(std::fs::read(&path).unwrap(), b"first");
        write_new(&path, b"second", true, "blob").unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"second");
        assert!(write_new(Path::new(""), b"x", true, "blob").unwrap_err().message().contains("empty"));
    }

    #[test]
    fn outputs_go_to_their_own_files_or_into_the_folder() {
        let dir = scratch("outputs");
        std::fs::create_dir_all(&dir).unwrap();
        let own = dir.join("mine.csv").display().to_string();
        let csv = || Ok("x,y\n".to_owned());
        let svg = || Err(CliError::new("not asked for, so never made"));
        let outputs = [
            Output { what: "CSV", name: "c.csv", path: Some(&own), content: &csv },
            Output { what: "SVG plot", name: "c.svg", path: None, content: &svg },
        ];
        let w = write_outputs(&OutArgs::default(), &outputs).unwrap();
        assert_eq!((w.path(0), w.path(1)), (Some(own.as_str()), None));
        assert_eq!(w.lines, vec![format!("wrote CSV to {own}")]);
        let out = OutArgs { out: Some(dir.join("all")), ..OutArgs::default() };
        assert!(write_outputs(&out, &outputs).unwrap_err().message().contains("never made"));
    }
}
