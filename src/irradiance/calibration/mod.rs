//! Calibration records: what a calibration says, a fixed binary form for flash with a CRC,
//! expiry, temperature compensation and transfer calibration.
//!
//! The library reads no clock: dates are [`Day`] numbers (days since an epoch the firmware
//! chooses, for example days since 1970-01-01 UTC) supplied by the caller.
//!
//! # Record format, version 1
//!
//! A record is [`RECORD_LEN`] = 164 bytes; every multi-byte field is **little-endian**; `f64`
//! fields are IEEE 754 binary64.
//!
//! ```text
//! offset len  field
//!      0   4  magic "PLCR" (50 4C 43 52)
//!      4   2  format version, u16 = 1
//!      6   2  record length, u16 = 164
//!      8  16  instrument serial / ID, printable ASCII, NUL-padded, not empty
//!     24   4  calibration day, u32
//!     28   4  due day, u32: the first day on which the calibration is expired (> calibration day)
//!     32   8  factor, f64, (W/m²)/A at the reference temperature under the source below (> 0)
//!     40   8  detector active area, f64, m² (0 = not recorded, else > 0)
//!     48   8  expanded relative uncertainty of the factor (k = 2), f64, 0 ≤ U < 1
//!     56   8  temperature coefficient of responsivity, f64, 1/K, |α| ≤ 0.05
//!     64   8  reference temperature, f64, K, 173.15 ..= 473.15 (−100 ..= 200 °C)
//!     72   1  source kind, u8: 1 line, 2 LED (Gaussian in energy), 3 tabulated (by id)
//!     73   1  number of amplifier ranges used, u8, 1 ..= 4
//!     74   2  reserved, 0
//!     76   8  source wavelength, f64, nm (line or LED peak; 0 for tabulated)
//!     84   8  source FWHM, f64, nm (LED; 0 otherwise)
//!     92   4  source table id, u32 (tabulated; 0 otherwise)
//!     96  64  4 × range: transimpedance f64 V/A (> 0; 0 for unused), dark offset i32, reserved u32 0
//!    160   4  CRC-32/ISO-HDLC (the zlib/Ethernet CRC-32) of bytes 0..160, u32
//! ```
//!
//! Decoding checks, in order: length, magic (a *foreign* record), version, CRC (a *corrupted*
//! record), then every field; each failure is a named [`RecordError`]. A change of layout gets
//! a new version number; version 1 decoding never guesses.

use crate::frontend::{AmplifierRange, MAX_RANGES};
use crate::irradiance::Calibration;
use crate::quantity::{
    Area, Current, Irradiance, IrradiancePerCurrent, Transimpedance, Wavelength,
};
use crate::spectral::band::{Band, BandFactors};
use crate::spectral::spectrum::Source;

/// Magic bytes at the start of a record.
pub const RECORD_MAGIC: [u8; 4] = *b"PLCR";
/// The format version this crate writes and reads.
pub const RECORD_VERSION: u16 = 1;
/// Length of an encoded record, bytes.
pub const RECORD_LEN: usize = 164;
/// Length of the serial / ID field, bytes.
pub const SERIAL_LEN: usize = 16;
/// Amplifier ranges in the version-1 layout.
pub const RECORD_RANGES: usize = 4;
/// Largest accepted |temperature coefficient|, 1/K (5 %/K; real photodiodes are ~0.1 %/K).
pub const MAX_TEMPERATURE_COEFFICIENT_PER_K: f64 = 0.05;

// The version-1 layout has room for exactly RECORD_RANGES ranges.
const _: () = assert!(MAX_RANGES <= RECORD_RANGES);

const CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

mod offset {
    pub const MAGIC: usize = 0;
    pub const VERSION: usize = 4;
    pub const LENGTH: usize = 6;
    pub const SERIAL: usize = 8;
    pub const CALIBRATED: usize = 24;
    pub const DUE: usize = 28;
    pub const FACTOR: usize = 32;
    pub const AREA: usize = 40;
    pub const UNCERTAINTY: usize = 48;
    pub const TEMPCO: usize = 56;
    pub const REF_TEMP: usize = 64;
    pub const SOURCE_KIND: usize = 72;
    pub const RANGE_COUNT: usize = 73;
    pub const RESERVED: usize = 74;
    pub const SOURCE_NM: usize = 76;
    pub const SOURCE_FWHM: usize = 84;
    pub const SOURCE_ID: usize = 92;
    pub const RANGES: usize = 96;
    pub const RANGE_STRIDE: usize = 16;
    pub const CRC: usize = 160;
}

