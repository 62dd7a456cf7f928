//! Number formatting for the readable tables.

/// A concentration or other small quantity: "2.000e-3", "0" for zero, "n/a" when not finite.
pub fn sci(v: f64) -> String {
    if !v.is_finite() {
        "n/a".to_owned()
    } else if v == 0.0 {
        "0".to_owned()
    } else {
        format!("{v:.3e}")
    }
}

/// A pH-like quantity with `decimals` decimals, "n/a" when not finite.
pub fn fixed(v: f64, decimals: usize) -> String {
    if v.is_finite() { format!("{v:.decimals$}") } else { "n/a".to_owned() }
}

/// A fraction 0–1 as a percentage: "43.1 %", "<0.1 %" for a tiny non-zero share.
pub fn percent(fraction: f64) -> String {
    if !fraction.is_finite() {
        "n/a".to_owned()
    } else if fraction > 0.0 && fraction < 0.0005 {
        "<0.1 %".to_owned()
    } else {
        format!("{:.1} %", fraction * 100.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        assert_eq!(sci(0.002), "2.000e-3");
        assert_eq!(sci(0.0), "0");
        assert_eq!(sci(f64::NAN), "n/a");
        assert_eq!(fixed(6.53421, 2), "6.53");
        assert_eq!(percent(0.4312), "43.1 %");
        assert_eq!(percent(1e-6), "<0.1 %");
        assert_eq!(percent(0.0), "0.0 %");
    }
}
