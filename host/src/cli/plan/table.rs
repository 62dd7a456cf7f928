//! The readable `plan` report.

use std::fmt::Write;

use phdose::titration::DoseCheck;

use phdose::titration::worst::{Crossing, Stuck};

use super::report::PlanReport;
use super::worst::{self, CornerFlag, WORST_CAUTION};
use crate::cli::caution::PLAN_CAUTION;
use crate::cli::composition;
use crate::cli::format::{fixed, sci, sig, signed};
use crate::cli::layout;

const LABEL: usize = 20;
/// Width of the text beside the label when a long line is wrapped.
const WRAP: usize = 76;

/// Renders the report; `title` (used by `--example`) goes first.
pub fn render(r: &PlanReport, title: Option<&str>) -> String {
    let i = &r.input;
    let c = i.conditions;
    let activity = layout::activity(c.activity);
    let mut s = layout::start(title);
    let _ = writeln!(s, "Feed-forward dose plan at {:.1} °C, {activity}", c.celsius());
    let _ = writeln!(
        s,
        "{:<LABEL$}{} L/h at pH {}: {}",
        "influent",
        sig(i.flow_l_per_h, 6),
        fixed(r.influent_ph, 2),
        composition::describe(&i.influent)
    );
    let _ = writeln!(s, "{:<LABEL$}{}", "reagent", i.reagent.describe());
    let band = i.band_ph.map_or_else(|| "no band given".to_owned(), |b| format!("band {} pH", sig(b, 3)));
    let _ = writeln!(s, "{:<LABEL$}pH {}, {band}", "setpoint", fixed(i.setpoint_ph, 2));
    let pump = i.pump.map_or_else(
        || "not given".to_owned(),
        |p| {
            let min =
                if p.min_l_per_h() > 0.0 { format!(", min {} L/h", sig(p.min_l_per_h(), 3)) } else { String::new() };
            format!("max {} L/h, step {} L/h{min}", sig(p.max_l_per_h(), 4), sig(p.step_l_per_h(), 3))
        },
    );
    let _ = writeln!(s, "{:<LABEL$}{pump}", "pump");
    let _ = writeln!(s);

    match &r.plan {
        Some(p) => {
            let share = i
                .pump
                .map(|pump| {
                    format!("   ({:.1} % of the pump's max)", 100.0 * p.reagent_flow_l_per_h / pump.max_l_per_h())
                })
                .unwrap_or_default();
            let _ = writeln!(s, "{:<LABEL$}{} L/h{share}", "reagent flow", sig(p.reagent_flow_l_per_h, 4));
            // The idle plan (influent in band, setpoint out of this reagent's reach) is evaluated
            // at the influent's own pH.
            let idle = p.in_band.is_some_and(|b| !b.reagent_reaches_setpoint);
            let at = if idle { "the influent's pH" } else { "the setpoint" };
            let _ = writeln!(s, "{:<LABEL$}{} pH per L/h at {at}", "process gain", sig(p.gain_ph_per_l_per_h, 3));
            if let Some(step) = p.gain_ph_per_step {
                // Below what a real solve resolves the core takes the linear gain (exact there).
                let floor = <f64 as phdose::Real>::PH_TOLERANCE * phdose::titration::dose::LINEAR_STEP_TOLERANCES;
                let how = if step.abs() < floor {
                    "the linear gain: a real solve cannot resolve so small a change"
                } else {
                    "a real solve, not the linear gain"
                };
                let _ = writeln!(s, "{:<LABEL$}{} pH ({how})", "one pump step", signed(step, 3));
            }
            let _ = writeln!(
                s,
                "{:<LABEL$}{} mol/L per pH (mixture at {at})",
                "buffer capacity",
                sci(p.mixture_buffer_capacity_mol_per_l_per_ph)
            );
            let _ = writeln!(
                s,
                "{:<LABEL$}{} mol/L ({} activity round(s))",
                "ionic strength",
                sci(p.mixture_ionic_strength_mol_per_l),
                p.rounds
            );
        }
        None => {
            let _ = writeln!(s, "{:<LABEL$}none: the setpoint cannot be reached with this reagent", "reagent flow");
        }
    }
    for (k, v) in r.verdicts.iter().enumerate() {
        let label = if k == 0 { "verdict" } else { "" };
        let _ = writeln!(s, "{label:<LABEL$}{v}");
    }
    if let Some(p) = &r.plan {
        for check in &p.checks {
            if let DoseCheck::GasRelease { gas, .. } = check {
                let _ = writeln!(s, "{:<LABEL$}{}: {}", "hazard basis", gas.formula(), gas.basis());
            }
        }
    }
    for n in &r.notes {
        let _ = writeln!(s, "{:<LABEL$}{n}", "note");
    }
    if let Some(a) = r.stages {
        let sps: Vec<String> = a
            .setpoints_ph
            .iter()
            .flatten()
            .enumerate()
            .map(|(k, v)| fixed(r.stage_checks.get(k).map_or(*v, |c| c.setpoint_ph), 1))
            .collect();
        let plural = if a.stages == 1 { "stage" } else { "stages" };
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "{:<LABEL$}{} {plural} (setpoints {}) for a {} pH excursion",
            "stage advice",
            a.stages,
            sps.join(", "),
            fixed(a.excursion_ph, 1)
        );
        let _ = writeln!(s, "{:<LABEL$}common practice (a rule of thumb, no checked source), not a computed", "");
        let _ = writeln!(s, "{:<LABEL$}result: within 3 pH of the setpoint 1 stage, within 5 pH 2, beyond 3", "");
        for (k, c) in r.stage_checks.iter().enumerate() {
            let step = c.step_delta_ph.map_or_else(String::new, |d| format!(", one step {} pH", signed(d, 2)));
            let line = if !c.controllable {
                format!(
                    "pH {}: too steep or beyond this pump{step}; it needs its own reagent or pump",
                    fixed(c.setpoint_ph, 1)
                )
            } else if (c.setpoint_ph - c.rule_setpoint_ph).abs() > 1e-9 {
                format!(
                    "pH {} (the rule's {} is too steep or beyond this pump){step}",
                    fixed(c.setpoint_ph, 1),
                    fixed(c.rule_setpoint_ph, 1)
                )
            } else {
                format!("pH {}: controllable with this reagent and pump{step}", fixed(c.setpoint_ph, 1))
            };
            let _ = writeln!(s, "{:<LABEL$}{line}", format!("  stage {}", k + 1));
        }
    }
    worst_block(&mut s, r);
    layout::finish(s, &[], PLAN_CAUTION)
}

