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
//! | [`field::VERSION`] | version | high nibble major, low nibble minor; this crate writes [`VERSION`] (1.0) |
//! | [`field::KIND`] | kind | [`Kind`]: 1 start, 2 checkpoint, 3 event, 4 end, 5 restatement |
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
//! # No panics
//!
//! [`RecordView::new_checked`] checks the buffer length against the header once; every
//! accessor then reads in range (and falls back to zero rather than panic if misused).
//! [`Record`] is the value type the rest of the crate handles: [`Record::parse`],
//! [`Record::emit`], [`Record::encoded_len`].

use core::ops::Range;

use crate::acquire::reading::{RangeIndex, Ticks};
use crate::control::session::{ActiveLevel, DoseAmount, Fault, SessionConfig};
use crate::frontend::MAX_RANGES;
use crate::irradiance::Meter;
use crate::quantity::{Irradiance, RadiantExposure, Wavelength};

/// The magic byte that starts every record.
pub const MAGIC: u8 = 0xD7;
/// Major format version written and understood by this crate.
pub const VERSION_MAJOR: u8 = 1;
/// Minor format version written by this crate.
pub const VERSION_MINOR: u8 = 0;
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

/// Named byte ranges of the record header and trailer (offsets from the record start).
pub mod field {
    use core::ops::Range;
    /// Magic byte.
    pub const MAGIC: usize = 0;
    /// Version byte (major << 4 | minor).
    pub const VERSION: usize = 1;
    /// Record kind.
    pub const KIND: usize = 2;
    /// Flags.
    pub const FLAGS: usize = 3;
    /// Sequence number, u32 LE.
    pub const SEQUENCE: Range<usize> = 4..8;
    /// Payload length, u16 LE.
    pub const LENGTH: Range<usize> = 8..10;
    /// First payload byte.
    pub const PAYLOAD: usize = 10;
}

/// Named byte ranges of each payload (offsets from the payload start).
pub mod payload {
    /// Session start (kind 1), 40 bytes.
    pub mod start {
        use core::ops::Range;
        /// Session id (sequence number of the original start record), u32.
        pub const SESSION: Range<usize> = 0..4;
        /// Tick of the start, u32.
        pub const START_TICK: Range<usize> = 4..8;
        /// Tick rate, Hz, u32.
        pub const TICK_RATE_HZ: Range<usize> = 8..12;
        /// Configuration digest, u32.
        pub const CONFIG_DIGEST: Range<usize> = 12..16;
        /// Calibration identity chosen by the integrator, u32.
        pub const CALIBRATION_ID: Range<usize> = 16..20;
        /// Band identity: equivalent vacuum wavelength, pm, u32.
        pub const WAVELENGTH_PM: Range<usize> = 20..24;
        /// Target radiant exposure, µJ/m², u64.
        pub const TARGET_UJ_PER_M2: Range<usize> = 24..32;
        /// Checkpoint horizon (interval), ticks, u32.
        pub const INTERVAL_TICKS: Range<usize> = 32..36;
        /// Irradiance bound used for the checkpoint bound, mW/m², i32.
        pub const MAX_IRRADIANCE_MW_PER_M2: Range<usize> = 36..40;
        /// Payload length in version 1.0.
        pub const LEN: usize = 40;
    }
    /// Periodic checkpoint (kind 2), 36 bytes.
    pub mod checkpoint {
        use core::ops::Range;
        /// Session id, u32.
        pub const SESSION: Range<usize> = 0..4;
        /// Tick of the last sample integrated before the checkpoint, u32.
        pub const TICK: Range<usize> = 4..8;
        /// Dose delivered at the tick, rounded down, µJ/m², u64.
        pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
        /// Conservative bound for the coming interval, rounded up, µJ/m², u64.
        pub const BOUND_UJ_PER_M2: Range<usize> = 16..24;
        /// Minimum irradiance since the last checkpoint, mW/m², i32.
        pub const MIN_MW_PER_M2: Range<usize> = 24..28;
        /// Mean irradiance since the last checkpoint, mW/m², i32.
        pub const MEAN_MW_PER_M2: Range<usize> = 28..32;
        /// Maximum irradiance since the last checkpoint, mW/m², i32.
        pub const MAX_MW_PER_M2: Range<usize> = 32..36;
        /// Payload length in version 1.0.
        pub const LEN: usize = 36;
    }
    /// Event (kind 3), 22 bytes.
    pub mod event {
        use core::ops::Range;
        /// Session id (0 outside a session), u32.
        pub const SESSION: Range<usize> = 0..4;
        /// Tick of the event, u32.
        pub const TICK: Range<usize> = 4..8;
        /// Dose delivered at the event, rounded down, µJ/m², u64.
        pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
        /// Event code, u16 (see `EventCode`).
        pub const CODE: Range<usize> = 16..18;
        /// Code-specific detail (a gap length in ticks, a warning value), u32.
        pub const DETAIL: Range<usize> = 18..22;
        /// Payload length in version 1.0.
        pub const LEN: usize = 22;
    }
    /// Restatement of the open session (kind 5), 77 bytes: written by the journal as the
    /// first record of a sector while a session is open, so one sector is enough to recover.
    pub mod restate {
        use core::ops::Range;
        /// The session's start record payload (layout of `start`).
        pub const START: Range<usize> = 0..40;
        /// 1 if a checkpoint follows, 0 if the session has none yet, u8.
        pub const HAS_CHECKPOINT: usize = 40;
        /// The session's latest checkpoint payload (layout of `checkpoint`; zeros if none).
        pub const CHECKPOINT: Range<usize> = 41..77;
        /// Payload length in version 1.0.
        pub const LEN: usize = 77;
    }
    /// Session end (kind 4), 36 bytes.
    pub mod end {
        use core::ops::Range;
        /// Session id, u32.
        pub const SESSION: Range<usize> = 0..4;
        /// Tick of the end, u32.
        pub const TICK: Range<usize> = 4..8;
        /// Dose delivered, rounded down, µJ/m², u64.
        pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
        /// Duration of the session, ticks, u32.
        pub const ELAPSED_TICKS: Range<usize> = 16..20;
        /// Minimum irradiance over the session, mW/m², i32.
        pub const MIN_MW_PER_M2: Range<usize> = 20..24;
        /// Mean irradiance over the session, mW/m², i32.
        pub const MEAN_MW_PER_M2: Range<usize> = 24..28;
        /// Maximum irradiance over the session, mW/m², i32.
        pub const MAX_MW_PER_M2: Range<usize> = 28..32;
        /// Outcome code, u16 (see `SessionOutcome`).
        pub const OUTCOME: Range<usize> = 32..34;
        /// Number of events logged in the session, u16 (saturating).
        pub const EVENTS: Range<usize> = 34..36;
        /// Payload length in version 1.0.
        pub const LEN: usize = 36;
    }
}

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

