//! The validated reactor model: targets in chemistry units → a radiant-exposure target, and
//! a running estimate of absorbed photons and conversion at read-out.
//!
//! Build a [`Reactor`] once from a [`PhotochemConfig`]; convert the target with
//! [`Reactor::absorbed_target_to_exposure`] or [`Reactor::conversion_target_to_exposure`] and
//! give the result to the session as
//! [`DoseAmount::RadiantExposure`](crate::control::session::DoseAmount). While the run goes, call
//! [`Reactor::estimate`] with the session's exposure (`session.progress().exposure`).
//!
//! # Rounding
//!
//! A stop target is enlarged by [`ROUNDING_MARGIN`] (16 ε, ≈ 3.6e-15 relative, more than the
//! few `f64` roundings of the conversion) and, for the depletion model, by
//! [`DEPLETION_TARGET_MARGIN`] (the quadrature bound); the session then rounds it up once more
//! to its integer scale. A limit (`Rounding::NotAfter`) is reduced by the same margins. So the
//! stop never undershoots the target as the model computes it from the stated inputs.
//!
//! # Cost
//!
//! Nothing is added to the per-sample path. [`Reactor::new`] validates the band once and,
//! for the depletion model, evaluates the band average f(X) at 1 + 2 × 64 points (each a
//! sum over 1 node for a single absorbance, or
//! [`ABSORPTION_GRID_POINTS`](super::ABSORPTION_GRID_POINTS) nodes in `f32` for a table over
//! an LED band); a depletion target adds 3 more. Measured instruction counts are in the
//! `photochem` module documentation. [`Reactor::estimate`] is multiplies, adds and a scan of
//! at most [`DEPLETION_CURVE_POINTS`] nodes — no transcendental function.

use crate::dose::Rounding;
use crate::quantity::{PhotonAmount, RadiantExposure};
use crate::spectral::band::{Band, BandFactors};

use super::absorption::{Absorption, Profile, Terms};
use super::grid::BandNodes;
use super::units::{AbsorbedFraction, ChemicalAmount, Conversion, QuantumYield};
use super::vessel::{Vessel, VesselGeometry};
use super::{positive, PhotochemError};

/// Largest conversion the depletion model is integrated to, and the largest conversion
/// target. Near full conversion the model's assumptions (a single absorber, non-absorbing
/// products) rarely hold and the photon demand grows without bound.
pub const MAX_CONVERSION: f64 = 0.999;
/// Nodes of the precomputed conversion curve of the depletion model (64 segments).
pub const DEPLETION_CURVE_POINTS: usize = 65;
/// Simpson intervals over s = 0 ..= −ln(1 − [`MAX_CONVERSION`]) for the depletion integral
/// (2 per curve segment).
pub const DEPLETION_SIMPSON_INTERVALS: u32 = 128;
/// Relative enlargement of depletion-model targets, covering the quadrature error (measured
/// at most 5.3e-8 against the closed form) and the `f32` evaluation of absorbance tables.
pub const DEPLETION_TARGET_MARGIN: f64 = 1e-6;
/// Relative enlargement of every stop target for `f64` rounding.
pub const ROUNDING_MARGIN: f64 = 16.0 * f64::EPSILON;

const SEGMENTS: usize = DEPLETION_CURVE_POINTS - 1;
/// Simpson intervals per curve segment (even).
const PER_SEGMENT: u32 = 2;
const _: () = assert!(
    PER_SEGMENT.is_multiple_of(2)
        && DEPLETION_SIMPSON_INTERVALS as usize == SEGMENTS * PER_SEGMENT as usize
);

/// How the sample's absorbance behaves during the run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AbsorbanceModel {
    /// The absorbance stays as configured: the absorber is not consumed (a photocatalyst or
    /// sensitiser), or the conversion stays small. Every quantity is a constant × exposure.
    /// Default.
    #[default]
    Constant,
    /// A single absorbing reactant whose products do not absorb in the band:
    /// A(λ, X) = A₀(λ)·(1 − X). Needs the reactant amount and Φ. See the `photochem` module
    /// documentation for the model and its integration.
    FallsWithConversion,
}

