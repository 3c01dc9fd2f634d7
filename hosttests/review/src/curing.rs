//! Curing replay: a recorded curing run (one CSV of samples, parts marked in a `part`
//! column) through the library's own [`CuringController`] with a recipe (`[curing]`), one
//! record per part with a verdict and its reason.
//!
//! The controller runs exactly as firmware drives it: `start` at the first row of a part,
//! the guard (interlock) input from the `guard` column read on every reading, `resume`,
//! `abort` and `acknowledge` from the `command` column, the timer compare at
//! [`CuringController::stop_due`] fired between two readings when `timer_stop` is on, and
//! `finish` at the last row of the part. Every dose in the report is read from the
//! controller's `PartRecord`.
//!
//! **What a replay can and cannot say.** The readings after the replayed stop command are
//! the *recorded* light. When the recipe is the one the station ran, they show what its
//! shutter really did (a stuck shutter is `light_not_off`). When it is another recipe (a
//! what-if), the recording knows nothing of the earlier or later stop: a stop earlier than
//! the recorded one sees the recorded light still on (`light_not_off`, overexposure), and
//! the delivered dose counts light this recipe would have cut. `at_stop_j_per_m2 +
//! predicted_tail_j_per_m2` (`expected_j_per_m2`) is then the dose the part would have
//! received with the recipe's configured lag. A replay is not proof of what a device did.
//!
//! Keys and columns: `hosttests/review/CONFIG.md`, sections 2 and 7.

use photon_ledger::control::curing::{
    CuringConfigError, CuringController, CuringError, CuringFault, CuringPhase, Events, PartId,
    PartRecord, Refusal, StopPolicy, StopReason, TimerOutcome,
};
use photon_ledger::control::PinError;
use photon_ledger::prelude::*;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use hosttests::lamp_curing::{SimInput, SimOutput, SimPins};

use super::config::{hex, CuringSetup, ReviewConfig, RunLabels};
use super::error::{Place, ReviewError};
use super::replay::{Hashing, MAX_EVENTS};
use super::report::{sig, Event, InputInfo};
use super::samples::{OperatorCommand, Sample, SampleReader, TimeUnit};

/// Name of the curing report format, the `report_format` key.
pub const CURING_REPORT_FORMAT: &str = "photon-review/curing";
/// Version of the curing report format.
pub const CURING_REPORT_VERSION: u32 = 1;

/// The controller of a replay: simulated pins (active high; the guard closed = high).
pub type ReplayController = CuringController<SimOutput, SimOutput, SimInput>;

/// Build a controller for a recipe exactly as firmware does, on pins the replay drives.
///
/// # Errors
/// The library's [`CuringConfigError`].
pub fn new_controller(
    meter: Meter,
    config: CuringConfig,
) -> Result<(ReplayController, SimPins), CuringConfigError> {
    let pins = SimPins::new();
    let c = pins.controller(meter, config)?;
    Ok((c, pins))
}

/// A curing replay report. See CONFIG.md, section 7, for every key.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CuringReport {
    /// Always [`CURING_REPORT_FORMAT`].
    pub report_format: String,
    /// [`CURING_REPORT_VERSION`].
    pub report_version: u32,
    /// True: every row was read and replayed (a report is only written then).
    pub complete: bool,
    /// Tool name and version.
    pub tool: String,
    /// Library name and version.
    pub library: String,
    /// The inputs.
    pub input: InputInfo,
    /// Run labels.
    pub run: RunLabels,
    /// The recipe as the controller holds it.
    pub recipe: RecipeFacts,
    /// Counts over the parts.
    pub summary: CuringSummary,
    /// The lamp-ageing trend after the last part (`null` without a lamp reference).
    pub lamp_trend: Option<LampTrendReport>,
    /// One record per part, in file order.
    pub parts: Vec<PartReport>,
    /// Events in time order.
    pub events: Vec<Event>,
    /// Events not listed because the list was full.
    pub events_dropped: u64,
}

