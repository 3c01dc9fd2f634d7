//! No-panic link check, API group "front end + meter" (reading, frontend, band, irradiance,
//! quantity). See `src/nopanic/common.rs`.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::prelude::*;

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
    let mut fe = black_box(fe);
    let mut adc = FnAdc::new(|| -> Result<i32, nb::Error<u8>> { black_box(Ok(2000)) });
    for n in 0..black_box(8u32) {
        let r = adc.poll_reading(RangeIndex(black_box(n as u8)), Ticks(black_box(n)));
        if let Ok(r) = r {
            match fe.net_code(&r) {
                Ok(net) => {
                    black_box(fe.volts(net));
                    black_box(fe.current(net, r.range));
                }
                Err(e) => show(&e),
            }
        }
        black_box(fe.set_dark_offset(RangeIndex(black_box(n as u8)), black_box(n as i32)));
        black_box(fe.amps_per_code(RangeIndex(n as u8)));
        black_box(fe.range(RangeIndex(n as u8)));
    }
    black_box(fe.range_count());
    black_box(fe.high_limit());
    black_box(fe.volts_per_code());
    if let Err(e) = BandFactors::new(&black_box(Band::Line(Wavelength::from_nm(black_box(
        254.0,
    ))))) {
        show(&e);
    }
    if let Ok(b) = BandFactors::new(&black_box(Band::Led {
        peak: Wavelength::from_nm(black_box(365.0)),
        fwhm: Wavelength::from_nm(black_box(10.0)),
    })) {
        black_box(b.mol_per_j());
        black_box(b.mean_photon_energy().ev());
        black_box(b.equivalent_wavelength().nm());
    }
    let Some(m) = meter(fe) else { done() };
    let m = black_box(m);
    for n in 0..black_box(4u8) {
        let e = m.irradiance(black_box(1234), RangeIndex(n));
        black_box(m.photon_irradiance(e).umol_per_m2_s());
        black_box(m.j_per_m2_per_unit(RangeIndex(n)));
    }
    let h = RadiantExposure::from_mj_per_cm2(black_box(12.5));
    black_box(m.photon_exposure(h).umol_per_m2());
    black_box(m.photon_amount(h).map(|a| a.photons()));
    black_box(m.irradiance_of_current(Current::from_ua(black_box(2.0))));
    black_box(m.calibration().w_per_m2_per_a());
    black_box(m.tick_rate().ticks_to_s(black_box(1500)));
    black_box(
        Wavelength::from_nm(black_box(405.0))
            .photon_energy()
            .kj_per_mol(),
    );
    black_box(
        Responsivity::from_quantum_efficiency(
            black_box(0.8),
            Wavelength::from_nm(black_box(405.0)),
        )
        .a_per_w(),
    );
    if let Err(e) = black_box(Calibration::Certificate(
        IrradiancePerCurrent::from_w_per_m2_per_a(black_box(-1.0)),
    ))
    .factor()
    {
        show(&e);
    }
    done()
}
