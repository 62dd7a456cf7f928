//! Boot checks: what a controller runs at power-on before it may dose, and what `phdose check`
//! runs on the host — the same function on the same decoded settings.
//!
//! The report lists errors (dosing refused) and warnings (dosing allowed), each with a stable
//! code, a message and its numbers. Checks, in order:
//! 1. the blob: magic, version, length, CRC ([`check_blob`] only);
//! 2. every setting within its documented range; flows min ≤ design ≤ max; hard limits in
//!    order; the setpoint inside them with a margin of one band width (common practice, no
//!    source); the watchdog longer than the tick; the overdose limits consistent;
//! 3. the influent's and the reagents' substances known, amounts and strengths valid, pumps
//!    valid; the model's capacity holds influent and reagents;
//! 4. the setpoint reachable with the configured reagent and pump at the design, minimum and
//!    maximum influent flow (the dose model with its pump-capacity check); controllable at the
//!    design flow (one pump step moves the pH by no more than the band; at the minimum and
//!    maximum flow a warning); the design dose at the maximum flow within the hourly overdose
//!    limit (else the guard would trip in normal operation); at the design flow, acid dosed to
//!    the setpoint must not release chlorine or hydrogen sulfide from the influent (errors 219,
//!    220; see [`crate::titration::hazard`]); a dose above zero but below the pump's smallest
//!    steady flow (its minimum or one step) is a warning (305); at the design flow, the dosing
//!    pump stuck at its maximum crossing the hard limit on its side sooner than the runaway
//!    interlock's off time is a warning (306; [`crate::titration::worst`], ideal mixing);
//! 5. the probes: one to three, each calibration accepted (slope and offset, see
//!    [`crate::probe`]); old calibrations and a single probe are warnings.
//!
//! Worst case: three dose plans with their checks (each bounded, see
//! [`crate::titration::dose::plan`]), one control-law construction, and a constant number of
//! range checks.

use heapless::Vec;

use super::blob::{self, BlobError};
use super::build::{self, MODEL_SYSTEMS, r};
use super::{ReagentSettings, Skid};
use crate::control::feedforward::Reagent;
use crate::control::regulator::{Regulator, RegulatorError};
use crate::real::Real;
use crate::titration::dose::{DoseCheck, DoseError, DoseRequest, plan};
use crate::titration::hazard::Gas;
use crate::titration::worst::{Crossing, HardLimits, Tank, stuck};
use crate::units::{Celsius, LitresPerHour, TankVolume};

/// What a finding is about. Codes 2xx are errors (dosing refused), 3xx warnings.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Code {
    /// 201: the blob is unreadable (magic, version, length, CRC or payload).
    BlobUnreadable,
    /// 202: a setting is outside its documented range.
    SettingOutOfRange,
    /// 203: the flows are not min ≤ design ≤ max.
    FlowsInconsistent,
    /// 204: a substance is not in the substance table.
    UnknownSubstance,
    /// 205: the influent's composition is invalid (amount out of range, too many systems).
    InfluentComposition,
    /// 206: neither a caustic nor an acid reagent.
    NoReagent,
    /// 207: the hard limits are not low < high within 0–14.
    LimitsInconsistent,
    /// 208: the setpoint is not inside the hard limits with a band's margin.
    SetpointOutsideLimits,
    /// 209: the setpoint is unreachable with the configured reagent (at the flow given).
    Unreachable,
    /// 210: the dose at a configured flow exceeds the pump's maximum.
    BeyondPump,
    /// 211: one pump step moves the pH more than the band at the design flow.
    TooSteep,
    /// 212: no probe is configured.
    NoProbe,
    /// 213: a probe's calibration is not accepted (slope or offset).
    CalibrationRejected,
    /// 214: the overdose limits are inconsistent or tighter than the design dose.
    OverdoseGuard,
    /// 215: the watchdog limit is not longer than the tick.
    Watchdog,
    /// 216: a reagent's strength (mass percent, density) is invalid or its density unknown.
    ReagentStrength,
    /// 217: a pump's settings are invalid.
    PumpSettings,
    /// 218: the control law could not be built (e.g. capacity).
    ModelFailed,
    /// 219: acid dosing to the setpoint releases chlorine from the influent's hypochlorite
    /// (value: the setpoint; limit: the pH below which the release is significant, see
    /// [`crate::titration::hazard`]).
    ChlorineRelease,
    /// 220: acid dosing to the setpoint releases hydrogen sulfide from the influent's sulfide
    /// (value: the setpoint; limit: the release pH).
    HydrogenSulfideRelease,
    /// 301: a probe's calibration is older than allowed.
    CalibrationOld,
    /// 302: one pump step moves the pH more than the band at the minimum or maximum flow.
    TooSteepAtFlowLimit,
    /// 303: the working precision cannot resolve the plan (see `DoseCheck::ResolutionLimited`).
    ResolutionLimited,
    /// 304: a single probe: no redundancy, no disagreement alarm.
    SingleProbe,
    /// 305: the dose at a configured flow is above zero but below the pump's smallest steady
    /// flow (its minimum or one step; see `DoseCheck::BelowTurndown`): the pump can only pulse it.
    BelowTurndown,
    /// 306: the dosing pump stuck at its maximum would take the tank across the hard limit on
    /// its side sooner than the runaway interlock can act (value: the time, s, from the setpoint
    /// state at the design flow, ideal mixing, [`crate::titration::worst`]; limit:
    /// `interlocks.runaway_off_s`): the hard-limit trip and the hardwired cut-out are then the
    /// first protection against a stuck pump.
    StuckPumpOutrunsRunaway,
}

