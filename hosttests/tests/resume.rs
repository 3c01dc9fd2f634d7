//! A dose-controlled session interrupted by a power cut and resumed from the journal.
//!
//! Lamp and detector data here are invented (a constant ADC code); the checks are the
//! journal's own contract: the resumed session never delivers more than its target (plus one
//! sample step), and stops at most one checkpoint horizon early.

use photon_ledger::irradiance::MeterConfig;

use hosttests::flash::SimFlash;
use hosttests::image::image_to_csv;
use photon_ledger::acquire::reading::{RangeIndex, Reading, TickRate, Ticks};
use photon_ledger::control::session::{ActiveLevel, DoseAmount, Phase, Session, SessionConfig};
use photon_ledger::frontend::{AdcSpec, AmplifierRange, Coding, FrontEnd};
use photon_ledger::irradiance::{Calibration, Meter};
use photon_ledger::journal::checkpoint::{
    full_scale_irradiance, resume_session, CheckpointConfig, Checkpointer, ResumeError,
};
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::record::{Body, CalibrationId, EventCode, SessionOutcome};
use photon_ledger::journal::{Journal, JournalConfig, Retention};
use photon_ledger::quantity::{
    Area, RadiantExposure, Responsivity, Transimpedance, Voltage, Wavelength,
};
use photon_ledger::spectral::band::Band;

type Flash = SimFlash<1, 4, 1024>;

use photon_ledger::fixtures::RecordingPin as Pin;

fn meter() -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 4,
        }],
    )
    .unwrap();
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(15.0),
        },
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap()
}

fn session_config(target_j: f64) -> SessionConfig {
    SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(target_j)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(5.0)),
        max_gap_ticks: 20,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    }
}

fn journal_config() -> JournalConfig {
    JournalConfig::try_new::<Flash>(0, 4, Retention::Ring).unwrap()
}

const CODE: i32 = 2004; // 2000 net codes ≈ 80.6 W/m² with this meter (invented lamp)
const STEP: u32 = 10; // ticks between samples

/// Run a session from `t` until the target is met or `cut_at` ticks pass; returns the tick of
/// the last sample and whether the target was met.
fn run(
    session: &mut Session<Pin, Pin>,
    cp: &mut Checkpointer,
    journal: &mut Journal<Flash>,
    mut t: u32,
    stop_at: Option<u32>,
) -> (u32, bool) {
    loop {
        t += STEP;
        if stop_at.is_some_and(|s| t > s) {
            return (t - STEP, false);
        }
        let r = Reading {
            code: CODE,
            range: RangeIndex(0),
            at: Ticks(t),
        };
        session.on_reading(&r).unwrap();
        cp.observe(session.meter().irradiance(CODE - 4, RangeIndex(0)));
        let h = session.integrator().exposure();
        if session.phase() == Phase::TargetMet {
            let ev = cp.event(Ticks(t), h, EventCode::TargetReached, 0);
            journal.append(&Body::Event(ev)).unwrap();
            let end = cp.end(Ticks(t), h, SessionOutcome::TargetMet);
            journal.append(&Body::End(end)).unwrap();
            return (t, true);
        }
        if cp.due(Ticks(t)) {
            journal
                .append(&Body::Checkpoint(cp.checkpoint(Ticks(t), h)))
                .unwrap();
            journal.maintain().unwrap();
        }
    }
}

