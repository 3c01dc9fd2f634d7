//! `explain`: the factors a configuration reduces to, so a user can check them by hand.
//!
//! Every number comes from the library's own configuration objects (`FrontEnd`, `Meter`,
//! `BandFactors`, `to_exposure`), i.e. the constants firmware multiplies by. With
//! `--profile`, the same numbers become a meter profile ([`profile`], [`profile_const`]):
//! bytes in a new file and a Rust `const` on standard output, for a firmware that builds its
//! meter without computing in `f64`.

use photon_ledger::control::session::to_exposure;
use photon_ledger::dose::Rounding;
use photon_ledger::prelude::*;
use photon_ledger::profile::{MeterProfile, PROFILE_LEN, PROFILE_VERSION};
use photon_ledger::quantity::{si, Seconds};
use photon_ledger::spectral::weighting::UV_INDEX_PER_W_PER_M2;
use serde::Serialize;

use super::config::ReviewConfig;
use super::error::ReviewError;
use super::report::sig;

/// One derived value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Factor {
    /// Group (`adc`, `range 0`, `band`, `target` ...).
    pub section: String,
    /// What it is.
    pub name: String,
    /// The value.
    pub value: f64,
    /// Its unit.
    pub unit: String,
}

fn f(section: &str, name: &str, value: f64, unit: &str) -> Factor {
    Factor {
        section: section.to_string(),
        name: name.to_string(),
        value,
        unit: unit.to_string(),
    }
}

