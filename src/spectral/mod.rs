//! Spectral: band shapes, spectra and action spectra, reduced to constant factors.
//!
//! Configuration time only — nothing here runs per sample. [`band`] reduces a line or an LED
//! band to photons per joule; [`spectrum`] holds tabulated sources and detector tables and
//! computes the calibration factor and the spectral mismatch F*; [`weighting`] holds the
//! action spectra (CIE erythema, ICNIRP S(λ), UV-A) and the weighted fractions, UV index and
//! SED built on them. The [`Meter`](crate::irradiance::Meter) and the controllers take the
//! resulting factors; the per-sample path never touches a spectrum.

pub mod band;
pub mod band_tolerance;
pub mod spectrum;
pub mod weighting;
