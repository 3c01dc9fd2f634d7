//! Host-side simulation models for photon-ledger.
