//! Number formatting for the readable tables and for every message that echoes a number.

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

/// A number echoed in a message: as Rust writes it (the shortest form that reads back the
/// same, so a value the user typed comes back as typed) for 1e-4 ≤ |v| < 1e6 and zero, in
/// scientific notation outside ("1e300", not 301 digits; "2.5e-7", not "0.00000025").
pub fn num(v: f64) -> String {
    if v == 0.0 || !v.is_finite() || (1e-4..1e6).contains(&v.abs()) { format!("{v}") } else { format!("{v:e}") }
}

/// A pH-like quantity with `decimals` decimals, "n/a" when not finite.
pub fn fixed(v: f64, decimals: usize) -> String {
    if v.is_finite() { format!("{v:.decimals$}") } else { "n/a".to_owned() }
}

/// A signed change with `decimals` decimals ("+0.031", "-1.250"); a non-zero value that would
/// round to zero there keeps two significant digits in scientific notation ("+2.1e-9"), and zero
/// (either sign) is "0": never "-0.000". "n/a" when not finite.
pub fn signed(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return "n/a".to_owned();
    }
    if v == 0.0 {
        return "0".to_owned();
    }
    let rounds_to_zero = format!("{:.decimals$}", v.abs()).trim_matches(|c| c == '0' || c == '.').is_empty();
    if rounds_to_zero {
        let s = format!("{v:.1e}");
        return if v > 0.0 { format!("+{s}") } else { s };
    }
    format!("{v:+.decimals$}")
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

/// `digits` significant digits (at least 1) without trailing zeros: "0.543", "10", "1.27e-5";
/// plain notation for 1e-3 ≤ |v| < 1e6, scientific outside; "n/a" when not finite.
pub fn sig(v: f64, digits: usize) -> String {
    let digits = digits.max(1);
    if !v.is_finite() {
        return "n/a".to_owned();
    }
    if v == 0.0 {
        return "0".to_owned();
    }
    let a = v.abs();
    if !(1e-3..1e6).contains(&a) {
        let s = format!("{v:.p$e}", p = digits - 1);
        return match s.split_once('e') {
            Some((m, e)) => format!("{}e{e}", trim_zeros(m)),
            None => s,
        };
    }
    // Decimals so that `digits` significant digits show; the magnitude is bounded here.
    let magnitude = a.log10().floor() as i64;
    let digits_i = i64::try_from(digits).unwrap_or(1);
    if magnitude >= digits_i {
        // More integer digits than significant ones: round them away (3888 → "3900").
        let unit = 10f64.powi(i32::try_from(magnitude - digits_i + 1).unwrap_or(0));
        return format!("{:.0}", (v / unit).round() * unit);
    }
    let decimals = usize::try_from((digits_i - 1 - magnitude).max(0)).unwrap_or(0);
    trim_zeros(&format!("{v:.decimals$}")).to_owned()
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.') } else { s }
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
        assert_eq!(sig(0.54321, 3), "0.543");
        assert_eq!(sig(10.0, 3), "10");
        assert_eq!(sig(1.27e-5, 3), "1.27e-5");
        assert_eq!(sig(-2.5, 2), "-2.5");
        assert_eq!(sig(7.963, 4), "7.963");
        assert_eq!(sig(123456.0, 3), "123000");
        assert_eq!(sig(3888.0, 2), "3900");
        assert_eq!(sig(1200.0, 6), "1200");
        assert_eq!(sig(f64::NAN, 3), "n/a");
        assert_eq!(num(1e300), "1e300");
        assert_eq!(num(-1e-300), "-1e-300");
        assert_eq!(num(2.5e-7), "2.5e-7");
        assert_eq!(num(0.05), "0.05");
        assert_eq!(num(1200.0), "1200");
        assert_eq!(num(1e7), "1e7");
        assert_eq!(num(0.0), "0");
        assert_eq!(num(f64::NAN), "NaN");
        // Never a negative zero; tiny changes keep their size and sign.
        assert_eq!(signed(0.031, 3), "+0.031");
        assert_eq!(signed(-1.25, 3), "-1.250");
        assert_eq!(signed(2.1e-9, 3), "+2.1e-9");
        assert_eq!(signed(-3.4e-13, 3), "-3.4e-13");
        assert_eq!(signed(-0.0, 3), "0");
        assert_eq!(signed(0.0004, 3), "+4.0e-4");
        assert_eq!(signed(0.0005, 3), "+0.001");
    }
}
