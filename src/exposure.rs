//! Exposure: hazard-weighted dose against a daily limit, for people who carry a logger.
//!
//! A person's limit is set on the *effective* (action-spectrum weighted) radiant exposure over
//! a rolling window — for example ICNIRP 2004 / IEC 62471: H_eff ≤ 30 J/m² in any 8 h, with
//! the relative spectral effectiveness S(λ). For a fixed band the effective exposure is a
//! constant times the radiant exposure ([`WeightFactor`], computed at configuration time from
//! the band and the action spectrum), so the per-sample work stays in integers.
//!
//! # Stages
//!
//! - [`Accrual`] turns consecutive readings into integer increments of effective exposure
//!   (fixed point, 2⁻³² of a [quantum](QUANTUM_J_PER_M2)), by the trapezoid rule on the
//!   samples' own timestamps; negative (below-dark) codes count as zero, which can only
//!   overestimate. A gap longer than the configured maximum is **not** skipped: it is charged
//!   with a conservative bound, the last irradiance × the gap, and reported.
//! - [`RollingWindow`] keeps the last `B` complete time buckets plus the current one, so
//!   dose that leaves the window is subtracted exactly (integer quanta). The window always
//!   covers at least the configured length (between `B` and `B + 1` buckets), which errs on
//!   the side of counting more.
//! - [`ExposureMonitor`] compares the window with the limit, drives one output per warning
//!   level with hysteresis, latches the alarm (the top level) until acknowledged, keeps
//!   per-shift totals, and reports the remaining allowed time `t = remaining / E_eff`.
//! - [`SolarMonitor`] gives the UV index (WHO 2002: 40 m²/W × erythemal irradiance, averaged
//!   over a configurable period, reported as an integer) with the WHO categories, and the
//!   day's erythemal dose in SED (100 J/m², ISO/CIE 17166).
//! - [`SamplingPlan`] chooses the next sample time for battery-friendly duty cycling, and
//!   [`display`] formats short status lines for a character display without float formatting.
//!
//! Two rule sets for the UV-A eye limit exist and differ by a factor of about 29 for long
//! exposures; they are offered separately ([`crate::weighting::UvaEyeRule`]), never merged.

use core::num::NonZeroU32;

use embedded_hal::digital::OutputPin;

use crate::dose::{interval, LastSample, SampleError};
use crate::frontend::{CodeFault, MAX_RANGES};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};
use crate::reading::{RangeIndex, Reading, Ticks};
use crate::weighting::{UvIndex, UvIndexCategory, WeightedFactor, SED_J_PER_M2};

/// The integer quantum of effective radiant exposure in windows and totals: 1 µJ/m².
pub const QUANTUM_J_PER_M2: f64 = 1e-6;
const FRAC_BITS: u32 = 32;
const FRAC_ONE: u128 = 1 << FRAC_BITS;

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
pub enum ExposureConfigError {
    /// Bucket length 0, or window not a whole number (≥ 1) of buckets.
    WindowNotWholeBuckets,
    /// The window needs more buckets than the capacity `N − 1`.
    WindowTooLong,
    /// The limit is not finite or ≤ 0.
    Limit,
    /// Warning fractions not finite, not > 0, or not strictly increasing.
    WarningLevels,
    /// Hysteresis not finite, < 0, or not smaller than the lowest warning level.
    Hysteresis,
    /// Maximum gap is 0 or ≥ 2³¹ ticks.
    MaxGap,
    /// The meter's scale is too small or too large for the fixed-point accrual.
    Scale,
    /// The averaging period of the UV index is 0 or not whole buckets.
    AveragingPeriod,
}

impl core::fmt::Display for ExposureConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::WindowNotWholeBuckets => "window must be a whole number of non-empty buckets",
            Self::WindowTooLong => "window needs more buckets than the capacity",
            Self::Limit => "limit must be finite and > 0",
            Self::WarningLevels => "warning fractions must be finite, > 0 and increasing",
            Self::Hysteresis => "hysteresis must be >= 0 and below the lowest warning level",
            Self::MaxGap => "maximum gap must be 1 to 2^31-1 ticks",
            Self::Scale => "meter scale out of range for the exposure accrual",
            Self::AveragingPeriod => "averaging period must be whole, non-empty buckets",
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
    /// Effective exposure charged for it: last effective irradiance × gap.
    pub bound: RadiantExposure,
}

