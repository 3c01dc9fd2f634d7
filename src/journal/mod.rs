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

use embedded_storage::nor_flash::{NorFlash, ReadNorFlash};

use record::{
    Body, Checkpoint, Record, RecordError, RecordView, SessionId, SessionStart, CRC_LEN,
    HEADER_LEN, MAX_RECORD_LEN, VERSION, VERSION_MAJOR,
};

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

/// What to do when the ring is full.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Retention {
    /// Recycle the oldest sector (default).
    #[default]
    Ring,
    /// Never recycle a sector that holds records: [`JournalError::Full`] instead.
    KeepAll,
}

/// What the flash allows after an interrupted program.
///
/// A program cut before it changed any visible bit leaves a word that reads erased. Plain NOR
/// flash lets such a word be programmed again; flash with per-word ECC (many MCU-internal
/// flashes) may not.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WordRule {
    /// A word that reads erased may be programmed, even if an interrupted program touched it
    /// (plain NOR). After a mount the journal appends right after the last record. Default.
    #[default]
    ReprogramErased,
    /// Never program a word twice between erases, not even one that reads erased after an
    /// interrupted program (ECC flash). After every mount the journal appends into a freshly
    /// erased sector, and it erases a spare before use even when it reads blank: one extra
    /// erase and a partly used sector per boot.
    WriteOnce,
}

/// Why a journal configuration does not fit the flash.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ConfigError {
    /// `WRITE_SIZE` is 0 or above [`MAX_WRITE_SIZE`].
    WriteSize,
    /// `READ_SIZE` is 0 or above [`MAX_READ_SIZE`].
    ReadSize,
    /// `ERASE_SIZE` is not a multiple of the write and read sizes, or too small for a header
    /// and three largest records, or above 2³¹.
    EraseSize,
    /// The base address is not a multiple of `ERASE_SIZE`.
    BaseAlignment,
    /// Fewer than [`MIN_SECTORS`] sectors.
    TooFewSectors,
    /// The range does not fit in the flash (or in 32-bit addresses).
    OutOfRange,
}

impl core::fmt::Display for ConfigError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::WriteSize => "flash write size must be 1 to 32 bytes",
            Self::ReadSize => "flash read size must be 1 to 32 bytes",
            Self::EraseSize => {
                "erase size must be a multiple of the write and read sizes and hold a header and three records"
            }
            Self::BaseAlignment => "journal base must be a multiple of the erase size",
            Self::TooFewSectors => "journal needs at least 3 sectors",
            Self::OutOfRange => "journal range does not fit in the flash",
        })
    }
}

impl core::error::Error for ConfigError {}

/// Where the journal lives in the flash, and its retention policy.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct JournalConfig {
    base: u32,
    sectors: u32,
    retention: Retention,
    word_rule: WordRule,
}

impl JournalConfig {
    /// A journal of `sectors` erase sectors from byte address `base`, for flash type `F`.
    ///
    /// Valid: `base` a multiple of `F::ERASE_SIZE`, `sectors` ≥ [`MIN_SECTORS`], the range
    /// inside 32-bit addresses; the flash geometry as in [`ConfigError`]. The flash capacity
    /// is checked at [`Journal::mount`].
    ///
    /// # Errors
    /// [`ConfigError`] naming the first problem.
    pub const fn try_new<F: NorFlash>(
        base: u32,
        sectors: u32,
        retention: Retention,
    ) -> Result<Self, ConfigError> {
        match Geometry::new::<F>(base, sectors) {
            Ok(_) => Ok(Self {
                base,
                sectors,
                retention,
                word_rule: WordRule::ReprogramErased,
            }),
            Err(e) => Err(e),
        }
    }

