//! A published benchmark as a scenario: the pH neutralization tank of Henson & Seborg.
//!
//! Source: M. A. Henson & D. E. Seborg, "Adaptive nonlinear control of a pH neutralization
//! process", IEEE Trans. Control Syst. Technol. 2(3), 169–182 (1994) (the journal's page numbers
//! are from memory); the same model and numbers in Henson & Seborg (eds.), "Nonlinear Process
//! Control", Prentice Hall 1997, pp. 207–210. Cited below as "H&S 1994/1997".
//!
//! The tank mixes three streams, described by the reaction invariants
//! Wa = [H⁺] − [OH⁻] − [HCO₃⁻] − 2[CO₃²⁻] and Wb = total carbonate: an acid stream (HNO₃), a
//! buffer stream (NaHCO₃) and a base stream (NaOH + NaHCO₃). Our simulator works on the same
//! invariants (a [`phdose::chem::Solution`] holds the strong-ion charge, which is −Wa, and the
//! carbonate total, which is Wb), so the published streams map onto our influent and reagent
//! exactly, except for the base stream's small carbonate content (see [`henson_seborg`]).

use std::collections::BTreeMap;

use phdose::config::{
    ActivityModel, ControlSettings, Formula, InfluentSettings, InterlockSettings, ProbeCalibration, ProbeSettings,
    PumpSettings, ReagentSettings, Skid,
};

use crate::scenario::{Disturbances, PlantSettings, RunSettings, Scenario, Slug};

/// Acid stream 1 (HNO₃): Wa1, mol/L (H&S 1994/1997). Wb1 = 0.
pub const ACID_WA_MOL_PER_L: f64 = 3.0e-3;
/// Buffer stream 2 (NaHCO₃): Wb2 = −Wa2, mol/L (H&S 1994/1997: Wa2 = −0.03 M, Wb2 = 0.03 M).
pub const BUFFER_NAHCO3_MOL_PER_L: f64 = 0.03;
/// Base stream 3: −Wa3, mol/L, i.e. all of its sodium (H&S 1994/1997: Wa3 = −3.05e-3 M).
pub const BASE_SODIUM_MOL_PER_L: f64 = 3.05e-3;
/// Base stream 3: Wb3, its carbonate, mol/L (H&S 1994/1997: Wb3 = 5e-5 M). Not configurable in
/// our single-substance reagent model; left out (see [`henson_seborg`]).
pub const BASE_CARBONATE_MOL_PER_L: f64 = 5e-5;
/// Nominal acid flow q1, mL/s (H&S 1994/1997).
pub const ACID_FLOW_ML_PER_S: f64 = 16.6;
/// Nominal buffer flow q2, mL/s (H&S 1994/1997).
pub const BUFFER_FLOW_ML_PER_S: f64 = 0.55;
/// Nominal base flow q3, mL/s (H&S 1994/1997; printed rounded: 15.55 mL/s gives pH 7.000,
/// calculated here, not published).
pub const BASE_FLOW_ML_PER_S: f64 = 15.6;
/// Liquid volume at the nominal steady state, L: tank area 207 cm² × level 14.0 cm (both
/// H&S 1994/1997) = 2898 cm³ (calculated here).
pub const TANK_VOLUME_L: f64 = 207.0 * 14.0 / 1000.0;
/// The buffer flow after the disturbance, mL/s: a +50 % step of q2. The size is our choice;
/// the paper steps the buffer flow by amounts of this order (from memory, not checked).
pub const DISTURBED_BUFFER_FLOW_ML_PER_S: f64 = 0.825;
/// When the buffer step comes, s.
pub const DISTURBANCE_AT_S: f64 = 600.0;
/// Length of the run, s (an hour: the step comes after 10 min, then ~30 residence times).
pub const DURATION_S: f64 = 3600.0;

/// mL/s → L/h.
const ML_PER_S_TO_L_PER_H: f64 = 3.6;

/// A formula as the settings hold it (every literal below fits; a test builds the benchmark).
fn formula(s: &str) -> Formula {
    let mut out = Formula::new();
    let pushed = out.push_str(s);
    debug_assert!(pushed.is_ok(), "benchmark formula {s} too long");
    out
}

