//! Amplifier range switching: choose the transimpedance range from the readings, with
//! hysteresis and a settling delay, and drive the analog switch through embedded-hal pins.
//!
//! The switch is addressed in binary by `K` output pins (pin `k` carries bit `k` of the range
//! index), as on the usual 2:1 and 4:1 analog multiplexers in the feedback path. Range 0 is
//! the most sensitive.
//!
//! Rules, for a reading in range `r`:
//! - code saturated, or net code ≥ `up` × the valid top code → switch to `r + 1`;
//! - the same signal would read below `down` × the valid top code in range `r − 1` → switch
//!   to `r − 1` (so `down < up` gives hysteresis: a switch down can never trigger an
//!   immediate switch back up);
//! - after a switch, the next `settle_samples` readings are to be discarded while the
//!   amplifier settles ([`Decision::Settling`]). The dose across them is bridged by the
//!   trapezoid between the neighbouring valid readings (bounded by the session's maximum
//!   gap).

use embedded_hal::digital::OutputPin;

use crate::acquire::reading::{RangeIndex, Reading};
use crate::frontend::{CodeFault, FrontEnd, Sample, MAX_RANGES};

/// Autorange thresholds and settling delay.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AutorangeConfig {
    /// Switch to a less sensitive range at this fraction of the valid top code.
    /// Valid: 0 < down < up ≤ 1.
    pub up: f64,
    /// Switch to a more sensitive range when the signal would read below this fraction of the
    /// valid top code there. Valid: 0 < down < up.
    pub down: f64,
    /// Readings to discard after a switch. Valid: 0 ..= 255.
    pub settle_samples: u8,
}

/// Why an autorange configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum AutorangeConfigError {
    /// Thresholds not finite, or not 0 < down < up ≤ 1.
    Thresholds,
    /// `K` pins cannot address every range of the front end.
    TooFewPins,
}

impl core::fmt::Display for AutorangeConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Thresholds => "autorange thresholds must satisfy 0 < down < up <= 1",
            Self::TooFewPins => "too few select pins for the number of ranges",
        })
    }
}

impl core::error::Error for AutorangeConfigError {}

/// Why [`Autorange::new`] failed. `E` is the select pins' error type.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AutorangeError<E> {
    /// The configuration was rejected; no pin was written.
    Config(AutorangeConfigError),
    /// The switch could not be set to the start range.
    Pin(E),
}

impl<E: core::fmt::Debug> core::fmt::Display for AutorangeError<E> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "autorange configuration: {e}"),
            Self::Pin(e) => write!(f, "range select pin could not be written: {e:?}"),
        }
    }
}

impl<E: core::fmt::Debug> core::error::Error for AutorangeError<E> {}

/// What to do with a reading.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Decision {
    /// Use the reading. If `switched_to` is set, the switch was moved after it.
    Use {
        /// The new range, if the switch was moved.
        switched_to: Option<RangeIndex>,
    },
    /// Discard the reading: the amplifier is settling after a switch.
    Settling,
    /// The reading is saturated; the switch was moved to a less sensitive range.
    SaturatedSwitched(RangeIndex),
    /// The reading is saturated in the least sensitive range: the light is above what the
    /// meter can measure.
    SaturatedAtTop,
}

/// The autoranger: owns the select pins. See the [module documentation](self).
#[derive(Debug)]
pub struct Autorange<P, const K: usize> {
    pins: [P; K],
    current: RangeIndex,
    settle_left: u8,
    settle_samples: u8,
    ranges: u8,
    up_code: i32,
    /// Net code in range r below which to switch to r − 1 (unused for r = 0).
    down_code: [i32; MAX_RANGES],
}

