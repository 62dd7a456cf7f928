//! How many neutralisation stages a job needs, and each stage's setpoint.
//!
//! **Common practice** (McMillan, "Advanced pH Measurement and Control", ISA — from memory, not
//! checked): one stage when the influent stays within pH 4–10 of a neutral setpoint, two stages
//! for pH 2–12, three beyond. Written here as the largest excursion from the setpoint: up to
//! 3 pH units → 1 stage, up to 5 → 2, more → 3. Intermediate setpoints split the worst excursion
//! into equal pH steps, so each tank sees a titration curve it can control.

use crate::real::Real;

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
    fn invalid_input() {
        assert_eq!(advise(8.0_f64, 6.0, 7.0), Err(InvalidStageInput));
        assert_eq!(advise(f64::NAN, 6.0, 7.0), Err(InvalidStageInput));
        assert_eq!(advise(2.0_f64, 15.0, 7.0), Err(InvalidStageInput));
    }
}