impl Code {
    /// Every code, errors (2xx) then warnings (3xx), in number order.
    pub const ALL: [Self; 26] = [
        Self::BlobUnreadable,
        Self::SettingOutOfRange,
        Self::FlowsInconsistent,
        Self::UnknownSubstance,
        Self::InfluentComposition,
        Self::NoReagent,
        Self::LimitsInconsistent,
        Self::SetpointOutsideLimits,
        Self::Unreachable,
        Self::BeyondPump,
        Self::TooSteep,
        Self::NoProbe,
        Self::CalibrationRejected,
        Self::OverdoseGuard,
        Self::Watchdog,
        Self::ReagentStrength,
        Self::PumpSettings,
        Self::ModelFailed,
        Self::ChlorineRelease,
        Self::HydrogenSulfideRelease,
        Self::CalibrationOld,
        Self::TooSteepAtFlowLimit,
        Self::ResolutionLimited,
        Self::SingleProbe,
        Self::BelowTurndown,
        Self::StuckPumpOutrunsRunaway,
    ];

    /// The stable numeric code.
    pub const fn number(self) -> u16 {
        match self {
            Self::BlobUnreadable => 201,
            Self::SettingOutOfRange => 202,
            Self::FlowsInconsistent => 203,
            Self::UnknownSubstance => 204,
            Self::InfluentComposition => 205,
            Self::NoReagent => 206,
            Self::LimitsInconsistent => 207,
            Self::SetpointOutsideLimits => 208,
            Self::Unreachable => 209,
            Self::BeyondPump => 210,
            Self::TooSteep => 211,
            Self::NoProbe => 212,
            Self::CalibrationRejected => 213,
            Self::OverdoseGuard => 214,
            Self::Watchdog => 215,
            Self::ReagentStrength => 216,
            Self::PumpSettings => 217,
            Self::ModelFailed => 218,
            Self::ChlorineRelease => 219,
            Self::HydrogenSulfideRelease => 220,
            Self::CalibrationOld => 301,
            Self::TooSteepAtFlowLimit => 302,
            Self::ResolutionLimited => 303,
            Self::SingleProbe => 304,
            Self::BelowTurndown => 305,
            Self::StuckPumpOutrunsRunaway => 306,
        }
    }

    /// `true` for the codes that refuse dosing.
    pub const fn is_error(self) -> bool {
        self.number() < 300
    }

