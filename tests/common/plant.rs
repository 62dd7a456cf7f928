//! A plant model for the controller tests: a well-mixed overflowing tank on the reaction
//! invariants (explicit mixing in sub-steps of at most 1 s; ΔV/V ≈ 1.3e-3 per step at
//! 1200 L/h in 250 L), the true chemistry in Davies activities, and a first-order probe lag.
//! Deliberately not the controller's model: the controller may be configured ideal, with
//! another influent.

use phdose::chem::{Activity, Solution};
use phdose::titration::reagent::mol_per_l_of;
use phdose::units::Celsius;

/// 25 % caustic (1.274 kg/L) at `celsius`, Davies.
pub fn caustic(celsius: f64) -> Solution<f64, 2> {
    let mut s = Solution::new(Celsius::new(celsius).unwrap(), Activity::Davies);
    s.add_formula("NaOH", mol_per_l_of("NaOH", 25.0, 1.274).unwrap()).unwrap();
    s
}

/// The tank.
pub struct Plant {
    pub tank: Solution<f64, 8>,
    pub influent: Solution<f64, 8>,
    pub reagent: Solution<f64, 2>,
    pub volume_l: f64,
    pub probe_lag_s: f64,
    /// What the probe sees (lagged), pH.
    pub probe_ph: f64,
    /// The tank's true pH.
    pub ph: f64,
}

impl Plant {
    /// A tank full of `influent` at its own pH.
    pub fn new(influent: Solution<f64, 8>, reagent: Solution<f64, 2>, volume_l: f64, probe_lag_s: f64) -> Self {
        let ph = influent.solve().unwrap().ph;
        Self { tank: influent.clone(), influent, reagent, volume_l, probe_lag_s, probe_ph: ph, ph }
    }

    /// Advances `dt_s` with the influent at `influent_l_per_h` and the reagent at
    /// `reagent_l_per_h`; returns the true pH.
    pub fn advance(&mut self, dt_s: f64, influent_l_per_h: f64, reagent_l_per_h: f64) -> f64 {
        let steps = dt_s.ceil().max(1.0) as u32;
        let h = dt_s / f64::from(steps);
        let mut eq = self.tank.solve().unwrap();
        for _ in 0..steps {
            let total = influent_l_per_h + reagent_l_per_h;
            if total > 0.0 {
                let inflow = self.influent.mix(influent_l_per_h, &self.reagent, reagent_l_per_h).unwrap();
                let dv = total * h / 3600.0;
                self.tank = self.tank.mix(self.volume_l - dv, &inflow, dv).unwrap();
                eq = self.tank.solve_warm(&eq).unwrap();
            }
            self.probe_ph += (eq.ph - self.probe_ph) * (1.0 - (-h / self.probe_lag_s).exp());
        }
        self.ph = eq.ph;
        eq.ph
    }
}
