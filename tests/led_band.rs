//! LED bands as datasheets state them: the configured peak is the wavelength of maximum
//! spectral power per nm and the configured FWHM its full width at half maximum per nm; and
//! the weighted factor over a peak tolerance.
//!
//! The checks recompute the spectral shape independently from the solved parameters
//! (P(λ) = exp(−½((1/λ − u0)/σ)²)/λ², the Gaussian in photon energy times the Jacobian
//! dE/dλ ∝ 1/λ²) and find its maximum and half-maximum points by golden-section search and
//! bisection — no use of the library's own solver beyond its two parameters.

use photon_ledger::prelude::*;
use photon_ledger::spectral::band::{Band, BandError, BandFactors, LedShape};
use photon_ledger::spectral::band_tolerance::{
    led_factor_range, ToleranceError, TOLERANCE_SAMPLES,
};
use photon_ledger::spectral::spectrum::weighted_fraction;

fn nm(x: f64) -> Wavelength {
    Wavelength::from_nm(x)
}

fn density(u0: f64, s: f64, l: f64) -> f64 {
    let z = (1.0 / l - u0) / s;
    (-0.5 * z * z).exp() / (l * l)
}

/// Wavelength of the maximum by golden-section search on [a, b] (P is unimodal there).
fn argmax(u0: f64, s: f64, mut a: f64, mut b: f64) -> f64 {
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..200 {
        let c = b - g * (b - a);
        let d = a + g * (b - a);
        if density(u0, s, c) > density(u0, s, d) {
            b = d;
        } else {
            a = c;
        }
    }
    0.5 * (a + b)
}

/// The point between `inside` and `outside` where P = half, by bisection.
fn half_point(u0: f64, s: f64, half: f64, mut inside: f64, mut outside: f64) -> f64 {
    for _ in 0..200 {
        let m = 0.5 * (inside + outside);
        if density(u0, s, m) > half {
            inside = m;
        } else {
            outside = m;
        }
    }
    0.5 * (inside + outside)
}

/// Stated tolerance: the maximum within 1e-6 nm of the configured peak and the FWHM within
/// 1e-6 nm of the configured width (the solver stops at 1e-12 relative in the width; the
/// golden-section search resolves the flat top of P to about 1e-7 nm).
const TOL_NM: f64 = 1e-6;

#[test]
fn wavelength_maximum_and_fwhm_equal_the_configured_values() {
    for (peak, fwhm) in [
        (265.0, 12.0),
        (275.0, 10.0),
        (310.0, 10.0),
        (365.0, 10.0),
        (395.0, 15.0),
        (405.0, 15.0),
        (450.0, 20.0),
        (530.0, 35.0),
        (850.0, 40.0),
        (400.0, 200.0), // the widest accepted: FWHM = peak/2
    ] {
        let shape = LedShape::new(nm(peak), nm(fwhm)).unwrap();
        let (u0, s) = (shape.centre_per_nm(), shape.sigma_per_nm());
        let max_at = argmax(u0, s, peak - fwhm, peak + fwhm);
        assert!(
            (max_at - peak).abs() <= TOL_NM,
            "{peak}/{fwhm}: max at {max_at}"
        );
        let half = density(u0, s, peak) / 2.0;
        let short = half_point(u0, s, half, peak, peak - 2.0 * fwhm);
        let long = half_point(u0, s, half, peak, peak + 2.0 * fwhm);
        assert!(
            ((long - short) - fwhm).abs() <= TOL_NM,
            "{peak}/{fwhm}: FWHM {}",
            long - short
        );
        // The library's own report of the shape agrees.
        let (a, b) = shape.half_maximum_nm();
        assert!((a - short).abs() <= TOL_NM && (b - long).abs() <= TOL_NM);
        assert!((shape.density_nm(peak) - 1.0).abs() < 1e-15);
    }
}

#[test]
fn the_energy_centre_lies_long_of_the_wavelength_maximum() {
    // The maximum per nm lies where u² − u0·u − 2σ² = 0 (d/du of ln P = 0, computed), so the
    // energy centre 1/u0 is longer than the peak. Placing the centre at the configured peak
    // (the earlier model, σ from peak ± FWHM/2) put the wavelength maximum short of it by
    // 0.0988 nm (365/10), 0.1311 nm (275/10), 0.2003 nm (405/15) and 0.3205 nm (450/20)
    // (computed here by the closed form u_max = (u0 + √(u0² + 8σ²))/2, and checked by the
    // golden-section search to 1e-6 nm).
    for (peak, fwhm, short_by) in [
        (365.0, 10.0, 0.0988),
        (275.0, 10.0, 0.1311),
        (405.0, 15.0, 0.2003),
        (450.0, 20.0, 0.3205),
    ] {
        let shape = LedShape::new(nm(peak), nm(fwhm)).unwrap();
        let centre = 1.0 / shape.centre_per_nm();
        assert!(centre > peak, "{peak}: {centre}");
        let old_sigma = (1.0 / (peak - fwhm / 2.0) - 1.0 / (peak + fwhm / 2.0))
            / (2.0 * (2.0 * std::f64::consts::LN_2).sqrt());
        let u0: f64 = 1.0 / peak;
        let closed = peak - 2.0 / (u0 + (u0 * u0 + 8.0 * old_sigma * old_sigma).sqrt());
        let searched = peak - argmax(u0, old_sigma, peak - fwhm, peak + fwhm);
        assert!((closed - searched).abs() <= TOL_NM, "{peak}/{fwhm}");
        assert!(
            (closed - short_by).abs() <= 0.000_05,
            "{peak}/{fwhm}: {closed}"
        );
    }
}

