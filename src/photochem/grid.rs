//! Nodes of the band's photon spectrum for configuration-time averages (absorbed fraction,
//! actinometer quantum yield).
//!
//! [`Band::Line`] is one node of weight 1. [`Band::Led`] uses the same shape as
//! [`crate::spectral::band`] — a Gaussian in photon energy placed so that its wavelength
//! maximum and FWHM are the configured ones ([`LedShape`]) — but weighted by **photons**
//! (power ÷ photon energy), truncated
//! at ±[`ABSORPTION_TRUNCATION_SIGMA`] σ and sampled on [`ABSORPTION_GRID_POINTS`] equally
//! spaced energies with trapezoid weights. The photon-weighted tail beyond ±4 σ holds about
//! 6.3e-5 of the photons; a mean of values in [0, 1] (an absorbed fraction) over the truncated
//! range differs from the full mean by at most that tail share.

use crate::quantity::si;
use crate::spectral::band::{Band, BandFactors, LedShape};

use super::PhotochemError;

/// Points of the energy grid for band averages (odd, so the peak is a node).
pub const ABSORPTION_GRID_POINTS: u32 = 101;
/// Half-width of the band-average range, in standard deviations of the energy Gaussian.
pub const ABSORPTION_TRUNCATION_SIGMA: f64 = 4.0;

/// The band's photon-spectrum nodes: (vacuum wavelength in nm, unnormalised weight).
///
/// A copy restarts at the first node, so a stored layout can be iterated many times.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct BandNodes {
    kind: Kind,
    next: u32,
}

#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
enum Kind {
    Line {
        nm: f64,
    },
    Led {
        e0: f64,
        sigma: f64,
        lo: f64,
        step: f64,
    },
}

impl BandNodes {
    /// Validate the band (as [`BandFactors::new`] does, with its cost: an 801-point
    /// integral for an LED) and lay out its nodes.
    pub(crate) fn new(band: &Band) -> Result<Self, PhotochemError> {
        let factors = BandFactors::new(band).map_err(PhotochemError::Band)?;
        Ok(Self::from_validated(band, &factors))
    }

    /// Lay out the nodes of a band already validated: `_validated` is the proof (a band
    /// only has factors once [`BandFactors::new`] accepted it).
    pub(crate) fn from_validated(band: &Band, _validated: &BandFactors) -> Self {
        let kind = match *band {
            Band::Line(w) => Kind::Line { nm: w.nm() },
            Band::Led { peak, fwhm } => {
                // The shape of `crate::spectral::band` (wavelength maximum and FWHM as configured). A
                // validated band always solves; the fallback (the peak as the energy centre,
                // the width from peak ± FWHM/2) is never reached.
                let (e0, sigma) = match LedShape::new(peak, fwhm) {
                    Ok(shape) => (shape.centre_energy_j(), shape.sigma_energy_j()),
                    Err(_) => {
                        let half = fwhm.m() * 0.5;
                        let e_short = si::HC_J_M / (peak.m() - half);
                        let e_long = si::HC_J_M / (peak.m() + half);
                        (
                            si::HC_J_M / peak.m(),
                            (e_short - e_long) / (2.0 * libm::sqrt(2.0 * core::f64::consts::LN_2)),
                        )
                    }
                };
                let lo = e0 - ABSORPTION_TRUNCATION_SIGMA * sigma;
                let step = 2.0 * ABSORPTION_TRUNCATION_SIGMA * sigma
                    / f64::from(ABSORPTION_GRID_POINTS - 1);
                Kind::Led {
                    e0,
                    sigma,
                    lo,
                    step,
                }
            }
        };
        Self { kind, next: 0 }
    }

    /// Shortest and longest wavelength of the nodes, nm.
    pub(crate) fn span_nm(&self) -> (f64, f64) {
        match self.kind {
            Kind::Line { nm } => (nm, nm),
            Kind::Led { lo, step, .. } => {
                let hi = lo + step * f64::from(ABSORPTION_GRID_POINTS - 1);
                (si::HC_J_M / hi * 1e9, si::HC_J_M / lo * 1e9)
            }
        }
    }
}

impl Iterator for BandNodes {
    type Item = (f64, f64);

    fn next(&mut self) -> Option<(f64, f64)> {
        let i = self.next;
        match self.kind {
            Kind::Line { nm } => {
                if i > 0 {
                    return None;
                }
                self.next = 1;
                Some((nm, 1.0))
            }
            Kind::Led {
                e0,
                sigma,
                lo,
                step,
            } => {
                if i >= ABSORPTION_GRID_POINTS {
                    return None;
                }
                self.next = i + 1;
                let e = lo + step * f64::from(i);
                let z = (e - e0) / sigma;
                let end = if i == 0 || i == ABSORPTION_GRID_POINTS - 1 {
                    0.5
                } else {
                    1.0
                };
                // Photons per unit energy = power per unit energy ÷ photon energy.
                let w = end * libm::exp(-0.5 * z * z) / e;
                Some((si::HC_J_M / e * 1e9, w))
            }
        }
    }
}

/// Photon-weighted mean of `value(λ_nm)` over the nodes; the first error of `value` is
/// returned.
pub(crate) fn band_mean<F>(nodes: BandNodes, mut value: F) -> Result<f64, PhotochemError>
where
    F: FnMut(f64) -> Result<f64, PhotochemError>,
{
    let mut num = 0.0;
    let mut den = 0.0;
    for (nm, w) in nodes {
        num += w * value(nm)?;
        den += w;
    }
    if den > 0.0 && num.is_finite() {
        Ok(num / den)
    } else {
        Err(PhotochemError::NotRepresentable)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::quantity::Wavelength;

    #[test]
    fn line_is_one_node() {
        let nodes: std::vec::Vec<_> = BandNodes::new(&Band::Line(Wavelength::from_nm(365.0)))
            .unwrap()
            .collect();
        assert_eq!(nodes.len(), 1);
        assert!((nodes[0].0 - 365.0).abs() < 1e-9);
    }

    #[test]
    fn led_nodes_cover_the_stated_span_and_weights_match_the_band_module() {
        let band = Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(14.0),
        };
        let nodes = BandNodes::new(&band).unwrap();
        let (lo, hi) = nodes.span_nm();
        let all: std::vec::Vec<_> = nodes.collect();
        assert_eq!(all.len() as u32, ABSORPTION_GRID_POINTS);
        let min = all.iter().map(|n| n.0).fold(f64::INFINITY, f64::min);
        let max = all.iter().map(|n| n.0).fold(0.0, f64::max);
        assert!((min - lo).abs() < 1e-9 && (max - hi).abs() < 1e-9);
        assert!(lo < 405.0 && hi > 405.0);
        // Photons per joule from these photon weights (⟨1/E⟩ = Σw / Σ w·E) must agree with
        // the band module's power-weighted ⟨1/E⟩ to the truncation difference (computed).
        let (sw, swe) = all.iter().fold((0.0, 0.0), |(a, b), &(nm, w)| {
            (a + w, b + w * si::HC_J_M / (nm * 1e-9))
        });
        let f = BandFactors::new(&band).unwrap();
        assert!(((sw / swe) / f.photons_per_j() - 1.0).abs() < 1e-6);
    }

    #[test]
    fn invalid_band_is_named() {
        assert!(matches!(
            BandNodes::new(&Band::Line(Wavelength::from_nm(f64::NAN))),
            Err(PhotochemError::Band(_))
        ));
    }
}
