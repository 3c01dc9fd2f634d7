//! Phases, events, faults and outcomes of the curing controller.

use core::ops::{BitOr, BitOrAssign};

use crate::acquire::reading::Ticks;
use crate::frontend::CodeFault;

use super::*;

/// Why a part went into the safe state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringFault {
    /// Irradiance below the window minimum for longer than the hold-off: incomplete-cure risk.
    IrradianceLow,
    /// Irradiance above the window maximum for longer than the hold-off: substrate-damage risk.
    IrradianceHigh,
    /// The dose reached target + tolerance.
    Overexposure,
    /// The light did not go off within the lag + margin after an off command (stuck shutter,
    /// driver not switching off, interlock not cutting the light), or came back later.
    LightNotOff,
    /// The interlock input could not be read.
    InterlockPin,
    /// An output pin could not be written.
    Output,
    /// Too many consecutive saturated readings: the light is above what the meter measures.
    Saturated,
    /// An ADC code outside the converter's range, or an unknown amplifier range.
    BadCode,
    /// A timestamp went backwards.
    TimeBackwards,
    /// No reading for longer than the configured maximum gap; the gap is not integrated.
    Gap {
        /// Length of the gap, ticks.
        ticks: u32,
    },
    /// The ADC (or its bus) reported an error to the caller.
    Sensor,
    /// The firmware aborted the part.
    Aborted,
}

impl CuringFault {
    /// Whether the fault makes the measured dose or irradiance doubtful (such parts are left
    /// out of the lamp trend).
    #[must_use]
    pub const fn is_measurement_fault(self) -> bool {
        matches!(
            self,
            Self::Saturated | Self::BadCode | Self::TimeBackwards | Self::Gap { .. } | Self::Sensor
        )
    }

    /// The index of this fault's kind, 0 ..= 11, in the order the variants are declared
    /// (`IrradianceLow` 0, `IrradianceHigh` 1, `Overexposure` 2, `LightNotOff` 3,
    /// `InterlockPin` 4, `Output` 5, `Saturated` 6, `BadCode` 7, `TimeBackwards` 8, `Gap` 9,
    /// `Sensor` 10, `Aborted` 11): the bit of [`PartRecord::fault_kinds`].
    #[must_use]
    pub const fn kind_index(self) -> u32 {
        match self {
            Self::IrradianceLow => 0,
            Self::IrradianceHigh => 1,
            Self::Overexposure => 2,
            Self::LightNotOff => 3,
            Self::InterlockPin => 4,
            Self::Output => 5,
            Self::Saturated => 6,
            Self::BadCode => 7,
            Self::TimeBackwards => 8,
            Self::Gap { .. } => 9,
            Self::Sensor => 10,
            Self::Aborted => 11,
        }
    }

    pub(super) const fn kind_bit(self) -> u16 {
        1 << self.kind_index()
    }
}

impl core::fmt::Display for CuringFault {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::IrradianceLow => f.write_str("irradiance below minimum (incomplete cure risk)"),
            Self::IrradianceHigh => f.write_str("irradiance above maximum (substrate damage risk)"),
            Self::Overexposure => f.write_str("dose past target + tolerance"),
            Self::LightNotOff => f.write_str("light not off after the stop (stuck shutter)"),
            Self::InterlockPin => f.write_str("interlock input could not be read"),
            Self::Output => f.write_str("output pin could not be written"),
            Self::Saturated => f.write_str("meter saturated"),
            Self::BadCode => f.write_str("bad ADC code or range"),
            Self::TimeBackwards => f.write_str("timestamp went backwards"),
            Self::Gap { ticks } => write!(f, "no reading for {ticks} ticks"),
            Self::Sensor => f.write_str("sensor error"),
            Self::Aborted => f.write_str("aborted"),
        }
    }
}

/// Why the light was commanded off for the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StopReason {
    /// The (anticipated) target, decided on a reading.
    Target,
    /// The (anticipated) target, on the firmware's timer compare at [`CuringController::stop_due`].
    TargetTimer,
    /// A fault.
    Fault(CuringFault),
    /// The guard was opened and the part was finished without resuming.
    Paused,
    /// [`CuringController::finish`] was called while exposing.
    Ended,
}

/// The phase of the controller.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringPhase {
    /// No part. Enable inactive. Default.
    #[default]
    Idle,
    /// Enable active, dose accumulating.
    Exposing,
    /// The guard opened: enable inactive, waiting for an explicit resume. Dose still counts
    /// (and is reported separately).
    Paused,
    /// The stop was issued; waiting for the light to fall below the light-off limit.
    Stopping,
    /// The light is off after the stop; the part can be finished.
    Complete,
    /// A fault: enable inactive, alarm active (latched). Dose still counts.
    Faulted(CuringFault),
}

