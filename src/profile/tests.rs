//! Unit tests of [`super`].

use super::*;
use crate::frontend::{AdcSpec, Coding};
use crate::irradiance::{Calibration, MeterConfig};
use crate::quantity::{Responsivity, Voltage, Wavelength};
use crate::spectral::band::Band;

fn range(kohm: f64, dark_offset: i32) -> AmplifierRange {
    AmplifierRange {
        gain: Transimpedance::from_kohm(kohm),
        dark_offset,
    }
}

fn j(v: f64) -> RadiantExposure {
    RadiantExposure::from_j_per_m2(v)
}

/// Invented configurations (demonstration values): one range, two ranges (bipolar, as an
/// ADS1115 at ±4.096 V), three ranges on a 24-bit converter with a 1 MHz clock, and four
/// ranges with an LED band and a sample area.
fn configurations() -> Vec<(MeterConfig, Vec<(RadiantExposure, Rounding)>)> {
    let unipolar16 = AdcSpec {
        bits: 16,
        reference: Voltage::from_v(2.5),
        pga_gain: 1.0,
        coding: Coding::Unipolar,
        saturation_margin: 4,
    };
    vec![
        (
            MeterConfig {
                front_end: FrontEnd::new(unipolar16, &[range(100.0, 12)]).unwrap(),
                calibration: Calibration::Responsivity {
                    responsivity: Responsivity::from_a_per_w(0.2),
                    active_area: Area::from_mm2(1.0),
                },
                band: Band::Line(Wavelength::from_nm(365.0)),
                tick_rate: TickRate::from_hz(1000).unwrap(),
                sample_area: None,
            },
            vec![
                (j(100.0), Rounding::NotBefore),
                (j(105.0), Rounding::NotAfter),
            ],
        ),
        (
            MeterConfig {
                front_end: FrontEnd::new(
                    AdcSpec {
                        bits: 16,
                        reference: Voltage::from_v(4.096),
                        pga_gain: 1.0,
                        coding: Coding::Bipolar,
                        saturation_margin: 2,
                    },
                    &[range(1000.0, -3), range(10.0, 5)],
                )
                .unwrap(),
                calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
                    4.2e5,
                )),
                band: Band::Line(Wavelength::from_nm(254.0)),
                tick_rate: TickRate::from_hz(32_768).unwrap(),
                sample_area: Some(Area::from_mm2(50.0)),
            },
            vec![
                (j(300.0), Rounding::NotBefore),
                (j(330.0), Rounding::NotAfter),
                (j(30.0), Rounding::NotAfter),
            ],
        ),
        (
            MeterConfig {
                front_end: FrontEnd::new(
                    AdcSpec {
                        bits: 24,
                        reference: Voltage::from_v(3.3),
                        pga_gain: 2.0,
                        coding: Coding::Unipolar,
                        saturation_margin: 16,
                    },
                    &[range(10_000.0, 40), range(100.0, 20), range(1.0, 9)],
                )
                .unwrap(),
                calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
                    1.5e6,
                )),
                band: Band::Line(Wavelength::from_nm(405.0)),
                tick_rate: TickRate::from_hz(1_000_000).unwrap(),
                sample_area: None,
            },
            vec![(j(5_000.0), Rounding::NotBefore)],
        ),
        (
            MeterConfig {
                front_end: FrontEnd::new(
                    unipolar16,
                    &[
                        range(3_300.0, 0),
                        range(330.0, 1),
                        range(33.0, 2),
                        range(3.3, 3),
                    ],
                )
                .unwrap(),
                calibration: Calibration::Responsivity {
                    responsivity: Responsivity::from_a_per_w(0.15),
                    active_area: Area::from_mm2(7.5),
                },
                band: Band::Led {
                    peak: Wavelength::from_nm(395.0),
                    fwhm: Wavelength::from_nm(15.0),
                },
                tick_rate: TickRate::from_hz(10_000).unwrap(),
                sample_area: Some(Area::from_m2(2.0e-3)),
            },
            vec![
                (j(12.5), Rounding::NotBefore),
                (j(13.0), Rounding::NotAfter),
                (j(1.0), Rounding::NotBefore),
                (j(20.0), Rounding::NotAfter),
            ],
        ),
    ]
}

