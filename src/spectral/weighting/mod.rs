//! Weighted read-outs (UV index, SED, hazard time limits, factor sets) and the UV band edges.
//!
//! Built on the action spectra of [`action`](crate::spectral::action), re-exported here
//! ([`Weighting`], [`cie_erythema`], [`uv_hazard`], [`blue_light_hazard`] and their tables),
//! and on the integrals of [`spectrum`](crate::spectral::spectrum): this module depends on
//! both, neither depends on it.
//!
//! # Read-outs: one integral, many units
//!
//! For a fixed source shape, band and weighting, the weighted irradiance is a constant times
//! the band irradiance ([`weighted_fraction`]), so the
//! weighted exposure is the same constant times the radiant exposure the dose integrator
//! already keeps. [`FactorSet`] holds those constants; [`WeightedIrradiance`] and
//! [`WeightedExposure`] carry which weighting they are in, so a UV index can only be read from
//! an erythemal quantity and a maximum exposure time only from a UV-hazard one.

pub use crate::spectral::action::{
    blue_light_hazard, cie_erythema, uv_hazard, Interpolation, Weighting, WeightingKind,
    BLUE_LIGHT_HAZARD_TABLE, BLUE_LIGHT_RANGE_NM, ERYTHEMA_LOWER_LIMIT_NM, ERYTHEMA_UPPER_LIMIT_NM,
    UVA_LIMIT_RANGE_NM, UV_HAZARD_TABLE,
};

use crate::quantity::{Irradiance, RadiantExposure, Seconds, Wavelength};
use crate::spectral::band::snap_nm;
use crate::spectral::spectrum::{
    weighted_fraction, Detector, IntegrationRule, Source, SpectralFactors,
};
use crate::spectral::table::{RangeError, SpectralError, WavelengthRange};
use core::ops::Mul;

/// k_er: UV index per W/m² of erythemally weighted irradiance (WHO/WMO/UNEP/ICNIRP, *Global
/// Solar UV Index: A Practical Guide*, 2002): UVI = 40 m²/W · E_er.
pub const UV_INDEX_PER_W_PER_M2: f64 = 40.0;
/// One standard erythema dose, J/m² erythemally weighted (ISO 17166 / CIE S 007).
pub const SED_J_PER_M2: f64 = 100.0;
/// Daily limit of UV-hazard-weighted radiant exposure, J/m² within any 8 h (ICNIRP 2004;
/// IEC 62471 §4.3.1; EU Directive 2006/25/EC Annex I).
pub const UV_HAZARD_LIMIT_J_PER_M2: f64 = 30.0;
/// Small-source blue-light limit on the weighted radiant exposure, J/m²: E_B · t ≤ 100 J/m²
/// for t ≤ [`BLUE_LIGHT_SMALL_SOURCE_BREAK_S`] (IEC62471 §4.3.4; values from memory).
pub const BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2: f64 = 100.0;
/// Exposure duration at which the small-source blue-light limit changes form, s
/// (IEC62471 §4.3.4: 10⁴ s; from memory).
pub const BLUE_LIGHT_SMALL_SOURCE_BREAK_S: f64 = 1.0e4;
/// Small-source blue-light limit on the weighted irradiance for exposures longer than
/// [`BLUE_LIGHT_SMALL_SOURCE_BREAK_S`], W/m² (IEC62471 §4.3.4: E_B ≤ 0.01 W/m²; from memory).
/// Equals the exposure limit divided by the break time, so the two forms meet at 10⁴ s.
pub const BLUE_LIGHT_SMALL_SOURCE_MAX_W_PER_M2: f64 = 0.01;
/// Largest angular subtense of a "small source" for the irradiance form of the blue-light
/// limit, rad (IEC62471 §4.3.4: α < 0.011 rad; from memory). Larger sources need the
/// radiance limits, which this crate does not implement (see [`Weighting::BlueLightHazard`]).
pub const BLUE_LIGHT_SMALL_SOURCE_MAX_ANGLE_RAD: f64 = 0.011;

