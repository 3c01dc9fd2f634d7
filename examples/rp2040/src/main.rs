//! photon-ledger on a real board: a UV-curing station on a Raspberry Pi Pico (RP2040).
//!
//! - the photodiode amplifier is read by an **ADS1115** on I²C0 through the library's
//!   `ads1x1x` adapter (one-shot conversions, 860 samples/s, ±2.048 V, AIN0−AIN1);
//! - a [`CuringController`] gets every reading with a timestamp from the HAL's 1 MHz
//!   [`Timer`], drives the **source-enable** output (GP15) and the latched **alarm** output
//!   (GP14), and monitors the **interlock** input (GP16, guard closed = low);
//! - a part starts on the **start** button (GP17, to ground); the **acknowledge** button
//!   (GP18, to ground) clears a latched alarm between parts;
//! - the stop is anticipated by the controller; between readings the main loop checks
//!   [`CuringController::stop_due`] against the timer and calls `on_stop_timer`;
//! - every part is logged in the **journal** in the last 64 KiB of the on-board flash
//!   (`src/flash.rs`): a session start, a checkpoint every 250 ms, the end.
//!
//! Every error ends in the safe state: a pin, sensor or journal error faults the part
//! (enable inactive, alarm latched); a panic drives the two output pads directly.
//!
//! The calibration figures below (responsivity, area, feedback resistor, 365 nm line) are
//! placeholders: a real station takes them from its photodiode's calibration certificate.
//! Wiring and flashing: DEVELOPERS.md, "RP2040 board". Not a safety device: see SAFETY.md.

#![no_std]
#![no_main]

mod flash;

use ads1x1x::{channel, Ads1x1x, DataRate16Bit, FullScaleRange, TargetAddr};
use embedded_hal::digital::InputPin;
use photon_ledger::acquire::ads1x1x_adc::Ads1x1xAdc;
use photon_ledger::journal::record::{
    Body, CalibrationId, Checkpoint, ConfigDigest, SessionEnd, SessionId, SessionOutcome,
    SessionStart, StoredExposure, StoredIrradiance, StoredWavelength,
};
use photon_ledger::prelude::*;
use rp2040_hal::fugit::{ExtU32, RateExtU32};
use rp2040_hal::gpio::{FunctionI2C, Pin, PullUp};
use rp2040_hal::{clocks::init_clocks_and_plls, pac, Clock, Sio, Timer, Watchdog, I2C};

use flash::{BoardFlash, JOURNAL_SECTORS};

/// The second-stage boot loader for the Pico's W25Q080-compatible flash.
#[link_section = ".boot2"]
#[used]
pub static BOOT2_FIRMWARE: [u8; 256] = rp2040_boot2::BOOT_LOADER_W25Q080;

/// Crystal of the Pico.
const XTAL_HZ: u32 = 12_000_000;
/// The HAL timer's rate: the tick of every reading.
const TICK_HZ: u32 = 1_000_000;
/// GPIO numbers of the two outputs, for the panic handler (which cannot own the pins).
const ENABLE_GPIO: u32 = 15;
const ALARM_GPIO: u32 = 14;
/// Checkpoint interval, ticks (250 ms).
const CHECKPOINT_TICKS: u32 = 250_000;
/// Watchdog period, µs.
const WATCHDOG_US: u32 = 1_000_000;
/// Readings averaged for the dark offset at power-up (source off).
const DARK_READINGS: i32 = 64;

/// On a panic: enable output low (inactive), alarm output high (active), then stop. Writes the
/// SIO registers directly, whoever owns the pins.
#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    cortex_m::interrupt::disable();
    // SAFETY: single-cycle writes to the SIO set/clear registers; nothing else runs.
    let sio = unsafe { &*pac::SIO::ptr() };
    sio.gpio_out_clr()
        .write(|w| unsafe { w.bits(1 << ENABLE_GPIO) });
    sio.gpio_out_set()
        .write(|w| unsafe { w.bits(1 << ALARM_GPIO) });
    loop {
        cortex_m::asm::wfi();
    }
}

