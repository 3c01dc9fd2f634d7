//! The ADS1115 adapter over embedded-hal-mock I²C transactions.
//!
//! Register facts re-derived from the TI ADS1115 datasheet (SBAS444), not from the driver:
//! address 0b100_1000 with ADDR to GND; conversion register 0x00, config register 0x01;
//! config reset value 0x8583; bit 15 (OS) reads 1 when no conversion is in progress.

use embedded_hal::i2c::ErrorKind;
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use embedded_hal_mock::eh1::i2c::{Mock as I2cMock, Transaction as I2c};
use photon_ledger::acquire::ads1x1x_adc::Ads1x1xAdc;
use photon_ledger::prelude::*;

const ADDR: u8 = 0b100_1000;
const REG_CONVERSION: u8 = 0x00;
const REG_CONFIG: u8 = 0x01;
const CONFIG_RESET: [u8; 2] = [0x85, 0x83];
const CONFIG_BUSY: [u8; 2] = [0x05, 0x83]; // OS = 0: converting

fn adc(
    expect: &[I2c],
) -> (
    impl PhotodiodeAdc<Error = ads1x1x::Error<ErrorKind>>,
    I2cMock,
) {
    let i2c = I2cMock::new(expect);
    let dev = ads1x1x::Ads1x1x::new_ads1115(i2c.clone(), ads1x1x::TargetAddr::default());
    (
        Ads1x1xAdc::new(dev, || ads1x1x::channel::DifferentialA0A1),
        i2c,
    )
}

fn one_conversion(code: [u8; 2]) -> Vec<I2c> {
    vec![
        // Idle → start a conversion.
        I2c::write_read(ADDR, vec![REG_CONFIG], CONFIG_RESET.to_vec()),
        I2c::write(ADDR, vec![REG_CONFIG, CONFIG_RESET[0], CONFIG_RESET[1]]),
        // Still converting.
        I2c::write_read(ADDR, vec![REG_CONFIG], CONFIG_BUSY.to_vec()),
        // Done → read the result.
        I2c::write_read(ADDR, vec![REG_CONFIG], CONFIG_RESET.to_vec()),
        I2c::write_read(ADDR, vec![REG_CONVERSION], code.to_vec()),
    ]
}

#[test]
fn one_shot_conversion_becomes_a_stamped_reading() {
    let (mut adc, mut i2c) = adc(&one_conversion([0x12, 0x34]));
    assert!(matches!(
        adc.poll_reading(RangeIndex(0), Ticks(5)),
        Err(nb::Error::WouldBlock)
    ));
    assert!(matches!(
        adc.poll_reading(RangeIndex(0), Ticks(6)),
        Err(nb::Error::WouldBlock)
    ));
    let r = adc.poll_reading(RangeIndex(0), Ticks(7)).unwrap();
    assert_eq!(
        r,
        Reading {
            code: 0x1234,
            range: RangeIndex(0),
            at: Ticks(7)
        }
    );
    i2c.done();
}

#[test]
fn negative_codes_are_sign_extended() {
    let (mut adc, mut i2c) = adc(&one_conversion([0xFF, 0xFE]));
    let mut r = adc.poll_code();
    while matches!(r, Err(nb::Error::WouldBlock)) {
        r = adc.poll_code();
    }
    assert_eq!(r.ok(), Some(-2));
    i2c.done();
}

#[test]
fn bus_error_is_passed_on_and_the_session_reaches_the_safe_state() {
    let (mut adc, mut i2c) = adc(&[
        I2c::write_read(ADDR, vec![REG_CONFIG], CONFIG_RESET.to_vec()).with_error(ErrorKind::Other),
    ]);
    let e = adc.poll_code();
    assert!(matches!(
        e,
        Err(nb::Error::Other(ads1x1x::Error::I2C(ErrorKind::Other)))
    ));
    i2c.done();

    // Firmware's response to a sensor error: fault the session, which drops the enable pin.
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.048),
            pga_gain: 1.0,
            coding: Coding::Bipolar,
            saturation_margin: 0,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_kohm(47.0),
            dark_offset: 0,
        }],
    )
    .unwrap();
    let meter = Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(2e5)),
        band: Band::Line(Wavelength::from_nm(254.0)),
        tick_rate: TickRate::from_hz(32_768).unwrap(),
        sample_area: None,
    })
    .unwrap();
    let mut en = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let mut al = PinMock::new(&[Pin::set(State::Low), Pin::set(State::High)]);
    let cfg = SessionConfig {
        target: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(10.0)),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_mj_per_cm2(1.0)),
        max_gap_ticks: 3_277,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    let mut s = Session::new(meter, cfg, en.clone(), al.clone()).unwrap();
    s.start().unwrap();
    s.fault(Fault::Sensor).unwrap();
    assert_eq!(s.phase(), Phase::Faulted(Fault::Sensor));
    en.done();
    al.done();
}