/// A calendar day number, days since an epoch chosen by the firmware.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Day(pub u32);

/// A temperature. Stored in kelvin.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Temperature(f64);

impl Temperature {
    /// From kelvin.
    #[must_use]
    pub const fn from_kelvin(k: f64) -> Self {
        Self(k)
    }
    /// From degrees Celsius (T/K = t/°C + 273.15, exact by definition).
    #[must_use]
    pub fn from_celsius(c: f64) -> Self {
        Self(c + 273.15)
    }
    /// In kelvin.
    #[must_use]
    pub const fn kelvin(self) -> f64 {
        self.0
    }
    /// In degrees Celsius.
    #[must_use]
    pub fn celsius(self) -> f64 {
        self.0 - 273.15
    }
}

/// The source a calibration was made under.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CalibrationSource {
    /// A line at a vacuum wavelength.
    Line(Wavelength),
    /// An LED, Gaussian in photon energy (as [`Source::Led`]).
    Led {
        /// Peak (vacuum) wavelength.
        peak: Wavelength,
        /// Full width at half maximum.
        fwhm: Wavelength,
    },
    /// A tabulated spectrum the firmware keeps, by its identifier.
    Tabulated {
        /// The caller's identifier of the table.
        id: u32,
    },
}

impl CalibrationSource {
    /// As a [`Source`] for the spectral integrals; `None` for a tabulated source (the caller
    /// supplies the table it identifies).
    #[must_use]
    pub const fn to_source(&self) -> Option<Source<'static>> {
        match *self {
            Self::Line(w) => Some(Source::Line(w)),
            Self::Led { peak, fwhm } => Some(Source::Led { peak, fwhm }),
            Self::Tabulated { .. } => None,
        }
    }
}

/// One amplifier range as calibrated.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RangeCalibration {
    /// Transimpedance gain. Valid: finite, > 0.
    pub gain: Transimpedance,
    /// Dark offset, ADC codes.
    pub dark_offset: i32,
}

/// A calibration: what the certificate (or a transfer calibration) says.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CalibrationRecord {
    /// Instrument serial / ID: printable ASCII, NUL-padded, not empty (see [`serial`]).
    pub serial: [u8; SERIAL_LEN],
    /// Day of calibration.
    pub calibrated_on: Day,
    /// First day on which the calibration is expired. Valid: after `calibrated_on`.
    pub due: Day,
    /// Irradiance per photocurrent at `reference_temperature` under `source`. Valid: finite, > 0.
    pub factor: IrradiancePerCurrent,
    /// Detector active area, if recorded. Valid: finite, > 0.
    pub active_area: Option<Area>,
    /// Expanded relative uncertainty of `factor` (coverage factor k = 2). Valid: 0 ≤ U < 1.
    pub relative_uncertainty: f64,
    /// Relative change of responsivity per kelvin, 1/K. Valid: |α| ≤
    /// [`MAX_TEMPERATURE_COEFFICIENT_PER_K`].
    pub temperature_coefficient_per_k: f64,
    /// Temperature the factor refers to. Valid: −100 ..= 200 °C.
    pub reference_temperature: Temperature,
    /// Source the calibration was made under. Valid: line / LED as for [`Source`].
    pub source: CalibrationSource,
    /// Amplifier ranges (1 ..= [`MAX_RANGES`]).
    pub ranges: heapless::Vec<RangeCalibration, MAX_RANGES>,
}

/// A named field of a calibration record.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Field {
    /// Serial / ID.
    Serial,
    /// Due day not after the calibration day.
    Dates,
    /// Factor.
    Factor,
    /// Active area.
    ActiveArea,
    /// Uncertainty.
    Uncertainty,
    /// Temperature coefficient.
    TemperatureCoefficient,
    /// Reference temperature.
    ReferenceTemperature,
    /// Source kind, wavelength, FWHM or id.
    Source,
    /// Range count.
    RangeCount,
    /// Gain of a range.
    Gain {
        /// Index of the range.
        range: usize,
    },
    /// Reserved bytes not zero.
    Reserved,
}

