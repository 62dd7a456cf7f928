//! The application: the controller between the link and the outputs. Board-independent: the
//! outputs are embedded-hal 1.0 traits (`StatefulOutputPin` for the dosing-enable relay and the
//! alarm, `SetDutyCycle` for a PWM/analog pump input) plus [`StrokeOutput`] for a pulse-input
//! pump, which embedded-hal has no trait for; the link is any `embedded_io` byte stream.
//!
//! # What it does
//! - **Boot**: every output off; the configuration blob through the boot checks
//!   (`boot::check_blob::<f32>`, the host's `phdose check` in f32); the controller is built
//!   with their verdict (refused: it never leaves the refused state, nothing doses); a
//!   [`Hello`] tells the host which blob and what the checks said.
//! - **Each sensor frame**: the tick's elapsed time from the tick numbers (a gap is a longer
//!   tick, which the controller's watchdog trips on), `Controller::step`, the outputs driven,
//!   an [`ActuatorFrame`] back with the pins as driven.
//! - **Anything refused** (broken framing, CRC, kind, length, field, a tick not after the last,
//!   a configuration after the first tick): every output off at once, a [`Reject`] back, and
//!   the controller told so (`Controller::outputs_forced_off`, one tick after its last step).
//!   The next good frame steps the controller again, with the gap counted in its elapsed time
//!   and the last commands counted for the one tick they ran.
//! - **A configuration before the first tick** replaces the blob and the boot runs again.
//! - **End of run**: every output off, then [`Node::serve`] returns.
//!
//! Nothing here panics (the firmware links with `panic-never`): no indexing, no unwrap, every
//! cast saturating.

use embedded_hal::digital::StatefulOutputPin;
use embedded_hal::pwm::SetDutyCycle;
use phdose::config::blob::MAX_BLOB_LEN;
use phdose::config::boot::{self, BootReport};
use phdose::config::build::{self, MODEL_SYSTEMS};
use phdose::control::controller::Controller;
use phdose::control::pump::PumpCommand;
use phdose::control::supervisor::{State, TripReason};
use phdose_link::{
    ActuatorFrame, ConfigSource, Deframer, FrameError, Hello, MAX_FRAME_LEN, Pins, Reject, RejectCode, SensorFrame,
    ToBoard, ToHost, TripReport, decode_to_board, tick_dt_s,
};

/// A pulse-input metering pump's output: `strokes` pulses spread over the coming tick.
/// (embedded-hal 1.0 has no pulse-train trait.)
pub trait StrokeOutput {
    /// Why the output failed.
    type Error;
    /// Gives `strokes` strokes over the coming tick (0: none).
    fn give(&mut self, strokes: u32) -> Result<(), Self::Error>;
}

/// One pump's two possible inputs; the configuration says which one the pump uses.
pub struct PumpPins<D, S> {
    /// PWM or analog input (duty 0 – the output's maximum).
    pub duty: D,
    /// Pulse input.
    pub strokes: S,
}

/// The outputs: relay, alarm, two pumps (caustic, acid).
pub struct Outputs<RL, AL, D0, S0, D1, S1> {
    /// The dosing-enable relay (high = closed: the pumps have power).
    pub relay: RL,
    /// The alarm (high = on).
    pub alarm: AL,
    /// The caustic pump.
    pub caustic: PumpPins<D0, S0>,
    /// The acid pump.
    pub acid: PumpPins<D1, S1>,
}

/// What the controller wants on the outputs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Drive {
    /// Close the dosing-enable relay.
    pub relay: bool,
    /// Alarm on.
    pub alarm: bool,
    /// Each pump's command (`None`: off).
    pub pumps: [Option<PumpCommand<f32>>; 2],
}

impl Drive {
    /// Every output off, the alarm as given.
    pub const fn off(alarm: bool) -> Self {
        Self { relay: false, alarm, pumps: [None, None] }
    }
}

