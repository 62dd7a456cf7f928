//! The readable `plan` report.

use std::fmt::Write;

use phdose::titration::DoseCheck;

use super::report::PlanReport;
use crate::cli::caution::PLAN_CAUTION;
use crate::cli::composition;
use crate::cli::format::{fixed, sci, sig};
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
        |p| format!("max {} L/h, step {} L/h", sig(p.max_l_per_h(), 4), sig(p.step_l_per_h(), 3)),
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
            let _ =
                writeln!(s, "{:<LABEL$}{} pH per L/h at the setpoint", "process gain", sig(p.gain_ph_per_l_per_h, 3));
            if let Some(step) = p.gain_ph_per_step {
                let _ = writeln!(s, "{:<LABEL$}{:+.3} pH (a real solve, not the linear gain)", "one pump step", step);
            }
            let _ = writeln!(
                s,
                "{:<LABEL$}{} mol/L per pH (mixture at the setpoint)",
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
        let sps: Vec<String> = a.setpoints_ph.iter().flatten().map(|v| fixed(*v, 1)).collect();
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
    }
    layout::finish(s, &[], PLAN_CAUTION)
}
