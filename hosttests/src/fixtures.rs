//! Meters with round numbers for tests and benches.

use photon_ledger::prelude::*;

/// A one-range meter on which one net code is exactly `w_per_m2_per_code` W/m² at `tick_hz`
/// (the library's fixture, [`photon_ledger::fixtures::round_meter`]).
pub fn round_meter(w_per_m2_per_code: f64, tick_hz: u32) -> Meter {
    photon_ledger::fixtures::round_meter(w_per_m2_per_code, tick_hz).expect("valid round meter")
}

/// Radiant exposure (J/m²) of a naive `f32` running sum of `n` equal steps of
/// `irradiance × dt` — the accumulator the library does not use.
pub fn naive_f32_exposure(irradiance_w_per_m2: f32, dt_s: f32, n: u64) -> f32 {
    let step = irradiance_w_per_m2 * dt_s;
    let mut sum = 0.0f32;
    for _ in 0..n {
        sum = core::hint::black_box(sum + step);
    }
    sum
}

/// Radiant exposure (J/m²) from the library's integrator after `n` intervals of `dt_ticks`
/// at a constant net code.
pub fn integrator_exposure(meter: &Meter, net: i32, dt_ticks: u32, n: u64) -> f64 {
    let mut i = Integrator::new(meter, dt_ticks);
    let mut t = Ticks(0);
    let _ = i.accept(net, RangeIndex(0), t);
    for _ in 0..n {
        t = t.wrapping_add(dt_ticks);
        let _ = core::hint::black_box(i.accept(core::hint::black_box(net), RangeIndex(0), t));
    }
    i.exposure().j_per_m2()
}
