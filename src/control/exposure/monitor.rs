//! The personal exposure monitor: window against the limit, warnings, latched alarm.

use embedded_hal::digital::OutputPin;

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::dose::SampleError;
use crate::frontend::{CodeFault, Sample};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

use super::weighted::CommonScale;
use super::{
    Accrued, ExposureConfigError, Gap, RollingWindow, WeightFactor, WeightedDose, EXACT_BITS,
    MIN_PRECISION_BITS,
};

/// Why [`ExposureMonitor::new`] failed. `E` is the warning pins' error type.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExposureError<E> {
    /// The configuration was rejected; no pin was written.
    Config(ExposureConfigError),
    /// A warning output could not be set inactive.
    Pin(E),
}

impl<E: core::fmt::Debug> core::fmt::Display for ExposureError<E> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "exposure configuration: {e}"),
            Self::Pin(e) => write!(f, "warning output could not be written: {e:?}"),
        }
    }
}

impl<E: core::fmt::Debug> core::error::Error for ExposureError<E> {}

/// Exposure monitor configuration.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureConfig<const L: usize> {
    /// Rolling window, ticks (8 h for ICNIRP). Valid: a whole number of buckets.
    pub window_ticks: u64,
    /// Bucket length, ticks (for example 1 min). Valid: > 0.
    pub bucket_ticks: u64,
    /// Effective radiant exposure limit over the window (30 J/m² for ICNIRP 2004). Valid: > 0.
    pub limit: RadiantExposure,
    /// Warning levels as fractions of the limit, strictly increasing (for example
    /// `[0.5, 0.8, 1.0]`). The last level is the alarm: latched until acknowledged.
    pub levels: [f64; L],
    /// A level clears when the fraction falls below level − hysteresis. Valid: ≥ 0 and below
    /// the lowest level.
    pub hysteresis: f64,
    /// Longest expected interval between samples, ticks; longer ones are gaps charged with
    /// max(irradiance before, after) × gap. Valid: 1 ..= 2³¹ − 1.
    pub max_gap_ticks: u32,
}

/// What changed at a reading.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Changes {
    /// Levels that became active (bit i = level i).
    pub raised: u8,
    /// Levels that cleared.
    pub cleared: u8,
    /// The alarm latched at this reading.
    pub alarm_latched: bool,
    /// A gap was charged.
    pub gap: Option<Gap>,
    /// The reading was saturated (top rail) and counted at the range's full scale.
    pub saturated: bool,
    /// The reading was not used: why.
    pub ignored: Option<ReadingIssue>,
}

/// Why a reading was not used by the exposure monitor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ReadingIssue {
    /// The code cannot be used (bottom rail, out of range, unknown range). The interval up to
    /// the next good reading is bridged or, if longer than the maximum gap, charged as a gap.
    Code(CodeFault),
    /// Repeated timestamp.
    Repeated,
    /// Time went backwards; the reading is not integrated and the run restarts from it
    /// (nothing already counted is lost, later readings are not blocked).
    Backwards,
}

/// Totals of a shift, returned by [`ExposureMonitor::end_shift`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ShiftTotals {
    /// Effective radiant exposure of the shift, gap charges included.
    pub exposure: RadiantExposure,
    /// Of which charged for gaps (conservative bounds).
    pub gap_bounds: RadiantExposure,
    /// Number of gaps.
    pub gaps: u32,
    /// Whether the alarm was latched when the shift ended (it stays latched).
    pub alarm_latched: bool,
    /// Resumes from a checkpoint after a reset in this shift
    /// ([`ExposureMonitor::resume`]).
    pub resumes: u32,
    /// Known time the device was off (unmonitored) before those resumes, ticks.
    pub off_ticks: u64,
    /// Resumes whose off time was unknown: the unmonitored time is then not known either.
    pub off_unknown: u32,
}

/// The personal exposure monitor. See the [module documentation](super).
///
/// `N` is the bucket capacity (window buckets + 1), `L` the number of warning levels (one
/// output pin each, `L ≤ 8`).
#[derive(Debug)]
pub struct ExposureMonitor<const N: usize, const L: usize, P> {
    meter: Meter,
    dose: WeightedDose,
    window: RollingWindow<N>,
    shift_start: u128,
    shift_gap_start: u128,
    gaps: u32,
    raise_units: [u128; L],
    clear_units: [u128; L],
    limit_units: u128,
    active: u8,
    latched: bool,
    limit: RadiantExposure,
    resumes: u32,
    off_ticks: u64,
    off_unknown: u32,
    pins: [P; L],
}

impl<const N: usize, const L: usize, P: OutputPin> ExposureMonitor<N, L, P> {
    const LEVELS_OK: () = assert!(L >= 1 && L <= 8, "1 to 8 warning levels");

