//! photon-review: every subcommand, the bit-identity of a replay with the library used
//! directly, the exposure register against a real SQLite file, and every bad-input case with
//! the place (file, line, column) checked in the message.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use hosttests::sim::SimPin;
use photon_ledger::prelude::*;
use photon_review::register::{Grouping, Register};
use photon_review::report::Report;
use photon_review::{config, replay, simulate};

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

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

/// The shipped example configuration, built by hand with the library API (the values of
/// `review/examples/photoreactor.toml`).
fn example_meter_by_hand() -> (Meter, SessionConfig) {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 4,
        },
        &[
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1.0e6),
                dark_offset: 3,
            },
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1.0e5),
                dark_offset: 3,
            },
        ],
    )
    .unwrap();
    let meter = Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.22),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(14.0),
        },
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: Some(Area::from_cm2(4.0)),
    })
    .unwrap();
    let cfg = SessionConfig {
        target: DoseAmount::Photons(PhotonAmount::from_umol(5.0)),
        tolerance: DoseAmount::Photons(PhotonAmount::from_umol(0.05)),
        max_gap_ticks: 500,
        max_unusable_run: 4,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    (meter, cfg)
}

/// The example CSV parsed independently of the tool (plain string splitting).
fn example_readings_by_hand() -> Vec<(Reading, u64)> {
    let text = std::fs::read_to_string(examples().join("photoreactor.csv")).unwrap();
    let mut out = Vec::new();
    for (i, line) in text.lines().enumerate() {
        if line.starts_with('#') || line.starts_with("time_s") {
            continue;
        }
        let f: Vec<&str> = line.split(',').collect();
        let t: f64 = f[0].parse().unwrap();
        let reading = Reading {
            code: f[1].parse().unwrap(),
            range: RangeIndex(f[2].parse().unwrap()),
            at: Ticks((t * 1000.0).round() as u32),
        };
        out.push((reading, i as u64 + 1));
    }
    out
}

