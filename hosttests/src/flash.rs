//! A simulated NOR flash that can lose power at any byte.
//!
//! Rules it enforces (those of real NOR flash, made strict so a journal bug shows up as an
//! error instead of silent corruption):
//!
//! - erase sets a whole `E`-byte sector to `0xFF`;
//! - program only clears bits (`new = old & data`), in whole `W`-byte words at `W`-aligned
//!   offsets; programming a word twice without an erase is [`SimError::WordRewritten`], and
//!   programming a word that does not read erased is [`SimError::NotErased`] (nothing is
//!   changed in either case);
//! - reads are `R`-aligned.
//!
//! Power cuts: [`SimFlash::cut_after`] gives the flash a budget of *steps* (one step per
//! programmed byte, one per erase). The operation that needs a step beyond the budget is torn
//! and fails with [`SimError::PowerCut`], and every later operation fails too until
//! [`SimFlash::power_on`]:
//!
//! - a torn program has programmed the bytes before the cut fully, the byte at the cut
//!   partially (a pseudo-random subset of its bits cleared), and nothing after it;
//! - a torn erase leaves the sector partly erased: a pseudo-random part (from the start or
//!   from the end) reads `0xFF`, a band after it is partially erased (random bits set), and
//!   the rest keeps its old content.
//!
//! A budget that runs out exactly at the end of an operation lets that operation complete and
//! fails the next one (the cut falls just after it). [`SimFlash::fail_after_ops`] injects a
//! plain driver error (no power loss) into a chosen later operation.
//!
//! Counters: erases and programmed bytes per sector, and the number of each operation.

use embedded_storage::nor_flash::{
    check_erase, check_read, check_write, ErrorType, NorFlash, NorFlashError, NorFlashErrorKind,
    ReadNorFlash,
};

/// Errors of the simulated flash.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SimError {
    /// Offset or length not aligned.
    NotAligned,
    /// Outside the flash.
    OutOfBounds,
    /// A word was programmed twice without an erase in between (at this byte offset).
    WordRewritten {
        /// Byte offset of the word.
        offset: u32,
    },
    /// A word to be programmed does not read erased (at this byte offset).
    NotErased {
        /// Byte offset of the first non-erased byte.
        offset: u32,
    },
    /// The power was cut during or before this operation.
    PowerCut,
    /// An error injected by the test with [`SimFlash::fail_after_ops`].
    Injected,
}

impl NorFlashError for SimError {
    fn kind(&self) -> NorFlashErrorKind {
        match self {
            Self::NotAligned => NorFlashErrorKind::NotAligned,
            Self::OutOfBounds => NorFlashErrorKind::OutOfBounds,
            _ => NorFlashErrorKind::Other,
        }
    }
}

/// A NOR flash of `SECTORS` sectors with read size `R`, write size `W`, erase size `E`.
#[derive(Debug, Clone)]
pub struct SimFlash<const R: usize, const W: usize, const E: usize> {
    data: Vec<u8>,
    /// Per word: programmed since the last erase (or of unknown state).
    written: Vec<bool>,
    erases: Vec<u32>,
    programmed: Vec<u64>,
    reads: u64,
    writes: u64,
    erase_ops: u64,
    fuel: Option<u64>,
    /// The budget ran out exactly at the end of an operation: the next one fails.
    spent: bool,
    dead: bool,
    fail_at: Option<u64>,
    rng: u64,
    strict: bool,
    /// Per word: left reading erased by a torn program (may be programmed again unless strict).
    torn_blank: Vec<bool>,
    reprogrammed_after_tear: u64,
}

impl<const R: usize, const W: usize, const E: usize> SimFlash<R, W, E> {
    /// An erased flash of `sectors` sectors.
    #[must_use]
    pub fn new(sectors: usize) -> Self {
        Self::from_image(vec![0xFF; sectors * E])
    }

    /// A flash holding `image` (its length a multiple of `E`). Words that do not read erased
    /// count as programmed.
    #[must_use]
    pub fn from_image(image: Vec<u8>) -> Self {
        assert!(image.len().is_multiple_of(E) && E.is_multiple_of(W) && E.is_multiple_of(R));
        let sectors = image.len() / E;
        let written = image
            .chunks(W)
            .map(|w| w.iter().any(|&b| b != 0xFF))
            .collect();
        Self {
            data: image,
            written,
            erases: vec![0; sectors],
            programmed: vec![0; sectors],
            reads: 0,
            writes: 0,
            erase_ops: 0,
            fuel: None,
            spent: false,
            dead: false,
            fail_at: None,
            rng: 0x9E37_79B9_7F4A_7C15,
            strict: false,
            torn_blank: vec![false; sectors * E / W],
            reprogrammed_after_tear: 0,
        }
    }

    /// The raw content.
    #[must_use]
    pub fn image(&self) -> &[u8] {
        &self.data
    }

    /// Number of sectors.
    #[must_use]
    pub fn sectors(&self) -> usize {
        self.data.len() / E
    }

