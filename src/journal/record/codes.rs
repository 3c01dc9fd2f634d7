//! Event and outcome codes: what an event record reports ([`EventCode`], with its fault
//! and warning groups [`FaultCode`] and [`WarningCode`]) and how a session ended
//! ([`SessionOutcome`]). Each is a `u16` on flash; codes this version does not name are kept
//! as `Other` so nothing read is lost.

use crate::control::curing::{CuringFault, StopReason};
use crate::control::session::{Fault, PauseCause};

/// Fault reasons as stored in an event code (`0x01NN`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FaultCode {
    /// Too many saturated readings (1).
    Saturated,
    /// Bad ADC code or unknown range (2).
    BadCode,
    /// Time went backwards (3).
    TimeBackwards,
    /// Sampling gap longer than allowed (4); the event detail is the gap in ticks.
    Gap,
    /// An output pin could not be written (5).
    Output,
    /// The sensor or its bus failed (6).
    Sensor,
    /// The firmware aborted the run (7).
    Aborted,
    /// Storage failed during a checkpoint (8).
    Storage,
    /// A plausibility check failed (9); the event detail names the check
    /// ([`crate::control::plausibility::Implausible::code`]).
    Implausible,
    /// The interlock input could not be read (10).
    InterlockPin,
    /// Format 1.1: the light did not go off after an off command (stuck shutter, driver or
    /// interlock not cutting the light) (`0x20`).
    LightNotOff,
    /// Format 1.1: irradiance below the curing window for longer than its hold-off
    /// (incomplete-cure risk) (`0x21`).
    IrradianceLow,
    /// Format 1.1: irradiance above the curing window for longer than its hold-off
    /// (substrate-damage risk) (`0x22`).
    IrradianceHigh,
    /// Format 1.1: the dose reached target + tolerance (curing) (`0x23`).
    Overexposure,
    /// A reason code this version does not name (1..=255 other than the above; 0 reserved).
    Other(u8),
}

impl FaultCode {
    /// The stored reason byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Saturated => 1,
            Self::BadCode => 2,
            Self::TimeBackwards => 3,
            Self::Gap => 4,
            Self::Output => 5,
            Self::Sensor => 6,
            Self::Aborted => 7,
            Self::Storage => 8,
            Self::Implausible => 9,
            Self::InterlockPin => 10,
            Self::LightNotOff => 0x20,
            Self::IrradianceLow => 0x21,
            Self::IrradianceHigh => 0x22,
            Self::Overexposure => 0x23,
            Self::Other(c) => c,
        }
    }
    /// The fault reason of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::Saturated,
            2 => Self::BadCode,
            3 => Self::TimeBackwards,
            4 => Self::Gap,
            5 => Self::Output,
            6 => Self::Sensor,
            7 => Self::Aborted,
            8 => Self::Storage,
            9 => Self::Implausible,
            10 => Self::InterlockPin,
            0x20 => Self::LightNotOff,
            0x21 => Self::IrradianceLow,
            0x22 => Self::IrradianceHigh,
            0x23 => Self::Overexposure,
            c => Self::Other(c),
        }
    }
    /// The code and event detail of a curing fault (the gap length for a gap). Every
    /// [`CuringFault`] has its own code.
    #[must_use]
    pub const fn from_curing_fault(f: CuringFault) -> (Self, u32) {
        match f {
            CuringFault::IrradianceLow => (Self::IrradianceLow, 0),
            CuringFault::IrradianceHigh => (Self::IrradianceHigh, 0),
            CuringFault::Overexposure => (Self::Overexposure, 0),
            CuringFault::LightNotOff => (Self::LightNotOff, 0),
            CuringFault::InterlockPin => (Self::InterlockPin, 0),
            CuringFault::Output => (Self::Output, 0),
            CuringFault::Saturated => (Self::Saturated, 0),
            CuringFault::BadCode => (Self::BadCode, 0),
            CuringFault::TimeBackwards => (Self::TimeBackwards, 0),
            CuringFault::Gap { ticks } => (Self::Gap, ticks),
            CuringFault::Sensor => (Self::Sensor, 0),
            CuringFault::Aborted => (Self::Aborted, 0),
        }
    }
    /// The curing fault of a stored code (`detail`: the gap length for [`FaultCode::Gap`]);
    /// `None` for a code that is not a curing fault.
    #[must_use]
    pub const fn to_curing_fault(self, detail: u32) -> Option<CuringFault> {
        Some(match self {
            Self::IrradianceLow => CuringFault::IrradianceLow,
            Self::IrradianceHigh => CuringFault::IrradianceHigh,
            Self::Overexposure => CuringFault::Overexposure,
            Self::LightNotOff => CuringFault::LightNotOff,
            Self::InterlockPin => CuringFault::InterlockPin,
            Self::Output => CuringFault::Output,
            Self::Saturated => CuringFault::Saturated,
            Self::BadCode => CuringFault::BadCode,
            Self::TimeBackwards => CuringFault::TimeBackwards,
            Self::Gap => CuringFault::Gap { ticks: detail },
            Self::Sensor => CuringFault::Sensor,
            Self::Aborted => CuringFault::Aborted,
            Self::Storage | Self::Implausible | Self::Other(_) => return None,
        })
    }
    /// The code and event detail of a session fault (the gap length for a gap).
    #[must_use]
    pub const fn from_fault(f: Fault) -> (Self, u32) {
        match f {
            Fault::Saturated => (Self::Saturated, 0),
            Fault::BadCode => (Self::BadCode, 0),
            Fault::TimeBackwards => (Self::TimeBackwards, 0),
            Fault::Gap { ticks } => (Self::Gap, ticks),
            Fault::Output => (Self::Output, 0),
            Fault::Sensor => (Self::Sensor, 0),
            Fault::Aborted => (Self::Aborted, 0),
            Fault::Implausible(i) => (Self::Implausible, i.code()),
            Fault::InterlockPin => (Self::InterlockPin, 0),
        }
    }
}

