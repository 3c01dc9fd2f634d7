//! The session configuration file (TOML) and its validation into the library's types.
//!
//! Every key, its unit and its valid range are listed in `hosttests/review/CONFIG.md`; the
//! short form is below. Unknown keys are **rejected** (a typo must not silently become a
//! default), and every error names the file, the line, the column and the key.
//!
//! ```toml
//! [run]                       # optional labels, copied into the report
//! device_id = "bench-2"       # text
//! person_id = "A. Chemist"    # text
//! reactor_id = "R2"           # text
//! start_utc = "2025-03-14T09:30:00Z"   # UTC start of the run, RFC 3339 with Z
//!
//! [adc]
//! bits = 12                   # resolution, bits, 8..=24
//! reference_v = 3.3           # full-scale reference, V, > 0
//! pga_gain = 1.0              # optional, dimensionless, > 0 (default 1)
//! coding = "unipolar"         # optional, "unipolar" (default) or "bipolar"
//! saturation_margin_codes = 4 # optional, codes, default 0
//!
//! [[ranges]]                  # 1 to 4 amplifier ranges, most sensitive first
//! transimpedance_ohm = 1.0e6  # feedback resistance, Ω (V/A), > 0
//! dark_offset_codes = 2       # code read in the dark, ADC codes
//!
//! [calibration]               # either responsivity + area, or a certificate factor
//! responsivity_a_per_w = 0.22
//! active_area_mm2 = 1.0
//! # factor_w_per_m2_per_a = 4.5e6
//!
//! [band]                      # either line_nm, or peak_nm + fwhm_nm (vacuum wavelengths)
//! peak_nm = 405.0
//! fwhm_nm = 14.0
//!
//! [clock]
//! tick_rate_hz = 1000         # ticks per second of the timestamps, ≥ 1
//!
//! [session]
//! target = { photons_umol = 5.0 }      # exactly one dose key, see below
//! tolerance = { photons_umol = 0.05 }  # exactly one dose key, ≥ 0
//! max_gap_ticks = 500         # longest allowed sample interval, ticks
//! max_unusable_run = 4        # optional, saturated readings tolerated in a row (default 0)
//! sample_area_cm2 = 4.0       # optional, illuminated area, cm² (needed for doses in photons)
//! ```
//!
//! Dose keys: `radiant_exposure_j_per_m2`, `radiant_exposure_mj_per_cm2`,
//! `photon_exposure_mol_per_m2`, `photon_exposure_umol_per_m2`, `photons_mol`, `photons_umol`.
//!
//! Optional `[exposure]` (personal exposure monitor) and `[solar]` (UV index, SED) tables are
//! described in CONFIG.md.

use photon_ledger::control::exposure::{ExposureConfigError, WeightFactor};
use photon_ledger::control::session::SessionConfigError;
use photon_ledger::frontend::FrontEndError;
use photon_ledger::irradiance::{CalibrationError, MeterError};
use photon_ledger::prelude::*;
use photon_ledger::spectral::band::BandError;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use toml::Spanned;

use super::error::{line_col, Place, ReviewError};
use super::monitor::{Monitor, BUCKET_CAPACITY};

/// The format number of the configuration file this tool reads.
pub const CONFIG_FORMAT: u32 = 1;

