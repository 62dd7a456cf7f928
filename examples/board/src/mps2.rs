//! The emulated board: QEMU's `mps2-an386` (Arm MPS2 with a Cortex-M4F) as a
//! hardware-in-the-loop rig.
//!
//! - **UART0** (an Arm CMSDK APB UART at `0x4000_4000`, QEMU's first `-serial`) carries the link:
//!   registers DATA (+0x00: read a received byte, write one to send), STATE (+0x04: bit 0 TX
//!   buffer full, bit 1 RX buffer full, bits 2–3 overrun, write 1 to clear), CTRL (+0x08: bit 0
//!   TX enable, bit 1 RX enable) and BAUDDIV (+0x10, at least 16). QEMU holds input until it is
//!   read, so polling loses nothing; after enabling the receiver one dummy read of DATA is needed
//!   or QEMU delivers the first byte only about a second later (observed with QEMU 7.2).
//! - **Outputs**: the rig has no pins. The relay, the alarm and the pump inputs are
//!   embedded-hal implementations that hold what they were driven to; the application reports
//!   them in every actuator frame, and the host's plant runs on them.
//! - **Semihosting** ends the emulation (exit status 0 after the end of the run, 1 when the link
//!   failed). A real board has no semihosting host: there `bkpt` would fault, so nothing outside
//!   this module uses it.
//!
//! - **Stack measurement**: at boot the free RAM between the statics and the stack is painted
//!   with a pattern; at the end of the run the deepest word overwritten gives the stack's high
//!   water mark, printed on the semihosting console (QEMU's standard output). Every buffer of
//!   the firmware (configuration, receive frame, controller) lives on the stack, so this is its
//!   RAM use beside the statics.
//!
//! - **Cost of a tick**: SysTick runs from the core clock (25 MHz on this board); the UART notes
//!   its count when a frame's delimiter arrives and again when the first byte of the reply
//!   leaves. Under QEMU's `-icount shift=0` (one instruction per nanosecond of virtual time) one
//!   SysTick count is 40 instructions, so the counts measure the instructions the firmware
//!   spends per message (deframe, decode, controller step, outputs, encode); without `-icount`
//!   they follow the host's speed and mean nothing. Printed at the end of the run.
//!
//! This module holds the firmware's only `unsafe` code: volatile accesses to the UART's
//! registers and to the unused RAM below the stack.

use core::convert::Infallible;
use core::sync::atomic::{AtomicBool, Ordering};

use crate::app::StrokeOutput;

/// UART0's base address on mps2-an386 (the board's memory map).
const UART0: usize = 0x4000_4000;
const DATA: usize = 0x00;
const STATE: usize = 0x04;
const CTRL: usize = 0x08;
const BAUDDIV: usize = 0x10;
const TX_FULL: u32 = 1 << 0;
const RX_FULL: u32 = 1 << 1;
const OVERRUNS: u32 = 0b1100;
/// 25 MHz / 115 200 baud ≈ 217 (the emulation ignores the rate; a divisor of at least 16 is
/// required).
const BAUD_DIVISOR: u32 = 217;

static UART_TAKEN: AtomicBool = AtomicBool::new(false);

/// SysTick counts between a frame's delimiter and the reply's first byte.
#[derive(Default)]
struct ReplyCost {
    since: Option<u32>,
    count: u32,
    sum: u64,
    min: u32,
    max: u32,
}

impl ReplyCost {
    /// SysTick's reload: the full 24 bits (0.67 s at 25 MHz).
    const RELOAD: u32 = 0x00FF_FFFF;

    fn start(&mut self) {
        self.since = Some(cortex_m::peripheral::SYST::get_current());
    }

    fn stop(&mut self) {
        if let Some(start) = self.since.take() {
            // SysTick counts down and wraps at 24 bits.
            let now = cortex_m::peripheral::SYST::get_current();
            let d = start.wrapping_sub(now) & Self::RELOAD;
            self.min = if self.count == 0 { d } else { self.min.min(d) };
            self.max = self.max.max(d);
            self.sum = self.sum.saturating_add(u64::from(d));
            self.count = self.count.saturating_add(1);
        }
    }
}

