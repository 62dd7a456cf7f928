//! One simulation run: the real controller (`phdose::control::controller::Controller`, in f64)
//! ticking at its configured period against the [`crate::plant`], with the scenario's
//! disturbances.

use std::collections::BTreeMap;

use phdose::config::Skid;
use phdose::config::build::{self, MODEL_SYSTEMS};
use phdose::control::controller::{Controller, ControllerConfig, TickInputs};
use phdose::control::feedforward::ReagentSide;
use phdose::control::regulator::Law;
use phdose::control::supervisor::{ModeRequest, State};
use phdose::probe::calibration::Calibration;
use phdose::units::Celsius;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

use crate::plant::{DeadTime, PlantError, PlantSolution, ReagentLine, StepInputs, Tank, solution};
use crate::scenario::{Disturbances, Scenario};

/// Longest run, s (30 days).
pub const MAX_DURATION_S: f64 = 30.0 * 86_400.0;

/// Why a run could not start or go on.
#[derive(Clone, Debug, PartialEq)]
pub enum RunError {
    /// A setting of the scenario is unusable (what and why).
    Scenario(String),
    /// The controller could not be built from the skid's settings.
    Controller(String),
    /// The plant failed (a composition beyond the models' range).
    Plant(PlantError),
}

impl core::fmt::Display for RunError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Scenario(m) => write!(f, "scenario: {m}"),
            Self::Controller(m) => write!(f, "controller: {m}"),
            Self::Plant(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for RunError {}

impl From<phdose::chem::CompositionError> for RunError {
    fn from(e: phdose::chem::CompositionError) -> Self {
        Self::Plant(PlantError::Composition(e))
    }
}

impl From<PlantError> for RunError {
    fn from(e: PlantError) -> Self {
        Self::Plant(e)
    }
}

/// Which law the controller runs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Loop {
    /// The skid as configured: feed-forward from the chemistry plus feedback.
    Configured,
    /// Feedback only, with these PI settings (the baseline, see [`crate::baseline`]).
    FeedbackOnly {
        /// Gain on the pH error, L/h per pH.
        gain_l_per_h_per_ph: f64,
        /// Integral time, s.
        integral_time_s: f64,
    },
}

/// One controller tick as recorded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sample {
    /// Time, s.
    pub t_s: f64,
    /// The tank's true pH.
    pub ph: f64,
    /// The pH the controller selected (NaN when none).
    pub measured_ph: f64,
    /// Reagent flows arriving in the tank (caustic, acid), L/h.
    pub reagent_l_per_h: [f64; 2],
    /// Influent flow, L/h.
    pub influent_l_per_h: f64,
    /// Supervisor state code (see `State::code`).
    pub state: u8,
    /// Latched trip code (0 when none).
    pub trip: u16,
}

/// A disturbance, for the settling-time KPI.
#[derive(Clone, Debug, PartialEq)]
pub struct Event {
    /// When, s.
    pub t_s: f64,
    /// What ("flow step ×1.4", "slug", …).
    pub label: String,
}

/// What a run produces.
#[derive(Clone, Debug, PartialEq)]
pub struct Trajectory {
    /// One sample per controller tick.
    pub samples: Vec<Sample>,
    /// The disturbances, in time order.
    pub events: Vec<Event>,
    /// Integrated absolute error of the true tank pH over every plant step, pH·s.
    pub iae_ph_s: f64,
    /// Time inside the band (true pH), s.
    pub in_band_s: f64,
    /// Largest |true pH − setpoint|.
    pub max_abs_error_ph: f64,
    /// Reagent delivered into the tank (caustic, acid), L.
    pub reagent_l: [f64; 2],
    /// Trip codes latched during the run, in order (a code repeats if it trips again).
    pub trips: Vec<u16>,
    /// Plant steps taken.
    pub steps: u64,
    /// The setpoint and band (pH) the KPIs refer to.
    pub setpoint_ph: f64,
    /// Full band width, pH.
    pub band_ph: f64,
    /// Simulated time, s.
    pub simulated_s: f64,
}

