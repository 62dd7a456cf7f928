//! The hardware-in-the-loop harness: the phdose board firmware in QEMU (`mps2-an386`), its
//! UART on a unix socket, and the host plant simulator (`phdose_sim::run::Rig`) in lockstep:
//! send a sensor frame → read the actuator frame → advance the plant one tick with the pumps as
//! the board drove them → repeat. Nothing waits on a clock, so a run is the same however fast
//! the emulation goes.
//!
//! Beside the board, the same controller runs on the host in f32 ([`Lockstep::host`]) with the
//! same decoded inputs, so each tick's outputs can be compared bit for bit.
//!
//! Needs `qemu-system-arm` (QEMU ≥ 7.2 for mps2-an386) and the firmware image, built with
//! `cd examples/board && cargo build --release` (or `./ci.sh hil`, which does both). The image is
//! found at `PHDOSE_BOARD_ELF`, else at the firmware crate's release output.

use std::io::{Read, Write};
use std::os::unix::net::UnixStream;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::atomic::{AtomicU32, Ordering};
use std::time::{Duration, Instant};

use phdose::config::build::{self, MODEL_SYSTEMS};
use phdose::config::{PumpSettings, Skid, blob, boot};
use phdose::control::controller::Controller;
use phdose::control::feedforward::ReagentSide;
use phdose::control::supervisor::ModeRequest;
use phdose_link::{
    ActuatorFrame, DecodeError, Deframer, FrameError, Hello, MAX_FRAME_LEN, Pins, Reject, SensorFrame, ToBoard, ToHost,
    decode_to_host, tick_dt_s,
};
use phdose_sim::run::{Rig, RunError};
use phdose_sim::scenario::Scenario;

/// Longest a QEMU process may live (`timeout` kills it after this), s.
pub const QEMU_LIFETIME_S: u64 = 600;
/// Longest wait for one reply from the board (a hung firmware fails the test, never hangs it).
pub const REPLY_TIMEOUT: Duration = Duration::from_secs(20);

/// Why the harness failed.
#[derive(Debug)]
pub enum HilError {
    /// The firmware image is missing (build it first).
    NoFirmware(PathBuf),
    /// QEMU could not be started, or its socket did not appear.
    Qemu(String),
    /// The socket failed or timed out.
    Io(std::io::Error),
    /// A frame from the board is broken.
    Frame(FrameError),
    /// A frame from the board does not decode.
    Decode(DecodeError),
    /// The board sent something other than what the protocol expects now.
    Unexpected(String),
    /// The plant failed.
    Plant(RunError),
}

impl std::fmt::Display for HilError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::NoFirmware(p) => write!(
                f,
                "no firmware image at {} (build it: cd examples/board && cargo build --release; or ./ci.sh hil)",
                p.display()
            ),
            Self::Qemu(m) => write!(f, "qemu: {m}"),
            Self::Io(e) => write!(f, "link: {e}"),
            Self::Frame(e) => write!(f, "frame from the board: {e}"),
            Self::Decode(e) => write!(f, "message from the board: {e}"),
            Self::Unexpected(m) => write!(f, "unexpected: {m}"),
            Self::Plant(e) => write!(f, "plant: {e}"),
        }
    }
}

impl std::error::Error for HilError {}

impl From<std::io::Error> for HilError {
    fn from(e: std::io::Error) -> Self {
        Self::Io(e)
    }
}

impl From<RunError> for HilError {
    fn from(e: RunError) -> Self {
        Self::Plant(e)
    }
}

/// The firmware image: `PHDOSE_BOARD_ELF`, else the firmware crate's release build.
pub fn firmware_elf() -> PathBuf {
    std::env::var_os("PHDOSE_BOARD_ELF").map_or_else(
        || {
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("../examples/board/target/thumbv7em-none-eabihf/release/phdose-board")
        },
        PathBuf::from,
    )
}

