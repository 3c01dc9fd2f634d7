//! Unit tests of [`super`].

use super::*;
use crate::acquire::reading::Ticks;
use crate::quantity::{Irradiance, RadiantExposure, Wavelength};

fn start() -> Record {
    Record {
        seq: 1,
        body: Body::Start(SessionStart {
            session: SessionId(1),
            start: Ticks(0x0000_1000),
            tick_rate_hz: 1000,
            config_digest: ConfigDigest(0xA1B2_C3D4),
            calibration: CalibrationId(42),
            wavelength: StoredWavelength::from_pm(365_000),
            target: StoredExposure::from_uj_per_m2(1_000_000_000),
            interval_ticks: 1000,
            max_irradiance: StoredIrradiance::from_mw_per_m2(500_000),
        }),
    }
}

fn checkpoint() -> Record {
    Record {
        seq: 2,
        body: Body::Checkpoint(Checkpoint {
            session: SessionId(1),
            at: Ticks(0x0000_13E8),
            delivered: StoredExposure::from_uj_per_m2(100_000_000),
            bound: StoredExposure::from_uj_per_m2(600_000_000),
            min: StoredIrradiance::from_mw_per_m2(-5),
            mean: StoredIrradiance::from_mw_per_m2(100_000),
            max: StoredIrradiance::from_mw_per_m2(120_000),
        }),
    }
}

fn event() -> Record {
    Record {
        seq: 3,
        body: Body::Event(Event {
            session: SessionId(1),
            at: Ticks(0x0000_2000),
            delivered: StoredExposure::from_uj_per_m2(200_000_000),
            code: EventCode::Fault(FaultCode::Gap),
            detail: 250,
        }),
    }
}

fn end() -> Record {
    Record {
        seq: 4,
        body: Body::End(SessionEnd {
            session: SessionId(1),
            at: Ticks(0x0000_3000),
            delivered: StoredExposure::from_uj_per_m2(1_000_000_123),
            elapsed_ticks: 0x2000,
            min: StoredIrradiance::from_mw_per_m2(0),
            mean: StoredIrradiance::from_mw_per_m2(99_999),
            max: StoredIrradiance::from_mw_per_m2(120_001),
            outcome: SessionOutcome::TargetMet,
            events: 2,
        }),
    }
}

fn encode(r: &Record) -> heapless::Vec<u8, MAX_RECORD_LEN> {
    let mut buf = [0u8; MAX_RECORD_LEN];
    let n = r.emit(&mut buf).unwrap();
    heapless::Vec::from_slice(&buf[..n]).unwrap()
}

// Golden bytes. The layout is the contract in the module doc; every CRC below was
// computed with an independent implementation (Python `zlib.crc32`, which is
// CRC-32/ISO-HDLC) over the bytes before it.
#[test]
fn golden_start() {
    #[rustfmt::skip]
    let expected: [u8; 54] = [
        0xD7, 0x11, 0x01, 0x00, 0x01, 0x00, 0x00, 0x00, 0x28, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x10, 0x00, 0x00, // start tick 0x1000
        0xE8, 0x03, 0x00, 0x00, // 1000 Hz
        0xD4, 0xC3, 0xB2, 0xA1, // digest
        0x2A, 0x00, 0x00, 0x00, // calibration 42
        0xC8, 0x91, 0x05, 0x00, // 365 000 pm
        0x00, 0xCA, 0x9A, 0x3B, 0x00, 0x00, 0x00, 0x00, // 10^9 µJ/m²
        0xE8, 0x03, 0x00, 0x00, // interval 1000 ticks
        0x20, 0xA1, 0x07, 0x00, // 500 000 mW/m²
        0x85, 0x7A, 0x59, 0xD7, // CRC (version 1.1)
    ];
    assert_eq!(encode(&start()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), start());
    // The same record as format 1.0 wrote it (version byte 0x10, its own CRC) still reads.
    let mut v1_0 = expected;
    v1_0[field::VERSION] = 0x10;
    let n = v1_0.len();
    v1_0[n - 4..].copy_from_slice(&[0x96, 0x55, 0x01, 0x58]);
    assert_eq!(Record::parse(&v1_0).unwrap(), start());
}

