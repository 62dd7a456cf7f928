//! The messages, their payload layouts and their conversions from and to the controller's
//! tick inputs and outputs.

use phdose::config::boot::BootReport;
use phdose::control::controller::{TickInputs, TickOutputs};
use phdose::control::feedforward::ReagentSide;
use phdose::control::pump::PumpCommand;
use phdose::control::supervisor::{ModeRequest, State};

use crate::wire::{DecodeError, EncodeError, Reader, Writer, encode_frame};
use crate::{CRC32, MAX_CONFIG_LEN, PROTOCOL_VERSION};

/// Kind byte of a [`SensorFrame`] (host → board).
pub const KIND_SENSORS: u8 = 0x01;
/// Kind byte of a configuration blob (host → board).
pub const KIND_CONFIG: u8 = 0x02;
/// Kind byte of the end of a run (host → board).
pub const KIND_END: u8 = 0x03;
/// Kind byte of a [`Hello`] (board → host).
pub const KIND_HELLO: u8 = 0x81;
/// Kind byte of an [`ActuatorFrame`] (board → host).
pub const KIND_ACTUATORS: u8 = 0x82;
/// Kind byte of a [`Reject`] (board → host).
pub const KIND_REJECT: u8 = 0x83;

/// A field of a message, named in a [`DecodeError::Field`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Field {
    /// A flag byte (a reserved bit set).
    Flags,
    /// The operator's mode.
    Mode,
    /// The pump of manual mode.
    ManualSide,
    /// The influent flow (bits set while the flag says no flow meter).
    Flow,
    /// The supervisor's state.
    State,
    /// The trip (value or limit set without a trip code).
    Trip,
    /// An optional pH (bits set while its flag says none).
    Ph,
    /// A pump report's kind.
    PumpKind,
    /// A pump report (bits set for an absent pump).
    Pump,
    /// The configuration's source.
    Source,
    /// A count (boot findings, larger than the codes they list).
    Count,
    /// A reject code.
    RejectCode,
}

impl Field {
    /// The field's name.
    pub const fn name(self) -> &'static str {
        match self {
            Self::Flags => "flags",
            Self::Mode => "mode",
            Self::ManualSide => "manual_side",
            Self::Flow => "influent_flow",
            Self::State => "state",
            Self::Trip => "trip",
            Self::Ph => "ph",
            Self::PumpKind => "pump_kind",
            Self::Pump => "pump",
            Self::Source => "source",
            Self::Count => "count",
            Self::RejectCode => "reject_code",
        }
    }
}

fn field(field: Field, value: u32) -> DecodeError {
    DecodeError::Field { field, value }
}

/// Reads a flag byte whose bits outside `allowed` must be clear.
fn flags(r: &mut Reader<'_>, allowed: u8) -> Result<u8, DecodeError> {
    let b = r.u8()?;
    if b & !allowed != 0 {
        return Err(field(Field::Flags, u32::from(b)));
    }
    Ok(b)
}

/// An optional f32: present when `present`, else its bits must be zero.
fn optional_f32(r: &mut Reader<'_>, present: bool, which: Field) -> Result<Option<f32>, DecodeError> {
    let v = r.f32()?;
    match (present, v.to_bits()) {
        (true, _) => Ok(Some(v)),
        (false, 0) => Ok(None),
        (false, bits) => Err(field(which, bits)),
    }
}

fn bit(on: bool, mask: u8) -> u8 {
    if on { mask } else { 0 }
}

