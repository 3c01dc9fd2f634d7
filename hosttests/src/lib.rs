//! Host-side companions of photon-ledger: simulation models of the analog chain (light source,
//! photodiode, amplifier, ADC, pins), reference-value suites and benches. The `photon-review`
//! tool is a package of its own (`hosttests/review`).
//!
//! Nothing here runs on the target; firmware-shaped host code (the examples) uses these models
//! through the same traits as hardware.

pub mod fixtures;
pub mod flash;
pub mod fuzzing;
pub mod image;
pub mod lamp_curing;
pub mod sim;
