//! What `curve` is asked: sample, titrant, range and resolution, from JSON or flags.

use serde::Deserialize;

use super::{Args, example};
use crate::cli::CliError;
use crate::cli::composition::{self, Dissolved};
use crate::cli::conditions::Conditions;
use crate::cli::format::num;
use crate::cli::json::{self, Entries};
use crate::cli::reagent::{Reagent, ReagentJson};
use crate::cli::volume;

/// Default number of curve points.
pub const DEFAULT_POINTS: usize = 64;
/// Largest number of curve points.
pub const MAX_POINTS: usize = 256;
/// Fewest curve points.
pub const MIN_POINTS: usize = 8;

/// Shape of the JSON request, shown when stdin is empty.
pub const JSON_EXAMPLE: &str = r#"{"sample": {"volume_ml": 100, "dissolved": {"NaOH": 0.001, "Na2CO3": 0.002}}, "titrant": {"dissolved": {"HCl": 0.02}}, "max_titrant_ml": 30, "point_count": 64}"#;

/// A complete `curve` request.
#[derive(Clone, Debug, PartialEq)]
pub struct CurveInput {
    /// Temperature and activity model.
    pub conditions: Conditions,
    /// The sample's composition.
    pub sample: Vec<Dissolved>,
    /// Sample volume, L.
    pub sample_volume_l: f64,
    /// The titrant.
    pub titrant: Reagent,
    /// End of the titration, L of titrant.
    pub max_titrant_l: f64,
    /// Number of curve points.
    pub points: usize,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Request {
    #[serde(default)]
    temperature_c: Option<f64>,
    #[serde(default)]
    activity: Option<String>,
    sample: SampleJson,
    titrant: ReagentJson,
    max_titrant_ml: f64,
    #[serde(default)]
    point_count: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SampleJson {
    volume_ml: f64,
    dissolved: Entries,
}

/// Checks a point count: a whole number within [`MIN_POINTS`]–[`MAX_POINTS`].
pub fn check_points(points: f64) -> Result<usize, CliError> {
    let ok = points.is_finite() && points.fract() == 0.0 && (MIN_POINTS as f64..=MAX_POINTS as f64).contains(&points);
    if !ok {
        return Err(CliError::new(format!(
            "point count {} must be a whole number from {MIN_POINTS} to {MAX_POINTS} (e.g. 64)",
            num(points)
        )));
    }
    Ok(points as usize)
}

impl CurveInput {
    /// Checks the volumes and the point count.
    pub fn new(
        conditions: Conditions,
        sample: Vec<Dissolved>,
        sample_volume_l: f64,
        titrant: Reagent,
        max_titrant_l: f64,
        points: f64,
    ) -> Result<Self, CliError> {
        volume::check_l("sample volume", sample_volume_l)?;
        volume::check_l("max titrant volume", max_titrant_l)?;
        let points = check_points(points)?;
        Ok(Self { conditions, sample, sample_volume_l, titrant, max_titrant_l, points })
    }

    /// From the JSON request text.
    pub fn from_json(text: &str) -> Result<Self, CliError> {
        let r: Request = json::parse(text, JSON_EXAMPLE)?;
        let conditions = Conditions::new(r.temperature_c, r.activity.as_deref())?;
        let sample = composition::resolve(r.sample.dissolved.0, "sample")?;
        let titrant = Reagent::from_json(r.titrant, "titrant")?;
        let points = r.point_count.unwrap_or(DEFAULT_POINTS as f64);
        Self::new(conditions, sample, r.sample.volume_ml / 1000.0, titrant, r.max_titrant_ml / 1000.0, points)
    }

    /// The built-in example; `points` overrides its resolution.
    pub fn example(points: Option<f64>) -> Result<Self, CliError> {
        let conditions = Conditions::new(Some(example::TEMPERATURE_C), None)?;
        let sample = composition::resolve(example::DISSOLVED.iter().map(|(f, c)| ((*f).to_owned(), *c)).collect(), "")?;
        let titrant = Reagent::dissolved(vec![(example::TITRANT.0.to_owned(), example::TITRANT.1)], "titrant")?;
        let points = points.unwrap_or(DEFAULT_POINTS as f64);
        Self::new(conditions, sample, example::SAMPLE_ML / 1000.0, titrant, example::MAX_TITRANT_ML / 1000.0, points)
    }

    /// From the command line: sample `SUBSTANCE=MOL_PER_L` arguments and the options.
    pub fn from_args(a: &Args) -> Result<Self, CliError> {
        let missing = |option: &str| CliError::new(format!("missing --{option} (or use --example)"));
        let entries = composition::require(&a.sample, "no sample", "NaOH=0.001 Na2CO3=0.002")?;
        let sample = composition::resolve(entries, "sample")?;
        let sample_ml = a.sample_ml.ok_or_else(|| missing("sample-ml"))?;
        let titrant = Reagent::from_flag(a.titrant.as_deref().ok_or_else(|| missing("titrant"))?, None, "titrant")?;
        let max_ml = a.max_titrant_ml.ok_or_else(|| missing("max-titrant-ml"))?;
        let conditions = Conditions::from_args(a.conditions, None)?;
        let points = a.point_count.unwrap_or(DEFAULT_POINTS as f64);
        Self::new(conditions, sample, sample_ml / 1000.0, titrant, max_ml / 1000.0, points)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn point_counts() {
        assert_eq!(check_points(64.0).unwrap(), 64);
        assert_eq!(check_points(8.0).unwrap(), 8);
        assert_eq!(check_points(256.0).unwrap(), 256);
        assert_eq!(check_points(63.0).unwrap(), 63);
        for bad in [0.0, 4.0, 64.5, 264.0, -64.0, f64::NAN] {
            assert!(check_points(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn json_example_parses() {
        let i = CurveInput::from_json(JSON_EXAMPLE).unwrap();
        assert_eq!((i.points, i.sample.len()), (64, 2));
        assert!(CurveInput::from_json(r#"{"sample": {"volume_ml": 0, "dissolved": {}}, "titrant": {"dissolved": {"HCl": 0.1}}, "max_titrant_ml": 10}"#).is_err());
    }
}
