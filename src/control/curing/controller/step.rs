//! Per-reading work of the curing controller: integrate a sample, decide the stop, check that
//! the light went off after it, enter a fault and build the part record.

use embedded_hal::digital::{InputPin, OutputPin};

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::control::ActiveLevel;
use crate::dose::SampleError;
use crate::frontend::{CodeFault, MAX_RANGES};
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

use super::CuringController;
use crate::control::curing::*;

use crate::control::curing::config::set;
use crate::control::curing::part::{OffCheck, PartState};
use crate::control::curing::ControllerError;
use crate::control::PinError;

impl<EN: OutputPin, AL: OutputPin, IL: InputPin> CuringController<EN, AL, IL> {
    /// Convert and integrate. Returns how the sample was used and its net code if integrated.
    pub(super) fn integrate(
        &mut self,
        reading: &Reading,
        net: Result<i32, CodeFault>,
    ) -> Result<(SampleUse, Option<i32>), ControllerError<EN, AL, IL>> {
        let at = reading.at;
        let net = match net {
            Ok(n) => n,
            Err(f @ (CodeFault::SaturatedHigh | CodeFault::SaturatedLow)) => {
                let max = self.config.max_unusable_run;
                if let Some(p) = self.part.as_mut() {
                    if p.unusable_run < max {
                        p.unusable_run = p.unusable_run.saturating_add(1);
                        return Ok((SampleUse::Unusable(f), None));
                    }
                }
                self.enter_fault(CuringFault::Saturated, at)?;
                return Ok((SampleUse::Faulted(CuringFault::Saturated), None));
            }
            Err(CodeFault::OutOfRange | CodeFault::UnknownRange) => {
                self.enter_fault(CuringFault::BadCode, at)?;
                return Ok((SampleUse::Faulted(CuringFault::BadCode), None));
            }
        };
        if let Some(p) = self.part.as_mut() {
            p.unusable_run = 0;
            if let Some(t0) = p.dark_from.take() {
                if t0 != at {
                    // Dark until the start tick: a zero in the reading's own range (no range
                    // split). A fresh integrator accepts any first sample in a known range.
                    let _ = self.integrator.accept(0, reading.range, t0);
                }
            }
        }
        match self.integrator.accept(net, reading.range, at) {
            Ok(step) => {
                if let Some(p) = self.part.as_mut() {
                    p.end = at;
                }
                self.crossed = step.crossed;
                Ok((SampleUse::Integrated, Some(net)))
            }
            Err(SampleError::Repeated) => Ok((SampleUse::Repeated, None)),
            Err(e) => {
                let f = match e {
                    SampleError::Backwards { .. } => CuringFault::TimeBackwards,
                    SampleError::Gap { ticks } => CuringFault::Gap { ticks },
                    SampleError::Repeated | SampleError::UnknownRange => CuringFault::BadCode,
                };
                self.enter_fault(f, at)?;
                Ok((SampleUse::Faulted(f), None))
            }
        }
    }

    pub(super) fn handle_interlock(
        &mut self,
        closed: bool,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        if closed != p.interlock_closed {
            p.interlock_closed = closed;
            self.raise(if closed {
                Events::INTERLOCK_CLOSED
            } else {
                Events::INTERLOCK_OPENED
            });
        }
        if !closed && self.phase == CuringPhase::Exposing {
            self.leave_exposing();
            let h = self.integrator.exposure().j_per_m2();
            if let Some(p) = self.part.as_mut() {
                p.pause_entry_j = h;
            }
            self.arm_off_check(at);
            self.phase = CuringPhase::Paused;
            self.raise(Events::PAUSED);
            self.write_enable(false)?;
        }
        Ok(())
    }

    pub(super) fn after_integration(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        // The integrator's own step result: no rescan of the thresholds.
        let crossed = self.crossed;
        if crossed.contains(self.target_id) && !self.seen(Events::TARGET_REACHED) {
            self.raise(Events::TARGET_REACHED);
        }
        if crossed.contains(self.over_id) && !self.seen(Events::OVEREXPOSED) {
            self.raise(Events::OVEREXPOSED);
            self.enter_fault(CuringFault::Overexposure, at)?;
        }
        match self.phase {
            CuringPhase::Exposing => self.exposing_sample(net, range, at),
            CuringPhase::Idle => Ok(()),
            CuringPhase::Paused
            | CuringPhase::Stopping
            | CuringPhase::Complete
            | CuringPhase::Faulted(_) => self.off_sample(net, range, at),
        }
    }

