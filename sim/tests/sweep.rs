//! The robustness sweep: reproducible perturbations, thread-count independence, replay of the
//! worst run, and refusals.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

use std::sync::atomic::{AtomicU32, Ordering};

use phdose_sim::run::{Loop, run};
use phdose_sim::scenario::{Scenario, plating_rinse};
use phdose_sim::sweep::{MAX_RUNS, Percentiles, SweepError, SweepReport, Uncertainties, perturb, sweep};

/// The built-in scenario, shortened to half an hour so the sweeps stay fast in debug builds.
fn short() -> Scenario {
    let mut s = plating_rinse();
    s.run.duration_s = 1800.0;
    s
}

/// Influent substances of the built-in scenario that buffer, and those that do not.
const BUFFERING: [&str; 2] = ["NaHCO3", "Na2HPO4"];
const STRONG: [&str; 2] = ["H2SO4", "HCl"];

#[test]
fn perturb_is_deterministic_and_stays_within_its_spreads() {
    let s = short();
    let u = Uncertainties::default();
    let nominal = s.plant.influent.clone().unwrap();
    let mut volumes = Vec::new();
    for seed in 0..200_u64 {
        let a = perturb(&s, &u, seed).unwrap();
        let b = perturb(&s, &u, seed).unwrap();
        assert_eq!(a, b, "seed {seed}");
        assert_eq!(a.run.seed, seed);

        let within = |value: f64, nominal: f64, spread: f64, what: &str| {
            let f = value / nominal;
            assert!(f >= 1.0 - spread - 1e-12 && f <= 1.0 + spread + 1e-12, "seed {seed}: {what} factor {f}");
        };
        within(a.plant.volume_l, s.plant.volume_l, u.volume_fraction, "volume");
        within(a.plant.probe_lag_s, s.plant.probe_lag_s, u.probe_lag_fraction, "probe lag");
        within(a.plant.pump_delivery_factor, s.plant.pump_delivery_factor, u.pump_delivery_fraction, "pump");

        let influent = a.plant.influent.as_ref().unwrap();
        assert_eq!(influent.keys().collect::<Vec<_>>(), nominal.keys().collect::<Vec<_>>());
        for f in STRONG {
            assert_eq!(influent[f], nominal[f], "seed {seed}: {f} is a strong acid and must not move");
        }
        // One common factor for every buffering substance.
        let factors: Vec<f64> = BUFFERING.iter().map(|f| influent[*f] / nominal[*f]).collect();
        within(influent[BUFFERING[0]], nominal[BUFFERING[0]], u.influent_buffer_fraction, "buffer");
        assert!((factors[0] - factors[1]).abs() < 1e-12, "seed {seed}: {factors:?}");

        // Everything the spreads do not cover is copied.
        let mut back = a.clone();
        back.plant.volume_l = s.plant.volume_l;
        back.plant.probe_lag_s = s.plant.probe_lag_s;
        back.plant.pump_delivery_factor = s.plant.pump_delivery_factor;
        back.plant.influent = s.plant.influent.clone();
        back.run.seed = s.run.seed;
        assert_eq!(back, s, "seed {seed}");
        volumes.push(a.plant.volume_l);
    }
    // Different seeds give different plants, and the draws cover their range.
    let mut distinct = volumes.clone();
    distinct.sort_by(f64::total_cmp);
    distinct.dedup();
    assert_eq!(distinct.len(), volumes.len(), "two seeds drew the same volume");
    let (lo, hi) = (distinct[0] / s.plant.volume_l, distinct[distinct.len() - 1] / s.plant.volume_l);
    assert!(lo < 0.85 && hi > 1.15, "volume factors only span {lo}..{hi}");
}

#[test]
fn perturb_scales_the_configured_influent_when_the_plant_has_none() {
    let mut s = short();
    s.plant.influent = None;
    let configured: Vec<(String, f64)> =
        s.skid.influent.dissolved.iter().map(|(k, v)| (k.as_str().to_owned(), f64::from(*v))).collect();
    assert!(!configured.is_empty());
    let u = Uncertainties { influent_buffer_fraction: 0.5, ..Uncertainties::NONE };
    let a = perturb(&s, &u, 7).unwrap();
    let influent = a.plant.influent.expect("the drawn influent is written into the plant");
    let mut scaled = 0;
    for (formula, v) in &configured {
        let f = influent[formula] / v;
        let buffer = BUFFERING.contains(&formula.as_str());
        if buffer {
            assert!((f - 1.0).abs() > 1e-9 && (0.5..=1.5).contains(&f), "{formula}: {f}");
            scaled += 1;
        } else if STRONG.contains(&formula.as_str()) {
            assert_eq!(f, 1.0, "{formula}");
        }
    }
    assert!(scaled > 0, "the configured influent {configured:?} has no buffering substance to test with");
}

