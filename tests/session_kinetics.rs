//! Pause and resume, dose milestones and the interlock of the basic session, through its
//! public API with embedded-hal-mock pins. Doses are computed by hand from the test meter
//! (one net code = 1 mW/m², 1 kHz ticks; see tests/common).

mod common;

use common::{config, meter, reading};
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use embedded_hal_mock::eh1::MockError;
use photon_ledger::control::session::{
    CommandError, InterlockPin, Milestones, PauseCause, Refusal, SessionConfigError, MAX_MILESTONES,
};
use photon_ledger::prelude::*;

fn io_error() -> MockError {
    MockError::Io(std::io::ErrorKind::Other)
}

/// Pins of a run that starts, stops at its target and never alarms: enable low (new), high
/// (start), low (stop); alarm low (new).
fn clean_run_pins() -> (PinMock, PinMock) {
    (
        PinMock::new(&[
            Pin::set(State::Low),
            Pin::set(State::High),
            Pin::set(State::Low),
        ]),
        PinMock::new(&[Pin::set(State::Low)]),
    )
}

fn h(j_per_m2: f64) -> DoseAmount {
    DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(j_per_m2))
}

#[test]
fn pause_counts_leak_and_dark_time_and_resume_reaches_the_target() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),  // new
        Pin::set(State::High), // start
        Pin::set(State::Low),  // pause
        Pin::set(State::High), // resume
        Pin::set(State::Low),  // target
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    // 1 W/m² for 200 ms: 0.2 J/m².
    for t in (0..=200).step_by(10) {
        s.on_reading(&reading(1000, t)).unwrap();
    }
    assert_eq!(s.pause(Ticks(200)).unwrap(), Phase::Paused);
    assert!(s.is_paused());
    assert_eq!(s.pause_cause(), Some(PauseCause::Command));
    // The shutter leaks 0.1 W/m². Trapezoids: 200→210 ms (1000 + 100)/2 codes × 10 ms =
    // 5.5 mJ/m², then 190 ms at 0.1 W/m² = 19 mJ/m²: 24.5 mJ/m² of leak.
    for t in (210..=400).step_by(10) {
        let o = s.on_reading(&reading(100, t)).unwrap();
        assert!(matches!(
            o,
            Outcome::Integrated {
                before: Phase::Paused,
                after: Phase::Paused,
                milestone: None
            }
        ));
    }
    assert!((s.progress().leak.j_per_m2() - 0.0245).abs() < 1e-12);
    let p = s.resume(Ticks(400)).unwrap();
    assert_eq!(p.cause, PauseCause::Command);
    assert_eq!(p.started, Ticks(200));
    assert_eq!(p.dark_ticks, 200);
    assert!((p.dark.s() - 0.2).abs() < 1e-12);
    assert!((p.dose_at_pause.j_per_m2() - 0.2).abs() < 1e-12);
    assert!((p.leak.j_per_m2() - 0.0245).abs() < 1e-12);
    assert_eq!(s.phase(), Phase::Exposing);
    let mut t = 400;
    while s.phase() == Phase::Exposing {
        t += 10;
        s.on_reading(&reading(1000, t)).unwrap();
    }
    assert_eq!(s.phase(), Phase::TargetMet);
    let pr = s.progress();
    assert!(pr.exposure.j_per_m2() >= 1.0);
    assert_eq!(pr.pauses, 1);
    assert!((pr.dark_time.s() - 0.2).abs() < 1e-12);
    assert!((pr.leak.j_per_m2() - 0.0245).abs() < 1e-12);
    en.done();
    al.done();
}