/// The influent at time `t_s`: its flow (L/h) and whether a slug is in it.
struct Influent {
    base: PlantSolution,
    /// (start, end, composition with the slug) — scheduled and random slugs.
    slugs: Vec<(f64, f64, PlantSolution)>,
}

/// Flow factor of the disturbances at `t_s` (steps and ramps, then the daily profile).
fn flow_factor(d: &Disturbances, t_s: f64) -> f64 {
    let mut factor = 1.0;
    let mut from = 1.0;
    for c in &d.flow {
        if t_s < c.at_s {
            break;
        }
        let x = if c.ramp_s > 0.0 { ((t_s - c.at_s) / c.ramp_s).min(1.0) } else { 1.0 };
        factor = from + (c.to_factor - from) * x;
        from = c.to_factor;
    }
    let hour = (t_s / 3600.0) % 24.0;
    factor * (1.0 + d.daily_flow_amplitude * (2.0 * std::f64::consts::PI * (hour - 8.0) / 24.0).sin())
}

fn dissolved(map: &BTreeMap<String, f64>) -> impl Iterator<Item = (&str, f64)> {
    map.iter().map(|(k, v)| (k.as_str(), *v))
}

/// The controller for the skid, optionally with the feedback-only law.
fn controller(skid: &Skid, law: Loop) -> Result<(Controller<f64, MODEL_SYSTEMS>, bool), RunError> {
    let report = phdose::config::boot::check::<f64>(skid);
    let mut config: ControllerConfig<f64, MODEL_SYSTEMS> =
        build::controller_config::<f64>(skid).map_err(|f| RunError::Controller(f.to_string()))?;
    if let Loop::FeedbackOnly { gain_l_per_h_per_ph, integral_time_s } = law {
        config.regulator.law = Law::FeedbackOnly { gain_l_per_h_per_ph };
        config.regulator.pi.integral_time_s = integral_time_s;
        config.regulator.pi.closed_loop_time_constant_s = integral_time_s;
    }
    let allowed = report.allowed();
    let c = Controller::new(config, allowed).map_err(|e| RunError::Controller(e.to_string()))?;
    Ok((c, allowed))
}

/// What the plant's instruments show at the start of a tick (see [`Rig::sense`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sensed {
    /// Each probe's potential, mV (NaN for a probe the skid does not have).
    pub probe_mv: [f64; 3],
    /// Water temperature, °C.
    pub temperature_c: f64,
    /// Influent flow, L/h (the flow meter reads it exactly).
    pub influent_l_per_h: f64,
}

impl Sensed {
    /// The flow switch: closed while any influent flows.
    pub fn flow_switch(&self) -> bool {
        self.influent_l_per_h > 0.0
    }
}

/// What one tick of the plant did (see [`Rig::advance`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Advanced {
    /// Time at the end of the tick, s.
    pub t_s: f64,
    /// The tank's true pH at the end of the tick.
    pub ph: f64,
    /// Lowest and highest true pH over the tick's plant steps.
    pub ph_range: (f64, f64),
    /// Mean reagent flows arriving in the tank over the tick (caustic, acid), L/h.
    pub reagent_l_per_h: [f64; 2],
    /// Influent flow over the tick, L/h.
    pub influent_l_per_h: f64,
}