    /// First byte address.
    #[must_use]
    pub const fn base(&self) -> u32 {
        self.base
    }
    /// Number of sectors.
    #[must_use]
    pub const fn sectors(&self) -> u32 {
        self.sectors
    }
    /// Retention policy.
    #[must_use]
    pub const fn retention(&self) -> Retention {
        self.retention
    }
    /// The same configuration with another [`WordRule`].
    #[must_use]
    pub const fn with_word_rule(mut self, rule: WordRule) -> Self {
        self.word_rule = rule;
        self
    }
    /// The word rule.
    #[must_use]
    pub const fn word_rule(&self) -> WordRule {
        self.word_rule
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Geometry {
    base: u32,
    sectors: u32,
    erase: u32,
    write: u32,
    read: u32,
    /// Padded sector header length.
    header: u32,
}

const fn align_up(v: u32, to: u32) -> u32 {
    if to == 0 {
        return v;
    }
    // Callers keep v ≤ 2³¹ and to ≤ 32; saturating keeps even a misuse panic-free.
    let r = v % to;
    if r == 0 {
        v
    } else {
        // r < to, so the difference is in 1..to.
        v.saturating_add(to.wrapping_sub(r))
    }
}

impl Geometry {
    const fn new<F: NorFlash>(base: u32, sectors: u32) -> Result<Self, ConfigError> {
        let w = F::WRITE_SIZE;
        let r = F::READ_SIZE;
        let e = F::ERASE_SIZE;
        if w == 0 || w > MAX_WRITE_SIZE {
            return Err(ConfigError::WriteSize);
        }
        if r == 0 || r > MAX_READ_SIZE {
            return Err(ConfigError::ReadSize);
        }
        if e == 0 || e > (1 << 31) || !e.is_multiple_of(w) || !e.is_multiple_of(r) {
            return Err(ConfigError::EraseSize);
        }
        // All three are now ≤ 2³¹, so the casts are exact.
        let (w, r, e) = (w as u32, r as u32, e as u32);
        let header = align_up(SECTOR_HEADER_LEN as u32, w);
        let slot = align_up(MAX_RECORD_LEN as u32, w);
        // header ≤ 32 and slot ≤ 64: no overflow.
        if header + 3 * slot > e {
            return Err(ConfigError::EraseSize);
        }
        if !base.is_multiple_of(e) {
            return Err(ConfigError::BaseAlignment);
        }
        if sectors < MIN_SECTORS {
            return Err(ConfigError::TooFewSectors);
        }
        let end = base as u64 + sectors as u64 * e as u64;
        if end > u32::MAX as u64 + 1 {
            return Err(ConfigError::OutOfRange);
        }
        Ok(Self {
            base,
            sectors,
            erase: e,
            write: w,
            read: r,
            header,
        })
    }

    /// Byte address of sector `index` (< sectors): within the validated range.
    const fn sector_addr(&self, index: u32) -> u32 {
        self.base + index * self.erase
    }

    const fn next(&self, index: u32) -> u32 {
        if index + 1 >= self.sectors {
            0
        } else {
            index + 1
        }
    }

    const fn prev(&self, index: u32) -> u32 {
        if index == 0 {
            self.sectors - 1
        } else {
            index - 1
        }
    }

    /// Padded length of a record of `len` encoded bytes (≤ MAX_RECORD_LEN).
    const fn slot(&self, len: usize) -> u32 {
        align_up(len as u32, self.write)
    }

    /// Records of `record_len` encoded bytes that fit a sector after the header and the
    /// restatement of an open session.
    const fn records_per_sector(&self, record_len: usize) -> u32 {
        let slot = self.slot(record_len);
        let carry = self.slot(RESTATE_LEN);
        let room = self.erase.saturating_sub(self.header).saturating_sub(carry);
        match room.checked_div(slot) {
            Some(n) => n,
            None => 0,
        }
    }
}

/// The error of a journal operation, generic over the flash driver's error `E`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum JournalError<E> {
    /// The flash driver failed. After a failed program the head sector is sealed; the record
    /// in flight may or may not be present after the next mount.
    Flash(E),
    /// The configuration does not fit the flash.
    Config(ConfigError),
    /// [`Retention::KeepAll`] and every sector holds records: nothing is appended.
    Full,
    /// A write-aligned slot that should be erased is not, even in a freshly prepared sector
    /// (a driver that does not erase, or memory that does not hold its state).
    Corrupted,
    /// Erasing sector `index` (twice) did not leave it blank: the sector is worn or faulty.
    BadSector {
        /// Index of the sector in the ring.
        index: u32,
    },
    /// The bytes read back after programming differ from the bytes written; the head sector
    /// is sealed and the record is not acknowledged.
    VerifyFailed,
    /// A sector written in a newer major format version: the journal refuses to mount rather
    /// than overwrite it.
    UnsupportedVersion {
        /// The major version found.
        major: u8,
    },
    /// The record or sector sequence number would pass 2³² − 1.
    Exhausted,
}

impl<E> From<E> for JournalError<E> {
    fn from(e: E) -> Self {
        Self::Flash(e)
    }
}

impl<E: core::fmt::Debug> core::fmt::Display for JournalError<E> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Flash(e) => write!(f, "flash error: {e:?}"),
            Self::Config(e) => write!(f, "journal configuration: {e}"),
            Self::Full => f.write_str("journal full (retention keeps every record)"),
            Self::Corrupted => f.write_str("flash slot not erased where it must be"),
            Self::BadSector { index } => write!(f, "sector {index} does not erase"),
            Self::VerifyFailed => f.write_str("read-back after programming differs"),
            Self::UnsupportedVersion { major } => {
                write!(
                    f,
                    "journal written in unsupported format major version {major}"
                )
            }
            Self::Exhausted => f.write_str("sequence numbers exhausted"),
        }
    }
}

impl<E: core::fmt::Debug> core::error::Error for JournalError<E> {}

/// A failed [`Journal::mount`]: the error and the flash, handed back so the caller can retry
/// or use it otherwise.
pub struct MountError<F: embedded_storage::nor_flash::ErrorType> {
    /// Why the mount failed.
    pub error: JournalError<F::Error>,
    /// The flash driver.
    pub flash: F,
}

impl<F: embedded_storage::nor_flash::ErrorType> core::fmt::Debug for MountError<F> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.debug_struct("MountError")
            .field("error", &self.error)
            .finish_non_exhaustive()
    }
}

impl<F: embedded_storage::nor_flash::ErrorType> core::fmt::Display for MountError<F> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "mount: {}", self.error)
    }
}

impl<F: embedded_storage::nor_flash::ErrorType> core::error::Error for MountError<F> {}

