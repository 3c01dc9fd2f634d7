//! Host throughput: samples per second through the full pipeline (`Session::on_reading`:
//! front-end checks, exact integer integral, thresholds, controller) in a replay of a
//! synthetic stream, against a naive `f32` implementation of the same arithmetic (range and
//! rail checks, dark correction, code → W/m², trapezoid, two threshold compares) in the
//! same run.
//!
//! Goal: the exact pipeline within 1.5× of the naive loop ([`RATIO_GOAL`]). Enforced: the
//! ratio (the median of the rounds' own ratios) must not exceed [`RATIO_LIMIT`] (what the code
//! holds today, with a margin), and every
//! timed step must have succeeded with the expected outcome, and the exact dose must equal its
//! closed form; the bench exits non-zero otherwise. Run:
//! `cargo bench -p hosttests --bench throughput`. `THROUGHPUT_SAMPLES` sets the stream length
//! (default 4 000 000).

use std::convert::Infallible;
use std::hint::black_box;
use std::time::{Duration, Instant};

use photon_ledger::prelude::*;

struct NoPin;
impl embedded_hal::digital::ErrorType for NoPin {
    type Error = Infallible;
}
impl embedded_hal::digital::OutputPin for NoPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        Ok(())
    }
}

const BITS: u8 = 12;
const VREF: f64 = 3.3;
const RF: f64 = 100e3;
const DARK: i32 = 4;
const HZ: u32 = 10_000;

fn meter() -> Meter {
    let fe = FrontEnd::new(
        AdcSpec {
            bits: BITS,
            reference: Voltage::from_v(VREF),
            pga_gain: 1.0,
            coding: Coding::Unipolar,
            saturation_margin: 2,
        },
        &[AmplifierRange {
            gain: Transimpedance::from_v_per_a(RF),
            dark_offset: DARK,
        }],
    )
    .expect("front end");
    Meter::new(MeterConfig {
        front_end: fe,
        calibration: Calibration::Responsivity {
            responsivity: Responsivity::from_a_per_w(0.2),
            active_area: Area::from_mm2(1.0),
        },
        band: Band::Line(Wavelength::from_nm(365.0)),
        tick_rate: TickRate::from_hz(HZ).expect("rate"),
        sample_area: None,
    })
    .expect("meter")
}

/// A synthetic stream (demonstration data): a lamp at about 2000 codes with noise, sampled
/// every ~10 ticks with ±1 tick jitter.
fn stream(n: usize) -> Vec<Reading> {
    let mut x: u32 = 0x1234_5678;
    let mut t = 0u32;
    (0..n)
        .map(|_| {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            t = t.wrapping_add(9 + x % 3);
            Reading {
                code: 2000 + (x >> 8) as i32 % 64 - 32,
                range: RangeIndex(0),
                at: Ticks(t),
            }
        })
        .collect()
}

/// The same arithmetic in plain f32: the usual first version of a dose loop.
struct Naive {
    w_per_m2_per_code: f32,
    s_per_tick: f32,
    target: f32,
    over: f32,
    dose: f32,
    last: Option<(u32, f32)>,
}

impl Naive {
    #[inline(never)]
    fn on_reading(&mut self, r: &Reading) -> u8 {
        if r.range.0 != 0 || r.code < 0 || r.code > 4095 || r.code >= 4093 {
            return 0xFF;
        }
        let e = (r.code - DARK) as f32 * self.w_per_m2_per_code;
        if let Some((t0, e0)) = self.last {
            let dt = r.at.0.wrapping_sub(t0);
            if dt == 0 || dt > 100 {
                return 0xFE;
            }
            self.dose += 0.5 * (e + e0) * dt as f32 * self.s_per_tick;
        }
        self.last = Some((r.at.0, e));
        u8::from(self.dose >= self.target) | (u8::from(self.dose >= self.over) << 1)
    }
}

const ROUNDS: usize = 7;

/// What the project aims for: exact pipeline time / naive f32 loop time.
const RATIO_GOAL: f64 = 1.5;
/// The enforced ceiling: five runs of this bench on the development machine (2 shared cores)
/// gave 2.14, 2.27, 2.42, 1.71, 1.88 — median 2.14 — so the limit is the median plus 0.66
/// (about 30 %) for a loaded CI machine (see DEVELOPERS.md, "Host throughput"). Lower it when
/// the pipeline gets faster; never raise it to pass.
const RATIO_LIMIT: f64 = 2.8;