/// The limit the on-device path computes for `level` with the open segment in range `r`, by
/// a route of its own: a fresh integrator for range 0, otherwise one zero reading in range 0
/// and two in range `r` (closing an empty segment).
fn device_limit(meter: &Meter, level: RadiantExposure, rounding: Rounding, r: u8) -> i64 {
    let mut integ = Integrator::new(meter, 1000);
    let id = integ.add_threshold(level, rounding).unwrap();
    if r != 0 {
        integ.accept(0, RangeIndex(0), Ticks(10)).unwrap();
        integ.accept(0, RangeIndex(r), Ticks(11)).unwrap();
        integ.accept(0, RangeIndex(r), Ticks(12)).unwrap();
    }
    assert_eq!(integ.segment_range(), RangeIndex(r));
    assert_eq!(integ.exposure().j_per_m2(), 0.0);
    integ.units_to_threshold(id).unwrap()
}

#[test]
fn the_f64_path_and_the_profile_path_give_identical_integer_state() {
    for (n, (config, thresholds)) in configurations().into_iter().enumerate() {
        let f64_meter = Meter::new(config).unwrap();
        let made = MeterProfile::new(&f64_meter, &thresholds).unwrap();
        let bytes = made.to_bytes();
        let profile = MeterProfile::from_bytes(&bytes).unwrap();
        assert_eq!(profile, made, "configuration {n}: bytes round trip");
        let meter = Meter::from_profile(&profile).unwrap();
        // The whole meter, every f64 inside it, equal.
        assert_eq!(meter, f64_meter, "configuration {n}");
        let ranges = f64_meter.front_end().range_count();
        assert_eq!(usize::from(profile.range_count), ranges);
        for r in 0..ranges {
            let ri = RangeIndex(r as u8);
            // Per-range integer scale: exactly the f64 the device path computes.
            let scale = f64_meter.j_per_m2_per_unit(ri);
            assert_eq!(profile.unit_scale_bits(ri), Some(scale.to_bits()));
            assert_eq!(meter.j_per_m2_per_unit(ri).to_bits(), scale.to_bits());
            let pr = profile.ranges[r];
            assert_eq!(pr.unit_mantissa % 2, 1);
            assert_eq!(
                pr.unit_mantissa as f64 * libm::exp2(f64::from(pr.unit_exponent)),
                scale
            );
            for (t, &(level, rounding)) in thresholds.iter().enumerate() {
                let carried = profile.threshold(t).unwrap();
                assert_eq!(carried.rounding, rounding);
                assert_eq!(carried.level_j_per_m2_bits, level.j_per_m2().to_bits());
                let on_device = device_limit(&f64_meter, level, rounding, r as u8);
                let from_profile_meter = device_limit(&meter, level, rounding, r as u8);
                assert_eq!(
                    carried.limits[r], on_device,
                    "configuration {n} range {r} threshold {t}"
                );
                assert_eq!(from_profile_meter, on_device);
                // And what the limit means: level / scale, rounded (within one unit, or a
                // few ulps where the quotient is beyond 2⁵³).
                let exact = level.j_per_m2() / scale;
                let slack = (exact * 64.0 * f64::EPSILON).max(1.0);
                assert!(
                    (carried.limits[r] as f64 - exact).abs() <= slack,
                    "{n} {r} {t}: {} {exact}",
                    carried.limits[r]
                );
            }
        }
        for r in ranges..MAX_RANGES {
            assert_eq!(profile.ranges[r], ProfileRange::default());
        }
    }
}

#[test]
fn a_two_range_meter_has_distinct_per_range_limits() {
    let (config, thresholds) = configurations().swap_remove(1);
    let meter = Meter::new(config).unwrap();
    let p = MeterProfile::new(&meter, &thresholds).unwrap();
    let t = p.threshold(0).unwrap();
    // Range 1 has 1/100 of range 0's transimpedance: each of its units weighs 100 times
    // more, so the same level is about 100 times fewer units.
    let ratio = t.limits[0] as f64 / t.limits[1] as f64;
    assert!((ratio - 100.0).abs() < 1e-6 * 100.0, "{ratio}");
    assert_eq!(t.limits[2..], [0, 0]);
}

