//! photon-review: replay recorded samples through the firmware's own pipeline, plot them,
//! simulate sample files, explain a configuration, decode a device's flash image, and keep an
//! exposure register.
//!
//! Run `photon-review --help` (or `cargo run -p photon-review -- --help`).
//! Configuration and report keys: `hosttests/review/CONFIG.md`.
//!
//! Exit status: 0 done; 1 error (bad input, a refused or failed output: the message says what
//! was written, if anything); 2 bad command line; 3 `replay --strict` and the run did not end
//! with its target met (overexposed, fault, or still exposing at the end of the data; the
//! outputs are written). A closed standard output (`| head`) ends quietly with 0.

use std::io::Write;
use std::process::ExitCode;
use std::time::Duration;

use clap::{Args, Parser, Subcommand, ValueEnum};
use photon_review::decode::{self, Geometry, RetentionPolicy};
use photon_review::files::{self, check_outputs, write_outputs};
use photon_review::register::{self, Grouping, ImageLabels, Register};
use photon_review::report::sig;
use photon_review::{
    config, curing, demo_image, explain, plot, replay, simulate, time, ReviewError,
};

#[derive(Parser)]
#[command(
    name = "photon-review",
    version,
    about = "Review photon-ledger dose runs on a PC: \
    replay samples through the firmware pipeline, plot, simulate, explain, decode flash images, \
    register exposures",
    after_help = "Exit status: 0 done; 1 error; 2 bad command line; 3 replay --strict and the \
    target was not met (overexposed, fault, or still exposing at the end). A closed standard \
    output ends quietly with 0."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Format {
    /// The text report.
    Text,
    /// The JSON report.
    Json,
    /// The time series (one row per sample), as `--series` writes it.
    Csv,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum TextJson {
    /// Text for people.
    Text,
    /// JSON for programs.
    Json,
}

#[derive(Clone, Copy, ValueEnum)]
enum DecodePrint {
    Text,
    Json,
    Csv,
}

#[derive(Clone, Copy, ValueEnum)]
enum RetentionArg {
    Ring,
    KeepAll,
}

/// Seconds: finite, 0 to one hour.
fn parse_seconds(s: &str) -> Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && (0.0..=3600.0).contains(&v) => Ok(v),
        _ => Err(format!("`{s}` is not a number of seconds from 0 to 3600")),
    }
}

/// A `u32` in decimal or with a `0x` prefix in hex.
fn parse_u32(s: &str) -> Result<u32, String> {
    let t = s.trim();
    let r = match t.strip_prefix("0x").or_else(|| t.strip_prefix("0X")) {
        Some(h) => u32::from_str_radix(&h.replace('_', ""), 16),
        None => t.replace('_', "").parse(),
    };
    r.map_err(|e| format!("`{s}` is not a 32-bit number (decimal, or hex with 0x): {e}"))
}

/// The journal's place and the flash's sizes (defaults: the shipped example image).
#[derive(Args, Clone, Copy)]
struct GeometryArgs {
    /// Device address of the journal's first byte (the image's first byte), decimal or 0x hex.
    #[arg(long, value_parser = parse_u32, default_value = "0")]
    base: u32,
    /// Sector (erase) size, bytes.
    #[arg(long, value_parser = parse_u32, default_value_t = Geometry::EXAMPLE.sector_size_bytes)]
    sector_size: u32,
    /// Number of sectors of the journal.
    #[arg(long, value_parser = parse_u32, default_value_t = Geometry::EXAMPLE.sectors)]
    sectors: u32,
    /// Write (program) size of the flash, bytes.
    #[arg(long, value_parser = parse_u32, default_value_t = Geometry::EXAMPLE.write_size_bytes)]
    write_size: u32,
    /// Read size of the flash, bytes.
    #[arg(long, value_parser = parse_u32, default_value_t = Geometry::EXAMPLE.read_size_bytes)]
    read_size: u32,
    /// The journal's retention policy in the firmware.
    #[arg(long, value_enum, default_value = "ring")]
    retention: RetentionArg,
}

