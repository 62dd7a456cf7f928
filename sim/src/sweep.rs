//! The robustness sweep: how the configured controller and the feedback-only baseline fare when
//! the plant is not quite what was measured at commissioning.
//!
//! Each run `seed` draws a plant from the nominal scenario with [`perturb`] (buffering of the
//! true influent, probe lag, pump delivery and tank volume, each scaled by a factor drawn
//! uniformly within its spread) and runs both controllers on it. The baseline is tuned once, on
//! the nominal plant, as a commissioning engineer would tune it on the plant as designed.
//!
//! Everything is a pure function of the scenario, the spreads and the seeds: the runs go in
//! parallel ([`rayon`]) but are collected in seed order, so the report does not depend on the
//! number of threads or on scheduling, and `perturb(scenario, spreads, seed)` replays run
//! `seed` exactly.

use std::collections::BTreeMap;

use phdose::chem::catalogue::SULFATE;
use phdose::chem::substance::{self, Part};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::baseline::{self, Tuning};
use crate::kpi::{self, Kpis};
use crate::run::{self, Loop, RunError};
use crate::scenario::Scenario;

/// Largest accepted spread (a factor never drops below 0.05).
pub const MAX_SPREAD: f64 = 0.95;

/// Most runs one sweep takes.
pub const MAX_RUNS: u32 = 100_000;

/// How far the real plant may be from the scenario's: relative spreads, each a fraction in
/// `0..=`[`MAX_SPREAD`]. A spread `s` scales its quantity by a factor drawn uniformly in
/// `[1 − s, 1 + s)`; 0 leaves it as in the scenario.
///
/// In a scenario or sweep file every field may be omitted (its default applies); unknown fields
/// are refused.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Uncertainties {
    /// Spread of the true influent's buffering: one factor scales the amount (mol/L) of every
    /// influent substance that carries a weak acid–base system (bicarbonate, phosphate,
    /// ammonia, acetate …); strong acids and bases and their neutral salts (HCl, H2SO4, NaOH,
    /// NaCl, Na2SO4 …) are left as they are. Fraction, 0–0.95; default 0.3.
    #[serde(default = "default_influent_buffer_fraction")]
    pub influent_buffer_fraction: f64,
    /// Spread of the probes' first-order lag (`plant.probe_lag_s`). Fraction, 0–0.95; default
    /// 0.5.
    #[serde(default = "default_probe_lag_fraction")]
    pub probe_lag_fraction: f64,
    /// Spread of what the pumps really deliver (`plant.pump_delivery_factor`). Fraction,
    /// 0–0.95; default 0.05.
    #[serde(default = "default_pump_delivery_fraction")]
    pub pump_delivery_fraction: f64,
    /// Spread of the tank's liquid volume (`plant.volume_l`). Fraction, 0–0.95; default 0.2.
    #[serde(default = "default_volume_fraction")]
    pub volume_fraction: f64,
}

fn default_influent_buffer_fraction() -> f64 {
    0.3
}
fn default_probe_lag_fraction() -> f64 {
    0.5
}
fn default_pump_delivery_fraction() -> f64 {
    0.05
}
fn default_volume_fraction() -> f64 {
    0.2
}

impl Default for Uncertainties {
    fn default() -> Self {
        Self {
            influent_buffer_fraction: default_influent_buffer_fraction(),
            probe_lag_fraction: default_probe_lag_fraction(),
            pump_delivery_fraction: default_pump_delivery_fraction(),
            volume_fraction: default_volume_fraction(),
        }
    }
}

impl Uncertainties {
    /// No uncertainty: every spread 0 ([`perturb`] then only sets the run's seed).
    pub const NONE: Self = Self {
        influent_buffer_fraction: 0.0,
        probe_lag_fraction: 0.0,
        pump_delivery_fraction: 0.0,
        volume_fraction: 0.0,
    };