/// One tick's readings, host → board (the plant's instruments in a rig; a board without a
/// host reads the same from its own inputs). Mirrors [`TickInputs`] with the tick number in
/// place of the elapsed time: the board computes the elapsed time from the tick numbers and
/// its configured tick, so a lost frame shows as a longer tick (and trips the watchdog once
/// the gap exceeds it).
///
/// Payload (31 bytes): tick u32 | probe mV 3 × f32 | temperature °C f32 | influent flow L/h f32
/// | flags u8 (bit 0 flow switch, 1 caustic tank low, 2 acid tank low, 3 reset, 4 flow meter
/// fitted) | mode u8 (0 off, 1 auto, 2 manual) | manual pump u8 (0 caustic, 1 acid) | manual
/// flow L/h f32.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SensorFrame {
    /// The tick's number (strictly increasing; gaps are lost ticks).
    pub tick: u32,
    /// Each probe's raw potential, mV (NaN for a broken or absent input).
    pub probe_mv: [f32; 3],
    /// Tank temperature, °C.
    pub temperature_c: f32,
    /// Measured influent flow, L/h (`None`: no flow meter, the design flow is used).
    pub influent_flow_l_per_h: Option<f32>,
    /// The flow switch (true = flow).
    pub flow_switch: bool,
    /// Reagent tank low-level switches (caustic, acid; true = low).
    pub reagent_low: [bool; 2],
    /// The reset input.
    pub reset: bool,
    /// The operator's mode.
    pub mode: ModeRequest,
    /// Manual mode: which pump …
    pub manual_side: ReagentSide,
    /// … and its flow, L/h.
    pub manual_l_per_h: f32,
}

impl SensorFrame {
    /// Payload bytes.
    pub const PAYLOAD_LEN: usize = 31;

    /// The controller's inputs for this frame, `dt_s` seconds after the previous one (see
    /// [`tick_dt_s`]).
    pub fn tick_inputs(&self, dt_s: f32) -> TickInputs<f32> {
        TickInputs {
            dt_s,
            probe_mv: self.probe_mv,
            temperature_c: self.temperature_c,
            influent_flow_l_per_h: self.influent_flow_l_per_h,
            flow_switch: self.flow_switch,
            reagent_low: self.reagent_low,
            reset: self.reset,
            mode: self.mode,
            manual: (self.manual_side, self.manual_l_per_h),
        }
    }

    fn write(&self, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        w.u32(self.tick)?;
        for mv in self.probe_mv {
            w.f32(mv)?;
        }
        w.f32(self.temperature_c)?;
        w.f32(self.influent_flow_l_per_h.unwrap_or(0.0))?;
        let [caustic_low, acid_low] = self.reagent_low;
        w.u8(bit(self.flow_switch, 1)
            | bit(caustic_low, 2)
            | bit(acid_low, 4)
            | bit(self.reset, 8)
            | bit(self.influent_flow_l_per_h.is_some(), 16))?;
        w.u8(match self.mode {
            ModeRequest::Off => 0,
            ModeRequest::Auto => 1,
            ModeRequest::Manual => 2,
        })?;
        w.u8(match self.manual_side {
            ReagentSide::Caustic => 0,
            ReagentSide::Acid => 1,
        })?;
        w.f32(self.manual_l_per_h)
    }

    fn read(r: &mut Reader<'_>) -> Result<Self, DecodeError> {
        let tick = r.u32()?;
        let probe_mv = [r.f32()?, r.f32()?, r.f32()?];
        let temperature_c = r.f32()?;
        let flow = r.f32()?;
        let f = flags(r, 0x1F)?;
        let influent_flow_l_per_h = match (f & 16 != 0, flow.to_bits()) {
            (true, _) => Some(flow),
            (false, 0) => None,
            (false, bits) => return Err(field(Field::Flow, bits)),
        };
        let mode = match r.u8()? {
            0 => ModeRequest::Off,
            1 => ModeRequest::Auto,
            2 => ModeRequest::Manual,
            m => return Err(field(Field::Mode, u32::from(m))),
        };
        let manual_side = match r.u8()? {
            0 => ReagentSide::Caustic,
            1 => ReagentSide::Acid,
            s => return Err(field(Field::ManualSide, u32::from(s))),
        };
        Ok(Self {
            tick,
            probe_mv,
            temperature_c,
            influent_flow_l_per_h,
            flow_switch: f & 1 != 0,
            reagent_low: [f & 2 != 0, f & 4 != 0],
            reset: f & 8 != 0,
            mode,
            manual_side,
            manual_l_per_h: r.f32()?,
        })
    }
}

/// The elapsed time of a tick `gap` ticks after the previous one, s: `gap × tick_s` in f32 (the
/// board's and the host's computation, so both feed the controller the same number).
pub fn tick_dt_s(tick_s: f32, gap: u32) -> f32 {
    gap as f32 * tick_s
}

/// A message to the board.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ToBoard<'a> {
    /// One tick's readings.
    Sensors(SensorFrame),
    /// A configuration blob (the bytes `phdose pack` writes), accepted only before the first
    /// tick: it replaces the board's configuration and the boot checks run again.
    Config(&'a [u8]),
    /// The end of the run: the board turns every output off and halts (an emulated board also
    /// ends the emulation).
    EndOfRun,
}

