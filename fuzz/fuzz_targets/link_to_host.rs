//! Fuzz target `link_to_host`: arbitrary bytes as a message body arriving at the host (COBS
//! already undone): hello, actuator frame, reject.
//!
//! `decode_to_host` must never panic; what it accepts re-encodes to exactly the same body; a
//! CRC-valid body is never refused for its CRC.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose_link::{CRC32, DecodeError, Deframer, MAX_FRAME_LEN, decode_to_host};

fuzz_target!(|data: &[u8]| {
    check(data);
    if let Some((&kind, payload)) = data.split_first() {
        let mut body = Vec::with_capacity(data.len() + 4);
        // Steer half the inputs to the host's kinds (0x81–0x83).
        body.push(if kind & 0x80 != 0 { 0x81 + kind % 3 } else { kind });
        body.extend_from_slice(payload);
        body.extend_from_slice(&CRC32.checksum(&body).to_le_bytes());
        let r = check(&body);
        assert!(!matches!(r, Err(DecodeError::Crc { .. })), "a signed body failed its CRC");
    }
});

fn check(body: &[u8]) -> Result<(), DecodeError> {
    let m = decode_to_host(body)?;
    let _ = format!("{m:?}");
    let mut wire = [0u8; MAX_FRAME_LEN];
    let n = m.encode(&mut wire).expect("a decoded message re-encodes");
    let mut d = Deframer::new();
    let mut again = None;
    for b in &wire[..n] {
        if let Some(r) = d.push(*b) {
            again = Some(r.expect("a re-encoded frame deframes").to_vec());
        }
    }
    assert_eq!(again.as_deref(), Some(body), "re-encoding changed the body");
    Ok(())
}
