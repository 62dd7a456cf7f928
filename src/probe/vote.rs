//! Two or three probes in one tank: middle-value selection and a disagreement alarm.
//!
//! **Policy.** A probe is *healthy* when its reading has no fault and a finite pH. Of the
//! healthy probes:
//! - three: the median (one wild probe cannot move it);
//! - two: the mean (nothing says which one is right; the alarm says when they disagree);
//! - one: that one (redundancy is lost: [`Vote::healthy_count`] says so);
//! - none: no pH ([`Vote::ph`] is `None`).
//!
//! The **spread** is the highest minus the lowest healthy pH (0 with fewer than two). When it
//! exceeds the configured limit the vote carries a [`Disagreement`]; the selected pH is still
//! reported (with three probes the median stays the best estimate), and the supervisor decides
//! what to do with the alarm. Constant time: at most three readings, three comparisons.

use super::monitor::{Reading, SensorFault};
use super::{InvalidSetting, check};
use crate::real::Real;
use crate::units::Compact;

/// Most probes a vote takes.
pub const MAX_PROBES: usize = 3;

/// Vote settings.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VoteSettings<R: Real> {
    max_spread_ph: R,
}

impl<R: Real> Default for VoteSettings<R> {
    /// Disagreement beyond 0.3 pH (common practice, no source).
    fn default() -> Self {
        Self { max_spread_ph: R::from_f64(0.3) }
    }
}

impl<R: Real> VoteSettings<R> {
    /// Checked: `max_spread_ph` 0.01–14 pH.
    pub fn new(max_spread_ph: R) -> Result<Self, InvalidSetting> {
        check("max_spread_ph", max_spread_ph, 0.01, 14.0)?;
        Ok(Self { max_spread_ph })
    }

    /// The largest spread between healthy probes before the alarm, pH.
    pub fn max_spread_ph(&self) -> R {
        self.max_spread_ph
    }
}

/// How the pH was selected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Selection {
    /// No healthy probe: no pH.
    None,
    /// The one healthy probe (its index, 0-based).
    Single(u8),
    /// The mean of the two healthy probes.
    Mean,
    /// The median of three healthy probes: the middle one (its index).
    Median(u8),
}

/// The healthy probes disagree.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Disagreement<R: Real> {
    /// Highest minus lowest healthy pH.
    pub spread_ph: R,
    /// The configured limit, pH.
    pub limit_ph: R,
}

impl<R: Real> core::fmt::Display for Disagreement<R> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(
            f,
            "probes disagree by {} pH (limit {} pH)",
            Compact(self.spread_ph.to_f64()),
            Compact(self.limit_ph.to_f64())
        )
    }
}

/// The outcome of a vote.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Vote<R: Real> {
    /// The selected pH (`None` when no probe is healthy).
    pub ph: Option<R>,
    /// How it was selected.
    pub selection: Selection,
    /// Which probes were healthy and took part, by index.
    pub used: [bool; MAX_PROBES],
    /// Highest minus lowest healthy pH (0 with fewer than two healthy probes), pH.
    pub spread_ph: R,
    /// Set when the spread exceeds the limit.
    pub disagreement: Option<Disagreement<R>>,
    /// Each probe's fault, by index (`None` for a healthy probe or an absent one).
    pub faults: [Option<SensorFault<R>>; MAX_PROBES],
}

impl<R: Real> Vote<R> {
    /// The vote with no healthy probe and no fault recorded (no pH).
    pub fn none() -> Self {
        Self {
            ph: None,
            selection: Selection::None,
            used: [false; MAX_PROBES],
            spread_ph: R::ZERO,
            disagreement: None,
            faults: [None; MAX_PROBES],
        }
    }

    /// How many probes took part (0–3).
    pub fn healthy_count(&self) -> usize {
        self.used.iter().filter(|&&u| u).count()
    }
}

/// The vote needs one to three readings.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ProbeCount {
    /// The number of readings given.
    pub count: usize,
}

impl core::fmt::Display for ProbeCount {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "a vote takes 1 to {MAX_PROBES} probes, got {}", self.count)
    }
}

