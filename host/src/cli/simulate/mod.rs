//! `phdose simulate [SCENARIO.toml]`: the real controller against a plant model on the host,
//! beside a feedback-only baseline tuned by a named rule on the same plant — the main job.

mod output;

pub use output::SIM_CAUTION;
pub mod scenario_file;

use std::path::PathBuf;
use std::time::Instant;

use phdose_sim::baseline::{self, Tuning};
use phdose_sim::kpi::{self, Kpis};
use phdose_sim::run::{self, Loop, Trajectory};
use phdose_sim::scenario::Scenario;

use super::{CliError, Mode, Reply, files};

const AFTER_HELP: &str = "\
Runs the scenario twice on the same plant, disturbances and random draws: once with the skid's
controller as configured (`Controller::step` of the no_std crate, in f64: feed-forward from the
chemistry plus feedback, adaptation, supervisor and interlocks), once with a conventional
baseline (a PI on the pH error, no chemistry, tuned by the SIMC rule from a +2 % bump test on
the plant, through the same supervisor and pumps). Prints a table of KPIs side by side:
integrated absolute error of the tank's true pH (pH·s), time inside the band, largest
excursion, settling time after each disturbance, reagent used (L, and cost when the scenario
gives a price) and interlock trips with their codes.

Without SCENARIO.toml: the built-in scenario (invented): the rinse-water tank of a fictional
plating shop — acidic rinse with bicarbonate and an undeclared phosphate cleaner, 25 % caustic,
a 30 % flow step after 2 h (back after 5 h) and a 20-minute acid slug after 3.5 h; 8 h.
--builtin henson-seborg runs the published benchmark instead: the pH neutralization tank of
Henson & Seborg (1994; acid, buffer and base streams, 2.9 L, nominal steady state pH 7.0) with
a step in the buffer stream (its size is ours; see `phdose_sim::benchmark`).
`--template` prints it as an annotated scenario file: a skid file (what `pack` deploys) plus
[plant], [disturbances] and [run] sections.

--out DIR writes controller.csv and baseline.csv (t_s, ph, measured_ph, caustic_l_per_h,
acid_l_per_h, influent_l_per_h, state, trip: one row per controller tick) and simulation.svg
(stacked panels on one time axis: pH with setpoint and band, reagent flow, influent flow;
supervisor state changes marked), and prints the paths.

Exit codes:
  0  the simulation ran (trips, if any, are results: see the table)
  2  the scenario cannot be read or parsed (the message names the line and the key), a setting
     the simulator cannot use, files that exist without --force; usage errors.
     With --json: {\"error\": \"...\"}.

JSON result: scenario, file, seed, simulated_s, wall_s, speed_ratio (simulated / wall time of
the controller run), then controller and baseline (null with --no-baseline), each with iae_ph_s,
time_in_band_fraction, max_abs_error_ph, reagent_l, cost (null without a price), trips (reason
codes, in order) and settling [{label, at_s, settled_after_s}]; baseline also has tuning
{process_gain_ph_per_l_per_h, time_constant_s, dead_time_s, gain_l_per_h_per_ph,
integral_time_s}; files {controller_csv, baseline_csv, svg} (null when not written).

Examples:
  phdose simulate
  phdose simulate --out sim-out
  phdose simulate --builtin henson-seborg
  phdose simulate --template > scenario.toml
  phdose simulate scenario.toml --json
  phdose simulate scenario.toml --seed 42

A simulation is a model of a model: it does not replace commissioning on the real tank with
the interlocks wired and tested. Read SAFETY.md.";

/// simulate the skid on the host: its controller against a plant model, beside a feedback-only baseline
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The TOML scenario file [default: the built-in scenario]
    #[arg(value_name = "SCENARIO.toml")]
    pub file: Option<String>,
    /// Replay draw N of the scenario's declared uncertainties (what `phdose sweep` calls run N):
    /// the plant drawn from seed N, and N as the seed of the noise and random slugs
    #[arg(long, value_name = "N")]
    pub seed: Option<u64>,
    /// Which built-in scenario runs when no file is given
    #[arg(long, value_enum, value_name = "NAME", default_value = "plating-rinse", conflicts_with = "file")]
    pub builtin: scenario_file::BuiltIn,
    /// Run only the configured controller (no baseline)
    #[arg(long)]
    pub no_baseline: bool,
    /// Print the KPIs as JSON
    #[arg(long)]
    pub json: bool,
    /// Write the CSV trajectories and the SVG figure into DIR (created if missing)
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Overwrite files that already exist in the --out folder
    #[arg(long, requires = "out")]
    pub force: bool,
    /// Print the built-in scenario as an annotated TOML file and exit
    #[arg(long, conflicts_with_all = ["file", "out", "json", "seed", "no_baseline"])]
    pub template: bool,
}

