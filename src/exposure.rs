//! Exposure: hazard-weighted dose against a daily limit, for people who carry a logger.
//!
//! A person's limit is set on the *effective* (action-spectrum weighted) radiant exposure over
//! a rolling window — for example ICNIRP 2004 / IEC 62471: H_eff ≤ 30 J/m² in any 8 h, with
//! the relative spectral effectiveness S(λ). For a fixed band the effective exposure is a
//! constant times the radiant exposure ([`WeightFactor`], computed at configuration time from
//! the band and the action spectrum), so the per-sample work stays in integers.
//!
//! # One integral under every figure
//!
//! - [`WeightedDose`] feeds each reading to the crate's one exact integral, a
//!   [`dose::Integrator`](crate::dose::Integrator) (negative, below-dark codes count as zero,
//!   which can only overestimate), and reads the integral out in one **common integer unit**
//!   across amplifier ranges: range `r` weighs `w_r` units per integrator unit, the unit being
//!   a power of two. At 52 bits of precision (the finest range weighs ≥ 2⁵² units) every
//!   `w_r` is exact — the `f64` factor's mantissa scaled by a power of two — and the figures
//!   are the exact integral times the library's factors. When the ranges' scales differ by
//!   more than 2¹⁰, or the limit and a full-scale window would not fit 128 bits, the
//!   precision is lowered, never below 2⁴⁰ ([`MIN_PRECISION_BITS`]), with every `w_r`
//!   rounded up: a relative over-read of at most 2⁻⁴⁰ (9·10⁻¹³), stated by
//!   [`WeightedDose::precision_bits`]. A configuration that would need less is refused with a
//!   named error ([`ExposureConfigError::RangeSpread`], [`ExposureConfigError::Limit`],
//!   [`ExposureConfigError::WindowRange`]) rather than read with less precision.
//!   A gap is charged by the integrator's shared policy ([`crate::time`]),
//!   max(before, after) × gap, and reported beside the measured dose.
//! - [`RollingWindow`] keeps marks of that running total at the bucket boundaries, on the
//!   64-bit [`Clock`]: the window total is the running total minus the mark where the window
//!   begins — the exact trapezoid of every interval that ended in the last `B` complete
//!   buckets or the current one, with nothing clipped or rounded when a bucket closes. The
//!   window always covers at least the configured length (between `B` and `B + 1` buckets),
//!   which errs on the side of counting more.
//! - [`ExposureMonitor`] compares the window with the limit (levels pre-converted to the
//!   integer unit, rounded down so they trip early), drives one output per warning level with
//!   hysteresis, latches the alarm (the top level) until acknowledged, keeps per-shift totals,
//!   and reports the remaining allowed time `t = remaining / E_eff`.
//! - [`SolarMonitor`] gives the UV index (WHO 2002: 40 m²/W × erythemal irradiance, averaged
//!   over a configurable period, reported as an integer) with the WHO categories, and the
//!   day's erythemal dose in SED (100 J/m², ISO/CIE 17166).
//! - [`SamplingPlan`] chooses the next sample time for battery-friendly duty cycling, and
//!   [`display`] formats short status lines for a character display without float formatting.
//!
//! A saturated (top-rail) reading means the light is at least the range's full scale; the
//! monitors count it at full scale (a lower bound of the truth) and report it, rather than
//! bridging it from the neighbouring readings, which would under-count.
//!
//! Two rule sets for the UV-A eye limit exist and differ by a factor of about 29 for long
//! exposures; they are offered separately ([`crate::weighting::UvaEyeRule`]), never merged.

use embedded_hal::digital::OutputPin;

use crate::dose::{Integrator, SampleError};
use crate::frontend::{CodeFault, Sample, MAX_RANGES};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};
use crate::reading::{RangeIndex, Reading, Ticks};
use crate::time::Clock;
use crate::weighting::{UvIndex, UvIndexCategory, WeightedFactor, SED_J_PER_M2};

/// The fewest bits of precision of a range's weight in the common unit: a relative over-read
/// of at most 2⁻⁴⁰ ≈ 9.1·10⁻¹³.
pub const MIN_PRECISION_BITS: u32 = 40;

/// Precision bits at which every range's weight is exact (an `f64` mantissa is 53 bits).
pub const EXACT_BITS: u32 = 52;

/// The largest ratio between the scales of two amplifier ranges that the common unit holds
/// at [`MIN_PRECISION_BITS`]: about 2²¹ (2.1·10⁶).
pub const MAX_RANGE_SPREAD: f64 = (1u64 << (61 - MIN_PRECISION_BITS)) as f64;

/// Effective (weighted) irradiance ÷ radiant irradiance for the configured band and action
/// spectrum; dimensionless. Valid: finite, > 0. 1.0 for an unweighted band quantity.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightFactor(f64);

impl WeightFactor {
    /// Unweighted (1.0).
    pub const UNWEIGHTED: Self = Self(1.0);
    /// A factor from the ratio effective ÷ radiant. `None` unless finite and > 0.
    #[must_use]
    pub fn from_ratio(ratio: f64) -> Option<Self> {
        (ratio.is_finite() && ratio > 0.0).then_some(Self(ratio))
    }
    /// The factor computed from the band and an action spectrum
    /// ([`crate::weighting::WeightedFactor`]); `None` if its fraction is zero.
    #[must_use]
    pub fn from_weighted(factor: &WeightedFactor) -> Option<Self> {
        Self::from_ratio(factor.fraction())
    }
    /// The ratio.
    #[must_use]
    pub const fn ratio(self) -> f64 {
        self.0
    }
}