/// The firmware image linked for a small MCU's memory map (256 KiB flash, 64 KiB RAM):
/// `PHDOSE_BOARD_ELF_MCU`, else the firmware crate's `target/mcu` release build (`./ci.sh
/// firmware` builds it).
pub fn firmware_elf_mcu() -> PathBuf {
    std::env::var_os("PHDOSE_BOARD_ELF_MCU").map_or_else(
        || {
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("../examples/board/target/mcu/thumbv7em-none-eabihf/release/phdose-board")
        },
        PathBuf::from,
    )
}

/// The configuration blob stored in the firmware image (the example skid, as committed).
pub fn built_in_blob() -> Result<Vec<u8>, HilError> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/board/skid/plating-rinse.bin");
    std::fs::read(&path).map_err(HilError::Io)
}

/// The blob `phdose pack` writes for `skid`.
pub fn pack(skid: &Skid) -> Vec<u8> {
    let mut buf = [0_u8; blob::MAX_BLOB_LEN];
    match blob::encode(skid, &mut buf) {
        Ok(n) => buf.get(..n).map(<[u8]>::to_vec).unwrap_or_default(),
        Err(_) => Vec::new(),
    }
}

static RUNS: AtomicU32 = AtomicU32::new(0);

/// The board in QEMU, its UART on a unix socket.
pub struct Board {
    child: Child,
    stream: UnixStream,
    deframer: Deframer,
    socket: PathBuf,
    /// QEMU's own output (semihosting, errors).
    pub log: PathBuf,
}

impl Board {
    /// Starts the firmware image `elf` in QEMU (`timeout`-wrapped) and connects to its UART.
    /// `name` tells runs apart in the socket's and the log's file names.
    pub fn start(elf: &Path, name: &str) -> Result<Self, HilError> {
        Self::start_with(elf, name, &[])
    }

    /// [`Board::start`] with more QEMU arguments (e.g. `-icount shift=0`).
    pub fn start_with(elf: &Path, name: &str, qemu_args: &[&str]) -> Result<Self, HilError> {
        if !elf.is_file() {
            return Err(HilError::NoFirmware(elf.to_path_buf()));
        }
        let n = RUNS.fetch_add(1, Ordering::Relaxed);
        let stem = format!("phdose-hil-{}-{n}-{name}", std::process::id());
        let dir = std::env::temp_dir();
        let socket = dir.join(format!("{stem}.sock"));
        let log = dir.join(format!("{stem}.log"));
        let _ = std::fs::remove_file(&socket);
        let out = std::fs::File::create(&log)?;
        let err = out.try_clone()?;
        // wait=on: QEMU starts the CPU only once the harness is connected, so the hello is
        // never sent into an empty socket.
        let chardev = format!("socket,id=s0,path={},server=on,wait=on", socket.display());
        let child = Command::new("timeout")
            .args(["-s", "KILL", &QEMU_LIFETIME_S.to_string(), "qemu-system-arm"])
            .args(["-machine", "mps2-an386", "-cpu", "cortex-m4", "-display", "none", "-monitor", "none"])
            .args(["-semihosting-config", "enable=on,target=native"])
            .args(["-chardev", &chardev, "-serial", "chardev:s0"])
            .args(qemu_args)
            .arg("-kernel")
            .arg(elf)
            .stdin(Stdio::null())
            .stdout(out)
            .stderr(err)
            .spawn()
            .map_err(|e| HilError::Qemu(format!("cannot start timeout/qemu-system-arm: {e}")))?;
        let mut board = Self { child, stream: connect(&socket)?, deframer: Deframer::new(), socket, log };
        board.stream.set_read_timeout(Some(REPLY_TIMEOUT))?;
        if let Some(status) = board.child.try_wait()? {
            return Err(HilError::Qemu(format!("exited at once ({status}): {}", board.log_text())));
        }
        Ok(board)
    }

    /// QEMU's output so far.
    pub fn log_text(&self) -> String {
        std::fs::read_to_string(&self.log).unwrap_or_default()
    }