#[test]
fn a_session_cut_by_a_power_loss_resumes_without_re_dosing() {
    let target = 3000.0; // J/m² = 300 mJ/cm²
    let meter = meter();
    // A 0.2 s horizon: the bound is full scale (≈ 165 W/m² here) × 0.2 s ≈ 33 J/m².
    let cfg = CheckpointConfig {
        interval_ticks: 200,
        ..CheckpointConfig::one_second(meter.tick_rate(), 20, full_scale_irradiance(&meter))
    };
    let horizon = Checkpointer::new(cfg).unwrap().horizon().j_per_m2();
    let step_dose = meter.irradiance(CODE - 4, RangeIndex(0)).w_per_m2() * f64::from(STEP) / 1000.0;

    for cut_tick in [1_000u32, 4_370, 17_990, 30_000] {
        let mut journal = Journal::mount(Flash::new(4), journal_config()).unwrap();
        let mut cp = Checkpointer::new(cfg).unwrap();
        let mut session = Session::new(
            meter.clone(),
            session_config(target),
            Pin::default(),
            Pin::default(),
        )
        .unwrap();
        let start = cp.start_record(&meter, session.config(), CalibrationId(3), Ticks(0));
        let id = journal.begin_session(start).unwrap();
        journal
            .append(&Body::Checkpoint(cp.begin(
                id,
                Ticks(0),
                session.integrator().exposure(),
            )))
            .unwrap();
        journal.maintain().unwrap();
        session.start().unwrap();
        // Integrate the first sample at t = 0.
        session
            .on_reading(&Reading {
                code: CODE,
                range: RangeIndex(0),
                at: Ticks(0),
            })
            .unwrap();
        let (t_cut, met) = run(&mut session, &mut cp, &mut journal, 0, Some(cut_tick));
        assert!(!met);
        let delivered_before = session.integrator().exposure().j_per_m2();

        // Power fails: the flash keeps what it has; RAM is gone.
        let mut flash = journal.release();
        flash.power_on();
        let mut journal = Journal::mount(flash, journal_config()).unwrap();
        let recovered = *journal.recovered().expect("open session recovered");
        let bound = recovered.dose_bound().radiant_exposure().j_per_m2();
        assert!(bound >= delivered_before);
        assert!(bound <= delivered_before + horizon + 3e-6);

        // A fresh session with the same configuration resumes from the bound.
        let mut session = Session::new(
            meter.clone(),
            session_config(target),
            Pin::default(),
            Pin::default(),
        )
        .unwrap();
        let resumed = resume_session(&mut session, &recovered).unwrap();
        assert!(!resumed.target_met);
        let mut cp = Checkpointer::new(cfg).unwrap();
        let t_resume = t_cut + 5_000; // the reboot took 5 s with the lamp off
        let (ev, first) = cp.resume(&recovered, Ticks(t_resume));
        journal.append(&Body::Event(ev)).unwrap();
        journal.append(&Body::Checkpoint(first)).unwrap();
        session.start().unwrap();
        session
            .on_reading(&Reading {
                code: CODE,
                range: RangeIndex(0),
                at: Ticks(t_resume),
            })
            .unwrap();
        let (_, met) = run(&mut session, &mut cp, &mut journal, t_resume, None);
        assert!(met);
        let after = session.integrator().exposure().j_per_m2() - resumed.dose.j_per_m2();
        let true_total = delivered_before + after;
        // Never more than the target (plus the sample that crossed it) ...
        assert!(
            true_total <= target + step_dose + 1e-9,
            "overdosed: {true_total}"
        );
        // ... and at most one horizon early.
        assert!(
            true_total >= target - horizon - step_dose,
            "stopped far early: {true_total}"
        );
        assert!(journal.recovered().is_some());
        let mut j = Journal::mount(journal.release(), journal_config()).unwrap();
        assert!(j.recovered().is_none(), "ended session still open");

        // The CSV from the device equals the CSV decoded from a raw image of its flash.
        let mut device = String::new();
        let lines = export_csv(&mut j, &mut device, false).unwrap();
        let image = j.release().image().to_vec();
        let decoded = image_to_csv::<1, 4, 1024>(&image, journal_config(), false).unwrap();
        assert_eq!(device, decoded);
        assert_eq!(device.lines().count(), lines as usize + 1);
        assert!(device.contains("target_reached") && device.contains(",end,"));
    }
}

#[test]
fn a_changed_configuration_is_not_resumed_silently() {
    let meter = meter();
    let cfg = CheckpointConfig::one_second(meter.tick_rate(), 20, full_scale_irradiance(&meter));
    let mut journal = Journal::mount(Flash::new(4), journal_config()).unwrap();
    let mut cp = Checkpointer::new(cfg).unwrap();
    let session = Session::new(
        meter.clone(),
        session_config(100.0),
        Pin::default(),
        Pin::default(),
    )
    .unwrap();
    let start = cp.start_record(&meter, session.config(), CalibrationId(3), Ticks(0));
    let id = journal.begin_session(start).unwrap();
    journal
        .append(&Body::Checkpoint(cp.begin(
            id,
            Ticks(0),
            RadiantExposure::from_j_per_m2(0.0),
        )))
        .unwrap();
    journal
        .append(&Body::Checkpoint(
            cp.checkpoint(Ticks(990), RadiantExposure::from_j_per_m2(150.0)),
        ))
        .unwrap();
    let j = Journal::mount(journal.release(), journal_config()).unwrap();
    let recovered = *j.recovered().unwrap();
    let mut other = Session::new(
        meter.clone(),
        session_config(120.0),
        Pin::default(),
        Pin::default(),
    )
    .unwrap();
    assert!(matches!(
        resume_session(&mut other, &recovered),
        Err(ResumeError::ConfigChanged { .. })
    ));
    assert_eq!(other.phase(), Phase::Ready);
    // Same configuration: the recovered bound (150 J/m² + horizon) already meets the target.
    let mut same =
        Session::new(meter, session_config(100.0), Pin::default(), Pin::default()).unwrap();
    let r = resume_session(&mut same, &recovered).unwrap();
    assert!(r.target_met);
    same.start().unwrap();
    assert!(matches!(
        resume_session(&mut same, &recovered),
        Err(ResumeError::NotReady)
    ));
}
