//! photon-review `decode` and `register import --image`: a flash image written by the real
//! journal on the simulated NOR flash, decoded and checked against every record written;
//! the decoder's CSV against the device's own export; idempotent import into a real SQLite
//! register; every bad-input case with the place (byte offset, sector) in the message; and
//! every image a power cut can leave decodes.
//!
//! All record values here are invented test data (the demonstration device of
//! `review::demo_image`, or hand-made records); the checks are against what was written and
//! the journal's documented format, not against outside reference values. The photon
//! exposure check is computed from the SI 2019 exact defining constants.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use embedded_storage::nor_flash::NorFlash;
use hosttests::flash::SimFlash;
use hosttests::image::image_to_csv;
use photon_ledger::acquire::reading::Ticks;
use photon_ledger::journal::export::export_csv;
use photon_ledger::journal::record::{
    self, Body, CalibrationId, Checkpoint, ConfigDigest, Event, EventCode, FaultCode, Record,
    SessionEnd, SessionId, SessionOutcome, SessionStart, StoredExposure, StoredIrradiance,
    StoredWavelength,
};
use photon_ledger::journal::{Journal, JournalConfig, Retention};
use photon_review::decode::{
    decode_image, Decoded, Geometry, ImageFlash, ImageFlashError, RecordReport,
};
use photon_review::demo_image::{demo_journal, DemoFlash, DEMO_DEVICE_ID, DEMO_EPOCH_UTC};
use photon_review::register::{Grouping, Register};
use photon_review::ReviewError;

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn run(args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("the tool runs")
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn s(p: &Path) -> &str {
    p.to_str().expect("UTF-8 path")
}

fn example_image() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/journal.bin")
}

fn decode(image: &[u8]) -> Result<Decoded, ReviewError> {
    decode_image("test.bin", image, &Geometry::EXAMPLE)
}

/// J/m² from µJ/m², as the decoder documents it (the nearest double).
fn j(h: StoredExposure) -> f64 {
    h.uj_per_m2() as f64 / 1e6
}

fn w(e: StoredIrradiance) -> f64 {
    f64::from(e.mw_per_m2()) / 1e3
}

fn padded(r: &Record) -> u32 {
    (r.encoded_len() as u32).div_ceil(4) * 4
}

/// The decoded report of a record holds exactly the record's values (field by field, written
/// out here independently of the decoder's own mapping).
fn assert_same(rep: &RecordReport, r: &Record) {
    assert_eq!(rep.seq, r.seq);
    assert_eq!(rep.session, r.body.session().0, "seq {}", r.seq);
    match &r.body {
        Body::Start(st) => {
            assert_eq!(rep.kind, "start");
            assert_start(rep, st);
        }
        Body::Checkpoint(c) => {
            assert_eq!(rep.kind, "checkpoint");
            assert_checkpoint(rep, c);
        }
        Body::Event(e) => {
            assert_eq!(rep.kind, "event");
            assert_eq!(rep.tick, Some(e.at.0));
            assert_eq!(rep.radiant_exposure_j_per_m2, Some(j(e.delivered)));
            assert_eq!(rep.code_value, Some(e.code.code()));
            assert_eq!(rep.detail, Some(e.detail));
        }
        Body::End(e) => {
            assert_eq!(rep.kind, "end");
            assert_eq!(rep.tick, Some(e.at.0));
            assert_eq!(rep.radiant_exposure_j_per_m2, Some(j(e.delivered)));
            assert_eq!(rep.elapsed_ticks, Some(e.elapsed_ticks));
            assert_eq!(rep.irradiance_min_w_per_m2, Some(w(e.min)));
            assert_eq!(rep.irradiance_mean_w_per_m2, Some(w(e.mean)));
            assert_eq!(rep.irradiance_max_w_per_m2, Some(w(e.max)));
            assert_eq!(rep.code_value, Some(e.outcome.code()));
            assert_eq!(rep.events, Some(e.events));
        }
        Body::Restate(_) => unreachable!("not written by the device code"),
        // Format 1.1 kinds: checked field by field in hosttests/review/tests/decode_kinds.rs.
        Body::Part(_)
        | Body::Pause(_)
        | Body::ExposureState(_)
        | Body::Unmonitored(_)
        | Body::CuringState(_) => unreachable!("not written by this test's device"),
    }
}

fn assert_start(rep: &RecordReport, st: &SessionStart) {
    assert_eq!(rep.start_tick, Some(st.start.0));
    assert_eq!(rep.tick_rate_hz, Some(st.tick_rate_hz));
    assert_eq!(
        rep.config_digest.as_deref(),
        Some(format!("{:#010x}", st.config_digest.0).as_str())
    );
    assert_eq!(rep.calibration_id, Some(st.calibration.0));
    assert_eq!(rep.wavelength_nm, Some(f64::from(st.wavelength.pm()) / 1e3));
    assert_eq!(rep.target_j_per_m2, Some(j(st.target)));
    assert_eq!(rep.interval_ticks, Some(st.interval_ticks));
    assert_eq!(rep.max_irradiance_w_per_m2, Some(w(st.max_irradiance)));
}

