//! Accumulation bench: the library's exact integer integrator against a naive `f32` running
//! sum, on 10⁹ samples of a constant reading. Prints error and time per sample for both.
//!
//! Run: `cargo bench -p hosttests --bench accumulation`

use std::time::Instant;

use hosttests::fixtures::{integrator_exposure, naive_f32_exposure, round_meter};

fn main() {
    let n: u64 = std::env::var("ACCUMULATION_SAMPLES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1_000_000_000);
    let exact = 1.234 * n as f64 * 1e-3;
    let meter = round_meter(1e-3, 1000);

    let t0 = Instant::now();
    let h = integrator_exposure(&meter, 1234, 1, n);
    let t_lib = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let h32 = f64::from(naive_f32_exposure(1.234, 1e-3, n));
    let t_f32 = t0.elapsed().as_secs_f64();

    let e_lib = (h - exact).abs() / exact;
    let e_f32 = (h32 - exact).abs() / exact;
    println!("accumulation bench: {n} samples of 1.234 W/m² every 1 ms (exact {exact} J/m²)");
    println!(
        "  integrator (i64/i128): {h:.6} J/m²  rel. error {e_lib:.3e}  {:.2} ns/sample",
        t_lib / n as f64 * 1e9
    );
    println!(
        "  naive f32 running sum: {h32:.6} J/m²  rel. error {e_f32:.3e}  {:.2} ns/sample",
        t_f32 / n as f64 * 1e9
    );
    println!(
        "  requirement: error < 1e-6 -> integrator {}, naive f32 {}",
        if e_lib < 1e-6 { "PASS" } else { "FAIL" },
        if e_f32 < 1e-6 { "PASS" } else { "FAIL" }
    );
    if e_lib >= 1e-6 {
        std::process::exit(1);
    }
}