impl ToBoard<'_> {
    /// Encodes the message as a frame (COBS body and delimiter) into `out`; returns its length.
    /// A buffer of [`crate::MAX_FRAME_LEN`] bytes always suffices.
    pub fn encode(&self, out: &mut [u8]) -> Result<usize, EncodeError> {
        encode_frame(out, |w| match self {
            Self::Sensors(s) => {
                w.u8(KIND_SENSORS)?;
                s.write(w)
            }
            Self::Config(blob) => {
                if blob.len() > MAX_CONFIG_LEN {
                    return Err(EncodeError::ConfigTooLong { len: blob.len() });
                }
                w.u8(KIND_CONFIG)?;
                w.bytes(blob)
            }
            Self::EndOfRun => w.u8(KIND_END),
        })
    }

    pub(crate) fn decode_payload(kind: u8, payload: &[u8]) -> Result<ToBoard<'_>, DecodeError> {
        match kind {
            KIND_SENSORS => {
                let mut r = Reader::new(kind, payload, SensorFrame::PAYLOAD_LEN)?;
                Ok(ToBoard::Sensors(SensorFrame::read(&mut r)?))
            }
            KIND_CONFIG => {
                if payload.len() > MAX_CONFIG_LEN {
                    return Err(DecodeError::Length { kind, expected: MAX_CONFIG_LEN, actual: payload.len() });
                }
                Ok(ToBoard::Config(payload))
            }
            KIND_END => {
                Reader::new(kind, payload, 0)?;
                Ok(ToBoard::EndOfRun)
            }
            _ => Err(DecodeError::UnknownKind { kind }),
        }
    }
}

/// Where the board's configuration came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ConfigSource {
    /// Stored in the firmware image.
    BuiltIn,
    /// Received over the link ([`ToBoard::Config`]).
    Link,
}

/// Boot codes a [`Hello`] lists (errors first, then warnings; the counts say how many exist).
pub const MAX_CODES: usize = 8;

/// The board's greeting at boot and after each configuration: which configuration it runs and
/// what its boot checks said. The host compares the CRC with its blob's before it starts.
///
/// Payload (32 bytes): protocol u16 | source u8 | blob length u16 | CRC-32 of the blob u32 |
/// flags u8 (bit 0 dosing allowed, bit 1 controller built) | tick s f32 (NaN without one) |
/// errors u8 | warnings u8 | codes 8 × u16 (zero-padded).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Hello {
    /// [`PROTOCOL_VERSION`] of the board.
    pub protocol: u16,
    /// Where the configuration came from.
    pub source: ConfigSource,
    /// The blob's length, bytes.
    pub blob_len: u16,
    /// CRC-32/ISO-HDLC of the whole blob as the board holds it.
    pub blob_crc: u32,
    /// The boot checks allow dosing.
    pub allowed: bool,
    /// A controller could be built (it may still be refused dosing).
    pub controller: bool,
    /// The configured tick, s (NaN when the blob did not decode).
    pub tick_s: f32,
    /// Boot errors found (saturating).
    pub errors: u8,
    /// Boot warnings found (saturating).
    pub warnings: u8,
    /// The first codes: errors, then warnings, then zeros.
    pub codes: [u16; MAX_CODES],
}

impl Hello {
    /// Payload bytes.
    pub const PAYLOAD_LEN: usize = 32;

    /// The hello for `blob` and its boot `report` (`tick_s` from the decoded settings).
    pub fn new(source: ConfigSource, blob: &[u8], tick_s: Option<f32>, report: &BootReport, controller: bool) -> Self {
        let mut codes = [0_u16; MAX_CODES];
        for (slot, f) in codes.iter_mut().zip(report.errors.iter().chain(report.warnings.iter())) {
            *slot = f.code.number();
        }
        let count = |n: usize| u8::try_from(n).unwrap_or(u8::MAX);
        Self {
            protocol: PROTOCOL_VERSION,
            source,
            blob_len: u16::try_from(blob.len()).unwrap_or(u16::MAX),
            blob_crc: CRC32.checksum(blob),
            allowed: report.allowed() && controller,
            controller,
            tick_s: tick_s.unwrap_or(f32::NAN),
            errors: count(report.errors.len()),
            warnings: count(report.warnings.len()),
            codes,
        }
    }

