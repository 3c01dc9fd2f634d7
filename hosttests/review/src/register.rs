//! The exposure register: sessions from many devices and days in one SQLite file, imported
//! idempotently, and the questions a safety officer or lab manager asks.
//!
//! # The seam
//!
//! Everything enters through [`Register::import`], which takes a list of
//! [`SessionSummary`] — what is known about one finished session, whatever it came from.
//! The summaries come from the tool's own replay reports ([`SessionSummary::from_report`],
//! `register import REPORT.json`) and from flash images of a device's journal, decoded by
//! [`super::decode`] ([`SessionSummary::from_journal_session`], `register import --image`).
//!
//! # Idempotence
//!
//! Each summary carries a content hash (`content_sha256`): for a replay report the report's
//! `session_sha256` (configuration + samples + labels), for a journal session the hash of its
//! start payload and its end record ([`super::decode::session_key`]: both are in every image
//! that holds the end, while the records between them may be recycled by the ring from one
//! read-out to the next). It is the table's unique key, so importing the same report or image
//! twice — or two read-outs of the same device that both hold a session — adds nothing.
//!
//! # Sessions from a flash image
//!
//! Only ended sessions (with an end record) are imported: an open session may still grow,
//! and is imported from a later read-out once it has ended (the device writes an end record,
//! `abandoned` if it does not resume it). A journal holds ticks, not dates: the UTC start is
//! `--epoch-utc` (the UTC time of the device's tick 0) + start tick ÷ tick rate. The journal
//! records no illuminated area, weighting or exposure limit: `photons_mol`,
//! `effective_exposure_j_per_m2`, `exposure_limit_j_per_m2` and `erythemal_exposure_sed` are
//! null, `limit_reached` is 0. `stop_reason` is `target_met`, `overexposed`, `fault`,
//! `aborted`, `abandoned`, or the outcome code in hex.
//!
//! # Schema (version 1)
//!
//! See [`SCHEMA`]; one row per session in table `session`, the schema version in `meta`.
//! Days are UTC days of the session's start (a session across midnight counts on the day it
//! started).
//!
//! # Integrity
//!
//! - The schema is created inside one `BEGIN IMMEDIATE` transaction (`CREATE ... IF NOT
//!   EXISTS`), so imports that race on a fresh file all succeed; every connection waits up to
//!   [`BUSY_TIMEOUT`] for a lock, and a write still refused as busy is retried
//!   [`BUSY_RETRIES`] times, then reported as busy (nothing imported).
//! - Queries open the file read-only and never create it: a missing register is an error.
//! - An import runs `PRAGMA quick_check` first and refuses a damaged file; `register check`
//!   runs the full `PRAGMA integrity_check` and checks the stored values.
//! - Every imported value is validated ([`SessionSummary::validate`]): doses, durations and
//!   areas finite and not negative, targets and limits finite and positive, the start between
//!   [`EARLIEST_START_UTC`] and [`LATEST_START_UTC`]; an error names the file and the field.

use std::time::Duration;

use rusqlite::{params, Connection, ErrorCode, OpenFlags, OptionalExtension, TransactionBehavior};
use serde::Serialize;

use photon_ledger::journal::export::fault_name;
use photon_ledger::journal::record::{FaultCode, SessionOutcome};

use super::decode::{decode_file, Geometry, SessionReport};
use super::error::ReviewError;
use super::report::{Report, REPORT_FORMAT, REPORT_VERSION};
use super::time::{format_utc, parse_utc, utc_day};

/// How long a connection waits for another process's lock before SQLite reports it busy.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(10);

/// How many more times a write refused as busy after [`BUSY_TIMEOUT`] is tried.
pub const BUSY_RETRIES: u32 = 3;

/// Earliest start accepted (a date before it is a device clock that was never set).
pub const EARLIEST_START_UTC: &str = "1990-01-01T00:00:00Z";

/// Latest start accepted.
pub const LATEST_START_UTC: &str = "2100-01-01T00:00:00Z";

/// Version of the register's schema (table `meta`, key `schema_version`).
pub const SCHEMA_VERSION: i64 = 1;