/// Why an exposure configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ExposureConfigError {
    /// Bucket length 0, or window not a whole number (≥ 1) of buckets.
    WindowNotWholeBuckets,
    /// The window needs more buckets than the capacity `N − 1`.
    WindowTooLong,
    /// The limit is not finite, ≤ 0, or too large for the common integer unit (above 2¹²⁶
    /// units).
    Limit,
    /// Warning fractions not finite, not > 0, or not strictly increasing.
    WarningLevels,
    /// Hysteresis not finite, < 0, or not smaller than the lowest warning level.
    Hysteresis,
    /// Maximum gap is 0 or ≥ 2³¹ ticks.
    MaxGap,
    /// A range's weighted scale (J/m² per integrator unit) is not finite and > 0, or lies
    /// outside the normal `f64` range.
    Scale,
    /// The meter's ranges differ in scale by more than [`MAX_RANGE_SPREAD`] (about 2²¹): the
    /// common integer unit would hold the finest range with fewer than
    /// [`MIN_PRECISION_BITS`] bits.
    RangeSpread,
    /// The averaging period of the UV index is 0 or not whole buckets.
    AveragingPeriod,
    /// A full-scale reading held over the window (plus one bucket and the longest gap the
    /// tick can express, 2³² ticks) could exceed 2¹²⁷ common units, where the window's
    /// running-total marks would no longer tell the window's content apart: shorten the
    /// window or use a slower tick.
    WindowRange,
}

impl core::fmt::Display for ExposureConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::WindowNotWholeBuckets => "window must be a whole number of non-empty buckets",
            Self::WindowTooLong => "window needs more buckets than the capacity",
            Self::Limit => "limit must be finite, > 0 and below 2^126 common units",
            Self::WarningLevels => "warning fractions must be finite, > 0 and increasing",
            Self::Hysteresis => "hysteresis must be >= 0 and below the lowest warning level",
            Self::MaxGap => "maximum gap must be 1 to 2^31-1 ticks",
            Self::Scale => "meter scale must be finite, > 0 and a normal f64",
            Self::RangeSpread => {
                "amplifier ranges differ in scale by more than 2^21 (40-bit precision bound)"
            }
            Self::AveragingPeriod => "averaging period must be whole, non-empty buckets",
            Self::WindowRange => {
                "full scale over the window could exceed 2^127 common units: shorten the window"
            }
        })
    }
}

impl core::error::Error for ExposureConfigError {}

/// A gap longer than the maximum, charged with its conservative bound.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Gap {
    /// Length of the gap, ticks.
    pub ticks: u32,
    /// Effective exposure charged for it: max(effective irradiance before, after) × gap.
    pub bound: RadiantExposure,
}

/// What one reading did to a [`WeightedDose`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Accrued {
    /// The first reading of a run (or the first after a backwards step): nothing to
    /// integrate yet.
    Started,
    /// An interval of this many ticks integrated.
    Interval(u32),
    /// A gap charged with its bound.
    Gap(Gap),
}

/// Per-range weights of the common integer unit. See the [module documentation](self).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct CommonScale {
    /// Common units per integrator unit, per range (0 for ranges the meter lacks).
    weight: [u64; MAX_RANGES],
    /// Effective J/m² per common unit (a power of two).
    unit_j_per_m2: f64,
    /// The finest range weighs at least 2^bits units (52: every weight exact).
    bits: u32,
}

impl CommonScale {
    /// The scale at the most precision the ranges allow (at most 52 bits, which holds every
    /// range's `f64` factor exactly).
    fn new(meter: &Meter, factor: WeightFactor) -> Result<Self, ExposureConfigError> {
        Self::with_precision(meter, factor, EXACT_BITS)
    }

    /// The scale with the finest range weighing at least 2^`bits` (lowered to what the range
    /// spread allows below 2⁶³).
    fn with_precision(
        meter: &Meter,
        factor: WeightFactor,
        bits: u32,
    ) -> Result<Self, ExposureConfigError> {
        let n = meter.front_end().range_count().min(MAX_RANGES);
        let mut k = [0.0f64; MAX_RANGES];
        let mut e_min = i32::MAX;
        let mut e_max = i32::MIN;
        for (r, slot) in (0u8..MAX_RANGES as u8).zip(k.iter_mut()).take(n) {
            let v = meter.j_per_m2_per_unit(RangeIndex(r)) * factor.ratio();
            if !(v.is_finite() && v >= f64::MIN_POSITIVE) {
                return Err(ExposureConfigError::Scale);
            }
            *slot = v;
            // v = m · 2^e with 0.5 ≤ m < 1: 2^(e−1) ≤ v < 2^e.
            let (_, e) = libm::frexp(v);
            e_min = e_min.min(e);
            e_max = e_max.max(e);
        }
        if n == 0 {
            return Err(ExposureConfigError::Scale);
        }
        // With the unit 2^(e_min − 1 − F) the finest range weighs ≥ 2^F units and the coarsest
        // < 2^(spread + 1 + F), which must stay ≤ 2⁶³. F ≥ 52 makes every weight exact (a
        // 53-bit mantissa scaled by a power of two).
        let spread = e_max.saturating_sub(e_min);
        let f = (bits.min(EXACT_BITS) as i32).min(62i32.saturating_sub(spread));
        if f < MIN_PRECISION_BITS as i32 {
            return Err(ExposureConfigError::RangeSpread);
        }
        let unit = libm::ldexp(1.0, e_min.saturating_sub(1).saturating_sub(f));
        if unit.is_nan() || unit < f64::MIN_POSITIVE {
            return Err(ExposureConfigError::Scale);
        }
        let mut weight = [0u64; MAX_RANGES];
        for (w, v) in weight.iter_mut().zip(k.iter()).take(n) {
            // v / unit is v scaled by a power of two. Rounded up (only when F < 52): never
            // under-reads.
            *w = libm::ceil(v / unit) as u64;
        }
        Ok(Self {
            weight,
            unit_j_per_m2: unit,
            bits: f as u32,
        })
    }

