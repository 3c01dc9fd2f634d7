//! `explain --profile`: the meter profile as bytes in a new file and as a Rust `const`, the
//! same profile the library computes from the configuration, never written over a file, and
//! the firmware example's committed profile current with its configuration.
//!
//! Inputs are the shipped example files (invented demonstration data); every check is against
//! the library's own profile and the tool's contract (CONFIG.md), not outside values.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use photon_ledger::prelude::*;
use photon_ledger::profile::{MeterProfile, PROFILE_LEN};
use photon_review::{config, explain};

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN)
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the tool runs")
}

fn example_config(dir: &Path) -> PathBuf {
    let p = dir.join("photoreactor.toml");
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/photoreactor.toml"),
        &p,
    )
    .unwrap();
    p
}

#[test]
fn the_profile_file_and_const_are_the_librarys_profile_of_the_configuration() {
    let d = tempfile::tempdir().unwrap();
    example_config(d.path());
    let o = run(
        d.path(),
        &[
            "explain",
            "-c",
            "photoreactor.toml",
            "--profile",
            "meter.profile",
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let bytes = std::fs::read(d.path().join("meter.profile")).unwrap();
    assert_eq!(bytes.len(), PROFILE_LEN);
    let decoded = MeterProfile::from_bytes(&bytes).unwrap();
    // The library's profile of the same configuration, and the meter it gives back.
    let cfg = config::load(d.path().join("photoreactor.toml").to_str().unwrap()).unwrap();
    assert_eq!(decoded, explain::profile(&cfg).unwrap());
    assert_eq!(Meter::from_profile(&decoded).unwrap(), cfg.meter);
    // Two ranges, two thresholds (target, target + tolerance), each converted per range.
    assert_eq!(decoded.range_count, 2);
    assert_eq!(decoded.threshold_count, 2);
    let text = String::from_utf8(o.stdout).unwrap();
    assert!(text.contains("pub const PROFILE: MeterProfile = MeterProfile {"));
    for t in 0..2 {
        let limits = decoded.threshold(t).unwrap().limits;
        let line = format!("limits: [{}],", limits.map(|l| l.to_string()).join(", "));
        assert!(text.contains(&line), "{line}");
    }
    assert!(text.contains(&format!(
        "volts_per_code_bits: 0x{:016X},",
        decoded.volts_per_code_bits
    )));
    assert!(text.contains(&format!(
        "unit_mantissa: {},",
        decoded.ranges[1].unit_mantissa
    )));
    // Nothing else in the directory: no temporary left.
    let mut names: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["meter.profile", "photoreactor.toml"]);
}

#[test]
fn an_existing_file_is_never_written_over() {
    let d = tempfile::tempdir().unwrap();
    example_config(d.path());
    let target = d.path().join("meter.profile");
    std::fs::write(&target, b"keep me").unwrap();
    let o = run(
        d.path(),
        &[
            "explain",
            "-c",
            "photoreactor.toml",
            "--profile",
            "meter.profile",
        ],
    );
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("meter.profile: exists"), "{err}");
    assert!(err.contains("nothing was written"), "{err}");
    assert!(o.stdout.is_empty());
    assert_eq!(std::fs::read(&target).unwrap(), b"keep me");
    // Nor the configuration itself, nor through a dangling symbolic link.
    let o = run(
        d.path(),
        &[
            "explain",
            "-c",
            "photoreactor.toml",
            "--profile",
            "photoreactor.toml",
        ],
    );
    assert_eq!(o.status.code(), Some(1));
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(d.path().join("nowhere"), d.path().join("dangling")).unwrap();
        let o = run(
            d.path(),
            &[
                "explain",
                "-c",
                "photoreactor.toml",
                "--profile",
                "dangling",
            ],
        );
        assert_eq!(o.status.code(), Some(1));
        assert!(!d.path().join("nowhere").exists());
    }
    let count = std::fs::read_dir(d.path()).unwrap().count();
    assert_eq!(count, if cfg!(unix) { 3 } else { 2 });
}

#[test]
fn the_firmware_examples_profile_is_current() {
    // examples/firmware/src/profile_const.rs and examples/firmware/profile.bin were made by
    // `explain --profile` from examples/firmware/profile.toml (see that file).
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("p.bin");
    let o = run(
        &repo(),
        &[
            "explain",
            "-c",
            "examples/firmware/profile.toml",
            "--profile",
            out.to_str().unwrap(),
        ],
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let fresh = String::from_utf8(o.stdout).unwrap();
    let committed =
        std::fs::read_to_string(repo().join("examples/firmware/src/profile_const.rs")).unwrap();
    let from_const = |s: &str| -> String {
        let at = s.find("pub const PROFILE").expect("the const");
        s[at..].to_string()
    };
    assert_eq!(
        from_const(&committed),
        from_const(&fresh),
        "regenerate examples/firmware/src/profile_const.rs (see examples/firmware/profile.toml)"
    );
    assert_eq!(
        std::fs::read(repo().join("examples/firmware/profile.bin")).unwrap(),
        std::fs::read(&out).unwrap(),
        "regenerate examples/firmware/profile.bin"
    );
}
