//! `phdose sweep [SCENARIO.toml] --runs N`: Monte Carlo over the scenario's declared
//! uncertainties, both loops, percentiles and the worst run's seed.

use std::fmt::Write as _;
use std::io::IsTerminal;
use std::time::Instant;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use phdose_sim::sweep::{self, Percentiles, Summary, SweepReport, Uncertainties};
use serde::Serialize;

use super::simulate::scenario_file;
use super::{CliError, Mode, Reply, json, layout};
use crate::cli::format::{fixed, percent, sig};

const AFTER_HELP: &str = "\
Draws N plants from the scenario's declared uncertainties — run k uses seed FIRST+k: influent
buffering (every weak acid or base of the true influent scaled by one factor), probe lag, pump
delivery and tank volume, each uniform within ± its spread — and runs each with the configured
controller and with the feedback-only baseline (a PI tuned once by the SIMC rule on the nominal
plant, as a commissioning engineer would). Runs go in parallel (rayon; RAYON_NUM_THREADS sets
the threads); the results do not depend on the thread count. A progress bar is drawn on stderr
when it is a terminal.

The spreads come from the scenario file's [sweep] section (fractions, 0-0.95):
  [sweep]
  influent_buffer_fraction = 0.3   # default 0.3
  probe_lag_fraction = 0.5         # default 0.5
  pump_delivery_fraction = 0.05    # default 0.05
  volume_fraction = 0.2            # default 0.2
The built-in scenario uses the defaults.

Prints P5/P50/P95 (nearest rank) of each KPI for both loops, the runs with a trip, failed runs,
and the worst run (highest integrated error of the controller) with its seed:
`phdose simulate [SCENARIO.toml] --seed SEED` replays it exactly.

Exit codes: 0 the sweep ran; 2 unreadable scenario, bad spreads or run count, usage errors.

JSON result: runs, first_seed, wall_s, uncertainties, controller and baseline {completed, failed,
runs_with_trip, iae_ph_s, time_in_band_fraction, max_abs_error_ph, reagent_l (each {p5, p50,
p95} or null)}, worst {seed, controller_iae_ph_s, baseline_iae_ph_s} (null when no run
completed), failures [{seed, loop, message}].

Examples:
  phdose sweep --runs 200
  phdose sweep scenario.toml --runs 1000 --json
  phdose simulate scenario.toml --seed 1042

Read SAFETY.md: a sweep widens a simulation; it does not replace commissioning.";

/// Monte Carlo sweep of a scenario's declared uncertainties (both loops, percentiles, worst seed)
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The TOML scenario file [default: the built-in scenario]
    #[arg(value_name = "SCENARIO.toml")]
    pub file: Option<String>,
    /// Number of runs (1-100000)
    #[arg(long, value_name = "N")]
    pub runs: u32,
    /// Seed of the first run; run k uses FIRST+k
    #[arg(long, value_name = "FIRST", default_value_t = 1)]
    pub first_seed: u64,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
}

#[derive(Serialize)]
struct PercentilesOut {
    p5: f64,
    p50: f64,
    p95: f64,
}

fn p(v: Option<&Percentiles>) -> Option<PercentilesOut> {
    v.map(|p| PercentilesOut { p5: p.p5, p50: p.p50, p95: p.p95 })
}

#[derive(Serialize)]
struct SummaryJson {
    completed: u32,
    failed: u32,
    runs_with_trip: u32,
    iae_ph_s: Option<PercentilesOut>,
    time_in_band_fraction: Option<PercentilesOut>,
    max_abs_error_ph: Option<PercentilesOut>,
    reagent_l: Option<PercentilesOut>,
}

impl From<&Summary> for SummaryJson {
    fn from(s: &Summary) -> Self {
        Self {
            completed: s.completed,
            failed: s.failed,
            runs_with_trip: s.runs_with_trip,
            iae_ph_s: p(s.iae_ph_s.as_ref()),
            time_in_band_fraction: p(s.time_in_band_fraction.as_ref()),
            max_abs_error_ph: p(s.max_abs_error_ph.as_ref()),
            reagent_l: p(s.reagent_l.as_ref()),
        }
    }
}

#[derive(Serialize)]
struct WorstJson {
    seed: u64,
    controller_iae_ph_s: f64,
    baseline_iae_ph_s: Option<f64>,
}

#[derive(Serialize)]
struct FailureJson<'a> {
    seed: u64,
    #[serde(rename = "loop")]
    which: &'static str,
    message: &'a str,
}

#[derive(Serialize)]
struct SweepJson<'a> {
    runs: u32,
    first_seed: u64,
    wall_s: f64,
    uncertainties: &'a Uncertainties,
    controller: SummaryJson,
    baseline: SummaryJson,
    worst: Option<WorstJson>,
    failures: Vec<FailureJson<'a>>,
}

fn loop_name(c: sweep::Controller) -> &'static str {
    match c {
        sweep::Controller::Configured => "controller",
        sweep::Controller::Baseline => "baseline",
    }
}

