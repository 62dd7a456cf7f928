//! Report words for the salt analysis enums the core does not name itself.

use phdose::chem::salt::ApproximationKind;

/// Stable JSON name of an approximation formula.
pub fn kind_key(kind: ApproximationKind) -> &'static str {
    match kind {
        ApproximationKind::WeakAcid => "weak_acid",
        ApproximationKind::WeakBase => "weak_base",
        ApproximationKind::Amphiprotic => "amphiprotic",
        ApproximationKind::BothIons => "both_ions",
    }
}

/// The formula in words, for the table.
pub fn kind_formula(kind: ApproximationKind) -> &'static str {
    match kind {
        ApproximationKind::WeakAcid => "[H+] = √(Ka·C)",
        ApproximationKind::WeakBase => "[OH-] = √(Kb·C)",
        ApproximationKind::Amphiprotic => "[H+] = √(K1·K2)",
        ApproximationKind::BothIons => "[H+] = √(Ka·Kw/Kb)",
    }
}
