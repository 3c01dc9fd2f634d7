//! `photon-review curing`: recorded curing runs through the library's `CuringController`,
//! one verdict per part; the shipped curing shift; exact stop samples on hand-made files;
//! guard, resume, abort, acknowledge and refusal; bad recipes and bad station columns named
//! by file, line and column.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use photon_review::curing::{replay_curing_file, CuringReport};
use photon_review::{config, simulate, ReviewError};

const BIN: &str = env!("CARGO_BIN_EXE_photon-review");

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

fn s(p: &Path) -> &str {
    p.to_str().expect("UTF-8 path")
}

fn run(args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .output()
        .expect("the tool runs")
}

/// A detector chain with round numbers: 12-bit converter, 4.096 V reference (1 mV per code),
/// 1 kΩ transimpedance (1 µA per code), certificate factor 10⁶ (W/m²)/A: 1 W/m² per code,
/// dark offset 0; 1 kHz ticks. Invented values.
const CHAIN: &str = r#"format = 1
[adc]
bits = 12
reference_v = 4.096
[[ranges]]
transimpedance_ohm = 1000.0
dark_offset_codes = 0
[calibration]
factor_w_per_m2_per_a = 1.0e6
[band]
line_nm = 365.0
[clock]
tick_rate_hz = 1000
"#;

fn recipe(curing: &str) -> String {
    format!("{CHAIN}[curing]\n{curing}")
}

const PLAIN: &str = r#"target = { radiant_exposure_j_per_m2 = 50.0 }
tolerance = { radiant_exposure_j_per_m2 = 5.0 }
max_gap_ticks = 50
stop = "at_target"
timer_stop = false
light_off_fraction = 0.5
light_off_floor_w_per_m2 = 1.0
light_off_margin_s = 0.02
"#;

/// Write the recipe and the samples into a fresh directory; replay them.
fn replay(recipe_text: &str, csv: &str) -> (tempfile::TempDir, Result<CuringReport, ReviewError>) {
    let dir = tempfile::tempdir().unwrap();
    let c = dir.path().join("recipe.toml");
    let d = dir.path().join("run.csv");
    std::fs::write(&c, recipe_text).unwrap();
    std::fs::write(&d, csv).unwrap();
    let r = config::load(s(&c)).and_then(|cfg| replay_curing_file(&cfg, s(&d)));
    (dir, r)
}

/// `rows` of (code, part, guard, command) every 10 ticks from tick 1000 (report times are
/// seconds since the first row: a `time_ticks` file).
fn csv(rows: &[(i32, u32, &str, &str)]) -> String {
    let mut out = String::from("time_ticks,adc_code,part,guard,command\n");
    for (i, (code, part, guard, cmd)) in rows.iter().enumerate() {
        out.push_str(&format!("{},{code},{part},{guard},{cmd}\n", 1000 + 10 * i));
    }
    out
}

/// A part of constant code `code` for `lit` rows, then `dark` rows at code 0.
fn part_rows(
    part: u32,
    code: i32,
    lit: usize,
    dark: usize,
) -> Vec<(i32, u32, &'static str, &'static str)> {
    let mut v = vec![(code, part, "closed", ""); lit];
    v.extend(vec![(0, part, "closed", ""); dark]);
    v
}

#[test]
fn constant_light_stops_on_the_exact_sample_at_target() {
    // 100 W/m² for 10 ms per interval: 1 J/m² per interval; the dose after the k-th row of
    // the part is (k − 1) J/m² (H = Σ ½(E_i + E_{i−1})·Δt, the trapezoid; common practice,
    // no source). Target 50 J/m², no lag, stop at the target: the stop is the 51st row
    // (500 ticks after the first), the light goes off at the 53rd; the interval 51 → 52 is
    // still lit (1 J/m²) and 52 → 53 half (½ J/m²): delivered 51.5 J/m².
    let rows = part_rows(1, 100, 52, 10);
    let (_d, r) = replay(&recipe(PLAIN), &csv(&rows));
    let r = r.unwrap();
    assert_eq!(r.parts.len(), 1);
    let p = &r.parts[0];
    assert_eq!(
        (p.verdict.as_str(), p.stop_reason.as_str()),
        ("pass", "target"),
        "{p:?}"
    );
    assert!(p.stopped_at_target);
    assert_eq!(p.stop_line, Some(2 + 50));
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1.0);
    assert!(close(p.start_time_s, 0.0), "{}", p.start_time_s);
    assert!(close(p.stop_time_s.unwrap(), 0.5), "{:?}", p.stop_time_s);
    assert!(
        close(p.at_stop_j_per_m2.unwrap(), 50.0),
        "{:?}",
        p.at_stop_j_per_m2
    );
    assert!(
        close(p.delivered_j_per_m2, 51.5),
        "{}",
        p.delivered_j_per_m2
    );
    assert!(
        close(p.after_stop_j_per_m2, 1.5),
        "{}",
        p.after_stop_j_per_m2
    );
    // No lag configured: nothing predicted after the stop.
    assert_eq!(p.predicted_tail_j_per_m2, Some(0.0));
    assert!(
        p.events.contains(&"light_off".to_string()),
        "{:?}",
        p.events
    );
    assert_eq!(r.summary.passed, 1);
}

