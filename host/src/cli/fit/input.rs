//! What `fit` is asked: lab points, titrant, sample volume and which unknowns to fit.

use serde::Deserialize;

use super::{Args, example};
use crate::cli::CliError;
use crate::cli::conditions::Conditions;
use crate::cli::files;
use crate::cli::format::num;
use crate::cli::json;
use crate::cli::reagent::{Reagent, ReagentJson};
use crate::cli::value::number;
use crate::cli::volume;

/// Most lab points accepted.
pub const MAX_POINTS: usize = 2000;
/// Largest data file read, bytes.
pub const MAX_FILE_BYTES: u64 = 1 << 20;

/// Shape of the JSON request, shown when stdin is empty.
pub const JSON_EXAMPLE: &str = r#"{"sample_volume_l": 0.1, "titrant": {"dissolved": {"NaOH": 0.05}}, "points": [[0, 2.61], [0.5, 2.68], [1.0, 2.76]], "carbonate": true, "buffers": 1, "temperature_c": 20, "activity": "davies"}"#;

/// A complete `fit` request.
#[derive(Clone, Debug, PartialEq)]
pub struct FitInput {
    /// Temperature and activity model of the titration.
    pub conditions: Conditions,
    /// Sample volume titrated, L.
    pub sample_volume_l: f64,
    /// The titrant.
    pub titrant: Reagent,
    /// (titrant mL, pH), ascending in titrant.
    pub points_ml: Vec<(f64, f64)>,
    /// Fit a carbonate total.
    pub carbonate: bool,
    /// Generic buffers to fit (0–2).
    pub buffers: u8,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    sample_volume_l: f64,
    titrant: ReagentJson,
    points: Vec<(f64, f64)>,
    #[serde(default)]
    carbonate: bool,
    #[serde(default)]
    buffers: Option<f64>,
    #[serde(default)]
    temperature_c: Option<f64>,
    #[serde(default)]
    activity: Option<String>,
}

/// Checks a buffer count (0, 1 or 2).
pub fn check_buffers(n: f64) -> Result<u8, CliError> {
    if n == 0.0 || n == 1.0 || n == 2.0 {
        Ok(n as u8)
    } else {
        Err(CliError::new(format!("buffers {} must be 0, 1 or 2", num(n))))
    }
}

fn check_point(line: &str, ml: f64, ph: f64) -> Result<(), CliError> {
    if ml < 0.0 {
        return Err(CliError::new(format!("{line}: titrant volume {} mL is negative", num(ml))));
    }
    if !(0.0..=14.0).contains(&ph) {
        return Err(CliError::new(format!("{line}: pH {} is outside 0-14", num(ph))));
    }
    Ok(())
}

/// Parses lab points from CSV text: `titrant_ml,ph` per line (comma, semicolon or tab), an
/// optional header naming those two columns (either order), `#` comments and blank lines.
/// Returns the points sorted by volume.
pub fn parse_csv(text: &str, source: &str) -> Result<Vec<(f64, f64)>, CliError> {
    let mut points = Vec::new();
    let mut swapped = false;
    let mut header_allowed = true;
    for (n, raw) in text.lines().enumerate() {
        let line = format!("{source} line {}", n + 1);
        let content = raw.trim_start_matches('\u{feff}').split('#').next().unwrap_or("").trim();
        if content.is_empty() {
            continue;
        }
        let fields: Vec<&str> = content.split([',', ';', '\t']).map(str::trim).collect();
        let fields: Vec<&str> = match fields.as_slice() {
            [a, b, ""] => vec![a, b],
            other => other.to_vec(),
        };
        let [a, b] = fields.as_slice() else {
            return Err(CliError::new(format!(
                "{line}: expected 2 columns (titrant_ml,ph), got {}: '{content}'",
                fields.len()
            )));
        };
        if header_allowed && a.parse::<f64>().is_err() {
            header_allowed = false;
            let (a, b) = (a.to_ascii_lowercase(), b.to_ascii_lowercase());
            swapped = match (a.as_str(), b.as_str()) {
                ("titrant_ml", "ph") => false,
                ("ph", "titrant_ml") => true,
                _ => {
                    return Err(CliError::new(format!(
                        "{line}: a header must name the columns titrant_ml and ph, got '{content}'"
                    )));
                }
            };
            continue;
        }
        header_allowed = false;
        let (ml_text, ph_text) = if swapped { (b, a) } else { (a, b) };
        let ml = number(&format!("{line}, titrant_ml"), ml_text)?;
        let ph = number(&format!("{line}, ph"), ph_text)?;
        check_point(&line, ml, ph)?;
        if points.len() >= MAX_POINTS {
            return Err(CliError::new(format!("{source}: more than {MAX_POINTS} points")));
        }
        points.push((ml, ph));
    }
    if points.is_empty() {
        return Err(CliError::new(format!("{source}: no data points")));
    }
    points.sort_by(|x, y| x.0.total_cmp(&y.0));
    Ok(points)
}