/// Everything the reactor model needs. Validated once by [`Reactor::new`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PhotochemConfig<'a> {
    /// The band, as configured in the meter.
    pub band: Band,
    /// The vessel geometry.
    pub vessel: VesselGeometry,
    /// The sample's absorbance at the band at the start of the run.
    pub absorption: Absorption<'a>,
    /// How the absorbance changes with conversion.
    pub model: AbsorbanceModel,
    /// Initial amount of the reactant (the absorbing one, for the depletion model). Needed
    /// for conversion targets and estimates. Valid: finite, > 0.
    pub reactant: Option<ChemicalAmount>,
    /// The quantum yield assumed for predictions (conversion targets, estimates, the
    /// depletion model).
    pub quantum_yield: Option<QuantumYield>,
}

/// Estimate of the chemistry after a sensor radiant exposure (read-out only).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Estimate {
    /// Photons that entered the sample.
    pub incident: PhotonAmount,
    /// Photons the sample absorbed (as the model predicts).
    pub absorbed: PhotonAmount,
    /// Product formed, Φ × absorbed (needs Φ).
    pub product: Option<ChemicalAmount>,
    /// Conversion of the reactant (needs Φ and the reactant amount). Constant model: exact
    /// arithmetic. Depletion model: the chord of the concave conversion curve, so it does not
    /// exceed the model's conversion (up to the quadrature error) and lies below it by at
    /// most [`Reactor::conversion_error_bound`].
    pub conversion: Option<Conversion>,
    /// `false` once the prediction leaves the model: the constant model's conversion passed
    /// [`MAX_CONVERSION`], or the depletion curve's end was reached (the values then stay at
    /// the curve's end).
    pub within_model: bool,
}

/// The depletion integral I(X) = ∫₀^X dX′/f(X′) in s = −ln(1 − X).
#[derive(Debug, Clone)]
pub(crate) struct DepletionIntegral {
    terms: Terms,
    step: f64,
}

impl DepletionIntegral {
    pub(crate) fn new(profile: &Profile<'_>) -> Result<Self, PhotochemError> {
        let s_max = -libm::log1p(-MAX_CONVERSION);
        Ok(Self {
            terms: Terms::new(profile)?,
            step: s_max / SEGMENTS as f64,
        })
    }

    /// Integrand e^(−s)/f(X(s)); `NothingAbsorbed` where f is 0.
    fn integrand(&self, s: f64) -> Result<f64, PhotochemError> {
        let scale = libm::exp(-s);
        let f = self.terms.mean_fraction(scale);
        if f > 0.0 {
            Ok(scale / f)
        } else {
            Err(PhotochemError::NothingAbsorbed)
        }
    }

    /// Simpson on [a, b] with `PER_SEGMENT` intervals, given g(a); returns (integral, g(b)).
    fn segment(&self, a: f64, b: f64, g_a: f64) -> Result<(f64, f64), PhotochemError> {
        let h = (b - a) / f64::from(PER_SEGMENT);
        let mut sum = g_a;
        for i in 1..PER_SEGMENT {
            let weight = if i % 2 == 1 { 4.0 } else { 2.0 };
            sum += weight * self.integrand(a + h * f64::from(i))?;
        }
        let g_b = self.integrand(b)?;
        Ok((h / 3.0 * (sum + g_b), g_b))
    }

    /// Segment index and s for a conversion 0 < x ≤ MAX_CONVERSION.
    fn locate(&self, x: f64) -> (usize, f64) {
        let s = -libm::log1p(-x);
        // 0 < s ≤ s_max, so the quotient is within 0 ..= SEGMENTS (the `as` saturates anyway).
        let k = ((s / self.step) as usize).min(SEGMENTS);
        (k, s)
    }

    /// I(x) for 0 < x ≤ MAX_CONVERSION.
    pub(crate) fn integral_to(&self, x: f64) -> Result<f64, PhotochemError> {
        check_conversion(x)?;
        let (k, s) = self.locate(x);
        let mut g_a = self.integrand(0.0)?;
        let mut sum = 0.0;
        for i in 0..k {
            let a = self.step * i as f64;
            let (seg, g_b) = self.segment(a, a + self.step, g_a)?;
            sum += seg;
            g_a = g_b;
        }
        self.finish(sum, k, s, g_a)
    }

    /// Add the partial segment from node k to s.
    fn finish(&self, sum: f64, k: usize, s: f64, g_k: f64) -> Result<f64, PhotochemError> {
        let a = self.step * k as f64;
        let total = if s > a {
            sum + self.segment(a, s, g_k)?.0
        } else {
            sum
        };
        if total.is_finite() {
            Ok(total)
        } else {
            Err(PhotochemError::NotRepresentable)
        }
    }
}

