//! Curing-station dose control: stop when the part has received its radiant exposure,
//! whatever the lamp does.
//!
//! A [`CuringController`] joins a [`Meter`](crate::irradiance::Meter), an exact [`Integrator`](crate::dose::Integrator) and three embedded-hal
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
//! | every phase | one interlock read; front-end net code (2 compares, 1 subtract); [`Integrator::accept`](crate::dose::Integrator::accept) (one 64-bit multiply-add, two threshold compares) |
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

use crate::acquire::reading::Ticks;

/// The largest number of points of a measured [`FallProfile`].
pub const MAX_FALL_POINTS: usize = 8;

/// Number of parts over which [`LampTrend`] is computed.
pub const LAMP_HISTORY: usize = 16;

/// Fractional bits of the effective lag on the per-sample path (1/256 tick).
const LAG_FRACTION_BITS: u32 = 8;

/// Longest tick interval the controller accepts anywhere (2³¹ − 1): longer ones cannot be
/// told from time going backwards.
const MAX_TICKS: u32 = i32::MAX as u32;

mod config;
mod controller;
mod events;
mod part;

pub use crate::control::Refusal;
pub use config::{
    ActuatorLag, CuringConfig, CuringConfigError, FallPoint, FallProfile, IrradianceLimit,
    IrradianceWindow, LampReference, LightOffCheck, StopPolicy,
};
pub use controller::{CuringController, CuringState};
pub use events::{
    CuringError, CuringFault, CuringPhase, Events, SampleUse, StopReason, TimerOutcome, Update,
};
pub use part::{Label, LabelError, LampTrend, PartId, PartIdentity, PartRecord, LABEL_LEN};

/// The error of a [`CuringController`] with enable pin `EN`, alarm pin `AL` and interlock
/// input `IL`, each with its own error type.
pub type ControllerError<EN, AL, IL> = CuringError<
    crate::control::PinError<
        <EN as embedded_hal::digital::ErrorType>::Error,
        <AL as embedded_hal::digital::ErrorType>::Error,
    >,
    <IL as embedded_hal::digital::ErrorType>::Error,
>;

/// Ticks from `from` to `to`, or 0 if `to` is before `from` (seen through the wrap).
pub(super) fn elapsed(from: Ticks, to: Ticks) -> u32 {
    let d = to.wrapping_since(from);
    if d > MAX_TICKS {
        0
    } else {
        d
    }
}

pub(super) fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

#[cfg(test)]
mod tests;