/// Record kinds of format version 1.
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
            _ => None,
        }
    }
}

// ---------------------------------------------------------------------------------------
// Stored quantities: integers with the unit in every name.
// ---------------------------------------------------------------------------------------

/// A radiant exposure as stored on flash: whole µJ/m² (1 mJ/cm² = 10⁷ µJ/m²).
/// Range 0 ..= 2⁶⁴ − 1 µJ/m² (≈ 1.8·10¹³ J/m²).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredExposure(u64);

impl StoredExposure {
    /// Zero.
    pub const ZERO: Self = Self(0);
    /// From whole µJ/m².
    #[must_use]
    pub const fn from_uj_per_m2(uj_per_m2: u64) -> Self {
        Self(uj_per_m2)
    }
    /// In whole µJ/m².
    #[must_use]
    pub const fn uj_per_m2(self) -> u64 {
        self.0
    }
    /// As a [`RadiantExposure`] (exact below 2⁵³ µJ/m²).
    #[must_use]
    pub fn radiant_exposure(self) -> RadiantExposure {
        RadiantExposure::from_j_per_m2(self.0 as f64 * 1e-6)
    }
    /// Rounded up to whole µJ/m² (for bounds that must not undershoot). Negative values give
    /// zero; NaN and values too large give the maximum (the safe side of an upper bound).
    #[must_use]
    pub fn round_up(h: RadiantExposure) -> Self {
        let uj = h.j_per_m2() * 1e6;
        if uj.is_nan() {
            return Self(u64::MAX);
        }
        // `as` saturates: negative → 0, too large → u64::MAX.
        Self(libm::ceil(uj) as u64)
    }
    /// Rounded down to whole µJ/m² (for the delivered dose). Negative values and NaN give zero.
    #[must_use]
    pub fn round_down(h: RadiantExposure) -> Self {
        // `as` saturates and maps NaN to 0.
        Self(libm::floor(h.j_per_m2() * 1e6) as u64)
    }
    /// `self + rhs`, saturating at the maximum.
    #[must_use]
    pub const fn saturating_add(self, rhs: Self) -> Self {
        Self(self.0.saturating_add(rhs.0))
    }
}

/// An irradiance as stored on flash: whole mW/m² (1 mW/cm² = 10 000 mW/m²), signed.
/// Range ±2 147 483 647 mW/m² (≈ ±214 W/cm²).
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredIrradiance(i32);

impl StoredIrradiance {
    /// Zero.
    pub const ZERO: Self = Self(0);
    /// From whole mW/m².
    #[must_use]
    pub const fn from_mw_per_m2(mw_per_m2: i32) -> Self {
        Self(mw_per_m2)
    }
    /// In whole mW/m².
    #[must_use]
    pub const fn mw_per_m2(self) -> i32 {
        self.0
    }
    /// As an [`Irradiance`].
    #[must_use]
    pub fn irradiance(self) -> Irradiance {
        Irradiance::from_w_per_m2(f64::from(self.0) * 1e-3)
    }
    /// Rounded to the nearest mW/m², saturating; NaN gives zero.
    #[must_use]
    pub fn round_nearest(e: Irradiance) -> Self {
        Self(libm::round(e.w_per_m2() * 1e3) as i32)
    }
    /// Rounded up to whole mW/m², saturating; NaN gives the maximum.
    #[must_use]
    pub fn round_up(e: Irradiance) -> Self {
        let mw = e.w_per_m2() * 1e3;
        if mw.is_nan() {
            return Self(i32::MAX);
        }
        Self(libm::ceil(mw) as i32)
    }
}

/// A vacuum wavelength as stored on flash: whole picometres. Range 0 ..= 4.29 mm.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StoredWavelength(u32);

impl StoredWavelength {
    /// From whole picometres.
    #[must_use]
    pub const fn from_pm(pm: u32) -> Self {
        Self(pm)
    }
    /// In whole picometres.
    #[must_use]
    pub const fn pm(self) -> u32 {
        self.0
    }
    /// As a [`Wavelength`].
    #[must_use]
    pub fn wavelength(self) -> Wavelength {
        Wavelength::from_m(f64::from(self.0) * 1e-12)
    }
    /// Rounded to the nearest picometre, saturating; NaN gives zero.
    #[must_use]
    pub fn round_nearest(w: Wavelength) -> Self {
        Self(libm::round(w.m() * 1e12) as u32)
    }
}

