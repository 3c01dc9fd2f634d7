//! Fault injection at every fallible call of a representative session: every pin write and
//! every ADC poll fails in turn. Each time the library must return a named error or reach the
//! safe state (enable output inactive), and never panic.

use std::cell::{Cell, RefCell};
use std::rc::Rc;

use hosttests::fixtures::round_meter;
use photon_ledger::prelude::*;

/// Counts every call across all pins and ADC polls; the call with index `fail_at` fails.
#[derive(Clone)]
struct Injector {
    calls: Rc<Cell<u32>>,
    fail_at: u32,
}

impl Injector {
    fn next_fails(&self) -> bool {
        let n = self.calls.get();
        self.calls.set(n + 1);
        n == self.fail_at
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct InjectedError;

impl embedded_hal::digital::Error for InjectedError {
    fn kind(&self) -> embedded_hal::digital::ErrorKind {
        embedded_hal::digital::ErrorKind::Other
    }
}

/// A pin that records its level and fails when the injector says so (the level is then
/// unchanged, as on a failed bus write to a port expander).
#[derive(Clone)]
struct FlakyPin {
    level: Rc<RefCell<bool>>,
    inj: Injector,
}

impl embedded_hal::digital::ErrorType for FlakyPin {
    type Error = InjectedError;
}

impl embedded_hal::digital::OutputPin for FlakyPin {
    fn set_low(&mut self) -> Result<(), InjectedError> {
        if self.inj.next_fails() {
            return Err(InjectedError);
        }
        *self.level.borrow_mut() = false;
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), InjectedError> {
        if self.inj.next_fails() {
            return Err(InjectedError);
        }
        *self.level.borrow_mut() = true;
        Ok(())
    }
}

#[derive(Debug, PartialEq)]
enum End {
    /// The session could not be built (pins could not be set inactive): firmware must not
    /// start.
    NotBuilt,
    Phase(Phase),
}

/// A curing-like run: build, start, sample a 1 W/m² source every 10 ms to a 0.5 J/m² target,
/// keep sampling a stuck source until overexposure. Returns how it ended and the enable level.
fn run(fail_at: u32) -> (End, bool, u32) {
    let calls = Rc::new(Cell::new(0));
    let inj = Injector {
        calls: calls.clone(),
        fail_at,
    };
    let enable_level = Rc::new(RefCell::new(false));
    let enable = FlakyPin {
        level: enable_level.clone(),
        inj: inj.clone(),
    };
    let alarm = FlakyPin {
        level: Rc::new(RefCell::new(false)),
        inj: inj.clone(),
    };
    let meter = round_meter(1e-3, 1000);
    let config = SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(0.5)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(0.1)),
        max_gap_ticks: 100,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    let Ok(mut session) = Session::new(meter, config, enable, alarm) else {
        return (End::NotBuilt, *enable_level.borrow(), calls.get());
    };
    let adc_inj = inj.clone();
    let mut adc = FnAdc::new(move || -> nb::Result<i32, InjectedError> {
        if adc_inj.next_fails() {
            Err(nb::Error::Other(InjectedError))
        } else {
            Ok(1000)
        }
    });
    if session.start().is_err() {
        return (
            End::Phase(session.phase()),
            *enable_level.borrow(),
            calls.get(),
        );
    }
    for k in 0..200u32 {
        match adc.poll_reading(RangeIndex(0), Ticks(k * 10)) {
            Ok(r) => {
                let _ = session.on_reading(&r);
            }
            Err(nb::Error::WouldBlock) => {}
            Err(nb::Error::Other(_)) => {
                let _ = session.fault(Fault::Sensor);
            }
        }
        if session.phase().is_terminal() {
            break;
        }
    }
    let phase = session.phase();
    drop(session);
    let on = *enable_level.borrow();
    (End::Phase(phase), on, calls.get())
}

#[test]
fn every_injected_failure_ends_safe() {
    let (clean, _, total) = run(u32::MAX);
    assert_eq!(clean, End::Phase(Phase::Overexposed));
    assert!(
        total > 50,
        "the representative session makes {total} fallible calls"
    );
    for k in 0..total {
        let (end, enable_on, _) = run(k);
        assert!(!enable_on, "call {k}: enable output left active ({end:?})");
        match end {
            End::NotBuilt => assert!(
                k < 2,
                "call {k}: only the constructor's writes can stop the build"
            ),
            End::Phase(Phase::Faulted(_) | Phase::Overexposed) => {}
            End::Phase(p) => panic!("call {k}: ended in {p:?}"),
        }
    }
}
