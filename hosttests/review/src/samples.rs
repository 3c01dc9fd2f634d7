//! The sample file (CSV with a header) and its conversion into the library's [`Reading`]s.
//!
//! Columns (by header name, any order; `#` starts a comment line; spaces around fields are
//! ignored):
//!
//! | column | unit | required | meaning |
//! | --- | --- | --- | --- |
//! | `time_s` | s | one time column | time of the conversion; may start anywhere, must not decrease |
//! | `time_ticks` | ticks | one time column | the device's `u32` tick counter (0 ..= 4294967295); may wrap once per 2³² ticks, must not go back |
//! | `adc_code` | ADC code | one reading column | raw code as the converter returned it |
//! | `current_a` | A | one reading column | photocurrent |
//! | `irradiance_w_per_m2` | W/m² | one reading column | irradiance at the detector |
//! | `range` | index | no (default 0) | amplifier range active for the conversion, 0 = most sensitive |
//! | `temperature_c` | °C | no | detector temperature; reported (min/max), not used by the pipeline |
//!
//! A current or an irradiance is turned into the ADC code the configured converter would
//! have returned (rounded to the nearest code, plus the range's dark offset, clipped at the
//! rails as a converter clips), so the replay runs through exactly the firmware's integer
//! path; the quantisation step is shown by `explain`. Times in seconds are rounded to the
//! nearest tick.
//!
//! Every bad row is an error naming the file, the line, the column (field number, 1-based)
//! and its name: a missing or unknown column, a field that is not a number, NaN or infinity,
//! time going backwards, a row with too few or too many fields (a truncated file).

use std::io::Read;

use photon_ledger::prelude::*;

use super::config::ReviewConfig;
use super::error::{Place, ReviewError};
use super::files::{echo, LineLimit, MAX_LINE_BYTES};

/// What the time column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeUnit {
    /// Seconds (`time_s`).
    Seconds,
    /// Device ticks (`time_ticks`).
    Ticks,
}

/// What the reading column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    /// Raw ADC code (`adc_code`).
    AdcCode,
    /// Photocurrent in A (`current_a`).
    CurrentA,
    /// Irradiance in W/m² (`irradiance_w_per_m2`).
    IrradianceWPerM2,
}

impl ValueKind {
    /// The column name.
    pub fn column(self) -> &'static str {
        match self {
            Self::AdcCode => "adc_code",
            Self::CurrentA => "current_a",
            Self::IrradianceWPerM2 => "irradiance_w_per_m2",
        }
    }
}

/// One sample of the file, ready for the pipeline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// The reading exactly as firmware would have stamped it.
    pub reading: Reading,
    /// Ticks since the first sample of the file (unwrapped, never decreasing).
    pub t_abs: u64,
    /// Line of the file it came from (1-based).
    pub line: u64,
    /// Detector temperature, °C (NaN if the file has no temperature column).
    pub temperature_c: f32,
    /// The curing station's columns (`part`, `guard`, `command`); their defaults for a file
    /// without them (and for every `replay` file).
    pub station: StationRow,
}

/// What an operator (or the station's sequencer) did at a sample, from the `command` column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OperatorCommand {
    /// `resume`: resume a part paused by the guard.
    Resume,
    /// `abort`: abort the part (safe state, alarm latched).
    Abort,
    /// `acknowledge`: clear a latched alarm (between parts).
    Acknowledge,
}

/// The curing station's columns of one sample (see CONFIG.md, section 2).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StationRow {
    /// Part number from the `part` column; `None` for 0, an empty field or no column (no
    /// part under the head).
    pub part: Option<u32>,
    /// The guard (door) switch from the `guard` column: `true` closed. Closed without the
    /// column.
    pub guard_closed: bool,
    /// The `command` column, `None` when empty or absent.
    pub command: Option<OperatorCommand>,
}

impl Default for StationRow {
    fn default() -> Self {
        Self {
            part: None,
            guard_closed: true,
            command: None,
        }
    }
}

#[derive(Debug, Clone, Copy)]
struct Columns {
    count: usize,
    time: (usize, TimeUnit),
    value: (usize, ValueKind),
    range: Option<usize>,
    temperature: Option<usize>,
    part: Option<usize>,
    guard: Option<usize>,
    command: Option<usize>,
}

