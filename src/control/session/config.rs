//! Session configuration: the dose target in any unit, its tolerance and the timing policy,
//! validated once into [`SessionConfigError`].

#[cfg(doc)]
use super::{Session, MAX_MILESTONES, MAX_STEP_MILESTONES};
use crate::control::ActiveLevel;
use crate::irradiance::Meter;
use crate::quantity::{PhotonAmount, PhotonExposure, RadiantExposure};

/// A dose in any of the units the meter supports.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DoseAmount {
    /// Radiant exposure (J/m², mJ/cm²).
    RadiantExposure(RadiantExposure),
    /// Photon exposure (mol/m²).
    PhotonExposure(PhotonExposure),
    /// Photons received by the illuminated sample area (mol); needs a sample area.
    Photons(PhotonAmount),
}

/// Session configuration. Validated once by [`Session::new`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionConfig {
    /// The dose at which the enable output goes inactive. Valid: finite, > 0.
    pub target: DoseAmount,
    /// How far past the target the dose may rise before it is an overexposure. Valid: finite,
    /// ≥ 0, in any dose unit.
    pub tolerance: DoseAmount,
    /// Longest allowed interval between two samples, ticks. Valid: 1 ..= 2³¹ − 1.
    pub max_gap_ticks: u32,
    /// Consecutive unusable (saturated) readings tolerated before a fault, for example while
    /// an autoranger settles. 0 (the default) faults on the first one.
    pub max_unusable_run: u16,
    /// Active level of the enable output.
    pub enable_level: ActiveLevel,
    /// Active level of the alarm output.
    pub alarm_level: ActiveLevel,
}

/// Why a session configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SessionConfigError {
    /// The target is not finite or ≤ 0.
    Target,
    /// The tolerance is not finite or < 0.
    Tolerance,
    /// A dose in photons (mol) needs the meter's illuminated sample area.
    SampleAreaRequired,
    /// `max_gap_ticks` is 0 or ≥ 2³¹.
    MaxGap,
    /// A milestone dose is not finite or ≤ 0.
    Milestone,
    /// Milestones are not strictly increasing.
    MilestoneOrder,
    /// A milestone lies beyond the target.
    MilestoneBeyondTarget,
    /// More milestones than [`MAX_MILESTONES`] (a list), or a step giving more than
    /// [`MAX_STEP_MILESTONES`] milestones up to the target.
    TooManyMilestones,
    /// Milestones can only be set before [`Session::start`].
    NotReady,
}

impl core::fmt::Display for SessionConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Target => "target must be finite and > 0",
            Self::Tolerance => "tolerance must be finite and >= 0",
            Self::SampleAreaRequired => "a dose in photons needs the illuminated sample area",
            Self::MaxGap => "maximum gap must be 1 to 2^31-1 ticks",
            Self::Milestone => "a milestone dose must be finite and > 0",
            Self::MilestoneOrder => "milestones must be strictly increasing",
            Self::MilestoneBeyondTarget => "a milestone lies beyond the target",
            Self::TooManyMilestones => "too many milestones",
            Self::NotReady => "milestones can only be set before the session starts",
        })
    }
}

impl core::error::Error for SessionConfigError {}

/// Convert a dose in any unit to radiant exposure for this meter.
///
/// # Errors
/// [`SessionConfigError::SampleAreaRequired`] for photons without a sample area.
pub fn to_exposure(meter: &Meter, dose: DoseAmount) -> Result<RadiantExposure, SessionConfigError> {
    let mol_per_j = meter.band().mol_per_j();
    Ok(match dose {
        DoseAmount::RadiantExposure(h) => h,
        DoseAmount::PhotonExposure(p) => RadiantExposure::from_j_per_m2(p.mol_per_m2() / mol_per_j),
        DoseAmount::Photons(n) => {
            let area = meter
                .sample_area()
                .ok_or(SessionConfigError::SampleAreaRequired)?;
            RadiantExposure::from_j_per_m2(n.mol() / (mol_per_j * area.m2()))
        }
    })
}
