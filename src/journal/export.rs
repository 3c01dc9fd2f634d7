//! Export: the retained records as CSV lines into any [`core::fmt::Write`].
//!
//! One header line ([`CSV_HEADER`], units in the column names), then one line per record,
//! oldest first. Numbers are printed from the stored integers with fixed-point integer
//! formatting (no floating point): J/m² with 6 decimals (exact µJ/m²), W/m² with 3 decimals
//! (exact mW/m²), nm with 3 decimals (exact pm). Cells that do not apply to a kind are empty.
//! A serial-port adapter implementing `fmt::Write` is the integrator's.
//!
//! | column | start | checkpoint | event | end |
//! | --- | --- | --- | --- | --- |
//! | `dose_J_per_m2` | | delivered | delivered | delivered |
//! | `bound_J_per_m2` | | bound | | |
//! | `irr_min/mean/max_W_per_m2` | max: the bound's E_max | since last checkpoint | | whole session |
//! | `code` | | | event name | outcome name |
//! | `detail` | | | detail | |
//! | `elapsed_ticks`, `events` | | | | summary |
//! | `target_J_per_m2` … `interval_ticks` | identity | | | |
//! | `data` | | | | |
//!
//! The kinds of format 1.1 use the same columns where they fit and a last column `data`
//! (empty for the kinds above): `key=value` pairs separated by `;`, lists separated by `|`.
//!
//! | kind | `tick` | `dose_J_per_m2` | `code` | `detail` | other columns | `data` |
//! | --- | --- | --- | --- | --- | --- | --- |
//! | `part` | end | delivered | stop: `target`, `target_timer`, `fault:…`, `paused`, `ended` | part number | `elapsed_ticks` (end − start), `events`, `target_J_per_m2` | `part`, `lot`, `recipe`, `start_tick`, `after_stop_J_per_m2`, `paused_J_per_m2` (mJ/m² resolution, rounded up), `first_fault`, `faults` |
//! | `pause` | pause began | dose at the pause | `pause:command`, `pause:interlock` | dark ticks | | `leak_J_per_m2` (rounded up), `resume_tick` |
//! | `exposure_state` | snapshot | window total (sum of the segments, rounded up) | `alarm_latched` or empty | gaps | | `window_J_per_m2` (8 segments, newest first), `segment_buckets`, `bucket_ticks`, `shift_J_per_m2`, `shift_gap_J_per_m2`, `active_levels` |
//! | `unmonitored` | boot | | `off_known`, `off_unknown` | sequence number of the state restored (0 none) | `tick_rate_Hz` | `off_ticks` (`unknown`) |
//! | `curing_state` | snapshot | | latched alarm `fault:…` or empty | | | `parts_finished`, `lamp_parts`, `lamp_ratios` (oldest first, 6 decimals) |
//!
//! A label's bytes outside the allowed set (written by other firmware) are printed as `\xNN`.

use core::fmt::Write;

use embedded_storage::nor_flash::NorFlash;

use super::{Journal, JournalError};
use crate::control::curing::Label;
use crate::control::exposure::OffTime;
use crate::journal::record::{
    Body, CuringSnapshot, EventCode, ExposureSnapshot, FaultCode, PartTrace, PauseCode,
    PauseRecord, Record, SessionOutcome, SessionStart, StopCode, StoredExposure, StoredIrradiance,
    UnmonitoredInterval, WarningCode,
};

/// The CSV header line (without the line end).
pub const CSV_HEADER: &str = "seq,kind,session,tick,dose_J_per_m2,bound_J_per_m2,\
irr_min_W_per_m2,irr_mean_W_per_m2,irr_max_W_per_m2,code,detail,elapsed_ticks,events,\
target_J_per_m2,tick_rate_Hz,wavelength_nm,config_digest,calibration_id,interval_ticks,data";

/// Why an export stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExportError<E> {
    /// Reading the journal failed.
    Journal(JournalError<E>),
    /// The writer failed.
    Write,
}

impl<E: core::fmt::Debug> core::fmt::Display for ExportError<E> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Journal(e) => write!(f, "export: {e}"),
            Self::Write => f.write_str("export: writer failed"),
        }
    }
}

impl<E: core::fmt::Debug> core::error::Error for ExportError<E> {}

