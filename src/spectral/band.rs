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
//! - [`Band::Led`]: an LED given by its peak and full width at half maximum **as a datasheet
//!   states them**: the wavelength of maximum spectral power per nm, and the full width at
//!   half maximum of the spectral power per nm, both in wavelength. The model is a **Gaussian
//!   in photon energy** (LED emission follows the band-gap energy distribution, so it is
//!   close to symmetric in energy and skewed towards long wavelengths in a wavelength plot),
//!   truncated at ±6 σ about its energy centre. Its centre and width are solved at
//!   configuration time ([`LedShape`]) so that, per nm of wavelength, its maximum lies at the
//!   configured peak and its half-maximum points are the configured FWHM apart. (Placing the
//!   energy centre at the configured peak, as earlier versions did, put the wavelength
//!   maximum short of it — 0.10 nm at 365/10 nm, 0.20 nm at 405/15 nm, 0.32 nm at 450/20 nm
//!   (computed, `tests/led_band.rs`) — because the Jacobian
//!   dE/dλ ∝ 1/λ² favours short wavelengths.) The integral is a trapezoid rule on
//!   [`LED_GRID_POINTS`] equally spaced energies, clipped to the supported wavelength range
//!   100–2500 nm.

use crate::quantity::{si, PhotonEnergy, Wavelength};
use core::f64::consts::LN_2;

