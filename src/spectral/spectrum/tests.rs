//! Unit tests of [`super`].

use super::*;
use crate::spectral::band::{BandError, MAX_WAVELENGTH_NM, MIN_WAVELENGTH_NM};
use crate::spectral::weighting::{uv_hazard, UvBand, UvBandEdges};

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

fn nm(x: f64) -> Wavelength {
    Wavelength::from_nm(x)
}

fn range(lo: f64, hi: f64) -> WavelengthRange {
    WavelengthRange::from_nm(lo, hi).unwrap()
}

/// Synthetic input: a detector flat at 1 from 100 to 2500 nm (an identity check, not data).
const FLAT: [(f64, f64); 2] = [(100.0, 1.0), (2500.0, 1.0)];

#[test]
fn tables_are_validated_into_named_errors() {
    type T = Spectrum<4>;
    assert_eq!(
        T::from_nm(&[(300.0, 1.0)]),
        Err(SpectrumError::TooFewPoints)
    );
    assert_eq!(
        T::from_nm(&[(300.0, 1.0), (300.0, 2.0)]),
        Err(SpectrumError::NotIncreasing { index: 1 })
    );
    assert_eq!(
        T::from_nm(&[(300.0, 1.0), (310.0, 2.0), (305.0, 1.0)]),
        Err(SpectrumError::NotIncreasing { index: 2 })
    );
    assert_eq!(
        T::from_nm(&[(f64::NAN, 1.0), (310.0, 2.0)]),
        Err(SpectrumError::Wavelength { index: 0 })
    );
    assert_eq!(
        T::from_nm(&[(300.0, 1.0), (3000.0, 2.0)]),
        Err(SpectrumError::Wavelength { index: 1 })
    );
    assert_eq!(
        T::from_nm(&[(300.0, 1.0), (310.0, -0.1)]),
        Err(SpectrumError::Value { index: 1 })
    );
    assert_eq!(
        T::from_nm(&[(300.0, f64::INFINITY), (310.0, 1.0)]),
        Err(SpectrumError::Value { index: 0 })
    );
    let five = [
        (300.0, 1.0),
        (301.0, 1.0),
        (302.0, 1.0),
        (303.0, 1.0),
        (304.0, 1.0),
    ];
    assert_eq!(
        T::from_nm(&five),
        Err(SpectrumError::Capacity { capacity: 4 })
    );
    assert_eq!(
        T::from_points(&[
            (nm(300.0), 1.0),
            (nm(301.0), 1.0),
            (nm(302.0), 1.0),
            (nm(303.0), 1.0),
            (nm(304.0), 1.0)
        ]),
        Err(SpectrumError::Capacity { capacity: 4 })
    );
    let ok = T::from_points(&[(nm(300.0), 1.0), (nm(310.0), 0.0)]).unwrap();
    assert_eq!(ok.as_ref().len(), 2);
    assert_eq!(ok.as_ref().span(), (nm(300.0), nm(310.0)));
    assert_eq!(
        SpectrumRef::from_nm(&[(300.0, 1.0), (310.0, 0.0)])
            .unwrap()
            .check_positive(),
        Err(SpectrumError::ZeroForLogInterpolation { index: 1 })
    );
}

#[test]
fn interpolation_linear_and_log_linear() {
    let t: Spectrum<4> = Spectrum::from_nm(&[(300.0, 1.0), (310.0, 100.0), (320.0, 0.0)]).unwrap();
    let t = t.as_ref();
    // Table points return their values exactly.
    assert_eq!(t.linear_at(nm(310.0)), Some(100.0));
    assert_eq!(t.log_linear_at(nm(310.0)), Some(100.0));
    assert_eq!(t.linear_at(nm(320.0)), Some(0.0));
    // Midpoints: arithmetic mean (linear), geometric mean (log-linear) — by definition.
    assert!(rel(t.linear_at(nm(305.0)).unwrap(), 50.5) < 1e-15);
    assert!(rel(t.log_linear_at(nm(305.0)).unwrap(), 10.0) < 1e-14);
    // Where a bracketing value is zero, log-linear falls back to linear.
    assert!(rel(t.log_linear_at(nm(315.0)).unwrap(), 50.0) < 1e-15);
    // Outside the table: no value.
    assert_eq!(t.linear_at(nm(299.999)), None);
    assert_eq!(t.log_linear_at(nm(320.001)), None);
}

