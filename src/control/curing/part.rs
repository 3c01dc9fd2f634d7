//! Per-part state, the part record and the lamp's history.

use crate::acquire::reading::Ticks;
use crate::frontend::MAX_RANGES;
use crate::quantity::{Irradiance, RadiantExposure, Seconds};

use super::*;

/// A part (or lot) number supplied by the caller; stored as given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartId(pub u32);

/// Length of a [`Label`] on flash and in RAM, bytes.
pub const LABEL_LEN: usize = 16;

/// A fixed-size identifier of a part, a lot or a recipe: 0 to [`LABEL_LEN`] (16) bytes of
/// printable ASCII without `,` `"` `\` `;` `=` `|` (so a CSV cell, its `key=value;` list or a
/// JSON string never needs quoting), padded with `0x00`. Chosen by the integrator (a barcode, a lot number, a recipe
/// name); recorded, never interpreted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Label([u8; LABEL_LEN]);

/// Why bytes are not a [`Label`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum LabelError {
    /// Longer than [`LABEL_LEN`] bytes.
    TooLong,
    /// The byte at this index is not allowed (control, non-ASCII, `,` `"` `\` `;` `=` `|`).
    Character(u8),
}

impl core::fmt::Display for LabelError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::TooLong => f.write_str("label longer than 16 bytes"),
            Self::Character(i) => write!(
                f,
                "label byte {i} is not printable ASCII or is one of , \" \\ ; = |"
            ),
        }
    }
}

impl core::error::Error for LabelError {}

impl Label {
    /// The empty label (all `0x00`).
    pub const EMPTY: Self = Self([0; LABEL_LEN]);

    /// Whether a byte may appear in a label: printable ASCII (`0x20 ..= 0x7E`) except
    /// `,` `"` `\` `;` `=` `|`.
    #[must_use]
    pub const fn allowed(b: u8) -> bool {
        matches!(b, 0x20..=0x7E) && !matches!(b, b',' | b'"' | b'\\' | b';' | b'=' | b'|')
    }

    /// A label from text of at most [`LABEL_LEN`] allowed bytes.
    ///
    /// # Errors
    /// [`LabelError::TooLong`], [`LabelError::Character`] (index of the first bad byte).
    pub fn new(text: &str) -> Result<Self, LabelError> {
        let b = text.as_bytes();
        if b.len() > LABEL_LEN {
            return Err(LabelError::TooLong);
        }
        let mut out = [0u8; LABEL_LEN];
        for (i, (d, &s)) in (0u8..).zip(out.iter_mut().zip(b)) {
            if !Self::allowed(s) {
                return Err(LabelError::Character(i));
            }
            *d = s;
        }
        Ok(Self(out))
    }

    /// The label of stored bytes, as read (a record may come from other firmware; the bytes
    /// are kept exactly, see [`Label::text_bytes`]).
    #[must_use]
    pub const fn from_bytes(bytes: [u8; LABEL_LEN]) -> Self {
        Self(bytes)
    }

    /// The stored bytes, with the `0x00` padding.
    #[must_use]
    pub const fn bytes(&self) -> &[u8; LABEL_LEN] {
        &self.0
    }

    /// The bytes before the first `0x00` (the text).
    #[must_use]
    pub fn text_bytes(&self) -> &[u8] {
        let n = self.0.iter().position(|&b| b == 0).unwrap_or(LABEL_LEN);
        self.0.get(..n).unwrap_or(&[])
    }

    /// The text, if every byte before the padding is allowed (always for a label made with
    /// [`Label::new`]).
    #[must_use]
    pub fn as_str(&self) -> Option<&str> {
        let t = self.text_bytes();
        if t.iter().all(|&b| Self::allowed(b)) {
            core::str::from_utf8(t).ok()
        } else {
            None
        }
    }
}

/// What a part is, for traceability: its part, lot and recipe [`Label`]s, given at the start
/// of the part ([`CuringController::start_identified`]) and kept in its [`PartRecord`] and the
/// journal's part record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartIdentity {
    /// The part (serial number, barcode).
    pub part: Label,
    /// The production lot (of the part or of the resin).
    pub lot: Label,
    /// The process recipe (resin, programme).
    pub recipe: Label,
}

/// The summary of one part: plain `Copy` data for the journal.
///
/// Doses are [`RadiantExposure`] (read them with `.mj_per_cm2()` or `.j_per_m2()`),
/// irradiances [`Irradiance`] (`.mw_per_cm2()`, `.w_per_m2()`), ticks are the caller's counter.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PartRecord {
    /// The caller's part number.
    pub part: PartId,
    /// Part, lot and recipe labels given at the start (empty with
    /// [`CuringController::start`]).
    pub identity: PartIdentity,
    /// Tick of the start command.
    pub start: Ticks,
    /// Tick of the command that turned the light off for good (stop, pause or fault), or of
    /// [`CuringController::finish`] if it was still on.
    pub stop: Ticks,
    /// Tick of the last integrated reading.
    pub end: Ticks,
    /// The configured target.
    pub target: RadiantExposure,
    /// Radiant exposure delivered (measured) from the start to the last reading, including
    /// the lag tail and light seen while paused.
    pub delivered: RadiantExposure,
    /// Part of `delivered` that arrived after the stop command (the lag tail, or what a stuck
    /// shutter let through).
    pub after_stop: RadiantExposure,
    /// Part of `delivered` that arrived while paused (guard open).
    pub paused: RadiantExposure,
    /// `delivered − target` (negative: the target was not reached).
    pub overshoot: RadiantExposure,
    /// Highest irradiance of a reading while exposing (`None` without such a reading).
    pub peak: Option<Irradiance>,
    /// Lowest irradiance of a reading while exposing after the warm-up (`None` without one).
    pub min: Option<Irradiance>,
    /// Mean irradiance while exposing (dose while exposing ÷ exposing time).
    pub mean: Option<Irradiance>,
    /// Time the enable output was active, from start/resume to the last reading before
    /// each off command.
    pub exposing_time: Seconds,
    /// Why the light was commanded off.
    pub stop_reason: StopReason,
    /// The first fault, if any.
    pub fault: Option<CuringFault>,
    /// Number of distinct fault kinds in this part.
    pub faults: u8,
    /// Every fault kind of this part: bit [`CuringFault::kind_index`] of each.
    pub fault_kinds: u16,
    /// Number of events raised in this part.
    pub events: u16,
    /// Every event raised in this part.
    pub seen: Events,
    /// Mean irradiance ÷ lamp reference, when a reference is configured and the part was
    /// measured without a measurement fault.
    pub lamp_ratio: Option<f64>,
}

