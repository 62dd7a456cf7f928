//! The configuration blob: the [`Skid`] in a compact binary form that a controller stores
//! (flash, EEPROM) and checks at power-on.
//!
//! Layout (little-endian):
//!
//! | bytes | field |
//! |---|---|
//! | 0–3 | magic `PHDK` |
//! | 4–5 | format version ([`FORMAT_VERSION`]) |
//! | 6–7 | payload length n |
//! | 8 … 8+n−1 | payload: the [`Skid`] in postcard's serde format |
//! | 8+n … 8+n+3 | CRC-32/ISO-HDLC (the CRC of zlib and Ethernet) of bytes 0 … 8+n−1 |
//!
//! Decoding never panics (it is in the link-time no-panic proof) and refuses anything whose
//! magic, version, length or CRC is wrong before it reads the payload: a CRC-32 catches every
//! single-bit and every odd-weight error, and every burst of up to 32 bits. Encoding is for the
//! host (postcard's encoder is not in the no-panic proof).

use super::Skid;

/// The four magic bytes.
pub const MAGIC: [u8; 4] = *b"PHDK";
/// The format version this build writes and reads.
pub const FORMAT_VERSION: u16 = 2;
/// Header bytes before the payload.
pub const HEADER_LEN: usize = 8;
/// CRC bytes after the payload.
pub const CRC_LEN: usize = 4;
/// Largest blob, bytes (the payload of the largest skid is well under this).
pub const MAX_BLOB_LEN: usize = 1024;

const CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Why a blob was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum BlobError {
    /// Shorter than a header and a CRC.
    TooShort {
        /// Bytes given.
        len: usize,
    },
    /// The magic bytes are not `PHDK`.
    BadMagic,
    /// A format version this build does not read.
    UnsupportedVersion {
        /// The version found.
        found: u16,
    },
    /// The declared payload length does not match the bytes given.
    LengthMismatch {
        /// Payload length in the header.
        declared: usize,
        /// Payload bytes present.
        actual: usize,
    },
    /// The CRC does not match: the blob is corrupted.
    Crc {
        /// CRC stored in the blob.
        stored: u32,
        /// CRC computed over the blob.
        computed: u32,
    },
    /// The payload does not decode into a [`Skid`] (or has trailing bytes).
    Payload,
    /// The buffer for encoding is too small (or the skid exceeds [`MAX_BLOB_LEN`]).
    BufferTooSmall,
}

impl core::fmt::Display for BlobError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::TooShort { len } => write!(f, "blob of {len} bytes is shorter than a header and a CRC"),
            Self::BadMagic => f.write_str("not a phdose configuration blob (bad magic bytes)"),
            Self::UnsupportedVersion { found } => {
                write!(f, "blob format version {found} is not supported (this build reads {FORMAT_VERSION})")
            }
            Self::LengthMismatch { declared, actual } => {
                write!(f, "blob declares a payload of {declared} bytes but holds {actual}")
            }
            Self::Crc { stored, computed } => {
                write!(f, "blob CRC mismatch: stored {stored:#010x}, computed {computed:#010x} (corrupted)")
            }
            Self::Payload => f.write_str("blob payload does not decode into a skid configuration"),
            Self::BufferTooSmall => f.write_str("buffer too small for the blob"),
        }
    }
}

impl core::error::Error for BlobError {}

/// Decodes and checks a blob. Never panics; constant work besides the CRC (linear in the
/// length) and postcard's decoder (linear in the payload).
pub fn decode(bytes: &[u8]) -> Result<Skid, BlobError> {
    let len = bytes.len();
    let body_len = len.checked_sub(CRC_LEN).filter(|b| *b >= HEADER_LEN).ok_or(BlobError::TooShort { len })?;
    let body = bytes.get(..body_len).ok_or(BlobError::TooShort { len })?;
    let crc_bytes: [u8; 4] =
        bytes.get(body_len..).and_then(|c| c.try_into().ok()).ok_or(BlobError::TooShort { len })?;
    let header: [u8; HEADER_LEN] =
        body.get(..HEADER_LEN).and_then(|h| h.try_into().ok()).ok_or(BlobError::TooShort { len })?;
    let [m0, m1, m2, m3, v0, v1, l0, l1] = header;
    if [m0, m1, m2, m3] != MAGIC {
        return Err(BlobError::BadMagic);
    }
    let stored = u32::from_le_bytes(crc_bytes);
    let computed = CRC32.checksum(body);
    if stored != computed {
        return Err(BlobError::Crc { stored, computed });
    }
    let found = u16::from_le_bytes([v0, v1]);
    if found != FORMAT_VERSION {
        return Err(BlobError::UnsupportedVersion { found });
    }
    let declared = usize::from(u16::from_le_bytes([l0, l1]));
    let payload = body.get(HEADER_LEN..).ok_or(BlobError::TooShort { len })?;
    if declared != payload.len() {
        return Err(BlobError::LengthMismatch { declared, actual: payload.len() });
    }
    match postcard::take_from_bytes::<Skid>(payload) {
        Ok((skid, [])) => Ok(skid),
        _ => Err(BlobError::Payload),
    }
}

