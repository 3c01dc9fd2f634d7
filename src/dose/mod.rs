//! Dose: exact integration of the readings over their own timestamps.
//!
//! # One integral, many units
//!
//! For a fixed meter every dose quantity (radiant exposure, photon exposure, photons for an
//! area) is a constant times the same time integral of the net ADC code. The [`Integrator`]
//! keeps that integral **in integers**, by the trapezoid rule:
//!
//! ```text
//! S_r = Σ (net_i + net_{i−1}) · Δt_i        per amplifier range r, in code·ticks (×2)
//! H   = Σ_r S_r · k_r                        J/m², k_r = ½ · (W/m² per code) / tick rate
//! ```
//!
//! The sum of the current *segment* (a run of samples in one range) is an `i64`; when the
//! range changes, or the segment would overflow, it is closed into an exact per-range `i128`
//! total. Conversion to physical units happens only at read-out ([`Integrator::exposure`]).
//! An interval whose end samples lie in different ranges is split exactly: each end's half of
//! the trapezoid goes to its own range.
//!
//! A plain `f32` running sum stops growing after about 1.7·10⁷ equal steps (the step falls
//! below half an ulp of the sum); this integer sum is exact for any number of samples that
//! fits in an `i128`.
//!
//! # Thresholds in integer units
//!
//! A dose threshold (a stop target, an overexposure limit, a warning) is converted **once**,
//! when it is armed, into a fixed-point number of integer units of the reference range (the
//! least sensitive one; 2⁻⁵² of a unit, rounded in the safe direction, [`Rounding`]). When a segment closes, the closed per-range
//! totals are brought into that scale and the distance left into the open segment's units
//! with 64-bit integer ratios of the ranges' scales (computed once in [`Integrator::new`]),
//! each rounded in the threshold's safe direction: a range change needs no floating point.
//! The per-sample path is one add and two compares — no floating point, no division.
//!
//! # Time
//!
//! Timestamps are wrapping `u32` ticks, classified by the one policy of [`crate::time`]: a
//! repeated timestamp, a step backwards (the run restarts from that reading) and a gap longer
//! than the configured maximum (forward jumps of 2³¹ ticks or more included) are each an
//! explicit [`SampleError`], never integrated as measured dose and never blocking later
//! readings.
//!
//! # Gaps: a conservative charge beside the measured dose
//!
//! A gap is not measured, so it is not in [`Integrator::exposure`]. It is charged with a
//! conservative bound of at least max(irradiance before, irradiance after) × gap (negative
//! codes count as zero; across a range change both ends' rectangles, whose sum bounds the
//! larger), kept in per-range integer totals of its own ([`Integrator::gap_charge`]).
//! Thresholds rounded [`Rounding::NotAfter`] (limits that must trip early) count the charge;
//! thresholds rounded [`Rounding::NotBefore`] (targets that must not undershoot) count only
//! what was measured.

use crate::acquire::reading::{RangeIndex, Ticks};
use crate::frontend::MAX_RANGES;
use crate::irradiance::Meter;
use crate::quantity::RadiantExposure;
use crate::time::{clamp_max_gap, classify, Step as TimeStep};

mod fixed;

use fixed::{
    ceil_units, clamp_fixed, f64_to_fixed, floor_units, mul_i32_u32, product_bounds, total_bounds,
    Ratio, RatioTable, FIXED_MAX,
};

/// The largest number of dose thresholds an integrator watches at once.
pub const MAX_THRESHOLDS: usize = 6;

/// Which way a threshold's conversion to integer units is rounded.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Rounding {
    /// Fire only once the measured dose is at or above the level (a stop target that must
    /// never undershoot): the level in integer units is rounded up. A dose exactly at the
    /// level fires; the conversion's f64 rounding (a few parts in 10¹⁶ of the level) is
    /// resolved towards firing at such a tie.
    NotBefore,
    /// Fire no later than the dose (with any gap charge) reaching the level (a limit that must
    /// trip early): the level in integer units is rounded down; a tie fires as above.
    NotAfter,
}

/// Handle of a threshold registered with [`Integrator::add_threshold`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ThresholdId(u8);

impl ThresholdId {
    /// The bit of this threshold in a [`Crossed`] set.
    #[must_use]
    pub const fn bit(self) -> u8 {
        // Ids are only made by `add_threshold`, below MAX_THRESHOLDS = 6 < 8: never wraps.
        1u8.wrapping_shl(self.0 as u32)
    }
}

/// The set of thresholds at or above their level after a sample (a bit per threshold).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Crossed(pub u8);