/// Lamp-ageing trend over the last [`LAMP_HISTORY`] measured parts.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LampTrend {
    /// Parts measured since the controller was built.
    pub parts: u32,
    /// Ratio (mean irradiance ÷ reference) of the last measured part.
    pub latest_ratio: Option<f64>,
    /// Mean ratio over the history.
    pub mean_ratio: Option<f64>,
    /// Least-squares slope of the ratio per part over the history (needs two parts).
    pub slope_per_part: Option<f64>,
    /// The last part's ratio is below the maintenance fraction.
    pub maintenance_due: bool,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct OffCheck {
    pub(super) from: Ticks,
    pub(super) limit_net: [i32; MAX_RANGES],
    pub(super) seen_off: bool,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct PartState {
    pub(super) id: PartId,
    pub(super) identity: PartIdentity,
    pub(super) start: Ticks,
    pub(super) exposing_since: Ticks,
    pub(super) exposing_entry_j: f64,
    pub(super) exposing_j: f64,
    pub(super) exposing_ticks: u64,
    pub(super) warm: bool,
    pub(super) last_not_low: Ticks,
    pub(super) last_not_high: Ticks,
    pub(super) peak: [i32; MAX_RANGES],
    pub(super) min: [i32; MAX_RANGES],
    pub(super) off: Option<OffCheck>,
    pub(super) pause_entry_j: f64,
    pub(super) paused_j: f64,
    pub(super) stop: Option<(Ticks, StopReason)>,
    pub(super) stop_j: f64,
    /// A dark start not yet placed: the zero reading at this tick goes in before the part's
    /// first reading (unless that reading is at the same tick, which then counts itself).
    pub(super) dark_from: Option<Ticks>,
    pub(super) interlock_closed: bool,
    pub(super) first_fault: Option<CuringFault>,
    pub(super) fault_kinds: u16,
    pub(super) seen: Events,
    pub(super) event_count: u16,
    pub(super) unusable_run: u16,
    pub(super) end: Ticks,
}

impl PartState {
    pub(super) fn new(id: PartId, now: Ticks) -> Self {
        Self {
            id,
            identity: PartIdentity::default(),
            start: now,
            exposing_since: now,
            exposing_entry_j: 0.0,
            exposing_j: 0.0,
            exposing_ticks: 0,
            warm: false,
            last_not_low: now,
            last_not_high: now,
            peak: [i32::MIN; MAX_RANGES],
            min: [i32::MAX; MAX_RANGES],
            off: None,
            pause_entry_j: 0.0,
            paused_j: 0.0,
            stop: None,
            stop_j: 0.0,
            dark_from: None,
            interlock_closed: true,
            first_fault: None,
            fault_kinds: 0,
            seen: Events::NONE,
            event_count: 0,
            unusable_run: 0,
            end: now,
        }
    }
}

/// A ring of the last [`LAMP_HISTORY`] ratios.
///
/// Invariants, kept by `push` (the only method that changes `len` and `next`):
/// `next < LAMP_HISTORY` and `len ≤ LAMP_HISTORY`. Every index sum below is therefore at most
/// `2 · LAMP_HISTORY` and cannot overflow; it is written with `wrapping_*` only so that no
/// overflow-check path (which the compiler cannot rule out across calls) is left in the code.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct LampHistory {
    pub(super) ratios: [f64; LAMP_HISTORY],
    pub(super) len: usize,
    pub(super) next: usize,
    pub(super) parts: u32,
}

impl LampHistory {
    pub(super) const fn new() -> Self {
        Self {
            ratios: [0.0; LAMP_HISTORY],
            len: 0,
            next: 0,
            parts: 0,
        }
    }

    pub(super) fn push(&mut self, ratio: f64) {
        if let Some(slot) = self.ratios.get_mut(self.next) {
            *slot = ratio;
        }
        self.next = self.next.wrapping_add(1) % LAMP_HISTORY;
        self.len = self.len.wrapping_add(1).min(LAMP_HISTORY);
        self.parts = self.parts.saturating_add(1);
    }

    /// The ratios, oldest first.
    pub(super) fn ordered(&self) -> impl Iterator<Item = f64> + '_ {
        let start = self.next.wrapping_add(LAMP_HISTORY.wrapping_sub(self.len)) % LAMP_HISTORY;
        (0..self.len).filter_map(move |i| {
            self.ratios
                .get(start.wrapping_add(i) % LAMP_HISTORY)
                .copied()
        })
    }

    pub(super) fn latest(&self) -> Option<f64> {
        if self.len == 0 {
            None
        } else {
            self.ratios
                .get(self.next.wrapping_add(LAMP_HISTORY - 1) % LAMP_HISTORY)
                .copied()
        }
    }
}
