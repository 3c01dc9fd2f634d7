//! Simulation of a UV-LED curing head for the curing-controller tests, benches and examples.
//!
//! Every parameter here is **invented simulation data** (plausible shapes, not measurements of
//! any product):
//!
//! - [`LedArray`] — irradiance at the part that droops as the junction warms (first-order
//!   thermal state, heating while on and cooling while off) and falls with ageing;
//! - [`Actuator`] — what the light does after the enable output goes inactive: a dead time, a
//!   measured-style piecewise-linear fall, or a stuck shutter that keeps a fraction of the light;
//!   the hardware interlock cuts the light through the same actuator when the door opens;
//! - [`Station`] — joins both, integrates the *true* radiant exposure at the part on a fine
//!   time grid (independent of the controller's samples) and produces ADC readings through
//!   [`Photodiode`];
//! - [`SimOutput`] / [`SimInput`] — embedded-hal pins wired to the model, so the model sees
//!   the controller's enable output and the test drives the door switch.

use std::cell::Cell;
use std::convert::Infallible;
use std::rc::Rc;

use embedded_hal::digital::{ErrorType, InputPin, OutputPin};
use photon_ledger::control::curing::{CuringConfigError, CuringError};
use photon_ledger::control::PinError;
use photon_ledger::prelude::*;

/// An LED array seen from the part: irradiance vs thermal state and age.
#[derive(Debug, Clone, PartialEq)]
pub struct LedArray {
    /// Irradiance at the part, new lamp, cold junction, full drive, W/m².
    pub cold_w_per_m2: f64,
    /// Fraction of the output lost at thermal equilibrium (0 ..< 1).
    pub droop: f64,
    /// Thermal time constant while on, s.
    pub heat_tau_s: f64,
    /// Thermal time constant while off, s.
    pub cool_tau_s: f64,
    /// Output multiplier for ageing (1 = new).
    pub ageing: f64,
    /// Thermal state: 0 cold … 1 at equilibrium.
    pub thermal: f64,
}

impl LedArray {
    /// A cold, new array with the given cold irradiance and droop (time constants 8 s heating,
    /// 20 s cooling; invented).
    #[must_use]
    pub fn new(cold: Irradiance, droop: f64) -> Self {
        Self {
            cold_w_per_m2: cold.w_per_m2(),
            droop,
            heat_tau_s: 8.0,
            cool_tau_s: 20.0,
            ageing: 1.0,
            thermal: 0.0,
        }
    }

    /// Output at full drive now, W/m².
    #[must_use]
    pub fn output_w_per_m2(&self) -> f64 {
        self.cold_w_per_m2 * self.ageing * (1.0 - self.droop * self.thermal)
    }

    /// Advance the thermal state by `dt_s` with the LED on or off (exact first-order step).
    pub fn step(&mut self, on: bool, dt_s: f64) {
        let tau = if on { self.heat_tau_s } else { self.cool_tau_s };
        self.step_with(on, (-dt_s / tau).exp());
    }

    /// As [`step`](Self::step) with the decay factor `exp(−dt/τ)` already computed.
    fn step_with(&mut self, on: bool, decay: f64) {
        let goal = if on { 1.0 } else { 0.0 };
        self.thermal = goal + (self.thermal - goal) * decay;
    }
}

/// How the light behaves after an off command (times in seconds after the command).
#[derive(Debug, Clone, PartialEq)]
pub enum Actuator {
    /// Full light for `s` seconds, then off.
    Delay {
        /// Dead time, s.
        s: f64,
    },
    /// Piecewise-linear fraction remaining through `(t_s, fraction)` points, from (0, 1);
    /// 0 after the last point.
    Profile(Vec<(f64, f64)>),
    /// The shutter sticks: `fraction` of the light stays after `after_s` seconds.
    Stuck {
        /// Seconds after the command at which the shutter stops moving.
        after_s: f64,
        /// Fraction of the light that keeps reaching the part.
        fraction: f64,
    },
}

