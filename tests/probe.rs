//! The probe layer against the published buffer table: a simulated electrode is calibrated in
//! standard buffers and then reads other buffers at other temperatures; the read-back pH is
//! compared with the table (its values transcribed again here, independently of the crate's
//! copy in `src/probe/buffers.rs`).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use phdose::Real;
use phdose::probe::buffers::Buffer;
use phdose::probe::calibration::{Acceptance, CalibrationPoint, calibrate};
use phdose::probe::monitor::MonitorSettings;
use phdose::probe::vote::{Selection, VoteSettings, vote};
use phdose::probe::{Probe, nernst};
use phdose::units::Celsius;

/// pH(S) of standard buffers, (°C, buffer, pH): Buck et al. 2002, "Measurement of pH.
/// Definition, standards, and procedures (IUPAC Recommendations 2002)", Pure Appl. Chem. 74,
/// 2169 (NIST values), a selection of rows.
const IUPAC_2002: [(f64, Buffer, f64); 20] = [
    (0.0, Buffer::Phthalate, 4.000),
    (0.0, Buffer::Phosphate, 6.984),
    (0.0, Buffer::Borax, 9.464),
    (0.0, Buffer::Carbonate, 10.317),
    (10.0, Buffer::Tetroxalate, 1.670),
    (10.0, Buffer::Phosphate, 6.923),
    (10.0, Buffer::Carbonate, 10.179),
    (20.0, Buffer::Phthalate, 4.001),
    (20.0, Buffer::Borax, 9.225),
    (25.0, Buffer::Tetroxalate, 1.679),
    (25.0, Buffer::Phthalate, 4.005),
    (25.0, Buffer::Phosphate, 6.865),
    (25.0, Buffer::Borax, 9.180),
    (25.0, Buffer::Carbonate, 10.012),
    (35.0, Buffer::Phosphate, 6.844),
    (40.0, Buffer::Phosphate, 6.838),
    (40.0, Buffer::Carbonate, 9.889),
    (50.0, Buffer::Tetroxalate, 1.707),
    (50.0, Buffer::Phthalate, 4.050),
    (50.0, Buffer::Borax, 9.010),
];

fn table(celsius: f64, buffer: Buffer) -> f64 {
    IUPAC_2002.iter().find(|(t, b, _)| *t == celsius && *b == buffer).map(|(_, _, ph)| *ph).unwrap()
}

fn c<R: Real>(celsius: f64) -> Celsius<R> {
    Celsius::new(R::from_f64(celsius)).unwrap()
}

/// The Nernst slope written out (SI 2019 exact constants, k_B/e), mV/pH.
fn k(celsius: f64) -> f64 {
    10.0_f64.ln() * 1.380_649e-23 / 1.602_176_634e-19 * (celsius + 273.15) * 1000.0
}

/// A simulated electrode: `fraction` of the Nernst slope, `e_iso` mV at the isopotential pH.
#[derive(Clone, Copy)]
struct Electrode {
    fraction: f64,
    e_iso: f64,
    ph_iso: f64,
}

impl Electrode {
    fn mv(self, ph: f64, celsius: f64) -> f64 {
        self.e_iso - self.fraction * k(celsius) * (ph - self.ph_iso)
    }
}

/// Calibrates on `points` (temperature, buffer), reads every buffer of `IUPAC_2002` not used
/// for the calibration, checks each error against `expected(°C, pH)` within `tol` and returns
/// the worst |read-back − table|.
fn read_back<R: Real>(
    electrode: Electrode,
    points: &[(f64, Buffer)],
    expected: impl Fn(f64, f64) -> f64,
    tol: f64,
) -> f64 {
    let pts: Vec<CalibrationPoint<R>> = points
        .iter()
        .map(|&(t, b)| CalibrationPoint { buffer: b, temperature: c(t), mv: R::from_f64(electrode.mv(table(t, b), t)) })
        .collect();
    let cal = calibrate(&pts).unwrap();
    let judgement = Acceptance::default().judge(&cal);
    assert!(judgement.accepted, "{judgement}");
    let mut worst = 0.0_f64;
    for &(t, b, ph) in IUPAC_2002.iter().filter(|(t, b, _)| !points.contains(&(*t, *b))) {
        let got = cal.ph(R::from_f64(electrode.mv(ph, t)), c(t)).to_f64();
        println!("{:>3}: {t:>4} °C {:<30} table {ph:.3}, read {got:.5}, error {:+.2e}", R::NAME, b.name(), got - ph);
        assert!((got - ph - expected(t, ph)).abs() < tol, "{t} °C {b:?}: {got} vs {ph}");
        worst = worst.max((got - ph).abs());
    }
    println!("{}: worst |error| {worst:.2e} ({} points)", R::NAME, points.len());
    worst
}