#[test]
fn invalid_led_shapes_are_named() {
    assert_eq!(
        LedShape::new(nm(50.0), nm(10.0)),
        Err(BandError::Wavelength)
    );
    for bad in [0.0, -1.0, f64::NAN, 300.0] {
        assert_eq!(
            LedShape::new(nm(405.0), nm(bad)),
            Err(BandError::Fwhm),
            "{bad}"
        );
    }
    // Band validation goes through the same solver.
    assert_eq!(
        BandFactors::new(&Band::Led {
            peak: nm(405.0),
            fwhm: nm(f64::NAN)
        }),
        Err(BandError::Fwhm)
    );
}

#[test]
fn uv_hazard_factor_over_a_2_5_nm_peak_tolerance() {
    // A 310 nm, 10 nm LED on the falling slope of ICNIRP2004 S(λ) (Table 1: 0.015 at 310,
    // 0.026 at 308, 0.006 at 313 nm): the factor is largest at the short end of the
    // tolerance and smallest at the long end. The range is checked against the factors of
    // the end bands computed directly (the same integral), and the conservative factor is the
    // largest.
    let band = WavelengthRange::new(nm(180.0), nm(400.0)).unwrap();
    let rule = IntegrationRule::default();
    let r = led_factor_range(
        nm(310.0),
        nm(10.0),
        nm(2.5),
        band,
        &Weighting::UvHazard,
        &rule,
    )
    .unwrap();
    let at = |p: f64| {
        weighted_fraction(
            &Source::Led {
                peak: nm(p),
                fwhm: nm(10.0),
            },
            band,
            &Weighting::UvHazard,
            &rule,
        )
        .unwrap()
    };
    assert_eq!(r.kind, WeightingKind::UvHazard);
    assert_eq!(r.nominal, at(310.0));
    assert_eq!(r.max, at(307.5));
    assert_eq!(r.min, at(312.5));
    assert_eq!((r.max_at_nm, r.min_at_nm), (307.5, 312.5));
    assert_eq!(r.conservative_fraction(), r.max);
    // S(λ) changes by roughly a factor of 2.5 between 308 and 313 nm, so ±2.5 nm moves the
    // band factor by tens of percent (computed bound, not a published figure).
    assert!(r.max_over_nominal() > 1.2, "{r:?}");
    assert!(r.min < r.nominal && r.nominal < r.max);
    // The exposure monitor's factor for a limit is the conservative one, not the nominal.
    let w = photon_ledger::control::exposure::WeightFactor::for_limit(&r).unwrap();
    assert_eq!(w.ratio(), r.max);
    assert!(w.ratio() > r.nominal);
}

#[test]
fn blue_light_factor_with_its_maximum_inside_the_tolerance() {
    // B(λ) is flat at 1.00 at 435–440 nm (IEC62471 Table 4.2, from memory): for a 437.5 nm
    // LED the largest factor is found inside the ±5 nm tolerance, not at an end.
    let band = WavelengthRange::new(nm(300.0), nm(800.0)).unwrap();
    let r = led_factor_range(
        nm(437.5),
        nm(20.0),
        nm(5.0),
        band,
        &Weighting::BlueLightHazard,
        &IntegrationRule::default(),
    )
    .unwrap();
    assert!(r.max_at_nm > 432.5 && r.max_at_nm < 442.5, "{r:?}");
    assert!(r.max >= r.nominal && r.min <= r.nominal);
    assert_eq!(TOLERANCE_SAMPLES % 2, 1);
}

#[test]
fn tolerance_zero_and_bad_tolerances() {
    let band = WavelengthRange::new(nm(180.0), nm(400.0)).unwrap();
    let rule = IntegrationRule::default();
    let r = led_factor_range(
        nm(365.0),
        nm(10.0),
        nm(0.0),
        band,
        &Weighting::UvHazard,
        &rule,
    )
    .unwrap();
    assert_eq!((r.min, r.max), (r.nominal, r.nominal));
    for bad in [-1.0, f64::NAN, f64::INFINITY, 51.0] {
        assert_eq!(
            led_factor_range(
                nm(365.0),
                nm(10.0),
                nm(bad),
                band,
                &Weighting::UvHazard,
                &rule
            ),
            Err(ToleranceError::Tolerance),
            "{bad}"
        );
    }
}
