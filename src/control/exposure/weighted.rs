//! The weighted dose: the one integral read out in a common integer unit.

use crate::acquire::reading::{RangeIndex, Ticks};
use crate::dose::{Integrator, SampleError};
use crate::frontend::MAX_RANGES;
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure};
use crate::time::Clock;

use super::{Accrued, ExposureConfigError, Gap, WeightFactor, EXACT_BITS, MIN_PRECISION_BITS};

/// Per-range weights of the common integer unit. See the [module documentation](super).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(super) struct CommonScale {
    /// Common units per integrator unit, per range (0 for ranges the meter lacks).
    weight: [u64; MAX_RANGES],
    /// Effective J/m² per common unit (a power of two).
    unit_j_per_m2: f64,
    /// The finest range weighs at least 2^bits units (52: every weight exact).
    pub(super) bits: u32,
}

impl CommonScale {
    /// The scale at the most precision the ranges allow (at most 52 bits, which holds every
    /// range's `f64` factor exactly).
    fn new(meter: &Meter, factor: WeightFactor) -> Result<Self, ExposureConfigError> {
        Self::with_precision(meter, factor, EXACT_BITS)
    }

    /// The scale with the finest range weighing at least 2^`bits` (lowered to what the range
    /// spread allows below 2⁶³).
    pub(super) fn with_precision(
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
    pub(super) fn holds(&self, max_code: u32, ticks: u64) -> bool {
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
    pub(super) fn level_units(&self, level: RadiantExposure) -> Option<u128> {
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
/// [module documentation](super).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightedDose {
    integrator: Integrator,
    pub(super) scale: CommonScale,
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

    pub(super) fn with_scale(
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
