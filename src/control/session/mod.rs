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
//!                      │    ▲                         ▲
//!       pause() or door│    │resume() (door closed)   │ dose ≥ target (light leaking in)
//!                      ▼    │                         │
//!                      Paused ─────────────────────────┘
//!         any fault from any non-terminal phase ──────────────────▶ Faulted(reason)
//! ```
//!
//! **Pause and resume.** [`Session::pause`] (an aliquot taken, a lamp check) drives the enable
//! output inactive and enters [`Phase::Paused`]; [`Session::resume`] drives it active again.
//! Integration never stops: light that still arrives while paused (a shutter that leaks, room
//! light through an open port) is counted in the dose, reported as the pause's leak
//! ([`PauseSummary`], [`Progress::leak`]) and can complete the run (TargetMet) on its own.
//!
//! **Interlock.** [`Session::with_interlock`] adds a door or guard input
//! ([`InterlockInput`]): while exposing, an open interlock pauses the run
//! ([`PauseCause::Interlock`]); closing it again does **not** resume — only an explicit
//! [`Session::resume`] does, and only with the interlock closed (the same rule as the curing
//! controller). A failed interlock read drives the safe state ([`Fault::InterlockPin`]).
//! [`Session::new`] has no interlock ([`NoInterlock`], which compiles away).
//!
//! **Milestones.** [`Session::set_milestones`] watches a series of doses below the target
//! (a list, or every step); the reading that reaches one reports it in
//! [`Outcome::Integrated::milestone`]. One integrator threshold is re-armed for the next
//! milestone each time one is reached, so milestones are exact in the integer scale like the
//! target and cost nothing per sample until one is reached.
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

use embedded_hal::digital::OutputPin;

use crate::control::drive;
pub use crate::control::{InterlockInput, InterlockPin, NoInterlock};

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::dose::{Crossed, Integrator, Rounding, SampleError, ThresholdId};
use crate::frontend::{CodeFault, Sample};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

pub use crate::control::{ActiveLevel, PinError, Refusal};

mod config;
mod milestones;
mod state;

pub use config::{to_exposure, DoseAmount, SessionConfig, SessionConfigError};
use milestones::{step_plan, Plan};
pub use milestones::{Milestones, MAX_MILESTONES, MAX_STEP_MILESTONES};
pub use state::{
    CommandError, Fault, Ignored, Outcome, PauseCause, PauseSummary, Phase, Progress,
    SessionCommandError, SessionError, SessionPinError,
};

/// A dose-controlled exposure. See the [module documentation](self).
#[derive(Debug)]
pub struct Session<EN, AL, IL: InterlockInput = NoInterlock> {
    meter: Meter,
    integrator: Integrator,
    target: RadiantExposure,
    target_id: ThresholdId,
    over_id: ThresholdId,
    /// Thresholds whose crossing needs work while exposing or paused: target, target +
    /// tolerance and the armed milestone (one byte, so the steady sample tests one mask).
    watch: u8,
    milestone_id: Option<ThresholdId>,
    plan: Option<Plan>,
    /// Index of the next milestone to reach.
    next_milestone: u32,
    config: SessionConfig,
    phase: Phase,
    unusable_run: u16,
    /// The open pause: when it began and the dose then (J/m²).
    pause_open: Option<(Ticks, f64)>,
    pause_cause: PauseCause,
    /// The armed milestone threshold's bit, 0 when none is armed.
    milestone_bit: u8,
    pauses: u16,
    dark_ticks: u64,
    leak_j_per_m2: f64,
    /// The interlock read error that faulted the session from [`start`](Self::start) or a
    /// reading (those return the fault, not the error); `None` otherwise.
    interlock_error: Option<IL::Error>,
    enable: EN,
    alarm: AL,
    interlock: IL,
}

impl<EN: OutputPin, AL: OutputPin> Session<EN, AL, NoInterlock> {
    /// Validate the configuration and set both outputs inactive. No interlock (see
    /// [`Session::with_interlock`]).
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
        Self::with_interlock(meter, config, enable, alarm, NoInterlock)
    }
}

