//! The replay engine: samples through the library's own [`Session`] (front end, integrator,
//! thresholds, phases) — the code firmware runs — plus statistics, events and a decimated
//! series for the plot.
//!
//! Nothing here recomputes the dose: every dose number in the report is read from the
//! session's integrator after the last sample, so a replay is bit-identical to the firmware
//! pipeline fed the same readings.

use std::io::{IsTerminal, Write as _};
use std::time::{Duration, Instant};

use photon_ledger::control::exposure::SolarMonitor;
use photon_ledger::control::session::{to_exposure, Ignored, SessionConfigError};
use photon_ledger::control::session::{PinError, SessionError};
use photon_ledger::prelude::*;
use sha2::{Digest, Sha256};

use super::config::{hex, ReviewConfig};
use super::error::ReviewError;
use super::monitor::{new_solar, Monitor, Unwired, BUCKET_CAPACITY};
use super::report::*;
use super::samples::{Sample, SampleReader, TimeUnit};

/// Most events listed in a report; more are counted in `events_dropped`.
pub const MAX_EVENTS: usize = 10_000;
/// Most points kept for the plot (pairs of buckets are merged beyond it).
pub const MAX_PLOT_BINS: usize = 4_000;

/// The session type of a replay.
pub type ReplaySession = Session<Unwired, Unwired>;

/// Build and start a session exactly as firmware does.
///
/// # Errors
/// The library's [`SessionConfigError`].
pub fn new_session(
    meter: Meter,
    config: SessionConfig,
) -> Result<ReplaySession, SessionConfigError> {
    let mut s = match Session::new(meter, config, Unwired, Unwired) {
        Ok(s) => s,
        Err(SessionError::Config(e)) => return Err(e),
        Err(SessionError::Pin(PinError::Enable(never) | PinError::Alarm(never))) => match never {},
    };
    match s.start() {
        Ok(_) => Ok(s),
        Err(PinError::Enable(never) | PinError::Alarm(never)) => match never {},
    }
}

/// One bucket of the plot series.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bin {
    /// Bucket index at the current resolution.
    pub key: u64,
    /// Time of the first sample in the bucket, ticks since the first sample.
    pub t_first: u64,
    /// Time of the last sample, ticks since the first sample.
    pub t_last: u64,
    /// Lowest irradiance, W/m² (NaN if no usable code in the bucket).
    pub e_min: f64,
    /// Highest irradiance, W/m².
    pub e_max: f64,
    /// Radiant exposure after the last sample, J/m².
    pub dose_last: f64,
}

/// A series decimated to at most [`MAX_PLOT_BINS`] buckets by merging pairs.
#[derive(Debug, Clone, Default)]
pub struct Series {
    /// log2 of the bucket width, ticks.
    pub shift: u32,
    /// The buckets in time order.
    pub bins: Vec<Bin>,
}

impl Series {
    fn push(&mut self, t: u64, e: f64, dose: f64) {
        let key = t >> self.shift;
        match self.bins.last_mut() {
            Some(b) if b.key == key => {
                b.t_last = t;
                if !e.is_nan() {
                    b.e_min = if b.e_min.is_nan() { e } else { b.e_min.min(e) };
                    b.e_max = if b.e_max.is_nan() { e } else { b.e_max.max(e) };
                }
                b.dose_last = dose;
            }
            _ => {
                self.bins.push(Bin {
                    key,
                    t_first: t,
                    t_last: t,
                    e_min: e,
                    e_max: e,
                    dose_last: dose,
                });
                if self.bins.len() > MAX_PLOT_BINS {
                    self.merge();
                }
            }
        }
    }
    fn merge(&mut self) {
        self.shift += 1;
        let mut out: Vec<Bin> = Vec::with_capacity(self.bins.len() / 2 + 1);
        for b in self.bins.drain(..) {
            let key = b.key >> 1;
            match out.last_mut() {
                Some(o) if o.key == key => {
                    o.t_last = b.t_last;
                    o.e_min = nan_min(o.e_min, b.e_min);
                    o.e_max = nan_max(o.e_max, b.e_max);
                    o.dose_last = b.dose_last;
                }
                _ => out.push(Bin { key, ..b }),
            }
        }
        self.bins = out;
    }
}