    pub(super) fn exposing_sample(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        let r = usize::from(range.0);
        let warm_up = self.config.window.warm_up_ticks;
        let hold_low = self.config.window.minimum.map_or(0, |m| m.hold_off_ticks);
        let hold_high = self.config.window.maximum.map_or(0, |m| m.hold_off_ticks);
        let lo = self.min_net.get(r).copied().unwrap_or(i32::MIN);
        let hi = self.max_net.get(r).copied().unwrap_or(i32::MAX);
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        if let Some(peak) = p.peak.get_mut(r) {
            *peak = (*peak).max(net);
        }
        let mut warm_done = false;
        if !p.warm && elapsed(p.exposing_since, at) >= warm_up {
            p.warm = true;
            let window_start = p.exposing_since.wrapping_add(warm_up);
            p.last_not_low = window_start;
            p.last_not_high = window_start;
            warm_done = true;
        }
        let mut fault = None;
        if p.warm {
            if let Some(min) = p.min.get_mut(r) {
                *min = (*min).min(net);
            }
            if net < lo {
                if elapsed(p.last_not_low, at) > hold_low {
                    fault = Some(CuringFault::IrradianceLow);
                }
            } else {
                p.last_not_low = at;
            }
            if net > hi {
                if elapsed(p.last_not_high, at) > hold_high {
                    fault = Some(CuringFault::IrradianceHigh);
                }
            } else {
                p.last_not_high = at;
            }
        }
        if warm_done {
            self.raise(Events::WARM_UP_DONE);
        }
        if let Some(f) = fault {
            return self.enter_fault(f, at);
        }
        if self.stop_now(net, range) {
            self.issue_stop(StopReason::Target, at)?;
        }
        Ok(())
    }

    /// The per-sample stop decision: units still to target ≤ predicted tail units.
    pub(super) fn stop_now(&self, net: i32, range: RangeIndex) -> bool {
        let Some(remaining) = self.integrator.units_to_threshold(self.target_id) else {
            return false;
        };
        if remaining <= 0 {
            return true;
        }
        if self.config.stop_policy == StopPolicy::AtTarget || net <= 0 {
            return false;
        }
        let seg = self.integrator.segment_range();
        if seg == range {
            remaining <= self.tail_units(net)
        } else {
            let rem_j = remaining as f64 * self.meter.j_per_m2_per_unit(seg);
            let tail_j = self.meter.irradiance(net, range).w_per_m2() * self.lag_effective_s;
            rem_j <= tail_j
        }
    }

    /// Predicted tail in integer units of the reading's range: 2 · net · L.
    pub(super) fn tail_units(&self, net: i32) -> i64 {
        if self.config.stop_policy == StopPolicy::AtTarget || net <= 0 {
            return 0;
        }
        // (net · L_q8 · 2) / 256; saturates (a stop issued early) on absurd values.
        i64::from(net).saturating_mul(self.lag_q8) >> (LAG_FRACTION_BITS - 1)
    }

    pub(super) fn off_sample(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        let deadline = self.off_deadline;
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        let Some(off) = p.off.as_mut() else {
            return Ok(());
        };
        let limit = off
            .limit_net
            .get(usize::from(range.0))
            .copied()
            .unwrap_or(i32::MAX);
        if net <= limit {
            if !off.seen_off {
                off.seen_off = true;
                if self.phase == CuringPhase::Stopping {
                    self.phase = CuringPhase::Complete;
                }
                self.raise(Events::LIGHT_OFF);
            }
        } else if elapsed(off.from, at) > deadline && !self.seen(Events::LIGHT_NOT_OFF) {
            self.raise(Events::LIGHT_NOT_OFF);
            self.enter_fault(CuringFault::LightNotOff, at)?;
        }
        Ok(())
    }

    // -- transitions ----------------------------------------------------------------------

