//! Signal validation for one probe: a small state machine ticked with the elapsed seconds and
//! the raw millivolts.
//!
//! Checks, in the order a fault is reported when several stand at once:
//! 1. [`SensorFault::InvalidTick`]: `dt_s` NaN, not above 0 or above [`MAX_TICK_S`]; the tick is
//!    ignored (no state changes).
//! 2. [`SensorFault::OutOfRange`]: |mV| beyond the limit, or NaN (a broken lead, a shorted or
//!    saturated input). The history restarts, so the next good sample is not compared with a
//!    sample from before the gap.
//! 3. [`SensorFault::RateOfChange`]: |ΔmV|/dt between two ticks, turned into pH/s with the
//!    slope at the current temperature, beyond what the tank can do.
//! 4. [`SensorFault::Noise`]: a running RMS of the tick-to-tick second difference
//!    `mVₖ − 2·mVₖ₋₁ + mVₖ₋₂` (a steady ramp contributes nothing), an exponentially weighted mean
//!    of its square with weight `min(dt/noise_time_s, 1)`; white noise of standard deviation σ
//!    gives a mean square of 6σ², so the estimate reported is `√(mean/6)`, an RMS in mV.
//! 5. [`SensorFault::Frozen`]: the signal stayed within ±`frozen_band_mv` of an anchor for
//!    `frozen_window_s` seconds (the anchor moves to the sample whenever it leaves the band).
//!
//! A fault is reported while its condition stands; latching and reset belong to the
//! supervisor. The state is five numbers; **worst-case cost per tick**: 2 divisions, 1 square
//! root, about 20 additions, multiplications and comparisons, no loop.

use super::{InvalidSetting, check};
use crate::real::Real;
use crate::units::Compact;

/// Longest tick accepted, s (an hour: anything longer is a stalled caller).
pub const MAX_TICK_S: f64 = 3600.0;

/// The monitor's limits.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MonitorSettings<R: Real> {
    max_abs_mv: R,
    max_rate_ph_per_s: R,
    max_noise_mv: R,
    noise_time_s: R,
    frozen_band_mv: R,
    frozen_window_s: R,
}

impl<R: Real> Default for MonitorSettings<R> {
    /// ±600 mV; 0.2 pH/s; 5 mV RMS noise over 60 s; frozen within ±0.2 mV for 900 s. All
    /// common practice, no source: set the rate from the tank (its volume against the largest
    /// dose) and the noise and frozen band from the installed electrode and input.
    fn default() -> Self {
        Self {
            max_abs_mv: R::from_f64(600.0),
            max_rate_ph_per_s: R::from_f64(0.2),
            max_noise_mv: R::from_f64(5.0),
            noise_time_s: R::from_f64(60.0),
            frozen_band_mv: R::from_f64(0.2),
            frozen_window_s: R::from_f64(900.0),
        }
    }
}

impl<R: Real> MonitorSettings<R> {
    /// Checked settings: `max_abs_mv` 50–2000 mV; `max_rate_ph_per_s` 0.001–14 pH/s;
    /// `max_noise_mv` 0.01–100 mV RMS; `noise_time_s` 1–100 000 s; `frozen_band_mv` 0–50 mV;
    /// `frozen_window_s` 1–1 000 000 s.
    pub fn new(
        max_abs_mv: R,
        max_rate_ph_per_s: R,
        max_noise_mv: R,
        noise_time_s: R,
        frozen_band_mv: R,
        frozen_window_s: R,
    ) -> Result<Self, InvalidSetting> {
        check("max_abs_mv", max_abs_mv, 50.0, 2000.0)?;
        check("max_rate_ph_per_s", max_rate_ph_per_s, 0.001, 14.0)?;
        check("max_noise_mv", max_noise_mv, 0.01, 100.0)?;
        check("noise_time_s", noise_time_s, 1.0, 1e5)?;
        check("frozen_band_mv", frozen_band_mv, 0.0, 50.0)?;
        check("frozen_window_s", frozen_window_s, 1.0, 1e6)?;
        Ok(Self { max_abs_mv, max_rate_ph_per_s, max_noise_mv, noise_time_s, frozen_band_mv, frozen_window_s })
    }