/// The influent: streams 1 + 2 mixed at their nominal flows (formula → mol/L, f64). HNO₃ and
/// NaHCO₃ at the flow-weighted concentrations: 3.0e-3·16.6/17.15 ≈ 2.904e-3 M HNO₃ and
/// 0.03·0.55/17.15 ≈ 9.62e-4 M NaHCO₃ (arithmetic on H&S 1994/1997's numbers).
fn influent_mol_per_l() -> [(&'static str, f64); 2] {
    let q = ACID_FLOW_ML_PER_S + BUFFER_FLOW_ML_PER_S;
    [
        ("HNO3", ACID_WA_MOL_PER_L * ACID_FLOW_ML_PER_S / q),
        ("NaHCO3", BUFFER_NAHCO3_MOL_PER_L * BUFFER_FLOW_ML_PER_S / q),
    ]
}

/// Molar mass of NaOH from the crate's catalogue, g/mol (39.997; the literal is only a fallback
/// that the catalogue makes unreachable).
fn naoh_molar_mass() -> f64 {
    phdose::chem::substance::find("NaOH").map_or(39.997, |s| s.molar_mass_g_per_mol)
}

/// The benchmark skid: our controller configured from the published streams.
fn skid() -> Skid {
    let influent_l_per_h = (ACID_FLOW_ML_PER_S + BUFFER_FLOW_ML_PER_S) * ML_PER_S_TO_L_PER_H; // 61.74 L/h
    let base_l_per_h = BASE_FLOW_ML_PER_S * ML_PER_S_TO_L_PER_H; // 56.16 L/h
    // Base stream as NaOH: w = c·M/(10·ρ) % w/w = 3.05e-3 mol/L × 39.997 g/mol / (10 × 1.0 kg/L)
    // ≈ 0.0122 % (c·M is g/L; /(10·ρ) turns g/L into % w/w at ρ kg/L).
    let density_kg_per_l = 1.0;
    let mass_percent = BASE_SODIUM_MOL_PER_L * naoh_molar_mass() / (10.0 * density_kg_per_l);
    // Probes as calibrated at the benchmark's 25 °C: slopes within 1 % of Nernst (59.16 mV/pH).
    let calibration = |slope_mv_per_ph: f32, offset_mv: f32| ProbeCalibration {
        slope_mv_per_ph,
        offset_mv,
        calibration_temperature_c: 25.0,
        age_days: 1.0,
    };
    // Residence time at the nominal steady state: 2.898 L / (61.74 + 56.16) L/h ≈ 88.5 s.
    let residence_s = TANK_VOLUME_L / (influent_l_per_h + base_l_per_h) * 3600.0;
    // The pump: twice the nominal base flow, so the loop has room for buffer and acid upsets in
    // both directions (and the boot check's largest influent flow, 1.5× design, needs ≈ 84 L/h).
    let pump_max_l_per_h = 2.0 * base_l_per_h;
    let mut skid = Skid {
        // Filled below (the settings' fixed-capacity containers).
        name: Default::default(),
        influent: InfluentSettings {
            design_flow_l_per_h: influent_l_per_h as f32,
            min_flow_l_per_h: (0.5 * influent_l_per_h) as f32,
            max_flow_l_per_h: (1.5 * influent_l_per_h) as f32,
            // The paper's constants are for 25 °C and ideal activities (pK1 6.35, pK2 10.25,
            // pKw 14; H&S 1994/1997); the controller's model takes the same activity model.
            design_temperature_c: 25.0,
            activity: ActivityModel::Ideal,
            dissolved: Default::default(),
        },
        caustic: Some(ReagentSettings {
            substance: formula("NaOH"),
            mass_percent: mass_percent as f32,
            density_kg_per_l: Some(density_kg_per_l as f32),
            // 65535 steps: one step is 112 L/h / 65535 ≈ 1.7 mL/h, a few 1e-4 pH at pH 7 — a
            // metering valve on a dilute stream, as fine as the setting allows.
            pump: PumpSettings::Duty {
                max_l_per_h: pump_max_l_per_h as f32,
                min_duty: 0.01,
                resolution_steps: u16::MAX,
            },
            // The reagent is 3 mM caustic (pH ≈ 11.5), not a hazard in itself: the guards are the
            // pump running flat out for an hour, and for a day at the nominal flow ×1.5.
            max_per_hour_l: pump_max_l_per_h as f32,
            max_per_day_l: (1.5 * base_l_per_h * 24.0) as f32,
        }),
        acid: None,
        control: ControlSettings {
            // The paper's setpoint (H&S 1994/1997: nominal steady state pH 7.0).
            setpoint_ph: 7.0,
            // ±0.2 pH: the carbonate buffer at pH 7 (β ≈ 2.3·Wb4·α0·α1 ≈ 1.8e-4 mol/L per pH)
            // and dWa4/dq3 = (Wa3 − Wa4)/(q1 + q2 + q3) ≈ −8.0e-5 M per mL/s make one mL/s of
            // base move the pH by ≈ 0.44 (calculated here), so ±0.2 is about ±0.45 mL/s of base
            // (≈ 3 % of q3): tight enough to mean something, wide enough for a 5 s probe lag.
            band_ph: 0.4,
            // Far outside normal operation: the influent alone is pH ≈ 2.7 and the reagent ≈ 11.5.
            low_limit_ph: 4.0,
            high_limit_ph: 10.0,
            // 1 s: a tenth of the smallest lag in the loop (the 5 s probe) and 1/90 of the
            // residence time.
            tick_s: 1.0,
            // SIMC (Skogestad 2003, from memory) on the flow-mapped process (first order, unit
            // gain): τ = the residence time (≈ 88.5 s), θ ≈ 5.5 s (5 s probe lag + half a tick),
            // τc = 2θ = 11 s for robustness against the plant's Davies activities (the model is
            // ideal): Kc = τ/(τc + θ) ≈ 5.4, Ti = min(τ, 4·(τc + θ)) = 66 s, so λ = Ti/Kc ≈ 12 s.
            integral_time_s: 66.0,
            closed_loop_time_constant_s: 12.0,
            // 10 L/h per s: the pump starts from zero when the controller starts (also in a
            // run that starts at the setpoint) and reaches the nominal 56 L/h in ≈ 6 s, a
            // fifteenth of the residence time (at 2 L/h per s the tank fell to pH 6.25 during
            // the 28 s ramp); a single tick still cannot jump by more than 9 % of the pump.
            rate_limit_l_per_h_per_s: 10.0,
            switch_dead_band_ph: 0.3,
            flow_dead_band_fraction: 0.02,
            temperature_dead_band_c: 0.5,
            tank_volume_l: TANK_VOLUME_L as f32,
            // As the example skid: three residence times.
            adaptation_filter_time_s: (3.0 * residence_s) as f32,
            adaptation_bound_fraction: 0.5,
            residual_bound_ph: 0.5,
            // About 3.4 residence times (the example skid: 1.6 of its 750 s).
            residual_time_s: 300.0,
        },
        interlocks: InterlockSettings {
            no_flow_below_l_per_h: (0.1 * influent_l_per_h) as f32,
            max_tick_age_s: 5.0,
            mismatch_trip_ph: 2.0,
            // Ten residence times.
            mismatch_trip_s: 900.0,
            // Runaway: the example skid's margin; 30 s of pump off, well beyond this tank's
            // probe lag (5 s) and its own overshoot, well inside its 89 s residence time.
            runaway_margin_ph: 0.8,
            runaway_off_s: 30.0,
        },
        // The example skid's acceptance, validation and vote settings (common practice); the
        // probes' own calibrations follow below.
        probes: ProbeSettings { probes: Default::default(), ..phdose::config::example::plating_rinse().probes },
    };
    let named = skid.name.push_str("henson-seborg tank");
    debug_assert!(named.is_ok());
    for (f, mol_per_l) in influent_mol_per_l() {
        let inserted = skid.influent.dissolved.insert(formula(f), mol_per_l as f32);
        debug_assert!(inserted.is_ok());
    }
    for c in [calibration(58.9, 2.1), calibration(59.3, -3.4)] {
        let pushed = skid.probes.probes.push(c);
        debug_assert!(pushed.is_ok());
    }
    skid
}

/// The Henson & Seborg pH neutralization tank as a scenario: the benchmark's nominal steady
/// state, then a +50 % step of the buffer flow after 10 min, for an hour in all.
///
/// **Skid.** Influent = the acid and buffer streams mixed (17.15 mL/s = 61.74 L/h of 2.904e-3 M
/// HNO₃ and 9.62e-4 M NaHCO₃), 25 °C, ideal activities as in the paper. Reagent = the base
/// stream as 3.05e-3 M NaOH (0.0122 % w/w at 1.0 kg/L) on a duty pump of 2 × 56.16 L/h.
/// Setpoint pH 7.0 ± 0.2, tick 1 s, SIMC-style tuning for the ≈ 88.5 s residence time.
///
/// **What is not the benchmark.**
/// - The base stream also carries Wb3 = 5e-5 M carbonate (it is 3.0e-3 M NaOH + 5e-5 M
///   NaHCO₃; our 3.05e-3 M NaOH has its sodium, hence its Wa3, but not its carbonate). Our
///   reagent holds one substance, and moving the carbonate into the influent would be
///   equivalent only at one base flow (it enters with the base stream, in proportion to q3), so
///   it is left out. That changes the steady state: without it the pH-7 base flow is ≈ 1.3 %
///   lower (15.34 instead of 15.55 mL/s with the paper's constants; calculated here, not
///   published) and the tank's carbonate Wb4 ≈ 5.08e-4 instead of 5.28e-4 M.
/// - The tank overflows: its volume stays 2.90 L (207 cm² × 14.0 cm). The paper's level
///   dynamics (an outlet valve, level varying with the flows) are not modelled — our plant has
///   no level-dependent outlet.
/// - The run starts with the tank at the setpoint but the controller's pump at zero (its
///   first tick doses nothing, then the rate limit ramps it up): in a 2.9 L tank the pH dips by
///   a few tenths in the first seconds, so the run's largest error is the start, not the
///   disturbance.
/// - The plant always runs Davies activities (ionic strength ≈ 3 mM here); the controller's
///   model is ideal, as in the paper. The small mismatch is left to the feedback and the
///   adaptation.
/// - The probes: a 5 s first-order lag, no dead time, no drift, 0.2 mV of noise. The paper's
///   measurement is noise-free (from memory); ours needs a living signal, since the crate's
///   probe validation declares a signal that stays within ±0.05 mV for 15 min frozen. 0.2 mV
///   is ≈ 0.003 pH.
///
/// **Disturbance.** The buffer flow steps from 0.55 to 0.825 mL/s after 10 min (the size is
/// ours; from memory of the order of the paper's buffer disturbances) and stays there. It is a
/// [`Slug`] to the end of the run carrying the extra NaHCO₃ that the changed q2 brings,
/// 0.03 M × 0.275/17.15 ≈ 4.81e-4 M: every substance arrives at its true rate; only the extra
/// 0.275 mL/s of water (1.6 % of the influent) is left out.
pub fn henson_seborg() -> Scenario {
    let skid = skid();
    let influent: BTreeMap<String, f64> = influent_mol_per_l().into_iter().map(|(k, v)| (k.to_owned(), v)).collect();
    let extra_nahco3 = BUFFER_NAHCO3_MOL_PER_L * (DISTURBED_BUFFER_FLOW_ML_PER_S - BUFFER_FLOW_ML_PER_S)
        / (ACID_FLOW_ML_PER_S + BUFFER_FLOW_ML_PER_S);
    Scenario {
        skid,
        plant: PlantSettings {
            volume_l: TANK_VOLUME_L,
            outlet_l_per_h: None,
            // The influent in f64 (the skid holds it rounded to f32).
            influent: Some(influent),
            temperature_c: Some(25.0),
            temperature_swing_c: 0.0,
            probe_dead_time_s: 0.0,
            probe_lag_s: 5.0,
            probe_noise_mv: 0.2,
            probe_drift_mv_per_h: vec![],
            reagent_delay_s: 0.0,
            pump_delivery_factor: 1.0,
            reagent_strength_factor: 1.0,
            caustic_stuck_on_at_s: None,
        },
        disturbances: Disturbances {
            flow: vec![],
            daily_flow_amplitude: 0.0,
            slugs: vec![Slug {
                at_s: DISTURBANCE_AT_S,
                duration_s: DURATION_S - DISTURBANCE_AT_S,
                adds: [("NaHCO3".to_owned(), extra_nahco3)].into_iter().collect(),
            }],
            random_slugs_per_day: 0.0,
            random_slug_adds: BTreeMap::new(),
            random_slug_duration_s: 0.0,
        },
        run: RunSettings {
            duration_s: DURATION_S,
            step_s: 0.5,
            seed: 1,
            start_at_setpoint: true,
            reagent_price_per_l: None,
        },
    }
}
