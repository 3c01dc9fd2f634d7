//! A curing-style session run entirely inside the firmware: a simulated lamp behind a
//! simulated 12-bit ADC, the real `Meter`/`Session`/`Integrator`, and output pins whose state
//! is checked. Three scenarios:
//!
//! 1. normal run: warm-up, steady output with ripple, stop at the target, shutter closes;
//! 2. stuck shutter: the lamp ignores the enable output, the dose passes target + tolerance;
//! 3. saturation: the ADC rails mid-run.
//!
//! Every expectation (the exact integer integral, the sample at which each transition must
//! happen) is computed here independently of the library, from the lamp model and the
//! definitions of the measurement chain. Exit status: semihosting success / failure.

#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
use panic_semihosting as _;
use photon_ledger::prelude::*;
use photon_ledger_firmware::{
    curing_config, init_session, reference_j_per_m2_per_unit, stack, uj_per_cm2,
    units_of_mj_per_cm2, Checks, DemoSession, Lamp, PinState, Reference, SAMPLE_TICKS,
};

static PINS: [PinState; 6] = [
    PinState::new(),
    PinState::new(),
    PinState::new(),
    PinState::new(),
    PinState::new(),
    PinState::new(),
];

const TARGET_MJ_PER_CM2: f64 = 20.0;
const TOLERANCE_MJ_PER_CM2: f64 = 2.0;

/// What one scenario did, as seen from outside the session.
struct Run {
    /// (sample index, phase entered) for the first two phase changes.
    changes: [Option<(u32, Phase)>; 2],
    /// Independent reference integral over the samples that should be integrated.
    reference: Reference,
    /// First sample index at which the reference reaches the target / target + tolerance,
    /// and whether the margin to the neighbouring samples is at least 2 units (so the
    /// library's one-unit safe rounding cannot move the transition).
    expect_target: Option<(u32, bool)>,
    expect_over: Option<(u32, bool)>,
}

#[inline(never)]
fn run(
    session: &mut DemoSession,
    mut lamp: Lamp,
    en: &'static PinState,
    samples_after_stop: u32,
    max_samples: u32,
) -> Option<Run> {
    session.start().ok()?;
    let x_target = units_of_mj_per_cm2(TARGET_MJ_PER_CM2);
    let x_over = units_of_mj_per_cm2(TARGET_MJ_PER_CM2 + TOLERANCE_MJ_PER_CM2);
    let mut reference = Reference::default();
    let mut changes = [None; 2];
    let mut n_changes = 0;
    let mut expect_target = None;
    let mut expect_over = None;
    let mut after = 0;
    let mut terminal_after = 0;
    let mut t = 0u32;
    for i in 0..max_samples {
        let code = lamp.next_code(en.is_high());
        let before_sum = reference.sum as f64;
        // The reference integrates every sample the scenario says is usable.
        // (Nothing is integrated after a saturated code or after the overexposure sample:
        // both end the session.)
        if lamp.saturate_at.is_none_or(|s| i < s) && expect_over.is_none() {
            reference.add(code, t);
        }
        let sum = reference.sum as f64;
        if expect_target.is_none() && sum >= x_target {
            expect_target = Some((i, sum >= x_target + 2.0 && before_sum < x_target));
        }
        if expect_over.is_none() && sum >= x_over {
            expect_over = Some((i, before_sum < x_over - 2.0));
        }
        let before = session.phase();
        let r = Reading {
            code,
            range: RangeIndex(0),
            at: Ticks(t),
        };
        session.on_reading(&r).ok()?;
        let now = session.phase();
        if now != before {
            if let Some(slot) = changes.get_mut(n_changes) {
                *slot = Some((i, now));
            }
            n_changes += 1;
        }
        if now.is_terminal() {
            terminal_after += 1;
        }
        if !now.is_exposing() {
            after += 1;
        }
        if after > samples_after_stop || terminal_after > 5 {
            break;
        }
        t = t.wrapping_add(SAMPLE_TICKS);
    }
    Some(Run {
        changes,
        reference,
        expect_target,
        expect_over,
    })
}

fn common(c: &mut Checks, session: &DemoSession, run: &Run) {
    let raw = session.integrator().raw_total(RangeIndex(0));
    c.eq(
        "exact integral (code*ticks*2)",
        raw as i64,
        run.reference.sum,
    );
    let h = session.progress().exposure.j_per_m2();
    let h_ref = run.reference.sum as f64 * reference_j_per_m2_per_unit();
    c.check(
        "read-out matches reference within 1e-9 relative",
        (h - h_ref).abs() <= 1e-9 * h_ref,
    );
    hprintln!(
        "  dose {} uJ/cm2 (reference {} uJ/cm2)",
        uj_per_cm2(session.progress().exposure),
        uj_per_cm2(RadiantExposure::from_j_per_m2(h_ref))
    );
}