impl CuringPhase {
    /// Whether the enable output is active in this phase.
    #[must_use]
    pub const fn is_exposing(self) -> bool {
        matches!(self, Self::Exposing)
    }
}

/// A set of events (one bit each). Returned by every call that can raise them; the record
/// keeps the union and the count for the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Events(pub u16);

impl Events {
    /// No event.
    pub const NONE: Self = Self(0);
    /// A part was started.
    pub const STARTED: Self = Self(1 << 0);
    /// The stop command was issued (anticipated target).
    pub const STOP_ISSUED: Self = Self(1 << 1);
    /// The measured dose reached the target.
    pub const TARGET_REACHED: Self = Self(1 << 2);
    /// The light fell below the light-off limit after an off command.
    pub const LIGHT_OFF: Self = Self(1 << 3);
    /// The interlock input went to "open".
    pub const INTERLOCK_OPENED: Self = Self(1 << 4);
    /// The interlock input went to "closed" (this never resumes by itself).
    pub const INTERLOCK_CLOSED: Self = Self(1 << 5);
    /// Exposure paused (guard opened while exposing).
    pub const PAUSED: Self = Self(1 << 6);
    /// Exposure resumed by an explicit call.
    pub const RESUMED: Self = Self(1 << 7);
    /// The warm-up ended; the irradiance window applies.
    pub const WARM_UP_DONE: Self = Self(1 << 8);
    /// The dose reached target + tolerance (alarm output).
    pub const OVEREXPOSED: Self = Self(1 << 9);
    /// The light did not go off after an off command (alarm output).
    pub const LIGHT_NOT_OFF: Self = Self(1 << 10);
    /// A fault of a kind not seen before in this part.
    pub const FAULT: Self = Self(1 << 11);
    /// The lamp's mean irradiance is below the maintenance fraction of its reference.
    pub const LAMP_LOW: Self = Self(1 << 12);

    /// Whether every event of `other` is in this set.
    #[must_use]
    pub const fn contains(self, other: Self) -> bool {
        self.0 & other.0 == other.0 && other.0 != 0
    }
    /// Whether the set is empty.
    #[must_use]
    pub const fn is_empty(self) -> bool {
        self.0 == 0
    }
    /// Number of events in the set.
    #[must_use]
    pub const fn count(self) -> u32 {
        self.0.count_ones()
    }
}

impl BitOr for Events {
    type Output = Self;
    fn bitor(self, rhs: Self) -> Self {
        Self(self.0 | rhs.0)
    }
}

impl BitOrAssign for Events {
    fn bitor_assign(&mut self, rhs: Self) {
        self.0 |= rhs.0;
    }
}

/// What happened to a reading.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SampleUse {
    /// Integrated.
    Integrated,
    /// Same timestamp as the previous reading; ignored.
    Repeated,
    /// A saturated code within the tolerated run; not integrated.
    Unusable(CodeFault),
    /// The reading caused this fault and was not integrated (after a gap the integration
    /// restarts from it).
    Faulted(CuringFault),
    /// No part is active; ignored (the interlock is not read).
    NoPart,
}

/// Result of [`CuringController::on_reading`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Update {
    /// What happened to the reading.
    pub sample: SampleUse,
    /// Phase after the reading.
    pub phase: CuringPhase,
    /// Events raised by the reading.
    pub events: Events,
}

/// Result of [`CuringController::on_stop_timer`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TimerOutcome {
    /// The stop was issued.
    Stopped,
    /// Too early for the latest irradiance: arm the compare again at this tick.
    Rearm(Ticks),
    /// No estimate (no irradiance, or the stop is further away than 2³¹ − 1 ticks); wait for
    /// readings.
    NoEstimate,
    /// Not exposing; nothing done.
    NotExposing,
}

/// Error of a controller operation. `EO` is the output pins' error
/// ([`PinError`](crate::control::PinError): which pin, with its own error type), `EI` the
/// interlock input's.
///
/// After `Output` or `Interlock` the controller is faulted, the enable output was driven
/// inactive as far as possible and the alarm is latched.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringError<EO, EI> {
    /// Invalid configuration (only from [`CuringController::new`]).
    Config(CuringConfigError),
    /// An output pin could not be written (which one, and its error).
    Output(EO),
    /// The interlock input could not be read.
    Interlock(EI),
    /// The command was refused; nothing changed.
    Refused(Refusal),
}

impl<EO: core::fmt::Debug, EI: core::fmt::Debug> core::fmt::Display for CuringError<EO, EI> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "curing configuration: {e}"),
            Self::Output(e) => write!(f, "output pin error: {e:?}"),
            Self::Interlock(e) => write!(f, "interlock input error: {e:?}"),
            Self::Refused(r) => write!(f, "command refused: {r:?}"),
        }
    }
}

impl<EO: core::fmt::Debug, EI: core::fmt::Debug> core::error::Error for CuringError<EO, EI> {}
