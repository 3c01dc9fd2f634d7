//! Session: a dose target, the source-enable and alarm outputs, and the phase of a run.
//!
//! A [`Session`] owns the [`Meter`], an [`Integrator`] and two embedded-hal output pins:
//!
//! - **enable** — drives the lamp driver or shutter. Active only while [`Phase::Exposing`];
//!   driven inactive at the target, on overexposure and on every fault (the safe state);
//! - **alarm** — raised when the dose keeps rising past target + tolerance after the enable
//!   output went inactive (the shutter did not close, the driver did not switch off), and on
//!   faults.
//!
//! ```text
//!  Ready ──start()──▶ Exposing ──dose ≥ target──▶ TargetMet ──dose ≥ target+tol──▶ Overexposed
//!                        │                            │
//!                        └──────── any fault ─────────┴──────────────▶ Faulted(reason)
//! ```
//!
//! The sample that first reaches the target stops the run (`TargetMet`), even when its last
//! interval also passed target + tolerance: the light was commanded on until then. After the
//! stop, a sample that is still past target + tolerance **and** still measures light (a net
//! code above zero) is an overexposure: the shutter did not close. With a tolerance of 0, any
//! light measured after the stop sample is an overexposure.
//!
//! Feed every reading to [`Session::on_reading`]; it returns the phase before and after.
//! [`Session::progress`] gives the dose in every unit, the remaining dose and the estimated
//! time to target (computed on demand, off the per-sample path).
//!
//! Readings that cannot be used are reported, never integrated: a repeated timestamp is
//! ignored ([`Outcome::Ignored`]); a saturated or out-of-range code, time going backwards or a
//! gap longer than the configured maximum is a fault (unless the configuration tolerates a
//! bounded run of saturated codes while an autoranger switches range).
//!
//! The session is **not** a safety device; see SAFETY.md.

use embedded_hal::digital::{ErrorType, OutputPin};

use crate::control::drive;

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::dose::{Integrator, Rounding, SampleError, ThresholdId};
use crate::frontend::{CodeFault, Sample};
use crate::irradiance::Meter;
use crate::quantity::{
    Irradiance, PhotonAmount, PhotonExposure, PhotonIrradiance, RadiantExposure, Seconds,
};

/// A dose in any of the units the meter supports.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DoseAmount {
    /// Radiant exposure (J/m², mJ/cm²).
    RadiantExposure(RadiantExposure),
    /// Photon exposure (mol/m²).
    PhotonExposure(PhotonExposure),
    /// Photons received by the illuminated sample area (mol); needs a sample area.
    Photons(PhotonAmount),
}

pub use crate::control::ActiveLevel;

/// Session configuration. Validated once by [`Session::new`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionConfig {
    /// The dose at which the enable output goes inactive. Valid: finite, > 0.
    pub target: DoseAmount,
    /// How far past the target the dose may rise before it is an overexposure. Valid: finite,
    /// ≥ 0, in any dose unit.
    pub tolerance: DoseAmount,
    /// Longest allowed interval between two samples, ticks. Valid: 1 ..= 2³¹ − 1.
    pub max_gap_ticks: u32,
    /// Consecutive unusable (saturated) readings tolerated before a fault, for example while
    /// an autoranger settles. 0 (the default) faults on the first one.
    pub max_unusable_run: u16,
    /// Active level of the enable output.
    pub enable_level: ActiveLevel,
    /// Active level of the alarm output.
    pub alarm_level: ActiveLevel,
}

/// Why a session configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SessionConfigError {
    /// The target is not finite or ≤ 0.
    Target,
    /// The tolerance is not finite or < 0.
    Tolerance,
    /// A dose in photons (mol) needs the meter's illuminated sample area.
    SampleAreaRequired,
    /// `max_gap_ticks` is 0 or ≥ 2³¹.
    MaxGap,
}

