//! Unit tests of [`super`].

use super::*;

/// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s.
/// 1 W/m² per code in range 0, 10 W/m² per code in range 1, 1000 ticks/s.
fn meter() -> Meter {
    crate::fixtures::two_range_meter(365.0).unwrap()
}

#[test]
fn constant_reading_gives_irradiance_times_time() {
    let m = meter();
    let mut i = Integrator::new(&m, 10_000);
    for n in 0..=100u32 {
        i.accept(50, RangeIndex(0), Ticks(n * 10)).unwrap();
    }
    // 50 W/m² for 1.000 s = 50 J/m².
    assert!((i.exposure().j_per_m2() - 50.0).abs() < 1e-12);
}

#[test]
fn trapezoid_of_a_ramp_and_irregular_spacing() {
    let mut i = Integrator::new(&meter(), 10_000);
    i.accept(0, RangeIndex(0), Ticks(0)).unwrap();
    i.accept(100, RangeIndex(0), Ticks(300)).unwrap();
    i.accept(100, RangeIndex(0), Ticks(1000)).unwrap();
    // ½·100·0.3 + 100·0.7 = 85 J/m².
    assert!((i.exposure().j_per_m2() - 85.0).abs() < 1e-12);
}

#[test]
fn range_change_splits_the_trapezoid_exactly() {
    let mut i = Integrator::new(&meter(), 10_000);
    i.accept(40, RangeIndex(0), Ticks(0)).unwrap();
    // 4 codes in range 1 is 40 W/m²: a constant 40 W/m² over the switch.
    i.accept(4, RangeIndex(1), Ticks(500)).unwrap();
    i.accept(4, RangeIndex(1), Ticks(1000)).unwrap();
    assert!((i.exposure().j_per_m2() - 40.0).abs() < 1e-12);
    assert_eq!(i.raw_total(RangeIndex(0)), 40 * 500);
    assert_eq!(i.raw_total(RangeIndex(1)), 4 * 500 + 8 * 500);
}

#[test]
fn timing_faults_are_explicit() {
    let start = u32::MAX - 5;
    let mut i = Integrator::new(&meter(), 100);
    i.accept(10, RangeIndex(0), Ticks(start)).unwrap();
    assert_eq!(
        i.accept(10, RangeIndex(0), Ticks(start)),
        Err(SampleError::Repeated)
    );
    // Across the wrap: 50 ticks later is fine.
    let s = i
        .accept(10, RangeIndex(0), Ticks(start).wrapping_add(50))
        .unwrap();
    assert_eq!(s.interval, 50);
    assert!((i.exposure().j_per_m2() - 0.5).abs() < 1e-12);
    assert_eq!(
        i.accept(10, RangeIndex(0), Ticks(start).wrapping_add(151)),
        Err(SampleError::Gap { ticks: 101 })
    );
    // The gap was not integrated as measured dose: it is charged beside it,
    // 10 W/m² × 0.101 s.
    assert!((i.exposure().j_per_m2() - 0.5).abs() < 1e-12);
    assert!((i.gap_charge().j_per_m2() - 1.01).abs() < 1e-12);
    assert!((i.exposure_bound().j_per_m2() - 1.51).abs() < 1e-12);
    assert_eq!(
        i.accept(10, RangeIndex(9), Ticks(1)),
        Err(SampleError::UnknownRange)
    );
}

#[test]
fn a_backwards_step_restarts_the_run_and_never_blocks() {
    let mut i = Integrator::new(&meter(), 100);
    i.accept(10, RangeIndex(0), Ticks(1000)).unwrap();
    i.accept(10, RangeIndex(0), Ticks(1010)).unwrap();
    assert_eq!(
        i.accept(10, RangeIndex(0), Ticks(1003)),
        Err(SampleError::Backwards { ticks: 7 })
    );
    // The next reading integrates from the re-anchored 1003, not from 1010.
    assert_eq!(
        i.accept(10, RangeIndex(0), Ticks(1005)).unwrap().interval,
        2
    );
    // 10 W/m² over 10 + 2 ticks of 1 ms.
    assert_eq!(i.raw_total(RangeIndex(0)), 20 * 12);
    assert_eq!(i.gap_charge().j_per_m2(), 0.0);
}