/// Encodes `skid` into `buf`; returns the blob's length. For the host (`phdose pack`) and for
/// tests: postcard's encoder is not in the link-time no-panic proof.
pub fn encode(skid: &Skid, buf: &mut [u8]) -> Result<usize, BlobError> {
    let payload_len = {
        let payload = buf.get_mut(HEADER_LEN..).ok_or(BlobError::BufferTooSmall)?;
        postcard::to_slice(skid, payload).map_err(|_| BlobError::BufferTooSmall)?.len()
    };
    let declared = u16::try_from(payload_len).map_err(|_| BlobError::BufferTooSmall)?;
    let body_len = HEADER_LEN + payload_len;
    if body_len + CRC_LEN > MAX_BLOB_LEN {
        return Err(BlobError::BufferTooSmall);
    }
    let [v0, v1] = FORMAT_VERSION.to_le_bytes();
    let [l0, l1] = declared.to_le_bytes();
    let [m0, m1, m2, m3] = MAGIC;
    buf.get_mut(..HEADER_LEN).ok_or(BlobError::BufferTooSmall)?.copy_from_slice(&[m0, m1, m2, m3, v0, v1, l0, l1]);
    let crc = CRC32.checksum(buf.get(..body_len).ok_or(BlobError::BufferTooSmall)?);
    buf.get_mut(body_len..body_len + CRC_LEN).ok_or(BlobError::BufferTooSmall)?.copy_from_slice(&crc.to_le_bytes());
    Ok(body_len + CRC_LEN)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::example;

    fn packed() -> ([u8; MAX_BLOB_LEN], usize) {
        let mut buf = [0_u8; MAX_BLOB_LEN];
        let n = encode(&example::plating_rinse(), &mut buf).unwrap();
        (buf, n)
    }

    #[test]
    fn round_trip() {
        let (buf, n) = packed();
        assert_eq!(decode(&buf[..n]).unwrap(), example::plating_rinse());
        assert_eq!(&buf[..4], b"PHDK");
        // The CRC is the standard CRC-32/ISO-HDLC: check value 0xCBF43926 for "123456789"
        // (the catalogue of parametrised CRC algorithms, CRC-32/ISO-HDLC entry).
        assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    }

    #[test]
    fn every_single_bit_flip_is_refused() {
        let (buf, n) = packed();
        let mut copy = buf;
        for byte in 0..n {
            for bit in 0..8 {
                copy[byte] ^= 1 << bit;
                assert!(decode(&copy[..n]).is_err(), "flip of bit {bit} in byte {byte} accepted");
                copy[byte] ^= 1 << bit;
            }
        }
        assert!(decode(&copy[..n]).is_ok());
    }

    #[test]
    fn header_errors_are_specific() {
        let (buf, n) = packed();
        assert_eq!(decode(&buf[..5]), Err(BlobError::TooShort { len: 5 }));
        let mut bad = buf;
        bad[0] = b'X';
        assert_eq!(decode(&bad[..n]), Err(BlobError::BadMagic));
        // A truncated blob fails its CRC (the CRC is read from the last four bytes given).
        assert!(matches!(decode(&buf[..n - 1]), Err(BlobError::Crc { .. })));
        // A newer version with a valid CRC is refused as such.
        let mut newer = buf;
        newer[4] = 3;
        let crc = CRC32.checksum(&newer[..n - 4]);
        newer[n - 4..n].copy_from_slice(&crc.to_le_bytes());
        assert_eq!(decode(&newer[..n]), Err(BlobError::UnsupportedVersion { found: 3 }));
        // An older version (1: before the runaway interlock's settings) is refused too.
        let mut older = buf;
        older[4] = 1;
        let crc = CRC32.checksum(&older[..n - 4]);
        older[n - 4..n].copy_from_slice(&crc.to_le_bytes());
        assert_eq!(decode(&older[..n]), Err(BlobError::UnsupportedVersion { found: 1 }));
        assert!(encode(&example::plating_rinse(), &mut [0_u8; 16]).is_err());
    }
}