#[test]
fn replay_is_bit_identical_to_the_library_used_directly() {
    // The library, used as firmware uses it.
    let (meter, cfg) = example_meter_by_hand();
    let mut session = Session::new(meter, cfg, SimPin::new(), SimPin::new()).unwrap();
    session.start().unwrap();
    let mut target_line = None;
    for (r, line) in example_readings_by_hand() {
        let before = session.phase();
        session.on_reading(&r).unwrap();
        if before == Phase::Exposing && session.phase() != Phase::Exposing {
            target_line = Some(line);
        }
    }
    let p = session.progress();

    // The same samples through the tool (the binary, JSON on stdout).
    let o = run(&[
        "replay",
        "--config",
        s(&examples().join("photoreactor.toml")),
        "--samples",
        s(&examples().join("photoreactor.csv")),
        "--print",
        "json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let report: Report = serde_json::from_str(&stdout(&o)).unwrap();

    assert_eq!(session.phase(), Phase::TargetMet);
    assert_eq!(report.outcome.stop_reason, "target_met");
    assert_eq!(report.outcome.target_reached_line, target_line);
    // Bit for bit, in every unit.
    let d = &report.dose;
    assert_eq!(
        d.radiant_exposure_j_per_m2.to_bits(),
        p.exposure.j_per_m2().to_bits()
    );
    assert_eq!(
        d.photon_exposure_mol_per_m2.to_bits(),
        p.photon_exposure.mol_per_m2().to_bits()
    );
    assert_eq!(
        d.photons_mol.map(f64::to_bits),
        p.photons.map(|n| n.mol().to_bits())
    );
    assert_eq!(d.fraction_of_target.to_bits(), p.fraction.to_bits());
    let raw: Vec<String> = (0..2)
        .map(|r| session.integrator().raw_total(RangeIndex(r)).to_string())
        .collect();
    assert_eq!(d.raw_totals_code_ticks_x2, raw);
    assert!(
        raw.iter().all(|v| v != "0"),
        "both ranges were used: {raw:?}"
    );

    // And through the tool's library functions in-process.
    let cfg = config::load(s(&examples().join("photoreactor.toml"))).unwrap();
    let out =
        replay::replay_file(&cfg, s(&examples().join("photoreactor.csv")), false, false).unwrap();
    assert_eq!(out.report.dose, report.dose);
}

#[test]
fn replay_prints_text_and_writes_json_and_text_files() {
    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("r.json");
    let text = dir.path().join("r.txt");
    let o = run(&[
        "replay",
        "-c",
        s(&examples().join("photoreactor.toml")),
        "-s",
        s(&examples().join("photoreactor.csv")),
        "--json",
        s(&json),
        "--text",
        s(&text),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    // stderr is not a terminal here: no progress bar, nothing on stderr.
    assert_eq!(stderr(&o), "");
    let printed = stdout(&o);
    assert_eq!(printed, std::fs::read_to_string(&text).unwrap());
    for needle in [
        "stop reason        target_met",
        "photons to area",
        "J/m²",
        "mJ/cm²",
    ] {
        assert!(printed.contains(needle), "{needle} missing from\n{printed}");
    }
    let report: Report = serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    assert!(report.complete);
    // 1882 since the LED peak became the wavelength maximum (issue 18): the band's photons
    // per joule moved, and the simulated session stops one sample earlier.
    assert_eq!(report.input.rows, 1882);
    assert_eq!(report.timing.samples, 1882);
    assert_eq!(report.timing.unusable_samples, 1);
    let kinds: Vec<&str> = report.events.iter().map(|e| e.kind.as_str()).collect();
    assert_eq!(kinds, ["start", "saturated_run", "target_met", "end"]);
    // The dose at the target is at or above the target (a stop target never undershoots).
    let at = report.dose.at_target_radiant_exposure_j_per_m2.unwrap();
    assert!(at >= report.configuration.target_j_per_m2);
    // The mean is the dose over the integrated time.
    let i = &report.irradiance;
    let mean = report.dose.radiant_exposure_j_per_m2 / report.timing.integrated_time_s;
    assert_eq!(i.mean_w_per_m2, Some(mean));
    assert!(i.min_w_per_m2.unwrap() < mean && mean < i.max_w_per_m2.unwrap());
}

#[test]
fn plot_draws_an_svg_with_units_lines_and_markers() {
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("run.svg");
    let o = run(&[
        "replay",
        "-c",
        s(&examples().join("photoreactor.toml")),
        "-s",
        s(&examples().join("photoreactor.csv")),
        "--plot",
        s(&svg),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let doc = std::fs::read_to_string(&svg).unwrap();
    assert!(doc.starts_with("<svg"), "{}", &doc[..80.min(doc.len())]);
    for needle in [
        "time (s)",
        "irradiance (W/m²)",
        "photons to the area (µmol)",
        "target 5",
        "target + tolerance 5.05",
        "target met",
        "saturated",
        "<polyline",
    ] {
        assert!(doc.contains(needle), "{needle} missing from the SVG");
    }
}

#[test]
fn simulate_writes_each_scenario_and_replays_to_its_outcome() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(&["simulate", "--list"]);
    assert!(o.status.success());
    let expected = [
        ("led-photoreactor", "target_met", None),
        ("curing-stuck-shutter", "overexposed", None),
        ("uv-logger-dropout", "fault", Some("gap")),
    ];
    for (name, stop, fault) in expected {
        assert!(stdout(&o).contains(name));
        let csv = dir.path().join(format!("{name}.csv"));
        let toml = dir.path().join(format!("{name}.toml"));
        let o = run(&["simulate", name, "-o", s(&csv), "--config-out", s(&toml)]);
        assert!(o.status.success(), "{}", stderr(&o));
        let cfg = config::load(s(&toml)).unwrap();
        let r = replay::replay_file(&cfg, s(&csv), false, false)
            .unwrap()
            .report;
        assert_eq!(r.outcome.stop_reason, stop, "{name}");
        assert_eq!(r.outcome.fault.as_deref(), fault, "{name}");
        assert!(r.outcome.target_reached, "{name}");
    }
    // The logger: a 90 s dropout is a gap, charged by the exposure monitor.
    let cfg = config::load(s(&dir.path().join("uv-logger-dropout.toml"))).unwrap();
    let r = replay::replay_file(
        &cfg,
        s(&dir.path().join("uv-logger-dropout.csv")),
        false,
        false,
    )
    .unwrap()
    .report;
    assert_eq!(r.timing.gaps.len(), 1);
    assert_eq!(r.timing.gaps[0].length_s, 91.0);
    let x = r.exposure.unwrap();
    assert!(x.limit_reached && x.gap_bound_j_per_m2 > 0.0);
    assert!(r.solar.unwrap().erythemal_exposure_sed > 0.0);
    // The curing device's 32-bit tick counter wraps during the run: no backwards time.
    let cfg = config::load(s(&dir.path().join("curing-stuck-shutter.toml"))).unwrap();
    let r = replay::replay_file(
        &cfg,
        s(&dir.path().join("curing-stuck-shutter.csv")),
        false,
        false,
    )
    .unwrap()
    .report;
    assert_eq!(r.timing.interval_max_s, Some(0.001));
    // An unknown scenario is an error.
    let o = run(&["simulate", "no-such-scenario"]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("unknown scenario"));
}

#[test]
fn simulated_closed_loop_equals_its_replay() {
    // The simulation drove the library's session itself; replaying its log must reach the
    // same dose (the log holds exactly the readings the session saw).
    let sc = simulate::scenario("led-photoreactor").unwrap();
    let csv = simulate::simulate(sc, 405).unwrap();
    let shipped = std::fs::read_to_string(examples().join("photoreactor.csv")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("s.csv");
    std::fs::write(&p, &csv).unwrap();
    let cfg = simulate::scenario_config(sc).unwrap();
    let a = replay::replay_file(&cfg, s(&p), false, false)
        .unwrap()
        .report;
    assert_eq!(a.outcome.stop_reason, "target_met");
    // The shipped example was written by this scenario with the default seed.
    assert_eq!(csv.lines().count(), shipped.lines().count());
}

#[test]
fn explain_prints_the_derived_factors() {
    let o = run(&[
        "explain",
        "-c",
        s(&examples().join("photoreactor.toml")),
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    let find = |section: &str, name: &str, unit: &str| {
        v.as_array()
            .unwrap()
            .iter()
            .find(|f| f["section"] == section && f["name"] == name && f["unit"] == unit)
            .unwrap_or_else(|| panic!("{section}/{name}/{unit}"))["value"]
            .as_f64()
            .unwrap()
    };
    // E = I / (R A): 1 / (0.22 A/W × 1 mm²) = 4.545 45e6 (W/m²)/A (computed from definitions).
    let k = find("calibration", "irradiance per photocurrent", "W/m² per A");
    assert!((k / 4.545_454_545e6 - 1.0).abs() < 1e-9, "{k}");
    // 3.3 V / 4096 codes (definition of a unipolar 12-bit converter).
    assert_eq!(find("adc", "volts per code", "V"), 3.3 / 4096.0);
    // Range 1 (100 kΩ): 3.3/4096/1e5 A per code (computed from definitions).
    let a = find("range 1", "photocurrent per net code", "A");
    assert!((a / (3.3 / 4096.0 / 1e5) - 1.0).abs() < 1e-12);
    // The target agrees with the replay report, and the integer target with the scale.
    let t = find("target", "radiant exposure", "J/m²");
    let cfg = config::load(s(&examples().join("photoreactor.toml"))).unwrap();
    let unit = cfg.meter.j_per_m2_per_unit(RangeIndex(1));
    let units = find("range 1", "target in integer units", "code·tick×2");
    assert!((units * unit / t - 1.0).abs() < 1e-12);
    // A 405 nm line gives 0.008 359 347 229 × 405 µmol/J (computed from the exact SI 2019
    // constants); an LED band around 405 nm gives more photons per joule than its peak.
    assert!(find("band", "photons per radiant energy", "µmol/J") > 405.0 * 0.008_359_347_229);
    let text = stdout(&run(&[
        "explain",
        "-c",
        s(&examples().join("photoreactor.toml")),
    ]));
    assert!(
        text.contains("[range 0]") && text.contains("µmol/J"),
        "{text}"
    );
}

fn replay_to_json(dir: &Path, scenario: &str, extra: &[&str]) -> PathBuf {
    let csv = dir.join(format!("{scenario}.csv"));
    let toml = dir.join(format!("{scenario}.toml"));
    if !csv.exists() {
        let o = run(&[
            "simulate",
            scenario,
            "-o",
            s(&csv),
            "--config-out",
            s(&toml),
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
    }
    let json = dir.join(format!("{scenario}{}.json", extra.len()));
    let mut args = vec!["replay", "-c", s(&toml), "-s", s(&csv), "--json", s(&json)];
    args.extend_from_slice(extra);
    let o = run(&args);
    assert!(o.status.success(), "{}", stderr(&o));
    json
}

#[test]
fn register_imports_idempotently_and_answers_questions() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("register.sqlite");
    let a = replay_to_json(dir.path(), "led-photoreactor", &[]);
    let b = replay_to_json(dir.path(), "curing-stuck-shutter", &[]);
    let c = replay_to_json(dir.path(), "uv-logger-dropout", &[]);
    // The same logger run, relabelled as a second day of the same person.
    let d = replay_to_json(
        dir.path(),
        "uv-logger-dropout",
        &["--start-utc", "2025-06-22T09:00:00Z"],
    );

    let o = run(&["register", "import", "--db", s(&db), s(&a), s(&b), s(&c)]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("3 added, 0 already present, 3 sessions"),
        "{}",
        stdout(&o)
    );
    // Importing the same reports again adds nothing.
    let o = run(&[
        "register",
        "import",
        "--db",
        s(&db),
        s(&a),
        s(&b),
        s(&c),
        s(&d),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(
        stdout(&o).contains("1 added, 3 already present, 4 sessions"),
        "{}",
        stdout(&o)
    );

    // The questions, through the library functions on the real file.
    let r = Register::open(s(&db)).unwrap();
    assert_eq!(r.session_count().unwrap(), 4);
    let by_device = r.dose_per_day(Grouping::Device).unwrap();
    let days: Vec<(&str, Option<&str>)> = by_device
        .iter()
        .map(|d| (d.day_utc.as_str(), d.group.as_deref()))
        .collect();
    assert_eq!(
        days,
        [
            ("2025-03-14", Some("bench-meter-07")),
            ("2025-03-14", Some("cure-station-3")),
            ("2025-06-21", Some("uv-logger-12")),
            ("2025-06-22", Some("uv-logger-12")),
        ]
    );
    let report_a: Report = serde_json::from_str(&std::fs::read_to_string(&a).unwrap()).unwrap();
    assert_eq!(
        by_device[0].radiant_exposure_j_per_m2,
        report_a.dose.radiant_exposure_j_per_m2
    );
    assert_eq!(by_device[0].photons_mol, report_a.dose.photons_mol);
    let by_person = r.dose_per_day(Grouping::Person).unwrap();
    let person: Vec<_> = by_person
        .iter()
        .filter(|d| d.group.as_deref() == Some("field-staff-04"))
        .collect();
    assert_eq!(person.len(), 2);
    assert!(person
        .iter()
        .all(|d| d.effective_exposure_j_per_m2.unwrap() > 30.0));
    let by_reactor = r.dose_per_day(Grouping::Reactor).unwrap();
    assert!(by_reactor.iter().any(|d| d.group.as_deref() == Some("R2")));

    let faults = r.fault_sessions().unwrap();
    assert_eq!(faults.len(), 2);
    assert!(faults
        .iter()
        .all(|f| f.fault == "gap" && f.device_id.as_deref() == Some("uv-logger-12")));

    let limits = r.limit_days().unwrap();
    let l: Vec<(&str, Option<&str>, &str)> = limits
        .iter()
        .map(|d| (d.day_utc.as_str(), d.who.as_deref(), d.reason.as_str()))
        .collect();
    assert_eq!(
        l,
        [
            ("2025-06-21", Some("field-staff-04"), "alarm in a session"),
            ("2025-06-22", Some("field-staff-04"), "alarm in a session"),
        ]
    );

    // The same through the command line.
    for (args, needle) in [
        (vec!["dose-per-day", "--by", "person"], "field-staff-04"),
        (vec!["faults"], "fault gap"),
        (vec!["limit-days"], "alarm in a session"),
    ] {
        let mut full = vec!["register"];
        full.extend(args.iter());
        full.extend(["--db", s(&db)]);
        let o = run(&full);
        assert!(o.status.success(), "{}", stderr(&o));
        assert!(stdout(&o).contains(needle), "{needle}: {}", stdout(&o));
    }
}

#[test]
fn register_daily_sum_over_sessions_counts_against_the_limit() {
    use photon_review::register::{SessionSummary, SourceKind};
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("r.sqlite");
    let mut r = Register::open(s(&db)).unwrap();
    // Two sessions of one person on one day, each below the 30 J/m² limit, together above.
    let session = |hash: &str, hour: u32, eff: f64| SessionSummary {
        content_sha256: hash.repeat(64), // a 64-digit hex key
        source_kind: SourceKind::FlashJournal,
        source_name: "test".to_string(),
        device_id: Some("logger-1".into()),
        person_id: Some("p-1".into()),
        reactor_id: None,
        start_utc: format!("2025-07-01T{hour:02}:00:00Z"),
        duration_s: 3600.0,
        radiant_exposure_j_per_m2: eff / 0.001,
        photon_exposure_mol_per_m2: 0.1,
        photons_mol: None,
        target_j_per_m2: None,
        target_reached: false,
        stop_reason: "end_of_data".into(),
        fault: None,
        effective_exposure_j_per_m2: Some(eff),
        exposure_limit_j_per_m2: Some(30.0),
        limit_reached: false,
        erythemal_exposure_sed: None,
    };
    let stats = r
        .import(&[session("a", 8, 20.0), session("b", 13, 12.0)])
        .unwrap();
    assert_eq!((stats.added, stats.already_present), (2, 0));
    let l = r.limit_days().unwrap();
    assert_eq!(l.len(), 1);
    assert_eq!(l[0].reason, "day total at or above the limit");
    assert_eq!(l[0].effective_exposure_j_per_m2, 32.0);
    // A malformed start time imports nothing (one transaction).
    let mut bad = session("c", 9, 1.0);
    bad.start_utc = "yesterday".into();
    assert!(r.import(&[session("d", 10, 1.0), bad]).is_err());
    assert_eq!(r.session_count().unwrap(), 2);
}

/// Run a replay that must fail; returns stderr and checks that no report was written.
fn bad_replay(config: &str, samples: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let c = dir.path().join("c.toml");
    let d = dir.path().join("d.csv");
    let json = dir.path().join("out.json");
    std::fs::write(&c, config).unwrap();
    std::fs::write(&d, samples).unwrap();
    let o = run(&[
        "replay",
        "-c",
        s(&c),
        "-s",
        s(&d),
        "--json",
        s(&json),
        "--plot",
        s(&dir.path().join("p.svg")),
    ]);
    assert!(!o.status.success(), "accepted:\n{}", stdout(&o));
    assert_eq!(o.status.code(), Some(1));
    assert!(!json.exists(), "a report was written");
    assert_eq!(stdout(&o), "", "something was presented as a report");
    let e = stderr(&o);
    assert!(e.contains("no file was written"), "{e}");
    e
}

fn good_config() -> String {
    std::fs::read_to_string(examples().join("photoreactor.toml")).unwrap()
}

#[test]
fn bad_csv_is_rejected_with_line_and_column() {
    let cfg = good_config();
    let cases: [(&str, &str, &[&str]); 9] = [
        (
            "missing reading column",
            "time_s,range\n0.1,0\n",
            &["d.csv: line 1", "missing reading column"],
        ),
        (
            "missing time column",
            "adc_code\n12\n",
            &["d.csv: line 1", "missing time column"],
        ),
        (
            "unknown column",
            "time_s,adc_code,rnage\n0.1,12,0\n",
            &["d.csv: line 1, column 3 (rnage)", "unknown column"],
        ),
        (
            "non-numeric",
            "time_s,adc_code,range\n0.05,100,1\n0.10,abc,1\n",
            &[
                "d.csv: line 3, column 2 (adc_code)",
                "`abc` is not an integer",
            ],
        ),
        (
            "NaN",
            "# comment\ntime_s,adc_code,range\n0.05,100,1\n0.10,100,1\nNaN,100,1\n",
            &["d.csv: line 5, column 1 (time_s)", "not a finite number"],
        ),
        (
            "non-monotonic time",
            "time_s,adc_code,range\n0.05,100,1\n0.15,100,1\n0.10,100,1\n",
            &["d.csv: line 4, column 1 (time_s)", "time goes backwards"],
        ),
        (
            "truncated file",
            "time_s,adc_code,range\n0.05,100,1\n0.10,100,1\n0.15,10",
            &[
                "d.csv: line 4, column 3",
                "2 fields where the header has 3",
                "truncated",
            ],
        ),
        (
            "no samples",
            "time_s,adc_code,range\n",
            &["d.csv: line 2", "no samples"],
        ),
        ("empty file", "", &["d.csv: line 1", "empty file"]),
    ];
    for (what, csv, needles) in cases {
        let e = bad_replay(&cfg, csv);
        for n in needles {
            assert!(e.contains(n), "{what}: `{n}` not in: {e}");
        }
    }
    // Ticks going backwards (beyond a wrap), a range that is not a number, a current as NaN.
    let e = bad_replay(&cfg, "time_ticks,adc_code\n4294967290,100\n5,100\n3,100\n");
    assert!(
        e.contains("line 4, column 1 (time_ticks)") && e.contains("backwards"),
        "{e}"
    );
    let e = bad_replay(&cfg, "time_s,current_a,range\n0.05,1e-6,0\n0.1,inf,0\n");
    assert!(
        e.contains("line 3, column 2 (current_a)") && e.contains("not a finite"),
        "{e}"
    );
    let e = bad_replay(&cfg, "time_s,adc_code,range\n0.05,100,-1\n");
    assert!(e.contains("line 2, column 3 (range)"), "{e}");
}

#[test]
fn bad_toml_is_rejected_with_line_column_and_key() {
    let csv = std::fs::read_to_string(examples().join("photoreactor.csv")).unwrap();
    let good = good_config();
    let line_of = |needle: &str| good.lines().position(|l| l.contains(needle)).unwrap() + 1;

    // An unknown key (a typo) is rejected, not silently defaulted.
    let typo = good.replace("saturation_margin_codes = 4", "saturation_margn_codes = 4");
    let e = bad_replay(&typo, &csv);
    let l = line_of("saturation_margin_codes");
    assert!(e.contains(&format!("c.toml: line {l}, column 1")), "{e}");
    assert!(e.contains("unknown field `saturation_margn_codes`"), "{e}");

    // An unknown table.
    let e = bad_replay(&format!("{good}\n[sesion]\nx = 1\n"), &csv);
    assert!(e.contains("unknown field `sesion`"), "{e}");

    // A value the library rejects names its key and place.
    let e = bad_replay(&good.replace("bits = 12", "bits = 7"), &csv);
    let l = line_of("bits = 12");
    assert!(
        e.contains(&format!("c.toml: line {l}, column 8 (adc.bits)")),
        "{e}"
    );
    assert!(e.contains("8 to 24 bits"), "{e}");

    // A wrong type.
    let e = bad_replay(
        &good.replace("reference_v = 3.3", "reference_v = \"3.3\""),
        &csv,
    );
    assert!(
        e.contains(&format!("line {}", line_of("reference_v"))),
        "{e}"
    );

    // Two dose keys for one target.
    let e = bad_replay(
        &good.replace(
            "target = { photons_umol = 5.0 }",
            "target = { photons_umol = 5.0, photons_mol = 5e-6 }",
        ),
        &csv,
    );
    assert!(
        e.contains("(session.target)") && e.contains("exactly one dose key"),
        "{e}"
    );

    // Photons without an area.
    let e = bad_replay(&good.replace("sample_area_cm2 = 4.0", ""), &csv);
    assert!(
        e.contains("(session.target)") && e.contains("sample_area_cm2"),
        "{e}"
    );

    // A syntax error (a truncated file).
    let cut = &good[..good.find("max_gap_ticks").unwrap() + 10];
    let e = bad_replay(cut, &csv);
    assert!(e.contains("c.toml: line"), "{e}");

    // A missing table.
    let e = bad_replay(&good.replace("[clock]\ntick_rate_hz = 1000\n", ""), &csv);
    assert!(e.contains("missing field `clock`"), "{e}");
}
