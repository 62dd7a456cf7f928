//! `phdose plan`: feed-forward reagent flow for a setpoint, with the process gain, the pump and
//! steepness checks as readable verdicts, and stage advice.
//!
//! Exit codes: 0 whenever a plan was worked out, including an unreachable setpoint or failed
//! checks (they are results, reported in `reachable` and `verdicts`); 2 for input and solver
//! errors.

mod example;
mod input;
mod json;
mod report;
mod table;
mod worst;

use std::io::Read;

use super::conditions::ConditionArgs;
use super::{CliError, Mode, json as json_io, value};
use input::PlanInput;

const AFTER_HELP: &str = "\
The influent (SUBSTANCE=MOL_PER_L) flows at --flow-l-per-h into a mixing point where the
reagent is dosed. --reagent takes NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT% (one
substance as bought; the density comes from --reagent-density or, for NaOH 25/50 %, HCl 32/36 %
and H2SO4 96/98 %, from the built-in grade table at 20 °C). The reagent is taken at the influent's
temperature; --reagent-temperature-c gives its tank's temperature for the crystallisation check
(default: the influent's).

Hazard checks (error level; SAFETY.md lists them with their sources): acid dosed to a setpoint
below the pH where chlorine (Cl2, from hypochlorite) or hydrogen sulfide (H2S, from sulfide) is
released: the gas-forming species above 1 % of its total, computed from the speciation; a reagent
grade stored below its crystallisation temperature (table with sources).

Worst case (always shown; a model estimate: the hardwired interlocks are still required, see
SAFETY.md): the pH the tank heads to with the pump stuck at its maximum (influent and reagent at
--pump-max-l-per-h, mixed) and stuck at zero (the influent's own pH). With --tank-volume-l and
the hard limits --low-limit-ph / --high-limit-ph (the skid file's control.tank_volume_l,
control.low_limit_ph, control.high_limit_ph; the setpoint must lie between the limits), the time
from the setpoint state to each limit: an ideal stirred tank on the reaction invariants,
x(t) = x_end + (x_0 - x_end)·exp(-t/τ), τ = V/(Q_influent + Q_reagent), the pH solved along
that path (t = τ, 2τ ... 64τ, then at most 48 halvings: at most 57 pH solves per stuck case);
\"never\" when the end pH does not lie beyond the limit. Dose corners: the reagent flow for the
setpoint at the lowest, design and highest influent flow (--min-flow-l-per-h, --max-flow-l-per-h;
default 50 % and 150 % of --flow-l-per-h, a round range of our own, not a standard) times every
influent total x0.75, x1 and x1.25, flagged >max (beyond the pump) or <min (below its minimum or
one step). Reagent use: the planned flow x 24 h in L/day, and in kg/day with the grade's density
(a mol/L reagent has no density: its dissolved substances' mass, mol/L x molar mass, only).

--example: the rinse-water neutralization skid of a fictional plating shop (18 °C, 1200 L/h,
600-1800 L/h, 25 % caustic, pump 10 L/h with 0.01 L/h steps, band 0.3 pH, 250 L tank, hard
limits pH 1 and 10: the built-in skid file's values); any option, or --no-pump, changes it.

JSON request (temperature_c, activity, pump, band_ph, tank_volume_l, low_limit_ph,
high_limit_ph, influent min_flow_l_per_h and max_flow_l_per_h optional):
  {\"temperature_c\": 25, \"activity\": \"davies\",
   \"influent\": {\"flow_l_per_h\": 1200, \"dissolved\": {\"NaHCO3\": 0.002, \"HCl\": 0.001}},
   \"reagent\": {\"dissolved\": {\"NaOH\": 6.25}},
   \"setpoint_ph\": 7.0, \"pump\": {\"max_l_per_h\": 10, \"step_l_per_h\": 0.01}, \"band_ph\": 0.3}
  The pump may carry \"min_l_per_h\" (its lowest steady flow, default 0); the influent
  \"min_flow_l_per_h\" and \"max_flow_l_per_h\"; the request \"tank_volume_l\": 250,
  \"low_limit_ph\": 1, \"high_limit_ph\": 10.
  The reagent may instead be {\"substance\": \"NaOH\", \"mass_percent\": 25, \"density_kg_per_l\": 1.274}
  (density optional for the grades above).

JSON result (stable keys first):
  reachable (bool), reagent_flow_l_per_h (L/h, null when unreachable), mixture_buffer_capacity
  (mol/L per pH, at the setpoint), gain_ph_per_l_per_h (pH per L/h), verdicts (readable strings:
  \"ok\", \"no dose needed: ...\", \"unreachable: ...\", \"beyond pump capacity: ...\",
  \"below turndown: ...\", \"too steep: ...\", \"HAZARD ...\").
  Also: all_clear, setpoint_ph, influent_ph, influent_flow_l_per_h, influent_dissolved (formula ->
  mol/L), gain_ph_per_step (pH change of one pump step, a real solve), reagent_mol_per_l
  (one-substance reagents), reagent, mixture_ionic_strength, activity_rounds (ionic-strength rounds of the dose
  computation; not solver iterations), checks [{kind:
  beyond_pump|below_turndown|too_steep|resolution_limited|gas_release|reagent_crystallises, ...}],
  unreachable ({kind: wrong_direction|beyond_reagent, limit_ph} or null), in_band ({influent_ph,
  low_ph, high_ph, reagent_reaches_setpoint} or null), stage_advice (with stage_checks: each stage
  planned with the same reagent, pump and band), pump, band_ph, temperature_c, activity, notes,
  caution, hazard (bool), reagent_temperature_c.
  gas_release: gas (\"Cl2\"|\"H2S\"), gas_name, release_below_ph, gas_fraction (at the setpoint),
  basis; reagent_crystallises: crystallises_below_c, reagent_temperature_c, source.
  worst_case: stuck_max_ph (null without a pump), stuck_zero_ph, tank_volume_l, low_limit_ph,
  high_limit_ph, stuck_max and stuck_zero ({reagent_flow_l_per_h, end_ph, start_ph,
  time_constant_s, crosses_low_limit, crosses_high_limit (null without that limit),
  time_to_low_limit_s, time_to_high_limit_s (null for never, or without the tank volume),
  solves}), min_flow_l_per_h, max_flow_l_per_h, flow_range_given, dose_corners
  [{influent_flow_l_per_h, strength_factor, reagent_flow_l_per_h, flag:
  ok|no_dose|beyond_pump|below_turndown|unreachable, reason}], reagent_per_day_l,
  reagent_per_day_kg (null for a mol/L reagent), substances_per_day_kg, notes, caution.

Exit codes: 0 when a plan was worked out, whatever the verdicts (check `reachable` and
`all_clear`); 2 for input and solver errors.

stage_advice is common practice (a rule of thumb from the influent pH and the setpoint), not a
computed result. The plan is a model estimate: the flow switch, independent pH cut-outs and a
manual reset must exist in hardware (SAFETY.md).

Examples:
  phdose plan H2SO4=0.0012 NaHCO3=0.001 --flow-l-per-h 1200 --reagent NaOH=25% --setpoint-ph 7 \\
              --pump-max-l-per-h 10 --pump-step-l-per-h 0.01 --band-ph 0.3
  phdose plan --json < request.json
  phdose plan --example --setpoint-ph 8.5 --no-pump
  phdose plan --example --tank-volume-l 1000 --high-limit-ph 11";

/// feed-forward reagent flow for a setpoint, with process gain, pump and steepness checks
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// What the influent carries, mol/L
    #[arg(value_name = "SUBSTANCE=MOL_PER_L", value_parser = value::substance_pair)]
    pub influent: Vec<(String, f64)>,
    /// Influent flow, L/h
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub flow_l_per_h: Option<f64>,
    /// The reagent: NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT% (e.g. NaOH=25%)
    #[arg(long, value_name = "REAGENT")]
    pub reagent: Option<String>,
    /// Density of a mass-percent reagent, kg/L [default: from the grade table]
    #[arg(long, value_name = "KG_PER_L", value_parser = value::finite_number, requires = "reagent")]
    pub reagent_density: Option<f64>,
    /// Target pH
    #[arg(long, value_name = "PH", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub setpoint_ph: Option<f64>,
    /// Metering pump's maximum flow, L/h (give the step too)
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub pump_max_l_per_h: Option<f64>,
    /// Metering pump's smallest step, L/h (give the maximum too)
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub pump_step_l_per_h: Option<f64>,
    /// Metering pump's lowest steady flow, L/h [default: 0; a planned flow below it, or below
    /// one step, is a turndown verdict]
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub pump_min_l_per_h: Option<f64>,
    /// Control band (full width), pH
    #[arg(long, value_name = "PH", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub band_ph: Option<f64>,
    /// Temperature of the reagent's tank and lines, °C (-60 to 100), for the crystallisation
    /// check [default: the influent's]
    #[arg(long, value_name = "C", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub reagent_temperature_c: Option<f64>,
    /// Tank liquid volume, L (1 to 1e6): enables the times to the hard limits in the worst case
    #[arg(long, value_name = "L", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub tank_volume_l: Option<f64>,
    /// Low hard limit, pH: below it the controller trips (the skid file's control.low_limit_ph)
    #[arg(long, value_name = "PH", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub low_limit_ph: Option<f64>,
    /// High hard limit, pH: above it the controller trips (the skid file's control.high_limit_ph)
    #[arg(long, value_name = "PH", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub high_limit_ph: Option<f64>,
    /// Lowest influent flow for the dose corners, L/h [default: 50 % of --flow-l-per-h]
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub min_flow_l_per_h: Option<f64>,
    /// Highest influent flow for the dose corners, L/h [default: 150 % of --flow-l-per-h]
    #[arg(long, value_name = "L_PER_H", value_parser = value::finite_number, allow_negative_numbers = true)]
    pub max_flow_l_per_h: Option<f64>,
    /// Plan without a pump (drops the example's pump and the pump checks)
    #[arg(long, conflicts_with_all = ["pump_max_l_per_h", "pump_step_l_per_h", "pump_min_l_per_h"])]
    pub no_pump: bool,
    #[command(flatten)]
    pub conditions: ConditionArgs,
    /// Read the request as JSON from stdin and print the result as JSON
    #[arg(long)]
    pub json: bool,
    /// Plan the built-in invented scenario (the options above change it)
    #[arg(long, conflicts_with = "influent")]
    pub example: bool,
}

impl Args {
    /// Whether any part of a request was given on the command line.
    fn has_request(&self) -> bool {
        let numbers = [
            self.flow_l_per_h,
            self.setpoint_ph,
            self.pump_max_l_per_h,
            self.pump_step_l_per_h,
            self.pump_min_l_per_h,
            self.band_ph,
            self.reagent_temperature_c,
            self.tank_volume_l,
            self.low_limit_ph,
            self.high_limit_ph,
            self.min_flow_l_per_h,
            self.max_flow_l_per_h,
        ];
        !self.influent.is_empty()
            || self.reagent.is_some()
            || self.no_pump
            || self.conditions.given()
            || numbers.iter().any(Option::is_some)
    }
}

/// Runs `plan`.
pub fn run(args: Args, stdin: &mut dyn Read) -> Result<String, CliError> {
    let mode = Mode::of(args.json);
    let (request, title) = if args.example {
        (PlanInput::from_args(&args)?, Some(example::TITLE))
    } else if mode == Mode::Json {
        if args.has_request() {
            return Err(CliError::new(
                "with --json the whole request is read as JSON from stdin; put influent, reagent, setpoint_ph, \
                 pump and band_ph in the JSON object instead of the command line",
            ));
        }
        (PlanInput::from_json(&json_io::read_input(stdin)?)?, None)
    } else {
        (PlanInput::from_args(&args)?, None)
    };
    let report = report::compute(request)?;
    match mode {
        Mode::Json => json::render(&report),
        Mode::Table => Ok(table::render(&report, title)),
    }
}
