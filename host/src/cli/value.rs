//! Values typed on the command line or in a CSV file: finite numbers and `SUBSTANCE=AMOUNT`
//! pairs, with the `clap` value parsers built on them.

use super::CliError;

fn finite(text: &str) -> Result<f64, &'static str> {
    let v: f64 = text.trim().parse().map_err(|_| "not a number")?;
    if v.is_finite() { Ok(v) } else { Err("not a finite number") }
}

/// Parses a finite number; `what` names it in the error.
pub fn number(what: &str, text: &str) -> Result<f64, CliError> {
    finite(text).map_err(|e| CliError::new(format!("{what}: '{text}' is {e}")))
}

/// `clap` value parser of a finite number (clap names the option in its error).
pub fn finite_number(text: &str) -> Result<f64, String> {
    finite(text).map_err(str::to_owned)
}

/// Parses `SUBSTANCE=AMOUNT` (the name trimmed, the amount a finite number).
pub fn pair(item: &str) -> Result<(String, f64), CliError> {
    let Some((name, amount)) = item.rsplit_once('=') else {
        return Err(CliError::new(format!("expected SUBSTANCE=MOL_PER_L, got '{item}'")));
    };
    let name = name.trim();
    Ok((name.to_owned(), number(&format!("amount of {name}"), amount)?))
}

/// `clap` value parser of a `SUBSTANCE=MOL_PER_L` argument.
pub fn substance_pair(item: &str) -> Result<(String, f64), String> {
    pair(item).map_err(|e| e.message().to_owned())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn numbers_must_be_finite() {
        assert_eq!(number("x", " 2e-3 ").unwrap(), 2e-3);
        assert_eq!(number("x", "NaN").unwrap_err().message(), "x: 'NaN' is not a finite number");
        assert!(number("x", "inf").is_err());
        assert_eq!(finite_number("two").unwrap_err(), "not a number");
    }

    #[test]
    fn pairs() {
        assert_eq!(pair("sodium bicarbonate = 2e-3").unwrap(), ("sodium bicarbonate".to_owned(), 2e-3));
        assert_eq!(substance_pair("HCl").unwrap_err(), "expected SUBSTANCE=MOL_PER_L, got 'HCl'");
        assert!(pair("HCl=abc").unwrap_err().message().contains("amount of HCl: 'abc' is not a number"));
    }
}
