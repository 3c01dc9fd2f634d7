//! Control: the controllers — policies over the one integral — and the pin layer they share.
//!
//! - [`session`]: the basic dose-controlled exposure (target, tolerance, enable and alarm);
//! - [`curing`]: the curing station (lag anticipation, irradiance window, interlock, part
//!   records);
//! - [`exposure`]: personal exposure (rolling window, warnings, latched alarm, UV index, SED);
//! - [`plausibility`]: checks that the measuring chain is alive, reported to a controller.
//!
//! Each feeds readings to a [`dose::Integrator`](crate::dose::Integrator) under the one timing
//! policy of [`crate::time`], and drives its outputs through this module.
//!
//! # The safe-state sequence
//!
//! The one fault → safe state → pin sequence that every controller uses.
//!
//! The [`Session`](crate::control::session::Session), the
//! [`CuringController`](crate::control::curing::CuringController) and the exposure monitors drive
//! their outputs through this module, so "safe state" means the same thing everywhere:
//!
//! 1. the source-enable output is driven **inactive first**;
//! 2. the alarm output is driven active, even if step 1 failed;
//! 3. if any write failed, the enable output is written inactive once more (a transient bus
//!    error on an I²C port expander), and the first error is returned.
//!
//! The pins may have different error types (a GPIO enable beside an expander alarm).

use embedded_hal::digital::{InputPin, OutputPin};

pub mod curing;
pub mod exposure;
pub mod plausibility;
pub mod session;

/// Why a controller command was refused; nothing changed. Shared by the
/// [`Session`](session::Session) and the [`CuringController`](curing::CuringController).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Refusal {
    /// Pause outside the exposing phase (session).
    NotExposing,
    /// Resume when not paused (session: outside `Paused`; curing: the part is not paused).
    NotPaused,
    /// The interlock reads "open" (resume, or starting a part).
    InterlockOpen,
    /// A part is active; finish it first (curing).
    PartActive,
    /// No part is active (curing).
    NoPart,
    /// The alarm is latched; acknowledge it first (curing).
    AlarmLatched,
}

impl core::fmt::Display for Refusal {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::NotExposing => "refused: not exposing",
            Self::NotPaused => "refused: not paused",
            Self::InterlockOpen => "refused: the interlock is open",
            Self::PartActive => "refused: a part is active",
            Self::NoPart => "refused: no part is active",
            Self::AlarmLatched => "refused: the alarm is latched",
        })
    }
}

impl core::error::Error for Refusal {}

/// Which logic level means "active" on an output (or "closed" on an interlock input).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ActiveLevel {
    /// High is active. Default.
    #[default]
    High,
    /// Low is active.
    Low,
}

impl ActiveLevel {
    /// Whether a pin read as `high` is at this active level.
    #[must_use]
    pub const fn is_active(self, high: bool) -> bool {
        matches!(self, Self::High) == high
    }
}

/// Drive `pin` active or inactive for its `level`.
///
/// # Errors
/// The pin's own error.
pub fn drive<P: OutputPin>(pin: &mut P, level: ActiveLevel, active: bool) -> Result<(), P::Error> {
    if level.is_active(true) == active {
        pin.set_high()
    } else {
        pin.set_low()
    }
}

/// An output pin that could not be written, named by its role. The two pins may have
/// different error types (a GPIO enable beside an alarm on an I²C port expander).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PinError<EN, AL> {
    /// The source-enable output (it was retried towards inactive once).
    Enable(EN),
    /// The alarm output.
    Alarm(AL),
}

impl<EN: core::fmt::Debug, AL: core::fmt::Debug> core::fmt::Display for PinError<EN, AL> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Enable(e) => write!(f, "enable output could not be written: {e:?}"),
            Self::Alarm(e) => write!(f, "alarm output could not be written: {e:?}"),
        }
    }
}

impl<EN: core::fmt::Debug, AL: core::fmt::Debug> core::error::Error for PinError<EN, AL> {}

/// A door or guard interlock as a controller reads it: closed (light may be on) or open.
///
/// Implemented by [`InterlockPin`] (an embedded-hal input pin and its closed level) and by
/// [`NoInterlock`] (always closed, `Error = Infallible`), so a controller generic over it costs
/// nothing when there is no interlock: the read and its checks compile away.
pub trait InterlockInput {
    /// The input's own error type.
    type Error: core::fmt::Debug;
    /// Whether the interlock is closed now.
    ///
    /// # Errors
    /// The input's own error; controllers treat it as a fault (safe state).
    fn is_closed(&mut self) -> Result<bool, Self::Error>;
}

/// No interlock: always closed, never fails. The default of
/// [`Session`](crate::control::session::Session).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct NoInterlock;

