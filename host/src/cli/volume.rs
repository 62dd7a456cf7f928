//! The range every volume in a request must fall in (sample, titrant).

use super::CliError;

/// Largest volume accepted, L.
pub const MAX_L: f64 = 1000.0;

/// Checks a volume in L: a number above 0 and at most [`MAX_L`]; `what` ("sample volume")
/// names it in the error.
pub fn check_l(what: &str, v: f64) -> Result<(), CliError> {
    if v.is_finite() && v > 0.0 && v <= MAX_L {
        Ok(())
    } else {
        Err(CliError::new(format!("{what} {} L must be above 0 and at most {MAX_L} L", super::format::num(v))))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn range() {
        assert!(check_l("sample volume", 0.1).is_ok());
        assert!(check_l("sample volume", 1000.0).is_ok());
        let e = check_l("sample volume", 0.0).unwrap_err();
        assert_eq!(e.message(), "sample volume 0 L must be above 0 and at most 1000 L");
        for bad in [-1.0, 1000.5, f64::NAN, f64::INFINITY] {
            assert!(check_l("max titrant volume", bad).is_err(), "{bad}");
        }
    }
}
