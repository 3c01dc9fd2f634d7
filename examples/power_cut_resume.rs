//! A curing session interrupted by a power cut and resumed from the flash journal.
//!
//! Runs on the host with the simulated NOR flash from `hosttests`: the session starts, the
//! power fails in the middle of a checkpoint write, the device "reboots", mounts the journal,
//! resumes with the conservative dose and stops at the target. The lamp reading is invented
//! demo data (a constant ADC code).
//!
//! `cargo run --example power_cut_resume`

use hosttests::flash::SimFlash;
use photon_ledger::journal::checkpoint::{full_scale_irradiance, resume_session};
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::record::{Body, CalibrationId, EventCode, SessionOutcome};
use photon_ledger::prelude::*;

type Flash = SimFlash<1, 4, 1024>;

use photon_ledger::fixtures::RecordingPin as Pin;

const CODE: i32 = 2004;

/// The workspace's workbench meter (12-bit, 3.3 V, 100 kΩ, 0.2 A/W over 1 mm², 365 nm) at
/// 1 kHz; see `photon_ledger::fixtures::bench_meter` for its figures.
fn meter() -> Meter {
    photon_ledger::fixtures::bench_meter(1000).expect("meter")
}

fn config() -> SessionConfig {
    SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(100.0)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(5.0)),
        max_gap_ticks: 20,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    }
}

/// Feed readings every 10 ticks from `t`; checkpoint when due; stop at the target, at tick
/// `until`, or when the flash reports an error (the power cut). Returns the last tick and the
/// outcome.
fn expose(
    session: &mut Session<Pin, Pin>,
    cp: &mut Checkpointer,
    journal: &mut Journal<Flash>,
    mut t: u32,
    until: Option<u32>,
) -> (u32, Result<(), JournalError<hosttests::flash::SimError>>) {
    loop {
        if until.is_some_and(|u| t + 10 > u) {
            return (t, Ok(()));
        }
        t += 10;
        let r = Reading {
            code: CODE,
            range: RangeIndex(0),
            at: Ticks(t),
        };
        session.on_reading(&r).expect("pins");
        cp.observe(session.meter().irradiance(CODE - 4, RangeIndex(0)));
        let h = session.integrator().exposure();
        if session.phase() == Phase::TargetMet {
            let ev = cp.event(Ticks(t), h, EventCode::TargetReached, 0);
            let end = cp.end(Ticks(t), h, SessionOutcome::TargetMet);
            let r = journal
                .append(&Body::Event(ev))
                .and_then(|_| journal.append(&Body::End(end)));
            return (t, r.map(|_| ()));
        }
        if cp.due(Ticks(t)) {
            if let Err(e) = journal.append(&Body::Checkpoint(cp.checkpoint(Ticks(t), h))) {
                // A failed checkpoint is a fault: the source goes off (here: the power is gone).
                return (t, Err(e));
            }
            if let Err(e) = journal.maintain() {
                return (t, Err(e));
            }
        }
    }
}

fn main() {
    let meter = meter();
    let journal_cfg =
        JournalConfig::try_new::<Flash>(0, 4, Retention::Ring).expect("journal config");
    let cp_cfg = CheckpointConfig {
        interval_ticks: 200,
        ..CheckpointConfig::one_second(meter.tick_rate(), 20, full_scale_irradiance(&meter))
    };

    // First boot: start the session.
    let mut journal = Journal::mount(Flash::new(4), journal_cfg).expect("mount");
    let mut cp = Checkpointer::new(cp_cfg).expect("checkpoint config");
    let mut session = Session::new(meter.clone(), config(), Pin::default(), Pin::default())
        .map_err(|_| ())
        .expect("session");
    let start = cp.start_record(&meter, session.config(), CalibrationId(1), Ticks(0));
    let id = journal.begin_session(start).expect("start record");
    journal
        .append(&Body::Checkpoint(cp.begin(
            id,
            Ticks(0),
            RadiantExposure::ZERO,
        )))
        .expect("first checkpoint");
    session.start().expect("pins");
    session
        .on_reading(&Reading {
            code: CODE,
            range: RangeIndex(0),
            at: Ticks(0),
        })
        .expect("pins");
    // Expose for 5 s, then the power fails 30 bytes into the next flash program.
    let (t, r) = expose(&mut session, &mut cp, &mut journal, 0, Some(5_000));
    r.expect("no cut yet");
    journal.flash_mut().cut_after(30);
    let (t, r) = expose(&mut session, &mut cp, &mut journal, t, None);
    assert!(r.is_err(), "the cut interrupts a checkpoint");
    let delivered = session.integrator().exposure();
    println!(
        "power cut at t = {:.2} s after {:.3} mJ/cm² delivered",
        f64::from(t) / 1000.0,
        delivered.mj_per_cm2()
    );

    // Second boot: mount, recover, resume.
    let mut flash = journal.release();
    flash.power_on();
    let mut journal = Journal::mount(flash, journal_cfg).expect("mount after the cut");
    let recovered = *journal.recovered().expect("an open session");
    let mut session = Session::new(meter, config(), Pin::default(), Pin::default())
        .map_err(|_| ())
        .expect("session");
    let resumed = resume_session(&mut session, &recovered).expect("same configuration");
    println!(
        "recovered bound {:.3} mJ/cm² (delivered + at most {:.3} mJ/cm²)",
        resumed.dose.mj_per_cm2(),
        cp.horizon().mj_per_cm2()
    );
    let mut cp = Checkpointer::new(cp_cfg).expect("checkpoint config");
    let t0 = t + 3_000;
    let (ev, first) = cp.resume(&recovered, Ticks(t0));
    journal.append(&Body::Event(ev)).expect("resumed event");
    journal
        .append(&Body::Checkpoint(first))
        .expect("checkpoint");
    if resumed.target_met {
        println!("target already met; not restarting the source");
        return;
    }
    session.start().expect("pins");
    session
        .on_reading(&Reading {
            code: CODE,
            range: RangeIndex(0),
            at: Ticks(t0),
        })
        .expect("pins");
    let (t_end, r) = expose(&mut session, &mut cp, &mut journal, t0, None);
    r.expect("journal");
    let after = session.integrator().exposure() - resumed.dose;
    println!(
        "target met at t = {:.2} s; true dose {:.3} mJ/cm² for a target of 100 mJ/cm²",
        f64::from(t_end) / 1000.0,
        (delivered + after).mj_per_cm2()
    );

    let mut csv = String::new();
    let n = export_csv(&mut journal, &mut csv, false).expect("export");
    println!("journal: {n} records retained; the last ones:");
    for line in csv
        .lines()
        .rev()
        .take(4)
        .collect::<Vec<_>>()
        .into_iter()
        .rev()
    {
        println!("  {line}");
    }
}
