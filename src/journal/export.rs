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

use core::fmt::Write;

use embedded_storage::nor_flash::NorFlash;

use super::{Journal, JournalError};
use crate::journal::record::{
    Body, EventCode, FaultCode, Record, SessionOutcome, SessionStart, StoredExposure,
    StoredIrradiance, WarningCode,
};

/// The CSV header line (without the line end).
pub const CSV_HEADER: &str = "seq,kind,session,tick,dose_J_per_m2,bound_J_per_m2,\
irr_min_W_per_m2,irr_mean_W_per_m2,irr_max_W_per_m2,code,detail,elapsed_ticks,events,\
target_J_per_m2,tick_rate_Hz,wavelength_nm,config_digest,calibration_id,interval_ticks";

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
    }
    out.write_str("\n")
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
            "9,checkpoint,3,1500,12.000005,512.000006,-0.007,499.999,-2147483.648,,,,,,,,,,"
        );
    }
}