#[test]
fn pause_and_resume_in_the_wrong_phase_are_refused_and_change_nothing() {
    let mut en = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    assert_eq!(
        s.pause(Ticks(0)),
        Err(CommandError::Refused(Refusal::NotExposing))
    );
    assert_eq!(s.phase(), Phase::Ready);
    assert_eq!(
        s.resume(Ticks(0)).unwrap_err(),
        CommandError::Refused(Refusal::NotPaused)
    );
    s.start().unwrap();
    assert_eq!(
        s.resume(Ticks(0)).unwrap_err(),
        CommandError::Refused(Refusal::NotPaused)
    );
    assert_eq!(s.phase(), Phase::Exposing);
    assert_eq!(s.progress().pauses, 0);
    en.done();
    al.done();
}

#[test]
fn leak_while_paused_can_complete_the_run() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low), // pause
        Pin::set(State::Low), // target reached by the leak: inactive again
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(0.2, 0.1), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    for t in (0..=100).step_by(10) {
        s.on_reading(&reading(1000, t)).unwrap();
    }
    s.pause(Ticks(100)).unwrap();
    // The shutter is stuck open: 1 W/m² continues; 0.2 J/m² is reached at 200 ms.
    let mut t = 100;
    let mut last = None;
    while s.is_paused() {
        t += 10;
        last = Some(s.on_reading(&reading(1000, t)).unwrap());
    }
    assert_eq!(t, 200);
    assert_eq!(
        last,
        Some(Outcome::Integrated {
            before: Phase::Paused,
            after: Phase::TargetMet,
            milestone: None
        })
    );
    let p = s.progress();
    assert_eq!(p.pauses, 1);
    assert!((p.leak.j_per_m2() - 0.1).abs() < 1e-12);
    en.done();
    al.done();
}

#[test]
fn pause_pin_error_faults() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low).with_error(io_error()),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    assert!(matches!(
        s.pause(Ticks(0)),
        Err(CommandError::Pin(PinError::Enable(_)))
    ));
    assert_eq!(s.phase(), Phase::Faulted(Fault::Output));
    en.done();
    al.done();
}

/// Runs 1 W/m² every 10 ms until the run stops; returns (tick, milestone index, exposure) of
/// every reading that reported a milestone.
fn milestone_run<E, A>(s: &mut Session<E, A>) -> Vec<(u32, u16, f64)>
where
    E: embedded_hal::digital::OutputPin,
    A: embedded_hal::digital::OutputPin,
    E::Error: core::fmt::Debug,
    A::Error: core::fmt::Debug,
{
    let mut hits = Vec::new();
    let mut t = 0;
    s.start().unwrap();
    while s.phase() == Phase::Exposing {
        if let Outcome::Integrated {
            milestone: Some(i), ..
        } = s.on_reading(&reading(1000, t)).unwrap()
        {
            hits.push((t, i, s.progress().exposure.j_per_m2()));
        }
        t += 10;
    }
    hits
}

#[test]
fn milestones_every_20_percent_fire_on_the_first_sample_at_or_above_each() {
    let (mut en, mut al) = clean_run_pins();
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    s.set_milestones(Milestones::EveryFraction(0.2)).unwrap();
    let hits = milestone_run(&mut s);
    let ticks: Vec<(u32, u16)> = hits.iter().map(|&(t, i, _)| (t, i)).collect();
    // Exposure after the sample at t ms is t mJ/m²; milestones at 0.2, 0.4, … 1.0 J/m²; the
    // last coincides with the target.
    assert_eq!(
        ticks,
        vec![(200, 0), (400, 1), (600, 2), (800, 3), (1000, 4)]
    );
    for (k, &(_, _, e)) in hits.iter().enumerate() {
        let level = 0.2 * (k as f64 + 1.0);
        assert!(
            e >= level * (1.0 - 1e-12) && e < level + 0.01,
            "{e} {level}"
        );
    }
    assert_eq!(s.phase(), Phase::TargetMet);
    assert_eq!(s.progress().milestones_reached, 5);
    en.done();
    al.done();
}

