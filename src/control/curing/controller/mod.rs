//! The curing controller: per-reading decisions, stop timing, interlock and records.
//!
//! This file holds the controller's state and its public commands; `step.rs` holds the
//! per-reading work (integration, the stop decision, the off check after a stop, faults and
//! the part record) that the commands share.

use embedded_hal::digital::{InputPin, OutputPin};

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::dose::{Crossed, Integrator, Rounding, ThresholdId};
use crate::frontend::{Sample, MAX_RANGES};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

use super::*;

use super::config::validate;
use super::part::{LampHistory, PartState};
use super::ControllerError;

mod state;
mod step;

pub use state::CuringState;

/// A dose-controlled curing station. See the [module documentation](super).
#[derive(Debug)]
pub struct CuringController<EN, AL, IL> {
    meter: Meter,
    config: CuringConfig,
    template: Integrator,
    integrator: Integrator,
    target_id: ThresholdId,
    over_id: ThresholdId,
    /// The thresholds crossed after the last integrated reading (from the integrator's step).
    crossed: Crossed,
    /// Effective lag in 1/256 ticks.
    lag_q8: i64,
    lag_effective_s: f64,
    off_deadline: u32,
    min_net: [i32; MAX_RANGES],
    max_net: [i32; MAX_RANGES],
    phase: CuringPhase,
    part: Option<PartState>,
    lamp: LampHistory,
    /// Parts finished since the controller was built (or restored).
    parts_finished: u32,
    alarm_latched: bool,
    pending: Events,
    enable: EN,
    alarm: AL,
    interlock: IL,
}

impl<EN: OutputPin, AL: OutputPin, IL: InputPin> CuringController<EN, AL, IL> {
    /// Validate the configuration, convert every limit into integer units, and set both
    /// outputs inactive.
    ///
    /// # Errors
    /// [`CuringError::Config`] for an invalid configuration; [`CuringError::Output`] if the
    /// outputs cannot be set inactive.
    pub fn new(
        meter: Meter,
        config: CuringConfig,
        enable: EN,
        alarm: AL,
        interlock: IL,
    ) -> Result<Self, ControllerError<EN, AL, IL>> {
        let checked = validate(&meter, &config).map_err(CuringError::Config)?;
        let mut template = Integrator::new(&meter, config.max_gap_ticks);
        let target_id = template
            .add_threshold(config.target, Rounding::NotBefore)
            .map_err(|_| CuringError::Config(CuringConfigError::Target))?;
        let over_id = template
            .add_threshold(config.target + config.tolerance, Rounding::NotAfter)
            .map_err(|_| CuringError::Config(CuringConfigError::Tolerance))?;
        let mut min_net = [i32::MIN; MAX_RANGES];
        let mut max_net = [i32::MAX; MAX_RANGES];
        for (i, (lo, hi)) in (0u8..).zip(min_net.iter_mut().zip(max_net.iter_mut())) {
            let k = meter.irradiance(1, RangeIndex(i)).w_per_m2();
            if k > 0.0 {
                if let Some(m) = config.window.minimum {
                    // Rounded up: a net code at or above this is certainly ≥ the minimum.
                    *lo = libm::ceil(m.irradiance.w_per_m2() / k) as i32;
                }
                if let Some(m) = config.window.maximum {
                    // Rounded down: a net code at or below this is certainly ≤ the maximum.
                    *hi = libm::floor(m.irradiance.w_per_m2() / k) as i32;
                }
            }
        }
        let rate = f64::from(meter.tick_rate().hz());
        let integrator = template.clone();
        let mut c = Self {
            lag_q8: checked.lag_q8,
            lag_effective_s: checked.lag_effective_ticks / rate,
            off_deadline: checked.off_deadline,
            meter,
            config,
            template,
            integrator,
            target_id,
            over_id,
            crossed: Crossed(0),
            min_net,
            max_net,
            phase: CuringPhase::Idle,
            part: None,
            lamp: LampHistory::new(),
            parts_finished: 0,
            alarm_latched: false,
            pending: Events::NONE,
            enable,
            alarm,
            interlock,
        };
        c.write_enable(false)?;
        c.write_alarm(false)?;
        Ok(c)
    }

