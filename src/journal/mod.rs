//! Journal: the session log on NOR flash that survives a power cut at any byte.
//!
//! The journal appends [records](crate::journal::record) to a ring of erase sectors through the
//! blocking `embedded-storage` 0.3 traits ([`NorFlash`] / [`ReadNorFlash`]). After a reset,
//! [`Journal::mount`] finds the last valid record and the open session, and
//! [`checkpoint`] turns the recovered checkpoint into the dose to resume from — never below
//! the dose delivered, at most `max irradiance × checkpoint interval` above it.
//!
//! # Layout on flash
//!
//! ```text
//!  sector 0            sector 1            sector 2            sector n−1
//! +-------------------+-------------------+-------------------+     +-------------------+
//! | sector header     | sector header     | (erased spare)    | ... | sector header     |
//! | rec | rec | rec   | rec | rec | ...   |                   |     | rec | rec | ...   |
//! | rec | ... | 0xFF  | 0xFF ...          |                   |     | ...               |
//! +-------------------+-------------------+-------------------+     +-------------------+
//!   seq 7 (oldest)      seq 8 (head)        head + 1: released      seq 6 ...
//! ```
//!
//! Each sector starts with a header of [`SECTOR_HEADER_LEN`] bytes, padded to the write size:
//!
//! | bytes | field | meaning |
//! | --- | --- | --- |
//! | `0..2` | magic | [`SECTOR_MAGIC`] (u16 LE) |
//! | `2` | version | format version, as in a record (major << 4 \| minor) |
//! | `3` | reserved | `0x00` |
//! | `4..8` | sector sequence | u32 LE, +1 for each sector opened, starts at 1 |
//! | `8..12` | first record sequence | u32 LE: the sequence number the first record here gets |
//! | `12..16` | CRC | CRC-32/ISO-HDLC of bytes `0..12`, erased-value avoiding |
//!
//! The header layout is frozen for every format version (like the record header), so a
//! sector written by newer firmware is recognised and the mount refuses it
//! ([`JournalError::UnsupportedVersion`]) instead of erasing it.
//!
//! Records follow the header back to back, each padded with `0x00` to a multiple of
//! `WRITE_SIZE`, so every record starts on a write-aligned slot and, in normal operation, no
//! flash word is programmed twice between erases (the one exception after a cut is governed
//! by [`WordRule`], below).
//!
//! # The state of a sector
//!
//! The state is derived, never a word rewritten in place (that would program a word twice):
//!
//! - **erased header** (all `0xFF`): free, but *not trusted to be blank*: it is blank-checked
//!   over the whole sector, and erased again if anything is not `0xFF`, before it is used;
//! - **valid header** (magic, CRC, known major version): in use, ordered by sector sequence;
//! - anything else (a torn header write, an interrupted erase, garbage): **untrusted**, never
//!   read for records, erased before use;
//! - the sector right after the head in ring order is **released**: it is the next to be
//!   recycled, so whatever it holds — old records, or the remains of an interrupted erase —
//!   is never trusted, and it is always blank-checked and re-erased before use.
//!
//! # Appending
//!
//! [`Journal::append`] writes one record into the head sector at the next write-aligned slot:
//! it first **verifies that the slot reads erased**, programs the padded record in one
//! `write`, reads it back and compares. Only then does it return `Ok` (the record is
//! *acknowledged*). If the blank check fails, a write fails, or the read-back differs, the
//! head sector is **sealed**: nothing is ever appended after bytes that may be torn; the next
//! record goes to the next sector.
//!
//! When the next record does not fit, the journal opens the next sector in the ring: it
//! seals the old head, programs the sector header, then restates the open session — its start
//! record and latest checkpoint — in **one** record ([`Body::Restate`]), so the
//! newest sector that holds any record is always enough to recover an open session. The old
//! head is sealed *before* the header is programmed: the header names the next record number
//! as its first, so even if programming or reading back the header fails, no later record
//! lands in an older sector behind it. A sector
//! whose header was programmed but which holds no valid record yet (a cut during its first
//! record) is erased and reopened **in place**: repeated cuts never move the ring forward and
//! never release older sectors. After a mount, a head without records while a session is open
//! gets its restatement before the next record.
//!
//! A cut during that in-place erase steps the head back one sector, and the retained window
//! (below) with it: the sector that was the spare is retained again. That is why the spare is
//! left alone while the head holds no record (see [`Journal::maintain`]): it then still holds
//! whole sectors' worth of the oldest records, never the remains of an interrupted erase.
//!
//! Retention: the head and the `n − 2` sectors before it are kept. Without failures that is at
//! least `(n − 2) · ⌊(ERASE_SIZE − header − restatement) / s⌋` of the most recent records of
//! `s` padded bytes ([`Journal::min_retained_records`]); each failed or interrupted program
//! seals its sector early and so can shorten that window by up to one sector of records (the
//! open session is never lost: every newer sector restates it).
//!
//! After a program is cut before it changed any visible bit, the slot reads erased although
//! it was touched. With [`WordRule::ReprogramErased`] (plain NOR, default) the journal may
//! program that slot again; with [`WordRule::WriteOnce`] (flash with ECC) it never does: it
//! appends into a freshly erased sector after every mount.
//!
//! # Recycling and when to erase
//!
//! The ring keeps one **spare** sector erased ahead of the head. Opening a sector therefore
//! only programs (no erase). Erasing the next spare — the recycling of the oldest sector — is
//! done by [`Journal::maintain`], which the integrator calls **at a checkpoint boundary**: right
//! after a checkpoint was acknowledged, when the next one is a whole interval away (or in idle
//! time, with the source off). It does nothing when the spare is ready, or while the head holds
//! no record yet (the next record then goes into the head or reopens it in place, and the
//! head could still step back; see above), so calling it after every checkpoint is cheap. An
//! erase (typically 20–400 ms on NOR flash) must fit in the time left before the next
//! checkpoint is due; nothing on the per-sample path touches flash.
//! If `maintain` was never called, the erase happens inside the `append` that needs the new
//! sector (still a record boundary, never a sample) — documented fallback, not the plan.
//!
//! With [`Retention::Ring`] (the default) the oldest sector is recycled when the ring is full:
//! its records are released as soon as the head enters the sector before it. With
//! [`Retention::KeepAll`] the journal never recycles a sector that holds records and returns
//! [`JournalError::Full`] instead (a per-part record that must not be lost).
//!
//! Erases are strictly round-robin, so without power cuts the erase counts of all sectors stay
//! within one of each other (a cut can add an erase to one sector: a sector reopened in place,
//! a re-erased spare); [`Journal::lifetime_records`] estimates how many records fit in the
//! flash's rated erase cycles.
//!
//! # Mount and recovery
//!
//! [`Journal::mount`] never writes. It reads every sector header (`n` short reads), takes the
//! valid sector with the highest sequence as the head, and scans the head sector record by
//! record. For the open session it walks back to an older sector only while the newer ones
//! hold no record (a cut right after a sector header). The open session is the last start
//! (or restatement) with no end record after it; its dose is the bound of the last checkpoint
//! of that session ([`OpenSession::dose_bound`]). Every record number is used once, also by a
//! program that failed (its record may be on flash). The next number is one past the newest
//! record; for a head without records, the first record its header names, but never below
//! one past the newest record before it.
//!
//! Any flash content mounts or returns a named error: garbage and foreign images mount as an
//! empty journal (every sector untrusted; see [`MountReport`]), a sector of a newer major
//! format is [`JournalError::UnsupportedVersion`].
//!
//! # What is not covered
//!
//! A torn program leaves bits whose value is undefined; the CRC-32 rejects a torn record
//! except with probability about 2⁻³² per cut. Flash that reads back correctly and later
//! loses bits (retention, disturb) is detected by the CRC, and the record is then lost.