    /// Whether `max_code` held for `ticks` (plus one bucket and a 2³²-tick gap) stays below
    /// 2¹²⁷ common units in every range.
    fn holds(&self, max_code: u32, ticks: u64) -> bool {
        let w_max = self.weight.iter().copied().max().unwrap_or(0);
        let span = u128::from(ticks).saturating_add(1 << 32);
        2u128
            .saturating_mul(u128::from(max_code))
            .saturating_mul(span)
            .checked_mul(u128::from(w_max))
            .is_some_and(|v| v < 1 << 127)
    }

    /// Σ_r w_r · raw_r in wrapping `u128` arithmetic (only differences are used).
    fn combine(&self, raw: impl Fn(RangeIndex) -> i128) -> u128 {
        let mut sum = 0u128;
        for (r, w) in (0u8..MAX_RANGES as u8).zip(self.weight.iter()) {
            if *w != 0 {
                // raw ≥ 0: the monitors feed non-negative codes only.
                let v = raw(RangeIndex(r)).max(0) as u128;
                sum = sum.wrapping_add(v.wrapping_mul(u128::from(*w)));
            }
        }
        sum
    }

    fn exposure(&self, units: u128) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(units as f64 * self.unit_j_per_m2)
    }

    /// A level in common units, rounded down (a limit trips early); `None` if not finite,
    /// ≤ 0 or above 2¹²⁶ units.
    ///
    /// The per-range scales come out of a chain of `f64` products, each rounded; a dose
    /// exactly at the level in decimal terms can land a few ulps either side of it. The level
    /// is lowered by [`LEVEL_SLACK`] (a relative 16 ulps) so such a tie trips — the safe
    /// direction for a limit.
    fn level_units(&self, level: RadiantExposure) -> Option<u128> {
        let x = level.j_per_m2() / self.unit_j_per_m2;
        (0.0..TWO_POW_126)
            .contains(&x)
            .then(|| libm::floor(x * (1.0 - LEVEL_SLACK)) as u128)
    }
}

/// Relative lowering of a level before it is rounded down to the common unit: 16 ulps, so a
/// dose at the level within the `f64` rounding of the configuration trips.
pub const LEVEL_SLACK: f64 = 16.0 * f64::EPSILON;

const TWO_POW_126: f64 = 85_070_591_730_234_615_865_843_651_857_942_052_864.0;

/// Effective (weighted) dose from the crate's one integral, on the 64-bit clock. See the
/// [module documentation](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightedDose {
    integrator: Integrator,
    scale: CommonScale,
    clock: Clock,
    factor: WeightFactor,
}

impl WeightedDose {
    /// Weighted dose for `meter` and `factor`; intervals longer than `max_gap` ticks are gaps.
    ///
    /// # Errors
    /// [`ExposureConfigError::MaxGap`], [`ExposureConfigError::Scale`] or
    /// [`ExposureConfigError::RangeSpread`].
    pub fn new(
        meter: &Meter,
        factor: WeightFactor,
        max_gap: u32,
    ) -> Result<Self, ExposureConfigError> {
        if max_gap == 0 || max_gap > i32::MAX as u32 {
            return Err(ExposureConfigError::MaxGap);
        }
        Self::with_scale(meter, factor, max_gap, CommonScale::new(meter, factor)?)
    }

    fn with_scale(
        meter: &Meter,
        factor: WeightFactor,
        max_gap: u32,
        scale: CommonScale,
    ) -> Result<Self, ExposureConfigError> {
        if max_gap == 0 || max_gap > i32::MAX as u32 {
            return Err(ExposureConfigError::MaxGap);
        }
        Ok(Self {
            integrator: Integrator::new(meter, max_gap),
            scale,
            clock: Clock::new(max_gap),
            factor,
        })
    }

    /// Bits of precision of the finest range's weight in the common unit: the weighted
    /// figures over-read by at most 2^−bits relative (52: exact). At least
    /// [`MIN_PRECISION_BITS`].
    #[must_use]
    pub const fn precision_bits(&self) -> u32 {
        self.scale.bits
    }

    /// Move the 64-bit clock to `at` (a reading's or a timer's tick) and return its count.
    pub fn advance_clock(&mut self, at: Ticks) -> u64 {
        self.clock.advance(at);
        self.clock.now()
    }

    /// Ticks since the first tick seen, never decreasing.
    #[must_use]
    pub const fn now(&self) -> u64 {
        self.clock.now()
    }