impl Actuator {
    /// Fraction of the light reaching the part `t_s` seconds after the off command.
    #[must_use]
    pub fn remaining(&self, t_s: f64) -> f64 {
        match self {
            Self::Delay { s } => {
                if t_s < *s {
                    1.0
                } else {
                    0.0
                }
            }
            Self::Profile(points) => {
                let mut t0 = 0.0;
                let mut f0 = 1.0;
                for &(t1, f1) in points {
                    if t_s < t1 {
                        return f0 + (f1 - f0) * (t_s - t0) / (t1 - t0);
                    }
                    t0 = t1;
                    f0 = f1;
                }
                0.0
            }
            Self::Stuck { after_s, fraction } => {
                if t_s < *after_s {
                    1.0
                } else {
                    *fraction
                }
            }
        }
    }
}

/// The photodiode front end of the simulation: irradiance → ADC code of range 0, inverse of
/// the meter's calibration, with a dark offset and optional deterministic noise.
#[derive(Debug, Clone, PartialEq)]
pub struct Photodiode {
    w_per_m2_per_code: f64,
    dark: i32,
    max_code: i32,
    noise_codes: u32,
    rng: u64,
}

impl Photodiode {
    /// For `meter` (range 0), dark offset `dark` codes, top code `max_code`, uniform noise of
    /// ±`noise_codes`.
    #[must_use]
    pub fn new(meter: &Meter, dark: i32, max_code: i32, noise_codes: u32) -> Self {
        Self {
            w_per_m2_per_code: meter.irradiance(1, RangeIndex(0)).w_per_m2(),
            dark,
            max_code,
            noise_codes,
            rng: 0x2545_f491_4f6c_dd1d,
        }
    }

    /// The code for an irradiance (rounded, clamped to the converter).
    pub fn code(&mut self, w_per_m2: f64) -> i32 {
        let mut c = (w_per_m2 / self.w_per_m2_per_code).round() as i64 + i64::from(self.dark);
        if self.noise_codes > 0 {
            // xorshift64: deterministic noise.
            self.rng ^= self.rng << 13;
            self.rng ^= self.rng >> 7;
            self.rng ^= self.rng << 17;
            let span = u64::from(self.noise_codes) * 2 + 1;
            c += (self.rng % span) as i64 - i64::from(self.noise_codes);
        }
        c.clamp(0, i64::from(self.max_code)) as i32
    }
}

/// The demo detector chain: 16-bit unipolar ADC, 2.5 V reference, 100 kΩ transimpedance,
/// dark offset 20 codes, certificate factor 12 (mW/cm²)/µA (about 4.6 µW/cm² per code,
/// 300 mW/cm² full scale), 395 nm LED band. Invented calibration for simulations.
///
/// # Panics
/// Never for `tick_hz ≥ 1` (the constants are valid).
#[must_use]
pub fn demo_meter(tick_hz: u32) -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.5),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: DEMO_DARK,
        }],
    )
    .expect("valid demo front end");
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_mw_per_cm2_per_ua(12.0)),
        band: Band::Led {
            peak: Wavelength::from_nm(395.0),
            fwhm: Wavelength::from_nm(12.0),
        },
        tick_rate: TickRate::from_hz(tick_hz).expect("tick rate ≥ 1"),
        sample_area: None,
    })
    .expect("valid demo meter")
}

/// Dark offset of [`demo_meter`], codes.
pub const DEMO_DARK: i32 = 20;

/// A shared boolean level between a simulated pin and the model.
pub type Level = Rc<Cell<bool>>;

/// An output pin whose level the model reads.
#[derive(Debug, Clone, Default)]
pub struct SimOutput(pub Level);

impl ErrorType for SimOutput {
    type Error = Infallible;
}

impl OutputPin for SimOutput {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.set(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.set(true);
        Ok(())
    }
}

