//! The interrupt-driven shape: the SysTick handler "converts" (reads the simulated ADC),
//! stamps the code with its tick count and hands the `Reading` to the main loop through a
//! `heapless::spsc` queue; the main loop integrates and controls.
//!
//! Why integrate in the main loop and not in the handler: the handler stays short and of
//! constant cost (read, stamp, enqueue), so it adds little latency to other interrupts, and
//! the session (with its pins) has one owner and needs no lock. The price is the enable-off
//! latency: a reading waits in the queue at most `QUEUE_CAPACITY` sample periods before it
//! is integrated (here the main loop keeps up and the queue rarely holds more than one).
//! Integrate in the handler instead only if the main loop can be blocked for longer than the
//! dose tolerance allows: the per-sample budget (`budgets.toml`) fits either choice.
//!
//! The lamp model follows the enable output, so the dose after the stop depends on how soon
//! the main loop switched it off; the check is exact all the same, because the independent
//! reference integral is formed from the readings the main loop actually received.

#![no_std]
#![no_main]

use core::cell::RefCell;

use cortex_m::interrupt::Mutex;
use cortex_m::peripheral::syst::SystClkSource;
use cortex_m_rt::{entry, exception};
use cortex_m_semihosting::hprintln;
use heapless::spsc::{Consumer, Producer, Queue};
use panic_semihosting as _;
use photon_ledger::prelude::*;
use photon_ledger_firmware::{
    curing_config, init_session, stack, units_of_mj_per_cm2, Checks, DemoSession, Lamp, PinState,
    Reference, SAMPLE_TICKS,
};

/// Queue slots (a heapless `Queue<_, N>` holds N − 1 items).
const QUEUE_N: usize = 8;
/// Readings the queue can hold.
pub const QUEUE_CAPACITY: usize = QUEUE_N - 1;
/// SysTick reload: one "conversion" every 4 000 core clocks.
const RELOAD: u32 = 4_000;

static ENABLE: PinState = PinState::new();
static ALARM: PinState = PinState::new();

/// What the handler owns: the producer end, the simulated lamp + ADC, its tick counter.
struct Sampler {
    producer: Producer<'static, Reading>,
    lamp: Lamp,
    now: Ticks,
    dropped: u32,
    produced: u32,
}

static SAMPLER: Mutex<RefCell<Option<Sampler>>> = Mutex::new(RefCell::new(None));

#[exception]
fn SysTick() {
    cortex_m::interrupt::free(|cs| {
        if let Some(s) = SAMPLER.borrow(cs).borrow_mut().as_mut() {
            let code = s.lamp.next_code(ENABLE.is_high());
            let r = Reading {
                code,
                range: RangeIndex(0),
                at: s.now,
            };
            // A full queue hands the reading back: count it, the session will see the gap.
            if s.producer.enqueue(r).is_err() {
                s.dropped = s.dropped.wrapping_add(1);
            }
            s.produced = s.produced.wrapping_add(1);
            s.now = s.now.wrapping_add(SAMPLE_TICKS);
        }
    });
}

const TARGET: f64 = 20.0; // mJ/cm²
const TOLERANCE: f64 = 2.0; // mJ/cm²

#[entry]
fn main() -> ! {
    stack::paint();
    let mut c = Checks::new();
    let (Some(cp), Some(queue)) = (
        cortex_m::Peripherals::take(),
        cortex_m::singleton!(: Queue<Reading, QUEUE_N> = Queue::new()),
    ) else {
        c.check("set-up", false);
        c.finish("irq")
    };
    let Some(session) = cortex_m::singleton!(: Option<DemoSession> = None) else {
        c.check("set-up", false);
        c.finish("irq")
    };
    init_session(session, curing_config(TARGET, TOLERANCE), &ENABLE, &ALARM);
    let Some(session) = session.as_mut() else {
        c.check("session", false);
        c.finish("irq")
    };
    let (producer, mut consumer): (_, Consumer<'static, Reading>) = queue.split();
    cortex_m::interrupt::free(|cs| {
        SAMPLER.borrow(cs).replace(Some(Sampler {
            producer,
            lamp: Lamp::new(2000, 25, true),
            now: Ticks(0),
            dropped: 0,
            produced: 0,
        }));
    });
    let _ = session.start();

    let mut syst = cp.SYST;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(RELOAD);
    syst.clear_current();
    syst.enable_counter();
    syst.enable_interrupt();

    let x_target = units_of_mj_per_cm2(TARGET);
    let mut reference = Reference::default();
    let mut received = 0u32;
    let mut expected_stop = None;
    let mut stop = None;
    let mut deepest = 0usize;
    let mut after = 0;
    while after < 30 {
        deepest = deepest.max(consumer.len());
        while let Some(r) = consumer.dequeue() {
            reference.add(r.code, r.at.0);
            if expected_stop.is_none() && reference.sum as f64 >= x_target {
                expected_stop = Some(received);
            }
            let before = session.phase();
            let _ = session.on_reading(&r);
            if before != session.phase() && stop.is_none() {
                stop = Some((received, session.phase()));
            }
            if !session.phase().is_exposing() {
                after += 1;
            }
            received += 1;
        }
        cortex_m::asm::wfi();
    }
    syst.disable_interrupt();
    syst.disable_counter();
    // Anything produced after the last dequeue is still in the queue: count it as received
    // by nobody (it is not integrated and not in the reference).
    let (produced, dropped) = cortex_m::interrupt::free(|cs| {
        SAMPLER
            .borrow(cs)
            .borrow()
            .as_ref()
            .map_or((0, 0), |s| (s.produced, s.dropped))
    });

    hprintln!(
        "  produced {} readings, received {}, dropped {}, deepest queue {}",
        produced,
        received,
        dropped,
        deepest
    );
    c.eq(
        "exact integral (code*ticks*2)",
        session.integrator().raw_total(RangeIndex(0)) as i64,
        reference.sum,
    );
    c.check(
        "TargetMet at the expected reading",
        expected_stop.is_some() && stop == expected_stop.map(|n| (n, Phase::TargetMet)),
    );
    c.check("final phase TargetMet", session.phase() == Phase::TargetMet);
    c.check(
        "enable: one rise, one fall; alarm never raised",
        ENABLE.rises() == 1 && ENABLE.falls() == 1 && !ENABLE.is_high() && ALARM.rises() == 0,
    );
    c.check(
        "every produced reading received, dropped or still queued",
        produced == received + dropped + consumer.len() as u32,
    );
    c.check("no reading dropped", dropped == 0);
    let used = stack::high_water();
    hprintln!("FIGURE stack_bytes {}", used);
    c.finish("irq")
}
