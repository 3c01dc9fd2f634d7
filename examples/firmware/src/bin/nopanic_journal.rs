//! No-panic link check, API group "journal" (record format, NOR flash journal, CSV export).
//! See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::acquire::reading::Ticks;
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::record::{
    Body, Checkpoint, Record, SessionId, StoredExposure, StoredIrradiance, MAX_RECORD_LEN,
};
use photon_ledger::journal::{Journal, JournalConfig, Retention};

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

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
    let Ok(cfg) = JournalConfig::try_new::<Ram>(0, black_box(4), Retention::Ring) else {
        done()
    };
    let flash = Ram { d: [0xFF; 4096] };
    let Ok(mut j) = Journal::mount(flash, cfg) else {
        done()
    };
    let n = black_box(7u32);
    for k in 0..black_box(200u32) {
        let body = Body::Checkpoint(Checkpoint {
            session: SessionId(n),
            at: Ticks(k),
            delivered: StoredExposure::from_uj_per_m2(u64::from(k)),
            bound: StoredExposure::from_uj_per_m2(u64::from(k) + 10),
            min: StoredIrradiance::ZERO,
            mean: StoredIrradiance::ZERO,
            max: StoredIrradiance::ZERO,
        });
        if let Err(e) = j.append(&body) {
            show(&e);
        }
        if let Err(e) = j.maintain() {
            show(&e);
        }
    }
    let mut c = 0u32;
    for r in j.records().flatten() {
        c = c.wrapping_add(r.seq);
    }
    black_box(c);
    let mut sink = Sink(0);
    black_box(export_csv(&mut j, &mut sink, true).is_ok());
    black_box(sink.0);
    let mut buf = [0u8; MAX_RECORD_LEN];
    let rec = Record {
        seq: n,
        body: Body::Checkpoint(Checkpoint {
            session: SessionId(n),
            at: Ticks(n),
            delivered: StoredExposure::from_uj_per_m2(1),
            bound: StoredExposure::from_uj_per_m2(2),
            min: StoredIrradiance::ZERO,
            mean: StoredIrradiance::ZERO,
            max: StoredIrradiance::ZERO,
        }),
    };
    if let Ok(len) = rec.emit(&mut buf) {
        black_box(len);
    }
    black_box(Record::parse(black_box(&buf)).is_ok());
    done()
}
