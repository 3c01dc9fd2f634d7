//! No-panic link check, API groups "exposure" (weighted dose, rolling window, exposure monitor,
//! solar monitor, sampling plan, display lines) and "plausibility". See
//! `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::control::exposure::display::{dose_line, solar_line};
use photon_ledger::control::exposure::ExposureError;
use photon_ledger::control::exposure::{
    ExposureConfig, ExposureMonitor, OffTime, RollingWindow, SamplingPlan, SolarMonitor,
    WeightFactor, WeightedDose,
};
use photon_ledger::control::plausibility::{Plausibility, PlausibilityConfig};
use photon_ledger::prelude::*;
use photon_ledger::spectral::weighting::UvIndexCategory;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

/// An opaque reading: code, range and tick all come through `black_box`.
fn reading(code: i32, range: u8, at: u32) -> Reading {
    Reading {
        code: black_box(code),
        range: RangeIndex(black_box(range)),
        at: Ticks(black_box(at)),
    }
}

#[inline(never)]
fn accrual(m: &Meter, w: WeightFactor) {
    // A valid and an invalid maximum gap: both paths run.
    for max_gap in [black_box(100u32), black_box(0u32)] {
        let mut a = match WeightedDose::new(m, w, max_gap) {
            Ok(a) => a,
            Err(e) => {
                show(&e);
                continue;
            }
        };
        let mut t = 0u32;
        for n in 0..black_box(300u32) {
            // Mostly forward steps, with a repeat, a step back, a gap and an unknown range.
            let step = match n % 50 {
                7 => 0,
                13 => u32::MAX - 4,
                29 => 500,
                _ => 10,
            };
            t = t.wrapping_add(black_box(step));
            black_box(a.advance_clock(Ticks(t)));
            let range = if n % 97 == 96 { 9 } else { (n / 150) as u8 };
            match a.accept(
                black_box(2000 - (n % 7) as i32),
                RangeIndex(range),
                Ticks(t),
            ) {
                Ok(x) => {
                    black_box(x);
                }
                Err(e) => show(&e),
            }
        }
        black_box(a.effective_irradiance(m).w_per_m2());
        black_box(a.to_exposure(a.total_units()).j_per_m2());
        black_box(a.to_exposure(a.gap_units()).j_per_m2());
        black_box(a.level_units(RadiantExposure::from_j_per_m2(black_box(30.0))));
        black_box(a.now());
        a.break_run();
        black_box(a.integrator().exposure_bound().j_per_m2());
    }
}

#[inline(never)]
fn rolling_window() {
    for (window, bucket) in [
        (black_box(8_000u64), black_box(1_000u64)),
        (black_box(8_000), black_box(0)),
        (black_box(80_000), black_box(1_000)),
    ] {
        let mut w = match RollingWindow::<9>::new(window, bucket) {
            Ok(w) => w,
            Err(e) => {
                show(&e);
                continue;
            }
        };
        let mut t = 0u64;
        let mut total = 0u128;
        for n in 0..black_box(100u64) {
            t = t.wrapping_add(black_box(if n == 50 { u64::MAX - 10 } else { 250 }));
            total = total.wrapping_add(black_box(u128::from(n) << 40));
            w.roll_to(t, total);
        }
        w.reset(black_box(u128::MAX));
        black_box(w.total(total));
        black_box(w.complete_total());
        black_box(w.buckets());
        black_box(w.bucket_ticks());
    }
}

