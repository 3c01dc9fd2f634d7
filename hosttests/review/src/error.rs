//! Errors of the review tool: every input error names its file and, where it has one, the
//! line, the column and the field.

use std::fmt;

/// Where in an input file something went wrong.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Place {
    /// The file as the user named it.
    pub file: String,
    /// 1-based line, if known.
    pub line: Option<u64>,
    /// 1-based column: a character column in a TOML file, a field number in a CSV file.
    pub column: Option<u64>,
    /// The configuration key (`adc.bits`) or CSV column name (`adc_code`), if known.
    pub field: Option<String>,
}

/// An error of the review tool.
#[derive(Debug)]
pub enum ReviewError {
    /// Bad input: the place and what is wrong there.
    Input {
        /// Where.
        place: Place,
        /// What.
        message: String,
    },
    /// An I/O error on a file.
    Io {
        /// The file.
        file: String,
        /// The error.
        source: std::io::Error,
    },
    /// A flash image that cannot be decoded: where in it, and what is wrong.
    Image {
        /// The image file as the user named it.
        file: String,
        /// Offset in the image, bytes, if the problem has one place.
        offset: Option<u64>,
        /// The journal sector (index in the ring), if the problem is in one.
        sector: Option<u32>,
        /// What.
        message: String,
    },
    /// An error of the exposure register (SQLite).
    Register(String),
    /// Anything else (a plot that could not be drawn, a bad command-line value).
    Other(String),
    /// Standard output could not be written (a full disk, a closed pipe).
    Stdout(std::io::Error),
}

impl ReviewError {
    /// An input error at `place`.
    pub fn input(place: Place, message: impl Into<String>) -> Self {
        Self::Input {
            place,
            message: message.into(),
        }
    }
    /// An I/O error on `file`.
    pub fn io(file: &str, source: std::io::Error) -> Self {
        Self::Io {
            file: file.to_string(),
            source,
        }
    }
    /// The place of an input error.
    pub fn place(&self) -> Option<&Place> {
        match self {
            Self::Input { place, .. } => Some(place),
            _ => None,
        }
    }
}

impl fmt::Display for ReviewError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Input { place, message } => {
                write!(f, "{}", place.file)?;
                match (place.line, place.column) {
                    (Some(l), Some(c)) => write!(f, ": line {l}, column {c}")?,
                    (Some(l), None) => write!(f, ": line {l}")?,
                    _ => {}
                }
                if let Some(k) = &place.field {
                    write!(f, " ({k})")?;
                }
                write!(f, ": {message}")
            }
            Self::Image {
                file,
                offset,
                sector,
                message,
            } => {
                write!(f, "{file}")?;
                match (offset, sector) {
                    (Some(o), Some(s)) => write!(f, ": image byte {o} (sector {s})")?,
                    (Some(o), None) => write!(f, ": image byte {o}")?,
                    (None, Some(s)) => write!(f, ": sector {s}")?,
                    (None, None) => {}
                }
                write!(f, ": {message}")
            }
            Self::Io { file, source } => write!(f, "{file}: {source}"),
            Self::Register(m) => write!(f, "exposure register: {m}"),
            Self::Other(m) => f.write_str(m),
            Self::Stdout(e) => write!(f, "writing standard output: {e}"),
        }
    }
}

impl std::error::Error for ReviewError {}

impl From<rusqlite::Error> for ReviewError {
    fn from(e: rusqlite::Error) -> Self {
        Self::Register(e.to_string())
    }
}

/// 1-based line and character column of byte offset `at` in `text`.
pub fn line_col(text: &str, at: usize) -> (u64, u64) {
    let at = at.min(text.len());
    let before = text.get(..at).unwrap_or(text);
    let line = before.matches('\n').count() as u64 + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let col = before.get(line_start..).map_or(0, |s| s.chars().count()) as u64 + 1;
    (line, col)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_and_column_of_offsets() {
        let t = "a = 1\nbb = 2\n";
        assert_eq!(line_col(t, 0), (1, 1));
        assert_eq!(line_col(t, 6), (2, 1));
        assert_eq!(line_col(t, 11), (2, 6));
    }
}