/// The recipe.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RecipeFacts {
    /// Tick rate, Hz.
    pub tick_rate_hz: u32,
    /// Target radiant exposure per part, J/m².
    pub target_j_per_m2: f64,
    /// Tolerance above the target, J/m².
    pub tolerance_j_per_m2: f64,
    /// `anticipate` or `at_target`.
    pub stop_policy: String,
    /// Whether the timer compare at `stop_due` was replayed.
    pub timer_stop: bool,
    /// Effective actuator lag (∫ fraction dt), s.
    pub effective_lag_s: f64,
    /// Time after the stop command at which the light is off, s.
    pub light_off_after_s: f64,
    /// Warm-up before the window applies, s.
    pub warm_up_s: f64,
    /// Window minimum, W/m².
    pub minimum_w_per_m2: Option<f64>,
    /// Window maximum, W/m².
    pub maximum_w_per_m2: Option<f64>,
    /// Lamp reference, W/m².
    pub lamp_reference_w_per_m2: Option<f64>,
    /// Longest allowed interval between readings, s.
    pub max_gap_s: f64,
}

/// Counts over the parts.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CuringSummary {
    /// Parts in the file.
    pub parts: u64,
    /// Parts with verdict `pass`.
    pub passed: u64,
    /// Parts with verdict `fail`.
    pub failed: u64,
    /// Parts the controller refused to start.
    pub refused: u64,
    /// Rows with no part (between parts), not fed to the controller.
    pub rows_outside_parts: u64,
}

/// The lamp trend.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LampTrendReport {
    /// Parts measured.
    pub parts: u32,
    /// Ratio (mean irradiance ÷ reference) of the last measured part.
    pub latest_ratio: Option<f64>,
    /// Mean ratio over the history.
    pub mean_ratio: Option<f64>,
    /// Least-squares slope of the ratio per part.
    pub slope_per_part: Option<f64>,
    /// The last ratio is below the maintenance fraction.
    pub maintenance_due: bool,
}

/// One part.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartReport {
    /// Part number (the `part` column).
    pub part: u32,
    /// `pass`, `fail` or `refused`.
    pub verdict: String,
    /// Why, in words.
    pub reason: String,
    /// First and last line of the part in the sample file.
    pub first_line: u64,
    /// Last line of the part.
    pub last_line: u64,
    /// Time of the start command (the part's first row), s.
    pub start_time_s: f64,
    /// Time of the command that turned the light off for good (stop, pause, fault, or the
    /// finish at the part's last row), s (`null`: refused).
    pub stop_time_s: Option<f64>,
    /// Target stops: the line of the reading that issued the stop (for a timer stop, the
    /// reading before it).
    pub stop_line: Option<u64>,
    /// Time of the part's last row (finish), s.
    pub end_time_s: f64,
    /// `target`, `target_timer`, `fault`, `paused`, `ended`, `refused`.
    pub stop_reason: String,
    /// The stop was issued by the (anticipated) target, on a reading or the timer.
    pub stopped_at_target: bool,
    /// The first fault (`light_not_off`, `overexposure`, ...).
    pub fault: Option<String>,
    /// Distinct fault kinds in the part.
    pub faults: u8,
    /// Target, J/m².
    pub target_j_per_m2: f64,
    /// Radiant exposure delivered from start to the last reading (recorded light), J/m².
    pub delivered_j_per_m2: f64,
    /// Of which after the stop command, J/m².
    pub after_stop_j_per_m2: f64,
    /// Of which while paused (guard open), J/m².
    pub paused_j_per_m2: f64,
    /// Delivered − target, J/m².
    pub overshoot_j_per_m2: f64,
    /// Dose measured up to the last reading at or before the stop command (delivered −
    /// after stop), J/m² (`null`: refused).
    pub at_stop_j_per_m2: Option<f64>,
    /// Target stops: the dose the controller predicted to arrive after that reading — its
    /// irradiance × (time to a timer stop + effective lag), J/m².
    pub predicted_tail_j_per_m2: Option<f64>,
    /// Target stops: `at_stop + predicted_tail`, the dose the part receives if the light
    /// falls as the recipe's lag says, J/m².
    pub expected_j_per_m2: Option<f64>,
    /// Lowest irradiance while exposing after the warm-up, W/m².
    pub irradiance_min_w_per_m2: Option<f64>,
    /// Mean irradiance while exposing, W/m².
    pub irradiance_mean_w_per_m2: Option<f64>,
    /// Highest irradiance while exposing, W/m².
    pub irradiance_peak_w_per_m2: Option<f64>,
    /// Time the enable output was active, s.
    pub exposing_time_s: f64,
    /// Mean irradiance ÷ lamp reference.
    pub lamp_ratio: Option<f64>,
    /// Every event kind of the part.
    pub events: Vec<String>,
    /// Rows of the part.
    pub rows: u64,
}

