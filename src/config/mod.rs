//! The skid's settings as one no_std value ([`Skid`]), its binary form with magic, version,
//! length and CRC ([`blob`]), and the boot checks a controller runs at power-on ([`boot`]).
//!
//! The top layer of the crate: it imports `control`, `probe`, `titration` and `chem`; nothing
//! imports it. The same [`Skid`] is the human-edited TOML file on the host (its serde field
//! names are the file's keys; see the README for an annotated example) and the blob on the
//! board: the host packs it, the board decodes it and both run the same [`boot::check`].
//!
//! Numbers are `f32` in the settings whatever the controller's real type, so a blob has the
//! same bytes on every machine; [`build`] widens them to `R`.

pub mod blob;
pub mod boot;
pub mod build;
pub mod example;

use heapless::{LinearMap, String, Vec};
use serde::{Deserialize, Serialize};

/// Most dissolved substances in the configured influent.
pub const MAX_DISSOLVED: usize = 8;
/// Longest substance formula or name in a configuration, bytes.
pub const MAX_FORMULA_LEN: usize = 12;
/// Longest skid name, bytes.
pub const MAX_NAME_LEN: usize = 32;
/// Most pH probes.
pub const MAX_PROBES: usize = 3;

/// A formula as stored in a configuration ("NaHCO3", "(NH4)2SO4").
pub type Formula = String<MAX_FORMULA_LEN>;

/// Which activity model the controller's chemistry uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[serde(rename_all = "lowercase")]
pub enum ActivityModel {
    /// γ = 1.
    Ideal,
    /// Davies activity coefficients.
    Davies,
}

/// The influent as designed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InfluentSettings {
    /// Design flow, L/h (> 0, ≤ 10⁷); the feed-forward's flow when none is measured.
    pub design_flow_l_per_h: f32,
    /// Lowest flow the skid must handle, L/h (> 0, ≤ the design flow).
    pub min_flow_l_per_h: f32,
    /// Highest flow the skid must handle, L/h (≥ the design flow, ≤ 10⁷).
    pub max_flow_l_per_h: f32,
    /// Design temperature, °C (0–100).
    pub design_temperature_c: f32,
    /// Activity model of the controller's chemistry.
    pub activity: ActivityModel,
    /// Dissolved substances by formula (as `speciate` takes them), mol/L each (0–20).
    pub dissolved: LinearMap<Formula, f32, MAX_DISSOLVED>,
}

/// How a pump takes its command (see [`crate::control::pump::PumpDrive`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase", deny_unknown_fields)]
pub enum PumpSettings {
    /// Pulse input: one stroke per pulse.
    Pulse {
        /// Stroke volume, mL (> 0, ≤ 1000).
        stroke_volume_ml: f32,
        /// Highest stroke rate, strokes/min (> 0, ≤ 1000).
        max_strokes_per_min: f32,
    },
    /// Analog (4–20 mA) or PWM input.
    Duty {
        /// Flow at full duty, L/h (> 0, ≤ 10⁴).
        max_l_per_h: f32,
        /// Lowest reliable duty, 0–0.5.
        min_duty: f32,
        /// Output steps between duty 0 and 1, 1–65535.
        resolution_steps: u16,
    },
}

/// One reagent, its pump and its overdose guard.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReagentSettings {
    /// Substance formula ("NaOH", "H2SO4", "HCl" …).
    pub substance: Formula,
    /// Strength, % w/w (0–100].
    pub mass_percent: f32,
    /// Density, kg/L (0.5–3]; omitted: from the crate's table of common grades.
    #[serde(default)]
    pub density_kg_per_l: Option<f32>,
    /// The pump.
    pub pump: PumpSettings,
    /// Most reagent this pump may deliver in any hour, L (> 0): the overdose guard.
    pub max_per_hour_l: f32,
    /// Most reagent this pump may deliver in any day, L (> 0, ≥ the hourly limit).
    pub max_per_day_l: f32,
}

