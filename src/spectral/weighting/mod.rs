//! Weighting functions (action spectra), UV band edges, and the weighted read-outs.
//!
//! # Weightings
//!
//! | [`Weighting`] | function | support | standard |
//! | --- | --- | --- | --- |
//! | `None` | 1 on the configured band | the band `[lo, hi)` | – |
//! | `Window(r)` | 1 on `r` | `[lo, hi)` | – |
//! | `CieErythema` | [`cie_erythema`] | lower limit (default 250 nm) ..= 400 nm | ISO/CIE 17166 (CIE S 007) |
//! | `UvHazard` | [`uv_hazard`], [`UV_HAZARD_TABLE`] log-linear | 180 ..= 400 nm | ICNIRP 2004 / IEC 62471 S(λ) |
//! | `UvaUnweighted` | 1 | 315 ..= 400 nm | ICNIRP 2004 / IEC 62471 UV-A eye limit |
//! | `BlueLightHazard` | [`blue_light_hazard`], [`BLUE_LIGHT_HAZARD_TABLE`] | 300 ..= 700 nm | IEC 62471 / ICNIRP 2013 B(λ) |
//! | `Table` | a user table, linear or log-linear | the table's span | user data |
//!
//! The standard weightings are defined on their standards' **closed** ranges (S(400 nm) has a
//! printed value) and are zero outside. Band edges ([`UvBandEdges`], windows) are
//! **half-open**, so adjacent bands share no wavelength.
//!
//! The erythema spectrum is the ISO/CIE form with the constant **140** in the UV-A piece,
//! which makes the two pieces meet at 328 nm; the older "139" form found in several codes is
//! 3.4 % lower above 328 nm and jumps there. The UV hazard function is the ICNIRP 2004 table
//! with log-linear interpolation between its rows; the analytic fits in circulation differ
//! from the table by up to ~50 % and are not the standard.
//!
//! # Read-outs: one integral, many units
//!
//! For a fixed source shape, band and weighting, the weighted irradiance is a constant times
//! the band irradiance ([`weighted_fraction`]), so the
//! weighted exposure is the same constant times the radiant exposure the dose integrator
//! already keeps. [`FactorSet`] holds those constants; [`WeightedIrradiance`] and
//! [`WeightedExposure`] carry which weighting they are in, so a UV index can only be read from
//! an erythemal quantity and a maximum exposure time only from a UV-hazard one.

use crate::quantity::{Irradiance, RadiantExposure, Seconds, Wavelength};
use crate::spectral::spectrum::{
    snap_nm, weighted_fraction, Detector, IntegrationRule, RangeError, Source, SpectralError,
    SpectralFactors, SpectrumRef, WavelengthRange,
};
use core::ops::Mul;

/// k_er: UV index per W/m² of erythemally weighted irradiance (WHO/WMO/UNEP/ICNIRP, *Global
/// Solar UV Index: A Practical Guide*, 2002): UVI = 40 m²/W · E_er.
pub const UV_INDEX_PER_W_PER_M2: f64 = 40.0;
/// One standard erythema dose, J/m² erythemally weighted (ISO 17166 / CIE S 007).
pub const SED_J_PER_M2: f64 = 100.0;
/// Daily limit of UV-hazard-weighted radiant exposure, J/m² within any 8 h (ICNIRP 2004;
/// IEC 62471 §4.3.1; EU Directive 2006/25/EC Annex I).
pub const UV_HAZARD_LIMIT_J_PER_M2: f64 = 30.0;
/// Default lower limit of the erythemal integral, nm (WHO 2002; the NOAA Brewer network's
/// practice — common practice, no source — uses
/// 286.5 nm).
pub const ERYTHEMA_LOWER_LIMIT_NM: f64 = 250.0;
/// Upper end of the erythema spectrum, nm (ISO/CIE 17166).
pub const ERYTHEMA_UPPER_LIMIT_NM: f64 = 400.0;
/// UV-A range of the ICNIRP 2004 / IEC 62471 unweighted eye limit, nm.
pub const UVA_LIMIT_RANGE_NM: (f64, f64) = (315.0, 400.0);
/// Range of the blue-light hazard function B(λ), nm (IEC62471 Table 4.2; ICNIRP2013).
pub const BLUE_LIGHT_RANGE_NM: (f64, f64) = (300.0, 700.0);
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

