//! photon-review: the host review tool, built on the same library code as the firmware.
//!
//! | module | what |
//! | --- | --- |
//! | [`config`] | the session configuration file (TOML), validated into the library's types |
//! | [`samples`] | the sample file (CSV) → the library's `Reading`s |
//! | [`replay`] | samples through the library's `Session`; statistics, events, plot series |
//! | [`curing`] | a recorded curing run through the library's `CuringController`: a verdict per part |
//! | [`report`] | the report (JSON with documented keys, and text) |
//! | [`plot`] | the SVG plot |
//! | [`simulate`] | sample files from the simulation models, for named scenarios |
//! | [`explain`] | the derived factors of a configuration |
//! | [`decode`] | a raw flash image of the journal → records (CSV, JSON) and a session summary |
//! | [`decode_kinds`] | the record kinds of format 1.1 (parts, pauses, states) in the decoder's output |
//! | [`demo_image`] | a demonstration flash image written by the real journal on the simulated flash |
//! | [`register`] | the exposure register (SQLite): import sessions, answer questions |
//! | [`files`] | bounded reads of inputs; outputs checked against inputs, written atomically |
//!
//! Every configuration key and report key, with its unit, is documented in
//! `hosttests/review/CONFIG.md`.

pub mod config;
pub mod curing;
pub mod decode;
pub mod decode_kinds;
pub mod demo_image;
pub mod error;
pub mod explain;
pub mod files;
pub mod monitor;
pub mod plot;
pub mod register;
pub mod replay;
pub mod report;
pub mod samples;
pub mod simulate;
pub mod time;

pub use error::{Place, ReviewError};

/// This tool's name and version, as reports name it (`photon-review 0.1.0`).
pub const TOOL: &str = concat!("photon-review ", env!("CARGO_PKG_VERSION"));

/// The photon-ledger library this tool is built with, as reports name it.
#[must_use]
pub fn library() -> String {
    format!("photon-ledger {}", photon_ledger::VERSION)
}
