//! What a session reports: its phase, the outcome of each reading, faults, refusals, errors
//! and the progress read-out.

use embedded_hal::digital::ErrorType;

#[cfg(doc)]
use super::Session;
use super::SessionConfigError;
use crate::acquire::reading::Ticks;
use crate::control::{InterlockInput, PinError, Refusal};
use crate::frontend::CodeFault;
use crate::quantity::{
    Irradiance, PhotonAmount, PhotonExposure, PhotonIrradiance, RadiantExposure, Seconds,
};

/// Why a session entered the safe state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Fault {
    /// Too many consecutive saturated readings: the light is above what the meter can measure.
    Saturated,
    /// An ADC code outside the converter's range, or a reading naming an unknown range.
    BadCode,
    /// The timestamp went backwards.
    TimeBackwards,
    /// No sample for longer than the configured maximum gap.
    Gap {
        /// Length of the gap, ticks.
        ticks: u32,
    },
    /// Writing an output pin failed.
    Output,
    /// The ADC (or its bus) reported an error to the caller.
    Sensor,
    /// A plausibility check failed (see [`crate::control::plausibility`]).
    Implausible(crate::control::plausibility::Implausible),
    /// The firmware aborted the run.
    Aborted,
    /// The interlock input could not be read (see [`Session::with_interlock`]).
    InterlockPin,
}

/// Why a session is paused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PauseCause {
    /// [`Session::pause`] was called.
    Command,
    /// The interlock opened while exposing.
    Interlock,
}

/// The phase of a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Phase {
    /// Configured, enable output inactive, not yet started.
    Ready,
    /// Enable output active, dose accumulating towards the target.
    Exposing,
    /// Paused: enable output inactive, dose still counted (a leak); why:
    /// [`Session::pause_cause`]. [`Session::resume`] returns to `Exposing`. (A unit variant,
    /// so the phase stays a plain discriminant on the per-sample path.)
    Paused,
    /// The target was reached; enable output inactive. Dose still counts (light that still
    /// arrives is reported).
    TargetMet,
    /// The dose rose past target + tolerance; enable inactive, alarm active. Terminal.
    Overexposed,
    /// A fault drove the safe state: enable inactive, alarm active. Terminal.
    Faulted(Fault),
}

impl Phase {
    /// Whether the enable output is active in this phase.
    #[must_use]
    pub const fn is_exposing(self) -> bool {
        matches!(self, Self::Exposing)
    }
    /// Whether this phase ends the session (nothing but a new session leaves it).
    #[must_use]
    pub const fn is_terminal(self) -> bool {
        matches!(self, Self::Overexposed | Self::Faulted(_))
    }
}

/// What a reading did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Outcome {
    /// Integrated; the phase before and after.
    Integrated {
        /// Phase before the reading.
        before: Phase,
        /// Phase after the reading.
        after: Phase,
        /// The milestone this reading reached (its index from 0 in the series set by
        /// [`Session::set_milestones`]); when one reading passes several, the last of them.
        milestone: Option<u16>,
    },
    /// Not integrated and not a fault (a repeated timestamp, a tolerated saturated code, or a
    /// reading after the session ended).
    Ignored(Ignored),
    /// The reading caused a fault; the safe state is set.
    Faulted(Fault),
}

/// Why a reading was ignored.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Ignored {
    /// Same timestamp as the previous reading.
    Repeated,
    /// A saturated code within the tolerated run.
    Unusable(CodeFault),
    /// The session is in a terminal phase or not started.
    NotRunning,
}

/// Why [`Session::new`] failed: the configuration, or an output that could not be set
/// inactive. `EE` and `AE` are the enable and alarm pins' error types.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SessionError<EE, AE> {
    /// The configuration was rejected; no pin was written.
    Config(SessionConfigError),
    /// An output could not be set inactive.
    Pin(PinError<EE, AE>),
}

impl<EE, AE> From<SessionConfigError> for SessionError<EE, AE> {
    fn from(e: SessionConfigError) -> Self {
        Self::Config(e)
    }
}

