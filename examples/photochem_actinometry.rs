//! Photochemistry demo: calibrate a 405 nm photoreactor with ferrioxalate actinometry, then
//! run a reaction to a target of absorbed photons and compute its quantum yield.
//!
//! **Every number in this scenario is invented for the demo** (the reactor, the sample, its
//! absorbance spectrum, the assay readings, the "true" quantum yield of the simulated
//! compound). Only the ferrioxalate quantum-yield table and ε₅₁₀ come from the library, and
//! those are marked there as values from memory.
//!
//! The reactor: a 405 nm LED (FWHM 14 nm) lights a 3.0 mL vial; the photodiode sits beside
//! the vial, so the photon flux into the sample is an unknown constant times the sensor
//! irradiance. The simulation knows that constant; the firmware does not and measures it:
//!
//! 1. **Actinometry.** 3.0 mL of 0.006 M potassium ferrioxalate (demo absorbance at 405 nm in
//!    the vial: 1.35) is irradiated until the sensor has seen 5 kJ/m². The phenanthroline
//!    assay (an invented spectrophotometer reading) gives Fe²⁺, hence the photons that entered
//!    the vial, hence the calibration factor (mol/s per W/m², and per A of photocurrent).
//! 2. **Reaction.** 3.0 mL of a compound "R" (1.5 µmol, absorbance 0.4–1.1 across the band,
//!    products transparent) is irradiated to a target of 3.0 µeinstein absorbed, with the
//!    absorbance falling as R is consumed. The firmware assumes Φ = 0.25 to predict the
//!    conversion; the simulated compound really has Φ = 0.28.
//! 3. **Quantum yield.** An invented assay result (the simulated amount converted, rounded to
//!    three digits) gives Φ from the run.
//!
//! Run: `cargo run --example photochem_actinometry`

use hosttests::sim::{Adc, Amplifier, Photodiode, SimPin, SimSensor, WarmingLed};
use photon_ledger::dose::Rounding;
use photon_ledger::photochem::absorption::{
    band_fraction_absorbed, fraction_absorbed, AbsorbanceTable, Absorption,
};
use photon_ledger::photochem::actinometry::{
    ActinometricCalibration, FerrioxalateRun, PhenanthrolineAssay, FE_PHEN_EPSILON_510,
    HATCHARD_PARKER_0_006_M,
};
use photon_ledger::photochem::quantum_yield::quantum_yield_from_run;
use photon_ledger::photochem::reactor::{AbsorbanceModel, PhotochemConfig, Reactor};
use photon_ledger::photochem::units::{
    Absorbance, ChemicalAmount, PathLength, QuantumYield, Volume,
};
use photon_ledger::prelude::*;

const TICK_HZ: u32 = 1_000;
const SAMPLE_MS: u32 = 50;

// --- the simulated world (hidden from the firmware) -------------------------------------
/// Photon flux into the vial per W/m² at the sensor, (mol/s)/(W/m²) (invented geometry).
const K_TRUE: f64 = 4.8e-10;
/// The simulated compound's real quantum yield (invented).
const PHI_TRUE: f64 = 0.28;

fn err(e: impl std::fmt::Debug) -> String {
    format!("{e:?}")
}

/// The bench: simulated LED, photodiode chain and pins, plus the firmware's meter settings.
struct Bench {
    sensor: SimSensor,
    enable: SimPin,
    alarm: SimPin,
    ms: u32,
    start_tick: u32,
}

impl Bench {
    fn new() -> Self {
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
        Self {
            sensor: SimSensor::new(led, diode, amp, adc, 405),
            enable: SimPin::new(),
            alarm: SimPin::new(),
            ms: 0,
            start_tick: u32::MAX - 90_000,
        }
    }

