//! Plausibility: checks that the sensor chain is alive and telling the truth.
//!
//! A dose controller that quietly integrates garbage keeps the lamp on. These checks look for
//! the failure signatures of a photodiode chain; each has its own reason ([`Implausible`]) and
//! its own configuration, and each is off when its parameter is 0. Firmware runs
//! [`Plausibility::check`] on every reading and, on an error, drives the safe state (for a
//! [`crate::control::session::Session`]: `session.fault(Fault::Implausible(reason))`).
//!
//! | check | signature | typical cause |
//! | --- | --- | --- |
//! | stuck code | the raw code identical for `stuck_samples` readings while the source is on | ADC or DMA not updating, frozen driver |
//! | pinned code | the raw code at the converter's bottom or top code for `pinned_samples` readings while the source is on | open or shorted input, dead amplifier, reversed supply |
//! | negative current | the net code below −k·σ of the dark noise | reversed photodiode, offset drift, wrong dark capture |
//! | rate of change | \|ΔE\|/Δt above a physical limit of the source | loose connector, interference, a wrong range stamp |
//! | dark drift | a new dark capture differs from the previous by more than a bound | thermal drift beyond calibration, leaking shutter |
//! | range flapping | more than `flap_limit` range changes within `flap_window` readings | bad autorange thresholds, oscillating amplifier |
//!
//! All thresholds are integers prepared at configuration time; the per-reading cost is a few
//! compares and one 64-bit multiply.
//!
//! The stuck-code check assumes the converter's noise spans more than one code (σ ≳ 0.5 LSB);
//! with a quieter chain, identical codes are normal and the check must be left off.

use crate::acquire::reading::{RangeIndex, Reading};
use crate::frontend::{FrontEnd, MAX_RANGES};
use crate::irradiance::Meter;

/// Why a reading is not plausible.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Implausible {
    /// The raw code did not change for the configured number of readings.
    StuckCode,
    /// The raw code stayed at the converter's bottom code.
    PinnedLow,
    /// The raw code stayed at the converter's top code.
    PinnedHigh,
    /// Photocurrent below −k·σ of the dark noise.
    NegativeCurrent,
    /// Irradiance changed faster than the configured physical limit.
    RateOfChange,
    /// A dark capture moved by more than the configured bound.
    DarkDrift,
    /// Too many amplifier range changes in the configured window.
    RangeFlapping,
}

impl Implausible {
    /// A stable number for this reason (as stored in journal event details): 1 stuck, 2 pinned
    /// low, 3 pinned high, 4 negative current, 5 rate of change, 6 dark drift, 7 flapping.
    #[must_use]
    pub const fn code(self) -> u32 {
        match self {
            Self::StuckCode => 1,
            Self::PinnedLow => 2,
            Self::PinnedHigh => 3,
            Self::NegativeCurrent => 4,
            Self::RateOfChange => 5,
            Self::DarkDrift => 6,
            Self::RangeFlapping => 7,
        }
    }
}

impl core::fmt::Display for Implausible {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::StuckCode => "ADC code stuck",
            Self::PinnedLow => "ADC code pinned at the bottom of its range",
            Self::PinnedHigh => "ADC code pinned at the top of its range",
            Self::NegativeCurrent => "photocurrent implausibly negative",
            Self::RateOfChange => "irradiance changing faster than physically possible",
            Self::DarkDrift => "dark offset drifted beyond its bound",
            Self::RangeFlapping => "amplifier range changing too often",
        })
    }
}

/// Plausibility configuration. A parameter of 0 turns its check off.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PlausibilityConfig {
    /// Identical raw codes in a row (while the source is on) that count as stuck. 0 = off;
    /// otherwise ≥ 2.
    pub stuck_samples: u16,
    /// Readings in a row at the bottom or top code (while the source is on) that count as
    /// pinned. 0 = off.
    pub pinned_samples: u16,
    /// Dark noise, standard deviation in ADC codes. Valid: finite, ≥ 0.
    pub dark_sigma_codes: f64,
    /// Multiple k of σ below zero that counts as a negative current. 0 = off; valid: finite.
    pub negative_k: f64,
    /// Largest physically possible irradiance change, W/m² per second. 0 = off; valid: finite,
    /// ≥ 0.
    pub max_rate_w_per_m2_s: f64,
    /// After the source is commanded on or off, the rate check rests this long, ticks (the
    /// switching edge and the lamp's own rise or fall are not faults).
    pub transition_ticks: u32,
    /// Largest allowed change between two dark captures, codes. 0 = off.
    pub dark_drift_codes: u32,
    /// Range changes allowed within `flap_window` readings. 0 = off.
    pub flap_limit: u8,
    /// Window of the range-flapping check, readings (≤ 32).
    pub flap_window: u8,
}

