//! Physical quantities: one newtype per quantity, one SI unit inside, the unit in every name.
//!
//! Every quantity stores a single `f64` in its SI (or SI-derived) unit and is built and read
//! only through functions whose names carry the unit (`from_mj_per_cm2`, `.w_per_m2()`), so a
//! number can never change meaning silently at a module boundary. Only the arithmetic that
//! the physics allows is implemented:
//!
//! | left | op | right | result |
//! | --- | --- | --- | --- |
//! | [`Irradiance`] | `*` | [`Seconds`] | [`RadiantExposure`] |
//! | [`PhotonIrradiance`] | `*` | [`Seconds`] | [`PhotonExposure`] |
//! | [`PhotonExposure`] | `*` | [`Area`] | [`PhotonAmount`] |
//! | [`PhotonFlux`] | `*` | [`Seconds`] | [`PhotonAmount`] |
//! | exposure or amount | `+` / `-` | the same | the same |
//!
//! These are values for configuration and read-out. The per-sample path of the dose engine
//! never touches them: it works in integers (see [`crate::dose`]).
//!
//! Wavelengths are **vacuum** wavelengths throughout the crate. Line lists (for example the
//! mercury lines) are usually printed as standard-air wavelengths; convert before use (the
//! difference is about 0.03 % at 254–436 nm).

use core::ops::{Add, Mul, Sub};

/// The SI 2019 defining constants and values derived from them (all exact by definition).
pub mod si {
    /// Planck constant h, J s (exact, SI Brochure 9th ed. 2019).
    pub const PLANCK_J_S: f64 = 6.626_070_15e-34;
    /// Speed of light in vacuum c, m/s (exact, SI Brochure 9th ed. 2019).
    pub const SPEED_OF_LIGHT_M_PER_S: f64 = 299_792_458.0;
    /// Elementary charge e, C (exact, SI Brochure 9th ed. 2019).
    pub const ELEMENTARY_CHARGE_C: f64 = 1.602_176_634e-19;
    /// Avogadro constant N_A, 1/mol (exact, SI Brochure 9th ed. 2019).
    pub const AVOGADRO_PER_MOL: f64 = 6.022_140_76e23;
    /// h·c, J m (derived).
    pub const HC_J_M: f64 = PLANCK_J_S * SPEED_OF_LIGHT_M_PER_S;
}

/// A vacuum wavelength. Stored in metres.
///
/// Valid range for this crate's configuration: finite and > 0; bands further restrict it.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Wavelength(f64);

impl Wavelength {
    /// A wavelength from nanometres (vacuum).
    #[must_use]
    pub const fn from_nm(nm: f64) -> Self {
        Self(nm * 1e-9)
    }
    /// A wavelength from metres (vacuum).
    #[must_use]
    pub const fn from_m(m: f64) -> Self {
        Self(m)
    }
    /// The wavelength in nanometres.
    #[must_use]
    pub fn nm(self) -> f64 {
        self.0 * 1e9
    }
    /// The wavelength in metres.
    #[must_use]
    pub const fn m(self) -> f64 {
        self.0
    }
    /// Energy of one photon of this vacuum wavelength, E = h c / λ.
    #[must_use]
    pub fn photon_energy(self) -> PhotonEnergy {
        PhotonEnergy::from_j(si::HC_J_M / self.0)
    }
}

/// The energy of one photon. Stored in joules.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonEnergy(f64);

