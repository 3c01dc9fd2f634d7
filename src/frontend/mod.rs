//! Front end: raw ADC code → volts → photocurrent, per amplifier range, with dark offset and
//! saturation flags.
//!
//! The analog chain is photodiode → transimpedance amplifier (one feedback resistor per
//! range) → optional PGA → ADC. For a code `c` in range `r`:
//!
//! ```text
//! net   = c − dark_offset[r]                      (codes, integer)
//! volts = net × V_ref / (2^bits × pga_gain)       (unipolar: full scale = V_ref)
//!        (bipolar: 2^(bits−1) codes span ±V_ref)
//! amps  = volts / R_f[r]                          (transimpedance gain, V/A)
//! ```
//!
//! The conversion factors are computed once, here, at configuration time; the dose engine
//! only ever sees the integer `net` and multiplies by the factor at read-out.
//!
//! A code at (or within `saturation_margin` codes of) either rail of the converter is
//! **saturated**: the true signal is unknown, so it is flagged ([`CodeFault`]) and never used
//! as a value. For a unipolar converter the bottom rail is a legitimate dark reading and is not
//! flagged.
//!
//! [`autorange`] chooses the next amplifier range from each [`Sample`], with hysteresis, and
//! drives the analog switch.

pub mod autorange;

use crate::acquire::reading::{RangeIndex, Reading};
use crate::quantity::{Current, Transimpedance, Voltage};

/// The largest number of amplifier ranges a front end can describe.
pub const MAX_RANGES: usize = 4;

/// Output coding of the ADC.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Coding {
    /// Codes `0 ..= 2^bits − 1` span `0 ..= V_ref` (the usual on-chip ADC). Default.
    #[default]
    Unipolar,
    /// Two's-complement codes `−2^(bits−1) ..= 2^(bits−1) − 1` span `−V_ref ..= V_ref`
    /// (for example the ADS1115 with its full-scale range as `V_ref`).
    Bipolar,
}

/// The converter: resolution, reference, gain and coding.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdcSpec {
    /// Resolution in bits. Valid range: 8 ..= 24.
    pub bits: u8,
    /// Reference (full-scale) voltage. Valid range: finite, > 0.
    pub reference: Voltage,
    /// Gain of a programmable amplifier in front of the ADC (1.0 if none). Valid: finite, > 0.
    pub pga_gain: f64,
    /// Output coding.
    pub coding: Coding,
    /// Codes this close to a rail count as saturated. Valid range: `0 ..< 2^(bits−2)`.
    pub saturation_margin: u32,
}

/// One transimpedance range of the photodiode amplifier.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AmplifierRange {
    /// Feedback resistance (transimpedance gain). Valid range: finite, > 0.
    pub gain: Transimpedance,
    /// Code read in the dark in this range (dark current plus amplifier offset), in ADC codes.
    /// Valid range: inside the converter's code range.
    pub dark_offset: i32,
}

/// Why a front-end configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum FrontEndError {
    /// `bits` outside 8 ..= 24.
    Resolution,
    /// Reference voltage not finite or ≤ 0.
    Reference,
    /// PGA gain not finite or ≤ 0.
    PgaGain,
    /// Saturation margin too large for the resolution.
    SaturationMargin,
    /// No amplifier range given.
    NoRanges,
    /// More than [`MAX_RANGES`] ranges.
    TooManyRanges,
    /// Range `n` has a transimpedance that is not finite or ≤ 0.
    Gain(u8),
    /// Range `n` has a dark offset outside the code range.
    DarkOffset(u8),
    /// Ranges are not ordered from most sensitive (largest gain) to least.
    RangeOrder,
}

impl core::fmt::Display for FrontEndError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Resolution => f.write_str("ADC resolution must be 8 to 24 bits"),
            Self::Reference => f.write_str("ADC reference voltage must be finite and > 0"),
            Self::PgaGain => f.write_str("PGA gain must be finite and > 0"),
            Self::SaturationMargin => f.write_str("saturation margin too large"),
            Self::NoRanges => f.write_str("at least one amplifier range is required"),
            Self::TooManyRanges => f.write_str("too many amplifier ranges"),
            Self::Gain(n) => write!(f, "range {n}: transimpedance must be finite and > 0"),
            Self::DarkOffset(n) => write!(f, "range {n}: dark offset outside the code range"),
            Self::RangeOrder => {
                f.write_str("ranges must go from largest to smallest transimpedance")
            }
        }
    }
}

impl core::error::Error for FrontEndError {}

