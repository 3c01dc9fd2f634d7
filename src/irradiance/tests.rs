//! Unit tests of [`super`].

use super::*;
use crate::frontend::{AdcSpec, AmplifierRange, Coding};
use crate::quantity::{Transimpedance, Voltage, Wavelength};

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

fn front_end() -> FrontEnd {
    FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.5),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 0,
        }],
    )
    .unwrap()
}

#[test]
fn sensor_chain_inverts_exactly() {
    // Sensor-chain check (computed from definitions): R = 0.20 A/W, area 1 mm²,
    // E = 10 W/m² → P = 10 µW, I = 2.0 µA; 100 kΩ → 0.200 V; inverting gives 10 W/m².
    let cal = Calibration::Responsivity {
        responsivity: Responsivity::from_a_per_w(0.20),
        active_area: Area::from_mm2(1.0),
    };
    let k = cal.factor().unwrap();
    let e = Irradiance::from_w_per_m2(Current::from_ua(2.0).a() * k.w_per_m2_per_a());
    assert!(rel(e.w_per_m2(), 10.0) < 1e-12);
    let m = Meter::new(MeterConfig {
        front_end: front_end(),
        calibration: cal,
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap();
    // 0.200 V at 2.5 V / 65 536 codes is 5242.88 codes.
    let volts_per_code = 2.5 / 65_536.0;
    let e = m.irradiance(5243, RangeIndex(0));
    assert!(rel(e.w_per_m2(), 10.0 * 5243.0 * volts_per_code / 0.2) < 1e-12);
}

#[test]
fn photon_irradiance_at_365_nm() {
    // Worked conversion, computed from the exact SI 2019 constants:
    // 10 W/m² at 365 nm = 30.5116 µmol m⁻² s⁻¹.
    let m = Meter::new(MeterConfig {
        front_end: front_end(),
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e6)),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1).unwrap(),
        sample_area: Some(Area::from_cm2(2.0)),
    })
    .unwrap();
    let q = m.photon_irradiance(Irradiance::from_w_per_m2(10.0));
    assert!(rel(q.umol_per_m2_s(), 30.5116) < 2e-6);
    assert!(rel(q.photons_per_m2_s(), 1.837_453e19) < 1e-6);
    let n = m
        .photon_amount(RadiantExposure::from_j_per_m2(10.0))
        .unwrap();
    assert!(rel(n.umol(), 30.5116 * 2e-4) < 2e-6);
}

#[test]
fn invalid_calibration_is_named() {
    let bad_r = Calibration::Responsivity {
        responsivity: Responsivity::from_a_per_w(0.0),
        active_area: Area::from_mm2(1.0),
    };
    assert_eq!(bad_r.factor(), Err(CalibrationError::Responsivity));
    let bad_a = Calibration::Responsivity {
        responsivity: Responsivity::from_a_per_w(0.1),
        active_area: Area::from_mm2(f64::NAN),
    };
    assert_eq!(bad_a.factor(), Err(CalibrationError::ActiveArea));
    let bad_k = Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(-1.0));
    assert_eq!(bad_k.factor(), Err(CalibrationError::Factor));
    let m = Meter::new(MeterConfig {
        front_end: front_end(),
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1.0)),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(1).unwrap(),
        sample_area: Some(Area::from_m2(0.0)),
    });
    assert_eq!(m, Err(MeterError::SampleArea));
}
