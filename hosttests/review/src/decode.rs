//! `decode`: a raw flash image of the session journal → its records (CSV and JSON) and a
//! summary of its sessions.
//!
//! Nothing here parses the format a second time. The image is wrapped, read-only, in
//! [`ImageFlash`] (an `embedded-storage` NOR flash whose `write` and `erase` always fail, over
//! a borrowed `&[u8]`: decoding cannot change the image), mounted with the library's own
//! [`Journal::mount`], and walked with [`Journal::scan`] / [`Journal::records`]; the CSV is
//! the library's [`export_csv`], byte for byte what the device prints on its serial port. The
//! only reading done here is of bytes the journal stops at: whether they are erased, and
//! [`Record::parse`] to name why a slot is not a record.
//!
//! # Geometry
//!
//! The journal's flash type fixes its write and erase sizes at compile time, so the decoder
//! is built for the sizes in [`SUPPORTED_WRITE_SIZES`] and [`SUPPORTED_SECTOR_SIZES`]. The
//! image file holds the journal's range only: `sectors × sector_size` bytes read from the
//! device at address `base` (the address is used in messages and checked for alignment as the
//! device checks it). The read size is checked like the device checks it; it changes no
//! position on flash, so the image is read byte-wise.
//!
//! # What is an error
//!
//! An image the device itself would produce — also after a power cut at any byte, a torn
//! sector header or erase, a failed write — decodes, with what the cut left described in
//! `notes`. Refused, with the byte offset and sector named ([`ReviewError::Image`]): an image
//! of the wrong length, a sector or record of a newer major format version, no journal at all
//! (not erased, no valid sector header), and data the journal can never read (anything after
//! the end of a sector's records other than one torn slot; a sector outside the journal's run
//! that is not erased). Nothing is written then.
//!
//! Keys of the JSON output: `hosttests/review/CONFIG.md`, section 5.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use embedded_storage::nor_flash::{
    check_read, ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};
use photon_ledger::journal::export::{
    event_name, export_csv, fault_name, outcome_name, ExportError,
};
use photon_ledger::journal::record::{
    Body, Checkpoint, Event, EventCode, FaultCode, Record, RecordError, SessionEnd, SessionOutcome,
    SessionStart, StoredExposure, StoredIrradiance, MAX_RECORD_LEN, VERSION_MAJOR,
};
use photon_ledger::journal::{
    sector_state, ConfigError, Journal, JournalConfig, JournalError, MountReport, OpenSession,
    Retention, ScanItem, ScanStop, SectorState, MAX_READ_SIZE, SECTOR_HEADER_LEN,
};
use photon_ledger::spectral::band::{Band, BandFactors};
use serde::Serialize;
use sha2::{Digest, Sha256};

use super::config::hex;
use super::error::ReviewError;
use super::report::sig;

/// Name of the decode output format, the `decode_format` key.
pub const DECODE_FORMAT: &str = "photon-review/decode";
/// Version of the decode output format, the `decode_version` key.
pub const DECODE_VERSION: u32 = 1;

/// Write sizes the decoder is built for, bytes.
pub const SUPPORTED_WRITE_SIZES: [u32; 6] = [1, 2, 4, 8, 16, 32];
/// Sector (erase) sizes the decoder is built for, bytes.
pub const SUPPORTED_SECTOR_SIZES: [u32; 9] =
    [512, 1024, 2048, 4096, 8192, 16_384, 32_768, 65_536, 131_072];

/// Retention policy of the journal (as configured in the firmware).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum RetentionPolicy {
    /// The ring recycles its oldest sector (`Retention::Ring`, the default).
    Ring,
    /// No sector holding records is ever recycled (`Retention::KeepAll`).
    KeepAll,
}

/// Where the journal lives and the flash's sizes. Units as in the field names.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Geometry {
    /// Device address of the journal's first byte (the image's first byte).
    pub base_address: u32,
    /// Sector (erase) size, bytes.
    pub sector_size_bytes: u32,
    /// Number of sectors of the journal.
    pub sectors: u32,
    /// Write (program) size of the flash, bytes.
    pub write_size_bytes: u32,
    /// Read size of the flash, bytes.
    pub read_size_bytes: u32,
    /// The journal's retention policy.
    pub retention: RetentionPolicy,
}

impl Geometry {
    /// The geometry of the shipped example image (`hosttests/review/examples/journal.bin`)
    /// and the decoder's defaults: 8 sectors of 4 KiB from address 0, write size 4, read
    /// size 1, ring retention (the example of `Journal::lifetime_records`).
    pub const EXAMPLE: Self = Self {
        base_address: 0,
        sector_size_bytes: 4096,
        sectors: 8,
        write_size_bytes: 4,
        read_size_bytes: 1,
        retention: RetentionPolicy::Ring,
    };

    /// Length of an image of this geometry, bytes.
    #[must_use]
    pub fn image_len(&self) -> u64 {
        u64::from(self.sectors) * u64::from(self.sector_size_bytes)
    }

    fn retention(&self) -> Retention {
        match self.retention {
            RetentionPolicy::Ring => Retention::Ring,
            RetentionPolicy::KeepAll => Retention::KeepAll,
        }
    }

    /// Padded length of the longest record, bytes: the most a torn write can leave.
    fn max_slot(&self) -> u64 {
        let w = u64::from(self.write_size_bytes.max(1));
        (MAX_RECORD_LEN as u64).div_ceil(w) * w
    }
}

// ---------------------------------------------------------------------------------------
// The read-only flash.
// ---------------------------------------------------------------------------------------

/// Errors of [`ImageFlash`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImageFlashError {
    /// A read outside the image.
    OutOfBounds,
    /// A write or erase: the image is read-only.
    ReadOnly,
}

impl NorFlashError for ImageFlashError {
    fn kind(&self) -> NorFlashErrorKind {
        match self {
            Self::OutOfBounds => NorFlashErrorKind::OutOfBounds,
            Self::ReadOnly => NorFlashErrorKind::Other,
        }
    }
}

/// A flash image as a read-only NOR flash of write size `W` and erase size `E`: the image's
/// first byte is at device address `base`. Reads of any alignment (read size 1); `write` and
/// `erase` fail with [`ImageFlashError::ReadOnly`] and change nothing (the image is borrowed
/// immutably).
#[derive(Debug, Clone, Copy)]
pub struct ImageFlash<'a, const W: usize, const E: usize> {
    image: &'a [u8],
    base: u32,
}

impl<'a, const W: usize, const E: usize> ImageFlash<'a, W, E> {
    /// The image, mapped at device address `base`.
    #[must_use]
    pub fn new(image: &'a [u8], base: u32) -> Self {
        Self { image, base }
    }
}

impl<const W: usize, const E: usize> ErrorType for ImageFlash<'_, W, E> {
    type Error = ImageFlashError;
}

impl<const W: usize, const E: usize> ReadNorFlash for ImageFlash<'_, W, E> {
    const READ_SIZE: usize = 1;

    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), ImageFlashError> {
        check_read(self, offset, bytes.len()).map_err(|_| ImageFlashError::OutOfBounds)?;
        let start = offset
            .checked_sub(self.base)
            .ok_or(ImageFlashError::OutOfBounds)? as usize;
        let src = self
            .image
            .get(start..start + bytes.len())
            .ok_or(ImageFlashError::OutOfBounds)?;
        bytes.copy_from_slice(src);
        Ok(())
    }

    fn capacity(&self) -> usize {
        self.base as usize + self.image.len()
    }
}