#[test]
fn the_timer_compare_stops_between_readings_at_the_whole_tick_after_the_ideal_time() {
    // Anticipate a dead time of 5 ticks at 100 W/m² (0.1 J/m² per tick): tail 0.5 J/m².
    // Target 50.25 J/m²: the ideal stop is at (50.25 − 0.5) / 0.1 = 497.5 ticks after the
    // first reading; the timer compare is armed on whole ticks, rounded up so the target is
    // never undershot: tick 498, between the readings at 490 and 500. Expected dose with
    // the lag: 49 + 0.8 + 0.5 = 50.3 J/m². (Arithmetic of H = E·t; common practice, no
    // source.)
    let text = recipe(
        &PLAIN
            .replace("stop = \"at_target\"", "stop = \"anticipate\"")
            .replace("timer_stop = false", "timer_stop = true\nlag_s = 0.005")
            .replace("= 50.0 }", "= 50.25 }"),
    );
    let rows = part_rows(7, 100, 51, 10);
    let (_d, r) = replay(&text, &csv(&rows));
    let r = r.unwrap();
    let p = &r.parts[0];
    assert_eq!(p.stop_reason, "target_timer", "{p:?}");
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs().max(1.0);
    assert!(close(p.stop_time_s.unwrap(), 0.498), "{:?}", p.stop_time_s);
    assert!(
        close(p.at_stop_j_per_m2.unwrap(), 49.0),
        "{:?}",
        p.at_stop_j_per_m2
    );
    assert!(
        close(p.predicted_tail_j_per_m2.unwrap(), 1.3),
        "{:?}",
        p.predicted_tail_j_per_m2
    );
    assert!(
        close(p.expected_j_per_m2.unwrap(), 50.3),
        "{:?}",
        p.expected_j_per_m2
    );
    assert!((r.recipe.effective_lag_s - 0.005).abs() < 1e-12);

    // Without the timer the same recipe stops on the reading at 500 ticks.
    let no_timer = text.replace("timer_stop = true", "timer_stop = false");
    let (_d, r) = replay(&no_timer, &csv(&rows));
    let p = &r.unwrap().parts[0];
    assert_eq!(p.stop_reason, "target");
    assert!(close(p.stop_time_s.unwrap(), 0.5), "{:?}", p.stop_time_s);
}

#[test]
fn guard_pause_resume_abort_acknowledge_and_refusal() {
    let mut rows = Vec::new();
    // Part 1: the guard opens for 5 rows (the light at the part stays on in this record:
    // the dose while paused is counted), then an explicit resume.
    rows.extend(part_rows(1, 100, 10, 0));
    rows.extend(vec![(0, 1, "open", ""); 5]);
    rows.push((100, 1, "closed", "resume"));
    // Dose 10 J/m² after the resume row; the target is reached 40 rows later, and the
    // recorded light goes off one row after that.
    rows.extend(part_rows(1, 100, 41, 5));
    // Part 2 is aborted by the operator: a fault, the alarm latches.
    rows.extend(part_rows(2, 100, 10, 0));
    rows.push((0, 2, "closed", "abort"));
    rows.extend(part_rows(2, 0, 3, 0));
    // Part 3 starts without an acknowledgement: refused.
    rows.extend(part_rows(3, 100, 5, 0));
    // Between parts the operator acknowledges; part 4 runs.
    rows.push((0, 0, "closed", "acknowledge"));
    rows.extend(part_rows(4, 100, 52, 5));
    let (_d, r) = replay(&recipe(PLAIN), &csv(&rows));
    let r = r.unwrap();
    let ids: Vec<_> = r
        .parts
        .iter()
        .map(|p| (p.part, p.verdict.as_str()))
        .collect();
    assert_eq!(
        ids,
        [(1, "pass"), (2, "fail"), (3, "refused"), (4, "pass")],
        "{r:#?}"
    );
    let p1 = &r.parts[0];
    for e in [
        "guard_opened",
        "paused",
        "guard_closed",
        "resumed",
        "stop_issued",
    ] {
        assert!(p1.events.contains(&e.to_string()), "{e}: {:?}", p1.events);
    }
    assert_eq!(
        p1.paused_j_per_m2, 0.0,
        "the light was off while the guard was open"
    );
    assert_eq!(r.parts[1].fault.as_deref(), Some("aborted"));
    assert!(r.parts[2].reason.contains("alarm"), "{}", r.parts[2].reason);
    assert!(r.events.iter().any(|e| e.kind == "alarm_acknowledged"));
    assert_eq!(
        (
            r.summary.parts,
            r.summary.passed,
            r.summary.failed,
            r.summary.refused
        ),
        (4, 2, 1, 1)
    );
}