pub mod checkpoint;
pub mod export;
pub mod record;

mod append;
mod config;
mod error;
mod geometry;
mod mount;
mod recover;
mod scan;

use embedded_storage::nor_flash::NorFlash;
#[cfg(doc)]
use embedded_storage::nor_flash::ReadNorFlash;

use geometry::Geometry;
#[cfg(doc)]
use record::Body;
use record::{CRC_LEN, HEADER_LEN};

pub use config::{ConfigError, JournalConfig, Retention, WordRule};
pub use error::{JournalError, MountError};
pub use geometry::{sector_state, SectorState};
pub use mount::MountReport;
pub use scan::{Location, Records, Scan, ScanItem, ScanStop};

/// Magic of a sector header (u16 LE; bytes `0x50 0x4A`).
pub const SECTOR_MAGIC: u16 = 0x4A50;
/// Length of a sector header before padding, bytes.
pub const SECTOR_HEADER_LEN: usize = 16;
/// Largest supported `WRITE_SIZE`, bytes.
pub const MAX_WRITE_SIZE: usize = 32;
/// Largest supported `READ_SIZE`, bytes.
pub const MAX_READ_SIZE: usize = 32;
/// Fewest sectors in a ring: a head, one retained sector before it, and the spare.
pub const MIN_SECTORS: u32 = 3;

