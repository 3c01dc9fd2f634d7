//! Vessel geometry: how the sensor's radiant exposure becomes photons entering the sample.
//!
//! Two descriptions, both reduced at configuration time to one factor k_v, the einstein
//! entering the sample per J/m² at the sensor (numerically the same as (mol/s) per W/m²):
//!
//! - [`VesselGeometry::IlluminatedArea`]: the sensor reads the irradiance that falls on the
//!   sample's illuminated aperture (same place or an equivalent position):
//!   k_v = (mol/J of the band) · area · t.
//! - [`VesselGeometry::FluxFactor`]: the sensor sits beside the vessel; a factor from sensor
//!   irradiance to photon flux into the sample (for example from ferrioxalate actinometry,
//!   [`ActinometricCalibration`](super::actinometry::ActinometricCalibration)): k_v = k · t.
//!
//! t is the transmission of what lies between the measured light and the sample (window
//! reflection, wall absorption), 0 < t ≤ 1. A factor from actinometry in the same vessel
//! already contains these losses: use [`Transmission::LOSSLESS`].

use crate::quantity::{Area, Irradiance, PhotonAmount, PhotonFlux, RadiantExposure};
use crate::spectral::band::{Band, BandFactors};

use super::units::{PhotonFluxPerIrradiance, Transmission};
use super::{positive, PhotochemError};

/// How the sensor relates to the sample.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum VesselGeometry {
    /// The sensor's irradiance falls on this illuminated sample area.
    IlluminatedArea {
        /// Illuminated area of the sample (aperture, window). Valid: finite, > 0.
        area: Area,
        /// Transmission into the sample. Valid: finite, 0 < t ≤ 1.
        transmission: Transmission,
    },
    /// Photon flux into the sample per sensor irradiance.
    FluxFactor {
        /// (mol/s) per W/m² of sensor irradiance. Valid: finite, > 0.
        factor: PhotonFluxPerIrradiance,
        /// Transmission into the sample. Valid: finite, 0 < t ≤ 1.
        transmission: Transmission,
    },
}

/// A validated vessel: one factor from sensor exposure to incident photons.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Vessel {
    /// einstein into the sample per J/m² at the sensor.
    mol_per_j_per_m2: f64,
}

impl Vessel {
    /// Validate `geometry` for `band` (the band the meter is configured with).
    ///
    /// # Errors
    /// [`PhotochemError::Area`], [`PhotochemError::FluxFactor`],
    /// [`PhotochemError::Transmission`] or [`PhotochemError::Band`] naming the bad input.
    pub fn new(geometry: &VesselGeometry, band: &Band) -> Result<Self, PhotochemError> {
        let factors = BandFactors::new(band).map_err(PhotochemError::Band)?;
        Self::from_factors(geometry, &factors)
    }

    /// As [`Vessel::new`] with the band's factors already computed.
    pub(crate) fn from_factors(
        geometry: &VesselGeometry,
        factors: &BandFactors,
    ) -> Result<Self, PhotochemError> {
        let (k, t) = match *geometry {
            VesselGeometry::IlluminatedArea { area, transmission } => {
                if !positive(area.m2()) {
                    return Err(PhotochemError::Area);
                }
                (factors.mol_per_j() * area.m2(), transmission)
            }
            VesselGeometry::FluxFactor {
                factor,
                transmission,
            } => {
                if !positive(factor.mol_per_s_per_w_per_m2()) {
                    return Err(PhotochemError::FluxFactor);
                }
                (factor.mol_per_s_per_w_per_m2(), transmission)
            }
        };
        let t = t.fraction();
        if !(t.is_finite() && t > 0.0 && t <= 1.0) {
            return Err(PhotochemError::Transmission);
        }
        let k = k * t;
        if positive(k) {
            Ok(Self {
                mol_per_j_per_m2: k,
            })
        } else {
            Err(PhotochemError::NotRepresentable)
        }
    }