impl<E> From<core::fmt::Error> for ExportError<E> {
    fn from(_: core::fmt::Error) -> Self {
        Self::Write
    }
}

/// Write the header and every retained record, oldest first; the journal's restatements of
/// an open session only if `restatements`. Returns the number of record lines written.
///
/// # Errors
/// [`ExportError`]; lines written before the error stay written.
pub fn export_csv<F: NorFlash, W: Write>(
    journal: &mut Journal<F>,
    out: &mut W,
    restatements: bool,
) -> Result<u32, ExportError<F::Error>> {
    out.write_str(CSV_HEADER)?;
    out.write_str("\n")?;
    let mut n = 0u32;
    for r in journal.records() {
        let r = r.map_err(ExportError::Journal)?;
        if matches!(r.body, Body::Restate(_)) && !restatements {
            continue;
        }
        write_csv_line(out, &r)?;
        n = n.saturating_add(1);
    }
    Ok(n)
}

/// Write one record as a CSV line (with the line end).
///
/// # Errors
/// The writer's error.
pub fn write_csv_line<W: Write>(out: &mut W, r: &Record) -> core::fmt::Result {
    let kind = match r.body {
        Body::Start(_) => "start",
        Body::Checkpoint(_) => "checkpoint",
        Body::Event(_) => "event",
        Body::End(_) => "end",
        Body::Restate(_) => "restate",
        Body::Part(_) => "part",
        Body::Pause(_) => "pause",
        Body::ExposureState(_) => "exposure_state",
        Body::Unmonitored(_) => "unmonitored",
        Body::CuringState(_) => "curing_state",
    };
    write!(out, "{},{},{},", r.seq, kind, r.body.session().0)?;
    match r.body {
        Body::Restate(o) => {
            // The start's identity columns, and the latest checkpoint's dose and bound.
            let s = o.start;
            write!(out, "{},", s.start.0)?;
            if let Some(c) = o.checkpoint {
                exposure(out, c.delivered)?;
                out.write_char(',')?;
                exposure(out, c.bound)?;
            } else {
                out.write_char(',')?;
            }
            out.write_str(",,,")?;
            start_columns(out, &s)?;
        }
        Body::Start(s) => {
            write!(out, "{},,,,,", s.start.0)?;
            start_columns(out, &s)?;
        }
        Body::Checkpoint(c) => {
            write!(out, "{},", c.at.0)?;
            exposure(out, c.delivered)?;
            out.write_char(',')?;
            exposure(out, c.bound)?;
            out.write_char(',')?;
            irradiance(out, c.min)?;
            out.write_char(',')?;
            irradiance(out, c.mean)?;
            out.write_char(',')?;
            irradiance(out, c.max)?;
            out.write_str(",,,,,,,,,,")?;
        }
        Body::Event(e) => {
            write!(out, "{},", e.at.0)?;
            exposure(out, e.delivered)?;
            out.write_str(",,,,,")?;
            event_name(out, e.code)?;
            write!(out, ",{},,,,,,,,", e.detail)?;
        }
        Body::End(e) => {
            write!(out, "{},", e.at.0)?;
            exposure(out, e.delivered)?;
            out.write_str(",,")?;
            irradiance(out, e.min)?;
            out.write_char(',')?;
            irradiance(out, e.mean)?;
            out.write_char(',')?;
            irradiance(out, e.max)?;
            out.write_char(',')?;
            outcome_name(out, e.outcome)?;
            write!(out, ",,{},{},,,,,,", e.elapsed_ticks, e.events)?;
        }
        Body::Part(t) => return part_line(out, &t),
        Body::Pause(p) => return pause_line(out, &p),
        Body::ExposureState(x) => return exposure_line(out, &x),
        Body::Unmonitored(u) => return unmonitored_line(out, &u),
        Body::CuringState(c) => return curing_line(out, &c),
    }
    // The `data` column is empty for the kinds of format 1.0.
    out.write_str(",\n")
}

