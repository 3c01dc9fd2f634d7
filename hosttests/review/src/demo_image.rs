//! A demonstration flash image of the session journal, written as a device would write it:
//! the library's `Session`, `Autorange`, `Checkpointer` and `Journal` on the simulated NOR
//! flash ([`hosttests::flash::SimFlash`]), fed by the simulation models of the
//! `led-photoreactor` scenario. All values are invented for demonstration.
//!
//! The device powers on at tick 0 (1 kHz ticks) and runs three sessions:
//!
//! 1. from 5 s: runs to its target (5 µmol photons on 4 cm²); the LED droops as it warms and
//!    a `warning:lamp_ageing` event is logged when it falls below 93 % of its first interval;
//!    `target_reached`, end `target_met`;
//! 2. 60 s later: the sensor stalls for 0.8 s after 20 s (longer than the 0.5 s the
//!    configuration allows): `fault:gap`, end `fault:gap`;
//! 3. 60 s later: 30 s in, the power fails while a checkpoint is being written. The image
//!    is the flash as it was left: the session is open, the head ends in a torn record.
//!
//! `photon-review simulate --journal-image FILE` writes it; the shipped
//! `hosttests/review/examples/journal.bin` is `--seed 405` (the default). Its geometry is
//! [`Geometry::EXAMPLE`](super::decode::Geometry::EXAMPLE).

use photon_ledger::journal::checkpoint::{full_scale_irradiance, CheckpointConfig, Checkpointer};
use photon_ledger::journal::record::{
    Body, CalibrationId, EventCode, FaultCode, Record, SessionId, SessionOutcome, SessionStart,
    WarningCode,
};
use photon_ledger::journal::{Journal, JournalConfig, JournalError, Retention};
use photon_ledger::prelude::*;

use super::config::ReviewConfig;
use super::decode::Geometry;
use super::error::ReviewError;
use super::monitor::Unwired;
use super::simulate::{photoreactor_sensor, scenario, scenario_config};
use hosttests::flash::{SimError, SimFlash};
use hosttests::sim::SimSensor;

/// The simulated flash of the demonstration device ([`Geometry::EXAMPLE`]: read size 1,
/// write size 4, 4 KiB sectors).
pub type DemoFlash = SimFlash<1, 4, 4096>;

/// The UTC time of the demonstration device's tick 0 (for `register import --epoch-utc`).
pub const DEMO_EPOCH_UTC: &str = "2025-03-14T09:00:00Z";

/// The demonstration device's label.
pub const DEMO_DEVICE_ID: &str = "bench-meter-07";

/// What the demonstration device wrote.
#[derive(Debug, Clone)]
pub struct DemoJournal {
    /// The flash image (the journal's range), [`Geometry::EXAMPLE`].
    pub image: Vec<u8>,
    /// Every record the journal acknowledged, in order, with its sequence number (the
    /// journal's own restatements are not in it).
    pub acknowledged: Vec<Record>,
    /// The record being written when the power failed (not acknowledged).
    pub in_flight: Option<Body>,
    /// Session 1 (target met), 2 (gap fault), 3 (open, cut by the power loss).
    pub sessions: [SessionId; 3],
}

fn other(e: impl std::fmt::Debug) -> ReviewError {
    ReviewError::Other(format!("demonstration image: {e:?}"))
}

struct Device {
    journal: Journal<DemoFlash>,
    acknowledged: Vec<Record>,
    in_flight: Option<Body>,
}