    /// Checks every spread is within `0..=`[`MAX_SPREAD`] (NaN is refused); the first one that is
    /// not, in declaration order, is named in the error.
    pub fn validate(&self) -> Result<(), SweepError> {
        for (field, value) in self.fields() {
            if !(0.0..=MAX_SPREAD).contains(&value) {
                return Err(SweepError::Spread { field, value });
            }
        }
        Ok(())
    }

    /// The spreads with their field names, in declaration order (which is also the draw order).
    fn fields(&self) -> [(&'static str, f64); 4] {
        [
            ("influent_buffer_fraction", self.influent_buffer_fraction),
            ("probe_lag_fraction", self.probe_lag_fraction),
            ("pump_delivery_fraction", self.pump_delivery_fraction),
            ("volume_fraction", self.volume_fraction),
        ]
    }
}

/// Why a sweep (or a perturbation) was refused.
#[derive(Clone, Debug, PartialEq)]
pub enum SweepError {
    /// A spread is outside `0..=`[`MAX_SPREAD`] or not a number.
    Spread {
        /// The field of [`Uncertainties`].
        field: &'static str,
        /// Its value.
        value: f64,
    },
    /// The number of runs is outside `1..=`[`MAX_RUNS`].
    Runs(u32),
    /// `first_seed + runs` does not fit in a `u64`.
    SeedRange {
        /// The first seed.
        first_seed: u64,
        /// The number of runs.
        runs: u32,
    },
    /// An influent substance is not in the substance table, so its buffering cannot be told.
    UnknownSubstance(String),
    /// The baseline could not be tuned on the nominal scenario.
    Baseline(RunError),
}

impl core::fmt::Display for SweepError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Spread { field, value } => write!(f, "uncertainty {field} = {value} must be within 0-{MAX_SPREAD}"),
            Self::Runs(n) => write!(f, "runs = {n} must be within 1-{MAX_RUNS}"),
            Self::SeedRange { first_seed, runs } => {
                write!(f, "seeds {first_seed} + {runs} runs go past the largest seed {}", u64::MAX)
            }
            Self::UnknownSubstance(s) => write!(f, "influent substance {s:?} is unknown"),
            Self::Baseline(e) => write!(f, "baseline tuning on the nominal plant: {e}"),
        }
    }
}

impl std::error::Error for SweepError {}

/// `true` when `formula` buffers: it maps onto an acid–base system other than sulfate. Sulfate's
/// one modelled step (HSO4⁻, pKa ≈ 2) is the second proton of a strong acid; the substance table
/// files H2SO4 with the strong acids and Na2SO4, MgSO4 with the neutral salts of strong parents.
fn buffers(formula: &str) -> Result<bool, SweepError> {
    let s = substance::find(formula).map_err(|_| SweepError::UnknownSubstance(formula.to_owned()))?;
    Ok(s.parts.iter().any(|p| matches!(p, Part::System(system, _) if system.key != SULFATE.key)))
}

/// A factor drawn uniformly in `[1 − spread, 1 + spread)`. Always consumes exactly one draw,
/// whatever the spread, so the order of the draws does not depend on the spreads.
fn factor(rng: &mut ChaCha8Rng, spread: f64) -> f64 {
    let u: f64 = rng.random();
    1.0 + spread * (2.0 * u - 1.0)
}

