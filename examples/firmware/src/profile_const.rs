//! The meter profile of `examples/firmware/profile.toml`, as `photon-review explain --profile`
//! prints it (the same profile's bytes are `examples/firmware/profile.bin`). Generated: do not
//! edit by hand; `hosttests/review/tests/profile.rs` checks that it is current.

use photon_ledger::dose::Rounding;
use photon_ledger::profile::{MeterProfile, ProfileRange, ProfileThreshold};

// Meter profile made by photon-review explain --profile (photon-ledger 0.1.0) from
// examples/firmware/profile.toml (SHA-256 154731bd5e28eef10e451a1bfcb620d840cd1886bea816151f2aec131d06b616).
// The same profile as bytes: examples/firmware/profile.bin (388 bytes, format version 1, CRC-32 0x0F286815).
// Thresholds: 0 = the session target, 1 = target + tolerance.
pub const PROFILE: MeterProfile = MeterProfile {
    codes: (0, 4095),
    saturation_limits: (i32::MIN, 4093),
    volts_per_code_bits: 0x3F4A666666666666, // 0.0008056640625 V
    calibration_bits: 0x415312D000000000, // 5000000 W/m² per A
    photons_per_j_bits: 0x43B9829851AA7659, // 1838199074440239400 1/J
    sample_area_m2_bits: 0, // none
    tick_hz: 1000,
    range_count: 2,
    ranges: [
        ProfileRange {
            transimpedance_bits: 0x412E848000000000, // 1000000 V/A
            dark_offset: 4,
            w_per_m2_per_code_bits: 0x3F70800000000000, // 0.0040283203125 W/m² per code
            unit_mantissa: 1188950301625811, // J/m² per unit = 1188950301625811 · 2^-69
            unit_exponent: -69,
        },
        ProfileRange {
            transimpedance_bits: 0x40C3880000000000, // 10000 V/A
            dark_offset: 3,
            w_per_m2_per_code_bits: 0x3FD9C80000000000, // 0.40283203125 W/m² per code
            unit_mantissa: 3715469692580659, // J/m² per unit = 3715469692580659 · 2^-64
            unit_exponent: -64,
        },
        ProfileRange { transimpedance_bits: 0, dark_offset: 0, w_per_m2_per_code_bits: 0, unit_mantissa: 0, unit_exponent: 0 }, // unused
        ProfileRange { transimpedance_bits: 0, dark_offset: 0, w_per_m2_per_code_bits: 0, unit_mantissa: 0, unit_exponent: 0 }, // unused
    ],
    threshold_count: 2,
    thresholds: [
        ProfileThreshold {
            level_j_per_m2_bits: 0x4069000000000000, // 200 J/m²
            rounding: Rounding::NotBefore,
            limits: [99296970, 992970, 0, 0],
        },
        ProfileThreshold {
            level_j_per_m2_bits: 0x406B800000000000, // 220 J/m²
            rounding: Rounding::NotAfter,
            limits: [109226666, 1092266, 0, 0],
        },
        ProfileThreshold { level_j_per_m2_bits: 0, rounding: Rounding::NotBefore, limits: [0; 4] }, // unused
        ProfileThreshold { level_j_per_m2_bits: 0, rounding: Rounding::NotBefore, limits: [0; 4] }, // unused
    ],
};