/// Largest number of weightings a [`FactorSet`] holds.
pub const MAX_WEIGHTINGS: usize = 6;

/// The UV sub-bands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum UvBand {
    /// UV-C.
    UvC,
    /// UV-B.
    UvB,
    /// UV-A.
    UvA,
}

/// UV band edges as configuration: UV-C = [c, b), UV-B = [b, a), UV-A = [a, end), half-open.
///
/// Defaults ([`UvBandEdges::CIE`]): UV-C 100–280, UV-B 280–315, UV-A 315–400 nm (CIE /
/// ISO 21348 / Directive 2006/25/EC Art. 2). The curing trade and older photobiology put the
/// UV-B/UV-A edge at 320 nm; configure it if you need that.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct UvBandEdges {
    uvc_lo_nm: f64,
    uvb_lo_nm: f64,
    uva_lo_nm: f64,
    uva_hi_nm: f64,
}

impl Default for UvBandEdges {
    /// [`UvBandEdges::CIE`].
    fn default() -> Self {
        Self::CIE
    }
}

impl UvBandEdges {
    /// CIE defaults: 100, 280, 315, 400 nm.
    pub const CIE: Self = Self {
        uvc_lo_nm: 100.0,
        uvb_lo_nm: 280.0,
        uva_lo_nm: 315.0,
        uva_hi_nm: 400.0,
    };

    /// Edges from short to long wavelength: UV-C start, UV-B start, UV-A start, UV-A end.
    ///
    /// # Errors
    /// [`RangeError::Edge`] for an edge that is not finite or outside 100..=2500 nm,
    /// [`RangeError::Empty`] unless the edges strictly increase.
    pub fn new(
        uvc_lo: Wavelength,
        uvb_lo: Wavelength,
        uva_lo: Wavelength,
        uva_hi: Wavelength,
    ) -> Result<Self, RangeError> {
        WavelengthRange::new(uvc_lo, uvb_lo)?;
        WavelengthRange::new(uvb_lo, uva_lo)?;
        WavelengthRange::new(uva_lo, uva_hi)?;
        Ok(Self {
            uvc_lo_nm: snap_nm(uvc_lo),
            uvb_lo_nm: snap_nm(uvb_lo),
            uva_lo_nm: snap_nm(uva_lo),
            uva_hi_nm: snap_nm(uva_hi),
        })
    }

    /// The range of a sub-band.
    #[must_use]
    pub const fn range(&self, band: UvBand) -> WavelengthRange {
        // Edges were validated to strictly increase inside the supported range.
        match band {
            UvBand::UvC => WavelengthRange::from_nm_unchecked(self.uvc_lo_nm, self.uvb_lo_nm),
            UvBand::UvB => WavelengthRange::from_nm_unchecked(self.uvb_lo_nm, self.uva_lo_nm),
            UvBand::UvA => WavelengthRange::from_nm_unchecked(self.uva_lo_nm, self.uva_hi_nm),
        }
    }

    /// The sub-band of a wavelength, or `None` outside UV-C start ..< UV-A end.
    #[must_use]
    pub fn classify(&self, w: Wavelength) -> Option<UvBand> {
        [UvBand::UvC, UvBand::UvB, UvBand::UvA]
            .into_iter()
            .find(|&b| self.range(b).contains(w))
    }
}

/// A UV index value (dimensionless), UVI = 40 m²/W · E_er (WHO 2002).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct UvIndex(f64);

/// WHO 2002 UV index exposure categories (of the index rounded to an integer).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum UvIndexCategory {
    /// 0–2.
    Low,
    /// 3–5.
    Moderate,
    /// 6–7.
    High,
    /// 8–10.
    VeryHigh,
    /// 11 and above.
    Extreme,
}

impl UvIndex {
    /// From an erythemally weighted irradiance in W/m².
    #[must_use]
    pub fn from_erythemal_w_per_m2(e_er: f64) -> Self {
        Self(UV_INDEX_PER_W_PER_M2 * e_er)
    }