/// What one reading added.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Accrued {
    /// The first reading of a run: nothing to integrate yet.
    Started,
    /// An interval integrated: fixed-point quanta (2⁻³² µJ/m² effective).
    Interval(u128),
    /// A gap charged with its bound (fixed-point quanta), and the gap itself.
    Gap(u128, Gap),
}

/// Per-sample accrual of effective exposure in fixed-point integer quanta.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Accrual {
    /// Fixed-point quanta per integer unit (net code × tick, doubled), per range.
    per_unit: [u64; MAX_RANGES],
    w_per_m2_eff_per_code: [f64; MAX_RANGES],
    tick_hz: u32,
    max_gap: u32,
    last: Option<LastSample>,
}

impl Accrual {
    /// Accrual for `meter` weighted by `weight`; intervals longer than `max_gap` ticks are
    /// gaps.
    ///
    /// # Errors
    /// [`ExposureConfigError::MaxGap`] or [`ExposureConfigError::Scale`].
    pub fn new(
        meter: &Meter,
        weight: WeightFactor,
        max_gap: u32,
    ) -> Result<Self, ExposureConfigError> {
        if max_gap == 0 || max_gap > i32::MAX as u32 {
            return Err(ExposureConfigError::MaxGap);
        }
        let mut per_unit = [0u64; MAX_RANGES];
        let mut eff = [0.0f64; MAX_RANGES];
        for r in 0..meter.front_end().range_count().min(MAX_RANGES) {
            let ri = RangeIndex(r as u8);
            let scale = meter.j_per_m2_per_unit(ri) * weight.ratio() / QUANTUM_J_PER_M2;
            let fixed = libm::ceil(scale * FRAC_ONE as f64);
            if !(fixed >= 1.0 && fixed < u64::MAX as f64) {
                return Err(ExposureConfigError::Scale);
            }
            if let (Some(p), Some(e)) = (per_unit.get_mut(r), eff.get_mut(r)) {
                *p = fixed as u64;
                *e = meter.irradiance(1, ri).w_per_m2() * weight.ratio();
            }
        }
        Ok(Self {
            per_unit,
            w_per_m2_eff_per_code: eff,
            tick_hz: meter.tick_rate().hz(),
            max_gap,
            last: None,
        })
    }

    /// Effective irradiance of the last reading.
    #[must_use]
    pub fn effective_irradiance(&self) -> Irradiance {
        self.last.map_or(Irradiance::ZERO, |l| {
            let k = self
                .w_per_m2_eff_per_code
                .get(usize::from(l.range.0))
                .copied()
                .unwrap_or(0.0);
            Irradiance::from_w_per_m2(f64::from(l.net.max(0)) * k)
        })
    }

    /// The last accepted reading.
    #[must_use]
    pub const fn last(&self) -> Option<LastSample> {
        self.last
    }

    /// Integrate one dark-corrected reading.
    ///
    /// # Errors
    /// [`SampleError::Repeated`], [`SampleError::Backwards`] or [`SampleError::UnknownRange`];
    /// the reading is then ignored. (A gap is not an error here: it is charged and reported.)
    pub fn accept(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Accrued, SampleError> {
        let Some(k_new) = self.per_unit.get(usize::from(range.0)).copied() else {
            return Err(SampleError::UnknownRange);
        };
        let new = LastSample { at, net, range };
        let Some(last) = self.last else {
            self.last = Some(new);
            return Ok(Accrued::Started);
        };
        let dt = interval(last.at, at)?;
        let k_last = self
            .per_unit
            .get(usize::from(last.range.0))
            .copied()
            .unwrap_or(0);
        let a = u128::from(last.net.max(0).unsigned_abs());
        let b = u128::from(net.max(0).unsigned_abs());
        let dt128 = u128::from(dt);
        self.last = Some(new);
        if dt > self.max_gap {
            // Conservative: the last irradiance for the whole gap (rectangle, ×2 for the
            // doubled trapezoid scale). a < 2³¹ and dt < 2³² keep the first product < 2⁶⁴.
            let q = (a * 2 * dt128).saturating_mul(u128::from(k_last));
            let bound =
                RadiantExposure::from_j_per_m2(q as f64 / FRAC_ONE as f64 * QUANTUM_J_PER_M2);
            return Ok(Accrued::Gap(q, Gap { ticks: dt, bound }));
        }
        // Each end of the trapezoid in its own range's scale.
        let q = (a * dt128)
            .saturating_mul(u128::from(k_last))
            .saturating_add((b * dt128).saturating_mul(u128::from(k_new)));
        Ok(Accrued::Interval(q))
    }

    /// Forget the last reading (after a pause the caller accounts for).
    pub fn break_run(&mut self) {
        self.last = None;
    }

    /// Seconds per tick.
    #[must_use]
    pub fn ticks_to_s(&self, ticks: u32) -> f64 {
        f64::from(ticks) / f64::from(self.tick_hz)
    }
}

/// Rolling sum over `B` complete buckets plus the current one, `B ≤ N − 1`, in integer
/// quanta. See the [module documentation](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RollingWindow<const N: usize> {
    buckets: [u32; N],
    used: usize,
    pos: usize,
    /// Non-zero, so the division in `roll_to` has no divide-by-zero path.
    bucket_ticks: NonZeroU32,
    bucket_start: Option<Ticks>,
    current: u128,
    sum: u64,
}

