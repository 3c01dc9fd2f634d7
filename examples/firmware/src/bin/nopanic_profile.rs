//! No-panic link check, API group "meter profile" (profile: encode, decode with its CRC and
//! field checks, `Meter::from_profile`; and `MeterProfile::new`, the host path, with the
//! integrator's per-range conversion). See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::dose::Rounding;
use photon_ledger::prelude::*;
use photon_ledger::profile::MeterProfile;

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

#[entry]
fn main() -> ! {
    let fe = match front_end() {
        Ok(fe) => fe,
        Err(e) => {
            show(&e);
            done()
        }
    };
    let Some(m) = meter(black_box(fe)) else { done() };
    let levels = [
        (
            RadiantExposure::from_j_per_m2(black_box(100.0)),
            Rounding::NotBefore,
        ),
        (
            RadiantExposure::from_j_per_m2(black_box(110.0)),
            Rounding::NotAfter,
        ),
    ];
    let p = match MeterProfile::new(&black_box(m), black_box(&levels)) {
        Ok(p) => p,
        Err(e) => {
            show(&e);
            done()
        }
    };
    let mut bytes = black_box(p.to_bytes());
    for i in 0..black_box(8usize) {
        if let Some(b) = bytes.get_mut(black_box(i * 37)) {
            *b ^= black_box(1u8);
        }
        match MeterProfile::from_bytes(black_box(&bytes[..])) {
            Ok(q) => match Meter::from_profile(&black_box(q)) {
                Ok(m) => {
                    black_box(m.j_per_m2_per_unit(RangeIndex(black_box(i as u8))));
                }
                Err(e) => show(&e),
            },
            Err(e) => show(&e),
        }
        black_box(p.unit_scale_bits(RangeIndex(black_box(i as u8))));
        black_box(p.threshold(black_box(i)));
    }
    done()
}
