//! `phdose simulate`: the main job. The scenario (invented: the rinse-water tank of a fictional
//! plating shop) runs with the real controller and with the feedback-only baseline; these tests
//! check the CLI's contract — stable JSON keys, files written, exit codes, the scenario file
//! round trip, reproducible seeds — and cross-check the reported KPIs against the CSV
//! trajectory it writes. The plant and controller have their own tests in `sim/` and the core.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use std::path::Path;

use common::{json_error, num, ok_json, run, scratch, table_error};
use serde_json::Value;

const SKID_TEMPLATE: &str = include_str!("../examples-data/plating-rinse-skid.toml");

fn path_str(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn kpis_have_the_stable_keys(k: &Value) {
    for key in ["iae_ph_s", "time_in_band_fraction", "max_abs_error_ph", "reagent_l"] {
        assert!(num(k, key).is_finite(), "{key} in {k}");
    }
    assert!(k["trips"].is_array(), "{k}");
    let f = num(k, "time_in_band_fraction");
    assert!((0.0..=1.0).contains(&f), "{f}");
}

#[test]
fn json_has_the_stable_keys_and_both_controllers() {
    let doc = ok_json(&["simulate", "--json"], "");
    assert_eq!(num(&doc, "simulated_s"), 28_800.0, "the built-in scenario runs 8 h");
    assert!(num(&doc, "wall_s") > 0.0);
    kpis_have_the_stable_keys(&doc["controller"]);
    kpis_have_the_stable_keys(&doc["baseline"]);
    // The built-in scenario is meant to run without trips for either loop.
    assert_eq!(doc["controller"]["trips"], Value::Array(vec![]), "{doc}");
    assert!(num(&doc["baseline"]["tuning"], "integral_time_s") > 0.0);
    assert_eq!(doc["files"]["svg"], Value::Null);
}

#[test]
fn the_table_shows_both_loops_and_the_caution() {
    let r = run(&["simulate"], "");
    assert_eq!(r.code, 0, "{}", r.stderr);
    for needle in ["controller", "baseline", "integrated |pH error|", "time inside the band", "SIMC", "SAFETY.md"] {
        assert!(r.stdout.contains(needle), "{needle} missing:\n{}", r.stdout);
    }
}

/// The KPIs are recomputed from the CSV the run writes (one sample per 5 s tick, while the
/// simulator integrates every 1 s plant step): the integrated error agrees within 5 %.
#[test]
fn out_writes_csv_and_svg_that_agree_with_the_kpis() {
    let dir = scratch("simulate-out");
    let doc = ok_json(&["simulate", "--json", "--out", path_str(&dir)], "");
    let csv_path = doc["files"]["controller_csv"].as_str().unwrap();
    let csv = std::fs::read_to_string(csv_path).unwrap();
    let mut lines = csv.lines();
    assert_eq!(lines.next(), Some("t_s,ph,measured_ph,caustic_l_per_h,acid_l_per_h,influent_l_per_h,state,trip"));
    let rows: Vec<Vec<f64>> =
        lines.map(|l| l.split(',').map(|v| v.parse::<f64>().unwrap_or(f64::NAN)).collect()).collect();
    assert_eq!(rows.len(), 28_800 / 5, "one row per tick");
    let setpoint = 7.0;
    let iae: f64 = rows.iter().map(|r| (r[1] - setpoint).abs() * 5.0).sum();
    let reported = num(&doc["controller"], "iae_ph_s");
    assert!((iae - reported).abs() <= 0.05 * reported, "CSV {iae} vs reported {reported}");
    let reagent_l: f64 = rows.iter().map(|r| (r[3] + r[4]) * 5.0 / 3600.0).sum();
    let reported = num(&doc["controller"], "reagent_l");
    assert!((reagent_l - reported).abs() <= 1e-6 * reported.max(1.0), "CSV {reagent_l} L vs {reported} L");
    let svg = std::fs::read_to_string(doc["files"]["svg"].as_str().unwrap()).unwrap();
    let xml = roxmltree::Document::parse(&svg).expect("the SVG is XML");
    let texts: Vec<&str> = xml.descendants().filter_map(|n| n.text()).collect();
    for label in ["pH", "reagent, L/h", "influent, L/h", "time, h", "setpoint"] {
        assert!(texts.iter().any(|t| t.contains(label)), "{label} missing in the SVG");
    }
    assert!(Path::new(doc["files"]["baseline_csv"].as_str().unwrap()).exists());
    // Without --force the files are not overwritten.
    let e = table_error(&["simulate", "--out", path_str(&dir)]);
    assert!(e.contains("will not overwrite"), "{e}");
}

#[test]
fn the_template_runs_like_the_built_in_scenario_and_packs_like_the_skid() {
    let dir = scratch("simulate-template");
    let template = run(&["simulate", "--template"], "");
    assert_eq!(template.code, 0);
    let file = dir.join("scenario.toml");
    std::fs::write(&file, &template.stdout).unwrap();
    let from_file = ok_json(&["simulate", path_str(&file), "--json", "--no-baseline"], "");
    let built_in = ok_json(&["simulate", "--json", "--no-baseline"], "");
    assert_eq!(from_file["controller"]["iae_ph_s"], built_in["controller"]["iae_ph_s"]);
    assert_eq!(from_file["baseline"], Value::Null);
    // What you simulate is what you deploy: the scenario packs to the skid file's blob.
    let skid = dir.join("skid.toml");
    std::fs::write(&skid, SKID_TEMPLATE).unwrap();
    let (a, b) = (dir.join("a.bin"), dir.join("b.bin"));
    assert_eq!(run(&["pack", path_str(&file), "--out", path_str(&a)], "").code, 0);
    assert_eq!(run(&["pack", path_str(&skid), "--out", path_str(&b)], "").code, 0);
    assert_eq!(std::fs::read(a).unwrap(), std::fs::read(b).unwrap());
}

#[test]
fn a_seed_reproduces_a_run_and_another_seed_changes_it() {
    let one = ok_json(&["simulate", "--json", "--no-baseline", "--seed", "7"], "");
    let again = ok_json(&["simulate", "--json", "--no-baseline", "--seed", "7"], "");
    let other = ok_json(&["simulate", "--json", "--no-baseline", "--seed", "8"], "");
    for key in ["iae_ph_s", "max_abs_error_ph", "reagent_l", "time_in_band_fraction"] {
        assert_eq!(one["controller"][key], again["controller"][key], "{key}");
    }
    assert_ne!(one["controller"]["iae_ph_s"], other["controller"]["iae_ph_s"]);
    assert_eq!(num(&one, "seed"), 7.0);
}

#[test]
fn bad_scenarios_are_refused_with_the_line_and_key() {
    let dir = scratch("simulate-bad");
    let template = run(&["simulate", "--template"], "").stdout;
    let typo = dir.join("typo.toml");
    std::fs::write(&typo, template.replace("\nprobe_lag_s = 15.0", "\nprobe_lag = 15.0")).unwrap();
    let e = json_error(&["simulate", path_str(&typo), "--json"], "");
    assert!(e.contains("line") && e.contains("probe_lag"), "{e}");
    let skid_only = dir.join("skid.toml");
    std::fs::write(&skid_only, SKID_TEMPLATE).unwrap();
    let e = table_error(&["simulate", path_str(&skid_only)]);
    assert!(e.contains("[plant]"), "{e}");
    let bad_step = dir.join("step.toml");
    std::fs::write(&bad_step, template.replace("\nstep_s = 1.0", "\nstep_s = 50.0")).unwrap();
    let e = table_error(&["simulate", path_str(&bad_step)]);
    assert!(e.contains("step_s"), "{e}");
}

/// `phdose sweep`: percentiles of both loops, the same with one thread or two, and a worst run
/// that `simulate --seed` replays exactly.
#[test]
fn sweep_reports_a_worst_seed_that_simulate_replays() {
    let sweep = |threads: &str| {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_phdose"))
            .args(["sweep", "--runs", "4", "--first-seed", "11", "--json"])
            .env("RAYON_NUM_THREADS", threads)
            .output()
            .unwrap();
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        let mut doc: Value = serde_json::from_slice(&out.stdout).unwrap();
        doc.as_object_mut().unwrap().remove("wall_s");
        doc
    };
    let one = sweep("1");
    assert_eq!(one, sweep("2"), "the report depends on the thread count");
    for side in ["controller", "baseline"] {
        let iae = &one[side]["iae_ph_s"];
        assert!(num(iae, "p5") <= num(iae, "p50") && num(iae, "p50") <= num(iae, "p95"), "{iae}");
        assert_eq!(one[side]["completed"], 4);
    }
    let worst = one["worst"]["seed"].as_u64().unwrap();
    assert!((11..15).contains(&worst), "{worst}");
    let replay = ok_json(&["simulate", "--json", "--seed", &worst.to_string()], "");
    assert_eq!(replay["controller"]["iae_ph_s"], one["worst"]["controller_iae_ph_s"]);
    assert_eq!(replay["baseline"]["iae_ph_s"], one["worst"]["baseline_iae_ph_s"]);
    // A bad run count is a usage error.
    let r = run(&["sweep", "--runs", "0"], "");
    assert_eq!(r.code, 2, "{}", r.stdout);
}
