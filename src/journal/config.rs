//! Journal configuration: where the ring lives in the flash, the retention policy, and the
//! word rule of the flash type. A [`JournalConfig`] is validated once against the flash
//! geometry ([`ConfigError`] names the first problem); the rest of the journal only ever sees
//! a valid one.

use embedded_storage::nor_flash::NorFlash;

use super::geometry::Geometry;
#[cfg(doc)]
use super::{Journal, JournalError, MAX_READ_SIZE, MAX_WRITE_SIZE, MIN_SECTORS};

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
    pub(crate) base: u32,
    pub(crate) sectors: u32,
    pub(crate) retention: Retention,
    pub(crate) word_rule: WordRule,
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
