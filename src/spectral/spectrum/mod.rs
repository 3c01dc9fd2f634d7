//! Spectra as data, and the configuration-time spectral integrals that turn them into the
//! constant factors of the pipeline.
//!
//! # Tables
//!
//! A [`Spectrum`] is a fixed-capacity table of `(vacuum wavelength, value)` points
//! (`heapless`, capacity `N`, default [`DEFAULT_CAPACITY`]). It is validated once: at least
//! two points, wavelengths finite, inside [`MIN_WAVELENGTH_NM`] ..= [`MAX_WAVELENGTH_NM`] and
//! strictly increasing, values finite and ≥ 0. Between its points a table is **linearly
//! interpolated**; outside its first and last point it is **zero** (a source emits nothing
//! there, a detector does not respond there). A detector table must therefore cover the whole
//! range where the detector responds: write explicit zero rows where it is blind.
//!
//! The integrals work on a [`SpectrumRef`], a borrowed view of a validated table, so tables of
//! any capacity (and the static tables of [`crate::spectral::action`]) mix freely.
//!
//! # Sources
//!
//! A [`Source`] is a line (a delta function), an LED-like band or a tabulated spectrum. The
//! LED model is the one of [`Band::Led`]: a **Gaussian in photon energy** (LED emission
//! follows the band-gap energy distribution, so the shape is close to symmetric in energy and
//! skewed towards long wavelengths in a wavelength plot), its centre and width solved so that
//! the wavelength maximum and FWHM per nm are the configured ones ([`LedShape`]),
//! truncated at ±[`LED_TRUNCATION_SIGMA`] σ about the energy centre and at
//! the supported wavelength range. In wavelength its spectral density is
//! `exp(−½((hc/λ − E₀)/σ)²) · hc/λ²` (the Jacobian of E = hc/λ).
//!
//! # The integration rule
//!
//! Every integral is `∫ E_λ(λ) · g(λ) dλ` over the intersection of the interval asked for
//! with the supports of the source and of every factor `g` (detector table, weighting
//! function, band window). It is computed by the **composite trapezoid rule on the union of
//! all breakpoints**: the interval ends, every table point of the source, the detector and the
//! weighting, the LED's peak and truncation limits and the kinks of analytic weightings (298
//! and 328 nm for erythema) are nodes, and each interval between two consecutive nodes is cut
//! into equal steps no longer than [`IntegrationRule::max_step`] (default
//! [`DEFAULT_MAX_STEP_NM`]). Because the support edges are nodes and the factors are
//! evaluated from inside their support there, a step of a window (for example UV-A ending at
//! 400 nm) is integrated exactly: a flat spectrum gives exactly its width. A line source is a
//! delta function: its integral is the integrand at the line (in the half-open band, in the
//! closed support of each factor).
//!
//! All of this runs in `f64` with `libm`, **once, at configuration time**. Nothing here is
//! meant for the per-sample path; the results are constants the read-out multiplies by.
//!
//! # Factors
//!
//! - [`SpectralFactors`]: for a source, a configured band and a [`Detector`], the effective
//!   responsivity (photocurrent per watt of *band* power, including the detector's response
//!   to out-of-band light of the assumed source shape), hence W/m² per ampere for a given
//!   active area, and photons / mol of photons per joule of band energy.
//! - [`weighted_fraction`]: weighted irradiance ÷ band irradiance for a
//!   [`Weighting`].
//! - [`mismatch_factor`]: the spectral mismatch correction factor F* of CIE ILV 17-25-115 for a
//!   detector calibrated under one source and used under another.
//!
//! [`MIN_WAVELENGTH_NM`]: crate::spectral::band::MIN_WAVELENGTH_NM
//! [`MAX_WAVELENGTH_NM`]: crate::spectral::band::MAX_WAVELENGTH_NM
//! [`LedShape`]: crate::spectral::band::LedShape
//! [`LED_TRUNCATION_SIGMA`]: crate::spectral::band::LED_TRUNCATION_SIGMA

mod air;
mod quadrature;

pub use crate::spectral::table::{
    Integral, RangeError, SpectralError, Spectrum, SpectrumError, SpectrumRef, WavelengthRange,
    DEFAULT_CAPACITY,
};
pub use air::{air_refractivity, air_to_vacuum, mercury_air_nm};

use crate::quantity::{si, Area, IrradiancePerCurrent, Responsivity, Wavelength};
use crate::spectral::action::Weighting;
use crate::spectral::band::{snap_nm, Band, BandFactors};
use quadrature::{integrate, Shape, Span, Term};

