//! Instruction-count harness for the per-sample paths, run under
//! `qemu-system-arm -singlestep -d exec,nochain` by `.ci/firmware.sh`.
//!
//! Each measured call sits between two marker functions (see `markers`):
//!
//! | markers | what |
//! |---|---|
//! | 0 → 1 | nothing (the overhead of the marker pair itself) |
//! | 2 → 3 | `Integrator::accept`, steady state: same range, two thresholds, none crossed |
//! | 4 → 5 | `Session::on_reading`, steady state (front-end check, integral, controller checks) |
//! | 6 → 7 | `Session::on_reading` on the sample that reaches the target (enable pin written) |
//! | 8 → 9 | `Integrator::accept` on a range change (informational: segment close, limits recomputed) |
//! | 10 → 11 | positive control: an `f64` multiply (soft float on both cores) |
//! | 12 → 13 | positive control: an `i32` to `f64` conversion (`__aeabi_i2d`) |
//! | 14 → 15 | `Integrator::accept`, steady sample of a 24-bit converter sampled at 10 Hz on a 1 MHz tick (terms beyond 32 bits), two thresholds, none crossed |
//!
//! The two controls must show soft-float instructions, or `.ci/firmware.sh` fails: they prove
//! that its soft-float pattern sees the routines the hot-path figure must not contain.
//!
//! The firmware checks that every measured call returned what it must, so a count can never
//! come from a path that did something else.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
use panic_semihosting as _;
use photon_ledger::control::session::Outcome;
use photon_ledger::dose::{Crossed, Step};
use photon_ledger::prelude::*;
use photon_ledger_firmware::markers::*;
use photon_ledger_firmware::{
    curing_config, demo_meter, units_of_mj_per_cm2, Checks, DemoSession, PinState, Reference,
    SimPin, DARK_CODE, SAMPLE_TICKS,
};

static EN: PinState = PinState::new();
static AL: PinState = PinState::new();

const TARGET: f64 = 2.0; // mJ/cm²
const TOLERANCE: f64 = 0.5; // mJ/cm²
const CODE: i32 = 2004;

fn reading(n: u32) -> Reading {
    Reading {
        code: CODE + (n % 3) as i32,
        range: RangeIndex(0),
        at: Ticks(n * SAMPLE_TICKS),
    }
}

/// A two-range meter (100 kΩ and 10 kΩ) for the range-change measurement.
fn two_range_meter() -> Option<Meter> {
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
                gain: Transimpedance::from_kohm(100.0),
                dark_offset: DARK_CODE,
            },
            AmplifierRange {
                gain: Transimpedance::from_kohm(10.0),
                dark_offset: DARK_CODE,
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
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1_000)?,
        sample_area: None,
    })
    .ok()
}

/// Positive control: an `f64` multiply, a software routine on the M0 and on the M4F (whose
/// FPU is single precision).
#[inline(never)]
fn control_f64_mul(a: f64, b: f64) -> f64 {
    a * b
}

/// Positive control: an integer to `f64` conversion (`__aeabi_i2d`).
#[inline(never)]
fn control_i32_to_f64(a: i32) -> f64 {
    f64::from(a)
}

