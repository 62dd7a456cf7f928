//! What `fit` is asked: lab points, titrant, sample volume and which unknowns to fit.

use phdose::titration::fit::{MAX_INERT_IONIC_STRENGTH_MOL_PER_L, MAX_TITRANT_PER_SAMPLE, MEASURED_PH_RANGE};
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
pub const JSON_EXAMPLE: &str = r#"{"sample_volume_ml": 100, "titrant": {"dissolved": {"NaOH": 0.05}}, "points": [[0, 2.61], [0.5, 2.68], [1.0, 2.76]], "carbonate": true, "phosphate": false, "buffers": 1, "inert_ionic_strength_mol_per_l": 0.002, "temperature_c": 20, "activity": "davies"}"#;

/// A complete `fit` request.
#[derive(Clone, Debug, PartialEq)]
pub struct FitInput {
    /// Temperature and activity model of the titration.
    pub conditions: Conditions,
    /// Sample volume titrated, L.
    pub sample_volume_l: f64,
    /// The titrant.
    pub titrant: Reagent,
    /// (titrant mL, pH), in titrant order (non-decreasing volumes).
    pub points_ml: Vec<(f64, f64)>,
    /// What is fitted, and the sample's inert ionic strength.
    pub unknowns: Unknowns,
}

/// What a fit determines, and what it is told about the sample's inert salts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Unknowns {
    /// Fit a carbonate total.
    pub carbonate: bool,
    /// Fit a phosphate total.
    pub phosphate: bool,
    /// Generic buffers to fit (0–2).
    pub buffers: u8,
    /// Ionic strength of the sample's inert salts, mol/L (0 to 0.5).
    pub inert_ionic_strength_mol_per_l: f64,
}

