//! Band: what light the meter sees, and the photon conversion factors that follow from it.
//!
//! Converting radiant energy to photons needs the photon energy, and a band of wavelengths
//! has no single one: the right factor is the **mean of 1/E over the band's power spectrum**
//! (photons per joule = ∫ P(E)/E dE ÷ ∫ P(E) dE), not 1/E at the peak. This module computes
//! that factor once, at configuration time, in `f64` with `libm`; the dose engine only
//! multiplies by it at read-out.
//!
//! Band shapes:
//! - [`Band::Line`]: a single vacuum wavelength (a low-pressure mercury line, a laser);
//! - [`Band::Led`]: an LED given by its peak and full width at half maximum, both in
//!   wavelength. The model is a **Gaussian in photon energy**, truncated at ±6 σ: LED
//!   emission follows the band-gap energy distribution, so it is close to symmetric in energy
//!   and therefore skewed towards long wavelengths in a wavelength plot. The energy width is
//!   taken from the two half-maximum wavelengths `peak ± FWHM/2`. The integral is a trapezoid
//!   rule on [`LED_GRID_POINTS`] equally spaced energies, clipped to the supported wavelength
//!   range 100–2500 nm.

use crate::quantity::{si, PhotonEnergy, Wavelength};

/// Shortest vacuum wavelength a band may use, nm (vacuum-UV photodiodes stop near here).
pub const MIN_WAVELENGTH_NM: f64 = 100.0;
/// Longest vacuum wavelength a band may use, nm (silicon and InGaAs photodiodes stop here).
pub const MAX_WAVELENGTH_NM: f64 = 2500.0;
/// Points of the energy grid used to integrate an LED band (odd, so the peak is a node).
pub const LED_GRID_POINTS: u32 = 801;
/// Half-width of the LED integration range in standard deviations.
pub const LED_TRUNCATION_SIGMA: f64 = 6.0;

/// The spectral shape of the light source as the detector sees it.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Band {
    /// A single vacuum wavelength. Valid: finite, within
    /// [`MIN_WAVELENGTH_NM`] ..= [`MAX_WAVELENGTH_NM`].
    Line(Wavelength),
    /// An LED-like band: Gaussian in photon energy with the given peak and FWHM (wavelength).
    /// Valid: peak as for `Line`; FWHM finite, > 0 and ≤ peak/2.
    Led {
        /// Peak (vacuum) wavelength.
        peak: Wavelength,
        /// Full width at half maximum, in wavelength.
        fwhm: Wavelength,
    },
}

/// Why a band was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BandError {
    /// A wavelength is NaN, infinite, or outside the supported range.
    Wavelength,
    /// The FWHM is NaN, infinite, ≤ 0, or wider than half the peak wavelength.
    Fwhm,
}

impl core::fmt::Display for BandError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Wavelength => "band wavelength not finite or outside 100..=2500 nm",
            Self::Fwhm => "band FWHM must be finite, > 0 and at most half the peak",
        })
    }
}

impl core::error::Error for BandError {}

/// Photon conversion factors of a validated band.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BandFactors {
    photons_per_j: f64,
}

impl BandFactors {
    /// Compute the factors of `band` (configuration time only: uses `f64` and `libm::exp`).
    ///
    /// # Errors
    /// [`BandError`] for an invalid wavelength or width.
    pub fn new(band: &Band) -> Result<Self, BandError> {
        match *band {
            Band::Line(w) => {
                check_wavelength(w)?;
                Ok(Self {
                    photons_per_j: 1.0 / w.photon_energy().j(),
                })
            }
            Band::Led { peak, fwhm } => {
                check_wavelength(peak)?;
                let width = fwhm.nm();
                if !width.is_finite() || width <= 0.0 || width > peak.nm() * 0.5 {
                    return Err(BandError::Fwhm);
                }
                Ok(Self {
                    photons_per_j: led_mean_inverse_energy(peak, fwhm),
                })
            }
        }
    }