#[inline(never)]
fn scenario_normal(
    c: &mut Checks,
    slot: &mut Option<DemoSession>,
    en: &'static PinState,
    al: &'static PinState,
) {
    hprintln!("scenario 1: normal curing run");
    init_session(
        slot,
        curing_config(TARGET_MJ_PER_CM2, TOLERANCE_MJ_PER_CM2),
        en,
        al,
    );
    let Some(session) = slot.as_mut() else {
        return c.check("scenario 1 set-up", false);
    };
    let Some(r) = run(session, Lamp::new(2000, 25, true), en, 30, 2_000) else {
        return c.check("scenario 1 run", false);
    };
    common(c, session, &r);
    let (n, margin) = r.expect_target.unwrap_or((u32::MAX, false));
    c.check("scenario margin >= 2 units at the target", margin);
    c.check(
        "TargetMet exactly at the expected sample",
        r.changes[0] == Some((n, Phase::TargetMet)),
    );
    c.check("no further phase change", r.changes[1].is_none());
    c.check("final phase TargetMet", session.phase() == Phase::TargetMet);
    c.check(
        "dose never reached target + tolerance",
        r.expect_over.is_none(),
    );
    c.check(
        "enable: one rise, one fall, now low",
        en.rises() == 1 && en.falls() == 1 && !en.is_high(),
    );
    c.check("alarm never raised", al.rises() == 0 && !al.is_high());
    let p = session.progress();
    c.check(
        "progress >= 100 %, no time to target",
        p.fraction >= 1.0 && p.time_to_target.is_none(),
    );
    hprintln!("  stop at sample {}", n);
    hprintln!(
        "FIGURE session_state_bytes {}",
        core::mem::size_of::<DemoSession>()
    );
    hprintln!(
        "  size_of Integrator {}",
        core::mem::size_of::<Integrator>()
    );
    hprintln!("  size_of Meter {}", core::mem::size_of::<Meter>());
}

#[inline(never)]
fn scenario_stuck_shutter(
    c: &mut Checks,
    slot: &mut Option<DemoSession>,
    en: &'static PinState,
    al: &'static PinState,
) {
    hprintln!("scenario 2: shutter stuck open");
    init_session(
        slot,
        curing_config(TARGET_MJ_PER_CM2, TOLERANCE_MJ_PER_CM2),
        en,
        al,
    );
    let Some(session) = slot.as_mut() else {
        return c.check("scenario 2 set-up", false);
    };
    let Some(r) = run(session, Lamp::new(2000, 25, false), en, 100, 2_000) else {
        return c.check("scenario 2 run", false);
    };
    common(c, session, &r);
    let (nt, mt) = r.expect_target.unwrap_or((u32::MAX, false));
    let (no, mo) = r.expect_over.unwrap_or((u32::MAX, false));
    c.check("scenario margins >= 2 units", mt && mo);
    c.check(
        "TargetMet, then Overexposed, at the expected samples",
        r.changes == [Some((nt, Phase::TargetMet)), Some((no, Phase::Overexposed))],
    );
    c.check(
        "enable low, alarm high (one rise)",
        !en.is_high() && al.is_high() && al.rises() == 1,
    );
    hprintln!("  target at sample {}, overexposed at sample {}", nt, no);
}

#[inline(never)]
fn scenario_saturation(
    c: &mut Checks,
    slot: &mut Option<DemoSession>,
    en: &'static PinState,
    al: &'static PinState,
) {
    hprintln!("scenario 3: ADC saturates at sample 100");
    let mut lamp = Lamp::new(2000, 25, true);
    lamp.saturate_at = Some(100);
    init_session(
        slot,
        curing_config(TARGET_MJ_PER_CM2, TOLERANCE_MJ_PER_CM2),
        en,
        al,
    );
    let Some(session) = slot.as_mut() else {
        return c.check("scenario 3 set-up", false);
    };
    let Some(r) = run(session, lamp, en, 5, 2_000) else {
        return c.check("scenario 3 run", false);
    };
    common(c, session, &r);
    c.check(
        "Faulted(Saturated) at sample 100",
        r.changes[0] == Some((100, Phase::Faulted(Fault::Saturated))),
    );
    c.check(
        "enable low, alarm high",
        !en.is_high() && al.is_high() && en.falls() == 1,
    );
}

#[entry]
fn main() -> ! {
    stack::paint();
    let mut c = Checks::new();
    let [en1, al1, en2, al2, en3, al3] = &PINS;
    // The controller state lives in static RAM (.bss), as in a real firmware.
    let Some(slot) = cortex_m::singleton!(: Option<DemoSession> = None) else {
        photon_ledger_firmware::exit(false)
    };
    scenario_normal(&mut c, slot, en1, al1);
    scenario_stuck_shutter(&mut c, slot, en2, al2);
    scenario_saturation(&mut c, slot, en3, al3);
    let used = stack::high_water();
    hprintln!("FIGURE stack_bytes {}", used);
    hprintln!("  stack available {}", stack::available());
    c.check(
        "stack high-water below the painted region",
        used < stack::available(),
    );
    c.finish("curing")
}
