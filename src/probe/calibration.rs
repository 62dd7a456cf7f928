//! The electrode line, its temperature compensation, calibration against standard buffers and
//! the acceptance of a calibration.
//!
//! **Model.** A glass electrode's potential is a straight line in pH,
//! `E = E₇ − s(T)·(pH − 7)`, where `E₇` is the **offset** (mV at pH 7) and `s(T)` the
//! **slope** (mV per pH, positive: the potential falls as the pH rises). The slope is
//! calibrated at the calibration temperature `T_cal` and follows the Nernst ratio elsewhere:
//! `s(T) = s_cal·T/T_cal` (kelvin). The line turns about the **isopotential point**, assumed to
//! be (pH 7, `E₇`) at every temperature: the offset does not change with temperature. A real
//! electrode's isopotential point lies near, not exactly at, pH 7; the compensation error is
//! then `(pH_iso − 7)·(T_cal − T)/T` pH, whatever the pH read (calc from the two lines): 0.016 pH
//! for an isopotential point at pH 6.5 read 10 K above a 25 °C calibration. Calibrating near the
//! process temperature keeps it small.
//!
//! **Calibration.** Each point is a buffer of [`super::buffers`], the temperature it was
//! measured at (0–50 °C, the table's range) and the electrode's mV. The calibration temperature
//! is the first point's; a point at another temperature is brought to it through the Nernst
//! ratio (its abscissa is `(T_i/T_cal)·(pH_i − 7)`), so points need not share a temperature.
//! - one point: the slope is the Nernst slope at `T_cal`; the offset follows from the point;
//! - two points: the line through both (slope and offset), the points bracketing the process
//!   range as IUPAC 2002 recommends for two-point calibration;
//! - three points: the least-squares line.
//!
//! Rule (common practice, no source): the points are at distinct buffers, and the highest and
//! lowest buffer pH are at least [`MIN_SPAN_PH`] apart (so borax and carbonate, 0.82–0.85 pH
//! apart over 0–50 °C, do not make a two-point calibration on their own).

use super::buffers::{Buffer, OutsideTable};
use super::nernst;
use super::{InvalidSetting, check};
use crate::real::Real;
use crate::units::{Celsius, Compact, KELVIN_OFFSET};

/// The pH of the isopotential point the temperature compensation assumes (and at which the
/// offset is stated).
pub const ISOPOTENTIAL_PH: f64 = 7.0;
/// Most calibration points.
pub const MAX_POINTS: usize = 3;
/// Least distance between the highest and lowest buffer pH of a two- or three-point
/// calibration, pH (common practice, no source).
pub const MIN_SPAN_PH: f64 = 1.0;
/// Largest |mV| a calibration point may carry (a sanity bound of ours: a glass electrode gives
/// about ±420 mV over pH 0–14, calc from the Nernst slope).
pub const MAX_POINT_MV: f64 = 2000.0;
/// Slopes a calibration may hold, mV/pH (our own plausibility bound, about 17–200 % of the
/// Nernst slope at 25 °C; [`Acceptance`] judges far tighter).
pub const SLOPE_RANGE_MV_PER_PH: (f64, f64) = (10.0, 120.0);
/// Largest |offset| a calibration may hold, mV (our own plausibility bound).
pub const MAX_OFFSET_MV: f64 = 1000.0;

/// A calibrated electrode line: slope at the calibration temperature and offset at pH 7.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Calibration<R: Real> {
    slope_mv_per_ph: R,
    offset_mv: R,
    temperature: Celsius<R>,
}

impl<R: Real> Calibration<R> {
    /// A calibration from stored numbers: `slope_mv_per_ph` at `temperature`
    /// ([`SLOPE_RANGE_MV_PER_PH`]) and `offset_mv`, the potential at pH 7 (|offset| ≤
    /// [`MAX_OFFSET_MV`]).
    pub fn new(slope_mv_per_ph: R, offset_mv: R, temperature: Celsius<R>) -> Result<Self, InvalidSetting> {
        check("slope_mv_per_ph", slope_mv_per_ph, SLOPE_RANGE_MV_PER_PH.0, SLOPE_RANGE_MV_PER_PH.1)?;
        check("offset_mv", offset_mv, -MAX_OFFSET_MV, MAX_OFFSET_MV)?;
        Ok(Self { slope_mv_per_ph, offset_mv, temperature })
    }