impl<const N: usize> RollingWindow<N> {
    const CAPACITY_OK: () = assert!(N >= 2, "a rolling window needs N >= 2");

    /// A window of `window_ticks` in buckets of `bucket_ticks`.
    ///
    /// # Errors
    /// [`ExposureConfigError::WindowNotWholeBuckets`] or [`ExposureConfigError::WindowTooLong`].
    pub fn new(window_ticks: u32, bucket_ticks: u32) -> Result<Self, ExposureConfigError> {
        let () = Self::CAPACITY_OK;
        let Some(bucket) = NonZeroU32::new(bucket_ticks) else {
            return Err(ExposureConfigError::WindowNotWholeBuckets);
        };
        if window_ticks == 0 || !window_ticks.is_multiple_of(bucket_ticks) {
            return Err(ExposureConfigError::WindowNotWholeBuckets);
        }
        let used = (window_ticks / bucket) as usize;
        if used > N.saturating_sub(1) {
            return Err(ExposureConfigError::WindowTooLong);
        }
        Ok(Self {
            buckets: [0; N],
            used,
            pos: 0,
            bucket_ticks: bucket,
            bucket_start: None,
            current: 0,
            sum: 0,
        })
    }

    /// Move the window to `now`, closing every bucket that ended.
    ///
    /// # Errors
    /// [`SampleError::Backwards`] if `now` is before the current bucket's start.
    pub fn roll_to(&mut self, now: Ticks) -> Result<(), SampleError> {
        let Some(start) = self.bucket_start else {
            self.bucket_start = Some(now);
            return Ok(());
        };
        let elapsed = now.wrapping_since(start);
        if elapsed > i32::MAX as u32 {
            return Err(SampleError::Backwards {
                ticks: elapsed.wrapping_neg(),
            });
        }
        let n = elapsed / self.bucket_ticks;
        // After used + 1 closings every bucket is empty; more changes nothing.
        let closings = (n as usize).min(self.used.saturating_add(1));
        for _ in 0..closings {
            self.close_bucket();
        }
        self.bucket_start = Some(start.wrapping_add(n.wrapping_mul(self.bucket_ticks.get())));
        Ok(())
    }

    /// Add fixed-point quanta (2⁻³² quantum) to the current bucket.
    pub fn add(&mut self, fixed: u128) {
        self.current = self.current.saturating_add(fixed);
    }

    /// The window total in quanta: complete buckets plus the current one (rounded up).
    #[must_use]
    pub fn total_quanta(&self) -> u64 {
        self.sum.saturating_add(ceil_quanta(self.current))
    }

    /// The total of the complete buckets only (the last `B` whole buckets), as exposure.
    #[must_use]
    pub fn complete_total(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.sum as f64 * QUANTUM_J_PER_M2)
    }

    /// The window total as effective radiant exposure.
    #[must_use]
    pub fn total(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.total_quanta() as f64 * QUANTUM_J_PER_M2)
    }

    /// Number of complete buckets the window holds (`window / bucket`).
    #[must_use]
    pub const fn buckets(&self) -> usize {
        self.used
    }

    /// Bucket length, ticks.
    #[must_use]
    pub const fn bucket_ticks(&self) -> u32 {
        self.bucket_ticks.get()
    }

    fn close_bucket(&mut self) {
        let q = u32::try_from(ceil_quanta(self.current)).unwrap_or(u32::MAX);
        self.current = 0;
        if self.used == 0 {
            return;
        }
        if let Some(slot) = self.buckets.get_mut(self.pos) {
            self.sum = self
                .sum
                .saturating_sub(u64::from(*slot))
                .saturating_add(u64::from(q));
            *slot = q;
        }
        self.pos = if self.pos + 1 >= self.used {
            0
        } else {
            self.pos + 1
        };
    }
}