/// Identity of a session: the sequence number of its original start record (≥ 1);
/// 0 means "outside any session".
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionId(pub u32);

/// Identity of the calibration in use (a certificate number or a calibration counter), chosen
/// by the integrator; recorded, never interpreted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CalibrationId(pub u32);

/// Digest of a configuration: CRC-32/ISO-HDLC of the canonical configuration bytes.
///
/// [`ConfigDigest::of`] defines the bytes, in this order, all little-endian:
///
/// | bytes | value |
/// | --- | --- |
/// | 4 | tick rate, Hz (`u32`) |
/// | 8 × [`MAX_RANGES`] | J/m² per integer dose unit of each range, `f64` bits (0 for absent ranges) |
/// | 8 | calibration factor, (W/m²)/A, `f64` bits |
/// | 8 | band photons per joule, `f64` bits |
/// | 1 (+ 8) | sample area: `0`, or `1` then m² as `f64` bits |
/// | 1 + 8 | target: unit tag (`0` J/m², `1` mol/m², `2` mol) then value `f64` bits |
/// | 1 + 8 | tolerance: as the target |
/// | 4 | maximum gap, ticks (`u32`) |
/// | 2 | tolerated unusable run (`u16`) |
/// | 1 + 1 | enable and alarm active levels (`0` high, `1` low) |
///
/// Dark offsets are not included: they change at run time after a dark capture.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ConfigDigest(pub u32);

impl ConfigDigest {
    /// The digest of a meter and a session configuration (see the type doc for the bytes).
    #[must_use]
    pub fn of(meter: &Meter, config: &SessionConfig) -> Self {
        let mut d = CRC.digest();
        d.update(&meter.tick_rate().hz().to_le_bytes());
        for r in 0..MAX_RANGES {
            // MAX_RANGES is small (≤ 255), so the index fits a u8.
            let k = meter.j_per_m2_per_unit(RangeIndex(r as u8));
            d.update(&k.to_bits().to_le_bytes());
        }
        d.update(&meter.calibration().w_per_m2_per_a().to_bits().to_le_bytes());
        d.update(&meter.band().photons_per_j().to_bits().to_le_bytes());
        match meter.sample_area() {
            None => d.update(&[0]),
            Some(a) => {
                d.update(&[1]);
                d.update(&a.m2().to_bits().to_le_bytes());
            }
        }
        for dose in [config.target, config.tolerance] {
            let (tag, v) = match dose {
                DoseAmount::RadiantExposure(h) => (0u8, h.j_per_m2()),
                DoseAmount::PhotonExposure(p) => (1, p.mol_per_m2()),
                DoseAmount::Photons(n) => (2, n.mol()),
            };
            d.update(&[tag]);
            d.update(&v.to_bits().to_le_bytes());
        }
        d.update(&config.max_gap_ticks.to_le_bytes());
        d.update(&config.max_unusable_run.to_le_bytes());
        let level = |l: ActiveLevel| match l {
            ActiveLevel::High => 0u8,
            ActiveLevel::Low => 1u8,
        };
        d.update(&[level(config.enable_level), level(config.alarm_level)]);
        Self(d.finalize())
    }
}

// ---------------------------------------------------------------------------------------
// Event codes.
// ---------------------------------------------------------------------------------------

/// Fault reasons as stored in an event code (`0x01NN`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FaultCode {
    /// Too many saturated readings (1).
    Saturated,
    /// Bad ADC code or unknown range (2).
    BadCode,
    /// Time went backwards (3).
    TimeBackwards,
    /// Sampling gap longer than allowed (4); the event detail is the gap in ticks.
    Gap,
    /// An output pin could not be written (5).
    Output,
    /// The sensor or its bus failed (6).
    Sensor,
    /// The firmware aborted the run (7).
    Aborted,
    /// Storage failed during a checkpoint (8).
    Storage,
    /// A plausibility check failed (9); the event detail names the check
    /// ([`crate::control::plausibility::Implausible::code`]).
    Implausible,
    /// The interlock input could not be read (10).
    InterlockPin,
    /// A reason code this version does not name (1..=255 other than the above; 0 reserved).
    Other(u8),
}

impl FaultCode {
    /// The stored reason byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::Saturated => 1,
            Self::BadCode => 2,
            Self::TimeBackwards => 3,
            Self::Gap => 4,
            Self::Output => 5,
            Self::Sensor => 6,
            Self::Aborted => 7,
            Self::Storage => 8,
            Self::Implausible => 9,
            Self::InterlockPin => 10,
            Self::Other(c) => c,
        }
    }
    /// The fault reason of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::Saturated,
            2 => Self::BadCode,
            3 => Self::TimeBackwards,
            4 => Self::Gap,
            5 => Self::Output,
            6 => Self::Sensor,
            7 => Self::Aborted,
            8 => Self::Storage,
            9 => Self::Implausible,
            10 => Self::InterlockPin,
            c => Self::Other(c),
        }
    }
    /// The code and event detail of a session fault (the gap length for a gap).
    #[must_use]
    pub const fn from_fault(f: Fault) -> (Self, u32) {
        match f {
            Fault::Saturated => (Self::Saturated, 0),
            Fault::BadCode => (Self::BadCode, 0),
            Fault::TimeBackwards => (Self::TimeBackwards, 0),
            Fault::Gap { ticks } => (Self::Gap, ticks),
            Fault::Output => (Self::Output, 0),
            Fault::Sensor => (Self::Sensor, 0),
            Fault::Aborted => (Self::Aborted, 0),
            Fault::Implausible(i) => (Self::Implausible, i.code()),
            Fault::InterlockPin => (Self::InterlockPin, 0),
        }
    }
}

