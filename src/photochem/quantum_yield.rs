//! Quantum yield: the IUPAC definitions, and Φ from a run with its inputs recorded.
//!
//! IUPAC Glossary of terms used in photochemistry, 3rd ed. (Pure Appl. Chem. 79, 293 (2007);
//! Gold Book Q04991):
//!
//! - integral: Φ = number of events ÷ number of photons absorbed
//!   ([`quantum_yield_from_amounts`]);
//! - differential: Φ = (dx/dt) ÷ (q⁰_n,p · [1 − 10^(−A)]) with q⁰_n,p the incident photon
//!   flux in mol s⁻¹ ([`quantum_yield_from_rates`]).
//!
//! [`quantum_yield_from_run`] applies the integral definition to a whole run: photons absorbed
//! from the sensor's radiant exposure through the vessel and the sample's absorbance (constant,
//! or falling with conversion as described in the `photochem` module documentation), events
//! from the amount converted that an assay measured afterwards.

use crate::quantity::{PhotonAmount, PhotonFlux, RadiantExposure};

use super::reactor::{
    prepare, AbsorbanceModel, DepletionIntegral, PhotochemConfig, MAX_CONVERSION,
};
use super::units::{
    AbsorbedFraction, ChemicalAmount, PhotonFluxPerIrradiance, QuantumYield, ReactionRate,
};
use super::{non_negative, positive, PhotochemError};

/// Φ = events ÷ photons absorbed (integral quantum yield, IUPAC).
///
/// Valid: events finite, > 0 (Φ must come out > 0); absorbed finite, > 0.
///
/// # Errors
/// [`PhotochemError::Amount`] for a negative or non-finite amount,
/// [`PhotochemError::NothingAbsorbed`] for zero photons absorbed,
/// [`PhotochemError::QuantumYield`] when no event was counted (Φ = 0).
pub fn quantum_yield_from_amounts(
    events: ChemicalAmount,
    absorbed: PhotonAmount,
) -> Result<QuantumYield, PhotochemError> {
    if !non_negative(events.mol()) || !non_negative(absorbed.mol()) {
        return Err(PhotochemError::Amount);
    }
    if absorbed.mol() <= 0.0 {
        return Err(PhotochemError::NothingAbsorbed);
    }
    QuantumYield::new(events.mol() / absorbed.mol())
}

/// Φ = (dn/dt) ÷ (q⁰ · f) (differential quantum yield, IUPAC), with q⁰ the photon flux
/// entering the sample and f = 1 − 10^(−A) its absorbed fraction.
///
/// Valid: rate finite, > 0; flux finite, > 0; f > 0.
///
/// # Errors
/// [`PhotochemError::Amount`] for a negative or non-finite rate or flux,
/// [`PhotochemError::NothingAbsorbed`] for a zero flux or f = 0,
/// [`PhotochemError::QuantumYield`] for a zero rate.
pub fn quantum_yield_from_rates(
    rate: ReactionRate,
    incident: PhotonFlux,
    fraction: AbsorbedFraction,
) -> Result<QuantumYield, PhotochemError> {
    if !non_negative(rate.mol_per_s()) || !non_negative(incident.mol_per_s()) {
        return Err(PhotochemError::Amount);
    }
    let absorbed = incident.mol_per_s() * fraction.value();
    if absorbed <= 0.0 {
        return Err(PhotochemError::NothingAbsorbed);
    }
    QuantumYield::new(rate.mol_per_s() / absorbed)
}

/// Φ of a run and everything it was computed from (plain data, for a log or a report).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct QuantumYieldRecord {
    /// The result: converted ÷ absorbed.
    pub quantum_yield: QuantumYield,
    /// Amount converted, as measured after the run (input).
    pub converted: ChemicalAmount,
    /// Sensor radiant exposure of the run, including light after the stop (input).
    pub sensor_exposure: RadiantExposure,
    /// Vessel factor used: photon flux into the sample per sensor irradiance, losses included.
    pub vessel_factor: PhotonFluxPerIrradiance,
    /// Photons that entered the sample.
    pub incident: PhotonAmount,
    /// Photons the sample absorbed (per the absorbance model).
    pub absorbed: PhotonAmount,
    /// Absorbed fraction at the start of the run, band-averaged.
    pub initial_absorbed_fraction: AbsorbedFraction,
    /// Absorbed ÷ incident over the whole run.
    pub mean_absorbed_fraction: AbsorbedFraction,
    /// Absorbance model used.
    pub model: AbsorbanceModel,
    /// Initial amount of the reactant, if given (required by the depletion model).
    pub reactant: Option<ChemicalAmount>,
}

