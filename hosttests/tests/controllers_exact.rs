//! Every controller against an exact rational reference computed here, on the host.
//!
//! The reference re-implements the documented timing policy (`photon_ledger::time`) and the
//! trapezoid rule in exact integers per amplifier range, and converts with the library's own
//! published per-range factors (`Meter::j_per_m2_per_unit`, exact binary fractions as
//! `f64`s) in exact big rationals (`num-rational` 0.4). Streams mix negative net codes, two
//! ranges with different scales, repeats, backwards steps, gaps and forward jumps of 2³¹
//! ticks or more, at tick rates from 1 kHz to 10 MHz and code steps from 1 nW/m² to
//! 10 mW/m². Figures must agree within 1e-12 relative; stop samples and timer ticks must be
//! equal, except inside the documented tie band (the f64 rounding of the configuration,
//! < 1e-15 of the target), where either neighbouring answer is accepted.

use hosttests::sim::SimPin;
use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{Signed, ToPrimitive, Zero};
use photon_ledger::control::curing::{
    ActuatorLag, CuringConfig, CuringController, CuringPhase, IrradianceWindow, LightOffCheck,
    PartId, StopPolicy,
};
use photon_ledger::control::exposure::{
    ExposureConfig, ExposureMonitor, WeightFactor, WeightedDose,
};
use photon_ledger::prelude::*;
use proptest::prelude::*;

const MAX_GAP: u32 = 1000;

/// A two-range meter: `step` W/m² per code in range 0 and `ratio` × that in range 1.
fn meter(step: f64, ratio: f64, hz: u32) -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: 16,
            reference: Voltage::from_v(65.536),
            pga_gain: 1.0,
            coding: Coding::Bipolar,
            saturation_margin: 0,
        },
        &[
            AmplifierRange {
                gain: Transimpedance::from_mohm(1.0),
                dark_offset: 0,
            },
            AmplifierRange {
                gain: Transimpedance::from_mohm(1.0 / ratio),
                dark_offset: 0,
            },
        ],
    )
    .unwrap();
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Certificate(IrradiancePerCurrent::from_w_per_m2_per_a(
            step * 1e9,
        )),
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(hz).unwrap(),
        sample_area: None,
    })
    .unwrap()
}

fn q(x: f64) -> BigRational {
    BigRational::from_float(x).expect("finite")
}

fn int(x: i128) -> BigRational {
    BigRational::from_integer(BigInt::from(x))
}

fn to_f64(x: &BigRational) -> f64 {
    x.to_f64().unwrap_or(f64::NAN)
}

/// What the policy says about one reading.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Class {
    First,
    Interval,
    Repeated,
    Backwards,
    Gap,
}

/// The reference: exact per-range trapezoid sums (code·ticks, doubled) and gap charges, and
/// the extended clock, from the documented policy alone.
#[derive(Debug, Clone)]
struct Reference {
    k: [BigRational; 2],
    last: Option<(u32, i32, usize)>,
    sums: [i128; 2],
    gaps: [i128; 2],
    now: u64,
    /// (clock at the interval's end, weighted-by-k contribution) of every integrated interval
    /// and gap, for windows.
    pieces: Vec<(u64, BigRational)>,
}

impl Reference {
    fn new(m: &Meter) -> Self {
        Self {
            k: [
                q(m.j_per_m2_per_unit(RangeIndex(0))),
                q(m.j_per_m2_per_unit(RangeIndex(1))),
            ],
            last: None,
            sums: [0; 2],
            gaps: [0; 2],
            now: 0,
            pieces: Vec::new(),
        }
    }

    fn feed(&mut self, net: i32, r: usize, at: u32) -> Class {
        let Some((lt, ln, lr)) = self.last else {
            self.last = Some((at, net, r));
            return Class::First;
        };
        let dt = at.wrapping_sub(lt);
        if dt == 0 {
            return Class::Repeated;
        }
        self.last = Some((at, net, r));
        if dt <= MAX_GAP {
            let a = i128::from(ln) * i128::from(dt);
            let b = i128::from(net) * i128::from(dt);
            self.sums[lr] += a;
            self.sums[r] += b;
            self.now += u64::from(dt);
            let piece = &self.k[lr] * int(a) + &self.k[r] * int(b);
            self.pieces.push((self.now, piece));
            Class::Interval
        } else if dt.wrapping_neg() <= MAX_GAP {
            Class::Backwards
        } else {
            // The documented charge: in one range the larger end, across a range change both
            // ends' rectangles.
            let mut piece = BigRational::zero();
            let ends: Vec<(i32, usize)> = if r == lr {
                vec![(net.max(ln), r)]
            } else {
                vec![(ln, lr), (net, r)]
            };
            for (n, rr) in ends {
                let units = 2 * i128::from(n.max(0)) * i128::from(dt);
                self.gaps[rr] += units;
                piece += &self.k[rr] * int(units);
            }
            self.now += u64::from(dt);
            self.pieces.push((self.now, piece));
            Class::Gap
        }
    }

