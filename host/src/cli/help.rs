//! Help texts.

use super::CliError;

/// The command list, for error messages.
pub const COMMANDS: &str = "speciate, salt, substances, plan, curve, fit and help";

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
  phdose plan INFLUENT=MOL_PER_L ... --flow-l-per-h F --reagent NaOH=6.25 --setpoint-ph X [...]
  phdose plan --json < request.json
  phdose plan --example [--json]
  phdose curve SAMPLE=MOL_PER_L ... --sample-ml V --titrant HCl=0.02 --max-titrant-ml V [...]
  phdose curve --json < request.json        [--csv FILE] [--svg FILE]
  phdose curve --example [--json]           [--csv FILE] [--svg FILE]
  phdose fit --data FILE --titrant NaOH=0.05 --sample-ml 100 [--carbonate] [--buffers 0|1|2] [...]
  phdose fit --json < request.json          [--svg FILE]
  phdose fit --example [--json]             [--svg FILE]
  phdose help [COMMAND]
  phdose --version

commands:
  speciate     pH, ionic strength, buffer capacity and every species of a mix
  salt         what a salt's ions do in water and the pH that results
  substances   the substance table (formulas and names the other commands accept)
  plan         feed-forward reagent flow for a setpoint, process gain, pump and steepness checks
  curve        titration curve with its equivalence points (table, JSON, CSV, SVG plot)
  fit          effective influent composition fitted to a lab titration (Levenberg-Marquardt)
  help         this text, or a command's details

With --json, the request is one JSON object on stdin and the result one JSON object on stdout.

