//! Record kinds as value types: the payload of each kind ([`SessionStart`], [`Checkpoint`],
//! [`Event`], [`SessionEnd`], the restated [`OpenSession`]) and [`Body`], the payload of any
//! record. Encoding and decoding live in the codec.

use crate::acquire::reading::Ticks;

#[cfg(doc)]
use super::codes::FaultCode;
use super::codes::{EventCode, SessionOutcome};
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
        }
    }
}
