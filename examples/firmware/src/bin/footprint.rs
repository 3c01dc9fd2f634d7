//! The pipeline + controller alone, for the flash and RAM figures: the simulated ADC, the
//! real `Meter`/`Session`/`Integrator`, the pins, one read-out of the dose, and a check of
//! the result — no text output (no `core::fmt`), a minimal panic handler. Exit status:
//! semihosting success when the run ends at the target with the exact integral.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::prelude::*;
use photon_ledger_firmware::{
    curing_config, exit, init_session, stack, units_of_mj_per_cm2, DemoSession, Lamp, PinState,
    Reference, SAMPLE_TICKS,
};

static ENABLE: PinState = PinState::new();
static ALARM: PinState = PinState::new();

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    exit(false)
}

#[entry]
fn main() -> ! {
    stack::paint();
    let Some(slot) = cortex_m::singleton!(: Option<DemoSession> = None) else {
        exit(false)
    };
    init_session(slot, curing_config(20.0, 2.0), &ENABLE, &ALARM);
    let Some(session) = slot.as_mut() else {
        exit(false)
    };
    let _ = session.start();
    let mut lamp = Lamp::new(2000, 25, true);
    let mut reference = Reference::default();
    let x_target = units_of_mj_per_cm2(20.0);
    let mut expected_stop = None;
    let mut stop = None;
    let mut t = 0u32;
    for n in 0..1_000u32 {
        let code = lamp.next_code(ENABLE.is_high());
        reference.add(code, t);
        if expected_stop.is_none() && reference.sum as f64 >= x_target {
            expected_stop = Some(n);
        }
        let r = Reading {
            code,
            range: RangeIndex(0),
            at: Ticks(t),
        };
        if session.on_reading(&r).is_err() {
            exit(false);
        }
        if stop.is_none() && session.phase() == Phase::TargetMet {
            stop = Some(n);
        }
        if stop.is_some_and(|s| n >= s + 20) {
            break;
        }
        t = t.wrapping_add(SAMPLE_TICKS);
    }
    let progress = black_box(session.progress());
    let ok = stop.is_some()
        && stop == expected_stop
        && session.integrator().raw_total(RangeIndex(0)) == i128::from(reference.sum)
        && progress.fraction >= 1.0
        && !ENABLE.is_high()
        && ENABLE.falls() == 1
        && !ALARM.is_high();
    black_box(stack::high_water());
    exit(ok)
}
