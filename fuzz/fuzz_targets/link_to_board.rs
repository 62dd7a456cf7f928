//! Fuzz target `link_to_board`: arbitrary bytes as a message body arriving at the board
//! (COBS already undone), the decoder the firmware runs on every frame.
//!
//! `decode_to_board` must never panic. What it accepts must re-encode to exactly the body it
//! came from (the layout has one encoding per message), and a CRC-valid body must decode or be
//! refused for its kind, length or a field, never for its CRC.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose_link::{CRC32, DecodeError, Deframer, MAX_FRAME_LEN, decode_to_board};

fuzz_target!(|data: &[u8]| {
    check(data);
    // The same bytes correctly signed: exercises the decoders past the CRC check.
    if let Some((&kind, payload)) = data.split_first() {
        let mut body = Vec::with_capacity(data.len() + 4);
        body.push(kind);
        body.extend_from_slice(payload);
        body.extend_from_slice(&CRC32.checksum(&body).to_le_bytes());
        let r = check(&body);
        assert!(!matches!(r, Err(DecodeError::Crc { .. })), "a signed body failed its CRC");
    }
});

fn check(body: &[u8]) -> Result<(), DecodeError> {
    let m = decode_to_board(body)?;
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