impl<const W: usize, const E: usize> NorFlash for ImageFlash<'_, W, E> {
    const WRITE_SIZE: usize = W;
    const ERASE_SIZE: usize = E;

    fn erase(&mut self, _from: u32, _to: u32) -> Result<(), ImageFlashError> {
        Err(ImageFlashError::ReadOnly)
    }

    fn write(&mut self, _offset: u32, _bytes: &[u8]) -> Result<(), ImageFlashError> {
        Err(ImageFlashError::ReadOnly)
    }
}

// ---------------------------------------------------------------------------------------
// What the library reads (the only generic part).
// ---------------------------------------------------------------------------------------

struct Mounted {
    report: MountReport,
    recovered: Option<OpenSession>,
    next_seq: u32,
    items: Vec<ScanItem>,
    records: Vec<Record>,
    csv: String,
    csv_with_restatements: String,
}

struct RawScan {
    states: Vec<SectorState>,
    mounted: Result<Mounted, JournalError<ImageFlashError>>,
}

fn raw_scan<const W: usize, const E: usize>(
    image: &[u8],
    g: &Geometry,
) -> Result<RawScan, ConfigError> {
    type Res<T> = Result<T, JournalError<ImageFlashError>>;
    let config =
        JournalConfig::try_new::<ImageFlash<'_, W, E>>(g.base_address, g.sectors, g.retention())?;
    let mut flash = ImageFlash::<W, E>::new(image, g.base_address);
    let states: Res<Vec<SectorState>> = (0..g.sectors)
        .map(|i| sector_state(&mut flash, &config, i))
        .collect();
    let states = match states {
        Ok(s) => s,
        Err(e) => {
            return Ok(RawScan {
                states: Vec::new(),
                mounted: Err(e),
            })
        }
    };
    let mounted = (|| -> Res<Mounted> {
        let mut j = Journal::mount(flash, config).map_err(|e| e.error)?;
        let items = j.scan().collect::<Res<Vec<_>>>()?;
        let records = j.records().collect::<Res<Vec<_>>>()?;
        // Writing into a `String` cannot fail: only the journal's errors remain.
        let journal_error = |e| match e {
            ExportError::Journal(e) => e,
            ExportError::Write => JournalError::Corrupted,
        };
        let mut csv = String::new();
        export_csv(&mut j, &mut csv, false).map_err(journal_error)?;
        let mut csv_with_restatements = String::new();
        export_csv(&mut j, &mut csv_with_restatements, true).map_err(journal_error)?;
        Ok(Mounted {
            report: *j.mount_report(),
            recovered: j.recovered().copied(),
            next_seq: j.next_seq(),
            items,
            records,
            csv,
            csv_with_restatements,
        })
    })();
    Ok(RawScan { states, mounted })
}

fn by_sector_size<const W: usize>(image: &[u8], g: &Geometry) -> Result<RawScan, ConfigError> {
    match g.sector_size_bytes {
        512 => raw_scan::<W, 512>(image, g),
        1024 => raw_scan::<W, 1024>(image, g),
        2048 => raw_scan::<W, 2048>(image, g),
        4096 => raw_scan::<W, 4096>(image, g),
        8192 => raw_scan::<W, 8192>(image, g),
        16_384 => raw_scan::<W, 16_384>(image, g),
        32_768 => raw_scan::<W, 32_768>(image, g),
        65_536 => raw_scan::<W, 65_536>(image, g),
        131_072 => raw_scan::<W, 131_072>(image, g),
        _ => Err(ConfigError::EraseSize),
    }
}

fn dispatch(image: &[u8], g: &Geometry) -> Result<RawScan, ConfigError> {
    match g.write_size_bytes {
        1 => by_sector_size::<1>(image, g),
        2 => by_sector_size::<2>(image, g),
        4 => by_sector_size::<4>(image, g),
        8 => by_sector_size::<8>(image, g),
        16 => by_sector_size::<16>(image, g),
        32 => by_sector_size::<32>(image, g),
        _ => Err(ConfigError::WriteSize),
    }
}

/// Check the geometry as the device does (the library's `JournalConfig::try_new`, plus the
/// read size), and that the decoder is built for its sizes.
///
/// # Errors
/// A message naming the option.
pub fn check_geometry(g: &Geometry) -> Result<(), ReviewError> {
    let bad = |m: String| Err(ReviewError::Other(m));
    if !SUPPORTED_WRITE_SIZES.contains(&g.write_size_bytes) {
        return bad(format!(
            "--write-size {}: this decoder reads write sizes {SUPPORTED_WRITE_SIZES:?} bytes",
            g.write_size_bytes
        ));
    }
    if !SUPPORTED_SECTOR_SIZES.contains(&g.sector_size_bytes) {
        return bad(format!(
            "--sector-size {}: this decoder reads sector sizes {SUPPORTED_SECTOR_SIZES:?} bytes",
            g.sector_size_bytes
        ));
    }
    let r = g.read_size_bytes;
    if r == 0 || r as usize > MAX_READ_SIZE {
        return bad(format!("--read-size {r}: {}", ConfigError::ReadSize));
    }
    if !g.sector_size_bytes.is_multiple_of(r) {
        return bad(format!(
            "--read-size {r} with --sector-size {}: {}",
            g.sector_size_bytes,
            ConfigError::EraseSize
        ));
    }
    // The library's own check of the rest (`JournalConfig::try_new`; with an empty image
    // nothing is read).
    match dispatch(&[], g) {
        Ok(_) => Ok(()),
        Err(e) => bad(geometry_message(g, e)),
    }
}

fn geometry_message(g: &Geometry, e: ConfigError) -> String {
    let opt = match e {
        ConfigError::WriteSize => format!("--write-size {}", g.write_size_bytes),
        ConfigError::ReadSize => format!("--read-size {}", g.read_size_bytes),
        ConfigError::EraseSize => format!(
            "--sector-size {} with --write-size {}",
            g.sector_size_bytes, g.write_size_bytes
        ),
        ConfigError::BaseAlignment => format!(
            "--base {:#x} with --sector-size {}",
            g.base_address, g.sector_size_bytes
        ),
        ConfigError::TooFewSectors => format!("--sectors {}", g.sectors),
        ConfigError::OutOfRange => format!(
            "--base {:#x} with --sectors {} of {} bytes",
            g.base_address, g.sectors, g.sector_size_bytes
        ),
    };
    format!("{opt}: {e}")
}

// ---------------------------------------------------------------------------------------
// The output.
// ---------------------------------------------------------------------------------------