impl<EE: core::fmt::Debug, AE: core::fmt::Debug> core::fmt::Display for SessionError<EE, AE> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "session configuration: {e}"),
            Self::Pin(e) => write!(f, "session outputs: {e}"),
        }
    }
}

impl<EE: core::fmt::Debug, AE: core::fmt::Debug> core::error::Error for SessionError<EE, AE> {}

/// Why [`Session::pause`], [`Session::resume`] or [`Session::poll_interlock`] did not do what
/// was asked. `EE`, `AE`, `IE`: the enable, alarm and interlock error types.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CommandError<EE, AE, IE> {
    /// Refused; nothing changed.
    Refused(Refusal),
    /// An output could not be written; the session is faulted.
    Pin(PinError<EE, AE>),
    /// The interlock could not be read; the session is faulted (safe state).
    Interlock(IE),
}

impl<EE: core::fmt::Debug, AE: core::fmt::Debug, IE: core::fmt::Debug> core::fmt::Display
    for CommandError<EE, AE, IE>
{
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Refused(r) => write!(f, "{r}"),
            Self::Pin(e) => write!(f, "{e}"),
            Self::Interlock(e) => write!(f, "interlock could not be read (safe state): {e:?}"),
        }
    }
}

impl<EE: core::fmt::Debug, AE: core::fmt::Debug, IE: core::fmt::Debug> core::error::Error
    for CommandError<EE, AE, IE>
{
}

impl<EE, AE, IE> From<PinError<EE, AE>> for CommandError<EE, AE, IE> {
    fn from(e: PinError<EE, AE>) -> Self {
        Self::Pin(e)
    }
}

/// The command error of a session with enable `EN`, alarm `AL` and interlock `IL`.
pub type SessionCommandError<EN, AL, IL> =
    CommandError<<EN as ErrorType>::Error, <AL as ErrorType>::Error, <IL as InterlockInput>::Error>;

/// One completed pause, returned by [`Session::resume`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PauseSummary {
    /// Why it paused.
    pub cause: PauseCause,
    /// When it paused (the `now` given to [`Session::pause`], or the reading that found the
    /// interlock open).
    pub started: Ticks,
    /// Dark (paused) time, ticks: the `now` given to resume minus `started`, wrapping.
    pub dark_ticks: u32,
    /// Dark time in seconds at the meter's tick rate.
    pub dark: Seconds,
    /// Dose received when the pause began (including any preload).
    pub dose_at_pause: RadiantExposure,
    /// Dose received while paused (light that leaked in); ≥ 0.
    pub leak: RadiantExposure,
}

/// The pin error of a session with enable pin `EN` and alarm pin `AL`.
pub type SessionPinError<EN, AL> = PinError<<EN as ErrorType>::Error, <AL as ErrorType>::Error>;

/// Dose read-out: every unit, the remaining dose and the time to target.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Progress {
    /// Radiant exposure received (measured).
    pub exposure: RadiantExposure,
    /// Conservative charge for gaps in the readings (max(before, after) × gap), not part of
    /// `exposure`: at most this much more may have arrived unmeasured. See
    /// [`crate::time`].
    pub gap_charge: RadiantExposure,
    /// Photon exposure received.
    pub photon_exposure: PhotonExposure,
    /// Photons received by the illuminated area, if configured.
    pub photons: Option<PhotonAmount>,
    /// Target as radiant exposure.
    pub target: RadiantExposure,
    /// Target minus received (negative after the target).
    pub remaining: RadiantExposure,
    /// Received ÷ target.
    pub fraction: f64,
    /// Irradiance of the last integrated reading.
    pub irradiance: Irradiance,
    /// Photon irradiance of the last integrated reading.
    pub photon_irradiance: PhotonIrradiance,
    /// Remaining ÷ current irradiance, while exposing and the irradiance is > 0.
    pub time_to_target: Option<Seconds>,
    /// Completed pauses so far.
    pub pauses: u16,
    /// Dark time of the completed pauses (from each `pause` to its `resume`).
    pub dark_time: Seconds,
    /// Dose received while paused, completed pauses and the current one; ≥ 0.
    pub leak: RadiantExposure,
    /// Milestones reached so far.
    pub milestones_reached: u16,
}
