//! Record kinds as value types: the payload of each kind ([`SessionStart`], [`Checkpoint`],
//! [`Event`], [`SessionEnd`], the restated [`OpenSession`]; from format 1.1 [`PartTrace`],
//! [`PauseRecord`], [`ExposureSnapshot`], [`UnmonitoredInterval`], [`CuringSnapshot`]) and
//! [`Body`], the payload of any record. Encoding and decoding live in the codec.

use crate::acquire::reading::Ticks;
use crate::control::curing::{CuringState, PartId, PartIdentity, PartRecord, LAMP_HISTORY};
use crate::control::exposure::{ExposureState, OffTime};
use crate::control::session::PauseSummary;

use super::codes::{EventCode, FaultCode, PauseCode, SessionOutcome, StopCode, CURING_FAULT_BITS};
use super::stored::{
    CalibrationId, ConfigDigest, SessionId, StoredExposure, StoredIrradiance, StoredWavelength,
};
use super::{payload, Kind};

/// Session start: what the session is, so a resumed run can prove it is the same one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionStart {
    /// Session id (set by [`crate::journal::Journal::begin_session`]).
    pub session: SessionId,
    /// Tick of the start.
    pub start: Ticks,
    /// Tick rate of every tick in this session, Hz.
    pub tick_rate_hz: u32,
    /// Digest of the meter and session configuration.
    pub config_digest: ConfigDigest,
    /// Calibration identity.
    pub calibration: CalibrationId,
    /// Band identity: the equivalent vacuum wavelength.
    pub wavelength: StoredWavelength,
    /// Target radiant exposure, rounded up.
    pub target: StoredExposure,
    /// Checkpoint horizon, ticks: each checkpoint bound covers this long.
    pub interval_ticks: u32,
    /// Irradiance bound used for checkpoint bounds, rounded up.
    pub max_irradiance: StoredIrradiance,
}

/// Periodic checkpoint: the dose so far, a conservative bound for the coming interval, and
/// irradiance statistics since the previous checkpoint.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Checkpoint {
    /// Session id.
    pub session: SessionId,
    /// Tick of the last sample integrated before this checkpoint.
    pub at: Ticks,
    /// Dose delivered at `at`, rounded down.
    pub delivered: StoredExposure,
    /// Upper bound of the dose until the next checkpoint: delivered + max irradiance ×
    /// interval, rounded up. The value to resume from.
    pub bound: StoredExposure,
    /// Minimum irradiance since the previous checkpoint.
    pub min: StoredIrradiance,
    /// Mean irradiance since the previous checkpoint (dose difference ÷ time).
    pub mean: StoredIrradiance,
    /// Maximum irradiance since the previous checkpoint.
    pub max: StoredIrradiance,
}

/// An event during (or outside) a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Event {
    /// Session id (0 outside a session).
    pub session: SessionId,
    /// Tick of the event.
    pub at: Ticks,
    /// Dose delivered at the event, rounded down.
    pub delivered: StoredExposure,
    /// What happened.
    pub code: EventCode,
    /// Code-specific detail (gap length in ticks for [`FaultCode::Gap`]; 0 otherwise unless
    /// the integrator defines it).
    pub detail: u32,
}

/// Session end: the summary.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionEnd {
    /// Session id.
    pub session: SessionId,
    /// Tick of the end.
    pub at: Ticks,
    /// Dose delivered, rounded down.
    pub delivered: StoredExposure,
    /// Duration, ticks.
    pub elapsed_ticks: u32,
    /// Minimum irradiance over the session.
    pub min: StoredIrradiance,
    /// Mean irradiance over the session.
    pub mean: StoredIrradiance,
    /// Maximum irradiance over the session.
    pub max: StoredIrradiance,
    /// How it ended.
    pub outcome: SessionOutcome,
    /// Events logged during the session (saturating at 65 535).
    pub events: u16,
}

