//! The curing controller's state across a reset: the lamp history, the part counter and a
//! latched alarm ([`CuringController::state`], [`CuringController::restore`]).
//!
//! A station that restarts must not forget that its alarm was latched (the operator has not
//! checked the station yet) nor the lamp's ageing trend. [`CuringState`] is plain `Copy` data
//! to checkpoint (in the journal: `journal::record::CuringSnapshot`); a part in progress is
//! not part of it — a part cut by a reset is not topped up (see the journal's resume rules).

use embedded_hal::digital::{InputPin, OutputPin};

use crate::irradiance::Meter;

use super::super::part::LampHistory;
use super::super::{CuringConfig, CuringFault, CuringPhase, LAMP_HISTORY};
use super::{ControllerError, CuringController};
#[cfg(doc)]
use crate::control::curing::CuringError;

/// A checkpoint of a [`CuringController`] between parts.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CuringState {
    /// Parts finished since the controller was first built (carried over every restore).
    pub parts_finished: u32,
    /// Parts measured for the lamp trend (carried over every restore).
    pub lamp_parts: u32,
    /// The lamp history's ratios (mean irradiance ÷ reference), oldest first; the first
    /// `lamp_len` are valid, the rest 0.
    pub lamp_ratios: [f64; LAMP_HISTORY],
    /// How many of `lamp_ratios` are valid, 0 ..= [`LAMP_HISTORY`].
    pub lamp_len: u8,
    /// The fault whose alarm is latched (awaiting [`CuringController::acknowledge_alarm`]),
    /// if any.
    pub alarm: Option<CuringFault>,
}

impl<EN: OutputPin, AL: OutputPin, IL: InputPin> CuringController<EN, AL, IL> {
    /// The state to checkpoint: the part counter, the lamp history and a latched alarm. The
    /// part in progress, if any, is not included.
    #[must_use]
    pub fn state(&self) -> CuringState {
        let mut lamp_ratios = [0.0; LAMP_HISTORY];
        for (d, r) in lamp_ratios.iter_mut().zip(self.lamp.ordered()) {
            *d = r;
        }
        let alarm = if self.alarm_latched {
            Some(match self.phase {
                CuringPhase::Faulted(f) => f,
                // Latched without a fault phase cannot happen; report the generic reason.
                _ => CuringFault::Aborted,
            })
        } else {
            None
        };
        CuringState {
            parts_finished: self.parts_finished,
            lamp_parts: self.lamp.parts,
            lamp_ratios,
            // len ≤ LAMP_HISTORY = 16.
            lamp_len: u8::try_from(self.lamp.len).unwrap_or(u8::MAX),
            alarm,
        }
    }

    /// Parts finished since the controller was built, plus those of the state it was
    /// restored from.
    #[must_use]
    pub const fn parts_finished(&self) -> u32 {
        self.parts_finished
    }

    /// A controller that resumes from a checkpointed state after a reset: as
    /// [`new`](Self::new), then the lamp history and the part counter are put back, and a
    /// latched alarm is latched again — alarm output active, phase
    /// [`CuringPhase::Faulted`], no part starts until
    /// [`acknowledge_alarm`](Self::acknowledge_alarm). Ratios that are not finite are left
    /// out of the history.
    ///
    /// # Errors
    /// As [`new`](Self::new); [`CuringError::Output`] if the alarm output cannot be raised
    /// again (the alarm stays latched).
    pub fn restore(
        meter: Meter,
        config: CuringConfig,
        enable: EN,
        alarm: AL,
        interlock: IL,
        state: &CuringState,
    ) -> Result<Self, ControllerError<EN, AL, IL>> {
        let mut c = Self::new(meter, config, enable, alarm, interlock)?;
        let mut lamp = LampHistory::new();
        let len = usize::from(state.lamp_len).min(LAMP_HISTORY);
        for r in state.lamp_ratios.iter().take(len) {
            if r.is_finite() {
                lamp.push(*r);
            }
        }
        lamp.parts = state.lamp_parts.max(lamp.parts);
        c.lamp = lamp;
        c.parts_finished = state.parts_finished;
        if let Some(f) = state.alarm {
            c.alarm_latched = true;
            c.phase = CuringPhase::Faulted(f);
            c.write_alarm(true)?;
        }
        Ok(c)
    }
}
