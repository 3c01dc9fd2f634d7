//! Spectral: band shapes, spectra and action spectra, reduced to constant factors.
//!
//! Configuration time only — nothing here runs per sample. [`band`] reduces a line or an LED
//! band to photons per joule; [`table`] holds the validated tables, wavelength ranges and the
//! spectral error every other module shares; [`action`] holds the action spectra (CIE
//! erythema, ICNIRP S(λ), B(λ), UV-A, user tables); [`spectrum`] holds sources and detector
//! tables and computes the calibration factor, the weighted fractions and the spectral
//! mismatch F*; [`weighting`] builds the read-outs (UV index, SED, hazard times, factor sets)
//! on them; [`band_tolerance`] spreads a weighted factor over an LED's peak tolerance. The
//! [`Meter`](crate::irradiance::Meter) and the controllers take the resulting factors; the
//! per-sample path never touches a spectrum.
//!
//! Dependencies point one way: `table` uses `band`; `action` uses `table` and `band`;
//! `spectrum` uses those three; `weighting` and `band_tolerance` use `spectrum` and the ones
//! below it. No module uses one that uses it.

pub mod action;
pub mod band;
pub mod band_tolerance;
pub mod spectrum;
pub mod table;
pub mod weighting;