/// Named byte ranges of the sector header.
pub mod sector_field {
    use core::ops::Range;
    /// Magic, u16 LE.
    pub const MAGIC: Range<usize> = 0..2;
    /// Format version byte.
    pub const VERSION: usize = 2;
    /// Reserved, 0.
    pub const RESERVED: usize = 3;
    /// Sector sequence, u32 LE.
    pub const SEQUENCE: Range<usize> = 4..8;
    /// Sequence number of the first record in the sector, u32 LE.
    pub const FIRST_RECORD: Range<usize> = 8..12;
    /// CRC-32 of bytes 0..12, u32 LE.
    pub const CRC: Range<usize> = 12..16;
}

/// Encoded length of a restatement record, bytes.
const RESTATE_LEN: usize = HEADER_LEN + record::payload::restate::LEN + CRC_LEN;

/// Scratch buffer size for reads and record encoding, bytes.
const BUF: usize = 128;

pub use crate::journal::record::OpenSession;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Head {
    index: u32,
    seq: u32,
    /// Offset of the next free slot within the sector.
    offset: u32,
    /// No append into this sector any more.
    sealed: bool,
    /// Valid records in the sector (of any kind).
    records: u32,
}

/// The session journal. See the [module documentation](self).
#[derive(Debug, Clone)]
pub struct Journal<F> {
    flash: F,
    config: JournalConfig,
    geometry: Geometry,
    head: Option<Head>,
    next_seq: u32,
    spare_ready: Option<u32>,
    open: Option<OpenSession>,
    /// The head sector does not restate the open session yet (a cut fell between its header
    /// and its restatement): restate before the next record.
    carry_pending: bool,
    recovered: Option<OpenSession>,
    report: MountReport,
}

/// Result of [`Journal::maintain`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Maintenance {
    /// Nothing done: the spare sector was already prepared, or it is not needed yet (the
    /// head holds no record, so the next record goes into the head or reopens it in place).
    Idle,
    /// The spare was blank-checked and found blank (reads only).
    Verified,
    /// The spare was erased (and verified).
    Erased,
    /// [`Retention::KeepAll`]: the next sector holds records; the journal is full.
    Full,
}

type Res<T, F> = Result<T, JournalError<<F as embedded_storage::nor_flash::ErrorType>::Error>>;

impl<F: NorFlash> Journal<F> {
    /// Give the flash back.
    pub fn release(self) -> F {
        self.flash
    }