/// Per-range conversion of a current or irradiance into a code.
#[derive(Debug, Clone, Copy)]
struct Conversion {
    codes_per_unit: [f64; 4],
    dark: [i32; 4],
    min_code: i32,
    max_code: i32,
}

/// Reads samples from a CSV file. See the [module documentation](self).
pub struct SampleReader<R: Read> {
    rdr: csv::Reader<LineLimit<R>>,
    record: csv::ByteRecord,
    file: String,
    cols: Columns,
    conv: Conversion,
    tick_hz: f64,
    first_ticks: Option<i64>,
    last_ticks: i64,
    last_time_s: f64,
    last_u32: u32,
    t_abs: u64,
    origin_s: f64,
    rows: u64,
}

fn field_name(cols: &Columns, i: usize) -> &'static str {
    if i == cols.time.0 {
        match cols.time.1 {
            TimeUnit::Seconds => "time_s",
            TimeUnit::Ticks => "time_ticks",
        }
    } else if i == cols.value.0 {
        cols.value.1.column()
    } else if Some(i) == cols.range {
        "range"
    } else if Some(i) == cols.temperature {
        "temperature_c"
    } else if Some(i) == cols.part {
        "part"
    } else if Some(i) == cols.guard {
        "guard"
    } else if Some(i) == cols.command {
        "command"
    } else {
        "?"
    }
}

impl SampleReader<std::fs::File> {
    /// Open a sample file for a configuration.
    ///
    /// # Errors
    /// I/O errors, and a header error naming the column.
    pub fn open(path: &str, config: &ReviewConfig) -> Result<Self, ReviewError> {
        let f = std::fs::File::open(path).map_err(|e| ReviewError::io(path, e))?;
        Self::new(path, f, config)
    }
}

impl<R: Read> SampleReader<R> {
    /// Read the header of `input`; `file` names it in messages.
    ///
    /// # Errors
    /// A header error naming the column: missing, unknown or repeated.
    pub fn new(file: &str, input: R, config: &ReviewConfig) -> Result<Self, ReviewError> {
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(true)
            .flexible(false)
            .comment(Some(b'#'))
            .buffer_capacity(1 << 16)
            .from_reader(LineLimit::new(input, MAX_LINE_BYTES));
        let place = |line: u64, column: Option<u64>, field: Option<&str>| Place {
            file: file.to_string(),
            line: Some(line),
            column,
            field: field.map(str::to_string),
        };
        let header = rdr
            .byte_headers()
            .map_err(|e| csv_error(file, &e, None))?
            .clone();
        let header_line = header.position().map_or(1, |p| p.line());
        if header.is_empty() || (header.len() == 1 && header.get(0) == Some(b"")) {
            return Err(ReviewError::input(
                place(header_line, None, None),
                "empty file: expected a header line such as `time_s,adc_code,range`",
            ));
        }
        let mut time = None;
        let mut value = None;
        let mut range = None;
        let mut temperature = None;
        let mut part = None;
        let mut guard = None;
        let mut command = None;
        let station = config.curing.is_some();
        for (i, name) in header.iter().enumerate() {
            let col = Some(i as u64 + 1);
            let name = std::str::from_utf8(name.trim_ascii()).unwrap_or("");
            let duplicate = match name {
                "time_s" | "time_ticks" => {
                    let unit = if name == "time_s" {
                        TimeUnit::Seconds
                    } else {
                        TimeUnit::Ticks
                    };
                    time.replace((i, unit)).is_some()
                }
                "adc_code" | "current_a" | "irradiance_w_per_m2" => {
                    let kind = match name {
                        "adc_code" => ValueKind::AdcCode,
                        "current_a" => ValueKind::CurrentA,
                        _ => ValueKind::IrradianceWPerM2,
                    };
                    value.replace((i, kind)).is_some()
                }
                "range" => range.replace(i).is_some(),
                "temperature_c" => temperature.replace(i).is_some(),
                // The curing station's columns, read by `curing` only.
                "part" if station => part.replace(i).is_some(),
                "guard" if station => guard.replace(i).is_some(),
                "command" if station => command.replace(i).is_some(),
                // Declared in the configuration's [samples] extra_columns: not read.
                other if config.extra_columns.iter().any(|c| c == other) => false,
                other => {
                    return Err(ReviewError::input(
                        place(header_line, col, Some(&echo(other))),
                        format!(
                            "unknown column `{}`: expected time_s or time_ticks, adc_code, \
                             current_a or irradiance_w_per_m2, and optionally range, \
                             temperature_c (declare other columns in the configuration's \
                             [samples] extra_columns to have them ignored)",
                            echo(other)
                        ),
                    ))
                }
            };
            if duplicate {
                return Err(ReviewError::input(
                    place(header_line, col, Some(name)),
                    "a second column of this kind (give one time column and one reading column)",
                ));
            }
        }
        let time = time.ok_or_else(|| {
            ReviewError::input(
                place(header_line, None, None),
                "missing time column: add `time_s` (seconds) or `time_ticks` (device ticks)",
            )
        })?;
        let value = value.ok_or_else(|| {
            ReviewError::input(
                place(header_line, None, None),
                "missing reading column: add `adc_code`, `current_a` or `irradiance_w_per_m2`",
            )
        })?;
        let meter = &config.meter;
        let mut conv = Conversion {
            codes_per_unit: [0.0; 4],
            dark: [0; 4],
            min_code: config.code_limits.0,
            max_code: config.code_limits.1,
        };
        for r in 0..4u8 {
            let idx = usize::from(r);
            if let (Some(a), Some(rng)) = (
                meter.front_end().amps_per_code(RangeIndex(r)),
                meter.front_end().range(RangeIndex(r)),
            ) {
                let per_code = match value.1 {
                    ValueKind::AdcCode => 1.0,
                    ValueKind::CurrentA => a,
                    ValueKind::IrradianceWPerM2 => meter.irradiance(1, RangeIndex(r)).w_per_m2(),
                };
                if let (Some(c), Some(d)) =
                    (conv.codes_per_unit.get_mut(idx), conv.dark.get_mut(idx))
                {
                    *c = 1.0 / per_code;
                    *d = rng.dark_offset;
                }
            }
        }
        Ok(Self {
            rdr,
            record: csv::ByteRecord::new(),
            file: file.to_string(),
            cols: Columns {
                count: header.len(),
                time,
                value,
                range,
                temperature,
                part,
                guard,
                command,
            },
            conv,
            tick_hz: f64::from(meter.tick_rate().hz()),
            first_ticks: None,
            last_ticks: 0,
            last_time_s: f64::NEG_INFINITY,
            last_u32: 0,
            t_abs: 0,
            origin_s: 0.0,
            rows: 0,
        })
    }

