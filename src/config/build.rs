//! From settings to the controller's working values: the influent as a solution, the reagents
//! in mol/L, the pump drives and the control law's settings, widened from `f32` to `R`.
//!
//! Every function returns the boot-check [`Finding`] that explains a refusal, so the boot
//! checks and the controller's construction cannot disagree about what is valid.

use heapless::Vec;

use super::boot::{Code, Finding};
use super::{ActivityModel, ControlSettings, ProbeCalibration, ProbeSettings, PumpSettings, ReagentSettings, Skid};
use crate::chem::{Activity, Solution, substance};
use crate::control::adapt::AdaptSettings;
use crate::control::controller::{Controller, ControllerConfig, Interlocks, ReagentLine};
use crate::control::feedback::PiTuning;
use crate::control::feedforward::{DeadBands, Reagent};
use crate::control::pump::PumpDrive;
use crate::control::regulator::{Law, RegulatorSettings};
use crate::probe::Probe;
use crate::probe::calibration::{Acceptance, Calibration};
use crate::probe::monitor::MonitorSettings;
use crate::probe::vote::VoteSettings;
use crate::real::Real;
use crate::titration::reagent;
use crate::units::Celsius;

/// Acid–base systems the controller's model holds: the influent's and the reagents' together
/// (a reagent adds at most [`crate::control::feedforward::REAGENT_CAPACITY`]).
pub const MODEL_SYSTEMS: usize = 8;

/// Bytes a controller's state and its settings may take together (`f32`, [`MODEL_SYSTEMS`]):
/// 2 KiB, checked at compile time on every target (a 64-bit host's pointers make it the
/// larger case; a 32-bit MCU saves 4 bytes per system reference).
pub const MEMORY_BUDGET_BYTES: usize = 2048;

const _: () = assert!(
    core::mem::size_of::<Controller<f32, MODEL_SYSTEMS>>() + core::mem::size_of::<Skid>() < MEMORY_BUDGET_BYTES,
    "the controller and its settings outgrew their 2 KiB budget"
);

/// `f32` setting → `R`.
pub fn r<R: Real>(v: f32) -> R {
    R::from_f64(f64::from(v))
}

/// The activity model.
pub fn activity(model: ActivityModel) -> Activity {
    match model {
        ActivityModel::Ideal => Activity::Ideal,
        ActivityModel::Davies => Activity::Davies,
    }
}

/// The configured influent at its design temperature.
pub fn influent<R: Real>(skid: &Skid) -> Result<Solution<R, MODEL_SYSTEMS>, Finding> {
    let i = &skid.influent;
    let t = Celsius::new(r::<R>(i.design_temperature_c))
        .map_err(|e| Finding::setting("influent.design_temperature_c", e.celsius))?;
    let mut s = Solution::new(t, activity(i.activity));
    // At most MAX_DISSOLVED entries.
    for (formula, mol_per_l) in &i.dissolved {
        let sub = substance::find(formula).map_err(|_| Finding::new(Code::UnknownSubstance, 0.0, 0.0))?;
        s.add_substance(sub, r(*mol_per_l))
            .map_err(|_| Finding::new(Code::InfluentComposition, f64::from(*mol_per_l), 0.0))?;
    }
    Ok(s)
}

/// A pump drive.
pub fn pump<R: Real>(p: &PumpSettings) -> Result<PumpDrive<R>, Finding> {
    let drive = match *p {
        PumpSettings::Pulse { stroke_volume_ml, max_strokes_per_min } => {
            PumpDrive::pulse(r(stroke_volume_ml), r(max_strokes_per_min))
        }
        PumpSettings::Duty { max_l_per_h, min_duty, resolution_steps } => {
            PumpDrive::duty(r(max_l_per_h), r(min_duty), resolution_steps)
        }
    };
    drive.map_err(|e| Finding::named(Code::PumpSettings, e.name, e.value, 0.0))
}

/// A reagent at `temperature` with its pump's maximum.
pub fn reagent<R: Real>(
    settings: &ReagentSettings,
    temperature: Celsius<R>,
    model: ActivityModel,
) -> Result<Reagent<R>, Finding> {
    let sub = substance::find(&settings.substance).map_err(|_| Finding::new(Code::UnknownSubstance, 0.0, 0.0))?;
    let w = f64::from(settings.mass_percent);
    let density = match settings.density_kg_per_l {
        Some(d) => f64::from(d),
        None => reagent::common_grade(sub, w).map(|g| g.density_kg_per_l).ok_or(Finding::new(
            Code::ReagentStrength,
            w,
            0.0,
        ))?,
    };
    let mol_per_l: R = reagent::mol_per_l(sub, R::from_f64(w), R::from_f64(density)).map_err(|e| match e {
        reagent::ReagentError::Density(d) => Finding::named(Code::ReagentStrength, "density_kg_per_l", d, 0.0),
        _ => Finding::named(Code::ReagentStrength, "mass_percent", w, 0.0),
    })?;
    let mut solution = Solution::new(temperature, activity(model));
    solution.add_substance(sub, mol_per_l).map_err(|_| Finding::new(Code::ReagentStrength, mol_per_l.to_f64(), 0.0))?;
    let max_l_per_h = pump::<R>(&settings.pump)?.max_l_per_h();
    Ok(Reagent { solution, max_l_per_h })
}