    /// Integrate one dark-corrected net code (negative codes count as zero). Call
    /// [`advance_clock`](Self::advance_clock) with the same tick first when a rolling window
    /// is kept.
    ///
    /// # Errors
    /// [`SampleError::Repeated`], [`SampleError::Backwards`] (the run restarts from this
    /// reading) or [`SampleError::UnknownRange`]; nothing is integrated. A gap is not an error
    /// here: it is charged and reported.
    pub fn accept(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Accrued, SampleError> {
        let before = self.gap_units();
        match self.integrator.accept(net.max(0), range, at) {
            Ok(step) if step.interval == 0 => Ok(Accrued::Started),
            Ok(step) => Ok(Accrued::Interval(step.interval)),
            Err(SampleError::Gap { ticks }) => {
                let charged = self.gap_units().wrapping_sub(before);
                Ok(Accrued::Gap(Gap {
                    ticks,
                    bound: self.scale.exposure(charged),
                }))
            }
            Err(e) => Err(e),
        }
    }

    /// The running total (measured + gap charges) in common units. It wraps modulo 2¹²⁸:
    /// use differences of two read-outs, as the window does.
    #[must_use]
    pub fn total_units(&self) -> u128 {
        self.measured_units().wrapping_add(self.gap_units())
    }

    /// The running gap charge in common units (wrapping, as [`total_units`](Self::total_units)).
    #[must_use]
    pub fn gap_units(&self) -> u128 {
        self.scale.combine(|r| self.integrator.raw_gap(r))
    }

    fn measured_units(&self) -> u128 {
        self.scale.combine(|r| self.integrator.raw_total(r))
    }

    /// Common units as effective radiant exposure.
    #[must_use]
    pub fn to_exposure(&self, units: u128) -> RadiantExposure {
        self.scale.exposure(units)
    }

    /// Effective J/m² per common unit.
    #[must_use]
    pub const fn unit_j_per_m2(&self) -> f64 {
        self.scale.unit_j_per_m2
    }

    /// A level in common units, rounded down (trips early); `None` when not representable.
    #[must_use]
    pub fn level_units(&self, level: RadiantExposure) -> Option<u128> {
        self.scale.level_units(level)
    }

    /// Effective irradiance of the last integrated reading (negative codes as zero).
    #[must_use]
    pub fn effective_irradiance(&self, meter: &Meter) -> Irradiance {
        self.integrator.last().map_or(Irradiance::ZERO, |l| {
            Irradiance::from_w_per_m2(
                meter.irradiance(l.net.max(0), l.range).w_per_m2() * self.factor.ratio(),
            )
        })
    }

    /// The integral underneath (read-only): measured dose and gap charge, unweighted.
    #[must_use]
    pub const fn integrator(&self) -> &Integrator {
        &self.integrator
    }

    /// Forget the last reading (after a pause the caller accounts for).
    pub fn break_run(&mut self) {
        self.integrator.break_run();
    }
}

/// Rolling sum over `B` complete buckets plus the current one, `B ≤ N − 1`, as marks of a
/// running total. See the [module documentation](self).
///
/// RAM: 16 bytes per bucket (`RollingWindow<481>`, 8 h in 1-min buckets, is about 7.7 KiB;
/// 8 h in 10-min buckets, `RollingWindow<49>`, about 0.8 KiB).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RollingWindow<const N: usize> {
    /// The running total at the end of each of the last `used + 1` buckets (ring).
    marks: [u128; N],
    used: usize,
    /// Index of the newest mark.
    head: usize,
    bucket_ticks: u64,
    /// Index of the open bucket on the 64-bit clock (bucket k covers [k·b, (k+1)·b)).
    current: u64,
}

impl<const N: usize> RollingWindow<N> {
    const CAPACITY_OK: () = assert!(N >= 2, "a rolling window needs N >= 2");

    /// A window of `window_ticks` in buckets of `bucket_ticks` (64-bit ticks: an 8 h window
    /// at 10 MHz is 2.9·10¹¹ ticks).
    ///
    /// # Errors
    /// [`ExposureConfigError::WindowNotWholeBuckets`] or [`ExposureConfigError::WindowTooLong`].
    pub fn new(window_ticks: u64, bucket_ticks: u64) -> Result<Self, ExposureConfigError> {
        let () = Self::CAPACITY_OK;
        if bucket_ticks == 0 || window_ticks == 0 {
            return Err(ExposureConfigError::WindowNotWholeBuckets);
        }
        let (Some(used), Some(0)) = (
            window_ticks.checked_div(bucket_ticks),
            window_ticks.checked_rem(bucket_ticks),
        ) else {
            return Err(ExposureConfigError::WindowNotWholeBuckets);
        };
        let used = usize::try_from(used).map_err(|_| ExposureConfigError::WindowTooLong)?;
        if used > N.saturating_sub(1) {
            return Err(ExposureConfigError::WindowTooLong);
        }
        Ok(Self {
            marks: [0; N],
            used,
            head: 0,
            bucket_ticks,
            current: 0,
        })
    }

    /// Move the window to `now` (ticks of the 64-bit clock, never decreasing), closing every
    /// bucket that ended with the running total `total` as its mark. Call it before adding the
    /// reading taken at `now`: an interval that spans a boundary counts in the later bucket.
    pub fn roll_to(&mut self, now: u64, total: u128) {
        let idx = now.checked_div(self.bucket_ticks).unwrap_or(0);
        if idx <= self.current {
            return;
        }
        // After used + 1 closings every mark equals `total`; more changes nothing.
        let n = idx.wrapping_sub(self.current);
        let closings = usize::try_from(n)
            .unwrap_or(usize::MAX)
            .min(self.used.saturating_add(1));
        for _ in 0..closings {
            self.head = self.next(self.head);
            if let Some(m) = self.marks.get_mut(self.head) {
                *m = total;
            }
        }
        self.current = idx;
    }

    /// Start every mark at `total` (the running total when the window starts counting).
    pub fn reset(&mut self, total: u128) {
        self.marks = [total; N];
    }

    /// The window total: the running total `total` minus the mark where the window begins.
    #[must_use]
    pub fn total(&self, total: u128) -> u128 {
        total.wrapping_sub(self.oldest())
    }

    /// The total of the complete buckets only (the last `B` whole buckets).
    #[must_use]
    pub fn complete_total(&self) -> u128 {
        self.marks
            .get(self.head)
            .copied()
            .unwrap_or(0)
            .wrapping_sub(self.oldest())
    }

    /// Number of complete buckets the window holds (`window / bucket`).
    #[must_use]
    pub const fn buckets(&self) -> usize {
        self.used
    }

    /// Bucket length, ticks.
    #[must_use]
    pub const fn bucket_ticks(&self) -> u64 {
        self.bucket_ticks
    }

    fn oldest(&self) -> u128 {
        self.marks.get(self.next(self.head)).copied().unwrap_or(0)
    }

    /// The ring index after `i`, over the `used + 1` marks in use.
    fn next(&self, i: usize) -> usize {
        if i >= self.used {
            0
        } else {
            i.wrapping_add(1)
        }
    }
}

