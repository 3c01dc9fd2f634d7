//! The curing station's configuration, validated once into integer limits.

use embedded_hal::digital::OutputPin;

use crate::control::ActiveLevel;
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure};

use super::*;

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
#[non_exhaustive]
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

pub(super) fn set<P: OutputPin>(
    pin: &mut P,
    level: ActiveLevel,
    active: bool,
) -> Result<(), P::Error> {
    crate::control::drive(pin, level, active)
}

pub(super) struct Checked {
    pub(super) lag_q8: i64,
    pub(super) lag_effective_ticks: f64,
    pub(super) off_deadline: u32,
}

pub(super) fn validate(meter: &Meter, c: &CuringConfig) -> Result<Checked, CuringConfigError> {
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