    /// The underlying reader (everything up to the last record has been read from it).
    pub fn into_inner(self) -> R {
        self.rdr.into_inner().into_inner()
    }

    /// The time unit of the file.
    pub fn time_unit(&self) -> TimeUnit {
        self.cols.time.1
    }

    /// The reading column of the file.
    pub fn value_kind(&self) -> ValueKind {
        self.cols.value.1
    }

    /// Time of the first sample, s (for a `time_ticks` file: 0, times are since the first
    /// sample).
    pub fn origin_s(&self) -> f64 {
        self.origin_s
    }

    /// Data rows read so far.
    pub fn rows(&self) -> u64 {
        self.rows
    }

    /// Bytes of the file consumed so far.
    pub fn bytes_read(&self) -> u64 {
        self.rdr.position().byte()
    }

    fn bad(&self, line: u64, i: usize, message: String) -> ReviewError {
        ReviewError::input(
            Place {
                file: self.file.clone(),
                line: Some(line),
                column: Some(i as u64 + 1),
                field: Some(field_name(&self.cols, i).to_string()),
            },
            message,
        )
    }

    fn text(&self, line: u64, i: usize) -> Result<&str, ReviewError> {
        let raw = self.record.get(i).unwrap_or(b"").trim_ascii();
        let s = std::str::from_utf8(raw)
            .map_err(|_| self.bad(line, i, "not valid UTF-8".to_string()))?;
        if s.is_empty() {
            return Err(self.bad(line, i, "empty field".to_string()));
        }
        Ok(s)
    }