/// Why a plausibility configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum PlausibilityConfigError {
    /// `stuck_samples` is 1 (every reading would be "stuck").
    StuckSamples,
    /// σ or k not finite, or σ < 0, or k < 0, or k > 0 with σ = 0.
    NegativeCheck,
    /// The rate limit is not finite or negative, or too small to express in codes per tick.
    Rate,
    /// `flap_window` is 0 or above 32 while the check is on, or `flap_limit` ≥ `flap_window`.
    Flapping,
}

impl core::fmt::Display for PlausibilityConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::StuckSamples => "stuck_samples must be 0 (off) or at least 2",
            Self::NegativeCheck => "dark sigma and k must be finite and >= 0 (sigma > 0 if k > 0)",
            Self::Rate => "rate limit must be finite and >= 0",
            Self::Flapping => "flap window must be 1..=32 and larger than the limit",
        })
    }
}

impl core::error::Error for PlausibilityConfigError {}

/// Rate-limit threshold scale: codes per tick in 2⁻¹⁶ steps.
const RATE_FRAC_BITS: u32 = 16;

/// The plausibility checker. See the [module documentation](self).
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Plausibility {
    config: PlausibilityConfig,
    bottom: i32,
    top: i32,
    negative_limit: i32,
    /// Max |Δnet| per tick per range, fixed point (2⁻¹⁶ codes per tick); 0 = off.
    rate: [u64; MAX_RANGES],
    last_code: Option<i32>,
    same_run: u16,
    pinned_run: u16,
    last: Option<(i32, RangeIndex, u32)>,
    dark: [Option<i32>; MAX_RANGES],
    flaps: u32,
    last_range: Option<RangeIndex>,
    last_on: Option<bool>,
    switched_at: u32,
}

impl Plausibility {
    /// Prepare the checks for `meter`.
    ///
    /// # Errors
    /// [`PlausibilityConfigError`] naming the invalid parameter.
    pub fn new(meter: &Meter, config: PlausibilityConfig) -> Result<Self, PlausibilityConfigError> {
        if config.stuck_samples == 1 {
            return Err(PlausibilityConfigError::StuckSamples);
        }
        let (sigma, k) = (config.dark_sigma_codes, config.negative_k);
        if !(sigma.is_finite() && k.is_finite() && sigma >= 0.0 && k >= 0.0)
            || (k > 0.0 && sigma == 0.0)
        {
            return Err(PlausibilityConfigError::NegativeCheck);
        }
        let negative_limit = if k > 0.0 {
            // Trip strictly below −kσ; as an integer code, round towards −∞ (trips late by
            // less than one code, never early on noise). k, σ ≥ 0, so the saturating cast
            // gives 0 ..= i32::MAX and the negation is exact; `saturating_neg` only spares
            // the (unreachable) overflow path of `-i32::MIN`.
            (libm::ceil(k * sigma) as i32).saturating_neg()
        } else {
            i32::MIN
        };
        let max_rate = config.max_rate_w_per_m2_s;
        if !(max_rate.is_finite() && max_rate >= 0.0) {
            return Err(PlausibilityConfigError::Rate);
        }
        let mut rate = [0u64; MAX_RANGES];
        if max_rate > 0.0 {
            let hz = f64::from(meter.tick_rate().hz());
            for (i, slot) in (0u8..).zip(rate.iter_mut()) {
                let per_code = meter.irradiance(1, RangeIndex(i)).w_per_m2();
                if per_code > 0.0 {
                    let codes_per_tick = max_rate / per_code / hz;
                    let fixed = libm::ceil(codes_per_tick * f64::from(1u32 << RATE_FRAC_BITS));
                    if !(1.0..1.0e18).contains(&fixed) {
                        return Err(PlausibilityConfigError::Rate);
                    }
                    *slot = fixed as u64;
                }
            }
        }
        if config.flap_limit > 0
            && (config.flap_window == 0
                || config.flap_window > 32
                || config.flap_limit >= config.flap_window)
        {
            return Err(PlausibilityConfigError::Flapping);
        }
        let fe = meter.front_end();
        let (bottom, top) = code_rails(fe);
        let mut dark = [None; MAX_RANGES];
        for (i, d) in (0u8..).zip(dark.iter_mut()) {
            *d = fe.range(RangeIndex(i)).map(|r| r.dark_offset);
        }
        Ok(Self {
            config,
            bottom,
            top,
            negative_limit,
            rate,
            last_code: None,
            same_run: 0,
            pinned_run: 0,
            last: None,
            dark,
            flaps: 0,
            last_range: None,
            last_on: None,
            switched_at: 0,
        })
    }