/// Blue-light hazard function B(λ), (nm, B), the tabulated part 300–500 nm in 5 nm steps.
///
/// Source: IEC62471 Table 4.2 (the same function as ICNIRP2013 and EU2006 Annex I Table 1.3;
/// see [`crate::references`]). **Values from memory**, not read in the printed tables; the
/// whole function is compared with the B(λ) of the luxpy library (its IEC 62471 data, version
/// named in `hosttests/refcheck/`) by `hosttests/tests/refcheck.rs`. Printed digits are kept
/// exactly. Above 500 nm the standard gives a formula, not rows:
/// B(λ) = 10^((450 − λ)/50) for 500 < λ ≤ 600 nm and 0.001 for 600 < λ ≤ 700 nm
/// ([`blue_light_hazard`]). Between rows B(λ) is interpolated linearly (the standard gives
/// no interpolation rule; linear is common practice, no source).
pub const BLUE_LIGHT_HAZARD_TABLE: [(f64, f64); 41] = [
    (300.0, 0.01),
    (305.0, 0.01),
    (310.0, 0.01),
    (315.0, 0.01),
    (320.0, 0.01),
    (325.0, 0.01),
    (330.0, 0.01),
    (335.0, 0.01),
    (340.0, 0.01),
    (345.0, 0.01),
    (350.0, 0.01),
    (355.0, 0.01),
    (360.0, 0.01),
    (365.0, 0.01),
    (370.0, 0.01),
    (375.0, 0.01),
    (380.0, 0.01),
    (385.0, 0.013),
    (390.0, 0.025),
    (395.0, 0.05),
    (400.0, 0.10),
    (405.0, 0.20),
    (410.0, 0.40),
    (415.0, 0.80),
    (420.0, 0.90),
    (425.0, 0.95),
    (430.0, 0.98),
    (435.0, 1.00),
    (440.0, 1.00),
    (445.0, 0.97),
    (450.0, 0.94),
    (455.0, 0.90),
    (460.0, 0.80),
    (465.0, 0.70),
    (470.0, 0.62),
    (475.0, 0.55),
    (480.0, 0.45),
    (485.0, 0.40),
    (490.0, 0.22),
    (495.0, 0.16),
    (500.0, 0.10),
];

fn blue_table() -> SpectrumRef<'static> {
    SpectrumRef::from_nm_static(&BLUE_LIGHT_HAZARD_TABLE)
}

fn blue_light_nm(nm: f64) -> f64 {
    let (lo, hi) = BLUE_LIGHT_RANGE_NM;
    if !(lo..=hi).contains(&nm) {
        0.0
    } else if nm <= 500.0 {
        blue_table().linear_nm(nm).unwrap_or(0.0)
    } else if nm <= 600.0 {
        exp10((450.0 - nm) / 50.0)
    } else {
        0.001
    }
}

/// The blue-light hazard function B(λ) (IEC62471 Table 4.2, ICNIRP2013): the rows of
/// [`BLUE_LIGHT_HAZARD_TABLE`] (a row returns its printed value exactly, linear between
/// rows) for 300–500 nm, 10^((450 − λ)/50) for 500 < λ ≤ 600 nm, 0.001 for 600 < λ ≤ 700 nm,
/// 0 outside 300 ..= 700 nm. Dimensionless, 0 ≤ B ≤ 1. Configuration time only (`libm::exp`).
#[must_use]
pub fn blue_light_hazard(w: Wavelength) -> f64 {
    blue_light_nm(snap_nm(w))
}

/// Largest number of weightings a [`FactorSet`] holds.
pub const MAX_WEIGHTINGS: usize = 6;

