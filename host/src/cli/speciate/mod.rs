//! `phdose speciate`: pH, ionic strength, buffer capacity and every species of a mix.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::conditions::ConditionArgs;
use super::{CliError, Mode, json as json_io, value};
use input::SpeciateInput;

const AFTER_HELP: &str = "\
Substances are formulas or names from `phdose substances`; amounts are mol/L. A substance
may appear once. pH is on the activity scale with Davies, the concentration scale with ideal
activities.

JSON request (temperature_c and activity optional; defaults 25 and \"davies\"):
  {\"temperature_c\": 25.0, \"activity\": \"davies\", \"dissolved\": {\"NaHCO3\": 0.002, \"HCl\": 0.001}}

JSON result keys: ph, ionic_strength (mol/L), buffer_capacity (mol/L per pH unit),
iterations, species (formula -> mol/L, with H+ and OH-), totals_mol_per_l (system -> mol/L),
temperature_c, activity, pkw, neutral_ph, strong_charge_eq_per_l, strong_ions_mol_per_l,
residual_eq_per_l, davies_factor, activity_coefficients {z1, z2, z3}, dissolved (as given ->
mol/L, the request's shape), substances [{given_as, formula, name, mol_per_l, mg_per_l}], systems.

Examples:
  phdose speciate NaHCO3=0.002 H2SO4=0.0006 --temperature-c 18 --activity ideal
  phdose speciate --json < request.json
  phdose speciate --example --temperature-c 30 --json";

/// pH, ionic strength, buffer capacity and every species of a mix
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// What is dissolved, mol/L (formulas or names from `phdose substances`)
    #[arg(value_name = "SUBSTANCE=MOL_PER_L", value_parser = value::substance_pair)]
    dissolved: Vec<(String, f64)>,
    #[command(flatten)]
    conditions: ConditionArgs,
    /// Read the request as JSON from stdin and print the result as JSON
    #[arg(long)]
    json: bool,
    /// Solve the built-in invented scenario: rinse water at a fictional plating shop, 18 °C
    #[arg(long, conflicts_with = "dissolved")]
    example: bool,
}

/// Runs `speciate`.
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mode = Mode::of(args.json);
    let (request, title) = if args.example {
        (example::input(args.conditions)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        if !args.dissolved.is_empty() || args.conditions.given() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put substances, temperature_c and \
                 activity in the JSON object instead of the command line",
            ));
        }
        (SpeciateInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (SpeciateInput::from_args(&args.dissolved, args.conditions)?, None)
    };
    let report = report::compute(request)?;
    match mode {
        Mode::Json => json::render(&report),
        Mode::Table => Ok(table::render(&report, title)),
    }
}
