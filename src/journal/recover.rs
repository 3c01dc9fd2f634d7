//! Recovery: scan a sector record by record ([`SectorScan`]) and find the open session and
//! the newest record number from the newest retained sector that holds a record. Used by
//! the mount; reads only.

use embedded_storage::nor_flash::NorFlash;

use super::geometry::{read_sector_state, read_slot, SectorState, Slot};
use super::record::{Body, Checkpoint};
use super::{Journal, OpenSession, Res};

/// What scanning one sector found.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct SectorScan {
    pub(crate) end: u32,
    pub(crate) sealed: bool,
    /// Valid records of any kind.
    pub(crate) records: u32,
    pub(crate) last_seq: Option<u32>,
    /// The last start, restatement or end record.
    pub(crate) boundary: Option<Body>,
    /// The last checkpoint after the boundary that belongs to it (or in the whole sector if
    /// there is no boundary).
    pub(crate) checkpoint_after: Option<Checkpoint>,
}

impl<F: NorFlash> Journal<F> {
    /// Read one slot of sector `index` at `offset`.
    pub(crate) fn read_slot(&mut self, index: u32, offset: u32) -> Res<Slot, F> {
        read_slot(&mut self.flash, &self.geometry, index, offset)
    }

    /// Scan sector `index` from its first slot.
    pub(crate) fn scan_sector(&mut self, index: u32) -> Res<SectorScan, F> {
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
                            // Events and the kinds of format 1.1 open and close no session.
                            _ => {}
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
    pub(crate) fn recover(
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
}
