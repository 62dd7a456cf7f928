//! Pump output: a reagent flow becomes the command of a metering pump, in the pump's own units.
//!
//! Two common inputs:
//! - **Pulse**: each pulse is one stroke of a fixed volume. The command of a tick is a whole
//!   number of strokes; the fraction left over is carried to the next tick, so the delivered
//!   volume follows the demanded one exactly on average (never more than one stroke behind).
//! - **Duty** (analog 4–20 mA or PWM): a duty 0–1 maps linearly to 0 – the pump's maximum flow,
//!   quantised to the output's resolution with error feedback (the rounding error of one tick
//!   is carried into the next), so the mean duty follows the demand between two output steps
//!   instead of sticking on one of them; a demand below the pump's minimum duty gives 0 (a
//!   metering pump does not run reliably below it).
//!
//! Either way the output says the flow the command actually delivers, which is what the loop
//! counts as dosed (the model, the adaptation and the overdose guard all use it).

use crate::real::Real;

/// How a metering pump takes its command. Build it with [`PumpDrive::pulse`] or
/// [`PumpDrive::duty`], which check the ranges.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PumpDrive<R: Real> {
    /// Pulse input.
    Pulse {
        /// Volume of one stroke, mL (> 0, ≤ 1000).
        stroke_volume_ml: R,
        /// Highest stroke rate, strokes per minute (> 0, ≤ 1000).
        max_strokes_per_min: R,
    },
    /// Analog or PWM input.
    Duty {
        /// Flow at duty 1, L/h (> 0, ≤ 10⁴).
        max_l_per_h: R,
        /// Lowest duty the pump runs at reliably, 0–0.5 (a demand below it gives 0).
        min_duty: R,
        /// Steps of the output between duty 0 and 1 (e.g. 1023 for a 10-bit PWM), 1–65535.
        resolution_steps: u16,
    },
}

/// A pump setting out of range: which one and its value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PumpDriveError {
    /// The setting's name.
    pub name: &'static str,
    /// The rejected value.
    pub value: f64,
}

impl core::fmt::Display for PumpDriveError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "pump setting {} = {} is outside its range", self.name, crate::units::Compact(self.value))
    }
}

impl core::error::Error for PumpDriveError {}

fn within<R: Real>(name: &'static str, v: R, lo_exclusive: f64, hi: f64) -> Result<R, PumpDriveError> {
    let x = v.to_f64();
    if x.is_finite() && x > lo_exclusive && x <= hi { Ok(v) } else { Err(PumpDriveError { name, value: x }) }
}

impl<R: Real> PumpDrive<R> {
    /// A pulse-input pump.
    pub fn pulse(stroke_volume_ml: R, max_strokes_per_min: R) -> Result<Self, PumpDriveError> {
        Ok(Self::Pulse {
            stroke_volume_ml: within("stroke_volume_ml", stroke_volume_ml, 0.0, 1000.0)?,
            max_strokes_per_min: within("max_strokes_per_min", max_strokes_per_min, 0.0, 1000.0)?,
        })
    }

    /// An analog- or PWM-input pump.
    pub fn duty(max_l_per_h: R, min_duty: R, resolution_steps: u16) -> Result<Self, PumpDriveError> {
        let min = min_duty.to_f64();
        if !(min.is_finite() && (0.0..=0.5).contains(&min)) {
            return Err(PumpDriveError { name: "min_duty", value: min });
        }
        if resolution_steps == 0 {
            return Err(PumpDriveError { name: "resolution_steps", value: 0.0 });
        }
        Ok(Self::Duty { max_l_per_h: within("max_l_per_h", max_l_per_h, 0.0, 1e4)?, min_duty, resolution_steps })
    }

    /// Highest flow, L/h.
    pub fn max_l_per_h(&self) -> R {
        match *self {
            Self::Pulse { stroke_volume_ml, max_strokes_per_min } => {
                stroke_volume_ml * max_strokes_per_min * R::from_f64(60.0 / 1000.0)
            }
            Self::Duty { max_l_per_h, .. } => max_l_per_h,
        }
    }

    /// The smallest flow change the pump can make, L/h: one stroke per minute, or one output
    /// step. This is the "pump step" of the steepness check.
    pub fn step_l_per_h(&self) -> R {
        match *self {
            Self::Pulse { stroke_volume_ml, .. } => stroke_volume_ml * R::from_f64(60.0 / 1000.0),
            Self::Duty { max_l_per_h, resolution_steps, .. } => max_l_per_h / R::from_f64(f64::from(resolution_steps)),
        }
    }