    fn measured(&self) -> BigRational {
        &self.k[0] * int(self.sums[0]) + &self.k[1] * int(self.sums[1])
    }

    fn magnitude(&self) -> BigRational {
        &self.k[0] * int(self.sums[0].abs()) + &self.k[1] * int(self.sums[1].abs())
    }

    fn gap(&self) -> BigRational {
        &self.k[0] * int(self.gaps[0]) + &self.k[1] * int(self.gaps[1])
    }
}

fn close(got: f64, want: &BigRational, scale: &BigRational) -> bool {
    let diff = (q(got) - want).abs();
    let tol = scale.abs() * q(1e-12) + q(1e-300);
    diff <= tol
}

/// One generated reading: (net code, range, tick step, kind of step).
#[derive(Debug, Clone, Copy)]
enum Kind {
    Normal,
    Repeat,
    Back,
    Gap,
    Jump,
}

fn events(with_faults: bool) -> impl Strategy<Value = Vec<(i32, usize, u32, Kind)>> {
    let kind = if with_faults {
        prop_oneof![
            20 => Just(Kind::Normal),
            2 => Just(Kind::Repeat),
            2 => Just(Kind::Back),
            2 => Just(Kind::Gap),
            1 => Just(Kind::Jump),
        ]
        .boxed()
    } else {
        prop_oneof![20 => Just(Kind::Normal), 2 => Just(Kind::Repeat)].boxed()
    };
    prop::collection::vec(
        (
            -2_000i32..30_000,
            prop::bool::weighted(0.15),
            1u32..=MAX_GAP,
            kind,
        ),
        2..300,
    )
    .prop_map(|v| {
        v.into_iter()
            .map(|(c, hi, dt, k)| (c, usize::from(hi), dt, k))
            .collect()
    })
}

/// Turn generated steps into absolute ticks, starting at `start`.
fn ticks(events: &[(i32, usize, u32, Kind)], start: u32) -> Vec<(i32, usize, u32)> {
    let mut t = start;
    events
        .iter()
        .enumerate()
        .map(|(i, &(c, r, dt, k))| {
            if i > 0 {
                t = match k {
                    Kind::Normal => t.wrapping_add(dt),
                    Kind::Repeat => t,
                    Kind::Back => t.wrapping_sub(dt),
                    Kind::Gap => t.wrapping_add(MAX_GAP + dt * 1000),
                    Kind::Jump => t.wrapping_add((1u32 << 31) + dt * 7),
                };
            }
            (c, r, t)
        })
        .collect()
}

fn rates() -> impl Strategy<Value = u32> {
    prop::sample::select(vec![1_000u32, 32_768, 1_000_000, 10_000_000])
}