impl Unknowns {
    /// Number of fitted parameters: the strong charge, each total, each buffer's total and pKa.
    pub fn count(&self) -> usize {
        1 + usize::from(self.carbonate) + usize::from(self.phosphate) + 2 * usize::from(self.buffers)
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    sample_volume_ml: f64,
    titrant: ReagentJson,
    points: Vec<(f64, f64)>,
    #[serde(default)]
    carbonate: bool,
    #[serde(default)]
    phosphate: bool,
    #[serde(default)]
    buffers: Option<f64>,
    #[serde(default)]
    inert_ionic_strength_mol_per_l: Option<f64>,
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
    let (lo, hi) = MEASURED_PH_RANGE;
    if !(lo..=hi).contains(&ph) {
        return Err(CliError::new(format!("{line}: pH {} is outside {}-{}", num(ph), num(lo), num(hi))));
    }
    Ok(())
}

/// Refuses a volume below the previous point's: a lab sheet out of order is more often a typing
/// error than a reordering, so it is not sorted silently.
fn check_order(line: &str, previous_ml: Option<f64>, ml: f64) -> Result<(), CliError> {
    match previous_ml {
        Some(p) if ml < p => Err(CliError::new(format!(
            "{line}: titrant volume {} mL is below the previous point's {} mL; the points must be in titrant \
             order (non-decreasing volumes)",
            num(ml),
            num(p)
        ))),
        _ => Ok(()),
    }
}

/// Lab points read from CSV text, with the line each came from (1-based).
#[derive(Clone, Debug, PartialEq)]
pub struct CsvPoints {
    /// (titrant mL, pH), in the file's order.
    pub points_ml: Vec<(f64, f64)>,
    /// The line of each point.
    pub lines: Vec<usize>,
}

/// The columns of a header line: the indices of `titrant_ml` and `ph` (case-insensitive, each
/// exactly once); other columns are ignored.
fn header_columns(fields: &[&str], line: &str, content: &str) -> Result<(usize, usize), CliError> {
    let find = |name: &str| -> Result<usize, CliError> {
        let mut at = fields.iter().enumerate().filter(|(_, f)| f.eq_ignore_ascii_case(name)).map(|(i, _)| i);
        match (at.next(), at.next()) {
            (Some(i), None) => Ok(i),
            (None, _) => {
                Err(CliError::new(format!("{line}: a header must name the columns titrant_ml and ph, got '{content}'")))
            }
            (Some(_), Some(_)) => Err(CliError::new(format!("{line}: the header names the column {name} twice"))),
        }
    };
    Ok((find("titrant_ml")?, find("ph")?))
}

/// Parses lab points from CSV text (comma, semicolon or tab; `#` comments and blank lines
/// allowed). With a header line, the columns named `titrant_ml` and `ph` are read (any order,
/// any case) and every other column is ignored, so the CSV `phdose curve --csv` writes is read
/// as it is; every row then has the header's number of fields. Without a header, each line is
/// `titrant_ml,ph`. A trailing separator is allowed. The points must be in titrant order
/// (non-decreasing volumes): one out of order is refused with its line, not sorted.
pub fn parse_csv(text: &str, source: &str) -> Result<CsvPoints, CliError> {
    let mut out = CsvPoints { points_ml: Vec::new(), lines: Vec::new() };
    // (titrant_ml column, ph column, fields per row); `None` until a header or a data line.
    let mut columns: Option<(usize, usize, usize)> = None;
    for (n, raw) in text.lines().enumerate() {
        let line = format!("{source} line {}", n + 1);
        let content = raw.trim_start_matches('\u{feff}').split('#').next().unwrap_or("").trim();
        if content.is_empty() {
            continue;
        }
        let mut fields: Vec<&str> = content.split([',', ';', '\t']).map(str::trim).collect();
        if fields.len() > 1 && fields.last() == Some(&"") {
            fields.pop();
        }
        let (ml_at, ph_at, width) = match columns {
            Some(c) => c,
            None if fields.first().is_some_and(|a| a.parse::<f64>().is_err()) => {
                let (ml_at, ph_at) = header_columns(&fields, &line, content)?;
                columns = Some((ml_at, ph_at, fields.len()));
                continue;
            }
            None => {
                let c = (0, 1, 2);
                columns = Some(c);
                c
            }
        };
        if fields.len() != width {
            let what = if width == 2 { " (titrant_ml,ph)".to_owned() } else { " as in the header".to_owned() };
            return Err(CliError::new(format!(
                "{line}: expected {width} columns{what}, got {}: '{content}'",
                fields.len()
            )));
        }
        let field = |i: usize| fields.get(i).copied().unwrap_or("");
        let ml = number(&format!("{line}, titrant_ml"), field(ml_at))?;
        let ph = number(&format!("{line}, ph"), field(ph_at))?;
        check_point(&line, ml, ph)?;
        check_order(&line, out.points_ml.last().map(|p| p.0), ml)?;
        if out.points_ml.len() >= MAX_POINTS {
            return Err(CliError::new(format!("{source}: more than {MAX_POINTS} points")));
        }
        out.points_ml.push((ml, ph));
        out.lines.push(n + 1);
    }
    if out.points_ml.is_empty() {
        return Err(CliError::new(format!("{source}: no data points")));
    }
    Ok(out)
}

impl FitInput {
    /// Checks the sample volume, the buffer count and each point's volume against the sample
    /// (at most `MAX_TITRANT_PER_SAMPLE` sample volumes); `label(k)` names point `k` in an
    /// error (its CSV line or JSON index).
    pub fn new(
        conditions: Conditions,
        sample_volume_l: f64,
        titrant: Reagent,
        points_ml: Vec<(f64, f64)>,
        unknowns: Unknowns,
        label: &dyn Fn(usize) -> String,
    ) -> Result<Self, CliError> {
        volume::check_l("sample volume", sample_volume_l)?;
        let sample_ml = sample_volume_l * 1000.0;
        let max_ml = MAX_TITRANT_PER_SAMPLE * sample_ml;
        if let Some((k, (ml, _))) = points_ml.iter().enumerate().find(|(_, (ml, _))| *ml > max_ml) {
            return Err(CliError::new(format!(
                "{}: titrant volume {} mL is more than {} times the {} mL sample ({} mL): not a lab titration \
                 (a unit or typing error?)",
                label(k),
                num(*ml),
                num(MAX_TITRANT_PER_SAMPLE),
                num(sample_ml),
                num(max_ml)
            )));
        }
        if unknowns.buffers > 2 {
            return Err(CliError::new(format!("buffers {} must be 0, 1 or 2", unknowns.buffers)));
        }
        let inert = unknowns.inert_ionic_strength_mol_per_l;
        if !(0.0..=MAX_INERT_IONIC_STRENGTH_MOL_PER_L).contains(&inert) {
            return Err(CliError::new(format!(
                "inert ionic strength {} mol/L must be from 0 to {MAX_INERT_IONIC_STRENGTH_MOL_PER_L} (the Davies \
                 equation's range)",
                num(inert)
            )));
        }
        let count = unknowns.count();
        if points_ml.len() < count + 2 {
            return Err(CliError::new(format!(
                "{} point(s) cannot determine {count} unknown(s); give at least {}",
                points_ml.len(),
                count + 2
            )));
        }
        Ok(Self { conditions, sample_volume_l, titrant, points_ml, unknowns })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        let titrant = Reagent::from_json(r.titrant, "titrant")?;
        if r.points.len() > MAX_POINTS {
            return Err(CliError::new(format!("points: more than {MAX_POINTS}")));
        }
        let label = |k: usize| format!("points[{k}]");
        let mut previous = None;
        for (k, (ml, ph)) in r.points.iter().enumerate() {
            check_point(&label(k), *ml, *ph)?;
            check_order(&label(k), previous, *ml)?;
            previous = Some(*ml);
        }
        let unknowns = Unknowns {
            carbonate: r.carbonate,
            phosphate: r.phosphate,
            buffers: check_buffers(r.buffers.unwrap_or(0.0))?,
            inert_ionic_strength_mol_per_l: r.inert_ionic_strength_mol_per_l.unwrap_or(0.0),
        };
        Self::new(conditions, r.sample_volume_ml / 1000.0, titrant, r.points, unknowns, &label)
    }