    fn write(&self, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        w.u16(self.protocol)?;
        w.u8(match self.source {
            ConfigSource::BuiltIn => 0,
            ConfigSource::Link => 1,
        })?;
        w.u16(self.blob_len)?;
        w.u32(self.blob_crc)?;
        w.u8(bit(self.allowed, 1) | bit(self.controller, 2))?;
        w.f32(self.tick_s)?;
        w.u8(self.errors)?;
        w.u8(self.warnings)?;
        for c in self.codes {
            w.u16(c)?;
        }
        Ok(())
    }

    fn read(r: &mut Reader<'_>) -> Result<Self, DecodeError> {
        let protocol = r.u16()?;
        let source = match r.u8()? {
            0 => ConfigSource::BuiltIn,
            1 => ConfigSource::Link,
            s => return Err(field(Field::Source, u32::from(s))),
        };
        let blob_len = r.u16()?;
        let blob_crc = r.u32()?;
        let f = flags(r, 3)?;
        let tick_s = r.f32()?;
        let errors = r.u8()?;
        let warnings = r.u8()?;
        let mut codes = [0_u16; MAX_CODES];
        for c in &mut codes {
            *c = r.u16()?;
        }
        // The listed codes are exactly min(errors + warnings, MAX_CODES) non-zero ones.
        let listed = codes.iter().take_while(|c| **c != 0).count();
        let total = usize::from(errors) + usize::from(warnings);
        if listed != total.min(MAX_CODES) || codes.iter().skip(listed).any(|c| *c != 0) {
            return Err(field(Field::Count, u32::try_from(total).unwrap_or(u32::MAX)));
        }
        Ok(Self {
            protocol,
            source,
            blob_len,
            blob_crc,
            allowed: f & 1 != 0,
            controller: f & 2 != 0,
            tick_s,
            errors,
            warnings,
            codes,
        })
    }
}

/// The output pins as the board drove them: the dosing-enable relay, the alarm, each pump's
/// PWM duty (out of the output's own maximum) or strokes, and whether a pin write failed.
///
/// Layout (17 bytes): flags u8 (bit 0 relay closed, 1 alarm on, 2 output fault) | duty 2 × u16
/// | duty maximum 2 × u16 | strokes 2 × u32.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Pins {
    /// The dosing-enable relay is closed (the pumps have power).
    pub relay: bool,
    /// The alarm output is on.
    pub alarm: bool,
    /// A pin write failed (the board then tried to turn everything off).
    pub fault: bool,
    /// Each pump's PWM duty (caustic, acid), out of `duty_max`.
    pub duty: [u16; 2],
    /// Each PWM output's maximum duty (0 when the pump has none).
    pub duty_max: [u16; 2],
    /// Strokes given to each pulse pump this tick.
    pub strokes: [u32; 2],
}

impl Pins {
    const LEN: usize = 17;

    fn write(&self, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        w.u8(bit(self.relay, 1) | bit(self.alarm, 2) | bit(self.fault, 4))?;
        for v in self.duty.into_iter().chain(self.duty_max) {
            w.u16(v)?;
        }
        for s in self.strokes {
            w.u32(s)?;
        }
        Ok(())
    }

    fn read(r: &mut Reader<'_>) -> Result<Self, DecodeError> {
        let f = flags(r, 7)?;
        Ok(Self {
            relay: f & 1 != 0,
            alarm: f & 2 != 0,
            fault: f & 4 != 0,
            duty: [r.u16()?, r.u16()?],
            duty_max: [r.u16()?, r.u16()?],
            strokes: [r.u32()?, r.u32()?],
        })
    }
}

/// One pump's command and what it delivers (the controller's [`phdose::control::pump::PumpOutput`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PumpReport {
    /// The command in the pump's units.
    pub command: PumpCommand<f32>,
    /// Mean flow the command delivers over the tick, L/h.
    pub delivered_l_per_h: f32,
    /// Volume it delivers over the tick, L.
    pub delivered_l: f32,
}

impl PumpReport {
    const LEN: usize = 13;