/// Warning reasons as stored in an event code (`0x03NN`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WarningCode {
    /// Irradiance below the configured window (1).
    IrradianceLow,
    /// Irradiance above the configured window (2).
    IrradianceHigh,
    /// Lamp output has fallen (ageing) (3).
    LampAgeing,
    /// Calibration is due or expired (4).
    CalibrationDue,
    /// The dose approaches a limit (5).
    DoseNearLimit,
    /// A reason code this version does not name.
    Other(u8),
}

impl WarningCode {
    /// The stored reason byte.
    #[must_use]
    pub const fn code(self) -> u8 {
        match self {
            Self::IrradianceLow => 1,
            Self::IrradianceHigh => 2,
            Self::LampAgeing => 3,
            Self::CalibrationDue => 4,
            Self::DoseNearLimit => 5,
            Self::Other(c) => c,
        }
    }
    /// The warning reason of a stored byte.
    #[must_use]
    pub const fn from_code(c: u8) -> Self {
        match c {
            1 => Self::IrradianceLow,
            2 => Self::IrradianceHigh,
            3 => Self::LampAgeing,
            4 => Self::CalibrationDue,
            5 => Self::DoseNearLimit,
            c => Self::Other(c),
        }
    }
}

/// What an event record reports. Stored as a `u16`: the high byte is the group, the low byte
/// the reason. New codes may be added in a minor version; an older reader shows them as
/// [`EventCode::Other`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum EventCode {
    /// The dose target was reached; the source was switched off (`0x0001`).
    TargetReached,
    /// The dose passed target + tolerance (`0x0002`).
    Overexposed,
    /// The session was resumed after a reset; the event dose is the recovered bound
    /// (`0x0003`).
    Resumed,
    /// A fault drove the safe state (`0x01NN`).
    Fault(FaultCode),
    /// The interlock opened; exposure paused (`0x0201`).
    InterlockOpened,
    /// The interlock closed again (`0x0202`).
    InterlockClosed,
    /// A warning (`0x03NN`).
    Warning(WarningCode),
    /// Any other code.
    Other(u16),
}

impl EventCode {
    /// The stored `u16`.
    #[must_use]
    pub const fn code(self) -> u16 {
        match self {
            Self::TargetReached => 0x0001,
            Self::Overexposed => 0x0002,
            Self::Resumed => 0x0003,
            Self::Fault(f) => 0x0100 | f.code() as u16,
            Self::InterlockOpened => 0x0201,
            Self::InterlockClosed => 0x0202,
            Self::Warning(w) => 0x0300 | w.code() as u16,
            Self::Other(c) => c,
        }
    }
    /// The event of a stored `u16` (reason byte 0 in the fault and warning groups is
    /// [`EventCode::Other`]).
    #[must_use]
    pub const fn from_code(c: u16) -> Self {
        let group = (c >> 8) as u8;
        let reason = (c & 0xFF) as u8;
        match (group, reason) {
            (0, 1) => Self::TargetReached,
            (0, 2) => Self::Overexposed,
            (0, 3) => Self::Resumed,
            (1, r) if r != 0 => Self::Fault(FaultCode::from_code(r)),
            (2, 1) => Self::InterlockOpened,
            (2, 2) => Self::InterlockClosed,
            (3, r) if r != 0 => Self::Warning(WarningCode::from_code(r)),
            _ => Self::Other(c),
        }
    }
}

/// How a session ended. Stored as a `u16`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SessionOutcome {
    /// The target was met (`0x0001`).
    TargetMet,
    /// The dose passed target + tolerance (`0x0002`).
    Overexposed,
    /// The operator or firmware stopped the session before the target (`0x0003`).
    Aborted,
    /// A recovered session was not resumed (configuration changed, operator choice) (`0x0004`).
    Abandoned,
    /// A fault ended the session (`0x01NN`).
    Faulted(FaultCode),
    /// Any other code.
    Other(u16),
}

impl SessionOutcome {
    /// The stored `u16`.
    #[must_use]
    pub const fn code(self) -> u16 {
        match self {
            Self::TargetMet => 0x0001,
            Self::Overexposed => 0x0002,
            Self::Aborted => 0x0003,
            Self::Abandoned => 0x0004,
            Self::Faulted(f) => 0x0100 | f.code() as u16,
            Self::Other(c) => c,
        }
    }
    /// The outcome of a stored `u16`.
    #[must_use]
    pub const fn from_code(c: u16) -> Self {
        let group = (c >> 8) as u8;
        let reason = (c & 0xFF) as u8;
        match (group, reason) {
            (0, 1) => Self::TargetMet,
            (0, 2) => Self::Overexposed,
            (0, 3) => Self::Aborted,
            (0, 4) => Self::Abandoned,
            (1, r) if r != 0 => Self::Faulted(FaultCode::from_code(r)),
            _ => Self::Other(c),
        }
    }
}

// ---------------------------------------------------------------------------------------
// Payload value types.
// ---------------------------------------------------------------------------------------