/// One stuck case: the end pH, τ, and one line per hard limit.
fn stuck_lines(s: &mut String, label: &str, what: &str, case: &Stuck<f64>, r: &PlanReport) {
    let tau = case.time_constant_s.map_or_else(String::new, |t| format!("; tank time constant {} s", sig(t, 3)));
    let _ = writeln!(s, "{label:<LABEL$}heads to pH {}{what}{tau}", fixed(case.end_ph, 2));
    let limits =
        [("low", r.worst.limits.low_ph(), case.low_limit), ("high", r.worst.limits.high_ph(), case.high_limit)];
    for (side, limit, crossing) in limits {
        if let (Some(limit), Some(crossing)) = (limit, crossing) {
            let verdict = match crossing {
                Crossing::Never => "never crossed".to_owned(),
                Crossing::Beyond => "crossed (give the tank volume for the time)".to_owned(),
                Crossing::After { .. } => format!("crossed {}", worst::crossing_words(crossing)),
            };
            let _ = writeln!(s, "{:<LABEL$}{verdict}", format!("  {side} limit {}", fixed(limit, 2)));
        }
    }
}

/// The worst-case block: stuck pump, dose corners, reagent per day, with its caution.
fn worst_block(s: &mut String, r: &PlanReport) {
    let w = &r.worst;
    let i = &r.input;
    let _ = writeln!(s);
    // The caution, wrapped beside the label: the same words as the JSON's.
    let mut line = String::new();
    let mut label = "worst case";
    for word in WORST_CAUTION.split_whitespace() {
        if !line.is_empty() && line.len() + 1 + word.len() > WRAP {
            let _ = writeln!(s, "{label:<LABEL$}{line}");
            label = "";
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    let _ = writeln!(s, "{label:<LABEL$}{line}");
    let tank = w.tank_volume_l.map_or_else(|| "volume not given".to_owned(), |v| format!("{} L", sig(v, 4)));
    let limits = match (w.limits.low_ph(), w.limits.high_ph()) {
        (None, None) => "no hard limits given".to_owned(),
        (low, high) => {
            let show = |v: Option<f64>| v.map_or_else(|| "none".to_owned(), |v| fixed(v, 2));
            format!("hard limits pH {} (low) and {} (high)", show(low), show(high))
        }
    };
    let _ = writeln!(s, "{:<LABEL$}{tank}, {limits}", "tank");
    if let Some(case) = &w.stuck_max {
        let what = format!(" (reagent at {} L/h)", sig(case.reagent_flow_l_per_h, 4));
        stuck_lines(s, "pump stuck at max", &what, case, r);
    }
    if let Some(case) = &w.stuck_zero {
        stuck_lines(s, "pump stuck at zero", " (the influent's own)", case, r);
    }
    let range = if w.flow_range_given { "the range given" } else { "by default 50 %-150 % of the design flow" };
    let _ = writeln!(
        s,
        "{:<LABEL$}reagent flow for pH {}, L/h, at influent {}-{} L/h ({range})",
        "dose corners",
        fixed(i.setpoint_ph, 2),
        sig(w.min_flow_l_per_h, 4),
        sig(w.max_flow_l_per_h, 4)
    );
    let _ = writeln!(s, "{:<LABEL$}and every influent total x0.75, x1, x1.25", "");
    let flows: Vec<f64> = w.corners.iter().take(3).map(|c| c.influent_flow_l_per_h).collect();
    let mut head = format!("{:<LABEL$}", "  strength");
    for q in &flows {
        head.push_str(&format!("{:<16}", format!("{} L/h", sig(*q, 4))));
    }
    let _ = writeln!(s, "{}", head.trim_end());
    let mut marks = Vec::new();
    for row in w.corners.chunks(3) {
        let factor = row.first().map_or(1.0, |c| c.strength_factor);
        let mut line = format!("{:<LABEL$}", format!("  x{}", fixed(factor, 2)));
        for c in row {
            let cell = match (&c.flag, c.reagent_flow_l_per_h) {
                (CornerFlag::Unreachable(_), _) | (_, None) => "unreachable".to_owned(),
                (CornerFlag::NoDose, _) => "no dose".to_owned(),
                (CornerFlag::BeyondPump, Some(q)) => format!("{} >max", sig(q, 3)),
                (CornerFlag::BelowTurndown, Some(q)) => format!("{} <min", sig(q, 3)),
                (CornerFlag::Ok, Some(q)) => sig(q, 3),
            };
            if !matches!(c.flag, CornerFlag::Ok) && !marks.contains(&c.flag.key()) {
                marks.push(c.flag.key());
            }
            line.push_str(&format!("{cell:<16}"));
        }
        let _ = writeln!(s, "{}", line.trim_end());
    }
    if let Some(pump) = i.pump {
        for mark in marks {
            let text = match mark {
                "beyond_pump" => format!(">max: beyond the pump's {} L/h", sig(pump.max_l_per_h(), 4)),
                "below_turndown" => {
                    format!("<min: below the pump's smallest steady flow {} L/h", sig(pump.smallest_l_per_h(), 3))
                }
                "no_dose" => "no dose: the influent is already inside the band".to_owned(),
                _ => "unreachable: no flow of this reagent reaches the setpoint".to_owned(),
            };
            let _ = writeln!(s, "{:<LABEL$}{text}", "");
        }
    }
    if let Some(d) = &w.per_day {
        let kg = d.kg.map_or_else(String::new, |kg| format!(" = {} kg/day", sig(kg, 3)));
        let parts: Vec<String> = d.substances_kg.iter().map(|(f, kg)| format!("{f} {} kg/day", sig(*kg, 3))).collect();
        let _ = writeln!(
            s,
            "{:<LABEL$}{} L/day{kg} at the planned flow; of which {}",
            "reagent use",
            sig(d.litres, 3),
            parts.join(", ")
        );
    }
    for n in &w.notes {
        let _ = writeln!(s, "{:<LABEL$}{n}", "note");
    }
}
