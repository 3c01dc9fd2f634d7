//! Stored quantities and identities: the integers a record holds, each with its unit in
//! every name (µJ/m², mW/m², pm), and the session, calibration and configuration identities
//! ([`SessionId`], [`CalibrationId`], [`ConfigDigest`]) with the canonical bytes of the
//! configuration digest.

use crate::acquire::reading::RangeIndex;
use crate::control::session::{ActiveLevel, DoseAmount, SessionConfig};
use crate::frontend::MAX_RANGES;
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Wavelength};

use super::CRC;

/// A radiant exposure as stored on flash: whole µJ/m² (1 mJ/cm² = 10⁷ µJ/m²).
/// Range 0 ..= 2⁶⁴ − 1 µJ/m² (≈ 1.8·10¹³ J/m²).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredExposure(pub(super) u64);

impl StoredExposure {
    /// Zero.
    pub const ZERO: Self = Self(0);
    /// From whole µJ/m².
    #[must_use]
    pub const fn from_uj_per_m2(uj_per_m2: u64) -> Self {
        Self(uj_per_m2)
    }
    /// In whole µJ/m².
    #[must_use]
    pub const fn uj_per_m2(self) -> u64 {
        self.0
    }
    /// As a [`RadiantExposure`] (exact below 2⁵³ µJ/m²).
    #[must_use]
    pub fn radiant_exposure(self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.0 as f64 * 1e-6)
    }
    /// Rounded up to whole µJ/m² (for bounds that must not undershoot). Negative values give
    /// zero; NaN and values too large give the maximum (the safe side of an upper bound).
    #[must_use]
    pub fn round_up(h: RadiantExposure) -> Self {
        let uj = h.j_per_m2() * 1e6;
        if uj.is_nan() {
            return Self(u64::MAX);
        }
        // `as` saturates: negative → 0, too large → u64::MAX.
        Self(libm::ceil(uj) as u64)
    }
    /// Rounded down to whole µJ/m² (for the delivered dose). Negative values and NaN give zero.
    #[must_use]
    pub fn round_down(h: RadiantExposure) -> Self {
        // `as` saturates and maps NaN to 0.
        Self(libm::floor(h.j_per_m2() * 1e6) as u64)
    }
    /// `self + rhs`, saturating at the maximum.
    #[must_use]
    pub const fn saturating_add(self, rhs: Self) -> Self {
        Self(self.0.saturating_add(rhs.0))
    }
}

/// An irradiance as stored on flash: whole mW/m² (1 mW/cm² = 10 000 mW/m²), signed.
/// Range ±2 147 483 647 mW/m² (≈ ±214 W/cm²).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredIrradiance(pub(super) i32);

impl StoredIrradiance {
    /// Zero.
    pub const ZERO: Self = Self(0);
    /// From whole mW/m².
    #[must_use]
    pub const fn from_mw_per_m2(mw_per_m2: i32) -> Self {
        Self(mw_per_m2)
    }
    /// In whole mW/m².
    #[must_use]
    pub const fn mw_per_m2(self) -> i32 {
        self.0
    }
    /// As an [`Irradiance`].
    #[must_use]
    pub fn irradiance(self) -> Irradiance {
        Irradiance::from_w_per_m2(f64::from(self.0) * 1e-3)
    }
    /// Rounded to the nearest mW/m², saturating; NaN gives zero.
    #[must_use]
    pub fn round_nearest(e: Irradiance) -> Self {
        Self(libm::round(e.w_per_m2() * 1e3) as i32)
    }
    /// Rounded up to whole mW/m², saturating; NaN gives the maximum.
    #[must_use]
    pub fn round_up(e: Irradiance) -> Self {
        let mw = e.w_per_m2() * 1e3;
        if mw.is_nan() {
            return Self(i32::MAX);
        }
        Self(libm::ceil(mw) as i32)
    }
}

