//! Host-side companions of photon-ledger: simulation models of the analog chain (light source,
//! photodiode, amplifier, ADC, pins), reference-value suites, benches, and the `photon-review`
//! tool ([`review`]).
//!
//! Nothing here runs on the target; firmware-shaped host code (the examples) uses these models
//! through the same traits as hardware.

pub mod fixtures;
pub mod flash;
pub mod image;
pub mod lamp_curing;
pub mod review;
pub mod sim;
