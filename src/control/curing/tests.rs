//! Unit tests of [`super`].

use super::part::LampHistory;
use super::*;
use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::control::ActiveLevel;
use crate::frontend::CodeFault;
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure};
use embedded_hal::digital::{ErrorKind, ErrorType, InputPin, OutputPin};
use std::cell::Cell;
use std::rc::Rc;

/// An output whose level the test can read; `fail` makes every write fail.
#[derive(Clone, Default)]
struct Out {
    high: Rc<Cell<bool>>,
    fail: Rc<Cell<bool>>,
}
impl ErrorType for Out {
    type Error = ErrorKind;
}
impl OutputPin for Out {
    fn set_low(&mut self) -> Result<(), ErrorKind> {
        if self.fail.get() {
            return Err(ErrorKind::Other);
        }
        self.high.set(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), ErrorKind> {
        if self.fail.get() {
            return Err(ErrorKind::Other);
        }
        self.high.set(true);
        Ok(())
    }
}

/// An input the test sets: `Some(level)` or `None` for a read error.
#[derive(Clone)]
struct In(Rc<Cell<Option<bool>>>);
impl ErrorType for In {
    type Error = ErrorKind;
}
impl InputPin for In {
    fn is_high(&mut self) -> Result<bool, ErrorKind> {
        self.0.get().ok_or(ErrorKind::Other)
    }
    fn is_low(&mut self) -> Result<bool, ErrorKind> {
        self.0.get().map(|h| !h).ok_or(ErrorKind::Other)
    }
}

/// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s (as in dose.rs).
/// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s.
fn meter() -> Meter {
    crate::fixtures::two_range_meter(395.0).unwrap()
}

/// Target 10 000 J/m² (1000 mJ/cm²), tolerance 100 J/m², 200-tick dead time.
fn config() -> CuringConfig {
    CuringConfig {
        target: RadiantExposure::from_j_per_m2(10_000.0),
        tolerance: RadiantExposure::from_j_per_m2(100.0),
        lag: ActuatorLag::Delay { ticks: 200 },
        stop_policy: StopPolicy::Anticipate,
        window: IrradianceWindow::default(),
        light_off: LightOffCheck {
            fraction: 0.05,
            floor: Irradiance::from_w_per_m2(2.0),
            margin_ticks: 50,
        },
        lamp: None,
        max_gap_ticks: 100,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
        interlock_closed_level: ActiveLevel::High,
    }
}

struct Rig {
    c: CuringController<Out, Out, In>,
    enable: Out,
    alarm: Out,
    door: Rc<Cell<Option<bool>>>,
}

fn rig(config: CuringConfig) -> Rig {
    let enable = Out::default();
    let alarm = Out::default();
    let door = Rc::new(Cell::new(Some(true)));
    let c = CuringController::new(
        meter(),
        config,
        enable.clone(),
        alarm.clone(),
        In(door.clone()),
    )
    .unwrap();
    Rig {
        c,
        enable,
        alarm,
        door,
    }
}

fn feed(c: &mut CuringController<Out, Out, In>, t: u32, net: i32) -> Update {
    c.on_reading(&Reading {
        code: net,
        range: RangeIndex(0),
        at: Ticks(t),
    })
    .unwrap()
}

fn new_err(config: CuringConfig) -> Option<CuringConfigError> {
    let door = Rc::new(Cell::new(Some(true)));
    match CuringController::new(meter(), config, Out::default(), Out::default(), In(door)) {
        Err(CuringError::Config(e)) => Some(e),
        _ => None,
    }
}

#[test]
fn fall_profile_effective_lag_is_the_integral() {
    // Full light for 10 ticks, then a linear fall to 0 at 30 ticks:
    // ∫ = 10 + ½·20 = 20 ticks (computed from the trapezoid definition).
    let p = FallProfile::new(&[
        FallPoint {
            after_ticks: 10,
            remaining: 1.0,
        },
        FallPoint {
            after_ticks: 30,
            remaining: 0.0,
        },
    ])
    .unwrap();
    assert_eq!(p.effective_ticks(), 20.0);
    assert_eq!(p.off_after_ticks(), 30);
    let lag = ActuatorLag::Profile(p);
    assert_eq!(lag.effective_ticks(), 20.0);
    assert_eq!(ActuatorLag::Delay { ticks: 7 }.effective_ticks(), 7.0);

    let pt = |after_ticks, remaining| FallPoint {
        after_ticks,
        remaining,
    };
    assert_eq!(
        FallProfile::new(&[]),
        Err(CuringConfigError::FallProfileEmpty)
    );
    assert_eq!(
        FallProfile::new(&[pt(0, 0.0)]),
        Err(CuringConfigError::FallPoint(0))
    );
    assert_eq!(
        FallProfile::new(&[pt(5, 0.5), pt(5, 0.0)]),
        Err(CuringConfigError::FallPoint(1))
    );
    assert_eq!(
        FallProfile::new(&[pt(5, 1.5), pt(9, 0.0)]),
        Err(CuringConfigError::FallPoint(0))
    );
    assert_eq!(
        FallProfile::new(&[pt(5, f64::NAN)]),
        Err(CuringConfigError::FallPoint(0))
    );
    assert_eq!(
        FallProfile::new(&[pt(5, 0.5), pt(9, 0.1)]),
        Err(CuringConfigError::FallProfileNotOff)
    );
    let nine: Vec<FallPoint> = (1..=9).map(|i| pt(i, 0.0)).collect();
    assert_eq!(
        FallProfile::new(&nine),
        Err(CuringConfigError::FallProfileTooLong)
    );
}

#[test]
fn bad_configuration_is_named() {
    let min = |w, hold| {
        Some(IrradianceLimit {
            irradiance: Irradiance::from_w_per_m2(w),
            hold_off_ticks: hold,
        })
    };
    let mut c = config();
    c.target = RadiantExposure::from_j_per_m2(0.0);
    assert_eq!(new_err(c), Some(CuringConfigError::Target));
    let mut c = config();
    c.tolerance = RadiantExposure::from_j_per_m2(-1.0);
    assert_eq!(new_err(c), Some(CuringConfigError::Tolerance));
    let mut c = config();
    c.max_gap_ticks = 0;
    assert_eq!(new_err(c), Some(CuringConfigError::MaxGap));
    // 10 000 J/m² at a minimum of 1000 W/m² is 10 s = 10 000 ticks: a lag of 10 000
    // ticks could never stop in time.
    let mut c = config();
    c.window.minimum = min(1000.0, 0);
    c.lag = ActuatorLag::Delay { ticks: 10_000 };
    assert_eq!(new_err(c), Some(CuringConfigError::LagTooLong));
    let mut c = config();
    c.lag = ActuatorLag::Delay { ticks: u32::MAX };
    assert_eq!(new_err(c), Some(CuringConfigError::LagTooLong));
    let mut c = config();
    c.window.minimum = min(500.0, 0);
    c.window.maximum = min(500.0, 0);
    assert_eq!(new_err(c), Some(CuringConfigError::WindowOrder));
    let mut c = config();
    c.window.minimum = min(-1.0, 0);
    assert_eq!(new_err(c), Some(CuringConfigError::WindowIrradiance));
    // Exposure at 1000 W/m² is 10 000 ticks: warm-up 4000 + hold-off 6000 is too long.
    let mut c = config();
    c.window.minimum = min(1000.0, 6000);
    c.window.warm_up_ticks = 4000;
    assert_eq!(new_err(c), Some(CuringConfigError::LowHoldOff));
    // Exposure at a maximum of 5000 W/m² is 2000 ticks.
    let mut c = config();
    c.window.maximum = min(5000.0, 2000);
    assert_eq!(new_err(c), Some(CuringConfigError::HighHoldOff));
    let mut c = config();
    c.window.warm_up_ticks = u32::MAX;
    assert_eq!(new_err(c), Some(CuringConfigError::WarmUp));
    let mut c = config();
    c.light_off.fraction = 1.0;
    assert_eq!(new_err(c), Some(CuringConfigError::LightOffFraction));
    let mut c = config();
    c.light_off.floor = Irradiance::from_w_per_m2(f64::INFINITY);
    assert_eq!(new_err(c), Some(CuringConfigError::LightOffFloor));
    let mut c = config();
    c.light_off.margin_ticks = i32::MAX as u32;
    assert_eq!(new_err(c), Some(CuringConfigError::LightOffMargin));
    let mut c = config();
    c.lamp = Some(LampReference {
        reference: Irradiance::ZERO,
        maintenance_below: 0.7,
    });
    assert_eq!(new_err(c), Some(CuringConfigError::LampReference));
    let mut c = config();
    c.lamp = Some(LampReference {
        reference: Irradiance::from_w_per_m2(1000.0),
        maintenance_below: 1.5,
    });
    assert_eq!(new_err(c), Some(CuringConfigError::LampFraction));
    // A valid window passes.
    let mut c = config();
    c.window.minimum = min(500.0, 100);
    c.window.maximum = min(2000.0, 100);
    assert_eq!(new_err(c), None);
}

#[test]
fn window_limits_are_net_codes_rounded_to_detect_early() {
    let mut c = config();
    c.window.minimum = Some(IrradianceLimit {
        irradiance: Irradiance::from_w_per_m2(50.5),
        hold_off_ticks: 0,
    });
    c.window.maximum = Some(IrradianceLimit {
        irradiance: Irradiance::from_w_per_m2(205.5),
        hold_off_ticks: 0,
    });
    c.target = RadiantExposure::from_j_per_m2(1e6);
    let r = rig(c);
    // 1 W/m² per code: min ⌈50.5⌉ = 51, max ⌊205.5⌋ = 205;
    // 10 W/m² per code: min ⌈5.05⌉ = 6, max ⌊20.55⌋ = 20.
    assert_eq!(r.c.window_net_codes(RangeIndex(0)), Some((51, 205)));
    assert_eq!(r.c.window_net_codes(RangeIndex(1)), Some((6, 20)));
    assert_eq!(r.c.window_net_codes(RangeIndex(2)), None);
    let r = rig(config());
    assert_eq!(
        r.c.window_net_codes(RangeIndex(0)),
        Some((i32::MIN, i32::MAX))
    );
}

/// Run at a constant net code (1 code = 1 W/m²) every 10 ticks until the stop; return the
/// tick of the reading that issued it.
fn run_until_stop(c: &mut CuringController<Out, Out, In>, net: i32) -> u32 {
    let mut t = 0;
    while c.phase() == CuringPhase::Exposing {
        t += 10;
        feed(c, t, net);
        assert!(t < 100_000, "never stopped");
    }
    t
}

#[test]
fn anticipated_stop_lands_the_tail_on_target() {
    let mut r = rig(config());
    r.c.start(PartId(1), Ticks(0)).unwrap();
    assert!(r.enable.high.get());
    // Dose at reading t (ticks) at 1000 W/m² is t − 5 J/m² (trapezoid from the dark start,
    // computed); the tail is 1000 W/m² × 0.2 s = 200 J/m². t − 5 + 200 ≥ 10 000 first
    // holds at the reading t = 9810 (readings every 10 ticks).
    let t = run_until_stop(&mut r.c, 1000);
    assert_eq!(t, 9810);
    assert_eq!(r.c.phase(), CuringPhase::Stopping);
    assert!(!r.enable.high.get());
    assert!((r.c.predicted_tail().j_per_m2() - 200.0).abs() < 1e-9);
    // The light stays for the 200-tick dead time, then is off.
    let mut t = t;
    let mut saw_off = false;
    while t < 9810 + 300 {
        t += 10;
        let net = if t <= 9810 + 200 { 1000 } else { 0 };
        let u = feed(&mut r.c, t, net);
        saw_off |= u.events.contains(Events::LIGHT_OFF);
    }
    assert!(saw_off);
    assert_eq!(r.c.phase(), CuringPhase::Complete);
    let rec = r.c.finish(Ticks(t)).unwrap();
    assert_eq!(rec.stop_reason, StopReason::Target);
    assert_eq!(rec.stop, Ticks(9810));
    // Delivered: 9805 before the stop + 200 J/m² at full light + ½·1000·0.01 = 5 J/m² of
    // the last trapezoid = 10 010 J/m² (computed), within one sample's 10 J/m².
    assert!((rec.delivered.j_per_m2() - 10_010.0).abs() < 1e-6);
    assert!((rec.after_stop.j_per_m2() - 205.0).abs() < 1e-6);
    assert!((rec.overshoot.j_per_m2() - 10.0).abs() < 1e-6);
    assert!(rec.fault.is_none());
    assert!(rec
        .seen
        .contains(Events::TARGET_REACHED | Events::STOP_ISSUED));
    assert_eq!(r.c.phase(), CuringPhase::Idle);
    assert!(!r.alarm.high.get());
}

#[test]
fn anticipation_works_in_a_less_sensitive_range() {
    // Range 1: 10 W/m² per code, so 100 codes = 1000 W/m²; the dark start is in range 0.
    // Same expectation as in range 0: the stop at the reading t = 9810 (computed).
    let mut r = rig(config());
    r.c.start(PartId(1), Ticks(0)).unwrap();
    let mut t = 0;
    while r.c.phase() == CuringPhase::Exposing {
        t += 10;
        r.c.on_reading(&Reading {
            code: 100,
            range: RangeIndex(1),
            at: Ticks(t),
        })
        .unwrap();
        assert!(t < 100_000);
    }
    assert_eq!(t, 9810);
    assert!((r.c.delivered().j_per_m2() - 9805.0).abs() < 1e-6);
}

#[test]
fn without_anticipation_the_stop_waits_for_the_target() {
    let mut c = config();
    c.stop_policy = StopPolicy::AtTarget;
    let mut r = rig(c);
    r.c.start(PartId(2), Ticks(0)).unwrap();
    // t − 5 ≥ 10 000 (+1 unit) first at the reading t = 10 010; the 200 J/m² tail
    // (E × lag) then comes on top.
    assert_eq!(run_until_stop(&mut r.c, 1000), 10_010);
    let u = feed(&mut r.c, 10_020, 1000);
    assert!(u.events.is_empty());
}

#[test]
fn stop_due_gives_the_exact_tick_for_a_timer() {
    let mut r = rig(config());
    r.c.start(PartId(3), Ticks(0)).unwrap();
    for t in (10..=100).step_by(10) {
        feed(&mut r.c, t, 1000);
    }
    // At t = 100 the dose is 95 J/m²; the stop is due when 95 + (T − 100) + 200 ≥ 10 000,
    // i.e. T = 9805 (computed; a tie is due at the tie).
    assert_eq!(r.c.stop_due(), Some(Ticks(9805)));
    assert_eq!(
        r.c.on_stop_timer(Ticks(9804)).unwrap(),
        TimerOutcome::Rearm(Ticks(9805))
    );
    assert_eq!(r.c.phase(), CuringPhase::Exposing);
    assert_eq!(
        r.c.on_stop_timer(Ticks(9805)).unwrap(),
        TimerOutcome::Stopped
    );
    assert_eq!(r.c.phase(), CuringPhase::Stopping);
    assert!(!r.enable.high.get());
    assert_eq!(r.c.stop_due(), None);
    assert_eq!(
        r.c.on_stop_timer(Ticks(9806)).unwrap(),
        TimerOutcome::NotExposing
    );
    let rec = r.c.finish(Ticks(9810)).unwrap();
    assert_eq!(rec.stop_reason, StopReason::TargetTimer);
    assert_eq!(rec.stop, Ticks(9805));
}

#[test]
fn a_part_started_at_the_tick_of_a_lit_sample_loses_nothing() {
    // Before: start() fed a zero reading at the start tick, so a lit reading at that same
    // tick was a repeat (ignored) and the first interval lost E·Δt/2.
    let mut r = rig(config());
    r.c.start(PartId(4), Ticks(1000)).unwrap();
    let u = feed(&mut r.c, 1000, 1000);
    assert_eq!(u.sample, SampleUse::Integrated);
    feed(&mut r.c, 1010, 1000);
    // 1000 W/m² for 10 ms, exactly.
    assert!((r.c.delivered().j_per_m2() - 10.0).abs() < 1e-12);
}

#[test]
fn a_lit_start_counts_as_the_session_does_and_stops_on_the_exact_sample() {
    // With the light already on, the part counts from its first reading (as Session
    // does): at 1000 W/m² sampled every 10 ticks from t = 0, the dose at reading t is
    // exactly t J/m², so without anticipation the stop is the reading at t = 10 000
    // (10 000 J/m², a tie), not one sample later.
    let mut cfg = config();
    cfg.stop_policy = StopPolicy::AtTarget;
    let mut r = rig(cfg);
    r.c.start_lit(PartId(5), Ticks(0)).unwrap();
    let mut t = 0;
    feed(&mut r.c, 0, 1000);
    while r.c.phase() == CuringPhase::Exposing {
        t += 10;
        feed(&mut r.c, t, 1000);
        assert!(t < 20_000, "never stopped");
    }
    assert_eq!(t, 10_000);
    assert!((r.c.delivered().j_per_m2() - 10_000.0).abs() < 1e-9);
    // A dark start on the same stream adds the ramp from zero at the start tick.
    let mut r = rig(config());
    r.c.start(PartId(6), Ticks(0)).unwrap();
    feed(&mut r.c, 10, 1000);
    assert!((r.c.delivered().j_per_m2() - 5.0).abs() < 1e-12);
}

#[test]
fn stop_due_without_light_has_no_estimate() {
    let mut r = rig(config());
    r.c.start(PartId(4), Ticks(0)).unwrap();
    feed(&mut r.c, 10, 0);
    assert_eq!(r.c.stop_due(), None);
    assert_eq!(
        r.c.on_stop_timer(Ticks(20)).unwrap(),
        TimerOutcome::NoEstimate
    );
}

fn windowed() -> CuringConfig {
    let mut c = config();
    c.window = IrradianceWindow {
        minimum: Some(IrradianceLimit {
            irradiance: Irradiance::from_w_per_m2(500.0),
            hold_off_ticks: 100,
        }),
        maximum: Some(IrradianceLimit {
            irradiance: Irradiance::from_w_per_m2(2000.0),
            hold_off_ticks: 0,
        }),
        warm_up_ticks: 500,
    };
    c
}

#[test]
fn low_irradiance_faults_after_warm_up_and_hold_off() {
    let mut r = rig(windowed());
    r.c.start(PartId(5), Ticks(0)).unwrap();
    let mut warm_seen = false;
    // Below the minimum during the warm-up: no fault, dose counts.
    for t in (10..=490).step_by(10) {
        let u = feed(&mut r.c, t, 300);
        warm_seen |= u.events.contains(Events::WARM_UP_DONE);
    }
    assert!(!warm_seen);
    for t in (500..=1990).step_by(10) {
        let u = feed(&mut r.c, t, 1000);
        warm_seen |= u.events.contains(Events::WARM_UP_DONE);
    }
    assert!(warm_seen);
    assert_eq!(r.c.phase(), CuringPhase::Exposing);
    // Below from 2000 on; the last reading inside was at 1990, so 2090 is 100 ticks
    // (not more) and 2100 is 110 > 100: the fault.
    for t in (2000..=2090).step_by(10) {
        feed(&mut r.c, t, 400);
    }
    assert_eq!(r.c.phase(), CuringPhase::Exposing);
    let u = feed(&mut r.c, 2100, 400);
    assert!(u.events.contains(Events::FAULT));
    assert_eq!(
        r.c.phase(),
        CuringPhase::Faulted(CuringFault::IrradianceLow)
    );
    assert!(!r.enable.high.get());
    assert!(r.alarm.high.get());
    let rec = r.c.finish(Ticks(2110)).unwrap();
    assert_eq!(
        rec.stop_reason,
        StopReason::Fault(CuringFault::IrradianceLow)
    );
    assert_eq!(rec.faults, 1);
    // Peak counts the whole exposure, min only after the warm-up.
    assert_eq!(rec.peak.map(|e| e.w_per_m2()), Some(1000.0));
    assert_eq!(rec.min.map(|e| e.w_per_m2()), Some(400.0));
}

#[test]
fn high_irradiance_with_zero_hold_off_faults_at_once() {
    let mut r = rig(windowed());
    r.c.start(PartId(6), Ticks(0)).unwrap();
    for t in (10..=600).step_by(10) {
        feed(&mut r.c, t, 1000);
    }
    // 2001 codes = 2001 W/m² > 2000 W/m² maximum.
    feed(&mut r.c, 610, 2001);
    assert_eq!(
        r.c.phase(),
        CuringPhase::Faulted(CuringFault::IrradianceHigh)
    );
}

#[test]
fn interlock_pauses_and_only_an_explicit_resume_restarts() {
    let mut r = rig(config());
    r.c.start(PartId(7), Ticks(0)).unwrap();
    for t in (10..=2990).step_by(10) {
        feed(&mut r.c, t, 1000);
    }
    r.door.set(Some(false));
    let u = feed(&mut r.c, 3000, 1000);
    assert!(u.events.contains(Events::INTERLOCK_OPENED | Events::PAUSED));
    assert_eq!(r.c.phase(), CuringPhase::Paused);
    assert!(!r.enable.high.get());
    assert_eq!(
        r.c.resume(Ticks(3005)),
        Err(CuringError::Refused(Refusal::InterlockOpen))
    );
    // Light still seen for the 200-tick dead time, then off.
    let mut off = false;
    for t in (3010..=4990).step_by(10) {
        let net = if t <= 3200 { 1000 } else { 0 };
        off |= feed(&mut r.c, t, net).events.contains(Events::LIGHT_OFF);
    }
    assert!(off);
    r.door.set(Some(true));
    let u = feed(&mut r.c, 5000, 0);
    assert!(u.events.contains(Events::INTERLOCK_CLOSED));
    for t in (5010..=5990).step_by(10) {
        feed(&mut r.c, t, 0);
    }
    assert_eq!(r.c.phase(), CuringPhase::Paused);
    assert!(!r.enable.high.get());
    let ev = r.c.resume(Ticks(5995)).unwrap();
    assert!(ev.contains(Events::RESUMED));
    assert!(r.enable.high.get());
    feed(&mut r.c, 6000, 0);
    let mut t = 6000;
    while r.c.phase() == CuringPhase::Exposing {
        t += 10;
        feed(&mut r.c, t, 1000);
    }
    let rec = r.c.finish(Ticks(t)).unwrap();
    // Paused dose: 200 J/m² at full light for 0.2 s + ½·1000·0.01 = 5 J/m² of the fall
    // trapezoid = 205 J/m² (computed from the trapezoid rule).
    assert!((rec.paused.j_per_m2() - 205.0).abs() < 1e-6);
    assert!(rec.seen.contains(Events::PAUSED | Events::RESUMED));
    assert_eq!(rec.stop_reason, StopReason::Target);
    // The paused dose counts towards the target: the part needs 205 J/m² less light.
    // Exposing: 0..3000 (2995 J/m²) + 6000..stop; the stop comes when the total plus the
    // 200 J/m² tail reaches 10 000.
    assert!(rec.delivered.j_per_m2() >= 10_000.0 - 200.0);
    assert_eq!(
        r.c.resume(Ticks(t)),
        Err(CuringError::Refused(Refusal::NoPart))
    );
}

#[test]
fn stuck_shutter_raises_the_alarm_and_keeps_counting() {
    let mut r = rig(config());
    r.c.start(PartId(8), Ticks(0)).unwrap();
    let stop = run_until_stop(&mut r.c, 1000);
    assert_eq!(stop, 9810);
    // The light never goes off. The deadline is 200 + 50 ticks after the stop: the
    // reading at 10 060 (250 ticks) is still allowed, 10 070 (260) is not.
    for t in (9820..=10_060).step_by(10) {
        let u = feed(&mut r.c, t, 1000);
        assert!(!u.events.contains(Events::LIGHT_NOT_OFF), "at {t}");
    }
    let u = feed(&mut r.c, 10_070, 1000);
    assert!(u.events.contains(Events::LIGHT_NOT_OFF | Events::FAULT));
    assert_eq!(r.c.phase(), CuringPhase::Faulted(CuringFault::LightNotOff));
    assert!(r.alarm.high.get());
    // Keep integrating: the overexposure limit (target + 100 J/m²) is passed too.
    let mut over = false;
    for t in (10_080..=10_200).step_by(10) {
        over |= feed(&mut r.c, t, 1000).events.contains(Events::OVEREXPOSED);
    }
    assert!(over);
    let rec = r.c.finish(Ticks(10_200)).unwrap();
    assert_eq!(rec.stop_reason, StopReason::Target);
    assert_eq!(rec.fault, Some(CuringFault::LightNotOff));
    assert_eq!(rec.faults, 2);
    // 9805 J/m² at the stop + 390 ticks at 1000 W/m² (computed).
    assert!((rec.delivered.j_per_m2() - 10_195.0).abs() < 1e-6);
    assert!((rec.after_stop.j_per_m2() - 390.0).abs() < 1e-6);
    // The alarm stays latched: no new part until acknowledged.
    assert_eq!(r.c.phase(), CuringPhase::Faulted(CuringFault::LightNotOff));
    assert_eq!(
        r.c.start(PartId(9), Ticks(20_000)),
        Err(CuringError::Refused(Refusal::AlarmLatched))
    );
    r.c.acknowledge_alarm().unwrap();
    assert!(!r.alarm.high.get());
    assert_eq!(r.c.phase(), CuringPhase::Idle);
    assert!(r.c.start(PartId(9), Ticks(20_000)).is_ok());
}

#[test]
fn start_refusals_and_pin_errors() {
    let mut r = rig(config());
    r.door.set(Some(false));
    assert_eq!(
        r.c.start(PartId(1), Ticks(0)),
        Err(CuringError::Refused(Refusal::InterlockOpen))
    );
    r.door.set(None);
    assert_eq!(
        r.c.start(PartId(1), Ticks(0)),
        Err(CuringError::Interlock(ErrorKind::Other))
    );
    assert_eq!(r.c.phase(), CuringPhase::Idle);
    r.door.set(Some(true));
    r.c.start(PartId(1), Ticks(0)).unwrap();
    assert_eq!(
        r.c.start(PartId(2), Ticks(1)),
        Err(CuringError::Refused(Refusal::PartActive))
    );
    assert_eq!(
        r.c.resume(Ticks(1)),
        Err(CuringError::Refused(Refusal::NotPaused))
    );
    feed(&mut r.c, 10, 1000);
    // An interlock read error mid-run: the reading is integrated, then the safe state.
    r.door.set(None);
    let e = r.c.on_reading(&Reading {
        code: 1000,
        range: RangeIndex(0),
        at: Ticks(20),
    });
    assert_eq!(e, Err(CuringError::Interlock(ErrorKind::Other)));
    assert_eq!(r.c.phase(), CuringPhase::Faulted(CuringFault::InterlockPin));
    assert!(!r.enable.high.get());
    assert!(r.alarm.high.get());
    // 5 + 10 J/m² (computed).
    assert!((r.c.delivered().j_per_m2() - 15.0).abs() < 1e-9);
}

#[test]
fn output_error_faults() {
    let mut r = rig(config());
    r.enable.fail.set(true);
    assert_eq!(
        r.c.start(PartId(1), Ticks(0)),
        Err(CuringError::Output(crate::control::PinError::Enable(
            ErrorKind::Other
        )))
    );
    assert_eq!(r.c.phase(), CuringPhase::Faulted(CuringFault::Output));
    assert!(r.c.alarm_latched());
    let rec = r.c.finish(Ticks(1)).unwrap();
    assert_eq!(rec.fault, Some(CuringFault::Output));
}

#[test]
fn timing_and_code_faults() {
    let mut r = rig(config());
    r.c.start(PartId(1), Ticks(0)).unwrap();
    feed(&mut r.c, 10, 1000);
    assert_eq!(feed(&mut r.c, 10, 1000).sample, SampleUse::Repeated);
    // Gap of 101 ticks > 100.
    let u = feed(&mut r.c, 111, 1000);
    assert_eq!(
        u.sample,
        SampleUse::Faulted(CuringFault::Gap { ticks: 101 })
    );
    assert_eq!(
        r.c.phase(),
        CuringPhase::Faulted(CuringFault::Gap { ticks: 101 })
    );
    // Faulted parts still integrate later readings.
    feed(&mut r.c, 121, 1000);
    assert!((r.c.delivered().j_per_m2() - 15.0).abs() < 1e-9);
    let rec = r.c.finish(Ticks(121)).unwrap();
    assert!(rec.lamp_ratio.is_none());

    let mut c = config();
    c.max_unusable_run = 1;
    let mut r = rig(c);
    r.c.start(PartId(2), Ticks(0)).unwrap();
    let sat = Reading {
        code: 65_535,
        range: RangeIndex(0),
        at: Ticks(10),
    };
    assert_eq!(
        r.c.on_reading(&sat).unwrap().sample,
        SampleUse::Unusable(CodeFault::SaturatedHigh)
    );
    let sat = Reading {
        at: Ticks(20),
        ..sat
    };
    assert_eq!(
        r.c.on_reading(&sat).unwrap().sample,
        SampleUse::Faulted(CuringFault::Saturated)
    );
    feed(&mut r.c, 30, 1000);
    let back = feed(&mut r.c, 25, 1000);
    assert_eq!(back.sample, SampleUse::Faulted(CuringFault::TimeBackwards));
    let rec = r.c.finish(Ticks(30)).unwrap();
    assert_eq!(rec.faults, 2);
    assert_eq!(rec.fault, Some(CuringFault::Saturated));
}

#[test]
fn lamp_trend_and_maintenance_warning() {
    let mut c = config();
    c.lamp = Some(LampReference {
        reference: Irradiance::from_w_per_m2(1000.0),
        maintenance_below: 0.85,
    });
    let mut r = rig(c);
    let mut t0 = 0u32;
    let mut records = Vec::new();
    for (i, net) in [1000, 900, 800].into_iter().enumerate() {
        let ev = r.c.start(PartId(i as u32), Ticks(t0)).unwrap();
        assert_eq!(ev.contains(Events::LAMP_LOW), i == 3);
        let mut t = t0;
        while r.c.phase() != CuringPhase::Complete {
            t += 10;
            let net = if r.c.phase() == CuringPhase::Exposing {
                net
            } else {
                0
            };
            feed(&mut r.c, t, net);
        }
        records.push(r.c.finish(Ticks(t)).unwrap());
        t0 = t + 1000;
    }
    // Mean while exposing is the irradiance, less the half interval at the dark start
    // (5 J/m²-ish over ~10 s: < 0.1 %).
    for (rec, e) in records.iter().zip([1000.0, 900.0, 800.0]) {
        let ratio = rec.lamp_ratio.unwrap();
        assert!((ratio - e / 1000.0).abs() < 1e-3, "{ratio}");
    }
    assert!(!records[1].seen.contains(Events::LAMP_LOW));
    assert!(records[2].seen.contains(Events::LAMP_LOW));
    let trend = r.c.lamp_trend();
    assert_eq!(trend.parts, 3);
    assert!(trend.maintenance_due);
    // Least-squares slope of (1.0, 0.9, 0.8) is −0.1 per part.
    assert!((trend.slope_per_part.unwrap() + 0.1).abs() < 1e-3);
    assert!((trend.mean_ratio.unwrap() - 0.9).abs() < 1e-3);
    let ev = r.c.start(PartId(9), Ticks(t0)).unwrap();
    assert!(ev.contains(Events::LAMP_LOW));
}

#[test]
fn lamp_history_keeps_the_last_parts_in_order() {
    let mut h = LampHistory::new();
    for i in 0..(LAMP_HISTORY + 3) {
        h.push(i as f64);
    }
    let v: Vec<f64> = h.ordered().collect();
    assert_eq!(v.len(), LAMP_HISTORY);
    assert_eq!(v.first().copied(), Some(3.0));
    assert_eq!(h.latest(), Some((LAMP_HISTORY + 2) as f64));
    assert_eq!(h.parts, (LAMP_HISTORY + 3) as u32);
}

#[test]
fn fall_profile_anticipation_uses_the_integral() {
    // Profile ∫ = 20 ticks: at 1000 W/m² the tail is 20 J/m²; t − 5 + 20 > 10 000 first at
    // the reading t = 9990 (computed).
    let mut c = config();
    c.lag = ActuatorLag::Profile(
        FallProfile::new(&[
            FallPoint {
                after_ticks: 10,
                remaining: 1.0,
            },
            FallPoint {
                after_ticks: 30,
                remaining: 0.0,
            },
        ])
        .unwrap(),
    );
    let mut r = rig(c);
    r.c.start(PartId(1), Ticks(0)).unwrap();
    assert!((r.c.effective_lag().s() - 0.020).abs() < 1e-12);
    assert_eq!(run_until_stop(&mut r.c, 1000), 9990);
}
