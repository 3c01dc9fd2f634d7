//! Personal exposure monitoring through the public API.

mod common;

use common::{meter, reading};
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use hosttests::sim::SimPin;
use photon_ledger::control::exposure::display::{dose_line, solar_line, status_line};
use photon_ledger::control::exposure::{
    ExposureConfig, ExposureConfigError, ExposureError, ExposureMonitor, ReadingIssue,
    RollingWindow, SolarMonitor, WeightFactor,
};
use photon_ledger::irradiance::calibration::Validity;
use photon_ledger::prelude::*;
use photon_ledger::spectral::weighting::{
    TimeLimit, UvIndexCategory, UvaEyeRule, WeightedIrradiance, WeightingKind,
};

const S: u32 = 1000; // ticks per second of the common meter
const MIN: u32 = 60 * S;
const HOUR: u32 = 3600 * S;

/// ICNIRP 2004, Table 1: S(254 nm) = 0.5 (relative spectral effectiveness), for a 254 nm line.
fn s254() -> WeightFactor {
    WeightFactor::from_ratio(0.5).unwrap()
}

fn icnirp_config() -> ExposureConfig<3> {
    ExposureConfig {
        window_ticks: u64::from(8 * HOUR),
        bucket_ticks: u64::from(MIN),
        // ICNIRP 2004: H_eff ≤ 30 J/m² in any 8 h.
        limit: RadiantExposure::from_j_per_m2(30.0),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 10 * S,
    }
}

type Monitor = ExposureMonitor<481, 3, SimPin>;

fn monitor() -> (Monitor, [SimPin; 3]) {
    let pins = [SimPin::new(), SimPin::new(), SimPin::new()];
    let m = Monitor::new(meter(), s254(), icnirp_config(), pins.clone()).unwrap();
    (m, pins)
}

#[test]
fn permissible_time_at_254_nm() {
    // 0.1 W/m² at 254 nm: E_eff = 0.5 × 0.1 = 0.05 W/m² (ICNIRP 2004 S(254) = 0.5);
    // t_max = 30 / E_eff = 600 s (IEC 62471:2006 Eq. 4.2).
    let t = WeightedIrradiance::from_w_per_m2(0.05, WeightingKind::UvHazard).max_exposure_time();
    let Some(TimeLimit::Within(t)) = t else {
        panic!("expected a time limit, got {t:?}");
    };
    assert!((t.s() - 600.0).abs() < 1e-12);

    let (mut m, pins) = monitor();
    m.on_reading(&reading(100, 0)).unwrap(); // 100 codes = 0.1 W/m²
    m.on_reading(&reading(100, S)).unwrap();
    let left = m.time_left().unwrap().s();
    assert!((left - 599.0).abs() < 1e-3, "{left}");
    let mut alarm_at = None;
    for k in 2..=700u32 {
        let c = m.on_reading(&reading(100, k * S)).unwrap();
        if c.alarm_latched {
            alarm_at = Some(k);
            break;
        }
    }
    // The alarm trips no later than the first sample at or after 600 s.
    assert_eq!(alarm_at, Some(600));
    assert!(pins.iter().all(SimPin::is_high));
    assert!(m.fraction_used() >= 1.0 - 1e-9);
}

