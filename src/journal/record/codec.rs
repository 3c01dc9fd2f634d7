//! The codec: payloads to and from bytes ([`Body::parse`], [`Body::emit`]), whole records
//! ([`Record`]) and the checked read-only view of record bytes ([`RecordView`]), with the
//! little-endian helpers that never panic (short input reads as zero, short output is left
//! as it is).

use core::ops::Range;

use crate::acquire::reading::Ticks;

use crate::control::curing::{Label, PartId, PartIdentity, LABEL_LEN, LAMP_HISTORY};
use crate::control::exposure::{ExposureState, OffTime, STATE_SEGMENTS};

use super::codes::{EventCode, FaultCode, PauseCode, SessionOutcome, StopCode};
use super::kinds::{
    Body, Checkpoint, CuringSnapshot, Event, ExposureSnapshot, OpenSession, PartTrace, PauseRecord,
    SessionEnd, SessionStart, UnmonitoredInterval,
};
use super::stored::{
    CalibrationId, ConfigDigest, SessionId, StoredExposure, StoredIrradiance, StoredWavelength,
};
use super::MAX_PAYLOAD_LEN;
#[cfg(doc)]
use super::MAX_RECORD_LEN;
use super::{
    field, payload, stored_crc, Kind, RecordError, CRC_LEN, HEADER_LEN, MAGIC, VERSION,
    VERSION_MAJOR,
};

