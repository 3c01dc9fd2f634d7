//! No-panic link check, API group "journal" (record format, NOR flash journal, CSV export).
//! See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::{Journal, JournalConfig, Retention};
use photon_ledger::reading::Ticks;
use photon_ledger::record::{
    Body, Checkpoint, Record, SessionId, StoredExposure, StoredIrradiance, MAX_RECORD_LEN,
};

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

/// A RAM-backed NOR flash (4 sectors of 1 KiB) with the clear-bits-only program rule.
#[derive(Debug)]
struct E;
impl NorFlashError for E {
    fn kind(&self) -> NorFlashErrorKind {
        NorFlashErrorKind::Other
    }
}
struct Ram {
    d: [u8; 4096],
}
impl ErrorType for Ram {
    type Error = E;
}
impl ReadNorFlash for Ram {
    const READ_SIZE: usize = 4;
    fn read(&mut self, o: u32, b: &mut [u8]) -> Result<(), E> {
        let o = o as usize;
        let s = self.d.get(o..o.checked_add(b.len()).ok_or(E)?).ok_or(E)?;
        for (x, y) in b.iter_mut().zip(s) {
            *x = *y;
        }
        Ok(())
    }
    fn capacity(&self) -> usize {
        4096
    }
}
impl NorFlash for Ram {
    const WRITE_SIZE: usize = 8;
    const ERASE_SIZE: usize = 1024;
    fn erase(&mut self, f: u32, t: u32) -> Result<(), E> {
        for b in self.d.get_mut(f as usize..t as usize).ok_or(E)? {
            *b = 0xFF;
        }
        Ok(())
    }
    fn write(&mut self, o: u32, b: &[u8]) -> Result<(), E> {
        let o = o as usize;
        let s = self
            .d
            .get_mut(o..o.checked_add(b.len()).ok_or(E)?)
            .ok_or(E)?;
        for (x, y) in s.iter_mut().zip(b) {
            *x &= *y;
        }
        Ok(())
    }
}
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
