//! Host-side simulation models and tools for photon-ledger.

pub mod flash;
pub mod image;
