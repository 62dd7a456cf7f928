//! The real-number abstraction: the chemistry runs in `f32` (MCU with a single-precision
//! FPU) and `f64` (host) from the same code.
//!
//! Only what the solver needs is here. `f64` uses `libm` (on every target, host included);
//! `f32` uses `libm` by default and `micromath` with the `fast-math` feature. The pH error of
//! each choice against `f64` is measured by `tests/precision.rs` and stated in the README.

use core::fmt::{Debug, Display};
use core::ops::{Add, AddAssign, Div, Mul, MulAssign, Neg, Sub, SubAssign};

/// A floating-point type the chemistry can run in. Implemented for `f32` and `f64`.
pub trait Real:
    Copy
    + Debug
    + Display
    + PartialOrd
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + AddAssign
    + SubAssign
    + MulAssign
    + Default
{
    /// 0.
    const ZERO: Self;
    /// 1.
    const ONE: Self;
    /// ln 10.
    const LN_10: Self;
    /// Convergence tolerance of the pH solver in pH units (1e-10 for `f64`; 1e-5 for `f32`,
    /// 1e-4 with `fast-math`).
    const PH_TOLERANCE: Self;
    /// Relative convergence tolerance of the ionic-strength fixed point.
    const IONIC_STRENGTH_TOLERANCE: Self;
    /// Short name of the type, for reports ("f32" / "f64").
    const NAME: &'static str;
    /// Relative rounding of one term of the charge balance, as `f64`: the machine epsilon
    /// (2.2e-16 for `f64`, 1.2e-7 for `f32`, with or without `fast-math`: micromath's
    /// exponential is off by up to 2.4e-3, but smoothly, so it shifts the root by a bounded
    /// amount — the `fast-math` precision bound — instead of adding noise to it). The solver's
    /// resolution estimate ([`crate::chem::Equilibrium::resolution_ph`]) uses it.
    const RELATIVE_PRECISION: f64;

    /// Converts from `f64` (rounding for `f32`).
    fn from_f64(v: f64) -> Self;
    /// Converts to `f64` (exact).
    fn to_f64(self) -> f64;
    /// 10^self.
    fn exp10(self) -> Self;
    /// 10^self for the quick solver's hot path, as 2^(self·log2 10): for `f64` about twice as
    /// fast as libm's `exp10` and within 1e-14 relative of it for |self| ≤ 20 (measured 7.2e-15:
    /// the rounding of the product; a pH error below 5e-15, far under the solver's tolerance);
    /// for `f32` within 4e-6 relative of the exact value over the same range (the product's
    /// rounding: a pH error below 2e-6, a fifth of f32's pH tolerance), and with `fast-math`
    /// micromath's exponential as `exp10`. A unit test checks both over −20…20.
    #[inline]
    fn exp10_quick(self) -> Self {
        self.exp10()
    }
    /// log10(self); NaN for negative input.
    fn log10(self) -> Self;
    /// Natural logarithm; NaN for negative input.
    fn ln(self) -> Self;
    /// e^self.
    fn exp(self) -> Self;
    /// Square root; NaN for negative input.
    fn sqrt(self) -> Self;
    /// Absolute value.
    fn abs(self) -> Self;
    /// `true` unless NaN or infinite.
    fn is_finite(self) -> bool;

    /// The larger of two values (NaN-ignoring like `f64::max`).
    #[inline]
    fn max(self, other: Self) -> Self {
        if self >= other || other.is_nan_like() { self } else { other }
    }
    /// The smaller of two values (NaN-ignoring like `f64::min`).
    #[inline]
    fn min(self, other: Self) -> Self {
        if self <= other || other.is_nan_like() { self } else { other }
    }
    /// `true` for NaN.
    #[inline]
    #[allow(clippy::eq_op, reason = "NaN is the only value unequal to itself")]
    fn is_nan_like(self) -> bool {
        self != self
    }
    /// Converts a small integer.
    #[inline]
    fn from_i32(v: i32) -> Self {
        Self::from_f64(f64::from(v))
    }
}

