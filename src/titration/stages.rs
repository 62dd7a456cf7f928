//! How many neutralisation stages a job needs, and each stage's setpoint.
//!
//! **Common practice** (McMillan, "Advanced pH Measurement and Control", ISA — from memory, not
//! checked): one stage when the influent stays within pH 4–10 of a neutral setpoint, two stages
//! for pH 2–12, three beyond. Written here as the largest excursion from the setpoint: up to
//! 3 pH units → 1 stage, up to 5 → 2, more → 3. Intermediate setpoints split the worst excursion
//! into equal pH steps, so each tank sees a titration curve it can control.

use crate::chem::Solution;
use crate::real::Real;
use crate::units::{LitresPerHour, Ph};

use super::dose::{DoseCheck, DoseRequest, SETPOINT_SCAN_SPACING_PH, SETPOINT_SCAN_STEPS, plan_with};

/// Largest excursion (pH) one stage handles (common practice, see the module docs).
pub const ONE_STAGE_MAX_EXCURSION_PH: f64 = 3.0;
/// Largest excursion (pH) two stages handle.
pub const TWO_STAGE_MAX_EXCURSION_PH: f64 = 5.0;

/// Stage advice.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StageAdvice<R: Real> {
    /// Number of stages (1–3).
    pub stages: u8,
    /// Setpoint of each stage in flow order; entries past `stages` are `None`. The last is the
    /// final setpoint.
    pub setpoints_ph: [Option<R>; 3],
    /// The influent's worst excursion from the setpoint, pH.
    pub excursion_ph: R,
    /// `true` when the influent range lies on both sides of the setpoint (each stage then needs
    /// both an acid and a base reagent, or the stages must be split by direction).
    pub both_directions: bool,
}

/// Why no advice could be given.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InvalidStageInput;

impl core::fmt::Display for InvalidStageInput {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str("influent pH range and setpoint must be finite, within 0-14, with min ≤ max")
    }
}

impl core::error::Error for InvalidStageInput {}

/// Advises the number of stages and their setpoints for influent pH in
/// [`influent_min_ph`, `influent_max_ph`] and a final `setpoint_ph`.
pub fn advise<R: Real>(
    influent_min_ph: R,
    influent_max_ph: R,
    setpoint_ph: R,
) -> Result<StageAdvice<R>, InvalidStageInput> {
    let ok = |v: R| v.is_finite() && v >= R::ZERO && v <= R::from_f64(14.0);
    if !(ok(influent_min_ph) && ok(influent_max_ph) && ok(setpoint_ph)) || influent_min_ph > influent_max_ph {
        return Err(InvalidStageInput);
    }
    let below = (setpoint_ph - influent_min_ph).max(R::ZERO);
    let above = (influent_max_ph - setpoint_ph).max(R::ZERO);
    let excursion = below.max(above);
    let stages: u8 = if excursion <= R::from_f64(ONE_STAGE_MAX_EXCURSION_PH) {
        1
    } else if excursion <= R::from_f64(TWO_STAGE_MAX_EXCURSION_PH) {
        2
    } else {
        3
    };
    // Start of the worst side; equal pH steps from there to the setpoint.
    let start = if below >= above { influent_min_ph } else { influent_max_ph };
    let mut setpoints_ph = [None; 3];
    let n = R::from_i32(i32::from(stages));
    // Stage k of n (1 ≤ k ≤ stages ≤ 3): at most 3 iterations, counted in u8 so k is exact.
    for (k, sp) in (1..=stages).zip(setpoints_ph.iter_mut()) {
        *sp = Some(start + (setpoint_ph - start) * R::from_i32(i32::from(k)) / n);
    }
    Ok(StageAdvice {
        stages,
        setpoints_ph,
        excursion_ph: excursion,
        both_directions: below > R::ZERO && above > R::ZERO,
    })
}