/// Why a record could not be encoded, decoded or used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RecordError {
    /// Wrong number of bytes.
    Length {
        /// Bytes given.
        found: usize,
    },
    /// Not a photon-ledger calibration record (wrong magic or length field).
    Foreign,
    /// A format version this crate cannot read.
    Version {
        /// Version found.
        found: u16,
    },
    /// The CRC does not match: the record is corrupted.
    Corrupted {
        /// CRC stored in the record.
        stored: u32,
        /// CRC computed over the record.
        computed: u32,
    },
    /// A field is invalid.
    Invalid(Field),
    /// A temperature reading is not finite, or the compensation leaves the model's range
    /// (|α · ΔT| ≥ 0.5).
    Temperature,
}

impl core::fmt::Display for RecordError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Length { found } => write!(f, "record is {found} bytes, not {RECORD_LEN}"),
            Self::Foreign => f.write_str("not a calibration record"),
            Self::Version { found } => write!(f, "unsupported record version {found}"),
            Self::Corrupted { stored, computed } => {
                write!(
                    f,
                    "record corrupted: CRC {stored:#010x} != {computed:#010x}"
                )
            }
            Self::Invalid(field) => write!(f, "invalid field {field:?}"),
            Self::Temperature => f.write_str("temperature outside the compensation model"),
        }
    }
}

impl core::error::Error for RecordError {}

/// A serial field from a string: 1 ..= 16 printable ASCII characters.
///
/// # Errors
/// [`RecordError::Invalid`]`(`[`Field::Serial`]`)` otherwise.
pub fn serial(s: &str) -> Result<[u8; SERIAL_LEN], RecordError> {
    let bytes = s.as_bytes();
    if bytes.is_empty()
        || bytes.len() > SERIAL_LEN
        || !bytes.iter().all(|b| (0x20..=0x7E).contains(b))
    {
        return Err(RecordError::Invalid(Field::Serial));
    }
    let mut out = [0u8; SERIAL_LEN];
    for (o, b) in out.iter_mut().zip(bytes) {
        *o = *b;
    }
    Ok(out)
}

fn serial_ok(s: &[u8; SERIAL_LEN]) -> bool {
    let len = s.iter().position(|&b| b == 0).unwrap_or(SERIAL_LEN);
    let (text, pad) = s.split_at(len.min(SERIAL_LEN));
    !text.is_empty()
        && text.iter().all(|b| (0x20..=0x7E).contains(b))
        && pad.iter().all(|&b| b == 0)
}

fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

fn put(buf: &mut [u8], at: usize, bytes: &[u8]) {
    if let Some(dst) = buf.get_mut(at..at.saturating_add(bytes.len())) {
        for (d, s) in dst.iter_mut().zip(bytes) {
            *d = *s;
        }
    }
}

fn take<const K: usize>(buf: &[u8], at: usize) -> [u8; K] {
    let mut out = [0u8; K];
    if let Some(src) = buf.get(at..at.saturating_add(K)) {
        for (o, s) in out.iter_mut().zip(src) {
            *o = *s;
        }
    }
    out
}

fn take_f64(buf: &[u8], at: usize) -> f64 {
    f64::from_le_bytes(take::<8>(buf, at))
}

fn take_u32(buf: &[u8], at: usize) -> u32 {
    u32::from_le_bytes(take::<4>(buf, at))
}

fn take_u16(buf: &[u8], at: usize) -> u16 {
    u16::from_le_bytes(take::<2>(buf, at))
}

/// How an expired (or not yet valid) calibration is treated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExpiryPolicy {
    /// Refuse to use it (default: the safe choice; drive the source off).
    #[default]
    Refuse,
    /// Use it, and report the warning with every read-out.
    Warn,
}

/// The date status of a calibration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Validity {
    /// Within its validity period; `days_left` until the due day.
    Valid {
        /// Days until the due day (≥ 1).
        days_left: u32,
    },
    /// On or after the due day.
    Expired {
        /// Days since the due day (0 on the due day itself).
        days_over: u32,
    },
    /// Today is before the calibration day: the clock or the record is wrong.
    NotYetValid {
        /// Days until the calibration day.
        days_early: u32,
    },
}

/// The result of checking stored bytes (see [`check`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Check {
    /// Intact and within its validity period.
    Valid,
    /// Intact but expired.
    Expired {
        /// Days since the due day.
        days_over: u32,
    },
    /// Intact but dated after today.
    NotYetValid {
        /// Days until the calibration day.
        days_early: u32,
    },
    /// Not usable: foreign, wrong version, corrupted or with an invalid field.
    Corrupted(RecordError),
}

