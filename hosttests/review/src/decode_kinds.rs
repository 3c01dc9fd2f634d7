//! The record kinds of journal format 1.1 in the decoder's output: curing parts, pauses,
//! exposure-monitor and curing-controller states, unmonitored intervals. Each becomes a
//! nested object of its [`RecordReport`] (keys in `hosttests/review/CONFIG.md`, section 5)
//! and one line of the text summary.

use photon_ledger::control::curing::Label;
use photon_ledger::control::exposure::OffTime;
use photon_ledger::journal::export::{fault_name, pause_name, stop_name};
use photon_ledger::journal::record::{
    Body, CuringSnapshot, ExposureSnapshot, FaultCode, PartTrace, PauseRecord, Record,
    StoredExposure, UnmonitoredInterval,
};
use serde::Serialize;

use super::decode::RecordReport;

/// A curing part (kind 6).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartReport {
    /// The caller's part number.
    pub part_number: u32,
    /// Part, lot and recipe labels (bytes outside printable ASCII as `\xNN`).
    pub part: String,
    /// Lot label.
    pub lot: String,
    /// Recipe label.
    pub recipe: String,
    /// Tick of the start command.
    pub start_tick: u32,
    /// Tick of the last reading.
    pub end_tick: u32,
    /// Delivered, J/m² (rounded down to µJ/m² on the device).
    pub radiant_exposure_j_per_m2: f64,
    /// Target, J/m² (rounded up to µJ/m²).
    pub target_j_per_m2: f64,
    /// Of the delivered dose, after the stop command, J/m² (mJ/m² resolution, rounded up).
    pub after_stop_j_per_m2: f64,
    /// Of the delivered dose, while paused, J/m² (mJ/m² resolution, rounded up).
    pub paused_j_per_m2: f64,
    /// Why the light was commanded off (`target`, `fault:light_not_off` …).
    pub stop: String,
    /// The first fault, if any.
    pub first_fault: Option<String>,
    /// Every fault kind of the part.
    pub faults: Vec<String>,
    /// Events raised in the part.
    pub events: u16,
}

/// A completed pause (kind 7).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PauseReport {
    /// `pause:command` or `pause:interlock`.
    pub cause: String,
    /// Tick the pause began.
    pub started_tick: u32,
    /// Tick of the resume.
    pub resume_tick: u32,
    /// Dark time, ticks.
    pub dark_ticks: u32,
    /// Dose at the pause, J/m².
    pub dose_at_pause_j_per_m2: f64,
    /// Dose received while paused (leak), J/m² (rounded up).
    pub leak_j_per_m2: f64,
}

/// An exposure monitor's state (kind 8).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ExposureStateReport {
    /// The rolling window's dose by segment, newest first, J/m² effective (each rounded up).
    pub window_segments_j_per_m2: Vec<f64>,
    /// Their sum, J/m².
    pub window_j_per_m2: f64,
    /// Buckets per segment.
    pub segment_buckets: u32,
    /// Bucket length, ticks.
    pub bucket_ticks: u64,
    /// Shift exposure (gap charges included), J/m².
    pub shift_j_per_m2: f64,
    /// Of which charged for gaps, J/m².
    pub shift_gap_j_per_m2: f64,
    /// Gaps in the shift.
    pub gaps: u32,
    /// Active warning levels (bit i = level i).
    pub active_levels: u8,
    /// The alarm was latched (awaiting acknowledgement).
    pub alarm_latched: bool,
}

/// An unmonitored interval (kind 9).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UnmonitoredReport {
    /// Whether the off time is known.
    pub off_known: bool,
    /// Off time, ticks (known only).
    pub off_ticks: Option<u64>,
    /// Off time, s (known, with a tick rate).
    pub off_s: Option<f64>,
    /// Tick rate of the off time, Hz.
    pub tick_rate_hz: u32,
    /// Sequence number of the state record the monitor resumed from (`null`: none).
    pub restored_from_seq: Option<u32>,
}