/// Default longest integration step between nodes, nm.
pub const DEFAULT_MAX_STEP_NM: f64 = 0.1;
/// Shortest allowed [`IntegrationRule::max_step`], nm.
pub const MIN_STEP_NM: f64 = 0.001;
/// Longest allowed [`IntegrationRule::max_step`], nm.
pub const MAX_STEP_NM: f64 = 10.0;

/// The spectral shape of the light source (relative: only the shape matters).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Source<'a> {
    /// A single vacuum wavelength (a delta function). Valid as for [`Band::Line`].
    Line(Wavelength),
    /// An LED-like band, Gaussian in photon energy (see the [module documentation](self)).
    /// Valid as for [`Band::Led`].
    Led {
        /// Peak (vacuum) wavelength.
        peak: Wavelength,
        /// Full width at half maximum, in wavelength.
        fwhm: Wavelength,
    },
    /// A tabulated spectral irradiance (any unit per nm), linear between points, zero outside.
    Tabulated(SpectrumRef<'a>),
}

impl From<Band> for Source<'_> {
    fn from(b: Band) -> Self {
        match b {
            Band::Line(w) => Self::Line(w),
            Band::Led { peak, fwhm } => Self::Led { peak, fwhm },
        }
    }
}

/// How the integrals are computed (see the [module documentation](self)).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IntegrationRule {
    max_step_nm: f64,
}

impl Default for IntegrationRule {
    /// Steps of at most [`DEFAULT_MAX_STEP_NM`].
    fn default() -> Self {
        Self {
            max_step_nm: DEFAULT_MAX_STEP_NM,
        }
    }
}

impl IntegrationRule {
    /// Trapezoid steps of at most `max_step` between nodes. Valid: finite,
    /// [`MIN_STEP_NM`] ..= [`MAX_STEP_NM`].
    ///
    /// # Errors
    /// [`SpectralError::Rule`] for a step outside the valid range.
    pub fn with_max_step(max_step: Wavelength) -> Result<Self, SpectralError> {
        let h = snap_nm(max_step);
        if h.is_finite() && (MIN_STEP_NM..=MAX_STEP_NM).contains(&h) {
            Ok(Self { max_step_nm: h })
        } else {
            Err(SpectralError::Rule)
        }
    }

    /// The longest step between nodes.
    #[must_use]
    pub fn max_step(&self) -> Wavelength {
        Wavelength::from_nm(self.max_step_nm)
    }
}

/// A detector: relative spectral responsivity table and its absolute scale.
///
/// R(λ) = R_ref · s_rel(λ) / s_rel(λ_ref), zero outside the table.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Detector<'a> {
    relative: SpectrumRef<'a>,
    reference_nm: f64,
    /// A/W per unit of the relative table: R_ref / s_rel(λ_ref).
    scale: f64,
}

impl<'a> Detector<'a> {
    /// A detector from its relative responsivity table (any scale), a reference wavelength
    /// inside the table and the absolute responsivity there (A/W, as on a certificate).
    ///
    /// # Errors
    /// [`SpectralError::Reference`] if the reference wavelength is outside the table or the
    /// table is zero there; [`SpectralError::Responsivity`] for a responsivity that is not
    /// finite and > 0.
    pub fn new(
        relative: SpectrumRef<'a>,
        reference: Wavelength,
        responsivity_at_reference: Responsivity,
    ) -> Result<Self, SpectralError> {
        let r = responsivity_at_reference.a_per_w();
        if !r.is_finite() || r <= 0.0 {
            return Err(SpectralError::Responsivity);
        }
        let s_ref = relative
            .linear_nm(snap_nm(reference))
            .filter(|&s| s > 0.0)
            .ok_or(SpectralError::Reference)?;
        Ok(Self {
            relative,
            reference_nm: snap_nm(reference),
            scale: r / s_ref,
        })
    }

    /// The relative responsivity table.
    #[must_use]
    pub const fn relative(&self) -> SpectrumRef<'a> {
        self.relative
    }

    /// The reference wavelength.
    #[must_use]
    pub fn reference(&self) -> Wavelength {
        Wavelength::from_nm(self.reference_nm)
    }

    /// Absolute responsivity at `w`; zero outside the table.
    #[must_use]
    pub fn responsivity_at(&self, w: Wavelength) -> Responsivity {
        Responsivity::from_a_per_w(self.relative.linear_nm(snap_nm(w)).unwrap_or(0.0) * self.scale)
    }
}

/// `v > 0` (false for NaN).
fn gt0(v: f64) -> bool {
    v > 0.0
}

fn finite(v: f64) -> Result<f64, SpectralError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(SpectralError::NotFinite)
    }
}