    /// The unrounded index.
    #[must_use]
    pub const fn value(self) -> f64 {
        self.0
    }

    /// The index rounded to the nearest integer (halves up), as WHO 2002 reports it; 0 for
    /// negative or NaN values, saturating at `u32::MAX`.
    #[must_use]
    pub fn rounded(self) -> u32 {
        let r = libm::floor(self.0 + 0.5);
        if r.is_nan() || r <= 0.0 {
            0
        } else if r >= f64::from(u32::MAX) {
            u32::MAX
        } else {
            // 0 < r < u32::MAX and integral: exact.
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let v = r as u32;
            v
        }
    }

    /// The WHO 2002 category of the rounded index.
    #[must_use]
    pub fn category(self) -> UvIndexCategory {
        match self.rounded() {
            0..=2 => UvIndexCategory::Low,
            3..=5 => UvIndexCategory::Moderate,
            6..=7 => UvIndexCategory::High,
            8..=10 => UvIndexCategory::VeryHigh,
            _ => UvIndexCategory::Extreme,
        }
    }
}

/// How long an exposure may last.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TimeLimit {
    /// No limit from this rule at this irradiance.
    Unlimited,
    /// At most this long (per 8 h day).
    Within(Seconds),
}

/// Which UV-A eye rule applies (the two differ ~29× for long exposures; never merge them).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum UvaEyeRule {
    /// IEC 62471:2006 §4.3.2 (same values as ICNIRP 2004): E·t ≤ 10⁴ J/m² for t ≤ 1000 s,
    /// E ≤ 10 W/m² for longer exposures.
    Iec62471,
    /// EU Directive 2006/25/EC Annex I Table 1.1 (b): H_UVA ≤ 10⁴ J/m² per 8 h day.
    Directive2006,
}

impl UvaEyeRule {
    /// Allowed UV-A radiant exposure (315–400 nm, unweighted) after an exposure lasting
    /// `duration`: IEC 62471 as max(10⁴ J/m², 10 W/m² × t) (continuous at 1000 s); the
    /// Directive a flat 10⁴ J/m² per 8 h.
    #[must_use]
    pub fn allowance(self, duration: Seconds) -> RadiantExposure {
        match self {
            Self::Iec62471 => {
                RadiantExposure::from_j_per_m2(libm::fmax(1.0e4, 10.0 * duration.s()))
            }
            Self::Directive2006 => RadiantExposure::from_j_per_m2(1.0e4),
        }
    }
}

/// Maximum exposure time under a UV-A eye rule for an unweighted UV-A irradiance
/// (315–400 nm). Zero, negative or NaN irradiance is unlimited.
#[must_use]
pub fn uva_eye_max_time(e_uva: Irradiance, rule: UvaEyeRule) -> TimeLimit {
    let e = e_uva.w_per_m2();
    if e.is_nan() || e <= 0.0 {
        return TimeLimit::Unlimited;
    }
    match rule {
        UvaEyeRule::Iec62471 if e <= 10.0 => TimeLimit::Unlimited,
        _ => TimeLimit::Within(Seconds::from_s(1.0e4 / e)),
    }
}

/// Allowed blue-light-weighted radiant exposure H_B after an exposure lasting `duration`,
/// small source (IEC62471 §4.3.4, from memory): 100 J/m² for t ≤ 10⁴ s, then
/// 0.01 W/m² × t — that is, max(100 J/m², 0.01 W/m² × t), continuous at 10⁴ s. `duration` in
/// s, finite and ≥ 0 (NaN or negative gives 100 J/m²). Kind [`WeightingKind::BlueLightHazard`].
#[must_use]
pub fn blue_light_small_source_allowance(duration: Seconds) -> WeightedExposure {
    let t = duration.s();
    let j = if t.is_finite() {
        libm::fmax(
            BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2,
            BLUE_LIGHT_SMALL_SOURCE_MAX_W_PER_M2 * t,
        )
    } else if t > 0.0 {
        f64::INFINITY
    } else {
        BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2
    };
    WeightedExposure::from_j_per_m2(j, WeightingKind::BlueLightHazard)
}

