//! `phdose curve`: table, JSON, CSV and SVG outputs agree with each other and with the
//! stoichiometry of the invented example (alkaline-cleaner rinse of a fictional plating shop).
//!
//! Reference values: the example's equivalence volumes follow from the amounts (calc): 100 mL
//! holding 0.1 mmol NaOH and 0.2 mmol Na2CO3, titrated with 0.02 mol/L HCl, needs 5 mL for the
//! hydroxide, 10 mL more for carbonate → bicarbonate (15 mL) and 10 mL more for bicarbonate →
//! CO2 (25 mL). The hydroxide point sits inside the carbonate buffer and shows no inflection.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{json_error, num, ok_json, ok_table, scratch, table_error, usage_error};

/// The vertices of the longest polyline drawn in `color` (plotters draws axes, ticks and legend
/// samples as polylines too, in other colours or with two points).
fn curve_line(doc: &roxmltree::Document<'_>, color: &str) -> Vec<(f64, f64)> {
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline") && n.attribute("stroke") == Some(color))
        .map(|n| {
            let points = n.attribute("points").unwrap().split_whitespace();
            points.map(|p| p.split_once(',').unwrap()).map(|(x, y)| (x.parse().unwrap(), y.parse().unwrap())).collect()
        })
        .max_by_key(|v: &Vec<(f64, f64)>| v.len())
        .expect("a polyline in the curve colour")
}

/// Every text of the SVG document, trimmed.
fn texts(doc: &roxmltree::Document<'_>) -> Vec<String> {
    doc.descendants().filter(|n| n.has_tag_name("text")).map(|n| n.text().unwrap_or("").trim().to_owned()).collect()
}

/// Circles filled with `color` (`filled`) or drawn open in it.
fn circles(doc: &roxmltree::Document<'_>, color: &str, filled: bool) -> usize {
    doc.descendants()
        .filter(|n| n.has_tag_name("circle"))
        .filter(|n| if filled { n.attribute("fill") == Some(color) } else { n.attribute("stroke") == Some(color) })
        .count()
}

#[test]
fn example_json_matches_the_stoichiometry() {
    let doc = ok_json(&["curve", "--example", "--json"], "");
    let points = doc["points"].as_array().unwrap();
    assert_eq!(points.len(), 64);
    let first = &points[0];
    assert_eq!(num(first, "titrant_ml"), 0.0);
    assert!((num(points.last().unwrap(), "titrant_ml") - 30.0).abs() < 1e-9);
    for w in points.windows(2) {
        assert!(num(&w[0], "titrant_ml") < num(&w[1], "titrant_ml"));
        assert!(num(&w[0], "ph") >= num(&w[1], "ph"), "acid titrant: pH falls");
        assert!(num(&w[1], "buffer_capacity") > 0.0);
    }
    let model = doc["equivalence_points"]["model"].as_array().unwrap();
    let volumes: Vec<f64> = model.iter().map(|e| num(e, "titrant_ml")).collect();
    assert_eq!(volumes.len(), 3, "{model:?}");
    for (v, expect) in volumes.iter().zip([5.0, 15.0, 25.0]) {
        assert!((v - expect).abs() < 1e-9, "{v} vs {expect}");
    }
    // Acid titrant: hydroxide first ("strong"), then CO3^2- -> HCO3- (carbonate step 2), then
    // HCO3- -> CO2 (carbonate step 1).
    assert_eq!(model[0]["system"], "strong");
    assert_eq!((model[1]["system"].as_str(), model[1]["step"].as_u64()), (Some("carbonate"), Some(2)));
    assert_eq!((model[2]["system"].as_str(), model[2]["step"].as_u64()), (Some("carbonate"), Some(1)));
    let curve = doc["equivalence_points"]["curve"].as_array().unwrap();
    assert_eq!(curve.len(), 2, "{curve:?}");
    for (e, expect) in curve.iter().zip([15.0, 25.0]) {
        assert!((num(e, "titrant_ml") - expect).abs() < 0.1, "{e}");
    }
    // Bicarbonate point near pH 8.3, CO2 point near 4.5 (SM 2320 endpoints, as named in
    // phdose::titration::alkalinity); the model solves them, so ±0.3.
    assert!((num(&curve[0], "ph") - 8.3).abs() < 0.3 && (num(&curve[1], "ph") - 4.5).abs() < 0.3, "{curve:?}");
    assert_eq!(num(&doc, "sample_volume_ml"), 100.0);
    assert!(doc["files"]["csv"].is_null() && doc["files"]["svg"].is_null());
}