#[test]
fn calibrated_electrode_reads_the_iupac_buffers_back_at_other_temperatures() {
    let electrode = Electrode { fraction: 0.975, e_iso: 11.0, ph_iso: 7.0 };
    let one = [(25.0, Buffer::Phosphate)];
    let two = [(25.0, Buffer::Phosphate), (25.0, Buffer::Borax)];
    let three = [(20.0, Buffer::Phthalate), (25.0, Buffer::Phosphate), (50.0, Buffer::Borax)];
    // Two and three points find the electrode's line exactly: what is left is rounding.
    let exact = |_: f64, _: f64| 0.0;
    for points in [&two[..], &three[..]] {
        let worst64 = read_back::<f64>(electrode, points, exact, 1e-10);
        let worst32 = read_back::<f32>(electrode, points, exact, 5e-5);
        println!("{} points: worst |error| f64 {worst64:.1e}, f32 {worst32:.1e}", points.len());
    }
    // One point keeps the Nernst slope. For an electrode of slope fraction f the reading is off
    // by (1 − f)·((T_cal/T)·(pH_cal − 7) − (pH − 7)) (calc from the two lines): checked per
    // buffer; the worst is tetroxalate, 5.2 pH from the calibration buffer.
    let one_point = |t: f64, ph: f64| 0.025 * (298.15 / (t + 273.15) * (6.865 - 7.0) - (ph - 7.0));
    let worst = read_back::<f64>(electrode, &one, one_point, 1e-10);
    assert!(worst > 0.1, "a 97.5 % electrode on one point must read tetroxalate visibly wrong: {worst}");
    read_back::<f32>(electrode, &one, one_point, 5e-5);
    let ideal = Electrode { fraction: 1.0, ..electrode };
    read_back::<f64>(ideal, &one, exact, 1e-10);
}

#[test]
fn interpolated_buffer_values_calibrate_between_table_rows() {
    // Phosphate and borax at 37 °C: linear between the 35 and 40 °C rows of Buck et al. 2002
    // (phosphate 6.844 / 6.838, borax 9.102 / 9.068), interpolated here.
    let phosphate = 6.844 + 0.4 * (6.838 - 6.844);
    let borax = 9.102 + 0.4 * (9.068 - 9.102);
    let t = c::<f64>(37.0);
    assert!((Buffer::Phosphate.ph(t).unwrap() - phosphate).abs() < 1e-12);
    assert!((Buffer::Borax.ph(t).unwrap() - borax).abs() < 1e-12);
    let electrode = Electrode { fraction: 0.99, e_iso: -4.0, ph_iso: 7.0 };
    let pts = [
        CalibrationPoint { buffer: Buffer::Phosphate, temperature: t, mv: electrode.mv(phosphate, 37.0) },
        CalibrationPoint { buffer: Buffer::Borax, temperature: t, mv: electrode.mv(borax, 37.0) },
    ];
    let cal = calibrate(&pts).unwrap();
    assert!((cal.slope_percent() - 99.0).abs() < 1e-9 && (cal.offset_mv() + 4.0).abs() < 1e-9, "{cal:?}");
    // The slope at 37 °C is 99 % of the Nernst slope at 37 °C (formula in this file).
    assert!((cal.slope_mv_per_ph() - 0.99 * k(37.0)).abs() < 1e-9);
    assert!((nernst::slope_mv_per_ph(t) - k(37.0)).abs() < 1e-12);
}