/// The schema.
pub const SCHEMA: &str = "
CREATE TABLE IF NOT EXISTS meta (
    key   TEXT PRIMARY KEY,
    value TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS session (
    id                          INTEGER PRIMARY KEY,
    content_sha256              TEXT NOT NULL UNIQUE,  -- identifies the session's content
    source_kind                 TEXT NOT NULL CHECK (source_kind IN ('replay_report', 'flash_journal')),
    source_name                 TEXT NOT NULL,          -- file it was imported from
    device_id                   TEXT,
    person_id                   TEXT,
    reactor_id                  TEXT,
    start_utc                   TEXT NOT NULL,          -- YYYY-MM-DDTHH:MM:SSZ
    day_utc                     TEXT NOT NULL,          -- YYYY-MM-DD of start_utc
    duration_s                  REAL NOT NULL,          -- s
    radiant_exposure_j_per_m2   REAL NOT NULL,          -- J/m²
    photon_exposure_mol_per_m2  REAL NOT NULL,          -- mol/m²
    photons_mol                 REAL,                   -- mol, with an illuminated area
    target_j_per_m2             REAL,                   -- J/m²
    target_reached              INTEGER NOT NULL CHECK (target_reached IN (0, 1)),
    stop_reason                 TEXT NOT NULL,          -- target_met | overexposed | fault | end_of_data
    fault                       TEXT,                   -- the fault if stop_reason = 'fault'
    effective_exposure_j_per_m2 REAL,                   -- J/m² weighted, with an exposure monitor
    exposure_limit_j_per_m2     REAL,                   -- J/m² weighted, the limit that applied
    limit_reached               INTEGER NOT NULL CHECK (limit_reached IN (0, 1)),
    erythemal_exposure_sed      REAL,                   -- SED, with solar UV configured
    imported_utc                TEXT NOT NULL
);
CREATE INDEX IF NOT EXISTS session_day ON session (day_utc);
";

/// Where a session summary came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SourceKind {
    /// A replay report of this tool.
    ReplayReport,
    /// A session decoded from a flash image of a device's journal.
    FlashJournal,
}

impl SourceKind {
    fn as_str(self) -> &'static str {
        match self {
            Self::ReplayReport => "replay_report",
            Self::FlashJournal => "flash_journal",
        }
    }
}

/// What the register keeps of one finished session. Units as in the field names.
#[derive(Debug, Clone, PartialEq)]
pub struct SessionSummary {
    /// SHA-256 of the session's content, hex: the unique key.
    pub content_sha256: String,
    /// Where it came from.
    pub source_kind: SourceKind,
    /// The file it came from.
    pub source_name: String,
    /// Device label.
    pub device_id: Option<String>,
    /// Person label.
    pub person_id: Option<String>,
    /// Reactor or station label.
    pub reactor_id: Option<String>,
    /// UTC start, `YYYY-MM-DDTHH:MM:SSZ`.
    pub start_utc: String,
    /// Duration, s.
    pub duration_s: f64,
    /// Radiant exposure, J/m².
    pub radiant_exposure_j_per_m2: f64,
    /// Photon exposure, mol/m².
    pub photon_exposure_mol_per_m2: f64,
    /// Photons to the illuminated area, mol.
    pub photons_mol: Option<f64>,
    /// Target, J/m².
    pub target_j_per_m2: Option<f64>,
    /// Whether the target was reached.
    pub target_reached: bool,
    /// `target_met`, `overexposed`, `fault`, `end_of_data` (replay reports); `target_met`,
    /// `overexposed`, `fault`, `aborted`, `abandoned` or a hex outcome code (flash journals).
    pub stop_reason: String,
    /// The fault, if any.
    pub fault: Option<String>,
    /// Effective (weighted) exposure, J/m².
    pub effective_exposure_j_per_m2: Option<f64>,
    /// The effective exposure limit that applied, J/m².
    pub exposure_limit_j_per_m2: Option<f64>,
    /// Whether the exposure monitor reached its limit during the session.
    pub limit_reached: bool,
    /// Erythemal exposure, SED.
    pub erythemal_exposure_sed: Option<f64>,
}