/// The decoded image (JSON keys in CONFIG.md section 5).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Decoded {
    /// Always [`DECODE_FORMAT`].
    pub decode_format: String,
    /// [`DECODE_VERSION`].
    pub decode_version: u32,
    /// True: every sector was read and the journal's records all decoded (an output is only
    /// written when this is true).
    pub complete: bool,
    /// Tool name and version.
    pub tool: String,
    /// Library name and version (the photon-ledger crate whose journal code decoded it).
    pub library: String,
    /// The image file.
    pub input: ImageInput,
    /// The geometry it was decoded with.
    pub geometry: Geometry,
    /// What the mount found.
    pub journal: JournalFacts,
    /// Every sector.
    pub sectors: Vec<SectorReport>,
    /// What a power cut or failed write left, in words.
    pub notes: Vec<String>,
    /// Every retained record, oldest first (restatements included).
    pub records: Vec<RecordReport>,
    /// The sessions, in the order of their first retained record.
    pub sessions: Vec<SessionReport>,
    /// Events recorded outside any session (session 0).
    pub events_outside_sessions: Vec<EventReport>,
    /// The device's CSV (`export_csv` without restatements).
    #[serde(skip)]
    pub csv: String,
    /// The device's CSV with restatements.
    #[serde(skip)]
    pub csv_with_restatements: String,
}

/// The image file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImageInput {
    /// As named on the command line.
    pub image_file: String,
    /// SHA-256 of its bytes, hex.
    pub image_sha256: String,
    /// Its length, bytes.
    pub image_bytes: u64,
}

/// What the mount found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct JournalFacts {
    /// Major and minor format version this tool reads (`"1.x"`).
    pub format_read: String,
    /// Sectors with a valid header, an erased header, neither.
    pub valid_sectors: u32,
    /// Sectors whose header reads erased.
    pub erased_sectors: u32,
    /// Sectors whose header is neither erased nor valid.
    pub untrusted_sectors: u32,
    /// The head sector (the newest), if any.
    pub head_sector: Option<u32>,
    /// Sectors whose records are part of the journal.
    pub retained_sectors: u32,
    /// Retained records of known kinds (restatements included).
    pub records: u64,
    /// Of which restatements.
    pub restatements: u64,
    /// Well-formed records of kinds this version does not know (skipped).
    pub unknown_kind_records: u64,
    /// Sequence number the device's next record gets.
    pub next_record_seq: u32,
    /// The head ends in a torn record (a cut during a write).
    pub torn_tail: bool,
    /// The session open at the end of the image (the device resumes or abandons it on its
    /// next boot), if any.
    pub open_session: Option<u32>,
}

/// One sector.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SectorReport {
    /// Index in the ring.
    pub index: u32,
    /// Offset of its first byte in the image, bytes.
    pub image_offset_bytes: u64,
    /// Device address of its first byte.
    pub address: u64,
    /// Header: `valid`, `erased`, `untrusted`.
    pub header: String,
    /// Sector sequence number (valid header).
    pub sector_seq: Option<u32>,
    /// `head`, `retained`, `released` (next to be recycled; not part of the journal),
    /// `unused` (erased, outside the journal).
    pub role: String,
    /// Records in it (retained sectors).
    pub records: Option<u32>,
    /// Image offset where its records end (retained sectors), bytes.
    pub records_end_image_offset_bytes: Option<u64>,
    /// Why they end: `erased` (the normal end), `torn` (a torn or failed write).
    pub records_end: Option<String>,
}

/// One record. Keys that do not apply to the record's kind are absent (CONFIG.md lists which
/// kinds have which keys).
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct RecordReport {
    /// Sequence number.
    pub seq: u32,
    /// `start`, `checkpoint`, `event`, `end`, `restate`.
    pub kind: String,
    /// Session id (0: outside a session).
    pub session: u32,
    /// Sector it is in.
    pub sector: u32,
    /// Offset of its first byte in the image, bytes.
    pub image_offset_bytes: u64,
    /// Its length on flash with padding, bytes.
    pub length_bytes: u32,
    /// Tick of the checkpoint, event or end.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tick: Option<u32>,
    /// Time since the session's start tick, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_since_start_s: Option<f64>,
    /// Dose delivered (rounded down on the device), J/m².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub radiant_exposure_j_per_m2: Option<f64>,
    /// A checkpoint's bound for the interval after it (the resume value), J/m².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub radiant_exposure_bound_j_per_m2: Option<f64>,
    /// Minimum irradiance (checkpoint: since the previous one; end: whole session), W/m².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub irradiance_min_w_per_m2: Option<f64>,
    /// Mean irradiance, W/m².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub irradiance_mean_w_per_m2: Option<f64>,
    /// Maximum irradiance, W/m².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub irradiance_max_w_per_m2: Option<f64>,
    /// Event name or end outcome, as in the device CSV.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub code: Option<String>,
    /// The stored event or outcome code.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub code_value: Option<u16>,
    /// Event detail (gap length in ticks for a gap fault).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub detail: Option<u32>,
    /// Session duration at the end, ticks.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub elapsed_ticks: Option<u32>,
    /// Session duration at the end, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub elapsed_s: Option<f64>,
    /// Events the session logged (end).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub events: Option<u16>,
    /// Tick of the session start (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start_tick: Option<u32>,
    /// Tick rate, Hz (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tick_rate_hz: Option<u32>,
    /// Configuration digest, `0x` and 8 hex digits (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub config_digest: Option<String>,
    /// Calibration identity (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub calibration_id: Option<u32>,
    /// Equivalent vacuum wavelength of the band, nm (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wavelength_nm: Option<f64>,
    /// Target radiant exposure, J/m² (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub target_j_per_m2: Option<f64>,
    /// Checkpoint interval, ticks (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval_ticks: Option<u32>,
    /// Irradiance bound of the checkpoint bounds, W/m² (start, restate).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_irradiance_w_per_m2: Option<f64>,
    /// The latest checkpoint a restatement carries (absent if the session had none yet).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub restated_checkpoint: Option<Box<RecordReport>>,
    /// A curing part (format 1.1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub part: Option<super::decode_kinds::PartReport>,
    /// A completed pause (format 1.1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pause: Option<super::decode_kinds::PauseReport>,
    /// An exposure monitor's state (format 1.1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exposure_state: Option<super::decode_kinds::ExposureStateReport>,
    /// An unmonitored interval (format 1.1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unmonitored: Option<super::decode_kinds::UnmonitoredReport>,
    /// A curing controller's state (format 1.1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub curing_state: Option<super::decode_kinds::CuringStateReport>,
}

/// One event.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventReport {
    /// Sequence number of the event record.
    pub seq: u32,
    /// Tick.
    pub tick: u32,
    /// Time since the session's start tick, s.
    pub time_since_start_s: Option<f64>,
    /// Name, as in the device CSV.
    pub code: String,
    /// The stored code.
    pub code_value: u16,
    /// Detail.
    pub detail: u32,
    /// Dose delivered at the event, J/m².
    pub radiant_exposure_j_per_m2: f64,
}