impl GeometryArgs {
    fn geometry(self) -> Geometry {
        Geometry {
            base_address: self.base,
            sector_size_bytes: self.sector_size,
            sectors: self.sectors,
            write_size_bytes: self.write_size,
            read_size_bytes: self.read_size,
            retention: match self.retention {
                RetentionArg::Ring => RetentionPolicy::Ring,
                RetentionArg::KeepAll => RetentionPolicy::KeepAll,
            },
        }
    }
}

#[derive(Clone, Copy, ValueEnum)]
enum By {
    Device,
    Person,
    Reactor,
}

#[derive(Subcommand)]
enum Command {
    /// Replay a sample file (CSV) through a session configuration (TOML) and report.
    Replay {
        /// Session configuration file (TOML).
        #[arg(long, short = 'c')]
        config: String,
        /// Sample file (CSV with a header).
        #[arg(long, short = 's')]
        samples: String,
        /// What to print on standard output.
        #[arg(long = "format", alias = "print", value_enum, default_value = "text")]
        print: Format,
        /// Also write the JSON report to this file.
        #[arg(long)]
        json: Option<String>,
        /// Also write the text report to this file.
        #[arg(long)]
        text: Option<String>,
        /// Draw irradiance and dose against time into this SVG file.
        #[arg(long)]
        plot: Option<String>,
        /// Write the time series (time, irradiance, photon irradiance, dose, phase per sample)
        /// as CSV to this file.
        #[arg(long)]
        series: Option<String>,
        /// Never show a progress bar.
        #[arg(long)]
        no_progress: bool,
        /// Device label (overrides run.device_id).
        #[arg(long)]
        device_id: Option<String>,
        /// Person label (overrides run.person_id).
        #[arg(long)]
        person_id: Option<String>,
        /// Reactor or station label (overrides run.reactor_id).
        #[arg(long)]
        reactor_id: Option<String>,
        /// UTC start of the run, e.g. 2025-03-14T09:30:00Z (overrides run.start_utc).
        #[arg(long)]
        start_utc: Option<String>,
        /// Exit with status 3 unless the run ended with its target met (for QA scripts); the
        /// report and files are written either way.
        #[arg(long)]
        strict: bool,
    },
    /// Replay a recorded curing run (CSV with a `part` column) through a curing recipe
    /// (TOML with [curing]) and the library's curing controller: one record per part with a
    /// verdict and its reason.
    Curing {
        /// Curing recipe (TOML with a [curing] table).
        #[arg(long, short = 'c')]
        config: String,
        /// Sample file (CSV with a header and a `part` column).
        #[arg(long, short = 's')]
        samples: String,
        /// What to print on standard output: the text report, the JSON report, or one CSV
        /// row per part.
        #[arg(long, value_enum, default_value = "text")]
        format: Format,
        /// Also write the JSON report to this file.
        #[arg(long)]
        json: Option<String>,
        /// Also write the text report to this file.
        #[arg(long)]
        text: Option<String>,
        /// Also write one CSV row per part to this file.
        #[arg(long)]
        csv: Option<String>,
        /// Exit with status 3 unless every part passed (for QA scripts); the report and files
        /// are written either way.
        #[arg(long)]
        strict: bool,
    },
    /// Decode a raw flash image of the session journal: records as CSV and JSON, and a
    /// summary of its sessions. Never writes to the image.
    Decode {
        /// The image file: the journal's range as read from the device.
        image: String,
        #[command(flatten)]
        geometry: GeometryArgs,
        /// What to print on standard output.
        #[arg(long = "format", alias = "print", value_enum, default_value = "text")]
        print: DecodePrint,
        /// Also write the JSON (records, sessions) to this file.
        #[arg(long)]
        json: Option<String>,
        /// Also write the records as CSV (the device's own CSV) to this file.
        #[arg(long)]
        csv: Option<String>,
        /// Also write the text summary to this file.
        #[arg(long)]
        text: Option<String>,
        /// Include the journal's restatement records in the CSV.
        #[arg(long)]
        restatements: bool,
    },
    /// Write a sample file (and its configuration) from the simulation models.
    Simulate {
        /// Scenario name (see --list).
        scenario: Option<String>,
        /// List the scenarios.
        #[arg(long)]
        list: bool,
        /// Sample file to write (CSV).
        #[arg(long, short = 'o')]
        out: Option<String>,
        /// Write the scenario's configuration file (TOML) here too.
        #[arg(long)]
        config_out: Option<String>,
        /// Noise seed.
        #[arg(long, default_value_t = 405)]
        seed: u64,
        /// Instead of a sample file: write the flash image of a demonstration device's
        /// journal (three sessions, the last cut by a power loss) to this file.
        #[arg(long, conflicts_with_all = ["scenario", "list", "out", "config_out"])]
        journal_image: Option<String>,
    },
    /// Print the factors a configuration reduces to (W/m² per A, µmol/J, target in integer
    /// units ...).
    Explain {
        /// Session configuration file (TOML).
        #[arg(long, short = 'c')]
        config: String,
        /// What to print on standard output.
        #[arg(long, value_enum, default_value = "text")]
        format: TextJson,
        /// Same as `--format json`.
        #[arg(long)]
        json: bool,
        /// Also write the meter profile (the meter and the session's thresholds, computed
        /// here, for a firmware that builds its meter with `Meter::from_profile`) to this
        /// new file, and print it as a Rust `const` instead of the factors. Never written
        /// over an existing file.
        #[arg(long, conflicts_with_all = ["json", "format"])]
        profile: Option<String>,
    },
    /// The exposure register (SQLite): import sessions, answer questions.
    Register {
        #[command(subcommand)]
        action: RegisterAction,
    },
}

