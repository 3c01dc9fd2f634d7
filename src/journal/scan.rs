//! Walking the retained records: [`Journal::scan`] yields each retained sector, each valid
//! record with its [`Location`], and where and why each sector's records end ([`ScanStop`]);
//! [`Records`] is the record-only view of it ([`Journal::records`]). Reads only.

use embedded_storage::nor_flash::NorFlash;

use super::geometry::{read_sector_state, SectorState, Slot};
use super::record::Record;
use super::{Journal, JournalError, Res};

/// Iterator over the retained records, oldest first. See [`Journal::records`].
#[derive(Debug)]
pub struct Records<'a, F: NorFlash> {
    pub(crate) scan: Scan<'a, F>,
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
    pub(crate) fn new(journal: &'a mut Journal<F>) -> Self {
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