fn ceil_quanta(fixed: u128) -> u64 {
    let whole = fixed >> FRAC_BITS;
    let frac = fixed & (FRAC_ONE - 1);
    u64::try_from(whole + u128::from(frac != 0)).unwrap_or(u64::MAX)
}

/// Exposure monitor configuration.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureConfig<const L: usize> {
    /// Rolling window, ticks (8 h for ICNIRP). Valid: a whole number of buckets.
    pub window_ticks: u32,
    /// Bucket length, ticks (for example 1 min). Valid: > 0.
    pub bucket_ticks: u32,
    /// Effective radiant exposure limit over the window (30 J/m² for ICNIRP 2004). Valid: > 0.
    pub limit: RadiantExposure,
    /// Warning levels as fractions of the limit, strictly increasing (for example
    /// `[0.5, 0.8, 1.0]`). The last level is the alarm: latched until acknowledged.
    pub levels: [f64; L],
    /// A level clears when the fraction falls below level − hysteresis. Valid: ≥ 0 and below
    /// the lowest level.
    pub hysteresis: f64,
    /// Longest expected interval between samples, ticks; longer ones are gaps charged with
    /// the last irradiance. Valid: 1 ..= 2³¹ − 1.
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
    /// The reading was not used: why.
    pub ignored: Option<ReadingIssue>,
}

/// Why a reading was not used by the exposure monitor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ReadingIssue {
    /// The code cannot be used (saturated, out of range, unknown range). The interval up to the
    /// next good reading is bridged or, if longer than the maximum gap, charged as a gap.
    Code(CodeFault),
    /// Repeated timestamp.
    Repeated,
    /// Time went backwards; the reading is ignored (nothing already counted is lost).
    Backwards,
}