#[inline(never)]
fn monitor(m: &Meter, w: WeightFactor) {
    let good = ExposureConfig {
        window_ticks: 8_000,
        bucket_ticks: 1_000,
        limit: RadiantExposure::from_j_per_m2(30.0),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 100,
    };
    let bad = ExposureConfig {
        levels: [0.5, 0.4, 1.0],
        ..good
    };
    for config in [black_box(good), black_box(bad)] {
        let pins = [OpaquePin, OpaquePin, OpaquePin];
        let mut mon = match ExposureMonitor::<9, 3, OpaquePin>::new(m.clone(), w, config, pins) {
            Ok(mon) => mon,
            Err(ExposureError::Config(e)) => {
                show(&e);
                continue;
            }
            Err(ExposureError::Pin(e)) => {
                black_box(e);
                continue;
            }
        };
        let mut t = 0u32;
        for n in 0..black_box(1_500u32) {
            t = t.wrapping_add(black_box(if n % 200 == 150 { 400 } else { 10 }));
            // Bright, then dark: levels rise, latch, and clear.
            let code = if n < 1_000 { 4_000 } else { 4 };
            let code = if n % 333 == 1 { 4_095 } else { code };
            match mon.on_reading(&reading(code, 0, t)) {
                Ok(c) => {
                    black_box(c);
                }
                Err(e) => {
                    black_box(e);
                }
            }
        }
        t = t.wrapping_add(black_box(20_000));
        match mon.tick(Ticks(t)) {
            Ok(c) => {
                black_box(c);
            }
            Err(e) => {
                black_box(e);
            }
        }
        match mon.acknowledge() {
            Ok(active) => {
                black_box(active);
            }
            Err(e) => {
                black_box(e);
            }
        }
        black_box(mon.set_dark_offset(RangeIndex(black_box(0)), black_box(3)));
        black_box(mon.window_units());
        black_box(mon.limit_units());
        black_box(mon.shift_totals());
        black_box(mon.end_shift());
        black_box(mon.window_exposure().j_per_m2());
        black_box(mon.fraction_used());
        black_box(mon.time_left().map(|s| s.s()));
        black_box(mon.effective_irradiance().w_per_m2());
        black_box(mon.active_levels());
        black_box(mon.alarm_latched());
        black_box(mon.meter().tick_rate());
        let line = dose_line(mon.fraction_used(), mon.time_left());
        black_box(line.as_str().len());
        // Checkpoint and resume after a reset, with an unknown and a known off time.
        let state = black_box(mon.state());
        let pins = mon.release();
        let off = if black_box(t) % 2 == 0 {
            OffTime::Unknown
        } else {
            OffTime::Ticks(black_box(12_345))
        };
        match ExposureMonitor::<9, 3, OpaquePin>::resume(m.clone(), w, config, pins, &state, off) {
            Ok(mon) => {
                black_box(mon.shift_totals());
                black_box(mon.release());
            }
            Err(e) => {
                black_box(e);
            }
        }
    }
}

#[inline(never)]
fn solar(m: &Meter) {
    let erythema = WeightFactor::from_ratio(black_box(0.02)).unwrap_or(WeightFactor::UNWEIGHTED);
    for averaging in [black_box(5_000u64), black_box(5_500u64)] {
        let mut s =
            match SolarMonitor::<7>::new(m.clone(), erythema, averaging, 1_000, black_box(100)) {
                Ok(s) => s,
                Err(e) => {
                    show(&e);
                    continue;
                }
            };
        let mut t = 0u32;
        for n in 0..black_box(1_000u32) {
            t = t.wrapping_add(black_box(if n == 500 { 300 } else { 10 }));
            match s.accept(black_box(1_500 + (n % 3) as i32), RangeIndex(0), Ticks(t)) {
                Ok(g) => {
                    black_box(g);
                }
                Err(e) => show(&e),
            }
        }
        match s.on_reading(&reading(4_095, 0, t.wrapping_add(10))) {
            Ok(g) => {
                black_box(g);
            }
            Err(e) => show(&e),
        }
        black_box(s.uv_index().value());
        let (uvi, cat) = s.uv_index_reported();
        black_box(s.uv_index_now().value());
        let line = solar_line(uvi, cat, s.day_sed());
        black_box(line.as_str().len());
        s.reset_day();
        black_box(s.day_sed());
    }
}