/// One sample through the session, behind a call boundary like [`Naive::on_reading`], so
/// both loops have the same call structure; like it, the decision comes back as a small
/// code (returning the whole `Outcome` through memory would time a store-forwarding stall
/// of the benchmark, not the pipeline).
#[inline(never)]
fn exact_step(s: &mut Session<NoPin, NoPin>, r: &Reading) -> u8 {
    match s.on_reading(r) {
        Ok(Outcome::Integrated { after, .. }) => match after {
            Phase::Exposing => 0,
            Phase::TargetMet => 1,
            Phase::Overexposed => 3,
            _ => 0xFD,
        },
        Ok(Outcome::Ignored(_)) => 0xFE,
        Ok(Outcome::Faulted(_)) | Err(_) => 0xFF,
    }
}

fn main() {
    let n: usize = std::env::var("THROUGHPUT_SAMPLES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(4_000_000);
    let readings = stream(n);
    // A target far beyond the stream's dose, so every sample takes the exposing path.
    let target = RadiantExposure::from_j_per_m2(1e9);
    let config = SessionConfig {
        target: DoseAmount::RadiantExposure(target),
        tolerance: DoseAmount::RadiantExposure(RadiantExposure::from_j_per_m2(1e8)),
        max_gap_ticks: 100,
        max_unusable_run: 0,
        enable_level: ActiveLevel::High,
        alarm_level: ActiveLevel::High,
    };
    let w_per_m2_per_code = (VREF / 4096.0 / RF / (0.2 * 1e-6)) as f32;

    // Every timed loop ORs the outcome code of each step into `outcomes`; every step of this
    // stream must come back 0 (integrated, below the target), checked after each round.
    let mut exact_h = 0.0;
    let mut exact_raw = 0i128;
    let mut run_exact = || {
        let mut s = Session::new(meter(), config, NoPin, NoPin).expect("session");
        s.start().expect("start");
        let mut outcomes = 0u8;
        let t0 = Instant::now();
        for r in &readings {
            outcomes |= black_box(exact_step(&mut s, black_box(r)));
        }
        let dt = t0.elapsed();
        exact_h = s.progress().exposure.j_per_m2();
        exact_raw = s.integrator().raw_total(RangeIndex(0));
        (dt, outcomes)
    };
    let m = meter();
    let mut integrator_raw = 0i128;
    let mut run_integrator = || {
        let mut i = Integrator::new(&m, 100);
        i.add_threshold(target, Rounding::NotBefore)
            .expect("threshold list has room");
        i.add_threshold(RadiantExposure::from_j_per_m2(1.1e9), Rounding::NotAfter)
            .expect("threshold list has room");
        let mut outcomes = 0u8;
        let t0 = Instant::now();
        for r in &readings {
            let r = black_box(r);
            outcomes |= match black_box(i.accept(r.code - DARK, r.range, r.at)) {
                Ok(step) => step.crossed.0,
                Err(_) => 0xFF,
            };
        }
        let dt = t0.elapsed();
        integrator_raw = i.raw_total(RangeIndex(0));
        (dt, outcomes)
    };
    let mut naive_h = 0.0f32;
    let mut run_naive = || {
        let mut s = Naive {
            w_per_m2_per_code,
            s_per_tick: 1.0 / HZ as f32,
            target: 1e9,
            over: 1.1e9,
            dose: 0.0,
            last: None,
        };
        let mut outcomes = 0u8;
        let t0 = Instant::now();
        for r in &readings {
            outcomes |= black_box(s.on_reading(black_box(r)));
        }
        let dt = t0.elapsed();
        naive_h = s.dose;
        (dt, outcomes)
    };
    // Interleaved rounds, best of each: a machine whose load changes during the run slows
    // all three alike.
    let (mut t_exact, mut t_integrator, mut t_naive) =
        (Duration::MAX, Duration::MAX, Duration::MAX);
    let mut failed = Vec::new();
    let mut ratios = Vec::with_capacity(ROUNDS);
    for round in 0..ROUNDS {
        let (e, e_out) = run_exact();
        let (i, i_out) = run_integrator();
        let (v, v_out) = run_naive();
        ratios.push(e.as_secs_f64() / v.as_secs_f64());
        if std::env::var_os("THROUGHPUT_VERBOSE").is_some() {
            eprintln!("round: exact {e:?}, integrator {i:?}, naive {v:?}");
        }
        for (what, out) in [("exact", e_out), ("integrator", i_out), ("naive", v_out)] {
            if out != 0 {
                failed.push(format!(
                    "round {round}, {what} loop: a step did not integrate below the target (outcome bits {out:#04x})"
                ));
            }
        }
        t_exact = t_exact.min(e);
        t_integrator = t_integrator.min(i);
        t_naive = t_naive.min(v);
    }
    let rate = |d: Duration| n as f64 / d.as_secs_f64();
    // The enforced figure: the median of the rounds' own ratios (each round times both loops
    // back to back, so a load change between rounds cancels; the median ignores one or two
    // disturbed rounds either way).
    ratios.sort_by(f64::total_cmp);
    let ratio = ratios.get(ROUNDS / 2).copied().unwrap_or(f64::INFINITY);
    println!("throughput: {n} samples, best of {ROUNDS} interleaved rounds");
    println!(
        "  ratio exact/naive per round, sorted: {}",
        ratios
            .iter()
            .map(|r| format!("{r:.2}"))
            .collect::<Vec<_>>()
            .join(", ")
    );
    println!(
        "  exact pipeline (Session::on_reading): {:>8.1} M samples/s ({:.2} ns/sample)",
        rate(t_exact) / 1e6,
        t_exact.as_secs_f64() * 1e9 / n as f64
    );
    println!(
        "  Integrator::accept alone:             {:>8.1} M samples/s ({:.2} ns/sample)",
        rate(t_integrator) / 1e6,
        t_integrator.as_secs_f64() * 1e9 / n as f64
    );
    println!(
        "  naive f32 loop:                       {:>8.1} M samples/s ({:.2} ns/sample)",
        rate(t_naive) / 1e6,
        t_naive.as_secs_f64() * 1e9 / n as f64
    );
    println!(
        "  ratio exact/naive, median of the rounds: {ratio:.2} (goal <= {RATIO_GOAL}, enforced limit <= {RATIO_LIMIT}): {}",
        if ratio <= RATIO_GOAL {
            "goal met"
        } else if ratio <= RATIO_LIMIT {
            "within the limit, goal not met"
        } else {
            "OVER THE LIMIT"
        }
    );
    if ratio > RATIO_LIMIT {
        failed.push(format!(
            "ratio exact/naive {ratio:.2} > enforced limit {RATIO_LIMIT}"
        ));
    }

    // The closed form of the exact dose: Σ (n_i + n_{i−1}) · Δt_i in i128 over the net codes,
    // times ½ · (W/m² per code) / tick rate, the factor from the definitions: one code is
    // VREF / 2^BITS V, i.e. that / RF A, i.e. that / (0.2 A/W · 1 mm²) W/m².
    let mut units = 0i128;
    for p in readings.windows(2) {
        let dt = i128::from(p[1].at.0.wrapping_sub(p[0].at.0));
        units += (i128::from(p[1].code - DARK) + i128::from(p[0].code - DARK)) * dt;
    }
    let w_per_m2_per_code_f64 = VREF / f64::from(1u32 << BITS) / RF / (0.2 * 1e-6);
    let closed_h = units as f64 * 0.5 * w_per_m2_per_code_f64 / f64::from(HZ);
    // Relative 1e-12: the library's scale is a handful of f64 operations and the read-out one
    // conversion of the i128 total and one multiply, each within 2^-52 relative.
    let rel = ((exact_h - closed_h) / closed_h).abs();
    println!(
        "  dose: exact {exact_h:.6} J/m2, closed form {closed_h:.6} J/m2 (relative difference {rel:.2e}); naive f32 {naive_h:.6} J/m2 (relative error of f32 {:.2e})",
        ((f64::from(naive_h) - closed_h) / closed_h).abs()
    );
    if exact_raw != units || integrator_raw != units {
        failed.push(format!(
            "integer totals: session {exact_raw}, integrator {integrator_raw}, closed form {units}"
        ));
    }
    if rel.is_nan() || rel > 1e-12 {
        failed.push(format!(
            "exact dose {exact_h} J/m2 differs from its closed form {closed_h} J/m2 by {rel:.2e}"
        ));
    }
    if !failed.is_empty() {
        for f in &failed {
            eprintln!("FAIL: {f}");
        }
        std::process::exit(1);
    }
}
