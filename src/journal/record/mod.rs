//! Record: the on-flash format of the session journal, a versioned contract.
//!
//! Every record is a fixed little-endian header, a payload whose layout depends on the
//! record kind, and a CRC-32 trailer. The journal ([`crate::journal`]) pads each record with
//! `0x00` bytes to the flash's write size; the padding is not part of the record.
//!
//! ```text
//!  byte  0        1        2        3        4        5        6        7
//!       +--------+--------+--------+--------+--------+--------+--------+--------+
//!     0 | MAGIC  |VERSION | KIND   | FLAGS  |        SEQUENCE (u32 LE)          |
//!       +--------+--------+--------+--------+--------+--------+--------+--------+
//!     8 | LENGTH (u16 LE) |  PAYLOAD (LENGTH bytes, layout by KIND) ...          |
//!       +--------+--------+                                                     |
//!       |  ...                                                                  |
//!       +--------+--------+--------+--------+
//! 10+L  |        CRC-32 (u32 LE)            |   over bytes 0 .. 10+L
//!       +--------+--------+--------+--------+
//! ```
//!
//! | bytes | field | meaning |
//! | --- | --- | --- |
//! | [`field::MAGIC`] | magic | always [`MAGIC`] (`0xD7`); never `0x00` or `0xFF` |
//! | [`field::VERSION`] | version | high nibble major, low nibble minor; this crate writes [`VERSION`] (1.1) |
//! | [`field::KIND`] | kind | [`Kind`]: 1 start, 2 checkpoint, 3 event, 4 end, 5 restatement; from 1.1: 6 curing part, 7 pause, 8 exposure state, 9 unmonitored interval, 10 curing state |
//! | [`field::FLAGS`] | flags | reserved: written 0, ignored by readers (a minor version may define bits) |
//! | [`field::SEQUENCE`] | sequence | record sequence number, +1 per record, starts at 1 |
//! | [`field::LENGTH`] | length | payload length in bytes, ≤ [`MAX_PAYLOAD_LEN`] |
//! | `10 .. 10+L` | payload | see [`payload`] for each kind's named byte ranges |
//! | `10+L .. 14+L` | CRC | CRC-32 of bytes `0 .. 10+L`, erased-value avoiding (below) |
//!
//! # CRC
//!
//! The CRC is **CRC-32/ISO-HDLC** ([`CRC_ALGORITHM`], the CRC-32 of zlib, Ethernet and PNG:
//! polynomial `0x04C11DB7` reflected, init and xor-out `0xFFFFFFFF`, check value
//! `0xCBF43926` for the ASCII bytes `123456789`), computed with the `crc` crate. A computed
//! value of `0xFFFFFFFF` (the erased flash word, [`ERASED_CRC`]) is stored as `0xFFFFFFFE`,
//! so a stored CRC is never the erased value; a reader applies the same mapping before it
//! compares. An erased header (all `0xFF`) can never be valid either: its magic byte is
//! wrong.
//!
//! # Units on flash
//!
//! All values are integers: radiant exposure in µJ/m² (`u64`, [`StoredExposure`]), irradiance
//! in mW/m² (`i32`, [`StoredIrradiance`]), wavelength in picometres (`u32`,
//! [`StoredWavelength`]), time in the caller's ticks (`u32`, wrapping).
//!
//! # Changing the format (the rule)
//!
//! - The 10-byte header layout and the CRC trailer are **frozen for every version**, so any
//!   reader can check the CRC of any record and name its version.
//! - **Minor** version (low nibble): may only *append* fields at the end of a payload, add new
//!   record kinds, new event codes, and new flag bits whose absence keeps the old meaning.
//!   Readers accept any minor version of their major: they read the fields they know, ignore
//!   trailing payload bytes, and skip kinds they do not know.
//! - **Major** version (high nibble): anything else (a field moved, resized or re-meant).
//!   Readers reject a record or sector of an unknown major version
//!   ([`RecordError::UnsupportedVersion`]); the journal then refuses to mount rather than
//!   erase data written by newer firmware.
//! - A format change is a semver-breaking change of this crate when it bumps the major
//!   format version, a minor crate release when it bumps the minor format version.
//!
//! - [`MAX_PAYLOAD_LEN`] (96 bytes) is part of the frozen header contract: a reader rejects a
//!   longer length field as [`RecordError::BadLength`] (a torn or foreign record), so a minor
//!   version can never add a kind longer than that — an older reader would stop at it
//!   instead of skipping it.
//!
//! # Versions
//!
//! | version | change |
//! | --- | --- |
//! | 1.0 | kinds 1–5; fault reasons 1–10; event groups `0x00`–`0x03` |
//! | 1.1 | kinds 6 curing part (95 B), 7 pause (29 B), 8 exposure state (75 B), 9 unmonitored interval (25 B), 10 curing state (82 B); fault reasons `0x20`–`0x23` (light not off, irradiance low/high, overexposure); events `0x0401`/`0x0402` paused (command/interlock), `0x0410` milestone |
//!
//! A 1.0 reader skips kinds 6–10 ([`RecordError::UnknownKind`]) and shows the new codes as
//! `Other`; nothing else changed.
//!
//! # No panics
//!
//! [`RecordView::new_checked`] checks the buffer length against the header once; every
//! accessor then reads in range (and falls back to zero rather than panic if misused).
//! [`Record`] is the value type the rest of the crate handles: [`Record::parse`],
//! [`Record::emit`], [`Record::encoded_len`].