impl FitInput {
    /// Checks the sample volume and the buffer count.
    pub fn new(
        conditions: Conditions,
        sample_volume_l: f64,
        titrant: Reagent,
        points_ml: Vec<(f64, f64)>,
        carbonate: bool,
        buffers: u8,
    ) -> Result<Self, CliError> {
        volume::check_l("sample volume", sample_volume_l)?;
        if buffers > 2 {
            return Err(CliError::new(format!("buffers {buffers} must be 0, 1 or 2")));
        }
        let unknowns = 1 + usize::from(carbonate) + 2 * usize::from(buffers);
        if points_ml.len() < unknowns + 2 {
            return Err(CliError::new(format!(
                "{} point(s) cannot determine {unknowns} unknown(s); give at least {}",
                points_ml.len(),
                unknowns + 2
            )));
        }
        Ok(Self { conditions, sample_volume_l, titrant, points_ml, carbonate, buffers })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        let titrant = Reagent::from_json(r.titrant, "titrant")?;
        if r.points.len() > MAX_POINTS {
            return Err(CliError::new(format!("points: more than {MAX_POINTS}")));
        }
        for (k, (ml, ph)) in r.points.iter().enumerate() {
            check_point(&format!("points[{k}]"), *ml, *ph)?;
        }
        let mut points = r.points;
        points.sort_by(|x, y| x.0.total_cmp(&y.0));
        let buffers = check_buffers(r.buffers.unwrap_or(0.0))?;
        Self::new(conditions, r.sample_volume_l, titrant, points, r.carbonate, buffers)
    }

    /// The built-in example; `buffers` overrides its buffer count.
    pub fn example(buffers: Option<f64>) -> Result<Self, CliError> {
        let conditions = Conditions::new(Some(example::TEMPERATURE_C), None)?;
        let titrant = Reagent::dissolved(vec![(example::TITRANT.0.to_owned(), example::TITRANT.1)], "titrant")?;
        let points = parse_csv(example::DATA, "fit-example.csv")?;
        let buffers = buffers.map(check_buffers).transpose()?.unwrap_or(example::BUFFERS);
        Self::new(conditions, example::SAMPLE_ML / 1000.0, titrant, points, example::CARBONATE, buffers)
    }

    /// From the command line.
    pub fn from_args(a: &Args) -> Result<Self, CliError> {
        let path = a.data.as_deref().ok_or_else(|| CliError::new("missing --data FILE (or use --example)"))?;
        let points = parse_csv(&files::read(path, MAX_FILE_BYTES, "data file")?, path)?;
        let titrant = match (&a.titrant, &a.titrant_json) {
            (Some(t), _) => Reagent::from_flag(t, None, "titrant")?,
            (None, Some(j)) => {
                let r: ReagentJson =
                    serde_json::from_str(j).map_err(|e| CliError::new(format!("--titrant-json: invalid JSON: {e}")))?;
                Reagent::from_json(r, "titrant")?
            }
            (None, None) => {
                return Err(CliError::new("missing --titrant (e.g. --titrant NaOH=0.05) or --titrant-json"));
            }
        };
        let sample_ml = a.sample_ml.ok_or_else(|| CliError::new("missing --sample-ml (the sample volume titrated)"))?;
        let buffers = a.buffers.map(check_buffers).transpose()?.unwrap_or(0);
        let conditions = Conditions::from_args(a.conditions, None)?;
        Self::new(conditions, sample_ml / 1000.0, titrant, points, a.carbonate, buffers)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn csv_forms() {
        let a = parse_csv("# lab sheet\ntitrant_ml,ph\n1.0,3.2\n0.0,3.0 # first\n\n2,3.5\n", "t").unwrap();
        assert_eq!(a, vec![(0.0, 3.0), (1.0, 3.2), (2.0, 3.5)]);
        let b = parse_csv("pH;Titrant_mL\n3.0;0\n3.2;1\n3.5;2;\n", "t").unwrap();
        assert_eq!(a, b);
        let c = parse_csv("0\t3.0\n1\t3.2\n2\t3.5", "t").unwrap();
        assert_eq!(a, c);
    }

    #[test]
    fn csv_errors_name_the_line() {
        for (text, expect) in [
            ("0,3.0\n1,abc\n", "line 2"),
            ("volume,ph\n0,3\n", "header"),
            ("0,3.0,4\n", "2 columns"),
            ("0,15\n", "outside 0-14"),
            ("-1,7\n", "negative"),
            ("# nothing\n", "no data"),
            ("0,3\ntitrant_ml,ph\n", "line 2"),
        ] {
            let e = parse_csv(text, "t").unwrap_err();
            assert!(e.message().contains(expect), "{text:?}: {e}");
        }
    }

    #[test]
    fn example_loads() {
        let e = FitInput::example(None).unwrap();
        assert!(e.points_ml.len() >= 20 && e.carbonate && e.buffers == 1);
        assert!(FitInput::example(Some(3.0)).is_err());
    }
}