/// ICNIRP 2004 relative spectral effectiveness S(λ), (nm, S), 180–400 nm.
///
/// Source: ICNIRP2004 Table 1 (see [`crate::references`]); from 240 nm the same values are the
/// ACGIH2022 S(λ). The rows were read in two independent reproductions of these tables, not
/// in the printed ICNIRP guideline itself: rows marked (1) (2) agree in both; rows marked †
/// were found only in a reproduction of the ACGIH table (equal to ICNIRP2004 from 240 nm);
/// rows marked ‡ (below 240 nm) only in a reproduction of the ICNIRP table (ACGIH2022
/// differs there; ICNIRP2004 is shipped). Printed digits are kept exactly.
pub const UV_HAZARD_TABLE: [(f64, f64); 56] = [
    (180.0, 0.012),    // ‡
    (190.0, 0.019),    // ‡
    (200.0, 0.030),    // ‡
    (205.0, 0.051),    // ‡
    (210.0, 0.075),    // ‡
    (215.0, 0.095),    // ‡
    (220.0, 0.120),    // ‡
    (225.0, 0.150),    // ‡
    (230.0, 0.190),    // ‡
    (235.0, 0.240),    // ‡
    (240.0, 0.300),    // (1) (2)
    (245.0, 0.360),    // (1) (2)
    (250.0, 0.430),    // (1) (2)
    (254.0, 0.500),    // (1) (2)
    (255.0, 0.520),    // (1) (2)
    (260.0, 0.650),    // (1) (2)
    (265.0, 0.810),    // (1) (2)
    (270.0, 1.000),    // (1) (2)
    (275.0, 0.960),    // (1) (2)
    (280.0, 0.880),    // (1) (2)
    (285.0, 0.770),    // (1) (2)
    (290.0, 0.640),    // (1) (2)
    (295.0, 0.540),    // (1) (2)
    (297.0, 0.460),    // (1) (2)
    (300.0, 0.300),    // (1) (2)
    (303.0, 0.120),    // (1) (2)
    (305.0, 0.060),    // (1) (2)
    (308.0, 0.026),    // †
    (310.0, 0.015),    // (1) (2)
    (313.0, 0.006),    // (1) (2)
    (315.0, 0.003),    // (1) (2)
    (316.0, 0.0024),   // †
    (317.0, 0.0020),   // †
    (318.0, 0.0016),   // †
    (319.0, 0.0012),   // †
    (320.0, 0.0010),   // (1) (2)
    (322.0, 0.00067),  // †
    (323.0, 0.00054),  // †
    (325.0, 0.00050),  // (1) (2)
    (328.0, 0.00044),  // †
    (330.0, 0.00041),  // (1) (2)
    (333.0, 0.00037),  // †
    (335.0, 0.00034),  // (1) (2)
    (340.0, 0.00028),  // (1) (2)
    (345.0, 0.00024),  // (1) (2)
    (350.0, 0.00020),  // (1) (2)
    (355.0, 0.00016),  // (1) (2)
    (360.0, 0.00013),  // (1) (2)
    (365.0, 0.00011),  // (1) (2)
    (370.0, 0.000093), // (1) (2)
    (375.0, 0.000077), // (1) (2)
    (380.0, 0.000064), // (1) (2)
    (385.0, 0.000053), // (1) (2)
    (390.0, 0.000044), // (1) (2)
    (395.0, 0.000036), // (1) (2)
    (400.0, 0.000030), // (1) (2)
];

fn hazard_table() -> SpectrumRef<'static> {
    SpectrumRef::from_nm_static(&UV_HAZARD_TABLE)
}

/// The CIE erythema reference action spectrum s_er(λ) (ISO/CIE 17166, CIE S 007), relative:
///
/// - 1 for 250 ≤ λ ≤ 298 nm;
/// - 10^(0.094 (298 − λ)) for 298 < λ ≤ 328 nm;
/// - 10^(0.015 (140 − λ)) for 328 < λ ≤ 400 nm;
/// - 0 outside 250 ..= 400 nm (not defined there).
///
/// Configuration time only (`libm::exp`).
#[must_use]
pub fn cie_erythema(w: Wavelength) -> f64 {
    erythema_nm(snap_nm(w))
}

