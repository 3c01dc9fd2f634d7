//! Simulation models of the analog chain, for examples, tests and benches.
//!
//! Light source → photodiode → transimpedance amplifier (ranges, noise) → ADC (quantization,
//! clipping). All models are deterministic: noise comes from a seeded generator, time is set by
//! the caller. These are scenario models, not data: nothing here is a published reference.

use std::cell::Cell;
use std::convert::Infallible;
use std::rc::Rc;

use photon_ledger::acquire::reading::PhotodiodeAdc;

/// A small deterministic generator (xorshift64*), enough for simulated noise.
#[derive(Debug, Clone)]
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed (0 is replaced by a fixed non-zero value).
    pub fn new(seed: u64) -> Self {
        Self(if seed == 0 {
            0x9E37_79B9_7F4A_7C15
        } else {
            seed
        })
    }
    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = self.uniform().max(1e-300);
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

/// An LED whose output droops as its junction warms, and which takes time to go dark.
///
/// Output while on: `E(t) = E0 · (1 − droop · (1 − exp(−t_on/τ)))`, where `t_on` is the time
/// since it was switched on. After switch-off the output falls exponentially with
/// `fall_time_s` (shutter or driver lag).
#[derive(Debug, Clone)]
pub struct WarmingLed {
    /// Irradiance at the sample when cold, W/m².
    pub cold_w_per_m2: f64,
    /// Fractional loss once fully warm (0.12 = 12 %).
    pub droop: f64,
    /// Thermal time constant, s.
    pub tau_s: f64,
    /// Time constant of the light decay after switch-off, s.
    pub fall_time_s: f64,
    /// Delay between the off command and the start of the decay, s.
    pub off_delay_s: f64,
    on_since: Option<f64>,
    off_at: Option<(f64, f64)>,
}

impl WarmingLed {
    /// A cold, switched-off LED.
    pub fn new(cold_w_per_m2: f64, droop: f64, tau_s: f64) -> Self {
        Self {
            cold_w_per_m2,
            droop,
            tau_s,
            fall_time_s: 0.05,
            off_delay_s: 0.02,
            on_since: None,
            off_at: None,
        }
    }
    /// Command the LED on or off at time `t_s`.
    pub fn command(&mut self, on: bool, t_s: f64) {
        match (on, self.on_since) {
            (true, None) => {
                self.on_since = Some(t_s);
                self.off_at = None;
            }
            (false, Some(_)) => {
                let level = self.irradiance(t_s);
                self.on_since = None;
                self.off_at = Some((t_s, level));
            }
            _ => {}
        }
    }
    /// Whether the LED is commanded on.
    pub fn is_on(&self) -> bool {
        self.on_since.is_some()
    }
    /// Irradiance at the sample at time `t_s`, W/m².
    pub fn irradiance(&self, t_s: f64) -> f64 {
        if let Some(t0) = self.on_since {
            let t_on = (t_s - t0).max(0.0);
            return self.cold_w_per_m2 * (1.0 - self.droop * (1.0 - (-t_on / self.tau_s).exp()));
        }
        match self.off_at {
            Some((t_off, level)) => {
                let dt = t_s - t_off;
                if dt < self.off_delay_s {
                    level
                } else {
                    level * (-(dt - self.off_delay_s) / self.fall_time_s).exp()
                }
            }
            None => 0.0,
        }
    }
}

/// A photodiode: responsivity at the band, active area, dark current.
#[derive(Debug, Clone, Copy)]
pub struct Photodiode {
    /// Responsivity, A/W.
    pub responsivity_a_per_w: f64,
    /// Active area, m².
    pub area_m2: f64,
    /// Dark current, A.
    pub dark_current_a: f64,
}

impl Photodiode {
    /// Photocurrent under irradiance `e_w_per_m2`, A.
    pub fn current(&self, e_w_per_m2: f64) -> f64 {
        e_w_per_m2 * self.area_m2 * self.responsivity_a_per_w + self.dark_current_a
    }
}

/// A transimpedance amplifier with selectable feedback resistors and output noise.
#[derive(Debug, Clone)]
pub struct Amplifier {
    /// Feedback resistance per range, V/A (most sensitive first).
    pub gains_v_per_a: Vec<f64>,
    /// Output offset voltage, V.
    pub offset_v: f64,
    /// White output noise, V rms per sample.
    pub noise_v_rms: f64,
}

/// An ADC: resolution, reference, unipolar coding, clipping at the rails.
#[derive(Debug, Clone, Copy)]
pub struct Adc {
    /// Bits.
    pub bits: u8,
    /// Full-scale voltage, V.
    pub reference_v: f64,
}

impl Adc {
    /// The code for input `v` (rounded, clipped to 0 ..= 2^bits − 1).
    pub fn code(&self, v: f64) -> i32 {
        let full = (1u32 << self.bits) as f64;
        let c = (v / self.reference_v * full).round();
        c.clamp(0.0, full - 1.0) as i32
    }
}