/// Every derived factor of `cfg`, in reading order.
pub fn factors(cfg: &ReviewConfig) -> Vec<Factor> {
    let m = &cfg.meter;
    let fe = m.front_end();
    let hz = m.tick_rate().hz();
    let mut v = vec![
        f("adc", "volts per code", fe.volts_per_code(), "V"),
        f("adc", "lowest code", f64::from(cfg.code_limits.0), "code"),
        f("adc", "highest code", f64::from(cfg.code_limits.1), "code"),
        f(
            "adc",
            "highest unsaturated code",
            f64::from(fe.high_limit() - 1),
            "code",
        ),
        f(
            "calibration",
            "irradiance per photocurrent",
            m.calibration().w_per_m2_per_a(),
            "W/m² per A",
        ),
    ];
    let target = to_exposure(m, cfg.session.target).map_or(f64::NAN, |t| t.j_per_m2());
    let tolerance = to_exposure(m, cfg.session.tolerance).map_or(f64::NAN, |t| t.j_per_m2());
    for r in 0..fe.range_count() {
        let ri = RangeIndex(r as u8);
        let s = format!("range {r}");
        let Some(range) = fe.range(ri) else { continue };
        let a = fe.amps_per_code(ri).unwrap_or(f64::NAN);
        let w = m.irradiance(1, ri).w_per_m2();
        let unit = m.j_per_m2_per_unit(ri);
        let top = f64::from(fe.high_limit() - 1 - range.dark_offset);
        v.push(f(&s, "transimpedance", range.gain.v_per_a(), "V/A"));
        v.push(f(&s, "dark offset", f64::from(range.dark_offset), "code"));
        v.push(f(&s, "photocurrent per net code", a, "A"));
        v.push(f(&s, "irradiance per net code", w, "W/m²"));
        v.push(f(
            &s,
            "radiant exposure per integer unit (code·tick, doubled)",
            unit,
            "J/m²",
        ));
        v.push(f(&s, "highest measurable irradiance", top * w, "W/m²"));
        v.push(f(
            &s,
            "target in integer units",
            target / unit,
            "code·tick×2",
        ));
        v.push(f(
            &s,
            "target as the integrator holds it (rounded up, +1)",
            ((target / unit).ceil() + 1.0).min(i64::MAX as f64),
            "code·tick×2",
        ));
        v.push(f(
            &s,
            "overexposure level as the integrator holds it (rounded down, −1)",
            (((target + tolerance) / unit).floor() - 1.0).min(i64::MAX as f64),
            "code·tick×2",
        ));
        if top * w > 0.0 {
            v.push(f(
                &s,
                "time to target at the highest measurable irradiance",
                target / (top * w),
                "s",
            ));
        }
    }
    let b = m.band();
    v.push(f("band", "photons per joule", b.photons_per_j(), "1/J"));
    v.push(f(
        "band",
        "photons per radiant energy",
        b.mol_per_j() * 1e6,
        "µmol/J",
    ));
    v.push(f(
        "band",
        "mean photon energy",
        b.mean_photon_energy().ev(),
        "eV",
    ));
    v.push(f(
        "band",
        "equivalent wavelength",
        b.equivalent_wavelength().nm(),
        "nm",
    ));
    v.push(f(
        "band",
        "photon irradiance per irradiance",
        b.mol_per_j() * 1e6,
        "µmol m⁻² s⁻¹ per W/m²",
    ));
    v.push(f("clock", "tick rate", f64::from(hz), "Hz"));
    v.push(f("clock", "tick length", 1.0 / f64::from(hz), "s"));
    v.push(f(
        "clock",
        "longest allowed interval",
        f64::from(cfg.session.max_gap_ticks) / f64::from(hz),
        "s",
    ));
    v.push(f(
        "target",
        &format!("as given ({})", cfg.target.key),
        cfg.target.value,
        unit_of(cfg.target.key),
    ));
    v.push(f("target", "radiant exposure", target, "J/m²"));
    v.push(f("target", "radiant exposure", target * 0.1, "mJ/cm²"));
    v.push(f(
        "target",
        "photon exposure",
        target * b.mol_per_j() * 1e6,
        "µmol/m²",
    ));
    if let Some(a) = m.sample_area() {
        v.push(f("target", "illuminated area", a.m2() * 1e4, "cm²"));
        v.push(f(
            "target",
            "photons to the area",
            target * b.mol_per_j() * a.m2() * 1e6,
            "µmol",
        ));
        v.push(f(
            "target",
            "photons to the area",
            target * b.mol_per_j() * a.m2() * si::AVOGADRO_PER_MOL,
            "photons",
        ));
    }
    v.push(f(
        "target",
        &format!("tolerance as given ({})", cfg.tolerance.key),
        cfg.tolerance.value,
        unit_of(cfg.tolerance.key),
    ));
    v.push(f("target", "tolerance", tolerance, "J/m²"));
    v.push(f(
        "target",
        "overexposure level (target + tolerance)",
        target + tolerance,
        "J/m²",
    ));
    if let Some(x) = &cfg.exposure {
        let w = x.weight.ratio();
        let l = x.limit.j_per_m2();
        v.push(f("exposure", "weight factor (effective ÷ radiant)", w, "1"));
        v.push(f("exposure", "limit (effective)", l, "J/m²"));
        v.push(f(
            "exposure",
            "limit as unweighted radiant exposure",
            l / w,
            "J/m²",
        ));
        v.push(f(
            "exposure",
            "window",
            f64::from(x.window_ticks) / f64::from(hz),
            "s",
        ));
        v.push(f(
            "exposure",
            "buckets in the window",
            f64::from(x.window_ticks / x.bucket_ticks.max(1)),
            "1",
        ));
        for (i, lv) in x.levels.iter().enumerate() {
            v.push(f(
                "exposure",
                &format!(
                    "level {} raises at (rounded down to the common integer unit, < 1e-12 relative)",
                    i + 1,
                ),
                lv * l,
                "J/m²",
            ));
        }
        let top_effective =
            w * m.irradiance(1, RangeIndex(0)).w_per_m2() * f64::from(fe.high_limit() - 1);
        if let Some(t) =
            (top_effective > 0.0).then(|| Seconds::from_s(x.limit.j_per_m2() / top_effective))
        {
            v.push(f(
                "exposure",
                "time to the limit at the highest measurable irradiance of range 0",
                t.s(),
                "s",
            ));
        }
    }
    if let Some(s) = &cfg.solar {
        let e = s.erythema.ratio();
        v.push(f(
            "solar",
            "erythema weight factor (erythemal ÷ radiant)",
            e,
            "1",
        ));
        v.push(f(
            "solar",
            "UV index per irradiance",
            UV_INDEX_PER_W_PER_M2 * e,
            "per W/m²",
        ));
        v.push(f("solar", "radiant exposure per SED", 100.0 / e, "J/m²"));
        v.push(f(
            "solar",
            "UV index averaging period",
            f64::from(s.averaging_ticks) / f64::from(hz),
            "s",
        ));
    }
    v
}

