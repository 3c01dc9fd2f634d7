//! Meter profile: the configuration-time numbers of a meter, computed on a host and carried to
//! the firmware as integers. A [`MeterProfile`] holds everything [`Meter::new`] and the dose
//! thresholds compute in `f64` (front-end codes and volts per code, calibration and band
//! factors, per-range irradiance per code and the exact per-range integer scale of one dose
//! unit, and each threshold converted to integer units for every range), each floating-point
//! value as its IEEE-754 bit pattern so nothing is rounded on the way. It is made on the host
//! ([`MeterProfile::new`], or `photon-review explain --profile`), stored as a fixed,
//! versioned, CRC-protected byte layout ([`MeterProfile::to_bytes`],
//! [`MeterProfile::from_bytes`]) or as a Rust `const`, and turned into a [`Meter`] on the
//! device by [`Meter::from_profile`], which checks every field with integer arithmetic only
//! and performs no floating-point operation, so a firmware that builds its meter from a
//! profile links no `f64` routine for it. The on-device path (`Meter::new`) stays available
//! and gives the identical meter.
//!
//! # Byte layout (version 1, little-endian, [`PROFILE_LEN`] bytes)
//!
//! | offset | size | field |
//! | --- | --- | --- |
//! | 0 | 4 | magic `PLMP` |
//! | 4 | 2 | version ([`PROFILE_VERSION`]) |
//! | 6 | 2 | length ([`PROFILE_LEN`]) |
//! | 8 | 16 | lowest code, highest code, low and high saturation limits (`i32` each) |
//! | 24 | 32 | bits of volts per code, W/m² per A, photons per J, sample area m² (0: none) |
//! | 56 | 4 | tick rate, Hz (`u32`) |
//! | 60 | 1 | range count (1 ..= [`MAX_RANGES`]) |
//! | 61 | 1 | threshold count (0 ..= [`PROFILE_THRESHOLDS`]) |
//! | 62 | 2 | reserved, 0 |
//! | 64 | 4 × 32 | per range: bits of the transimpedance (V/A) and of W/m² per net code, the unit scale mantissa (`u64`), the dark offset (`i32`), the unit scale exponent (`i16`), 2 reserved bytes |
//! | 192 | 4 × 48 | per threshold: bits of the level (J/m²), rounding (0 not before, 1 not after), 7 reserved bytes, the limit in integer units for each range (`i64` × 4) |
//! | 384 | 4 | CRC-32/ISO-HDLC of bytes 0 ..< 384 (the crate's calibration-record CRC) |
//!
//! Unused ranges and thresholds, and every reserved byte, are zero; a decoder refuses
//! anything else. The unit scale of range `r` is exact: J/m² per dose unit =
//! `mantissa · 2^exponent` (mantissa < 2⁵³, odd), the same `f64` the on-device path computes.

use crate::acquire::reading::{RangeIndex, TickRate, Ticks};
use crate::dose::{Integrator, Rounding};
use crate::frontend::{AmplifierRange, FrontEnd, MAX_RANGES};
use crate::irradiance::Meter;
use crate::quantity::{Area, IrradiancePerCurrent, RadiantExposure, Transimpedance};
use crate::spectral::band::BandFactors;

/// Magic bytes at the start of an encoded profile.
pub const PROFILE_MAGIC: [u8; 4] = *b"PLMP";
/// The profile format version this crate writes and reads.
pub const PROFILE_VERSION: u16 = 1;
/// Length of an encoded profile, bytes.
pub const PROFILE_LEN: usize = 388;
/// The most thresholds a profile carries (a session uses two: the target and the target plus
/// its tolerance).
pub const PROFILE_THRESHOLDS: usize = 4;

const CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