#[test]
fn buffering_is_told_by_the_acid_base_system() {
    let mut s = short();
    let influent = [("NaCl", 0.01), ("Na2SO4", 0.002), ("(NH4)2SO4", 0.001), ("CH3COOH", 0.001), ("NaOH", 1e-4)]
        .into_iter()
        .map(|(k, v)| (k.to_owned(), v))
        .collect();
    s.plant.influent = Some(influent);
    let u = Uncertainties { influent_buffer_fraction: 0.9, ..Uncertainties::NONE };
    let a = perturb(&s, &u, 3).unwrap();
    let (before, after) = (s.plant.influent.as_ref().unwrap(), a.plant.influent.as_ref().unwrap());
    for f in ["NaCl", "Na2SO4", "NaOH"] {
        assert_eq!(after[f], before[f], "{f}");
    }
    for f in ["(NH4)2SO4", "CH3COOH"] {
        assert_ne!(after[f], before[f], "{f}");
    }

    s.plant.influent.as_mut().unwrap().insert("NotASubstance".into(), 0.001);
    assert_eq!(perturb(&s, &u, 3), Err(SweepError::UnknownSubstance("NotASubstance".into())));
}

#[test]
fn zero_spreads_give_back_the_nominal_scenario_but_the_seed() {
    for mut s in [short(), {
        let mut s = short();
        s.plant.influent = None;
        s
    }] {
        s.run.seed = 1;
        for seed in [0, 2, 99, u64::MAX] {
            let mut a = perturb(&s, &Uncertainties::NONE, seed).unwrap();
            assert_eq!(a.run.seed, seed);
            a.run.seed = 1;
            assert_eq!(a, s, "seed {seed}");
        }
    }
}

#[test]
fn uncertainties_default_and_serde() {
    let d = Uncertainties::default();
    assert_eq!(
        (d.influent_buffer_fraction, d.probe_lag_fraction, d.pump_delivery_fraction, d.volume_fraction),
        (0.3, 0.5, 0.05, 0.2)
    );
    assert!(d.validate().is_ok());
    let json_like = serde_value_roundtrip(&d);
    assert_eq!(json_like, d);
}

/// Round trip through serde's own derive (a field-by-field token check would need another
/// crate): serialise into the field list and back via `deserialize` from a map.
fn serde_value_roundtrip(u: &Uncertainties) -> Uncertainties {
    use serde::Deserialize;
    use serde::de::value::{Error, MapDeserializer};
    let fields = [
        ("influent_buffer_fraction", u.influent_buffer_fraction),
        ("probe_lag_fraction", u.probe_lag_fraction),
        ("pump_delivery_fraction", u.pump_delivery_fraction),
        ("volume_fraction", u.volume_fraction),
    ];
    let de = MapDeserializer::<_, Error>::new(fields.into_iter());
    let back = Uncertainties::deserialize(de).unwrap();
    // Every field may be omitted; unknown fields are refused.
    let empty = MapDeserializer::<_, Error>::new(std::iter::empty::<(&str, f64)>());
    assert_eq!(Uncertainties::deserialize(empty).unwrap(), Uncertainties::default());
    let partial = MapDeserializer::<_, Error>::new([("volume_fraction", 0.1)].into_iter());
    assert_eq!(
        Uncertainties::deserialize(partial).unwrap(),
        Uncertainties { volume_fraction: 0.1, ..Uncertainties::default() }
    );
    let unknown = MapDeserializer::<_, Error>::new([("volume_spread", 0.1)].into_iter());
    assert!(Uncertainties::deserialize(unknown).is_err());
    back
}

fn sweep_in_pool(threads: usize, s: &Scenario, u: &Uncertainties, runs: u32, first_seed: u64) -> (SweepReport, u32) {
    let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
    let done = AtomicU32::new(0);
    let report = pool
        .install(|| {
            sweep(s, u, runs, first_seed, &|| {
                done.fetch_add(1, Ordering::Relaxed);
            })
        })
        .unwrap();
    (report, done.into_inner())
}

