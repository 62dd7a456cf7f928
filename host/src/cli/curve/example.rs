//! The built-in `curve --example` scenario (invented data).

/// First line of the example's table.
pub const TITLE: &str = "Built-in example (invented): lab check of the alkaline-cleaner rinse at a fictional \
plating shop, 100 mL titrated with 0.02 mol/L HCl";

/// Lab temperature, °C.
pub const TEMPERATURE_C: f64 = 20.0;

/// Sample volume, mL.
pub const SAMPLE_ML: f64 = 100.0;

/// What the rinse carries, mol/L: caustic and soda ash dragged out of the cleaner tank.
pub const DISSOLVED: [(&str, f64); 2] = [("NaOH", 0.001), ("Na2CO3", 0.002)];

/// Titrant, mol/L.
pub const TITRANT: (&str, f64) = ("HCl", 0.02);

/// End of the titration, mL.
pub const MAX_TITRANT_ML: f64 = 30.0;