/// Warning reasons as stored in an event code (`0x03NN`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WarningCode {
    /// Irradiance below the configured window (1).
    IrradianceLow,
    /// Irradiance above the configured window (2).
    IrradianceHigh,
    /// Lamp output has fallen (ageing) (3).
    LampAgeing,
    /// Calibration is due or expired (4).
    CalibrationDue,
    /// The dose approaches a limit (5).
    DoseNearLimit,
    /// A reason code this version does not name.
    Other(u8),
}

impl WarningCode {
    /// The stored reason byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::IrradianceLow => 1,
            Self::IrradianceHigh => 2,
            Self::LampAgeing => 3,
            Self::CalibrationDue => 4,
            Self::DoseNearLimit => 5,
            Self::Other(c) => c,
        }
    }
    /// The warning reason of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::IrradianceLow,
            2 => Self::IrradianceHigh,
            3 => Self::LampAgeing,
            4 => Self::CalibrationDue,
            5 => Self::DoseNearLimit,
            c => Self::Other(c),
        }
    }
}

/// What an event record reports. Stored as a `u16`: the high byte is the group, the low byte
/// the reason. New codes may be added in a minor version; an older reader shows them as
/// [`EventCode::Other`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum EventCode {
    /// The dose target was reached; the source was switched off (`0x0001`).
    TargetReached,
    /// The dose passed target + tolerance (`0x0002`).
    Overexposed,
    /// The session was resumed after a reset; the event dose is the recovered bound
    /// (`0x0003`).
    Resumed,
    /// A fault drove the safe state (`0x01NN`).
    Fault(FaultCode),
    /// The interlock opened; exposure paused (`0x0201`).
    InterlockOpened,
    /// The interlock closed again (`0x0202`).
    InterlockClosed,
    /// A warning (`0x03NN`).
    Warning(WarningCode),
    /// Format 1.1: the session was paused by a command (`0x0401`); the event dose is the dose
    /// at the pause. Its end is a pause record ([`super::PauseRecord`]).
    PausedByCommand,
    /// Format 1.1: the session was paused because the interlock opened (`0x0402`).
    PausedByInterlock,
    /// Format 1.1: a dose milestone was reached (`0x0410`); the detail is its index from 0.
    Milestone,
    /// Any other code.
    Other(u16),
}

impl EventCode {
    /// The stored `u16`.
    #[must_use]
    pub const fn code(self) -> u16 {
        match self {
            Self::TargetReached => 0x0001,
            Self::Overexposed => 0x0002,
            Self::Resumed => 0x0003,
            Self::Fault(f) => 0x0100 | f.code() as u16,
            Self::InterlockOpened => 0x0201,
            Self::InterlockClosed => 0x0202,
            Self::Warning(w) => 0x0300 | w.code() as u16,
            Self::PausedByCommand => 0x0401,
            Self::PausedByInterlock => 0x0402,
            Self::Milestone => 0x0410,
            Self::Other(c) => c,
        }
    }
    /// The event of a stored `u16` (reason byte 0 in the fault and warning groups is
    /// [`EventCode::Other`]).
    #[must_use]
    pub const fn from_code(c: u16) -> Self {
        let group = (c >> 8) as u8;
        let reason = (c & 0xFF) as u8;
        match (group, reason) {
            (0, 1) => Self::TargetReached,
            (0, 2) => Self::Overexposed,
            (0, 3) => Self::Resumed,
            (1, r) if r != 0 => Self::Fault(FaultCode::from_code(r)),
            (2, 1) => Self::InterlockOpened,
            (2, 2) => Self::InterlockClosed,
            (3, r) if r != 0 => Self::Warning(WarningCode::from_code(r)),
            (4, 0x01) => Self::PausedByCommand,
            (4, 0x02) => Self::PausedByInterlock,
            (4, 0x10) => Self::Milestone,
            _ => Self::Other(c),
        }
    }
}

