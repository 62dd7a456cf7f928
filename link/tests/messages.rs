//! The link's messages: layouts, round trips (proptest), and refusal of malformed input.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::config::{boot, build, example};
use phdose::control::feedforward::ReagentSide;
use phdose::control::pump::PumpCommand;
use phdose::control::supervisor::{ModeRequest, State};
use phdose_link::*;
use proptest::prelude::*;

/// Takes every frame out of `wire` with a fresh deframer: each frame's body, or its error.
fn deframe(wire: &[u8]) -> Vec<Result<Vec<u8>, FrameError>> {
    let mut d = Deframer::new();
    wire.iter().filter_map(|b| d.push(*b).map(|r| r.map(<[u8]>::to_vec))).collect()
}

fn one_body(wire: &[u8]) -> Vec<u8> {
    let frames = deframe(wire);
    assert_eq!(frames.len(), 1, "{frames:?}");
    frames.into_iter().next().unwrap().unwrap()
}

fn sensors() -> SensorFrame {
    SensorFrame {
        tick: 0x0102_0304,
        probe_mv: [12.5, -3.25, f32::NAN],
        temperature_c: 18.0,
        influent_flow_l_per_h: Some(1200.0),
        flow_switch: true,
        reagent_low: [false, true],
        reset: false,
        mode: ModeRequest::Auto,
        manual_side: ReagentSide::Caustic,
        manual_l_per_h: 0.0,
    }
}

fn pins() -> Pins {
    Pins { relay: true, alarm: false, fault: false, duty: [412, 0], duty_max: [10_000, 0], strokes: [0, 7] }
}

/// A real controller's first outputs: the example skid, one tick.
fn actuators() -> ActuatorFrame {
    let skid = example::plating_rinse();
    let (mut c, report) = build::controller::<f32>(&skid).unwrap();
    assert!(report.allowed());
    // The first tick leaves Starting for Idle; the second grants the mode asked for (auto).
    c.step(&sensors().tick_inputs(5.0));
    let out = c.step(&sensors().tick_inputs(5.0));
    ActuatorFrame::from_outputs(9, &out, pins())
}

fn encode_board(m: &ToBoard<'_>) -> Vec<u8> {
    let mut out = [0_u8; MAX_FRAME_LEN];
    let n = m.encode(&mut out).unwrap();
    out[..n].to_vec()
}

fn encode_host(m: &ToHost) -> Vec<u8> {
    let mut out = [0_u8; MAX_FRAME_LEN];
    let n = m.encode(&mut out).unwrap();
    out[..n].to_vec()
}

#[test]
fn payload_lengths_match_the_documented_layouts() {
    // Body = kind + payload + CRC; the lengths are the ones the types' docs list.
    let body = one_body(&encode_board(&ToBoard::Sensors(sensors())));
    assert_eq!(body.len(), 1 + SensorFrame::PAYLOAD_LEN + 4);
    assert_eq!(SensorFrame::PAYLOAD_LEN, 31);
    let body = one_body(&encode_host(&ToHost::Actuators(actuators())));
    assert_eq!(body.len(), 1 + ActuatorFrame::PAYLOAD_LEN + 4);
    assert_eq!(ActuatorFrame::PAYLOAD_LEN, 105);
    let report = boot::check::<f32>(&example::plating_rinse());
    let hello = Hello::new(ConfigSource::BuiltIn, b"blob", Some(5.0), &report, true);
    let body = one_body(&encode_host(&ToHost::Hello(hello)));
    assert_eq!(body.len(), 1 + Hello::PAYLOAD_LEN + 4);
    let reject = Reject { code: RejectCode::Crc, detail: 7, rejected: 1, pins: Pins::default() };
    let body = one_body(&encode_host(&ToHost::Reject(reject)));
    assert_eq!(body.len(), 1 + Reject::PAYLOAD_LEN + 4);
    assert_eq!(one_body(&encode_board(&ToBoard::EndOfRun)).len(), 5);
}