/// Columns of the per-part CSV (`curing --format csv`, `--csv FILE`).
pub const PART_COLUMNS: [&str; 22] = [
    "part",
    "verdict",
    "stop_reason",
    "fault",
    "start_time_s",
    "stop_time_s",
    "end_time_s",
    "target_j_per_m2",
    "delivered_j_per_m2",
    "at_stop_j_per_m2",
    "predicted_tail_j_per_m2",
    "expected_j_per_m2",
    "after_stop_j_per_m2",
    "paused_j_per_m2",
    "irradiance_min_w_per_m2",
    "irradiance_mean_w_per_m2",
    "irradiance_peak_w_per_m2",
    "exposing_time_s",
    "lamp_ratio",
    "first_line",
    "last_line",
    "reason",
];

/// Event names of the controller's [`Events`] bits.
const EVENT_NAMES: [(Events, &str); 13] = [
    (Events::STARTED, "started"),
    (Events::STOP_ISSUED, "stop_issued"),
    (Events::TARGET_REACHED, "target_reached"),
    (Events::LIGHT_OFF, "light_off"),
    (Events::INTERLOCK_OPENED, "guard_opened"),
    (Events::INTERLOCK_CLOSED, "guard_closed"),
    (Events::PAUSED, "paused"),
    (Events::RESUMED, "resumed"),
    (Events::WARM_UP_DONE, "warm_up_done"),
    (Events::OVEREXPOSED, "overexposed"),
    (Events::LIGHT_NOT_OFF, "light_not_off"),
    (Events::FAULT, "fault"),
    (Events::LAMP_LOW, "lamp_low"),
];

fn event_names(e: Events) -> Vec<String> {
    EVENT_NAMES
        .iter()
        .filter(|(bit, _)| e.contains(*bit))
        .map(|(_, n)| (*n).to_string())
        .collect()
}

/// The name of a curing fault in reports.
pub fn fault_name(f: CuringFault) -> &'static str {
    match f {
        CuringFault::IrradianceLow => "irradiance_low",
        CuringFault::IrradianceHigh => "irradiance_high",
        CuringFault::Overexposure => "overexposure",
        CuringFault::LightNotOff => "light_not_off",
        CuringFault::InterlockPin => "interlock_pin",
        CuringFault::Output => "output",
        CuringFault::Saturated => "saturated",
        CuringFault::BadCode => "bad_code",
        CuringFault::TimeBackwards => "time_backwards",
        CuringFault::Gap { .. } => "gap",
        CuringFault::Sensor => "sensor",
        CuringFault::Aborted => "aborted",
    }
}

fn stop_name(r: StopReason) -> &'static str {
    match r {
        StopReason::Target => "target",
        StopReason::TargetTimer => "target_timer",
        StopReason::Fault(_) => "fault",
        StopReason::Paused => "paused",
        StopReason::Ended => "ended",
    }
}

fn refusal_words(r: Refusal) -> &'static str {
    match r {
        Refusal::AlarmLatched => "the alarm of an earlier fault is latched (no `acknowledge`)",
        Refusal::InterlockOpen => "the guard is open at the start",
        Refusal::PartActive => "a part is active",
        Refusal::NoPart => "no part is active",
        Refusal::NotPaused => "the part is not paused",
        // The shared refusal also names session-only cases (and may grow).
        _ => "the controller refused the command",
    }
}

/// The anticipated stop as the replay saw it: where, and the tail the controller predicted.
#[derive(Debug, Clone, Copy)]
struct StopSeen {
    line: u64,
    tail_j: f64,
}

#[derive(Debug, Clone, Copy)]
struct Active {
    id: u32,
    first_line: u64,
    start_s: f64,
    last_line: u64,
    last_t_abs: u64,
    last_tick: Ticks,
    rows: u64,
    stop: Option<StopSeen>,
}

/// Replays samples one at a time through the curing controller.
pub struct CuringReplayer {
    c: ReplayController,
    pins: SimPins,
    setup: CuringSetup,
    hz: f64,
    origin_s: f64,
    active: Option<Active>,
    refused: Option<u32>,
    parts: Vec<PartReport>,
    events: Vec<Event>,
    dropped: u64,
    rows_outside: u64,
}

