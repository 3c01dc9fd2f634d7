//! Stable fuzz harnesses (proptest-driven): the calibration-record decoder, the journal mount
//! and export on arbitrary and mutated flash images, and the configuration builders on hostile
//! numbers. (The review tool's TOML and CSV readers are fuzzed in `photon-review`'s
//! `tests/fuzz_readers.rs`.)
//!
//! The default run is a short smoke run (a few hundred cases per target, part of
//! `cargo test --workspace`). A longer campaign sets the number of cases per target:
//!
//! ```text
//! FUZZ_CASES=1000000 cargo test -p hosttests --release --test fuzz -- --nocapture
//! ```
//!
//! Each target prints its number of executions. The checks are against the project's own
//! documented contracts (round trips, named errors, documented validity ranges), not against
//! outside reference values; the seed records and images are invented test data.

use hosttests::fixtures::round_meter;
use hosttests::flash::SimFlash;
use photon_ledger::control::plausibility::{
    Plausibility, PlausibilityConfig, PlausibilityConfigError,
};
use photon_ledger::control::session::{SessionConfigError, SessionError};
use photon_ledger::frontend::autorange::{AutorangeConfigError, AutorangeError};
use photon_ledger::frontend::FrontEndError;
use photon_ledger::irradiance::calibration::{
    self, accept, check, AcceptError, CalibrationRecord, CalibrationSource, Check, Day,
    ExpiryPolicy, RangeCalibration, RecordError, Temperature, RECORD_LEN,
};
use photon_ledger::journal::export::{export_csv, CSV_HEADER};
use photon_ledger::journal::record::{
    Body, CalibrationId, Checkpoint, ConfigDigest, Event, EventCode, SessionEnd, SessionId,
    SessionOutcome, SessionStart, StoredExposure, StoredIrradiance, StoredWavelength,
};
use photon_ledger::photochem::absorption::Absorption;
use photon_ledger::photochem::units::PhotonFluxPerIrradiance;
use photon_ledger::photochem::units::{Absorbance, ChemicalAmount, QuantumYield, Transmission};
use photon_ledger::prelude::*;
use proptest::prelude::*;

use hosttests::fuzzing::fuzz;

/// Numbers that break careless arithmetic, mixed with ordinary ones.
fn nasty_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        Just(0.0),
        Just(-0.0),
        Just(f64::MAX),
        Just(f64::MIN),
        Just(f64::MIN_POSITIVE),
        Just(5e-324),
        Just(-1.0),
        Just(1.0),
        any::<f64>(),
        -1e12..1e12f64,
        1e-9..10.0f64,
    ]
}

fn nasty_u32() -> impl Strategy<Value = u32> {
    prop_oneof![
        Just(0u32),
        Just(1),
        Just(u32::MAX),
        Just(i32::MAX as u32),
        Just(i32::MAX as u32 + 1),
        any::<u32>(),
        0..5000u32,
    ]
}

// ---------------------------------------------------------------------------------------
// (a) Calibration records.
// ---------------------------------------------------------------------------------------

const CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

fn reseal(b: &mut [u8]) {
    if b.len() == RECORD_LEN {
        let crc = CRC32.checksum(&b[..RECORD_LEN - 4]);
        b[RECORD_LEN - 4..].copy_from_slice(&crc.to_le_bytes());
    }
}

fn valid_record() -> impl Strategy<Value = CalibrationRecord> {
    (
        "[ -~]{1,16}",
        0u32..100_000,
        1u32..5000,
        1e-3..1e9f64,
        proptest::option::of(1e-8..1e-2f64),
        0.0..0.99f64,
        -0.05..0.05f64,
        -50.0..150.0f64,
        prop_oneof![
            (250.0..1000.0f64).prop_map(|nm| CalibrationSource::Line(Wavelength::from_nm(nm))),
            any::<u32>().prop_map(|id| CalibrationSource::Tabulated { id }),
        ],
        proptest::collection::vec((1e2..1e9f64, -100i32..100), 1..=4),
    )
        .prop_map(|(s, cal, len, k, area, u, alpha, t, source, ranges)| {
            let mut rec = CalibrationRecord {
                serial: calibration::serial(&s).unwrap(),
                calibrated_on: Day(cal),
                due: Day(cal + len),
                factor: IrradiancePerCurrent::from_w_per_m2_per_a(k),
                active_area: area.map(Area::from_m2),
                relative_uncertainty: u,
                temperature_coefficient_per_k: alpha,
                reference_temperature: Temperature::from_celsius(t),
                source,
                ranges: Default::default(),
            };
            for (g, d) in ranges {
                rec.ranges
                    .push(RangeCalibration {
                        gain: Transimpedance::from_v_per_a(g),
                        dark_offset: d,
                    })
                    .unwrap();
            }
            rec
        })
}

