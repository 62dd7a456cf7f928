//! Solving a `speciate` request: composition → equilibrium → speciation, as plain data.

use phdose::chem::Equilibrium;
use phdose::chem::activity;
use phdose::chem::substance::Part;
use phdose::titration::alkalinity::{self, Alkalinity};

use super::input::SpeciateInput;
use crate::cli::CliError;
use crate::cli::composition::{self, HostSolution};
use crate::cli::conditions::Conditions;

/// One form of an acid–base system at equilibrium.
#[derive(Clone, Debug, PartialEq)]
pub struct FormReport {
    /// Formula ("HCO3-").
    pub formula: &'static str,
    /// Charge.
    pub charge: i32,
    /// Concentration, mol/L.
    pub mol_per_l: f64,
    /// Share of the system total (0–1; 0 when the total is 0).
    pub fraction: f64,
}

/// One acid–base system at equilibrium.
#[derive(Clone, Debug, PartialEq)]
pub struct SystemReport {
    /// System key ("carbonate").
    pub key: &'static str,
    /// Total of all forms, mol/L.
    pub total_mol_per_l: f64,
    /// pKa of each step at the temperature.
    pub pka: Vec<f64>,
    /// Every form, fully protonated first.
    pub forms: Vec<FormReport>,
}

/// A strong (inert) ion and its concentration.
#[derive(Clone, Debug, PartialEq)]
pub struct StrongIonReport {
    /// Formula ("Na+").
    pub formula: &'static str,
    /// Charge.
    pub charge: i8,
    /// Concentration, mol/L.
    pub mol_per_l: f64,
}

/// Everything `speciate` reports.
#[derive(Clone, Debug, PartialEq)]
pub struct SpeciateReport {
    /// The request.
    pub input: SpeciateInput,
    /// The solved state.
    pub equilibrium: Equilibrium<f64>,
    /// −log10 Kw at the temperature.
    pub pkw: f64,
    /// Net strong-ion charge, eq/L.
    pub strong_charge_eq_per_l: f64,
    /// [H⁺], mol/L.
    pub h_mol_per_l: f64,
    /// [OH⁻], mol/L.
    pub oh_mol_per_l: f64,
    /// Activity coefficients of ions of charge 1, 2, 3 (all 1 in ideal mode).
    pub gamma: [f64; 3],
    /// Acid–base systems in the order first added.
    pub systems: Vec<SystemReport>,
    /// Strong ions in the order first added.
    pub strong_ions: Vec<StrongIonReport>,
    /// Phenolphthalein and total alkalinity and mineral acidity (SM 2320 endpoints 8.3 / 4.5).
    pub alkalinity: Alkalinity<f64>,
}

impl SpeciateReport {
    /// The conditions of the calculation.
    pub fn conditions(&self) -> &Conditions {
        &self.input.conditions
    }
}

/// Builds the solution, solves it and speciates it.
pub fn compute(input: SpeciateInput) -> Result<SpeciateReport, CliError> {
    let c = input.conditions;
    let solution: HostSolution = composition::solution(c, &input.dissolved, "")?;
    let equilibrium = solution.solve().map_err(|e| CliError::new(format!("pH solver: {e}")))?;
    let speciation = solution.speciate(&equilibrium);
    let alkalinity = alkalinity::alkalinity(&solution).map_err(|e| CliError::new(format!("alkalinity: {e}")))?;

    let mut systems = Vec::with_capacity(solution.components().len());
    for (index, (component, conc)) in solution.components().iter().zip(speciation.forms_mol_per_l.iter()).enumerate() {
        let steps = component.system.step_count();
        let total = component.total_mol_per_l;
        let forms = conc
            .iter()
            .take(steps + 1)
            .enumerate()
            .map(|(j, &mol_per_l)| FormReport {
                formula: component.system.form(j),
                charge: component.system.charge_of_form(j),
                mol_per_l,
                fraction: if total > 0.0 { mol_per_l / total } else { 0.0 },
            })
            .collect();
        let pka = (1..=steps).filter_map(|step| solution.component_pka(index, step)).collect();
        systems.push(SystemReport { key: component.system.key, total_mol_per_l: total, pka, forms });
    }

    let factor = equilibrium.davies_factor;
    Ok(SpeciateReport {
        pkw: solution.pkw(),
        strong_charge_eq_per_l: solution.strong_charge_eq_per_l(),
        h_mol_per_l: speciation.h_mol_per_l,
        oh_mol_per_l: speciation.oh_mol_per_l,
        gamma: [1, 2, 3].map(|z| activity::gamma(factor, z)),
        systems,
        strong_ions: strong_ions(&input),
        alkalinity,
        equilibrium,
        input,
    })
}

/// The strong ions the dissolved substances release, merged by formula.
fn strong_ions(input: &SpeciateInput) -> Vec<StrongIonReport> {
    let mut out: Vec<StrongIonReport> = Vec::new();
    for d in &input.dissolved {
        for part in d.substance.parts {
            if let Part::Strong(ion, count) = *part {
                let amount = d.mol_per_l * f64::from(count);
                match out.iter_mut().find(|s| s.formula == ion.formula()) {
                    Some(s) => s.mol_per_l += amount,
                    None => {
                        out.push(StrongIonReport { formula: ion.formula(), charge: ion.charge(), mol_per_l: amount });
                    }
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn rinse() -> SpeciateReport {
        let conditions = Conditions::new(Some(18.0), None).unwrap();
        let entries = vec![("NaHCO3".to_owned(), 0.002), ("HCl".to_owned(), 0.0007), ("Na2HPO4".to_owned(), 0.0003)];
        compute(SpeciateInput::new(conditions, entries).unwrap()).unwrap()
    }

    #[test]
    fn forms_sum_to_totals_and_charges_balance() {
        let r = rinse();
        let mut charge = r.h_mol_per_l - r.oh_mol_per_l;
        for s in &r.systems {
            let sum: f64 = s.forms.iter().map(|f| f.mol_per_l).sum();
            assert!((sum - s.total_mol_per_l).abs() <= 1e-12 * s.total_mol_per_l, "{}", s.key);
            charge += s.forms.iter().map(|f| f64::from(f.charge) * f.mol_per_l).sum::<f64>();
        }
        charge += r.strong_ions.iter().map(|s| f64::from(s.charge) * s.mol_per_l).sum::<f64>();
        assert!(charge.abs() < 1e-12, "charge balance off by {charge} eq/L");
    }

    #[test]
    fn strong_ions_match_the_solution_strong_charge() {
        let r = rinse();
        let na = r.strong_ions.iter().find(|s| s.formula == "Na+").unwrap();
        assert!((na.mol_per_l - (0.002 + 2.0 * 0.0003)).abs() < 1e-15);
        let q: f64 = r.strong_ions.iter().map(|s| f64::from(s.charge) * s.mol_per_l).sum();
        assert!((q - r.strong_charge_eq_per_l).abs() < 1e-15);
    }

    #[test]
    fn composition_and_solver_errors_are_reported() {
        let neg = SpeciateInput::new(Conditions::new(None, None).unwrap(), vec![("NaOH".to_owned(), -1e-3)]).unwrap();
        assert!(compute(neg).unwrap_err().message().starts_with("NaOH: "));
        let strong =
            SpeciateInput::new(Conditions::new(None, None).unwrap(), vec![("Na2SO4".to_owned(), 1.0)]).unwrap();
        assert!(compute(strong).unwrap_err().message().starts_with("pH solver: "));
    }
}