    /// Start a part from dark: the interlock must read closed and no alarm may be latched.
    /// The enable output goes active and the dose restarts from zero at `now`: the part is
    /// taken as dark until `now` (a closed shutter), so the first interval is a trapezoid
    /// from zero at `now` to the part's first reading. A first reading taken at `now` itself
    /// counts as the start of the run instead (the light was already on at `now`).
    ///
    /// Returns [`Events::STARTED`] (with [`Events::LAMP_LOW`] when lamp maintenance is due).
    ///
    /// # Errors
    /// [`CuringError::Refused`] (part active, alarm latched, interlock open — nothing
    /// changed); [`CuringError::Interlock`] if the interlock cannot be read (no part is
    /// started); [`CuringError::Output`] if the enable output cannot be written (the part is
    /// then faulted).
    pub fn start(
        &mut self,
        part: PartId,
        now: Ticks,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        self.start_part(part, now, true)
    }

    /// Start a part whose light is already on (a lamp that stays lit between parts, a
    /// conveyor): the dose counts from the part's first reading, at its own tick, exactly as
    /// [`Session`](crate::control::session::Session) counts. Otherwise as [`start`](Self::start).
    ///
    /// # Errors
    /// As [`start`](Self::start).
    pub fn start_lit(
        &mut self,
        part: PartId,
        now: Ticks,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        self.start_part(part, now, false)
    }

    /// Start a part from dark, as [`start`](Self::start), with its part, lot and recipe
    /// labels for traceability (kept in its [`PartRecord`]).
    ///
    /// # Errors
    /// As [`start`](Self::start).
    pub fn start_identified(
        &mut self,
        part: PartId,
        identity: PartIdentity,
        now: Ticks,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        let r = self.start_part(part, now, true);
        self.set_identity(identity);
        r
    }

    /// Start a part whose light is already on, as [`start_lit`](Self::start_lit), with its
    /// part, lot and recipe labels.
    ///
    /// # Errors
    /// As [`start`](Self::start).
    pub fn start_lit_identified(
        &mut self,
        part: PartId,
        identity: PartIdentity,
        now: Ticks,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        let r = self.start_part(part, now, false);
        self.set_identity(identity);
        r
    }

    /// Label the active part (a part refused at the start is not active: nothing changes).
    fn set_identity(&mut self, identity: PartIdentity) {
        if let Some(p) = self.part.as_mut() {
            p.identity = identity;
        }
    }

    fn start_part(
        &mut self,
        part: PartId,
        now: Ticks,
        dark: bool,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        if self.part.is_some() {
            return Err(CuringError::Refused(Refusal::PartActive));
        }
        if self.alarm_latched {
            return Err(CuringError::Refused(Refusal::AlarmLatched));
        }
        let closed = self.read_interlock().map_err(CuringError::Interlock)?;
        if !closed {
            return Err(CuringError::Refused(Refusal::InterlockOpen));
        }
        self.pending = Events::NONE;
        self.integrator = self.template.clone();
        self.crossed = Crossed(0);
        let mut state = PartState::new(part, now);
        state.dark_from = dark.then_some(now);
        self.part = Some(state);
        self.phase = CuringPhase::Exposing;
        let mut ev = Events::STARTED;
        if self.lamp_trend().maintenance_due {
            ev |= Events::LAMP_LOW;
        }
        self.raise(ev);
        self.write_enable(true)?;
        Ok(self.take_pending())
    }