/// Setpoint, band, hard limits and the control law's tuning.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ControlSettings {
    /// Setpoint, pH (0–14; inside the hard limits with margin, see the boot checks).
    pub setpoint_ph: f32,
    /// Full width of the control band, pH (> 0, ≤ 4).
    pub band_ph: f32,
    /// Low hard limit: below it dosing trips, pH (0–14).
    pub low_limit_ph: f32,
    /// High hard limit: above it dosing trips, pH (0–14, > the low limit).
    pub high_limit_ph: f32,
    /// The control tick, s (0.1–60).
    pub tick_s: f32,
    /// PI integral time, s (1–10⁵).
    pub integral_time_s: f32,
    /// Desired closed-loop time constant, s (1–10⁵).
    pub closed_loop_time_constant_s: f32,
    /// Largest change of the reagent flow, L/h per s (> 0).
    pub rate_limit_l_per_h_per_s: f32,
    /// Dead band between the caustic and the acid pump, pH (0–2).
    pub switch_dead_band_ph: f32,
    /// Feed-forward recompute dead band on the flow, fraction (0.001–0.5).
    pub flow_dead_band_fraction: f32,
    /// Feed-forward recompute dead band on the temperature, °C (0.01–10).
    pub temperature_dead_band_c: f32,
    /// Tank liquid volume, L (1–10⁶).
    pub tank_volume_l: f32,
    /// Adaptation filter time constant, s (1–10⁷).
    pub adaptation_filter_time_s: f32,
    /// Largest adaptation correction, fraction of the design demand (0–2).
    pub adaptation_bound_fraction: f32,
    /// Model-residual warning bound, pH (0.05–5).
    pub residual_bound_ph: f32,
    /// Time beyond the residual bound before the warning, s (0–10⁷).
    pub residual_time_s: f32,
}

/// Interlock settings (the hard pH limits are in [`ControlSettings`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InterlockSettings {
    /// A measured influent flow below this is "no flow", L/h (≥ 0).
    pub no_flow_below_l_per_h: f32,
    /// Watchdog: a tick older than this trips (stale inputs), s (> the tick, ≤ 3600).
    pub max_tick_age_s: f32,
    /// Model-mismatch trip: |measured − model pH| beyond this …, pH (> the residual bound, ≤ 14).
    pub mismatch_trip_ph: f32,
    /// … for this long, s (> 0, ≤ 10⁷).
    pub mismatch_trip_s: f32,
    /// Runaway trip: the pH farther than this from the setpoint on a pump's side (above it for
    /// the caustic pump, below for the acid pump), pH (> 0, ≤ 7; more than half the band) …
    pub runaway_margin_ph: f32,
    /// … and still moving away, with that pump off for longer than this, s (> 0, ≤ 3600; longer
    /// than the reagent's transport delay plus the probe's dead time and lag, or the loop's own
    /// overshoot trips it).
    pub runaway_off_s: f32,
}

/// One probe's calibration (the electrode line of [`crate::probe::calibration::Calibration`]).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProbeCalibration {
    /// Slope at the calibration temperature, mV per pH (positive: the potential falls as the
    /// pH rises; 10–120).
    pub slope_mv_per_ph: f32,
    /// Potential at pH 7 (the isopotential point), mV (±1000).
    pub offset_mv: f32,
    /// Temperature of the calibration, °C (0–100).
    pub calibration_temperature_c: f32,
    /// Age of the calibration when the settings were packed, days (≥ 0).
    pub age_days: f32,
}

/// The probes: calibrations, their acceptance, the signal validation and the vote.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProbeSettings {
    /// One to three calibrated probes.
    pub probes: Vec<ProbeCalibration, MAX_PROBES>,
    /// Acceptance: lowest slope, % of Nernst (50–100).
    pub min_slope_percent: f32,
    /// Acceptance: highest slope, % of Nernst (100–150).
    pub max_slope_percent: f32,
    /// Acceptance: largest |offset| at pH 7, mV (0–200).
    pub max_abs_offset_mv: f32,
    /// A raw potential beyond ±this is a fault, mV (50–2000).
    pub max_abs_mv: f32,
    /// Fastest credible change of the tank pH, pH per s (0.001–14).
    pub max_rate_ph_per_s: f32,
    /// Largest credible noise, mV RMS (0.01–100).
    pub max_noise_mv: f32,
    /// Time constant of the noise estimate, s (1–10⁵).
    pub noise_time_s: f32,
    /// A signal that stays within ±this … , mV (0–50) …
    pub frozen_band_mv: f32,
    /// … for this long is frozen, s (1–10⁶).
    pub frozen_window_s: f32,
    /// Healthy probes may disagree by at most this, pH (0.01–14).
    pub max_spread_ph: f32,
    /// A calibration older than this is a warning, days (> 0).
    pub calibration_max_age_days: f32,
}

/// Everything a controller of one skid is configured with.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Skid {
    /// A name for displays and logs (≤ 32 bytes).
    pub name: String<MAX_NAME_LEN>,
    /// The influent.
    pub influent: InfluentSettings,
    /// The caustic reagent and pump, if any.
    #[serde(default)]
    pub caustic: Option<ReagentSettings>,
    /// The acid reagent and pump, if any.
    #[serde(default)]
    pub acid: Option<ReagentSettings>,
    /// Setpoint, band, limits, tuning.
    pub control: ControlSettings,
    /// Interlocks.
    pub interlocks: InterlockSettings,
    /// Probes.
    pub probes: ProbeSettings,
}
