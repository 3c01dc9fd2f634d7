//! Curing-station dose control: stop when the part has received its radiant exposure,
//! whatever the lamp does.
//!
//! A [`CuringController`] joins a [`Meter`], an exact [`Integrator`] and three embedded-hal
//! pins:
//!
//! - **enable** (output) — drives the LED driver or the shutter. Active only while
//!   [`CuringPhase::Exposing`]; inactive on the stop, on a pause and on every fault;
//! - **alarm** (output) — the overexposure / stuck-shutter output. Raised on every fault and
//!   *latched*: only [`CuringController::acknowledge_alarm`] clears it, and no part starts while
//!   it is latched;
//! - **interlock** (input) — the door or guard switch, read as a **monitor** on every reading.
//!   The hardware interlock itself must cut the light; this input only lets the controller
//!   pause the part, account for the light that still arrives and refuse to start or resume
//!   while the guard is open.
//!
//! ```text
//!            start()                dose + predicted tail ≥ target
//!  Idle ─────────────▶ Exposing ──────────────────────────────────▶ Stopping ──light off──▶ Complete
//!   ▲                   │   ▲        (or on_stop_timer at stop_due)     │                      │
//!   │   guard opens     │   │ resume() (explicit, guard closed)         │                      │
//!   │                   ▼   │                                           │                      │
//!   │                  Paused                                           │                      │
//!   │                                                                   │                      │
//!   │   any fault (window, overexposure, light not off, pins, timing) ─▶ Faulted(reason)       │
//!   └──────────────────────────── finish() → PartRecord ◀─────────────────────────────────────┘
//! ```
//!
//! # Actuator-lag anticipation
//!
//! A shutter or LED driver keeps light on the part for a while after the stop command. The
//! configured [`ActuatorLag`] (a pure delay, or a measured [`FallProfile`] of the fraction of
//! irradiance remaining vs ticks after the command) is reduced at configuration time to one
//! number, the *effective lag* `L = ∫ fraction dt` in ticks. With the current irradiance `E`,
//! the dose still to arrive after a stop command is `E · L`. The controller issues the stop in
//! the first sample in which `dose + E · L ≥ target`: zero samples of added latency.
//!
//! In the integer units of the integrator (see [`crate::dose`]) the tail of a net code `n` is
//! exactly `2 · n · L` units, whatever the range's calibration, so the per-sample test is
//!
//! ```text
//! units_to_target ≤ (n · L_q8) >> 7          L_q8 = round(256 · L), fixed at configuration
//! ```
//!
//! — one saturating 64-bit multiply, a shift and a compare. Between samples,
//! [`CuringController::stop_due`] gives the exact tick at which to stop if the irradiance
//! stays as last measured (`remaining ÷ 2n − L` ticks after the last reading, rounded up so
//! the target is never undershot by the prediction), for a timer compare; when the compare
//! fires, call [`CuringController::on_stop_timer`].
//!
//! The anticipation is only as good as the configured lag: a lag configured too short
//! overshoots by `E ·` (true lag − configured lag); too long undershoots by the same amount.
//! [`StopPolicy::AtTarget`] disables it (the stop is issued when the measured dose reaches
//! the target; the overshoot is then `E · L`).
//!
//! # Irradiance window and warm-up
//!
//! Many formulations need a minimum irradiance as well as an energy; too much irradiance can
//! damage the substrate. The minimum and maximum ([`IrradianceWindow`]) are converted at
//! configuration time into net-code limits per amplifier range, rounded so that a violation
//! is detected no later than it occurs (`min` rounded up, `max` rounded down). After the
//! warm-up (counted from the start and again from every resume) a reading below the minimum
//! for longer than its hold-off — measured from the last reading that was inside — is the
//! fault [`CuringFault::IrradianceLow`] (incomplete-cure risk); above the maximum,
//! [`CuringFault::IrradianceHigh`] (substrate-damage risk). The dose counts from the first
//! photon, warm-up or not.
//!
//! # Light-off check (stuck shutter)
//!
//! After every command that turns the light off (stop, pause, fault) the controller derives a
//! net-code limit per range, `max(fraction × irradiance at the command, floor)` (floating point,
//! once per command). If a reading later than the lag plus the margin is still above it, the
//! controller raises [`Events::LIGHT_NOT_OFF`], the alarm output and the fault
//! [`CuringFault::LightNotOff`], and keeps integrating so the record shows the true dose. The
//! overexposure limit (target + tolerance, rounded to trip early) raises the alarm as well.
//!
//! # Lamp ageing
//!
//! The mean irradiance of every part (dose while exposing ÷ exposing time) is compared with a
//! reference taken at commissioning with a new lamp and the same process
//! ([`LampReference`]). A part whose ratio is below the configured fraction raises
//! [`Events::LAMP_LOW`]; [`CuringController::lamp_trend`] reports the last ratio, the mean
//! and the least-squares slope per part over the last [`LAMP_HISTORY`] parts.
//!
//! # Cost per reading
//!
//! | phase | work per reading |
//! | --- | --- |
//! | every phase | one interlock read; front-end net code (2 compares, 1 subtract); [`Integrator::accept`] (one 64-bit multiply-add, two threshold compares) |
//! | `Exposing` | peak/min in integer codes (2 compares); warm-up (1 wrapping subtract); window (2 compares, 2 wrapping subtracts); anticipation (1 saturating 64-bit multiply, shift, compare) |
//! | other phases | light-off check (1 compare, 1 wrapping subtract) |
//!
//! No floating point and no division on that path (the one exception: the first reading of a
//! run whose range differs from the integrator's open segment, which happens only after a
//! timing gap, compares in `f64`). Floating point is used when the light is commanded off
//! (four `f64` divisions for the light-off limits and one dose read-out), in
//! [`stop_due`](CuringController::stop_due) (one 64-bit division) and at read-out
//! ([`finish`](CuringController::finish), [`lamp_trend`](CuringController::lamp_trend)).
//!
//! # Timing assumptions
//!
//! The part is assumed dark at the start command: [`start`](CuringController::start) feeds
//! the integrator a zero reading at its `now`, so the interval up to the first reading is a
//! trapezoid from zero (this under-counts an instant-on source by at most half a sample's dose,
//! which makes the stop later, never earlier). Readings must keep coming at least every
//! `max_gap_ticks` while a part is active — also while paused, since the controller watches
//! the light while the guard is open.
//!
//! The controller is **not** a safety device; see SAFETY.md.

use core::ops::{BitOr, BitOrAssign};

use embedded_hal::digital::{InputPin, OutputPin};

use crate::acquire::reading::{RangeIndex, Reading, Ticks};
use crate::control::session::ActiveLevel;
use crate::dose::{Crossed, Integrator, Rounding, SampleError, ThresholdId};
use crate::frontend::{CodeFault, Sample, MAX_RANGES};
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

/// The largest number of points of a measured [`FallProfile`].
pub const MAX_FALL_POINTS: usize = 8;

/// Number of parts over which [`LampTrend`] is computed.
pub const LAMP_HISTORY: usize = 16;

/// Fractional bits of the effective lag on the per-sample path (1/256 tick).
const LAG_FRACTION_BITS: u32 = 8;

/// Longest tick interval the controller accepts anywhere (2³¹ − 1): longer ones cannot be
/// told from time going backwards.
const MAX_TICKS: u32 = i32::MAX as u32;

// ---------------------------------------------------------------------------------------------
// Configuration
// ---------------------------------------------------------------------------------------------

/// One point of a measured fall profile.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FallPoint {
    /// Ticks after the stop command. Valid: greater than the previous point's (the first ≥ 1),
    /// at most 2³¹ − 1.
    pub after_ticks: u32,
    /// Irradiance at the part as a fraction of the irradiance at the stop command.
    /// Valid: finite, 0 ..= 1.
    pub remaining: f64,
}

/// A measured fall of the light after the stop command: the fraction of the irradiance that
/// remains, linearly interpolated between points, starting from 1 at the command (tick 0).
/// The last point must have `remaining == 0`: it is the tick at which the light is off.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FallProfile {
    points: heapless::Vec<FallPoint, MAX_FALL_POINTS>,
}

impl FallProfile {
    /// Validate a measured profile.
    ///
    /// # Errors
    /// [`CuringConfigError::FallProfileEmpty`], [`CuringConfigError::FallProfileTooLong`],
    /// [`CuringConfigError::FallPoint`] (index of the first bad point: ticks not increasing or
    /// above 2³¹ − 1, fraction not finite or outside 0 ..= 1) or
    /// [`CuringConfigError::FallProfileNotOff`] (last fraction not 0).
    pub fn new(points: &[FallPoint]) -> Result<Self, CuringConfigError> {
        if points.is_empty() {
            return Err(CuringConfigError::FallProfileEmpty);
        }
        let mut stored = heapless::Vec::new();
        let mut previous = 0u32;
        for (i, p) in (0u8..).zip(points.iter()) {
            let fraction_ok = p.remaining.is_finite() && (0.0..=1.0).contains(&p.remaining);
            if p.after_ticks <= previous || p.after_ticks > MAX_TICKS || !fraction_ok {
                return Err(CuringConfigError::FallPoint(i));
            }
            previous = p.after_ticks;
            stored
                .push(*p)
                .map_err(|_| CuringConfigError::FallProfileTooLong)?;
        }
        match stored.last() {
            Some(last) if last.remaining == 0.0 => Ok(Self { points: stored }),
            _ => Err(CuringConfigError::FallProfileNotOff),
        }
    }