fn unit_of(key: &str) -> &'static str {
    match key {
        "radiant_exposure_j_per_m2" => "J/m²",
        "radiant_exposure_mj_per_cm2" => "mJ/cm²",
        "photon_exposure_mol_per_m2" => "mol/m²",
        "photon_exposure_umol_per_m2" => "µmol/m²",
        "photons_mol" => "mol",
        _ => "µmol",
    }
}

/// The factors as text.
pub fn to_text(cfg: &ReviewConfig) -> String {
    use std::fmt::Write;
    let mut s = format!("photon-review explain: {}\n", cfg.file);
    let mut section = String::new();
    for x in factors(cfg) {
        if x.section != section {
            section.clone_from(&x.section);
            let _ = writeln!(s, "\n[{section}]");
        }
        let _ = writeln!(s, "  {:<62} {:>16} {}", x.name, sig(x.value), x.unit);
    }
    s
}

/// The meter profile of `cfg` (`explain --profile`): the meter and the session's two
/// thresholds — the target (rounded so the stop is never early) and the target plus its
/// tolerance (rounded so the alarm is never late) — converted for every range, as
/// `Session::new` converts them on the device.
///
/// # Errors
/// A target or tolerance that does not convert, or a profile field out of its range.
pub fn profile(cfg: &ReviewConfig) -> Result<MeterProfile, ReviewError> {
    let m = &cfg.meter;
    let bad = |what: &str, e: String| {
        ReviewError::Other(format!("{}: {what}: {e}; no profile written", cfg.file))
    };
    let target = to_exposure(m, cfg.session.target).map_err(|e| bad("target", e.to_string()))?;
    let tolerance =
        to_exposure(m, cfg.session.tolerance).map_err(|e| bad("tolerance", e.to_string()))?;
    MeterProfile::new(
        m,
        &[
            (target, Rounding::NotBefore),
            (target + tolerance, Rounding::NotAfter),
        ],
    )
    .map_err(|e| bad("profile", e.to_string()))
}

fn bits_line(s: &mut String, indent: &str, name: &str, bits: u64, unit: &str) {
    use std::fmt::Write;
    let _ = writeln!(
        s,
        "{indent}{name}: 0x{bits:016X}, // {} {unit}",
        f64::from_bits(bits)
    );
}