/// Validate the band once, then the vessel and the absorption for it.
pub(crate) fn prepare<'a>(
    config: &PhotochemConfig<'a>,
) -> Result<(Vessel, Profile<'a>), PhotochemError> {
    let factors = BandFactors::new(&config.band).map_err(PhotochemError::Band)?;
    let vessel = Vessel::from_factors(&config.vessel, &factors)?;
    let nodes = BandNodes::from_validated(&config.band, &factors);
    Ok((vessel, Profile::new(&config.absorption, nodes)?))
}

fn check_conversion(x: f64) -> Result<(), PhotochemError> {
    if x.is_finite() && x > 0.0 && x <= MAX_CONVERSION {
        Ok(())
    } else {
        Err(PhotochemError::Conversion)
    }
}

/// The depletion model's precomputed curve.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Depletion {
    /// (I at node, X at node) for s = k·step, k = 0 ..= SEGMENTS; I increasing.
    curve: heapless::Vec<(f64, f64), DEPLETION_CURVE_POINTS>,
    /// Bound on the read-out interpolation error, in conversion.
    error_bound: f64,
}

impl Depletion {
    fn new(integral: &DepletionIntegral) -> Result<Self, PhotochemError> {
        let mut curve = heapless::Vec::new();
        let full = |_| PhotochemError::NotRepresentable;
        let mut g_a = integral.integrand(0.0)?;
        // f(X) at a node is e^(−s)/g(s); at s = 0 it is 1/g.
        let mut m_a = 1.0 / g_a;
        let m_0 = m_a;
        let (mut n, mut x_a) = (0.0_f64, 0.0_f64);
        curve.push((n, x_a)).map_err(full)?;
        let mut bound = 0.0_f64;
        for k in 0..SEGMENTS {
            let a = integral.step * k as f64;
            let b = a + integral.step;
            let (seg, g_b) = integral.segment(a, b, g_a)?;
            n += seg;
            let x_b = -libm::expm1(-b);
            let m_b = libm::exp(-b) / g_b;
            // X(I) is concave: it lies above the chord and below both end tangents; the
            // largest gap between the chord and the lower tangent is at their intersection.
            if seg > 0.0 && m_a > m_b {
                let c = (x_b - x_a) / seg;
                let gap = seg * (m_a - c) * (c - m_b) / (m_a - m_b);
                if gap.is_finite() {
                    bound = bound.max(gap);
                }
            }
            curve.push((n, x_b)).map_err(full)?;
            g_a = g_b;
            m_a = m_b;
            x_a = x_b;
        }
        if !n.is_finite() {
            return Err(PhotochemError::NotRepresentable);
        }
        // The nodes carry the quadrature error (relative to I, at most the margin); it moves
        // X by at most that times the largest slope dX/dI = f(0).
        bound += DEPLETION_TARGET_MARGIN * n * m_0;
        Ok(Self {
            curve,
            error_bound: bound,
        })
    }

    /// I(x) from the stored nodes plus the partial segment to x.
    fn integral_to(&self, integral: &DepletionIntegral, x: f64) -> Result<f64, PhotochemError> {
        check_conversion(x)?;
        let (k, s) = integral.locate(x);
        let sum = self
            .curve
            .get(k)
            .map(|p| p.0)
            .ok_or(PhotochemError::NotRepresentable)?;
        let g_k = integral.integrand(integral.step * k as f64)?;
        integral.finish(sum, k, s, g_k)
    }

    /// Conversion at normalised incident photons `n` by linear interpolation; `false` past the
    /// last node.
    fn conversion_at(&self, n: f64) -> (f64, bool) {
        let mut prev: Option<(f64, f64)> = None;
        for &(ni, xi) in &self.curve {
            if let Some((n0, x0)) = prev {
                if n <= ni {
                    let span = ni - n0;
                    let x = if span > 0.0 {
                        x0 + (xi - x0) * (n - n0) / span
                    } else {
                        xi
                    };
                    return (x.max(0.0), true);
                }
            }
            prev = Some((ni, xi));
        }
        (prev.map_or(0.0, |p| p.1), false)
    }
}

/// The validated reactor model. See the [module documentation](self).
///
/// Borrows the absorbance table (if the absorption is given as one) for its lifetime `'a`:
/// depletion-model targets integrate over it.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Reactor<'a> {
    vessel: Vessel,
    profile: Profile<'a>,
    initial_fraction: AbsorbedFraction,
    reactant: Option<ChemicalAmount>,
    quantum_yield: Option<QuantumYield>,
    depletion: Option<Depletion>,
}

