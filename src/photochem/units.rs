//! Chemistry quantities of the photochemistry stage: one newtype per quantity, one SI unit
//! inside, the unit in every constructor and accessor name (as in [`crate::quantity`]).
//!
//! Constructors do not validate (they are `const`); the functions that use a value check it
//! once and name what is wrong ([`super::PhotochemError`]).
//!
//! | type | stored in | common unit |
//! | --- | --- | --- |
//! | [`Absorbance`] | decadic, dimensionless | – |
//! | [`MolarAbsorptionCoefficient`] | m² mol⁻¹ | L mol⁻¹ cm⁻¹ (= 0.1 m² mol⁻¹) |
//! | [`Concentration`] | mol m⁻³ | mol L⁻¹ (M, = 1000 mol m⁻³) |
//! | [`PathLength`] | m | cm |
//! | [`Volume`] | m³ | mL (= 1e-6 m³) |
//! | [`ChemicalAmount`] | mol | µmol |
//! | [`ReactionRate`] | mol s⁻¹ | – |
//! | [`PhotonFluxPerIrradiance`] | (mol s⁻¹)/(W m⁻²) = mol m² J⁻¹ | – |
//! | [`PhotonFluxPerCurrent`] | (mol s⁻¹)/A = mol C⁻¹ | – |
//!
//! Dimensionless ratios with a restricted range get their own type too: [`Transmission`],
//! [`AbsorbedFraction`], [`QuantumYield`], [`Conversion`].

use super::PhotochemError;

/// Decadic absorbance A = lg(P⁰/P) = −lg T (IUPAC). Dimensionless.
///
/// Valid where used: finite and ≥ 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Absorbance(f64);

impl Absorbance {
    /// Zero absorbance (a transparent sample).
    pub const ZERO: Self = Self(0.0);
    /// From a decadic absorbance value.
    #[must_use]
    pub const fn from_decadic(a: f64) -> Self {
        Self(a)
    }
    /// The decadic absorbance.
    #[must_use]
    pub const fn decadic(self) -> f64 {
        self.0
    }
    /// Check that the value is finite and ≥ 0.
    ///
    /// # Errors
    /// [`PhotochemError::Absorbance`] otherwise.
    pub fn validated(self) -> Result<Self, PhotochemError> {
        if self.0.is_finite() && self.0 >= 0.0 {
            Ok(self)
        } else {
            Err(PhotochemError::Absorbance)
        }
    }
}

/// Molar (decadic) absorption coefficient ε. Stored in m² mol⁻¹.
///
/// 1 L mol⁻¹ cm⁻¹ = 0.1 m² mol⁻¹ (exact). Valid where used: finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MolarAbsorptionCoefficient(f64);

impl MolarAbsorptionCoefficient {
    /// From L mol⁻¹ cm⁻¹ (M⁻¹ cm⁻¹), the unit of most tables.
    #[must_use]
    pub const fn from_l_per_mol_cm(v: f64) -> Self {
        Self(v * 0.1)
    }
    /// From m² mol⁻¹.
    #[must_use]
    pub const fn from_m2_per_mol(v: f64) -> Self {
        Self(v)
    }
    /// In L mol⁻¹ cm⁻¹.
    #[must_use]
    pub fn l_per_mol_cm(self) -> f64 {
        self.0 * 10.0
    }
    /// In m² mol⁻¹.
    #[must_use]
    pub const fn m2_per_mol(self) -> f64 {
        self.0
    }
}

/// Amount concentration c. Stored in mol m⁻³.
///
/// 1 mol L⁻¹ (1 M) = 1000 mol m⁻³ (exact). Valid where used: finite and ≥ 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Concentration(f64);

