//! The replay report: JSON (keys documented in `hosttests/review/CONFIG.md`, SI units in the
//! key names) and a human-readable text form.

use serde::{Deserialize, Serialize};

use super::config::RunLabels;

/// Name of the report format, the `report_format` key.
pub const REPORT_FORMAT: &str = "photon-review/report";
/// Version of the report format, the `report_version` key.
pub const REPORT_VERSION: u32 = 1;

/// A replay report. See CONFIG.md ("Report keys") for every key.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Report {
    /// Always [`REPORT_FORMAT`].
    pub report_format: String,
    /// [`REPORT_VERSION`].
    pub report_version: u32,
    /// True: every row of the sample file was read and replayed. A report is only written
    /// when this is true.
    pub complete: bool,
    /// Tool name and version.
    pub tool: String,
    /// Library name and version (the photon-ledger crate the results come from); absent in
    /// reports written before it was added.
    #[serde(default)]
    pub library: String,
    /// SHA-256 identifying the session (configuration, samples and labels), hex.
    pub session_sha256: String,
    /// The inputs.
    pub input: InputInfo,
    /// Run labels.
    pub run: RunLabels,
    /// Configuration facts the numbers depend on.
    pub configuration: ConfigFacts,
    /// How the session ended.
    pub outcome: OutcomeReport,
    /// Dose in every unit the configuration supports.
    pub dose: DoseReport,
    /// Irradiance statistics over the integrated samples.
    pub irradiance: IrradianceReport,
    /// Sample timing and gaps.
    pub timing: TimingReport,
    /// Detector temperature, if the file has a temperature column.
    pub temperature: Option<TemperatureReport>,
    /// Personal exposure monitor, if configured.
    pub exposure: Option<ExposureReport>,
    /// Solar UV (UV index, SED), if configured.
    pub solar: Option<SolarReport>,
    /// Events in time order.
    pub events: Vec<Event>,
    /// Events not listed because the list was full.
    pub events_dropped: u64,
}

/// The inputs of a replay.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputInfo {
    /// Configuration file as named on the command line.
    pub config_file: String,
    /// SHA-256 of its bytes.
    pub config_sha256: String,
    /// Sample file as named on the command line.
    pub samples_file: String,
    /// SHA-256 of its bytes.
    pub samples_sha256: String,
    /// `time_s` or `time_ticks`.
    pub time_column: String,
    /// `adc_code`, `current_a` or `irradiance_w_per_m2`.
    pub reading_column: String,
    /// Data rows read.
    pub rows: u64,
}

/// Configuration facts.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ConfigFacts {
    /// Tick rate, Hz.
    pub tick_rate_hz: u32,
    /// Longest allowed sample interval, s.
    pub max_gap_s: f64,
    /// The target's configuration key (its unit) and value.
    pub target_key: String,
    /// The target in that unit.
    pub target_value: f64,
    /// Target as radiant exposure, J/m².
    pub target_j_per_m2: f64,
    /// Tolerance as radiant exposure, J/m².
    pub tolerance_j_per_m2: f64,
    /// Illuminated sample area, m², if configured.
    pub sample_area_m2: Option<f64>,
    /// Photons per radiant energy in the band, mol/J.
    pub band_mol_per_j: f64,
    /// Wavelength with the band's photons per joule, nm (vacuum).
    pub equivalent_wavelength_nm: f64,
}

/// How the session ended.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutcomeReport {
    /// `target_met`, `overexposed`, `fault` or `end_of_data` (still exposing at the end).
    pub stop_reason: String,
    /// The fault, if `stop_reason` is `fault`: `saturated`, `bad_code`, `time_backwards`,
    /// `gap`.
    pub fault: Option<String>,
    /// Whether the target was reached.
    pub target_reached: bool,
    /// Time the target was reached (the enable output went inactive), s.
    pub target_reached_time_s: Option<f64>,
    /// Line of the sample file at which it was reached.
    pub target_reached_line: Option<u64>,
    /// Time the session ended (overexposure or fault), s.
    pub ended_time_s: Option<f64>,
}