    /// The ideal electrode: Nernst slope, offset 0 mV (a starting point before any calibration).
    pub fn ideal() -> Self {
        let t = Celsius::standard();
        Self { slope_mv_per_ph: nernst::slope_mv_per_ph(t), offset_mv: R::ZERO, temperature: t }
    }

    /// The slope at the calibration temperature, mV/pH (10–120).
    pub fn slope_mv_per_ph(&self) -> R {
        self.slope_mv_per_ph
    }

    /// The offset: the potential at pH 7, mV (±1000).
    pub fn offset_mv(&self) -> R {
        self.offset_mv
    }

    /// The calibration temperature.
    pub fn temperature(&self) -> Celsius<R> {
        self.temperature
    }

    /// The slope as a percentage of the Nernst slope (the same at every temperature).
    pub fn slope_percent(&self) -> R {
        R::from_f64(100.0) * self.slope_mv_per_ph / nernst::slope_mv_per_ph(self.temperature)
    }

    /// The slope at `temperature`, mV/pH: `s_cal·T/T_cal` (kelvin). One division.
    pub fn slope_at(&self, temperature: Celsius<R>) -> R {
        self.slope_mv_per_ph * temperature.kelvin() / self.temperature.kelvin()
    }

    /// The pH for an electrode voltage `mv` (mV) at `temperature`, compensated:
    /// `7 + (E₇ − mV)/s(T)`. Not clamped (a voltage beyond the electrode's range gives a pH
    /// outside 0–14; NaN gives NaN): validate the signal with [`super::monitor`]. Two divisions.
    pub fn ph(&self, mv: R, temperature: Celsius<R>) -> R {
        R::from_f64(ISOPOTENTIAL_PH) + (self.offset_mv - mv) / self.slope_at(temperature)
    }

    /// The electrode voltage for `ph` at `temperature`, mV: `E₇ − s(T)·(pH − 7)` (the inverse
    /// of [`Self::ph`]).
    pub fn mv(&self, ph: R, temperature: Celsius<R>) -> R {
        self.offset_mv - self.slope_at(temperature) * (ph - R::from_f64(ISOPOTENTIAL_PH))
    }
}

/// One calibration measurement: the electrode's mV in a standard buffer at a temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CalibrationPoint<R: Real> {
    /// The buffer the electrode stood in.
    pub buffer: Buffer,
    /// The buffer's temperature (0–50 °C, the table's range).
    pub temperature: Celsius<R>,
    /// The electrode's potential, mV (±[`MAX_POINT_MV`]).
    pub mv: R,
}

/// Why a calibration could not be made.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CalibrationError {
    /// Not one, two or three points.
    PointCount {
        /// The number of points given.
        count: usize,
    },
    /// A point's temperature is outside the buffer table.
    OutsideTable(OutsideTable),
    /// A point's mV is NaN, infinite or beyond ±[`MAX_POINT_MV`].
    Millivolts {
        /// The point (0-based).
        point: usize,
        /// The rejected value, mV.
        mv: f64,
    },
    /// Two points in the same buffer.
    SameBuffer {
        /// The buffer used twice.
        buffer: Buffer,
    },
    /// The buffers' pH span less than [`MIN_SPAN_PH`].
    TooClose {
        /// Highest minus lowest buffer pH.
        span_ph: f64,
    },
    /// The fitted line is not a working electrode's: slope outside [`SLOPE_RANGE_MV_PER_PH`]
    /// (e.g. negative: electrode leads swapped, or a buffer mixed up) or offset beyond
    /// ±[`MAX_OFFSET_MV`].
    Implausible {
        /// The fitted slope at the calibration temperature, mV/pH.
        slope_mv_per_ph: f64,
        /// The fitted offset at pH 7, mV.
        offset_mv: f64,
    },
}