    fn meter(&self) -> Result<Meter, String> {
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
                    dark_offset: self.sensor.dark_code(0),
                },
                AmplifierRange {
                    gain: Transimpedance::from_kohm(100.0),
                    dark_offset: self.sensor.dark_code(1),
                },
            ],
        )
        .map_err(err)?;
        Meter::new(MeterConfig {
            front_end,
            calibration: Calibration::Responsivity {
                responsivity: Responsivity::from_a_per_w(0.22),
                active_area: Area::from_mm2(1.0),
            },
            band: band(),
            tick_rate: TickRate::from_hz(TICK_HZ).ok_or("tick rate")?,
            sample_area: None,
        })
        .map_err(err)
    }

    /// Run a session to its stop and 2 s beyond (light after the stop still counts).
    /// `world(dt_s, e_sensor)` advances the simulated chemistry by 1 ms steps;
    /// `report(t_s, &session)` is called every 30 s while exposing.
    fn expose(
        &mut self,
        target: RadiantExposure,
        tolerance: RadiantExposure,
        mut world: impl FnMut(f64, f64),
        mut report: impl FnMut(f64, &Session<SimPin, SimPin>),
    ) -> Result<(Session<SimPin, SimPin>, f64), String> {
        let config = SessionConfig {
            target: DoseAmount::RadiantExposure(target),
            tolerance: DoseAmount::RadiantExposure(tolerance),
            max_gap_ticks: 500,
            max_unusable_run: 4,
            enable_level: ActiveLevel::High,
            alarm_level: ActiveLevel::High,
        };
        let mut session = Session::new(
            self.meter()?,
            config,
            self.enable.clone(),
            self.alarm.clone(),
        )
        .map_err(err)?;
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
        .map_err(err)?;
        let t0 = self.ms;
        session.start().map_err(err)?;
        self.sensor
            .led
            .command(self.enable.is_high(), f64::from(self.ms) / 1000.0);
        let mut stopped_at = None;
        let mut next_report = t0 + 30_000;
        loop {
            for k in 0..SAMPLE_MS {
                let t = f64::from(self.ms + k) / 1000.0;
                let e =
                    0.5 * (self.sensor.led.irradiance(t) + self.sensor.led.irradiance(t + 0.001));
                world(0.001, e);
            }
            self.ms += SAMPLE_MS;
            self.sensor.t_s = f64::from(self.ms) / 1000.0;
            self.sensor.range = usize::from(autorange.current().0);
            let now = Ticks(self.start_tick).wrapping_add(self.ms);
            let reading = match self.sensor.poll_reading(autorange.current(), now) {
                Ok(r) => r,
                Err(nb::Error::WouldBlock) => continue,
                Err(nb::Error::Other(e)) => match e {},
            };
            let decision = autorange
                .observe(&reading, session.meter().front_end())
                .map_err(err)?;
            if decision != Decision::Settling {
                session.on_reading(&reading).map_err(err)?;
            }
            self.sensor
                .led
                .command(self.enable.is_high(), self.sensor.t_s);
            let t_run = f64::from(self.ms - t0) / 1000.0;
            if self.ms >= next_report && session.phase() == Phase::Exposing {
                next_report += 30_000;
                report(t_run, &session);
            }
            if stopped_at.is_none() && !session.phase().is_exposing() {
                stopped_at = Some((self.ms, t_run));
            }
            if let Some((stop, _)) = stopped_at {
                if self.ms >= stop + 2_000 || session.phase().is_terminal() {
                    break;
                }
            }
            if self.ms - t0 > 3_600_000 {
                return Err("no stop within an hour".into());
            }
        }
        let stop_s = stopped_at.map_or(0.0, |s| s.1);
        Ok((session, stop_s))
    }
}

fn band() -> Band {
    Band::Led {
        peak: Wavelength::from_nm(405.0),
        fwhm: Wavelength::from_nm(14.0),
    }
}