#[test]
fn csv_and_svg_files() {
    let dir = scratch("curve-files");
    let (csv, svg) = (dir.join("curve.csv"), dir.join("curve.svg"));
    let (csv_s, svg_s) = (csv.to_str().unwrap(), svg.to_str().unwrap());
    let doc = ok_json(&["curve", "--example", "--json", "--point-count", "96", "--csv", csv_s, "--svg", svg_s], "");
    assert_eq!(doc["files"]["csv"].as_str(), Some(csv_s));
    let points = doc["points"].as_array().unwrap();
    assert_eq!(points.len(), 96);

    let text = std::fs::read_to_string(&csv).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("titrant_ml,ph,buffer_capacity"));
    let rows: Vec<Vec<f64>> = lines.map(|l| l.split(',').map(|x| x.parse().unwrap()).collect()).collect();
    assert_eq!(rows.len(), 96);
    // Same numbers (serde_json's default float parser may be off by an ulp, hence 1e-14).
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-14 * a.abs().max(b.abs());
    for (row, p) in rows.iter().zip(points) {
        assert_eq!(row.len(), 3);
        assert!(same(row[0], num(p, "titrant_ml")), "{row:?} vs {p}");
        assert!(same(row[1], num(p, "ph")), "{row:?} vs {p}");
        assert!(same(row[2], num(p, "buffer_capacity")), "{row:?} vs {p}");
    }

    let svg = std::fs::read_to_string(&svg).unwrap();
    let xml = roxmltree::Document::parse(&svg).expect("the SVG is well-formed XML");
    assert!(xml.root_element().has_tag_name("svg"));
    // The curve in its colour (blue in phdose's plot module), one vertex per curve point.
    let line = curve_line(&xml, "#1F4E9C");
    assert_eq!(line.len(), 96, "one polyline vertex per curve point");
    // Pixel coordinates fall with rising pH (SVG y runs down): the first vertex (high pH) is
    // above the last.
    assert!(line[0].1 < line[95].1 && line[0].0 < line[95].0);
    // Curve points as red dots, model points as green rings, each set once more in the legend.
    let curve = doc["equivalence_points"]["curve"].as_array().unwrap();
    let model = doc["equivalence_points"]["model"].as_array().unwrap();
    assert_eq!(circles(&xml, "#C0392B", true), curve.len() + 1);
    assert_eq!(circles(&xml, "#2E8B57", false), model.len() + 1);
    let texts = texts(&xml);
    for e in curve {
        let label = format!("pH {:.2}", num(e, "ph"));
        assert!(texts.contains(&label), "SVG lacks the label {label}: {texts:?}");
    }
    // The model point at 5 mL (hydroxide, no inflection on the curve) is labelled too.
    let hydroxide = model.iter().find(|e| (num(e, "titrant_ml") - 5.0).abs() < 1e-9).unwrap();
    assert!(texts.contains(&format!("pH {:.2}", num(hydroxide, "ph"))), "{texts:?}");
    for word in ["titrant added (mL)", "pH", "equivalence point on the curve", "equivalence point from the model"] {
        assert!(texts.iter().any(|t| t == word), "SVG lacks {word}: {texts:?}");
    }
    // Tick labels on both axes: 0 … 30 mL and a pH range.
    assert!(texts.iter().any(|t| t.parse::<f64>() == Ok(0.0)) && texts.iter().any(|t| t.parse::<f64>() == Ok(30.0)));
    assert!(texts.len() >= 15);
}