#[test]
fn one_sample_past_several_milestones_reports_the_last() {
    let (mut en, mut al) = clean_run_pins();
    let mut s = Session::new(meter(), config(0.5, 0.1), en.clone(), al.clone()).unwrap();
    // Steps of 10 mJ/m² per sample: 0.101, 0.103, 0.105 are all first reached at 0.11 J/m².
    s.set_milestones(Milestones::Doses(&[h(0.101), h(0.103), h(0.105), h(0.3)]))
        .unwrap();
    let hits = milestone_run(&mut s);
    let ticks: Vec<(u32, u16)> = hits.iter().map(|&(t, i, _)| (t, i)).collect();
    assert_eq!(ticks, vec![(110, 2), (300, 3)]);
    assert_eq!(s.progress().milestones_reached, 4);
    en.done();
    al.done();
}

#[test]
fn milestones_every_step_in_photons() {
    let (mut en, mut al) = clean_run_pins();
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    // A quarter of the target, given in photons on the 1 cm² sample area.
    let mol_per_j = s.meter().band().mol_per_j();
    let quarter = PhotonAmount::from_mol(0.25 * mol_per_j * 1e-4);
    s.set_milestones(Milestones::Every(DoseAmount::Photons(quarter)))
        .unwrap();
    let hits = milestone_run(&mut s);
    let ticks: Vec<u32> = hits.iter().map(|&(t, _, _)| t).collect();
    assert_eq!(ticks, vec![250, 500, 750, 1000]);
    en.done();
    al.done();
}

#[test]
fn a_fine_step_reports_every_milestone_exactly_once_in_order() {
    let (mut en, mut al) = clean_run_pins();
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    // 100 milestones of 10 mJ/m²; 4 W/m² gives 40 mJ/m² per 10 ms sample, so each sample
    // passes four milestones (the step estimate and the exact threshold check together).
    s.set_milestones(Milestones::Every(h(0.01))).unwrap();
    s.start().unwrap();
    let mut reported = Vec::new();
    let mut t = 0;
    while s.phase() == Phase::Exposing {
        if let Outcome::Integrated {
            milestone: Some(i), ..
        } = s.on_reading(&reading(4000, t)).unwrap()
        {
            reported.push(i);
            // Every milestone up to i is reached, the next one is not.
            let e = s.progress().exposure.j_per_m2();
            assert!(e >= 0.01 * f64::from(i + 1) * (1.0 - 1e-12), "{i} {e}");
            assert!(e < 0.01 * f64::from(i + 2), "{i} {e}");
        }
        t += 10;
    }
    // Exposure after the sample at t ms is 4·t mJ/m²: milestone 4k − 1 at t = 10k ms.
    let expected: Vec<u16> = (1..=25).map(|k| 4 * k - 1).collect();
    assert_eq!(reported, expected);
    assert_eq!(s.progress().milestones_reached, 100);
    en.done();
    al.done();
}

#[test]
fn bad_milestones_are_named_config_errors_and_change_nothing() {
    let en = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let al = PinMock::new(&[Pin::set(State::Low)]);
    let (mut en_check, mut al_check) = (en.clone(), al.clone());
    let mut s = Session::new(meter(), config(1.0, 0.1), en, al).unwrap();
    let cases = [
        (
            Milestones::Doses(&[h(0.2), h(0.2)]),
            SessionConfigError::MilestoneOrder,
        ),
        (
            Milestones::Doses(&[h(0.3), h(0.2)]),
            SessionConfigError::MilestoneOrder,
        ),
        (
            Milestones::Doses(&[h(0.5), h(1.5)]),
            SessionConfigError::MilestoneBeyondTarget,
        ),
        (Milestones::Doses(&[h(0.0)]), SessionConfigError::Milestone),
        (
            Milestones::Doses(&[h(f64::NAN)]),
            SessionConfigError::Milestone,
        ),
        (
            Milestones::Every(h(2.0)),
            SessionConfigError::MilestoneBeyondTarget,
        ),
        (Milestones::Every(h(-1.0)), SessionConfigError::Milestone),
        (
            Milestones::Every(h(1e-9)),
            SessionConfigError::TooManyMilestones,
        ),
        (
            Milestones::EveryFraction(0.0),
            SessionConfigError::Milestone,
        ),
        (
            Milestones::EveryFraction(1.5),
            SessionConfigError::Milestone,
        ),
    ];
    for (m, e) in cases {
        assert_eq!(s.set_milestones(m), Err(e), "{m:?}");
    }
    let many = [h(0.01); MAX_MILESTONES + 1];
    assert_eq!(
        s.set_milestones(Milestones::Doses(&many)),
        Err(SessionConfigError::TooManyMilestones)
    );
    s.start().unwrap();
    assert_eq!(
        s.set_milestones(Milestones::EveryFraction(0.5)),
        Err(SessionConfigError::NotReady)
    );
    // Nothing was armed: no milestone fires.
    for t in (0..=300).step_by(10) {
        let o = s.on_reading(&reading(1000, t)).unwrap();
        assert!(matches!(
            o,
            Outcome::Integrated {
                milestone: None,
                ..
            }
        ));
    }
    assert_eq!(s.progress().milestones_reached, 0);
    en_check.done();
    al_check.done();
}

