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

/// One sliding window: `N` buckets of `bucket_s` seconds in a ring.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Window<R: Real, const N: usize> {
    buckets_l: [R; N],
    /// The current bucket (ring position).
    current: usize,
    /// Seconds into the current bucket.
    elapsed_s: R,
}

impl<R: Real, const N: usize> Window<R, N> {
    const EMPTY: () = assert!(N > 0);

    fn new() -> Self {
        let () = Self::EMPTY;
        Self { buckets_l: [R::ZERO; N], current: 0, elapsed_s: R::ZERO }
    }

    /// Moves the window on by `dt_s` (≥ 0), clearing each bucket it enters. At most `N` moves:
    /// after that every bucket has been cleared once.
    fn advance(&mut self, dt_s: R, bucket_s: f64) {
        let bucket = R::from_f64(bucket_s);
        self.elapsed_s += dt_s;
        let mut moves = 0;
        while self.elapsed_s >= bucket && moves < N {
            self.elapsed_s -= bucket;
            self.current = (self.current + 1) % N;
            if let Some(b) = self.buckets_l.get_mut(self.current) {
                *b = R::ZERO;
            }
            moves += 1;
        }
        self.elapsed_s = self.elapsed_s.min(bucket);
    }

    fn add(&mut self, litres: R) {
        if let Some(b) = self.buckets_l.get_mut(self.current) {
            *b += litres;
        }
    }

    fn total_l(&self) -> R {
        self.buckets_l.iter().fold(R::ZERO, |a, b| a + *b)
    }
}

/// Volume delivered by one pump over sliding windows.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DoseLedger<R: Real> {
    hour: Window<R, HOUR_BUCKETS>,
    day: Window<R, DAY_BUCKETS>,
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
        Self { hour: Window::new(), day: Window::new(), total_l: R::ZERO }
    }

    /// Books `litres` delivered over the last `dt_s` seconds (the volume goes into the bucket
    /// current at the end of the tick). Non-finite or negative values book nothing. Worst case:
    /// [`HOUR_BUCKETS`] + [`DAY_BUCKETS`] bucket moves for a tick of a day or longer.
    pub fn book(&mut self, litres: R, dt_s: R) {
        let dt = if dt_s.is_finite() && dt_s > R::ZERO { dt_s } else { R::ZERO };
        self.hour.advance(dt, HOUR_BUCKET_S);
        self.day.advance(dt, DAY_BUCKET_S);
        if litres.is_finite() && litres > R::ZERO {
            self.hour.add(litres);
            self.day.add(litres);
            self.total_l += litres;
        }
    }

    /// Delivered in the last hour (55–60 minutes of history), L.
    pub fn last_hour_l(&self) -> R {
        self.hour.total_l()
    }

    /// Delivered in the last day (23–24 hours of history), L.
    pub fn last_day_l(&self) -> R {
        self.day.total_l()
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