/// The profile as Rust source: a `const` a firmware builds its meter from with
/// `Meter::from_profile(&PROFILE)`. `bytes_file` names the file holding the same profile's
/// bytes (for the comment).
pub fn profile_const(cfg: &ReviewConfig, p: &MeterProfile, bytes_file: &str) -> String {
    use std::fmt::Write;
    let bytes = p.to_bytes();
    let crc = bytes
        .get(PROFILE_LEN - 4..)
        .and_then(|c| <[u8; 4]>::try_from(c).ok())
        .map_or(0, u32::from_le_bytes);
    let mut s = String::new();
    let _ = writeln!(
        s,
        "// Meter profile made by photon-review explain --profile (photon-ledger {}) from\n\
         // {} (SHA-256 {}).\n\
         // The same profile as bytes: {bytes_file} ({PROFILE_LEN} bytes, format version \
         {PROFILE_VERSION}, CRC-32 0x{crc:08X}).\n\
         // Thresholds: 0 = the session target, 1 = target + tolerance.",
        photon_ledger::VERSION,
        cfg.file,
        cfg.sha256
    );
    let _ = writeln!(s, "pub const PROFILE: MeterProfile = MeterProfile {{");
    let _ = writeln!(s, "    codes: ({}, {}),", p.codes.0, p.codes.1);
    let low = if p.saturation_limits.0 == i32::MIN {
        "i32::MIN".to_string()
    } else {
        p.saturation_limits.0.to_string()
    };
    let _ = writeln!(
        s,
        "    saturation_limits: ({low}, {}),",
        p.saturation_limits.1
    );
    bits_line(
        &mut s,
        "    ",
        "volts_per_code_bits",
        p.volts_per_code_bits,
        "V",
    );
    bits_line(
        &mut s,
        "    ",
        "calibration_bits",
        p.calibration_bits,
        "W/m² per A",
    );
    bits_line(
        &mut s,
        "    ",
        "photons_per_j_bits",
        p.photons_per_j_bits,
        "1/J",
    );
    if p.sample_area_m2_bits == 0 {
        let _ = writeln!(s, "    sample_area_m2_bits: 0, // none");
    } else {
        bits_line(
            &mut s,
            "    ",
            "sample_area_m2_bits",
            p.sample_area_m2_bits,
            "m²",
        );
    }
    let _ = writeln!(s, "    tick_hz: {},", p.tick_hz);
    let _ = writeln!(s, "    range_count: {},", p.range_count);
    let _ = writeln!(s, "    ranges: [");
    for (i, r) in p.ranges.iter().enumerate() {
        if i >= usize::from(p.range_count) {
            let _ = writeln!(
                s,
                "        ProfileRange {{ transimpedance_bits: 0, dark_offset: 0, \
                 w_per_m2_per_code_bits: 0, unit_mantissa: 0, unit_exponent: 0 }}, // unused"
            );
            continue;
        }
        let _ = writeln!(s, "        ProfileRange {{");
        bits_line(
            &mut s,
            "            ",
            "transimpedance_bits",
            r.transimpedance_bits,
            "V/A",
        );
        let _ = writeln!(s, "            dark_offset: {},", r.dark_offset);
        bits_line(
            &mut s,
            "            ",
            "w_per_m2_per_code_bits",
            r.w_per_m2_per_code_bits,
            "W/m² per code",
        );
        let scale = if r.unit_mantissa == 0 {
            String::new()
        } else {
            format!(
                " // J/m² per unit = {} · 2^{}",
                r.unit_mantissa, r.unit_exponent
            )
        };
        let _ = writeln!(s, "            unit_mantissa: {},{scale}", r.unit_mantissa);
        let _ = writeln!(s, "            unit_exponent: {},", r.unit_exponent);
        let _ = writeln!(s, "        }},");
    }
    let _ = writeln!(s, "    ],");
    let _ = writeln!(s, "    threshold_count: {},", p.threshold_count);
    let _ = writeln!(s, "    thresholds: [");
    for (i, t) in p.thresholds.iter().enumerate() {
        if i >= usize::from(p.threshold_count) {
            let _ = writeln!(
                s,
                "        ProfileThreshold {{ level_j_per_m2_bits: 0, rounding: \
                 Rounding::NotBefore, limits: [0; {}] }}, // unused",
                t.limits.len()
            );
            continue;
        }
        let _ = writeln!(s, "        ProfileThreshold {{");
        bits_line(
            &mut s,
            "            ",
            "level_j_per_m2_bits",
            t.level_j_per_m2_bits,
            "J/m²",
        );
        let _ = writeln!(s, "            rounding: Rounding::{:?},", t.rounding);
        let limits: Vec<String> = t.limits.iter().map(i64::to_string).collect();
        let _ = writeln!(s, "            limits: [{}],", limits.join(", "));
        let _ = writeln!(s, "        }},");
    }
    let _ = writeln!(s, "    ],");
    let _ = writeln!(s, "}};");
    s
}