#[test]
fn out_folder_never_overwrites_without_force() {
    let dir = scratch("curve-out").join("figures");
    let d = dir.to_str().unwrap();
    let out = ok_table(&["curve", "--example", "--out", d]);
    let (csv, svg) = (dir.join("curve.csv"), dir.join("curve.svg"));
    for path in [&csv, &svg] {
        assert!(out.contains(&format!("to {}", path.display())), "{out}");
    }
    roxmltree::Document::parse(&std::fs::read_to_string(&svg).unwrap()).unwrap();
    // A second run refuses and leaves the files alone; --force overwrites them.
    std::fs::write(&csv, "kept").unwrap();
    let e = table_error(&["curve", "--example", "--out", d]);
    assert!(e.contains("will not overwrite") && e.contains("--force"), "{e}");
    assert_eq!(std::fs::read_to_string(&csv).unwrap(), "kept");
    let doc = ok_json(&["curve", "--example", "--json", "--out", d, "--force"], "");
    assert_eq!(doc["files"]["csv"].as_str(), csv.to_str());
    assert!(std::fs::read_to_string(&csv).unwrap().starts_with("titrant_ml,ph"));
    // --force alone, or --out with a single-file option, is a usage error.
    assert!(usage_error(&["curve", "--example", "--force"]).contains("--out"));
    assert!(usage_error(&["curve", "--example", "--out", d, "--svg", "c.svg"]).contains("cannot be used with"));
}

#[test]
fn table_and_flags_agree_with_json() {
    let request = r#"{"temperature_c": 20, "activity": "ideal",
        "sample": {"volume_ml": 50, "dissolved": {"HCOOH": 0.004, "HCl": 0.002}},
        "titrant": {"dissolved": {"NaOH": 0.02}}, "max_titrant_ml": 20, "point_count": 40}"#;
    let doc = ok_json(&["curve", "--json"], request);
    assert_eq!(doc["points"].as_array().unwrap().len(), 40);
    // 0.1 mmol HCl then 0.2 mmol formic acid with 0.02 mol/L NaOH: 5 and 15 mL (calc).
    let model: Vec<f64> =
        doc["equivalence_points"]["model"].as_array().unwrap().iter().map(|e| num(e, "titrant_ml")).collect();
    assert_eq!(model.len(), 2);
    assert!((model[0] - 5.0).abs() < 1e-9 && (model[1] - 15.0).abs() < 1e-9, "{model:?}");

    let out = ok_table(&[
        "curve",
        "HCOOH=0.004",
        "HCl=0.002",
        "--sample-ml",
        "50",
        "--titrant",
        "NaOH=0.02",
        "--max-titrant-ml",
        "20",
        "--point-count",
        "40",
        "--temperature-c",
        "20",
        "--activity",
        "ideal",
    ]);
    let rows: Vec<&str> =
        out.lines().filter(|l| l.trim_start().chars().next().is_some_and(|c| c.is_ascii_digit())).collect();
    assert_eq!(rows.len(), 40 + doc["equivalence_points"]["curve"].as_array().unwrap().len() + 2, "{out}");
    for (row, p) in rows.iter().zip(doc["points"].as_array().unwrap()) {
        assert!(row.contains(&format!("{:.3}", num(p, "ph"))), "{row} vs {p}");
    }
    assert!(out.contains("formate step 1"), "{out}");
    assert!(out.trim_end().lines().last().unwrap().contains("SAFETY.md"));
}

#[test]
fn mass_percent_titrant() {
    let request = r#"{"sample": {"volume_ml": 1000, "dissolved": {"NaHCO3": 0.003}},
        "titrant": {"substance": "HCl", "mass_percent": 32}, "max_titrant_ml": 0.5}"#;
    let doc = ok_json(&["curve", "--json"], request);
    // 32 % HCl at 1.159 kg/L (grade table) = 10.17 mol/L (calc); 3 mmol bicarbonate → 0.295 mL.
    let c = num(&doc["titrant"]["dissolved"], "HCl");
    assert!((c - 0.32 * 1.159 * 1000.0 / 36.458).abs() < 1e-9);
    let model = doc["equivalence_points"]["model"].as_array().unwrap();
    assert!((num(&model[0], "titrant_ml") - 3.0 / c).abs() < 1e-9, "{model:?}");
    assert_eq!(doc["points"].as_array().map(Vec::len), Some(64), "default point count");
}