/// Session start: what the session is, so a resumed run can prove it is the same one.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionStart {
    /// Session id (set by [`crate::journal::Journal::begin_session`]).
    pub session: SessionId,
    /// Tick of the start.
    pub start: Ticks,
    /// Tick rate of every tick in this session, Hz.
    pub tick_rate_hz: u32,
    /// Digest of the meter and session configuration.
    pub config_digest: ConfigDigest,
    /// Calibration identity.
    pub calibration: CalibrationId,
    /// Band identity: the equivalent vacuum wavelength.
    pub wavelength: StoredWavelength,
    /// Target radiant exposure, rounded up.
    pub target: StoredExposure,
    /// Checkpoint horizon, ticks: each checkpoint bound covers this long.
    pub interval_ticks: u32,
    /// Irradiance bound used for checkpoint bounds, rounded up.
    pub max_irradiance: StoredIrradiance,
}

/// Periodic checkpoint: the dose so far, a conservative bound for the coming interval, and
/// irradiance statistics since the previous checkpoint.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Checkpoint {
    /// Session id.
    pub session: SessionId,
    /// Tick of the last sample integrated before this checkpoint.
    pub at: Ticks,
    /// Dose delivered at `at`, rounded down.
    pub delivered: StoredExposure,
    /// Upper bound of the dose until the next checkpoint: delivered + max irradiance ×
    /// interval, rounded up. The value to resume from.
    pub bound: StoredExposure,
    /// Minimum irradiance since the previous checkpoint.
    pub min: StoredIrradiance,
    /// Mean irradiance since the previous checkpoint (dose difference ÷ time).
    pub mean: StoredIrradiance,
    /// Maximum irradiance since the previous checkpoint.
    pub max: StoredIrradiance,
}

/// An event during (or outside) a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Event {
    /// Session id (0 outside a session).
    pub session: SessionId,
    /// Tick of the event.
    pub at: Ticks,
    /// Dose delivered at the event, rounded down.
    pub delivered: StoredExposure,
    /// What happened.
    pub code: EventCode,
    /// Code-specific detail (gap length in ticks for [`FaultCode::Gap`]; 0 otherwise unless
    /// the integrator defines it).
    pub detail: u32,
}

/// Session end: the summary.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SessionEnd {
    /// Session id.
    pub session: SessionId,
    /// Tick of the end.
    pub at: Ticks,
    /// Dose delivered, rounded down.
    pub delivered: StoredExposure,
    /// Duration, ticks.
    pub elapsed_ticks: u32,
    /// Minimum irradiance over the session.
    pub min: StoredIrradiance,
    /// Mean irradiance over the session.
    pub mean: StoredIrradiance,
    /// Maximum irradiance over the session.
    pub max: StoredIrradiance,
    /// How it ended.
    pub outcome: SessionOutcome,
    /// Events logged during the session (saturating at 65 535).
    pub events: u16,
}

/// A session that has started and not ended: its start record and its latest checkpoint.
/// The payload of a restatement record, and what the journal recovers after a reset.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OpenSession {
    /// The start record.
    pub start: SessionStart,
    /// The latest checkpoint of this session, if any.
    pub checkpoint: Option<Checkpoint>,
}

impl OpenSession {
    /// The session id.
    #[must_use]
    pub const fn session(&self) -> SessionId {
        self.start.session
    }

    /// The dose to resume from: the bound of the latest checkpoint, or zero if no checkpoint
    /// was acknowledged (the source must not be enabled before the first one is).
    ///
    /// Never below the dose delivered before the reset, and above it by at most the session's
    /// `max_irradiance × interval` (plus 2 µJ/m² of rounding), provided the integrator
    /// followed `journal::checkpoint::Checkpointer::due`.
    #[must_use]
    pub fn dose_bound(&self) -> StoredExposure {
        self.checkpoint.map_or(StoredExposure::ZERO, |c| c.bound)
    }
}

/// The payload of a record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Body {
    /// Session start.
    Start(SessionStart),
    /// Checkpoint.
    Checkpoint(Checkpoint),
    /// Event.
    Event(Event),
    /// Session end.
    End(SessionEnd),
    /// Restatement of the open session (written by the journal).
    Restate(OpenSession),
}

impl Body {
    /// The record kind of this body.
    #[must_use]
    pub const fn kind(&self) -> Kind {
        match self {
            Self::Start(_) => Kind::Start,
            Self::Checkpoint(_) => Kind::Checkpoint,
            Self::Event(_) => Kind::Event,
            Self::End(_) => Kind::End,
            Self::Restate(_) => Kind::Restate,
        }
    }

    /// Payload length in bytes.
    #[must_use]
    pub const fn payload_len(&self) -> usize {
        match self {
            Self::Start(_) => payload::start::LEN,
            Self::Checkpoint(_) => payload::checkpoint::LEN,
            Self::Event(_) => payload::event::LEN,
            Self::End(_) => payload::end::LEN,
            Self::Restate(_) => payload::restate::LEN,
        }
    }

    /// The session this body belongs to.
    #[must_use]
    pub const fn session(&self) -> SessionId {
        match self {
            Self::Start(s) => s.session,
            Self::Checkpoint(c) => c.session,
            Self::Event(e) => e.session,
            Self::End(e) => e.session,
            Self::Restate(o) => o.start.session,
        }
    }