impl Crossed {
    /// Whether threshold `id` is at or above its level.
    #[must_use]
    pub const fn contains(self, id: ThresholdId) -> bool {
        self.0 & id.bit() != 0
    }
}

/// Why a sample was not integrated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SampleError {
    /// Same timestamp as the previous sample. The sample is ignored.
    Repeated,
    /// The timestamp is `ticks` (1 ..= maximum gap) before the previous one. Nothing is
    /// integrated; the run restarts from this sample.
    Backwards {
        /// How far back, in ticks.
        ticks: u32,
    },
    /// The interval since the previous sample is longer than the configured maximum (a
    /// forward jump of 2³¹ ticks or more included). It is **not** integrated as measured
    /// dose: it is charged with its conservative bound ([`Integrator::gap_charge`]) and the
    /// run restarts from this sample.
    Gap {
        /// Length of the gap, in ticks.
        ticks: u32,
    },
    /// The sample names a range the meter does not have. The sample is ignored.
    UnknownRange,
}

impl core::error::Error for SampleError {}

impl core::fmt::Display for SampleError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Repeated => f.write_str("repeated timestamp"),
            Self::Backwards { ticks } => write!(f, "timestamp {ticks} ticks before the last"),
            Self::Gap { ticks } => write!(f, "gap of {ticks} ticks exceeds the maximum"),
            Self::UnknownRange => f.write_str("unknown amplifier range"),
        }
    }
}

/// The last integrated sample.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LastSample {
    /// When it was taken.
    pub at: Ticks,
    /// Its dark-corrected code.
    pub net: i32,
    /// Its amplifier range.
    pub range: RangeIndex,
}

/// What one integrated sample did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Step {
    /// Ticks since the previous sample (0 for the first sample of a run).
    pub interval: u32,
    /// Thresholds at or above their level now.
    pub crossed: Crossed,
}

/// The watched thresholds, one column per field (no padding: 152 bytes for six).
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Thresholds {
    /// Each level in integer units of the reference range, fixed point (52
    /// fractional bits), with the tie slack and the rounding of [`Rounding`] applied;
    /// [`NEVER`] for a level that can never be reached.
    level: [i128; MAX_THRESHOLDS],
    /// Each level in units of the open segment.
    limit: [i64; MAX_THRESHOLDS],
    /// Bit `i` set: threshold `i` is rounded [`Rounding::NotAfter`].
    not_after: u8,
    /// How many are watched (≤ [`MAX_THRESHOLDS`]).
    len: u8,
}

impl Thresholds {
    const fn new() -> Self {
        Self {
            level: [0; MAX_THRESHOLDS],
            limit: [i64::MAX; MAX_THRESHOLDS],
            not_after: 0,
            len: 0,
        }
    }

    /// The limits of the watched thresholds.
    fn limits(&self) -> &[i64] {
        self.limit.get(..usize::from(self.len)).unwrap_or(&[])
    }

    fn rounding(&self, i: u8) -> Rounding {
        // i < MAX_THRESHOLDS = 6 < 8: the shift never wraps.
        if self.not_after & 1u8.wrapping_shl(u32::from(i)) != 0 {
            Rounding::NotAfter
        } else {
            Rounding::NotBefore
        }
    }
}

/// The level of a threshold that never fires (a non-finite level, or a meter without a
/// scale).
const NEVER: i128 = i128::MAX;

/// The exact dose integrator. See the [module documentation](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
// In declaration order, the per-sample fields first: a Cortex-M0 load reaches only 124 bytes
// past its base register, and the cold per-range tables would push these beyond it.
#[repr(C)]
pub struct Integrator {
    last: Option<LastSample>,
    max_gap: u32,
    segment_range: RangeIndex,
    /// [`Integrator::crossed`] as last computed; it stays the answer while
    /// `band_low <= segment < band_high` (every crossed limit ≤ `band_low`, every other limit
    /// ≥ `band_high`), so the per-sample path compares against two numbers, not every
    /// threshold. Refreshed whenever a limit or the threshold list changes.
    crossed_cache: Crossed,
    /// Whether any gap was charged (so read-outs and limits skip the gap table otherwise).
    has_gap: bool,
    segment: i64,
    band_low: i64,
    /// `band_high − band_low` (≥ 0): a segment is inside the band when
    /// `segment − band_low`, as an unsigned number, is below it — one 64-bit compare.
    band_width: u64,
    preload_j_per_m2: f64,
    /// The preload in reference units, fixed point, rounded down.
    preload_units: i128,
    scale: [f64; MAX_RANGES],
    /// The range whose integer units the fixed-point levels count (the largest scale).
    ref_range: u8,
    /// `k_r / k_ref` per range: brings range `r`'s integer totals into reference units.
    to_ref: RatioTable,
    /// `k_ref / k_r` per range: brings a distance in reference units into range `r`'s units.
    from_ref: RatioTable,
    closed: [i128; MAX_RANGES],
    /// Conservative charges for gaps, per range, in the same units as `closed`.
    /// (i64, saturating: 2⁶³ units is far beyond any real dose, and an i64 converts with the
    /// routine the open segment already links.)
    gap: [i64; MAX_RANGES],
    thresholds: Thresholds,
}