#[test]
fn the_sensor_layout_byte_by_byte() {
    // The layout documented on `SensorFrame`, written out by hand.
    let body = one_body(&encode_board(&ToBoard::Sensors(sensors())));
    assert_eq!(body[0], KIND_SENSORS);
    assert_eq!(&body[1..5], &[0x04, 0x03, 0x02, 0x01]);
    assert_eq!(&body[5..9], &12.5_f32.to_le_bytes());
    assert_eq!(&body[9..13], &(-3.25_f32).to_le_bytes());
    assert_eq!(&body[13..17], &f32::NAN.to_bits().to_le_bytes());
    assert_eq!(&body[17..21], &18.0_f32.to_le_bytes());
    assert_eq!(&body[21..25], &1200.0_f32.to_le_bytes());
    assert_eq!(body[25], 0b1_0101, "flow switch, acid low, flow meter");
    assert_eq!(body[26], 1, "auto");
    assert_eq!(body[27], 0, "caustic");
    assert_eq!(&body[28..32], &0.0_f32.to_le_bytes());
    // CRC-32/ISO-HDLC check value of "123456789" is 0xCBF43926 (the CRC catalogue's check
    // value for this algorithm, as the `crc` crate lists it).
    assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    assert_eq!(&body[32..], &CRC32.checksum(&body[..32]).to_le_bytes());
}

#[test]
fn messages_round_trip() {
    let s = sensors();
    let wire = encode_board(&ToBoard::Sensors(s));
    let body = one_body(&wire);
    let ToBoard::Sensors(back) = decode_to_board(&body).unwrap() else { panic!() };
    assert_eq!(encode_board(&ToBoard::Sensors(back)), wire);
    assert_eq!(back.probe_mv[2].to_bits(), f32::NAN.to_bits());

    let blob = [7_u8; MAX_CONFIG_LEN];
    let wire = encode_board(&ToBoard::Config(&blob));
    assert!(wire.len() <= MAX_FRAME_LEN);
    let body = one_body(&wire);
    assert_eq!(decode_to_board(&body).unwrap(), ToBoard::Config(&blob));
    assert_eq!(decode_to_board(&one_body(&encode_board(&ToBoard::EndOfRun))).unwrap(), ToBoard::EndOfRun);

    let a = actuators();
    assert_eq!(a.state, State::Auto);
    let wire = encode_host(&ToHost::Actuators(a));
    assert_eq!(decode_to_host(&one_body(&wire)).unwrap(), ToHost::Actuators(a));
}

#[test]
fn a_configuration_longer_than_a_blob_is_refused_both_ways() {
    let blob = [1_u8; MAX_CONFIG_LEN + 1];
    let mut out = [0_u8; 2 * MAX_FRAME_LEN];
    assert_eq!(ToBoard::Config(&blob).encode(&mut out), Err(EncodeError::ConfigTooLong { len: MAX_CONFIG_LEN + 1 }));
    // Built by hand: kind, payload, CRC.
    let mut body = vec![KIND_CONFIG];
    body.extend_from_slice(&blob);
    body.extend_from_slice(&CRC32.checksum(&body).to_le_bytes());
    assert!(matches!(decode_to_board(&body), Err(DecodeError::Length { kind: KIND_CONFIG, .. })));
}

#[test]
fn every_single_bit_flip_is_refused() {
    for wire in [encode_board(&ToBoard::Sensors(sensors())), encode_host(&ToHost::Actuators(actuators()))] {
        let body = one_body(&wire);
        for i in 0..body.len() * 8 {
            let mut b = body.clone();
            b[i / 8] ^= 1 << (i % 8);
            let err = if body[0] == KIND_SENSORS { decode_to_board(&b).err() } else { decode_to_host(&b).err() };
            assert!(matches!(err, Some(DecodeError::Crc { .. })), "bit {i}: {err:?}");
        }
    }
}

/// Signs a hand-made body: kind, payload, CRC.
fn signed(kind: u8, payload: &[u8]) -> Vec<u8> {
    let mut b = vec![kind];
    b.extend_from_slice(payload);
    b.extend_from_slice(&CRC32.checksum(&b).to_le_bytes());
    b
}

