//! Hardware-in-the-loop scenarios: the firmware in QEMU against the plant simulator.
//!
//! Plant and disturbances are the built-in scenario's (the invented plating-shop rinse tank,
//! `phdose_sim::scenario::plating_rinse`) without its flow steps and slug, so each run shows one
//! effect. Every limit below is the skid's own setting (band, hard limits, watchdog) or stated
//! where it is used.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::config::{PumpSettings, blob, boot, example};
use phdose::control::controller::Warnings;
use phdose::control::supervisor::{State, TripReason};
use phdose_hil_tests::{
    Config, Lockstep, built_in_blob, firmware_elf, firmware_elf_mcu, flipped, frame_bytes, host_frame_bytes, pack,
};
use phdose_link::{CRC32, ConfigSource, KIND_SENSORS, RejectCode, SensorFrame, ToBoard, ToHost};
use phdose_sim::scenario::{Disturbances, FlowChange, Scenario, plating_rinse};

/// The built-in scenario without its disturbances, for `minutes` of plant time.
fn quiet(minutes: f64) -> Scenario {
    let mut s = plating_rinse();
    s.disturbances = Disturbances::default();
    s.run.duration_s = minutes * 60.0;
    s
}

fn start(name: &str, s: &Scenario, config: Config<'_>) -> Lockstep {
    Lockstep::start(&firmware_elf(), name, s, config).unwrap_or_else(|e| panic!("{e}"))
}

/// Asserts the board's frame equals the host controller's, bit for bit (compared as encoded
/// frames, so NaN payloads and signed zeros count).
fn assert_bit_exact(l: &Lockstep) {
    for r in &l.records {
        let host = r.host.expect("the host runs the same controller");
        let board = host_frame_bytes(&ToHost::Actuators(r.board));
        let host_bytes = host_frame_bytes(&ToHost::Actuators(host));
        assert!(board == host_bytes, "tick {}: board {:?}\n host {:?}", r.sent.tick, r.board, host);
    }
}

/// (a) Nominal: the tank starts full of raw rinse water (pH about 2.8); the board brings it
/// into the band and holds it, without trips; every tick's outputs equal the host's run of the
/// same controller on the same f32 inputs, bit for bit.
#[test]
fn nominal_the_board_brings_the_tank_into_the_band_and_matches_the_host() {
    let mut s = quiet(60.0);
    s.run.start_at_setpoint = false;
    let mut l = start("nominal", &s, Config::BuiltIn);
    // The hello: the stored blob, allowed, the same boot codes as the host's check.
    let stored = built_in_blob().unwrap();
    let (_, report) = boot::check_blob::<f32>(&stored);
    let h = l.hello;
    assert_eq!(h.source, ConfigSource::BuiltIn);
    assert!(h.allowed && h.controller, "{h:?}");
    assert_eq!(h.blob_crc, CRC32.checksum(&stored));
    assert_eq!(usize::from(h.blob_len), stored.len());
    assert_eq!(usize::from(h.warnings), report.warnings.len());
    let codes: Vec<u16> = report.errors.iter().chain(report.warnings.iter()).map(|f| f.code.number()).collect();
    assert_eq!(&h.codes[..codes.len().min(8)], &codes[..codes.len().min(8)]);
    assert_eq!(h.tick_s, 5.0);

    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    let sp = f64::from(s.skid.control.setpoint_ph);
    let half = f64::from(s.skid.control.band_ph) / 2.0;
    let first_in = l.records.iter().find(|r| (r.ph_before - sp).abs() <= half).map(|r| r.t_s);
    let last_15: Vec<_> = l.records.iter().filter(|r| r.t_s >= s.run.duration_s - 900.0).collect();
    let worst = last_15.iter().map(|r| (r.ph_range.0 - sp).abs().max((r.ph_range.1 - sp).abs())).fold(0.0, f64::max);
    let ticks = l.records.len();
    println!(
        "nominal: {ticks} ticks in {:.2} s wall ({:.2} ms per tick); start pH {:.2}; band reached at {:?} s; worst |e| over the last 15 min {worst:.3}",
        l.wall_s,
        1000.0 * l.wall_s / ticks as f64,
        l.records[0].ph_before,
        first_in
    );
    assert!(l.records[0].ph_before < sp - 3.0, "the tank starts far below the band");
    assert!(worst <= half, "left the band ({half}) in the last 15 minutes: {worst}");
    assert!(l.records.iter().all(|r| r.board.trip.is_none()), "no trip");
    assert!(l.records.iter().skip(1).all(|r| r.board.state == State::Auto));
    // The pins follow the controller: the relay closed exactly while dosing, the PWM at the
    // commanded duty (1000 output steps in the example, 10 000 on the rig's PWM).
    for r in &l.records {
        assert_eq!(r.board.pins.relay, r.board.dosing_enabled);
        if let Some(phdose::control::pump::PumpCommand::Duty(d)) = r.board.pumps[0].map(|p| p.command) {
            let expected = (d * 10_000.0).round() as u16;
            assert_eq!(r.board.pins.duty[0], if r.board.dosing_enabled { expected } else { 0 });
        }
    }
    assert_bit_exact(&l);
    let end = l.finish().unwrap();
    assert!(end.status.success(), "{}", end.log);
    println!("nominal: stack high water {:?} bytes", end.stack_bytes);
    assert!(end.stack_bytes.is_some_and(|b| b > 1024), "{}", end.log);
}

