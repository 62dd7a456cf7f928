//! Standard pH buffers and their pH(S) from 0 to 50 °C, built into the crate as data.
//!
//! Source of [`TABLE`]: R. P. Buck et al., "Measurement of pH. Definition, standards, and
//! procedures (IUPAC Recommendations 2002)", Pure Appl. Chem. 74 (2002) 2169–2200, the table of
//! primary (and, for tetroxalate, standard) reference values: the NIST values adopted by IUPAC,
//! transcribed. Between rows the pH is interpolated linearly; outside 0–50 °C it is refused.

use crate::invariant;
use crate::real::Real;
use crate::units::{Celsius, Compact};

/// A standard buffer of the table. Molalities are of the solution as prepared.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Buffer {
    /// Potassium tetroxalate, 0.05 mol/kg (pH ≈ 1.68).
    Tetroxalate,
    /// Potassium hydrogen phthalate, 0.05 mol/kg (pH ≈ 4.00).
    Phthalate,
    /// KH2PO4 0.025 mol/kg + Na2HPO4 0.025 mol/kg (pH ≈ 6.87).
    Phosphate,
    /// Na2B4O7 (borax), 0.01 mol/kg (pH ≈ 9.18).
    Borax,
    /// NaHCO3 0.025 mol/kg + Na2CO3 0.025 mol/kg (pH ≈ 10.01).
    Carbonate,
}

/// Every buffer of the table, in column order.
pub const ALL: [Buffer; 5] =
    [Buffer::Tetroxalate, Buffer::Phthalate, Buffer::Phosphate, Buffer::Borax, Buffer::Carbonate];

/// Temperature of the table's first row, °C.
pub const TABLE_MIN_CELSIUS: f64 = 0.0;
/// Temperature of the table's last row, °C.
pub const TABLE_MAX_CELSIUS: f64 = 50.0;
/// Step between rows, °C.
pub const TABLE_STEP_CELSIUS: f64 = 5.0;

/// pH(S) of the standard buffers, one row per 5 °C from 0 to 50 °C, columns in [`ALL`] order
/// (tetroxalate, KH phthalate, phosphate, borax, carbonate). Buck et al. 2002, Pure Appl. Chem.
/// 74, 2169 (IUPAC Recommendations 2002; NIST values; transcribed).
pub const TABLE: [[f64; 5]; 11] = [
    [1.666, 4.000, 6.984, 9.464, 10.317], // 0 °C
    [1.668, 3.998, 6.951, 9.395, 10.245], // 5 °C
    [1.670, 3.997, 6.923, 9.332, 10.179], // 10 °C
    [1.672, 3.998, 6.900, 9.276, 10.118], // 15 °C
    [1.675, 4.001, 6.881, 9.225, 10.062], // 20 °C
    [1.679, 4.005, 6.865, 9.180, 10.012], // 25 °C
    [1.683, 4.011, 6.853, 9.139, 9.966],  // 30 °C
    [1.688, 4.018, 6.844, 9.102, 9.925],  // 35 °C
    [1.694, 4.027, 6.838, 9.068, 9.889],  // 40 °C
    [1.700, 4.038, 6.834, 9.038, 9.857],  // 45 °C
    [1.707, 4.050, 6.833, 9.010, 9.828],  // 50 °C
];

/// The buffer table does not cover the temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OutsideTable {
    /// The buffer asked for.
    pub buffer: Buffer,
    /// The temperature, °C (outside 0–50 °C).
    pub celsius: f64,
}

impl core::fmt::Display for OutsideTable {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(
            f,
            "{} buffer: {} °C is outside the table's {TABLE_MIN_CELSIUS}–{TABLE_MAX_CELSIUS} °C",
            self.buffer.name(),
            Compact(self.celsius)
        )
    }
}

impl core::error::Error for OutsideTable {}

