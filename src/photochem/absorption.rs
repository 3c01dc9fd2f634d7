//! Absorbed fraction: f = 1 − 10^(−A) (IUPAC: the factor in the denominator of the
//! differential quantum yield), from A, from Beer–Lambert A = ε·c·l, or from an absorbance
//! table averaged over the band.
//!
//! All of this runs at configuration time (it uses `libm::expm1`); the results are constants.
//! `1 − 10^(−A)` is evaluated as `−expm1(−A ln 10)`, which keeps full relative precision for
//! small A.

use crate::quantity::Wavelength;
use crate::spectral::band::Band;

use super::grid::{band_mean, BandNodes, ABSORPTION_GRID_POINTS};
use super::units::{
    Absorbance, AbsorbedFraction, Concentration, MolarAbsorptionCoefficient, PathLength,
};
use super::{non_negative, positive, PhotochemError};

/// Capacity of an [`AbsorbanceTable`].
pub const MAX_ABSORBANCE_POINTS: usize = 32;

/// Fraction absorbed at one wavelength, f = 1 − 10^(−A).
///
/// Valid A: finite, ≥ 0. The result lies in [0, 1] (exactly 1.0 in `f64` once A ≳ 16).
///
/// # Errors
/// [`PhotochemError::Absorbance`] for a negative or non-finite absorbance.
pub fn fraction_absorbed(a: Absorbance) -> Result<AbsorbedFraction, PhotochemError> {
    let a = a.validated()?;
    Ok(AbsorbedFraction::from_trusted(fraction_of(a.decadic())))
}

/// 1 − 10^(−a) for a finite a ≥ 0 (caller checked), clamped into [0, 1] against rounding.
pub(crate) fn fraction_of(a: f64) -> f64 {
    (-libm::expm1(-a * core::f64::consts::LN_10)).clamp(0.0, 1.0)
}

/// Beer–Lambert (decadic): A = ε · c · l.
///
/// Valid: ε finite and > 0; c finite and ≥ 0; l finite and > 0.
///
/// # Errors
/// [`PhotochemError::MolarAbsorption`], [`PhotochemError::Concentration`] or
/// [`PhotochemError::PathLength`] naming the bad input; [`PhotochemError::Absorbance`] if the
/// product overflows.
pub fn beer_lambert(
    epsilon: MolarAbsorptionCoefficient,
    concentration: Concentration,
    path: PathLength,
) -> Result<Absorbance, PhotochemError> {
    if !positive(epsilon.m2_per_mol()) {
        return Err(PhotochemError::MolarAbsorption);
    }
    if !non_negative(concentration.mol_per_m3()) {
        return Err(PhotochemError::Concentration);
    }
    if !positive(path.m()) {
        return Err(PhotochemError::PathLength);
    }
    Absorbance::from_decadic(epsilon.m2_per_mol() * concentration.mol_per_m3() * path.m())
        .validated()
}

/// The sample's absorbance across wavelength: up to [`MAX_ABSORBANCE_POINTS`] (vacuum
/// wavelength, absorbance) points with strictly increasing wavelengths, linear interpolation
/// between them. The absorbance is that of the sample as irradiated (its own concentration
/// and path length) — for example ε(λ)·c·l from a spectrum.
///
/// The band average samples the table at the band's nodes (for an LED, 101 nodes over
/// ±4 σ: about 0.5 nm apart for a 14 nm FWHM at 405 nm). Features narrower than a few node
/// spacings (a sharp absorption edge or line) are not resolved: against a 200 001-point
/// integration, a 6 nm wide absorption spike gave errors of 1e-3 to 1e-2 in f, smooth
/// spectra ≤ 3e-5.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AbsorbanceTable {
    /// (nm, decadic absorbance).
    points: heapless::Vec<(f64, f64), MAX_ABSORBANCE_POINTS>,
}

impl AbsorbanceTable {
    /// A checked table.
    ///
    /// # Errors
    /// [`PhotochemError::TableTooShort`] for fewer than two points,
    /// [`PhotochemError::TableFull`] for more than [`MAX_ABSORBANCE_POINTS`],
    /// [`PhotochemError::TableNotIncreasing`] for wavelengths that are not finite, > 0 and
    /// strictly increasing, [`PhotochemError::Absorbance`] for a negative or non-finite value.
    pub fn new(points: &[(Wavelength, Absorbance)]) -> Result<Self, PhotochemError> {
        if points.len() < 2 {
            return Err(PhotochemError::TableTooShort);
        }
        let mut v = heapless::Vec::new();
        let mut last = 0.0;
        for (w, a) in points {
            let nm = w.nm();
            if !(nm.is_finite() && nm > last) {
                return Err(PhotochemError::TableNotIncreasing);
            }
            let a = a.validated()?;
            v.push((nm, a.decadic()))
                .map_err(|_| PhotochemError::TableFull)?;
            last = nm;
        }
        Ok(Self { points: v })
    }

