//! The `plan` JSON document. The first five keys are the stable contract: `reachable`,
//! `reagent_flow_l_per_h`, `mixture_buffer_capacity`, `gain_ph_per_l_per_h`, `verdicts`.

use std::collections::BTreeMap;

use phdose::titration::DoseCheck;
use phdose::titration::hazard;
use serde::Serialize;

use phdose::titration::worst::{Crossing, Stuck};

use super::report::{PlanReport, Unreachable};
use super::worst::{CornerFlag, WORST_CAUTION, WorstReport};
use crate::cli::CliError;
use crate::cli::caution::PLAN_CAUTION;
use crate::cli::json::{self, Num, opt};
use crate::cli::reagent::ReagentOut;

/// What the stage advice rests on.
pub const STAGE_BASIS: &str = "common practice, no checked source: a rule of thumb (influent within 3 pH of the \
setpoint: 1 stage, within 5: 2, beyond: 3), not a computed result";

#[derive(Serialize)]
struct Output {
    reachable: bool,
    reagent_flow_l_per_h: Option<Num>,
    mixture_buffer_capacity: Option<Num>,
    gain_ph_per_l_per_h: Option<Num>,
    verdicts: Vec<String>,
    all_clear: bool,
    setpoint_ph: Num,
    influent_ph: Num,
    influent_flow_l_per_h: Num,
    influent_dissolved: BTreeMap<&'static str, Num>,
    gain_ph_per_step: Option<Num>,
    reagent_mol_per_l: Option<Num>,
    reagent: ReagentOut,
    mixture_ionic_strength: Option<Num>,
    activity_rounds: Option<u32>,
    checks: Vec<CheckOut>,
    unreachable: Option<UnreachableOut>,
    in_band: Option<InBandOut>,
    stage_advice: Option<StagesOut>,
    pump: Option<PumpOut>,
    band_ph: Option<Num>,
    temperature_c: Num,
    activity: &'static str,
    notes: Vec<String>,
    caution: String,
    hazard: bool,
    reagent_temperature_c: Num,
    worst_case: WorstOut,
}

#[derive(Serialize)]
struct WorstOut {
    stuck_max_ph: Option<Num>,
    stuck_zero_ph: Option<Num>,
    tank_volume_l: Option<Num>,
    low_limit_ph: Option<Num>,
    high_limit_ph: Option<Num>,
    stuck_max: Option<StuckOut>,
    stuck_zero: Option<StuckOut>,
    min_flow_l_per_h: Num,
    max_flow_l_per_h: Num,
    flow_range_given: bool,
    dose_corners: Vec<CornerOut>,
    reagent_per_day_l: Option<Num>,
    reagent_per_day_kg: Option<Num>,
    substances_per_day_kg: BTreeMap<&'static str, Num>,
    notes: Vec<String>,
    caution: &'static str,
}

#[derive(Serialize)]
struct StuckOut {
    reagent_flow_l_per_h: Num,
    end_ph: Num,
    start_ph: Option<Num>,
    time_constant_s: Option<Num>,
    crosses_low_limit: Option<bool>,
    crosses_high_limit: Option<bool>,
    time_to_low_limit_s: Option<Num>,
    time_to_high_limit_s: Option<Num>,
    solves: u32,
}

#[derive(Serialize)]
struct CornerOut {
    influent_flow_l_per_h: Num,
    strength_factor: Num,
    reagent_flow_l_per_h: Option<Num>,
    flag: &'static str,
    reason: Option<String>,
}

/// Crossed (or not, `None` without the limit) and when (`None` for never or without a tank).
fn crossing(c: Option<Crossing<f64>>) -> (Option<bool>, Option<Num>) {
    match c {
        None => (None, None),
        Some(Crossing::Never) => (Some(false), None),
        Some(Crossing::Beyond) => (Some(true), None),
        Some(Crossing::After { time_s }) => (Some(true), Some(Num(time_s))),
    }
}

fn stuck_out(s: &Stuck<f64>) -> StuckOut {
    let (crosses_low_limit, time_to_low_limit_s) = crossing(s.low_limit);
    let (crosses_high_limit, time_to_high_limit_s) = crossing(s.high_limit);
    StuckOut {
        reagent_flow_l_per_h: Num(s.reagent_flow_l_per_h),
        end_ph: Num(s.end_ph),
        start_ph: opt(s.start_ph),
        time_constant_s: opt(s.time_constant_s),
        crosses_low_limit,
        crosses_high_limit,
        time_to_low_limit_s,
        time_to_high_limit_s,
        solves: s.solves,
    }
}