impl SessionSummary {
    /// Check every value before it enters the register: doses, durations and amounts finite
    /// and not negative; target and limit finite and positive; the start a UTC time between
    /// [`EARLIEST_START_UTC`] and [`LATEST_START_UTC`]; a 64-digit hex content key.
    ///
    /// # Errors
    /// The first bad value, naming the source file and the field.
    pub fn validate(&self) -> Result<(), ReviewError> {
        let bad = |field: &str, why: String| {
            ReviewError::input(
                super::error::Place {
                    file: self.source_name.clone(),
                    field: Some(field.to_string()),
                    ..Default::default()
                },
                format!("{why}; nothing was imported"),
            )
        };
        let non_negative = |field: &str, v: f64| {
            if v.is_finite() && v >= 0.0 {
                Ok(())
            } else {
                Err(bad(field, format!("{v} is not a finite value ≥ 0")))
            }
        };
        let positive = |field: &str, v: f64| {
            if v.is_finite() && v > 0.0 {
                Ok(())
            } else {
                Err(bad(field, format!("{v} is not a finite value > 0")))
            }
        };
        if self.content_sha256.len() != 64
            || !self.content_sha256.bytes().all(|b| b.is_ascii_hexdigit())
        {
            return Err(bad(
                "session_sha256",
                format!(
                    "`{}` is not a SHA-256 in hex",
                    super::files::echo(&self.content_sha256)
                ),
            ));
        }
        let start = parse_utc(&self.start_utc).ok_or_else(|| {
            bad(
                "start_utc",
                format!(
                    "`{}` is not a UTC time",
                    super::files::echo(&self.start_utc)
                ),
            )
        })?;
        let (lo, hi) = (
            parse_utc(EARLIEST_START_UTC).unwrap_or(0.0),
            parse_utc(LATEST_START_UTC).unwrap_or(f64::MAX),
        );
        if !(lo..hi).contains(&start) {
            return Err(bad(
                "start_utc",
                format!(
                    "{} is outside {EARLIEST_START_UTC} .. {LATEST_START_UTC} (a device clock \
                     or --epoch-utc that was never set?)",
                    self.start_utc
                ),
            ));
        }
        non_negative("duration_s", self.duration_s)?;
        non_negative("radiant_exposure_j_per_m2", self.radiant_exposure_j_per_m2)?;
        non_negative(
            "photon_exposure_mol_per_m2",
            self.photon_exposure_mol_per_m2,
        )?;
        for (field, v) in [
            ("photons_mol", self.photons_mol),
            (
                "effective_exposure_j_per_m2",
                self.effective_exposure_j_per_m2,
            ),
            ("erythemal_exposure_sed", self.erythemal_exposure_sed),
        ] {
            if let Some(v) = v {
                non_negative(field, v)?;
            }
        }
        for (field, v) in [
            ("target_j_per_m2", self.target_j_per_m2),
            ("exposure_limit_j_per_m2", self.exposure_limit_j_per_m2),
        ] {
            if let Some(v) = v {
                positive(field, v)?;
            }
        }
        Ok(())
    }

    /// The summary of a replay report.
    ///
    /// # Errors
    /// A report that is not complete, of another format, or has no start time.
    pub fn from_report(r: &Report, source_name: &str) -> Result<Self, ReviewError> {
        let bad = |m: &str| ReviewError::Other(format!("{source_name}: {m}"));
        if r.report_format != REPORT_FORMAT || r.report_version != REPORT_VERSION {
            return Err(bad(
                "not a photon-review report of a version this tool reads",
            ));
        }
        if !r.complete {
            return Err(bad("the report is not complete; it is not imported"));
        }
        let start = r.run.start_utc.clone().ok_or_else(|| {
            bad("the report has no start time: replay with `--start-utc` or set run.start_utc")
        })?;
        let start_s = parse_utc(&start).ok_or_else(|| bad("run.start_utc is not a UTC time"))?;
        Ok(Self {
            content_sha256: r.session_sha256.clone(),
            source_kind: SourceKind::ReplayReport,
            source_name: source_name.to_string(),
            device_id: r.run.device_id.clone(),
            person_id: r.run.person_id.clone(),
            reactor_id: r.run.reactor_id.clone(),
            start_utc: format_utc(start_s),
            duration_s: r.timing.duration_s,
            radiant_exposure_j_per_m2: r.dose.radiant_exposure_j_per_m2,
            photon_exposure_mol_per_m2: r.dose.photon_exposure_mol_per_m2,
            photons_mol: r.dose.photons_mol,
            target_j_per_m2: Some(r.configuration.target_j_per_m2),
            target_reached: r.outcome.target_reached,
            stop_reason: r.outcome.stop_reason.clone(),
            fault: r.outcome.fault.clone(),
            effective_exposure_j_per_m2: r.exposure.as_ref().map(|x| x.effective_exposure_j_per_m2),
            exposure_limit_j_per_m2: r.exposure.as_ref().map(|x| x.limit_j_per_m2),
            limit_reached: r.exposure.as_ref().is_some_and(|x| x.limit_reached),
            erythemal_exposure_sed: r.solar.as_ref().map(|x| x.erythemal_exposure_sed),
        })
    }
}

/// Labels and the clock of the device a flash image was read from.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct ImageLabels {
    /// Device label.
    pub device_id: Option<String>,
    /// Person label.
    pub person_id: Option<String>,
    /// Reactor or station label.
    pub reactor_id: Option<String>,
    /// UTC time of the device's tick 0, `YYYY-MM-DDTHH:MM:SS[.f]Z`.
    pub epoch_utc: String,
}

fn fault_text(f: FaultCode) -> String {
    match f {
        FaultCode::Other(c) => format!("other:{c:#04x}"),
        f => fault_name(f).to_string(),
    }
}