#[test]
fn malformed_bodies_get_typed_errors() {
    let body = one_body(&encode_board(&ToBoard::Sensors(sensors())));
    let payload = &body[1..body.len() - 4];
    assert_eq!(decode_to_board(&[]), Err(DecodeError::TooShort { len: 0 }));
    assert_eq!(decode_to_board(&[1, 2, 3, 4]), Err(DecodeError::TooShort { len: 4 }));
    // Truncated and padded payloads, correctly signed.
    assert_eq!(
        decode_to_board(&signed(KIND_SENSORS, &payload[..30])),
        Err(DecodeError::Length { kind: KIND_SENSORS, expected: 31, actual: 30 })
    );
    let mut long = payload.to_vec();
    long.push(0);
    assert_eq!(
        decode_to_board(&signed(KIND_SENSORS, &long)),
        Err(DecodeError::Length { kind: KIND_SENSORS, expected: 31, actual: 32 })
    );
    assert_eq!(
        decode_to_board(&signed(KIND_END, &[0])),
        Err(DecodeError::Length { kind: KIND_END, expected: 0, actual: 1 })
    );
    // Kinds of the other direction, and unknown kinds.
    assert_eq!(
        decode_to_board(&signed(KIND_ACTUATORS, payload)),
        Err(DecodeError::UnknownKind { kind: KIND_ACTUATORS })
    );
    assert_eq!(decode_to_host(&signed(KIND_SENSORS, payload)), Err(DecodeError::UnknownKind { kind: KIND_SENSORS }));
    assert_eq!(decode_to_host(&signed(0x7F, &[])), Err(DecodeError::UnknownKind { kind: 0x7F }));
    // Fields: reserved flag bit, unknown mode and side, a flow value without the flow-meter flag.
    let field = |offset: usize, value: u8| {
        let mut p = payload.to_vec();
        p[offset] = value;
        decode_to_board(&signed(KIND_SENSORS, &p)).map(|_| ())
    };
    assert_eq!(field(24, 0x20 | 0x11), Err(DecodeError::Field { field: Field::Flags, value: 0x31 }));
    assert_eq!(field(25, 3), Err(DecodeError::Field { field: Field::Mode, value: 3 }));
    assert_eq!(field(26, 2), Err(DecodeError::Field { field: Field::ManualSide, value: 2 }));
    assert_eq!(
        field(24, 0x01),
        Err(DecodeError::Field { field: Field::Flow, value: 1200.0_f32.to_bits() }),
        "flow bits without the flow-meter flag"
    );
    // Actuator frame: unknown state, trip numbers without a code, unknown pump kind.
    let body = one_body(&encode_host(&ToHost::Actuators(actuators())));
    let payload = &body[1..body.len() - 4];
    let host_field = |offset: usize, value: u8| {
        let mut p = payload.to_vec();
        p[offset] = value;
        decode_to_host(&signed(KIND_ACTUATORS, &p))
    };
    assert_eq!(host_field(4, 6), Err(DecodeError::Field { field: Field::State, value: 6 }));
    assert_eq!(host_field(7, 1), Err(DecodeError::Field { field: Field::Trip, value: 0 }));
    assert_eq!(host_field(46, 3), Err(DecodeError::Field { field: Field::PumpKind, value: 3 }));
    // Reject: unknown code.
    let r = Reject { code: RejectCode::Crc, detail: 0, rejected: 1, pins: Pins::default() };
    let body = one_body(&encode_host(&ToHost::Reject(r)));
    let mut p = body[1..body.len() - 4].to_vec();
    p[0] = 9;
    assert_eq!(
        decode_to_host(&signed(KIND_REJECT, &p)),
        Err(DecodeError::Field { field: Field::RejectCode, value: 9 })
    );
    // Hello: more codes listed than counted.
    let report = boot::check::<f32>(&example::plating_rinse());
    let hello = Hello::new(ConfigSource::Link, b"x", None, &report, false);
    let body = one_body(&encode_host(&ToHost::Hello(hello)));
    let mut p = body[1..body.len() - 4].to_vec();
    assert!(usize::from(hello.errors) + usize::from(hello.warnings) < MAX_CODES);
    p[30] = 1; // the last code slot, low byte, beyond the counted codes
    assert!(matches!(decode_to_host(&signed(KIND_HELLO, &p)), Err(DecodeError::Field { field: Field::Count, .. })));
}

