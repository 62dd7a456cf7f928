//! The Nernst slope of a pH electrode: k(T) = ln10·R·T/F, in mV per pH.
//!
//! R and F follow from the SI 2019 defining constants, which are exact: R = N_A·k_B and
//! F = N_A·e, so R/F = k_B/e. Computed in `f64` whatever the real type (a temperature change is
//! rare; the per-tick conversion only scales the slope).

use crate::real::Real;
use crate::units::{Celsius, KELVIN_OFFSET};

/// Avogadro constant N_A, mol⁻¹ (exact; SI Brochure, 9th edition (2019), table 1; CODATA 2018).
pub const AVOGADRO_PER_MOL: f64 = 6.022_140_76e23;
/// Boltzmann constant k_B, J/K (exact; SI Brochure, 9th edition (2019), table 1; CODATA 2018).
pub const BOLTZMANN_J_PER_K: f64 = 1.380_649e-23;
/// Elementary charge e, C (exact; SI Brochure, 9th edition (2019), table 1; CODATA 2018).
pub const ELEMENTARY_CHARGE_C: f64 = 1.602_176_634e-19;
/// Molar gas constant R = N_A·k_B = 8.314 462 618… J/(mol·K) (calc, exact by definition).
pub const GAS_CONSTANT_J_PER_MOL_K: f64 = AVOGADRO_PER_MOL * BOLTZMANN_J_PER_K;
/// Faraday constant F = N_A·e = 96 485.332 12… C/mol (calc, exact by definition).
pub const FARADAY_C_PER_MOL: f64 = AVOGADRO_PER_MOL * ELEMENTARY_CHARGE_C;

/// k(T)/T = 1000·ln10·R/F, mV per pH per kelvin (calc: 0.198 416 mV/(pH·K)).
const SLOPE_PER_KELVIN_MV: f64 = 1000.0 * core::f64::consts::LN_10 * GAS_CONSTANT_J_PER_MOL_K / FARADAY_C_PER_MOL;

/// The Nernst slope at `temperature`, mV per pH (positive; 54.2 mV/pH at 0 °C, 59.16 at 25 °C,
/// 74.0 at 100 °C). An ideal glass electrode's potential falls by this much per pH unit.
pub fn slope_mv_per_ph<R: Real>(temperature: Celsius<R>) -> R {
    R::from_f64(slope_mv_per_ph_f64(temperature.celsius().to_f64()))
}

/// [`slope_mv_per_ph`] in `f64` for a temperature in °C (no range check: the caller's
/// [`Celsius`] already holds 0–100 °C).
pub(crate) fn slope_mv_per_ph_f64(celsius: f64) -> f64 {
    SLOPE_PER_KELVIN_MV * (celsius + KELVIN_OFFSET)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn independent(celsius: f64) -> f64 {
        // The formula written out again: k = ln(10)·(N_A·k_B)·T/(N_A·e), in mV. Constants typed
        // in afresh from the SI Brochure, 9th edition (2019), table 1 (exact values).
        let (n_a, k_b, e) = (6.022_140_76e23_f64, 1.380_649e-23_f64, 1.602_176_634e-19_f64);
        10.0_f64.ln() * (n_a * k_b) * (celsius + 273.15) / (n_a * e) * 1000.0
    }

    fn at<R: Real>(celsius: f64) -> f64 {
        slope_mv_per_ph(Celsius::new(R::from_f64(celsius)).unwrap()).to_f64()
    }

    #[test]
    fn slope_at_0_25_50_c_matches_the_formula() {
        // Check values (calc, from the formula above, rounded to 0.001 mV/pH).
        for (t, check) in [(0.0, 54.199), (25.0, 59.159), (50.0, 64.120)] {
            let formula = independent(t);
            assert!((formula - check).abs() < 5e-4, "{t} °C: formula {formula} vs check {check}");
            let got64 = at::<f64>(t);
            let got32 = at::<f32>(t);
            assert!((got64 - formula).abs() < 1e-12, "f64 {t} °C: {got64} vs {formula}");
            assert!((got32 - formula).abs() < 1e-5, "f32 {t} °C: {got32} vs {formula}");
        }
        assert!((GAS_CONSTANT_J_PER_MOL_K - 8.314_462_618).abs() < 1e-9);
        assert!((FARADAY_C_PER_MOL - 96_485.332_12).abs() < 1e-5);
    }

    #[test]
    fn slope_is_proportional_to_kelvin() {
        let ratio = at::<f64>(100.0) / at::<f64>(0.0);
        assert!((ratio - 373.15 / 273.15).abs() < 1e-14, "{ratio}");
    }
}