#[test]
fn isopotential_point_away_from_ph_7_costs_the_predicted_error() {
    // An electrode whose lines cross at pH 6.5: calibrated at 25 °C, read at 5 and 45 °C. The
    // reading is off by (pH_iso − 7)·(T_cal − T)/T (derived from the two lines, calc).
    let electrode = Electrode { fraction: 1.0, e_iso: 20.0, ph_iso: 6.5 };
    let pts: Vec<CalibrationPoint<f64>> = [Buffer::Phthalate, Buffer::Borax]
        .iter()
        .map(|&b| CalibrationPoint { buffer: b, temperature: c(25.0), mv: electrode.mv(table(25.0, b), 25.0) })
        .collect();
    let cal = calibrate(&pts).unwrap();
    for (t, b) in
        [(0.0, Buffer::Phosphate), (10.0, Buffer::Carbonate), (40.0, Buffer::Phosphate), (50.0, Buffer::Borax)]
    {
        let ph = table(t, b);
        let got = cal.ph(electrode.mv(ph, t), c(t));
        let predicted = (6.5 - 7.0) * (298.15 - (t + 273.15)) / (t + 273.15);
        println!("isopotential 6.5: {t} °C {} error {:+.4} pH, predicted {predicted:+.4}", b.name(), got - ph);
        assert!((got - ph - predicted).abs() < 1e-9);
    }
}

#[test]
fn three_probes_from_millivolts_to_one_ph() {
    // Three electrodes in one tank at 31 °C (our own scenario: a neutralisation tank of the
    // fictional plating shop), each with its own calibration; the third one's lead breaks.
    let t = 31.0;
    let electrodes = [
        Electrode { fraction: 0.98, e_iso: 6.0, ph_iso: 7.0 },
        Electrode { fraction: 1.01, e_iso: -9.0, ph_iso: 7.0 },
        Electrode { fraction: 0.96, e_iso: 15.0, ph_iso: 7.0 },
    ];
    let mut probes: Vec<Probe<f32>> = electrodes
        .iter()
        .map(|e| {
            let pts: Vec<CalibrationPoint<f32>> = [Buffer::Phosphate, Buffer::Borax]
                .iter()
                .map(|&b| {
                    let ph = table(25.0, b);
                    CalibrationPoint { buffer: b, temperature: c(25.0), mv: e.mv(ph, 25.0) as f32 }
                })
                .collect();
            Probe::new(calibrate(&pts).unwrap(), MonitorSettings::default())
        })
        .collect();
    let tank_ph = |k: usize| 7.2 + 0.001 * k as f64;
    let settings = VoteSettings::default();
    for k in 0..30 {
        let broken = k >= 20;
        let readings: Vec<_> = probes
            .iter_mut()
            .zip(&electrodes)
            .enumerate()
            .map(|(i, (p, e))| {
                let mv = if broken && i == 2 { 900.0 } else { e.mv(tank_ph(k), t) };
                p.tick(1.0, mv as f32, c(t))
            })
            .collect();
        let v = vote(&readings, &settings).unwrap();
        let err = f64::from(v.ph.unwrap()) - tank_ph(k);
        assert!(err.abs() < 1e-4, "tick {k}: {v:?}");
        assert_eq!(v.disagreement, None);
        if broken {
            assert_eq!((v.selection, v.used), (Selection::Mean, [true, true, false]));
            assert_eq!(v.faults[2].map(|f| f.code()), Some(1));
        } else {
            assert!(matches!(v.selection, Selection::Median(_)));
        }
    }
}

#[test]
fn built_in_table_matches_this_transcription() {
    for (t, b, ph) in IUPAC_2002 {
        let got64 = b.ph(c::<f64>(t)).unwrap();
        let got32 = f64::from(b.ph(c::<f32>(t)).unwrap());
        assert_eq!(got64, ph, "{t} °C {}", b.name());
        assert!((got32 - ph).abs() < 1e-6, "{t} °C {}", b.name());
    }
}
