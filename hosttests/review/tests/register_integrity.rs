//! The exposure register's integrity: parallel imports into a fresh file all succeed without
//! duplicate rows; a damaged file is detected (import refuses it, `check` reports it); a query
//! never creates a register; imported values are validated, naming the file and the field.
//!
//! Reports come from replaying the shipped example files (invented demonstration data) with
//! different labels; every check is against the tool's documented contract
//! (`hosttests/review/CONFIG.md`, section 4), not against outside reference values.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the tool runs")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// `n` replay reports of distinct sessions (labels differ) in `dir`: `r0.json` ...
fn reports(dir: &Path, n: usize) -> Vec<String> {
    let ex = examples();
    let (c, s) = (ex.join("photoreactor.toml"), ex.join("photoreactor.csv"));
    (0..n)
        .map(|i| {
            let name = format!("r{i}.json");
            let o = run(
                dir,
                &[
                    "replay",
                    "-c",
                    c.to_str().unwrap(),
                    "-s",
                    s.to_str().unwrap(),
                    "--json",
                    &name,
                    "--device-id",
                    &format!("meter-{i}"),
                    "--start-utc",
                    &format!("2025-03-{:02}T09:00:00Z", 10 + i),
                    "--no-progress",
                ],
            );
            assert!(o.status.success(), "{}", stderr(&o));
            name
        })
        .collect()
}

fn count_rows(db: &Path) -> (i64, i64) {
    let c = rusqlite::Connection::open_with_flags(db, rusqlite::OpenFlags::SQLITE_OPEN_READ_ONLY)
        .unwrap();
    c.query_row(
        "SELECT COUNT(*), COUNT(DISTINCT content_sha256) FROM session",
        [],
        |r| Ok((r.get(0)?, r.get(1)?)),
    )
    .unwrap()
}