/// Maximum exposure time under the small-source blue-light limit (IEC62471 §4.3.4, from
/// memory) for a blue-light-weighted irradiance E_B: `Unlimited` for E_B ≤ 0.01 W/m² (or zero,
/// negative, NaN), else t_max = 100 J/m² / E_B (< 10⁴ s). `None` if `e_b` is not a
/// [`WeightingKind::BlueLightHazard`] quantity. Valid only for a source subtending less than
/// [`BLUE_LIGHT_SMALL_SOURCE_MAX_ANGLE_RAD`] at the eye.
///
/// For the exposure monitor: a rolling window of 10⁴ s with a limit of 100 J/m² on the
/// B(λ)-weighted exposure enforces both forms (E_B · t ≤ 100 J/m² within any 10⁴ s; a mean
/// E_B ≤ 0.01 W/m² over every 10⁴ s of a longer exposure).
#[must_use]
pub fn blue_light_small_source_max_time(e_b: WeightedIrradiance) -> Option<TimeLimit> {
    (e_b.kind == WeightingKind::BlueLightHazard).then(|| {
        let e = e_b.w_per_m2;
        if e.is_nan() || e <= BLUE_LIGHT_SMALL_SOURCE_MAX_W_PER_M2 {
            TimeLimit::Unlimited
        } else {
            TimeLimit::Within(Seconds::from_s(BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2 / e))
        }
    })
}

/// A weighted (effective) irradiance, W/m², tagged with its weighting.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightedIrradiance {
    w_per_m2: f64,
    kind: WeightingKind,
}

impl WeightedIrradiance {
    /// From W/m² (weighted) in `kind`.
    #[must_use]
    pub const fn from_w_per_m2(w_per_m2: f64, kind: WeightingKind) -> Self {
        Self { w_per_m2, kind }
    }

    /// In W/m² (weighted).
    #[must_use]
    pub const fn w_per_m2(self) -> f64 {
        self.w_per_m2
    }

    /// The weighting.
    #[must_use]
    pub const fn kind(self) -> WeightingKind {
        self.kind
    }

    /// The UV index, for an erythemal irradiance only.
    #[must_use]
    pub fn uv_index(self) -> Option<UvIndex> {
        (self.kind == WeightingKind::CieErythema)
            .then(|| UvIndex::from_erythemal_w_per_m2(self.w_per_m2))
    }

    /// t_max = 30 J/m² / E_eff (IEC 62471 §4.3.1 Eq. 4.2), for a UV-hazard irradiance only;
    /// unlimited for zero or negative E_eff.
    #[must_use]
    pub fn max_exposure_time(self) -> Option<TimeLimit> {
        (self.kind == WeightingKind::UvHazard).then(|| {
            if self.w_per_m2 > 0.0 {
                TimeLimit::Within(Seconds::from_s(UV_HAZARD_LIMIT_J_PER_M2 / self.w_per_m2))
            } else {
                TimeLimit::Unlimited
            }
        })
    }
}

/// A weighted (effective) radiant exposure, J/m², tagged with its weighting.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightedExposure {
    j_per_m2: f64,
    kind: WeightingKind,
}

impl WeightedExposure {
    /// From J/m² (weighted) in `kind`.
    #[must_use]
    pub const fn from_j_per_m2(j_per_m2: f64, kind: WeightingKind) -> Self {
        Self { j_per_m2, kind }
    }

    /// In J/m² (weighted).
    #[must_use]
    pub const fn j_per_m2(self) -> f64 {
        self.j_per_m2
    }

    /// The weighting.
    #[must_use]
    pub const fn kind(self) -> WeightingKind {
        self.kind
    }