/// Dose in every unit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DoseReport {
    /// Radiant exposure, J/m².
    pub radiant_exposure_j_per_m2: f64,
    /// Radiant exposure, mJ/cm².
    pub radiant_exposure_mj_per_cm2: f64,
    /// Photon exposure, mol/m² (einstein/m²).
    pub photon_exposure_mol_per_m2: f64,
    /// Photon exposure, µmol/m².
    pub photon_exposure_umol_per_m2: f64,
    /// Photons to the illuminated area, mol (with a sample area).
    pub photons_mol: Option<f64>,
    /// Photons to the illuminated area, µmol (with a sample area).
    pub photons_umol: Option<f64>,
    /// Radiant exposure ÷ target.
    pub fraction_of_target: f64,
    /// Radiant exposure when the target was reached, J/m².
    pub at_target_radiant_exposure_j_per_m2: Option<f64>,
    /// Radiant exposure received after the target was reached, J/m².
    pub after_target_radiant_exposure_j_per_m2: Option<f64>,
    /// The integrator's exact integer totals per amplifier range (net code × ticks, doubled),
    /// as decimal strings.
    pub raw_totals_code_ticks_x2: Vec<String>,
}

/// Irradiance statistics over the integrated samples (`null` if none).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IrradianceReport {
    /// Lowest irradiance of an integrated sample, W/m².
    pub min_w_per_m2: Option<f64>,
    /// Time-weighted mean: radiant exposure ÷ integrated time, W/m².
    pub mean_w_per_m2: Option<f64>,
    /// Highest irradiance of an integrated sample, W/m².
    pub max_w_per_m2: Option<f64>,
    /// Mean photon irradiance, µmol m⁻² s⁻¹.
    pub mean_photon_irradiance_umol_per_m2_s: Option<f64>,
    /// Highest photon irradiance, µmol m⁻² s⁻¹.
    pub max_photon_irradiance_umol_per_m2_s: Option<f64>,
}

/// A gap: an interval longer than the configured maximum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GapReport {
    /// Time of the sample before the gap, s.
    pub start_time_s: f64,
    /// Time of the sample after the gap, s.
    pub end_time_s: f64,
    /// Length, s.
    pub length_s: f64,
    /// Line of the sample after the gap.
    pub line: u64,
}

/// Sample timing.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimingReport {
    /// Time of the first sample, s.
    pub start_time_s: f64,
    /// Time of the last sample, s.
    pub end_time_s: f64,
    /// Last − first, s.
    pub duration_s: f64,
    /// Time covered by integrated intervals, s.
    pub integrated_time_s: f64,
    /// Samples in the file.
    pub samples: u64,
    /// Samples integrated.
    pub integrated_samples: u64,
    /// Samples ignored for a repeated timestamp.
    pub repeated_timestamps: u64,
    /// Saturated samples tolerated (not integrated).
    pub unusable_samples: u64,
    /// Samples after the session ended (overexposure or fault).
    pub samples_after_end: u64,
    /// Shortest interval between samples, s.
    pub interval_min_s: Option<f64>,
    /// Mean interval, s.
    pub interval_mean_s: Option<f64>,
    /// Longest interval, s.
    pub interval_max_s: Option<f64>,
    /// Every interval longer than the configured maximum.
    pub gaps: Vec<GapReport>,
}

/// Detector temperature.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TemperatureReport {
    /// Lowest, °C.
    pub min_c: f64,
    /// Highest, °C.
    pub max_c: f64,
}

/// Personal exposure monitor results.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExposureReport {
    /// Effective ÷ radiant irradiance (weighting factor).
    pub weight_factor: f64,
    /// Limit on the effective exposure in the window, J/m².
    pub limit_j_per_m2: f64,
    /// Rolling window, s.
    pub window_s: f64,
    /// Effective radiant exposure of the whole run (gap bounds included), J/m².
    pub effective_exposure_j_per_m2: f64,
    /// Of which charged for gaps (conservative bounds), J/m².
    pub gap_bound_j_per_m2: f64,
    /// Highest effective exposure in the window during the run, J/m².
    pub max_window_exposure_j_per_m2: f64,
    /// That ÷ the limit.
    pub max_fraction_of_limit: f64,
    /// Whether the alarm level (the limit) was reached.
    pub limit_reached: bool,
    /// When it was first reached, s.
    pub limit_reached_time_s: Option<f64>,
}