fn part_line<W: Write>(out: &mut W, t: &PartTrace) -> core::fmt::Result {
    write!(out, "{},", t.end.0)?;
    exposure(out, t.delivered)?;
    out.write_str(",,,,,")?;
    stop_name(out, t.stop, t.stop_fault)?;
    write!(
        out,
        ",{},{},{},",
        t.part.0,
        t.end.wrapping_since(t.start),
        t.events
    )?;
    exposure(out, t.target)?;
    out.write_str(",,,,,,part=")?;
    label(out, &t.identity.part)?;
    out.write_str(";lot=")?;
    label(out, &t.identity.lot)?;
    out.write_str(";recipe=")?;
    label(out, &t.identity.recipe)?;
    write!(out, ";start_tick={};after_stop_J_per_m2=", t.start.0)?;
    millis(out, t.after_stop_mj_per_m2)?;
    out.write_str(";paused_J_per_m2=")?;
    millis(out, t.paused_mj_per_m2)?;
    out.write_str(";first_fault=")?;
    if let Some(f) = t.first_fault {
        fault_code_name(out, f)?;
    }
    out.write_str(";faults=")?;
    for (i, f) in t.faults().enumerate() {
        if i > 0 {
            out.write_char('|')?;
        }
        fault_code_name(out, f)?;
    }
    out.write_str("\n")
}

fn pause_line<W: Write>(out: &mut W, p: &PauseRecord) -> core::fmt::Result {
    write!(out, "{},", p.started.0)?;
    exposure(out, p.at_pause)?;
    out.write_str(",,,,,")?;
    pause_name(out, p.cause)?;
    write!(out, ",{},,,,,,,,,leak_J_per_m2=", p.dark_ticks)?;
    exposure(out, p.leak)?;
    writeln!(
        out,
        ";resume_tick={}",
        p.started.wrapping_add(p.dark_ticks).0
    )
}

fn exposure_line<W: Write>(out: &mut W, x: &ExposureSnapshot) -> core::fmt::Result {
    let s = &x.state;
    let total = s
        .window_uj_per_m2
        .iter()
        .fold(0u64, |a, &v| a.saturating_add(v));
    write!(out, "{},", x.at.0)?;
    exposure(out, StoredExposure::from_uj_per_m2(total))?;
    out.write_str(",,,,,")?;
    if s.latched {
        out.write_str("alarm_latched")?;
    }
    write!(out, ",{},,,,,,,,,window_J_per_m2=", s.gaps)?;
    for (i, &v) in s.window_uj_per_m2.iter().enumerate() {
        if i > 0 {
            out.write_char('|')?;
        }
        exposure(out, StoredExposure::from_uj_per_m2(v))?;
    }
    write!(
        out,
        ";segment_buckets={};bucket_ticks={};shift_J_per_m2=",
        s.segment_buckets, s.bucket_ticks
    )?;
    exposure(out, StoredExposure::from_uj_per_m2(s.shift_uj_per_m2))?;
    out.write_str(";shift_gap_J_per_m2=")?;
    exposure(out, StoredExposure::from_uj_per_m2(s.shift_gap_uj_per_m2))?;
    writeln!(out, ";active_levels={:#04x}", s.active)
}

fn unmonitored_line<W: Write>(out: &mut W, u: &UnmonitoredInterval) -> core::fmt::Result {
    let known = match u.off {
        OffTime::Ticks(_) => "off_known",
        OffTime::Unknown => "off_unknown",
    };
    write!(
        out,
        "{},,,,,,{known},{},,,,{},,,,,off_ticks=",
        u.at.0, u.restored_from, u.tick_rate_hz
    )?;
    match u.off {
        OffTime::Ticks(t) => writeln!(out, "{t}"),
        OffTime::Unknown => out.write_str("unknown\n"),
    }
}

fn curing_line<W: Write>(out: &mut W, c: &CuringSnapshot) -> core::fmt::Result {
    write!(out, "{},,,,,,", c.at.0)?;
    if let Some(f) = c.alarm {
        out.write_str("fault:")?;
        fault_code_name(out, f)?;
    }
    write!(
        out,
        ",,,,,,,,,,parts_finished={};lamp_parts={};lamp_ratios=",
        c.parts_finished, c.lamp_parts
    )?;
    let len = usize::from(c.lamp_len);
    for (i, &ppm) in c.lamp_ratios_ppm.iter().take(len).enumerate() {
        if i > 0 {
            out.write_char('|')?;
        }
        let sign = if ppm < 0 { "-" } else { "" };
        let a = ppm.unsigned_abs();
        write!(out, "{sign}{}.{:06}", a / 1_000_000, a % 1_000_000)?;
    }
    out.write_str("\n")
}

