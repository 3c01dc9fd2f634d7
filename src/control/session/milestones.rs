//! Dose milestones below the target: the series a caller asks for ([`Milestones`]) and the
//! validated plan the session re-arms one integrator threshold from.

#[cfg(doc)]
use super::Session;
use super::{DoseAmount, SessionConfigError};

/// Most milestones in a list ([`Milestones::Doses`]).
pub const MAX_MILESTONES: usize = 12;
/// Most milestones a step ([`Milestones::Every`], [`Milestones::EveryFraction`]) may give up
/// to the target.
pub const MAX_STEP_MILESTONES: u32 = 10_000;

/// Dose milestones for [`Session::set_milestones`]; each must lie at or below the target.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Milestones<'a> {
    /// No milestones.
    None,
    /// These doses, strictly increasing, > 0, at most [`MAX_MILESTONES`].
    Doses(&'a [DoseAmount]),
    /// Every `step` (> 0) up to and including the target (k · step for k = 1, 2, …).
    Every(DoseAmount),
    /// Every `fraction` of the target (0 < fraction ≤ 1; 0.1 = every 10 %).
    EveryFraction(f64),
}

/// The validated milestone series, in J/m².
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Plan {
    List {
        levels: [f64; MAX_MILESTONES],
        len: u8,
    },
    Step {
        step: f64,
        count: u32,
    },
}

impl Plan {
    pub(super) fn len(&self) -> u32 {
        match self {
            Self::List { len, .. } => u32::from(*len),
            Self::Step { count, .. } => *count,
        }
    }
    pub(super) fn level(&self, i: u32) -> Option<f64> {
        match self {
            Self::List { levels, len } => {
                if i < u32::from(*len) {
                    levels.get(i as usize).copied()
                } else {
                    None
                }
            }
            Self::Step { step, count } => (i < *count).then(|| step * f64::from(i + 1)),
        }
    }
}

/// A step plan: `step` J/m² up to `target` J/m².
pub(super) fn step_plan(step: f64, target: f64) -> Result<Plan, SessionConfigError> {
    if !(step.is_finite() && step > 0.0) {
        return Err(SessionConfigError::Milestone);
    }
    if step > target {
        return Err(SessionConfigError::MilestoneBeyondTarget);
    }
    // k · step ≤ target, with the same relative slack as the integrator's exact ties, so
    // "every 20 %" includes the target itself.
    let n = libm::floor(target / step * (1.0 + 16.0 * f64::EPSILON));
    if !(n >= 1.0 && n <= f64::from(MAX_STEP_MILESTONES)) {
        return Err(SessionConfigError::TooManyMilestones);
    }
    // 1 ≤ n ≤ MAX_STEP_MILESTONES: exact.
    Ok(Plan::Step {
        step,
        count: n as u32,
    })
}