#[test]
fn the_deframer_resynchronises_after_garbage_and_overlong_runs() {
    let good = encode_board(&ToBoard::Sensors(sensors()));
    let mut wire = vec![0x13, 0x37, 0x00]; // a broken frame (its block runs past its end)
    wire.extend_from_slice(&[0, 0]); // idle delimiters are skipped
    wire.extend_from_slice(&vec![0x55; MAX_FRAME_LEN + 10]); // no delimiter for too long
    wire.push(0);
    wire.extend_from_slice(&good);
    let frames = deframe(&wire);
    assert_eq!(frames.len(), 3, "{frames:?}");
    assert!(matches!(frames[0], Err(FrameError::Cobs(_))));
    assert_eq!(frames[1], Err(FrameError::TooLong));
    let body = frames[2].as_ref().unwrap();
    assert!(matches!(decode_to_board(body), Ok(ToBoard::Sensors(_))));
}

#[test]
fn a_hello_lists_the_boot_codes() {
    let mut skid = example::plating_rinse();
    skid.control.setpoint_ph = 12.0; // outside the hard limits (1–10): code 208
    let report = boot::check::<f32>(&skid);
    assert!(!report.allowed());
    let hello = Hello::new(ConfigSource::Link, b"abc", Some(5.0), &report, true);
    assert!(!hello.allowed);
    assert!(hello.codes.contains(&208), "{:?}", hello.codes);
    assert_eq!(hello.blob_crc, CRC32.checksum(b"abc"));
    assert_eq!(usize::from(hello.errors), report.errors.len());
    let back = decode_to_host(&one_body(&encode_host(&ToHost::Hello(hello)))).unwrap();
    assert_eq!(back, ToHost::Hello(hello));
    // Without a controller a board never allows dosing, whatever the report says.
    let ok = boot::check::<f32>(&example::plating_rinse());
    assert!(!Hello::new(ConfigSource::BuiltIn, b"", Some(5.0), &ok, false).allowed);
}

#[test]
fn the_tick_inputs_carry_the_frame() {
    let s = sensors();
    let t = s.tick_inputs(tick_dt_s(5.0, 3));
    assert_eq!(t.dt_s, 15.0);
    assert_eq!(t.probe_mv[0], 12.5);
    assert_eq!(t.influent_flow_l_per_h, Some(1200.0));
    assert_eq!(t.reagent_low, [false, true]);
    assert_eq!(t.mode, ModeRequest::Auto);
    assert_eq!(t.manual, (ReagentSide::Caustic, 0.0));
    let a = actuators();
    assert!(a.dosing_enabled && !a.alarm);
    let p = a.pumps[0].unwrap();
    assert!(matches!(p.command, PumpCommand::Duty(_)));
    assert!(a.pumps[1].is_none());
}

fn any_f32() -> impl Strategy<Value = f32> {
    any::<u32>().prop_map(f32::from_bits)
}

fn any_f64() -> impl Strategy<Value = f64> {
    any::<u64>().prop_map(f64::from_bits)
}

fn any_sensors() -> impl Strategy<Value = SensorFrame> {
    (
        any::<u32>(),
        [any_f32(), any_f32(), any_f32()],
        any_f32(),
        proptest::option::of(any_f32()),
        any::<[bool; 4]>(),
        0_u8..3,
        any::<bool>(),
        any_f32(),
    )
        .prop_map(|(tick, probe_mv, temperature_c, flow, b, mode, acid, manual)| SensorFrame {
            tick,
            probe_mv,
            temperature_c,
            influent_flow_l_per_h: flow,
            flow_switch: b[0],
            reagent_low: [b[1], b[2]],
            reset: b[3],
            mode: [ModeRequest::Off, ModeRequest::Auto, ModeRequest::Manual][usize::from(mode)],
            manual_side: if acid { ReagentSide::Acid } else { ReagentSide::Caustic },
            manual_l_per_h: manual,
        })
}

fn any_pins() -> impl Strategy<Value = Pins> {
    (any::<[bool; 3]>(), any::<[u16; 4]>(), any::<[u32; 2]>()).prop_map(|(f, d, strokes)| Pins {
        relay: f[0],
        alarm: f[1],
        fault: f[2],
        duty: [d[0], d[1]],
        duty_max: [d[2], d[3]],
        strokes,
    })
}