    /// The factor k_v: photon flux into the sample per sensor irradiance (losses included).
    #[must_use]
    pub const fn factor(&self) -> PhotonFluxPerIrradiance {
        PhotonFluxPerIrradiance::from_mol_per_s_per_w_per_m2(self.mol_per_j_per_m2)
    }

    /// Photons that entered the sample for a sensor radiant exposure.
    #[must_use]
    pub fn incident_photons(&self, h: RadiantExposure) -> PhotonAmount {
        PhotonAmount::from_mol(h.j_per_m2() * self.mol_per_j_per_m2)
    }

    /// Photon flux into the sample for a sensor irradiance.
    #[must_use]
    pub fn incident_flux(&self, e: Irradiance) -> PhotonFlux {
        PhotonFlux::from_mol_per_s(e.w_per_m2() * self.mol_per_j_per_m2)
    }

    /// einstein per J/m² (for the reactor's conversions).
    pub(crate) const fn mol_per_j_per_m2(&self) -> f64 {
        self.mol_per_j_per_m2
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::quantity::Wavelength;

    fn line() -> Band {
        Band::Line(Wavelength::from_nm(365.0))
    }

    #[test]
    fn area_geometry_uses_the_band_photons_per_joule() {
        // Computed from the exact SI constants: 10 W/m² at 365 nm = 30.5116 µmol m⁻² s⁻¹;
        // over 2 cm² with t = 0.9 that is 30.5116e-6 × 2e-4 × 0.9 mol/s.
        let v = Vessel::new(
            &VesselGeometry::IlluminatedArea {
                area: Area::from_cm2(2.0),
                transmission: Transmission::from_fraction(0.9),
            },
            &line(),
        )
        .unwrap();
        let q = v.incident_flux(Irradiance::from_w_per_m2(10.0));
        assert!((q.umol_per_s() / (30.5116 * 2e-4 * 0.9) - 1.0).abs() < 2e-6);
        let n = v.incident_photons(RadiantExposure::from_j_per_m2(10.0));
        assert!((n.mol() / q.mol_per_s() - 1.0).abs() < 1e-15);
    }

    #[test]
    fn flux_factor_geometry_is_the_factor_times_transmission() {
        let v = Vessel::new(
            &VesselGeometry::FluxFactor {
                factor: PhotonFluxPerIrradiance::from_umol_per_s_per_w_per_m2(0.002),
                transmission: Transmission::from_fraction(0.5),
            },
            &line(),
        )
        .unwrap();
        assert!((v.factor().umol_per_s_per_w_per_m2() - 0.001).abs() < 1e-18);
    }

    #[test]
    fn bad_geometry_is_named() {
        let area = |a: f64, t: f64| VesselGeometry::IlluminatedArea {
            area: Area::from_cm2(a),
            transmission: Transmission::from_fraction(t),
        };
        assert_eq!(
            Vessel::new(&area(0.0, 1.0), &line()),
            Err(PhotochemError::Area)
        );
        assert_eq!(
            Vessel::new(&area(f64::NAN, 1.0), &line()),
            Err(PhotochemError::Area)
        );
        for t in [0.0, -0.1, 1.01, f64::NAN] {
            assert_eq!(
                Vessel::new(&area(1.0, t), &line()),
                Err(PhotochemError::Transmission),
                "{t}"
            );
        }
        let flux = VesselGeometry::FluxFactor {
            factor: PhotonFluxPerIrradiance::from_mol_per_s_per_w_per_m2(-1.0),
            transmission: Transmission::LOSSLESS,
        };
        assert_eq!(Vessel::new(&flux, &line()), Err(PhotochemError::FluxFactor));
        assert!(matches!(
            Vessel::new(&area(1.0, 1.0), &Band::Line(Wavelength::from_nm(20.0))),
            Err(PhotochemError::Band(_))
        ));
    }
}
