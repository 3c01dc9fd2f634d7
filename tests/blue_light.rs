//! The blue-light hazard weighting B(λ) and its small-source limits, through the public API.
//!
//! Source keys are those of `photon_ledger::references`. The B(λ) rows and the limits are from
//! memory of IEC62471 (Table 4.2, §4.3.4) and ICNIRP2013, not read in the printed standard;
//! the function is compared with luxpy's IEC 62471 B(λ) in `hosttests/tests/refcheck.rs`.

mod common;

use common::{meter_with, reading};
use hosttests::sim::SimPin;
use photon_ledger::control::exposure::{ExposureConfig, ExposureMonitor, WeightFactor};
use photon_ledger::prelude::*;
use photon_ledger::spectral::weighting::{
    blue_light_hazard, blue_light_small_source_allowance, blue_light_small_source_max_time,
    TimeLimit, WeightedFactor, WeightedIrradiance, BLUE_LIGHT_HAZARD_TABLE,
    BLUE_LIGHT_SMALL_SOURCE_BREAK_S, BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2,
    BLUE_LIGHT_SMALL_SOURCE_MAX_W_PER_M2,
};

fn nm(x: f64) -> Wavelength {
    Wavelength::from_nm(x)
}

/// IEC62471:2006 Table 4.2 / ICNIRP2013 B(λ), 300–500 nm in 5 nm steps, as printed (from
/// memory): 0.01 from 300 to 380 nm, then the rows below.
const PRINTED: [(f64, f64); 24] = [
    (385.0, 0.013),
    (390.0, 0.025),
    (395.0, 0.05),
    (400.0, 0.10),
    (405.0, 0.20),
    (410.0, 0.40),
    (415.0, 0.80),
    (420.0, 0.90),
    (425.0, 0.95),
    (430.0, 0.98),
    (435.0, 1.00),
    (440.0, 1.00),
    (445.0, 0.97),
    (450.0, 0.94),
    (455.0, 0.90),
    (460.0, 0.80),
    (465.0, 0.70),
    (470.0, 0.62),
    (475.0, 0.55),
    (480.0, 0.45),
    (485.0, 0.40),
    (490.0, 0.22),
    (495.0, 0.16),
    (500.0, 0.10),
];

#[test]
fn every_row_equals_the_printed_value() {
    // IEC62471 Table 4.2 (from memory): B = 0.01 at 300, 305, …, 380 nm.
    for k in 0..=16 {
        let w = 300.0 + 5.0 * f64::from(k);
        assert_eq!(blue_light_hazard(nm(w)), 0.01, "{w}");
    }
    for (w, b) in PRINTED {
        assert_eq!(blue_light_hazard(nm(w)), b, "{w}");
    }
    // The shipped table is exactly these 41 rows.
    assert_eq!(BLUE_LIGHT_HAZARD_TABLE.len(), 17 + PRINTED.len());
    assert_eq!(&BLUE_LIGHT_HAZARD_TABLE[17..], &PRINTED[..]);
}

#[test]
fn formula_part_and_support() {
    // IEC62471 Table 4.2 (from memory): 10^((450 − λ)/50) for 500–600 nm, 0.001 for
    // 600–700 nm, not defined (0) outside 300–700 nm. 10^−2 at 550 nm, 10^−1.5 at 525 nm
    // (computed); rel 1e-14 covers the exp/log form of 10^x.
    assert!((blue_light_hazard(nm(550.0)) / 0.01 - 1.0).abs() < 1e-14);
    assert!((blue_light_hazard(nm(525.0)) / 10f64.powf(-1.5) - 1.0).abs() < 1e-14);
    assert_eq!(blue_light_hazard(nm(650.0)), 0.001);
    assert_eq!(blue_light_hazard(nm(700.0)), 0.001);
    assert_eq!(blue_light_hazard(nm(299.9)), 0.0);
    assert_eq!(blue_light_hazard(nm(700.1)), 0.0);
    // The formula meets the table at 500 nm (0.1) and the 0.001 plateau at 600 nm (computed).
    assert!((blue_light_hazard(nm(500.001)) - 0.1).abs() < 1e-5);
    assert!((blue_light_hazard(nm(600.0)) - 0.001).abs() < 1e-15);
    // Linear between rows (common practice, no source): midway 445/450 nm is 0.955.
    assert!((blue_light_hazard(nm(447.5)) - 0.955).abs() < 1e-12);
}

