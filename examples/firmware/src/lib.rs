//! Shared parts of the firmware examples: the simulated front end (a lamp model behind a
//! 12-bit ADC), output pins whose state the firmware can check, an independent reference
//! integral, stack painting, instruction-count markers and the semihosting exit.
//!
//! Everything here is demonstration data for emulation (QEMU), not a calibration of any
//! real detector.

#![no_std]

use core::convert::Infallible;
use core::sync::atomic::{AtomicBool, AtomicU32, Ordering};

use cortex_m_rt::{exception, ExceptionFrame};
use cortex_m_semihosting::{debug, hprintln};
use photon_ledger::prelude::*;

pub mod markers;
pub mod profile_const;
pub mod stack;

// ---------------------------------------------------------------------------------------
// The demonstration meter (invented values, for the examples only)
// ---------------------------------------------------------------------------------------

/// ADC resolution, bits.
pub const ADC_BITS: u8 = 12;
/// ADC reference, volts.
pub const VREF_V: f64 = 3.3;
/// Saturation margin, codes.
pub const SAT_MARGIN: u32 = 2;
/// Transimpedance of the single range, ohms.
pub const RF_OHM: f64 = 100e3;
/// Dark code of the single range.
pub const DARK_CODE: i32 = 4;
/// Detector responsivity, A/W.
pub const RESPONSIVITY_A_PER_W: f64 = 0.2;
/// Detector active area, mm².
pub const AREA_MM2: f64 = 1.0;
/// Tick rate of the timestamps, Hz.
pub const TICK_HZ: u32 = 1_000;
/// Sample spacing, ticks (100 samples per second).
pub const SAMPLE_TICKS: u32 = 10;

/// The demonstration meter: 12-bit ADC at 3.3 V, one 100 kΩ range, 0.2 A/W over 1 mm²,
/// a 365 nm line source, 1 kHz ticks.
#[inline(never)]
pub fn demo_meter() -> Option<Meter> {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: ADC_BITS,
            reference: Voltage::from_v(VREF_V),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: SAT_MARGIN,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_v_per_a(RF_OHM),
            dark_offset: DARK_CODE,
        }],
    )
    .ok()?;
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(RESPONSIVITY_A_PER_W),
            active_area: Area::from_mm2(AREA_MM2),
        },
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(TICK_HZ)?,
        sample_area: None,
    })
    .ok()
}

/// A curing session configuration: target and tolerance in mJ/cm², 100 ms maximum gap.
pub fn curing_config(target_mj_per_cm2: f64, tolerance_mj_per_cm2: f64) -> SessionConfig {
    SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(target_mj_per_cm2)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(
            tolerance_mj_per_cm2,
        )),
        max_gap_ticks: 100,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    }
}

/// J/m² per integer unit (one net code for one tick, counted twice), computed from the
/// definitions of the chain (code → V → A → W/m², trapezoid ½, ticks → s), independently of
/// the library.
pub fn reference_j_per_m2_per_unit() -> f64 {
    let volts_per_code = VREF_V / 4096.0;
    let amps_per_code = volts_per_code / RF_OHM;
    let w_per_m2_per_a = 1.0 / (RESPONSIVITY_A_PER_W * AREA_MM2 * 1e-6);
    0.5 * amps_per_code * w_per_m2_per_a / TICK_HZ as f64
}

/// A dose in J/m² expressed in integer units of the reference integral.
pub fn units_of_mj_per_cm2(mj_per_cm2: f64) -> f64 {
    mj_per_cm2 * 10.0 / reference_j_per_m2_per_unit()
}

// ---------------------------------------------------------------------------------------
// Simulated lamp + ADC
// ---------------------------------------------------------------------------------------

/// A lamp seen through the simulated ADC: a linear warm-up to `steady` net codes, a small
/// repeating ripple, and a shutter that follows the enable output (or is stuck open).
#[derive(Debug, Clone)]
pub struct Lamp {
    /// Net code at full output.
    pub steady: i32,
    /// Samples of linear warm-up.
    pub warmup: u32,
    /// Whether the shutter closes when the enable output goes inactive.
    pub shutter_works: bool,
    /// Sample index at which the ADC rails (a fault scenario), if any.
    pub saturate_at: Option<u32>,
    level: i32,
    n: u32,
}

/// Ripple added to the full output, codes, repeating every 4 samples.
const RIPPLE: [i32; 4] = [0, 3, -2, 1];

impl Lamp {
    /// A lamp with the given full output (net codes) and warm-up length (samples).
    pub const fn new(steady: i32, warmup: u32, shutter_works: bool) -> Self {
        Self {
            steady,
            warmup,
            shutter_works,
            saturate_at: None,
            level: 0,
            n: 0,
        }
    }

    /// The next raw ADC code, given whether the enable output is active now.
    pub fn next_code(&mut self, enable_active: bool) -> i32 {
        let on = enable_active || !self.shutter_works;
        let n = self.n;
        self.n = self.n.wrapping_add(1);
        if self.saturate_at == Some(n) {
            return 4095;
        }
        if on {
            let ramp = if n >= self.warmup {
                self.steady
            } else {
                // warmup ≤ 1000 and steady < 4096 in these examples: no overflow.
                self.steady * n as i32 / self.warmup as i32
            };
            let ripple = RIPPLE.get((n % 4) as usize).copied().unwrap_or(0);
            self.level = ramp + ripple;
        } else {
            // The shutter closed: the light seen decays by half per sample.
            self.level /= 2;
        }
        (DARK_CODE + self.level).clamp(0, 4095)
    }

    /// Samples produced so far.
    pub const fn samples(&self) -> u32 {
        self.n
    }
}

