//! Test fixtures: meters with round numbers, the one home for every test, bench and example
//! that needs a meter whose figures are easy to check by hand.
//!
//! Compiled for the crate's unit tests and with the internal feature `_test` (enabled by the
//! `hosttests` crate, so integration tests, benches and examples in the workspace use it too).
//! Not part of the firmware API.

use crate::acquire::reading::TickRate;
use crate::frontend::{AdcSpec, AmplifierRange, Coding, FrontEnd, FrontEndError, MAX_RANGES};
use crate::irradiance::{Calibration, Meter, MeterConfig, MeterError};
use crate::quantity::{IrradiancePerCurrent, Transimpedance, Voltage, Wavelength};
use crate::spectral::band::Band;

/// Why a fixture meter could not be built (only for out-of-range arguments).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FixtureError {
    /// The front end rejected a range (a scale not finite and > 0, or more than
    /// [`MAX_RANGES`] ranges).
    FrontEnd(FrontEndError),
    /// The meter rejected the band or the tick rate.
    Meter(MeterError),
    /// A tick rate of 0 or no range given.
    Argument,
}

impl core::fmt::Display for FixtureError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::FrontEnd(e) => write!(f, "fixture front end: {e}"),
            Self::Meter(e) => write!(f, "fixture meter: {e}"),
            Self::Argument => f.write_str("fixture argument out of range"),
        }
    }
}

impl core::error::Error for FixtureError {}

/// A meter on a 16-bit unipolar converter with a 65.536 V reference (1 mV per code), on which
/// one net code in range `r` is exactly `w_per_m2_per_code[r]` W/m² (ranges from most to least
/// sensitive), at `tick_hz` ticks per second, for `band`.
///
/// # Errors
/// [`FixtureError`] for arguments outside the meter's valid ranges.
pub fn round_meter_ranges(
    w_per_m2_per_code: &[f64],
    tick_hz: u32,
    band: Band,
) -> Result<Meter, FixtureError> {
    let first = *w_per_m2_per_code.first().ok_or(FixtureError::Argument)?;
    let mut ranges = [AmplifierRange {
        gain: Transimpedance::from_v_per_a(1e6),
        dark_offset: 0,
    }; MAX_RANGES];
    let n = w_per_m2_per_code.len();
    if n > MAX_RANGES {
        return Err(FixtureError::Argument);
    }
    for (slot, w) in ranges.iter_mut().zip(w_per_m2_per_code) {
        // 1 mV per code through 1 MΩ is 1 nA per code in range 0; a range `w/first` times
        // coarser has `first/w` times the transimpedance.
        slot.gain = Transimpedance::from_v_per_a(1e6 * first / w);
    }
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(65.536),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        ranges.get(..n).ok_or(FixtureError::Argument)?,
    )
    .map_err(FixtureError::FrontEnd)?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
            first * 1e9,
        )),
        band,
        tick_rate: TickRate::from_hz(tick_hz).ok_or(FixtureError::Argument)?,
        sample_area: None,
    })
    .map_err(FixtureError::Meter)
}

/// One range on which one net code is `w_per_m2_per_code` W/m², a 365 nm line.
///
/// # Errors
/// As [`round_meter_ranges`].
pub fn round_meter(w_per_m2_per_code: f64, tick_hz: u32) -> Result<Meter, FixtureError> {
    round_meter_ranges(
        &[w_per_m2_per_code],
        tick_hz,
        Band::Line(Wavelength::from_nm(365.0)),
    )
}

/// Two ranges, 1 W/m² per code in range 0 and 10 W/m² per code in range 1, 1000 ticks/s, a
/// line at `nm`.
///
/// # Errors
/// As [`round_meter_ranges`].
pub fn two_range_meter(nm: f64) -> Result<Meter, FixtureError> {
    round_meter_ranges(&[1.0, 10.0], 1000, Band::Line(Wavelength::from_nm(nm)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::acquire::reading::RangeIndex;

    #[test]
    fn the_round_numbers_are_exact() {
        let m = two_range_meter(365.0).unwrap();
        assert_eq!(m.irradiance(1, RangeIndex(0)).w_per_m2(), 1.0);
        assert_eq!(m.irradiance(1, RangeIndex(1)).w_per_m2(), 10.0);
        let m = round_meter(1e-3, 32_768).unwrap();
        assert!((m.irradiance(1000, RangeIndex(0)).w_per_m2() - 1.0).abs() < 1e-15);
        assert_eq!(
            round_meter(1e-3, 0).map(|_| ()),
            Err(FixtureError::Argument)
        );
    }
}