impl PhotonEnergy {
    /// A photon energy from joules.
    #[must_use]
    pub const fn from_j(j: f64) -> Self {
        Self(j)
    }
    /// A photon energy from electronvolts (1 eV = e × 1 J/C, exact).
    #[must_use]
    pub const fn from_ev(ev: f64) -> Self {
        Self(ev * si::ELEMENTARY_CHARGE_C)
    }
    /// The energy in joules.
    #[must_use]
    pub const fn j(self) -> f64 {
        self.0
    }
    /// The energy in electronvolts.
    #[must_use]
    pub fn ev(self) -> f64 {
        self.0 / si::ELEMENTARY_CHARGE_C
    }
    /// Molar photon energy (energy of one einstein), kJ/mol.
    #[must_use]
    pub fn kj_per_mol(self) -> f64 {
        self.0 * si::AVOGADRO_PER_MOL * 1e-3
    }
    /// The vacuum wavelength of a photon of this energy, λ = h c / E.
    #[must_use]
    pub fn wavelength(self) -> Wavelength {
        Wavelength::from_m(si::HC_J_M / self.0)
    }
}

/// Irradiance E: radiant power received per unit area. Stored in W/m².
///
/// 1 mW/cm² = 10 W/m² (exact).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Irradiance(f64);

impl Irradiance {
    /// Zero irradiance.
    pub const ZERO: Self = Self(0.0);
    /// From W/m².
    #[must_use]
    pub const fn from_w_per_m2(w_per_m2: f64) -> Self {
        Self(w_per_m2)
    }
    /// From mW/cm² (1 mW/cm² = 10 W/m²).
    #[must_use]
    pub const fn from_mw_per_cm2(mw_per_cm2: f64) -> Self {
        Self(mw_per_cm2 * 10.0)
    }
    /// In W/m².
    #[must_use]
    pub const fn w_per_m2(self) -> f64 {
        self.0
    }
    /// In mW/cm².
    #[must_use]
    pub fn mw_per_cm2(self) -> f64 {
        self.0 * 0.1
    }
}

/// Photon irradiance: photons received per unit area and time. Stored in mol m⁻² s⁻¹
/// (einstein m⁻² s⁻¹).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonIrradiance(f64);

impl PhotonIrradiance {
    /// From mol m⁻² s⁻¹.
    #[must_use]
    pub const fn from_mol_per_m2_s(v: f64) -> Self {
        Self(v)
    }
    /// From µmol m⁻² s⁻¹.
    #[must_use]
    pub const fn from_umol_per_m2_s(v: f64) -> Self {
        Self(v * 1e-6)
    }
    /// From photons m⁻² s⁻¹.
    #[must_use]
    pub const fn from_photons_per_m2_s(v: f64) -> Self {
        Self(v / si::AVOGADRO_PER_MOL)
    }
    /// In mol m⁻² s⁻¹.
    #[must_use]
    pub const fn mol_per_m2_s(self) -> f64 {
        self.0
    }
    /// In µmol m⁻² s⁻¹.
    #[must_use]
    pub fn umol_per_m2_s(self) -> f64 {
        self.0 * 1e6
    }
    /// In photons m⁻² s⁻¹.
    #[must_use]
    pub fn photons_per_m2_s(self) -> f64 {
        self.0 * si::AVOGADRO_PER_MOL
    }
}

/// Radiant exposure H: the time integral of irradiance. Stored in J/m².
///
/// 1 mJ/cm² = 10 J/m² (exact). The curing trade also calls it "energy density".
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RadiantExposure(f64);

impl RadiantExposure {
    /// Zero exposure.
    pub const ZERO: Self = Self(0.0);
    /// From J/m².
    #[must_use]
    pub const fn from_j_per_m2(j_per_m2: f64) -> Self {
        Self(j_per_m2)
    }
    /// From mJ/cm² (1 mJ/cm² = 10 J/m²).
    #[must_use]
    pub const fn from_mj_per_cm2(mj_per_cm2: f64) -> Self {
        Self(mj_per_cm2 * 10.0)
    }
    /// In J/m².
    #[must_use]
    pub const fn j_per_m2(self) -> f64 {
        self.0
    }
    /// In mJ/cm².
    #[must_use]
    pub fn mj_per_cm2(self) -> f64 {
        self.0 * 0.1
    }
}

/// Photon exposure: the time integral of photon irradiance. Stored in mol/m² (einstein/m²).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonExposure(f64);