mod offset {
    pub const MAGIC: usize = 0;
    pub const VERSION: usize = 4;
    pub const LENGTH: usize = 6;
    pub const CODES: usize = 8;
    pub const VOLTS_PER_CODE: usize = 24;
    pub const CALIBRATION: usize = 32;
    pub const PHOTONS_PER_J: usize = 40;
    pub const SAMPLE_AREA: usize = 48;
    pub const TICK_HZ: usize = 56;
    pub const RANGE_COUNT: usize = 60;
    pub const THRESHOLD_COUNT: usize = 61;
    pub const RESERVED: usize = 62;
    pub const RANGES: usize = 64;
    pub const RANGE_STRIDE: usize = 32;
    pub const THRESHOLDS: usize = 192;
    pub const THRESHOLD_STRIDE: usize = 48;
    pub const CRC: usize = 384;
}

/// One amplifier range of a [`MeterProfile`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ProfileRange {
    /// Bits of the transimpedance, V/A (`f64::to_bits`). Valid: finite, > 0, each range's
    /// below the previous one's (most sensitive first).
    pub transimpedance_bits: u64,
    /// Dark offset, ADC codes. Valid: inside the converter's code range.
    pub dark_offset: i32,
    /// Bits of the irradiance per net code, W/m². Valid: finite, > 0.
    pub w_per_m2_per_code_bits: u64,
    /// Mantissa of the radiant exposure per integer dose unit: J/m² per unit =
    /// `unit_mantissa · 2^unit_exponent`. Valid: odd, < 2⁵³, and the product a normal `f64`.
    pub unit_mantissa: u64,
    /// Binary exponent of the radiant exposure per integer dose unit.
    pub unit_exponent: i16,
}

/// One dose threshold of a [`MeterProfile`], converted for every range.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ProfileThreshold {
    /// Bits of the level, J/m² (`f64::to_bits`). Valid: finite, > 0.
    pub level_j_per_m2_bits: u64,
    /// How the level was rounded into integer units.
    pub rounding: Rounding,
    /// The level in integer dose units of each range, from a zero dose — what
    /// [`Integrator::add_threshold`] computes when the open segment is in that range; 0 for
    /// ranges the meter does not have.
    pub limits: [i64; MAX_RANGES],
}

impl Default for ProfileThreshold {
    fn default() -> Self {
        Self {
            level_j_per_m2_bits: 0,
            rounding: Rounding::NotBefore,
            limits: [0; MAX_RANGES],
        }
    }
}

/// The configuration-time numbers of a meter and its dose thresholds. See the
/// [module documentation](self).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MeterProfile {
    /// Lowest and highest code of the converter. Valid: lowest < highest, both within ±2²⁴.
    pub codes: (i32, i32),
    /// Codes at or below the first and at or above the second are saturated. Valid: the low
    /// limit is `i32::MIN` or a code, the high limit a code, low < high.
    pub saturation_limits: (i32, i32),
    /// Bits of the volts per code at the amplifier output. Valid: finite, > 0.
    pub volts_per_code_bits: u64,
    /// Bits of the calibration factor, W/m² per A. Valid: finite, > 0.
    pub calibration_bits: u64,
    /// Bits of the band's photons per joule, 1/J. Valid: finite, > 0.
    pub photons_per_j_bits: u64,
    /// Bits of the illuminated sample area, m²; 0 for none. Valid: 0 or finite, > 0.
    pub sample_area_m2_bits: u64,
    /// Tick rate of the timestamps, Hz. Valid: ≥ 1.
    pub tick_hz: u32,
    /// Number of amplifier ranges in use. Valid: 1 ..= [`MAX_RANGES`].
    pub range_count: u8,
    /// The ranges; entries at and after `range_count` are all zero.
    pub ranges: [ProfileRange; MAX_RANGES],
    /// Number of thresholds in use. Valid: 0 ..= [`PROFILE_THRESHOLDS`].
    pub threshold_count: u8,
    /// The thresholds; entries at and after `threshold_count` are all zero.
    pub thresholds: [ProfileThreshold; PROFILE_THRESHOLDS],
}

