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
//! any capacity (and the static tables of [`crate::spectral::weighting`]) mix freely.
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

use crate::irradiance::Calibration;
use crate::quantity::{si, Area, IrradiancePerCurrent, Responsivity, Wavelength};
use crate::spectral::band::{
    Band, BandError, BandFactors, LedShape, LED_TRUNCATION_SIGMA, MAX_WAVELENGTH_NM,
    MIN_WAVELENGTH_NM,
};
use crate::spectral::weighting::Weighting;

/// Default capacity of a [`Spectrum`] table, points.
pub const DEFAULT_CAPACITY: usize = 128;
/// Default longest integration step between nodes, nm.
pub const DEFAULT_MAX_STEP_NM: f64 = 0.1;
/// Shortest allowed [`IntegrationRule::max_step`], nm.
pub const MIN_STEP_NM: f64 = 0.001;
/// Longest allowed [`IntegrationRule::max_step`], nm.
pub const MAX_STEP_NM: f64 = 10.0;
/// Upper bound on the steps of one sub-interval between nodes (a guard; a valid rule on the
/// supported range needs at most 2.4 · 10⁶).
const MAX_SUBSTEPS: f64 = 4_000_000.0;

/// Why a table was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SpectrumError {
    /// Fewer than two points.
    TooFewPoints,
    /// More points than the table's capacity.
    Capacity {
        /// The capacity of the table.
        capacity: usize,
    },
    /// The wavelength of point `index` is not finite or outside 100 ..= 2500 nm.
    Wavelength {
        /// Index of the offending point.
        index: usize,
    },
    /// The wavelength of point `index` is not greater than the one before.
    NotIncreasing {
        /// Index of the offending point.
        index: usize,
    },
    /// The value of point `index` is NaN, infinite or negative.
    Value {
        /// Index of the offending point.
        index: usize,
    },
    /// The value of point `index` is zero, and the table is interpolated log-linearly.
    ZeroForLogInterpolation {
        /// Index of the offending point.
        index: usize,
    },
}

impl core::fmt::Display for SpectrumError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::TooFewPoints => f.write_str("a spectral table needs at least two points"),
            Self::Capacity { capacity } => write!(f, "more than {capacity} points"),
            Self::Wavelength { index } => {
                write!(
                    f,
                    "point {index}: wavelength not finite or outside 100..=2500 nm"
                )
            }
            Self::NotIncreasing { index } => {
                write!(f, "point {index}: wavelengths must be strictly increasing")
            }
            Self::Value { index } => write!(f, "point {index}: value not finite or negative"),
            Self::ZeroForLogInterpolation { index } => {
                write!(f, "point {index}: zero value in a log-linear table")
            }
        }
    }
}

impl core::error::Error for SpectrumError {}

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

/// Check a list of `(nm, value)` points (see the [module documentation](self)).
fn validate(points: &[(f64, f64)]) -> Result<(), SpectrumError> {
    if points.len() < 2 {
        return Err(SpectrumError::TooFewPoints);
    }
    let mut previous: Option<f64> = None;
    for (index, &(nm, value)) in points.iter().enumerate() {
        if !nm.is_finite() || !(MIN_WAVELENGTH_NM..=MAX_WAVELENGTH_NM).contains(&nm) {
            return Err(SpectrumError::Wavelength { index });
        }
        if let Some(p) = previous {
            if nm <= p {
                return Err(SpectrumError::NotIncreasing { index });
            }
        }
        if !value.is_finite() || value < 0.0 {
            return Err(SpectrumError::Value { index });
        }
        previous = Some(nm);
    }
    Ok(())
}

/// A validated spectral table with capacity `N` points: `(vacuum wavelength, value)`.
///
/// What the value means depends on the use: spectral irradiance of a source (any unit, only
/// the shape matters), relative spectral responsivity of a detector, or a weighting function.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Spectrum<const N: usize = DEFAULT_CAPACITY> {
    /// Points as (nm, value), validated.
    points: heapless::Vec<(f64, f64), N>,
}

impl<const N: usize> Spectrum<N> {
    /// A table from `(nanometres, value)` pairs.
    ///
    /// # Errors
    /// [`SpectrumError`] naming the first offending point, or the capacity.
    pub fn from_nm(points: &[(f64, f64)]) -> Result<Self, SpectrumError> {
        validate(points)?;
        let mut v = heapless::Vec::new();
        v.extend_from_slice(points)
            .map_err(|_| SpectrumError::Capacity { capacity: N })?;
        Ok(Self { points: v })
    }