#[test]
fn a_forward_jump_of_half_the_counter_is_a_gap_not_a_blinding() {
    // Before the shared policy, a jump of 2³¹ ticks or more read as "backwards" and every
    // later sample was refused until the counter passed the old value.
    let mut i = Integrator::new(&meter(), 1000);
    i.accept(4, RangeIndex(0), Ticks(0)).unwrap();
    let jump = (1u32 << 31) + 12_345;
    assert_eq!(
        i.accept(6, RangeIndex(0), Ticks(jump)),
        Err(SampleError::Gap { ticks: jump })
    );
    // Charged with the larger end (6 codes) for the whole jump.
    assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 6 * i128::from(jump));
    // And the very next reading is integrated.
    assert_eq!(
        i.accept(6, RangeIndex(0), Ticks(jump + 10))
            .unwrap()
            .interval,
        10
    );
    assert_eq!(i.raw_total(RangeIndex(0)), 12 * 10);
}

#[test]
fn a_gap_charges_at_least_the_brighter_end() {
    // Rising light across a gap in one range: 5 then 30 W/m² (range 0) for 0.5 s: the
    // brighter end, 30 W/m² × 0.5 s = 15 J/m².
    let mut i = Integrator::new(&meter(), 100);
    i.accept(5, RangeIndex(0), Ticks(0)).unwrap();
    let _ = i.accept(30, RangeIndex(0), Ticks(500));
    assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 30 * 500);
    assert!((i.gap_charge().j_per_m2() - 15.0).abs() < 1e-12);
    // Across a range change, 5 W/m² (range 0) then 30 W/m² (3 codes in range 1): both
    // ends' rectangles, 2.5 + 15 J/m², which bounds the brighter end's 15 J/m².
    let mut i = Integrator::new(&meter(), 100);
    i.accept(5, RangeIndex(0), Ticks(0)).unwrap();
    assert_eq!(
        i.accept(3, RangeIndex(1), Ticks(500)),
        Err(SampleError::Gap { ticks: 500 })
    );
    assert_eq!(i.raw_gap(RangeIndex(1)), 2 * 3 * 500);
    assert_eq!(i.raw_gap(RangeIndex(0)), 2 * 5 * 500);
    assert!((i.gap_charge().j_per_m2() - 17.5).abs() < 1e-12);
    // Below-dark codes charge nothing.
    let mut j = Integrator::new(&meter(), 100);
    j.accept(-5, RangeIndex(0), Ticks(0)).unwrap();
    let _ = j.accept(-2, RangeIndex(0), Ticks(500));
    assert_eq!(j.gap_charge().j_per_m2(), 0.0);
}

#[test]
fn limits_count_the_gap_charge_and_targets_do_not() {
    let mut i = Integrator::new(&meter(), 100);
    let target = i
        .add_threshold(RadiantExposure::from_j_per_m2(2.0), Rounding::NotBefore)
        .unwrap();
    let limit = i
        .add_threshold(RadiantExposure::from_j_per_m2(2.0), Rounding::NotAfter)
        .unwrap();
    i.accept(10, RangeIndex(0), Ticks(0)).unwrap();
    // 10 W/m² × 0.2 s gap: 2 J/m² charged, nothing measured.
    let _ = i.accept(10, RangeIndex(0), Ticks(200));
    let c = i.crossed();
    assert!(c.contains(limit), "the limit must count the gap charge");
    assert!(
        !c.contains(target),
        "the target must count only measured dose"
    );
}

