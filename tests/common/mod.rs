//! Shared set-up for the integration tests: a meter with round numbers.
#![allow(dead_code)]

use photon_ledger::prelude::*;

/// The workspace fixture [`photon_ledger::fixtures::milliwatt_meter`]: one net code is
/// exactly 1 mW/m²; 1 kHz ticks; 365 nm line; a sample area of 1 cm².
pub fn meter() -> Meter {
    meter_with(1000, 365.0)
}

/// The same meter at `tick_hz` ticks/s and a line at `nm`.
pub fn meter_with(tick_hz: u32, nm: f64) -> Meter {
    photon_ledger::fixtures::milliwatt_meter(tick_hz, nm).unwrap()
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