#[test]
fn ranges_are_half_open_and_validated() {
    let uvb = range(280.0, 315.0);
    assert!(uvb.contains(nm(280.0)));
    assert!(!uvb.contains(nm(315.0)));
    assert!(rel(uvb.width_nm(), 35.0) < 1e-15);
    assert_eq!(
        WavelengthRange::from_nm(315.0, 315.0),
        Err(RangeError::Empty)
    );
    assert_eq!(
        WavelengthRange::from_nm(400.0, 315.0),
        Err(RangeError::Empty)
    );
    assert_eq!(WavelengthRange::from_nm(50.0, 315.0), Err(RangeError::Edge));
    assert_eq!(
        WavelengthRange::from_nm(280.0, f64::NAN),
        Err(RangeError::Edge)
    );
}

#[test]
fn flat_spectrum_oracle_uva_is_85() {
    // Computed from the definition E_UVA = ∫₃₁₅⁴⁰⁰ E_λ dλ (ICNIRP2004): a flat 1 W m⁻² nm⁻¹ spectrum
    // 280–400 nm has E_UVA = ∫₃₁₅⁴⁰⁰ = 85 W/m², exactly and by the trapezoid rule on a 1-nm
    // grid (a rectangle sum including both 315 and 400 nm samples would give 86).
    let flat: Spectrum<2> = Spectrum::from_nm(&[(280.0, 1.0), (400.0, 1.0)]).unwrap();
    let src = Source::Tabulated(flat.as_ref());
    let one_nm = IntegrationRule::with_max_step(nm(1.0)).unwrap();
    let uva = UvBandEdges::CIE.range(UvBand::UvA);
    let uvb = UvBandEdges::CIE.range(UvBand::UvB);
    for rule in [one_nm, IntegrationRule::default()] {
        assert!(rel(band_integral(&src, uva, &rule).unwrap(), 85.0) < 1e-12);
        assert!(rel(band_integral(&src, uvb, &rule).unwrap(), 35.0) < 1e-12);
        // UV-A unweighted weighting (315–400 nm) over the whole source: 85/120.
        let f =
            weighted_fraction(&src, range(280.0, 400.0), &Weighting::UvaUnweighted, &rule).unwrap();
        assert!(rel(f, 85.0 / 120.0) < 1e-12);
    }
}

#[test]
fn trapezoid_error_is_the_textbook_term() {
    // Computed from the rule itself: on a quadratic integrand f the composite trapezoid
    // rule errs by exactly (b − a) h² f'' / 12. Source 0 → 1 and detector 1 → 2 over
    // 300–400 nm (synthetic linear tables) give f = t(1 + t), t = (λ − 300)/100:
    // ∫ = 100 (1/2 + 1/3), f'' = 2e-4 nm⁻².
    let src: Spectrum<2> = Spectrum::from_nm(&[(300.0, 0.0), (400.0, 1.0)]).unwrap();
    let det: Spectrum<2> = Spectrum::from_nm(&[(300.0, 1.0), (400.0, 2.0)]).unwrap();
    let shape = Shape::new(&Source::Tabulated(src.as_ref())).unwrap();
    for h in [0.1, 1.0, 5.0] {
        let rule = IntegrationRule::with_max_step(nm(h)).unwrap();
        let got = integrate(&shape, Span::All, &[Term::Table(det.as_ref())], &rule);
        let exact = 100.0 * (0.5 + 1.0 / 3.0);
        let predicted = 100.0 * h * h * 2e-4 / 12.0;
        assert!(rel(got - exact, predicted) < 1e-6, "h={h}: {}", got - exact);
    }
    // Linear integrands are integrated exactly.
    let rule = IntegrationRule::with_max_step(nm(7.0)).unwrap();
    assert!(rel(integrate(&shape, Span::All, &[], &rule), 50.0) < 1e-14);
}

#[test]
fn integration_rule_is_validated() {
    assert_eq!(
        IntegrationRule::with_max_step(nm(0.0)),
        Err(SpectralError::Rule)
    );
    assert_eq!(
        IntegrationRule::with_max_step(nm(11.0)),
        Err(SpectralError::Rule)
    );
    assert_eq!(
        IntegrationRule::with_max_step(nm(f64::NAN)),
        Err(SpectralError::Rule)
    );
    assert_eq!(
        IntegrationRule::default().max_step(),
        nm(DEFAULT_MAX_STEP_NM)
    );
}