#[test]
fn the_report_does_not_depend_on_the_thread_count_and_replays_the_worst_run() {
    let s = short();
    let u = Uncertainties::default();
    let runs = 12;
    let first_seed = 40;
    let (one, done_one) = sweep_in_pool(1, &s, &u, runs, first_seed);
    let (two, done_two) = sweep_in_pool(2, &s, &u, runs, first_seed);
    assert_eq!(one, two);
    assert_eq!((done_one, done_two), (runs, runs));

    // The report is about these runs.
    assert_eq!((one.runs, one.first_seed), (runs, first_seed));
    for summary in [&one.configured, &one.baseline] {
        assert_eq!(summary.completed + summary.failed, runs);
        assert!(summary.runs_with_trip <= summary.completed);
        if summary.completed > 0 {
            for p in [summary.iae_ph_s, summary.time_in_band_fraction, summary.max_abs_error_ph, summary.reagent_l] {
                let p = p.unwrap();
                assert!(p.p5 <= p.p50 && p.p50 <= p.p95, "{p:?}");
            }
        }
    }
    // The summaries are of the listed runs.
    let configured: Vec<_> = one.by_seed.iter().filter_map(|r| r.configured).collect();
    let baseline: Vec<_> = one.by_seed.iter().filter_map(|r| r.baseline).collect();
    for (summary, scores) in [(&one.configured, &configured), (&one.baseline, &baseline)] {
        assert_eq!(summary.completed as usize, scores.len());
        assert_eq!(summary.runs_with_trip as usize, scores.iter().filter(|r| r.trips > 0).count());
        assert_eq!(summary.iae_ph_s, Percentiles::of(scores.iter().map(|r| r.iae_ph_s).collect()));
        assert_eq!(summary.reagent_l, Percentiles::of(scores.iter().map(|r| r.reagent_l).collect()));
        assert_eq!(
            summary.time_in_band_fraction,
            Percentiles::of(scores.iter().map(|r| r.time_in_band_fraction).collect())
        );
        assert_eq!(summary.max_abs_error_ph, Percentiles::of(scores.iter().map(|r| r.max_abs_error_ph).collect()));
    }
    assert_eq!(one.failures.len(), (one.configured.failed + one.baseline.failed) as usize, "{:?}", one.failures);

    // The worst run: its seed is in range, its IAE is the highest (P95 cannot exceed it), and it
    // replays bit for bit from its seed alone.
    let worst = one.worst.as_ref().expect("some configured run completed");
    assert!((first_seed..first_seed + u64::from(runs)).contains(&worst.seed));
    assert!(one.configured.iae_ph_s.unwrap().p95 <= worst.configured.iae_ph_s);
    let replay = run(&perturb(&s, &u, worst.seed).unwrap(), Loop::Configured, None).unwrap();
    assert_eq!(replay.iae_ph_s.to_bits(), worst.configured.iae_ph_s.to_bits());
    // Every seed is listed, in order, with the scores a replay gives; the worst run is the
    // highest of every completed run, the lowest seed on a tie.
    let seeds: Vec<u64> = one.by_seed.iter().map(|r| r.seed).collect();
    assert_eq!(seeds, (first_seed..first_seed + u64::from(runs)).collect::<Vec<_>>());
    for listed in &one.by_seed {
        let seed = listed.seed;
        let replayed = run(&perturb(&s, &u, seed).unwrap(), Loop::Configured, None);
        assert_eq!(replayed.is_ok(), listed.configured.is_some(), "seed {seed}");
        let Ok(t) = replayed else { continue };
        assert_eq!(t.iae_ph_s.to_bits(), listed.configured.unwrap().iae_ph_s.to_bits(), "seed {seed}");
        assert!(
            t.iae_ph_s < worst.configured.iae_ph_s || (t.iae_ph_s == worst.configured.iae_ph_s && seed >= worst.seed),
            "seed {seed}: IAE {} vs worst {} (seed {})",
            t.iae_ph_s,
            worst.configured.iae_ph_s,
            worst.seed
        );
    }
    // The baseline's KPIs are those of the baseline on the same plant.
    let base = run(&perturb(&s, &u, worst.seed).unwrap(), one.tuning.as_loop(), None).unwrap();
    assert_eq!(base.iae_ph_s.to_bits(), worst.baseline.as_ref().unwrap().iae_ph_s.to_bits());
    // The perturbations matter: the runs do not all score the same.
    let iae = one.configured.iae_ph_s.unwrap();
    assert!(iae.p5 < iae.p95, "{iae:?}");
}

