//! The library's personal exposure monitor and solar monitor with the number of warning
//! levels chosen at run time (the library fixes it at compile time), and unwired output pins.

use std::convert::Infallible;

use photon_ledger::control::exposure::ExposureError;
use photon_ledger::control::exposure::{
    Changes, ExposureConfig, ExposureConfigError, ExposureMonitor, ShiftTotals, SolarMonitor,
};
use photon_ledger::prelude::*;

use super::config::{ExposureSetup, SolarSetup};

/// Bucket capacity of the rolling windows (window buckets + 1): 48 h of 1-minute buckets.
pub const BUCKET_CAPACITY: usize = 2881;

/// An output pin that goes nowhere (a replay has no lamp to switch).
#[derive(Debug, Clone, Copy, Default)]
pub struct Unwired;

impl embedded_hal::digital::ErrorType for Unwired {
    type Error = Infallible;
}

impl embedded_hal::digital::OutputPin for Unwired {
    fn set_low(&mut self) -> Result<(), Infallible> {
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        Ok(())
    }
}

type M<const L: usize> = ExposureMonitor<BUCKET_CAPACITY, L, Unwired>;

/// An exposure monitor with 1 to 4 warning levels.
#[derive(Debug)]
pub enum Monitor {
    /// One level (the alarm).
    L1(Box<M<1>>),
    /// Two levels.
    L2(Box<M<2>>),
    /// Three levels.
    L3(Box<M<3>>),
    /// Four levels.
    L4(Box<M<4>>),
}

fn build<const L: usize>(meter: &Meter, s: &ExposureSetup) -> Result<M<L>, ExposureConfigError> {
    let mut levels = [0.0; L];
    for (slot, v) in levels.iter_mut().zip(&s.levels) {
        *slot = *v;
    }
    let config = ExposureConfig {
        window_ticks: u64::from(s.window_ticks),
        bucket_ticks: u64::from(s.bucket_ticks),
        limit: s.limit,
        levels,
        hysteresis: s.hysteresis,
        max_gap_ticks: s.max_gap_ticks,
    };
    match ExposureMonitor::new(meter.clone(), s.weight, config, [Unwired; L]) {
        Ok(m) => Ok(m),
        Err(ExposureError::Config(e)) => Err(e),
        Err(ExposureError::Pin(never)) => match never {},
    }
}

impl Monitor {
    /// Build the monitor the setup describes.
    ///
    /// # Errors
    /// The library's [`ExposureConfigError`].
    pub fn new(meter: &Meter, s: &ExposureSetup) -> Result<Self, ExposureConfigError> {
        Ok(match s.levels.len() {
            1 => Self::L1(Box::new(build::<1>(meter, s)?)),
            2 => Self::L2(Box::new(build::<2>(meter, s)?)),
            3 => Self::L3(Box::new(build::<3>(meter, s)?)),
            _ => Self::L4(Box::new(build::<4>(meter, s)?)),
        })
    }
    /// Feed a reading.
    pub fn on_reading(&mut self, r: &Reading) -> Changes {
        let result = match self {
            Self::L1(m) => m.on_reading(r),
            Self::L2(m) => m.on_reading(r),
            Self::L3(m) => m.on_reading(r),
            Self::L4(m) => m.on_reading(r),
        };
        match result {
            Ok(c) => c,
            Err(never) => match never {},
        }
    }
    /// The effective exposure in the rolling window now.
    pub fn window_exposure(&self) -> RadiantExposure {
        match self {
            Self::L1(m) => m.window_exposure(),
            Self::L2(m) => m.window_exposure(),
            Self::L3(m) => m.window_exposure(),
            Self::L4(m) => m.window_exposure(),
        }
    }
    /// Totals since the start.
    pub fn totals(&self) -> ShiftTotals {
        match self {
            Self::L1(m) => m.shift_totals(),
            Self::L2(m) => m.shift_totals(),
            Self::L3(m) => m.shift_totals(),
            Self::L4(m) => m.shift_totals(),
        }
    }
    /// Whether the alarm is latched.
    pub fn alarm_latched(&self) -> bool {
        match self {
            Self::L1(m) => m.alarm_latched(),
            Self::L2(m) => m.alarm_latched(),
            Self::L3(m) => m.alarm_latched(),
            Self::L4(m) => m.alarm_latched(),
        }
    }
}

/// Build the solar monitor the setup describes.
///
/// # Errors
/// The library's [`ExposureConfigError`].
pub fn new_solar(
    meter: &Meter,
    s: &SolarSetup,
    max_gap_ticks: u32,
) -> Result<SolarMonitor<BUCKET_CAPACITY>, ExposureConfigError> {
    SolarMonitor::new(
        meter.clone(),
        s.erythema,
        u64::from(s.averaging_ticks),
        u64::from(s.bucket_ticks),
        max_gap_ticks,
    )
}
