//! `phdose fit`: an effective influent composition fitted to a lab titration.

mod example;
mod input;
mod json;
mod report;
mod table;

use std::io::Read;

use super::conditions::ConditionArgs;
use super::files::{self, OutArgs, Output};
use super::{CliError, Mode, REFUSED_CODE, Reply, json as json_io, value};
use input::FitInput;

const AFTER_HELP: &str = "\
The data file is CSV (comma, semicolon or tab; `#` comments and blank lines allowed). With a
header line, the columns named titrant_ml and ph are read and any others ignored, so the CSV
that `phdose curve --csv` writes is read as it is; without one, each line is titrant_ml,ph.
The points must be in titrant order (non-decreasing volumes; a point out of order is refused
with its line, not sorted), each volume at most 10 times the sample volume and each pH 0-14.
The fit (Levenberg-Marquardt in phdose::titration::fit) always finds the net strong-ion charge;
--carbonate and --phosphate add those totals (the catalogue's systems: their constants, charges
and temperature functions are known), --buffers N adds N generic monoprotic buffers (total and
pKa, taken with no temperature dependence; use them for buffers the catalogue does not name).
--inert-ionic-strength-mol-per-l gives the ionic strength of the sample's salts that neither
buffer nor carry net strong charge (sodium or calcium chloride, sulfates ...), from its make-up
or estimated from its conductivity; without it the model's ionic strength is that of the fitted
composition alone, which with Davies activities shifts a salty sample's fit by a few per cent.

Starting guess: strong charge from where the data cross pH 7 (the titrant's strong charge times
the volume there, per litre of sample, with the sign that cancels it) or, when they do not
cross 7, from the first point as strong ions and water only; carbonate 1 mmol/L; phosphate
0.3 mmol/L; each buffer
0.5 mmol/L with its pKa spread evenly across the data's pH range (the middle for one buffer,
the thirds for two).

Prints each fitted value with its standard error: strong charge (meq/L; negative = net strong
acid), carbonate and phosphate (mmol/L), buffers (mmol/L and pKa), the residual RMS (pH), the iterations,
whether they converged, and a quality line. --svg (or --out DIR, as fit.svg) plots the lab
points against the fitted model.

Quality: a fit is refused, with exit code 1 and the reason (first line of the report, or
\"quality\": \"refused\" with \"refusal\" and \"reason\" in JSON), when
  ill_conditioned       the data do not determine a parameter (it is named); no values shown
  not_converged         the iterations stopped at their cap (200) while still improving
  pka_outside_data      a fitted pKa is not 0.3 pH inside the pH range the data cover: the
                        data must bracket it, or they show only the tail of that buffer
  residual_above_bound  the RMS residual is above 0.05 pH (a few times a lab meter's noise)
checked in that order. A refused fit's numbers are shown marked as such: they are not the
sample's. Bad input (unreadable or disordered data, impossible volumes) is exit code 2.
--example: invented lab titration of a fictional plating-shop influent with 0.05 mol/L NaOH
(host/examples-data/fit-example.csv; its header states the true composition).

JSON request (carbonate, phosphate, buffers, inert_ionic_strength_mol_per_l, temperature_c and
activity optional; defaults false, false, 0, 0, 25, \"davies\"):
  {\"sample_volume_ml\": 100, \"titrant\": {\"dissolved\": {\"NaOH\": 0.05}},
   \"points\": [[0, 2.61], [0.5, 2.68], ...], \"carbonate\": true, \"buffers\": 1,
   \"temperature_c\": 20, \"activity\": \"ideal\"}

JSON result: quality (\"accepted\" or \"refused\"), refusal (null or one of the keys above),
reason (null or the refusal in words with what to try), strong_charge_eq_per_l {value,
standard_error}, carbonate_mol_per_l and phosphate_mol_per_l (each {value, standard_error}, or
null when not fitted), buffers [{total_mol_per_l {value, standard_error}, pka {value,
standard_error}}], rms_ph, max_rms_ph (the bound), point_count, fit_iterations, converged,
data_ph_range [lowest, highest], allowed_pka_range [lowest, highest] (the data's range narrowed
by 0.3 pH at each end), start {strong_charge_eq_per_l, carbonate_mol_per_l,
phosphate_mol_per_l, buffer_pkas, basis}, sample_volume_ml, inert_ionic_strength_mol_per_l,
titrant, temperature_c, activity, files {svg}. An ill-conditioned refusal has no result: the
values, rms_ph, fit_iterations and converged are null and buffers is empty.

Examples:
  phdose fit --data lab.csv --titrant NaOH=0.05 --sample-ml 100 --carbonate --buffers 1 --svg fit.svg
  phdose curve NaHCO3=0.003 NaCl=0.002 --titrant HCl=0.02 --sample-ml 50 --max-titrant-ml 12 --csv c.csv
  phdose fit --data c.csv --titrant HCl=0.02 --sample-ml 50 --carbonate --inert-ionic-strength-mol-per-l 0.002
  phdose fit --json --svg fit.svg < request.json
  phdose fit --example --buffers 0 --out figures";

/// effective influent composition fitted to a lab titration (Levenberg-Marquardt)
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The lab titration: a CSV file with the columns titrant_ml and ph (others ignored)
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
    /// Fit a phosphate total too (the catalogue's phosphate: its pKa, charges and temperature
    /// functions are known, only its total is fitted)
    #[arg(long)]
    phosphate: bool,
    /// Ionic strength of the sample's inert salts (NaCl, CaCl2 ... that carry no net strong charge
    /// and do not buffer), mol/L, 0 to 0.5, e.g. from its make-up or its conductivity [default: 0]
    #[arg(long, value_name = "MOL_PER_L", value_parser = value::finite_number, allow_negative_numbers = true)]
    inert_ionic_strength_mol_per_l: Option<f64>,
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
    #[arg(long, conflicts_with_all = ["data", "titrant", "titrant_json", "sample_ml", "carbonate", "phosphate", "inert_ionic_strength_mol_per_l", "temperature_c", "activity"])]
    example: bool,
}

/// Runs `fit`: exit 0 with an accepted fit, [`REFUSED_CODE`] when the fit is refused for its
/// quality (the report or JSON document says why).
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<Reply, CliError> {
    let mode = Mode::of(args.json);
    let (request, title) = if args.example {
        (FitInput::example(args.buffers)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        let given = args.data.is_some() || args.titrant.is_some() || args.titrant_json.is_some();
        let unknowns =
            args.carbonate || args.phosphate || args.buffers.is_some() || args.inert_ionic_strength_mol_per_l.is_some();
        if given || args.sample_ml.is_some() || unknowns || args.conditions.given() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put sample_volume_ml, titrant, points, \
                 carbonate, phosphate, buffers and inert_ionic_strength_mol_per_l in the JSON object instead of the command line (only the output options go \
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
    let code = if report.refusal.is_some() { REFUSED_CODE } else { 0 };
    let stdout = match mode {
        Mode::Json => json::render(&report, written.path(0))?,
        Mode::Table => table::render(&report, title, &written.lines),
    };
    Ok(Reply { stdout, code })
}