/// One session.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionReport {
    /// Session id (the sequence number of its start record).
    pub session: u32,
    /// `ended` (an end record), `open` (the journal's open session: cut by a power loss or
    /// still running when read), `unfinished` (no end record, and a later session started).
    pub state: String,
    /// The start record itself is retained (else only the journal's restatement of it: the
    /// session's earliest records were recycled).
    pub start_record_retained: bool,
    /// Retained records of the session (restatements included).
    pub records: u64,
    /// Sequence numbers of its first and last retained record.
    pub first_seq: u32,
    /// Sequence number of its last retained record.
    pub last_seq: u32,
    /// Start tick.
    pub start_tick: Option<u32>,
    /// Tick rate, Hz.
    pub tick_rate_hz: Option<u32>,
    /// Configuration digest, hex.
    pub config_digest: Option<String>,
    /// Calibration identity.
    pub calibration_id: Option<u32>,
    /// Equivalent vacuum wavelength of the band, nm.
    pub wavelength_nm: Option<f64>,
    /// Target radiant exposure, J/m².
    pub target_j_per_m2: Option<f64>,
    /// Checkpoint interval, ticks.
    pub interval_ticks: Option<u32>,
    /// Irradiance bound of the checkpoints, W/m².
    pub max_irradiance_w_per_m2: Option<f64>,
    /// Tick of the end record.
    pub end_tick: Option<u32>,
    /// Tick of the session's last retained record.
    pub last_tick: u32,
    /// Outcome, as in the device CSV (`target_met`, `fault:gap` ...); `null` if not ended.
    pub outcome: Option<String>,
    /// The stored outcome code.
    pub outcome_code: Option<u16>,
    /// The target was reached (outcome or a `target_reached` event).
    pub target_reached: bool,
    /// Duration, s: the end record's, or (not ended) start to last retained record.
    pub duration_s: Option<f64>,
    /// Dose delivered, J/m²: the end record's; not ended: at the last retained record.
    pub radiant_exposure_j_per_m2: f64,
    /// Upper bound of the dose, J/m²: ended: the end record's dose (final); not ended: the
    /// latest checkpoint's bound, the dose the device resumes from (0 without a checkpoint:
    /// the source may not be enabled before the first one).
    pub radiant_exposure_bound_j_per_m2: f64,
    /// Photon exposure at the band's equivalent wavelength, mol/m² (computed from the SI
    /// defining constants).
    pub photon_exposure_mol_per_m2: Option<f64>,
    /// Minimum irradiance over the session (end record), W/m².
    pub irradiance_min_w_per_m2: Option<f64>,
    /// Mean irradiance over the session (end record), W/m².
    pub irradiance_mean_w_per_m2: Option<f64>,
    /// Maximum irradiance over the session (end record), W/m².
    pub irradiance_max_w_per_m2: Option<f64>,
    /// Retained checkpoint records.
    pub checkpoints: u64,
    /// Retained event records.
    pub events: u64,
    /// Events the session logged, as its end record counts them.
    pub events_recorded: Option<u16>,
    /// `resumed` events (resumptions after a reset).
    pub resumed: u64,
    /// Faults: the reasons of fault events, in order (`gap`, `sensor` ...).
    pub faults: Vec<String>,
    /// The events.
    pub event_list: Vec<EventReport>,
    /// SHA-256 of the session's start payload and end record (ended sessions): the exposure
    /// register's key.
    pub content_sha256: Option<String>,
}

fn j(h: StoredExposure) -> f64 {
    // Division is correctly rounded: the nearest double to the exact decimal value.
    h.uj_per_m2() as f64 / 1e6
}

fn w(e: StoredIrradiance) -> f64 {
    f64::from(e.mw_per_m2()) / 1e3
}

fn event_text(c: EventCode) -> String {
    let mut s = String::new();
    let _ = event_name(&mut s, c);
    s
}

fn outcome_text(o: SessionOutcome) -> String {
    let mut s = String::new();
    let _ = outcome_name(&mut s, o);
    s
}

fn start_fields(r: &mut RecordReport, s: &SessionStart) {
    r.start_tick = Some(s.start.0);
    r.tick_rate_hz = Some(s.tick_rate_hz);
    r.config_digest = Some(format!("{:#010x}", s.config_digest.0));
    r.calibration_id = Some(s.calibration.0);
    r.wavelength_nm = Some(f64::from(s.wavelength.pm()) / 1e3);
    r.target_j_per_m2 = Some(j(s.target));
    r.interval_ticks = Some(s.interval_ticks);
    r.max_irradiance_w_per_m2 = Some(w(s.max_irradiance));
}

fn since(start: Option<&SessionStart>, tick: u32) -> Option<f64> {
    let s = start?;
    (s.tick_rate_hz > 0)
        .then(|| f64::from(tick.wrapping_sub(s.start.0)) / f64::from(s.tick_rate_hz))
}

fn checkpoint_report(c: &Checkpoint, start: Option<&SessionStart>) -> RecordReport {
    RecordReport {
        kind: "checkpoint".into(),
        session: c.session.0,
        tick: Some(c.at.0),
        time_since_start_s: since(start, c.at.0),
        radiant_exposure_j_per_m2: Some(j(c.delivered)),
        radiant_exposure_bound_j_per_m2: Some(j(c.bound)),
        irradiance_min_w_per_m2: Some(w(c.min)),
        irradiance_mean_w_per_m2: Some(w(c.mean)),
        irradiance_max_w_per_m2: Some(w(c.max)),
        ..RecordReport::default()
    }
}

fn record_report(r: &Record, start: Option<&SessionStart>) -> RecordReport {
    let mut out = match &r.body {
        Body::Start(s) => {
            let mut o = RecordReport {
                kind: "start".into(),
                ..RecordReport::default()
            };
            start_fields(&mut o, s);
            o
        }
        Body::Restate(o) => {
            let mut x = RecordReport {
                kind: "restate".into(),
                ..RecordReport::default()
            };
            start_fields(&mut x, &o.start);
            x.restated_checkpoint = o
                .checkpoint
                .map(|c| Box::new(checkpoint_report(&c, Some(&o.start))));
            x
        }
        Body::Checkpoint(c) => checkpoint_report(c, start),
        Body::Event(e) => RecordReport {
            kind: "event".into(),
            tick: Some(e.at.0),
            time_since_start_s: since(start, e.at.0),
            radiant_exposure_j_per_m2: Some(j(e.delivered)),
            code: Some(event_text(e.code)),
            code_value: Some(e.code.code()),
            detail: Some(e.detail),
            ..RecordReport::default()
        },
        Body::End(e) => RecordReport {
            kind: "end".into(),
            tick: Some(e.at.0),
            time_since_start_s: since(start, e.at.0),
            radiant_exposure_j_per_m2: Some(j(e.delivered)),
            irradiance_min_w_per_m2: Some(w(e.min)),
            irradiance_mean_w_per_m2: Some(w(e.mean)),
            irradiance_max_w_per_m2: Some(w(e.max)),
            code: Some(outcome_text(e.outcome)),
            code_value: Some(e.outcome.code()),
            elapsed_ticks: Some(e.elapsed_ticks),
            elapsed_s: start
                .filter(|s| s.tick_rate_hz > 0)
                .map(|s| f64::from(e.elapsed_ticks) / f64::from(s.tick_rate_hz)),
            events: Some(e.events),
            ..RecordReport::default()
        },
        Body::Part(_)
        | Body::Pause(_)
        | Body::ExposureState(_)
        | Body::Unmonitored(_)
        | Body::CuringState(_) => super::decode_kinds::report(r).unwrap_or_default(),
    };
    out.seq = r.seq;
    out.session = r.body.session().0;
    out
}