    /// Validate the configuration and set every output inactive (low).
    ///
    /// # Errors
    /// [`ExposureError::Config`] for a configuration error (no pin written),
    /// [`ExposureError::Pin`] if a pin cannot be set inactive.
    pub fn new(
        meter: Meter,
        weight: WeightFactor,
        config: ExposureConfig<L>,
        pins: [P; L],
    ) -> Result<Self, ExposureError<P::Error>> {
        let () = Self::LEVELS_OK;
        let limit = config.limit.j_per_m2();
        if !(limit.is_finite() && limit > 0.0) {
            return Err(ExposureError::Config(ExposureConfigError::Limit));
        }
        let mut previous = 0.0;
        for &l in &config.levels {
            if !(l.is_finite() && l > previous) {
                return Err(ExposureError::Config(ExposureConfigError::WarningLevels));
            }
            previous = l;
        }
        let lowest = config.levels.first().copied().unwrap_or(0.0);
        let h = config.hysteresis;
        if !(h.is_finite() && h >= 0.0 && h < lowest) {
            return Err(ExposureError::Config(ExposureConfigError::Hysteresis));
        }
        let window = RollingWindow::new(config.window_ticks, config.bucket_ticks)
            .map_err(ExposureError::Config)?;
        // The most precision (up to exact) at which both the limit and a full-scale window fit
        // the common unit; never below MIN_PRECISION_BITS.
        let fe = meter.front_end();
        let max_code = fe
            .max_code()
            .unsigned_abs()
            .max(fe.min_code().unsigned_abs());
        let span = config.window_ticks.saturating_add(config.bucket_ticks);
        let mut found = Err(ExposureConfigError::WindowRange);
        for bits in (MIN_PRECISION_BITS..=EXACT_BITS).rev() {
            let scale =
                CommonScale::with_precision(&meter, weight, bits).map_err(ExposureError::Config)?;
            if scale.bits < bits {
                continue;
            }
            if !scale.holds(max_code, span) {
                found = Err(ExposureConfigError::WindowRange);
            } else if let Some(limit_units) = scale.level_units(config.limit) {
                found = Ok((scale, limit_units));
                break;
            } else {
                found = Err(ExposureConfigError::Limit);
            }
        }
        let (scale, limit_units) = found.map_err(ExposureError::Config)?;
        let dose = WeightedDose::with_scale(&meter, weight, config.max_gap_ticks, scale)
            .map_err(ExposureError::Config)?;
        let mut raise_units = [0u128; L];
        let mut clear_units = [0u128; L];
        for ((r, c), &l) in raise_units
            .iter_mut()
            .zip(clear_units.iter_mut())
            .zip(&config.levels)
        {
            // Warnings trip early: the level and its clear point are rounded down.
            *r = dose
                .level_units(RadiantExposure::from_j_per_m2(l * limit))
                .ok_or(ExposureError::Config(ExposureConfigError::Limit))?;
            *c = dose
                .level_units(RadiantExposure::from_j_per_m2((l - h) * limit))
                .ok_or(ExposureError::Config(ExposureConfigError::Hysteresis))?;
        }
        let mut m = Self {
            meter,
            dose,
            window,
            shift_start: 0,
            shift_gap_start: 0,
            gaps: 0,
            raise_units,
            clear_units,
            limit_units,
            active: 0,
            latched: false,
            limit: config.limit,
            resumes: 0,
            off_ticks: 0,
            off_unknown: 0,
            pins,
        };
        for p in &mut m.pins {
            p.set_low().map_err(ExposureError::Pin)?;
        }
        Ok(m)
    }