/// The scenario with the plant drawn for run `seed`.
///
/// The draws come from `ChaCha8Rng::seed_from_u64(seed)`, one uniform `f64` each, in this order
/// (each drawn whatever its spread, zero included):
///
/// 1. the influent's buffering factor: scales every buffering substance of the true influent
///    (`plant.influent`, or the skid's configured influent when that is `None`, which is then
///    written into `plant.influent`; with a factor of exactly 1 the influent is left untouched);
/// 2. the probe lag factor: scales `plant.probe_lag_s`;
/// 3. the pump delivery factor: scales `plant.pump_delivery_factor`;
/// 4. the volume factor: scales `plant.volume_l`.
///
/// `run.seed` is set to `seed`, so the run's noise and random slugs follow the seed too.
/// Everything else is copied. A pure function of its arguments: the same seed gives the same
/// scenario on every machine and thread count.
///
/// # Errors
/// [`SweepError::Spread`] for a spread outside `0..=`[`MAX_SPREAD`];
/// [`SweepError::UnknownSubstance`] for an influent formula the substance table does not know.
pub fn perturb(scenario: &Scenario, u: &Uncertainties, seed: u64) -> Result<Scenario, SweepError> {
    u.validate()?;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let buffer = factor(&mut rng, u.influent_buffer_fraction);
    let lag = factor(&mut rng, u.probe_lag_fraction);
    let pump = factor(&mut rng, u.pump_delivery_fraction);
    let volume = factor(&mut rng, u.volume_fraction);

    let mut s = scenario.clone();
    let configured = || -> BTreeMap<String, f64> {
        scenario.skid.influent.dissolved.iter().map(|(k, v)| (k.as_str().to_owned(), f64::from(*v))).collect()
    };
    let truth = scenario.plant.influent.clone().unwrap_or_else(configured);
    // Unknown substances are refused whatever the factor, so a seed never decides validity.
    let scaled = truth
        .into_iter()
        .map(|(formula, mol_per_l)| {
            let v = if buffers(&formula)? { mol_per_l * buffer } else { mol_per_l };
            Ok((formula, v))
        })
        .collect::<Result<BTreeMap<_, _>, SweepError>>()?;
    #[allow(clippy::float_cmp, reason = "exactly 1 means nothing is scaled")]
    if buffer != 1.0 {
        s.plant.influent = Some(scaled);
    }
    s.plant.probe_lag_s *= lag;
    s.plant.pump_delivery_factor *= pump;
    s.plant.volume_l *= volume;
    s.run.seed = seed;
    Ok(s)
}

/// Which controller a failure or a summary is about.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Controller {
    /// The skid as configured ([`Loop::Configured`]).
    Configured,
    /// The feedback-only PI tuned on the nominal plant ([`Tuning::as_loop`]).
    Baseline,
}

/// P5, P50 and P95 of one KPI over the runs that completed, by the nearest-rank method: the
/// values are sorted (ascending, `f64::total_cmp`) and the P-th percentile is the value of
/// rank ⌈P/100 · n⌉ (1-based) among the n values. Each is always one of the runs' values.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Percentiles {
    /// 5th percentile, in the KPI's unit.
    pub p5: f64,
    /// Median (50th percentile), in the KPI's unit.
    pub p50: f64,
    /// 95th percentile, in the KPI's unit.
    pub p95: f64,
}

impl Percentiles {
    /// The nearest-rank percentiles of `values`; `None` when there are none.
    pub fn of(mut values: Vec<f64>) -> Option<Self> {
        values.sort_by(f64::total_cmp);
        let n = values.len();
        let at = |p: usize| -> Option<f64> {
            // ⌈p·n/100⌉, at least rank 1.
            let rank = (p * n).div_ceil(100).max(1);
            values.get(rank - 1).copied()
        };
        Some(Self { p5: at(5)?, p50: at(50)?, p95: at(95)? })
    }
}

/// One controller's results over the sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct Summary {
    /// Runs that completed and are in the percentiles (0–`runs`).
    pub completed: u32,
    /// Runs that failed with a [`RunError`] (listed in [`SweepReport::failures`]).
    pub failed: u32,
    /// Completed runs during which any trip latched.
    pub runs_with_trip: u32,
    /// Integrated absolute pH error, pH·s (`None` when no run completed).
    pub iae_ph_s: Option<Percentiles>,
    /// Fraction of the time within the band, 0–1.
    pub time_in_band_fraction: Option<Percentiles>,
    /// Largest |true pH − setpoint|, pH.
    pub max_abs_error_ph: Option<Percentiles>,
    /// Reagent used (caustic + acid), L.
    pub reagent_l: Option<Percentiles>,
}

