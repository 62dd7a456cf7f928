//! Acid–base systems: a family of forms linked by up to three proton-transfer steps.
//!
//! A system is described from its fully protonated form (charge `charge_protonated`); form
//! `j` (0 ≤ j ≤ steps) has lost `j` protons and carries charge `charge_protonated − j`. Each
//! step's equilibrium constant depends on temperature through a [`LogK`] expression.

use crate::real::Real;

/// Most dissociation steps one system may have.
pub const MAX_STEPS: usize = 3;

/// [`MAX_STEPS`] as a `u8`, for step numbers counted exactly in `u8` (the cast is checked at
/// compile time).
pub(crate) const MAX_STEPS_U8: u8 = {
    assert!(MAX_STEPS <= u8::MAX as usize, "step numbers are u8");
    MAX_STEPS as u8
};

/// Gas constant, J/(mol·K) (CODATA 2018 exact value).
pub const GAS_CONSTANT_J_PER_MOL_K: f64 = 8.314_462_618;
/// Reference temperature of the van 't Hoff form, K (25 °C).
pub const REFERENCE_KELVIN: f64 = 298.15;

/// Temperature dependence of one equilibrium constant:
/// log10 K(T) = a + b/T + c·T + d·log10(T) + e/T², T in kelvin.
///
/// This one shape holds both the van 't Hoff form (constant ΔH°, [`LogK::vant_hoff`]) and the
/// published analytic fits (Plummer & Busenberg 1982, Millero 1995, Morris 1966 …).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LogK {
    /// Constant term.
    pub a: f64,
    /// Coefficient of 1/T, K.
    pub b: f64,
    /// Coefficient of T, 1/K.
    pub c: f64,
    /// Coefficient of log10 T.
    pub d: f64,
    /// Coefficient of 1/T², K².
    pub e: f64,
}

impl LogK {
    /// The van 't Hoff form: pK at 25 °C and a standard reaction enthalpy ΔH° (kJ/mol),
    /// taken constant over 0–100 °C: log10 K = −pK25 − ΔH°/(R·ln10)·(1/T − 1/298.15).
    /// The error grows with |T − 25 °C| and with the reaction's heat capacity change.
    pub const fn vant_hoff(pk_25: f64, enthalpy_kj_per_mol: f64) -> Self {
        let k = enthalpy_kj_per_mol * 1000.0 / (GAS_CONSTANT_J_PER_MOL_K * core::f64::consts::LN_10);
        Self { a: -pk_25 + k / REFERENCE_KELVIN, b: -k, c: 0.0, d: 0.0, e: 0.0 }
    }

    /// An analytic fit log10 K = a + b/T + c·T + d·log10 T + e/T².
    pub const fn analytic(a: f64, b: f64, c: f64, d: f64, e: f64) -> Self {
        Self { a, b, c, d, e }
    }

    /// pK = −log10 K at `kelvin` (273.15–373.15 K for the catalogue's fits).
    pub fn pk<R: Real>(&self, kelvin: R) -> R {
        let f = |v: f64| R::from_f64(v);
        let log_k = f(self.a)
            + f(self.b) / kelvin
            + f(self.c) * kelvin
            + f(self.d) * kelvin.log10()
            + f(self.e) / (kelvin * kelvin);
        -log_k
    }

    /// `true` when every coefficient is finite.
    pub fn is_finite(&self) -> bool {
        self.a.is_finite() && self.b.is_finite() && self.c.is_finite() && self.d.is_finite() && self.e.is_finite()
    }
}

/// One acid–base system (e.g. carbonate: CO2 / HCO3⁻ / CO3²⁻).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AcidBaseSystem {
    /// Short unique name ("carbonate"); systems with the same key are merged in a solution.
    pub key: &'static str,
    /// Formula of each form, fully protonated first; unused entries are "".
    pub forms: [&'static str; MAX_STEPS + 1],
    /// Number of dissociation steps, 1–3.
    pub steps: u8,
    /// Temperature dependence of each step's Ka; entries past `steps` are ignored.
    pub log_k: [LogK; MAX_STEPS],
    /// Charge of the fully protonated form (e.g. 0 for CO2, +1 for NH4⁺, −1 for HSO4⁻).
    pub charge_protonated: i8,
    /// The parent acid a chemist names for the anions of this system (e.g. "H2SO4" for
    /// sulfate, "H3PO4" for phosphate).
    pub parent_acid: &'static str,
}

/// Why a system description was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SystemError {
    /// `steps` is 0 or above [`MAX_STEPS`].
    StepCount(u8),
    /// A coefficient of the given step (0-based) is NaN or infinite.
    NonFiniteConstant(u8),
}

impl core::fmt::Display for SystemError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::StepCount(n) => write!(f, "an acid-base system needs 1 to {MAX_STEPS} steps, got {n}"),
            Self::NonFiniteConstant(s) => write!(f, "equilibrium constant of step {} is not finite", s + 1),
        }
    }
}