    /// The flash (read-only), for diagnostics.
    pub const fn flash(&self) -> &F {
        &self.flash
    }

    /// Mutable access to the flash, for diagnostics and fault-injection tests. Writing or
    /// erasing the journal's range through it voids every guarantee of this module; remount
    /// afterwards.
    pub fn flash_mut(&mut self) -> &mut F {
        &mut self.flash
    }

    /// The configuration.
    pub const fn config(&self) -> &JournalConfig {
        &self.config
    }

    /// What the mount found.
    pub const fn mount_report(&self) -> &MountReport {
        &self.report
    }

    /// The session that was open when the journal was mounted (start without end), if any.
    pub const fn recovered(&self) -> Option<&OpenSession> {
        self.recovered.as_ref()
    }

    /// The session open now (as far as the journal's records say).
    pub const fn open_session(&self) -> Option<&OpenSession> {
        self.open.as_ref()
    }

    /// The sequence number the next record will get.
    pub const fn next_seq(&self) -> u32 {
        self.next_seq
    }

    /// The fewest most-recent records of `record_len` encoded bytes the ring is guaranteed to
    /// hold (with [`Retention::Ring`]): `(n − 2)` sectors' worth after the header and
    /// restatement, if no program failed and, with [`WordRule::WriteOnce`], no mount sealed a
    /// partly used head.
    pub const fn min_retained_records(&self, record_len: usize) -> u32 {
        let g = &self.geometry;
        (g.sectors - 2).saturating_mul(g.records_per_sector(record_len))
    }

    /// Lifetime estimate: how many records of `record_len` encoded bytes can be appended
    /// before each sector has seen `erase_cycles` erases (the flash's rated endurance, e.g.
    /// 10 000 or 100 000 from its datasheet). Each sector is erased once per ring cycle, and
    /// each ring cycle holds `n · records_per_sector` records.
    ///
    /// Example (checked in the host tests): 4 KiB sectors, 8 of them, write size 4, 50-byte
    /// checkpoints (52 bytes padded), 100 000 cycles: 76 records per sector →
    /// 6.08·10⁷ records ≈ 1.7 years of checkpoints every 0.9 s, continuously.
    pub const fn lifetime_records(&self, record_len: usize, erase_cycles: u32) -> u64 {
        let g = &self.geometry;
        g.sectors as u64 * g.records_per_sector(record_len) as u64 * erase_cycles as u64
    }

    /// Padded flash bytes one record of `record_len` encoded bytes occupies.
    pub const fn slot_len(&self, record_len: usize) -> u32 {
        self.geometry.slot(record_len)
    }

    /// Iterate the retained records oldest first (the journal's restatements included).
    pub fn records(&mut self) -> Records<'_, F> {
        Records {
            scan: Scan::new(self),
        }
    }

    /// Walk the retained sectors oldest first, with where each record is and where and why
    /// each sector's records end (diagnostics and host-side decoding; reads only, exactly the
    /// reads of [`Journal::records`]). The records it yields are those of
    /// [`Journal::records`], plus well-formed records of unknown kinds.
    pub fn scan(&mut self) -> Scan<'_, F> {
        Scan::new(self)
    }

    /// The header state of sector `index` (reads only). See [`sector_state`].
    ///
    /// # Errors
    /// As [`sector_state`].
    pub fn sector_state(&mut self, index: u32) -> Res<SectorState, F> {
        sector_state(&mut self.flash, &self.config, index)
    }

    // ---------------------------------------------------------------------------------
    // internals
    // ---------------------------------------------------------------------------------

    pub(crate) fn next_index(&self) -> u32 {
        self.head.map_or(0, |h| self.geometry.next(h.index))
    }

    /// How many sectors before the head are retained.
    pub(crate) fn max_back(&self) -> u32 {
        match self.config.retention {
            Retention::Ring => self.geometry.sectors - 2,
            Retention::KeepAll => self.geometry.sectors - 1,
        }
    }
}
