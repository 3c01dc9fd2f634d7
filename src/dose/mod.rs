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
//! A dose threshold (a stop target, an overexposure limit, a warning) is converted **once**
//! into the integer scale of the current segment, rounded in the safe direction
//! ([`Rounding`]), and re-converted only when a segment closes. The per-sample path is then
//! one multiply, one add and one compare per threshold — no floating point, no division.
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

#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Threshold {
    level_j_per_m2: f64,
    rounding: Rounding,
    /// Level in units of the current segment.
    limit: i64,
}

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
    band_high: i64,
    preload_j_per_m2: f64,
    scale: [f64; MAX_RANGES],
    closed: [i128; MAX_RANGES],
    /// Conservative charges for gaps, per range, in the same units as `closed`.
    /// (i64, saturating: 2⁶³ units is far beyond any real dose, and an i64 converts with the
    /// routine the open segment already links.)
    gap: [i64; MAX_RANGES],
    thresholds: heapless::Vec<Threshold, MAX_THRESHOLDS>,
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
        Self {
            scale,
            closed: [0; MAX_RANGES],
            gap: [0; MAX_RANGES],
            has_gap: false,
            segment: 0,
            segment_range: RangeIndex(0),
            last: None,
            max_gap: clamp_max_gap(max_gap),
            preload_j_per_m2: 0.0,
            thresholds: heapless::Vec::new(),
            // No thresholds: nothing is crossed whatever the segment.
            crossed_cache: Crossed(0),
            band_low: i64::MIN,
            band_high: i64::MAX,
        }
    }

    /// Start from a dose already delivered (a session resumed after a power loss). The preload
    /// is added to every read-out and threshold. Negative or non-finite values count as zero.
    pub fn set_preload(&mut self, delivered: RadiantExposure) {
        let v = delivered.j_per_m2();
        self.preload_j_per_m2 = if v.is_finite() && v > 0.0 { v } else { 0.0 };
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
        let id = u8::try_from(self.thresholds.len()).map_err(|_| level)?;
        let t = Threshold {
            level_j_per_m2: level.j_per_m2(),
            rounding,
            limit: i64::MAX,
        };
        self.thresholds.push(t).map_err(|_| level)?;
        // Converts every limit (the new one included) and refreshes the crossed set.
        self.recompute_limits();
        Ok(ThresholdId(id))
    }

    /// Move threshold `id` to a new `level` (its rounding is kept), for a watcher that re-arms
    /// one threshold for the next of a series of levels (dose milestones) instead of holding
    /// one threshold per level. The limit is converted as exactly as by
    /// [`add_threshold`](Self::add_threshold) and the crossed set is refreshed. Returns `false`
    /// and changes nothing for an unknown handle.
    pub fn set_threshold(&mut self, id: ThresholdId, level: RadiantExposure) -> bool {
        match self.thresholds.get_mut(usize::from(id.0)) {
            Some(t) => t.level_j_per_m2 = level.j_per_m2(),
            None => return false,
        }
        self.recompute_limits();
        true
    }

    /// Stop watching every threshold.
    pub fn clear_thresholds(&mut self) {
        self.thresholds.clear();
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
        if segment < self.band_low || segment >= self.band_high {
            return self.leave_band(net, range, at, dt, term);
        }
        self.segment = segment;
        self.last = Some(LastSample { at, net, range });
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
        let dt64 = i64::from(dt);
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
            // Each end of the trapezoid goes to its own range's total.
            self.close_segment(range);
            self.add_closed(last.range, i64::from(last.net) * dt64);
            self.segment = i64::from(net) * dt64;
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
        if self.segment < self.band_low || self.segment >= self.band_high {
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
        for (i, t) in (0u8..MAX_THRESHOLDS as u8).zip(self.thresholds.iter()) {
            if self.segment >= t.limit {
                // i < MAX_THRESHOLDS = 6 < 8: the shift never wraps.
                bits |= 1u8.wrapping_shl(u32::from(i));
                low = low.max(t.limit);
            } else {
                high = high.min(t.limit);
            }
        }
        self.crossed_cache = Crossed(bits);
        // Narrowed by 2³¹ at both ends: a band is still valid when narrower, and this keeps
        // any overflowed sum in `accept_common` outside it.
        self.band_low = low.max(BAND_MIN);
        self.band_high = high.min(BAND_MAX);
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
        for (i, t) in (0u8..MAX_THRESHOLDS as u8).zip(self.thresholds.iter()) {
            if self.segment >= t.limit {
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
            .get(usize::from(id.0))
            .map(|t| t.limit.saturating_sub(self.segment))
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

    /// The limit of `t` in units of the open segment, given the closed dose and the gap
    /// charge (J/m², computed once by the caller for every threshold).
    fn limit_for(&self, t: &Threshold, closed_j: f64, gap_j: f64) -> i64 {
        let k = self.scale_of(self.segment_range);
        if k <= 0.0 || !t.level_j_per_m2.is_finite() {
            return i64::MAX;
        }
        let base = match t.rounding {
            Rounding::NotBefore => closed_j,
            Rounding::NotAfter => closed_j + gap_j,
        };
        // The f64 rounding of the conversion is a few ulps of the level (the closed dose is
        // below it while the threshold matters). Moving the level by TIE_SLACK of itself
        // towards firing makes a dose exactly at the level fire at that sample (ties resolved
        // towards firing; the error is < 1e-15 of the level).
        // `as` from f64 saturates at the i64 bounds (and maps NaN to 0, excluded above).
        match t.rounding {
            Rounding::NotBefore => {
                libm::ceil((t.level_j_per_m2 * (1.0 - TIE_SLACK) - base) / k) as i64
            }
            Rounding::NotAfter => {
                libm::floor((t.level_j_per_m2 * (1.0 + TIE_SLACK) - base) / k) as i64
            }
        }
    }

    fn recompute_limits(&mut self) {
        let closed_j = self.closed_j_per_m2();
        let gap_j = self.gap_j_per_m2();
        for i in 0..self.thresholds.len() {
            if let Some(t) = self.thresholds.get(i).copied() {
                let limit = self.limit_for(&t, closed_j, gap_j);
                if let Some(slot) = self.thresholds.get_mut(i) {
                    slot.limit = limit;
                }
            }
        }
        self.refresh_crossed();
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
        None => (i64::from(a) + i64::from(b)) * i64::from(dt),
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