/// An input pin the test drives (the door switch).
#[derive(Debug, Clone, Default)]
pub struct SimInput(pub Level);

impl ErrorType for SimInput {
    type Error = Infallible;
}

impl InputPin for SimInput {
    fn is_high(&mut self) -> Result<bool, Infallible> {
        Ok(self.0.get())
    }
    fn is_low(&mut self) -> Result<bool, Infallible> {
        Ok(!self.0.get())
    }
}

/// The curing head: LED array + actuator, with the true dose at the part.
#[derive(Debug, Clone)]
pub struct Station {
    /// The LED array.
    pub led: LedArray,
    /// The actuator (shutter or driver) behaviour after an off command.
    pub actuator: Actuator,
    /// Simulation step, s.
    pub step_s: f64,
    light_cmd: bool,
    since_off_s: f64,
    /// Fraction of the light at the off command (so an off during a rise/fall is continuous).
    off_from: f64,
    now_s: f64,
    true_dose_j_per_m2: f64,
    irradiance_w_per_m2: f64,
    /// (half step, decay on, decay off) for the usual step, to avoid `exp` per step.
    decay_cache: (f64, f64, f64),
}

impl Station {
    /// A station with the light off; simulation step 10 µs.
    #[must_use]
    pub fn new(led: LedArray, actuator: Actuator) -> Self {
        Self {
            led,
            actuator,
            step_s: 1e-5,
            light_cmd: false,
            since_off_s: f64::INFINITY,
            off_from: 0.0,
            now_s: 0.0,
            true_dose_j_per_m2: 0.0,
            irradiance_w_per_m2: 0.0,
            decay_cache: (f64::NAN, 1.0, 1.0),
        }
    }

    fn led_step(&mut self, on: bool, dt: f64) {
        if dt != self.decay_cache.0 {
            self.decay_cache = (
                dt,
                (-dt / self.led.heat_tau_s).exp(),
                (-dt / self.led.cool_tau_s).exp(),
            );
        }
        let decay = if on {
            self.decay_cache.1
        } else {
            self.decay_cache.2
        };
        self.led.step_with(on, decay);
    }

    /// Command the light (enable output AND hardware interlock closed). Switching on is
    /// instantaneous; switching off follows the actuator.
    pub fn command(&mut self, on: bool) {
        if self.light_cmd && !on {
            self.since_off_s = 0.0;
            self.off_from = 1.0;
        }
        self.light_cmd = on;
        self.irradiance_w_per_m2 = self.irradiance_now();
    }

    fn transmission(&self) -> f64 {
        if self.light_cmd {
            1.0
        } else {
            self.off_from * self.actuator.remaining(self.since_off_s)
        }
    }

    fn irradiance_now(&self) -> f64 {
        self.led.output_w_per_m2() * self.transmission()
    }

    /// Advance to `t_s` (seconds since the simulation start), integrating the true dose with
    /// the midpoint rule on the simulation step.
    pub fn advance_to(&mut self, t_s: f64) {
        while self.now_s < t_s {
            let dt = self.step_s.min(t_s - self.now_s);
            // The LED is powered while commanded on or while a stuck shutter passes light (an
            // LED driver that does not switch off keeps heating).
            let powered = self.light_cmd || self.transmission() > 0.0;
            let half = dt * 0.5;
            self.since_off_s += half;
            self.led_step(powered, half);
            let e = self.irradiance_now();
            self.since_off_s += half;
            self.led_step(powered, half);
            self.true_dose_j_per_m2 += e * dt;
            self.now_s += dt;
        }
        self.irradiance_w_per_m2 = self.irradiance_now();
    }

    /// Irradiance at the part now, W/m².
    #[must_use]
    pub fn irradiance(&self) -> Irradiance {
        Irradiance::from_w_per_m2(self.irradiance_w_per_m2)
    }