    /// Check one reading with its net code as computed once for every consumer
    /// ([`FrontEnd::sample`]).
    ///
    /// # Errors
    /// As [`check`](Self::check).
    pub fn check_sample(
        &mut self,
        sample: &crate::frontend::Sample,
        source_on: bool,
    ) -> Result<(), Implausible> {
        self.check(&sample.reading, sample.net.ok(), source_on)
    }

    /// Check one reading. `net` is the front end's verdict on it
    /// ([`FrontEnd::net_code`]); `source_on` whether the firmware commands the light on.
    ///
    /// # Errors
    /// The first implausibility found. The checker's state still advances, so a persistent
    /// fault is reported on every reading.
    pub fn check(
        &mut self,
        reading: &Reading,
        net: Option<i32>,
        source_on: bool,
    ) -> Result<(), Implausible> {
        let code = reading.code;
        // Stuck: identical raw codes while the source is on.
        self.same_run = if source_on && self.last_code == Some(code) {
            self.same_run.saturating_add(1)
        } else {
            0
        };
        // Only readings taken while the source is on count towards a stuck run.
        self.last_code = source_on.then_some(code);
        // Pinned at a rail while the source is on.
        let at_rail = code <= self.bottom || code >= self.top;
        self.pinned_run = if source_on && at_rail {
            self.pinned_run.saturating_add(1)
        } else {
            0
        };
        // Range flapping: a bit per reading, 1 where the range changed.
        let changed = self.last_range.is_some_and(|r| r != reading.range);
        self.last_range = Some(reading.range);
        let window_mask = if self.config.flap_window >= 32 {
            u32::MAX
        } else {
            (1u32 << self.config.flap_window) - 1
        };
        self.flaps = ((self.flaps << 1) | u32::from(changed)) & window_mask;

        if self.last_on != Some(source_on) {
            self.last_on = Some(source_on);
            self.switched_at = reading.at.0;
        }
        let resting = reading.at.0.wrapping_sub(self.switched_at) < self.config.transition_ticks;
        let rate_verdict = match net {
            Some(n) => {
                let v = self.check_rate(n, reading);
                if resting {
                    Ok(())
                } else {
                    v
                }
            }
            None => Ok(()),
        };

        let stuck = self.config.stuck_samples;
        if stuck >= 2 && self.same_run >= stuck - 1 {
            return Err(Implausible::StuckCode);
        }
        let pinned = self.config.pinned_samples;
        if pinned > 0 && self.pinned_run >= pinned {
            return Err(if code <= self.bottom {
                Implausible::PinnedLow
            } else {
                Implausible::PinnedHigh
            });
        }
        if let Some(n) = net {
            if n < self.negative_limit {
                return Err(Implausible::NegativeCurrent);
            }
        }
        rate_verdict?;
        if self.config.flap_limit > 0 && self.flaps.count_ones() > u32::from(self.config.flap_limit)
        {
            return Err(Implausible::RangeFlapping);
        }
        Ok(())
    }

    /// Record a new dark capture for range `r` and check its drift from the previous one.
    ///
    /// # Errors
    /// [`Implausible::DarkDrift`] if it moved by more than the bound (the new value is still
    /// recorded, so the next capture is compared with it).
    pub fn dark_capture(&mut self, r: RangeIndex, dark_code: i32) -> Result<(), Implausible> {
        let bound = self.config.dark_drift_codes;
        let Some(slot) = self.dark.get_mut(usize::from(r.0)) else {
            return Ok(());
        };
        let previous = slot.replace(dark_code);
        match previous {
            Some(p) if bound > 0 && p.abs_diff(dark_code) > bound => Err(Implausible::DarkDrift),
            _ => Ok(()),
        }
    }