fn nan_min(a: f64, b: f64) -> f64 {
    if a.is_nan() {
        b
    } else if b.is_nan() {
        a
    } else {
        a.min(b)
    }
}

fn nan_max(a: f64, b: f64) -> f64 {
    if a.is_nan() {
        b
    } else if b.is_nan() {
        a
    } else {
        a.max(b)
    }
}

/// Replays samples one at a time. Use [`Replayer::push`] for each sample in file order and
/// [`Replayer::finish`] after the last.
pub struct Replayer {
    session: ReplaySession,
    monitor: Option<Monitor>,
    solar: Option<SolarMonitor<BUCKET_CAPACITY>>,
    config: ReviewConfig,
    hz: f64,
    origin_s: f64,
    max_gap: u64,
    series: Option<Series>,
    events: Vec<Event>,
    dropped: u64,
    samples: u64,
    integrated: u64,
    repeated: u64,
    unusable: u64,
    after_end: u64,
    in_unusable_run: bool,
    e_min: f64,
    e_max: f64,
    first_integrated: Option<u64>,
    last_integrated: u64,
    prev: Option<(u64, u32)>,
    interval_min: u64,
    interval_max: u64,
    gaps: Vec<GapReport>,
    target_at: Option<(f64, u64, f64)>,
    ended_at: Option<f64>,
    t_min: f32,
    t_max: f32,
    last_sample: Option<Sample>,
    window_max: f64,
    limit_at: Option<f64>,
    uvi_max: f64,
    uvi_reported_max: u32,
    series_csv: Option<SeriesCsv>,
}

/// Columns of the time-series CSV (`replay --series FILE`, `--format csv`); the last but two
/// is `dose_` followed by the target's key, e.g. `dose_photons_umol`.
pub const SERIES_COLUMNS: [&str; 7] = [
    "time_s",
    "irradiance_w_per_m2",
    "photon_irradiance_umol_per_m2_s",
    "radiant_exposure_j_per_m2",
    "dose_",
    "phase",
    "line",
];

/// The time series being written, one row per sample.
struct SeriesCsv {
    out: Box<dyn std::io::Write>,
    name: String,
    error: Option<std::io::Error>,
    /// The target's unit per J/m² (its key's value ÷ its radiant exposure).
    unit_per_j_per_m2: f64,
    mol_per_j: f64,
    /// Decimals of a time: enough for one tick.
    time_decimals: usize,
}

impl Replayer {
    /// A replayer for `config`; `plot` keeps the decimated series for a plot.
    ///
    /// # Errors
    /// A library configuration error (not expected: [`super::config::parse`] validated the
    /// configuration with the same calls).
    pub fn new(config: &ReviewConfig, plot: bool) -> Result<Self, ReviewError> {
        let bad = |e: &dyn std::fmt::Display| ReviewError::Other(format!("{}: {e}", config.file));
        let session = new_session(config.meter.clone(), config.session).map_err(|e| bad(&e))?;
        let monitor = match &config.exposure {
            Some(x) => Some(Monitor::new(&config.meter, x).map_err(|e| bad(&e))?),
            None => None,
        };
        let solar = match &config.solar {
            Some(x) => Some(
                new_solar(&config.meter, x, config.session.max_gap_ticks).map_err(|e| bad(&e))?,
            ),
            None => None,
        };
        Ok(Self {
            session,
            monitor,
            solar,
            config: config.clone(),
            hz: f64::from(config.meter.tick_rate().hz()),
            origin_s: 0.0,
            max_gap: u64::from(config.session.max_gap_ticks),
            series: plot.then(Series::default),
            events: Vec::new(),
            dropped: 0,
            samples: 0,
            integrated: 0,
            repeated: 0,
            unusable: 0,
            after_end: 0,
            in_unusable_run: false,
            e_min: f64::INFINITY,
            e_max: f64::NEG_INFINITY,
            first_integrated: None,
            last_integrated: 0,
            prev: None,
            interval_min: u64::MAX,
            interval_max: 0,
            gaps: Vec::new(),
            target_at: None,
            ended_at: None,
            t_min: f32::INFINITY,
            t_max: f32::NEG_INFINITY,
            last_sample: None,
            window_max: 0.0,
            limit_at: None,
            uvi_max: 0.0,
            uvi_reported_max: 0,
            series_csv: None,
        })
    }