/// A curing controller's state (kind 10).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CuringStateReport {
    /// Parts finished.
    pub parts_finished: u32,
    /// Parts measured for the lamp trend.
    pub lamp_parts: u32,
    /// Lamp ratios (mean irradiance ÷ reference), oldest first (rounded down to 10⁻⁶).
    pub lamp_ratios: Vec<f64>,
    /// The latched alarm's fault, if any.
    pub alarm_latched: Option<String>,
}

fn j(h: StoredExposure) -> f64 {
    h.uj_per_m2() as f64 / 1e6
}

fn uj(v: u64) -> f64 {
    v as f64 / 1e6
}

fn label(l: &Label) -> String {
    l.text_bytes()
        .iter()
        .map(|&b| {
            if Label::allowed(b) {
                char::from(b).to_string()
            } else {
                format!("\\x{b:02x}")
            }
        })
        .collect()
}

fn fault(f: FaultCode) -> String {
    match f {
        FaultCode::Other(c) => format!("{c:#04x}"),
        f => fault_name(f).to_string(),
    }
}

fn part(t: &PartTrace) -> PartReport {
    let mut stop = String::new();
    let _ = stop_name(&mut stop, t.stop, t.stop_fault);
    PartReport {
        part_number: t.part.0,
        part: label(&t.identity.part),
        lot: label(&t.identity.lot),
        recipe: label(&t.identity.recipe),
        start_tick: t.start.0,
        end_tick: t.end.0,
        radiant_exposure_j_per_m2: j(t.delivered),
        target_j_per_m2: j(t.target),
        after_stop_j_per_m2: f64::from(t.after_stop_mj_per_m2) / 1e3,
        paused_j_per_m2: f64::from(t.paused_mj_per_m2) / 1e3,
        stop,
        first_fault: t.first_fault.map(fault),
        faults: t.faults().map(fault).collect(),
        events: t.events,
    }
}

fn pause(p: &PauseRecord) -> PauseReport {
    let mut cause = String::new();
    let _ = pause_name(&mut cause, p.cause);
    PauseReport {
        cause,
        started_tick: p.started.0,
        resume_tick: p.started.0.wrapping_add(p.dark_ticks),
        dark_ticks: p.dark_ticks,
        dose_at_pause_j_per_m2: j(p.at_pause),
        leak_j_per_m2: j(p.leak),
    }
}

fn exposure(x: &ExposureSnapshot) -> ExposureStateReport {
    let s = &x.state;
    let total = s
        .window_uj_per_m2
        .iter()
        .fold(0u64, |a, &v| a.saturating_add(v));
    ExposureStateReport {
        window_segments_j_per_m2: s.window_uj_per_m2.iter().map(|&v| uj(v)).collect(),
        window_j_per_m2: uj(total),
        segment_buckets: s.segment_buckets,
        bucket_ticks: s.bucket_ticks,
        shift_j_per_m2: uj(s.shift_uj_per_m2),
        shift_gap_j_per_m2: uj(s.shift_gap_uj_per_m2),
        gaps: s.gaps,
        active_levels: s.active,
        alarm_latched: s.latched,
    }
}

fn unmonitored(u: &UnmonitoredInterval) -> UnmonitoredReport {
    let ticks = match u.off {
        OffTime::Ticks(t) => Some(t),
        OffTime::Unknown => None,
    };
    UnmonitoredReport {
        off_known: ticks.is_some(),
        off_ticks: ticks,
        off_s: ticks
            .filter(|_| u.tick_rate_hz > 0)
            .map(|t| t as f64 / f64::from(u.tick_rate_hz)),
        tick_rate_hz: u.tick_rate_hz,
        restored_from_seq: (u.restored_from != 0).then_some(u.restored_from),
    }
}

fn curing(c: &CuringSnapshot) -> CuringStateReport {
    CuringStateReport {
        parts_finished: c.parts_finished,
        lamp_parts: c.lamp_parts,
        lamp_ratios: c
            .lamp_ratios_ppm
            .iter()
            .take(usize::from(c.lamp_len))
            .map(|&p| f64::from(p) / 1e6)
            .collect(),
        alarm_latched: c.alarm.map(fault),
    }
}