/// Exposure monitor configuration.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureConfig<const L: usize> {
    /// Rolling window, ticks (8 h for ICNIRP). Valid: a whole number of buckets.
    pub window_ticks: u64,
    /// Bucket length, ticks (for example 1 min). Valid: > 0.
    pub bucket_ticks: u64,
    /// Effective radiant exposure limit over the window (30 J/m² for ICNIRP 2004). Valid: > 0.
    pub limit: RadiantExposure,
    /// Warning levels as fractions of the limit, strictly increasing (for example
    /// `[0.5, 0.8, 1.0]`). The last level is the alarm: latched until acknowledged.
    pub levels: [f64; L],
    /// A level clears when the fraction falls below level − hysteresis. Valid: ≥ 0 and below
    /// the lowest level.
    pub hysteresis: f64,
    /// Longest expected interval between samples, ticks; longer ones are gaps charged with
    /// max(irradiance before, after) × gap. Valid: 1 ..= 2³¹ − 1.
    pub max_gap_ticks: u32,
}

/// What changed at a reading.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Changes {
    /// Levels that became active (bit i = level i).
    pub raised: u8,
    /// Levels that cleared.
    pub cleared: u8,
    /// The alarm latched at this reading.
    pub alarm_latched: bool,
    /// A gap was charged.
    pub gap: Option<Gap>,
    /// The reading was saturated (top rail) and counted at the range's full scale.
    pub saturated: bool,
    /// The reading was not used: why.
    pub ignored: Option<ReadingIssue>,
}

/// Why a reading was not used by the exposure monitor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ReadingIssue {
    /// The code cannot be used (bottom rail, out of range, unknown range). The interval up to
    /// the next good reading is bridged or, if longer than the maximum gap, charged as a gap.
    Code(CodeFault),
    /// Repeated timestamp.
    Repeated,
    /// Time went backwards; the reading is not integrated and the run restarts from it
    /// (nothing already counted is lost, later readings are not blocked).
    Backwards,
}

/// Totals of a shift, returned by [`ExposureMonitor::end_shift`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ShiftTotals {
    /// Effective radiant exposure of the shift, gap charges included.
    pub exposure: RadiantExposure,
    /// Of which charged for gaps (conservative bounds).
    pub gap_bounds: RadiantExposure,
    /// Number of gaps.
    pub gaps: u32,
    /// Whether the alarm was latched when the shift ended (it stays latched).
    pub alarm_latched: bool,
}

/// The personal exposure monitor. See the [module documentation](self).
///
/// `N` is the bucket capacity (window buckets + 1), `L` the number of warning levels (one
/// output pin each, `L ≤ 8`).
#[derive(Debug)]
pub struct ExposureMonitor<const N: usize, const L: usize, P> {
    meter: Meter,
    dose: WeightedDose,
    window: RollingWindow<N>,
    shift_start: u128,
    shift_gap_start: u128,
    gaps: u32,
    raise_units: [u128; L],
    clear_units: [u128; L],
    limit_units: u128,
    active: u8,
    latched: bool,
    limit: RadiantExposure,
    pins: [P; L],
}

impl<const N: usize, const L: usize, P: OutputPin> ExposureMonitor<N, L, P> {
    const LEVELS_OK: () = assert!(L >= 1 && L <= 8, "1 to 8 warning levels");

    /// Validate the configuration and set every output inactive (low).
    ///
    /// # Errors
    /// `Err(Ok(_))` for a configuration error, `Err(Err(_))` if a pin cannot be written.
    #[allow(clippy::type_complexity)] // nested Result keeps configuration and pin errors apart
    pub fn new(
        meter: Meter,
        weight: WeightFactor,
        config: ExposureConfig<L>,
        pins: [P; L],
    ) -> Result<Self, Result<ExposureConfigError, P::Error>> {
        let () = Self::LEVELS_OK;
        let limit = config.limit.j_per_m2();
        if !(limit.is_finite() && limit > 0.0) {
            return Err(Ok(ExposureConfigError::Limit));
        }
        let mut previous = 0.0;
        for &l in &config.levels {
            if !(l.is_finite() && l > previous) {
                return Err(Ok(ExposureConfigError::WarningLevels));
            }
            previous = l;
        }
        let lowest = config.levels.first().copied().unwrap_or(0.0);
        let h = config.hysteresis;
        if !(h.is_finite() && h >= 0.0 && h < lowest) {
            return Err(Ok(ExposureConfigError::Hysteresis));
        }
        let window = RollingWindow::new(config.window_ticks, config.bucket_ticks).map_err(Ok)?;
        // The most precision (up to exact) at which both the limit and a full-scale window fit
        // the common unit; never below MIN_PRECISION_BITS.
        let fe = meter.front_end();
        let max_code = fe
            .max_code()
            .unsigned_abs()
            .max(fe.min_code().unsigned_abs());
        let span = config.window_ticks.saturating_add(config.bucket_ticks);
        let mut found = Err(ExposureConfigError::WindowRange);
        for bits in (MIN_PRECISION_BITS..=EXACT_BITS).rev() {
            let scale = CommonScale::with_precision(&meter, weight, bits).map_err(Ok)?;
            if scale.bits < bits {
                continue;
            }
            if !scale.holds(max_code, span) {
                found = Err(ExposureConfigError::WindowRange);
            } else if let Some(limit_units) = scale.level_units(config.limit) {
                found = Ok((scale, limit_units));
                break;
            } else {
                found = Err(ExposureConfigError::Limit);
            }
        }
        let (scale, limit_units) = found.map_err(Ok)?;
        let dose =
            WeightedDose::with_scale(&meter, weight, config.max_gap_ticks, scale).map_err(Ok)?;
        let mut raise_units = [0u128; L];
        let mut clear_units = [0u128; L];
        for ((r, c), &l) in raise_units
            .iter_mut()
            .zip(clear_units.iter_mut())
            .zip(&config.levels)
        {
            // Warnings trip early: the level and its clear point are rounded down.
            *r = dose
                .level_units(RadiantExposure::from_j_per_m2(l * limit))
                .ok_or(Ok(ExposureConfigError::Limit))?;
            *c = dose
                .level_units(RadiantExposure::from_j_per_m2((l - h) * limit))
                .ok_or(Ok(ExposureConfigError::Hysteresis))?;
        }
        let mut m = Self {
            meter,
            dose,
            window,
            shift_start: 0,
            shift_gap_start: 0,
            gaps: 0,
            raise_units,
            clear_units,
            limit_units,
            active: 0,
            latched: false,
            limit: config.limit,
            pins,
        };
        for p in &mut m.pins {
            p.set_low().map_err(Err)?;
        }
        Ok(m)
    }