// -----------------------------------------------------------------------------------------
// The alarm output's pin type
// -----------------------------------------------------------------------------------------

// `CheckedAlarm` drives the alarm through a HAL pin and reads the pad back after every write,
// so a shorted or overloaded alarm line is an error (`AlarmLineError`) instead of passing
// silently. Its error type differs from the HAL pin's (`Infallible`): the controller takes
// both, and a failed alarm write comes back as `PinError::Alarm`.
mod checked_alarm {
    use embedded_hal::digital::{ErrorKind, ErrorType, OutputPin, StatefulOutputPin};
    use rp2040_hal::gpio::{FunctionSioOutput, Pin, PinId, PullType};

    /// The pad did not follow the output register.
    #[derive(Debug, Clone, Copy, PartialEq, Eq)]
    pub struct AlarmLineError;

    impl embedded_hal::digital::Error for AlarmLineError {
        fn kind(&self) -> ErrorKind {
            ErrorKind::Other
        }
    }

    /// An alarm output whose pad level is read back after each write.
    pub struct CheckedAlarm<I: PinId, P: PullType>(pub Pin<I, FunctionSioOutput, P>);

    impl<I: PinId, P: PullType> ErrorType for CheckedAlarm<I, P> {
        type Error = AlarmLineError;
    }

    impl<I: PinId, P: PullType> OutputPin for CheckedAlarm<I, P> {
        fn set_high(&mut self) -> Result<(), AlarmLineError> {
            let _ = self.0.set_high();
            self.check()
        }
        fn set_low(&mut self) -> Result<(), AlarmLineError> {
            let _ = self.0.set_low();
            self.check()
        }
    }

    impl<I: PinId, P: PullType> CheckedAlarm<I, P> {
        fn check(&mut self) -> Result<(), AlarmLineError> {
            let commanded = self.0.is_set_high().unwrap_or(false);
            let pad = embedded_hal::digital::InputPin::is_high(&mut self.0.as_input());
            match pad {
                Ok(level) if level == commanded => Ok(()),
                _ => Err(AlarmLineError),
            }
        }
    }
}

type EnablePin = Pin<
    rp2040_hal::gpio::bank0::Gpio15,
    rp2040_hal::gpio::FunctionSioOutput,
    rp2040_hal::gpio::PullDown,
>;
type AlarmPin =
    checked_alarm::CheckedAlarm<rp2040_hal::gpio::bank0::Gpio14, rp2040_hal::gpio::PullDown>;
type InterlockPin =
    Pin<rp2040_hal::gpio::bank0::Gpio16, rp2040_hal::gpio::FunctionSioInput, PullUp>;
type Controller = CuringController<EnablePin, AlarmPin, InterlockPin>;

// -----------------------------------------------------------------------------------------
// Configuration
// -----------------------------------------------------------------------------------------

/// The meter: ADS1115 (16-bit two's complement, ±2.048 V), one 100 kΩ transimpedance range,
/// 0.20 A/W over 1 mm² at 365 nm (placeholders for the certificate's figures), 1 MHz ticks.
fn meter() -> Option<Meter> {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.048),
            pga_gain: 1.0,
            coding: Coding::Bipolar,
            saturation_margin: 16,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_v_per_a(100e3),
            dark_offset: 0,
        }],
    )
    .ok()?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.20),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(TICK_HZ)?,
        sample_area: None,
    })
    .ok()
}