impl PhotonExposure {
    /// From mol/m².
    #[must_use]
    pub const fn from_mol_per_m2(v: f64) -> Self {
        Self(v)
    }
    /// From µmol/m².
    #[must_use]
    pub const fn from_umol_per_m2(v: f64) -> Self {
        Self(v * 1e-6)
    }
    /// In mol/m².
    #[must_use]
    pub const fn mol_per_m2(self) -> f64 {
        self.0
    }
    /// In µmol/m².
    #[must_use]
    pub fn umol_per_m2(self) -> f64 {
        self.0 * 1e6
    }
}

/// An amount of photons. Stored in mol (einstein).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonAmount(f64);

impl PhotonAmount {
    /// From mol (einstein).
    #[must_use]
    pub const fn from_mol(mol: f64) -> Self {
        Self(mol)
    }
    /// From µmol (µeinstein).
    #[must_use]
    pub const fn from_umol(umol: f64) -> Self {
        Self(umol * 1e-6)
    }
    /// From a count of photons.
    #[must_use]
    pub const fn from_photons(n: f64) -> Self {
        Self(n / si::AVOGADRO_PER_MOL)
    }
    /// In mol (einstein).
    #[must_use]
    pub const fn mol(self) -> f64 {
        self.0
    }
    /// In µmol (µeinstein).
    #[must_use]
    pub fn umol(self) -> f64 {
        self.0 * 1e6
    }
    /// As a count of photons.
    #[must_use]
    pub fn photons(self) -> f64 {
        self.0 * si::AVOGADRO_PER_MOL
    }
}

/// Photon flux: photons per unit time. Stored in mol/s (einstein/s).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonFlux(f64);

impl PhotonFlux {
    /// From mol/s.
    #[must_use]
    pub const fn from_mol_per_s(v: f64) -> Self {
        Self(v)
    }
    /// In mol/s.
    #[must_use]
    pub const fn mol_per_s(self) -> f64 {
        self.0
    }
    /// In µmol/s.
    #[must_use]
    pub fn umol_per_s(self) -> f64 {
        self.0 * 1e6
    }
}

/// An area (illuminated sample area, detector active area). Stored in m².
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Area(f64);

impl Area {
    /// From m².
    #[must_use]
    pub const fn from_m2(m2: f64) -> Self {
        Self(m2)
    }
    /// From cm² (1 cm² = 1e-4 m²).
    #[must_use]
    pub const fn from_cm2(cm2: f64) -> Self {
        Self(cm2 * 1e-4)
    }
    /// From mm² (1 mm² = 1e-6 m²).
    #[must_use]
    pub const fn from_mm2(mm2: f64) -> Self {
        Self(mm2 * 1e-6)
    }
    /// In m².
    #[must_use]
    pub const fn m2(self) -> f64 {
        self.0
    }
    /// In cm².
    #[must_use]
    pub fn cm2(self) -> f64 {
        self.0 * 1e4
    }
}

/// A photocurrent (or any current). Stored in amperes.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Current(f64);

impl Current {
    /// From A.
    #[must_use]
    pub const fn from_a(a: f64) -> Self {
        Self(a)
    }
    /// From µA.
    #[must_use]
    pub const fn from_ua(ua: f64) -> Self {
        Self(ua * 1e-6)
    }
    /// From nA.
    #[must_use]
    pub const fn from_na(na: f64) -> Self {
        Self(na * 1e-9)
    }
    /// In A.
    #[must_use]
    pub const fn a(self) -> f64 {
        self.0
    }
    /// In µA.
    #[must_use]
    pub fn ua(self) -> f64 {
        self.0 * 1e6
    }
}

/// A voltage. Stored in volts.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Voltage(f64);

impl Voltage {
    /// From V.
    #[must_use]
    pub const fn from_v(v: f64) -> Self {
        Self(v)
    }
    /// From mV.
    #[must_use]
    pub const fn from_mv(mv: f64) -> Self {
        Self(mv * 1e-3)
    }
    /// In V.
    #[must_use]
    pub const fn v(self) -> f64 {
        self.0
    }
}