/// The output's duty for a duty fraction: nearest step of `max`, 0 for NaN or ≤ 0, `max` at or
/// above 1 (saturating casts: never panics).
pub fn duty_steps(duty: f32, max: u16) -> u16 {
    let x = duty * f32::from(max) + 0.5;
    if x.is_nan() || x <= 0.0 {
        0
    } else if x >= f32::from(max) {
        max
    } else {
        x as u16
    }
}

/// Drives one pump; returns (duty, its maximum, strokes) as driven and whether a write failed.
fn drive_pump<D: SetDutyCycle, S: StrokeOutput>(
    p: &mut PumpPins<D, S>,
    cmd: Option<PumpCommand<f32>>,
) -> (u16, u16, u32, bool) {
    let max = p.duty.max_duty_cycle();
    let (duty, strokes) = match cmd {
        Some(PumpCommand::Duty(d)) => (duty_steps(d, max), 0),
        Some(PumpCommand::Strokes(n)) => (0, n),
        None => (0, 0),
    };
    let duty_failed = p.duty.set_duty_cycle(duty).is_err();
    let strokes_failed = p.strokes.give(strokes).is_err();
    (duty, max, strokes, duty_failed || strokes_failed)
}

impl<RL, AL, D0, S0, D1, S1> Outputs<RL, AL, D0, S0, D1, S1>
where
    RL: StatefulOutputPin,
    AL: StatefulOutputPin,
    D0: SetDutyCycle,
    S0: StrokeOutput,
    D1: SetDutyCycle,
    S1: StrokeOutput,
{
    /// Drives the outputs: the relay opens first when it opens and closes last when it closes,
    /// so a pump never starts on a stale command. On any failed write every output is driven
    /// off (the alarm on) and the pins report the fault. Returns the pins as driven (relay and
    /// alarm read back from the pins).
    pub fn apply(&mut self, d: &Drive) -> Pins {
        let mut fault = false;
        if !d.relay {
            fault |= self.relay.set_low().is_err();
        }
        let [caustic, acid] = d.pumps;
        let (d0, m0, s0, f0) = drive_pump(&mut self.caustic, caustic);
        let (d1, m1, s1, f1) = drive_pump(&mut self.acid, acid);
        fault |= f0 || f1;
        if d.relay && !fault {
            fault |= self.relay.set_high().is_err();
        }
        fault |= if d.alarm || fault { self.alarm.set_high() } else { self.alarm.set_low() }.is_err();
        if fault {
            // Best effort: everything off, alarm on; the pins say what is known.
            let _ = self.relay.set_low();
            let _ = drive_pump(&mut self.caustic, None);
            let _ = drive_pump(&mut self.acid, None);
            let _ = self.alarm.set_high();
        }
        Pins {
            relay: self.relay.is_set_high().unwrap_or(true),
            alarm: self.alarm.is_set_high().unwrap_or(false),
            fault,
            duty: if fault { [0, 0] } else { [d0, d1] },
            duty_max: [m0, m1],
            strokes: if fault { [0, 0] } else { [s0, s1] },
        }
    }
}

/// The state of the running firmware: the configuration, the controller, the tick count.
pub struct Node {
    blob: [u8; MAX_BLOB_LEN],
    blob_len: usize,
    source: ConfigSource,
    controller: Option<Controller<f32, MODEL_SYSTEMS>>,
    tick_s: f32,
    last_tick: Option<u32>,
    rejected: u32,
    /// What the outputs were last told.
    drive: Drive,
}

/// What the serving loop does after a message.
enum Next {
    /// Send this and carry on.
    Reply(ToHost),
    /// Stop serving (end of run).
    End,
}

impl Node {
    /// Boots with `blob` (from `source`): boot checks, then the controller. Returns the node
    /// and its hello.
    pub fn boot(blob: &[u8], source: ConfigSource) -> (Self, Hello) {
        let mut node = Self {
            blob: [0; MAX_BLOB_LEN],
            blob_len: 0,
            source,
            controller: None,
            tick_s: f32::NAN,
            last_tick: None,
            rejected: 0,
            drive: Drive::off(true),
        };
        let hello = node.configure(blob, source);
        (node, hello)
    }