/// Which field of a profile is invalid.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ProfileField {
    /// The code range or the saturation limits.
    Codes,
    /// Volts per code.
    VoltsPerCode,
    /// The calibration factor.
    Calibration,
    /// Photons per joule.
    PhotonsPerJoule,
    /// The sample area.
    SampleArea,
    /// The tick rate.
    TickRate,
    /// The range count.
    RangeCount,
    /// The threshold count.
    ThresholdCount,
    /// A range's transimpedance (not finite, ≤ 0, or not below the previous range's).
    Transimpedance(u8),
    /// A range's dark offset.
    DarkOffset(u8),
    /// A range's irradiance per code.
    IrradiancePerCode(u8),
    /// A range's unit scale (mantissa, exponent).
    UnitScale(u8),
    /// A threshold's level or rounding.
    Threshold(u8),
    /// An unused range or threshold, or a reserved byte, is not zero.
    Reserved,
}

/// Why a profile was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ProfileError {
    /// The byte slice is not [`PROFILE_LEN`] long, or its length field says otherwise.
    Length {
        /// The length required.
        expected: usize,
        /// The length found (of the slice, or in the length field).
        found: usize,
    },
    /// Not a meter profile (wrong magic bytes).
    Magic,
    /// A profile version this crate does not read.
    Version {
        /// The version found.
        found: u16,
    },
    /// The CRC does not match: the profile is damaged.
    Crc {
        /// The CRC stored in the profile.
        stored: u32,
        /// The CRC of the bytes.
        computed: u32,
    },
    /// A field is invalid (named).
    Field(ProfileField),
    /// [`MeterProfile::new`]: more thresholds than [`PROFILE_THRESHOLDS`].
    TooManyThresholds,
}

impl core::fmt::Display for ProfileField {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Codes => f.write_str("code range or saturation limits"),
            Self::VoltsPerCode => f.write_str("volts per code"),
            Self::Calibration => f.write_str("calibration factor"),
            Self::PhotonsPerJoule => f.write_str("photons per joule"),
            Self::SampleArea => f.write_str("sample area"),
            Self::TickRate => f.write_str("tick rate"),
            Self::RangeCount => f.write_str("range count"),
            Self::ThresholdCount => f.write_str("threshold count"),
            Self::Transimpedance(r) => write!(f, "transimpedance of range {r}"),
            Self::DarkOffset(r) => write!(f, "dark offset of range {r}"),
            Self::IrradiancePerCode(r) => write!(f, "irradiance per code of range {r}"),
            Self::UnitScale(r) => write!(f, "unit scale of range {r}"),
            Self::Threshold(t) => write!(f, "threshold {t}"),
            Self::Reserved => f.write_str("unused entry or reserved byte not zero"),
        }
    }
}

impl core::fmt::Display for ProfileError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Length { expected, found } => {
                write!(f, "profile length {found} bytes, expected {expected}")
            }
            Self::Magic => f.write_str("not a meter profile (magic bytes)"),
            Self::Version { found } => write!(
                f,
                "profile version {found} not supported (this build reads {PROFILE_VERSION})"
            ),
            Self::Crc { stored, computed } => write!(
                f,
                "profile damaged: CRC {stored:#010x} stored, {computed:#010x} computed"
            ),
            Self::Field(field) => write!(f, "profile field invalid: {field}"),
            Self::TooManyThresholds => {
                write!(f, "more than {PROFILE_THRESHOLDS} thresholds in a profile")
            }
        }
    }
}

impl core::error::Error for ProfileError {}

/// Largest |code| a converter of at most 24 bits produces.
const CODE_BOUND: i32 = 1 << 24;
const EXPONENT_MASK: u64 = 0x7FF0_0000_0000_0000;
const FRACTION_MASK: u64 = (1 << 52) - 1;

/// Whether `bits` is a finite `f64` > 0 (normal or subnormal), decided on the bits.
const fn positive_finite(bits: u64) -> bool {
    bits != 0 && bits < EXPONENT_MASK
}