    /// The built-in example; `buffers` overrides its buffer count.
    pub fn example(buffers: Option<f64>) -> Result<Self, CliError> {
        let conditions = Conditions::new(Some(example::TEMPERATURE_C), None)?;
        let titrant = Reagent::dissolved(vec![(example::TITRANT.0.to_owned(), example::TITRANT.1)], "titrant")?;
        let csv = parse_csv(example::DATA, "fit-example.csv")?;
        let buffers = buffers.map(check_buffers).transpose()?.unwrap_or(example::BUFFERS);
        let label = |k: usize| format!("fit-example.csv line {}", csv.lines.get(k).copied().unwrap_or(0));
        let unknowns =
            Unknowns { carbonate: example::CARBONATE, phosphate: false, buffers, inert_ionic_strength_mol_per_l: 0.0 };
        Self::new(conditions, example::SAMPLE_ML / 1000.0, titrant, csv.points_ml.clone(), unknowns, &label)
    }

    /// From the command line.
    pub fn from_args(a: &Args) -> Result<Self, CliError> {
        let path = a.data.as_deref().ok_or_else(|| CliError::new("missing --data FILE (or use --example)"))?;
        let csv = parse_csv(&files::read(path, MAX_FILE_BYTES, "data file")?, path)?;
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
        let label = |k: usize| format!("{path} line {}", csv.lines.get(k).copied().unwrap_or(0));
        let unknowns = Unknowns {
            carbonate: a.carbonate,
            phosphate: a.phosphate,
            buffers,
            inert_ionic_strength_mol_per_l: a.inert_ionic_strength_mol_per_l.unwrap_or(0.0),
        };
        Self::new(conditions, sample_ml / 1000.0, titrant, csv.points_ml.clone(), unknowns, &label)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn points(text: &str) -> Vec<(f64, f64)> {
        parse_csv(text, "t").unwrap().points_ml
    }

    #[test]
    fn csv_forms() {
        let a = parse_csv("# lab sheet\ntitrant_ml,ph\n0.0,3.0 # first\n1.0,3.2\n\n2,3.5\n", "t").unwrap();
        assert_eq!(a.points_ml, vec![(0.0, 3.0), (1.0, 3.2), (2.0, 3.5)]);
        assert_eq!(a.lines, vec![3, 4, 6]);
        assert_eq!(points("pH;Titrant_mL\n3.0;0\n3.2;1\n3.5;2;\n"), a.points_ml);
        assert_eq!(points("0\t3.0\n1\t3.2\n2\t3.5"), a.points_ml);
        // The CSV `curve --csv` writes: the columns are picked by name, the rest ignored.
        let curve = "titrant_ml,ph,buffer_capacity_mol_per_l_per_ph\n0,3.0,0.001\n1,3.2,0.002\n2,3.5,0.004\n";
        assert_eq!(points(curve), a.points_ml);
        assert_eq!(points("sample,ph,note,titrant_ml\nA,3.0,x,0\nA,3.2,,1\nB,3.5,y,2\n"), a.points_ml);
        // Repeated readings at one volume are kept in order.
        assert_eq!(points("0,3.0\n1,3.2\n1,3.25\n"), vec![(0.0, 3.0), (1.0, 3.2), (1.0, 3.25)]);
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
            ("0,3.0\n2,3.5\n1,3.2\n", "line 3: titrant volume 1 mL is below the previous point's 2 mL"),
            ("titrant_ml,ph,capacity\n0,3,1\n1,3.2\n", "line 3: expected 3 columns as in the header"),
            ("titrant_ml,ph,ph\n0,3,3\n", "names the column ph twice"),
            ("titrant_ml,capacity\n0,3\n", "header"),
        ] {
            let e = parse_csv(text, "t").unwrap_err();
            assert!(e.message().contains(expect), "{text:?}: {e}");
        }
    }

    #[test]
    fn example_loads() {
        let e = FitInput::example(None).unwrap();
        assert!(e.points_ml.len() >= 20 && e.unknowns.carbonate && e.unknowns.buffers == 1);
        assert!(FitInput::example(Some(3.0)).is_err());
    }
}