impl core::fmt::Display for CalibrationError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::PointCount { count } => write!(f, "calibration needs 1 to {MAX_POINTS} points, got {count}"),
            Self::OutsideTable(e) => core::fmt::Display::fmt(e, f),
            Self::Millivolts { point, mv } => {
                write!(f, "calibration point {point}: {} mV is outside ±{MAX_POINT_MV} mV", Compact(*mv))
            }
            Self::SameBuffer { buffer } => write!(f, "calibration uses the {} buffer twice", buffer.name()),
            Self::TooClose { span_ph } => {
                write!(f, "calibration buffers span {} pH, less than {MIN_SPAN_PH} pH", Compact(*span_ph))
            }
            Self::Implausible { slope_mv_per_ph, offset_mv } => write!(
                f,
                "calibration gives slope {} mV/pH and offset {} mV: not a working electrode",
                Compact(*slope_mv_per_ph),
                Compact(*offset_mv)
            ),
        }
    }
}

impl core::error::Error for CalibrationError {}

/// Calibrates from one, two or three points (see the module docs for the model and the rule).
/// Computed in `f64`. Cost: at most 3 table look-ups, 3 duplicate comparisons and one pass of a
/// 3-term least-squares sum (every loop runs at most [`MAX_POINTS`] times).
pub fn calibrate<R: Real>(points: &[CalibrationPoint<R>]) -> Result<Calibration<R>, CalibrationError> {
    let count = points.len();
    let Some(first) = points.first().filter(|_| count <= MAX_POINTS) else {
        return Err(CalibrationError::PointCount { count });
    };
    let t_cal_c = first.temperature.celsius().to_f64();
    let t_cal_k = t_cal_c + KELVIN_OFFSET;
    // (abscissa, mV) per point; abscissa = (T_i/T_cal)·(pH_i − 7). At most MAX_POINTS rounds.
    let mut xy = [(0.0_f64, 0.0_f64); MAX_POINTS];
    let (mut lowest, mut highest) = (f64::INFINITY, f64::NEG_INFINITY);
    for (i, (p, slot)) in points.iter().zip(xy.iter_mut()).enumerate() {
        let celsius = p.temperature.celsius().to_f64();
        let ph = p.buffer.ph_f64(celsius).map_err(CalibrationError::OutsideTable)?;
        let mv = p.mv.to_f64();
        if !(mv.is_finite() && mv.abs() <= MAX_POINT_MV) {
            return Err(CalibrationError::Millivolts { point: i, mv });
        }
        // Duplicates among the earlier points: at most MAX_POINTS − 1 comparisons.
        if points.iter().take(i).any(|q| q.buffer == p.buffer) {
            return Err(CalibrationError::SameBuffer { buffer: p.buffer });
        }
        lowest = lowest.min(ph);
        highest = highest.max(ph);
        *slot = ((celsius + KELVIN_OFFSET) / t_cal_k * (ph - ISOPOTENTIAL_PH), mv);
    }
    let used = xy.get(..count).unwrap_or_default();
    let (slope, offset) = if count == 1 {
        let s = nernst::slope_mv_per_ph_f64(t_cal_c);
        let (x, y) = used.first().copied().unwrap_or_default();
        (s, y + s * x)
    } else {
        if highest - lowest < MIN_SPAN_PH {
            return Err(CalibrationError::TooClose { span_ph: highest - lowest });
        }
        least_squares(used)
    };
    let temperature = first.temperature;
    Calibration::new(R::from_f64(slope), R::from_f64(offset), temperature)
        .map_err(|_| CalibrationError::Implausible { slope_mv_per_ph: slope, offset_mv: offset })
}