/// Why a reading cannot be used as a value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CodeFault {
    /// The code is at or near the top rail: the signal is above what this range can measure.
    SaturatedHigh,
    /// The code is at or near the bottom rail of a bipolar converter.
    SaturatedLow,
    /// The code is outside the converter's code range (a driver or wiring fault).
    OutOfRange,
    /// The reading names a range the front end does not have.
    UnknownRange,
}

impl core::fmt::Display for CodeFault {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::SaturatedHigh => "ADC code saturated at the top rail",
            Self::SaturatedLow => "ADC code saturated at the bottom rail",
            Self::OutOfRange => "ADC code outside the converter's range",
            Self::UnknownRange => "reading names an unknown amplifier range",
        })
    }
}

/// A reading with the front end's verdict on it: its net (dark-corrected) code, or why it
/// cannot be used. Computed once per reading ([`FrontEnd::sample`]) and passed to every
/// consumer — the autoranger, the plausibility checks and the controllers — so no stage
/// recomputes it with a dark offset of its own.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Sample {
    /// The reading as taken.
    pub reading: Reading,
    /// Its net code ([`FrontEnd::net_code`]).
    pub net: Result<i32, CodeFault>,
}

/// A validated front end: conversion factors per range, computed once.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrontEnd {
    min_code: i32,
    max_code: i32,
    low_limit: i32,
    high_limit: i32,
    volts_per_code: f64,
    ranges: heapless::Vec<AmplifierRange, MAX_RANGES>,
}

impl FrontEnd {
    /// Validate the converter and the amplifier ranges (most sensitive first).
    ///
    /// # Errors
    /// A [`FrontEndError`] naming the first invalid value.
    pub fn new(adc: AdcSpec, ranges: &[AmplifierRange]) -> Result<Self, FrontEndError> {
        if !(8..=24).contains(&adc.bits) {
            return Err(FrontEndError::Resolution);
        }
        let v_ref = adc.reference.v();
        if !v_ref.is_finite() || v_ref <= 0.0 {
            return Err(FrontEndError::Reference);
        }
        if !adc.pga_gain.is_finite() || adc.pga_gain <= 0.0 {
            return Err(FrontEndError::PgaGain);
        }
        let bits = u32::from(adc.bits);
        if adc.saturation_margin >= (1u32 << (bits - 2)) {
            return Err(FrontEndError::SaturationMargin);
        }
        // bits ≤ 24 so every shift and cast below is in range.
        let full = 1i32 << bits;
        let half = 1i32 << (bits - 1);
        let margin = adc.saturation_margin as i32;
        let (min_code, max_code, volts_per_code) = match adc.coding {
            Coding::Unipolar => (0, full - 1, v_ref / f64::from(full) / adc.pga_gain),
            Coding::Bipolar => (-half, half - 1, v_ref / f64::from(half) / adc.pga_gain),
        };
        let low_limit = match adc.coding {
            Coding::Unipolar => i32::MIN,
            Coding::Bipolar => min_code + margin,
        };
        let high_limit = max_code - margin;
        if ranges.is_empty() {
            return Err(FrontEndError::NoRanges);
        }
        let mut stored = heapless::Vec::new();
        let mut previous_gain = f64::INFINITY;
        // `0u8..` could overflow (and panic) as far as the compiler knows; the loop returns
        // by the fifth range at the latest (TooManyRanges), long before 255.
        for (n, r) in (0u8..=u8::MAX).zip(ranges.iter()) {
            let g = r.gain.v_per_a();
            if !g.is_finite() || g <= 0.0 {
                return Err(FrontEndError::Gain(n));
            }
            if g >= previous_gain {
                return Err(FrontEndError::RangeOrder);
            }
            previous_gain = g;
            if r.dark_offset < min_code || r.dark_offset > max_code {
                return Err(FrontEndError::DarkOffset(n));
            }
            stored.push(*r).map_err(|_| FrontEndError::TooManyRanges)?;
        }
        Ok(Self {
            min_code,
            max_code,
            low_limit,
            high_limit,
            volts_per_code,
            ranges: stored,
        })
    }

    /// A front end from values validated elsewhere (a [`MeterProfile`], checked with integer
    /// arithmetic only): no floating-point operation.
    ///
    /// [`MeterProfile`]: crate::profile::MeterProfile
    pub(crate) const fn from_parts(
        (min_code, max_code): (i32, i32),
        (low_limit, high_limit): (i32, i32),
        volts_per_code: f64,
        ranges: heapless::Vec<AmplifierRange, MAX_RANGES>,
    ) -> Self {
        Self {
            min_code,
            max_code,
            low_limit,
            high_limit,
            volts_per_code,
            ranges,
        }
    }