/// The plant of a scenario, stepped one controller tick at a time by whoever runs the
/// controller: [`run`] with the controller on the host, or a hardware-in-the-loop harness with
/// the controller on a board. Per tick: [`Rig::sense`] (the instruments' readings, probe noise
/// drawn), then [`Rig::advance`] with what the pumps were told (the plant steps of one tick).
/// The same seed gives the same plant whoever drives it.
pub struct Rig {
    p: crate::scenario::PlantSettings,
    d: Disturbances,
    celsius: f64,
    design_flow_l_per_h: f64,
    setpoint_ph: f64,
    half_band_ph: f64,
    tick_s: f64,
    h: f64,
    steps_per_tick: u64,
    rng: ChaCha8Rng,
    noise: Normal<f64>,
    influent: Influent,
    caustic_max_l_per_h: f64,
    electrodes: Vec<Calibration<f64>>,
    tank: Tank,
    probes: Vec<(f64, f64)>,
    dead: DeadTime,
    line: ReagentLine,
    t: f64,
    /// The influent flow of the tick being run (set by `sense`).
    q_in: f64,
    events: Vec<Event>,
    iae_ph_s: f64,
    in_band_s: f64,
    max_abs_error_ph: f64,
    reagent_l: [f64; 2],
    steps: u64,
}

impl Rig {
    /// The plant of `scenario` (`seed` overrides the scenario's). A scenario that starts at the
    /// setpoint starts from the steady state of the configured controller's feed-forward.
    pub fn new(scenario: &Scenario, seed: Option<u64>) -> Result<Self, RunError> {
        let (c, _) = controller(&scenario.skid, Loop::Configured)?;
        Self::with_start(scenario, seed, &c)
    }