#[derive(Subcommand)]
enum RegisterAction {
    /// Import replay reports (JSON) and flash images; a session already present is not
    /// added again.
    Import {
        /// Register file (created if missing).
        #[arg(long)]
        db: String,
        /// Report files written by `replay --json`.
        #[arg(required_unless_present = "image")]
        reports: Vec<String>,
        /// A flash image of a device's journal (repeatable); its ended sessions are imported.
        #[arg(long)]
        image: Vec<String>,
        /// UTC time of the device's tick 0, e.g. 2025-03-14T09:00:00Z (needed with --image:
        /// a journal records ticks, not dates).
        #[arg(long)]
        epoch_utc: Option<String>,
        /// Device label of the images' sessions.
        #[arg(long)]
        device_id: Option<String>,
        /// Person label of the images' sessions.
        #[arg(long)]
        person_id: Option<String>,
        /// Reactor or station label of the images' sessions.
        #[arg(long)]
        reactor_id: Option<String>,
        #[command(flatten)]
        geometry: GeometryArgs,
        /// Seconds to wait for another process's lock on the register (each of 4 attempts).
        #[arg(long, value_parser = parse_seconds, default_value = "10")]
        busy_timeout: f64,
    },
    /// Dose per device, person or reactor per UTC day.
    DosePerDay {
        /// Register file.
        #[arg(long)]
        db: String,
        /// Group by.
        #[arg(long, value_enum, default_value = "device")]
        by: By,
        /// What to print on standard output.
        #[arg(long, value_enum, default_value = "text")]
        format: TextJson,
        /// Same as `--format json`.
        #[arg(long)]
        json: bool,
    },
    /// Sessions that ended in a fault.
    Faults {
        /// Register file.
        #[arg(long)]
        db: String,
        /// What to print on standard output.
        #[arg(long, value_enum, default_value = "text")]
        format: TextJson,
        /// Same as `--format json`.
        #[arg(long)]
        json: bool,
    },
    /// Days on which an exposure limit was reached.
    LimitDays {
        /// Register file.
        #[arg(long)]
        db: String,
        /// What to print on standard output.
        #[arg(long, value_enum, default_value = "text")]
        format: TextJson,
        /// Same as `--format json`.
        #[arg(long)]
        json: bool,
    },
    /// Check a register: SQLite's full integrity check, the schema version and every stored
    /// value (exit status 1 if anything is wrong).
    Check {
        /// Register file.
        #[arg(long)]
        db: String,
        /// What to print on standard output.
        #[arg(long, value_enum, default_value = "text")]
        format: TextJson,
        /// Same as `--format json`.
        #[arg(long)]
        json: bool,
    },
}