#[derive(Debug, Clone)]
enum Mutation {
    Set(usize, u8),
    Flip(usize, u8),
    /// Overwrite an 8-byte field with a hostile f64.
    F64(usize, f64),
    Truncate(usize),
    Extend(u8),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (0..RECORD_LEN, any::<u8>()).prop_map(|(a, v)| Mutation::Set(a, v)),
        (0..RECORD_LEN, 0u8..8).prop_map(|(a, v)| Mutation::Flip(a, v)),
        (0..RECORD_LEN / 8, nasty_f64()).prop_map(|(a, v)| Mutation::F64(a * 8, v)),
        (0..RECORD_LEN).prop_map(Mutation::Truncate),
        any::<u8>().prop_map(Mutation::Extend),
    ]
}

fn apply(b: &mut Vec<u8>, m: &Mutation) {
    match *m {
        Mutation::Set(a, v) => {
            if let Some(x) = b.get_mut(a) {
                *x = v;
            }
        }
        Mutation::Flip(a, bit) => {
            if let Some(x) = b.get_mut(a) {
                *x ^= 1 << bit;
            }
        }
        Mutation::F64(a, v) => {
            if let Some(x) = b.get_mut(a..a + 8) {
                x.copy_from_slice(&v.to_le_bytes());
            }
        }
        Mutation::Truncate(n) => b.truncate(n),
        Mutation::Extend(v) => b.push(v),
    }
}

/// Records equal, the source wavelengths within 4 ulp: the record stores nanometres and
/// [`Wavelength`] holds metres, so a wavelength can move by an ulp through one encode and
/// decode (found by this harness; see the report).
fn same_record(a: &CalibrationRecord, b: &CalibrationRecord) -> Result<(), TestCaseError> {
    let close =
        |x: Wavelength, y: Wavelength| (x.nm() - y.nm()).abs() <= 4.0 * f64::EPSILON * x.nm().abs();
    let ok = match (a.source, b.source) {
        (CalibrationSource::Line(x), CalibrationSource::Line(y)) => close(x, y),
        (
            CalibrationSource::Led { peak: p, fwhm: f },
            CalibrationSource::Led { peak: q, fwhm: g },
        ) => close(p, q) && close(f, g),
        (x, y) => x == y,
    };
    prop_assert!(ok, "sources differ: {:?} {:?}", a.source, b.source);
    let mut b = b.clone();
    b.source = a.source;
    prop_assert_eq!(a, &b);
    Ok(())
}

/// What must hold for any byte string: decode, check and accept agree; what decodes is
/// valid, re-encodes and decodes to itself, and converts for the meter without panicking.
fn calibration_contract(bytes: &[u8], today: u32) -> Result<(), TestCaseError> {
    let today = Day(today);
    let decoded = CalibrationRecord::decode(bytes);
    let checked = check(bytes, today);
    let refused = accept(bytes, today, ExpiryPolicy::Refuse);
    let warned = accept(bytes, today, ExpiryPolicy::Warn);
    match &decoded {
        Err(e) => {
            prop_assert_eq!(checked, Check::Corrupted(*e));
            prop_assert_eq!(refused, Err(AcceptError::Record(*e)));
            prop_assert_eq!(warned, Err(AcceptError::Record(*e)));
            prop_assert!(!e.to_string().is_empty());
            if bytes.len() != RECORD_LEN {
                prop_assert_eq!(*e, RecordError::Length { found: bytes.len() });
            }
        }
        Ok(r) => {
            prop_assert_eq!(r.validate(), Ok(()));
            let again = r
                .encode()
                .map_err(|e| TestCaseError::fail(format!("{e}")))?;
            same_record(&CalibrationRecord::decode(&again).unwrap(), r)?;
            prop_assert_eq!(warned.clone().map(|a| a.record), Ok(r.clone()));
            prop_assert_eq!(checked == Check::Valid, refused.is_ok());
            // The factor at the reference temperature is the stored factor.
            let k = r.factor_at(r.reference_temperature).unwrap();
            prop_assert_eq!(k, r.factor);
            for t in [f64::NAN, -300.0, 0.0, 25.0, 1e6] {
                let _ = r.factor_at(Temperature::from_celsius(t));
            }
            let ranges = r.amplifier_ranges();
            prop_assert_eq!(ranges.len(), r.ranges.len());
            let _ = FrontEnd::new(
                AdcSpec {
                    bits: 12,
                    reference: Voltage::from_v(3.3),
                    pga_gain: 1.0,
                    coding: Coding::Unipolar,
                    saturation_margin: 2,
                },
                &ranges,
            );
        }
    }
    Ok(())
}

