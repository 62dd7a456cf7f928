//! What `simulate` prints and writes: the KPI table, the JSON document, the CSV trajectories and
//! the stacked-panel figure.

use std::fmt::Write as _;

use phdose::control::supervisor::TripReason;
use phdose_sim::baseline::Tuning;
use phdose_sim::kpi::Kpis;
use phdose_sim::run::Trajectory;
use plotters::style::RGBColor;
use serde::Serialize;

use super::{Outcome, Simulation};
use crate::cli::format::{fixed, percent, sig};
use crate::cli::{CliError, json as json_io, layout};
use crate::plot::{BLUE, Corner, Figure, LegendAt, Marker, MarkerSet, Panel, Series, Style};

/// The caution under every readable simulation.
pub const SIM_CAUTION: &str = "Caution: a simulation is a model of a model. It does not replace commissioning on the real tank \
with the interlocks\n(flow switch, independent pH cut-outs, manual reset) wired and tested; see SAFETY.md.";

/// Grey of the baseline's curves.
const GREY: RGBColor = RGBColor(140, 140, 140);
/// Dark green of the setpoint and band lines.
const GREEN: RGBColor = RGBColor(0, 120, 60);
/// Red of state-change markers.
const RED: RGBColor = RGBColor(200, 30, 30);

/// Name of a supervisor state code (`State::code`).
fn state_name(code: u8) -> &'static str {
    match code {
        0 => "starting",
        1 => "refused",
        2 => "idle",
        3 => "auto",
        4 => "manual",
        5 => "tripped",
        _ => "?",
    }
}

/// "2:05:30" for 7530 s.
fn clock(t_s: f64) -> String {
    let s = t_s.max(0.0).round() as u64;
    format!("{}:{:02}:{:02}", s / 3600, (s / 60) % 60, s % 60)
}

/// "4 min 10 s", "35 s", "1 h 02 min".
fn duration(s: f64) -> String {
    let s = s.max(0.0).round() as u64;
    if s < 60 {
        format!("{s} s")
    } else if s < 3600 {
        format!("{} min {:02} s", s / 60, s % 60)
    } else {
        format!("{} h {:02} min", s / 3600, (s / 60) % 60)
    }
}

