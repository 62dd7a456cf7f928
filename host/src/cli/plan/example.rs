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

/// Tank liquid volume, L (the built-in skid's `control.tank_volume_l`).
pub const TANK_VOLUME_L: f64 = 250.0;

/// Hard pH limits, low and high (the built-in skid's `control.low_limit_ph` and
/// `control.high_limit_ph`).
pub const HARD_LIMITS_PH: (f64, f64) = (1.0, 10.0);

/// Influent flow range, L/h (the built-in skid's `influent.min_flow_l_per_h` and
/// `influent.max_flow_l_per_h`).
pub const FLOW_RANGE_L_PER_H: (f64, f64) = (600.0, 1800.0);

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// The command line's example and the built-in skid file describe the same tank: a change to
    /// one must be made to the other.
    #[test]
    fn agrees_with_the_built_in_skid() {
        let skid = phdose::config::example::plating_rinse();
        let (i, c) = (&skid.influent, &skid.control);
        assert_eq!(f64::from(i.design_flow_l_per_h), FLOW_L_PER_H);
        assert_eq!(f64::from(i.design_temperature_c), TEMPERATURE_C);
        assert_eq!((f64::from(i.min_flow_l_per_h), f64::from(i.max_flow_l_per_h)), FLOW_RANGE_L_PER_H);
        assert_eq!(f64::from(c.tank_volume_l), TANK_VOLUME_L);
        assert_eq!((f64::from(c.low_limit_ph), f64::from(c.high_limit_ph)), HARD_LIMITS_PH);
        assert_eq!(f64::from(c.setpoint_ph), SETPOINT_PH);
        assert_eq!(c.band_ph, BAND_PH as f32);
        for (formula, mol_per_l) in DISSOLVED {
            let given = i.dissolved.iter().find(|(f, _)| f.as_str() == formula).map(|(_, c)| f64::from(*c)).unwrap();
            assert!((given - mol_per_l).abs() < 1e-9, "{formula}: {given} vs {mol_per_l}");
        }
        let caustic = skid.caustic.unwrap();
        assert_eq!((caustic.substance.as_str(), f64::from(caustic.mass_percent)), REAGENT);
    }
}