impl Device {
    /// Append; `Ok(false)` when the power failed during it.
    fn append(&mut self, body: Body) -> Result<bool, ReviewError> {
        match self.journal.append(&body) {
            Ok(seq) => {
                self.acknowledged.push(Record { seq, body });
                Ok(true)
            }
            Err(JournalError::Flash(SimError::PowerCut)) => {
                self.in_flight = Some(body);
                Ok(false)
            }
            Err(e) => Err(other(e)),
        }
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Plan {
    ToTarget,
    GapAfter { ms: u32, stall_ms: u32 },
    CutAfter { ms: u32 },
}

/// Run one session from tick `t0` (ms); returns the tick after it, or `None` after the cut.
fn run_session(
    dev: &mut Device,
    cfg: &ReviewConfig,
    sensor: &mut SimSensor,
    t0: u32,
    plan: Plan,
) -> Result<Option<(u32, SessionId)>, ReviewError> {
    const SAMPLE_MS: u32 = 50;
    let meter = cfg.meter.clone();
    let mut session = Session::new(meter.clone(), cfg.session, Unwired, Unwired).map_err(other)?;
    let cp_cfg = CheckpointConfig::one_second(
        meter.tick_rate(),
        cfg.session.max_gap_ticks,
        full_scale_irradiance(&meter),
    );
    let mut cp = Checkpointer::new(cp_cfg).map_err(other)?;
    let mut autorange = Autorange::new(
        [Unwired],
        meter.front_end(),
        AutorangeConfig {
            up: 0.92,
            down: 0.80,
            settle_samples: 1,
        },
        RangeIndex(0),
    )
    .map_err(other)?;
    let start = cp.start_record(&meter, session.config(), CalibrationId(7), Ticks(t0));
    let id = SessionId(dev.journal.next_seq());
    let got = dev.journal.begin_session(start).map_err(other)?;
    dev.acknowledged.push(Record {
        seq: id.0,
        body: Body::Start(SessionStart {
            session: got,
            ..start
        }),
    });
    // The first checkpoint is acknowledged before the source is enabled.
    if !dev.append(Body::Checkpoint(cp.begin(
        got,
        Ticks(t0),
        RadiantExposure::ZERO,
    )))? {
        return Ok(None);
    }
    dev.journal.maintain().map_err(other)?;
    session.start().map_err(other)?;
    sensor.led.command(true, f64::from(t0) / 1000.0);
    let mut ms = t0;
    let mut first_interval: Option<f64> = None;
    let mut warned = false;
    loop {
        ms += SAMPLE_MS;
        if let Plan::GapAfter {
            ms: after,
            stall_ms,
        } = plan
        {
            if ms == t0 + after {
                ms += stall_ms; // the sensor bus stalls: no reading
            }
        }
        let t = f64::from(ms) / 1000.0;
        sensor.t_s = t;
        sensor.range = usize::from(autorange.current().0);
        let reading = match sensor.poll_reading(autorange.current(), Ticks(ms)) {
            Ok(r) => r,
            Err(nb::Error::WouldBlock) => continue,
            Err(nb::Error::Other(never)) => match never {},
        };
        if autorange
            .observe(&reading, session.meter().front_end())
            .map_err(other)?
            == Decision::Settling
        {
            continue;
        }
        let outcome = session.on_reading(&reading).map_err(other)?;
        let h = session.integrator().exposure();
        match outcome {
            Outcome::Integrated { before, after, .. } => {
                let net = session.meter().front_end().net_code(&reading).unwrap_or(0);
                let e = session.meter().irradiance(net, reading.range);
                cp.observe(e);
                if before == Phase::Exposing && after == Phase::TargetMet {
                    sensor.led.command(false, t);
                    let ev = cp.event(Ticks(ms), h, EventCode::TargetReached, 0);
                    let end = cp.end(Ticks(ms), h, SessionOutcome::TargetMet);
                    if !(dev.append(Body::Event(ev))? && dev.append(Body::End(end))?) {
                        return Ok(None);
                    }
                    return Ok(Some((ms, got)));
                }
                let ref_e = *first_interval.get_or_insert(e.w_per_m2());
                if !warned && e.w_per_m2() < 0.93 * ref_e {
                    warned = true;
                    let pct = (100.0 * e.w_per_m2() / ref_e).round() as u32;
                    let ev = cp.event(
                        Ticks(ms),
                        h,
                        EventCode::Warning(WarningCode::LampAgeing),
                        pct,
                    );
                    if !dev.append(Body::Event(ev))? {
                        return Ok(None);
                    }
                }
            }
            Outcome::Faulted(f) => {
                sensor.led.command(false, t);
                let (code, detail) = FaultCode::from_fault(f);
                let ev = cp.event(Ticks(ms), h, EventCode::Fault(code), detail);
                let end = cp.end(Ticks(ms), h, SessionOutcome::Faulted(code));
                if !(dev.append(Body::Event(ev))? && dev.append(Body::End(end))?) {
                    return Ok(None);
                }
                return Ok(Some((ms, got)));
            }
            Outcome::Ignored(_) => {}
        }
        if cp.due(Ticks(ms)) {
            if let Plan::CutAfter { ms: after } = plan {
                if ms >= t0 + after {
                    // The power fails 20 bytes into this checkpoint's write.
                    dev.journal.flash_mut().cut_after(20);
                }
            }
            if !dev.append(Body::Checkpoint(cp.checkpoint(Ticks(ms), h)))? {
                return Ok(None);
            }
            dev.journal.maintain().map_err(other)?;
        }
        if ms > t0 + 3_600_000 {
            return Err(other("no end within an hour"));
        }
    }
}

/// Write the demonstration journal with sensor noise seed `seed`.
///
/// # Errors
/// Not expected (the run is tested); a configuration or journal error otherwise.
pub fn demo_journal(seed: u64) -> Result<DemoJournal, ReviewError> {
    let g = Geometry::EXAMPLE;
    let s = scenario("led-photoreactor").ok_or_else(|| other("scenario missing"))?;
    let cfg = scenario_config(s)?;
    let jcfg = JournalConfig::try_new::<DemoFlash>(g.base_address, g.sectors, Retention::Ring)
        .map_err(other)?;
    let journal = Journal::mount(DemoFlash::new(g.sectors as usize), jcfg).map_err(other)?;
    let mut dev = Device {
        journal,
        acknowledged: Vec::new(),
        in_flight: None,
    };
    let mut sensor = photoreactor_sensor(seed);
    let mut ids = [SessionId(0); 3];
    let plans = [
        Plan::ToTarget,
        Plan::GapAfter {
            ms: 20_000,
            stall_ms: 800,
        },
        Plan::CutAfter { ms: 30_000 },
    ];
    let mut t = 5_000;
    for (k, plan) in plans.into_iter().enumerate() {
        let next = dev.journal.next_seq();
        match run_session(&mut dev, &cfg, &mut sensor, t, plan)? {
            Some((end, id)) => {
                if let Some(slot) = ids.get_mut(k) {
                    *slot = id;
                }
                t = end + 60_000;
            }
            None => {
                if let Some(slot) = ids.get_mut(k) {
                    *slot = SessionId(next);
                }
                break;
            }
        }
    }
    if dev.in_flight.is_none() {
        return Err(other("the power cut did not happen"));
    }
    Ok(DemoJournal {
        image: dev.journal.release().image().to_vec(),
        acknowledged: dev.acknowledged,
        in_flight: dev.in_flight,
        sessions: ids,
    })
}
