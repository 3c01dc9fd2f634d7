//! Shared fixtures for the unit tests (compiled only for `cargo test`).

use crate::acquire::reading::TickRate;
use crate::frontend::{AdcSpec, AmplifierRange, Coding, FrontEnd};
use crate::irradiance::MeterConfig;
use crate::irradiance::{Calibration, Meter};
use crate::quantity::{IrradiancePerCurrent, Transimpedance, Voltage, Wavelength};
use crate::spectral::band::Band;

/// A meter with round numbers: 1 W/m² per net code in range 0, 10 W/m² per code in range 1,
/// 1000 ticks/s, a line at `nm`.
pub(crate) fn two_range_meter(nm: f64) -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(65.536),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &[
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1e6),
                dark_offset: 0,
            },
            AmplifierRange {
                gain: Transimpedance::from_v_per_a(1e5),
                dark_offset: 0,
            },
        ],
    )
    .unwrap();
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(1e9)),
        band: Band::Line(Wavelength::from_nm(nm)),
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap()
}