/// The exact `(odd mantissa, exponent)` of a normal `f64` > 0: `v = m · 2^e`; `None` for
/// zero, subnormal, negative or non-finite values.
fn split_scale(v: f64) -> Option<(u64, i16)> {
    let bits = v.to_bits();
    let biased = (bits >> 52) & 0x7FF;
    if bits >> 63 != 0 || biased == 0 || biased == 0x7FF {
        return None;
    }
    let m = (1u64 << 52) | (bits & FRACTION_MASK);
    // m ≠ 0, so tz ≤ 52; 1 ≤ biased ≤ 2046: the exponent is within −1074 ..= 1023.
    let tz = m.trailing_zeros();
    let e = (biased as i32).wrapping_sub(1075).wrapping_add(tz as i32);
    Some((m.wrapping_shr(tz), i16::try_from(e).ok()?))
}

/// The `f64` bits of `m · 2^e` when that is a normal number and `m` an odd mantissa below
/// 2⁵³ (the form [`split_scale`] makes), in integer arithmetic only.
const fn join_scale(m: u64, e: i16) -> Option<u64> {
    if m == 0 || m & 1 == 0 || m >> 53 != 0 {
        return None;
    }
    // 0 < m < 2⁵³: 11 ≤ leading zeros ≤ 63, so 0 ≤ msb ≤ 52 and the mantissa lands on
    // bit 52 (wrapping operations only tell the compiler that nothing wraps here).
    let msb = 63u32.wrapping_sub(m.leading_zeros());
    let normalized = m.wrapping_shl(52u32.wrapping_sub(msb));
    // The value's exponent, biased: e + msb + 1023 (|e| < 2¹⁵: no i32 overflow).
    let biased = (e as i32).wrapping_add(msb as i32).wrapping_add(1023);
    if biased < 1 || biased > 2046 {
        return None;
    }
    Some(((biased as u64) << 52) | (normalized & FRACTION_MASK))
}

impl MeterProfile {
    /// The profile of `meter` with `thresholds` (each a level and its rounding, as given to
    /// [`Integrator::add_threshold`]), computed the way the on-device path computes them.
    /// Host or configuration time (uses `f64`).
    ///
    /// # Errors
    /// [`ProfileError::TooManyThresholds`]; [`ProfileError::Field`] for a value the profile
    /// cannot carry (a threshold level not finite and > 0, a per-range scale that is not a
    /// normal `f64`).
    pub fn new(
        meter: &Meter,
        thresholds: &[(RadiantExposure, Rounding)],
    ) -> Result<Self, ProfileError> {
        if thresholds.len() > PROFILE_THRESHOLDS {
            return Err(ProfileError::TooManyThresholds);
        }
        let fe = meter.front_end();
        let range_count = u8::try_from(fe.range_count())
            .map_err(|_| ProfileError::Field(ProfileField::RangeCount))?;
        let mut ranges = [ProfileRange::default(); MAX_RANGES];
        for (i, slot) in (0u8..range_count).zip(ranges.iter_mut()) {
            let r = RangeIndex(i);
            let range = fe
                .range(r)
                .ok_or(ProfileError::Field(ProfileField::RangeCount))?;
            let (unit_mantissa, unit_exponent) = split_scale(meter.j_per_m2_per_unit(r))
                .ok_or(ProfileError::Field(ProfileField::UnitScale(i)))?;
            *slot = ProfileRange {
                transimpedance_bits: range.gain.v_per_a().to_bits(),
                dark_offset: range.dark_offset,
                w_per_m2_per_code_bits: meter.irradiance(1, r).w_per_m2().to_bits(),
                unit_mantissa,
                unit_exponent,
            };
        }
        let mut out = [ProfileThreshold::default(); PROFILE_THRESHOLDS];
        for ((n, &(level, rounding)), slot) in (0u8..PROFILE_THRESHOLDS as u8)
            .zip(thresholds)
            .zip(out.iter_mut())
        {
            let v = level.j_per_m2();
            if !(v.is_finite() && v > 0.0) {
                return Err(ProfileError::Field(ProfileField::Threshold(n)));
            }
            let mut limits = [0i64; MAX_RANGES];
            for (i, limit) in (0u8..range_count).zip(limits.iter_mut()) {
                *limit = limit_in_range(meter, level, rounding, RangeIndex(i))
                    .ok_or(ProfileError::Field(ProfileField::Threshold(n)))?;
            }
            *slot = ProfileThreshold {
                level_j_per_m2_bits: v.to_bits(),
                rounding,
                limits,
            };
        }
        let p = Self {
            codes: (fe.min_code(), fe.max_code()),
            saturation_limits: (fe.low_limit(), fe.high_limit()),
            volts_per_code_bits: fe.volts_per_code().to_bits(),
            calibration_bits: meter.calibration().w_per_m2_per_a().to_bits(),
            photons_per_j_bits: meter.band().photons_per_j().to_bits(),
            sample_area_m2_bits: meter.sample_area().map_or(0, |a| a.m2().to_bits()),
            tick_hz: meter.tick_rate().hz(),
            range_count,
            ranges,
            // At most PROFILE_THRESHOLDS (4), checked above.
            threshold_count: u8::try_from(thresholds.len())
                .map_err(|_| ProfileError::TooManyThresholds)?,
            thresholds: out,
        };
        p.check()?;
        Ok(p)
    }

