//! Help texts.

use super::CliError;

/// `phdose help`.
pub const MAIN: &str = "\
phdose — acid-base chemistry for pH dosing (host tools)

usage:
  phdose speciate SUBSTANCE=MOL_PER_L ... [--temperature-c C] [--activity davies|ideal]
  phdose speciate --json < request.json
  phdose speciate --example [--json]
  phdose salt SALT MOL_PER_L [--temperature-c C] [--activity davies|ideal]
  phdose salt --json < request.json
  phdose substances [--json]
  phdose help [COMMAND]
  phdose --version

commands:
  speciate     pH, ionic strength, buffer capacity and every species of a mix
  salt         what a salt's ions do in water and the pH that results
  substances   the substance table (formulas and names the other commands accept)
  help         this text, or a command's details

With --json, the request is one JSON object on stdin and the result one JSON object on stdout.
Any error exits with code 2: {\"error\": \"...\"} on stdout with --json, `error: ...` on stderr
otherwise. Defaults: 25 °C, Davies activities. Amounts are mol/L.

Model results do not replace pH measurement or hardwired interlocks: read SAFETY.md.
";

/// `phdose help speciate`.
pub const SPECIATE: &str = "\
phdose speciate — solve the charge balance of a mix and list every species

usage:
  phdose speciate NaHCO3=0.002 H2SO4=0.0006 [--temperature-c 18] [--activity ideal]
  phdose speciate --json < request.json
  phdose speciate --example [--temperature-c C] [--activity davies|ideal] [--json]

Substances are formulas or names from `phdose substances`; amounts are mol/L. A substance
may appear once. --example runs a built-in invented scenario (rinse water at a fictional
plating shop, 18 °C).

JSON request (temperature_c and activity optional; defaults 25 and \"davies\"):
  {\"temperature_c\": 25.0, \"activity\": \"davies\", \"dissolved\": {\"NaHCO3\": 0.002, \"HCl\": 0.001}}

JSON result keys: ph, ionic_strength (mol/L), buffer_capacity (mol/L per pH unit),
iterations, species (formula -> mol/L, with H+ and OH-), totals (system -> mol/L),
temperature_c, activity, pkw, neutral_ph, strong_charge_eq_per_l, strong_ions,
residual_eq_per_l, davies_factor, activity_coefficients {z1, z2, z3}, dissolved, systems.
pH is on the activity scale with Davies, the concentration scale with ideal activities.
";

/// `phdose help salt`.
pub const SALT: &str = "\
phdose salt — salt hydrolysis: class, parents, ion actions and the exact pH

usage:
  phdose salt Na2HPO4 0.05 [--temperature-c 25] [--activity davies|ideal]
  phdose salt --json < request.json

JSON request (temperature_c and activity optional; defaults 25 and \"davies\"):
  {\"salt\": \"Na2HPO4\", \"concentration_mol_per_l\": 0.05, \"temperature_c\": 25, \"activity\": \"davies\"}

JSON result keys: salt, name, given_as, concentration_mol_per_l, temperature_c, activity,
class (acidic|basic|neutral), ph, neutral_ph, parent_acid, parent_acid_strength,
parent_base, parent_base_strength, cation and anion {formula, count, action, ka, kb, pka,
pkb; null when absent}, approximation (null or {kind, ph, error_ph, rule_ratio, valid}),
ionic_strength, buffer_capacity, iterations.
The approximation is the textbook square-root formula (activities ignored) with the 5 % rule.
";

/// `phdose help substances`.
pub const SUBSTANCES: &str = "\
phdose substances — list the built-in substances

usage:
  phdose substances [--json]

Shows each formula, its name, molar mass and what one formula unit adds to the water
(strong ions and acid-base system totals). --json gives the same as a JSON array.
";

/// Runs `help [COMMAND]`.
pub fn run(argv: &[String]) -> Result<String, CliError> {
    let topic = argv.iter().find(|a| !a.starts_with('-')).map(String::as_str);
    match topic {
        None => Ok(MAIN.to_owned()),
        Some("speciate") => Ok(SPECIATE.to_owned()),
        Some("salt") => Ok(SALT.to_owned()),
        Some("substances") => Ok(SUBSTANCES.to_owned()),
        Some(other) => {
            Err(CliError::new(format!("no help for '{other}'; the commands are speciate, salt, substances and help")))
        }
    }
}
