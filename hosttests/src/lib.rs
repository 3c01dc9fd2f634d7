//! Host-side simulation models for photon-ledger.

pub mod flash;
