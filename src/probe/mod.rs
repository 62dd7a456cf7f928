//! The pH probe: from an electrode's millivolts to a trusted pH, above [`crate::units`] and
//! [`crate::chem`], below nothing (it imports neither `titration` nor `control`).
//!
//! - [`nernst`]: the Nernst slope k(T) = ln10·R·T/F from the SI 2019 defining constants.
//! - [`buffers`]: the IUPAC 2002 standard buffer table (0–50 °C), built in as data.
//! - [`calibration`]: the electrode line (slope, offset at pH 7) with temperature compensation,
//!   one-, two- and three-point calibration against the buffers, and acceptance limits.
//! - [`monitor`]: per-probe signal validation (range, rate, noise, frozen), a small state
//!   machine ticked with the elapsed seconds and the raw millivolts.
//! - [`vote`]: two or three probes: middle-value selection and a disagreement alarm.
//!
//! Pure logic: no I/O, no clock (time comes in as seconds), fixed memory, no panics, generic
//! over [`Real`] (`f32` on a board, `f64` on the host).
//!
//! ```
//! use phdose::probe::buffers::Buffer;
//! use phdose::probe::calibration::{Acceptance, CalibrationPoint, calibrate};
//! use phdose::probe::monitor::MonitorSettings;
//! use phdose::probe::vote::{VoteSettings, vote};
//! use phdose::probe::Probe;
//! use phdose::units::Celsius;
//!
//! // Two-point calibration at 22 °C in phosphate and borax buffers (mV read from the meter).
//! let t = Celsius::new(22.0_f32).unwrap();
//! let points = [
//!     CalibrationPoint { buffer: Buffer::Phosphate, temperature: t, mv: 9.1 },
//!     CalibrationPoint { buffer: Buffer::Borax, temperature: t, mv: -128.4 },
//! ];
//! let cal = calibrate(&points).unwrap();
//! assert!(Acceptance::default().judge(&cal).accepted);
//!
//! // Every tick: validate the signal, convert, vote.
//! let mut probe = Probe::new(cal, MonitorSettings::default());
//! let reading = probe.tick(1.0, -20.0, Celsius::new(18.0).unwrap());
//! let v = vote(&[reading], &VoteSettings::default()).unwrap();
//! assert!(v.ph.is_some());
//! ```

pub mod buffers;
pub mod calibration;
pub mod monitor;
pub mod nernst;
pub mod vote;

use crate::real::Real;
use crate::units::{Celsius, Compact};

use calibration::Calibration;
use monitor::{Monitor, MonitorSettings, Reading};

/// A setting outside its documented range: which one, and the rejected value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InvalidSetting {
    /// The setting's name (the field name).
    pub name: &'static str,
    /// The rejected value, in the setting's unit (may be NaN or infinite).
    pub value: f64,
}

impl core::fmt::Display for InvalidSetting {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "probe setting {} = {} is outside its range", self.name, Compact(self.value))
    }
}

impl core::error::Error for InvalidSetting {}

/// `Ok(())` when `value` is finite and within `lo..=hi`; else the [`InvalidSetting`].
pub(crate) fn check<R: Real>(name: &'static str, value: R, lo: f64, hi: f64) -> Result<(), InvalidSetting> {
    let v = value.to_f64();
    if v.is_finite() && v >= lo && v <= hi { Ok(()) } else { Err(InvalidSetting { name, value: v }) }
}

/// One probe: its calibration and its signal monitor. Fixed size, `Copy`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Probe<R: Real> {
    /// The electrode line in use.
    pub calibration: Calibration<R>,
    monitor: Monitor<R>,
}

impl<R: Real> Probe<R> {
    /// A probe with a calibration and validated monitor settings; the monitor starts empty.
    pub fn new(calibration: Calibration<R>, settings: MonitorSettings<R>) -> Self {
        Self { calibration, monitor: Monitor::new(settings) }
    }

    /// One tick: `dt_s` seconds since the last tick (0 < dt ≤ [`monitor::MAX_TICK_S`]), the raw
    /// electrode voltage `mv` (mV) and the temperature of the measured water. Returns the pH
    /// (temperature compensated, see [`Calibration::ph`]) and the fault, if any. Constant
    /// time: see [`Monitor::tick`] (one more division for the conversion).
    pub fn tick(&mut self, dt_s: R, mv: R, temperature: Celsius<R>) -> Reading<R> {
        let slope = self.calibration.slope_at(temperature);
        let fault = self.monitor.tick(dt_s, mv, slope);
        Reading { mv, ph: self.calibration.ph(mv, temperature), fault }
    }

    /// The monitor's state (read only).
    pub fn monitor(&self) -> &Monitor<R> {
        &self.monitor
    }

    /// Replaces the calibration (after a new one was accepted); the monitor keeps its history.
    pub fn recalibrate(&mut self, calibration: Calibration<R>) {
        self.calibration = calibration;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tick<R: Real>() {
        let t = Celsius::new(R::from_f64(30.0)).unwrap();
        let cal = Calibration::new(R::from_f64(58.0), R::from_f64(-6.0), Celsius::standard()).unwrap();
        let mut probe = Probe::new(cal, MonitorSettings::default());
        let r = probe.tick(R::ONE, R::from_f64(-100.0), t);
        assert_eq!((r.mv, r.ph, r.fault), (R::from_f64(-100.0), cal.ph(R::from_f64(-100.0), t), None));
        // The rate check uses the slope at 30 °C: 12 mV in 1 s is 12/(58·303.15/298.15) pH/s.
        let f = probe.tick(R::ONE, R::from_f64(-112.0), t).fault.unwrap();
        let expected = 12.0 / (58.0 * 303.15 / 298.15);
        match f {
            monitor::SensorFault::RateOfChange { rate_ph_per_s, .. } => {
                assert!((rate_ph_per_s.to_f64() - expected).abs() < 1e-5, "{f:?}")
            }
            _ => panic!("{f:?}"),
        }
        probe.recalibrate(Calibration::ideal());
        assert_eq!(probe.calibration, Calibration::ideal());
        assert!(probe.monitor().noise_mv().to_f64() == 0.0);
    }

    #[test]
    fn a_probe_tick_converts_and_validates() {
        tick::<f64>();
        tick::<f32>();
    }

    #[test]
    fn setting_messages_carry_the_name_and_value() {
        let m = std::format!("{}", InvalidSetting { name: "max_spread_ph", value: 1e300 });
        assert_eq!(m, "probe setting max_spread_ph = 1e300 is outside its range");
    }
}