impl SessionSummary {
    /// The summary of a session decoded from a flash image; `Ok(None)` for a session that
    /// has not ended (see the module doc). `epoch_s`: Unix seconds of the device's tick 0.
    ///
    /// # Errors
    /// An ended session whose start is unknown, or whose band wavelength gives no photon
    /// exposure.
    pub fn from_journal_session(
        s: &SessionReport,
        source_name: &str,
        labels: &ImageLabels,
        epoch_s: f64,
    ) -> Result<Option<Self>, ReviewError> {
        let (Some(code), Some(key)) = (s.outcome_code, s.content_sha256.clone()) else {
            return Ok(None);
        };
        let bad =
            |m: String| ReviewError::Other(format!("{source_name}: session {}: {m}", s.session));
        let (Some(tick), Some(rate)) = (s.start_tick, s.tick_rate_hz.filter(|&r| r > 0)) else {
            return Err(bad("its start record is not retained".into()));
        };
        let photon = s.photon_exposure_mol_per_m2.ok_or_else(|| {
            bad(format!(
                "band wavelength {:?} nm gives no photon exposure",
                s.wavelength_nm
            ))
        })?;
        let (stop_reason, fault) = match SessionOutcome::from_code(code) {
            SessionOutcome::TargetMet => ("target_met".to_string(), None),
            SessionOutcome::Overexposed => ("overexposed".into(), None),
            SessionOutcome::Aborted => ("aborted".into(), None),
            SessionOutcome::Abandoned => ("abandoned".into(), None),
            SessionOutcome::Faulted(f) => ("fault".into(), Some(fault_text(f))),
            SessionOutcome::Other(c) => (format!("{c:#06x}"), None),
        };
        Ok(Some(Self {
            content_sha256: key,
            source_kind: SourceKind::FlashJournal,
            source_name: source_name.to_string(),
            device_id: labels.device_id.clone(),
            person_id: labels.person_id.clone(),
            reactor_id: labels.reactor_id.clone(),
            start_utc: format_utc(epoch_s + f64::from(tick) / f64::from(rate)),
            duration_s: s.duration_s.unwrap_or(0.0),
            radiant_exposure_j_per_m2: s.radiant_exposure_j_per_m2,
            photon_exposure_mol_per_m2: photon,
            photons_mol: None,
            target_j_per_m2: s.target_j_per_m2,
            target_reached: s.target_reached,
            stop_reason,
            fault,
            effective_exposure_j_per_m2: None,
            exposure_limit_j_per_m2: None,
            limit_reached: false,
            erythemal_exposure_sed: None,
        }))
    }
}

/// Sessions found in flash images, ready for [`Register::import`].
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ImageSessions {
    /// The ended sessions.
    pub summaries: Vec<SessionSummary>,
    /// Sessions not imported (not ended), one line each.
    pub skipped: Vec<String>,
}

/// Decode every image (with geometry `g`) and summarise its ended sessions. Every image is
/// decoded before anything is returned; an image that does not decode fails the whole call.
///
/// # Errors
/// As [`decode_file`] and [`SessionSummary::from_journal_session`]; a malformed epoch.
pub fn image_summaries(
    paths: &[String],
    g: &Geometry,
    labels: &ImageLabels,
) -> Result<ImageSessions, ReviewError> {
    let epoch = parse_utc(&labels.epoch_utc).ok_or_else(|| {
        ReviewError::Other(format!(
            "--epoch-utc `{}` is not a UTC time like 2025-03-14T09:00:00Z",
            labels.epoch_utc
        ))
    })?;
    let mut out = ImageSessions::default();
    for p in paths {
        let d = decode_file(p, g)?;
        for s in &d.sessions {
            match SessionSummary::from_journal_session(s, p, labels, epoch)? {
                Some(x) => out.summaries.push(x),
                None => out.skipped.push(format!(
                    "{p}: session {} is {} (no end record): not imported; import a later \
                     read-out once it has ended",
                    s.session, s.state
                )),
            }
        }
    }
    Ok(out)
}

/// What an import did.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
pub struct ImportStats {
    /// Sessions added.
    pub added: u64,
    /// Sessions already in the register (same content hash), not added again.
    pub already_present: u64,
}

/// How to group doses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Grouping {
    /// By device.
    Device,
    /// By person.
    Person,
    /// By reactor or station.
    Reactor,
}

impl Grouping {
    fn column(self) -> &'static str {
        match self {
            Self::Device => "device_id",
            Self::Person => "person_id",
            Self::Reactor => "reactor_id",
        }
    }
}