fn steps() -> impl Strategy<Value = f64> {
    prop::sample::select(vec![1e-9, 3.7e-7, 1e-5, 2.5e-4, 1e-2])
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    /// The one integral: measured dose, gap charge and the outcome of every reading.
    #[test]
    fn integrator_equals_the_exact_reference(
        ev in events(true), hz in rates(), step in steps(),
        ratio in prop::sample::select(vec![10.0, 100.0, 7.3]),
        start in prop::sample::select(vec![0u32, u32::MAX - 5_000, 1 << 31]),
    ) {
        let m = meter(step, ratio, hz);
        let mut lib = Integrator::new(&m, MAX_GAP);
        let mut reference = Reference::new(&m);
        for (c, r, t) in ticks(&ev, start) {
            let class = reference.feed(c, r, t);
            let got = lib.accept(c, RangeIndex(r as u8), Ticks(t));
            let ok = match (class, got) {
                (Class::First, Ok(s)) => s.interval == 0,
                (Class::Interval, Ok(s)) => s.interval > 0,
                (Class::Repeated, Err(SampleError::Repeated)) => true,
                (Class::Backwards, Err(SampleError::Backwards { .. })) => true,
                (Class::Gap, Err(SampleError::Gap { .. })) => true,
                _ => false,
            };
            prop_assert!(ok, "{class:?} but the library said {got:?}");
        }
        let want = reference.measured();
        prop_assert!(close(lib.exposure().j_per_m2(), &want, &reference.magnitude()),
            "exposure {} vs {}", lib.exposure().j_per_m2(), to_f64(&want));
        let gap = reference.gap();
        prop_assert!(close(lib.gap_charge().j_per_m2(), &gap, &gap),
            "gap {} vs {}", lib.gap_charge().j_per_m2(), to_f64(&gap));
        prop_assert_eq!(lib.raw_total(RangeIndex(0)), reference.sums[0]);
        prop_assert_eq!(lib.raw_total(RangeIndex(1)), reference.sums[1]);
        prop_assert_eq!(lib.raw_gap(RangeIndex(0)), reference.gaps[0]);
        prop_assert_eq!(lib.raw_gap(RangeIndex(1)), reference.gaps[1]);
    }

    /// The exposure monitors' weighted dose and rolling window, negative codes as zero.
    #[test]
    fn exposure_window_equals_the_exact_reference(
        ev in events(true), hz in rates(), step in steps(),
        ratio in prop::sample::select(vec![10.0, 1000.0]),
        weight in prop::sample::select(vec![1.0, 0.5, 0.0123, 3.0e-6]),
        buckets in 1u64..8, bucket_ms in prop::sample::select(vec![1u64, 7, 50]),
    ) {
        let m = meter(step, ratio, hz);
        let w = WeightFactor::from_ratio(weight).unwrap();
        let bucket = bucket_ms * u64::from(hz) / 1000;
        let config = ExposureConfig {
            window_ticks: buckets * bucket,
            bucket_ticks: bucket,
            // Levels drive outputs only; they never change the figures compared here.
            limit: RadiantExposure::from_j_per_m2(1.0),
            levels: [0.5],
            hysteresis: 0.1,
            max_gap_ticks: MAX_GAP,
        };
        let mut mon = ExposureMonitor::<9, 1, SimPin>::new(m.clone(), w, config, [SimPin::new()]).unwrap();
        let mut dose = WeightedDose::new(&m, w, MAX_GAP).unwrap();
        let mut reference = Reference::new(&m);
        for (c, r, t) in ticks(&ev, 17) {
            let net = c.max(0);
            reference.feed(net, r, t);
            // The monitor through a reading (bipolar converter, no dark offset: code = net).
            let changes = mon.on_reading(&Reading { code: c, range: RangeIndex(r as u8), at: Ticks(t) }).unwrap();
            prop_assert!(!changes.saturated);
            dose.advance_clock(Ticks(t));
            let _ = dose.accept(c, RangeIndex(r as u8), Ticks(t));
        }
        let wq = q(weight);
        let total = (reference.measured() + reference.gap()) * &wq;
        prop_assert!(close(dose.to_exposure(dose.total_units()).j_per_m2(), &total, &total));
        prop_assert!(close(mon.shift_totals().exposure.j_per_m2(), &total, &total));
        prop_assert!(close(mon.shift_totals().gap_bounds.j_per_m2(), &(reference.gap() * &wq), &total));
        prop_assert_eq!(dose.now(), reference.now);
        // The window: every piece whose end lies in the last `buckets` complete buckets or
        // the current one.
        let current = reference.now / bucket;
        let first = current.saturating_sub(buckets);
        let mut window = BigRational::zero();
        for (at, piece) in &reference.pieces {
            if at / bucket >= first {
                window += piece;
            }
        }
        let window = window * &wq;
        prop_assert!(close(mon.window_exposure().j_per_m2(), &window, &total),
            "window {} vs {}", mon.window_exposure().j_per_m2(), to_f64(&window));
    }

    /// The session's stop sample and photon figures.
    #[test]
    fn session_stop_sample_equals_the_exact_reference(
        ev in events(false), hz in rates(), step in steps(),
        target_fraction in 0.05f64..0.95,
    ) {
        let m = meter(step, 10.0, hz);
        // Non-negative codes so the dose rises; the target is a fraction of the stream's dose.
        let stream: Vec<_> = ticks(&ev, 3).into_iter().map(|(c, r, t)| (c.abs(), r, t)).collect();
        let mut full = Reference::new(&m);
        for &(c, r, t) in &stream {
            full.feed(c, r, t);
        }
        let total = to_f64(&full.measured());
        prop_assume!(total > 0.0);
        let target = total * target_fraction;
        let cfg = SessionConfig {
            target: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(target)),
            tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(total * 10.0)),
            max_gap_ticks: MAX_GAP,
            max_unusable_run: 0,
            enable_level: ActiveLevel::High,
            alarm_level: ActiveLevel::High,
        };
        let mut s = Session::new(m.clone(), cfg, SimPin::new(), SimPin::new()).unwrap();
        s.start().unwrap();
        let mut reference = Reference::new(&m);
        let tq = q(target);
        let mut want = None;
        let mut got = None;
        for (i, &(c, r, t)) in stream.iter().enumerate() {
            reference.feed(c, r, t);
            if want.is_none() && reference.measured() >= tq {
                want = Some(i);
            }
            s.on_reading(&Reading { code: c, range: RangeIndex(r as u8), at: Ticks(t) }).unwrap();
            if got.is_none() && s.phase() == Phase::TargetMet {
                got = Some(i);
                let p = s.progress();
                let h = reference.measured();
                prop_assert!(close(p.exposure.j_per_m2(), &h, &h));
                let photons = &h * q(m.band().mol_per_j());
                prop_assert!(close(p.photon_exposure.mol_per_m2(), &photons, &photons));
            }
        }
        if got != want {
            // Only inside the tie band: the dose at the disputed sample is within 1e-15 of
            // the target.
            let i = got.or(want).unwrap();
            let mut r2 = Reference::new(&m);
            for &(c, r, t) in &stream[..=i] {
                r2.feed(c, r, t);
            }
            let rel = ((r2.measured() - &tq) / &tq).abs();
            prop_assert!(rel <= q(1e-15), "stop at {got:?}, exact {want:?}");
        }
    }

    /// The curing controller (light on at the start, stop at the target): its stop sample and
    /// its timer-compare tick.
    #[test]
    fn curing_stop_sample_and_timer_tick_equal_the_exact_reference(
        net in 1i32..30_000, dt in 1u32..=MAX_GAP, hz in rates(), step in steps(),
        target_fraction in 0.05f64..0.95, n in 3usize..200,
    ) {
        let m = meter(step, 10.0, hz);
        let mut full = Reference::new(&m);
        for i in 0..n {
            full.feed(net, 0, i as u32 * dt);
        }
        let target = to_f64(&full.measured()) * target_fraction;
        let cfg = CuringConfig {
            target: RadiantExposure::from_j_per_m2(target),
            tolerance: RadiantExposure::from_j_per_m2(target * 10.0),
            lag: ActuatorLag::Delay { ticks: 0 },
            stop_policy: StopPolicy::AtTarget,
            window: IrradianceWindow::default(),
            light_off: LightOffCheck {
                fraction: 0.05,
                floor: Irradiance::from_w_per_m2(0.0),
                margin_ticks: 10,
            },
            lamp: None,
            max_gap_ticks: MAX_GAP,
            max_unusable_run: 0,
            enable_level: ActiveLevel::High,
            alarm_level: ActiveLevel::High,
            interlock_closed_level: ActiveLevel::High,
        };
        let door = SimPin(std::rc::Rc::new(std::cell::Cell::new(true)));
        let mut c = CuringController::new(m.clone(), cfg, SimPin::new(), SimPin::new(), door).unwrap();
        c.start_lit(PartId(1), Ticks(0)).unwrap();
        let mut reference = Reference::new(&m);
        let tq = q(target);
        let mut want = None;
        let mut got = None;
        let mut due = None;
        for i in 0..n {
            let t = i as u32 * dt;
            reference.feed(net, 0, t);
            if want.is_none() && reference.measured() >= tq {
                want = Some(i);
            }
            if i == 0 {
                c.on_reading(&Reading { code: net, range: RangeIndex(0), at: Ticks(t) }).unwrap();
                continue;
            }
            if i == 1 {
                // The timer compare after the second reading: the first tick T at which
                // dose(t₁) + E·(T − t₁) ≥ target, with E the last reading held.
                c.on_reading(&Reading { code: net, range: RangeIndex(0), at: Ticks(t) }).unwrap();
                if c.phase() == CuringPhase::Exposing {
                    due = c.stop_due().map(|d| (t, d));
                }
                if got.is_none() && c.phase() != CuringPhase::Exposing {
                    got = Some(i);
                }
                continue;
            }
            c.on_reading(&Reading { code: net, range: RangeIndex(0), at: Ticks(t) }).unwrap();
            if got.is_none() && c.phase() != CuringPhase::Exposing {
                got = Some(i);
            }
        }
        let k0 = reference.k[0].clone();
        if let Some((t1, d)) = due {
            // dose(t1) = k0·2·net·t1 (constant light from 0); per tick 2·net·k0.
            let dose1 = &k0 * int(2 * i128::from(net) * i128::from(t1));
            let per_tick = &k0 * int(2 * i128::from(net));
            let need = (&tq - &dose1) / &per_tick;
            let exact = need.ceil().to_integer();
            let exact = i128::try_from(exact).unwrap() + i128::from(t1);
            let d = i128::from(d.0);
            if d != exact {
                // Tie band only: the dose at the disputed tick is within 1e-15 of the target.
                let at = int(d.min(exact) - i128::from(t1));
                let h = &dose1 + &per_tick * at;
                prop_assert!(((h - &tq) / &tq).abs() <= q(1e-15), "due {d} vs exact {exact}");
            }
        }
        if got != want {
            let i = got.or(want).unwrap();
            let h = &k0 * int(2 * i128::from(net) * i128::from(i as u32 * dt));
            prop_assert!(((h - &tq) / &tq).abs() <= q(1e-15), "stop at {got:?}, exact {want:?}");
        }
    }
}