    /// Number of points (2 ..= [`MAX_ABSORBANCE_POINTS`]).
    #[must_use]
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// Always `false`: a table has at least two points.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// Shortest and longest tabulated wavelength.
    #[must_use]
    pub fn span(&self) -> (Wavelength, Wavelength) {
        let lo = self.points.first().map_or(0.0, |p| p.0);
        let hi = self.points.last().map_or(0.0, |p| p.0);
        (Wavelength::from_nm(lo), Wavelength::from_nm(hi))
    }

    /// The largest tabulated absorbance.
    #[must_use]
    pub fn max_absorbance(&self) -> Absorbance {
        Absorbance::from_decadic(self.points.iter().map(|p| p.1).fold(0.0, f64::max))
    }

    /// Absorbance at `w` by linear interpolation; the ends are included.
    ///
    /// # Errors
    /// [`PhotochemError::WavelengthOutsideTable`] outside the tabulated span (or NaN).
    pub fn absorbance_at(&self, w: Wavelength) -> Result<Absorbance, PhotochemError> {
        self.at_nm(w.nm()).map(Absorbance::from_decadic)
    }

    pub(crate) fn at_nm(&self, nm: f64) -> Result<f64, PhotochemError> {
        interpolate(self.points.iter().copied(), nm).ok_or(PhotochemError::WavelengthOutsideTable)
    }
}

/// Linear interpolation in a strictly increasing (x, y) sequence; `None` outside it.
pub(crate) fn interpolate<I: Iterator<Item = (f64, f64)>>(points: I, x: f64) -> Option<f64> {
    let mut prev: Option<(f64, f64)> = None;
    for (xi, yi) in points {
        if x == xi {
            return Some(yi);
        }
        if let Some((x0, y0)) = prev {
            if x > x0 && x < xi {
                return Some(y0 + (yi - y0) * (x - x0) / (xi - x0));
            }
        }
        prev = Some((xi, yi));
    }
    None
}

/// How the sample's absorbance at the band is given.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Absorption<'a> {
    /// One absorbance for the whole band. Valid: finite, ≥ 0.
    Absorbance(Absorbance),
    /// Beer–Lambert A = ε·c·l, one value for the whole band (see [`beer_lambert`]).
    BeerLambert {
        /// Molar absorption coefficient at the band. Valid: finite, > 0.
        epsilon: MolarAbsorptionCoefficient,
        /// Concentration of the absorbing species. Valid: finite, ≥ 0.
        concentration: Concentration,
        /// Optical path through the sample. Valid: finite, > 0.
        path: PathLength,
    },
    /// Absorbance varying across the band; the table must cover the band's averaging range
    /// (for an LED ±4 σ in photon energy, see `ABSORPTION_TRUNCATION_SIGMA`).
    Table(&'a AbsorbanceTable),
}

/// The absorbance description, reduced to what the depletion integral needs: decadic
/// absorbance at each band node.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) enum Profile<'a> {
    /// One absorbance for the band.
    Single(f64),
    /// A table averaged over the band's nodes.
    Spectral(&'a AbsorbanceTable, BandNodes),
}

impl<'a> Profile<'a> {
    /// Validate `absorption` for a band's nodes; a table must cover them.
    pub(crate) fn new(
        absorption: &Absorption<'a>,
        nodes: BandNodes,
    ) -> Result<Self, PhotochemError> {
        Ok(match *absorption {
            Absorption::Absorbance(a) => Self::Single(a.validated()?.decadic()),
            Absorption::BeerLambert {
                epsilon,
                concentration,
                path,
            } => Self::Single(beer_lambert(epsilon, concentration, path)?.decadic()),
            Absorption::Table(t) => {
                let (lo, hi) = nodes.span_nm();
                let (tlo, thi) = t.span();
                if lo < tlo.nm() || hi > thi.nm() {
                    return Err(PhotochemError::WavelengthOutsideTable);
                }
                Self::Spectral(t, nodes)
            }
        })
    }