/// Dose of one group on one day.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DayDose {
    /// UTC day.
    pub day_utc: String,
    /// The device, person or reactor (`null` if the sessions had no such label).
    pub group: Option<String>,
    /// Sessions.
    pub sessions: u64,
    /// Sum of radiant exposure, J/m².
    pub radiant_exposure_j_per_m2: f64,
    /// Sum of photons to the illuminated areas, mol (sessions with an area only).
    pub photons_mol: Option<f64>,
    /// Sum of effective exposure, J/m² (sessions with an exposure monitor only).
    pub effective_exposure_j_per_m2: Option<f64>,
}

/// A session that ended in a fault.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FaultSession {
    /// UTC start.
    pub start_utc: String,
    /// Device.
    pub device_id: Option<String>,
    /// Person.
    pub person_id: Option<String>,
    /// Reactor.
    pub reactor_id: Option<String>,
    /// The fault.
    pub fault: String,
    /// Radiant exposure when it ended, J/m².
    pub radiant_exposure_j_per_m2: f64,
    /// The file it was imported from.
    pub source_name: String,
}

/// A day on which a limit was exceeded.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitDay {
    /// UTC day.
    pub day_utc: String,
    /// The person (or, without a person label, the device).
    pub who: Option<String>,
    /// Sum of the day's effective exposure, J/m².
    pub effective_exposure_j_per_m2: f64,
    /// The limit, J/m².
    pub limit_j_per_m2: f64,
    /// Sessions whose monitor reached the limit.
    pub sessions_at_limit: u64,
    /// `alarm in a session` or `day total at or above the limit`.
    pub reason: String,
}

/// Largest replay report read, bytes (a report with 10 000 events is a few megabytes).
pub const MAX_REPORT_BYTES: u64 = 256 << 20;

/// Read and check replay report files (JSON) into summaries, all before anything is
/// imported.
///
/// # Errors
/// A file that cannot be read or is not a complete report (with its name and the JSON
/// error's line and column).
pub fn report_summaries(paths: &[String]) -> Result<Vec<SessionSummary>, ReviewError> {
    let mut summaries = Vec::with_capacity(paths.len());
    for p in paths {
        let bytes = super::files::read_limited(p, MAX_REPORT_BYTES, "replay report")?;
        let text = String::from_utf8(bytes).map_err(|e| {
            ReviewError::input(
                super::error::Place {
                    file: p.clone(),
                    ..Default::default()
                },
                format!(
                    "not UTF-8 text (byte {}): not a replay report",
                    e.utf8_error().valid_up_to()
                ),
            )
        })?;
        let report: Report = serde_json::from_str(&text).map_err(|e| {
            ReviewError::input(
                super::error::Place {
                    file: p.clone(),
                    line: Some(e.line() as u64),
                    column: Some(e.column() as u64),
                    field: None,
                },
                format!("not a photon-review report: {e}"),
            )
        })?;
        let summary = SessionSummary::from_report(&report, p)?;
        summary.validate()?;
        summaries.push(summary);
    }
    Ok(summaries)
}

/// An open register file.
pub struct Register {
    conn: Connection,
    path: String,
    busy_timeout: Duration,
}

/// What `register check` found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckReport {
    /// Sessions in the register (0 when there are problems).
    pub sessions: u64,
    /// Problems found (empty: the register is sound).
    pub problems: Vec<String>,
}

/// The rows of `PRAGMA pragma` other than `ok`.
fn pragma_rows(conn: &Connection, pragma: &str) -> rusqlite::Result<Vec<String>> {
    let mut stmt = conn.prepare(&format!("PRAGMA {pragma}"))?;
    let rows: Vec<String> = stmt
        .query_map([], |r| r.get(0))?
        .collect::<Result<_, _>>()?;
    Ok(rows.into_iter().filter(|r| r != "ok").collect())
}

fn is_busy(e: &rusqlite::Error) -> bool {
    matches!(
        e.sqlite_error_code(),
        Some(ErrorCode::DatabaseBusy | ErrorCode::DatabaseLocked)
    )
}

fn damaged(path: &str, problems: &[String]) -> ReviewError {
    let shown: Vec<&str> = problems.iter().take(5).map(String::as_str).collect();
    ReviewError::Register(format!(
        "{path}: the register is damaged ({}{}); nothing was changed: restore it from a backup",
        shown.join("; "),
        if problems.len() > shown.len() {
            format!("; {} more", problems.len() - shown.len())
        } else {
            String::new()
        }
    ))
}

fn sqlite_error(path: &str, what: &str, e: &rusqlite::Error) -> ReviewError {
    match e.sqlite_error_code() {
        Some(ErrorCode::NotADatabase) => ReviewError::Register(format!(
            "{path}: not an SQLite file ({what}: {e}); nothing was changed"
        )),
        Some(ErrorCode::DatabaseCorrupt) => damaged(path, &[e.to_string()]),
        _ => ReviewError::Register(format!("{path}: {what}: {e}")),
    }
}

