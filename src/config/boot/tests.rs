//! Boot-check tests: the example skid passes; a table of bad configurations, each refused with
//! its expected code; every single-bit flip of the example's blob is refused.

use super::*;
use crate::config::{PumpSettings, example};

fn report(skid: &Skid) -> BootReport {
    check::<f32>(skid)
}

#[test]
fn the_example_skid_is_allowed_in_f32_and_f64() {
    for r in [check::<f32>(&example::plating_rinse()), check::<f64>(&example::plating_rinse())] {
        assert!(r.allowed(), "{r:?}");
        assert!(r.errors.is_empty());
    }
}

type Edit = fn(&mut Skid);

/// (what is wrong, the edit, the expected code).
const BAD: &[(&str, Edit, Code)] = &[
    ("band of zero", |s| s.control.band_ph = 0.0, Code::SettingOutOfRange),
    ("NaN setpoint", |s| s.control.setpoint_ph = f32::NAN, Code::SettingOutOfRange),
    ("integral time of a week", |s| s.control.integral_time_s = 6e5, Code::SettingOutOfRange),
    ("tick of an hour", |s| s.control.tick_s = 3600.0, Code::SettingOutOfRange),
    ("negative integral time", |s| s.control.integral_time_s = -5.0, Code::SettingOutOfRange),
    ("design flow above max", |s| s.influent.design_flow_l_per_h = 5000.0, Code::FlowsInconsistent),
    (
        "limits swapped",
        |s| {
            s.control.low_limit_ph = 10.0;
            s.control.high_limit_ph = 1.0;
        },
        Code::LimitsInconsistent,
    ),
    ("setpoint at the high limit", |s| s.control.high_limit_ph = 7.1, Code::SetpointOutsideLimits),
    ("watchdog shorter than the tick", |s| s.interlocks.max_tick_age_s = 2.0, Code::Watchdog),
    (
        "unknown influent substance",
        |s| {
            let _ = s.influent.dissolved.insert(crate::config::Formula::try_from("Xy2Q").unwrap(), 0.001);
        },
        Code::UnknownSubstance,
    ),
    (
        "influent amount beyond 20 mol/L",
        |s| {
            let _ = s.influent.dissolved.insert(crate::config::Formula::try_from("NaCl").unwrap(), 50.0);
        },
        Code::InfluentComposition,
    ),
    ("no reagent", |s| s.caustic = None, Code::NoReagent),
    (
        "acid where caustic is needed",
        |s| {
            let mut acid = s.caustic.take().unwrap();
            acid.substance = crate::config::Formula::try_from("HCl").unwrap();
            acid.mass_percent = 32.0;
            s.acid = Some(acid);
        },
        Code::Unreachable,
    ),
    (
        "setpoint beyond a dilute reagent",
        |s| {
            let c = s.caustic.as_mut().unwrap();
            c.mass_percent = 0.0001;
            c.density_kg_per_l = Some(1.0);
            s.control.setpoint_ph = 10.5;
            s.control.high_limit_ph = 12.0;
        },
        Code::Unreachable,
    ),
    (
        "pump too small",
        |s| {
            s.caustic.as_mut().unwrap().pump =
                PumpSettings::Duty { max_l_per_h: 0.2, min_duty: 0.0, resolution_steps: 1000 };
        },
        Code::BeyondPump,
    ),
    (
        "pump too coarse",
        |s| {
            s.caustic.as_mut().unwrap().pump =
                PumpSettings::Duty { max_l_per_h: 10.0, min_duty: 0.0, resolution_steps: 4 };
        },
        Code::TooSteep,
    ),
    ("no probe", |s| s.probes.probes.clear(), Code::NoProbe),
    ("probe slope half of Nernst", |s| s.probes.probes[0].slope_mv_per_ph = 29.0, Code::CalibrationRejected),
    ("probe offset 90 mV", |s| s.probes.probes[1].offset_mv = 90.0, Code::CalibrationRejected),
    ("hourly limit above the daily", |s| s.caustic.as_mut().unwrap().max_per_day_l = 1.0, Code::OverdoseGuard),
    ("hourly limit below the design dose", |s| s.caustic.as_mut().unwrap().max_per_hour_l = 0.1, Code::OverdoseGuard),
    ("unknown density", |s| s.caustic.as_mut().unwrap().mass_percent = 27.0, Code::ReagentStrength),
    (
        "acid onto hypochlorite to pH 3",
        |s| acid_skid(s, &[("NaOCl", 0.01), ("NaCl", 0.01)], "HCl", 32.0, 3.0),
        Code::ChlorineRelease,
    ),
    (
        "acid onto sulfide to pH 5",
        |s| acid_skid(s, &[("NaHS", 0.002), ("NaOH", 0.002)], "H2SO4", 96.0, 5.0),
        Code::HydrogenSulfideRelease,
    ),
    (
        "pump of zero stroke",
        |s| {
            s.caustic.as_mut().unwrap().pump =
                PumpSettings::Pulse { stroke_volume_ml: 0.0, max_strokes_per_min: 100.0 };
        },
        Code::PumpSettings,
    ),
];