    /// Factors from a photons-per-joule value computed elsewhere (for example from a
    /// tabulated spectrum by [`SpectralFactors`](crate::spectral::spectrum::SpectralFactors)).
    /// `None` unless the value is finite and > 0.
    #[must_use]
    pub fn from_photons_per_j(photons_per_j: f64) -> Option<Self> {
        (photons_per_j.is_finite() && photons_per_j > 0.0).then_some(Self { photons_per_j })
    }

    /// Photons per joule of radiant energy in this band, 1/J.
    #[must_use]
    pub const fn photons_per_j(&self) -> f64 {
        self.photons_per_j
    }

    /// Moles of photons (einstein) per joule of radiant energy in this band, mol/J.
    #[must_use]
    pub fn mol_per_j(&self) -> f64 {
        self.photons_per_j / si::AVOGADRO_PER_MOL
    }

    /// The mean photon energy of the band (radiant energy ÷ number of photons).
    #[must_use]
    pub fn mean_photon_energy(&self) -> PhotonEnergy {
        PhotonEnergy::from_j(1.0 / self.photons_per_j)
    }

    /// The single vacuum wavelength with the same photons per joule as the band.
    #[must_use]
    pub fn equivalent_wavelength(&self) -> Wavelength {
        self.mean_photon_energy().wavelength()
    }
}

fn check_wavelength(w: Wavelength) -> Result<(), BandError> {
    let nm = w.nm();
    if nm.is_finite() && (MIN_WAVELENGTH_NM..=MAX_WAVELENGTH_NM).contains(&nm) {
        Ok(())
    } else {
        Err(BandError::Wavelength)
    }
}