    /// Write the time series as CSV to `out` (named `name` in errors; `-` is standard
    /// output), one row per sample: see [`SERIES_COLUMNS`].
    ///
    /// # Errors
    /// An error writing the header.
    pub fn write_series_csv(
        &mut self,
        mut out: Box<dyn std::io::Write>,
        name: &str,
    ) -> Result<(), ReviewError> {
        let meter = self.session.meter();
        let target_j = to_exposure(meter, self.config.session.target).map_or(0.0, |t| t.j_per_m2());
        let unit_per_j_per_m2 = if target_j > 0.0 {
            self.config.target.value / target_j
        } else {
            f64::NAN
        };
        let header = SERIES_COLUMNS
            .map(|c| {
                if c == "dose_" {
                    format!("dose_{}", self.config.target.key)
                } else {
                    c.to_string()
                }
            })
            .join(",");
        if let Err(e) = writeln!(out, "{header}") {
            return Err(series_error(name, e));
        }
        self.series_csv = Some(SeriesCsv {
            out,
            name: name.to_string(),
            error: None,
            unit_per_j_per_m2,
            mol_per_j: meter.band().mol_per_j(),
            time_decimals: (self.hz.log10().ceil().max(0.0) as usize).min(9),
        });
        Ok(())
    }

    /// Flush the time series; the first error writing it, if any.
    ///
    /// # Errors
    /// The first write error, naming the output.
    pub fn finish_series_csv(&mut self) -> Result<(), ReviewError> {
        match self.series_csv.take() {
            None => Ok(()),
            Some(mut c) => {
                let r = match c.error.take() {
                    Some(e) => Err(e),
                    None => c.out.flush(),
                };
                r.map_err(|e| series_error(&c.name, e))
            }
        }
    }

    #[cold]
    fn series_row(&mut self, s: &Sample) {
        let fe = self.session.meter().front_end();
        let e = match fe.net_code(&s.reading) {
            Ok(net) => self
                .session
                .meter()
                .irradiance(net, s.reading.range)
                .w_per_m2(),
            Err(_) => f64::NAN,
        };
        let h = self.session.integrator().exposure().j_per_m2();
        let t = self.time_s(s.t_abs);
        let phase = phase_name(self.session.phase());
        let Some(c) = self.series_csv.as_mut() else {
            return;
        };
        if c.error.is_some() {
            return;
        }
        let d = c.time_decimals;
        let r = if e.is_nan() {
            writeln!(
                c.out,
                "{t:.d$},,,{h},{},{phase},{}",
                h * c.unit_per_j_per_m2,
                s.line
            )
        } else {
            writeln!(
                c.out,
                "{t:.d$},{e},{},{h},{},{phase},{}",
                e * c.mol_per_j * 1e6,
                h * c.unit_per_j_per_m2,
                s.line
            )
        };
        if let Err(err) = r {
            c.error = Some(err);
        }
    }

    /// Set the time of the first sample, s (times in the report are origin + ticks / rate).
    pub fn set_origin_s(&mut self, origin_s: f64) {
        self.origin_s = origin_s;
    }

    /// The session (read-only), for comparisons with the library used directly.
    pub fn session(&self) -> &ReplaySession {
        &self.session
    }

    fn time_s(&self, t_abs: u64) -> f64 {
        self.origin_s + t_abs as f64 / self.hz
    }

    fn event(&mut self, s: &Sample, kind: &str, detail: String) {
        if self.events.len() < MAX_EVENTS {
            self.events.push(Event {
                time_s: self.time_s(s.t_abs),
                tick: s.reading.at.0,
                line: s.line,
                kind: kind.to_string(),
                detail,
            });
        } else {
            self.dropped += 1;
        }
    }