impl Concentration {
    /// From mol L⁻¹ (M).
    #[must_use]
    pub const fn from_mol_per_l(v: f64) -> Self {
        Self(v * 1e3)
    }
    /// From mmol L⁻¹ (mM) (= mol m⁻³).
    #[must_use]
    pub const fn from_mmol_per_l(v: f64) -> Self {
        Self(v)
    }
    /// From mol m⁻³.
    #[must_use]
    pub const fn from_mol_per_m3(v: f64) -> Self {
        Self(v)
    }
    /// In mol L⁻¹ (M).
    #[must_use]
    pub fn mol_per_l(self) -> f64 {
        self.0 * 1e-3
    }
    /// In mol m⁻³.
    #[must_use]
    pub const fn mol_per_m3(self) -> f64 {
        self.0
    }
}

/// Optical path length through a sample or a cuvette. Stored in m.
///
/// Valid where used: finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PathLength(f64);

impl PathLength {
    /// From cm (1 cm = 0.01 m).
    #[must_use]
    pub const fn from_cm(cm: f64) -> Self {
        Self(cm * 1e-2)
    }
    /// From mm (1 mm = 0.001 m).
    #[must_use]
    pub const fn from_mm(mm: f64) -> Self {
        Self(mm * 1e-3)
    }
    /// From m.
    #[must_use]
    pub const fn from_m(m: f64) -> Self {
        Self(m)
    }
    /// In cm.
    #[must_use]
    pub fn cm(self) -> f64 {
        self.0 * 1e2
    }
    /// In m.
    #[must_use]
    pub const fn m(self) -> f64 {
        self.0
    }
}

/// A volume of solution. Stored in m³.
///
/// 1 mL = 1e-6 m³, 1 L = 1e-3 m³ (exact). Valid where used: finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Volume(f64);

impl Volume {
    /// From mL.
    #[must_use]
    pub const fn from_ml(ml: f64) -> Self {
        Self(ml * 1e-6)
    }
    /// From µL.
    #[must_use]
    pub const fn from_ul(ul: f64) -> Self {
        Self(ul * 1e-9)
    }
    /// From L.
    #[must_use]
    pub const fn from_l(l: f64) -> Self {
        Self(l * 1e-3)
    }
    /// From m³.
    #[must_use]
    pub const fn from_m3(m3: f64) -> Self {
        Self(m3)
    }
    /// In mL.
    #[must_use]
    pub fn ml(self) -> f64 {
        self.0 * 1e6
    }
    /// In L.
    #[must_use]
    pub fn l(self) -> f64 {
        self.0 * 1e3
    }
    /// In m³.
    #[must_use]
    pub const fn m3(self) -> f64 {
        self.0
    }
}

/// An amount of a chemical substance (reactant, product, Fe²⁺). Stored in mol.
///
/// Kept apart from [`PhotonAmount`](crate::quantity::PhotonAmount) so moles of molecules and
/// moles of photons cannot be mixed up. Valid where used: finite and ≥ 0 (> 0 where stated).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChemicalAmount(f64);

impl ChemicalAmount {
    /// From mol.
    #[must_use]
    pub const fn from_mol(mol: f64) -> Self {
        Self(mol)
    }
    /// From µmol.
    #[must_use]
    pub const fn from_umol(umol: f64) -> Self {
        Self(umol * 1e-6)
    }
    /// From nmol.
    #[must_use]
    pub const fn from_nmol(nmol: f64) -> Self {
        Self(nmol * 1e-9)
    }
    /// In mol.
    #[must_use]
    pub const fn mol(self) -> f64 {
        self.0
    }
    /// In µmol.
    #[must_use]
    pub fn umol(self) -> f64 {
        self.0 * 1e6
    }
}

/// Rate of a chemical change dn/dt (product formed or reactant consumed). Stored in mol s⁻¹.
///
/// Valid where used: finite and ≥ 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ReactionRate(f64);

impl ReactionRate {
    /// From mol s⁻¹.
    #[must_use]
    pub const fn from_mol_per_s(v: f64) -> Self {
        Self(v)
    }
    /// In mol s⁻¹.
    #[must_use]
    pub const fn mol_per_s(self) -> f64 {
        self.0
    }
}