/// Φ from a finished run: the configuration it ran with, the sensor radiant exposure the
/// session integrated (all of it, including light after the stop), and the amount converted
/// measured afterwards.
///
/// Constant absorbance: absorbed = f · N_in, Φ = converted ÷ absorbed. Absorbance falling
/// with conversion: with X = converted ÷ n₀ the model gives N_in = (n₀/Φ) · I(X), so
/// Φ = n₀ · I(X) ÷ N_in and absorbed = converted ÷ Φ. `config.quantum_yield` (an assumption
/// for predictions) is not used.
///
/// Configuration-time cost (it integrates I(X) for the depletion model); call it after the
/// run, not on the sample path.
///
/// # Errors
/// Configuration errors as for [`Reactor::new`](super::reactor::Reactor::new);
/// [`PhotochemError::Exposure`] for an exposure that is not finite and > 0;
/// [`PhotochemError::Amount`] for a negative or non-finite amount converted;
/// [`PhotochemError::QuantumYield`] for nothing converted; [`PhotochemError::Conversion`]
/// (depletion model) when converted ÷ n₀ exceeds [`MAX_CONVERSION`];
/// [`PhotochemError::NothingAbsorbed`] for a sample that absorbs nothing.
pub fn quantum_yield_from_run(
    config: &PhotochemConfig<'_>,
    sensor_exposure: RadiantExposure,
    converted: ChemicalAmount,
) -> Result<QuantumYieldRecord, PhotochemError> {
    let (vessel, profile) = prepare(config)?;
    let f0 = AbsorbedFraction::new(profile.mean_fraction(1.0)?)?;
    if !positive(sensor_exposure.j_per_m2()) {
        return Err(PhotochemError::Exposure);
    }
    if !non_negative(converted.mol()) {
        return Err(PhotochemError::Amount);
    }
    if let Some(r) = config.reactant {
        if !positive(r.mol()) {
            return Err(PhotochemError::Amount);
        }
    }
    let incident = vessel.incident_photons(sensor_exposure);
    let (phi, absorbed) = match config.model {
        AbsorbanceModel::Constant => {
            let absorbed = PhotonAmount::from_mol(incident.mol() * f0.value());
            (quantum_yield_from_amounts(converted, absorbed)?, absorbed)
        }
        AbsorbanceModel::FallsWithConversion => {
            let r = config.reactant.ok_or(PhotochemError::ReactantRequired)?;
            let x = converted.mol() / r.mol();
            if x <= 0.0 {
                return Err(PhotochemError::QuantumYield);
            }
            if x > MAX_CONVERSION {
                return Err(PhotochemError::Conversion);
            }
            let i = DepletionIntegral::new(&profile)?.integral_to(x)?;
            let phi = QuantumYield::new(r.mol() * i / incident.mol())?;
            (phi, PhotonAmount::from_mol(converted.mol() / phi.value()))
        }
    };
    // absorbed ÷ incident is ≤ f0 ≤ 1 in exact arithmetic; clamp the last-ulp excess of the
    // quadrature for f ≈ 1.
    let mean = AbsorbedFraction::new((absorbed.mol() / incident.mol()).min(1.0))
        .map_err(|_| PhotochemError::NotRepresentable)?;
    Ok(QuantumYieldRecord {
        quantum_yield: phi,
        converted,
        sensor_exposure,
        vessel_factor: vessel.factor(),
        incident,
        absorbed,
        initial_absorbed_fraction: f0,
        mean_absorbed_fraction: mean,
        model: config.model,
        reactant: config.reactant,
    })
}
