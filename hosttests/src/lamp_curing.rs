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
        let (goal, tau) = if on {
            (1.0, self.heat_tau_s)
        } else {
            (0.0, self.cool_tau_s)
        };
        self.thermal = goal + (self.thermal - goal) * (-dt_s / tau).exp();
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
    Meter::new(
        fe,
        Calibration::Certificate(IrradiancePerCurrent::from_mw_per_cm2_per_ua(12.0)),
        Band::Led {
            peak: Wavelength::from_nm(395.0),
            fwhm: Wavelength::from_nm(12.0),
        },
        TickRate::from_hz(tick_hz).expect("tick rate ≥ 1"),
        None,
    )
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
        }
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
            self.led.step(powered, half);
            let e = self.irradiance_now();
            self.since_off_s += half;
            self.led.step(powered, half);
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
        // 100 mW/cm² for 10.0 s = 1000 mJ/cm² (reference-values §8 worked example, computed).
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