    /// Sends a message.
    pub fn send(&mut self, m: &ToBoard<'_>) -> Result<(), HilError> {
        let mut frame = [0_u8; MAX_FRAME_LEN];
        let n = m.encode(&mut frame).map_err(|e| HilError::Unexpected(e.to_string()))?;
        self.send_raw(frame.get(..n).unwrap_or(&[]))
    }

    /// Sends raw bytes (for broken frames).
    pub fn send_raw(&mut self, bytes: &[u8]) -> Result<(), HilError> {
        self.stream.write_all(bytes)?;
        Ok(())
    }

    /// The next message from the board.
    pub fn receive(&mut self) -> Result<ToHost, HilError> {
        let mut buf = [0_u8; 256];
        loop {
            let n = self.stream.read(&mut buf)?;
            if n == 0 {
                return Err(HilError::Unexpected(format!("the board closed the link: {}", self.log_text())));
            }
            // One read may hold several frames only if the board sent unasked, which the
            // protocol never does: the first complete frame is the reply, and nothing follows.
            let mut reply = None;
            for b in buf.get(..n).unwrap_or(&[]) {
                if let Some(r) = self.deframer.push(*b) {
                    let body = r.map_err(HilError::Frame)?;
                    if reply.is_some() {
                        return Err(HilError::Unexpected("two frames for one request".into()));
                    }
                    reply = Some(decode_to_host(body).map_err(HilError::Decode)?);
                }
            }
            if let Some(m) = reply {
                return Ok(m);
            }
        }
    }

    /// Sends a message and reads the board's reply.
    pub fn exchange(&mut self, m: &ToBoard<'_>) -> Result<ToHost, HilError> {
        self.send(m)?;
        self.receive()
    }

    /// Reads the hello the board sends at boot.
    pub fn hello(&mut self) -> Result<Hello, HilError> {
        match self.receive()? {
            ToHost::Hello(h) => Ok(h),
            other => Err(HilError::Unexpected(format!("expected a hello, got {other:?}"))),
        }
    }

    /// Ends the run: the board turns its outputs off, reports its stack's high water mark and
    /// ends the emulation.
    pub fn finish(mut self) -> Result<Finished, HilError> {
        self.send(&ToBoard::EndOfRun)?;
        let deadline = Instant::now() + REPLY_TIMEOUT;
        loop {
            if let Some(status) = self.child.try_wait()? {
                let log = self.log_text();
                let stack_bytes = log
                    .lines()
                    .find_map(|l| l.strip_prefix("phdose-board: stack "))
                    .and_then(|rest| rest.split_whitespace().next())
                    .and_then(|n| n.parse().ok());
                let reply_systick =
                    log.lines().find_map(|l| l.strip_prefix("phdose-board: reply systick ")).and_then(ReplyCost::parse);
                return Ok(Finished { status, stack_bytes, reply_systick, log });
            }
            if Instant::now() > deadline {
                return Err(HilError::Qemu("did not exit after the end of the run".into()));
            }
            std::thread::sleep(Duration::from_millis(5));
        }
    }
}

impl Drop for Board {
    fn drop(&mut self) {
        if let Ok(None) = self.child.try_wait() {
            // SIGKILL to `timeout` would orphan QEMU; SIGTERM makes timeout pass it on.
            let _ = Command::new("kill").args(["-TERM", &self.child.id().to_string()]).status();
            let _ = self.child.wait();
        }
        let _ = std::fs::remove_file(&self.socket);
    }
}

/// How a run ended.
#[derive(Debug)]
pub struct Finished {
    /// QEMU's exit status: 0 after a clean end of the run (the firmware's semihosting exit).
    pub status: ExitStatus,
    /// The stack's high water mark the firmware reported, bytes.
    pub stack_bytes: Option<usize>,
    /// The cost of the board's replies in SysTick counts (25 MHz core clock), as it reported.
    pub reply_systick: Option<ReplyCost>,
    /// QEMU's output.
    pub log: String,
}