/// The control law's settings.
pub fn regulator_settings<R: Real>(c: &ControlSettings) -> RegulatorSettings<R> {
    RegulatorSettings {
        law: Law::Model,
        setpoint_ph: r(c.setpoint_ph),
        pi: PiTuning {
            integral_time_s: r(c.integral_time_s),
            closed_loop_time_constant_s: r(c.closed_loop_time_constant_s),
            rate_limit_l_per_h_per_s: r(c.rate_limit_l_per_h_per_s),
        },
        dead_bands: DeadBands {
            flow_fraction: r(c.flow_dead_band_fraction),
            temperature_c: r(c.temperature_dead_band_c),
            correction_fraction: r(c.flow_dead_band_fraction),
        },
        adapt: AdaptSettings {
            tank_volume_l: r(c.tank_volume_l),
            filter_time_s: r(c.adaptation_filter_time_s),
            bound_fraction: r(c.adaptation_bound_fraction),
            residual_bound_ph: r(c.residual_bound_ph),
            residual_time_s: r(c.residual_time_s),
        },
        switch_dead_band_ph: r(c.switch_dead_band_ph),
    }
}

fn probe_setting(e: crate::probe::InvalidSetting) -> Finding {
    Finding::named(Code::SettingOutOfRange, e.name, e.value, 0.0)
}

/// A stored calibration.
pub fn calibration<R: Real>(c: &ProbeCalibration) -> Result<Calibration<R>, Finding> {
    let t = Celsius::new(r::<R>(c.calibration_temperature_c))
        .map_err(|e| Finding::setting("probes.calibration_temperature_c", e.celsius))?;
    Calibration::new(r(c.slope_mv_per_ph), r(c.offset_mv), t).map_err(probe_setting)
}

/// The calibration acceptance limits.
pub fn acceptance<R: Real>(p: &ProbeSettings) -> Result<Acceptance<R>, Finding> {
    Acceptance::new(r(p.min_slope_percent), r(p.max_slope_percent), r(p.max_abs_offset_mv)).map_err(probe_setting)
}

/// The signal monitor's limits.
pub fn monitor<R: Real>(p: &ProbeSettings) -> Result<MonitorSettings<R>, Finding> {
    MonitorSettings::new(
        r(p.max_abs_mv),
        r(p.max_rate_ph_per_s),
        r(p.max_noise_mv),
        r(p.noise_time_s),
        r(p.frozen_band_mv),
        r(p.frozen_window_s),
    )
    .map_err(probe_setting)
}

/// The vote's settings.
pub fn vote<R: Real>(p: &ProbeSettings) -> Result<VoteSettings<R>, Finding> {
    VoteSettings::new(r(p.max_spread_ph)).map_err(probe_setting)
}

/// The controller's configuration from settings. Fails with the first finding; the boot checks
/// ([`super::boot::check`]) report all of them.
pub fn controller_config<R: Real>(skid: &Skid) -> Result<ControllerConfig<R, MODEL_SYSTEMS>, Finding> {
    let inf = influent::<R>(skid)?;
    let t = inf.temperature();
    let mut lines: [Option<ReagentLine<R>>; 2] = [None, None];
    for (slot, settings) in lines.iter_mut().zip([&skid.caustic, &skid.acid]) {
        if let Some(s) = settings {
            *slot = Some(ReagentLine {
                reagent: reagent::<R>(s, t, skid.influent.activity)?,
                drive: pump::<R>(&s.pump)?,
                max_per_hour_l: r(s.max_per_hour_l),
                max_per_day_l: r(s.max_per_day_l),
            });
        }
    }
    let monitor = monitor::<R>(&skid.probes)?;
    let mut probes = Vec::new();
    for c in &skid.probes.probes {
        // At most MAX_PROBES stored, the same capacity: the push cannot fail.
        let pushed = probes.push(Probe::new(calibration::<R>(c)?, monitor));
        debug_assert!(pushed.is_ok());
    }
    let c = &skid.control;
    let l = &skid.interlocks;
    Ok(ControllerConfig {
        regulator: regulator_settings(c),
        influent: inf,
        design_flow_l_per_h: r(skid.influent.design_flow_l_per_h),
        lines,
        low_limit_ph: r(c.low_limit_ph),
        high_limit_ph: r(c.high_limit_ph),
        interlocks: Interlocks {
            no_flow_below_l_per_h: r(l.no_flow_below_l_per_h),
            max_tick_age_s: r(l.max_tick_age_s),
            mismatch_trip_ph: r(l.mismatch_trip_ph),
            mismatch_trip_s: r(l.mismatch_trip_s),
            runaway_margin_ph: r(l.runaway_margin_ph),
            runaway_off_s: r(l.runaway_off_s),
        },
        probes,
        vote: vote::<R>(&skid.probes)?,
    })
}

/// Boot checks and construction in one: the controller a board starts with. It is built even
/// when the report refuses dosing (it then stays in the refused state and shows its probes),
/// unless the settings cannot make a controller at all.
pub fn controller<R: Real>(skid: &Skid) -> Result<(Controller<R, MODEL_SYSTEMS>, super::boot::BootReport), Finding> {
    let report = super::boot::check::<R>(skid);
    let config = controller_config::<R>(skid)?;
    let allowed = report.allowed();
    let c = Controller::new(config, allowed).map_err(|_| Finding::new(Code::ModelFailed, 0.0, 0.0))?;
    Ok((c, report))
}
