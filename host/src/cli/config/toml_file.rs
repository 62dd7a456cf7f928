//! The TOML skid file: parsed into a [`Skid`] (its serde field names are the keys, unknown keys
//! are errors), except the simulator's scenario sections, which are ignored. An error names the
//! line, the column and the key.

use std::fmt;

use phdose::config::Skid;
use serde::Deserialize;
use toml::Spanned;
use toml::de::{DeTable, DeValue, Deserializer, ValueDeserializer};

use crate::cli::CliError;

/// Top-level sections of a simulator scenario file that `pack` and `check` ignore: exactly
/// these, so a mistyped key anywhere else is still an error.
pub const SCENARIO_SECTIONS: [&str; 4] = ["plant", "disturbances", "run", "sweep"];

/// Why a TOML skid did not parse.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TomlError {
    /// 1-based line and column of the offending text, when the parser knows it.
    pub at: Option<(usize, usize)>,
    /// The key path at that place ("control.band_ph", "probes.probes[1].offset_mv"), or "".
    pub key: String,
    /// The parser's message.
    pub message: String,
}

impl TomlError {
    /// The error as the CLI reports it for the file `path`.
    pub fn in_file(&self, path: &str) -> CliError {
        CliError::new(format!("skid file '{path}': {self}"))
    }
}

impl fmt::Display for TomlError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some((line, column)) = self.at {
            write!(f, "line {line}, column {column}: ")?;
        }
        if !self.key.is_empty() {
            write!(f, "key {}: ", self.key)?;
        }
        f.write_str(&self.message)
    }
}

/// Parses a TOML skid.
pub fn parse(text: &str) -> Result<Skid, TomlError> {
    let (skid, _) = parse_with_sections(text)?;
    Ok(skid)
}

/// The scenario sections of a file, as the parser found them (absent ones are `None`).
pub struct Sections<'i> {
    text: &'i str,
    found: Vec<(&'static str, Spanned<DeValue<'i>>)>,
}

impl Sections<'_> {
    /// Deserializes the section `name`; `None` when the file has no such section. An error
    /// names the line and the key, like the skid's.
    pub fn get<T: serde::de::DeserializeOwned>(&self, name: &str) -> Result<Option<T>, TomlError> {
        let Some((_, value)) = self.found.iter().find(|(n, _)| *n == name) else { return Ok(None) };
        T::deserialize(ValueDeserializer::from(value.clone())).map(Some).map_err(|e| locate(self.text, &e))
    }
}

/// Parses a TOML skid and keeps the scenario sections ([`SCENARIO_SECTIONS`]) for the caller.
pub fn parse_with_sections(text: &str) -> Result<(Skid, Sections<'_>), TomlError> {
    let error = |e: toml::de::Error| locate(text, &e);
    let root = DeTable::parse(text).map_err(error)?;
    let span = root.span();
    let mut table = root.into_inner();
    let mut found = Vec::new();
    for section in SCENARIO_SECTIONS {
        if let Some(value) = table.remove(section) {
            found.push((section, value));
        }
    }
    let skid = Skid::deserialize(Deserializer::from(Spanned::new(span, table))).map_err(error)?;
    Ok((skid, Sections { text, found }))
}

/// Line, column and key path of a parser error in `text`.
fn locate(text: &str, e: &toml::de::Error) -> TomlError {
    let message = e.message().trim_end().to_owned();
    let Some(span) = e.span() else {
        return TomlError { at: None, key: String::new(), message };
    };
    let before = text.get(..span.start).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    let mut path = Vec::new();
    let key = match DeTable::parse(text) {
        Ok(root) => {
            table_path(root.get_ref(), span.start, &mut path);
            path.join(".")
        }
        Err(_) => line_key(text, line),
    };
    TomlError { at: Some((line, column)), key, message }
}

/// The key of a document that does not parse (a syntax error, a duplicate key), read from the
/// lines: the last table header above `line` and the bare key before `=` on it; "" when the
/// line holds no such key.
fn line_key(text: &str, line: usize) -> String {
    let lines: Vec<&str> = text.lines().take(line).collect();
    let Some(here) = lines.last() else { return String::new() };
    let bare = |k: &str| !k.is_empty() && k.chars().all(|c| c.is_ascii_alphanumeric() || "_-.".contains(c));
    let key = here.split_once('=').map(|(k, _)| k.trim()).filter(|k| bare(k));
    let Some(key) = key else { return String::new() };
    let header = lines
        .iter()
        .rev()
        .skip(1)
        .map(|l| l.split('#').next().unwrap_or_default().trim())
        .find(|l| l.starts_with('['))
        .map(|l| l.trim_matches(|c| c == '[' || c == ']').trim())
        .filter(|h| bare(h));
    match header {
        Some(h) => format!("{h}.{key}"),
        None => key.to_owned(),
    }
}