/// 20 mJ/cm² per part (± 2), an irradiance window of 20–400 W/m², a 2 ms LED-driver lag.
fn config() -> CuringConfig {
    CuringConfig {
        target: RadiantExposure::from_mj_per_cm2(20.0),
        tolerance: RadiantExposure::from_mj_per_cm2(2.0),
        lag: ActuatorLag::Delay { ticks: 2_000 },
        stop_policy: StopPolicy::Anticipate,
        window: IrradianceWindow {
            minimum: Some(IrradianceLimit {
                irradiance: Irradiance::from_w_per_m2(20.0),
                hold_off_ticks: 50_000,
            }),
            maximum: Some(IrradianceLimit {
                irradiance: Irradiance::from_w_per_m2(400.0),
                hold_off_ticks: 20_000,
            }),
            warm_up_ticks: 100_000,
        },
        light_off: LightOffCheck {
            fraction: 0.05,
            floor: Irradiance::from_w_per_m2(0.5),
            margin_ticks: 20_000,
        },
        lamp: Some(LampReference {
            reference: Irradiance::from_w_per_m2(100.0),
            maintenance_below: 0.7,
        }),
        // A page program of the journal (interrupts off, ~1 ms) fits well inside.
        max_gap_ticks: 100_000,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
        interlock_closed_level: ActiveLevel::Low,
    }
}

fn stored(h: RadiantExposure) -> StoredExposure {
    StoredExposure::from_uj_per_m2((h.j_per_m2().max(0.0) * 1e6) as u64)
}

fn stored_irradiance(e: Option<Irradiance>) -> StoredIrradiance {
    e.map_or(StoredIrradiance::ZERO, |e| {
        StoredIrradiance::from_mw_per_m2((e.w_per_m2() * 1e3) as i32)
    })
}

fn outcome(r: &PartRecord) -> SessionOutcome {
    match (r.fault, r.stop_reason) {
        (Some(CuringFault::Overexposure), _) => SessionOutcome::Overexposed,
        (Some(_), _) => SessionOutcome::Aborted,
        (None, StopReason::Target | StopReason::TargetTimer) => SessionOutcome::TargetMet,
        (None, _) => SessionOutcome::Abandoned,
    }
}

/// `now` is at or after `due` on the wrapping 32-bit tick counter.
fn reached(now: u32, due: u32) -> bool {
    now.wrapping_sub(due) < 1 << 31
}

// -----------------------------------------------------------------------------------------
// Main loop
// -----------------------------------------------------------------------------------------

