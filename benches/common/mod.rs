//! Compositions shared by the `solver` and `iterations` benches.
//!
//! Every water here is invented for these benchmarks (fictional sites, made-up analyses);
//! none is a textbook case. Totals are mol/L of the dissolved substance.
#![allow(dead_code, reason = "shared by two bench binaries, each of which uses only part of it")]

use phdose::Real;
use phdose::chem::{Activity, Equilibrium, Solution, SolverOptions};
use phdose::units::Celsius;

/// One benchmarked water: a name, its temperature and what is dissolved in it.
pub struct Water {
    /// Short label used in benchmark ids ("1sys", "4sys", "8sys").
    pub label: &'static str,
    /// Free-text description for the report.
    pub description: &'static str,
    /// Temperature, °C.
    pub celsius: f64,
    /// (formula, mol/L) added in this order.
    pub recipe: &'static [(&'static str, f64)],
    /// Number of distinct acid–base systems the recipe produces.
    pub systems: usize,
}

/// Rinse tank after the acid dip at the (fictional) Kestrel Row Plating shop: bicarbonate
/// make-up water with some hydrochloric acid carried over. One system (carbonate).
pub const PLATING_RINSE: Water = Water {
    label: "1sys",
    description: "Kestrel Row Plating rinse tank (fictional): make-up water bicarbonate + HCl drag-out, 17 °C",
    celsius: 17.0,
    recipe: &[("NaHCO3", 0.0024), ("HCl", 0.0009)],
    systems: 1,
};

/// Return line of the (fictional) Harrowgate Anodisers seal-rinse skid: sulfuric acid drag-out,
/// citrate and phosphate from the cleaner, bicarbonate from the make-up water, part-neutralised
/// by caustic. Four systems (sulfate, citrate, phosphate, carbonate).
pub const ANODISER_RETURN: Water = Water {
    label: "4sys",
    description: "Harrowgate Anodisers seal-rinse return (fictional): H2SO4 drag-out, citrate + phosphate cleaner, bicarbonate, NaOH, 22 °C",
    celsius: 22.0,
    recipe: &[("H2SO4", 0.0015), ("Na3C6H5O7", 0.0003), ("Na2HPO4", 0.0005), ("NaHCO3", 0.002), ("NaOH", 0.0021)],
    systems: 4,
};

/// Equalisation tank of the (fictional) Fenwick Lane trading estate: mixed effluent of a
/// laundry, a glass etcher, a fertiliser bagging line and a print shop. Eight systems
/// (carbonate, phosphate, ammonium, sulfate, borate, fluoride, formate, silicate).
pub const ESTATE_EFFLUENT: Water = Water {
    label: "8sys",
    description: "Fenwick Lane estate equalisation tank (fictional): 8 systems, mixed industrial effluent, 28 °C",
    celsius: 28.0,
    recipe: &[
        ("NaHCO3", 0.0041),
        ("Na2HPO4", 0.0006),
        ("(NH4)2SO4", 0.0008),
        ("H3BO3", 0.0003),
        ("NaF", 0.0002),
        ("HCOONa", 0.0005),
        ("H4SiO4", 0.0004),
        ("HCl", 0.0012),
    ],
    systems: 8,
};

/// The three waters, smallest first.
pub const WATERS: [&Water; 3] = [&PLATING_RINSE, &ANODISER_RETURN, &ESTATE_EFFLUENT];

/// The benchmarked water with capacity `N`.
pub fn build<R: Real, const N: usize>(w: &Water, activity: Activity) -> Solution<R, N> {
    let mut s = Solution::new(Celsius::new(R::from_f64(w.celsius)).expect("temperature in range"), activity);
    for (formula, mol_per_l) in w.recipe {
        s.add_formula(formula, R::from_f64(*mol_per_l)).expect("recipe is valid");
    }
    assert_eq!(s.components().len(), w.systems, "{}", w.label);
    s
}

/// The same water one control cycle later: its net strong charge changed by +1 % (a little more
/// caustic, or a little less acid drag-out, as sodium or chloride).
pub fn nudged<R: Real, const N: usize>(s: &Solution<R, N>) -> Solution<R, N> {
    let mut next = s.clone();
    let q = s.strong_charge_eq_per_l().to_f64();
    let (charge, amount) = if q >= 0.0 { (1, 0.01 * q) } else { (-1, -0.01 * q) };
    next.add_strong_ion(charge, R::from_f64(amount)).expect("small strong-ion change");
    next
}

/// Plain bisection, same tolerance as the default solver (the baseline).
pub fn bisection<R: Real>() -> SolverOptions<R> {
    SolverOptions { newton: false, ..SolverOptions::default() }
}

/// Plain bisection given the previous cycle's ionic strength (bisection ignores the start pH, but
/// in Davies mode the warm ionic strength saves activity rounds, so this is the fair warm baseline).
pub fn bisection_warm<R: Real>(previous: &Equilibrium<R>) -> SolverOptions<R> {
    SolverOptions {
        warm_start_ph: Some(previous.ph),
        warm_start_ionic_strength: Some(previous.ionic_strength_mol_per_l),
        ..bisection()
    }
}

/// Name of an activity mode for ids.
pub fn activity_name(a: Activity) -> &'static str {
    match a {
        Activity::Ideal => "ideal",
        Activity::Davies => "davies",
    }
}