impl core::fmt::Display for SessionConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Target => "target must be finite and > 0",
            Self::Tolerance => "tolerance must be finite and >= 0",
            Self::SampleAreaRequired => "a dose in photons needs the illuminated sample area",
            Self::MaxGap => "maximum gap must be 1 to 2^31-1 ticks",
        })
    }
}

impl core::error::Error for SessionConfigError {}

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
}

/// The phase of a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Phase {
    /// Configured, enable output inactive, not yet started.
    Ready,
    /// Enable output active, dose accumulating towards the target.
    Exposing,
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

pub use crate::control::PinError;

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
}

/// A dose-controlled exposure. See the [module documentation](self).
#[derive(Debug)]
pub struct Session<EN, AL> {
    meter: Meter,
    integrator: Integrator,
    target: RadiantExposure,
    target_id: ThresholdId,
    over_id: ThresholdId,
    config: SessionConfig,
    phase: Phase,
    unusable_run: u16,
    enable: EN,
    alarm: AL,
}

impl<EN: OutputPin, AL: OutputPin> Session<EN, AL> {
    /// Validate the configuration and set both outputs inactive.
    ///
    /// # Errors
    /// [`SessionError::Config`] for an invalid configuration (no pin written);
    /// [`SessionError::Pin`] when the outputs could not be set inactive.
    pub fn new(
        meter: Meter,
        config: SessionConfig,
        enable: EN,
        alarm: AL,
    ) -> Result<Self, SessionError<EN::Error, AL::Error>> {
        let target = to_exposure(&meter, config.target)?;
        if !(target.j_per_m2().is_finite() && target.j_per_m2() > 0.0) {
            return Err(SessionConfigError::Target.into());
        }
        let tolerance = to_exposure(&meter, config.tolerance)?;
        if !(tolerance.j_per_m2().is_finite() && tolerance.j_per_m2() >= 0.0) {
            return Err(SessionConfigError::Tolerance.into());
        }
        if config.max_gap_ticks == 0 || config.max_gap_ticks > i32::MAX as u32 {
            return Err(SessionConfigError::MaxGap.into());
        }
        let mut integrator = Integrator::new(&meter, config.max_gap_ticks);
        let target_id = integrator
            .add_threshold(target, Rounding::NotBefore)
            .map_err(|_| SessionConfigError::Target)?;
        let over_id = integrator
            .add_threshold(target + tolerance, Rounding::NotAfter)
            .map_err(|_| SessionConfigError::Tolerance)?;
        let mut s = Self {
            meter,
            integrator,
            target,
            target_id,
            over_id,
            config,
            phase: Phase::Ready,
            unusable_run: 0,
            enable,
            alarm,
        };
        s.write_enable(false).map_err(SessionError::Pin)?;
        s.write_alarm(false).map_err(SessionError::Pin)?;
        Ok(s)
    }

    /// Start exposing: the enable output goes active.
    ///
    /// Does nothing unless the phase is [`Phase::Ready`].
    ///
    /// # Errors
    /// [`PinError`] if the enable output cannot be written (the session is then faulted).
    pub fn start(&mut self) -> Result<Phase, SessionPinError<EN, AL>> {
        if self.phase == Phase::Ready {
            self.phase = Phase::Exposing;
            self.write_enable(true)?;
        }
        Ok(self.phase)
    }