    /// Feed one sample (in file order).
    pub fn push(&mut self, s: &Sample) {
        self.samples += 1;
        if let Some((t, _)) = self.prev {
            let dt = s.t_abs - t;
            self.interval_min = self.interval_min.min(dt);
            self.interval_max = self.interval_max.max(dt);
            if dt > self.max_gap {
                self.gap(t, s, dt);
            }
        } else {
            self.event(s, "start", format!("first sample, tick {}", s.reading.at.0));
        }
        self.prev = Some((s.t_abs, s.reading.at.0));
        if !s.temperature_c.is_nan() {
            self.t_min = self.t_min.min(s.temperature_c);
            self.t_max = self.t_max.max(s.temperature_c);
        }
        let outcome = match self.session.on_reading(&s.reading) {
            Ok(o) => o,
            Err(PinError::Enable(never) | PinError::Alarm(never)) => match never {},
        };
        match outcome {
            Outcome::Integrated { before, after, .. } => {
                self.integrated += 1;
                self.in_unusable_run = false;
                if let Some(last) = self.session.integrator().last() {
                    let e = self
                        .session
                        .meter()
                        .irradiance(last.net, last.range)
                        .w_per_m2();
                    self.e_min = self.e_min.min(e);
                    self.e_max = self.e_max.max(e);
                }
                if self.first_integrated.is_none() {
                    self.first_integrated = Some(s.t_abs);
                }
                self.last_integrated = s.t_abs;
                if before != after {
                    self.phase_change(s, before, after);
                }
            }
            Outcome::Ignored(Ignored::Repeated) => self.repeated += 1,
            Outcome::Ignored(Ignored::Unusable(f)) => {
                self.unusable += 1;
                if !self.in_unusable_run {
                    self.in_unusable_run = true;
                    self.event(
                        s,
                        "saturated_run",
                        format!("{f}; tolerated, not integrated"),
                    );
                }
            }
            Outcome::Ignored(Ignored::NotRunning) => self.after_end += 1,
            Outcome::Faulted(f) => {
                self.ended_at = Some(self.time_s(s.t_abs));
                self.event(s, "fault", fault_detail(f, self.hz));
            }
        }
        if self.monitor.is_some() {
            self.exposure(s);
        }
        if self.solar.is_some() {
            self.solar(s);
        }
        if self.series.is_some() {
            let fe = self.session.meter().front_end();
            let e = match fe.net_code(&s.reading) {
                Ok(net) => self
                    .session
                    .meter()
                    .irradiance(net, s.reading.range)
                    .w_per_m2(),
                Err(_) => f64::NAN,
            };
            let dose = self.session.integrator().exposure().j_per_m2();
            if let Some(series) = self.series.as_mut() {
                series.push(s.t_abs, e, dose);
            }
        }
        if self.series_csv.is_some() {
            self.series_row(s);
        }
        self.last_sample = Some(*s);
    }

    #[cold]
    fn gap(&mut self, t_before: u64, s: &Sample, dt: u64) {
        let g = GapReport {
            start_time_s: self.time_s(t_before),
            end_time_s: self.time_s(s.t_abs),
            length_s: dt as f64 / self.hz,
            line: s.line,
        };
        self.event(
            s,
            "gap",
            format!(
                "{} s without a sample (maximum {} s)",
                sig(g.length_s),
                sig(self.max_gap as f64 / self.hz)
            ),
        );
        self.gaps.push(g);
    }

    #[cold]
    fn phase_change(&mut self, s: &Sample, before: Phase, after: Phase) {
        let dose = self.session.integrator().exposure().j_per_m2();
        if before == Phase::Exposing && self.target_at.is_none() {
            self.target_at = Some((self.time_s(s.t_abs), s.line, dose));
        }
        match after {
            Phase::TargetMet => self.event(
                s,
                "target_met",
                format!("enable output off at {} J/m²", sig(dose)),
            ),
            Phase::Overexposed => {
                self.ended_at = Some(self.time_s(s.t_abs));
                self.event(
                    s,
                    "overexposed",
                    format!("dose past target + tolerance: {} J/m², alarm on", sig(dose)),
                );
            }
            _ => {}
        }
    }