impl<'a> Reactor<'a> {
    /// Validate the configuration and precompute what the targets and estimates need.
    ///
    /// # Errors
    /// Any [`PhotochemError`] naming the bad input; [`PhotochemError::ReactantRequired`] or
    /// [`PhotochemError::QuantumYieldRequired`] for the depletion model without them;
    /// [`PhotochemError::NothingAbsorbed`] for the depletion model of a sample that absorbs
    /// nothing in the band.
    pub fn new(config: &PhotochemConfig<'a>) -> Result<Self, PhotochemError> {
        let (vessel, profile) = prepare(config)?;
        let initial_fraction = AbsorbedFraction::new(profile.mean_fraction(1.0)?)?;
        if let Some(r) = config.reactant {
            if !positive(r.mol()) {
                return Err(PhotochemError::Amount);
            }
        }
        let depletion = match config.model {
            AbsorbanceModel::Constant => None,
            AbsorbanceModel::FallsWithConversion => {
                if config.reactant.is_none() {
                    return Err(PhotochemError::ReactantRequired);
                }
                if config.quantum_yield.is_none() {
                    return Err(PhotochemError::QuantumYieldRequired);
                }
                Some(Depletion::new(&DepletionIntegral::new(&profile)?)?)
            }
        };
        Ok(Self {
            vessel,
            profile,
            initial_fraction,
            reactant: config.reactant,
            quantum_yield: config.quantum_yield,
            depletion,
        })
    }

    /// The validated vessel.
    #[must_use]
    pub const fn vessel(&self) -> &Vessel {
        &self.vessel
    }

    /// The absorbed fraction at the start of the run, averaged over the band.
    #[must_use]
    pub const fn initial_absorbed_fraction(&self) -> AbsorbedFraction {
        self.initial_fraction
    }

    /// The absorbance model in use.
    #[must_use]
    pub const fn model(&self) -> AbsorbanceModel {
        if self.depletion.is_some() {
            AbsorbanceModel::FallsWithConversion
        } else {
            AbsorbanceModel::Constant
        }
    }

    /// Bound on the error of [`Reactor::estimate`]'s conversion (absolute, as a fraction)
    /// from the read-out interpolation of the depletion model; `None` for the constant model,
    /// whose estimate is exact arithmetic. The read-out is a lower bound: the model's
    /// conversion lies between it and it plus this bound. The stop targets do not use the
    /// read-out.
    #[must_use]
    pub fn conversion_error_bound(&self) -> Option<f64> {
        self.depletion.as_ref().map(|d| d.error_bound)
    }

    /// Sensor radiant exposure for `absorbed` einstein absorbed by the sample, rounded up:
    /// the stop target for a run to that many absorbed photons. Valid: finite, > 0.
    ///
    /// # Errors
    /// [`PhotochemError::Target`] for a bad target; [`PhotochemError::NothingAbsorbed`] if the
    /// sample absorbs nothing; for the depletion model [`PhotochemError::Conversion`] if the
    /// target needs more than [`MAX_CONVERSION`]; [`PhotochemError::NotRepresentable`] on
    /// overflow.
    pub fn absorbed_target_to_exposure(
        &self,
        absorbed: PhotonAmount,
    ) -> Result<RadiantExposure, PhotochemError> {
        self.absorbed_to_exposure(absorbed, Rounding::NotBefore)
    }

    /// Sensor radiant exposure for a target conversion, rounded up. Needs the reactant amount
    /// and Φ. Valid: 0 < X ≤ [`MAX_CONVERSION`].
    ///
    /// # Errors
    /// As [`Reactor::absorbed_target_to_exposure`], and [`PhotochemError::ReactantRequired`] /
    /// [`PhotochemError::QuantumYieldRequired`].
    pub fn conversion_target_to_exposure(
        &self,
        conversion: Conversion,
    ) -> Result<RadiantExposure, PhotochemError> {
        self.conversion_to_exposure(conversion, Rounding::NotBefore)
    }

