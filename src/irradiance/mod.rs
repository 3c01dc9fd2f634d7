//! Calibration: photocurrent → irradiance, and the [`Meter`] that joins every configuration
//! stage into the constants the dose engine needs.
//!
//! A detector is calibrated either by its responsivity at the band and its active area
//! (E = I / (R · A)) or by a certificate factor in (W/m²)/A (E = k · I). Either way the result
//! is one number, fixed at configuration time.
//!
//! The [`Meter`] holds the validated front end, calibration, band and tick rate, and turns
//! them into one factor per amplifier range: joules per square metre per *integer unit* of
//! the dose engine (one net ADC code held for one tick, counted twice by the trapezoid rule).
//! Every dose quantity is that factor times the same integer sum (one integral, many units).

pub mod calibration;

use crate::acquire::reading::{RangeIndex, TickRate};
use crate::frontend::{FrontEnd, MAX_RANGES};
use crate::quantity::{
    Area, Current, Irradiance, IrradiancePerCurrent, PhotonAmount, PhotonExposure,
    PhotonIrradiance, RadiantExposure, Responsivity,
};
use crate::spectral::band::{Band, BandError, BandFactors};
use crate::spectral::spectrum::SpectralFactors;

/// How photocurrent becomes irradiance.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Calibration {
    /// From the detector's responsivity at the band and its active area: E = I / (R · A).
    Responsivity {
        /// Responsivity at the band, A/W. Valid: finite, > 0.
        responsivity: Responsivity,
        /// Active area of the photodiode (behind any aperture). Valid: finite, > 0.
        active_area: Area,
    },
    /// A certificate factor, (W/m²)/A: E = k · I. Valid: finite, > 0.
    Certificate(IrradiancePerCurrent),
}

/// Why a calibration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CalibrationError {
    /// Responsivity not finite or ≤ 0.
    Responsivity,
    /// Active area not finite or ≤ 0.
    ActiveArea,
    /// Certificate factor not finite or ≤ 0.
    Factor,
}

impl core::fmt::Display for CalibrationError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Responsivity => "responsivity must be finite and > 0",
            Self::ActiveArea => "detector active area must be finite and > 0",
            Self::Factor => "calibration factor must be finite and > 0",
        })
    }
}

impl core::error::Error for CalibrationError {}

fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

impl Calibration {
    /// The calibration from a spectral computation: the detector's effective responsivity
    /// over the source's band ([`SpectralFactors::effective_responsivity`]) and the active
    /// area (finite, > 0; checked when the [`Meter`] is built).
    #[must_use]
    pub const fn from_spectral(factors: &SpectralFactors, active_area: Area) -> Self {
        Self::Responsivity {
            responsivity: factors.effective_responsivity(),
            active_area,
        }
    }

    /// The calibration as one factor, (W/m²)/A.
    ///
    /// # Errors
    /// [`CalibrationError`] for a value that is not finite and positive.
    pub fn factor(&self) -> Result<IrradiancePerCurrent, CalibrationError> {
        match *self {
            Self::Responsivity {
                responsivity,
                active_area,
            } => {
                if !positive(responsivity.a_per_w()) {
                    return Err(CalibrationError::Responsivity);
                }
                if !positive(active_area.m2()) {
                    return Err(CalibrationError::ActiveArea);
                }
                Ok(IrradiancePerCurrent::from_w_per_m2_per_a(
                    1.0 / (responsivity.a_per_w() * active_area.m2()),
                ))
            }
            Self::Certificate(k) => {
                if positive(k.w_per_m2_per_a()) {
                    Ok(k)
                } else {
                    Err(CalibrationError::Factor)
                }
            }
        }
    }
}

/// Everything a [`Meter`] is built from, by name; validated once by [`Meter::new`].
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MeterConfig {
    /// The converter and amplifier ranges.
    pub front_end: FrontEnd,
    /// How photocurrent becomes irradiance.
    pub calibration: Calibration,
    /// The light's band (a line or an LED).
    pub band: Band,
    /// The rate of the caller's tick counter.
    pub tick_rate: TickRate,
    /// The illuminated sample area (or vessel aperture), for doses in mol of photons; `None`
    /// if only per-area doses are needed. Valid: finite, > 0.
    pub sample_area: Option<Area>,
}

/// Why a meter could not be built.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum MeterError {
    /// The calibration is invalid.
    Calibration(CalibrationError),
    /// The band is invalid.
    Band(BandError),
    /// The illuminated sample area is not finite or ≤ 0.
    SampleArea,
}

impl core::fmt::Display for MeterError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Calibration(e) => write!(f, "calibration: {e}"),
            Self::Band(e) => write!(f, "band: {e}"),
            Self::SampleArea => f.write_str("illuminated area must be finite and > 0"),
        }
    }
}

impl core::error::Error for MeterError {}

/// A calibrated meter: front end + calibration + band + tick rate (+ an optional illuminated
/// sample area), reduced to the constants the dose engine multiplies by at read-out.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Meter {
    front_end: FrontEnd,
    calibration: IrradiancePerCurrent,
    band: BandFactors,
    tick_rate: TickRate,
    sample_area: Option<Area>,
    /// W/m² per net code, per range.
    w_per_m2_per_code: [f64; MAX_RANGES],
}

