//! The session through its public API, with embedded-hal-mock output pins.

mod common;

use common::{config, meter, reading};
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use embedded_hal_mock::eh1::MockError;
use photon_ledger::control::session::{Ignored, SessionConfigError, SessionError};
use photon_ledger::prelude::*;

fn io_error() -> MockError {
    MockError::Io(std::io::ErrorKind::Other)
}

/// Feed a constant code every 10 ticks from `t0` until the phase leaves Exposing or `limit`
/// samples pass; returns the tick of the last sample.
fn run_until_stop<E: embedded_hal::digital::OutputPin<Error = MockError>>(
    s: &mut Session<E, E>,
    code: i32,
    t0: u32,
    limit: u32,
) -> u32 {
    let mut t = t0;
    for _ in 0..limit {
        s.on_reading(&reading(code, t)).unwrap();
        if !s.phase().is_exposing() {
            break;
        }
        t = t.wrapping_add(10);
    }
    t
}

#[test]
fn stops_at_target_and_never_below_it() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    // 1000 codes = 1 W/m²; target 0.995 J/m² → 995 ms of light, first sample at/above it
    // is at 1000 ms (samples every 10 ms).
    let mut s = Session::new(meter(), config(0.995, 0.1), en.clone(), al.clone()).unwrap();
    assert_eq!(s.phase(), Phase::Ready);
    assert_eq!(s.start().unwrap(), Phase::Exposing);
    let t = run_until_stop(&mut s, 1000, 0, 1000);
    assert_eq!(s.phase(), Phase::TargetMet);
    assert_eq!(t, 1000);
    let p = s.progress();
    assert!(p.exposure.j_per_m2() >= 0.995);
    assert!((p.exposure.j_per_m2() - 1.0).abs() < 1e-12);
    assert!(p.remaining.j_per_m2() <= 0.0);
    assert!(p.time_to_target.is_none());
    en.done();
    al.done();
}

#[test]
fn stuck_shutter_raises_the_overexposure_alarm() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut s = Session::new(meter(), config(0.5, 0.1), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    let mut t = run_until_stop(&mut s, 1000, 0, 1000);
    assert_eq!(s.phase(), Phase::TargetMet);
    // The light does not go away: 0.1 J/m² more at 1 W/m² is 100 ms.
    let mut over_at = None;
    for _ in 0..20 {
        t += 10;
        let o = s.on_reading(&reading(1000, t)).unwrap();
        if let Outcome::Integrated {
            before: Phase::TargetMet,
            after: Phase::Overexposed,
            ..
        } = o
        {
            over_at = Some(t);
            break;
        }
    }
    let over_at = over_at.expect("overexposure must be detected");
    let h = s.progress().exposure.j_per_m2();
    // The limit trips no later than the first sample at or above 0.6 J/m².
    assert!(h <= 0.6 + 1e-12, "{h}");
    assert_eq!(over_at, 600);
    assert!(s.phase().is_terminal());
    // Readings after a terminal phase are ignored.
    assert_eq!(
        s.on_reading(&reading(1000, t + 10)).unwrap(),
        Outcome::Ignored(Ignored::NotRunning)
    );
    en.done();
    al.done();
}

#[test]
fn pin_error_on_start_faults_and_retries_the_safe_level() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High).with_error(io_error()),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(1.0, 0.1), en.clone(), al.clone()).unwrap();
    assert!(s.start().is_err());
    assert_eq!(s.phase(), Phase::Faulted(Fault::Output));
    en.done();
    al.done();
}

#[test]
fn pin_error_at_target_still_ends_faulted() {
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low).with_error(io_error()),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let mut s = Session::new(meter(), config(0.2, 0.1), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    let mut result = Ok(Outcome::Ignored(Ignored::NotRunning));
    for k in 0..100 {
        result = s.on_reading(&reading(1000, k * 10));
        if result.is_err() {
            break;
        }
    }
    assert!(result.is_err());
    assert_eq!(s.phase(), Phase::Faulted(Fault::Output));
    en.done();
    al.done();
}