impl core::error::Error for SystemError {}

impl AcidBaseSystem {
    /// Checks the description (step count and finite constants).
    pub fn validate(&self) -> Result<(), SystemError> {
        if self.steps == 0 || usize::from(self.steps) > MAX_STEPS {
            return Err(SystemError::StepCount(self.steps));
        }
        for (i, k) in self.log_k.iter().take(usize::from(self.steps)).enumerate() {
            if !k.is_finite() {
                #[allow(clippy::cast_possible_truncation, reason = "i < MAX_STEPS = 3")]
                return Err(SystemError::NonFiniteConstant(i as u8));
            }
        }
        Ok(())
    }

    /// Number of dissociation steps as `usize` (clamped to 1–3).
    #[inline]
    pub fn step_count(&self) -> usize {
        usize::from(self.steps).clamp(1, MAX_STEPS)
    }

    /// Charge of form `j` (protons lost).
    #[inline]
    pub fn charge_of_form(&self, j: usize) -> i32 {
        #[allow(clippy::cast_possible_wrap, clippy::cast_possible_truncation, reason = "j ≤ 3")]
        let j = j as i32;
        i32::from(self.charge_protonated) - j
    }

    /// Formula of form `j`, or "" when `j` is past the last form.
    pub fn form(&self, j: usize) -> &'static str {
        self.forms.get(j).copied().unwrap_or("")
    }

    /// pKa of step `step` (1-based, 1..=steps) at `kelvin`; `None` for a step that does not exist.
    pub fn pka<R: Real>(&self, step: usize, kelvin: R) -> Option<R> {
        if step == 0 || step > self.step_count() {
            return None;
        }
        self.log_k.get(step - 1).map(|k| k.pk(kelvin))
    }

    /// The neutral (or least positive) form a chemist names as the parent base of this
    /// system's cations, e.g. "NH3" for ammonium. Only meaningful when the fully protonated
    /// form is a cation.
    pub fn parent_base(&self) -> &'static str {
        // max(0) then unsigned_abs: exact, a charge below zero counts as 0.
        let z0 = usize::from(self.charge_protonated.max(0).unsigned_abs());
        self.form(z0.min(self.step_count()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn vant_hoff_reproduces_pk_at_25c_and_moves_the_right_way() {
        let k = LogK::vant_hoff(9.245, 52.0);
        let pk25: f64 = k.pk(298.15);
        assert!((pk25 - 9.245).abs() < 1e-12);
        // Endothermic dissociation: K rises with T, so pK falls.
        assert!(k.pk(323.15_f64) < pk25);
        // Slope check: ΔpK between 25 and 50 °C = ΔH/(R ln10)·(1/298.15 − 1/323.15).
        let expect = 52_000.0 / (GAS_CONSTANT_J_PER_MOL_K * core::f64::consts::LN_10) * (1.0 / 298.15 - 1.0 / 323.15);
        assert!((pk25 - k.pk(323.15_f64) - expect).abs() < 1e-10);
    }

    #[test]
    fn validate_rejects_bad_systems() {
        let mut s = crate::chem::catalogue::ACETATE;
        assert!(s.validate().is_ok());
        s.steps = 0;
        assert_eq!(s.validate(), Err(SystemError::StepCount(0)));
        s.steps = 4;
        assert_eq!(s.validate(), Err(SystemError::StepCount(4)));
        s.steps = 1;
        s.log_k[0].a = f64::NAN;
        assert_eq!(s.validate(), Err(SystemError::NonFiniteConstant(0)));
    }

    #[test]
    fn parent_base_of_ammonium_is_ammonia() {
        assert_eq!(crate::chem::catalogue::AMMONIUM.parent_base(), "NH3");
        assert_eq!(crate::chem::catalogue::AMMONIUM.pka(2, 298.15_f64), None);
    }

    #[test]
    fn parent_base_takes_the_form_of_charge_zero_or_the_fully_protonated_one() {
        // A doubly charged cation system (invented: H2X²⁺ / HX⁺ / X): the parent base is form 2.
        let mut s = crate::chem::catalogue::AMMONIUM;
        s.forms = ["H2X+2", "HX+", "X", ""];
        s.steps = 2;
        s.charge_protonated = 2;
        assert_eq!(s.parent_base(), "X");
        // Charge above the step count: the last form.
        s.charge_protonated = 3;
        assert_eq!(s.parent_base(), "X");
        // Neutral or anionic fully protonated forms: form 0 (no negative index, no fallback).
        s.charge_protonated = 0;
        assert_eq!(s.parent_base(), "H2X+2");
        s.charge_protonated = -1;
        assert_eq!(s.parent_base(), "H2X+2");
        assert_eq!(usize::from(MAX_STEPS_U8), MAX_STEPS);
    }
}