#[test]
fn a_line_belongs_to_one_half_open_band() {
    let rule = IntegrationRule::default();
    let uva = UvBandEdges::CIE.range(UvBand::UvA);
    let uvb = UvBandEdges::CIE.range(UvBand::UvB);
    let line = Source::Line(nm(315.0));
    assert_eq!(band_integral(&line, uva, &rule), Ok(1.0));
    assert_eq!(band_integral(&line, uvb, &rule), Ok(0.0));
    // A 400 nm line is outside UV-A [315, 400) but inside the closed S(λ) support.
    let l400 = Source::Line(nm(400.0));
    assert_eq!(band_integral(&l400, uva, &rule), Ok(0.0));
    let f = weighted_fraction(&l400, range(399.0, 401.0), &Weighting::UvHazard, &rule).unwrap();
    // ICNIRP 2004 Table 1: S(400 nm) = 0.000030.
    assert_eq!(f, 0.000_030);
}

#[test]
fn led_photons_per_joule_agree_with_the_band_module() {
    // Two independent integrations of the same model (energy grid in band.rs, wavelength
    // grid here) must agree; computed, no outside source.
    let rule = IntegrationRule::default();
    let det = SpectrumRef::from_nm(&FLAT).unwrap();
    let detector = Detector::new(det, nm(365.0), Responsivity::from_a_per_w(0.2)).unwrap();
    for (peak, fwhm) in [(365.0, 12.0), (405.0, 15.0), (280.0, 10.0)] {
        let band = Band::Led {
            peak: nm(peak),
            fwhm: nm(fwhm),
        };
        let want = BandFactors::new(&band).unwrap().photons_per_j();
        let f = SpectralFactors::new(&band.into(), range(100.0, 2500.0), &detector, &rule).unwrap();
        assert!(
            rel(f.photons_per_j(), want) < 1e-7,
            "{peak}: {} {want}",
            f.photons_per_j()
        );
        assert_eq!(f.band_factors().unwrap().photons_per_j(), f.photons_per_j());
    }
    // A line: exactly 1/E (computed from the exact SI 2019 constants: 0.008 359 347 229 ×
    // λ[nm] µmol s⁻¹ W⁻¹).
    let f = SpectralFactors::new(
        &Source::Line(nm(365.0)),
        range(300.0, 400.0),
        &detector,
        &rule,
    )
    .unwrap();
    assert!(rel(f.mol_per_j() * 1e6, 0.008_359_347_229 * 365.0) < 1e-10);
}

#[test]
fn detector_chain_reproduces_the_sensor_check() {
    // Sensor-chain check computed from I = R · E · A: R = 0.20 A/W, area 1 mm²,
    // E = 10 W/m² → I = 2.0 µA, and back to 10 W/m².
    let rule = IntegrationRule::default();
    let det = SpectrumRef::from_nm(&FLAT).unwrap();
    let detector = Detector::new(det, nm(365.0), Responsivity::from_a_per_w(0.20)).unwrap();
    let f = SpectralFactors::new(
        &Source::Line(nm(365.0)),
        range(315.0, 400.0),
        &detector,
        &rule,
    )
    .unwrap();
    let k = f.irradiance_per_current(Area::from_mm2(1.0)).unwrap();
    assert!(rel(2.0e-6 * k.w_per_m2_per_a(), 10.0) < 1e-12);
    assert_eq!(
        crate::irradiance::Calibration::from_spectral(&f, Area::from_mm2(1.0))
            .factor()
            .unwrap()
            .w_per_m2_per_a(),
        k.w_per_m2_per_a()
    );
    assert_eq!(
        f.irradiance_per_current(Area::from_m2(0.0)),
        Err(SpectralError::ActiveArea)
    );
}