#[test]
fn parallel_imports_into_a_fresh_register_all_succeed_without_duplicates() {
    let d = tempfile::tempdir().unwrap();
    let reports = reports(d.path(), 4);
    let journal = examples().join("journal.bin");
    // Eight processes start at once on a register that does not exist yet; each imports
    // every report and the example image (3 sessions, 2 of them ended).
    let children: Vec<_> = (0..8)
        .map(|_| {
            let mut args = vec!["register", "import", "--db", "reg.sqlite"];
            args.extend(reports.iter().map(String::as_str));
            args.extend([
                "--image",
                journal.to_str().unwrap(),
                "--epoch-utc",
                "2025-03-14T09:00:00Z",
            ]);
            Command::new(BIN)
                .current_dir(d.path())
                .args(&args)
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        })
        .collect();
    let mut added = 0;
    for c in children {
        let o = c.wait_with_output().unwrap();
        assert!(o.status.success(), "an import failed: {}", stderr(&o));
        let out = stdout(&o);
        let n: u64 = out
            .split(" added")
            .next()
            .and_then(|s| s.rsplit(' ').next())
            .and_then(|s| s.parse().ok())
            .unwrap_or_else(|| panic!("no count in {out}"));
        added += n;
    }
    // 4 reports + 2 ended journal sessions, each added by exactly one process.
    assert_eq!(added, 6);
    assert_eq!(count_rows(&d.path().join("reg.sqlite")), (6, 6));
    let o = run(d.path(), &["register", "check", "--db", "reg.sqlite"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("ok, 6 sessions"), "{}", stdout(&o));
}

#[test]
fn a_damaged_register_is_detected_by_import_and_check() {
    let d = tempfile::tempdir().unwrap();
    let reports = reports(d.path(), 3);
    let mut args = vec!["register", "import", "--db", "reg.sqlite"];
    args.extend(reports.iter().map(String::as_str));
    let o = run(d.path(), &args);
    assert!(o.status.success(), "{}", stderr(&o));
    // Overwrite every page after the first (the schema stays readable) with a pattern.
    let db = d.path().join("reg.sqlite");
    let mut bytes = std::fs::read(&db).unwrap();
    assert!(bytes.len() > 4096, "a register of one page");
    for b in bytes.iter_mut().skip(4096) {
        *b = 0x5A;
    }
    std::fs::write(&db, &bytes).unwrap();
    let o = run(d.path(), &args);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("damaged"), "{}", stderr(&o));
    assert_eq!(
        std::fs::read(&db).unwrap(),
        bytes,
        "a damaged register was changed"
    );
    let o = run(d.path(), &["register", "check", "--db", "reg.sqlite"]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    // A file that is not SQLite at all.
    std::fs::write(d.path().join("text.sqlite"), "not a database\n".repeat(400)).unwrap();
    let o = run(
        d.path(),
        &["register", "import", "--db", "text.sqlite", &reports[0]],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("not an SQLite file"), "{}", stderr(&o));
}

#[test]
fn a_query_on_a_missing_register_is_an_error_and_creates_nothing() {
    let d = tempfile::tempdir().unwrap();
    for q in ["dose-per-day", "faults", "limit-days", "check"] {
        let o = run(d.path(), &["register", q, "--db", "nothing.sqlite"]);
        assert_eq!(o.status.code(), Some(1), "{q}: {}", stderr(&o));
        assert!(stderr(&o).contains("nothing.sqlite"), "{}", stderr(&o));
        assert!(
            !d.path().join("nothing.sqlite").exists(),
            "{q} created a register"
        );
    }
}

/// An edit of a report.
type Edit = Box<dyn Fn(&mut serde_json::Value)>;

#[test]
fn imported_values_are_validated_naming_file_and_field() {
    let d = tempfile::tempdir().unwrap();
    let reports = reports(d.path(), 1);
    let text = std::fs::read_to_string(d.path().join(&reports[0])).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let cases: Vec<(&str, Edit)> = vec![
        (
            "radiant_exposure_j_per_m2",
            Box::new(|v| v["dose"]["radiant_exposure_j_per_m2"] = (-1.0).into()),
        ),
        (
            "duration_s",
            Box::new(|v| v["timing"]["duration_s"] = (-5.0).into()),
        ),
        (
            "target_j_per_m2",
            Box::new(|v| v["configuration"]["target_j_per_m2"] = 0.0.into()),
        ),
        (
            "start_utc",
            Box::new(|v| v["run"]["start_utc"] = "1900-01-01T00:00:00Z".into()),
        ),
    ];
    for (field, edit) in cases {
        let mut bad = v.clone();
        edit(&mut bad);
        std::fs::write(d.path().join("bad.json"), bad.to_string()).unwrap();
        let o = run(
            d.path(),
            &[
                "register",
                "import",
                "--db",
                "reg.sqlite",
                &reports[0],
                "bad.json",
            ],
        );
        assert_eq!(o.status.code(), Some(1), "{field}: {}", stderr(&o));
        let e = stderr(&o);
        assert!(e.contains("bad.json") && e.contains(field), "{field}: {e}");
        assert!(
            !d.path().join("reg.sqlite").exists(),
            "{field}: a register was created"
        );
    }
    // The unedited report imports.
    let o = run(
        d.path(),
        &["register", "import", "--db", "reg.sqlite", &reports[0]],
    );
    assert!(o.status.success(), "{}", stderr(&o));
}

#[test]
fn a_register_locked_by_another_process_is_retried_then_reported_busy() {
    let d = tempfile::tempdir().unwrap();
    let reports = reports(d.path(), 1);
    let o = run(
        d.path(),
        &["register", "import", "--db", "reg.sqlite", &reports[0]],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let more = self::reports(d.path(), 2);
    // Another writer holds the register (an exclusive transaction) for the whole import.
    let holder = rusqlite::Connection::open(d.path().join("reg.sqlite")).unwrap();
    holder.execute_batch("BEGIN EXCLUSIVE").unwrap();
    let t0 = std::time::Instant::now();
    let o = run(
        d.path(),
        &[
            "register",
            "import",
            "--db",
            "reg.sqlite",
            &more[1],
            "--busy-timeout",
            "0.1",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let e = stderr(&o);
    assert!(e.contains("busy") && e.contains("try again"), "{e}");
    assert!(e.contains("nothing was imported"), "{e}");
    // 4 attempts of 0.1 s and short pauses: well under the 10 s default.
    assert!(
        t0.elapsed() < std::time::Duration::from_secs(8),
        "{:?}",
        t0.elapsed()
    );
    holder.execute_batch("ROLLBACK").unwrap();
    drop(holder);
    assert_eq!(count_rows(&d.path().join("reg.sqlite")), (1, 1));
    // Once the lock is gone the same import succeeds.
    let o = run(
        d.path(),
        &["register", "import", "--db", "reg.sqlite", &more[1]],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(count_rows(&d.path().join("reg.sqlite")), (2, 2));
}
