//! Acquire: the raw reading and the amplifier range it was taken in.
//!
//! The first stage of the pipeline. [`reading`] defines the one-method ADC trait
//! ([`PhotodiodeAdc`](reading::PhotodiodeAdc)) and the [`Reading`](reading::Reading) the
//! caller stamps with its own tick count; `ads1x1x_adc` (feature `ads1x1x`) adapts the
//! maintained ADS1x1x I²C driver. Nothing here converts a code: that is the
//! [`frontend`](crate::frontend)'s job, and so is choosing the next amplifier range
//! ([`crate::frontend::autorange`]), which needs the converted sample.

pub mod reading;

#[cfg(feature = "ads1x1x")]
pub mod ads1x1x_adc;