#[cfg(feature = "defmt")]
impl<F: embedded_storage::nor_flash::ErrorType> defmt::Format for MountError<F>
where
    F::Error: defmt::Format,
{
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "MountError {{ error: {} }}", self.error);
    }
}

/// What [`Journal::mount`] found in the sector headers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MountReport {
    /// Sectors with a valid header.
    pub valid: u32,
    /// Sectors whose header reads erased.
    pub erased: u32,
    /// Sectors with a header that is neither (torn, interrupted erase, foreign data).
    pub untrusted: u32,
    /// Whether the head sector ended in bytes that are not a valid record (a cut during a
    /// program); the head is sealed and the next record opens a new sector.
    pub torn_tail: bool,
}

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

/// The state of one sector's header, as [`Journal::mount`] reads it (see "The state of a
/// sector" in the module doc). Read it with [`sector_state`] or [`Journal::sector_state`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SectorState {
    /// The header reads erased (all `0xFF`); the rest of the sector is not checked.
    Erased,
    /// A valid header of this major format version.
    Valid {
        /// Sector sequence number (+1 for each sector opened, from 1).
        seq: u32,
        /// Sequence number the first record of the sector gets.
        first_record: u32,
    },
    /// A valid header of a newer major format version: the mount refuses the journal.
    Newer {
        /// The major version found.
        major: u8,
    },
    /// Neither erased nor a valid header (torn write, interrupted erase, foreign data).
    Untrusted,
}

/// Read the header state of sector `index` (`0 ..< config.sectors()`) of the journal
/// described by `config`. Reads only; works on flash that [`Journal::mount`] refuses (to name
/// the sector of a newer format).
///
/// # Errors
/// [`JournalError::Config`] if the configuration does not fit `F` or `index` is not a sector
/// of the journal, [`JournalError::Flash`] if the read fails.
pub fn sector_state<F: NorFlash>(
    flash: &mut F,
    config: &JournalConfig,
    index: u32,
) -> Result<SectorState, JournalError<F::Error>> {
    let g = Geometry::new::<F>(config.base, config.sectors).map_err(JournalError::Config)?;
    if index >= g.sectors {
        return Err(JournalError::Config(ConfigError::OutOfRange));
    }
    let end = u64::from(g.base) + u64::from(g.sectors) * u64::from(g.erase);
    if end > flash.capacity() as u64 {
        return Err(JournalError::Config(ConfigError::OutOfRange));
    }
    Ok(read_sector_state(flash, &g, index)?)
}

/// One slot read from a sector.
enum Slot {
    /// A valid record (or `None` for a well-formed record of an unknown kind) of `len`
    /// padded bytes.
    Record {
        seq: u32,
        record: Option<Record>,
        len: u32,
    },
    /// The slot reads erased: the end of the sector's records.
    Erased,
    /// Bytes that are not a valid record: torn or corrupt.
    Invalid,
}

/// What scanning one sector found.
#[derive(Debug, Clone, Copy, Default)]
struct SectorScan {
    end: u32,
    sealed: bool,
    /// Valid records of any kind.
    records: u32,
    last_seq: Option<u32>,
    /// The last start, restatement or end record.
    boundary: Option<Body>,
    /// The last checkpoint after the boundary that belongs to it (or in the whole sector if
    /// there is no boundary).
    checkpoint_after: Option<Checkpoint>,
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
    /// Mount the journal: find the head, the last record and the open session. Never writes.
    ///
    /// # Errors
    /// A [`MountError`] that hands the flash back, with [`JournalError::Config`] if the range
    /// does not fit the flash, [`JournalError::UnsupportedVersion`] for a sector of a newer
    /// major format, or [`JournalError::Flash`] if a read fails (mount again to retry). Any
    /// other content mounts (see the module doc).
    pub fn mount(flash: F, config: JournalConfig) -> Result<Self, MountError<F>> {
        let geometry = match Geometry::new::<F>(config.base, config.sectors) {
            Ok(g) => g,
            Err(e) => {
                return Err(MountError {
                    error: JournalError::Config(e),
                    flash,
                })
            }
        };
        let end =
            u64::from(geometry.base) + u64::from(geometry.sectors) * u64::from(geometry.erase);
        if end > flash.capacity() as u64 {
            return Err(MountError {
                error: JournalError::Config(ConfigError::OutOfRange),
                flash,
            });
        }
        let mut j = Self {
            flash,
            config,
            geometry,
            head: None,
            next_seq: 1,
            spare_ready: None,
            open: None,
            carry_pending: false,
            recovered: None,
            report: MountReport::default(),
        };
        match j.scan_all() {
            Ok(()) => Ok(j),
            Err(error) => Err(MountError {
                error,
                flash: j.flash,
            }),
        }
    }

