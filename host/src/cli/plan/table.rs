//! The readable `plan` report.

use std::fmt::Write;

use phdose::titration::DoseCheck;

use super::report::PlanReport;
use crate::cli::caution::PLAN_CAUTION;
use crate::cli::composition;
use crate::cli::format::{fixed, sci, sig, signed};
use crate::cli::layout;

const LABEL: usize = 20;

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
    layout::finish(s, &[], PLAN_CAUTION)
}