    /// Feed one reading.
    ///
    /// # Errors
    /// [`PinError`] if an output cannot be written (the session is then faulted).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Outcome, SessionPinError<EN, AL>> {
        let net = self.meter.front_end().net_code(reading);
        self.step(reading, net)
    }

    /// Feed one reading whose net code was already computed with this session's meter
    /// ([`FrontEnd::sample`](crate::frontend::FrontEnd::sample)), for a main loop that shares
    /// it with the autoranger and the plausibility checks.
    ///
    /// # Errors
    /// [`PinError`] if an output cannot be written (the session is then faulted).
    pub fn on_sample(&mut self, sample: &Sample) -> Result<Outcome, SessionPinError<EN, AL>> {
        self.step(&sample.reading, sample.net)
    }

    /// One reading and its net code: the body of [`on_reading`](Self::on_reading) and
    /// [`on_sample`](Self::on_sample).
    #[inline(always)]
    fn step(
        &mut self,
        reading: &Reading,
        net: Result<i32, CodeFault>,
    ) -> Result<Outcome, SessionPinError<EN, AL>> {
        let before = self.phase;
        if matches!(before, Phase::Ready) || before.is_terminal() {
            return Ok(Outcome::Ignored(Ignored::NotRunning));
        }
        let net = match net {
            Ok(n) => n,
            Err(f @ (CodeFault::SaturatedHigh | CodeFault::SaturatedLow)) => {
                if self.unusable_run < self.config.max_unusable_run {
                    self.unusable_run = self.unusable_run.saturating_add(1);
                    return Ok(Outcome::Ignored(Ignored::Unusable(f)));
                }
                return self
                    .enter_fault(Fault::Saturated)
                    .map(|()| Outcome::Faulted(Fault::Saturated));
            }
            Err(CodeFault::OutOfRange | CodeFault::UnknownRange) => {
                return self
                    .enter_fault(Fault::BadCode)
                    .map(|()| Outcome::Faulted(Fault::BadCode));
            }
        };
        self.unusable_run = 0;
        let step = match self.integrator.accept(net, reading.range, reading.at) {
            Ok(s) => s,
            Err(SampleError::Repeated) => return Ok(Outcome::Ignored(Ignored::Repeated)),
            Err(e) => {
                let f = match e {
                    SampleError::Backwards { .. } => Fault::TimeBackwards,
                    SampleError::Gap { ticks } => Fault::Gap { ticks },
                    SampleError::Repeated | SampleError::UnknownRange => Fault::BadCode,
                };
                return self.enter_fault(f).map(|()| Outcome::Faulted(f));
            }
        };
        if before == Phase::Exposing {
            // The sample that reaches the target stops the run, even if its last interval
            // also passed target + tolerance (the light was commanded on until now).
            if step.crossed.0 & (self.target_id.bit() | self.over_id.bit()) != 0 {
                self.phase = Phase::TargetMet;
                self.write_enable(false)?;
            }
        } else if step.crossed.contains(self.over_id) && net > 0 {
            // After the stop: still past target + tolerance, and light still arriving.
            self.phase = Phase::Overexposed;
            self.write_enable(false)?;
            self.write_alarm(true)?;
        }
        Ok(Outcome::Integrated {
            before,
            after: self.phase,
        })
    }

    /// Enter the safe state for a reason found outside the session (an ADC bus error, a
    /// watchdog, an operator abort).
    ///
    /// # Errors
    /// [`PinError`] if an output cannot be written.
    pub fn fault(&mut self, reason: Fault) -> Result<(), SessionPinError<EN, AL>> {
        if self.phase.is_terminal() {
            return Ok(());
        }
        self.enter_fault(reason)
    }

    /// Resume from a dose already delivered (the bound recovered from the journal after a
    /// reset, see `journal::checkpoint::resume_session`). Applied only in [`Phase::Ready`],
    /// before [`Session::start`]; returns `false` and changes nothing otherwise.
    pub fn set_preload(&mut self, delivered: RadiantExposure) -> bool {
        if self.phase != Phase::Ready {
            return false;
        }
        self.integrator.set_preload(delivered);
        true
    }

    /// Take a new dark offset for range `r` (after a dark capture). Applied only while the
    /// session is not exposing (before [`Session::start`] or after it ended), so a run is
    /// never corrected with two offsets; returns `false` and changes nothing otherwise, or if
    /// the range does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        if self.phase == Phase::Exposing || self.phase == Phase::TargetMet {
            return false;
        }
        self.meter.front_end_mut().set_dark_offset(r, dark_offset)
    }

    /// The validated configuration.
    #[must_use]
    pub const fn config(&self) -> &SessionConfig {
        &self.config
    }

    /// The current phase.
    #[must_use]
    pub const fn phase(&self) -> Phase {
        self.phase
    }

    /// The meter this session converts with.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// The dose integrator (read-only).
    #[must_use]
    pub const fn integrator(&self) -> &Integrator {
        &self.integrator
    }

    /// The timestamp of the last integrated reading.
    #[must_use]
    pub fn last_at(&self) -> Option<Ticks> {
        self.integrator.last().map(|l| l.at)
    }

    /// Dose in every unit, remaining dose and estimated time to target.
    #[must_use]
    pub fn progress(&self) -> Progress {
        let exposure = self.integrator.exposure();
        let irradiance = self
            .integrator
            .last()
            .map_or(Irradiance::ZERO, |l| self.meter.irradiance(l.net, l.range));
        let remaining = self.target - exposure;
        let time_to_target = if self.phase.is_exposing() && irradiance.w_per_m2() > 0.0 {
            Some(Seconds::from_s(
                remaining.j_per_m2().max(0.0) / irradiance.w_per_m2(),
            ))
        } else {
            None
        };
        Progress {
            exposure,
            gap_charge: self.integrator.gap_charge(),
            photon_exposure: self.meter.photon_exposure(exposure),
            photons: self.meter.photon_amount(exposure),
            target: self.target,
            remaining,
            fraction: exposure.j_per_m2() / self.target.j_per_m2(),
            irradiance,
            photon_irradiance: self.meter.photon_irradiance(irradiance),
            time_to_target,
        }
    }

    /// Give the pins back. The caller is responsible for their state afterwards.
    pub fn release(self) -> (EN, AL) {
        (self.enable, self.alarm)
    }

    fn enter_fault(&mut self, reason: Fault) -> Result<(), SessionPinError<EN, AL>> {
        self.phase = Phase::Faulted(reason);
        // The shared safe-state sequence: enable inactive first, alarm even if that failed.
        let r = crate::control::safe_state(
            &mut self.enable,
            self.config.enable_level,
            &mut self.alarm,
            self.config.alarm_level,
        );
        if r.is_err() {
            self.mark_output_fault();
        }
        r
    }

    /// An output failed: fault, keeping an earlier fault reason if there is one.
    fn mark_output_fault(&mut self) {
        if !matches!(self.phase, Phase::Faulted(_)) {
            self.phase = Phase::Faulted(Fault::Output);
        }
    }

    fn write_enable(&mut self, active: bool) -> Result<(), SessionPinError<EN, AL>> {
        let r = drive(&mut self.enable, self.config.enable_level, active);
        if r.is_err() {
            self.mark_output_fault();
            // Best effort: try inactive once more (a transient bus error on an expander).
            let _ = drive(&mut self.enable, self.config.enable_level, false);
        }
        r.map_err(PinError::Enable)
    }

    fn write_alarm(&mut self, active: bool) -> Result<(), SessionPinError<EN, AL>> {
        let r = drive(&mut self.alarm, self.config.alarm_level, active);
        if r.is_err() {
            self.mark_output_fault();
            let _ = drive(&mut self.enable, self.config.enable_level, false);
        }
        r.map_err(PinError::Alarm)
    }
}

/// Convert a dose in any unit to radiant exposure for this meter.
///
/// # Errors
/// [`SessionConfigError::SampleAreaRequired`] for photons without a sample area.
pub fn to_exposure(meter: &Meter, dose: DoseAmount) -> Result<RadiantExposure, SessionConfigError> {
    let mol_per_j = meter.band().mol_per_j();
    Ok(match dose {
        DoseAmount::RadiantExposure(h) => h,
        DoseAmount::PhotonExposure(p) => RadiantExposure::from_j_per_m2(p.mol_per_m2() / mol_per_j),
        DoseAmount::Photons(n) => {
            let area = meter
                .sample_area()
                .ok_or(SessionConfigError::SampleAreaRequired)?;
            RadiantExposure::from_j_per_m2(n.mol() / (mol_per_j * area.m2()))
        }
    })
}
