//! Link-time check: the journal and record code, called from firmware, has no reachable
//! panic path. The panic handler calls a symbol that does not exist, so the release build
//! (thumbv6m-none-eabi, LTO) only links if the optimiser removed every panic.
//!
//! `cargo build --release --target thumbv6m-none-eabi` in this directory.
#![no_std]
#![no_main]
use core::panic::PanicInfo;
use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::{Journal, JournalConfig, Retention};
use photon_ledger::reading::Ticks;
use photon_ledger::record::*;

extern "C" {
    fn a_panic_path_is_linked() -> !;
}
#[panic_handler]
fn panic(_: &PanicInfo) -> ! {
    unsafe { a_panic_path_is_linked() }
}

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

#[cortex_m_rt::entry]
fn main() -> ! {
    let cfg = match JournalConfig::try_new::<Ram>(0, 4, Retention::Ring) {
        Ok(c) => c,
        Err(_) => loop {},
    };
    let flash = Ram { d: [0xFF; 4096] };
    let mut j = match Journal::mount(flash, cfg) {
        Ok(j) => j,
        Err(_) => loop {},
    };
    let n = unsafe { core::ptr::read_volatile(&0u32 as *const u32) };
    let body = Body::Checkpoint(Checkpoint {
        session: SessionId(n),
        at: Ticks(n),
        delivered: StoredExposure::from_uj_per_m2(n as u64),
        bound: StoredExposure::from_uj_per_m2(n as u64),
        min: StoredIrradiance::ZERO,
        mean: StoredIrradiance::ZERO,
        max: StoredIrradiance::ZERO,
    });
    let _ = j.append(&body);
    let _ = j.maintain();
    let mut c = 0u32;
    for r in j.records() {
        if let Ok(r) = r {
            c = c.wrapping_add(r.seq);
        }
    }
    let mut sink = Sink(0);
    let _ = export_csv(&mut j, &mut sink, true);
    let mut buf = [0u8; MAX_RECORD_LEN];
    let _ = Record { seq: n, body }.emit(&mut buf);
    let _ = Record::parse(&buf);
    unsafe { core::ptr::write_volatile(&mut c as *mut u32, c ^ sink.0) };
    loop {}
}