    /// Photon-weighted mean over the band of 1 − 10^(−A(λ)·scale), for 0 ≤ scale ≤ 1
    /// (scale = 1 − X in the depletion model).
    pub(crate) fn mean_fraction(&self, scale: f64) -> Result<f64, PhotochemError> {
        match *self {
            Self::Single(a) => Ok(fraction_of(a * scale)),
            Self::Spectral(t, nodes) => {
                band_mean(nodes, |nm| Ok(fraction_of(t.at_nm(nm)? * scale)))
            }
        }
    }
}

/// The band average reduced to its terms for repeated evaluation (the depletion integral).
///
/// A single absorbance keeps a = A ln 10 in `f64`. A table keeps, per band node, a and the
/// normalised photon weight in `f32`, and evaluates `expm1f`: one evaluation is one `f32`
/// `expm1` per node (about 2.7k instructions in software on a Cortex-M0, against 8.1k for
/// the `f64` one; hardware on an M4F), with a relative error of about 1e-7 that the depletion
/// target margin covers.
// No allocator to box into; a short-lived configuration-time value (808 B of stack).
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Terms {
    /// One absorbance, as a = A ln 10.
    Single(f64),
    /// (a, normalised weight) per band node.
    Spectral(heapless::Vec<(f32, f32), { ABSORPTION_GRID_POINTS as usize }>),
}

impl Terms {
    pub(crate) fn new(profile: &Profile<'_>) -> Result<Self, PhotochemError> {
        match *profile {
            Profile::Single(a) => Ok(Self::Single(a * core::f64::consts::LN_10)),
            Profile::Spectral(t, nodes) => {
                let total: f64 = nodes.map(|(_, w)| w).sum();
                if !(total > 0.0 && total.is_finite()) {
                    return Err(PhotochemError::NotRepresentable);
                }
                let mut v = heapless::Vec::new();
                for (nm, w) in nodes {
                    let a = t.at_nm(nm)? * core::f64::consts::LN_10;
                    // Narrowing to f32 is the point here (see the type's documentation).
                    v.push((a as f32, (w / total) as f32))
                        .map_err(|_| PhotochemError::NotRepresentable)?;
                }
                Ok(Self::Spectral(v))
            }
        }
    }

    /// Photon-weighted mean of 1 − 10^(−A(λ)·scale), 0 ≤ scale ≤ 1.
    pub(crate) fn mean_fraction(&self, scale: f64) -> f64 {
        let f = match self {
            Self::Single(a) => -libm::expm1(-a * scale),
            Self::Spectral(v) => {
                let s = scale as f32;
                v.iter()
                    .map(|&(a, w)| -f64::from(w) * f64::from(libm::expm1f(-a * s)))
                    .sum()
            }
        };
        f.clamp(0.0, 1.0)
    }
}