/// Standard output: every write error is reported (a full disk fails the command; a closed
/// pipe is told apart by `main`).
struct Out {
    w: std::io::StdoutLock<'static>,
}

impl Out {
    fn say(&mut self, s: &str) -> Result<(), ReviewError> {
        self.w.write_all(s.as_bytes()).map_err(ReviewError::Stdout)
    }
    fn finish(&mut self) -> Result<(), ReviewError> {
        self.w.flush().map_err(ReviewError::Stdout)
    }
}

/// Set once an import has been committed (for the message after a later error).
static IMPORTED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// How a command that ran to the end came out.
enum Done {
    /// Nothing to report.
    Ok,
    /// `--strict`: the run did not end with its target met (the reason).
    NotMet(String),
}

fn json<T: serde::Serialize>(v: &T) -> Result<String, ReviewError> {
    serde_json::to_string_pretty(v).map_err(|e| ReviewError::Other(format!("JSON: {e}")))
}

fn opt(s: &Option<String>) -> &str {
    s.as_deref().unwrap_or("-")
}

fn run(cli: Cli, out: &mut Out) -> Result<Done, ReviewError> {
    let mut done = Done::Ok;
    match cli.command {
        Command::Replay {
            config,
            samples,
            print,
            json: json_out,
            text,
            plot: plot_out,
            series: series_out,
            no_progress,
            device_id,
            person_id,
            reactor_id,
            start_utc,
            strict,
        } => {
            let inputs = [config.as_str(), samples.as_str()];
            let outputs: Vec<&str> = [&series_out, &json_out, &text, &plot_out]
                .into_iter()
                .flatten()
                .map(String::as_str)
                .collect();
            check_outputs(&outputs, &inputs)?;
            let mut cfg = config::load(&config)?;
            if cfg.curing.is_some() {
                return Err(ReviewError::Other(format!(
                    "{config} is a curing recipe ([curing]): replay it with `photon-review \
                     curing -c {config} -s {samples}`"
                )));
            }
            if let Some(s) = &start_utc {
                if time::parse_utc(s).is_none() {
                    return Err(ReviewError::Other(format!(
                        "--start-utc `{s}` is not a UTC time like 2025-03-14T09:30:00Z"
                    )));
                }
            }
            let l = &mut cfg.labels;
            for (slot, v) in [
                (&mut l.device_id, device_id),
                (&mut l.person_id, person_id),
                (&mut l.reactor_id, reactor_id),
                (&mut l.start_utc, start_utc),
            ] {
                if v.is_some() {
                    *slot = v;
                }
            }
            let mut staged = Vec::new();
            let series: Option<(Box<dyn Write>, String)> = match (&series_out, print) {
                (Some(_), Format::Csv) => {
                    return Err(ReviewError::Other(
                        "--format csv prints the time series and --series FILE writes it: \
                         give one of them"
                            .into(),
                    ))
                }
                (Some(p), _) => {
                    let st = files::stage(p, &inputs)?;
                    let f = st.reopen()?;
                    staged.push(st);
                    Some((
                        Box::new(std::io::BufWriter::with_capacity(1 << 16, f)),
                        p.clone(),
                    ))
                }
                (None, Format::Csv) => Some((
                    Box::new(std::io::BufWriter::with_capacity(
                        1 << 16,
                        std::io::stdout(),
                    )),
                    "-".to_string(),
                )),
                (None, _) => None,
            };
            let result = replay::replay_file_with_series(
                &cfg,
                &samples,
                plot_out.is_some(),
                !no_progress,
                series,
            )?;
            // Everything below runs only after the whole file was replayed.
            let report = &result.report;
            let svg = match (&plot_out, &result.series) {
                (Some(_), Some(series)) => Some(plot::render_svg(report, series, &cfg)?),
                _ => None,
            };
            let text_report = report.to_text();
            let json_report = json(report)?;
            let mut files: Vec<(&str, &[u8])> = Vec::new();
            if let Some(p) = &json_out {
                files.push((p, json_report.as_bytes()));
            }
            if let Some(p) = &text {
                files.push((p, text_report.as_bytes()));
            }
            if let (Some(p), Some(svg)) = (&plot_out, &svg) {
                files.push((p, svg.as_bytes()));
            }
            files::write_outputs_with(&files, staged, &inputs)?;
            match print {
                Format::Text => out.say(&text_report)?,
                Format::Json => {
                    out.say(&json_report)?;
                    out.say("\n")?;
                }
                Format::Csv => {} // written during the replay
            }
            if strict && report.outcome.stop_reason != "target_met" {
                done = Done::NotMet(format!(
                    "--strict: the run ended `{}`{}, not `target_met`",
                    report.outcome.stop_reason,
                    report
                        .outcome
                        .fault
                        .as_deref()
                        .map_or(String::new(), |f| format!(" ({f})"))
                ));
            }
        }
        Command::Curing {
            config,
            samples,
            format,
            json: json_out,
            text,
            csv,
            strict,
        } => {
            let inputs = [config.as_str(), samples.as_str()];
            let outputs: Vec<&str> = [&json_out, &text, &csv]
                .into_iter()
                .flatten()
                .map(String::as_str)
                .collect();
            check_outputs(&outputs, &inputs)?;
            let cfg = config::load(&config)?;
            let report = curing::replay_curing_file(&cfg, &samples)?;
            // Everything below runs only after the whole file was replayed.
            let text_report = report.to_text();
            let json_report = json(&report)?;
            let csv_report = report.to_csv()?;
            let mut files: Vec<(&str, &[u8])> = Vec::new();
            if let Some(p) = &json_out {
                files.push((p, json_report.as_bytes()));
            }
            if let Some(p) = &text {
                files.push((p, text_report.as_bytes()));
            }
            if let Some(p) = &csv {
                files.push((p, csv_report.as_bytes()));
            }
            write_outputs(&files, &inputs)?;
            match format {
                Format::Text => out.say(&text_report)?,
                Format::Json => {
                    out.say(&json_report)?;
                    out.say("\n")?;
                }
                Format::Csv => out.say(&csv_report)?,
            }
            let m = &report.summary;
            if strict && (m.parts == 0 || m.passed != m.parts) {
                done = Done::NotMet(format!(
                    "--strict: {} of {} parts passed ({} failed, {} refused)",
                    m.passed, m.parts, m.failed, m.refused
                ));
            }
        }
        Command::Decode {
            image,
            geometry,
            print,
            json: json_out,
            csv,
            text,
            restatements,
        } => {
            let inputs = [image.as_str()];
            let outputs: Vec<&str> = [&json_out, &csv, &text]
                .into_iter()
                .flatten()
                .map(String::as_str)
                .collect();
            check_outputs(&outputs, &inputs)?;
            let d = decode::decode_file(&image, &geometry.geometry())?;
            // Everything below runs only after the whole image was decoded.
            let text_out = d.to_text();
            let json_text = json(&d)?;
            let csv_text = if restatements {
                &d.csv_with_restatements
            } else {
                &d.csv
            };
            let mut files: Vec<(&str, &[u8])> = Vec::new();
            if let Some(p) = &json_out {
                files.push((p, json_text.as_bytes()));
            }
            if let Some(p) = &csv {
                files.push((p, csv_text.as_bytes()));
            }
            if let Some(p) = &text {
                files.push((p, text_out.as_bytes()));
            }
            write_outputs(&files, &inputs)?;
            match print {
                DecodePrint::Text => out.say(&text_out)?,
                DecodePrint::Json => {
                    out.say(&json_text)?;
                    out.say("\n")?;
                }
                DecodePrint::Csv => out.say(csv_text)?,
            }
        }
        Command::Simulate {
            journal_image: Some(p),
            seed,
            ..
        } => {
            let demo = demo_image::demo_journal(seed)?;
            write_outputs(&[(p.as_str(), &demo.image)], &[])?;
            out.say(&format!(
                "{p}: flash image of a demonstration journal ({} bytes, {} records acknowledged, \
                 the last write cut by a power loss); decode it with `photon-review decode {p}`\n",
                demo.image.len(),
                demo.acknowledged.len()
            ))?;
        }
        Command::Simulate {
            scenario,
            list,
            out: csv_out,
            config_out,
            seed,
            journal_image: None,
        } => {
            if list || scenario.is_none() {
                for s in &simulate::SCENARIOS {
                    out.say(&format!("{:<22} {}\n", s.name, s.summary))?;
                }
                return Ok(Done::Ok);
            }
            let name = scenario.unwrap_or_default();
            let s = simulate::scenario(&name).ok_or_else(|| {
                ReviewError::Other(format!(
                    "unknown scenario `{name}`; `photon-review simulate --list` lists them"
                ))
            })?;
            let csv = simulate::simulate(s, seed)?;
            let rows = csv
                .lines()
                .filter(|l| !l.starts_with('#'))
                .count()
                .saturating_sub(1);
            let mut files: Vec<(&str, &[u8])> = Vec::new();
            if let Some(p) = &csv_out {
                files.push((p, csv.as_bytes()));
            }
            if let Some(p) = &config_out {
                files.push((p, s.config_toml.as_bytes()));
            }
            write_outputs(&files, &[])?;
            match &csv_out {
                Some(p) => out.say(&format!("{p}: {rows} samples of scenario {}\n", s.name))?,
                None => out.say(&csv)?,
            }
            if let (Some(p), Some(_)) = (&config_out, &csv_out) {
                out.say(&format!("{p}: its configuration\n"))?;
            }
        }
        Command::Explain {
            config,
            json: json_flag,
            format,
            profile,
        } => {
            let j = json_flag || format == TextJson::Json;
            let cfg = config::load(&config)?;
            if let Some(path) = profile {
                let p = explain::profile(&cfg)?;
                files::write_new(&path, &p.to_bytes(), &[config.as_str()])?;
                out.say(&explain::profile_const(&cfg, &p, &path))?;
            } else if j {
                out.say(&json(&explain::factors(&cfg))?)?;
                out.say("\n")?;
            } else {
                out.say(&explain::to_text(&cfg))?;
            }
        }
        Command::Register { action } => match action {
            RegisterAction::Import {
                db,
                reports,
                image,
                epoch_utc,
                device_id,
                person_id,
                reactor_id,
                geometry,
                busy_timeout,
            } => {
                // The register is never one of the inputs.
                let inputs: Vec<&str> = reports.iter().chain(&image).map(String::as_str).collect();
                check_outputs(&[db.as_str()], &inputs)?;
                // Every input is read and checked before the register is touched.
                let mut summaries = register::report_summaries(&reports)?;
                let mut skipped = Vec::new();
                if !image.is_empty() {
                    let labels = ImageLabels {
                        device_id,
                        person_id,
                        reactor_id,
                        epoch_utc: epoch_utc.ok_or_else(|| {
                            ReviewError::Other(
                                "--image needs --epoch-utc: a journal records ticks, not dates"
                                    .into(),
                            )
                        })?,
                    };
                    let found = register::image_summaries(&image, &geometry.geometry(), &labels)?;
                    summaries.extend(found.summaries);
                    skipped = found.skipped;
                }
                for s in &summaries {
                    s.validate()?;
                }
                let mut r =
                    Register::open_with_timeout(&db, Duration::from_secs_f64(busy_timeout))?;
                let stats = r.import(&summaries)?;
                IMPORTED.store(true, std::sync::atomic::Ordering::SeqCst);
                for m in &skipped {
                    out.say(&format!("{m}\n"))?;
                }
                out.say(&format!(
                    "{db}: {} added, {} already present, {} sessions in the register\n",
                    stats.added,
                    stats.already_present,
                    r.session_count()?
                ))?;
            }
            RegisterAction::DosePerDay {
                db,
                by,
                json: json_flag,
                format,
            } => {
                let j = json_flag || format == TextJson::Json;
                let r = Register::open_existing(&db)?;
                let g = match by {
                    By::Device => Grouping::Device,
                    By::Person => Grouping::Person,
                    By::Reactor => Grouping::Reactor,
                };
                let rows = r.dose_per_day(g)?;
                if j {
                    out.say(&json(&rows)?)?;
                    out.say("\n")?;
                } else {
                    out.say(&format!(
                        "{:<10}  {:<20} {:>8}  {:>16}  {:>14}  {:>16}\n",
                        "day (UTC)", "group", "sessions", "J/m²", "photons µmol", "effective J/m²"
                    ))?;
                    for d in rows {
                        out.say(&format!(
                            "{:<10}  {:<20} {:>8}  {:>16}  {:>14}  {:>16}\n",
                            d.day_utc,
                            opt(&d.group),
                            d.sessions,
                            sig(d.radiant_exposure_j_per_m2),
                            d.photons_mol.map_or("-".into(), |m| sig(m * 1e6)),
                            d.effective_exposure_j_per_m2.map_or("-".into(), sig),
                        ))?;
                    }
                }
            }
            RegisterAction::Faults {
                db,
                json: json_flag,
                format,
            } => {
                let j = json_flag || format == TextJson::Json;
                let rows = Register::open_existing(&db)?.fault_sessions()?;
                if j {
                    out.say(&json(&rows)?)?;
                    out.say("\n")?;
                } else {
                    for f in rows {
                        out.say(&format!(
                            "{}  device {}  person {}  reactor {}  fault {}  {} J/m²  ({})\n",
                            f.start_utc,
                            opt(&f.device_id),
                            opt(&f.person_id),
                            opt(&f.reactor_id),
                            f.fault,
                            sig(f.radiant_exposure_j_per_m2),
                            f.source_name
                        ))?;
                    }
                }
            }
            RegisterAction::LimitDays {
                db,
                json: json_flag,
                format,
            } => {
                let j = json_flag || format == TextJson::Json;
                let rows = Register::open_existing(&db)?.limit_days()?;
                if j {
                    out.say(&json(&rows)?)?;
                    out.say("\n")?;
                } else {
                    for d in rows {
                        out.say(&format!(
                            "{}  {}  {} J/m² effective (limit {} J/m²): {}\n",
                            d.day_utc,
                            opt(&d.who),
                            sig(d.effective_exposure_j_per_m2),
                            sig(d.limit_j_per_m2),
                            d.reason
                        ))?;
                    }
                }
            }
            RegisterAction::Check {
                db,
                json: json_flag,
                format,
            } => {
                let j = json_flag || format == TextJson::Json;
                let c = Register::open_existing(&db)?.check()?;
                if j {
                    out.say(&json(&c)?)?;
                    out.say("\n")?;
                } else if c.problems.is_empty() {
                    out.say(&format!("{db}: ok, {} sessions\n", c.sessions))?;
                }
                if !c.problems.is_empty() {
                    return Err(ReviewError::Register(format!(
                        "{db}: {} problems: {}",
                        c.problems.len(),
                        c.problems.join("; ")
                    )));
                }
            }
        },
    }
    out.finish()?;
    Ok(done)
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let importing = matches!(
        cli.command,
        Command::Register {
            action: RegisterAction::Import { .. }
        }
    );
    let mut out = Out {
        w: std::io::stdout().lock(),
    };
    match run(cli, &mut out) {
        Ok(Done::Ok) => ExitCode::SUCCESS,
        Ok(Done::NotMet(why)) => {
            eprintln!("photon-review: {why}");
            ExitCode::from(3)
        }
        // A reader that stopped reading (`| head -1`): not an error of this tool.
        Err(ReviewError::Stdout(e)) if e.kind() == std::io::ErrorKind::BrokenPipe => {
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("photon-review: error: {e}");
            let written = photon_review::files::written();
            if importing {
                // The register is changed in place, never through a file written here.
            } else if written.is_empty() {
                eprintln!("photon-review: no file was written");
            } else {
                eprintln!(
                    "photon-review: written before the error: {}",
                    written.join(", ")
                );
            }
            if importing {
                if IMPORTED.load(std::sync::atomic::Ordering::SeqCst) {
                    eprintln!("photon-review: the import was committed before the error");
                } else {
                    eprintln!("photon-review: nothing was imported");
                }
            }
            ExitCode::FAILURE
        }
    }
}
