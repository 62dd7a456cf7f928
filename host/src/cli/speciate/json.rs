//! The `speciate --json` output document. Its keys follow README's vocabulary; the stable keys
//! listed there are never renamed.

use std::collections::BTreeMap;

use serde::Serialize;

use super::report::SpeciateReport;
use crate::cli::CliError;
use crate::cli::json::{self, Num};

#[derive(Serialize)]
struct Output<'a> {
    ph: Num,
    ionic_strength: Num,
    buffer_capacity: Num,
    iterations: u32,
    species: BTreeMap<&'a str, Num>,
    totals_mol_per_l: BTreeMap<&'a str, Num>,
    temperature_c: Num,
    activity: &'static str,
    pkw: Num,
    neutral_ph: Num,
    strong_charge_eq_per_l: Num,
    strong_ions_mol_per_l: BTreeMap<&'a str, Num>,
    residual_eq_per_l: Num,
    davies_factor: Num,
    activity_coefficients: Gammas,
    dissolved: BTreeMap<&'a str, Num>,
    substances: Vec<DissolvedOut<'a>>,
    systems: Vec<SystemOut<'a>>,
    alkalinity: AlkalinityOut,
}

/// SM 2320 endpoints (pH 8.3 and 4.5), mg/L as CaCO3.
#[derive(Serialize)]
struct AlkalinityOut {
    phenolphthalein_mg_per_l_as_caco3: Num,
    total_mg_per_l_as_caco3: Num,
    acidity_to_ph_4_5_mg_per_l_as_caco3: Num,
}

#[derive(Serialize)]
struct Gammas {
    z1: Num,
    z2: Num,
    z3: Num,
}

#[derive(Serialize)]
struct DissolvedOut<'a> {
    given_as: &'a str,
    formula: &'static str,
    name: &'static str,
    mol_per_l: Num,
    mg_per_l: Num,
}

#[derive(Serialize)]
struct SystemOut<'a> {
    key: &'a str,
    total_mol_per_l: Num,
    pka: Vec<Num>,
    forms: Vec<FormOut<'a>>,
}

#[derive(Serialize)]
struct FormOut<'a> {
    formula: &'a str,
    charge: i32,
    mol_per_l: Num,
    fraction: Num,
}

/// Renders the report as the JSON document.
pub fn render(r: &SpeciateReport) -> Result<String, CliError> {
    let eq = &r.equilibrium;
    let mut species = BTreeMap::new();
    species.insert("H+", Num(r.h_mol_per_l));
    species.insert("OH-", Num(r.oh_mol_per_l));
    for f in r.systems.iter().flat_map(|s| s.forms.iter()) {
        // Form formulas are unique across the catalogue; add rather than overwrite regardless.
        let entry = species.entry(f.formula).or_insert(Num(0.0));
        entry.0 += f.mol_per_l;
    }
    let [z1, z2, z3] = r.gamma.map(Num);
    let out = Output {
        ph: Num(eq.ph),
        ionic_strength: Num(eq.ionic_strength_mol_per_l),
        buffer_capacity: Num(eq.buffer_capacity_mol_per_l_per_ph),
        iterations: eq.iterations,
        species,
        totals_mol_per_l: r.systems.iter().map(|s| (s.key, Num(s.total_mol_per_l))).collect(),
        temperature_c: Num(r.conditions().celsius()),
        activity: r.conditions().activity_name(),
        pkw: Num(r.pkw),
        neutral_ph: Num(r.pkw / 2.0),
        strong_charge_eq_per_l: Num(r.strong_charge_eq_per_l),
        strong_ions_mol_per_l: r.strong_ions.iter().map(|s| (s.formula, Num(s.mol_per_l))).collect(),
        residual_eq_per_l: Num(eq.residual_eq_per_l),
        davies_factor: Num(eq.davies_factor),
        activity_coefficients: Gammas { z1, z2, z3 },
        alkalinity: AlkalinityOut {
            phenolphthalein_mg_per_l_as_caco3: Num(r.alkalinity.phenolphthalein_mg_per_l_as_caco3()),
            total_mg_per_l_as_caco3: Num(r.alkalinity.total_mg_per_l_as_caco3()),
            acidity_to_ph_4_5_mg_per_l_as_caco3: Num(phdose::titration::alkalinity::mg_per_l_as_caco3(
                r.alkalinity.acidity_eq_per_l * 1000.0,
            )),
        },
        dissolved: r.input.dissolved.iter().map(|d| (d.given_as.as_str(), Num(d.mol_per_l))).collect(),
        substances: r
            .input
            .dissolved
            .iter()
            .map(|d| DissolvedOut {
                given_as: &d.given_as,
                formula: d.substance.formula,
                name: d.substance.name,
                mol_per_l: Num(d.mol_per_l),
                mg_per_l: Num(d.mol_per_l * d.substance.molar_mass_g_per_mol * 1000.0),
            })
            .collect(),
        systems: r
            .systems
            .iter()
            .map(|s| SystemOut {
                key: s.key,
                total_mol_per_l: Num(s.total_mol_per_l),
                pka: s.pka.iter().copied().map(Num).collect(),
                forms: s
                    .forms
                    .iter()
                    .map(|f| FormOut {
                        formula: f.formula,
                        charge: f.charge,
                        mol_per_l: Num(f.mol_per_l),
                        fraction: Num(f.fraction),
                    })
                    .collect(),
            })
            .collect(),
    };
    json::render(&out)
}
