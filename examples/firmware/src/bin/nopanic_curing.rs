//! No-panic link check, API group "curing" (the curing-station controller). See
//! `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;
use core::sync::atomic::{AtomicBool, Ordering};

use cortex_m_rt::entry;
use photon_ledger::control::curing::{CuringConfigError, CuringError};
use photon_ledger::control::PinError;
use photon_ledger::prelude::*;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

/// The guard: open while set.
static GUARD_OPEN: AtomicBool = AtomicBool::new(false);
/// The interlock input fails once while set (then clears itself).
static INTERLOCK_FAILS: AtomicBool = AtomicBool::new(false);

/// An interlock input whose level and errors come through `black_box` (so every path stays).
struct OpaqueInput;

impl embedded_hal::digital::ErrorType for OpaqueInput {
    type Error = PinFault;
}

impl embedded_hal::digital::InputPin for OpaqueInput {
    fn is_high(&mut self) -> Result<bool, PinFault> {
        // Load and store (thumbv6m has no atomic swap); single-threaded here.
        if INTERLOCK_FAILS.load(Ordering::Relaxed) {
            INTERLOCK_FAILS.store(false, Ordering::Relaxed);
            return black_box(Err(PinFault));
        }
        black_box(Ok(!GUARD_OPEN.load(Ordering::Relaxed)))
    }
    fn is_low(&mut self) -> Result<bool, PinFault> {
        self.is_high().map(|h| !h)
    }
}

type Controller = CuringController<OpaquePin, OpaquePin, OpaqueInput>;

fn show_error(e: &CuringError<PinError<PinFault, PinFault>, PinFault>) {
    show(e);
    if let CuringError::Config(c) = e {
        show(c);
    }
}

fn config(lag: ActuatorLag) -> CuringConfig {
    CuringConfig {
        // 20 mJ/cm² at about 80 W/m² (2000 net codes): about 2.5 s.
        target: RadiantExposure::from_mj_per_cm2(20.0),
        tolerance: RadiantExposure::from_mj_per_cm2(2.0),
        lag,
        stop_policy: StopPolicy::Anticipate,
        window: IrradianceWindow {
            minimum: Some(IrradianceLimit {
                irradiance: Irradiance::from_w_per_m2(40.0),
                hold_off_ticks: 50,
            }),
            maximum: Some(IrradianceLimit {
                irradiance: Irradiance::from_w_per_m2(200.0),
                hold_off_ticks: 50,
            }),
            warm_up_ticks: 100,
        },
        light_off: LightOffCheck {
            fraction: 0.05,
            floor: Irradiance::from_w_per_m2(0.5),
            margin_ticks: 30,
        },
        lamp: Some(LampReference {
            reference: Irradiance::from_w_per_m2(80.0),
            maintenance_below: 0.7,
        }),
        max_gap_ticks: 100,
        max_unusable_run: 2,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::Low,
        interlock_closed_level: ActiveLevel::High,
    }
}

fn fall_profile() -> Option<FallProfile> {
    let points = black_box([
        FallPoint {
            after_ticks: 5,
            remaining: 0.5,
        },
        FallPoint {
            after_ticks: 15,
            remaining: 0.1,
        },
        FallPoint {
            after_ticks: 30,
            remaining: 0.0,
        },
    ]);
    // The bad profiles first (not increasing, not ending at zero, empty), then the good one.
    let mut bad = points;
    if let Some(p) = bad.get_mut(1) {
        p.after_ticks = 3;
    }
    if let Err(e) = FallProfile::new(black_box(&bad)) {
        show(&e);
    }
    if let Err(e) = FallProfile::new(black_box(points.get(..2).unwrap_or(&[]))) {
        show(&e);
    }
    if let Err(e) = FallProfile::new(black_box(&[])) {
        show(&e);
    }
    match FallProfile::new(black_box(&points)) {
        Ok(p) => {
            black_box(p.points().len());
            black_box(p.effective_ticks());
            black_box(p.off_after_ticks());
            Some(p)
        }
        Err(e) => {
            show(&e);
            None
        }
    }
}

