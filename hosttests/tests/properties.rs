//! Property tests of the dose arithmetic against plain `std` models.
//!
//! Failure persistence is on: the seeds in `properties.proptest-regressions` (beside this
//! file) are replayed before any new case, and the one recorded failure is also a plain test
//! (`accrual_regression_case`), so it is checked even if the generator changes.

use hosttests::fixtures::round_meter;
use photon_ledger::control::exposure::{Accrued, WeightFactor, WeightedDose};
use photon_ledger::dose::SampleError;
use photon_ledger::frontend::MAX_RANGES;
use photon_ledger::prelude::*;
use proptest::prelude::*;
use proptest::test_runner::{FileFailurePersistence, TestCaseError};

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

// ---------------------------------------------------------------------------------------
// Signed codes, several ranges, repeats, backwards steps, gaps: an exact i128 reference
// ---------------------------------------------------------------------------------------

/// Largest interval integrated by the integrators under test, ticks.
const MAX_GAP: u32 = 10_000;
/// Tick rate of the multi-range meter, Hz.
const TICK_HZ: u32 = 1000;
/// Certificate factor of the multi-range meter, W/m² per A.
const CERT_W_PER_M2_PER_A: f64 = 1.0e6;
/// Feedback resistors of the multi-range meter, Ω: three scales a decade apart.
const GAINS_OHM: [f64; 3] = [1.0e6, 1.0e5, 1.0e4];

/// 16-bit unipolar ADC with a 65.536 V reference (1 mV per code exactly), three ranges, no
/// dark offset (the integrator takes net codes directly, negative ones included).
fn three_range_meter() -> Meter {
    let ranges = GAINS_OHM.map(|ohm| AmplifierRange {
        gain: Transimpedance::from_v_per_a(ohm),
        dark_offset: 0,
    });
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(65.536),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 0,
        },
        &ranges,
    )
    .expect("valid front end");
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
            CERT_W_PER_M2_PER_A,
        )),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(TICK_HZ).expect("non-zero tick rate"),
        sample_area: None,
    })
    .expect("valid meter")
}

/// J/m² per integer unit of range `r`, from the definitions (not from the library): one
/// code is 1 mV, i.e. 1e-3/R A of photocurrent, i.e. 1e-3/R · K W/m²; one unit is one code
/// for one tick counted twice, so ½ · that / tick rate.
fn unit_j_per_m2(r: usize) -> f64 {
    0.5 * 1e-3 / GAINS_OHM[r] * CERT_W_PER_M2_PER_A / f64::from(TICK_HZ)
}

/// How the next timestamp is chosen, relative to the last sample the integrator anchored on.
#[derive(Debug, Clone, Copy)]
enum When {
    /// Forward by 1 ..= MAX_GAP ticks.
    After(u32),
    /// The same timestamp again.
    Repeat,
    /// Back by 1 ..= 2³¹ ticks.
    Back(u32),
    /// Forward by more than MAX_GAP but below 2³¹ ticks.
    Gap(u32),
    /// Forward by 2³¹ ..= 2³² − 1 ticks (a forward jump the wrapping clock cannot tell from
    /// going backwards).
    FarForward(u32),
}

#[derive(Debug, Clone, Copy)]
struct Event {
    net: i32,
    /// Range index; `MAX_RANGES` and above name no range.
    range: u8,
    when: When,
}

fn net_code() -> impl Strategy<Value = i32> {
    prop_oneof![
        6 => -40_000i32..40_000,
        1 => Just(0),
        // Far beyond a 16-bit converter: the integrator's wide (non-32-bit) trapezoid path.
        1 => prop_oneof![Just(i32::MIN), Just(i32::MAX), any::<i32>()],
    ]
}

fn when() -> impl Strategy<Value = When> {
    prop_oneof![
        12 => prop_oneof![1u32..=100, Just(MAX_GAP), 1u32..=MAX_GAP].prop_map(When::After),
        1 => Just(When::Repeat),
        1 => prop_oneof![1u32..=1_000, Just(1u32 << 31), 1u32..=(1u32 << 31)].prop_map(When::Back),
        1 => prop_oneof![Just(MAX_GAP + 1), Just(i32::MAX as u32), (MAX_GAP + 1)..=(i32::MAX as u32)]
            .prop_map(When::Gap),
        1 => ((1u32 << 31)..=u32::MAX).prop_map(When::FarForward),
    ]
}