impl Buffer {
    /// A short name for messages ("phosphate 0.025/0.025 mol/kg" …).
    pub const fn name(self) -> &'static str {
        match self {
            Self::Tetroxalate => "tetroxalate 0.05 mol/kg",
            Self::Phthalate => "KH phthalate 0.05 mol/kg",
            Self::Phosphate => "phosphate 0.025/0.025 mol/kg",
            Self::Borax => "borax 0.01 mol/kg",
            Self::Carbonate => "carbonate 0.025/0.025 mol/kg",
        }
    }

    /// The buffer's column in [`TABLE`] (0–4).
    pub const fn column(self) -> usize {
        match self {
            Self::Tetroxalate => 0,
            Self::Phthalate => 1,
            Self::Phosphate => 2,
            Self::Borax => 3,
            Self::Carbonate => 4,
        }
    }

    /// pH(S) at `temperature` (0–50 °C), linear between the table's 5 °C rows; pH 1.6–10.4.
    /// Computed in `f64`; constant time.
    pub fn ph<R: Real>(self, temperature: Celsius<R>) -> Result<R, OutsideTable> {
        self.ph_f64(temperature.celsius().to_f64()).map(R::from_f64)
    }

    pub(crate) fn ph_f64(self, celsius: f64) -> Result<f64, OutsideTable> {
        if !(TABLE_MIN_CELSIUS..=TABLE_MAX_CELSIUS).contains(&celsius) {
            return Err(OutsideTable { buffer: self, celsius });
        }
        let last = TABLE.len() - 1;
        // `as` truncates towards zero (= floor here, celsius ≥ 0) and saturates: no panic.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss, reason = "0 ≤ celsius/5 ≤ 10")]
        let row = ((celsius / TABLE_STEP_CELSIUS) as usize).min(last - 1);
        let fraction = (celsius - TABLE_STEP_CELSIUS * row as f64) / TABLE_STEP_CELSIUS;
        let lo = invariant::at2(&TABLE, row, self.column());
        let hi = invariant::at2(&TABLE, row + 1, self.column());
        Ok(lo + fraction * (hi - lo))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ph<R: Real>(b: Buffer, celsius: f64) -> f64 {
        b.ph(Celsius::new(R::from_f64(celsius)).unwrap()).unwrap().to_f64()
    }

    #[test]
    fn rows_are_returned_exactly_and_midpoints_are_averages() {
        for b in ALL {
            for (i, row) in TABLE.iter().enumerate() {
                let t = 5.0 * i as f64;
                assert_eq!(ph::<f64>(b, t), row[b.column()], "{b:?} at {t} °C");
                assert!((ph::<f32>(b, t) - row[b.column()]).abs() < 1e-6);
            }
            for i in 0..10 {
                let t = 5.0 * i as f64 + 2.5;
                let mean = (TABLE[i][b.column()] + TABLE[i + 1][b.column()]) / 2.0;
                assert!((ph::<f64>(b, t) - mean).abs() < 1e-12, "{b:?} at {t} °C");
            }
        }
    }

    #[test]
    fn outside_0_to_50_c_is_refused_with_the_numbers() {
        let t = Celsius::new(50.5_f64).unwrap();
        assert_eq!(Buffer::Borax.ph(t), Err(OutsideTable { buffer: Buffer::Borax, celsius: 50.5 }));
        let m = std::format!("{}", Buffer::Borax.ph(t).unwrap_err());
        assert_eq!(m, "borax 0.01 mol/kg buffer: 50.5 °C is outside the table's 0–50 °C");
        assert!(Buffer::Phosphate.ph_f64(-0.1).is_err() && Buffer::Phosphate.ph_f64(f64::NAN).is_err());
    }

    #[test]
    fn columns_match_all_and_names_are_unique() {
        for (i, b) in ALL.iter().enumerate() {
            assert_eq!(b.column(), i);
            assert!(ALL.iter().filter(|c| c.name() == b.name()).count() == 1);
        }
    }
}