    /// Largest |mV| accepted.
    pub fn max_abs_mv(&self) -> R {
        self.max_abs_mv
    }
    /// Largest rate of change accepted, pH/s.
    pub fn max_rate_ph_per_s(&self) -> R {
        self.max_rate_ph_per_s
    }
    /// Largest noise estimate accepted, mV RMS.
    pub fn max_noise_mv(&self) -> R {
        self.max_noise_mv
    }
    /// Time constant of the noise estimate, s.
    pub fn noise_time_s(&self) -> R {
        self.noise_time_s
    }
    /// Half-width of the band a frozen signal stays in, mV.
    pub fn frozen_band_mv(&self) -> R {
        self.frozen_band_mv
    }
    /// How long the signal must stay in the band to count as frozen, s.
    pub fn frozen_window_s(&self) -> R {
        self.frozen_window_s
    }
}

/// A probe signal fault, with its numbers. The codes ([`Self::code`]) are stable.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SensorFault<R: Real> {
    /// Code 1: |mV| beyond the limit, or NaN/infinite.
    OutOfRange {
        /// The sample, mV (may be NaN).
        mv: R,
        /// The limit, mV.
        limit_mv: R,
    },
    /// Code 2: the signal moved faster than the tank can.
    RateOfChange {
        /// |ΔpH|/dt between the last two ticks, pH/s.
        rate_ph_per_s: R,
        /// The limit, pH/s.
        limit_ph_per_s: R,
    },
    /// Code 3: the signal is noisier than the limit.
    Noise {
        /// The running noise estimate, mV RMS.
        noise_mv: R,
        /// The limit, mV RMS.
        limit_mv: R,
    },
    /// Code 4: the signal has not moved beyond the band for the window.
    Frozen {
        /// How long the signal has stayed in the band, s.
        still_s: R,
        /// The band's half-width, mV.
        band_mv: R,
    },
    /// Code 5: the tick's elapsed time was NaN, not above 0 or above [`MAX_TICK_S`]; the
    /// tick was ignored.
    InvalidTick {
        /// The rejected elapsed time, s.
        dt_s: R,
    },
}

impl<R: Real> SensorFault<R> {
    /// The stable numeric code (1–5).
    pub const fn code(&self) -> u8 {
        match self {
            Self::OutOfRange { .. } => 1,
            Self::RateOfChange { .. } => 2,
            Self::Noise { .. } => 3,
            Self::Frozen { .. } => 4,
            Self::InvalidTick { .. } => 5,
        }
    }
}

impl<R: Real> core::fmt::Display for SensorFault<R> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let c = |x: R| Compact(x.to_f64());
        match *self {
            Self::OutOfRange { mv, limit_mv } => write!(f, "probe signal {} mV is beyond ±{} mV", c(mv), c(limit_mv)),
            Self::RateOfChange { rate_ph_per_s, limit_ph_per_s } => {
                write!(f, "probe signal moves {} pH/s, faster than {} pH/s", c(rate_ph_per_s), c(limit_ph_per_s))
            }
            Self::Noise { noise_mv, limit_mv } => {
                write!(f, "probe noise {} mV RMS is above {} mV", c(noise_mv), c(limit_mv))
            }
            Self::Frozen { still_s, band_mv } => {
                write!(f, "probe signal frozen: within ±{} mV for {} s", c(band_mv), c(still_s))
            }
            Self::InvalidTick { dt_s } => write!(f, "tick of {} s is outside (0, {MAX_TICK_S}] s", c(dt_s)),
        }
    }
}

impl<R: Real> core::error::Error for SensorFault<R> {}