impl Integrator {
    /// A zeroed integrator for `meter`. Intervals longer than `max_gap` ticks are
    /// [`SampleError::Gap`]; `max_gap` is clamped to 1 ..= 2³¹ − 1 ticks
    /// ([`crate::time::clamp_max_gap`]).
    #[must_use]
    pub fn new(meter: &Meter, max_gap: u32) -> Self {
        let mut scale = [0.0; MAX_RANGES];
        // A bounded index range: `0u8..` could overflow (and panic) as far as the compiler knows.
        for (i, s) in (0u8..MAX_RANGES as u8).zip(scale.iter_mut()) {
            *s = meter.j_per_m2_per_unit(RangeIndex(i));
        }
        Self::from_scales(scale, max_gap)
    }

    /// [`new`](Self::new) from the J/m² per integer unit of each range.
    fn from_scales(scale: [f64; MAX_RANGES], max_gap: u32) -> Self {
        // The reference range: the largest scale (the least sensitive range), so a dose in
        // its units is the smallest number and the fixed-point levels never saturate first.
        let mut ref_range = 0u8;
        let mut k_ref = 0.0;
        for (i, k) in (0u8..MAX_RANGES as u8).zip(scale.iter()) {
            if *k > k_ref {
                ref_range = i;
                k_ref = *k;
            }
        }
        let mut to_ref = RatioTable::default();
        let mut from_ref = RatioTable::default();
        for (r, k) in (0..MAX_RANGES).zip(scale.iter()) {
            to_ref.set(r, Ratio::of(*k, k_ref));
            from_ref.set(r, Ratio::of(k_ref, *k));
        }
        Self {
            scale,
            ref_range,
            to_ref,
            from_ref,
            preload_units: 0,
            closed: [0; MAX_RANGES],
            gap: [0; MAX_RANGES],
            has_gap: false,
            segment: 0,
            segment_range: RangeIndex(0),
            last: None,
            max_gap: clamp_max_gap(max_gap),
            preload_j_per_m2: 0.0,
            thresholds: Thresholds::new(),
            // No thresholds: nothing is crossed whatever the segment.
            crossed_cache: Crossed(0),
            band_low: i64::MIN,
            band_width: u64::MAX,
        }
    }

    /// Start from a dose already delivered (a session resumed after a power loss). The preload
    /// is added to every read-out and threshold. Negative or non-finite values count as zero.
    pub fn set_preload(&mut self, delivered: RadiantExposure) {
        let v = delivered.j_per_m2();
        self.preload_j_per_m2 = if v.is_finite() && v > 0.0 { v } else { 0.0 };
        self.preload_units = match level_units_f64(self.preload_j_per_m2, self.k_ref(), false) {
            NEVER => 0,
            u => u,
        };
        self.recompute_limits();
    }

    /// Watch a dose level; returns its handle, or gives the level back if
    /// [`MAX_THRESHOLDS`] are already watched.
    ///
    /// # Errors
    /// The level, unchanged, when the threshold list is full.
    pub fn add_threshold(
        &mut self,
        level: RadiantExposure,
        rounding: Rounding,
    ) -> Result<ThresholdId, RadiantExposure> {
        let units = self.level_units(level, rounding);
        self.add_threshold_units(units, rounding).map_err(|_| level)
    }