    fn scan_all(&mut self) -> Res<(), F> {
        let mut head: Option<(u32, u32, u32)> = None;
        for i in 0..self.geometry.sectors {
            match read_sector_state(&mut self.flash, &self.geometry, i)? {
                SectorState::Erased => self.report.erased += 1,
                SectorState::Untrusted => self.report.untrusted += 1,
                SectorState::Newer { major } => {
                    return Err(JournalError::UnsupportedVersion { major })
                }
                SectorState::Valid { seq, first_record } => {
                    self.report.valid += 1;
                    if head.is_none_or(|(_, s, _)| seq > s) {
                        head = Some((i, seq, first_record));
                    }
                }
            }
        }
        let Some((index, seq, first_record)) = head else {
            return Ok(());
        };
        let scan = self.scan_sector(index)?;
        self.head = Some(Head {
            index,
            seq,
            offset: scan.end,
            sealed: scan.sealed || self.config.word_rule == WordRule::WriteOnce,
            records: scan.records,
        });
        self.report.torn_tail = scan.sealed;
        let (open, newest) = self.recover(index, seq, scan)?;
        let after_newest = match newest {
            Some(s) => s.checked_add(1).ok_or(JournalError::Exhausted)?,
            None => 1,
        };
        self.next_seq = match scan.last_seq {
            Some(_) => after_newest,
            // A head without records: its header names the next number. Never below one past
            // the newest record before it, so no number is used twice even on an image where
            // records were appended behind a newer header (written before that was prevented).
            None => first_record.max(after_newest),
        };
        self.open = open;
        self.recovered = self.open;
        // A head without records while a session is open was cut between its header and its
        // restatement: restate before the next record.
        self.carry_pending = scan.records == 0 && self.open.is_some();
        Ok(())
    }

    /// Erase every sector of the journal and mount it empty.
    ///
    /// # Errors
    /// As [`Journal::mount`]; an erase that fails is reported the same way.
    pub fn format(mut flash: F, config: JournalConfig) -> Result<Self, MountError<F>> {
        let geometry = match Geometry::new::<F>(config.base, config.sectors) {
            Ok(g) => g,
            Err(e) => {
                return Err(MountError {
                    error: JournalError::Config(e),
                    flash,
                })
            }
        };
        for i in 0..geometry.sectors {
            let a = geometry.sector_addr(i);
            if let Err(e) = flash.erase(a, a + geometry.erase) {
                return Err(MountError {
                    error: JournalError::Flash(e),
                    flash,
                });
            }
        }
        Self::mount(flash, config)
    }

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