/// Photon flux entering the sample per unit of sensor irradiance. Stored in
/// (mol s⁻¹)/(W m⁻²), which is the same as mol of photons per J m⁻² of sensor radiant exposure.
///
/// Describes a sensor that sits beside the vessel (or anywhere with a fixed geometry): the
/// photon flux into the sample is this factor times the irradiance the sensor reports.
/// Valid where used: finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonFluxPerIrradiance(f64);

impl PhotonFluxPerIrradiance {
    /// From (mol s⁻¹)/(W m⁻²).
    #[must_use]
    pub const fn from_mol_per_s_per_w_per_m2(v: f64) -> Self {
        Self(v)
    }
    /// From (µmol s⁻¹)/(W m⁻²).
    #[must_use]
    pub const fn from_umol_per_s_per_w_per_m2(v: f64) -> Self {
        Self(v * 1e-6)
    }
    /// In (mol s⁻¹)/(W m⁻²).
    #[must_use]
    pub const fn mol_per_s_per_w_per_m2(self) -> f64 {
        self.0
    }
    /// In (µmol s⁻¹)/(W m⁻²).
    #[must_use]
    pub fn umol_per_s_per_w_per_m2(self) -> f64 {
        self.0 * 1e6
    }
}

/// Photon flux entering the sample per unit of photodiode photocurrent. Stored in
/// (mol s⁻¹)/A (= mol of photons per coulomb of photocharge).
///
/// The calibration a chemical actinometer gives a photodiode, independent of any irradiance
/// calibration. Valid where used: finite and > 0.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotonFluxPerCurrent(f64);

impl PhotonFluxPerCurrent {
    /// From (mol s⁻¹)/A.
    #[must_use]
    pub const fn from_mol_per_s_per_a(v: f64) -> Self {
        Self(v)
    }
    /// In (mol s⁻¹)/A.
    #[must_use]
    pub const fn mol_per_s_per_a(self) -> f64 {
        self.0
    }
    /// In (µmol s⁻¹)/µA (= (mol s⁻¹)/A).
    #[must_use]
    pub const fn umol_per_s_per_ua(self) -> f64 {
        self.0
    }
}

/// Fraction of the photons arriving at the vessel that enter the sample (window reflection,
/// wall transmission). Dimensionless.
///
/// Valid where used: finite, 0 < t ≤ 1.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Transmission(f64);

impl Transmission {
    /// No loss (t = 1), for example when the geometry factor came from actinometry in the
    /// same vessel and therefore already contains the losses.
    pub const LOSSLESS: Self = Self(1.0);
    /// From a fraction (0.92 for 8 % loss).
    #[must_use]
    pub const fn from_fraction(t: f64) -> Self {
        Self(t)
    }
    /// The fraction.
    #[must_use]
    pub const fn fraction(self) -> f64 {
        self.0
    }
}

impl Default for Transmission {
    fn default() -> Self {
        Self::LOSSLESS
    }
}

/// Fraction of the photons entering the sample that it absorbs, f = 1 − 10^(−A) for one
/// wavelength, or the photon-weighted mean of that over a band. Dimensionless, 0 ≤ f ≤ 1.
///
/// Built by [`AbsorbedFraction::new`] (checked) or from an absorbance
/// ([`fraction_absorbed`](super::absorption::fraction_absorbed)).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AbsorbedFraction(f64);

impl AbsorbedFraction {
    /// Every photon absorbed (f = 1): the "totally absorbing" approximation of actinometry,
    /// off by 10^(−A) (1 % at A = 2, 0.1 % at A = 3).
    pub const TOTAL: Self = Self(1.0);
    /// A checked fraction.
    ///
    /// # Errors
    /// [`PhotochemError::AbsorbedFraction`] unless finite and 0 ≤ f ≤ 1.
    pub fn new(f: f64) -> Result<Self, PhotochemError> {
        if f.is_finite() && (0.0..=1.0).contains(&f) {
            Ok(Self(f))
        } else {
            Err(PhotochemError::AbsorbedFraction)
        }
    }
    /// Only for values the caller has proven to lie in [0, 1].
    pub(crate) const fn from_trusted(f: f64) -> Self {
        Self(f)
    }
    /// The fraction, 0 ..= 1.
    #[must_use]
    pub const fn value(self) -> f64 {
        self.0
    }
}