/// Turns the example into an acid-dosing skid: the influent replaced by `dissolved`, the caustic
/// by `substance` at `mass_percent` on the same pump, the setpoint moved to `setpoint_ph`.
/// (Invented: the cleaning-station effluent of a fictional dairy, the scrubber bleed of a
/// fictional tannery.)
fn acid_skid(s: &mut Skid, dissolved: &[(&str, f32)], substance: &str, mass_percent: f32, setpoint_ph: f32) {
    s.influent.dissolved.clear();
    for (f, c) in dissolved {
        let _ = s.influent.dissolved.insert(crate::config::Formula::try_from(*f).unwrap(), *c);
    }
    let mut acid = s.caustic.take().unwrap();
    acid.substance = crate::config::Formula::try_from(substance).unwrap();
    acid.mass_percent = mass_percent;
    s.acid = Some(acid);
    s.control.setpoint_ph = setpoint_ph;
}

#[test]
fn gas_release_is_judged_at_the_setpoint_and_reported_once() {
    // Hypochlorite water acidified only to pH 8: far above where Cl2 appears.
    let mut mild = example::plating_rinse();
    acid_skid(&mut mild, &[("NaOCl", 0.01), ("NaCl", 0.01)], "HCl", 32.0, 8.0);
    for r in [check::<f32>(&mild), check::<f64>(&mild)] {
        assert!(!r.has(Code::ChlorineRelease), "{r:?}");
    }
    // To pH 3 it is refused, once (at the design flow), with the setpoint and the release pH.
    let mut sharp = example::plating_rinse();
    acid_skid(&mut sharp, &[("NaOCl", 0.01), ("NaCl", 0.01)], "HCl", 32.0, 3.0);
    let r = check::<f32>(&sharp);
    let found: std::vec::Vec<_> = r.errors.iter().filter(|f| f.code == Code::ChlorineRelease).collect();
    assert_eq!(found.len(), 1, "{r:?}");
    assert_eq!((found[0].name, found[0].value), ("acid", 3.0));
    assert!(found[0].limit > 3.0 && found[0].limit < 7.5, "{:?}", found[0]);
}

#[test]
fn bad_configurations_are_refused_with_their_code() {
    assert!(BAD.len() >= 15);
    for (what, edit, code) in BAD {
        let mut skid = example::plating_rinse();
        edit(&mut skid);
        for r in [check::<f32>(&skid), check::<f64>(&skid)] {
            assert!(!r.allowed(), "{what}: allowed: {r:?}");
            assert!(r.errors.iter().any(|f| f.code == *code), "{what}: expected {code:?}, got {:?}", r.errors);
        }
    }
}

#[test]
fn warnings_do_not_refuse() {
    let mut skid = example::plating_rinse();
    skid.probes.probes.truncate(1);
    skid.probes.probes[0].age_days = 90.0;
    let r = report(&skid);
    assert!(r.allowed(), "{r:?}");
    assert!(r.has(Code::SingleProbe) && r.has(Code::CalibrationOld));
}

