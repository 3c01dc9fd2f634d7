//! Main job: a simulated benchtop photoreactor kinetics run, dosed in moles of photons.
//!
//! Scenario (invented for the demo): a 405 nm LED (FWHM 14 nm) lights a 4.0 cm² vessel window;
//! its output droops 12 % as it warms. A photodiode beside the window feeds a two-range
//! transimpedance amplifier and a 12-bit ADC. The run stops at 20 µmol of photons delivered to
//! the window. The tick counter (1 kHz) starts just before it wraps, as a long-running
//! controller's would.
//!
//! The kinetics protocol: a milestone every 20 % of the target (the chemist notes the time
//! and dose of each); the run pauses twice for an aliquot (at 25 % and 60 % of the target, 20 s
//! dark each, resumed by the operator); the enclosure door is opened once (the interlock
//! pauses the run; the operator closes it and resumes). Light that still arrives while paused
//! (the LED's fall time) is counted and reported as each pause's leak.
//!
//! The code below is shaped like firmware: it polls the ADC through the library's trait, lets
//! the autoranger move the range switch, feeds the session, and drives the LED from the
//! session's enable output.
//!
//! Run: `cargo run --example photoreactor`

use hosttests::sim::{Adc, Amplifier, Photodiode, SimPin, SimSensor, WarmingLed};
use photon_ledger::control::session::{InterlockPin, Milestones, PauseSummary};
use photon_ledger::prelude::*;

const TICK_HZ: u32 = 1_000;
const SAMPLE_MS: u32 = 50;