fn faulting_session() -> (Session<PinMock, PinMock>, PinMock, PinMock) {
    let en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut s = Session::new(meter(), config(10.0, 1.0), en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    s.on_reading(&reading(500, 0)).unwrap();
    (s, en, al)
}

#[test]
fn saturated_code_is_never_integrated_and_faults() {
    let (mut s, mut en, mut al) = faulting_session();
    let before = s.progress().exposure;
    assert_eq!(
        s.on_reading(&reading(4095, 10)).unwrap(),
        Outcome::Faulted(Fault::Saturated)
    );
    assert_eq!(s.progress().exposure, before);
    en.done();
    al.done();
}

#[test]
fn gap_is_a_fault_and_is_not_integrated() {
    let (mut s, mut en, mut al) = faulting_session();
    assert_eq!(
        s.on_reading(&reading(500, 101)).unwrap(),
        Outcome::Faulted(Fault::Gap { ticks: 101 })
    );
    assert_eq!(s.progress().exposure.j_per_m2(), 0.0);
    en.done();
    al.done();
}

#[test]
fn time_backwards_is_a_fault() {
    let (mut s, mut en, mut al) = faulting_session();
    assert_eq!(
        s.on_reading(&reading(500, u32::MAX - 4)).unwrap(),
        Outcome::Faulted(Fault::TimeBackwards)
    );
    en.done();
    al.done();
}

#[test]
fn repeated_timestamp_is_reported_not_used() {
    let en = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let al = PinMock::new(&[Pin::set(State::Low)]);
    let (mut en_check, mut al_check) = (en.clone(), al.clone());
    let mut s = Session::new(meter(), config(10.0, 1.0), en, al).unwrap();
    s.start().unwrap();
    s.on_reading(&reading(500, 0)).unwrap();
    s.on_reading(&reading(500, 10)).unwrap();
    let h = s.progress().exposure;
    assert_eq!(
        s.on_reading(&reading(3000, 10)).unwrap(),
        Outcome::Ignored(Ignored::Repeated)
    );
    assert_eq!(s.progress().exposure, h);
    assert_eq!(s.phase(), Phase::Exposing);
    en_check.done();
    al_check.done();
}

#[test]
fn external_fault_drives_the_safe_state() {
    let (mut s, mut en, mut al) = faulting_session();
    s.fault(Fault::Sensor).unwrap();
    assert_eq!(s.phase(), Phase::Faulted(Fault::Sensor));
    // A second fault changes nothing and touches no pin.
    s.fault(Fault::Aborted).unwrap();
    assert_eq!(s.phase(), Phase::Faulted(Fault::Sensor));
    en.done();
    al.done();
}

#[test]
fn photon_target_progress_and_time_to_target() {
    let mut en = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let mut al = PinMock::new(&[Pin::set(State::Low)]);
    let m = meter();
    // 1 W/m² at 365 nm on 1 cm²: 3.051 162 µmol s⁻¹ W⁻¹ × 1e-4 W = 3.051 162e-4 µmol/s
    // (computed from the exact SI 2019 constants). Target 0.01 µmol → 32.77 s.
    let mut c = config(1.0, 0.0);
    c.target = DoseAmount::Photons(PhotonAmount::from_umol(0.01));
    c.tolerance = DoseAmount::Photons(PhotonAmount::from_umol(0.001));
    let mut s = Session::new(m, c, en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    for k in 0..=1000 {
        s.on_reading(&reading(1000, k * 10)).unwrap();
    }
    let p = s.progress();
    assert!((p.exposure.j_per_m2() - 10.0).abs() < 1e-12);
    let n = p.photons.unwrap();
    assert!((n.umol() / 3.051_162e-3 - 1.0).abs() < 2e-6);
    let eta = p.time_to_target.unwrap().s();
    let expected = 0.01 / 3.051_162e-4 - 10.0;
    assert!((eta - expected).abs() < 1e-4, "{eta} vs {expected}");
    assert!((p.fraction - 0.3051162).abs() < 1e-6);
    en.done();
    al.done();
}

#[test]
fn configuration_errors_are_named_and_touch_no_pin() {
    let cases: [(SessionConfig, SessionConfigError); 6] = [
        (config(0.0, 1.0), SessionConfigError::Target),
        (config(-1.0, 1.0), SessionConfigError::Target),
        (config(f64::NAN, 1.0), SessionConfigError::Target),
        (config(1.0, -0.1), SessionConfigError::Tolerance),
        (config(1.0, f64::INFINITY), SessionConfigError::Tolerance),
        (
            SessionConfig {
                max_gap_ticks: 0,
                ..config(1.0, 0.1)
            },
            SessionConfigError::MaxGap,
        ),
    ];
    for (c, expected) in cases {
        let mut en = PinMock::new(&[]);
        let mut al = PinMock::new(&[]);
        let r = Session::new(meter(), c, en.clone(), al.clone());
        assert!(
            matches!(r, Err(SessionError::Config(e)) if e == expected),
            "{expected:?}"
        );
        en.done();
        al.done();
    }
    // Photons without an illuminated area.
    let fe = meter().front_end().clone();
    let no_area = Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e5)),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap();
    let mut c = config(1.0, 0.1);
    c.target = DoseAmount::Photons(PhotonAmount::from_umol(1.0));
    let mut en = PinMock::new(&[]);
    let mut al = PinMock::new(&[]);
    let r = Session::new(no_area, c, en.clone(), al.clone());
    assert!(matches!(
        r,
        Err(SessionError::Config(SessionConfigError::SampleAreaRequired))
    ));
    en.done();
    al.done();
}

