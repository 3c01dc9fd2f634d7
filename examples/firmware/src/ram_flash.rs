// A RAM-backed NOR flash (4 sectors of 1 KiB, write size 8, clear-bits-only programming),
// shared by the binaries that run the journal (included with `#[path]`, like
// `nopanic/common.rs`, so it brings no panic path of its own).

use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};

/// The flash error: an access outside the 4 KiB.
#[derive(Debug)]
pub struct E;
impl NorFlashError for E {
    fn kind(&self) -> NorFlashErrorKind {
        NorFlashErrorKind::Other
    }
}
/// The flash: 4 KiB of RAM, erased to 0xFF, programmed by clearing bits.
pub struct Ram {
    pub d: [u8; 4096],
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