    /// Check every field (integer arithmetic only).
    ///
    /// # Errors
    /// [`ProfileError::Field`] naming the first invalid field.
    pub fn check(&self) -> Result<(), ProfileError> {
        let bad = |f| Err(ProfileError::Field(f));
        let (min, max) = self.codes;
        let (low, high) = self.saturation_limits;
        let code = |c: i32| (-CODE_BOUND..=CODE_BOUND).contains(&c);
        if !(code(min) && code(max) && min < max && code(high) && high <= max) {
            return bad(ProfileField::Codes);
        }
        if !((low == i32::MIN || (code(low) && low >= min)) && low < high) {
            return bad(ProfileField::Codes);
        }
        if !positive_finite(self.volts_per_code_bits) {
            return bad(ProfileField::VoltsPerCode);
        }
        if !positive_finite(self.calibration_bits) {
            return bad(ProfileField::Calibration);
        }
        if !positive_finite(self.photons_per_j_bits) {
            return bad(ProfileField::PhotonsPerJoule);
        }
        if self.sample_area_m2_bits != 0 && !positive_finite(self.sample_area_m2_bits) {
            return bad(ProfileField::SampleArea);
        }
        if self.tick_hz == 0 {
            return bad(ProfileField::TickRate);
        }
        let n = usize::from(self.range_count);
        if n == 0 || n > MAX_RANGES {
            return bad(ProfileField::RangeCount);
        }
        if usize::from(self.threshold_count) > PROFILE_THRESHOLDS {
            return bad(ProfileField::ThresholdCount);
        }
        // Positive finite f64 bit patterns order like their values.
        let mut previous_gain = EXPONENT_MASK;
        for (i, r) in (0u8..MAX_RANGES as u8).zip(self.ranges.iter()) {
            if usize::from(i) >= n {
                if *r != ProfileRange::default() {
                    return bad(ProfileField::Reserved);
                }
                continue;
            }
            if !positive_finite(r.transimpedance_bits) || r.transimpedance_bits >= previous_gain {
                return bad(ProfileField::Transimpedance(i));
            }
            previous_gain = r.transimpedance_bits;
            if r.dark_offset < min || r.dark_offset > max {
                return bad(ProfileField::DarkOffset(i));
            }
            if !positive_finite(r.w_per_m2_per_code_bits) {
                return bad(ProfileField::IrradiancePerCode(i));
            }
            if join_scale(r.unit_mantissa, r.unit_exponent).is_none() {
                return bad(ProfileField::UnitScale(i));
            }
        }
        for (i, t) in (0u8..PROFILE_THRESHOLDS as u8).zip(self.thresholds.iter()) {
            if i >= self.threshold_count {
                if *t != ProfileThreshold::default() {
                    return bad(ProfileField::Reserved);
                }
                continue;
            }
            if !positive_finite(t.level_j_per_m2_bits) {
                return bad(ProfileField::Threshold(i));
            }
            if t.limits.iter().skip(n).any(|&l| l != 0) {
                return bad(ProfileField::Reserved);
            }
        }
        Ok(())
    }

