//! Status lines for a small character display (16 columns), formatted with integers only.
//!
//! Every field carries its unit, and no dose unit can be read as a time: time is written
//! `3h07m` / `2m05s`, the dose limit as a percentage (`%`), the solar dose in `SED` (never a
//! bare `S`), calibration days with `d`. The layouts, column by column:
//!
//! ```text
//!  0123456789012345
//!  DOSE  43% 3h07m     dose_line:   percent of the limit used, time left (or STOP, --)
//!  UVI 7 HI  1.3SED    solar_line:  UV index, category, day's dose in SED
//!  CAL OK     ACK!     status_line: calibration state, acknowledge pending
//! ```

use core::fmt::Write;

use crate::irradiance::calibration::Validity;
use crate::quantity::Seconds;
use crate::spectral::weighting::UvIndexCategory;

/// Width of a line, characters.
pub const WIDTH: usize = 16;

/// A display line of at most [`WIDTH`] ASCII characters; text beyond the width is cut.
///
/// (A small buffer of our own rather than `heapless::String`, so that no generic
/// container code is instantiated in the library for it.)
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Line {
    buf: [u8; WIDTH],
    len: u8,
}

impl Line {
    /// An empty line.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            buf: [b' '; WIDTH],
            len: 0,
        }
    }
    /// The text.
    #[must_use]
    pub fn as_str(&self) -> &str {
        let bytes = self.buf.get(..usize::from(self.len)).unwrap_or(&[]);
        core::str::from_utf8(bytes).unwrap_or("")
    }
    /// Length in characters.
    #[must_use]
    pub const fn len(&self) -> usize {
        self.len as usize
    }
    /// Whether the line is empty.
    #[must_use]
    pub const fn is_empty(&self) -> bool {
        self.len == 0
    }
    fn push_str(&mut self, s: &str) {
        for &b in s.as_bytes() {
            // ASCII only: anything else would break the fixed width of the display.
            let b = if b.is_ascii() { b } else { b'?' };
            if let Some(slot) = self.buf.get_mut(usize::from(self.len)) {
                *slot = b;
                self.len = self.len.saturating_add(1);
            }
        }
    }
}

impl Default for Line {
    fn default() -> Self {
        Self::new()
    }
}

impl Write for Line {
    fn write_str(&mut self, s: &str) -> core::fmt::Result {
        self.push_str(s);
        Ok(())
    }
}

/// `"DOSE  42% 3h07m"`: percent of the limit used (whole percent, rounded up) and time
/// left (`--` when unlimited at the present level, `STOP` when the limit is used).
#[must_use]
pub fn dose_line(fraction_used: f64, time_left: Option<Seconds>) -> Line {
    let mut s = Line::new();
    let pct = libm::ceil(fraction_used * 100.0);
    let pct = if pct <= 0.0 {
        0
    } else if pct >= 999.0 {
        999
    } else {
        pct as u32
    };
    let _ = write!(s, "DOSE {pct:>3}% ");
    match time_left {
        None => {
            s.push_str("  --");
        }
        Some(t) if t.s() <= 0.0 || pct >= 100 => {
            s.push_str("STOP");
        }
        Some(t) => {
            // Round down: never show more time than is left.
            let secs = libm::floor(t.s());
            let secs = if secs >= 359_999.0 {
                359_999
            } else {
                secs as u32
            };
            let (h, m, sec) = (secs / 3600, (secs / 60) % 60, secs % 60);
            let _ = if h > 0 {
                write!(s, "{h}h{m:02}m")
            } else {
                write!(s, "{m}m{sec:02}s")
            };
        }
    }
    s
}

/// `"UVI 7 HI  1.3SED"`: reported UV index (0 ..= 99, capped), category (`LOW`, `MOD`, `HI`,
/// `VHI`, `EXT`), a space, then the day's dose in standard erythema doses with its unit `SED`,
/// always rounded up: one decimal below 10 SED (`" 9.9"`), whole SED from 10 to 999 (`" 18"`,
/// capped at 999). The dose never touches the category (`"UVI 5 MOD  18SED"`).
#[must_use]
pub fn solar_line(uvi: u32, category: UvIndexCategory, day_sed: f64) -> Line {
    let mut s = Line::new();
    let cat = match category {
        UvIndexCategory::Low => "LOW",
        UvIndexCategory::Moderate => "MOD",
        UvIndexCategory::High => "HI",
        UvIndexCategory::VeryHigh => "VHI",
        UvIndexCategory::Extreme => "EXT",
    };
    let uvi = uvi.min(99);
    let _ = write!(s, "UVI{uvi:>2} {cat:<3} ");
    let tenths = libm::ceil(day_sed * 10.0);
    let _ = if tenths < 100.0 {
        // 0 ..= 99 tenths (NaN and negative doses show 0.0).
        let t = if tenths > 0.0 { tenths as u32 } else { 0 };
        write!(s, "{}.{}SED", t / 10, t % 10)
    } else {
        let whole = libm::ceil(day_sed);
        let whole = if whole >= 999.0 { 999 } else { whole as u32 };
        write!(s, "{whole:>3}SED")
    };
    s
}

/// Days before the due day from which [`status_line`] shows the days left instead of `OK`.
pub const CALIBRATION_WARN_DAYS: u32 = 30;

/// `"CAL OK     ACK!"`: the calibration's date state and whether an alarm waits for the
/// wearer's acknowledgement.
///
/// Calibration field (10 columns): `CAL OK` (more than [`CALIBRATION_WARN_DAYS`] days
/// left), `CALDUE 12d` (due in 12 days), `CAL EXPIRD` (on or after the due day: the meter
/// must be recalibrated), `CAL DATE?` (today is before the calibration day: the clock or the
/// record is wrong). Then a space and `ACK!` while an acknowledgement is pending (blank
/// otherwise).
#[must_use]
pub fn status_line(calibration: Validity, ack_pending: bool) -> Line {
    let mut s = Line::new();
    let _ = match calibration {
        Validity::Valid { days_left } if days_left > CALIBRATION_WARN_DAYS => {
            write!(s, "{:<10}", "CAL OK")
        }
        Validity::Valid { days_left } => write!(s, "CALDUE{days_left:>3}d"),
        Validity::Expired { .. } => write!(s, "{:<10}", "CAL EXPIRD"),
        Validity::NotYetValid { .. } => write!(s, "{:<10}", "CAL DATE?"),
    };
    s.push_str(if ack_pending { " ACK!" } else { "     " });
    s
}