/// The register key of an ended session: SHA-256 of a tag, the session's start payload (the
/// same whether read from its start record or a restatement) and its end record as encoded
/// by the library. Both survive in every image that holds the end record, while the records
/// between them may be recycled from one read-out to the next: so two read-outs of one
/// session give one key.
#[must_use]
pub fn session_key(start: &SessionStart, end_seq: u32, end: &SessionEnd) -> String {
    let mut h = Sha256::new();
    h.update(b"photon-ledger journal session\n");
    let mut buf = [0u8; MAX_RECORD_LEN];
    if Body::Start(*start).emit(&mut buf).is_ok() {
        h.update(&buf[..Body::Start(*start).payload_len()]);
    }
    let rec = Record {
        seq: end_seq,
        body: Body::End(*end),
    };
    if let Ok(n) = rec.emit(&mut buf) {
        h.update(&buf[..n]);
    }
    hex(&h.finalize())
}

#[derive(Default)]
struct SessionAcc {
    start: Option<SessionStart>,
    start_retained: bool,
    records: u64,
    first_seq: u32,
    last_seq: u32,
    last_tick: Option<u32>,
    last_delivered: Option<StoredExposure>,
    last_checkpoint: Option<Checkpoint>,
    checkpoints: u64,
    events: Vec<(u32, Event)>,
    end: Option<(u32, SessionEnd)>,
}

// ---------------------------------------------------------------------------------------
// Decoding.
// ---------------------------------------------------------------------------------------

fn first_non_erased(bytes: &[u8]) -> Option<usize> {
    bytes.iter().position(|&b| b != 0xFF)
}

struct Ctx<'a> {
    file: &'a str,
    image: &'a [u8],
    g: Geometry,
}

impl Ctx<'_> {
    fn sector_start(&self, index: u32) -> u64 {
        u64::from(index) * u64::from(self.g.sector_size_bytes)
    }
    fn sector_bytes(&self, index: u32) -> &[u8] {
        let s = self.sector_start(index) as usize;
        let e = s + self.g.sector_size_bytes as usize;
        self.image.get(s..e).unwrap_or(&[])
    }
    fn address(&self, offset: u64) -> u64 {
        u64::from(self.g.base_address) + offset
    }
    fn err(&self, offset: Option<u64>, sector: Option<u32>, message: String) -> ReviewError {
        ReviewError::Image {
            file: self.file.to_string(),
            offset,
            sector,
            message,
        }
    }
}

/// Decode `image` (the bytes of file `file`) with geometry `g`.
///
/// # Errors
/// [`ReviewError::Other`] for a geometry the device would refuse or the decoder is not built
/// for; [`ReviewError::Image`] (with the byte offset and sector) for an image that cannot be
/// decoded (see the module doc). Nothing is returned in part.
pub fn decode_image(file: &str, image: &[u8], g: &Geometry) -> Result<Decoded, ReviewError> {
    check_geometry(g)?;
    let cx = Ctx { file, image, g: *g };
    let want = g.image_len();
    let have = image.len() as u64;
    let e = u64::from(g.sector_size_bytes);
    if have < want {
        let sector = (have / e) as u32;
        return Err(cx.err(
            Some(have),
            Some(sector),
            format!(
                "the image ends after {have} bytes, inside sector {sector} (image bytes {}..{}); \
                 the geometry ({} sectors × {} bytes) needs {want} bytes: truncated, or \
                 --sectors / --sector-size are wrong",
                u64::from(sector) * e,
                u64::from(sector + 1) * e,
                g.sectors,
                g.sector_size_bytes
            ),
        ));
    }
    if have > want {
        return Err(cx.err(
            Some(want),
            None,
            format!(
                "the image is {have} bytes, {} more than the geometry ({} sectors × {} bytes = \
                 {want} bytes) holds, from image byte {want} on: not this journal's range, or \
                 --sectors / --sector-size are wrong",
                have - want,
                g.sectors,
                g.sector_size_bytes
            ),
        ));
    }
    let raw = dispatch(image, g).map_err(|e| ReviewError::Other(geometry_message(g, e)))?;
    // A sector of a newer major format: the device's mount refuses it, and so do we, naming it.
    for (i, st) in raw.states.iter().enumerate() {
        if let SectorState::Newer { major } = st {
            let i = i as u32;
            return Err(cx.err(
                Some(cx.sector_start(i)),
                Some(i),
                format!(
                    "sector {i} (device address {:#x}) is a journal sector of format major \
                     version {major}; this tool reads major version {VERSION_MAJOR} (written by \
                     newer firmware: use a newer photon-review)",
                    cx.address(cx.sector_start(i))
                ),
            ));
        }
    }
    let m = match raw.mounted {
        Ok(m) => m,
        Err(JournalError::UnsupportedVersion { major }) => {
            return Err(cx.err(
                None,
                None,
                format!("journal format major version {major}; this tool reads {VERSION_MAJOR}"),
            ))
        }
        Err(e) => return Err(cx.err(None, None, format!("the journal does not mount: {e}"))),
    };
    analyse(&cx, &raw.states, m)
}

/// Read `path` and decode it.
///
/// # Errors
/// As [`decode_image`], and an unreadable file.
pub fn decode_file(path: &str, g: &Geometry) -> Result<Decoded, ReviewError> {
    check_geometry(g)?;
    let want = g.image_len();
    // The size is checked from the file's metadata before anything is read: an image larger
    // than its geometry, or a device, pipe or directory, is refused without reading it.
    let meta = std::fs::metadata(path).map_err(|e| ReviewError::io(path, e))?;
    if !meta.is_file() {
        return Err(ReviewError::Image {
            file: path.to_string(),
            offset: None,
            sector: None,
            message: "not a regular file (an image is a file read out of the device); not read"
                .to_string(),
        });
    }
    if meta.len() > want {
        return Err(ReviewError::Image {
            file: path.to_string(),
            offset: Some(want),
            sector: None,
            message: format!(
                "the image is {} bytes, {} more than the geometry ({} sectors × {} bytes = \
                 {want} bytes) holds, from image byte {want} on: not this journal's range, or \
                 --sectors / --sector-size are wrong; not read",
                meta.len(),
                meta.len() - want,
                g.sectors,
                g.sector_size_bytes
            ),
        });
    }
    let mut image = Vec::with_capacity(usize::try_from(meta.len()).unwrap_or(0));
    std::fs::File::open(path)
        .and_then(|f| std::io::Read::read_to_end(&mut std::io::Read::take(f, want + 1), &mut image))
        .map_err(|e| ReviewError::io(path, e))?;
    decode_image(path, &image, g)
}

struct SectorRun {
    index: u32,
    seq: u32,
    records: u32,
    end_offset: u32,
    stop: ScanStop,
}