#[inline(never)]
fn display_lines() {
    for (f, t) in [
        (black_box(0.42), black_box(Some(11_220.0))),
        (black_box(-1.0), black_box(None)),
        (black_box(1.5), black_box(Some(0.0))),
        (black_box(f64::NAN), black_box(Some(f64::INFINITY))),
        (black_box(0.1), black_box(Some(59.9))),
    ] {
        let line = dose_line(f, t.map(Seconds::from_s));
        black_box(line.as_str());
        black_box(line.len());
        black_box(line.is_empty());
    }
    for (uvi, cat, sed) in [
        (black_box(7u32), UvIndexCategory::High, black_box(1.25)),
        (
            black_box(u32::MAX),
            UvIndexCategory::Extreme,
            black_box(1e9),
        ),
        (black_box(0), UvIndexCategory::Low, black_box(f64::NAN)),
    ] {
        black_box(solar_line(uvi, black_box(cat), sed).as_str());
    }
}

#[inline(never)]
fn sampling() {
    let plan = black_box(SamplingPlan {
        slow_ticks: 10_000,
        fast_ticks: 500,
        change: 0.2,
        floor: Irradiance::from_w_per_m2(0.01),
    });
    for (a, b) in [
        (black_box(1.0), black_box(1.05)),
        (black_box(1.0), black_box(2.0)),
        (black_box(0.0), black_box(0.001)),
    ] {
        black_box(plan.next_delay(Irradiance::from_w_per_m2(a), Irradiance::from_w_per_m2(b)));
    }
}

#[inline(never)]
fn plausibility(m: &Meter) {
    let good = PlausibilityConfig {
        stuck_samples: 20,
        pinned_samples: 5,
        dark_sigma_codes: 1.5,
        negative_k: 4.0,
        max_rate_w_per_m2_s: 1.0e4,
        transition_ticks: 50,
        dark_drift_codes: 3,
        flap_limit: 3,
        flap_window: 16,
    };
    let bad = PlausibilityConfig {
        stuck_samples: 1,
        ..good
    };
    for config in [black_box(good), black_box(bad)] {
        let mut p = match Plausibility::new(m, config) {
            Ok(p) => p,
            Err(e) => {
                show(&e);
                continue;
            }
        };
        let mut t = 0u32;
        for n in 0..black_box(400u32) {
            t = t.wrapping_add(black_box(10));
            // Noise, then stuck, a rail, a jump, a negative code and range changes.
            let code = match n {
                0..=99 => 2_000 + (n % 5) as i32,
                100..=149 => 2_000,
                150..=159 => 4_095,
                160..=169 => 0,
                170 => 100,
                _ => 1_000 + (n % 3) as i32,
            };
            let range = if (200..230).contains(&n) {
                (n % 2) as u8
            } else {
                0
            };
            let r = reading(code, range, t);
            let net = m.front_end().net_code(&r).ok();
            if let Err(e) = p.check(&r, net, black_box(n % 120 != 0)) {
                black_box(e.code());
                show(&e);
            }
        }
        for (r, d) in [(0u8, 4), (0, 5), (0, 20), (1, 3), (7, 3)] {
            if let Err(e) = p.dark_capture(RangeIndex(black_box(r)), black_box(d)) {
                show(&e);
            }
        }
        p.reset();
        black_box(&p);
    }
}

#[entry]
fn main() -> ! {
    let Ok(fe) = front_end() else { done() };
    let Some(m) = meter(fe) else { done() };
    let w = WeightFactor::from_ratio(black_box(0.5)).unwrap_or(WeightFactor::UNWEIGHTED);
    black_box(w.ratio());
    black_box(WeightFactor::from_ratio(black_box(f64::NAN)));
    accrual(&m, w);
    rolling_window();
    monitor(&m, w);
    solar(&m);
    display_lines();
    sampling();
    plausibility(&m);
    done()
}