/// A quantum yield Φ: events (molecules converted, Fe²⁺ formed) per photon absorbed.
/// Dimensionless; may exceed 1 (ferrioxalate ≈ 1.2 in the UV, chain reactions ≫ 1).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct QuantumYield(f64);

impl QuantumYield {
    /// A checked quantum yield.
    ///
    /// # Errors
    /// [`PhotochemError::QuantumYield`] unless finite and > 0.
    pub fn new(phi: f64) -> Result<Self, PhotochemError> {
        if phi.is_finite() && phi > 0.0 {
            Ok(Self(phi))
        } else {
            Err(PhotochemError::QuantumYield)
        }
    }
    /// The value, > 0.
    #[must_use]
    pub const fn value(self) -> f64 {
        self.0
    }
}

/// Conversion of the reactant: the fraction of the initial amount consumed. Dimensionless.
///
/// Valid as a target: 0 < X ≤ [`MAX_CONVERSION`](super::MAX_CONVERSION).
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Conversion(f64);

impl Conversion {
    /// From a fraction (0.5 for half the reactant consumed).
    #[must_use]
    pub const fn from_fraction(x: f64) -> Self {
        Self(x)
    }
    /// From per cent.
    #[must_use]
    pub const fn from_percent(p: f64) -> Self {
        Self(p * 0.01)
    }
    /// As a fraction.
    #[must_use]
    pub const fn fraction(self) -> f64 {
        self.0
    }
    /// In per cent.
    #[must_use]
    pub fn percent(self) -> f64 {
        self.0 * 100.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unit_factors_are_the_exact_decimal_definitions() {
        // 1 L mol⁻¹ cm⁻¹ = 1e-3 m³ / (mol · 1e-2 m) = 0.1 m²/mol (definition of the units).
        let e = MolarAbsorptionCoefficient::from_l_per_mol_cm(11_100.0);
        assert!((e.m2_per_mol() - 1_110.0).abs() < 1e-9);
        assert!((e.l_per_mol_cm() - 11_100.0).abs() < 1e-9);
        // 1 M = 1000 mol/m³; 1 mL = 1e-6 m³; 1 cm = 0.01 m.
        assert!((Concentration::from_mol_per_l(0.006).mol_per_m3() - 6.0).abs() < 1e-12);
        assert!((Volume::from_ml(3.0).m3() - 3e-6).abs() < 1e-20);
        assert!((Volume::from_l(0.25).ml() - 250.0).abs() < 1e-9);
        assert!((PathLength::from_mm(10.0).cm() - 1.0).abs() < 1e-15);
        assert!((ChemicalAmount::from_umol(2.5).mol() - 2.5e-6).abs() < 1e-20);
        assert!((Conversion::from_percent(42.0).fraction() - 0.42).abs() < 1e-15);
    }

    #[test]
    fn checked_ratios_reject_their_bad_values() {
        assert_eq!(QuantumYield::new(0.0), Err(PhotochemError::QuantumYield));
        assert_eq!(QuantumYield::new(-1.2), Err(PhotochemError::QuantumYield));
        assert_eq!(
            QuantumYield::new(f64::NAN),
            Err(PhotochemError::QuantumYield)
        );
        assert!(QuantumYield::new(1.25).is_ok());
        assert_eq!(
            AbsorbedFraction::new(1.000_001),
            Err(PhotochemError::AbsorbedFraction)
        );
        assert_eq!(
            AbsorbedFraction::new(f64::INFINITY),
            Err(PhotochemError::AbsorbedFraction)
        );
        assert_eq!(
            Absorbance::from_decadic(-0.01).validated(),
            Err(PhotochemError::Absorbance)
        );
        assert_eq!(
            Absorbance::from_decadic(f64::NAN).validated(),
            Err(PhotochemError::Absorbance)
        );
    }
}