/// Fraction of the photons entering the sample that it absorbs, averaged over the band's
/// photon spectrum: f = ⟨1 − 10^(−A(λ))⟩ (one value for a single absorbance or a line).
///
/// # Errors
/// Bad absorbance inputs ([`beer_lambert`]), an invalid band ([`PhotochemError::Band`]), a
/// table that does not cover the band ([`PhotochemError::WavelengthOutsideTable`]).
pub fn band_fraction_absorbed(
    absorption: &Absorption<'_>,
    band: &Band,
) -> Result<AbsorbedFraction, PhotochemError> {
    let f = Profile::new(absorption, BandNodes::new(band)?)?.mean_fraction(1.0)?;
    AbsorbedFraction::new(f)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(points: &[(f64, f64)]) -> AbsorbanceTable {
        let v: std::vec::Vec<_> = points
            .iter()
            .map(|&(nm, a)| (Wavelength::from_nm(nm), Absorbance::from_decadic(a)))
            .collect();
        AbsorbanceTable::new(&v).unwrap()
    }

    #[test]
    fn expm1_form_matches_the_definition() {
        // Computed from the definition f = 1 − 10^(−A) (std powf as the independent path).
        for a in [1e-9, 1e-4, 0.05, 0.7, 4.0, 12.0] {
            let f = fraction_absorbed(Absorbance::from_decadic(a))
                .unwrap()
                .value();
            let direct = 1.0 - 10f64.powf(-a);
            let tol = if a < 1e-3 { 1e-6 } else { 1e-12 };
            assert!((f / direct - 1.0).abs() < tol, "{a}");
        }
        // Small A: f ≈ A ln 10 (first-order series of the definition, computed).
        let f = fraction_absorbed(Absorbance::from_decadic(1e-12)).unwrap();
        assert!((f.value() / (1e-12 * core::f64::consts::LN_10) - 1.0).abs() < 1e-11);
        assert_eq!(fraction_absorbed(Absorbance::ZERO).unwrap().value(), 0.0);
    }

    #[test]
    fn interpolation_and_its_ends() {
        let t = table(&[(380.0, 0.8), (400.0, 0.6), (420.0, 0.2)]);
        let at = |nm| {
            t.absorbance_at(Wavelength::from_nm(nm))
                .map(|a| a.decadic())
        };
        assert_eq!(at(380.0), Ok(0.8));
        assert_eq!(at(420.0), Ok(0.2));
        assert!((at(410.0).unwrap() - 0.4).abs() < 1e-15);
        assert!((at(385.0).unwrap() - 0.75).abs() < 1e-15);
        assert_eq!(at(379.9), Err(PhotochemError::WavelengthOutsideTable));
        assert_eq!(at(f64::NAN), Err(PhotochemError::WavelengthOutsideTable));
        assert_eq!(t.max_absorbance().decadic(), 0.8);
        assert_eq!(t.len(), 3);
        assert!(!t.is_empty());
    }

    #[test]
    fn bad_tables_are_named() {
        let w = Wavelength::from_nm;
        let a = Absorbance::from_decadic;
        assert_eq!(
            AbsorbanceTable::new(&[(w(400.0), a(0.1))]),
            Err(PhotochemError::TableTooShort)
        );
        assert_eq!(
            AbsorbanceTable::new(&[(w(400.0), a(0.1)), (w(400.0), a(0.2))]),
            Err(PhotochemError::TableNotIncreasing)
        );
        assert_eq!(
            AbsorbanceTable::new(&[(w(400.0), a(0.1)), (w(410.0), a(-0.2))]),
            Err(PhotochemError::Absorbance)
        );
        let many: std::vec::Vec<_> = (0..=MAX_ABSORBANCE_POINTS)
            .map(|i| (w(300.0 + i as f64), a(0.1)))
            .collect();
        assert_eq!(AbsorbanceTable::new(&many), Err(PhotochemError::TableFull));
        assert!(AbsorbanceTable::new(&many[..MAX_ABSORBANCE_POINTS]).is_ok());
    }

    #[test]
    fn beer_lambert_units() {
        // Beer–Lambert A = ε c l (IUPAC2007), hypothetical values, computed:
        // ε = 1000 L mol⁻¹ cm⁻¹, c = 1.0e-4 M, l = 1 cm → A = 0.1.
        let a = beer_lambert(
            MolarAbsorptionCoefficient::from_l_per_mol_cm(1000.0),
            Concentration::from_mol_per_l(1.0e-4),
            PathLength::from_cm(1.0),
        )
        .unwrap();
        assert!((a.decadic() / 0.1 - 1.0).abs() < 1e-12);
        assert_eq!(
            beer_lambert(
                MolarAbsorptionCoefficient::from_l_per_mol_cm(0.0),
                Concentration::from_mol_per_l(1.0),
                PathLength::from_cm(1.0)
            ),
            Err(PhotochemError::MolarAbsorption)
        );
        assert_eq!(
            beer_lambert(
                MolarAbsorptionCoefficient::from_l_per_mol_cm(10.0),
                Concentration::from_mol_per_l(-1.0),
                PathLength::from_cm(1.0)
            ),
            Err(PhotochemError::Concentration)
        );
        assert_eq!(
            beer_lambert(
                MolarAbsorptionCoefficient::from_l_per_mol_cm(10.0),
                Concentration::from_mol_per_l(1.0),
                PathLength::from_cm(0.0)
            ),
            Err(PhotochemError::PathLength)
        );
    }

    #[test]
    fn flat_table_over_a_band_is_the_single_value() {
        let t = table(&[(300.0, 0.5), (500.0, 0.5)]);
        let band = Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(15.0),
        };
        let f = band_fraction_absorbed(&Absorption::Table(&t), &band).unwrap();
        // Computed: 1 − 10^(−0.5) = 0.683 772 233 983 162.
        assert!((f.value() - (1.0 - 10f64.powf(-0.5))).abs() < 1e-14);
    }

    #[test]
    fn table_must_cover_the_band() {
        let t = table(&[(395.0, 0.5), (415.0, 0.5)]);
        let band = Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(15.0),
        };
        assert_eq!(
            band_fraction_absorbed(&Absorption::Table(&t), &band),
            Err(PhotochemError::WavelengthOutsideTable)
        );
        // A line inside the table is fine.
        let f = band_fraction_absorbed(
            &Absorption::Table(&t),
            &Band::Line(Wavelength::from_nm(400.0)),
        )
        .unwrap();
        assert!((f.value() - (1.0 - 10f64.powf(-0.5))).abs() < 1e-14);
    }
}