#[test]
fn thresholds_round_in_the_safe_direction() {
    let mut i = Integrator::new(&meter(), 10_000);
    let stop = i
        .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotBefore)
        .unwrap();
    let limit = i
        .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotAfter)
        .unwrap();
    i.accept(10, RangeIndex(0), Ticks(0)).unwrap();
    let mut t = 0;
    let mut stop_at = None;
    let mut limit_at = None;
    while stop_at.is_none() {
        t += 1;
        let s = i.accept(10, RangeIndex(0), Ticks(t)).unwrap();
        if s.crossed.contains(limit) && limit_at.is_none() {
            limit_at = Some((t, i.exposure().j_per_m2()));
        }
        if s.crossed.contains(stop) {
            stop_at = Some((t, i.exposure().j_per_m2()));
        }
    }
    let (ts, hs) = stop_at.unwrap();
    let (tl, hl) = limit_at.unwrap();
    assert!(hs >= 1.0, "stop fired below target: {hs}");
    assert!(hl <= 1.0, "limit fired above its level: {hl}");
    assert!(tl <= ts);
}

#[test]
fn thresholds_follow_range_changes_and_preload() {
    let mut i = Integrator::new(&meter(), 10_000);
    i.set_preload(RadiantExposure::from_j_per_m2(5.0));
    let id = i
        .add_threshold(RadiantExposure::from_j_per_m2(10.0), Rounding::NotBefore)
        .unwrap();
    i.accept(2, RangeIndex(1), Ticks(0)).unwrap();
    let mut t = 0;
    loop {
        t += 10;
        // Alternate ranges with the same 20 W/m².
        let (net, r) = if (t / 10) % 2 == 0 { (2, 1) } else { (20, 0) };
        let s = i.accept(net, RangeIndex(r), Ticks(t)).unwrap();
        if s.crossed.contains(id) {
            break;
        }
    }
    let h = i.exposure().j_per_m2();
    assert!((10.0 - 1e-12..10.0 + 1e-12).contains(&h), "{h}");
    // 5 J/m² at 20 W/m² takes 250 ms; the dose is exactly 10 J/m² at 250 ms, a tie,
    // which fires at that very sample.
    assert_eq!(t, 250);
}

#[test]
fn units_to_threshold_counts_down_in_segment_units() {
    let mut i = Integrator::new(&meter(), 10_000);
    // 1 J/m² in range 0 (1 W/m² per code, 1000 ticks/s): ½·1/1000 = 0.0005 J/m² per
    // unit, so 2000 units exactly (a tie needs no extra unit).
    let id = i
        .add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotBefore)
        .unwrap();
    // Before any interval the segment is still the initial one (range 0).
    assert_eq!(i.units_to_threshold(id), Some(2000));
    i.accept(5, RangeIndex(1), Ticks(0)).unwrap();
    assert_eq!(i.segment_range(), RangeIndex(0));
    assert_eq!(i.units_to_threshold(id), Some(2000));
    // 10 ticks at net 5 in range 1 (0.005 J/m² per unit): the first end's half
    // (5·10 = 50 units) closes into range 1's total, the second opens the segment with
    // 50 units; 0.25 J/m² is closed, so (1 − 0.25) / 0.005 = 150 units − 50 = 100 remain.
    i.accept(5, RangeIndex(1), Ticks(10)).unwrap();
    assert_eq!(i.segment_range(), RangeIndex(1));
    assert_eq!(i.units_to_threshold(id), Some(100));
    i.accept(5, RangeIndex(1), Ticks(21)).unwrap();
    assert_eq!(i.units_to_threshold(id), Some(-10));
    assert!(i.crossed().contains(id));
    assert_eq!(i.units_to_threshold(ThresholdId(5)), None);
}

#[test]
fn full_threshold_list_hands_the_level_back() {
    let mut i = Integrator::new(&meter(), 1);
    for _ in 0..MAX_THRESHOLDS {
        i.add_threshold(RadiantExposure::from_j_per_m2(1.0), Rounding::NotAfter)
            .unwrap();
    }
    let level = RadiantExposure::from_j_per_m2(7.0);
    assert_eq!(i.add_threshold(level, Rounding::NotAfter), Err(level));
}

