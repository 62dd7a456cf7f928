//! **phdose-link** — the serial link between a phdose board and its host (a supervisory PC, or
//! the hardware-in-the-loop harness that plays the plant).
//!
//! `no_std`, no alloc, no `unsafe`, no panics: the board firmware links it with `panic-never`.
//!
//! # Framing
//! A message's body is `kind (1 byte) | payload | CRC-32/ISO-HDLC of kind and payload (4 bytes,
//! little-endian)`. On the wire the body is COBS-coded ([`cobs`]) and followed by one zero byte,
//! the delimiter: a receiver finds the next frame at the next zero whatever it lost before.
//! Every number is little-endian; `f32`/`f64` travel as their IEEE-754 bits, so a value arrives
//! bit for bit (NaN payloads included).
//!
//! # Messages
//! Host → board ([`ToBoard`]): a [`SensorFrame`] each tick (the readings of
//! [`phdose::control::controller::TickInputs`] with the tick number), a configuration blob
//! before the first tick, or the end of the run. Board → host ([`ToHost`]): a [`Hello`] at boot
//! and after every configuration (which blob, the boot verdict and its codes), an
//! [`ActuatorFrame`] answering each accepted sensor frame (the controller's outputs, as in
//! [`phdose::control::controller::TickOutputs`], and the output pins as driven), or a
//! [`Reject`] answering anything refused (with the pins as driven after the refusal: off).
//!
//! Decoders check everything before they return a message: the CRC, the kind, the exact length
//! of each kind, every enumerated byte and every reserved bit ([`DecodeError`]); a decoded
//! message re-encodes to the same bytes.
#![no_std]

#[cfg(test)]
extern crate std;

pub mod cobs;
mod msg;
mod wire;

pub use msg::*;
pub use wire::{DecodeError, Deframer, EncodeError, FrameError, decode_to_board, decode_to_host};

/// The protocol version a board announces in its [`Hello`] (bumped on any layout change).
pub const PROTOCOL_VERSION: u16 = 1;

/// CRC-32/ISO-HDLC (the CRC of zlib and Ethernet; the configuration blob's CRC too).
pub const CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Largest configuration blob a [`ToBoard::Config`] carries, bytes (the blob format's own
/// maximum).
pub const MAX_CONFIG_LEN: usize = phdose::config::blob::MAX_BLOB_LEN;

/// Largest message body: kind, the largest payload (a configuration), CRC.
pub const MAX_BODY_LEN: usize = 1 + MAX_CONFIG_LEN + 4;

/// Largest frame on the wire: the COBS-coded largest body and the delimiter. A receive buffer
/// of this size takes every valid frame.
pub const MAX_FRAME_LEN: usize = cobs::max_encoded_len(MAX_BODY_LEN) + 1;