    /// The plant, started (when the scenario asks for it) at the steady state of `c`.
    fn with_start(
        scenario: &Scenario,
        seed: Option<u64>,
        c: &Controller<f64, MODEL_SYSTEMS>,
    ) -> Result<Self, RunError> {
        let skid = &scenario.skid;
        let p = &scenario.plant;
        let r = &scenario.run;
        let d = &scenario.disturbances;
        let tick_s = f64::from(skid.control.tick_s);
        if !(r.duration_s > 0.0 && r.duration_s <= MAX_DURATION_S) {
            return Err(RunError::Scenario(format!(
                "run.duration_s {} must be within 0-{MAX_DURATION_S}",
                r.duration_s
            )));
        }
        if !(r.step_s > 0.0 && r.step_s <= tick_s) {
            return Err(RunError::Scenario(format!(
                "run.step_s {} must be above 0 and at most the tick {tick_s} s",
                r.step_s
            )));
        }
        if !(p.volume_l > 0.0
            && p.probe_lag_s > 0.0
            && p.pump_delivery_factor >= 0.0
            && p.reagent_strength_factor > 0.0)
        {
            return Err(RunError::Scenario(
                "plant: volume_l and probe_lag_s must be above 0, pump and strength factors non-negative".into(),
            ));
        }
        let steps_per_tick = (tick_s / r.step_s).round().max(1.0);
        let h = tick_s / steps_per_tick;
        let steps_per_tick = steps_per_tick as u64;
        let mut rng = ChaCha8Rng::seed_from_u64(seed.unwrap_or(r.seed));
        let noise = Normal::new(0.0, p.probe_noise_mv.max(0.0)).map_err(|e| RunError::Scenario(e.to_string()))?;

        // The truth: influent, temperature, reagents.
        let celsius = p.temperature_c.unwrap_or(f64::from(skid.influent.design_temperature_c));
        let configured: BTreeMap<String, f64> =
            skid.influent.dissolved.iter().map(|(k, v)| (k.as_str().to_owned(), f64::from(*v))).collect();
        let truth = p.influent.as_ref().unwrap_or(&configured);
        let base = solution(celsius, dissolved(truth))?;
        let mut slugs = Vec::new();
        let mut events: Vec<Event> = Vec::new();
        for s in &d.slugs {
            let with = solution(celsius, dissolved(truth).chain(dissolved(&s.adds)))?;
            slugs.push((s.at_s, s.at_s + s.duration_s, with));
            events.push(Event { t_s: s.at_s, label: "slug".into() });
        }
        if d.random_slugs_per_day > 0.0 && d.random_slug_duration_s > 0.0 {
            let with = solution(celsius, dissolved(truth).chain(dissolved(&d.random_slug_adds)))?;
            // Poisson arrivals: exponential gaps with the given mean.
            let mean_gap_s = 86_400.0 / d.random_slugs_per_day;
            let mut t = 0.0;
            for _ in 0..10_000 {
                let u: f64 = rng.random::<f64>().max(1e-12);
                t += -mean_gap_s * u.ln();
                if t >= r.duration_s {
                    break;
                }
                slugs.push((t, t + d.random_slug_duration_s, with.clone()));
                events.push(Event { t_s: t, label: "random slug".into() });
            }
        }
        for c in &d.flow {
            events.push(Event { t_s: c.at_s, label: format!("flow to x{}", c.to_factor) });
        }
        events.sort_by(|a, b| a.t_s.total_cmp(&b.t_s));
        let influent = Influent { base, slugs };
        // The reagents as delivered: the labelled strength times the true-strength factor.
        let reagent = |settings: &Option<phdose::config::ReagentSettings>| -> Result<Option<PlantSolution>, RunError> {
            let Some(s) = settings else { return Ok(None) };
            let sub = phdose::chem::substance::find(&s.substance)
                .map_err(|_| RunError::Scenario(format!("unknown reagent {}", s.substance)))?;
            let w = f64::from(s.mass_percent);
            let density = match s.density_kg_per_l {
                Some(d) => f64::from(d),
                None => phdose::titration::reagent::common_grade(sub, w)
                    .map(|g| g.density_kg_per_l)
                    .ok_or_else(|| RunError::Scenario(format!("no density for {} {w} %", s.substance)))?,
            };
            let c: f64 = phdose::titration::reagent::mol_per_l(sub, w, density)
                .map_err(|e| RunError::Scenario(e.to_string()))?;
            Ok(Some(solution(celsius, [(sub.formula, c * p.reagent_strength_factor)])?))
        };
        let reagents = [reagent(&skid.caustic)?, reagent(&skid.acid)?];
        let caustic_max_l_per_h = skid.caustic.as_ref().map_or(Ok(0.0), |s| {
            build::pump::<f64>(&s.pump).map(|p| p.max_l_per_h()).map_err(|f| RunError::Scenario(f.to_string()))
        })?;
        let electrodes: Vec<Calibration<f64>> = skid
            .probes
            .probes
            .iter()
            .map(|cal| build::calibration::<f64>(cal).map_err(|f| RunError::Controller(f.to_string())))
            .collect::<Result<_, _>>()?;

        // The tank at the start: raw influent, or the feed-forward's steady state.
        let design_q = f64::from(skid.influent.design_flow_l_per_h) * flow_factor(d, 0.0);
        let start = if r.start_at_setpoint {
            let q0 = c.law().feed_forward().map_or(0.0, |f| f.flow_l_per_h) * design_q
                / c.law().feed_forward().map_or(design_q, |f| f.influent_flow_l_per_h).max(1e-9);
            match (&reagents[0], &reagents[1], c.law().active()) {
                (Some(rc), _, ReagentSide::Caustic) => influent.base.mix(design_q, rc, q0 * p.pump_delivery_factor)?,
                (_, Some(ra), ReagentSide::Acid) => influent.base.mix(design_q, ra, q0 * p.pump_delivery_factor)?,
                _ => influent.base.clone(),
            }
        } else {
            influent.base.clone()
        };
        let tank = Tank::new(start, p.volume_l, reagents)?;
        let probes: Vec<(f64, f64)> = electrodes.iter().map(|_| (tank.ph(), 0.0)).collect();
        let mut dead = DeadTime::default();
        dead.push(0.0, tank.ph());
        Ok(Self {
            p: p.clone(),
            d: d.clone(),
            celsius,
            design_flow_l_per_h: f64::from(skid.influent.design_flow_l_per_h),
            setpoint_ph: f64::from(skid.control.setpoint_ph),
            half_band_ph: f64::from(skid.control.band_ph) / 2.0,
            tick_s,
            h,
            steps_per_tick,
            rng,
            noise,
            influent,
            caustic_max_l_per_h,
            electrodes,
            tank,
            probes,
            dead,
            line: ReagentLine::default(),
            t: 0.0,
            q_in: 0.0,
            events,
            iae_ph_s: 0.0,
            in_band_s: 0.0,
            max_abs_error_ph: 0.0,
            reagent_l: [0.0; 2],
            steps: 0,
        })
    }

