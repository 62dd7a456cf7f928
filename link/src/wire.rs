//! Bytes ↔ messages: the body layout, the CRC, COBS framing and the receiver's deframer.

use crate::cobs::{self, CobsError};
use crate::msg::{Field, ToBoard, ToHost};
use crate::{CRC32, MAX_BODY_LEN, MAX_FRAME_LEN};

/// Why a body could not be decoded into a message.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DecodeError {
    /// Shorter than a kind and a CRC.
    TooShort {
        /// Bytes in the body.
        len: usize,
    },
    /// The CRC does not match: the frame was corrupted.
    Crc {
        /// CRC in the frame.
        stored: u32,
        /// CRC of the bytes received.
        computed: u32,
    },
    /// A kind this direction does not have.
    UnknownKind {
        /// The kind byte.
        kind: u8,
    },
    /// The payload's length is wrong for its kind.
    Length {
        /// The kind byte.
        kind: u8,
        /// Payload bytes expected (the most, for a configuration).
        expected: usize,
        /// Payload bytes received.
        actual: usize,
    },
    /// A field holds a value its type does not have (an unknown enumeration value, a reserved
    /// bit set, an absent value with non-zero bits).
    Field {
        /// Which field.
        field: Field,
        /// The byte or word received.
        value: u32,
    },
}

impl core::fmt::Display for DecodeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::TooShort { len } => write!(f, "message of {len} bytes is shorter than a kind and a CRC"),
            Self::Crc { stored, computed } => {
                write!(f, "CRC mismatch: stored {stored:#010x}, computed {computed:#010x} (corrupted)")
            }
            Self::UnknownKind { kind } => write!(f, "unknown message kind {kind:#04x}"),
            Self::Length { kind, expected, actual } => {
                write!(f, "message kind {kind:#04x} needs {expected} payload bytes, got {actual}")
            }
            Self::Field { field, value } => write!(f, "field {} holds an invalid value {value:#x}", field.name()),
        }
    }
}

impl core::error::Error for DecodeError {}

/// Why a frame could not be taken off the wire.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FrameError {
    /// The COBS coding is broken.
    Cobs(CobsError),
    /// More bytes than the longest valid frame before a delimiter (they were dropped up to it).
    TooLong,
}

impl core::fmt::Display for FrameError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Cobs(e) => write!(f, "framing: {e}"),
            Self::TooLong => write!(f, "frame longer than {MAX_FRAME_LEN} bytes"),
        }
    }
}

impl core::error::Error for FrameError {}

/// Why a message could not be encoded.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EncodeError {
    /// The output buffer is too small (a buffer of [`MAX_FRAME_LEN`] bytes always suffices).
    BufferTooSmall,
    /// A configuration longer than [`crate::MAX_CONFIG_LEN`].
    ConfigTooLong {
        /// Its length.
        len: usize,
    },
}

impl core::fmt::Display for EncodeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::BufferTooSmall => f.write_str("buffer too small for the frame"),
            Self::ConfigTooLong { len } => {
                write!(f, "configuration of {len} bytes exceeds {} bytes", crate::MAX_CONFIG_LEN)
            }
        }
    }
}

impl core::error::Error for EncodeError {}

/// Appends little-endian fields to a buffer; every write is checked (never panics).
pub(crate) struct Writer<'a> {
    buf: &'a mut [u8],
    pos: usize,
}

impl<'a> Writer<'a> {
    pub(crate) fn new(buf: &'a mut [u8]) -> Self {
        Self { buf, pos: 0 }
    }

    pub(crate) fn bytes(&mut self, src: &[u8]) -> Result<(), EncodeError> {
        let end = self.pos.checked_add(src.len()).ok_or(EncodeError::BufferTooSmall)?;
        let dst = self.buf.get_mut(self.pos..end).ok_or(EncodeError::BufferTooSmall)?;
        for (d, s) in dst.iter_mut().zip(src) {
            *d = *s;
        }
        self.pos = end;
        Ok(())
    }

    pub(crate) fn u8(&mut self, v: u8) -> Result<(), EncodeError> {
        self.bytes(&[v])
    }

    pub(crate) fn u16(&mut self, v: u16) -> Result<(), EncodeError> {
        self.bytes(&v.to_le_bytes())
    }

    pub(crate) fn u32(&mut self, v: u32) -> Result<(), EncodeError> {
        self.bytes(&v.to_le_bytes())
    }

    pub(crate) fn f32(&mut self, v: f32) -> Result<(), EncodeError> {
        self.u32(v.to_bits())
    }

    pub(crate) fn f64(&mut self, v: f64) -> Result<(), EncodeError> {
        self.bytes(&v.to_bits().to_le_bytes())
    }

    pub(crate) fn len(&self) -> usize {
        self.pos
    }
}

/// Reads little-endian fields from a payload whose length was checked beforehand; a short read
/// is still an error, never a panic.
pub(crate) struct Reader<'a> {
    rest: &'a [u8],
    kind: u8,
    expected: usize,
    actual: usize,
}

impl<'a> Reader<'a> {
    pub(crate) fn new(kind: u8, payload: &'a [u8], expected: usize) -> Result<Self, DecodeError> {
        if payload.len() != expected {
            return Err(DecodeError::Length { kind, expected, actual: payload.len() });
        }
        Ok(Self { rest: payload, kind, expected, actual: payload.len() })
    }

