//! Fuzz target `blob_decode`: arbitrary bytes as a stored configuration blob.
//!
//! `blob::decode` and the boot checks (`check_blob`, f32 and f64) must never panic, whatever
//! the bytes. What they return must be consistent: a blob that decodes re-encodes to a blob
//! that decodes to the same settings; the boot report refuses dosing whenever the blob does not
//! decode; and f32 and f64 boot checks agree on whether the blob decodes.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose::config::blob::{self, MAX_BLOB_LEN};
use phdose::config::boot::check_blob;

fuzz_target!(|data: &[u8]| {
    let decoded = blob::decode(data);
    let (skid32, report32) = check_blob::<f32>(data);
    let (skid64, report64) = check_blob::<f64>(data);
    assert_eq!(skid32.is_some(), decoded.is_ok(), "check_blob::<f32> and decode disagree");
    assert_eq!(skid64.is_some(), decoded.is_ok(), "check_blob::<f64> and decode disagree");
    match decoded {
        Ok(skid) => {
            let mut buf = [0u8; MAX_BLOB_LEN];
            let n = blob::encode(&skid, &mut buf).expect("a decoded skid re-encodes");
            let again = blob::decode(&buf[..n]).expect("a re-encoded blob decodes");
            assert_eq!(again, skid, "round trip changed the settings");
        }
        Err(e) => {
            let _ = format!("{e}");
            assert!(!report32.allowed() && !report64.allowed(), "a blob that does not decode allowed dosing");
        }
    }
});