    fn exposure(&mut self, s: &Sample) {
        let Some(m) = self.monitor.as_mut() else {
            return;
        };
        let c = m.on_reading(&s.reading);
        let w = m.window_exposure().j_per_m2();
        let latched = m.alarm_latched();
        if w > self.window_max {
            self.window_max = w;
        }
        if c.raised == 0 && c.cleared == 0 && !c.alarm_latched && c.gap.is_none() {
            return;
        }
        let levels = self
            .config
            .exposure
            .as_ref()
            .map(|x| x.levels.clone())
            .unwrap_or_default();
        for (i, l) in levels.iter().enumerate() {
            let bit = 1u8 << i;
            if c.raised & bit != 0 {
                self.event(
                    s,
                    "exposure_level_raised",
                    format!(
                        "level {} ({} % of the limit), window {} J/m²",
                        i + 1,
                        sig(l * 100.0),
                        sig(w)
                    ),
                );
            }
            if c.cleared & bit != 0 {
                self.event(
                    s,
                    "exposure_level_cleared",
                    format!(
                        "level {} ({} % of the limit), window {} J/m²",
                        i + 1,
                        sig(l * 100.0),
                        sig(w)
                    ),
                );
            }
        }
        if c.alarm_latched && latched && self.limit_at.is_none() {
            self.limit_at = Some(self.time_s(s.t_abs));
            self.event(
                s,
                "exposure_alarm_latched",
                format!("limit reached: window {} J/m²", sig(w)),
            );
        }
        if let Some(g) = c.gap {
            self.event(
                s,
                "exposure_gap_charged",
                format!(
                    "{} s gap charged with {} J/m² (last irradiance × gap)",
                    sig(f64::from(g.ticks) / self.hz),
                    sig(g.bound.j_per_m2())
                ),
            );
        }
    }

    fn solar(&mut self, s: &Sample) {
        let Some(sol) = self.solar.as_mut() else {
            return;
        };
        let Ok(net) = self.session.meter().front_end().net_code(&s.reading) else {
            return;
        };
        if sol.accept(net, s.reading.range, s.reading.at).is_ok() {
            self.uvi_max = self.uvi_max.max(sol.uv_index().value());
            self.uvi_reported_max = self.uvi_reported_max.max(sol.uv_index_reported().0);
        }
    }

    /// The decimated series (if `plot` was asked for).
    pub fn series(&self) -> Option<&Series> {
        self.series.as_ref()
    }

