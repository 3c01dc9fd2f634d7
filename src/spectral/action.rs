//! Action spectra: the weighting functions the spectral integrals multiply a source by — the
//! CIE erythema spectrum, the ICNIRP 2004 / IEC 62471 UV hazard S(λ) and blue-light hazard
//! B(λ) tables with their interpolation rules, unweighted UV-A and windows, and user tables —
//! as one [`Weighting`] enum and its [`WeightingKind`]. It depends only on the shared tables
//! ([`table`](crate::spectral::table)) and [`band`](crate::spectral::band)'s wavelength
//! limits; the integrals ([`spectrum`](crate::spectral::spectrum)) evaluate it and the
//! read-outs ([`weighting`](crate::spectral::weighting), which re-exports every item here)
//! turn it into factors. Configuration time only.
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
//! [`UvBandEdges`]: crate::spectral::weighting::UvBandEdges

use crate::quantity::Wavelength;
use crate::spectral::band::snap_nm;
use crate::spectral::table::{SpectralError, SpectrumRef, WavelengthRange};

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
    ///
    /// [`blue_light_small_source_max_time`]:
    ///     crate::spectral::weighting::blue_light_small_source_max_time
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