fn events() -> impl Strategy<Value = Vec<Event>> {
    let range =
        prop_oneof![10 => 0u8..3, 1 => Just(MAX_RANGES as u8), 1 => (MAX_RANGES as u8)..=u8::MAX];
    prop::collection::vec(
        (net_code(), range, when()).prop_map(|(net, range, when)| Event { net, range, when }),
        1..300,
    )
}

/// The last sample the reference anchored on: (net, range, time).
type Anchor = (i32, usize, u32);

/// Exact reference: per-range totals of (net_i + net_{i−1}) · Δt in i128, each end of an
/// interval that changes range charged to its own range.
#[derive(Debug, Default)]
struct Reference {
    totals: [i128; MAX_RANGES],
    last: Option<Anchor>,
}

impl Reference {
    /// The expected outcome of one sample (the interval integrated, or the refusal), with the
    /// reference updated.
    fn accept(&mut self, net: i32, range: u8, at: u32) -> Result<u32, SampleError> {
        let r = usize::from(range);
        if r >= MAX_RANGES {
            return Err(SampleError::UnknownRange);
        }
        let Some((last_net, last_range, last_at)) = self.last else {
            self.last = Some((net, r, at));
            return Ok(0);
        };
        let dt = match reference_timing(last_at, at) {
            Timing::Interval(dt) => dt,
            fault => return self.timing_fault(fault, (net, r, at)),
        };
        let dt = i128::from(dt);
        if r == last_range {
            self.totals[r] += (i128::from(net) + i128::from(last_net)) * dt;
        } else {
            self.totals[last_range] += i128::from(last_net) * dt;
            self.totals[r] += i128::from(net) * dt;
        }
        self.last = Some((net, r, at));
        Ok(dt as u32)
    }
}

// ---------------------------------------------------------------------------------------
// Timing policy of the reference, kept apart so that a change of the integrator's timing
// rules changes only this block. The documented policy (`photon_ledger::time`): Δt by
// wrapping subtraction; 0 is a repeat (nothing changes); 1 ..= the maximum gap is an
// interval; a step back of 1 ..= the maximum gap is backwards (not integrated, the run
// restarts from it); anything else — a forward jump of 2³¹ or more included — is a gap (not
// integrated as measured dose, the run restarts from it).
// ---------------------------------------------------------------------------------------

/// How the reference classifies the interval from `last_at` to `at`.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Timing {
    Interval(u32),
    Repeated,
    Backwards(u32),
    Gap(u32),
}

fn reference_timing(last_at: u32, at: u32) -> Timing {
    let dt = at.wrapping_sub(last_at);
    if dt == 0 {
        Timing::Repeated
    } else if dt <= MAX_GAP {
        Timing::Interval(dt)
    } else if last_at.wrapping_sub(at) <= MAX_GAP {
        Timing::Backwards(last_at.wrapping_sub(at))
    } else {
        Timing::Gap(dt)
    }
}

impl Reference {
    /// The outcome of a timing fault, and what it does to the reference's state.
    fn timing_fault(&mut self, fault: Timing, sample: Anchor) -> Result<u32, SampleError> {
        match fault {
            Timing::Repeated => Err(SampleError::Repeated),
            Timing::Backwards(ticks) => {
                // Not integrated; the run restarts from this sample.
                self.last = Some(sample);
                Err(SampleError::Backwards { ticks })
            }
            Timing::Gap(ticks) => {
                // Not integrated; the next interval starts at this sample.
                self.last = Some(sample);
                Err(SampleError::Gap { ticks })
            }
            Timing::Interval(_) => unreachable!("not a fault"),
        }
    }
}

/// The timestamp an event asks for, from the anchor (or the running clock before the first).
fn timestamp(anchor: u32, when: When) -> u32 {
    match when {
        When::After(d) | When::Gap(d) | When::FarForward(d) => anchor.wrapping_add(d),
        When::Repeat => anchor,
        When::Back(d) => anchor.wrapping_sub(d),
    }
}

