//! False-trip bench: 10⁸ clean simulated samples with realistic noise through the
//! plausibility checks. Any trip is a failure (exit status 1).
//!
//! The simulated chain (invented scenario): a 365 nm LED at ~50 mW/cm² that droops 10 % as it
//! warms, switched on for 9 min and off for 1 min; a photodiode with dark current; a 100 kΩ
//! amplifier with 1.2 mV rms output noise; a 12-bit ADC at 1 mV per code; 1 kHz sampling.
//! A dark capture (mean of the off-period codes) is checked at the end of each off period.
//!
//! Run: `cargo bench -p hosttests --bench false_trips` (`FALSE_TRIP_SAMPLES` overrides 10⁸).

use std::time::Instant;

use hosttests::sim::{Adc, Amplifier, Photodiode, SimSensor, WarmingLed};
use photon_ledger::control::plausibility::{Plausibility, PlausibilityConfig};
use photon_ledger::prelude::*;

fn main() {
    let n: u64 = std::env::var("FALSE_TRIP_SAMPLES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(100_000_000);
    let mut led = WarmingLed::new(500.0, 0.10, 60.0);
    led.fall_time_s = 0.005;
    led.off_delay_s = 0.0;
    let diode = Photodiode {
        responsivity_a_per_w: 0.15,
        area_m2: 0.2e-6,
        dark_current_a: 50e-9,
    };
    let amp = Amplifier {
        gains_v_per_a: vec![1.0e5],
        offset_v: 0.015,
        noise_v_rms: 1.2e-3,
    };
    let adc = Adc {
        bits: 12,
        reference_v: 4.096,
    };
    let mut sensor = SimSensor::new(led, diode, amp, adc, 7);
    let dark = sensor.dark_code(0);
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(4.096),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: dark,
        }],
    )
    .expect("front end");
    let meter = Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.15),
            active_area: Area::from_mm2(0.2),
        },
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1000).expect("rate"),
        sample_area: None,
    })
    .expect("meter");
    // Limits set from the chain: σ = 1.2 codes; stuck after 32 identical codes; pinned after
    // 16 rail codes; −6σ; the LED's own fastest change while on is far below 20 W/m² per ms
    // (noise between samples reaches ~10 codes ≈ 1.7 W/m²).
    let config = PlausibilityConfig {
        stuck_samples: 32,
        pinned_samples: 16,
        dark_sigma_codes: 1.2,
        negative_k: 6.0,
        max_rate_w_per_m2_s: 20_000.0,
        transition_ticks: 50,
        dark_drift_codes: 4,
        flap_limit: 0,
        flap_window: 0,
    };
    let mut p = Plausibility::new(&meter, config).expect("config");
    let (on_ms, period_ms) = (540_000u64, 600_000u64);
    let mut trips = 0u64;
    let mut first = None;
    let (mut dark_sum, mut dark_n) = (0i64, 0i64);
    let t0 = Instant::now();
    for k in 0..n {
        let phase = k % period_ms;
        let on = phase < on_ms;
        let t_s = k as f64 / 1000.0;
        if phase == 0 {
            sensor.led.command(true, t_s);
            if dark_n > 0 {
                let mean = (dark_sum as f64 / dark_n as f64).round() as i32;
                if let Err(e) = p.dark_capture(RangeIndex(0), mean) {
                    trips += 1;
                    first.get_or_insert((k, e));
                }
            }
            (dark_sum, dark_n) = (0, 0);
        } else if phase == on_ms {
            sensor.led.command(false, t_s);
        }
        sensor.t_s = t_s;
        let code = sensor.sample_code();
        if !on && phase > on_ms + 100 {
            dark_sum += i64::from(code);
            dark_n += 1;
        }
        let reading = Reading {
            code,
            range: RangeIndex(0),
            at: Ticks(k as u32),
        };
        let net = meter.front_end().net_code(&reading).ok();
        if let Err(e) = p.check(&reading, net, on) {
            trips += 1;
            first.get_or_insert((k, e));
        }
    }
    let secs = t0.elapsed().as_secs_f64();
    println!(
        "false-trip bench: {n} clean samples, {trips} trips, {:.1} ns/sample (simulation included)",
        secs / n as f64 * 1e9
    );
    if let Some((k, e)) = first {
        println!("first trip at sample {k}: {e}");
        std::process::exit(1);
    }
}