    /// In standard erythema doses (1 SED = 100 J/m²), for an erythemal exposure only.
    #[must_use]
    pub fn sed(self) -> Option<f64> {
        (self.kind == WeightingKind::CieErythema).then(|| self.j_per_m2 / SED_J_PER_M2)
    }

    /// Fraction of the 30 J/m² daily limit, for a UV-hazard exposure only.
    #[must_use]
    pub fn fraction_of_daily_limit(self) -> Option<f64> {
        (self.kind == WeightingKind::UvHazard).then(|| self.j_per_m2 / UV_HAZARD_LIMIT_J_PER_M2)
    }
}

impl Mul<Seconds> for WeightedIrradiance {
    type Output = WeightedExposure;
    fn mul(self, rhs: Seconds) -> WeightedExposure {
        WeightedExposure::from_j_per_m2(self.w_per_m2 * rhs.s(), self.kind)
    }
}

/// The constant relating a weighted quantity to the band quantity:
/// weighted = `fraction` × band (irradiance or exposure).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WeightedFactor {
    kind: WeightingKind,
    fraction: f64,
}

impl WeightedFactor {
    /// Compute the factor (configuration time) with
    /// [`weighted_fraction`].
    ///
    /// # Errors
    /// As [`weighted_fraction`].
    pub fn new(
        source: &Source<'_>,
        band: WavelengthRange,
        weighting: &Weighting<'_>,
        rule: &IntegrationRule,
    ) -> Result<Self, SpectralError> {
        Ok(Self {
            kind: weighting.kind(),
            fraction: weighted_fraction(source, band, weighting, rule)?,
        })
    }

    /// The weighting.
    #[must_use]
    pub const fn kind(&self) -> WeightingKind {
        self.kind
    }

    /// Weighted ÷ band quantity (dimensionless, ≥ 0).
    #[must_use]
    pub const fn fraction(&self) -> f64 {
        self.fraction
    }

    /// The weighted irradiance of a band irradiance.
    #[must_use]
    pub fn irradiance(&self, band: Irradiance) -> WeightedIrradiance {
        WeightedIrradiance::from_w_per_m2(band.w_per_m2() * self.fraction, self.kind)
    }

    /// The weighted exposure of a band radiant exposure (the dose integrator's read-out).
    #[must_use]
    pub fn exposure(&self, band: RadiantExposure) -> WeightedExposure {
        WeightedExposure::from_j_per_m2(band.j_per_m2() * self.fraction, self.kind)
    }

    /// The band radiant exposure at which the weighted exposure reaches `level` (to set a
    /// dose threshold in the integrator). `None` if the weighting gives zero for this source
    /// (the level is never reached) or the kinds differ.
    #[must_use]
    pub fn band_exposure_for(&self, level: WeightedExposure) -> Option<RadiantExposure> {
        (level.kind == self.kind && self.fraction > 0.0)
            .then(|| RadiantExposure::from_j_per_m2(level.j_per_m2 / self.fraction))
    }
}

/// Everything the read-out needs for one configured source, band and detector: the
/// [`SpectralFactors`] and one [`WeightedFactor`] per requested weighting.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FactorSet {
    spectral: SpectralFactors,
    weighted: heapless::Vec<WeightedFactor, MAX_WEIGHTINGS>,
}

/// Why a [`FactorSet`] could not be built.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FactorSetError {
    /// A spectral computation failed; `weighting` is the index of the weighting concerned,
    /// `None` for the band/detector factors.
    Spectral {
        /// Index into the weightings passed, if the error belongs to one.
        weighting: Option<usize>,
        /// The error.
        error: SpectralError,
    },
    /// More than [`MAX_WEIGHTINGS`] weightings.
    TooManyWeightings,
    /// Two weightings of the same kind (a read-out by kind would be ambiguous).
    DuplicateKind {
        /// Index of the second one.
        index: usize,
    },
}