impl Body {
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
            Kind::Part => payload::part::LEN,
            Kind::Pause => payload::pause::LEN,
            Kind::ExposureState => payload::exposure_state::LEN,
            Kind::Unmonitored => payload::unmonitored::LEN,
            Kind::CuringState => payload::curing_state::LEN,
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
            Kind::Part => Self::Part(parse_part(p)),
            Kind::Pause => {
                use payload::pause as f;
                Self::Pause(PauseRecord {
                    session: SessionId(get_u32(p, f::SESSION)),
                    started: Ticks(get_u32(p, f::STARTED_TICK)),
                    dark_ticks: get_u32(p, f::DARK_TICKS),
                    at_pause: StoredExposure(get_u64(p, f::AT_PAUSE_UJ_PER_M2)),
                    leak: StoredExposure(get_u64(p, f::LEAK_UJ_PER_M2)),
                    cause: PauseCode::from_code(byte(p, f::CAUSE)),
                })
            }
            Kind::ExposureState => Self::ExposureState(parse_exposure(p)),
            Kind::Unmonitored => {
                use payload::unmonitored as f;
                let ticks = get_u64(p, f::OFF_TICKS);
                Self::Unmonitored(UnmonitoredInterval {
                    session: SessionId(get_u32(p, f::SESSION)),
                    at: Ticks(get_u32(p, f::TICK)),
                    tick_rate_hz: get_u32(p, f::TICK_RATE_HZ),
                    off: if byte(p, f::OFF_KNOWN) == 0 {
                        OffTime::Unknown
                    } else {
                        OffTime::Ticks(ticks)
                    },
                    restored_from: get_u32(p, f::RESTORED_FROM),
                })
            }
            Kind::CuringState => {
                use payload::curing_state as f;
                let mut ratios = [0i32; LAMP_HISTORY];
                for (i, r) in ratios.iter_mut().enumerate() {
                    let at = f::LAMP_RATIOS_PPM.start + 4 * i;
                    *r = get_i32(p, at..at + 4);
                }
                Self::CuringState(CuringSnapshot {
                    session: SessionId(get_u32(p, f::SESSION)),
                    at: Ticks(get_u32(p, f::TICK)),
                    parts_finished: get_u32(p, f::PARTS_FINISHED),
                    lamp_parts: get_u32(p, f::LAMP_PARTS),
                    // A larger count (not written by this crate) is clamped.
                    lamp_len: byte(p, f::LAMP_LEN).min(LAMP_HISTORY as u8),
                    lamp_ratios_ppm: ratios,
                    alarm: fault(byte(p, f::ALARM)),
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
            Self::Part(t) => emit_part(p, t),
            Self::Pause(x) => {
                use payload::pause as f;
                put(p, f::SESSION, &x.session.0.to_le_bytes());
                put(p, f::STARTED_TICK, &x.started.0.to_le_bytes());
                put(p, f::DARK_TICKS, &x.dark_ticks.to_le_bytes());
                put(p, f::AT_PAUSE_UJ_PER_M2, &x.at_pause.0.to_le_bytes());
                put(p, f::LEAK_UJ_PER_M2, &x.leak.0.to_le_bytes());
                set_byte(p, f::CAUSE, x.cause.code());
            }
            Self::ExposureState(x) => emit_exposure(p, x),
            Self::Unmonitored(u) => {
                use payload::unmonitored as f;
                put(p, f::SESSION, &u.session.0.to_le_bytes());
                put(p, f::TICK, &u.at.0.to_le_bytes());
                put(p, f::TICK_RATE_HZ, &u.tick_rate_hz.to_le_bytes());
                let (known, ticks) = match u.off {
                    OffTime::Unknown => (0, 0),
                    OffTime::Ticks(t) => (1, t),
                };
                put(p, f::OFF_TICKS, &ticks.to_le_bytes());
                set_byte(p, f::OFF_KNOWN, known);
                put(p, f::RESTORED_FROM, &u.restored_from.to_le_bytes());
            }
            Self::CuringState(c) => {
                use payload::curing_state as f;
                put(p, f::SESSION, &c.session.0.to_le_bytes());
                put(p, f::TICK, &c.at.0.to_le_bytes());
                put(p, f::PARTS_FINISHED, &c.parts_finished.to_le_bytes());
                put(p, f::LAMP_PARTS, &c.lamp_parts.to_le_bytes());
                set_byte(p, f::LAMP_LEN, c.lamp_len);
                set_byte(p, f::ALARM, c.alarm.map_or(0, FaultCode::code));
                for (i, r) in c.lamp_ratios_ppm.iter().enumerate() {
                    let at = f::LAMP_RATIOS_PPM.start + 4 * i;
                    put(p, at..at + 4, &r.to_le_bytes());
                }
            }
        }
        Ok(())
    }
}

/// A stored fault reason byte: 0 is none.
fn fault(c: u8) -> Option<FaultCode> {
    (c != 0).then(|| FaultCode::from_code(c))
}

fn label(p: &[u8], range: Range<usize>) -> Label {
    Label::from_bytes(get::<LABEL_LEN>(p, range))
}

fn parse_part(p: &[u8]) -> PartTrace {
    use payload::part as f;
    PartTrace {
        session: SessionId(get_u32(p, f::SESSION)),
        part: PartId(get_u32(p, f::PART_NUMBER)),
        identity: PartIdentity {
            part: label(p, f::PART_LABEL),
            lot: label(p, f::LOT_LABEL),
            recipe: label(p, f::RECIPE_LABEL),
        },
        start: Ticks(get_u32(p, f::START_TICK)),
        end: Ticks(get_u32(p, f::END_TICK)),
        delivered: StoredExposure(get_u64(p, f::DELIVERED_UJ_PER_M2)),
        target: StoredExposure(get_u64(p, f::TARGET_UJ_PER_M2)),
        after_stop_mj_per_m2: get_u32(p, f::AFTER_STOP_MJ_PER_M2),
        paused_mj_per_m2: get_u32(p, f::PAUSED_MJ_PER_M2),
        stop: StopCode::from_code(byte(p, f::STOP)),
        stop_fault: fault(byte(p, f::STOP_FAULT)),
        first_fault: fault(byte(p, f::FIRST_FAULT)),
        fault_kinds: get_u16(p, f::FAULT_KINDS),
        events: get_u16(p, f::EVENTS),
    }
}

fn emit_part(p: &mut [u8], t: &PartTrace) {
    use payload::part as f;
    put(p, f::SESSION, &t.session.0.to_le_bytes());
    put(p, f::PART_NUMBER, &t.part.0.to_le_bytes());
    put(p, f::PART_LABEL, t.identity.part.bytes());
    put(p, f::LOT_LABEL, t.identity.lot.bytes());
    put(p, f::RECIPE_LABEL, t.identity.recipe.bytes());
    put(p, f::START_TICK, &t.start.0.to_le_bytes());
    put(p, f::END_TICK, &t.end.0.to_le_bytes());
    put(p, f::DELIVERED_UJ_PER_M2, &t.delivered.0.to_le_bytes());
    put(p, f::TARGET_UJ_PER_M2, &t.target.0.to_le_bytes());
    put(
        p,
        f::AFTER_STOP_MJ_PER_M2,
        &t.after_stop_mj_per_m2.to_le_bytes(),
    );
    put(p, f::PAUSED_MJ_PER_M2, &t.paused_mj_per_m2.to_le_bytes());
    set_byte(p, f::STOP, t.stop.code());
    set_byte(p, f::STOP_FAULT, t.stop_fault.map_or(0, FaultCode::code));
    set_byte(p, f::FIRST_FAULT, t.first_fault.map_or(0, FaultCode::code));
    put(p, f::FAULT_KINDS, &t.fault_kinds.to_le_bytes());
    put(p, f::EVENTS, &t.events.to_le_bytes());
}

/// The largest decimal scale of the window segments (10¹⁰ µJ/m² units: `u64::MAX` µJ/m²
/// fits a `u32` count).
const MAX_SCALE: u8 = 10;

/// `10^e` for `e` ≤ 19 (`u64::MAX` above).
const fn pow10(e: u8) -> u64 {
    let mut v = 1u64;
    let mut i = 0;
    while i < e {
        v = match v.checked_mul(10) {
            Some(x) => x,
            None => return u64::MAX,
        };
        i += 1;
    }
    v
}

/// ⌈a / b⌉ without a panic path (`b` = 0 reads as 1).
fn div_up(a: u64, b: u64) -> u64 {
    let b = core::num::NonZeroU64::new(b).unwrap_or(core::num::NonZeroU64::MIN);
    (a / b).saturating_add(u64::from(a % b != 0))
}

fn emit_exposure(p: &mut [u8], x: &ExposureSnapshot) {
    use payload::exposure_state as f;
    let s = &x.state;
    let max = s.window_uj_per_m2.iter().copied().max().unwrap_or(0);
    let mut scale = 0u8;
    while scale < MAX_SCALE && div_up(max, pow10(scale)) > u64::from(u32::MAX) {
        scale += 1;
    }
    let unit = pow10(scale);
    put(p, f::SESSION, &x.session.0.to_le_bytes());
    put(p, f::TICK, &x.at.0.to_le_bytes());
    for (i, &uj) in s.window_uj_per_m2.iter().enumerate() {
        // Rounded up: read back, a segment is never below the one written.
        let v = u32::try_from(div_up(uj, unit)).unwrap_or(u32::MAX);
        let at = f::WINDOW.start + 4 * i;
        put(p, at..at + 4, &v.to_le_bytes());
    }
    set_byte(p, f::SCALE, scale);
    set_byte(p, f::ACTIVE, s.active);
    set_byte(p, f::LATCHED, u8::from(s.latched));
    put(p, f::SEGMENT_BUCKETS, &s.segment_buckets.to_le_bytes());
    put(p, f::BUCKET_TICKS, &s.bucket_ticks.to_le_bytes());
    put(p, f::SHIFT_UJ_PER_M2, &s.shift_uj_per_m2.to_le_bytes());
    put(
        p,
        f::SHIFT_GAP_UJ_PER_M2,
        &s.shift_gap_uj_per_m2.to_le_bytes(),
    );
    put(p, f::GAPS, &s.gaps.to_le_bytes());
}

fn parse_exposure(p: &[u8]) -> ExposureSnapshot {
    use payload::exposure_state as f;
    let unit = pow10(byte(p, f::SCALE));
    let mut window = [0u64; STATE_SEGMENTS];
    for (i, w) in window.iter_mut().enumerate() {
        let at = f::WINDOW.start + 4 * i;
        // Saturating: a scale beyond 19 (not written by this crate) reads as the maximum,
        // never as less.
        *w = u64::from(get_u32(p, at..at + 4)).saturating_mul(unit);
    }
    ExposureSnapshot {
        session: SessionId(get_u32(p, f::SESSION)),
        at: Ticks(get_u32(p, f::TICK)),
        state: ExposureState {
            window_uj_per_m2: window,
            segment_buckets: get_u32(p, f::SEGMENT_BUCKETS),
            bucket_ticks: get_u64(p, f::BUCKET_TICKS),
            shift_uj_per_m2: get_u64(p, f::SHIFT_UJ_PER_M2),
            shift_gap_uj_per_m2: get_u64(p, f::SHIFT_GAP_UJ_PER_M2),
            gaps: get_u32(p, f::GAPS),
            active: byte(p, f::ACTIVE),
            // Any non-zero byte is latched (the safe reading of a value not written here).
            latched: byte(p, f::LATCHED) != 0,
        },
    }
}

fn byte(p: &[u8], at: usize) -> u8 {
    p.get(at).copied().unwrap_or(0)
}

fn set_byte(p: &mut [u8], at: usize, v: u8) {
    if let Some(b) = p.get_mut(at) {
        *b = v;
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
