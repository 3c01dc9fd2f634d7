//! Sample files from the hosttests simulation models, for named scenarios, so a user can try
//! the tool (and a configuration) without hardware. Each scenario comes with its
//! configuration file. All scenario values are invented for demonstration; none is a
//! published reference.
//!
//! | scenario | what happens |
//! | --- | --- |
//! | `led-photoreactor` | 405 nm LED photoreactor, droops as it warms; the first reading saturates range 0 and the autoranger moves to range 1; stops at 5 µmol photons, logs 2 s more |
//! | `curing-stuck-shutter` | 365 nm curing station at ~100 mW/cm², 1 kHz device ticks that wrap; the shutter sticks open at the target, the dose runs past target + tolerance (overexposed) |
//! | `uv-logger-dropout` | a personal UV logger outdoors, irradiance exported in W/m² at 1 Hz with passing clouds and a 90 s dropout (a gap); exposure limit and UV index configured |
//! | `curing-shift` | a 395 nm LED curing station runs six parts through the library's `CuringController` (a `[curing]` recipe): two plain parts, a guard opened and resumed, a shutter that sticks (light not off, alarm acknowledged), a repaired shutter, an aged lamp (lamp low); the file has `part`, `guard` and `command` columns for `photon-review curing` |
//!
//! The first two run closed-loop: the library's `Session` (and `Autorange`) decide, as
//! firmware would, and the file records exactly the readings the session was fed.

use std::fmt::Write as _;

use photon_ledger::prelude::*;

use super::config::{self, ReviewConfig};
use super::error::ReviewError;
use super::monitor::Unwired;
use super::replay::new_session;
use hosttests::sim::{Adc, Amplifier, Photodiode, Rng, SimSensor, WarmingLed};

/// A named scenario.
#[derive(Debug, Clone, Copy)]
pub struct Scenario {
    /// Its name on the command line.
    pub name: &'static str,
    /// One line about it.
    pub summary: &'static str,
    /// Its configuration file (TOML).
    pub config_toml: &'static str,
}

/// The scenarios.
pub const SCENARIOS: [Scenario; 4] = [
    Scenario {
        name: "led-photoreactor",
        summary: "405 nm LED photoreactor, autoranging, stops at 5 µmol photons",
        config_toml: LED_PHOTOREACTOR,
    },
    Scenario {
        name: "curing-stuck-shutter",
        summary: "365 nm curing station whose shutter sticks open: overexposed",
        config_toml: CURING,
    },
    Scenario {
        name: "uv-logger-dropout",
        summary: "personal UV logger outdoors with clouds and a 90 s dropout (gap)",
        config_toml: LOGGER,
    },
    Scenario {
        name: "curing-shift",
        summary: "395 nm curing station, six parts: guard opened, stuck shutter, aged lamp",
        config_toml: CURING_SHIFT,
    },
];

const CURING_SHIFT: &str = r#"# photon-review curing recipe (see hosttests/review/CONFIG.md, section 7).
# Scenario `curing-shift`: invented values for a demonstration.
format = 1

[run]
device_id = "cure-cell-2"
reactor_id = "line-B"
start_utc = "2025-05-06T06:00:00Z"

[adc]
bits = 16
reference_v = 2.5
saturation_margin_codes = 2

[[ranges]]
transimpedance_ohm = 1.0e5
dark_offset_codes = 20

[calibration]
factor_w_per_m2_per_a = 1.2e8

[band]
peak_nm = 395.0
fwhm_nm = 12.0

[clock]
tick_rate_hz = 1000

[curing]
target = { radiant_exposure_mj_per_cm2 = 500.0 }
tolerance = { radiant_exposure_mj_per_cm2 = 25.0 }
max_gap_ticks = 50
stop = "anticipate"
timer_stop = true
lag_profile = [ { after_s = 0.02, remaining = 0.5 }, { after_s = 0.05, remaining = 0.0 } ]
warm_up_s = 0.2
minimum_w_per_m2 = 800.0
minimum_hold_off_s = 0.2
maximum_w_per_m2 = 2500.0
maximum_hold_off_s = 0.05
light_off_fraction = 0.05
light_off_floor_w_per_m2 = 5.0
light_off_margin_s = 0.05
lamp_reference_w_per_m2 = 1400.0
lamp_maintenance_below = 0.8
"#;