    /// True radiant exposure at the part since the last [`reset_dose`](Self::reset_dose).
    #[must_use]
    pub fn true_dose(&self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.true_dose_j_per_m2)
    }

    /// Start counting the true dose from zero (a new part under the head).
    pub fn reset_dose(&mut self) {
        self.true_dose_j_per_m2 = 0.0;
    }

    /// Simulation time, s.
    #[must_use]
    pub fn now_s(&self) -> f64 {
        self.now_s
    }
}

/// A door (guard) opening during a part, times in seconds after the start command.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DoorOpening {
    /// The door opens (the hardware interlock cuts the light through the actuator).
    pub open_s: f64,
    /// The door closes (nothing restarts by itself).
    pub close_s: f64,
    /// The operator presses "resume".
    pub resume_s: f64,
}

/// How [`run_part`] drives the controller.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunOptions {
    /// Ticks between readings.
    pub sample_ticks: u32,
    /// Arm a timer compare at `stop_due()` between readings.
    pub use_timer: bool,
    /// A door opening, if any.
    pub door: Option<DoorOpening>,
    /// Keep sampling this long after the off command before finishing, s.
    pub settle_s: f64,
    /// Give up (finish) after this long, s.
    pub max_s: f64,
}

impl Default for RunOptions {
    fn default() -> Self {
        Self {
            sample_ticks: 10,
            use_timer: false,
            door: None,
            settle_s: 0.1,
            max_s: 600.0,
        }
    }
}

/// What one simulated part gave.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunResult {
    /// The controller's record.
    pub record: PartRecord,
    /// True radiant exposure at the part (simulation), up to the finish.
    pub true_dose: RadiantExposure,
    /// Readings fed to the controller.
    pub readings: u32,
    /// Tick (64-bit, not wrapped) at which the part was finished.
    pub end_tick: u64,
    /// The controller's irradiance (last reading) when the light was commanded off.
    pub stop_irradiance: Irradiance,
}

/// The controller type used with the simulated pins.
pub type SimController = CuringController<SimOutput, SimOutput, SimInput>;

/// Simulated pins and their shared levels.
#[derive(Debug, Clone, Default)]
pub struct SimPins {
    /// Enable output level (high = active).
    pub enable: Level,
    /// Alarm output level (high = active).
    pub alarm: Level,
    /// Door switch level (high = closed).
    pub door: Level,
}

impl SimPins {
    /// Fresh pins with the door closed.
    #[must_use]
    pub fn new() -> Self {
        let p = Self::default();
        p.door.set(true);
        p
    }

    /// Build a controller on these pins (active-high outputs, door closed = high).
    ///
    /// # Errors
    /// The controller's configuration error.
    pub fn controller(
        &self,
        meter: Meter,
        mut config: CuringConfig,
    ) -> Result<SimController, CuringConfigError> {
        config.enable_level = ActiveLevel::High;
        config.alarm_level = ActiveLevel::High;
        config.interlock_closed_level = ActiveLevel::High;
        CuringController::new(
            meter,
            config,
            SimOutput(self.enable.clone()),
            SimOutput(self.alarm.clone()),
            SimInput(self.door.clone()),
        )
        .map_err(|e| match e {
            CuringError::Config(c) => c,
            CuringError::Output(PinError::Enable(never) | PinError::Alarm(never))
            | CuringError::Interlock(never) => match never {},
            // `new` refuses nothing; keep the mapping total.
            CuringError::Refused(_) => CuringConfigError::Target,
        })
    }
}

fn ticks(t: u64) -> Ticks {
    // The controller's counter is a wrapping u32.
    Ticks(t as u32)
}