    fn float(&self, line: u64, i: usize) -> Result<f64, ReviewError> {
        let s = self.text(line, i)?;
        match s.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(v),
            Ok(v) => Err(self.bad(
                line,
                i,
                format!("`{}` ({v}) is not a finite number", echo(s)),
            )),
            Err(_) => Err(self.bad(line, i, format!("`{}` is not a number", echo(s)))),
        }
    }

    fn integer(&self, line: u64, i: usize) -> Result<i64, ReviewError> {
        let raw = self.record.get(i).unwrap_or(b"").trim_ascii();
        match parse_int(raw) {
            Some(v) => Ok(v),
            None => {
                let s = self.text(line, i)?;
                Err(self.bad(line, i, format!("`{}` is not an integer", echo(s))))
            }
        }
    }

    /// The next sample, `None` at the end of the file.
    ///
    /// # Errors
    /// A [`ReviewError::Input`] naming the line and column of the first bad field.
    pub fn next_sample(&mut self) -> Result<Option<Sample>, ReviewError> {
        match self.rdr.read_byte_record(&mut self.record) {
            Ok(true) => {}
            Ok(false) => return Ok(None),
            Err(e) => return Err(csv_error(&self.file, &e, Some(self.cols.count))),
        }
        let line = self.record.position().map_or(0, |p| p.line());
        self.rows += 1;
        let cols = self.cols;
        // Range first: the conversion of a current or irradiance depends on it.
        let range = match cols.range {
            None => 0u8,
            Some(i) => {
                let v = self.integer(line, i)?;
                u8::try_from(v).map_err(|_| {
                    self.bad(line, i, format!("range {v} is not an index 0 ..= 255"))
                })?
            }
        };
        let code = match cols.value.1 {
            ValueKind::AdcCode => {
                let i = cols.value.0;
                let v = self.integer(line, i)?;
                i32::try_from(v)
                    .map_err(|_| self.bad(line, i, format!("code {v} does not fit in 32 bits")))?
            }
            ValueKind::CurrentA | ValueKind::IrradianceWPerM2 => {
                let v = self.float(line, cols.value.0)?;
                let r = usize::from(range);
                match (self.conv.codes_per_unit.get(r), self.conv.dark.get(r)) {
                    (Some(&k), Some(&dark)) if k > 0.0 => {
                        let c = (v * k).round() + f64::from(dark);
                        c.clamp(f64::from(self.conv.min_code), f64::from(self.conv.max_code)) as i32
                    }
                    // An unknown range: the pipeline faults on it whatever the code.
                    _ => 0,
                }
            }
        };
        let (ti, tu) = cols.time;
        let (at, t_abs) = match tu {
            TimeUnit::Seconds => {
                let t = self.float(line, ti)?;
                if t < self.last_time_s {
                    return Err(self.bad(
                        line,
                        ti,
                        format!(
                            "time goes backwards: {t} s after {} s on the previous row",
                            self.last_time_s
                        ),
                    ));
                }
                self.last_time_s = t;
                let x = (t * self.tick_hz).round();
                if x.abs() >= 4.0e18 {
                    return Err(self.bad(line, ti, format!("{t} s is too large")));
                }
                let ticks = x as i64;
                let first = *self.first_ticks.get_or_insert_with(|| {
                    self.origin_s = ticks as f64 / self.tick_hz;
                    ticks
                });
                let step = ticks - self.last_ticks;
                if self.rows > 1 && step >= 1 << 31 {
                    return Err(self.bad(
                        line,
                        ti,
                        format!(
                            "an interval of {step} ticks is too long for the 32-bit tick \
                             counter; split the file"
                        ),
                    ));
                }
                self.last_ticks = ticks;
                (Ticks(ticks as u32), (ticks - first) as u64)
            }
            TimeUnit::Ticks => {
                let v = self.integer(line, ti)?;
                let t = u32::try_from(v).map_err(|_| {
                    self.bad(
                        line,
                        ti,
                        format!("{v} is not a 32-bit tick count 0 ..= 4294967295"),
                    )
                })?;
                if self.first_ticks.is_none() {
                    self.first_ticks = Some(0);
                    self.t_abs = 0;
                } else {
                    let step = t.wrapping_sub(self.last_u32);
                    if step >= 1 << 31 {
                        return Err(self.bad(
                            line,
                            ti,
                            format!(
                                "time goes backwards: tick {t} after {} on the previous row",
                                self.last_u32
                            ),
                        ));
                    }
                    self.t_abs += u64::from(step);
                }
                self.last_u32 = t;
                (Ticks(t), self.t_abs)
            }
        };
        let temperature_c = match cols.temperature {
            None => f32::NAN,
            Some(i) => self.float(line, i)? as f32,
        };
        let mut station = StationRow::default();
        if let Some(i) = cols.part {
            let raw = self.record.get(i).unwrap_or(b"").trim_ascii();
            if !raw.is_empty() {
                let v = self.integer(line, i)?;
                let p = u32::try_from(v).map_err(|_| {
                    self.bad(
                        line,
                        i,
                        format!("part {v} is not a part number 0 ..= 4294967295"),
                    )
                })?;
                station.part = (p != 0).then_some(p);
            }
        }
        if let Some(i) = cols.guard {
            station.guard_closed = match self.text(line, i)? {
                "closed" | "1" => true,
                "open" | "0" => false,
                other => {
                    return Err(self.bad(
                        line,
                        i,
                        format!(
                            "`{}`: the guard is `closed` (or 1) or `open` (or 0)",
                            echo(other)
                        ),
                    ))
                }
            };
        }
        if let Some(i) = cols.command {
            let raw = self.record.get(i).unwrap_or(b"").trim_ascii();
            if !raw.is_empty() {
                station.command = Some(match self.text(line, i)? {
                    "resume" => OperatorCommand::Resume,
                    "abort" => OperatorCommand::Abort,
                    "acknowledge" => OperatorCommand::Acknowledge,
                    other => {
                        return Err(self.bad(
                            line,
                            i,
                            format!(
                                "`{}`: a command is `resume`, `abort`, `acknowledge` or empty",
                                echo(other)
                            ),
                        ))
                    }
                });
            }
        }
        Ok(Some(Sample {
            reading: Reading {
                code,
                range: RangeIndex(range),
                at,
            },
            t_abs,
            line,
            temperature_c,
            station,
        }))
    }
}

