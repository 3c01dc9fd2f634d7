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

use crate::frontend::MAX_RANGES;
use crate::irradiance::Meter;
use crate::quantity::RadiantExposure;
use crate::reading::{RangeIndex, Ticks};
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
    pub fn units_to_threshold(&self, id: ThresholdId) -> Option<i64> {
        self.thresholds
            .get(usize::from(id.0))
            .map(|t| t.limit.saturating_sub(self.segment))
    }

    /// The amplifier range whose integer units the open segment (and every threshold limit)
    /// is counted in.
    #[must_use]
    pub const fn segment_range(&self) -> RangeIndex {
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
mod tests {
    use super::*;

    /// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s.
    /// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s.
    fn meter() -> Meter {
        crate::test_support::two_range_meter(365.0)
    }

    #[test]
    fn constant_reading_gives_irradiance_times_time() {
        let m = meter();
        let mut i = Integrator::new(&m, 10_000);
        for n in 0..=100u32 {
            i.accept(50, RangeIndex(0), Ticks(n * 10)).unwrap();
        }
        // 50 W/m² for 1.000 s = 50 J/m².
        assert!((i.exposure().j_per_m2() - 50.0).abs() < 1e-12);
    }

    #[test]
    fn trapezoid_of_a_ramp_and_irregular_spacing() {
        let mut i = Integrator::new(&meter(), 10_000);
        i.accept(0, RangeIndex(0), Ticks(0)).unwrap();
        i.accept(100, RangeIndex(0), Ticks(300)).unwrap();
        i.accept(100, RangeIndex(0), Ticks(1000)).unwrap();
        // ½·100·0.3 + 100·0.7 = 85 J/m².
        assert!((i.exposure().j_per_m2() - 85.0).abs() < 1e-12);
    }

    #[test]
    fn range_change_splits_the_trapezoid_exactly() {
        let mut i = Integrator::new(&meter(), 10_000);
        i.accept(40, RangeIndex(0), Ticks(0)).unwrap();
        // 4 codes in range 1 is 40 W/m²: a constant 40 W/m² over the switch.
        i.accept(4, RangeIndex(1), Ticks(500)).unwrap();
        i.accept(4, RangeIndex(1), Ticks(1000)).unwrap();
        assert!((i.exposure().j_per_m2() - 40.0).abs() < 1e-12);
        assert_eq!(i.raw_total(RangeIndex(0)), 40 * 500);
        assert_eq!(i.raw_total(RangeIndex(1)), 4 * 500 + 8 * 500);
    }

    #[test]
    fn timing_faults_are_explicit() {
        let start = u32::MAX - 5;
        let mut i = Integrator::new(&meter(), 100);
        i.accept(10, RangeIndex(0), Ticks(start)).unwrap();
        assert_eq!(
            i.accept(10, RangeIndex(0), Ticks(start)),
            Err(SampleError::Repeated)
        );
        // Across the wrap: 50 ticks later is fine.
        let s = i
            .accept(10, RangeIndex(0), Ticks(start).wrapping_add(50))
            .unwrap();
        assert_eq!(s.interval, 50);
        assert!((i.exposure().j_per_m2() - 0.5).abs() < 1e-12);
        assert_eq!(
            i.accept(10, RangeIndex(0), Ticks(start).wrapping_add(151)),
            Err(SampleError::Gap { ticks: 101 })
        );
        // The gap was not integrated as measured dose: it is charged beside it,
        // 10 W/m² × 0.101 s.
        assert!((i.exposure().j_per_m2() - 0.5).abs() < 1e-12);
        assert!((i.gap_charge().j_per_m2() - 1.01).abs() < 1e-12);
        assert!((i.exposure_bound().j_per_m2() - 1.51).abs() < 1e-12);
        assert_eq!(
            i.accept(10, RangeIndex(9), Ticks(1)),
            Err(SampleError::UnknownRange)
        );
    }

    #[test]
    fn a_backwards_step_restarts_the_run_and_never_blocks() {
        let mut i = Integrator::new(&meter(), 100);
        i.accept(10, RangeIndex(0), Ticks(1000)).unwrap();
        i.accept(10, RangeIndex(0), Ticks(1010)).unwrap();
        assert_eq!(
            i.accept(10, RangeIndex(0), Ticks(1003)),
            Err(SampleError::Backwards { ticks: 7 })
        );
        // The next reading integrates from the re-anchored 1003, not from 1010.
        assert_eq!(
            i.accept(10, RangeIndex(0), Ticks(1005)).unwrap().interval,
            2
        );
        // 10 W/m² over 10 + 2 ticks of 1 ms.
        assert_eq!(i.raw_total(RangeIndex(0)), 20 * 12);
        assert_eq!(i.gap_charge().j_per_m2(), 0.0);
    }

    #[test]
    fn a_forward_jump_of_half_the_counter_is_a_gap_not_a_blinding() {
        // Before the shared policy, a jump of 2³¹ ticks or more read as "backwards" and every
        // later sample was refused until the counter passed the old value.
        let mut i = Integrator::new(&meter(), 1000);
        i.accept(4, RangeIndex(0), Ticks(0)).unwrap();
        let jump = (1u32 << 31) + 12_345;
        assert_eq!(
            i.accept(6, RangeIndex(0), Ticks(jump)),
            Err(SampleError::Gap { ticks: jump })
        );
        // Charged with the larger end (6 codes) for the whole jump.
        assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 6 * i128::from(jump));
        // And the very next reading is integrated.
        assert_eq!(
            i.accept(6, RangeIndex(0), Ticks(jump + 10))
                .unwrap()
                .interval,
            10
        );
        assert_eq!(i.raw_total(RangeIndex(0)), 12 * 10);
    }

    #[test]
    fn a_gap_charges_at_least_the_brighter_end() {
        // Rising light across a gap in one range: 5 then 30 W/m² (range 0) for 0.5 s: the
        // brighter end, 30 W/m² × 0.5 s = 15 J/m².
        let mut i = Integrator::new(&meter(), 100);
        i.accept(5, RangeIndex(0), Ticks(0)).unwrap();
        let _ = i.accept(30, RangeIndex(0), Ticks(500));
        assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 30 * 500);
        assert!((i.gap_charge().j_per_m2() - 15.0).abs() < 1e-12);
        // Across a range change, 5 W/m² (range 0) then 30 W/m² (3 codes in range 1): both
        // ends' rectangles, 2.5 + 15 J/m², which bounds the brighter end's 15 J/m².
        let mut i = Integrator::new(&meter(), 100);
        i.accept(5, RangeIndex(0), Ticks(0)).unwrap();
        assert_eq!(
            i.accept(3, RangeIndex(1), Ticks(500)),
            Err(SampleError::Gap { ticks: 500 })
        );
        assert_eq!(i.raw_gap(RangeIndex(1)), 2 * 3 * 500);
        assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 5 * 500);
        assert!((i.gap_charge().j_per_m2() - 17.5).abs() < 1e-12);
        // Below-dark codes charge nothing.
        let mut j = Integrator::new(&meter(), 100);
        j.accept(-5, RangeIndex(0), Ticks(0)).unwrap();
        let _ = j.accept(-2, RangeIndex(0), Ticks(500));
        assert_eq!(j.gap_charge().j_per_m2(), 0.0);
    }

    #[test]
    fn limits_count_the_gap_charge_and_targets_do_not() {
        let mut i = Integrator::new(&meter(), 100);
        let target = i
            .add_threshold(RadiantExposure::from_j_per_m2(2.0), Rounding::NotBefore)
            .unwrap();
        let limit = i
            .add_threshold(RadiantExposure::from_j_per_m2(2.0), Rounding::NotAfter)
            .unwrap();
        i.accept(10, RangeIndex(0), Ticks(0)).unwrap();
        // 10 W/m² × 0.2 s gap: 2 J/m² charged, nothing measured.
        let _ = i.accept(10, RangeIndex(0), Ticks(200));
        let c = i.crossed();
        assert!(c.contains(limit), "the limit must count the gap charge");
        assert!(
            !c.contains(target),
            "the target must count only measured dose"
        );
    }

    #[test]
    fn thresholds_round_in_the_safe_direction() {
        let mut i = Integrator::new(&meter(), 10_000);
        let stop = i
            .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotBefore)
            .unwrap();
        let limit = i
            .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotAfter)
            .unwrap();
        i.accept(10, RangeIndex(0), Ticks(0)).unwrap();
        let mut t = 0;
        let mut stop_at = None;
        let mut limit_at = None;
        while stop_at.is_none() {
            t += 1;
            let s = i.accept(10, RangeIndex(0), Ticks(t)).unwrap();
            if s.crossed.contains(limit) && limit_at.is_none() {
                limit_at = Some((t, i.exposure().j_per_m2()));
            }
            if s.crossed.contains(stop) {
                stop_at = Some((t, i.exposure().j_per_m2()));
            }
        }
        let (ts, hs) = stop_at.unwrap();
        let (tl, hl) = limit_at.unwrap();
        assert!(hs >= 1.0, "stop fired below target: {hs}");
        assert!(hl <= 1.0, "limit fired above its level: {hl}");
        assert!(tl <= ts);
    }

    #[test]
    fn thresholds_follow_range_changes_and_preload() {
        let mut i = Integrator::new(&meter(), 10_000);
        i.set_preload(RadiantExposure::from_j_per_m2(5.0));
        let id = i
            .add_threshold(RadiantExposure::from_j_per_m2(10.0), Rounding::NotBefore)
            .unwrap();
        i.accept(2, RangeIndex(1), Ticks(0)).unwrap();
        let mut t = 0;
        loop {
            t += 10;
            // Alternate ranges with the same 20 W/m².
            let (net, r) = if (t / 10) % 2 == 0 { (2, 1) } else { (20, 0) };
            let s = i.accept(net, RangeIndex(r), Ticks(t)).unwrap();
            if s.crossed.contains(id) {
                break;
            }
        }
        let h = i.exposure().j_per_m2();
        assert!((10.0 - 1e-12..10.0 + 1e-12).contains(&h), "{h}");
        // 5 J/m² at 20 W/m² takes 250 ms; the dose is exactly 10 J/m² at 250 ms, a tie,
        // which fires at that very sample.
        assert_eq!(t, 250);
    }

    #[test]
    fn units_to_threshold_counts_down_in_segment_units() {
        let mut i = Integrator::new(&meter(), 10_000);
        // 1 J/m² in range 0 (1 W/m² per code, 1000 ticks/s): ½·1/1000 = 0.0005 J/m² per
        // unit, so 2000 units exactly (a tie needs no extra unit).
        let id = i
            .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotBefore)
            .unwrap();
        // Before any interval the segment is still the initial one (range 0).
        assert_eq!(i.units_to_threshold(id), Some(2000));
        i.accept(5, RangeIndex(1), Ticks(0)).unwrap();
        assert_eq!(i.segment_range(), RangeIndex(0));
        assert_eq!(i.units_to_threshold(id), Some(2000));
        // 10 ticks at net 5 in range 1 (0.005 J/m² per unit): the first end's half
        // (5·10 = 50 units) closes into range 1's total, the second opens the segment with
        // 50 units; 0.25 J/m² is closed, so (1 − 0.25) / 0.005 = 150 units − 50 = 100 remain.
        i.accept(5, RangeIndex(1), Ticks(10)).unwrap();
        assert_eq!(i.segment_range(), RangeIndex(1));
        assert_eq!(i.units_to_threshold(id), Some(100));
        i.accept(5, RangeIndex(1), Ticks(21)).unwrap();
        assert_eq!(i.units_to_threshold(id), Some(-10));
        assert!(i.crossed().contains(id));
        assert_eq!(i.units_to_threshold(ThresholdId(5)), None);
    }

    #[test]
    fn full_threshold_list_hands_the_level_back() {
        let mut i = Integrator::new(&meter(), 1);
        for _ in 0..MAX_THRESHOLDS {
            i.add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotAfter)
                .unwrap();
        }
        let level = RadiantExposure::from_j_per_m2(7.0);
        assert_eq!(i.add_threshold(level, Rounding::NotAfter), Err(level));
    }

    #[test]
    fn segment_overflow_folds_exactly() {
        let mut i = Integrator::new(&meter(), i32::MAX as u32);
        let big = i32::MAX - 1;
        i.accept(big, RangeIndex(0), Ticks(0)).unwrap();
        let mut t = 0u32;
        for _ in 0..6 {
            t = t.wrapping_add(i32::MAX as u32);
            i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
        }
        let expected = 6 * 2 * i128::from(big) * i128::from(i32::MAX);
        assert_eq!(i.raw_total(RangeIndex(0)), expected);
    }

    #[test]
    fn trapezoid_term_equals_the_wide_product() {
        let cases = [
            (0, 0, 1),
            (0x1FFFF, 0, 0x3FFF),
            (0x20000, 0, 0x3FFF),
            (-0x20000, 0, 0x3FFF),
            (-0x20001, 0, 0x3FFF),
            (0x10000, 0x0FFFF, 0x3FFF),
            (0x1FFFF, 0, 0x4000),
            (-0x1FFFF, -1, 0x3FFF),
            (-0x10000, 0, 3),
            (5, 7, u32::MAX),
            (i32::MAX, i32::MAX, i32::MAX as u32),
            (i32::MIN, i32::MIN, i32::MAX as u32),
            (i32::MAX, 1, 2),
            (1234, -5678, 10),
        ];
        for (a, b, dt) in cases {
            let wide = (i64::from(a) + i64::from(b)) * i64::from(dt);
            assert_eq!(trapezoid_term(a, b, dt), wide, "{a} {b} {dt}");
        }
    }

    #[test]
    fn cached_crossed_set_matches_a_full_scan_both_ways() {
        // Signed codes make the integral fall as well as rise, so thresholds are crossed and
        // uncrossed again; the step's crossed set must always equal the full scan.
        let mut i = Integrator::new(&meter(), 10_000);
        for level in [0.02, 0.05, 0.08] {
            i.add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotBefore)
                .unwrap();
            i.add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotAfter)
                .unwrap();
        }
        let mut x: u32 = 12345;
        let mut t = 0u32;
        let mut seen = [false; 2];
        let mut uncrossed = false;
        let mut prev = 0u8;
        for n in 0..5_000 {
            x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
            let drift = if (n / 500) % 2 == 0 { 3 } else { -4 };
            let net = ((x >> 16) % 21) as i32 - 10 + drift;
            t += 1 + (x >> 8) % 5;
            let range = RangeIndex(u8::from(n % 997 == 0));
            let s = i.accept(net, range, Ticks(t)).unwrap();
            assert_eq!(s.crossed, i.crossed(), "sample {n}");
            seen[usize::from(s.crossed.0 != 0)] = true;
            uncrossed |= prev & !s.crossed.0 != 0;
            prev = s.crossed.0;
        }
        assert_eq!(seen, [true, true]);
        assert!(uncrossed, "the walk never fell back below a threshold");
        i.clear_thresholds();
        let s = i.accept(1, RangeIndex(0), Ticks(t + 1)).unwrap();
        assert_eq!(s.crossed, Crossed(0));
    }

    #[test]
    fn small_terms_near_the_segment_limit_fold_exactly() {
        // Bring the open segment close to i64::MAX with large terms, then continue with
        // terms small enough for the 32-bit path; the total must stay exact across the fold.
        let mut i = Integrator::new(&meter(), i32::MAX as u32);
        let big = i32::MAX - 1;
        let mut expected: i128 = 0;
        let mut t = 0u32;
        let mut last = big;
        i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
        t = t.wrapping_add(i32::MAX as u32);
        i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
        expected += 2 * i128::from(big) * i128::from(i32::MAX);
        for n in 0..40 {
            let net = if n == 0 { 0x7FFF } else { 0xFFFF };
            t = t.wrapping_add(0x3FFF);
            i.accept(net, RangeIndex(0), Ticks(t)).unwrap();
            expected += (i128::from(net) + i128::from(last)) * 0x3FFF;
            last = net;
            assert_eq!(i.raw_total(RangeIndex(0)), expected, "sample {n}");
        }
        assert!(expected > i128::from(i64::MAX));
    }
}