fn never<T>(
    e: CuringError<
        PinError<std::convert::Infallible, std::convert::Infallible>,
        std::convert::Infallible,
    >,
) -> Result<T, Refusal> {
    match e {
        CuringError::Refused(r) => Err(r),
        CuringError::Config(_) => Err(Refusal::NoPart),
        CuringError::Output(PinError::Enable(n) | PinError::Alarm(n))
        | CuringError::Interlock(n) => match n {},
    }
}

impl CuringReplayer {
    /// A replayer for a configuration with `[curing]`.
    ///
    /// # Errors
    /// A configuration without `[curing]`, or a library configuration error (not expected:
    /// [`super::config::parse`] validated it with the same call).
    pub fn new(config: &ReviewConfig) -> Result<Self, ReviewError> {
        let setup = config
            .curing
            .clone()
            .ok_or_else(|| no_curing(&config.file))?;
        let (c, pins) = new_controller(config.meter.clone(), setup.config.clone())
            .map_err(|e| ReviewError::Other(format!("{}: {e}", config.file)))?;
        Ok(Self {
            c,
            pins,
            setup,
            hz: f64::from(config.meter.tick_rate().hz()),
            origin_s: 0.0,
            active: None,
            refused: None,
            parts: Vec::new(),
            events: Vec::new(),
            dropped: 0,
            rows_outside: 0,
        })
    }

    /// Time of the first sample, s (times in the report are on the file's axis).
    pub fn set_origin_s(&mut self, origin_s: f64) {
        self.origin_s = origin_s;
    }

    fn time_s(&self, t_abs: u64) -> f64 {
        self.origin_s + t_abs as f64 / self.hz
    }

    fn event(&mut self, time_s: f64, tick: Ticks, line: u64, kind: &str, detail: String) {
        if self.events.len() < MAX_EVENTS {
            self.events.push(Event {
                time_s,
                tick: tick.0,
                line,
                kind: kind.to_string(),
                detail,
            });
        } else {
            self.dropped += 1;
        }
    }

    fn events(&mut self, e: Events, time_s: f64, tick: Ticks, line: u64, part: u32) {
        for name in event_names(e) {
            self.event(time_s, tick, line, &name, format!("part {part}"));
        }
    }