    fn write(report: Option<&Self>, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        match report {
            None => w.bytes(&[0; Self::LEN]),
            Some(p) => {
                match p.command {
                    PumpCommand::Duty(d) => {
                        w.u8(1)?;
                        w.f32(d)?;
                    }
                    PumpCommand::Strokes(n) => {
                        w.u8(2)?;
                        w.u32(n)?;
                    }
                }
                w.f32(p.delivered_l_per_h)?;
                w.f32(p.delivered_l)
            }
        }
    }

    fn read(r: &mut Reader<'_>) -> Result<Option<Self>, DecodeError> {
        let kind = r.u8()?;
        let value = r.u32()?;
        let delivered_l_per_h = r.f32()?;
        let delivered_l = r.f32()?;
        let command = match kind {
            0 => {
                let any = value | delivered_l_per_h.to_bits() | delivered_l.to_bits();
                return if any == 0 { Ok(None) } else { Err(field(Field::Pump, any)) };
            }
            1 => PumpCommand::Duty(f32::from_bits(value)),
            2 => PumpCommand::Strokes(value),
            k => return Err(field(Field::PumpKind, u32::from(k))),
        };
        Ok(Some(Self { command, delivered_l_per_h, delivered_l }))
    }
}

/// A latched trip: its stable code (101–…, see
/// [`phdose::control::supervisor::TripReason::code`]) with the offending value and its limit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TripReport {
    /// The reason's code (never 0).
    pub code: u16,
    /// The offending value.
    pub value: f64,
    /// The limit it crossed.
    pub limit: f64,
}

/// The board's answer to an accepted sensor frame: the controller's outputs of that tick (as in
/// [`TickOutputs`]) and the pins as driven.
///
/// Payload (105 bytes): tick u32 | state u8 ([`State::code`]) | trip code u16 (0: none), value
/// f64, limit f64 | warnings u16 | flags u8 (bit 0 dosing enabled, 1 alarm, 2 pH present, 3
/// model pH present) | pH f32 | spread f32 | model pH f32 | demand 2 × f32 | pumps 2 × (kind u8
/// (0 absent, 1 duty, 2 strokes), duty f32 or strokes u32, delivered L/h f32, delivered L f32)
/// | dose last hour 2 × f32 | dose last day 2 × f32 | pins (17 bytes, see [`Pins`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ActuatorFrame {
    /// The tick of the sensor frame this answers.
    pub tick: u32,
    /// The supervisor's state.
    pub state: State,
    /// The latched trip.
    pub trip: Option<TripReport>,
    /// Warning flags ([`phdose::control::controller::Warnings`]).
    pub warnings: u16,
    /// The dosing-enable relay as the controller commands it.
    pub dosing_enabled: bool,
    /// The alarm as the controller commands it.
    pub alarm: bool,
    /// The voted pH.
    pub ph: Option<f32>,
    /// Spread of the healthy probes, pH.
    pub spread_ph: f32,
    /// The model's pH.
    pub model_ph: Option<f32>,
    /// The control law's demand (caustic, acid), L/h.
    pub demand_l_per_h: [f32; 2],
    /// Pump commands (caustic, acid; `None` for an absent line).
    pub pumps: [Option<PumpReport>; 2],
    /// Reagent delivered in the last hour (caustic, acid), L.
    pub dose_last_hour_l: [f32; 2],
    /// Reagent delivered in the last day (caustic, acid), L.
    pub dose_last_day_l: [f32; 2],
    /// The pins as driven.
    pub pins: Pins,
}

impl ActuatorFrame {
    /// Payload bytes.
    pub const PAYLOAD_LEN: usize = 88 + Pins::LEN;

    /// The frame for the controller's outputs `out` of tick `tick`, with the pins as driven.
    pub fn from_outputs(tick: u32, out: &TickOutputs<f32>, pins: Pins) -> Self {
        Self {
            tick,
            state: out.state,
            trip: out.trip.map(|t| TripReport { code: t.reason.code(), value: t.value, limit: t.limit }),
            warnings: out.warnings.0,
            dosing_enabled: out.dosing_enabled,
            alarm: out.alarm,
            ph: out.vote.ph,
            spread_ph: out.vote.spread_ph,
            model_ph: out.law.model_ph,
            demand_l_per_h: out.law.demand_l_per_h,
            pumps: out.pumps.map(|p| {
                p.map(|p| PumpReport {
                    command: p.command,
                    delivered_l_per_h: p.delivered_l_per_h,
                    delivered_l: p.delivered_l,
                })
            }),
            dose_last_hour_l: out.dose_last_hour_l,
            dose_last_day_l: out.dose_last_day_l,
            pins,
        }
    }