#[test]
fn input_errors_exit_2() {
    let base = r#""sample": {"volume_ml": 100, "dissolved": {"NaOH": 0.001}}, "titrant": {"dissolved": {"HCl": 0.02}}"#;
    for (extra, expect) in [
        (r#""max_titrant_ml": 10, "point_count": 63.5"#, "whole number"),
        (r#""max_titrant_ml": 10, "point_count": 512"#, "whole number"),
        (r#""max_titrant_ml": 10, "point_count": 4"#, "whole number"),
        (r#""max_titrant_ml": 0"#, "max titrant"),
        (r#""max_titrant_ml": -10"#, "max titrant"),
        (r#""max_titrant_ml": 10, "colour": "red""#, "unknown field"),
    ] {
        let msg = json_error(&["curve", "--json"], &format!("{{{base}, {extra}}}"));
        assert!(msg.contains(expect), "{extra}: {msg}");
    }
    let msg = json_error(&["curve", "--json"], &format!("{{{}, \"max_titrant_ml\": 10}}", base.replace("HCl", "HXYZ")));
    assert!(msg.starts_with("titrant: ") && msg.contains("known formulas"), "{msg}");
    let msg = json_error(
        &["curve", "--json"],
        r#"{"sample": {"volume_ml": 0, "dissolved": {}}, "titrant": {"dissolved": {"HCl": 0.1}}, "max_titrant_ml": 10}"#,
    );
    assert!(msg.contains("sample volume"), "{msg}");
    json_error(&["curve", "--json", "--point-count", "64"], &format!("{{{base}, \"max_titrant_ml\": 10}}"));
    json_error(&["curve", "--json"], "");
    // Keys renamed for one vocabulary are answered with their new names.
    for (old, new) in [("max_titrant_l", "max_titrant_ml"), ("points", "point_count")] {
        let msg = json_error(&["curve", "--json"], &format!("{{{base}, \"max_titrant_ml\": 10, \"{old}\": 1}}"));
        assert!(msg.contains(&format!("\"{old}\" is now \"{new}\"")), "{msg}");
    }

    let dir = scratch("curve-errors");
    let missing = dir.join("no-such-dir").join("c.svg");
    let e = table_error(&["curve", "--example", "--svg", missing.to_str().unwrap()]);
    assert!(e.contains("cannot write SVG"), "{e}");
    assert!(usage_error(&["curve", "--example", "NaOH=0.1"]).contains("--example"));
    assert!(usage_error(&["curve", "--example", "--sample-ml", "50"]).contains("'--example' cannot be used with"));
    assert!(
        table_error(&["curve", "NaOH=0.001", "--sample-ml", "100", "--titrant", "HCl=0.02"])
            .contains("--max-titrant-ml")
    );
    assert!(table_error(&["curve"]).contains("--example"));
}

/// The total-alkalinity endpoint of a buffered water is found at the default point count. An
/// invented alkaline rinse (caustic, soda ash, a little trisodium phosphate and sodium acetate),
/// 100 mL titrated with 0.1 M HCl at 20 °C: its pH 4.3 endpoint, near 7.81 mL, was found only
/// with `--points 256`, because the chord slopes between 64 points made it look less prominent
/// than it is. Reference: the stoichiometry (calc) puts carbonate step 1 at 7.4 mL and acetate
/// at 7.9 mL, and the exact-slope maximum lies between them; the other inflection is carbonate
/// step 2 at 5.2 mL.
#[test]
fn the_alkalinity_endpoint_is_found_at_the_default_point_count() {
    let args = [
        "curve",
        "NaOH=0.003",
        "Na2CO3=0.002",
        "Na3PO4=0.0002",
        "CH3COONa=0.0005",
        "--sample-ml",
        "100",
        "--titrant",
        "HCl=0.1",
        "--max-titrant-ml",
        "15",
        "--temperature-c",
        "20",
    ];
    let mut found = Vec::new();
    for points in [None, Some("32"), Some("256")] {
        let mut a: Vec<&str> = args.to_vec();
        if let Some(p) = points {
            a.extend(["--point-count", p]);
        }
        let out = ok_table(&a);
        let section = out.split("Equivalence points on the curve").nth(1).unwrap();
        let section = section.split("Equivalence points from the model").next().unwrap();
        let ml: Vec<f64> =
            section.lines().filter_map(|l| l.split_whitespace().next().and_then(|w| w.parse::<f64>().ok())).collect();
        assert_eq!(ml.len(), 2, "{points:?} points:\n{out}");
        assert!((ml[0] - 5.20).abs() < 0.02 && (ml[1] - 7.81).abs() < 0.02, "{points:?} points: {ml:?}");
        found.push(ml);
    }
    // The same points whatever the point count (printed to 0.001 mL).
    assert!(found.windows(2).all(|w| w[0] == w[1]), "{found:?}");
}