    fn short(&self) -> DecodeError {
        DecodeError::Length { kind: self.kind, expected: self.expected, actual: self.actual }
    }

    pub(crate) fn array<const N: usize>(&mut self) -> Result<[u8; N], DecodeError> {
        let (head, tail) = self.rest.split_first_chunk::<N>().ok_or_else(|| self.short())?;
        self.rest = tail;
        Ok(*head)
    }

    pub(crate) fn u8(&mut self) -> Result<u8, DecodeError> {
        let [b] = self.array::<1>()?;
        Ok(b)
    }

    pub(crate) fn u16(&mut self) -> Result<u16, DecodeError> {
        Ok(u16::from_le_bytes(self.array()?))
    }

    pub(crate) fn u32(&mut self) -> Result<u32, DecodeError> {
        Ok(u32::from_le_bytes(self.array()?))
    }

    pub(crate) fn f32(&mut self) -> Result<f32, DecodeError> {
        Ok(f32::from_bits(self.u32()?))
    }

    pub(crate) fn f64(&mut self) -> Result<f64, DecodeError> {
        Ok(f64::from_bits(u64::from_le_bytes(self.array()?)))
    }
}

/// Splits a body into kind and payload after checking its length and CRC.
fn open(body: &[u8]) -> Result<(u8, &[u8]), DecodeError> {
    let len = body.len();
    let (signed, crc) = body.split_last_chunk::<4>().ok_or(DecodeError::TooShort { len })?;
    let (&kind, payload) = signed.split_first().ok_or(DecodeError::TooShort { len })?;
    let stored = u32::from_le_bytes(*crc);
    let computed = CRC32.checksum(signed);
    if stored != computed {
        return Err(DecodeError::Crc { stored, computed });
    }
    Ok((kind, payload))
}

/// Decodes a message to the board from a frame's body (COBS already undone, see [`Deframer`]).
/// The configuration of a [`ToBoard::Config`] borrows from `body`.
pub fn decode_to_board(body: &[u8]) -> Result<ToBoard<'_>, DecodeError> {
    let (kind, payload) = open(body)?;
    ToBoard::decode_payload(kind, payload)
}

/// Decodes a message to the host from a frame's body (COBS already undone, see [`Deframer`]).
pub fn decode_to_host(body: &[u8]) -> Result<ToHost, DecodeError> {
    let (kind, payload) = open(body)?;
    ToHost::decode_payload(kind, payload)
}

/// Encodes a complete frame into `out`: the body `write` produces (kind and payload) with its
/// CRC, COBS-coded, then the zero delimiter. Returns the frame's length.
pub(crate) fn encode_frame(
    out: &mut [u8],
    write: impl FnOnce(&mut Writer<'_>) -> Result<(), EncodeError>,
) -> Result<usize, EncodeError> {
    let mut body = [0_u8; MAX_BODY_LEN];
    let mut w = Writer::new(&mut body);
    write(&mut w)?;
    let n = w.len();
    let crc = CRC32.checksum(body.get(..n).ok_or(EncodeError::BufferTooSmall)?);
    let mut w = Writer { buf: &mut body, pos: n };
    w.u32(crc)?;
    let n = w.len();
    let coded =
        cobs::encode(body.get(..n).ok_or(EncodeError::BufferTooSmall)?, out).ok_or(EncodeError::BufferTooSmall)?;
    *out.get_mut(coded).ok_or(EncodeError::BufferTooSmall)? = 0;
    Ok(coded + 1)
}

/// The receiver's side of the framing: bytes in one at a time, a frame's body out at each
/// delimiter. Holds at most [`MAX_FRAME_LEN`] bytes; a longer run of bytes without a delimiter is
/// dropped (and reported once, at the delimiter that ends it). Constant work per byte, except at
/// a delimiter (one pass over the frame).
#[derive(Clone, Debug)]
pub struct Deframer {
    buf: [u8; MAX_FRAME_LEN],
    len: usize,
    overflow: bool,
}

impl Default for Deframer {
    fn default() -> Self {
        Self::new()
    }
}

impl Deframer {
    /// An empty deframer.
    pub const fn new() -> Self {
        Self { buf: [0; MAX_FRAME_LEN], len: 0, overflow: false }
    }

    /// Forgets a partly received frame.
    pub fn clear(&mut self) {
        self.len = 0;
        self.overflow = false;
    }

    /// Takes one byte from the wire. At a delimiter: `Some` with the frame's body (COBS undone,
    /// CRC not yet checked) or why the frame is broken; a delimiter right after a delimiter is
    /// skipped (`None`), so a sender may start with one to flush a receiver.
    pub fn push(&mut self, byte: u8) -> Option<Result<&[u8], FrameError>> {
        if byte != 0 {
            match self.buf.get_mut(self.len) {
                Some(slot) if !self.overflow => {
                    *slot = byte;
                    self.len += 1;
                }
                _ => self.overflow = true,
            }
            return None;
        }
        let (len, overflow) = (self.len, self.overflow);
        self.clear();
        if overflow {
            return Some(Err(FrameError::TooLong));
        }
        if len == 0 {
            return None;
        }
        Some(match cobs::decode_in_place(&mut self.buf, len) {
            Ok(n) => self.buf.get(..n).ok_or(FrameError::TooLong),
            Err(e) => Err(FrameError::Cobs(e)),
        })
    }
}
