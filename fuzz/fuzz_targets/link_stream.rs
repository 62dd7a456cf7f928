//! Fuzz target `link_stream`: arbitrary bytes as a serial stream into the board's deframer,
//! each frame then decoded — what the firmware does with every byte it receives.
//!
//! The deframer and the decoders must never panic. Every frame the deframer yields is at most
//! as long as the bytes before its delimiter, and after any garbage a well-formed frame that
//! follows a delimiter is still received intact (resynchronisation).
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose_link::{Deframer, MAX_FRAME_LEN, ToBoard, decode_to_board, decode_to_host};

fuzz_target!(|data: &[u8]| {
    let mut d = Deframer::new();
    let mut since = 0usize;
    for b in data {
        since += 1;
        if let Some(r) = d.push(*b) {
            if let Ok(body) = r {
                assert!(body.len() < since, "a body longer than its bytes");
                let _ = decode_to_board(body);
                let _ = decode_to_host(body);
            }
            since = 0;
        } else if *b == 0 {
            since = 0;
        }
    }
    // Resynchronisation: a delimiter, then a valid frame, is received whatever came before.
    let mut wire = [0u8; MAX_FRAME_LEN];
    let n = ToBoard::EndOfRun.encode(&mut wire).expect("encodes");
    let mut got = None;
    for b in [0].iter().chain(&wire[..n]) {
        if let Some(r) = d.push(*b) {
            got = Some(r.map(|b| b.to_vec()));
        }
    }
    let body = got.expect("a frame").expect("intact");
    assert_eq!(decode_to_board(&body), Ok(ToBoard::EndOfRun));
});
