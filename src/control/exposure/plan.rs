//! Duty-cycled sampling for a battery-powered logger.

use crate::quantity::Irradiance;

/// Duty-cycled sampling: a slow period while the light is steady, a fast one when it changes.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SamplingPlan {
    /// Period while steady, ticks.
    pub slow_ticks: u32,
    /// Period while changing, ticks (≤ slow).
    pub fast_ticks: u32,
    /// Relative change between two samples that counts as "changing" (e.g. 0.2).
    pub change: f64,
    /// Irradiance below which the light counts as off (no fast sampling for noise), W/m².
    pub floor: Irradiance,
}

impl SamplingPlan {
    /// Ticks until the next sample, given the previous and the latest irradiance.
    #[must_use]
    pub fn next_delay(&self, previous: Irradiance, latest: Irradiance) -> u32 {
        let (a, b) = (previous.w_per_m2(), latest.w_per_m2());
        let big = libm::fmax(a, b);
        if big <= self.floor.w_per_m2() {
            return self.slow_ticks;
        }
        if libm::fabs(b - a) > self.change * big {
            self.fast_ticks.min(self.slow_ticks)
        } else {
            self.slow_ticks
        }
    }
}
