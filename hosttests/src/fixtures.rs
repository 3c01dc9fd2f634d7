//! Meters with round numbers for tests and benches.

use photon_ledger::prelude::*;

/// A one-range meter on which one net code is exactly `w_per_m2_per_code` W/m² at `tick_hz`.
///
/// 16-bit unipolar ADC with a 65.536 V reference (1 mV per code), 1 MΩ transimpedance
/// (1 nA per code), certificate factor chosen to give the requested W/m² per code.
pub fn round_meter(w_per_m2_per_code: f64, tick_hz: u32) -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(65.536),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_mohm(1.0),
            dark_offset: 0,
        }],
    )
    .expect("valid front end");
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
            w_per_m2_per_code * 1e9,
        )),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(tick_hz).expect("non-zero tick rate"),
        sample_area: None,
    })
    .expect("valid meter")
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
