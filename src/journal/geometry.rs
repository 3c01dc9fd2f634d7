//! Flash geometry and the sector header: how sectors, slots and addresses relate, how a
//! sector header is encoded and classified ([`SectorState`]), and the aligned read, blank
//! check and one-slot read every other part of the journal builds on. Reads only; nothing
//! here programs or erases.

use embedded_storage::nor_flash::{NorFlash, ReadNorFlash};

use super::record::{
    self, Body, Record, RecordError, RecordView, CRC_LEN, HEADER_LEN, MAX_RECORD_LEN, VERSION,
    VERSION_MAJOR,
};
#[cfg(doc)]
use super::Journal;
use super::{
    sector_field, ConfigError, JournalConfig, JournalError, BUF, MAX_READ_SIZE, MAX_WRITE_SIZE,
    MIN_SECTORS, RESTATE_LEN, SECTOR_HEADER_LEN, SECTOR_MAGIC,
};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Geometry {
    pub(crate) base: u32,
    pub(crate) sectors: u32,
    pub(crate) erase: u32,
    pub(crate) write: u32,
    pub(crate) read: u32,
    /// Padded sector header length.
    pub(crate) header: u32,
}

pub(crate) const fn align_up(v: u32, to: u32) -> u32 {
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
    pub(crate) const fn new<F: NorFlash>(base: u32, sectors: u32) -> Result<Self, ConfigError> {
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
    pub(crate) const fn sector_addr(&self, index: u32) -> u32 {
        self.base + index * self.erase
    }

    pub(crate) const fn next(&self, index: u32) -> u32 {
        if index + 1 >= self.sectors {
            0
        } else {
            index + 1
        }
    }

    pub(crate) const fn prev(&self, index: u32) -> u32 {
        if index == 0 {
            self.sectors - 1
        } else {
            index - 1
        }
    }

    /// Padded length of a record of `len` encoded bytes (≤ MAX_RECORD_LEN).
    pub(crate) const fn slot(&self, len: usize) -> u32 {
        align_up(len as u32, self.write)
    }

    /// Records of `record_len` encoded bytes that fit a sector after the header and the
    /// restatement of an open session.
    pub(crate) const fn records_per_sector(&self, record_len: usize) -> u32 {
        let slot = self.slot(record_len);
        let carry = self.slot(RESTATE_LEN);
        let room = self.erase.saturating_sub(self.header).saturating_sub(carry);
        match room.checked_div(slot) {
            Some(n) => n,
            None => 0,
        }
    }
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
pub(crate) enum Slot {
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

pub(crate) fn encode_sector_header(buf: &mut [u8], seq: u32, first_record: u32) {
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

pub(crate) fn read_sector_state<F: ReadNorFlash>(
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

pub(crate) fn read_slot<F: ReadNorFlash>(
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
pub(crate) fn read_exact<F: ReadNorFlash>(
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

pub(crate) fn is_blank<F: ReadNorFlash>(
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
