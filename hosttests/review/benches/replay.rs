//! Replay throughput: samples per second through the firmware pipeline (the library's
//! `Session`), through the review tool's replay engine (session + statistics + events) for
//! samples in memory, and end to end from a CSV file (parsing included), plus the CSV parse
//! alone to show what bounds the end-to-end figure. Prints figures; asserts nothing about
//! time. Correctness is enforced (exit status 1): the dose must be bit-identical through the
//! pipeline and the replay engine, and every row written to the CSV file must be read back,
//! by the CSV split and by the end-to-end replay.
//!
//! Run: `cargo bench -p photon-review --bench replay`
//! (`REPLAY_BENCH_SAMPLES=N` changes the number of samples, default 20 000 000 in memory and
//! 10 000 000 in the file.)

use std::hint::black_box;
use std::io::Write;
use std::time::Instant;

use hosttests::sim::Rng;
use photon_ledger::prelude::*;
use photon_review::config;
use photon_review::replay::{new_session, replay_file, Replayer};
use photon_review::samples::Sample;

/// A two-range 16-bit station whose target is far away, so every sample is integrated.
const CONFIG: &str = r#"
[adc]
bits = 16
reference_v = 4.096
saturation_margin_codes = 8
[[ranges]]
transimpedance_ohm = 1.0e5
dark_offset_codes = 40
[[ranges]]
transimpedance_ohm = 1.0e4
dark_offset_codes = 40
[calibration]
factor_w_per_m2_per_a = 6.6667e6
[band]
peak_nm = 365.0
fwhm_nm = 10.0
[clock]
tick_rate_hz = 1000000
[session]
target = { radiant_exposure_j_per_m2 = 1.0e15 }
tolerance = { radiant_exposure_j_per_m2 = 1.0e3 }
max_gap_ticks = 100000
"#;

fn readings(n: usize) -> Vec<Reading> {
    let mut rng = Rng::new(20);
    let mut t = Ticks(u32::MAX - 1_000_000); // wraps during the run
    (0..n)
        .map(|i| {
            // 1 kHz-ish sampling with jitter, a range switch every 100 000 samples.
            t = t.wrapping_add(990 + (rng.next_u64() % 21) as u32);
            let range = RangeIndex(((i / 100_000) % 2) as u8);
            let code = 20_000 + (rng.next_u64() % 2001) as i32;
            Reading { code, range, at: t }
        })
        .collect()
}

fn rate(n: u64, s: f64) -> String {
    format!(
        "{:>7.2} M samples/s ({:.2} ns/sample)",
        n as f64 / s / 1e6,
        s / n as f64 * 1e9
    )
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let n: usize = std::env::var("REPLAY_BENCH_SAMPLES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(20_000_000);
    let n_file = (n / 2).max(1);
    let cfg = config::parse("(bench)", CONFIG.as_bytes())?;
    println!("replay bench: {n} samples in memory, {n_file} from a CSV file, one thread");

    // 1. The firmware pipeline alone: Session::on_reading.
    let rs = readings(n);
    let mut session = new_session(cfg.meter.clone(), cfg.session).map_err(|e| e.to_string())?;
    let t0 = Instant::now();
    for r in &rs {
        let _ = black_box(session.on_reading(black_box(r)));
    }
    let t_session = t0.elapsed().as_secs_f64();
    let h_session = session.progress().exposure.j_per_m2();
    println!(
        "  pipeline (Session::on_reading), in memory:        {}",
        rate(n as u64, t_session)
    );

    // 2. The tool's replay engine on the same samples.
    let mut t_abs = 0u64;
    let mut prev = rs.first().map_or(Ticks(0), |r| r.at);
    let samples: Vec<Sample> = rs
        .iter()
        .enumerate()
        .map(|(i, r)| {
            t_abs += u64::from(r.at.wrapping_since(prev));
            prev = r.at;
            Sample {
                reading: *r,
                t_abs,
                line: i as u64 + 2,
                temperature_c: f32::NAN,
                station: Default::default(),
            }
        })
        .collect();
    drop(rs);
    let mut replayer = Replayer::new(&cfg, false)?;
    let t0 = Instant::now();
    for s in &samples {
        replayer.push(black_box(s));
    }
    let t_engine = t0.elapsed().as_secs_f64();
    let h_engine = replayer.session().progress().exposure.j_per_m2();
    println!(
        "  replay engine (session + stats + events), memory: {}",
        rate(n as u64, t_engine)
    );
    let mut failed = Vec::new();
    let same = h_session.to_bits() == h_engine.to_bits();
    println!(
        "  same dose both ways: {} (pipeline {h_session} J/m², engine {h_engine} J/m²)",
        if same { "yes, bit-identical" } else { "NO" }
    );
    if !same {
        failed.push(format!(
            "dose differs: pipeline {h_session} J/m² ({:#018x}), replay engine {h_engine} J/m² ({:#018x})",
            h_session.to_bits(),
            h_engine.to_bits()
        ));
    }

    // 3. End to end from a CSV file.
    let dir = std::env::temp_dir().join(format!("photon-review-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let path = dir.join("samples.csv");
    {
        let mut w = std::io::BufWriter::new(std::fs::File::create(&path)?);
        writeln!(w, "time_ticks,adc_code,range")?;
        for s in samples.iter().take(n_file) {
            writeln!(
                w,
                "{},{},{}",
                s.reading.at.0, s.reading.code, s.reading.range.0
            )?;
        }
    }
    drop(samples);
    let bytes = std::fs::metadata(&path)?.len();
    let p = path.to_string_lossy().to_string();

    // 3a. The CSV parse alone (the csv crate, no conversion, no pipeline).
    let t0 = Instant::now();
    let mut rdr = csv::ReaderBuilder::new()
        .buffer_capacity(1 << 16)
        .from_path(&path)?;
    let mut rec = csv::ByteRecord::new();
    let mut rows = 0u64;
    while rdr.read_byte_record(&mut rec)? {
        rows += black_box(rec.len()) as u64 / 3;
    }
    let t_parse = t0.elapsed().as_secs_f64();
    println!(
        "  CSV split alone (csv crate, {:.0} MB):              {}  {:.0} MB/s",
        bytes as f64 / 1e6,
        rate(rows, t_parse),
        bytes as f64 / t_parse / 1e6
    );

    // 3b. End to end: read, hash, parse numbers, convert, replay, report.
    let t0 = Instant::now();
    let out = replay_file(&cfg, &p, false, false)?;
    let t_file = t0.elapsed().as_secs_f64();
    println!(
        "  end to end from CSV (replay_file):                 {}  {:.0} MB/s",
        rate(out.report.input.rows, t_file),
        bytes as f64 / t_file / 1e6
    );
    std::fs::remove_dir_all(&dir)?;
    for (what, got) in [
        ("CSV split", rows),
        ("end-to-end replay", out.report.input.rows),
    ] {
        if got != n_file as u64 {
            failed.push(format!("{what} read {got} rows, {n_file} were written"));
        }
    }
    // Throughput is machine-dependent and not enforced here; the figures above are for
    // comparison between commits on the same machine.
    if !failed.is_empty() {
        for f in &failed {
            eprintln!("FAIL: {f}");
        }
        std::process::exit(1);
    }
    println!("  replay bench: dose bit-identical, every row read back");
    Ok(())
}