/// The report of a record of a format 1.1 kind (`None` for the kinds of format 1.0). Sets
/// the common keys (`kind`, `tick`, dose, `code`) and the kind's nested object.
#[must_use]
pub fn report(r: &Record) -> Option<RecordReport> {
    let mut o = RecordReport::default();
    match &r.body {
        Body::Part(t) => {
            let p = part(t);
            o.kind = "part".into();
            o.tick = Some(t.end.0);
            o.radiant_exposure_j_per_m2 = Some(p.radiant_exposure_j_per_m2);
            o.target_j_per_m2 = Some(p.target_j_per_m2);
            o.code = Some(p.stop.clone());
            o.events = Some(t.events);
            o.part = Some(p);
        }
        Body::Pause(x) => {
            let p = pause(x);
            o.kind = "pause".into();
            o.tick = Some(x.started.0);
            o.radiant_exposure_j_per_m2 = Some(p.dose_at_pause_j_per_m2);
            o.code = Some(p.cause.clone());
            o.pause = Some(p);
        }
        Body::ExposureState(x) => {
            o.kind = "exposure_state".into();
            o.tick = Some(x.at.0);
            o.exposure_state = Some(exposure(x));
        }
        Body::Unmonitored(u) => {
            o.kind = "unmonitored".into();
            o.tick = Some(u.at.0);
            o.unmonitored = Some(unmonitored(u));
        }
        Body::CuringState(c) => {
            o.kind = "curing_state".into();
            o.tick = Some(c.at.0);
            o.curing_state = Some(curing(c));
        }
        Body::Start(_) | Body::Checkpoint(_) | Body::Event(_) | Body::End(_) | Body::Restate(_) => {
            return None
        }
    }
    Some(o)
}

/// One line of the text summary for a record of a format 1.1 kind.
#[must_use]
pub fn text_line(r: &RecordReport) -> Option<String> {
    let head = format!("{} seq {} tick {}", r.kind, r.seq, r.tick.unwrap_or(0));
    if let Some(p) = &r.part {
        return Some(format!(
            "{head}: part {} \"{}\" lot \"{}\" recipe \"{}\", {} of {} J/m², stop {}, faults {}",
            p.part_number,
            p.part,
            p.lot,
            p.recipe,
            p.radiant_exposure_j_per_m2,
            p.target_j_per_m2,
            p.stop,
            if p.faults.is_empty() {
                "none".to_string()
            } else {
                p.faults.join("|")
            }
        ));
    }
    if let Some(p) = &r.pause {
        return Some(format!(
            "{head}: {} for {} ticks, dose at pause {} J/m², leak {} J/m²",
            p.cause, p.dark_ticks, p.dose_at_pause_j_per_m2, p.leak_j_per_m2
        ));
    }
    if let Some(x) = &r.exposure_state {
        return Some(format!(
            "{head}: window {} J/m² eff, shift {} J/m² ({} gaps), levels {:#04x}, alarm {}",
            x.window_j_per_m2,
            x.shift_j_per_m2,
            x.gaps,
            x.active_levels,
            if x.alarm_latched { "latched" } else { "clear" }
        ));
    }
    if let Some(u) = &r.unmonitored {
        return Some(format!(
            "{head}: UNMONITORED {}, resumed from {}",
            match (u.off_ticks, u.off_s) {
                (Some(_), Some(s)) => format!("{s} s"),
                (Some(t), None) => format!("{t} ticks"),
                _ => "for an unknown time".to_string(),
            },
            u.restored_from_seq.map_or_else(
                || "no state (started empty)".to_string(),
                |s| format!("record {s}")
            )
        ));
    }
    if let Some(c) = &r.curing_state {
        return Some(format!(
            "{head}: {} parts, lamp ratios {:?}, alarm {}",
            c.parts_finished,
            c.lamp_ratios,
            c.alarm_latched.as_deref().unwrap_or("clear")
        ));
    }
    None
}