/// ∫ over the band of the source, checked non-zero.
fn band_power(
    shape: &Shape<'_>,
    band: WavelengthRange,
    rule: &IntegrationRule,
) -> Result<f64, SpectralError> {
    let p = finite(integrate(shape, Span::Band(band), &[], rule))?;
    if p > 0.0 {
        Ok(p)
    } else {
        Err(SpectralError::ZeroIntegral(Integral::BandIrradiance))
    }
}

/// Band irradiance of a source, in the source table's own unit × nm (for a line: 1 if the line
/// is in the band). Exposed so the integration rule itself can be checked.
///
/// # Errors
/// [`SpectralError::Source`] for an invalid line or LED, [`SpectralError::NotFinite`].
pub fn band_integral(
    source: &Source<'_>,
    band: WavelengthRange,
    rule: &IntegrationRule,
) -> Result<f64, SpectralError> {
    let shape = Shape::new(source).map_err(SpectralError::Source)?;
    finite(integrate(&shape, Span::Band(band), &[], rule))
}

/// Weighted irradiance ÷ band irradiance: `∫ E_λ w dλ / ∫_band E_λ dλ` (dimensionless).
///
/// The weighted integral covers the weighting's own support (for example 180–400 nm for the
/// UV hazard function), not only the band: out-of-band light of the assumed source shape is
/// counted. [`Weighting::None`] gives exactly 1.
///
/// # Errors
/// [`SpectralError`]: invalid source or weighting, a user weighting table that does not cover
/// the band, no source power in the band.
pub fn weighted_fraction(
    source: &Source<'_>,
    band: WavelengthRange,
    weighting: &Weighting<'_>,
    rule: &IntegrationRule,
) -> Result<f64, SpectralError> {
    let shape = Shape::new(source).map_err(SpectralError::Source)?;
    weighting.check_for_band(band)?;
    let p = band_power(&shape, band, rule)?;
    if let Weighting::None = weighting {
        return Ok(1.0);
    }
    let w = finite(integrate(
        &shape,
        Span::All,
        &[Term::Weight(weighting)],
        rule,
    ))?;
    finite(w / p)
}

/// The spectral mismatch correction factor F* (CIE ILV 17-25-115, IEV 845):
///
/// ```text
/// F* = [∫ S_Z w dλ / ∫ S_Z s_rel dλ] · [∫ S_A s_rel dλ / ∫ S_A w dλ]
/// ```
///
/// with `S_A` the source the detector was calibrated under, `S_Z` the source it measures,
/// `s_rel` its relative responsivity and `w` the target weighting (for the band irradiance:
/// [`Weighting::None`], the window of `band`). A reading made with the factor valid for `S_A`
/// is multiplied by F* to be correct for `S_Z`. F* = 1 when the two sources have the same shape
/// or when `s_rel` is proportional to `w`.
///
/// # Errors
/// [`SpectralError`]: invalid sources or weighting, the band outside the detector table, a
/// detector blind to either source, a target weighting that is zero for `S_A`.
pub fn mismatch_factor(
    detector_relative: SpectrumRef<'_>,
    band: WavelengthRange,
    target: &Weighting<'_>,
    calibration_source: &Source<'_>,
    measured_source: &Source<'_>,
    rule: &IntegrationRule,
) -> Result<f64, SpectralError> {
    check_band_in_table(band, detector_relative)?;
    target.check_for_band(band)?;
    let za = Shape::new(calibration_source).map_err(SpectralError::Source)?;
    let zz = Shape::new(measured_source).map_err(SpectralError::Source)?;
    let weighted = |shape: &Shape<'_>| -> f64 {
        match target {
            Weighting::None => integrate(shape, Span::Band(band), &[], rule),
            w => integrate(shape, Span::All, &[Term::Weight(w)], rule),
        }
    };
    let det =
        |shape: &Shape<'_>| integrate(shape, Span::All, &[Term::Table(detector_relative)], rule);
    let (wz, sz) = (weighted(&zz), det(&zz));
    let (wa, sa) = (weighted(&za), det(&za));
    if !gt0(sz) || !gt0(sa) {
        return Err(SpectralError::ZeroIntegral(Integral::DetectorSignal));
    }
    if !gt0(wa) {
        return Err(SpectralError::ZeroIntegral(Integral::CalibrationWeighted));
    }
    finite((wz / sz) * (sa / wa))
}

fn check_band_in_table(band: WavelengthRange, table: SpectrumRef<'_>) -> Result<(), SpectralError> {
    let (lo, hi) = table.span_nm();
    if band.lo_nm() >= lo && band.hi_nm() <= hi {
        Ok(())
    } else {
        Err(SpectralError::BandOutsideDetector)
    }
}

