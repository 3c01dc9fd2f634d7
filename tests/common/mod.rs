//! Shared set-up for the integration tests: a meter with round numbers.
#![allow(dead_code)]

use photon_ledger::prelude::*;

/// 12-bit ADC with a 4.096 V reference (1 mV per code), one 100 kΩ range (10 nA per code) and
/// a certificate factor of 1e5 (W/m²)/A, so one net code is 1 mW/m²; 1 kHz ticks; 365 nm line.
pub fn meter() -> Meter {
    meter_with(1000, 365.0)
}

/// The same front end and calibration as [`meter`], at `tick_hz` ticks/s and a line at `nm`.
pub fn meter_with(tick_hz: u32, nm: f64) -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(4.096),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 0,
        }],
    )
    .unwrap();
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e5)),
        band: Band::Line(Wavelength::from_nm(nm)),
        tick_rate: TickRate::from_hz(tick_hz).unwrap(),
        sample_area: Some(Area::from_cm2(1.0)),
    })
    .unwrap()
}

/// A session config with a radiant-exposure target and tolerance in J/m².
pub fn config(target_j_per_m2: f64, tolerance_j_per_m2: f64) -> SessionConfig {
    SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(target_j_per_m2)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(tolerance_j_per_m2)),
        max_gap_ticks: 100,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    }
}

/// A reading in range 0.
pub fn reading(code: i32, at: u32) -> Reading {
    Reading {
        code,
        range: RangeIndex(0),
        at: Ticks(at),
    }
}
