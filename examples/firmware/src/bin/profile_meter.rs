//! A meter built from a host-computed profile (`Meter::from_profile` on the `const` that
//! `photon-review explain --profile` printed for `examples/firmware/profile.toml`): no `f64`
//! arithmetic and no `libm` at configuration. `.ci/firmware.sh` checks that this ELF links
//! no soft-float routine at all, and compares its flash size with `profile_f64`, which
//! configures the same meter on the device (and checks on the target that it gives exactly
//! this profile). The run feeds the simulated lamp through the meter's front end (net codes,
//! saturation checks). Exit status: semihosting success when every check holds.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::prelude::*;
use photon_ledger_firmware::profile_const::PROFILE;
use photon_ledger_firmware::{exit, Lamp, SAMPLE_TICKS};

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    exit(false)
}

#[entry]
fn main() -> ! {
    // black_box: the profile as if read from flash at run time, not folded at build time.
    let Ok(meter) = Meter::from_profile(black_box(&PROFILE)) else {
        exit(false)
    };
    // The meter's ranges are the profile's, and each range's dose-unit scale (the exact
    // mantissa and exponent) assembles into a normal f64 — in integers.
    let mut ok = meter.front_end().range_count() == usize::from(PROFILE.range_count);
    for r in 0..PROFILE.range_count {
        ok &= PROFILE.unit_scale_bits(RangeIndex(r)).is_some();
    }
    // The session's target in integer units of range 0, from the profile.
    let target_units = PROFILE.threshold(0).map_or(0, |t| t.limits[0]);
    let mut lamp = Lamp::new(2000, 25, true);
    let mut net_sum: i64 = 0;
    let mut t = 0u32;
    for _ in 0..200u32 {
        let code = lamp.next_code(true);
        let s = meter.front_end().sample(&Reading {
            code,
            range: RangeIndex(0),
            at: Ticks(t),
        });
        match s.net {
            Ok(n) => net_sum += i64::from(n),
            Err(_) => ok = false,
        }
        t = t.wrapping_add(SAMPLE_TICKS);
    }
    black_box((net_sum, target_units));
    exit(ok && net_sum > 0 && target_units > 0)
}