/// Check a stored record against `today`: integrity first, then dates.
#[must_use]
pub fn check(bytes: &[u8], today: Day) -> Check {
    match CalibrationRecord::decode(bytes) {
        Err(e) => Check::Corrupted(e),
        Ok(r) => match r.validity(today) {
            Validity::Valid { .. } => Check::Valid,
            Validity::Expired { days_over } => Check::Expired { days_over },
            Validity::NotYetValid { days_early } => Check::NotYetValid { days_early },
        },
    }
}

/// A calibration accepted for use, with the warning the policy allowed.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Accepted {
    /// The record.
    pub record: CalibrationRecord,
    /// `Some` if the record is out of date and the policy is [`ExpiryPolicy::Warn`].
    pub warning: Option<Validity>,
}

/// Why a stored calibration was not accepted.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AcceptError {
    /// The bytes are not a usable record.
    Record(RecordError),
    /// Out of date, and the policy is [`ExpiryPolicy::Refuse`].
    Refused(Validity),
}

impl core::fmt::Display for AcceptError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Record(e) => write!(f, "calibration record: {e}"),
            Self::Refused(Validity::Expired { days_over }) => {
                write!(f, "calibration expired {days_over} days ago")
            }
            Self::Refused(Validity::NotYetValid { days_early }) => {
                write!(f, "calibration dated {days_early} days in the future")
            }
            Self::Refused(Validity::Valid { .. }) => f.write_str("calibration refused"),
        }
    }
}

impl core::error::Error for AcceptError {}

/// Decode and date-check a stored record under `policy`. A corrupted record is always
/// refused; an out-of-date one is refused or accepted with a warning.
///
/// # Errors
/// [`AcceptError`].
pub fn accept(bytes: &[u8], today: Day, policy: ExpiryPolicy) -> Result<Accepted, AcceptError> {
    let record = CalibrationRecord::decode(bytes).map_err(AcceptError::Record)?;
    match (record.validity(today), policy) {
        (Validity::Valid { .. }, _) => Ok(Accepted {
            record,
            warning: None,
        }),
        (v, ExpiryPolicy::Warn) => Ok(Accepted {
            record,
            warning: Some(v),
        }),
        (v, ExpiryPolicy::Refuse) => Err(AcceptError::Refused(v)),
    }
}

impl CalibrationRecord {
    /// Check every field (see the layout in the [module documentation](self)).
    ///
    /// # Errors
    /// [`RecordError::Invalid`] naming the first invalid field.
    pub fn validate(&self) -> Result<(), RecordError> {
        let bad = |f| Err(RecordError::Invalid(f));
        if !serial_ok(&self.serial) {
            return bad(Field::Serial);
        }
        if self.due <= self.calibrated_on {
            return bad(Field::Dates);
        }
        if !positive(self.factor.w_per_m2_per_a()) {
            return bad(Field::Factor);
        }
        if let Some(a) = self.active_area {
            if !positive(a.m2()) {
                return bad(Field::ActiveArea);
            }
        }
        let u = self.relative_uncertainty;
        if !(u.is_finite() && (0.0..1.0).contains(&u)) {
            return bad(Field::Uncertainty);
        }
        let alpha = self.temperature_coefficient_per_k;
        if !(alpha.is_finite() && alpha.abs() <= MAX_TEMPERATURE_COEFFICIENT_PER_K) {
            return bad(Field::TemperatureCoefficient);
        }
        let t = self.reference_temperature.kelvin();
        if !(t.is_finite() && (173.15..=473.15).contains(&t)) {
            return bad(Field::ReferenceTemperature);
        }
        let band = match self.source {
            CalibrationSource::Line(w) => Some(Band::Line(w)),
            CalibrationSource::Led { peak, fwhm } => Some(Band::Led { peak, fwhm }),
            CalibrationSource::Tabulated { .. } => None,
        };
        if band.is_some_and(|b| BandFactors::new(&b).is_err()) {
            return bad(Field::Source);
        }
        if self.ranges.is_empty() {
            return bad(Field::RangeCount);
        }
        for (range, r) in self.ranges.iter().enumerate() {
            if !positive(r.gain.v_per_a()) {
                return bad(Field::Gain { range });
            }
        }
        Ok(())
    }