    /// The points, in order.
    #[must_use]
    pub fn points(&self) -> &[FallPoint] {
        &self.points
    }

    /// `∫ fraction dt` over the fall, in ticks (exact for the piecewise-linear profile).
    #[must_use]
    pub fn effective_ticks(&self) -> f64 {
        let mut sum = 0.0;
        let mut t0 = 0.0;
        let mut f0 = 1.0;
        for p in &self.points {
            let t1 = f64::from(p.after_ticks);
            sum += 0.5 * (f0 + p.remaining) * (t1 - t0);
            t0 = t1;
            f0 = p.remaining;
        }
        sum
    }

    /// Ticks after the stop command at which the light is off (the last point).
    #[must_use]
    pub fn off_after_ticks(&self) -> u32 {
        self.points.last().map_or(0, |p| p.after_ticks)
    }
}

/// How the light falls after the stop command.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ActuatorLag {
    /// Full irradiance for `ticks` after the command, then off (a dead time). `0` is an
    /// instantaneous actuator. Valid: 0 ..= 2³¹ − 1 (a tick count cannot be negative).
    Delay {
        /// Dead time, ticks.
        ticks: u32,
    },
    /// A measured fall profile.
    Profile(FallProfile),
}

impl ActuatorLag {
    /// `∫ fraction dt` after the stop command, in ticks: the dose still to arrive is the
    /// current irradiance times this time.
    #[must_use]
    pub fn effective_ticks(&self) -> f64 {
        match self {
            Self::Delay { ticks } => f64::from(*ticks),
            Self::Profile(p) => p.effective_ticks(),
        }
    }

    /// Ticks after the stop command at which the light is off.
    #[must_use]
    pub fn off_after_ticks(&self) -> u32 {
        match self {
            Self::Delay { ticks } => *ticks,
            Self::Profile(p) => p.off_after_ticks(),
        }
    }
}

/// When the stop command is issued.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StopPolicy {
    /// Early, so that the dose including the predicted lag tail lands on the target. Default.
    #[default]
    Anticipate,
    /// When the measured dose reaches the target (no anticipation; overshoot ≈ E · lag).
    AtTarget,
}

/// One side of the irradiance window.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IrradianceLimit {
    /// The limit. Valid: finite, > 0.
    pub irradiance: Irradiance,
    /// How long the irradiance may stay outside before it is a fault, ticks. Valid: 0 ..=
    /// 2³¹ − 1, and warm-up + hold-off shorter than the exposure at this irradiance.
    pub hold_off_ticks: u32,
}

/// The process irradiance window.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IrradianceWindow {
    /// Minimum irradiance (incomplete-cure risk below), or `None` for no minimum.
    pub minimum: Option<IrradianceLimit>,
    /// Maximum irradiance (substrate-damage risk above), or `None` for no maximum.
    pub maximum: Option<IrradianceLimit>,
    /// Ticks after the start (and after every resume) before the window applies, while the
    /// source settles. Valid: 0 ..= 2³¹ − 1.
    pub warm_up_ticks: u32,
}

/// The light-off (stuck-shutter) check.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LightOffCheck {
    /// The light counts as off below this fraction of the irradiance at the off command.
    /// Valid: finite, 0 < fraction < 1.
    pub fraction: f64,
    /// …or below this irradiance, whichever is larger (a floor above the dark noise).
    /// Valid: finite, ≥ 0.
    pub floor: Irradiance,
    /// Extra ticks allowed after the actuator lag before the light must be off. Valid: lag +
    /// margin ≤ 2³¹ − 1.
    pub margin_ticks: u32,
}

/// The lamp's reference for the ageing check.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LampReference {
    /// Mean irradiance of a part with the new lamp at full drive (commissioning, same process).
    /// Valid: finite, > 0.
    pub reference: Irradiance,
    /// Maintenance is due when a part's mean irradiance falls below this fraction of the
    /// reference (for example 0.7). Valid: finite, 0 < fraction ≤ 1.
    pub maintenance_below: f64,
}

/// Curing-controller configuration. Validated once by [`CuringController::new`].
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CuringConfig {
    /// The radiant exposure each part must receive. Valid: finite, > 0.
    pub target: RadiantExposure,
    /// How far past the target the dose may rise before it is an overexposure (alarm).
    /// Valid: finite, ≥ 0.
    pub tolerance: RadiantExposure,
    /// The actuator's lag. Valid: effective lag shorter than the exposure at the minimum
    /// irradiance (when a minimum is configured).
    pub lag: ActuatorLag,
    /// Anticipate the lag or stop at the target.
    pub stop_policy: StopPolicy,
    /// Irradiance window and warm-up.
    pub window: IrradianceWindow,
    /// Light-off check after every off command.
    pub light_off: LightOffCheck,
    /// Lamp-ageing reference, or `None` to skip the check (the trend is not kept).
    pub lamp: Option<LampReference>,
    /// Longest allowed interval between two readings, ticks. Valid: 1 ..= 2³¹ − 1.
    pub max_gap_ticks: u32,
    /// Consecutive saturated readings tolerated (an autoranger settling); 0 faults at once.
    pub max_unusable_run: u16,
    /// Active level of the enable output.
    pub enable_level: ActiveLevel,
    /// Active level of the alarm output.
    pub alarm_level: ActiveLevel,
    /// Level of the interlock input when the guard is **closed**.
    pub interlock_closed_level: ActiveLevel,
}

/// Why a curing configuration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringConfigError {
    /// Target not finite or ≤ 0.
    Target,
    /// Tolerance not finite or < 0.
    Tolerance,
    /// `max_gap_ticks` is 0 or ≥ 2³¹.
    MaxGap,
    /// A fall profile without points.
    FallProfileEmpty,
    /// More than [`MAX_FALL_POINTS`] points.
    FallProfileTooLong,
    /// Fall-profile point `n`: ticks not increasing (or 0, or ≥ 2³¹) or fraction outside 0 ..= 1.
    FallPoint(u8),
    /// The last fall-profile point does not reach 0 (the light never goes off).
    FallProfileNotOff,
    /// The actuator lag is ≥ 2³¹ ticks, or not shorter than the whole exposure at the minimum
    /// irradiance (the stop could never be issued in time).
    LagTooLong,
    /// A window irradiance not finite or ≤ 0.
    WindowIrradiance,
    /// Minimum irradiance ≥ maximum irradiance.
    WindowOrder,
    /// Warm-up + low hold-off not shorter than the exposure at the minimum irradiance (or ≥ 2³¹).
    LowHoldOff,
    /// Warm-up + high hold-off not shorter than the exposure at the maximum irradiance (or ≥ 2³¹).
    HighHoldOff,
    /// Warm-up ≥ 2³¹ ticks.
    WarmUp,
    /// Light-off fraction not finite or not 0 < f < 1.
    LightOffFraction,
    /// Light-off floor not finite or < 0.
    LightOffFloor,
    /// Lag + light-off margin ≥ 2³¹ ticks.
    LightOffMargin,
    /// Lamp reference irradiance not finite or ≤ 0.
    LampReference,
    /// Lamp maintenance fraction not finite or not 0 < f ≤ 1.
    LampFraction,
}

impl core::fmt::Display for CuringConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Target => f.write_str("target must be finite and > 0"),
            Self::Tolerance => f.write_str("tolerance must be finite and >= 0"),
            Self::MaxGap => f.write_str("maximum gap must be 1 to 2^31-1 ticks"),
            Self::FallProfileEmpty => f.write_str("fall profile has no points"),
            Self::FallProfileTooLong => f.write_str("fall profile has too many points"),
            Self::FallPoint(n) => write!(
                f,
                "fall profile point {n}: ticks must increase, fraction must be 0 to 1"
            ),
            Self::FallProfileNotOff => f.write_str("fall profile must end at fraction 0"),
            Self::LagTooLong => {
                f.write_str("actuator lag must be shorter than the exposure at minimum irradiance")
            }
            Self::WindowIrradiance => f.write_str("window irradiance must be finite and > 0"),
            Self::WindowOrder => f.write_str("minimum irradiance must be below the maximum"),
            Self::LowHoldOff => f.write_str(
                "warm-up + low hold-off must be shorter than the exposure at minimum irradiance",
            ),
            Self::HighHoldOff => f.write_str(
                "warm-up + high hold-off must be shorter than the exposure at maximum irradiance",
            ),
            Self::WarmUp => f.write_str("warm-up must be below 2^31 ticks"),
            Self::LightOffFraction => f.write_str("light-off fraction must be between 0 and 1"),
            Self::LightOffFloor => f.write_str("light-off floor must be finite and >= 0"),
            Self::LightOffMargin => f.write_str("lag + light-off margin must be below 2^31 ticks"),
            Self::LampReference => f.write_str("lamp reference irradiance must be finite and > 0"),
            Self::LampFraction => f.write_str("lamp maintenance fraction must be in (0, 1]"),
        }
    }
}