    fn write(&self, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        w.u32(self.tick)?;
        w.u8(self.state.code())?;
        match self.trip {
            Some(t) => {
                w.u16(t.code)?;
                w.f64(t.value)?;
                w.f64(t.limit)?;
            }
            None => w.bytes(&[0; 18])?,
        }
        w.u16(self.warnings)?;
        w.u8(bit(self.dosing_enabled, 1)
            | bit(self.alarm, 2)
            | bit(self.ph.is_some(), 4)
            | bit(self.model_ph.is_some(), 8))?;
        w.f32(self.ph.unwrap_or(0.0))?;
        w.f32(self.spread_ph)?;
        w.f32(self.model_ph.unwrap_or(0.0))?;
        for v in self.demand_l_per_h {
            w.f32(v)?;
        }
        for p in &self.pumps {
            PumpReport::write(p.as_ref(), w)?;
        }
        for v in self.dose_last_hour_l.into_iter().chain(self.dose_last_day_l) {
            w.f32(v)?;
        }
        self.pins.write(w)
    }

    fn read(r: &mut Reader<'_>) -> Result<Self, DecodeError> {
        let tick = r.u32()?;
        let state = match r.u8()? {
            0 => State::Starting,
            1 => State::Refused,
            2 => State::Idle,
            3 => State::Auto,
            4 => State::Manual,
            5 => State::Tripped,
            s => return Err(field(Field::State, u32::from(s))),
        };
        let code = r.u16()?;
        let value = r.f64()?;
        let limit = r.f64()?;
        let trip = if code != 0 {
            Some(TripReport { code, value, limit })
        } else if value.to_bits() == 0 && limit.to_bits() == 0 {
            None
        } else {
            return Err(field(Field::Trip, 0));
        };
        let warnings = r.u16()?;
        let f = flags(r, 0x0F)?;
        let ph = optional_f32(r, f & 4 != 0, Field::Ph)?;
        let spread_ph = r.f32()?;
        let model_ph = optional_f32(r, f & 8 != 0, Field::Ph)?;
        let demand_l_per_h = [r.f32()?, r.f32()?];
        let pumps = [PumpReport::read(r)?, PumpReport::read(r)?];
        let dose_last_hour_l = [r.f32()?, r.f32()?];
        let dose_last_day_l = [r.f32()?, r.f32()?];
        Ok(Self {
            tick,
            state,
            trip,
            warnings,
            dosing_enabled: f & 1 != 0,
            alarm: f & 2 != 0,
            ph,
            spread_ph,
            model_ph,
            demand_l_per_h,
            pumps,
            dose_last_hour_l,
            dose_last_day_l,
            pins: Pins::read(r)?,
        })
    }
}

/// Why the board refused a message. The numeric codes are stable.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RejectCode {
    /// 1: the frame's COBS coding is broken.
    Framing,
    /// 2: a frame longer than the longest valid one.
    TooLong,
    /// 3: the CRC does not match.
    Crc,
    /// 4: shorter than a kind and a CRC.
    TooShort,
    /// 5: a kind the board does not take.
    UnknownKind,
    /// 6: the payload's length is wrong for its kind.
    Length,
    /// 7: a field holds an invalid value.
    Field,
    /// 16: a sensor frame whose tick is not after the last accepted one.
    TickNotAfter,
    /// 17: a configuration after the first tick (a new configuration means a restart).
    ConfigAfterStart,
}

impl RejectCode {
    /// The stable numeric code.
    pub const fn code(self) -> u8 {
        match self {
            Self::Framing => 1,
            Self::TooLong => 2,
            Self::Crc => 3,
            Self::TooShort => 4,
            Self::UnknownKind => 5,
            Self::Length => 6,
            Self::Field => 7,
            Self::TickNotAfter => 16,
            Self::ConfigAfterStart => 17,
        }
    }

