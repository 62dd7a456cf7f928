//! The built-in example skid (invented): the rinse-water neutralization tank of a fictional
//! plating shop. The same rinse water as the command line's `plan --example`.

use heapless::{LinearMap, String, Vec};

use super::{
    ActivityModel, ControlSettings, Formula, InfluentSettings, InterlockSettings, ProbeCalibration, ProbeSettings,
    PumpSettings, ReagentSettings, Skid,
};

fn text<const N: usize>(s: &str) -> String<N> {
    let mut out = String::new();
    // Every literal below fits its capacity (a test builds the example).
    let pushed = out.push_str(s);
    debug_assert!(pushed.is_ok(), "example text {s} too long");
    out
}

/// The plating-rinse skid: 1200 L/h of rinse water (sulfuric and hydrochloric acid dragged out
/// of the pickling tanks, bicarbonate alkalinity of the make-up water) at 18 °C, a 250 L
/// overflowing tank, 25 % caustic on an analog-input metering pump (10 L/h, 1000 steps),
/// setpoint pH 7.0 ± 0.15, two probes.
pub fn plating_rinse() -> Skid {
    let mut dissolved: LinearMap<Formula, f32, { super::MAX_DISSOLVED }> = LinearMap::new();
    for (formula, mol_per_l) in [("H2SO4", 0.0012), ("HCl", 0.0006), ("NaHCO3", 0.0010)] {
        let inserted = dissolved.insert(text(formula), mol_per_l);
        debug_assert!(inserted.is_ok());
    }
    let calibration = |slope_mv_per_ph: f32, offset_mv: f32, age_days: f32| ProbeCalibration {
        slope_mv_per_ph,
        offset_mv,
        calibration_temperature_c: 20.0,
        age_days,
    };
    let mut probes = Vec::new();
    for c in [calibration(57.9, 4.2, 12.0), calibration(58.4, -6.8, 12.0)] {
        let pushed = probes.push(c);
        debug_assert!(pushed.is_ok());
    }
    let tank_volume_l = 250.0;
    let residence_s = tank_volume_l / 1200.0 * 3600.0;
    Skid {
        name: text("plating rinse tank 2"),
        influent: InfluentSettings {
            design_flow_l_per_h: 1200.0,
            min_flow_l_per_h: 600.0,
            max_flow_l_per_h: 1800.0,
            design_temperature_c: 18.0,
            activity: ActivityModel::Davies,
            dissolved,
        },
        caustic: Some(ReagentSettings {
            substance: text("NaOH"),
            mass_percent: 25.0,
            density_kg_per_l: None,
            pump: PumpSettings::Duty { max_l_per_h: 10.0, min_duty: 0.01, resolution_steps: 1000 },
            max_per_hour_l: 2.5,
            max_per_day_l: 30.0,
        }),
        acid: None,
        control: ControlSettings {
            setpoint_ph: 7.0,
            band_ph: 0.3,
            low_limit_ph: 1.0,
            high_limit_ph: 10.0,
            tick_s: 5.0,
            // SIMC (Skogestad 2003, from memory) on the flow-mapped process, which the law makes
            // first order with unit gain: τ = the residence time (750 s), θ ≈ 35 s (sample-line
            // dead time, probe lag, reagent line, half a tick), τc = θ: Ti = min(τ, 4·(τc + θ))
            // = 140 s (rounded) and Kc = τ/(τc + θ) ≈ 10.6, i.e. λ = Ti/Kc ≈ 15 s.
            integral_time_s: 140.0,
            closed_loop_time_constant_s: 15.0,
            rate_limit_l_per_h_per_s: 0.05,
            switch_dead_band_ph: 0.3,
            flow_dead_band_fraction: 0.02,
            temperature_dead_band_c: 0.5,
            tank_volume_l,
            adaptation_filter_time_s: 3.0 * residence_s,
            adaptation_bound_fraction: 0.5,
            residual_bound_ph: 0.5,
            residual_time_s: 1200.0,
        },
        interlocks: InterlockSettings {
            no_flow_below_l_per_h: 100.0,
            max_tick_age_s: 30.0,
            mismatch_trip_ph: 2.0,
            mismatch_trip_s: 1800.0,
            runaway_margin_ph: 0.8,
            runaway_off_s: 40.0,
        },
        probes: ProbeSettings {
            probes,
            min_slope_percent: 95.0,
            max_slope_percent: 105.0,
            max_abs_offset_mv: 30.0,
            max_abs_mv: 600.0,
            max_rate_ph_per_s: 0.2,
            max_noise_mv: 5.0,
            noise_time_s: 60.0,
            frozen_band_mv: 0.05,
            frozen_window_s: 900.0,
            max_spread_ph: 0.4,
            calibration_max_age_days: 30.0,
        },
    }
}
