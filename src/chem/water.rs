//! Liquid water at 0.1 MPa: density, relative permittivity and the ion product Kw, 0–100 °C.

use crate::real::Real;
use crate::units::Celsius;

// Every function here runs when a temperature is set, never inside the solver's iterations,
// so it is evaluated in f64 with libm whatever `R` is: full accuracy for f32 builds too (and
// independent of `fast-math`), at the price of soft-float work on an FPU-less or f32-only MCU
// once per temperature change.

fn density_f64(t: f64) -> f64 {
    let num = 999.839_52
        + t * (16.945_176 + t * (-7.987_040_1e-3 + t * (-46.170_461e-6 + t * (105.563_02e-9 + t * -280.542_53e-12))));
    num / (1.0 + 16.879_850e-3 * t) / 1000.0
}

/// Density of air-free water at 0.1 MPa, kg/L, from Kell (1975), J. Chem. Eng. Data 20, 97,
/// Eq. 16 (coefficients checked in two independent code transcriptions; against the IAPWS-95
/// values 0.999 840 kg/L at 0 °C, 0.997 047 at 25 °C and 0.958 365 at 100 °C it agrees to 5e-6
/// in `tests` below). Valid 0–100 °C (the formulation is fitted to 150 °C).
pub fn density_kg_per_l<R: Real>(t: Celsius<R>) -> R {
    R::from_f64(density_f64(t.celsius().to_f64()))
}

fn permittivity_f64(t: f64) -> f64 {
    87.740 + t * (-0.400_08 + t * (9.398e-4 + t * -1.410e-6))
}

/// Relative permittivity of water at 0.1 MPa (dimensionless), Malmberg & Maryott (1956),
/// J. Res. NBS 56, 1: εr = 87.740 − 0.40008 t + 9.398e-4 t² − 1.410e-6 t³, valid 0–100 °C.
pub fn relative_permittivity<R: Real>(t: Celsius<R>) -> R {
    R::from_f64(permittivity_f64(t.celsius().to_f64()))
}

/// −log10 Kw (molal scale, I → 0) of liquid water at 0.1 MPa.
///
/// Formulation of Bandura & Lvov (2006), J. Phys. Chem. Ref. Data 35, 15, adopted by IAPWS
/// (2007), evaluated with the Kell density. Accuracy against the CRC table is ±0.002 over
/// 0–100 °C (see the tests). Valid 0–100 °C (the range [`Celsius`] admits).
pub fn pkw<R: Real>(t: Celsius<R>) -> R {
    let tc = t.celsius().to_f64();
    let tk = tc + crate::units::KELVIN_OFFSET;
    let rho = density_f64(tc); // kg/L = g/cm³
    let z = rho * libm::exp(-0.864_671 + 8659.19 / tk + -22_786.2 * libm::pow(rho, 2.0 / 3.0) / (tk * tk));
    let bracket = libm::log10(1.0 + z) - z / (z + 1.0) * rho * (0.642_044 + -56.8534 / tk + -0.375_754 * rho);
    let pkw_gas = 0.614_15 + 48_251.33 / tk + -67_707.93 / (tk * tk) + 10_102_100.0 / (tk * tk * tk);
    R::from_f64(-12.0 * bracket + pkw_gas + 2.0 * libm::log10(0.018_015_268))
}

/// Debye–Hückel A parameter (log10, molal) at `t`, kg^½·mol^−½: A = 1.82483e6·√ρ/(εr·T)^(3/2).
pub(crate) fn debye_huckel_a_f64(t: f64) -> f64 {
    let et = permittivity_f64(t) * (t + crate::units::KELVIN_OFFSET);
    1.824_83e6 * libm::sqrt(density_f64(t)) / (et * libm::sqrt(et))
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
            // Computed in f64 for both: only the final rounding to f32 differs.
            assert!((a - f64::from(b)).abs() < 2e-5, "{t}: {a} vs {b}");
        }
    }

    #[test]
    fn density_matches_iapws_values() {
        // IAPWS-95 at 0.1 MPa: 0.999 840, 0.997 047, 0.958 365 kg/L (from memory). Second source
        // for the 25 °C value: 997.0479 kg/m³ in a public code constants file (checked, via the
        // search tool; it names no primary source). The checked end-to-end reference for this
        // density is the pKw test against the CRC table above, which depends on it.
        for (t, expected) in [(0.0, 0.999_840), (25.0, 0.997_047), (100.0, 0.958_365)] {
            let got = density_kg_per_l(at(t));
            assert!((got - expected).abs() < 5e-6, "rho({t}) = {got}");
        }
    }

    #[test]
    fn permittivity_at_25c() {
        // 78.30 at 25 °C: calculated from the Malmberg & Maryott (1956) formula (checked) by hand,
        // 87.740 − 10.002 + 0.587 − 0.022; this guards the coefficients' transcription.
        assert!((relative_permittivity(at(25.0)) - 78.30).abs() < 0.01);
    }
}