impl Real for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const LN_10: Self = core::f64::consts::LN_10;
    const PH_TOLERANCE: Self = 1e-10;
    const IONIC_STRENGTH_TOLERANCE: Self = 1e-8;
    const NAME: &'static str = "f64";
    const RELATIVE_PRECISION: f64 = f64::EPSILON;

    #[inline]
    fn from_f64(v: f64) -> Self {
        v
    }
    #[inline]
    fn to_f64(self) -> f64 {
        self
    }
    #[inline]
    fn exp10(self) -> Self {
        f64_math::exp10(self)
    }
    #[inline]
    fn exp10_quick(self) -> Self {
        libm::exp2(self * core::f64::consts::LOG2_10)
    }
    #[inline]
    fn log10(self) -> Self {
        f64_math::log10(self)
    }
    #[inline]
    fn ln(self) -> Self {
        f64_math::ln(self)
    }
    #[inline]
    fn exp(self) -> Self {
        f64_math::exp(self)
    }
    #[inline]
    fn sqrt(self) -> Self {
        f64_math::sqrt(self)
    }
    #[inline]
    fn abs(self) -> Self {
        libm::fabs(self)
    }
    #[inline]
    fn is_finite(self) -> bool {
        f64::is_finite(self)
    }
}

impl Real for f32 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const LN_10: Self = core::f32::consts::LN_10;
    // With `fast-math` the exponential itself is only good to ~2.4e-3 (relative), about 1e-3 in
    // pH, so a 1e-5 tolerance would sit below the noise and only cost bisection steps.
    #[cfg(not(feature = "fast-math"))]
    const PH_TOLERANCE: Self = 1e-5;
    #[cfg(feature = "fast-math")]
    const PH_TOLERANCE: Self = 1e-4;
    #[cfg(not(feature = "fast-math"))]
    const IONIC_STRENGTH_TOLERANCE: Self = 1e-5;
    #[cfg(feature = "fast-math")]
    const IONIC_STRENGTH_TOLERANCE: Self = 1e-4;
    const NAME: &'static str = "f32";
    const RELATIVE_PRECISION: f64 = f32::EPSILON as f64;

    #[inline]
    #[allow(clippy::cast_possible_truncation, reason = "f32 is the requested precision")]
    fn from_f64(v: f64) -> Self {
        v as f32
    }
    #[inline]
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
    #[inline]
    fn exp10(self) -> Self {
        f32_math::exp10(self)
    }
    #[inline]
    fn exp10_quick(self) -> Self {
        f32_math::exp10_quick(self)
    }
    #[inline]
    fn log10(self) -> Self {
        f32_math::log10(self)
    }
    #[inline]
    fn ln(self) -> Self {
        f32_math::ln(self)
    }
    #[inline]
    fn exp(self) -> Self {
        f32_math::exp(self)
    }
    #[inline]
    fn sqrt(self) -> Self {
        f32_math::sqrt(self)
    }
    #[inline]
    fn abs(self) -> Self {
        libm::fabsf(self)
    }
    #[inline]
    fn is_finite(self) -> bool {
        f32::is_finite(self)
    }
}

/// `f64` functions: always `libm`, on the host as on a board, so the host runs the same maths
/// as the firmware (there is no `std` feature that swaps them).
mod f64_math {
    pub use libm::{exp, exp10, log as ln, log10, sqrt};
}

#[cfg(not(feature = "fast-math"))]
mod f32_math {
    #[inline]
    pub fn exp10(x: f32) -> f32 {
        libm::exp10f(x)
    }
    #[inline]
    pub fn exp10_quick(x: f32) -> f32 {
        libm::exp2f(x * core::f32::consts::LOG2_10)
    }
    #[inline]
    pub fn log10(x: f32) -> f32 {
        libm::log10f(x)
    }
    #[inline]
    pub fn ln(x: f32) -> f32 {
        libm::logf(x)
    }
    #[inline]
    pub fn exp(x: f32) -> f32 {
        libm::expf(x)
    }
    #[inline]
    pub fn sqrt(x: f32) -> f32 {
        libm::sqrtf(x)
    }
}