    /// A table from `(wavelength, value)` pairs.
    ///
    /// # Errors
    /// [`SpectrumError`] naming the first offending point, or the capacity.
    pub fn from_points(points: &[(Wavelength, f64)]) -> Result<Self, SpectrumError> {
        let mut v: heapless::Vec<(f64, f64), N> = heapless::Vec::new();
        for &(w, value) in points {
            v.push((snap_nm(w), value))
                .map_err(|_| SpectrumError::Capacity { capacity: N })?;
        }
        validate(&v)?;
        Ok(Self { points: v })
    }

    /// A borrowed view for the integrals.
    #[must_use]
    pub fn as_ref(&self) -> SpectrumRef<'_> {
        SpectrumRef {
            points: self.points.as_slice(),
        }
    }
}

/// A borrowed, validated spectral table (see [`Spectrum`]). Copy it freely.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SpectrumRef<'a> {
    points: &'a [(f64, f64)],
}

impl<'a> SpectrumRef<'a> {
    /// A view of `(nm, value)` points, validated.
    ///
    /// # Errors
    /// [`SpectrumError`] naming the first offending point.
    pub fn from_nm(points: &'a [(f64, f64)]) -> Result<Self, SpectrumError> {
        validate(points)?;
        Ok(Self { points })
    }

    /// A view of a static table that the crate's own tests validate.
    pub(crate) const fn from_nm_static(points: &'static [(f64, f64)]) -> SpectrumRef<'static> {
        SpectrumRef { points }
    }

    /// Number of points (≥ 2).
    #[must_use]
    pub const fn len(&self) -> usize {
        self.points.len()
    }

    /// Always `false`: a validated table has at least two points.
    #[must_use]
    pub const fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// The points as `(wavelength, value)`.
    pub fn points(&self) -> impl Iterator<Item = (Wavelength, f64)> + 'a {
        self.points
            .iter()
            .map(|&(nm, v)| (Wavelength::from_nm(nm), v))
    }

    /// The wavelength span of the table, first ..= last point.
    #[must_use]
    pub fn span(&self) -> (Wavelength, Wavelength) {
        let (lo, hi) = self.span_nm();
        (Wavelength::from_nm(lo), Wavelength::from_nm(hi))
    }

    pub(crate) fn span_nm(&self) -> (f64, f64) {
        let lo = self.points.first().map_or(f64::NAN, |p| p.0);
        let hi = self.points.last().map_or(f64::NAN, |p| p.0);
        (lo, hi)
    }

    /// Whether every value is > 0 (required for log-linear interpolation).
    ///
    /// # Errors
    /// [`SpectrumError::ZeroForLogInterpolation`] naming the first zero point.
    pub fn check_positive(&self) -> Result<(), SpectrumError> {
        match self.points.iter().position(|p| p.1 <= 0.0) {
            Some(index) => Err(SpectrumError::ZeroForLogInterpolation { index }),
            None => Ok(()),
        }
    }

    /// The bracketing points of `nm`: `(left, right)` with left.0 ≤ nm ≤ right.0, or `None`
    /// outside the table.
    fn bracket(&self, nm: f64) -> Option<((f64, f64), (f64, f64))> {
        let j = self.points.partition_point(|p| p.0 <= nm);
        if j == 0 {
            return None;
        }
        // j ≥ 1 here, so j − 1 cannot underflow.
        let left = *self.points.get(j - 1)?;
        match self.points.get(j) {
            Some(&right) => Some((left, right)),
            // nm ≥ last point: only nm == last is inside.
            None => (left.0 == nm).then_some((left, left)),
        }
    }

    /// Linear interpolation at `w`; `None` outside the table. A table point returns its
    /// value exactly.
    #[must_use]
    pub fn linear_at(&self, w: Wavelength) -> Option<f64> {
        self.linear_nm(snap_nm(w))
    }

    /// Log-linear interpolation at `w` (log of the value linear in wavelength; linear where a
    /// bracketing value is zero); `None` outside the table. A table point returns its value
    /// exactly.
    #[must_use]
    pub fn log_linear_at(&self, w: Wavelength) -> Option<f64> {
        self.log_linear_nm(snap_nm(w))
    }