    /// Sensor radiant exposure for `absorbed` einstein absorbed, rounded as asked
    /// (`NotBefore` for a stop target, `NotAfter` for a limit that must trip early).
    ///
    /// # Errors
    /// As [`Reactor::absorbed_target_to_exposure`].
    pub fn absorbed_to_exposure(
        &self,
        absorbed: PhotonAmount,
        rounding: Rounding,
    ) -> Result<RadiantExposure, PhotochemError> {
        let n = absorbed.mol();
        if !positive(n) {
            return Err(PhotochemError::Target);
        }
        match (&self.depletion, self.reactant, self.quantum_yield) {
            (Some(d), Some(r), Some(phi)) => {
                let x = phi.value() * n / r.mol();
                self.depleted_exposure(d, x, r, phi, rounding)
            }
            _ => {
                let f = self.initial_fraction.value();
                if f <= 0.0 {
                    return Err(PhotochemError::NothingAbsorbed);
                }
                self.finish(n / (f * self.vessel.mol_per_j_per_m2()), rounding, 0.0)
            }
        }
    }

    /// Sensor radiant exposure for a conversion, rounded as asked.
    ///
    /// # Errors
    /// As [`Reactor::conversion_target_to_exposure`].
    pub fn conversion_to_exposure(
        &self,
        conversion: Conversion,
        rounding: Rounding,
    ) -> Result<RadiantExposure, PhotochemError> {
        let r = self.reactant.ok_or(PhotochemError::ReactantRequired)?;
        let phi = self
            .quantum_yield
            .ok_or(PhotochemError::QuantumYieldRequired)?;
        let x = conversion.fraction();
        check_conversion(x)?;
        match &self.depletion {
            Some(d) => self.depleted_exposure(d, x, r, phi, rounding),
            None => {
                let absorbed = PhotonAmount::from_mol(x * r.mol() / phi.value());
                self.absorbed_to_exposure(absorbed, rounding)
            }
        }
    }

    /// Sensor radiant exposure for `incident` einstein entering the sample (no model
    /// involved), rounded as asked. Valid: finite, > 0.
    ///
    /// # Errors
    /// [`PhotochemError::Target`] for a bad amount; [`PhotochemError::NotRepresentable`].
    pub fn incident_to_exposure(
        &self,
        incident: PhotonAmount,
        rounding: Rounding,
    ) -> Result<RadiantExposure, PhotochemError> {
        if !positive(incident.mol()) {
            return Err(PhotochemError::Target);
        }
        self.finish(
            incident.mol() / self.vessel.mol_per_j_per_m2(),
            rounding,
            0.0,
        )
    }

    fn depleted_exposure(
        &self,
        d: &Depletion,
        x: f64,
        reactant: ChemicalAmount,
        phi: QuantumYield,
        rounding: Rounding,
    ) -> Result<RadiantExposure, PhotochemError> {
        let i = d.integral_to(&DepletionIntegral::new(&self.profile)?, x)?;
        // N_in = (n₀/Φ)·I(X); H = N_in / k_v.
        let incident = reactant.mol() / phi.value() * i;
        self.finish(
            incident / self.vessel.mol_per_j_per_m2(),
            rounding,
            DEPLETION_TARGET_MARGIN,
        )
    }

    fn finish(
        &self,
        h: f64,
        rounding: Rounding,
        extra: f64,
    ) -> Result<RadiantExposure, PhotochemError> {
        let margin = ROUNDING_MARGIN + extra;
        let h = match rounding {
            Rounding::NotBefore => h * (1.0 + margin),
            Rounding::NotAfter => h * (1.0 - margin),
        };
        if positive(h) {
            Ok(RadiantExposure::from_j_per_m2(h))
        } else {
            Err(PhotochemError::NotRepresentable)
        }
    }