#[test]
fn data_that_ends_before_the_target_fails_with_the_dose_reached() {
    let rows = part_rows(9, 100, 20, 0);
    let (_d, r) = replay(&recipe(PLAIN), &csv(&rows));
    let p = &r.unwrap().parts[0];
    assert_eq!(
        (p.verdict.as_str(), p.stop_reason.as_str()),
        ("fail", "ended")
    );
    assert!(p.reason.contains("ended before the stop"), "{}", p.reason);
    assert!((p.delivered_j_per_m2 - 19.0).abs() < 1e-9);
}

#[test]
fn the_shipped_curing_shift_gives_its_documented_verdicts() {
    let cfg = config::load(s(&examples().join("curing-shift.toml"))).unwrap();
    let r = replay_curing_file(&cfg, s(&examples().join("curing-shift.csv"))).unwrap();
    let v: Vec<_> = r
        .parts
        .iter()
        .map(|p| (p.part, p.verdict.as_str(), p.fault.as_deref()))
        .collect();
    assert_eq!(
        v,
        [
            (101, "pass", None),
            (102, "pass", None),
            (103, "pass", None),
            (104, "fail", Some("light_not_off")),
            (105, "pass", None),
            (106, "pass", None),
        ]
    );
    // The station ran this recipe: every stop came from the timer compare, and the replay
    // stops where the station stopped (the dose after the stop is the fall of the lag).
    for p in &r.parts {
        assert_eq!(p.stop_reason, "target_timer", "part {}", p.part);
        let target = p.target_j_per_m2;
        if p.fault.is_none() {
            assert!(p.delivered_j_per_m2 >= target && p.delivered_j_per_m2 < target * 1.001);
            // The prediction with the configured lag lands within 0.01 % of what arrived.
            let e = p.expected_j_per_m2.unwrap();
            assert!(
                (e - p.delivered_j_per_m2).abs() < 1e-4 * target,
                "{e} {p:?}"
            );
        }
    }
    let p103 = &r.parts[2];
    assert!(p103.events.contains(&"paused".into()) && p103.events.contains(&"resumed".into()));
    assert!(r.parts[5].events.contains(&"lamp_low".into()));
    assert!(r.lamp_trend.as_ref().unwrap().maintenance_due);
    assert!(r.events.iter().any(|e| e.kind == "alarm_acknowledged"));
}

#[test]
fn the_shipped_curing_shift_is_what_the_scenario_writes() {
    let sc = simulate::scenario("curing-shift").unwrap();
    let csv = simulate::simulate(sc, 405).unwrap();
    let shipped = std::fs::read_to_string(examples().join("curing-shift.csv")).unwrap();
    assert!(
        csv == shipped,
        "regenerate: photon-review simulate curing-shift -o ..."
    );
    let toml = std::fs::read_to_string(examples().join("curing-shift.toml")).unwrap();
    assert_eq!(toml, sc.config_toml);
}