/// Run one part from `start_tick` on the simulated station: start, readings every
/// `sample_ticks`, optional timer stop and door opening, until the light is off (or a fault)
/// plus `settle_s`, then finish. The true dose starts from zero at the start.
///
/// # Panics
/// If the controller refuses to start (the caller sets up a startable controller).
pub fn run_part(
    c: &mut SimController,
    pins: &SimPins,
    station: &mut Station,
    pd: &mut Photodiode,
    part: PartId,
    start_tick: u64,
    opts: &RunOptions,
) -> RunResult {
    let hz = f64::from(c.meter().tick_rate().hz());
    let to_s = |t: u64| t as f64 / hz;
    station.advance_to(to_s(start_tick));
    station.reset_dose();
    c.start(part, ticks(start_tick)).expect("part starts");
    let apply = |station: &mut Station| station.command(pins.enable.get() && pins.door.get());
    apply(station);
    let mut t = start_tick;
    let mut readings = 0u32;
    let mut off_at: Option<u64> = None;
    let mut resumed = false;
    let mut stop_irradiance = Irradiance::ZERO;
    let mut was_exposing = true;
    loop {
        let next = t + u64::from(opts.sample_ticks);
        if opts.use_timer && c.phase() == CuringPhase::Exposing {
            if let Some(due) = c.stop_due() {
                let due_abs = t + u64::from(due.wrapping_since(ticks(t)));
                if due_abs < next {
                    station.advance_to(to_s(due_abs));
                    let e = c.irradiance();
                    c.on_stop_timer(ticks(due_abs))
                        .expect("sim pins never fail");
                    if c.phase() != CuringPhase::Exposing {
                        stop_irradiance = e;
                        was_exposing = false;
                    }
                    apply(station);
                }
            }
        }
        // Door edges inside this interval, at their own instants.
        if let Some(d) = opts.door {
            for edge_s in [d.open_s, d.close_s] {
                let edge = start_tick + (edge_s * hz).round() as u64;
                if edge > t && edge <= next {
                    station.advance_to(to_s(edge));
                    pins.door.set(edge_s == d.close_s);
                    apply(station);
                }
            }
        }
        t = next;
        station.advance_to(to_s(t));
        let reading = Reading {
            code: pd.code(station.irradiance().w_per_m2()),
            range: RangeIndex(0),
            at: ticks(t),
        };
        c.on_reading(&reading).expect("sim pins never fail");
        readings += 1;
        if was_exposing && !matches!(c.phase(), CuringPhase::Exposing | CuringPhase::Paused) {
            stop_irradiance = c.irradiance();
            was_exposing = false;
        }
        apply(station);
        if let Some(d) = opts.door {
            let resume = start_tick + (d.resume_s * hz).round() as u64;
            if !resumed && t >= resume && c.phase() == CuringPhase::Paused {
                c.resume(ticks(t)).expect("resume after the door closed");
                resumed = true;
                apply(station);
            }
        }
        let done = matches!(c.phase(), CuringPhase::Complete | CuringPhase::Faulted(_));
        if done && off_at.is_none() {
            off_at = Some(t);
        }
        if let Some(o) = off_at {
            if to_s(t - o) >= opts.settle_s {
                break;
            }
        }
        if to_s(t - start_tick) > opts.max_s {
            break;
        }
    }
    let record = c.finish(ticks(t)).expect("sim pins never fail");
    apply(station);
    RunResult {
        record,
        true_dose: station.true_dose(),
        readings,
        end_tick: t,
        stop_irradiance,
    }
}

/// Tick rate of the sweep (10 µs ticks).
pub const SWEEP_TICK_HZ: u32 = 100_000;

/// Target of the sweep: 1000 mJ/cm² (a round curing dose; common practice, no source).
pub const SWEEP_TARGET_MJ_PER_CM2: f64 = 1000.0;

/// How the sweep stops the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SweepStop {
    /// No anticipation: stop when the measured dose reaches the target.
    AtTarget,
    /// Anticipated stop, decided on a reading.
    Anticipate,
    /// Anticipated stop on a timer compare at `stop_due()`.
    AnticipateTimer,
}