    /// The fixed little-endian encoding with its CRC.
    ///
    /// # Errors
    /// [`RecordError::Invalid`] if the record does not validate.
    pub fn encode(&self) -> Result<[u8; RECORD_LEN], RecordError> {
        self.validate()?;
        let mut b = [0u8; RECORD_LEN];
        put(&mut b, offset::MAGIC, &RECORD_MAGIC);
        put(&mut b, offset::VERSION, &RECORD_VERSION.to_le_bytes());
        // RECORD_LEN = 164 fits in u16.
        #[allow(clippy::cast_possible_truncation)]
        put(&mut b, offset::LENGTH, &(RECORD_LEN as u16).to_le_bytes());
        put(&mut b, offset::SERIAL, &self.serial);
        put(
            &mut b,
            offset::CALIBRATED,
            &self.calibrated_on.0.to_le_bytes(),
        );
        put(&mut b, offset::DUE, &self.due.0.to_le_bytes());
        put(
            &mut b,
            offset::FACTOR,
            &self.factor.w_per_m2_per_a().to_le_bytes(),
        );
        let area = self.active_area.map_or(0.0, Area::m2);
        put(&mut b, offset::AREA, &area.to_le_bytes());
        put(
            &mut b,
            offset::UNCERTAINTY,
            &self.relative_uncertainty.to_le_bytes(),
        );
        put(
            &mut b,
            offset::TEMPCO,
            &self.temperature_coefficient_per_k.to_le_bytes(),
        );
        put(
            &mut b,
            offset::REF_TEMP,
            &self.reference_temperature.kelvin().to_le_bytes(),
        );
        let (kind, nm, fwhm, id) = match self.source {
            CalibrationSource::Line(w) => (1u8, w.nm(), 0.0, 0u32),
            CalibrationSource::Led { peak, fwhm } => (2, peak.nm(), fwhm.nm(), 0),
            CalibrationSource::Tabulated { id } => (3, 0.0, 0.0, id),
        };
        put(&mut b, offset::SOURCE_KIND, &[kind]);
        // At most MAX_RANGES ≤ 4 ranges.
        #[allow(clippy::cast_possible_truncation)]
        put(&mut b, offset::RANGE_COUNT, &[self.ranges.len() as u8]);
        put(&mut b, offset::SOURCE_NM, &nm.to_le_bytes());
        put(&mut b, offset::SOURCE_FWHM, &fwhm.to_le_bytes());
        put(&mut b, offset::SOURCE_ID, &id.to_le_bytes());
        let mut at = offset::RANGES;
        for r in &self.ranges {
            put(&mut b, at, &r.gain.v_per_a().to_le_bytes());
            put(&mut b, at.saturating_add(8), &r.dark_offset.to_le_bytes());
            at = at.saturating_add(offset::RANGE_STRIDE);
        }
        let crc = CRC32.checksum(b.get(..offset::CRC).unwrap_or(&[]));
        put(&mut b, offset::CRC, &crc.to_le_bytes());
        Ok(b)
    }