#[test]
fn warnings_rise_with_outputs_and_the_alarm_stays_latched() {
    // Pins set low at start, then each rises once; after the window empties levels 0 and 1
    // clear by themselves, the alarm only after acknowledgement.
    let p0 = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let p1 = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let p2 = PinMock::new(&[
        Pin::set(State::Low),
        Pin::set(State::High),
        Pin::set(State::Low),
    ]);
    let mut checks = [p0.clone(), p1.clone(), p2.clone()];
    let mut m =
        ExposureMonitor::<481, 3, PinMock>::new(meter(), s254(), icnirp_config(), [p0, p1, p2])
            .unwrap();
    let mut raised_at = [0u32; 3];
    for k in 0..=620u32 {
        let c = m.on_reading(&reading(100, k * S)).unwrap();
        for (i, at) in raised_at.iter_mut().enumerate() {
            if c.raised & (1 << i) != 0 {
                *at = k;
            }
        }
    }
    // 50 %, 80 %, 100 % of 30 J/m² at 0.05 W/m² effective: 300 s, 480 s, 600 s.
    assert_eq!(raised_at, [300, 480, 600]);
    assert!(m.alarm_latched());
    // Light off; readings continue hourly for 9 h: the dose leaves the 8 h window exactly.
    let mut t = 620 * S;
    m.on_reading(&reading(0, t + S)).unwrap();
    for _ in 0..9 {
        t += HOUR;
        m.tick(Ticks(t)).unwrap();
    }
    assert_eq!(m.window_exposure().j_per_m2(), 0.0);
    assert_eq!(m.active_levels(), 0b100, "only the latched alarm remains");
    assert!(!m.acknowledge().unwrap());
    assert_eq!(m.active_levels(), 0);
    for p in &mut checks {
        p.done();
    }
}

#[test]
fn window_subtracts_expired_dose_exactly() {
    let (mut m, _) = monitor();
    // One hour at 0.01 W/m² (10 codes): 36 J/m² radiant, 18 J/m² effective.
    for k in 0..=3600u32 {
        m.on_reading(&reading(10, k * S)).unwrap();
    }
    let h = m.window_exposure().j_per_m2();
    // Exact trapezoid of a constant: 0.005 W/m² eff × 3600 s = 18 J/m², with nothing rounded
    // when the 60 buckets close (before the common unit, each closing rounded up to 1 µJ/m²).
    assert!((h - 18.0).abs() <= 18.0 * 1e-12, "{h}");
    let shift = m.shift_totals().exposure.j_per_m2();
    assert!((shift - 18.0).abs() <= 18.0 * 1e-12, "{shift}");
    // 0.5 × 10 codes × 1 s of the fall to dark, effective: 0.0025 J/m² more.
    let shift = shift + 0.0025;
    // The light goes off (one dark reading), then the logger sleeps and only ticks the
    // window every minute. For 7 h everything is still inside the window.
    let mut t = 3601 * S;
    m.on_reading(&reading(0, t)).unwrap();
    let h = m.window_exposure().j_per_m2();
    for _ in 0..7 * 60 {
        t += MIN;
        m.tick(Ticks(t)).unwrap();
    }
    assert!((m.window_exposure().j_per_m2() - h).abs() < 1e-9);
    // Two more hours: every lit bucket has left.
    for _ in 0..2 * 60 {
        t += MIN;
        m.tick(Ticks(t)).unwrap();
    }
    assert_eq!(m.window_exposure().j_per_m2(), 0.0);
    // The shift total keeps it until the explicit end of the shift.
    let totals = m.end_shift();
    assert!((totals.exposure.j_per_m2() - shift).abs() < 1e-9);
    assert_eq!(m.shift_totals().exposure.j_per_m2(), 0.0);
}

#[test]
fn gaps_are_charged_with_a_conservative_bound() {
    let (mut m, _) = monitor();
    m.on_reading(&reading(40, 0)).unwrap();
    m.on_reading(&reading(40, S)).unwrap();
    // Silent for 60 s (max gap 10 s): charged at the last irradiance, 0.02 W/m² eff × 60 s.
    let c = m.on_reading(&reading(0, 61 * S)).unwrap();
    let gap = c.gap.expect("gap reported");
    assert_eq!(gap.ticks, 60 * S);
    assert!((gap.bound.j_per_m2() - 1.2).abs() < 1e-6);
    let t = m.shift_totals();
    assert_eq!(t.gaps, 1);
    assert!((t.exposure.j_per_m2() - (0.02 + 1.2)).abs() < 1e-6);
}

