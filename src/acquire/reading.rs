//! Acquisition: a raw photodiode reading with its amplifier range and timestamp.
//!
//! embedded-hal 1.0 has no ADC trait, so this module defines the smallest one the dose
//! engine needs: [`PhotodiodeAdc`], one required non-blocking method that returns a raw code.
//! The caller stamps each code with the tick count of its own monotonic counter and the
//! amplifier range that was active ([`Reading`]); the library never reads a clock.
//!
//! Adapters:
//! - [`FnAdc`] wraps any closure (an on-chip ADC read in a HAL, a DMA buffer, a test double);
//! - `ads1x1x_adc::Ads1x1xAdc` (feature `ads1x1x`) wraps the maintained
//!   [`ads1x1x`](https://docs.rs/ads1x1x) I²C driver.
//!
//! Every sample carries its own timestamp: an ADC's nominal data rate can be 10 % off, so
//! the integrator uses the real spacing of the samples, never a nominal period.

/// A timestamp in ticks of the caller's monotonic counter. Wraps at `u32::MAX`.
///
/// Differences are taken with wrapping subtraction, so a counter that rolls over is handled;
/// an interval must be shorter than 2³¹ ticks to be distinguished from time going backwards.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Ticks(pub u32);

impl Ticks {
    /// Ticks elapsed from `earlier` to `self`, with wrap-around (`self − earlier` mod 2³²).
    #[must_use]
    pub const fn wrapping_since(self, earlier: Self) -> u32 {
        self.0.wrapping_sub(earlier.0)
    }
    /// The timestamp `n` ticks later, with wrap-around.
    #[must_use]
    pub const fn wrapping_add(self, n: u32) -> Self {
        Self(self.0.wrapping_add(n))
    }
}

/// The rate of the caller's tick counter, in ticks per second (Hz). Valid range: ≥ 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TickRate(u32);

impl TickRate {
    /// A tick rate in Hz. Returns `None` for 0.
    #[must_use]
    pub const fn from_hz(hz: u32) -> Option<Self> {
        if hz == 0 {
            None
        } else {
            Some(Self(hz))
        }
    }
    /// The rate in Hz (≥ 1).
    #[must_use]
    pub const fn hz(self) -> u32 {
        self.0
    }
    /// A tick count as seconds.
    #[must_use]
    pub fn ticks_to_s(self, ticks: u32) -> f64 {
        f64::from(ticks) / f64::from(self.0)
    }
}

/// Index of the amplifier (transimpedance) range that was active for a reading.
///
/// Range 0 is the most sensitive (largest feedback resistance); higher indices are less
/// sensitive. Valid range: `0..N` for a front end configured with `N` ranges.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RangeIndex(pub u8);

/// One raw sample: ADC code, the amplifier range it was taken in, and when.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reading {
    /// Raw ADC code as the converter returned it (sign-extended for bipolar converters).
    pub code: i32,
    /// Amplifier range active during the conversion.
    pub range: RangeIndex,
    /// When the conversion completed, in the caller's ticks.
    pub at: Ticks,
}

/// A source of raw photodiode ADC codes.
///
/// One required method, non-blocking in the `nb` style: `Err(nb::Error::WouldBlock)` while a
/// conversion is in progress. Implemented for `&mut T` so a sensor can be lent.
pub trait PhotodiodeAdc {
    /// The error of the underlying bus or peripheral.
    type Error;

    /// Poll for the next raw code.
    ///
    /// # Errors
    /// `WouldBlock` while no new conversion is ready; `Other(e)` on a bus or peripheral error.
    fn poll_code(&mut self) -> nb::Result<i32, Self::Error>;

    /// Poll and, when a code is ready, stamp it with `range` and `now` into a [`Reading`].
    ///
    /// `now` is the caller's tick count at (or as close as possible to) the end of the
    /// conversion.
    ///
    /// # Errors
    /// As [`poll_code`](Self::poll_code).
    fn poll_reading(&mut self, range: RangeIndex, now: Ticks) -> nb::Result<Reading, Self::Error> {
        let code = self.poll_code()?;
        Ok(Reading {
            code,
            range,
            at: now,
        })
    }
}

impl<T: PhotodiodeAdc + ?Sized> PhotodiodeAdc for &mut T {
    type Error = T::Error;
    fn poll_code(&mut self) -> nb::Result<i32, Self::Error> {
        T::poll_code(self)
    }
}

/// Adapter: any closure returning `nb::Result<i32, E>` is a [`PhotodiodeAdc`].
///
/// Use it for an on-chip ADC whose HAL has its own read call:
///
/// ```
/// use photon_ledger::acquire::reading::{FnAdc, PhotodiodeAdc, RangeIndex, Ticks};
/// let mut adc = FnAdc::new(|| -> nb::Result<i32, core::convert::Infallible> { Ok(1234) });
/// let r = adc.poll_reading(RangeIndex(0), Ticks(10)).unwrap();
/// assert_eq!(r.code, 1234);
/// ```
#[derive(Debug, Clone)]
pub struct FnAdc<F>(F);

impl<F> FnAdc<F> {
    /// Wrap a closure.
    pub const fn new(f: F) -> Self {
        Self(f)
    }
    /// Give the closure back.
    pub fn release(self) -> F {
        self.0
    }
}

impl<F, E> PhotodiodeAdc for FnAdc<F>
where
    F: FnMut() -> nb::Result<i32, E>,
{
    type Error = E;
    fn poll_code(&mut self) -> nb::Result<i32, E> {
        (self.0)()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrapping_interval_across_rollover() {
        let before = Ticks(u32::MAX - 9);
        let after = before.wrapping_add(25);
        assert_eq!(after, Ticks(15));
        assert_eq!(after.wrapping_since(before), 25);
    }

    #[test]
    fn tick_rate_rejects_zero() {
        assert!(TickRate::from_hz(0).is_none());
        assert_eq!(
            TickRate::from_hz(1000).map(|r| r.ticks_to_s(500)),
            Some(0.5)
        );
    }

    #[test]
    fn fn_adc_passes_would_block_and_errors() {
        let mut calls = 0;
        let mut adc = FnAdc::new(|| {
            calls += 1;
            match calls {
                1 => Err(nb::Error::WouldBlock),
                2 => Err(nb::Error::Other("bus")),
                _ => Ok(-7),
            }
        });
        assert!(matches!(
            adc.poll_reading(RangeIndex(1), Ticks(0)),
            Err(nb::Error::WouldBlock)
        ));
        assert!(matches!(adc.poll_code(), Err(nb::Error::Other("bus"))));
        let lent = &mut adc;
        let r = lent.poll_reading(RangeIndex(1), Ticks(3));
        assert_eq!(
            r.ok(),
            Some(Reading {
                code: -7,
                range: RangeIndex(1),
                at: Ticks(3)
            })
        );
    }
}
