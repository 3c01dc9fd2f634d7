//! Solar UV: the UV index and the day's erythemal dose.

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::dose::SampleError;
use crate::irradiance::Meter;
use crate::spectral::weighting::{UvIndex, UvIndexCategory, SED_J_PER_M2};

use super::monitor::net_or_full_scale;
use super::{Accrued, ExposureConfigError, Gap, RollingWindow, WeightFactor, WeightedDose};

/// Solar UV: live UV index (averaged) and the day's erythemal dose in SED.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SolarMonitor<const N: usize> {
    meter: Meter,
    dose: WeightedDose,
    average: RollingWindow<N>,
    averaging_s: f64,
    day_start: u128,
}

impl<const N: usize> SolarMonitor<N> {
    /// `erythema` is the erythemal weight factor of the band (CIE erythema action spectrum);
    /// the UV index is averaged over `averaging_ticks` (WHO: 5–10 min for real-time display)
    /// in buckets of `bucket_ticks`.
    ///
    /// # Errors
    /// [`ExposureConfigError`] for an invalid period, gap or scale.
    pub fn new(
        meter: Meter,
        erythema: WeightFactor,
        averaging_ticks: u64,
        bucket_ticks: u64,
        max_gap_ticks: u32,
    ) -> Result<Self, ExposureConfigError> {
        let average = RollingWindow::new(averaging_ticks, bucket_ticks)
            .map_err(|_| ExposureConfigError::AveragingPeriod)?;
        let dose = WeightedDose::new(&meter, erythema, max_gap_ticks)?;
        let averaging_s = averaging_ticks as f64 / f64::from(meter.tick_rate().hz());
        Ok(Self {
            meter,
            dose,
            average,
            averaging_s,
            day_start: 0,
        })
    }

    /// Feed one reading: as [`accept`](Self::accept) after the front end's net code, with a
    /// top-rail (saturated) reading counted at the range's full scale.
    ///
    /// # Errors
    /// [`SampleError::UnknownRange`] for a code that cannot be used; otherwise as
    /// [`accept`](Self::accept).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Option<Gap>, SampleError> {
        let sample = self.meter.front_end().sample(reading);
        let (net, _) =
            net_or_full_scale(&self.meter, &sample).map_err(|_| SampleError::UnknownRange)?;
        self.accept(net, reading.range, reading.at)
    }

    /// Feed one dark-corrected net code (from [`crate::frontend::FrontEnd::net_code`]).
    ///
    /// # Errors
    /// As [`WeightedDose::accept`]; gaps are charged with their bound and returned.
    pub fn accept(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<Option<Gap>, SampleError> {
        let now = self.dose.advance_clock(at);
        self.average.roll_to(now, self.dose.total_units());
        Ok(match self.dose.accept(net, range, at)? {
            Accrued::Started | Accrued::Interval(_) => None,
            Accrued::Gap(g) => Some(g),
        })
    }

    /// The meter.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// UV index averaged over the configured period: the erythemal exposure of the last
    /// complete buckets spanning the period ÷ its length, × 40 m²/W. Before a full period has
    /// passed this under-reads.
    #[must_use]
    pub fn uv_index(&self) -> UvIndex {
        let full_s = self.averaging_s;
        let mean = if full_s > 0.0 {
            self.dose
                .to_exposure(self.average.complete_total())
                .j_per_m2()
                / full_s
        } else {
            0.0
        };
        UvIndex::from_erythemal_w_per_m2(mean)
    }

    /// The averaged UV index rounded to an integer as WHO reports it (half up), and its
    /// category.
    #[must_use]
    pub fn uv_index_reported(&self) -> (u32, UvIndexCategory) {
        let u = self.uv_index();
        (u.rounded(), u.category())
    }

    /// Live UV index from the last reading alone (no averaging).
    #[must_use]
    pub fn uv_index_now(&self) -> UvIndex {
        UvIndex::from_erythemal_w_per_m2(self.dose.effective_irradiance(&self.meter).w_per_m2())
    }

    /// The day's erythemal exposure (gap charges included), in SED (100 J/m²).
    #[must_use]
    pub fn day_sed(&self) -> f64 {
        let units = self.dose.total_units().wrapping_sub(self.day_start);
        self.dose.to_exposure(units).j_per_m2() / SED_J_PER_M2
    }

    /// Start a new day.
    pub fn reset_day(&mut self) {
        self.day_start = self.dose.total_units();
    }
}
