//! The exposure monitor's state across a reset: what a checkpoint keeps of the rolling window,
//! the shift, the warnings and the latched alarm, and how it comes back at boot.
//!
//! See [`ExposureState`].

use embedded_hal::digital::OutputPin;

use super::monitor::{Changes, ExposureMonitor};

/// Segments of the rolling window an [`ExposureState`] keeps (newest first).
pub const STATE_SEGMENTS: usize = 8;

/// A checkpoint of an [`ExposureMonitor`]: everything it needs to resume without counting
/// less. Amounts are effective radiant exposure in µJ/m², rounded up.
///
/// A personal logger loses its RAM when the battery is swapped or the firmware restarts. The
/// body does not forget, so neither may the monitor: [`ExposureMonitor::state`] gives a
/// fixed-size [`ExposureState`] to store (in the journal, see
/// [`crate::journal`]), and [`ExposureMonitor::resume`] builds the monitor from it after the
/// reset.
///
/// **Never lower.** Every amount is converted to µJ/m² *rounded up*, and back to the monitor's
/// common unit rounded up again. The window is kept as [`STATE_SEGMENTS`] segments of whole
/// buckets, newest first; at restore each segment's dose is placed in the *newest* bucket of
/// its segment, so it leaves the window no earlier than it would have. The time the device was
/// off ([`OffTime`]) ages the window only when it is known (a real-time clock); when it is
/// unknown nothing is aged — the restored window is the one before the reset, which can only
/// over-count. A latched alarm comes back latched and
/// its output is raised again until acknowledged; warning levels that were active are raised
/// again.
///
/// **Not measured while off.** The device measured nothing while it was off; the monitor
/// cannot charge that time (the wearer may have been indoors or exposed). It counts the restore
/// and the known off time in [`ShiftTotals`](super::ShiftTotals) so the record and its review
/// show the unmonitored interval explicitly.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureState {
    /// Dose in the rolling window by segment, newest first: segment `s` holds the buckets of
    /// ages `s·k ..= s·k + k − 1` (age 0 is the open bucket), `k` = `segment_buckets`.
    pub window_uj_per_m2: [u64; STATE_SEGMENTS],
    /// Buckets per segment, `k` ≥ 1.
    pub segment_buckets: u32,
    /// Bucket length of the monitor that took the state, ticks. A monitor with another
    /// bucket length restores the whole window into its open bucket (the latest it can leave).
    pub bucket_ticks: u64,
    /// Effective exposure of the shift so far, gap charges included.
    pub shift_uj_per_m2: u64,
    /// Of which charged for gaps.
    pub shift_gap_uj_per_m2: u64,
    /// Gaps in the shift so far.
    pub gaps: u32,
    /// Warning levels active (bit i = level i).
    pub active: u8,
    /// Whether the alarm was latched (awaiting acknowledgement).
    pub latched: bool,
}

/// How long the device was off before [`ExposureMonitor::resume`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum OffTime {
    /// Unknown (no real-time clock): the window is not aged. Conservative.
    Unknown,
    /// Known, in the monitor's ticks: the window is aged by the whole buckets it spans.
    Ticks(u64),
}

/// Relative slack that makes an `f64` conversion round up whatever its own rounding did.
const UP: f64 = 1.0 + 8.0 * f64::EPSILON;

/// Common units (of `unit_j_per_m2` J/m² each) as µJ/m², rounded up; saturates at
/// `u64::MAX` µJ/m² (1.8·10¹³ J/m², beyond any limit this monitor is configured with).
pub(super) fn units_to_uj_up(units: u128, unit_j_per_m2: f64) -> u64 {
    if units == 0 {
        return 0;
    }
    let x = libm::ceil(units as f64 * unit_j_per_m2 * 1e6 * UP);
    if x.is_nan() || x >= 18_446_744_073_709_551_615.0 {
        u64::MAX
    } else if x < 1.0 {
        1
    } else {
        x as u64
    }
}

/// µJ/m² as common units, rounded up; capped at 2¹²⁶ units (above every level the monitor
/// accepts, so a capped amount still trips the alarm).
pub(super) fn uj_to_units_up(uj: u64, unit_j_per_m2: f64) -> u128 {
    const CAP: u128 = 1 << 126;
    if uj == 0 {
        return 0;
    }
    let x = libm::ceil(uj as f64 * 1e-6 / unit_j_per_m2 * UP);
    if x.is_nan() || x >= CAP as f64 {
        CAP
    } else if x < 1.0 {
        1
    } else {
        x as u128
    }
}