/// A whole simulated sensor chain under a [`WarmingLed`]; implements the library's
/// [`PhotodiodeAdc`], so firmware-shaped code reads it exactly as it would read hardware.
#[derive(Debug, Clone)]
pub struct SimSensor {
    /// The light source.
    pub led: WarmingLed,
    /// The photodiode.
    pub diode: Photodiode,
    /// The amplifier.
    pub amp: Amplifier,
    /// The converter.
    pub adc: Adc,
    /// Active amplifier range.
    pub range: usize,
    /// Simulated time, s.
    pub t_s: f64,
    rng: Rng,
}

impl SimSensor {
    /// A sensor chain with a seeded noise generator.
    pub fn new(led: WarmingLed, diode: Photodiode, amp: Amplifier, adc: Adc, seed: u64) -> Self {
        Self {
            led,
            diode,
            amp,
            adc,
            range: 0,
            t_s: 0.0,
            rng: Rng::new(seed),
        }
    }
    /// The code the ADC would return now (with noise).
    pub fn sample_code(&mut self) -> i32 {
        let i = self.diode.current(self.led.irradiance(self.t_s));
        let g = self
            .amp
            .gains_v_per_a
            .get(self.range)
            .copied()
            .unwrap_or(1.0);
        let v = i * g + self.amp.offset_v + self.amp.noise_v_rms * self.rng.normal();
        self.adc.code(v)
    }
    /// The dark code (lamp off, no noise) of range `r`: what a dark capture would average to.
    pub fn dark_code(&self, r: usize) -> i32 {
        let g = self.amp.gains_v_per_a.get(r).copied().unwrap_or(1.0);
        self.adc
            .code(self.diode.dark_current_a * g + self.amp.offset_v)
    }
}

impl PhotodiodeAdc for SimSensor {
    type Error = Infallible;
    fn poll_code(&mut self) -> nb::Result<i32, Infallible> {
        Ok(self.sample_code())
    }
}

/// An output pin whose level can be read back by the simulation (a shared cell).
#[derive(Debug, Clone, Default)]
pub struct SimPin(pub Rc<Cell<bool>>);

impl SimPin {
    /// A low pin.
    pub fn new() -> Self {
        Self::default()
    }
    /// Whether the pin is high.
    pub fn is_high(&self) -> bool {
        self.0.get()
    }
}

impl embedded_hal::digital::ErrorType for SimPin {
    type Error = Infallible;
}

impl embedded_hal::digital::OutputPin for SimPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.set(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.set(true);
        Ok(())
    }
}

/// The same shared level read as an input (an interlock held by the simulation).
impl embedded_hal::digital::InputPin for SimPin {
    fn is_high(&mut self) -> Result<bool, Infallible> {
        Ok(self.0.get())
    }
    fn is_low(&mut self) -> Result<bool, Infallible> {
        Ok(!self.0.get())
    }
}

/// Exact (analytic) radiant exposure of a [`WarmingLed`] switched on at 0 and kept on until
/// `t_s`, J/m²: ∫ E0 (1 − d (1 − e^(−t/τ))) dt.
pub fn warming_led_exposure(led: &WarmingLed, t_s: f64) -> f64 {
    let e0 = led.cold_w_per_m2;
    e0 * ((1.0 - led.droop) * t_s + led.droop * led.tau_s * (1.0 - (-t_s / led.tau_s).exp()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn adc_quantizes_and_clips() {
        let adc = Adc {
            bits: 12,
            reference_v: 4.096,
        };
        assert_eq!(adc.code(1.0), 1000);
        assert_eq!(adc.code(-1.0), 0);
        assert_eq!(adc.code(5.0), 4095);
    }

    #[test]
    fn led_droops_and_falls() {
        let mut led = WarmingLed::new(100.0, 0.1, 10.0);
        assert_eq!(led.irradiance(0.0), 0.0);
        led.command(true, 0.0);
        assert_eq!(led.irradiance(0.0), 100.0);
        assert!((led.irradiance(1e6) - 90.0).abs() < 1e-9);
        led.command(false, 5.0);
        let at_off = led.irradiance(5.0);
        assert!(at_off < 100.0 && at_off > 90.0);
        assert!(led.irradiance(5.0 + led.off_delay_s + 1.0) < 1e-6 * at_off);
    }

    #[test]
    fn analytic_exposure_matches_numeric() {
        let mut led = WarmingLed::new(50.0, 0.2, 30.0);
        led.command(true, 0.0);
        let n = 100_000;
        let dt = 60.0 / n as f64;
        let mut h = 0.0;
        for i in 0..n {
            let t = i as f64 * dt;
            h += 0.5 * (led.irradiance(t) + led.irradiance(t + dt)) * dt;
        }
        assert!((h / warming_led_exposure(&led, 60.0) - 1.0).abs() < 1e-9);
    }
}