/// A vacuum wavelength as stored on flash: whole picometres. Range 0 ..= 4.29 mm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredWavelength(pub(super) u32);

impl StoredWavelength {
    /// From whole picometres.
    #[must_use]
    pub const fn from_pm(pm: u32) -> Self {
        Self(pm)
    }
    /// In whole picometres.
    #[must_use]
    pub const fn pm(self) -> u32 {
        self.0
    }
    /// As a [`Wavelength`].
    #[must_use]
    pub fn wavelength(self) -> Wavelength {
        Wavelength::from_m(f64::from(self.0) * 1e-12)
    }
    /// Rounded to the nearest picometre, saturating; NaN gives zero.
    #[must_use]
    pub fn round_nearest(w: Wavelength) -> Self {
        Self(libm::round(w.m() * 1e12) as u32)
    }
}

/// Identity of a session: the sequence number of its original start record (≥ 1);
/// 0 means "outside any session".
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionId(pub u32);

/// Identity of the calibration in use (a certificate number or a calibration counter), chosen
/// by the integrator; recorded, never interpreted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CalibrationId(pub u32);

/// Digest of a configuration: CRC-32/ISO-HDLC of the canonical configuration bytes.
///
/// [`ConfigDigest::of`] defines the bytes, in this order, all little-endian:
///
/// | bytes | value |
/// | --- | --- |
/// | 4 | tick rate, Hz (`u32`) |
/// | 8 × [`MAX_RANGES`] | J/m² per integer dose unit of each range, `f64` bits (0 for absent ranges) |
/// | 8 | calibration factor, (W/m²)/A, `f64` bits |
/// | 8 | band photons per joule, `f64` bits |
/// | 1 (+ 8) | sample area: `0`, or `1` then m² as `f64` bits |
/// | 1 + 8 | target: unit tag (`0` J/m², `1` mol/m², `2` mol) then value `f64` bits |
/// | 1 + 8 | tolerance: as the target |
/// | 4 | maximum gap, ticks (`u32`) |
/// | 2 | tolerated unusable run (`u16`) |
/// | 1 + 1 | enable and alarm active levels (`0` high, `1` low) |
///
/// Dark offsets are not included: they change at run time after a dark capture.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ConfigDigest(pub u32);

impl ConfigDigest {
    /// The digest of a meter and a session configuration (see the type doc for the bytes).
    #[must_use]
    pub fn of(meter: &Meter, config: &SessionConfig) -> Self {
        let mut d = CRC.digest();
        d.update(&meter.tick_rate().hz().to_le_bytes());
        for r in 0..MAX_RANGES {
            // MAX_RANGES is small (≤ 255), so the index fits a u8.
            let k = meter.j_per_m2_per_unit(RangeIndex(r as u8));
            d.update(&k.to_bits().to_le_bytes());
        }
        d.update(&meter.calibration().w_per_m2_per_a().to_bits().to_le_bytes());
        d.update(&meter.band().photons_per_j().to_bits().to_le_bytes());
        match meter.sample_area() {
            None => d.update(&[0]),
            Some(a) => {
                d.update(&[1]);
                d.update(&a.m2().to_bits().to_le_bytes());
            }
        }
        for dose in [config.target, config.tolerance] {
            let (tag, v) = match dose {
                DoseAmount::RadiantExposure(h) => (0u8, h.j_per_m2()),
                DoseAmount::PhotonExposure(p) => (1, p.mol_per_m2()),
                DoseAmount::Photons(n) => (2, n.mol()),
            };
            d.update(&[tag]);
            d.update(&v.to_bits().to_le_bytes());
        }
        d.update(&config.max_gap_ticks.to_le_bytes());
        d.update(&config.max_unusable_run.to_le_bytes());
        let level = |l: ActiveLevel| match l {
            ActiveLevel::High => 0u8,
            ActiveLevel::Low => 1u8,
        };
        d.update(&[level(config.enable_level), level(config.alarm_level)]);
        Self(d.finalize())
    }
}
