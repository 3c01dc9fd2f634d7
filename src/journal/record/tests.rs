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
        0xD7, 0x10, 0x01, 0x00, 0x01, 0x00, 0x00, 0x00, 0x28, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x10, 0x00, 0x00, // start tick 0x1000
        0xE8, 0x03, 0x00, 0x00, // 1000 Hz
        0xD4, 0xC3, 0xB2, 0xA1, // digest
        0x2A, 0x00, 0x00, 0x00, // calibration 42
        0xC8, 0x91, 0x05, 0x00, // 365 000 pm
        0x00, 0xCA, 0x9A, 0x3B, 0x00, 0x00, 0x00, 0x00, // 10^9 µJ/m²
        0xE8, 0x03, 0x00, 0x00, // interval 1000 ticks
        0x20, 0xA1, 0x07, 0x00, // 500 000 mW/m²
        0x96, 0x55, 0x01, 0x58, // CRC
    ];
    assert_eq!(encode(&start()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), start());
}

#[test]
fn golden_checkpoint() {
    #[rustfmt::skip]
    let expected: [u8; 50] = [
        0xD7, 0x10, 0x02, 0x00, 0x02, 0x00, 0x00, 0x00, 0x24, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0xE8, 0x13, 0x00, 0x00, // tick 0x13E8
        0x00, 0xE1, 0xF5, 0x05, 0x00, 0x00, 0x00, 0x00, // 10^8 µJ/m²
        0x00, 0x46, 0xC3, 0x23, 0x00, 0x00, 0x00, 0x00, // 6·10^8 µJ/m²
        0xFB, 0xFF, 0xFF, 0xFF, // min −5 mW/m²
        0xA0, 0x86, 0x01, 0x00, // mean 100 000
        0xC0, 0xD4, 0x01, 0x00, // max 120 000
        0xAE, 0x00, 0x62, 0x0B, // CRC
    ];
    assert_eq!(encode(&checkpoint()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), checkpoint());
}

#[test]
fn golden_event() {
    #[rustfmt::skip]
    let expected: [u8; 36] = [
        0xD7, 0x10, 0x03, 0x00, 0x03, 0x00, 0x00, 0x00, 0x16, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x20, 0x00, 0x00, // tick 0x2000
        0x00, 0xC2, 0xEB, 0x0B, 0x00, 0x00, 0x00, 0x00, // 2·10^8 µJ/m²
        0x04, 0x01, // fault: gap
        0xFA, 0x00, 0x00, 0x00, // 250 ticks
        0x75, 0x8D, 0x03, 0x55, // CRC
    ];
    assert_eq!(encode(&event()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), event());
}

#[test]
fn golden_end() {
    #[rustfmt::skip]
    let expected: [u8; 50] = [
        0xD7, 0x10, 0x04, 0x00, 0x04, 0x00, 0x00, 0x00, 0x24, 0x00, // header
        0x01, 0x00, 0x00, 0x00, // session 1
        0x00, 0x30, 0x00, 0x00, // tick 0x3000
        0x7B, 0xCA, 0x9A, 0x3B, 0x00, 0x00, 0x00, 0x00, // 1 000 000 123 µJ/m²
        0x00, 0x20, 0x00, 0x00, // elapsed 0x2000
        0x00, 0x00, 0x00, 0x00, // min 0
        0x9F, 0x86, 0x01, 0x00, // mean 99 999
        0xC1, 0xD4, 0x01, 0x00, // max 120 001
        0x01, 0x00, // target met
        0x02, 0x00, // 2 events
        0x8E, 0xC0, 0xFB, 0x65, // CRC
    ];
    assert_eq!(encode(&end()).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), end());
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
        0xD7, 0x10, 0x05, 0x00, 0x05, 0x00, 0x00, 0x00, 0x4D, 0x00, // header, 77 bytes
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
        0x70, 0xD4, 0xD0, 0x7A, // CRC
    ];
    assert_eq!(encode(&r).as_slice(), &expected[..]);
    assert_eq!(Record::parse(&expected).unwrap(), r);
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
    // Version 1.1 with two extra payload bytes: read, extra ignored.
    let mut buf = [0u8; MAX_RECORD_LEN];
    let old = encode(&checkpoint());
    let plen = payload::checkpoint::LEN + 2;
    buf[..HEADER_LEN + payload::checkpoint::LEN]
        .copy_from_slice(&old[..HEADER_LEN + payload::checkpoint::LEN]);
    buf[field::VERSION] = 0x11;
    buf[8..10].copy_from_slice(&(plen as u16).to_le_bytes());
    buf[HEADER_LEN + plen - 2] = 0xAB;
    buf[HEADER_LEN + plen - 1] = 0xCD;
    let crc = stored_crc(&buf[..HEADER_LEN + plen]);
    buf[HEADER_LEN + plen..HEADER_LEN + plen + 4].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(Record::parse(&buf).unwrap(), checkpoint());
    // An unknown kind of this major is well-formed and named.
    buf[field::KIND] = 9;
    let crc = stored_crc(&buf[..HEADER_LEN + plen]);
    buf[HEADER_LEN + plen..HEADER_LEN + plen + 4].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(Record::parse(&buf), Err(RecordError::UnknownKind(9)));
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