    pub(crate) fn linear_nm(&self, nm: f64) -> Option<f64> {
        let ((x0, y0), (x1, y1)) = self.bracket(nm)?;
        if nm == x0 || x1 == x0 {
            return Some(y0);
        }
        let t = (nm - x0) / (x1 - x0);
        Some(y0 + t * (y1 - y0))
    }

    pub(crate) fn log_linear_nm(&self, nm: f64) -> Option<f64> {
        let ((x0, y0), (x1, y1)) = self.bracket(nm)?;
        if nm == x0 || x1 == x0 {
            return Some(y0);
        }
        if nm == x1 {
            return Some(y1);
        }
        let t = (nm - x0) / (x1 - x0);
        if y0 > 0.0 && y1 > 0.0 {
            // (y1/y0)^t as e^(t ln(y1/y0)): smaller on flash than `libm::pow`.
            Some(y0 * libm::exp(t * libm::log(y1 / y0)))
        } else {
            Some(y0 + t * (y1 - y0))
        }
    }

    /// The first table wavelength strictly greater than `nm`.
    pub(crate) fn next_point_after(&self, nm: f64) -> Option<f64> {
        let j = self.points.partition_point(|p| p.0 <= nm);
        self.points.get(j).map(|p| p.0)
    }
}

/// A wavelength band: the half-open interval `[lo, hi)` of vacuum wavelengths.
///
/// Half-open so that adjacent bands (UV-B = [280, 315), UV-A = [315, 400)) share no
/// wavelength: a line exactly at 315 nm is UV-A. For continuous spectra the choice does not
/// change any integral. Valid: finite, 100 nm ≤ lo < hi ≤ 2500 nm.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WavelengthRange {
    lo_nm: f64,
    hi_nm: f64,
}

/// Why a wavelength range was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RangeError {
    /// An edge is not finite or outside 100 ..= 2500 nm.
    Edge,
    /// The lower edge is not below the upper edge.
    Empty,
}

impl core::fmt::Display for RangeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Edge => "range edge not finite or outside 100..=2500 nm",
            Self::Empty => "range lower edge must be below its upper edge",
        })
    }
}

impl core::error::Error for RangeError {}

impl WavelengthRange {
    /// The band `[lo, hi)`.
    ///
    /// # Errors
    /// [`RangeError`] for a non-finite, out-of-range or empty interval.
    pub fn new(lo: Wavelength, hi: Wavelength) -> Result<Self, RangeError> {
        Self::from_nm(snap_nm(lo), snap_nm(hi))
    }

    /// The band `[lo_nm, hi_nm)` in nanometres.
    ///
    /// # Errors
    /// [`RangeError`] for a non-finite, out-of-range or empty interval.
    pub fn from_nm(lo_nm: f64, hi_nm: f64) -> Result<Self, RangeError> {
        let ok = |x: f64| x.is_finite() && (MIN_WAVELENGTH_NM..=MAX_WAVELENGTH_NM).contains(&x);
        if !ok(lo_nm) || !ok(hi_nm) {
            return Err(RangeError::Edge);
        }
        if lo_nm >= hi_nm {
            return Err(RangeError::Empty);
        }
        Ok(Self { lo_nm, hi_nm })
    }

    /// Lower (included) edge.
    #[must_use]
    pub fn lo(&self) -> Wavelength {
        Wavelength::from_nm(self.lo_nm)
    }

    /// Upper (excluded) edge.
    #[must_use]
    pub fn hi(&self) -> Wavelength {
        Wavelength::from_nm(self.hi_nm)
    }

    /// Width of the band, nm.
    #[must_use]
    pub fn width_nm(&self) -> f64 {
        self.hi_nm - self.lo_nm
    }

    /// Whether `w` lies in `[lo, hi)`.
    #[must_use]
    pub fn contains(&self, w: Wavelength) -> bool {
        self.contains_nm(snap_nm(w))
    }

    /// A range the crate's own constants guarantee valid.
    pub(crate) const fn from_nm_unchecked(lo_nm: f64, hi_nm: f64) -> Self {
        Self { lo_nm, hi_nm }
    }

    pub(crate) fn contains_nm(&self, nm: f64) -> bool {
        self.lo_nm <= nm && nm < self.hi_nm
    }

    pub(crate) const fn lo_nm(&self) -> f64 {
        self.lo_nm
    }

    pub(crate) const fn hi_nm(&self) -> f64 {
        self.hi_nm
    }
}

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

