//! Host-side simulation models for photon-ledger.
pub mod lamp_curing;
