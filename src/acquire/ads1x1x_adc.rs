//! Adapter: the ADS1x1x I²C converters (ADS1013/4/5, ADS1113/4/5) as a [`PhotodiodeAdc`],
//! through the maintained [`ads1x1x`] driver crate (feature `ads1x1x`).
//!
//! The driver is used in one-shot mode: each [`poll_code`](PhotodiodeAdc::poll_code) either
//! starts a conversion (returning `WouldBlock`), reports one in progress (`WouldBlock`), or
//! returns the finished code. Codes are two's complement: describe the converter to the
//! [front end](crate::frontend) as [`Coding::Bipolar`](crate::frontend::Coding::Bipolar) with
//! 16 bits (ADS111x) or 12 bits (ADS101x) and the selected full-scale range as reference.
//!
//! ```no_run
//! # fn demo<I: embedded_hal::i2c::I2c>(i2c: I) {
//! use ads1x1x::{channel, Ads1x1x, TargetAddr};
//! use photon_ledger::acquire::ads1x1x_adc::Ads1x1xAdc;
//! let dev = Ads1x1x::new_ads1115(i2c, TargetAddr::default());
//! let adc = Ads1x1xAdc::new(dev, || channel::DifferentialA0A1);
//! # let _ = adc; }
//! ```

use ads1x1x::{mode, Ads1x1x, ChannelId, ConvertMeasurement};

use crate::acquire::reading::PhotodiodeAdc;

/// An ADS1x1x in one-shot mode reading one channel. (The driver's types are not `Debug`.)
#[allow(missing_debug_implementations)]
pub struct Ads1x1xAdc<I2C, IC, CONV, CH> {
    device: Ads1x1x<I2C, IC, CONV, mode::OneShot>,
    channel: fn() -> CH,
}

impl<I2C, IC, CONV, CH> Ads1x1xAdc<I2C, IC, CONV, CH> {
    /// Read a channel of a configured one-shot device (set its full-scale range and data rate
    /// through the driver first). The driver's channel markers are neither `Copy` nor
    /// `Clone`, so the channel is given as a function that makes one, e.g.
    /// `|| channel::SingleA0`.
    pub const fn new(device: Ads1x1x<I2C, IC, CONV, mode::OneShot>, channel: fn() -> CH) -> Self {
        Self { device, channel }
    }

    /// Give the driver back (for example to change the full-scale range).
    pub fn release(self) -> Ads1x1x<I2C, IC, CONV, mode::OneShot> {
        self.device
    }
}

impl<I2C, IC, CONV, CH, E> PhotodiodeAdc for Ads1x1xAdc<I2C, IC, CONV, CH>
where
    I2C: embedded_hal::i2c::I2c<Error = E>,
    CONV: ConvertMeasurement,
    CH: ChannelId<Ads1x1x<I2C, IC, CONV, mode::OneShot>>,
{
    type Error = ads1x1x::Error<E>;

    fn poll_code(&mut self) -> nb::Result<i32, Self::Error> {
        self.device.read((self.channel)()).map(i32::from)
    }
}