    /// Feed one sample (file order).
    pub fn push(&mut self, s: &Sample) {
        let want = s.station.part;
        let at = s.reading.at;
        let now_s = self.time_s(s.t_abs);
        // The part under the head changed: finish the one before at its last row.
        if let Some(a) = self.active {
            if want != Some(a.id) {
                self.finish_active();
            }
        }
        if self.refused.is_some() && self.refused != want {
            self.refused = None;
        }
        self.pins.door.set(s.station.guard_closed);
        if self.active.is_none() {
            if s.station.command == Some(OperatorCommand::Acknowledge) && self.c.alarm_latched() {
                match self.c.acknowledge_alarm().or_else(never) {
                    Ok(()) => self.event(now_s, at, s.line, "alarm_acknowledged", String::new()),
                    Err(r) => self.event(
                        now_s,
                        at,
                        s.line,
                        "command_refused",
                        format!("acknowledge: {}", refusal_words(r)),
                    ),
                }
            }
            match want {
                Some(id) if self.refused != Some(id) => {
                    match self.c.start(PartId(id), at).or_else(never) {
                        Ok(ev) => {
                            self.active = Some(Active {
                                id,
                                first_line: s.line,
                                start_s: now_s,
                                last_line: s.line,
                                last_t_abs: s.t_abs,
                                last_tick: at,
                                rows: 0,
                                stop: None,
                            });
                            self.events(ev, now_s, at, s.line, id);
                        }
                        Err(r) => {
                            self.refused = Some(id);
                            self.event(
                                now_s,
                                at,
                                s.line,
                                "part_refused",
                                format!("part {id}: {}", refusal_words(r)),
                            );
                            self.parts
                                .push(refused_part(id, s.line, now_s, &self.setup, r));
                        }
                    }
                }
                Some(_) => {
                    // Rows of a refused part: not fed.
                    if let Some(p) = self.parts.last_mut() {
                        p.last_line = s.line;
                        p.end_time_s = now_s;
                        p.rows += 1;
                    }
                    return;
                }
                None => {
                    self.rows_outside += 1;
                    return;
                }
            }
        }
        let Some(mut a) = self.active else {
            return;
        };
        // The firmware's timer compare, armed at stop_due() after the last reading, fires
        // before this reading if it is due earlier.
        if self.setup.timer_stop && self.c.phase() == CuringPhase::Exposing {
            if let Some(due) = self.c.stop_due() {
                let before = at.wrapping_since(due);
                if (1..=i32::MAX as u32).contains(&before) {
                    // From the last reading: the time to the stop at its irradiance, then
                    // the lag tail.
                    let to_stop_s = f64::from(due.wrapping_since(a.last_tick)) / self.hz;
                    let tail = self.c.predicted_tail().j_per_m2()
                        + self.c.irradiance().w_per_m2() * to_stop_s;
                    if let Ok(TimerOutcome::Stopped) = self.c.on_stop_timer(due).or_else(never) {
                        let t_abs = a.last_t_abs + u64::from(due.wrapping_since(a.last_tick));
                        let t = self.time_s(t_abs);
                        a.stop = Some(StopSeen {
                            line: a.last_line,
                            tail_j: tail,
                        });
                        self.event(
                            t,
                            due,
                            a.last_line,
                            "stop_issued",
                            format!("part {} (timer)", a.id),
                        );
                    }
                }
            }
        }
        match s.station.command {
            Some(OperatorCommand::Resume) => match self.c.resume(at).or_else(never) {
                Ok(ev) => self.events(ev, now_s, at, s.line, a.id),
                Err(r) => self.event(
                    now_s,
                    at,
                    s.line,
                    "command_refused",
                    format!("resume: {}", refusal_words(r)),
                ),
            },
            Some(OperatorCommand::Abort) => {
                if let Ok(ev) = self.c.fault(CuringFault::Aborted, at).or_else(never) {
                    self.events(ev, now_s, at, s.line, a.id);
                }
            }
            Some(OperatorCommand::Acknowledge) => self.event(
                now_s,
                at,
                s.line,
                "command_refused",
                format!("acknowledge: {}", refusal_words(Refusal::PartActive)),
            ),
            None => {}
        }
        if let Ok(u) = self.c.on_reading(&s.reading).or_else(never) {
            if u.events.contains(Events::STOP_ISSUED) && a.stop.is_none() {
                // Issued after integrating this reading: the tail of its irradiance.
                a.stop = Some(StopSeen {
                    line: s.line,
                    tail_j: self.c.predicted_tail().j_per_m2(),
                });
            }
            self.events(u.events, now_s, at, s.line, a.id);
        }
        a.last_line = s.line;
        a.last_t_abs = s.t_abs;
        a.last_tick = at;
        a.rows += 1;
        self.active = Some(a);
    }

    fn finish_active(&mut self) {
        let Some(a) = self.active.take() else {
            return;
        };
        let end_s = self.time_s(a.last_t_abs);
        match self.c.finish(a.last_tick).or_else(never) {
            Ok(rec) => {
                // The stop tick lies at or before the last row (wrap-aware).
                let back = a.last_tick.wrapping_since(rec.stop);
                let stop_s = (back <= i32::MAX as u32)
                    .then(|| self.time_s(a.last_t_abs.saturating_sub(u64::from(back))));
                let p = part_report(&a, &rec, stop_s, end_s, &self.setup);
                self.event(
                    end_s,
                    a.last_tick,
                    a.last_line,
                    "part_finished",
                    format!("part {}: {} ({})", a.id, p.verdict, p.reason),
                );
                self.parts.push(p);
            }
            Err(r) => self.event(
                end_s,
                a.last_tick,
                a.last_line,
                "command_refused",
                format!("finish: {}", refusal_words(r)),
            ),
        }
    }