#[test]
fn golden_checkpoint() {
    #[rustfmt::skip]
    let expected: [u8; 50] = [
        0xD7, 0x11, 0x02, 0x00, 0x02, 0x00, 0x00, 0x00, 0x24, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0xE8, 0x13, 0x00, 0x00, // tick 0x13E8
        0x00, 0xE1, 0xF5, 0x05, 0x00, 0x00, 0x00, 0x00, // 10^8 µJ/m²
        0x00, 0x46, 0xC3, 0x23, 0x00, 0x00, 0x00, 0x00, // 6·10^8 µJ/m²
        0xFB, 0xFF, 0xFF, 0xFF, // min −5 mW/m²
        0xA0, 0x86, 0x01, 0x00, // mean 100 000
        0xC0, 0xD4, 0x01, 0x00, // max 120 000
        0xE2, 0x28, 0xF4, 0xA8, // CRC (version 1.1)
    ];
    assert_eq!(encode(&checkpoint()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), checkpoint());
    // The same record as format 1.0 wrote it (version byte 0x10, its own CRC) still reads.
    let mut v1_0 = expected;
    v1_0[field::VERSION] = 0x10;
    let n = v1_0.len();
    v1_0[n - 4..].copy_from_slice(&[0xAE, 0x00, 0x62, 0x0B]);
    assert_eq!(Record::parse(&v1_0).unwrap(), checkpoint());
}

#[test]
fn golden_event() {
    #[rustfmt::skip]
    let expected: [u8; 36] = [
        0xD7, 0x11, 0x03, 0x00, 0x03, 0x00, 0x00, 0x00, 0x16, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x20, 0x00, 0x00, // tick 0x2000
        0x00, 0xC2, 0xEB, 0x0B, 0x00, 0x00, 0x00, 0x00, // 2·10^8 µJ/m²
        0x04, 0x01, // fault: gap
        0xFA, 0x00, 0x00, 0x00, // 250 ticks
        0xA4, 0x65, 0xE4, 0x5B, // CRC (version 1.1)
    ];
    assert_eq!(encode(&event()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), event());
    // The same record as format 1.0 wrote it (version byte 0x10, its own CRC) still reads.
    let mut v1_0 = expected;
    v1_0[field::VERSION] = 0x10;
    let n = v1_0.len();
    v1_0[n - 4..].copy_from_slice(&[0x75, 0x8D, 0x03, 0x55]);
    assert_eq!(Record::parse(&v1_0).unwrap(), event());
}

#[test]
fn golden_end() {
    #[rustfmt::skip]
    let expected: [u8; 50] = [
        0xD7, 0x11, 0x04, 0x00, 0x04, 0x00, 0x00, 0x00, 0x24, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x30, 0x00, 0x00, // tick 0x3000
        0x7B, 0xCA, 0x9A, 0x3B, 0x00, 0x00, 0x00, 0x00, // 1 000 000 123 µJ/m²
        0x00, 0x20, 0x00, 0x00, // elapsed 0x2000
        0x00, 0x00, 0x00, 0x00, // min 0
        0x9F, 0x86, 0x01, 0x00, // mean 99 999
        0xC1, 0xD4, 0x01, 0x00, // max 120 001
        0x01, 0x00, // target met
        0x02, 0x00, // 2 events
        0xC2, 0xE8, 0x6D, 0xC6, // CRC (version 1.1)
    ];
    assert_eq!(encode(&end()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), end());
    // The same record as format 1.0 wrote it (version byte 0x10, its own CRC) still reads.
    let mut v1_0 = expected;
    v1_0[field::VERSION] = 0x10;
    let n = v1_0.len();
    v1_0[n - 4..].copy_from_slice(&[0x8E, 0xC0, 0xFB, 0x65]);
    assert_eq!(Record::parse(&v1_0).unwrap(), end());
}