#[test]
fn every_single_bit_flip_of_the_blob_is_refused_by_the_boot_check() {
    let mut buf = [0_u8; crate::config::blob::MAX_BLOB_LEN];
    let n = blob::encode(&example::plating_rinse(), &mut buf).unwrap();
    let (skid, r) = check_blob::<f32>(&buf[..n]);
    assert!(skid.is_some() && r.allowed(), "{r:?}");
    for byte in 0..n {
        for bit in 0..8 {
            buf[byte] ^= 1 << bit;
            let (_, r) = check_blob::<f32>(&buf[..n]);
            assert!(!r.allowed() && r.has(Code::BlobUnreadable), "bit {bit} of byte {byte}");
            buf[byte] ^= 1 << bit;
        }
    }
}

#[test]
fn codes_are_stable_and_messages_carry_the_numbers() {
    let numbers = Code::ALL.map(Code::number);
    assert!(numbers.windows(2).all(|w| w[0] < w[1]), "{numbers:?}");
    assert_eq!(numbers.iter().filter(|n| **n < 300).count(), 20);
    let f = Finding::named(Code::BeyondPump, "caustic", 12.5, 10.0);
    assert_eq!(std::format!("{f}"), "210: dose exceeds the pump's maximum (caustic): 12.5 (limit 10)");
    assert!(Code::BeyondPump.is_error() && !Code::SingleProbe.is_error());
}

#[test]
fn a_dose_below_the_pump_turndown_is_a_warning() {
    // The example's caustic dose is well below half of its 10 L/h pump: with a minimum duty
    // of 0.5 the pump cannot deliver it steadily.
    let mut skid = example::plating_rinse();
    if let Some(caustic) = skid.caustic.as_mut() {
        caustic.pump = PumpSettings::Duty { max_l_per_h: 10.0, min_duty: 0.5, resolution_steps: 1000 };
    }
    for r in [check::<f32>(&skid), check::<f64>(&skid)] {
        let f = r.warnings.iter().find(|f| f.code == Code::BelowTurndown).expect("turndown warning");
        assert!(f.value > 0.0 && f.value < 5.0 && (f.limit - 5.0).abs() < 1e-4, "{f:?}");
    }
    // The example itself has none.
    assert!(!report(&example::plating_rinse()).has(Code::BelowTurndown));
    // A minimum influent flow too small to plan with is a setting out of range, named.
    let mut tiny = example::plating_rinse();
    tiny.influent.min_flow_l_per_h = 1e-6;
    let r = report(&tiny);
    assert!(
        r.errors.iter().any(|f| f.code == Code::SettingOutOfRange && f.name == "influent.min_flow_l_per_h"),
        "{r:?}"
    );
}

#[test]
fn a_stuck_pump_that_outruns_the_runaway_interlock_is_a_warning() {
    // The example's 10 L/h caustic pump is about 24 times its planned dose: stuck at full flow,
    // the ideally mixed 250 L tank crosses the high limit (pH 10) about 7 s after leaving the
    // setpoint, long before the runaway interlock's 40 s.
    let skid = example::plating_rinse();
    let times: std::vec::Vec<f64> = [check::<f32>(&skid), check::<f64>(&skid)]
        .iter()
        .map(|r| {
            let f = r.warnings.iter().find(|f| f.code == Code::StuckPumpOutrunsRunaway).expect("warning 306");
            assert_eq!((f.name, f.limit), ("caustic", 40.0), "{f:?}");
            assert!(f.value > 0.0 && f.value < 40.0, "{f:?}");
            f.value
        })
        .collect();
    assert!((times[0] / times[1] - 1.0).abs() < 1e-2, "f32 {} vs f64 {}", times[0], times[1]);
    // The model's times scale with the tank's volume (τ = V/Q): four times the volume, four
    // times the time, still under 40 s.
    let mut bigger = example::plating_rinse();
    bigger.control.tank_volume_l *= 4.0;
    let r = check::<f64>(&bigger);
    let f = r.warnings.iter().find(|f| f.code == Code::StuckPumpOutrunsRunaway).expect("warning 306");
    assert!((f.value / (4.0 * times[1]) - 1.0).abs() < 1e-3, "{} vs 4 × {}", f.value, times[1]);
    // Ten times the volume: about 70 s, after the interlock's 40 s: no warning.
    let mut large = example::plating_rinse();
    large.control.tank_volume_l *= 10.0;
    assert!(!check::<f64>(&large).has(Code::StuckPumpOutrunsRunaway));
}