impl core::error::Error for CuringConfigError {}

// ---------------------------------------------------------------------------------------------
// Run-time types
// ---------------------------------------------------------------------------------------------

/// Why a part went into the safe state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringFault {
    /// Irradiance below the window minimum for longer than the hold-off: incomplete-cure risk.
    IrradianceLow,
    /// Irradiance above the window maximum for longer than the hold-off: substrate-damage risk.
    IrradianceHigh,
    /// The dose reached target + tolerance.
    Overexposure,
    /// The light did not go off within the lag + margin after an off command (stuck shutter,
    /// driver not switching off, interlock not cutting the light), or came back later.
    LightNotOff,
    /// The interlock input could not be read.
    InterlockPin,
    /// An output pin could not be written.
    Output,
    /// Too many consecutive saturated readings: the light is above what the meter measures.
    Saturated,
    /// An ADC code outside the converter's range, or an unknown amplifier range.
    BadCode,
    /// A timestamp went backwards.
    TimeBackwards,
    /// No reading for longer than the configured maximum gap; the gap is not integrated.
    Gap {
        /// Length of the gap, ticks.
        ticks: u32,
    },
    /// The ADC (or its bus) reported an error to the caller.
    Sensor,
    /// The firmware aborted the part.
    Aborted,
}

impl CuringFault {
    /// Whether the fault makes the measured dose or irradiance doubtful (such parts are left
    /// out of the lamp trend).
    #[must_use]
    pub const fn is_measurement_fault(self) -> bool {
        matches!(
            self,
            Self::Saturated | Self::BadCode | Self::TimeBackwards | Self::Gap { .. } | Self::Sensor
        )
    }

    const fn kind_bit(self) -> u16 {
        1 << match self {
            Self::IrradianceLow => 0,
            Self::IrradianceHigh => 1,
            Self::Overexposure => 2,
            Self::LightNotOff => 3,
            Self::InterlockPin => 4,
            Self::Output => 5,
            Self::Saturated => 6,
            Self::BadCode => 7,
            Self::TimeBackwards => 8,
            Self::Gap { .. } => 9,
            Self::Sensor => 10,
            Self::Aborted => 11,
        }
    }
}

impl core::fmt::Display for CuringFault {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::IrradianceLow => f.write_str("irradiance below minimum (incomplete cure risk)"),
            Self::IrradianceHigh => f.write_str("irradiance above maximum (substrate damage risk)"),
            Self::Overexposure => f.write_str("dose past target + tolerance"),
            Self::LightNotOff => f.write_str("light not off after the stop (stuck shutter)"),
            Self::InterlockPin => f.write_str("interlock input could not be read"),
            Self::Output => f.write_str("output pin could not be written"),
            Self::Saturated => f.write_str("meter saturated"),
            Self::BadCode => f.write_str("bad ADC code or range"),
            Self::TimeBackwards => f.write_str("timestamp went backwards"),
            Self::Gap { ticks } => write!(f, "no reading for {ticks} ticks"),
            Self::Sensor => f.write_str("sensor error"),
            Self::Aborted => f.write_str("aborted"),
        }
    }
}

/// Why the light was commanded off for the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StopReason {
    /// The (anticipated) target, decided on a reading.
    Target,
    /// The (anticipated) target, on the firmware's timer compare at [`CuringController::stop_due`].
    TargetTimer,
    /// A fault.
    Fault(CuringFault),
    /// The guard was opened and the part was finished without resuming.
    Paused,
    /// [`CuringController::finish`] was called while exposing.
    Ended,
}

/// The phase of the controller.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringPhase {
    /// No part. Enable inactive. Default.
    #[default]
    Idle,
    /// Enable active, dose accumulating.
    Exposing,
    /// The guard opened: enable inactive, waiting for an explicit resume. Dose still counts
    /// (and is reported separately).
    Paused,
    /// The stop was issued; waiting for the light to fall below the light-off limit.
    Stopping,
    /// The light is off after the stop; the part can be finished.
    Complete,
    /// A fault: enable inactive, alarm active (latched). Dose still counts.
    Faulted(CuringFault),
}

impl CuringPhase {
    /// Whether the enable output is active in this phase.
    #[must_use]
    pub const fn is_exposing(self) -> bool {
        matches!(self, Self::Exposing)
    }
}

/// A set of events (one bit each). Returned by every call that can raise them; the record
/// keeps the union and the count for the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Events(pub u16);

impl Events {
    /// No event.
    pub const NONE: Self = Self(0);
    /// A part was started.
    pub const STARTED: Self = Self(1 << 0);
    /// The stop command was issued (anticipated target).
    pub const STOP_ISSUED: Self = Self(1 << 1);
    /// The measured dose reached the target.
    pub const TARGET_REACHED: Self = Self(1 << 2);
    /// The light fell below the light-off limit after an off command.
    pub const LIGHT_OFF: Self = Self(1 << 3);
    /// The interlock input went to "open".
    pub const INTERLOCK_OPENED: Self = Self(1 << 4);
    /// The interlock input went to "closed" (this never resumes by itself).
    pub const INTERLOCK_CLOSED: Self = Self(1 << 5);
    /// Exposure paused (guard opened while exposing).
    pub const PAUSED: Self = Self(1 << 6);
    /// Exposure resumed by an explicit call.
    pub const RESUMED: Self = Self(1 << 7);
    /// The warm-up ended; the irradiance window applies.
    pub const WARM_UP_DONE: Self = Self(1 << 8);
    /// The dose reached target + tolerance (alarm output).
    pub const OVEREXPOSED: Self = Self(1 << 9);
    /// The light did not go off after an off command (alarm output).
    pub const LIGHT_NOT_OFF: Self = Self(1 << 10);
    /// A fault of a kind not seen before in this part.
    pub const FAULT: Self = Self(1 << 11);
    /// The lamp's mean irradiance is below the maintenance fraction of its reference.
    pub const LAMP_LOW: Self = Self(1 << 12);

    /// Whether every event of `other` is in this set.
    #[must_use]
    pub const fn contains(self, other: Self) -> bool {
        self.0 & other.0 == other.0 && other.0 != 0
    }
    /// Whether the set is empty.
    #[must_use]
    pub const fn is_empty(self) -> bool {
        self.0 == 0
    }
    /// Number of events in the set.
    #[must_use]
    pub const fn count(self) -> u32 {
        self.0.count_ones()
    }
}

impl BitOr for Events {
    type Output = Self;
    fn bitor(self, rhs: Self) -> Self {
        Self(self.0 | rhs.0)
    }
}

impl BitOrAssign for Events {
    fn bitor_assign(&mut self, rhs: Self) {
        self.0 |= rhs.0;
    }
}

/// What happened to a reading.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SampleUse {
    /// Integrated.
    Integrated,
    /// Same timestamp as the previous reading; ignored.
    Repeated,
    /// A saturated code within the tolerated run; not integrated.
    Unusable(CodeFault),
    /// The reading caused this fault and was not integrated (after a gap the integration
    /// restarts from it).
    Faulted(CuringFault),
    /// No part is active; ignored (the interlock is not read).
    NoPart,
}

/// Result of [`CuringController::on_reading`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Update {
    /// What happened to the reading.
    pub sample: SampleUse,
    /// Phase after the reading.
    pub phase: CuringPhase,
    /// Events raised by the reading.
    pub events: Events,
}

/// Result of [`CuringController::on_stop_timer`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TimerOutcome {
    /// The stop was issued.
    Stopped,
    /// Too early for the latest irradiance: arm the compare again at this tick.
    Rearm(Ticks),
    /// No estimate (no irradiance, or the stop is further away than 2³¹ − 1 ticks); wait for
    /// readings.
    NoEstimate,
    /// Not exposing; nothing done.
    NotExposing,
}

/// Why a command was refused (nothing changed).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Refusal {
    /// A part is active; finish it first.
    PartActive,
    /// No part is active.
    NoPart,
    /// The alarm is latched; acknowledge it first.
    AlarmLatched,
    /// The interlock reads "open".
    InterlockOpen,
    /// The part is not paused.
    NotPaused,
}

/// Error of a controller operation.
///
/// After `Output` or `Interlock` the controller is faulted, the enable output was driven
/// inactive as far as possible and the alarm is latched.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CuringError<EO, EI> {
    /// Invalid configuration (only from [`CuringController::new`]).
    Config(CuringConfigError),
    /// An output pin could not be written.
    Output(EO),
    /// The interlock input could not be read.
    Interlock(EI),
    /// The command was refused; nothing changed.
    Refused(Refusal),
}

impl<EO: core::fmt::Debug, EI: core::fmt::Debug> core::fmt::Display for CuringError<EO, EI> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Config(e) => write!(f, "curing configuration: {e}"),
            Self::Output(e) => write!(f, "output pin error: {e:?}"),
            Self::Interlock(e) => write!(f, "interlock input error: {e:?}"),
            Self::Refused(r) => write!(f, "command refused: {r:?}"),
        }
    }
}

impl<EO: core::fmt::Debug, EI: core::fmt::Debug> core::error::Error for CuringError<EO, EI> {}