/// SysTick counts from a frame's delimiter to the reply's first byte, over a run (see the
/// firmware's `mps2` module). Under `-icount shift=0` one count is 40 instructions.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ReplyCost {
    /// Replies measured.
    pub count: u64,
    /// Fewest counts.
    pub min: u64,
    /// Mean counts (rounded down).
    pub mean: u64,
    /// Most counts.
    pub max: u64,
}

impl ReplyCost {
    /// Instructions per SysTick count under `-icount shift=0`: 1 ns per instruction, 40 ns per
    /// count of the 25 MHz clock.
    pub const INSTRUCTIONS_PER_COUNT: u64 = 40;

    /// Parses `count N min A mean B max C`.
    fn parse(s: &str) -> Option<Self> {
        let w: Vec<&str> = s.split_whitespace().collect();
        match w.as_slice() {
            ["count", n, "min", a, "mean", b, "max", c] => {
                Some(Self { count: n.parse().ok()?, min: a.parse().ok()?, mean: b.parse().ok()?, max: c.parse().ok()? })
            }
            _ => None,
        }
    }
}

fn connect(socket: &Path) -> Result<UnixStream, HilError> {
    let deadline = Instant::now() + Duration::from_secs(20);
    loop {
        match UnixStream::connect(socket) {
            Ok(s) => return Ok(s),
            Err(e) if Instant::now() > deadline => {
                return Err(HilError::Qemu(format!("no UART socket at {}: {e}", socket.display())));
            }
            Err(_) => std::thread::sleep(Duration::from_millis(10)),
        }
    }
}

/// One tick of a lockstep run, as recorded.
#[derive(Clone, Debug)]
pub struct Record {
    /// Plant time at the start of the tick, s.
    pub t_s: f64,
    /// The true tank pH at the start of the tick.
    pub ph_before: f64,
    /// Lowest and highest true pH during the tick.
    pub ph_range: (f64, f64),
    /// What was sent.
    pub sent: SensorFrame,
    /// The board's answer.
    pub board: ActuatorFrame,
    /// The host controller's answer to the same inputs (with the board's pins), when it runs.
    pub host: Option<ActuatorFrame>,
    /// Reagent flows the plant received from the pumps (caustic, acid), L/h.
    pub pump_l_per_h: [f64; 2],
}

/// A lockstep run: the board, the plant, and the host's copy of the controller.
pub struct Lockstep {
    /// The board.
    pub board: Board,
    /// The plant.
    pub rig: Rig,
    /// The same controller on the host (f32), fed the same decoded inputs; `None` when the
    /// configuration cannot make one.
    pub host: Option<Controller<f32, MODEL_SYSTEMS>>,
    /// The board's hello (after the configuration, when one was sent).
    pub hello: Hello,
    /// The ticks so far.
    pub records: Vec<Record>,
    skid: Skid,
    tick: u32,
    tick_s: f32,
    last_host_tick: Option<u32>,
    /// Wall time spent, s.
    pub wall_s: f64,
}

/// Which configuration the board runs.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Config<'a> {
    /// The blob stored in the firmware image.
    BuiltIn,
    /// A blob sent over the link before the first tick.
    Send(&'a [u8]),
}

impl Lockstep {
    /// Starts the firmware image `elf` with `config` against the plant of `scenario` (whose
    /// skid must be the configuration's, for the plant's probes and pumps).
    pub fn start(elf: &Path, name: &str, scenario: &Scenario, config: Config<'_>) -> Result<Self, HilError> {
        Self::start_with(elf, name, scenario, config, &[])
    }

