//! What a simulation runs: the skid as configured (the controller's settings, exactly what
//! `phdose pack` deploys) plus the plant as it really is, the disturbances and the run.
//!
//! A scenario file is the skid's TOML file with three more top-level tables — `plant`,
//! `disturbances` and `run` — which `pack` and `check` ignore.

use std::collections::BTreeMap;

use phdose::config::Skid;
use serde::{Deserialize, Serialize};

/// The plant as it really is (what the controller does not know).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlantSettings {
    /// Liquid volume at the start, L (> 0).
    pub volume_l: f64,
    /// A fixed outlet flow, L/h: the level then varies with the inflows. Omitted: the tank
    /// overflows and its volume stays constant.
    #[serde(default)]
    pub outlet_l_per_h: Option<f64>,
    /// The true influent (formula → mol/L). Omitted: the skid's configured influent.
    #[serde(default)]
    pub influent: Option<BTreeMap<String, f64>>,
    /// True temperature of the water, °C. Omitted: the skid's design temperature.
    #[serde(default)]
    pub temperature_c: Option<f64>,
    /// Daily temperature swing (amplitude of a sine with a minimum at 06:00), °C (≥ 0).
    #[serde(default)]
    pub temperature_swing_c: f64,
    /// Dead time between the tank and the probes (sample line, mixing), s (≥ 0).
    #[serde(default)]
    pub probe_dead_time_s: f64,
    /// First-order lag of the probes, s (> 0).
    pub probe_lag_s: f64,
    /// Probe noise, mV (standard deviation per tick, ≥ 0).
    #[serde(default)]
    pub probe_noise_mv: f64,
    /// Probe drift, mV per hour, one value per probe (missing probes: 0).
    #[serde(default)]
    pub probe_drift_mv_per_h: Vec<f64>,
    /// Reagent transport delay from the pump to the tank, s (≥ 0).
    #[serde(default)]
    pub reagent_delay_s: f64,
    /// What the pumps really deliver per commanded litre (1 = exact; e.g. 0.95).
    #[serde(default = "one")]
    pub pump_delivery_factor: f64,
    /// True reagent strength as a fraction of the configured one (1 = as labelled).
    #[serde(default = "one")]
    pub reagent_strength_factor: f64,
    /// From this time on the caustic pump runs at its maximum whatever it is told (a fault), s;
    /// the dosing-enable relay (a hardwired interlock) still stops it when dosing is disabled.
    #[serde(default)]
    pub caustic_stuck_on_at_s: Option<f64>,
}

fn one() -> f64 {
    1.0
}

/// A step or ramp of the influent flow.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FlowChange {
    /// When it starts, s.
    pub at_s: f64,
    /// The new flow as a factor of the design flow.
    pub to_factor: f64,
    /// Ramp duration, s (0: a step).
    #[serde(default)]
    pub ramp_s: f64,
}

/// A slug: for a while the influent carries extra substances.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Slug {
    /// When it arrives, s.
    pub at_s: f64,
    /// How long it lasts, s (> 0).
    pub duration_s: f64,
    /// What it adds to the influent (formula → mol/L).
    pub adds: BTreeMap<String, f64>,
}

/// Disturbances.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Disturbances {
    /// Flow steps and ramps.
    #[serde(default)]
    pub flow: Vec<FlowChange>,
    /// A daily flow profile: amplitude of a sine (peak at 14:00) as a fraction of the design
    /// flow (0–0.9).
    #[serde(default)]
    pub daily_flow_amplitude: f64,
    /// Composition slugs at given times.
    #[serde(default)]
    pub slugs: Vec<Slug>,
    /// Random slugs: on average this many per day, each a copy of `random_slug_adds` for
    /// `random_slug_duration_s` (times drawn from the run's seed).
    #[serde(default)]
    pub random_slugs_per_day: f64,
    /// What a random slug adds.
    #[serde(default)]
    pub random_slug_adds: BTreeMap<String, f64>,
    /// How long a random slug lasts, s.
    #[serde(default)]
    pub random_slug_duration_s: f64,
}

/// The run.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunSettings {
    /// Simulated time, s (> 0, ≤ 30 days).
    pub duration_s: f64,
    /// Plant integration step, s (> 0, ≤ the controller's tick; the tick is a whole number of
    /// steps).
    pub step_s: f64,
    /// Seed of every random draw (noise, random slugs).
    #[serde(default)]
    pub seed: u64,
    /// Start with the tank at the setpoint (the feed-forward's steady state) instead of full of
    /// raw influent.
    #[serde(default)]
    pub start_at_setpoint: bool,
    /// Reagent price, per litre (any currency), for the cost KPI.
    #[serde(default)]
    pub reagent_price_per_l: Option<f64>,
}

/// A whole scenario (the host reads the four parts from one TOML file).
#[derive(Clone, Debug, PartialEq)]
pub struct Scenario {
    /// The controller's settings (what is deployed).
    pub skid: Skid,
    /// The plant as it is.
    pub plant: PlantSettings,
    /// Disturbances.
    pub disturbances: Disturbances,
    /// The run.
    pub run: RunSettings,
}

/// The built-in scenario (invented): the rinse-water tank of a fictional plating shop, with the
/// built-in example skid as deployed. The true rinse water carries a little phosphate cleaner
/// and 20 % more bicarbonate than the skid was configured with; the probes lag, drift apart and
/// are noisy; the caustic pump delivers 3 % less than commanded. Eight hours: the rinse flow
/// steps up by 30 % after two hours and back after five, and a 20-minute slug of pickling acid
/// (1.2 mmol/L more sulfuric acid) arrives after three and a half hours.
pub fn plating_rinse() -> Scenario {
    let influent: BTreeMap<String, f64> = [("H2SO4", 0.0012), ("HCl", 0.0006), ("NaHCO3", 0.0012), ("Na2HPO4", 0.0002)]
        .into_iter()
        .map(|(k, v)| (k.to_owned(), v))
        .collect();
    Scenario {
        skid: phdose::config::example::plating_rinse(),
        plant: PlantSettings {
            volume_l: 250.0,
            outlet_l_per_h: None,
            influent: Some(influent),
            temperature_c: Some(18.0),
            temperature_swing_c: 2.0,
            probe_dead_time_s: 10.0,
            probe_lag_s: 15.0,
            probe_noise_mv: 0.3,
            probe_drift_mv_per_h: vec![0.4, -0.3],
            reagent_delay_s: 8.0,
            pump_delivery_factor: 0.97,
            reagent_strength_factor: 1.0,
            caustic_stuck_on_at_s: None,
        },
        disturbances: Disturbances {
            flow: vec![
                FlowChange { at_s: 7200.0, to_factor: 1.3, ramp_s: 0.0 },
                FlowChange { at_s: 18_000.0, to_factor: 1.0, ramp_s: 0.0 },
            ],
            daily_flow_amplitude: 0.0,
            slugs: vec![Slug {
                at_s: 12_600.0,
                duration_s: 1200.0,
                adds: [("H2SO4".to_owned(), 0.0012)].into_iter().collect(),
            }],
            random_slugs_per_day: 0.0,
            random_slug_adds: BTreeMap::new(),
            random_slug_duration_s: 0.0,
        },
        run: RunSettings {
            duration_s: 8.0 * 3600.0,
            step_s: 1.0,
            seed: 1,
            start_at_setpoint: true,
            reagent_price_per_l: Some(0.35),
        },
    }
}
