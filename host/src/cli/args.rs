//! A small hand-rolled argument parser: `--flag`, `--flag VALUE`, `--flag=VALUE`, positionals.

use std::ffi::OsString;

use super::CliError;

/// One option a command accepts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Spec {
    /// Its name, with the leading dashes ("--activity").
    pub name: &'static str,
    /// Whether it takes a value.
    pub takes_value: bool,
}

/// `--json`: JSON in and out.
pub const JSON: Spec = Spec { name: "--json", takes_value: false };
/// `--help` (also `-h`).
pub const HELP: Spec = Spec { name: "--help", takes_value: false };
/// `--temperature-c DEGREES`.
pub const TEMPERATURE: Spec = Spec { name: "--temperature-c", takes_value: true };
/// `--activity davies|ideal`.
pub const ACTIVITY: Spec = Spec { name: "--activity", takes_value: true };
/// `--example`: the built-in scenario.
pub const EXAMPLE: Spec = Spec { name: "--example", takes_value: false };

/// Parsed arguments of one command.
#[derive(Debug, Default)]
pub struct Parsed {
    flags: Vec<(&'static str, Option<String>)>,
    /// Arguments that are not options, in order.
    pub positionals: Vec<String>,
}

impl Parsed {
    /// Whether the option was given.
    pub fn has(&self, spec: Spec) -> bool {
        self.flags.iter().any(|(n, _)| *n == spec.name)
    }

    /// The value of an option that takes one, if given.
    pub fn value(&self, spec: Spec) -> Option<&str> {
        self.flags.iter().find(|(n, _)| *n == spec.name).and_then(|(_, v)| v.as_deref())
    }

    /// Names of the given options among `specs` (for "cannot be combined" messages).
    pub fn given<'a>(&self, specs: &'a [Spec]) -> Vec<&'a str> {
        specs.iter().filter(|s| self.has(**s)).map(|s| s.name).collect()
    }
}

/// The arguments as UTF-8 strings.
pub fn to_strings(argv: &[OsString]) -> Result<Vec<String>, CliError> {
    argv.iter()
        .map(|a| a.clone().into_string().map_err(|raw| CliError::new(format!("argument {raw:?} is not valid UTF-8"))))
        .collect()
}

fn is_option(arg: &str) -> bool {
    arg.starts_with("--") || arg == "-h"
}

/// Parses `args` against the options `specs`. Everything after `--` is positional; a lone
/// `-` or a negative number is positional too. Repeated options are refused.
pub fn parse(args: &[String], specs: &[Spec]) -> Result<Parsed, CliError> {
    let mut parsed = Parsed::default();
    let mut rest = args.iter();
    while let Some(arg) = rest.next() {
        if arg == "--" {
            parsed.positionals.extend(rest.by_ref().cloned());
            break;
        }
        if !is_option(arg) {
            parsed.positionals.push(arg.clone());
            continue;
        }
        let (name, inline) = match arg.split_once('=') {
            Some((n, v)) => (n, Some(v.to_owned())),
            None => (arg.as_str(), None),
        };
        let name = if name == "-h" { HELP.name } else { name };
        let Some(spec) = specs.iter().find(|s| s.name == name) else {
            let known: Vec<&str> = specs.iter().map(|s| s.name).collect();
            return Err(CliError::new(format!("unknown option '{name}'; this command accepts {}", known.join(", "))));
        };
        let value = match (spec.takes_value, inline) {
            (true, Some(v)) => Some(v),
            (true, None) => {
                Some(rest.next().cloned().ok_or_else(|| CliError::new(format!("option {} needs a value", spec.name)))?)
            }
            (false, Some(_)) => return Err(CliError::new(format!("option {} takes no value", spec.name))),
            (false, None) => None,
        };
        if parsed.has(*spec) {
            return Err(CliError::new(format!("option {} given more than once", spec.name)));
        }
        parsed.flags.push((spec.name, value));
    }
    Ok(parsed)
}

/// Parses a finite number; `what` names it in the error message.
pub fn number(what: &str, text: &str) -> Result<f64, CliError> {
    let v: f64 = text.trim().parse().map_err(|_| CliError::new(format!("{what}: '{text}' is not a number")))?;
    if v.is_finite() { Ok(v) } else { Err(CliError::new(format!("{what}: '{text}' is not a finite number"))) }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn strings(args: &[&str]) -> Vec<String> {
        args.iter().map(|s| (*s).to_owned()).collect()
    }

    #[test]
    fn options_values_and_positionals() {
        let p =
            parse(&strings(&["A=1", "--activity", "ideal", "--temperature-c=-0.0", "B=2"]), &[ACTIVITY, TEMPERATURE])
                .unwrap();
        assert_eq!(p.value(ACTIVITY), Some("ideal"));
        assert_eq!(p.value(TEMPERATURE), Some("-0.0"));
        assert_eq!(p.positionals, strings(&["A=1", "B=2"]));
        let p = parse(&strings(&["-h", "--", "--json"]), &[HELP, JSON]).unwrap();
        assert!(p.has(HELP) && !p.has(JSON));
        assert_eq!(p.positionals, strings(&["--json"]));
    }

    #[test]
    fn bad_options_are_refused() {
        assert!(parse(&strings(&["--nope"]), &[JSON]).is_err());
        assert!(parse(&strings(&["--activity"]), &[ACTIVITY]).is_err());
        assert!(parse(&strings(&["--json=1"]), &[JSON]).is_err());
        assert!(parse(&strings(&["--json", "--json"]), &[JSON]).is_err());
    }

    #[test]
    fn numbers_must_be_finite() {
        assert_eq!(number("x", " 2e-3 ").unwrap(), 2e-3);
        assert!(number("x", "NaN").is_err());
        assert!(number("x", "inf").is_err());
        assert!(number("x", "two").is_err());
    }
}
