//! A curing-station shift, simulated: a 395 nm LED array cures an adhesive bead to
//! 2000 mJ/cm², part after part. Every number here is invented demo data (the LED, its droop
//! and ageing, the shutter, the calibration); the controller is the library's.
//!
//! - the LED droops as it warms during each part and loses output over the shift (ageing is
//!   exaggerated so the maintenance warning shows within one shift);
//! - part 5: the operator opens the door mid-cure, closes it, then presses resume;
//! - part 9: the shutter sticks at 40 % after the stop; the alarm is raised and the part's
//!   record shows the true dose; the shutter is then repaired and the alarm acknowledged.
//!
//! Columns: the controller's record (delivered = measured radiant exposure, tail = after the
//! stop command, paused = while the door was open, peak/min/mean irradiance, exposing time,
//! lamp ratio) and, for comparison, the simulation's true dose at the part.
//!
//! Run: `cargo run --example curing_station`

use hosttests::lamp_curing::{
    demo_meter, run_part, Actuator, DoorOpening, LedArray, Photodiode, RunOptions, SimPins,
    Station, DEMO_DARK,
};
use photon_ledger::prelude::*;

const TICK_HZ: u32 = 10_000;

fn flags(seen: Events) -> String {
    let mut s = Vec::new();
    for (e, name) in [
        (Events::PAUSED, "paused"),
        (Events::RESUMED, "resumed"),
        (Events::OVEREXPOSED, "OVEREXPOSED"),
        (Events::LIGHT_NOT_OFF, "LIGHT-NOT-OFF"),
        (Events::LAMP_LOW, "lamp-maintenance"),
    ] {
        if seen.contains(e) {
            s.push(name);
        }
    }
    s.join(",")
}