impl Register {
    /// Open (creating if needed) the register at `path` for an import: the schema is created
    /// in one immediate transaction, and the file must pass `PRAGMA quick_check`.
    ///
    /// # Errors
    /// SQLite errors, a damaged file, a file that is not a register, or another schema
    /// version.
    pub fn open(path: &str) -> Result<Self, ReviewError> {
        Self::open_with_timeout(path, BUSY_TIMEOUT)
    }

    /// [`Register::open`], waiting up to `busy_timeout` (instead of [`BUSY_TIMEOUT`]) for
    /// another process's lock at each attempt.
    ///
    /// # Errors
    /// As [`Register::open`].
    pub fn open_with_timeout(path: &str, busy_timeout: Duration) -> Result<Self, ReviewError> {
        let conn = Connection::open(path).map_err(|e| sqlite_error(path, "opening", &e))?;
        conn.busy_timeout(busy_timeout)
            .map_err(|e| sqlite_error(path, "opening", &e))?;
        let mut r = Self {
            conn,
            path: path.to_string(),
            busy_timeout,
        };
        r.quick_check()?;
        r.with_retries("creating the schema", |conn| {
            let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
            tx.execute_batch(SCHEMA)?;
            let v: Option<String> = tx
                .query_row(
                    "SELECT value FROM meta WHERE key = 'schema_version'",
                    [],
                    |r| r.get(0),
                )
                .optional()?;
            if v.is_none() {
                tx.execute(
                    "INSERT INTO meta (key, value) VALUES ('schema_version', ?1)",
                    params![SCHEMA_VERSION.to_string()],
                )?;
            }
            tx.commit()
        })?;
        r.check_version()?;
        Ok(r)
    }

