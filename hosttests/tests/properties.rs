//! Property tests of the dose arithmetic against plain `std` models.

use hosttests::fixtures::round_meter;
use photon_ledger::exposure::{Accrual, Accrued, WeightFactor};
use photon_ledger::prelude::*;
use proptest::prelude::*;

/// f64 trapezoid of a sample stream, J/m² (the model).
fn model_exposure(samples: &[(i32, u32)], w_per_m2_per_code: f64, tick_hz: f64) -> f64 {
    samples
        .windows(2)
        .map(|p| {
            0.5 * f64::from(p[0].0 + p[1].0) * w_per_m2_per_code * f64::from(p[1].1 - p[0].1)
                / tick_hz
        })
        .sum()
}

fn stream() -> impl Strategy<Value = Vec<(i32, u32)>> {
    prop::collection::vec((0i32..60_000, 1u32..5_000), 2..400).prop_map(|v| {
        let mut t = 0u32;
        v.into_iter()
            .map(|(c, dt)| {
                t += dt;
                (c, t)
            })
            .collect()
    })
}

proptest! {
    #![proptest_config(ProptestConfig { failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn integrator_matches_the_trapezoid_model(samples in stream(), start in prop::sample::select(vec![0u32, u32::MAX - 1_000_000, 7])) {
        let meter = round_meter(1e-3, 1000);
        let mut i = Integrator::new(&meter, 10_000);
        for &(c, t) in &samples {
            i.accept(c, RangeIndex(0), Ticks(start.wrapping_add(t))).unwrap();
        }
        let model = model_exposure(&samples, 1e-3, 1000.0);
        let h = i.exposure().j_per_m2();
        prop_assert!((h - model).abs() <= 1e-12 * model.max(1.0), "{h} vs {model}");
    }

    #[test]
    fn dose_is_monotone_for_non_negative_readings(samples in stream()) {
        let meter = round_meter(1e-3, 1000);
        let mut i = Integrator::new(&meter, 10_000);
        let mut previous = 0.0;
        for &(c, t) in &samples {
            i.accept(c, RangeIndex(0), Ticks(t)).unwrap();
            let h = i.exposure().j_per_m2();
            prop_assert!(h >= previous);
            previous = h;
        }
    }

    #[test]
    fn counter_wrap_changes_nothing(samples in stream()) {
        let meter = round_meter(1e-3, 1000);
        let run = |start: u32| {
            let mut i = Integrator::new(&meter, 10_000);
            for &(c, t) in &samples {
                i.accept(c, RangeIndex(0), Ticks(start.wrapping_add(t))).unwrap();
            }
            i.raw_total(RangeIndex(0))
        };
        prop_assert_eq!(run(0), run(u32::MAX - 100));
    }

    #[test]
    fn stop_threshold_never_fires_below_its_level(samples in stream(), level in 0.001f64..50.0) {
        let meter = round_meter(1e-3, 1000);
        let mut i = Integrator::new(&meter, 10_000);
        let id = i.add_threshold(RadiantExposure::from_j_per_m2(level), Rounding::NotBefore).unwrap();
        for &(c, t) in &samples {
            let s = i.accept(c, RangeIndex(0), Ticks(t)).unwrap();
            if s.crossed.contains(id) {
                prop_assert!(i.exposure().j_per_m2() >= level);
            }
        }
    }

    #[test]
    fn exposure_accrual_is_exact_under_irregular_spacing(samples in stream(), w in 0.001f64..1.0) {
        // The exposure monitor's fixed-point accrual against the f64 trapezoid: it may only
        // round up. Its per-unit factor (0.5·w quanta per unit here, in 2⁻³² steps) is
        // rounded up once at configuration, so the relative excess is below 1/factor.
        let meter = round_meter(1e-3, 1000);
        let mut a = Accrual::new(&meter, WeightFactor::from_ratio(w).unwrap(), 10_000).unwrap();
        let mut fixed: u128 = 0;
        for &(c, t) in &samples {
            if let Accrued::Interval(q) = a.accept(c, RangeIndex(0), Ticks(t)).unwrap() {
                fixed += q;
            }
        }
        let h = fixed as f64 / 4_294_967_296.0 * 1e-6;
        let model = w * model_exposure(&samples, 1e-3, 1000.0);
        prop_assert!(h >= model * (1.0 - 1e-12), "{h} < {model}");
        let factor = 0.5 * w * 4_294_967_296.0;
        prop_assert!(h <= model * (1.0 + 1.0 / factor + 1e-12) + 1e-15, "{h} vs {model}");
    }
}