fn erythema_nm(nm: f64) -> f64 {
    if !(ERYTHEMA_LOWER_LIMIT_NM..=ERYTHEMA_UPPER_LIMIT_NM).contains(&nm) {
        0.0
    } else if nm <= 298.0 {
        1.0
    } else if nm <= 328.0 {
        exp10(0.094 * (298.0 - nm))
    } else {
        exp10(0.015 * (140.0 - nm))
    }
}

/// 10^x as e^(x ln 10): `libm::exp10` links a 4 KB table; this costs < 1e-15 relative for
/// the |x| ≤ 4 used here.
fn exp10(x: f64) -> f64 {
    libm::exp(x * core::f64::consts::LN_10)
}

/// The ICNIRP 2004 / IEC 62471 UV hazard function S(λ): [`UV_HAZARD_TABLE`] with log-linear
/// interpolation between rows (a row returns its printed value exactly), 0 outside
/// 180 ..= 400 nm. Configuration time only (`libm::pow`).
#[must_use]
pub fn uv_hazard(w: Wavelength) -> f64 {
    hazard_table().log_linear_nm(snap_nm(w)).unwrap_or(0.0)
}

/// How a user weighting table is interpolated between its points.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Interpolation {
    /// Linear in the value (default).
    #[default]
    Linear,
    /// Linear in the logarithm of the value (action spectra spanning decades); every value
    /// must be > 0.
    LogLinear,
}

/// A weighting function (see the [module documentation](self)).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Weighting<'a> {
    /// Unweighted, over the configured band: weighted = band irradiance.
    None,
    /// Unweighted over a range `[lo, hi)` (for example a curing-trade band).
    Window(WavelengthRange),
    /// The CIE erythema spectrum from `lower_limit` to 400 nm. Valid lower limit:
    /// 250 ≤ λ < 400 nm (WHO 2002 uses 250 nm, [`Weighting::CIE_ERYTHEMA`]).
    CieErythema {
        /// Lower limit of the integral.
        lower_limit: Wavelength,
    },
    /// The ICNIRP 2004 / IEC 62471 UV hazard function S(λ), 180–400 nm.
    UvHazard,
    /// Unweighted UV-A, 315–400 nm (ICNIRP 2004 / IEC 62471 eye limit).
    UvaUnweighted,
    /// The blue-light (retinal photochemical) hazard function B(λ), 300–700 nm
    /// ([`blue_light_hazard`]). The weighted irradiance E_B it gives is the quantity of the
    /// **small-source** limit ([`blue_light_small_source_max_time`]); a photodiode measures
    /// irradiance, not radiance, so the large-source radiance limits (L_B in a field of view
    /// that depends on the exposure time) are not implemented: assess large sources with a
    /// radiance measurement.
    BlueLightHazard,
    /// A user table. It must cover the configured band.
    Table {
        /// The caller's identifier, reported in [`WeightingKind::User`].
        id: u16,
        /// The weighting values (relative, ≥ 0).
        table: SpectrumRef<'a>,
        /// Interpolation between points.
        interpolation: Interpolation,
    },
}