impl core::fmt::Display for FactorSetError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Spectral {
                weighting: Some(i),
                error,
            } => write!(f, "weighting {i}: {error}"),
            Self::Spectral {
                weighting: None,
                error,
            } => write!(f, "band/detector: {error}"),
            Self::TooManyWeightings => write!(f, "more than {MAX_WEIGHTINGS} weightings"),
            Self::DuplicateKind { index } => write!(f, "weighting {index} repeats a kind"),
        }
    }
}

impl core::error::Error for FactorSetError {}

impl FactorSet {
    /// Compute all factors at once (configuration time only), so they all refer to the same
    /// source shape.
    ///
    /// # Errors
    /// [`FactorSetError`] naming the failing part.
    pub fn new(
        source: &Source<'_>,
        band: WavelengthRange,
        detector: &Detector<'_>,
        weightings: &[Weighting<'_>],
        rule: &IntegrationRule,
    ) -> Result<Self, FactorSetError> {
        let spectral = SpectralFactors::new(source, band, detector, rule).map_err(|error| {
            FactorSetError::Spectral {
                weighting: None,
                error,
            }
        })?;
        let mut weighted: heapless::Vec<WeightedFactor, MAX_WEIGHTINGS> = heapless::Vec::new();
        for (index, w) in weightings.iter().enumerate() {
            if weighted.iter().any(|f| f.kind == w.kind()) {
                return Err(FactorSetError::DuplicateKind { index });
            }
            let f = WeightedFactor::new(source, band, w, rule).map_err(|error| {
                FactorSetError::Spectral {
                    weighting: Some(index),
                    error,
                }
            })?;
            weighted
                .push(f)
                .map_err(|_| FactorSetError::TooManyWeightings)?;
        }
        Ok(Self { spectral, weighted })
    }

    /// The band/detector factors.
    #[must_use]
    pub const fn spectral(&self) -> &SpectralFactors {
        &self.spectral
    }

    /// The factor of a weighting, if configured.
    #[must_use]
    pub fn factor(&self, kind: WeightingKind) -> Option<WeightedFactor> {
        self.weighted.iter().find(|f| f.kind == kind).copied()
    }

    /// Weighted irradiance of a band irradiance, if `kind` is configured.
    #[must_use]
    pub fn weighted_irradiance(
        &self,
        kind: WeightingKind,
        band: Irradiance,
    ) -> Option<WeightedIrradiance> {
        self.factor(kind).map(|f| f.irradiance(band))
    }

    /// Weighted exposure of a band radiant exposure, if `kind` is configured.
    #[must_use]
    pub fn weighted_exposure(
        &self,
        kind: WeightingKind,
        band: RadiantExposure,
    ) -> Option<WeightedExposure> {
        self.factor(kind).map(|f| f.exposure(band))
    }

    /// UV index of a band irradiance, if erythema weighting is configured.
    #[must_use]
    pub fn uv_index(&self, band: Irradiance) -> Option<UvIndex> {
        self.weighted_irradiance(WeightingKind::CieErythema, band)
            .and_then(WeightedIrradiance::uv_index)
    }

    /// Erythemal exposure in SED of a band radiant exposure, if erythema is configured.
    #[must_use]
    pub fn sed(&self, band: RadiantExposure) -> Option<f64> {
        self.weighted_exposure(WeightingKind::CieErythema, band)
            .and_then(WeightedExposure::sed)
    }

    /// Small-source blue-light t_max at a band irradiance, if the blue-light weighting is
    /// configured (see [`blue_light_small_source_max_time`]).
    #[must_use]
    pub fn blue_light_max_time(&self, band: Irradiance) -> Option<TimeLimit> {
        self.weighted_irradiance(WeightingKind::BlueLightHazard, band)
            .and_then(blue_light_small_source_max_time)
    }

    /// t_max = 30/E_eff at a band irradiance, if the UV hazard weighting is configured.
    #[must_use]
    pub fn hazard_max_time(&self, band: Irradiance) -> Option<TimeLimit> {
        self.weighted_irradiance(WeightingKind::UvHazard, band)
            .and_then(WeightedIrradiance::max_exposure_time)
    }
}

#[cfg(test)]
mod tests;