#[test]
fn golden_restate() {
    let (Body::Start(st), Body::Checkpoint(cp)) = (start().body, checkpoint().body) else {
        unreachable!()
    };
    let r = Record {
        seq: 5,
        body: Body::Restate(OpenSession {
            start: st,
            checkpoint: Some(cp),
        }),
    };
    #[rustfmt::skip]
    let expected: [u8; 91] = [
        0xD7, 0x11, 0x05, 0x00, 0x05, 0x00, 0x00, 0x00, 0x4D, 0x00, // header, 77 bytes
        // the start payload of `golden_start`
        0x01, 0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x00, 0xE8, 0x03, 0x00, 0x00,
        0xD4, 0xC3, 0xB2, 0xA1, 0x2A, 0x00, 0x00, 0x00, 0xC8, 0x91, 0x05, 0x00,
        0x00, 0xCA, 0x9A, 0x3B, 0x00, 0x00, 0x00, 0x00, 0xE8, 0x03, 0x00, 0x00,
        0x20, 0xA1, 0x07, 0x00,
        0x01, // has a checkpoint
        // the checkpoint payload of `golden_checkpoint`
        0x01, 0x00, 0x00, 0x00, 0xE8, 0x13, 0x00, 0x00, 0x00, 0xE1, 0xF5, 0x05,
        0x00, 0x00, 0x00, 0x00, 0x00, 0x46, 0xC3, 0x23, 0x00, 0x00, 0x00, 0x00,
        0xFB, 0xFF, 0xFF, 0xFF, 0xA0, 0x86, 0x01, 0x00, 0xC0, 0xD4, 0x01, 0x00,
        0x1A, 0xE6, 0x64, 0xE0, // CRC (version 1.1)
    ];
    assert_eq!(encode(&r).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), r);
    // The same record as format 1.0 wrote it (version byte 0x10, its own CRC) still reads.
    let mut v1_0 = expected;
    v1_0[field::VERSION] = 0x10;
    let n = v1_0.len();
    v1_0[n - 4..].copy_from_slice(&[0x70, 0xD4, 0xD0, 0x7A]);
    assert_eq!(Record::parse(&v1_0).unwrap(), r);
    let none = Record {
        seq: 6,
        body: Body::Restate(OpenSession {
            start: st,
            checkpoint: None,
        }),
    };
    assert_eq!(Record::parse(&encode(&none)).unwrap(), none);
}

#[test]
fn crc_algorithm_check_value() {
    // CRC-32/ISO-HDLC check value 0xCBF43926 for "123456789" (CRC RevEng catalogue,
    // "CRC-32/ISO-HDLC"; also the crc-catalog crate's `check` field).
    assert_eq!(CRC.checksum(b"123456789"), 0xCBF4_3926);
}

#[test]
fn erased_and_torn_bytes_are_rejected() {
    let erased = [0xFFu8; MAX_RECORD_LEN];
    assert_eq!(Record::parse(&erased), Err(RecordError::Erased));
    let good = encode(&event());
    for cut in 0..good.len() {
        let mut torn = [0xFFu8; MAX_RECORD_LEN];
        torn[..cut].copy_from_slice(&good[..cut]);
        assert!(Record::parse(&torn).is_err(), "torn at {cut} parsed");
    }
    let mut flipped = good.clone();
    flipped[12] ^= 0x10;
    assert_eq!(Record::parse(&flipped), Err(RecordError::BadCrc));
    assert_eq!(
        Record::parse(&good[..good.len() - 1]),
        Err(RecordError::Truncated)
    );
}