/// Starts SysTick free-running from the core clock (for the cost of a tick, see the module
/// docs). Does nothing if the core peripherals were taken before.
pub fn start_clock() {
    if let Some(mut p) = cortex_m::Peripherals::take() {
        p.SYST.set_clock_source(cortex_m::peripheral::syst::SystClkSource::Core);
        p.SYST.set_reload(ReplyCost::RELOAD);
        p.SYST.clear_current();
        p.SYST.enable_counter();
    }
}

/// UART0, owned: [`Uart::take`] hands it out once.
pub struct Uart {
    cost: ReplyCost,
}

impl Uart {
    /// UART0, enabled for transmit and receive; `None` after the first call.
    pub fn take() -> Option<Self> {
        if UART_TAKEN.swap(true, Ordering::AcqRel) {
            return None;
        }
        let uart = Self { cost: ReplyCost::default() };
        uart.write(BAUDDIV, BAUD_DIVISOR);
        uart.write(CTRL, 0b11);
        uart.write(STATE, OVERRUNS);
        // The dummy read (see the module docs).
        let _ = uart.read(DATA);
        Some(uart)
    }

    fn read(&self, offset: usize) -> u32 {
        let reg = (UART0 + offset) as *const u32;
        // SAFETY: `reg` is one of UART0's word-aligned registers on this board's memory map
        // (DATA, STATE, CTRL, BAUDDIV), valid for a volatile 32-bit read at any time; `self`
        // proves this code owns the UART (`take` hands it out once).
        unsafe { core::ptr::read_volatile(reg) }
    }

    fn write(&self, offset: usize, value: u32) {
        let reg = (UART0 + offset) as *mut u32;
        // SAFETY: as in `read`: a word-aligned UART0 register, owned through `self`; the values
        // written are the ones the device documents for it.
        unsafe { core::ptr::write_volatile(reg, value) }
    }

    fn receive(&mut self) -> u8 {
        loop {
            let state = self.read(STATE);
            if state & OVERRUNS != 0 {
                self.write(STATE, OVERRUNS);
            }
            if state & RX_FULL != 0 {
                let b = (self.read(DATA) & 0xFF) as u8;
                if b == 0 {
                    self.cost.start();
                }
                return b;
            }
        }
    }

    fn transmit(&mut self, byte: u8) {
        self.cost.stop();
        while self.read(STATE) & TX_FULL != 0 {}
        self.write(DATA, u32::from(byte));
    }
}

impl embedded_io::ErrorType for Uart {
    type Error = Infallible;
}

impl embedded_io::Read for Uart {
    /// Blocks until a byte arrives; returns one byte at a time.
    fn read(&mut self, buf: &mut [u8]) -> Result<usize, Infallible> {
        match buf.first_mut() {
            Some(slot) => {
                *slot = self.receive();
                Ok(1)
            }
            None => Ok(0),
        }
    }
}

impl embedded_io::Write for Uart {
    fn write(&mut self, buf: &[u8]) -> Result<usize, Infallible> {
        for b in buf {
            self.transmit(*b);
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> Result<(), Infallible> {
        while self.read(STATE) & TX_FULL != 0 {}
        Ok(())
    }
}

/// A digital output of the rig: holds the level it was driven to.
#[derive(Default)]
pub struct RigPin {
    high: bool,
}

impl embedded_hal::digital::ErrorType for RigPin {
    type Error = Infallible;
}

impl embedded_hal::digital::OutputPin for RigPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.high = false;
        Ok(())
    }

    fn set_high(&mut self) -> Result<(), Infallible> {
        self.high = true;
        Ok(())
    }
}

impl embedded_hal::digital::StatefulOutputPin for RigPin {
    fn is_set_high(&mut self) -> Result<bool, Infallible> {
        Ok(self.high)
    }

    fn is_set_low(&mut self) -> Result<bool, Infallible> {
        Ok(!self.high)
    }
}

/// A PWM output of the rig, 0–[`RigPwm::MAX_DUTY`]: holds the duty it was set to.
#[derive(Default)]
pub struct RigPwm {
    duty: u16,
}

impl RigPwm {
    /// Full duty: 10 000 steps (0.01 %), finer than any pump resolution the settings allow
    /// to matter here (the example's is 1000 steps).
    pub const MAX_DUTY: u16 = 10_000;
}

impl embedded_hal::pwm::ErrorType for RigPwm {
    type Error = Infallible;
}