/// A label's text; bytes outside the allowed set as `\xNN`.
fn label<W: Write>(out: &mut W, l: &Label) -> core::fmt::Result {
    for &b in l.text_bytes() {
        if Label::allowed(b) {
            out.write_char(char::from(b))?;
        } else {
            write!(out, "\\x{b:02x}")?;
        }
    }
    Ok(())
}

/// mJ/m² as J/m² with 3 decimals.
fn millis<W: Write>(out: &mut W, mj: u32) -> core::fmt::Result {
    write!(out, "{}.{:03}", mj / 1000, mj % 1000)
}

/// A fault reason's name, or `0x` and two hex digits for one this version does not name.
fn fault_code_name<W: Write>(out: &mut W, f: FaultCode) -> core::fmt::Result {
    match f {
        FaultCode::Other(c) => write!(out, "{c:#04x}"),
        f => out.write_str(fault_name(f)),
    }
}

/// Write the name a curing stop has in the CSV `code` column of a part record (`target`,
/// `target_timer`, `fault:light_not_off`, `paused`, `ended`; a code this version does not
/// name as `0x` and two hex digits).
///
/// # Errors
/// The writer's error.
pub fn stop_name<W: Write>(
    out: &mut W,
    s: StopCode,
    fault: Option<FaultCode>,
) -> core::fmt::Result {
    match s {
        StopCode::Target => out.write_str("target"),
        StopCode::TargetTimer => out.write_str("target_timer"),
        StopCode::Fault => {
            out.write_str("fault:")?;
            match fault {
                Some(f) => fault_code_name(out, f),
                None => out.write_str("unknown"),
            }
        }
        StopCode::Paused => out.write_str("paused"),
        StopCode::Ended => out.write_str("ended"),
        StopCode::Other(c) => write!(out, "{c:#04x}"),
    }
}

/// Write the name a pause cause has in the CSV `code` column of a pause record
/// (`pause:command`, `pause:interlock`; `pause:0xNN` for a cause this version does not name).
///
/// # Errors
/// The writer's error.
pub fn pause_name<W: Write>(out: &mut W, c: PauseCode) -> core::fmt::Result {
    match c {
        PauseCode::Command => out.write_str("pause:command"),
        PauseCode::Interlock => out.write_str("pause:interlock"),
        PauseCode::Other(x) => write!(out, "pause:{x:#04x}"),
    }
}

fn exposure<W: Write>(out: &mut W, h: StoredExposure) -> core::fmt::Result {
    let uj = h.uj_per_m2();
    write!(out, "{}.{:06}", uj / 1_000_000, uj % 1_000_000)
}

fn irradiance<W: Write>(out: &mut W, e: StoredIrradiance) -> core::fmt::Result {
    let mw = i64::from(e.mw_per_m2());
    let sign = if mw < 0 { "-" } else { "" };
    let a = mw.unsigned_abs();
    write!(out, "{sign}{}.{:03}", a / 1000, a % 1000)
}

/// The columns a start record and a restatement share: peak irradiance bound, target, tick
/// rate, equivalent wavelength, configuration digest, calibration identity, interval.
fn start_columns<W: Write>(out: &mut W, s: &SessionStart) -> core::fmt::Result {
    irradiance(out, s.max_irradiance)?;
    write!(out, ",,,,,")?;
    exposure(out, s.target)?;
    write!(
        out,
        ",{},{}.{:03},{:#010x},{},{}",
        s.tick_rate_hz,
        s.wavelength.pm() / 1000,
        s.wavelength.pm() % 1000,
        s.config_digest.0,
        s.calibration.0,
        s.interval_ticks
    )
}

/// The name of a fault reason in the CSV (`gap`, `bad_code` ...; `other` for a reason this
/// version does not name).
#[must_use]
pub fn fault_name(f: FaultCode) -> &'static str {
    match f {
        FaultCode::Saturated => "saturated",
        FaultCode::BadCode => "bad_code",
        FaultCode::TimeBackwards => "time_backwards",
        FaultCode::Gap => "gap",
        FaultCode::Output => "output",
        FaultCode::Sensor => "sensor",
        FaultCode::Aborted => "aborted",
        FaultCode::Storage => "storage",
        FaultCode::Implausible => "implausible",
        FaultCode::InterlockPin => "interlock-pin",
        FaultCode::LightNotOff => "light_not_off",
        FaultCode::IrradianceLow => "irradiance_low",
        FaultCode::IrradianceHigh => "irradiance_high",
        FaultCode::Overexposure => "overexposure",
        FaultCode::Other(_) => "other",
    }
}