#[test]
fn ideal_detector_effective_responsivity() {
    // R = QE · e·λ/(h·c) = QE · λ[nm] / 1239.841 984 A/W (SI2019 constants, computed): a QE = 1
    // detector table (R ∝ λ, exact at its points and linear in between) seen by a line.
    let ideal = [
        (200.0, 200.0 / 1_239.841_984),
        (500.0, 500.0 / 1_239.841_984),
    ];
    let det = SpectrumRef::from_nm(&ideal).unwrap();
    let detector = Detector::new(
        det,
        nm(500.0),
        Responsivity::from_a_per_w(500.0 / 1_239.841_984),
    )
    .unwrap();
    let rule = IntegrationRule::default();
    for (line, r) in [
        (254.0, 0.2049),
        (365.0, 0.2944),
        (395.0, 0.3186),
        (405.0, 0.3267),
    ] {
        let f = SpectralFactors::new(
            &Source::Line(nm(line)),
            range(200.0, 500.0),
            &detector,
            &rule,
        )
        .unwrap();
        // Written to 4 decimals (computed by hand): half a unit of the last digit.
        assert!(
            (f.effective_responsivity().a_per_w() - r).abs() <= 0.000_05,
            "{line}"
        );
        assert!(
            rel(
                detector.responsivity_at(nm(line)).a_per_w(),
                line / 1_239.841_984
            ) < 1e-12
        );
    }
}

#[test]
fn out_of_band_light_raises_the_effective_responsivity() {
    // Synthetic: a flat source 300–400 nm, flat detector, band UV-A [315, 400): the detector
    // sees 100 nm of light for 85 nm of band, so R_eff = R · 100/85 (computed).
    let src: Spectrum<2> = Spectrum::from_nm(&[(300.0, 1.0), (400.0, 1.0)]).unwrap();
    let det = SpectrumRef::from_nm(&FLAT).unwrap();
    let detector = Detector::new(det, nm(350.0), Responsivity::from_a_per_w(0.1)).unwrap();
    let f = SpectralFactors::new(
        &Source::Tabulated(src.as_ref()),
        UvBandEdges::CIE.range(UvBand::UvA),
        &detector,
        &IntegrationRule::default(),
    )
    .unwrap();
    assert!(rel(f.effective_responsivity().a_per_w(), 0.1 * 100.0 / 85.0) < 1e-12);
}

#[test]
fn mismatch_factor_definition_and_consistency() {
    let rule = IntegrationRule::default();
    // Synthetic detector: relative responsivity rising linearly 1 → 2 over 300–400 nm.
    let rising = [(300.0, 1.0), (400.0, 2.0)];
    let det = SpectrumRef::from_nm(&rising).unwrap();
    let band = range(300.0, 400.0);
    let a = Source::Line(nm(365.0));
    let z = Source::Line(nm(395.0));
    // Computed from the CIE ILV 17-25-115 definition for two lines inside the band:
    // F* = [1 / s(395)] · [s(365) / 1] = 1.65 / 1.95.
    let f = mismatch_factor(det, band, &Weighting::None, &a, &z, &rule).unwrap();
    assert!(rel(f, 1.65 / 1.95) < 1e-12);
    // Same source: F* = 1 exactly by the definition.
    let led = Source::Led {
        peak: nm(365.0),
        fwhm: nm(10.0),
    };
    assert!(
        rel(
            mismatch_factor(det, band, &Weighting::None, &led, &led, &rule).unwrap(),
            1.0
        ) < 1e-14
    );
    // A detector proportional to the target (flat over the band, sources inside): F* = 1.
    let flat = SpectrumRef::from_nm(&FLAT).unwrap();
    assert!(
        rel(
            mismatch_factor(flat, band, &Weighting::None, &a, &led, &rule).unwrap(),
            1.0
        ) < 1e-12
    );

    // Consistency: a certificate measured under A and corrected by F* gives the same
    // factor under Z as the detector table computed directly under Z.
    let detector = Detector::new(det, nm(350.0), Responsivity::from_a_per_w(0.15)).unwrap();
    let area = Area::from_mm2(1.0);
    let z = Source::Led {
        peak: nm(395.0),
        fwhm: nm(12.0),
    };
    let k_a = SpectralFactors::new(&a, band, &detector, &rule)
        .unwrap()
        .irradiance_per_current(area)
        .unwrap();
    let k_z = SpectralFactors::new(&z, band, &detector, &rule)
        .unwrap()
        .irradiance_per_current(area)
        .unwrap();
    let corrected = corrected_certificate(k_a, det, band, &a, &z, &rule).unwrap();
    assert!(rel(corrected.w_per_m2_per_a(), k_z.w_per_m2_per_a()) < 1e-12);
    // Without the correction the 395 nm LED would read high by 1/F* − 1 (computed here).
    assert!(k_a.w_per_m2_per_a() > k_z.w_per_m2_per_a() * 1.1);
    assert_eq!(
        corrected_certificate(
            IrradiancePerCurrent::from_w_per_m2_per_a(0.0),
            det,
            band,
            &a,
            &z,
            &rule
        ),
        Err(SpectralError::Factor)
    );
}

