//! A day on a personal UV logger, no PC needed (scenario and all numbers invented for the
//! demo).
//!
//! Morning: a technician services 254 nm germicidal lamps; a solar-blind UV-C channel,
//! weighted with ICNIRP S(254 nm) = 0.5, is compared with 30 J/m² effective in any 8 h, with
//! warnings at 50 %, 80 % and 100 % (the last one latched until acknowledged). Afternoon:
//! outdoor work; an erythemally weighted broadband channel gives the UV index (10-min mean,
//! WHO rounding) and the day's dose in SED. Both channels sample every 10 s while the light
//! is steady and every second while it changes.
//!
//! Run: `cargo run --example field_day`

use hosttests::sim::{Rng, SimPin};
use photon_ledger::control::exposure::display::{dose_line, solar_line, status_line};
use photon_ledger::control::exposure::{
    ExposureConfig, ExposureMonitor, OffTime, SamplingPlan, SolarMonitor, WeightFactor,
};
use photon_ledger::irradiance::calibration::Validity;
use photon_ledger::prelude::*;
use photon_ledger::spectral::weighting::uv_hazard;

const HZ: u32 = 1000;
const S: u32 = HZ;
const MIN: u32 = 60 * S;
const HOUR: u32 = 60 * MIN;

/// A one-range meter whose net code is `w_per_code` W/m².
fn meter(w_per_code: f64, nm: f64) -> Result<Meter, String> {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.5),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 8,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_mohm(10.0),
            dark_offset: 12,
        }],
    )
    .map_err(|e| e.to_string())?;
    let amps_per_code = 2.5 / 65_536.0 / 10.0e6;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
            w_per_code / amps_per_code,
        )),
        band: Band::Line(Wavelength::from_nm(nm)),
        tick_rate: TickRate::from_hz(HZ).ok_or("tick rate")?,
        sample_area: None,
    })
    .map_err(|e| e.to_string())
}

/// UV-C leakage at the technician's position, W/m² (radiant, 254 nm).
fn lamp_irradiance(t: u32) -> f64 {
    let services: [(u32, u32, f64); 3] = [
        (8 * HOUR + 30 * MIN, 4 * MIN, 0.06),
        (9 * HOUR + 30 * MIN, 6 * MIN, 0.08),
        (11 * HOUR, 5 * MIN, 0.10), // a shield left off
    ];
    services
        .iter()
        .find(|(start, len, _)| t >= *start && t < start + len)
        .map_or(0.0, |s| s.2)
}

/// Erythemally weighted solar irradiance while outdoors (12:00–17:00), W/m².
fn solar_erythemal(t: u32) -> f64 {
    if !(12 * HOUR..17 * HOUR).contains(&t) {
        return 0.0;
    }
    let hours_from_noon = (f64::from(t) / f64::from(HOUR) - 13.0).abs();
    0.18 * (-(hours_from_noon * hours_from_noon) / 8.0).exp()
}

fn clock(t: u32) -> String {
    format!("{:02}:{:02}", t / HOUR, (t / MIN) % 60)
}