    /// Cut the power after `steps` more steps (bytes programmed or erases).
    pub fn cut_after(&mut self, steps: u64) {
        self.fuel = Some(steps);
        self.spent = false;
    }

    /// Steps left before the scheduled cut, if one is scheduled.
    #[must_use]
    pub fn fuel(&self) -> Option<u64> {
        self.fuel
    }

    /// Whether the power is cut.
    #[must_use]
    pub fn is_dead(&self) -> bool {
        self.dead
    }

    /// Restore power (after a cut): no cut scheduled, operations work again.
    pub fn power_on(&mut self) {
        self.dead = false;
        self.spent = false;
        self.fuel = None;
    }

    /// Seed the pseudo-random choice of torn bits and torn-erase extent.
    pub fn seed(&mut self, seed: u64) {
        self.rng = seed | 1;
    }

    /// Make the operation `n` operations from now (0 = the next one) fail with
    /// [`SimError::Injected`], without side effects.
    pub fn fail_after_ops(&mut self, n: u64) {
        self.fail_at = Some(n);
    }

    /// Write-once words even after a torn program (flash with ECC): a word whose program was
    /// interrupted is locked until erased, even if it still reads erased. Off by default: then
    /// such a word may be programmed again (plain NOR, where programming cells that read 1 is
    /// allowed) and [`SimFlash::reprogrammed_after_tear`] counts how often that happened.
    pub fn set_strict(&mut self, strict: bool) {
        self.strict = strict;
    }

    /// Words programmed again after a torn program had left them reading erased.
    #[must_use]
    pub fn reprogrammed_after_tear(&self) -> u64 {
        self.reprogrammed_after_tear
    }

    /// Cancel an error injected with [`SimFlash::fail_after_ops`] that has not fired.
    pub fn cancel_injection(&mut self) {
        self.fail_at = None;
    }

    /// Erases per sector so far.
    #[must_use]
    pub fn erase_counts(&self) -> &[u32] {
        &self.erases
    }

    /// Bytes programmed per sector so far.
    #[must_use]
    pub fn programmed_bytes(&self) -> &[u64] {
        &self.programmed
    }

    /// Number of read, write and erase operations so far.
    #[must_use]
    pub fn op_counts(&self) -> (u64, u64, u64) {
        (self.reads, self.writes, self.erase_ops)
    }

    fn next_rand(&mut self) -> u64 {
        // xorshift64
        let mut x = self.rng;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.rng = x;
        x
    }

    /// Common gate of every operation: power, injected errors.
    fn gate(&mut self) -> Result<(), SimError> {
        if self.dead {
            return Err(SimError::PowerCut);
        }
        if let Some(n) = self.fail_at {
            if n == 0 {
                self.fail_at = None;
                return Err(SimError::Injected);
            }
            self.fail_at = Some(n - 1);
        }
        if self.spent {
            // The budget ran out exactly at the end of the previous operation.
            self.dead = true;
            return Err(SimError::PowerCut);
        }
        Ok(())
    }

    fn spend(&mut self) {
        if let Some(f) = self.fuel.as_mut() {
            *f -= 1;
            if *f == 0 {
                self.spent = true;
            }
        }
    }
}

impl<const R: usize, const W: usize, const E: usize> ErrorType for SimFlash<R, W, E> {
    type Error = SimError;
}

fn map_kind(k: NorFlashErrorKind) -> SimError {
    match k {
        NorFlashErrorKind::NotAligned => SimError::NotAligned,
        _ => SimError::OutOfBounds,
    }
}

impl<const R: usize, const W: usize, const E: usize> ReadNorFlash for SimFlash<R, W, E> {
    const READ_SIZE: usize = R;

    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), SimError> {
        check_read(self, offset, bytes.len()).map_err(map_kind)?;
        self.gate()?;
        self.reads += 1;
        let o = offset as usize;
        bytes.copy_from_slice(&self.data[o..o + bytes.len()]);
        Ok(())
    }

    fn capacity(&self) -> usize {
        self.data.len()
    }
}

impl<const R: usize, const W: usize, const E: usize> NorFlash for SimFlash<R, W, E> {
    const WRITE_SIZE: usize = W;
    const ERASE_SIZE: usize = E;

    fn erase(&mut self, from: u32, to: u32) -> Result<(), SimError> {
        check_erase(self, from, to).map_err(map_kind)?;
        self.gate()?;
        for s in (from as usize / E)..(to as usize / E) {
            self.erase_ops += 1;
            self.erases[s] += 1;
            let base = s * E;
            if self.fuel == Some(0) {
                // Torn erase.
                let k = (self.next_rand() % E as u64) as usize;
                let band = (self.next_rand() % 64) as usize;
                let from_end = self.next_rand() & 1 == 1;
                for i in 0..E {
                    let pos = if from_end { E - 1 - i } else { i };
                    let b = &mut self.data[base + pos];
                    if i < k {
                        *b = 0xFF;
                    } else if i < k + band {
                        *b |= self.rng as u8 | 0x11;
                        self.rng = self.rng.rotate_left(7);
                    }
                }
                for (wi, w) in self.data[base..base + E].chunks(W).enumerate() {
                    self.written[base / W + wi] = w.iter().any(|&b| b != 0xFF);
                    self.torn_blank[base / W + wi] = false;
                }
                self.dead = true;
                return Err(SimError::PowerCut);
            }
            self.data[base..base + E].fill(0xFF);
            self.written[base / W..(base + E) / W].fill(false);
            self.torn_blank[base / W..(base + E) / W].fill(false);
            self.spend();
        }
        Ok(())
    }

