// Shared by the `nopanic_*` binaries (included with `#[path]`, not a module of the library,
// so that nothing with a panic path of its own comes along).
//
// The panic handler calls a function that is declared but defined nowhere: if any panic
// path survives optimisation (release, fat LTO, one codegen unit, and the library compiled
// with overflow checks), linking fails with `undefined symbol: photon_ledger_panic_path_survived`.

// Not every binary uses every helper.
#![allow(dead_code)]

use core::hint::black_box;

extern "C" {
    fn photon_ledger_panic_path_survived() -> !;
}

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    // SAFETY: never executed when the binary links: the symbol exists nowhere.
    unsafe { photon_ledger_panic_path_survived() }
}

/// A pin error (an I/O expander that did not answer).
#[derive(Debug, Clone, Copy)]
pub struct PinFault;

impl embedded_hal::digital::Error for PinFault {
    fn kind(&self) -> embedded_hal::digital::ErrorKind {
        embedded_hal::digital::ErrorKind::Other
    }
}

/// A pin whose every write returns what `black_box` says (so the error paths stay).
pub struct OpaquePin;

impl embedded_hal::digital::ErrorType for OpaquePin {
    type Error = PinFault;
}

impl embedded_hal::digital::OutputPin for OpaquePin {
    fn set_low(&mut self) -> Result<(), PinFault> {
        black_box(Ok(()))
    }
    fn set_high(&mut self) -> Result<(), PinFault> {
        black_box(Ok(()))
    }
}

/// Format a value with `Display` into a fixed buffer and keep the result.
pub fn show<T: core::fmt::Display>(v: &T) {
    use core::fmt::Write;
    let mut s: heapless::String<96> = heapless::String::new();
    let _ = write!(s, "{v}");
    black_box(s.len());
}

/// Leave QEMU with success (reaching here means the calls returned).
pub fn done() -> ! {
    cortex_m_semihosting::debug::exit(cortex_m_semihosting::debug::EXIT_SUCCESS);
    #[allow(clippy::empty_loop)]
    loop {}
}

/// A front end from opaque values.
pub fn front_end(
) -> Result<photon_ledger::frontend::FrontEnd, photon_ledger::frontend::FrontEndError> {
    use photon_ledger::prelude::*;
    let spec = black_box(AdcSpec {
        bits: 12,
        reference: Voltage::from_v(3.3),
        pga_gain: 1.0,
        coding: Coding::Unipolar,
        saturation_margin: 2,
    });
    let ranges = black_box([
        AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 4,
        },
        AmplifierRange {
            gain: Transimpedance::from_kohm(10.0),
            dark_offset: 3,
        },
    ]);
    let n = black_box(2usize).min(2);
    FrontEnd::new(spec, ranges.get(..n).unwrap_or(&[]))
}

/// A meter from opaque values.
pub fn meter(fe: photon_ledger::frontend::FrontEnd) -> Option<photon_ledger::irradiance::Meter> {
    use photon_ledger::prelude::*;
    let band = if black_box(true) {
        Band::Led {
            peak: Wavelength::from_nm(405.0),
            fwhm: Wavelength::from_nm(15.0),
        }
    } else {
        Band::Line(Wavelength::from_nm(365.0))
    };
    let m = Meter::new(MeterConfig {
        front_end: fe,
        calibration: black_box(Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        }),
        band: black_box(band),
        tick_rate: TickRate::from_hz(black_box(1_000))?,
        sample_area: black_box(Some(Area::from_cm2(2.0))),
    });
    if let Err(e) = &m {
        show(e);
    }
    m.ok()
}