/// A part (or lot) number supplied by the caller; stored as given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartId(pub u32);

/// The summary of one part: plain `Copy` data for the journal.
///
/// Doses are [`RadiantExposure`] (read them with `.mj_per_cm2()` or `.j_per_m2()`),
/// irradiances [`Irradiance`] (`.mw_per_cm2()`, `.w_per_m2()`), ticks are the caller's counter.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartRecord {
    /// The caller's part number.
    pub part: PartId,
    /// Tick of the start command.
    pub start: Ticks,
    /// Tick of the command that turned the light off for good (stop, pause or fault), or of
    /// [`CuringController::finish`] if it was still on.
    pub stop: Ticks,
    /// Tick of the last integrated reading.
    pub end: Ticks,
    /// The configured target.
    pub target: RadiantExposure,
    /// Radiant exposure delivered (measured) from the start to the last reading, including
    /// the lag tail and light seen while paused.
    pub delivered: RadiantExposure,
    /// Part of `delivered` that arrived after the stop command (the lag tail, or what a stuck
    /// shutter let through).
    pub after_stop: RadiantExposure,
    /// Part of `delivered` that arrived while paused (guard open).
    pub paused: RadiantExposure,
    /// `delivered − target` (negative: the target was not reached).
    pub overshoot: RadiantExposure,
    /// Highest irradiance of a reading while exposing (`None` without such a reading).
    pub peak: Option<Irradiance>,
    /// Lowest irradiance of a reading while exposing after the warm-up (`None` without one).
    pub min: Option<Irradiance>,
    /// Mean irradiance while exposing (dose while exposing ÷ exposing time).
    pub mean: Option<Irradiance>,
    /// Time the enable output was active, from start/resume to the last reading before
    /// each off command.
    pub exposing_time: Seconds,
    /// Why the light was commanded off.
    pub stop_reason: StopReason,
    /// The first fault, if any.
    pub fault: Option<CuringFault>,
    /// Number of distinct fault kinds in this part.
    pub faults: u8,
    /// Number of events raised in this part.
    pub events: u16,
    /// Every event raised in this part.
    pub seen: Events,
    /// Mean irradiance ÷ lamp reference, when a reference is configured and the part was
    /// measured without a measurement fault.
    pub lamp_ratio: Option<f64>,
}

/// Lamp-ageing trend over the last [`LAMP_HISTORY`] measured parts.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LampTrend {
    /// Parts measured since the controller was built.
    pub parts: u32,
    /// Ratio (mean irradiance ÷ reference) of the last measured part.
    pub latest_ratio: Option<f64>,
    /// Mean ratio over the history.
    pub mean_ratio: Option<f64>,
    /// Least-squares slope of the ratio per part over the history (needs two parts).
    pub slope_per_part: Option<f64>,
    /// The last part's ratio is below the maintenance fraction.
    pub maintenance_due: bool,
}

// ---------------------------------------------------------------------------------------------
// Controller
// ---------------------------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, PartialEq)]
struct OffCheck {
    from: Ticks,
    limit_net: [i32; MAX_RANGES],
    seen_off: bool,
}

#[derive(Debug, Clone, Copy, PartialEq)]
struct PartState {
    id: PartId,
    start: Ticks,
    exposing_since: Ticks,
    exposing_entry_j: f64,
    exposing_j: f64,
    exposing_ticks: u64,
    warm: bool,
    last_not_low: Ticks,
    last_not_high: Ticks,
    peak: [i32; MAX_RANGES],
    min: [i32; MAX_RANGES],
    off: Option<OffCheck>,
    pause_entry_j: f64,
    paused_j: f64,
    stop: Option<(Ticks, StopReason)>,
    stop_j: f64,
    /// A dark start not yet placed: the zero reading at this tick goes in before the part's
    /// first reading (unless that reading is at the same tick, which then counts itself).
    dark_from: Option<Ticks>,
    interlock_closed: bool,
    first_fault: Option<CuringFault>,
    fault_kinds: u16,
    seen: Events,
    event_count: u16,
    unusable_run: u16,
    end: Ticks,
}

impl PartState {
    fn new(id: PartId, now: Ticks) -> Self {
        Self {
            id,
            start: now,
            exposing_since: now,
            exposing_entry_j: 0.0,
            exposing_j: 0.0,
            exposing_ticks: 0,
            warm: false,
            last_not_low: now,
            last_not_high: now,
            peak: [i32::MIN; MAX_RANGES],
            min: [i32::MAX; MAX_RANGES],
            off: None,
            pause_entry_j: 0.0,
            paused_j: 0.0,
            stop: None,
            stop_j: 0.0,
            dark_from: None,
            interlock_closed: true,
            first_fault: None,
            fault_kinds: 0,
            seen: Events::NONE,
            event_count: 0,
            unusable_run: 0,
            end: now,
        }
    }
}

/// A ring of the last [`LAMP_HISTORY`] ratios.
///
/// Invariants, kept by `push` (the only method that changes `len` and `next`):
/// `next < LAMP_HISTORY` and `len ≤ LAMP_HISTORY`. Every index sum below is therefore at most
/// `2 · LAMP_HISTORY` and cannot overflow; it is written with `wrapping_*` only so that no
/// overflow-check path (which the compiler cannot rule out across calls) is left in the code.
#[derive(Debug, Clone, Copy, PartialEq)]
struct LampHistory {
    ratios: [f64; LAMP_HISTORY],
    len: usize,
    next: usize,
    parts: u32,
}

impl LampHistory {
    const fn new() -> Self {
        Self {
            ratios: [0.0; LAMP_HISTORY],
            len: 0,
            next: 0,
            parts: 0,
        }
    }

    fn push(&mut self, ratio: f64) {
        if let Some(slot) = self.ratios.get_mut(self.next) {
            *slot = ratio;
        }
        self.next = self.next.wrapping_add(1) % LAMP_HISTORY;
        self.len = self.len.wrapping_add(1).min(LAMP_HISTORY);
        self.parts = self.parts.saturating_add(1);
    }

    /// The ratios, oldest first.
    fn ordered(&self) -> impl Iterator<Item = f64> + '_ {
        let start = self.next.wrapping_add(LAMP_HISTORY.wrapping_sub(self.len)) % LAMP_HISTORY;
        (0..self.len).filter_map(move |i| {
            self.ratios
                .get(start.wrapping_add(i) % LAMP_HISTORY)
                .copied()
        })
    }

    fn latest(&self) -> Option<f64> {
        if self.len == 0 {
            None
        } else {
            self.ratios
                .get(self.next.wrapping_add(LAMP_HISTORY - 1) % LAMP_HISTORY)
                .copied()
        }
    }
}

/// Ticks from `from` to `to`, or 0 if `to` is before `from` (seen through the wrap).
fn elapsed(from: Ticks, to: Ticks) -> u32 {
    let d = to.wrapping_since(from);
    if d > MAX_TICKS {
        0
    } else {
        d
    }
}

fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

/// A dose-controlled curing station. See the [module documentation](self).
#[derive(Debug)]
pub struct CuringController<EN, AL, IL> {
    meter: Meter,
    config: CuringConfig,
    template: Integrator,
    integrator: Integrator,
    target_id: ThresholdId,
    over_id: ThresholdId,
    /// The thresholds crossed after the last integrated reading (from the integrator's step).
    crossed: Crossed,
    /// Effective lag in 1/256 ticks.
    lag_q8: i64,
    lag_effective_s: f64,
    off_deadline: u32,
    min_net: [i32; MAX_RANGES],
    max_net: [i32; MAX_RANGES],
    phase: CuringPhase,
    part: Option<PartState>,
    lamp: LampHistory,
    alarm_latched: bool,
    pending: Events,
    enable: EN,
    alarm: AL,
    interlock: IL,
}