const LED_PHOTOREACTOR: &str = r#"# photon-review session configuration (see hosttests/review/CONFIG.md).
# Scenario `led-photoreactor`: invented values for a demonstration.
format = 1

[run]
device_id = "bench-meter-07"
reactor_id = "R2"
start_utc = "2025-03-14T09:30:00Z"

[adc]
bits = 12
reference_v = 3.3
saturation_margin_codes = 4

[[ranges]]
transimpedance_ohm = 1.0e6
dark_offset_codes = 3

[[ranges]]
transimpedance_ohm = 1.0e5
dark_offset_codes = 3

[calibration]
responsivity_a_per_w = 0.22
active_area_mm2 = 1.0

[band]
peak_nm = 405.0
fwhm_nm = 14.0

[clock]
tick_rate_hz = 1000

[session]
target = { photons_umol = 5.0 }
tolerance = { photons_umol = 0.05 }
max_gap_ticks = 500
max_unusable_run = 4
sample_area_cm2 = 4.0
"#;

const CURING: &str = r#"# photon-review session configuration (see hosttests/review/CONFIG.md).
# Scenario `curing-stuck-shutter`: invented values for a demonstration.
format = 1

[run]
device_id = "cure-station-3"
reactor_id = "conveyor-A"
start_utc = "2025-03-14T13:05:00Z"

[adc]
bits = 16
reference_v = 4.096
saturation_margin_codes = 8

[[ranges]]
transimpedance_ohm = 1.0e4
dark_offset_codes = 40

[calibration]
factor_w_per_m2_per_a = 6.6667e6

[band]
peak_nm = 365.0
fwhm_nm = 10.0

[clock]
tick_rate_hz = 1000

[session]
target = { radiant_exposure_mj_per_cm2 = 500.0 }
tolerance = { radiant_exposure_mj_per_cm2 = 25.0 }
max_gap_ticks = 20
"#;

const LOGGER: &str = r#"# photon-review session configuration (see hosttests/review/CONFIG.md).
# Scenario `uv-logger-dropout`: invented values for a demonstration; the weighting
# factors below are NOT computed from an action spectrum.
format = 1

[run]
device_id = "uv-logger-12"
person_id = "field-staff-04"
start_utc = "2025-06-21T10:00:00Z"

[adc]
bits = 16
reference_v = 2.5

[[ranges]]
transimpedance_ohm = 1.0e5
dark_offset_codes = 0

[calibration]
factor_w_per_m2_per_a = 4.0e6

[band]
peak_nm = 360.0
fwhm_nm = 40.0

[clock]
tick_rate_hz = 1000

[session]
target = { radiant_exposure_j_per_m2 = 10000.0 }
tolerance = { radiant_exposure_j_per_m2 = 1.0e6 }
max_gap_ticks = 5000

[exposure]
weight_factor = 0.0011
limit_j_per_m2 = 30.0
window_s = 28800
bucket_s = 60
levels = [0.5, 0.8, 1.0]
hysteresis = 0.05

[solar]
erythema_weight_factor = 0.005
averaging_s = 600
bucket_s = 60
"#;

/// Find a scenario by name.
pub fn scenario(name: &str) -> Option<&'static Scenario> {
    SCENARIOS.iter().find(|s| s.name == name)
}

/// The validated configuration of a scenario.
///
/// # Errors
/// Not expected (the scenario files are tested); a configuration error otherwise.
pub fn scenario_config(s: &Scenario) -> Result<ReviewConfig, ReviewError> {
    config::parse(&format!("(scenario {})", s.name), s.config_toml.as_bytes())
}