#[test]
fn clock_backwards_restarts_the_run_and_never_blocks() {
    let (mut m, _) = monitor();
    for k in 0..=10 {
        m.on_reading(&reading(100, k * S)).unwrap();
    }
    // 0.1 W/m² × 0.5 (S(254)) × 10 s.
    let before = m.window_exposure().j_per_m2();
    assert!((before - 0.5).abs() < 1e-12);
    let c = m.on_reading(&reading(100, 5 * S)).unwrap();
    assert_eq!(c.ignored, Some(ReadingIssue::Backwards));
    assert_eq!(m.window_exposure().j_per_m2(), before);
    // The run restarted at 5 s: the next reading integrates 5 s → 6 s (a re-anchored clock
    // errs towards counting more), and so does every later one — nothing is blocked.
    for k in 6..=8 {
        let c = m.on_reading(&reading(100, k * S)).unwrap();
        assert_eq!(c.ignored, None);
    }
    assert!((m.window_exposure().j_per_m2() - (before + 3.0 * 0.05)).abs() < 1e-12);
}

#[test]
fn a_saturated_reading_counts_at_full_scale_never_bridged() {
    // Bridging a top-rail reading from its neighbours under-counts a light above the range;
    // the monitor counts it at the range's full scale (4095 codes = 4.095 W/m²), the least
    // the light can have been.
    let (mut m, _) = monitor();
    m.on_reading(&reading(100, 0)).unwrap();
    let c = m.on_reading(&reading(4095, S)).unwrap();
    assert!(c.saturated);
    assert_eq!(c.ignored, None);
    m.on_reading(&reading(100, 2 * S)).unwrap();
    // Trapezoids 0→1 s and 1→2 s: (0.1 + 4.095)/2 × 2 s × 0.5.
    let expected = (0.1 + 4.095) / 2.0 * 2.0 * 0.5;
    assert!((m.window_exposure().j_per_m2() - expected).abs() < 1e-12);
}

#[test]
fn a_forward_jump_is_charged_as_a_gap_and_later_readings_count() {
    // Before the shared time base, a forward step of 2³¹ ticks or more read as "backwards"
    // and every later reading was refused until the counter passed the old value.
    let (mut m, _) = monitor();
    m.on_reading(&reading(100, 0)).unwrap();
    let jump = (1u32 << 31) + 1000;
    let c = m.on_reading(&reading(100, jump)).unwrap();
    let gap = c.gap.expect("a jump is a gap");
    assert_eq!(gap.ticks, jump);
    let c = m.on_reading(&reading(100, jump + S)).unwrap();
    assert_eq!(c.ignored, None);
    assert_eq!(m.shift_totals().gaps, 1);
}

#[test]
fn an_eight_hour_window_at_ten_megahertz() {
    // A u32 window could not hold 8 h above 149 kHz; the 64-bit clock holds 2.88e11 ticks.
    let meter = common::meter_with(10_000_000, 254.0);
    let hz = 10_000_000u64;
    let config = ExposureConfig {
        window_ticks: 8 * 3600 * hz,
        bucket_ticks: 600 * hz,
        limit: RadiantExposure::from_j_per_m2(1e4),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 100_000_000, // 10 s
    };
    let pins = [SimPin::new(), SimPin::new(), SimPin::new()];
    let mut m =
        ExposureMonitor::<49, 3, SimPin>::new(meter, WeightFactor::UNWEIGHTED, config, pins)
            .unwrap();
    // 1 W/m² (1000 codes) sampled every 5 s for 9 h: the tick wraps 27 times.
    let step = 50_000_000u32;
    let mut t = 0u32;
    for _ in 0..=(9 * 3600 / 5) {
        let c = m
            .on_reading(&Reading {
                code: 1000,
                range: RangeIndex(0),
                at: Ticks(t),
            })
            .unwrap();
        assert_eq!(c.ignored, None);
        assert_eq!(c.gap, None);
        t = t.wrapping_add(step);
    }
    // The window holds between 8 h and 8 h 10 min of 1 W/m²: 28 800 to 29 400 J/m².
    let h = m.window_exposure().j_per_m2();
    assert!((28_800.0..=29_400.0).contains(&h), "{h}");
    // Whole intervals only: a multiple of 5 J/m².
    assert!((h / 5.0 - (h / 5.0).round()).abs() < 1e-9, "{h}");
    // 9 h in all, never clipped (a u32 bucket of 1 µJ/m² clipped at 4 295 J/m²).
    assert!((m.shift_totals().exposure.j_per_m2() - 32_400.0).abs() < 1e-8);
}