    /// Feed one reading.
    ///
    /// # Errors
    /// The pin error if a warning output cannot be written (the exposure is still counted).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Changes, P::Error> {
        let sample = self.meter.front_end().sample(reading);
        self.on_sample(&sample)
    }

    /// Feed one reading whose net code was already computed with this monitor's meter
    /// ([`FrontEnd::sample`](crate::frontend::FrontEnd::sample)); otherwise as
    /// [`on_reading`](Self::on_reading).
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading).
    pub fn on_sample(&mut self, sample: &Sample) -> Result<Changes, P::Error> {
        let reading = &sample.reading;
        let mut changes = Changes::default();
        let net = match net_or_full_scale(&self.meter, sample) {
            Ok((n, saturated)) => {
                changes.saturated = saturated;
                n
            }
            Err(f) => {
                changes.ignored = Some(ReadingIssue::Code(f));
                return Ok(changes);
            }
        };
        let now = self.dose.advance_clock(reading.at);
        self.window.roll_to(now, self.dose.total_units());
        match self.dose.accept(net, reading.range, reading.at) {
            Ok(Accrued::Started | Accrued::Interval(_)) => {}
            Ok(Accrued::Gap(gap)) => {
                self.gaps = self.gaps.saturating_add(1);
                changes.gap = Some(gap);
            }
            Err(SampleError::Repeated) => {
                changes.ignored = Some(ReadingIssue::Repeated);
                return Ok(changes);
            }
            Err(SampleError::Backwards { .. }) => {
                changes.ignored = Some(ReadingIssue::Backwards);
                return Ok(changes);
            }
            Err(SampleError::UnknownRange | SampleError::Gap { .. }) => {
                changes.ignored = Some(ReadingIssue::Code(CodeFault::UnknownRange));
                return Ok(changes);
            }
        }
        self.update_levels(&mut changes)?;
        Ok(changes)
    }

    /// Move the window to `now` without a reading (for example on a timer while asleep), so
    /// expired dose leaves and levels can clear.
    ///
    /// # Errors
    /// The pin error if an output cannot be written.
    pub fn tick(&mut self, now: Ticks) -> Result<Changes, P::Error> {
        let mut changes = Changes::default();
        // A backwards or repeated tick leaves the 64-bit clock (and so the window) where it is.
        let t = self.dose.advance_clock(now);
        self.window.roll_to(t, self.dose.total_units());
        self.update_levels(&mut changes)?;
        Ok(changes)
    }

    /// Take a new dark offset for range `r` (between exposures, after a dark capture): every
    /// later reading is corrected with it. Returns `false` and changes nothing if the range
    /// does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        self.meter.front_end_mut().set_dark_offset(r, dark_offset)
    }

    /// Acknowledge the alarm. It unlatches, and its output clears once the window is below
    /// the alarm level − hysteresis (immediately if it already is). Returns whether the alarm
    /// output is still active.
    ///
    /// # Errors
    /// The pin error if an output cannot be written.
    pub fn acknowledge(&mut self) -> Result<bool, P::Error> {
        self.latched = false;
        let mut changes = Changes::default();
        self.update_levels(&mut changes)?;
        Ok(self.active & alarm_bit::<L>() != 0)
    }

    /// End the shift: return its totals and start new ones. The rolling window and a latched
    /// alarm are **not** reset — the body does not forget at a shift change.
    pub fn end_shift(&mut self) -> ShiftTotals {
        let t = self.shift_totals();
        self.shift_start = self.dose.total_units();
        self.shift_gap_start = self.dose.gap_units();
        self.gaps = 0;
        self.resumes = 0;
        self.off_ticks = 0;
        self.off_unknown = 0;
        t
    }

    /// Totals of the current shift.
    #[must_use]
    pub fn shift_totals(&self) -> ShiftTotals {
        ShiftTotals {
            exposure: self
                .dose
                .to_exposure(self.dose.total_units().wrapping_sub(self.shift_start)),
            gap_bounds: self
                .dose
                .to_exposure(self.dose.gap_units().wrapping_sub(self.shift_gap_start)),
            gaps: self.gaps,
            alarm_latched: self.latched,
            resumes: self.resumes,
            off_ticks: self.off_ticks,
            off_unknown: self.off_unknown,
        }
    }

    /// Effective exposure in the rolling window, gap charges included.
    #[must_use]
    pub fn window_exposure(&self) -> RadiantExposure {
        self.dose.to_exposure(self.window_units())
    }

    /// The window total in the common integer unit (see [`WeightedDose`]).
    #[must_use]
    pub fn window_units(&self) -> u128 {
        self.window.total(self.dose.total_units())
    }

    /// The limit in the common integer unit, rounded down.
    #[must_use]
    pub const fn limit_units(&self) -> u128 {
        self.limit_units
    }

    /// Fraction of the limit used in the window.
    #[must_use]
    pub fn fraction_used(&self) -> f64 {
        self.window_exposure().j_per_m2() / self.limit.j_per_m2()
    }

    /// Effective irradiance of the last reading.
    #[must_use]
    pub fn effective_irradiance(&self) -> Irradiance {
        self.dose.effective_irradiance(&self.meter)
    }

    /// Remaining allowed time at the current effective irradiance, t = remaining / E_eff;
    /// `None` when E_eff is zero (unlimited at the present level), zero when the limit is used.
    #[must_use]
    pub fn time_left(&self) -> Option<Seconds> {
        let e = self.effective_irradiance().w_per_m2();
        let remaining = (self.limit.j_per_m2() - self.window_exposure().j_per_m2()).max(0.0);
        (e > 0.0).then(|| Seconds::from_s(remaining / e))
    }

    /// Active levels (bit i = level i).
    #[must_use]
    pub const fn active_levels(&self) -> u8 {
        self.active
    }

    /// Whether the alarm is latched.
    #[must_use]
    pub const fn alarm_latched(&self) -> bool {
        self.latched
    }

    /// The meter.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// The weighted dose underneath (its integral, clock and common unit).
    #[must_use]
    pub const fn dose(&self) -> &WeightedDose {
        &self.dose
    }

    /// Give the pins back.
    pub fn release(self) -> [P; L] {
        self.pins
    }

    pub(super) const fn window(&self) -> &RollingWindow<N> {
        &self.window
    }

    pub(super) fn window_mut(&mut self) -> &mut RollingWindow<N> {
        &mut self.window
    }

    /// The shift's total and gap charge so far, common units.
    pub(super) fn shift_units(&self) -> (u128, u128) {
        (
            self.dose.total_units().wrapping_sub(self.shift_start),
            self.dose.gap_units().wrapping_sub(self.shift_gap_start),
        )
    }

    /// Add a restored shift (common units) and count the resume and its off time (`None`:
    /// unknown).
    pub(super) fn add_restored_shift(
        &mut self,
        total: u128,
        gap: u128,
        gaps: u32,
        off_ticks: Option<u64>,
    ) {
        self.shift_start = self.shift_start.wrapping_sub(total);
        self.shift_gap_start = self.shift_gap_start.wrapping_sub(gap);
        self.gaps = self.gaps.saturating_add(gaps);
        self.resumes = self.resumes.saturating_add(1);
        match off_ticks {
            Some(t) => self.off_ticks = self.off_ticks.saturating_add(t),
            None => self.off_unknown = self.off_unknown.saturating_add(1),
        }
    }

    /// Raise the restored warning levels and latch, then settle every level on the window.
    pub(super) fn raise_restored(
        &mut self,
        active: u8,
        latched: bool,
    ) -> Result<Changes, P::Error> {
        let mut changes = Changes::default();
        let alarm = alarm_bit::<L>();
        if latched && alarm != 0 {
            self.latched = true;
        }
        let mut result = Ok(());
        for i in 0..L {
            let bit = 1u8 << i;
            let want = active & bit != 0 || (bit == alarm && self.latched);
            if want && self.active & bit == 0 {
                self.active |= bit;
                changes.raised |= bit;
                if bit == alarm {
                    changes.alarm_latched = self.latched;
                }
                if let Some(p) = self.pins.get_mut(i) {
                    // Keep raising the others if one pin fails; report the first error.
                    if let Err(e) = p.set_high() {
                        if result.is_ok() {
                            result = Err(e);
                        }
                    }
                }
            }
        }
        result?;
        self.update_levels(&mut changes)?;
        Ok(changes)
    }

    fn update_levels(&mut self, changes: &mut Changes) -> Result<(), P::Error> {
        let total = self.window_units();
        let alarm = alarm_bit::<L>();
        for i in 0..L {
            let bit = 1u8 << i;
            let (Some(&raise), Some(&clear)) = (self.raise_units.get(i), self.clear_units.get(i))
            else {
                continue;
            };
            let was = self.active & bit != 0;
            let now = if was {
                total >= clear || (bit == alarm && self.latched)
            } else {
                total >= raise
            };
            if now && !was {
                self.active |= bit;
                changes.raised |= bit;
                if bit == alarm {
                    self.latched = true;
                    changes.alarm_latched = true;
                }
                if let Some(p) = self.pins.get_mut(i) {
                    p.set_high()?;
                }
            } else if !now && was {
                self.active &= !bit;
                changes.cleared |= bit;
                if let Some(p) = self.pins.get_mut(i) {
                    p.set_low()?;
                }
            }
        }
        Ok(())
    }
}

/// The net code of a reading, or the range's full-scale net code for a top-rail (saturated)
/// reading — the least the light can be — with `true`.
pub(super) fn net_or_full_scale(meter: &Meter, sample: &Sample) -> Result<(i32, bool), CodeFault> {
    let fe = meter.front_end();
    let reading = &sample.reading;
    match sample.net {
        Ok(n) => Ok((n, false)),
        Err(CodeFault::SaturatedHigh) => {
            let dark = fe.range(reading.range).map_or(0, |r| r.dark_offset);
            // Both lie within the code range (±2²⁴): the difference never wraps.
            Ok((fe.high_limit().wrapping_sub(dark), true))
        }
        Err(f) => Err(f),
    }
}

const fn alarm_bit<const L: usize>() -> u8 {
    if L == 0 || L > 8 {
        0
    } else {
        1 << (L - 1)
    }
}
