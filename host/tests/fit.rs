//! `phdose fit`: recovery of the invented example's known composition, the three input forms,
//! the SVG plot, and refusals (ill-conditioned fits, bad data) with exit code 2.
//!
//! Reference values: host/examples-data/fit-example.csv is synthetic. Its true composition is
//! the input of its generator (host/examples/fit_example_data.rs) and is stated in the file's
//! header: strong charge −3 meq/L, carbonate 1 mmol/L, one buffer 0.6 mmol/L with pKa 8.6,
//! 100 mL titrated with 0.05 mol/L NaOH at 20 °C (Davies), pH noise sd 0.01.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{json_error, num, ok_json, ok_table, run, scratch, table_error, usage_error};
use phdose::chem::{Activity, Solution};
use phdose::titration::fit::Effective;
use phdose::units::Celsius;
use serde_json::Value;

const STRONG_MEQ_PER_L: f64 = -3.0;
const CARBONATE_MMOL_PER_L: f64 = 1.0;
const BUFFER_MMOL_PER_L: f64 = 0.6;
const BUFFER_PKA: f64 = 8.6;
const NOISE_SD_PH: f64 = 0.01;

fn example_csv() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/examples-data/fit-example.csv")).unwrap()
}

fn data_points(csv: &str) -> Vec<(f64, f64)> {
    csv.lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("titrant_ml"))
        .map(|l| {
            let (a, b) = l.split_once(',').unwrap();
            (a.parse().unwrap(), b.parse().unwrap())
        })
        .collect()
}

/// Checks a fit document against the true composition. Tolerances: strong charge ±2 %,
/// carbonate and buffer totals ±10 %, pKa ±0.1; each also within 4 of its standard errors
/// (plus a tenth of the tolerance, for the pH rounding in the file).
fn check_recovery(doc: &Value) {
    let close = |v: &Value, truth: f64, tol: f64| {
        let (x, se) = (num(v, "value"), num(v, "standard_error"));
        assert!((x - truth).abs() <= tol, "{x} vs true {truth} (± {tol})");
        assert!(se > 0.0 && (x - truth).abs() <= 4.0 * se + 0.1 * tol, "{x} ± {se} vs true {truth}");
    };
    close(&doc["strong_charge_meq_per_l"], STRONG_MEQ_PER_L, 0.02 * 3.0);
    close(&doc["carbonate_mmol_per_l"], CARBONATE_MMOL_PER_L, 0.1 * CARBONATE_MMOL_PER_L);
    let buffers = doc["buffers"].as_array().unwrap();
    assert_eq!(buffers.len(), 1);
    close(&buffers[0]["total_mmol_per_l"], BUFFER_MMOL_PER_L, 0.1 * BUFFER_MMOL_PER_L);
    close(&buffers[0]["pka"], BUFFER_PKA, 0.1);
    // The residual is the noise level (sd 0.01 pH, rounded to 0.001).
    let rms = num(doc, "rms_ph");
    assert!(rms > 0.5 * NOISE_SD_PH && rms < 1.5 * NOISE_SD_PH, "rms {rms}");
    assert_eq!(doc["points"].as_u64(), Some(49));
    assert!(doc["iterations"].as_u64().unwrap() >= 1);
}

