//! The boot report of `check` and `pack`: a readable table and the JSON document, and the list
//! of every code for the help text and README.

use std::fmt::Write;

use phdose::config::boot::{BootReport, Code, Finding};
use serde::Serialize;

use crate::cli::json::Num;

const LABEL: usize = 20;

/// Every boot-check code, errors (2xx) then warnings (3xx), for `check --help` and README.
pub const CODES: [Code; 26] = Code::ALL;

/// The codes as text lines, "  201  configuration blob unreadable" (for `check --help`).
pub fn code_lines() -> String {
    let mut s = String::new();
    for code in CODES {
        let kind = if code.is_error() { "error" } else { "warning" };
        let _ = writeln!(s, "  {}  {kind:<8} {}", code.number(), code.message());
    }
    s
}

/// One finding in the JSON document.
#[derive(Serialize)]
pub struct FindingOut {
    /// The stable code.
    code: u16,
    /// The finding's `Display`: code, message, setting and numbers.
    message: String,
    /// The setting or item, `null` when none.
    name: Option<&'static str>,
    /// The offending value (`null` when not finite).
    value: Num,
    /// The limit or reference it is compared with.
    limit: Num,
}

impl From<&Finding> for FindingOut {
    fn from(f: &Finding) -> Self {
        Self {
            code: f.code.number(),
            message: f.to_string(),
            name: (!f.name.is_empty()).then_some(f.name),
            value: Num(f.value),
            limit: Num(f.limit),
        }
    }
}

/// The stable keys of the boot report, first in `check --json` and `pack --json`.
#[derive(Serialize)]
pub struct ReportOut {
    /// No error: the board would dose with this configuration.
    allowed: bool,
    /// Errors (dosing refused).
    errors: Vec<FindingOut>,
    /// Warnings (dosing allowed).
    warnings: Vec<FindingOut>,
    /// Findings that did not fit the report.
    dropped: u16,
}

impl From<&BootReport> for ReportOut {
    fn from(r: &BootReport) -> Self {
        Self {
            allowed: r.allowed(),
            errors: r.errors.iter().map(FindingOut::from).collect(),
            warnings: r.warnings.iter().map(FindingOut::from).collect(),
            dropped: r.dropped,
        }
    }
}

/// Where the settings came from, for the table's heading.
pub struct Source<'a> {
    /// "boot checks of skid.toml (TOML skid)" and the like.
    pub heading: &'a str,
    /// The skid's name, when the settings were read.
    pub skid: Option<&'a str>,
}

/// The readable report (heading, verdict, findings), without the caution.
pub fn table(source: &Source<'_>, report: &BootReport) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{}", source.heading);
    if let Some(name) = source.skid {
        let _ = writeln!(s, "{:<LABEL$}{name}", "skid");
    }
    let (e, w) = (report.errors.len(), report.warnings.len());
    let verdict = if report.allowed() { "dosing allowed" } else { "dosing REFUSED" };
    let _ = writeln!(s, "{:<LABEL$}{verdict} ({e} error{}, {w} warning{})", "verdict", plural(e), plural(w));
    for (title, list) in [("errors (dosing refused)", &report.errors), ("warnings (dosing allowed)", &report.warnings)]
    {
        if !list.is_empty() {
            let _ = writeln!(s);
            let _ = writeln!(s, "{title}");
            for f in list {
                let _ = writeln!(s, "  {f}");
            }
        }
    }
    if report.dropped > 0 {
        let _ = writeln!(s, "  ... and {} more finding(s) that did not fit the report", report.dropped);
    }
    s
}

fn plural(n: usize) -> &'static str {
    if n == 1 { "" } else { "s" }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    #[test]
    fn codes_are_numbered_without_gaps_and_unique() {
        let numbers: Vec<u16> = CODES.iter().map(|c| c.number()).collect();
        let errors: Vec<u16> = numbers.iter().copied().filter(|n| *n < 300).collect();
        let warnings: Vec<u16> = numbers.iter().copied().filter(|n| *n >= 300).collect();
        assert_eq!(errors, (201..201 + errors.len() as u16).collect::<Vec<_>>());
        assert_eq!(warnings, (301..301 + warnings.len() as u16).collect::<Vec<_>>());
        assert!(CODES.iter().all(|c| c.is_error() == (c.number() < 300)));
        assert!(code_lines().contains("  304  warning  "));
    }

    #[test]
    fn table_and_json_of_a_refusal() {
        let mut r = BootReport::default();
        r.push(Finding::setting("control.band_ph", 0.0));
        r.push(Finding::new(Code::SingleProbe, 1.0, 2.0));
        let text = table(&Source { heading: "boot checks", skid: Some("tank") }, &r);
        assert!(text.contains("dosing REFUSED (1 error, 1 warning)"), "{text}");
        assert!(text.contains("  202: setting outside its documented range (control.band_ph): 0"), "{text}");
        let doc = serde_json::to_value(ReportOut::from(&r)).unwrap();
        assert_eq!(doc["allowed"], false);
        assert_eq!(doc["errors"][0]["code"], 202);
        assert_eq!(doc["errors"][0]["name"], "control.band_ph");
        assert_eq!(doc["warnings"][0]["name"], serde_json::Value::Null);
        assert_eq!(doc["warnings"][0]["limit"], 2.0);
    }
}