/// One controller's run: its trajectory and scores.
pub struct Outcome {
    /// The trajectory.
    pub trajectory: Trajectory,
    /// Its KPIs.
    pub kpis: Kpis,
    /// Wall time of the run, s.
    pub wall_s: f64,
}

/// Both runs of one simulation.
pub struct Simulation {
    /// The scenario run.
    pub scenario: Scenario,
    /// The scenario file, `None` for a built-in one.
    pub file: Option<String>,
    /// Where the scenario came from, for the readable report.
    pub source: String,
    /// The seed the runs used.
    pub seed: u64,
    /// The configured controller.
    pub controller: Outcome,
    /// `true` when the plant is a draw of the declared uncertainties (`--seed`).
    pub drawn: bool,
    /// The baseline and its tuning (absent with `--no-baseline`).
    pub baseline: Option<(Outcome, Tuning)>,
    /// Wall time of everything (both runs and the bump test), s.
    pub wall_s: f64,
}

fn sim_error(e: impl std::fmt::Display) -> CliError {
    CliError::new(format!("simulation: {e}"))
}

/// Runs `law` on `scenario` and scores it.
fn one(scenario: &Scenario, law: Loop, seed: u64) -> Result<Outcome, CliError> {
    let start = Instant::now();
    let trajectory = run::run(scenario, law, Some(seed)).map_err(sim_error)?;
    let wall_s = start.elapsed().as_secs_f64();
    let kpis = kpi::score(&trajectory, scenario.run.reagent_price_per_l);
    Ok(Outcome { trajectory, kpis, wall_s })
}

/// Runs the simulation the arguments ask for. The baseline is tuned on `nominal` (commissioning
/// is done once, on the plant as designed — as `phdose sweep` does), then run on `scenario`.
pub fn simulate(
    scenario: Scenario,
    nominal: &Scenario,
    file: Option<String>,
    source: String,
    seed: Option<u64>,
    baseline: bool,
) -> Result<Simulation, CliError> {
    let start = Instant::now();
    let run_seed = seed.unwrap_or(scenario.run.seed);
    let controller = one(&scenario, Loop::Configured, run_seed)?;
    let baseline = if baseline {
        let tuning = baseline::tune(nominal).map_err(|e| sim_error(format!("baseline bump test: {e}")))?;
        Some((one(&scenario, tuning.as_loop(), run_seed)?, tuning))
    } else {
        None
    };
    Ok(Simulation {
        scenario,
        file,
        source,
        seed: run_seed,
        controller,
        drawn: seed.is_some(),
        baseline,
        wall_s: start.elapsed().as_secs_f64(),
    })
}

/// Runs `simulate`.
pub fn run(args: Args) -> Result<Reply, CliError> {
    if args.template {
        return Ok(Reply { stdout: scenario_file::TEMPLATE.to_owned(), code: 0 });
    }
    let loaded = scenario_file::load_or(args.file.as_deref(), args.builtin)?;
    let scenario = match args.seed {
        Some(seed) => phdose_sim::sweep::perturb(&loaded.scenario, &loaded.uncertainties, seed).map_err(sim_error)?,
        None => loaded.scenario.clone(),
    };
    let sim = simulate(scenario, &loaded.scenario, loaded.file, loaded.source, args.seed, !args.no_baseline)?;
    let written = match &args.out {
        Some(dir) => {
            let mut contents = vec![("controller.csv", output::csv(&sim.controller.trajectory))];
            if let Some((b, _)) = &sim.baseline {
                contents.push(("baseline.csv", output::csv(&b.trajectory)));
            }
            contents.push(("simulation.svg", files::svg(&output::figure(&sim))?));
            let paths = files::write_into(dir, args.force, &contents)?;
            contents.iter().map(|(n, _)| *n).zip(paths.iter().map(|p| p.display().to_string())).collect()
        }
        None => Vec::new(),
    };
    let stdout = match Mode::of(args.json) {
        Mode::Json => output::json(&sim, &written)?,
        Mode::Table => output::table(&sim, &written),
    };
    Ok(Reply { stdout, code: 0 })
}
