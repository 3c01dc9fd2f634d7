//! Named byte ranges of the record header and trailer (offsets from the record start).
//! Frozen for every format version.

use core::ops::Range;
/// Magic byte.
pub const MAGIC: usize = 0;
/// Version byte (major << 4 | minor).
pub const VERSION: usize = 1;
/// Record kind.
pub const KIND: usize = 2;
/// Flags.
pub const FLAGS: usize = 3;
/// Sequence number, u32 LE.
pub const SEQUENCE: Range<usize> = 4..8;
/// Payload length, u16 LE.
pub const LENGTH: Range<usize> = 8..10;
/// First payload byte.
pub const PAYLOAD: usize = 10;