fn trips(codes: &[u16]) -> String {
    if codes.is_empty() {
        return "none".to_owned();
    }
    codes
        .iter()
        .map(|c| match TripReason::ALL.iter().find(|r| r.code() == *c) {
            Some(r) => format!("{c} ({})", r.message()),
            None => c.to_string(),
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The CSV of one trajectory: one row per controller tick.
pub fn csv(t: &Trajectory) -> String {
    let mut s = String::from("t_s,ph,measured_ph,caustic_l_per_h,acid_l_per_h,influent_l_per_h,state,trip\n");
    for p in &t.samples {
        let [caustic, acid] = p.reagent_l_per_h;
        let measured = if p.measured_ph.is_finite() { format!("{:.4}", p.measured_ph) } else { String::new() };
        let _ = writeln!(
            s,
            "{},{:.4},{measured},{caustic:.6},{acid:.6},{:.3},{},{}",
            p.t_s, p.ph, p.influent_l_per_h, p.state, p.trip
        );
    }
    s
}

/// Supervisor state changes of a trajectory, as markers on the pH panel.
fn state_changes(t: &Trajectory) -> Vec<Marker> {
    let mut out = Vec::new();
    let mut last = None;
    for p in &t.samples {
        if last != Some(p.state) {
            if last.is_some() {
                let label = if p.trip != 0 {
                    format!("{} {}", state_name(p.state), p.trip)
                } else {
                    state_name(p.state).to_owned()
                };
                out.push(Marker { x: p.t_s / 3600.0, y: p.ph, label });
            }
            last = Some(p.state);
        }
    }
    out
}

fn series(name: &str, t: &Trajectory, color: RGBColor, y: impl Fn(&phdose_sim::run::Sample) -> f64) -> Series {
    Series {
        name: name.to_owned(),
        points: t.samples.iter().map(|p| (p.t_s / 3600.0, y(p))).collect(),
        style: Style::Line,
        color,
    }
}

/// The figure: pH (both loops, setpoint and band, state changes), reagent flow, influent flow.
pub fn figure(sim: &Simulation) -> Figure {
    let c = &sim.controller.trajectory;
    let end_h = c.simulated_s / 3600.0;
    let level = |name: &str, y: f64| Series {
        name: name.to_owned(),
        points: vec![(0.0, y), (end_h, y)],
        style: Style::Line,
        color: GREEN,
    };
    let half = c.band_ph / 2.0;
    let mut ph =
        vec![level("setpoint", c.setpoint_ph), level("band", c.setpoint_ph - half), level("", c.setpoint_ph + half)];
    let mut reagent = Vec::new();
    if let Some((b, _)) = &sim.baseline {
        ph.push(series("baseline (feedback only)", &b.trajectory, GREY, |p| p.ph));
        reagent.push(series("baseline", &b.trajectory, GREY, |p| p.reagent_l_per_h.iter().sum()));
    }
    ph.push(series("controller (tank pH)", c, BLUE, |p| p.ph));
    reagent.push(series("controller", c, BLUE, |p| p.reagent_l_per_h.iter().sum()));
    let mut markers = vec![MarkerSet {
        name: "state change (controller)".to_owned(),
        color: RED,
        filled: true,
        label_at: Corner::UpperRight,
        markers: state_changes(c),
    }];
    if let Some((b, _)) = &sim.baseline {
        markers.push(MarkerSet {
            name: "state change (baseline)".to_owned(),
            color: GREY,
            filled: false,
            label_at: Corner::LowerRight,
            markers: state_changes(&b.trajectory),
        });
    }
    markers.retain(|m| !m.markers.is_empty());
    Figure {
        title: format!("Simulation: {} (seed {})", sim.scenario.skid.name, sim.seed),
        x_label: "time, h".to_owned(),
        panels: vec![
            Panel { y_label: "pH".to_owned(), series: ph, marker_sets: markers, legend_at: LegendAt::LowerRight },
            Panel {
                y_label: "reagent, L/h".to_owned(),
                series: reagent,
                marker_sets: Vec::new(),
                legend_at: LegendAt::UpperRight,
            },
            Panel {
                y_label: "influent, L/h".to_owned(),
                series: vec![series("influent flow", c, BLUE, |p| p.influent_l_per_h)],
                marker_sets: Vec::new(),
                legend_at: LegendAt::UpperRight,
            },
        ],
    }
}

#[derive(Serialize)]
struct SettlingOut<'a> {
    label: &'a str,
    at_s: f64,
    settled_after_s: Option<f64>,
}

#[derive(Serialize)]
struct KpisOut<'a> {
    iae_ph_s: f64,
    time_in_band_fraction: f64,
    max_abs_error_ph: f64,
    reagent_l: f64,
    cost: Option<f64>,
    trips: &'a [u16],
    settling: Vec<SettlingOut<'a>>,
    wall_s: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    tuning: Option<&'a Tuning>,
}

impl<'a> KpisOut<'a> {
    fn new(o: &'a Outcome, tuning: Option<&'a Tuning>) -> Self {
        let k = &o.kpis;
        Self {
            iae_ph_s: k.iae_ph_s,
            time_in_band_fraction: k.time_in_band_fraction,
            max_abs_error_ph: k.max_abs_error_ph,
            reagent_l: k.reagent_l,
            cost: k.cost,
            trips: &k.trips,
            settling: k
                .settling
                .iter()
                .map(|s| SettlingOut { label: &s.label, at_s: s.at_s, settled_after_s: s.settled_after_s })
                .collect(),
            wall_s: o.wall_s,
            tuning,
        }
    }
}

#[derive(Serialize)]
struct FilesOut<'a> {
    controller_csv: Option<&'a str>,
    baseline_csv: Option<&'a str>,
    svg: Option<&'a str>,
}

#[derive(Serialize)]
struct SimulationOut<'a> {
    scenario: &'a str,
    file: Option<&'a str>,
    seed: u64,
    simulated_s: f64,
    wall_s: f64,
    speed_ratio: f64,
    controller: KpisOut<'a>,
    baseline: Option<KpisOut<'a>>,
    files: FilesOut<'a>,
}

fn written_path<'a>(written: &'a [(&str, String)], name: &str) -> Option<&'a str> {
    written.iter().find(|(n, _)| *n == name).map(|(_, p)| p.as_str())
}

fn speed_ratio(o: &Outcome) -> f64 {
    if o.wall_s > 0.0 { o.trajectory.simulated_s / o.wall_s } else { f64::INFINITY }
}

/// The JSON document.
pub fn json(sim: &Simulation, written: &[(&str, String)]) -> Result<String, CliError> {
    json_io::render(&SimulationOut {
        scenario: &sim.scenario.skid.name,
        file: sim.file.as_deref(),
        seed: sim.seed,
        simulated_s: sim.controller.trajectory.simulated_s,
        wall_s: sim.wall_s,
        speed_ratio: speed_ratio(&sim.controller),
        controller: KpisOut::new(&sim.controller, None),
        baseline: sim.baseline.as_ref().map(|(o, t)| KpisOut::new(o, Some(t))),
        files: FilesOut {
            controller_csv: written_path(written, "controller.csv"),
            baseline_csv: written_path(written, "baseline.csv"),
            svg: written_path(written, "simulation.svg"),
        },
    })
}

/// How one KPI is written in the table.
type KpiText = dyn Fn(&Kpis) -> String;

/// One row of the KPI table: label, controller, baseline.
fn row(s: &mut String, label: &str, c: &str, b: Option<&str>) {
    let _ = match b {
        Some(b) => writeln!(s, "  {label:<40} {c:>16}  {b:>16}"),
        None => writeln!(s, "  {label:<40} {c:>16}"),
    };
}