/// Shortest vacuum wavelength a band may use, nm (vacuum-UV photodiodes stop near here).
pub const MIN_WAVELENGTH_NM: f64 = 100.0;
/// Longest vacuum wavelength a band may use, nm (silicon and InGaAs photodiodes stop here).
pub const MAX_WAVELENGTH_NM: f64 = 2500.0;
/// A wavelength in nm, rounded to 10⁻⁶ nm (1 fm).
///
/// [`Wavelength`] stores metres, so `Wavelength::from_nm(395.0).nm()` is not exactly 395.0;
/// rounding to 1 fm (far below any spectral detail) makes every wavelength with up to six
/// decimals in nm land exactly on the table point or band edge it names.
pub(crate) fn snap_nm(w: Wavelength) -> f64 {
    let nm = w.nm();
    let q = libm::round(nm * 1e6) / 1e6;
    if q.is_finite() {
        q
    } else {
        nm
    }
}

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
    /// An LED-like band: Gaussian in photon energy placed so that its spectral power per nm
    /// peaks at `peak` with the full width at half maximum `fwhm` (both as a datasheet states
    /// them; see [`LedShape`]). Valid: peak as for `Line`; FWHM finite, > 0 and ≤ peak/2.
    Led {
        /// Peak (vacuum) wavelength: the wavelength of maximum spectral power per nm.
        peak: Wavelength,
        /// Full width at half maximum of the spectral power per nm, in wavelength.
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
                let shape = LedShape::new(peak, fwhm)?;
                Ok(Self {
                    photons_per_j: led_mean_inverse_energy(&shape),
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

    /// Band factors from a value checked elsewhere to be finite and > 0 (a
    /// [`MeterProfile`](crate::profile::MeterProfile), checked on its bits): no floating-point
    /// operation.
    pub(crate) const fn from_checked_photons_per_j(photons_per_j: f64) -> Self {
        Self { photons_per_j }
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

/// The LED model in photon energy: a Gaussian in wavenumber u = 1/λ (proportional to photon
/// energy, E = h·c·u), centre `u0` and standard deviation `sigma`, both in 1/nm, placed so
/// that its spectral power **per nm of wavelength**,
/// P(λ) ∝ exp(−½((1/λ − u0)/σ)²) / λ², has its maximum at the configured peak and its
/// half-maximum wavelengths the configured FWHM apart.
///
/// Solved at configuration time (`libm`, no allocation, fixed iteration counts): the
/// maximum of P(λ) lies where u² − u0·u − 2σ² = 0, so for a given σ the centre is
/// u0 = u_p − 2σ²/u_p (u_p = 1/peak); the half-maximum points are found by Newton's method on
/// the concave log P(u) − log P(u_p) + ln 2 (started outside, so it converges monotonically);
/// σ is rescaled by configured/obtained FWHM until they agree to 1e-12 relative.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LedShape {
    u0_per_nm: f64,
    sigma_per_nm: f64,
    peak_nm: f64,
}

/// Outer iterations (σ rescaling) of [`LedShape::new`]; it converges in fewer than 10.
const LED_SOLVE_OUTER: u32 = 60;
/// Newton iterations for one half-maximum point.
const LED_SOLVE_NEWTON: u32 = 100;

impl LedShape {
    /// Solve the shape for a datasheet peak (wavelength of maximum power per nm) and FWHM
    /// (in wavelength). Valid as for [`Band::Led`].
    ///
    /// # Errors
    /// [`BandError::Wavelength`] or [`BandError::Fwhm`] for invalid inputs, and
    /// [`BandError::Fwhm`] if the width cannot be matched (not seen for valid inputs).
    pub fn new(peak: Wavelength, fwhm: Wavelength) -> Result<Self, BandError> {
        check_wavelength(peak)?;
        let p = snap_nm(peak);
        let w = snap_nm(fwhm);
        if !w.is_finite() || w <= 0.0 || w > p * 0.5 {
            return Err(BandError::Fwhm);
        }
        let up = 1.0 / p;
        // Start from the energy width of the half-maximum wavelengths p ± w/2
        // (FWHM = 2 √(2 ln 2) σ for a Gaussian).
        let mut sigma =
            (1.0 / (p - 0.5 * w) - 1.0 / (p + 0.5 * w)) / (2.0 * libm::sqrt(2.0 * LN_2));
        for _ in 0..LED_SOLVE_OUTER {
            let shape = Self::with_sigma(up, sigma, p);
            let width = shape.fwhm_nm();
            if !(width.is_finite() && width > 0.0) {
                return Err(BandError::Fwhm);
            }
            let ratio = w / width;
            if (ratio - 1.0).abs() <= 1e-12 {
                return Ok(shape);
            }
            // u0 > 0 needs σ < u_p/√2; valid widths stay far below that.
            sigma = libm::fmin(sigma * ratio, 0.5 * up);
        }
        Err(BandError::Fwhm)
    }

    fn with_sigma(up: f64, sigma: f64, peak_nm: f64) -> Self {
        Self {
            u0_per_nm: up - 2.0 * sigma * sigma / up,
            sigma_per_nm: sigma,
            peak_nm,
        }
    }

    /// Centre of the Gaussian in wavenumber, 1/nm (photon energy / (h·c)).
    #[must_use]
    pub const fn centre_per_nm(&self) -> f64 {
        self.u0_per_nm
    }

    /// Standard deviation of the Gaussian in wavenumber, 1/nm.
    #[must_use]
    pub const fn sigma_per_nm(&self) -> f64 {
        self.sigma_per_nm
    }

    /// Centre photon energy, J.
    #[must_use]
    pub fn centre_energy_j(&self) -> f64 {
        si::HC_J_M * self.u0_per_nm * 1e9
    }

    /// Standard deviation in photon energy, J.
    #[must_use]
    pub fn sigma_energy_j(&self) -> f64 {
        si::HC_J_M * self.sigma_per_nm * 1e9
    }

    /// The configured peak, nm (the wavelength maximum).
    #[must_use]
    pub const fn peak_nm(&self) -> f64 {
        self.peak_nm
    }

    /// Relative spectral power per nm at `nm` (1 at the maximum; untruncated). Valid: nm > 0.
    #[must_use]
    pub fn density_nm(&self, nm: f64) -> f64 {
        libm::exp(self.log_relative(1.0 / nm))
    }

    /// ln(P(u)/P(u_p)) with u = 1/λ.
    fn log_relative(&self, u: f64) -> f64 {
        let up = 1.0 / self.peak_nm;
        let z = (u - self.u0_per_nm) / self.sigma_per_nm;
        let zp = (up - self.u0_per_nm) / self.sigma_per_nm;
        -0.5 * (z * z - zp * zp) + 2.0 * libm::log(u / up)
    }

    /// The two half-maximum wavelengths (short, long), nm, of the model as solved.
    #[must_use]
    pub fn half_maximum_nm(&self) -> (f64, f64) {
        let up = 1.0 / self.peak_nm;
        let s = self.sigma_per_nm;
        let short = self.half_point(up + 4.0 * s);
        let long = self.half_point(libm::fmax(up - 4.0 * s, up * 1e-3));
        (1.0 / short, 1.0 / long)
    }

    /// Full width at half maximum per nm of the model as solved, nm.
    #[must_use]
    pub fn fwhm_nm(&self) -> f64 {
        let (a, b) = self.half_maximum_nm();
        b - a
    }

    /// Newton on f(u) = ln(P(u)/P(u_p)) + ln 2 from a start where f < 0: f is concave in u
    /// (f'' = −1/σ² − 2/u² < 0), so the iterates approach the root monotonically.
    fn half_point(&self, start: f64) -> f64 {
        let s2 = self.sigma_per_nm * self.sigma_per_nm;
        let mut u = start;
        for _ in 0..LED_SOLVE_NEWTON {
            let f = self.log_relative(u) + LN_2;
            let d = -(u - self.u0_per_nm) / s2 + 2.0 / u;
            if d == 0.0 || !d.is_finite() {
                break;
            }
            let next = u - f / d;
            if !(next.is_finite() && next > 0.0) {
                break;
            }
            let done = (next - u).abs() <= 1e-16 * u;
            u = next;
            if done {
                break;
            }
        }
        u
    }
}

/// ⟨1/E⟩ over a Gaussian power spectrum in energy, trapezoid rule on an equal grid.
fn led_mean_inverse_energy(shape: &LedShape) -> f64 {
    let e0 = shape.centre_energy_j();
    let sigma = shape.sigma_energy_j();
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
        let shape = LedShape::new(peak, fwhm).unwrap();
        let e0 = shape.centre_energy_j();
        let s = shape.sigma_energy_j() / e0;
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