/// A session that has started and not ended: its start record and its latest checkpoint.
/// The payload of a restatement record, and what the journal recovers after a reset.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OpenSession {
    /// The start record.
    pub start: SessionStart,
    /// The latest checkpoint of this session, if any.
    pub checkpoint: Option<Checkpoint>,
}

impl OpenSession {
    /// The session id.
    #[must_use]
    pub const fn session(&self) -> SessionId {
        self.start.session
    }

    /// The dose to resume from: the bound of the latest checkpoint, or zero if no checkpoint
    /// was acknowledged (the source must not be enabled before the first one is).
    ///
    /// Never below the dose delivered before the reset, and above it by at most the session's
    /// `max_irradiance × interval` (plus 2 µJ/m² of rounding), provided the integrator
    /// followed `journal::checkpoint::Checkpointer::due`.
    #[must_use]
    pub fn dose_bound(&self) -> StoredExposure {
        self.checkpoint.map_or(StoredExposure::ZERO, |c| c.bound)
    }
}

/// A finished curing part (kind 6, format 1.1): its identity, dose, stop reason and faults,
/// for per-part traceability. Built from a [`PartRecord`] with [`PartTrace::of`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartTrace {
    /// Session id (0 if the part is not logged as a session).
    pub session: SessionId,
    /// The caller's part number.
    pub part: PartId,
    /// Part, lot and recipe labels.
    pub identity: PartIdentity,
    /// Tick of the start command.
    pub start: Ticks,
    /// Tick of the last integrated reading.
    pub end: Ticks,
    /// Radiant exposure delivered (lag tail and light while paused included), rounded down.
    pub delivered: StoredExposure,
    /// The configured target, rounded up.
    pub target: StoredExposure,
    /// Of `delivered`, what arrived after the stop command, mJ/m², rounded up, saturating at
    /// `u32::MAX` (4.29·10⁶ J/m²).
    pub after_stop_mj_per_m2: u32,
    /// Of `delivered`, what arrived while paused, mJ/m², rounded up, saturating.
    pub paused_mj_per_m2: u32,
    /// Why the light was commanded off.
    pub stop: StopCode,
    /// The fault that stopped the part, when `stop` is [`StopCode::Fault`].
    pub stop_fault: Option<FaultCode>,
    /// The part's first fault, if any.
    pub first_fault: Option<FaultCode>,
    /// Every fault kind of the part: bit `i` is [`CURING_FAULT_BITS`]`[i]`.
    pub fault_kinds: u16,
    /// Events raised in the part (saturating).
    pub events: u16,
}

/// mJ/m² rounded up from J/m², saturating; negative and NaN give 0 (a part's after-stop or
/// paused dose is never negative by more than float rounding).
fn mj_up(j_per_m2: f64) -> u32 {
    // `as` saturates and maps NaN to 0.
    libm::ceil(j_per_m2 * 1e3) as u32
}

impl PartTrace {
    /// The part record of a finished part, for session `session`.
    #[must_use]
    pub fn of(session: SessionId, r: &PartRecord) -> Self {
        let (stop, stop_fault) = StopCode::from_reason(r.stop_reason);
        Self {
            session,
            part: r.part,
            identity: r.identity,
            start: r.start,
            end: r.end,
            delivered: StoredExposure::round_down(r.delivered),
            target: StoredExposure::round_up(r.target),
            after_stop_mj_per_m2: mj_up(r.after_stop.j_per_m2()),
            paused_mj_per_m2: mj_up(r.paused.j_per_m2()),
            stop,
            stop_fault,
            first_fault: r.fault.map(|f| FaultCode::from_curing_fault(f).0),
            fault_kinds: r.fault_kinds,
            events: r.events,
        }
    }

    /// The fault kinds of the part, in bit order.
    pub fn faults(&self) -> impl Iterator<Item = FaultCode> + '_ {
        (0u32..)
            .zip(CURING_FAULT_BITS)
            .filter(|(i, _)| self.fault_kinds & (1 << i) != 0)
            .map(|(_, f)| f)
    }
}