#[test]
fn weighted_mismatch_for_an_erythemal_radiometer() {
    // A detector whose relative responsivity *is* s_er reads erythemal irradiance under any
    // source: F* = 1 (identity of the definition). Sampled at 1 nm, so only ≈ 1.
    let mut pts = [(0.0, 0.0); 151];
    for (i, p) in pts.iter_mut().enumerate() {
        let x = 250.0 + i as f64;
        *p = (x, crate::spectral::weighting::cie_erythema(nm(x)));
    }
    let det = SpectrumRef::from_nm(&pts).unwrap();
    let rule = IntegrationRule::default();
    let f = mismatch_factor(
        det,
        range(280.0, 400.0),
        &Weighting::CIE_ERYTHEMA,
        &Source::Led {
            peak: nm(365.0),
            fwhm: nm(10.0),
        },
        &Source::Led {
            peak: nm(310.0),
            fwhm: nm(10.0),
        },
        &rule,
    )
    .unwrap();
    assert!((f - 1.0).abs() < 0.01, "{f}");
}

#[test]
fn bad_spectral_configurations_are_named() {
    let rule = IntegrationRule::default();
    let narrow = [(300.0, 1.0), (380.0, 1.0)];
    let det = SpectrumRef::from_nm(&narrow).unwrap();
    let detector = Detector::new(det, nm(350.0), Responsivity::from_a_per_w(0.1)).unwrap();
    let led = Source::Led {
        peak: nm(365.0),
        fwhm: nm(10.0),
    };
    // The band sticks out of the detector table.
    assert_eq!(
        SpectralFactors::new(&led, range(315.0, 400.0), &detector, &rule),
        Err(SpectralError::BandOutsideDetector)
    );
    // No source power in the band.
    assert_eq!(
        SpectralFactors::new(
            &Source::Line(nm(310.0)),
            range(320.0, 380.0),
            &detector,
            &rule
        ),
        Err(SpectralError::ZeroIntegral(Integral::BandIrradiance))
    );
    // A detector blind to the source (explicit zero rows).
    let blind = [(300.0, 0.0), (340.0, 0.0), (341.0, 1.0), (400.0, 1.0)];
    let blind = Detector::new(
        SpectrumRef::from_nm(&blind).unwrap(),
        nm(360.0),
        Responsivity::from_a_per_w(0.1),
    )
    .unwrap();
    assert_eq!(
        SpectralFactors::new(&Source::Line(nm(320.0)), range(300.0, 400.0), &blind, &rule),
        Err(SpectralError::ZeroIntegral(Integral::DetectorSignal))
    );
    // Detector scale.
    assert_eq!(
        Detector::new(det, nm(390.0), Responsivity::from_a_per_w(0.1)),
        Err(SpectralError::Reference)
    );
    assert_eq!(
        Detector::new(
            SpectrumRef::from_nm(&[(300.0, 0.0), (400.0, 1.0)]).unwrap(),
            nm(300.0),
            Responsivity::from_a_per_w(0.1)
        ),
        Err(SpectralError::Reference)
    );
    assert_eq!(
        Detector::new(det, nm(350.0), Responsivity::from_a_per_w(f64::NAN)),
        Err(SpectralError::Responsivity)
    );
    // Invalid LED and line.
    assert_eq!(
        band_integral(
            &Source::Led {
                peak: nm(365.0),
                fwhm: nm(0.0)
            },
            range(300.0, 400.0),
            &rule
        ),
        Err(SpectralError::Source(BandError::Fwhm))
    );
    assert_eq!(
        band_integral(&Source::Line(nm(f64::INFINITY)), range(300.0, 400.0), &rule),
        Err(SpectralError::Source(BandError::Wavelength))
    );
    // Mismatch with a target weighting that is zero for the calibration source.
    assert_eq!(
        mismatch_factor(
            det,
            range(300.0, 380.0),
            &Weighting::UvaUnweighted,
            &Source::Line(nm(310.0)),
            &led,
            &rule
        ),
        Err(SpectralError::ZeroIntegral(Integral::CalibrationWeighted))
    );
    // A user weighting table that does not cover the band.
    let w = [(320.0, 1.0), (380.0, 1.0)];
    let user = Weighting::Table {
        id: 7,
        table: SpectrumRef::from_nm(&w).unwrap(),
        interpolation: crate::spectral::weighting::Interpolation::Linear,
    };
    assert_eq!(
        weighted_fraction(&led, range(315.0, 380.0), &user, &rule),
        Err(SpectralError::WeightingDoesNotCoverBand)
    );
    // A log-linear user table with a zero.
    let z = [(300.0, 1.0), (400.0, 0.0)];
    let user = Weighting::Table {
        id: 8,
        table: SpectrumRef::from_nm(&z).unwrap(),
        interpolation: crate::spectral::weighting::Interpolation::LogLinear,
    };
    assert_eq!(
        weighted_fraction(&led, range(315.0, 380.0), &user, &rule),
        Err(SpectralError::Table(
            SpectrumError::ZeroForLogInterpolation { index: 1 }
        ))
    );
    // Erythema lower limit outside 250..400 nm.
    assert_eq!(
        weighted_fraction(
            &led,
            range(315.0, 380.0),
            &Weighting::CieErythema {
                lower_limit: nm(240.0)
            },
            &rule
        ),
        Err(SpectralError::Weighting)
    );
}