type S<T> = Spanned<T>;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ConfigToml {
    format: Option<S<u32>>,
    run: Option<RunLabels>,
    adc: S<AdcToml>,
    ranges: S<Vec<S<RangeToml>>>,
    calibration: S<CalibrationToml>,
    band: S<BandToml>,
    clock: S<ClockToml>,
    session: Option<S<SessionToml>>,
    curing: Option<S<CuringToml>>,
    exposure: Option<S<ExposureToml>>,
    solar: Option<S<SolarToml>>,
    samples: Option<S<SamplesToml>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SamplesToml {
    extra_columns: S<Vec<String>>,
}

/// Column names the sample file reader knows (an extra column may not take one of them).
pub const SAMPLE_COLUMNS: [&str; 7] = [
    "time_s",
    "time_ticks",
    "adc_code",
    "current_a",
    "irradiance_w_per_m2",
    "range",
    "temperature_c",
];

/// Labels of a run, copied into the report and the exposure register. All optional.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunLabels {
    /// The device (meter, logger, station) that recorded the run.
    pub device_id: Option<String>,
    /// The person whose exposure this is (personal logging).
    pub person_id: Option<String>,
    /// The reactor or station the run was made on.
    pub reactor_id: Option<String>,
    /// UTC start of the run, `YYYY-MM-DDTHH:MM:SSZ` (fractional seconds allowed).
    pub start_utc: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct AdcToml {
    bits: S<u8>,
    reference_v: S<f64>,
    pga_gain: Option<S<f64>>,
    coding: Option<S<String>>,
    saturation_margin_codes: Option<S<u32>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RangeToml {
    transimpedance_ohm: S<f64>,
    dark_offset_codes: S<i32>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct CalibrationToml {
    responsivity_a_per_w: Option<S<f64>>,
    active_area_mm2: Option<S<f64>>,
    factor_w_per_m2_per_a: Option<S<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct BandToml {
    line_nm: Option<S<f64>>,
    peak_nm: Option<S<f64>>,
    fwhm_nm: Option<S<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ClockToml {
    tick_rate_hz: S<u32>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SessionToml {
    target: S<DoseToml>,
    tolerance: S<DoseToml>,
    max_gap_ticks: S<u32>,
    max_unusable_run: Option<S<u16>>,
    sample_area_cm2: Option<S<f64>>,
}

/// `[curing]`: a curing station's recipe, replayed through the library's `CuringController`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct CuringToml {
    target: S<DoseToml>,
    tolerance: S<DoseToml>,
    max_gap_ticks: S<u32>,
    max_unusable_run: Option<S<u16>>,
    stop: Option<S<String>>,
    timer_stop: Option<S<bool>>,
    lag_s: Option<S<f64>>,
    lag_profile: Option<S<Vec<S<FallPointToml>>>>,
    warm_up_s: Option<S<f64>>,
    minimum_w_per_m2: Option<S<f64>>,
    minimum_hold_off_s: Option<S<f64>>,
    maximum_w_per_m2: Option<S<f64>>,
    maximum_hold_off_s: Option<S<f64>>,
    light_off_fraction: S<f64>,
    light_off_floor_w_per_m2: S<f64>,
    light_off_margin_s: S<f64>,
    lamp_reference_w_per_m2: Option<S<f64>>,
    lamp_maintenance_below: Option<S<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FallPointToml {
    after_s: S<f64>,
    remaining: S<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct DoseToml {
    radiant_exposure_j_per_m2: Option<S<f64>>,
    radiant_exposure_mj_per_cm2: Option<S<f64>>,
    photon_exposure_mol_per_m2: Option<S<f64>>,
    photon_exposure_umol_per_m2: Option<S<f64>>,
    photons_mol: Option<S<f64>>,
    photons_umol: Option<S<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ExposureToml {
    weight_factor: S<f64>,
    limit_j_per_m2: S<f64>,
    window_s: S<f64>,
    bucket_s: S<f64>,
    levels: S<Vec<f64>>,
    hysteresis: S<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SolarToml {
    erythema_weight_factor: S<f64>,
    averaging_s: Option<S<f64>>,
    bucket_s: Option<S<f64>>,
}

/// A dose as written in the configuration: the key (which names the unit) and the value.
#[derive(Debug, Clone, PartialEq)]
pub struct GivenDose {
    /// The key, e.g. `photons_umol`.
    pub key: &'static str,
    /// The value in the key's unit.
    pub value: f64,
    /// The dose as the library type.
    pub amount: DoseAmount,
}

/// The personal exposure monitor settings, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct ExposureSetup {
    /// Effective ÷ radiant irradiance for the band and action spectrum.
    pub weight: WeightFactor,
    /// Rolling window, ticks.
    pub window_ticks: u32,
    /// Bucket, ticks.
    pub bucket_ticks: u32,
    /// Limit on the effective radiant exposure in the window.
    pub limit: RadiantExposure,
    /// Warning levels, fractions of the limit (last = alarm), 1 to 4 of them.
    pub levels: Vec<f64>,
    /// Hysteresis, fraction of the limit.
    pub hysteresis: f64,
    /// Longest expected interval, ticks (the session's maximum gap).
    pub max_gap_ticks: u32,
}

/// The solar UV settings (UV index, SED), validated.
#[derive(Debug, Clone, PartialEq)]
pub struct SolarSetup {
    /// Erythemally weighted ÷ radiant irradiance for the band (CIE erythema action spectrum).
    pub erythema: WeightFactor,
    /// UV index averaging period, ticks.
    pub averaging_ticks: u32,
    /// Bucket, ticks.
    pub bucket_ticks: u32,
}

/// A curing recipe (`[curing]`), validated by the library's `CuringController::new`.
#[derive(Debug, Clone, PartialEq)]
pub struct CuringSetup {
    /// The controller's configuration (pin levels are the replay's own: active high).
    pub config: CuringConfig,
    /// Replay the firmware's timer compare at `stop_due()` between readings.
    pub timer_stop: bool,
}

/// A validated session configuration: the library's own configuration values.
#[derive(Debug, Clone)]
pub struct ReviewConfig {
    /// The file as the user named it.
    pub file: String,
    /// SHA-256 of the file's bytes, hex.
    pub sha256: String,
    /// Run labels.
    pub labels: RunLabels,
    /// The converter.
    pub adc: AdcSpec,
    /// Smallest and largest code of the converter.
    pub code_limits: (i32, i32),
    /// The meter (front end, calibration, band, clock, sample area).
    pub meter: Meter,
    /// The session configuration.
    pub session: SessionConfig,
    /// The target as written.
    pub target: GivenDose,
    /// The tolerance as written.
    pub tolerance: GivenDose,
    /// The exposure monitor, if configured.
    pub exposure: Option<ExposureSetup>,
    /// Solar UV, if configured.
    pub solar: Option<SolarSetup>,
    /// Sample file columns declared in `[samples] extra_columns`: accepted and not read.
    pub extra_columns: Vec<String>,
    /// The curing recipe, when the file has `[curing]` instead of `[session]` (then
    /// `session`, `target` and `tolerance` carry the recipe's target, tolerance and gap).
    pub curing: Option<CuringSetup>,
}

struct Ctx<'a> {
    file: &'a str,
    text: &'a str,
}

impl Ctx<'_> {
    fn err(&self, span: std::ops::Range<usize>, key: &str, msg: impl Into<String>) -> ReviewError {
        let (line, col) = line_col(self.text, span.start);
        ReviewError::input(
            Place {
                file: self.file.to_string(),
                line: Some(line),
                column: Some(col),
                field: Some(key.to_string()),
            },
            msg,
        )
    }
    fn positive(&self, v: &S<f64>, key: &str) -> Result<f64, ReviewError> {
        let x = *v.get_ref();
        if x.is_finite() && x > 0.0 {
            Ok(x)
        } else {
            Err(self.err(v.span(), key, format!("must be finite and > 0, is {x}")))
        }
    }
    /// `v` must lie in the engineering range `lo ..= hi` (see [`RANGES`]).
    fn in_range(&self, v: &S<f64>, key: &str) -> Result<f64, ReviewError> {
        let x = *v.get_ref();
        let Some(&(_, lo, hi, unit)) = RANGES.iter().find(|(k, ..)| *k == key) else {
            return Ok(x);
        };
        if x.is_finite() && (lo..=hi).contains(&x) {
            Ok(x)
        } else {
            Err(self.err(
                v.span(),
                key,
                format!(
                    "{} {unit} is outside the sane range {} ..= {} {unit}",
                    num(x),
                    num(lo),
                    num(hi)
                ),
            ))
        }
    }
    /// As [`Self::seconds_to_ticks`], and 0 s is 0 ticks.
    fn seconds_to_ticks_or_zero(&self, v: &S<f64>, key: &str, hz: u32) -> Result<u32, ReviewError> {
        if *v.get_ref() == 0.0 {
            Ok(0)
        } else {
            self.seconds_to_ticks(v, key, hz)
        }
    }
    fn seconds_to_ticks(&self, v: &S<f64>, key: &str, hz: u32) -> Result<u32, ReviewError> {
        let s = self.positive(v, key)?;
        let ticks = s * f64::from(hz);
        let rounded = ticks.round();
        if (ticks - rounded).abs() > 1e-6 * rounded.max(1.0) {
            return Err(self.err(
                v.span(),
                key,
                format!("{s} s is not a whole number of ticks at {hz} Hz"),
            ));
        }
        if !(1.0..=f64::from(i32::MAX)).contains(&rounded) {
            return Err(self.err(v.span(), key, "must be 1 to 2^31-1 ticks"));
        }
        Ok(rounded as u32)
    }
}

/// A number for a message: plain between 10⁻³ and 10⁶, else in exponent form.
fn num(x: f64) -> String {
    if x != 0.0 && x.is_finite() && !(1e-3..1e6).contains(&x.abs()) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// Engineering ranges of the configuration's physical values: key, lowest, highest, unit.
/// A value outside is refused as a typo or a unit slip (a reference of 3300 V for 3.3 V, an
/// area in m² where mm² are asked), even when the library could compute with it. The bounds
/// are generous and documented in CONFIG.md; they are common practice, no source.
pub const RANGES: [(&str, f64, f64, &str); 10] = [
    ("adc.reference_v", 0.1, 100.0, "V"),
    ("adc.pga_gain", 0.01, 1000.0, "(gain)"),
    ("ranges.transimpedance_ohm", 1.0, 1.0e12, "Ω"),
    ("calibration.responsivity_a_per_w", 1.0e-6, 1000.0, "A/W"),
    ("calibration.active_area_mm2", 1.0e-4, 1.0e4, "mm²"),
    ("calibration.factor_w_per_m2_per_a", 0.1, 1.0e16, "(W/m²)/A"),
    ("session.sample_area_cm2", 1.0e-6, 1.0e6, "cm²"),
    ("exposure.weight_factor", 1.0e-9, 10.0, "(ratio)"),
    ("exposure.limit_j_per_m2", 1.0e-6, 1.0e9, "J/m²"),
    ("solar.erythema_weight_factor", 1.0e-9, 10.0, "(ratio)"),
];

/// Largest configuration file read, bytes (a configuration is a few kilobytes).
pub const MAX_CONFIG_BYTES: u64 = 1 << 20;

/// Read and validate a configuration file.
///
/// # Errors
/// [`ReviewError::Io`] if the file cannot be read; [`ReviewError::Input`] with the line,
/// column and key of the first bad value, unknown key or syntax error.
pub fn load(path: &str) -> Result<ReviewConfig, ReviewError> {
    let bytes = super::files::read_limited(path, MAX_CONFIG_BYTES, "configuration file")?;
    parse(path, &bytes)
}

/// Validate a configuration from its bytes; `file` is used in messages.
///
/// # Errors
/// As [`load`].
pub fn parse(file: &str, bytes: &[u8]) -> Result<ReviewConfig, ReviewError> {
    let sha256 = hex(&Sha256::digest(bytes));
    let text = std::str::from_utf8(bytes).map_err(|e| {
        let (line, column) = {
            let ok = bytes.get(..e.valid_up_to()).unwrap_or(&[]);
            let s = std::str::from_utf8(ok).unwrap_or("");
            line_col(s, s.len())
        };
        ReviewError::input(
            Place {
                file: file.to_string(),
                line: Some(line),
                column: Some(column),
                field: None,
            },
            "not valid UTF-8",
        )
    })?;
    let ctx = Ctx { file, text };
    let raw: ConfigToml = toml::from_str(text).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        let (line, col) = line_col(text, span.start);
        ReviewError::input(
            Place {
                file: file.to_string(),
                line: Some(line),
                column: Some(col),
                field: None,
            },
            e.message().trim().to_string(),
        )
    })?;
    if let Some(f) = &raw.format {
        if *f.get_ref() != CONFIG_FORMAT {
            return Err(ctx.err(
                f.span(),
                "format",
                format!(
                    "this tool reads format {CONFIG_FORMAT}, the file says {}",
                    f.get_ref()
                ),
            ));
        }
    }
    let s =
        match (&raw.session, &raw.curing) {
            (Some(t), None) => {
                let v = t.get_ref();
                SessionView {
                    name: "session",
                    span: t.span(),
                    target: &v.target,
                    tolerance: &v.tolerance,
                    max_gap_ticks: &v.max_gap_ticks,
                    max_unusable_run: v.max_unusable_run.as_ref(),
                    sample_area_cm2: v.sample_area_cm2.as_ref(),
                }
            }
            (None, Some(t)) => {
                let v = t.get_ref();
                SessionView {
                    name: "curing",
                    span: t.span(),
                    target: &v.target,
                    tolerance: &v.tolerance,
                    max_gap_ticks: &v.max_gap_ticks,
                    max_unusable_run: v.max_unusable_run.as_ref(),
                    sample_area_cm2: None,
                }
            }
            (Some(_), Some(c)) => return Err(ctx.err(
                c.span(),
                "curing",
                "a file has either [session] (replay) or [curing] (a curing station's recipe), \
                 not both",
            )),
            (None, None) => {
                return Err(ctx.err(
                    0..0,
                    "session",
                    "missing table [session] (a dose session for `replay`) or [curing] (a curing \
                 station's recipe for `curing`)",
                ))
            }
        };
    let labels = raw.run.clone().unwrap_or_default();
    if let Some(s) = &labels.start_utc {
        if super::time::parse_utc(s).is_none() {
            let at = text.find(s.as_str()).unwrap_or(0);
            return Err(ctx.err(
                at..at,
                "run.start_utc",
                format!("`{s}` is not a UTC time like 2025-03-14T09:30:00Z"),
            ));
        }
    }

    // [adc]
    let a = raw.adc.get_ref();
    let coding = match a.coding.as_ref().map(|c| (c.get_ref().as_str(), c.span())) {
        None | Some(("unipolar", _)) => Coding::Unipolar,
        Some(("bipolar", _)) => Coding::Bipolar,
        Some((other, span)) => {
            return Err(ctx.err(
                span,
                "adc.coding",
                format!("`{other}`: expected \"unipolar\" or \"bipolar\""),
            ))
        }
    };
    ctx.in_range(&a.reference_v, "adc.reference_v")?;
    if let Some(g) = &a.pga_gain {
        ctx.in_range(g, "adc.pga_gain")?;
    }
    for (n, rng) in raw.ranges.get_ref().iter().enumerate() {
        let v = &rng.get_ref().transimpedance_ohm;
        if let Err(e) = ctx.in_range(v, "ranges.transimpedance_ohm") {
            let ReviewError::Input { message, .. } = e else {
                return Err(e);
            };
            return Err(ctx.err(
                v.span(),
                &format!("ranges[{n}].transimpedance_ohm"),
                message,
            ));
        }
    }
    let c = raw.calibration.get_ref();
    for (v, key) in [
        (&c.responsivity_a_per_w, "calibration.responsivity_a_per_w"),
        (&c.active_area_mm2, "calibration.active_area_mm2"),
        (
            &c.factor_w_per_m2_per_a,
            "calibration.factor_w_per_m2_per_a",
        ),
        (&s.sample_area_cm2.cloned(), "session.sample_area_cm2"),
    ] {
        if let Some(v) = v {
            ctx.in_range(v, key)?;
        }
    }
    let adc = AdcSpec {
        bits: *a.bits.get_ref(),
        reference: Voltage::from_v(*a.reference_v.get_ref()),
        pga_gain: a.pga_gain.as_ref().map_or(1.0, |g| *g.get_ref()),
        coding,
        saturation_margin: a
            .saturation_margin_codes
            .as_ref()
            .map_or(0, |m| *m.get_ref()),
    };
    let ranges: Vec<AmplifierRange> = raw
        .ranges
        .get_ref()
        .iter()
        .map(|r| AmplifierRange {
            gain: Transimpedance::from_v_per_a(*r.get_ref().transimpedance_ohm.get_ref()),
            dark_offset: *r.get_ref().dark_offset_codes.get_ref(),
        })
        .collect();
    let range_span = |n: u8, dark: bool| {
        raw.ranges
            .get_ref()
            .get(usize::from(n))
            .map_or(raw.ranges.span(), |r| {
                if dark {
                    r.get_ref().dark_offset_codes.span()
                } else {
                    r.get_ref().transimpedance_ohm.span()
                }
            })
    };
    let front_end = FrontEnd::new(adc, &ranges).map_err(|e| {
        let (span, key) = match e {
            FrontEndError::Resolution => (a.bits.span(), "adc.bits".to_string()),
            FrontEndError::Reference => (a.reference_v.span(), "adc.reference_v".into()),
            FrontEndError::PgaGain => (
                a.pga_gain.as_ref().map_or(raw.adc.span(), |g| g.span()),
                "adc.pga_gain".into(),
            ),
            FrontEndError::SaturationMargin => (
                a.saturation_margin_codes
                    .as_ref()
                    .map_or(raw.adc.span(), |g| g.span()),
                "adc.saturation_margin_codes".into(),
            ),
            FrontEndError::NoRanges | FrontEndError::TooManyRanges | FrontEndError::RangeOrder => {
                (raw.ranges.span(), "ranges".into())
            }
            FrontEndError::Gain(n) => (
                range_span(n, false),
                format!("ranges[{n}].transimpedance_ohm"),
            ),
            FrontEndError::DarkOffset(n) => (
                range_span(n, true),
                format!("ranges[{n}].dark_offset_codes"),
            ),
            // A newer library's check: name the converter section.
            _ => (raw.adc.span(), "adc".into()),
        };
        ctx.err(span, &key, e.to_string())
    })?;
    let code_limits = match adc.coding {
        Coding::Unipolar => (0, (1i32 << adc.bits) - 1),
        Coding::Bipolar => (-(1i32 << (adc.bits - 1)), (1i32 << (adc.bits - 1)) - 1),
    };

    // [calibration]
    let calibration =
        match (
            &c.responsivity_a_per_w,
            &c.active_area_mm2,
            &c.factor_w_per_m2_per_a,
        ) {
            (Some(r), Some(area), None) => Calibration::Responsivity {
                responsivity: Responsivity::from_a_per_w(*r.get_ref()),
                active_area: Area::from_mm2(*area.get_ref()),
            },
            (None, None, Some(k)) => {
                Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(*k.get_ref()))
            }
            _ => return Err(ctx.err(
                raw.calibration.span(),
                "calibration",
                "give either responsivity_a_per_w and active_area_mm2, or factor_w_per_m2_per_a",
            )),
        };

    // [band]
    let b = raw.band.get_ref();
    let band = match (&b.line_nm, &b.peak_nm, &b.fwhm_nm) {
        (Some(l), None, None) => Band::Line(Wavelength::from_nm(*l.get_ref())),
        (None, Some(p), Some(w)) => Band::Led {
            peak: Wavelength::from_nm(*p.get_ref()),
            fwhm: Wavelength::from_nm(*w.get_ref()),
        },
        _ => {
            return Err(ctx.err(
                raw.band.span(),
                "band",
                "give either line_nm, or peak_nm and fwhm_nm",
            ))
        }
    };

    // [clock]
    let hz_v = &raw.clock.get_ref().tick_rate_hz;
    let hz = *hz_v.get_ref();
    let tick_rate = TickRate::from_hz(hz)
        .ok_or_else(|| ctx.err(hz_v.span(), "clock.tick_rate_hz", "must be >= 1"))?;

    // [session]
    let sample_area = s
        .sample_area_cm2
        .as_ref()
        .map(|v| Area::from_cm2(*v.get_ref()));
    let meter = Meter::new(MeterConfig {
        front_end,
        calibration,
        band,
        tick_rate,
        sample_area,
    })
    .map_err(|e| {
        let (span, key) = match e {
            MeterError::Calibration(CalibrationError::Responsivity) => (
                c.responsivity_a_per_w
                    .as_ref()
                    .map_or(raw.calibration.span(), |v| v.span()),
                "calibration.responsivity_a_per_w",
            ),
            MeterError::Calibration(CalibrationError::ActiveArea) => (
                c.active_area_mm2
                    .as_ref()
                    .map_or(raw.calibration.span(), |v| v.span()),
                "calibration.active_area_mm2",
            ),
            MeterError::Calibration(CalibrationError::Factor) => (
                c.factor_w_per_m2_per_a
                    .as_ref()
                    .map_or(raw.calibration.span(), |v| v.span()),
                "calibration.factor_w_per_m2_per_a",
            ),
            MeterError::Band(BandError::Wavelength) => (
                b.line_nm
                    .as_ref()
                    .or(b.peak_nm.as_ref())
                    .map_or(raw.band.span(), |v| v.span()),
                if b.line_nm.is_some() {
                    "band.line_nm"
                } else {
                    "band.peak_nm"
                },
            ),
            MeterError::Band(BandError::Fwhm) => (
                b.fwhm_nm.as_ref().map_or(raw.band.span(), |v| v.span()),
                "band.fwhm_nm",
            ),
            MeterError::SampleArea => (
                s.sample_area_cm2.map_or(s.span.clone(), |v| v.span()),
                "session.sample_area_cm2",
            ),
            // A newer library's check: name the calibration section.
            _ => (raw.calibration.span(), "calibration"),
        };
        ctx.err(span, key, e.to_string())
    })?;
    let key = |k: &str| format!("{}.{k}", s.name);
    let target = dose(&ctx, s.target, &key("target"))?;
    let tolerance = dose(&ctx, s.tolerance, &key("tolerance"))?;
    if tolerance.value == 0.0 {
        // The library turns the session overexposed when one sample carries the dose past
        // target + tolerance, also on the sample that reaches the target: with a tolerance of
        // 0 every run whose last sample overshoots the target by any amount (all of them, in
        // practice) ends `overexposed`.
        return Err(ctx.err(
            s.tolerance.span(),
            &format!("{}.tolerance.{}", s.name, tolerance.key),
            "must be > 0: the sample that reaches the target carries the dose past it by up to \
             one interval's dose, and the firmware counts any dose past target + tolerance as \
             an overexposure; give at least the dose one sample interval can deliver",
        ));
    }
    let session = SessionConfig {
        target: target.amount,
        tolerance: tolerance.amount,
        max_gap_ticks: *s.max_gap_ticks.get_ref(),
        max_unusable_run: s.max_unusable_run.map_or(0, |v| *v.get_ref()),
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    // Let the library validate exactly as firmware would.
    if let Err(e) = super::replay::new_session(meter.clone(), session) {
        let (span, key) = match e {
            SessionConfigError::Target => (s.target.span(), key("target")),
            SessionConfigError::Tolerance => (s.tolerance.span(), key("tolerance")),
            SessionConfigError::SampleAreaRequired => {
                if matches!(target.amount, DoseAmount::Photons(_)) {
                    (s.target.span(), key("target"))
                } else {
                    (s.tolerance.span(), key("tolerance"))
                }
            }
            SessionConfigError::MaxGap => (s.max_gap_ticks.span(), key("max_gap_ticks")),
            // A newer library's check: name the session section.
            _ => (s.span.clone(), s.name.to_string()),
        };
        let mut msg = e.to_string();
        if e == SessionConfigError::SampleAreaRequired {
            msg.push_str(" (set session.sample_area_cm2)");
        }
        return Err(ctx.err(span, &key, msg));
    }

    // [exposure]
    let exposure = match &raw.exposure {
        None => None,
        Some(x) => {
            let xe = x.get_ref();
            let w = ctx.positive(&xe.weight_factor, "exposure.weight_factor")?;
            ctx.in_range(&xe.weight_factor, "exposure.weight_factor")?;
            ctx.in_range(&xe.limit_j_per_m2, "exposure.limit_j_per_m2")?;
            let setup = ExposureSetup {
                weight: WeightFactor::from_ratio(w).unwrap_or(WeightFactor::UNWEIGHTED),
                window_ticks: ctx.seconds_to_ticks(&xe.window_s, "exposure.window_s", hz)?,
                bucket_ticks: ctx.seconds_to_ticks(&xe.bucket_s, "exposure.bucket_s", hz)?,
                limit: RadiantExposure::from_j_per_m2(*xe.limit_j_per_m2.get_ref()),
                levels: xe.levels.get_ref().clone(),
                hysteresis: *xe.hysteresis.get_ref(),
                max_gap_ticks: session.max_gap_ticks,
            };
            if !(1..=4).contains(&setup.levels.len()) {
                return Err(ctx.err(
                    xe.levels.span(),
                    "exposure.levels",
                    "give 1 to 4 warning levels (fractions of the limit, the last is the alarm)",
                ));
            }
            if let Err(e) = Monitor::new(&meter, &setup) {
                let (span, key) = match e {
                    ExposureConfigError::WindowNotWholeBuckets => {
                        (xe.window_s.span(), "exposure.window_s")
                    }
                    ExposureConfigError::WindowTooLong => (xe.window_s.span(), "exposure.window_s"),
                    ExposureConfigError::Limit => {
                        (xe.limit_j_per_m2.span(), "exposure.limit_j_per_m2")
                    }
                    ExposureConfigError::WarningLevels => (xe.levels.span(), "exposure.levels"),
                    ExposureConfigError::Hysteresis => {
                        (xe.hysteresis.span(), "exposure.hysteresis")
                    }
                    ExposureConfigError::MaxGap => {
                        (s.max_gap_ticks.span(), "session.max_gap_ticks")
                    }
                    ExposureConfigError::Scale
                    | ExposureConfigError::RangeSpread
                    | ExposureConfigError::AveragingPeriod
                    | _ => (xe.weight_factor.span(), "exposure.weight_factor"),
                };
                let mut msg = e.to_string();
                if e == ExposureConfigError::WindowTooLong {
                    msg.push_str(&format!(" ({} buckets at most)", BUCKET_CAPACITY - 1));
                }
                return Err(ctx.err(span, key, msg));
            }
            Some(setup)
        }
    };

    // [solar]
    let solar = match &raw.solar {
        None => None,
        Some(x) => {
            let xs = x.get_ref();
            let w = ctx.positive(&xs.erythema_weight_factor, "solar.erythema_weight_factor")?;
            ctx.in_range(&xs.erythema_weight_factor, "solar.erythema_weight_factor")?;
            let averaging_ticks = match &xs.averaging_s {
                Some(v) => ctx.seconds_to_ticks(v, "solar.averaging_s", hz)?,
                None => 600u32.saturating_mul(hz),
            };
            let bucket_ticks = match &xs.bucket_s {
                Some(v) => ctx.seconds_to_ticks(v, "solar.bucket_s", hz)?,
                None => 60u32.saturating_mul(hz),
            };
            let setup = SolarSetup {
                erythema: WeightFactor::from_ratio(w).unwrap_or(WeightFactor::UNWEIGHTED),
                averaging_ticks,
                bucket_ticks,
            };
            if let Err(e) = super::monitor::new_solar(&meter, &setup, session.max_gap_ticks) {
                let span = xs.averaging_s.as_ref().map_or(x.span(), |v| v.span());
                return Err(ctx.err(span, "solar.averaging_s", e.to_string()));
            }
            Some(setup)
        }
    };

    // [samples]
    let mut extra_columns: Vec<String> = Vec::new();
    if let Some(t) = &raw.samples {
        let v = &t.get_ref().extra_columns;
        for name in v.get_ref() {
            let why = if name.trim().is_empty() || name.trim() != name || name.contains(',') {
                Some("a column name: not empty, no commas, no spaces around it")
            } else if SAMPLE_COLUMNS.contains(&name.as_str()) {
                Some("a column the reader knows; it cannot be an extra column")
            } else if extra_columns.contains(name) {
                Some("named twice")
            } else {
                None
            };
            if let Some(why) = why {
                return Err(ctx.err(
                    v.span(),
                    "samples.extra_columns",
                    format!("`{}`: {why}", super::files::echo(name)),
                ));
            }
            extra_columns.push(name.clone());
        }
    }
    // [curing]
    let curing = match &raw.curing {
        None => None,
        Some(t) => {
            for name in &extra_columns {
                if STATION_COLUMNS.contains(&name.as_str()) {
                    let v = raw.samples.as_ref().map_or(t.span(), |x| x.span());
                    return Err(ctx.err(
                        v,
                        "samples.extra_columns",
                        format!("`{name}` is a station column the curing replay reads"),
                    ));
                }
            }
            Some(curing_setup(
                &ctx, t, &meter, &target, &tolerance, &session,
            )?)
        }
    };
    Ok(ReviewConfig {
        curing,
        extra_columns,
        file: file.to_string(),
        sha256,
        labels,
        adc,
        code_limits,
        meter,
        session,
        target,
        tolerance,
        exposure,
        solar,
    })
}

/// Sample-file columns the curing replay reads (see CONFIG.md, section 2).
pub const STATION_COLUMNS: [&str; 3] = ["part", "guard", "command"];

fn curing_setup(
    ctx: &Ctx<'_>,
    t: &S<CuringToml>,
    meter: &Meter,
    target: &GivenDose,
    tolerance: &GivenDose,
    session: &SessionConfig,
) -> Result<CuringSetup, ReviewError> {
    use photon_ledger::control::curing::{
        ActuatorLag, CuringConfigError as E, FallPoint, FallProfile, IrradianceLimit,
        IrradianceWindow, LampReference, LightOffCheck, StopPolicy,
    };
    let c = t.get_ref();
    let hz = meter.tick_rate().hz();
    let radiant = |d: &GivenDose, v: &S<DoseToml>, k: &str| match d.amount {
        DoseAmount::RadiantExposure(h) => Ok(h),
        _ => Err(ctx.err(
            v.span(),
            k,
            "a curing recipe doses radiant exposure: give radiant_exposure_j_per_m2 or \
             radiant_exposure_mj_per_cm2",
        )),
    };
    let target_h = radiant(target, &c.target, "curing.target")?;
    let tolerance_h = radiant(tolerance, &c.tolerance, "curing.tolerance")?;
    let stop_policy = match c.stop.as_ref().map(|v| (v.get_ref().as_str(), v.span())) {
        None | Some(("anticipate", _)) => StopPolicy::Anticipate,
        Some(("at_target", _)) => StopPolicy::AtTarget,
        Some((other, span)) => {
            return Err(ctx.err(
                span,
                "curing.stop",
                format!(
                    "`{}`: expected \"anticipate\" or \"at_target\"",
                    super::files::echo(other)
                ),
            ))
        }
    };
    let lag = match (&c.lag_s, &c.lag_profile) {
        (Some(_), Some(p)) => {
            return Err(ctx.err(
                p.span(),
                "curing.lag_profile",
                "give lag_s (a dead time) or lag_profile (a measured fall), not both",
            ))
        }
        (Some(v), None) => ActuatorLag::Delay {
            ticks: ctx.seconds_to_ticks_or_zero(v, "curing.lag_s", hz)?,
        },
        (None, None) => ActuatorLag::Delay { ticks: 0 },
        (None, Some(p)) => {
            let mut points = Vec::new();
            for (i, pt) in p.get_ref().iter().enumerate() {
                let key = format!("curing.lag_profile[{i}]");
                let q = pt.get_ref();
                let r = *q.remaining.get_ref();
                if !(r.is_finite() && (0.0..=1.0).contains(&r)) {
                    return Err(ctx.err(
                        q.remaining.span(),
                        &format!("{key}.remaining"),
                        format!("{r}: a fraction of the light from 0 to 1"),
                    ));
                }
                points.push(FallPoint {
                    after_ticks: ctx.seconds_to_ticks(&q.after_s, &format!("{key}.after_s"), hz)?,
                    remaining: r,
                });
            }
            ActuatorLag::Profile(FallProfile::new(&points).map_err(|e| {
                let span = match e {
                    E::FallPoint(n) => p
                        .get_ref()
                        .get(usize::from(n))
                        .map_or(p.span(), |x| x.span()),
                    _ => p.span(),
                };
                ctx.err(span, "curing.lag_profile", e.to_string())
            })?)
        }
    };
    let limit = |w: &Option<S<f64>>,
                 h: &Option<S<f64>>,
                 wk: &str,
                 hk: &str|
     -> Result<Option<IrradianceLimit>, ReviewError> {
        match (w, h) {
            (None, None) => Ok(None),
            (Some(w), h) => Ok(Some(IrradianceLimit {
                irradiance: Irradiance::from_w_per_m2(ctx.positive(w, wk)?),
                hold_off_ticks: match h {
                    Some(h) => ctx.seconds_to_ticks_or_zero(h, hk, hz)?,
                    None => 0,
                },
            })),
            (None, Some(h)) => Err(ctx.err(h.span(), hk, format!("a hold-off needs {wk}"))),
        }
    };
    let window = IrradianceWindow {
        minimum: limit(
            &c.minimum_w_per_m2,
            &c.minimum_hold_off_s,
            "curing.minimum_w_per_m2",
            "curing.minimum_hold_off_s",
        )?,
        maximum: limit(
            &c.maximum_w_per_m2,
            &c.maximum_hold_off_s,
            "curing.maximum_w_per_m2",
            "curing.maximum_hold_off_s",
        )?,
        warm_up_ticks: match &c.warm_up_s {
            Some(v) => ctx.seconds_to_ticks_or_zero(v, "curing.warm_up_s", hz)?,
            None => 0,
        },
    };
    let lamp = match (&c.lamp_reference_w_per_m2, &c.lamp_maintenance_below) {
        (None, None) => None,
        (Some(r), Some(f)) => Some(LampReference {
            reference: Irradiance::from_w_per_m2(
                ctx.positive(r, "curing.lamp_reference_w_per_m2")?,
            ),
            maintenance_below: *f.get_ref(),
        }),
        (Some(r), None) => {
            return Err(ctx.err(
                r.span(),
                "curing.lamp_maintenance_below",
                "give lamp_maintenance_below (a fraction, e.g. 0.7) with the lamp reference",
            ))
        }
        (None, Some(f)) => {
            return Err(ctx.err(
                f.span(),
                "curing.lamp_reference_w_per_m2",
                "give lamp_reference_w_per_m2 with the maintenance fraction",
            ))
        }
    };
    let config = CuringConfig {
        target: target_h,
        tolerance: tolerance_h,
        lag,
        stop_policy,
        window,
        light_off: LightOffCheck {
            fraction: *c.light_off_fraction.get_ref(),
            floor: Irradiance::from_w_per_m2(*c.light_off_floor_w_per_m2.get_ref()),
            margin_ticks: ctx.seconds_to_ticks_or_zero(
                &c.light_off_margin_s,
                "curing.light_off_margin_s",
                hz,
            )?,
        },
        lamp,
        max_gap_ticks: session.max_gap_ticks,
        max_unusable_run: session.max_unusable_run,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
        interlock_closed_level: ActiveLevel::High,
    };
    // Let the library validate exactly as firmware would.
    if let Err(e) = super::curing::new_controller(meter.clone(), config.clone()) {
        let span_of = |v: &Option<S<f64>>| v.as_ref().map_or(t.span(), |x| x.span());
        let (span, key) = match e {
            E::Target => (c.target.span(), "curing.target"),
            E::Tolerance => (c.tolerance.span(), "curing.tolerance"),
            E::MaxGap => (c.max_gap_ticks.span(), "curing.max_gap_ticks"),
            E::LagTooLong => match (&c.lag_s, &c.lag_profile) {
                (Some(v), _) => (v.span(), "curing.lag_s"),
                (_, Some(p)) => (p.span(), "curing.lag_profile"),
                _ => (t.span(), "curing.lag_s"),
            },
            E::WindowIrradiance | E::WindowOrder => {
                (span_of(&c.minimum_w_per_m2), "curing.minimum_w_per_m2")
            }
            E::LowHoldOff => (span_of(&c.minimum_hold_off_s), "curing.minimum_hold_off_s"),
            E::HighHoldOff => (span_of(&c.maximum_hold_off_s), "curing.maximum_hold_off_s"),
            E::WarmUp => (span_of(&c.warm_up_s), "curing.warm_up_s"),
            E::LightOffFraction => (c.light_off_fraction.span(), "curing.light_off_fraction"),
            E::LightOffFloor => (
                c.light_off_floor_w_per_m2.span(),
                "curing.light_off_floor_w_per_m2",
            ),
            E::LightOffMargin => (c.light_off_margin_s.span(), "curing.light_off_margin_s"),
            E::LampReference => (
                span_of(&c.lamp_reference_w_per_m2),
                "curing.lamp_reference_w_per_m2",
            ),
            E::LampFraction => (
                span_of(&c.lamp_maintenance_below),
                "curing.lamp_maintenance_below",
            ),
            // A newer library's check (or a fall-profile error found above): the table.
            _ => (t.span(), "curing"),
        };
        return Err(ctx.err(span, key, e.to_string()));
    }
    Ok(CuringSetup {
        config,
        timer_stop: c.timer_stop.as_ref().is_none_or(|v| *v.get_ref()),
    })
}

/// `[session]` or `[curing]`: the keys both have.
struct SessionView<'a> {
    name: &'static str,
    span: std::ops::Range<usize>,
    target: &'a S<DoseToml>,
    tolerance: &'a S<DoseToml>,
    max_gap_ticks: &'a S<u32>,
    max_unusable_run: Option<&'a S<u16>>,
    sample_area_cm2: Option<&'a S<f64>>,
}

/// A dose key, its value if given, and how it becomes a library dose.
type DoseCandidate<'a> = (&'static str, &'a Option<S<f64>>, fn(f64) -> DoseAmount);

fn dose(ctx: &Ctx<'_>, d: &S<DoseToml>, key: &str) -> Result<GivenDose, ReviewError> {
    let t = d.get_ref();
    let candidates: [DoseCandidate<'_>; 6] = [
        (
            "radiant_exposure_j_per_m2",
            &t.radiant_exposure_j_per_m2,
            |v| DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(v)),
        ),
        (
            "radiant_exposure_mj_per_cm2",
            &t.radiant_exposure_mj_per_cm2,
            |v| DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(v)),
        ),
        (
            "photon_exposure_mol_per_m2",
            &t.photon_exposure_mol_per_m2,
            |v| DoseAmount::PhotonExposure(PhotonExposure::from_mol_per_m2(v)),
        ),
        (
            "photon_exposure_umol_per_m2",
            &t.photon_exposure_umol_per_m2,
            |v| DoseAmount::PhotonExposure(PhotonExposure::from_umol_per_m2(v)),
        ),
        ("photons_mol", &t.photons_mol, |v| {
            DoseAmount::Photons(PhotonAmount::from_mol(v))
        }),
        ("photons_umol", &t.photons_umol, |v| {
            DoseAmount::Photons(PhotonAmount::from_umol(v))
        }),
    ];
    let given: Vec<_> = candidates
        .iter()
        .filter_map(|(k, v, f)| v.as_ref().map(|v| (*k, v, f)))
        .collect();
    match given.as_slice() {
        [(k, v, f)] => {
            let x = *v.get_ref();
            if !x.is_finite() || x < 0.0 {
                return Err(ctx.err(
                    v.span(),
                    &format!("{key}.{k}"),
                    format!("must be finite and >= 0, is {x}"),
                ));
            }
            Ok(GivenDose {
                key: k,
                value: x,
                amount: f(x),
            })
        }
        _ => Err(ctx.err(
            d.span(),
            key,
            "give exactly one dose key (radiant_exposure_j_per_m2, radiant_exposure_mj_per_cm2, \
             photon_exposure_mol_per_m2, photon_exposure_umol_per_m2, photons_mol, photons_umol)",
        )),
    }
}

/// Lower-case hex of bytes.
pub fn hex(bytes: &[u8]) -> String {
    use std::fmt::Write;
    let mut s = String::with_capacity(bytes.len() * 2);
    for b in bytes {
        let _ = write!(s, "{b:02x}");
    }
    s
}
