//! The journal's NOR flash: a window at the end of the RP2040's QSPI flash, as
//! `embedded-storage` 0.3 [`NorFlash`].
//!
//! rp2040-hal 0.12 has no `NorFlash` for the on-board flash; it exposes the boot ROM's flash
//! routines ([`rom_data`]). This adapter calls them the way the RP2040 datasheet (section
//! 2.8.3, "Bootrom Contents / Flash") lays out: connect the flash, leave execute-in-place
//! (XIP), erase or program, flush the XIP cache, and re-enter XIP through a copy of the
//! second-stage boot loader (so reads are fast again). While XIP is off nothing may run from
//! flash, so that sequence runs from RAM ([`rom_sequence`], placed in `.data`), with the
//! function pointers looked up beforehand, and with interrupts off (a critical section).
//! Core 1 is never started by this firmware, and no DMA touches the flash.
//!
//! Reads go through the XIP window (memory-mapped, `READ_SIZE` 1). Programming clears bits
//! only, so a write of 4 bytes programs its 256-byte flash page with `0xFF` everywhere else:
//! the other bytes of the page are unchanged. `ERASE_SIZE` is the flash's 4 KiB sector.

use embedded_storage::nor_flash::{
    check_erase, check_read, check_write, ErrorType, NorFlash, NorFlashError, NorFlashErrorKind,
    ReadNorFlash,
};
use rp2040_hal::rom_data;

/// Base address of the XIP window (the flash as memory).
const XIP_BASE: u32 = 0x1000_0000;
/// Size of the flash on a Raspberry Pi Pico (W25Q16JV).
pub const FLASH_SIZE: u32 = 2 * 1024 * 1024;
/// Sector (erase unit) of the flash.
const SECTOR: u32 = 4096;
/// Page (program unit of the boot ROM routine) of the flash.
const PAGE: usize = 256;
/// Number of sectors given to the journal: the last 64 KiB (left out of `FLASH` in memory.x).
pub const JOURNAL_SECTORS: u32 = 16;
/// Offset of the journal window from the start of the flash.
pub const JOURNAL_OFFSET: u32 = FLASH_SIZE - JOURNAL_SECTORS * SECTOR;

/// A flash access outside the window or not aligned.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FlashError(NorFlashErrorKind);

impl NorFlashError for FlashError {
    fn kind(&self) -> NorFlashErrorKind {
        self.0
    }
}

/// The journal window of the on-board flash. Only one exists ([`BoardFlash::take`]).
pub struct BoardFlash {
    _private: (),
}

impl BoardFlash {
    /// The window, once; `None` on a second call.
    pub fn take() -> Option<Self> {
        let taken = cortex_m::singleton!(: bool = true);
        taken.map(|_| Self { _private: () })
    }
}

/// The boot ROM's flash routines, looked up while XIP still works.
#[repr(C)]
struct RomFns {
    connect_internal_flash: unsafe extern "C" fn(),
    flash_exit_xip: unsafe extern "C" fn(),
    flash_range_erase: unsafe extern "C" fn(u32, usize, u32, u8),
    flash_range_program: unsafe extern "C" fn(u32, *const u8, usize),
    flash_flush_cache: unsafe extern "C" fn(),
}

/// Erase (`data` null) or program (`data` non-null) `len` bytes at flash offset `addr`, then
/// re-enter XIP through `boot2` (a RAM copy of the second-stage boot loader).
///
/// # Safety
/// Interrupts off, nothing else running from flash; `addr`/`len` sector-aligned for an erase,
/// page-aligned for a program; `data` valid for `len` bytes; `boot2` a RAM copy of the
/// 256-byte boot loader. The function and everything it touches is in RAM: it calls only the
/// ROM routines through the pointers given (checked in the disassembly, see DEVELOPERS.md).
#[inline(never)]
#[link_section = ".data.ram_func"]
unsafe fn rom_sequence(f: &RomFns, addr: u32, data: *const u8, len: u32, boot2: *const u32) {
    (f.connect_internal_flash)();
    (f.flash_exit_xip)();
    if data.is_null() {
        // 64 KiB block erase command where possible (0xD8), else 4 KiB sectors.
        (f.flash_range_erase)(addr, len as usize, 1 << 16, 0xD8);
    } else {
        (f.flash_range_program)(addr, data, len as usize);
    }
    (f.flash_flush_cache)();
    // The boot loader's entry is its first byte; Thumb bit set.
    let enter: unsafe extern "C" fn() = core::mem::transmute((boot2 as usize) | 1);
    enter();
}