    /// Build the report. `input` describes the files.
    pub fn finish(&mut self, input: InputInfo) -> Report {
        if let Some(s) = self.last_sample {
            let detail = format!("last sample, phase {}", phase_name(self.session.phase()));
            self.event(&s, "end", detail);
        }
        let meter = self.session.meter();
        let p = self.session.progress();
        let h = p.exposure.j_per_m2();
        let phase = self.session.phase();
        let (stop_reason, fault) = match phase {
            Phase::Ready | Phase::Exposing | Phase::Paused => ("end_of_data", None),
            Phase::TargetMet => ("target_met", None),
            Phase::Overexposed => ("overexposed", None),
            Phase::Faulted(f) => ("fault", Some(fault_name(f).to_string())),
        };
        let integrated_s = self
            .first_integrated
            .map_or(0.0, |f| (self.last_integrated - f) as f64 / self.hz);
        let have = self.integrated > 0;
        let mean = (have && integrated_s > 0.0).then(|| h / integrated_s);
        let mol_per_j = meter.band().mol_per_j();
        let ranges = meter.front_end().range_count();
        let raw: Vec<String> = (0..ranges)
            .map(|r| {
                self.session
                    .integrator()
                    .raw_total(RangeIndex(r as u8))
                    .to_string()
            })
            .collect();
        let cfg = &self.config;
        let tol = to_exposure(meter, cfg.session.tolerance).map_or(0.0, |t| t.j_per_m2());
        let start = self.origin_s;
        let end = self.prev.map_or(start, |(t, _)| self.time_s(t));
        let exposure = self
            .monitor
            .as_ref()
            .zip(cfg.exposure.as_ref())
            .map(|(m, x)| {
                let t = m.totals();
                ExposureReport {
                    weight_factor: x.weight.ratio(),
                    limit_j_per_m2: x.limit.j_per_m2(),
                    window_s: f64::from(x.window_ticks) / self.hz,
                    effective_exposure_j_per_m2: t.exposure.j_per_m2(),
                    gap_bound_j_per_m2: t.gap_bounds.j_per_m2(),
                    max_window_exposure_j_per_m2: self.window_max,
                    max_fraction_of_limit: self.window_max / x.limit.j_per_m2(),
                    limit_reached: self.limit_at.is_some() || m.alarm_latched(),
                    limit_reached_time_s: self.limit_at,
                }
            });
        let solar = self
            .solar
            .as_ref()
            .zip(cfg.solar.as_ref())
            .map(|(s, x)| SolarReport {
                erythema_weight_factor: x.erythema.ratio(),
                erythemal_exposure_sed: s.day_sed(),
                max_uv_index: self.uvi_max,
                max_uv_index_reported: self.uvi_reported_max,
            });
        let mut id = Sha256::new();
        id.update(input.config_sha256.as_bytes());
        id.update(b"\n");
        id.update(input.samples_sha256.as_bytes());
        id.update(b"\n");
        id.update(
            serde_json::to_string(&cfg.labels)
                .unwrap_or_default()
                .as_bytes(),
        );
        Report {
            report_format: REPORT_FORMAT.to_string(),
            report_version: REPORT_VERSION,
            complete: true,
            tool: crate::TOOL.to_string(),
            library: crate::library(),
            session_sha256: hex(&id.finalize()),
            input,
            run: cfg.labels.clone(),
            configuration: ConfigFacts {
                tick_rate_hz: meter.tick_rate().hz(),
                max_gap_s: self.max_gap as f64 / self.hz,
                target_key: cfg.target.key.to_string(),
                target_value: cfg.target.value,
                target_j_per_m2: p.target.j_per_m2(),
                tolerance_j_per_m2: tol,
                sample_area_m2: meter.sample_area().map(|a| a.m2()),
                band_mol_per_j: mol_per_j,
                equivalent_wavelength_nm: meter.band().equivalent_wavelength().nm(),
            },
            outcome: OutcomeReport {
                stop_reason: stop_reason.to_string(),
                fault,
                target_reached: self.target_at.is_some(),
                target_reached_time_s: self.target_at.map(|t| t.0),
                target_reached_line: self.target_at.map(|t| t.1),
                ended_time_s: self.ended_at,
            },
            dose: DoseReport {
                radiant_exposure_j_per_m2: h,
                radiant_exposure_mj_per_cm2: p.exposure.mj_per_cm2(),
                photon_exposure_mol_per_m2: p.photon_exposure.mol_per_m2(),
                photon_exposure_umol_per_m2: p.photon_exposure.umol_per_m2(),
                photons_mol: p.photons.map(|n| n.mol()),
                photons_umol: p.photons.map(|n| n.umol()),
                fraction_of_target: p.fraction,
                at_target_radiant_exposure_j_per_m2: self.target_at.map(|t| t.2),
                after_target_radiant_exposure_j_per_m2: self.target_at.map(|t| h - t.2),
                raw_totals_code_ticks_x2: raw,
            },
            irradiance: IrradianceReport {
                min_w_per_m2: have.then_some(self.e_min),
                mean_w_per_m2: mean,
                max_w_per_m2: have.then_some(self.e_max),
                mean_photon_irradiance_umol_per_m2_s: mean.map(|e| e * mol_per_j * 1e6),
                max_photon_irradiance_umol_per_m2_s: have.then_some(self.e_max * mol_per_j * 1e6),
            },
            timing: TimingReport {
                start_time_s: start,
                end_time_s: end,
                duration_s: end - start,
                integrated_time_s: integrated_s,
                samples: self.samples,
                integrated_samples: self.integrated,
                repeated_timestamps: self.repeated,
                unusable_samples: self.unusable,
                samples_after_end: self.after_end,
                interval_min_s: (self.samples > 1).then(|| self.interval_min as f64 / self.hz),
                interval_mean_s: (self.samples > 1)
                    .then(|| (end - start) / (self.samples - 1) as f64),
                interval_max_s: (self.samples > 1).then(|| self.interval_max as f64 / self.hz),
                gaps: std::mem::take(&mut self.gaps),
            },
            temperature: (self.t_min <= self.t_max).then(|| TemperatureReport {
                min_c: f64::from(self.t_min),
                max_c: f64::from(self.t_max),
            }),
            exposure,
            solar,
            events: std::mem::take(&mut self.events),
            events_dropped: self.dropped,
        }
    }
}