    /// Decode and validate a stored record.
    ///
    /// # Errors
    /// [`RecordError`]: length, foreign, version, corrupted (CRC), invalid field.
    pub fn decode(bytes: &[u8]) -> Result<Self, RecordError> {
        if bytes.len() != RECORD_LEN {
            return Err(RecordError::Length { found: bytes.len() });
        }
        if take::<4>(bytes, offset::MAGIC) != RECORD_MAGIC {
            return Err(RecordError::Foreign);
        }
        let version = take_u16(bytes, offset::VERSION);
        if version != RECORD_VERSION {
            return Err(RecordError::Version { found: version });
        }
        if usize::from(take_u16(bytes, offset::LENGTH)) != RECORD_LEN {
            return Err(RecordError::Foreign);
        }
        let stored = take_u32(bytes, offset::CRC);
        let computed = CRC32.checksum(bytes.get(..offset::CRC).unwrap_or(&[]));
        if stored != computed {
            return Err(RecordError::Corrupted { stored, computed });
        }
        if take::<2>(bytes, offset::RESERVED) != [0, 0] {
            return Err(RecordError::Invalid(Field::Reserved));
        }
        let area = take_f64(bytes, offset::AREA);
        let nm = take_f64(bytes, offset::SOURCE_NM);
        let fwhm = take_f64(bytes, offset::SOURCE_FWHM);
        let id = take_u32(bytes, offset::SOURCE_ID);
        let source = match take::<1>(bytes, offset::SOURCE_KIND) {
            [1] if fwhm == 0.0 && id == 0 => CalibrationSource::Line(Wavelength::from_nm(nm)),
            [2] if id == 0 => CalibrationSource::Led {
                peak: Wavelength::from_nm(nm),
                fwhm: Wavelength::from_nm(fwhm),
            },
            [3] if nm == 0.0 && fwhm == 0.0 => CalibrationSource::Tabulated { id },
            _ => return Err(RecordError::Invalid(Field::Source)),
        };
        let [count] = take::<1>(bytes, offset::RANGE_COUNT);
        let count = usize::from(count);
        if count == 0 || count > MAX_RANGES {
            return Err(RecordError::Invalid(Field::RangeCount));
        }
        let mut ranges = heapless::Vec::new();
        for i in 0..RECORD_RANGES {
            let at = offset::RANGES.saturating_add(i.saturating_mul(offset::RANGE_STRIDE));
            let gain = take_f64(bytes, at);
            let dark = i32::from_le_bytes(take::<4>(bytes, at.saturating_add(8)));
            let reserved = take_u32(bytes, at.saturating_add(12));
            if reserved != 0 {
                return Err(RecordError::Invalid(Field::Reserved));
            }
            if i < count {
                ranges
                    .push(RangeCalibration {
                        gain: Transimpedance::from_v_per_a(gain),
                        dark_offset: dark,
                    })
                    .map_err(|_| RecordError::Invalid(Field::RangeCount))?;
            } else if gain != 0.0 || dark != 0 {
                return Err(RecordError::Invalid(Field::Reserved));
            }
        }
        let record = Self {
            serial: take::<SERIAL_LEN>(bytes, offset::SERIAL),
            calibrated_on: Day(take_u32(bytes, offset::CALIBRATED)),
            due: Day(take_u32(bytes, offset::DUE)),
            factor: IrradiancePerCurrent::from_w_per_m2_per_a(take_f64(bytes, offset::FACTOR)),
            active_area: if area == 0.0 {
                None
            } else {
                Some(Area::from_m2(area))
            },
            relative_uncertainty: take_f64(bytes, offset::UNCERTAINTY),
            temperature_coefficient_per_k: take_f64(bytes, offset::TEMPCO),
            reference_temperature: Temperature::from_kelvin(take_f64(bytes, offset::REF_TEMP)),
            source,
            ranges,
        };
        record.validate()?;
        Ok(record)
    }

    /// The serial as text (up to the first NUL).
    #[must_use]
    pub fn serial_str(&self) -> &str {
        let len = self
            .serial
            .iter()
            .position(|&b| b == 0)
            .unwrap_or(SERIAL_LEN);
        self.serial
            .get(..len)
            .and_then(|s| core::str::from_utf8(s).ok())
            .unwrap_or("")
    }

    /// The date status on `today`.
    #[must_use]
    pub fn validity(&self, today: Day) -> Validity {
        if today < self.calibrated_on {
            Validity::NotYetValid {
                days_early: self.calibrated_on.0.saturating_sub(today.0),
            }
        } else if today >= self.due {
            Validity::Expired {
                days_over: today.0.saturating_sub(self.due.0),
            }
        } else {
            Validity::Valid {
                days_left: self.due.0.saturating_sub(today.0),
            }
        }
    }

    /// The factor at detector temperature `t`: responsivity follows
    /// R(T) = R_ref · (1 + α (T − T_ref)), so k(T) = k_ref / (1 + α (T − T_ref)).
    ///
    /// # Errors
    /// [`RecordError::Temperature`] for a non-finite reading or |α ΔT| ≥ 0.5 (outside any
    /// linear model).
    pub fn factor_at(&self, t: Temperature) -> Result<IrradiancePerCurrent, RecordError> {
        let dt = t.kelvin() - self.reference_temperature.kelvin();
        let x = self.temperature_coefficient_per_k * dt;
        if !x.is_finite() || x.abs() >= 0.5 {
            return Err(RecordError::Temperature);
        }
        Ok(IrradiancePerCurrent::from_w_per_m2_per_a(
            self.factor.w_per_m2_per_a() / (1.0 + x),
        ))
    }