#[test]
fn segment_overflow_folds_exactly() {
    let mut i = Integrator::new(&meter(), i32::MAX as u32);
    let big = i32::MAX - 1;
    i.accept(big, RangeIndex(0), Ticks(0)).unwrap();
    let mut t = 0u32;
    for _ in 0..6 {
        t = t.wrapping_add(i32::MAX as u32);
        i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
    }
    let expected = 6 * 2 * i128::from(big) * i128::from(i32::MAX);
    assert_eq!(i.raw_total(RangeIndex(0)), expected);
}

#[test]
fn trapezoid_term_equals_the_wide_product() {
    let cases = [
        (0, 0, 1),
        (0x1FFFF, 0, 0x3FFF),
        (0x20000, 0, 0x3FFF),
        (-0x20000, 0, 0x3FFF),
        (-0x20001, 0, 0x3FFF),
        (0x10000, 0x0FFFF, 0x3FFF),
        (0x1FFFF, 0, 0x4000),
        (-0x1FFFF, -1, 0x3FFF),
        (-0x10000, 0, 3),
        (5, 7, u32::MAX),
        (i32::MAX, i32::MAX, i32::MAX as u32),
        (i32::MIN, i32::MIN, i32::MAX as u32),
        (i32::MAX, 1, 2),
        (1234, -5678, 10),
    ];
    for (a, b, dt) in cases {
        let wide = (i64::from(a) + i64::from(b)) * i64::from(dt);
        assert_eq!(trapezoid_term(a, b, dt), wide, "{a} {b} {dt}");
    }
}

#[test]
fn cached_crossed_set_matches_a_full_scan_both_ways() {
    // Signed codes make the integral fall as well as rise, so thresholds are crossed and
    // uncrossed again; the step's crossed set must always equal the full scan.
    let mut i = Integrator::new(&meter(), 10_000);
    for level in [0.02, 0.05, 0.08] {
        i.add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotBefore)
            .unwrap();
        i.add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotAfter)
            .unwrap();
    }
    let mut x: u32 = 12345;
    let mut t = 0u32;
    let mut seen = [false; 2];
    let mut uncrossed = false;
    let mut prev = 0u8;
    for n in 0..5_000 {
        x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
        let drift = if (n / 500) % 2 == 0 { 3 } else { -4 };
        let net = ((x >> 16) % 21) as i32 - 10 + drift;
        t += 1 + (x >> 8) % 5;
        let range = RangeIndex(u8::from(n % 997 == 0));
        let s = i.accept(net, range, Ticks(t)).unwrap();
        assert_eq!(s.crossed, i.crossed(), "sample {n}");
        seen[usize::from(s.crossed.0 != 0)] = true;
        uncrossed |= prev & !s.crossed.0 != 0;
        prev = s.crossed.0;
    }
    assert_eq!(seen, [true, true]);
    assert!(uncrossed, "the walk never fell back below a threshold");
    i.clear_thresholds();
    let s = i.accept(1, RangeIndex(0), Ticks(t + 1)).unwrap();
    assert_eq!(s.crossed, Crossed(0));
}

#[test]
fn small_terms_near_the_segment_limit_fold_exactly() {
    // Bring the open segment close to i64::MAX with large terms, then continue with
    // terms small enough for the 32-bit path; the total must stay exact across the fold.
    let mut i = Integrator::new(&meter(), i32::MAX as u32);
    let big = i32::MAX - 1;
    let mut expected: i128 = 0;
    let mut t = 0u32;
    let mut last = big;
    i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
    t = t.wrapping_add(i32::MAX as u32);
    i.accept(big, RangeIndex(0), Ticks(t)).unwrap();
    expected += 2 * i128::from(big) * i128::from(i32::MAX);
    for n in 0..40 {
        let net = if n == 0 { 0x7FFF } else { 0xFFFF };
        t = t.wrapping_add(0x3FFF);
        i.accept(net, RangeIndex(0), Ticks(t)).unwrap();
        expected += (i128::from(net) + i128::from(last)) * 0x3FFF;
        last = net;
        assert_eq!(i.raw_total(RangeIndex(0)), expected, "sample {n}");
    }
    assert!(expected > i128::from(i64::MAX));
}