fn worst_out(w: &WorstReport) -> WorstOut {
    WorstOut {
        stuck_max_ph: w.stuck_max.map(|s| Num(s.end_ph)),
        stuck_zero_ph: w.stuck_zero.map(|s| Num(s.end_ph)),
        tank_volume_l: opt(w.tank_volume_l),
        low_limit_ph: opt(w.limits.low_ph()),
        high_limit_ph: opt(w.limits.high_ph()),
        stuck_max: w.stuck_max.as_ref().map(stuck_out),
        stuck_zero: w.stuck_zero.as_ref().map(stuck_out),
        min_flow_l_per_h: Num(w.min_flow_l_per_h),
        max_flow_l_per_h: Num(w.max_flow_l_per_h),
        flow_range_given: w.flow_range_given,
        dose_corners: w
            .corners
            .iter()
            .map(|c| CornerOut {
                influent_flow_l_per_h: Num(c.influent_flow_l_per_h),
                strength_factor: Num(c.strength_factor),
                reagent_flow_l_per_h: opt(c.reagent_flow_l_per_h),
                flag: c.flag.key(),
                reason: match &c.flag {
                    CornerFlag::Unreachable(why) => Some(why.clone()),
                    _ => None,
                },
            })
            .collect(),
        reagent_per_day_l: w.per_day.as_ref().map(|d| Num(d.litres)),
        reagent_per_day_kg: w.per_day.as_ref().and_then(|d| opt(d.kg)),
        substances_per_day_kg: w
            .per_day
            .as_ref()
            .map(|d| d.substances_kg.iter().map(|(f, kg)| (*f, Num(*kg))).collect())
            .unwrap_or_default(),
        notes: w.notes.clone(),
        caution: WORST_CAUTION,
    }
}

#[derive(Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
enum CheckOut {
    BeyondPump {
        needed_l_per_h: Num,
        max_l_per_h: Num,
    },
    BelowTurndown {
        needed_l_per_h: Num,
        smallest_l_per_h: Num,
        dilute_reagent_by: Option<Num>,
    },
    TooSteep {
        step_delta_ph: Num,
        band_ph: Num,
        dilute_reagent_by: Num,
        diluted_flow_l_per_h: Option<Num>,
        max_step_l_per_h: Option<Num>,
        nearest_controllable_setpoint_ph: Option<Num>,
    },
    ResolutionLimited {
        resolution_ph: Num,
        needed_ph: Num,
    },
    GasRelease {
        gas: &'static str,
        gas_name: &'static str,
        release_below_ph: Num,
        gas_fraction: Num,
        basis: &'static str,
    },
    ReagentCrystallises {
        crystallises_below_c: Num,
        reagent_temperature_c: Num,
        source: &'static str,
    },
}

#[derive(Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
enum UnreachableOut {
    WrongDirection,
    BeyondReagent { limit_ph: Num },
    BeyondActivityModel { ionic_strength_mol_per_l: Num },
}

#[derive(Serialize)]
struct InBandOut {
    influent_ph: Num,
    low_ph: Num,
    high_ph: Num,
    reagent_reaches_setpoint: bool,
}

#[derive(Serialize)]
struct StagesOut {
    stages: u8,
    setpoints_ph: Vec<Num>,
    excursion_ph: Num,
    both_directions: bool,
    basis: &'static str,
    stage_checks: Vec<StageCheckOut>,
}

#[derive(Serialize)]
struct StageCheckOut {
    rule_setpoint_ph: Num,
    setpoint_ph: Num,
    controllable: bool,
    step_delta_ph: Option<Num>,
}

#[derive(Serialize)]
struct PumpOut {
    max_l_per_h: Num,
    step_l_per_h: Num,
    min_l_per_h: Num,
}

/// The source of the crystallisation row that applies to the request's reagent grade.
fn crystallisation_source(i: &super::input::PlanInput) -> &'static str {
    let formula = i.reagent.dissolved.first().map(|d| d.substance.formula);
    let grade = i.reagent.grade.as_ref().map(|g| g.mass_percent);
    formula.zip(grade).and_then(|(f, w)| hazard::crystallisation_c(f, w)).map_or("", |(_, row)| row.source)
}