#[test]
fn shift_reset_during_an_alarm_keeps_the_alarm_and_the_window() {
    let (mut m, pins) = monitor();
    for k in 0..=601u32 {
        m.on_reading(&reading(100, k * S)).unwrap();
    }
    assert!(m.alarm_latched());
    let totals = m.end_shift();
    assert!(totals.alarm_latched);
    assert!(m.alarm_latched());
    assert!(pins[2].is_high());
    assert!(m.window_exposure().j_per_m2() >= 30.0);
}

#[test]
fn configuration_errors_are_named() {
    let bad = |f: &dyn Fn(&mut ExposureConfig<3>)| {
        let mut c = icnirp_config();
        f(&mut c);
        match Monitor::new(
            meter(),
            s254(),
            c,
            [SimPin::new(), SimPin::new(), SimPin::new()],
        ) {
            Err(ExposureError::Config(e)) => e,
            other => panic!(
                "expected a configuration error, got {:?}",
                other.map(|_| ())
            ),
        }
    };
    assert_eq!(
        bad(&|c| c.window_ticks = u64::from(8 * HOUR + 1)),
        ExposureConfigError::WindowNotWholeBuckets
    );
    assert_eq!(
        bad(&|c| c.bucket_ticks = 0),
        ExposureConfigError::WindowNotWholeBuckets
    );
    assert_eq!(
        bad(&|c| c.bucket_ticks = u64::from(MIN / 2)),
        ExposureConfigError::WindowTooLong
    );
    assert_eq!(
        bad(&|c| c.limit = RadiantExposure::from_j_per_m2(0.0)),
        ExposureConfigError::Limit
    );
    assert_eq!(
        bad(&|c| c.limit = RadiantExposure::from_j_per_m2(f64::NAN)),
        ExposureConfigError::Limit
    );
    assert_eq!(
        bad(&|c| c.levels = [0.5, 0.5, 1.0]),
        ExposureConfigError::WarningLevels
    );
    assert_eq!(
        bad(&|c| c.levels = [0.8, 0.5, 1.0]),
        ExposureConfigError::WarningLevels
    );
    assert_eq!(
        bad(&|c| c.hysteresis = 0.6),
        ExposureConfigError::Hysteresis
    );
    assert_eq!(
        bad(&|c| c.hysteresis = -0.1),
        ExposureConfigError::Hysteresis
    );
    assert_eq!(bad(&|c| c.max_gap_ticks = 0), ExposureConfigError::MaxGap);
    assert!(WeightFactor::from_ratio(0.0).is_none());
    assert!(WeightFactor::from_ratio(f64::INFINITY).is_none());
}

#[test]
fn uv_index_and_sed() {
    // A band whose erythemal weight factor is 1 (all light in 250–298 nm, s_er = 1, ISO/CIE
    // 17166), so the erythemal irradiance equals the reading.
    let er = WeightFactor::UNWEIGHTED;
    let mut solar =
        SolarMonitor::<11>::new(meter(), er, u64::from(10 * MIN), u64::from(MIN), 10 * S).unwrap();
    // E_er = 0.2 W/m² → UVI 8.0 (WHO 2002 example), category "very high" (8–10, WHO 2002).
    for k in 0..=(11 * 60) {
        solar.accept(200, RangeIndex(0), Ticks(k * S)).unwrap();
    }
    assert!(
        (solar.uv_index().value() - 8.0).abs() < 1e-3,
        "{:?}",
        solar.uv_index()
    );
    assert_eq!(solar.uv_index_reported(), (8, UvIndexCategory::VeryHigh));
    assert!((solar.uv_index_now().value() - 8.0).abs() < 1e-12);

    // E_er = 75 mW/m² → UVI 3 (WHO2002: UVI = 40 m²/W × E_er, computed), "moderate"
    // (WHO2002 categories); 1 h at UVI 1 (25 mW/m²) is 90 J/m² = 0.9 SED (computed:
    // 0.025 W/m² × 3600 s; 1 SED = 100 J/m², ISO17166).
    let mut solar =
        SolarMonitor::<11>::new(meter(), er, u64::from(10 * MIN), u64::from(MIN), 10 * S).unwrap();
    for k in 0..=3600 {
        solar.accept(75, RangeIndex(0), Ticks(k * S)).unwrap();
    }
    assert_eq!(solar.uv_index_reported(), (3, UvIndexCategory::Moderate));
    assert!((solar.day_sed() - 3.0 * 0.9).abs() < 1e-6);
    solar.reset_day();
    assert_eq!(solar.day_sed(), 0.0);
}