    /// The code for a numeric code.
    pub const fn from_code(code: u8) -> Option<Self> {
        Some(match code {
            1 => Self::Framing,
            2 => Self::TooLong,
            3 => Self::Crc,
            4 => Self::TooShort,
            5 => Self::UnknownKind,
            6 => Self::Length,
            7 => Self::Field,
            16 => Self::TickNotAfter,
            17 => Self::ConfigAfterStart,
            _ => return None,
        })
    }

    /// The code and a detail word for a decode error (the detail: the CRC received, the kind,
    /// the payload length, or the field's value).
    pub fn of_decode(e: &DecodeError) -> (Self, u32) {
        let word = |n: usize| u32::try_from(n).unwrap_or(u32::MAX);
        match *e {
            DecodeError::TooShort { len } => (Self::TooShort, word(len)),
            DecodeError::Crc { stored, .. } => (Self::Crc, stored),
            DecodeError::UnknownKind { kind } => (Self::UnknownKind, u32::from(kind)),
            DecodeError::Length { actual, .. } => (Self::Length, word(actual)),
            DecodeError::Field { value, .. } => (Self::Field, value),
        }
    }

    /// The code and a detail word for a framing error.
    pub fn of_frame(e: &crate::FrameError) -> (Self, u32) {
        match e {
            crate::FrameError::Cobs(_) => (Self::Framing, 0),
            crate::FrameError::TooLong => (Self::TooLong, 0),
        }
    }
}

/// The board's answer to a refused message: why, and the pins as driven after the refusal
/// (every output off: a tick without trusted readings doses nothing).
///
/// Payload (26 bytes): code u8 | detail u32 | messages refused so far u32 | pins (17 bytes).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Reject {
    /// Why.
    pub code: RejectCode,
    /// A detail word (see [`RejectCode::of_decode`]; for [`RejectCode::TickNotAfter`] the last
    /// accepted tick).
    pub detail: u32,
    /// Messages refused since boot, this one included.
    pub rejected: u32,
    /// The pins as driven after the refusal.
    pub pins: Pins,
}

impl Reject {
    /// Payload bytes.
    pub const PAYLOAD_LEN: usize = 9 + Pins::LEN;

    fn write(&self, w: &mut Writer<'_>) -> Result<(), EncodeError> {
        w.u8(self.code.code())?;
        w.u32(self.detail)?;
        w.u32(self.rejected)?;
        self.pins.write(w)
    }

    fn read(r: &mut Reader<'_>) -> Result<Self, DecodeError> {
        let c = r.u8()?;
        let code = RejectCode::from_code(c).ok_or(field(Field::RejectCode, u32::from(c)))?;
        Ok(Self { code, detail: r.u32()?, rejected: r.u32()?, pins: Pins::read(r)? })
    }
}

/// A message to the host.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ToHost {
    /// The greeting at boot and after a configuration.
    Hello(Hello),
    /// The answer to an accepted sensor frame.
    Actuators(ActuatorFrame),
    /// The answer to a refused message.
    Reject(Reject),
}

impl ToHost {
    /// Encodes the message as a frame (COBS body and delimiter) into `out`; returns its length.
    pub fn encode(&self, out: &mut [u8]) -> Result<usize, EncodeError> {
        encode_frame(out, |w| match self {
            Self::Hello(h) => {
                w.u8(KIND_HELLO)?;
                h.write(w)
            }
            Self::Actuators(a) => {
                w.u8(KIND_ACTUATORS)?;
                a.write(w)
            }
            Self::Reject(r) => {
                w.u8(KIND_REJECT)?;
                r.write(w)
            }
        })
    }

    pub(crate) fn decode_payload(kind: u8, payload: &[u8]) -> Result<Self, DecodeError> {
        match kind {
            KIND_HELLO => Ok(Self::Hello(Hello::read(&mut Reader::new(kind, payload, Hello::PAYLOAD_LEN)?)?)),
            KIND_ACTUATORS => {
                Ok(Self::Actuators(ActuatorFrame::read(&mut Reader::new(kind, payload, ActuatorFrame::PAYLOAD_LEN)?)?))
            }
            KIND_REJECT => Ok(Self::Reject(Reject::read(&mut Reader::new(kind, payload, Reject::PAYLOAD_LEN)?)?)),
            _ => Err(DecodeError::UnknownKind { kind }),
        }
    }
}
