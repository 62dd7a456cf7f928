//! Unit newtypes whose constructors check the range.
//!
//! A raw float elsewhere in the crate carries its unit in its name (`_mol_per_l`, `_l_per_h`).

use crate::real::Real;

/// Lowest temperature the chemistry accepts, °C (the Kw, density and permittivity
/// formulations used are fitted from 0 °C).
pub const MIN_CELSIUS: f64 = 0.0;
/// Highest temperature the chemistry accepts, °C.
pub const MAX_CELSIUS: f64 = 100.0;
/// 0 °C in kelvin.
pub const KELVIN_OFFSET: f64 = 273.15;

/// A water temperature in degrees Celsius, checked to lie in 0–100 °C.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Celsius<R: Real>(R);

/// The temperature was NaN, infinite or outside 0–100 °C.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TemperatureOutOfRange {
    /// The rejected value, °C (may be NaN).
    pub celsius: f64,
}

impl core::fmt::Display for TemperatureOutOfRange {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "temperature {} °C is outside the valid range {MIN_CELSIUS}–{MAX_CELSIUS} °C", self.celsius)
    }
}

impl core::error::Error for TemperatureOutOfRange {}

impl<R: Real> Celsius<R> {
    /// 25 °C, the reference temperature of the catalogue constants.
    pub fn standard() -> Self {
        Self(R::from_f64(25.0))
    }

    /// Checks that `celsius` is finite and within 0–100 °C.
    pub fn new(celsius: R) -> Result<Self, TemperatureOutOfRange> {
        let c = celsius.to_f64();
        if c.is_finite() && (MIN_CELSIUS..=MAX_CELSIUS).contains(&c) {
            Ok(Self(celsius))
        } else {
            Err(TemperatureOutOfRange { celsius: c })
        }
    }

    /// The value in °C.
    pub fn celsius(self) -> R {
        self.0
    }

    /// The value in kelvin (273.15–373.15 K).
    pub fn kelvin(self) -> R {
        self.0 + R::from_f64(KELVIN_OFFSET)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn range_is_checked() {
        assert!(Celsius::new(25.0_f64).is_ok());
        assert!(Celsius::new(0.0_f32).is_ok());
        assert!(Celsius::new(100.0_f64).is_ok());
        assert!(Celsius::new(-0.5_f64).is_err());
        assert!(Celsius::new(100.5_f64).is_err());
        assert!(Celsius::new(f64::NAN).is_err());
        assert!(Celsius::new(f32::INFINITY).is_err());
        assert!((Celsius::new(25.0_f64).unwrap().kelvin() - 298.15).abs() < 1e-12);
    }
}