    /// The controller's tick, s (the skid's).
    pub fn tick_s(&self) -> f64 {
        self.tick_s
    }

    /// Simulated time, s.
    pub fn time_s(&self) -> f64 {
        self.t
    }

    /// The tank's true pH now.
    pub fn ph(&self) -> f64 {
        self.tank.ph()
    }

    /// The tank (composition, volume, mole balance).
    pub fn tank(&self) -> &Tank {
        &self.tank
    }

    /// The start of a tick: the water's temperature now (daily swing) and the instruments'
    /// readings, each probe's potential with its drift and a fresh noise draw. Call it once per
    /// tick, before [`Rig::advance`].
    pub fn sense(&mut self) -> Result<Sensed, RunError> {
        let p = &self.p;
        let t = self.t;
        // Temperature of the water now (daily swing, minimum at 06:00).
        let hour = (t / 3600.0) % 24.0;
        let temp = self.celsius - p.temperature_swing_c * (2.0 * std::f64::consts::PI * (hour - 6.0) / 24.0).cos();
        let temperature = Celsius::new(temp.clamp(0.0, 100.0)).map_err(|e| RunError::Scenario(e.to_string()))?;
        if (self.tank.solution.temperature().celsius() - temperature.celsius()).abs() > 0.05 {
            self.tank.solution.set_temperature(temperature);
        }
        self.q_in = (self.design_flow_l_per_h * flow_factor(&self.d, t)).max(0.0);
        // The probes' millivolts.
        let mut mv = [f64::NAN; 3];
        for ((slot, e), (lagged, drift)) in mv.iter_mut().zip(&self.electrodes).zip(&self.probes) {
            *slot = e.mv(*lagged, temperature) + drift + self.noise.sample(&mut self.rng);
        }
        Ok(Sensed { probe_mv: mv, temperature_c: temperature.celsius(), influent_l_per_h: self.q_in })
    }

    /// The rest of the tick: the pumps deliver `pump_l_per_h` (caustic, acid; what they were
    /// commanded, L/h) times the plant's delivery factor while `relay_closed` (the dosing-enable
    /// relay powers them: open, nothing runs, a stuck pump included), through the reagent line's
    /// transport delay; the tank and the probes advance one tick in plant steps.
    pub fn advance(&mut self, pump_l_per_h: [f64; 2], relay_closed: bool) -> Result<Advanced, RunError> {
        let p = &self.p;
        let mut t = self.t;
        // What the pumps really put into the line.
        let mut delivered = pump_l_per_h.map(|q| if relay_closed { q.max(0.0) * p.pump_delivery_factor } else { 0.0 });
        // A stuck pump ignores its command, but not its power: the dosing-enable relay (the
        // hardwired interlock SAFETY.md requires) still cuts it when the controller stops dosing.
        if p.caustic_stuck_on_at_s.is_some_and(|at| t >= at) && relay_closed {
            delivered[0] = self.caustic_max_l_per_h * p.pump_delivery_factor;
        }
        self.line.push(t, delivered);
        let mut arriving_mean = [0.0; 2];
        let mut range = (f64::INFINITY, f64::NEG_INFINITY);
        let h = self.h;
        for _ in 0..self.steps_per_tick {
            let arriving = self.line.arriving(t, p.reagent_delay_s);
            let influent = &self.influent;
            let inf = influent.slugs.iter().find(|(a, b, _)| t >= *a && t < *b).map_or(&influent.base, |(_, _, s)| s);
            let ph = self.tank.advance(
                h,
                &StepInputs {
                    influent_l_per_h: self.q_in,
                    influent: inf,
                    reagent_l_per_h: arriving,
                    outlet_l_per_h: p.outlet_l_per_h,
                },
            )?;
            t += h;
            range = (range.0.min(ph), range.1.max(ph));
            self.dead.push(t, ph);
            let seen = self.dead.delayed(t, p.probe_dead_time_s).unwrap_or(ph);
            let a = 1.0 - (-h / p.probe_lag_s).exp();
            for (i, (lagged, drift)) in self.probes.iter_mut().enumerate() {
                *lagged += (seen - *lagged) * a;
                *drift += p.probe_drift_mv_per_h.get(i).copied().unwrap_or(0.0) * h / 3600.0;
            }
            let e = (ph - self.setpoint_ph).abs();
            self.iae_ph_s += e * h;
            if e <= self.half_band_ph {
                self.in_band_s += h;
            }
            self.max_abs_error_ph = self.max_abs_error_ph.max(e);
            for (total, (q, mean)) in self.reagent_l.iter_mut().zip(arriving.iter().zip(arriving_mean.iter_mut())) {
                *total += q * h / 3600.0;
                *mean += q / self.steps_per_tick as f64;
            }
            self.steps += 1;
        }
        self.t = t;
        Ok(Advanced {
            t_s: t,
            ph: self.tank.ph(),
            ph_range: range,
            reagent_l_per_h: arriving_mean,
            influent_l_per_h: self.q_in,
        })
    }