/// Appends to `path` the keys leading to the innermost key or value of `table` that holds the
/// byte offset `at`; `false` when none does. The recursion is as deep as the document.
fn table_path(table: &DeTable<'_>, at: usize, path: &mut Vec<String>) -> bool {
    for (key, value) in table {
        if key.span().contains(&at) || value.span().contains(&at) {
            path.push(key.get_ref().to_string());
            nested_path(value.get_ref(), at, path);
            return true;
        }
    }
    // Standard tables (`[control]`) and arrays of tables span only their header: look inside.
    for (key, value) in table {
        let depth = path.len();
        path.push(key.get_ref().to_string());
        if nested_path(value.get_ref(), at, path) {
            return true;
        }
        path.truncate(depth);
    }
    false
}

/// Extends `path` into a table or array `value` towards the offset `at`; `false` when no part
/// of it holds `at`. Array items are numbered from 1 ("probes.probes[2]").
fn nested_path(value: &DeValue<'_>, at: usize, path: &mut Vec<String>) -> bool {
    match value {
        DeValue::Table(t) => table_path(t, at, path),
        DeValue::Array(items) => {
            for (k, item) in items.iter().enumerate() {
                let Some(last) = path.last_mut() else { return false };
                let len = last.len();
                last.push_str(&format!("[{}]", k + 1));
                let holds = item.span().contains(&at);
                if nested_path(item.get_ref(), at, path) || holds {
                    return true;
                }
                if let Some(last) = path.last_mut() {
                    last.truncate(len);
                }
            }
            false
        }
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    const GOOD: &str = include_str!("../../../examples-data/plating-rinse-skid.toml");

    fn error(text: &str) -> TomlError {
        parse(text).unwrap_err()
    }

    #[test]
    fn unknown_key_names_line_and_key() {
        let text = GOOD.replace("\nband_ph = 0.3", "\nbnad_ph = 0.3");
        let line = text.lines().position(|l| l.starts_with("bnad_ph")).unwrap() + 1;
        let e = error(&text);
        assert_eq!(e.at, Some((line, 1)), "{e}");
        assert_eq!(e.key, "control.bnad_ph", "{e}");
        assert!(e.message.contains("unknown field `bnad_ph`"), "{e}");
    }

    #[test]
    fn wrong_type_inside_an_array_of_tables() {
        let text = GOOD.replace("offset_mv = -6.8", "offset_mv = \"low\"");
        let e = error(&text);
        let line = text.lines().position(|l| l.starts_with("offset_mv = \"low\"")).unwrap() + 1;
        assert_eq!(e.at.map(|a| a.0), Some(line), "{e}");
        assert_eq!(e.key, "probes.probes[2].offset_mv", "{e}");
    }

    #[test]
    fn missing_key_names_its_table() {
        let text = GOOD.replace("\ntick_s = 5.0", "\n");
        let e = error(&text);
        assert!(e.message.contains("missing field `tick_s`"), "{e}");
        assert!(e.key.starts_with("control"), "{e}");
    }

    #[test]
    fn syntax_error_has_a_line() {
        let e = error("name = \"x\"\n[influent\n");
        assert_eq!(e.at.map(|a| a.0), Some(2), "{e}");
    }

    #[test]
    fn duplicate_key_is_named_from_the_lines() {
        let text = GOOD.replace("\nHCl = 0.0006", "\nHCl = 0.0006\nHCl = 0.0007");
        let line = text.lines().position(|l| l.starts_with("HCl = 0.0007")).unwrap() + 1;
        let e = error(&text);
        assert_eq!((e.at.map(|a| a.0), e.key.as_str()), (Some(line), "influent.dissolved.HCl"), "{e}");
        assert_eq!(line_key("[a]\nx = 1 # c\n", 2), "a.x");
        assert_eq!(line_key("x = [\n", 1), "x");
        assert_eq!(line_key("\"quoted key\" = 1\n", 1), "");
    }

    #[test]
    fn scenario_sections_and_only_they_are_ignored() {
        let scenario = format!("{GOOD}\n[plant]\nvolume_l = 250.0\n[disturbances]\nx = 1\n[run]\nhours = 2\n");
        assert_eq!(parse(&scenario).unwrap(), parse(GOOD).unwrap());
        let e = error(&format!("{GOOD}\n[plants]\nvolume_l = 250.0\n"));
        assert!(e.message.contains("unknown field `plants`"), "{e}");
        assert_eq!(e.key, "plants", "{e}");
    }
}