/// The image linked for a small MCU (64 KiB of RAM, the stack at its top) runs the same loop:
/// 20 minutes from raw rinse water, bit for bit the host's outputs.
#[test]
fn the_small_mcu_image_runs_the_same_loop() {
    let mut s = quiet(20.0);
    s.run.start_at_setpoint = false;
    let mut l = Lockstep::start(&firmware_elf_mcu(), "mcu", &s, Config::BuiltIn).unwrap_or_else(|e| panic!("{e}"));
    assert!(l.hello.allowed);
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    assert!(l.records.iter().all(|r| r.board.trip.is_none()));
    assert_bit_exact(&l);
    let end = l.finish().unwrap();
    assert!(end.status.success(), "{}", end.log);
    // The measured stack (the firmware's only RAM besides 4 bytes of statics) leaves at least a
    // quarter of the 64 KiB free.
    let stack = end.stack_bytes.expect("the firmware reports its stack");
    println!("small MCU image: stack high water {stack} bytes of 65536");
    assert!(stack < 48 * 1024, "stack {stack} bytes");
}

/// The cost of a tick on the board, counted in instructions: QEMU's `-icount shift=0` runs one
/// instruction per nanosecond of virtual time and the board's SysTick (25 MHz) measures each
/// reply from the frame's delimiter to the reply's first byte (decode, controller step,
/// outputs, encode). One hour of the nominal run from raw rinse water, then the same with the
/// tank starting at the setpoint.
#[test]
fn instructions_per_tick_under_icount() {
    for start_at_setpoint in [false, true] {
        let mut s = quiet(60.0);
        s.run.start_at_setpoint = start_at_setpoint;
        let mut l = Lockstep::start_with(&firmware_elf(), "icount", &s, Config::BuiltIn, &["-icount", "shift=0"])
            .unwrap_or_else(|e| panic!("{e}"));
        l.run_until(s.run.duration_s, |_, _| {}).unwrap();
        assert!(l.records.iter().all(|r| r.board.trip.is_none()));
        assert_bit_exact(&l);
        let ticks = l.records.len() as u64;
        let end = l.finish().unwrap();
        assert!(end.status.success(), "{}", end.log);
        let c = end.reply_systick.unwrap_or_else(|| panic!("no cost report: {}", end.log));
        let k = phdose_hil_tests::ReplyCost::INSTRUCTIONS_PER_COUNT;
        println!(
            "instructions per tick (start at setpoint: {start_at_setpoint}): {} ticks, min {}, mean {}, max {} (±{k})",
            c.count,
            c.min * k,
            c.mean * k,
            c.max * k
        );
        assert_eq!(c.count, ticks);
        assert!(c.min > 0 && c.min <= c.mean && c.mean <= c.max);
    }
}

/// The stored blob is the example skid as `phdose pack` writes it (regenerate it when the
/// example changes: `cargo run -p phdose-host -- pack --out examples/board/skid/plating-rinse.bin
/// --force`).
#[test]
fn the_stored_blob_is_the_example_skid_as_packed() {
    assert_eq!(built_in_blob().unwrap(), pack(&example::plating_rinse()));
}