/// The limit the previous conversion computed in `f64` (J/m² sums, one division, `libm`
/// rounding), kept here as the oracle of the integer conversion that replaced it.
fn f64_limit(
    scale: &[f64; MAX_RANGES],
    closed: &[i128; MAX_RANGES],
    gap: &[i64; MAX_RANGES],
    preload: f64,
    segment_range: usize,
    level: f64,
    rounding: Rounding,
) -> (i64, f64) {
    let closed_j = preload
        + closed
            .iter()
            .zip(scale)
            .map(|(c, k)| *c as f64 * k)
            .sum::<f64>();
    let gap_j = gap
        .iter()
        .zip(scale)
        .map(|(g, k)| *g as f64 * k)
        .sum::<f64>();
    let k = scale[segment_range];
    match rounding {
        Rounding::NotBefore => {
            let q = (level * (1.0 - TIE_SLACK) - closed_j) / k;
            (libm::ceil(q) as i64, q)
        }
        Rounding::NotAfter => {
            let q = (level * (1.0 + TIE_SLACK) - closed_j - gap_j) / k;
            (libm::floor(q) as i64, q)
        }
    }
}

#[test]
fn integer_limits_equal_the_f64_conversion_they_replace() {
    // Random meters (2 to 4 ranges, scales 1e-12 ..= 1e-3 J/m² per unit, so neighbouring
    // ranges differ by up to 10⁹), closed totals and gap charges in every range, a preload,
    // levels from well below the closed dose to far above it, both roundings, every range
    // as the open one. The integer limit must equal the f64 one, except where the f64
    // quotient lies within its own rounding error of an integer (then they may differ by
    // one, and both must lie within that error of the quotient).
    let mut seed = 0x5eed_1234_abcd_9876u64;
    let mut next = move || {
        seed ^= seed >> 12;
        seed ^= seed << 25;
        seed ^= seed >> 27;
        seed.wrapping_mul(0x2545_f491_4f6c_dd1d)
    };
    let unit = move |n: &mut dyn FnMut() -> u64| (n() >> 11) as f64 / (1u64 << 53) as f64;
    let mut disagreements = 0;
    let mut strict = 0;
    let cases = 50_000;
    for case in 0..cases {
        let ranges = 2 + (next() % 3) as usize;
        let mut scale = [0.0; MAX_RANGES];
        for k in scale.iter_mut().take(ranges) {
            *k = 1e-12 * 1e9f64.powf(unit(&mut next));
        }
        let mut integ = Integrator::from_scales(scale, 1000);
        let mut closed = [0i128; MAX_RANGES];
        let mut gap = [0i64; MAX_RANGES];
        for r in 0..ranges {
            // Totals of up to 2⁴⁸ units, a few negative (net codes below the dark offset).
            let mag = (next() >> (16 + next() % 48)) as i128;
            closed[r] = if next() % 8 == 0 { -mag } else { mag };
            if next() % 2 == 0 {
                gap[r] = (next() >> (20 + next() % 44)) as i64;
            }
        }
        let preload = if next() % 2 == 0 {
            0.0
        } else {
            unit(&mut next) * 1e3
        };
        integ.closed = closed;
        integ.gap = gap;
        integ.has_gap = gap.iter().any(|g| *g != 0);
        let segment_range = (next() % ranges as u64) as usize;
        integ.segment_range = RangeIndex(segment_range as u8);
        integ.set_preload(RadiantExposure::from_j_per_m2(preload));
        let dose = preload
            + closed
                .iter()
                .zip(&scale)
                .map(|(c, k)| *c as f64 * k)
                .sum::<f64>();
        let gap_j = gap
            .iter()
            .zip(&scale)
            .map(|(g, k)| *g as f64 * k)
            .sum::<f64>();
        for rounding in [Rounding::NotBefore, Rounding::NotAfter] {
            // Level: the dose (and gap) times 0.5 ..= 3, or plus a few units of the open range.
            let level = if next() % 2 == 0 {
                (dose.abs() + gap_j) * (0.5 + 2.5 * unit(&mut next))
            } else {
                dose + gap_j + scale[segment_range] * (next() % 1000) as f64 * unit(&mut next)
            };
            integ.clear_thresholds();
            let id = integ
                .add_threshold(RadiantExposure::from_j_per_m2(level), rounding)
                .unwrap();
            let got = integ.thresholds.limit[usize::from(id.0)];
            let (want, q) = f64_limit(
                &scale,
                &closed,
                &gap,
                preload,
                segment_range,
                level,
                rounding,
            );
            let k = scale[segment_range];
            if 64.0 * f64::EPSILON * (level.abs() + dose.abs() + gap_j + preload) / k < 0.01 {
                strict += 1;
            }
            if got == want {
                continue;
            }
            // The f64 quotient's own error: a few ulps of each term it was computed from.
            let err = 64.0 * f64::EPSILON * (level.abs() + dose.abs() + gap_j + preload) / k;
            let to_integer = (q - libm::round(q)).abs();
            if err < 0.01 && to_integer > err {
                // The f64 conversion is exact to the integer here: the two must agree.
                assert_eq!(got, want, "case {case}, {rounding:?}: quotient {q}");
            } else {
                // Both approximate the same quotient: within the f64 result's own error.
                assert!(
                    (got as f64 - q).abs() <= err + 1.0,
                    "case {case}, {rounding:?}: integer {got}, f64 {want} (quotient {q}, error {err})"
                );
                if got != want {
                    disagreements += 1;
                }
            }
        }
    }
    // Most conversions are exact in f64 too, so they were compared for equality.
    assert!(
        strict > cases / 2,
        "only {strict} of {} conversions compared strictly",
        2 * cases
    );
    assert!(
        disagreements > 0,
        "the loose comparison was never exercised"
    );
}

