//! `phdose curve`: a titration curve with its equivalence points, as a table, JSON, CSV or SVG.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::conditions::ConditionArgs;
use super::files::{self, OutArgs, Output};
use super::{CliError, Mode, json as json_io, value};
use input::CurveInput;

const AFTER_HELP: &str = "\
Prints titrant added (mL), pH and buffer capacity (mol/L per pH) at each point, then the
equivalence points found on the curve (slope maxima) and predicted from the model
(stoichiometry; the titrant's own weak acids or bases are not counted there), each with its pH.
The spacing is adaptive, so the steep parts get the points. The slope maxima are found with the
model's exact slope, refined between points, so they do not depend on --point-count; one counts when
it is at least twice as steep as the flattest stretch on each side (common practice, no source). The CSV has the columns
titrant_ml,ph,buffer_capacity (mol/L per pH); the SVG plots pH against mL with the
equivalence points marked and labelled with their pH. --out DIR writes both, as curve.csv and
curve.svg. --example: 100 mL of alkaline-cleaner rinse from a fictional plating shop
(1 mmol/L NaOH, 2 mmol/L Na2CO3, 20 °C) titrated with 0.02 mol/L HCl to 30 mL.

JSON request (temperature_c, activity and point_count optional):
  {\"temperature_c\": 25, \"activity\": \"ideal\", \"sample\": {\"volume_ml\": 100, \"dissolved\": {\"NaOH\": 0.001}},
   \"titrant\": {\"dissolved\": {\"HCl\": 0.02}}, \"max_titrant_ml\": 30, \"point_count\": 64}
  The titrant may instead be {\"substance\": ..., \"mass_percent\": ..., \"density_kg_per_l\": ...}.

JSON result: points [{titrant_ml, ph, buffer_capacity}], equivalence_points {curve: [{titrant_ml,
ph}], model: [{titrant_ml, ph, system, step}]}, sample_volume_ml, max_titrant_ml, point_count, titrant,
temperature_c, activity, files {csv, svg} (null when not written).

Examples:
  phdose curve NaOH=0.001 Na2CO3=0.002 --sample-ml 100 --titrant HCl=0.02 --max-titrant-ml 30
  phdose curve --json --csv c.csv --svg c.svg < request.json
  phdose curve --example --point-count 128 --out figures";

/// titration curve of a sample and its equivalence points (table, JSON, CSV, SVG plot)
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// What the sample carries, mol/L
    #[arg(value_name = "SUBSTANCE=MOL_PER_L", value_parser = value::substance_pair)]
    sample: Vec<(String, f64)>,
    /// Sample volume, mL
    #[arg(long, value_name = "ML", value_parser = value::finite_number, allow_negative_numbers = true)]
    sample_ml: Option<f64>,
    /// The titrant: NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT%
    #[arg(long, value_name = "TITRANT")]
    titrant: Option<String>,
    /// End of the titration, mL of titrant
    #[arg(long, value_name = "ML", value_parser = value::finite_number, allow_negative_numbers = true)]
    max_titrant_ml: Option<f64>,
    /// Number of curve points, 8 to 256 [default: 64] (`--points` is accepted too)
    #[arg(long, alias = "points", value_name = "N", value_parser = value::finite_number, allow_negative_numbers = true)]
    point_count: Option<f64>,
    #[command(flatten)]
    conditions: ConditionArgs,
    /// Write the curve as CSV to FILE
    #[arg(long, value_name = "FILE", conflicts_with = "out")]
    csv: Option<String>,
    #[command(flatten)]
    files: OutArgs,
    /// Read the request as JSON from stdin and print the result as JSON
    #[arg(long)]
    json: bool,
    /// Titrate the built-in invented sample (only --point-count and the output options go with it)
    #[arg(long, conflicts_with_all = ["sample", "sample_ml", "titrant", "max_titrant_ml", "temperature_c", "activity"])]
    example: bool,
}

/// Runs `curve`.
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mode = Mode::of(args.json);
    let (request, title) = if args.example {
        (CurveInput::example(args.point_count)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let given = [args.sample_ml, args.max_titrant_ml, args.point_count].iter().any(Option::is_some);
        if given || !args.sample.is_empty() || args.titrant.is_some() || args.conditions.given() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put sample, titrant, max_titrant_ml and \
                 point_count in the JSON object instead of the command line (only the output options go with --json)",
            ));
        }
        (CurveInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (CurveInput::from_args(&args)?, None)
    };
    let report = report::compute(request)?;
    let csv = || Ok(report::csv(&report));
    let svg = || files::svg(&table::plot(&report));
    let written = files::write_outputs(
        &args.files,
        &[
            Output { what: "CSV", name: "curve.csv", path: args.csv.as_deref(), content: &csv },
            Output { what: "SVG plot", name: "curve.svg", path: args.files.svg.as_deref(), content: &svg },
        ],
    )?;
    match mode {
        Mode::Json => json::render(&report, written.path(0), written.path(1)),
        Mode::Table => Ok(table::render(&report, title, &written.lines)),
    }
}
