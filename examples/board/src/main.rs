//! phdose firmware for a Cortex-M4F board, here QEMU's `mps2-an386` as a hardware-in-the-loop
//! rig: the controller runs in f32 on the board, its readings arrive over the serial link and
//! its outputs go back over it (see `app` for what it does, `mps2` for the board).
//!
//! Build (release only: `panic-never` proves at link time that nothing can panic):
//! `cd examples/board && cargo build --release`.
#![no_std]
#![no_main]

mod app;
mod mps2;

use cortex_m_rt::entry;
#[cfg(feature = "prove")]
use panic_never as _;
use phdose_link::{ConfigSource, Deframer};

use app::{Drive, Node, Outputs, PumpPins};
use mps2::{RigPin, RigPwm, RigStrokes, Uart};

/// Without `prove`: stop on an undefined instruction, so a panic path stays visible to objdump.
#[cfg(not(feature = "prove"))]
#[panic_handler]
fn on_panic(_: &core::panic::PanicInfo<'_>) -> ! {
    loop {
        cortex_m::asm::udf();
    }
}

/// The configuration stored with the firmware: the built-in example skid as `phdose pack`
/// writes it (regenerate with `cargo run -p phdose-host -- pack --out
/// examples/board/skid/plating-rinse.bin --force`; the HIL tests check it is current).
static BUILT_IN_BLOB: &[u8] = include_bytes!("../skid/plating-rinse.bin");

#[entry]
fn main() -> ! {
    mps2::paint_stack();
    mps2::start_clock();
    let mut outputs = Outputs {
        relay: RigPin::default(),
        alarm: RigPin::default(),
        caustic: PumpPins { duty: RigPwm::default(), strokes: RigStrokes::default() },
        acid: PumpPins { duty: RigPwm::default(), strokes: RigStrokes::default() },
    };
    // Every output off before anything else.
    outputs.apply(&Drive::off(true));
    let Some(mut uart) = Uart::take() else { mps2::end(false) };
    let (mut node, hello) = Node::boot(BUILT_IN_BLOB, ConfigSource::BuiltIn);
    let mut deframer = Deframer::new();
    let served = node.serve(hello, &mut uart, &mut outputs, &mut deframer);
    mps2::report(&uart);
    mps2::end(served.is_ok())
}