    /// What the code means; the finding's numbers follow it.
    pub const fn message(self) -> &'static str {
        match self {
            Self::BlobUnreadable => "configuration blob unreadable",
            Self::SettingOutOfRange => "setting outside its documented range",
            Self::FlowsInconsistent => "influent flows must be min <= design <= max",
            Self::UnknownSubstance => "substance not in the substance table",
            Self::InfluentComposition => "influent composition invalid",
            Self::NoReagent => "no reagent configured",
            Self::LimitsInconsistent => "hard limits must be low < high within pH 0-14",
            Self::SetpointOutsideLimits => "setpoint not inside the hard limits with a band's margin",
            Self::Unreachable => "setpoint unreachable with the configured reagent",
            Self::BeyondPump => "dose exceeds the pump's maximum",
            Self::TooSteep => "one pump step moves the pH more than the band at the design flow",
            Self::NoProbe => "no pH probe configured",
            Self::CalibrationRejected => "probe calibration not accepted",
            Self::OverdoseGuard => "overdose limits inconsistent or below the design dose",
            Self::Watchdog => "watchdog limit not longer than the tick",
            Self::ReagentStrength => "reagent strength invalid or density unknown",
            Self::PumpSettings => "pump settings invalid",
            Self::ModelFailed => "control law could not be built",
            Self::ChlorineRelease => "acid to this setpoint releases chlorine (Cl2) from the influent's hypochlorite",
            Self::HydrogenSulfideRelease => {
                "acid to this setpoint releases hydrogen sulfide (H2S) from the influent's sulfide"
            }
            Self::CalibrationOld => "probe calibration older than allowed",
            Self::TooSteepAtFlowLimit => "one pump step moves the pH more than the band at a flow limit",
            Self::ResolutionLimited => "working precision cannot resolve the plan",
            Self::SingleProbe => "single probe: no redundancy",
            Self::BelowTurndown => "dose below the pump's smallest steady flow (minimum or one step)",
            Self::StuckPumpOutrunsRunaway => "pump stuck at maximum crosses a hard limit before the runaway trip",
        }
    }
}

/// One finding: the code, the setting or item it is about (empty when the code says it), and
/// two numbers whose meaning the code gives (the offending value and its limit, a flow …).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Finding {
    /// The code.
    pub code: Code,
    /// The setting or item ("control.band_ph", "caustic", "probe 2"), or "".
    pub name: &'static str,
    /// The offending value.
    pub value: f64,
    /// The limit or reference it is compared with (0 where none).
    pub limit: f64,
}

impl Finding {
    /// A finding without a name.
    pub const fn new(code: Code, value: f64, limit: f64) -> Self {
        Self { code, name: "", value, limit }
    }

    /// A finding about a named setting or item.
    pub const fn named(code: Code, name: &'static str, value: f64, limit: f64) -> Self {
        Self { code, name, value, limit }
    }

    /// A setting out of range.
    pub const fn setting(name: &'static str, value: f64) -> Self {
        Self::named(Code::SettingOutOfRange, name, value, 0.0)
    }
}

impl core::fmt::Display for Finding {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        use crate::units::Compact;
        write!(f, "{}: {}", self.code.number(), self.code.message())?;
        if !self.name.is_empty() {
            write!(f, " ({})", self.name)?;
        }
        write!(f, ": {} (limit {})", Compact(self.value), Compact(self.limit))
    }
}

/// Most findings of each kind a report holds; more are counted in [`BootReport::dropped`].
pub const MAX_FINDINGS: usize = 16;

/// The boot report.
#[derive(Clone, Debug, Default, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BootReport {
    /// Errors: dosing refused.
    pub errors: Vec<Finding, MAX_FINDINGS>,
    /// Warnings: dosing allowed.
    pub warnings: Vec<Finding, MAX_FINDINGS>,
    /// Findings that did not fit.
    pub dropped: u16,
}

impl BootReport {
    /// `true` when dosing is allowed (no error).
    pub fn allowed(&self) -> bool {
        self.errors.is_empty() && !(self.dropped > 0 && self.errors.is_full())
    }

    /// Adds a finding to the errors or the warnings, by its code.
    pub fn push(&mut self, finding: Finding) {
        let list = if finding.code.is_error() { &mut self.errors } else { &mut self.warnings };
        if list.push(finding).is_err() {
            self.dropped = self.dropped.saturating_add(1);
        }
    }

    /// `true` when a finding with `code` was reported.
    pub fn has(&self, code: Code) -> bool {
        self.errors.iter().chain(self.warnings.iter()).any(|f| f.code == code)
    }
}

/// Boot checks of a blob: decodes it (a decode failure is error 201 and nothing else is
/// checked) and runs [`check`]. Returns the decoded settings when they decoded.
pub fn check_blob<R: Real>(bytes: &[u8]) -> (Option<Skid>, BootReport) {
    match blob::decode(bytes) {
        Ok(skid) => {
            let report = check::<R>(&skid);
            (Some(skid), report)
        }
        Err(e) => {
            let mut report = BootReport::default();
            let (value, limit) = match e {
                BlobError::Crc { stored, computed } => (f64::from(stored), f64::from(computed)),
                BlobError::UnsupportedVersion { found } => (f64::from(found), f64::from(blob::FORMAT_VERSION)),
                BlobError::LengthMismatch { declared, actual } => (declared as f64, actual as f64),
                BlobError::TooShort { len } => (len as f64, (blob::HEADER_LEN + blob::CRC_LEN) as f64),
                _ => (0.0, 0.0),
            };
            report.push(Finding::named(Code::BlobUnreadable, blob_reason(e), value, limit));
            (None, report)
        }
    }
}

