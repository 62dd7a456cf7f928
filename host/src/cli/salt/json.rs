//! The `salt --json` output document. Its keys are a public contract: add, never rename.

use phdose::chem::salt::{Approximation, IonReport, SaltReport};
use phdose::chem::substance;
use serde::Serialize;

use super::input::SaltInput;
use super::names;
use crate::cli::CliError;
use crate::cli::json::{self, Num, opt};

#[derive(Serialize)]
struct Output<'a> {
    salt: &'static str,
    name: &'static str,
    given_as: &'a str,
    concentration_mol_per_l: Num,
    temperature_c: Num,
    activity: &'static str,
    class: &'static str,
    ph: Num,
    neutral_ph: Num,
    parent_acid: &'static str,
    parent_acid_strength: &'static str,
    parent_base: &'static str,
    parent_base_strength: &'static str,
    cation: IonOut,
    anion: IonOut,
    approximation: Option<ApproxOut>,
    ionic_strength: Num,
    buffer_capacity: Num,
    iterations: u32,
}

#[derive(Serialize)]
struct IonOut {
    formula: &'static str,
    count: u8,
    action: &'static str,
    ka: Option<Num>,
    kb: Option<Num>,
    pka: Option<Num>,
    pkb: Option<Num>,
}

#[derive(Serialize)]
struct ApproxOut {
    kind: &'static str,
    ph: Num,
    error_ph: Num,
    rule_ratio: Num,
    valid: bool,
}

fn ion(r: &IonReport<f64>) -> IonOut {
    IonOut {
        formula: r.formula,
        count: r.count,
        action: r.action.as_str(),
        ka: opt(r.ka),
        kb: opt(r.kb),
        pka: opt(r.ka.map(|k| -k.log10())),
        pkb: opt(r.kb.map(|k| -k.log10())),
    }
}

fn approximation(a: &Approximation<f64>) -> ApproxOut {
    ApproxOut {
        kind: names::kind_key(a.kind),
        ph: Num(a.ph),
        error_ph: Num(a.error_ph),
        rule_ratio: Num(a.rule_ratio),
        valid: a.valid,
    }
}

/// Renders the analysis as the JSON document.
pub fn render(input: &SaltInput, r: &SaltReport<f64>) -> Result<String, CliError> {
    let eq = &r.equilibrium;
    let out = Output {
        salt: r.formula,
        name: substance::find(r.formula).map_or("", |s| s.name),
        given_as: &input.salt,
        concentration_mol_per_l: Num(r.concentration_mol_per_l),
        temperature_c: Num(input.conditions.celsius()),
        activity: input.conditions.activity_name(),
        class: r.class.as_str(),
        ph: Num(eq.ph),
        neutral_ph: Num(r.neutral_ph),
        parent_acid: r.parent_acid,
        parent_acid_strength: r.parent_acid_strength.as_str(),
        parent_base: r.parent_base,
        parent_base_strength: r.parent_base_strength.as_str(),
        cation: ion(&r.cation),
        anion: ion(&r.anion),
        approximation: r.approximation.as_ref().map(approximation),
        ionic_strength: Num(eq.ionic_strength_mol_per_l),
        buffer_capacity: Num(eq.buffer_capacity_mol_per_l_per_ph),
        iterations: eq.iterations,
    };
    json::render(&out)
}
