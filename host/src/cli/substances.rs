//! `phdose substances`: the built-in substance table.

use std::fmt::Write;

use phdose::chem::substance::{Part, SUBSTANCES, Substance};
use serde::Serialize;

use super::json::{self, Num};
use super::{CliError, Mode};

/// the substance table: the formulas and names the other commands accept
///
/// Shows each formula, its name, molar mass and what one formula unit adds to the water
/// (strong ions and acid-base system totals).
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Print the same as a JSON array
    #[arg(long)]
    json: bool,
}

#[derive(Serialize)]
struct SubstanceOut {
    formula: &'static str,
    name: &'static str,
    molar_mass_g_per_mol: Num,
    salt: bool,
    adds: Vec<PartOut>,
}

#[derive(Serialize)]
#[serde(untagged)]
enum PartOut {
    Strong { strong_ion: &'static str, charge: i8, count: u8 },
    System { system: &'static str, added_as: &'static str, count: u8 },
}

fn part(p: &Part) -> PartOut {
    match *p {
        Part::Strong(ion, count) => PartOut::Strong { strong_ion: ion.formula(), charge: ion.charge(), count },
        Part::System(sys, count) => PartOut::System { system: sys.key, added_as: sys.form(0), count },
    }
}

/// What one formula unit adds, in words: "Na+ ×2, phosphate ×1".
fn adds(s: &Substance) -> String {
    let parts: Vec<String> = s
        .parts
        .iter()
        .map(|p| match *p {
            Part::Strong(ion, count) => format!("{} ×{count}", ion.formula()),
            Part::System(sys, count) => format!("{} ×{count}", sys.key),
        })
        .collect();
    parts.join(", ")
}

fn table() -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{:<12} {:<38} {:>9}  adds per formula unit", "formula", "name", "g/mol");
    for sub in SUBSTANCES {
        let salt = if sub.salt.is_some() { "  (salt)" } else { "" };
        let _ =
            writeln!(s, "{:<12} {:<38} {:>9.3}  {}{salt}", sub.formula, sub.name, sub.molar_mass_g_per_mol, adds(sub));
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Acid-base systems count as totals over all their forms; strong ions only carry charge.");
    let _ = writeln!(s, "A name works wherever a formula does (case ignored).");
    s
}

/// Runs `substances`.
pub fn run(args: Args) -> Result<String, CliError> {
    match Mode::of(args.json) {
        Mode::Table => Ok(table()),
        Mode::Json => {
            let list: Vec<SubstanceOut> = SUBSTANCES
                .iter()
                .map(|s| SubstanceOut {
                    formula: s.formula,
                    name: s.name,
                    molar_mass_g_per_mol: Num(s.molar_mass_g_per_mol),
                    salt: s.salt.is_some(),
                    adds: s.parts.iter().map(part).collect(),
                })
                .collect();
            json::render(&list)
        }
    }
}