/// The report's name of a phase.
pub fn phase_name(p: Phase) -> &'static str {
    match p {
        Phase::Ready => "ready",
        Phase::Exposing => "exposing",
        Phase::Paused => "paused",
        Phase::TargetMet => "target_met",
        Phase::Overexposed => "overexposed",
        Phase::Faulted(_) => "faulted",
    }
}

/// The report's name of a fault.
pub fn fault_name(f: Fault) -> &'static str {
    match f {
        Fault::Saturated => "saturated",
        Fault::BadCode => "bad_code",
        Fault::TimeBackwards => "time_backwards",
        Fault::Gap { .. } => "gap",
        Fault::Output => "output",
        Fault::Sensor => "sensor",
        Fault::Aborted => "aborted",
        Fault::Implausible(_) => "implausible",
        Fault::InterlockPin => "interlock_pin",
    }
}

fn fault_detail(f: Fault, hz: f64) -> String {
    match f {
        Fault::Saturated => "saturated: too many saturated readings in a row; enable off, alarm on".into(),
        Fault::BadCode => "bad_code: code outside the converter's range or unknown amplifier range; enable off, alarm on".into(),
        Fault::TimeBackwards => "time_backwards; enable off, alarm on".into(),
        Fault::Gap { ticks } => format!(
            "gap: {} s without a sample exceeds the maximum; enable off, alarm on",
            sig(f64::from(ticks) / hz)
        ),
        other => format!("{}; enable off, alarm on", fault_name(other)),
    }
}

fn series_error(name: &str, e: std::io::Error) -> ReviewError {
    if name == "-" {
        ReviewError::Stdout(e)
    } else {
        ReviewError::io(name, e)
    }
}

/// A reader that hashes what passes through it (SHA-256).
pub(crate) struct Hashing<R> {
    pub(crate) inner: R,
    pub(crate) hash: Sha256,
}

impl<R: std::io::Read> std::io::Read for Hashing<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.hash.update(buf.get(..n).unwrap_or(&[]));
        Ok(n)
    }
}

/// Result of replaying a file.
pub struct ReplayOutput {
    /// The complete report.
    pub report: Report,
    /// The decimated series, if a plot was asked for.
    pub series: Option<Series>,
}

/// Replay `samples_path` through `config`. The report is returned only when the whole file
/// was read without error (no partial report).
///
/// `progress`: show a progress bar on stderr (only if stderr is a terminal, and only once the
/// replay has run for a second).
///
/// # Errors
/// The first input error, naming file, line and column.
pub fn replay_file(
    config: &ReviewConfig,
    samples_path: &str,
    plot: bool,
    progress: bool,
) -> Result<ReplayOutput, ReviewError> {
    replay_file_with_series(config, samples_path, plot, progress, None)
}

