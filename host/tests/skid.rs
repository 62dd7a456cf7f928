//! `phdose pack` and `phdose check`: the blob and the TOML skid file, the boot report, exit
//! codes 0 (dosing allowed), 1 (refused), 2 (unreadable), and the annotated example file.
//!
//! The skid is invented (the rinse-water tank of a fictional plating shop, the core's
//! `config::example::plating_rinse()`). The blob's own properties (every bit flip refused, the
//! codes of bad settings) are the core's tests; these check that the CLI passes them through.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use std::path::{Path, PathBuf};

use common::{json_error, run, scratch, table_error, usage_error};
use phdose::config::blob;
use phdose::config::example::plating_rinse;
use serde_json::Value;

/// The annotated example skid file, as shipped.
const TEMPLATE: &str = include_str!("../examples-data/plating-rinse-skid.toml");

fn path_str(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// Writes `text` to `dir/name` and returns the path.
fn file(dir: &Path, name: &str, text: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// `phdose check FILE --json`: exit code and the document (never an error document).
fn check_json(path: &Path) -> (i32, Value) {
    let r = run(&["check", path_str(path), "--json"], "");
    assert!(r.stderr.is_empty(), "{}", r.stderr);
    (r.code, serde_json::from_str(&r.stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {}", r.stdout)))
}

fn codes(doc: &Value, list: &str) -> Vec<u64> {
    doc[list].as_array().unwrap().iter().map(|f| f["code"].as_u64().unwrap()).collect()
}

/// The template with one line replaced (the line must exist).
fn edited(from: &str, to: &str) -> String {
    assert!(TEMPLATE.contains(from), "{from}");
    TEMPLATE.replacen(from, to, 1)
}

#[test]
fn pack_without_a_file_writes_the_built_in_skid_and_check_accepts_it() {
    let dir = scratch("skid-pack-builtin");
    let out = dir.join("builtin.bin");
    let r = run(&["pack", "--out", path_str(&out)], "");
    assert_eq!(r.code, 0, "{}{}", r.stdout, r.stderr);
    assert!(r.stdout.contains(&format!("to {}", out.display())), "the path written is printed: {}", r.stdout);
    assert!(r.stdout.trim_end().ends_with("see SAFETY.md."), "{}", r.stdout);
    let bytes = std::fs::read(&out).unwrap();
    assert!(r.stdout.contains(&format!("wrote blob ({} bytes)", bytes.len())), "{}", r.stdout);
    // Round trip: the file decodes to the core's example skid.
    assert_eq!(&bytes[..4], b"PHDK");
    assert_eq!(blob::decode(&bytes).unwrap(), plating_rinse());
    let (code, doc) = check_json(&out);
    assert_eq!(code, 0, "{doc}");
    assert_eq!(doc["allowed"], true);
    assert_eq!(doc["format"], "blob");
    assert_eq!(doc["skid"], "plating rinse tank 2");
    assert!(codes(&doc, "errors").is_empty());
    // Warnings only (the pump step is steep at the flow limits): still exit 0.
    assert!(codes(&doc, "warnings").iter().all(|c| (301..400).contains(c)), "{doc}");
}

#[test]
fn pack_of_the_example_file_gives_the_same_bytes() {
    let dir = scratch("skid-pack-template");
    let printed = run(&["pack", "--template"], "");
    assert_eq!(printed.code, 0, "{}", printed.stderr);
    assert_eq!(printed.stdout, TEMPLATE, "--template prints the shipped file");
    let toml = file(&dir, "rinse.toml", printed.stdout.as_bytes());
    let (from_file, builtin) = (dir.join("from-file.bin"), dir.join("builtin.bin"));
    assert_eq!(run(&["pack", path_str(&toml), "--out", path_str(&from_file)], "").code, 0);
    assert_eq!(run(&["pack", "--out", path_str(&builtin)], "").code, 0);
    assert_eq!(std::fs::read(&from_file).unwrap(), std::fs::read(&builtin).unwrap());
    // Checking the TOML and its blob gives the same report.
    let (c1, mut d1) = check_json(&toml);
    let (c2, mut d2) = check_json(&from_file);
    assert_eq!((c1, d1["format"].take(), d2["format"].take()), (c2, "toml".into(), "blob".into()));
    d1["file"].take();
    d2["file"].take();
    assert_eq!(d1, d2);
}

#[test]
fn pack_never_overwrites_without_force() {
    let dir = scratch("skid-pack-force");
    let out = file(&dir, "skid.bin", b"keep me");
    let e = table_error(&["pack", "--out", path_str(&out)]);
    assert!(e.contains("--force") && e.contains("skid.bin"), "{e}");
    assert_eq!(std::fs::read(&out).unwrap(), b"keep me");
    let e = json_error(&["pack", "--out", path_str(&out), "--json"], "");
    assert!(e.contains("--force"), "{e}");
    let r = run(&["pack", "--out", path_str(&out), "--force", "--json"], "");
    assert_eq!(r.code, 0, "{}", r.stdout);
    let doc: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!(doc["written"], path_str(&out));
    assert_eq!(doc["blob_bytes"].as_u64().unwrap(), std::fs::read(&out).unwrap().len() as u64);
    assert!(blob::decode(&std::fs::read(&out).unwrap()).is_ok());
}

#[test]
fn pack_refuses_a_refused_skid_unless_asked() {
    let dir = scratch("skid-pack-refused");
    let toml = file(&dir, "flat.toml", edited("\nband_ph = 0.3 ", "\nband_ph = 0.0 ").as_bytes());
    let out = dir.join("flat.bin");
    let r = run(&["pack", path_str(&toml), "--out", path_str(&out)], "");
    assert_eq!(r.code, 1, "{}{}", r.stdout, r.stderr);
    assert!(r.stdout.contains("202:") && r.stdout.contains("nothing written"), "{}", r.stdout);
    assert!(!out.exists(), "a refused skid is not packed");
    // --force only replaces files; it does not let a refused skid through.
    assert_eq!(run(&["pack", path_str(&toml), "--out", path_str(&out), "--force"], "").code, 1);
    assert!(!out.exists());
    let r = run(&["pack", path_str(&toml), "--out", path_str(&out), "--even-if-refused", "--json"], "");
    assert_eq!(r.code, 0, "{}", r.stdout);
    let doc: Value = serde_json::from_str(&r.stdout).unwrap();
    assert_eq!((doc["allowed"].clone(), codes(&doc, "errors")), (Value::Bool(false), vec![202]));
    let (code, doc) = check_json(&out);
    assert_eq!((code, codes(&doc, "errors")), (1, vec![202]), "the board refuses the blob: {doc}");
}

#[test]
fn check_refuses_a_blob_with_one_flipped_bit_with_201() {
    let dir = scratch("skid-check-flip");
    let good = dir.join("good.bin");
    assert_eq!(run(&["pack", "--out", path_str(&good)], "").code, 0);
    let bytes = std::fs::read(&good).unwrap();
    // One bit in the magic, the version, the length, the payload and the CRC.
    for (k, at) in [0, 5, 7, bytes.len() / 2, bytes.len() - 1].into_iter().enumerate() {
        let mut flipped = bytes.clone();
        flipped[at] ^= 1 << (k % 8);
        let path = file(&dir, &format!("flip-{at}.bin"), &flipped);
        let (code, doc) = check_json(&path);
        assert_eq!((code, codes(&doc, "errors")), (1, vec![201]), "byte {at}: {doc}");
        assert_eq!(doc["allowed"], false);
        assert_eq!(doc["skid"], Value::Null);
        let r = run(&["check", path_str(&path)], "");
        assert_eq!(r.code, 1);
        assert!(r.stdout.contains("dosing REFUSED") && r.stdout.contains("201: configuration blob unreadable"));
    }
}

#[test]
fn check_json_keys() {
    let dir = scratch("skid-check-keys");
    let toml = file(&dir, "two.toml", edited("\nband_ph = 0.3 ", "\nband_ph = 0.0 ").as_bytes());
    let (code, doc) = check_json(&toml);
    assert_eq!(code, 1);
    for key in ["allowed", "errors", "warnings", "dropped", "file", "format", "skid", "real"] {
        assert!(doc.get(key).is_some(), "key {key} missing: {doc}");
    }
    assert_eq!(doc["real"], "f32");
    let finding = &doc["errors"][0];
    assert_eq!(finding.as_object().unwrap().len(), 5, "{finding}");
    assert_eq!(finding["code"], 202);
    assert_eq!(finding["name"], "control.band_ph");
    assert_eq!(finding["value"], 0.0);
    assert!(finding["limit"].is_number());
    let message = finding["message"].as_str().unwrap();
    assert!(message.starts_with("202: setting outside its documented range (control.band_ph)"), "{message}");
    // The table prints the same message and ends with the caution.
    let r = run(&["check", path_str(&toml)], "");
    assert!(r.stdout.contains(message), "{}", r.stdout);
    let last = r.stdout.trim_end().lines().last().unwrap();
    assert!(last.starts_with("Caution: a passed boot check does not replace hardwired interlocks"), "{last}");
}

#[test]
fn check_of_a_refused_setting_is_exit_1_with_its_code() {
    let dir = scratch("skid-check-refused");
    for (from, to, code) in [
        ("\nband_ph = 0.3 ", "\nband_ph = 0.0 ", 202),
        ("\nmin_flow_l_per_h = 600.0 ", "\nmin_flow_l_per_h = 1500.0 ", 203),
        ("\nhigh_limit_ph = 10.0 ", "\nhigh_limit_ph = 7.1 ", 208),
        ("\nmax_tick_age_s = 30.0 ", "\nmax_tick_age_s = 4.0 ", 215),
        ("\nsubstance = \"NaOH\"", "\nsubstance = \"NaXYZ\"", 204),
    ] {
        let toml = file(&dir, &format!("{code}.toml"), edited(from, to).as_bytes());
        let (exit, doc) = check_json(&toml);
        assert_eq!(exit, 1, "{doc}");
        assert!(codes(&doc, "errors").contains(&code), "expected {code}: {doc}");
    }
}

#[test]
fn check_names_the_line_and_the_key_of_a_toml_error() {
    let dir = scratch("skid-check-toml-error");
    let text = edited("\nband_ph = 0.3 ", "\nbnad_ph = 0.3 ");
    let line = text.lines().position(|l| l.starts_with("bnad_ph")).unwrap() + 1;
    let toml = file(&dir, "typo.toml", text.as_bytes());
    let e = json_error(&["check", path_str(&toml), "--json"], "");
    assert!(e.contains(&format!("line {line}")), "{e}");
    assert!(e.contains("control.bnad_ph") && e.contains("unknown field"), "{e}");
    let e = table_error(&["check", path_str(&toml)]);
    assert!(e.contains(&format!("line {line}")) && e.contains("control.bnad_ph"), "{e}");
    // pack refuses the same file in the same words, and writes nothing.
    let out = dir.join("typo.bin");
    let e = table_error(&["pack", path_str(&toml), "--out", path_str(&out)]);
    assert!(e.contains(&format!("line {line}")) && e.contains("control.bnad_ph"), "{e}");
    assert!(!out.exists());
}

#[test]
fn scenario_sections_are_ignored_and_only_they() {
    let dir = scratch("skid-check-scenario");
    let scenario = format!(
        "{TEMPLATE}\n[plant]\nvolume_l = 250.0\nmixing = \"ideal\"\n\n[disturbances]\nacid_step = {{ at_s = 600, \
         factor = 1.5 }}\n\n[run]\nhours = 4.0\n"
    );
    let path = file(&dir, "scenario.toml", scenario.as_bytes());
    let (code, doc) = check_json(&path);
    assert_eq!((code, doc["allowed"].clone()), (0, Value::Bool(true)), "{doc}");
    let (out, builtin) = (dir.join("scenario.bin"), dir.join("builtin.bin"));
    assert_eq!(run(&["pack", path_str(&path), "--out", path_str(&out)], "").code, 0);
    assert_eq!(run(&["pack", "--out", path_str(&builtin)], "").code, 0);
    assert_eq!(std::fs::read(&out).unwrap(), std::fs::read(&builtin).unwrap());
    // A fourth top-level section is still an error.
    let other = file(&dir, "other.toml", format!("{scenario}\n[plot]\nwidth = 3\n").as_bytes());
    let e = json_error(&["check", path_str(&other), "--json"], "");
    assert!(e.contains("plot") && e.contains("unknown field"), "{e}");
}

#[test]
fn unreadable_files_are_exit_2() {
    let dir = scratch("skid-check-missing");
    let missing = dir.join("missing.toml");
    let e = json_error(&["check", path_str(&missing), "--json"], "");
    assert!(e.contains("missing.toml"), "{e}");
    let e = table_error(&["check", path_str(&missing)]);
    assert!(e.contains("cannot open"), "{e}");
    let e = table_error(&["pack", path_str(&missing), "--out", path_str(&dir.join("x.bin"))]);
    assert!(e.contains("missing.toml"), "{e}");
    // Binary garbage named .toml is not TOML; a blob is not packed again.
    let garbage = file(&dir, "garbage.toml", &[0xff, 0xfe, 0x00, 0x80]);
    assert!(table_error(&["check", path_str(&garbage)]).contains("UTF-8"));
    let bin = dir.join("ok.bin");
    assert_eq!(run(&["pack", "--out", path_str(&bin)], "").code, 0);
    let e = table_error(&["pack", path_str(&bin), "--out", path_str(&dir.join("again.bin"))]);
    assert!(e.contains("configuration blob"), "{e}");
    // Usage errors: no file for check, no --out for pack.
    usage_error(&["check"]);
    usage_error(&["pack"]);
    usage_error(&["pack", "--template", "--out", "x.bin"]);
}

#[test]
fn readme_quotes_the_example_file_and_lists_every_code() {
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md")).unwrap();
    assert!(readme.contains(&format!("```toml\n{TEMPLATE}```\n")), "README must quote the example skid verbatim");
    // Every code line of `check --help` ("  201  error    message") is a README table row.
    let help = run(&["check", "--help"], "").stdout;
    let rows: Vec<&str> = help
        .lines()
        .filter(|l| l.split_whitespace().next().and_then(|n| n.parse::<u16>().ok()).is_some_and(|n| n >= 200))
        .collect();
    assert!(rows.len() >= 22, "{help}");
    for row in rows {
        let mut parts = row.split_whitespace();
        let (number, kind) = (parts.next().unwrap(), parts.next().unwrap());
        let message = parts.collect::<Vec<_>>().join(" ");
        let line = format!("| {number} | {kind} | {message} |");
        assert!(readme.contains(&line), "README lacks the row {line}");
    }
}