impl<P: OutputPin, const K: usize> Autorange<P, K> {
    /// Configure for `front_end` and select range `start` (clamped to the last range).
    ///
    /// # Errors
    /// [`AutorangeError::Config`] for an invalid configuration, [`AutorangeError::Pin`] if the pins cannot
    /// be driven.
    #[allow(clippy::type_complexity)] // nested Result keeps configuration and pin errors apart
    pub fn new(
        pins: [P; K],
        front_end: &FrontEnd,
        config: AutorangeConfig,
        start: RangeIndex,
    ) -> Result<Self, AutorangeError<P::Error>> {
        let AutorangeConfig { up, down, .. } = config;
        if !(up.is_finite() && down.is_finite() && 0.0 < down && down < up && up <= 1.0) {
            return Err(AutorangeError::Config(AutorangeConfigError::Thresholds));
        }
        let n = front_end.range_count();
        if K < 8 && (1usize << K) < n {
            return Err(AutorangeError::Config(AutorangeConfigError::TooFewPins));
        }
        let top = f64::from(front_end.high_limit());
        let mut down_code = [0i32; MAX_RANGES];
        for r in 1..n.min(MAX_RANGES) {
            let (Some(this), Some(more)) = (
                front_end.range(RangeIndex(r as u8)),
                front_end.range(RangeIndex((r - 1) as u8)),
            ) else {
                continue;
            };
            let ratio = this.gain.v_per_a() / more.gain.v_per_a();
            if let Some(slot) = down_code.get_mut(r) {
                *slot = libm::floor(down * top * ratio) as i32;
            }
        }
        let ranges = u8::try_from(n).unwrap_or(u8::MAX);
        let current = RangeIndex(start.0.min(ranges.saturating_sub(1)));
        let mut a = Self {
            pins,
            current,
            settle_left: config.settle_samples,
            settle_samples: config.settle_samples,
            ranges,
            up_code: libm::floor(up * top) as i32,
            down_code,
        };
        a.drive(current).map_err(AutorangeError::Pin)?;
        Ok(a)
    }

    /// The range selected now; stamp new readings with it.
    #[must_use]
    pub const fn current(&self) -> RangeIndex {
        self.current
    }

    /// Decide on a reading (taken in [`current`](Self::current) range) and move the switch
    /// if needed.
    ///
    /// # Errors
    /// The pin error if the switch cannot be moved (the range is then unknown: fault).
    pub fn observe(
        &mut self,
        reading: &Reading,
        front_end: &FrontEnd,
    ) -> Result<Decision, P::Error> {
        self.observe_sample(&front_end.sample(reading))
    }

    /// As [`observe`](Self::observe), for a reading whose net code was already computed
    /// ([`FrontEnd::sample`]) and is shared with the controller and the plausibility checks.
    ///
    /// # Errors
    /// As [`observe`](Self::observe).
    pub fn observe_sample(&mut self, sample: &Sample) -> Result<Decision, P::Error> {
        let reading = &sample.reading;
        if self.settle_left > 0 {
            self.settle_left -= 1;
            return Ok(Decision::Settling);
        }
        let last = self.ranges.saturating_sub(1);
        let r = reading.range;
        match sample.net {
            Err(CodeFault::SaturatedHigh | CodeFault::SaturatedLow) => {
                if r.0 < last {
                    let next = RangeIndex(r.0 + 1);
                    self.switch(next)?;
                    Ok(Decision::SaturatedSwitched(next))
                } else {
                    Ok(Decision::SaturatedAtTop)
                }
            }
            Err(_) => Ok(Decision::Use { switched_to: None }),
            Ok(net) => {
                let down = self.down_code.get(usize::from(r.0)).copied().unwrap_or(0);
                let next = if net >= self.up_code && r.0 < last {
                    Some(RangeIndex(r.0 + 1))
                } else if r.0 > 0 && net < down {
                    Some(RangeIndex(r.0 - 1))
                } else {
                    None
                };
                if let Some(n) = next {
                    self.switch(n)?;
                }
                Ok(Decision::Use { switched_to: next })
            }
        }
    }

    /// Give the pins back.
    pub fn release(self) -> [P; K] {
        self.pins
    }

    fn switch(&mut self, to: RangeIndex) -> Result<(), P::Error> {
        self.drive(to)?;
        self.current = to;
        self.settle_left = self.settle_samples;
        Ok(())
    }

    fn drive(&mut self, to: RangeIndex) -> Result<(), P::Error> {
        for (bit, pin) in self.pins.iter_mut().enumerate() {
            if bit < 8 && (to.0 >> bit) & 1 == 1 {
                pin.set_high()?;
            } else {
                pin.set_low()?;
            }
        }
        Ok(())
    }
}