    /// Finish the last part and build the report.
    pub fn finish(&mut self, input: InputInfo, run: RunLabels) -> CuringReport {
        self.finish_active();
        let cfg = &self.setup.config;
        let trend = cfg.lamp.map(|_| {
            let t = self.c.lamp_trend();
            LampTrendReport {
                parts: t.parts,
                latest_ratio: t.latest_ratio,
                mean_ratio: t.mean_ratio,
                slope_per_part: t.slope_per_part,
                maintenance_due: t.maintenance_due,
            }
        });
        let count = |v: &str| self.parts.iter().filter(|p| p.verdict == v).count() as u64;
        CuringReport {
            report_format: CURING_REPORT_FORMAT.to_string(),
            report_version: CURING_REPORT_VERSION,
            complete: true,
            tool: super::TOOL.to_string(),
            library: super::library(),
            input,
            run,
            recipe: RecipeFacts {
                tick_rate_hz: self.hz as u32,
                target_j_per_m2: cfg.target.j_per_m2(),
                tolerance_j_per_m2: cfg.tolerance.j_per_m2(),
                stop_policy: match cfg.stop_policy {
                    StopPolicy::Anticipate => "anticipate",
                    StopPolicy::AtTarget => "at_target",
                }
                .to_string(),
                timer_stop: self.setup.timer_stop,
                effective_lag_s: self.c.effective_lag().s(),
                light_off_after_s: f64::from(cfg.lag.off_after_ticks()) / self.hz,
                warm_up_s: f64::from(cfg.window.warm_up_ticks) / self.hz,
                minimum_w_per_m2: cfg.window.minimum.map(|m| m.irradiance.w_per_m2()),
                maximum_w_per_m2: cfg.window.maximum.map(|m| m.irradiance.w_per_m2()),
                lamp_reference_w_per_m2: cfg.lamp.map(|l| l.reference.w_per_m2()),
                max_gap_s: f64::from(cfg.max_gap_ticks) / self.hz,
            },
            summary: CuringSummary {
                parts: self.parts.len() as u64,
                passed: count("pass"),
                failed: count("fail"),
                refused: count("refused"),
                rows_outside_parts: self.rows_outside,
            },
            lamp_trend: trend,
            parts: std::mem::take(&mut self.parts),
            events: std::mem::take(&mut self.events),
            events_dropped: self.dropped,
        }
    }
}

fn refused_part(id: u32, line: u64, t: f64, setup: &CuringSetup, r: Refusal) -> PartReport {
    PartReport {
        part: id,
        verdict: "refused".into(),
        reason: format!("not started: {}", refusal_words(r)),
        first_line: line,
        last_line: line,
        start_time_s: t,
        stop_time_s: None,
        stop_line: None,
        end_time_s: t,
        stop_reason: "refused".into(),
        stopped_at_target: false,
        fault: None,
        faults: 0,
        target_j_per_m2: setup.config.target.j_per_m2(),
        delivered_j_per_m2: 0.0,
        after_stop_j_per_m2: 0.0,
        paused_j_per_m2: 0.0,
        overshoot_j_per_m2: -setup.config.target.j_per_m2(),
        at_stop_j_per_m2: None,
        predicted_tail_j_per_m2: None,
        expected_j_per_m2: None,
        irradiance_min_w_per_m2: None,
        irradiance_mean_w_per_m2: None,
        irradiance_peak_w_per_m2: None,
        exposing_time_s: 0.0,
        lamp_ratio: None,
        events: Vec::new(),
        rows: 1,
    }
}

fn mj(j_per_m2: f64) -> String {
    format!("{} mJ/cm²", sig(j_per_m2 / 10.0))
}

/// The verdict of a part: `pass` only when the controller stopped it at its (anticipated)
/// target without a fault and the delivered dose lies in target ..= target + tolerance.
fn verdict(rec: &PartRecord, setup: &CuringSetup) -> (&'static str, String) {
    let target = setup.config.target.j_per_m2();
    let limit = target + setup.config.tolerance.j_per_m2();
    let h = rec.delivered.j_per_m2();
    if let Some(f) = rec.fault {
        return (
            "fail",
            format!("fault: {f}; delivered {} of {}", mj(h), mj(target)),
        );
    }
    match rec.stop_reason {
        StopReason::Target | StopReason::TargetTimer if h < target => (
            "fail",
            format!(
                "stopped early: delivered {} below the target {}",
                mj(h),
                mj(target)
            ),
        ),
        StopReason::Target | StopReason::TargetTimer if h > limit => (
            "fail",
            format!("delivered {} above target + tolerance {}", mj(h), mj(limit)),
        ),
        StopReason::Target | StopReason::TargetTimer => (
            "pass",
            format!(
                "stopped at target: delivered {} (target {}, limit {})",
                mj(h),
                mj(target),
                mj(limit)
            ),
        ),
        StopReason::Paused => (
            "fail",
            format!(
                "paused by the guard and not resumed: delivered {} of {}",
                mj(h),
                mj(target)
            ),
        ),
        StopReason::Ended | StopReason::Fault(_) => (
            "fail",
            format!(
                "the part's rows ended before the stop: delivered {} of {}",
                mj(h),
                mj(target)
            ),
        ),
    }
}

