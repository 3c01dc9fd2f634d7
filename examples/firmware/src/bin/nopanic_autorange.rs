//! No-panic link check, API group "autorange". See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::frontend::autorange::AutorangeError;
use photon_ledger::frontend::autorange::{Autorange, AutorangeConfig};
use photon_ledger::prelude::*;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

#[entry]
fn main() -> ! {
    let Ok(fe) = front_end() else { done() };
    let config = black_box(AutorangeConfig {
        up: 0.9,
        down: 0.08,
        settle_samples: 2,
    });
    let mut a: Autorange<OpaquePin, 2> = match Autorange::new(
        [OpaquePin, OpaquePin],
        &fe,
        config,
        RangeIndex(black_box(7)),
    ) {
        Ok(a) => a,
        Err(AutorangeError::Config(e)) => {
            show(&e);
            done()
        }
        Err(AutorangeError::Pin(e)) => {
            black_box(e);
            done()
        }
    };
    for n in 0..black_box(500u32) {
        let r = Reading {
            code: black_box((n * 37 % 4200) as i32),
            range: a.current(),
            at: Ticks(n),
        };
        match a.observe(&r, &fe) {
            Ok(d) => {
                black_box(d);
            }
            Err(e) => {
                black_box(e);
            }
        }
    }
    black_box(a.release());
    done()
}