mod codec;
mod codes;
pub mod field;
mod kinds;
pub mod payload;
mod stored;

pub(crate) use codec::{get_u16, get_u32, put_u16, put_u32};
pub use codec::{Record, RecordView};
pub use codes::{
    EventCode, FaultCode, PauseCode, SessionOutcome, StopCode, WarningCode, CURING_FAULT_BITS,
};
pub use kinds::{
    Body, Checkpoint, CuringSnapshot, Event, ExposureSnapshot, OpenSession, PartTrace, PauseRecord,
    SessionEnd, SessionStart, UnmonitoredInterval,
};
pub use stored::{
    CalibrationId, ConfigDigest, SessionId, StoredExposure, StoredIrradiance, StoredWavelength,
};

/// The magic byte that starts every record.
pub const MAGIC: u8 = 0xD7;
/// Major format version written and understood by this crate.
pub const VERSION_MAJOR: u8 = 1;
/// Minor format version written by this crate.
pub const VERSION_MINOR: u8 = 1;
/// The version byte written by this crate (major in the high nibble).
pub const VERSION: u8 = (VERSION_MAJOR << 4) | VERSION_MINOR;
/// Header length in bytes (frozen for every version).
pub const HEADER_LEN: usize = 10;
/// CRC trailer length in bytes.
pub const CRC_LEN: usize = 4;
/// Largest payload a reader of this version accepts, bytes.
pub const MAX_PAYLOAD_LEN: usize = 96;
/// Largest encoded record, bytes (header + payload + CRC).
pub const MAX_RECORD_LEN: usize = HEADER_LEN + MAX_PAYLOAD_LEN + CRC_LEN;
/// The erased flash word; never a stored CRC.
pub const ERASED_CRC: u32 = 0xFFFF_FFFF;
/// The CRC algorithm of records and sector headers: CRC-32/ISO-HDLC.
pub const CRC_ALGORITHM: crc::Algorithm<u32> = crc::CRC_32_ISO_HDLC;

const CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&CRC_ALGORITHM);

/// CRC-32/ISO-HDLC of `bytes`, mapped away from the erased value (see the module doc).
#[must_use]
pub fn stored_crc(bytes: &[u8]) -> u32 {
    avoid_erased(CRC.checksum(bytes))
}

/// Map a computed CRC away from [`ERASED_CRC`].
#[must_use]
pub const fn avoid_erased(crc: u32) -> u32 {
    if crc == ERASED_CRC {
        ERASED_CRC - 1
    } else {
        crc
    }
}

/// Why bytes are not a valid record, or a record cannot be encoded.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RecordError {
    /// The header bytes are all `0xFF`: erased flash, no record here.
    Erased,
    /// The buffer is shorter than the header says the record is.
    Truncated,
    /// The magic byte is wrong (not a record, or torn).
    BadMagic,
    /// The length field exceeds [`MAX_PAYLOAD_LEN`], or a payload is shorter than its kind
    /// needs.
    BadLength,
    /// The CRC does not match (torn or corrupted).
    BadCrc,
    /// A major format version this crate does not understand (written by newer firmware).
    UnsupportedVersion {
        /// The major version found.
        major: u8,
    },
    /// A record kind this crate does not know (from a newer minor version); the record is
    /// well-formed and can be skipped.
    UnknownKind(u8),
    /// The output buffer is too small for [`Record::emit`].
    BufferTooSmall,
}

impl core::fmt::Display for RecordError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Erased => f.write_str("erased flash, no record"),
            Self::Truncated => f.write_str("record truncated"),
            Self::BadMagic => f.write_str("bad record magic"),
            Self::BadLength => f.write_str("bad record length"),
            Self::BadCrc => f.write_str("record CRC mismatch"),
            Self::UnsupportedVersion { major } => {
                write!(f, "unsupported record format major version {major}")
            }
            Self::UnknownKind(k) => write!(f, "unknown record kind {k}"),
            Self::BufferTooSmall => f.write_str("buffer too small for the record"),
        }
    }
}

impl core::error::Error for RecordError {}

/// Record kinds of format version 1 (kinds 6 ..= 10 from version 1.1; kinds 11 ..= 255 are
/// unknown to this version and skipped).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Kind {
    /// Session start (1).
    Start = 1,
    /// Periodic checkpoint (2).
    Checkpoint = 2,
    /// Event (3).
    Event = 3,
    /// Session end (4).
    End = 4,
    /// Restatement of the open session (5).
    Restate = 5,
    /// A finished curing part (6, format 1.1).
    Part = 6,
    /// A completed pause (7, format 1.1).
    Pause = 7,
    /// An exposure monitor's state (8, format 1.1).
    ExposureState = 8,
    /// An unmonitored interval (9, format 1.1).
    Unmonitored = 9,
    /// A curing controller's state (10, format 1.1).
    CuringState = 10,
}

impl Kind {
    /// The kind for a kind byte, if known.
    #[must_use]
    pub const fn from_u8(v: u8) -> Option<Self> {
        match v {
            1 => Some(Self::Start),
            2 => Some(Self::Checkpoint),
            3 => Some(Self::Event),
            4 => Some(Self::End),
            5 => Some(Self::Restate),
            6 => Some(Self::Part),
            7 => Some(Self::Pause),
            8 => Some(Self::ExposureState),
            9 => Some(Self::Unmonitored),
            10 => Some(Self::CuringState),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests;
