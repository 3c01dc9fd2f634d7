//! Checkpoint: when to write one, the conservative bound it carries, and how to resume.
//!
//! # The bound, written ahead
//!
//! A checkpoint written at tick `tₖ` with delivered dose `Dₖ` records the bound
//!
//! ```text
//! Bₖ = Dₖ + E_max · H          (rounded up to µJ/m², + 1 µJ/m² for float rounding)
//! ```
//!
//! where `H` is the checkpoint interval ([`CheckpointConfig::interval_ticks`], default one
//! second) and `E_max` an upper bound of every irradiance the integrator can accept
//! ([`CheckpointConfig::max_irradiance`], for example [`full_scale_irradiance`]: readings above
//! it are saturated and never integrated).
//!
//! [`Checkpointer::due`] says a checkpoint is due once `now − tₖ ≥ H − G`, where `G` is the
//! session's maximum sample gap (a longer interval is a fault and is not integrated). So the
//! sample that makes a checkpoint due is at most `G` after a sample that came before
//! `tₖ + H − G`: every sample integrated before the next checkpoint lies before `tₖ + H`, and
//! a trapezoid step never adds more than `E_max · Δt`. If the power fails at any moment, the
//! last acknowledged checkpoint `Bₖ` is therefore
//!
//! ```text
//! delivered ≤ Bₖ ≤ delivered + E_max · H (+ 2 µJ/m²)      (for non-negative irradiance)
//! ```
//!
//! which is the dose to resume from ([`resume_session`]): a curing station stops a little
//! early rather than overdosing, a personal logger warns a little early.
//!
//! The integrator's duties: write the checkpoint (and call
//! [`Journal::maintain`](super::Journal::maintain)) before the next sample once `due` is
//! true; do not enable the source before the first checkpoint of a session is acknowledged;
//! treat a failed checkpoint as a fault (source off, `FaultCode::Storage`).

use embedded_hal::digital::OutputPin;

use crate::acquire::reading::{RangeIndex, TickRate, Ticks};
use crate::control::session::{
    to_exposure, Outcome, PauseCause, PauseSummary, Phase, Session, SessionConfig,
};
use crate::irradiance::Meter;
use crate::journal::record::{
    CalibrationId, Checkpoint, ConfigDigest, Event, EventCode, PauseRecord, SessionEnd, SessionId,
    SessionOutcome, SessionStart, StoredExposure, StoredIrradiance, StoredWavelength,
};
use crate::quantity::{Irradiance, RadiantExposure};

use super::OpenSession;

/// When checkpoints are due and how wide their bound is.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CheckpointConfig {
    /// The checkpoint horizon `H`, ticks: each bound covers this long. Valid:
    /// `max_gap_ticks < interval_ticks ≤ 2³¹ − 1`. Default ([`CheckpointConfig::one_second`]):
    /// one second of ticks.
    pub interval_ticks: u32,
    /// The longest sample interval the integrator accepts (the session's `max_gap_ticks`),
    /// ticks. Valid: ≥ 1.
    pub max_gap_ticks: u32,
    /// Upper bound of every integrated irradiance. Valid: finite, > 0.
    pub max_irradiance: Irradiance,
    /// Tick rate of the timestamps.
    pub tick_rate: TickRate,
}

impl CheckpointConfig {
    /// A one-second horizon (`interval_ticks` = tick rate).
    #[must_use]
    pub const fn one_second(
        tick_rate: TickRate,
        max_gap_ticks: u32,
        max_irradiance: Irradiance,
    ) -> Self {
        Self {
            interval_ticks: tick_rate.hz(),
            max_gap_ticks,
            max_irradiance,
            tick_rate,
        }
    }
}

/// Why a checkpoint configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CheckpointConfigError {
    /// `interval_ticks` is not above `max_gap_ticks`, or is ≥ 2³¹.
    Interval,
    /// `max_gap_ticks` is 0.
    MaxGap,
    /// `max_irradiance` is not finite or ≤ 0.
    MaxIrradiance,
}

impl core::fmt::Display for CheckpointConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Interval => "checkpoint interval must exceed the maximum gap and be < 2^31 ticks",
            Self::MaxGap => "maximum gap must be at least 1 tick",
            Self::MaxIrradiance => "maximum irradiance must be finite and > 0",
        })
    }
}

impl core::error::Error for CheckpointConfigError {}

#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Extremes {
    min: f64,
    max: f64,
    any: bool,
}