/// Totals of a shift, returned by [`ExposureMonitor::end_shift`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ShiftTotals {
    /// Effective radiant exposure of the shift.
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
    accrual: Accrual,
    window: RollingWindow<N>,
    shift: u128,
    shift_gaps: u128,
    gaps: u32,
    raise_q: [u64; L],
    clear_q: [u64; L],
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
        let accrual = Accrual::new(&meter, weight, config.max_gap_ticks).map_err(Ok)?;
        let limit_q = limit / QUANTUM_J_PER_M2;
        let mut raise_q = [0u64; L];
        let mut clear_q = [0u64; L];
        for ((r, c), &l) in raise_q
            .iter_mut()
            .zip(clear_q.iter_mut())
            .zip(&config.levels)
        {
            // Warnings trip early: round the level down, the clear point down too.
            *r = libm::floor(l * limit_q) as u64;
            *c = libm::floor((l - h) * limit_q) as u64;
        }
        let mut m = Self {
            meter,
            accrual,
            window,
            shift: 0,
            shift_gaps: 0,
            gaps: 0,
            raise_q,
            clear_q,
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
        let mut changes = Changes::default();
        let net = match self.meter.front_end().net_code(reading) {
            Ok(n) => n,
            Err(f) => {
                changes.ignored = Some(ReadingIssue::Code(f));
                return Ok(changes);
            }
        };
        if self.window.roll_to(reading.at).is_err() {
            changes.ignored = Some(ReadingIssue::Backwards);
            return Ok(changes);
        }
        match self.accrual.accept(net, reading.range, reading.at) {
            Ok(Accrued::Started) => {}
            Ok(Accrued::Interval(q)) => {
                self.window.add(q);
                self.shift = self.shift.saturating_add(q);
            }
            Ok(Accrued::Gap(q, gap)) => {
                self.window.add(q);
                self.shift = self.shift.saturating_add(q);
                self.shift_gaps = self.shift_gaps.saturating_add(q);
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
        if self.window.roll_to(now).is_err() {
            changes.ignored = Some(ReadingIssue::Backwards);
            return Ok(changes);
        }
        self.update_levels(&mut changes)?;
        Ok(changes)
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
        self.shift = 0;
        self.shift_gaps = 0;
        self.gaps = 0;
        t
    }

    /// Totals of the current shift.
    #[must_use]
    pub fn shift_totals(&self) -> ShiftTotals {
        ShiftTotals {
            exposure: fixed_to_exposure(self.shift),
            gap_bounds: fixed_to_exposure(self.shift_gaps),
            gaps: self.gaps,
            alarm_latched: self.latched,
        }
    }

    /// Effective exposure in the rolling window.
    #[must_use]
    pub fn window_exposure(&self) -> RadiantExposure {
        self.window.total()
    }

    /// Fraction of the limit used in the window.
    #[must_use]
    pub fn fraction_used(&self) -> f64 {
        self.window.total().j_per_m2() / self.limit.j_per_m2()
    }

    /// Effective irradiance of the last reading.
    #[must_use]
    pub fn effective_irradiance(&self) -> Irradiance {
        self.accrual.effective_irradiance()
    }

    /// Remaining allowed time at the current effective irradiance, t = remaining / E_eff;
    /// `None` when E_eff is zero (unlimited at the present level), zero when the limit is used.
    #[must_use]
    pub fn time_left(&self) -> Option<Seconds> {
        let e = self.effective_irradiance().w_per_m2();
        let remaining = (self.limit.j_per_m2() - self.window.total().j_per_m2()).max(0.0);
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

    /// Give the pins back.
    pub fn release(self) -> [P; L] {
        self.pins
    }

    fn update_levels(&mut self, changes: &mut Changes) -> Result<(), P::Error> {
        let total = self.window.total_quanta();
        let alarm = alarm_bit::<L>();
        for i in 0..L {
            let bit = 1u8 << i;
            let (Some(&raise), Some(&clear)) = (self.raise_q.get(i), self.clear_q.get(i)) else {
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

const fn alarm_bit<const L: usize>() -> u8 {
    if L == 0 || L > 8 {
        0
    } else {
        1 << (L - 1)
    }
}

fn fixed_to_exposure(fixed: u128) -> RadiantExposure {
    RadiantExposure::from_j_per_m2(ceil_quanta(fixed) as f64 * QUANTUM_J_PER_M2)
}

/// Solar UV: live UV index (averaged) and the day's erythemal dose in SED.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SolarMonitor<const N: usize> {
    accrual: Accrual,
    average: RollingWindow<N>,
    averaging_s: f64,
    day: u128,
}

impl<const N: usize> SolarMonitor<N> {
    /// `erythema` is the erythemal weight factor of the band (CIE erythema action spectrum);
    /// the UV index is averaged over `averaging_ticks` (WHO: 5–10 min for real-time display)
    /// in buckets of `bucket_ticks`.
    ///
    /// # Errors
    /// [`ExposureConfigError`] for an invalid period, gap or scale.
    pub fn new(
        meter: &Meter,
        erythema: WeightFactor,
        averaging_ticks: u32,
        bucket_ticks: u32,
        max_gap_ticks: u32,
    ) -> Result<Self, ExposureConfigError> {
        let average = RollingWindow::new(averaging_ticks, bucket_ticks)
            .map_err(|_| ExposureConfigError::AveragingPeriod)?;
        let accrual = Accrual::new(meter, erythema, max_gap_ticks)?;
        let averaging_s = accrual.ticks_to_s(averaging_ticks);
        Ok(Self {
            accrual,
            average,
            averaging_s,
            day: 0,
        })
    }

    /// Feed one dark-corrected reading (use [`crate::frontend::FrontEnd::net_code`] first).
    ///
    /// # Errors
    /// As [`Accrual::accept`]; gaps are charged with their bound and returned.
    pub fn accept(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Option<Gap>, SampleError> {
        self.average.roll_to(at)?;
        let (q, gap) = match self.accrual.accept(net, range, at)? {
            Accrued::Started => (0, None),
            Accrued::Interval(q) => (q, None),
            Accrued::Gap(q, g) => (q, Some(g)),
        };
        self.average.add(q);
        self.day = self.day.saturating_add(q);
        Ok(gap)
    }

    /// UV index averaged over the configured period: the erythemal exposure of the last
    /// complete buckets spanning the period ÷ its length, × 40 m²/W. Before a full period has
    /// passed this under-reads.
    #[must_use]
    pub fn uv_index(&self) -> UvIndex {
        let full_s = self.averaging_s;
        let mean = if full_s > 0.0 {
            self.average.complete_total().j_per_m2() / full_s
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
        UvIndex::from_erythemal_w_per_m2(self.accrual.effective_irradiance().w_per_m2())
    }

    /// The day's erythemal exposure, in SED (100 J/m²).
    #[must_use]
    pub fn day_sed(&self) -> f64 {
        fixed_to_exposure(self.day).j_per_m2() / SED_J_PER_M2
    }

    /// Start a new day.
    pub fn reset_day(&mut self) {
        self.day = 0;
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