#[test]
fn wavelengths_snap_onto_table_points() {
    // Wavelength stores metres; 395 nm does not round-trip bit-exactly, the snap makes it.
    assert_eq!(snap_nm(nm(395.0)), 395.0);
    assert_eq!(snap_nm(nm(253.728)), 253.728);
    // ICNIRP 2004 Table 1: S(395 nm) = 0.000036, read back with the printed digits.
    assert_eq!(uv_hazard(nm(395.0)), 0.000_036);
}

#[test]
fn mercury_lines_air_to_vacuum() {
    // SSR1996 / NIST ASD standard-air wavelengths; the vacuum wavelengths computed by hand
    // with PR1972 (EDLEN1966 agrees to 2e-9 in n − 1, computed); line positions ±0.001 nm.
    use mercury_air_nm::*;
    for (air, vac) in [
        (HG_253_652, 253.728),
        (HG_296_728, 296.815),
        (HG_302_150, 302.238),
        (HG_313_155, 313.246),
        (HG_334_148, 334.244),
        (HG_365_015, 365.119),
        (HG_404_656, 404.770),
        (HG_435_833, 435.956),
        (HG_546_074, 546.226),
    ] {
        let v = air_to_vacuum(nm(air)).unwrap().nm();
        assert!((v - vac).abs() <= 0.001, "{air}: {v}");
    }
    // n_air − 1 ≈ 3.0e-4 at 254 nm and 2.8e-4 at 436 nm (PR1972, EDLEN1966, CIDDOR1996 all
    // give these to two digits; computed from their dispersion formulas).
    assert!((air_refractivity(nm(254.0)).unwrap() - 3.0e-4).abs() < 0.05e-4);
    assert!((air_refractivity(nm(436.0)).unwrap() - 2.8e-4).abs() < 0.05e-4);
    assert_eq!(air_to_vacuum(nm(150.0)), None);
    // Using the air value overstates the photon energy by ~0.03 %: 4.886 50 eV (vacuum)
    // vs 4.887 96 eV (air value wrongly used), computed from SI2019 constants and PR1972.
    let e_vac = air_to_vacuum(nm(HG_253_652)).unwrap().photon_energy().ev();
    let e_air = nm(HG_253_652).photon_energy().ev();
    assert!((e_vac - 4.886_50).abs() <= 0.000_005);
    assert!((e_air - 4.887_96).abs() <= 0.000_005);
}

#[test]
fn wide_led_stays_inside_the_supported_range() {
    // FWHM = peak/2 is the widest LED the band model accepts; its ±6σ energy range would
    // reach negative energies: the support is clipped to 100..=2500 nm and stays finite.
    let led = Source::Led {
        peak: nm(400.0),
        fwhm: nm(200.0),
    };
    let shape = Shape::new(&led).unwrap();
    let (lo, hi) = shape.span();
    assert!(lo >= MIN_WAVELENGTH_NM && hi <= MAX_WAVELENGTH_NM);
    let p = band_integral(&led, range(100.0, 2500.0), &IntegrationRule::default()).unwrap();
    assert!(p.is_finite() && p > 0.0);
}