#[test]
fn fuzz_calibration_decoder_on_arbitrary_bytes() {
    let bytes = prop_oneof![
        proptest::collection::vec(any::<u8>(), 0..200),
        proptest::collection::vec(any::<u8>(), RECORD_LEN),
        // Right length, right header, CRC sealed: the field checks are reached.
        proptest::collection::vec(any::<u8>(), RECORD_LEN).prop_map(|mut b| {
            b[..8].copy_from_slice(&[b'P', b'L', b'C', b'R', 1, 0, RECORD_LEN as u8, 0]);
            reseal(&mut b);
            b
        }),
    ];
    fuzz(
        "calibration/arbitrary",
        2000,
        (bytes, any::<u32>()),
        |(b, t)| calibration_contract(&b, t),
    );
}

#[test]
fn fuzz_calibration_decoder_on_mutated_records() {
    let s = (
        valid_record(),
        proptest::collection::vec(mutation(), 0..6),
        any::<bool>(),
        any::<u32>(),
    );
    fuzz("calibration/mutated", 2000, s, |(r, muts, seal, t)| {
        let mut b = r.encode().unwrap().to_vec();
        // The unmutated record round-trips exactly.
        same_record(&CalibrationRecord::decode(&b).unwrap(), &r)?;
        for m in &muts {
            apply(&mut b, m);
        }
        if seal {
            reseal(&mut b);
        } else if !muts.is_empty() && b.len() == RECORD_LEN && b != r.encode().unwrap() {
            // Any change of a full-length record without a new CRC is refused: CRC-32
            // (ISO-HDLC) detects every burst of up to 32 bits and every odd number of bit
            // errors, and lets any other change through with probability 2^-32 per case
            // (about 2e-4 over a 10^6-case campaign), so refusal is asserted outright.
            let decoded = CalibrationRecord::decode(&b);
            prop_assert!(
                decoded.is_err(),
                "a changed record was decoded: {:?}",
                decoded
            );
        }
        calibration_contract(&b, t)
    });
}

// ---------------------------------------------------------------------------------------
// (b) Journal mount, records and export. The plain garbage and byte-flip cases with appends
// are in tests/journal.rs (`random_garbage_never_panics`, `corrupted_journal_images_never_panic`);
// these add flash-like damage (bits cleared, sectors erased, copied or swapped), all record
// kinds, and check records() and export_csv against each other and against a remount.
// ---------------------------------------------------------------------------------------

type Tiny = SimFlash<1, 4, 512>;
const SECTOR: usize = 512;
const SECTORS: usize = 4;

fn tiny_config() -> JournalConfig {
    JournalConfig::try_new::<Tiny>(0, SECTORS as u32, Retention::Ring).unwrap()
}