    /// Lowest non-zero flow, L/h (0 for a pulse pump, whose strokes can be spread out).
    pub fn min_l_per_h(&self) -> R {
        match *self {
            Self::Pulse { .. } => R::ZERO,
            Self::Duty { max_l_per_h, min_duty, .. } => max_l_per_h * min_duty,
        }
    }
}

/// A pump's command for one tick, in its own units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PumpCommand<R: Real> {
    /// Pulse pump: strokes to give during the coming tick.
    Strokes(u32),
    /// Analog/PWM pump: duty 0–1, already quantised to the output's resolution.
    Duty(R),
}

/// Output of [`PumpChannel::command`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PumpOutput<R: Real> {
    /// The command.
    pub command: PumpCommand<R>,
    /// The mean flow that command delivers over the tick, L/h.
    pub delivered_l_per_h: R,
    /// Volume it delivers over the tick, L.
    pub delivered_l: R,
}

/// One pump output with its carried stroke fraction.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PumpChannel<R: Real> {
    drive: PumpDrive<R>,
    /// Pulse: strokes demanded but not yet given (0 ≤ carry < 1). Duty: the rounding error
    /// carried to the next tick, in output steps (|carry| ≤ ½).
    carry: R,
}

impl<R: Real> PumpChannel<R> {
    /// A channel for `drive`, at rest.
    pub fn new(drive: PumpDrive<R>) -> Self {
        Self { drive, carry: R::ZERO }
    }

    /// The drive.
    pub fn drive(&self) -> &PumpDrive<R> {
        &self.drive
    }

    /// Stops the pump and forgets the carried fraction (a stopped pump starts afresh).
    pub fn stop(&mut self) -> PumpOutput<R> {
        self.carry = R::ZERO;
        self.command(R::ZERO, R::ZERO)
    }

    /// The command that delivers `flow_l_per_h` (clamped to 0 – the maximum; NaN is 0) over a
    /// tick of `dt_s` seconds (≤ 0 or NaN: nothing). Constant time.
    pub fn command(&mut self, flow_l_per_h: R, dt_s: R) -> PumpOutput<R> {
        let dt = if dt_s.is_finite() && dt_s > R::ZERO { dt_s } else { R::ZERO };
        let max = self.drive.max_l_per_h();
        let q = if flow_l_per_h.is_finite() { flow_l_per_h.max(R::ZERO).min(max) } else { R::ZERO };
        let hours = dt / R::from_f64(3600.0);
        match self.drive {
            PumpDrive::Pulse { stroke_volume_ml, max_strokes_per_min } => {
                let stroke_l = stroke_volume_ml / R::from_f64(1000.0);
                let wanted = q * hours / stroke_l + self.carry;
                // Never more strokes than the pump can make in the tick.
                let cap = max_strokes_per_min * dt / R::from_f64(60.0);
                let whole = floor_u32(wanted.min(cap));
                let given = R::from_f64(f64::from(whole));
                self.carry = if q > R::ZERO { (wanted - given).max(R::ZERO).min(R::ONE) } else { R::ZERO };
                let litres = given * stroke_l;
                let mean = if hours > R::ZERO { litres / hours } else { R::ZERO };
                PumpOutput { command: PumpCommand::Strokes(whole), delivered_l_per_h: mean, delivered_l: litres }
            }
            PumpDrive::Duty { max_l_per_h, min_duty, resolution_steps } => {
                let steps = R::from_f64(f64::from(resolution_steps));
                let raw = q / max_l_per_h;
                let duty = if raw < min_duty || raw <= R::ZERO {
                    self.carry = R::ZERO;
                    R::ZERO
                } else {
                    // Nearest output step of the demand plus the carried rounding error, at least
                    // the minimum duty, at most 1; what was rounded away is carried on.
                    let wanted = raw * steps + self.carry;
                    let level = R::from_f64(f64::from(floor_u32(wanted + R::from_f64(0.5)))).min(steps);
                    self.carry = (wanted - level).max(R::from_f64(-0.5)).min(R::from_f64(0.5));
                    (level / steps).max(min_duty)
                };
                let mean = duty * max_l_per_h;
                PumpOutput { command: PumpCommand::Duty(duty), delivered_l_per_h: mean, delivered_l: mean * hours }
            }
        }
    }
}

