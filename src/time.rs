//! Time: one time base and one timing policy for every controller.
//!
//! Readings carry wrapping `u32` [`Ticks`] of the caller's monotonic counter. Every
//! controller (the [`Integrator`](crate::dose::Integrator) under the session, the curing
//! controller and the exposure monitors) classifies the step from one timestamp to the next
//! with the same function, [`classify`], and the monitors that need absolute time (rolling
//! windows of hours) extend the tick to 64 bits with a [`Clock`], so an 8 h window works at
//! any tick rate up to and beyond 10 MHz (2⁶⁴ ticks at 10 MHz is 58 000 years).
//!
//! # The policy
//!
//! With `dt = at − last` taken modulo 2³² and `max_gap` the configured longest interval
//! (1 ..= 2³¹ − 1 ticks):
//!
//! | step | class | what every controller does |
//! |---|---|---|
//! | `dt == 0` | [`Step::Repeated`] | ignore the reading; nothing changes |
//! | `1 ≤ dt ≤ max_gap` | [`Step::Interval`] | integrate the interval (trapezoid) |
//! | backwards by `1 ..= max_gap` ticks | [`Step::Backwards`] | integrate nothing; the run restarts from this reading (later readings are never blocked) |
//! | anything else | [`Step::Gap`] | a gap: the interval was not measured |
//!
//! "Anything else" includes forward jumps of 2³¹ ticks or more (a long sleep, a counter that
//! was reset): a jump is a gap, never a blinding that rejects later readings. A gap equal to
//! `max_gap` is still an interval; one tick more is a gap — the same convention everywhere.
//!
//! What a gap costs is the controller's policy over the one integral: the
//! [`Integrator`](crate::dose::Integrator) charges it with a conservative bound,
//! at least max(irradiance before, irradiance after) × gap, kept as a separate figure beside the
//! measured dose; limits (rounded to trip early) include the charge, stop targets do not. The
//! session and the curing controller also fault on a gap; the exposure monitors keep
//! counting. A counter that truly runs backwards by more than `max_gap` cannot be told from a
//! forward jump and is charged as a gap: the error is always towards counting more.

pub use crate::acquire::reading::{TickRate, Ticks};

/// How one timestamp follows the previous one. See the [module documentation](self).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Step {
    /// Same timestamp as the previous reading.
    Repeated,
    /// A measured interval of 1 ..= `max_gap` ticks.
    Interval(u32),
    /// The timestamp is this many ticks (1 ..= `max_gap`) before the previous one.
    Backwards(u32),
    /// An unmeasured interval of this many ticks: longer than `max_gap`, including forward
    /// jumps of 2³¹ ticks or more.
    Gap(u32),
}

/// Classify the step from `last` to `at` under the project's timing policy.
///
/// `max_gap` is clamped to 1 ..= 2³¹ − 1 ticks.
#[must_use]
#[inline]
pub const fn classify(last: Ticks, at: Ticks, max_gap: u32) -> Step {
    let max_gap = clamp_max_gap(max_gap);
    let dt = at.wrapping_since(last);
    if dt == 0 {
        Step::Repeated
    } else if dt <= max_gap {
        Step::Interval(dt)
    } else if dt.wrapping_neg() <= max_gap {
        Step::Backwards(dt.wrapping_neg())
    } else {
        Step::Gap(dt)
    }
}

/// `max_gap` clamped to the valid 1 ..= 2³¹ − 1 ticks.
#[must_use]
pub const fn clamp_max_gap(max_gap: u32) -> u32 {
    if max_gap == 0 {
        1
    } else if max_gap > i32::MAX as u32 {
        i32::MAX as u32
    } else {
        max_gap
    }
}

/// The wrapping `u32` tick extended to a 64-bit count that never wraps, under the same
/// policy as [`classify`]: intervals and gaps (forward jumps included) advance it, a
/// backwards step re-anchors the tick without moving the count back, a repeat changes
/// nothing.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Clock {
    last: Option<Ticks>,
    now: u64,
    max_gap: u32,
}

impl Clock {
    /// A clock that has seen no tick yet; `max_gap` as in [`classify`].
    #[must_use]
    pub const fn new(max_gap: u32) -> Self {
        Self {
            last: None,
            now: 0,
            max_gap: clamp_max_gap(max_gap),
        }
    }

