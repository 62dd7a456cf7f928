//! Activity coefficients: ideal (γ = 1) or Davies (1962).
//!
//! log10 γ(z) = −A·z²·(√I/(1+√I) − 0.3·I), with A(T) from the Debye–Hückel limiting law,
//! A = 1.82483e6·√ρ/(εr·T)^(3/2) (molal scale, log10), ρ from [`water::density_kg_per_l`] and
//! εr from [`water::relative_permittivity`]. Davies is good to I ≈ 0.1 mol/L and usable, with
//! growing error, to [`DAVIES_MAX_IONIC_STRENGTH`]; the solver refuses higher ionic strengths
//! in Davies mode rather than return a number it cannot stand behind.

use crate::chem::water;
use crate::real::Real;
use crate::units::Celsius;

/// Highest ionic strength (mol/L) at which Davies activities are used. Above it the solver
/// returns [`crate::chem::SolveError::IonicStrengthTooHigh`]; use [`Activity::Ideal`] instead.
pub const DAVIES_MAX_IONIC_STRENGTH: f64 = 0.5;

/// How activities are treated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Activity {
    /// γ = 1 for every species: pH = −log10 [H+].
    Ideal,
    /// Davies activity coefficients with the ionic strength computed from the composition
    /// (bounded fixed point, see [`crate::chem::MAX_ACTIVITY_ITERATIONS`]).
    Davies,
}

/// Debye–Hückel A parameter (log10, molal), kg^½·mol^−½, at temperature `t`.
/// 0.5108 at 25 °C; 0.4918 at 0 °C; 0.5959 at 100 °C.
/// Evaluated in f64 whatever `R` is (it runs only when the temperature changes).
pub fn debye_huckel_a<R: Real>(t: Celsius<R>) -> R {
    R::from_f64(water::debye_huckel_a_f64(t.celsius().to_f64()))
}

/// The Davies factor A·(√I/(1+√I) − 0.3·I) such that log10 γ(z) = −factor·z².
/// `ionic_strength_mol_per_l` must be ≥ 0 (negative input is treated as 0).
pub fn davies_factor<R: Real>(a: R, ionic_strength_mol_per_l: R) -> R {
    let i = ionic_strength_mol_per_l.max(R::ZERO);
    factor_from_root(a, i.sqrt(), i)
}

/// d(Davies factor)/dI at `ionic_strength_mol_per_l`, L/mol: A·(1/(2·√I·(1+√I)²) − 0.3).
/// The ionic strength is taken as at least 1e-12 mol/L (the slope is unbounded at 0).
pub fn davies_factor_slope<R: Real>(a: R, ionic_strength_mol_per_l: R) -> R {
    slope_from_root(a, ionic_strength_mol_per_l.max(R::from_f64(SLOPE_FLOOR_MOL_PER_L)).sqrt())
}

/// [`davies_factor`] and [`davies_factor_slope`] together at `ionic_strength_mol_per_l`
/// (mol/L): one square root instead of two, the same values.
pub fn davies_factor_and_slope<R: Real>(a: R, ionic_strength_mol_per_l: R) -> (R, R) {
    let floor = R::from_f64(SLOPE_FLOOR_MOL_PER_L);
    let i = ionic_strength_mol_per_l.max(R::ZERO);
    let s = i.sqrt();
    // The slope's floor, as in `davies_factor_slope` (a second root only below it).
    let s_slope = if i >= floor { s } else { floor.sqrt() };
    (factor_from_root(a, s, i), slope_from_root(a, s_slope))
}

/// Smallest ionic strength the Davies slope is taken at, mol/L.
const SLOPE_FLOOR_MOL_PER_L: f64 = 1e-12;

/// The Davies factor from √I (`s`) and I (`i`, ≥ 0).
fn factor_from_root<R: Real>(a: R, s: R, i: R) -> R {
    a * (s / (R::ONE + s) - R::from_f64(0.3) * i)
}

/// The Davies factor's slope from √I (`s` > 0).
fn slope_from_root<R: Real>(a: R, s: R) -> R {
    let d = R::ONE + s;
    a * (R::ONE / (R::from_f64(2.0) * s * d * d) - R::from_f64(0.3))
}

/// Activity coefficient γ of an ion of charge `z` given the Davies factor.
pub fn gamma<R: Real>(factor: R, z: i32) -> R {
    (-factor * R::from_i32(z * z)).exp10()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn debye_huckel_a_values() {
        // A = 0.5085 at 25 °C is the value widely used in speciation codes (no primary source
        // found for it): our formulation must agree within ±0.003.
        let a25 = debye_huckel_a(Celsius::new(25.0_f64).unwrap());
        assert!((a25 - 0.5085).abs() < 0.003, "A(25) = {a25}");
        // Temperature trend from the same formulation: A rises with T (0.4918 → 0.5959, calc).
        let a0 = debye_huckel_a(Celsius::new(0.0_f64).unwrap());
        let a100 = debye_huckel_a(Celsius::new(100.0_f64).unwrap());
        assert!((a0 - 0.4918).abs() < 0.001 && (a100 - 0.5959).abs() < 0.001, "{a0} {a100}");
    }

    #[test]
    fn factor_and_slope_together_are_the_two_functions() {
        for i in [0.0, 1e-14, 1e-12, 3e-9, 1e-4, 0.01, 0.1, 0.5, -1.0] {
            let a = 0.51_f64;
            assert_eq!(davies_factor_and_slope(a, i), (davies_factor(a, i), davies_factor_slope(a, i)), "{i}");
            let a = 0.51_f32;
            let i = i as f32;
            assert_eq!(davies_factor_and_slope(a, i), (davies_factor(a, i), davies_factor_slope(a, i)), "{i}");
        }
    }

    #[test]
    fn davies_gamma_values() {
        // Davies (1962) with A = 0.5108 (Davies 1962, Ion Association, Butterworths; values calculated
        // from the formula):
        // γ(z=1) = 0.902 at I = 0.01, 0.781 at I = 0.1; γ(z=2) = 0.372 at I = 0.1.
        let a = 0.5108_f64;
        assert!((gamma(davies_factor(a, 0.01), 1) - 0.902).abs() < 0.001);
        assert!((gamma(davies_factor(a, 0.1), 1) - 0.781).abs() < 0.001);
        assert!((gamma(davies_factor(a, 0.1), 2) - 0.372).abs() < 0.001);
        assert_eq!(gamma(davies_factor(a, 0.0), 3), 1.0);
    }
}