fn seed_image(sessions: u32) -> Vec<u8> {
    let mut j = Journal::mount(Tiny::new(SECTORS), tiny_config()).unwrap();
    for s in 0..sessions {
        let id = j
            .begin_session(SessionStart {
                session: SessionId(0),
                start: Ticks(s * 100),
                tick_rate_hz: 1000,
                config_digest: ConfigDigest(7),
                calibration: CalibrationId(2),
                wavelength: StoredWavelength::from_pm(365_000),
                target: StoredExposure::from_uj_per_m2(5000),
                interval_ticks: 10,
                max_irradiance: StoredIrradiance::from_mw_per_m2(50),
            })
            .unwrap();
        for i in 0..6u32 {
            let at = Ticks(s * 100 + i * 10);
            j.append(&Body::Checkpoint(Checkpoint {
                session: id,
                at,
                delivered: StoredExposure::from_uj_per_m2(u64::from(i) * 700),
                bound: StoredExposure::from_uj_per_m2(u64::from(i) * 700 + 5),
                min: StoredIrradiance::ZERO,
                mean: StoredIrradiance::from_mw_per_m2(10),
                max: StoredIrradiance::from_mw_per_m2(20),
            }))
            .unwrap();
            j.maintain().unwrap();
        }
        j.append(&Body::Event(Event {
            session: id,
            at: Ticks(s * 100 + 70),
            delivered: StoredExposure::from_uj_per_m2(4200),
            code: EventCode::TargetReached,
            detail: s,
        }))
        .unwrap();
        if s + 1 < sessions {
            j.append(&Body::End(SessionEnd {
                session: id,
                at: Ticks(s * 100 + 80),
                delivered: StoredExposure::from_uj_per_m2(5000),
                min: StoredIrradiance::ZERO,
                mean: StoredIrradiance::from_mw_per_m2(10),
                max: StoredIrradiance::from_mw_per_m2(20),
                outcome: SessionOutcome::TargetMet,
                elapsed_ticks: 80,
                events: 1,
            }))
            .unwrap();
        }
        j.maintain().unwrap();
    }
    j.release().image().to_vec()
}

#[derive(Debug, Clone)]
enum Damage {
    /// NOR programming only clears bits.
    Clear(usize, u8),
    Set(usize, u8),
    Erase(usize),
    Copy(usize, usize),
    Swap(usize, usize),
}

fn damage() -> impl Strategy<Value = Damage> {
    let at = 0..SECTOR * SECTORS;
    prop_oneof![
        (at.clone(), any::<u8>()).prop_map(|(a, m)| Damage::Clear(a, m)),
        (at, any::<u8>()).prop_map(|(a, v)| Damage::Set(a, v)),
        (0..SECTORS).prop_map(Damage::Erase),
        (0..SECTORS, 0..SECTORS).prop_map(|(a, b)| Damage::Copy(a, b)),
        (0..SECTORS, 0..SECTORS).prop_map(|(a, b)| Damage::Swap(a, b)),
    ]
}

fn harm(img: &mut [u8], d: &Damage) {
    let sector = |s: usize| s * SECTOR..(s + 1) * SECTOR;
    match *d {
        Damage::Clear(a, m) => img[a] &= m,
        Damage::Set(a, v) => img[a] = v,
        Damage::Erase(s) => img[sector(s)].fill(0xFF),
        Damage::Copy(a, b) => {
            let src = img[sector(a)].to_vec();
            img[sector(b)].copy_from_slice(&src);
        }
        Damage::Swap(a, b) => {
            let x = img[sector(a)].to_vec();
            let y = img[sector(b)].to_vec();
            img[sector(a)].copy_from_slice(&y);
            img[sector(b)].copy_from_slice(&x);
        }
    }
}

