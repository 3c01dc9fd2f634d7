//! How much a weighted factor moves when an LED's peak wavelength is anywhere within its
//! datasheet tolerance, and the conservative factor to use for safety limits.
//!
//! # Why
//!
//! LED datasheets state the peak wavelength with a tolerance (often ±2.5 nm or ±5 nm between
//! parts of one type, plus a drift with temperature and drive current). On a steep action
//! spectrum the weighted factor changes a lot across that tolerance: ICNIRP S(λ) falls about
//! tenfold from 300 to 310 nm, and B(λ) doubles from 400 to 405 nm. A factor computed at the
//! nominal peak can therefore understate the hazard of the actual part. For a limit that
//! protects people, use the **largest** factor over the tolerance
//! ([`FactorRange::conservative_fraction`]): it can only make warnings and alarms come early.
//! For process targets (a dose to reach), the nominal factor and the range are what to
//! report; do not use the conservative factor to stop a cure (it would stop early).
//!
//! # How
//!
//! [`led_factor_range`] computes [`weighted_fraction`] for [`TOLERANCE_SAMPLES`] LED bands
//! whose peaks are evenly spaced over `peak − tolerance ..= peak + tolerance` (the ends and
//! the nominal peak included), with the configured FWHM, and reports the smallest, the
//! largest and the nominal fraction. The factor of an LED band is a smooth function of its
//! peak (the band averages the weighting over its width), so with samples 1/20 of the
//! tolerance range apart the largest sampled value is within the change of the factor over
//! one spacing of the true maximum; a weighting whose maximum lies inside the tolerance (for
//! example B(λ) at 435–440 nm) is covered by the interior samples. Configuration time only.

use crate::quantity::Wavelength;
use crate::spectral::action::{Weighting, WeightingKind};
use crate::spectral::band::snap_nm;
use crate::spectral::spectrum::{weighted_fraction, IntegrationRule, Source};
use crate::spectral::table::{SpectralError, WavelengthRange};

/// Number of peaks sampled across the tolerance (odd: the nominal peak is a sample).
pub const TOLERANCE_SAMPLES: u32 = 21;

/// Largest peak tolerance accepted, nm (a tolerance beyond this is not a datasheet tolerance).
pub const MAX_PEAK_TOLERANCE_NM: f64 = 50.0;

/// Why a factor range could not be computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ToleranceError {
    /// The tolerance is NaN, negative or above [`MAX_PEAK_TOLERANCE_NM`].
    Tolerance,
    /// A spectral computation failed (invalid band, a sampled peak outside the supported
    /// range, a zero integral, ...).
    Spectral(SpectralError),
}

impl core::fmt::Display for ToleranceError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Tolerance => write!(
                f,
                "peak tolerance must be finite and within 0..={MAX_PEAK_TOLERANCE_NM} nm"
            ),
            Self::Spectral(e) => write!(f, "{e}"),
        }
    }
}

impl core::error::Error for ToleranceError {}

/// The weighted fraction of an LED band over its peak tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FactorRange {
    /// The weighting.
    pub kind: WeightingKind,
    /// Weighted ÷ band quantity at the nominal peak (dimensionless, ≥ 0).
    pub nominal: f64,
    /// Smallest sampled fraction.
    pub min: f64,
    /// Peak at which `min` was found, nm.
    pub min_at_nm: f64,
    /// Largest sampled fraction.
    pub max: f64,
    /// Peak at which `max` was found, nm.
    pub max_at_nm: f64,
}

impl FactorRange {
    /// The fraction to use for a limit that protects people: the largest over the tolerance.
    #[must_use]
    pub const fn conservative_fraction(&self) -> f64 {
        self.max
    }

    /// Largest ÷ nominal (≥ 1 when the nominal fraction is > 0; infinite if the nominal
    /// fraction is 0 and the largest is not).
    #[must_use]
    pub fn max_over_nominal(&self) -> f64 {
        self.max / self.nominal
    }
}

/// The weighted fraction of an LED (`peak`, `fwhm` as for [`crate::spectral::band::Band::Led`]) over
/// `peak ± tolerance` in the configured `band`, with `weighting` and `rule`.
///
/// Valid: `tolerance` finite, 0 ≤ tolerance ≤ [`MAX_PEAK_TOLERANCE_NM`]; every sampled peak
/// must be a valid LED peak.
///
/// # Errors
/// [`ToleranceError::Tolerance`] for an invalid tolerance; otherwise
/// [`ToleranceError::Spectral`] with the error of [`weighted_fraction`] (for example an
/// invalid band, or a sampled peak outside the supported range).
pub fn led_factor_range(
    peak: Wavelength,
    fwhm: Wavelength,
    tolerance: Wavelength,
    band: WavelengthRange,
    weighting: &Weighting<'_>,
    rule: &IntegrationRule,
) -> Result<FactorRange, ToleranceError> {
    let tol = snap_nm(tolerance);
    if !(tol.is_finite() && (0.0..=MAX_PEAK_TOLERANCE_NM).contains(&tol)) {
        return Err(ToleranceError::Tolerance);
    }
    let p = snap_nm(peak);
    let at = |nm: f64| {
        weighted_fraction(
            &Source::Led {
                peak: Wavelength::from_nm(nm),
                fwhm,
            },
            band,
            weighting,
            rule,
        )
        .map_err(ToleranceError::Spectral)
    };
    let nominal = at(p)?;
    let mut range = FactorRange {
        kind: weighting.kind(),
        nominal,
        min: nominal,
        min_at_nm: p,
        max: nominal,
        max_at_nm: p,
    };
    let half = TOLERANCE_SAMPLES / 2;
    for i in 0..TOLERANCE_SAMPLES {
        if i == half {
            continue;
        }
        let nm = p - tol + 2.0 * tol * f64::from(i) / f64::from(TOLERANCE_SAMPLES - 1);
        let f = at(nm)?;
        if f < range.min {
            range.min = f;
            range.min_at_nm = nm;
        }
        if f > range.max {
            range.max = f;
            range.max_at_nm = nm;
        }
    }
    Ok(range)
}
