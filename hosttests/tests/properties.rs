//! Property tests of the dose arithmetic against plain `std` models.

use hosttests::fixtures::round_meter;
use photon_ledger::exposure::{Accrued, WeightFactor, WeightedDose};
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
                // A tie fires at the tie; the conversion's f64 rounding is < 1e-15 of the
                // level (dose module documentation).
                prop_assert!(i.exposure().j_per_m2() >= level * (1.0 - 1e-15));
            }
        }
    }

    #[test]
    fn weighted_dose_is_exact_under_irregular_spacing(samples in stream(), w in 0.001f64..1.0) {
        // The exposure monitors' weighted dose (the one integral read out in the common
        // integer unit) against the f64 trapezoid: one range, so its weight is exact and the
        // only difference is the f64 read-out.
        let meter = round_meter(1e-3, 1000);
        let mut d = WeightedDose::new(&meter, WeightFactor::from_ratio(w).unwrap(), 10_000).unwrap();
        for &(c, t) in &samples {
            let a = d.accept(c, RangeIndex(0), Ticks(t)).unwrap();
            prop_assert!(matches!(a, Accrued::Started | Accrued::Interval(_)));
        }
        let h = d.to_exposure(d.total_units()).j_per_m2();
        let model = w * model_exposure(&samples, 1e-3, 1000.0);
        prop_assert!((h - model).abs() <= model * 1e-12 + 1e-15, "{h} vs {model}");
    }
}