fn analyse(cx: &Ctx<'_>, states: &[SectorState], m: Mounted) -> Result<Decoded, ReviewError> {
    let g = cx.g;
    let n = g.sectors;
    let mut notes = Vec::new();

    // The retained run, from the library's scan.
    let mut runs: Vec<SectorRun> = Vec::new();
    let mut located: Vec<(u32, u32, u32, Record)> = Vec::new(); // sector, offset, len, record
    let mut unknown = 0u64;
    let mut last_seq: Option<u32> = None;
    let head_index = m.items.iter().rev().find_map(|i| match i {
        ScanItem::Sector { index, .. } => Some(*index),
        _ => None,
    });
    for item in &m.items {
        match *item {
            ScanItem::Sector { index, seq } => runs.push(SectorRun {
                index,
                seq,
                records: 0,
                end_offset: 0,
                stop: ScanStop::Erased,
            }),
            ScanItem::Record {
                at,
                len,
                record,
                seq,
            } => {
                if let Some(r) = runs.last_mut() {
                    r.records += 1;
                }
                last_seq = Some(seq);
                match record {
                    Some(r) => located.push((at.sector, at.offset, len, r)),
                    None => unknown += 1,
                }
            }
            ScanItem::SectorEnd { at, stop } => {
                if let Some(r) = runs.last_mut() {
                    r.end_offset = at.offset;
                    r.stop = stop;
                }
                // Why a sector's records end, and that nothing readable is lost behind it.
                let start = cx.sector_start(at.sector);
                let bytes = cx.sector_bytes(at.sector);
                let off = at.offset as usize;
                let here = start + u64::from(at.offset);
                match stop {
                    ScanStop::Erased => {
                        if let Some(p) = bytes.get(off..).and_then(first_non_erased) {
                            let p = here + p as u64;
                            return Err(cx.err(
                                Some(p),
                                Some(at.sector),
                                format!(
                                    "data at image byte {p} after the end of sector {}'s records \
                                     (they end at image byte {here}, where the next slot reads \
                                     erased): the journal never reads it; the image is corrupt, \
                                     or the geometry is wrong",
                                    at.sector
                                ),
                            ));
                        }
                    }
                    ScanStop::OutOfOrder => {
                        let seq =
                            Record::parse(bytes.get(off..).unwrap_or(&[])).map_or(0, |r| r.seq);
                        return Err(cx.err(
                            Some(here),
                            Some(at.sector),
                            format!(
                                "record seq {seq} does not follow seq {}: not written by this \
                                 journal (records after it would be lost)",
                                last_seq.unwrap_or(0)
                            ),
                        ));
                    }
                    ScanStop::Invalid => {
                        let reason = match Record::parse(bytes.get(off..).unwrap_or(&[])) {
                            Err(e) => e,
                            // A record the library rejects for its payload (too short).
                            Ok(_) => RecordError::BadLength,
                        };
                        if let RecordError::UnsupportedVersion { major } = reason {
                            return Err(cx.err(
                                Some(here),
                                Some(at.sector),
                                format!(
                                    "a record of format major version {major} (device address \
                                     {:#x}); this tool reads major version {VERSION_MAJOR} \
                                     (written by newer firmware: use a newer photon-review)",
                                    cx.address(here)
                                ),
                            ));
                        }
                        let after = (off as u64 + g.max_slot()).min(bytes.len() as u64) as usize;
                        if let Some(p) = bytes.get(after..).and_then(first_non_erased) {
                            let p = start + (after + p) as u64;
                            return Err(cx.err(
                                Some(here),
                                Some(at.sector),
                                format!(
                                    "not a valid record ({reason}), and more data follows (from \
                                     image byte {p}) than one torn write can leave: the journal \
                                     never reads past a bad record, so what follows is lost; \
                                     the image is corrupt, or the geometry is wrong"
                                ),
                            ));
                        }
                        notes.push(if Some(at.sector) == head_index {
                            format!(
                                "sector {} (the head) ends at image byte {here} in a torn write \
                                 ({reason}): the device lost power, or a write failed, while \
                                 writing its last record, which was not acknowledged",
                                at.sector
                            )
                        } else {
                            format!(
                                "sector {}: its records end at image byte {here} in a torn or \
                                 failed write ({reason}); the journal continued in the next \
                                 sector",
                                at.sector
                            )
                        });
                    }
                }
            }
        }
    }
    if m.records.len() != located.len()
        || m.records
            .iter()
            .zip(&located)
            .any(|(a, (_, _, _, b))| a != b)
    {
        return Err(cx.err(
            None,
            None,
            "the journal's records and its scan disagree (a bug: please report it)".into(),
        ));
    }

    let head = runs.last().map(|r| r.index);
    let released = head
        .filter(|_| runs.len() < n as usize)
        .map(|h| if h + 1 >= n { 0 } else { h + 1 });
    if head.is_none() {
        // No valid sector. An erased image is an empty journal. A journal that never
        // completed its first record leaves at most its first sector header and one torn
        // record in sector 0 (a later erase of it, even torn, only sets bits): accepted with
        // a note. Anything else is not a journal of this geometry.
        let w = u64::from(g.write_size_bytes);
        let first_open = (SECTOR_HEADER_LEN as u64).div_ceil(w) * w + g.max_slot();
        let dirty = (0..n).find_map(|i| {
            let b = cx.sector_bytes(i);
            let skip = if i == 0 { first_open as usize } else { 0 };
            b.get(skip..)
                .and_then(first_non_erased)
                .map(|p| (i, cx.sector_start(i) + (skip + p) as u64))
        });
        if let Some((i, at)) = dirty {
            let first = first_non_erased(cx.image).map_or(at, |p| p as u64);
            return Err(cx.err(
                Some(first),
                Some(if first < at { 0 } else { i }),
                format!(
                    "no journal in the image: no sector has a valid journal header, and sector \
                     {i} holds data (at image byte {at}) that no interrupted start of a journal \
                     leaves: not a journal image, or the geometry (--base, --sector-size, \
                     --sectors, --write-size) is wrong"
                ),
            ));
        }
        notes.push(match first_non_erased(cx.image) {
            None => "the image is erased: the journal holds no records".into(),
            Some(p) => format!(
                "no records: sector 0 holds only a torn sector header or first record (from \
                 image byte {p}): the power was cut while the journal opened its first sector"
            ),
        });
    }

    // Sectors outside the run.
    let mut sectors = Vec::new();
    for i in 0..n {
        let st = states
            .get(i as usize)
            .copied()
            .unwrap_or(SectorState::Untrusted);
        let (header, seq) = match st {
            SectorState::Erased => ("erased", None),
            SectorState::Valid { seq, .. } => ("valid", Some(seq)),
            SectorState::Newer { .. } | SectorState::Untrusted => ("untrusted", None),
        };
        let run = runs.iter().find(|r| r.index == i);
        let dirty = first_non_erased(cx.sector_bytes(i));
        let role = if run.is_some() {
            if Some(i) == head {
                "head"
            } else {
                "retained"
            }
        } else if Some(i) == released {
            match (st, dirty) {
                (SectorState::Valid { seq, .. }, _) => notes.push(format!(
                    "sector {i}: released (the next to be recycled; sector seq {seq}): its old \
                     records are no longer part of the journal"
                )),
                (_, Some(_)) => notes.push(format!(
                    "sector {i}: released, {} (a power cut while it was erased or opened); the \
                     device erases it before use",
                    if header == "erased" {
                        "partly erased"
                    } else {
                        "its header torn or partly erased"
                    }
                )),
                _ => {}
            }
            "released"
        } else if head.is_none() {
            // Checked above: erased, or the remains of a first sector's opening.
            "unused"
        } else if let Some(p) = dirty {
            let at = cx.sector_start(i) + p as u64;
            let what = match st {
                SectorState::Valid { seq, .. } => format!(
                    "holds a valid journal sector header (sector seq {seq}) but is not in the \
                     journal's run of sectors (head: sector {}): the run is broken, its records \
                     would be lost",
                    head.map_or_else(|| "none".into(), |h| h.to_string())
                ),
                SectorState::Erased => "has an erased header but holds data".into(),
                _ => "has a header that is neither erased nor a journal sector header".into(),
            };
            return Err(cx.err(
                Some(at),
                Some(i),
                format!(
                    "sector {i} (image bytes {}..{}) {what}; only the sector after the head may \
                     hold such remains of a cut. The image is corrupt, or the geometry or \
                     --retention is wrong",
                    cx.sector_start(i),
                    cx.sector_start(i + 1)
                ),
            ));
        } else {
            "unused"
        };
        sectors.push(SectorReport {
            index: i,
            image_offset_bytes: cx.sector_start(i),
            address: cx.address(cx.sector_start(i)),
            header: header.into(),
            sector_seq: seq.or(run.map(|r| r.seq)),
            role: role.into(),
            records: run.map(|r| r.records),
            records_end_image_offset_bytes: run
                .map(|r| cx.sector_start(r.index) + u64::from(r.end_offset)),
            records_end: run.map(|r| {
                match r.stop {
                    ScanStop::Erased => "erased",
                    _ => "torn",
                }
                .into()
            }),
        });
    }
    if unknown > 0 {
        notes.push(format!(
            "{unknown} well-formed records of kinds this version does not know (a newer minor \
             format version) were skipped, as the device skips them"
        ));
    }

    // Records and sessions.
    let mut order: Vec<u32> = Vec::new();
    let mut acc: BTreeMap<u32, SessionAcc> = BTreeMap::new();
    let mut outside = Vec::new();
    let mut records = Vec::with_capacity(located.len());
    let mut restatements = 0u64;
    for (sector, offset, len, r) in &located {
        let id = r.body.session().0;
        if id != 0 && !acc.contains_key(&id) {
            order.push(id);
            acc.insert(
                id,
                SessionAcc {
                    first_seq: r.seq,
                    ..SessionAcc::default()
                },
            );
        }
        let a = acc.get_mut(&id);
        let start = a.as_ref().and_then(|a| a.start);
        let mut rep = record_report(r, start.as_ref());
        rep.sector = *sector;
        rep.image_offset_bytes = cx.sector_start(*sector) + u64::from(*offset);
        rep.length_bytes = *len;
        if let Some(a) = a {
            a.records += 1;
            a.last_seq = r.seq;
            match &r.body {
                Body::Start(s) => {
                    a.start = Some(*s);
                    a.start_retained = true;
                }
                Body::Restate(o) => {
                    restatements += 1;
                    a.start.get_or_insert(o.start);
                    if a.last_checkpoint.is_none() {
                        a.last_checkpoint = o.checkpoint;
                    }
                    if a.last_delivered.is_none() {
                        a.last_delivered = o.checkpoint.map(|c| c.delivered);
                        a.last_tick = o.checkpoint.map(|c| c.at.0);
                    }
                }
                Body::Checkpoint(c) => {
                    a.checkpoints += 1;
                    a.last_checkpoint = Some(*c);
                    a.last_delivered = Some(c.delivered);
                    a.last_tick = Some(c.at.0);
                }
                Body::Event(e) => {
                    a.events.push((r.seq, *e));
                    a.last_delivered = Some(e.delivered);
                    a.last_tick = Some(e.at.0);
                }
                Body::End(e) => {
                    a.end = Some((r.seq, *e));
                    a.last_delivered = Some(e.delivered);
                    a.last_tick = Some(e.at.0);
                }
                // Format 1.1 kinds are listed as records (and in the text summary).
                Body::Part(_)
                | Body::Pause(_)
                | Body::ExposureState(_)
                | Body::Unmonitored(_)
                | Body::CuringState(_) => {}
            }
        } else if let Body::Event(e) = &r.body {
            outside.push(EventReport {
                seq: r.seq,
                tick: e.at.0,
                time_since_start_s: None,
                code: event_text(e.code),
                code_value: e.code.code(),
                detail: e.detail,
                radiant_exposure_j_per_m2: j(e.delivered),
            });
        }
        records.push(rep);
    }

    let open_id = m.recovered.map(|o| o.session().0);
    let mut sessions = Vec::with_capacity(order.len());
    for id in &order {
        let Some(a) = acc.remove(id) else { continue };
        sessions.push(session_report(*id, a, open_id, m.recovered.as_ref()));
    }
    if let Some(id) = open_id {
        if !sessions.iter().any(|s| s.session == id) {
            notes.push(format!(
                "the journal's open session {id} has no retained record of its own"
            ));
        }
    }

    Ok(Decoded {
        decode_format: DECODE_FORMAT.into(),
        decode_version: DECODE_VERSION,
        complete: true,
        tool: crate::TOOL.to_string(),
        library: crate::library(),
        input: ImageInput {
            image_file: cx.file.to_string(),
            image_sha256: hex(&Sha256::digest(cx.image)),
            image_bytes: cx.image.len() as u64,
        },
        geometry: g,
        journal: JournalFacts {
            format_read: format!("{VERSION_MAJOR}.x"),
            valid_sectors: m.report.valid,
            erased_sectors: m.report.erased,
            untrusted_sectors: m.report.untrusted,
            head_sector: head,
            retained_sectors: runs.len() as u32,
            records: records.len() as u64,
            restatements,
            unknown_kind_records: unknown,
            next_record_seq: m.next_seq,
            torn_tail: m.report.torn_tail,
            open_session: open_id,
        },
        sectors,
        notes,
        records,
        sessions,
        events_outside_sessions: outside,
        csv: m.csv,
        csv_with_restatements: m.csv_with_restatements,
    })
}