/// Write the sample file of scenario `s` with noise seed `seed`, as CSV text.
///
/// # Errors
/// A configuration error (not expected) or a simulation that does not end.
pub fn simulate(s: &Scenario, seed: u64) -> Result<String, ReviewError> {
    let cfg = scenario_config(s)?;
    match s.name {
        "led-photoreactor" => led_photoreactor(&cfg, seed),
        "curing-stuck-shutter" => curing(&cfg, seed),
        "curing-shift" => curing_shift(&cfg),
        _ => logger(seed),
    }
}

fn other(e: impl std::fmt::Debug) -> ReviewError {
    ReviewError::Other(format!("simulation: {e:?}"))
}

/// The sensor of `led-photoreactor`.
pub fn photoreactor_sensor(seed: u64) -> SimSensor {
    let mut led = WarmingLed::new(42.0, 0.12, 90.0);
    led.fall_time_s = 0.08;
    SimSensor::new(
        led,
        Photodiode {
            responsivity_a_per_w: 0.22,
            area_m2: 1.0e-6,
            dark_current_a: 0.4e-9,
        },
        Amplifier {
            gains_v_per_a: vec![1.0e6, 1.0e5],
            offset_v: 2.0e-3,
            noise_v_rms: 0.8e-3,
        },
        Adc {
            bits: 12,
            reference_v: 3.3,
        },
        seed,
    )
}

fn led_photoreactor(cfg: &ReviewConfig, seed: u64) -> Result<String, ReviewError> {
    const SAMPLE_MS: u32 = 50;
    let mut sensor = photoreactor_sensor(seed);
    let mut session = new_session(cfg.meter.clone(), cfg.session).map_err(other)?;
    let mut autorange = Autorange::new(
        [Unwired],
        session.meter().front_end(),
        AutorangeConfig {
            up: 0.92,
            down: 0.80,
            settle_samples: 1,
        },
        RangeIndex(0),
    )
    .map_err(other)?;
    let mut rng = Rng::new(seed ^ 0x7e57);
    let mut out = String::from(
        "# scenario led-photoreactor (simulated, invented values)\ntime_s,adc_code,range,temperature_c\n",
    );
    let mut ms: u32 = 0;
    let mut stop: Option<u32> = None;
    sensor.led.command(true, 0.0);
    loop {
        ms += SAMPLE_MS;
        let t = f64::from(ms) / 1000.0;
        sensor.t_s = t;
        sensor.range = usize::from(autorange.current().0);
        let reading = match sensor.poll_reading(autorange.current(), Ticks(ms)) {
            Ok(r) => r,
            Err(nb::Error::WouldBlock) => continue,
            Err(nb::Error::Other(never)) => match never {},
        };
        let decision = autorange
            .observe(&reading, session.meter().front_end())
            .map_err(other)?;
        if decision != Decision::Settling {
            // The device logs what it feeds the session.
            let _ = session.on_reading(&reading);
            let temp = 24.0 + 3.0 * (1.0 - (-t / 120.0).exp()) + 0.05 * rng.normal();
            let _ = writeln!(
                out,
                "{:.3},{},{},{:.2}",
                t, reading.code, reading.range.0, temp
            );
        }
        if session.phase() != Phase::Exposing {
            sensor.led.command(false, t);
            stop.get_or_insert(ms);
        }
        if stop.is_some_and(|s| ms >= s + 2000) || session.phase().is_terminal() {
            break;
        }
        if ms > 3_600_000 {
            return Err(other("no stop within an hour"));
        }
    }
    Ok(out)
}