#[test]
fn the_data_file_is_what_its_header_says() {
    let csv = example_csv();
    for claim in [
        "strong charge -3 meq/L",
        "carbonate 1 mmol/L",
        "0.6 mmol/L with pKa 8.6",
        "0.05 mol/L NaOH at 20 °C",
        "sd 0.01 pH",
        "100 mL",
    ] {
        assert!(csv.contains(claim), "header lacks {claim:?}");
    }
    // Re-solve the stated truth with the library: every point within 5 sd of the noiseless
    // model (a wrong header, or a file from another composition, fails here).
    let t = Celsius::new(20.0).unwrap();
    let truth = Effective {
        strong_charge_eq_per_l: STRONG_MEQ_PER_L * 1e-3,
        carbonate_mol_per_l: CARBONATE_MMOL_PER_L * 1e-3,
        buffers: [(BUFFER_MMOL_PER_L * 1e-3, BUFFER_PKA), (0.0, 7.0)],
    };
    let sample: Solution<f64, 4> = truth.solution(t, Activity::Davies).unwrap();
    let mut naoh: Solution<f64, 1> = Solution::new(t, Activity::Davies);
    naoh.add_formula("NaOH", 0.05).unwrap();
    let points = data_points(&csv);
    assert_eq!(points.len(), 49);
    let mut sum2 = 0.0;
    for (ml, ph) in &points {
        let model = sample.mix(0.1, &naoh, ml / 1000.0).unwrap().solve().unwrap().ph;
        assert!((ph - model).abs() < 5.0 * NOISE_SD_PH, "{ml} mL: {ph} vs model {model}");
        sum2 += (ph - model).powi(2);
    }
    let sd = (sum2 / points.len() as f64).sqrt();
    assert!(sd > 0.5 * NOISE_SD_PH && sd < 1.5 * NOISE_SD_PH, "noise sd {sd}");
}

#[test]
fn example_recovers_the_true_composition() {
    let doc = ok_json(&["fit", "--example", "--json"], "");
    check_recovery(&doc);
    assert_eq!(num(&doc, "temperature_c"), 20.0);
    assert_eq!(num(&doc, "sample_volume_l"), 0.1);
    // The documented start: strong charge from the pH 7 crossing, 1 mmol/L carbonate, the
    // buffer's pKa mid-way through the data's pH range.
    let start = &doc["start"];
    assert!(start["basis"].as_str().unwrap().contains("pH 7 crossing"));
    assert_eq!(num(start, "carbonate_mmol_per_l"), 1.0);
    let points = data_points(&example_csv());
    let (lo, hi) = points.iter().fold((14.0f64, 0.0f64), |(a, b), (_, p)| (a.min(*p), b.max(*p)));
    assert!((start["buffer_pkas"][0].as_f64().unwrap() - (lo + hi) / 2.0).abs() < 1e-12);
}

#[test]
fn file_flags_and_json_agree() {
    let dir = scratch("fit-forms");
    let path = dir.join("lab.csv");
    std::fs::write(&path, example_csv()).unwrap();
    let p = path.to_str().unwrap();
    let svg = dir.join("fit.svg");
    let out = ok_table(&[
        "fit",
        "--data",
        p,
        "--titrant",
        "NaOH=0.05",
        "--sample-ml",
        "100",
        "--temperature-c",
        "20",
        "--carbonate",
        "--buffers",
        "1",
        "--svg",
        svg.to_str().unwrap(),
    ]);
    let example = ok_json(&["fit", "--example", "--json"], "");
    let q = num(&example["strong_charge_meq_per_l"], "value");
    let line = out.lines().find(|l| l.starts_with("strong charge")).unwrap();
    assert!(line.contains(&format!("{q:.3} ±")), "{line} vs {q}");
    for word in ["carbonate", "buffer a", "pKa", "residual RMS", "iterations", "SAFETY.md"] {
        assert!(out.contains(word), "report lacks {word}:\n{out}");
    }

    let pairs: Vec<String> = data_points(&example_csv()).iter().map(|(v, ph)| format!("[{v}, {ph}]")).collect();
    let request = format!(
        r#"{{"sample_volume_l": 0.1, "titrant": {{"dissolved": {{"NaOH": 0.05}}}}, "points": [{}],
            "carbonate": true, "buffers": 1, "temperature_c": 20, "activity": "davies"}}"#,
        pairs.join(", ")
    );
    let doc = ok_json(&["fit", "--json"], &request);
    check_recovery(&doc);
    assert_eq!(doc["strong_charge_meq_per_l"], example["strong_charge_meq_per_l"]);

    // The plot (well-formed XML): the fitted model as a blue line, one red square per lab point
    // and one in the legend.
    let text = std::fs::read_to_string(&svg).unwrap();
    let xml = roxmltree::Document::parse(&text).expect("the SVG is well-formed XML");
    let model_lines = xml
        .descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke") == Some("#1F4E9C"))
        .filter(|n| n.attribute("points").unwrap().split_whitespace().count() > 2)
        .count();
    assert_eq!(model_lines, 1);
    let squares =
        xml.descendants().filter(|n| n.has_tag_name("rect") && n.attribute("fill") == Some("#C0392B")).count();
    assert_eq!(squares, 49 + 1);
    let texts: Vec<&str> = xml.descendants().filter(|n| n.has_tag_name("text")).filter_map(|n| n.text()).collect();
    for word in ["titrant added (mL)", "pH", "lab points (49)"] {
        assert!(texts.iter().any(|t| t.trim() == word), "SVG lacks {word}: {texts:?}");
    }
}