fn part_report(
    a: &Active,
    rec: &PartRecord,
    stop_s: Option<f64>,
    end_s: f64,
    setup: &CuringSetup,
) -> PartReport {
    let (v, reason) = verdict(rec, setup);
    let at_target = matches!(
        rec.stop_reason,
        StopReason::Target | StopReason::TargetTimer
    );
    let stop = a.stop.filter(|_| at_target);
    let at_stop = rec.delivered.j_per_m2() - rec.after_stop.j_per_m2();
    PartReport {
        part: a.id,
        verdict: v.into(),
        reason,
        first_line: a.first_line,
        last_line: a.last_line,
        start_time_s: a.start_s,
        stop_time_s: stop_s,
        stop_line: stop.map(|s| s.line),
        end_time_s: end_s,
        stop_reason: stop_name(rec.stop_reason).into(),
        stopped_at_target: at_target,
        fault: rec.fault.map(|f| fault_name(f).to_string()),
        faults: rec.faults,
        target_j_per_m2: rec.target.j_per_m2(),
        delivered_j_per_m2: rec.delivered.j_per_m2(),
        after_stop_j_per_m2: rec.after_stop.j_per_m2(),
        paused_j_per_m2: rec.paused.j_per_m2(),
        overshoot_j_per_m2: rec.overshoot.j_per_m2(),
        at_stop_j_per_m2: Some(at_stop),
        predicted_tail_j_per_m2: stop.map(|s| s.tail_j),
        expected_j_per_m2: stop.map(|s| at_stop + s.tail_j),
        irradiance_min_w_per_m2: rec.min.map(|e| e.w_per_m2()),
        irradiance_mean_w_per_m2: rec.mean.map(|e| e.w_per_m2()),
        irradiance_peak_w_per_m2: rec.peak.map(|e| e.w_per_m2()),
        exposing_time_s: rec.exposing_time.s(),
        lamp_ratio: rec.lamp_ratio,
        events: event_names(rec.seen),
        rows: a.rows,
    }
}

fn no_curing(file: &str) -> ReviewError {
    ReviewError::input(
        Place {
            file: file.to_string(),
            ..Place::default()
        },
        "this configuration has no [curing] table: a dose session ([session]) is replayed with \
         `photon-review replay`",
    )
}

/// Replay a sample file through the curing recipe of `config`. The report is returned only
/// when the whole file was read without error.
///
/// # Errors
/// A configuration without `[curing]`; the first input error, naming file, line and column.
pub fn replay_curing_file(
    config: &ReviewConfig,
    samples_path: &str,
) -> Result<CuringReport, ReviewError> {
    let mut replayer = CuringReplayer::new(config)?;
    let f = std::fs::File::open(samples_path).map_err(|e| ReviewError::io(samples_path, e))?;
    let hashing = Hashing {
        inner: f,
        hash: Sha256::new(),
    };
    let mut reader = SampleReader::new(samples_path, hashing, config)?;
    let mut first = true;
    while let Some(s) = reader.next_sample()? {
        if first {
            replayer.set_origin_s(reader.origin_s());
            first = false;
        }
        replayer.push(&s);
    }
    if reader.rows() == 0 {
        return Err(ReviewError::input(
            Place {
                file: samples_path.to_string(),
                line: Some(2),
                column: None,
                field: None,
            },
            "no samples after the header",
        ));
    }
    let time_column = match reader.time_unit() {
        TimeUnit::Seconds => "time_s",
        TimeUnit::Ticks => "time_ticks",
    };
    let reading_column = reader.value_kind().column();
    let rows = reader.rows();
    let samples_sha256 = {
        let mut inner = reader.into_inner();
        let mut rest = Vec::new();
        std::io::Read::read_to_end(&mut inner, &mut rest)
            .map_err(|e| ReviewError::io(samples_path, e))?;
        hex(&inner.hash.finalize())
    };
    let report = replayer.finish(
        InputInfo {
            config_file: config.file.clone(),
            config_sha256: config.sha256.clone(),
            samples_file: samples_path.to_string(),
            samples_sha256,
            time_column: time_column.to_string(),
            reading_column: reading_column.to_string(),
            rows,
        },
        config.labels.clone(),
    );
    Ok(report)
}

