//! Validated spectral tables, wavelength ranges, and the error of the spectral configuration
//! path: the primitives every spectral module builds on. A [`Spectrum`] owns a fixed-capacity
//! table of `(vacuum wavelength, value)` points and a [`SpectrumRef`] borrows one (validated
//! once: at least two points, wavelengths finite, inside 100 ..= 2500 nm and strictly
//! increasing, values finite and ≥ 0; linear or log-linear between points, zero outside);
//! a [`WavelengthRange`] is a half-open band `[lo, hi)`; [`SpectralError`] names why a
//! spectral configuration was rejected. This module depends on nothing spectral but
//! [`band`](crate::spectral::band)'s wavelength limits, so the action spectra
//! ([`action`](crate::spectral::action)) and the integrals
//! ([`spectrum`](crate::spectral::spectrum)) share it without depending on each other.

use crate::quantity::Wavelength;
use crate::spectral::band::{snap_nm, BandError, MAX_WAVELENGTH_NM, MIN_WAVELENGTH_NM};

/// Default capacity of a [`Spectrum`] table, points.
pub const DEFAULT_CAPACITY: usize = 128;

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