    /// [`add_threshold`](Self::add_threshold) from a level already converted (on the host,
    /// or by [`level_units`](Self::level_units)), so arming needs no floating point:
    /// `level_units` is the level in integer units of
    /// [`reference_range`](Self::reference_range) as a fixed-point number with 52 fractional
    /// bits (2⁻⁵² of a unit), with the tie slack and the rounding of `rounding` applied —
    /// exactly what `level_units` returns for the same meter. Valid: any value; magnitudes
    /// above 2¹²² count as 2¹²² (2⁷⁰ reference units); `i128::MAX` never fires.
    ///
    /// # Errors
    /// The level, unchanged, when the threshold list is full.
    pub fn add_threshold_units(
        &mut self,
        level_units: i128,
        rounding: Rounding,
    ) -> Result<ThresholdId, i128> {
        let id = self.thresholds.len;
        let i = usize::from(id);
        let (Some(level), Some(limit)) = (
            self.thresholds.level.get_mut(i),
            self.thresholds.limit.get_mut(i),
        ) else {
            return Err(level_units);
        };
        *level = clamp_level(level_units);
        *limit = i64::MAX;
        // id < MAX_THRESHOLDS = 6 < 8: the shift never wraps, the count never overflows.
        let bit = 1u8.wrapping_shl(u32::from(id));
        match rounding {
            Rounding::NotAfter => self.thresholds.not_after |= bit,
            Rounding::NotBefore => self.thresholds.not_after &= !bit,
        }
        self.thresholds.len = id.wrapping_add(1);
        // Converts every limit (the new one included) and refreshes the crossed set.
        self.recompute_limits();
        Ok(ThresholdId(id))
    }

    /// A dose level as [`add_threshold_units`](Self::add_threshold_units) takes it: the level
    /// moved by the tie slack (16 ulps of itself) towards firing, divided by the reference
    /// range's scale (J/m² per integer unit), times 2⁵², rounded up for
    /// [`Rounding::NotBefore`] and down for [`Rounding::NotAfter`]; `i128::MAX` for a
    /// non-finite level. The one floating-point step of a threshold, done when it is armed.
    #[must_use]
    pub fn level_units(&self, level: RadiantExposure, rounding: Rounding) -> i128 {
        let v = level.j_per_m2();
        match rounding {
            Rounding::NotBefore => level_units_f64(v * (1.0 - TIE_SLACK), self.k_ref(), true),
            Rounding::NotAfter => level_units_f64(v * (1.0 + TIE_SLACK), self.k_ref(), false),
        }
    }

    /// Move threshold `id` to a new `level` (its rounding is kept), for a watcher that re-arms
    /// one threshold for the next of a series of levels (dose milestones) instead of holding
    /// one threshold per level. The limit is converted as exactly as by
    /// [`add_threshold`](Self::add_threshold) and the crossed set is refreshed. Returns `false`
    /// and changes nothing for an unknown handle.
    pub fn set_threshold(&mut self, id: ThresholdId, level: RadiantExposure) -> bool {
        if id.0 >= self.thresholds.len {
            return false;
        }
        let units = self.level_units(level, self.thresholds.rounding(id.0));
        self.set_threshold_units(id, units)
    }

    /// [`set_threshold`](Self::set_threshold) from a level already converted, as
    /// [`add_threshold_units`](Self::add_threshold_units) takes it (for the threshold's own
    /// rounding). Returns `false` and changes nothing for an unknown handle.
    pub fn set_threshold_units(&mut self, id: ThresholdId, level_units: i128) -> bool {
        if id.0 >= self.thresholds.len {
            return false;
        }
        match self.thresholds.level.get_mut(usize::from(id.0)) {
            Some(l) => *l = clamp_level(level_units),
            None => return false,
        }
        self.recompute_limits();
        true
    }

    /// Stop watching every threshold.
    pub fn clear_thresholds(&mut self) {
        self.thresholds.len = 0;
        self.refresh_crossed();
    }

    /// Integrate one dark-corrected sample.
    ///
    /// # Errors
    /// [`SampleError`] for a repeated or backwards timestamp, a gap, or an unknown range. A
    /// repeat and an unknown range change nothing; after a backwards step or a gap the run
    /// restarts from this sample (and a gap is charged, see [`gap_charge`](Self::gap_charge)).
    #[inline]
    pub fn accept(&mut self, net: i32, range: RangeIndex, at: Ticks) -> Result<Step, SampleError> {
        match self.accept_common(net, range, at) {
            Some(step) => Ok(step),
            None => self.accept_general(net, range, at),
        }
    }