fn opt(v: Option<f64>) -> String {
    v.map_or_else(String::new, |x| format!("{x}"))
}

impl CuringReport {
    /// The per-part CSV ([`PART_COLUMNS`]).
    ///
    /// # Errors
    /// Not expected (writing to memory).
    pub fn to_csv(&self) -> Result<String, ReviewError> {
        let mut w = csv::Writer::from_writer(Vec::new());
        let err = |e: csv::Error| ReviewError::Other(format!("CSV: {e}"));
        w.write_record(PART_COLUMNS).map_err(err)?;
        for p in &self.parts {
            w.write_record([
                p.part.to_string(),
                p.verdict.clone(),
                p.stop_reason.clone(),
                p.fault.clone().unwrap_or_default(),
                format!("{}", p.start_time_s),
                opt(p.stop_time_s),
                format!("{}", p.end_time_s),
                format!("{}", p.target_j_per_m2),
                format!("{}", p.delivered_j_per_m2),
                opt(p.at_stop_j_per_m2),
                opt(p.predicted_tail_j_per_m2),
                opt(p.expected_j_per_m2),
                format!("{}", p.after_stop_j_per_m2),
                format!("{}", p.paused_j_per_m2),
                opt(p.irradiance_min_w_per_m2),
                opt(p.irradiance_mean_w_per_m2),
                opt(p.irradiance_peak_w_per_m2),
                format!("{}", p.exposing_time_s),
                opt(p.lamp_ratio),
                p.first_line.to_string(),
                p.last_line.to_string(),
                p.reason.clone(),
            ])
            .map_err(err)?;
        }
        let bytes = w
            .into_inner()
            .map_err(|e| ReviewError::Other(format!("CSV: {e}")))?;
        String::from_utf8(bytes).map_err(|e| ReviewError::Other(format!("CSV: {e}")))
    }

    /// The human-readable form.
    pub fn to_text(&self) -> String {
        use std::fmt::Write;
        let mut s = String::new();
        let r = self;
        let _ = writeln!(s, "photon-review curing report ({}, {})", r.tool, r.library);
        let _ = writeln!(
            s,
            "samples  {} ({} rows, {} / {})",
            r.input.samples_file, r.input.rows, r.input.time_column, r.input.reading_column
        );
        let _ = writeln!(s, "recipe   {}", r.input.config_file);
        let c = &r.recipe;
        let _ = writeln!(
            s,
            "target   {} + {} tolerance; stop {}{}; effective lag {} s",
            mj(c.target_j_per_m2),
            mj(c.tolerance_j_per_m2),
            c.stop_policy,
            if c.timer_stop { " (timer compare)" } else { "" },
            sig(c.effective_lag_s)
        );
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "{:>6}  {:<7}  {:<12}  {:>10}  {:>14}  {:>14}  {:>14}  reason",
            "part", "verdict", "stop", "stop s", "delivered", "at stop", "expected"
        );
        for p in &r.parts {
            let _ = writeln!(
                s,
                "{:>6}  {:<7}  {:<12}  {:>10}  {:>14}  {:>14}  {:>14}  {}",
                p.part,
                p.verdict,
                p.stop_reason,
                p.stop_time_s.map_or("-".into(), sig),
                mj(p.delivered_j_per_m2),
                p.at_stop_j_per_m2.map_or("-".into(), mj),
                p.expected_j_per_m2.map_or("-".into(), mj),
                p.reason
            );
        }
        let _ = writeln!(s);
        let m = &r.summary;
        let _ = writeln!(
            s,
            "parts {}: {} pass, {} fail, {} refused; {} rows outside parts",
            m.parts, m.passed, m.failed, m.refused, m.rows_outside_parts
        );
        if let Some(t) = &r.lamp_trend {
            let _ = writeln!(
                s,
                "lamp: latest {} of reference, mean {}, slope {} per part{}",
                t.latest_ratio.map_or("-".into(), sig),
                t.mean_ratio.map_or("-".into(), sig),
                t.slope_per_part.map_or("-".into(), sig),
                if t.maintenance_due {
                    " — maintenance due"
                } else {
                    ""
                }
            );
        }
        let _ = writeln!(
            s,
            "events   {} (+{} not listed)",
            r.events.len(),
            r.events_dropped
        );
        s
    }
}