/// Solar UV results.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SolarReport {
    /// Erythemally weighted ÷ radiant irradiance.
    pub erythema_weight_factor: f64,
    /// Erythemal exposure of the run, SED (100 J/m² erythemally weighted).
    pub erythemal_exposure_sed: f64,
    /// Highest averaged UV index (unrounded).
    pub max_uv_index: f64,
    /// Highest UV index as reported (rounded half up).
    pub max_uv_index_reported: u32,
}

/// An event.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Event {
    /// Time, s.
    pub time_s: f64,
    /// The reading's tick stamp.
    pub tick: u32,
    /// Line of the sample file.
    pub line: u64,
    /// Kind (see CONFIG.md): `start`, `target_met`, `overexposed`, `fault`, `gap`,
    /// `saturated_run`, `exposure_level_raised`, `exposure_level_cleared`,
    /// `exposure_alarm_latched`, `end`.
    pub kind: String,
    /// Details in words.
    pub detail: String,
}

fn opt(v: Option<f64>, unit: &str) -> String {
    v.map_or_else(|| "-".to_string(), |x| format!("{} {unit}", sig(x)))
}

/// A number with 6 significant digits (whole numbers below 10¹⁵ in full), without exponent
/// for ordinary magnitudes.
pub fn sig(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    if x.fract() == 0.0 && x.abs() < 1e15 {
        return format!("{x:.0}");
    }
    let mag = x.abs().log10().floor() as i32;
    if (-4..6).contains(&mag) {
        let decimals = (5 - mag).max(0) as usize;
        format!("{x:.decimals$}")
    } else {
        format!("{x:.5e}")
    }
}

