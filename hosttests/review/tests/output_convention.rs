//! The output convention: `--format` for standard output, file options for files, documented
//! exit statuses with `--strict` for QA scripts, the library version in every report, and the
//! time-series CSV (`--series FILE`, `--format csv`) consistent with the report.
//!
//! Inputs are the shipped example files (invented demonstration data); every check is against
//! the tool's own documented contract (CONFIG.md sections 3 and 6), not outside values.

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

fn workdir() -> tempfile::TempDir {
    let d = tempfile::tempdir().unwrap();
    for f in ["photoreactor.toml", "photoreactor.csv", "journal.bin"] {
        std::fs::copy(examples().join(f), d.path().join(f)).unwrap();
    }
    d
}

/// The version of the photon-ledger package, from the workspace's root manifest.
fn library_version() -> String {
    let text =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("../../Cargo.toml"))
            .unwrap();
    let t: toml::Table = text.parse().unwrap();
    t["package"]["version"].as_str().unwrap().to_string()
}

#[test]
fn strict_turns_a_missed_target_into_status_3_and_still_writes_the_report() {
    let d = workdir();
    let p = d.path();
    // The example reaches its target: 0 with or without --strict.
    let base = [
        "replay",
        "-c",
        "photoreactor.toml",
        "-s",
        "photoreactor.csv",
    ];
    let o = run(
        p,
        &[&base[..], &["--strict", "--json", "full.json"]].concat(),
    );
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    // The first 200 rows only: the run ends still exposing (`end_of_data`).
    let head: Vec<&str> = include_str!("../examples/photoreactor.csv")
        .lines()
        .take(202)
        .collect();
    std::fs::write(p.join("short.csv"), head.join("\n") + "\n").unwrap();
    let short = ["replay", "-c", "photoreactor.toml", "-s", "short.csv"];
    let o = run(p, &[&short[..], &["--json", "a.json"]].concat());
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let o = run(p, &[&short[..], &["--strict", "--json", "b.json"]].concat());
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    assert!(stderr(&o).contains("end_of_data"), "{}", stderr(&o));
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(p.join("b.json")).unwrap()).unwrap();
    assert_eq!(report["outcome"]["stop_reason"], "end_of_data");
}

#[test]
fn reports_name_the_tool_and_the_library_version() {
    let d = workdir();
    let lib = format!("photon-ledger {}", library_version());
    let tool = format!("photon-review {}", env!("CARGO_PKG_VERSION"));
    let o = run(
        d.path(),
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "photoreactor.csv",
            "--format",
            "json",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let r: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(r["library"], lib.as_str());
    assert_eq!(r["tool"], tool.as_str());
    // The old option name still works, and the text report names both.
    let o = run(
        d.path(),
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "photoreactor.csv",
            "--print",
            "text",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let first = String::from_utf8_lossy(&o.stdout)
        .lines()
        .next()
        .unwrap()
        .to_string();
    assert!(first.contains(&lib) && first.contains(&tool), "{first}");
    let o = run(d.path(), &["decode", "journal.bin", "--format", "json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let r: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(r["library"], lib.as_str());
}

#[test]
fn the_time_series_matches_the_report_row_for_row() {
    let d = workdir();
    let p = d.path();
    let o = run(
        p,
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "photoreactor.csv",
            "--series",
            "s.csv",
            "--json",
            "r.json",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let r: serde_json::Value =
        serde_json::from_slice(&std::fs::read(p.join("r.json")).unwrap()).unwrap();
    let series = std::fs::read_to_string(p.join("s.csv")).unwrap();
    let mut lines = series.lines();
    assert_eq!(
        lines.next().unwrap(),
        "time_s,irradiance_w_per_m2,photon_irradiance_umol_per_m2_s,\
         radiant_exposure_j_per_m2,dose_photons_umol,phase,line"
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len() as u64, r["input"]["rows"].as_u64().unwrap());
    let last = rows.last().unwrap();
    // The dose column is the integrator's, so the last row equals the report exactly.
    assert_eq!(
        last[3].parse::<f64>().unwrap(),
        r["dose"]["radiant_exposure_j_per_m2"].as_f64().unwrap()
    );
    // The dose in the target's unit is the same integral times the unit's factor; the report
    // multiplies its factors in another order, so the two agree to a few ulps.
    let (series_umol, report_umol) = (
        last[4].parse::<f64>().unwrap(),
        r["dose"]["photons_umol"].as_f64().unwrap(),
    );
    assert!(
        (series_umol - report_umol).abs() <= report_umol.abs() * 4.0 * f64::EPSILON,
        "{series_umol} vs {report_umol}"
    );
    // The phase turns target_met on the line the report names, and the dose in the target's
    // unit is then at or past the target.
    let line = r["outcome"]["target_reached_line"]
        .as_u64()
        .unwrap()
        .to_string();
    let first_met = rows.iter().find(|c| c[5] == "target_met").unwrap();
    assert_eq!(first_met[6], line);
    let target = r["configuration"]["target_value"].as_f64().unwrap();
    assert!(first_met[4].parse::<f64>().unwrap() >= target);
    let before: &Vec<&str> = rows.iter().rev().find(|c| c[5] == "exposing").unwrap();
    assert!(before[4].parse::<f64>().unwrap() < target);
    // Photon irradiance = irradiance × the band's mol/J × 10⁶ (µmol).
    let mol_per_j = r["configuration"]["band_mol_per_j"].as_f64().unwrap();
    for c in rows.iter().filter(|c| !c[1].is_empty()).take(50) {
        let e: f64 = c[1].parse().unwrap();
        let q: f64 = c[2].parse().unwrap();
        assert!((q - e * mol_per_j * 1e6).abs() <= 1e-12 * q.abs().max(1.0));
    }
    // `--format csv` prints the same series.
    let o = run(
        p,
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "photoreactor.csv",
            "--format",
            "csv",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(String::from_utf8_lossy(&o.stdout), series);
}

#[test]
fn a_failed_replay_leaves_no_series_and_no_temporary() {
    let d = workdir();
    let p = d.path();
    let mut text = include_str!("../examples/photoreactor.csv").to_string();
    text.push_str("99.0,not-a-code,0,24.0\n");
    std::fs::write(p.join("bad.csv"), text).unwrap();
    let before: Vec<_> = std::fs::read_dir(p)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    let o = run(
        p,
        &[
            "replay",
            "-c",
            "photoreactor.toml",
            "-s",
            "bad.csv",
            "--series",
            "s.csv",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("not-a-code"), "{}", stderr(&o));
    let after: Vec<_> = std::fs::read_dir(p)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(before.len(), after.len(), "{after:?}");
}
