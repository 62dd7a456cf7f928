//! The built-in `fit --example`: an invented lab titration (see the data file's header).

/// First line of the example's report.
pub const TITLE: &str = "Built-in example (invented): lab titration of a fictional plating-shop influent \
with 0.05 mol/L NaOH (host/examples-data/fit-example.csv)";

/// The lab points, `titrant_ml,ph`, with a comment header stating how they were made.
pub const DATA: &str = include_str!("../../../examples-data/fit-example.csv");

/// Sample volume, mL.
pub const SAMPLE_ML: f64 = 100.0;

/// Titrant, mol/L.
pub const TITRANT: (&str, f64) = ("NaOH", 0.05);

/// Lab temperature, °C.
pub const TEMPERATURE_C: f64 = 20.0;

/// Fit a carbonate total.
pub const CARBONATE: bool = true;

/// Generic buffers fitted.
pub const BUFFERS: u8 = 1;