#[test]
fn nearest_rank_percentiles() {
    assert_eq!(Percentiles::of(Vec::new()), None);
    let one = Percentiles::of(vec![3.0]).unwrap();
    assert_eq!((one.p5, one.p50, one.p95), (3.0, 3.0, 3.0));
    // 1..=20 shuffled: ranks ⌈0.05·20⌉ = 1, ⌈0.5·20⌉ = 10, ⌈0.95·20⌉ = 19.
    let v: Vec<f64> = (1..=20).map(|i| f64::from((i * 7) % 20 + 1)).collect();
    let p = Percentiles::of(v).unwrap();
    assert_eq!((p.p5, p.p50, p.p95), (1.0, 10.0, 19.0));
    // 1..=10: ranks 1, 5, 10.
    let p = Percentiles::of((1..=10).rev().map(f64::from).collect()).unwrap();
    assert_eq!((p.p5, p.p50, p.p95), (1.0, 5.0, 10.0));
}

#[test]
fn failed_runs_are_reported_not_panicked() {
    // A step longer than the tick fails every run, after the (run-independent) tuning worked.
    let mut s = short();
    s.run.step_s = f64::from(s.skid.control.tick_s) * 2.0;
    let report = sweep(&s, &Uncertainties::default(), 3, 5, &|| {}).unwrap();
    assert_eq!((report.configured.completed, report.configured.failed), (0, 3));
    assert_eq!((report.baseline.completed, report.baseline.failed), (0, 3));
    assert_eq!(report.configured.iae_ph_s, None);
    assert_eq!(report.worst, None);
    assert!(report.by_seed.iter().all(|r| r.configured.is_none() && r.baseline.is_none()));
    let seeds: Vec<u64> = report.failures.iter().map(|f| f.seed).collect();
    assert_eq!(seeds, [5, 5, 6, 6, 7, 7]);
    assert!(report.failures.iter().all(|f| f.message.contains("step_s")), "{:?}", report.failures);
}

#[test]
fn invalid_spreads_and_run_counts_are_refused() {
    let s = short();
    let ok = Uncertainties::default();
    for (field, value) in [
        ("influent_buffer_fraction", -0.1),
        ("probe_lag_fraction", 0.96),
        ("pump_delivery_fraction", f64::NAN),
        ("volume_fraction", f64::INFINITY),
    ] {
        let mut u = ok;
        match field {
            "influent_buffer_fraction" => u.influent_buffer_fraction = value,
            "probe_lag_fraction" => u.probe_lag_fraction = value,
            "pump_delivery_fraction" => u.pump_delivery_fraction = value,
            _ => u.volume_fraction = value,
        }
        for e in [perturb(&s, &u, 1).unwrap_err(), sweep(&s, &u, 1, 1, &|| {}).unwrap_err()] {
            match e {
                SweepError::Spread { field: f, value: v } => {
                    assert_eq!(f, field);
                    assert!(v.to_bits() == value.to_bits(), "{v} vs {value}");
                }
                other => panic!("{field}: {other:?}"),
            }
        }
    }
    // The edges are accepted.
    let edges = Uncertainties {
        influent_buffer_fraction: 0.0,
        probe_lag_fraction: 0.95,
        pump_delivery_fraction: 0.95,
        volume_fraction: 0.0,
    };
    assert!(perturb(&s, &edges, 1).is_ok());

    let called = AtomicU32::new(0);
    let count = || {
        called.fetch_add(1, Ordering::Relaxed);
    };
    assert_eq!(sweep(&s, &ok, 0, 1, &count), Err(SweepError::Runs(0)));
    assert_eq!(sweep(&s, &ok, MAX_RUNS + 1, 1, &count), Err(SweepError::Runs(MAX_RUNS + 1)));
    assert_eq!(sweep(&s, &ok, 2, u64::MAX, &count), Err(SweepError::SeedRange { first_seed: u64::MAX, runs: 2 }));
    assert_eq!(called.load(Ordering::Relaxed), 0);
    // The last seed itself is usable.
    assert_eq!(sweep(&s, &ok, 1, u64::MAX, &count).map(|r| r.runs), Ok(1));
    assert_eq!(called.load(Ordering::Relaxed), 1);
}
