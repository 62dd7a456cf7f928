//! Commercial reagents: a substance at a mass percent and a density, converted to mol/L.

use crate::chem::substance::{self, Substance, UnknownSubstance};
use crate::real::Real;
use crate::units::Compact;

/// A reagent as bought: substance, mass percent (w/w) and density.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ReagentGrade {
    /// Substance formula ("NaOH").
    pub formula: &'static str,
    /// Mass percent of the substance, % w/w (0–100).
    pub mass_percent: f64,
    /// Solution density, kg/L, at `at_celsius`.
    pub density_kg_per_l: f64,
    /// Temperature of the density value, °C.
    pub at_celsius: f64,
    /// Where the density comes from.
    pub source: &'static str,
}

/// Common commercial strengths with their densities at 20 °C.
pub const COMMON_GRADES: &[ReagentGrade] = &[
    ReagentGrade {
        formula: "NaOH",
        mass_percent: 50.0,
        density_kg_per_l: 1.5253,
        at_celsius: 20.0,
        source: "CRC Handbook / Perry's table of NaOH solution densities (checked, via a public transcription)",
    },
    ReagentGrade {
        formula: "NaOH",
        mass_percent: 25.0,
        density_kg_per_l: 1.274,
        at_celsius: 20.0,
        source: "interpolated between 24 % (1.2629) and 28 % (1.3064) of the same NaOH table (checked)",
    },
    ReagentGrade {
        formula: "HCl",
        mass_percent: 32.0,
        density_kg_per_l: 1.159,
        at_celsius: 20.0,
        source: "table of HCl solution densities attributed to Perry's Handbook (checked, via a public transcription)",
    },
    ReagentGrade {
        formula: "HCl",
        mass_percent: 36.0,
        density_kg_per_l: 1.179,
        at_celsius: 20.0,
        source: "table of HCl solution densities attributed to Perry's Handbook (checked, via a public transcription)",
    },
    ReagentGrade {
        formula: "H2SO4",
        mass_percent: 96.0,
        density_kg_per_l: 1.8355,
        at_celsius: 20.0,
        source: "CRC Handbook, H2SO4 solution densities (from memory)",
    },
    ReagentGrade {
        formula: "H2SO4",
        mass_percent: 98.0,
        density_kg_per_l: 1.836,
        at_celsius: 20.0,
        source: "CRC Handbook, H2SO4 solution densities (from memory)",
    },
];

/// Why a reagent specification was refused.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ReagentError {
    /// The formula is not in the substance table.
    Unknown(UnknownSubstance),
    /// Mass percent outside (0, 100] or not finite.
    MassPercent(f64),
    /// Density outside (0.5, 3] kg/L or not finite.
    Density(f64),
}

impl core::fmt::Display for ReagentError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Unknown(e) => core::fmt::Display::fmt(e, f),
            Self::MassPercent(p) => write!(f, "mass percent {} is outside (0, 100]", Compact(*p)),
            Self::Density(d) => write!(f, "density {} kg/L is outside (0.5, 3]", Compact(*d)),
        }
    }
}

impl core::error::Error for ReagentError {}

/// Molar concentration (mol/L) of `substance` in a solution of `mass_percent` % w/w and density
/// `density_kg_per_l`: c = (w/100)·ρ·1000/M.
pub fn mol_per_l<R: Real>(substance: &Substance, mass_percent: R, density_kg_per_l: R) -> Result<R, ReagentError> {
    let w = mass_percent.to_f64();
    if !(w.is_finite() && w > 0.0 && w <= 100.0) {
        return Err(ReagentError::MassPercent(w));
    }
    let d = density_kg_per_l.to_f64();
    if !(d.is_finite() && d > 0.5 && d <= 3.0) {
        return Err(ReagentError::Density(d));
    }
    Ok(mass_percent * R::from_f64(0.01) * density_kg_per_l * R::from_f64(1000.0)
        / R::from_f64(substance.molar_mass_g_per_mol))
}

/// The built-in grade of `substance` at `mass_percent` % w/w (exact match), for its density.
pub fn common_grade(substance: &Substance, mass_percent: f64) -> Option<&'static ReagentGrade> {
    COMMON_GRADES.iter().find(|g| g.formula == substance.formula && g.mass_percent == mass_percent)
}

/// [`mol_per_l`] for a formula or name.
pub fn mol_per_l_of<R: Real>(formula: &str, mass_percent: R, density_kg_per_l: R) -> Result<R, ReagentError> {
    let s = substance::find(formula).map_err(ReagentError::Unknown)?;
    mol_per_l(s, mass_percent, density_kg_per_l)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn molarity_of_common_grades() {
        // 50 % NaOH at 1.5253 kg/L → 19.07 mol/L; 25 % at 1.274 → 7.96 mol/L; 32 % HCl at 1.159
        // → 10.17 mol/L; 36 % at 1.179 → 11.64 mol/L (calc: c = w·ρ/M with
        // the densities and sources of COMMON_GRADES above).
        for (f, w, d, expect) in [
            ("NaOH", 50.0, 1.5253, 19.07),
            ("NaOH", 25.0, 1.274, 7.96),
            ("HCl", 32.0, 1.159, 10.17),
            ("HCl", 36.0, 1.179, 11.64),
        ] {
            let c: f64 = mol_per_l_of(f, w, d).unwrap();
            assert!((c - expect).abs() < 0.01, "{f} {w} %: {c}");
        }
        // The grade table agrees with itself through the same conversion.
        for g in COMMON_GRADES {
            let c: f64 = mol_per_l_of(g.formula, g.mass_percent, g.density_kg_per_l).unwrap();
            assert!(c > 5.0 && c < 20.0, "{}: {c}", g.formula);
        }
    }

    #[test]
    fn bad_specifications_are_refused() {
        assert_eq!(mol_per_l_of("NaOH", 0.0_f64, 1.2), Err(ReagentError::MassPercent(0.0)));
        assert_eq!(mol_per_l_of("NaOH", 101.0_f64, 1.2), Err(ReagentError::MassPercent(101.0)));
        assert_eq!(
            mol_per_l_of("NaOH", 25.0_f64, f64::NAN).map_err(|e| matches!(e, ReagentError::Density(_))),
            Err(true)
        );
        assert!(matches!(mol_per_l_of("Caustic", 25.0_f64, 1.2), Err(ReagentError::Unknown(_))));
    }
}