    /// Whether [`Journal::maintain`] has work to do (the spare sector is needed and not
    /// prepared).
    pub fn needs_maintenance(&self) -> bool {
        self.spare_due() && self.spare_ready != Some(self.next_index())
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

    /// Append a session start with a fresh session id and return the id: the journal's next
    /// sequence number at the call ([`Journal::next_seq`]; unique and increasing).
    ///
    /// # Errors
    /// As [`Journal::append`].
    pub fn begin_session(&mut self, mut start: SessionStart) -> Res<SessionId, F> {
        start.session = SessionId(self.next_seq);
        self.append(&Body::Start(start))?;
        Ok(start.session)
    }

    /// Append one record; returns its sequence number once it is on flash and read back
    /// (acknowledged).
    ///
    /// # Errors
    /// [`JournalError::Flash`] (the head sector is then sealed), [`JournalError::VerifyFailed`],
    /// [`JournalError::Full`], [`JournalError::BadSector`], [`JournalError::Corrupted`],
    /// [`JournalError::Exhausted`]. On any error the record is not acknowledged.
    pub fn append(&mut self, body: &Body) -> Res<u32, F> {
        let slot = self
            .geometry
            .slot(HEADER_LEN + body.payload_len() + CRC_LEN);
        // At most two tries: if the slot is not blank the head is sealed and the record goes
        // to a fresh sector; a fresh sector that is not blank is `Corrupted`.
        let carry_room = self.geometry.slot(MAX_RECORD_LEN);
        for _ in 0..2 {
            let need = if self.carry_pending {
                slot + carry_room
            } else {
                slot
            };
            if !self.head_has_room(need) {
                self.open_sector()?;
            }
            if self.carry_pending && !self.write_carries()? {
                continue;
            }
            if let Some(seq) = self.program(body)? {
                self.note_appended(body);
                return Ok(seq);
            }
        }
        Err(JournalError::Corrupted)
    }

    /// Prepare the spare sector (blank-check, erase if needed). Call at a checkpoint boundary
    /// (right after a checkpoint was acknowledged) or when idle; see the module doc.
    ///
    /// Returns [`Maintenance::Idle`] without touching the flash while the head holds no record
    /// (the next record does not need the spare, and a cut could still step the head back and
    /// bring the spare into the retained window).
    ///
    /// # Errors
    /// [`JournalError::Flash`] or [`JournalError::BadSector`].
    pub fn maintain(&mut self) -> Res<Maintenance, F> {
        let target = self.next_index();
        if self.spare_ready == Some(target) || !self.spare_due() {
            return Ok(Maintenance::Idle);
        }
        if self.config.retention == Retention::KeepAll && self.holds_records(target)? {
            return Ok(Maintenance::Full);
        }
        self.prepare(target)
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

    fn next_index(&self) -> u32 {
        self.head.map_or(0, |h| self.geometry.next(h.index))
    }

    /// Whether the spare may be prepared now. Not while the head holds no record: such a
    /// head is erased and reopened in place, and a cut during that erase steps the head back
    /// one sector, which brings the spare back into the retained window. Left untouched, the
    /// spare then still holds whole sectors' worth of the oldest records; half erased, it
    /// would hold a stray prefix of them, separated from the newer records by a gap. A head
    /// that holds a record is never erased before the ring has moved on, so from then on
    /// the spare is free to erase.
    fn spare_due(&self) -> bool {
        self.head.is_none_or(|h| h.records > 0)
    }

    fn head_has_room(&self, slot: u32) -> bool {
        match self.head {
            // offset ≤ erase ≤ 2³¹ and slot ≤ 64: no overflow.
            Some(h) => !h.sealed && h.offset + slot <= self.geometry.erase,
            None => false,
        }
    }

    fn holds_records(&mut self, index: u32) -> Res<bool, F> {
        Ok(matches!(
            read_sector_state(&mut self.flash, &self.geometry, index)?,
            SectorState::Valid { .. }
        ))
    }

    fn note_appended(&mut self, body: &Body) {
        match body {
            Body::Start(s) => {
                self.open = Some(OpenSession {
                    start: *s,
                    checkpoint: None,
                });
            }
            Body::Checkpoint(c) => {
                if let Some(o) = self.open.as_mut() {
                    if o.start.session == c.session {
                        o.checkpoint = Some(*c);
                    }
                }
            }
            Body::Restate(o) => self.open = Some(*o),
            Body::End(_) => self.open = None,
            Body::Event(_) => {}
        }
    }

    /// Blank-check `index`; erase (at most twice) until blank.
    fn prepare(&mut self, index: u32) -> Res<Maintenance, F> {
        let addr = self.geometry.sector_addr(index);
        let len = self.geometry.erase;
        if self.config.word_rule == WordRule::ReprogramErased
            && is_blank(&mut self.flash, &self.geometry, addr, len)?
        {
            self.spare_ready = Some(index);
            return Ok(Maintenance::Verified);
        }
        for _ in 0..2 {
            self.spare_ready = None;
            self.flash.erase(addr, addr + len)?;
            if is_blank(&mut self.flash, &self.geometry, addr, len)? {
                self.spare_ready = Some(index);
                return Ok(Maintenance::Erased);
            }
        }
        Err(JournalError::BadSector { index })
    }

    /// Open the next sector: prepare it if needed, program its header, restate the open
    /// session. A head that holds no valid record (its header was programmed, its first record
    /// torn) is prepared again and reopened in place, so repeated cuts cannot push the ring
    /// forward and release older sectors.
    fn open_sector(&mut self) -> Res<(), F> {
        let (target, seq) = match self.head {
            Some(h) if h.records == 0 => (h.index, h.seq),
            Some(h) => (
                self.geometry.next(h.index),
                h.seq.checked_add(1).ok_or(JournalError::Exhausted)?,
            ),
            None => (0, 1),
        };
        if self.head.is_some_and(|h| h.index == target) {
            // Reopen in place: the sector must be erased again (it holds a header).
            self.spare_ready = None;
        } else if self.config.retention == Retention::KeepAll && self.holds_records(target)? {
            return Err(JournalError::Full);
        }
        if self.spare_ready != Some(target) {
            self.prepare(target)?;
        }
        self.spare_ready = None;
        // Leave the old head for good before its successor's header can be on flash: that
        // header names `next_seq` as its first record, so a record appended to the old head
        // afterwards (the header write or its read-back failed, but the header landed) would
        // sit behind a newer sector and its number would be given out again after a mount.
        self.seal();
        let mut hdr = [0u8; MAX_WRITE_SIZE];
        encode_sector_header(&mut hdr, seq, self.next_seq);
        let hlen = self.geometry.header as usize;
        let bytes = hdr.get(..hlen).ok_or(JournalError::Corrupted)?;
        let addr = self.geometry.sector_addr(target);
        self.flash.write(addr, bytes)?;
        let mut back = [0u8; MAX_WRITE_SIZE];
        let back = back.get_mut(..hlen).ok_or(JournalError::Corrupted)?;
        read_exact(&mut self.flash, &self.geometry, addr, back)?;
        if back != bytes {
            return Err(JournalError::VerifyFailed);
        }
        self.head = Some(Head {
            index: target,
            seq,
            offset: self.geometry.header,
            sealed: false,
            records: 0,
        });
        self.carry_pending = self.open.is_some();
        if !self.write_carries()? {
            // A freshly prepared sector that is not blank.
            return Err(JournalError::Corrupted);
        }
        Ok(())
    }

    /// Restate the open session (one atomic record) at the head. `Ok(false)`: the slot was
    /// not blank (head sealed).
    fn write_carries(&mut self) -> Res<bool, F> {
        if let Some(open) = self.open {
            if self.program(&Body::Restate(open))?.is_none() {
                return Ok(false);
            }
        }
        self.carry_pending = false;
        Ok(true)
    }

    /// Program one record at the head. `Ok(None)`: the slot was not blank (head sealed).
    fn program(&mut self, body: &Body) -> Res<Option<u32>, F> {
        let Some(mut head) = self.head else {
            return Err(JournalError::Corrupted);
        };
        let seq = self.next_seq;
        let next = seq.checked_add(1).ok_or(JournalError::Exhausted)?;
        let rec = Record { seq, body: *body };
        let mut buf = [0u8; BUF];
        let n = rec.emit(&mut buf).map_err(|_| JournalError::Corrupted)?;
        let slot = self.geometry.slot(n);
        let bytes = buf.get(..slot as usize).ok_or(JournalError::Corrupted)?;
        if head.offset + slot > self.geometry.erase {
            return Err(JournalError::Corrupted);
        }
        let addr = self.geometry.sector_addr(head.index) + head.offset;
        if !is_blank(&mut self.flash, &self.geometry, addr, slot)? {
            self.seal();
            return Ok(None);
        }
        // The sequence number is used up by the attempt: a failed program may still have left
        // the whole record on flash, and no later record may share its number.
        self.next_seq = next;
        if let Err(e) = self.flash.write(addr, bytes) {
            self.seal();
            return Err(JournalError::Flash(e));
        }
        let mut back = [0u8; BUF];
        let back = back
            .get_mut(..slot as usize)
            .ok_or(JournalError::Corrupted)?;
        if let Err(e) = read_exact(&mut self.flash, &self.geometry, addr, back) {
            self.seal();
            return Err(JournalError::Flash(e));
        }
        if back != bytes {
            self.seal();
            return Err(JournalError::VerifyFailed);
        }
        head.offset += slot;
        head.records = head.records.saturating_add(1);
        self.head = Some(head);
        Ok(Some(seq))
    }

    fn seal(&mut self) {
        if let Some(h) = self.head.as_mut() {
            h.sealed = true;
        }
    }

    /// Read one slot of sector `index` at `offset`.
    fn read_slot(&mut self, index: u32, offset: u32) -> Res<Slot, F> {
        read_slot(&mut self.flash, &self.geometry, index, offset)
    }

    /// Scan sector `index` from its first slot.
    fn scan_sector(&mut self, index: u32) -> Res<SectorScan, F> {
        let mut s = SectorScan {
            end: self.geometry.header,
            ..SectorScan::default()
        };
        loop {
            match self.read_slot(index, s.end)? {
                Slot::Erased => return Ok(s),
                Slot::Invalid => {
                    s.sealed = true;
                    return Ok(s);
                }
                Slot::Record { seq, record, len } => {
                    if s.last_seq.is_some_and(|l| seq <= l) {
                        // Sequence going backwards: not written by this journal; stop here.
                        s.sealed = true;
                        return Ok(s);
                    }
                    s.records += 1;
                    if let Some(r) = record {
                        match r.body {
                            Body::Start(_) | Body::End(_) => {
                                s.boundary = Some(r.body);
                                s.checkpoint_after = None;
                            }
                            Body::Restate(o) => {
                                s.boundary = Some(r.body);
                                s.checkpoint_after = o.checkpoint;
                            }
                            Body::Checkpoint(c) => {
                                let belongs = match s.boundary {
                                    Some(Body::Start(st)) => st.session == c.session,
                                    Some(Body::Restate(o)) => o.start.session == c.session,
                                    Some(_) => false,
                                    None => true,
                                };
                                if belongs {
                                    s.checkpoint_after = Some(c);
                                }
                            }
                            Body::Event(_) => {}
                        }
                    }
                    s.last_seq = Some(seq);
                    s.end += len;
                }
            }
        }
    }

    /// The open session: from the newest retained sector that holds a record. A sector
    /// opened while a session was open starts with its restatement, so that sector alone
    /// decides; one without any boundary record was opened with no session open. Also the
    /// sequence number of the newest record (the last one of that sector), if any.
    fn recover(
        &mut self,
        head: u32,
        head_seq: u32,
        head_scan: SectorScan,
    ) -> Res<(Option<OpenSession>, Option<u32>), F> {
        let mut index = head;
        let mut seq = head_seq;
        let mut scan = head_scan;
        for step in 0..=self.max_back() {
            if step > 0 {
                let p = self.geometry.prev(index);
                match read_sector_state(&mut self.flash, &self.geometry, p)? {
                    SectorState::Valid { seq: s, .. } if Some(s) == seq.checked_sub(1) => {
                        index = p;
                        seq = s;
                    }
                    _ => break,
                }
                scan = self.scan_sector(index)?;
            }
            if scan.records == 0 {
                continue;
            }
            let open = match scan.boundary {
                Some(Body::Start(start)) => Some(OpenSession {
                    start,
                    checkpoint: scan.checkpoint_after,
                }),
                Some(Body::Restate(o)) => Some(OpenSession {
                    start: o.start,
                    checkpoint: scan.checkpoint_after,
                }),
                _ => None,
            };
            return Ok((open, scan.last_seq));
        }
        Ok((None, None))
    }

    /// How many sectors before the head are retained.
    fn max_back(&self) -> u32 {
        match self.config.retention {
            Retention::Ring => self.geometry.sectors - 2,
            Retention::KeepAll => self.geometry.sectors - 1,
        }
    }
}

fn encode_sector_header(buf: &mut [u8], seq: u32, first_record: u32) {
    record::put_u16(buf, sector_field::MAGIC, SECTOR_MAGIC);
    if let Some(b) = buf.get_mut(sector_field::VERSION) {
        *b = VERSION;
    }
    if let Some(b) = buf.get_mut(sector_field::RESERVED) {
        *b = 0;
    }
    record::put_u32(buf, sector_field::SEQUENCE, seq);
    record::put_u32(buf, sector_field::FIRST_RECORD, first_record);
    let crc = record::stored_crc(buf.get(..sector_field::CRC.start).unwrap_or(&[]));
    record::put_u32(buf, sector_field::CRC, crc);
}

fn read_sector_state<F: ReadNorFlash>(
    flash: &mut F,
    g: &Geometry,
    index: u32,
) -> Result<SectorState, F::Error> {
    let mut h = [0u8; SECTOR_HEADER_LEN];
    read_exact(flash, g, g.sector_addr(index), &mut h)?;
    if h.iter().all(|&b| b == 0xFF) {
        return Ok(SectorState::Erased);
    }
    let crc_ok = record::get_u32(&h, sector_field::CRC)
        == record::stored_crc(h.get(..sector_field::CRC.start).unwrap_or(&[]));
    if record::get_u16(&h, sector_field::MAGIC) != SECTOR_MAGIC || !crc_ok {
        return Ok(SectorState::Untrusted);
    }
    let major = h.get(sector_field::VERSION).copied().unwrap_or(0) >> 4;
    if major != VERSION_MAJOR {
        return Ok(SectorState::Newer { major });
    }
    Ok(SectorState::Valid {
        seq: record::get_u32(&h, sector_field::SEQUENCE),
        first_record: record::get_u32(&h, sector_field::FIRST_RECORD),
    })
}

fn read_slot<F: ReadNorFlash>(
    flash: &mut F,
    g: &Geometry,
    index: u32,
    offset: u32,
) -> Result<Slot, JournalError<F::Error>> {
    // offset ≤ erase (callers advance by slots that fit).
    let avail = g.erase.saturating_sub(offset) as usize;
    if avail < HEADER_LEN + CRC_LEN {
        return Ok(Slot::Erased);
    }
    let n = avail.min(MAX_RECORD_LEN);
    let mut buf = [0u8; MAX_RECORD_LEN];
    let buf = buf.get_mut(..n).ok_or(JournalError::Corrupted)?;
    read_exact(flash, g, g.sector_addr(index) + offset, buf)?;
    let view = match RecordView::new_checked(&*buf) {
        Ok(v) => v,
        Err(RecordError::Erased) => return Ok(Slot::Erased),
        Err(_) => return Ok(Slot::Invalid),
    };
    if view.check().is_err() {
        return Ok(Slot::Invalid);
    }
    let len = g.slot(view.total_len());
    let seq = view.sequence();
    let record = match Body::parse(view.kind(), view.payload()) {
        Ok(body) => Some(Record { seq, body }),
        Err(RecordError::UnknownKind(_)) => None,
        Err(_) => return Ok(Slot::Invalid),
    };
    Ok(Slot::Record { seq, record, len })
}

/// Read `out.len()` bytes at `addr`, honouring `READ_SIZE` alignment through a scratch buffer.
fn read_exact<F: ReadNorFlash>(
    flash: &mut F,
    g: &Geometry,
    addr: u32,
    out: &mut [u8],
) -> Result<(), F::Error> {
    let r = g.read;
    let mut done = 0usize;
    let mut scratch = [0u8; BUF];
    while done < out.len() {
        // Addresses stay inside the validated journal range (< 2³²).
        let a = addr + done as u32;
        let start = a - a.checked_rem(r).unwrap_or(0);
        let skip = (a - start) as usize;
        // skip < r ≤ 32, so at least BUF − 2·32 bytes fit per chunk.
        let want = (out.len() - done).min(BUF - 2 * MAX_READ_SIZE);
        let chunk = align_up((skip + want) as u32, r) as usize;
        let Some(buf) = scratch.get_mut(..chunk) else {
            return Ok(());
        };
        flash.read(start, buf)?;
        if let (Some(src), Some(dst)) = (buf.get(skip..skip + want), out.get_mut(done..done + want))
        {
            for (d, s) in dst.iter_mut().zip(src) {
                *d = *s;
            }
        }
        done += want;
    }
    Ok(())
}

fn is_blank<F: ReadNorFlash>(
    flash: &mut F,
    g: &Geometry,
    addr: u32,
    len: u32,
) -> Result<bool, F::Error> {
    let mut buf = [0u8; BUF - 2 * MAX_READ_SIZE];
    let mut done = 0u32;
    while done < len {
        let n = (len - done).min(buf.len() as u32);
        let Some(chunk) = buf.get_mut(..n as usize) else {
            return Ok(false);
        };
        read_exact(flash, g, addr + done, chunk)?;
        if chunk.iter().any(|&b| b != 0xFF) {
            return Ok(false);
        }
        done += n;
    }
    Ok(true)
}

/// Iterator over the retained records, oldest first. See [`Journal::records`].
#[derive(Debug)]
pub struct Records<'a, F: NorFlash> {
    scan: Scan<'a, F>,
}

impl<F: NorFlash> Iterator for Records<'_, F> {
    type Item = Res<Record, F>;