Exit codes:
  0  a result was computed. For `plan` this includes an unreachable setpoint and failed
     checks: they are results (\"reachable\": false, \"verdicts\"), not errors.
  2  any input, solver or internal error, and a refused (ill-conditioned) fit:
     {\"error\": \"...\"} on stdout with --json, one `error: ...` line on stderr otherwise.
Defaults: 25 °C, Davies activities. Amounts are mol/L.

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

/// `phdose help plan`.
pub const PLAN: &str = "\
phdose plan — feed-forward reagent flow for a setpoint, with process gain and checks

usage:
  phdose plan H2SO4=0.0012 NaHCO3=0.001 --flow-l-per-h 1200 --reagent NaOH=25% --setpoint-ph 7
              [--pump-max-l-per-h 10 --pump-step-l-per-h 0.01] [--band-ph 0.3]
              [--reagent-density KG_PER_L] [--temperature-c C] [--activity davies|ideal]
  phdose plan --json < request.json
  phdose plan --example [--json] [any option above, or --no-pump, to change the example]

The influent (SUBSTANCE=MOL_PER_L) flows at --flow-l-per-h into a mixing point where the
reagent is dosed. --reagent takes NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT% (one
substance as bought; the density comes from --reagent-density or, for NaOH 25/50 %, HCl 32/36 %
and H2SO4 96/98 %, from the built-in grade table at 20 °C). The reagent is taken at the influent's
temperature. --example: the rinse-water neutralization skid of a fictional plating shop (18 °C,
1200 L/h, 25 % caustic, pump 10 L/h with 0.01 L/h steps, band 0.3 pH).

JSON request (temperature_c, activity, pump and band_ph optional):
  {\"temperature_c\": 25, \"activity\": \"davies\",
   \"influent\": {\"flow_l_per_h\": 1200, \"dissolved\": {\"NaHCO3\": 0.002, \"HCl\": 0.001}},
   \"reagent\": {\"dissolved\": {\"NaOH\": 6.25}},
   \"setpoint_ph\": 7.0, \"pump\": {\"max_l_per_h\": 10, \"step_l_per_h\": 0.01}, \"band_ph\": 0.3}
  The reagent may instead be {\"substance\": \"NaOH\", \"mass_percent\": 25, \"density_kg_per_l\": 1.274}
  (density optional for the grades above).

JSON result (stable keys first):
  reachable (bool), reagent_flow_l_per_h (L/h, null when unreachable), mixture_buffer_capacity
  (mol/L per pH, at the setpoint), gain_ph_per_l_per_h (pH per L/h), verdicts (readable strings:
  \"ok\", \"unreachable: ...\", \"beyond pump capacity: ...\", \"too steep: ...\").
  Also: all_clear, setpoint_ph, influent_ph, influent_flow_l_per_h, influent_dissolved (formula ->
  mol/L), gain_ph_per_step (pH change of
  one pump step, a real solve), reagent_mol_per_l (one-substance reagents), reagent,
  mixture_ionic_strength, rounds, checks [{kind: beyond_pump|too_steep, ...}], unreachable
  ({kind: wrong_direction|beyond_reagent, limit_ph} or null), stage_advice, pump, band_ph,
  temperature_c, activity, notes, caution.

Exit codes: 0 when a plan was worked out, whatever the verdicts (check `reachable` and
`all_clear`); 2 for input and solver errors.

stage_advice is common practice (a rule of thumb from the influent pH and the setpoint), not a
computed result. The plan is a model estimate: the flow switch, independent pH cut-outs and a
manual reset must exist in hardware (SAFETY.md).
";

/// `phdose help curve`.
pub const CURVE: &str = "\
phdose curve — titration curve of a sample, and its equivalence points

usage:
  phdose curve NaOH=0.001 Na2CO3=0.002 --sample-ml 100 --titrant HCl=0.02 --max-titrant-ml 30
               [--points 64] [--temperature-c C] [--activity davies|ideal] [--csv FILE] [--svg FILE]
  phdose curve --json < request.json [--csv FILE] [--svg FILE]
  phdose curve --example [--json] [--points N] [--csv FILE] [--svg FILE]

Prints titrant added (mL), pH and buffer capacity (mol/L per pH) at each point, then the
equivalence points found on the curve (slope maxima) and predicted from the model
(stoichiometry; the titrant's own weak acids or bases are not counted there), each with its pH.
--points: 8 to 256 in steps of 8 (default 64); spacing is adaptive, so the steep parts get the
points. --titrant takes NAME=MOL_PER_L[,NAME=MOL_PER_L...] or NAME=PERCENT%.
--csv writes titrant_ml,ph,buffer_capacity_mol_per_l_per_ph; --svg writes a plot (pH against mL,
equivalence points circled and labelled with their pH).
--example: 100 mL of alkaline-cleaner rinse from a fictional plating shop (1 mmol/L NaOH,
2 mmol/L Na2CO3, 20 °C) titrated with 0.02 mol/L HCl to 30 mL.

JSON request (temperature_c, activity and points optional):
  {\"temperature_c\": 25, \"activity\": \"ideal\", \"sample\": {\"volume_l\": 0.1, \"dissolved\": {\"NaOH\": 0.001}},
   \"titrant\": {\"dissolved\": {\"HCl\": 0.02}}, \"max_titrant_l\": 0.03, \"points\": 64}
  The titrant may instead be {\"substance\": ..., \"mass_percent\": ..., \"density_kg_per_l\": ...}.

JSON result: points [{titrant_ml, ph, buffer_capacity}], equivalence_points {curve: [{titrant_ml,
ph}], model: [{titrant_ml, ph, system, step}]}, sample_volume_l, max_titrant_l, titrant,
temperature_c, activity, files {csv, svg} (null when not written).
";

/// `phdose help fit`.
pub const FIT: &str = "\
phdose fit — effective influent composition fitted to a lab titration

usage:
  phdose fit --data FILE --titrant NaOH=0.05 --sample-ml 100 [--carbonate] [--buffers 0|1|2]
             [--temperature-c C] [--activity davies|ideal] [--svg FILE]
  phdose fit --json < request.json [--svg FILE]
  phdose fit --example [--json] [--buffers 0|1|2] [--svg FILE]

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
--svg plots the lab points against the fitted model. A fit the data cannot determine is refused
with exit code 2 and names the parameter (fit fewer parameters, or titrate over a wider pH range).
--example: invented lab titration of a fictional plating-shop influent with 0.05 mol/L NaOH
(host/examples-data/fit-example.csv; its header states the true composition).

JSON request (carbonate, buffers, temperature_c and activity optional; defaults false, 0, 25,
\"davies\"):
  {\"sample_volume_l\": 0.1, \"titrant\": {\"dissolved\": {\"NaOH\": 0.05}},
   \"points\": [[0, 2.61], [0.5, 2.68], ...], \"carbonate\": true, \"buffers\": 1,
   \"temperature_c\": 20, \"activity\": \"ideal\"}

JSON result: strong_charge_meq_per_l {value, standard_error}, carbonate_mmol_per_l (or null),
buffers [{total_mmol_per_l {value, standard_error}, pka {value, standard_error}}], rms_ph,
points, iterations, start {strong_charge_meq_per_l, carbonate_mmol_per_l, buffer_pkas, basis},
sample_volume_l, titrant, temperature_c, activity, svg_file.
";

/// Runs `help [COMMAND]`.
pub fn run(argv: &[String]) -> Result<String, CliError> {
    let topic = argv.iter().find(|a| !a.starts_with('-')).map(String::as_str);
    match topic {
        None => Ok(MAIN.to_owned()),
        Some("speciate") => Ok(SPECIATE.to_owned()),
        Some("salt") => Ok(SALT.to_owned()),
        Some("substances") => Ok(SUBSTANCES.to_owned()),
        Some("plan") => Ok(PLAN.to_owned()),
        Some("curve") => Ok(CURVE.to_owned()),
        Some("fit") => Ok(FIT.to_owned()),
        Some(other) => Err(CliError::new(format!("no help for '{other}'; the commands are {COMMANDS}"))),
    }
}
