//! Reagents and titrants: either dissolved substances in mol/L, or one substance as bought
//! (mass percent and density, converted with `phdose::titration::reagent`). Shared by `plan`,
//! `curve` and `fit`.

use std::collections::BTreeMap;

use phdose::chem::Solution;
use phdose::chem::substance;
use phdose::titration::reagent::{self, COMMON_GRADES};
use serde::{Deserialize, Serialize};

use super::CliError;
use super::composition::{self, Dissolved};
use super::conditions::Conditions;
use super::format::{num, sig};
use super::json::{Entries, Num};

/// Systems a reagent solution can hold.
pub const CAPACITY: usize = 4;

/// The reagent solution type.
pub type ReagentSolution = Solution<f64, CAPACITY>;

/// A reagent in a JSON request: `{"dissolved": {...}}` or
/// `{"substance": "NaOH", "mass_percent": 25, "density_kg_per_l": 1.274}` (density optional
/// for grades in the built-in table).
#[derive(Clone, Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReagentJson {
    #[serde(default)]
    dissolved: Option<Entries>,
    #[serde(default)]
    substance: Option<String>,
    #[serde(default)]
    mass_percent: Option<f64>,
    #[serde(default)]
    density_kg_per_l: Option<f64>,
}

/// How a reagent given as mass percent was converted.
#[derive(Clone, Debug, PartialEq)]
pub struct Grade {
    /// Mass percent, % w/w.
    pub mass_percent: f64,
    /// Density used, kg/L.
    pub density_kg_per_l: f64,
    /// Where the density came from ("given", or the grade table's source and temperature).
    pub density_source: String,
}

/// A checked reagent.
#[derive(Clone, Debug, PartialEq)]
pub struct Reagent {
    /// What it contains, mol/L.
    pub dissolved: Vec<Dissolved>,
    /// Set when it was given as mass percent and density.
    pub grade: Option<Grade>,
}

/// Output form of a reagent.
#[derive(Serialize)]
pub struct ReagentOut {
    description: String,
    dissolved: BTreeMap<&'static str, Num>,
    #[serde(skip_serializing_if = "Option::is_none")]
    mass_percent: Option<Num>,
    #[serde(skip_serializing_if = "Option::is_none")]
    density_kg_per_l: Option<Num>,
    #[serde(skip_serializing_if = "Option::is_none")]
    density_source: Option<String>,
}

impl Reagent {
    /// From dissolved substances (at least one, not all zero).
    pub fn dissolved(entries: Vec<(String, f64)>, what: &str) -> Result<Self, CliError> {
        if entries.is_empty() {
            return Err(CliError::new(format!("{what}: nothing dissolved; give at least one substance")));
        }
        if entries.iter().all(|(_, c)| *c == 0.0) {
            return Err(CliError::new(format!("{what}: every amount is 0; the {what} would be plain water")));
        }
        let dissolved = composition::resolve(entries, what)?;
        Ok(Self { dissolved, grade: None })
    }

    /// One substance as bought. Without a density, the substance and mass percent must be in
    /// the built-in grade table.
    pub fn grade(name: &str, mass_percent: f64, density: Option<f64>, what: &str) -> Result<Self, CliError> {
        let s = substance::find(name).map_err(|e| CliError::new(format!("{what}: '{name}': {e}")))?;
        let (density_kg_per_l, density_source) = match density {
            Some(d) => (d, "given".to_owned()),
            None => {
                let g = COMMON_GRADES
                    .iter()
                    .find(|g| g.formula == s.formula && g.mass_percent == mass_percent)
                    .ok_or_else(|| {
                        let known: Vec<String> =
                            COMMON_GRADES.iter().map(|g| format!("{} {} %", g.formula, num(g.mass_percent))).collect();
                        CliError::new(format!(
                            "{what}: density_kg_per_l is needed for {} {} %; the built-in grade table has {}",
                            s.formula,
                            num(mass_percent),
                            known.join(", ")
                        ))
                    })?;
                (g.density_kg_per_l, format!("grade table at {} °C: {}", g.at_celsius, g.source))
            }
        };
        let mol_per_l: f64 = reagent::mol_per_l(s, mass_percent, density_kg_per_l)
            .map_err(|e| CliError::new(format!("{what}: {}", e)))?;
        Ok(Self {
            dissolved: vec![Dissolved { given_as: name.to_owned(), substance: s, mol_per_l }],
            grade: Some(Grade { mass_percent, density_kg_per_l, density_source }),
        })
    }

    /// From the JSON form.
    pub fn from_json(r: ReagentJson, what: &str) -> Result<Self, CliError> {
        match (r.dissolved, r.substance, r.mass_percent) {
            (Some(d), None, None) if r.density_kg_per_l.is_none() => Self::dissolved(d.0, what),
            (None, Some(s), Some(w)) => Self::grade(&s, w, r.density_kg_per_l, what),
            _ => Err(CliError::new(format!(
                "{what}: give either {{\"dissolved\": {{\"NaOH\": 6.25}}}} or {{\"substance\": \"NaOH\", \
                 \"mass_percent\": 25, \"density_kg_per_l\": 1.274}}"
            ))),
        }
    }

