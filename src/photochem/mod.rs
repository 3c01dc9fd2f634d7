//! Photochemistry: photons for a vessel, absorbed photons, quantum yields and chemical
//! actinometry.
//!
//! A photochemist counts photons in moles (einstein) and cares about the photons the sample
//! **absorbed**. This stage turns the sensor's radiant exposure H (J/m², what the
//! [`Session`](crate::control::session::Session) integrates) into those numbers, and turns targets in
//! chemistry units back into a radiant-exposure target the session can stop at.
//!
//! ```text
//!  sensor H (J/m²) ──vessel──▶ N_in (einstein entering the sample)      N_in  = k_v · H
//!                   ──sample──▶ N_abs (einstein absorbed)                N_abs = f · N_in
//!                   ──Φ───────▶ product (mol)                            n_P   = Φ · N_abs
//!                   ──n₀──────▶ conversion                               X     = n_P / n₀
//! ```
//!
//! - [`vessel`]: k_v from the illuminated area (and the band's photons per joule) or from a
//!   flux factor (mol/s per W/m²) when the sensor sits beside the vessel; losses as a
//!   transmission factor.
//! - [`absorption`]: f = 1 − 10^(−A) from A, from ε·c·l (Beer–Lambert), or from an absorbance
//!   table averaged over the band's photon spectrum.
//! - [`reactor`]: the validated model ([`Reactor`](reactor::Reactor)): targets in absorbed
//!   einstein or conversion → a [`RadiantExposure`](crate::quantity::RadiantExposure) target,
//!   rounded so the stop never undershoots; a running estimate of conversion at read-out.
//! - [`quantum_yield`]: Φ from a run and a measured amount converted, with its inputs.
//! - [`actinometry`]: potassium ferrioxalate — Fe²⁺ from the phenanthroline assay, Φ(λ)
//!   tables with their sources, incident photon flux, and the calibration factor this gives
//!   the photodiode.
//!
//! # One integral, many units — and where that stops being true
//!
//! With a constant absorbance every quantity above is a constant times H, so a target in
//! absorbed einstein is just a radiant-exposure target: H* = N_abs* / (f · k_v). Nothing is
//! added to the per-sample path.
//!
//! # The band: mean of the fraction, not fraction of the mean
//!
//! When A varies across the band, the absorbed fraction is the photon-weighted mean
//! ⟨1 − 10^(−A(λ))⟩ over the band's photon spectrum. Because 1 − 10^(−A) is concave,
//! this is *smaller* than 1 − 10^(−⟨A⟩) (Jensen's inequality); using the mean absorbance
//! over-states the absorbed photons.
//!
//! # Absorbance falling with conversion ([`AbsorbanceModel::FallsWithConversion`](reactor::AbsorbanceModel))
//!
//! Model (stated, not measured): a single absorbing reactant R in a well-stirred, uniformly
//! lit sample; the products and the solvent do not absorb in the band; Φ is the same at every
//! wavelength of the band and does not change with conversion. Then A(λ, X) = A₀(λ)·(1 − X)
//! and, with N_in the incident einstein,
//!
//! ```text
//!  dX/dN_in = (Φ/n₀) · f(X),     f(X) = ⟨1 − 10^(−A₀(λ)(1 − X))⟩
//!  N_in(X)  = (n₀/Φ) · I(X),     I(X) = ∫₀^X dX′ / f(X′)
//! ```
//!
//! The relation between conversion and incident photons does not depend on how the lamp's
//! output varies in time, so it is computed **once, at configuration time**: I(X) by Simpson's
//! rule in s = −ln(1 − X) (the integrand e^(−s)/f is smooth and bounded even as X → 1) on
//! [`DEPLETION_SIMPSON_INTERVALS`] intervals up to [`MAX_CONVERSION`]. A conversion or
//! absorbed-photon target becomes an equivalent incident-photon target and then a
//! radiant-exposure target; the session stops on it exactly as on any other target. For one
//! wavelength I(X) has a closed form, I(X) = [ln(e^a − 1) − ln(e^(a(1−X)) − 1)]/a with
//! a = A₀ ln 10; against it the quadrature's relative error was at most 5.3e-8 for
//! A₀ = 1e-6 … 1e4 and X ≤ 0.999, and 6.6e-8 through the `f32` path used for absorbance
//! tables (tests). Targets are enlarged by [`DEPLETION_TARGET_MARGIN`] (1e-6) to cover it.
//!
//! Configuration cost, measured as executed instructions on an emulated Cortex-M0 (QEMU
//! `microbit`, release build, `Reactor::new` plus one target conversion, 405 nm LED band):
//! constant model 8.6 M (almost all of it the band's own 801-point photons-per-joule
//! integral); depletion model with one absorbance 12.3 M; constant model with a 6-point
//! absorbance table 11.2 M; depletion model with that table 57.8 M (about 1.5 s at 48 MHz).
//! The per-sample path is unchanged.
//!
//! The running conversion estimate reads a precomputed curve of [`DEPLETION_CURVE_POINTS`]
//! (N_in, X) nodes by linear interpolation (no transcendental function at read-out). X(N_in)
//! is concave, so the chord lies below the curve and the tangents at the nodes above it: the
//! read-out is a lower bound of the model's conversion, the gap between chord and tangents
//! bounds its error, and
//! [`Reactor::conversion_error_bound`](reactor::Reactor::conversion_error_bound) reports it
//! for the configuration: below 2.8e-3 in conversion at small A₀ (where the actual error is
//! about half that) and smaller at large A₀. The stop targets do not use this curve.
//!
//! # What the numbers assume
//!
//! Uniform illumination of the sample, photons not absorbed by the sample are lost (no
//! back-reflection into it), the sensor sees the same spectrum as the sample, and the
//! geometry factor is right. The library checks that every input is finite and in range; it
//! cannot check that it is true.