/// Runs `sweep`.
pub fn run(args: Args) -> Result<Reply, CliError> {
    let loaded = scenario_file::load(args.file.as_deref())?;
    let bar = if std::io::stderr().is_terminal() {
        let bar = ProgressBar::with_draw_target(Some(u64::from(args.runs)), ProgressDrawTarget::stderr());
        if let Ok(style) = ProgressStyle::with_template("{bar:40} {pos}/{len} runs, {elapsed} (eta {eta})") {
            bar.set_style(style);
        }
        bar
    } else {
        ProgressBar::hidden()
    };
    let start = Instant::now();
    let report = sweep::sweep(&loaded.scenario, &loaded.uncertainties, args.runs, args.first_seed, &|| bar.inc(1))
        .map_err(|e| CliError::new(format!("sweep: {e}")))?;
    bar.finish_and_clear();
    let wall_s = start.elapsed().as_secs_f64();
    let stdout = match Mode::of(args.json) {
        Mode::Json => json::render(&SweepJson {
            runs: report.runs,
            first_seed: report.first_seed,
            wall_s,
            uncertainties: &loaded.uncertainties,
            controller: SummaryJson::from(&report.configured),
            baseline: SummaryJson::from(&report.baseline),
            worst: report.worst.as_ref().map(|w| WorstJson {
                seed: w.seed,
                controller_iae_ph_s: w.configured.iae_ph_s,
                baseline_iae_ph_s: w.baseline.as_ref().ok().map(|k| k.iae_ph_s),
            }),
            failures: report
                .failures
                .iter()
                .map(|f| FailureJson { seed: f.seed, which: loop_name(f.controller), message: &f.message })
                .collect(),
        })?,
        Mode::Table => table(&report, &loaded, wall_s),
    };
    Ok(Reply { stdout, code: 0 })
}

fn triple(v: Option<&Percentiles>, f: &dyn Fn(f64) -> String) -> String {
    v.map_or_else(|| "n/a".to_owned(), |p| format!("{} / {} / {}", f(p.p5), f(p.p50), f(p.p95)))
}

/// How one KPI row is written.
type SummaryText = dyn Fn(&Summary) -> String;

fn table(r: &SweepReport, loaded: &scenario_file::Loaded, wall_s: f64) -> String {
    let u = &loaded.uncertainties;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Sweep of the {}: {} runs (seeds {}-{}), {} s of wall time",
        loaded.source,
        r.runs,
        r.first_seed,
        r.first_seed.saturating_add(u64::from(r.runs).saturating_sub(1)),
        sig(wall_s, 2)
    );
    let _ = writeln!(
        s,
        "  spreads: influent buffering ±{}, probe lag ±{}, pump delivery ±{}, tank volume ±{}",
        percent(u.influent_buffer_fraction),
        percent(u.probe_lag_fraction),
        percent(u.pump_delivery_fraction),
        percent(u.volume_fraction)
    );
    let _ = writeln!(s);
    let _ =
        writeln!(s, "  {:<30} {:>28}  {:>28}", "P5 / P50 / P95", "controller (chemistry + PI)", "baseline (PI only)");
    let rows: [(&str, &SummaryText); 4] = [
        ("integrated |pH error|, pH·s", &|m| triple(m.iae_ph_s.as_ref(), &|v| format!("{v:.0}"))),
        ("time inside the band", &|m| triple(m.time_in_band_fraction.as_ref(), &percent)),
        ("largest |pH error|, pH", &|m| triple(m.max_abs_error_ph.as_ref(), &|v| fixed(v, 2))),
        ("reagent used, L", &|m| triple(m.reagent_l.as_ref(), &|v| format!("{v:.2}"))),
    ];
    for (label, f) in rows {
        let _ = writeln!(s, "  {label:<30} {:>28}  {:>28}", f(&r.configured), f(&r.baseline));
    }
    let count = |m: &Summary| format!("{} of {}", m.runs_with_trip, m.completed);
    let _ = writeln!(s, "  {:<30} {:>28}  {:>28}", "runs with a trip", count(&r.configured), count(&r.baseline));
    let failed = |m: &Summary| m.failed.to_string();
    let _ = writeln!(s, "  {:<30} {:>28}  {:>28}", "failed runs", failed(&r.configured), failed(&r.baseline));
    let _ = writeln!(s);
    if let Some(w) = &r.worst {
        let file = loaded.file.as_deref().map_or_else(String::new, |f| format!(" {f}"));
        let _ = writeln!(
            s,
            "Worst run for the controller: seed {} (integrated error {:.0} pH·s); replay it with\n  phdose simulate{file} --seed {}",
            w.seed, w.configured.iae_ph_s, w.seed
        );
    }
    for f in r.failures.iter().take(5) {
        let _ = writeln!(s, "Failed: seed {} ({}): {}", f.seed, loop_name(f.controller), f.message);
    }
    let _ = writeln!(
        s,
        "Baseline tuned once on the nominal plant (SIMC): gain {} L/h per pH, integral time {} s.",
        sig(r.tuning.gain_l_per_h_per_ph, 3),
        sig(r.tuning.integral_time_s, 3)
    );
    layout::finish(s, &[], super::simulate::SIM_CAUTION)
}