fn blob_reason(e: BlobError) -> &'static str {
    match e {
        BlobError::TooShort { .. } => "too short",
        BlobError::BadMagic => "bad magic",
        BlobError::UnsupportedVersion { .. } => "version",
        BlobError::LengthMismatch { .. } => "length",
        BlobError::Crc { .. } => "crc",
        BlobError::Payload => "payload",
        _ => "buffer",
    }
}

/// Range check: `Ok` when `v` is finite and lo ≤ v ≤ hi (lo exclusive when `open`).
fn range(report: &mut BootReport, name: &'static str, v: f32, lo: f64, hi: f64, open: bool) -> bool {
    let x = f64::from(v);
    let ok = x.is_finite() && if open { x > lo } else { x >= lo } && x <= hi;
    if !ok {
        report.push(Finding::setting(name, x));
    }
    ok
}

/// Boot checks of decoded settings, in the controller's real type `R` (f32 on a board, f64 on
/// the host). Never panics.
pub fn check<R: Real>(skid: &Skid) -> BootReport {
    let mut report = BootReport::default();
    let c = &skid.control;
    let i = &skid.influent;
    let l = &skid.interlocks;
    let p = &skid.probes;

    // 2. Ranges and consistency.
    let mut ok = true;
    for (name, v, lo, hi, open) in [
        ("influent.design_flow_l_per_h", i.design_flow_l_per_h, 0.0, 1e7, true),
        ("influent.min_flow_l_per_h", i.min_flow_l_per_h, 0.0, 1e7, true),
        ("influent.max_flow_l_per_h", i.max_flow_l_per_h, 0.0, 1e7, true),
        ("influent.design_temperature_c", i.design_temperature_c, 0.0, 100.0, false),
        ("control.band_ph", c.band_ph, 0.0, 4.0, true),
        ("control.low_limit_ph", c.low_limit_ph, 0.0, 14.0, false),
        ("control.high_limit_ph", c.high_limit_ph, 0.0, 14.0, false),
        ("control.tick_s", c.tick_s, 0.1, 60.0, false),
        ("interlocks.no_flow_below_l_per_h", l.no_flow_below_l_per_h, 0.0, 1e7, false),
        ("interlocks.max_tick_age_s", l.max_tick_age_s, 0.0, 3600.0, true),
        ("interlocks.mismatch_trip_ph", l.mismatch_trip_ph, 0.0, 14.0, true),
        ("interlocks.mismatch_trip_s", l.mismatch_trip_s, 0.0, 1e7, true),
        ("interlocks.runaway_margin_ph", l.runaway_margin_ph, 0.0, 7.0, true),
        ("interlocks.runaway_off_s", l.runaway_off_s, 0.0, 3600.0, true),
        ("probes.max_spread_ph", p.max_spread_ph, 0.0, 14.0, true),
        ("probes.calibration_max_age_days", p.calibration_max_age_days, 0.0, 3650.0, true),
    ] {
        ok &= range(&mut report, name, v, lo, hi, open);
    }
    if let Err(RegulatorError::Setting { name, value }) = build::regulator_settings::<R>(c).validate() {
        report.push(Finding::setting(control_key(name), value));
        ok = false;
    }
    if ok && !(i.min_flow_l_per_h <= i.design_flow_l_per_h && i.design_flow_l_per_h <= i.max_flow_l_per_h) {
        report.push(Finding::new(
            Code::FlowsInconsistent,
            f64::from(i.min_flow_l_per_h),
            f64::from(i.max_flow_l_per_h),
        ));
        ok = false;
    }
    if ok && c.low_limit_ph >= c.high_limit_ph {
        report.push(Finding::new(Code::LimitsInconsistent, f64::from(c.low_limit_ph), f64::from(c.high_limit_ph)));
        ok = false;
    }
    if ok && !(c.setpoint_ph - c.band_ph >= c.low_limit_ph && c.setpoint_ph + c.band_ph <= c.high_limit_ph) {
        let nearest = if c.setpoint_ph - c.low_limit_ph < c.high_limit_ph - c.setpoint_ph {
            c.low_limit_ph
        } else {
            c.high_limit_ph
        };
        report.push(Finding::new(Code::SetpointOutsideLimits, f64::from(c.setpoint_ph), f64::from(nearest)));
    }
    if ok && l.max_tick_age_s <= c.tick_s {
        report.push(Finding::new(Code::Watchdog, f64::from(l.max_tick_age_s), f64::from(c.tick_s)));
    }
    if ok && l.mismatch_trip_ph <= c.residual_bound_ph {
        report.push(Finding::named(
            Code::SettingOutOfRange,
            "interlocks.mismatch_trip_ph",
            f64::from(l.mismatch_trip_ph),
            f64::from(c.residual_bound_ph),
        ));
    }

    // 3. Chemistry inputs.
    let influent = match build::influent::<R>(skid) {
        Ok(s) => Some(s),
        Err(f) => {
            report.push(f);
            None
        }
    };
    let t = Celsius::new(r::<R>(i.design_temperature_c)).unwrap_or_else(|_| Celsius::standard());
    let mut reagents: [Option<Reagent<R>>; 2] = [None, None];
    for ((slot, settings), name) in reagents.iter_mut().zip([&skid.caustic, &skid.acid]).zip(["caustic", "acid"]) {
        if let Some(s) = settings {
            overdose_limits(&mut report, s, name);
            match build::reagent::<R>(s, t, i.activity) {
                Ok(reagent) => *slot = Some(reagent),
                Err(f) => report.push(Finding { name, ..f }),
            }
        }
    }
    if skid.caustic.is_none() && skid.acid.is_none() {
        report.push(Finding::new(Code::NoReagent, 0.0, 0.0));
    }

    // 4. Reachability and controllability, only on valid inputs.
    if let Some(influent) = &influent
        && ok
    {
        dose_checks(&mut report, skid, influent, &reagents);
        let [caustic, acid] = reagents.clone();
        if caustic.is_some() || acid.is_some() {
            let built = Regulator::new(
                build::regulator_settings::<R>(c),
                influent.clone(),
                caustic,
                acid,
                r(i.design_flow_l_per_h),
            );
            if let Err(e) = built {
                let value = match e {
                    RegulatorError::Setting { value, .. } => value,
                    _ => 0.0,
                };
                report.push(Finding::new(Code::ModelFailed, value, MODEL_SYSTEMS as f64));
            }
        }
    }

    // 5. Probes.
    if let Err(f) = build::monitor::<R>(p) {
        report.push(f);
    }
    if let Err(f) = build::acceptance::<R>(p) {
        report.push(f);
    }
    if let Err(f) = build::vote::<R>(p) {
        report.push(f);
    }
    probe_checks::<R>(&mut report, skid);
    report
}