impl Summary {
    fn of(results: &[&Result<Kpis, String>]) -> Self {
        let ok: Vec<&Kpis> = results.iter().filter_map(|r| r.as_ref().ok()).collect();
        let count = |n: usize| u32::try_from(n).unwrap_or(u32::MAX);
        let kpi = |f: fn(&Kpis) -> f64| Percentiles::of(ok.iter().map(|k| f(k)).collect());
        Self {
            completed: count(ok.len()),
            failed: count(results.len() - ok.len()),
            runs_with_trip: count(ok.iter().filter(|k| !k.trips.is_empty()).count()),
            iae_ph_s: kpi(|k| k.iae_ph_s),
            time_in_band_fraction: kpi(|k| k.time_in_band_fraction),
            max_abs_error_ph: kpi(|k| k.max_abs_error_ph),
            reagent_l: kpi(|k| k.reagent_l),
        }
    }
}

/// A run that failed (it is left out of the percentiles).
#[derive(Clone, Debug, PartialEq)]
pub struct Failure {
    /// The run's seed (replay it with [`perturb`]).
    pub seed: u64,
    /// Which controller's run failed.
    pub controller: Controller,
    /// The [`RunError`], as text.
    pub message: String,
}

/// One run's headline scores (the full [`Kpis`] are kept for the worst run only).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RunScores {
    /// Integrated absolute pH error, pH·s (≥ 0).
    pub iae_ph_s: f64,
    /// Fraction of the time within the band, 0–1.
    pub time_in_band_fraction: f64,
    /// Largest |true pH − setpoint|, pH (≥ 0).
    pub max_abs_error_ph: f64,
    /// Reagent used (caustic + acid), L (≥ 0).
    pub reagent_l: f64,
    /// Trips latched during the run (0 when none).
    pub trips: u32,
}

impl From<&Kpis> for RunScores {
    fn from(k: &Kpis) -> Self {
        Self {
            iae_ph_s: k.iae_ph_s,
            time_in_band_fraction: k.time_in_band_fraction,
            max_abs_error_ph: k.max_abs_error_ph,
            reagent_l: k.reagent_l,
            trips: u32::try_from(k.trips.len()).unwrap_or(u32::MAX),
        }
    }
}

/// Both controllers' scores for one seed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SeedScores {
    /// The run's seed.
    pub seed: u64,
    /// The configured controller; `None` when its run failed (see [`SweepReport::failures`]).
    pub configured: Option<RunScores>,
    /// The baseline; `None` when its run failed.
    pub baseline: Option<RunScores>,
}

/// The run in which the configured controller did worst.
#[derive(Clone, Debug, PartialEq)]
pub struct WorstRun {
    /// Its seed: `run::run(&perturb(scenario, u, seed)?, Loop::Configured, None)` replays it.
    pub seed: u64,
    /// The configured controller's scores.
    pub configured: Kpis,
    /// The baseline's scores on the same plant, or why its run failed.
    pub baseline: Result<Kpis, String>,
}

/// What a sweep found.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepReport {
    /// Runs taken (1–[`MAX_RUNS`]).
    pub runs: u32,
    /// The first seed; the runs used `first_seed .. first_seed + runs`.
    pub first_seed: u64,
    /// The baseline's tuning, from a bump test on the nominal plant.
    pub tuning: Tuning,
    /// The configured controller.
    pub configured: Summary,
    /// The feedback-only baseline.
    pub baseline: Summary,
    /// The completed run with the configured controller's highest IAE (ties: the lowest seed);
    /// `None` when no configured run completed.
    pub worst: Option<WorstRun>,
    /// Every failed run, in seed order (configured before baseline for the same seed).
    pub failures: Vec<Failure>,
    /// Every seed's scores, in seed order (`runs` entries).
    pub by_seed: Vec<SeedScores>,
}

/// One seed's outcome.
struct Outcome {
    seed: u64,
    configured: Result<Kpis, String>,
    baseline: Result<Kpis, String>,
}

