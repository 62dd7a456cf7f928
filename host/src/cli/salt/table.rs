//! The readable `salt` table.

use std::fmt::Write;

use phdose::chem::salt::{IonReport, SaltReport};
use phdose::chem::substance;

use super::input::SaltInput;
use super::names;
use crate::cli::caution::CAUTION;
use crate::cli::format::{fixed, percent, sci};
use crate::cli::layout;

const LABEL: usize = 17;

fn constant(label: &str, k: Option<f64>) -> Option<String> {
    k.map(|k| format!("{label} {} (p{label} {})", sci(k), fixed(-k.log10(), 2)))
}

fn ion_line(r: &IonReport<f64>) -> String {
    let consts: Vec<String> = [constant("Ka", r.ka), constant("Kb", r.kb)].into_iter().flatten().collect();
    let action = match r.action.as_str() {
        "nothing" => "does nothing in water",
        "acid" => "acts as a weak acid",
        "base" => "acts as a weak base",
        _ => "amphiprotic (weak acid and weak base)",
    };
    let mut line = format!("{} × {:<10}{action}", r.count, r.formula);
    if !consts.is_empty() {
        let _ = write!(line, "; {}", consts.join(", "));
    }
    line
}

/// Renders the analysis.
pub fn render(input: &SaltInput, r: &SaltReport<f64>) -> String {
    let c = &input.conditions;
    let eq = &r.equilibrium;
    let name = substance::find(r.formula).map_or("", |s| s.name);
    let activity = layout::activity(c.activity);
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Salt {} ({name}), {} mol/L at {:.1} °C, {activity}",
        r.formula,
        sci(r.concentration_mol_per_l),
        c.celsius()
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "{:<LABEL$}{}", "class", r.class.as_str());
    let _ =
        writeln!(s, "{:<LABEL$}{}   (neutral {} at this temperature)", "pH", fixed(eq.ph, 3), fixed(r.neutral_ph, 2));
    let _ = writeln!(s, "{:<LABEL$}{} ({})", "parent acid", r.parent_acid, r.parent_acid_strength.as_str());
    let _ = writeln!(s, "{:<LABEL$}{} ({})", "parent base", r.parent_base, r.parent_base_strength.as_str());
    let _ = writeln!(s, "{:<LABEL$}{}", "cation", ion_line(&r.cation));
    let _ = writeln!(s, "{:<LABEL$}{}", "anion", ion_line(&r.anion));
    match &r.approximation {
        Some(a) => {
            let verdict = if a.valid { "holds" } else { "fails" };
            let _ = writeln!(
                s,
                "{:<LABEL$}{}: pH {} ({:+.3} vs exact); 5 % rule {verdict} (ratio {})",
                "approximation",
                names::kind_formula(a.kind),
                fixed(a.ph, 3),
                a.error_ph,
                percent(a.rule_ratio)
            );
        }
        None => {
            let _ = writeln!(s, "{:<LABEL$}none applies", "approximation");
        }
    }
    let _ = writeln!(s, "{:<LABEL$}{} mol/L", "ionic strength", sci(eq.ionic_strength_mol_per_l));
    let _ = writeln!(s, "{:<LABEL$}{} mol/L per pH unit", "buffer capacity", sci(eq.buffer_capacity_mol_per_l_per_ph));
    layout::finish(s, &[], CAUTION)
}