    /// Feed one reading.
    ///
    /// # Errors
    /// The pin error if a warning output cannot be written (the exposure is still counted).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Changes, P::Error> {
        let sample = self.meter.front_end().sample(reading);
        self.on_sample(&sample)
    }

    /// Feed one reading whose net code was already computed with this monitor's meter
    /// ([`FrontEnd::sample`](crate::frontend::FrontEnd::sample)); otherwise as
    /// [`on_reading`](Self::on_reading).
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading).
    pub fn on_sample(&mut self, sample: &Sample) -> Result<Changes, P::Error> {
        let reading = &sample.reading;
        let mut changes = Changes::default();
        let net = match net_or_full_scale(&self.meter, sample) {
            Ok((n, saturated)) => {
                changes.saturated = saturated;
                n
            }
            Err(f) => {
                changes.ignored = Some(ReadingIssue::Code(f));
                return Ok(changes);
            }
        };
        let now = self.dose.advance_clock(reading.at);
        self.window.roll_to(now, self.dose.total_units());
        match self.dose.accept(net, reading.range, reading.at) {
            Ok(Accrued::Started | Accrued::Interval(_)) => {}
            Ok(Accrued::Gap(gap)) => {
                self.gaps = self.gaps.saturating_add(1);
                changes.gap = Some(gap);
            }
            Err(SampleError::Repeated) => {
                changes.ignored = Some(ReadingIssue::Repeated);
                return Ok(changes);
            }
            Err(SampleError::Backwards { .. }) => {
                changes.ignored = Some(ReadingIssue::Backwards);
                return Ok(changes);
            }
            Err(SampleError::UnknownRange | SampleError::Gap { .. }) => {
                changes.ignored = Some(ReadingIssue::Code(CodeFault::UnknownRange));
                return Ok(changes);
            }
        }
        self.update_levels(&mut changes)?;
        Ok(changes)
    }

    /// Move the window to `now` without a reading (for example on a timer while asleep), so
    /// expired dose leaves and levels can clear.
    ///
    /// # Errors
    /// The pin error if an output cannot be written.
    pub fn tick(&mut self, now: Ticks) -> Result<Changes, P::Error> {
        let mut changes = Changes::default();
        // A backwards or repeated tick leaves the 64-bit clock (and so the window) where it is.
        let t = self.dose.advance_clock(now);
        self.window.roll_to(t, self.dose.total_units());
        self.update_levels(&mut changes)?;
        Ok(changes)
    }

    /// Take a new dark offset for range `r` (between exposures, after a dark capture): every
    /// later reading is corrected with it. Returns `false` and changes nothing if the range
    /// does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        self.meter.front_end_mut().set_dark_offset(r, dark_offset)
    }

    /// Acknowledge the alarm. It unlatches, and its output clears once the window is below
    /// the alarm level − hysteresis (immediately if it already is). Returns whether the alarm
    /// output is still active.
    ///
    /// # Errors
    /// The pin error if an output cannot be written.
    pub fn acknowledge(&mut self) -> Result<bool, P::Error> {
        self.latched = false;
        let mut changes = Changes::default();
        self.update_levels(&mut changes)?;
        Ok(self.active & alarm_bit::<L>() != 0)
    }

    /// End the shift: return its totals and start new ones. The rolling window and a latched
    /// alarm are **not** reset — the body does not forget at a shift change.
    pub fn end_shift(&mut self) -> ShiftTotals {
        let t = self.shift_totals();
        self.shift_start = self.dose.total_units();
        self.shift_gap_start = self.dose.gap_units();
        self.gaps = 0;
        t
    }

    /// Totals of the current shift.
    #[must_use]
    pub fn shift_totals(&self) -> ShiftTotals {
        ShiftTotals {
            exposure: self
                .dose
                .to_exposure(self.dose.total_units().wrapping_sub(self.shift_start)),
            gap_bounds: self
                .dose
                .to_exposure(self.dose.gap_units().wrapping_sub(self.shift_gap_start)),
            gaps: self.gaps,
            alarm_latched: self.latched,
        }
    }

    /// Effective exposure in the rolling window, gap charges included.
    #[must_use]
    pub fn window_exposure(&self) -> RadiantExposure {
        self.dose.to_exposure(self.window_units())
    }

    /// The window total in the common integer unit (see [`WeightedDose`]).
    #[must_use]
    pub fn window_units(&self) -> u128 {
        self.window.total(self.dose.total_units())
    }

    /// The limit in the common integer unit, rounded down.
    #[must_use]
    pub const fn limit_units(&self) -> u128 {
        self.limit_units
    }

    /// Fraction of the limit used in the window.
    #[must_use]
    pub fn fraction_used(&self) -> f64 {
        self.window_exposure().j_per_m2() / self.limit.j_per_m2()
    }

    /// Effective irradiance of the last reading.
    #[must_use]
    pub fn effective_irradiance(&self) -> Irradiance {
        self.dose.effective_irradiance(&self.meter)
    }

    /// Remaining allowed time at the current effective irradiance, t = remaining / E_eff;
    /// `None` when E_eff is zero (unlimited at the present level), zero when the limit is used.
    #[must_use]
    pub fn time_left(&self) -> Option<Seconds> {
        let e = self.effective_irradiance().w_per_m2();
        let remaining = (self.limit.j_per_m2() - self.window_exposure().j_per_m2()).max(0.0);
        (e > 0.0).then(|| Seconds::from_s(remaining / e))
    }

    /// Active levels (bit i = level i).
    #[must_use]
    pub const fn active_levels(&self) -> u8 {
        self.active
    }

    /// Whether the alarm is latched.
    #[must_use]
    pub const fn alarm_latched(&self) -> bool {
        self.latched
    }

    /// The meter.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// The weighted dose underneath (its integral, clock and common unit).
    #[must_use]
    pub const fn dose(&self) -> &WeightedDose {
        &self.dose
    }

    /// Give the pins back.
    pub fn release(self) -> [P; L] {
        self.pins
    }

    fn update_levels(&mut self, changes: &mut Changes) -> Result<(), P::Error> {
        let total = self.window_units();
        let alarm = alarm_bit::<L>();
        for i in 0..L {
            let bit = 1u8 << i;
            let (Some(&raise), Some(&clear)) = (self.raise_units.get(i), self.clear_units.get(i))
            else {
                continue;
            };
            let was = self.active & bit != 0;
            let now = if was {
                total >= clear || (bit == alarm && self.latched)
            } else {
                total >= raise
            };
            if now && !was {
                self.active |= bit;
                changes.raised |= bit;
                if bit == alarm {
                    self.latched = true;
                    changes.alarm_latched = true;
                }
                if let Some(p) = self.pins.get_mut(i) {
                    p.set_high()?;
                }
            } else if !now && was {
                self.active &= !bit;
                changes.cleared |= bit;
                if let Some(p) = self.pins.get_mut(i) {
                    p.set_low()?;
                }
            }
        }
        Ok(())
    }
}

