//! Unit tests of [`super`].

use super::*;
use crate::acquire::reading::{RangeIndex, TickRate};
use crate::frontend::{AdcSpec, Coding, FrontEnd};
use crate::irradiance::Meter;
use crate::irradiance::MeterConfig;
use crate::quantity::Voltage;

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

/// Example record (invented values, for the format tests only).
fn record() -> CalibrationRecord {
    let mut ranges = heapless::Vec::new();
    ranges
        .push(RangeCalibration {
            gain: Transimpedance::from_mohm(10.0),
            dark_offset: 12,
        })
        .unwrap();
    ranges
        .push(RangeCalibration {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 3,
        })
        .unwrap();
    CalibrationRecord {
        serial: serial("SN-0042").unwrap(),
        calibrated_on: Day(20_000),
        due: Day(20_365),
        factor: IrradiancePerCurrent::from_w_per_m2_per_a(5.0e6),
        active_area: Some(Area::from_mm2(1.0)),
        relative_uncertainty: 0.05,
        temperature_coefficient_per_k: -0.001,
        reference_temperature: Temperature::from_celsius(25.0),
        source: CalibrationSource::Led {
            peak: Wavelength::from_nm(365.0),
            fwhm: Wavelength::from_nm(10.0),
        },
        ranges,
    }
}

#[test]
fn crc_is_the_standard_crc32() {
    // CRC-32/ISO-HDLC check value over the ASCII digits "123456789" is 0xCBF43926 (the
    // catalogue's check value, also carried by the `crc` crate's algorithm constant).
    assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    assert_eq!(crc::CRC_32_ISO_HDLC.check, 0xCBF4_3926);
}

#[test]
fn round_trip_and_layout() {
    let r = record();
    let b = r.encode().unwrap();
    assert_eq!(&b[0..4], b"PLCR");
    assert_eq!(&b[4..6], &[1, 0]);
    assert_eq!(&b[6..8], &[164, 0]);
    assert_eq!(&b[8..15], b"SN-0042");
    assert_eq!(&b[15..24], &[0; 9]);
    assert_eq!(&b[24..28], &20_000u32.to_le_bytes());
    assert_eq!(&b[28..32], &20_365u32.to_le_bytes());
    assert_eq!(&b[32..40], &5.0e6f64.to_le_bytes());
    assert_eq!(b[72], 2);
    assert_eq!(b[73], 2);
    assert_eq!(&b[76..84], &365.0f64.to_le_bytes());
    assert_eq!(&b[104..108], &12i32.to_le_bytes());
    assert_eq!(&b[96..104], &10.0e6f64.to_le_bytes());
    assert_eq!(&b[112..120], &100.0e3f64.to_le_bytes());
    assert_eq!(&b[120..124], &3i32.to_le_bytes());
    assert_eq!(&b[128..160], &[0; 32]);
    let crc = CRC32.checksum(&b[..160]);
    assert_eq!(&b[160..164], &crc.to_le_bytes());
    let back = CalibrationRecord::decode(&b).unwrap();
    assert_eq!(back, r);
    assert_eq!(back.serial_str(), "SN-0042");
    // Line and tabulated sources round-trip too.
    for source in [
        CalibrationSource::Line(Wavelength::from_nm(253.728)),
        CalibrationSource::Tabulated { id: 77 },
    ] {
        let r2 = CalibrationRecord {
            source,
            active_area: None,
            ..record()
        };
        assert_eq!(
            CalibrationRecord::decode(&r2.encode().unwrap()).unwrap(),
            r2
        );
    }
}

#[test]
fn every_single_bit_flip_is_rejected() {
    // CRC-32 detects every single-bit error; magic/version/length flips are caught first.
    let b = record().encode().unwrap();
    for byte in 0..RECORD_LEN {
        for bit in 0..8 {
            let mut c = b;
            c[byte] ^= 1 << bit;
            let e = CalibrationRecord::decode(&c).unwrap_err();
            assert!(
                matches!(
                    e,
                    RecordError::Corrupted { .. }
                        | RecordError::Foreign
                        | RecordError::Version { .. }
                ),
                "{byte}.{bit}: {e:?}"
            );
            assert!(matches!(check(&c, Day(20_100)), Check::Corrupted(_)));
        }
    }
}

#[test]
fn foreign_and_wrong_length_records_are_named() {
    let b = record().encode().unwrap();
    assert_eq!(
        CalibrationRecord::decode(&b[..163]),
        Err(RecordError::Length { found: 163 })
    );
    assert_eq!(
        CalibrationRecord::decode(&[]),
        Err(RecordError::Length { found: 0 })
    );
    assert_eq!(
        CalibrationRecord::decode(&[0xFF; RECORD_LEN]),
        Err(RecordError::Foreign)
    );
    let mut v2 = b;
    v2[4] = 2;
    assert_eq!(
        CalibrationRecord::decode(&v2),
        Err(RecordError::Version { found: 2 })
    );
}