/// One stage of the advice, checked with the plan's own checks.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StageCheck<R: Real> {
    /// The setpoint the rule of thumb gave this stage, pH.
    pub rule_setpoint_ph: R,
    /// The setpoint advised: the rule's when it passes, else the nearest that does (0.1 pH
    /// apart, strictly between the stage's influent pH and the final setpoint; intermediate
    /// stages only), else the rule's (then `controllable` is false).
    pub setpoint_ph: R,
    /// Whether the stage's plan at `setpoint_ph` passes the pump, turndown and steepness
    /// checks with the same reagent, pump and band.
    pub controllable: bool,
    /// pH change of one pump step at that plan, when it exists.
    pub step_delta_ph: Option<R>,
}

/// Whether a plan's checks leave the stage controllable (the precision check is not about
/// the stage's setpoint).
fn controllable(checks: &[DoseCheck<impl Real>]) -> bool {
    !checks.iter().any(|c| {
        matches!(c, DoseCheck::BeyondPump { .. } | DoseCheck::TooSteep { .. } | DoseCheck::BelowTurndown { .. })
    })
}

/// Checks each stage of `advice` in flow order: stage k is planned on the effluent of stage
/// k − 1 (the influent mixed with the reagent flow that stage planned, at their summed flow)
/// with the same reagent, pump and band as `request`. An intermediate stage whose setpoint
/// fails is moved to the nearest setpoint that passes, if any. The chain stops (later entries
/// `None`) where a stage has no plan. Bounded: per stage one plan, plus up to
/// 2·[`SETPOINT_SCAN_STEPS`] for a failing intermediate one: at most 3 + 4·20 plans, each
/// without remedies.
pub fn check<R: Real, const N: usize, const M: usize>(
    advice: &StageAdvice<R>,
    influent: &Solution<R, N>,
    influent_flow: LitresPerHour<R>,
    reagent: &Solution<R, M>,
    request: &DoseRequest<R>,
) -> [Option<StageCheck<R>>; 3] {
    let mut out = [None; 3];
    let mut reagent = reagent.clone();
    reagent.set_temperature(influent.temperature());
    let reagent = &reagent;
    let mut stage_influent = influent.clone();
    let mut flow = influent_flow;
    let last = advice.stages;
    let final_ph = request.setpoint.ph();
    let mut start_ph = match stage_influent.solve() {
        Ok(eq) => eq.ph,
        Err(_) => return out,
    };
    // At most 3 stages (the advice's array).
    for (k, (rule, slot)) in (1..=last).zip(advice.setpoints_ph.iter().zip(out.iter_mut())) {
        let Some(rule) = *rule else { break };
        let plan_at = |sp: R| {
            let ph = Ph::new(sp).ok()?;
            plan_with(&stage_influent, flow, reagent, &DoseRequest { setpoint: ph, ..*request }, false).ok()
        };
        let mut chosen = plan_at(rule).map(|p| (rule, p));
        let passes = chosen.as_ref().is_some_and(|(_, p)| controllable(&p.checks));
        if !passes && k < last {
            // Candidates strictly between the stage's influent pH and the final setpoint.
            let (lo, hi) = if start_ph < final_ph { (start_ph, final_ph) } else { (final_ph, start_ph) };
            'scan: for j in 1..=SETPOINT_SCAN_STEPS {
                let d = R::from_f64(SETPOINT_SCAN_SPACING_PH * f64::from(j));
                for candidate in [rule - d, rule + d] {
                    if candidate <= lo || candidate >= hi {
                        continue;
                    }
                    if let Some(p) = plan_at(candidate).filter(|p| controllable(&p.checks)) {
                        chosen = Some((candidate, p));
                        break 'scan;
                    }
                }
            }
        }
        let Some((setpoint_ph, p)) = chosen else {
            *slot = Some(StageCheck {
                rule_setpoint_ph: rule,
                setpoint_ph: rule,
                controllable: false,
                step_delta_ph: None,
            });
            break;
        };
        *slot = Some(StageCheck {
            rule_setpoint_ph: rule,
            setpoint_ph,
            controllable: controllable(&p.checks),
            step_delta_ph: p.gain_ph_per_step,
        });
        // The next stage's influent: this stage's effluent.
        let q = flow.l_per_h();
        let Ok(next) = stage_influent.mix(q, reagent, p.reagent_flow_l_per_h) else { break };
        let Ok(next_flow) = LitresPerHour::new(q + p.reagent_flow_l_per_h) else { break };
        stage_influent = next;
        flow = next_flow;
        start_ph = setpoint_ph;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stage_counts_follow_the_rule_of_thumb() {
        // Common practice (McMillan, from memory): 4–10 → 1, 2–12 → 2, beyond → 3, setpoint 7.
        assert_eq!(advise(4.0_f64, 10.0, 7.0).unwrap().stages, 1);
        assert_eq!(advise(2.0_f64, 12.0, 7.0).unwrap().stages, 2);
        assert_eq!(advise(1.0_f64, 7.0, 7.0).unwrap().stages, 3);
        assert_eq!(advise(6.5_f64, 7.5, 7.0).unwrap().stages, 1);
    }

    #[test]
    fn intermediate_setpoints_split_the_excursion() {
        let a = advise(1.0_f64, 6.0, 7.0).unwrap();
        assert_eq!(a.stages, 3);
        assert_eq!(a.setpoints_ph, [Some(3.0), Some(5.0), Some(7.0)]);
        assert!(!a.both_directions);
        let b = advise(3.0_f64, 11.5, 7.0).unwrap();
        assert_eq!(b.stages, 2);
        assert!(b.both_directions);
        assert_eq!(b.setpoints_ph[1], Some(7.0));
        assert!((b.setpoints_ph[0].unwrap() - 9.25).abs() < 1e-12);
        // One stage: the setpoint itself, and no entries past `stages`.
        assert_eq!(advise(5.0_f64, 8.0, 7.0).unwrap().setpoints_ph, [Some(7.0), None, None]);
    }

    #[test]
    fn stage_setpoints_are_checked_like_the_plan() {
        use crate::chem::{Activity, Solution};
        use crate::titration::dose::{DoseRequest, plan};
        use crate::units::Celsius;
        // Unbuffered acid rinse (invented), 50 % caustic, 2 L/h pump stepping 1 mL/h.
        let mut strip: Solution<f64, 6> = Solution::new(Celsius::standard(), Activity::Davies);
        strip.add_formula("H2SO4", 0.003).unwrap();
        let mut caustic: Solution<f64, 1> = Solution::standard();
        caustic.add_formula("NaOH", 19.0).unwrap();
        let flow = LitresPerHour::new(500.0).unwrap();
        let req = DoseRequest::checked(7.0, Some((2.0, 0.001)), Some(0.5)).unwrap();
        let own = strip.solve().unwrap().ph;
        let advice = advise(own, own, 7.0).unwrap();
        assert_eq!(advice.stages, 2);
        let checks = check(&advice, &strip, flow, &caustic, &req);
        let first = checks[0].unwrap();
        // The rule's first setpoint is too steep here; the checked one is not.
        let rule =
            plan(&strip, flow, &caustic, &DoseRequest { setpoint: Ph::new(first.rule_setpoint_ph).unwrap(), ..req })
                .unwrap();
        assert!(rule.checks.iter().any(|c| matches!(c, DoseCheck::TooSteep { .. })), "{rule:?}");
        assert!(first.controllable && first.setpoint_ph != first.rule_setpoint_ph, "{first:?}");
        let moved = plan(&strip, flow, &caustic, &DoseRequest { setpoint: Ph::new(first.setpoint_ph).unwrap(), ..req })
            .unwrap();
        assert!(moved.all_clear(), "{moved:?}");
        assert!(first.setpoint_ph > own && first.setpoint_ph < 7.0);
        // The final stage keeps its setpoint and is reported as not controllable.
        let last = checks[1].unwrap();
        assert!(!last.controllable && last.setpoint_ph == 7.0, "{last:?}");
        assert!(checks[2].is_none());
    }

    #[test]
    fn invalid_input() {
        assert_eq!(advise(8.0_f64, 6.0, 7.0), Err(InvalidStageInput));
        assert_eq!(advise(f64::NAN, 6.0, 7.0), Err(InvalidStageInput));
        assert_eq!(advise(2.0_f64, 15.0, 7.0), Err(InvalidStageInput));
    }
}