/// The line `y = offset − slope·x` through the points by least squares (exact for two):
/// returns (slope, offset). NaN when the abscissas coincide (then refused as implausible).
fn least_squares(xy: &[(f64, f64)]) -> (f64, f64) {
    #[allow(clippy::cast_precision_loss, reason = "at most MAX_POINTS points")]
    let n = xy.len() as f64;
    let (sx, sy) = xy.iter().fold((0.0, 0.0), |(sx, sy), (x, y)| (sx + x, sy + y));
    let (mx, my) = (sx / n, sy / n);
    let (sxx, sxy) =
        xy.iter().fold((0.0, 0.0), |(sxx, sxy), (x, y)| (sxx + (x - mx) * (x - mx), sxy + (x - mx) * (y - my)));
    let slope = -sxy / sxx;
    (slope, my + slope * mx)
}

/// Limits a calibration must meet to be used.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Acceptance<R: Real> {
    min_slope_percent: R,
    max_slope_percent: R,
    max_abs_offset_mv: R,
}

impl<R: Real> Default for Acceptance<R> {
    /// Slope 95–105 % of Nernst, |offset at pH 7| ≤ 30 mV (common practice, no source).
    fn default() -> Self {
        Self {
            min_slope_percent: R::from_f64(95.0),
            max_slope_percent: R::from_f64(105.0),
            max_abs_offset_mv: R::from_f64(30.0),
        }
    }
}

impl<R: Real> Acceptance<R> {
    /// Checked limits: `min_slope_percent` 50–100 %, `max_slope_percent` 100–150 %,
    /// `max_abs_offset_mv` 0–200 mV.
    pub fn new(min_slope_percent: R, max_slope_percent: R, max_abs_offset_mv: R) -> Result<Self, InvalidSetting> {
        check("min_slope_percent", min_slope_percent, 50.0, 100.0)?;
        check("max_slope_percent", max_slope_percent, 100.0, 150.0)?;
        check("max_abs_offset_mv", max_abs_offset_mv, 0.0, 200.0)?;
        Ok(Self { min_slope_percent, max_slope_percent, max_abs_offset_mv })
    }

    /// The lowest slope accepted, % of Nernst.
    pub fn min_slope_percent(&self) -> R {
        self.min_slope_percent
    }

    /// The highest slope accepted, % of Nernst.
    pub fn max_slope_percent(&self) -> R {
        self.max_slope_percent
    }

    /// The largest |offset at pH 7| accepted, mV.
    pub fn max_abs_offset_mv(&self) -> R {
        self.max_abs_offset_mv
    }

    /// Judges a calibration against the limits (limits inclusive).
    pub fn judge(&self, calibration: &Calibration<R>) -> Judgement<R> {
        let slope_percent = calibration.slope_percent();
        let offset_mv = calibration.offset_mv();
        let slope_ok = slope_percent >= self.min_slope_percent && slope_percent <= self.max_slope_percent;
        let offset_ok = offset_mv.abs() <= self.max_abs_offset_mv;
        Judgement { accepted: slope_ok && offset_ok, slope_percent, offset_mv, slope_ok, offset_ok }
    }
}

/// The verdict on a calibration, with its numbers.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Judgement<R: Real> {
    /// `true` when both the slope and the offset are within the limits.
    pub accepted: bool,
    /// The slope, % of the Nernst slope.
    pub slope_percent: R,
    /// The offset at pH 7, mV.
    pub offset_mv: R,
    /// `true` when the slope is within the limits.
    pub slope_ok: bool,
    /// `true` when |offset| is within the limit.
    pub offset_ok: bool,
}