    pub(super) fn issue_stop(
        &mut self,
        reason: StopReason,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        self.leave_exposing();
        let h = self.integrator.exposure().j_per_m2();
        if let Some(p) = self.part.as_mut() {
            p.stop = Some((at, reason));
            p.stop_j = h;
        }
        self.arm_off_check(at);
        self.phase = CuringPhase::Stopping;
        self.raise(Events::STOP_ISSUED);
        self.write_enable(false)
    }

    /// Close the current exposing interval at the last integrated reading.
    pub(super) fn leave_exposing(&mut self) {
        let h = self.integrator.exposure().j_per_m2();
        let last = self.integrator.last().map(|l| l.at);
        if let Some(p) = self.part.as_mut() {
            let end = last.unwrap_or(p.exposing_since);
            p.exposing_ticks = p
                .exposing_ticks
                .saturating_add(u64::from(elapsed(p.exposing_since, end)));
            p.exposing_j += h - p.exposing_entry_j;
            p.exposing_entry_j = h;
        }
    }

    /// Derive the light-off limits from the irradiance at the off command (floats, once).
    pub(super) fn arm_off_check(&mut self, from: Ticks) {
        let e_ref = self.irradiance().w_per_m2().max(0.0);
        let limit =
            (self.config.light_off.fraction * e_ref).max(self.config.light_off.floor.w_per_m2());
        let mut limit_net = [i32::MAX; MAX_RANGES];
        for (i, slot) in (0u8..).zip(limit_net.iter_mut()) {
            // The meter holds the per-range factor; nothing else keeps a copy.
            let k = &self.meter.irradiance(1, RangeIndex(i)).w_per_m2();
            if *k > 0.0 {
                *slot = libm::floor(limit / k) as i32;
            }
        }
        if let Some(p) = self.part.as_mut() {
            if p.off.is_none() {
                p.off = Some(OffCheck {
                    from,
                    limit_net,
                    seen_off: false,
                });
            }
        }
    }

    pub(super) fn enter_fault(
        &mut self,
        reason: CuringFault,
        at: Ticks,
    ) -> Result<(), ControllerError<EN, AL, IL>> {
        let was = self.phase;
        let mut new_kind = false;
        if let Some(p) = self.part.as_mut() {
            if p.fault_kinds & reason.kind_bit() == 0 {
                p.fault_kinds |= reason.kind_bit();
                new_kind = true;
            }
            if p.first_fault.is_none() {
                p.first_fault = Some(reason);
            }
        }
        if new_kind {
            self.raise(Events::FAULT);
        }
        if was == CuringPhase::Exposing {
            self.leave_exposing();
        }
        if matches!(was, CuringPhase::Exposing | CuringPhase::Paused) {
            let h = self.integrator.exposure().j_per_m2();
            if let Some(p) = self.part.as_mut() {
                if p.stop.is_none() {
                    p.stop = Some((at, StopReason::Fault(reason)));
                    p.stop_j = h;
                }
            }
            self.arm_off_check(at);
        }
        if !matches!(was, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Faulted(reason);
        }
        self.alarm_latched = true;
        // The shared safe-state sequence (crate::control): enable inactive first, then the
        // alarm, with one retry of the enable on any error.
        let r = crate::control::safe_state(
            &mut self.enable,
            self.config.enable_level,
            &mut self.alarm,
            self.config.alarm_level,
        );
        if r.is_err() {
            self.mark_output_fault();
        }
        r.map_err(CuringError::Output)
    }