    /// Forget the history (after a pause or a range of readings the caller discarded).
    pub fn reset(&mut self) {
        self.last_code = None;
        self.same_run = 0;
        self.pinned_run = 0;
        self.last = None;
        self.flaps = 0;
        self.last_range = None;
        self.last_on = None;
    }

    fn check_rate(&mut self, net: i32, reading: &Reading) -> Result<(), Implausible> {
        let now = reading.at.0;
        let previous = self.last.replace((net, reading.range, now));
        let Some((p_net, p_range, p_at)) = previous else {
            return Ok(());
        };
        let limit = self
            .rate
            .get(usize::from(reading.range.0))
            .copied()
            .unwrap_or(0);
        if limit == 0 || p_range != reading.range {
            return Ok(());
        }
        let dt = now.wrapping_sub(p_at);
        if dt == 0 || dt > i32::MAX as u32 {
            return Ok(());
        }
        // |Δnet| · 2¹⁶ > limit · dt, in u128 so neither side can overflow.
        let delta = u128::from(net.abs_diff(p_net)) << RATE_FRAC_BITS;
        if delta > u128::from(limit) * u128::from(dt) {
            Err(Implausible::RateOfChange)
        } else {
            Ok(())
        }
    }
}

fn code_rails(fe: &FrontEnd) -> (i32, i32) {
    (fe.min_code(), fe.max_code())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::acquire::reading::{TickRate, Ticks};
    use crate::frontend::{AdcSpec, AmplifierRange, Coding};
    use crate::irradiance::{Calibration, MeterConfig};
    use crate::quantity::{IrradiancePerCurrent, Transimpedance, Voltage, Wavelength};
    use crate::spectral::band::Band;

    /// 1 mW/m² per code in range 0, 10 mW/m² in range 1; 1 kHz; 12-bit unipolar.
    fn meter() -> Meter {
        let fe = FrontEnd::new(
            AdcSpec {
                bits: 12,
                reference: Voltage::from_v(4.096),
                pga_gain: 1.0,
                coding: Coding::Unipolar,
                saturation_margin: 0,
            },
            &[
                AmplifierRange {
                    gain: Transimpedance::from_kohm(100.0),
                    dark_offset: 20,
                },
                AmplifierRange {
                    gain: Transimpedance::from_kohm(10.0),
                    dark_offset: 5,
                },
            ],
        )
        .unwrap();
        Meter::new(MeterConfig {
            front_end: fe,
            calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e5)),
            band: Band::Line(Wavelength::from_nm(365.0)),
            tick_rate: TickRate::from_hz(1000).unwrap(),
            sample_area: None,
        })
        .unwrap()
    }

    fn r(code: i32, range: u8, at: u32) -> Reading {
        Reading {
            code,
            range: RangeIndex(range),
            at: Ticks(at),
        }
    }

    fn run(
        p: &mut Plausibility,
        m: &Meter,
        code: i32,
        range: u8,
        at: u32,
        on: bool,
    ) -> Result<(), Implausible> {
        let reading = r(code, range, at);
        let net = m.front_end().net_code(&reading).ok();
        p.check(&reading, net, on)
    }

    #[test]
    fn stuck_code_only_while_the_source_is_on() {
        let m = meter();
        let cfg = PlausibilityConfig {
            stuck_samples: 4,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        for t in 0..10 {
            run(&mut p, &m, 500, 0, t, false).unwrap();
        }
        for t in 10..13 {
            run(&mut p, &m, 500, 0, t, true).unwrap();
        }
        assert_eq!(
            run(&mut p, &m, 500, 0, 13, true),
            Err(Implausible::StuckCode)
        );
        run(&mut p, &m, 501, 0, 14, true).unwrap();
    }

    #[test]
    fn pinned_at_either_rail() {
        let m = meter();
        let cfg = PlausibilityConfig {
            pinned_samples: 3,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        run(&mut p, &m, 0, 0, 0, true).unwrap();
        run(&mut p, &m, 0, 0, 1, true).unwrap();
        assert_eq!(run(&mut p, &m, 0, 0, 2, true), Err(Implausible::PinnedLow));
        p.reset();
        run(&mut p, &m, 4095, 0, 3, true).unwrap();
        run(&mut p, &m, 4095, 0, 4, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 4095, 0, 5, true),
            Err(Implausible::PinnedHigh)
        );
    }

    #[test]
    fn negative_current_below_k_sigma() {
        let m = meter();
        let cfg = PlausibilityConfig {
            dark_sigma_codes: 1.5,
            negative_k: 6.0,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        // Dark offset 20: −9 codes (= −kσ) is still allowed, −10 is not.
        run(&mut p, &m, 11, 0, 0, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 10, 0, 1, true),
            Err(Implausible::NegativeCurrent)
        );
    }

    #[test]
    fn rate_of_change_per_range() {
        let m = meter();
        // 100 W/m² per s = 100 codes per ms in range 0, 10 codes per ms in range 1.
        let cfg = PlausibilityConfig {
            max_rate_w_per_m2_s: 100.0,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        run(&mut p, &m, 1000, 0, 0, true).unwrap();
        run(&mut p, &m, 1200, 0, 2, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 1401, 0, 4, true),
            Err(Implausible::RateOfChange)
        );
        // A range change is not compared across ranges.
        run(&mut p, &m, 100, 1, 5, true).unwrap();
        run(&mut p, &m, 110, 1, 6, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 121, 1, 7, true),
            Err(Implausible::RateOfChange)
        );
    }

    #[test]
    fn rate_check_rests_after_a_switching_edge() {
        let m = meter();
        let cfg = PlausibilityConfig {
            max_rate_w_per_m2_s: 100.0,
            transition_ticks: 5,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        run(&mut p, &m, 20, 0, 0, false).unwrap();
        run(&mut p, &m, 3000, 0, 1, true).unwrap();
        run(&mut p, &m, 2500, 0, 4, true).unwrap();
        run(&mut p, &m, 2600, 0, 5, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 2000, 0, 6, true),
            Err(Implausible::RateOfChange)
        );
    }

    #[test]
    fn dark_drift_between_captures() {
        let m = meter();
        let cfg = PlausibilityConfig {
            dark_drift_codes: 5,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        p.dark_capture(RangeIndex(0), 25).unwrap();
        assert_eq!(
            p.dark_capture(RangeIndex(0), 31),
            Err(Implausible::DarkDrift)
        );
        p.dark_capture(RangeIndex(0), 29).unwrap();
        p.dark_capture(RangeIndex(3), 1000).unwrap();
    }

    #[test]
    fn range_flapping_in_a_window() {
        let m = meter();
        let cfg = PlausibilityConfig {
            flap_limit: 2,
            flap_window: 8,
            ..PlausibilityConfig::default()
        };
        let mut p = Plausibility::new(&m, cfg).unwrap();
        let ranges = [0u8, 0, 1, 1, 0, 0, 0, 0, 0, 0, 0, 1];
        let mut verdicts = [Ok(()); 12];
        for (t, (&rg, v)) in ranges.iter().zip(verdicts.iter_mut()).enumerate() {
            *v = run(&mut p, &m, 300, rg, t as u32, true);
        }
        assert!(verdicts.iter().all(Result::is_ok));
        // Changes at 11 and 12 (and 4 has left the 8-reading window): still two.
        run(&mut p, &m, 300, 0, 12, true).unwrap();
        assert_eq!(
            run(&mut p, &m, 300, 1, 13, true),
            Err(Implausible::RangeFlapping)
        );
    }

    #[test]
    fn bad_configuration_is_named() {
        let m = meter();
        let e = |c| Plausibility::new(&m, c).unwrap_err();
        let d = PlausibilityConfig::default();
        assert_eq!(
            e(PlausibilityConfig {
                stuck_samples: 1,
                ..d
            }),
            PlausibilityConfigError::StuckSamples
        );
        assert_eq!(
            e(PlausibilityConfig {
                negative_k: 3.0,
                ..d
            }),
            PlausibilityConfigError::NegativeCheck
        );
        assert_eq!(
            e(PlausibilityConfig {
                dark_sigma_codes: f64::NAN,
                ..d
            }),
            PlausibilityConfigError::NegativeCheck
        );
        assert_eq!(
            e(PlausibilityConfig {
                max_rate_w_per_m2_s: -1.0,
                ..d
            }),
            PlausibilityConfigError::Rate
        );
        assert_eq!(
            e(PlausibilityConfig {
                flap_limit: 3,
                flap_window: 3,
                ..d
            }),
            PlausibilityConfigError::Flapping
        );
        assert_eq!(
            e(PlausibilityConfig {
                flap_limit: 3,
                flap_window: 40,
                ..d
            }),
            PlausibilityConfigError::Flapping
        );
        assert!(Plausibility::new(&m, d).is_ok());
    }
}