    /// Takes `blob` as the configuration and runs the boot checks; the controller is built
    /// with their verdict. A blob longer than any valid one is kept truncated (and refused).
    fn configure(&mut self, blob: &[u8], source: ConfigSource) -> Hello {
        self.blob_len = 0;
        for (dst, src) in self.blob.iter_mut().zip(blob) {
            *dst = *src;
            self.blob_len += 1;
        }
        self.source = source;
        let held = self.blob.get(..self.blob_len).unwrap_or(&[]);
        let (skid, mut report) = boot::check_blob::<f32>(held);
        if blob.len() > MAX_BLOB_LEN {
            report = BootReport::default();
            report.push(boot::Finding::new(boot::Code::BlobUnreadable, blob.len() as f64, MAX_BLOB_LEN as f64));
        }
        self.controller = None;
        self.tick_s = f32::NAN;
        if let Some(skid) = skid.as_ref().filter(|_| blob.len() <= MAX_BLOB_LEN) {
            self.tick_s = skid.control.tick_s;
            if let Ok(config) = build::controller_config::<f32>(skid) {
                self.controller = Controller::new(config, report.allowed()).ok();
            }
        }
        self.drive = Drive::off(!(report.allowed() && self.controller.is_some()));
        Hello::new(self.source, held, skid.map(|s| s.control.tick_s), &report, self.controller.is_some())
    }

    fn reject<O: Apply>(&mut self, code: RejectCode, detail: u32, outputs: &mut O) -> ToHost {
        self.rejected = self.rejected.saturating_add(1);
        // A tick without trusted readings doses nothing: off at once, the alarm as it was. The
        // refused frame came in place of a tick's, one tick after the last step: the controller's
        // next step counts the last commands for that long, not for the whole gap.
        self.drive = Drive::off(self.drive.alarm);
        if let Some(c) = self.controller.as_mut() {
            c.outputs_forced_off(self.tick_s);
        }
        let pins = outputs.apply(&self.drive);
        ToHost::Reject(Reject { code, detail, rejected: self.rejected, pins })
    }

    fn tick<O: Apply>(&mut self, s: &SensorFrame, outputs: &mut O) -> ToHost {
        let gap = match self.last_tick {
            Some(last) if s.tick <= last => return self.reject(RejectCode::TickNotAfter, last, outputs),
            Some(last) => s.tick - last,
            None => 1,
        };
        self.last_tick = Some(s.tick);
        let Some(c) = self.controller.as_mut() else {
            // No controller (the blob did not decode or cannot make one): refused, nothing doses.
            self.drive = Drive::off(true);
            let pins = outputs.apply(&self.drive);
            return ToHost::Actuators(refused_frame(s.tick, pins));
        };
        let out = c.step(&s.tick_inputs(tick_dt_s(self.tick_s, gap)));
        let [caustic, acid] = out.pumps;
        self.drive = Drive {
            relay: out.dosing_enabled,
            alarm: out.alarm,
            pumps: if out.dosing_enabled {
                [caustic.map(|p| p.command), acid.map(|p| p.command)]
            } else {
                [None, None]
            },
        };
        let pins = outputs.apply(&self.drive);
        ToHost::Actuators(ActuatorFrame::from_outputs(s.tick, &out, pins))
    }