#[test]
fn uva_eye_rule_sets_stay_apart() {
    // IEC 62471:2006 §4.3.2: 10⁴ J/m² for t ≤ 1000 s, then 10 W/m²; Directive 2006/25/EC:
    // 10⁴ J/m² per 8 h (EU2006 Annex I Table 1.1 (b)). Continuous at 1000 s; 28.8× apart at
    // 8 h (computed: 10 W/m² × 28 800 s / 10⁴ J/m²).
    let iec = UvaEyeRule::Iec62471;
    let eu = UvaEyeRule::Directive2006;
    assert_eq!(iec.allowance(Seconds::from_s(500.0)).j_per_m2(), 1e4);
    assert_eq!(iec.allowance(Seconds::from_s(1000.0)).j_per_m2(), 1e4);
    assert_eq!(iec.allowance(Seconds::from_s(3600.0)).j_per_m2(), 36_000.0);
    let eight_h = Seconds::from_s(8.0 * 3600.0);
    assert_eq!(eu.allowance(eight_h).j_per_m2(), 1e4);
    assert!(
        (iec.allowance(eight_h).j_per_m2() / eu.allowance(eight_h).j_per_m2() - 28.8).abs() < 1e-12
    );
}

#[test]
fn display_lines_fit_and_read_right() {
    assert_eq!(
        dose_line(
            0.421,
            Some(Seconds::from_s(3.0 * 3600.0 + 7.0 * 60.0 + 59.0))
        )
        .as_str(),
        "DOSE  43% 3h07m"
    );
    assert_eq!(dose_line(0.0, None).as_str(), "DOSE   0%   --");
    assert_eq!(
        dose_line(0.999, Some(Seconds::from_s(5.2))).as_str(),
        "DOSE 100% STOP"
    );
    assert_eq!(
        dose_line(0.5, Some(Seconds::from_s(125.0))).as_str(),
        "DOSE  50% 2m05s"
    );
    assert_eq!(
        solar_line(7, UvIndexCategory::High, 1.23).as_str(),
        "UVI 7 HI  1.3SED"
    );
    assert_eq!(
        solar_line(11, UvIndexCategory::Extreme, 0.0).as_str(),
        "UVI11 EXT 0.0SED"
    );
    assert_eq!(
        solar_line(3, UvIndexCategory::Moderate, 1e9).as_str(),
        "UVI 3 MOD 999SED"
    );
    // Ten SED and more: whole SED, rounded up, never run into the category.
    assert_eq!(
        solar_line(5, UvIndexCategory::Moderate, 17.4).as_str(),
        "UVI 5 MOD  18SED"
    );
    assert_eq!(
        solar_line(5, UvIndexCategory::Moderate, 9.95).as_str(),
        "UVI 5 MOD  10SED"
    );
    assert_eq!(
        solar_line(5, UvIndexCategory::Moderate, 9.89).as_str(),
        "UVI 5 MOD 9.9SED"
    );
    assert_eq!(
        status_line(Validity::Valid { days_left: 200 }, false).as_str(),
        "CAL OK         "
    );
    assert_eq!(
        status_line(Validity::Valid { days_left: 12 }, true).as_str(),
        "CALDUE 12d ACK!"
    );
    assert_eq!(
        status_line(Validity::Valid { days_left: 30 }, false).as_str(),
        "CALDUE 30d     "
    );
    assert_eq!(
        status_line(Validity::Expired { days_over: 3 }, true).as_str(),
        "CAL EXPIRD ACK!"
    );
    assert_eq!(
        status_line(Validity::NotYetValid { days_early: 1 }, false).as_str(),
        "CAL DATE?      "
    );
    for l in [
        dose_line(9.99, Some(Seconds::from_s(1e9))),
        solar_line(u32::MAX, UvIndexCategory::Extreme, 1e9),
        status_line(
            Validity::Valid {
                days_left: u32::MAX,
            },
            true,
        ),
        status_line(Validity::Valid { days_left: 0 }, true),
    ] {
        assert!(l.len() <= 16);
    }
}