/// First tick with a latched trip.
fn first_trip(l: &Lockstep) -> &phdose_hil_tests::Record {
    l.records.iter().find(|r| r.board.trip.is_some()).expect("a trip")
}

/// After the trip tick: relay open, no pump driven, nothing reaching the plant's pumps.
/// The true tank pH stayed strictly inside the skid's hard limits on every tick.
fn assert_inside_limits(l: &Lockstep, s: &Scenario) {
    let (low, high) = (f64::from(s.skid.control.low_limit_ph), f64::from(s.skid.control.high_limit_ph));
    assert!(l.records.iter().all(|r| r.ph_range.0 > low && r.ph_range.1 < high));
}

fn assert_off_after(l: &Lockstep, trip_tick: u32) {
    for r in l.records.iter().filter(|r| r.sent.tick >= trip_tick) {
        assert_eq!(r.board.state, State::Tripped, "tick {}", r.sent.tick);
        assert!(!r.board.pins.relay && r.board.pins.alarm, "tick {}: {:?}", r.sent.tick, r.board.pins);
        assert_eq!(r.board.pins.duty, [0, 0]);
        assert_eq!(r.pump_l_per_h, [0.0, 0.0]);
    }
}

/// (b) A caustic pump stuck at full stroke from minute 10 (it ignores its command; only the
/// dosing-enable relay can stop it). With a pump sized for the duty (1 L/h, as in the
/// simulator's own stuck-pump test) the board latches the runaway trip (112) and opens the
/// relay before the tank's true pH reaches the high hard limit, which it never reaches.
#[test]
fn a_stuck_on_pump_trips_runaway_before_the_high_limit() {
    let mut s = quiet(40.0);
    s.plant.caustic_stuck_on_at_s = Some(600.0);
    if let Some(c) = s.skid.caustic.as_mut() {
        c.pump = PumpSettings::Duty { max_l_per_h: 1.0, min_duty: 0.01, resolution_steps: 1000 };
    }
    let blob = pack(&s.skid);
    let mut l = start("stuck", &s, Config::Send(&blob));
    assert_eq!(l.hello.source, ConfigSource::Link);
    assert!(l.hello.allowed, "{:?}", l.hello);
    assert_eq!(l.hello.blob_crc, CRC32.checksum(&blob));
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    let high = f64::from(s.skid.control.high_limit_ph);
    let trip = first_trip(&l);
    let peak_before =
        l.records.iter().take_while(|r| r.sent.tick < trip.sent.tick).map(|r| r.ph_range.1).fold(f64::MIN, f64::max);
    let peak = l.records.iter().map(|r| r.ph_range.1).fold(f64::MIN, f64::max);
    println!(
        "stuck pump: trip {:?} at {:.0} s (tank pH {:.2}); peak before the trip {peak_before:.2}, over the run {peak:.2} (limit {high})",
        trip.board.trip.map(|t| t.code),
        trip.t_s,
        trip.ph_before
    );
    assert_eq!(trip.board.trip.map(|t| t.code), Some(TripReason::Runaway.code()));
    assert!(trip.t_s > 600.0 && trip.t_s < 600.0 + 600.0, "tripped at {} s", trip.t_s);
    assert!(peak_before < high && peak < high, "the tank reached pH {peak:.2} (limit {high})");
    assert_off_after(&l, trip.sent.tick);
    assert_bit_exact(&l);
    assert!(l.finish().unwrap().status.success());
}

/// (b) The rinse flow stops at minute 10 (the line is shut): the flow switch opens and the
/// board trips on no flow (101) at that very tick, before anything is dosed into a still tank.
#[test]
fn lost_flow_trips_at_once() {
    let mut s = quiet(20.0);
    s.disturbances.flow = vec![FlowChange { at_s: 600.0, to_factor: 0.0, ramp_s: 0.0 }];
    let mut l = start("noflow", &s, Config::BuiltIn);
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    let trip = first_trip(&l);
    assert_eq!(trip.board.trip.map(|t| t.code), Some(TripReason::NoFlow.code()));
    assert!(!trip.sent.flow_switch);
    assert!((trip.t_s - 600.0).abs() < 1e-6, "tripped at {} s", trip.t_s);
    assert_inside_limits(&l, &s);
    assert_off_after(&l, trip.sent.tick);
    assert_bit_exact(&l);
    assert!(l.finish().unwrap().status.success());
}