#[test]
fn ill_conditioned_fits_are_refused_with_the_parameter_named() {
    // Two buffers on data that show one (plus carbonate): the data cannot tell them apart.
    let r = run(&["fit", "--example", "--buffers", "2"], "");
    assert_eq!(r.code, 2, "{}", r.stdout);
    assert!(r.stderr.starts_with("error: ill-conditioned fit"), "{}", r.stderr);
    assert!(r.stderr.contains("buffer a total") || r.stderr.contains("buffer b"), "{}", r.stderr);
    let msg = json_error(&["fit", "--example", "--json", "--buffers", "2"], "");
    assert!(msg.starts_with("ill-conditioned fit") && msg.contains("buffer"), "{msg}");

    // Strong acid titrated only to pH 3.4 (invented rinse-tank check): nothing there shows a
    // carbonate total, so asking for one is refused and named.
    let points: Vec<String> = (0..20)
        .map(|i| {
            let v = 0.25 * f64::from(i);
            // 5 mmol/L HCl, 100 mL, 0.05 mol/L NaOH; ideal, strong acid only (calc).
            let h = (0.1 * 5e-3 - 0.05 * v / 1000.0) / (0.1 + v / 1000.0);
            format!("[{v}, {:.4}]", -h.log10())
        })
        .collect();
    let request = format!(
        r#"{{"sample_volume_l": 0.1, "titrant": {{"dissolved": {{"NaOH": 0.05}}}}, "points": [{}],
            "carbonate": true, "activity": "ideal"}}"#,
        points.join(", ")
    );
    let msg = json_error(&["fit", "--json"], &request);
    assert!(msg.contains("ill-conditioned") && msg.contains("carbonate"), "{msg}");
    // Without the carbonate the same data fit: −5 meq/L.
    let ok = ok_json(&["fit", "--json"], &request.replace(r#""carbonate": true, "#, ""));
    assert!((num(&ok["strong_charge_meq_per_l"], "value") + 5.0).abs() < 0.01, "{ok}");
}

#[test]
fn input_errors_exit_2() {
    let dir = scratch("fit-errors");
    let bad = dir.join("bad.csv");
    std::fs::write(&bad, "titrant_ml,ph\n0,3.1\n0.5,three\n").unwrap();
    let b = bad.to_str().unwrap();
    let e = table_error(&["fit", "--data", b, "--titrant", "NaOH=0.05", "--sample-ml", "100"]);
    assert!(e.contains("line 3") && e.contains("not a number"), "{e}");
    let few = dir.join("few.csv");
    std::fs::write(&few, "0,3\n1,4\n").unwrap();
    let f = few.to_str().unwrap();
    assert!(
        table_error(&["fit", "--data", f, "--titrant", "NaOH=0.05", "--sample-ml", "100", "--carbonate"])
            .contains("at least 4")
    );
    let missing = dir.join("none.csv");
    assert!(
        table_error(&["fit", "--data", missing.to_str().unwrap(), "--titrant", "NaOH=0.05", "--sample-ml", "100"])
            .contains("cannot open")
    );
    assert!(table_error(&["fit", "--data", f, "--sample-ml", "100"]).contains("--titrant"));
    assert!(table_error(&["fit", "--data", f, "--titrant", "NaOH=0.05"]).contains("--sample-ml"));
    assert!(
        usage_error(&["fit", "--data", f, "--titrant", "NaOH=0.05", "--titrant-json", "{}", "--sample-ml", "1"])
            .contains("cannot be used with")
    );
    assert!(table_error(&["fit", "--example", "--buffers", "3"]).contains("0, 1 or 2"));
    assert!(
        usage_error(&["fit", "--example", "--carbonate"]).contains("'--example' cannot be used with '--carbonate'")
    );
    assert!(table_error(&["fit"]).contains("--data"));

    let base = r#""sample_volume_l": 0.1, "titrant": {"dissolved": {"NaOH": 0.05}}"#;
    let pts = r#""points": [[0, 3], [1, 3.2], [2, 3.5], [3, 4], [4, 7]]"#;
    for (body, expect) in [
        (format!("{base}, {pts}, \"buffers\": 1.5"), "0, 1 or 2"),
        (format!("{base}, \"points\": [[0, 3], [1, 15]]"), "outside 0-14"),
        (format!("{base}, \"points\": [[-1, 3]]"), "negative"),
        (format!("{base}, \"points\": [[0, 3, 4]]"), "invalid JSON"),
        (format!("{base}, {pts}, \"seed\": 1"), "unknown field"),
        (format!("\"sample_volume_l\": 0, \"titrant\": {{\"dissolved\": {{\"NaOH\": 0.05}}}}, {pts}"), "sample volume"),
        (format!("{base}, \"points\": [[0, 3], [1, 4]], \"carbonate\": true"), "at least"),
    ] {
        let msg = json_error(&["fit", "--json"], &format!("{{{body}}}"));
        assert!(msg.contains(expect), "{body}: {msg}");
    }
    json_error(&["fit", "--json", "--buffers", "1"], &format!("{{{base}, {pts}}}"));
}

/// A curve that `curve` writes with sulfuric acid as the titrant, fitted back with the same
/// titrant: the strong charge within 2 % and the carbonate within 5 % of the composition that
/// made it (invented bicarbonate make-up water with hardness and salt). Before sulfuric acid
/// counted with both protons, the titrant counted no equivalents and the fit started from a
/// strong charge of 0 whatever the data; the start now follows the data (`start` line).
#[test]
fn a_sulfuric_acid_curve_fits_back_to_its_composition() {
    let dir = scratch("fit-h2so4");
    let csv = dir.join("curve.csv");
    let csv_s = csv.to_str().unwrap();
    ok_table(&[
        "curve",
        "NaHCO3=0.004",
        "Na2CO3=0.0003",
        "CaCl2=0.0015",
        "NaCl=0.003",
        "--sample-ml",
        "50",
        "--titrant",
        "H2SO4=0.02",
        "--max-titrant-ml",
        "12",
        "--csv",
        csv_s,
    ]);
    let lab = dir.join("lab.csv");
    let text = std::fs::read_to_string(&csv).unwrap();
    let two_columns: String =
        text.lines().map(|l| l.split(',').take(2).collect::<Vec<_>>().join(",")).collect::<Vec<_>>().join("\n");
    std::fs::write(&lab, two_columns).unwrap();
    let out = ok_table(&[
        "fit",
        "--data",
        lab.to_str().unwrap(),
        "--titrant",
        "H2SO4=0.02",
        "--sample-ml",
        "50",
        "--carbonate",
    ]);
    // "strong charge     4.599 ± 0.001 meq/L" and "carbonate         4.310 ± 0.001 mmol/L".
    let value = |label: &str| -> f64 {
        let line = out.lines().find(|l| l.starts_with(label)).unwrap_or_else(|| panic!("no {label} line in {out}"));
        line[label.len()..].split_whitespace().next().unwrap().parse().unwrap()
    };
    // Truth (strong ions of the recipe): Na+ 4.0 + 0.6 + 3.0, Ca2+ 3.0, Cl− 3.0 + 3.0 meq/L, net
    // 4.6 meq/L; carbonate 4.3 mmol/L.
    let strong = value("strong charge");
    let carbonate = value("carbonate");
    assert!((strong - 4.6).abs() <= 0.02 * 4.6, "strong charge {strong} meq/L");
    assert!((carbonate - 4.3).abs() <= 0.05 * 4.3, "carbonate {carbonate} mmol/L");
}