impl<const N: usize, const L: usize, P: OutputPin> ExposureMonitor<N, L, P> {
    /// The state to checkpoint now: the window by segment, the shift, the active warnings
    /// and the latched alarm, every amount rounded up. Cheap enough for every bucket close.
    #[must_use]
    pub fn state(&self) -> ExposureState {
        let unit = self.dose().unit_j_per_m2();
        let total = self.dose().total_units();
        let window = self.window();
        let ages = window.buckets().saturating_add(1);
        let k = ages.div_ceil(STATE_SEGMENTS).max(1);
        let mut segments = [0u64; STATE_SEGMENTS];
        for (s, seg) in segments.iter_mut().enumerate() {
            let first = s.saturating_mul(k);
            let mut sum = 0u128;
            for age in first..first.saturating_add(k).min(ages) {
                sum = sum.saturating_add(window.amount_at_age(age, total));
            }
            *seg = units_to_uj_up(sum, unit);
        }
        let shift = self.shift_units();
        ExposureState {
            window_uj_per_m2: segments,
            segment_buckets: u32::try_from(k).unwrap_or(u32::MAX),
            bucket_ticks: window.bucket_ticks(),
            shift_uj_per_m2: units_to_uj_up(shift.0, unit),
            shift_gap_uj_per_m2: units_to_uj_up(shift.1, unit),
            gaps: self.shift_totals().gaps,
            active: self.active_levels(),
            latched: self.alarm_latched(),
        }
    }

    /// A monitor that resumes from a checkpointed state after a reset: as
    /// [`new`](Self::new), then the state is put back (see [`ExposureState`]): the window's dose returns to the newest bucket of each segment,
    /// aged by `off` only when it is known; the shift totals and gap count are carried on;
    /// warnings that were active are raised again and a latched alarm is latched again with
    /// its output active until [`acknowledge`](Self::acknowledge)d.
    ///
    /// The monitor's buckets start at its first reading or tick after this call, which is no
    /// earlier than the device came back: restored dose leaves the window no earlier than it
    /// would have without the reset.
    ///
    /// # Errors
    /// As [`new`](Self::new); [`ExposureError::Pin`](super::ExposureError::Pin) if a restored warning output cannot be
    /// raised.
    pub fn resume(
        meter: crate::irradiance::Meter,
        weight: super::WeightFactor,
        config: super::ExposureConfig<L>,
        pins: [P; L],
        state: &ExposureState,
        off: OffTime,
    ) -> Result<Self, super::ExposureError<P::Error>> {
        let mut m = Self::new(meter, weight, config, pins)?;
        m.apply_state(state, off)
            .map_err(super::ExposureError::Pin)?;
        Ok(m)
    }

    /// Put `state` back into a monitor that has seen no reading or tick yet.
    fn apply_state(&mut self, state: &ExposureState, off: OffTime) -> Result<Changes, P::Error> {
        let unit = self.dose().unit_j_per_m2();
        let same_buckets = state.bucket_ticks == self.window().bucket_ticks();
        let k = usize::try_from(state.segment_buckets.max(1)).unwrap_or(usize::MAX);
        let shift = match off {
            OffTime::Ticks(t) if same_buckets => {
                let b = t.checked_div(state.bucket_ticks).unwrap_or(0);
                usize::try_from(b).unwrap_or(usize::MAX)
            }
            _ => 0,
        };
        for (s, &uj) in state.window_uj_per_m2.iter().enumerate() {
            let age = if same_buckets {
                s.saturating_mul(k).saturating_add(shift)
            } else {
                0
            };
            // Beyond the window: the dose has left it (only with a known off time).
            self.window_mut().add_at_age(age, uj_to_units_up(uj, unit));
        }
        self.add_restored_shift(
            uj_to_units_up(state.shift_uj_per_m2, unit),
            uj_to_units_up(state.shift_gap_uj_per_m2, unit),
            state.gaps,
            match off {
                OffTime::Ticks(t) => Some(t),
                OffTime::Unknown => None,
            },
        );
        self.raise_restored(state.active, state.latched)
    }
}