impl Meter {
    /// Join the stages named in `config`.
    ///
    /// # Errors
    /// [`MeterError`] naming the invalid stage.
    pub fn new(config: MeterConfig) -> Result<Self, MeterError> {
        let MeterConfig {
            front_end,
            calibration,
            band,
            tick_rate,
            sample_area,
        } = config;
        let band = BandFactors::new(&band).map_err(MeterError::Band)?;
        Self::with_band_factors(front_end, calibration, band, tick_rate, sample_area)
    }

    /// Join the stages with band factors computed elsewhere (a tabulated source through
    /// [`SpectralFactors::band_factors`](crate::spectral::spectrum::SpectralFactors::band_factors)).
    ///
    /// # Errors
    /// [`MeterError`] naming the invalid stage.
    pub fn with_band_factors(
        front_end: FrontEnd,
        calibration: Calibration,
        band: BandFactors,
        tick_rate: TickRate,
        sample_area: Option<Area>,
    ) -> Result<Self, MeterError> {
        let k = calibration.factor().map_err(MeterError::Calibration)?;
        if let Some(a) = sample_area {
            if !positive(a.m2()) {
                return Err(MeterError::SampleArea);
            }
        }
        let mut w_per_m2_per_code = [0.0; MAX_RANGES];
        // A bounded index range: `0u8..` could overflow (and panic) as far as the compiler knows.
        for (i, slot) in (0u8..MAX_RANGES as u8).zip(w_per_m2_per_code.iter_mut()) {
            if let Some(a) = front_end.amps_per_code(RangeIndex(i)) {
                *slot = a * k.w_per_m2_per_a();
            }
        }
        Ok(Self {
            front_end,
            calibration: k,
            band,
            tick_rate,
            sample_area,
            w_per_m2_per_code,
        })
    }

    /// A meter from parts validated elsewhere (a [`MeterProfile`], checked with integer
    /// arithmetic only): no floating-point operation.
    ///
    /// [`MeterProfile`]: crate::profile::MeterProfile
    pub(crate) const fn from_parts(
        front_end: FrontEnd,
        calibration: IrradiancePerCurrent,
        band: BandFactors,
        tick_rate: TickRate,
        sample_area: Option<Area>,
        w_per_m2_per_code: [f64; MAX_RANGES],
    ) -> Self {
        Self {
            front_end,
            calibration,
            band,
            tick_rate,
            sample_area,
            w_per_m2_per_code,
        }
    }

    /// The validated front end.
    #[must_use]
    pub const fn front_end(&self) -> &FrontEnd {
        &self.front_end
    }

    /// Mutable access to the front end (for dark-offset updates after a dark capture).
    pub fn front_end_mut(&mut self) -> &mut FrontEnd {
        &mut self.front_end
    }

    /// The band's photon conversion factors.
    #[must_use]
    pub const fn band(&self) -> &BandFactors {
        &self.band
    }

    /// The calibration factor, (W/m²)/A.
    #[must_use]
    pub const fn calibration(&self) -> IrradiancePerCurrent {
        self.calibration
    }

    /// The tick rate of the timestamps.
    #[must_use]
    pub const fn tick_rate(&self) -> TickRate {
        self.tick_rate
    }

    /// The illuminated sample area, if configured.
    #[must_use]
    pub const fn sample_area(&self) -> Option<Area> {
        self.sample_area
    }

    /// Irradiance of a photocurrent.
    #[must_use]
    pub fn irradiance_of_current(&self, i: Current) -> Irradiance {
        Irradiance::from_w_per_m2(i.a() * self.calibration.w_per_m2_per_a())
    }

    /// Irradiance of a net (dark-corrected) code in range `r`; zero for an unknown range.
    #[must_use]
    pub fn irradiance(&self, net_code: i32, r: RangeIndex) -> Irradiance {
        let k = self
            .w_per_m2_per_code
            .get(usize::from(r.0))
            .copied()
            .unwrap_or(0.0);
        Irradiance::from_w_per_m2(f64::from(net_code) * k)
    }

    /// Photon irradiance for an irradiance in this band.
    #[must_use]
    pub fn photon_irradiance(&self, e: Irradiance) -> PhotonIrradiance {
        PhotonIrradiance::from_mol_per_m2_s(e.w_per_m2() * self.band.mol_per_j())
    }

    /// Radiant exposure per integer unit of the dose engine in range `r`, J/m².
    ///
    /// One unit is one net code held for one tick, counted twice (trapezoid sums are halved at
    /// read-out), so the factor is `½ · (W/m² per code) / tick_rate`. Zero for an unknown range.
    #[must_use]
    pub fn j_per_m2_per_unit(&self, r: RangeIndex) -> f64 {
        let k = self
            .w_per_m2_per_code
            .get(usize::from(r.0))
            .copied()
            .unwrap_or(0.0);
        0.5 * k / f64::from(self.tick_rate.hz())
    }

    /// Photon exposure for a radiant exposure in this band.
    #[must_use]
    pub fn photon_exposure(&self, h: RadiantExposure) -> PhotonExposure {
        PhotonExposure::from_mol_per_m2(h.j_per_m2() * self.band.mol_per_j())
    }

    /// Photons received by the illuminated sample area for a radiant exposure, if an area is
    /// configured.
    #[must_use]
    pub fn photon_amount(&self, h: RadiantExposure) -> Option<PhotonAmount> {
        self.sample_area.map(|a| self.photon_exposure(h) * a)
    }
}

#[cfg(test)]
mod tests;