/// Mount, read, export, remount: what is read is stable and the export says the same.
fn journal_contract(img: Vec<u8>) -> Result<(), TestCaseError> {
    let mut j = match Journal::mount(Tiny::from_image(img), tiny_config()) {
        Ok(j) => j,
        Err(e) => {
            // The only refusal on a readable flash is a newer format; it is named.
            prop_assert!(
                matches!(e.error, JournalError::UnsupportedVersion { .. }),
                "unexpected mount error {:?}",
                e.error
            );
            prop_assert!(!e.error.to_string().is_empty());
            return Ok(());
        }
    };
    let mut first = Vec::new();
    for r in j.records() {
        match r {
            Ok(r) => first.push(r),
            Err(e) => return Err(TestCaseError::fail(format!("records(): {e:?}"))),
        }
        prop_assert!(
            first.len() <= SECTOR * SECTORS / 14,
            "iteration does not end"
        );
    }
    for w in first.windows(2) {
        prop_assert!(
            w[0].seq < w[1].seq,
            "record numbers not increasing: {:?}",
            w
        );
    }
    let second: Vec<_> = j.records().map(|r| r.unwrap()).collect();
    prop_assert_eq!(&first, &second);
    let mut csv = String::new();
    let n = export_csv(&mut j, &mut csv, true).map_err(|e| TestCaseError::fail(format!("{e}")))?;
    prop_assert_eq!(n as usize, first.len());
    let mut lines = csv.lines();
    prop_assert_eq!(lines.next(), Some(CSV_HEADER));
    let columns = CSV_HEADER.split(',').count();
    let mut rows = 0;
    for line in lines {
        prop_assert_eq!(line.split(',').count(), columns, "{}", line);
        rows += 1;
    }
    prop_assert_eq!(rows, first.len());
    // A remount of what this mount left keeps every record it read.
    let again = Journal::mount(j.release(), tiny_config());
    let mut again = again.map_err(|e| TestCaseError::fail(format!("remount: {:?}", e.error)))?;
    let third: Vec<_> = again.records().map(|r| r.unwrap()).collect();
    prop_assert_eq!(&first, &third);
    Ok(())
}

#[test]
fn fuzz_journal_mount_on_arbitrary_images() {
    // Mostly-erased images with random islands: closer to real flash than uniform noise.
    let s = (
        proptest::collection::vec((0..SECTOR * SECTORS, any::<u8>()), 0..200),
        any::<bool>(),
    );
    fuzz("journal/arbitrary", 1000, s, |(writes, zero)| {
        let mut img = vec![if zero { 0x00 } else { 0xFF }; SECTOR * SECTORS];
        for (a, v) in writes {
            img[a] = v;
        }
        journal_contract(img)
    });
}

#[test]
fn fuzz_journal_mount_on_damaged_images() {
    let seeds: Vec<Vec<u8>> = (1..=4).map(seed_image).collect();
    let s = (0..seeds.len(), proptest::collection::vec(damage(), 1..8));
    fuzz("journal/damaged", 1000, s, |(k, ds)| {
        let mut img = seeds[k].clone();
        for d in &ds {
            harm(&mut img, d);
        }
        journal_contract(img)
    });
}

// ---------------------------------------------------------------------------------------
// (c) Configuration builders on hostile numbers.
// ---------------------------------------------------------------------------------------

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Never;

impl embedded_hal::digital::Error for Never {
    fn kind(&self) -> embedded_hal::digital::ErrorKind {
        embedded_hal::digital::ErrorKind::Other
    }
}

/// A pin that always works.
#[derive(Debug, Default)]
struct Pin;

impl embedded_hal::digital::ErrorType for Pin {
    type Error = Never;
}

impl embedded_hal::digital::OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Never> {
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Never> {
        Ok(())
    }
}

impl embedded_hal::digital::InputPin for Pin {
    fn is_high(&mut self) -> Result<bool, Never> {
        Ok(true)
    }
    fn is_low(&mut self) -> Result<bool, Never> {
        Ok(false)
    }
}

fn readings() -> impl Iterator<Item = Reading> {
    [0, 1, 2000, 4095, -5, i32::MAX, i32::MIN]
        .into_iter()
        .enumerate()
        .map(|(i, code)| Reading {
            code,
            range: RangeIndex((i % 3) as u8),
            at: Ticks((u32::MAX - 20).wrapping_add(10 * i as u32)),
        })
}

fn adc() -> impl Strategy<Value = AdcSpec> {
    (
        any::<u8>(),
        nasty_f64(),
        nasty_f64(),
        any::<bool>(),
        nasty_u32(),
    )
        .prop_map(|(bits, v, pga, bipolar, margin)| AdcSpec {
            bits,
            reference: Voltage::from_v(v),
            pga_gain: pga,
            coding: if bipolar {
                Coding::Bipolar
            } else {
                Coding::Unipolar
            },
            saturation_margin: margin,
        })
}

fn ranges() -> impl Strategy<Value = Vec<AmplifierRange>> {
    proptest::collection::vec(
        (nasty_f64(), any::<i32>()).prop_map(|(g, d)| AmplifierRange {
            gain: Transimpedance::from_v_per_a(g),
            dark_offset: d,
        }),
        0..6,
    )
}