/// One probe's reading after validation.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reading<R: Real> {
    /// The raw voltage, mV.
    pub mv: R,
    /// The pH from the calibration (meaningless when `fault` is set).
    pub ph: R,
    /// The fault standing this tick, highest priority first (see the module docs).
    pub fault: Option<SensorFault<R>>,
}

/// The monitor's state: the settings and five numbers.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Monitor<R: Real> {
    settings: MonitorSettings<R>,
    /// Last good sample, mV.
    last_mv: Option<R>,
    /// Last first difference, mV.
    last_step_mv: Option<R>,
    /// Running mean of the squared second difference, mV².
    mean_square_mv2: R,
    /// The frozen check's anchor, mV.
    anchor_mv: Option<R>,
    /// Time within the band around the anchor, s.
    still_s: R,
}

impl<R: Real> Monitor<R> {
    /// An empty monitor (no history: the rate needs one tick, the noise two).
    pub fn new(settings: MonitorSettings<R>) -> Self {
        Self {
            settings,
            last_mv: None,
            last_step_mv: None,
            mean_square_mv2: R::ZERO,
            anchor_mv: None,
            still_s: R::ZERO,
        }
    }

    /// The settings.
    pub fn settings(&self) -> &MonitorSettings<R> {
        &self.settings
    }

    /// The running noise estimate, mV RMS.
    pub fn noise_mv(&self) -> R {
        (self.mean_square_mv2 / R::from_f64(6.0)).sqrt()
    }

    /// How long the signal has stayed within the frozen band, s.
    pub fn still_s(&self) -> R {
        self.still_s
    }