/// Feed `events` from `start` to a fresh integrator and to the reference; every outcome and
/// every per-range total must equal the reference's. Returns the integrator.
fn run_against_reference(
    meter: &Meter,
    events: &[Event],
    start: u32,
) -> Result<(Integrator, Reference), TestCaseError> {
    let mut i = Integrator::new(meter, MAX_GAP);
    let mut reference = Reference::default();
    let mut clock = start;
    for (k, e) in events.iter().enumerate() {
        let anchor = reference.last.map_or(clock, |(_, _, at)| at);
        let at = timestamp(anchor, e.when);
        clock = at;
        let expected = reference.accept(e.net, e.range, at);
        let got = i
            .accept(e.net, RangeIndex(e.range), Ticks(at))
            .map(|s| s.interval);
        prop_assert_eq!(got, expected, "event {} {:?}", k, e);
        for r in 0..MAX_RANGES {
            prop_assert_eq!(
                i.raw_total(RangeIndex(r as u8)),
                reference.totals[r],
                "range {} after event {} {:?}",
                r,
                k,
                e
            );
        }
    }
    Ok((i, reference))
}

proptest! {
    #![proptest_config(ProptestConfig {
        failure_persistence: Some(Box::new(FileFailurePersistence::SourceParallel("proptest-regressions"))),
        ..ProptestConfig::default()
    })]

    #[test]
    fn signed_multi_range_streams_match_the_exact_reference(
        events in events(),
        start in prop::sample::select(vec![0u32, u32::MAX - 1_000_000, 7, u32::MAX]),
    ) {
        let meter = three_range_meter();
        let (i, reference) = run_against_reference(&meter, &events, start)?;
        // The read-out: Σ total_r · unit_r in f64. The library computes each scale from the
        // meter (a few f64 operations each) and sums up to four products; 1e-13 of the sum of
        // the magnitudes bounds that rounding (about 2⁻⁵² per operation, under 20 operations).
        let terms: Vec<f64> = (0..3).map(|r| reference.totals[r] as f64 * unit_j_per_m2(r)).collect();
        let model: f64 = terms.iter().sum();
        let size: f64 = terms.iter().map(|t| t.abs()).sum();
        let h = i.exposure().j_per_m2();
        prop_assert!((h - model).abs() <= 1e-13 * size, "{h} vs {model}");
    }

    #[test]
    fn counter_wrap_changes_nothing_with_faults_and_ranges(events in events()) {
        let meter = three_range_meter();
        let (a, _) = run_against_reference(&meter, &events, 0)?;
        let (b, _) = run_against_reference(&meter, &events, u32::MAX - 100)?;
        for r in 0..MAX_RANGES as u8 {
            prop_assert_eq!(a.raw_total(RangeIndex(r)), b.raw_total(RangeIndex(r)));
        }
    }

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
        check_weighted(&samples, w)?;
    }
}

/// The exposure monitors' weighted dose (the one integral read out in the common integer
/// unit) against the f64 trapezoid: one range, so its weight is exact (52 bits) and the only
/// difference is the f64 read-out.
fn check_weighted(samples: &[(i32, u32)], w: f64) -> Result<(), TestCaseError> {
    let meter = round_meter(1e-3, 1000);
    let mut d = WeightedDose::new(&meter, WeightFactor::from_ratio(w).unwrap(), 10_000).unwrap();
    for &(c, t) in samples {
        let a = d.accept(c, RangeIndex(0), Ticks(t)).unwrap();
        prop_assert!(matches!(a, Accrued::Started | Accrued::Interval(_)));
    }
    prop_assert_eq!(d.precision_bits(), 52);
    let h = d.to_exposure(d.total_units()).j_per_m2();
    let model = w * model_exposure(samples, 1e-3, 1000.0);
    prop_assert!((h - model).abs() <= model * 1e-12 + 1e-15, "{h} vs {model}");
    Ok(())
}

/// The failure recorded in `properties.proptest-regressions` (shrunk case), as a plain test.
#[test]
fn accrual_regression_case() {
    // Recorded against the fixed-point accrual the weighted dose replaced; the same stream
    // and weight must hold for its successor.
    check_weighted(&[(0, 1), (23, 764)], 0.115_641_274_611_381_82).unwrap();
}