impl core::error::Error for ProbeCount {}

/// Votes between one to three probe readings (index = probe number); see the module docs for
/// the policy. Constant time (every loop runs at most [`MAX_PROBES`] times).
pub fn vote<R: Real>(readings: &[Reading<R>], settings: &VoteSettings<R>) -> Result<Vote<R>, ProbeCount> {
    let count = readings.len();
    if count == 0 || count > MAX_PROBES {
        return Err(ProbeCount { count });
    }
    let mut used = [false; MAX_PROBES];
    let mut faults = [None; MAX_PROBES];
    let mut healthy = [(0_u8, R::ZERO); MAX_PROBES];
    let mut n = 0_usize;
    // At most MAX_PROBES rounds (count ≤ MAX_PROBES).
    for (((i, r), u), fault) in (0_u8..).zip(readings).zip(used.iter_mut()).zip(faults.iter_mut()) {
        *fault = r.fault;
        if r.fault.is_none() && r.ph.is_finite() {
            *u = true;
            if let Some(slot) = healthy.get_mut(n) {
                *slot = (i, r.ph);
            }
            n += 1;
        }
    }
    let [a, b, c] = healthy;
    let (ph, selection, spread_ph) = match n {
        0 => (None, Selection::None, R::ZERO),
        1 => (Some(a.1), Selection::Single(a.0), R::ZERO),
        2 => (Some((a.1 + b.1) / R::from_f64(2.0)), Selection::Mean, (a.1 - b.1).abs()),
        _ => {
            let (lo, mid, hi) = sort3(a, b, c);
            (Some(mid.1), Selection::Median(mid.0), hi.1 - lo.1)
        }
    };
    let disagreement =
        (spread_ph > settings.max_spread_ph).then_some(Disagreement { spread_ph, limit_ph: settings.max_spread_ph });
    Ok(Vote { ph, selection, used, spread_ph, disagreement, faults })
}