pub mod absorption;
pub mod actinometry;
mod grid;
pub mod quantum_yield;
pub mod reactor;
pub mod units;
pub mod vessel;

pub use grid::{ABSORPTION_GRID_POINTS, ABSORPTION_TRUNCATION_SIGMA};
pub use reactor::{
    DEPLETION_CURVE_POINTS, DEPLETION_SIMPSON_INTERVALS, DEPLETION_TARGET_MARGIN, MAX_CONVERSION,
};

use crate::spectral::band::BandError;

/// Which volume of an actinometer assay is wrong.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum VolumeRole {
    /// V₁, the irradiated volume.
    Irradiated,
    /// V₂, the aliquot taken for the assay.
    Aliquot,
    /// V₃, the volume after complexation (aliquot + reagents, made up to the mark).
    Complexed,
}

/// Why a photochemistry input or computation was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum PhotochemError {
    /// An absorbance (or absorbance change) is negative, NaN or infinite.
    Absorbance,
    /// A molar absorption coefficient is not finite or ≤ 0.
    MolarAbsorption,
    /// A concentration is negative, NaN or infinite.
    Concentration,
    /// A path length is not finite or ≤ 0.
    PathLength,
    /// A volume is not finite or ≤ 0.
    Volume(VolumeRole),
    /// The aliquot V₂ is larger than the irradiated volume V₁.
    AliquotLargerThanIrradiated,
    /// The aliquot V₂ is larger than the volume after complexation V₃.
    AliquotLargerThanComplexed,
    /// A quantum yield is not finite or ≤ 0.
    QuantumYield,
    /// An absorbed fraction is not finite or outside 0 ..= 1.
    AbsorbedFraction,
    /// A transmission factor is not finite or outside 0 < t ≤ 1.
    Transmission,
    /// The illuminated area is not finite or ≤ 0.
    Area,
    /// The flux factor (mol/s per W/m²) is not finite or ≤ 0.
    FluxFactor,
    /// The meter's irradiance calibration ((W/m²)/A) is not finite or ≤ 0.
    IrradianceCalibration,
    /// The band is invalid.
    Band(BandError),
    /// A table has fewer than two points.
    TableTooShort,
    /// A table has more points than its capacity.
    TableFull,
    /// Table wavelengths are not finite, > 0 and strictly increasing.
    TableNotIncreasing,
    /// A wavelength (or part of the band) lies outside the table.
    WavelengthOutsideTable,
    /// A duration is not finite or ≤ 0.
    Duration,
    /// A radiant exposure is negative, NaN or infinite (≤ 0 where a run needs light).
    Exposure,
    /// An amount of substance or of photons is negative, NaN or infinite.
    Amount,
    /// A target is not finite or ≤ 0.
    Target,
    /// A conversion is outside 0 < X ≤ [`MAX_CONVERSION`].
    Conversion,
    /// The sample absorbs nothing in the band (f = 0): no absorbed-photon target is reachable.
    NothingAbsorbed,
    /// The configuration needs the initial amount of the absorbing reactant.
    ReactantRequired,
    /// The configuration needs a quantum yield.
    QuantumYieldRequired,
    /// A result is not representable (overflow to infinity, or a zero flux).
    NotRepresentable,
}