    /// The common case of [`accept`](Self::accept), or `None` — with nothing changed — for
    /// anything else: the first sample of a run, a timing fault, a range change, a term
    /// too large for 32 bits, or an overflowing segment. [`accept_general`](Self::accept_general) then handles the sample in full, from
    /// the same state, so the result is the same either way. A sample that leaves the cache
    /// band goes to [`leave_band`](Self::leave_band).
    #[inline(always)]
    fn accept_common(&mut self, net: i32, range: RangeIndex, at: Ticks) -> Option<Step> {
        let last = self.last?;
        // `segment_range` is always a valid range, so this also checks `range`.
        if range != last.range || range != self.segment_range {
            return None;
        }
        let dt = at.wrapping_since(last.at);
        // 1 ≤ dt ≤ max_gap (and max_gap ≤ i32::MAX): not repeated, not backwards, no gap.
        if dt.wrapping_sub(1) >= self.max_gap {
            return None;
        }
        let term = small_trapezoid_term(net, last.net, dt)?;
        // |term| < 2³¹ and the band lies inside [i64::MIN + 2³¹, i64::MAX − 2³¹], so a
        // wrapped (overflowed) sum always falls outside the band: no separate overflow check.
        let segment = self.segment.wrapping_add(i64::from(term));
        if !self.in_band(segment) {
            return self.leave_band(net, range, at, dt, term);
        }
        self.segment = segment;
        // Same range as `last`: only the time and the code change.
        if let Some(l) = self.last.as_mut() {
            l.at = at;
            l.net = net;
        }
        Some(Step {
            interval: dt,
            crossed: self.crossed_cache,
        })
    }

    /// [`accept_common`](Self::accept_common) when the sample moves the segment out of the
    /// cache band (a threshold may be crossed or uncrossed): commit it and recompute the
    /// crossed set. `None`, with nothing changed, if the segment would overflow.
    #[inline(never)]
    fn leave_band(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
        dt: u32,
        term: i32,
    ) -> Option<Step> {
        self.segment = self.segment.checked_add(i64::from(term))?;
        self.last = Some(LastSample { at, net, range });
        self.refresh_crossed();
        Some(Step {
            interval: dt,
            crossed: self.crossed_cache,
        })
    }

    /// Every case of [`accept`](Self::accept).
    #[inline(never)]
    fn accept_general(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Step, SampleError> {
        if usize::from(range.0) >= MAX_RANGES {
            return Err(SampleError::UnknownRange);
        }
        let new = LastSample { at, net, range };
        let Some(last) = self.last else {
            self.last = Some(new);
            return Ok(Step {
                interval: 0,
                crossed: self.crossed_now(),
            });
        };
        let dt = match classify(last.at, at, self.max_gap) {
            TimeStep::Interval(dt) => dt,
            TimeStep::Repeated => return Err(SampleError::Repeated),
            TimeStep::Backwards(ticks) => {
                self.last = Some(new);
                return Err(SampleError::Backwards { ticks });
            }
            TimeStep::Gap(ticks) => {
                self.last = Some(new);
                self.charge_gap(last, new, ticks);
                return Err(SampleError::Gap { ticks });
            }
        };
        self.last = Some(new);
        if range == last.range && range == self.segment_range {
            let term = trapezoid_term(net, last.net, dt);
            match self.segment.checked_add(term) {
                Some(s) => self.segment = s,
                None => {
                    self.close_segment(range);
                    self.segment = term;
                    self.recompute_limits();
                }
            }
        } else {
            // Each end of the trapezoid goes to its own range's total. The earlier end joins
            // the closing segment when that is its range (the usual case): one 128-bit add.
            let before = mul_i32_u32(last.net, dt);
            match self.segment.checked_add(before) {
                Some(s) if last.range == self.segment_range => {
                    self.segment = s;
                    self.close_segment(range);
                }
                _ => {
                    self.close_segment(range);
                    self.add_closed(last.range, before);
                }
            }
            self.segment = mul_i32_u32(net, dt);
            self.recompute_limits();
        }
        Ok(Step {
            interval: dt,
            crossed: self.crossed_now(),
        })
    }

    /// [`crossed`](Self::crossed) through the cache: two compares while the segment stays
    /// between the nearest limits, the full scan otherwise. Same result as `crossed()`.
    #[inline]
    fn crossed_now(&mut self) -> Crossed {
        if !self.in_band(self.segment) {
            self.refresh_crossed();
        }
        self.crossed_cache
    }

    /// Recompute the crossed set and the band of segment values in which it holds.
    fn refresh_crossed(&mut self) {
        let mut bits = 0u8;
        let mut low = i64::MIN;
        let mut high = i64::MAX;
        // At most MAX_THRESHOLDS (6) entries, so the bounded index range covers them all.
        for (i, limit) in (0u8..MAX_THRESHOLDS as u8).zip(self.thresholds.limits()) {
            if self.segment >= *limit {
                // i < MAX_THRESHOLDS = 6 < 8: the shift never wraps.
                bits |= 1u8.wrapping_shl(u32::from(i));
                low = low.max(*limit);
            } else {
                high = high.min(*limit);
            }
        }
        self.crossed_cache = Crossed(bits);
        // Narrowed by 2³¹ at both ends: a band is still valid when narrower, and this keeps
        // any overflowed sum in `accept_common` outside it.
        let band_low = low.max(BAND_MIN);
        let band_high = high.min(BAND_MAX);
        self.band_low = band_low;
        // An empty band (band_high < band_low cannot occur: every crossed limit is at or
        // below the segment, every other above it) would be width 0: always outside.
        self.band_width = if band_high >= band_low {
            band_high.abs_diff(band_low)
        } else {
            0
        };
    }

    /// `band_low <= segment < band_low + band_width`, by one unsigned compare.
    #[inline(always)]
    const fn in_band(&self, segment: i64) -> bool {
        (segment.wrapping_sub(self.band_low) as u64) < self.band_width
    }

    /// Forget the previous sample so the next one starts a new run (after a pause or a gap
    /// the caller has accounted for). The dose is kept.
    pub fn break_run(&mut self) {
        self.last = None;
    }

    /// The last integrated sample, if any.
    #[must_use]
    pub const fn last(&self) -> Option<LastSample> {
        self.last
    }

    /// Thresholds at or above their level now.
    #[must_use]
    pub fn crossed(&self) -> Crossed {
        let mut bits = 0u8;
        // At most MAX_THRESHOLDS (6) entries, so the bounded index range covers them all.
        for (i, limit) in (0u8..MAX_THRESHOLDS as u8).zip(self.thresholds.limits()) {
            if self.segment >= *limit {
                // i < MAX_THRESHOLDS = 6 < 8: the shift never wraps.
                bits |= 1u8.wrapping_shl(u32::from(i));
            }
        }
        Crossed(bits)
    }

    /// Integer units still to integrate before threshold `id` fires: its level minus the open
    /// segment's sum, in units of [`segment_range`](Self::segment_range) (one unit is
    /// [`Meter::j_per_m2_per_unit`] of that range). Zero or negative once the threshold is
    /// crossed; `None` for an unknown handle. Saturates at the `i64` bounds.
    ///
    /// This is what a controller needs to anticipate a threshold in integers: with the last
    /// net code `n` held constant, the sum grows by `2·n` units per tick.
    #[must_use]
    pub(crate) fn units_to_threshold(&self, id: ThresholdId) -> Option<i64> {
        self.thresholds
            .limits()
            .get(usize::from(id.0))
            .map(|limit| limit.saturating_sub(self.segment))
    }

    /// The amplifier range whose integer units the open segment (and every threshold limit)
    /// is counted in.
    #[must_use]
    pub(crate) const fn segment_range(&self) -> RangeIndex {
        self.segment_range
    }

    /// The radiant exposure integrated so far (including any preload).
    #[must_use]
    pub fn exposure(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.closed_j_per_m2() + self.segment_j_per_m2())
    }