    /// Parse a payload of `kind`. Extra trailing bytes (a newer minor version) are ignored.
    ///
    /// # Errors
    /// [`RecordError::UnknownKind`] or [`RecordError::BadLength`] (payload too short).
    pub fn parse(kind: u8, p: &[u8]) -> Result<Self, RecordError> {
        let kind = Kind::from_u8(kind).ok_or(RecordError::UnknownKind(kind))?;
        let need = match kind {
            Kind::Start => payload::start::LEN,
            Kind::Checkpoint => payload::checkpoint::LEN,
            Kind::Event => payload::event::LEN,
            Kind::End => payload::end::LEN,
            Kind::Restate => payload::restate::LEN,
        };
        if p.len() < need {
            return Err(RecordError::BadLength);
        }
        Ok(match kind {
            Kind::Start => Self::Start(parse_start(p)),
            Kind::Checkpoint => Self::Checkpoint(parse_checkpoint(p)),
            Kind::Restate => {
                use payload::restate as f;
                let has = p.get(f::HAS_CHECKPOINT).copied().unwrap_or(0) != 0;
                Self::Restate(OpenSession {
                    start: parse_start(p.get(f::START).unwrap_or(&[])),
                    checkpoint: has.then(|| parse_checkpoint(p.get(f::CHECKPOINT).unwrap_or(&[]))),
                })
            }
            Kind::Event => {
                use payload::event as f;
                Self::Event(Event {
                    session: SessionId(get_u32(p, f::SESSION)),
                    at: Ticks(get_u32(p, f::TICK)),
                    delivered: StoredExposure(get_u64(p, f::DELIVERED_UJ_PER_M2)),
                    code: EventCode::from_code(get_u16(p, f::CODE)),
                    detail: get_u32(p, f::DETAIL),
                })
            }
            Kind::End => {
                use payload::end as f;
                Self::End(SessionEnd {
                    session: SessionId(get_u32(p, f::SESSION)),
                    at: Ticks(get_u32(p, f::TICK)),
                    delivered: StoredExposure(get_u64(p, f::DELIVERED_UJ_PER_M2)),
                    elapsed_ticks: get_u32(p, f::ELAPSED_TICKS),
                    min: StoredIrradiance(get_i32(p, f::MIN_MW_PER_M2)),
                    mean: StoredIrradiance(get_i32(p, f::MEAN_MW_PER_M2)),
                    max: StoredIrradiance(get_i32(p, f::MAX_MW_PER_M2)),
                    outcome: SessionOutcome::from_code(get_u16(p, f::OUTCOME)),
                    events: get_u16(p, f::EVENTS),
                })
            }
        })
    }

    /// Write the payload into `p` (at least [`Body::payload_len`] bytes).
    ///
    /// # Errors
    /// [`RecordError::BufferTooSmall`].
    pub fn emit(&self, p: &mut [u8]) -> Result<(), RecordError> {
        if p.len() < self.payload_len() {
            return Err(RecordError::BufferTooSmall);
        }
        match self {
            Self::Start(s) => emit_start(p, s),
            Self::Checkpoint(c) => emit_checkpoint(p, c),
            Self::Restate(o) => {
                use payload::restate as f;
                if let Some(dst) = p.get_mut(f::START) {
                    emit_start(dst, &o.start);
                }
                if let Some(b) = p.get_mut(f::HAS_CHECKPOINT) {
                    *b = u8::from(o.checkpoint.is_some());
                }
                if let Some(dst) = p.get_mut(f::CHECKPOINT) {
                    match &o.checkpoint {
                        Some(c) => emit_checkpoint(dst, c),
                        None => dst.fill(0),
                    }
                }
            }
            Self::Event(e) => {
                use payload::event as f;
                put(p, f::SESSION, &e.session.0.to_le_bytes());
                put(p, f::TICK, &e.at.0.to_le_bytes());
                put(p, f::DELIVERED_UJ_PER_M2, &e.delivered.0.to_le_bytes());
                put(p, f::CODE, &e.code.code().to_le_bytes());
                put(p, f::DETAIL, &e.detail.to_le_bytes());
            }
            Self::End(e) => {
                use payload::end as f;
                put(p, f::SESSION, &e.session.0.to_le_bytes());
                put(p, f::TICK, &e.at.0.to_le_bytes());
                put(p, f::DELIVERED_UJ_PER_M2, &e.delivered.0.to_le_bytes());
                put(p, f::ELAPSED_TICKS, &e.elapsed_ticks.to_le_bytes());
                put(p, f::MIN_MW_PER_M2, &e.min.0.to_le_bytes());
                put(p, f::MEAN_MW_PER_M2, &e.mean.0.to_le_bytes());
                put(p, f::MAX_MW_PER_M2, &e.max.0.to_le_bytes());
                put(p, f::OUTCOME, &e.outcome.code().to_le_bytes());
                put(p, f::EVENTS, &e.events.to_le_bytes());
            }
        }
        Ok(())
    }
}

fn parse_start(p: &[u8]) -> SessionStart {
    use payload::start as f;
    SessionStart {
        session: SessionId(get_u32(p, f::SESSION)),
        start: Ticks(get_u32(p, f::START_TICK)),
        tick_rate_hz: get_u32(p, f::TICK_RATE_HZ),
        config_digest: ConfigDigest(get_u32(p, f::CONFIG_DIGEST)),
        calibration: CalibrationId(get_u32(p, f::CALIBRATION_ID)),
        wavelength: StoredWavelength(get_u32(p, f::WAVELENGTH_PM)),
        target: StoredExposure(get_u64(p, f::TARGET_UJ_PER_M2)),
        interval_ticks: get_u32(p, f::INTERVAL_TICKS),
        max_irradiance: StoredIrradiance(get_i32(p, f::MAX_IRRADIANCE_MW_PER_M2)),
    }
}