/// Transimpedance gain of a photodiode amplifier range (feedback resistance). Stored in V/A (Ω).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Transimpedance(f64);

impl Transimpedance {
    /// From V/A (ohms).
    #[must_use]
    pub const fn from_v_per_a(v_per_a: f64) -> Self {
        Self(v_per_a)
    }
    /// From kΩ.
    #[must_use]
    pub const fn from_kohm(kohm: f64) -> Self {
        Self(kohm * 1e3)
    }
    /// From MΩ.
    #[must_use]
    pub const fn from_mohm(mohm: f64) -> Self {
        Self(mohm * 1e6)
    }
    /// In V/A (ohms).
    #[must_use]
    pub const fn v_per_a(self) -> f64 {
        self.0
    }
}

/// Detector responsivity: photocurrent per radiant power. Stored in A/W.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Responsivity(f64);

impl Responsivity {
    /// From A/W.
    #[must_use]
    pub const fn from_a_per_w(a_per_w: f64) -> Self {
        Self(a_per_w)
    }
    /// In A/W.
    #[must_use]
    pub const fn a_per_w(self) -> f64 {
        self.0
    }
    /// Responsivity of a detector with quantum efficiency `qe` (0..=1) at a vacuum wavelength:
    /// R = QE · e · λ / (h c).
    #[must_use]
    pub fn from_quantum_efficiency(qe: f64, wavelength: Wavelength) -> Self {
        Self(qe * si::ELEMENTARY_CHARGE_C * wavelength.m() / si::HC_J_M)
    }
}

/// A calibration factor: irradiance per photocurrent, as on a calibration certificate.
/// Stored in (W/m²)/A.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IrradiancePerCurrent(f64);

impl IrradiancePerCurrent {
    /// From (W/m²)/A.
    #[must_use]
    pub const fn from_w_per_m2_per_a(v: f64) -> Self {
        Self(v)
    }
    /// From (mW/cm²)/µA (= 1e7 (W/m²)/A).
    #[must_use]
    pub const fn from_mw_per_cm2_per_ua(v: f64) -> Self {
        Self(v * 1e7)
    }
    /// In (W/m²)/A.
    #[must_use]
    pub const fn w_per_m2_per_a(self) -> f64 {
        self.0
    }
}

/// A duration in seconds, for read-out and configuration. Time on the per-sample path is
/// always in ticks ([`crate::acquire::reading::Ticks`]).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Seconds(f64);

impl Seconds {
    /// From seconds.
    #[must_use]
    pub const fn from_s(s: f64) -> Self {
        Self(s)
    }
    /// From milliseconds.
    #[must_use]
    pub const fn from_ms(ms: f64) -> Self {
        Self(ms * 1e-3)
    }
    /// In seconds.
    #[must_use]
    pub const fn s(self) -> f64 {
        self.0
    }
}

impl Mul<Seconds> for Irradiance {
    type Output = RadiantExposure;
    fn mul(self, rhs: Seconds) -> RadiantExposure {
        RadiantExposure(self.0 * rhs.0)
    }
}

impl Mul<Seconds> for PhotonIrradiance {
    type Output = PhotonExposure;
    fn mul(self, rhs: Seconds) -> PhotonExposure {
        PhotonExposure(self.0 * rhs.0)
    }
}

impl Mul<Area> for PhotonExposure {
    type Output = PhotonAmount;
    fn mul(self, rhs: Area) -> PhotonAmount {
        PhotonAmount(self.0 * rhs.0)
    }
}

impl Mul<Seconds> for PhotonFlux {
    type Output = PhotonAmount;
    fn mul(self, rhs: Seconds) -> PhotonAmount {
        PhotonAmount(self.0 * rhs.0)
    }
}

impl Add for RadiantExposure {
    type Output = Self;
    fn add(self, rhs: Self) -> Self {
        Self(self.0 + rhs.0)
    }
}

