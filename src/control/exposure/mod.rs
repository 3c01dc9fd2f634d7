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
//!   64-bit [`Clock`](crate::time::Clock): the window total is the running total minus the mark where the window
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
//! - [`ExposureState`] is the monitor's checkpoint: the window (by segment), the shift, the
//!   warnings and the latched alarm, in µJ/m² rounded up, restored after a reset without
//!   ever counting less ([`ExposureMonitor::resume`], [`OffTime`]).
//! - [`SamplingPlan`] chooses the next sample time for battery-friendly duty cycling, and
//!   [`display`] formats short status lines for a character display without float formatting.
//!
//! A saturated (top-rail) reading means the light is at least the range's full scale; the
//! monitors count it at full scale (a lower bound of the truth) and report it, rather than
//! bridging it from the neighbouring readings, which would under-count.
//!
//! Two rule sets for the UV-A eye limit exist and differ by a factor of about 29 for long
//! exposures; they are offered separately ([`crate::spectral::weighting::UvaEyeRule`]), never merged.

use crate::quantity::RadiantExposure;
use crate::spectral::band_tolerance::FactorRange;
use crate::spectral::weighting::WeightedFactor;

pub mod display;
mod monitor;
mod plan;
mod solar;
mod state;
mod weighted;
mod window;

pub use monitor::{
    Changes, ExposureConfig, ExposureError, ExposureMonitor, ReadingIssue, ShiftTotals,
};
pub use plan::SamplingPlan;
pub use solar::SolarMonitor;
pub use state::{ExposureState, OffTime, STATE_SEGMENTS};
pub use weighted::{WeightedDose, LEVEL_SLACK};
pub use window::RollingWindow;

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
    /// The factor computed from the band and an action spectrum at the band's nominal peak
    /// ([`crate::spectral::weighting::WeightedFactor`]); `None` if its fraction is zero.
    ///
    /// For an LED whose peak has a tolerance (a datasheet bin), use
    /// [`for_limit`](Self::for_limit) for an exposure limit: the nominal factor can be well
    /// below the one at the worst peak in the bin near a steep action spectrum.
    #[must_use]
    pub fn from_weighted(factor: &WeightedFactor) -> Option<Self> {
        Self::from_ratio(factor.fraction())
    }
    /// The conservative factor for a limit that protects people: the largest weighted
    /// fraction over the LED's peak tolerance
    /// ([`FactorRange::conservative_fraction`], from
    /// [`led_factor_range`](crate::spectral::band_tolerance::led_factor_range)). This is the
    /// factor the exposure monitor should be configured with whenever the peak has a
    /// tolerance. `None` if that fraction is zero (the action spectrum does not see the band).
    #[must_use]
    pub fn for_limit(range: &FactorRange) -> Option<Self> {
        Self::from_ratio(range.conservative_fraction())
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