impl<EN: OutputPin, AL: OutputPin, IL: InterlockInput> Session<EN, AL, IL> {
    /// [`Session::new`] with an interlock (for example [`InterlockPin`]): while exposing, an
    /// open interlock pauses the run; only [`Session::resume`] with the interlock closed
    /// resumes it. The interlock is read at [`start`](Self::start), at every reading while
    /// exposing or paused, at [`resume`](Self::resume) and at
    /// [`poll_interlock`](Self::poll_interlock).
    ///
    /// # Errors
    /// As [`Session::new`].
    pub fn with_interlock(
        meter: Meter,
        config: SessionConfig,
        enable: EN,
        alarm: AL,
        interlock: IL,
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
            watch: target_id.bit() | over_id.bit(),
            milestone_id: None,
            plan: None,
            next_milestone: 0,
            config,
            phase: Phase::Ready,
            unusable_run: 0,
            pause_open: None,
            pause_cause: PauseCause::Command,
            milestone_bit: 0,
            pauses: 0,
            dark_ticks: 0,
            leak_j_per_m2: 0.0,
            interlock_error: None,
            enable,
            alarm,
            interlock,
        };
        s.write_enable(false).map_err(SessionError::Pin)?;
        s.write_alarm(false).map_err(SessionError::Pin)?;
        Ok(s)
    }

    /// Start exposing: the enable output goes active.
    ///
    /// Does nothing unless the phase is [`Phase::Ready`]. With an interlock, an open
    /// interlock leaves the session in `Ready` (returned), and a failed read faults it
    /// (`Faulted(InterlockPin)` returned; the safe state is driven; the read error is kept
    /// for [`interlock_error`](Self::interlock_error)).
    ///
    /// # Errors
    /// [`PinError`] if an output cannot be written (the session is then faulted).
    pub fn start(&mut self) -> Result<Phase, SessionPinError<EN, AL>> {
        if self.phase == Phase::Ready {
            match self.interlock.is_closed() {
                Ok(true) => {}
                Ok(false) => return Ok(self.phase),
                Err(e) => {
                    self.interlock_error = Some(e);
                    self.enter_fault(Fault::InterlockPin)?;
                    return Ok(self.phase);
                }
            }
            self.phase = Phase::Exposing;
            self.write_enable(true)?;
        }
        Ok(self.phase)
    }

    /// Pause the exposure at tick `now`: the enable output goes inactive and the phase is
    /// [`Phase::Paused`] ([`PauseCause::Command`]). Readings keep being integrated; light
    /// that still arrives is reported as the pause's leak.
    ///
    /// # Errors
    /// [`CommandError::Refused`]`(`[`Refusal::NotExposing`]`)` outside `Exposing` (nothing
    /// changed); [`CommandError::Pin`] if the enable output cannot be written (faulted).
    pub fn pause(&mut self, now: Ticks) -> Result<Phase, SessionCommandError<EN, AL, IL>> {
        if self.phase != Phase::Exposing {
            return Err(CommandError::Refused(Refusal::NotExposing));
        }
        self.begin_pause(PauseCause::Command, now)?;
        Ok(self.phase)
    }

    /// Resume a paused exposure at tick `now`: the interlock must read closed; the enable
    /// output goes active again and the phase is [`Phase::Exposing`]. Returns the pause just
    /// ended.
    ///
    /// # Errors
    /// [`CommandError::Refused`] with [`Refusal::NotPaused`] outside `Paused`, or
    /// [`Refusal::InterlockOpen`] (nothing changed); [`CommandError::Interlock`] if the
    /// interlock cannot be read and [`CommandError::Pin`] if an output cannot be written (the
    /// session is then faulted).
    pub fn resume(&mut self, now: Ticks) -> Result<PauseSummary, SessionCommandError<EN, AL, IL>> {
        if self.phase != Phase::Paused {
            return Err(CommandError::Refused(Refusal::NotPaused));
        }
        let cause = self.pause_cause;
        match self.interlock.is_closed() {
            Ok(true) => {}
            Ok(false) => return Err(CommandError::Refused(Refusal::InterlockOpen)),
            Err(e) => {
                self.enter_fault(Fault::InterlockPin)?;
                return Err(CommandError::Interlock(e));
            }
        }
        let summary = self.end_pause(cause, now);
        self.phase = Phase::Exposing;
        self.write_enable(true)?;
        Ok(summary)
    }

    /// Read the interlock outside a reading (from its pin-change interrupt or the main loop)
    /// at tick `now`: an open interlock pauses an exposing run. Returns the phase.
    ///
    /// # Errors
    /// [`CommandError::Interlock`] if the interlock cannot be read (faulted, safe state);
    /// [`CommandError::Pin`] if an output cannot be written.
    pub fn poll_interlock(&mut self, now: Ticks) -> Result<Phase, SessionCommandError<EN, AL, IL>> {
        if !(self.phase == Phase::Exposing || matches!(self.phase, Phase::Paused)) {
            return Ok(self.phase);
        }
        match self.interlock.is_closed() {
            Ok(true) => {}
            Ok(false) => {
                if self.phase == Phase::Exposing {
                    self.begin_pause(PauseCause::Interlock, now)?;
                }
            }
            Err(e) => {
                self.enter_fault(Fault::InterlockPin)?;
                return Err(CommandError::Interlock(e));
            }
        }
        Ok(self.phase)
    }

    /// Watch dose milestones below the target (replacing any earlier series). Only before
    /// [`start`](Self::start).
    ///
    /// # Errors
    /// [`SessionConfigError::NotReady`] after start; [`SessionConfigError::Milestone`],
    /// [`MilestoneOrder`](SessionConfigError::MilestoneOrder),
    /// [`MilestoneBeyondTarget`](SessionConfigError::MilestoneBeyondTarget),
    /// [`TooManyMilestones`](SessionConfigError::TooManyMilestones),
    /// [`SampleAreaRequired`](SessionConfigError::SampleAreaRequired) for bad input. Nothing
    /// changes on an error.
    pub fn set_milestones(&mut self, milestones: Milestones<'_>) -> Result<(), SessionConfigError> {
        if self.phase != Phase::Ready {
            return Err(SessionConfigError::NotReady);
        }
        let target = self.target.j_per_m2();
        let plan = match milestones {
            Milestones::None => None,
            Milestones::Doses(doses) => {
                if doses.len() > MAX_MILESTONES {
                    return Err(SessionConfigError::TooManyMilestones);
                }
                let mut levels = [0.0; MAX_MILESTONES];
                let mut prev = 0.0;
                for (slot, d) in levels.iter_mut().zip(doses.iter()) {
                    let h = to_exposure(&self.meter, *d)?.j_per_m2();
                    if !(h.is_finite() && h > 0.0) {
                        return Err(SessionConfigError::Milestone);
                    }
                    if h <= prev {
                        return Err(SessionConfigError::MilestoneOrder);
                    }
                    if h > target {
                        return Err(SessionConfigError::MilestoneBeyondTarget);
                    }
                    *slot = h;
                    prev = h;
                }
                // doses.len() ≤ MAX_MILESTONES = 12 (checked above).
                let len =
                    u8::try_from(doses.len()).map_err(|_| SessionConfigError::TooManyMilestones)?;
                (len > 0).then_some(Plan::List { levels, len })
            }
            Milestones::Every(step) => {
                let h = to_exposure(&self.meter, step)?.j_per_m2();
                Some(step_plan(h, target)?)
            }
            Milestones::EveryFraction(f) => {
                if !(f.is_finite() && f > 0.0 && f <= 1.0) {
                    return Err(SessionConfigError::Milestone);
                }
                Some(step_plan(f * target, target)?)
            }
        };
        self.plan = plan;
        self.next_milestone = 0;
        let first = plan.and_then(|p| p.level(0));
        match (first, self.milestone_id) {
            (Some(level), Some(id)) => {
                self.integrator
                    .set_threshold(id, RadiantExposure::from_j_per_m2(level));
                self.watch |= id.bit();
                self.milestone_bit = id.bit();
            }
            (Some(level), None) => {
                let id = self
                    .integrator
                    .add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotBefore)
                    .map_err(|_| SessionConfigError::TooManyMilestones)?;
                self.milestone_id = Some(id);
                self.watch |= id.bit();
                self.milestone_bit = id.bit();
            }
            (None, Some(id)) => {
                self.watch &= !id.bit();
                self.milestone_bit = 0;
            }
            (None, None) => {}
        }
        Ok(())
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
        if matches!(self.phase, Phase::Ready) || self.phase.is_terminal() {
            return Ok(Outcome::Ignored(Ignored::NotRunning));
        }
        // Compiles away without an interlock (NoInterlock always reads closed).
        if self.phase != Phase::TargetMet {
            match self.interlock.is_closed() {
                Ok(true) => {}
                Ok(false) => {
                    if self.phase == Phase::Exposing {
                        self.begin_pause(PauseCause::Interlock, reading.at)?;
                    }
                }
                Err(e) => {
                    self.interlock_error = Some(e);
                    return self
                        .enter_fault(Fault::InterlockPin)
                        .map(|()| Outcome::Faulted(Fault::InterlockPin));
                }
            }
        }
        let before = self.phase;
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
        if before != Phase::TargetMet {
            // Exposing or paused: target, target + tolerance or a milestone reached.
            let hit = step.crossed.0 & self.watch;
            if hit != 0 {
                if hit & self.milestone_bit != 0 || before != Phase::Exposing {
                    return self.on_threshold(before, step.crossed, reading.at);
                }
                // Exposing and the target (or target + tolerance) reached: the sample that
                // reaches the target stops the run, even if its last interval also passed
                // target + tolerance (the light was commanded on until now).
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
            milestone: None,
        })
    }

    /// A milestone reached, or a watched threshold crossed while paused (off the steady and
    /// the target path).
    #[inline(never)]
    fn on_threshold(
        &mut self,
        before: Phase,
        crossed: Crossed,
        at: Ticks,
    ) -> Result<Outcome, SessionPinError<EN, AL>> {
        let mut milestone = None;
        if let Some(id) = self.milestone_id {
            if crossed.contains(id) && self.watch & id.bit() != 0 {
                milestone = self.advance_milestones(id);
            }
        }
        // The sample that reaches the target stops the run, even if its last interval also
        // passed target + tolerance (the light was commanded on until now). While paused, the
        // leak completed the run.
        if crossed.0 & (self.target_id.bit() | self.over_id.bit()) != 0 {
            if self.phase == Phase::Paused {
                let _ = self.end_pause(self.pause_cause, at);
            }
            self.phase = Phase::TargetMet;
            self.write_enable(false)?;
        }
        Ok(Outcome::Integrated {
            before,
            after: self.phase,
            milestone,
        })
    }

    /// Milestone threshold `id` fired: move it to the first milestone not yet reached (or
    /// stop watching it); returns the index of the last milestone reached.
    fn advance_milestones(&mut self, id: ThresholdId) -> Option<u16> {
        let plan = self.plan?;
        let mut reached = None;
        // Bounded: at most the plan's length (≤ MAX_STEP_MILESTONES) iterations, and one or
        // two in practice (a step plan starts from an estimate).
        if let Plan::Step { step, .. } = plan {
            // One less than the estimate, so rounding never skips a milestone not reached;
            // the loop below settles the rest exactly.
            let done = libm::floor(self.integrator.exposure().j_per_m2() / step) - 1.0;
            if done.is_finite() && done > f64::from(self.next_milestone) {
                // Capped at the plan's length (≤ MAX_STEP_MILESTONES), so the cast is exact.
                let skip = if done >= f64::from(plan.len()) {
                    plan.len()
                } else {
                    done as u32
                };
                reached = skip.checked_sub(1);
                self.next_milestone = skip;
                match plan.level(skip) {
                    Some(level) => {
                        self.integrator
                            .set_threshold(id, RadiantExposure::from_j_per_m2(level));
                    }
                    None => {
                        self.watch &= !id.bit();
                        self.milestone_bit = 0;
                        return reached.map(|i| u16::try_from(i).unwrap_or(u16::MAX));
                    }
                }
            }
        }
        loop {
            let crossed = self.integrator.crossed().contains(id);
            if !crossed {
                break;
            }
            reached = Some(self.next_milestone);
            self.next_milestone = self.next_milestone.saturating_add(1);
            match plan.level(self.next_milestone) {
                Some(level) => {
                    self.integrator
                        .set_threshold(id, RadiantExposure::from_j_per_m2(level));
                }
                None => {
                    self.watch &= !id.bit();
                    self.milestone_bit = 0;
                    break;
                }
            }
        }
        reached.map(|i| u16::try_from(i).unwrap_or(u16::MAX))
    }

    fn begin_pause(
        &mut self,
        cause: PauseCause,
        now: Ticks,
    ) -> Result<(), SessionPinError<EN, AL>> {
        self.pause_open = Some((now, self.integrator.exposure().j_per_m2()));
        self.pause_cause = cause;
        self.phase = Phase::Paused;
        self.write_enable(false)
    }

    fn end_pause(&mut self, cause: PauseCause, now: Ticks) -> PauseSummary {
        let (started, at_pause) = self.pause_open.take().unwrap_or((now, 0.0));
        let leak = (self.integrator.exposure().j_per_m2() - at_pause).max(0.0);
        let dark_ticks = now.wrapping_since(started);
        self.pauses = self.pauses.saturating_add(1);
        self.dark_ticks = self.dark_ticks.saturating_add(u64::from(dark_ticks));
        self.leak_j_per_m2 += leak;
        PauseSummary {
            cause,
            started,
            dark_ticks,
            dark: Seconds::from_s(self.meter.tick_rate().ticks_to_s(dark_ticks)),
            dose_at_pause: RadiantExposure::from_j_per_m2(at_pause),
            leak: RadiantExposure::from_j_per_m2(leak),
        }
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
        if matches!(
            self.phase,
            Phase::Exposing | Phase::TargetMet | Phase::Paused
        ) {
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
        let open_leak = self
            .pause_open
            .map_or(0.0, |(_, h)| (exposure.j_per_m2() - h).max(0.0));
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
            pauses: self.pauses,
            dark_time: Seconds::from_s(
                self.dark_ticks as f64 / f64::from(self.meter.tick_rate().hz()),
            ),
            leak: RadiantExposure::from_j_per_m2(self.leak_j_per_m2 + open_leak),
            milestones_reached: u16::try_from(self.next_milestone).unwrap_or(u16::MAX),
        }
    }

    /// The interlock read error that faulted the session at [`start`](Self::start) or at a
    /// reading ([`Fault::InterlockPin`]; those calls report the fault, not the error), for
    /// diagnosis. `None` if no such read failed. [`resume`](Self::resume) and
    /// [`poll_interlock`](Self::poll_interlock) return their read errors directly.
    pub fn interlock_error(&self) -> Option<&IL::Error> {
        self.interlock_error.as_ref()
    }

    /// Give the output pins back (and drop the interlock; see
    /// [`release_all`](Self::release_all)). The caller is responsible for their state
    /// afterwards.
    pub fn release(self) -> (EN, AL) {
        (self.enable, self.alarm)
    }

    /// Give the output pins and the interlock back.
    pub fn release_all(self) -> (EN, AL, IL) {
        (self.enable, self.alarm, self.interlock)
    }

    /// Why the run is paused ([`Phase::Paused`]); `None` in any other phase.
    #[must_use]
    pub const fn pause_cause(&self) -> Option<PauseCause> {
        if matches!(self.phase, Phase::Paused) {
            Some(self.pause_cause)
        } else {
            None
        }
    }

    /// Whether the run is paused (by command or by the interlock).
    #[must_use]
    pub const fn is_paused(&self) -> bool {
        matches!(self.phase, Phase::Paused)
    }

    fn enter_fault(&mut self, reason: Fault) -> Result<(), SessionPinError<EN, AL>> {
        self.pause_open = None;
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