fn curing(cfg: &ReviewConfig, seed: u64) -> Result<String, ReviewError> {
    let mut sensor = SimSensor::new(
        WarmingLed::new(1000.0, 0.05, 30.0),
        Photodiode {
            responsivity_a_per_w: 0.15,
            area_m2: 1.0e-6,
            dark_current_a: 1.0e-9,
        },
        Amplifier {
            gains_v_per_a: vec![1.0e4],
            offset_v: 2.5e-3,
            noise_v_rms: 0.3e-3,
        },
        Adc {
            bits: 16,
            reference_v: 4.096,
        },
        seed,
    );
    let mut session = new_session(cfg.meter.clone(), cfg.session).map_err(other)?;
    let start = Ticks(u32::MAX - 1999); // the device counter wraps 2 s into the run
    let mut out = String::from(
        "# scenario curing-stuck-shutter (simulated, invented values)\ntime_ticks,adc_code\n",
    );
    sensor.led.command(true, 0.0);
    let mut ms: u32 = 0;
    let mut end: Option<u32> = None;
    loop {
        ms += 1;
        sensor.t_s = f64::from(ms) / 1000.0;
        let at = start.wrapping_add(ms);
        let reading = match sensor.poll_reading(RangeIndex(0), at) {
            Ok(r) => r,
            Err(nb::Error::WouldBlock) => continue,
            Err(nb::Error::Other(never)) => match never {},
        };
        let _ = session.on_reading(&reading);
        let _ = writeln!(out, "{},{}", at.0, reading.code);
        // The shutter is stuck open: the light is never commanded off.
        if session.phase().is_terminal() {
            end.get_or_insert(ms);
        }
        if end.is_some_and(|e| ms >= e + 500) {
            break;
        }
        if ms > 600_000 {
            return Err(other("no end within 10 minutes"));
        }
    }
    Ok(out)
}