    /// The chemistry predicted after a sensor radiant exposure (read-out; no transcendental
    /// function). Negative or NaN exposures count as zero.
    #[must_use]
    pub fn estimate(&self, exposure: RadiantExposure) -> Estimate {
        let h = exposure.j_per_m2();
        let h = if h.is_finite() && h > 0.0 { h } else { 0.0 };
        let incident = h * self.vessel.mol_per_j_per_m2();
        match (&self.depletion, self.reactant, self.quantum_yield) {
            (Some(d), Some(r), Some(phi)) => {
                let (x, within) = d.conversion_at(phi.value() * incident / r.mol());
                let product = x * r.mol();
                Estimate {
                    incident: PhotonAmount::from_mol(incident),
                    absorbed: PhotonAmount::from_mol(product / phi.value()),
                    product: Some(ChemicalAmount::from_mol(product)),
                    conversion: Some(Conversion::from_fraction(x)),
                    within_model: within,
                }
            }
            _ => {
                let absorbed = incident * self.initial_fraction.value();
                let product = self.quantum_yield.map(|p| p.value() * absorbed);
                let conversion = match (product, self.reactant) {
                    (Some(p), Some(r)) => Some(p / r.mol()),
                    _ => None,
                };
                Estimate {
                    incident: PhotonAmount::from_mol(incident),
                    absorbed: PhotonAmount::from_mol(absorbed),
                    product: product.map(ChemicalAmount::from_mol),
                    conversion: conversion.map(Conversion::from_fraction),
                    within_model: conversion.is_none_or(|x| x <= MAX_CONVERSION),
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::photochem::units::{Absorbance, PhotonFluxPerIrradiance, Transmission};
    use crate::quantity::Wavelength;

    /// ln(e^u − 1) without overflow (for the closed form).
    fn ln_expm1(u: f64) -> f64 {
        if u > 1.0 {
            u + (-(-u).exp_m1()).ln()
        } else {
            u.exp_m1().ln()
        }
    }

    /// Closed form of the depletion integral for one wavelength, computed from the model:
    /// I(X) = [ln(e^a − 1) − ln(e^(a(1−X)) − 1)]/a, a = A₀ ln 10.
    fn closed_form(a0: f64, x: f64) -> f64 {
        let a = a0 * core::f64::consts::LN_10;
        (ln_expm1(a) - ln_expm1(a * (1.0 - x))) / a
    }

    /// Inverse of the closed form by bisection (test oracle for the conversion read-out).
    fn conversion_from_closed_form(a0: f64, n: f64) -> f64 {
        let (mut lo, mut hi) = (0.0, MAX_CONVERSION);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if closed_form(a0, mid) < n {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }

    const K_V: f64 = 2.0e-7; // einstein per J/m² (demo geometry)

    fn config(a0: f64, model: AbsorbanceModel) -> PhotochemConfig<'static> {
        PhotochemConfig {
            band: Band::Line(Wavelength::from_nm(405.0)),
            vessel: VesselGeometry::FluxFactor {
                factor: PhotonFluxPerIrradiance::from_mol_per_s_per_w_per_m2(K_V),
                transmission: Transmission::LOSSLESS,
            },
            absorption: Absorption::Absorbance(Absorbance::from_decadic(a0)),
            model,
            reactant: Some(ChemicalAmount::from_umol(0.6)),
            quantum_yield: Some(QuantumYield::new(0.3).unwrap()),
        }
    }

    const ABSORBANCES: [f64; 14] = [
        1e-6, 1e-3, 0.01, 0.1, 0.3, 1.0, 2.0, 3.0, 5.0, 10.0, 30.0, 100.0, 1e3, 1e4,
    ];
    const CONVERSIONS: [f64; 9] = [1e-6, 1e-3, 0.01, 0.1, 0.5, 0.9, 0.99, 0.995, MAX_CONVERSION];

    #[test]
    fn depletion_integral_matches_the_closed_form() {
        let mut worst = 0.0_f64;
        for a0 in ABSORBANCES {
            let integral = DepletionIntegral::new(&Profile::Single(a0)).unwrap();
            let curve = Depletion::new(&integral).unwrap();
            for x in CONVERSIONS {
                let direct = integral.integral_to(x).unwrap();
                let via_curve = curve.integral_to(&integral, x).unwrap();
                let exact = closed_form(a0, x);
                worst = worst.max((direct / exact - 1.0).abs());
                assert!((via_curve / direct - 1.0).abs() < 1e-12, "{a0} {x}");
            }
        }
        eprintln!("worst relative quadrature error against the closed form: {worst:e}");
        // The margin added to targets must cover the quadrature error with room to spare.
        assert!(worst < 1e-7, "worst relative quadrature error {worst}");
        assert!(worst * 10.0 < DEPLETION_TARGET_MARGIN);
    }

    #[test]
    fn spectral_terms_in_f32_stay_within_the_margin() {
        // A flat table over an LED band: every node has the same absorbance, so the
        // closed form of one wavelength applies (computed from the model); the f32 terms
        // must stay well inside DEPLETION_TARGET_MARGIN.
        use crate::photochem::absorption::AbsorbanceTable;
        let band = Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(14.0),
        };
        let mut worst = 0.0_f64;
        for a0 in [0.01, 0.3, 1.0, 3.0, 10.0] {
            let table = AbsorbanceTable::new(&[
                (Wavelength::from_nm(300.0), Absorbance::from_decadic(a0)),
                (Wavelength::from_nm(500.0), Absorbance::from_decadic(a0)),
            ])
            .unwrap();
            let nodes = crate::photochem::grid::BandNodes::new(&band).unwrap();
            let profile = Profile::new(&Absorption::Table(&table), nodes).unwrap();
            let integral = DepletionIntegral::new(&profile).unwrap();
            for x in CONVERSIONS {
                let v = integral.integral_to(x).unwrap();
                worst = worst.max((v / closed_form(a0, x) - 1.0).abs());
            }
        }
        eprintln!("worst relative error of the f32 spectral path: {worst:e}");
        assert!(worst * 3.0 < DEPLETION_TARGET_MARGIN, "{worst}");
    }

    #[test]
    fn depletion_targets_never_undershoot_the_closed_form() {
        for a0 in ABSORBANCES {
            let r = Reactor::new(&config(a0, AbsorbanceModel::FallsWithConversion)).unwrap();
            for x in CONVERSIONS {
                let h = r
                    .conversion_target_to_exposure(Conversion::from_fraction(x))
                    .unwrap();
                // Exact incident einstein for X: (n₀/Φ)·I(X), from the closed form.
                let exact = 0.6e-6 / 0.3 * closed_form(a0, x);
                let ratio = h.j_per_m2() * K_V / exact;
                assert!(
                    (1.0..1.0 + 2.0 * DEPLETION_TARGET_MARGIN).contains(&ratio),
                    "{a0} {x} {ratio}"
                );
                let limit = r
                    .conversion_to_exposure(Conversion::from_fraction(x), Rounding::NotAfter)
                    .unwrap();
                assert!(limit.j_per_m2() * K_V <= exact, "{a0} {x}");
            }
        }
    }

    #[test]
    fn absorbed_target_under_depletion_is_the_conversion_target() {
        // X = Φ · N_abs / n₀ (definition of Φ), so 1 µeinstein absorbed at Φ = 0.3 with
        // 0.6 µmol reactant is X = 0.5.
        let r = Reactor::new(&config(0.8, AbsorbanceModel::FallsWithConversion)).unwrap();
        let a = r
            .absorbed_target_to_exposure(PhotonAmount::from_umol(1.0))
            .unwrap();
        let c = r
            .conversion_target_to_exposure(Conversion::from_fraction(0.5))
            .unwrap();
        assert!((a.j_per_m2() / c.j_per_m2() - 1.0).abs() < 1e-14);
        // 2 µeinstein would need X = 1.0: beyond the model.
        assert_eq!(
            r.absorbed_target_to_exposure(PhotonAmount::from_umol(2.0)),
            Err(PhotochemError::Conversion)
        );
    }

    #[test]
    fn conversion_read_out_stays_within_its_bound() {
        for a0 in ABSORBANCES {
            let r = Reactor::new(&config(a0, AbsorbanceModel::FallsWithConversion)).unwrap();
            let bound = r.conversion_error_bound().unwrap();
            assert!(bound < 3e-3, "{a0} bound {bound}");
            let n_max = closed_form(a0, MAX_CONVERSION);
            let mut worst = 0.0_f64;
            let mut last = 0.0;
            for i in 1..=400 {
                let n = n_max * f64::from(i) / 401.0;
                // normalised n = Φ · N_in / n₀ → H = n · n₀ / (Φ · k_v)
                let h = RadiantExposure::from_j_per_m2(n * 0.6e-6 / 0.3 / K_V);
                let e = r.estimate(h);
                assert!(e.within_model);
                let x = e.conversion.unwrap().fraction();
                assert!(x >= last, "conversion estimate must not decrease");
                last = x;
                let exact = conversion_from_closed_form(a0, n);
                assert!(
                    x <= exact + 1e-9,
                    "read-out must not exceed the model: {a0} {n}"
                );
                worst = worst.max(exact - x);
            }
            eprintln!("A0 = {a0:e}: read-out error {worst:.3e}, bound {bound:.3e}");
            assert!(worst <= bound, "{a0}: error {worst} > bound {bound}");
        }
    }

    #[test]
    fn estimate_past_the_curve_end_is_flagged() {
        let r = Reactor::new(&config(1.0, AbsorbanceModel::FallsWithConversion)).unwrap();
        let n = closed_form(1.0, MAX_CONVERSION) * 1.5;
        let e = r.estimate(RadiantExposure::from_j_per_m2(n * 0.6e-6 / 0.3 / K_V));
        assert!(!e.within_model);
        assert_eq!(
            e.conversion,
            Some(Conversion::from_fraction(MAX_CONVERSION))
        );
    }

    #[test]
    fn constant_model_is_a_constant_times_exposure() {
        let r = Reactor::new(&config(0.5, AbsorbanceModel::Constant)).unwrap();
        // f at A = 0.5: 1 − 10^(−0.5) (computed).
        let f = 1.0 - 10f64.powf(-0.5);
        assert!((r.initial_absorbed_fraction().value() / f - 1.0).abs() < 1e-12);
        let target = PhotonAmount::from_umol(0.25);
        let h = r.absorbed_target_to_exposure(target).unwrap();
        let back = r.estimate(h);
        assert!(back.absorbed.mol() >= target.mol());
        assert!((back.absorbed.mol() / target.mol() - 1.0) < 1e-14);
        // product = Φ × absorbed; conversion = product / n₀ (definitions).
        let p = back.product.unwrap().mol();
        assert!((p / (0.3 * back.absorbed.mol()) - 1.0).abs() < 1e-14);
        let x = back.conversion.unwrap().fraction();
        assert!((x / (p / 0.6e-6) - 1.0).abs() < 1e-14);
        assert!(r.conversion_error_bound().is_none());
        let lim = r.absorbed_to_exposure(target, Rounding::NotAfter).unwrap();
        assert!(lim.j_per_m2() < h.j_per_m2());
        // Conversion beyond 1 in the constant model is outside the model.
        assert!(
            !r.estimate(RadiantExposure::from_j_per_m2(h.j_per_m2() * 10.0))
                .within_model
        );
    }

    #[test]
    fn bad_configurations_and_targets_are_named() {
        let mut c = config(0.5, AbsorbanceModel::FallsWithConversion);
        c.reactant = None;
        assert_eq!(Reactor::new(&c), Err(PhotochemError::ReactantRequired));
        let mut c = config(0.5, AbsorbanceModel::FallsWithConversion);
        c.quantum_yield = None;
        assert_eq!(Reactor::new(&c), Err(PhotochemError::QuantumYieldRequired));
        assert_eq!(
            Reactor::new(&config(0.0, AbsorbanceModel::FallsWithConversion)),
            Err(PhotochemError::NothingAbsorbed)
        );
        for bad in [-0.1, f64::NAN, f64::INFINITY] {
            assert_eq!(
                Reactor::new(&config(bad, AbsorbanceModel::Constant)),
                Err(PhotochemError::Absorbance)
            );
        }
        let mut c = config(0.5, AbsorbanceModel::Constant);
        c.reactant = Some(ChemicalAmount::from_mol(-1.0));
        assert_eq!(Reactor::new(&c), Err(PhotochemError::Amount));

        let clear = Reactor::new(&config(0.0, AbsorbanceModel::Constant)).unwrap();
        assert_eq!(
            clear.absorbed_target_to_exposure(PhotonAmount::from_umol(1.0)),
            Err(PhotochemError::NothingAbsorbed)
        );
        let r = Reactor::new(&config(0.5, AbsorbanceModel::Constant)).unwrap();
        for bad in [0.0, -1.0, f64::NAN] {
            assert_eq!(
                r.absorbed_target_to_exposure(PhotonAmount::from_mol(bad)),
                Err(PhotochemError::Target)
            );
        }
        for bad in [0.0, 1.0, 0.9995, f64::NAN] {
            assert_eq!(
                r.conversion_target_to_exposure(Conversion::from_fraction(bad)),
                Err(PhotochemError::Conversion)
            );
        }
        let mut c = config(0.5, AbsorbanceModel::Constant);
        c.quantum_yield = None;
        let r = Reactor::new(&c).unwrap();
        assert_eq!(
            r.conversion_target_to_exposure(Conversion::from_fraction(0.5)),
            Err(PhotochemError::QuantumYieldRequired)
        );
        assert!(r
            .estimate(RadiantExposure::from_j_per_m2(1.0))
            .product
            .is_none());
    }
}

#[cfg(test)]
mod budget {
    use super::*;

    #[test]
    fn reactor_memory_budget() {
        // Budget check: the curve (65 × 16 B) dominates; the whole model must stay under
        // 1.2 KB so it fits next to a session on a 16 KB RAM part.
        let size = core::mem::size_of::<Reactor<'static>>();
        eprintln!("size_of::<Reactor>() = {size} B");
        assert!(size <= 1200, "{size}");
    }
}
