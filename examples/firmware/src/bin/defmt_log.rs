//! A short curing session that logs through defmt (global logger: `defmt-semihosting`),
//! using the library's `defmt` feature (derived `defmt::Format` on `Reading`, `Phase`,
//! `Outcome`, `Progress`, …). Decode with `defmt-print -e <this ELF>` from QEMU's output.
//!
//! All output, checks included, goes through defmt: plain-text semihosting prints would
//! corrupt the binary defmt stream. Exit status: semihosting success / failure.

#![no_std]
#![no_main]

use cortex_m_rt::entry;
use defmt_semihosting as _;
use panic_semihosting as _;
use photon_ledger::prelude::*;
use photon_ledger_firmware::{
    curing_config, exit, init_session, stack, units_of_mj_per_cm2, DemoSession, Lamp, PinState,
    Reference, SAMPLE_TICKS,
};

static ENABLE: PinState = PinState::new();
static ALARM: PinState = PinState::new();

const TARGET: f64 = 5.0; // mJ/cm²

#[entry]
fn main() -> ! {
    stack::paint();
    let Some(slot) = cortex_m::singleton!(: Option<DemoSession> = None) else {
        exit(false)
    };
    init_session(slot, curing_config(TARGET, 1.0), &ENABLE, &ALARM);
    let Some(session) = slot.as_mut() else {
        defmt::error!("session configuration rejected");
        exit(false)
    };
    defmt::info!("session ready, phase {}", session.phase());
    let _ = session.start();
    let mut lamp = Lamp::new(2000, 10, true);
    let mut reference = Reference::default();
    let x_target = units_of_mj_per_cm2(TARGET);
    let mut expected_stop = None;
    let mut stop = None;
    let mut t = 0u32;
    for n in 0..500u32 {
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
        match session.on_reading(&r) {
            Ok(Outcome::Integrated { before, after, .. }) if before != after => {
                defmt::info!("sample {=u32}: {} -> {} on {}", n, before, after, r);
                stop = Some(n);
            }
            Ok(o) => {
                if n % 16 == 0 {
                    defmt::debug!("sample {=u32}: {}", n, o);
                }
            }
            Err(e) => {
                defmt::error!("output error {}", e);
                exit(false)
            }
        }
        if stop.is_some_and(|s| n >= s + 10) {
            break;
        }
        t = t.wrapping_add(SAMPLE_TICKS);
    }
    let p = session.progress();
    defmt::info!("progress {}", p);
    let raw = session.integrator().raw_total(RangeIndex(0));
    let ok_integral = raw == i128::from(reference.sum);
    let ok_stop = stop.is_some() && stop == expected_stop;
    let ok_pins = !ENABLE.is_high() && ENABLE.falls() == 1 && !ALARM.is_high();
    defmt::info!(
        "exact integral {=i64} (reference {=i64}): {=bool}",
        raw as i64,
        reference.sum,
        ok_integral
    );
    defmt::info!(
        "stop at sample {} (expected {}): {=bool}",
        stop,
        expected_stop,
        ok_stop
    );
    defmt::info!("enable low after one fall, alarm low: {=bool}", ok_pins);
    defmt::info!("FIGURE stack_bytes {=usize}", stack::high_water());
    let ok = ok_integral && ok_stop && ok_pins;
    if ok {
        defmt::info!("defmt_log: 3 passed, 0 failed");
    } else {
        defmt::error!("defmt_log: FAILED");
    }
    exit(ok)
}