#[rp2040_hal::entry]
fn main() -> ! {
    let Some(mut pac) = pac::Peripherals::take() else {
        panic!()
    };
    let mut watchdog = Watchdog::new(pac.WATCHDOG);
    let Ok(clocks) = init_clocks_and_plls(
        XTAL_HZ,
        pac.XOSC,
        pac.CLOCKS,
        pac.PLL_SYS,
        pac.PLL_USB,
        &mut pac.RESETS,
        &mut watchdog,
    ) else {
        panic!()
    };
    let sio = Sio::new(pac.SIO);
    let pins = rp2040_hal::gpio::Pins::new(
        pac.IO_BANK0,
        pac.PADS_BANK0,
        sio.gpio_bank0,
        &mut pac.RESETS,
    );
    let timer = Timer::new(pac.TIMER, &mut pac.RESETS, &clocks);

    // Outputs first, both inactive (low), before anything else can fail.
    let enable: EnablePin = pins
        .gpio15
        .into_push_pull_output_in_state(rp2040_hal::gpio::PinState::Low);
    let alarm_pin = pins
        .gpio14
        .into_push_pull_output_in_state(rp2040_hal::gpio::PinState::Low);
    let alarm: AlarmPin = checked_alarm::CheckedAlarm(alarm_pin);
    let interlock: InterlockPin = pins.gpio16.into_pull_up_input();
    let mut start_button = pins.gpio17.into_pull_up_input();
    let mut ack_button = pins.gpio18.into_pull_up_input();

    // ADS1115 on I²C0 (GP4 SDA, GP5 SCL), 400 kHz.
    let sda: Pin<_, FunctionI2C, PullUp> = pins.gpio4.reconfigure();
    let scl: Pin<_, FunctionI2C, PullUp> = pins.gpio5.reconfigure();
    let i2c = I2C::i2c0(
        pac.I2C0,
        sda,
        scl,
        400.kHz(),
        &mut pac.RESETS,
        clocks.system_clock.freq(),
    );
    let mut ads = Ads1x1x::new_ads1115(i2c, TargetAddr::default());
    let adc_ok = ads
        .set_full_scale_range(FullScaleRange::Within2_048V)
        .is_ok()
        && ads.set_data_rate(DataRate16Bit::Sps860).is_ok();
    let mut adc = Ads1x1xAdc::new(ads, || channel::DifferentialA0A1);

    let Some(meter) = meter() else { panic!() };
    let mut c: Controller = match Controller::new(meter, config(), enable, alarm, interlock) {
        Ok(c) => c,
        Err(_) => panic!(),
    };
    let now = || Ticks(timer.get_counter_low());
    if !adc_ok {
        let _ = c.fault(CuringFault::Sensor, now());
    }

    // Dark offset: source off, average a burst of readings.
    let mut dark_sum = 0i32;
    let mut dark_n = 0i32;
    while adc_ok && dark_n < DARK_READINGS {
        match adc.poll_code() {
            Ok(code) => {
                dark_sum = dark_sum.saturating_add(code);
                dark_n += 1;
            }
            Err(nb::Error::WouldBlock) => {}
            Err(nb::Error::Other(_)) => {
                let _ = c.fault(CuringFault::Sensor, now());
                break;
            }
        }
    }
    if dark_n == DARK_READINGS {
        let _ = c.set_dark_offset(RangeIndex(0), dark_sum / DARK_READINGS);
    }

    // The journal: mount what is there, else start an empty one.
    let Some(board_flash) = BoardFlash::take() else {
        panic!()
    };
    let Ok(jcfg) = JournalConfig::try_new::<BoardFlash>(0, JOURNAL_SECTORS, Retention::Ring) else {
        panic!()
    };
    // Blank or any readable content mounts; a failed mount (a newer format, a read error)
    // leaves the flash untouched and the journal off, and then no part starts.
    let mut journal = Journal::mount(board_flash, jcfg).ok();
    // A session left open by a power cut is closed as abandoned (its dose is not resumed:
    // a curing part whose exposure was interrupted is rejected, not topped up).
    if let Some(j) = journal.as_mut() {
        if let Some(open) = j.open_session().copied() {
            let last = open.checkpoint;
            let end = Body::End(SessionEnd {
                session: open.start.session,
                at: last.map_or(open.start.start, |cp| cp.at),
                delivered: last.map_or(StoredExposure::ZERO, |cp| cp.delivered),
                elapsed_ticks: last.map_or(0, |cp| cp.at.wrapping_since(open.start.start)),
                min: StoredIrradiance::ZERO,
                mean: StoredIrradiance::ZERO,
                max: StoredIrradiance::ZERO,
                outcome: SessionOutcome::Abandoned,
                events: 0,
            });
            let _ = j.append(&end);
        }
    }

    let mut part = 0u32;
    let mut session: Option<SessionId> = None;
    let mut next_checkpoint = 0u32;
    let mut start_was_pressed = false;
    // From here on a stalled loop resets the chip (the outputs then float: see the wiring's
    // pull-down on the enable line). The longest blocking step is a sector erase between
    // parts (at most 400 ms on the Pico's flash).
    watchdog.start(WATCHDOG_US.micros());
    loop {
        watchdog.feed();
        let t = now();

        // The start button (on a press): a paused part resumes (guard closed again); otherwise
        // a new part starts when no part is active and the journal can record it.
        let pressed = start_button.is_low().unwrap_or(false);
        if pressed && !start_was_pressed {
            if c.phase() == CuringPhase::Paused {
                let _ = c.resume(t);
            } else if session.is_none() && journal.is_some() {
                part = part.wrapping_add(1);
                if c.start(PartId(part), t).is_ok() {
                    let start = SessionStart {
                        session: SessionId(0),
                        start: t,
                        tick_rate_hz: TICK_HZ,
                        config_digest: ConfigDigest(0),
                        calibration: CalibrationId(1),
                        wavelength: StoredWavelength::from_pm(365_000),
                        target: stored(c.config().target),
                        interval_ticks: CHECKPOINT_TICKS,
                        max_irradiance: StoredIrradiance::from_mw_per_m2(400_000),
                    };
                    session = match journal.as_mut().map(|j| j.begin_session(start)) {
                        Some(Ok(id)) => Some(id),
                        // A run that cannot be recorded is stopped at once.
                        _ => {
                            let _ = c.fault(CuringFault::Aborted, t);
                            let _ = c.finish(t);
                            None
                        }
                    };
                    next_checkpoint = t.0.wrapping_add(CHECKPOINT_TICKS);
                }
            }
        }
        start_was_pressed = pressed;

        // Acknowledge a latched alarm (refused while a part is active).
        if ack_button.is_low().unwrap_or(false) && c.alarm_latched() {
            let _ = c.acknowledge_alarm();
        }

        // A reading: the controller reads the interlock with it.
        match adc.poll_code() {
            Ok(code) => {
                let r = Reading {
                    code,
                    range: RangeIndex(0),
                    at: now(),
                };
                // Errors already put the controller in the safe state.
                let _ = c.on_reading(&r);
            }
            Err(nb::Error::WouldBlock) => {
                // Between readings: the guard may open, and the stop may fall due.
                if session.is_some() {
                    let _ = c.poll_interlock(t);
                }
            }
            Err(nb::Error::Other(_)) => {
                let _ = c.fault(CuringFault::Sensor, t);
            }
        }
        if let Some(due) = c.stop_due() {
            let t = now();
            if reached(t.0, due.0) {
                let _ = c.on_stop_timer(t);
            }
        }

        // Journal: checkpoints while the part runs; the end record when it is over.
        if let (Some(id), Some(j)) = (session, journal.as_mut()) {
            let t = now();
            let over = matches!(c.phase(), CuringPhase::Complete | CuringPhase::Faulted(_));
            if over {
                if let Ok(rec) = c.finish(t) {
                    let end = Body::End(SessionEnd {
                        session: id,
                        at: t,
                        delivered: stored(rec.delivered),
                        elapsed_ticks: rec.end.wrapping_since(rec.start),
                        min: stored_irradiance(rec.min),
                        mean: stored_irradiance(rec.mean),
                        max: stored_irradiance(rec.peak),
                        outcome: outcome(&rec),
                        events: rec.events,
                    });
                    let _ = j.append(&end);
                    session = None;
                }
            } else if reached(t.0, next_checkpoint) {
                let delivered = c.delivered();
                // Bound: what may arrive before the next checkpoint at the present irradiance.
                let bound = RadiantExposure::from_j_per_m2(
                    delivered.j_per_m2()
                        + c.irradiance().w_per_m2().max(0.0) * f64::from(CHECKPOINT_TICKS)
                            / f64::from(TICK_HZ),
                );
                let cp = Body::Checkpoint(Checkpoint {
                    session: id,
                    at: t,
                    delivered: stored(delivered),
                    bound: stored(bound),
                    min: StoredIrradiance::ZERO,
                    mean: stored_irradiance(Some(c.irradiance())),
                    max: stored_irradiance(Some(c.irradiance())),
                });
                if j.append(&cp).is_err() {
                    let _ = c.fault(CuringFault::Aborted, t);
                }
                next_checkpoint = t.0.wrapping_add(CHECKPOINT_TICKS);
            }
        } else if journal.as_ref().is_some_and(|j| j.needs_maintenance()) {
            // Erasing the spare sector takes tens of milliseconds: only between parts.
            if let Some(j) = journal.as_mut() {
                let _ = j.maintain();
            }
        }
    }
}
