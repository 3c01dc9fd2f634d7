//! Test fixtures: meters with round numbers, the one home for every test, bench and example
//! that needs a meter whose figures are easy to check by hand.
//!
//! Compiled for the crate's unit tests and with the internal feature `_test` (enabled by the
//! `hosttests` crate, so integration tests, benches and examples in the workspace use it too).
//! Not part of the firmware API.

use crate::acquire::reading::TickRate;
use crate::frontend::{AdcSpec, AmplifierRange, Coding, FrontEnd, FrontEndError, MAX_RANGES};
use crate::irradiance::{Calibration, Meter, MeterConfig, MeterError};
use crate::quantity::{
    Area, IrradiancePerCurrent, Responsivity, Transimpedance, Voltage, Wavelength,
};
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

/// The workbench meter of the journal, resume and throughput tests and the power-cut example:
/// a 12-bit unipolar converter on a 3.3 V reference (saturation margin 2 codes), one 100 kΩ
/// range with a dark offset of 4 codes, a photodiode of 0.2 A/W over 1 mm², a 365 nm line, at
/// `tick_hz` ticks per second (> 0). No sample area.
///
/// # Errors
/// [`FixtureError::Argument`] for a tick rate of 0.
pub fn bench_meter(tick_hz: u32) -> Result<Meter, FixtureError> {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 4,
        }],
    )
    .map_err(FixtureError::FrontEnd)?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(tick_hz).ok_or(FixtureError::Argument)?,
        sample_area: None,
    })
    .map_err(FixtureError::Meter)
}

/// The milliwatt meter of the integration tests: a 12-bit unipolar converter on a 4.096 V
/// reference (1 mV per code), one 100 kΩ range (10 nA per code) and a certificate factor of
/// 1e5 (W/m²)/A, so one net code is exactly 1 mW/m²; a line at `nm` (> 0), `tick_hz` ticks
/// per second (> 0), a sample area of 1 cm².
///
/// # Errors
/// [`FixtureError`] for a tick rate of 0 or a wavelength the band refuses.
pub fn milliwatt_meter(tick_hz: u32, nm: f64) -> Result<Meter, FixtureError> {
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
    .map_err(FixtureError::FrontEnd)?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e5)),
        band: Band::Line(Wavelength::from_nm(nm)),
        tick_rate: TickRate::from_hz(tick_hz).ok_or(FixtureError::Argument)?,
        sample_area: Some(Area::from_cm2(1.0)),
    })
    .map_err(FixtureError::Meter)
}

/// An output (and input) pin that records what was written: its level, how many writes it
/// took, and how many of them went high. Never fails; reading it as an input gives the level
/// last written (an interlock wired to it reads closed while it is high).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct RecordingPin {
    /// The level last written (`true` = high); low before the first write.
    pub high: bool,
    /// Writes so far.
    pub writes: u32,
    /// Writes that set the pin high.
    pub rises: u32,
}

impl RecordingPin {
    /// A pin that reads high (for an interlock input that starts closed).
    pub const fn high() -> Self {
        Self {
            high: true,
            writes: 0,
            rises: 0,
        }
    }
}

impl embedded_hal::digital::ErrorType for RecordingPin {
    type Error = core::convert::Infallible;
}

impl embedded_hal::digital::OutputPin for RecordingPin {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        self.high = false;
        self.writes = self.writes.saturating_add(1);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        self.high = true;
        self.writes = self.writes.saturating_add(1);
        self.rises = self.rises.saturating_add(1);
        Ok(())
    }
}

impl embedded_hal::digital::InputPin for RecordingPin {
    fn is_high(&mut self) -> Result<bool, Self::Error> {
        Ok(self.high)
    }
    fn is_low(&mut self) -> Result<bool, Self::Error> {
        Ok(!self.high)
    }
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
        // 1 mV per code / 100 kΩ = 10 nA per code; × 1e5 (W/m²)/A = 1 mW/m² per code.
        let m = milliwatt_meter(1000, 365.0).unwrap();
        assert!((m.irradiance(1000, RangeIndex(0)).w_per_m2() - 1.0).abs() < 1e-12);
        assert_eq!(bench_meter(0).map(|_| ()), Err(FixtureError::Argument));
    }

    #[test]
    fn the_recording_pin_records() {
        use embedded_hal::digital::{InputPin, OutputPin};
        let mut p = RecordingPin::default();
        assert!(!p.high);
        p.set_high().unwrap();
        p.set_high().unwrap();
        p.set_low().unwrap();
        assert_eq!((p.high, p.writes, p.rises), (false, 3, 2));
        assert_eq!(p.is_low(), Ok(true));
        assert_eq!(RecordingPin::high().is_high(), Ok(true));
    }
}