/// A validated source, ready to evaluate.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Shape<'a> {
    Line(f64),
    Led {
        /// Peak in 1/nm (proportional to photon energy).
        u0: f64,
        /// Energy standard deviation, 1/nm.
        sigma: f64,
        peak_nm: f64,
        lo_nm: f64,
        hi_nm: f64,
    },
    Table(SpectrumRef<'a>),
}

impl<'a> Shape<'a> {
    fn new(source: &Source<'a>) -> Result<Self, BandError> {
        match *source {
            Source::Line(w) => {
                BandFactors::new(&Band::Line(w))?;
                Ok(Self::Line(snap_nm(w)))
            }
            Source::Led { peak, fwhm } => {
                BandFactors::new(&Band::Led { peak, fwhm })?;
                // Centre and width solved so the wavelength maximum and FWHM per nm are the
                // configured ones (see `LedShape`).
                let shape = LedShape::new(peak, fwhm)?;
                let p = shape.peak_nm();
                let u0 = shape.centre_per_nm();
                let sigma = shape.sigma_per_nm();
                let u_hi = u0 + LED_TRUNCATION_SIGMA * sigma;
                let u_lo = (u0 - LED_TRUNCATION_SIGMA * sigma).max(1.0 / MAX_WAVELENGTH_NM);
                let lo_nm = (1.0 / u_hi).max(MIN_WAVELENGTH_NM);
                let hi_nm = (1.0 / u_lo).min(MAX_WAVELENGTH_NM);
                Ok(Self::Led {
                    u0,
                    sigma,
                    peak_nm: p,
                    lo_nm,
                    hi_nm,
                })
            }
            Source::Tabulated(t) => Ok(Self::Table(t)),
        }
    }

    /// Support of a continuous shape, closed.
    fn span(&self) -> (f64, f64) {
        match *self {
            Self::Line(nm) => (nm, nm),
            Self::Led { lo_nm, hi_nm, .. } => (lo_nm, hi_nm),
            Self::Table(t) => t.span_nm(),
        }
    }

    /// Spectral density at `nm` inside the support (relative units).
    fn density(&self, nm: f64) -> f64 {
        match *self {
            Self::Line(_) => 0.0,
            Self::Led { u0, sigma, .. } => {
                let u = 1.0 / nm;
                let z = (u - u0) / sigma;
                libm::exp(-0.5 * z * z) * u * u
            }
            Self::Table(t) => t.linear_nm(nm).unwrap_or(0.0),
        }
    }

    fn next_break_after(&self, nm: f64) -> Option<f64> {
        match *self {
            Self::Line(_) => None,
            Self::Led {
                peak_nm,
                lo_nm,
                hi_nm,
                ..
            } => [lo_nm, peak_nm, hi_nm].into_iter().find(|&b| b > nm),
            Self::Table(t) => t.next_point_after(nm),
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

/// Which integral was zero where a non-zero one is needed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Integral {
    /// The source has no power in the configured band.
    BandIrradiance,
    /// The detector does not respond to the source.
    DetectorSignal,
    /// The target weighting gives zero for the calibration source (mismatch factor).
    CalibrationWeighted,
}

/// Why a spectral configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SpectralError {
    /// The line or LED source is invalid.
    Source(BandError),
    /// A table is invalid.
    Table(SpectrumError),
    /// The configured band does not lie inside the detector's table.
    BandOutsideDetector,
    /// The detector's reference wavelength is outside its table, or its relative
    /// responsivity there is zero.
    Reference,
    /// The detector's absolute responsivity is not finite or ≤ 0.
    Responsivity,
    /// A user weighting table does not cover the configured band.
    WeightingDoesNotCoverBand,
    /// A weighting parameter is invalid (for example the erythema lower limit).
    Weighting,
    /// An integral that must be > 0 is zero.
    ZeroIntegral(Integral),
    /// The integration step is invalid.
    Rule,
    /// The detector active area is not finite or ≤ 0.
    ActiveArea,
    /// A certificate factor is not finite or ≤ 0.
    Factor,
    /// A result is not finite (an input far outside any physical range).
    NotFinite,
}

impl core::fmt::Display for SpectralError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Source(e) => write!(f, "source: {e}"),
            Self::Table(e) => write!(f, "table: {e}"),
            Self::BandOutsideDetector => f.write_str("band lies outside the detector table"),
            Self::Reference => {
                f.write_str("detector reference wavelength outside its table or with zero response")
            }
            Self::Responsivity => f.write_str("detector responsivity must be finite and > 0"),
            Self::WeightingDoesNotCoverBand => {
                f.write_str("weighting table does not cover the band")
            }
            Self::Weighting => f.write_str("invalid weighting parameter"),
            Self::ZeroIntegral(Integral::BandIrradiance) => {
                f.write_str("source has no power in the band")
            }
            Self::ZeroIntegral(Integral::DetectorSignal) => {
                f.write_str("detector does not respond to the source")
            }
            Self::ZeroIntegral(Integral::CalibrationWeighted) => {
                f.write_str("target weighting is zero for the calibration source")
            }
            Self::Rule => f.write_str("integration step must be within 0.001..=10 nm"),
            Self::ActiveArea => f.write_str("active area must be finite and > 0"),
            Self::Factor => f.write_str("certificate factor must be finite and > 0"),
            Self::NotFinite => f.write_str("spectral result is not finite"),
        }
    }
}