fn main() -> Result<(), String> {
    let mut bench = Bench::new();
    let band = band();

    // ==== 1. Ferrioxalate actinometry ===================================================
    println!("== 1. ferrioxalate actinometry (demo data) ==");
    let act_absorbance = Absorbance::from_decadic(1.35); // demo: actinometer at 405 nm, in the vial
    let f_act = fraction_absorbed(act_absorbance).map_err(err)?;
    let phi_act = HATCHARD_PARKER_0_006_M.band_average(&band).map_err(err)?;
    println!(
        "Φ(Fe²⁺) over the LED band {:.4} ({:?}; {:?}); f(actinometer) {:.4}",
        phi_act.quantum_yield.value(),
        phi_act.table,
        phi_act.checked,
        f_act.value()
    );
    println!("  table: {}", HATCHARD_PARKER_0_006_M.citation);
    // World: Fe²⁺ formed = Φ · f · photons into the vial (actinometer absorbance taken as
    // constant over the run).
    let mut photons_in_act = 0.0;
    let (session, t_act) = bench.expose(
        RadiantExposure::from_j_per_m2(5_000.0),
        RadiantExposure::from_j_per_m2(100.0),
        |dt, e| photons_in_act += K_TRUE * e * dt,
        |t, s| {
            println!(
                "  t={t:>5.1} s  E={:>5.2} mW/cm²  H={:>6.0} J/m²",
                s.progress().irradiance.mw_per_cm2(),
                s.progress().exposure.j_per_m2()
            )
        },
    )?;
    let h_act = session.progress().exposure;
    let fe_true = phi_act.quantum_yield.value() * f_act.value() * photons_in_act;
    // The spectrophotometer: ΔA₅₁₀ of the complexed aliquot, printed to 3 decimals.
    let (v1, v2, v3, l) = (3.0e-6, 0.5e-6, 10.0e-6, 0.01);
    let delta_a = fe_true * (v2 / v1) / v3 * FE_PHEN_EPSILON_510.m2_per_mol() * l;
    let delta_a = (delta_a * 1000.0).round() / 1000.0;
    println!(
        "stopped after {t_act:.2} s; sensor exposure {:.1} J/m² (light after the stop included)",
        h_act.j_per_m2()
    );
    println!("assay (demo reading): ΔA510 = {delta_a:.3}, V1 3.0 mL, V2 0.5 mL, V3 10 mL, l 1 cm");
    let run = FerrioxalateRun {
        assay: PhenanthrolineAssay {
            delta_absorbance: Absorbance::from_decadic(delta_a),
            irradiated_volume: Volume::from_ml(3.0),
            aliquot_volume: Volume::from_ml(0.5),
            complexed_volume: Volume::from_ml(10.0),
            path_length: PathLength::from_cm(1.0),
            epsilon_510: FE_PHEN_EPSILON_510,
        },
        quantum_yield: phi_act,
        absorbed_fraction: f_act,
        irradiation_time: Seconds::from_s(t_act),
    };
    let cal = ActinometricCalibration::from_run(&run, h_act, session.meter().calibration(), &band)
        .map_err(err)?;
    println!(
        "Fe²⁺ {:.4} µmol → {:.4} µeinstein into the vial, mean {:.3} nmol/s",
        cal.ferrous_amount.umol(),
        cal.incident_photons.umol(),
        cal.mean_photon_flux.mol_per_s() * 1e9
    );
    println!(
        "calibration: {:.5e} (mol/s)/(W/m²)  = {:.5} (µmol/s)/µA of photocurrent  \
         [simulation's hidden value {:.5e}: {:+.2} %]",
        cal.flux_per_irradiance.mol_per_s_per_w_per_m2(),
        cal.flux_per_current.umol_per_s_per_ua(),
        K_TRUE,
        (cal.flux_per_irradiance.mol_per_s_per_w_per_m2() / K_TRUE - 1.0) * 100.0
    );

    // ==== 2. Reaction to a target of absorbed photons =================================
    println!("\n== 2. reaction: 3.0 µeinstein absorbed (demo compound R) ==");
    // Demo absorbance of the sample in the vial at the start of the run.
    let spectrum = [
        (360.0, 0.95),
        (380.0, 1.10),
        (400.0, 0.85),
        (420.0, 0.40),
        (440.0, 0.12),
        (460.0, 0.02),
    ];
    let table_at = |scale: f64| {
        let pts: Vec<_> = spectrum
            .iter()
            .map(|&(nm, a)| (Wavelength::from_nm(nm), Absorbance::from_decadic(a * scale)))
            .collect();
        AbsorbanceTable::new(&pts)
    };
    let table = table_at(1.0).map_err(err)?;
    let reactant = ChemicalAmount::from_umol(1.5);
    let config = PhotochemConfig {
        band,
        vessel: cal.vessel_geometry(),
        absorption: Absorption::Table(&table),
        model: AbsorbanceModel::FallsWithConversion,
        reactant: Some(reactant),
        quantum_yield: Some(QuantumYield::new(0.25).map_err(err)?),
    };
    let reactor = Reactor::new(&config).map_err(err)?;
    let target = PhotonAmount::from_umol(3.0);
    let h_target = reactor.absorbed_target_to_exposure(target).map_err(err)?;
    let h_limit = reactor
        .absorbed_to_exposure(PhotonAmount::from_umol(3.3), Rounding::NotAfter)
        .map_err(err)?;
    println!(
        "f at start {:.4} (band-averaged); assumed Φ 0.25 → stop at {:.1} J/m² sensor exposure; \
         overexposure limit {:.1} J/m²; conversion read-out within {:.1e} below the model",
        reactor.initial_absorbed_fraction().value(),
        h_target.j_per_m2(),
        h_limit.j_per_m2(),
        reactor.conversion_error_bound().unwrap_or(0.0)
    );

    // World: dX/dt = Φ_true · q(t) · f(X) / n₀ with the true flux K_TRUE · E and f(X) of the
    // bleaching spectrum (tabulated once on a 1000-step grid of X).
    let f_of_x: Vec<f64> = (0..=1000)
        .map(|i| {
            let t = table_at(1.0 - f64::from(i) / 1000.0)?;
            band_fraction_absorbed(&Absorption::Table(&t), &band).map(|f| f.value())
        })
        .collect::<Result<_, _>>()
        .map_err(err)?;
    let f_world = |x: f64| {
        let p = (x * 1000.0).clamp(0.0, 999.999);
        let i = p.floor() as usize;
        let (a, b) = (f_of_x[i], f_of_x[i + 1]);
        a + (b - a) * (p - p.floor())
    };
    let mut x_true = 0.0_f64;
    let (session, t_run) = bench.expose(
        h_target,
        h_limit - h_target,
        |dt, e| {
            x_true += PHI_TRUE * K_TRUE * e * f_world(x_true) / reactant.mol() * dt;
        },
        |t, s| {
            let p = s.progress();
            let est = reactor.estimate(p.exposure);
            println!(
                "  t={t:>5.1} s  in {:>6.3} µE  absorbed {:>6.3} µE  predicted conversion \
                 {:>5.1} %  to target {}",
                est.incident.umol(),
                est.absorbed.umol(),
                est.conversion.map_or(0.0, |c| c.percent()),
                p.time_to_target
                    .map_or_else(|| "-".to_string(), |s| format!("{:.0} s", s.s()))
            );
        },
    )?;
    let h_run = session.progress().exposure;
    let bound = reactor.conversion_error_bound().unwrap_or(0.0);
    let est = reactor.estimate(h_run);
    println!(
        "stopped after {t_run:.2} s ({:?}); sensor exposure {:.1} J/m² (target {:.1})",
        session.phase(),
        h_run.j_per_m2(),
        h_target.j_per_m2()
    );
    println!(
        "predicted with the assumed Φ: conversion {:.2} … {:.2} %, absorbed {:.4} µE (the \
         read-out is a lower bound, at most {:.2} % below the model; the stop used the exact \
         target)",
        est.conversion.map_or(0.0, |c| c.percent()),
        est.conversion.map_or(0.0, |c| c.percent()) + bound * 100.0,
        est.absorbed.umol(),
        bound * 100.0
    );

    // ==== 3. Quantum yield from the assay ==============================================
    println!("\n== 3. quantum yield from the run ==");
    let converted_umol = {
        let v = x_true * reactant.umol();
        (v * 1000.0).round() / 1000.0 // the invented assay reports 3 decimals in µmol
    };
    let converted = ChemicalAmount::from_umol(converted_umol);
    println!("assay (demo result): {converted_umol:.3} µmol of R converted");
    let record = quantum_yield_from_run(&config, h_run, converted).map_err(err)?;
    println!(
        "Φ = {:.4}  (incident {:.4} µE, absorbed {:.4} µE, mean f {:.4}, initial f {:.4}, \
         model {:?})",
        record.quantum_yield.value(),
        record.incident.umol(),
        record.absorbed.umol(),
        record.mean_absorbed_fraction.value(),
        record.initial_absorbed_fraction.value(),
        record.model
    );
    println!(
        "simulation's true Φ {PHI_TRUE}: {:+.2} % (calibration and assay rounding)",
        (record.quantum_yield.value() / PHI_TRUE - 1.0) * 100.0
    );
    println!(
        "outputs: enable {}, alarm {}",
        if bench.enable.is_high() { "ON" } else { "off" },
        if bench.alarm.is_high() { "ON" } else { "off" }
    );
    Ok(())
}
