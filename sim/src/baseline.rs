//! The baseline: what a conventional loop would do on the same plant — a PI controller on the
//! pH error, no feed-forward, no chemistry, tuned by a named rule from a bump test, run through
//! the same supervisor, interlocks and pumps.
//!
//! **The rule.** SIMC (Skogestad 2003, "Simple analytic rules for model reduction and PID
//! controller tuning", J. Process Control 13, 291–309; from memory): for a first-order process
//! with gain k, time constant τ and dead time θ, and the recommended closed-loop time constant
//! τc = θ: Kc = τ / (k·(τc + θ)), τI = min(τ, 4·(τc + θ)).
//!
//! **The model** comes from a bump test on the plant, as a commissioning engineer would do it:
//! with the reagent held at the flow that holds the setpoint (taken from the skid's own
//! feed-forward, so the test starts at the operating point), the flow is raised by 2 % and the
//! probe's pH (dead time and lag included) is recorded until it settles; k = ΔpH/Δq, and τ, θ
//! follow from the times to 28.3 % and 63.2 % of the response (Smith's two-point method:
//! τ = 1.5·(t63 − t28), θ = t63 − τ; Smith 1972, from memory). No noise and no disturbances
//! during the test.

use phdose::control::feedforward::ReagentSide;

use crate::plant::{DeadTime, StepInputs, Tank, solution};
use crate::run::{Loop, RunError};
use crate::scenario::Scenario;

/// The identified model and the resulting PI settings.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct Tuning {
    /// Process gain, pH per L/h of reagent.
    pub process_gain_ph_per_l_per_h: f64,
    /// Time constant, s.
    pub time_constant_s: f64,
    /// Dead time, s.
    pub dead_time_s: f64,
    /// PI gain, L/h per pH.
    pub gain_l_per_h_per_ph: f64,
    /// PI integral time, s.
    pub integral_time_s: f64,
}

impl Tuning {
    /// The loop to run with these settings.
    pub fn as_loop(&self) -> Loop {
        Loop::FeedbackOnly { gain_l_per_h_per_ph: self.gain_l_per_h_per_ph, integral_time_s: self.integral_time_s }
    }
}

/// Bump-tests the scenario's plant and tunes the baseline PI by SIMC.
pub fn tune(scenario: &Scenario) -> Result<Tuning, RunError> {
    let skid = &scenario.skid;
    let p = &scenario.plant;
    let celsius = p.temperature_c.unwrap_or(f64::from(skid.influent.design_temperature_c));
    let configured: Vec<(String, f64)> =
        skid.influent.dissolved.iter().map(|(k, v)| (k.as_str().to_owned(), f64::from(*v))).collect();
    let truth: Vec<(String, f64)> =
        p.influent.as_ref().map_or(configured, |m| m.iter().map(|(k, v)| (k.clone(), *v)).collect());
    let influent = solution(celsius, truth.iter().map(|(k, v)| (k.as_str(), *v)))?;
    // The operating point: the flow that holds the setpoint in the true plant (found by
    // bisection on the plant's own mixture, as trial and error on the skid would).
    let (side, settings) = match (&skid.caustic, &skid.acid) {
        (Some(c), _)
            if influent.solve().map_err(crate::plant::PlantError::Solve)?.ph < f64::from(skid.control.setpoint_ph) =>
        {
            (ReagentSide::Caustic, c)
        }
        (_, Some(a)) => (ReagentSide::Acid, a),
        (Some(c), None) => (ReagentSide::Caustic, c),
        (None, None) => return Err(RunError::Scenario("no reagent".into())),
    };
    let sub = phdose::chem::substance::find(&settings.substance)
        .map_err(|_| RunError::Scenario(format!("unknown reagent {}", settings.substance)))?;
    let w = f64::from(settings.mass_percent);
    let density = settings
        .density_kg_per_l
        .map(f64::from)
        .or_else(|| phdose::titration::reagent::common_grade(sub, w).map(|g| g.density_kg_per_l))
        .ok_or_else(|| RunError::Scenario("reagent density unknown".into()))?;
    let c: f64 =
        phdose::titration::reagent::mol_per_l(sub, w, density).map_err(|e| RunError::Scenario(e.to_string()))?;
    let reagent = solution(celsius, [(sub.formula, c * p.reagent_strength_factor)])?;
    let q_in = f64::from(skid.influent.design_flow_l_per_h);
    let sp = f64::from(skid.control.setpoint_ph);
    let ph_at = |q: f64| -> Result<f64, RunError> {
        Ok(influent.mix(q_in, &reagent, q)?.solve().map_err(crate::plant::PlantError::Solve)?.ph)
    };
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    let up = side == ReagentSide::Caustic;
    for _ in 0..60 {
        if (ph_at(hi)? < sp) == up {
            hi *= 2.0;
        } else {
            break;
        }
    }
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if (ph_at(mid)? < sp) == up {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let q0 = 0.5 * (lo + hi);
    let q1 = q0 * 1.02;
    let slot = |q: f64| if up { [q, 0.0] } else { [0.0, q] };
    let start = influent.mix(q_in, &reagent, q0)?;
    let reagents = if up { [Some(reagent.clone()), None] } else { [None, Some(reagent.clone())] };
    let mut tank = Tank::new(start, p.volume_l, reagents)?;
    let residence_s = p.volume_l / q_in * 3600.0;
    let h = 1.0;
    let horizon = (8.0 * residence_s + 10.0 * (p.probe_dead_time_s + p.probe_lag_s)).ceil() as usize;
    let mut dead = DeadTime::default();
    let mut lagged = tank.ph();
    let y0 = lagged;
    dead.push(0.0, y0);
    let mut response = Vec::with_capacity(horizon);
    let a = 1.0 - (-h / p.probe_lag_s).exp();
    for k in 0..horizon {
        let t = (k + 1) as f64 * h;
        let ph = tank.advance(
            h,
            &StepInputs {
                influent_l_per_h: q_in,
                influent: &influent,
                reagent_l_per_h: slot(q1),
                outlet_l_per_h: None,
            },
        )?;
        dead.push(t, ph);
        lagged += (dead.delayed(t, p.probe_dead_time_s).unwrap_or(ph) - lagged) * a;
        response.push((t, lagged));
    }
    let y1 = response.last().map_or(y0, |r| r.1);
    let dy = y1 - y0;
    if dy.abs() < 1e-9 {
        return Err(RunError::Scenario("the bump test did not move the pH".into()));
    }
    let crossing = |f: f64| response.iter().find(|(_, y)| (y - y0) / dy >= f).map_or(0.0, |r| r.0);
    let (t28, t63) = (crossing(0.283), crossing(0.632));
    let tau = (1.5 * (t63 - t28)).max(h);
    let theta = (t63 - tau).max(0.0);
    let k = (dy / (q1 - q0)).abs();
    let tau_c = theta.max(f64::from(skid.control.tick_s));
    Ok(Tuning {
        process_gain_ph_per_l_per_h: k,
        time_constant_s: tau,
        dead_time_s: theta,
        gain_l_per_h_per_ph: tau / (k * (tau_c + theta)),
        integral_time_s: tau.min(4.0 * (tau_c + theta)).max(1.0),
    })
}