/// Re-seal bytes with a correct CRC, to reach the field checks.
fn reseal(mut b: [u8; RECORD_LEN]) -> [u8; RECORD_LEN] {
    let crc = CRC32.checksum(&b[..160]);
    b[160..164].copy_from_slice(&crc.to_le_bytes());
    b
}

#[test]
fn invalid_fields_are_named() {
    let bad = |f: &dyn Fn(&mut CalibrationRecord)| {
        let mut r = record();
        f(&mut r);
        r.encode().unwrap_err()
    };
    let inv = RecordError::Invalid;
    assert_eq!(bad(&|r| r.serial = [0; SERIAL_LEN]), inv(Field::Serial));
    assert_eq!(bad(&|r| r.serial[3] = 0x07), inv(Field::Serial));
    assert_eq!(bad(&|r| r.due = r.calibrated_on), inv(Field::Dates));
    assert_eq!(
        bad(&|r| r.factor = IrradiancePerCurrent::from_w_per_m2_per_a(f64::NAN)),
        inv(Field::Factor)
    );
    assert_eq!(
        bad(&|r| r.active_area = Some(Area::from_m2(-1.0))),
        inv(Field::ActiveArea)
    );
    assert_eq!(
        bad(&|r| r.relative_uncertainty = 1.0),
        inv(Field::Uncertainty)
    );
    assert_eq!(
        bad(&|r| r.temperature_coefficient_per_k = 0.1),
        inv(Field::TemperatureCoefficient)
    );
    assert_eq!(
        bad(&|r| r.reference_temperature = Temperature::from_celsius(500.0)),
        inv(Field::ReferenceTemperature)
    );
    assert_eq!(
        bad(&|r| r.source = CalibrationSource::Led {
            peak: Wavelength::from_nm(365.0),
            fwhm: Wavelength::from_nm(0.0)
        }),
        inv(Field::Source)
    );
    assert_eq!(bad(&|r| r.ranges.clear()), inv(Field::RangeCount));
    assert_eq!(
        bad(&|r| r.ranges[1].gain = Transimpedance::from_v_per_a(0.0)),
        inv(Field::Gain { range: 1 })
    );
    assert!(serial("").is_err());
    assert!(serial("seventeen chars!!").is_err());
    assert!(serial("tab\there").is_err());
    // Field checks also run on decode (a record sealed by someone else).
    let b = record().encode().unwrap();
    let mut c = b;
    c[74] = 1;
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::Reserved))
    );
    let mut c = b;
    c[72] = 9;
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::Source))
    );
    let mut c = b;
    c[73] = 0;
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::RangeCount))
    );
    let mut c = b;
    c[73] = 5;
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::RangeCount))
    );
    let mut c = b;
    c[130] = 1; // a value in an unused range slot
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::Reserved))
    );
    let mut c = b;
    c[32..40].copy_from_slice(&f64::INFINITY.to_le_bytes());
    assert_eq!(
        CalibrationRecord::decode(&reseal(c)),
        Err(inv(Field::Factor))
    );
}

#[test]
fn validity_and_policy() {
    let r = record();
    let b = r.encode().unwrap();
    assert_eq!(
        r.validity(Day(19_999)),
        Validity::NotYetValid { days_early: 1 }
    );
    assert_eq!(r.validity(Day(20_000)), Validity::Valid { days_left: 365 });
    assert_eq!(r.validity(Day(20_364)), Validity::Valid { days_left: 1 });
    assert_eq!(r.validity(Day(20_365)), Validity::Expired { days_over: 0 });
    assert_eq!(r.validity(Day(20_400)), Validity::Expired { days_over: 35 });
    assert_eq!(check(&b, Day(20_100)), Check::Valid);
    assert_eq!(check(&b, Day(20_400)), Check::Expired { days_over: 35 });
    assert_eq!(
        check(&b, Day(10)),
        Check::NotYetValid { days_early: 19_990 }
    );
    assert_eq!(ExpiryPolicy::default(), ExpiryPolicy::Refuse);
    let ok = accept(&b, Day(20_100), ExpiryPolicy::Refuse).unwrap();
    assert_eq!((ok.record, ok.warning), (r.clone(), None));
    assert_eq!(
        accept(&b, Day(20_400), ExpiryPolicy::Refuse),
        Err(AcceptError::Refused(Validity::Expired { days_over: 35 }))
    );
    let warned = accept(&b, Day(20_400), ExpiryPolicy::Warn).unwrap();
    assert_eq!(warned.warning, Some(Validity::Expired { days_over: 35 }));
    // A corrupted record is refused whatever the policy.
    let mut c = b;
    c[40] ^= 0x10;
    assert!(matches!(
        accept(&c, Day(20_100), ExpiryPolicy::Warn),
        Err(AcceptError::Record(RecordError::Corrupted { .. }))
    ));
}

