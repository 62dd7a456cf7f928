//! Helpers shared by the CLI tests (`cli`, `plan`, `curve`, `fit`): run the built binary, parse
//! its JSON, check the error contract (exit 2, `{"error": ...}` or one `error:` line, no panic).
#![allow(dead_code, clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Stdio};

use serde_json::Value;

/// What one run printed and how it exited.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `phdose args` with `stdin`.
pub fn run(args: &[&str], stdin: &str) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_phdose"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn phdose");
    // The binary may exit before reading stdin (argument errors): ignore a broken pipe here.
    let _ = child.stdin.take().unwrap().write_all(stdin.as_bytes());
    let out = child.wait_with_output().unwrap();
    Run {
        code: out.status.code().expect("exited normally, not by a signal"),
        stdout: String::from_utf8(out.stdout).unwrap(),
        stderr: String::from_utf8(out.stderr).unwrap(),
    }
}

/// Runs a JSON-mode command that must succeed and returns the parsed document.
pub fn ok_json(args: &[&str], stdin: &str) -> Value {
    let r = run(args, stdin);
    assert_eq!(r.code, 0, "phdose {args:?} failed: {}{}", r.stdout, r.stderr);
    assert!(r.stderr.is_empty(), "unexpected stderr: {}", r.stderr);
    serde_json::from_str(&r.stdout).unwrap_or_else(|e| panic!("stdout is not JSON ({e}): {}", r.stdout))
}

/// Runs a table-mode command that must succeed and returns stdout.
pub fn ok_table(args: &[&str]) -> String {
    let r = run(args, "");
    assert_eq!(r.code, 0, "phdose {args:?} failed: {}", r.stderr);
    assert!(r.stderr.is_empty(), "unexpected stderr: {}", r.stderr);
    r.stdout
}

/// Runs a JSON-mode command that must fail: exit 2, `{"error": "..."}` on stdout, no panic.
pub fn json_error(args: &[&str], stdin: &str) -> String {
    let r = run(args, stdin);
    assert_eq!(r.code, 2, "phdose {args:?} with {stdin:?}: expected exit 2, got {}: {}", r.code, r.stdout);
    assert!(
        !r.stderr.contains("panicked") && !r.stderr.contains("backtrace") && !r.stderr.contains("internal error"),
        "{}",
        r.stderr
    );
    let doc: Value = serde_json::from_str(&r.stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {}", r.stdout));
    let obj = doc.as_object().expect("error document is an object");
    assert_eq!(obj.len(), 1, "only the error key: {doc}");
    let msg = obj.get("error").and_then(Value::as_str).expect("\"error\" is a string");
    assert!(!msg.is_empty());
    msg.to_owned()
}

/// Runs a table-mode command that must fail: exit 2, nothing on stdout, one `error:` line.
pub fn table_error(args: &[&str]) -> String {
    let r = run(args, "");
    assert_eq!(r.code, 2, "phdose {args:?}: expected exit 2, got {}: {}", r.code, r.stdout);
    assert!(r.stdout.is_empty(), "stdout should be empty: {}", r.stdout);
    assert!(r.stderr.starts_with("error: "), "{}", r.stderr);
    assert_eq!(r.stderr.trim_end().lines().count(), 1, "one line expected: {}", r.stderr);
    assert!(!r.stderr.contains("panicked") && !r.stderr.contains("internal error"), "{}", r.stderr);
    r.stderr
}

/// Runs a table-mode command whose arguments `clap` refuses: exit 2, nothing on stdout, clap's
/// message on stderr (`error: ...`, then any tip and the usage), no panic.
pub fn usage_error(args: &[&str]) -> String {
    let r = run(args, "");
    assert_eq!(r.code, 2, "phdose {args:?}: expected exit 2, got {}: {}", r.code, r.stdout);
    assert!(r.stdout.is_empty(), "stdout should be empty: {}", r.stdout);
    assert!(r.stderr.starts_with("error: "), "{}", r.stderr);
    assert!(r.stderr.contains("For more information, try '--help'."), "{}", r.stderr);
    assert!(!r.stderr.contains("panicked") && !r.stderr.contains("internal error"), "{}", r.stderr);
    r.stderr
}

/// A number at `key`.
pub fn num(v: &Value, key: &str) -> f64 {
    v.get(key).and_then(Value::as_f64).unwrap_or_else(|| panic!("number \"{key}\" missing in {v}"))
}

/// A fresh scratch directory for files a test writes (removed and recreated).
pub fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("phdose-host-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}
