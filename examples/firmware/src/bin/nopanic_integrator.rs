//! No-panic link check, API group "integrator" (dose). See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::prelude::*;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

#[entry]
fn main() -> ! {
    let Ok(fe) = front_end() else { done() };
    let Some(m) = meter(fe) else { done() };
    let mut i = Integrator::new(&m, black_box(100));
    i.set_preload(RadiantExposure::from_j_per_m2(black_box(1.5)));
    for k in 0..black_box(8u32) {
        let r = if black_box(k % 2 == 0) {
            Rounding::NotBefore
        } else {
            Rounding::NotAfter
        };
        if let Err(level) = i.add_threshold(RadiantExposure::from_j_per_m2(black_box(k as f64)), r)
        {
            black_box(level);
        }
    }
    let mut t = black_box(0u32);
    for n in 0..black_box(1_000u32) {
        let net = black_box(n as i32 - 500);
        let range = RangeIndex(black_box((n / 100) as u8));
        t = t.wrapping_add(black_box(n % 7));
        match i.accept(net, range, Ticks(t)) {
            Ok(step) => {
                black_box(step.crossed.0);
                black_box(step.interval);
            }
            Err(e) => show(&e),
        }
        if black_box(n % 333 == 0) {
            i.break_run();
        }
    }
    black_box(i.last());
    black_box(i.crossed());
    black_box(i.exposure().mj_per_cm2());
    for r in 0..black_box(5u8) {
        black_box(i.raw_total(RangeIndex(r)));
    }
    i.clear_thresholds();
    black_box(i.crossed());
    done()
}