    /// Open an existing register read-only, for queries and `check`: a missing file is an
    /// error, never a new empty register.
    ///
    /// # Errors
    /// A missing file, a file that is not a register, or another schema version.
    pub fn open_existing(path: &str) -> Result<Self, ReviewError> {
        if let Err(e) = std::fs::metadata(path) {
            return Err(ReviewError::Register(format!(
                "{path}: {e}; a query never creates a register (`register import` does)"
            )));
        }
        let conn = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )
        .map_err(|e| sqlite_error(path, "opening", &e))?;
        conn.busy_timeout(BUSY_TIMEOUT)
            .map_err(|e| sqlite_error(path, "opening", &e))?;
        let r = Self {
            conn,
            path: path.to_string(),
            busy_timeout: BUSY_TIMEOUT,
        };
        r.check_version()?;
        Ok(r)
    }

    fn check_version(&self) -> Result<(), ReviewError> {
        let path = &self.path;
        let v: Option<String> = self
            .conn
            .query_row(
                "SELECT value FROM meta WHERE key = 'schema_version'",
                [],
                |r| r.get(0),
            )
            .optional()
            .map_err(|e| match e.sqlite_error_code() {
                Some(ErrorCode::NotADatabase | ErrorCode::DatabaseCorrupt) => {
                    sqlite_error(path, "reading", &e)
                }
                _ => ReviewError::Register(format!(
                    "{path}: not a photon-review register (no schema version: {e})"
                )),
            })?;
        match v {
            Some(v) if v == SCHEMA_VERSION.to_string() => Ok(()),
            Some(v) => Err(ReviewError::Register(format!(
                "{path}: schema version {v}, this tool uses {SCHEMA_VERSION}"
            ))),
            None => Err(ReviewError::Register(format!(
                "{path}: not a photon-review register (no schema version)"
            ))),
        }
    }

    /// `PRAGMA quick_check` (retried while busy): a damaged file is refused.
    fn quick_check(&mut self) -> Result<(), ReviewError> {
        let problems = self.with_retries("checking", |conn| pragma_rows(conn, "quick_check"))?;
        if problems.is_empty() {
            Ok(())
        } else {
            Err(damaged(&self.path, &problems))
        }
    }

    fn pragma_check(&self, pragma: &str) -> Result<Vec<String>, ReviewError> {
        pragma_rows(&self.conn, pragma).map_err(|e| sqlite_error(&self.path, "checking", &e))
    }

    /// The full check (`register check`): `PRAGMA integrity_check`, the schema version, and
    /// every stored value against [`SessionSummary::validate`]'s ranges.
    ///
    /// # Errors
    /// A damaged file, or SQLite errors.
    pub fn check(&self) -> Result<CheckReport, ReviewError> {
        let mut problems = self.pragma_check("integrity_check")?;
        if problems.is_empty() {
            let mut stmt = self.conn.prepare(
                "SELECT id, source_name, start_utc, duration_s, radiant_exposure_j_per_m2,
                        photon_exposure_mol_per_m2, photons_mol, effective_exposure_j_per_m2,
                        erythemal_exposure_sed, target_j_per_m2, exposure_limit_j_per_m2
                 FROM session ORDER BY id",
            )?;
            let rows = stmt.query_map([], |r| {
                let id: i64 = r.get(0)?;
                let name: String = r.get(1)?;
                let start: String = r.get(2)?;
                let mut bad = Vec::new();
                for (i, field) in [
                    (3, "duration_s"),
                    (4, "radiant_exposure_j_per_m2"),
                    (5, "photon_exposure_mol_per_m2"),
                    (6, "photons_mol"),
                    (7, "effective_exposure_j_per_m2"),
                    (8, "erythemal_exposure_sed"),
                ] {
                    if let Some(v) = r.get::<_, Option<f64>>(i)? {
                        if !(v.is_finite() && v >= 0.0) {
                            bad.push(format!("session {id} ({name}): {field} = {v}"));
                        }
                    }
                }
                for (i, field) in [(9, "target_j_per_m2"), (10, "exposure_limit_j_per_m2")] {
                    if let Some(v) = r.get::<_, Option<f64>>(i)? {
                        if !(v.is_finite() && v > 0.0) {
                            bad.push(format!("session {id} ({name}): {field} = {v}"));
                        }
                    }
                }
                if parse_utc(&start).is_none() {
                    bad.push(format!("session {id} ({name}): start_utc = `{start}`"));
                }
                Ok(bad)
            })?;
            for row in rows {
                problems.extend(row?);
            }
        }
        Ok(CheckReport {
            sessions: if problems.is_empty() {
                self.session_count()?
            } else {
                0
            },
            problems,
        })
    }

    /// Run a write `op`, retrying it [`BUSY_RETRIES`] times while SQLite reports the file busy
    /// or locked (each attempt already waited [`BUSY_TIMEOUT`]).
    fn with_retries<T>(
        &mut self,
        what: &str,
        mut op: impl FnMut(&mut Connection) -> rusqlite::Result<T>,
    ) -> Result<T, ReviewError> {
        let mut attempt = 0;
        loop {
            match op(&mut self.conn) {
                Ok(v) => return Ok(v),
                Err(e) if is_busy(&e) && attempt < BUSY_RETRIES => {
                    attempt += 1;
                    std::thread::sleep(Duration::from_millis(50 * u64::from(attempt)));
                }
                Err(e) if is_busy(&e) => {
                    return Err(ReviewError::Register(format!(
                        "{}: busy: another process held the register for more than {} s, {} \
                         times ({what}); nothing was imported, try again",
                        self.path,
                        self.busy_timeout.as_secs_f64(),
                        BUSY_RETRIES + 1
                    )))
                }
                Err(e) => return Err(sqlite_error(&self.path, what, &e)),
            }
        }
    }

    /// Import sessions; those already present (same content hash) are skipped. All or
    /// nothing: one transaction.
    ///
    /// This is the seam for every source: replay reports today, decoded flash journals later.
    ///
    /// # Errors
    /// SQLite errors, or a summary with a malformed start time (nothing is imported then).
    pub fn import(&mut self, sessions: &[SessionSummary]) -> Result<ImportStats, ReviewError> {
        for s in sessions {
            s.validate()?;
        }
        let now = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0.0, |d| d.as_secs_f64());
        let imported = format_utc(now);
        self.with_retries("importing", |conn| {
            let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
            let mut stats = ImportStats::default();
            {
                let mut stmt = tx.prepare(
                    "INSERT OR IGNORE INTO session (content_sha256, source_kind, source_name,
                        device_id, person_id, reactor_id, start_utc, day_utc, duration_s,
                        radiant_exposure_j_per_m2, photon_exposure_mol_per_m2, photons_mol,
                        target_j_per_m2, target_reached, stop_reason, fault,
                        effective_exposure_j_per_m2, exposure_limit_j_per_m2, limit_reached,
                        erythemal_exposure_sed, imported_utc)
                     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15,
                        ?16, ?17, ?18, ?19, ?20, ?21)",
                )?;
                for s in sessions {
                    // Validated above: the start parses.
                    let start = parse_utc(&s.start_utc).unwrap_or(0.0);
                    let n = stmt.execute(params![
                        s.content_sha256,
                        s.source_kind.as_str(),
                        s.source_name,
                        s.device_id,
                        s.person_id,
                        s.reactor_id,
                        format_utc(start),
                        utc_day(start),
                        s.duration_s,
                        s.radiant_exposure_j_per_m2,
                        s.photon_exposure_mol_per_m2,
                        s.photons_mol,
                        s.target_j_per_m2,
                        s.target_reached,
                        s.stop_reason,
                        s.fault,
                        s.effective_exposure_j_per_m2,
                        s.exposure_limit_j_per_m2,
                        s.limit_reached,
                        s.erythemal_exposure_sed,
                        imported,
                    ])?;
                    if n == 1 {
                        stats.added += 1;
                    } else {
                        stats.already_present += 1;
                    }
                }
            }
            tx.commit()?;
            Ok(stats)
        })
    }

    /// Import replay report files (JSON). Every file is read and checked before anything is
    /// imported.
    ///
    /// # Errors
    /// A file that cannot be read or is not a complete report (with its name and the JSON
    /// error's line and column), or SQLite errors.
    pub fn import_report_files(&mut self, paths: &[String]) -> Result<ImportStats, ReviewError> {
        let summaries = report_summaries(paths)?;
        self.import(&summaries)
    }

    /// Number of sessions in the register.
    ///
    /// # Errors
    /// SQLite errors.
    pub fn session_count(&self) -> Result<u64, ReviewError> {
        let n: i64 = self
            .conn
            .query_row("SELECT COUNT(*) FROM session", [], |r| r.get(0))?;
        Ok(u64::try_from(n).unwrap_or(0))
    }

    /// Dose per group per day, by day then group.
    ///
    /// # Errors
    /// SQLite errors.
    pub fn dose_per_day(&self, by: Grouping) -> Result<Vec<DayDose>, ReviewError> {
        let col = by.column();
        let sql = format!(
            "SELECT day_utc, {col}, COUNT(*), SUM(radiant_exposure_j_per_m2), SUM(photons_mol),
                    SUM(effective_exposure_j_per_m2)
             FROM session GROUP BY day_utc, {col} ORDER BY day_utc, {col}"
        );
        let mut stmt = self.conn.prepare(&sql)?;
        let rows = stmt.query_map([], |r| {
            Ok(DayDose {
                day_utc: r.get(0)?,
                group: r.get(1)?,
                sessions: u64::try_from(r.get::<_, i64>(2)?).unwrap_or(0),
                radiant_exposure_j_per_m2: r.get(3)?,
                photons_mol: r.get(4)?,
                effective_exposure_j_per_m2: r.get(5)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// Sessions that ended in a fault, oldest first.
    ///
    /// # Errors
    /// SQLite errors.
    pub fn fault_sessions(&self) -> Result<Vec<FaultSession>, ReviewError> {
        let mut stmt = self.conn.prepare(
            "SELECT start_utc, device_id, person_id, reactor_id, fault,
                    radiant_exposure_j_per_m2, source_name
             FROM session WHERE stop_reason = 'fault' ORDER BY start_utc, id",
        )?;
        let rows = stmt.query_map([], |r| {
            Ok(FaultSession {
                start_utc: r.get(0)?,
                device_id: r.get(1)?,
                person_id: r.get(2)?,
                reactor_id: r.get(3)?,
                fault: r
                    .get::<_, Option<String>>(4)?
                    .unwrap_or_else(|| "unknown".into()),
                radiant_exposure_j_per_m2: r.get(5)?,
                source_name: r.get(6)?,
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// Days on which a person (or, without a person label, a device) reached an exposure
    /// limit: the monitor's alarm latched in a session, or the day's effective exposure
    /// summed over sessions is at or above the limit (the rolling window may be lower; the
    /// sum is the conservative reading).
    ///
    /// # Errors
    /// SQLite errors.
    pub fn limit_days(&self) -> Result<Vec<LimitDay>, ReviewError> {
        let mut stmt = self.conn.prepare(
            "SELECT day_utc, COALESCE(person_id, device_id) AS who,
                    SUM(effective_exposure_j_per_m2), MIN(exposure_limit_j_per_m2),
                    SUM(limit_reached)
             FROM session
             WHERE exposure_limit_j_per_m2 IS NOT NULL
             GROUP BY day_utc, who
             HAVING SUM(limit_reached) > 0
                 OR SUM(effective_exposure_j_per_m2) >= MIN(exposure_limit_j_per_m2)
             ORDER BY day_utc, who",
        )?;
        let rows = stmt.query_map([], |r| {
            let at_limit = u64::try_from(r.get::<_, i64>(4)?).unwrap_or(0);
            Ok(LimitDay {
                day_utc: r.get(0)?,
                who: r.get(1)?,
                effective_exposure_j_per_m2: r.get::<_, Option<f64>>(2)?.unwrap_or(0.0),
                limit_j_per_m2: r.get(3)?,
                sessions_at_limit: at_limit,
                reason: if at_limit > 0 {
                    "alarm in a session".into()
                } else {
                    "day total at or above the limit".into()
                },
            })
        })?;
        Ok(rows.collect::<Result<_, _>>()?)
    }
}