/// ⌊x⌋ as `u32`, 0 for NaN or negative, saturating at `u32::MAX`.
fn floor_u32<R: Real>(x: R) -> u32 {
    let v = x.to_f64();
    if v.is_nan() || v <= 0.0 {
        0
    } else if v >= f64::from(u32::MAX) {
        u32::MAX
    } else {
        // In range and non-negative: the cast truncates towards zero, i.e. floors.
        v as u32
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pulse_pump_delivers_the_demand_on_average() {
        // 0.5 mL strokes, 120 strokes/min: max 3.6 L/h, one stroke per minute = 0.03 L/h.
        let drive = PumpDrive::pulse(0.5_f64, 120.0).unwrap();
        assert!((drive.max_l_per_h() - 3.6).abs() < 1e-12);
        assert!((drive.step_l_per_h() - 0.03).abs() < 1e-12);
        let mut ch = PumpChannel::new(drive);
        // 0.1 L/h for an hour of 1 s ticks: 200 strokes of 0.5 mL = exactly 0.1 L.
        let mut litres = 0.0;
        let mut strokes = 0_u64;
        for _ in 0..3600 {
            let out = ch.command(0.1, 1.0);
            if let PumpCommand::Strokes(n) = out.command {
                assert!(n <= 2, "{n} strokes in one second (max 2)");
                strokes += u64::from(n);
            }
            litres += out.delivered_l;
        }
        assert!((strokes as f64 - 200.0).abs() <= 1.0, "{strokes}");
        assert!((litres - 0.1).abs() <= 0.0005 + 1e-12, "{litres}");
        // Above the maximum: clamped to 2 strokes per second.
        let out = ch.command(100.0, 1.0);
        assert_eq!(out.command, PumpCommand::Strokes(2));
        assert!((out.delivered_l_per_h - 3.6).abs() < 1e-9);
        // Stop clears the carry.
        assert_eq!(ch.stop().command, PumpCommand::Strokes(0));
        assert_eq!(ch.command(f64::NAN, 1.0).delivered_l, 0.0);
    }

    #[test]
    fn duty_pump_quantises_and_respects_the_minimum() {
        // 10 L/h at full duty, 5 % minimum, 100 steps (0.1 L/h per step).
        let drive = PumpDrive::duty(10.0_f32, 0.05, 100).unwrap();
        assert!((drive.step_l_per_h() - 0.1).abs() < 1e-6);
        assert!((drive.min_l_per_h() - 0.5).abs() < 1e-6);
        let mut ch = PumpChannel::new(drive);
        // 0.4 L/h is below the 0.5 L/h minimum: off.
        assert_eq!(ch.command(0.4, 1.0).command, PumpCommand::Duty(0.0));
        // 1.234 L/h: duty 0.12 (nearest step), 1.2 L/h delivered on the first tick …
        let out = ch.command(1.234, 1.0);
        match out.command {
            PumpCommand::Duty(d) => assert!((d - 0.12).abs() < 1e-6, "{d}"),
            other => panic!("{other:?}"),
        }
        assert!((out.delivered_l_per_h - 1.2).abs() < 1e-5);
        // … and on average the demand itself: the rounding error is carried (0.12 / 0.13 mix).
        let mean = (0..999).map(|_| ch.command(1.234, 1.0).delivered_l_per_h).sum::<f32>() / 999.0;
        assert!((mean - 1.234).abs() < 2e-3, "mean {mean}");
        // Clamped at the maximum.
        assert!((ch.command(50.0, 1.0).delivered_l_per_h - 10.0).abs() < 1e-5);
    }

    #[test]
    fn bad_drives_are_refused_with_their_numbers() {
        assert_eq!(PumpDrive::pulse(0.0_f64, 100.0), Err(PumpDriveError { name: "stroke_volume_ml", value: 0.0 }));
        assert_eq!(PumpDrive::duty(10.0_f64, 0.6, 100), Err(PumpDriveError { name: "min_duty", value: 0.6 }));
        assert!(PumpDrive::duty(10.0_f64, 0.0, 0).is_err());
        assert!(PumpDrive::duty(f64::INFINITY, 0.0, 10).is_err());
    }
}
