//! Appending and maintenance: program a record at the head with a blank check and a
//! read-back, seal the head on any doubt, open the next sector (header, then the restatement
//! of the open session), and prepare the spare sector at a checkpoint boundary
//! ([`Journal::append`], [`Journal::begin_session`], [`Journal::maintain`]).

use embedded_storage::nor_flash::NorFlash;

use super::geometry::{encode_sector_header, is_blank, read_exact, read_sector_state, SectorState};
use super::record::{Body, Record, SessionId, SessionStart, CRC_LEN, HEADER_LEN, MAX_RECORD_LEN};
use super::{
    Head, Journal, JournalError, Maintenance, OpenSession, Res, Retention, WordRule, BUF,
    MAX_WRITE_SIZE,
};

impl<F: NorFlash> Journal<F> {
    /// Whether [`Journal::maintain`] has work to do (the spare sector is needed and not
    /// prepared).
    pub fn needs_maintenance(&self) -> bool {
        self.spare_due() && self.spare_ready != Some(self.next_index())
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

    /// Whether the spare may be prepared now. Not while the head holds no record: such a
    /// head is erased and reopened in place, and a cut during that erase steps the head back
    /// one sector, which brings the spare back into the retained window. Left untouched, the
    /// spare then still holds whole sectors' worth of the oldest records; half erased, it
    /// would hold a stray prefix of them, separated from the newer records by a gap. A head
    /// that holds a record is never erased before the ring has moved on, so from then on
    /// the spare is free to erase.
    pub(crate) fn spare_due(&self) -> bool {
        self.head.is_none_or(|h| h.records > 0)
    }

    pub(crate) fn head_has_room(&self, slot: u32) -> bool {
        match self.head {
            // offset ≤ erase ≤ 2³¹ and slot ≤ 64: no overflow.
            Some(h) => !h.sealed && h.offset + slot <= self.geometry.erase,
            None => false,
        }
    }

    pub(crate) fn holds_records(&mut self, index: u32) -> Res<bool, F> {
        Ok(matches!(
            read_sector_state(&mut self.flash, &self.geometry, index)?,
            SectorState::Valid { .. }
        ))
    }

    pub(crate) fn note_appended(&mut self, body: &Body) {
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
            // Events and the kinds of format 1.1 open and close no session.
            _ => {}
        }
    }

    /// Blank-check `index`; erase (at most twice) until blank.
    pub(crate) fn prepare(&mut self, index: u32) -> Res<Maintenance, F> {
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
    pub(crate) fn open_sector(&mut self) -> Res<(), F> {
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
    pub(crate) fn write_carries(&mut self) -> Res<bool, F> {
        if let Some(open) = self.open {
            if self.program(&Body::Restate(open))?.is_none() {
                return Ok(false);
            }
        }
        self.carry_pending = false;
        Ok(true)
    }

    /// Program one record at the head. `Ok(None)`: the slot was not blank (head sealed).
    pub(crate) fn program(&mut self, body: &Body) -> Res<Option<u32>, F> {
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

    pub(crate) fn seal(&mut self) {
        if let Some(h) = self.head.as_mut() {
            h.sealed = true;
        }
    }
}