/// The configuration-time factors of a source, a band and a detector.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SpectralFactors {
    band: WavelengthRange,
    effective_responsivity: Responsivity,
    photons_per_j: f64,
}

impl SpectralFactors {
    /// Compute the factors (configuration time only).
    ///
    /// - effective responsivity `R_eff = ∫ E_λ R(λ) dλ / ∫_band E_λ dλ` (A/W): photocurrent per
    ///   watt of band power on the detector, counting the detector's response to the source's
    ///   out-of-band light;
    /// - photons per joule of band energy `∫_band E_λ λ/(hc) dλ / ∫_band E_λ dλ`.
    ///
    /// # Errors
    /// [`SpectralError`]: invalid source, the band outside the detector table, no source
    /// power in the band, a detector blind to the source.
    pub fn new(
        source: &Source<'_>,
        band: WavelengthRange,
        detector: &Detector<'_>,
        rule: &IntegrationRule,
    ) -> Result<Self, SpectralError> {
        let shape = Shape::new(source).map_err(SpectralError::Source)?;
        check_band_in_table(band, detector.relative)?;
        let p = band_power(&shape, band, rule)?;
        let signal = finite(integrate(
            &shape,
            Span::All,
            &[Term::Table(detector.relative)],
            rule,
        ))?;
        if !gt0(signal) {
            return Err(SpectralError::ZeroIntegral(Integral::DetectorSignal));
        }
        let photons = finite(integrate(
            &shape,
            Span::Band(band),
            &[Term::PhotonsPerJoule],
            rule,
        ))?;
        Ok(Self {
            band,
            effective_responsivity: Responsivity::from_a_per_w(finite(
                detector.scale * signal / p,
            )?),
            photons_per_j: finite(photons / p)?,
        })
    }

    /// The configured band.
    #[must_use]
    pub const fn band(&self) -> WavelengthRange {
        self.band
    }

    /// Photocurrent per watt of band power on the detector, A/W.
    #[must_use]
    pub const fn effective_responsivity(&self) -> Responsivity {
        self.effective_responsivity
    }

    /// Band irradiance per photocurrent for a detector of `active_area`: 1 / (R_eff · A).
    ///
    /// # Errors
    /// [`SpectralError::ActiveArea`] for an area that is not finite and > 0.
    pub fn irradiance_per_current(
        &self,
        active_area: Area,
    ) -> Result<IrradiancePerCurrent, SpectralError> {
        let a = active_area.m2();
        if !a.is_finite() || a <= 0.0 {
            return Err(SpectralError::ActiveArea);
        }
        let k = finite(1.0 / (self.effective_responsivity.a_per_w() * a))?;
        Ok(IrradiancePerCurrent::from_w_per_m2_per_a(k))
    }

    /// Photons per joule of band energy, 1/J.
    #[must_use]
    pub const fn photons_per_j(&self) -> f64 {
        self.photons_per_j
    }

    /// Moles of photons (einstein) per joule of band energy, mol/J.
    #[must_use]
    pub fn mol_per_j(&self) -> f64 {
        self.photons_per_j / si::AVOGADRO_PER_MOL
    }

    /// The photon factors as [`BandFactors`], for
    /// [`Meter::with_band_factors`](crate::irradiance::Meter::with_band_factors).
    #[must_use]
    pub fn band_factors(&self) -> Option<BandFactors> {
        BandFactors::from_photons_per_j(self.photons_per_j)
    }
}

/// A certificate factor measured under one source, corrected for use under another:
/// `k_Z = F* · k_A` (see [`mismatch_factor`]).
///
/// # Errors
/// [`SpectralError::Factor`] for a factor that is not finite and > 0, or any error of
/// [`mismatch_factor`].
pub fn corrected_certificate(
    factor_under_calibration_source: IrradiancePerCurrent,
    detector_relative: SpectrumRef<'_>,
    band: WavelengthRange,
    calibration_source: &Source<'_>,
    measured_source: &Source<'_>,
    rule: &IntegrationRule,
) -> Result<IrradiancePerCurrent, SpectralError> {
    let k = factor_under_calibration_source.w_per_m2_per_a();
    if !k.is_finite() || k <= 0.0 {
        return Err(SpectralError::Factor);
    }
    let f = mismatch_factor(
        detector_relative,
        band,
        &Weighting::None,
        calibration_source,
        measured_source,
        rule,
    )?;
    Ok(IrradiancePerCurrent::from_w_per_m2_per_a(finite(f * k)?))
}

#[cfg(test)]
mod tests;