    /// The profile's threshold `i` (level and rounding) as given to [`MeterProfile::new`];
    /// `None` past [`threshold_count`](Self::threshold_count).
    #[must_use]
    pub fn threshold(&self, i: usize) -> Option<&ProfileThreshold> {
        self.thresholds
            .get(..usize::from(self.threshold_count))
            .and_then(|t| t.get(i))
    }

    /// The radiant exposure per integer dose unit of range `r`, as `f64` bits (exactly
    /// `unit_mantissa · 2^unit_exponent`); `None` for a range the profile does not have or an
    /// invalid scale. Integer arithmetic only.
    #[must_use]
    pub fn unit_scale_bits(&self, r: RangeIndex) -> Option<u64> {
        if r.0 >= self.range_count {
            return None;
        }
        let range = self.ranges.get(usize::from(r.0))?;
        join_scale(range.unit_mantissa, range.unit_exponent)
    }

    /// The fixed little-endian encoding (see the [module documentation](self)), CRC
    /// included.
    #[must_use]
    pub fn to_bytes(&self) -> [u8; PROFILE_LEN] {
        let mut b = [0u8; PROFILE_LEN];
        let mut w = Writer { buf: &mut b, at: 0 };
        w.put(&PROFILE_MAGIC);
        w.put(&PROFILE_VERSION.to_le_bytes());
        // PROFILE_LEN (388) fits a u16.
        w.put(&(PROFILE_LEN as u16).to_le_bytes());
        w.put(&self.codes.0.to_le_bytes());
        w.put(&self.codes.1.to_le_bytes());
        w.put(&self.saturation_limits.0.to_le_bytes());
        w.put(&self.saturation_limits.1.to_le_bytes());
        w.put(&self.volts_per_code_bits.to_le_bytes());
        w.put(&self.calibration_bits.to_le_bytes());
        w.put(&self.photons_per_j_bits.to_le_bytes());
        w.put(&self.sample_area_m2_bits.to_le_bytes());
        w.put(&self.tick_hz.to_le_bytes());
        w.put(&[self.range_count, self.threshold_count, 0, 0]);
        for r in &self.ranges {
            w.put(&r.transimpedance_bits.to_le_bytes());
            w.put(&r.w_per_m2_per_code_bits.to_le_bytes());
            w.put(&r.unit_mantissa.to_le_bytes());
            w.put(&r.dark_offset.to_le_bytes());
            w.put(&r.unit_exponent.to_le_bytes());
            w.put(&[0, 0]);
        }
        for t in &self.thresholds {
            w.put(&t.level_j_per_m2_bits.to_le_bytes());
            let rounding = match t.rounding {
                Rounding::NotBefore => 0,
                Rounding::NotAfter => 1,
            };
            w.put(&[rounding, 0, 0, 0, 0, 0, 0, 0]);
            for l in &t.limits {
                w.put(&l.to_le_bytes());
            }
        }
        let crc = CRC32.checksum(b.get(..offset::CRC).unwrap_or(&[]));
        if let Some(slot) = b.get_mut(offset::CRC..) {
            for (d, s) in slot.iter_mut().zip(crc.to_le_bytes()) {
                *d = s;
            }
        }
        b
    }