impl Extremes {
    const NONE: Self = Self {
        min: 0.0,
        max: 0.0,
        any: false,
    };
    fn observe(&mut self, v: f64) {
        if !self.any {
            *self = Self {
                min: v,
                max: v,
                any: true,
            };
        } else if v < self.min {
            self.min = v;
        } else if v > self.max {
            self.max = v;
        }
    }
}

/// Decides when a checkpoint is due and builds the records of a session. See the
/// [module documentation](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Checkpointer {
    config: CheckpointConfig,
    /// E_max · H, J/m².
    horizon_j_per_m2: f64,
    /// H − G, ticks.
    due_after: u32,
    session: SessionId,
    started_at: Ticks,
    start_delivered_j: f64,
    last_at: Ticks,
    last_delivered_j: f64,
    interval: Extremes,
    whole: Extremes,
    events: u16,
}

impl Checkpointer {
    /// Validate the configuration.
    ///
    /// # Errors
    /// [`CheckpointConfigError`] naming the invalid value.
    pub fn new(config: CheckpointConfig) -> Result<Self, CheckpointConfigError> {
        if config.max_gap_ticks == 0 {
            return Err(CheckpointConfigError::MaxGap);
        }
        if config.interval_ticks <= config.max_gap_ticks || config.interval_ticks > i32::MAX as u32
        {
            return Err(CheckpointConfigError::Interval);
        }
        let e = config.max_irradiance.w_per_m2();
        if !(e.is_finite() && e > 0.0) {
            return Err(CheckpointConfigError::MaxIrradiance);
        }
        Ok(Self {
            config,
            horizon_j_per_m2: e * config.tick_rate.ticks_to_s(config.interval_ticks),
            // interval > max_gap, so no underflow.
            due_after: config.interval_ticks - config.max_gap_ticks,
            session: SessionId(0),
            started_at: Ticks(0),
            start_delivered_j: 0.0,
            last_at: Ticks(0),
            last_delivered_j: 0.0,
            interval: Extremes::NONE,
            whole: Extremes::NONE,
            events: 0,
        })
    }

    /// The configuration.
    #[must_use]
    pub const fn config(&self) -> &CheckpointConfig {
        &self.config
    }

