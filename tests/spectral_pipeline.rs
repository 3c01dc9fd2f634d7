//! End to end: a spectral configuration feeds the meter and the dose integrator, and every
//! weighted read-out is a constant times the one radiant-exposure integral.

use photon_ledger::dose::{Integrator, Rounding};
use photon_ledger::irradiance::calibration::{
    accept, CalibrationRecord, CalibrationSource, Day, ExpiryPolicy, RangeCalibration, Temperature,
};
use photon_ledger::prelude::*;
use photon_ledger::spectral::spectrum::corrected_certificate;
use photon_ledger::spectral::weighting::{TimeLimit, WeightedExposure};

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

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn weighted_exposure_is_a_constant_times_the_radiant_exposure() {
    // Synthetic inputs (an identity check, not data): a UV-B LED and a detector whose
    // relative responsivity rises linearly over 250–400 nm.
    let det_table: Spectrum<8> = Spectrum::from_nm(&[(250.0, 0.5), (400.0, 1.0)]).unwrap();
    let detector = Detector::new(
        det_table.as_ref(),
        Wavelength::from_nm(310.0),
        Responsivity::from_a_per_w(0.1),
    )
    .unwrap();
    let source = Source::Led {
        peak: Wavelength::from_nm(310.0),
        fwhm: Wavelength::from_nm(10.0),
    };
    let band = WavelengthRange::from_nm(250.0, 400.0).unwrap();
    let rule = IntegrationRule::default();
    let set = FactorSet::new(
        &source,
        band,
        &detector,
        &[Weighting::UvHazard, Weighting::CIE_ERYTHEMA],
        &rule,
    )
    .unwrap();

    let area = Area::from_mm2(1.0);
    let meter = Meter::with_band_factors(
        front_end(),
        Calibration::from_spectral(set.spectral(), area),
        set.spectral().band_factors().unwrap(),
        TickRate::from_hz(1000).unwrap(),
        None,
    )
    .unwrap();
    // The Meter's photon factor is the band's, computed from the spectrum.
    assert_eq!(meter.band().photons_per_j(), set.spectral().photons_per_j());

    let hazard = set.factor(WeightingKind::UvHazard).unwrap();
    // Stop at the ICNIRP 2004 daily limit, 30 J/m² effective, converted once to band J/m²
    // and rounded by the integrator so that it trips no later than the limit.
    let limit = hazard
        .band_exposure_for(WeightedExposure::from_j_per_m2(
            30.0,
            WeightingKind::UvHazard,
        ))
        .unwrap();
    let mut integ = Integrator::new(&meter, 100);
    let id = integ.add_threshold(limit, Rounding::NotAfter).unwrap();

    let code = 20_000;
    let e = meter.irradiance(code, RangeIndex(0));
    let mut t = 0u32;
    let mut tripped_at = None;
    while t <= 4_000_000 {
        let step = integ.accept(code, RangeIndex(0), Ticks(t)).unwrap();
        if step.crossed.contains(id) {
            tripped_at = Some(t);
            break;
        }
        t += 100;
    }
    let h = integ.exposure();
    let h_eff = set.weighted_exposure(WeightingKind::UvHazard, h).unwrap();
    // One integral, many units: weighted = fraction × radiant, exactly as configured.
    assert!(rel(h_eff.j_per_m2(), hazard.fraction() * h.j_per_m2()) < 1e-15);
    let sed = set.sed(h).unwrap();
    assert!(
        rel(
            sed,
            set.factor(WeightingKind::CieErythema).unwrap().fraction() * h.j_per_m2() / 100.0
        ) < 1e-15
    );
    // The limit trips at the first sample at or after t_max = 30/E_eff (IEC 62471 §4.3.1):
    // a sampled integrator sees the crossing up to one sample interval (0.1 s) late.
    let t_trip = f64::from(tripped_at.unwrap()) / 1000.0;
    let TimeLimit::Within(t_max) = set.hazard_max_time(e).unwrap() else {
        unreachable!("a non-zero effective irradiance has a limit")
    };
    assert!(
        t_trip >= t_max.s() && t_trip < t_max.s() + 0.1 + 1e-9,
        "{t_trip} vs {}",
        t_max.s()
    );
    let e_eff = set
        .weighted_irradiance(WeightingKind::UvHazard, e)
        .unwrap()
        .w_per_m2();
    assert!(h_eff.j_per_m2() >= 30.0 && h_eff.j_per_m2() <= 30.0 + e_eff * 0.1 + 1e-9);
}

#[test]
fn certificate_under_one_source_used_under_another() {
    // The detector was calibrated under a 365 nm line (record), and is used under a 395 nm LED.
    let det_table: Spectrum<8> = Spectrum::from_nm(&[(300.0, 1.0), (420.0, 1.6)]).unwrap();
    let mut ranges = heapless::Vec::new();
    ranges
        .push(RangeCalibration {
            gain: Transimpedance::from_kohm(100.0),
            dark_offset: 0,
        })
        .unwrap();
    let record = CalibrationRecord {
        serial: photon_ledger::irradiance::calibration::serial("DEMO-1").unwrap(),
        calibrated_on: Day(100),
        due: Day(465),
        factor: IrradiancePerCurrent::from_w_per_m2_per_a(4.0e6),
        active_area: None,
        relative_uncertainty: 0.04,
        temperature_coefficient_per_k: 0.0,
        reference_temperature: Temperature::from_celsius(23.0),
        source: CalibrationSource::Line(Wavelength::from_nm(365.0)),
        ranges,
    };
    let stored = record.encode().unwrap();
    let ok = accept(&stored, Day(200), ExpiryPolicy::Refuse).unwrap();
    let band = WavelengthRange::from_nm(315.0, 420.0).unwrap();
    let k = corrected_certificate(
        ok.record
            .factor_at(Temperature::from_celsius(23.0))
            .unwrap(),
        det_table.as_ref(),
        band,
        &ok.record.source.to_source().unwrap(),
        &Source::Led {
            peak: Wavelength::from_nm(395.0),
            fwhm: Wavelength::from_nm(12.0),
        },
        &IntegrationRule::default(),
    )
    .unwrap();
    // The detector is more sensitive at 395 nm than at 365 nm, so the corrected factor is
    // smaller (F* < 1); the exact value is the CIE ILV 17-25-115 ratio computed in spectrum.rs.
    assert!(k.w_per_m2_per_a() < 4.0e6);
    let meter = Meter::new(MeterConfig {
        front_end: front_end(),
        calibration: Calibration::Certificate(k),
        band: Band::Led {
            peak: Wavelength::from_nm(395.0),
            fwhm: Wavelength::from_nm(12.0),
        },
        tick_rate: TickRate::from_hz(1000).unwrap(),
        sample_area: None,
    })
    .unwrap();
    assert_eq!(meter.calibration(), k);
    // Expired under Refuse: not usable.
    assert!(accept(&stored, Day(465), ExpiryPolicy::Refuse).is_err());
}