fn assert_checkpoint(rep: &RecordReport, c: &Checkpoint) {
    assert_eq!(rep.tick, Some(c.at.0));
    assert_eq!(rep.radiant_exposure_j_per_m2, Some(j(c.delivered)));
    assert_eq!(rep.radiant_exposure_bound_j_per_m2, Some(j(c.bound)));
    assert_eq!(rep.irradiance_min_w_per_m2, Some(w(c.min)));
    assert_eq!(rep.irradiance_mean_w_per_m2, Some(w(c.mean)));
    assert_eq!(rep.irradiance_max_w_per_m2, Some(w(c.max)));
}

#[test]
fn every_record_written_is_decoded_with_its_place() {
    let demo = demo_journal(405).unwrap();
    let d = decode(&demo.image).unwrap();
    assert!(d.complete);

    // Every acknowledged record, in order, and nothing else but the journal's restatements.
    let written: Vec<&RecordReport> = d.records.iter().filter(|r| r.kind != "restate").collect();
    assert_eq!(written.len(), demo.acknowledged.len());
    for (rep, r) in written.iter().zip(&demo.acknowledged) {
        assert_same(rep, r);
    }
    // Each restatement restates its session's start and the latest checkpoint before it.
    let restates: Vec<&RecordReport> = d.records.iter().filter(|r| r.kind == "restate").collect();
    assert!(!restates.is_empty(), "the demo spans several sectors");
    for rep in &restates {
        let start = demo
            .acknowledged
            .iter()
            .find_map(|r| match r.body {
                Body::Start(st) if st.session.0 == rep.session => Some(st),
                _ => None,
            })
            .unwrap();
        assert_start(rep, &start);
        let latest = demo
            .acknowledged
            .iter()
            .rev()
            .filter(|r| r.seq < rep.seq)
            .find_map(|r| match r.body {
                Body::Checkpoint(c) if c.session.0 == rep.session => Some(c),
                _ => None,
            })
            .unwrap();
        assert_checkpoint(rep.restated_checkpoint.as_ref().unwrap(), &latest);
    }
    // Sequence numbers run without a hole: the restatements take the numbers in between.
    for (a, b) in d.records.iter().zip(d.records.iter().skip(1)) {
        assert_eq!(b.seq, a.seq + 1);
    }
    // The place of each record: the library parses the same record there, and its padded
    // length is what the device wrote.
    for (rep, r) in written.iter().zip(&demo.acknowledged) {
        let at = rep.image_offset_bytes as usize;
        assert_eq!(Record::parse(&demo.image[at..]).unwrap(), *r);
        assert_eq!(rep.length_bytes, padded(r));
        assert_eq!(rep.sector as usize, at / 4096);
    }
    // The record in flight at the power cut is not there, and the torn tail is named.
    let in_flight = demo.in_flight.unwrap();
    assert!(matches!(in_flight, Body::Checkpoint(_)));
    assert!(d.journal.torn_tail);
    let head = d.journal.head_sector.unwrap();
    assert!(
        d.notes
            .iter()
            .any(|n| n.contains(&format!("sector {head} (the head)")) && n.contains("torn")),
        "{:?}",
        d.notes
    );
    assert_eq!(d.journal.open_session, Some(demo.sessions[2].0));
    // The torn record is not valid, so the device's next record may take its number.
    assert_eq!(d.journal.next_record_seq, d.records.last().unwrap().seq + 1);
}

#[test]
fn session_summaries_match_what_was_written() {
    let demo = demo_journal(405).unwrap();
    let d = decode(&demo.image).unwrap();
    assert_eq!(d.sessions.len(), 3);
    let of = |id: SessionId| -> Vec<Record> {
        demo.acknowledged
            .iter()
            .filter(|r| r.body.session() == id)
            .copied()
            .collect()
    };
    for (k, sess) in d.sessions.iter().enumerate() {
        let id = demo.sessions[k];
        assert_eq!(sess.session, id.0);
        let recs = of(id);
        let Body::Start(start) = recs[0].body else {
            panic!("a session starts with its start record")
        };
        assert!(sess.start_record_retained);
        assert_eq!(sess.start_tick, Some(start.start.0));
        assert_eq!(sess.target_j_per_m2, Some(j(start.target)));
        let checkpoints: Vec<Checkpoint> = recs
            .iter()
            .filter_map(|r| match r.body {
                Body::Checkpoint(c) => Some(c),
                _ => None,
            })
            .collect();
        let events: Vec<Event> = recs
            .iter()
            .filter_map(|r| match r.body {
                Body::Event(e) => Some(e),
                _ => None,
            })
            .collect();
        assert_eq!(sess.checkpoints, checkpoints.len() as u64);
        assert_eq!(sess.events, events.len() as u64);
        assert_eq!(
            sess.event_list
                .iter()
                .map(|e| (e.tick, e.code_value, e.detail))
                .collect::<Vec<_>>(),
            events
                .iter()
                .map(|e| (e.at.0, e.code.code(), e.detail))
                .collect::<Vec<_>>()
        );
        let end = recs.iter().find_map(|r| match r.body {
            Body::End(e) => Some(e),
            _ => None,
        });
        match end {
            Some(e) => {
                assert_eq!(sess.state, "ended");
                assert_eq!(sess.end_tick, Some(e.at.0));
                assert_eq!(sess.radiant_exposure_j_per_m2, j(e.delivered));
                assert_eq!(sess.radiant_exposure_bound_j_per_m2, j(e.delivered));
                assert_eq!(sess.events_recorded, Some(e.events));
                assert_eq!(u64::from(e.events), sess.events);
                assert_eq!(
                    sess.duration_s,
                    Some(f64::from(e.elapsed_ticks) / f64::from(start.tick_rate_hz))
                );
                assert!(sess.content_sha256.as_ref().is_some_and(|h| h.len() == 64));
            }
            None => {
                assert_eq!(sess.state, "open");
                let last = checkpoints.last().unwrap();
                assert_eq!(sess.radiant_exposure_j_per_m2, j(last.delivered));
                // What the device resumes from: the latest acknowledged checkpoint's bound.
                assert_eq!(sess.radiant_exposure_bound_j_per_m2, j(last.bound));
                assert!(sess.radiant_exposure_bound_j_per_m2 > sess.radiant_exposure_j_per_m2);
                assert_eq!(sess.content_sha256, None);
            }
        }
        // Photon exposure at the equivalent wavelength: H · λ / (h c N_A), computed from the
        // SI 2019 exact values of h, c and N_A.
        let lambda_m = f64::from(start.wavelength.pm()) * 1e-12;
        let expect = sess.radiant_exposure_j_per_m2 * lambda_m
            / (6.626_070_15e-34 * 299_792_458.0 * 6.022_140_76e23);
        let got = sess.photon_exposure_mol_per_m2.unwrap();
        assert!((got - expect).abs() <= 1e-12 * expect, "{got} vs {expect}");
    }
    let [a, b, c] = [&d.sessions[0], &d.sessions[1], &d.sessions[2]];
    assert_eq!(a.outcome.as_deref(), Some("target_met"));
    assert!(a.target_reached && a.faults.is_empty());
    assert_eq!(
        a.event_list
            .iter()
            .map(|e| e.code.as_str())
            .collect::<Vec<_>>(),
        ["warning:lamp_ageing", "target_reached"]
    );
    assert!(a.radiant_exposure_j_per_m2 >= a.target_j_per_m2.unwrap());
    assert_eq!(b.outcome.as_deref(), Some("fault:gap"));
    assert_eq!(b.faults, ["gap"]);
    assert!(!b.target_reached);
    // The gap event names the stall: 800 ms without a reading plus the 50 ms sample period.
    assert_eq!(b.event_list[0].detail, 850);
    assert_eq!(c.outcome, None);
    assert!(!c.target_reached);
}