#[test]
fn bad_station_fields_name_file_line_and_column() {
    let mut text = csv(&part_rows(1, 100, 3, 0));
    text = text.replacen("1010,100,1,closed,", "1010,100,1,ajar,", 1);
    let (_d, r) = replay(&recipe(PLAIN), &text);
    let e = r.unwrap_err();
    let p = e.place().unwrap();
    assert_eq!(
        (p.line, p.column, p.field.as_deref()),
        (Some(3), Some(4), Some("guard")),
        "{e}"
    );
    assert!(p.file.ends_with("run.csv"));

    let text =
        csv(&part_rows(1, 100, 3, 0)).replacen("1020,100,1,closed,", "1020,100,1,closed,stop", 1);
    let e = replay(&recipe(PLAIN), &text).1.unwrap_err();
    let p = e.place().unwrap();
    assert_eq!(
        (p.line, p.column, p.field.as_deref()),
        (Some(4), Some(5), Some("command")),
        "{e}"
    );

    let text = csv(&part_rows(1, 100, 3, 0)).replacen("1000,100,1,", "1000,100,-1,", 1);
    let e = replay(&recipe(PLAIN), &text).1.unwrap_err();
    let p = e.place().unwrap();
    assert_eq!(
        (p.line, p.column, p.field.as_deref()),
        (Some(2), Some(3), Some("part")),
        "{e}"
    );
}

#[test]
fn bad_recipes_name_the_key() {
    let cases = [
        (
            PLAIN.replace("radiant_exposure_j_per_m2 = 50.0", "photons_umol = 5.0"),
            "curing.target",
        ),
        (
            format!("{PLAIN}lag_profile = [ {{ after_s = 0.02, remaining = 0.5 }} ]\n"),
            "curing.lag_profile",
        ),
        (
            format!(
                "{PLAIN}lag_s = 0.01\nlag_profile = [ {{ after_s = 0.02, remaining = 0.0 }} ]\n"
            ),
            "curing.lag_profile",
        ),
        (
            PLAIN.replace("light_off_fraction = 0.5", "light_off_fraction = 1.5"),
            "curing.light_off_fraction",
        ),
        (
            format!("{PLAIN}minimum_hold_off_s = 0.1\n"),
            "curing.minimum_hold_off_s",
        ),
        (
            format!("{PLAIN}lamp_reference_w_per_m2 = 100.0\n"),
            "curing.lamp_maintenance_below",
        ),
        (format!("{PLAIN}warm_up_s = 0.0005\n"), "curing.warm_up_s"),
    ];
    for (body, key) in cases {
        let e = config::parse("r.toml", recipe(&body).as_bytes()).unwrap_err();
        let p = e.place().unwrap();
        assert_eq!(p.field.as_deref(), Some(key), "{e}");
        assert!(p.line.is_some() && p.column.is_some(), "{e}");
    }
    // Both tables, or neither.
    let both = format!(
        "{}[session]\ntarget = {{ radiant_exposure_j_per_m2 = 1.0 }}\ntolerance = {{ radiant_exposure_j_per_m2 = 1.0 }}\nmax_gap_ticks = 5\n",
        recipe(PLAIN)
    );
    let e = config::parse("r.toml", both.as_bytes()).unwrap_err();
    assert!(e.to_string().contains("not both"), "{e}");
    let e = config::parse("r.toml", CHAIN.as_bytes()).unwrap_err();
    assert!(e.to_string().contains("[curing]"), "{e}");
}

#[test]
fn the_command_line_keeps_replay_and_curing_apart_and_never_writes_over_an_input() {
    let toml = examples().join("curing-shift.toml");
    let csv = examples().join("curing-shift.csv");
    let o = run(&["replay", "-c", s(&toml), "-s", s(&csv)]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("photon-review curing"));
    let session = examples().join("photoreactor.toml");
    let o = run(&["curing", "-c", s(&session), "-s", s(&csv)]);
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no [curing]"));

    let dir = tempfile::tempdir().unwrap();
    let copy = dir.path().join("shift.csv");
    std::fs::copy(&csv, &copy).unwrap();
    let before = std::fs::read(&copy).unwrap();
    let o = run(&["curing", "-c", s(&toml), "-s", s(&copy), "--json", s(&copy)]);
    assert_eq!(o.status.code(), Some(1));
    assert_eq!(
        std::fs::read(&copy).unwrap(),
        before,
        "the input is untouched"
    );

    // --strict: one part of the shift failed → status 3, the files are written.
    let out = dir.path().join("parts.csv");
    let o = run(&[
        "curing",
        "-c",
        s(&toml),
        "-s",
        s(&copy),
        "--csv",
        s(&out),
        "--strict",
        "--format",
        "json",
    ]);
    assert_eq!(
        o.status.code(),
        Some(3),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let parts = std::fs::read_to_string(&out).unwrap();
    assert_eq!(parts.lines().count(), 1 + 6);
    assert!(parts.starts_with("part,verdict,stop_reason,fault,"));
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(j["report_format"], "photon-review/curing");
    assert_eq!(j["parts"][3]["fault"], "light_not_off");
}