fn parse_checkpoint(p: &[u8]) -> Checkpoint {
    use payload::checkpoint as f;
    Checkpoint {
        session: SessionId(get_u32(p, f::SESSION)),
        at: Ticks(get_u32(p, f::TICK)),
        delivered: StoredExposure(get_u64(p, f::DELIVERED_UJ_PER_M2)),
        bound: StoredExposure(get_u64(p, f::BOUND_UJ_PER_M2)),
        min: StoredIrradiance(get_i32(p, f::MIN_MW_PER_M2)),
        mean: StoredIrradiance(get_i32(p, f::MEAN_MW_PER_M2)),
        max: StoredIrradiance(get_i32(p, f::MAX_MW_PER_M2)),
    }
}

fn emit_start(p: &mut [u8], s: &SessionStart) {
    use payload::start as f;
    put(p, f::SESSION, &s.session.0.to_le_bytes());
    put(p, f::START_TICK, &s.start.0.to_le_bytes());
    put(p, f::TICK_RATE_HZ, &s.tick_rate_hz.to_le_bytes());
    put(p, f::CONFIG_DIGEST, &s.config_digest.0.to_le_bytes());
    put(p, f::CALIBRATION_ID, &s.calibration.0.to_le_bytes());
    put(p, f::WAVELENGTH_PM, &s.wavelength.0.to_le_bytes());
    put(p, f::TARGET_UJ_PER_M2, &s.target.0.to_le_bytes());
    put(p, f::INTERVAL_TICKS, &s.interval_ticks.to_le_bytes());
    put(
        p,
        f::MAX_IRRADIANCE_MW_PER_M2,
        &s.max_irradiance.0.to_le_bytes(),
    );
}

fn emit_checkpoint(p: &mut [u8], c: &Checkpoint) {
    use payload::checkpoint as f;
    put(p, f::SESSION, &c.session.0.to_le_bytes());
    put(p, f::TICK, &c.at.0.to_le_bytes());
    put(p, f::DELIVERED_UJ_PER_M2, &c.delivered.0.to_le_bytes());
    put(p, f::BOUND_UJ_PER_M2, &c.bound.0.to_le_bytes());
    put(p, f::MIN_MW_PER_M2, &c.min.0.to_le_bytes());
    put(p, f::MEAN_MW_PER_M2, &c.mean.0.to_le_bytes());
    put(p, f::MAX_MW_PER_M2, &c.max.0.to_le_bytes());
}

/// A whole record: sequence number and body. The value type the journal handles.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Record {
    /// Sequence number (≥ 1, +1 per record in a journal).
    pub seq: u32,
    /// The payload.
    pub body: Body,
}

impl Record {
    /// Encoded length in bytes (header + payload + CRC), ≤ [`MAX_RECORD_LEN`].
    #[must_use]
    pub const fn encoded_len(&self) -> usize {
        HEADER_LEN + self.body.payload_len() + CRC_LEN
    }

    /// Parse and check one record at the start of `bytes` (trailing bytes are ignored).
    ///
    /// # Errors
    /// Any [`RecordError`]: erased, truncated, bad magic/length/CRC, a newer major version, or
    /// an unknown kind.
    pub fn parse(bytes: &[u8]) -> Result<Self, RecordError> {
        let view = RecordView::new_checked(bytes)?;
        view.check()?;
        let body = Body::parse(view.kind(), view.payload())?;
        Ok(Self {
            seq: view.sequence(),
            body,
        })
    }

    /// Encode into the start of `buf`; returns the number of bytes written
    /// ([`Record::encoded_len`]).
    ///
    /// # Errors
    /// [`RecordError::BufferTooSmall`].
    pub fn emit(&self, buf: &mut [u8]) -> Result<usize, RecordError> {
        let total = self.encoded_len();
        let payload_len = self.body.payload_len();
        let out = buf.get_mut(..total).ok_or(RecordError::BufferTooSmall)?;
        if let Some(b) = out.get_mut(field::MAGIC) {
            *b = MAGIC;
        }
        if let Some(b) = out.get_mut(field::VERSION) {
            *b = VERSION;
        }
        if let Some(b) = out.get_mut(field::KIND) {
            *b = self.body.kind() as u8;
        }
        if let Some(b) = out.get_mut(field::FLAGS) {
            *b = 0;
        }
        put(out, field::SEQUENCE, &self.seq.to_le_bytes());
        // payload_len ≤ MAX_PAYLOAD_LEN < 2¹⁶.
        put(out, field::LENGTH, &(payload_len as u16).to_le_bytes());
        let crc_at = HEADER_LEN + payload_len;
        self.body.emit(
            out.get_mut(HEADER_LEN..crc_at)
                .ok_or(RecordError::BufferTooSmall)?,
        )?;
        let crc = stored_crc(out.get(..crc_at).ok_or(RecordError::BufferTooSmall)?);
        put(out, crc_at..total, &crc.to_le_bytes());
        Ok(total)
    }
}

/// A read-only view of a record in a byte buffer. Build it with [`RecordView::new_checked`];
/// every accessor then reads in range.
#[derive(Debug, Clone, Copy)]
pub struct RecordView<T: AsRef<[u8]>> {
    buffer: T,
}

impl<T: AsRef<[u8]>> RecordView<T> {
    /// Wrap a buffer without checking it. Accessors of an unchecked view never panic but may
    /// return zeros.
    pub const fn new_unchecked(buffer: T) -> Self {
        Self { buffer }
    }