impl Weighting<'_> {
    /// The erythema spectrum with the WHO 2002 lower limit, 250 nm.
    pub const CIE_ERYTHEMA: Self = Self::CieErythema {
        lower_limit: Wavelength::from_nm(ERYTHEMA_LOWER_LIMIT_NM),
    };

    /// Which weighting this is, without its data.
    #[must_use]
    pub const fn kind(&self) -> WeightingKind {
        match self {
            Self::None => WeightingKind::None,
            Self::Window(_) => WeightingKind::Window,
            Self::CieErythema { .. } => WeightingKind::CieErythema,
            Self::UvHazard => WeightingKind::UvHazard,
            Self::UvaUnweighted => WeightingKind::UvaUnweighted,
            Self::BlueLightHazard => WeightingKind::BlueLightHazard,
            Self::Table { id, .. } => WeightingKind::User(*id),
        }
    }

    /// The weighting value at `w` (0 outside its support; `None` and `Window` give 1 inside
    /// their range, `None` everywhere).
    #[must_use]
    pub fn value_at(&self, w: Wavelength) -> f64 {
        let nm = snap_nm(w);
        let (lo, hi) = self.support_nm();
        if (lo..=hi).contains(&nm) {
            self.value_in_support_nm(nm)
        } else {
            0.0
        }
    }

    /// Validate the weighting for use with `band`.
    pub(crate) fn check_for_band(&self, band: WavelengthRange) -> Result<(), SpectralError> {
        match self {
            Self::CieErythema { lower_limit } => {
                let l = snap_nm(*lower_limit);
                if l.is_finite() && (ERYTHEMA_LOWER_LIMIT_NM..ERYTHEMA_UPPER_LIMIT_NM).contains(&l)
                {
                    Ok(())
                } else {
                    Err(SpectralError::Weighting)
                }
            }
            Self::Table {
                table,
                interpolation,
                ..
            } => {
                if *interpolation == Interpolation::LogLinear {
                    table.check_positive().map_err(SpectralError::Table)?;
                }
                let (lo, hi) = table.span_nm();
                if band.lo_nm() >= lo && band.hi_nm() <= hi {
                    Ok(())
                } else {
                    Err(SpectralError::WeightingDoesNotCoverBand)
                }
            }
            _ => Ok(()),
        }
    }

    /// Closed support, nm.
    pub(crate) fn support_nm(&self) -> (f64, f64) {
        match self {
            Self::None => (
                crate::spectral::band::MIN_WAVELENGTH_NM,
                crate::spectral::band::MAX_WAVELENGTH_NM,
            ),
            Self::Window(r) => (r.lo_nm(), r.hi_nm()),
            Self::CieErythema { lower_limit } => (snap_nm(*lower_limit), ERYTHEMA_UPPER_LIMIT_NM),
            Self::UvHazard => hazard_table().span_nm(),
            Self::UvaUnweighted => UVA_LIMIT_RANGE_NM,
            Self::BlueLightHazard => BLUE_LIGHT_RANGE_NM,
            Self::Table { table, .. } => table.span_nm(),
        }
    }

    /// Whether a line at `nm` is weighted (closed support; a window is half-open).
    pub(crate) fn contains_nm(&self, nm: f64) -> bool {
        match self {
            Self::Window(r) => r.contains_nm(nm),
            _ => {
                let (lo, hi) = self.support_nm();
                lo <= nm && nm <= hi
            }
        }
    }

    /// The continuous formula inside the support (the value at a support edge is the limit
    /// from inside).
    pub(crate) fn value_in_support_nm(&self, nm: f64) -> f64 {
        match self {
            Self::None | Self::Window(_) | Self::UvaUnweighted => 1.0,
            Self::CieErythema { .. } => erythema_nm(nm),
            Self::UvHazard => hazard_table().log_linear_nm(nm).unwrap_or(0.0),
            Self::BlueLightHazard => blue_light_nm(nm),
            Self::Table {
                table,
                interpolation,
                ..
            } => match interpolation {
                Interpolation::Linear => table.linear_nm(nm),
                Interpolation::LogLinear => table.log_linear_nm(nm),
            }
            .unwrap_or(0.0),
        }
    }

    /// Kinks and table points strictly after `nm`.
    pub(crate) fn next_break_after_nm(&self, nm: f64) -> Option<f64> {
        match self {
            Self::CieErythema { .. } => [298.0, 328.0].into_iter().find(|&b| b > nm),
            Self::UvHazard => hazard_table().next_point_after(nm),
            Self::BlueLightHazard => blue_table()
                .next_point_after(nm)
                .or_else(|| [600.0, BLUE_LIGHT_RANGE_NM.1].into_iter().find(|&b| b > nm)),
            Self::Table { table, .. } => table.next_point_after(nm),
            _ => None,
        }
    }
}

/// Which weighting a factor or quantity is in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WeightingKind {
    /// Unweighted band.
    None,
    /// Unweighted window.
    Window,
    /// CIE erythema.
    CieErythema,
    /// ICNIRP 2004 / IEC 62471 UV hazard S(λ).
    UvHazard,
    /// Unweighted UV-A 315–400 nm.
    UvaUnweighted,
    /// Blue-light hazard B(λ), 300–700 nm (IEC 62471 / ICNIRP 2013).
    BlueLightHazard,
    /// A user table with the caller's identifier.
    User(u16),
}

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
