//! Scores of a run: integrated absolute error, time in band, largest excursion, settling time
//! after each disturbance, reagent used and its cost, trips. Errors are of the tank's true pH
//! (what leaves the skid), not of the probe's reading.

use crate::run::Trajectory;

/// Settling after one disturbance.
#[derive(Clone, Debug, PartialEq)]
pub struct Settling {
    /// What happened.
    pub label: String,
    /// When, s.
    pub at_s: f64,
    /// Time until the true pH entered the band for good (until the next disturbance or the end),
    /// s; `None` when it did not settle in that window.
    pub settled_after_s: Option<f64>,
}

/// The scores.
#[derive(Clone, Debug, PartialEq)]
pub struct Kpis {
    /// Integrated absolute pH error, pH·s.
    pub iae_ph_s: f64,
    /// Fraction of the time the true pH was within the band (0–1).
    pub time_in_band_fraction: f64,
    /// Largest |true pH − setpoint|, pH.
    pub max_abs_error_ph: f64,
    /// Reagent used (caustic + acid), L.
    pub reagent_l: f64,
    /// Its cost, when a price is given.
    pub cost: Option<f64>,
    /// Trip codes, in order.
    pub trips: Vec<u16>,
    /// Settling after each disturbance.
    pub settling: Vec<Settling>,
}

/// Scores `t`; `price_per_l` prices the reagent.
pub fn score(t: &Trajectory, price_per_l: Option<f64>) -> Kpis {
    let half = t.band_ph / 2.0;
    let reagent_l = t.reagent_l.iter().sum::<f64>();
    let mut settling = Vec::new();
    for (i, e) in t.events.iter().enumerate() {
        let end = t.events.get(i + 1).map_or(f64::INFINITY, |n| n.t_s);
        let window: Vec<_> = t.samples.iter().filter(|s| s.t_s > e.t_s && s.t_s <= end).collect();
        let last_out = window.iter().rev().find(|s| (s.ph - t.setpoint_ph).abs() > half);
        let settled_after_s = match (last_out, window.last()) {
            (_, None) => None,
            (None, Some(_)) => Some(0.0),
            (Some(out), Some(last)) if (last.ph - t.setpoint_ph).abs() <= half && out.t_s < last.t_s => {
                Some(out.t_s - e.t_s)
            }
            _ => None,
        };
        settling.push(Settling { label: e.label.clone(), at_s: e.t_s, settled_after_s });
    }
    Kpis {
        iae_ph_s: t.iae_ph_s,
        time_in_band_fraction: if t.simulated_s > 0.0 { t.in_band_s / t.simulated_s } else { 0.0 },
        max_abs_error_ph: t.max_abs_error_ph,
        reagent_l,
        cost: price_per_l.map(|p| p * reagent_l),
        trips: t.trips.clone(),
        settling,
    }
}
