//! The readable `speciate` table.

use std::fmt::Write;

use super::report::SpeciateReport;
use crate::cli::caution::CAUTION;
use crate::cli::format::{fixed, percent, sci};
use crate::cli::layout;

const LABEL: usize = 18;
const VALUE: usize = 12;

/// Renders the report; `title` replaces the default first line (used by `--example`).
pub fn render(r: &SpeciateReport, title: Option<&str>) -> String {
    let c = r.conditions();
    let eq = &r.equilibrium;
    let activity = layout::activity(c.activity);
    let mut s = layout::start(title);
    let _ = writeln!(s, "Speciation at {:.1} °C, {activity}", c.celsius());
    let dissolved: Vec<String> =
        r.input.dissolved.iter().map(|d| format!("{} {} mol/L", d.substance.formula, sci(d.mol_per_l))).collect();
    let dissolved = if dissolved.is_empty() { "nothing (pure water)".to_owned() } else { dissolved.join(", ") };
    let _ = writeln!(s, "{:<LABEL$}{dissolved}", "dissolved");
    let _ = writeln!(s);
    let _ =
        writeln!(s, "{:<LABEL$}{}   (neutral {} at this temperature)", "pH", fixed(eq.ph, 3), fixed(r.pkw / 2.0, 2));
    let _ = writeln!(s, "{:<LABEL$}{} mol/L", "ionic strength", sci(eq.ionic_strength_mol_per_l));
    let _ = writeln!(s, "{:<LABEL$}{} mol/L per pH unit", "buffer capacity", sci(eq.buffer_capacity_mol_per_l_per_ph));
    let _ = writeln!(s, "{:<LABEL$}{}", "pKw", fixed(r.pkw, 3));
    let a = &r.alkalinity;
    let _ = writeln!(
        s,
        "{:<LABEL$}P {} / T {} mg/L as CaCO3 (endpoints pH 8.3 / 4.5){}",
        "alkalinity",
        fixed(a.phenolphthalein_mg_per_l_as_caco3(), 1),
        fixed(a.total_mg_per_l_as_caco3(), 1),
        if a.acidity_eq_per_l > 0.0 {
            format!(
                "; acidity {} mg/L as CaCO3",
                fixed(phdose::titration::alkalinity::mg_per_l_as_caco3(a.acidity_eq_per_l * 1000.0), 1)
            )
        } else {
            String::new()
        }
    );
    let _ = writeln!(
        s,
        "{:<LABEL$}{} iterations, charge residual {} eq/L",
        "solver",
        eq.iterations,
        sci(eq.residual_eq_per_l)
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "{:<LABEL$}{:>VALUE$}   share", "species", "mol/L");
    let _ = writeln!(s, "{:<LABEL$}{:>VALUE$}", "H+", sci(r.h_mol_per_l));
    let _ = writeln!(s, "{:<LABEL$}{:>VALUE$}", "OH-", sci(r.oh_mol_per_l));
    for sys in &r.systems {
        let pka: Vec<String> = sys.pka.iter().map(|p| fixed(*p, 2)).collect();
        let _ = writeln!(s, "{:<LABEL$}{:>VALUE$}   total (pKa {})", sys.key, sci(sys.total_mol_per_l), pka.join(", "));
        for f in &sys.forms {
            let _ =
                writeln!(s, "  {:<w$}{:>VALUE$}   {}", f.formula, sci(f.mol_per_l), percent(f.fraction), w = LABEL - 2);
        }
    }
    if !r.strong_ions.is_empty() {
        let ions: Vec<String> = r.strong_ions.iter().map(|i| format!("{} {}", i.formula, sci(i.mol_per_l))).collect();
        let _ = writeln!(s, "{:<LABEL$}{} mol/L (inert)", "strong ions", ions.join(", "));
    }
    layout::finish(s, &[], CAUTION)
}