#[test]
fn newer_major_is_named_and_newer_minor_is_read() {
    let mut rec = encode(&checkpoint());
    rec[field::VERSION] = 0x20;
    let n = rec.len();
    let crc = stored_crc(&rec[..n - 4]);
    rec[n - 4..].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(
        Record::parse(&rec),
        Err(RecordError::UnsupportedVersion { major: 2 })
    );
    // Version 1.2 with two extra payload bytes: read, extra ignored.
    let mut buf = [0u8; MAX_RECORD_LEN];
    let old = encode(&checkpoint());
    let plen = payload::checkpoint::LEN + 2;
    buf[..HEADER_LEN + payload::checkpoint::LEN]
        .copy_from_slice(&old[..HEADER_LEN + payload::checkpoint::LEN]);
    buf[field::VERSION] = 0x12;
    buf[8..10].copy_from_slice(&(plen as u16).to_le_bytes());
    buf[HEADER_LEN + plen - 2] = 0xAB;
    buf[HEADER_LEN + plen - 1] = 0xCD;
    let crc = stored_crc(&buf[..HEADER_LEN + plen]);
    buf[HEADER_LEN + plen..HEADER_LEN + plen + 4].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(Record::parse(&buf).unwrap(), checkpoint());
    // An unknown kind of this major is well-formed and named.
    buf[field::KIND] = 200;
    let crc = stored_crc(&buf[..HEADER_LEN + plen]);
    buf[HEADER_LEN + plen..HEADER_LEN + plen + 4].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(Record::parse(&buf), Err(RecordError::UnknownKind(200)));
}

#[test]
fn stored_crc_is_never_erased() {
    assert_eq!(avoid_erased(ERASED_CRC), 0xFFFF_FFFE);
    assert_eq!(avoid_erased(0x1234_5678), 0x1234_5678);
}

#[test]
fn unchecked_view_accessors_do_not_panic() {
    let v = RecordView::new_unchecked(&[0xD7u8, 0x10][..]);
    assert_eq!(v.sequence(), 0);
    assert_eq!(v.payload(), &[] as &[u8]);
    assert_eq!(v.kind(), 0);
    let _ = v.computed_crc();
    assert_eq!(
        RecordView::new_checked(&[0u8; 3][..]).err(),
        Some(RecordError::Truncated)
    );
}

#[test]
fn stored_quantities_round_in_the_stated_direction() {
    let h = RadiantExposure::from_j_per_m2(1.000_000_4);
    assert_eq!(StoredExposure::round_up(h).uj_per_m2(), 1_000_001);
    assert_eq!(StoredExposure::round_down(h).uj_per_m2(), 1_000_000);
    assert_eq!(
        StoredExposure::round_up(RadiantExposure::from_j_per_m2(f64::NAN)).uj_per_m2(),
        u64::MAX
    );
    assert_eq!(
        StoredExposure::round_down(RadiantExposure::from_j_per_m2(-3.0)).uj_per_m2(),
        0
    );
    assert_eq!(
        StoredIrradiance::round_nearest(Irradiance::from_w_per_m2(1e9)).mw_per_m2(),
        i32::MAX
    );
    assert_eq!(
        StoredWavelength::round_nearest(Wavelength::from_nm(365.0)).pm(),
        365_000
    );
}

#[test]
fn event_codes_are_canonical() {
    for c in 0..=u16::MAX {
        assert_eq!(EventCode::from_code(c).code(), c);
        assert_eq!(SessionOutcome::from_code(c).code(), c);
    }
    assert_eq!(
        EventCode::from_code(0x0104),
        EventCode::Fault(FaultCode::Gap)
    );
    assert_eq!(EventCode::Warning(WarningCode::LampAgeing).code(), 0x0303);
}

// ---- format 1.1 kinds -------------------------------------------------------------------

use crate::control::curing::{
    CuringFault, CuringState, Label, LabelError, PartId, PartIdentity, LAMP_HISTORY,
};
use crate::control::exposure::{ExposureState, OffTime};