    /// One tick: `dt_s` seconds since the last one, the raw sample `mv` and the electrode slope
    /// at the current temperature (mV/pH, from the calibration) for the rate check. Returns the
    /// fault standing, if any (see the module docs for the checks, their order and the cost).
    pub fn tick(&mut self, dt_s: R, mv: R, slope_mv_per_ph: R) -> Option<SensorFault<R>> {
        let s = self.settings;
        if !(dt_s > R::ZERO && dt_s <= R::from_f64(MAX_TICK_S)) {
            return Some(SensorFault::InvalidTick { dt_s });
        }
        if !(mv.is_finite() && mv.abs() <= s.max_abs_mv) {
            self.last_mv = None;
            self.last_step_mv = None;
            self.anchor_mv = None;
            self.still_s = R::ZERO;
            return Some(SensorFault::OutOfRange { mv, limit_mv: s.max_abs_mv });
        }
        let step = self.last_mv.map(|last| mv - last);
        if let (Some(step), Some(last_step)) = (step, self.last_step_mv) {
            let d2 = step - last_step;
            let weight = (dt_s / s.noise_time_s).min(R::ONE);
            self.mean_square_mv2 += weight * (d2 * d2 - self.mean_square_mv2);
        }
        match self.anchor_mv {
            Some(anchor) if (mv - anchor).abs() <= s.frozen_band_mv => self.still_s += dt_s,
            _ => {
                self.anchor_mv = Some(mv);
                self.still_s = R::ZERO;
            }
        }
        self.last_mv = Some(mv);
        self.last_step_mv = step;
        let rate_ph_per_s = step.map(|d| d.abs() / (dt_s * slope_mv_per_ph)).unwrap_or(R::ZERO);
        let noise_mv = self.noise_mv();
        if !rate_ph_per_s.is_finite() || rate_ph_per_s > s.max_rate_ph_per_s {
            Some(SensorFault::RateOfChange { rate_ph_per_s, limit_ph_per_s: s.max_rate_ph_per_s })
        } else if noise_mv > s.max_noise_mv {
            Some(SensorFault::Noise { noise_mv, limit_mv: s.max_noise_mv })
        } else if self.still_s >= s.frozen_window_s {
            Some(SensorFault::Frozen { still_s: self.still_s, band_mv: s.frozen_band_mv })
        } else {
            None
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `#[test] fn $name` running `$check` in `f64` and in `f32`.
    macro_rules! both {
        ($name:ident, $check:ident) => {
            #[test]
            fn $name() {
                $check::<f64>();
                $check::<f32>();
            }
        };
    }

    /// The Nernst slope at 25 °C, mV/pH (calc, k_B/e·ln10·298.15 K).
    const SLOPE: f64 = 59.159;

    fn monitor<R: Real>() -> Monitor<R> {
        Monitor::new(MonitorSettings::default())
    }

    fn tick<R: Real>(m: &mut Monitor<R>, dt: f64, mv: f64) -> Option<SensorFault<R>> {
        m.tick(R::from_f64(dt), R::from_f64(mv), R::from_f64(SLOPE))
    }

    fn out_of_range<R: Real>() {
        let mut m = monitor::<R>();
        assert_eq!(tick(&mut m, 1.0, 100.0), None);
        let f = tick(&mut m, 1.0, 650.0).unwrap();
        assert_eq!(f, SensorFault::OutOfRange { mv: R::from_f64(650.0), limit_mv: R::from_f64(600.0) });
        assert_eq!(f.code(), 1);
        assert!(matches!(tick(&mut m, 1.0, -601.0), Some(SensorFault::OutOfRange { .. })));
        assert!(matches!(tick(&mut m, 1.0, f64::NAN), Some(SensorFault::OutOfRange { mv, .. }) if !mv.is_finite()));
        // The history restarted: coming back at −100 mV is not a 200 mV jump from +100.
        assert_eq!(tick(&mut m, 1.0, -100.0), None);
        assert_eq!(tick(&mut m, 1.0, 600.0).map(|f| f.code()), Some(2), "600 mV itself is in range");
    }

    both!(out_of_range_and_nan_samples_are_faults, out_of_range);

    fn rate<R: Real>() {
        let mut m = monitor::<R>();
        assert_eq!(tick(&mut m, 2.0, 0.0), None);
        // 30 mV in 2 s at 59.159 mV/pH: 0.2535 pH/s, limit 0.2.
        let f = tick(&mut m, 2.0, -30.0).unwrap();
        let SensorFault::RateOfChange { rate_ph_per_s, limit_ph_per_s } = f else { panic!("{f:?}") };
        assert!((rate_ph_per_s.to_f64() - 30.0 / 2.0 / SLOPE).abs() < 1e-6, "{f:?}");
        assert_eq!(limit_ph_per_s, R::from_f64(0.2));
        assert_eq!(f.code(), 2);
        // 20 mV in 2 s is 0.169 pH/s: fine.
        assert_eq!(tick(&mut m, 2.0, -50.0), None);
    }

    both!(rate_beyond_the_tank_is_a_fault, rate);

    fn noise<R: Real>() {
        // A signal alternating ±5 mV around 20 mV every second: second differences of ±20 mV,
        // mean square 400, RMS estimate √(400/6) = 8.16 mV once the 60 s mean has settled.
        let mut m = monitor::<R>();
        let mut last = None;
        for k in 0..600 {
            let mv = if k % 2 == 0 { 25.0 } else { 15.0 };
            last = tick(&mut m, 1.0, mv);
        }
        let f = last.unwrap();
        let SensorFault::Noise { noise_mv, limit_mv } = f else { panic!("{f:?}") };
        let expected = (400.0_f64 / 6.0).sqrt();
        assert!((noise_mv.to_f64() - expected).abs() < 1e-3, "{f:?} vs {expected}");
        assert_eq!(limit_mv.to_f64(), 5.0);
        assert_eq!(f.code(), 3);
        // Half the amplitude (±2.5 mV, estimate 4.08 mV) is below the 5 mV limit.
        let mut m = monitor::<R>();
        for k in 0..600 {
            let mv = if k % 2 == 0 { 22.5 } else { 17.5 };
            assert_eq!(tick(&mut m, 1.0, mv), None, "tick {k}");
        }
        assert!((m.noise_mv().to_f64() - expected / 2.0).abs() < 1e-3);
    }

    both!(excessive_noise_is_a_fault, noise);

    fn ramp<R: Real>() {
        // A steady ramp of 0.25 mV/s (0.0042 pH/s) for an hour: no noise, never frozen.
        let mut m = monitor::<R>();
        for k in 0..3600 {
            assert_eq!(tick(&mut m, 1.0, -400.0 + 0.25 * f64::from(k)), None, "tick {k}");
        }
        assert!(m.noise_mv().to_f64() < 1e-3, "{}", m.noise_mv());
    }

    both!(a_steady_ramp_is_neither_noise_nor_frozen, ramp);

    fn frozen<R: Real>() {
        // Within ±0.1 mV of 12.3 mV, a tick every 10 s; the window is 900 s.
        let mut m = monitor::<R>();
        for k in 0..=90 {
            let mv = 12.3 + if k % 2 == 0 { 0.1 } else { -0.1 };
            let f = tick(&mut m, 10.0, mv);
            if k < 90 {
                assert_eq!(f, None, "tick {k}");
            } else {
                let f = f.unwrap();
                assert_eq!(f, SensorFault::Frozen { still_s: R::from_f64(900.0), band_mv: R::from_f64(0.2) });
                assert_eq!(f.code(), 4);
            }
        }
        // A move beyond the band clears it.
        assert_eq!(tick(&mut m, 10.0, 13.0), None);
        assert_eq!(m.still_s().to_f64(), 0.0);
    }

    both!(a_frozen_signal_is_a_fault_after_the_window, frozen);

    fn bad_ticks<R: Real>() {
        let mut m = monitor::<R>();
        tick(&mut m, 1.0, 5.0);
        let before = m;
        for dt in [0.0, -1.0, 3600.5, f64::INFINITY] {
            let f = tick(&mut m, dt, 300.0).unwrap();
            assert_eq!(f, SensorFault::InvalidTick { dt_s: R::from_f64(dt) });
            assert_eq!(f.code(), 5);
        }
        assert!(matches!(tick(&mut m, f64::NAN, 5.0), Some(SensorFault::InvalidTick { .. })));
        assert_eq!(m, before, "an invalid tick changes nothing");
    }

    both!(invalid_ticks_are_ignored_and_reported, bad_ticks);

    #[test]
    fn settings_are_checked_and_messages_carry_the_numbers() {
        assert!(MonitorSettings::new(600.0, 0.2, 5.0, 60.0, 0.2, 900.0).is_ok());
        assert_eq!(
            MonitorSettings::new(20.0, 0.2, 5.0, 60.0, 0.2, 900.0),
            Err(InvalidSetting { name: "max_abs_mv", value: 20.0 })
        );
        assert_eq!(
            MonitorSettings::new(600.0, 0.0, 5.0, 60.0, 0.2, 900.0),
            Err(InvalidSetting { name: "max_rate_ph_per_s", value: 0.0 })
        );
        assert!(MonitorSettings::new(600.0, 0.2, 5.0, 0.5, 0.2, 900.0).is_err());
        assert!(MonitorSettings::new(600.0, 0.2, 5.0, 60.0, -0.1, 900.0).is_err());
        assert!(MonitorSettings::new(600.0, 0.2, f64::NAN, 60.0, 0.2, 900.0).is_err());
        assert!(MonitorSettings::new(600.0_f32, 0.2, 5.0, 60.0, 0.2, 0.0).is_err());
        let m = std::format!("{}", SensorFault::Frozen { still_s: 900.0, band_mv: 0.2 });
        assert_eq!(m, "probe signal frozen: within ±0.2 mV for 900 s");
        let m = std::format!("{}", SensorFault::OutOfRange { mv: 650.0_f32, limit_mv: 600.0 });
        assert_eq!(m, "probe signal 650 mV is beyond ±600 mV");
    }
}