#[test]
fn small_source_limits() {
    // IEC62471 §4.3.4 (from memory): E_B · t ≤ 100 J/m² for t ≤ 10⁴ s, E_B ≤ 0.01 W/m²
    // beyond; the two forms meet at 10⁴ s (100 / 10⁴ = 0.01, computed).
    assert_eq!(BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2, 100.0);
    assert_eq!(BLUE_LIGHT_SMALL_SOURCE_BREAK_S, 1.0e4);
    assert_eq!(BLUE_LIGHT_SMALL_SOURCE_MAX_W_PER_M2, 0.01);
    let kind = WeightingKind::BlueLightHazard;
    let t = |e: f64| blue_light_small_source_max_time(WeightedIrradiance::from_w_per_m2(e, kind));
    // 1 W/m² weighted → 100 s; 400 W/m² → 0.25 s (computed from 100 J/m² / E_B).
    assert_eq!(t(1.0), Some(TimeLimit::Within(Seconds::from_s(100.0))));
    assert_eq!(t(400.0), Some(TimeLimit::Within(Seconds::from_s(0.25))));
    assert_eq!(t(0.01), Some(TimeLimit::Unlimited));
    assert_eq!(t(0.0), Some(TimeLimit::Unlimited));
    // Just above 0.01 W/m² the limit is just under 10⁴ s.
    let Some(TimeLimit::Within(s)) = t(0.010_001) else {
        panic!("expected a limit")
    };
    assert!(s.s() < 1.0e4 && s.s() > 0.9999e4, "{}", s.s());
    // Only a blue-light quantity has this limit.
    assert_eq!(
        blue_light_small_source_max_time(WeightedIrradiance::from_w_per_m2(
            1.0,
            WeightingKind::UvHazard
        )),
        None
    );
    // Allowance: max(100 J/m², 0.01 W/m² × t) (computed).
    let a = |s: f64| blue_light_small_source_allowance(Seconds::from_s(s)).j_per_m2();
    assert_eq!(a(10.0), 100.0);
    assert_eq!(a(1.0e4), 100.0);
    assert_eq!(a(2.88e4), 288.0);
}

#[test]
fn a_450_nm_line_is_weighted_by_b_450() {
    // IEC62471 Table 4.2 (from memory): B(450) = 0.94; a line source's weighted fraction is
    // B at the line (definition of the weighted integral for a delta spectrum).
    let f = WeightedFactor::new(
        &Source::Line(nm(450.0)),
        WavelengthRange::new(nm(300.0), nm(800.0)).unwrap(),
        &Weighting::BlueLightHazard,
        &IntegrationRule::default(),
    )
    .unwrap();
    assert_eq!(f.kind(), WeightingKind::BlueLightHazard);
    assert!((f.fraction() - 0.94).abs() < 1e-15, "{}", f.fraction());
}

#[test]
fn exposure_monitor_with_the_blue_light_weight_trips_at_100_j_per_m2() {
    // A 450 nm source at 1 W/m² (1000 codes of the common meter): E_B = 0.94 W/m²
    // (B(450) = 0.94, IEC62471 Table 4.2, from memory); the small-source limit is reached at
    // t = 100 / 0.94 = 106.38 s (computed), so with 1 s samples the alarm latches at 107 s.
    // The monitor's rolling window of 10⁴ s with a 100 J/m² limit is the IEC62471 §4.3.4
    // small-source rule.
    const S: u32 = 1000;
    let m = meter_with(1000, 450.0);
    let factor = WeightedFactor::new(
        &Source::Line(nm(450.0)),
        WavelengthRange::new(nm(300.0), nm(800.0)).unwrap(),
        &Weighting::BlueLightHazard,
        &IntegrationRule::default(),
    )
    .unwrap();
    let weight = WeightFactor::from_weighted(&factor).unwrap();
    let config = ExposureConfig {
        window_ticks: (BLUE_LIGHT_SMALL_SOURCE_BREAK_S as u64) * u64::from(S),
        bucket_ticks: 100 * u64::from(S),
        limit: RadiantExposure::from_j_per_m2(BLUE_LIGHT_SMALL_SOURCE_LIMIT_J_PER_M2),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 10 * S,
    };
    let pins = [SimPin::new(), SimPin::new(), SimPin::new()];
    let mut mon = ExposureMonitor::<101, 3, SimPin>::new(m, weight, config, pins.clone()).unwrap();
    let mut alarm_at = None;
    for k in 0..=200u32 {
        let c = mon.on_reading(&reading(1000, k * S)).unwrap();
        if c.alarm_latched {
            alarm_at = Some(k);
            break;
        }
    }
    assert_eq!(alarm_at, Some(107));
    assert!(pins[2].is_high());
}