impl<R: Real> core::fmt::Display for Judgement<R> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let verdict = if self.accepted { "accepted" } else { "rejected" };
        write!(
            f,
            "calibration {verdict}: slope {} % of Nernst{}, offset {} mV at pH 7{}",
            Compact(self.slope_percent.to_f64()),
            if self.slope_ok { "" } else { " (out of limits)" },
            Compact(self.offset_mv.to_f64()),
            if self.offset_ok { "" } else { " (out of limits)" }
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn c<R: Real>(celsius: f64) -> Celsius<R> {
        Celsius::new(R::from_f64(celsius)).unwrap()
    }

    /// The Nernst slope written out again (SI 2019 exact constants: k_B/e), mV/pH.
    fn k(celsius: f64) -> f64 {
        10.0_f64.ln() * 1.380_649e-23 / 1.602_176_634e-19 * (celsius + 273.15) * 1000.0
    }

    /// A simulated electrode: `fraction` of Nernst, `e7` mV at pH 7, isopotential at pH 7.
    fn electrode(fraction: f64, e7: f64, ph: f64, celsius: f64) -> f64 {
        e7 - fraction * k(celsius) * (ph - 7.0)
    }

    fn assert_line<R: Real>(cal: &Calibration<R>, slope_mv_per_ph: f64, offset_mv: f64, tol_mv: f64) {
        assert!((cal.slope_mv_per_ph().to_f64() - slope_mv_per_ph).abs() < tol_mv, "{cal:?} vs {slope_mv_per_ph}");
        assert!((cal.offset_mv().to_f64() - offset_mv).abs() < tol_mv, "{cal:?} vs {offset_mv}");
    }

    fn point<R: Real>(buffer: Buffer, celsius: f64, mv: f64) -> CalibrationPoint<R> {
        CalibrationPoint { buffer, temperature: c(celsius), mv: R::from_f64(mv) }
    }

    fn one_point<R: Real>(tol: f64) {
        // Phosphate at 25 °C: pH 6.865 (Buck et al. 2002, IUPAC table).
        let mv = electrode(1.0, -12.0, 6.865, 25.0);
        let cal = calibrate(&[point::<R>(Buffer::Phosphate, 25.0, mv)]).unwrap();
        assert_line(&cal, k(25.0), -12.0, tol * 10.0);
        assert!((cal.slope_percent().to_f64() - 100.0).abs() < tol * 10.0);
    }

    #[test]
    fn one_point_keeps_the_nernst_slope_and_finds_the_offset() {
        one_point::<f64>(1e-10);
        one_point::<f32>(1e-4);
    }

    fn two_points<R: Real>(tol_mv: f64) {
        // KH phthalate at 20 °C (4.001) and borax at 30 °C (9.139), Buck et al. 2002.
        let (f, e7) = (0.97, 8.0);
        let pts = [
            point::<R>(Buffer::Phthalate, 20.0, electrode(f, e7, 4.001, 20.0)),
            point::<R>(Buffer::Borax, 30.0, electrode(f, e7, 9.139, 30.0)),
        ];
        let cal = calibrate(&pts).unwrap();
        assert_eq!(cal.temperature(), c(20.0));
        assert_line(&cal, f * k(20.0), e7, tol_mv);
        assert!((cal.slope_percent().to_f64() - 97.0).abs() < tol_mv * 2.0);
    }

    #[test]
    fn two_points_at_different_temperatures_recover_slope_and_offset() {
        two_points::<f64>(1e-9);
        two_points::<f32>(2e-3);
    }

    fn three_points<R: Real>(tol: f64) {
        // KHP 4.005, phosphate 6.865, borax 9.180 at 25 °C (Buck et al. 2002), with reading
        // errors of +0.6, −0.9 and +0.4 mV on a 98 % electrode with offset −5 mV.
        let phs = [4.005, 6.865, 9.180];
        let errs = [0.6, -0.9, 0.4];
        let mvs: [f64; 3] = core::array::from_fn(|i| electrode(0.98, -5.0, phs[i], 25.0) + errs[i]);
        let pts = [Buffer::Phthalate, Buffer::Phosphate, Buffer::Borax]
            .iter()
            .zip(mvs)
            .map(|(&b, mv)| point::<R>(b, 25.0, mv))
            .collect::<std::vec::Vec<_>>();
        let cal = calibrate(&pts).unwrap();
        // The textbook least-squares formulas on (pH, mV): b = (nΣxy − ΣxΣy)/(nΣx² − (Σx)²).
        let n = 3.0;
        let (sx, sy) = (phs.iter().sum::<f64>(), mvs.iter().sum::<f64>());
        let sxy: f64 = phs.iter().zip(&mvs).map(|(x, y)| x * y).sum();
        let sxx: f64 = phs.iter().map(|x| x * x).sum();
        let b = (n * sxy - sx * sy) / (n * sxx - sx * sx);
        let a = (sy - b * sx) / n;
        let (slope, e7) = (-b, a + b * 7.0);
        assert_line(&cal, slope, e7, tol);
        // And not the exact line: the reading errors moved it.
        assert!((slope - 0.98 * k(25.0)).abs() > 0.05);
    }

    #[test]
    fn three_points_give_the_least_squares_line() {
        three_points::<f64>(1e-9);
        three_points::<f32>(2e-3);
    }

    #[test]
    fn bad_point_sets_are_refused_with_their_numbers() {
        let p = |b, t, mv| point::<f64>(b, t, mv);
        assert_eq!(calibrate::<f64>(&[]), Err(CalibrationError::PointCount { count: 0 }));
        let four = [p(Buffer::Tetroxalate, 25.0, 300.0); 4];
        assert_eq!(calibrate(&four), Err(CalibrationError::PointCount { count: 4 }));
        let same = [p(Buffer::Phosphate, 20.0, 5.0), p(Buffer::Borax, 20.0, -130.0), p(Buffer::Phosphate, 30.0, 6.0)];
        assert_eq!(calibrate(&same), Err(CalibrationError::SameBuffer { buffer: Buffer::Phosphate }));
        // Borax 9.180 and carbonate 10.012 at 25 °C (Buck et al. 2002): 0.832 pH apart.
        let close = [p(Buffer::Borax, 25.0, -130.0), p(Buffer::Carbonate, 25.0, -179.0)];
        match calibrate(&close) {
            Err(CalibrationError::TooClose { span_ph }) => assert!((span_ph - (10.012 - 9.180)).abs() < 1e-12),
            other => panic!("{other:?}"),
        }
        let hot = [p(Buffer::Borax, 55.0, -130.0)];
        assert_eq!(
            calibrate(&hot),
            Err(CalibrationError::OutsideTable(OutsideTable { buffer: Buffer::Borax, celsius: 55.0 }))
        );
        let wild = [p(Buffer::Phthalate, 25.0, 170.0), p(Buffer::Borax, 25.0, 2500.0)];
        assert_eq!(calibrate(&wild), Err(CalibrationError::Millivolts { point: 1, mv: 2500.0 }));
        assert!(matches!(
            calibrate(&[p(Buffer::Borax, 25.0, f64::NAN)]),
            Err(CalibrationError::Millivolts { point: 0, mv }) if mv.is_nan()
        ));
        // Leads swapped: the potential rises with pH, the slope comes out negative.
        let swapped = [p(Buffer::Phthalate, 25.0, -176.0), p(Buffer::Borax, 25.0, 128.0)];
        match calibrate(&swapped) {
            Err(e @ CalibrationError::Implausible { slope_mv_per_ph, .. }) => {
                assert!((slope_mv_per_ph + 304.0 / (9.180 - 4.005)).abs() < 1e-9);
                assert!(std::format!("{e}").contains("not a working electrode"));
            }
            other => panic!("{other:?}"),
        }
    }

    fn acceptance<R: Real>() {
        let t = c::<R>(25.0);
        let nernst = k(25.0);
        let cal = |percent: f64, offset: f64| {
            Calibration::new(R::from_f64(percent / 100.0 * nernst), R::from_f64(offset), t).unwrap()
        };
        let limits = Acceptance::<R>::default();
        let ok = limits.judge(&cal(100.0, 0.0));
        assert!(ok.accepted && ok.slope_ok && ok.offset_ok);
        for (percent, offset, slope_ok, offset_ok) in [
            (95.5, 29.0, true, true),
            (94.5, 0.0, false, true),
            (105.5, 0.0, false, true),
            (99.0, 31.0, true, false),
            (99.0, -31.0, true, false),
            (90.0, 45.0, false, false),
        ] {
            let j = limits.judge(&cal(percent, offset));
            assert_eq!((j.slope_ok, j.offset_ok, j.accepted), (slope_ok, offset_ok, slope_ok && offset_ok), "{j:?}");
            assert!((j.slope_percent.to_f64() - percent).abs() < 1e-3, "{j:?}");
            assert!((j.offset_mv.to_f64() - offset).abs() < 1e-4, "{j:?}");
        }
        let tight = Acceptance::new(R::from_f64(98.0), R::from_f64(102.0), R::from_f64(10.0)).unwrap();
        assert!(!tight.judge(&cal(97.0, 0.0)).accepted && tight.judge(&cal(99.0, 9.0)).accepted);
    }

    #[test]
    fn acceptance_limits_judge_slope_and_offset() {
        acceptance::<f64>();
        acceptance::<f32>();
        let j = Acceptance::<f64>::default().judge(&Calibration::new(54.0, 35.0, Celsius::standard()).unwrap());
        let text = std::format!("{j}");
        assert!(text.starts_with("calibration rejected: slope 91.2") && text.contains("35 mV at pH 7 (out of limits)"));
        assert_eq!(Acceptance::new(40.0, 105.0, 30.0), Err(InvalidSetting { name: "min_slope_percent", value: 40.0 }));
        assert_eq!(Acceptance::new(95.0, 99.0, 30.0), Err(InvalidSetting { name: "max_slope_percent", value: 99.0 }));
        assert!(Acceptance::new(95.0, 105.0, f64::NAN).is_err());
        assert!(Calibration::new(-59.0, 0.0, Celsius::standard()).is_err());
        assert!(Calibration::new(59.0, 1001.0, Celsius::standard()).is_err());
    }

    fn compensation<R: Real>(tol: f64) {
        // 25 °C calibration, read at 50 °C: slope × 323.15/298.15; pH 7 reads E₇ at any T.
        let cal = Calibration::new(R::from_f64(58.0), R::from_f64(4.0), c(25.0)).unwrap();
        let hot = c::<R>(50.0);
        assert!((cal.slope_at(hot).to_f64() - 58.0 * 323.15 / 298.15).abs() < tol * 100.0);
        assert!((cal.ph(R::from_f64(4.0), hot).to_f64() - 7.0).abs() < tol);
        let mv = 4.0 - 58.0 * 323.15 / 298.15 * (9.5 - 7.0);
        assert!((cal.ph(R::from_f64(mv), hot).to_f64() - 9.5).abs() < tol);
        assert!((cal.mv(R::from_f64(9.5), hot).to_f64() - mv).abs() < tol * 100.0);
        let ideal = Calibration::<R>::ideal();
        assert!((ideal.slope_percent().to_f64() - 100.0).abs() < tol * 10.0);
    }

    #[test]
    fn temperature_compensation_scales_the_slope_about_ph_7() {
        compensation::<f64>(1e-12);
        compensation::<f32>(1e-5);
    }

    proptest! {
        #[test]
        fn mv_to_ph_to_mv_round_trips(
            slope in 30.0..90.0_f64, offset in -100.0..100.0_f64, t_cal in 0.0..50.0_f64,
            t in 0.0..100.0_f64, mv in -600.0..600.0_f64,
        ) {
            let cal = Calibration::new(slope, offset, Celsius::new(t_cal).unwrap()).unwrap();
            let temp = Celsius::new(t).unwrap();
            let back = cal.mv(cal.ph(mv, temp), temp);
            prop_assert!((back - mv).abs() < 1e-9, "{mv} → {back}");
            let cal32 = Calibration::new(slope as f32, offset as f32, Celsius::new(t_cal as f32).unwrap()).unwrap();
            let temp32 = Celsius::new(t as f32).unwrap();
            let back32 = cal32.mv(cal32.ph(mv as f32, temp32), temp32);
            prop_assert!((f64::from(back32) - mv).abs() < 1e-3, "{mv} → {back32}");
        }
    }
}