fn session_report(
    id: u32,
    a: SessionAcc,
    open_id: Option<u32>,
    recovered: Option<&OpenSession>,
) -> SessionReport {
    let start = a.start;
    let rate = start.map(|s| s.tick_rate_hz).filter(|&r| r > 0);
    let state = if a.end.is_some() {
        "ended"
    } else if open_id == Some(id) {
        "open"
    } else {
        "unfinished"
    };
    let delivered = a.end.map_or_else(
        || a.last_delivered.unwrap_or(StoredExposure::ZERO),
        |(_, e)| e.delivered,
    );
    let bound = match (a.end, start) {
        (Some((_, e)), _) => e.delivered,
        // The library's own resume value: the recovered session's, or for an unfinished
        // one the same rule on its latest checkpoint.
        (None, _) if open_id == Some(id) => {
            recovered.map_or(StoredExposure::ZERO, OpenSession::dose_bound)
        }
        (None, Some(s)) => OpenSession {
            start: s,
            checkpoint: a.last_checkpoint,
        }
        .dose_bound(),
        (None, None) => a.last_checkpoint.map_or(StoredExposure::ZERO, |c| c.bound),
    };
    let last_tick = a.last_tick.or(start.map(|s| s.start.0)).unwrap_or(0);
    let duration_s = match (a.end, start, rate) {
        (Some((_, e)), _, Some(r)) => Some(f64::from(e.elapsed_ticks) / f64::from(r)),
        (None, Some(s), Some(r)) => {
            Some(f64::from(last_tick.wrapping_sub(s.start.0)) / f64::from(r))
        }
        _ => None,
    };
    let mol_per_j = start.and_then(|s| {
        BandFactors::new(&Band::Line(s.wavelength.wavelength()))
            .ok()
            .map(|b| b.mol_per_j())
    });
    let mut faults = Vec::new();
    let mut resumed = 0;
    let mut reached = false;
    let event_list = a
        .events
        .iter()
        .map(|(seq, e)| {
            match e.code {
                EventCode::Fault(f) => faults.push(match f {
                    FaultCode::Other(c) => format!("other:{c:#04x}"),
                    f => fault_name(f).to_string(),
                }),
                EventCode::Resumed => resumed += 1,
                EventCode::TargetReached => reached = true,
                _ => {}
            }
            EventReport {
                seq: *seq,
                tick: e.at.0,
                time_since_start_s: since(start.as_ref(), e.at.0),
                code: event_text(e.code),
                code_value: e.code.code(),
                detail: e.detail,
                radiant_exposure_j_per_m2: j(e.delivered),
            }
        })
        .collect::<Vec<_>>();
    if let Some((_, e)) = a.end {
        reached |= matches!(
            e.outcome,
            SessionOutcome::TargetMet | SessionOutcome::Overexposed
        );
    }
    SessionReport {
        session: id,
        state: state.into(),
        start_record_retained: a.start_retained,
        records: a.records,
        first_seq: a.first_seq,
        last_seq: a.last_seq,
        start_tick: start.map(|s| s.start.0),
        tick_rate_hz: start.map(|s| s.tick_rate_hz),
        config_digest: start.map(|s| format!("{:#010x}", s.config_digest.0)),
        calibration_id: start.map(|s| s.calibration.0),
        wavelength_nm: start.map(|s| f64::from(s.wavelength.pm()) / 1e3),
        target_j_per_m2: start.map(|s| j(s.target)),
        interval_ticks: start.map(|s| s.interval_ticks),
        max_irradiance_w_per_m2: start.map(|s| w(s.max_irradiance)),
        end_tick: a.end.map(|(_, e)| e.at.0),
        last_tick,
        outcome: a.end.map(|(_, e)| outcome_text(e.outcome)),
        outcome_code: a.end.map(|(_, e)| e.outcome.code()),
        target_reached: reached,
        duration_s,
        radiant_exposure_j_per_m2: j(delivered),
        radiant_exposure_bound_j_per_m2: j(bound),
        photon_exposure_mol_per_m2: mol_per_j.map(|k| j(delivered) * k),
        irradiance_min_w_per_m2: a.end.map(|(_, e)| w(e.min)),
        irradiance_mean_w_per_m2: a.end.map(|(_, e)| w(e.mean)),
        irradiance_max_w_per_m2: a.end.map(|(_, e)| w(e.max)),
        checkpoints: a.checkpoints,
        events: a.events.len() as u64,
        events_recorded: a.end.map(|(_, e)| e.events),
        resumed,
        faults,
        event_list,
        content_sha256: match (start, a.end) {
            (Some(s), Some((seq, e))) => Some(session_key(&s, seq, &e)),
            _ => None,
        },
    }
}