    /// Decode and check a profile (integer arithmetic only).
    ///
    /// # Errors
    /// [`ProfileError`]: wrong length, magic, version or CRC (checked in that order, so a
    /// damaged profile of a newer version is reported as a version), or an invalid field.
    pub fn from_bytes(bytes: &[u8]) -> Result<Self, ProfileError> {
        if bytes.len() != PROFILE_LEN {
            return Err(ProfileError::Length {
                expected: PROFILE_LEN,
                found: bytes.len(),
            });
        }
        let r = Reader { buf: bytes };
        if r.bytes::<4>(offset::MAGIC) != PROFILE_MAGIC {
            return Err(ProfileError::Magic);
        }
        let version = u16::from_le_bytes(r.bytes(offset::VERSION));
        if version != PROFILE_VERSION {
            return Err(ProfileError::Version { found: version });
        }
        let length = u16::from_le_bytes(r.bytes(offset::LENGTH));
        if usize::from(length) != PROFILE_LEN {
            return Err(ProfileError::Length {
                expected: PROFILE_LEN,
                found: usize::from(length),
            });
        }
        let stored = u32::from_le_bytes(r.bytes(offset::CRC));
        let computed = CRC32.checksum(bytes.get(..offset::CRC).unwrap_or(&[]));
        if stored != computed {
            return Err(ProfileError::Crc { stored, computed });
        }
        let i32_at = |o: usize| i32::from_le_bytes(r.bytes(o));
        let u64_at = |o: usize| u64::from_le_bytes(r.bytes(o));
        if r.bytes::<2>(offset::RESERVED) != [0, 0] {
            return Err(ProfileError::Field(ProfileField::Reserved));
        }
        let mut ranges = [ProfileRange::default(); MAX_RANGES];
        for (i, slot) in ranges.iter_mut().enumerate() {
            // i < MAX_RANGES (4): no offset below overflows.
            let o = offset::RANGES.wrapping_add(i.wrapping_mul(offset::RANGE_STRIDE));
            if r.bytes::<2>(o.wrapping_add(30)) != [0, 0] {
                return Err(ProfileError::Field(ProfileField::Reserved));
            }
            *slot = ProfileRange {
                transimpedance_bits: u64_at(o),
                w_per_m2_per_code_bits: u64_at(o.wrapping_add(8)),
                unit_mantissa: u64_at(o.wrapping_add(16)),
                dark_offset: i32_at(o.wrapping_add(24)),
                unit_exponent: i16::from_le_bytes(r.bytes(o.wrapping_add(28))),
            };
        }
        let mut thresholds = [ProfileThreshold::default(); PROFILE_THRESHOLDS];
        for (i, slot) in (0u8..PROFILE_THRESHOLDS as u8).zip(thresholds.iter_mut()) {
            // i < PROFILE_THRESHOLDS (4): no offset below overflows.
            let o = offset::THRESHOLDS
                .wrapping_add(usize::from(i).wrapping_mul(offset::THRESHOLD_STRIDE));
            let flags = r.bytes::<8>(o.wrapping_add(8));
            let rounding = match flags {
                [0, 0, 0, 0, 0, 0, 0, 0] => Rounding::NotBefore,
                [1, 0, 0, 0, 0, 0, 0, 0] => Rounding::NotAfter,
                _ => return Err(ProfileError::Field(ProfileField::Threshold(i))),
            };
            let mut limits = [0i64; MAX_RANGES];
            for (j, l) in limits.iter_mut().enumerate() {
                *l =
                    i64::from_le_bytes(r.bytes(o.wrapping_add(16).wrapping_add(j.wrapping_mul(8))));
            }
            *slot = ProfileThreshold {
                level_j_per_m2_bits: u64_at(o),
                rounding,
                limits,
            };
        }
        let [range_count] = r.bytes::<1>(offset::RANGE_COUNT);
        let [threshold_count] = r.bytes::<1>(offset::THRESHOLD_COUNT);
        let p = Self {
            codes: (i32_at(offset::CODES), i32_at(offset::CODES + 4)),
            saturation_limits: (i32_at(offset::CODES + 8), i32_at(offset::CODES + 12)),
            volts_per_code_bits: u64_at(offset::VOLTS_PER_CODE),
            calibration_bits: u64_at(offset::CALIBRATION),
            photons_per_j_bits: u64_at(offset::PHOTONS_PER_J),
            sample_area_m2_bits: u64_at(offset::SAMPLE_AREA),
            tick_hz: u32::from_le_bytes(r.bytes(offset::TICK_HZ)),
            range_count,
            threshold_count,
            ranges,
            thresholds,
        };
        p.check()?;
        Ok(p)
    }
}