    /// The conservative charge for every gap so far: Σ max(irradiance before, after) × gap.
    /// Not part of [`exposure`](Self::exposure); see the [module documentation](self).
    #[must_use]
    pub fn gap_charge(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.gap_j_per_m2())
    }

    /// The measured exposure plus the gap charge: the most that can have arrived.
    #[must_use]
    pub fn exposure_bound(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(
            self.closed_j_per_m2() + self.segment_j_per_m2() + self.gap_j_per_m2(),
        )
    }

    /// The exact integer gap charge of range `r` (code·ticks, doubled, like
    /// [`raw_total`](Self::raw_total)).
    #[must_use]
    pub fn raw_gap(&self, r: RangeIndex) -> i128 {
        i128::from(self.gap.get(usize::from(r.0)).copied().unwrap_or(0))
    }

    /// The exact integer total of range `r` (code·ticks, doubled), including the open segment.
    #[must_use]
    pub fn raw_total(&self, r: RangeIndex) -> i128 {
        let closed = self.closed.get(usize::from(r.0)).copied().unwrap_or(0);
        if r == self.segment_range {
            closed.saturating_add(i128::from(self.segment))
        } else {
            closed
        }
    }

    fn segment_j_per_m2(&self) -> f64 {
        self.scale_of(self.segment_range) * self.segment as f64
    }

    fn closed_j_per_m2(&self) -> f64 {
        self.preload_j_per_m2 + self.table_j_per_m2(&self.closed)
    }

    /// Σ_r table[r] · k_r, J/m².
    fn table_j_per_m2(&self, table: &[i128; MAX_RANGES]) -> f64 {
        let mut sum = 0.0;
        for (c, k) in table.iter().zip(self.scale.iter()) {
            sum += *c as f64 * k;
        }
        sum
    }

    fn gap_j_per_m2(&self) -> f64 {
        if !self.has_gap {
            return 0.0;
        }
        let mut sum = 0.0;
        for (g, k) in self.gap.iter().zip(self.scale.iter()) {
            sum += *g as f64 * k;
        }
        sum
    }

    /// Charge a gap from `before` to `after` (`ticks` long), negative codes as zero, in
    /// integers only: in one range, the larger end held for the whole gap (a rectangle of
    /// 2 · net · ticks units); across a range change, both ends' rectangles, each in its own
    /// range — their sum bounds the larger one without a floating-point comparison.
    fn charge_gap(&mut self, before: LastSample, after: LastSample, ticks: u32) {
        if before.range == after.range {
            let net = before.net.max(after.net);
            self.add_gap(before.range, net, ticks);
        } else {
            self.add_gap(before.range, before.net, ticks);
            self.add_gap(after.range, after.net, ticks);
        }
        if self.has_gap {
            self.recompute_limits();
        }
    }

    fn add_gap(&mut self, r: RangeIndex, net: i32, ticks: u32) {
        // 0 ≤ net < 2³¹ and ticks < 2³²: twice their product is below 2⁶⁴, so the wrapping
        // u64 multiply never wraps (and needs no 128-bit multiply).
        let units = u64::from(net.max(0).unsigned_abs())
            .wrapping_mul(u64::from(ticks))
            .wrapping_mul(2);
        if units > 0 {
            if let Some(g) = self.gap.get_mut(usize::from(r.0)) {
                *g = g.saturating_add(i64::try_from(units).unwrap_or(i64::MAX));
                self.has_gap = true;
            }
        }
    }

    fn scale_of(&self, r: RangeIndex) -> f64 {
        self.scale.get(usize::from(r.0)).copied().unwrap_or(0.0)
    }

    fn add_closed(&mut self, r: RangeIndex, units: i64) {
        add_to(&mut self.closed, r, i128::from(units));
    }

    /// Close the open segment into its range total and open an empty one in `next`.
    fn close_segment(&mut self, next: RangeIndex) {
        let seg = self.segment;
        self.add_closed(self.segment_range, seg);
        self.segment = 0;
        self.segment_range = next;
    }

    /// J/m² per integer unit of the reference range.
    fn k_ref(&self) -> f64 {
        self.scale_of(RangeIndex(self.ref_range))
    }

    /// The range whose integer units [`add_threshold_units`](Self::add_threshold_units) and
    /// [`level_units`](Self::level_units) count: the meter's range with the most J/m² per
    /// integer unit (the least sensitive one).
    #[must_use]
    pub const fn reference_range(&self) -> RangeIndex {
        RangeIndex(self.ref_range)
    }

    /// Bounds `(low, high)` on Σ_r table[r] · k_r / k_ref (reference units, fixed point):
    /// the reference range exactly, every other non-zero total through its ratio.
    fn table_units(&self, table: impl Iterator<Item = i128>) -> (i128, i128) {
        let mut lo = 0i128;
        let mut hi = 0i128;
        for (r, c) in (0..MAX_RANGES).zip(table) {
            if c == 0 {
                continue;
            }
            let (l, h) = total_bounds(c, self.to_ref.get(r));
            // At most MAX_RANGES (4) terms, each within ±(2¹²² + 2⁶²): no overflow.
            lo = lo.wrapping_add(l);
            hi = hi.wrapping_add(h);
        }
        (lo, hi)
    }

    /// Convert every threshold into the open segment's units, in integers: the level less
    /// the closed dose (and, for limits, the gap charge), each bounded in the threshold's safe
    /// direction, times `k_ref / k_segment`, rounded up for targets and down for limits.
    fn recompute_limits(&mut self) {
        let from = self.from_ref.get(usize::from(self.segment_range.0));
        // Levels, the preload and every term are within ±(2¹²² + 2⁶²): the closed bounds
        // within ±4.1·2¹²², with the preload and the gap within ±9.2·2¹²² (< 2¹²⁶), and a
        // level less either within ±2¹²⁷. Plain wrapping adds never wrap.
        let (closed_lo, closed_hi) = self.table_units(self.closed.iter().copied());
        let closed_lo = closed_lo.wrapping_add(self.preload_units);
        // The preload is rounded down; one last place bounds it from above.
        let mut bound_hi = closed_hi.wrapping_add(self.preload_units).wrapping_add(1);
        if self.has_gap {
            let (_, gap_hi) = self.table_units(self.gap.iter().map(|g| i128::from(*g)));
            bound_hi = bound_hi.wrapping_add(gap_hi);
        }
        let n = usize::from(self.thresholds.len);
        let not_after = self.thresholds.not_after;
        // A bounded index range (`enumerate` would carry an overflow check into the firmware).
        for (i, (level, limit)) in (0u8..MAX_THRESHOLDS as u8).zip(
            self.thresholds
                .level
                .iter()
                .zip(self.thresholds.limit.iter_mut())
                .take(n),
        ) {
            *limit = if *level == NEVER || from.is_zero() {
                i64::MAX
            } else if not_after & 1u8.wrapping_shl(u32::from(i)) == 0 {
                // Rounding::NotBefore
                let (_, hi) = product_bounds(level.wrapping_sub(closed_lo), from);
                ceil_units(hi)
            } else {
                // Rounding::NotAfter
                let (lo, _) = product_bounds(level.wrapping_sub(bound_hi), from);
                floor_units(lo)
            };
        }
        self.refresh_crossed();
    }
}