    /// The widest overestimate of a recovered dose, `E_max · H`.
    #[must_use]
    pub fn horizon(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.horizon_j_per_m2)
    }

    /// The bound written for a delivered dose: `delivered + E_max · H`, rounded up, + 1 µJ/m².
    #[must_use]
    pub fn bound(&self, delivered: RadiantExposure) -> StoredExposure {
        StoredExposure::round_up(RadiantExposure::from_j_per_m2(
            delivered.j_per_m2() + self.horizon_j_per_m2,
        ))
        .saturating_add(StoredExposure::from_uj_per_m2(1))
    }

    /// The start record of a session (its session id is set by
    /// [`Journal::begin_session`](super::Journal::begin_session)).
    #[must_use]
    pub fn start_record(
        &self,
        meter: &Meter,
        config: &SessionConfig,
        calibration: CalibrationId,
        at: Ticks,
    ) -> SessionStart {
        SessionStart {
            session: SessionId(0),
            start: at,
            tick_rate_hz: meter.tick_rate().hz(),
            config_digest: ConfigDigest::of(meter, config),
            calibration,
            wavelength: StoredWavelength::round_nearest(meter.band().equivalent_wavelength()),
            target: to_exposure(meter, config.target)
                .map_or(StoredExposure::ZERO, StoredExposure::round_up),
            interval_ticks: self.config.interval_ticks,
            max_irradiance: StoredIrradiance::round_up(self.config.max_irradiance),
        }
    }

    /// Start a session: reset the statistics and return its first checkpoint (write it before
    /// enabling the source).
    pub fn begin(
        &mut self,
        session: SessionId,
        at: Ticks,
        delivered: RadiantExposure,
    ) -> Checkpoint {
        self.session = session;
        self.started_at = at;
        self.start_delivered_j = delivered.j_per_m2();
        self.events = 0;
        self.whole = Extremes::NONE;
        self.last_at = at;
        self.last_delivered_j = delivered.j_per_m2();
        self.interval = Extremes::NONE;
        Checkpoint {
            session,
            at,
            delivered: StoredExposure::round_down(delivered),
            bound: self.bound(delivered),
            min: StoredIrradiance::ZERO,
            mean: StoredIrradiance::ZERO,
            max: StoredIrradiance::ZERO,
        }
    }

    /// Resume a recovered session at `at`: the dose continues from the recovered bound.
    /// Returns the `Resumed` event and the first checkpoint to append (in that order). The end
    /// summary then counts the whole session from its original start (its mean is the dose ÷
    /// the elapsed ticks, downtime included); minimum and maximum cover the resumed part only.
    pub fn resume(&mut self, recovered: &OpenSession, at: Ticks) -> (Event, Checkpoint) {
        let dose = recovered.dose_bound().radiant_exposure();
        let cp = self.begin(recovered.session(), at, dose);
        self.started_at = recovered.start.start;
        self.start_delivered_j = 0.0;
        let ev = self.event(at, dose, EventCode::Resumed, 0);
        (ev, cp)
    }

    /// Note the irradiance of an integrated sample (two float compares; no flash access).
    pub fn observe(&mut self, e: Irradiance) {
        let v = e.w_per_m2();
        self.interval.observe(v);
        self.whole.observe(v);
    }

    /// Whether a checkpoint is due at `now` (`now − last checkpoint ≥ H − max gap`). Check
    /// after each integrated sample; when true, write [`Checkpointer::checkpoint`] before the
    /// next sample.
    #[must_use]
    pub fn due(&self, now: Ticks) -> bool {
        now.wrapping_since(self.last_at) >= self.due_after
    }

    /// The checkpoint at `at` (the tick of the last integrated sample) with the dose
    /// delivered so far; resets the interval statistics.
    pub fn checkpoint(&mut self, at: Ticks, delivered: RadiantExposure) -> Checkpoint {
        let dt = self
            .config
            .tick_rate
            .ticks_to_s(at.wrapping_since(self.last_at));
        let mean = if dt > 0.0 {
            (delivered.j_per_m2() - self.last_delivered_j) / dt
        } else {
            0.0
        };
        let cp = Checkpoint {
            session: self.session,
            at,
            delivered: StoredExposure::round_down(delivered),
            bound: self.bound(delivered),
            min: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(self.interval.min)),
            mean: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(mean)),
            max: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(self.interval.max)),
        };
        self.last_at = at;
        self.last_delivered_j = delivered.j_per_m2();
        self.interval = Extremes::NONE;
        cp
    }

    /// An event record of the current session (counted for the end summary).
    pub fn event(
        &mut self,
        at: Ticks,
        delivered: RadiantExposure,
        code: EventCode,
        detail: u32,
    ) -> Event {
        self.events = self.events.saturating_add(1);
        Event {
            session: self.session,
            at,
            delivered: StoredExposure::round_down(delivered),
            code,
            detail,
        }
    }

    /// The event of a pause that begins at `at` with `delivered` so far
    /// ([`EventCode::PausedByCommand`] or [`EventCode::PausedByInterlock`]); counted for the
    /// end summary. Write it when [`Session::pause`] returns, or when a reading paused the
    /// session ([`Checkpointer::reading_events`]).
    pub fn pause_event(
        &mut self,
        at: Ticks,
        delivered: RadiantExposure,
        cause: PauseCause,
    ) -> Event {
        let code = match cause {
            PauseCause::Command => EventCode::PausedByCommand,
            PauseCause::Interlock => EventCode::PausedByInterlock,
        };
        self.event(at, delivered, code, 0)
    }

    /// The event of milestone `index` (from 0) reached at `at` ([`EventCode::Milestone`],
    /// detail = the index); counted for the end summary.
    pub fn milestone_event(&mut self, at: Ticks, delivered: RadiantExposure, index: u16) -> Event {
        self.event(at, delivered, EventCode::Milestone, u32::from(index))
    }

    /// The pause record of a completed pause (what [`Session::resume`] returned): cause,
    /// start, dark time, dose at the pause and the leak (rounded up); counted as an event for
    /// the end summary.
    pub fn pause_record(&mut self, pause: &PauseSummary) -> PauseRecord {
        self.events = self.events.saturating_add(1);
        PauseRecord::of(self.session, pause)
    }

    /// The events one reading calls for, from the session's phase before the reading, its
    /// pause cause after it ([`Session::pause_cause`]) and the reading's [`Outcome`]: a pause
    /// the interlock caused, then a milestone reached (each `None` if not). `delivered` is
    /// the dose after the reading.
    pub fn reading_events(
        &mut self,
        before: Phase,
        cause_after: Option<PauseCause>,
        outcome: &Outcome,
        at: Ticks,
        delivered: RadiantExposure,
    ) -> [Option<Event>; 2] {
        let paused = (before == Phase::Exposing && cause_after == Some(PauseCause::Interlock))
            .then(|| self.pause_event(at, delivered, PauseCause::Interlock));
        let milestone = match outcome {
            Outcome::Integrated {
                milestone: Some(k), ..
            } => Some(self.milestone_event(at, delivered, *k)),
            _ => None,
        };
        [paused, milestone]
    }

    /// The end record (summary) of the current session.
    #[must_use]
    pub fn end(
        &self,
        at: Ticks,
        delivered: RadiantExposure,
        outcome: SessionOutcome,
    ) -> SessionEnd {
        let elapsed = at.wrapping_since(self.started_at);
        let dt = self.config.tick_rate.ticks_to_s(elapsed);
        let mean = if dt > 0.0 {
            (delivered.j_per_m2() - self.start_delivered_j) / dt
        } else {
            0.0
        };
        SessionEnd {
            session: self.session,
            at,
            delivered: StoredExposure::round_down(delivered),
            elapsed_ticks: elapsed,
            min: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(self.whole.min)),
            mean: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(mean)),
            max: StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(self.whole.max)),
            outcome,
            events: self.events,
        }
    }
}