impl Meter {
    /// The meter a [`MeterProfile`] describes, checked with integer arithmetic only: no
    /// floating-point operation, no `libm`. Equal to the meter the profile was made from.
    ///
    /// # Errors
    /// [`ProfileError::Field`] naming the first invalid field.
    pub fn from_profile(p: &MeterProfile) -> Result<Self, ProfileError> {
        p.check()?;
        let mut ranges: heapless::Vec<AmplifierRange, MAX_RANGES> = heapless::Vec::new();
        let mut w_per_m2_per_code = [0.0; MAX_RANGES];
        for (r, w) in p
            .ranges
            .iter()
            .take(usize::from(p.range_count))
            .zip(w_per_m2_per_code.iter_mut())
        {
            ranges
                .push(AmplifierRange {
                    gain: Transimpedance::from_v_per_a(f64::from_bits(r.transimpedance_bits)),
                    dark_offset: r.dark_offset,
                })
                .map_err(|_| ProfileError::Field(ProfileField::RangeCount))?;
            *w = f64::from_bits(r.w_per_m2_per_code_bits);
        }
        let front_end = FrontEnd::from_parts(
            p.codes,
            p.saturation_limits,
            f64::from_bits(p.volts_per_code_bits),
            ranges,
        );
        let tick_rate =
            TickRate::from_hz(p.tick_hz).ok_or(ProfileError::Field(ProfileField::TickRate))?;
        let sample_area = (p.sample_area_m2_bits != 0)
            .then(|| Area::from_m2(f64::from_bits(p.sample_area_m2_bits)));
        Ok(Self::from_parts(
            front_end,
            IrradiancePerCurrent::from_w_per_m2_per_a(f64::from_bits(p.calibration_bits)),
            BandFactors::from_checked_photons_per_j(f64::from_bits(p.photons_per_j_bits)),
            tick_rate,
            sample_area,
            w_per_m2_per_code,
        ))
    }
}

/// The limit [`Integrator::add_threshold`] computes for `level` when the open segment is in
/// range `r` and no dose has been counted: the on-device path, run on the host.
fn limit_in_range(
    meter: &Meter,
    level: RadiantExposure,
    rounding: Rounding,
    r: RangeIndex,
) -> Option<i64> {
    let mut integrator = Integrator::new(meter, 1);
    let id = integrator.add_threshold(level, rounding).ok()?;
    if r != integrator.segment_range() {
        // Two zero readings in range r, one tick apart: the segment moves to r with nothing
        // counted, and every limit is converted for r.
        integrator.accept(0, r, Ticks(0)).ok()?;
        integrator.accept(0, r, Ticks(1)).ok()?;
    }
    (integrator.segment_range() == r && integrator.raw_total(r) == 0)
        .then(|| integrator.units_to_threshold(id))
        .flatten()
}

struct Writer<'a> {
    buf: &'a mut [u8; PROFILE_LEN],
    at: usize,
}

impl Writer<'_> {
    fn put(&mut self, bytes: &[u8]) {
        if let Some(dst) = self.buf.get_mut(self.at..) {
            for (d, s) in dst.iter_mut().zip(bytes) {
                *d = *s;
            }
        }
        self.at = self.at.saturating_add(bytes.len());
    }
}

struct Reader<'a> {
    buf: &'a [u8],
}

impl Reader<'_> {
    /// `N` bytes at `at` (zeros past the end; the caller checked the length).
    fn bytes<const N: usize>(&self, at: usize) -> [u8; N] {
        let mut out = [0u8; N];
        if let Some(src) = self.buf.get(at..) {
            for (d, s) in out.iter_mut().zip(src) {
                *d = *s;
            }
        }
        out
    }
}

#[cfg(test)]
mod tests;