/// `x / k` in integer units, times 2^FRAC_BITS, rounded up (`up`) or down: the arm-time
/// conversion of a level or a preload (J/m²) into fixed-point reference units. [`NEVER`] for a non-finite
/// `x` or a scale that is not > 0; saturates at ±2¹²².
fn level_units_f64(x: f64, k: f64, up: bool) -> i128 {
    if !x.is_finite() || !k.is_finite() || k <= 0.0 {
        return NEVER;
    }
    let v = x / k;
    if !v.is_finite() {
        return if v > 0.0 { FIXED_MAX } else { -FIXED_MAX };
    }
    f64_to_fixed(v, up)
}

/// A level as stored: [`NEVER`] kept, anything else clamped to ±2¹²².
fn clamp_level(units: i128) -> i128 {
    if units == NEVER {
        NEVER
    } else {
        clamp_fixed(units)
    }
}

/// Add `units` to range `r` of a per-range table, saturating. One out-of-line copy: a
/// saturating 128-bit add is about 140 instructions on a Cortex-M0.
#[inline(never)]
fn add_to(table: &mut [i128; MAX_RANGES], r: RangeIndex, units: i128) {
    if let Some(c) = table.get_mut(usize::from(r.0)) {
        *c = c.saturating_add(units);
    }
}