#[test]
fn decoded_csv_is_the_devices_own_export() {
    let demo = demo_journal(405).unwrap();
    let d = decode(&demo.image).unwrap();
    // The device's view: its journal mounted on its flash after the reboot, exported with
    // the firmware's `export_csv`.
    let cfg = JournalConfig::try_new::<DemoFlash>(0, 8, Retention::Ring).unwrap();
    let mut device = Journal::mount(DemoFlash::from_image(demo.image.clone()), cfg).unwrap();
    for restatements in [false, true] {
        let mut out = String::new();
        let lines = export_csv(&mut device, &mut out, restatements).unwrap();
        let decoded = if restatements {
            &d.csv_with_restatements
        } else {
            &d.csv
        };
        assert_eq!(*decoded, out);
        assert_eq!(out.lines().count(), lines as usize + 1);
    }
    assert_eq!(
        d.csv,
        image_to_csv::<1, 4, 4096>(&demo.image, cfg, false).unwrap()
    );
    // Line by line, the CSV and the JSON records are the same records.
    let json_seqs: Vec<u32> = d
        .records
        .iter()
        .filter(|r| r.kind != "restate")
        .map(|r| r.seq)
        .collect();
    let csv_seqs: Vec<u32> = d
        .csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(json_seqs, csv_seqs);

    // The same through the command line, on the shipped example.
    let dir = tempfile::tempdir().unwrap();
    let img = dir.path().join("journal.bin");
    std::fs::write(&img, &demo.image).unwrap();
    let o = run(&["decode", s(&img), "--print", "csv"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(stdout(&o), d.csv);
}

#[test]
fn the_shipped_example_is_the_demonstration_image_and_decodes() {
    let demo = demo_journal(405).unwrap();
    let shipped = std::fs::read(example_image()).unwrap();
    assert!(shipped.len() < 64 * 1024);
    assert_eq!(
        shipped, demo.image,
        "regenerate with `photon-review simulate --journal-image hosttests/review/examples/journal.bin`"
    );

    let dir = tempfile::tempdir().unwrap();
    let regenerated = dir.path().join("again.bin");
    let o = run(&["simulate", "--journal-image", s(&regenerated)]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(std::fs::read(&regenerated).unwrap(), shipped);

    let json = dir.path().join("d.json");
    let csv = dir.path().join("d.csv");
    let text = dir.path().join("d.txt");
    let o = run(&[
        "decode",
        s(&example_image()),
        "--json",
        s(&json),
        "--csv",
        s(&csv),
        "--text",
        s(&text),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    for needle in [
        "session 1: ended (target_met)",
        "(fault:gap)",
        "open, start tick",
        "faults: gap",
        "warning:lamp_ageing, target_reached",
        "8 sectors × 4096 bytes",
    ] {
        assert!(out.contains(needle), "{needle}: {out}");
    }
    assert_eq!(std::fs::read_to_string(&text).unwrap(), out);
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert_eq!(v["decode_format"], "photon-review/decode");
    assert_eq!(v["complete"], true);
    assert_eq!(v["sessions"].as_array().unwrap().len(), 3);
    assert!(
        v["sessions"][0]["radiant_exposure_j_per_m2"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert!(std::fs::read_to_string(&csv)
        .unwrap()
        .starts_with(photon_ledger::journal::export::CSV_HEADER));
    // Decoding never writes to the image.
    assert_eq!(std::fs::read(example_image()).unwrap(), shipped);
}

#[test]
fn the_image_flash_is_read_only() {
    let image = vec![0xFFu8; 4096 * 3];
    let mut f = ImageFlash::<4, 4096>::new(&image, 0x0800_0000);
    assert_eq!(
        f.write(0x0800_0000, &[0; 4]),
        Err(ImageFlashError::ReadOnly)
    );
    assert_eq!(
        f.erase(0x0800_0000, 0x0800_1000),
        Err(ImageFlashError::ReadOnly)
    );
    let mut b = [0u8; 4];
    use embedded_storage::nor_flash::ReadNorFlash;
    assert_eq!(f.read(0, &mut b), Err(ImageFlashError::OutOfBounds));
    f.read(0x0800_2FFC, &mut b).unwrap();
    assert_eq!(
        f.read(0x0800_2FFD, &mut b),
        Err(ImageFlashError::OutOfBounds)
    );
}

#[test]
fn an_image_read_from_a_base_address_decodes_the_same() {
    let demo = demo_journal(405).unwrap();
    let at0 = decode(&demo.image).unwrap();
    let g = Geometry {
        base_address: 0x0800_8000,
        ..Geometry::EXAMPLE
    };
    let moved = decode_image("test.bin", &demo.image, &g).unwrap();
    assert_eq!(moved.records, at0.records);
    assert_eq!(moved.csv, at0.csv);
    assert_eq!(moved.sectors[1].address, 0x0800_8000 + 4096);
}

// ---------------------------------------------------------------------------------------
// The register.
// ---------------------------------------------------------------------------------------

#[test]
fn register_import_of_an_image_twice_adds_its_sessions_once() {
    let demo = demo_journal(405).unwrap();
    let d = decode(&demo.image).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("register.sqlite");
    let img = dir.path().join("journal.bin");
    std::fs::write(&img, &demo.image).unwrap();
    let args = [
        "register",
        "import",
        "--db",
        s(&db),
        "--image",
        s(&img),
        "--epoch-utc",
        DEMO_EPOCH_UTC,
        "--device-id",
        DEMO_DEVICE_ID,
    ];
    let o = run(&args);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(
        out.contains("2 added, 0 already present, 2 sessions"),
        "{out}"
    );
    assert!(
        out.contains(&format!("session {} is open", demo.sessions[2].0)),
        "{out}"
    );
    let o = run(&args);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("0 added, 2 already present, 2 sessions"),
        "{}",
        stdout(&o)
    );

    let r = Register::open(s(&db)).unwrap();
    assert_eq!(r.session_count().unwrap(), 2);
    let days = r.dose_per_day(Grouping::Device).unwrap();
    assert_eq!(days.len(), 1);
    assert_eq!(days[0].day_utc, "2025-03-14");
    assert_eq!(days[0].group.as_deref(), Some(DEMO_DEVICE_ID));
    assert_eq!(days[0].sessions, 2);
    let sum = d.sessions[0].radiant_exposure_j_per_m2 + d.sessions[1].radiant_exposure_j_per_m2;
    assert!((days[0].radiant_exposure_j_per_m2 - sum).abs() < 1e-9);
    let faults = r.fault_sessions().unwrap();
    assert_eq!(faults.len(), 1);
    assert_eq!(faults[0].fault, "gap");
    assert_eq!(
        faults[0].radiant_exposure_j_per_m2,
        d.sessions[1].radiant_exposure_j_per_m2
    );
    // Session 2 started at tick 157 250 of 1 kHz ticks after the epoch 09:00:00 (157 300
    // before issue 18 moved the LED model's energy centre; session 1 ends 50 ms earlier).
    assert_eq!(d.sessions[1].start_tick, Some(157_250));
    assert_eq!(faults[0].start_utc, "2025-03-14T09:02:37Z");

    let conn = rusqlite::Connection::open(&db).unwrap();
    let kinds: Vec<(String, String, String)> = conn
        .prepare("SELECT source_kind, stop_reason, content_sha256 FROM session ORDER BY id")
        .unwrap()
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap();
    assert_eq!(
        kinds,
        [
            (
                "flash_journal".to_string(),
                "target_met".to_string(),
                d.sessions[0].content_sha256.clone().unwrap()
            ),
            (
                "flash_journal".to_string(),
                "fault".to_string(),
                d.sessions[1].content_sha256.clone().unwrap()
            ),
        ]
    );
    // Without a clock the import is refused, and nothing is imported.
    let o = run(&["register", "import", "--db", s(&db), "--image", s(&img)]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--epoch-utc"), "{}", stderr(&o));
}

type Small = SimFlash<1, 4, 1024>;

fn start(at: u32) -> SessionStart {
    SessionStart {
        session: SessionId(0),
        start: Ticks(at),
        tick_rate_hz: 1000,
        config_digest: ConfigDigest(0x1234_5678),
        calibration: CalibrationId(3),
        wavelength: StoredWavelength::from_pm(365_000),
        target: StoredExposure::from_uj_per_m2(5_000_000_000),
        interval_ticks: 1000,
        max_irradiance: StoredIrradiance::from_mw_per_m2(200_000),
    }
}

fn checkpoint(id: SessionId, at: u32, uj: u64) -> Body {
    Body::Checkpoint(Checkpoint {
        session: id,
        at: Ticks(at),
        delivered: StoredExposure::from_uj_per_m2(uj),
        bound: StoredExposure::from_uj_per_m2(uj + 200_000_000),
        min: StoredIrradiance::from_mw_per_m2(99_000),
        mean: StoredIrradiance::from_mw_per_m2(100_000),
        max: StoredIrradiance::from_mw_per_m2(101_000),
    })
}

fn end(id: SessionId, t0: u32, at: u32, uj: u64) -> Body {
    Body::End(SessionEnd {
        session: id,
        at: Ticks(at),
        delivered: StoredExposure::from_uj_per_m2(uj),
        elapsed_ticks: at - t0,
        min: StoredIrradiance::from_mw_per_m2(99_000),
        mean: StoredIrradiance::from_mw_per_m2(100_000),
        max: StoredIrradiance::from_mw_per_m2(101_000),
        outcome: SessionOutcome::TargetMet,
        events: 0,
    })
}

/// A session of `n` checkpoints (invented values, 100 W/m² for 1 s each).
fn session(j: &mut Journal<Small>, t0: u32, n: u32) {
    let id = j.begin_session(start(t0)).unwrap();
    for k in 0..=n {
        j.append(&checkpoint(id, t0 + 1000 * k, 100_000_000 * u64::from(k)))
            .unwrap();
        j.maintain().unwrap();
    }
    j.append(&end(id, t0, t0 + 1000 * n, 100_000_000 * u64::from(n)))
        .unwrap();
}

#[test]
fn two_read_outs_of_a_device_add_each_session_once_though_the_ring_recycled_records() {
    let g = Geometry {
        sector_size_bytes: 1024,
        sectors: 4,
        ..Geometry::EXAMPLE
    };
    let cfg = JournalConfig::try_new::<Small>(0, 4, Retention::Ring).unwrap();
    let mut j = Journal::mount(Small::new(4), cfg).unwrap();
    // A long session: more checkpoints than the ring retains (3 sectors of ~19).
    session(&mut j, 0, 70);
    let first = j.flash().image().to_vec();
    session(&mut j, 100_000, 20);
    let second = j.release().image().to_vec();

    let d1 = decode_image("first.bin", &first, &g).unwrap();
    let d2 = decode_image("second.bin", &second, &g).unwrap();
    let long1 = &d1.sessions[0];
    let long2 = &d2.sessions[0];
    assert_eq!(long1.session, long2.session);
    assert!(!long1.start_record_retained, "the start was recycled");
    assert!(
        long2.records < long1.records,
        "more of the session was recycled by the second read-out: {} vs {}",
        long2.records,
        long1.records
    );
    assert_eq!(long1.content_sha256, long2.content_sha256);
    assert_eq!(long1.radiant_exposure_j_per_m2, 7000.0);
    assert_eq!(long1.start_tick, Some(0));

    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("r.sqlite");
    let (p1, p2) = (dir.path().join("first.bin"), dir.path().join("second.bin"));
    std::fs::write(&p1, &first).unwrap();
    std::fs::write(&p2, &second).unwrap();
    let geo = [
        "--sector-size",
        "1024",
        "--sectors",
        "4",
        "--epoch-utc",
        "2025-01-01T00:00:00Z",
    ];
    let mut a = vec!["register", "import", "--db", s(&db), "--image", s(&p1)];
    a.extend(geo);
    let o = run(&a);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("1 added, 0 already present"),
        "{}",
        stdout(&o)
    );
    let mut b = vec!["register", "import", "--db", s(&db), "--image", s(&p2)];
    b.extend(geo);
    let o = run(&b);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("1 added, 1 already present, 2 sessions"),
        "{}",
        stdout(&o)
    );
}

// ---------------------------------------------------------------------------------------
// Bad input.
// ---------------------------------------------------------------------------------------

fn image_error(e: ReviewError) -> (Option<u64>, Option<u32>, String) {
    let text = e.to_string();
    match e {
        ReviewError::Image { offset, sector, .. } => (offset, sector, text),
        other => panic!("not an image error: {other}"),
    }
}

/// The command line refuses `image`, names the place, exits non-zero and writes nothing.
fn cli_refuses(image: &[u8], extra: &[&str], needles: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    let img = dir.path().join("bad.bin");
    std::fs::write(&img, image).unwrap();
    let json = dir.path().join("out.json");
    let csv = dir.path().join("out.csv");
    let mut args = vec!["decode", s(&img), "--json", s(&json), "--csv", s(&csv)];
    args.extend(extra);
    let o = run(&args);
    assert!(!o.status.success());
    let err = stderr(&o);
    for n in needles {
        assert!(err.contains(n), "{n}: {err}");
    }
    assert!(err.contains("no file was written"), "{err}");
    assert!(stdout(&o).is_empty(), "{}", stdout(&o));
    assert!(!json.exists() && !csv.exists());
    assert_eq!(
        std::fs::read(&img).unwrap(),
        image,
        "the image is unchanged"
    );
}

#[test]
fn a_truncated_image_is_refused_at_its_end() {
    let demo = demo_journal(405).unwrap();
    let cut = &demo.image[..20_000];
    let (off, sector, text) = image_error(decode(cut).unwrap_err());
    assert_eq!((off, sector), (Some(20_000), Some(4)));
    assert!(
        text.contains("truncated") && text.contains("32768"),
        "{text}"
    );
    cli_refuses(cut, &[], &["image byte 20000 (sector 4)", "truncated"]);
    // Cut at a sector boundary: still short of the geometry.
    let (off, sector, _) = image_error(decode(&demo.image[..16_384]).unwrap_err());
    assert_eq!((off, sector), (Some(16_384), Some(4)));
    cli_refuses(&[], &[], &["image byte 0 (sector 0)", "truncated"]);
}

#[test]
fn an_image_of_the_wrong_size_for_the_geometry_is_refused() {
    let demo = demo_journal(405).unwrap();
    let mut long = demo.image.clone();
    long.extend(std::iter::repeat_n(0xFF, 4096));
    let (off, _, text) = image_error(decode(&long).unwrap_err());
    assert_eq!(off, Some(32_768));
    assert!(text.contains("4096 more than"), "{text}");
    cli_refuses(&long, &[], &["image byte 32768", "4096 more than"]);
    // The right image with a geometry of fewer sectors.
    cli_refuses(
        &demo.image,
        &["--sectors", "4"],
        &["image byte 16384", "16384 more than"],
    );
    // A sector size that does not divide the image.
    cli_refuses(
        &demo.image,
        &["--sector-size", "8192", "--sectors", "3"],
        &["image byte 24576", "more than"],
    );
}

#[test]
fn a_geometry_the_device_would_refuse_is_named_by_its_option() {
    let demo = demo_journal(405).unwrap();
    for (args, needle) in [
        (vec!["--write-size", "3"], "--write-size 3"),
        (vec!["--sector-size", "1000"], "--sector-size 1000"),
        (vec!["--read-size", "64"], "--read-size 64"),
        (vec!["--read-size", "3"], "--read-size 3"),
        (vec!["--base", "0x100"], "--base 0x100"),
        (vec!["--sectors", "2"], "--sectors 2"),
        (
            vec![
                "--sector-size",
                "512",
                "--write-size",
                "32",
                "--sectors",
                "64",
            ],
            "",
        ),
    ] {
        let dir = tempfile::tempdir().unwrap();
        let img = dir.path().join("x.bin");
        std::fs::write(&img, &demo.image).unwrap();
        let mut a = vec!["decode", s(&img)];
        a.extend(args.iter());
        let o = run(&a);
        if needle.is_empty() {
            // 512-byte sectors with 32-byte writes are valid: the image just decodes as
            // something else, and is refused as not a journal of that geometry.
            assert!(!o.status.success());
            assert!(stderr(&o).contains("image byte"), "{}", stderr(&o));
            continue;
        }
        assert!(!o.status.success(), "{args:?}");
        assert!(stderr(&o).contains(needle), "{needle}: {}", stderr(&o));
    }
}

#[test]
fn garbage_is_refused_where_it_starts() {
    let demo = demo_journal(405).unwrap();
    let clean = decode(&demo.image).unwrap();

    // All garbage: no journal at all.
    let mut x: u64 = 0x2545_F491_4F6C_DD1D;
    let noise: Vec<u8> = (0..demo.image.len())
        .map(|_| {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x as u8
        })
        .collect();
    let (off, sector, text) = image_error(decode(&noise).unwrap_err());
    assert_eq!((off, sector), (Some(0), Some(0)));
    assert!(text.contains("no journal in the image"), "{text}");
    cli_refuses(&noise, &[], &["image byte 0 (sector 0)", "no journal"]);

    // Garbage over records in the middle of sector 1: refused at the first damaged record,
    // because the valid records after it would be silently lost.
    let mut bad = demo.image.clone();
    let at = 4096 + 1000;
    bad[at..at + 64].copy_from_slice(&noise[..64]);
    let hit = clean
        .records
        .iter()
        .find(|r| {
            (r.image_offset_bytes..r.image_offset_bytes + u64::from(r.length_bytes))
                .contains(&(at as u64))
        })
        .unwrap();
    let (off, sector, text) = image_error(decode(&bad).unwrap_err());
    assert_eq!((off, sector), (Some(hit.image_offset_bytes), Some(1)));
    assert!(text.contains("not a valid record"), "{text}");
    cli_refuses(
        &bad,
        &[],
        &[
            &format!("image byte {} (sector 1)", hit.image_offset_bytes),
            "not a valid record",
        ],
    );

    // Data after the end of the head's records (beyond the torn slot).
    let head = clean.sectors.iter().find(|s| s.role == "head").unwrap();
    let mut bad = demo.image.clone();
    let tail = head.image_offset_bytes as usize + 4000;
    bad[tail] = 0x00;
    let (off, sector, _) = image_error(decode(&bad).unwrap_err());
    assert_eq!(sector, Some(head.index));
    assert_eq!(off, head.records_end_image_offset_bytes);

    // A byte in an unused (erased) sector.
    let mut bad = demo.image.clone();
    bad[6 * 4096 + 100] = 0x42;
    let (off, sector, text) = image_error(decode(&bad).unwrap_err());
    assert_eq!((off, sector), (Some(6 * 4096 + 100), Some(6)));
    assert!(
        text.contains("has an erased header but holds data"),
        "{text}"
    );
    cli_refuses(&bad, &[], &["image byte 24676 (sector 6)"]);
}

fn reseal_record(image: &mut [u8], at: usize) {
    let len = usize::from(u16::from_le_bytes([image[at + 8], image[at + 9]]));
    let end = at + record::HEADER_LEN + len;
    let crc = record::stored_crc(&image[at..end]);
    image[end..end + 4].copy_from_slice(&crc.to_le_bytes());
}

#[test]
fn an_unknown_major_format_version_is_refused_with_its_place() {
    let demo = demo_journal(405).unwrap();
    let clean = decode(&demo.image).unwrap();

    // A sector header of major version 2 (CRC made valid again).
    let mut bad = demo.image.clone();
    let h = 2 * 4096;
    bad[h + photon_ledger::journal::sector_field::VERSION] = 0x20;
    let crc = record::stored_crc(&bad[h..h + 12]);
    bad[h + 12..h + 16].copy_from_slice(&crc.to_le_bytes());
    let (off, sector, text) = image_error(decode(&bad).unwrap_err());
    assert_eq!((off, sector), (Some(8192), Some(2)));
    assert!(text.contains("major version 2"), "{text}");
    cli_refuses(
        &bad,
        &[],
        &["image byte 8192 (sector 2)", "major version 2"],
    );

    // One record of major version 2 inside a version-1 sector.
    let r = clean
        .records
        .iter()
        .find(|r| r.sector == 1 && r.kind == "checkpoint")
        .unwrap();
    let at = r.image_offset_bytes as usize;
    let mut bad = demo.image.clone();
    bad[at + record::field::VERSION] = 0x21;
    reseal_record(&mut bad, at);
    let (off, sector, text) = image_error(decode(&bad).unwrap_err());
    assert_eq!((off, sector), (Some(r.image_offset_bytes), Some(1)));
    assert!(text.contains("major version 2"), "{text}");
    cli_refuses(
        &bad,
        &[],
        &[&format!("image byte {at} (sector 1)"), "major version 2"],
    );

    // A newer *minor* version is read (its extra payload ignored), as the format rule says.
    let mut minor = demo.image.clone();
    minor[at + record::field::VERSION] = 0x13;
    reseal_record(&mut minor, at);
    let d = decode(&minor).unwrap();
    assert_eq!(d.records, clean.records);
}

// ---------------------------------------------------------------------------------------
// Every image a power cut can leave decodes (no false "garbage").
// ---------------------------------------------------------------------------------------

type Tiny = SimFlash<1, 4, 512>;

/// A workload on a 3-sector ring of 512-byte sectors: sessions with checkpoints, events
/// and ends, through several ring cycles (invented values). Returns the acknowledged records,
/// whether a flash error (the cut) stopped it, and the record in flight then (none for a cut
/// during `maintain`).
fn workload(j: &mut Journal<Tiny>) -> (Vec<Record>, bool, Option<Body>) {
    let mut acked = Vec::new();
    let mut append = |j: &mut Journal<Tiny>, b: Body| -> Result<(), Option<Body>> {
        match j.append(&b) {
            Ok(seq) => {
                acked.push(Record { seq, body: b });
                Ok(())
            }
            Err(_) => Err(Some(b)),
        }
    };
    let result = (|| -> Result<(), Option<Body>> {
        for s in 0..3u32 {
            let t0 = s * 50_000;
            let mut st = start(t0);
            st.session = SessionId(j.next_seq());
            append(j, Body::Start(st))?;
            let id = st.session;
            for k in 0..6u32 {
                append(j, checkpoint(id, t0 + 1000 * k, 100_000_000 * u64::from(k)))?;
                if k == 3 {
                    append(
                        j,
                        Body::Event(Event {
                            session: id,
                            at: Ticks(t0 + 3500),
                            delivered: StoredExposure::from_uj_per_m2(350_000_000),
                            code: EventCode::Fault(FaultCode::Sensor),
                            detail: 0,
                        }),
                    )?;
                }
                j.maintain().map_err(|_| None)?;
            }
            append(j, end(id, t0, t0 + 6000, 600_000_000))?;
        }
        Ok(())
    })();
    match result {
        Ok(()) => (acked, false, None),
        Err(b) => (acked, true, b),
    }
}

#[test]
fn every_image_a_power_cut_leaves_decodes_to_what_was_acknowledged() {
    let g = Geometry {
        sector_size_bytes: 512,
        sectors: 3,
        ..Geometry::EXAMPLE
    };
    let cfg = JournalConfig::try_new::<Tiny>(0, 3, Retention::Ring).unwrap();
    // The steps of the whole workload (bytes programmed and erases).
    let mut probe = Journal::mount(Tiny::new(3), cfg).unwrap();
    probe.flash_mut().cut_after(u64::MAX);
    let (all, stopped, _) = workload(&mut probe);
    assert!(!stopped);
    assert_eq!(all.len(), 3 * 9);
    let total = u64::MAX - probe.flash().fuel().unwrap();
    assert!(total > 1000, "{total}");
    let mut torn = 0;
    let mut recycled = 0;
    for cut in 0..total {
        let mut j = Journal::mount(Tiny::new(3), cfg).unwrap();
        j.flash_mut().seed(cut);
        j.flash_mut().cut_after(cut);
        let (acked, stopped, in_flight) = workload(&mut j);
        assert!(stopped, "cut {cut} did not stop the workload");
        let image = j.release().image().to_vec();
        let d = decode_image("cut.bin", &image, &g)
            .unwrap_or_else(|e| panic!("cut after {cut} steps: {e}"));
        torn += usize::from(d.journal.torn_tail);
        let decoded: Vec<&RecordReport> =
            d.records.iter().filter(|r| r.kind != "restate").collect();
        // The decoded records are the newest acknowledged ones, in order (the ring recycles
        // the oldest), possibly followed by the record in flight (a cut can fall after its
        // last byte), each with the value written.
        let (known, extra): (Vec<&RecordReport>, Vec<&RecordReport>) = decoded
            .iter()
            .partition(|rep| acked.iter().any(|r| r.seq == rep.seq));
        let acked_seqs: Vec<u32> = acked.iter().map(|r| r.seq).collect();
        let known_seqs: Vec<u32> = known.iter().map(|r| r.seq).collect();
        assert!(
            acked_seqs.ends_with(&known_seqs),
            "cut {cut}: decoded {known_seqs:?}, acknowledged {acked_seqs:?}"
        );
        recycled += usize::from(known_seqs.len() < acked_seqs.len() && !known_seqs.is_empty());
        for rep in &known {
            assert_same(rep, acked.iter().find(|r| r.seq == rep.seq).unwrap());
        }
        assert!(extra.len() <= 1, "cut {cut}: {extra:?}");
        if let Some(x) = extra.first() {
            let flight = in_flight.expect("only a record in flight can be extra");
            assert!(x.seq > *acked_seqs.last().unwrap_or(&0));
            assert!(
                std::ptr::eq(*x, *decoded.last().unwrap()),
                "the record in flight comes last"
            );
            assert_same(
                x,
                &Record {
                    seq: x.seq,
                    body: flight,
                },
            );
        }
    }
    assert!(torn > 100, "torn tails seen: {torn}");
    assert!(recycled > 100, "images with recycled records: {recycled}");
}

#[test]
fn images_after_two_power_cuts_and_a_reboot_between_decode() {
    let g = Geometry {
        sector_size_bytes: 512,
        sectors: 3,
        ..Geometry::EXAMPLE
    };
    let cfg = JournalConfig::try_new::<Tiny>(0, 3, Retention::Ring).unwrap();
    // About the workload's steps (see the test above); a cut past its end lets it finish.
    let total = 1417u64;
    let mut unfinished = 0;
    let mut sealed_notes = 0;
    for cut1 in (0..total).step_by(5) {
        let cut2 = (cut1 * 7919 + 13) % total;
        let mut j = Journal::mount(Tiny::new(3), cfg).unwrap();
        j.flash_mut().seed(cut1);
        j.flash_mut().cut_after(cut1);
        let (mut acked, _, flight1) = workload(&mut j);
        let mut flash = j.release();
        flash.power_on();
        flash.seed(cut2 ^ 0x55);
        flash.cut_after(cut2);
        // The device reboots, mounts and carries on (starting new sessions).
        let mut j = match Journal::mount(flash, cfg) {
            Ok(j) => j,
            Err(e) => panic!("cut {cut1}/{cut2}: remount: {:?}", e.error),
        };
        let (acked2, _, flight2) = workload(&mut j);
        acked.extend(acked2);
        let image = j.release().image().to_vec();
        let d = decode_image("cut.bin", &image, &g)
            .unwrap_or_else(|e| panic!("cuts after {cut1} and {cut2} steps: {e}"));
        unfinished += d
            .sessions
            .iter()
            .filter(|s| s.state == "unfinished")
            .count();
        sealed_notes += d
            .notes
            .iter()
            .filter(|n| n.contains("the journal continued in the next sector"))
            .count();
        let acked_seqs: Vec<u32> = acked.iter().map(|r| r.seq).collect();
        let mut known_seqs = Vec::new();
        for rep in d.records.iter().filter(|r| r.kind != "restate") {
            match acked.iter().find(|r| r.seq == rep.seq) {
                Some(r) => {
                    assert_same(rep, r);
                    known_seqs.push(rep.seq);
                }
                None => {
                    // Only a record in flight at one of the cuts, with the value written.
                    let b = [flight1, flight2]
                        .into_iter()
                        .flatten()
                        .find(|b| {
                            b.session().0 == rep.session
                                && b.kind() as u8 == kind_byte(&rep.kind)
                                && tick_of(b) == rep.tick
                        })
                        .unwrap_or_else(|| panic!("cuts {cut1}/{cut2}: unexpected record {rep:?}"));
                    assert_same(
                        rep,
                        &Record {
                            seq: rep.seq,
                            body: b,
                        },
                    );
                }
            }
        }
        assert!(
            acked_seqs.ends_with(&known_seqs),
            "cuts {cut1}/{cut2}: decoded {known_seqs:?}, acknowledged {acked_seqs:?}"
        );
    }
    assert!(unfinished > 10, "unfinished sessions seen: {unfinished}");
    assert!(sealed_notes > 10, "sealed sectors seen: {sealed_notes}");
}

fn kind_byte(kind: &str) -> u8 {
    match kind {
        "start" => 1,
        "checkpoint" => 2,
        "event" => 3,
        "end" => 4,
        _ => 5,
    }
}

fn tick_of(b: &Body) -> Option<u32> {
    match b {
        Body::Checkpoint(c) => Some(c.at.0),
        Body::Event(e) => Some(e.at.0),
        Body::End(e) => Some(e.at.0),
        Body::Start(_) | Body::Restate(_) => None,
        Body::Part(t) => Some(t.end.0),
        Body::Pause(p) => Some(p.started.0),
        Body::ExposureState(x) => Some(x.at.0),
        Body::Unmonitored(u) => Some(u.at.0),
        Body::CuringState(c) => Some(c.at.0),
    }
}