    /// The run's record so far: KPIs and events, with `samples` and `trips` as given (the
    /// rig does not see the controller).
    pub fn trajectory(&self, samples: Vec<Sample>, trips: Vec<u16>) -> Trajectory {
        Trajectory {
            samples,
            events: self.events.clone(),
            iae_ph_s: self.iae_ph_s,
            in_band_s: self.in_band_s,
            max_abs_error_ph: self.max_abs_error_ph,
            reagent_l: self.reagent_l,
            trips,
            steps: self.steps,
            setpoint_ph: self.setpoint_ph,
            band_ph: 2.0 * self.half_band_ph,
            simulated_s: self.t,
        }
    }
}

/// Runs `scenario` with the controller's `law`. `seed` overrides the scenario's seed.
pub fn run(scenario: &Scenario, law: Loop, seed: Option<u64>) -> Result<Trajectory, RunError> {
    let (mut c, _allowed) = controller(&scenario.skid, law)?;
    let mut rig = Rig::with_start(scenario, seed, &c)?;
    let tick_s = rig.tick_s();
    let ticks = (scenario.run.duration_s / tick_s).ceil() as u64;
    let mut samples = Vec::new();
    let mut trips = Vec::new();
    let mut last_trip = 0_u16;
    for _ in 0..ticks {
        let s = rig.sense()?;
        let out = c.step(&TickInputs {
            dt_s: tick_s,
            probe_mv: s.probe_mv,
            temperature_c: s.temperature_c,
            influent_flow_l_per_h: Some(s.influent_l_per_h),
            flow_switch: s.flow_switch(),
            reagent_low: [false; 2],
            reset: false,
            mode: ModeRequest::Auto,
            manual: (ReagentSide::Caustic, 0.0),
        });
        let trip = out.trip.map_or(0, |t| t.reason.code());
        if out.state == State::Tripped && trip != last_trip {
            trips.push(trip);
        }
        last_trip = if out.state == State::Tripped { trip } else { 0 };
        let a = rig.advance(out.delivered_l_per_h, out.dosing_enabled)?;
        samples.push(Sample {
            t_s: a.t_s,
            ph: a.ph,
            measured_ph: out.vote.ph.unwrap_or(f64::NAN),
            reagent_l_per_h: a.reagent_l_per_h,
            influent_l_per_h: a.influent_l_per_h,
            state: out.state.code(),
            trip,
        });
    }
    Ok(rig.trajectory(samples, trips))
}
