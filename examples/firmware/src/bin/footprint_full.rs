//! The complete curing-controller firmware for the flash figure: everything in `footprint`
//! (simulated ADC, `Meter`/`Session`/`Integrator`, pins, dose read-out) plus the session
//! journal on a RAM-backed NOR flash (a checkpoint record every 50 samples, the end record)
//! and the CSV export of the journal into a counting sink. Exit status: semihosting success
//! when the run ends at the target with the exact integral and the journal holds every
//! record written. Prints `FIGURE stack_bytes` (the painted-stack high-water mark, budgeted
//! with the other examples' in `budgets.toml`); the 4 KiB flash image is a static, not on the
//! stack.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
use embedded_storage::nor_flash::NorFlash;
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::record::{
    Body, Checkpoint, SessionId, StoredExposure, StoredIrradiance,
};
use photon_ledger::journal::{Journal, JournalConfig, Retention};
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

#[path = "../ram_flash.rs"]
mod ram_flash;
use ram_flash::Ram;

struct Sink(u32);
impl core::fmt::Write for Sink {
    fn write_str(&mut self, s: &str) -> core::fmt::Result {
        self.0 = self.0.wrapping_add(s.len() as u32);
        Ok(())
    }
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
    let Ok(cfg) = JournalConfig::try_new::<Ram>(0, 4, Retention::Ring) else {
        exit(false)
    };
    // The flash image lives in a zero-initialised static (.bss), erased here: neither the
    // stack nor the flash image of the firmware carries the 4 KiB.
    let Some(flash) = cortex_m::singleton!(: Ram = Ram { d: [0; 4096] }) else {
        exit(false)
    };
    if flash.erase(0, 4096).is_err() {
        exit(false)
    }
    let Ok(mut journal) = Journal::format(flash, cfg) else {
        exit(false)
    };
    let mut written = 0u32;
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
        if n % 50 == 0 {
            let h = session.progress().exposure.j_per_m2();
            let stored = StoredExposure::from_uj_per_m2((h * 1e6) as u64);
            let body = Body::Checkpoint(Checkpoint {
                session: SessionId(1),
                at: Ticks(t),
                delivered: stored,
                bound: stored,
                min: StoredIrradiance::ZERO,
                mean: StoredIrradiance::ZERO,
                max: StoredIrradiance::ZERO,
            });
            if journal.append(&body).is_err() || journal.maintain().is_err() {
                exit(false);
            }
            written += 1;
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
    let mut sink = Sink(0);
    let exported = export_csv(&mut journal, &mut sink, true).unwrap_or(0);
    let ok = stop.is_some()
        && stop == expected_stop
        && session.integrator().raw_total(RangeIndex(0)) == i128::from(reference.sum)
        && progress.fraction >= 1.0
        && !ENABLE.is_high()
        && ENABLE.falls() == 1
        && !ALARM.is_high()
        && written > 0
        && exported >= written
        && sink.0 > 0;
    let used = stack::high_water();
    hprintln!("FIGURE stack_bytes {}", used);
    exit(ok && used < stack::available())
}
