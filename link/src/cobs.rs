//! Consistent-overhead byte stuffing (COBS): a frame's bytes re-coded without any zero, so a
//! single zero byte can end every frame on the wire. A receiver that joins mid-stream, or loses
//! bytes, finds the next frame at the next zero. The overhead is one byte per 254 bytes plus one.
//!
//! Each block starts with a code byte n (1–255): n − 1 data bytes follow, then an implied zero,
//! except after a block of code 255 (254 data bytes, no zero) and after the last block.

/// Why a frame's bytes are not valid COBS.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CobsError {
    /// No bytes between two delimiters.
    Empty,
    /// A zero byte inside the frame (the sender never writes one).
    ZeroByte {
        /// Its offset in the encoded frame.
        at: usize,
    },
    /// A block's code byte promises more bytes than the frame holds.
    Truncated {
        /// Offset of that code byte.
        at: usize,
    },
    /// The decoded frame does not fit the buffer.
    TooLong,
}

impl core::fmt::Display for CobsError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Empty => f.write_str("empty frame"),
            Self::ZeroByte { at } => write!(f, "zero byte inside a frame at offset {at}"),
            Self::Truncated { at } => write!(f, "block at offset {at} runs past the end of the frame"),
            Self::TooLong => f.write_str("frame longer than the buffer"),
        }
    }
}

impl core::error::Error for CobsError {}

/// Most bytes COBS makes of `n` bytes (without the delimiter).
pub const fn max_encoded_len(n: usize) -> usize {
    n + n / 254 + 1
}

/// Encodes `src` into `out` (without the delimiter). Returns the encoded length, or `None` when
/// `out` is too small. Never writes a zero. One pass over `src`.
pub fn encode(src: &[u8], out: &mut [u8]) -> Option<usize> {
    let mut code_at = 0_usize;
    let mut w = 1_usize;
    let mut code = 1_u8;
    // Reserve the first code byte.
    *out.get_mut(code_at)? = 1;
    for &b in src {
        if b == 0 {
            *out.get_mut(code_at)? = code;
            code_at = w;
            *out.get_mut(code_at)? = 1;
            w += 1;
            code = 1;
        } else {
            *out.get_mut(w)? = b;
            w += 1;
            code += 1;
            if code == 0xFF {
                *out.get_mut(code_at)? = code;
                code_at = w;
                *out.get_mut(code_at)? = 1;
                w += 1;
                code = 1;
            }
        }
    }
    *out.get_mut(code_at)? = code;
    Some(w)
}

/// Decodes `buf[..len]` in place (the decoded bytes are never longer than the encoded ones)
/// and returns the decoded length. One pass; refuses zeros and truncated blocks.
pub fn decode_in_place(buf: &mut [u8], len: usize) -> Result<usize, CobsError> {
    if len == 0 {
        return Err(CobsError::Empty);
    }
    if len > buf.len() {
        return Err(CobsError::TooLong);
    }
    let mut r = 0_usize;
    let mut w = 0_usize;
    while r < len {
        let code = buf.get(r).copied().ok_or(CobsError::Truncated { at: r })?;
        if code == 0 {
            return Err(CobsError::ZeroByte { at: r });
        }
        let start = r;
        r += 1;
        for _ in 1..code {
            if r >= len {
                return Err(CobsError::Truncated { at: start });
            }
            let b = buf.get(r).copied().ok_or(CobsError::Truncated { at: start })?;
            if b == 0 {
                return Err(CobsError::ZeroByte { at: r });
            }
            *buf.get_mut(w).ok_or(CobsError::TooLong)? = b;
            w += 1;
            r += 1;
        }
        if code != 0xFF && r < len {
            *buf.get_mut(w).ok_or(CobsError::TooLong)? = 0;
            w += 1;
        }
    }
    Ok(w)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use std::vec;
    use std::vec::Vec;

    fn round(src: &[u8]) -> usize {
        let mut out = [0xAA_u8; 1200];
        let n = encode(src, &mut out).unwrap();
        assert!(n <= max_encoded_len(src.len()));
        assert!(!out[..n].contains(&0), "{:?}", &out[..n]);
        let m = decode_in_place(&mut out, n).unwrap();
        assert_eq!(&out[..m], src);
        n
    }

    /// The examples of Cheshire & Baker, "Consistent Overhead Byte Stuffing", IEEE/ACM
    /// Transactions on Networking 7(2), 1999 (as listed in that paper's figures; from memory).
    #[test]
    fn known_encodings() {
        let mut out = [0_u8; 16];
        let n = encode(&[0x00], &mut out).unwrap();
        assert_eq!(&out[..n], &[0x01, 0x01]);
        let n = encode(&[0x11, 0x22, 0x00, 0x33], &mut out).unwrap();
        assert_eq!(&out[..n], &[0x03, 0x11, 0x22, 0x02, 0x33]);
        let n = encode(&[0x11, 0x00, 0x00, 0x00], &mut out).unwrap();
        assert_eq!(&out[..n], &[0x02, 0x11, 0x01, 0x01, 0x01]);
        let n = encode(&[], &mut out).unwrap();
        assert_eq!(&out[..n], &[0x01]);
    }

    #[test]
    fn round_trips_across_block_boundaries() {
        for len in [0, 1, 253, 254, 255, 507, 508, 509, 1029] {
            let nonzero: Vec<u8> = (0..len).map(|i| (i % 255 + 1) as u8).collect();
            round(&nonzero);
            let zeros = vec![0_u8; len];
            round(&zeros);
            let mixed: Vec<u8> = (0..len).map(|i| (i * 7 % 256) as u8).collect();
            round(&mixed);
        }
    }

    #[test]
    fn malformed_input_is_refused() {
        let mut b = [0x03, 0x11];
        assert_eq!(decode_in_place(&mut b, 2), Err(CobsError::Truncated { at: 0 }));
        let mut b = [0x02, 0x00];
        assert_eq!(decode_in_place(&mut b, 2), Err(CobsError::ZeroByte { at: 1 }));
        let mut b = [0x00];
        assert_eq!(decode_in_place(&mut b, 1), Err(CobsError::ZeroByte { at: 0 }));
        let mut b = [0x01];
        assert_eq!(decode_in_place(&mut b, 0), Err(CobsError::Empty));
        assert_eq!(decode_in_place(&mut b, 2), Err(CobsError::TooLong));
        let mut small = [0_u8; 2];
        assert_eq!(encode(&[1, 2, 3], &mut small), None);
    }
}