/// [`replay_file`], also writing the time series as CSV to `series` (a writer and its name,
/// `-` for standard output; see [`Replayer::write_series_csv`]).
///
/// # Errors
/// As [`replay_file`], and an error writing the series.
pub fn replay_file_with_series(
    config: &ReviewConfig,
    samples_path: &str,
    plot: bool,
    progress: bool,
    series: Option<(Box<dyn std::io::Write>, String)>,
) -> Result<ReplayOutput, ReviewError> {
    let f = std::fs::File::open(samples_path).map_err(|e| ReviewError::io(samples_path, e))?;
    let total = f.metadata().map(|m| m.len()).unwrap_or(0);
    let hashing = Hashing {
        inner: f,
        hash: Sha256::new(),
    };
    let mut reader = SampleReader::new(samples_path, hashing, config)?;
    let mut replayer = Replayer::new(config, plot)?;
    if let Some((out, name)) = series {
        replayer.write_series_csv(out, &name)?;
    }
    let started = Instant::now();
    let show = progress && std::io::stderr().is_terminal();
    let mut bar: Option<indicatif::ProgressBar> = None;
    let mut first = true;
    loop {
        let s = match reader.next_sample() {
            Ok(Some(s)) => s,
            Ok(None) => break,
            Err(e) => {
                // Take the bar away so the error is not mixed with it.
                if let Some(b) = bar.take() {
                    b.finish_and_clear();
                }
                return Err(e);
            }
        };
        if first {
            replayer.set_origin_s(reader.origin_s());
            first = false;
        }
        replayer.push(&s);
        if show && reader.rows() & 0xFFFF == 0 {
            let pos = reader.bytes_read();
            match &bar {
                Some(b) => b.set_position(pos),
                None if started.elapsed() > Duration::from_secs(1) => {
                    let b = indicatif::ProgressBar::with_draw_target(
                        Some(total),
                        indicatif::ProgressDrawTarget::stderr(),
                    )
                    .with_position(pos);
                    if let Ok(style) = indicatif::ProgressStyle::with_template(
                        "replay {bar:40} {bytes}/{total_bytes} {bytes_per_sec} eta {eta}",
                    ) {
                        b.set_style(style);
                    }
                    bar = Some(b);
                }
                None => {}
            }
        }
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    if reader.rows() == 0 {
        return Err(ReviewError::input(
            super::error::Place {
                file: samples_path.to_string(),
                line: Some(2),
                column: None,
                field: None,
            },
            "no samples after the header",
        ));
    }
    let time_column = match reader.time_unit() {
        TimeUnit::Seconds => "time_s",
        TimeUnit::Ticks => "time_ticks",
    };
    let reading_column = reader.value_kind().column();
    let rows = reader.rows();
    replayer.finish_series_csv()?;
    let samples_sha256 = {
        // Read to the end (nothing is left after the last record but whitespace) and hash.
        let mut inner = reader.into_inner();
        let mut rest = Vec::new();
        std::io::Read::read_to_end(&mut inner, &mut rest)
            .map_err(|e| ReviewError::io(samples_path, e))?;
        hex(&inner.hash.finalize())
    };
    let report = replayer.finish(InputInfo {
        config_file: config.file.clone(),
        config_sha256: config.sha256.clone(),
        samples_file: samples_path.to_string(),
        samples_sha256,
        time_column: time_column.to_string(),
        reading_column: reading_column.to_string(),
        rows,
    });
    Ok(ReplayOutput {
        report,
        series: replayer.series.take(),
    })
}

/// Replay samples already in memory (the same engine as [`replay_file`], for benches and
/// comparisons).
///
/// # Errors
/// As [`Replayer::new`].
pub fn replay_samples(
    config: &ReviewConfig,
    samples: &[Sample],
    origin_s: f64,
) -> Result<Report, ReviewError> {
    let mut r = Replayer::new(config, false)?;
    r.set_origin_s(origin_s);
    for s in samples {
        r.push(s);
    }
    Ok(r.finish(InputInfo {
        config_file: config.file.clone(),
        config_sha256: config.sha256.clone(),
        samples_file: "(memory)".to_string(),
        samples_sha256: String::new(),
        time_column: "time_ticks".to_string(),
        reading_column: "adc_code".to_string(),
        rows: samples.len() as u64,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimation_keeps_extremes_and_the_last_dose() {
        let mut s = Series::default();
        let n = 3 * MAX_PLOT_BINS as u64;
        for t in 0..n {
            // One spike up and one down in the middle; NaN (unusable code) now and then.
            let e = match t {
                5000 => 100.0,
                5001 => -3.0,
                t if t % 97 == 0 => f64::NAN,
                _ => 1.0,
            };
            s.push(t, e, t as f64);
        }
        assert!(s.bins.len() <= MAX_PLOT_BINS, "{}", s.bins.len());
        assert!(s.shift >= 1);
        let max = s.bins.iter().map(|b| b.e_max).fold(f64::MIN, f64::max);
        let min = s.bins.iter().map(|b| b.e_min).fold(f64::MAX, f64::min);
        assert_eq!((min, max), (-3.0, 100.0));
        let last = s.bins.last().unwrap();
        assert_eq!((last.t_last, last.dose_last), (n - 1, (n - 1) as f64));
        assert_eq!(s.bins.first().unwrap().t_first, 0);
    }
}