    /// Take the tick of a reading or a timer; returns how it follows the previous one
    /// (`None` for the first tick, which sets the count to 0).
    pub fn advance(&mut self, at: Ticks) -> Option<Step> {
        let Some(last) = self.last else {
            self.last = Some(at);
            return None;
        };
        let step = classify(last, at, self.max_gap);
        match step {
            Step::Repeated => {}
            Step::Interval(dt) | Step::Gap(dt) => {
                self.now = self.now.saturating_add(u64::from(dt));
                self.last = Some(at);
            }
            Step::Backwards(_) => self.last = Some(at),
        }
        Some(step)
    }

    /// Ticks since the first tick this clock saw (0 before and at the first).
    #[must_use]
    pub const fn now(&self) -> u64 {
        self.now
    }

    /// The last tick taken, if any.
    #[must_use]
    pub const fn last(&self) -> Option<Ticks> {
        self.last
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_class_of_step() {
        let g = 100;
        let t = Ticks(u32::MAX - 10);
        assert_eq!(classify(t, t, g), Step::Repeated);
        assert_eq!(classify(t, t.wrapping_add(1), g), Step::Interval(1));
        // Across the wrap.
        assert_eq!(classify(t, t.wrapping_add(100), g), Step::Interval(100));
        assert_eq!(classify(t, t.wrapping_add(101), g), Step::Gap(101));
        assert_eq!(classify(t, Ticks(t.0 - 100), g), Step::Backwards(100));
        // 101 back is beyond max_gap: a forward jump of 2³² − 101 ticks, a gap.
        assert_eq!(classify(t, Ticks(t.0 - 101), g), Step::Gap(u32::MAX - 100));
        // A forward jump of exactly 2³¹ and of more: gaps, never backwards.
        assert_eq!(classify(Ticks(0), Ticks(1 << 31), g), Step::Gap(1 << 31));
        assert_eq!(classify(Ticks(0), Ticks(3 << 30), g), Step::Gap(3 << 30));
    }

    #[test]
    fn the_largest_max_gap_still_tells_backwards_from_forward() {
        let g = i32::MAX as u32;
        assert_eq!(classify(Ticks(0), Ticks(g), g), Step::Interval(g));
        assert_eq!(classify(Ticks(0), Ticks(1 << 31), g), Step::Gap(1 << 31));
        assert_eq!(classify(Ticks(5), Ticks(4), g), Step::Backwards(1));
        assert_eq!(clamp_max_gap(0), 1);
        assert_eq!(clamp_max_gap(u32::MAX), g);
    }

    #[test]
    fn the_clock_extends_past_many_wraps() {
        // A 10 MHz counter sampled every 0.4 s for 9 h: the u32 wraps 7 times.
        let step = 4_000_000u32;
        let mut c = Clock::new(step);
        let mut t = Ticks(0xFFFF_0000);
        assert_eq!(c.advance(t), None);
        let n = 9 * 3600 * 10 / 4;
        for _ in 0..n {
            t = t.wrapping_add(step);
            assert_eq!(c.advance(t), Some(Step::Interval(step)));
        }
        assert_eq!(c.now(), u64::from(step) * n as u64);
        assert!(c.now() > 7 * (1u64 << 32));
    }

    #[test]
    fn the_clock_never_goes_back_and_jumps_count() {
        let mut c = Clock::new(10);
        c.advance(Ticks(100));
        c.advance(Ticks(110));
        assert_eq!(c.advance(Ticks(105)), Some(Step::Backwards(5)));
        assert_eq!(c.now(), 10);
        // Re-anchored at 105: the next reading is an interval from there.
        assert_eq!(c.advance(Ticks(112)), Some(Step::Interval(7)));
        assert_eq!(c.now(), 17);
        assert_eq!(c.advance(Ticks(112)), Some(Step::Repeated));
        // A forward jump of 2³¹ + 5 ticks advances the count by exactly that.
        let jump = (1u32 << 31) + 5;
        assert_eq!(
            c.advance(Ticks(112u32.wrapping_add(jump))),
            Some(Step::Gap(jump))
        );
        assert_eq!(c.now(), 17 + u64::from(jump));
        assert_eq!(c.last(), Some(Ticks(112u32.wrapping_add(jump))));
    }
}