/// The net code of a reading, or the range's full-scale net code for a top-rail (saturated)
/// reading — the least the light can be — with `true`.
fn net_or_full_scale(meter: &Meter, sample: &Sample) -> Result<(i32, bool), CodeFault> {
    let fe = meter.front_end();
    let reading = &sample.reading;
    match sample.net {
        Ok(n) => Ok((n, false)),
        Err(CodeFault::SaturatedHigh) => {
            let dark = fe.range(reading.range).map_or(0, |r| r.dark_offset);
            // Both lie within the code range (±2²⁴): the difference never wraps.
            Ok((fe.high_limit().wrapping_sub(dark), true))
        }
        Err(f) => Err(f),
    }
}

const fn alarm_bit<const L: usize>() -> u8 {
    if L == 0 || L > 8 {
        0
    } else {
        1 << (L - 1)
    }
}

/// Solar UV: live UV index (averaged) and the day's erythemal dose in SED.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SolarMonitor<const N: usize> {
    meter: Meter,
    dose: WeightedDose,
    average: RollingWindow<N>,
    averaging_s: f64,
    day_start: u128,
}

impl<const N: usize> SolarMonitor<N> {
    /// `erythema` is the erythemal weight factor of the band (CIE erythema action spectrum);
    /// the UV index is averaged over `averaging_ticks` (WHO: 5–10 min for real-time display)
    /// in buckets of `bucket_ticks`.
    ///
    /// # Errors
    /// [`ExposureConfigError`] for an invalid period, gap or scale.
    pub fn new(
        meter: Meter,
        erythema: WeightFactor,
        averaging_ticks: u64,
        bucket_ticks: u64,
        max_gap_ticks: u32,
    ) -> Result<Self, ExposureConfigError> {
        let average = RollingWindow::new(averaging_ticks, bucket_ticks)
            .map_err(|_| ExposureConfigError::AveragingPeriod)?;
        let dose = WeightedDose::new(&meter, erythema, max_gap_ticks)?;
        let averaging_s = averaging_ticks as f64 / f64::from(meter.tick_rate().hz());
        Ok(Self {
            meter,
            dose,
            average,
            averaging_s,
            day_start: 0,
        })
    }

    /// Feed one reading: as [`accept`](Self::accept) after the front end's net code, with a
    /// top-rail (saturated) reading counted at the range's full scale.
    ///
    /// # Errors
    /// [`SampleError::UnknownRange`] for a code that cannot be used; otherwise as
    /// [`accept`](Self::accept).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Option<Gap>, SampleError> {
        let sample = self.meter.front_end().sample(reading);
        let (net, _) =
            net_or_full_scale(&self.meter, &sample).map_err(|_| SampleError::UnknownRange)?;
        self.accept(net, reading.range, reading.at)
    }

    /// Feed one dark-corrected net code (from [`crate::frontend::FrontEnd::net_code`]).
    ///
    /// # Errors
    /// As [`WeightedDose::accept`]; gaps are charged with their bound and returned.
    pub fn accept(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Option<Gap>, SampleError> {
        let now = self.dose.advance_clock(at);
        self.average.roll_to(now, self.dose.total_units());
        Ok(match self.dose.accept(net, range, at)? {
            Accrued::Started | Accrued::Interval(_) => None,
            Accrued::Gap(g) => Some(g),
        })
    }

    /// The meter.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// UV index averaged over the configured period: the erythemal exposure of the last
    /// complete buckets spanning the period ÷ its length, × 40 m²/W. Before a full period has
    /// passed this under-reads.
    #[must_use]
    pub fn uv_index(&self) -> UvIndex {
        let full_s = self.averaging_s;
        let mean = if full_s > 0.0 {
            self.dose
                .to_exposure(self.average.complete_total())
                .j_per_m2()
                / full_s
        } else {
            0.0
        };
        UvIndex::from_erythemal_w_per_m2(mean)
    }

    /// The averaged UV index rounded to an integer as WHO reports it (half up), and its
    /// category.
    #[must_use]
    pub fn uv_index_reported(&self) -> (u32, UvIndexCategory) {
        let u = self.uv_index();
        (u.rounded(), u.category())
    }

    /// Live UV index from the last reading alone (no averaging).
    #[must_use]
    pub fn uv_index_now(&self) -> UvIndex {
        UvIndex::from_erythemal_w_per_m2(self.dose.effective_irradiance(&self.meter).w_per_m2())
    }

    /// The day's erythemal exposure (gap charges included), in SED (100 J/m²).
    #[must_use]
    pub fn day_sed(&self) -> f64 {
        let units = self.dose.total_units().wrapping_sub(self.day_start);
        self.dose.to_exposure(units).j_per_m2() / SED_J_PER_M2
    }

    /// Start a new day.
    pub fn reset_day(&mut self) {
        self.day_start = self.dose.total_units();
    }
}

