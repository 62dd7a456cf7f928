//! Dose bookkeeping: reagent volume delivered in the last hour and the last day, for the
//! overdose guard and the operator.
//!
//! Fixed memory: twelve five-minute buckets and twenty-four one-hour buckets per pump. The
//! "last hour" is the current five-minute bucket plus the eleven before it (55–60 minutes of
//! history); the "last day" the current hour plus the twenty-three before it (23–24 hours).
//! The window slides with the controller's own time (the sum of the ticks' `dt_s`), so the
//! guard needs no clock.

use crate::real::Real;

/// Five-minute buckets in the hour window.
pub const HOUR_BUCKETS: usize = 12;
/// One-hour buckets in the day window.
pub const DAY_BUCKETS: usize = 24;
const HOUR_BUCKET_S: f64 = 300.0;
const DAY_BUCKET_S: f64 = 3600.0;

/// Volume delivered by one pump over sliding windows.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DoseLedger<R: Real> {
    five_minutes_l: [R; HOUR_BUCKETS],
    hours_l: [R; DAY_BUCKETS],
    /// Seconds into the current five-minute bucket.
    in_five_s: R,
    /// Seconds into the current hour bucket.
    in_hour_s: R,
    /// Current buckets (the ring positions).
    five: usize,
    hour: usize,
    /// Everything delivered since start, L.
    total_l: R,
}

impl<R: Real> Default for DoseLedger<R> {
    fn default() -> Self {
        Self::new()
    }
}

impl<R: Real> DoseLedger<R> {
    /// An empty ledger.
    pub fn new() -> Self {
        Self {
            five_minutes_l: [R::ZERO; HOUR_BUCKETS],
            hours_l: [R::ZERO; DAY_BUCKETS],
            in_five_s: R::ZERO,
            in_hour_s: R::ZERO,
            five: 0,
            hour: 0,
            total_l: R::ZERO,
        }
    }

    /// Books `litres` delivered over the last `dt_s` seconds (the volume goes into the bucket
    /// current at the end of the tick). Non-finite or negative values book nothing. Worst case:
    /// [`HOUR_BUCKETS`] + [`DAY_BUCKETS`] bucket moves for a tick of a day or longer.
    pub fn book(&mut self, litres: R, dt_s: R) {
        let dt = if dt_s.is_finite() && dt_s > R::ZERO { dt_s } else { R::ZERO };
        self.in_five_s += dt;
        // At most HOUR_BUCKETS moves: after that every bucket has been cleared once.
        let mut moves = 0;
        while self.in_five_s >= R::from_f64(HOUR_BUCKET_S) && moves < HOUR_BUCKETS {
            self.in_five_s -= R::from_f64(HOUR_BUCKET_S);
            self.five = (self.five + 1) % HOUR_BUCKETS;
            if let Some(b) = self.five_minutes_l.get_mut(self.five) {
                *b = R::ZERO;
            }
            moves += 1;
        }
        self.in_five_s = self.in_five_s.min(R::from_f64(HOUR_BUCKET_S));
        self.in_hour_s += dt;
        let mut moves = 0;
        while self.in_hour_s >= R::from_f64(DAY_BUCKET_S) && moves < DAY_BUCKETS {
            self.in_hour_s -= R::from_f64(DAY_BUCKET_S);
            self.hour = (self.hour + 1) % DAY_BUCKETS;
            if let Some(b) = self.hours_l.get_mut(self.hour) {
                *b = R::ZERO;
            }
            moves += 1;
        }
        self.in_hour_s = self.in_hour_s.min(R::from_f64(DAY_BUCKET_S));
        if litres.is_finite() && litres > R::ZERO {
            if let Some(b) = self.five_minutes_l.get_mut(self.five) {
                *b += litres;
            }
            if let Some(b) = self.hours_l.get_mut(self.hour) {
                *b += litres;
            }
            self.total_l += litres;
        }
    }

    /// Delivered in the last hour (55–60 minutes of history), L.
    pub fn last_hour_l(&self) -> R {
        self.five_minutes_l.iter().fold(R::ZERO, |a, b| a + *b)
    }

    /// Delivered in the last day (23–24 hours of history), L.
    pub fn last_day_l(&self) -> R {
        self.hours_l.iter().fold(R::ZERO, |a, b| a + *b)
    }

    /// Delivered since start, L.
    pub fn total_l(&self) -> R {
        self.total_l
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_slide_with_controller_time() {
        let mut l: DoseLedger<f64> = DoseLedger::new();
        // 1 L/h for two hours in 10 s ticks.
        for _ in 0..720 {
            l.book(10.0 / 3600.0, 10.0);
        }
        // The hour window holds 55–60 minutes: here exactly the last 60 (bucket boundary).
        let h = l.last_hour_l();
        assert!((0.55 - 1e-9..=1.0 + 1e-9).contains(&h), "{h}");
        assert!((l.last_day_l() - 2.0).abs() < 1e-9);
        assert!((l.total_l() - 2.0).abs() < 1e-9);
        // An idle hour empties the hour window, not the day window.
        l.book(0.0, 3600.0);
        assert_eq!(l.last_hour_l(), 0.0);
        assert!(l.last_day_l() >= 1.0 - 1e-9);
        // A day-long gap empties both, in bounded work.
        l.book(0.0, 1e9);
        assert_eq!(l.last_day_l(), 0.0);
        assert!((l.total_l() - 2.0).abs() < 1e-9);
        // Nonsense books nothing.
        l.book(f64::NAN, 1.0);
        l.book(-1.0, 1.0);
        assert!((l.total_l() - 2.0).abs() < 1e-9);
    }
}