impl Decoded {
    /// The human-readable form.
    #[must_use]
    pub fn to_text(&self) -> String {
        let mut s = String::new();
        let g = &self.geometry;
        let jf = &self.journal;
        let _ = writeln!(s, "photon-review decode ({}, {})", self.tool, self.library);
        let _ = writeln!(
            s,
            "image      {} ({} bytes, sha256 {})",
            self.input.image_file, self.input.image_bytes, self.input.image_sha256
        );
        let _ = writeln!(
            s,
            "geometry   base {:#x}, {} sectors × {} bytes, write {} B, read {} B, retention {}",
            g.base_address,
            g.sectors,
            g.sector_size_bytes,
            g.write_size_bytes,
            g.read_size_bytes,
            match g.retention {
                RetentionPolicy::Ring => "ring",
                RetentionPolicy::KeepAll => "keep_all",
            }
        );
        let _ = writeln!(
            s,
            "journal    format {}: {} sectors retained (head {}), {} records ({} restatements, \
             {} of unknown kind skipped), next record seq {}",
            jf.format_read,
            jf.retained_sectors,
            jf.head_sector
                .map_or_else(|| "none".into(), |h| h.to_string()),
            jf.records,
            jf.restatements,
            jf.unknown_kind_records,
            jf.next_record_seq
        );
        for n in &self.notes {
            let _ = writeln!(s, "note       {n}");
        }
        let _ = writeln!(s, "sessions   {}", self.sessions.len());
        for x in &self.sessions {
            let opt = |v: Option<u32>| v.map_or_else(|| "?".into(), |t| t.to_string());
            let _ = writeln!(
                s,
                "  session {}: {}{}, start tick {}, {}",
                x.session,
                x.state,
                x.outcome
                    .as_ref()
                    .map_or_else(String::new, |o| format!(" ({o})")),
                opt(x.start_tick),
                match (x.end_tick, x.duration_s) {
                    (Some(t), Some(d)) => format!("end tick {t} ({} s)", sig(d)),
                    (None, Some(d)) => format!(
                        "no end record: last record at tick {} ({} s)",
                        x.last_tick,
                        sig(d)
                    ),
                    _ => "no end record".into(),
                }
            );
            let _ = writeln!(
                s,
                "    dose {} J/m² (bound {} J/m²), target {} J/m²{}",
                sig(x.radiant_exposure_j_per_m2),
                sig(x.radiant_exposure_bound_j_per_m2),
                x.target_j_per_m2.map_or_else(|| "?".into(), sig),
                if x.target_reached { ", reached" } else { "" }
            );
            let _ = writeln!(
                s,
                "    {} checkpoints, {} events{}, faults: {}{}",
                x.checkpoints,
                x.events,
                if x.event_list.is_empty() {
                    String::new()
                } else {
                    format!(
                        " ({})",
                        x.event_list
                            .iter()
                            .map(|e| e.code.as_str())
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                },
                if x.faults.is_empty() {
                    "none".into()
                } else {
                    x.faults.join(", ")
                },
                if x.start_record_retained {
                    ""
                } else {
                    " (start record recycled; restated)"
                }
            );
        }
        let kinds: Vec<String> = self
            .records
            .iter()
            .filter_map(super::decode_kinds::text_line)
            .collect();
        if !kinds.is_empty() {
            let _ = writeln!(s, "parts, pauses and states: {}", kinds.len());
            for l in kinds {
                let _ = writeln!(s, "  {l}");
            }
        }
        if !self.events_outside_sessions.is_empty() {
            let _ = writeln!(
                s,
                "events outside sessions: {}",
                self.events_outside_sessions
                    .iter()
                    .map(|e| format!("{} at tick {}", e.code, e.tick))
                    .collect::<Vec<_>>()
                    .join(", ")
            );
        }
        s
    }
}