impl Report {
    /// The human-readable form.
    pub fn to_text(&self) -> String {
        use std::fmt::Write;
        let mut s = String::new();
        let r = self;
        let _ = writeln!(s, "photon-review replay report ({}, {})", r.tool, r.library);
        let _ = writeln!(
            s,
            "samples  {} ({} rows, {} / {})",
            r.input.samples_file, r.input.rows, r.input.time_column, r.input.reading_column
        );
        let _ = writeln!(s, "config   {}", r.input.config_file);
        let labels = [
            ("device", &r.run.device_id),
            ("person", &r.run.person_id),
            ("reactor", &r.run.reactor_id),
            ("start", &r.run.start_utc),
        ];
        let l: Vec<String> = labels
            .iter()
            .filter_map(|(k, v)| v.as_ref().map(|v| format!("{k} {v}")))
            .collect();
        if !l.is_empty() {
            let _ = writeln!(s, "run      {}", l.join(", "));
        }
        let _ = writeln!(s);
        let o = &r.outcome;
        let _ = writeln!(
            s,
            "stop reason        {}{}",
            o.stop_reason,
            o.fault
                .as_ref()
                .map_or(String::new(), |f| format!(" ({f})"))
        );
        let _ = writeln!(
            s,
            "target             {} = {} ({} J/m²)",
            r.configuration.target_key,
            sig(r.configuration.target_value),
            sig(r.configuration.target_j_per_m2)
        );
        let _ = writeln!(
            s,
            "target reached     {}",
            match (o.target_reached_time_s, o.target_reached_line) {
                (Some(t), Some(l)) => format!("at {} s (line {l})", sig(t)),
                (Some(t), None) => format!("at {} s", sig(t)),
                _ => "no".to_string(),
            }
        );
        let d = &r.dose;
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "radiant exposure   {} J/m²  = {} mJ/cm²  ({} % of target)",
            sig(d.radiant_exposure_j_per_m2),
            sig(d.radiant_exposure_mj_per_cm2),
            sig(d.fraction_of_target * 100.0)
        );
        let _ = writeln!(
            s,
            "photon exposure    {} mol/m²  = {} µmol/m²",
            sig(d.photon_exposure_mol_per_m2),
            sig(d.photon_exposure_umol_per_m2)
        );
        if let (Some(m), Some(u)) = (d.photons_mol, d.photons_umol) {
            let _ = writeln!(s, "photons to area    {} mol  = {} µmol", sig(m), sig(u));
        }
        if let Some(a) = d.after_target_radiant_exposure_j_per_m2 {
            let _ = writeln!(s, "after the target   {} J/m²", sig(a));
        }
        let i = &r.irradiance;
        let _ = writeln!(
            s,
            "irradiance         min {}  mean {}  max {}",
            opt(i.min_w_per_m2, "W/m²"),
            opt(i.mean_w_per_m2, "W/m²"),
            opt(i.max_w_per_m2, "W/m²")
        );
        let _ = writeln!(
            s,
            "photon irradiance  mean {}  max {}",
            opt(i.mean_photon_irradiance_umol_per_m2_s, "µmol m⁻² s⁻¹"),
            opt(i.max_photon_irradiance_umol_per_m2_s, "µmol m⁻² s⁻¹")
        );
        let t = &r.timing;
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "time               {} s to {} s ({} s; {} s integrated)",
            sig(t.start_time_s),
            sig(t.end_time_s),
            sig(t.duration_s),
            sig(t.integrated_time_s)
        );
        let _ = writeln!(
            s,
            "samples            {} ({} integrated, {} repeated timestamps, {} saturated tolerated, {} after the end)",
            t.samples, t.integrated_samples, t.repeated_timestamps, t.unusable_samples, t.samples_after_end
        );
        let _ = writeln!(
            s,
            "interval           min {}  mean {}  max {}",
            opt(t.interval_min_s, "s"),
            opt(t.interval_mean_s, "s"),
            opt(t.interval_max_s, "s")
        );
        let _ = writeln!(s, "gaps               {}", t.gaps.len());
        for g in &t.gaps {
            let _ = writeln!(
                s,
                "  {} s gap from {} s to {} s (line {})",
                sig(g.length_s),
                sig(g.start_time_s),
                sig(g.end_time_s),
                g.line
            );
        }
        if let Some(tc) = &r.temperature {
            let _ = writeln!(
                s,
                "temperature        {} to {} °C",
                sig(tc.min_c),
                sig(tc.max_c)
            );
        }
        if let Some(x) = &r.exposure {
            let _ = writeln!(s);
            let _ = writeln!(
                s,
                "effective exposure {} J/m² (weight {}; {} J/m² charged for gaps)",
                sig(x.effective_exposure_j_per_m2),
                sig(x.weight_factor),
                sig(x.gap_bound_j_per_m2)
            );
            let _ = writeln!(
                s,
                "window maximum     {} J/m² in {} s = {} % of the {} J/m² limit{}",
                sig(x.max_window_exposure_j_per_m2),
                sig(x.window_s),
                sig(x.max_fraction_of_limit * 100.0),
                sig(x.limit_j_per_m2),
                match x.limit_reached_time_s {
                    Some(t) => format!(", LIMIT REACHED at {} s", sig(t)),
                    None => String::new(),
                }
            );
        }
        if let Some(x) = &r.solar {
            let _ = writeln!(
                s,
                "solar UV           {} SED; max UV index {} (reported {})",
                sig(x.erythemal_exposure_sed),
                sig(x.max_uv_index),
                x.max_uv_index_reported
            );
        }
        let _ = writeln!(s);
        let _ = writeln!(s, "events ({})", r.events.len() as u64 + r.events_dropped);
        for e in &r.events {
            let _ = writeln!(
                s,
                "  {:>12} s  line {:>8}  {:<24} {}",
                sig(e.time_s),
                e.line,
                e.kind,
                e.detail
            );
        }
        if r.events_dropped > 0 {
            let _ = writeln!(s, "  ... {} more events not listed", r.events_dropped);
        }
        s
    }
}
