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

/// A number as the crate's messages print it: plainly between 1e-4 and 1e6 (and 0, NaN, ±inf),
/// in scientific notation otherwise, so that 1e300 is not echoed as 301 digits. A value that is
/// exactly an `f32` (a setting widened from `f32`) prints as that `f32`: 0.3, not
/// 0.30000001192092896.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Compact(pub f64);

impl core::fmt::Display for Compact {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let v = self.0;
        #[allow(clippy::cast_possible_truncation, reason = "only used when the value is exactly an f32")]
        let narrow = v as f32;
        let plain = v == 0.0 || !v.is_finite() || (1e-4..1e6).contains(&v.abs());
        match (f64::from(narrow) == v, plain) {
            (true, true) => write!(f, "{narrow}"),
            (true, false) => write!(f, "{narrow:e}"),
            (false, true) => write!(f, "{v}"),
            (false, false) => write!(f, "{v:e}"),
        }
    }
}

impl core::fmt::Display for TemperatureOutOfRange {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "temperature {} °C is outside the valid range {MIN_CELSIUS}–{MAX_CELSIUS} °C", Compact(self.celsius))
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

/// Highest flow accepted anywhere, L/h (a sanity bound: 10⁷ L/h = 10 000 m³/h).
pub const MAX_FLOW_L_PER_H: f64 = 1e7;
/// Lowest influent flow a plan accepts, L/h: 1 mL/h. A sanity bound
/// (common practice, no source): below it a "stream" is drops, and the closed form's gain
/// (inversely proportional to the flow) runs to absurd values (1e303 pH per L/h at 1e-300 L/h).
pub const MIN_PLANNED_FLOW_L_PER_H: f64 = 1e-3;
/// Smallest tank liquid volume accepted, L (the skid file's range for `control.tank_volume_l`).
pub const MIN_TANK_VOLUME_L: f64 = 1.0;
/// Largest tank liquid volume accepted, L (1000 m³; the skid file's range).
pub const MAX_TANK_VOLUME_L: f64 = 1e6;
/// Lowest and highest pH a setpoint or a pH input may have.
pub const PH_SCALE: (f64, f64) = (0.0, 14.0);

/// Which checked input was out of range (with [`InvalidInput`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Quantity {
    /// A pH (setpoint or measurement): 0–14.
    Ph,
    /// A flow, L/h: 0–[`MAX_FLOW_L_PER_H`].
    Flow,
    /// An influent flow to plan for, L/h: [`MIN_PLANNED_FLOW_L_PER_H`]–[`MAX_FLOW_L_PER_H`].
    InfluentFlow,
    /// A pump's maximum flow, L/h: above 0, up to [`MAX_FLOW_L_PER_H`].
    PumpMax,
    /// A pump's step (resolution), L/h: above 0, up to the pump's maximum.
    PumpStep,
    /// A pump's lowest steady flow, L/h: 0 up to the pump's maximum.
    PumpMin,
    /// A width on the pH scale (a control band), pH: above 0, up to 14.
    PhWidth,
    /// A tank's liquid volume, L: [`MIN_TANK_VOLUME_L`]–[`MAX_TANK_VOLUME_L`].
    TankVolume,
}

impl Quantity {
    /// What it is, the valid range and the unit, for messages.
    pub const fn describe(self) -> (&'static str, &'static str) {
        match self {
            Self::Ph => ("pH", "0-14"),
            Self::Flow => ("flow", "0-1e7 L/h"),
            Self::InfluentFlow => ("influent flow", "1e-3 to 1e7 L/h"),
            Self::PumpMax => ("pump maximum", "above 0, up to 1e7 L/h"),
            Self::PumpStep => ("pump step", "above 0, up to the pump maximum"),
            Self::PumpMin => ("pump minimum", "0 up to the pump maximum"),
            Self::PhWidth => ("pH band", "above 0, up to 14 pH"),
            Self::TankVolume => ("tank volume", "1-1e6 L"),
        }
    }
}

/// A checked input was NaN, infinite or out of its range; carries the rejected value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InvalidInput {
    /// What was checked.
    pub quantity: Quantity,
    /// The rejected value, in the quantity's unit (may be NaN or infinite).
    pub value: f64,
}

impl core::fmt::Display for InvalidInput {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let (name, range) = self.quantity.describe();
        write!(f, "{name} {} is outside the valid range {range}", Compact(self.value))
    }
}

impl core::error::Error for InvalidInput {}

fn within<R: Real>(quantity: Quantity, value: R, lo: f64, hi: f64, lo_open: bool) -> Result<R, InvalidInput> {
    let v = value.to_f64();
    let above_lo = if lo_open { v > lo } else { v >= lo };
    if v.is_finite() && above_lo && v <= hi { Ok(value) } else { Err(InvalidInput { quantity, value: v }) }
}

/// A pH on the 0–14 scale (setpoint, limit or measurement), checked at construction.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Ph<R: Real>(R);

impl<R: Real> Ph<R> {
    /// Checks that `ph` is finite and within 0–14.
    pub fn new(ph: R) -> Result<Self, InvalidInput> {
        within(Quantity::Ph, ph, PH_SCALE.0, PH_SCALE.1, false).map(Self)
    }

    /// The value, pH.
    pub fn ph(self) -> R {
        self.0
    }
}

/// A width on the pH scale (a control band's full width), checked: above 0, up to 14 pH.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhWidth<R: Real>(R);

impl<R: Real> PhWidth<R> {
    /// Checks that `width_ph` is finite, above 0 and at most 14.
    pub fn new(width_ph: R) -> Result<Self, InvalidInput> {
        within(Quantity::PhWidth, width_ph, 0.0, PH_SCALE.1, true).map(Self)
    }