    /// [`Lockstep::start`] with more QEMU arguments.
    pub fn start_with(
        elf: &Path,
        name: &str,
        scenario: &Scenario,
        config: Config<'_>,
        qemu_args: &[&str],
    ) -> Result<Self, HilError> {
        let wall = Instant::now();
        let mut board = Board::start_with(elf, name, qemu_args)?;
        let mut hello = board.hello()?;
        let blob = match config {
            Config::BuiltIn => built_in_blob()?,
            Config::Send(b) => {
                hello = match board.exchange(&ToBoard::Config(b))? {
                    ToHost::Hello(h) => h,
                    other => return Err(HilError::Unexpected(format!("expected a hello, got {other:?}"))),
                };
                b.to_vec()
            }
        };
        let (decoded, report) = boot::check_blob::<f32>(&blob);
        let host = decoded.as_ref().and_then(|skid| {
            let config = build::controller_config::<f32>(skid).ok()?;
            Controller::new(config, report.allowed()).ok()
        });
        let rig = Rig::new(scenario, None)?;
        Ok(Self {
            board,
            rig,
            host,
            hello,
            records: Vec::new(),
            skid: scenario.skid.clone(),
            tick: 0,
            tick_s: scenario.skid.control.tick_s,
            last_host_tick: None,
            wall_s: wall.elapsed().as_secs_f64(),
        })
    }

    /// The sensor frame of the plant now, for the next tick (auto mode, flow meter fitted,
    /// probes as the plant shows them; three probe slots, NaN beyond the skid's probes).
    fn frame(&mut self) -> Result<SensorFrame, HilError> {
        let s = self.rig.sense()?;
        self.tick += 1;
        Ok(SensorFrame {
            tick: self.tick,
            probe_mv: s.probe_mv.map(|v| v as f32),
            temperature_c: s.temperature_c as f32,
            influent_flow_l_per_h: Some(s.influent_l_per_h as f32),
            flow_switch: s.flow_switch(),
            reagent_low: [false; 2],
            reset: false,
            mode: ModeRequest::Auto,
            manual_side: ReagentSide::Caustic,
            manual_l_per_h: 0.0,
        })
    }

    /// The flow each pump delivers for the pins as driven, L/h (the plant's delivery factor
    /// and a stuck pump are the plant's business; the relay gates both in the plant).
    pub fn pump_flows(&self, pins: &Pins) -> [f64; 2] {
        let flow = |settings: Option<&phdose::config::ReagentSettings>, i: usize| -> f64 {
            let (Some(s), Some(&duty), Some(&max), Some(&strokes)) =
                (settings, pins.duty.get(i), pins.duty_max.get(i), pins.strokes.get(i))
            else {
                return 0.0;
            };
            match s.pump {
                PumpSettings::Duty { max_l_per_h, .. } if max > 0 => {
                    f64::from(duty) / f64::from(max) * f64::from(max_l_per_h)
                }
                PumpSettings::Pulse { stroke_volume_ml, .. } => {
                    f64::from(strokes) * f64::from(stroke_volume_ml) / 1000.0 * 3600.0 / f64::from(self.tick_s)
                }
                PumpSettings::Duty { .. } => 0.0,
            }
        };
        [flow(self.skid.caustic.as_ref(), 0), flow(self.skid.acid.as_ref(), 1)]
    }

    /// One tick: the plant's readings (changed by `fault` first, for injected faults) to the
    /// board, its actuator frame back, the host controller on the same inputs, the plant one
    /// tick on with the pumps as the board drove them.
    pub fn step_with(&mut self, fault: impl FnOnce(f64, &mut SensorFrame)) -> Result<&Record, HilError> {
        let wall = Instant::now();
        let t_s = self.rig.time_s();
        let ph_before = self.rig.ph();
        let mut sent = self.frame()?;
        fault(t_s, &mut sent);
        let board = match self.board.exchange(&ToBoard::Sensors(sent))? {
            ToHost::Actuators(a) => a,
            other => {
                return Err(HilError::Unexpected(format!("tick {}: expected actuators, got {other:?}", sent.tick)));
            }
        };
        let host = match self.host.as_mut() {
            Some(c) => {
                let gap = self.last_host_tick.map_or(1, |last| sent.tick.saturating_sub(last));
                let out = c.step(&sent.tick_inputs(tick_dt_s(self.tick_s, gap)));
                Some(ActuatorFrame::from_outputs(sent.tick, &out, board.pins))
            }
            None => None,
        };
        self.last_host_tick = Some(sent.tick);
        let pump_l_per_h = self.pump_flows(&board.pins);
        let a = self.rig.advance(pump_l_per_h, board.pins.relay)?;
        self.records.push(Record { t_s, ph_before, ph_range: a.ph_range, sent, board, host, pump_l_per_h });
        self.wall_s += wall.elapsed().as_secs_f64();
        self.records.last().ok_or_else(|| HilError::Unexpected("no record".into()))
    }

