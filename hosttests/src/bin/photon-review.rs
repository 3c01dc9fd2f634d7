//! photon-review: replay recorded samples through the firmware's own pipeline, plot them,
//! simulate sample files, explain a configuration, and keep an exposure register.
//!
//! Run `photon-review --help` (or `cargo run -p hosttests --bin photon-review -- --help`).
//! Configuration and report keys: `hosttests/review/CONFIG.md`.

use std::io::Write;
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};
use hosttests::review::register::{Grouping, Register};
use hosttests::review::{config, explain, plot, replay, simulate, time, ReviewError};

#[derive(Parser)]
#[command(
    name = "photon-review",
    version,
    about = "Review photon-ledger dose runs on a PC: \
    replay samples through the firmware pipeline, plot, simulate, explain, register exposures"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Clone, Copy, ValueEnum)]
enum Format {
    Text,
    Json,
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
        #[arg(long, value_enum, default_value = "text")]
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
    },
    /// Print the factors a configuration reduces to (W/m² per A, µmol/J, target in integer
    /// units ...).
    Explain {
        /// Session configuration file (TOML).
        #[arg(long, short = 'c')]
        config: String,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// The exposure register (SQLite): import sessions, answer questions.
    Register {
        #[command(subcommand)]
        action: RegisterAction,
    },
}

#[derive(Subcommand)]
enum RegisterAction {
    /// Import replay reports (JSON); a session already present is not added again.
    Import {
        /// Register file (created if missing).
        #[arg(long)]
        db: String,
        /// Report files written by `replay --json`.
        #[arg(required = true)]
        reports: Vec<String>,
    },
    /// Dose per device, person or reactor per UTC day.
    DosePerDay {
        /// Register file.
        #[arg(long)]
        db: String,
        /// Group by.
        #[arg(long, value_enum, default_value = "device")]
        by: By,
        /// Print JSON.
        #[arg(long)]
        json: bool,
    },
    /// Sessions that ended in a fault.
    Faults {
        /// Register file.
        #[arg(long)]
        db: String,
        /// Print JSON.
        #[arg(long)]
        json: bool,
    },
    /// Days on which an exposure limit was reached.
    LimitDays {
        /// Register file.
        #[arg(long)]
        db: String,
        /// Print JSON.
        #[arg(long)]
        json: bool,
    },
}

/// Write `contents` to `path` through a temporary file and a rename, so a reader never sees
/// half a file.
fn write_atomic(path: &str, contents: &[u8]) -> Result<(), ReviewError> {
    let tmp = format!("{path}.partial");
    let mut f = std::fs::File::create(&tmp).map_err(|e| ReviewError::io(&tmp, e))?;
    f.write_all(contents)
        .and_then(|()| f.sync_all())
        .map_err(|e| ReviewError::io(&tmp, e))?;
    std::fs::rename(&tmp, path).map_err(|e| ReviewError::io(path, e))
}

fn json<T: serde::Serialize>(v: &T) -> Result<String, ReviewError> {
    serde_json::to_string_pretty(v).map_err(|e| ReviewError::Other(format!("JSON: {e}")))
}

fn opt(s: &Option<String>) -> &str {
    s.as_deref().unwrap_or("-")
}

