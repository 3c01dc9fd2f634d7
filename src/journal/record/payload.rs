//! Named byte ranges of each payload (offsets from the payload start), one submodule per
//! record kind. A minor format version may only append ranges after `LEN`.

/// Session start (kind 1), 40 bytes.
pub mod start {
    use core::ops::Range;
    /// Session id (sequence number of the original start record), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the start, u32.
    pub const START_TICK: Range<usize> = 4..8;
    /// Tick rate, Hz, u32.
    pub const TICK_RATE_HZ: Range<usize> = 8..12;
    /// Configuration digest, u32.
    pub const CONFIG_DIGEST: Range<usize> = 12..16;
    /// Calibration identity chosen by the integrator, u32.
    pub const CALIBRATION_ID: Range<usize> = 16..20;
    /// Band identity: equivalent vacuum wavelength, pm, u32.
    pub const WAVELENGTH_PM: Range<usize> = 20..24;
    /// Target radiant exposure, µJ/m², u64.
    pub const TARGET_UJ_PER_M2: Range<usize> = 24..32;
    /// Checkpoint horizon (interval), ticks, u32.
    pub const INTERVAL_TICKS: Range<usize> = 32..36;
    /// Irradiance bound used for the checkpoint bound, mW/m², i32.
    pub const MAX_IRRADIANCE_MW_PER_M2: Range<usize> = 36..40;
    /// Payload length in version 1.0.
    pub const LEN: usize = 40;
}
/// Periodic checkpoint (kind 2), 36 bytes.
pub mod checkpoint {
    use core::ops::Range;
    /// Session id, u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the last sample integrated before the checkpoint, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Dose delivered at the tick, rounded down, µJ/m², u64.
    pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
    /// Conservative bound for the coming interval, rounded up, µJ/m², u64.
    pub const BOUND_UJ_PER_M2: Range<usize> = 16..24;
    /// Minimum irradiance since the last checkpoint, mW/m², i32.
    pub const MIN_MW_PER_M2: Range<usize> = 24..28;
    /// Mean irradiance since the last checkpoint, mW/m², i32.
    pub const MEAN_MW_PER_M2: Range<usize> = 28..32;
    /// Maximum irradiance since the last checkpoint, mW/m², i32.
    pub const MAX_MW_PER_M2: Range<usize> = 32..36;
    /// Payload length in version 1.0.
    pub const LEN: usize = 36;
}
/// Event (kind 3), 22 bytes.
pub mod event {
    use core::ops::Range;
    /// Session id (0 outside a session), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the event, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Dose delivered at the event, rounded down, µJ/m², u64.
    pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
    /// Event code, u16 (see `EventCode`).
    pub const CODE: Range<usize> = 16..18;
    /// Code-specific detail (a gap length in ticks, a warning value), u32.
    pub const DETAIL: Range<usize> = 18..22;
    /// Payload length in version 1.0.
    pub const LEN: usize = 22;
}
/// Restatement of the open session (kind 5), 77 bytes: written by the journal as the
/// first record of a sector while a session is open, so one sector is enough to recover.
pub mod restate {
    use core::ops::Range;
    /// The session's start record payload (layout of `start`).
    pub const START: Range<usize> = 0..40;
    /// 1 if a checkpoint follows, 0 if the session has none yet, u8.
    pub const HAS_CHECKPOINT: usize = 40;
    /// The session's latest checkpoint payload (layout of `checkpoint`; zeros if none).
    pub const CHECKPOINT: Range<usize> = 41..77;
    /// Payload length in version 1.0.
    pub const LEN: usize = 77;
}
/// Session end (kind 4), 36 bytes.
pub mod end {
    use core::ops::Range;
    /// Session id, u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the end, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Dose delivered, rounded down, µJ/m², u64.
    pub const DELIVERED_UJ_PER_M2: Range<usize> = 8..16;
    /// Duration of the session, ticks, u32.
    pub const ELAPSED_TICKS: Range<usize> = 16..20;
    /// Minimum irradiance over the session, mW/m², i32.
    pub const MIN_MW_PER_M2: Range<usize> = 20..24;
    /// Mean irradiance over the session, mW/m², i32.
    pub const MEAN_MW_PER_M2: Range<usize> = 24..28;
    /// Maximum irradiance over the session, mW/m², i32.
    pub const MAX_MW_PER_M2: Range<usize> = 28..32;
    /// Outcome code, u16 (see `SessionOutcome`).
    pub const OUTCOME: Range<usize> = 32..34;
    /// Number of events logged in the session, u16 (saturating).
    pub const EVENTS: Range<usize> = 34..36;
    /// Payload length in version 1.0.
    pub const LEN: usize = 36;
}