impl core::fmt::Display for PhotochemError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Absorbance => f.write_str("absorbance must be finite and >= 0"),
            Self::MolarAbsorption => {
                f.write_str("molar absorption coefficient must be finite and > 0")
            }
            Self::Concentration => f.write_str("concentration must be finite and >= 0"),
            Self::PathLength => f.write_str("path length must be finite and > 0"),
            Self::Volume(role) => write!(
                f,
                "{} volume must be finite and > 0",
                match role {
                    VolumeRole::Irradiated => "irradiated",
                    VolumeRole::Aliquot => "aliquot",
                    VolumeRole::Complexed => "complexed",
                }
            ),
            Self::AliquotLargerThanIrradiated => {
                f.write_str("aliquot volume exceeds the irradiated volume")
            }
            Self::AliquotLargerThanComplexed => {
                f.write_str("aliquot volume exceeds the volume after complexation")
            }
            Self::QuantumYield => f.write_str("quantum yield must be finite and > 0"),
            Self::AbsorbedFraction => f.write_str("absorbed fraction must be within 0..=1"),
            Self::Transmission => f.write_str("transmission must be finite, > 0 and <= 1"),
            Self::Area => f.write_str("illuminated area must be finite and > 0"),
            Self::FluxFactor => f.write_str("flux factor must be finite and > 0"),
            Self::IrradianceCalibration => {
                f.write_str("irradiance calibration must be finite and > 0")
            }
            Self::Band(e) => write!(f, "band: {e}"),
            Self::TableTooShort => f.write_str("table needs at least two points"),
            Self::TableFull => f.write_str("table has more points than its capacity"),
            Self::TableNotIncreasing => {
                f.write_str("table wavelengths must be finite, > 0 and strictly increasing")
            }
            Self::WavelengthOutsideTable => f.write_str("wavelength outside the table"),
            Self::Duration => f.write_str("duration must be finite and > 0"),
            Self::Exposure => f.write_str("radiant exposure must be finite and > 0"),
            Self::Amount => f.write_str("amount must be finite and >= 0"),
            Self::Target => f.write_str("target must be finite and > 0"),
            // A literal, not `{MAX_CONVERSION}`: formatting an f64 links core's float
            // formatting, which keeps panic paths (and about 10 KiB) in every firmware that
            // shows an error. The assertion below keeps the text equal to the constant.
            Self::Conversion => f.write_str("conversion must be > 0 and <= 0.999"),
            Self::NothingAbsorbed => f.write_str("the sample absorbs nothing in the band"),
            Self::ReactantRequired => {
                f.write_str("the initial amount of the absorbing reactant is required")
            }
            Self::QuantumYieldRequired => f.write_str("a quantum yield is required"),
            Self::NotRepresentable => f.write_str("result not representable"),
        }
    }
}

const _: () = assert!(
    MAX_CONVERSION == 0.999,
    "update the Display text of Conversion"
);

impl core::error::Error for PhotochemError {}

/// `true` for a finite value > 0.
pub(crate) fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

/// `true` for a finite value ≥ 0.
pub(crate) fn non_negative(v: f64) -> bool {
    v.is_finite() && v >= 0.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversion_message_states_the_limit() {
        // The message is a literal (no f64 formatting on the target); it must still say the
        // value of MAX_CONVERSION as `{}` formats it.
        let shown = std::format!("{}", PhotochemError::Conversion);
        assert_eq!(
            shown,
            std::format!("conversion must be > 0 and <= {MAX_CONVERSION}")
        );
    }
}