/// The largest irradiance the meter can integrate: over all ranges, the irradiance of the
/// largest unsaturated code minus `min(dark offset, 0)` (so later dark captures with a
/// non-negative offset stay below it). A valid `max_irradiance` for [`CheckpointConfig`].
#[must_use]
pub fn full_scale_irradiance(meter: &Meter) -> Irradiance {
    let fe = meter.front_end();
    let mut max = 0.0f64;
    for i in 0..fe.range_count() {
        // range_count ≤ MAX_RANGES (4): fits a u8.
        let r = RangeIndex(i as u8);
        if let Some(range) = fe.range(r) {
            // high_limit ≤ 2²⁴ and |dark| ≤ 2²⁴: the difference fits an i32.
            let net = fe
                .high_limit()
                .saturating_sub(1)
                .saturating_sub(range.dark_offset.min(0));
            let e = meter.irradiance(net, r).w_per_m2().abs();
            if e > max {
                max = e;
            }
        }
    }
    Irradiance::from_w_per_m2(max)
}

/// Start an integrator from a recovered session: sets the preload to the recovered bound and
/// returns it.
pub fn resume_integrator(
    integrator: &mut crate::dose::Integrator,
    recovered: &OpenSession,
) -> RadiantExposure {
    let dose = recovered.dose_bound().radiant_exposure();
    integrator.set_preload(dose);
    dose
}

/// Why a recovered session cannot be resumed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ResumeError {
    /// The configuration differs from the one the session started with. The dose recorded
    /// belongs to the old configuration: do not resume silently; end the old session
    /// ([`SessionOutcome::Abandoned`]) and decide outside the library.
    ConfigChanged {
        /// Digest in the start record.
        recorded: ConfigDigest,
        /// Digest of the current configuration.
        current: ConfigDigest,
    },
    /// The session is not in [`Phase::Ready`].
    NotReady,
}

impl core::fmt::Display for ResumeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::ConfigChanged { recorded, current } => write!(
                f,
                "configuration changed since the session started (digest {:#010x}, now {:#010x})",
                recorded.0, current.0
            ),
            Self::NotReady => f.write_str("session already started"),
        }
    }
}

impl core::error::Error for ResumeError {}

/// A resumed session.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Resumed {
    /// The dose the session continues from (the recovered bound).
    pub dose: RadiantExposure,
    /// The recovered dose already meets the target: do **not** call `start()`; end the
    /// session with [`SessionOutcome::TargetMet`].
    pub target_met: bool,
}

/// Resume a session (in [`Phase::Ready`]) from a recovered
/// one: checks the configuration digest, then preloads the recovered bound.
///
/// # Errors
/// [`ResumeError::ConfigChanged`] or [`ResumeError::NotReady`]; nothing is changed then.
pub fn resume_session<EN, AL, E>(
    session: &mut Session<EN, AL>,
    recovered: &OpenSession,
) -> Result<Resumed, ResumeError>
where
    EN: OutputPin<Error = E>,
    AL: OutputPin<Error = E>,
{
    let current = ConfigDigest::of(session.meter(), session.config());
    let recorded = recovered.start.config_digest;
    if current != recorded {
        return Err(ResumeError::ConfigChanged { recorded, current });
    }
    let dose = recovered.dose_bound().radiant_exposure();
    if !session.set_preload(dose) {
        return Err(ResumeError::NotReady);
    }
    let target_met = dose.j_per_m2() >= session.progress().target.j_per_m2();
    Ok(Resumed { dose, target_met })
}