/// Write the name an event code has in the CSV `code` column (`target_reached`,
/// `fault:gap`, `warning:lamp_ageing` ...; a code this version does not name as `0x` and four
/// hex digits).
///
/// # Errors
/// The writer's error.
pub fn event_name<W: Write>(out: &mut W, c: EventCode) -> core::fmt::Result {
    match c {
        EventCode::TargetReached => out.write_str("target_reached"),
        EventCode::Overexposed => out.write_str("overexposed"),
        EventCode::Resumed => out.write_str("resumed"),
        EventCode::InterlockOpened => out.write_str("interlock_opened"),
        EventCode::InterlockClosed => out.write_str("interlock_closed"),
        EventCode::PausedByCommand => out.write_str("paused:command"),
        EventCode::PausedByInterlock => out.write_str("paused:interlock"),
        EventCode::Milestone => out.write_str("milestone"),
        EventCode::Fault(FaultCode::Other(_))
        | EventCode::Warning(WarningCode::Other(_))
        | EventCode::Other(_) => write!(out, "{:#06x}", c.code()),
        EventCode::Fault(f) => write!(out, "fault:{}", fault_name(f)),
        EventCode::Warning(w) => out.write_str(match w {
            WarningCode::IrradianceLow => "warning:irradiance_low",
            WarningCode::IrradianceHigh => "warning:irradiance_high",
            WarningCode::LampAgeing => "warning:lamp_ageing",
            WarningCode::CalibrationDue => "warning:calibration_due",
            WarningCode::DoseNearLimit => "warning:dose_near_limit",
            WarningCode::Other(_) => "warning:other",
        }),
    }
}

/// Write the name a session outcome has in the CSV `code` column of an end record
/// (`target_met`, `fault:gap` ...; an outcome this version does not name as `0x` and four hex
/// digits).
///
/// # Errors
/// The writer's error.
pub fn outcome_name<W: Write>(out: &mut W, o: SessionOutcome) -> core::fmt::Result {
    match o {
        SessionOutcome::TargetMet => out.write_str("target_met"),
        SessionOutcome::Overexposed => out.write_str("overexposed"),
        SessionOutcome::Aborted => out.write_str("aborted"),
        SessionOutcome::Abandoned => out.write_str("abandoned"),
        SessionOutcome::Faulted(FaultCode::Other(_)) | SessionOutcome::Other(_) => {
            write!(out, "{:#06x}", o.code())
        }
        SessionOutcome::Faulted(f) => write!(out, "fault:{}", fault_name(f)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::acquire::reading::Ticks;
    use crate::journal::record::{Checkpoint, SessionId};

    struct S(heapless::String<512>);
    impl Write for S {
        fn write_str(&mut self, s: &str) -> core::fmt::Result {
            self.0.push_str(s).map_err(|_| core::fmt::Error)
        }
    }

    #[test]
    fn columns_line_up_and_fixed_point_is_exact() {
        let header_cols = CSV_HEADER.split(',').count();
        let cp = Record {
            seq: 9,
            body: Body::Checkpoint(Checkpoint {
                session: SessionId(3),
                at: Ticks(1500),
                delivered: StoredExposure::from_uj_per_m2(12_000_005),
                bound: StoredExposure::from_uj_per_m2(512_000_006),
                min: StoredIrradiance::from_mw_per_m2(-7),
                mean: StoredIrradiance::from_mw_per_m2(499_999),
                max: StoredIrradiance::from_mw_per_m2(i32::MIN),
            }),
        };
        let mut s = S(heapless::String::new());
        write_csv_line(&mut s, &cp).unwrap();
        let line = s.0.trim_end();
        assert_eq!(line.split(',').count(), header_cols);
        assert_eq!(
            line,
            "9,checkpoint,3,1500,12.000005,512.000006,-0.007,499.999,-2147483.648,,,,,,,,,,,"
        );
    }
}