fn main() -> Result<(), String> {
    // The physical set-up (simulation).
    let mut led = WarmingLed::new(42.0, 0.12, 90.0);
    led.fall_time_s = 0.08;
    let diode = Photodiode {
        responsivity_a_per_w: 0.22,
        area_m2: 1.0e-6,
        dark_current_a: 0.4e-9,
    };
    let amp = Amplifier {
        gains_v_per_a: vec![1.0e6, 1.0e5],
        offset_v: 2.0e-3,
        noise_v_rms: 0.8e-3,
    };
    let adc = Adc {
        bits: 12,
        reference_v: 3.3,
    };
    let mut sensor = SimSensor::new(led, diode, amp, adc, 405);

    // The library configuration, as firmware would hold it.
    let dark: Vec<i32> = (0..2).map(|r| sensor.dark_code(r)).collect();
    let front_end = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 4,
        },
        &[
            AmplifierRange {
                gain: Transimpedance::from_mohm(1.0),
                dark_offset: dark[0],
            },
            AmplifierRange {
                gain: Transimpedance::from_kohm(100.0),
                dark_offset: dark[1],
            },
        ],
    )
    .map_err(|e| e.to_string())?;
    let meter = Meter::new(MeterConfig {
        front_end,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.22),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(14.0),
        },
        tick_rate: TickRate::from_hz(TICK_HZ).ok_or("tick rate")?,
        sample_area: Some(Area::from_cm2(4.0)),
    })
    .map_err(|e| e.to_string())?;
    let target = PhotonAmount::from_umol(20.0);
    let config = SessionConfig {
        target: DoseAmount::Photons(target),
        tolerance: DoseAmount::Photons(PhotonAmount::from_umol(0.2)),
        max_gap_ticks: 500,
        max_unusable_run: 4,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    let enable = SimPin::new();
    let alarm = SimPin::new();
    // The door switch reads high while the door is closed.
    let door = SimPin::new();
    door.0.set(true);
    let mut session = Session::with_interlock(
        meter,
        config,
        enable.clone(),
        alarm.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::High),
    )
    .map_err(|e| format!("{e:?}"))?;
    session
        .set_milestones(Milestones::EveryFraction(0.2))
        .map_err(|e| e.to_string())?;
    let mut autorange = Autorange::new(
        [SimPin::new()],
        session.meter().front_end(),
        AutorangeConfig {
            up: 0.92,
            down: 0.80,
            settle_samples: 1,
        },
        RangeIndex(0),
    )
    .map_err(|e| format!("{e:?}"))?;

    let band = session.meter().band();
    println!(
        "photoreactor: 405 nm LED (FWHM 14 nm), equivalent photon wavelength {:.2} nm, \
         {:.4} µmol/J; vessel window 4.0 cm²; target {:.1} µmol photons",
        band.equivalent_wavelength().nm(),
        band.mol_per_j() * 1e6,
        target.umol()
    );

    let start_tick = u32::MAX - 60_000; // wraps one minute into the run
    let mut ms: u32 = 0;
    let mut truth_j_per_m2 = 0.0; // the simulation's own fine integral, for comparison
    let mut stopped_at_ms = None;
    let mut next_print = 30_000;
    // The protocol: aliquots at these fractions of the target, 20 s dark each; the door is
    // opened at 150 s for 6 s and the operator resumes 4 s after closing it.
    let mut aliquots = [0.25, 0.60].into_iter().peekable();
    const ALIQUOT_DARK_MS: u32 = 20_000;
    const DOOR_OPEN_MS: u32 = 150_000;
    const DOOR_CLOSE_MS: u32 = 156_000;
    const DOOR_RESUME_MS: u32 = 160_000;
    let mut resume_at: Option<u32> = None;
    let mut milestones: Vec<(u32, f64)> = Vec::new(); // (ms, µmol)
    let mut pauses: Vec<PauseSummary> = Vec::new();
    session.start().map_err(|e| format!("{e:?}"))?;
    sensor.led.command(enable.is_high(), 0.0);
    loop {
        // Advance the world by one sample period (fine steps for the reference integral).
        for k in 0..SAMPLE_MS {
            let t = f64::from(ms + k) / 1000.0;
            truth_j_per_m2 +=
                0.5 * (sensor.led.irradiance(t) + sensor.led.irradiance(t + 0.001)) * 0.001;
        }
        ms += SAMPLE_MS;
        sensor.t_s = f64::from(ms) / 1000.0;
        sensor.range = usize::from(autorange.current().0);
        let now = Ticks(start_tick).wrapping_add(ms);
        let reading = match sensor.poll_reading(autorange.current(), now) {
            Ok(r) => r,
            Err(nb::Error::WouldBlock) => continue,
            Err(nb::Error::Other(e)) => match e {},
        };
        let decision = autorange
            .observe(&reading, session.meter().front_end())
            .map_err(|e| format!("{e:?}"))?;
        if decision != Decision::Settling {
            let outcome = session.on_reading(&reading).map_err(|e| format!("{e:?}"))?;
            if let Outcome::Integrated {
                milestone: Some(_), ..
            } = outcome
            {
                let umol = session.progress().photons.map_or(0.0, |n| n.umol());
                milestones.push((ms, umol));
            }
        }
        // The operator: aliquots, the door, and resuming.
        if session.phase() == Phase::Exposing
            && aliquots
                .peek()
                .is_some_and(|&f| session.progress().fraction >= f)
        {
            aliquots.next();
            session.pause(now).map_err(|e| format!("{e:?}"))?;
            resume_at = Some(ms + ALIQUOT_DARK_MS);
        }
        if ms == DOOR_OPEN_MS {
            door.0.set(false);
        }
        if ms == DOOR_CLOSE_MS {
            door.0.set(true);
            resume_at = Some(DOOR_RESUME_MS);
        }
        if resume_at.is_some_and(|r| ms >= r) && session.is_paused() {
            resume_at = None;
            pauses.push(session.resume(now).map_err(|e| format!("{e:?}"))?);
        }
        // The LED driver follows the enable output.
        sensor.led.command(enable.is_high(), sensor.t_s);

        let p = session.progress();
        if ms >= next_print && session.phase() == Phase::Exposing {
            next_print += 30_000;
            println!(
                "t={:>5.1} s  E={:>6.2} mW/cm²  q={:>7.2} µmol m⁻² s⁻¹  dose={:>7.3} µmol \
                 ({:>5.1} %)  range {}  to target {}",
                sensor.t_s,
                p.irradiance.mw_per_cm2(),
                p.photon_irradiance.umol_per_m2_s(),
                p.photons.map_or(0.0, |n| n.umol()),
                p.fraction * 100.0,
                autorange.current().0,
                p.time_to_target
                    .map_or_else(|| "-".to_string(), |s| format!("{:.1} s", s.s()))
            );
        }
        // Stopped: the target reached, or a terminal phase (a pause is not a stop).
        let stopped = session.phase() == Phase::TargetMet || session.phase().is_terminal();
        if stopped_at_ms.is_none() && stopped {
            stopped_at_ms = Some(ms);
        }
        // Keep measuring 2 s after the stop: light still arriving is dose.
        if let Some(stop) = stopped_at_ms {
            if ms >= stop + 2_000 || session.phase().is_terminal() {
                break;
            }
        }
        if ms > 3_600_000 {
            return Err("no stop within an hour".into());
        }
    }

    let p = session.progress();
    let photons = p.photons.ok_or("no area")?;
    let truth_umol = session
        .meter()
        .photon_amount(RadiantExposure::from_j_per_m2(truth_j_per_m2))
        .map_or(0.0, |n| n.umol());
    println!("--- summary ---");
    println!("stop reason        {:?}", session.phase());
    println!(
        "duration           {:.2} s to stop (pauses included)",
        f64::from(stopped_at_ms.unwrap_or(ms)) / 1000.0
    );
    println!(
        "radiant exposure   {:.2} mJ/cm²  ({:.1} J/m²)",
        p.exposure.mj_per_cm2(),
        p.exposure.j_per_m2()
    );
    println!(
        "photon exposure    {:.2} µmol/m²; photons to the window {:.4} µmol",
        p.photon_exposure.umol_per_m2(),
        photons.umol()
    );
    println!(
        "overshoot          {:+.4} µmol ({:+.3} % of target), light after the stop",
        photons.umol() - target.umol(),
        (photons.umol() / target.umol() - 1.0) * 100.0
    );
    println!(
        "meter vs simulated truth {:.4} µmol: {:+.3} %",
        truth_umol,
        (photons.umol() / truth_umol - 1.0) * 100.0
    );
    let mol_per_j = session.meter().band().mol_per_j();
    let area_m2 = 4.0e-4;
    let umol = |h: RadiantExposure| h.j_per_m2() * mol_per_j * area_m2 * 1e6;
    for (k, (at, n)) in milestones.iter().enumerate() {
        println!(
            "milestone {}        {:>3} % reached at t={:>6.2} s, dose {:.4} µmol",
            k + 1,
            (k + 1) * 20,
            f64::from(*at) / 1000.0,
            n
        );
    }
    for (k, pz) in pauses.iter().enumerate() {
        println!(
            "pause {} ({:?}) at t={:>6.2} s, dose {:.4} µmol, dark {:.2} s, leak {:.5} µmol",
            k + 1,
            pz.cause,
            f64::from(pz.started.wrapping_since(Ticks(start_tick))) / 1000.0,
            umol(pz.dose_at_pause),
            pz.dark.s(),
            umol(pz.leak)
        );
    }
    println!(
        "paused in total    {} pauses, {:.2} s dark, leak {:.5} µmol",
        p.pauses,
        p.dark_time.s(),
        umol(p.leak)
    );
    println!(
        "outputs            enable {}, alarm {}",
        if enable.is_high() { "ON" } else { "off" },
        if alarm.is_high() { "ON" } else { "off" }
    );
    Ok(())
}