/// The readable report.
pub fn table(sim: &Simulation, written: &[(&str, String)]) -> String {
    let sc = &sim.scenario;
    let c = &sim.controller;
    let mut s = String::new();
    let _ = writeln!(s, "Simulation of \"{}\" — {}", sc.skid.name, sim.source);
    if sim.drawn {
        let _ = writeln!(
            s,
            "  plant drawn from the declared uncertainties with seed {} (as `phdose sweep` run {})",
            sim.seed, sim.seed
        );
    }
    let _ = writeln!(
        s,
        "  setpoint pH {} in a {} pH band, controller tick {} s; plant {} L, step {} s, seed {}",
        fixed(f64::from(sc.skid.control.setpoint_ph), 2),
        sig(f64::from(sc.skid.control.band_ph), 3),
        sig(f64::from(sc.skid.control.tick_s), 3),
        sig(sc.plant.volume_l, 4),
        sig(sc.run.step_s, 3),
        sim.seed
    );
    let _ = writeln!(
        s,
        "  simulated {} in {} s of wall time ({}x real time, controller run)",
        duration(c.trajectory.simulated_s),
        sig(sim.wall_s, 2),
        sig(speed_ratio(c), 2)
    );
    let _ = writeln!(s);
    let b = sim.baseline.as_ref().map(|(o, _)| o);
    row(&mut s, "", "controller", b.map(|_| "baseline"));
    row(&mut s, "", "(chemistry + PI)", b.map(|_| "(PI only)"));
    let both = |f: &dyn Fn(&Kpis) -> String| (f(&c.kpis), b.map(|o| f(&o.kpis)));
    let lines: [(&str, &KpiText); 5] = [
        ("integrated |pH error|, pH·s", &|k| format!("{:.0}", k.iae_ph_s)),
        ("time inside the band", &|k| percent(k.time_in_band_fraction)),
        ("largest |pH error|, pH", &|k| fixed(k.max_abs_error_ph, 2)),
        ("reagent used, L", &|k| format!("{:.2}", k.reagent_l)),
        ("interlock trips", &|k| if k.trips.is_empty() { "none".to_owned() } else { k.trips.len().to_string() }),
    ];
    for (label, f) in lines {
        let (cv, bv) = both(f);
        row(&mut s, label, &cv, bv.as_deref());
    }
    if c.kpis.cost.is_some() {
        let (cv, bv) = both(&|k| k.cost.map_or_else(|| "n/a".to_owned(), |v| format!("{v:.2}")));
        row(&mut s, "reagent cost", &cv, bv.as_deref());
    }
    for (i, st) in c.kpis.settling.iter().enumerate() {
        let settled = |k: &Kpis| match k.settling.get(i).and_then(|x| x.settled_after_s) {
            None => "not settled".to_owned(),
            Some(t) if t <= 0.0 => "stayed in band".to_owned(),
            Some(t) => duration(t),
        };
        let label = format!("settled after {} at {}", st.label, clock(st.at_s));
        row(&mut s, &label, &settled(&c.kpis), b.map(|o| settled(&o.kpis)).as_deref());
    }
    if !c.kpis.trips.is_empty() || b.is_some_and(|o| !o.kpis.trips.is_empty()) {
        let _ = writeln!(s);
        let _ = writeln!(s, "Trips of the controller: {}", trips(&c.kpis.trips));
        if let Some(o) = b {
            let _ = writeln!(s, "Trips of the baseline:   {}", trips(&o.kpis.trips));
        }
    }
    if let Some((_, t)) = &sim.baseline {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "Baseline: a PI on the pH error without chemistry, tuned by the SIMC rule (Skogestad 2003) from a +2 %\n\
             bump test on this plant: process gain {} pH per L/h, time constant {} s, dead time {} s ->\n\
             gain {} L/h per pH, integral time {} s.",
            sig(t.process_gain_ph_per_l_per_h, 3),
            sig(t.time_constant_s, 3),
            sig(t.dead_time_s, 3),
            sig(t.gain_l_per_h_per_ph, 3),
            sig(t.integral_time_s, 3)
        );
    }
    let _ = writeln!(s, "Errors are of the tank's true pH (what leaves the skid), not of the probe reading.");
    let lines: Vec<String> = written.iter().map(|(_, p)| format!("wrote {p}")).collect();
    layout::finish(s, &lines, SIM_CAUTION)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn times_read_well() {
        assert_eq!(clock(7530.0), "2:05:30");
        assert_eq!(duration(35.0), "35 s");
        assert_eq!(duration(250.0), "4 min 10 s");
        assert_eq!(duration(3720.0), "1 h 02 min");
        assert_eq!(trips(&[]), "none");
        assert!(trips(&[104]).starts_with("104 ("));
    }
}