    /// The value, pH.
    pub fn ph(self) -> R {
        self.0
    }
}

/// A flow in litres per hour, checked: finite, 0–[`MAX_FLOW_L_PER_H`].
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LitresPerHour<R: Real>(R);

impl<R: Real> LitresPerHour<R> {
    /// Checks that `l_per_h` is finite and within 0–[`MAX_FLOW_L_PER_H`].
    pub fn new(l_per_h: R) -> Result<Self, InvalidInput> {
        within(Quantity::Flow, l_per_h, 0.0, MAX_FLOW_L_PER_H, false).map(Self)
    }

    /// The value, L/h.
    pub fn l_per_h(self) -> R {
        self.0
    }

    /// `Ok` when the flow is above zero; else the error for `quantity` with this value.
    pub fn positive(self, quantity: Quantity) -> Result<Self, InvalidInput> {
        within(quantity, self.0, 0.0, MAX_FLOW_L_PER_H, true).map(Self)
    }

    /// `Ok` when the flow is at least [`MIN_PLANNED_FLOW_L_PER_H`] (an influent flow to plan
    /// for); else the error for `quantity` with this value.
    pub fn plannable(self, quantity: Quantity) -> Result<Self, InvalidInput> {
        within(quantity, self.0, MIN_PLANNED_FLOW_L_PER_H, MAX_FLOW_L_PER_H, false).map(Self)
    }
}

/// A tank's liquid volume in litres, checked: finite, [`MIN_TANK_VOLUME_L`]–[`MAX_TANK_VOLUME_L`].
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TankVolume<R: Real>(R);

impl<R: Real> TankVolume<R> {
    /// Checks that `litres` is finite and within [`MIN_TANK_VOLUME_L`]–[`MAX_TANK_VOLUME_L`].
    pub fn new(litres: R) -> Result<Self, InvalidInput> {
        within(Quantity::TankVolume, litres, MIN_TANK_VOLUME_L, MAX_TANK_VOLUME_L, false).map(Self)
    }

    /// The value, L (1–10⁶).
    pub fn litres(self) -> R {
        self.0
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

    #[test]
    fn checked_inputs_carry_the_rejected_value() {
        assert_eq!(Ph::new(7.0_f64).unwrap().ph(), 7.0);
        assert!(Ph::new(0.0_f32).is_ok() && Ph::new(14.0_f32).is_ok());
        assert_eq!(Ph::new(14.5_f64), Err(InvalidInput { quantity: Quantity::Ph, value: 14.5 }));
        assert!(Ph::new(f64::NAN).unwrap_err().value.is_nan());
        assert_eq!(PhWidth::new(0.0_f64), Err(InvalidInput { quantity: Quantity::PhWidth, value: 0.0 }));
        assert!(PhWidth::new(14.0_f64).is_ok() && PhWidth::new(14.01_f64).is_err());
        assert!(LitresPerHour::new(0.0_f64).is_ok());
        assert_eq!(LitresPerHour::new(-1.0_f64), Err(InvalidInput { quantity: Quantity::Flow, value: -1.0 }));
        assert!(LitresPerHour::new(1e7_f64).is_ok() && LitresPerHour::new(1.1e7_f64).is_err());
        // Finding: 1e-300 L/h passed as a flow to plan with; now refused with its value.
        let tiny = LitresPerHour::new(1e-300_f64).unwrap();
        assert_eq!(
            tiny.plannable(Quantity::InfluentFlow),
            Err(InvalidInput { quantity: Quantity::InfluentFlow, value: 1e-300 })
        );
        assert!(LitresPerHour::new(MIN_PLANNED_FLOW_L_PER_H).unwrap().plannable(Quantity::InfluentFlow).is_ok());
        assert_eq!(TankVolume::new(250.0_f32).unwrap().litres(), 250.0);
        assert!(TankVolume::new(1.0_f64).is_ok() && TankVolume::new(1e6_f64).is_ok());
        assert_eq!(TankVolume::new(0.5_f64), Err(InvalidInput { quantity: Quantity::TankVolume, value: 0.5 }));
        assert!(TankVolume::new(f64::INFINITY).is_err() && TankVolume::new(1.1e6_f64).is_err());
        let zero = LitresPerHour::new(0.0_f64).unwrap();
        assert_eq!(
            zero.positive(Quantity::InfluentFlow),
            Err(InvalidInput { quantity: Quantity::InfluentFlow, value: 0.0 })
        );
    }

    #[test]
    fn messages_use_scientific_notation_for_extreme_values() {
        assert_eq!(std::format!("{}", Compact(1e300)), "1e300");
        assert_eq!(std::format!("{}", Compact(-1e-300)), "-1e-300");
        assert_eq!(std::format!("{}", Compact(0.001)), "0.001");
        assert_eq!(std::format!("{}", Compact(0.0)), "0");
        assert_eq!(std::format!("{}", Compact(f64::from(0.3_f32))), "0.3");
        assert_eq!(std::format!("{}", Compact(0.1 + 0.2)), "0.30000000000000004");
        let t = std::format!("{}", TemperatureOutOfRange { celsius: -1e-300 });
        assert!(t.starts_with("temperature -1e-300 °C"), "{t}");
        let huge = std::format!("{}", InvalidInput { quantity: Quantity::Flow, value: 1e300 });
        assert_eq!(huge, "flow 1e300 is outside the valid range 0-1e7 L/h");
        let ph = std::format!("{}", InvalidInput { quantity: Quantity::Ph, value: 15.5 });
        assert_eq!(ph, "pH 15.5 is outside the valid range 0-14");
    }
}