#[test]
fn counter_wrap_gives_the_same_stop() {
    let mut stops = Vec::new();
    for t0 in [0u32, u32::MAX - 300] {
        let mut en = PinMock::new(&[
            Pin::set(State::Low),
            Pin::set(State::High),
            Pin::set(State::Low),
        ]);
        let mut al = PinMock::new(&[Pin::set(State::Low)]);
        let mut s = Session::new(meter(), config(0.995, 0.1), en.clone(), al.clone()).unwrap();
        s.start().unwrap();
        let t = run_until_stop(&mut s, 1000, t0, 1000);
        stops.push((t.wrapping_sub(t0), s.progress().exposure));
        en.done();
        al.done();
    }
    assert_eq!(stops[0], stops[1]);
}

#[test]
fn one_sample_serves_every_stage_and_the_dark_offset_lives_in_the_meter() {
    use hosttests::sim::SimPin;
    use photon_ledger::control::plausibility::{Plausibility, PlausibilityConfig};
    let m = meter();
    let mut plaus = Plausibility::new(
        &m,
        PlausibilityConfig {
            stuck_samples: 0,
            pinned_samples: 0,
            dark_sigma_codes: 0.0,
            negative_k: 0.0,
            max_rate_w_per_m2_s: 0.0,
            transition_ticks: 0,
            dark_drift_codes: 0,
            flap_limit: 0,
            flap_window: 16,
        },
    )
    .unwrap();
    let mut a = Session::new(m.clone(), config(1.0, 0.1), SimPin::new(), SimPin::new()).unwrap();
    let mut b = Session::new(m, config(1.0, 0.1), SimPin::new(), SimPin::new()).unwrap();
    // The dark offset is set once, in the meter the session owns, between runs.
    assert!(a.set_dark_offset(RangeIndex(0), 20));
    assert!(b.set_dark_offset(RangeIndex(0), 20));
    a.start().unwrap();
    b.start().unwrap();
    assert!(
        !a.set_dark_offset(RangeIndex(0), 0),
        "refused while exposing"
    );
    for k in 0..50u32 {
        let r = reading(520, 10 * k);
        // Computed once, shared by the plausibility check and the controller.
        let s = a.meter().front_end().sample(&r);
        assert_eq!(s.net, Ok(500));
        plaus.check_sample(&s, true).unwrap();
        let oa = a.on_sample(&s).unwrap();
        let ob = b.on_reading(&r).unwrap();
        assert_eq!(oa, ob);
    }
    // 500 codes (1 mW/m² each) = 0.5 W/m² for 0.49 s, net of the 20-code dark offset.
    assert!((a.progress().exposure.j_per_m2() - 0.245).abs() < 1e-12);
    assert_eq!(a.progress(), b.progress());
}

#[test]
fn enable_and_alarm_pins_may_have_different_error_types() {
    // A GPIO whose writes cannot fail beside an alarm on a port expander whose can: the
    // session takes both, and names the failing one.
    use hosttests::sim::SimPin;
    use photon_ledger::control::PinError;
    let enable = SimPin::new();
    let alarm = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High).with_error(io_error()),
    ]);
    let mut s = Session::new(meter(), config(1.0, 0.1), enable.clone(), alarm.clone()).unwrap();
    s.start().unwrap();
    assert!(enable.is_high());
    let r = s.fault(Fault::Aborted);
    assert_eq!(r, Err(PinError::Alarm(io_error())));
    assert!(!enable.is_high(), "the enable output went inactive first");
    let (_, mut alarm) = s.release();
    alarm.done();
}

#[test]
fn a_tolerance_of_zero_stops_cleanly_and_flags_only_light_after_the_stop() {
    // Before: the stop sample itself passed target + 0 and every run ended "overexposed".
    use hosttests::sim::SimPin;
    let run = |after_stop: i32| {
        let mut s = Session::new(meter(), config(0.05, 0.0), SimPin::new(), SimPin::new()).unwrap();
        s.start().unwrap();
        let mut t = 0;
        while s.phase() == Phase::Exposing {
            s.on_reading(&reading(1000, t)).unwrap();
            t += 10;
        }
        assert_eq!(s.phase(), Phase::TargetMet);
        for _ in 0..5 {
            s.on_reading(&reading(after_stop, t)).unwrap();
            t += 10;
        }
        s.phase()
    };
    // 1 W/m² (1000 codes) to 0.05 J/m², then dark: the run ends at its target.
    assert_eq!(run(0), Phase::TargetMet);
    // A shutter that leaks 10 mW/m² after the stop: an overexposure at tolerance 0.
    assert_eq!(run(10), Phase::Overexposed);
}
