//! The annotated skid file of the built-in example: every key with a comment giving its unit
//! and range. One source of truth with the core's `config::example::plating_rinse()`: a test
//! parses this text and compares; README.md quotes it verbatim (another test).

/// The annotated TOML of the built-in skid (`pack --template`), from
/// `host/examples-data/plating-rinse-skid.toml`.
pub const TEMPLATE: &str = include_str!("../../../examples-data/plating-rinse-skid.toml");

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use phdose::config::example::plating_rinse;

    use super::*;
    use crate::cli::config::toml_file;

    #[test]
    fn template_parses_to_the_built_in_skid() {
        assert_eq!(toml_file::parse(TEMPLATE).unwrap(), plating_rinse());
    }

    #[test]
    fn every_key_has_a_comment() {
        for line in TEMPLATE.lines() {
            let code = line.split('#').next().unwrap_or_default();
            if code.contains('=') || code.trim_start().starts_with('[') {
                assert!(line.contains('#'), "no comment on: {line}");
            }
        }
    }
}