fn part_record() -> Record {
    Record {
        seq: 7,
        body: Body::Part(PartTrace {
            session: SessionId(1),
            part: PartId(12),
            identity: PartIdentity {
                part: Label::new("P-0012").unwrap(),
                lot: Label::new("LOT 2026-11").unwrap(),
                recipe: Label::new("UVA-RESIN-7").unwrap(),
            },
            start: Ticks(0x1000),
            end: Ticks(0x3000),
            delivered: StoredExposure::from_uj_per_m2(1_234_567_890),
            target: StoredExposure::from_uj_per_m2(1_200_000_000),
            after_stop_mj_per_m2: 35,
            paused_mj_per_m2: 0,
            stop: StopCode::Fault,
            stop_fault: Some(FaultCode::LightNotOff),
            first_fault: Some(FaultCode::IrradianceLow),
            fault_kinds: 0x0009,
            events: 7,
        }),
    }
}

fn pause_record() -> Record {
    Record {
        seq: 8,
        body: Body::Pause(PauseRecord {
            session: SessionId(1),
            started: Ticks(0x2000),
            dark_ticks: 1500,
            at_pause: StoredExposure::from_uj_per_m2(500_000_000),
            leak: StoredExposure::from_uj_per_m2(1234),
            cause: PauseCode::Interlock,
        }),
    }
}

fn exposure_state() -> ExposureState {
    ExposureState {
        window_uj_per_m2: [10_000_000, 5_000_000, 0, 0, 0, 0, 0, 1],
        segment_buckets: 61,
        bucket_ticks: 60_000,
        shift_uj_per_m2: 15_000_001,
        shift_gap_uj_per_m2: 2_000,
        gaps: 1,
        active: 1,
        latched: true,
    }
}

fn exposure_record() -> Record {
    Record {
        seq: 9,
        body: Body::ExposureState(ExposureSnapshot {
            session: SessionId(0),
            at: Ticks(0x4000),
            state: exposure_state(),
        }),
    }
}

fn unmonitored_record() -> Record {
    Record {
        seq: 10,
        body: Body::Unmonitored(UnmonitoredInterval {
            session: SessionId(0),
            at: Ticks(0x10),
            tick_rate_hz: 1000,
            off: OffTime::Ticks(3_600_000),
            restored_from: 9,
        }),
    }
}

fn curing_record() -> Record {
    let mut ratios = [0i32; LAMP_HISTORY];
    ratios[..3].copy_from_slice(&[1_000_000, 987_654, 950_001]);
    Record {
        seq: 11,
        body: Body::CuringState(CuringSnapshot {
            session: SessionId(0),
            at: Ticks(0x5000),
            parts_finished: 120,
            lamp_parts: 118,
            lamp_len: 3,
            lamp_ratios_ppm: ratios,
            alarm: Some(FaultCode::LightNotOff),
        }),
    }
}

// Golden bytes of the format 1.1 kinds: the bytes were laid out by a Python script from the
// payload tables in `payload.rs` (not from this crate's encoder), the CRC by `zlib.crc32`.
#[test]
fn golden_part() {
    #[rustfmt::skip]
    let expected: [u8; 109] = [
        0xD7, 0x11, 0x06, 0x00, 0x07, 0x00, 0x00, 0x00, 0x5F, 0x00, // header, 95 bytes
        0x01, 0x00, 0x00, 0x00, // session 1
        0x0C, 0x00, 0x00, 0x00, // part number 12
        0x50, 0x2D, 0x30, 0x30, 0x31, 0x32, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // part "P-0012"
        0x4C, 0x4F, 0x54, 0x20, 0x32, 0x30, 0x32, 0x36, 0x2D, 0x31, 0x31, 0x00, 0x00, 0x00, 0x00, 0x00, // lot "LOT 2026-11"
        0x55, 0x56, 0x41, 0x2D, 0x52, 0x45, 0x53, 0x49, 0x4E, 0x2D, 0x37, 0x00, 0x00, 0x00, 0x00, 0x00, // recipe "UVA-RESIN-7"
        0x00, 0x10, 0x00, 0x00, // start tick
        0x00, 0x30, 0x00, 0x00, // end tick
        0xD2, 0x02, 0x96, 0x49, 0x00, 0x00, 0x00, 0x00, // delivered µJ/m²
        0x00, 0x8C, 0x86, 0x47, 0x00, 0x00, 0x00, 0x00, // target µJ/m²
        0x23, 0x00, 0x00, 0x00, // after stop 35 mJ/m²
        0x00, 0x00, 0x00, 0x00, // paused 0
        0x03, // stop: fault
        0x20, // stop fault: light not off
        0x21, // first fault: irradiance low
        0x09, 0x00, // fault kinds: irradiance low, light not off
        0x07, 0x00, // 7 events
        0x9C, 0x73, 0x73, 0xC1, // CRC (Python zlib.crc32)
    ];
    assert_eq!(encode(&part_record()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), part_record());
}