    fn next(&mut self) -> Option<Self::Item> {
        loop {
            match self.scan.next()? {
                Err(e) => return Some(Err(e)),
                Ok(ScanItem::Record {
                    record: Some(r), ..
                }) => return Some(Ok(r)),
                Ok(_) => {}
            }
        }
    }
}

/// A place in the journal: a sector of the ring and a byte offset in it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Location {
    /// Sector index in the ring, `0 ..< sectors`.
    pub sector: u32,
    /// Byte offset from the first byte of the sector, `0 ..= ERASE_SIZE`.
    pub offset: u32,
}

/// Why the records of a retained sector end. See [`ScanItem::SectorEnd`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ScanStop {
    /// The next slot reads erased, or no further record fits in the sector: the normal end.
    Erased,
    /// The bytes there are not a valid record (torn by a cut, corrupt, or of a newer major
    /// format version); nothing after them in the sector is read.
    Invalid,
    /// A well-formed record whose sequence number does not follow the previous one (not
    /// written by this journal); nothing after it in the sector is read.
    OutOfOrder,
}

/// One step of [`Journal::scan`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ScanItem {
    /// A retained sector begins (its header is valid).
    Sector {
        /// Sector index in the ring.
        index: u32,
        /// Its sector sequence number.
        seq: u32,
    },
    /// A valid record.
    Record {
        /// Where it starts.
        at: Location,
        /// Its length on flash with the padding to the write size, bytes.
        len: u32,
        /// Its sequence number.
        seq: u32,
        /// The record; `None` for a well-formed record of a kind this version does not know
        /// (a newer minor version), which [`Journal::records`] skips.
        record: Option<Record>,
    },
    /// The records of the current sector end here.
    SectorEnd {
        /// The first byte after the sector's last valid record.
        at: Location,
        /// Why they end.
        stop: ScanStop,
    },
}