#[test]
fn damage_anywhere_is_refused_and_named() {
    let (config, thresholds) = configurations().swap_remove(1);
    let p = MeterProfile::new(&Meter::new(config).unwrap(), &thresholds).unwrap();
    let bytes = p.to_bytes();
    assert_eq!(
        MeterProfile::from_bytes(&bytes[..PROFILE_LEN - 1]),
        Err(ProfileError::Length {
            expected: PROFILE_LEN,
            found: PROFILE_LEN - 1
        })
    );
    let mut longer = bytes.to_vec();
    longer.push(0);
    assert!(matches!(
        MeterProfile::from_bytes(&longer),
        Err(ProfileError::Length { found: 389, .. })
    ));
    for i in 0..PROFILE_LEN {
        for bit in 0..8 {
            let mut b = bytes;
            b[i] ^= 1 << bit;
            let e = MeterProfile::from_bytes(&b).unwrap_err();
            let expected_kind = match i {
                0..=3 => matches!(e, ProfileError::Magic),
                4..=5 => matches!(e, ProfileError::Version { .. }),
                6..=7 => matches!(e, ProfileError::Length { .. }),
                _ => matches!(e, ProfileError::Crc { .. }),
            };
            assert!(expected_kind, "byte {i} bit {bit}: {e}");
        }
    }
    let mut newer = bytes;
    newer[4..6].copy_from_slice(&2u16.to_le_bytes());
    assert_eq!(
        MeterProfile::from_bytes(&newer),
        Err(ProfileError::Version { found: 2 })
    );
}

#[test]
fn invalid_fields_are_named_even_with_a_valid_crc() {
    let (config, thresholds) = configurations().swap_remove(1);
    let good = MeterProfile::new(&Meter::new(config).unwrap(), &thresholds).unwrap();
    type Edit = fn(&mut MeterProfile);
    let cases: [(Edit, ProfileField); 12] = [
        (|p| p.tick_hz = 0, ProfileField::TickRate),
        (|p| p.range_count = 0, ProfileField::RangeCount),
        (|p| p.range_count = 5, ProfileField::RangeCount),
        (|p| p.threshold_count = 5, ProfileField::ThresholdCount),
        (|p| p.codes = (10, 10), ProfileField::Codes),
        (
            |p| p.calibration_bits = (-1.0f64).to_bits(),
            ProfileField::Calibration,
        ),
        (
            |p| p.volts_per_code_bits = f64::NAN.to_bits(),
            ProfileField::VoltsPerCode,
        ),
        (|p| p.photons_per_j_bits = 0, ProfileField::PhotonsPerJoule),
        (
            |p| p.ranges[1].transimpedance_bits = p.ranges[0].transimpedance_bits,
            ProfileField::Transimpedance(1),
        ),
        (
            |p| p.ranges[1].dark_offset = 40_000,
            ProfileField::DarkOffset(1),
        ),
        (
            |p| p.ranges[0].unit_mantissa *= 2,
            ProfileField::UnitScale(0),
        ),
        (|p| p.ranges[3].dark_offset = 1, ProfileField::Reserved),
    ];
    for (edit, field) in cases {
        let mut p = good;
        edit(&mut p);
        assert_eq!(
            MeterProfile::from_bytes(&p.to_bytes()),
            Err(ProfileError::Field(field)),
            "{field}"
        );
        assert_eq!(Meter::from_profile(&p), Err(ProfileError::Field(field)));
    }
    // A reserved byte in the encoding.
    let mut b = good.to_bytes();
    b[62] = 1;
    let crc = CRC32.checksum(&b[..offset::CRC]);
    b[offset::CRC..].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(
        MeterProfile::from_bytes(&b),
        Err(ProfileError::Field(ProfileField::Reserved))
    );
    // Too many thresholds on the host side.
    let meter = Meter::from_profile(&good).unwrap();
    let five = [(j(1.0), Rounding::NotBefore); 5];
    assert_eq!(
        MeterProfile::new(&meter, &five),
        Err(ProfileError::TooManyThresholds)
    );
    assert_eq!(
        MeterProfile::new(&meter, &[(j(f64::INFINITY), Rounding::NotAfter)]),
        Err(ProfileError::Field(ProfileField::Threshold(0)))
    );
}

#[test]
fn scales_split_and_join_exactly() {
    for v in [
        1.0,
        0.1,
        3.0e-12,
        1.0e300,
        f64::MIN_POSITIVE,
        0.5,
        6.103_515_625e-5,
    ] {
        let (m, e) = split_scale(v).unwrap();
        assert_eq!(m % 2, 1);
        assert_eq!(join_scale(m, e), Some(v.to_bits()), "{v}");
    }
    for v in [0.0, -1.0, f64::INFINITY, f64::NAN, f64::MIN_POSITIVE / 2.0] {
        assert_eq!(split_scale(v), None, "{v}");
    }
    // Not odd, too wide, or outside the normal range.
    assert_eq!(join_scale(2, 0), None);
    assert_eq!(join_scale(1 << 53 | 1, 0), None);
    assert_eq!(join_scale(1, -1075), None);
    assert_eq!(join_scale(1, 1024), None);
    assert_eq!(
        join_scale(1, 1023),
        Some(f64::MAX.to_bits() & !((1 << 52) - 1))
    );
}