    /// From a command-line value: `NaOH=0.05` or `NaOH=0.05,Na2CO3=0.001` (mol/L), or
    /// `NaOH=25%` (mass percent; `density` (kg/L) from its own option, or the grade table).
    pub fn from_flag(text: &str, density: Option<f64>, what: &str) -> Result<Self, CliError> {
        if let Some((name, percent)) = text.rsplit_once('=')
            && let Some(percent) = percent.trim().strip_suffix('%')
        {
            if name.contains(',') {
                return Err(CliError::new(format!("{what}: a mass-percent reagent is one substance, got '{text}'")));
            }
            let w = super::value::number(&format!("{what} mass percent"), percent)?;
            return Self::grade(name.trim(), w, density, what);
        }
        if density.is_some() {
            return Err(CliError::new(format!(
                "{what}: a density only goes with a mass percent (e.g. NaOH=25%), not with mol/L amounts"
            )));
        }
        let items: Vec<&str> = text.split(',').map(str::trim).filter(|s| !s.is_empty()).collect();
        let entries = composition::parse_pairs(&items).map_err(|e| CliError::new(format!("{what}: {e}")))?;
        Self::dissolved(entries, what)
    }

    /// The reagent as a solution under `conditions`.
    pub fn solution(&self, conditions: Conditions, what: &str) -> Result<ReagentSolution, CliError> {
        composition::solution(conditions, &self.dissolved, what)
    }

    /// The concentration when the reagent is one substance.
    pub fn single_mol_per_l(&self) -> Option<f64> {
        match self.dissolved.as_slice() {
            [one] => Some(one.mol_per_l),
            _ => None,
        }
    }

    /// One line for tables.
    pub fn describe(&self) -> String {
        match (&self.grade, self.dissolved.as_slice()) {
            (Some(g), [d]) => {
                let from = if g.density_source == "given" { "" } else { " from the grade table" };
                format!(
                    "{} {} % w/w, density {} kg/L{from} = {} mol/L",
                    d.substance.formula,
                    sig(g.mass_percent, 3),
                    sig(g.density_kg_per_l, 4),
                    sig(d.mol_per_l, 4)
                )
            }
            (_, dissolved) => {
                let parts: Vec<String> =
                    dissolved.iter().map(|d| format!("{} {}", d.substance.formula, sig(d.mol_per_l, 4))).collect();
                format!("{} mol/L", parts.join(", "))
            }
        }
    }

    /// The JSON output form.
    pub fn to_out(&self) -> ReagentOut {
        ReagentOut {
            description: self.describe(),
            dissolved: self.dissolved.iter().map(|d| (d.substance.formula, Num(d.mol_per_l))).collect(),
            mass_percent: self.grade.as_ref().map(|g| Num(g.mass_percent)),
            density_kg_per_l: self.grade.as_ref().map(|g| Num(g.density_kg_per_l)),
            density_source: self.grade.as_ref().map(|g| g.density_source.clone()),
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn forms_agree() {
        let table = Reagent::from_flag("NaOH=25%", None, "reagent").unwrap();
        let given = Reagent::from_flag("sodium hydroxide=25%", Some(1.274), "reagent").unwrap();
        let (a, b) = (table.single_mol_per_l().unwrap(), given.single_mol_per_l().unwrap());
        // c = w·ρ·1000/M = 0.25 · 1.274 · 1000 / 39.997 (calc from the grade table's density).
        assert!((a - 0.25 * 1.274 * 1000.0 / 39.997).abs() < 1e-9 && a == b);
        let json: ReagentJson =
            serde_json::from_str(r#"{"substance": "NaOH", "mass_percent": 25, "density_kg_per_l": 1.274}"#).unwrap();
        assert_eq!(Reagent::from_json(json, "reagent").unwrap().single_mol_per_l(), Some(a));
        let two = Reagent::from_flag("NaOH=0.05, Na2CO3=0.001", None, "titrant").unwrap();
        assert_eq!(two.dissolved.len(), 2);
        assert!(two.single_mol_per_l().is_none());
    }

    #[test]
    fn bad_reagents() {
        assert!(Reagent::from_flag("NaOH=33%", None, "reagent").unwrap_err().message().contains("grade table"));
        assert!(Reagent::from_flag("NaOH=0", None, "reagent").is_err());
        assert!(Reagent::from_flag("NaOH=0.1", Some(1.2), "reagent").is_err());
        assert!(Reagent::from_flag("NaOH=120%", Some(1.2), "reagent").is_err());
        let e = Reagent::from_flag("NaOH=25%", Some(1e300), "reagent").unwrap_err();
        assert_eq!(e.message(), "reagent: density 1e300 kg/L is outside (0.5, 3]");
        let both: ReagentJson =
            serde_json::from_str(r#"{"dissolved": {"NaOH": 1}, "substance": "NaOH", "mass_percent": 25}"#).unwrap();
        assert!(Reagent::from_json(both, "reagent").is_err());
        assert!(Reagent::from_json(ReagentJson::default(), "reagent").is_err());
    }
}