impl embedded_hal::pwm::SetDutyCycle for RigPwm {
    fn max_duty_cycle(&self) -> u16 {
        Self::MAX_DUTY
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.duty = duty.min(Self::MAX_DUTY);
        Ok(())
    }
}

/// A pulse output of the rig: holds the strokes of the coming tick.
#[derive(Default)]
pub struct RigStrokes {
    strokes: u32,
}

impl StrokeOutput for RigStrokes {
    type Error = Infallible;

    fn give(&mut self, strokes: u32) -> Result<(), Infallible> {
        self.strokes = strokes;
        Ok(())
    }
}

unsafe extern "C" {
    /// End of the zero-initialised statics (cortex-m-rt's linker script).
    static __ebss: u32;
    /// Top of the stack: the end of RAM (cortex-m-rt's linker script).
    static _stack_start: u32;
}

/// The pattern painted over free RAM.
const PAINT: u32 = 0xC0FF_EE55;
/// Bytes below the stack pointer left unpainted (the painting function's own frame).
const PAINT_MARGIN: usize = 256;

/// The free RAM: from the end of the statics (word-aligned) to the top of the stack.
fn ram_bounds() -> (usize, usize) {
    let bottom = (&raw const __ebss) as usize;
    let top = (&raw const _stack_start) as usize;
    ((bottom + 3) & !3, top)
}

/// Paints the free RAM below the stack pointer. Call it first thing in `main`, with no
/// interrupt enabled.
pub fn paint_stack() {
    let (bottom, _) = ram_bounds();
    let sp = cortex_m::register::msp::read() as usize;
    let mut p = bottom;
    while p + 4 <= sp.saturating_sub(PAINT_MARGIN) {
        // SAFETY: `p` is word-aligned and lies between the end of the statics and a margin
        // below the stack pointer: RAM that nothing uses yet (no interrupt runs, no frame of a
        // caller reaches below the current stack pointer).
        unsafe { core::ptr::write_volatile(p as *mut u32, PAINT) };
        p += 4;
    }
}

/// The deepest the stack has reached since [`paint_stack`], bytes from the top of RAM.
pub fn stack_used() -> usize {
    let (bottom, top) = ram_bounds();
    let mut p = bottom;
    // SAFETY: `p` is word-aligned RAM between the end of the statics and the top of the
    // stack; reading it has no side effect.
    while p < top && unsafe { core::ptr::read_volatile(p as *const u32) } == PAINT {
        p += 4;
    }
    top - p
}

/// Writes `n` in decimal into `out` from the end; returns where the digits start.
fn decimal(mut n: u64, out: &mut [u8; 20]) -> usize {
    let mut at = out.len();
    loop {
        at -= 1;
        if let Some(d) = out.get_mut(at) {
            *d = b'0' + (n % 10) as u8;
        }
        n /= 10;
        if n == 0 || at == 0 {
            return at;
        }
    }
}

/// Prints the stack's high water mark and the cost of the replies on the semihosting
/// console: `phdose-board: stack N bytes` and `phdose-board: reply systick count N min A mean B
/// max C`.
pub fn report(uart: &Uart) {
    let Ok(mut out) = cortex_m_semihosting::hio::hstdout() else { return };
    let mut number = |prefix: &[u8], n: u64| {
        let mut digits = [0_u8; 20];
        let at = decimal(n, &mut digits);
        let _ = out.write_all(prefix);
        let _ = out.write_all(digits.get(at..).unwrap_or(&[]));
    };
    number(b"phdose-board: stack ", stack_used() as u64);
    number(b" bytes\nphdose-board: reply systick count ", u64::from(uart.cost.count));
    let c = &uart.cost;
    number(b" min ", u64::from(c.min));
    number(b" mean ", c.sum.checked_div(u64::from(c.count)).unwrap_or(0));
    number(b" max ", u64::from(c.max));
    let _ = out.write_all(b"\n");
}

/// Ends the emulation: exit status 0 when `ok`, else 1 (semihosting; QEMU needs
/// `-semihosting-config enable=on,target=native`). Without a semihosting host it stops here.
pub fn end(ok: bool) -> ! {
    use cortex_m_semihosting::debug;
    debug::exit(if ok { debug::EXIT_SUCCESS } else { debug::EXIT_FAILURE });
    loop {
        cortex_m::asm::wfi();
    }
}
