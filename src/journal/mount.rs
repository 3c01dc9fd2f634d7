//! Mount: read every sector header, pick the head, scan it, recover the open session and
//! the next record number ([`Journal::mount`], [`Journal::format`]). Mounting never writes;
//! [`MountReport`] says what the headers held.

use embedded_storage::nor_flash::NorFlash;

use super::geometry::{read_sector_state, Geometry, SectorState};
use super::{ConfigError, Head, Journal, JournalConfig, JournalError, MountError, Res, WordRule};

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
}