    /// One tick without faults.
    pub fn step(&mut self) -> Result<&Record, HilError> {
        self.step_with(|_, _| {})
    }

    /// Ticks until the plant's time reaches `until_s`, injecting `fault` into every frame.
    pub fn run_until(&mut self, until_s: f64, mut fault: impl FnMut(f64, &mut SensorFrame)) -> Result<(), HilError> {
        while self.rig.time_s() < until_s - 1e-9 {
            self.step_with(&mut fault)?;
        }
        Ok(())
    }

    /// Skips `ticks` tick numbers (frames lost on the way) while the plant runs on with the
    /// pumps as last driven: the board hears nothing meanwhile.
    pub fn lose_frames(&mut self, ticks: u32) -> Result<(), HilError> {
        let pins = self.records.last().map(|r| r.board.pins).unwrap_or_default();
        let flows = self.pump_flows(&pins);
        for _ in 0..ticks {
            self.rig.sense()?;
            self.tick += 1;
            self.rig.advance(flows, pins.relay)?;
        }
        Ok(())
    }

    /// Sends raw bytes in place of a tick's frame and expects a reject; the plant runs one tick
    /// on with the pins the reject reports (a tick number is used up, as for a lost frame).
    pub fn corrupt_tick(&mut self, bytes: &[u8]) -> Result<Reject, HilError> {
        self.board.send_raw(bytes)?;
        let r = match self.board.receive()? {
            ToHost::Reject(r) => r,
            other => return Err(HilError::Unexpected(format!("expected a reject, got {other:?}"))),
        };
        // The host's copy is told what the board's controller is told.
        if let Some(h) = self.host.as_mut() {
            h.outputs_forced_off(self.tick_s);
        }
        self.rig.sense()?;
        self.tick += 1;
        let flows = self.pump_flows(&r.pins);
        self.rig.advance(flows, r.pins.relay)?;
        Ok(r)
    }

    /// Ends the run (see [`Board::finish`]).
    pub fn finish(self) -> Result<Finished, HilError> {
        self.board.finish()
    }

    /// The tick number of the next frame.
    pub fn next_tick(&self) -> u32 {
        self.tick + 1
    }
}

/// A message to the board encoded as a complete frame (COBS and delimiter).
pub fn frame_bytes(m: &ToBoard<'_>) -> Vec<u8> {
    let mut out = [0_u8; MAX_FRAME_LEN];
    m.encode(&mut out).ok().and_then(|n| out.get(..n).map(<[u8]>::to_vec)).unwrap_or_default()
}

/// A message to the host encoded as a complete frame.
pub fn host_frame_bytes(m: &ToHost) -> Vec<u8> {
    let mut out = [0_u8; MAX_FRAME_LEN];
    m.encode(&mut out).ok().and_then(|n| out.get(..n).map(<[u8]>::to_vec)).unwrap_or_default()
}

/// The bytes of `m` with the body's bit `bit` flipped, re-framed (the CRC then fails).
pub fn flipped(m: &ToBoard<'_>, bit: usize) -> Vec<u8> {
    let wire = frame_bytes(m);
    let mut d = Deframer::new();
    let mut body = Vec::new();
    for b in &wire {
        if let Some(Ok(x)) = d.push(*b) {
            body = x.to_vec();
        }
    }
    if let Some(byte) = body.get_mut(bit / 8) {
        *byte ^= 1 << (bit % 8);
    }
    let mut out = vec![0_u8; phdose_link::cobs::max_encoded_len(body.len()) + 1];
    let n = phdose_link::cobs::encode(&body, &mut out).unwrap_or(0);
    out.truncate(n);
    out.push(0);
    out
}
