//! The twin of `profile_meter`: the same meter configured on the device in `f64`
//! (`Meter::new` with the LED band, `to_exposure`, and the session's two thresholds
//! converted for every range by `MeterProfile::new`, which runs the integrator's own
//! conversion), then the same run. It checks on the target that the on-device path gives
//! exactly the profile the host computed (every integer, every `f64` bit pattern). Its flash
//! size against `profile_meter`'s is the cost of configuring on the device. Exit status:
//! semihosting success when every check holds.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::control::session::to_exposure;
use photon_ledger::dose::Rounding;
use photon_ledger::prelude::*;
use photon_ledger::profile::MeterProfile;
use photon_ledger_firmware::profile_const::PROFILE;
use photon_ledger_firmware::{exit, Lamp, SAMPLE_TICKS};

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    exit(false)
}

/// The values of `examples/firmware/profile.toml`.
fn meter() -> Option<Meter> {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 12,
            reference: Voltage::from_v(3.3),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1.0e6),
                dark_offset: 4,
            },
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1.0e4),
                dark_offset: 3,
            },
        ],
    )
    .ok()?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Led {
            peak: Wavelength::from_nm(365.0),
            fwhm: Wavelength::from_nm(10.0),
        },
        tick_rate: TickRate::from_hz(1000)?,
        sample_area: None,
    })
    .ok()
}

#[entry]
fn main() -> ! {
    let Some(meter) = meter() else { exit(false) };
    let dose = |mj_per_cm2: f64| {
        to_exposure(
            &meter,
            DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(black_box(mj_per_cm2))),
        )
    };
    let (Ok(target), Ok(tolerance)) = (dose(20.0), dose(2.0)) else {
        exit(false)
    };
    let on_device = MeterProfile::new(
        &meter,
        &[
            (target, Rounding::NotBefore),
            (target + tolerance, Rounding::NotAfter),
        ],
    );
    let mut ok = on_device == Ok(PROFILE);
    let target_units = on_device.map_or(0, |p| p.threshold(0).map_or(0, |t| t.limits[0]));
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