/// (b) Probe failures: at minute 10 probe 1's cable breaks (its input reads NaN): the board
/// warns (probe fault) and doses on with probe 2; at minute 15 probe 2's breaks too: no
/// trustworthy pH, trip 104 at that tick, pumps off.
#[test]
fn failed_probes_warn_then_trip() {
    let s = quiet(20.0);
    let mut l = start("probes", &s, Config::BuiltIn);
    l.run_until(s.run.duration_s, |t, f: &mut SensorFrame| {
        if t >= 600.0 {
            f.probe_mv[0] = f32::NAN;
        }
        if t >= 900.0 {
            f.probe_mv[1] = f32::NAN;
        }
    })
    .unwrap();
    let one_down: Vec<_> = l.records.iter().filter(|r| r.t_s >= 600.0 && r.t_s < 900.0).collect();
    assert!(!one_down.is_empty());
    for r in &one_down {
        assert!(
            r.board.warnings & Warnings::PROBE_FAULT != 0,
            "tick {}: warnings {:#x}",
            r.sent.tick,
            r.board.warnings
        );
        assert_eq!(r.board.state, State::Auto);
        assert!(r.board.pins.relay);
    }
    let trip = first_trip(&l);
    assert_eq!(trip.board.trip.map(|t| t.code), Some(TripReason::ProbeFault.code()));
    assert!((trip.t_s - 900.0).abs() < 1e-6, "tripped at {} s", trip.t_s);
    assert_inside_limits(&l, &s);
    assert_off_after(&l, trip.sent.tick);
    assert_bit_exact(&l);
    assert!(l.finish().unwrap().status.success());
}

/// (c) A corrupted configuration (one bit flipped in the stored blob's payload): the board's
/// boot checks refuse it (201, blob unreadable), no controller is built, and every tick answers
/// refused (111) with the relay open, no pump driven and the alarm on.
#[test]
fn a_corrupted_config_is_refused_and_nothing_doses() {
    let s = quiet(3.0);
    let mut blob = built_in_blob().unwrap();
    blob[blob::HEADER_LEN + 10] ^= 0x04;
    let mut l = start("badblob", &s, Config::Send(&blob));
    let h = l.hello;
    assert!(!h.allowed && !h.controller, "{h:?}");
    assert_eq!((h.errors, h.codes[0], h.codes[1]), (1, 201, 0));
    assert!(h.tick_s.is_nan());
    assert!(l.host.is_none());
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    for r in &l.records {
        assert_eq!(r.board.state, State::Refused);
        assert_eq!(r.board.trip.map(|t| t.code), Some(TripReason::ConfigInvalid.code()));
        assert!(!r.board.dosing_enabled && r.board.alarm);
        assert!(!r.board.pins.relay && r.board.pins.alarm && r.board.pins.duty == [0, 0]);
        assert_eq!(r.pump_l_per_h, [0.0, 0.0]);
    }
    assert!(l.finish().unwrap().status.success());
}

/// (c) A configuration that decodes but fails its boot checks (setpoint 12 above the high hard
/// limit 10: 208): a controller is built but stays refused, exactly as on the host.
#[test]
fn a_config_failing_its_checks_is_refused() {
    let mut s = quiet(3.0);
    s.skid.control.setpoint_ph = 12.0;
    let blob = pack(&s.skid);
    let mut l = start("refused", &s, Config::Send(&blob));
    assert!(!l.hello.allowed && l.hello.controller, "{:?}", l.hello);
    assert!(l.hello.codes.contains(&208), "{:?}", l.hello.codes);
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    assert!(l.records.iter().all(|r| r.board.state == State::Refused && !r.board.pins.relay && r.board.pins.alarm));
    assert_bit_exact(&l);
    assert!(l.finish().unwrap().status.success());
}

/// Makes the bytes of a broken frame for the run so far.
type MakeBytes<'a> = Box<dyn Fn(&Lockstep) -> Vec<u8> + 'a>;

/// Signs and frames a hand-made body (kind, payload).
fn signed_frame(kind: u8, payload: &[u8]) -> Vec<u8> {
    let mut body = vec![kind];
    body.extend_from_slice(payload);
    body.extend_from_slice(&CRC32.checksum(&body).to_le_bytes());
    let mut out = vec![0_u8; phdose_link::cobs::max_encoded_len(body.len()) + 1];
    let n = phdose_link::cobs::encode(&body, &mut out).unwrap();
    out.truncate(n);
    out.push(0);
    out
}