#[test]
fn open_interlock_pauses_and_only_an_explicit_resume_with_it_closed_resumes() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),  // new
        Pin::set(State::High), // start
        Pin::set(State::Low),  // door opens: pause
        Pin::set(State::High), // resume
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut door = PinMock::new(&[
        Pin::get(State::High), // start
        Pin::get(State::High), // t = 0
        Pin::get(State::High), // t = 10
        Pin::get(State::Low),  // t = 20: open
        Pin::get(State::Low),  // t = 30
        Pin::get(State::High), // t = 40: closed again, still paused
        Pin::get(State::Low),  // resume refused: open
        Pin::get(State::High), // resume
        Pin::get(State::High), // t = 50
    ]);
    let mut s = Session::with_interlock(
        meter(),
        config(1.0, 0.1),
        en.clone(),
        al.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::High),
    )
    .unwrap();
    s.start().unwrap();
    s.on_reading(&reading(1000, 0)).unwrap();
    s.on_reading(&reading(1000, 10)).unwrap();
    let o = s.on_reading(&reading(1000, 20)).unwrap();
    assert_eq!(
        o,
        Outcome::Integrated {
            before: Phase::Paused,
            after: Phase::Paused,
            milestone: None
        }
    );
    s.on_reading(&reading(0, 30)).unwrap();
    s.on_reading(&reading(0, 40)).unwrap();
    assert_eq!(s.phase(), Phase::Paused);
    assert_eq!(s.pause_cause(), Some(PauseCause::Interlock));
    assert_eq!(
        s.resume(Ticks(45)).unwrap_err(),
        CommandError::Refused(Refusal::InterlockOpen)
    );
    assert!(s.is_paused());
    let p = s.resume(Ticks(45)).unwrap();
    assert_eq!(p.cause, PauseCause::Interlock);
    assert_eq!(p.started, Ticks(20));
    assert_eq!(p.dark_ticks, 25);
    s.on_reading(&reading(1000, 50)).unwrap();
    assert_eq!(s.phase(), Phase::Exposing);
    en.done();
    al.done();
    door.done();
}

#[test]
fn interlock_read_error_drives_the_safe_state() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut door = PinMock::new(&[
        Pin::get(State::High),
        Pin::get(State::High),
        Pin::get(State::High).with_error(io_error()),
    ]);
    let mut s = Session::with_interlock(
        meter(),
        config(1.0, 0.1),
        en.clone(),
        al.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::High),
    )
    .unwrap();
    s.start().unwrap();
    s.on_reading(&reading(1000, 0)).unwrap();
    assert_eq!(
        s.on_reading(&reading(1000, 10)).unwrap(),
        Outcome::Faulted(Fault::InterlockPin)
    );
    assert_eq!(s.phase(), Phase::Faulted(Fault::InterlockPin));
    // The pin's own error value is kept for diagnosis.
    assert_eq!(s.interlock_error(), Some(&io_error()));
    en.done();
    al.done();
    door.done();
}