#[test]
fn wide_terms_are_exact_and_cross_through_the_band() {
    // A 24-bit converter (codes up to 2²³) sampled at 10 Hz on a 1 MHz tick: every term is
    // beyond 32 bits. The totals must equal the closed form Σ (n_i + n_{i−1}) · Δt (computed
    // from the definition in i128).
    let m = meter();
    let mut i = Integrator::new(&m, 200_000);
    let id = i
        .add_threshold(RadiantExposure::from_j_per_m2(1e12), Rounding::NotBefore)
        .unwrap();
    let mut want = 0i128;
    let mut prev: Option<(i32, u32)> = None;
    for n in 0..200u32 {
        let code = 8_000_000 + ((n * 7919) % 300_000) as i32 - 150_000;
        let at = 5 + n * 100_000;
        let s = i.accept(code, RangeIndex(0), Ticks(at)).unwrap();
        if let Some((c0, t0)) = prev {
            want += i128::from(code + c0) * i128::from(at - t0);
            assert_eq!(s.interval, 100_000);
        }
        prev = Some((code, at));
        assert!(!s.crossed.contains(id));
    }
    assert_eq!(i.raw_total(RangeIndex(0)), want);
    // A level just above the dose so far is crossed by the next wide sample, through the
    // cache band like a small one.
    let next_units = i128::from(2 * 8_000_000) * 100_000;
    let k = m.j_per_m2_per_unit(RangeIndex(0));
    let level = (want + next_units / 2) as f64 * k;
    i.set_threshold(id, RadiantExposure::from_j_per_m2(level));
    assert!(!i.crossed().contains(id));
    let s = i
        .accept(8_000_000, RangeIndex(0), Ticks(5 + 200 * 100_000))
        .unwrap();
    assert!(s.crossed.contains(id));
    assert_eq!(i.crossed(), s.crossed);
}