    pub(super) fn build_record(&self, p: &PartState, now: Ticks) -> PartRecord {
        let delivered = self.integrator.exposure();
        let rate = f64::from(self.meter.tick_rate().hz());
        let (stop, stop_reason, stop_j) = match p.stop {
            Some((t, r)) => (t, r, p.stop_j),
            None => (now, StopReason::Ended, delivered.j_per_m2()),
        };
        let mut peak: Option<f64> = None;
        let mut min: Option<f64> = None;
        for (i, (pk, mn)) in (0u8..).zip(p.peak.iter().zip(p.min.iter())) {
            if *pk != i32::MIN {
                let e = self.meter.irradiance(*pk, RangeIndex(i)).w_per_m2();
                peak = Some(peak.map_or(e, |x| x.max(e)));
            }
            if *mn != i32::MAX {
                let e = self.meter.irradiance(*mn, RangeIndex(i)).w_per_m2();
                min = Some(min.map_or(e, |x| x.min(e)));
            }
        }
        let exposing_s = p.exposing_ticks as f64 / rate;
        let mean = if exposing_s > 0.0 {
            Some(Irradiance::from_w_per_m2(p.exposing_j / exposing_s))
        } else {
            None
        };
        let measured = !p.first_fault.is_some_and(CuringFault::is_measurement_fault);
        let lamp_ratio = match (self.config.lamp, mean) {
            (Some(l), Some(m)) if measured => Some(m.w_per_m2() / l.reference.w_per_m2()),
            _ => None,
        };
        PartRecord {
            part: p.id,
            identity: p.identity,
            start: p.start,
            stop,
            end: p.end,
            target: self.config.target,
            delivered,
            after_stop: RadiantExposure::from_j_per_m2(delivered.j_per_m2() - stop_j),
            paused: RadiantExposure::from_j_per_m2(p.paused_j),
            overshoot: delivered - self.config.target,
            peak: peak.map(Irradiance::from_w_per_m2),
            min: min.map(Irradiance::from_w_per_m2),
            mean,
            exposing_time: Seconds::from_s(exposing_s),
            stop_reason,
            fault: p.first_fault,
            faults: p.fault_kinds.count_ones() as u8,
            fault_kinds: p.fault_kinds,
            events: p.event_count,
            seen: p.seen,
            lamp_ratio,
        }
    }

    // -- events and pins ------------------------------------------------------------------

    pub(super) fn raise(&mut self, e: Events) {
        self.pending |= e;
        if let Some(p) = self.part.as_mut() {
            p.seen |= e;
            p.event_count = p.event_count.saturating_add(e.count() as u16);
        }
    }

    pub(super) fn seen(&self, e: Events) -> bool {
        self.part.as_ref().is_some_and(|p| p.seen.contains(e))
    }

    pub(super) fn take_pending(&mut self) -> Events {
        core::mem::take(&mut self.pending)
    }

    pub(super) fn read_interlock(&mut self) -> Result<bool, IL::Error> {
        let high = self.interlock.is_high()?;
        Ok(high == matches!(self.config.interlock_closed_level, ActiveLevel::High))
    }

    /// An output failed: fault (keeping an earlier reason) and latch the alarm, without
    /// writing pins.
    pub(super) fn mark_output_fault(&mut self) {
        if let Some(p) = self.part.as_mut() {
            if p.fault_kinds & CuringFault::Output.kind_bit() == 0 {
                p.fault_kinds |= CuringFault::Output.kind_bit();
                p.seen |= Events::FAULT;
                p.event_count = p.event_count.saturating_add(1);
            }
            if p.first_fault.is_none() {
                p.first_fault = Some(CuringFault::Output);
            }
        }
        self.pending |= Events::FAULT;
        if !matches!(self.phase, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Faulted(CuringFault::Output);
        }
        self.alarm_latched = true;
    }

    pub(super) fn write_enable(&mut self, active: bool) -> Result<(), ControllerError<EN, AL, IL>> {
        let r = set(&mut self.enable, self.config.enable_level, active);
        if r.is_err() {
            self.mark_output_fault();
            // Best effort: try inactive once more (a transient error on an expander), and
            // raise the alarm.
            let _ = set(&mut self.enable, self.config.enable_level, false);
            let _ = set(&mut self.alarm, self.config.alarm_level, true);
        }
        r.map_err(|e| CuringError::Output(PinError::Enable(e)))
    }

    pub(super) fn write_alarm(&mut self, active: bool) -> Result<(), ControllerError<EN, AL, IL>> {
        let r = set(&mut self.alarm, self.config.alarm_level, active);
        if r.is_err() {
            self.mark_output_fault();
            let _ = set(&mut self.enable, self.config.enable_level, false);
        }
        r.map_err(|e| CuringError::Output(PinError::Alarm(e)))
    }
}
