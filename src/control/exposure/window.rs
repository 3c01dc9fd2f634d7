//! The rolling window: marks of the running total at bucket boundaries.

use super::ExposureConfigError;

/// Rolling sum over `B` complete buckets plus the current one, `B ≤ N − 1`, as marks of a
/// running total. See the [module documentation](super).
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

    /// The dose in the bucket of age `age` (0 = the open bucket, 1 ..= `B` the complete ones,
    /// newest first) in common units, given the running total `total`; 0 beyond the window.
    #[must_use]
    pub fn amount_at_age(&self, age: usize, total: u128) -> u128 {
        if age > self.used {
            return 0;
        }
        let newer = if age == 0 {
            total
        } else {
            self.mark_at_age(age)
        };
        newer.wrapping_sub(self.mark_at_age(age.wrapping_add(1)))
    }

    /// Add `amount` common units to the bucket of age `age` (0 = the open bucket, 1 ..= `B`
    /// the complete ones) without changing the running total: every mark older than that
    /// bucket is lowered by `amount` (wrapping, as every mark difference is taken). The dose
    /// leaves the window when that bucket does. An age beyond the window adds nothing and
    /// returns `false`.
    pub fn add_at_age(&mut self, age: usize, amount: u128) -> bool {
        if age > self.used {
            return false;
        }
        let count = self.used.wrapping_add(1);
        for j in age.wrapping_add(1)..=count {
            let i = self.index_of_age(j);
            if let Some(m) = self.marks.get_mut(i) {
                *m = m.wrapping_sub(amount);
            }
        }
        true
    }

    /// The mark at the end of the bucket of age `j` (1 ..= `B + 1`; `B + 1` is where the
    /// window begins).
    fn mark_at_age(&self, j: usize) -> u128 {
        self.marks.get(self.index_of_age(j)).copied().unwrap_or(0)
    }

    /// Ring index of the mark of age `j` (1 = the newest mark, at `head`).
    fn index_of_age(&self, j: usize) -> usize {
        let count = self.used.wrapping_add(1);
        let back = j.saturating_sub(1).checked_rem(count).unwrap_or(0);
        if back <= self.head {
            self.head.wrapping_sub(back)
        } else {
            count.wrapping_sub(back.wrapping_sub(self.head))
        }
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