/// A decimal integer with an optional sign, straight from ASCII bytes (the hot path of a
/// CSV of codes and ticks). `None` for anything else or on overflow.
fn parse_int(b: &[u8]) -> Option<i64> {
    let (neg, digits) = match b.split_first() {
        Some((b'-', rest)) => (true, rest),
        Some((b'+', rest)) => (false, rest),
        _ => (false, b),
    };
    if digits.is_empty() || digits.len() > 18 {
        return None;
    }
    let mut v: i64 = 0;
    for &c in digits {
        let d = c.wrapping_sub(b'0');
        if d > 9 {
            return None;
        }
        // At most 18 digits: no overflow.
        v = v * 10 + i64::from(d);
    }
    Some(if neg { -v } else { v })
}

fn csv_error(file: &str, e: &csv::Error, expected: Option<usize>) -> ReviewError {
    let mut place = Place {
        file: file.to_string(),
        ..Place::default()
    };
    let message = match e.kind() {
        csv::ErrorKind::UnequalLengths {
            pos,
            expected_len,
            len,
        } => {
            place.line = pos.as_ref().map(csv::Position::line);
            place.column = Some(*len.min(expected_len) + 1);
            let exp = expected.unwrap_or(*expected_len as usize);
            if (*len as usize) < exp {
                format!("{len} fields where the header has {exp} (truncated row or file?)")
            } else {
                format!("{len} fields where the header has {exp}")
            }
        }
        csv::ErrorKind::Utf8 { pos, err } => {
            place.line = pos.as_ref().map(csv::Position::line);
            place.column = Some(err.field() as u64 + 1);
            "not valid UTF-8".to_string()
        }
        csv::ErrorKind::Io(io) => format!("read error: {io}"),
        _ => e.to_string(),
    };
    ReviewError::input(place, message)
}

#[cfg(test)]
mod tests {
    use super::parse_int;

    #[test]
    fn integers_from_bytes() {
        assert_eq!(parse_int(b"0"), Some(0));
        assert_eq!(parse_int(b"-42"), Some(-42));
        assert_eq!(parse_int(b"+4294967295"), Some(4_294_967_295));
        for bad in [
            &b""[..],
            b"-",
            b"1.5",
            b"12a",
            b"1e3",
            b"1234567890123456789",
        ] {
            assert_eq!(parse_int(bad), None, "{bad:?}");
        }
    }
}