impl<EN, AL, IL, EO, EI> CuringController<EN, AL, IL>
where
    EN: OutputPin<Error = EO>,
    AL: OutputPin<Error = EO>,
    IL: InputPin<Error = EI>,
{
    /// Validate the configuration, convert every limit into integer units, and set both
    /// outputs inactive.
    ///
    /// # Errors
    /// [`CuringError::Config`] for an invalid configuration; [`CuringError::Output`] if the
    /// outputs cannot be set inactive.
    pub fn new(
        meter: Meter,
        config: CuringConfig,
        enable: EN,
        alarm: AL,
        interlock: IL,
    ) -> Result<Self, CuringError<EO, EI>> {
        let checked = validate(&meter, &config).map_err(CuringError::Config)?;
        let mut template = Integrator::new(&meter, config.max_gap_ticks);
        let target_id = template
            .add_threshold(config.target, Rounding::NotBefore)
            .map_err(|_| CuringError::Config(CuringConfigError::Target))?;
        let over_id = template
            .add_threshold(config.target + config.tolerance, Rounding::NotAfter)
            .map_err(|_| CuringError::Config(CuringConfigError::Tolerance))?;
        let mut min_net = [i32::MIN; MAX_RANGES];
        let mut max_net = [i32::MAX; MAX_RANGES];
        for (i, (lo, hi)) in (0u8..).zip(min_net.iter_mut().zip(max_net.iter_mut())) {
            let k = meter.irradiance(1, RangeIndex(i)).w_per_m2();
            if k > 0.0 {
                if let Some(m) = config.window.minimum {
                    // Rounded up: a net code at or above this is certainly ≥ the minimum.
                    *lo = libm::ceil(m.irradiance.w_per_m2() / k) as i32;
                }
                if let Some(m) = config.window.maximum {
                    // Rounded down: a net code at or below this is certainly ≤ the maximum.
                    *hi = libm::floor(m.irradiance.w_per_m2() / k) as i32;
                }
            }
        }
        let rate = f64::from(meter.tick_rate().hz());
        let integrator = template.clone();
        let mut c = Self {
            lag_q8: checked.lag_q8,
            lag_effective_s: checked.lag_effective_ticks / rate,
            off_deadline: checked.off_deadline,
            meter,
            config,
            template,
            integrator,
            target_id,
            over_id,
            crossed: Crossed(0),
            min_net,
            max_net,
            phase: CuringPhase::Idle,
            part: None,
            lamp: LampHistory::new(),
            alarm_latched: false,
            pending: Events::NONE,
            enable,
            alarm,
            interlock,
        };
        c.write_enable(false)?;
        c.write_alarm(false)?;
        Ok(c)
    }

    /// Start a part from dark: the interlock must read closed and no alarm may be latched.
    /// The enable output goes active and the dose restarts from zero at `now`: the part is
    /// taken as dark until `now` (a closed shutter), so the first interval is a trapezoid
    /// from zero at `now` to the part's first reading. A first reading taken at `now` itself
    /// counts as the start of the run instead (the light was already on at `now`).
    ///
    /// Returns [`Events::STARTED`] (with [`Events::LAMP_LOW`] when lamp maintenance is due).
    ///
    /// # Errors
    /// [`CuringError::Refused`] (part active, alarm latched, interlock open — nothing
    /// changed); [`CuringError::Interlock`] if the interlock cannot be read (no part is
    /// started); [`CuringError::Output`] if the enable output cannot be written (the part is
    /// then faulted).
    pub fn start(&mut self, part: PartId, now: Ticks) -> Result<Events, CuringError<EO, EI>> {
        self.start_part(part, now, true)
    }

    /// Start a part whose light is already on (a lamp that stays lit between parts, a
    /// conveyor): the dose counts from the part's first reading, at its own tick, exactly as
    /// [`Session`](crate::control::session::Session) counts. Otherwise as [`start`](Self::start).
    ///
    /// # Errors
    /// As [`start`](Self::start).
    pub fn start_lit(&mut self, part: PartId, now: Ticks) -> Result<Events, CuringError<EO, EI>> {
        self.start_part(part, now, false)
    }

    fn start_part(
        &mut self,
        part: PartId,
        now: Ticks,
        dark: bool,
    ) -> Result<Events, CuringError<EO, EI>> {
        if self.part.is_some() {
            return Err(CuringError::Refused(Refusal::PartActive));
        }
        if self.alarm_latched {
            return Err(CuringError::Refused(Refusal::AlarmLatched));
        }
        let closed = self.read_interlock().map_err(CuringError::Interlock)?;
        if !closed {
            return Err(CuringError::Refused(Refusal::InterlockOpen));
        }
        self.pending = Events::NONE;
        self.integrator = self.template.clone();
        self.crossed = Crossed(0);
        let mut state = PartState::new(part, now);
        state.dark_from = dark.then_some(now);
        self.part = Some(state);
        self.phase = CuringPhase::Exposing;
        let mut ev = Events::STARTED;
        if self.lamp_trend().maintenance_due {
            ev |= Events::LAMP_LOW;
        }
        self.raise(ev);
        self.write_enable(true)?;
        Ok(self.take_pending())
    }

    /// Feed one reading. While a part is active the interlock is read once per call.
    ///
    /// # Errors
    /// [`CuringError::Output`] or [`CuringError::Interlock`] when a pin fails; the controller
    /// is then faulted (the reading was still integrated if it was usable).
    pub fn on_reading(&mut self, reading: &Reading) -> Result<Update, CuringError<EO, EI>> {
        let sample = self.meter.front_end().sample(reading);
        self.on_sample(&sample)
    }

    /// Feed one reading whose net code was already computed with this controller's meter
    /// ([`FrontEnd::sample`](crate::frontend::FrontEnd::sample)); otherwise as
    /// [`on_reading`](Self::on_reading).
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading).
    pub fn on_sample(&mut self, sample: &Sample) -> Result<Update, CuringError<EO, EI>> {
        let reading = &sample.reading;
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Ok(Update {
                sample: SampleUse::NoPart,
                phase: self.phase,
                events: Events::NONE,
            });
        }
        let door = self.read_interlock();
        let (sample, net) = self.integrate(reading, sample.net)?;
        if let Ok(closed) = door {
            self.handle_interlock(closed, reading.at)?;
        }
        if let Some(net) = net {
            self.after_integration(net, reading.range, reading.at)?;
        }
        if let Err(e) = door {
            self.enter_fault(CuringFault::InterlockPin, reading.at)?;
            return Err(CuringError::Interlock(e));
        }
        Ok(Update {
            sample,
            phase: self.phase,
            events: self.take_pending(),
        })
    }

    /// Read the interlock outside a reading (for example from its pin-change interrupt) and
    /// pause if it is open while exposing.
    ///
    /// # Errors
    /// As [`on_reading`](Self::on_reading); [`CuringError::Refused`] with
    /// [`Refusal::NoPart`] when no part is active.
    pub fn poll_interlock(&mut self, now: Ticks) -> Result<Events, CuringError<EO, EI>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        match self.read_interlock() {
            Ok(closed) => self.handle_interlock(closed, now)?,
            Err(e) => {
                self.enter_fault(CuringFault::InterlockPin, now)?;
                return Err(CuringError::Interlock(e));
            }
        }
        Ok(self.take_pending())
    }

    /// Resume a paused part. The interlock must read closed; the warm-up starts again from
    /// `now`. Closing the guard never resumes by itself.
    ///
    /// # Errors
    /// [`CuringError::Refused`] (no part, not paused, alarm latched, interlock open — nothing
    /// changed); pin errors as [`on_reading`](Self::on_reading).
    pub fn resume(&mut self, now: Ticks) -> Result<Events, CuringError<EO, EI>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        if self.phase != CuringPhase::Paused {
            return Err(CuringError::Refused(Refusal::NotPaused));
        }
        if self.alarm_latched {
            return Err(CuringError::Refused(Refusal::AlarmLatched));
        }
        let closed = match self.read_interlock() {
            Ok(c) => c,
            Err(e) => {
                self.enter_fault(CuringFault::InterlockPin, now)?;
                return Err(CuringError::Interlock(e));
            }
        };
        self.handle_interlock(closed, now)?;
        if !closed {
            return Err(CuringError::Refused(Refusal::InterlockOpen));
        }
        let h = self.integrator.exposure().j_per_m2();
        if let Some(p) = self.part.as_mut() {
            p.paused_j += h - p.pause_entry_j;
            p.off = None;
            p.exposing_since = now;
            p.exposing_entry_j = h;
            p.warm = false;
        }
        self.phase = CuringPhase::Exposing;
        self.raise(Events::RESUMED);
        self.write_enable(true)?;
        Ok(self.take_pending())
    }

    /// The tick at which to issue the stop if the irradiance stays as last measured, for a
    /// timer compare between readings: the last reading's tick + remaining ÷ (2 · net) − lag,
    /// rounded up. The last reading's tick if the stop is already due. `None` when not
    /// exposing, without a positive irradiance, or more than 2³¹ − 1 ticks away.
    #[must_use]
    pub fn stop_due(&self) -> Option<Ticks> {
        if self.phase != CuringPhase::Exposing {
            return None;
        }
        let last = self.integrator.last()?;
        if last.net <= 0 {
            return None;
        }
        let remaining = self.integrator.units_to_threshold(self.target_id)?;
        let seg = self.integrator.segment_range();
        let ticks = if seg == last.range {
            let need = remaining.saturating_sub(self.tail_units(last.net));
            if need <= 0 {
                return Some(last.at);
            }
            let per_tick = i64::from(last.net).saturating_mul(2);
            let whole = need.checked_div(per_tick)?;
            let part = i64::from(need.checked_rem(per_tick)? != 0);
            whole.saturating_add(part)
        } else {
            // Rare path (first reading of a run in another range): compare in f64.
            let rem_j = remaining as f64 * self.meter.j_per_m2_per_unit(seg);
            let e = self.meter.irradiance(last.net, last.range).w_per_m2();
            let rate = f64::from(self.meter.tick_rate().hz());
            let tail_j = match self.config.stop_policy {
                StopPolicy::Anticipate => e * self.lag_effective_s,
                StopPolicy::AtTarget => 0.0,
            };
            let t = libm::ceil((rem_j - tail_j) / e * rate);
            if t <= 0.0 {
                return Some(last.at);
            }
            t as i64
        };
        let ticks = u32::try_from(ticks).ok().filter(|t| *t <= MAX_TICKS)?;
        Some(last.at.wrapping_add(ticks))
    }

    /// The firmware's timer compare (armed at [`stop_due`](Self::stop_due)) fired at `now`:
    /// issue the stop if it is still due for the latest irradiance, or say when to re-arm.
    ///
    /// # Errors
    /// [`CuringError::Output`] if the enable output cannot be written.
    pub fn on_stop_timer(&mut self, now: Ticks) -> Result<TimerOutcome, CuringError<EO, EI>> {
        self.pending = Events::NONE;
        if self.phase != CuringPhase::Exposing {
            return Ok(TimerOutcome::NotExposing);
        }
        match self.stop_due() {
            None => Ok(TimerOutcome::NoEstimate),
            Some(due) => {
                // `now` at or after `due` (wrap-aware).
                if now.wrapping_since(due) <= MAX_TICKS {
                    self.issue_stop(StopReason::TargetTimer, now)?;
                    Ok(TimerOutcome::Stopped)
                } else {
                    Ok(TimerOutcome::Rearm(due))
                }
            }
        }
    }

    /// Enter the safe state for a reason found outside the controller (an ADC bus error, a
    /// watchdog, an operator abort). Latches the alarm. Without a part, only the outputs and
    /// the latch are set.
    ///
    /// # Errors
    /// [`CuringError::Output`] if an output cannot be written.
    pub fn fault(
        &mut self,
        reason: CuringFault,
        now: Ticks,
    ) -> Result<Events, CuringError<EO, EI>> {
        self.pending = Events::NONE;
        self.enter_fault(reason, now)?;
        Ok(self.take_pending())
    }

    /// End the part and return its record. The enable output goes inactive if it was still
    /// active ([`StopReason::Ended`]). Readings after this are not monitored. A fault stays
    /// latched on the alarm output and in the phase ([`CuringPhase::Faulted`]) until
    /// [`acknowledge_alarm`](Self::acknowledge_alarm); otherwise the phase is
    /// [`CuringPhase::Idle`].
    ///
    /// # Errors
    /// [`CuringError::Refused`] with [`Refusal::NoPart`]; [`CuringError::Output`] if the
    /// enable output cannot be written (the part stays active and faulted; call again).
    pub fn finish(&mut self, now: Ticks) -> Result<PartRecord, CuringError<EO, EI>> {
        self.pending = Events::NONE;
        if self.part.is_none() {
            return Err(CuringError::Refused(Refusal::NoPart));
        }
        match self.phase {
            CuringPhase::Exposing => self.issue_stop(StopReason::Ended, now)?,
            CuringPhase::Paused => {
                let h = self.integrator.exposure().j_per_m2();
                if let Some(p) = self.part.as_mut() {
                    p.paused_j += h - p.pause_entry_j;
                    p.pause_entry_j = h;
                    if p.stop.is_none() {
                        p.stop = Some((now, StopReason::Paused));
                        p.stop_j = h;
                    }
                }
            }
            _ => {}
        }
        let Some(p) = self.part else {
            return Err(CuringError::Refused(Refusal::NoPart));
        };
        let mut record = self.build_record(&p, now);
        if let Some(ratio) = record.lamp_ratio {
            self.lamp.push(ratio);
            if self.lamp_trend().maintenance_due {
                record.seen |= Events::LAMP_LOW;
                record.events = record.events.saturating_add(1);
            }
        }
        self.part = None;
        // A latched alarm keeps the station in its fault until acknowledged.
        if !matches!(self.phase, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Idle;
        }
        Ok(record)
    }

    /// Clear a latched alarm (after the operator has checked the station). Only without an
    /// active part.
    ///
    /// # Errors
    /// [`CuringError::Refused`] with [`Refusal::PartActive`]; [`CuringError::Output`].
    pub fn acknowledge_alarm(&mut self) -> Result<(), CuringError<EO, EI>> {
        if self.part.is_some() {
            return Err(CuringError::Refused(Refusal::PartActive));
        }
        self.write_alarm(false)?;
        self.alarm_latched = false;
        self.phase = CuringPhase::Idle;
        Ok(())
    }

    /// The current phase.
    #[must_use]
    pub const fn phase(&self) -> CuringPhase {
        self.phase
    }

    /// Whether the alarm output is latched active.
    #[must_use]
    pub const fn alarm_latched(&self) -> bool {
        self.alarm_latched
    }

    /// The meter this controller converts with.
    #[must_use]
    pub const fn meter(&self) -> &Meter {
        &self.meter
    }

    /// The validated configuration.
    #[must_use]
    pub const fn config(&self) -> &CuringConfig {
        &self.config
    }

    /// The dose integrator of the current (or last) part, read-only.
    #[must_use]
    pub const fn integrator(&self) -> &Integrator {
        &self.integrator
    }

    /// Radiant exposure delivered to the current (or last) part so far.
    #[must_use]
    pub fn delivered(&self) -> RadiantExposure {
        self.integrator.exposure()
    }

    /// Irradiance of the last integrated reading (zero before any).
    #[must_use]
    pub fn irradiance(&self) -> Irradiance {
        self.integrator
            .last()
            .map_or(Irradiance::ZERO, |l| self.meter.irradiance(l.net, l.range))
    }

    /// Dose predicted to arrive after a stop command issued now (current irradiance ×
    /// effective lag).
    #[must_use]
    pub fn predicted_tail(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.irradiance().w_per_m2() * self.lag_effective_s)
    }

    /// The effective actuator lag (`∫ fraction dt`), seconds.
    #[must_use]
    pub const fn effective_lag(&self) -> Seconds {
        Seconds::from_s(self.lag_effective_s)
    }

    /// The window limits in net codes for range `r`: `(min, max)`, `i32::MIN` / `i32::MAX`
    /// where no limit is configured. `None` for a range the meter does not have.
    #[must_use]
    pub fn window_net_codes(&self, r: RangeIndex) -> Option<(i32, i32)> {
        let i = usize::from(r.0);
        if i >= self.meter.front_end().range_count() {
            return None;
        }
        Some((*self.min_net.get(i)?, *self.max_net.get(i)?))
    }

    /// The lamp-ageing trend (empty without a [`LampReference`]).
    #[must_use]
    pub fn lamp_trend(&self) -> LampTrend {
        let latest = self.lamp.latest();
        let n = self.lamp.len;
        let (mean, slope) = if n == 0 {
            (None, None)
        } else {
            let nf = n as f64;
            let mean_y = self.lamp.ordered().sum::<f64>() / nf;
            let mean_x = (nf - 1.0) / 2.0;
            let mut sxy = 0.0;
            let mut sxx = 0.0;
            for (i, y) in self.lamp.ordered().enumerate() {
                let dx = i as f64 - mean_x;
                sxy += dx * (y - mean_y);
                sxx += dx * dx;
            }
            let slope = if n >= 2 && sxx > 0.0 {
                Some(sxy / sxx)
            } else {
                None
            };
            (Some(mean_y), slope)
        };
        let due = match (latest, self.config.lamp) {
            (Some(r), Some(l)) => r < l.maintenance_below,
            _ => false,
        };
        LampTrend {
            parts: self.lamp.parts,
            latest_ratio: latest,
            mean_ratio: mean,
            slope_per_part: slope,
            maintenance_due: due,
        }
    }

    /// Take a new dark offset for range `r` (a dark capture between parts). Applied only
    /// while no part is active; returns `false` and changes nothing otherwise, or if the
    /// range does not exist or the offset is outside the code range.
    pub fn set_dark_offset(&mut self, r: RangeIndex, dark_offset: i32) -> bool {
        if self.part.is_some() {
            return false;
        }
        self.meter.front_end_mut().set_dark_offset(r, dark_offset)
    }

    /// Give the pins back. The caller is responsible for their state afterwards.
    pub fn release(self) -> (EN, AL, IL) {
        (self.enable, self.alarm, self.interlock)
    }

    // -- per reading ----------------------------------------------------------------------

    /// Convert and integrate. Returns how the sample was used and its net code if integrated.
    fn integrate(
        &mut self,
        reading: &Reading,
        net: Result<i32, CodeFault>,
    ) -> Result<(SampleUse, Option<i32>), CuringError<EO, EI>> {
        let at = reading.at;
        let net = match net {
            Ok(n) => n,
            Err(f @ (CodeFault::SaturatedHigh | CodeFault::SaturatedLow)) => {
                let max = self.config.max_unusable_run;
                if let Some(p) = self.part.as_mut() {
                    if p.unusable_run < max {
                        p.unusable_run = p.unusable_run.saturating_add(1);
                        return Ok((SampleUse::Unusable(f), None));
                    }
                }
                self.enter_fault(CuringFault::Saturated, at)?;
                return Ok((SampleUse::Faulted(CuringFault::Saturated), None));
            }
            Err(CodeFault::OutOfRange | CodeFault::UnknownRange) => {
                self.enter_fault(CuringFault::BadCode, at)?;
                return Ok((SampleUse::Faulted(CuringFault::BadCode), None));
            }
        };
        if let Some(p) = self.part.as_mut() {
            p.unusable_run = 0;
            if let Some(t0) = p.dark_from.take() {
                if t0 != at {
                    // Dark until the start tick: a zero in the reading's own range (no range
                    // split). A fresh integrator accepts any first sample in a known range.
                    let _ = self.integrator.accept(0, reading.range, t0);
                }
            }
        }
        match self.integrator.accept(net, reading.range, at) {
            Ok(step) => {
                if let Some(p) = self.part.as_mut() {
                    p.end = at;
                }
                self.crossed = step.crossed;
                Ok((SampleUse::Integrated, Some(net)))
            }
            Err(SampleError::Repeated) => Ok((SampleUse::Repeated, None)),
            Err(e) => {
                let f = match e {
                    SampleError::Backwards { .. } => CuringFault::TimeBackwards,
                    SampleError::Gap { ticks } => CuringFault::Gap { ticks },
                    SampleError::Repeated | SampleError::UnknownRange => CuringFault::BadCode,
                };
                self.enter_fault(f, at)?;
                Ok((SampleUse::Faulted(f), None))
            }
        }
    }

    fn handle_interlock(&mut self, closed: bool, at: Ticks) -> Result<(), CuringError<EO, EI>> {
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        if closed != p.interlock_closed {
            p.interlock_closed = closed;
            self.raise(if closed {
                Events::INTERLOCK_CLOSED
            } else {
                Events::INTERLOCK_OPENED
            });
        }
        if !closed && self.phase == CuringPhase::Exposing {
            self.leave_exposing();
            let h = self.integrator.exposure().j_per_m2();
            if let Some(p) = self.part.as_mut() {
                p.pause_entry_j = h;
            }
            self.arm_off_check(at);
            self.phase = CuringPhase::Paused;
            self.raise(Events::PAUSED);
            self.write_enable(false)?;
        }
        Ok(())
    }

    fn after_integration(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), CuringError<EO, EI>> {
        // The integrator's own step result: no rescan of the thresholds.
        let crossed = self.crossed;
        if crossed.contains(self.target_id) && !self.seen(Events::TARGET_REACHED) {
            self.raise(Events::TARGET_REACHED);
        }
        if crossed.contains(self.over_id) && !self.seen(Events::OVEREXPOSED) {
            self.raise(Events::OVEREXPOSED);
            self.enter_fault(CuringFault::Overexposure, at)?;
        }
        match self.phase {
            CuringPhase::Exposing => self.exposing_sample(net, range, at),
            CuringPhase::Idle => Ok(()),
            CuringPhase::Paused
            | CuringPhase::Stopping
            | CuringPhase::Complete
            | CuringPhase::Faulted(_) => self.off_sample(net, range, at),
        }
    }

    fn exposing_sample(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), CuringError<EO, EI>> {
        let r = usize::from(range.0);
        let warm_up = self.config.window.warm_up_ticks;
        let hold_low = self.config.window.minimum.map_or(0, |m| m.hold_off_ticks);
        let hold_high = self.config.window.maximum.map_or(0, |m| m.hold_off_ticks);
        let lo = self.min_net.get(r).copied().unwrap_or(i32::MIN);
        let hi = self.max_net.get(r).copied().unwrap_or(i32::MAX);
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        if let Some(peak) = p.peak.get_mut(r) {
            *peak = (*peak).max(net);
        }
        let mut warm_done = false;
        if !p.warm && elapsed(p.exposing_since, at) >= warm_up {
            p.warm = true;
            let window_start = p.exposing_since.wrapping_add(warm_up);
            p.last_not_low = window_start;
            p.last_not_high = window_start;
            warm_done = true;
        }
        let mut fault = None;
        if p.warm {
            if let Some(min) = p.min.get_mut(r) {
                *min = (*min).min(net);
            }
            if net < lo {
                if elapsed(p.last_not_low, at) > hold_low {
                    fault = Some(CuringFault::IrradianceLow);
                }
            } else {
                p.last_not_low = at;
            }
            if net > hi {
                if elapsed(p.last_not_high, at) > hold_high {
                    fault = Some(CuringFault::IrradianceHigh);
                }
            } else {
                p.last_not_high = at;
            }
        }
        if warm_done {
            self.raise(Events::WARM_UP_DONE);
        }
        if let Some(f) = fault {
            return self.enter_fault(f, at);
        }
        if self.stop_now(net, range) {
            self.issue_stop(StopReason::Target, at)?;
        }
        Ok(())
    }

    /// The per-sample stop decision: units still to target ≤ predicted tail units.
    fn stop_now(&self, net: i32, range: RangeIndex) -> bool {
        let Some(remaining) = self.integrator.units_to_threshold(self.target_id) else {
            return false;
        };
        if remaining <= 0 {
            return true;
        }
        if self.config.stop_policy == StopPolicy::AtTarget || net <= 0 {
            return false;
        }
        let seg = self.integrator.segment_range();
        if seg == range {
            remaining <= self.tail_units(net)
        } else {
            let rem_j = remaining as f64 * self.meter.j_per_m2_per_unit(seg);
            let tail_j = self.meter.irradiance(net, range).w_per_m2() * self.lag_effective_s;
            rem_j <= tail_j
        }
    }

    /// Predicted tail in integer units of the reading's range: 2 · net · L.
    fn tail_units(&self, net: i32) -> i64 {
        if self.config.stop_policy == StopPolicy::AtTarget || net <= 0 {
            return 0;
        }
        // (net · L_q8 · 2) / 256; saturates (a stop issued early) on absurd values.
        i64::from(net).saturating_mul(self.lag_q8) >> (LAG_FRACTION_BITS - 1)
    }

    fn off_sample(
        &mut self,
        net: i32,
        range: RangeIndex,
        at: Ticks,
    ) -> Result<(), CuringError<EO, EI>> {
        let deadline = self.off_deadline;
        let Some(p) = self.part.as_mut() else {
            return Ok(());
        };
        let Some(off) = p.off.as_mut() else {
            return Ok(());
        };
        let limit = off
            .limit_net
            .get(usize::from(range.0))
            .copied()
            .unwrap_or(i32::MAX);
        if net <= limit {
            if !off.seen_off {
                off.seen_off = true;
                if self.phase == CuringPhase::Stopping {
                    self.phase = CuringPhase::Complete;
                }
                self.raise(Events::LIGHT_OFF);
            }
        } else if elapsed(off.from, at) > deadline && !self.seen(Events::LIGHT_NOT_OFF) {
            self.raise(Events::LIGHT_NOT_OFF);
            self.enter_fault(CuringFault::LightNotOff, at)?;
        }
        Ok(())
    }

    // -- transitions ----------------------------------------------------------------------

    fn issue_stop(&mut self, reason: StopReason, at: Ticks) -> Result<(), CuringError<EO, EI>> {
        self.leave_exposing();
        let h = self.integrator.exposure().j_per_m2();
        if let Some(p) = self.part.as_mut() {
            p.stop = Some((at, reason));
            p.stop_j = h;
        }
        self.arm_off_check(at);
        self.phase = CuringPhase::Stopping;
        self.raise(Events::STOP_ISSUED);
        self.write_enable(false)
    }

    /// Close the current exposing interval at the last integrated reading.
    fn leave_exposing(&mut self) {
        let h = self.integrator.exposure().j_per_m2();
        let last = self.integrator.last().map(|l| l.at);
        if let Some(p) = self.part.as_mut() {
            let end = last.unwrap_or(p.exposing_since);
            p.exposing_ticks = p
                .exposing_ticks
                .saturating_add(u64::from(elapsed(p.exposing_since, end)));
            p.exposing_j += h - p.exposing_entry_j;
            p.exposing_entry_j = h;
        }
    }

    /// Derive the light-off limits from the irradiance at the off command (floats, once).
    fn arm_off_check(&mut self, from: Ticks) {
        let e_ref = self.irradiance().w_per_m2().max(0.0);
        let limit =
            (self.config.light_off.fraction * e_ref).max(self.config.light_off.floor.w_per_m2());
        let mut limit_net = [i32::MAX; MAX_RANGES];
        for (i, slot) in (0u8..).zip(limit_net.iter_mut()) {
            // The meter holds the per-range factor; nothing else keeps a copy.
            let k = &self.meter.irradiance(1, RangeIndex(i)).w_per_m2();
            if *k > 0.0 {
                *slot = libm::floor(limit / k) as i32;
            }
        }
        if let Some(p) = self.part.as_mut() {
            if p.off.is_none() {
                p.off = Some(OffCheck {
                    from,
                    limit_net,
                    seen_off: false,
                });
            }
        }
    }

    fn enter_fault(&mut self, reason: CuringFault, at: Ticks) -> Result<(), CuringError<EO, EI>> {
        let was = self.phase;
        let mut new_kind = false;
        if let Some(p) = self.part.as_mut() {
            if p.fault_kinds & reason.kind_bit() == 0 {
                p.fault_kinds |= reason.kind_bit();
                new_kind = true;
            }
            if p.first_fault.is_none() {
                p.first_fault = Some(reason);
            }
        }
        if new_kind {
            self.raise(Events::FAULT);
        }
        if was == CuringPhase::Exposing {
            self.leave_exposing();
        }
        if matches!(was, CuringPhase::Exposing | CuringPhase::Paused) {
            let h = self.integrator.exposure().j_per_m2();
            if let Some(p) = self.part.as_mut() {
                if p.stop.is_none() {
                    p.stop = Some((at, StopReason::Fault(reason)));
                    p.stop_j = h;
                }
            }
            self.arm_off_check(at);
        }
        if !matches!(was, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Faulted(reason);
        }
        self.alarm_latched = true;
        // The shared safe-state sequence (crate::control): enable inactive first, then the
        // alarm, with one retry of the enable on any error.
        let r = crate::control::safe_state(
            &mut self.enable,
            self.config.enable_level,
            &mut self.alarm,
            self.config.alarm_level,
        );
        if r.is_err() {
            self.mark_output_fault();
        }
        r.map_err(|e| match e {
            crate::control::SafeStateError::Enable(e)
            | crate::control::SafeStateError::Alarm(e) => CuringError::Output(e),
        })
    }

    fn build_record(&self, p: &PartState, now: Ticks) -> PartRecord {
        let delivered = self.integrator.exposure();
        let rate = f64::from(self.meter.tick_rate().hz());
        let (stop, stop_reason, stop_j) = match p.stop {
            Some((t, r)) => (t, r, p.stop_j),
            None => (now, StopReason::Ended, delivered.j_per_m2()),
        };
        let mut peak: Option<f64> = None;
        let mut min: Option<f64> = None;
        for (i, (pk, mn)) in (0u8..).zip(p.peak.iter().zip(p.min.iter())) {
            if *pk != i32::MIN {
                let e = self.meter.irradiance(*pk, RangeIndex(i)).w_per_m2();
                peak = Some(peak.map_or(e, |x| x.max(e)));
            }
            if *mn != i32::MAX {
                let e = self.meter.irradiance(*mn, RangeIndex(i)).w_per_m2();
                min = Some(min.map_or(e, |x| x.min(e)));
            }
        }
        let exposing_s = p.exposing_ticks as f64 / rate;
        let mean = if exposing_s > 0.0 {
            Some(Irradiance::from_w_per_m2(p.exposing_j / exposing_s))
        } else {
            None
        };
        let measured = !p.first_fault.is_some_and(CuringFault::is_measurement_fault);
        let lamp_ratio = match (self.config.lamp, mean) {
            (Some(l), Some(m)) if measured => Some(m.w_per_m2() / l.reference.w_per_m2()),
            _ => None,
        };
        PartRecord {
            part: p.id,
            start: p.start,
            stop,
            end: p.end,
            target: self.config.target,
            delivered,
            after_stop: RadiantExposure::from_j_per_m2(delivered.j_per_m2() - stop_j),
            paused: RadiantExposure::from_j_per_m2(p.paused_j),
            overshoot: delivered - self.config.target,
            peak: peak.map(Irradiance::from_w_per_m2),
            min: min.map(Irradiance::from_w_per_m2),
            mean,
            exposing_time: Seconds::from_s(exposing_s),
            stop_reason,
            fault: p.first_fault,
            faults: p.fault_kinds.count_ones() as u8,
            events: p.event_count,
            seen: p.seen,
            lamp_ratio,
        }
    }

    // -- events and pins ------------------------------------------------------------------

    fn raise(&mut self, e: Events) {
        self.pending |= e;
        if let Some(p) = self.part.as_mut() {
            p.seen |= e;
            p.event_count = p.event_count.saturating_add(e.count() as u16);
        }
    }

    fn seen(&self, e: Events) -> bool {
        self.part.as_ref().is_some_and(|p| p.seen.contains(e))
    }

    fn take_pending(&mut self) -> Events {
        core::mem::take(&mut self.pending)
    }

    fn read_interlock(&mut self) -> Result<bool, EI> {
        let high = self.interlock.is_high()?;
        Ok(high == matches!(self.config.interlock_closed_level, ActiveLevel::High))
    }

    /// An output failed: fault (keeping an earlier reason) and latch the alarm, without
    /// writing pins.
    fn mark_output_fault(&mut self) {
        if let Some(p) = self.part.as_mut() {
            if p.fault_kinds & CuringFault::Output.kind_bit() == 0 {
                p.fault_kinds |= CuringFault::Output.kind_bit();
                p.seen |= Events::FAULT;
                p.event_count = p.event_count.saturating_add(1);
            }
            if p.first_fault.is_none() {
                p.first_fault = Some(CuringFault::Output);
            }
        }
        self.pending |= Events::FAULT;
        if !matches!(self.phase, CuringPhase::Faulted(_)) {
            self.phase = CuringPhase::Faulted(CuringFault::Output);
        }
        self.alarm_latched = true;
    }

    fn write_enable(&mut self, active: bool) -> Result<(), CuringError<EO, EI>> {
        let r = set(&mut self.enable, self.config.enable_level, active);
        if r.is_err() {
            self.mark_output_fault();
            // Best effort: try inactive once more (a transient error on an expander), and
            // raise the alarm.
            let _ = set(&mut self.enable, self.config.enable_level, false);
            let _ = set(&mut self.alarm, self.config.alarm_level, true);
        }
        r.map_err(CuringError::Output)
    }

    fn write_alarm(&mut self, active: bool) -> Result<(), CuringError<EO, EI>> {
        let r = set(&mut self.alarm, self.config.alarm_level, active);
        if r.is_err() {
            self.mark_output_fault();
            let _ = set(&mut self.enable, self.config.enable_level, false);
        }
        r.map_err(CuringError::Output)
    }
}