    fn handle<O: Apply>(&mut self, received: Result<&[u8], FrameError>, outputs: &mut O) -> Next {
        let body = match received {
            Ok(body) => body,
            Err(e) => {
                let (code, detail) = RejectCode::of_frame(&e);
                return Next::Reply(self.reject(code, detail, outputs));
            }
        };
        match decode_to_board(body) {
            Ok(ToBoard::Sensors(s)) => Next::Reply(self.tick(&s, outputs)),
            Ok(ToBoard::Config(blob)) => {
                if self.last_tick.is_some() {
                    let len = u32::try_from(blob.len()).unwrap_or(u32::MAX);
                    return Next::Reply(self.reject(RejectCode::ConfigAfterStart, len, outputs));
                }
                let hello = self.configure(blob, ConfigSource::Link);
                outputs.apply(&self.drive);
                Next::Reply(ToHost::Hello(hello))
            }
            Ok(ToBoard::EndOfRun) => {
                self.drive = Drive::off(false);
                outputs.apply(&self.drive);
                Next::End
            }
            Err(e) => {
                let (code, detail) = RejectCode::of_decode(&e);
                Next::Reply(self.reject(code, detail, outputs))
            }
        }
    }

    /// Serves the link until the end of the run: the hello first, then one reply per frame.
    /// Returns `Ok` at the end of the run, `Err` when the link fails (the outputs are then off).
    pub fn serve<L: embedded_io::Read + embedded_io::Write, O: Apply>(
        &mut self,
        hello: Hello,
        link: &mut L,
        outputs: &mut O,
        deframer: &mut Deframer,
    ) -> Result<(), ()> {
        outputs.apply(&self.drive);
        send(link, &ToHost::Hello(hello))?;
        let mut byte = [0_u8; 1];
        loop {
            match link.read(&mut byte) {
                Ok(1) => {}
                Ok(_) => continue,
                Err(_) => {
                    outputs.apply(&Drive::off(true));
                    return Err(());
                }
            }
            let [b] = byte;
            let Some(received) = deframer.push(b) else { continue };
            match self.handle(received, outputs) {
                Next::Reply(m) => {
                    if send(link, &m).is_err() {
                        outputs.apply(&Drive::off(true));
                        return Err(());
                    }
                }
                Next::End => return Ok(()),
            }
        }
    }
}

/// The frame of a board without a controller: refused, the configuration trip latched.
fn refused_frame(tick: u32, pins: Pins) -> ActuatorFrame {
    ActuatorFrame {
        tick,
        state: State::Refused,
        trip: Some(TripReport { code: TripReason::ConfigInvalid.code(), value: 0.0, limit: 0.0 }),
        warnings: 0,
        dosing_enabled: false,
        alarm: true,
        ph: None,
        spread_ph: 0.0,
        model_ph: None,
        demand_l_per_h: [0.0; 2],
        pumps: [None, None],
        dose_last_hour_l: [0.0; 2],
        dose_last_day_l: [0.0; 2],
        pins,
    }
}

/// Something that drives the outputs (the [`Outputs`] of a board).
pub trait Apply {
    /// Drives the outputs; returns the pins as driven.
    fn apply(&mut self, d: &Drive) -> Pins;
}

impl<RL, AL, D0, S0, D1, S1> Apply for Outputs<RL, AL, D0, S0, D1, S1>
where
    RL: StatefulOutputPin,
    AL: StatefulOutputPin,
    D0: SetDutyCycle,
    S0: StrokeOutput,
    D1: SetDutyCycle,
    S1: StrokeOutput,
{
    fn apply(&mut self, d: &Drive) -> Pins {
        Outputs::apply(self, d)
    }
}

/// Encodes and writes one message, every byte (a short write is retried; a write of nothing
/// is an error).
fn send<L: embedded_io::Write>(link: &mut L, m: &ToHost) -> Result<(), ()> {
    let mut frame = [0_u8; MAX_FRAME_LEN];
    let n = m.encode(&mut frame).map_err(|_| ())?;
    let mut at = 0;
    while at < n {
        let rest = frame.get(at..n).ok_or(())?;
        match link.write(rest) {
            Ok(0) | Err(_) => return Err(()),
            Ok(k) => at += k.min(rest.len()),
        }
    }
    link.flush().map_err(|_| ())
}
