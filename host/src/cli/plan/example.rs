//! The built-in `plan --example` scenario (invented data).

/// First line of the example's table.
pub const TITLE: &str = "Built-in example (invented): rinse-water neutralization skid at a fictional plating shop";

/// Temperature of the rinse water, °C.
pub const TEMPERATURE_C: f64 = 18.0;

/// Rinse-water flow through the skid, L/h.
pub const FLOW_L_PER_H: f64 = 1200.0;

/// What the rinse carries, mol/L: sulfuric and hydrochloric acid dragged out of the pickling
/// tanks, and the bicarbonate alkalinity of the make-up water.
pub const DISSOLVED: [(&str, f64); 3] = [("H2SO4", 0.0012), ("HCl", 0.0006), ("NaHCO3", 0.0010)];

/// Reagent: 25 % caustic soda, density from the built-in grade table.
pub const REAGENT: (&str, f64) = ("NaOH", 25.0);

/// Setpoint, pH.
pub const SETPOINT_PH: f64 = 7.0;

/// Metering pump: maximum and step, L/h.
pub const PUMP: (f64, f64) = (10.0, 0.01);

/// Control band (full width), pH.
pub const BAND_PH: f64 = 0.3;