/// Renders the report as the JSON document.
pub fn render(r: &PlanReport) -> Result<String, CliError> {
    let i = &r.input;
    let p = r.plan.as_ref();
    let out = Output {
        reachable: p.is_some(),
        reagent_flow_l_per_h: p.map(|p| Num(p.reagent_flow_l_per_h)),
        mixture_buffer_capacity: p.map(|p| Num(p.mixture_buffer_capacity_mol_per_l_per_ph)),
        gain_ph_per_l_per_h: p.map(|p| Num(p.gain_ph_per_l_per_h)),
        verdicts: r.verdicts.clone(),
        all_clear: r.all_clear(),
        setpoint_ph: Num(i.setpoint_ph),
        influent_ph: Num(r.influent_ph),
        influent_flow_l_per_h: Num(i.flow_l_per_h),
        influent_dissolved: i.influent.iter().map(|d| (d.substance.formula, Num(d.mol_per_l))).collect(),
        gain_ph_per_step: opt(p.and_then(|p| p.gain_ph_per_step)),
        reagent_mol_per_l: opt(i.reagent.single_mol_per_l()),
        reagent: i.reagent.to_out(),
        mixture_ionic_strength: p.map(|p| Num(p.mixture_ionic_strength_mol_per_l)),
        activity_rounds: p.map(|p| p.rounds),
        checks: p
            .map(|p| {
                p.checks
                    .iter()
                    .map(|c| match *c {
                        DoseCheck::BeyondPump { needed_l_per_h, max_l_per_h } => {
                            CheckOut::BeyondPump { needed_l_per_h: Num(needed_l_per_h), max_l_per_h: Num(max_l_per_h) }
                        }
                        DoseCheck::BelowTurndown { needed_l_per_h, smallest_l_per_h, dilute_reagent_by } => {
                            CheckOut::BelowTurndown {
                                needed_l_per_h: Num(needed_l_per_h),
                                smallest_l_per_h: Num(smallest_l_per_h),
                                dilute_reagent_by: opt(dilute_reagent_by),
                            }
                        }
                        DoseCheck::TooSteep {
                            step_delta_ph,
                            band_ph,
                            dilute_reagent_by,
                            diluted_flow_l_per_h,
                            max_step_l_per_h,
                            nearest_controllable_setpoint_ph,
                        } => CheckOut::TooSteep {
                            step_delta_ph: Num(step_delta_ph),
                            band_ph: Num(band_ph),
                            dilute_reagent_by: Num(dilute_reagent_by),
                            diluted_flow_l_per_h: opt(diluted_flow_l_per_h),
                            max_step_l_per_h: opt(max_step_l_per_h),
                            nearest_controllable_setpoint_ph: opt(nearest_controllable_setpoint_ph),
                        },
                        DoseCheck::ResolutionLimited { resolution_ph, needed_ph } => {
                            CheckOut::ResolutionLimited { resolution_ph: Num(resolution_ph), needed_ph: Num(needed_ph) }
                        }
                        DoseCheck::GasRelease { gas, release_below_ph, gas_fraction } => CheckOut::GasRelease {
                            gas: gas.formula(),
                            gas_name: gas.name(),
                            release_below_ph: Num(release_below_ph),
                            gas_fraction: Num(gas_fraction),
                            basis: gas.basis(),
                        },
                        DoseCheck::ReagentCrystallises { crystallises_below_c, reagent_temperature_c } => {
                            CheckOut::ReagentCrystallises {
                                crystallises_below_c: Num(crystallises_below_c),
                                reagent_temperature_c: Num(reagent_temperature_c),
                                source: crystallisation_source(i),
                            }
                        }
                    })
                    .collect()
            })
            .unwrap_or_default(),
        unreachable: r.unreachable.map(|u| match u {
            Unreachable::WrongDirection => UnreachableOut::WrongDirection,
            Unreachable::BeyondReagent { limit_ph } => UnreachableOut::BeyondReagent { limit_ph: Num(limit_ph) },
            Unreachable::BeyondActivityModel { ionic_strength_mol_per_l } => {
                UnreachableOut::BeyondActivityModel { ionic_strength_mol_per_l: Num(ionic_strength_mol_per_l) }
            }
        }),
        in_band: p.and_then(|p| p.in_band).map(|b| InBandOut {
            influent_ph: Num(b.influent_ph),
            low_ph: Num(b.low_ph),
            high_ph: Num(b.high_ph),
            reagent_reaches_setpoint: b.reagent_reaches_setpoint,
        }),
        stage_advice: r.stages.map(|s| StagesOut {
            stages: s.stages,
            // The advised setpoints: a checked stage's (moved when the rule's failed), else the rule's.
            setpoints_ph: s
                .setpoints_ph
                .iter()
                .flatten()
                .enumerate()
                .map(|(k, sp)| Num(r.stage_checks.get(k).map_or(*sp, |c| c.setpoint_ph)))
                .collect(),
            excursion_ph: Num(s.excursion_ph),
            both_directions: s.both_directions,
            basis: STAGE_BASIS,
            stage_checks: r
                .stage_checks
                .iter()
                .map(|c| StageCheckOut {
                    rule_setpoint_ph: Num(c.rule_setpoint_ph),
                    setpoint_ph: Num(c.setpoint_ph),
                    controllable: c.controllable,
                    step_delta_ph: opt(c.step_delta_ph),
                })
                .collect(),
        }),
        pump: i.pump.map(|p| PumpOut {
            max_l_per_h: Num(p.max_l_per_h()),
            step_l_per_h: Num(p.step_l_per_h()),
            min_l_per_h: Num(p.min_l_per_h()),
        }),
        band_ph: opt(i.band_ph),
        temperature_c: Num(i.conditions.celsius()),
        activity: i.conditions.activity_name(),
        notes: r.notes.clone(),
        caution: PLAN_CAUTION.replace('\n', " "),
        hazard: r.hazard(),
        reagent_temperature_c: Num(i.reagent_celsius()),
        worst_case: worst_out(&r.worst),
    };
    json::render(&out)
}