    fn write(&mut self, offset: u32, bytes: &[u8]) -> Result<(), SimError> {
        check_write(self, offset, bytes.len()).map_err(map_kind)?;
        self.gate()?;
        self.writes += 1;
        let o = offset as usize;
        for w in (o / W)..((o + bytes.len()) / W) {
            if self.written[w] {
                return Err(SimError::WordRewritten {
                    offset: (w * W) as u32,
                });
            }
        }
        if let Some(i) = self.data[o..o + bytes.len()]
            .iter()
            .position(|&b| b != 0xFF)
        {
            return Err(SimError::NotErased {
                offset: (o + i) as u32,
            });
        }
        for (i, &b) in bytes.iter().enumerate() {
            let at = o + i;
            if self.fuel == Some(0) {
                // Torn: this byte is partly programmed (some of its zero bits not yet
                // cleared), nothing after it.
                let keep = self.next_rand() as u8;
                self.data[at] &= b | keep;
                self.written[at / W] = true;
                self.programmed[at / E] += 1;
                let wb = at / W * W;
                if !self.strict && self.data[wb..wb + W].iter().all(|&x| x == 0xFF) {
                    // Torn before any visible change: plain NOR may program it again.
                    self.written[at / W] = false;
                    self.torn_blank[at / W] = true;
                }
                self.dead = true;
                return Err(SimError::PowerCut);
            }
            self.data[at] &= b;
            if self.torn_blank[at / W] {
                self.torn_blank[at / W] = false;
                self.reprogrammed_after_tear += 1;
            }
            self.written[at / W] = true;
            self.programmed[at / E] += 1;
            self.spend();
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    type F = SimFlash<1, 4, 256>;

    #[test]
    fn program_clears_bits_once_and_erase_restores() {
        let mut f = F::new(2);
        f.write(0, &[0x0F, 0xF0, 0x00, 0xAA]).unwrap();
        assert_eq!(&f.image()[..4], &[0x0F, 0xF0, 0x00, 0xAA]);
        assert_eq!(
            f.write(0, &[0; 4]),
            Err(SimError::WordRewritten { offset: 0 })
        );
        assert_eq!(f.write(2, &[0; 4]), Err(SimError::NotAligned));
        f.erase(0, 256).unwrap();
        assert!(f.image()[..256].iter().all(|&b| b == 0xFF));
        f.write(0, &[1, 2, 3, 4]).unwrap();
        assert_eq!(f.erase_counts(), &[1, 0]);
        assert_eq!(f.programmed_bytes(), &[8, 0]);
    }

    #[test]
    fn torn_program_and_dead_until_power_on() {
        let mut f = F::new(1);
        f.cut_after(5);
        assert_eq!(f.write(0, &[0; 8]), Err(SimError::PowerCut));
        assert_eq!(&f.image()[..5], &[0; 5]);
        assert!(f.image()[6..8].iter().all(|&b| b == 0xFF));
        let mut b = [0u8; 1];
        assert_eq!(f.read(0, &mut b), Err(SimError::PowerCut));
        f.power_on();
        f.read(0, &mut b).unwrap();
    }

    #[test]
    fn cut_exactly_after_an_operation_fails_the_next() {
        let mut f = F::new(1);
        f.cut_after(4);
        f.write(0, &[0; 4]).unwrap();
        let mut b = [0u8; 1];
        assert_eq!(f.read(0, &mut b), Err(SimError::PowerCut));
    }

    #[test]
    fn torn_erase_leaves_a_partly_erased_sector() {
        let mut f = F::new(1);
        f.write(0, &[0; 256]).unwrap();
        f.cut_after(0);
        assert_eq!(f.erase(0, 256), Err(SimError::PowerCut));
        f.power_on();
        let erased = f.image().iter().filter(|&&b| b == 0xFF).count();
        assert!(erased < 256, "a torn erase must not look complete");
        assert_eq!(f.erase_counts(), &[1]);
    }

    #[test]
    fn injected_error_has_no_side_effect() {
        let mut f = F::new(1);
        f.fail_after_ops(1);
        f.write(0, &[0; 4]).unwrap();
        assert_eq!(f.write(4, &[0; 4]), Err(SimError::Injected));
        assert!(f.image()[4..8].iter().all(|&b| b == 0xFF));
        f.write(4, &[0; 4]).unwrap();
    }
}