// ---------------------------------------------------------------------------------------
// Independent reference integral
// ---------------------------------------------------------------------------------------

/// The trapezoid integral written out plainly (no library code): Σ (net_i + net_{i−1}) · Δt
/// in code·ticks, doubled, exactly in an `i64`.
#[derive(Debug, Clone, Copy, Default)]
pub struct Reference {
    last: Option<(u32, i32)>,
    /// The integral so far.
    pub sum: i64,
}

impl Reference {
    /// Add a sample with raw `code` at tick `at`.
    pub fn add(&mut self, code: i32, at: u32) {
        let net = code - DARK_CODE;
        if let Some((t0, n0)) = self.last {
            self.sum += i64::from(net + n0) * i64::from(at - t0);
        }
        self.last = Some((at, net));
    }
}

// ---------------------------------------------------------------------------------------
// Output pins whose state the firmware checks
// ---------------------------------------------------------------------------------------

/// The state of a simulated output pin: level and the number of edges.
#[derive(Debug)]
pub struct PinState {
    high: AtomicBool,
    rises: AtomicU32,
    falls: AtomicU32,
}

impl PinState {
    /// Low, no edges.
    pub const fn new() -> Self {
        Self {
            high: AtomicBool::new(false),
            rises: AtomicU32::new(0),
            falls: AtomicU32::new(0),
        }
    }
    /// Whether the pin is high.
    pub fn is_high(&self) -> bool {
        self.high.load(Ordering::Relaxed)
    }
    /// Low → high edges so far.
    pub fn rises(&self) -> u32 {
        self.rises.load(Ordering::Relaxed)
    }
    /// High → low edges so far.
    pub fn falls(&self) -> u32 {
        self.falls.load(Ordering::Relaxed)
    }
    fn set(&self, high: bool) {
        // Single core, one writer (the session): load + store is enough (no CAS on the M0).
        if high != self.is_high() {
            let c = if high { &self.rises } else { &self.falls };
            c.store(c.load(Ordering::Relaxed).wrapping_add(1), Ordering::Relaxed);
        }
        self.high.store(high, Ordering::Relaxed);
    }
}

impl Default for PinState {
    fn default() -> Self {
        Self::new()
    }
}

/// An embedded-hal output pin backed by a [`PinState`].
#[derive(Debug, Clone, Copy)]
pub struct SimPin(pub &'static PinState);

impl embedded_hal::digital::ErrorType for SimPin {
    type Error = Infallible;
}

impl embedded_hal::digital::OutputPin for SimPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.set(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.set(true);
        Ok(())
    }
}

/// The session type of the examples.
pub type DemoSession = Session<SimPin, SimPin>;

/// Build the demonstration session into `slot` (a static in the examples), in a frame of
/// its own, so that the temporaries of construction (meter, integrator, `Result`) are gone
/// before the run starts and do not add to the stack high-water mark. Leaves `None` on a
/// configuration error.
#[inline(never)]
pub fn init_session(
    slot: &mut Option<DemoSession>,
    config: SessionConfig,
    en: &'static PinState,
    al: &'static PinState,
) {
    *slot = None;
    let Some(meter) = demo_meter() else { return };
    if let Ok(s) = DemoSession::new(meter, config, SimPin(en), SimPin(al)) {
        *slot = Some(s);
    }
}

// ---------------------------------------------------------------------------------------
// Checks and exit
// ---------------------------------------------------------------------------------------

/// Counts failed checks and prints each one.
#[derive(Debug, Default)]
pub struct Checks {
    failed: u32,
    passed: u32,
}

impl Checks {
    /// A fresh counter.
    pub const fn new() -> Self {
        Self {
            failed: 0,
            passed: 0,
        }
    }
    /// Record a check.
    pub fn check(&mut self, what: &str, ok: bool) {
        if ok {
            self.passed += 1;
            hprintln!("  ok   {}", what);
        } else {
            self.failed += 1;
            hprintln!("  FAIL {}", what);
        }
    }
    /// Record an equality of two integers.
    pub fn eq(&mut self, what: &str, got: i64, want: i64) {
        if got == want {
            self.passed += 1;
            hprintln!("  ok   {} = {}", what, got);
        } else {
            self.failed += 1;
            hprintln!("  FAIL {}: got {}, expected {}", what, got, want);
        }
    }
    /// Print the summary and leave QEMU with success (all passed) or failure.
    pub fn finish(&self, name: &str) -> ! {
        hprintln!("{}: {} passed, {} failed", name, self.passed, self.failed);
        exit(self.failed == 0 && self.passed > 0)
    }
}

/// Leave QEMU through semihosting.
pub fn exit(success: bool) -> ! {
    debug::exit(if success {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    #[allow(clippy::empty_loop)]
    loop {}
}

/// A dose in µJ/cm², rounded to an integer for printing (no float formatting in firmware).
pub fn uj_per_cm2(h: RadiantExposure) -> i64 {
    (h.mj_per_cm2() * 1000.0 + 0.5) as i64
}

/// `HardFault at PC 0x........` without `core::fmt`, so that the handler adds almost nothing
/// to the flash figures.
#[exception]
unsafe fn HardFault(ef: &ExceptionFrame) -> ! {
    let mut line = *b"HardFault at PC 0x00000000\n";
    let pc = ef.pc();
    for (i, slot) in line.iter_mut().skip(18).take(8).enumerate() {
        let nibble = (pc >> (28 - 4 * i)) & 0xF;
        *slot = b"0123456789abcdef"
            .get(nibble as usize)
            .copied()
            .unwrap_or(b'?');
    }
    if let Ok(mut out) = cortex_m_semihosting::hio::hstdout() {
        let _ = out.write_all(&line);
    }
    exit(false)
}