#[test]
fn golden_pause() {
    #[rustfmt::skip]
    let expected: [u8; 43] = [
        0xD7, 0x11, 0x07, 0x00, 0x08, 0x00, 0x00, 0x00, 0x1D, 0x00, // header, 29 bytes
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x20, 0x00, 0x00, // pause began
        0xDC, 0x05, 0x00, 0x00, // dark 1500 ticks
        0x00, 0x65, 0xCD, 0x1D, 0x00, 0x00, 0x00, 0x00, // dose at pause
        0xD2, 0x04, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // leak 1234 µJ/m²
        0x02, // cause: interlock
        0xEE, 0x30, 0x91, 0xD5, // CRC (Python zlib.crc32)
    ];
    assert_eq!(encode(&pause_record()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), pause_record());
}

#[test]
fn golden_exposure_state() {
    #[rustfmt::skip]
    let expected: [u8; 89] = [
        0xD7, 0x11, 0x08, 0x00, 0x09, 0x00, 0x00, 0x00, 0x4B, 0x00, // header, 75 bytes
        0x00, 0x00, 0x00, 0x00, // session 0
        0x00, 0x40, 0x00, 0x00, // tick
        0x80, 0x96, 0x98, 0x00, 0x40, 0x4B, 0x4C, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x01, 0x00, 0x00, 0x00, // window, scale 0: µJ/m²
        0x00, // scale 0
        0x01, // level 0 active
        0x01, // latched
        0x3D, 0x00, 0x00, 0x00, // 61 buckets per segment
        0x60, 0xEA, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // bucket 60 000 ticks
        0xC1, 0xE1, 0xE4, 0x00, 0x00, 0x00, 0x00, 0x00, // shift µJ/m²
        0xD0, 0x07, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // of which gaps
        0x01, 0x00, 0x00, 0x00, // 1 gap
        0x85, 0x5C, 0xCB, 0x36, // CRC (Python zlib.crc32)
    ];
    assert_eq!(encode(&exposure_record()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), exposure_record());
}

#[test]
fn golden_unmonitored() {
    #[rustfmt::skip]
    let expected: [u8; 39] = [
        0xD7, 0x11, 0x09, 0x00, 0x0A, 0x00, 0x00, 0x00, 0x19, 0x00, // header, 25 bytes
        0x00, 0x00, 0x00, 0x00, // session 0
        0x10, 0x00, 0x00, 0x00, // boot tick
        0xE8, 0x03, 0x00, 0x00, // 1000 Hz
        0x80, 0xEE, 0x36, 0x00, 0x00, 0x00, 0x00, 0x00, // off 3 600 000 ticks
        0x01, // known
        0x09, 0x00, 0x00, 0x00, // restored from record 9
        0xD8, 0x8E, 0x17, 0xBC, // CRC (Python zlib.crc32)
    ];
    assert_eq!(encode(&unmonitored_record()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), unmonitored_record());
}