/// A completed pause of a session (kind 7, format 1.1), written at its resume. The pause
/// itself is an event ([`EventCode::PausedByCommand`] / [`EventCode::PausedByInterlock`])
/// written when it begins.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PauseRecord {
    /// Session id.
    pub session: SessionId,
    /// Tick the pause began.
    pub started: Ticks,
    /// Dark (paused) time, ticks; the resume was at `started + dark_ticks`.
    pub dark_ticks: u32,
    /// Dose when the pause began, rounded down.
    pub at_pause: StoredExposure,
    /// Dose received while paused (light that leaked), rounded **up**.
    pub leak: StoredExposure,
    /// Why it paused.
    pub cause: PauseCode,
}

impl PauseRecord {
    /// The record of a session's completed pause.
    #[must_use]
    pub fn of(session: SessionId, p: &PauseSummary) -> Self {
        Self {
            session,
            started: p.started,
            dark_ticks: p.dark_ticks,
            at_pause: StoredExposure::round_down(p.dose_at_pause),
            leak: StoredExposure::round_up(p.leak),
            cause: PauseCode::from_cause(p.cause),
        }
    }
}

/// A checkpoint of a personal exposure monitor (kind 8, format 1.1): its
/// [`ExposureState`] at a tick.
///
/// On flash the eight window segments are `u32` in units of 10^`scale` µJ/m², each rounded
/// **up**, `scale` the smallest of 0 ..= 10 with which every segment fits (0, exact µJ/m²,
/// while each segment is below 4 294 J/m²). Read back, a segment is never below the one
/// written; every other amount is stored exactly (µJ/m², already rounded up by the monitor).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureSnapshot {
    /// Session id (0 outside a session).
    pub session: SessionId,
    /// Tick of the snapshot (the monitor's clock, low 32 bits).
    pub at: Ticks,
    /// The monitor's state.
    pub state: ExposureState,
}

/// The time a monitor was not measuring (kind 9, format 1.1): written at boot, after the
/// state was restored (or not found).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct UnmonitoredInterval {
    /// Session id (0 outside a session).
    pub session: SessionId,
    /// Tick at boot (the monitor's first tick after the interval).
    pub at: Ticks,
    /// Tick rate of `off`, Hz (0 if unknown).
    pub tick_rate_hz: u32,
    /// How long the device was off: known (a real-time clock) or unknown.
    pub off: OffTime,
    /// Sequence number of the state record the monitor resumed from; 0: none found, the
    /// monitor started empty.
    pub restored_from: u32,
}

/// A checkpoint of a curing controller between parts (kind 10, format 1.1): the part
/// counter, the lamp history and a latched alarm ([`CuringState`]).
///
/// Lamp ratios are stored as `i32` parts per million, rounded **down** (a lower ratio makes
/// lamp maintenance due no later), saturating; a ratio that is not finite is stored as 0.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CuringSnapshot {
    /// Session id (0 outside a session).
    pub session: SessionId,
    /// Tick of the snapshot.
    pub at: Ticks,
    /// Parts finished.
    pub parts_finished: u32,
    /// Parts measured for the lamp trend.
    pub lamp_parts: u32,
    /// Valid lamp ratios, 0 ..= [`LAMP_HISTORY`].
    pub lamp_len: u8,
    /// Lamp ratios, oldest first, ppm (0 beyond `lamp_len`).
    pub lamp_ratios_ppm: [i32; LAMP_HISTORY],
    /// The fault whose alarm is latched, if any (for a gap the length is not kept).
    pub alarm: Option<FaultCode>,
}

impl CuringSnapshot {
    /// The record of a controller's state.
    #[must_use]
    pub fn of(session: SessionId, at: Ticks, s: &CuringState) -> Self {
        let mut ppm = [0i32; LAMP_HISTORY];
        let len = usize::from(s.lamp_len).min(LAMP_HISTORY);
        for (d, r) in ppm.iter_mut().zip(s.lamp_ratios.iter()).take(len) {
            // `as` saturates and maps NaN to 0.
            *d = libm::floor(r * 1e6) as i32;
        }
        Self {
            session,
            at,
            parts_finished: s.parts_finished,
            lamp_parts: s.lamp_parts,
            // len ≤ LAMP_HISTORY = 16.
            lamp_len: len as u8,
            lamp_ratios_ppm: ppm,
            alarm: s.alarm.map(|f| FaultCode::from_curing_fault(f).0),
        }
    }