#[test]
fn interlock_read_error_at_start_keeps_the_error_and_never_lights() {
    // start(): the read fails, so the enable output never goes active (set low twice: at
    // construction and for the safe state) and the alarm is raised.
    let mut en = PinMock::new(&[Pin::set(State::Low), Pin::set(State::Low)]);
    let mut al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut door = PinMock::new(&[Pin::get(State::High).with_error(io_error())]);
    let mut s = Session::with_interlock(
        meter(),
        config(1.0, 0.1),
        en.clone(),
        al.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::High),
    )
    .unwrap();
    assert_eq!(s.interlock_error(), None);
    assert_eq!(s.start().unwrap(), Phase::Faulted(Fault::InterlockPin));
    assert_eq!(s.interlock_error(), Some(&io_error()));
    en.done();
    al.done();
    door.done();
}

#[test]
fn interlock_read_error_on_resume_is_returned_and_faults() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low), // pause
        Pin::set(State::Low), // safe state
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut door = PinMock::new(&[
        Pin::get(State::Low), // start: closed (this interlock is closed when low)
        Pin::get(State::Low), // the reading while paused: closed
        Pin::get(State::Low).with_error(io_error()), // resume: read error
    ]);
    let mut s = Session::with_interlock(
        meter(),
        config(1.0, 0.1),
        en.clone(),
        al.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::Low),
    )
    .unwrap();
    assert_eq!(s.start().unwrap(), Phase::Exposing);
    s.pause(Ticks(5)).unwrap();
    assert_eq!(paused_reading_then_failed_resume(&mut s), Some(()));
    assert_eq!(s.phase(), Phase::Faulted(Fault::InterlockPin));
    en.done();
    al.done();
    door.done();
}

fn paused_reading_then_failed_resume<E, A, I>(s: &mut Session<E, A, I>) -> Option<()>
where
    E: embedded_hal::digital::OutputPin,
    A: embedded_hal::digital::OutputPin,
    I: photon_ledger::control::InterlockInput,
{
    // Paused: the reading reads the (closed) interlock; resume reads it and fails.
    let o = s.on_reading(&reading(0, 10)).ok()?;
    assert!(matches!(o, Outcome::Integrated { .. }));
    let e = s.resume(Ticks(20)).err()?;
    assert!(matches!(e, CommandError::Interlock(_)));
    Some(())
}

#[test]
fn start_with_the_interlock_open_stays_ready() {
    let mut en = PinMock::new(&[Pin::set(State::Low)]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut door = PinMock::new(&[Pin::get(State::Low)]);
    let mut s = Session::with_interlock(
        meter(),
        config(1.0, 0.1),
        en.clone(),
        al.clone(),
        InterlockPin::new(door.clone(), ActiveLevel::High),
    )
    .unwrap();
    assert_eq!(s.start().unwrap(), Phase::Ready);
    assert_eq!(
        s.on_reading(&reading(1000, 0)).unwrap(),
        Outcome::Ignored(photon_ledger::control::session::Ignored::NotRunning)
    );
    en.done();
    al.done();
    door.done();
}

#[test]
fn command_errors_read_as_sentences() {
    use photon_ledger::control::session::CommandError;
    use photon_ledger::control::Refusal;
    let refused: CommandError<(), (), ()> = CommandError::Refused(Refusal::NotPaused);
    assert_eq!(refused.to_string(), "refused: not paused");
    let door: CommandError<(), (), &str> = CommandError::Interlock("bus");
    assert_eq!(
        door.to_string(),
        "interlock could not be read (safe state): \"bus\""
    );
    let pin: CommandError<&str, (), ()> = CommandError::Pin(PinError::Enable("nak"));
    assert!(pin
        .to_string()
        .starts_with("enable output could not be written"));
}