fn main() {
    let meter = demo_meter(TICK_HZ);
    let pins = SimPins::new();
    let config = CuringConfig {
        target: RadiantExposure::from_mj_per_cm2(2000.0),
        tolerance: RadiantExposure::from_mj_per_cm2(20.0),
        // The shutter, measured at commissioning: 4 ms dead time, then closed after 12 ms.
        lag: ActuatorLag::Profile(
            FallProfile::new(&[
                FallPoint {
                    after_ticks: 40,
                    remaining: 1.0,
                },
                FallPoint {
                    after_ticks: 120,
                    remaining: 0.0,
                },
            ])
            .expect("valid profile"),
        ),
        stop_policy: StopPolicy::Anticipate,
        window: IrradianceWindow {
            minimum: Some(IrradianceLimit {
                irradiance: Irradiance::from_mw_per_cm2(60.0),
                hold_off_ticks: 2_000, // 200 ms
            }),
            maximum: Some(IrradianceLimit {
                irradiance: Irradiance::from_mw_per_cm2(250.0),
                hold_off_ticks: 500, // 50 ms
            }),
            warm_up_ticks: 3_000, // 300 ms
        },
        light_off: LightOffCheck {
            fraction: 0.05,
            floor: Irradiance::from_mw_per_cm2(0.2),
            margin_ticks: 200, // 20 ms
        },
        lamp: Some(LampReference {
            // Mean irradiance of a part with the new array at commissioning.
            reference: Irradiance::from_mw_per_cm2(141.0),
            maintenance_below: 0.7,
        }),
        max_gap_ticks: 50,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
        interlock_closed_level: ActiveLevel::High,
    };
    let mut c = pins
        .controller(meter.clone(), config)
        .expect("valid configuration");
    let mut pd = Photodiode::new(&meter, DEMO_DARK, 65_535, 3);
    let mut station = Station::new(
        LedArray::new(Irradiance::from_mw_per_cm2(150.0), 0.12),
        Actuator::Profile(vec![(0.004, 1.0), (0.012, 0.0)]),
    );

    println!("curing station: 395 nm LED array, adhesive target 2000 mJ/cm², 1 kHz readings");
    println!(
        "{:>4} {:>12} {:>10} {:>9} {:>9} {:>8} {:>8} {:>7} {:>7} {:>7} {:>6} {:>6}  flags",
        "part",
        "stop",
        "delivered",
        "overshoot",
        "sim.true",
        "tail",
        "paused",
        "peak",
        "min",
        "mean",
        "time",
        "lamp"
    );
    println!(
        "{:>4} {:>12} {:>10} {:>9} {:>9} {:>8} {:>8} {:>7} {:>7} {:>7} {:>6} {:>6}",
        "",
        "",
        "mJ/cm²",
        "mJ/cm²",
        "mJ/cm²",
        "mJ/cm²",
        "mJ/cm²",
        "mW/cm²",
        "mW/cm²",
        "mW/cm²",
        "s",
        "ratio"
    );

    let parts = 12u32;
    let mut t: u64 = 0;
    let mut good = 0;
    let mut faulted = 0;
    let mut total_dose = 0.0;
    for n in 1..=parts {
        // Ageing over the shift (exaggerated for the demo).
        station.led.ageing = 1.0 - 0.03 * f64::from(n - 1);
        if n == 9 {
            station.actuator = Actuator::Stuck {
                after_s: 0.005,
                fraction: 0.4,
            };
        }
        let opts = RunOptions {
            sample_ticks: 10,
            use_timer: true,
            door: (n == 5).then_some(DoorOpening {
                open_s: 4.0,
                close_s: 6.0,
                resume_s: 8.0,
            }),
            settle_s: 0.3,
            max_s: 120.0,
        };
        let run = run_part(
            &mut c,
            &pins,
            &mut station,
            &mut pd,
            PartId(4100 + n),
            t,
            &opts,
        );
        let r = run.record;
        let stop = match r.stop_reason {
            StopReason::Target => "target".to_string(),
            StopReason::TargetTimer => "target/timer".to_string(),
            StopReason::Fault(f) => format!("fault:{f:?}"),
            StopReason::Paused => "paused".to_string(),
            StopReason::Ended => "ended".to_string(),
        };
        let mw = |e: Option<Irradiance>| e.map_or(f64::NAN, |e| e.mw_per_cm2());
        println!(
            "{:>4} {:>12} {:>10.1} {:>+9.2} {:>9.1} {:>8.2} {:>8.2} {:>7.1} {:>7.1} {:>7.1} {:>6.2} {:>6.3}  {}",
            r.part.0,
            stop,
            r.delivered.mj_per_cm2(),
            r.overshoot.mj_per_cm2(),
            run.true_dose.mj_per_cm2(),
            r.after_stop.mj_per_cm2(),
            r.paused.mj_per_cm2(),
            mw(r.peak),
            mw(r.min),
            mw(r.mean),
            r.exposing_time.s(),
            r.lamp_ratio.unwrap_or(f64::NAN),
            flags(r.seen),
        );
        if let Some(f) = r.fault {
            faulted += 1;
            println!(
                "     ! {f}: alarm output {} — true dose at the part {:.1} mJ/cm²",
                if pins.alarm.get() {
                    "ACTIVE"
                } else {
                    "inactive"
                },
                run.true_dose.mj_per_cm2()
            );
            // The operator repairs the shutter and acknowledges the alarm.
            station.actuator = Actuator::Profile(vec![(0.004, 1.0), (0.012, 0.0)]);
            c.acknowledge_alarm().expect("no part active");
        } else {
            good += 1;
        }
        total_dose += r.delivered.mj_per_cm2();
        // 5 s to unload and load the next part.
        t = run.end_tick + 5 * u64::from(TICK_HZ);
    }
    let trend = c.lamp_trend();
    println!();
    println!(
        "shift: {parts} parts, {good} within the process, {faulted} faulted; mean delivered {:.1} mJ/cm²",
        total_dose / f64::from(parts)
    );
    println!(
        "lamp: last ratio {:.3}, mean {:.3}, trend {:+.4} per part over {} parts; maintenance {}",
        trend.latest_ratio.unwrap_or(f64::NAN),
        trend.mean_ratio.unwrap_or(f64::NAN),
        trend.slope_per_part.unwrap_or(f64::NAN),
        trend.parts,
        if trend.maintenance_due {
            "DUE"
        } else {
            "not due"
        }
    );
}