#[test]
fn temperature_compensation() {
    // Computed from the linear model R(T) = R_ref (1 + α ΔT): α = −0.1 %/K, 10 K above the
    // reference → responsivity 0.99 × R_ref → factor k_ref / 0.99.
    let r = record();
    let k = r.factor_at(Temperature::from_celsius(35.0)).unwrap();
    assert!(rel(k.w_per_m2_per_a(), 5.0e6 / 0.99) < 1e-12);
    assert_eq!(
        r.factor_at(Temperature::from_celsius(25.0)).unwrap(),
        r.factor
    );
    assert_eq!(
        r.factor_at(Temperature::from_kelvin(f64::NAN)),
        Err(RecordError::Temperature)
    );
    assert_eq!(
        r.factor_at(Temperature::from_celsius(600.0)),
        Err(RecordError::Temperature)
    );
    // 0 °C = 273.15 K exactly (SI definition of the degree Celsius).
    assert_eq!(Temperature::from_celsius(0.0).kelvin(), 273.15);
    assert!(rel(Temperature::from_kelvin(300.0).celsius(), 26.85) < 1e-12);
}

#[test]
fn record_configures_the_meter() {
    let r = record();
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.5),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &r.amplifier_ranges(),
    )
    .unwrap();
    assert_eq!(fe.range(RangeIndex(1)).unwrap().dark_offset, 3);
    let m = Meter::new(MeterConfig {
        front_end: fe,
        calibration: r.calibration_at(Temperature::from_celsius(25.0)).unwrap(),
        band: crate::spectral::band::Band::Led {
            peak: Wavelength::from_nm(365.0),
            fwhm: Wavelength::from_nm(10.0),
        },
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap();
    assert_eq!(m.calibration(), r.factor);
    assert_eq!(
        r.source.to_source(),
        Some(Source::Led {
            peak: Wavelength::from_nm(365.0),
            fwhm: Wavelength::from_nm(10.0)
        })
    );
    assert_eq!(CalibrationSource::Tabulated { id: 3 }.to_source(), None);
}

#[test]
fn transfer_calibration() {
    // k = E_ref / I; relative standard uncertainties add in quadrature for a quotient of
    // uncorrelated inputs (GUM, JCGM 100:2008; from memory): √(0.02² + 0.003² + 0.01²).
    let t = transfer(&TransferInputs {
        reference: Irradiance::from_w_per_m2(10.0),
        reference_rel_u: 0.02,
        photocurrent: Current::from_ua(2.0),
        photocurrent_rel_u: 0.003,
        setup_rel_u: 0.01,
    })
    .unwrap();
    assert!(rel(t.factor.w_per_m2_per_a(), 5.0e6) < 1e-12);
    let u = (0.02f64 * 0.02 + 0.003 * 0.003 + 0.01 * 0.01).sqrt();
    assert!(rel(t.combined_rel_u, u) < 1e-12);
    assert!(rel(t.expanded_rel_u, 2.0 * u) < 1e-12);
    let base = TransferInputs {
        reference: Irradiance::from_w_per_m2(10.0),
        reference_rel_u: 0.02,
        photocurrent: Current::from_ua(2.0),
        photocurrent_rel_u: 0.003,
        setup_rel_u: 0.01,
    };
    assert_eq!(
        transfer(&TransferInputs {
            reference: Irradiance::from_w_per_m2(0.0),
            ..base
        }),
        Err(TransferError::Reference)
    );
    assert_eq!(
        transfer(&TransferInputs {
            photocurrent: Current::from_a(f64::NAN),
            ..base
        }),
        Err(TransferError::Photocurrent)
    );
    assert_eq!(
        transfer(&TransferInputs {
            setup_rel_u: -0.1,
            ..base
        }),
        Err(TransferError::Uncertainty)
    );
    assert_eq!(
        transfer(&TransferInputs {
            setup_rel_u: 0.6,
            ..base
        }),
        Err(TransferError::Uncertainty)
    );
}

proptest::proptest! {
    #[test]
    fn decoding_arbitrary_bytes_never_panics(bytes in proptest::collection::vec(proptest::num::u8::ANY, 0..200)) {
        let _ = CalibrationRecord::decode(&bytes);
        let _ = check(&bytes, Day(1));
    }

    #[test]
    fn decoding_sealed_garbage_never_panics(body in proptest::collection::vec(proptest::num::u8::ANY, 160..=160)) {
        let mut b = [0u8; RECORD_LEN];
        b[..160].copy_from_slice(&body);
        b[..4].copy_from_slice(b"PLCR");
        b[4..6].copy_from_slice(&1u16.to_le_bytes());
        b[6..8].copy_from_slice(&164u16.to_le_bytes());
        let b = reseal(b);
        // Reaches the field checks; whatever it returns, a record that decodes re-encodes
        // to the same bytes.
        if let Ok(r) = CalibrationRecord::decode(&b) {
            proptest::prop_assert_eq!(r.encode().unwrap(), b);
        }
    }
}
