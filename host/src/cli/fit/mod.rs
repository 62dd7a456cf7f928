//! `phdose fit`: an effective influent composition fitted to a lab titration.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::conditions::ConditionArgs;
use super::files::{self, OutArgs, Output};
use super::{CliError, Mode, json as json_io, value};
use input::FitInput;

const AFTER_HELP: &str = "\
The data file is CSV: titrant_ml,ph per line (comma, semicolon or tab), an optional header
naming those two columns, `#` comments and blank lines allowed. Points are sorted by volume.
The fit (Levenberg-Marquardt in phdose::titration::fit) always finds the net strong-ion charge;
--carbonate adds a carbonate total, --buffers N adds N generic monoprotic buffers (total and
pKa, taken with no temperature dependence).

Starting guess: strong charge from where the data cross pH 7 (the titrant's strong charge times
the volume there, per litre of sample, with the sign that cancels it) or, when they do not
cross 7, from the first point as strong ions and water only; carbonate 1 mmol/L; each buffer
0.5 mmol/L with its pKa spread evenly across the data's pH range (the middle for one buffer,
the thirds for two).

Prints each fitted value with its standard error: strong charge (meq/L; negative = net strong
acid), carbonate (mmol/L), buffers (mmol/L and pKa), the residual RMS (pH) and the iterations.
--svg (or --out DIR, as fit.svg) plots the lab points against the fitted model. A fit the data
cannot determine is refused with exit code 2 and names the parameter (fit fewer parameters, or
titrate over a wider pH range). --example: invented lab titration of a fictional plating-shop
influent with 0.05 mol/L NaOH (host/examples-data/fit-example.csv; its header states the true
composition).

JSON request (carbonate, buffers, temperature_c and activity optional; defaults false, 0, 25,
\"davies\"):
  {\"sample_volume_l\": 0.1, \"titrant\": {\"dissolved\": {\"NaOH\": 0.05}},
   \"points\": [[0, 2.61], [0.5, 2.68], ...], \"carbonate\": true, \"buffers\": 1,
   \"temperature_c\": 20, \"activity\": \"ideal\"}

JSON result: strong_charge_meq_per_l {value, standard_error}, carbonate_mmol_per_l (or null),
buffers [{total_mmol_per_l {value, standard_error}, pka {value, standard_error}}], rms_ph,
points, iterations, start {strong_charge_meq_per_l, carbonate_mmol_per_l, buffer_pkas, basis},
sample_volume_l, titrant, temperature_c, activity, svg_file.

Examples:
  phdose fit --data lab.csv --titrant NaOH=0.05 --sample-ml 100 --carbonate --buffers 1 --svg fit.svg
  phdose fit --json --svg fit.svg < request.json
  phdose fit --example --buffers 0 --out figures";

/// effective influent composition fitted to a lab titration (Levenberg-Marquardt)
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The lab titration: a CSV file of titrant_ml,ph
    #[arg(long, value_name = "FILE")]
    data: Option<String>,
    /// The titrant: NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT%
    #[arg(long, value_name = "TITRANT", conflicts_with = "titrant_json")]
    titrant: Option<String>,
    /// The titrant as JSON, e.g. '{"substance": "NaOH", "mass_percent": 4, "density_kg_per_l": 1.04}'
    #[arg(long, value_name = "JSON")]
    titrant_json: Option<String>,
    /// Sample volume titrated, mL
    #[arg(long, value_name = "ML", value_parser = value::finite_number, allow_negative_numbers = true)]
    sample_ml: Option<f64>,
    /// Fit a carbonate total too
    #[arg(long)]
    carbonate: bool,
    /// Generic monoprotic buffers to fit: 0, 1 or 2 [default: 0]
    #[arg(long, value_name = "N", value_parser = value::finite_number, allow_negative_numbers = true)]
    buffers: Option<f64>,
    #[command(flatten)]
    conditions: ConditionArgs,
    #[command(flatten)]
    files: OutArgs,
    /// Read the request as JSON from stdin and print the result as JSON
    #[arg(long)]
    json: bool,
    /// Fit the built-in invented lab titration (only --buffers and the output options go with it)
    #[arg(long, conflicts_with_all = ["data", "titrant", "titrant_json", "sample_ml", "carbonate", "temperature_c", "activity"])]
    example: bool,
}

/// Runs `fit`.
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mode = Mode::of(args.json);
    let (request, title) = if args.example {
        (FitInput::example(args.buffers)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let given = args.data.is_some() || args.titrant.is_some() || args.titrant_json.is_some();
        if given || args.sample_ml.is_some() || args.carbonate || args.buffers.is_some() || args.conditions.given() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put sample_volume_l, titrant, points, \
                 carbonate and buffers in the JSON object instead of the command line (only the output options go \
                 with --json)",
            ));
        }
        (FitInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (FitInput::from_args(&args)?, None)
    };
    let report = report::compute(request)?;
    let svg = || files::svg(&table::plot(&report));
    let outputs = [Output { what: "SVG plot", name: "fit.svg", path: args.files.svg.as_deref(), content: &svg }];
    let written = files::write_outputs(&args.files, &outputs)?;
    match mode {
        Mode::Json => json::render(&report, written.path(0)),
        Mode::Table => Ok(table::render(&report, title, &written.lines)),
    }
}