/// The `curing-shift` scenario: the library's `CuringController` on the simulated curing
/// head of `hosttests::lamp_curing`, closed loop, recording every reading it was fed with the
/// part, the guard and the operator's commands. Readings every 10 ms at 1 kHz ticks; the
/// timer compare at `stop_due` fires between readings as firmware arms it.
fn curing_shift(cfg: &ReviewConfig) -> Result<String, ReviewError> {
    use hosttests::lamp_curing::{Actuator, LedArray, Photodiode as Head, Station};
    use photon_ledger::control::curing::{CuringPhase, PartId, TimerOutcome};
    const STEP: u64 = 10;
    let setup = cfg
        .curing
        .clone()
        .ok_or_else(|| other("curing-shift has no [curing]"))?;
    let (mut c, pins) =
        super::curing::new_controller(cfg.meter.clone(), setup.config).map_err(other)?;
    let fall = Actuator::Profile(vec![(0.02, 0.5), (0.05, 0.0)]);
    let mut station = Station::new(
        LedArray::new(Irradiance::from_w_per_m2(1500.0), 0.15),
        fall.clone(),
    );
    let mut head = Head::new(&cfg.meter, 20, 65535, 3);
    let mut out = String::from(
        "# scenario curing-shift (simulated, invented values)\n\
         time_ticks,adc_code,part,guard,command\n",
    );
    let mut t: u64 = 0;
    let apply = |st: &mut Station| st.command(pins.enable.get() && pins.door.get());
    let row =
        |out: &mut String, st: &mut Station, head: &mut Head, t: u64, part: u32, cmd: &str| {
            st.advance_to(t as f64 / 1000.0);
            let code = head.code(st.irradiance().w_per_m2());
            let guard = if pins.door.get() { "closed" } else { "open" };
            let _ = writeln!(out, "{t},{code},{part},{guard},{cmd}");
            Reading {
                code,
                range: RangeIndex(0),
                at: Ticks(t as u32),
            }
        };
    // (part, door open/close/resume in s after the start, actuator, lamp ageing)
    type Door = Option<(f64, f64, f64)>;
    let parts: [(u32, Door, Actuator, f64); 6] = [
        (101, None, fall.clone(), 1.0),
        (102, None, fall.clone(), 1.0),
        (103, Some((1.0, 1.5, 2.0)), fall.clone(), 1.0),
        (
            104,
            None,
            Actuator::Stuck {
                after_s: 0.02,
                fraction: 0.3,
            },
            1.0,
        ),
        (105, None, fall.clone(), 1.0),
        (106, None, fall.clone(), 0.72),
    ];
    for (i, (id, door, actuator, ageing)) in parts.into_iter().enumerate() {
        // One second between parts with no part under the head; the operator acknowledges
        // a latched alarm there (after the stuck shutter was fixed).
        for k in 0..100u64 {
            t += STEP;
            let cmd = if k == 50 && c.alarm_latched() {
                "acknowledge"
            } else {
                ""
            };
            let _ = row(&mut out, &mut station, &mut head, t, 0, cmd);
            if !cmd.is_empty() {
                c.acknowledge_alarm().map_err(other)?;
            }
        }
        station.actuator = actuator;
        station.led.ageing = ageing;
        station.reset_dose();
        let start = t + STEP;
        t = start;
        let mut r = row(&mut out, &mut station, &mut head, t, id, "");
        c.start(PartId(id), r.at).map_err(other)?;
        let mut resumed = false;
        let mut off_at: Option<u64> = None;
        loop {
            c.on_reading(&r).map_err(other)?;
            apply(&mut station);
            if off_at.is_none()
                && matches!(c.phase(), CuringPhase::Complete | CuringPhase::Faulted(_))
            {
                off_at = Some(t);
            }
            if off_at.is_some_and(|o| t >= o + 300) || t > start + 60_000 {
                break;
            }
            let next = t + STEP;
            if c.phase() == CuringPhase::Exposing {
                if let Some(due) = c.stop_due() {
                    let due_abs = t + u64::from(due.wrapping_since(Ticks(t as u32)));
                    if due_abs < next {
                        station.advance_to(due_abs as f64 / 1000.0);
                        if let TimerOutcome::Stopped = c.on_stop_timer(due).map_err(other)? {
                            apply(&mut station);
                        }
                    }
                }
            }
            if let Some((open, close, _)) = door {
                for (edge_s, closed) in [(open, false), (close, true)] {
                    let edge = start + (edge_s * 1000.0) as u64;
                    if edge > t && edge <= next {
                        station.advance_to(edge as f64 / 1000.0);
                        pins.door.set(closed);
                        apply(&mut station);
                    }
                }
            }
            t = next;
            let resume = door.is_some_and(|(_, _, at)| {
                !resumed && t >= start + (at * 1000.0) as u64 && c.phase() == CuringPhase::Paused
            });
            r = row(
                &mut out,
                &mut station,
                &mut head,
                t,
                id,
                if resume { "resume" } else { "" },
            );
            if resume {
                c.resume(r.at).map_err(other)?;
                resumed = true;
            }
        }
        c.finish(Ticks(t as u32)).map_err(other)?;
        apply(&mut station);
        if i + 1 == 6 {
            for _ in 0..50 {
                t += STEP;
                let _ = row(&mut out, &mut station, &mut head, t, 0, "");
            }
        }
    }
    Ok(out)
}

fn logger(seed: u64) -> Result<String, ReviewError> {
    let mut rng = Rng::new(seed);
    let mut out = String::from(
        "# scenario uv-logger-dropout (simulated, invented values)\ntime_s,irradiance_w_per_m2\n",
    );
    let mut cloud = 1.0f64;
    for s in 0..3600u32 {
        // A 90 s dropout (battery contact) from 40 min on.
        if (2400..2490).contains(&s) {
            continue;
        }
        let t = f64::from(s);
        // Slow drift of the sun plus clouds passing (a first-order random walk).
        let target = if rng.uniform() < 0.02 {
            0.35 + 0.65 * rng.uniform()
        } else {
            cloud
        };
        cloud += 0.2 * (target - cloud);
        let e = 30.0 * (0.9 + 0.1 * (t / 3600.0 * std::f64::consts::PI).sin()) * cloud;
        let _ = writeln!(out, "{t:.0},{:.4}", (e + 0.05 * rng.normal()).max(0.0));
    }
    Ok(out)
}
