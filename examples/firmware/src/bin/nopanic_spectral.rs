//! No-panic link check, API groups "spectrum", "weighting" and "calibration" (the
//! configuration-time spectral integrals, action spectra and read-outs, and the calibration
//! record). See `src/nopanic/common.rs`.
//!
//! The tables are invented shapes for the check, not data.

#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use photon_ledger::control::exposure::WeightFactor;
use photon_ledger::irradiance::calibration::{
    accept, check, serial, transfer, CalibrationRecord, CalibrationSource, Day, ExpiryPolicy,
    RangeCalibration, Temperature, TransferInputs, RECORD_LEN,
};
use photon_ledger::prelude::*;
use photon_ledger::spectral::spectrum::{
    air_refractivity, air_to_vacuum, band_integral, corrected_certificate, mercury_air_nm,
    mismatch_factor, weighted_fraction,
};
use photon_ledger::spectral::weighting::{
    cie_erythema, uv_hazard, uva_eye_max_time, Interpolation, UvaEyeRule, WeightedExposure,
    WeightedFactor,
};

#[path = "../nopanic/common.rs"]
mod common;
use common::*;

fn nm(v: f64) -> Wavelength {
    Wavelength::from_nm(black_box(v))
}

#[inline(never)]
fn tables() {
    // Valid, then each kind of invalid table (capacity, order, value, too short).
    let good = black_box([(300.0, 0.2), (350.0, 0.6), (400.0, 1.0), (450.0, 0.8)]);
    let unordered = black_box([(300.0, 0.2), (290.0, 0.6)]);
    let negative = black_box([(300.0, 0.2), (310.0, -1.0)]);
    let outside = black_box([(50.0, 0.2), (310.0, 1.0)]);
    for points in [
        &good[..],
        &unordered[..],
        &negative[..],
        &outside[..],
        &good[..1],
    ] {
        match Spectrum::<4>::from_nm(points) {
            Ok(s) => {
                black_box(s.as_ref().len());
            }
            Err(e) => show(&e),
        }
        match SpectrumRef::from_nm(points) {
            Ok(r) => {
                black_box(r.is_empty());
                black_box(r.span());
                for (w, v) in r.points() {
                    black_box((w.nm(), v));
                }
                black_box(r.linear_at(nm(333.3)));
                black_box(r.log_linear_at(nm(333.3)));
                black_box(r.linear_at(nm(1000.0)));
                if let Err(e) = r.check_positive() {
                    show(&e);
                }
            }
            Err(e) => show(&e),
        }
    }
    // Capacity exceeded.
    if let Err(e) = Spectrum::<2>::from_nm(&good) {
        show(&e);
    }
    let pts = black_box([(nm(300.0), 1.0), (nm(320.0), 0.0), (nm(340.0), 2.0)]);
    match Spectrum::<4>::from_points(&pts) {
        Ok(s) => {
            if let Err(e) = s.as_ref().check_positive() {
                show(&e);
            }
        }
        Err(e) => show(&e),
    }
    if let Err(e) = Spectrum::<2>::from_points(&pts) {
        show(&e);
    }
    for (lo, hi) in [
        (280.0, 315.0),
        (315.0, 280.0),
        (f64::NAN, 300.0),
        (50.0, 300.0),
    ] {
        match WavelengthRange::new(nm(lo), nm(hi)) {
            Ok(r) => {
                black_box((r.lo().nm(), r.hi().nm(), r.width_nm()));
                black_box(r.contains(nm(300.0)));
            }
            Err(e) => show(&e),
        }
        if let Err(e) = WavelengthRange::from_nm(black_box(lo), black_box(hi)) {
            show(&e);
        }
    }
    for step in [1.0, 0.0, 20.0, f64::NAN] {
        match IntegrationRule::with_max_step(nm(step)) {
            Ok(r) => {
                black_box(r.max_step().nm());
            }
            Err(e) => show(&e),
        }
    }
    black_box(IntegrationRule::default().max_step());
    for air in [
        mercury_air_nm::HG_253_652,
        mercury_air_nm::HG_365_015,
        100.0,
    ] {
        black_box(air_refractivity(nm(air)));
        black_box(air_to_vacuum(nm(air)).map(|w| w.nm()));
    }
}

