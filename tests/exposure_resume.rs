//! The exposure monitor's state survives a reset: window, shift, warnings and the latched
//! alarm come back, and the resumed figures are never below the ones a monitor that never
//! reset would show.

mod common;

use common::{meter, reading};
use hosttests::sim::SimPin;
use photon_ledger::control::exposure::{
    ExposureConfig, ExposureMonitor, ExposureState, OffTime, WeightFactor, STATE_SEGMENTS,
};
use photon_ledger::prelude::*;

const S: u32 = 1000; // ticks per second of the common meter
const MIN: u32 = 60 * S;
const HOUR: u32 = 3600 * S;

/// ICNIRP 2004, Table 1: S(254 nm) = 0.5, for a 254 nm line.
fn s254() -> WeightFactor {
    WeightFactor::from_ratio(0.5).unwrap()
}

fn config() -> ExposureConfig<3> {
    ExposureConfig {
        window_ticks: u64::from(8 * HOUR),
        bucket_ticks: u64::from(10 * MIN),
        // ICNIRP 2004: H_eff ≤ 30 J/m² in any 8 h.
        limit: RadiantExposure::from_j_per_m2(30.0),
        levels: [0.5, 0.8, 1.0],
        hysteresis: 0.05,
        max_gap_ticks: 10 * S,
    }
}

type Monitor = ExposureMonitor<49, 3, SimPin>;

fn pins() -> [SimPin; 3] {
    [SimPin::new(), SimPin::new(), SimPin::new()]
}

/// A worker's morning (invented scenario): 0.1 W/m² (100 codes, 0.05 W/m² effective) for
/// `seconds`, starting at tick 0, one reading a second. Returns the monitor and the last tick.
fn morning(seconds: u32) -> (Monitor, u32) {
    let mut m = Monitor::new(meter(), s254(), config(), pins()).unwrap();
    for k in 0..=seconds {
        m.on_reading(&reading(100, k * S)).unwrap();
    }
    m.on_reading(&reading(0, seconds * S + S)).unwrap();
    (m, seconds * S + S)
}

#[test]
fn an_unknown_off_time_resumes_the_window_and_the_latched_alarm_never_lower() {
    // 620 s at 0.05 W/m² effective: 31 J/m² in the window, the alarm (100 % of 30 J/m²)
    // latched at 600 s.
    let (before, _) = morning(620);
    assert!(before.alarm_latched());
    let state = before.state();
    let out = pins();
    let after = Monitor::resume(
        meter(),
        s254(),
        config(),
        out.clone(),
        &state,
        OffTime::Unknown,
    )
    .unwrap();
    // Never lower, and no more than the rounding to µJ/m² (one µJ/m² per segment and the
    // shift) above.
    let (b, a) = (
        before.window_exposure().j_per_m2(),
        after.window_exposure().j_per_m2(),
    );
    assert!(after.window_units() >= before.window_units(), "{a} < {b}");
    assert!(a - b < 1e-5, "{a} vs {b}");
    let (bs, as_) = (before.shift_totals(), after.shift_totals());
    assert!(as_.exposure.j_per_m2() >= bs.exposure.j_per_m2());
    assert!(as_.exposure.j_per_m2() - bs.exposure.j_per_m2() < 1e-5);
    // The alarm is latched again, every level's output is high.
    assert!(after.alarm_latched());
    assert_eq!(after.active_levels(), 0b111);
    assert!(out.iter().all(SimPin::is_high));
    // The resume is on the record of the shift, with an unknown unmonitored time.
    assert_eq!((as_.resumes, as_.off_unknown, as_.off_ticks), (1, 1, 0));
}