    /// The [`Calibration`] for the [`Meter`](crate::irradiance::Meter) at temperature `t`.
    ///
    /// # Errors
    /// As [`factor_at`](Self::factor_at).
    pub fn calibration_at(&self, t: Temperature) -> Result<Calibration, RecordError> {
        self.factor_at(t).map(Calibration::Certificate)
    }

    /// The amplifier ranges for [`FrontEnd::new`](crate::frontend::FrontEnd::new).
    #[must_use]
    pub fn amplifier_ranges(&self) -> heapless::Vec<AmplifierRange, MAX_RANGES> {
        // Pushed one by one rather than `collect`ed: heapless's `FromIterator` panics when
        // the capacity is exceeded, and the compiler cannot see that `self.ranges` (same
        // capacity) never holds more. A full vector here is unreachable; it would stop.
        let mut out = heapless::Vec::new();
        for r in &self.ranges {
            let range = AmplifierRange {
                gain: r.gain,
                dark_offset: r.dark_offset,
            };
            if out.push(range).is_err() {
                break;
            }
        }
        out
    }
}

/// The inputs of a transfer calibration against a reference instrument, read simultaneously
/// at the same position under the same source.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TransferInputs {
    /// Irradiance read by the reference instrument (in the quantity to be calibrated).
    /// Valid: finite, > 0.
    pub reference: Irradiance,
    /// Relative standard uncertainty (k = 1) of the reference reading (from its certificate).
    pub reference_rel_u: f64,
    /// Dark-corrected photocurrent of the detector being calibrated. Valid: finite, > 0.
    pub photocurrent: Current,
    /// Relative standard uncertainty (k = 1) of the photocurrent (noise, converter).
    pub photocurrent_rel_u: f64,
    /// Relative standard uncertainty (k = 1) from position, field non-uniformity and source
    /// drift between the two readings.
    pub setup_rel_u: f64,
}

/// The result of a transfer calibration.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Transfer {
    /// k = E_ref / I.
    pub factor: IrradiancePerCurrent,
    /// Combined relative standard uncertainty (k = 1).
    pub combined_rel_u: f64,
    /// Expanded relative uncertainty (k = 2), as stored in a [`CalibrationRecord`].
    pub expanded_rel_u: f64,
}

/// Why a transfer calibration was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TransferError {
    /// The reference irradiance is not finite and > 0.
    Reference,
    /// The photocurrent is not finite and > 0.
    Photocurrent,
    /// An uncertainty is not finite, negative, or the result is ≥ 100 %.
    Uncertainty,
}

impl core::fmt::Display for TransferError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::Reference => "reference irradiance must be finite and > 0",
            Self::Photocurrent => "photocurrent must be finite and > 0",
            Self::Uncertainty => "uncertainties must be finite, ≥ 0 and combine below 50 %",
        })
    }
}

impl core::error::Error for TransferError {}

/// Derive a factor from a simultaneous reading of a reference instrument: k = E_ref / I.
///
/// For this quotient model with uncorrelated inputs the relative standard uncertainties add
/// in quadrature, u_c(k)/k = √(u_ref² + u_I² + u_setup²) (GUM, JCGM 100:2008, law of
/// propagation for products and quotients); the expanded uncertainty is 2 u_c.
///
/// # Errors
/// [`TransferError`] naming the invalid input.
pub fn transfer(inputs: &TransferInputs) -> Result<Transfer, TransferError> {
    let e = inputs.reference.w_per_m2();
    let i = inputs.photocurrent.a();
    if !positive(e) {
        return Err(TransferError::Reference);
    }
    if !positive(i) {
        return Err(TransferError::Photocurrent);
    }
    let us = [
        inputs.reference_rel_u,
        inputs.photocurrent_rel_u,
        inputs.setup_rel_u,
    ];
    if us.iter().any(|u| !u.is_finite() || *u < 0.0) {
        return Err(TransferError::Uncertainty);
    }
    let combined = libm::sqrt(us.iter().map(|u| u * u).sum::<f64>());
    let expanded = 2.0 * combined;
    if expanded.is_nan() || expanded >= 1.0 {
        return Err(TransferError::Uncertainty);
    }
    let k = e / i;
    if !k.is_finite() {
        return Err(TransferError::Reference);
    }
    Ok(Transfer {
        factor: IrradiancePerCurrent::from_w_per_m2_per_a(k),
        combined_rel_u: combined,
        expanded_rel_u: expanded,
    })
}

#[cfg(test)]
mod tests;