/// (c) Bad frames while dosing: each is refused with its reason and the outputs go off at
/// once; the next good frame doses again. Then frames lost for longer than the watchdog (30 s
/// in the example skid): the next frame's elapsed time trips stale inputs (108).
#[test]
fn bad_frames_are_refused_and_the_outputs_go_off() {
    let s = quiet(15.0);
    let mut l = start("badframes", &s, Config::BuiltIn);
    l.run_until(300.0, |_, _| {}).unwrap();
    let dosing = |l: &Lockstep| {
        let r = l.records.last().unwrap();
        r.board.state == State::Auto && r.board.pins.relay && r.board.pins.duty[0] > 0
    };
    assert!(dosing(&l));
    let good = |l: &Lockstep| ToBoard::Sensors(SensorFrame { tick: l.next_tick(), ..l.records.last().unwrap().sent });
    let payload = |l: &Lockstep| {
        let wire = frame_bytes(&good(l));
        let mut d = phdose_link::Deframer::new();
        let body = wire.iter().find_map(|b| d.push(*b).map(|r| r.unwrap().to_vec())).unwrap();
        body[1..body.len() - 4].to_vec()
    };
    let mut refused = 0;
    let cases: Vec<(&str, MakeBytes<'_>, RejectCode)> = vec![
        ("bit flip", Box::new(|l: &Lockstep| flipped(&good(l), 77)), RejectCode::Crc),
        (
            "truncated payload",
            Box::new(|l: &Lockstep| signed_frame(KIND_SENSORS, &payload(l)[..20])),
            RejectCode::Length,
        ),
        ("unknown kind", Box::new(|l: &Lockstep| signed_frame(0x55, &payload(l))), RejectCode::UnknownKind),
        (
            "mode 7",
            Box::new(|l: &Lockstep| {
                let mut p = payload(l);
                p[25] = 7;
                signed_frame(KIND_SENSORS, &p)
            }),
            RejectCode::Field,
        ),
        ("broken COBS", Box::new(|_: &Lockstep| vec![0x05, 0x01, 0x02, 0x00]), RejectCode::Framing),
        (
            "too long",
            Box::new(|_: &Lockstep| {
                let mut v = vec![0x42; phdose_link::MAX_FRAME_LEN + 5];
                v.push(0);
                v
            }),
            RejectCode::TooLong,
        ),
        (
            "stale tick",
            Box::new(|l: &Lockstep| frame_bytes(&ToBoard::Sensors(l.records.last().unwrap().sent))),
            RejectCode::TickNotAfter,
        ),
        (
            "config after start",
            Box::new(|_: &Lockstep| frame_bytes(&ToBoard::Config(&[1, 2, 3]))),
            RejectCode::ConfigAfterStart,
        ),
    ];
    for (what, bytes, code) in &cases {
        let b = bytes(&l);
        let r = l.corrupt_tick(&b).unwrap();
        refused += 1;
        assert_eq!(r.code, *code, "{what}");
        assert_eq!(r.rejected, refused, "{what}");
        assert!(!r.pins.relay && r.pins.duty == [0, 0] && r.pins.strokes == [0, 0], "{what}: {:?}", r.pins);
        // The next good frame (one tick number later: 10 s, within the watchdog) doses again.
        l.step().unwrap();
        assert!(dosing(&l), "{what}: {:?}", l.records.last().unwrap().board);
    }
    // Six frames lost: the next one comes 35 s after the last (> 30 s): stale inputs.
    l.lose_frames(6).unwrap();
    let r = l.step().unwrap().clone();
    assert_eq!(r.board.trip.map(|t| t.code), Some(TripReason::StaleInputs.code()), "{:?}", r.board);
    assert!(!r.board.pins.relay);
    l.run_until(s.run.duration_s, |_, _| {}).unwrap();
    assert_off_after(&l, r.sent.tick);
    assert_bit_exact(&l);
    let (low, high) = (f64::from(s.skid.control.low_limit_ph), f64::from(s.skid.control.high_limit_ph));
    assert!(l.records.iter().all(|r| r.ph_range.0 > low && r.ph_range.1 < high));
    assert!(l.finish().unwrap().status.success());
}