impl core::error::Error for SpectralError {}

impl From<SpectrumError> for SpectralError {
    fn from(e: SpectrumError) -> Self {
        Self::Table(e)
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

/// One factor of an integrand, evaluated inside its closed support.
#[derive(Clone, Copy)]
enum Term<'a> {
    /// A linearly interpolated table (detector relative responsivity).
    Table(SpectrumRef<'a>),
    /// A weighting function.
    Weight(&'a Weighting<'a>),
    /// Photons per joule at the wavelength, λ/(hc).
    PhotonsPerJoule,
}

impl Term<'_> {
    fn span(&self) -> (f64, f64) {
        match self {
            Self::Table(t) => t.span_nm(),
            Self::Weight(w) => w.support_nm(),
            Self::PhotonsPerJoule => (MIN_WAVELENGTH_NM, MAX_WAVELENGTH_NM),
        }
    }

    /// Whether a line at `nm` is inside the support (closed; a window is half-open).
    fn contains(&self, nm: f64) -> bool {
        match self {
            Self::Weight(w) => w.contains_nm(nm),
            _ => {
                let (lo, hi) = self.span();
                lo <= nm && nm <= hi
            }
        }
    }

    fn value(&self, nm: f64) -> f64 {
        match self {
            Self::Table(t) => t.linear_nm(nm).unwrap_or(0.0),
            Self::Weight(w) => w.value_in_support_nm(nm),
            Self::PhotonsPerJoule => nm * 1e-9 / si::HC_J_M,
        }
    }

    fn next_break_after(&self, nm: f64) -> Option<f64> {
        match self {
            Self::Table(t) => t.next_point_after(nm),
            Self::Weight(w) => w.next_break_after_nm(nm),
            Self::PhotonsPerJoule => None,
        }
    }
}

/// The interval an integral is asked for: the band `[lo, hi)`, or everything.
#[derive(Clone, Copy)]
enum Span {
    Band(WavelengthRange),
    All,
}

impl Span {
    fn bounds(&self) -> (f64, f64) {
        match self {
            Self::Band(b) => (b.lo_nm(), b.hi_nm()),
            Self::All => (MIN_WAVELENGTH_NM, MAX_WAVELENGTH_NM),
        }
    }