#[test]
fn sampling_plan_speeds_up_on_change() {
    let plan = photon_ledger::control::exposure::SamplingPlan {
        slow_ticks: 10 * S,
        fast_ticks: S,
        change: 0.2,
        floor: Irradiance::from_w_per_m2(1e-4),
    };
    let e = Irradiance::from_w_per_m2;
    assert_eq!(plan.next_delay(e(1.0), e(1.05)), 10 * S);
    assert_eq!(plan.next_delay(e(1.0), e(1.5)), S);
    assert_eq!(plan.next_delay(e(1.0), e(0.5)), S);
    assert_eq!(plan.next_delay(e(0.0), e(0.00005)), 10 * S);
}

#[test]
fn rolling_window_ram_at_one_minute_buckets_over_8_h() {
    // 480 complete buckets + the current one, one 16-byte mark each, plus bookkeeping.
    let size = core::mem::size_of::<RollingWindow<481>>();
    println!("RollingWindow<481> (8 h in 1-min buckets): {size} bytes");
    assert!(size <= 481 * 16 + 64, "{size}");
    // 8 h in 10-min buckets.
    assert!(core::mem::size_of::<RollingWindow<49>>() <= 49 * 16 + 64);
}

#[test]
fn a_fine_code_step_is_read_exactly_not_twenty_percent_high() {
    // The configuration from the defect report: 16-bit ADC at 2.5 V, a 100 MΩ range, a
    // 0.2 A/W detector of 1 mm², a 32.768 kHz tick and a 395/10 nm LED: 1.9e-6 W/m² per
    // code, 2.9e-11 J/m² per integrator unit (computed). Weighted by 1e-4 (illustrative, the
    // order of S(λ) averaged over such a band, from memory) that is 12.5 steps of the old
    // accrual's 2⁻³² µJ/m², which it rounded up to 13: 4 % high (20 % at a weight of 2e-5).
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(2.5),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_mohm(100.0),
            dark_offset: 0,
        }],
    )
    .unwrap();
    let m = Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Led {
            peak: Wavelength::from_nm(395.0),
            fwhm: Wavelength::from_nm(10.0),
        },
        tick_rate: TickRate::from_hz(32_768).unwrap(),
        sample_area: None,
    })
    .unwrap();
    let w = 1e-4;
    let k = m.j_per_m2_per_unit(RangeIndex(0));
    let mut config = icnirp_config();
    config.max_gap_ticks = 40_000;
    config.window_ticks = 8 * 3600 * 32_768;
    config.bucket_ticks = 600 * 32_768;
    let pins = [SimPin::new(), SimPin::new(), SimPin::new()];
    let mut mon = ExposureMonitor::<49, 3, SimPin>::new(
        m,
        WeightFactor::from_ratio(w).unwrap(),
        config,
        pins,
    )
    .unwrap();
    assert_eq!(mon.dose().precision_bits(), 52, "one range: exact weights");
    // Irregular readings for 20 min; the exact trapezoid in integers.
    let (mut t, mut last, mut units) = (0u32, None::<(i32, u32)>, 0i128);
    for n in 0..1200u32 {
        let code = 1000 + i32::try_from((n * 7919) % 3000).unwrap();
        mon.on_reading(&Reading {
            code,
            range: RangeIndex(0),
            at: Ticks(t),
        })
        .unwrap();
        if let Some((c0, t0)) = last {
            units += i128::from(c0 + code) * i128::from(t - t0);
        }
        last = Some((code, t));
        t += 30_000 + (n % 5) * 1000;
    }
    let exact = units as f64 * k * w;
    let got = mon.window_exposure().j_per_m2();
    assert!((got - exact).abs() <= exact * 1e-12, "{got} vs {exact}");
}