#[test]
fn the_alarm_stays_latched_after_a_resume_until_acknowledged() {
    let (before, _) = morning(620);
    let state = before.state();
    let out = pins();
    let mut m = Monitor::resume(
        meter(),
        s254(),
        config(),
        out.clone(),
        &state,
        OffTime::Unknown,
    )
    .unwrap();
    // Nine hours without light: the restored dose leaves the window, the lower levels clear
    // by themselves, the alarm only when acknowledged.
    for h in 0..=9u32 {
        m.tick(Ticks(h * HOUR)).unwrap();
    }
    assert_eq!(m.window_exposure().j_per_m2(), 0.0);
    assert_eq!(m.active_levels(), 0b100);
    assert!(out[2].is_high() && !out[0].is_high() && !out[1].is_high());
    assert!(!m.acknowledge().unwrap());
    assert!(!out[2].is_high());
}

#[test]
fn a_known_off_time_ages_the_window_but_never_below_an_unbroken_monitor() {
    // Ground truth: a monitor that never reset and saw no light while the other was off.
    // For several off times and morning lengths, the resumed window is at or above the
    // unbroken one at every minute for the next nine hours, and empties in the end.
    for &(seconds, off_min) in &[(620u32, 0u32), (620, 7), (900, 95), (3000, 181), (620, 479)] {
        let (mut truth, t_end) = morning(seconds);
        let state = truth.state();
        let off = off_min * MIN + 1234;
        let mut resumed = Monitor::resume(
            meter(),
            s254(),
            config(),
            pins(),
            &state,
            OffTime::Ticks(u64::from(off)),
        )
        .unwrap();
        for minute in 0..=(9 * 60u32) {
            let t = minute * MIN;
            truth.tick(Ticks(t_end + off + t)).unwrap();
            resumed.tick(Ticks(t)).unwrap();
            assert!(
                resumed.window_units() >= truth.window_units(),
                "morning {seconds} s, off {off_min} min, +{minute} min: {} < {}",
                resumed.window_exposure().j_per_m2(),
                truth.window_exposure().j_per_m2()
            );
        }
        assert_eq!(resumed.window_exposure().j_per_m2(), 0.0);
        assert_eq!(resumed.shift_totals().off_ticks, u64::from(off));
    }
}

#[test]
fn a_state_from_another_bucket_length_is_held_for_a_whole_window() {
    let (before, _) = morning(620);
    let mut state = before.state();
    state.bucket_ticks = u64::from(MIN); // taken with 1-min buckets
    let mut m = Monitor::resume(
        meter(),
        s254(),
        config(),
        pins(),
        &state,
        OffTime::Ticks(u64::from(5 * HOUR)),
    )
    .unwrap();
    // The off time cannot be applied to buckets of another length: nothing is aged, the
    // whole window sits in the open bucket and stays for the full 8 h.
    let w = m.window_units();
    assert!(w >= before.window_units());
    m.tick(Ticks(0)).unwrap();
    m.tick(Ticks(8 * HOUR - 1)).unwrap();
    assert_eq!(m.window_units(), w);
    m.tick(Ticks(8 * HOUR + 10 * MIN)).unwrap();
    assert_eq!(m.window_units(), 0);
}

#[test]
fn the_state_keeps_the_window_by_segment_newest_first() {
    // 620 s of light from the start, then 2 h dark: all the dose sits in buckets of age
    // 11–12 (10-min buckets), i.e. in segment 1 (k = ceil(49 / 8) = 7 buckets per segment).
    let (mut m, t) = morning(620);
    m.tick(Ticks(t + 2 * HOUR)).unwrap();
    let s = m.state();
    assert_eq!(s.segment_buckets, 7);
    assert_eq!(s.window_uj_per_m2[0], 0);
    assert!(s.window_uj_per_m2[1] > 0);
    assert!(s.window_uj_per_m2[2..].iter().all(|&x| x == 0));
    // 0.05 W/m² effective for 620 s (plus the last half-interval to zero): 31.025 J/m².
    let total: u64 = s.window_uj_per_m2.iter().sum();
    let exact_uj = 31_025_000.0;
    assert!(total as f64 >= exact_uj - 1.0 && (total as f64) < exact_uj + 10.0);
    assert_eq!(STATE_SEGMENTS, 8);
    assert_eq!(
        ExposureState::default().window_uj_per_m2,
        [0; STATE_SEGMENTS]
    );
}