/// Runs the sweep: `runs` plants drawn with [`perturb`] from seeds `first_seed .. first_seed +
/// runs`, each run with the configured controller and with the baseline (tuned once, on the
/// nominal `scenario`), scored with [`kpi::score`] at `scenario.run.reagent_price_per_l`.
///
/// The seeds run in parallel on the current [`rayon`] pool (use `ThreadPool::install` to choose
/// one); `on_run_done` is called once per seed, when both of its runs have finished (from any
/// thread, in no particular order), e.g. for a progress bar. The results are collected in seed
/// order, so the report is the same whatever the number of threads.
///
/// A run that fails with a [`RunError`] is listed in [`SweepReport::failures`] and left out of
/// that controller's percentiles.
///
/// # Errors
/// [`SweepError::Runs`] unless `runs` is 1–[`MAX_RUNS`]; [`SweepError::SeedRange`] when the seeds
/// would pass `u64::MAX`; [`SweepError::Spread`] and [`SweepError::UnknownSubstance`] as
/// [`perturb`]; [`SweepError::Baseline`] when the nominal plant's bump test fails.
pub fn sweep(
    scenario: &Scenario,
    u: &Uncertainties,
    runs: u32,
    first_seed: u64,
    on_run_done: &(dyn Fn() + Sync),
) -> Result<SweepReport, SweepError> {
    u.validate()?;
    if !(1..=MAX_RUNS).contains(&runs) {
        return Err(SweepError::Runs(runs));
    }
    if first_seed.checked_add(u64::from(runs - 1)).is_none() {
        return Err(SweepError::SeedRange { first_seed, runs });
    }
    // Refuses unknown influent substances before any work (they do not depend on the seed).
    perturb(scenario, u, first_seed)?;
    let tuning = baseline::tune(scenario).map_err(SweepError::Baseline)?;
    let price = scenario.run.reagent_price_per_l;
    let play = |s: &Scenario, law: Loop| -> Result<Kpis, String> {
        run::run(s, law, None).map(|t| kpi::score(&t, price)).map_err(|e| e.to_string())
    };
    let outcomes = (0..u64::from(runs))
        .into_par_iter()
        .map(|i| -> Result<Outcome, SweepError> {
            let seed = first_seed + i;
            let plant = perturb(scenario, u, seed)?;
            let configured = play(&plant, Loop::Configured);
            let baseline = play(&plant, tuning.as_loop());
            on_run_done();
            Ok(Outcome { seed, configured, baseline })
        })
        .collect::<Result<Vec<_>, _>>()?;

    let mut failures = Vec::new();
    for o in &outcomes {
        for (controller, r) in [(Controller::Configured, &o.configured), (Controller::Baseline, &o.baseline)] {
            if let Err(message) = r {
                failures.push(Failure { seed: o.seed, controller, message: message.clone() });
            }
        }
    }
    // Highest IAE; on a tie the earlier (lower) seed is kept.
    let mut worst: Option<(&Outcome, &Kpis)> = None;
    for o in &outcomes {
        if let Ok(k) = &o.configured
            && worst.is_none_or(|(_, w)| k.iae_ph_s.total_cmp(&w.iae_ph_s).is_gt())
        {
            worst = Some((o, k));
        }
    }
    Ok(SweepReport {
        runs,
        first_seed,
        tuning,
        configured: Summary::of(&outcomes.iter().map(|o| &o.configured).collect::<Vec<_>>()),
        baseline: Summary::of(&outcomes.iter().map(|o| &o.baseline).collect::<Vec<_>>()),
        worst: worst.map(|(o, k)| WorstRun { seed: o.seed, configured: k.clone(), baseline: o.baseline.clone() }),
        failures,
        by_seed: outcomes
            .iter()
            .map(|o| SeedScores {
                seed: o.seed,
                configured: o.configured.as_ref().ok().map(RunScores::from),
                baseline: o.baseline.as_ref().ok().map(RunScores::from),
            })
            .collect(),
    })
}