fn main() -> Result<(), String> {
    let uvc_meter = meter(1e-4, 254.0)?;
    let solar_meter = meter(1e-5, 300.0)?;
    let pins = [SimPin::new(), SimPin::new(), SimPin::new()];
    // The UV-C channel sees the 254 nm line only: its weight is S(254 nm) from the ICNIRP 2004
    // table shipped in `weighting` (0.5).
    let s254 = WeightFactor::from_ratio(uv_hazard(Wavelength::from_nm(254.0))).ok_or("weight")?;
    let config = ExposureConfig {
        window_ticks: u64::from(8 * HOUR),
        bucket_ticks: u64::from(10 * MIN),
        limit: RadiantExposure::from_j_per_m2(30.0),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 30 * S,
    };
    let mut hazard = ExposureMonitor::<49, 3, SimPin>::new(uvc_meter, s254, config, pins.clone())
        .map_err(|e| format!("{e:?}"))?;
    let mut solar = SolarMonitor::<11>::new(
        solar_meter.clone(),
        WeightFactor::UNWEIGHTED, // the channel's filter already applies s_er(λ)
        u64::from(10 * MIN),
        u64::from(MIN),
        30 * S,
    )
    .map_err(|e| e.to_string())?;
    let plan = SamplingPlan {
        slow_ticks: 10 * S,
        fast_ticks: S,
        change: 0.2,
        floor: Irradiance::from_w_per_m2(1e-4),
    };
    println!(
        "field day: rolling window 8 h in 10-min buckets = {} bytes of RAM",
        core::mem::size_of::<photon_ledger::control::exposure::RollingWindow<49>>()
    );

    let mut rng = Rng::new(2026);
    let code = |e: f64, per_code: f64, rng: &mut Rng| -> i32 {
        (e / per_code + 12.0 + 0.8 * rng.normal())
            .round()
            .clamp(0.0, 65_535.0) as i32
    };
    let mut t = 7 * HOUR + 30 * MIN;
    let (mut last_uvc, mut last_sun) = (Irradiance::ZERO, Irradiance::ZERO);
    let mut next_status = 8 * HOUR;
    let mut samples = 0u32;
    let mut acknowledged = false;
    let mut swapped = false;
    while t < 17 * HOUR {
        samples += 1;
        let uvc = Reading {
            code: code(lamp_irradiance(t), 1e-4, &mut rng),
            range: RangeIndex(0),
            at: Ticks(t),
        };
        let changes = hazard.on_reading(&uvc).map_err(|e| format!("{e:?}"))?;
        for (i, name) in ["50 % warning", "80 % warning", "LIMIT ALARM"]
            .iter()
            .enumerate()
        {
            if changes.raised & (1 << i) != 0 {
                println!(
                    "{}  ** {name} ** window {:.1} J/m² eff, output {} on",
                    clock(t),
                    hazard.window_exposure().j_per_m2(),
                    i
                );
            }
            if changes.cleared & (1 << i) != 0 {
                println!("{}  {name} cleared", clock(t));
            }
        }
        if let Some(gap) = changes.gap {
            println!(
                "{}  gap of {} s charged {:.3} J/m²",
                clock(t),
                gap.ticks / S,
                gap.bound.j_per_m2()
            );
        }
        if !swapped && t >= 11 * HOUR + 6 * MIN {
            // Battery swap: the state is checkpointed (on a device: to the journal), the
            // logger is off for about two minutes with no real-time clock, and resumes from
            // the checkpoint. Window, shift and the latched alarm come back; nothing is
            // counted while it is off, and the shift says so.
            swapped = true;
            let state = hazard.state();
            let before = hazard.window_exposure().j_per_m2();
            let meter = hazard.meter().clone();
            let pins = hazard.release();
            hazard = ExposureMonitor::resume(meter, s254, config, pins, &state, OffTime::Unknown)
                .map_err(|e| format!("{e:?}"))?;
            t += 2 * MIN;
            println!(
                "{}  battery swapped: window {before:.1} -> {:.1} J/m² eff, alarm latched: {}",
                clock(t),
                hazard.window_exposure().j_per_m2(),
                hazard.alarm_latched()
            );
            continue;
        }
        if hazard.alarm_latched() && !acknowledged && t >= 11 * HOUR + 10 * MIN {
            let still = hazard.acknowledge().map_err(|e| format!("{e:?}"))?;
            acknowledged = true;
            println!(
                "{}  alarm acknowledged by the wearer (output still on: {still})",
                clock(t)
            );
        }
        let sun_net = solar_meter
            .front_end()
            .net_code(&Reading {
                code: code(solar_erythemal(t), 1e-5, &mut rng),
                range: RangeIndex(0),
                at: Ticks(t),
            })
            .map_err(|e| e.to_string())?;
        solar
            .accept(sun_net, RangeIndex(0), Ticks(t))
            .map_err(|e| e.to_string())?;

        if t >= next_status {
            next_status += 30 * MIN;
            let (uvi, cat) = solar.uv_index_reported();
            let l1 = dose_line(hazard.fraction_used(), hazard.time_left());
            let l2 = solar_line(uvi, cat, solar.day_sed());
            // The demo's meter: calibration due in 21 days (invented for the demo).
            let l3 = status_line(Validity::Valid { days_left: 21 }, hazard.alarm_latched());
            println!(
                "{}  |{:<16}|  |{:<16}|  |{:<16}|",
                clock(t),
                l1.as_str(),
                l2.as_str(),
                l3.as_str()
            );
        }
        let uvc_now = hazard.effective_irradiance();
        let sun_now = Irradiance::from_w_per_m2(solar.uv_index_now().value() / 40.0);
        let d = plan
            .next_delay(last_uvc, uvc_now)
            .min(plan.next_delay(last_sun, sun_now));
        last_uvc = uvc_now;
        last_sun = sun_now;
        t += d;
    }
    let shift = hazard.end_shift();
    println!("--- end of shift ---");
    println!(
        "UV-C effective exposure this shift {:.2} J/m² ({:.0} % of 30 J/m²), gaps {}, alarm latched {}",
        shift.exposure.j_per_m2(),
        shift.exposure.j_per_m2() / 30.0 * 100.0,
        shift.gaps,
        shift.alarm_latched
    );
    println!(
        "resumed after a reset {} time(s); unmonitored time: {}",
        shift.resumes,
        if shift.off_unknown > 0 {
            "not known (no real-time clock)".to_string()
        } else {
            format!("{} s", shift.off_ticks / u64::from(S))
        }
    );
    println!(
        "erythemal dose today {:.2} SED; samples taken {samples}",
        solar.day_sed()
    );
    println!(
        "outputs now: {}",
        pins.iter()
            .map(|p| if p.is_high() { "on" } else { "off" })
            .collect::<Vec<_>>()
            .join(" / ")
    );
    Ok(())
}