/// The settings file's key of a control-law setting (the law names its settings bare).
fn control_key(name: &'static str) -> &'static str {
    match name {
        "setpoint_ph" => "control.setpoint_ph",
        "integral_time_s" => "control.integral_time_s",
        "closed_loop_time_constant_s" => "control.closed_loop_time_constant_s",
        "rate_limit_l_per_h_per_s" => "control.rate_limit_l_per_h_per_s",
        "flow_dead_band_fraction" | "correction_dead_band_fraction" => "control.flow_dead_band_fraction",
        "temperature_dead_band_c" => "control.temperature_dead_band_c",
        "tank_volume_l" => "control.tank_volume_l",
        "adaptation_filter_time_s" => "control.adaptation_filter_time_s",
        "adaptation_bound_fraction" => "control.adaptation_bound_fraction",
        "residual_bound_ph" => "control.residual_bound_ph",
        "residual_time_s" => "control.residual_time_s",
        "switch_dead_band_ph" => "control.switch_dead_band_ph",
        other => other,
    }
}

fn overdose_limits(report: &mut BootReport, s: &ReagentSettings, name: &'static str) {
    let (h, d) = (f64::from(s.max_per_hour_l), f64::from(s.max_per_day_l));
    if !(h.is_finite() && d.is_finite() && h > 0.0 && d >= h) {
        report.push(Finding::named(Code::OverdoseGuard, name, h, d));
    }
}

/// The dose model at the design, minimum and maximum flow, for the reagent that moves the
/// influent towards the setpoint.
fn dose_checks<R: Real>(
    report: &mut BootReport,
    skid: &Skid,
    influent: &crate::chem::Solution<R, MODEL_SYSTEMS>,
    reagents: &[Option<Reagent<R>>; 2],
) {
    let c = &skid.control;
    let i = &skid.influent;
    let sp = r::<R>(c.setpoint_ph);
    // Influent above the setpoint needs acid (slot 1), below it caustic (slot 0).
    let g = influent.charge_excess_eq_per_l(sp, influent.strong_ionic_strength_mol_per_l());
    let (side, settings, name) = if g > R::ZERO { (1, &skid.acid, "acid") } else { (0, &skid.caustic, "caustic") };
    let (Some(reagent), Some(settings)) = (reagents.get(side).and_then(Option::as_ref), settings) else {
        report.push(Finding::named(Code::Unreachable, name, f64::from(i.design_flow_l_per_h), 0.0));
        return;
    };
    let Ok(drive) = build::pump::<R>(&settings.pump) else { return };
    let Ok(mut request) =
        DoseRequest::checked(sp, Some((drive.max_l_per_h(), drive.step_l_per_h())), Some(r(c.band_ph)))
    else {
        return;
    };
    // The pump's minimum (an analog pump's minimum duty) enters the turndown check; a minimum
    // the pump refuses (it cannot: min_duty ≤ 0.5) keeps the pump and its other checks.
    request.pump = request.pump.map(|p| p.with_minimum(drive.min_l_per_h()).unwrap_or(p));
    for (flow, at_design, key) in [
        (i.design_flow_l_per_h, true, "influent.design_flow_l_per_h"),
        (i.min_flow_l_per_h, false, "influent.min_flow_l_per_h"),
        (i.max_flow_l_per_h, false, "influent.max_flow_l_per_h"),
    ] {
        let Ok(q) = LitresPerHour::new(r::<R>(flow)) else { continue };
        match plan(influent, q, &reagent.solution, &request) {
            Ok(p) => {
                for check in &p.checks {
                    match *check {
                        DoseCheck::BeyondPump { needed_l_per_h, max_l_per_h } => report.push(Finding::named(
                            Code::BeyondPump,
                            name,
                            needed_l_per_h.to_f64(),
                            max_l_per_h.to_f64(),
                        )),
                        DoseCheck::TooSteep { step_delta_ph, band_ph, .. } => report.push(Finding::named(
                            if at_design { Code::TooSteep } else { Code::TooSteepAtFlowLimit },
                            name,
                            step_delta_ph.to_f64(),
                            band_ph.to_f64(),
                        )),
                        DoseCheck::BelowTurndown { needed_l_per_h, smallest_l_per_h, .. } => {
                            report.push(Finding::named(
                                Code::BelowTurndown,
                                name,
                                needed_l_per_h.to_f64(),
                                smallest_l_per_h.to_f64(),
                            ))
                        }
                        DoseCheck::ResolutionLimited { resolution_ph, needed_ph } => report.push(Finding::named(
                            Code::ResolutionLimited,
                            name,
                            resolution_ph.to_f64(),
                            needed_ph.to_f64(),
                        )),
                        // The same mixture chemistry at every flow: reported once, at the design flow.
                        DoseCheck::GasRelease { gas, release_below_ph, .. } if at_design => {
                            let code = match gas {
                                Gas::Chlorine => Code::ChlorineRelease,
                                Gas::HydrogenSulfide => Code::HydrogenSulfideRelease,
                            };
                            report.push(Finding::named(code, name, sp.to_f64(), release_below_ph.to_f64()));
                        }
                        // The skid file holds no reagent storage temperature: boot requests carry
                        // no stock, so the crystallisation check cannot arise here.
                        DoseCheck::GasRelease { .. } | DoseCheck::ReagentCrystallises { .. } => {}
                    }
                }
                if at_design {
                    stuck_pump_check(report, skid, influent, q, &reagent.solution, drive.max_l_per_h(), &p, side, name);
                }
                if flow == i.max_flow_l_per_h {
                    // The hourly guard must let the dose of the largest flow through.
                    let per_hour = p.reagent_flow_l_per_h.to_f64();
                    if per_hour > f64::from(settings.max_per_hour_l) {
                        report.push(Finding::named(
                            Code::OverdoseGuard,
                            name,
                            per_hour,
                            f64::from(settings.max_per_hour_l),
                        ));
                    }
                }
            }
            // A flow too small to plan with (below `units::MIN_PLANNED_FLOW_L_PER_H`): the
            // setting is out of range, an error like any other.
            Err(DoseError::Input(e)) => report.push(Finding::setting(key, e.value)),
            Err(e) => {
                let limit = match e {
                    DoseError::BeyondReagent { limit_ph, .. } => limit_ph,
                    DoseError::BeyondActivityModel { ionic_strength_mol_per_l, .. } => ionic_strength_mol_per_l,
                    _ => 0.0,
                };
                report.push(Finding::named(Code::Unreachable, name, f64::from(flow), limit));
            }
        }
    }
}

/// Warning 306: the time the tank takes, from the setpoint state at the design flow, to cross
/// the hard limit on the dosing pump's side (high for caustic, low for acid) with that pump
/// stuck at its maximum (`worst::stuck`, ideal mixing of the whole tank: the fastest the pH can
/// move), compared with the runaway interlock's off time. At most
/// [`crate::titration::worst::MAX_SOLVES_PER_CASE`] pH solves. A case the model cannot work
/// out adds nothing (the dose checks above already report an unplannable setpoint).
#[allow(clippy::too_many_arguments)]
fn stuck_pump_check<R: Real, const M: usize>(
    report: &mut BootReport,
    skid: &Skid,
    influent: &crate::chem::Solution<R, MODEL_SYSTEMS>,
    influent_flow: LitresPerHour<R>,
    reagent: &crate::chem::Solution<R, M>,
    pump_max_l_per_h: R,
    planned: &crate::titration::dose::DosePlan<R>,
    side: usize,
    name: &'static str,
) {
    let c = &skid.control;
    let (Ok(max), Ok(planned_flow), Ok(volume), Ok(limits)) = (
        LitresPerHour::new(pump_max_l_per_h),
        LitresPerHour::new(planned.reagent_flow_l_per_h),
        TankVolume::new(r::<R>(c.tank_volume_l)),
        HardLimits::new(Some(r::<R>(c.low_limit_ph)), Some(r::<R>(c.high_limit_ph))),
    ) else {
        return;
    };
    let tank = Tank { volume, planned_reagent_flow: planned_flow };
    let Ok(s) = stuck(influent, influent_flow, reagent, max, limits, Some(tank)) else { return };
    let crossing = if side == 0 { s.high_limit } else { s.low_limit };
    let off_s = f64::from(skid.interlocks.runaway_off_s);
    if let Some(Crossing::After { time_s }) = crossing
        && time_s.to_f64() < off_s
    {
        report.push(Finding::named(Code::StuckPumpOutrunsRunaway, name, time_s.to_f64(), off_s));
    }
}

fn probe_checks<R: Real>(report: &mut BootReport, skid: &Skid) {
    let p = &skid.probes;
    match p.probes.len() {
        0 => report.push(Finding::new(Code::NoProbe, 0.0, 1.0)),
        1 => report.push(Finding::new(Code::SingleProbe, 1.0, 2.0)),
        _ => {}
    }
    for (k, cal) in p.probes.iter().enumerate() {
        let name = match k {
            0 => "probe 1",
            1 => "probe 2",
            _ => "probe 3",
        };
        match build::calibration::<R>(cal) {
            Ok(calibration) => {
                if let Ok(acceptance) = build::acceptance::<R>(p) {
                    let j = acceptance.judge(&calibration);
                    if !j.accepted {
                        let (value, limit) = if j.slope_ok {
                            (j.offset_mv.to_f64(), f64::from(p.max_abs_offset_mv))
                        } else {
                            (j.slope_percent.to_f64(), f64::from(p.min_slope_percent))
                        };
                        report.push(Finding::named(Code::CalibrationRejected, name, value, limit));
                    }
                }
            }
            Err(f) => report.push(Finding { name, ..f }),
        }
        // NaN ages count as too old.
        if cal.age_days.partial_cmp(&p.calibration_max_age_days) != Some(core::cmp::Ordering::Less)
            && cal.age_days != p.calibration_max_age_days
        {
            report.push(Finding::named(
                Code::CalibrationOld,
                name,
                f64::from(cal.age_days),
                f64::from(p.calibration_max_age_days),
            ));
        }
    }
}

#[cfg(test)]
mod tests;