#[test]
fn fuzz_front_end_and_meter_builders() {
    let s = (
        adc(),
        ranges(),
        nasty_f64(),
        nasty_f64(),
        nasty_f64(),
        nasty_u32(),
    );
    fuzz(
        "builders/frontend+meter",
        1500,
        s,
        |(spec, rs, resp, nm, area, hz)| {
            let fe = FrontEnd::new(spec, &rs);
            if !(8..=24).contains(&spec.bits) {
                prop_assert_eq!(fe.clone().err(), Some(FrontEndError::Resolution));
            } else if !(spec.reference.v().is_finite() && spec.reference.v() > 0.0) {
                prop_assert_eq!(fe.clone().err(), Some(FrontEndError::Reference));
            }
            let fe = match fe {
                Ok(fe) => fe,
                Err(e) => {
                    prop_assert!(!e.to_string().is_empty());
                    return Ok(());
                }
            };
            prop_assert_eq!(fe.range_count(), rs.len());
            let Some(rate) = TickRate::from_hz(hz) else {
                prop_assert_eq!(hz, 0);
                return Ok(());
            };
            let m = Meter::new(MeterConfig {
                front_end: fe,
                calibration: Calibration::Responsivity {
                    responsivity: Responsivity::from_a_per_w(resp),
                    active_area: Area::from_m2(1e-6),
                },
                band: Band::Line(Wavelength::from_nm(nm)),
                tick_rate: rate,
                sample_area: if area.is_sign_negative() {
                    None
                } else {
                    Some(Area::from_m2(area))
                },
            });
            match m {
                Ok(m) => {
                    if !(resp.is_finite() && resp > 0.0) {
                        return Err(TestCaseError::fail("invalid responsivity accepted"));
                    }
                    for r in readings() {
                        let _ = m.irradiance(r.code, r.range);
                    }
                }
                Err(e) => prop_assert!(!e.to_string().is_empty()),
            }
            Ok(())
        },
    );
}

#[test]
fn fuzz_session_builder() {
    let s = (nasty_f64(), nasty_f64(), nasty_u32(), any::<u16>());
    fuzz(
        "builders/session",
        2000,
        s,
        |(target, tol, gap, unusable)| {
            let config = SessionConfig {
                target: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(target)),
                tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(tol)),
                max_gap_ticks: gap,
                max_unusable_run: unusable,
                enable_level: ActiveLevel::High,
                alarm_level: ActiveLevel::Low,
            };
            match Session::new(round_meter(1e-3, 1000), config, Pin, Pin) {
                Ok(mut s) => {
                    prop_assert!(target.is_finite() && target > 0.0);
                    prop_assert!(gap > 0 && gap <= i32::MAX as u32);
                    s.start().unwrap();
                    for r in readings() {
                        let _ = s.on_reading(&r);
                    }
                }
                Err(SessionError::Config(e)) => {
                    if !(target.is_finite() && target > 0.0) {
                        prop_assert_eq!(e, SessionConfigError::Target);
                    } else if gap == 0 && tol.is_finite() && tol >= 0.0 {
                        prop_assert_eq!(e, SessionConfigError::MaxGap);
                    }
                    prop_assert!(!e.to_string().is_empty());
                }
                Err(SessionError::Pin(e)) => {
                    return Err(TestCaseError::fail(format!("pin error {e:?}")))
                }
            }
            Ok(())
        },
    );
}