/// Three (index, pH) pairs in ascending pH: three compare-and-swaps.
fn sort3<R: Real>(a: (u8, R), b: (u8, R), c: (u8, R)) -> ((u8, R), (u8, R), (u8, R)) {
    let (a, b) = if a.1 > b.1 { (b, a) } else { (a, b) };
    let (b, c) = if b.1 > c.1 { (c, b) } else { (b, c) };
    let (a, b) = if a.1 > b.1 { (b, a) } else { (a, b) };
    (a, b, c)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn ok<R: Real>(ph: f64) -> Reading<R> {
        Reading { mv: R::ZERO, ph: R::from_f64(ph), fault: None }
    }

    fn faulty<R: Real>(ph: f64) -> Reading<R> {
        let fault = SensorFault::OutOfRange { mv: R::from_f64(700.0), limit_mv: R::from_f64(600.0) };
        Reading { mv: R::from_f64(700.0), ph: R::from_f64(ph), fault: Some(fault) }
    }

    fn votes<R: Real>(tol: f64) {
        let s = VoteSettings::<R>::default();
        // Three healthy, close: the median, no alarm.
        let v = vote(&[ok::<R>(7.10), ok(7.02), ok(7.20)], &s).unwrap();
        assert_eq!((v.selection, v.used, v.disagreement), (Selection::Median(0), [true; 3], None));
        assert!((v.ph.unwrap().to_f64() - 7.10).abs() < tol && (v.spread_ph.to_f64() - 0.18).abs() < tol);
        // One wild probe: the median ignores it, the alarm carries the spread.
        let v = vote(&[ok::<R>(8.4), ok(7.05), ok(7.0)], &s).unwrap();
        assert_eq!(v.selection, Selection::Median(1));
        assert!((v.ph.unwrap().to_f64() - 7.05).abs() < tol);
        let d = v.disagreement.unwrap();
        assert!((d.spread_ph.to_f64() - 1.4).abs() < tol && d.limit_ph == s.max_spread_ph());
        let text = std::format!("{d}");
        assert!(text.starts_with("probes disagree by 1.399") || text.starts_with("probes disagree by 1.4"), "{text}");
        // Two healthy of three: the mean; the faulted one is reported, not used.
        let v = vote(&[ok::<R>(6.9), faulty(2.0), ok(7.1)], &s).unwrap();
        assert_eq!((v.selection, v.used, v.healthy_count()), (Selection::Mean, [true, false, true], 2));
        assert!((v.ph.unwrap().to_f64() - 7.0).abs() < tol && (v.spread_ph.to_f64() - 0.2).abs() < tol);
        assert_eq!(v.faults[1].map(|f| f.code()), Some(1));
        assert_eq!(v.disagreement, None);
        // Two probes installed, 0.5 pH apart: the mean and the alarm.
        let v = vote(&[ok::<R>(6.8), ok(7.3)], &s).unwrap();
        assert!((v.ph.unwrap().to_f64() - 7.05).abs() < tol && v.disagreement.is_some());
        // One healthy: that one, spread 0, no alarm possible.
        let v = vote(&[faulty::<R>(7.0), faulty(7.0), ok(9.5)], &s).unwrap();
        assert_eq!((v.selection, v.healthy_count(), v.disagreement), (Selection::Single(2), 1, None));
        assert_eq!(v.ph.unwrap().to_f64(), R::from_f64(9.5).to_f64());
        // A single probe.
        assert_eq!(vote(&[ok::<R>(7.5)], &s).unwrap().selection, Selection::Single(0));
        // None healthy; a NaN pH without a fault counts as unhealthy too.
        let v = vote(&[faulty::<R>(7.0), ok(f64::NAN)], &s).unwrap();
        assert_eq!((v.ph, v.selection, v.used), (None, Selection::None, [false; 3]));
    }

    #[test]
    fn vote_with_one_two_and_three_probes() {
        votes::<f64>(1e-12);
        votes::<f32>(1e-6);
    }

    #[test]
    fn vote_needs_one_to_three_probes_and_checked_settings() {
        let s = VoteSettings::<f64>::default();
        assert_eq!(vote::<f64>(&[], &s), Err(ProbeCount { count: 0 }));
        assert_eq!(vote(&[ok::<f64>(7.0); 4], &s), Err(ProbeCount { count: 4 }));
        assert_eq!(std::format!("{}", ProbeCount { count: 4 }), "a vote takes 1 to 3 probes, got 4");
        assert_eq!(VoteSettings::new(0.0_f64), Err(InvalidSetting { name: "max_spread_ph", value: 0.0 }));
        let tight = VoteSettings::new(0.1_f32).unwrap();
        assert!(vote(&[ok::<f32>(7.0), ok(7.15)], &tight).unwrap().disagreement.is_some());
    }

    proptest! {
        #[test]
        fn the_selected_ph_lies_within_the_healthy_range(
            phs in proptest::array::uniform3(0.0..14.0_f64), healthy in proptest::array::uniform3(any::<bool>()),
        ) {
            let readings: [Reading<f64>; 3] =
                core::array::from_fn(|i| if healthy[i] { ok(phs[i]) } else { faulty(phs[i]) });
            let v = vote(&readings, &VoteSettings::default()).unwrap();
            let good: std::vec::Vec<f64> = (0..3).filter(|&i| healthy[i]).map(|i| phs[i]).collect();
            prop_assert_eq!(v.used, healthy);
            match good.len() {
                0 => prop_assert!(v.ph.is_none()),
                n => {
                    let lo = good.iter().copied().fold(f64::INFINITY, f64::min);
                    let hi = good.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                    let ph = v.ph.unwrap();
                    prop_assert!(lo <= ph && ph <= hi, "{ph} outside [{lo}, {hi}]");
                    prop_assert_eq!(v.spread_ph, hi - lo);
                    prop_assert_eq!(v.disagreement.is_some(), hi - lo > 0.3);
                    if n == 3 {
                        // The median is one of the three and has one at or below, one at or above.
                        prop_assert!(good.contains(&ph));
                        prop_assert!(good.iter().filter(|&&x| x <= ph).count() >= 2);
                        prop_assert!(good.iter().filter(|&&x| x >= ph).count() >= 2);
                    }
                }
            }
        }
    }
}