fn any_pump() -> impl Strategy<Value = Option<PumpReport>> {
    proptest::option::of((any::<bool>(), any::<u32>(), any_f32(), any_f32()).prop_map(|(duty, v, q, l)| PumpReport {
        command: if duty { PumpCommand::Duty(f32::from_bits(v)) } else { PumpCommand::Strokes(v) },
        delivered_l_per_h: q,
        delivered_l: l,
    }))
}

fn any_actuators() -> impl Strategy<Value = ActuatorFrame> {
    (
        (
            any::<u32>(),
            0_usize..6,
            proptest::option::of((1_u16.., any_f64(), any_f64())),
            any::<u16>(),
            any::<[bool; 2]>(),
        ),
        (proptest::option::of(any_f32()), any_f32(), proptest::option::of(any_f32()), [any_f32(), any_f32()]),
        ([any_pump(), any_pump()], [any_f32(), any_f32(), any_f32(), any_f32()], any_pins()),
    )
        .prop_map(|((tick, state, trip, warnings, b), (ph, spread_ph, model_ph, demand), (pumps, doses, pins))| {
            ActuatorFrame {
                tick,
                state: [State::Starting, State::Refused, State::Idle, State::Auto, State::Manual, State::Tripped]
                    [state],
                trip: trip.map(|(code, value, limit)| TripReport { code, value, limit }),
                warnings,
                dosing_enabled: b[0],
                alarm: b[1],
                ph,
                spread_ph,
                model_ph,
                demand_l_per_h: demand,
                pumps,
                dose_last_hour_l: [doses[0], doses[1]],
                dose_last_day_l: [doses[2], doses[3]],
                pins,
            }
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    /// Any sensor frame survives encode → wire → deframe → decode, bit for bit (compared as
    /// re-encoded bytes, so NaN payloads count too).
    #[test]
    fn sensor_frames_round_trip(s in any_sensors()) {
        let wire = encode_board(&ToBoard::Sensors(s));
        prop_assert!(!wire[..wire.len() - 1].contains(&0));
        let body = one_body(&wire);
        let back = decode_to_board(&body).unwrap();
        prop_assert_eq!(encode_board(&back), wire);
    }

    #[test]
    fn actuator_frames_round_trip(a in any_actuators()) {
        let wire = encode_host(&ToHost::Actuators(a));
        let back = decode_to_host(&one_body(&wire)).unwrap();
        prop_assert_eq!(encode_host(&back), wire);
    }

    #[test]
    fn rejects_and_configs_round_trip(
        code in prop::sample::select(vec![1_u8, 2, 3, 4, 5, 6, 7, 16, 17]),
        detail in any::<u32>(),
        rejected in any::<u32>(),
        pins in any_pins(),
        blob in prop::collection::vec(any::<u8>(), 0..=MAX_CONFIG_LEN),
    ) {
        let r = ToHost::Reject(Reject { code: RejectCode::from_code(code).unwrap(), detail, rejected, pins });
        let wire = encode_host(&r);
        prop_assert_eq!(decode_to_host(&one_body(&wire)).unwrap(), r);
        let wire = encode_board(&ToBoard::Config(&blob));
        let body = one_body(&wire);
        prop_assert_eq!(decode_to_board(&body).unwrap(), ToBoard::Config(&blob));
    }

    /// Arbitrary bytes never panic the deframer or the decoders, and whatever decodes
    /// re-encodes to the same body.
    #[test]
    fn arbitrary_bytes_decode_or_are_refused(bytes in prop::collection::vec(any::<u8>(), 0..300)) {
        let mut d = Deframer::new();
        for b in bytes.iter().copied().chain([0]) {
            if let Some(Ok(body)) = d.push(b) {
                let body = body.to_vec();
                if let Ok(m) = decode_to_board(&body) {
                    prop_assert_eq!(one_body(&encode_board(&m)), body.clone());
                }
                if let Ok(m) = decode_to_host(&body) {
                    prop_assert_eq!(one_body(&encode_host(&m)), body);
                }
            }
        }
    }
}