#[inline(never)]
fn spectral() {
    let Ok(det_table) = SpectrumRef::from_nm(black_box(&[
        (250.0, 0.3),
        (300.0, 0.5),
        (350.0, 0.8),
        (400.0, 1.0),
        (450.0, 0.9),
    ])) else {
        return;
    };
    // A detector: bad responsivity, reference outside the table, then a good one.
    for (w, r) in [(310.0, -1.0), (600.0, 0.1), (310.0, 0.1)] {
        if let Err(e) = Detector::new(det_table, nm(w), Responsivity::from_a_per_w(black_box(r))) {
            show(&e);
        }
    }
    let Ok(detector) = Detector::new(det_table, nm(310.0), Responsivity::from_a_per_w(0.1)) else {
        return;
    };
    black_box(detector.relative().len());
    black_box(detector.reference().nm());
    black_box(detector.responsivity_at(nm(333.0)).a_per_w());
    let Ok(lamp_table) = SpectrumRef::from_nm(black_box(&[
        (280.0, 0.0),
        (300.0, 1.0),
        (320.0, 3.0),
        (360.0, 1.0),
        (400.0, 0.0),
    ])) else {
        return;
    };
    let led = Source::Led {
        peak: nm(310.0),
        fwhm: nm(10.0),
    };
    let sources = [
        led,
        Source::Line(nm(313.0)),
        Source::Tabulated(lamp_table),
        Source::Led {
            peak: nm(310.0),
            fwhm: nm(-1.0),
        },
        Source::from(Band::Line(nm(365.0))),
    ];
    let Ok(band) = WavelengthRange::from_nm(black_box(280.0), black_box(400.0)) else {
        return;
    };
    let Ok(narrow) = WavelengthRange::from_nm(black_box(200.0), black_box(230.0)) else {
        return;
    };
    let Ok(rule) = IntegrationRule::with_max_step(nm(1.0)) else {
        return;
    };
    let user = |id: u16| Weighting::Table {
        id: black_box(id),
        table: det_table,
        interpolation: Interpolation::LogLinear,
    };
    // Log-linear over a table with a zero: rejected.
    let bad_user = Weighting::Table {
        id: black_box(9),
        table: lamp_table,
        interpolation: Interpolation::LogLinear,
    };
    let weightings = [
        Weighting::None,
        Weighting::Window(band),
        Weighting::CIE_ERYTHEMA,
        Weighting::CieErythema {
            lower_limit: nm(100.0),
        },
        Weighting::UvHazard,
        Weighting::UvaUnweighted,
        user(7),
        Weighting::Table {
            id: 8,
            table: lamp_table,
            interpolation: Interpolation::Linear,
        },
        bad_user,
    ];
    for s in &sources {
        match band_integral(s, band, &rule) {
            Ok(v) => {
                black_box(v);
            }
            Err(e) => show(&e),
        }
        for w in &weightings {
            black_box(w.kind());
            black_box(w.value_at(nm(300.0)));
            match weighted_fraction(s, band, w, &rule) {
                Ok(v) => {
                    black_box(v);
                }
                Err(e) => show(&e),
            }
        }
        match mismatch_factor(det_table, band, &Weighting::CIE_ERYTHEMA, &led, s, &rule) {
            Ok(v) => {
                black_box(v);
            }
            Err(e) => show(&e),
        }
        if let Err(e) = mismatch_factor(det_table, narrow, &Weighting::None, &led, s, &rule) {
            show(&e);
        }
        for k in [1.0e6, -1.0] {
            let factor = IrradiancePerCurrent::from_w_per_m2_per_a(black_box(k));
            match corrected_certificate(factor, det_table, band, &led, s, &rule) {
                Ok(f) => {
                    black_box(f.w_per_m2_per_a());
                }
                Err(e) => show(&e),
            }
        }
        match SpectralFactors::new(s, band, &detector, &rule) {
            Ok(f) => {
                black_box(f.band().lo());
                black_box(f.effective_responsivity().a_per_w());
                black_box(f.photons_per_j());
                black_box(f.mol_per_j());
                black_box(f.band_factors());
                black_box(Calibration::from_spectral(&f, Area::from_mm2(1.0)));
                for a in [1.0, 0.0] {
                    match f.irradiance_per_current(Area::from_mm2(black_box(a))) {
                        Ok(k) => {
                            black_box(k.w_per_m2_per_a());
                        }
                        Err(e) => show(&e),
                    }
                }
            }
            Err(e) => show(&e),
        }
    }
    // A factor set: too many weightings, a repeated kind, a failing one, then a good set.
    let many = [
        user(1),
        user(2),
        user(3),
        user(4),
        user(5),
        user(6),
        user(7),
    ];
    let sets: [&[Weighting<'_>]; 4] = [
        &many,
        &[Weighting::UvHazard, Weighting::UvHazard],
        &[Weighting::CieErythema {
            lower_limit: nm(100.0),
        }],
        &[
            Weighting::UvHazard,
            Weighting::CIE_ERYTHEMA,
            Weighting::UvaUnweighted,
            Weighting::None,
            user(7),
        ],
    ];
    for ws in sets {
        let set = match FactorSet::new(&led, band, &detector, black_box(ws), &rule) {
            Ok(set) => set,
            Err(e) => {
                show(&e);
                continue;
            }
        };
        let e = Irradiance::from_w_per_m2(black_box(0.5));
        let h = RadiantExposure::from_j_per_m2(black_box(40.0));
        black_box(set.spectral().photons_per_j());
        black_box(set.factor(WeightingKind::User(7)));
        black_box(set.weighted_irradiance(WeightingKind::UvHazard, e));
        black_box(set.weighted_exposure(WeightingKind::Window, h));
        black_box(
            set.uv_index(e)
                .map(|u| (u.value(), u.rounded(), u.category())),
        );
        black_box(set.sed(h));
        black_box(set.hazard_max_time(e));
        if let Some(f) = set.factor(WeightingKind::UvHazard) {
            readouts(f, e, h);
        }
    }
    if let Err(e) = WeightedFactor::new(&sources[3], band, &Weighting::UvHazard, &rule) {
        show(&e);
    }
}

fn readouts(f: WeightedFactor, e: Irradiance, h: RadiantExposure) {
    black_box(f.kind());
    black_box(f.fraction());
    black_box(WeightFactor::from_weighted(&f));
    let wi = f.irradiance(e);
    let we = f.exposure(h);
    black_box((
        wi.w_per_m2(),
        wi.kind(),
        wi.uv_index(),
        wi.max_exposure_time(),
    ));
    let dose = wi * Seconds::from_s(black_box(60.0));
    black_box((dose.j_per_m2(), dose.kind(), dose.sed()));
    black_box(we.fraction_of_daily_limit());
    let level = WeightedExposure::from_j_per_m2(black_box(30.0), WeightingKind::UvHazard);
    black_box(f.band_exposure_for(level));
    black_box(f.band_exposure_for(WeightedExposure::from_j_per_m2(
        30.0,
        WeightingKind::CieErythema,
    )));
}

#[inline(never)]
fn weighting() {
    for w in [200.0, 254.0, 297.5, 313.0, 350.0, 400.0, 401.0, f64::NAN] {
        black_box(cie_erythema(nm(w)));
        black_box(uv_hazard(nm(w)));
    }
    let edges = [
        (100.0, 280.0, 315.0, 400.0),
        (100.0, 280.0, 320.0, 400.0),
        (100.0, 320.0, 280.0, 400.0),
    ];
    for (c, b, a, e) in edges {
        match UvBandEdges::new(nm(c), nm(b), nm(a), nm(e)) {
            Ok(edges) => {
                for w in [150.0, 300.0, 317.0, 500.0] {
                    black_box(edges.classify(nm(w)));
                }
                black_box(edges.range(UvBand::UvB).width_nm());
            }
            Err(e) => show(&e),
        }
    }
    black_box(UvBandEdges::default().range(UvBand::UvA));
    for v in [0.01, 0.2, -1.0, f64::NAN, 1e300] {
        let u = UvIndex::from_erythemal_w_per_m2(black_box(v));
        black_box((u.value(), u.rounded(), u.category()));
        for rule in [UvaEyeRule::Iec62471, UvaEyeRule::Directive2006] {
            black_box(uva_eye_max_time(
                Irradiance::from_w_per_m2(black_box(v * 100.0)),
                rule,
            ));
            black_box(rule.allowance(Seconds::from_s(black_box(v * 1e4))));
        }
    }
}

fn record() -> CalibrationRecord {
    let mut ranges = heapless::Vec::new();
    for (g, d) in [(1.0e5, 4), (1.0e4, 3)] {
        let _ = ranges.push(RangeCalibration {
            gain: Transimpedance::from_v_per_a(black_box(g)),
            dark_offset: black_box(d),
        });
    }
    CalibrationRecord {
        serial: serial(black_box("PL-0042")).unwrap_or([b'?'; 16]),
        calibrated_on: Day(black_box(20_000)),
        due: Day(black_box(20_365)),
        factor: IrradiancePerCurrent::from_w_per_m2_per_a(black_box(5.0e6)),
        active_area: Some(Area::from_mm2(1.0)),
        relative_uncertainty: black_box(0.05),
        temperature_coefficient_per_k: black_box(0.001),
        reference_temperature: Temperature::from_celsius(black_box(25.0)),
        source: CalibrationSource::Led {
            peak: nm(365.0),
            fwhm: nm(10.0),
        },
        ranges,
    }
}

#[inline(never)]
fn calibration() {
    for s in ["PL-0042", "", "a serial that is too long", "tab\there"] {
        if let Err(e) = serial(black_box(s)) {
            show(&e);
        }
    }
    let good = record();
    black_box(good.serial_str());
    black_box(good.source.to_source());
    black_box(CalibrationSource::Tabulated { id: 3 }.to_source());
    let mut bad = good.clone();
    bad.due = Day(black_box(1));
    if let Err(e) = bad.encode() {
        show(&e);
    }
    let mut bad_gain = good.clone();
    if let Some(r) = bad_gain.ranges.get_mut(1) {
        r.gain = Transimpedance::from_v_per_a(black_box(0.0));
    }
    if let Err(e) = bad_gain.validate() {
        show(&e);
    }
    let Ok(bytes) = good.encode() else {
        return;
    };
    let mut corrupted = bytes;
    if let Some(b) = corrupted.get_mut(black_box(40)) {
        *b ^= 1;
    }
    let mut foreign = bytes;
    if let Some(b) = foreign.first_mut() {
        *b = black_box(b'X');
    }
    let inputs: [&[u8]; 5] = [
        &bytes,
        &corrupted,
        &foreign,
        bytes.get(..RECORD_LEN - 1).unwrap_or(&[]),
        &[],
    ];
    for b in inputs {
        let b = black_box(b);
        match CalibrationRecord::decode(b) {
            Ok(r) => {
                black_box(r.amplifier_ranges().len());
                for t in [25.0, 30.0, 1000.0, f64::NAN] {
                    match r.factor_at(Temperature::from_celsius(black_box(t))) {
                        Ok(k) => {
                            black_box(k.w_per_m2_per_a());
                        }
                        Err(e) => show(&e),
                    }
                    if let Ok(c) = r.calibration_at(Temperature::from_kelvin(black_box(t))) {
                        black_box(c);
                    }
                }
            }
            Err(e) => show(&e),
        }
        for today in [19_000, 20_100, 20_365, 21_000] {
            let today = Day(black_box(today));
            black_box(check(b, today));
            black_box(good.validity(today));
            for policy in [ExpiryPolicy::Refuse, ExpiryPolicy::Warn] {
                match accept(b, today, black_box(policy)) {
                    Ok(a) => {
                        black_box(a.warning);
                        black_box(a.record.due);
                    }
                    Err(e) => show(&e),
                }
            }
        }
    }
    let t = Temperature::from_kelvin(black_box(300.0));
    black_box((t.kelvin(), t.celsius()));
    let base = TransferInputs {
        reference: Irradiance::from_w_per_m2(50.0),
        reference_rel_u: 0.02,
        photocurrent: Current::from_a(1.0e-5),
        photocurrent_rel_u: 0.005,
        setup_rel_u: 0.01,
    };
    let cases = [
        base,
        TransferInputs {
            reference: Irradiance::from_w_per_m2(-1.0),
            ..base
        },
        TransferInputs {
            photocurrent: Current::from_a(0.0),
            ..base
        },
        TransferInputs {
            setup_rel_u: 0.9,
            ..base
        },
    ];
    for c in cases {
        match transfer(&black_box(c)) {
            Ok(t) => {
                black_box((t.factor, t.combined_rel_u, t.expanded_rel_u));
            }
            Err(e) => show(&e),
        }
    }
}

#[entry]
fn main() -> ! {
    tables();
    spectral();
    weighting();
    calibration();
    done()
}
