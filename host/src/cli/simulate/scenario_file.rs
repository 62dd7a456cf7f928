//! The scenario a simulation runs: a TOML file (the skid file plus the `plant`, `disturbances`
//! and `run` sections, which `pack` ignores) or the built-in scenario.

use phdose_sim::scenario::{self, Disturbances, PlantSettings, RunSettings, Scenario};
use phdose_sim::sweep::Uncertainties;

use crate::cli::CliError;
use crate::cli::config::MAX_FILE_BYTES;
use crate::cli::config::toml_file::{TomlError, parse_with_sections};
use crate::cli::files;

/// The built-in scenario as an annotated file (what `simulate --template` prints).
pub const TEMPLATE: &str = include_str!("../../../examples-data/plating-rinse-scenario.toml");

/// Where the scenario came from.
pub struct Loaded {
    /// The scenario.
    pub scenario: Scenario,
    /// Its declared uncertainties (the `[sweep]` section, or the defaults).
    pub uncertainties: Uncertainties,
    /// The file, or `None` for the built-in scenario.
    pub file: Option<String>,
    /// Where it came from, for the readable report ("scenario file x.toml", "built-in …").
    pub source: String,
}

/// Parses a scenario file's text: the scenario and its declared uncertainties.
pub fn parse_with_uncertainties(text: &str) -> Result<(Scenario, Uncertainties), TomlError> {
    let scenario = parse(text)?;
    let (_, sections) = parse_with_sections(text)?;
    let uncertainties: Uncertainties = sections.get("sweep")?.unwrap_or_default();
    Ok((scenario, uncertainties))
}

/// Parses a scenario file's text: the skid and the three simulator sections (`plant` and `run`
/// are required, `disturbances` may be omitted: none).
pub fn parse(text: &str) -> Result<Scenario, TomlError> {
    let (skid, sections) = parse_with_sections(text)?;
    let missing = |name: &str| TomlError {
        at: None,
        key: name.to_owned(),
        message: format!(
            "a scenario needs a [{name}] section (see `phdose simulate --template`); a skid file alone is \
             what `pack` reads"
        ),
    };
    let plant: PlantSettings = sections.get("plant")?.ok_or_else(|| missing("plant"))?;
    let run: RunSettings = sections.get("run")?.ok_or_else(|| missing("run"))?;
    let disturbances: Disturbances = sections.get("disturbances")?.unwrap_or_default();
    Ok(Scenario { skid, plant, disturbances, run })
}

impl BuiltIn {
    /// What the built-in scenario is, for the readable report.
    pub const fn description(self) -> &'static str {
        match self {
            Self::PlatingRinse => "built-in scenario (invented: the rinse-water tank of a fictional plating shop)",
            Self::HensonSeborg => "built-in benchmark (the neutralization tank of Henson & Seborg 1994)",
        }
    }
}

/// The built-in scenarios.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, clap::ValueEnum)]
pub enum BuiltIn {
    /// The rinse-water tank of a fictional plating shop (invented).
    #[default]
    PlatingRinse,
    /// The pH neutralization tank of Henson & Seborg (1994), a published benchmark.
    HensonSeborg,
}

/// Reads the scenario at `path`, or the built-in one.
pub fn load(path: Option<&str>) -> Result<Loaded, CliError> {
    load_or(path, BuiltIn::PlatingRinse)
}

/// Reads the scenario at `path`, or the built-in `builtin`.
pub fn load_or(path: Option<&str>, builtin: BuiltIn) -> Result<Loaded, CliError> {
    match path {
        None => {
            let scenario = match builtin {
                BuiltIn::PlatingRinse => scenario::plating_rinse(),
                BuiltIn::HensonSeborg => phdose_sim::benchmark::henson_seborg(),
            };
            Ok(Loaded {
                scenario,
                uncertainties: Uncertainties::default(),
                file: None,
                source: builtin.description().to_owned(),
            })
        }
        Some(path) => {
            let text = files::read(path, MAX_FILE_BYTES, "scenario file")?;
            let (scenario, uncertainties) =
                parse_with_uncertainties(&text).map_err(|e| CliError::new(format!("scenario file '{path}': {e}")))?;
            uncertainties.validate().map_err(|e| CliError::new(format!("scenario file '{path}': [sweep] {e}")))?;
            Ok(Loaded { scenario, uncertainties, file: Some(path.to_owned()), source: format!("scenario file {path}") })
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn the_template_is_the_built_in_scenario() {
        assert_eq!(parse(TEMPLATE).unwrap(), scenario::plating_rinse());
    }

    #[test]
    fn a_skid_file_alone_is_not_a_scenario() {
        let skid = include_str!("../../../examples-data/plating-rinse-skid.toml");
        let e = parse(skid).unwrap_err();
        assert_eq!(e.key, "plant", "{e}");
        assert!(e.message.contains("[plant]"), "{e}");
    }

    #[test]
    fn an_error_in_a_section_names_its_line_and_key() {
        let text = TEMPLATE.replace("\nprobe_lag_s = 15.0", "\nprobe_lag_z = 15.0");
        let line = text.lines().position(|l| l.starts_with("probe_lag_z")).unwrap() + 1;
        let e = parse(&text).unwrap_err();
        assert_eq!(e.at.map(|a| a.0), Some(line), "{e}");
        assert!(e.message.contains("probe_lag_z"), "{e}");
    }

    #[test]
    fn disturbances_may_be_omitted() {
        let start = TEMPLATE.find("\n[disturbances]").unwrap();
        let end = TEMPLATE.find("\n[run]").unwrap();
        let text = format!("{}{}", &TEMPLATE[..start], &TEMPLATE[end..]);
        let s = parse(&text).unwrap();
        assert_eq!(s.disturbances, Disturbances::default());
    }
}