impl Sub for RadiantExposure {
    type Output = Self;
    fn sub(self, rhs: Self) -> Self {
        Self(self.0 - rhs.0)
    }
}

impl Add for PhotonExposure {
    type Output = Self;
    fn add(self, rhs: Self) -> Self {
        Self(self.0 + rhs.0)
    }
}

impl Sub for PhotonExposure {
    type Output = Self;
    fn sub(self, rhs: Self) -> Self {
        Self(self.0 - rhs.0)
    }
}

impl Add for PhotonAmount {
    type Output = Self;
    fn add(self, rhs: Self) -> Self {
        Self(self.0 + rhs.0)
    }
}

impl Sub for PhotonAmount {
    type Output = Self;
    fn sub(self, rhs: Self) -> Self {
        Self(self.0 - rhs.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn si_constants_are_the_exact_2019_values() {
        // SI Brochure, 9th ed. (2019) / 26th CGPM (2018) Resolution 1: exact by definition.
        assert_eq!(si::PLANCK_J_S, 6.626_070_15e-34);
        assert_eq!(si::SPEED_OF_LIGHT_M_PER_S, 299_792_458.0);
        assert_eq!(si::ELEMENTARY_CHARGE_C, 1.602_176_634e-19);
        assert_eq!(si::AVOGADRO_PER_MOL, 6.022_140_76e23);
        // h c / e = 1239.841 984 332 eV nm (derived from the exact constants).
        let hc_ev_nm = si::HC_J_M / si::ELEMENTARY_CHARGE_C * 1e9;
        assert!(rel(hc_ev_nm, 1_239.841_984_332) < 1e-12);
    }

    #[test]
    fn unit_conversions_are_exact_decimal_factors() {
        // 1 mW/cm² = 10 W/m²; 1 mJ/cm² = 10 J/m² (definition of the units).
        assert_eq!(Irradiance::from_mw_per_cm2(1.0).w_per_m2(), 10.0);
        assert_eq!(RadiantExposure::from_mj_per_cm2(500.0).j_per_m2(), 5000.0);
        assert!(rel(Area::from_cm2(2.5).m2(), 2.5e-4) < 1e-15);
        assert!(rel(Wavelength::from_nm(365.0).nm(), 365.0) < 1e-15);
    }

    #[test]
    fn photon_energy_at_365_nm() {
        // Computed from the exact SI 2019 constants: 3.396 827 eV, 327.7440 kJ/mol at 365 nm.
        let e = Wavelength::from_nm(365.0).photon_energy();
        assert!(rel(e.ev(), 3.396_827) < 2e-7);
        assert!(rel(e.kj_per_mol(), 327.7440) < 2e-7);
        assert!(rel(e.wavelength().nm(), 365.0) < 1e-14);
    }

    #[test]
    fn ideal_detector_responsivity() {
        // R = QE e λ / (h c): λ[nm]/1239.841 984 A/W for QE = 1 (computed from definitions).
        let r = Responsivity::from_quantum_efficiency(1.0, Wavelength::from_nm(405.0));
        assert!(rel(r.a_per_w(), 405.0 / 1_239.841_984) < 1e-9);
    }

    #[test]
    fn allowed_arithmetic() {
        let h = Irradiance::from_mw_per_cm2(100.0) * Seconds::from_s(10.0);
        // 1000 mJ/cm² at a constant 100 mW/cm² takes 10.0 s (computed).
        assert!(rel(h.mj_per_cm2(), 1000.0) < 1e-12);
        let n = PhotonExposure::from_umol_per_m2(2.0) * Area::from_m2(0.5);
        assert!(rel(n.umol(), 1.0) < 1e-12);
        let sum = RadiantExposure::from_j_per_m2(1.0) + RadiantExposure::from_j_per_m2(2.0);
        assert_eq!((sum - RadiantExposure::from_j_per_m2(1.0)).j_per_m2(), 2.0);
    }
}