/// Relative slack of a threshold conversion (16 ulps of the level): see `limit_for`.
const TIE_SLACK: f64 = 16.0 * f64::EPSILON;

/// Bounds of the crossed-set cache band (see `refresh_crossed`).
const BAND_MIN: i64 = i64::MIN + (1 << 31);
const BAND_MAX: i64 = i64::MAX - (1 << 31);

/// One trapezoid term, `(a + b) · dt`, exactly: |a + b| ≤ 2³² and dt < 2³¹, so the product
/// always fits in an `i64`.
fn trapezoid_term(a: i32, b: i32, dt: u32) -> i64 {
    match small_trapezoid_term(a, b, dt) {
        Some(t) => i64::from(t),
        // A wide term (a converter beyond 16 bits, or samples far apart): 32-bit multiplies,
        // not the 64-bit multiply routine.
        None => match a.checked_add(b) {
            Some(sum) => mul_i32_u32(sum, dt),
            None => (i64::from(a) + i64::from(b)) * i64::from(dt),
        },
    }
}

/// `(a + b) · dt` in 32 bits when −2¹⁷ ≤ a + b < 2¹⁷ and dt < 2¹⁴ (converters up to 16 bits at
/// usual sample spacings), else `None`. One 32-bit multiply: a Cortex-M0 has no 64-bit
/// multiply instruction and would otherwise call a ~40-instruction routine.
#[inline(always)]
fn small_trapezoid_term(a: i32, b: i32, dt: u32) -> Option<i32> {
    let sum = a.checked_add(b)?;
    // Bias the sum into 0 ..< 2¹⁸ (as u32): then both range checks are one shift each.
    let biased = (sum as u32).wrapping_add(1 << 17);
    if (biased >> 18) | (dt >> 14) == 0 {
        // |sum| ≤ 2¹⁷ and dt ≤ 2¹⁴ − 1 (so `dt as i32` is exact): |sum · dt| < 2³¹, so the
        // wrapping multiply never wraps (the compiler cannot see that through the shifts).
        Some(sum.wrapping_mul(dt as i32))
    } else {
        None
    }
}

#[cfg(test)]
mod tests;