impl InterlockInput for NoInterlock {
    type Error = core::convert::Infallible;
    #[inline(always)]
    fn is_closed(&mut self) -> Result<bool, Self::Error> {
        Ok(true)
    }
}

/// An interlock on an embedded-hal input pin: closed when the pin reads `closed_level`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InterlockPin<P> {
    pin: P,
    closed_level: ActiveLevel,
}

impl<P: InputPin> InterlockPin<P> {
    /// An interlock that is closed while `pin` reads `closed_level`.
    pub const fn new(pin: P, closed_level: ActiveLevel) -> Self {
        Self { pin, closed_level }
    }
    /// Give the pin back.
    pub fn release(self) -> P {
        self.pin
    }
}

impl<P: InputPin> InterlockInput for InterlockPin<P> {
    type Error = P::Error;
    #[inline]
    fn is_closed(&mut self) -> Result<bool, Self::Error> {
        Ok(self.closed_level.is_active(self.pin.is_high()?))
    }
}

/// Enter the safe state: enable inactive first, then alarm active; see the
/// [module documentation](self) for the order and the retry.
///
/// # Errors
/// The first pin that failed.
pub fn safe_state<EN: OutputPin, AL: OutputPin>(
    enable: &mut EN,
    enable_level: ActiveLevel,
    alarm: &mut AL,
    alarm_level: ActiveLevel,
) -> Result<(), PinError<EN::Error, AL::Error>> {
    let en = drive(enable, enable_level, false);
    let al = drive(alarm, alarm_level, true);
    if en.is_err() || al.is_err() {
        // Best effort: a transient error on an expander may clear on a second write.
        let _ = drive(enable, enable_level, false);
    }
    en.map_err(PinError::Enable)?;
    al.map_err(PinError::Alarm)
}

#[cfg(test)]
mod tests {
    use super::*;
    use core::cell::Cell;
    use embedded_hal::digital::{ErrorKind, ErrorType};

    /// A pin that records its level and fails its first `fail` writes.
    struct P<'a> {
        high: &'a Cell<bool>,
        fail: &'a Cell<u8>,
        writes: &'a Cell<u8>,
    }
    impl ErrorType for P<'_> {
        type Error = ErrorKind;
    }
    impl OutputPin for P<'_> {
        fn set_low(&mut self) -> Result<(), ErrorKind> {
            self.write(false)
        }
        fn set_high(&mut self) -> Result<(), ErrorKind> {
            self.write(true)
        }
    }
    impl P<'_> {
        fn write(&mut self, high: bool) -> Result<(), ErrorKind> {
            self.writes.set(self.writes.get() + 1);
            if self.fail.get() > 0 {
                self.fail.set(self.fail.get() - 1);
                return Err(ErrorKind::Other);
            }
            self.high.set(high);
            Ok(())
        }
    }

    #[test]
    fn enable_goes_inactive_and_alarm_active_at_any_level() {
        for (el, al) in [
            (ActiveLevel::High, ActiveLevel::High),
            (ActiveLevel::Low, ActiveLevel::High),
            (ActiveLevel::High, ActiveLevel::Low),
        ] {
            let (eh, ah) = (
                Cell::new(el.is_active(true)),
                Cell::new(!al.is_active(true)),
            );
            let (z, w1, w2) = (Cell::new(0), Cell::new(0), Cell::new(0));
            let mut e = P {
                high: &eh,
                fail: &z,
                writes: &w1,
            };
            let z2 = Cell::new(0);
            let mut a = P {
                high: &ah,
                fail: &z2,
                writes: &w2,
            };
            safe_state(&mut e, el, &mut a, al).unwrap();
            assert!(!el.is_active(eh.get()), "enable still active");
            assert!(al.is_active(ah.get()), "alarm not active");
            assert_eq!((w1.get(), w2.get()), (1, 1));
        }
    }

    #[test]
    fn a_transient_enable_error_is_retried_and_still_reported() {
        let (eh, ah) = (Cell::new(true), Cell::new(false));
        let (f1, f2, w1, w2) = (Cell::new(1), Cell::new(0), Cell::new(0), Cell::new(0));
        let mut e = P {
            high: &eh,
            fail: &f1,
            writes: &w1,
        };
        let mut a = P {
            high: &ah,
            fail: &f2,
            writes: &w2,
        };
        let r = safe_state(&mut e, ActiveLevel::High, &mut a, ActiveLevel::High);
        assert_eq!(r, Err(PinError::Enable(ErrorKind::Other)));
        // The retry succeeded: the enable is inactive, and the alarm was still raised.
        assert!(!eh.get());
        assert!(ah.get());
        assert_eq!(w1.get(), 2);
    }
}