    /// The controller state to restore (`CuringController::restore`): ratios ≤ those
    /// written; a latched alarm whose code is not a curing fault comes back as
    /// [`CuringFault::Aborted`](crate::control::curing::CuringFault::Aborted), still latched.
    #[must_use]
    pub fn state(&self) -> CuringState {
        let mut lamp_ratios = [0.0; LAMP_HISTORY];
        let len = usize::from(self.lamp_len).min(LAMP_HISTORY);
        for (d, p) in lamp_ratios.iter_mut().zip(self.lamp_ratios_ppm).take(len) {
            *d = f64::from(p) * 1e-6;
        }
        CuringState {
            parts_finished: self.parts_finished,
            lamp_parts: self.lamp_parts,
            lamp_ratios,
            // len ≤ 16.
            lamp_len: len as u8,
            alarm: self.alarm.map(|f| {
                f.to_curing_fault(0)
                    .unwrap_or(crate::control::curing::CuringFault::Aborted)
            }),
        }
    }
}

/// The payload of a record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Body {
    /// Session start.
    Start(SessionStart),
    /// Checkpoint.
    Checkpoint(Checkpoint),
    /// Event.
    Event(Event),
    /// Session end.
    End(SessionEnd),
    /// Restatement of the open session (written by the journal).
    Restate(OpenSession),
    /// A finished curing part (format 1.1).
    Part(PartTrace),
    /// A completed pause (format 1.1).
    Pause(PauseRecord),
    /// An exposure monitor's state (format 1.1).
    ExposureState(ExposureSnapshot),
    /// An unmonitored interval, at boot (format 1.1).
    Unmonitored(UnmonitoredInterval),
    /// A curing controller's state (format 1.1).
    CuringState(CuringSnapshot),
}

impl Body {
    /// The record kind of this body.
    #[must_use]
    pub const fn kind(&self) -> Kind {
        match self {
            Self::Start(_) => Kind::Start,
            Self::Checkpoint(_) => Kind::Checkpoint,
            Self::Event(_) => Kind::Event,
            Self::End(_) => Kind::End,
            Self::Restate(_) => Kind::Restate,
            Self::Part(_) => Kind::Part,
            Self::Pause(_) => Kind::Pause,
            Self::ExposureState(_) => Kind::ExposureState,
            Self::Unmonitored(_) => Kind::Unmonitored,
            Self::CuringState(_) => Kind::CuringState,
        }
    }

    /// Payload length in bytes.
    #[must_use]
    pub const fn payload_len(&self) -> usize {
        match self {
            Self::Start(_) => payload::start::LEN,
            Self::Checkpoint(_) => payload::checkpoint::LEN,
            Self::Event(_) => payload::event::LEN,
            Self::End(_) => payload::end::LEN,
            Self::Restate(_) => payload::restate::LEN,
            Self::Part(_) => payload::part::LEN,
            Self::Pause(_) => payload::pause::LEN,
            Self::ExposureState(_) => payload::exposure_state::LEN,
            Self::Unmonitored(_) => payload::unmonitored::LEN,
            Self::CuringState(_) => payload::curing_state::LEN,
        }
    }

    /// The session this body belongs to.
    #[must_use]
    pub const fn session(&self) -> SessionId {
        match self {
            Self::Start(s) => s.session,
            Self::Checkpoint(c) => c.session,
            Self::Event(e) => e.session,
            Self::End(e) => e.session,
            Self::Restate(o) => o.start.session,
            Self::Part(p) => p.session,
            Self::Pause(p) => p.session,
            Self::ExposureState(x) => x.session,
            Self::Unmonitored(u) => u.session,
            Self::CuringState(c) => c.session,
        }
    }
}
