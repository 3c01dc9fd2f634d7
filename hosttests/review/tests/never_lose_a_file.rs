//! photon-review never loses a file: an output that is an input (same path, symbolic link,
//! hard link) or not a regular file is refused before anything is written; several outputs
//! are written all or none, with no temporary left behind; standard output errors fail the
//! command (a closed pipe ends quietly); endless lines, huge fields and oversized images are
//! refused with bounded memory.
//!
//! The inputs are the shipped example files (invented demonstration data) copied into a
//! temporary directory; every check is against the tool's documented contract
//! (`hosttests/review/CONFIG.md`, `files` module), not against outside reference values.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

/// A temporary directory holding copies of the example files.
fn workdir() -> tempfile::TempDir {
    let d = tempfile::tempdir().unwrap();
    for f in ["photoreactor.toml", "photoreactor.csv", "journal.bin"] {
        std::fs::copy(examples().join(f), d.path().join(f)).unwrap();
    }
    d
}

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the tool runs")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

const REPLAY: [&str; 5] = [
    "replay",
    "-c",
    "photoreactor.toml",
    "-s",
    "photoreactor.csv",
];

fn replay_with(dir: &Path, extra: &[&str]) -> Output {
    let mut args = REPLAY.to_vec();
    args.extend_from_slice(extra);
    args.push("--no-progress");
    run_in(dir, &args)
}

#[test]
fn decode_refuses_to_write_its_csv_over_the_image() {
    let d = workdir();
    let before = std::fs::read(d.path().join("journal.bin")).unwrap();
    let o = run_in(d.path(), &["decode", "journal.bin", "--csv", "journal.bin"]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("is the input `journal.bin`"),
        "{}",
        stderr(&o)
    );
    assert_eq!(std::fs::read(d.path().join("journal.bin")).unwrap(), before);
}

#[test]
fn replay_refuses_outputs_that_are_its_inputs_by_path_symlink_or_hard_link() {
    let d = workdir();
    let p = d.path();
    let samples = std::fs::read(p.join("photoreactor.csv")).unwrap();
    let config = std::fs::read(p.join("photoreactor.toml")).unwrap();
    #[cfg(unix)]
    std::os::unix::fs::symlink("photoreactor.csv", p.join("link.csv")).unwrap();
    std::fs::hard_link(p.join("photoreactor.csv"), p.join("hard.csv")).unwrap();
    let mut cases = vec![
        ("--json", "photoreactor.csv"),
        ("--text", "photoreactor.toml"),
        ("--plot", "./photoreactor.csv"),
        ("--json", "hard.csv"),
    ];
    if cfg!(unix) {
        cases.push(("--json", "link.csv"));
    }
    for (opt, target) in cases {
        let o = replay_with(p, &[opt, target]);
        assert_eq!(o.status.code(), Some(1), "{opt} {target}: {}", stderr(&o));
        assert!(stderr(&o).contains("is the input"), "{}", stderr(&o));
        assert!(stderr(&o).contains("no file was written"), "{}", stderr(&o));
        assert_eq!(std::fs::read(p.join("photoreactor.csv")).unwrap(), samples);
        assert_eq!(std::fs::read(p.join("photoreactor.toml")).unwrap(), config);
    }
}

#[test]
fn outputs_that_are_not_regular_files_or_are_named_twice_are_refused() {
    let d = workdir();
    let p = d.path();
    std::fs::create_dir(p.join("sub")).unwrap();
    let mut cases = vec![("sub", "a directory"), (".", "a directory")];
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink("sub", p.join("dirlink")).unwrap();
        cases.push(("dirlink", "a directory (through a symbolic link)"));
        if Path::new("/dev/null").exists() {
            cases.push(("/dev/null", "a device"));
        }
    }
    for (target, what) in cases {
        let o = replay_with(p, &["--json", target]);
        assert_eq!(o.status.code(), Some(1), "{target}: {}", stderr(&o));
        assert!(stderr(&o).contains(what), "{target}: {}", stderr(&o));
    }
    let o = replay_with(p, &["--json", "a.json", "--text", "./a.json"]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("the same file as the output"),
        "{}",
        stderr(&o)
    );
    assert!(!p.join("a.json").exists());
    let o = run_in(
        p,
        &[
            "register",
            "import",
            "--db",
            "journal.bin",
            "--image",
            "journal.bin",
            "--epoch-utc",
            "2025-03-14T09:00:00Z",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("is the input"), "{}", stderr(&o));
}

