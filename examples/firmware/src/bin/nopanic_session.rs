//! No-panic link check, API group "session". See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::control::session::to_exposure;
use photon_ledger::control::session::SessionError;
use photon_ledger::prelude::*;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

#[entry]
fn main() -> ! {
    let Ok(fe) = front_end() else { done() };
    let Some(m) = meter(fe) else { done() };
    let target = if black_box(true) {
        DoseAmount::Photons(PhotonAmount::from_umol(black_box(0.01)))
    } else {
        DoseAmount::PhotonExposure(PhotonExposure::from_umol_per_m2(black_box(50.0)))
    };
    let _ = black_box(to_exposure(&m, target).map(|h| h.j_per_m2()));
    let config = black_box(SessionConfig {
        target,
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(0.5)),
        max_gap_ticks: 100,
        max_unusable_run: 2,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::Low,
    });
    let mut s = match Session::new(m, config, OpaquePin, OpaquePin) {
        Ok(s) => s,
        Err(SessionError::Config(e)) => {
            show(&e);
            done()
        }
        Err(SessionError::Pin(e)) => {
            show(&e);
            done()
        }
    };
    if let Err(e) = s.start() {
        show(&e);
    }
    let mut t = 0u32;
    for n in 0..black_box(2_000u32) {
        t = t.wrapping_add(black_box(10));
        let r = Reading {
            code: black_box(2000 + (n % 5) as i32),
            range: RangeIndex(black_box((n / 700) as u8)),
            at: Ticks(t),
        };
        match s.on_reading(&r) {
            Ok(o) => {
                black_box(o);
            }
            Err(e) => show(&e),
        }
        if black_box(n == 1_999) {
            let _ = s.fault(Fault::Aborted);
        }
    }
    let p = s.progress();
    black_box(p.fraction);
    black_box(p.time_to_target.map(|x| x.s()));
    black_box(s.phase().is_terminal());
    black_box(s.last_at());
    black_box(s.meter().tick_rate());
    black_box(s.integrator().exposure());
    black_box(s.release());
    done()
}