/// How a session ended. Stored as a `u16`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SessionOutcome {
    /// The target was met (`0x0001`).
    TargetMet,
    /// The dose passed target + tolerance (`0x0002`).
    Overexposed,
    /// The operator or firmware stopped the session before the target (`0x0003`).
    Aborted,
    /// A recovered session was not resumed (configuration changed, operator choice) (`0x0004`).
    Abandoned,
    /// A fault ended the session (`0x01NN`).
    Faulted(FaultCode),
    /// Any other code.
    Other(u16),
}

impl SessionOutcome {
    /// The stored `u16`.
    #[must_use]
    pub const fn code(self) -> u16 {
        match self {
            Self::TargetMet => 0x0001,
            Self::Overexposed => 0x0002,
            Self::Aborted => 0x0003,
            Self::Abandoned => 0x0004,
            Self::Faulted(f) => 0x0100 | f.code() as u16,
            Self::Other(c) => c,
        }
    }
    /// The outcome of a stored `u16`.
    #[must_use]
    pub const fn from_code(c: u16) -> Self {
        let group = (c >> 8) as u8;
        let reason = (c & 0xFF) as u8;
        match (group, reason) {
            (0, 1) => Self::TargetMet,
            (0, 2) => Self::Overexposed,
            (0, 3) => Self::Aborted,
            (0, 4) => Self::Abandoned,
            (1, r) if r != 0 => Self::Faulted(FaultCode::from_code(r)),
            _ => Self::Other(c),
        }
    }
}

/// Why the light was commanded off for a curing part, as stored in a part record (`u8`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StopCode {
    /// The (anticipated) target, decided on a reading (1).
    Target,
    /// The (anticipated) target, on the timer compare (2).
    TargetTimer,
    /// A fault (3); the record's stop fault names it.
    Fault,
    /// The guard was opened and the part finished without resuming (4).
    Paused,
    /// The part was finished while still exposing (5).
    Ended,
    /// A code this version does not name.
    Other(u8),
}

impl StopCode {
    /// The stored byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Target => 1,
            Self::TargetTimer => 2,
            Self::Fault => 3,
            Self::Paused => 4,
            Self::Ended => 5,
            Self::Other(c) => c,
        }
    }
    /// The stop code of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::Target,
            2 => Self::TargetTimer,
            3 => Self::Fault,
            4 => Self::Paused,
            5 => Self::Ended,
            c => Self::Other(c),
        }
    }
    /// The stop code and, for a fault, its fault code.
    #[must_use]
    pub const fn from_reason(r: StopReason) -> (Self, Option<FaultCode>) {
        match r {
            StopReason::Target => (Self::Target, None),
            StopReason::TargetTimer => (Self::TargetTimer, None),
            StopReason::Fault(f) => (Self::Fault, Some(FaultCode::from_curing_fault(f).0)),
            StopReason::Paused => (Self::Paused, None),
            StopReason::Ended => (Self::Ended, None),
        }
    }
}

/// Why a session paused, as stored in a pause record (`u8`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PauseCode {
    /// A pause command (1).
    Command,
    /// The interlock opened (2).
    Interlock,
    /// A code this version does not name.
    Other(u8),
}

impl PauseCode {
    /// The stored byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Command => 1,
            Self::Interlock => 2,
            Self::Other(c) => c,
        }
    }
    /// The pause cause of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::Command,
            2 => Self::Interlock,
            c => Self::Other(c),
        }
    }
    /// The stored cause of a session's pause.
    #[must_use]
    pub const fn from_cause(c: PauseCause) -> Self {
        match c {
            PauseCause::Command => Self::Command,
            PauseCause::Interlock => Self::Interlock,
        }
    }
}

/// The curing fault kinds by bit of a part record's fault set
/// ([`CuringFault::kind_index`]): bit `i` is `CURING_FAULT_BITS[i]`.
pub const CURING_FAULT_BITS: [FaultCode; 12] = [
    FaultCode::IrradianceLow,
    FaultCode::IrradianceHigh,
    FaultCode::Overexposure,
    FaultCode::LightNotOff,
    FaultCode::InterlockPin,
    FaultCode::Output,
    FaultCode::Saturated,
    FaultCode::BadCode,
    FaultCode::TimeBackwards,
    FaultCode::Gap,
    FaultCode::Sensor,
    FaultCode::Aborted,
];
