//! Liquid water at 0.1 MPa: density, relative permittivity and the ion product Kw, 0–100 °C.

use crate::real::Real;
use crate::units::Celsius;

/// Density of air-free water at 0.1 MPa, kg/L, from Kell (1975), J. Chem. Eng. Data 20, 97
/// (coefficients from memory; checked against the IAPWS-95 values 0.999 840 kg/L at 0 °C,
/// 0.997 047 at 25 °C and 0.958 365 at 100 °C to 5e-6 in `tests` below). Valid 0–100 °C
/// (the formulation is fitted to 150 °C).
pub fn density_kg_per_l<R: Real>(t: Celsius<R>) -> R {
    let t = t.celsius();
    let c = |v: f64| R::from_f64(v);
    let num = c(999.839_52)
        + t * (c(16.945_176)
            + t * (c(-7.987_040_1e-3) + t * (c(-46.170_461e-6) + t * (c(105.563_02e-9) + t * c(-280.542_53e-12)))));
    num / (c(1.0) + c(16.879_850e-3) * t) / c(1000.0)
}

/// Relative permittivity of water at 0.1 MPa (dimensionless), Malmberg & Maryott (1956),
/// J. Res. NBS 56, 1: εr = 87.740 − 0.40008 t + 9.398e-4 t² − 1.410e-6 t³, valid 0–100 °C.
pub fn relative_permittivity<R: Real>(t: Celsius<R>) -> R {
    let t = t.celsius();
    let c = |v: f64| R::from_f64(v);
    c(87.740) + t * (c(-0.400_08) + t * (c(9.398e-4) + t * c(-1.410e-6)))
}

/// −log10 Kw (molal scale, I → 0) of liquid water at 0.1 MPa.
///
/// Formulation of Bandura & Lvov (2006), J. Phys. Chem. Ref. Data 35, 15, adopted by IAPWS
/// (2007), evaluated with the Kell density. Accuracy against the CRC table is ±0.002 over
/// 0–100 °C (see the tests). Valid 0–100 °C (the range [`Celsius`] admits).
pub fn pkw<R: Real>(t: Celsius<R>) -> R {
    let c = |v: f64| R::from_f64(v);
    let tk = t.kelvin();
    let rho = density_kg_per_l(t); // kg/L = g/cm³
    // ρ^(2/3) as the square of a Newton cube root started at 1 (ρ is 0.958–1.000 here, so four
    // steps reach f64 rounding). Arithmetic only: exp(⅔·ln ρ) with `fast-math` (micromath ln is
    // ~3e-3 off near 1) put ρ^(2/3) 1.7 % out at 80 °C and pKw 0.014 out.
    let mut cbrt = R::ONE;
    for _ in 0..4 {
        cbrt -= (cbrt * cbrt * cbrt - rho) / (c(3.0) * cbrt * cbrt);
    }
    let rho_23 = cbrt * cbrt;
    let z = rho * (c(-0.864_671) + c(8659.19) / tk + c(-22_786.2) * rho_23 / (tk * tk)).exp();
    let one = R::ONE;
    let bracket = (one + z).log10() - z / (z + one) * rho * (c(0.642_044) + c(-56.8534) / tk + c(-0.375_754) * rho);
    let pkw_gas = c(0.614_15) + c(48_251.33) / tk + c(-67_707.93) / (tk * tk) + c(10_102_100.0) / (tk * tk * tk);
    // 2·log10(Mw / (kg/mol)) is a constant: evaluated in f64 with libm, not with `R`'s log10,
    // which under `fast-math` (micromath) is 0.027 off at 0.018 and moved pKw by 0.055.
    c(-12.0) * bracket + pkw_gas + c(2.0 * libm::log10(0.018_015_268))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(t: f64) -> Celsius<f64> {
        Celsius::new(t).unwrap()
    }

    #[test]
    fn pkw_matches_crc_table() {
        // CRC Handbook of Chemistry and Physics, "Ion product of water substance" table
        // (values at 0.1 MPa, derived from Bandura & Lvov 2006): 0, 25, 50, 100 °C.
        for (t, expected) in [(0.0, 14.946), (25.0, 13.995), (50.0, 13.264), (100.0, 12.252)] {
            let got = pkw(at(t));
            assert!((got - expected).abs() < 0.002, "pKw({t} °C) = {got}, CRC {expected}");
        }
    }

    #[test]
    fn pkw_f32_agrees_with_f64() {
        for t in [0.0_f64, 10.0, 37.0, 60.0, 99.0] {
            let a = pkw(at(t));
            let b = pkw(Celsius::new(t as f32).unwrap());
            assert!((a - f64::from(b)).abs() < 2e-4, "{t}: {a} vs {b}");
        }
    }

    #[test]
    fn density_matches_iapws_values() {
        // IAPWS-95 at 0.1 MPa (from memory): 0.999 840, 0.997 047, 0.958 365 kg/L.
        for (t, expected) in [(0.0, 0.999_840), (25.0, 0.997_047), (100.0, 0.958_365)] {
            let got = density_kg_per_l(at(t));
            assert!((got - expected).abs() < 5e-6, "rho({t}) = {got}");
        }
    }

    #[test]
    fn permittivity_at_25c() {
        // Malmberg & Maryott (1956): 78.30 at 25 °C.
        assert!((relative_permittivity(at(25.0)) - 78.30).abs() < 0.01);
    }
}