/// One case of the overshoot sweep.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SweepCase {
    /// Cold irradiance of the LED at the part.
    pub irradiance: Irradiance,
    /// Actuator dead time (configured = simulated), s.
    pub lag_s: f64,
    /// Reading rate, Hz (must divide [`SWEEP_TICK_HZ`]).
    pub sample_hz: u32,
    /// Stop mode.
    pub stop: SweepStop,
}

/// Result of one sweep case.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SweepRow {
    /// The case.
    pub case: SweepCase,
    /// The run.
    pub run: RunResult,
    /// True dose − target, mJ/cm².
    pub error_mj_per_cm2: f64,
    /// Allowed |error| with anticipation: max(0.5 % of target, one reading's dose increment
    /// at the peak irradiance), mJ/cm².
    pub bound_mj_per_cm2: f64,
    /// Irradiance at the stop × lag, mJ/cm² (the expected overshoot without anticipation).
    pub e_lag_mj_per_cm2: f64,
    /// One reading's dose increment at the peak irradiance, mJ/cm².
    pub increment_mj_per_cm2: f64,
}

/// The curing configuration of the sweep for a lag and reading interval (ticks of
/// [`SWEEP_TICK_HZ`]).
#[must_use]
pub fn sweep_config(lag_ticks: u32, sample_ticks: u32, policy: StopPolicy) -> CuringConfig {
    CuringConfig {
        target: RadiantExposure::from_mj_per_cm2(SWEEP_TARGET_MJ_PER_CM2),
        // Wide enough that the runs without anticipation are measured, not alarmed.
        tolerance: RadiantExposure::from_mj_per_cm2(50.0),
        lag: ActuatorLag::Delay { ticks: lag_ticks },
        stop_policy: policy,
        window: IrradianceWindow::default(),
        light_off: LightOffCheck {
            fraction: 0.05,
            floor: Irradiance::from_mw_per_cm2(0.05),
            margin_ticks: SWEEP_TICK_HZ / 50,
        },
        lamp: None,
        max_gap_ticks: sample_ticks.saturating_mul(2),
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
        interlock_closed_level: ActiveLevel::High,
    }
}

/// Run one sweep case on a fresh, cold LED (10 % droop) with a shutter of the configured lag.
///
/// # Panics
/// On an invalid case (a rate that does not divide the tick rate).
#[must_use]
pub fn run_sweep_case(case: SweepCase) -> SweepRow {
    assert_eq!(
        SWEEP_TICK_HZ % case.sample_hz,
        0,
        "rate must divide the tick rate"
    );
    let sample_ticks = SWEEP_TICK_HZ / case.sample_hz;
    let lag_ticks = (case.lag_s * f64::from(SWEEP_TICK_HZ)).round() as u32;
    let policy = match case.stop {
        SweepStop::AtTarget => StopPolicy::AtTarget,
        SweepStop::Anticipate | SweepStop::AnticipateTimer => StopPolicy::Anticipate,
    };
    let meter = demo_meter(SWEEP_TICK_HZ);
    let pins = SimPins::new();
    let mut pd = Photodiode::new(&meter, DEMO_DARK, 65_535, 0);
    let mut c = pins
        .controller(meter, sweep_config(lag_ticks, sample_ticks, policy))
        .expect("valid sweep configuration");
    let mut station = Station::new(
        LedArray::new(case.irradiance, 0.10),
        Actuator::Delay { s: case.lag_s },
    );
    let opts = RunOptions {
        sample_ticks,
        use_timer: case.stop == SweepStop::AnticipateTimer,
        settle_s: case.lag_s + 0.05,
        ..RunOptions::default()
    };
    let run = run_part(&mut c, &pins, &mut station, &mut pd, PartId(1), 0, &opts);
    let target = SWEEP_TARGET_MJ_PER_CM2;
    let dt_s = 1.0 / f64::from(case.sample_hz);
    let peak = run.record.peak.map_or(0.0, |e| e.mw_per_cm2());
    let increment = peak * dt_s;
    SweepRow {
        case,
        run,
        error_mj_per_cm2: run.true_dose.mj_per_cm2() - target,
        bound_mj_per_cm2: (0.005 * target).max(increment),
        e_lag_mj_per_cm2: run.stop_irradiance.mw_per_cm2() * case.lag_s,
        increment_mj_per_cm2: increment,
    }
}