/// One part: `light_follows` says whether the light goes off after the stop (a stuck shutter
/// when not); `guard_at` opens the guard for 30 readings from that reading on.
#[inline(never)]
fn part(c: &mut Controller, id: u32, t: &mut u32, light_follows: bool, guard_at: Option<u32>) {
    match c.start(PartId(black_box(id)), Ticks(*t)) {
        Ok(ev) => {
            black_box(ev);
        }
        Err(e) => {
            show_error(&e);
            return;
        }
    }
    // A second start is refused.
    if let Err(e) = c.start(PartId(id), Ticks(*t)) {
        show_error(&e);
    }
    let mut light_off_at: Option<u32> = None;
    for n in 0..black_box(600u32) {
        *t = t.wrapping_add(black_box(10));
        if guard_at == Some(n) {
            GUARD_OPEN.store(true, Ordering::Relaxed);
        }
        if guard_at.map(|g| g + 30) == Some(n) {
            GUARD_OPEN.store(false, Ordering::Relaxed);
            match c.resume(Ticks(*t)) {
                Ok(ev) => {
                    black_box(ev);
                }
                Err(e) => show_error(&e),
            }
        }
        if guard_at.map(|g| g + 10) == Some(n) {
            // Refused: the guard is open.
            if let Err(e) = c.resume(Ticks(*t)) {
                show_error(&e);
            }
            match c.poll_interlock(Ticks(*t)) {
                Ok(ev) => {
                    black_box(ev);
                }
                Err(e) => show_error(&e),
            }
        }
        // The light: on while exposing (no lag modelled), or always with a stuck shutter.
        let on = c.phase().is_exposing() || !light_follows;
        let done_or_faulted = matches!(c.phase(), CuringPhase::Complete | CuringPhase::Faulted(_));
        if !done_or_faulted {
            light_off_at = None;
        } else if light_off_at.is_none() {
            light_off_at = Some(n);
        }
        let code = if on { 2_004 + (n % 5) as i32 } else { 4 };
        // A saturated code, a repeated timestamp.
        let code = if n == 40 { 4_095 } else { code };
        let at = if n == 60 { t.wrapping_sub(10) } else { *t };
        if n == 60 {
            *t = at;
        }
        let r = Reading {
            code: black_box(code),
            range: RangeIndex(black_box(0)),
            at: Ticks(black_box(at)),
        };
        match c.on_reading(&r) {
            Ok(u) => {
                black_box(u);
            }
            Err(e) => show_error(&e),
        }
        black_box(c.stop_due());
        if n % 50 == 25 {
            match c.on_stop_timer(Ticks(t.wrapping_add(black_box(5)))) {
                Ok(o) => {
                    black_box(o);
                }
                Err(e) => show_error(&e),
            }
        }
        if let CuringPhase::Faulted(f) = c.phase() {
            black_box(f.is_measurement_fault());
            show(&f);
        }
        if light_off_at.is_some_and(|s| n > s + 20) {
            break;
        }
    }
    black_box(c.delivered().j_per_m2());
    black_box(c.irradiance().w_per_m2());
    black_box(c.predicted_tail().j_per_m2());
    black_box(c.effective_lag().s());
    black_box(c.window_net_codes(RangeIndex(black_box(0))));
    black_box(c.window_net_codes(RangeIndex(black_box(7))));
    black_box(c.integrator().exposure().j_per_m2());
    black_box(c.config().target.j_per_m2());
    match c.finish(Ticks(*t)) {
        Ok(rec) => {
            black_box(rec);
        }
        Err(e) => show_error(&e),
    }
    // A second finish is refused.
    if let Err(e) = c.finish(Ticks(*t)) {
        show_error(&e);
    }
    if c.alarm_latched() {
        // No part is active any more, so the acknowledgement is accepted.
        if let Err(e) = c.acknowledge_alarm() {
            show_error(&e);
        }
    }
    black_box(c.lamp_trend());
}

#[entry]
fn main() -> ! {
    let Ok(fe) = front_end() else { done() };
    let Some(m) = meter(fe) else { done() };
    let Some(profile) = fall_profile() else {
        done()
    };
    let lag = ActuatorLag::Profile(profile);
    black_box(lag.effective_ticks());
    black_box(lag.off_after_ticks());
    // An invalid configuration first (minimum above maximum).
    let mut bad = config(ActuatorLag::Delay {
        ticks: black_box(5),
    });
    if let Some(min) = bad.window.minimum.as_mut() {
        min.irradiance = Irradiance::from_w_per_m2(black_box(500.0));
    }
    match Controller::new(m.clone(), black_box(bad), OpaquePin, OpaquePin, OpaqueInput) {
        Ok(c) => {
            black_box(c.release());
        }
        Err(e) => show_error(&e),
    }
    black_box(CuringConfigError::LagTooLong);
    let mut c = match Controller::new(m, black_box(config(lag)), OpaquePin, OpaquePin, OpaqueInput)
    {
        Ok(c) => c,
        Err(e) => {
            show_error(&e);
            done()
        }
    };
    let mut t = 0u32;
    // 1: a normal part; 2: the guard opens mid-run; 3: the interlock input fails once;
    // 4: a stuck shutter (the light stays on after the stop); 5: a part after the
    // acknowledgement; then an external fault without a part.
    part(&mut c, 1, &mut t, true, None);
    part(&mut c, 2, &mut t, true, Some(black_box(100)));
    INTERLOCK_FAILS.store(black_box(true), Ordering::Relaxed);
    part(&mut c, 3, &mut t, true, None);
    part(&mut c, 4, &mut t, false, None);
    part(&mut c, 5, &mut t, true, None);
    match c.fault(CuringFault::Aborted, Ticks(t)) {
        Ok(ev) => {
            black_box(ev);
        }
        Err(e) => show_error(&e),
    }
    if let Err(e) = c.start(PartId(6), Ticks(t)) {
        show_error(&e);
    }
    if let Err(e) = c.acknowledge_alarm() {
        show_error(&e);
    }
    if let Err(e) = c.poll_interlock(Ticks(t)) {
        show_error(&e);
    }
    if let Err(e) = c.resume(Ticks(t)) {
        show_error(&e);
    }
    let trend = c.lamp_trend();
    black_box(trend.parts);
    black_box(trend.slope_per_part);
    black_box(c.phase());
    black_box(c.meter().tick_rate());
    black_box(c.release());
    done()
}