    /// The lowest code counted as saturated at the low rail (`i32::MIN` for a unipolar
    /// converter, which has no low saturation).
    #[must_use]
    pub const fn low_limit(&self) -> i32 {
        self.low_limit
    }

    /// Number of amplifier ranges (1 ..= [`MAX_RANGES`]).
    #[must_use]
    pub fn range_count(&self) -> usize {
        self.ranges.len()
    }

    /// The amplifier range `r`, if it exists.
    #[must_use]
    pub fn range(&self, r: RangeIndex) -> Option<&AmplifierRange> {
        self.ranges.get(usize::from(r.0))
    }

    /// The converter's bottom code (0, or −2^(bits−1) for bipolar coding).
    #[must_use]
    pub const fn min_code(&self) -> i32 {
        self.min_code
    }

    /// The converter's top code (2^bits − 1, or 2^(bits−1) − 1 for bipolar coding).
    #[must_use]
    pub const fn max_code(&self) -> i32 {
        self.max_code
    }

    /// Largest code that is still a valid value (top rail minus the saturation margin).
    #[must_use]
    pub const fn high_limit(&self) -> i32 {
        self.high_limit
    }

    /// Dark-corrected code of a reading, or why it cannot be used.
    ///
    /// # Errors
    /// [`CodeFault`] when the code is saturated, out of the converter's range, or the range is
    /// unknown.
    pub fn net_code(&self, reading: &Reading) -> Result<i32, CodeFault> {
        let range = self.range(reading.range).ok_or(CodeFault::UnknownRange)?;
        let c = reading.code;
        if c < self.min_code || c > self.max_code {
            return Err(CodeFault::OutOfRange);
        }
        if c >= self.high_limit {
            return Err(CodeFault::SaturatedHigh);
        }
        if c <= self.low_limit {
            return Err(CodeFault::SaturatedLow);
        }
        // Both values lie within the code range (±2^24; the dark offset is validated when set),
        // so the difference never wraps; `wrapping_sub` only tells the compiler so.
        Ok(c.wrapping_sub(range.dark_offset))
    }

    /// The reading with its net code: the one place a reading is dark-corrected.
    #[must_use]
    #[inline]
    pub fn sample(&self, reading: &Reading) -> Sample {
        Sample {
            reading: *reading,
            net: self.net_code(reading),
        }
    }