/// Iterator over the retained sectors and their records, oldest first. See
/// [`Journal::scan`].
#[derive(Debug)]
pub struct Scan<'a, F: NorFlash> {
    journal: &'a mut Journal<F>,
    /// Sectors left to read, including the current one.
    sectors_left: u32,
    index: u32,
    /// Sector sequence number of the current sector.
    seq: u32,
    offset: u32,
    /// The current sector's [`ScanItem::Sector`] was yielded.
    opened: bool,
    last_seq: Option<u32>,
    error: Option<JournalError<<F as embedded_storage::nor_flash::ErrorType>::Error>>,
}

impl<'a, F: NorFlash> Scan<'a, F> {
    fn new(journal: &'a mut Journal<F>) -> Self {
        let mut it = Self {
            sectors_left: 0,
            index: 0,
            seq: 0,
            offset: 0,
            opened: false,
            last_seq: None,
            error: None,
            journal,
        };
        let Some(head) = it.journal.head else {
            return it;
        };
        let g = it.journal.geometry;
        let mut index = head.index;
        let mut seq = head.seq;
        let mut count = 1;
        for _ in 0..it.journal.max_back() {
            let p = g.prev(index);
            match read_sector_state(&mut it.journal.flash, &g, p) {
                Ok(SectorState::Valid { seq: s, .. }) if Some(s) == seq.checked_sub(1) => {
                    index = p;
                    seq = s;
                    count += 1;
                }
                Ok(_) => break,
                Err(e) => {
                    it.error = Some(JournalError::Flash(e));
                    break;
                }
            }
        }
        it.sectors_left = count;
        it.index = index;
        it.seq = seq;
        it.offset = g.header;
        it
    }
}