#[test]
fn fuzz_autorange_and_plausibility_builders() {
    let s = (
        nasty_f64(),
        nasty_f64(),
        any::<u8>(),
        any::<u8>(),
        (
            any::<u16>(),
            any::<u16>(),
            nasty_f64(),
            nasty_f64(),
            nasty_f64(),
        ),
        (nasty_u32(), nasty_u32(), any::<u8>(), any::<u8>()),
    );
    fuzz(
        "builders/autorange+plausibility",
        1500,
        s,
        |(up, down, settle, start, p1, p2)| {
            let meter = round_meter(1e-3, 1000);
            let fe = meter.front_end().clone();
            let config = AutorangeConfig {
                up,
                down,
                settle_samples: settle,
            };
            match Autorange::new([Pin, Pin], &fe, config, RangeIndex(start)) {
                Ok(mut a) => {
                    prop_assert!(0.0 < down && down < up && up <= 1.0);
                    for r in readings() {
                        let _ = a.observe(&r, &fe);
                    }
                }
                Err(AutorangeError::Config(e)) => {
                    if !(up.is_finite() && down.is_finite() && 0.0 < down && down < up && up <= 1.0)
                    {
                        prop_assert_eq!(e, AutorangeConfigError::Thresholds);
                    }
                    prop_assert!(!e.to_string().is_empty());
                }
                Err(AutorangeError::Pin(e)) => {
                    return Err(TestCaseError::fail(format!("pin error {e:?}")))
                }
            }
            let pc = PlausibilityConfig {
                stuck_samples: p1.0,
                pinned_samples: p1.1,
                dark_sigma_codes: p1.2,
                negative_k: p1.3,
                max_rate_w_per_m2_s: p1.4,
                transition_ticks: p2.0,
                dark_drift_codes: p2.1,
                flap_limit: p2.2,
                flap_window: p2.3,
            };
            match Plausibility::new(&meter, pc) {
                Ok(mut p) => {
                    prop_assert!(pc.stuck_samples != 1);
                    for (i, r) in readings().enumerate() {
                        let _ = p.check(&r, Some(r.code.wrapping_sub(4)), i % 2 == 0);
                        let _ = p.dark_capture(r.range, r.code);
                    }
                }
                Err(e) => {
                    if pc.stuck_samples == 1 {
                        prop_assert_eq!(e, PlausibilityConfigError::StuckSamples);
                    }
                    prop_assert!(!e.to_string().is_empty());
                }
            }
            Ok(())
        },
    );
}

#[test]
fn fuzz_curing_and_reactor_builders() {
    let s = (
        (
            nasty_f64(),
            nasty_f64(),
            nasty_u32(),
            nasty_f64(),
            nasty_f64(),
            nasty_u32(),
        ),
        (
            nasty_f64(),
            nasty_f64(),
            nasty_f64(),
            nasty_f64(),
            nasty_f64(),
            any::<bool>(),
        ),
    );
    fuzz("builders/curing+reactor", 1000, s, |(c, r)| {
        let mut config = hosttests::lamp_curing::sweep_config(50, 10, StopPolicy::Anticipate);
        config.target = RadiantExposure::from_j_per_m2(c.0);
        config.tolerance = RadiantExposure::from_j_per_m2(c.1);
        config.lag = ActuatorLag::Delay { ticks: c.2 };
        config.light_off.fraction = c.3;
        config.light_off.floor = Irradiance::from_w_per_m2(c.4);
        config.max_gap_ticks = c.5;
        match CuringController::new(round_meter(1e-3, 1000), config, Pin, Pin, Pin) {
            Ok(mut cc) => {
                prop_assert!(c.0.is_finite() && c.0 > 0.0, "target {} accepted", c.0);
                let _ = cc.start(PartId(1), Ticks(u32::MAX - 30));
                for r in readings() {
                    let _ = cc.on_reading(&r);
                }
                let _ = cc.finish(Ticks(5));
            }
            Err(e) => {
                let text = e.to_string();
                prop_assert!(!text.is_empty());
            }
        }
        let config = PhotochemConfig {
            band: Band::Led {
                peak: Wavelength::from_nm(r.0),
                fwhm: Wavelength::from_nm(r.1),
            },
            vessel: VesselGeometry::FluxFactor {
                factor: PhotonFluxPerIrradiance::from_mol_per_s_per_w_per_m2(r.2),
                transmission: Transmission::from_fraction(r.3),
            },
            absorption: Absorption::Absorbance(Absorbance::from_decadic(r.4)),
            model: if r.5 {
                AbsorbanceModel::Constant
            } else {
                AbsorbanceModel::FallsWithConversion
            },
            reactant: Some(ChemicalAmount::from_umol(0.6)),
            quantum_yield: QuantumYield::new(0.3).ok(),
        };
        match Reactor::new(&config) {
            Ok(reactor) => {
                for e in [0.0, 1.0, 1e6, f64::MAX] {
                    let _ = reactor.estimate(RadiantExposure::from_j_per_m2(e));
                }
            }
            Err(e) => prop_assert!(!e.to_string().is_empty()),
        }
        Ok(())
    });
}