#[test]
fn several_outputs_are_written_all_or_none_and_leave_no_temporary() {
    let d = workdir();
    let p = d.path();
    // The plot's directory does not exist: the JSON and text reports must not appear either.
    let o = replay_with(
        p,
        &[
            "--json",
            "r.json",
            "--text",
            "r.txt",
            "--plot",
            "missing/r.svg",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(!p.join("r.json").exists() && !p.join("r.txt").exists());
    assert!(stderr(&o).contains("no file was written"), "{}", stderr(&o));
    // An old report survives a failed run untouched.
    std::fs::write(p.join("old.json"), b"old report").unwrap();
    std::fs::write(p.join("bad.csv"), "time_s,adc_code\n0,10\n1,x\n").unwrap();
    let o = run_in(
        p,
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "bad.csv",
            "--json",
            "old.json",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert_eq!(std::fs::read(p.join("old.json")).unwrap(), b"old report");
    // A successful run: the files and nothing else (no temporary).
    let before = listing(p);
    let o = replay_with(
        p,
        &["--json", "r.json", "--text", "r.txt", "--plot", "r.svg"],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let mut expect = before;
    expect.extend(["r.json", "r.svg", "r.txt"].map(String::from));
    expect.sort();
    assert_eq!(listing(p), expect);
    // An output that is a symbolic link to a regular file replaces the file; the link stays.
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink("r.json", p.join("latest.json")).unwrap();
        let o = replay_with(p, &["--json", "latest.json"]);
        assert!(o.status.success(), "{}", stderr(&o));
        assert!(std::fs::symlink_metadata(p.join("latest.json"))
            .unwrap()
            .file_type()
            .is_symlink());
    }
}

#[test]
#[cfg(target_os = "linux")]
fn a_full_standard_output_fails_and_the_message_names_what_was_written() {
    let d = workdir();
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full on Linux");
    let o = Command::new(BIN)
        .current_dir(d.path())
        .args(REPLAY)
        .args(["--json", "r.json", "--no-progress"])
        .stdout(full)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("writing standard output"),
        "{}",
        stderr(&o)
    );
    // The report file was written before stdout failed: the message says so.
    assert!(d.path().join("r.json").exists());
    assert!(
        stderr(&o).contains("written before the error: r.json"),
        "{}",
        stderr(&o)
    );
    assert!(
        !stderr(&o).contains("no file was written"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn a_closed_pipe_ends_quietly_with_status_0() {
    let d = workdir();
    let mut child = Command::new(BIN)
        .current_dir(d.path())
        .args(["decode", "journal.bin", "--format", "json"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // The reader goes away before reading anything (as `| head -0` would).
    drop(child.stdout.take());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert_eq!(stderr(&o), "");
}

/// Run with a deadline: an endless read must fail quickly, not grow memory.
fn run_with_deadline(dir: &Path, args: &[&str], limit: Duration) -> Output {
    let mut child = Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let t0 = Instant::now();
    while child.try_wait().unwrap().is_none() {
        if t0.elapsed() > limit {
            let _ = child.kill();
            panic!("{args:?} still running after {limit:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    child.wait_with_output().unwrap()
}

#[test]
#[cfg(unix)]
fn an_endless_line_fails_at_once_naming_the_line() {
    let d = workdir();
    if !Path::new("/dev/zero").exists() {
        return;
    }
    let o = run_with_deadline(
        d.path(),
        &["replay", "-c", "photoreactor.toml", "-s", "/dev/zero"],
        Duration::from_secs(20),
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("line 1 is longer than 65536 bytes"),
        "{}",
        stderr(&o)
    );
    // The same after good lines: the line number counts them.
    let mut text = b"# comment\ntime_s,adc_code\n0,100\n1,".to_vec();
    text.resize(text.len() + 200_000, b'7');
    std::fs::write(d.path().join("long.csv"), &text).unwrap();
    let o = run_in(
        d.path(),
        &["replay", "-c", "photoreactor.toml", "-s", "long.csv"],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("line 4 is longer"), "{}", stderr(&o));
}

#[test]
fn a_huge_field_is_echoed_cut_short() {
    let d = workdir();
    let field = "z".repeat(20_000);
    std::fs::write(
        d.path().join("huge.csv"),
        format!("time_s,adc_code\n0,100\n1,{field}\n"),
    )
    .unwrap();
    let o = run_in(
        d.path(),
        &["replay", "-c", "photoreactor.toml", "-s", "huge.csv"],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let e = stderr(&o);
    assert!(e.contains(&format!("`{}…` is not", "z".repeat(80))), "{e}");
    assert!(!e.contains(&"z".repeat(81)), "{e}");
    assert!(e.contains("line 3"), "{e}");
}

#[test]
fn an_image_larger_than_its_geometry_is_refused_before_reading() {
    let d = workdir();
    // A sparse file of 1 TiB: reading it would take hours and the memory would run out.
    let big = d.path().join("big.bin");
    let f = std::fs::File::create(&big).unwrap();
    if f.set_len(1 << 40).is_err() {
        return; // a file system without sparse files of this size
    }
    drop(f);
    let o = run_with_deadline(d.path(), &["decode", "big.bin"], Duration::from_secs(20));
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("more than the geometry"),
        "{}",
        stderr(&o)
    );
    assert!(stderr(&o).contains("not read"), "{}", stderr(&o));
    #[cfg(unix)]
    if Path::new("/dev/zero").exists() {
        let o = run_with_deadline(d.path(), &["decode", "/dev/zero"], Duration::from_secs(20));
        assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
        assert!(stderr(&o).contains("not a regular file"), "{}", stderr(&o));
    }
}