/// ⟨1/E⟩ over a Gaussian power spectrum in energy, trapezoid rule on an equal grid.
fn led_mean_inverse_energy(peak: Wavelength, fwhm: Wavelength) -> f64 {
    let half = fwhm.m() * 0.5;
    let e0 = si::HC_J_M / peak.m();
    let e_short = si::HC_J_M / (peak.m() - half);
    let e_long = si::HC_J_M / (peak.m() + half);
    // FWHM = 2 √(2 ln 2) σ for a Gaussian.
    let sigma = (e_short - e_long) / (2.0 * libm::sqrt(2.0 * core::f64::consts::LN_2));
    // Truncate at ±6 σ, clipped to the supported wavelength range (so a very wide band never
    // reaches zero or negative energies).
    let lo = libm::fmax(
        e0 - LED_TRUNCATION_SIGMA * sigma,
        si::HC_J_M / (MAX_WAVELENGTH_NM * 1e-9),
    );
    let hi = libm::fmin(
        e0 + LED_TRUNCATION_SIGMA * sigma,
        si::HC_J_M / (MIN_WAVELENGTH_NM * 1e-9),
    );
    let step = (hi - lo) / f64::from(LED_GRID_POINTS - 1);
    let mut power = 0.0;
    let mut photons = 0.0;
    for i in 0..LED_GRID_POINTS {
        let e = lo + step * f64::from(i);
        let z = (e - e0) / sigma;
        let weight = if i == 0 || i == LED_GRID_POINTS - 1 {
            0.5
        } else {
            1.0
        };
        let p = weight * libm::exp(-0.5 * z * z);
        power += p;
        photons += p / e;
    }
    photons / power
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn line_factors_from_exact_constants() {
        // Computed from the exact SI 2019 constants (h, c, N_A):
        // µmol s⁻¹ per W = 0.008 359 347 229 × λ[nm]; photons per J at 254 nm = 1.278 666e18.
        for nm in [254.0, 365.0, 405.0, 450.0] {
            let f = BandFactors::new(&Band::Line(Wavelength::from_nm(nm))).unwrap();
            assert!(
                rel(f.mol_per_j() * 1e6, 0.008_359_347_229 * nm) < 1e-10,
                "{nm}"
            );
        }
        let f = BandFactors::new(&Band::Line(Wavelength::from_nm(254.0))).unwrap();
        assert!(rel(f.photons_per_j(), 1.278_666e18) < 5e-7);
    }

    #[test]
    fn narrow_led_tends_to_its_peak() {
        let line = BandFactors::new(&Band::Line(Wavelength::from_nm(405.0))).unwrap();
        let led = BandFactors::new(&Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(0.01),
        })
        .unwrap();
        assert!(rel(led.photons_per_j(), line.photons_per_j()) < 1e-9);
    }

    #[test]
    fn led_band_matches_the_second_order_expansion() {
        // For a Gaussian in energy, ⟨1/E⟩ = (1/E0)(1 + (σ/E0)² + 3(σ/E0)⁴ + …): a Taylor
        // expansion of 1/E about E0 with the Gaussian moments (computed, not a published value).
        let peak = Wavelength::from_nm(365.0);
        let fwhm = Wavelength::from_nm(12.0);
        let f = BandFactors::new(&Band::Led { peak, fwhm }).unwrap();
        let e0 = si::HC_J_M / peak.m();
        let es = si::HC_J_M / (peak.m() - fwhm.m() / 2.0);
        let el = si::HC_J_M / (peak.m() + fwhm.m() / 2.0);
        let s = (es - el) / (2.0 * (2.0 * core::f64::consts::LN_2).sqrt()) / e0;
        let expected = (1.0 + s * s + 3.0 * s.powi(4)) / e0;
        // Truncation at ±6σ and the grid leave < 1e-7 relative difference.
        assert!(
            rel(f.photons_per_j(), expected) < 1e-7,
            "{} {}",
            f.photons_per_j(),
            expected
        );
        // The band gives more photons per joule than its peak alone.
        assert!(f.photons_per_j() > 1.0 / e0);
        assert!(f.equivalent_wavelength().nm() > 365.0);
    }

    #[test]
    fn very_wide_led_stays_in_the_supported_range() {
        // FWHM 200 nm at 400 nm: ±6σ would reach negative energies; clipped to 100–2500 nm
        // the mean 1/E must lie between the clip limits' values.
        let f = BandFactors::new(&Band::Led {
            peak: Wavelength::from_nm(400.0),
            fwhm: Wavelength::from_nm(200.0),
        })
        .unwrap();
        let eq = f.equivalent_wavelength().nm();
        assert!(
            eq.is_finite() && eq > 400.0 && eq < MAX_WAVELENGTH_NM,
            "{eq}"
        );
    }

    #[test]
    fn invalid_bands_are_named() {
        assert_eq!(
            BandFactors::new(&Band::Line(Wavelength::from_nm(f64::NAN))),
            Err(BandError::Wavelength)
        );
        assert_eq!(
            BandFactors::new(&Band::Line(Wavelength::from_nm(50.0))),
            Err(BandError::Wavelength)
        );
        for bad in [0.0, -3.0, f64::INFINITY, 300.0] {
            assert_eq!(
                BandFactors::new(&Band::Led {
                    peak: Wavelength::from_nm(405.0),
                    fwhm: Wavelength::from_nm(bad)
                }),
                Err(BandError::Fwhm),
                "{bad}"
            );
        }
    }

    #[test]
    fn rule_of_thumb_absorption_energies() {
        // The photon energies, from the exact SI 2019 constants (h = 6.626 070 15e-34 J s,
        // c = 299 792 458 m/s, e = 1.602 176 634e-19 C): E = h·c/(e·λ). Tolerance: a few f64
        // roundings of the library's computation (relative 1e-12).
        let hc_over_e_ev_nm = 6.626_070_15e-34 * 299_792_458.0 / 1.602_176_634e-19 * 1e9;
        let cc = Wavelength::from_nm(180.0).photon_energy().ev();
        let co = Wavelength::from_nm(290.0).photon_energy().ev();
        assert!((cc / (hc_over_e_ev_nm / 180.0) - 1.0).abs() < 1e-12, "{cc}");
        assert!((co / (hc_over_e_ev_nm / 290.0) - 1.0).abs() < 1e-12, "{co}");
        // common practice, no source: the ultraviolet absorption of an isolated C=C bond near
        // 180 nm is "about 7 eV", the weak C=O absorption near 290 nm "about 4 eV". The rule is
        // stated to one significant figure, so it is checked at that precision (6.89 and
        // 4.28 eV round to 7 and 4): half a unit of the stated digit, nothing fitted.
        assert_eq!(cc.round(), 7.0, "{cc}");
        assert_eq!(co.round(), 4.0, "{co}");
    }
}