/// `fast-math`: only the exponential (the solver's hot path) comes from micromath — measured
/// max relative error 2.4e-3 over [−40, 40]. Its `ln`, `log10` (absolute errors up to 0.12 and
/// 0.05) and `sqrt` (6 %) are too coarse for chemistry, so those stay on libm; they run only
/// when a temperature or an ionic strength changes, not per iteration.
#[cfg(feature = "fast-math")]
mod f32_math {
    use micromath::F32Ext;
    #[inline]
    pub fn exp10(x: f32) -> f32 {
        F32Ext::exp(x * core::f32::consts::LN_10)
    }
    #[inline]
    pub fn exp10_quick(x: f32) -> f32 {
        exp10(x)
    }
    #[inline]
    pub fn log10(x: f32) -> f32 {
        libm::log10f(x)
    }
    #[inline]
    pub fn ln(x: f32) -> f32 {
        libm::logf(x)
    }
    #[inline]
    pub fn exp(x: f32) -> f32 {
        F32Ext::exp(x)
    }
    #[inline]
    pub fn sqrt(x: f32) -> f32 {
        libm::sqrtf(x)
    }
}

#[cfg(test)]
mod tests {
    use super::Real;

    fn roundtrip<R: Real>(tol: f64) {
        let x = R::from_f64(2.5);
        let y = x.exp10().log10();
        assert!((y - x).abs().to_f64() < tol, "{} exp10/log10 roundtrip {y}", R::NAME);
        assert!((R::from_f64(4.0).sqrt() - R::from_f64(2.0)).abs().to_f64() < 1e-6);
        assert!((R::ONE.exp().ln() - R::ONE).abs().to_f64() < tol);
        assert!(!R::from_f64(f64::NAN).is_finite());
        assert_eq!(R::from_f64(1.0).max(R::from_f64(2.0)).to_f64(), 2.0);
        assert_eq!(R::from_f64(1.0).min(R::from_f64(2.0)).to_f64(), 1.0);
    }

    #[test]
    fn quick_exponential_agrees_with_exp10() {
        // f64: 2^(x·log2 10) against libm's exp10 over −20…20 in steps of 0.001.
        let mut worst = 0.0_f64;
        for k in -20_000..=20_000 {
            let x = f64::from(k) * 1e-3;
            let (quick, exact) = (x.exp10_quick(), x.exp10());
            worst = worst.max(((quick - exact) / exact).abs());
        }
        assert!(worst <= 1e-14, "worst relative difference {worst:e}");
        // f32 (libm): 2^(x·log2 10) in f32; the product's rounding grows with |x| (half an ulp of
        // 66 is 3.8e-6, 2.6e-6 relative in the result), against f64's exp10 over the same range.
        // With `fast-math` it is micromath's exponential, as exp10 (2.4e-3).
        let bound = if cfg!(feature = "fast-math") { 2.5e-3 } else { 4e-6 };
        let mut worst = 0.0_f64;
        for k in -20_000..=20_000_i32 {
            #[allow(clippy::cast_precision_loss, reason = "|k| ≤ 20000 is exact in f32")]
            let x = k as f32 * 1e-3;
            let exact = f64::from(x).exp10();
            worst = worst.max(((f64::from(x.exp10_quick()) - exact) / exact).abs());
        }
        std::println!("f32 exp10_quick: worst relative error {worst:e}");
        assert!(worst <= bound, "f32 worst relative error {worst:e}");
    }

    #[test]
    fn f32_and_f64_basic_functions() {
        // f32 exp with `fast-math` (micromath): 2.4e-3 relative, i.e. ~1.1e-3 in log10.
        roundtrip::<f32>(if cfg!(feature = "fast-math") { 2e-3 } else { 1e-5 });
        roundtrip::<f64>(1e-12);
    }
}