fn run(cli: Cli) -> Result<(), ReviewError> {
    let mut out = std::io::stdout().lock();
    let mut say = |s: &str| {
        let _ = out.write_all(s.as_bytes());
    };
    match cli.command {
        Command::Replay {
            config,
            samples,
            print,
            json: json_out,
            text,
            plot: plot_out,
            no_progress,
            device_id,
            person_id,
            reactor_id,
            start_utc,
        } => {
            let mut cfg = config::load(&config)?;
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
            let result = replay::replay_file(&cfg, &samples, plot_out.is_some(), !no_progress)?;
            // Everything below runs only after the whole file was replayed.
            let report = &result.report;
            let svg = match (&plot_out, &result.series) {
                (Some(_), Some(series)) => Some(plot::render_svg(report, series, &cfg)?),
                _ => None,
            };
            let text_report = report.to_text();
            let json_report = json(report)?;
            if let Some(p) = &json_out {
                write_atomic(p, json_report.as_bytes())?;
            }
            if let Some(p) = &text {
                write_atomic(p, text_report.as_bytes())?;
            }
            if let (Some(p), Some(svg)) = (&plot_out, &svg) {
                write_atomic(p, svg.as_bytes())?;
            }
            match print {
                Format::Text => say(&text_report),
                Format::Json => {
                    say(&json_report);
                    say("\n");
                }
            }
        }
        Command::Simulate {
            scenario,
            list,
            out: csv_out,
            config_out,
            seed,
        } => {
            if list || scenario.is_none() {
                for s in &simulate::SCENARIOS {
                    say(&format!("{:<22} {}\n", s.name, s.summary));
                }
                return Ok(());
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
            match &csv_out {
                Some(p) => {
                    write_atomic(p, csv.as_bytes())?;
                    say(&format!("{p}: {rows} samples of scenario {}\n", s.name));
                }
                None => say(&csv),
            }
            if let Some(p) = &config_out {
                write_atomic(p, s.config_toml.as_bytes())?;
                if csv_out.is_some() {
                    say(&format!("{p}: its configuration\n"));
                }
            }
        }
        Command::Explain { config, json: j } => {
            let cfg = config::load(&config)?;
            if j {
                say(&json(&explain::factors(&cfg))?);
                say("\n");
            } else {
                say(&explain::to_text(&cfg));
            }
        }
        Command::Register { action } => match action {
            RegisterAction::Import { db, reports } => {
                let mut r = Register::open(&db)?;
                let stats = r.import_report_files(&reports)?;
                say(&format!(
                    "{db}: {} added, {} already present, {} sessions in the register\n",
                    stats.added,
                    stats.already_present,
                    r.session_count()?
                ));
            }
            RegisterAction::DosePerDay { db, by, json: j } => {
                let r = Register::open(&db)?;
                let g = match by {
                    By::Device => Grouping::Device,
                    By::Person => Grouping::Person,
                    By::Reactor => Grouping::Reactor,
                };
                let rows = r.dose_per_day(g)?;
                if j {
                    say(&json(&rows)?);
                    say("\n");
                } else {
                    say(&format!(
                        "{:<10}  {:<20} {:>8}  {:>16}  {:>14}  {:>16}\n",
                        "day (UTC)", "group", "sessions", "J/m²", "photons µmol", "effective J/m²"
                    ));
                    for d in rows {
                        say(&format!(
                            "{:<10}  {:<20} {:>8}  {:>16}  {:>14}  {:>16}\n",
                            d.day_utc,
                            opt(&d.group),
                            d.sessions,
                            hosttests::review::report::sig(d.radiant_exposure_j_per_m2),
                            d.photons_mol
                                .map_or("-".into(), |m| hosttests::review::report::sig(m * 1e6)),
                            d.effective_exposure_j_per_m2
                                .map_or("-".into(), hosttests::review::report::sig),
                        ));
                    }
                }
            }
            RegisterAction::Faults { db, json: j } => {
                let rows = Register::open(&db)?.fault_sessions()?;
                if j {
                    say(&json(&rows)?);
                    say("\n");
                } else {
                    for f in rows {
                        say(&format!(
                            "{}  device {}  person {}  reactor {}  fault {}  {} J/m²  ({})\n",
                            f.start_utc,
                            opt(&f.device_id),
                            opt(&f.person_id),
                            opt(&f.reactor_id),
                            f.fault,
                            hosttests::review::report::sig(f.radiant_exposure_j_per_m2),
                            f.source_name
                        ));
                    }
                }
            }
            RegisterAction::LimitDays { db, json: j } => {
                let rows = Register::open(&db)?.limit_days()?;
                if j {
                    say(&json(&rows)?);
                    say("\n");
                } else {
                    for d in rows {
                        say(&format!(
                            "{}  {}  {} J/m² effective (limit {} J/m²): {}\n",
                            d.day_utc,
                            opt(&d.who),
                            hosttests::review::report::sig(d.effective_exposure_j_per_m2),
                            hosttests::review::report::sig(d.limit_j_per_m2),
                            d.reason
                        ));
                    }
                }
            }
        },
    }
    Ok(())
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let replaying = matches!(cli.command, Command::Replay { .. });
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("photon-review: error: {e}");
            if replaying {
                eprintln!("photon-review: no report was written");
            }
            ExitCode::FAILURE
        }
    }
}
