//! The stable fuzz harness shared by the library's and the review tool's fuzz tests:
//! proptest-driven, a short smoke run by default, a longer campaign with `FUZZ_CASES`.

use std::sync::atomic::{AtomicU64, Ordering};

use proptest::strategy::Strategy;
use proptest::test_runner::{Config, TestCaseError, TestRunner};

/// Cases per target: the `FUZZ_CASES` environment variable, or `default` (the smoke run).
pub fn cases(default: u32) -> u32 {
    std::env::var("FUZZ_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default)
}

/// Run `test` on `strategy` for [`cases`]`(default)` cases (shrinking on failure) and print
/// the number of executions.
///
/// # Panics
/// When a case fails, naming the target and the shrunk input.
pub fn fuzz<S: Strategy>(
    name: &str,
    default: u32,
    strategy: S,
    test: impl Fn(S::Value) -> Result<(), TestCaseError>,
) where
    S::Value: std::fmt::Debug,
{
    let n = cases(default);
    let runs = AtomicU64::new(0);
    let mut runner = TestRunner::new(Config {
        cases: n,
        failure_persistence: None,
        ..Config::default()
    });
    let t0 = std::time::Instant::now();
    let result = runner.run(&strategy, |v| {
        runs.fetch_add(1, Ordering::Relaxed);
        test(v)
    });
    eprintln!(
        "fuzz {name}: {} executions in {:.2} s",
        runs.load(Ordering::Relaxed),
        t0.elapsed().as_secs_f64()
    );
    if let Err(e) = result {
        panic!("fuzz target {name} failed: {e}");
    }
}