    fn contains(&self, nm: f64) -> bool {
        match self {
            Self::Band(b) => b.contains_nm(nm),
            Self::All => (MIN_WAVELENGTH_NM..=MAX_WAVELENGTH_NM).contains(&nm),
        }
    }
}

/// ∫ E(λ) Π terms dλ by the rule of the [module documentation](self).
fn integrate(shape: &Shape<'_>, span: Span, terms: &[Term<'_>], rule: &IntegrationRule) -> f64 {
    let integrand = |nm: f64| {
        terms
            .iter()
            .fold(shape.density(nm), |acc, t| acc * t.value(nm))
    };
    if let Shape::Line(nm) = *shape {
        let inside = span.contains(nm) && terms.iter().all(|t| t.contains(nm));
        return if inside {
            terms.iter().fold(1.0, |acc, t| acc * t.value(nm))
        } else {
            0.0
        };
    }
    let (mut a, mut b) = span.bounds();
    let (slo, shi) = shape.span();
    a = a.max(slo);
    b = b.min(shi);
    for t in terms {
        let (lo, hi) = t.span();
        a = a.max(lo);
        b = b.min(hi);
    }
    if a.partial_cmp(&b) != Some(core::cmp::Ordering::Less) {
        return 0.0;
    }
    let mut x = a;
    let mut fx = integrand(x);
    let mut sum = 0.0;
    while x < b {
        let mut next = b;
        if let Some(p) = shape.next_break_after(x) {
            next = next.min(p);
        }
        for t in terms {
            if let Some(p) = t.next_break_after(x) {
                next = next.min(p);
            }
        }
        if next <= x {
            // Cannot happen for finite breakpoints (each is > x); stop rather than loop.
            break;
        }
        let width = next - x;
        let steps = libm::ceil(width / rule.max_step_nm).clamp(1.0, MAX_SUBSTEPS);
        // Bounded by MAX_SUBSTEPS above, so the conversion is exact.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let n = steps as u32;
        let h = width / steps;
        let mut piece = 0.0;
        let mut f_left = fx;
        for k in 1..=n {
            let xk = if k == n {
                next
            } else {
                x + width * (f64::from(k) / steps)
            };
            let fk = integrand(xk);
            piece += f_left + fk;
            f_left = fk;
        }
        sum += 0.5 * h * piece;
        x = next;
        fx = f_left;
    }
    sum
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

    /// The [`Calibration`] for the [`Meter`](crate::irradiance::Meter): R_eff and the area.
    #[must_use]
    pub const fn calibration(&self, active_area: Area) -> Calibration {
        Calibration::Responsivity {
            responsivity: self.effective_responsivity,
            active_area,
        }
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

/// Refractive index of standard air minus one, (n − 1), at a wavelength: the dispersion
/// formula of Peck & Reeder, J. Opt. Soc. Am. 62, 958 (1972) (dry air, 15 °C, 101 325 Pa,
/// 0.03 % CO₂; reference key PR1972; coefficients from memory). EDLEN1966 and CIDDOR1996
/// (450 ppm CO₂) give n − 1 within 2·10⁻⁹ and 1.9·10⁻⁸ of it at 254–546 nm (computed from
/// their formulas, also from memory). Stated valid 230–1690 nm; `None` outside 200–2000 nm.
#[must_use]
pub fn air_refractivity(w: Wavelength) -> Option<f64> {
    let um = w.nm() * 1e-3;
    if !(0.2..=2.0).contains(&um) {
        return None;
    }
    let s2 = 1.0 / (um * um);
    Some(1e-8 * (8_060.51 + 2_480_990.0 / (132.274 - s2) + 17_455.7 / (39.329_57 - s2)))
}

/// The vacuum wavelength of a standard-air wavelength (line lists such as the mercury lines
/// are printed in air; every wavelength in this crate is a vacuum wavelength). `None` outside
/// the range of [`air_refractivity`]. The refractivity is evaluated at the air wavelength,
/// not the vacuum one; that shortcut makes the result long by about 2·10⁻⁸ relative at
/// 254 nm (5·10⁻⁶ nm), 7.5·10⁻⁹ at 365 nm and 3·10⁻⁹ at 546 nm (computed by iterating
/// λ_vac = λ_air · n(λ_vac) with the same formula) — far below the ±0.001 nm of the line
/// lists and the 2·10⁻⁸ spread between the air formulas themselves.
#[must_use]
pub fn air_to_vacuum(air: Wavelength) -> Option<Wavelength> {
    air_refractivity(air).map(|r| Wavelength::from_m(air.m() * (1.0 + r)))
}

/// Mercury emission lines as printed, **standard-air** wavelengths in nm (reference key
/// SSR1996: Sansonetti, Salit & Reader, Appl. Opt. 35, 74 (1996) and the NIST ASD).
/// Convert with [`air_to_vacuum`] before use. The third decimal of 253.652 and 296.728 nm is
/// from memory (the two-decimal values are verified).
pub mod mercury_air_nm {
    /// Resonance line (low-pressure lamps).
    pub const HG_253_652: f64 = 253.652;
    /// 296.7 nm line.
    pub const HG_296_728: f64 = 296.728;
    /// 302.2 nm line.
    pub const HG_302_150: f64 = 302.150;
    /// Stronger component of the 313 nm doublet.
    pub const HG_313_155: f64 = 313.155;
    /// 334.1 nm line.
    pub const HG_334_148: f64 = 334.148;
    /// i-line.
    pub const HG_365_015: f64 = 365.015;
    /// h-line.
    pub const HG_404_656: f64 = 404.656;
    /// g-line.
    pub const HG_435_833: f64 = 435.833;
    /// Green line.
    pub const HG_546_074: f64 = 546.074;
}

#[cfg(test)]
mod tests;
