//! Dissolved substances by name, and the solutions built from them: shared by every command
//! that takes a composition (speciate, plan, curve, fit).

use phdose::chem::{Solution, Substance, substance};

use super::CliError;
use super::conditions::Conditions;

/// Systems one host solution can hold; the catalogue has fewer, so any mix of built-in
/// substances (plus a reagent's) fits.
pub const CAPACITY: usize = 16;

/// The host solution type: `f64`, [`CAPACITY`] systems.
pub type HostSolution = Solution<f64, CAPACITY>;

/// One dissolved substance.
#[derive(Clone, Debug, PartialEq)]
pub struct Dissolved {
    /// The key as the user wrote it ("sodium bicarbonate").
    pub given_as: String,
    /// The substance it names.
    pub substance: &'static Substance,
    /// Amount dissolved, mol/L (checked by the solution when added).
    pub mol_per_l: f64,
}

/// An error about part `what` of a request ("sample", "influent"): `what` goes first, unless
/// it is empty.
fn in_part(what: &str, message: String) -> CliError {
    if what.is_empty() { CliError::new(message) } else { CliError::new(format!("{what}: {message}")) }
}

/// Resolves every substance name; refuses unknown names and a substance named twice. `what`
/// ("sample", "influent") prefixes the errors; empty for none.
pub fn resolve(entries: Vec<(String, f64)>, what: &str) -> Result<Vec<Dissolved>, CliError> {
    let mut dissolved: Vec<Dissolved> = Vec::with_capacity(entries.len());
    for (given_as, mol_per_l) in entries {
        let substance = substance::find(&given_as).map_err(|e| in_part(what, format!("'{given_as}': {e}")))?;
        if let Some(first) = dissolved.iter().find(|d| d.substance.formula == substance.formula) {
            return Err(in_part(
                what,
                format!(
                    "{} is given twice ('{}' and '{given_as}'); give each substance once",
                    substance.formula, first.given_as
                ),
            ));
        }
        dissolved.push(Dissolved { given_as, substance, mol_per_l });
    }
    Ok(dissolved)
}

/// Parses `SUBSTANCE=MOL_PER_L` items into (name, amount) pairs.
pub fn parse_pairs<S: AsRef<str>>(items: &[S]) -> Result<Vec<(String, f64)>, CliError> {
    items.iter().map(|item| super::value::pair(item.as_ref())).collect()
}

/// The `SUBSTANCE=MOL_PER_L` arguments of a command, at least one: with none, the error opens
/// with `none` ("no sample") and shows `example` ("NaOH=0.001 Na2CO3=0.002").
pub fn require(pairs: &[(String, f64)], none: &str, example: &str) -> Result<Vec<(String, f64)>, CliError> {
    if pairs.is_empty() {
        return Err(CliError::new(format!(
            "{none}: give SUBSTANCE=MOL_PER_L arguments (e.g. {example}), or --example"
        )));
    }
    Ok(pairs.to_vec())
}

/// The solution of `dissolved` under `conditions`; `what` ("influent", "sample") prefixes
/// composition errors.
pub fn solution<const N: usize>(
    conditions: Conditions,
    dissolved: &[Dissolved],
    what: &str,
) -> Result<Solution<f64, N>, CliError> {
    let mut s = Solution::new(conditions.temperature, conditions.activity);
    for d in dissolved {
        s.add_substance(d.substance, d.mol_per_l).map_err(|e| in_part(what, format!("{}: {}", d.given_as, e)))?;
    }
    Ok(s)
}

/// "NaHCO3 2.000e-3, HCl 1.000e-3 mol/L", or "nothing (pure water)".
pub fn describe(dissolved: &[Dissolved]) -> String {
    if dissolved.is_empty() {
        return "nothing (pure water)".to_owned();
    }
    let parts: Vec<String> =
        dissolved.iter().map(|d| format!("{} {}", d.substance.formula, super::format::sci(d.mol_per_l))).collect();
    format!("{} mol/L", parts.join(", "))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn names_pairs_and_solutions() {
        let d = resolve(parse_pairs(&["sodium bicarbonate=2e-3", "HCl = 0.001"]).unwrap(), "").unwrap();
        assert_eq!(d.iter().map(|x| x.substance.formula).collect::<Vec<_>>(), ["NaHCO3", "HCl"]);
        let s: HostSolution = solution(Conditions::new(None, None).unwrap(), &d, "influent").unwrap();
        assert!((s.total_of("carbonate") - 2e-3).abs() < 1e-18);
        assert!(resolve(vec![("HCl".into(), 1.0), ("hydrochloric acid".into(), 1.0)], "").is_err());
        assert!(parse_pairs(&["HCl"]).is_err());
        let neg = resolve(vec![("HCl".into(), -1.0)], "").unwrap();
        let e = solution::<2>(Conditions::new(None, None).unwrap(), &neg, "influent").unwrap_err();
        assert!(e.message().starts_with("influent: HCl: "), "{e}");
        assert_eq!(describe(&[]), "nothing (pure water)");
    }

    #[test]
    fn errors_name_the_part_and_missing_arguments() {
        let e = resolve(vec![("NaXYZ".into(), 1.0)], "sample").unwrap_err();
        assert!(e.message().starts_with("sample: 'NaXYZ': "), "{e}");
        let e = resolve(vec![("HCl".into(), 1.0), ("hydrochloric acid".into(), 1.0)], "influent").unwrap_err();
        assert!(e.message().starts_with("influent: HCl is given twice"), "{e}");
        assert!(resolve(vec![("NaXYZ".into(), 1.0)], "").unwrap_err().message().starts_with("'NaXYZ': "));
        let e = require(&[], "no sample", "NaOH=0.001").unwrap_err();
        assert_eq!(e.message(), "no sample: give SUBSTANCE=MOL_PER_L arguments (e.g. NaOH=0.001), or --example");
        assert_eq!(require(&[("HCl".to_owned(), 0.001)], "no sample", "").unwrap(), [("HCl".to_owned(), 0.001)]);
        let e =
            solution::<2>(Conditions::new(None, None).unwrap(), &resolve(vec![("HCl".into(), 1e300)], "").unwrap(), "")
                .unwrap_err();
        assert_eq!(e.message(), "HCl: total 1e300 mol/L exceeds the 20 mol/L limit");
    }
}