fn set<P: OutputPin>(pin: &mut P, level: ActiveLevel, active: bool) -> Result<(), P::Error> {
    crate::control::drive(pin, level, active)
}

struct Checked {
    lag_q8: i64,
    lag_effective_ticks: f64,
    off_deadline: u32,
}

fn validate(meter: &Meter, c: &CuringConfig) -> Result<Checked, CuringConfigError> {
    let target = c.target.j_per_m2();
    if !positive(target) {
        return Err(CuringConfigError::Target);
    }
    let tol = c.tolerance.j_per_m2();
    if !(tol.is_finite() && tol >= 0.0) {
        return Err(CuringConfigError::Tolerance);
    }
    if c.max_gap_ticks == 0 || c.max_gap_ticks > MAX_TICKS {
        return Err(CuringConfigError::MaxGap);
    }
    let lag_eff = c.lag.effective_ticks();
    let lag_off = c.lag.off_after_ticks();
    if lag_off > MAX_TICKS || !lag_eff.is_finite() || lag_eff < 0.0 {
        return Err(CuringConfigError::LagTooLong);
    }
    let w = &c.window;
    if w.warm_up_ticks > MAX_TICKS {
        return Err(CuringConfigError::WarmUp);
    }
    let rate = f64::from(meter.tick_rate().hz());
    let warm = f64::from(w.warm_up_ticks);
    if let Some(min) = w.minimum {
        let e = min.irradiance.w_per_m2();
        if !positive(e) {
            return Err(CuringConfigError::WindowIrradiance);
        }
        // Whole exposure at the minimum irradiance, ticks.
        let t_min = target / e * rate;
        if lag_eff >= t_min {
            return Err(CuringConfigError::LagTooLong);
        }
        if min.hold_off_ticks > MAX_TICKS || warm + f64::from(min.hold_off_ticks) >= t_min {
            return Err(CuringConfigError::LowHoldOff);
        }
    }
    if let Some(max) = w.maximum {
        let e = max.irradiance.w_per_m2();
        if !positive(e) {
            return Err(CuringConfigError::WindowIrradiance);
        }
        if let Some(min) = w.minimum {
            if min.irradiance.w_per_m2() >= e {
                return Err(CuringConfigError::WindowOrder);
            }
        }
        let t_max = target / e * rate;
        if max.hold_off_ticks > MAX_TICKS || warm + f64::from(max.hold_off_ticks) >= t_max {
            return Err(CuringConfigError::HighHoldOff);
        }
    }
    let lo = &c.light_off;
    if !(lo.fraction.is_finite() && lo.fraction > 0.0 && lo.fraction < 1.0) {
        return Err(CuringConfigError::LightOffFraction);
    }
    let floor = lo.floor.w_per_m2();
    if !(floor.is_finite() && floor >= 0.0) {
        return Err(CuringConfigError::LightOffFloor);
    }
    let off_deadline = lag_off
        .checked_add(lo.margin_ticks)
        .filter(|d| *d <= MAX_TICKS)
        .ok_or(CuringConfigError::LightOffMargin)?;
    if let Some(l) = c.lamp {
        if !positive(l.reference.w_per_m2()) {
            return Err(CuringConfigError::LampReference);
        }
        let f = l.maintenance_below;
        if !(f.is_finite() && f > 0.0 && f <= 1.0) {
            return Err(CuringConfigError::LampFraction);
        }
    }
    // lag_eff ≤ 2³¹ ticks, so 256 · lag_eff < 2³⁹ fits an i64.
    let lag_q8 = libm::round(lag_eff * f64::from(1u32 << LAG_FRACTION_BITS)) as i64;
    Ok(Checked {
        lag_q8,
        lag_effective_ticks: lag_eff,
        off_deadline,
    })
}

#[cfg(test)]
mod tests;