/// The sweep grid: irradiance 20–200 mW/cm² (10×), lag 1–50 ms, reading rate 100 Hz–10 kHz.
#[must_use]
pub fn sweep_grid(stop: SweepStop) -> Vec<SweepCase> {
    let mut v = Vec::new();
    for e in [20.0, 63.0, 200.0] {
        for lag_ms in [1.0, 10.0, 50.0] {
            for hz in [100, 1000, 10_000] {
                v.push(SweepCase {
                    irradiance: Irradiance::from_mw_per_cm2(e),
                    lag_s: lag_ms * 1e-3,
                    sample_hz: hz,
                    stop,
                });
            }
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_light_integrates_exactly() {
        let mut s = Station::new(
            LedArray::new(Irradiance::from_mw_per_cm2(100.0), 0.0),
            Actuator::Delay { s: 0.0 },
        );
        s.command(true);
        s.advance_to(10.0);
        // 100 mW/cm² for 10.0 s = 1000 mJ/cm² (computed from H = E · t).
        assert!((s.true_dose().mj_per_cm2() - 1000.0).abs() < 1e-6);
        s.command(false);
        s.advance_to(11.0);
        assert!((s.true_dose().mj_per_cm2() - 1000.0).abs() < 1e-6);
    }

    #[test]
    fn delay_tail_is_irradiance_times_lag() {
        let mut s = Station::new(
            LedArray::new(Irradiance::from_mw_per_cm2(50.0), 0.0),
            Actuator::Delay { s: 0.02 },
        );
        s.command(true);
        s.advance_to(1.0);
        s.command(false);
        s.advance_to(2.0);
        // 50 mJ/cm² + 50 mW/cm² × 0.02 s = 51 mJ/cm² (computed); one 10 µs step of tolerance.
        assert!((s.true_dose().mj_per_cm2() - 51.0).abs() < 50.0 * 1e-5 + 1e-9);
    }

    #[test]
    fn droop_follows_the_thermal_state() {
        let mut led = LedArray::new(Irradiance::from_w_per_m2(1000.0), 0.2);
        led.step(true, 8.0);
        // One time constant: thermal state 1 − e⁻¹ (computed), output 1000 (1 − 0.2 (1 − e⁻¹)).
        let expected = 1000.0 * (1.0 - 0.2 * (1.0 - (-1.0f64).exp()));
        assert!((led.output_w_per_m2() - expected).abs() < 1e-9);
        led.step(false, 1e6);
        assert!(led.thermal.abs() < 1e-12);
    }

    #[test]
    fn profile_interpolates() {
        let a = Actuator::Profile(vec![(0.01, 1.0), (0.03, 0.0)]);
        assert_eq!(a.remaining(0.005), 1.0);
        assert!((a.remaining(0.02) - 0.5).abs() < 1e-12);
        assert_eq!(a.remaining(0.05), 0.0);
    }

    #[test]
    fn photodiode_inverts_the_meter() {
        let m = demo_meter(1000);
        let mut pd = Photodiode::new(&m, DEMO_DARK, 65_535, 0);
        let e = Irradiance::from_mw_per_cm2(100.0);
        let code = pd.code(e.w_per_m2());
        let net = code - DEMO_DARK;
        let back = m.irradiance(net, RangeIndex(0));
        // Within half a code.
        let half_code = m.irradiance(1, RangeIndex(0)).w_per_m2() * 0.5;
        assert!((back.w_per_m2() - e.w_per_m2()).abs() <= half_code);
    }
}