/// Duty-cycled sampling: a slow period while the light is steady, a fast one when it changes.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SamplingPlan {
    /// Period while steady, ticks.
    pub slow_ticks: u32,
    /// Period while changing, ticks (≤ slow).
    pub fast_ticks: u32,
    /// Relative change between two samples that counts as "changing" (e.g. 0.2).
    pub change: f64,
    /// Irradiance below which the light counts as off (no fast sampling for noise), W/m².
    pub floor: Irradiance,
}

impl SamplingPlan {
    /// Ticks until the next sample, given the previous and the latest irradiance.
    #[must_use]
    pub fn next_delay(&self, previous: Irradiance, latest: Irradiance) -> u32 {
        let (a, b) = (previous.w_per_m2(), latest.w_per_m2());
        let big = libm::fmax(a, b);
        if big <= self.floor.w_per_m2() {
            return self.slow_ticks;
        }
        if libm::fabs(b - a) > self.change * big {
            self.fast_ticks.min(self.slow_ticks)
        } else {
            self.slow_ticks
        }
    }
}

/// Status lines for a small character display (16 columns), formatted with integers only.
pub mod display {
    use core::fmt::Write;

    use crate::quantity::Seconds;
    use crate::weighting::UvIndexCategory;

    /// Width of a line, characters.
    pub const WIDTH: usize = 16;

    /// A display line of at most [`WIDTH`] ASCII characters; text beyond the width is cut.
    ///
    /// (A small buffer of our own rather than `heapless::String`, so that no generic
    /// container code is instantiated in the library for it.)
    #[derive(Debug, Clone, Copy, PartialEq, Eq)]
    pub struct Line {
        buf: [u8; WIDTH],
        len: u8,
    }

    impl Line {
        /// An empty line.
        #[must_use]
        pub const fn new() -> Self {
            Self {
                buf: [b' '; WIDTH],
                len: 0,
            }
        }
        /// The text.
        #[must_use]
        pub fn as_str(&self) -> &str {
            let bytes = self.buf.get(..usize::from(self.len)).unwrap_or(&[]);
            core::str::from_utf8(bytes).unwrap_or("")
        }
        /// Length in characters.
        #[must_use]
        pub const fn len(&self) -> usize {
            self.len as usize
        }
        /// Whether the line is empty.
        #[must_use]
        pub const fn is_empty(&self) -> bool {
            self.len == 0
        }
        fn push_str(&mut self, s: &str) {
            for &b in s.as_bytes() {
                // ASCII only: anything else would break the fixed width of the display.
                let b = if b.is_ascii() { b } else { b'?' };
                if let Some(slot) = self.buf.get_mut(usize::from(self.len)) {
                    *slot = b;
                    self.len = self.len.saturating_add(1);
                }
            }
        }
    }

    impl Default for Line {
        fn default() -> Self {
            Self::new()
        }
    }

    impl Write for Line {
        fn write_str(&mut self, s: &str) -> core::fmt::Result {
            self.push_str(s);
            Ok(())
        }
    }

    /// `"DOSE  42% 3h07m"`: percent of the limit used (whole percent, rounded up) and time
    /// left (`--` when unlimited at the present level, `STOP` when the limit is used).
    #[must_use]
    pub fn dose_line(fraction_used: f64, time_left: Option<Seconds>) -> Line {
        let mut s = Line::new();
        let pct = libm::ceil(fraction_used * 100.0);
        let pct = if pct <= 0.0 {
            0
        } else if pct >= 999.0 {
            999
        } else {
            pct as u32
        };
        let _ = write!(s, "DOSE {pct:>3}% ");
        match time_left {
            None => {
                s.push_str("  --");
            }
            Some(t) if t.s() <= 0.0 || pct >= 100 => {
                s.push_str("STOP");
            }
            Some(t) => {
                // Round down: never show more time than is left.
                let secs = libm::floor(t.s());
                let secs = if secs >= 359_999.0 {
                    359_999
                } else {
                    secs as u32
                };
                let (h, m, sec) = (secs / 3600, (secs / 60) % 60, secs % 60);
                let _ = if h > 0 {
                    write!(s, "{h}h{m:02}m")
                } else {
                    write!(s, "{m}m{sec:02}s")
                };
            }
        }
        s
    }

    /// `"UVI  7 HIGH 1.3S"`: reported UV index, category, day's dose in SED (one decimal,
    /// rounded up).
    #[must_use]
    pub fn solar_line(uvi: u32, category: UvIndexCategory, day_sed: f64) -> Line {
        let mut s = Line::new();
        let cat = match category {
            UvIndexCategory::Low => "LOW",
            UvIndexCategory::Moderate => "MOD",
            UvIndexCategory::High => "HIGH",
            UvIndexCategory::VeryHigh => "VHI",
            UvIndexCategory::Extreme => "EXT",
        };
        let tenths = libm::ceil(day_sed * 10.0);
        let tenths = if tenths <= 0.0 {
            0
        } else if tenths >= 999.0 {
            999
        } else {
            tenths as u32
        };
        let uvi = uvi.min(99);
        let _ = write!(s, "UVI{uvi:>3} {cat:<4}{}.{}S", tenths / 10, tenths % 10);
        s
    }
}
