//! Journal errors: [`JournalError`] for every operation, generic over the flash driver's
//! error, and [`MountError`], which hands the flash back when a mount fails so the caller can
//! retry or use the flash otherwise.

use super::ConfigError;
#[cfg(doc)]
use super::{Journal, Retention};

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