#[test]
fn golden_curing_state() {
    #[rustfmt::skip]
    let expected: [u8; 96] = [
        0xD7, 0x11, 0x0A, 0x00, 0x0B, 0x00, 0x00, 0x00, 0x52, 0x00, // header, 82 bytes
        0x00, 0x00, 0x00, 0x00, // session 0
        0x00, 0x50, 0x00, 0x00, // tick
        0x78, 0x00, 0x00, 0x00, // 120 parts finished
        0x76, 0x00, 0x00, 0x00, // 118 measured
        0x03, // 3 ratios
        0x20, // alarm latched: light not off
        0x40, 0x42, 0x0F, 0x00, 0x06, 0x12, 0x0F, 0x00, 0xF1, 0x7E, 0x0E, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, // ratios ppm
        0xAD, 0xB3, 0xE5, 0x0E, // CRC (Python zlib.crc32)
    ];
    assert_eq!(encode(&curing_record()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), curing_record());
}

#[test]
fn new_kinds_fit_the_frozen_payload_limit() {
    for len in [
        payload::part::LEN,
        payload::pause::LEN,
        payload::exposure_state::LEN,
        payload::unmonitored::LEN,
        payload::curing_state::LEN,
    ] {
        assert!(len <= MAX_PAYLOAD_LEN, "{len}");
    }
    for r in [
        part_record(),
        pause_record(),
        exposure_record(),
        unmonitored_record(),
        curing_record(),
    ] {
        assert_eq!(Record::parse(&encode(&r)).unwrap(), r);
        assert_eq!(r.body.kind() as u8, encode(&r)[field::KIND]);
    }
}

#[test]
fn a_format_1_0_reader_skips_the_new_kinds() {
    // What a 1.0 reader sees: a well-formed record of a kind it does not know. Here the kind
    // test of `Body::parse` is applied with the 1.0 kind list (1 ..= 5).
    for r in [
        part_record(),
        pause_record(),
        exposure_record(),
        unmonitored_record(),
        curing_record(),
    ] {
        let bytes = encode(&r);
        let view = RecordView::new_checked(&bytes[..]).unwrap();
        assert_eq!(view.check(), Ok(()));
        assert!(view.kind() > Kind::Restate as u8 && view.kind() < 15);
        assert!(view.payload_len() <= MAX_PAYLOAD_LEN);
    }
}

#[test]
fn exposure_segments_round_up_in_a_coarser_unit_and_never_down() {
    let mut s = exposure_state();
    // 5·10¹² µJ/m² does not fit a u32 of µJ/m²: scale 10³ (5·10⁹ > 2³²) → 10⁴.
    s.window_uj_per_m2 = [
        5_000_000_000_001,
        1,
        0,
        4_294_967_296,
        9_999,
        10_000,
        10_001,
        0,
    ];
    let r = Record {
        seq: 1,
        body: Body::ExposureState(ExposureSnapshot {
            session: SessionId(0),
            at: Ticks(0),
            state: s,
        }),
    };
    let bytes = encode(&r);
    assert_eq!(bytes[HEADER_LEN + payload::exposure_state::SCALE], 4);
    let Body::ExposureState(back) = Record::parse(&bytes).unwrap().body else {
        unreachable!("kind")
    };
    for (w, b) in s.window_uj_per_m2.iter().zip(back.state.window_uj_per_m2) {
        assert!(b >= *w, "{b} < {w}");
        assert!(b - w < 10_000, "{b} − {w} exceeds one unit");
    }
    assert_eq!(
        back.state.window_uj_per_m2,
        [
            5_000_000_010_000,
            10_000,
            0,
            4_294_970_000,
            10_000,
            10_000,
            20_000,
            0
        ]
    );
    // Everything else is exact.
    assert_eq!(back.state.shift_uj_per_m2, s.shift_uj_per_m2);
    assert_eq!(back.state.latched, s.latched);
    // The largest amounts use scale 10 and still read back no lower.
    s.window_uj_per_m2 = [u64::MAX; 8];
    let r = Record {
        seq: 1,
        body: Body::ExposureState(ExposureSnapshot {
            session: SessionId(0),
            at: Ticks(0),
            state: s,
        }),
    };
    let Body::ExposureState(back) = Record::parse(&encode(&r)).unwrap().body else {
        unreachable!("kind")
    };
    assert_eq!(back.state.window_uj_per_m2, [u64::MAX; 8]);
}