#[entry]
fn main() -> ! {
    let mut c = Checks::new();
    let Some(meter) = demo_meter() else {
        c.check("meter", false);
        c.finish("hotpath")
    };

    // Baseline: the empty marker pair.
    pl_mark_0();
    pl_mark_1();

    // Integrator with the same two thresholds a session registers.
    let mut integ = Integrator::new(&meter, 100);
    let t_ok = integ
        .add_threshold(
            RadiantExposure::from_mj_per_cm2(TARGET),
            Rounding::NotBefore,
        )
        .is_ok();
    let o_ok = integ
        .add_threshold(
            RadiantExposure::from_mj_per_cm2(TARGET + TOLERANCE),
            Rounding::NotAfter,
        )
        .is_ok();
    c.check("thresholds registered", t_ok && o_ok);
    for n in 0..4 {
        let r = reading(n);
        let _ = integ.accept(r.code - DARK_CODE, r.range, r.at);
    }
    let r = black_box(reading(4));
    let net = black_box(r.code - DARK_CODE);
    let integ = black_box(&mut integ);
    pl_mark_2();
    let step = integ.accept(net, r.range, r.at);
    pl_mark_3();
    let step = black_box(step);
    c.check(
        "accept: steady sample integrated, nothing crossed",
        step == Ok(Step {
            interval: SAMPLE_TICKS,
            crossed: Crossed(0),
        }),
    );

    // A session: steady sample, then the sample that reaches the target.
    let config = curing_config(TARGET, TOLERANCE);
    let Ok(mut session) = DemoSession::new(meter, config, SimPin(&EN), SimPin(&AL)) else {
        c.check("session", false);
        c.finish("hotpath")
    };
    let _ = session.start();
    let x_target = units_of_mj_per_cm2(TARGET);
    let mut reference = Reference::default();
    let mut crossing = None;
    for n in 0..1_000 {
        let r = reading(n);
        reference.add(r.code, r.at.0);
        if reference.sum as f64 >= x_target {
            crossing = Some(n);
            break;
        }
    }
    let Some(crossing) = crossing else {
        c.check("scenario reaches the target", false);
        c.finish("hotpath")
    };
    c.check("crossing sample after the steady one", crossing > 6);
    for n in 0..5 {
        let _ = session.on_reading(&reading(n));
    }
    let r = black_box(reading(5));
    let s = black_box(&mut session);
    pl_mark_4();
    let out = s.on_reading(&r);
    pl_mark_5();
    let out = black_box(out);
    c.check(
        "on_reading: steady sample integrated, still exposing",
        out == Ok(Outcome::Integrated {
            before: Phase::Exposing,
            after: Phase::Exposing,
            milestone: None,
        }),
    );
    for n in 6..crossing {
        let _ = s.on_reading(&reading(n));
    }
    c.check("enable still active before the crossing", EN.is_high());
    let r = black_box(reading(crossing));
    pl_mark_6();
    let out = s.on_reading(&r);
    pl_mark_7();
    let out = black_box(out);
    c.check(
        "on_reading: target sample stops the exposure",
        out == Ok(Outcome::Integrated {
            before: Phase::Exposing,
            after: Phase::TargetMet,
            milestone: None,
        }) && !EN.is_high(),
    );

    // Range change (informational).
    let Some(m2) = two_range_meter() else {
        c.check("two-range meter", false);
        c.finish("hotpath")
    };
    let mut i2 = Integrator::new(&m2, 100);
    let _ = i2.add_threshold(
        RadiantExposure::from_mj_per_cm2(TARGET),
        Rounding::NotBefore,
    );
    let _ = i2.add_threshold(
        RadiantExposure::from_mj_per_cm2(TARGET + TOLERANCE),
        Rounding::NotAfter,
    );
    for n in 0..4 {
        let r = reading(n);
        let _ = i2.accept(r.code - DARK_CODE, r.range, r.at);
    }
    let at = black_box(Ticks(4 * SAMPLE_TICKS));
    let net = black_box(200);
    let i2 = black_box(&mut i2);
    pl_mark_8();
    let step = i2.accept(net, RangeIndex(1), at);
    pl_mark_9();
    let step = black_box(step);
    c.check(
        "accept: range change integrated",
        step.map(|s| s.interval) == Ok(SAMPLE_TICKS),
    );

    // Wide terms: a 24-bit converter (codes near 2²³) sampled at 10 Hz on a 1 MHz tick, so
    // each trapezoid term is about 2⁴⁰ units. Thresholds far above the run's dose.
    let Some(mw) = demo_meter() else {
        c.check("meter", false);
        c.finish("hotpath")
    };
    let mut iw = Integrator::new(&mw, 200_000);
    let _ = iw.add_threshold(RadiantExposure::from_j_per_m2(1e15), Rounding::NotBefore);
    let _ = iw.add_threshold(RadiantExposure::from_j_per_m2(2e15), Rounding::NotAfter);
    for n in 0..4u32 {
        let _ = iw.accept(8_000_000 + n as i32, RangeIndex(0), Ticks(n * 100_000));
    }
    let at = black_box(Ticks(4 * 100_000));
    let net = black_box(8_000_004);
    let iw = black_box(&mut iw);
    pl_mark_14();
    let step = iw.accept(net, RangeIndex(0), at);
    pl_mark_15();
    let step = black_box(step);
    c.check(
        "accept: wide steady sample integrated, nothing crossed",
        step == Ok(Step {
            interval: 100_000,
            crossed: Crossed(0),
        }),
    );

    // Soft-float positive controls.
    let (a, b) = (black_box(1.5f64), black_box(3.0f64));
    pl_mark_10();
    let product = control_f64_mul(a, b);
    pl_mark_11();
    c.check("control: f64 multiply", black_box(product) == 4.5);
    let k = black_box(-7i32);
    pl_mark_12();
    let converted = control_i32_to_f64(k);
    pl_mark_13();
    c.check("control: i32 to f64", black_box(converted) == -7.0);

    hprintln!("crossing at sample {}", crossing);
    c.finish("hotpath")
}