    /// Wrap a buffer after [`RecordView::check_len`].
    ///
    /// # Errors
    /// As [`RecordView::check_len`].
    pub fn new_checked(buffer: T) -> Result<Self, RecordError> {
        let v = Self::new_unchecked(buffer);
        v.check_len()?;
        Ok(v)
    }

    /// Check that the buffer holds a whole record as far as the header says: not erased, right
    /// magic, plausible length, enough bytes. Does not check the CRC or version.
    ///
    /// # Errors
    /// [`RecordError::Truncated`], [`RecordError::Erased`], [`RecordError::BadMagic`],
    /// [`RecordError::BadLength`].
    pub fn check_len(&self) -> Result<(), RecordError> {
        let b = self.buffer.as_ref();
        let header = b.get(..HEADER_LEN).ok_or(RecordError::Truncated)?;
        if header.iter().all(|&x| x == 0xFF) {
            return Err(RecordError::Erased);
        }
        if header.get(field::MAGIC) != Some(&MAGIC) {
            return Err(RecordError::BadMagic);
        }
        let len = usize::from(get_u16(header, field::LENGTH));
        if len > MAX_PAYLOAD_LEN {
            return Err(RecordError::BadLength);
        }
        if b.len() < HEADER_LEN + len + CRC_LEN {
            return Err(RecordError::Truncated);
        }
        Ok(())
    }

    /// Check the CRC, then the major version.
    ///
    /// # Errors
    /// [`RecordError::BadCrc`] or [`RecordError::UnsupportedVersion`].
    pub fn check(&self) -> Result<(), RecordError> {
        if self.stored_crc() != self.computed_crc() {
            return Err(RecordError::BadCrc);
        }
        let major = self.version() >> 4;
        if major != VERSION_MAJOR {
            return Err(RecordError::UnsupportedVersion { major });
        }
        Ok(())
    }

    fn byte(&self, at: usize) -> u8 {
        self.buffer.as_ref().get(at).copied().unwrap_or(0)
    }

    /// The magic byte.
    #[must_use]
    pub fn magic(&self) -> u8 {
        self.byte(field::MAGIC)
    }
    /// The version byte (major << 4 | minor).
    #[must_use]
    pub fn version(&self) -> u8 {
        self.byte(field::VERSION)
    }
    /// The kind byte.
    #[must_use]
    pub fn kind(&self) -> u8 {
        self.byte(field::KIND)
    }
    /// The flags byte.
    #[must_use]
    pub fn flags(&self) -> u8 {
        self.byte(field::FLAGS)
    }
    /// The sequence number.
    #[must_use]
    pub fn sequence(&self) -> u32 {
        get_u32(self.buffer.as_ref(), field::SEQUENCE)
    }
    /// The payload length field, bytes.
    #[must_use]
    pub fn payload_len(&self) -> usize {
        usize::from(get_u16(self.buffer.as_ref(), field::LENGTH))
    }
    /// Total record length (header + payload + CRC), bytes.
    #[must_use]
    pub fn total_len(&self) -> usize {
        HEADER_LEN + self.payload_len() + CRC_LEN
    }
    /// The payload bytes (empty if the view is unchecked and short).
    #[must_use]
    pub fn payload(&self) -> &[u8] {
        let end = HEADER_LEN + self.payload_len();
        self.buffer.as_ref().get(HEADER_LEN..end).unwrap_or(&[])
    }
    /// The CRC stored in the trailer.
    #[must_use]
    pub fn stored_crc(&self) -> u32 {
        let at = HEADER_LEN + self.payload_len();
        get_u32(self.buffer.as_ref(), at..at + CRC_LEN)
    }
    /// The CRC computed over header and payload (erased-value avoiding).
    #[must_use]
    pub fn computed_crc(&self) -> u32 {
        let end = HEADER_LEN + self.payload_len();
        stored_crc(self.buffer.as_ref().get(..end).unwrap_or(&[]))
    }
}

// ---------------------------------------------------------------------------------------
// Little-endian helpers that never panic (short input reads as zero, short output is left).
// ---------------------------------------------------------------------------------------

fn put(buf: &mut [u8], range: Range<usize>, bytes: &[u8]) {
    if let Some(dst) = buf.get_mut(range) {
        for (d, s) in dst.iter_mut().zip(bytes) {
            *d = *s;
        }
    }
}

fn get<const N: usize>(buf: &[u8], range: Range<usize>) -> [u8; N] {
    let mut out = [0u8; N];
    if let Some(src) = buf.get(range) {
        for (d, s) in out.iter_mut().zip(src) {
            *d = *s;
        }
    }
    out
}

pub(crate) fn get_u16(buf: &[u8], range: Range<usize>) -> u16 {
    u16::from_le_bytes(get(buf, range))
}

pub(crate) fn get_u32(buf: &[u8], range: Range<usize>) -> u32 {
    u32::from_le_bytes(get(buf, range))
}

fn get_i32(buf: &[u8], range: Range<usize>) -> i32 {
    i32::from_le_bytes(get(buf, range))
}

fn get_u64(buf: &[u8], range: Range<usize>) -> u64 {
    u64::from_le_bytes(get(buf, range))
}

pub(crate) fn put_u32(buf: &mut [u8], range: Range<usize>, v: u32) {
    put(buf, range, &v.to_le_bytes());
}

pub(crate) fn put_u16(buf: &mut [u8], range: Range<usize>, v: u16) {
    put(buf, range, &v.to_le_bytes());
}

#[cfg(test)]
mod tests;