impl<F: NorFlash> Iterator for Scan<'_, F> {
    type Item = Res<ScanItem, F>;

    fn next(&mut self) -> Option<Self::Item> {
        if let Some(e) = self.error.take() {
            self.sectors_left = 0;
            return Some(Err(e));
        }
        if self.sectors_left == 0 {
            return None;
        }
        if !self.opened {
            self.opened = true;
            return Some(Ok(ScanItem::Sector {
                index: self.index,
                seq: self.seq,
            }));
        }
        let at = Location {
            sector: self.index,
            offset: self.offset,
        };
        match self.journal.read_slot(self.index, self.offset) {
            Err(e) => {
                self.sectors_left = 0;
                Some(Err(e))
            }
            Ok(Slot::Record { seq, record, len }) if self.last_seq.is_none_or(|l| seq > l) => {
                self.last_seq = Some(seq);
                self.offset += len;
                Some(Ok(ScanItem::Record {
                    at,
                    len,
                    seq,
                    record,
                }))
            }
            Ok(slot) => {
                let stop = match slot {
                    Slot::Erased => ScanStop::Erased,
                    Slot::Invalid => ScanStop::Invalid,
                    Slot::Record { .. } => ScanStop::OutOfOrder,
                };
                self.sectors_left -= 1;
                self.index = self.journal.geometry.next(self.index);
                // The walk only follows consecutive sector sequence numbers.
                self.seq = self.seq.wrapping_add(1);
                self.offset = self.journal.geometry.header;
                self.opened = false;
                Some(Ok(ScanItem::SectorEnd { at, stop }))
            }
        }
    }
}