    /// Feed one reading. While a part is active the interlock is read once per call.
    ///
    /// # Errors
    /// [`CuringError::Output`] or [`CuringError::Interlock`] when a pin fails; the controller
    /// is then faulted (the reading was still integrated if it was usable).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Update, ControllerError<EN, AL, IL>> {
        let sample = self.meter.front_end().sample(reading);
        self.on_sample(&sample)
    }

    /// Feed one reading whose net code was already computed with this controller's meter
    /// ([`FrontEnd::sample`](crate::frontend::FrontEnd::sample)); otherwise as
    /// [`on_reading`](Self::on_reading).
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading).
    pub fn on_sample(&mut self, sample: &Sample) -> Result<Update, ControllerError<EN, AL, IL>> {
        let reading = &sample.reading;
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Ok(Update {
                sample: SampleUse::NoPart,
                phase: self.phase,
                events: Events::NONE,
            });
        }
        let door = self.read_interlock();
        let (sample, net) = self.integrate(reading, sample.net)?;
        if let Ok(closed) = door {
            self.handle_interlock(closed, reading.at)?;
        }
        if let Some(net) = net {
            self.after_integration(net, reading.range, reading.at)?;
        }
        if let Err(e) = door {
            self.enter_fault(CuringFault::InterlockPin, reading.at)?;
            return Err(CuringError::Interlock(e));
        }
        Ok(Update {
            sample,
            phase: self.phase,
            events: self.take_pending(),
        })
    }

    /// Read the interlock outside a reading (for example from its pin-change interrupt) and
    /// pause if it is open while exposing.
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading); [`CuringError::Refused`] with
    /// [`Refusal::NoPart`] when no part is active.
    pub fn poll_interlock(&mut self, now: Ticks) -> Result<Events, ControllerError<EN, AL, IL>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        match self.read_interlock() {
            Ok(closed) => self.handle_interlock(closed, now)?,
            Err(e) => {
                self.enter_fault(CuringFault::InterlockPin, now)?;
                return Err(CuringError::Interlock(e));
            }
        }
        Ok(self.take_pending())
    }

    /// Resume a paused part. The interlock must read closed; the warm-up starts again from
    /// `now`. Closing the guard never resumes by itself.
    ///
    /// # Errors
    /// [`CuringError::Refused`] (no part, not paused, alarm latched, interlock open — nothing
    /// changed); pin errors as [`on_reading`](Self::on_reading).
    pub fn resume(&mut self, now: Ticks) -> Result<Events, ControllerError<EN, AL, IL>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        if self.phase != CuringPhase::Paused {
            return Err(CuringError::Refused(Refusal::NotPaused));
        }
        if self.alarm_latched {
            return Err(CuringError::Refused(Refusal::AlarmLatched));
        }
        let closed = match self.read_interlock() {
            Ok(c) => c,
            Err(e) => {
                self.enter_fault(CuringFault::InterlockPin, now)?;
                return Err(CuringError::Interlock(e));
            }
        };
        self.handle_interlock(closed, now)?;
        if !closed {
            return Err(CuringError::Refused(Refusal::InterlockOpen));
        }
        let h = self.integrator.exposure().j_per_m2();
        if let Some(p) = self.part.as_mut() {
            p.paused_j += h - p.pause_entry_j;
            p.off = None;
            p.exposing_since = now;
            p.exposing_entry_j = h;
            p.warm = false;
        }
        self.phase = CuringPhase::Exposing;
        self.raise(Events::RESUMED);
        self.write_enable(true)?;
        Ok(self.take_pending())
    }

    /// The tick at which to issue the stop if the irradiance stays as last measured, for a
    /// timer compare between readings: the last reading's tick + remaining ÷ (2 · net) − lag,
    /// rounded up. The last reading's tick if the stop is already due. `None` when not
    /// exposing, without a positive irradiance, or more than 2³¹ − 1 ticks away.
    #[must_use]
    pub fn stop_due(&self) -> Option<Ticks> {
        if self.phase != CuringPhase::Exposing {
            return None;
        }
        let last = self.integrator.last()?;
        if last.net <= 0 {
            return None;
        }
        let remaining = self.integrator.units_to_threshold(self.target_id)?;
        let seg = self.integrator.segment_range();
        let ticks = if seg == last.range {
            let need = remaining.saturating_sub(self.tail_units(last.net));
            if need <= 0 {
                return Some(last.at);
            }
            let per_tick = i64::from(last.net).saturating_mul(2);
            let whole = need.checked_div(per_tick)?;
            let part = i64::from(need.checked_rem(per_tick)? != 0);
            whole.saturating_add(part)
        } else {
            // Rare path (first reading of a run in another range): compare in f64.
            let rem_j = remaining as f64 * self.meter.j_per_m2_per_unit(seg);
            let e = self.meter.irradiance(last.net, last.range).w_per_m2();
            let rate = f64::from(self.meter.tick_rate().hz());
            let tail_j = match self.config.stop_policy {
                StopPolicy::Anticipate => e * self.lag_effective_s,
                StopPolicy::AtTarget => 0.0,
            };
            let t = libm::ceil((rem_j - tail_j) / e * rate);
            if t <= 0.0 {
                return Some(last.at);
            }
            t as i64
        };
        let ticks = u32::try_from(ticks).ok().filter(|t| *t <= MAX_TICKS)?;
        Some(last.at.wrapping_add(ticks))
    }

    /// The firmware's timer compare (armed at [`stop_due`](Self::stop_due)) fired at `now`:
    /// issue the stop if it is still due for the latest irradiance, or say when to re-arm.
    ///
    /// # Errors
    /// [`CuringError::Output`] if the enable output cannot be written.
    pub fn on_stop_timer(
        &mut self,
        now: Ticks,
    ) -> Result<TimerOutcome, ControllerError<EN, AL, IL>> {
        self.pending = Events::NONE;
        if self.phase != CuringPhase::Exposing {
            return Ok(TimerOutcome::NotExposing);
        }
        match self.stop_due() {
            None => Ok(TimerOutcome::NoEstimate),
            Some(due) => {
                // `now` at or after `due` (wrap-aware).
                if now.wrapping_since(due) <= MAX_TICKS {
                    self.issue_stop(StopReason::TargetTimer, now)?;
                    Ok(TimerOutcome::Stopped)
                } else {
                    Ok(TimerOutcome::Rearm(due))
                }
            }
        }
    }

    /// Enter the safe state for a reason found outside the controller (an ADC bus error, a
    /// watchdog, an operator abort). Latches the alarm. Without a part, only the outputs and
    /// the latch are set.
    ///
    /// # Errors
    /// [`CuringError::Output`] if an output cannot be written.
    pub fn fault(
        &mut self,
        reason: CuringFault,
        now: Ticks,
    ) -> Result<Events, ControllerError<EN, AL, IL>> {
        self.pending = Events::NONE;
        self.enter_fault(reason, now)?;
        Ok(self.take_pending())
    }

    /// End the part and return its record. The enable output goes inactive if it was still
    /// active ([`StopReason::Ended`]). Readings after this are not monitored. A fault stays
    /// latched on the alarm output and in the phase ([`CuringPhase::Faulted`]) until
    /// [`acknowledge_alarm`](Self::acknowledge_alarm); otherwise the phase is
    /// [`CuringPhase::Idle`].
    ///
    /// # Errors
    /// [`CuringError::Refused`] with [`Refusal::NoPart`]; [`CuringError::Output`] if the
    /// enable output cannot be written (the part stays active and faulted; call again).
    pub fn finish(&mut self, now: Ticks) -> Result<PartRecord, ControllerError<EN, AL, IL>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        match self.phase {
            CuringPhase::Exposing => self.issue_stop(StopReason::Ended, now)?,
            CuringPhase::Paused => {
                let h = self.integrator.exposure().j_per_m2();
                if let Some(p) = self.part.as_mut() {
                    p.paused_j += h - p.pause_entry_j;
                    p.pause_entry_j = h;
                    if p.stop.is_none() {
                        p.stop = Some((now, StopReason::Paused));
                        p.stop_j = h;
                    }
                }
            }
            _ => {}
        }
        let Some(p) = self.part else {
            return Err(CuringError::Refused(Refusal::NoPart));
        };
        let mut record = self.build_record(&p, now);
        if let Some(ratio) = record.lamp_ratio {
            self.lamp.push(ratio);
            if self.lamp_trend().maintenance_due {
                record.seen |= Events::LAMP_LOW;
                record.events = record.events.saturating_add(1);
            }
        }
        self.part = None;
        self.parts_finished = self.parts_finished.saturating_add(1);
        // A latched alarm keeps the station in its fault until acknowledged.
        if !matches!(self.phase, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Idle;
        }
        Ok(record)
    }

    /// Clear a latched alarm (after the operator has checked the station). Only without an
    /// active part.
    ///
    /// # Errors
    /// [`CuringError::Refused`] with [`Refusal::PartActive`]; [`CuringError::Output`].
    pub fn acknowledge_alarm(&mut self) -> Result<(), ControllerError<EN, AL, IL>> {
        if self.part.is_some() {
            return Err(CuringError::Refused(Refusal::PartActive));
        }
        self.write_alarm(false)?;
        self.alarm_latched = false;
        self.phase = CuringPhase::Idle;
        Ok(())
    }

    /// The current phase.
    #[must_use]
    pub const fn phase(&self) -> CuringPhase {
        self.phase
    }

    /// Whether the alarm output is latched active.
    #[must_use]
    pub const fn alarm_latched(&self) -> bool {
        self.alarm_latched
    }

    /// The meter this controller converts with.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// The validated configuration.
    #[must_use]
    pub const fn config(&self) -> &CuringConfig {
        &self.config
    }

    /// The dose integrator of the current (or last) part, read-only.
    #[must_use]
    pub const fn integrator(&self) -> &Integrator {
        &self.integrator
    }

    /// Radiant exposure delivered to the current (or last) part so far.
    #[must_use]
    pub fn delivered(&self) -> RadiantExposure {
        self.integrator.exposure()
    }

    /// Irradiance of the last integrated reading (zero before any).
    #[must_use]
    pub fn irradiance(&self) -> Irradiance {
        self.integrator
            .last()
            .map_or(Irradiance::ZERO, |l| self.meter.irradiance(l.net, l.range))
    }

    /// Dose predicted to arrive after a stop command issued now (current irradiance ×
    /// effective lag).
    #[must_use]
    pub fn predicted_tail(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.irradiance().w_per_m2() * self.lag_effective_s)
    }

    /// The effective actuator lag (`∫ fraction dt`), seconds.
    #[must_use]
    pub const fn effective_lag(&self) -> Seconds {
        Seconds::from_s(self.lag_effective_s)
    }

    /// The window limits in net codes for range `r`: `(min, max)`, `i32::MIN` / `i32::MAX`
    /// where no limit is configured. `None` for a range the meter does not have.
    #[must_use]
    pub fn window_net_codes(&self, r: RangeIndex) -> Option<(i32, i32)> {
        let i = usize::from(r.0);
        if i >= self.meter.front_end().range_count() {
            return None;
        }
        Some((*self.min_net.get(i)?, *self.max_net.get(i)?))
    }

    /// The lamp-ageing trend (empty without a [`LampReference`]).
    #[must_use]
    pub fn lamp_trend(&self) -> LampTrend {
        let latest = self.lamp.latest();
        let n = self.lamp.len;
        let (mean, slope) = if n == 0 {
            (None, None)
        } else {
            let nf = n as f64;
            let mean_y = self.lamp.ordered().sum::<f64>() / nf;
            let mean_x = (nf - 1.0) / 2.0;
            let mut sxy = 0.0;
            let mut sxx = 0.0;
            for (i, y) in self.lamp.ordered().enumerate() {
                let dx = i as f64 - mean_x;
                sxy += dx * (y - mean_y);
                sxx += dx * dx;
            }
            let slope = if n >= 2 && sxx > 0.0 {
                Some(sxy / sxx)
            } else {
                None
            };
            (Some(mean_y), slope)
        };
        let due = match (latest, self.config.lamp) {
            (Some(r), Some(l)) => r < l.maintenance_below,
            _ => false,
        };
        LampTrend {
            parts: self.lamp.parts,
            latest_ratio: latest,
            mean_ratio: mean,
            slope_per_part: slope,
            maintenance_due: due,
        }
    }

    /// Take a new dark offset for range `r` (a dark capture between parts). Applied only
    /// while no part is active; returns `false` and changes nothing otherwise, or if the
    /// range does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        if self.part.is_some() {
            return false;
        }
        self.meter.front_end_mut().set_dark_offset(r, dark_offset)
    }

    /// Give the pins back. The caller is responsible for their state afterwards.
    pub fn release(self) -> (EN, AL, IL) {
        (self.enable, self.alarm, self.interlock)
    }
}