/// Run one erase or program of the flash from RAM with interrupts off.
fn flash_op(addr: u32, data: Option<&[u8; PAGE]>, len: u32) {
    let fns = RomFns {
        connect_internal_flash: rom_data::connect_internal_flash::ptr(),
        flash_exit_xip: rom_data::flash_exit_xip::ptr(),
        flash_range_erase: rom_data::flash_range_erase::ptr(),
        flash_range_program: rom_data::flash_range_program::ptr(),
        flash_flush_cache: rom_data::flash_flush_cache::ptr(),
    };
    // The boot loader copied to RAM while XIP still works.
    let mut boot2 = [0u32; 64];
    for (i, w) in boot2.iter_mut().enumerate() {
        // SAFETY: the first 256 bytes of the XIP window, word-aligned, always mapped.
        *w = unsafe { core::ptr::read_volatile((XIP_BASE as *const u32).add(i)) };
    }
    let ptr = data.map_or(core::ptr::null(), |d| d.as_ptr());
    critical_section::with(|_| {
        // SAFETY: interrupts are off, core 1 is not running, no DMA reads the flash; the
        // callers check alignment and bounds; `ptr` and `boot2` live in RAM for the call.
        unsafe { rom_sequence(&fns, addr, ptr, len, boot2.as_ptr()) }
    });
}

impl ErrorType for BoardFlash {
    type Error = FlashError;
}

impl ReadNorFlash for BoardFlash {
    const READ_SIZE: usize = 1;

    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), FlashError> {
        check_read(self, offset, bytes.len()).map_err(FlashError)?;
        let base = XIP_BASE + JOURNAL_OFFSET + offset;
        for (i, b) in (0u32..).zip(bytes.iter_mut()) {
            // SAFETY: inside the journal window of the mapped flash (checked above).
            *b = unsafe { core::ptr::read_volatile((base + i) as *const u8) };
        }
        Ok(())
    }

    fn capacity(&self) -> usize {
        (JOURNAL_SECTORS * SECTOR) as usize
    }
}

impl NorFlash for BoardFlash {
    const WRITE_SIZE: usize = 4;
    const ERASE_SIZE: usize = SECTOR as usize;

    fn erase(&mut self, from: u32, to: u32) -> Result<(), FlashError> {
        check_erase(self, from, to).map_err(FlashError)?;
        if to > from {
            flash_op(JOURNAL_OFFSET + from, None, to - from);
        }
        Ok(())
    }

    fn write(&mut self, offset: u32, bytes: &[u8]) -> Result<(), FlashError> {
        check_write(self, offset, bytes.len()).map_err(FlashError)?;
        let mut done = 0usize;
        while let Some(rest) = bytes.get(done..).filter(|r| !r.is_empty()) {
            let at = JOURNAL_OFFSET + offset + done as u32;
            let page_start = at - at % PAGE as u32;
            let in_page = (at - page_start) as usize;
            let n = rest.len().min(PAGE - in_page);
            // 0xFF programs nothing: only the given bytes change.
            let mut page = [0xFFu8; PAGE];
            if let (Some(dst), Some(src)) = (page.get_mut(in_page..in_page + n), rest.get(..n)) {
                dst.copy_from_slice(src);
            }
            flash_op(page_start, Some(&page), PAGE as u32);
            done += n;
        }
        Ok(())
    }
}