    /// Replace the dark offset of range `r` (after a dark capture). Returns `false` and changes
    /// nothing if the range does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        if dark_offset < self.min_code || dark_offset > self.max_code {
            return false;
        }
        match self.ranges.get_mut(usize::from(r.0)) {
            Some(range) => {
                range.dark_offset = dark_offset;
                true
            }
            None => false,
        }
    }

    /// Volts per code at the ADC input referred to the amplifier output (V_ref / counts / PGA).
    #[must_use]
    pub const fn volts_per_code(&self) -> f64 {
        self.volts_per_code
    }

    /// Photocurrent per net code in range `r`, in A per code.
    #[must_use]
    pub fn amps_per_code(&self, r: RangeIndex) -> Option<f64> {
        self.range(r)
            .map(|range| self.volts_per_code / range.gain.v_per_a())
    }

    /// The voltage of a net code at the amplifier output.
    #[must_use]
    pub fn volts(&self, net_code: i32) -> Voltage {
        Voltage::from_v(f64::from(net_code) * self.volts_per_code)
    }

    /// Photocurrent of a net code in range `r`.
    #[must_use]
    pub fn current(&self, net_code: i32, r: RangeIndex) -> Option<Current> {
        self.amps_per_code(r)
            .map(|k| Current::from_a(f64::from(net_code) * k))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::acquire::reading::Ticks;

    fn adc12() -> AdcSpec {
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        }
    }

    fn ranges() -> [AmplifierRange; 2] {
        [
            AmplifierRange {
                gain: Transimpedance::from_mohm(1.0),
                dark_offset: 10,
            },
            AmplifierRange {
                gain: Transimpedance::from_kohm(10.0),
                dark_offset: 3,
            },
        ]
    }

    fn reading(code: i32, range: u8) -> Reading {
        Reading {
            code,
            range: RangeIndex(range),
            at: Ticks(0),
        }
    }

    #[test]
    fn code_to_current_with_dark_offset() {
        let fe = FrontEnd::new(adc12(), &ranges()).unwrap();
        // 3.3 V / 4096 codes per code; 1 MΩ → A per code = 3.3/4096/1e6 (definition of the chain).
        let net = fe.net_code(&reading(2058, 0)).unwrap();
        assert_eq!(net, 2048);
        let i = fe.current(net, RangeIndex(0)).unwrap();
        assert!((i.a() - 2048.0 * 3.3 / 4096.0 / 1e6).abs() < 1e-18);
        // The less sensitive range gives 100× the current for the same net code.
        let i1 = fe.current(net, RangeIndex(1)).unwrap();
        assert!((i1.a() / i.a() - 100.0).abs() < 1e-12);
    }

    #[test]
    fn saturation_edges_unipolar() {
        let fe = FrontEnd::new(adc12(), &ranges()).unwrap();
        assert_eq!(fe.net_code(&reading(4092, 0)), Ok(4082));
        assert_eq!(
            fe.net_code(&reading(4093, 0)),
            Err(CodeFault::SaturatedHigh)
        );
        assert_eq!(
            fe.net_code(&reading(4095, 0)),
            Err(CodeFault::SaturatedHigh)
        );
        assert_eq!(fe.net_code(&reading(4096, 0)), Err(CodeFault::OutOfRange));
        assert_eq!(fe.net_code(&reading(-1, 0)), Err(CodeFault::OutOfRange));
        // The bottom rail of a unipolar ADC is a dark reading, not saturation.
        assert_eq!(fe.net_code(&reading(0, 0)), Ok(-10));
        assert_eq!(fe.net_code(&reading(5, 7)), Err(CodeFault::UnknownRange));
    }

    #[test]
    fn saturation_edges_bipolar_16_bit() {
        let spec = AdcSpec {
            bits: 16,
            reference: Voltage::from_v(4.096),
            pga_gain: 1.0,
            coding: Coding::Bipolar,
            saturation_margin: 0,
        };
        let fe = FrontEnd::new(spec, &ranges()).unwrap();
        // ADS1115 at ±4.096 V full scale: 125 µV per code (TI ADS1115 datasheet, Table 3).
        assert!((fe.volts_per_code() - 125e-6).abs() < 1e-15);
        assert_eq!(
            fe.net_code(&reading(32767, 0)),
            Err(CodeFault::SaturatedHigh)
        );
        assert_eq!(fe.net_code(&reading(32766, 0)), Ok(32756));
        assert_eq!(
            fe.net_code(&reading(-32768, 0)),
            Err(CodeFault::SaturatedLow)
        );
        assert_eq!(fe.net_code(&reading(-32767, 1)), Ok(-32770));
    }

    #[test]
    fn bad_configuration_is_named() {
        let mut a = adc12();
        a.bits = 7;
        assert_eq!(FrontEnd::new(a, &ranges()), Err(FrontEndError::Resolution));
        let mut a = adc12();
        a.reference = Voltage::from_v(f64::NAN);
        assert_eq!(FrontEnd::new(a, &ranges()), Err(FrontEndError::Reference));
        let mut a = adc12();
        a.pga_gain = 0.0;
        assert_eq!(FrontEnd::new(a, &ranges()), Err(FrontEndError::PgaGain));
        let mut a = adc12();
        a.saturation_margin = 1024;
        assert_eq!(
            FrontEnd::new(a, &ranges()),
            Err(FrontEndError::SaturationMargin)
        );
        assert_eq!(FrontEnd::new(adc12(), &[]), Err(FrontEndError::NoRanges));
        let mut r = ranges();
        r[1].gain = Transimpedance::from_v_per_a(-1.0);
        assert_eq!(FrontEnd::new(adc12(), &r), Err(FrontEndError::Gain(1)));
        let r = [ranges()[1], ranges()[0]];
        assert_eq!(FrontEnd::new(adc12(), &r), Err(FrontEndError::RangeOrder));
        let mut r = ranges();
        r[0].dark_offset = 5000;
        assert_eq!(
            FrontEnd::new(adc12(), &r),
            Err(FrontEndError::DarkOffset(0))
        );
        let five = [ranges()[0]; 5];
        let mut descending = five;
        for (i, r) in descending.iter_mut().enumerate() {
            r.gain = Transimpedance::from_v_per_a(1e9 / (i as f64 + 1.0));
        }
        assert_eq!(
            FrontEnd::new(adc12(), &descending),
            Err(FrontEndError::TooManyRanges)
        );
    }

    #[test]
    fn dark_offset_update_is_checked() {
        let mut fe = FrontEnd::new(adc12(), &ranges()).unwrap();
        assert!(fe.set_dark_offset(RangeIndex(1), 20));
        assert_eq!(fe.net_code(&reading(30, 1)), Ok(10));
        assert!(!fe.set_dark_offset(RangeIndex(1), 99_999));
        assert!(!fe.set_dark_offset(RangeIndex(3), 1));
    }
}