#[test]
fn curing_snapshot_keeps_the_latch_and_rounds_ratios_down() {
    let mut ratios = [0.0; LAMP_HISTORY];
    ratios[..2].copy_from_slice(&[0.987_654_32, 1.25]);
    let state = CuringState {
        parts_finished: 7,
        lamp_parts: 5,
        lamp_ratios: ratios,
        lamp_len: 2,
        alarm: Some(CuringFault::Gap { ticks: 40 }),
    };
    let snap = CuringSnapshot::of(SessionId(0), Ticks(1), &state);
    assert_eq!(snap.lamp_ratios_ppm[..2], [987_654, 1_250_000]);
    let back = snap.state();
    assert!(back.lamp_ratios[0] <= ratios[0]);
    assert_eq!(back.lamp_len, 2);
    assert_eq!(back.parts_finished, 7);
    // The gap length is not kept; the latch and its kind are.
    assert_eq!(back.alarm, Some(CuringFault::Gap { ticks: 0 }));
    // A latched reason that is not a curing fault still comes back latched.
    let foreign = CuringSnapshot {
        alarm: Some(FaultCode::Other(0x7F)),
        ..snap
    };
    assert_eq!(foreign.state().alarm, Some(CuringFault::Aborted));
}

#[test]
fn every_curing_fault_has_its_own_code_and_bit() {
    let all = [
        CuringFault::IrradianceLow,
        CuringFault::IrradianceHigh,
        CuringFault::Overexposure,
        CuringFault::LightNotOff,
        CuringFault::InterlockPin,
        CuringFault::Output,
        CuringFault::Saturated,
        CuringFault::BadCode,
        CuringFault::TimeBackwards,
        CuringFault::Gap { ticks: 9 },
        CuringFault::Sensor,
        CuringFault::Aborted,
    ];
    let mut codes = heapless::Vec::<u8, 16>::new();
    for f in all {
        let (code, detail) = FaultCode::from_curing_fault(f);
        assert!(!matches!(code, FaultCode::Other(_)), "{f:?}");
        assert_eq!(FaultCode::from_code(code.code()), code);
        assert_eq!(code.to_curing_fault(detail), Some(f));
        assert_eq!(CURING_FAULT_BITS[f.kind_index() as usize], code);
        assert!(!codes.contains(&code.code()));
        codes.push(code.code()).unwrap();
    }
    assert_eq!(FaultCode::LightNotOff.code(), 0x20);
    assert_eq!(EventCode::Fault(FaultCode::IrradianceHigh).code(), 0x0122);
    assert_eq!(EventCode::PausedByInterlock.code(), 0x0402);
    assert_eq!(EventCode::from_code(0x0410), EventCode::Milestone);
}

#[test]
fn labels_are_checked_and_foreign_bytes_are_kept() {
    assert_eq!(Label::new("ABCDEFGHIJKLMNOPQ"), Err(LabelError::TooLong));
    assert_eq!(Label::new("A,B"), Err(LabelError::Character(1)));
    assert_eq!(Label::new("x\u{e9}"), Err(LabelError::Character(1)));
    let l = Label::new("ABCDEFGHIJKLMNOP").unwrap();
    assert_eq!(l.as_str(), Some("ABCDEFGHIJKLMNOP"));
    let mut raw = [0u8; 16];
    raw[..3].copy_from_slice(b"a;\x01");
    let f = Label::from_bytes(raw);
    assert_eq!(f.text_bytes(), b"a;\x01");
    assert_eq!(f.as_str(), None);
}
