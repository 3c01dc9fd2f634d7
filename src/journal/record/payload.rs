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
/// Curing part (kind 6, format 1.1), 95 bytes: identity, dose, stop reason and faults of a
/// finished part. Labels are 16 bytes each, printable ASCII padded with `0x00`.
pub mod part {
    use core::ops::Range;
    /// Session id (0 if the part is not logged as a session), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// The caller's part number, u32.
    pub const PART_NUMBER: Range<usize> = 4..8;
    /// Part label, 16 bytes.
    pub const PART_LABEL: Range<usize> = 8..24;
    /// Lot label, 16 bytes.
    pub const LOT_LABEL: Range<usize> = 24..40;
    /// Recipe label, 16 bytes.
    pub const RECIPE_LABEL: Range<usize> = 40..56;
    /// Tick of the start command, u32.
    pub const START_TICK: Range<usize> = 56..60;
    /// Tick of the last integrated reading, u32.
    pub const END_TICK: Range<usize> = 60..64;
    /// Dose delivered, rounded down, µJ/m², u64.
    pub const DELIVERED_UJ_PER_M2: Range<usize> = 64..72;
    /// Target, rounded up, µJ/m², u64.
    pub const TARGET_UJ_PER_M2: Range<usize> = 72..80;
    /// Dose after the stop command, rounded up, mJ/m², u32 (saturating).
    pub const AFTER_STOP_MJ_PER_M2: Range<usize> = 80..84;
    /// Dose while paused, rounded up, mJ/m², u32 (saturating).
    pub const PAUSED_MJ_PER_M2: Range<usize> = 84..88;
    /// Stop code, u8 (see `StopCode`).
    pub const STOP: usize = 88;
    /// Fault reason of a fault stop, u8 (`FaultCode`; 0 none).
    pub const STOP_FAULT: usize = 89;
    /// First fault reason, u8 (`FaultCode`; 0 none).
    pub const FIRST_FAULT: usize = 90;
    /// Fault kinds, u16: bit i = `CURING_FAULT_BITS[i]`.
    pub const FAULT_KINDS: Range<usize> = 91..93;
    /// Events raised in the part, u16 (saturating).
    pub const EVENTS: Range<usize> = 93..95;
    /// Payload length in version 1.1.
    pub const LEN: usize = 95;
}
/// Completed pause (kind 7, format 1.1), 29 bytes.
pub mod pause {
    use core::ops::Range;
    /// Session id, u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick the pause began, u32.
    pub const STARTED_TICK: Range<usize> = 4..8;
    /// Dark time, ticks, u32.
    pub const DARK_TICKS: Range<usize> = 8..12;
    /// Dose at the pause, rounded down, µJ/m², u64.
    pub const AT_PAUSE_UJ_PER_M2: Range<usize> = 12..20;
    /// Dose received while paused, rounded up, µJ/m², u64.
    pub const LEAK_UJ_PER_M2: Range<usize> = 20..28;
    /// Cause, u8 (see `PauseCode`).
    pub const CAUSE: usize = 28;
    /// Payload length in version 1.1.
    pub const LEN: usize = 29;
}
/// Exposure monitor state (kind 8, format 1.1), 75 bytes.
pub mod exposure_state {
    use core::ops::Range;
    /// Session id (0 outside a session), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the snapshot, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Window segments, newest first, 8 × u32 in units of 10^`SCALE` µJ/m², rounded up.
    pub const WINDOW: Range<usize> = 8..40;
    /// Decimal scale of the window segments, u8, 0 ..= 10.
    pub const SCALE: usize = 40;
    /// Active warning levels, u8 (bit i = level i).
    pub const ACTIVE: usize = 41;
    /// Alarm latched, u8 (0 no, 1 yes).
    pub const LATCHED: usize = 42;
    /// Buckets per segment, u32.
    pub const SEGMENT_BUCKETS: Range<usize> = 43..47;
    /// Bucket length, ticks, u64.
    pub const BUCKET_TICKS: Range<usize> = 47..55;
    /// Shift exposure, gap charges included, rounded up, µJ/m², u64.
    pub const SHIFT_UJ_PER_M2: Range<usize> = 55..63;
    /// Of which charged for gaps, rounded up, µJ/m², u64.
    pub const SHIFT_GAP_UJ_PER_M2: Range<usize> = 63..71;
    /// Gaps in the shift, u32.
    pub const GAPS: Range<usize> = 71..75;
    /// Payload length in version 1.1.
    pub const LEN: usize = 75;
}
/// Unmonitored interval (kind 9, format 1.1), 25 bytes.
pub mod unmonitored {
    use core::ops::Range;
    /// Session id (0 outside a session), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick at boot, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Tick rate of the off time, Hz, u32.
    pub const TICK_RATE_HZ: Range<usize> = 8..12;
    /// Off time, ticks, u64 (0 when unknown).
    pub const OFF_TICKS: Range<usize> = 12..20;
    /// Off time known, u8 (0 unknown, 1 known).
    pub const OFF_KNOWN: usize = 20;
    /// Sequence number of the state record restored, u32 (0: none).
    pub const RESTORED_FROM: Range<usize> = 21..25;
    /// Payload length in version 1.1.
    pub const LEN: usize = 25;
}
/// Curing controller state (kind 10, format 1.1), 82 bytes.
pub mod curing_state {
    use core::ops::Range;
    /// Session id (0 outside a session), u32.
    pub const SESSION: Range<usize> = 0..4;
    /// Tick of the snapshot, u32.
    pub const TICK: Range<usize> = 4..8;
    /// Parts finished, u32.
    pub const PARTS_FINISHED: Range<usize> = 8..12;
    /// Parts measured for the lamp trend, u32.
    pub const LAMP_PARTS: Range<usize> = 12..16;
    /// Valid lamp ratios, u8, 0 ..= 16.
    pub const LAMP_LEN: usize = 16;
    /// Latched alarm's fault reason, u8 (`FaultCode`; 0 none).
    pub const ALARM: usize = 17;
    /// Lamp ratios, oldest first, 16 × i32, ppm, rounded down.
    pub const LAMP_RATIOS_PPM: Range<usize> = 18..82;
    /// Payload length in version 1.1.
    pub const LEN: usize = 82;
}
